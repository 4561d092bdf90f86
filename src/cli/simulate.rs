//! `tether-risk simulate FILE`: the Monte Carlo.

use std::path::{Path, PathBuf};
use std::sync::atomic::AtomicBool;
use std::time::{Duration, Instant};

use serde::{Deserialize, Serialize};
use tether_risk::engine::{
    parse_shard, Checkpoint, Engine, LogEvent, RunChoices, RunOptions, RunSettings,
    RunSettingsError, RunStatus, RunSummary,
};
use tether_risk::model::Model;
use tether_risk::report::folder::RunLock;
use tether_risk::report::run::{
    crate_versions, retract_manifest, run_text, write_manifest, write_run, Manifest,
};
use tether_risk::report::write_atomic;
use tether_risk::scenario::{self, Scenario};

use super::output::{command_line, load_model, lock_folder, print, InputError};
use super::run_args::{RunArgs, StockoutArg};
use super::Format;

/// Arguments of `simulate`.
#[derive(clap::Args, Debug, Clone)]
#[command(allow_negative_numbers = true)]
#[command(
    after_help = "Examples:\n  tether-risk simulate demo --histories 20000\n  tether-risk simulate my-tether.json --seed 7 --threads 2 --out out/run7 --format json\n  tether-risk simulate my-tether.json --rare-event 30 --histories 100000\n  tether-risk simulate my-tether.json --shard 0/3 --out out/part0   # then: tether-risk merge out/part* --out out/all\n  tether-risk simulate my-tether.json --target-rel-error 0.1 --histories 10000000\n\nWrites summary.json, scenario.json, settings.json, tables (CSV, Markdown), design.json,\nestimate.json, the failure tables, plots and report.html into the output folder, and\nmanifest.json last (the list of a complete run's files). The folder is locked while a run\nwrites it. Ctrl-C finishes the current chunk of batches, writes partial results and a checkpoint,\nand exits with code 130; --resume DIR continues it."
)]
pub struct Args {
    /// Scenario file (JSON); `-` reads standard input; `demo` is the built-in scenario.
    #[arg(required_unless_present = "resume")]
    pub file: Option<String>,
    /// Histories, seed, threads, sampler, rare-event factor, target error.
    #[command(flatten)]
    pub run: RunArgs,
    /// Stock-out target.
    #[command(flatten)]
    pub stock: StockoutArg,
    /// Output folder (default: out/<scenario name>).
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Replace results already in the output folder; also run when the expected work is beyond
    /// the budget (see `check` for the estimate).
    #[arg(long)]
    pub force: bool,
    /// Sampling floor as a fraction of the smallest severing hole; below 1 also samples
    /// sub-critical holes (slower; does not change loss estimates).
    #[arg(long, default_value_t = 1.0, allow_hyphen_values = true)]
    pub floor_fraction: f64,
    /// Latent-damage importance sampling (on-demand sampler): at each state change of a bay,
    /// draw its segments' worst sub-critical holes from a defensive mixture that puts
    /// probability P on holes able to cut the segment after one more cut in the bay, and weight
    /// histories by their likelihood ratio. For cascades through old holes far below
    /// 1/histories; typical P 0.2 to 0.5. Combines with --rare-event.
    #[arg(long, value_name = "P", allow_hyphen_values = true)]
    pub latent_bias: Option<f64>,
    /// Run only shard I of N (0-based): a deterministic share of the batches. Merge the shards
    /// with `tether-risk merge`.
    #[arg(long, value_name = "I/N", allow_hyphen_values = true)]
    pub shard: Option<String>,
    /// Print the event log of one history (0-based index) and exit.
    #[arg(long, value_name = "N")]
    pub replay_history: Option<u64>,
    /// Continue an interrupted run from its output folder.
    #[arg(long, value_name = "DIR", conflicts_with_all = ["file", "histories", "seed", "shard", "rare_event", "latent_bias", "target_rel_error", "floor_fraction", "sampler"])]
    pub resume: Option<PathBuf>,
    /// With a `repair.preventive_replacement` policy: run the same histories a second time
    /// without the policy (same seed, same per-history random streams: common random numbers)
    /// and print both loss probabilities. The folder holds the run with the policy.
    #[arg(long, conflicts_with_all = ["resume", "shard", "rare_event", "target_rel_error"])]
    pub compare_policy: bool,
    /// Output format on stdout.
    #[arg(long, value_enum, default_value_t)]
    pub format: Format,
}

/// Check that a tally read back from disk has the shape the model's tallies have (so merging
/// it cannot index out of bounds) and holds counts that can be true.
pub fn check_tally_shape(
    engine: &Engine<'_>,
    t: &tether_risk::engine::Tally,
) -> Result<(), String> {
    let e = engine.empty_tally();
    let shape = |name: &str, got: usize, want: usize| {
        if got == want {
            Ok(())
        } else {
            Err(format!(
                "{name} has {got} entries; this scenario has {want}"
            ))
        }
    };
    shape(
        "tally.losses_by_year",
        t.losses_by_year.len(),
        e.losses_by_year.len(),
    )?;
    shape(
        "tally.losses_by_band",
        t.losses_by_band.len(),
        e.losses_by_band.len(),
    )?;
    shape(
        "tally.cuts_by_band",
        t.cuts_by_band.len(),
        e.cuts_by_band.len(),
    )?;
    shape(
        "tally.cuts_by_year",
        t.cuts_by_year.len(),
        e.cuts_by_year.len(),
    )?;
    shape(
        "tally.max_cuts_in_bay",
        t.max_cuts_in_bay.len(),
        e.max_cuts_in_bay.len(),
    )?;
    let (r, er) = (&t.repair, &e.repair);
    shape(
        "tally.repair.splices_by_year",
        r.splices_by_year.len(),
        er.splices_by_year.len(),
    )?;
    shape(
        "tally.repair.time_to_splice_hist",
        r.time_to_splice_hist.len(),
        er.time_to_splice_hist.len(),
    )?;
    shape(
        "tally.repair.stockout_histories",
        r.stockout_histories.len(),
        er.stockout_histories.len(),
    )?;
    shape(
        "tally.repair.stockout_events",
        r.stockout_events.len(),
        er.stockout_events.len(),
    )?;
    for (name, a, b) in [
        (
            "tally.repair.demand_mission",
            &r.demand_mission,
            &er.demand_mission,
        ),
        (
            "tally.repair.demand_interval",
            &r.demand_interval,
            &er.demand_interval,
        ),
        (
            "tally.repair.demand_max_interval",
            &r.demand_max_interval,
            &er.demand_max_interval,
        ),
    ] {
        shape(name, a.len(), b.len())?;
        for (x, y) in a.iter().zip(b) {
            shape(name, x.len(), y.len())?;
        }
    }
    if t.losses > t.histories {
        return Err(format!(
            "tally: {} losses in {} histories",
            t.losses, t.histories
        ));
    }
    if t.losses_by_cause
        .iter()
        .try_fold(0u64, |a, &b| a.checked_add(b))
        != Some(t.losses)
    {
        return Err("tally.losses_by_cause does not add up to tally.losses".into());
    }
    for w in &t.weighted {
        shape(
            "tally.weighted[].sum_w_by_year",
            w.sum_w_by_year.len(),
            e.losses_by_year.len(),
        )?;
        let finite = [w.sum_w, w.sum_w2, w.max_w]
            .iter()
            .chain(&w.sum_w_by_year)
            .all(|x| x.is_finite() && *x >= 0.0);
        if !finite {
            return Err(format!(
                "tally.weighted: batch {} holds a negative or non-finite weight",
                w.batch
            ));
        }
    }
    if t.anomaly_examples.len() > tether_risk::engine::ANOMALY_EXAMPLES {
        return Err("tally.anomaly_examples lists more histories than a run keeps".into());
    }
    Ok(())
}

#[derive(Serialize, Deserialize)]
struct CheckpointFile {
    version: String,
    scenario_hash: String,
    settings: RunSettings,
    checkpoint: Checkpoint,
}

/// A run-settings error as an input error (exit code 2).
pub fn settings_err(e: RunSettingsError) -> anyhow::Error {
    InputError(e.to_string()).into()
}

/// Validate the run options given on the command line against the scenario's defaults.
pub fn settings_from_args(model: &Model, a: &Args) -> anyhow::Result<RunSettings> {
    let choices = RunChoices {
        floor_fraction: a.floor_fraction,
        latent_bias: a.latent_bias.unwrap_or(0.0),
        shard: a
            .shard
            .as_deref()
            .map(parse_shard)
            .transpose()
            .map_err(settings_err)?,
        stockout_target: a.stock.stockout_target,
        ..a.run.choices()
    };
    let run = &model.scenario.run;
    choices
        .resolve(run.histories, run.seed)
        .map_err(settings_err)
}

/// Build the engine a run's settings ask for.
pub fn engine_for<'m>(model: &'m Model, s: &RunSettings) -> anyhow::Result<Engine<'m>> {
    Engine::for_settings(model, s).map_err(|e| InputError(e.to_string()).into())
}

/// The second variant of a paired preventive-replacement comparison.
pub enum PolicyArm<'a> {
    /// The run's scenario has a policy: compare with the same design without it.
    WithoutScenarioPolicy,
    /// The run's design without a policy: compare with this model (the same design plus one).
    WithPolicy(&'a Model),
}

/// Run the paired policy comparison of a finished whole run (module [`tether_risk::engine`]
/// `paired`): the same histories with and without the policy, history by history.
fn policy_effect(
    model: &Model,
    s: &RunSettings,
    threads: usize,
    arm: &PolicyArm<'_>,
    stop: Option<&AtomicBool>,
) -> anyhow::Result<tether_risk::engine::PolicyEffect> {
    use tether_risk::engine::PolicyEffect;
    let opts = RunOptions {
        histories: s.histories,
        seed: s.seed,
        threads,
        floor_fraction: s.floor_fraction,
        shard: None,
        target_rel_error: None,
    };
    let describe = |m: &Model| {
        m.scenario
            .repair
            .as_ref()
            .and_then(|r| r.preventive.as_ref())
            .map(|p| p.describe())
    };
    let base = engine_for(model, s)?;
    let (with, without, policy, run_has_policy) = match arm {
        PolicyArm::WithoutScenarioPolicy => {
            let policy = describe(model).ok_or_else(|| {
                InputError(
                    "--compare-policy needs a repair.preventive_replacement section in the scenario"
                        .into(),
                )
            })?;
            (
                base,
                engine_for(model, s)?.without_preventive_policy(),
                policy,
                true,
            )
        }
        PolicyArm::WithPolicy(m) => {
            let policy = describe(m).ok_or_else(|| {
                anyhow::anyhow!("the comparison design has no preventive-replacement policy")
            })?;
            (engine_for(m, s)?, base, policy, false)
        }
    };
    let bar = indicatif::ProgressBar::new_spinner();
    bar.set_message("paired run with and without the preventive-replacement policy");
    bar.enable_steady_tick(Duration::from_millis(200));
    let out = with.run_paired(&without, &opts, stop);
    bar.finish_and_clear();
    let out = out?;
    Ok(PolicyEffect::from_paired(
        policy,
        run_has_policy,
        s.seed,
        &out,
        model.scenario.run.confidence,
    )?)
}

/// Run (or continue) a simulation and write its folder; returns the summary. With `compare`,
/// a finished whole run also runs the paired policy comparison and keeps it in its summary.
#[allow(clippy::too_many_arguments)]
pub fn execute(
    model: &Model,
    s: &RunSettings,
    threads: usize,
    out_dir: &Path,
    start: Option<Checkpoint>,
    stop: Option<&AtomicBool>,
    force: bool,
    compare: Option<PolicyArm<'_>>,
) -> anyhow::Result<RunSummary> {
    let engine = engine_for(model, s)?;
    let opts = s.options(threads);
    // A run with a target error stops when it is met; its history count is only a ceiling.
    if !force && s.target_rel_error.is_none() {
        let share = Engine::batches_of(&opts).histories();
        engine
            .check_work_budget(share, s.floor_fraction)
            .map_err(|e| InputError(e.to_string()))?;
    }
    let share = Engine::batches_of(&opts).histories();
    let bar = indicatif::ProgressBar::new(share);
    bar.set_style(
        indicatif::ProgressStyle::with_template("{spinner} {pos}/{len} histories {wide_bar} {eta}")
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
    );
    let started = Instant::now();
    let outcome = engine.run_resumable(&opts, start, &|done| bar.set_position(done), stop)?;
    bar.finish_and_clear();
    let mut summary = RunSummary::from_outcome(
        &engine,
        outcome.tally.clone(),
        s.histories,
        s.seed,
        s.shard,
        s.stockout_target,
        outcome.status,
        s.target_rel_error,
    );
    if let Some(arm) = &compare {
        if summary.status != RunStatus::Interrupted && s.shard.is_none() {
            match policy_effect(model, s, threads, arm, stop) {
                Ok(e) => summary.policy_effect = Some(e),
                // Stopped during the comparison: the run's own results are kept without it.
                Err(e)
                    if e.downcast_ref::<tether_risk::engine::EngineError>()
                        .is_some_and(|e| {
                            matches!(e, tether_risk::engine::EngineError::Interrupted)
                        }) =>
                {
                    eprintln!("stopped during the policy comparison: the run's results are kept without it");
                }
                Err(e) => return Err(e),
            }
        }
    }
    let threads = if threads == 0 {
        rayon::current_num_threads()
    } else {
        threads
    };
    let manifest = run_manifest(&summary, s, threads, started.elapsed().as_secs_f64());
    let checkpoint = (outcome.status == RunStatus::Interrupted).then_some(Checkpoint {
        tally: outcome.tally,
        batches_done: outcome.batches_done,
        completed_beyond: outcome.completed_beyond,
    });
    write_run_folder(out_dir, model, s, &summary, &manifest, checkpoint)?;
    Ok(summary)
}

/// The manifest of a run folder (its file list is filled in when it is written).
pub fn run_manifest(
    summary: &RunSummary,
    s: &RunSettings,
    threads: usize,
    wall_time_s: f64,
) -> Manifest {
    Manifest {
        tool: "tether-risk".into(),
        version: tether_risk::VERSION.into(),
        scenario: summary.scenario.clone(),
        scenario_hash: summary.scenario_hash.clone(),
        seed: s.seed,
        histories: summary.histories,
        batch_size: summary.batch_size,
        threads,
        shard: s.shard.map(|(i, n)| [i, n]),
        crate_versions: crate_versions(),
        random_streams: "Pcg64Mcg per (seed, purpose, history), seeded through SplitMix64".into(),
        wall_time_s,
        command: command_line(),
        files: Vec::new(),
    }
}

/// Write a run folder (simulate, merge, demo) by the run-folder protocol: retract the
/// manifest, clear the earlier run's files, write the inputs needed to re-read or continue the
/// run (scenario.json, settings.json, flux_table.json when the scenario reads a table, the
/// checkpoint of an interrupted run), the results, and for a whole run (not a shard) the
/// design, the fast estimate and the report; the manifest last.
pub fn write_run_folder(
    out_dir: &Path,
    model: &Model,
    s: &RunSettings,
    summary: &RunSummary,
    manifest: &Manifest,
    checkpoint: Option<Checkpoint>,
) -> anyhow::Result<()> {
    let io =
        |e: std::io::Error| anyhow::anyhow!("cannot write results to {}: {e}", out_dir.display());
    // The manifest goes first and comes back last: in between the folder says it is incomplete.
    // The earlier results (of a --force run or of the interrupted part) are removed only now,
    // when the new ones are ready: a run killed before this point leaves them standing.
    retract_manifest(out_dir).map_err(io)?;
    tether_risk::report::folder::clear_run_outputs(out_dir).map_err(io)?;
    let mut names = vec!["scenario.json".to_string(), "settings.json".to_string()];
    write_atomic(
        &out_dir.join("scenario.json"),
        (serde_json::to_string_pretty(&model.scenario.spec)? + "\n").as_bytes(),
    )
    .map_err(io)?;
    write_atomic(
        &out_dir.join("settings.json"),
        (serde_json::to_string_pretty(s)? + "\n").as_bytes(),
    )
    .map_err(io)?;
    if let Some(t) = &model.scenario.environment.flux_table_json {
        write_atomic(&out_dir.join("flux_table.json"), t.as_bytes()).map_err(io)?;
        names.push("flux_table.json".into());
    }
    let checkpoint_path = out_dir.join("checkpoint.json");
    if let Some(checkpoint) = checkpoint {
        let c = CheckpointFile {
            version: tether_risk::VERSION.into(),
            scenario_hash: model.scenario.hash_hex(),
            settings: s.clone(),
            checkpoint,
        };
        write_atomic(&checkpoint_path, serde_json::to_string(&c)?.as_bytes()).map_err(io)?;
        names.push("checkpoint.json".into());
    } else if checkpoint_path.exists() {
        std::fs::remove_file(&checkpoint_path).map_err(io)?;
    }
    names.extend(write_run(out_dir, summary).map_err(io)?);
    if s.shard.is_none() {
        // Optional inputs of the report (checked by their own scenario hash), not listed.
        write_design_and_estimate(model, out_dir)?;
        // A finished (or interrupted) whole run is a report by itself; a run stopped before
        // its first batch has nothing to report yet (its checkpoint is what it keeps).
        if summary.histories > 0 {
            super::report::render_run(out_dir)?;
        }
    }
    write_manifest(out_dir, manifest, &names).map_err(io)?;
    Ok(())
}

/// Write `design.json` and, where the fast Markov estimate applies, `estimate.json` into a run
/// folder (the report reads both); returns the names written.
pub fn write_design_and_estimate(model: &Model, dir: &Path) -> anyhow::Result<Vec<String>> {
    use tether_risk::model::markov::{mission_times_s, MarkovModel};
    use tether_risk::report::design::DesignSummary;
    use tether_risk::report::estimate::EstimateSummary;
    let io = |e: std::io::Error| anyhow::anyhow!("cannot write results to {}: {e}", dir.display());
    let design = DesignSummary::from_model(model);
    write_atomic(
        &dir.join("design.json"),
        (serde_json::to_string_pretty(&design)? + "\n").as_bytes(),
    )
    .map_err(io)?;
    let mut names = vec!["design.json".to_string()];
    // The estimate is a cross-check: a scenario it cannot treat leaves it out (the report says so).
    if let Ok(markov) = MarkovModel::build(model) {
        if let Ok(estimate) = markov.solve(&mission_times_s(&model.scenario.run)) {
            let dm = tether_risk::model::damage_memory::solve(
                model,
                &mission_times_s(&model.scenario.run),
            );
            let e = EstimateSummary::new(model, &markov, &estimate)
                .with_damage_memory(model, dm.as_ref());
            write_atomic(
                &dir.join("estimate.json"),
                (serde_json::to_string_pretty(&e)? + "\n").as_bytes(),
            )
            .map_err(io)?;
            names.push("estimate.json".into());
        }
    }
    Ok(names)
}

/// Lock an output folder and refuse to overwrite results in it unless forced. With `force`,
/// the files an earlier run wrote (and only those) are removed by [`execute`] when the new
/// results are ready to be written. The lock is held until the returned guard is dropped.
pub fn prepare_out_dir(dir: &Path, force: bool) -> anyhow::Result<RunLock> {
    let lock = lock_folder(dir)?;
    let held = ["summary.json", "manifest.json", "checkpoint.json"]
        .iter()
        .find(|f| dir.join(f).exists());
    if let Some(f) = held {
        if !force {
            return Err(InputError(format!(
                "{} already holds results ({f}); choose another --out or pass --force to replace them",
                dir.display()
            ))
            .into());
        }
    }
    Ok(lock)
}

/// Read a run-folder file (with the run-file size cap) as an input error on failure.
pub fn read_run_file(path: &Path) -> anyhow::Result<String> {
    scenario::read_text_capped(path, scenario::MAX_RUN_FILE_BYTES, "a run-folder file")
        .map_err(|e| InputError(format!("cannot read {}: {e}", path.display())).into())
}

/// Rebuild the model saved in a result folder (scenario.json and any flux table).
pub fn model_from_dir(dir: &Path) -> anyhow::Result<Model> {
    let text = read_run_file(&dir.join("scenario.json"))?;
    let spec = scenario::parse_spec(&text)?;
    let table = match dir.join("flux_table.json") {
        p if p.exists() => Some(read_run_file(&p)?),
        _ => None,
    };
    Ok(Model::build(Scenario::from_spec(spec, table)?)?)
}

fn replay(model: &Model, s: &RunSettings, index: u64) -> anyhow::Result<String> {
    let engine = engine_for(model, s)?;
    let (outcome, log) = engine.replay(index, s.seed);
    let mut o = format!(
        "History {index} of scenario \"{}\" (seed {}, {} sampler): {} strikes sampled, {} cuts, {}\n",
        model.scenario.spec.name,
        s.seed,
        s.sampler.name(),
        outcome.strikes,
        outcome.cuts,
        match outcome.loss {
            Some(l) => format!(
                "system loss at {:.4} years in bay {} ({:?})",
                l.time_s / 3.15576e7,
                l.bay,
                l.cause
            ),
            None => "no loss".into(),
        }
    );
    for e in &log {
        let line = match e {
            LogEvent::Strike { removed_m, .. } if *removed_m <= 0.0 => continue,
            LogEvent::Strike {
                time_s,
                strike,
                removed_m,
            } => format!(
                "{:>12.1} h  strike  bay {:>5} ribbon {:>2}  d {:.3} mm  v {:.1} km/s  removed {:.3} mm",
                time_s / tether_risk::units::SECONDS_PER_HOUR,
                strike.bay,
                strike.ribbon,
                strike.diameter_m * 1e3,
                strike.speed_m_per_s / 1e3,
                removed_m * 1e3
            ),
            LogEvent::Cut {
                time_s,
                bay,
                newly_cut,
                survivors,
            } => format!(
                "{:>12.1} h  CUT     bay {bay:>5}  newly cut {newly_cut}, survivors {survivors}",
                time_s / tether_risk::units::SECONDS_PER_HOUR
            ),
            LogEvent::CutHole {
                time_s,
                bay,
                ribbon,
                removed_m,
            } => format!(
                "{:>12.1} h  hole    bay {bay:>5} ribbon {ribbon:>2}  removed {:.3} mm (at least the critical width)",
                time_s / tether_risk::units::SECONDS_PER_HOUR,
                removed_m * 1e3
            ),
            LogEvent::Repair { time_s, kind } => format!("{:>12.1} h  repair  {kind:?}", time_s / tether_risk::units::SECONDS_PER_HOUR),
            LogEvent::Loss(l) => format!("{:>12.1} h  LOSS    bay {:>5} ({:?})", l.time_s / tether_risk::units::SECONDS_PER_HOUR, l.bay, l.cause),
        };
        o.push_str(&line);
        o.push('\n');
    }
    Ok(o)
}

/// Check a checkpoint read back from disk against the run it continues.
fn check_checkpoint(engine: &Engine<'_>, s: &RunSettings, c: &Checkpoint) -> Result<(), String> {
    let batches = Engine::batches_of(&s.options(1));
    if c.batches_done > batches.len() {
        return Err(format!(
            "batches_done = {} but the run has {} batches",
            c.batches_done,
            batches.len()
        ));
    }
    let n = batches.len();
    if c.completed_beyond
        .iter()
        .any(|&k| k < c.batches_done || k >= n)
        || c.completed_beyond.windows(2).any(|w| w[0] >= w[1])
    {
        return Err(format!(
            "completed_beyond lists batch positions outside {}..{n} or out of order",
            c.batches_done
        ));
    }
    // Histories of the batch at position k: full batches, the last one may be partial.
    let last_size = batches.histories() - n.saturating_sub(1) * tether_risk::engine::BATCH_SIZE;
    let size_at = |k: u64| {
        if k + 1 == n {
            last_size
        } else {
            tether_risk::engine::BATCH_SIZE
        }
    };
    let done = c.batches_done + c.completed_beyond.len() as u64;
    let prefix = if c.batches_done == n {
        batches.histories()
    } else {
        c.batches_done * tether_risk::engine::BATCH_SIZE
    };
    let expected: u64 = prefix + c.completed_beyond.iter().map(|&k| size_at(k)).sum::<u64>();
    if c.tally.histories != expected {
        return Err(format!(
            "tally.histories = {} but the {done} finished batches hold {expected} histories",
            c.tally.histories
        ));
    }
    check_tally_shape(engine, &c.tally)
}

pub fn run(a: Args) -> anyhow::Result<()> {
    // The signal handler first: a Ctrl-C at any point after start-up is a clean stop.
    let stop = super::interrupt::flag();
    let (model, settings, out_dir, start, _lock) = if let Some(dir) = &a.resume {
        if !dir.join("checkpoint.json").exists() {
            return Err(InputError(format!(
                "{} holds no checkpoint to resume; only an interrupted run leaves one",
                dir.display()
            ))
            .into());
        }
        let lock = lock_folder(dir)?;
        let text = read_run_file(&dir.join("checkpoint.json"))?;
        let c: CheckpointFile = serde_json::from_str(&text)
            .map_err(|e| InputError(format!("checkpoint.json is damaged: {e}")))?;
        c.settings.validate().map_err(|e| {
            InputError(format!(
                "checkpoint.json is damaged: settings.{}",
                e.in_file()
            ))
        })?;
        let model = model_from_dir(dir)?;
        if c.scenario_hash != model.scenario.hash_hex() || c.version != tether_risk::VERSION {
            return Err(InputError(format!(
                "the checkpoint in {} was written for scenario {} by version {}; this is scenario {} and version {}",
                dir.display(),
                c.scenario_hash,
                c.version,
                model.scenario.hash_hex(),
                tether_risk::VERSION
            ))
            .into());
        }
        let engine = engine_for(&model, &c.settings)?;
        check_checkpoint(&engine, &c.settings, &c.checkpoint)
            .map_err(|e| InputError(format!("checkpoint.json is damaged: {e}")))?;
        (model, c.settings, dir.clone(), Some(c.checkpoint), lock)
    } else {
        let file = a.file.as_deref().unwrap_or("demo");
        let model = load_model(file)?;
        let settings = settings_from_args(&model, &a)?;
        if let Some(h) = a.replay_history {
            if h >= settings.histories {
                return Err(InputError(format!(
                    "--replay-history = {h} is out of range: allowed [0, {}] (history index)",
                    settings.histories - 1
                ))
                .into());
            }
            return print(&replay(&model, &settings, h)?);
        }
        let out_dir = a.out.clone().unwrap_or_else(|| {
            PathBuf::from("out").join(tether_risk::report::file_stem(
                &model.scenario.spec.name,
                "run",
            ))
        });
        let lock = prepare_out_dir(&out_dir, a.force)?;
        (model, settings, out_dir, None, lock)
    };
    // Refused before the run, not after it.
    if a.compare_policy
        && model
            .scenario
            .repair
            .as_ref()
            .and_then(|r| r.preventive.as_ref())
            .is_none()
    {
        return Err(InputError(
            "--compare-policy needs a repair.preventive_replacement section in the scenario".into(),
        )
        .into());
    }
    if a.compare_policy && (settings.latent_bias > 0.0 || settings.condition_cascades) {
        return Err(InputError(
            "--compare-policy counts losses history by history and needs plain Monte Carlo: leave out --latent-bias and --condition-cascades".into(),
        )
        .into());
    }
    let summary = execute(
        &model,
        &settings,
        a.run.threads,
        &out_dir,
        start,
        Some(stop),
        a.force || a.resume.is_some(),
        a.compare_policy.then_some(PolicyArm::WithoutScenarioPolicy),
    )?;
    match a.format {
        Format::Json => print(&(serde_json::to_string_pretty(&summary)? + "\n"))?,
        // CSV: the survival-by-year table (as survival_by_year.csv in the folder).
        Format::Csv => print(&tether_risk::report::run::survival_table(&summary).to_csv())?,
        Format::Text => print(&format!(
            "{}\nResults written to {}\n",
            run_text(&summary),
            out_dir.display()
        ))?,
    }
    if summary.status == RunStatus::Interrupted {
        return Err(super::interrupt::Interrupted(out_dir.display().to_string()).into());
    }
    Ok(())
}

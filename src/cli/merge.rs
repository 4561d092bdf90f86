//! `tether-risk merge DIR... --out DIR`: join shard results into the result of the whole run.
//!
//! Tallies are integer counts (and per-batch weighted sums folded in batch order), so the merged
//! summary is bit-identical to a single run with the same scenario, seed and histories.

use std::path::{Path, PathBuf};

use tether_risk::engine::{Engine, RunSettings, RunStatus, RunSummary, Tally};
use tether_risk::report::folder::{check_listed_files, validate_summary};
use tether_risk::report::run::{run_text, Manifest};

use super::output::{print, InputError};
use super::simulate::{
    check_tally_shape, engine_for, model_from_dir, prepare_out_dir, read_run_file, run_manifest,
    write_run_folder,
};
use super::Format;

/// Arguments of `merge`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Example (three shards, for instance as a job array on a batch scheduler):\n  tether-risk simulate s.json --shard 0/3 --out out/s0\n  tether-risk simulate s.json --shard 1/3 --out out/s1\n  tether-risk simulate s.json --shard 2/3 --out out/s2\n  tether-risk merge out/s0 out/s1 out/s2 --out out/all"
)]
pub struct Args {
    /// Shard result folders (each from `simulate --shard I/N`).
    #[arg(required = true)]
    dirs: Vec<PathBuf>,
    /// Output folder for the merged result.
    #[arg(long)]
    out: PathBuf,
    /// Replace results already in the output folder.
    #[arg(long)]
    force: bool,
    /// Output format on stdout.
    #[arg(long, value_enum, default_value_t)]
    format: Format,
}

fn read_json<T: serde::de::DeserializeOwned>(path: &std::path::Path) -> anyhow::Result<T> {
    let text = read_run_file(path)?;
    Ok(serde_json::from_str(&text).map_err(|e| {
        InputError(format!(
            "{} is not a result file of this version: {e}",
            path.display()
        ))
    })?)
}

/// A shard folder must be complete: a manifest (written last) whose files are all there.
fn check_complete(d: &Path) -> anyhow::Result<()> {
    let m: serde_json::Value = read_json(&d.join("manifest.json")).map_err(|_| {
        InputError(format!(
            "{} has no readable manifest.json: the shard run did not finish writing; rerun or resume it",
            d.display()
        ))
    })?;
    // Read as the manifest the shard run wrote: one of another shape lists no files that
    // could be checked, so it cannot vouch for the shard.
    let m: Manifest = serde_json::from_value(m).map_err(|e| {
        InputError(format!(
            "{}/manifest.json is not a run manifest of this version: {e}",
            d.display()
        ))
    })?;
    let problems = check_listed_files(d, &m.files);
    if !problems.is_empty() {
        return Err(InputError(format!(
            "{} is not a complete shard folder: {}",
            d.display(),
            problems.join("; ")
        ))
        .into());
    }
    Ok(())
}

/// The merge with every addition checked, so that tampered counts cannot wrap around.
fn sums_fit(parts: &[&Tally]) -> bool {
    fn vec_fit(vs: &[&Vec<u64>]) -> bool {
        let n = vs.iter().map(|v| v.len()).max().unwrap_or(0);
        (0..n).all(|i| {
            vs.iter()
                .try_fold(0u64, |a, v| a.checked_add(v.get(i).copied().unwrap_or(0)))
                .is_some()
        })
    }
    fn scalar_fit(mut xs: impl Iterator<Item = u64>) -> bool {
        xs.try_fold(0u64, |a, b| a.checked_add(b)).is_some()
    }
    let all = |f: &dyn Fn(&Tally) -> u64| scalar_fit(parts.iter().map(|t| f(t)));
    let vecs =
        |f: &dyn Fn(&Tally) -> &Vec<u64>| vec_fit(&parts.iter().map(|t| f(t)).collect::<Vec<_>>());
    let stations = parts.first().map_or(0, |t| t.repair.demand_mission.len());
    all(&|t| t.histories)
        && all(&|t| t.losses)
        && all(&|t| t.cuts)
        && parts
            .iter()
            .try_fold(0u128, |a, t| a.checked_add(t.cuts_sq))
            .is_some()
        && all(&|t| t.cascade_cuts)
        && all(&|t| t.strikes)
        && all(&|t| t.subcritical_holes)
        && all(&|t| t.time_with_cut_bay_s)
        && all(&|t| t.time_observed_s)
        && all(&|t| t.anomalies)
        && (0..tether_risk::engine::LOSS_CAUSES).all(|k| all(&|t| t.losses_by_cause[k]))
        && all(&|t| t.climber_load_cuts)
        && all(&|t| t.cross_link_cuts)
        && vecs(&|t| &t.losses_by_year)
        && vecs(&|t| &t.losses_by_band)
        && vecs(&|t| &t.cuts_by_band)
        && vecs(&|t| &t.cuts_by_year)
        && vecs(&|t| &t.max_cuts_in_bay)
        && all(&|t| t.repair.splices)
        && all(&|t| t.repair.time_to_splice_sum_s)
        && all(&|t| t.repair.queue_arrivals)
        && all(&|t| t.repair.queue_wait_sum_s)
        && all(&|t| t.repair.queue_area_s)
        && all(&|t| t.repair.queue_area_no_climber_s)
        && all(&|t| t.repair.busy_s)
        && all(&|t| t.repair.dispatched_segments)
        && all(&|t| t.repair.trip_travel_sum_s)
        && all(&|t| t.repair.trip_wait_for_light_sum_s)
        && all(&|t| t.repair.trip_splice_sum_s)
        && vecs(&|t| &t.repair.splices_by_year)
        && vecs(&|t| &t.repair.time_to_splice_hist)
        && vecs(&|t| &t.repair.stockout_histories)
        && vecs(&|t| &t.repair.stockout_events)
        && (0..stations).all(|k| {
            vecs(&|t| &t.repair.demand_mission[k])
                && vecs(&|t| &t.repair.demand_interval[k])
                && vecs(&|t| &t.repair.demand_max_interval[k])
        })
}

pub fn run(a: Args) -> anyhow::Result<()> {
    let bad = |d: &Path, what: &str, e: String| -> anyhow::Error {
        InputError(format!("{}/{what} is damaged: {e}", d.display())).into()
    };
    // Everything read back from disk is checked before it is used, like scenario input.
    let mut parts: Vec<(PathBuf, RunSummary, RunSettings)> = Vec::new();
    let stop = super::interrupt::flag();
    let bar = indicatif::ProgressBar::new(a.dirs.len() as u64);
    bar.set_style(
        indicatif::ProgressStyle::with_template("{spinner} reading shard {pos}/{len} {wide_bar}")
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
    );
    bar.enable_steady_tick(std::time::Duration::from_millis(250));
    for d in &a.dirs {
        if stop.load(std::sync::atomic::Ordering::SeqCst) {
            bar.finish_and_clear();
            return Err(
                super::interrupt::Stopped("merge stopped; nothing was written".into()).into(),
            );
        }
        bar.inc(1);
        check_complete(d)?;
        let s: RunSummary = read_json(&d.join("summary.json"))?;
        validate_summary(&s).map_err(|e| bad(d, "summary.json", e))?;
        let st: RunSettings = read_json(&d.join("settings.json"))?;
        st.validate()
            .map_err(|e| bad(d, "settings.json", e.in_file()))?;
        parts.push((d.clone(), s, st));
    }
    bar.finish_and_clear();
    let out_abs = std::fs::canonicalize(&a.out).ok();
    for d in &a.dirs {
        if out_abs.is_some() && std::fs::canonicalize(d).ok() == out_abs {
            return Err(InputError(format!(
                "--out {} is one of the shard folders; merge into a new folder",
                a.out.display()
            ))
            .into());
        }
    }
    let (first_dir, first, first_settings) = (&parts[0].0, &parts[0].1, &parts[0].2);
    let count = match first_settings.shard {
        Some((_, n)) => n,
        None => {
            return Err(InputError(format!(
                "{} is not a shard result (it was run without --shard)",
                first_dir.display()
            ))
            .into())
        }
    };
    // A set, not a vector of `count` flags: a shard count can be as large as the batch count.
    let mut seen = std::collections::BTreeSet::new();
    for (d, s, st) in &parts {
        let same = s.scenario_hash == first.scenario_hash
            && s.version == first.version
            && st.seed == first_settings.seed
            && st.histories == first_settings.histories
            && st.floor_fraction == first_settings.floor_fraction
            && st.rare_event == first_settings.rare_event
            && st.latent_bias == first_settings.latent_bias
            && st.condition_cascades == first_settings.condition_cascades
            && st.stockout_target == first_settings.stockout_target
            && st.target_rel_error == first_settings.target_rel_error;
        if !same {
            return Err(InputError(format!(
                "{} belongs to a different run (scenario hash, version, seed, histories or settings differ from {})",
                d.display(),
                first_dir.display()
            ))
            .into());
        }
        let Some((i, n)) = st.shard else {
            return Err(InputError(format!("{} is not a shard result", d.display())).into());
        };
        if n != count {
            return Err(InputError(format!(
                "{} is shard {i}/{n}, the others are of {count}",
                d.display()
            ))
            .into());
        }
        if s.shard != Some([i, n]) || s.seed != st.seed {
            return Err(bad(
                d,
                "summary.json",
                format!("it says shard {:?}, settings.json says [{i}, {n}]", s.shard),
            ));
        }
        if s.status != RunStatus::Complete {
            return Err(InputError(format!(
                "{} did not complete ({:?}); resume it before merging",
                d.display(),
                s.status
            ))
            .into());
        }
        if !seen.insert(i) {
            return Err(InputError(format!("shard {i}/{n} is given twice")).into());
        }
    }
    if (seen.len() as u64) < count {
        let missing = (0..count)
            .zip(seen.iter().copied().chain(std::iter::repeat(u64::MAX)))
            .find(|(want, have)| want != have)
            .map_or(0, |(want, _)| want);
        return Err(InputError(format!(
            "shard {missing}/{count} is missing ({} of {count} given)",
            seen.len()
        ))
        .into());
    }
    let model = model_from_dir(first_dir)?;
    if model.scenario.hash_hex() != first.scenario_hash {
        return Err(InputError(format!(
            "{}/scenario.json does not match its summary",
            first_dir.display()
        ))
        .into());
    }
    let mut settings = first_settings.clone();
    settings.shard = None;
    let engine = engine_for(&model, &settings)?;
    for (d, s, st) in &parts {
        check_tally_shape(&engine, &s.tally).map_err(|e| bad(d, "summary.json", e))?;
        let batches = Engine::batches_of(&st.options(1));
        if s.tally.histories != batches.histories() || s.histories != batches.histories() {
            return Err(bad(
                d,
                "summary.json",
                format!(
                    "it holds {} histories; shard {:?} of {} histories has {}",
                    s.tally.histories,
                    st.shard,
                    st.histories,
                    batches.histories()
                ),
            ));
        }
        let (start, step) = st.shard.unwrap_or((0, 1));
        let total = st.histories.div_ceil(tether_risk::engine::BATCH_SIZE);
        if let Some(w) = s
            .tally
            .weighted
            .iter()
            .find(|w| w.batch < start || (w.batch - start) % step != 0 || w.batch >= total)
        {
            return Err(bad(
                d,
                "summary.json",
                format!(
                    "tally.weighted names batch {}, which is not in this shard",
                    w.batch
                ),
            ));
        }
    }
    // Order-independent: shards in index order, rare-event records in batch order.
    parts.sort_by_key(|(_, _, st)| st.shard.map_or(0, |(i, _)| i));
    let tallies: Vec<&Tally> = parts.iter().map(|(_, s, _)| &s.tally).collect();
    if !sums_fit(&tallies) {
        return Err(InputError(
            "the shards' counts add up beyond 2^64: at least one summary.json is damaged".into(),
        )
        .into());
    }
    let mut tally: Tally = engine.empty_tally();
    for t in &tallies {
        tally.merge(t);
    }
    tally.weighted.sort_by_key(|w| w.batch);
    if tally.weighted.windows(2).any(|w| w[0].batch == w[1].batch) {
        return Err(InputError(
            "two shards hold the same rare-event batch: the shard folders overlap".into(),
        )
        .into());
    }
    let summary = RunSummary::from_outcome(
        &engine,
        tally,
        settings.histories,
        settings.seed,
        None,
        settings.stockout_target,
        RunStatus::Complete,
        settings.target_rel_error,
    );
    let _lock = prepare_out_dir(&a.out, a.force)?;
    // Threads and wall time are not the merged run's: recorded as 0.
    let manifest = run_manifest(&summary, &settings, 0, 0.0);
    write_run_folder(&a.out, &model, &settings, &summary, &manifest, None)?;
    match a.format {
        Format::Json => print(&(serde_json::to_string_pretty(&summary)? + "\n")),
        Format::Csv => print(&tether_risk::report::run::survival_table(&summary).to_csv()),
        Format::Text => print(&format!(
            "{}\nMerged {} shards into {}\n",
            run_text(&summary),
            count,
            a.out.display()
        )),
    }
}

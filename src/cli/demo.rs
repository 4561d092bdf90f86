//! `tether-risk demo`: the whole chain on the built-in scenario, into `out/demo/`.

use std::path::PathBuf;

use tether_risk::engine::RunStatus;
use tether_risk::model::Model;
use tether_risk::report::design::{DesignSummary, ProfileSummary};
use tether_risk::report::run::run_text;
use tether_risk::report::write_atomic;
use tether_risk::scenario;

use super::output::print;
use super::simulate::{execute, settings_err, PolicyArm};

/// Arguments of `demo`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Example:\n  tether-risk demo            # writes out/demo/ and prints where the results are\n\nThe demo replaces any earlier results in its output folder."
)]
pub struct Args {
    /// Output folder.
    #[arg(long, default_value = "out/demo")]
    out: PathBuf,
    /// Worker threads; 0 means one per core.
    #[arg(long, default_value_t = 0)]
    threads: usize,
}

pub fn run(a: Args) -> anyhow::Result<()> {
    // Ctrl-C or SIGTERM stops the run within a second at a clean point; what finished is
    // written (with a checkpoint) and the later steps are skipped.
    let stop = super::interrupt::flag();
    let dir = &a.out;
    // The demo replaces its own earlier results (only the files it writes), under the lock.
    let _lock = super::output::lock_folder(dir)?;
    let clear = |e: std::io::Error| anyhow::anyhow!("cannot clear {}: {e}", dir.display());
    tether_risk::report::folder::clear_sweep_outputs(&dir.join("sweep")).map_err(clear)?;
    let write = |name: &str, text: &str| -> anyhow::Result<()> {
        write_atomic(&dir.join(name), text.as_bytes())
            .map_err(|e| anyhow::anyhow!("cannot write {name}: {e}"))
    };
    let model = Model::build(scenario::demo())?;

    print("1/3 design check\n")?;
    let design = DesignSummary::from_model(&model);

    print("2/3 tether profile\n")?;
    let profile = ProfileSummary::from_model(&model);

    print("3/3 Monte Carlo with repair, and the same histories with an inspection policy\n")?;
    let with_policy = Model::build(demo_with_policy(&model)?)?;
    // Plain Monte Carlo with the on-demand sampler and the scenario's histories and seed.
    let settings = tether_risk::engine::RunChoices {
        threads: a.threads,
        ..Default::default()
    }
    .resolve(model.scenario.run.histories, model.scenario.run.seed)
    .map_err(settings_err)?;
    // The run replaces the folder's earlier results when its own are ready; the demo's extra
    // files follow it.
    let summary = execute(
        &model,
        &settings,
        a.threads,
        dir,
        None,
        Some(stop),
        false,
        Some(PolicyArm::WithPolicy(&with_policy)),
    )?;
    write("design.txt", &design.to_text())?;
    write("profile.csv", &profile.table().to_csv())?;
    write(
        "profile.json",
        &(serde_json::to_string_pretty(&profile)? + "\n"),
    )?;
    let text = run_text(&summary);
    write("simulate.txt", &text)?;
    print(&format!(
        "\n{}\n{text}\nResults are in {}/\n",
        design.to_text(),
        dir.display()
    ))?;
    if summary.status == RunStatus::Interrupted {
        return Err(super::interrupt::Stopped(format!(
            "the demo's Monte Carlo run stopped; its finished batches, a checkpoint and a report are in {0} (continue with `tether-risk simulate --resume {0}`); the trade study was not run",
            dir.display()
        ))
        .into());
    }

    sweep_spacing(a.threads, dir, stop)?;
    sensitivity(a.threads, dir, stop)?;

    // Keep this last: the report reads every file the steps above wrote (the simulation
    // wrote design.json, estimate.json and the manifest).
    print("Report\n")?;
    let written = super::report::render(dir)?;
    print(&format!("Report: {}\n", written.html.display()))
}

/// The demo design with the remedy its report weighs: replace an intact segment once its worst
/// hole reaches half its critical width at the next cut level, at every repair visit and at
/// inspections every 90 days of the bays below 500 km (where the demo's losses are). The
/// threshold and interval are the demo's own choice, not a recommendation.
fn demo_with_policy(model: &Model) -> anyhow::Result<scenario::Scenario> {
    use tether_risk::scenario::{PreventiveReplacementSpec, ReplacementThresholdSpec};
    let mut spec = model.scenario.spec.clone();
    let repair = spec
        .repair
        .as_mut()
        .ok_or_else(|| anyhow::anyhow!("the demo scenario has no repair section"))?;
    repair.preventive_replacement = Some(PreventiveReplacementSpec {
        threshold: ReplacementThresholdSpec::FractionOfNextCritical { fraction: 0.5 },
        at_climber_visits: true,
        extra_spares_per_trip: 2,
        inspection_interval_days: Some(90.0),
        inspection_lowest_km: 500.0,
        inspection_spares: 6,
    });
    Ok(scenario::Scenario::from_spec(spec, None)?)
}

/// A small trade study of cross-link spacing and ribbon count, into `sweep/` (the report picks it
/// up), with the conditional Monte Carlo at cuts: with plain Monte Carlo 20,000 histories a
/// design saw a handful of losses and no two designs were distinguishable; conditioned, every
/// design's probability is resolved to a few per cent in about two seconds for all six (the
/// count columns are then left out, as the sweep says).
fn sweep_spacing(
    threads: usize,
    dir: &std::path::Path,
    stop: &std::sync::atomic::AtomicBool,
) -> anyhow::Result<()> {
    use tether_risk::sweep::{run_sweep_resumable, SweepOutcome, SweepSettings, SweepSpec};
    print("Trade study: cross-link spacing x ribbon count\n")?;
    let base: serde_json::Value = serde_json::from_str(scenario::DEMO_SCENARIO_JSON)?;
    let spec = SweepSpec::parse(&[
        "tether.cross_link_spacing_km=25,50,75",
        "tether.ribbon_count=4,6",
    ])?;
    let settings = SweepSettings {
        run: tether_risk::engine::RunChoices {
            histories: Some(20_000),
            threads,
            condition_cascades: true,
            ..Default::default()
        },
        ..Default::default()
    };
    let mut on_point = |p: &tether_risk::sweep::PointResult, n: usize| {
        let _ = print(&format!("  point {}/{n}: {}\n", p.index + 1, p.label));
        Ok(())
    };
    let result = match run_sweep_resumable(
        &base,
        &spec,
        &settings,
        Vec::new(),
        &mut on_point,
        Some(stop),
        &|_, _| {},
    )? {
        SweepOutcome::Complete(r) => *r,
        SweepOutcome::Interrupted { done, total } => {
            return Err(super::interrupt::Stopped(format!(
                "the demo stopped during its trade study ({done} of {total} points finished, not kept); the main run's results and its report are complete in {}; run `tether-risk demo` again for the trade study",
                dir.display()
            ))
            .into())
        }
    };
    let sdir = dir.join("sweep");
    std::fs::create_dir_all(&sdir)
        .map_err(|e| anyhow::anyhow!("cannot create {}: {e}", sdir.display()))?;
    tether_risk::report::sweep::write_sweep(&sdir, &result)?;
    Ok(())
}

/// The one-at-a-time sensitivity of the demo, into `sensitivity/` (the report's section "Which
/// assumption decides the answer?"). 100 000 histories per run: enough for the base's tens of
/// losses; the main run above is the number to quote.
fn sensitivity(
    threads: usize,
    dir: &std::path::Path,
    stop: &std::sync::atomic::AtomicBool,
) -> anyhow::Result<()> {
    use tether_risk::sweep::sensitivity::{run_sensitivity, SensitivitySettings, INPUTS};
    print("Sensitivity: which assumption decides the answer\n")?;
    let base: serde_json::Value = serde_json::from_str(scenario::DEMO_SCENARIO_JSON)?;
    let settings = SensitivitySettings {
        run: tether_risk::engine::RunChoices {
            histories: Some(100_000),
            threads,
            ..Default::default()
        },
        ..Default::default()
    };
    let progress = |what: &str| {
        let _ = print(&format!("  run done: {what}\n"));
    };
    let result = match run_sensitivity(&base, INPUTS, &settings, &progress) {
        Ok(r) => r,
        Err(_) if stop.load(std::sync::atomic::Ordering::SeqCst) => {
            return Err(super::interrupt::Stopped(format!(
                "the demo stopped during its sensitivity study (not kept); the main run's results, its report and the trade study are in {}; run `tether-risk demo` again for the sensitivity section",
                dir.display()
            ))
            .into())
        }
        Err(e) => return Err(anyhow::anyhow!("the demo's sensitivity study failed: {e}")),
    };
    let sdir = dir.join("sensitivity");
    tether_risk::report::sensitivity::write_sensitivity(&sdir, &result)
        .map_err(|e| anyhow::anyhow!("cannot write {}: {e}", sdir.display()))?;
    Ok(())
}

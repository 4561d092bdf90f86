//! `tether-risk demo`: the whole chain on the built-in scenario, into `out/demo/`.

use std::path::PathBuf;

use tether_risk::model::markov::{mission_times_s, MarkovModel};
use tether_risk::model::Model;
use tether_risk::report::design::{DesignSummary, ProfileSummary};
use tether_risk::report::estimate::EstimateSummary;
use tether_risk::report::run::run_text;
use tether_risk::report::write_atomic;
use tether_risk::scenario;

use super::output::print;
use super::simulate::{execute, RunSettingsFile};

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
    let dir = &a.out;
    std::fs::create_dir_all(dir)
        .map_err(|e| anyhow::anyhow!("cannot create {}: {e}", dir.display()))?;
    let write = |name: &str, text: &str| -> anyhow::Result<()> {
        write_atomic(&dir.join(name), text.as_bytes())
            .map_err(|e| anyhow::anyhow!("cannot write {name}: {e}"))
    };
    write("scenario.json", scenario::DEMO_SCENARIO_JSON)?;
    let model = Model::build(scenario::demo())?;

    print("1/3 design check\n")?;
    let design = DesignSummary::from_model(&model);
    write("design.txt", &design.to_text())?;
    write(
        "design.json",
        &(serde_json::to_string_pretty(&design)? + "\n"),
    )?;

    print("2/3 tether profile\n")?;
    let profile = ProfileSummary::from_model(&model);
    write("profile.csv", &profile.table().to_csv())?;
    write(
        "profile.json",
        &(serde_json::to_string_pretty(&profile)? + "\n"),
    )?;

    print("3/3 Monte Carlo with repair\n")?;
    let settings = RunSettingsFile {
        histories: model.scenario.run.histories,
        seed: model.scenario.run.seed,
        shard: None,
        floor_fraction: 1.0,
        rare_event: 1.0,
        target_rel_error: None,
        stockout_target: 0.05,
    };
    let summary = execute(&model, &settings, a.threads, dir, None, None)?;
    let text = run_text(&summary);
    write("simulate.txt", &text)?;
    print(&format!(
        "\n{}\n{text}\nResults are in {}/\n",
        design.to_text(),
        dir.display()
    ))?;

    sweep_spacing(a.threads, dir)?;

    // Keep this last: the report reads every file the steps above wrote.
    estimate_and_report(&model, dir)
}

/// Write the Markov estimate (`estimate.json`) beside the Monte Carlo, then render the failure
/// tables, charts and report.html from the folder.
/// A small trade study of cross-link spacing and ribbon count, into `sweep/` (the report picks it
/// up). Fewer histories than the main run: it shows the method and the mass trade.
fn sweep_spacing(threads: usize, dir: &std::path::Path) -> anyhow::Result<()> {
    use tether_risk::sweep::{run_sweep_with_progress, SweepSettings, SweepSpec};
    print("Trade study: cross-link spacing x ribbon count\n")?;
    let base: serde_json::Value = serde_json::from_str(scenario::DEMO_SCENARIO_JSON)?;
    let spec = SweepSpec::parse(&[
        "tether.cross_link_spacing_km=25,50,75",
        "tether.ribbon_count=4,6",
    ])?;
    let settings = SweepSettings {
        histories: Some(5_000),
        seed: None,
        threads,
        rare_event_factor: 1.0,
        stockout_target: 0.05,
        flux_table_json: None,
    };
    let result = run_sweep_with_progress(&base, &spec, &settings, &|p, n| {
        let _ = print(&format!("  point {}/{n}: {}\n", p.index + 1, p.label));
    })?;
    let sdir = dir.join("sweep");
    std::fs::create_dir_all(&sdir)
        .map_err(|e| anyhow::anyhow!("cannot create {}: {e}", sdir.display()))?;
    tether_risk::report::sweep::write_sweep(&sdir, &result)?;
    Ok(())
}

fn estimate_and_report(model: &Model, dir: &std::path::Path) -> anyhow::Result<()> {
    print("Markov estimate\n")?;
    let markov = MarkovModel::build(model)?;
    let estimate = markov.solve(&mission_times_s(&model.scenario.run))?;
    let dm = tether_risk::model::damage_memory::solve(model, &mission_times_s(&model.scenario.run));
    let summary =
        EstimateSummary::new(model, &markov, &estimate).with_damage_memory(model, dm.as_ref());
    write_atomic(
        &dir.join("estimate.json"),
        (serde_json::to_string_pretty(&summary)? + "\n").as_bytes(),
    )
    .map_err(|e| anyhow::anyhow!("cannot write estimate.json: {e}"))?;
    print("Report\n")?;
    let written = super::report::render(dir)?;
    print(&format!("Report: {}\n", written.html.display()))
}

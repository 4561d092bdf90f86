//! `tether-risk simulate FILE`: the Monte Carlo.

use std::path::PathBuf;
use std::time::Instant;

use tether_risk::engine::{Engine, RunOptions, RunSummary};
use tether_risk::model::Model;
use tether_risk::report::run::{crate_versions, run_text, write_run, Manifest};

use super::output::{load_model, print, InputError};
use super::Format;

/// Arguments of `simulate`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Examples:\n  tether-risk simulate demo --histories 20000\n  tether-risk simulate my-tether.json --seed 7 --threads 2 --out out/run7 --format json\n\nWrites summary.json, manifest.json and tables (CSV, Markdown) into the output folder."
)]
pub struct Args {
    /// Scenario file (JSON); `-` reads standard input; `demo` is the built-in scenario.
    pub file: String,
    /// Number of histories (default: the scenario's run.histories).
    #[arg(long)]
    pub histories: Option<u64>,
    /// Master seed (default: the scenario's run.seed).
    #[arg(long)]
    pub seed: Option<u64>,
    /// Worker threads; 0 means one per core. Results do not depend on it.
    #[arg(long, default_value_t = 0)]
    pub threads: usize,
    /// Output folder (default: out/<scenario name>).
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Replace results already in the output folder.
    #[arg(long)]
    pub force: bool,
    /// Sampling floor as a fraction of the smallest severing hole; below 1 also samples
    /// sub-critical holes (slower; does not change loss estimates).
    #[arg(long, default_value_t = 1.0)]
    pub floor_fraction: f64,
    /// Largest acceptable stock-out probability per station, for the recommended initial stock.
    #[arg(long, default_value_t = 0.05)]
    pub stockout_target: f64,
    /// Rare-event estimator: multiply strike (cut) rates on bays that already have a cut by
    /// FACTOR and weight histories by their likelihood ratio. For loss probabilities far below
    /// 1/histories. Typical factors 10 to 1000.
    #[arg(long, value_name = "FACTOR")]
    pub rare_event: Option<f64>,
    /// Output format on stdout.
    #[arg(long, value_enum, default_value_t)]
    pub format: Format,
}

/// Run a simulation for a built model and write its folder; returns the summary.
pub fn simulate_model(
    model: &Model,
    a: &Args,
    out_dir: &std::path::Path,
) -> anyhow::Result<RunSummary> {
    let histories = a.histories.unwrap_or(model.scenario.run.histories);
    if histories == 0 {
        return Err(InputError(
            "--histories = 0 is out of range: allowed [1, 1e12] histories".into(),
        )
        .into());
    }
    let seed = a.seed.unwrap_or(model.scenario.run.seed);
    if !(a.stockout_target > 0.0 && a.stockout_target < 1.0) {
        return Err(InputError(format!(
            "--stockout-target = {} is out of range: allowed (0, 1) (probability)",
            a.stockout_target
        ))
        .into());
    }
    let mut engine = Engine::new(model, a.floor_fraction).map_err(|e| InputError(e.to_string()))?;
    if let Some(f) = a.rare_event {
        engine = engine
            .with_rare_event(f)
            .map_err(|e| InputError(e.to_string()))?;
    }
    let opts = RunOptions {
        histories,
        seed,
        threads: a.threads,
        floor_fraction: a.floor_fraction,
        shard: None,
    };
    let bar = indicatif::ProgressBar::new(histories);
    bar.set_style(
        indicatif::ProgressStyle::with_template("{spinner} {pos}/{len} histories {wide_bar} {eta}")
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
    );
    let start = Instant::now();
    let tally = engine.run(&opts, &|done| bar.set_position(done))?;
    bar.finish_and_clear();
    let summary = RunSummary::from_tally(&engine, tally, histories, seed, None, a.stockout_target);
    let manifest = Manifest {
        tool: "tether-risk".into(),
        version: tether_risk::VERSION.into(),
        scenario: summary.scenario.clone(),
        scenario_hash: summary.scenario_hash.clone(),
        seed,
        histories: summary.histories,
        batch_size: summary.batch_size,
        threads: if a.threads == 0 {
            rayon::current_num_threads()
        } else {
            a.threads
        },
        shard: None,
        crate_versions: crate_versions(),
        random_streams: "Pcg64Mcg per (seed, purpose, history), seeded through SplitMix64".into(),
        wall_time_s: start.elapsed().as_secs_f64(),
        command: std::env::args().collect(),
    };
    write_run(out_dir, &summary, &manifest)
        .map_err(|e| anyhow::anyhow!("cannot write results to {}: {e}", out_dir.display()))?;
    Ok(summary)
}

/// Refuse to overwrite a folder holding results unless forced.
pub fn prepare_out_dir(dir: &std::path::Path, force: bool) -> anyhow::Result<()> {
    if dir.join("summary.json").exists() && !force {
        return Err(InputError(format!(
            "{} already holds results (summary.json); choose another --out or pass --force to replace them",
            dir.display()
        ))
        .into());
    }
    std::fs::create_dir_all(dir)
        .map_err(|e| anyhow::anyhow!("cannot create output folder {}: {e}", dir.display()))?;
    Ok(())
}

pub fn run(a: Args) -> anyhow::Result<()> {
    let model = load_model(&a.file)?;
    let out_dir = a
        .out
        .clone()
        .unwrap_or_else(|| PathBuf::from("out").join(sanitize(&model.scenario.spec.name)));
    prepare_out_dir(&out_dir, a.force)?;
    let summary = simulate_model(&model, &a, &out_dir)?;
    match a.format {
        Format::Json => print(&(serde_json::to_string_pretty(&summary)? + "\n")),
        Format::Text | Format::Csv => print(&format!(
            "{}\nResults written to {}\n",
            run_text(&summary),
            out_dir.display()
        )),
    }
}

/// A scenario name made safe as a folder name.
pub fn sanitize(name: &str) -> String {
    let s: String = name
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                c
            } else {
                '_'
            }
        })
        .collect();
    if s.is_empty() {
        "run".into()
    } else {
        s
    }
}

//! `tether-risk sweep FILE --vary PATH=V1,V2,...`: a trade study over a grid of designs.

use std::path::{Path, PathBuf};

use tether_risk::report::sweep::{sweep_csv, sweep_text, write_sweep};
use tether_risk::scenario::{self, FluxModelSpec};
use tether_risk::sweep::{run_sweep_with_progress, SweepError, SweepSettings, SweepSpec};

use super::output::{print, InputError};
use super::Format;

/// Arguments of `sweep`.
#[derive(clap::Args, Debug, Clone)]
#[command(
    after_help = "Examples:\n  tether-risk sweep demo --vary tether.cross_link_spacing_km=25,50,100 --vary tether.ribbon_count=4,6 --histories 2000\n  tether-risk sweep my-tether.json --vary repair.stations[0].climbers=1,2,3 --format csv\n  tether-risk sweep my-tether.json --vary environment.flux_scale_factor=0.33,1,3 --out out/flux\n\nPATH is a dotted field path into the scenario JSON (array elements as [i]); values keep the\nfield's type. Up to 3 --vary options, at most 200 grid points. Infeasible designs are listed\nwith the reason and not simulated. Every point uses the same seed and number of histories\n(common random numbers), so differences between designs are mostly design effects.\n\nWrites sweep.json, sweep.csv, sweep.md, heatmap.png/.svg (loss probability over the first two\nvaried fields) and pareto.png/.svg (total mass against loss probability) into the output folder."
)]
pub struct Args {
    /// Base scenario file (JSON); `-` reads standard input; `demo` is the built-in scenario.
    pub file: String,
    /// A varied field and its values: PATH=V1,V2,... (repeat up to 3 times).
    #[arg(long, value_name = "PATH=V1,V2,...", required = true)]
    pub vary: Vec<String>,
    /// Histories per design (default: the base scenario's run.histories).
    #[arg(long)]
    pub histories: Option<u64>,
    /// Master seed shared by every design (default: the base scenario's run.seed).
    #[arg(long)]
    pub seed: Option<u64>,
    /// Worker threads per run; 0 means one per core. Results do not depend on it.
    #[arg(long, default_value_t = 0)]
    pub threads: usize,
    /// Output folder (default: out/<scenario name>-sweep).
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Replace sweep results already in the output folder.
    #[arg(long)]
    pub force: bool,
    /// Rare-event estimator boost factor for every design (see `simulate --help`).
    #[arg(long, value_name = "FACTOR")]
    pub rare_event: Option<f64>,
    /// Largest acceptable stock-out probability per station, for the recommended initial stock.
    #[arg(long, default_value_t = 0.05)]
    pub stockout_target: f64,
    /// Output format on stdout.
    #[arg(long, value_enum, default_value_t)]
    pub format: Format,
}

/// The base scenario's text and the folder its relative paths start from.
pub(super) fn read_base(file: &str) -> anyhow::Result<(String, PathBuf)> {
    if file == "demo" && !Path::new("demo").exists() {
        return Ok((scenario::DEMO_SCENARIO_JSON.to_string(), PathBuf::from(".")));
    }
    if file == "-" {
        let mut s = String::new();
        std::io::Read::read_to_string(&mut std::io::stdin(), &mut s).map_err(|e| {
            InputError(format!("cannot read the scenario from standard input: {e}"))
        })?;
        return Ok((s, PathBuf::from(".")));
    }
    let s = std::fs::read_to_string(file)
        .map_err(|e| InputError(format!("cannot read scenario file {file}: {e}")))?;
    let dir = Path::new(file)
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_default();
    Ok((s, dir))
}

pub(super) fn sweep_err(e: SweepError) -> anyhow::Error {
    if e.is_input_error() {
        InputError(e.to_string()).into()
    } else {
        anyhow::anyhow!(e)
    }
}

pub fn run(a: Args) -> anyhow::Result<()> {
    let spec = SweepSpec::parse(&a.vary).map_err(sweep_err)?;
    let (text, dir) = read_base(&a.file)?;
    // Parse here first so that errors point at lines of the user's file.
    let base_spec = scenario::parse_spec(&text)?;
    let flux_table_json = match &base_spec.environment.flux_model {
        FluxModelSpec::Table { table_file } => {
            let p = dir.join(table_file);
            Some(std::fs::read_to_string(&p).map_err(|e| {
                InputError(format!(
                    "environment.flux_model.table_file: cannot read {}: {e}",
                    p.display()
                ))
            })?)
        }
        FluxModelSpec::Builtin(_) => None,
    };
    let base: serde_json::Value = serde_json::from_str(&text)?;
    let out_dir = a.out.clone().unwrap_or_else(|| {
        PathBuf::from("out").join(format!(
            "{}-sweep",
            tether_risk::report::file_stem(&base_spec.name, "run")
        ))
    });
    if out_dir.join("sweep.json").exists() && !a.force {
        return Err(InputError(format!(
            "{} already holds sweep results (sweep.json); choose another --out or pass --force to replace them",
            out_dir.display()
        ))
        .into());
    }
    let settings = SweepSettings {
        histories: a.histories,
        seed: a.seed,
        threads: a.threads,
        rare_event_factor: a.rare_event.unwrap_or(1.0),
        stockout_target: a.stockout_target,
        flux_table_json,
    };
    let progress = |p: &tether_risk::sweep::PointResult, n: usize| {
        let what = match (&p.loss_probability, &p.reason) {
            (Some(l), _) => format!("P(loss) = {:.4}", l.estimate),
            (None, Some(_)) => "infeasible".to_string(),
            (None, None) => String::new(),
        };
        eprintln!("point {}/{n} {}: {what}", p.index + 1, p.label);
    };
    let result = run_sweep_with_progress(&base, &spec, &settings, &progress).map_err(sweep_err)?;
    std::fs::create_dir_all(&out_dir)
        .map_err(|e| anyhow::anyhow!("cannot create output folder {}: {e}", out_dir.display()))?;
    write_sweep(&out_dir, &result)?;
    match a.format {
        Format::Json => print(&(serde_json::to_string_pretty(&result)? + "\n")),
        Format::Csv => print(&sweep_csv(&result)),
        Format::Text => print(&format!(
            "{}\nResults written to {}\n",
            sweep_text(&result),
            out_dir.display()
        )),
    }
}

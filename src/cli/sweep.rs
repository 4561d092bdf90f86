//! `tether-risk sweep FILE --vary PATH=V1,V2,...`: a trade study over a grid of designs.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use tether_risk::engine::RunChoices;
use tether_risk::report::folder::clear_sweep_outputs;
use tether_risk::report::run::retract_manifest;
use tether_risk::report::sweep::{sweep_csv, sweep_text, write_sweep};
use tether_risk::report::write_atomic;
use tether_risk::scenario::{self, FluxModelSpec};
use tether_risk::sweep::{
    run_sweep_resumable, PointResult, SweepError, SweepOutcome, SweepSettings, SweepSpec,
};

use super::output::{command_line, lock_folder, print, InputError};
use super::run_args::{RunArgs, StockoutArg};
use super::simulate::read_run_file;
use super::Format;

/// Arguments of `sweep`.
#[derive(clap::Args, Debug, Clone)]
#[command(allow_negative_numbers = true)]
#[command(
    after_help = "Examples:\n  tether-risk sweep demo --vary tether.cross_link_spacing_km=25,50,100 --vary tether.ribbon_count=4,6 --histories 2000\n  tether-risk sweep my-tether.json --vary repair.stations[0].climbers=1,2,3 --format csv\n  tether-risk sweep my-tether.json --vary environment.flux_scale_factor=0.33,1,3 --out out/flux\n\nPATH is a dotted field path into the scenario JSON (array elements as [i]); values keep the\nfield's type. Up to 3 --vary options, at most 200 grid points. Infeasible designs are listed\nwith the reason and not simulated. Every point uses the same seed and number of histories\n(common random numbers), so differences between designs are mostly design effects.\n\nWrites sweep.json, sweep.csv, sweep.md, heatmap.png/.svg (loss probability over the first two\nvaried fields) and pareto.png/.svg (total mass against loss probability) and report.html into the output folder.\nEach finished point is saved at once in points/; after Ctrl-C (exit 130) `tether-risk sweep\n--resume DIR` runs the rest and gives the uninterrupted result."
)]
pub struct Args {
    /// Base scenario file (JSON); `-` reads standard input; `demo` is the built-in scenario.
    #[arg(required_unless_present = "resume")]
    pub file: Option<String>,
    /// A varied field and its values: PATH=V1,V2,... (repeat up to 3 times).
    #[arg(
        long,
        value_name = "PATH=V1,V2,...",
        required_unless_present = "resume"
    )]
    pub vary: Vec<String>,
    /// Histories, seed, threads, sampler, rare-event factor, target error of every design
    /// (see `simulate --help`); with a target error, histories are a ceiling per design.
    #[command(flatten)]
    pub run: RunArgs,
    /// Stock-out target.
    #[command(flatten)]
    pub stock: StockoutArg,
    /// Output folder (default: out/<scenario name>-sweep).
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Replace sweep results already in the output folder; also run points whose expected work
    /// is beyond the budget.
    #[arg(long)]
    pub force: bool,
    /// Continue an interrupted sweep from its output folder (finished points are kept).
    #[arg(long, value_name = "DIR", conflicts_with_all = ["file", "vary", "histories", "seed", "rare_event", "condition_cascades", "target_rel_error", "out", "force"])]
    pub resume: Option<PathBuf>,
    /// Output format on stdout.
    #[arg(long, value_enum, default_value_t)]
    pub format: Format,
}

/// Everything needed to run or continue a sweep, saved as `sweep_plan.json` before the first
/// point runs.
#[derive(Clone, Debug, Serialize, Deserialize)]
struct SweepPlan {
    version: String,
    base: serde_json::Value,
    flux_table_json: Option<String>,
    vary: Vec<String>,
    histories: Option<u64>,
    seed: Option<u64>,
    rare_event_factor: f64,
    /// Conditional Monte Carlo at cuts for every point (absent in older plans: off).
    #[serde(default)]
    condition_cascades: bool,
    /// Relative standard error at which each point stops early.
    #[serde(default)]
    target_rel_error: Option<f64>,
    stockout_target: f64,
    /// Damage sampler of every point.
    #[serde(default)]
    sampler: tether_risk::engine::Sampler,
}

/// The base scenario's text and the folder its relative paths start from.
pub(super) fn read_base(file: &str) -> anyhow::Result<(String, PathBuf)> {
    if file == "demo" && !Path::new("demo").exists() {
        return Ok((scenario::DEMO_SCENARIO_JSON.to_string(), PathBuf::from(".")));
    }
    if file == "-" {
        let s =
            scenario::read_text_limited(std::io::stdin(), scenario::MAX_INPUT_BYTES, "a scenario")
                .map_err(|e| {
                    InputError(format!("cannot read the scenario from standard input: {e}"))
                })?;
        return Ok((s, PathBuf::from(".")));
    }
    let s = scenario::read_text_capped(
        Path::new(file),
        scenario::MAX_INPUT_BYTES,
        "a scenario file",
    )
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

fn point_path(dir: &Path, index: usize) -> PathBuf {
    dir.join("points").join(format!("point-{index:04}.json"))
}

fn read_plan(dir: &Path) -> anyhow::Result<SweepPlan> {
    let p = dir.join("sweep_plan.json");
    if !p.exists() {
        return Err(InputError(format!(
            "{} holds no sweep_plan.json: it is not a sweep folder that can be resumed",
            dir.display()
        ))
        .into());
    }
    let text = read_run_file(&p)?;
    let plan: SweepPlan = serde_json::from_str(&text)
        .map_err(|e| InputError(format!("{} is damaged: {e}", p.display())))?;
    if plan.version != tether_risk::VERSION {
        return Err(InputError(format!(
            "{} was written by tether-risk {}; this is {}: rerun the sweep with this version",
            p.display(),
            plan.version,
            tether_risk::VERSION
        ))
        .into());
    }
    Ok(plan)
}

/// Points saved by an interrupted run of the sweep.
fn read_points(dir: &Path) -> anyhow::Result<Vec<PointResult>> {
    let mut out = Vec::new();
    let Ok(entries) = std::fs::read_dir(dir.join("points")) else {
        return Ok(out);
    };
    let mut names: Vec<PathBuf> = entries
        .flatten()
        .map(|e| e.path())
        .filter(|p| {
            p.file_name()
                .and_then(|n| n.to_str())
                .is_some_and(|n| n.starts_with("point-") && n.ends_with(".json"))
        })
        .collect();
    names.sort();
    if names.len() > tether_risk::sweep::MAX_POINTS {
        return Err(InputError(format!(
            "{}/points holds {} files; a sweep has at most {} points",
            dir.display(),
            names.len(),
            tether_risk::sweep::MAX_POINTS
        ))
        .into());
    }
    for p in names {
        let text = read_run_file(&p)?;
        let point: PointResult = serde_json::from_str(&text).map_err(|e| {
            InputError(format!(
                "{} is damaged ({e}); delete it to run that point again",
                p.display()
            ))
        })?;
        if point_path(dir, point.index) != p {
            return Err(InputError(format!(
                "{} holds point {}; delete it to run that point again",
                p.display(),
                point.index
            ))
            .into());
        }
        out.push(point);
    }
    Ok(out)
}

pub fn run(a: Args) -> anyhow::Result<()> {
    // The signal handler first: a Ctrl-C at any point after start-up is a clean stop.
    let stop = super::interrupt::flag();
    let (plan, out_dir, _lock) = match &a.resume {
        Some(dir) => {
            let lock = lock_folder(dir)?;
            let plan = read_plan(dir)?;
            if dir.join("sweep.json").exists() {
                return Err(InputError(format!(
                    "{} holds a finished sweep (sweep.json); there is nothing to resume",
                    dir.display()
                ))
                .into());
            }
            (plan, dir.clone(), lock)
        }
        None => {
            let file = a.file.as_deref().unwrap_or("demo");
            let (text, dir) = read_base(file)?;
            // Parse here first so that errors point at lines of the user's file.
            let base_spec = scenario::parse_spec(&text)?;
            let flux_table_json = match &base_spec.environment.flux_model {
                FluxModelSpec::Table { table_file } => {
                    let p = dir.join(table_file);
                    Some(
                        scenario::read_text_capped(&p, scenario::MAX_INPUT_BYTES, "a flux table")
                            .map_err(|e| {
                            InputError(format!(
                                "environment.flux_model.table_file: cannot read {}: {e}",
                                p.display()
                            ))
                        })?,
                    )
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
            // Check the grid and the run settings before touching the folder.
            SweepSpec::parse(&a.vary).map_err(sweep_err)?;
            RunChoices {
                stockout_target: a.stock.stockout_target,
                ..a.run.choices()
            }
            .resolve(base_spec.run.histories, base_spec.run.seed)
            .map_err(super::simulate::settings_err)?;
            let lock = lock_folder(&out_dir)?;
            let held = ["sweep.json", "sweep_plan.json", "manifest.json"]
                .iter()
                .find(|f| out_dir.join(f).exists());
            if let Some(f) = held {
                if !a.force {
                    let hint = if *f == "sweep_plan.json" && !out_dir.join("sweep.json").exists() {
                        format!(
                            "; it is an unfinished sweep: continue it with `tether-risk sweep --resume {}`",
                            out_dir.display()
                        )
                    } else {
                        String::new()
                    };
                    return Err(InputError(format!(
                        "{} already holds sweep results ({f}); choose another --out or pass --force to replace them{hint}",
                        out_dir.display()
                    ))
                    .into());
                }
                clear_sweep_outputs(&out_dir).map_err(|e| {
                    anyhow::anyhow!(
                        "cannot remove the earlier sweep in {}: {e}",
                        out_dir.display()
                    )
                })?;
            }
            let plan = SweepPlan {
                version: tether_risk::VERSION.into(),
                base,
                flux_table_json,
                vary: a.vary.clone(),
                histories: a.run.histories,
                seed: a.run.seed,
                rare_event_factor: a.run.rare_event.unwrap_or(1.0),
                condition_cascades: a.run.condition_cascades,
                target_rel_error: a.run.target_rel_error,
                stockout_target: a.stock.stockout_target,
                sampler: a.run.sampler.into(),
            };
            (plan, out_dir, lock)
        }
    };
    let spec = SweepSpec::parse(&plan.vary).map_err(sweep_err)?;
    let settings = SweepSettings {
        run: RunChoices {
            histories: plan.histories,
            seed: plan.seed,
            threads: a.run.threads,
            rare_event: plan.rare_event_factor,
            condition_cascades: plan.condition_cascades,
            target_rel_error: plan.target_rel_error,
            stockout_target: plan.stockout_target,
            sampler: plan.sampler,
            ..RunChoices::default()
        },
        flux_table_json: plan.flux_table_json.clone(),
        force_work: a.force,
    };
    let done = if a.resume.is_some() {
        read_points(&out_dir)?
    } else {
        Vec::new()
    };
    let io = |e: std::io::Error| anyhow::anyhow!("cannot write to {}: {e}", out_dir.display());
    retract_manifest(&out_dir).map_err(io)?;
    let plan_json = serde_json::to_string_pretty(&plan)? + "\n";
    // The plan is written with the first finished point: a grid refused before any point ran
    // leaves nothing behind.
    let mut plan_written = false;
    if !done.is_empty() {
        eprintln!("resuming: {} points already done", done.len());
    }
    let mut on_point = |p: &PointResult, n: usize| -> Result<(), SweepError> {
        let sig = tether_risk::report::table::sig;
        let what = match (&p.loss_probability, &p.reason) {
            (Some(l), _) => {
                let ran = p
                    .histories_run
                    .map(|h| format!(" ({h} histories)"))
                    .unwrap_or_default();
                match l.interval() {
                    Some((lo, hi)) => format!(
                        "P(loss) = {} ({} .. {}){ran}",
                        sig(l.estimate, 3),
                        sig(lo, 3),
                        sig(hi, 3)
                    ),
                    None => format!("P(loss) = {} (not resolved){ran}", sig(l.estimate, 3)),
                }
            }
            (None, Some(_)) => "infeasible".to_string(),
            (None, None) => String::new(),
        };
        eprintln!("point {}/{n} {}: {what}", p.index + 1, p.label);
        // Each finished point is kept at once, atomically: an interrupted sweep loses at most
        // the point in progress.
        let fail = |what: &Path, e: std::io::Error| SweepError::Run {
            label: p.label.clone(),
            message: format!("cannot write {}: {e}", what.display()),
        };
        if !plan_written {
            let pp = out_dir.join("sweep_plan.json");
            write_atomic(&pp, plan_json.as_bytes()).map_err(|e| fail(&pp, e))?;
            let pd = out_dir.join("points");
            std::fs::create_dir_all(&pd).map_err(|e| fail(&pd, e))?;
            plan_written = true;
        }
        let json = serde_json::to_string_pretty(p).map_err(|e| SweepError::Spec(e.to_string()))?;
        let path = point_path(&out_dir, p.index);
        write_atomic(&path, (json + "\n").as_bytes()).map_err(|e| SweepError::Run {
            label: p.label.clone(),
            message: format!("cannot write {}: {e}", path.display()),
        })
    };
    // Two bars on stderr (hidden off a terminal): the points, and the histories of the point
    // that is running (a single point can take minutes).
    let bars = indicatif::MultiProgress::new();
    let style = |t: &str| {
        indicatif::ProgressStyle::with_template(t)
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar())
    };
    let bar = bars.add(indicatif::ProgressBar::new(spec.point_count() as u64));
    bar.set_style(style("{spinner} point {pos}/{len} {wide_bar} {eta}"));
    bar.set_position(done.len() as u64);
    bar.enable_steady_tick(std::time::Duration::from_millis(250));
    let inner = bars.add(indicatif::ProgressBar::new(0));
    inner.set_style(style(
        "  this point: {pos}/{len} histories {wide_bar} {per_sec} {eta}",
    ));
    let point_progress = |done: u64, total: u64| {
        if inner.length() != Some(total) {
            inner.set_length(total);
            inner.reset();
        }
        inner.set_position(done);
    };
    let mut on_point_with_bar = |p: &PointResult, n: usize| -> Result<(), SweepError> {
        bar.inc(1);
        inner.reset();
        bars.suspend(|| on_point(p, n))
    };
    let outcome = run_sweep_resumable(
        &plan.base,
        &spec,
        &settings,
        done,
        &mut on_point_with_bar,
        Some(stop),
        &point_progress,
    );
    inner.finish_and_clear();
    bar.finish_and_clear();
    let outcome = outcome.map_err(sweep_err)?;
    let result = match outcome {
        SweepOutcome::Complete(r) => *r,
        SweepOutcome::Interrupted { done, total } => {
            return Err(super::interrupt::SweepInterrupted {
                dir: out_dir.display().to_string(),
                done,
                total,
            }
            .into())
        }
    };
    let mut names: Vec<String> = write_sweep(&out_dir, &result)?
        .iter()
        .filter_map(|p| p.file_name().and_then(|n| n.to_str()).map(str::to_string))
        .collect();
    names.push("sweep_plan.json".into());
    names.extend((0..result.points.len()).map(|i| format!("points/point-{i:04}.json")));
    super::report::render_sweep(&out_dir)?;
    let manifest = serde_json::json!({
        "tool": "tether-risk",
        "version": tether_risk::VERSION,
        "kind": "sweep",
        "scenario": result.scenario,
        "scenario_hash": result.scenario_hash,
        "seed": result.seed,
        "histories": result.histories,
        "command": command_line(),
        "files": tether_risk::report::folder::list_files(&out_dir, &names),
    });
    write_atomic(
        &out_dir.join("manifest.json"),
        (serde_json::to_string_pretty(&manifest)? + "\n").as_bytes(),
    )
    .map_err(io)?;
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

//! `tether-risk sensitivity FILE`: which uncertain input decides the loss probability?

use std::path::PathBuf;

use tether_risk::report::sensitivity::{sensitivity_csv, sensitivity_text, write_sensitivity};
use tether_risk::scenario::{self, FluxModelSpec};
use tether_risk::sweep::sensitivity::{run_sensitivity, SensitivitySettings, INPUTS};

use super::output::{print, InputError};
use super::run_args::RunArgs;
use super::sweep::{read_base, sweep_err};
use super::Format;

/// Arguments of `sensitivity`.
#[derive(clap::Args, Debug, Clone)]
#[command(allow_negative_numbers = true)]
#[command(
    after_help = "Examples:\n  tether-risk sensitivity demo --histories 20000\n  tether-risk sensitivity my-tether.json --format json > sensitivity.json\n  tether-risk sensitivity my-tether.json --out out/demo/sensitivity   # then: tether-risk report out/demo\n\nEach uncertain input (flux scale factor, particle density, hole factor, oblique hole\nfootprint, notch model, load-sharing rule, climber load, detection delay, climber speeds, resupply interval) is set to the low and the\nhigh end of its documented range, one at a time, with the same seed and histories for every\nrun (common random numbers). The table is sorted by swing |P(high) - P(low)|; each range names\nits source or is marked as an engineering assumption; swings with an unresolved end are\nlabelled. Writes sensitivity.json, .csv, .md and the swing chart sensitivity.png/.svg. Put the\nfolder as sensitivity/ inside a run folder and `tether-risk report` adds the section \"Which\nassumption decides the answer?\"."
)]
pub struct Args {
    /// Base scenario file (JSON); `-` reads standard input; `demo` is the built-in scenario.
    pub file: String,
    /// Histories, seed, threads, sampler, rare-event factor, target error of every run (see
    /// `simulate --help`).
    #[command(flatten)]
    pub run: RunArgs,
    /// Skip the fast damage-memory estimate of each variant.
    #[arg(long)]
    pub no_fast_estimate: bool,
    /// Output folder (default: out/<scenario name>-sensitivity).
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Replace results already in the output folder.
    #[arg(long)]
    pub force: bool,
    /// Output format on stdout.
    #[arg(long, value_enum, default_value_t)]
    pub format: Format,
}

pub fn run(a: Args) -> anyhow::Result<()> {
    // Ctrl-C or SIGTERM stops the current run within a second (the runs are not resumable).
    let stop = super::interrupt::flag();
    let (text, dir) = read_base(&a.file)?;
    let base_spec = scenario::parse_spec(&text)?;
    let flux_table_json = match &base_spec.environment.flux_model {
        FluxModelSpec::Table { table_file } => {
            let p = dir.join(table_file);
            Some(
                scenario::read_text_capped(&p, scenario::MAX_INPUT_BYTES, "a flux table").map_err(
                    |e| {
                        InputError(format!(
                            "environment.flux_model.table_file: cannot read {}: {e}",
                            p.display()
                        ))
                    },
                )?,
            )
        }
        FluxModelSpec::Builtin(_) => None,
    };
    // The run settings are checked before the folder is touched.
    a.run
        .choices()
        .resolve(base_spec.run.histories, base_spec.run.seed)
        .map_err(super::simulate::settings_err)?;
    let base: serde_json::Value = serde_json::from_str(&text)?;
    let out_dir = a.out.clone().unwrap_or_else(|| {
        PathBuf::from("out").join(format!(
            "{}-sensitivity",
            tether_risk::report::file_stem(&base_spec.name, "run")
        ))
    });
    if out_dir.join("sensitivity.json").exists() && !a.force {
        return Err(InputError(format!(
            "{} already holds sensitivity results (sensitivity.json); choose another --out or pass --force to replace them",
            out_dir.display()
        ))
        .into());
    }
    let settings = SensitivitySettings {
        run: a.run.choices(),
        fast_estimate: !a.no_fast_estimate,
        flux_table_json,
    };
    // One writer per folder, as for every command that writes one.
    let _lock = super::output::lock_folder(&out_dir)?;
    let done = std::sync::atomic::AtomicUsize::new(0);
    let progress = |what: &str| {
        done.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
        eprintln!("run done: {what}");
    };
    let result = match run_sensitivity(&base, INPUTS, &settings, &progress) {
        Ok(r) => r,
        Err(_) if stop.load(std::sync::atomic::Ordering::SeqCst) => {
            return Err(super::interrupt::Stopped(format!(
                "sensitivity stopped after {} finished runs; nothing was written to {} (a study is not resumable: run it again, perhaps with fewer --histories)",
                done.load(std::sync::atomic::Ordering::Relaxed),
                out_dir.display()
            ))
            .into())
        }
        Err(e) => return Err(sweep_err(e)),
    };
    write_sensitivity(&out_dir, &result)
        .map_err(|e| anyhow::anyhow!("cannot write results to {}: {e}", out_dir.display()))?;
    match a.format {
        Format::Json => print(&(serde_json::to_string_pretty(&result)? + "\n")),
        Format::Csv => print(&sensitivity_csv(&result)),
        Format::Text => print(&format!(
            "{}\nResults written to {}\n",
            sensitivity_text(&result),
            out_dir.display()
        )),
    }
}

//! `tether-risk report DIR`: re-render the failure tables, charts and report.html of a saved
//! run folder (or the report of a sweep folder), without simulating.

use std::path::{Path, PathBuf};

use tether_risk::report::assemble::{
    write_report_with, write_sweep_report, Completeness, ReportError, ReportWritten,
};

use super::output::{lock_folder, print, InputError};

/// Arguments of `report`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Examples:\n  tether-risk report out/demo\n  tether-risk simulate my-tether.json --out out/run7 && tether-risk report out/run7\n  tether-risk sweep demo --vary tether.ribbon_count=4,6 --out out/s && tether-risk report out/s\n\nReads summary.json (required) and, when present, manifest.json, scenario.json, design.json,\nestimate.json and sweep/sweep.json. Writes failure_tables.md, failure_by_year.csv,\nfailure_by_band.csv, failure_by_cause.csv, markov_vs_monte_carlo.csv, plots/*.png,\nplots/*.svg and report.html into the same folder, each file atomically. Missing optional\nfiles leave their sections out with a note. A folder without a manifest (a run that did\nnot finish writing) is reported with a warning; one whose files disagree with its manifest\nor with each other's scenario hash is refused. A sweep folder (sweep.json, no summary.json)\ngets its report.html."
)]
pub struct Args {
    /// Run folder written by `simulate`, `merge` or `demo`, or a folder written by `sweep`.
    dir: PathBuf,
}

fn map(e: ReportError) -> anyhow::Error {
    if e.is_input_error() {
        anyhow::Error::new(InputError(e.to_string()))
    } else {
        anyhow::Error::new(e)
    }
}

/// Write the report of a finished folder, turning input problems into exit code 2.
pub fn render(dir: &Path) -> anyhow::Result<ReportWritten> {
    write_report_with(dir, Completeness::Check).map_err(map)
}

/// Write the report of a run folder that the caller is writing now (its manifest comes after).
pub fn render_run(dir: &Path) -> anyhow::Result<ReportWritten> {
    write_report_with(dir, Completeness::Writing).map_err(map)
}

/// Write the report of a sweep folder.
pub fn render_sweep(dir: &Path) -> anyhow::Result<ReportWritten> {
    write_sweep_report(dir).map_err(map)
}

pub fn run(a: Args) -> anyhow::Result<()> {
    if !a.dir.is_dir() {
        return Err(InputError(format!(
            "{} is not a folder: give the folder `tether-risk simulate --out` or `tether-risk demo` wrote",
            a.dir.display()
        ))
        .into());
    }
    let _lock = lock_folder(&a.dir)?;
    let sweep_only = !a.dir.join("summary.json").exists() && a.dir.join("sweep.json").exists();
    let w = if sweep_only {
        render_sweep(&a.dir)?
    } else {
        render(&a.dir)?
    };
    let mut o = format!("Wrote {} files into {}/\n", w.files.len(), a.dir.display());
    for n in &w.notes {
        o.push_str(&format!("  note: {n}\n"));
    }
    o.push_str(&format!("Report: {}\n", w.html.display()));
    print(&o)?;
    if let Some(first) = w.notes.first().filter(|n| n.starts_with("Warning:")) {
        eprintln!("warning: {} is incomplete: {first}", a.dir.display());
    }
    Ok(())
}

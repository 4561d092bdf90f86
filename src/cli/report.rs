//! `tether-risk report DIR`: re-render the failure tables, charts and report.html of a saved
//! run folder, without simulating.

use std::path::PathBuf;

use tether_risk::report::assemble::{write_report, ReportError, ReportWritten};

use super::output::{print, InputError};

/// Arguments of `report`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Examples:\n  tether-risk report out/demo\n  tether-risk simulate my-tether.json --out out/run7 && tether-risk report out/run7\n\nReads summary.json (required) and, when present, manifest.json, scenario.json, design.json,\nestimate.json and sweep/sweep.json. Writes failure_tables.md, failure_by_year.csv,\nfailure_by_band.csv, failure_by_cause.csv, markov_vs_monte_carlo.csv, plots/*.png,\nplots/*.svg and report.html into the same folder, each file atomically. Missing optional\nfiles leave their sections out with a note."
)]
pub struct Args {
    /// Run folder written by `simulate` or `demo`.
    dir: PathBuf,
}

/// Write the report of `dir`, turning input problems into exit code 2.
pub fn render(dir: &std::path::Path) -> anyhow::Result<ReportWritten> {
    write_report(dir).map_err(|e: ReportError| {
        if e.is_input_error() {
            anyhow::Error::new(InputError(e.to_string()))
        } else {
            anyhow::Error::new(e)
        }
    })
}

pub fn run(a: Args) -> anyhow::Result<()> {
    let w = render(&a.dir)?;
    let mut o = format!("Wrote {} files into {}/\n", w.files.len(), a.dir.display());
    for n in &w.notes {
        o.push_str(&format!("  note: {n}\n"));
    }
    o.push_str(&format!("Report: {}\n", w.html.display()));
    print(&o)
}

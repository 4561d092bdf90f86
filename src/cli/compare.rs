//! `tether-risk compare DIR1 DIR2 [...]`: finished run folders side by side, the first as the
//! baseline; writes compare.html/.json/.csv/.md and the overlaid survival chart into `--out`.

use std::path::PathBuf;

use tether_risk::report::compare::{difference_table, key_table, write_comparison};

use super::output::{lock_folder, print, InputError};
use super::Format;

/// Arguments of `compare`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Examples:\n  tether-risk simulate a.json --out out/a && tether-risk simulate b.json --out out/b\n  tether-risk compare out/a out/b               # writes out/compare/compare.html\n  tether-risk compare out/a out/b out/c --out out/abc --format json\n\nThe first folder is the baseline; every other design's loss probability is compared with it\n(difference with its interval: Newcombe's hybrid score interval for two plain runs, a normal\ninterval from the standard errors for two weighted runs; \"not resolved\" when either side has\nno usable interval). Only finished folders (with manifest.json) are compared. Writes\ncompare.json, compare.csv, compare.md, survival.png, survival.svg and compare.html into\n--out, each atomically."
)]
pub struct Args {
    /// Run folders written by `simulate`, `merge` or `demo` (2 to 12); the first is the baseline.
    #[arg(required = true, num_args = 2..)]
    dirs: Vec<PathBuf>,
    /// Output folder.
    #[arg(long, default_value = "out/compare")]
    out: PathBuf,
    /// What to print on stdout: the tables as text, the comparison as JSON, or the
    /// one-row-per-design table as CSV.
    #[arg(long, value_enum, default_value_t)]
    format: Format,
}

pub fn run(a: Args) -> anyhow::Result<()> {
    for d in &a.dirs {
        if !d.is_dir() {
            return Err(InputError(format!(
                "{} is not a folder: give run folders written by `tether-risk simulate --out` or `tether-risk demo`",
                d.display()
            ))
            .into());
        }
    }
    let _lock = lock_folder(&a.out)?;
    let w = write_comparison(&a.dirs, &a.out).map_err(|e| {
        if e.is_input_error() {
            anyhow::Error::new(InputError(e.to_string()))
        } else {
            anyhow::Error::new(e)
        }
    })?;
    let c = &w.comparison;
    let text = match a.format {
        Format::Json => serde_json::to_string_pretty(c)? + "\n",
        Format::Csv => tether_risk::report::compare::csv_table(c).to_csv(),
        Format::Text => {
            let mut o = format!("Key figures (baseline: {})\n", c.designs[0].label);
            o.push_str(&key_table(c).to_text());
            o.push_str("\nDifference of loss probabilities from the baseline\n");
            o.push_str(&difference_table(c).to_text());
            o.push('\n');
            for d in &c.differences {
                o.push_str(&format!("{}: {}\n", d.design, d.verdict));
            }
            for n in &c.notes {
                o.push_str(&format!("note: {n}\n"));
            }
            o.push_str(&format!("\n{}\n\n", c.caution));
            o.push_str(&format!(
                "Wrote {} files into {}/\nReport: {}\n",
                w.files.len(),
                a.out.display(),
                a.out.join("compare.html").display()
            ));
            o
        }
    };
    print(&text)
}

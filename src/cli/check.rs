//! `tether-risk check FILE`: validate and print derived design quantities.

use tether_risk::report::design::DesignSummary;

use super::output::{load_model, print};
use super::Format;

/// Arguments of `check`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Examples:\n  tether-risk check my-tether.json\n  tether-risk check demo --format json\n  cat my-tether.json | tether-risk check -\n\nExit code 0: valid; 2: invalid (the reason is printed on stderr)."
)]
pub struct Args {
    /// Scenario file (JSON); `-` reads standard input; `demo` is the built-in scenario.
    file: String,
    /// Output format.
    #[arg(long, value_enum, default_value_t)]
    format: Format,
}

pub fn run(a: Args) -> anyhow::Result<()> {
    let model = load_model(&a.file)?;
    let s = DesignSummary::from_model(&model);
    match a.format {
        Format::Json => print(&(serde_json::to_string_pretty(&s)? + "\n")),
        Format::Text | Format::Csv => print(&s.to_text()),
    }
}

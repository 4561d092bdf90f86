//! `tether-risk profile FILE`: one row per bay.

use tether_risk::report::design::ProfileSummary;

use super::output::{load_model, print};
use super::Format;

/// Arguments of `profile`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Examples:\n  tether-risk profile demo | head -20\n  tether-risk profile my-tether.json --format csv > bays.csv"
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
    let p = ProfileSummary::from_model(&model);
    match a.format {
        Format::Json => print(&(serde_json::to_string_pretty(&p)? + "\n")),
        Format::Csv => print(&p.table().to_csv()),
        Format::Text => print(&format!(
            "Tether profile: scenario \"{}\" (hash {}), {} bays, {} km\n\n{}",
            p.scenario,
            p.scenario_hash,
            p.bay_count,
            p.tether_length_km,
            p.table().to_text()
        )),
    }
}

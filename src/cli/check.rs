//! `tether-risk check FILE`: validate and print derived design quantities.

use tether_risk::model::warnings::design_warnings;
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
    let warnings = design_warnings(&model);
    match a.format {
        Format::Json => {
            // The design summary plus `warnings`: a list of {code, message}, one stable code
            // per kind (see tether_risk::model::warnings).
            let mut v = serde_json::to_value(&s)?;
            if let Some(obj) = v.as_object_mut() {
                obj.insert("warnings".into(), serde_json::to_value(&warnings)?);
            }
            print(&(serde_json::to_string_pretty(&v)? + "\n"))
        }
        Format::Text | Format::Csv => {
            let mut text = s.to_text();
            if !warnings.is_empty() {
                text.push_str("\nWarnings\n");
                for w in &warnings {
                    text.push_str(&format!("- [{}] {}\n", w.code, w.message));
                }
            }
            print(&text)
        }
    }
}

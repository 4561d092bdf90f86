//! `tether-risk estimate FILE`: the fast Markov estimate of the loss probability by year.

use tether_risk::model::markov::{mission_times_s, MarkovModel};
use tether_risk::report::estimate::EstimateSummary;

use super::output::{load_model, print};
use super::Format;

/// Arguments of `estimate`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Examples:\n  tether-risk estimate demo\n  tether-risk estimate my-tether.json --format json\n  tether-risk estimate my-tether.json --format csv > loss_by_year.csv\n\nTwo fast estimates side by side. Damage-memory: each segment keeps its worst hole, and a bay\nis lost when the order statistics of the worst holes beat the critical widths as ribbons are\nlost (exact without repair; an approximation with repair). Memoryless: each bay is a Markov\nchain over its number of cut segments that forgets sub-critical holes. Bays are combined as\nindependent. Both sets of assumptions are printed with the result, with the dominant mechanism\nand a warning when the two disagree. Writes no files."
)]
pub struct Args {
    /// Scenario file (JSON); `-` reads standard input; `demo` is the built-in scenario.
    file: String,
    /// Output format (csv: the loss probability by year only).
    #[arg(long, value_enum, default_value_t)]
    format: Format,
}

pub fn run(a: Args) -> anyhow::Result<()> {
    let model = load_model(&a.file)?;
    let markov = MarkovModel::build(&model)?;
    let estimate = markov.solve(&mission_times_s(&model.scenario.run))?;
    let times = mission_times_s(&model.scenario.run);
    let dm = tether_risk::model::damage_memory::solve(&model, &times);
    let s =
        EstimateSummary::new(&model, &markov, &estimate).with_damage_memory(&model, dm.as_ref());
    match a.format {
        Format::Json => print(&(serde_json::to_string_pretty(&s)? + "\n")),
        Format::Csv => print(&s.year_table().to_csv()),
        Format::Text => print(&s.to_text()),
    }
}

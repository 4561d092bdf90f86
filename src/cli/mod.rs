//! Command-line interface: clap definitions, one file per subcommand. The only code that prints.

mod check;
mod compare;
mod demo;
mod env;
mod estimate;
mod init;
mod interrupt;
mod merge;
mod output;
mod profile;
mod report;
mod run_args;
mod sensitivity;
mod simulate;
mod sweep;

use clap::{Parser, Subcommand};

pub use output::report_error;

/// Micrometeoroid severance risk for multi-ribbon space tethers.
#[derive(Parser, Debug)]
#[command(name = "tether-risk", version, about, long_about = None, after_help = "Results are engineering estimates for trade studies; they do not replace qualified review, the applicable space-engineering standards, or licensed practice.")]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Run the whole chain on the built-in demo scenario into out/demo/.
    Demo(demo::Args),
    /// Write the built-in demo scenario to FILE for editing.
    Init(init::Args),
    /// Validate a scenario and print the derived design quantities.
    Check(check::Args),
    /// Tabulate the meteoroid environment (flux, shielding, focusing) at chosen altitudes.
    Env(env::Args),
    /// Print per-bay tension, margin, strike rate and critical hole widths.
    Profile(profile::Args),
    /// Run the Monte Carlo: loss probability, survival by year, cuts by altitude.
    Simulate(simulate::Args),
    /// Join shard results (simulate --shard I/N) into the result of the whole run.
    Merge(merge::Args),
    /// Fast estimates by year: damage-memory (order statistics of holes) beside the memoryless Markov chain
    Estimate(estimate::Args),
    /// Trade study: run a grid of designs with common random numbers
    Sweep(sweep::Args),
    /// Designs side by side: key figures, difference of loss probabilities, survival curves
    Compare(compare::Args),
    /// Re-render tables, plots and report.html from a saved run folder
    Report(report::Args),
    /// Which uncertain input decides the answer: one-at-a-time low/high runs, sorted by swing
    Sensitivity(sensitivity::Args),
}

/// Machine-readable or human output.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Format {
    /// Aligned text for a terminal.
    #[default]
    Text,
    /// JSON.
    Json,
    /// CSV (tables only).
    Csv,
}

/// Parse the command line and run the chosen command.
pub fn run() -> anyhow::Result<()> {
    let cli = Cli::parse();
    match cli.command {
        Command::Demo(a) => demo::run(a),
        Command::Init(a) => init::run(a),
        Command::Check(a) => check::run(a),
        Command::Env(a) => env::run(a),
        Command::Profile(a) => profile::run(a),
        Command::Simulate(a) => simulate::run(a),
        Command::Merge(a) => merge::run(a),
        Command::Estimate(a) => estimate::run(a),
        Command::Sweep(a) => sweep::run(a),
        Command::Compare(a) => compare::run(a),
        Command::Report(a) => report::run(a),
        Command::Sensitivity(a) => sensitivity::run(a),
    }
}

//! The run options shared by `simulate`, `sweep` and `sensitivity`, declared once and
//! flattened into each command. Ranges are checked by the library
//! ([`tether_risk::engine::RunChoices::resolve`]), not here.

use tether_risk::engine::{RunChoices, Sampler, DEFAULT_STOCKOUT_TARGET};

/// Histories, seed, threads, sampler and estimators of a run (or of every run of a study).
#[derive(clap::Args, Debug, Clone)]
pub struct RunArgs {
    /// Histories per run (default: the scenario's run.histories); 1e3, 20k and 2e4 are
    /// accepted.
    #[arg(long, value_parser = super::output::parse_count, allow_hyphen_values = true)]
    pub histories: Option<u64>,
    /// Master seed (default: the scenario's run.seed). A study uses it for every run.
    #[arg(long, allow_hyphen_values = true)]
    pub seed: Option<u64>,
    /// Worker threads; 0 means one per core. Results do not depend on it.
    #[arg(long, default_value_t = 0, allow_hyphen_values = true)]
    pub threads: usize,
    /// Rare-event estimator: multiply strike (cut) rates on bays that already have a cut by
    /// FACTOR and weight histories by their likelihood ratio. For loss probabilities far below
    /// 1/histories. Typical factors 10 to 1000; check the effective sample size it reports.
    #[arg(long, value_name = "FACTOR", allow_hyphen_values = true)]
    pub rare_event: Option<f64>,
    /// Conditional Monte Carlo at cuts (equal load sharing): at each cut the history scores the
    /// exact probability that the cascade through the bay's old sub-critical holes severs the
    /// bay, and goes on conditioned on the bay surviving. For loss probabilities far below
    /// 1/histories that come from latent damage; unbiased, reported as a weighted estimate
    /// with its effective sample size. Replaces --rare-event.
    #[arg(long)]
    pub condition_cascades: bool,
    /// Stop at a batch boundary once the loss probability's relative standard error is at most
    /// this (deterministic given the seed); the history count is then a ceiling.
    #[arg(long, value_name = "X", allow_hyphen_values = true)]
    pub target_rel_error: Option<f64>,
    /// Damage sampler: `on-demand` draws only cuts and, at each state change of a bay, its
    /// segments' worst holes (fast, the default); `every-strike` draws every strike above the
    /// floor (the reference engine; slow for low floors and many ribbons). Same results in
    /// distribution, not in bits.
    #[arg(long, value_enum, default_value_t = SamplerArg::OnDemand)]
    pub sampler: SamplerArg,
}

impl RunArgs {
    /// The library's choices for these options (the rest at their defaults).
    pub fn choices(&self) -> RunChoices {
        RunChoices {
            histories: self.histories,
            seed: self.seed,
            threads: self.threads,
            rare_event: self.rare_event.unwrap_or(1.0),
            condition_cascades: self.condition_cascades,
            target_rel_error: self.target_rel_error,
            sampler: self.sampler.into(),
            ..RunChoices::default()
        }
    }
}

/// The stock-out target, for commands that report a recommended initial stock.
#[derive(clap::Args, Debug, Clone)]
pub struct StockoutArg {
    /// Largest acceptable stock-out probability per station, for the recommended initial stock.
    #[arg(long, default_value_t = DEFAULT_STOCKOUT_TARGET, allow_hyphen_values = true)]
    pub stockout_target: f64,
}

/// The damage sampler on the command line.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum SamplerArg {
    /// Draw cut events and worst holes at state changes (default).
    #[default]
    OnDemand,
    /// Draw every strike above the floor (reference).
    EveryStrike,
}

impl From<SamplerArg> for Sampler {
    fn from(a: SamplerArg) -> Self {
        match a {
            SamplerArg::OnDemand => Sampler::OnDemand,
            SamplerArg::EveryStrike => Sampler::EveryStrike,
        }
    }
}

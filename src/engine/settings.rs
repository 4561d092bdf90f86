//! Run settings: what a run needs besides the scenario (histories, seed, sampler, estimators,
//! shard, stopping rule), their allowed ranges and one validation.
//!
//! Every way into a run goes through here: the command line (`simulate`, `sweep`,
//! `sensitivity`, `demo`), a sweep plan, and `settings.json` / `checkpoint.json` read back
//! from a run folder. [`RunChoices`] is what a user gave (counts and seed may be left to the
//! scenario); [`RunChoices::resolve`] turns it into checked [`RunSettings`], the form saved as
//! `settings.json`. A range lives once, in [`RunField`]; the engine's own constructors
//! ([`super::Engine::with_sampler`], [`super::Engine::with_rare_event`],
//! [`super::Engine::with_latent_bias`]) check with the same function.

use serde::{Deserialize, Serialize};
use thiserror::Error;

use super::{RunOptions, Sampler};

/// Largest number of histories a run may ask for.
pub const MAX_HISTORIES: u64 = 1_000_000_000_000;
/// Largest worker-thread count accepted.
pub const MAX_THREADS: usize = 1024;
/// Largest shard count accepted.
pub const MAX_SHARDS: u64 = 1_000_000_000;
/// Default largest acceptable stock-out probability per station, for the recommended initial
/// stock. A stated engineering choice (a 95 % service level is common practice), not a
/// standard.
pub const DEFAULT_STOCKOUT_TARGET: f64 = 0.05;

/// One run setting, for range checks and messages.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RunField {
    /// Number of histories.
    Histories,
    /// Worker threads.
    Threads,
    /// Shard I of N.
    Shard,
    /// Sampling floor as a fraction of the smallest severing hole.
    FloorFraction,
    /// Rare-event factor.
    RareEvent,
    /// Latent-damage bias probability.
    LatentBias,
    /// Relative standard error at which a run stops.
    TargetRelError,
    /// Stock-out target of the recommended initial stock.
    StockoutTarget,
}

impl RunField {
    /// The field's name in `settings.json`.
    pub fn key(self) -> &'static str {
        match self {
            RunField::Histories => "histories",
            RunField::Threads => "threads",
            RunField::Shard => "shard",
            RunField::FloorFraction => "floor_fraction",
            RunField::RareEvent => "rare_event",
            RunField::LatentBias => "latent_bias",
            RunField::TargetRelError => "target_rel_error",
            RunField::StockoutTarget => "stockout_target",
        }
    }

    /// The command-line option that sets it.
    pub fn option(self) -> &'static str {
        match self {
            RunField::Histories => "--histories",
            RunField::Threads => "--threads",
            RunField::Shard => "--shard",
            RunField::FloorFraction => "--floor-fraction",
            RunField::RareEvent => "--rare-event",
            RunField::LatentBias => "--latent-bias",
            RunField::TargetRelError => "--target-rel-error",
            RunField::StockoutTarget => "--stockout-target",
        }
    }

    /// The allowed range as text.
    pub fn allowed(self) -> &'static str {
        match self {
            RunField::Histories => "[1, 1e12]",
            RunField::Threads => "[0, 1024]",
            RunField::Shard => "I/N with 0 <= I < N <= 1e9",
            RunField::FloorFraction => "(0, 1]",
            RunField::RareEvent => "[1, 1e6]",
            RunField::LatentBias => "[0, 0.95]",
            RunField::TargetRelError | RunField::StockoutTarget => "(0, 1)",
        }
    }

    /// What the value is (its unit or meaning).
    pub fn what(self) -> &'static str {
        match self {
            RunField::Histories => "histories",
            RunField::Threads => "threads; 0: one per core",
            RunField::Shard => "0-based shard of the run's batches",
            RunField::FloorFraction => "fraction of the smallest severing hole",
            RunField::RareEvent => "rare-event factor, dimensionless",
            RunField::LatentBias => "probability of the biased component",
            RunField::TargetRelError => "relative standard error",
            RunField::StockoutTarget => "probability",
        }
    }

    /// Check a real-valued setting against its range (NaN is never in range).
    ///
    /// # Errors
    /// [`RunSettingsError::OutOfRange`] naming the field; a count field is always refused here.
    pub fn check(self, x: f64) -> Result<(), RunSettingsError> {
        let ok = match self {
            RunField::FloorFraction => x > 0.0 && x <= 1.0,
            RunField::RareEvent => (1.0..=1e6).contains(&x),
            RunField::LatentBias => (0.0..=0.95).contains(&x),
            RunField::TargetRelError | RunField::StockoutTarget => x > 0.0 && x < 1.0,
            RunField::Histories | RunField::Threads | RunField::Shard => false,
        };
        if ok {
            Ok(())
        } else {
            Err(self.out_of_range(x))
        }
    }

    fn out_of_range(self, value: impl std::fmt::Display) -> RunSettingsError {
        RunSettingsError::OutOfRange {
            field: self,
            value: value.to_string(),
        }
    }
}

/// Why run settings were refused. The message names the command-line option;
/// [`RunSettingsError::in_file`] names the field as `settings.json` spells it.
#[derive(Clone, Debug, PartialEq, Eq, Error)]
pub enum RunSettingsError {
    /// A value outside its allowed range.
    #[error("{} = {value} is out of range: allowed {} ({})", field.option(), field.allowed(), field.what())]
    OutOfRange {
        /// Which setting.
        field: RunField,
        /// The value as given.
        value: String,
    },
    /// A shard that is not of the form I/N.
    #[error("--shard = {text} is not valid: use I/N with 0 <= I < N <= 1e9, for example 0/3")]
    BadShard {
        /// The text as given.
        text: String,
    },
    /// A stopping rule on a shard (a shard cannot see the other shards' error).
    #[error("--target-rel-error cannot be combined with --shard: a shard cannot see the other shards' error")]
    TargetWithShard,
    /// A setting the command does not support (for example a shard of a sweep).
    #[error("{} is not available for {command}", field.option())]
    Unsupported {
        /// Which setting.
        field: RunField,
        /// The command or study that refuses it.
        command: &'static str,
    },
}

impl RunSettingsError {
    /// The setting concerned.
    pub fn field(&self) -> RunField {
        match self {
            RunSettingsError::OutOfRange { field, .. }
            | RunSettingsError::Unsupported { field, .. } => *field,
            RunSettingsError::BadShard { .. } => RunField::Shard,
            RunSettingsError::TargetWithShard => RunField::TargetRelError,
        }
    }

    /// The message with the field named as in `settings.json` (for files read back).
    pub fn in_file(&self) -> String {
        match self {
            RunSettingsError::OutOfRange { field, value } => format!(
                "{} = {value} is out of range: allowed {} ({})",
                field.key(),
                field.allowed(),
                field.what()
            ),
            RunSettingsError::TargetWithShard => {
                "target_rel_error is set on a shard (a shard cannot see the other shards' error)"
                    .into()
            }
            other => other.to_string(),
        }
    }
}

/// Check a worker-thread count.
///
/// # Errors
/// [`RunSettingsError::OutOfRange`] above [`MAX_THREADS`].
pub fn check_threads(threads: usize) -> Result<(), RunSettingsError> {
    if threads > MAX_THREADS {
        return Err(RunField::Threads.out_of_range(threads));
    }
    Ok(())
}

/// Parse `I/N` (0-based shard I of N).
///
/// # Errors
/// [`RunSettingsError::BadShard`] for anything but two whole numbers with 0 <= I < N,
/// [`RunSettingsError::OutOfRange`] above [`MAX_SHARDS`] shards.
pub fn parse_shard(s: &str) -> Result<(u64, u64), RunSettingsError> {
    let bad = || RunSettingsError::BadShard {
        text: s.to_string(),
    };
    let (i, n) = s.split_once('/').ok_or_else(bad)?;
    let i: u64 = i.trim().parse().map_err(|_| bad())?;
    let n: u64 = n.trim().parse().map_err(|_| bad())?;
    if n == 0 || i >= n {
        return Err(bad());
    }
    if n > MAX_SHARDS {
        return Err(RunField::Shard.out_of_range(s));
    }
    Ok((i, n))
}

/// Everything needed to redo or continue a run besides the scenario; saved as `settings.json`
/// beside its results (the thread count is not part of it: it never changes the results).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RunSettings {
    /// Histories requested.
    pub histories: u64,
    /// Master seed.
    pub seed: u64,
    /// Shard, if any.
    pub shard: Option<(u64, u64)>,
    /// Sampling floor fraction.
    pub floor_fraction: f64,
    /// Rare-event factor (1: plain).
    pub rare_event: f64,
    /// Latent-damage bias probability (0: off; absent in folders written before it).
    #[serde(default)]
    pub latent_bias: f64,
    /// Conditional Monte Carlo at cuts (`--condition-cascades`; absent in older folders: off).
    #[serde(default)]
    pub condition_cascades: bool,
    /// Target relative error.
    pub target_rel_error: Option<f64>,
    /// Stock-out target.
    pub stockout_target: f64,
    /// Damage sampler (absent in folders written before the on-demand sampler: every-strike).
    #[serde(default = "every_strike")]
    pub sampler: Sampler,
}

fn every_strike() -> Sampler {
    Sampler::EveryStrike
}

impl RunSettings {
    /// Check every field against its range, and the combination of shard and stopping rule:
    /// the one validation of run settings, for the command line and for files read back.
    ///
    /// # Errors
    /// The first setting out of range.
    pub fn validate(&self) -> Result<(), RunSettingsError> {
        if !(1..=MAX_HISTORIES).contains(&self.histories) {
            return Err(RunField::Histories.out_of_range(self.histories));
        }
        if let Some((i, n)) = self.shard {
            if n == 0 || i >= n || n > MAX_SHARDS {
                return Err(RunField::Shard.out_of_range(format!("[{i}, {n}]")));
            }
        }
        RunField::FloorFraction.check(self.floor_fraction)?;
        RunField::RareEvent.check(self.rare_event)?;
        RunField::LatentBias.check(self.latent_bias)?;
        RunField::StockoutTarget.check(self.stockout_target)?;
        if let Some(t) = self.target_rel_error {
            RunField::TargetRelError.check(t)?;
            if self.shard.is_some() {
                return Err(RunSettingsError::TargetWithShard);
            }
        }
        Ok(())
    }

    /// The engine's options for these settings on `threads` worker threads.
    pub fn options(&self, threads: usize) -> RunOptions {
        RunOptions {
            histories: self.histories,
            seed: self.seed,
            threads,
            floor_fraction: self.floor_fraction,
            shard: self.shard,
            target_rel_error: self.target_rel_error,
        }
    }

    /// True when histories carry likelihood-ratio weights.
    pub fn is_weighted(&self) -> bool {
        self.rare_event > 1.0 || self.latent_bias > 0.0 || self.condition_cascades
    }
}

/// Run settings as a user gives them: the number of histories and the seed may be left to the
/// scenario's `run` section. The defaults are plain Monte Carlo with the on-demand sampler.
#[derive(Clone, Debug, PartialEq)]
pub struct RunChoices {
    /// Histories (None: the scenario's `run.histories`).
    pub histories: Option<u64>,
    /// Master seed (None: the scenario's `run.seed`).
    pub seed: Option<u64>,
    /// Worker threads; 0 means one per core. Never changes the results.
    pub threads: usize,
    /// Sampling floor as a fraction of the smallest severing hole.
    pub floor_fraction: f64,
    /// Rare-event factor (1: plain).
    pub rare_event: f64,
    /// Latent-damage bias probability (0: off).
    pub latent_bias: f64,
    /// Conditional Monte Carlo at cuts.
    pub condition_cascades: bool,
    /// Shard I of N, if any.
    pub shard: Option<(u64, u64)>,
    /// Stop once the loss probability's relative standard error is at most this.
    pub target_rel_error: Option<f64>,
    /// Stock-out target of the recommended initial stock.
    pub stockout_target: f64,
    /// Damage sampler.
    pub sampler: Sampler,
}

impl Default for RunChoices {
    fn default() -> Self {
        RunChoices {
            histories: None,
            seed: None,
            threads: 0,
            floor_fraction: 1.0,
            rare_event: 1.0,
            latent_bias: 0.0,
            condition_cascades: false,
            shard: None,
            target_rel_error: None,
            stockout_target: DEFAULT_STOCKOUT_TARGET,
            sampler: Sampler::OnDemand,
        }
    }
}

impl RunChoices {
    /// Fill in the scenario's defaults and check everything (the thread count too).
    ///
    /// # Errors
    /// The first setting out of range.
    pub fn resolve(
        &self,
        scenario_histories: u64,
        scenario_seed: u64,
    ) -> Result<RunSettings, RunSettingsError> {
        check_threads(self.threads)?;
        let s = RunSettings {
            histories: self.histories.unwrap_or(scenario_histories),
            seed: self.seed.unwrap_or(scenario_seed),
            shard: self.shard,
            floor_fraction: self.floor_fraction,
            rare_event: self.rare_event,
            latent_bias: self.latent_bias,
            condition_cascades: self.condition_cascades,
            target_rel_error: self.target_rel_error,
            stockout_target: self.stockout_target,
            sampler: self.sampler,
        };
        s.validate()?;
        Ok(s)
    }

    /// Refuse the settings a study of many runs (a sweep, a sensitivity study) does not
    /// support: shards and the latent-damage bias (its results record neither).
    ///
    /// # Errors
    /// [`RunSettingsError::Unsupported`].
    pub fn check_study(&self, command: &'static str) -> Result<(), RunSettingsError> {
        if self.shard.is_some() {
            return Err(RunSettingsError::Unsupported {
                field: RunField::Shard,
                command,
            });
        }
        if self.latent_bias != 0.0 {
            return Err(RunSettingsError::Unsupported {
                field: RunField::LatentBias,
                command,
            });
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn plain() -> RunSettings {
        RunChoices::default().resolve(1000, 7).unwrap()
    }

    /// Ranges as documented in `simulate --help` (project conventions, no external source):
    /// each bound is checked on both sides, and NaN is refused everywhere.
    #[test]
    fn every_field_is_checked_at_its_bounds() {
        assert!(plain().validate().is_ok());
        let cases: &[(RunField, f64, f64)] = &[
            (RunField::FloorFraction, 1.0, 0.0),
            (RunField::FloorFraction, 1e-9, 1.000_000_1),
            (RunField::RareEvent, 1.0, 0.999),
            (RunField::RareEvent, 1e6, 1.000_001e6),
            (RunField::LatentBias, 0.0, -1e-12),
            (RunField::LatentBias, 0.95, 0.950_001),
            (RunField::StockoutTarget, 1e-9, 0.0),
            (RunField::StockoutTarget, 0.999, 1.0),
            (RunField::TargetRelError, 0.5, 1.0),
        ];
        for &(field, good, bad) in cases {
            assert!(field.check(good).is_ok(), "{field:?} {good}");
            let e = field.check(bad).unwrap_err();
            assert_eq!(e.field(), field);
            assert!(e.to_string().starts_with(field.option()), "{e}");
            assert!(e.in_file().starts_with(field.key()), "{}", e.in_file());
            assert!(field.check(f64::NAN).is_err(), "{field:?} NaN");
        }
        let mut s = plain();
        s.histories = 0;
        assert_eq!(s.validate().unwrap_err().field(), RunField::Histories);
        s.histories = MAX_HISTORIES + 1;
        assert_eq!(s.validate().unwrap_err().field(), RunField::Histories);
        s.histories = MAX_HISTORIES;
        assert!(s.validate().is_ok());
        s.shard = Some((0, MAX_SHARDS + 1));
        assert!(s.validate().unwrap_err().in_file().starts_with("shard ="));
        s.shard = Some((1, 2));
        s.target_rel_error = Some(0.1);
        assert_eq!(s.validate(), Err(RunSettingsError::TargetWithShard));
        assert!(check_threads(MAX_THREADS).is_ok());
        assert!(check_threads(MAX_THREADS + 1).is_err());
    }

    #[test]
    fn shards_parse_only_as_i_of_n() {
        assert_eq!(parse_shard("0/3"), Ok((0, 3)));
        assert_eq!(parse_shard(" 2 / 3 "), Ok((2, 3)));
        for bad in ["3/3", "0/0", "a/b", "1/", "/3", "0/3/5", "0", "-1/3"] {
            assert!(
                matches!(parse_shard(bad), Err(RunSettingsError::BadShard { .. })),
                "{bad}"
            );
        }
        assert_eq!(
            parse_shard("0/1000000001").unwrap_err().field(),
            RunField::Shard
        );
    }

    #[test]
    fn choices_fall_back_to_the_scenario_and_studies_refuse_shards() {
        let s = plain();
        assert_eq!((s.histories, s.seed), (1000, 7));
        assert_eq!(s.stockout_target, DEFAULT_STOCKOUT_TARGET);
        assert!(!s.is_weighted());
        let c = RunChoices {
            shard: Some((0, 2)),
            ..Default::default()
        };
        assert!(c.check_study("sweep").is_err());
        assert!(RunChoices::default().check_study("sweep").is_ok());
        // The settings.json form: every field named as in older folders.
        let json = serde_json::to_value(&s).unwrap();
        for key in [
            "histories",
            "seed",
            "shard",
            "floor_fraction",
            "rare_event",
            "latent_bias",
            "target_rel_error",
            "stockout_target",
            "sampler",
        ] {
            assert!(json.get(key).is_some(), "{key}");
        }
    }
}

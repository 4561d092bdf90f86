//! Generic statistics: binomial, Poisson (Garwood), normal and Student-t intervals, moment
//! accumulators, importance-sampling (weighted) proportions, quantiles and means of counts,
//! the Pareto front of two minimised coordinates, the alias sampler, goodness-of-fit helpers
//! used by sampler tests elsewhere, and numbers to significant figures.
//!
//! This module knows nothing about tethers; it could be published as its own crate. Every
//! accumulator is a plain value with a `merge` so that batch results can be folded in batch
//! order (never with a parallel float reduction, whose last bits depend on scheduling).

mod alias;
mod binomial;
mod difference;
mod format;
mod gof;
mod moments;
mod pareto;
mod poisson;
mod quantile;
mod weighted;

pub use alias::AliasTable;
pub use binomial::clopper_pearson;
pub use difference::{mover, newcombe_hybrid, newcombe_paired, normal_difference, Difference};
pub use format::sig;
pub use gof::{chi_square_p_value, ks_p_value, ks_statistic};
pub use moments::{mean_var_from_sums, z_interval, MeanVar};
pub use pareto::pareto_front;
pub use poisson::poisson_interval;
pub use quantile::{count_mean, count_quantile};
pub use weighted::{
    normal_quantile, wilson, wilson_effective, Unresolved, WeightedProportion, MAX_WEIGHT_SHARE,
    MIN_EFFECTIVE_SAMPLE_SIZE,
};

/// Errors from the statistics module.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum StatsError {
    /// A confidence level outside the open interval (0, 1), or not finite.
    #[error("confidence level {0} is not in (0, 1)")]
    BadConfidence(f64),
    /// A probability outside [0, 1], or not finite.
    #[error("probability {0} is not in [0, 1]")]
    BadProbability(f64),
    /// More successes than trials, or zero trials.
    #[error("{successes} successes in {trials} trials is not a valid binomial count")]
    BadCount {
        /// Number of successes given.
        successes: u64,
        /// Number of trials given.
        trials: u64,
    },
    /// Not enough observations for the requested quantity.
    #[error("need at least {needed} observations, have {have}")]
    TooFewObservations {
        /// Minimum number of observations required.
        needed: u64,
        /// Number of observations available.
        have: u64,
    },
    /// A weight list that is empty, too long, contains a negative or non-finite entry, or sums to zero.
    #[error("invalid weights: {0}")]
    BadWeights(&'static str),
    /// Observed and expected arrays of different lengths, or an invalid expected count.
    #[error("invalid goodness-of-fit input: {0}")]
    BadGoodnessOfFitInput(&'static str),
    /// The requested quantile lies above the largest value counted.
    #[error("quantile lies above the largest counted value {max}")]
    QuantileInOverflow {
        /// Largest value that has its own count.
        max: u64,
    },
    /// A special-function evaluation failed to converge.
    #[error("special function did not converge: {0}")]
    NoConvergence(&'static str),
}

pub(crate) fn check_confidence(confidence: f64) -> Result<(), StatsError> {
    if confidence.is_finite() && confidence > 0.0 && confidence < 1.0 {
        Ok(())
    } else {
        Err(StatsError::BadConfidence(confidence))
    }
}

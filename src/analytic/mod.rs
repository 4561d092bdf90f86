//! Fast independent answers: continuous-time birth–death Markov chains for repairable
//! k-out-of-n systems (cuts versus repairs in one bay), used to check the Monte Carlo engine
//! and to give a quick estimate.
//!
//! This module owns [`BirthDeath`]: states `0..=m` counting failed units, state `m` absorbing
//! (system loss). It computes the absorption-time distribution by uniformization and the mean
//! time to absorption by the first-passage recursion.

mod birth_death;
pub mod cascade;
pub mod damage_memory;
pub mod estimate;

pub use birth_death::BirthDeath;

/// Errors from building an analytic model.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum AnalyticError {
    /// Birth and death rate vectors of different lengths, or empty.
    #[error("need equal, non-zero numbers of birth and death rates (got {births} and {deaths})")]
    BadLength {
        /// Number of birth rates given.
        births: usize,
        /// Number of death rates given.
        deaths: usize,
    },
    /// A rate that is negative or not finite, or a non-zero death rate out of state 0.
    #[error("rate {name}[{index}] = {value} is invalid")]
    BadRate {
        /// Which vector ("birth_per_s" or "death_per_s").
        name: &'static str,
        /// Index in that vector.
        index: usize,
        /// Value given.
        value: f64,
    },
    /// Invalid k-out-of-n parameters (in words).
    #[error("invalid k-out-of-n system: {0}")]
    BadSystem(&'static str),
}

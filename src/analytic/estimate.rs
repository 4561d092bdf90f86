//! The fast Markov estimate's generic half: per-bay cut/repair chains, their absorption
//! probabilities at chosen times, and the system loss probability of independent bays.
//!
//! Nothing here knows about tethers' physics: a bay is just a birth–death chain over its
//! number of cut segments (births are cuts, deaths are repairs, the last state is loss). The
//! rates come from [`crate::model::markov`], which is where the flux, the tether profile and
//! the perforation law meet.
//!
//! # System loss
//! Bays are treated as independent (strikes on different bays are independent Poisson
//! processes and each bay has its own repair, with no contention for climbers), so
//! `P(loss by t) = 1 − Π_j (1 − p_j(t))`. The product is formed as
//! `−expm1(Σ_j ln_1p(−p_j))`: bay probabilities of 1e-20 would vanish in `1 − p_j`, while their
//! logarithms add up exactly, and `expm1` keeps a small total at full relative accuracy.

use std::collections::HashMap;

use rayon::prelude::*;

use super::birth_death::uniformize;
use super::{AnalyticError, BirthDeath};

/// Errors from the Markov estimate.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EstimateError {
    /// A bay's chain has invalid rates.
    #[error("bay {bay_index}: {source}")]
    Chain {
        /// Index of the offending bay.
        bay_index: usize,
        /// What was wrong.
        source: AnalyticError,
    },
    /// The scenario uses a model the fast estimate cannot represent (the text says which).
    #[error("{0}")]
    Unsupported(String),
    /// A requested time is negative or not finite.
    #[error("time {value} s at position {index} is invalid: times must be finite and >= 0")]
    BadTime {
        /// Position in the list of times.
        index: usize,
        /// Value given, s.
        value: f64,
    },
}

/// One bay's chain: transient states `k = 0..m` cut segments; a cut in state `m − 1` is loss.
///
/// `m = 0` means the bay is lost from the start (its intact ribbons are already overloaded).
#[derive(Debug, Clone, PartialEq)]
pub struct BayChain {
    cut_rate_per_s: Vec<f64>,
    repair_rate_per_s: Vec<f64>,
    chain: Option<BirthDeath>,
}

impl BayChain {
    /// A chain with cut rate `cut_rate_per_s[k]` (state `k` to `k + 1`) and repair rate
    /// `repair_rate_per_s[k]` (state `k` to `k − 1`; must be 0 for `k = 0`). Empty vectors give
    /// a bay lost from the start.
    ///
    /// # Errors
    /// [`AnalyticError`] for different lengths, or a rate that is negative or not finite.
    pub fn new(
        cut_rate_per_s: Vec<f64>,
        repair_rate_per_s: Vec<f64>,
    ) -> Result<Self, AnalyticError> {
        let chain = if cut_rate_per_s.is_empty() && repair_rate_per_s.is_empty() {
            None
        } else {
            Some(BirthDeath::new(
                cut_rate_per_s.clone(),
                repair_rate_per_s.clone(),
            )?)
        };
        Ok(Self {
            cut_rate_per_s,
            repair_rate_per_s,
            chain,
        })
    }

    /// Cut rate out of each transient state, 1/s.
    pub fn cut_rate_per_s(&self) -> &[f64] {
        &self.cut_rate_per_s
    }

    /// Repair rate out of each transient state, 1/s (0 in state 0).
    pub fn repair_rate_per_s(&self) -> &[f64] {
        &self.repair_rate_per_s
    }

    /// Number of transient states `m` (0: lost from the start).
    pub fn transient_states(&self) -> usize {
        self.cut_rate_per_s.len()
    }

    /// Probability that the bay is lost by each time (s, finite and >= 0), starting with no
    /// cut segment. A bay lost from the start has probability 1 at every time, including 0.
    ///
    /// # Method
    /// The times are visited in increasing order and the state distribution is carried from
    /// one to the next with the chain's transition probabilities over the gap (the Markov
    /// property makes this exact). The step over a gap `Δ` — for each start state, the
    /// transient distribution and the mass absorbed within `Δ` — is computed once per distinct
    /// gap by the uniformization of [`BirthDeath::absorption_probability`] (Jensen 1953;
    /// Grassmann 1977). A table of mission years then costs `m` passes over one year instead of
    /// one pass per year over the whole elapsed time, which matters for 1 600 bays whose
    /// repair rate makes the uniformization rate a few hundred per year. Every term is
    /// non-negative and absorbed mass is accumulated directly, so a loss probability of 1e-20
    /// keeps its relative accuracy. Above `Λ Δ = 1e6` it defers to [`BirthDeath`], which then
    /// switches to scaling and squaring.
    pub fn loss_probabilities(&self, times_s: &[f64]) -> Vec<f64> {
        let Some(chain) = &self.chain else {
            return vec![1.0; times_s.len()];
        };
        let b = &self.cut_rate_per_s;
        let d = &self.repair_rate_per_s;
        let m = b.len();
        let rate = b.iter().zip(d).map(|(x, y)| x + y).fold(0.0, f64::max);
        if rate == 0.0 || times_s.iter().any(|t| !t.is_finite() || *t < 0.0) {
            return chain.absorption_probabilities(times_s);
        }
        let mut order: Vec<usize> = (0..times_s.len()).collect();
        order.sort_by(|&i, &j| times_s[i].total_cmp(&times_s[j]));
        let mut out = vec![0.0; times_s.len()];
        let mut dist = vec![0.0; m];
        dist[0] = 1.0;
        let mut absorbed = 0.0;
        let mut now = 0.0;
        let mut steps: HashMap<u64, Step> = HashMap::new();
        for i in order {
            let gap = times_s[i] - now;
            if gap > 0.0 {
                if rate * gap > MAX_STEP_POISSON_MEAN {
                    return chain.absorption_probabilities(times_s);
                }
                let step = steps
                    .entry(gap.to_bits())
                    .or_insert_with(|| Step::new(b, d, rate, gap));
                let mut next = vec![0.0; m];
                for (j, &pj) in dist.iter().enumerate() {
                    absorbed += pj * step.absorbed[j];
                    for (n, q) in next.iter_mut().zip(&step.rows[j]) {
                        *n += pj * q;
                    }
                }
                dist = next;
                now = times_s[i];
            }
            out[i] = absorbed;
        }
        out
    }

    /// Bit pattern of the rates, for caching bays with identical chains.
    fn key(&self) -> Vec<u64> {
        self.cut_rate_per_s
            .iter()
            .chain(&self.repair_rate_per_s)
            .map(|x| x.to_bits())
            .collect()
    }
}

/// Largest uniformized Poisson mean `Λ Δ` of one time step in
/// [`BayChain::loss_probabilities`] (the same limit as [`BirthDeath`]'s single pass).
const MAX_STEP_POISSON_MEAN: f64 = 1e6;

/// Transition probabilities of a chain over one time step.
#[derive(Debug)]
struct Step {
    /// `rows[j][l]`: in transient state `l` after the step, from `j`.
    rows: Vec<Vec<f64>>,
    /// Absorbed within the step, from `j`.
    absorbed: Vec<f64>,
}

impl Step {
    fn new(birth: &[f64], death: &[f64], rate: f64, gap_s: f64) -> Self {
        let m = birth.len();
        let mut rows = Vec::with_capacity(m);
        let mut absorbed = Vec::with_capacity(m);
        let mut start = vec![0.0; m];
        for j in 0..m {
            start.fill(0.0);
            start[j] = 1.0;
            let (row, a) = uniformize(birth, death, rate, &start, gap_s);
            rows.push(row);
            absorbed.push(a);
        }
        Step { rows, absorbed }
    }
}

/// Loss probabilities of every bay and of the system at a list of times.
#[derive(Debug, Clone, PartialEq)]
pub struct SystemEstimate {
    /// The times, s.
    pub times_s: Vec<f64>,
    /// `bay_loss_probability[j][i]`: bay `j` lost by `times_s[i]`.
    pub bay_loss_probability: Vec<Vec<f64>>,
    /// System loss by each time (any bay lost), assuming independent bays.
    pub system_loss_probability: Vec<f64>,
}

/// `1 − Π (1 − p)` over independent events, formed in log space so that tiny probabilities
/// are not lost (see the module notes). Probabilities are clamped to `[0, 1]`; a NaN gives NaN.
pub fn union_of_independent(probabilities: impl IntoIterator<Item = f64>) -> f64 {
    let mut log_survival = 0.0;
    for p in probabilities {
        if p.is_nan() {
            return f64::NAN;
        }
        log_survival += (-p.clamp(0.0, 1.0)).ln_1p();
    }
    -log_survival.exp_m1()
}

/// Solve every bay's chain at `times_s` and combine them into the system loss probability.
///
/// Bays with bit-identical rates are solved once. Bays are solved in parallel; the combination
/// runs in bay order, so the result does not depend on the thread count.
///
/// # Errors
/// [`EstimateError::BadTime`] for a negative or non-finite time.
pub fn estimate_system(
    bays: &[BayChain],
    times_s: &[f64],
) -> Result<SystemEstimate, EstimateError> {
    for (index, &value) in times_s.iter().enumerate() {
        if !(value.is_finite() && value >= 0.0) {
            return Err(EstimateError::BadTime { index, value });
        }
    }
    // Distinct chains, in order of first appearance.
    let mut slot_of_key: HashMap<Vec<u64>, usize> = HashMap::new();
    let mut distinct: Vec<&BayChain> = Vec::new();
    let slots: Vec<usize> = bays
        .iter()
        .map(|b| {
            *slot_of_key.entry(b.key()).or_insert_with(|| {
                distinct.push(b);
                distinct.len() - 1
            })
        })
        .collect();
    let solved: Vec<Vec<f64>> = distinct
        .par_iter()
        .map(|b| b.loss_probabilities(times_s))
        .collect();
    let bay_loss_probability: Vec<Vec<f64>> = slots.iter().map(|&s| solved[s].clone()).collect();
    let system_loss_probability = (0..times_s.len())
        .map(|i| union_of_independent(bay_loss_probability.iter().map(|p| p[i])))
        .collect();
    Ok(SystemEstimate {
        times_s: times_s.to_vec(),
        bay_loss_probability,
        system_loss_probability,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn union_keeps_tiny_probabilities() {
        // 1600 bays of 1e-20 each: 1 - (1 - 1e-20)^1600 = 1.6e-17 to first order (binomial
        // expansion); the naive product would round every factor to 1 and give 0.
        let p = union_of_independent(std::iter::repeat_n(1e-20, 1600));
        assert!((p / 1.6e-17 - 1.0).abs() < 1e-12, "{p}");
        // Two independent events of 1/2: 3/4 exactly.
        assert!((union_of_independent([0.5, 0.5]) - 0.75).abs() < 1e-15);
        assert_eq!(union_of_independent([0.3, 1.0]), 1.0);
        assert_eq!(union_of_independent(std::iter::empty()), 0.0);
        assert!(union_of_independent([0.1, f64::NAN]).is_nan());
    }

    #[test]
    fn single_state_bays_are_exponential() {
        // One transient state with cut rate a: P(lost by t) = 1 - e^{-a t} (closed form);
        // two such bays: 1 - e^{-(a + b) t}.
        let a = BayChain::new(vec![2e-3], vec![0.0]).unwrap();
        let b = BayChain::new(vec![5e-3], vec![0.0]).unwrap();
        let times = [0.0, 10.0, 100.0, 1000.0];
        let e = estimate_system(&[a.clone(), b, a], &times).unwrap();
        for (i, &t) in times.iter().enumerate() {
            let bay0 = 1.0 - (-2e-3 * t).exp();
            assert!((e.bay_loss_probability[0][i] - bay0).abs() < 1e-14);
            assert_eq!(e.bay_loss_probability[0][i], e.bay_loss_probability[2][i]);
            let sys = 1.0 - (-(2e-3 + 5e-3 + 2e-3) * t).exp();
            assert!((e.system_loss_probability[i] - sys).abs() < 1e-13, "{t}");
        }
    }

    #[test]
    fn stepping_matches_birth_death_per_time() {
        // Stepping from time to time must give what BirthDeath gives solving each time alone,
        // and the REFERENCES.md section 8 value: 1-out-of-4, lambda = 0.01/d, mu = 0.05/d,
        // one crew, R(10 yr = 3652.5 d) = 0.101688 (computed there three ways).
        let bd = BirthDeath::k_out_of_n(4, 1, 0.01, 0.05, 1).unwrap();
        let births: Vec<f64> = (0..4).map(|j| f64::from(4 - j) * 0.01).collect();
        let deaths: Vec<f64> = (0..4).map(|j| f64::from(j.min(1)) * 0.05).collect();
        let chain = BayChain::new(births, deaths).unwrap();
        let times = [0.0, 1.0, 365.25, 1000.0, 3652.5];
        let shared = chain.loss_probabilities(&times);
        for (t, p) in times.iter().zip(&shared) {
            assert!((p - bd.absorption_probability(*t)).abs() < 1e-13, "{t}");
        }
        assert!((1.0 - shared[4] - 0.101688).abs() < 1e-6, "{}", shared[4]);
        // Stiff chain with a tiny loss probability: relative agreement.
        let stiff = BayChain::new(vec![3e-3, 2e-3, 1e-3], vec![0.0, 5.0, 5.0]).unwrap();
        let reference = BirthDeath::new(vec![3e-3, 2e-3, 1e-3], vec![0.0, 5.0, 5.0]).unwrap();
        let times = [10.0, 100.0, 400.0];
        for (t, p) in times.iter().zip(stiff.loss_probabilities(&times)) {
            let q = reference.absorption_probability(*t);
            assert!(q > 0.0 && (p / q - 1.0).abs() < 1e-10, "{t}: {p} vs {q}");
        }
    }

    #[test]
    fn lost_bay_and_bad_input() {
        let lost = BayChain::new(vec![], vec![]).unwrap();
        assert_eq!(lost.transient_states(), 0);
        let e = estimate_system(&[lost], &[0.0, 1.0]).unwrap();
        assert_eq!(e.system_loss_probability, vec![1.0, 1.0]);
        assert!(BayChain::new(vec![1.0], vec![]).is_err());
        assert!(BayChain::new(vec![-1.0], vec![0.0]).is_err());
        let ok = BayChain::new(vec![1.0], vec![0.0]).unwrap();
        assert!(matches!(
            estimate_system(std::slice::from_ref(&ok), &[-1.0]),
            Err(EstimateError::BadTime { index: 0, .. })
        ));
        assert!(estimate_system(&[ok], &[f64::NAN]).is_err());
    }
}

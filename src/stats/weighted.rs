//! Honest intervals for a probability estimated from weighted (importance-sampling) samples.
//!
//! An importance-sampling estimate of a small probability is `p̂ = (1/n) Σ_i w_i 1{A_i}` over
//! `n` independent samples, with likelihood-ratio weights `w_i`. Its precision is not that of
//! `k` events in `n` trials: it depends on how the weight is spread over the samples that hit
//! the event. Two diagnostics measure that spread:
//!
//! - the **effective sample size** of the event's weights (Kish 1965, *Survey Sampling*,
//!   §11.7; [MEMORY] for the section), `ESS = (Σ w 1{A})² / Σ w² 1{A}`: the number of
//!   equally-weighted events that would carry the same information. For plain Monte Carlo
//!   (all weights 1) it is the number of events `k`;
//! - the **largest weight share**, `max w 1{A} / Σ w 1{A}`.
//!
//! **Resolution rule.** A weighted estimate is *resolved* only when `ESS >= 100` and no single
//! sample carries more than 10 % of the total weight ([`MIN_EFFECTIVE_SAMPLE_SIZE`],
//! [`MAX_WEIGHT_SHARE`]). Below that the sample variance of the weights is itself unreliable
//! (a heavy-tailed weight distribution is under-sampled, and the plug-in standard error is
//! typically far too small), so no interval is formed at all: the estimate is reported with
//! its standard error and the reason it is not resolved. Both thresholds are engineering
//! practice (common practice, no single source); 10 % keeps any one history from moving the
//! estimate by more than about a tenth. Since `Σ w² >= max w²`, `ESS <= 1/share²`: a share
//! above 10 % always means `ESS < 100`; the share is reported first because it names the
//! cause (one history dominates).
//!
//! **Interval (resolved estimates).** A Wilson score interval (Wilson 1927, JASA 22, 209–212)
//! on *effective counts*: the design-effect approach used for proportions from weighted survey
//! data (Korn & Graubard 1998, *Survey Methodology* 24, 193–201, who apply it to the exact
//! interval; Dean & Pagano 2015, *J. Survey Stat. Methodol.* 3, 484–503, compare Wilson with
//! the effective sample size; both [MEMORY]). The effective number of trials is the number of
//! plain samples with the same variance, `n* = p̂(1 − p̂)/SE²`, and the effective number of
//! events `k* = p̂ n*`. For a rare event `SE² ≈ Σ w² 1{A}/n²`, so `k* ≈ ESS`: the interval is
//! exactly as wide as `ESS` plain events allow, and it stays inside `[0, 1]` with a positive
//! lower end, unlike a symmetric normal interval. It is never labelled Clopper–Pearson: that
//! name belongs to the exact binomial interval of plain counts.

use statrs::distribution::{ContinuousCDF, Normal};

use super::{check_confidence, StatsError};

/// Smallest effective sample size (of the event's weights) for which an interval is formed.
pub const MIN_EFFECTIVE_SAMPLE_SIZE: f64 = 100.0;
/// Largest share of the total event weight one sample may carry for an interval to be formed.
pub const MAX_WEIGHT_SHARE: f64 = 0.1;

/// Why a weighted estimate has no interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Unresolved {
    /// No sample hit the event.
    NoEvent,
    /// The effective sample size is below [`MIN_EFFECTIVE_SAMPLE_SIZE`].
    SmallEffectiveSampleSize(f64),
    /// One sample carries more than [`MAX_WEIGHT_SHARE`] of the total weight.
    DominantWeight(f64),
}

impl std::fmt::Display for Unresolved {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match *self {
            Unresolved::NoEvent => write!(f, "no weighted loss was seen"),
            Unresolved::SmallEffectiveSampleSize(e) => write!(
                f,
                "effective sample size {e:.1} is below {MIN_EFFECTIVE_SAMPLE_SIZE:.0}"
            ),
            Unresolved::DominantWeight(s) => write!(
                f,
                "one history carries {:.1} % of the total weight (more than {:.0} %)",
                100.0 * s,
                100.0 * MAX_WEIGHT_SHARE
            ),
        }
    }
}

/// A probability estimated from weighted samples, with its diagnostics.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WeightedProportion {
    /// `(1/n) Σ w 1{A}`.
    pub estimate: f64,
    /// Standard error of the estimate (plug-in, divisor `n − 1`).
    pub standard_error: f64,
    /// Kish effective sample size of the event's weights.
    pub effective_sample_size: f64,
    /// Largest single event weight over the total event weight (0 with no event).
    pub largest_weight_share: f64,
    /// Why no interval may be formed (`None`: resolved).
    pub unresolved: Option<Unresolved>,
}

impl WeightedProportion {
    /// From the sums over `n` samples of `w 1{A}`, `w² 1{A}` and the largest `w 1{A}`.
    pub fn from_sums(sum_w: f64, sum_w2: f64, max_w: f64, n: u64) -> Self {
        let nf = n.max(1) as f64;
        let estimate = sum_w / nf;
        let var = if n > 1 {
            ((sum_w2 / nf - estimate * estimate) * nf / (nf - 1.0)).max(0.0)
        } else {
            0.0
        };
        let standard_error = (var / nf).sqrt();
        let effective_sample_size = if sum_w2 > 0.0 {
            sum_w * sum_w / sum_w2
        } else {
            0.0
        };
        let largest_weight_share = if sum_w > 0.0 { max_w / sum_w } else { 0.0 };
        let unresolved = if sum_w.is_nan() || sum_w <= 0.0 {
            Some(Unresolved::NoEvent)
        } else if largest_weight_share > MAX_WEIGHT_SHARE {
            Some(Unresolved::DominantWeight(largest_weight_share))
        } else if effective_sample_size < MIN_EFFECTIVE_SAMPLE_SIZE {
            Some(Unresolved::SmallEffectiveSampleSize(effective_sample_size))
        } else {
            None
        };
        WeightedProportion {
            estimate,
            standard_error,
            effective_sample_size,
            largest_weight_share,
            unresolved,
        }
    }

    /// The Wilson interval on effective counts (module notes), or `None` when not resolved.
    ///
    /// # Errors
    /// [`StatsError::BadConfidence`] unless `0 < confidence < 1`.
    pub fn interval(&self, confidence: f64) -> Result<Option<(f64, f64)>, StatsError> {
        check_confidence(confidence)?;
        if self.unresolved.is_some() {
            return Ok(None);
        }
        Ok(Some(wilson_effective(
            self.estimate,
            self.standard_error,
            confidence,
        )?))
    }
}

/// Two-sided standard normal quantile `z` with `P(|Z| <= z) = confidence`.
///
/// # Errors
/// [`StatsError::BadConfidence`] unless `0 < confidence < 1`.
pub fn normal_quantile(confidence: f64) -> Result<f64, StatsError> {
    check_confidence(confidence)?;
    Normal::new(0.0, 1.0)
        .map(|n| n.inverse_cdf(0.5 + confidence / 2.0))
        .map_err(|_| StatsError::BadConfidence(confidence))
}

/// Wilson score interval for `k` events in `n` trials, both real (effective counts allowed).
///
/// # Errors
/// [`StatsError::BadConfidence`]; [`StatsError::BadCount`] unless `0 <= k <= n` and `n > 0`.
pub fn wilson(k: f64, n: f64, confidence: f64) -> Result<(f64, f64), StatsError> {
    let z = normal_quantile(confidence)?;
    if !(n > 0.0 && n.is_finite() && k >= 0.0 && k <= n) {
        return Err(StatsError::BadCount {
            successes: k.max(0.0) as u64,
            trials: n.max(0.0) as u64,
        });
    }
    let p = k / n;
    let z2 = z * z;
    let denom = 1.0 + z2 / n;
    let centre = (p + z2 / (2.0 * n)) / denom;
    let half = z / denom * (p * (1.0 - p) / n + z2 / (4.0 * n * n)).sqrt();
    Ok(((centre - half).max(0.0), (centre + half).min(1.0)))
}

/// Wilson interval for an estimate `p` with standard error `se`, on the effective counts
/// `n* = p(1 − p)/se²`, `k* = p n*` (module notes). With `se = 0` (no spread at all) the
/// interval is the point.
///
/// # Errors
/// [`StatsError::BadConfidence`]; [`StatsError::BadProbability`] for `p` outside `[0, 1]`.
pub fn wilson_effective(p: f64, se: f64, confidence: f64) -> Result<(f64, f64), StatsError> {
    check_confidence(confidence)?;
    if !(0.0..=1.0).contains(&p) {
        return Err(StatsError::BadProbability(p));
    }
    if se.is_nan() || se <= 0.0 || p == 0.0 || p == 1.0 {
        return Ok((p, p));
    }
    let n_eff = p * (1.0 - p) / (se * se);
    wilson(p * n_eff, n_eff, confidence)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wilson_matches_published_example() {
        // Newcombe R.G. (1998), "Two-sided confidence intervals for the single proportion",
        // Statistics in Medicine 17, 857–872, Table I: 81/263, Wilson score 95 % interval
        // 0.2553 – 0.3662 ([MEMORY] for the table values; they are also reproduced by the
        // closed form in binomial.rs' containment test).
        let (lo, hi) = wilson(81.0, 263.0, 0.95).unwrap();
        assert!((lo - 0.2553).abs() < 1e-4, "{lo}");
        assert!((hi - 0.3662).abs() < 1e-4, "{hi}");
    }

    #[test]
    fn equal_weights_reduce_to_plain_counts() {
        // All weights 1: ESS = k, share = 1/k, and the effective-count Wilson interval equals
        // the plain Wilson interval on (k, n) up to the n/(n - 1) of the variance divisor.
        let (k, n) = (150u64, 100_000u64);
        let w = WeightedProportion::from_sums(k as f64, k as f64, 1.0, n);
        assert!((w.effective_sample_size - k as f64).abs() < 1e-9);
        assert!((w.largest_weight_share - 1.0 / k as f64).abs() < 1e-12);
        assert!(w.unresolved.is_none());
        let (lo, hi) = w.interval(0.95).unwrap().unwrap();
        let (lo2, hi2) = wilson(k as f64, n as f64, 0.95).unwrap();
        assert!((lo / lo2 - 1.0).abs() < 1e-4 && (hi / hi2 - 1.0).abs() < 1e-4);
        // Kish's design effect: k* = p n* equals the ESS for a rare event.
        let n_eff = w.estimate * (1.0 - w.estimate) / w.standard_error.powi(2);
        assert!((w.estimate * n_eff / k as f64 - 1.0).abs() < 1e-2);
    }

    #[test]
    fn resolution_rules() {
        // One weighted loss: share 100 %: no interval, but an estimate and a standard error.
        let w = WeightedProportion::from_sums(1e-3, 1e-6, 1e-3, 10_000);
        assert_eq!(w.unresolved, Some(Unresolved::DominantWeight(1.0)));
        assert!((w.effective_sample_size - 1.0).abs() < 1e-12);
        assert_eq!(w.interval(0.95).unwrap(), None);
        assert!(w.standard_error > 0.0);
        // Nothing seen.
        let w = WeightedProportion::from_sums(0.0, 0.0, 0.0, 10_000);
        assert_eq!(w.unresolved, Some(Unresolved::NoEvent));
        // 50 equal weights: no weight dominates (2 %), but ESS 50 < 100.
        let w = WeightedProportion::from_sums(50.0, 50.0, 1.0, 1_000_000);
        assert_eq!(
            w.unresolved,
            Some(Unresolved::SmallEffectiveSampleSize(50.0))
        );
        // 100 equal weights: resolved (the boundary is inclusive).
        let w = WeightedProportion::from_sums(100.0, 100.0, 1.0, 1_000_000);
        assert_eq!(w.unresolved, None);
        // ESS <= 1/share^2 (Cauchy–Schwarz), for an arbitrary weight set.
        let ws = [3.0, 0.5, 0.25, 7.0, 1.0, 1.0, 0.1];
        let (s, s2) = (
            ws.iter().sum::<f64>(),
            ws.iter().map(|w| w * w).sum::<f64>(),
        );
        let w = WeightedProportion::from_sums(s, s2, 7.0, 1000);
        assert!(w.effective_sample_size <= 1.0 / w.largest_weight_share.powi(2) + 1e-12);
        let text = Unresolved::SmallEffectiveSampleSize(1.0).to_string();
        assert!(text.contains("effective sample size 1.0"));
    }

    #[test]
    fn resolved_interval_contains_estimate_and_is_not_degenerate() {
        let w = WeightedProportion::from_sums(0.5, 0.5 * 0.5 / 150.0, 0.5 / 150.0, 1_000_000);
        let (lo, hi) = w.interval(0.95).unwrap().unwrap();
        assert!(lo > 0.0 && lo < w.estimate && hi > w.estimate, "{lo} {hi}");
        // Width about 2 z p / sqrt(ESS).
        let rel = (hi - lo) / w.estimate;
        assert!((rel - 2.0 * 1.96 / 150f64.sqrt()).abs() < 0.05, "{rel}");
    }
}

//! Mergeable moment accumulators: plain mean/variance ([`MeanVar`]) and the weighted
//! accumulator for importance sampling ([`WeightedMean`]).

use super::binomial::beta_reg;
use super::{check_confidence, StatsError};
use statrs::distribution::{ContinuousCDF, Normal};

/// Running count, mean and sum of squared deviations (Welford 1962; pairwise merge by
/// Chan, Golub & LeVeque 1979).
///
/// Welford's update avoids the cancellation of the naive `sum x^2 - n mean^2` form. `merge`
/// is exact in exact arithmetic and deterministic in floating point as long as the caller
/// merges in a fixed order (the engine merges batches in batch order).
#[derive(Debug, Clone, Copy, Default, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct MeanVar {
    count: u64,
    mean: f64,
    m2: f64,
}

impl MeanVar {
    /// An empty accumulator.
    pub fn new() -> Self {
        Self::default()
    }

    /// Add one observation.
    #[inline]
    pub fn push(&mut self, x: f64) {
        self.count += 1;
        let delta = x - self.mean;
        self.mean += delta / self.count as f64;
        self.m2 += delta * (x - self.mean);
    }

    /// Fold another accumulator into this one (Chan et al. pairwise formula).
    pub fn merge(&mut self, other: &MeanVar) {
        if other.count == 0 {
            return;
        }
        if self.count == 0 {
            *self = *other;
            return;
        }
        let n_a = self.count as f64;
        let n_b = other.count as f64;
        let n = n_a + n_b;
        let delta = other.mean - self.mean;
        self.mean += delta * n_b / n;
        self.m2 += other.m2 + delta * delta * n_a * n_b / n;
        self.count += other.count;
    }

    /// Number of observations.
    pub fn count(&self) -> u64 {
        self.count
    }

    /// Sample mean (0 when empty).
    pub fn mean(&self) -> f64 {
        self.mean
    }

    /// Unbiased sample variance (divisor n - 1); 0 with fewer than two observations.
    pub fn variance(&self) -> f64 {
        if self.count < 2 {
            0.0
        } else {
            (self.m2 / (self.count - 1) as f64).max(0.0)
        }
    }

    /// Standard error of the mean, `sqrt(variance / n)`; 0 when empty.
    pub fn std_error(&self) -> f64 {
        if self.count == 0 {
            0.0
        } else {
            (self.variance() / self.count as f64).sqrt()
        }
    }

    /// Two-sided Student-t confidence interval for the mean with `n - 1` degrees of freedom.
    ///
    /// Above one million degrees of freedom the normal quantile is used (the difference is
    /// below 1e-6 relative there, and the incomplete-beta evaluation gets slow).
    ///
    /// # Errors
    /// [`StatsError::BadConfidence`] unless `0 < confidence < 1`;
    /// [`StatsError::TooFewObservations`] with fewer than two observations.
    pub fn t_interval(&self, confidence: f64) -> Result<(f64, f64), StatsError> {
        check_confidence(confidence)?;
        if self.count < 2 {
            return Err(StatsError::TooFewObservations {
                needed: 2,
                have: self.count,
            });
        }
        let q = student_t_quantile(0.5 + confidence / 2.0, (self.count - 1) as f64);
        let half = q * self.std_error();
        Ok((self.mean - half, self.mean + half))
    }
}

/// Upper quantile of Student's t for `p > 1/2`, by bisection on the CDF written through the
/// regularized incomplete beta function (statrs' own inverse goes through an inaccurate
/// inverse beta, and its incomplete beta stops after 140 terms). Falls back to the normal quantile for huge `dof` or if `beta_reg` fails.
pub(crate) fn student_t_quantile(p: f64, dof: f64) -> f64 {
    let normal = Normal::standard().inverse_cdf(p);
    if dof > 1e6 {
        return normal;
    }
    // Upper tail: P(T > t) = I_{dof/(dof+t^2)}(dof/2, 1/2) / 2.
    let tail = 1.0 - p;
    let upper_tail = |t: f64| beta_reg(dof / 2.0, 0.5, dof / (dof + t * t)).map(|v| 0.5 * v);
    // Bracket: the t quantile exceeds the normal one; grow the upper end until the tail is below target.
    let (mut lo, mut hi) = (normal.max(0.0), normal.max(1.0) * 2.0);
    for _ in 0..200 {
        match upper_tail(hi) {
            Ok(v) if v > tail => hi *= 2.0,
            Ok(_) => break,
            Err(_) => return normal,
        }
    }
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        match upper_tail(mid) {
            Ok(v) if v > tail => lo = mid,
            Ok(_) => hi = mid,
            Err(_) => return normal,
        }
    }
    0.5 * (lo + hi)
}

/// Importance-sampling accumulator for observations `x` drawn with likelihood-ratio weights `w`.
///
/// The estimate is the unbiased importance-sampling mean `(1/n) Σ w x`; its standard error
/// comes from the sample variance of the products `y = w x`, held in Welford form (rather than
/// as raw `Σ y` and `Σ y²`) to avoid cancellation. Also kept: `Σ w`, `Σ w²` and the largest
/// weight, giving Kish's effective sample size `(Σ w)² / Σ w²` and the largest weight's share
/// of `Σ w`. A small effective sample size or a large share means the standard error itself is
/// unreliable (a few histories dominate).
#[derive(Debug, Clone, Copy, Default, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct WeightedMean {
    products: MeanVar,
    sum_w: f64,
    sum_w2: f64,
    max_w: f64,
}

impl WeightedMean {
    /// An empty accumulator.
    pub fn new() -> Self {
        Self::default()
    }

    /// Add one observation `x` with likelihood-ratio weight `w` (expected non-negative).
    #[inline]
    pub fn push(&mut self, w: f64, x: f64) {
        self.products.push(w * x);
        self.sum_w += w;
        self.sum_w2 += w * w;
        if w > self.max_w {
            self.max_w = w;
        }
    }

    /// Fold another accumulator into this one.
    pub fn merge(&mut self, other: &WeightedMean) {
        self.products.merge(&other.products);
        self.sum_w += other.sum_w;
        self.sum_w2 += other.sum_w2;
        self.max_w = self.max_w.max(other.max_w);
    }

    /// Number of observations.
    pub fn count(&self) -> u64 {
        self.products.count()
    }

    /// Unbiased importance-sampling estimate `(1/n) Σ w x` (0 when empty).
    pub fn estimate(&self) -> f64 {
        self.products.mean()
    }

    /// Self-normalized estimate `Σ w x / Σ w` (biased but often lower-variance); 0 if `Σ w = 0`.
    pub fn self_normalized_estimate(&self) -> f64 {
        if self.sum_w > 0.0 {
            self.products.mean() * self.products.count() as f64 / self.sum_w
        } else {
            0.0
        }
    }

    /// Standard error of [`estimate`](Self::estimate).
    pub fn std_error(&self) -> f64 {
        self.products.std_error()
    }

    /// Kish's effective sample size `(Σ w)² / Σ w²` (0 when all weights are 0).
    pub fn effective_sample_size(&self) -> f64 {
        if self.sum_w2 > 0.0 {
            self.sum_w * self.sum_w / self.sum_w2
        } else {
            0.0
        }
    }

    /// Largest single weight as a fraction of `Σ w` (0 when all weights are 0).
    pub fn largest_weight_share(&self) -> f64 {
        if self.sum_w > 0.0 {
            self.max_w / self.sum_w
        } else {
            0.0
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn merge_equals_single_pass() {
        let data: Vec<f64> = (0..1000)
            .map(|i| ((i * 7919) % 1013) as f64 * 0.37 + 1e6)
            .collect();
        let mut single = MeanVar::new();
        data.iter().for_each(|&x| single.push(x));
        let mut merged = MeanVar::new();
        for chunk in data.chunks(137) {
            let mut part = MeanVar::new();
            chunk.iter().for_each(|&x| part.push(x));
            merged.merge(&part);
        }
        assert_eq!(merged.count(), single.count());
        assert!((merged.mean() - single.mean()).abs() < 1e-9);
        assert!((merged.variance() / single.variance() - 1.0).abs() < 1e-10);
        // Two-pass reference.
        let mean = data.iter().sum::<f64>() / data.len() as f64;
        let var = data.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (data.len() - 1) as f64;
        assert!((single.variance() / var - 1.0).abs() < 1e-9);
    }

    #[test]
    fn t_quantile_table_values() {
        // Student t 97.5 % quantiles from standard tables (Abramowitz & Stegun Table 26.10;
        // values from memory):
        // dof 1 -> 12.706, dof 10 -> 2.228, dof 30 -> 2.042.
        assert!((student_t_quantile(0.975, 1.0) - 12.7062).abs() < 1e-3);
        assert!((student_t_quantile(0.975, 10.0) - 2.2281).abs() < 1e-3);
        assert!((student_t_quantile(0.975, 30.0) - 2.0423).abs() < 1e-3);
        assert!((student_t_quantile(0.975, 1e7) - 1.959964).abs() < 1e-5);
        // dof 1e5: z + (z^3 + z)/(4 dof) = 1.959988 (first term of the Cornish-Fisher expansion
        // of the t quantile, Abramowitz & Stegun 26.7.5).
        assert!((student_t_quantile(0.975, 1e5) - 1.959988).abs() < 1e-6);
    }

    #[test]
    fn t_interval_rejects_small_samples() {
        let mut m = MeanVar::new();
        m.push(1.0);
        assert!(m.t_interval(0.95).is_err());
        m.push(3.0);
        let (lo, hi) = m.t_interval(0.95).unwrap();
        // mean 2, s = sqrt(2), se = 1, t(0.975, 1) = 12.706.
        assert!((lo - (2.0 - 12.7062)).abs() < 1e-3 && (hi - (2.0 + 12.7062)).abs() < 1e-3);
    }

    #[test]
    fn weighted_mean_basics() {
        let mut w = WeightedMean::new();
        for (wi, xi) in [(1.0, 2.0), (1.0, 4.0), (2.0, 0.0)] {
            w.push(wi, xi);
        }
        assert!((w.estimate() - 2.0).abs() < 1e-12);
        assert!((w.self_normalized_estimate() - 1.5).abs() < 1e-12);
        assert!((w.effective_sample_size() - 16.0 / 6.0).abs() < 1e-12);
        assert!((w.largest_weight_share() - 0.5).abs() < 1e-12);
        // products 2, 4, 0: variance 4, se = sqrt(4/3)
        assert!((w.std_error() - (4.0_f64 / 3.0).sqrt()).abs() < 1e-12);
    }
}

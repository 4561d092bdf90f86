//! Means and variances: the mergeable Welford accumulator ([`MeanVar`]) with its Student-t
//! interval, the mean and variance of counts tallied as sums ([`mean_var_from_sums`]), and
//! the normal-approximation interval of a mean ([`z_interval`]).

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

/// Mean and unbiased sample variance (divisor `n - 1`; 0 with fewer than two observations)
/// of `n` observations given by their sum and sum of squares: `mean = Σx / n`,
/// `var = max(Σx² - (Σx)² / n, 0) / (n - 1)`. `n = 0` is taken as 1 (mean 0 for empty sums).
///
/// This one-pass form cancels badly for floating-point data far from zero; it is meant for
/// integer counts whose sums are held exactly (the engine tallies cuts and their squares as
/// integers). For general data use [`MeanVar`].
pub fn mean_var_from_sums(n: u64, sum: f64, sum_sq: f64) -> (f64, f64) {
    let h = n.max(1) as f64;
    let mean = sum / h;
    let var = if n > 1 {
        (sum_sq - sum.powi(2) / h).max(0.0) / (h - 1.0)
    } else {
        0.0
    };
    (mean, var)
}

/// Normal-approximation (Wald) interval `mean ± z·se`, `z` the two-sided standard normal
/// quantile for `confidence` (1.959964 at 95 %).
///
/// # Errors
/// [`StatsError::BadConfidence`] unless `0 < confidence < 1`.
pub fn z_interval(mean: f64, std_error: f64, confidence: f64) -> Result<(f64, f64), StatsError> {
    let z = super::normal_quantile(confidence)?;
    Ok((mean - z * std_error, mean + z * std_error))
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

    /// Source: the textbook variance of 1, 2, 3, 4 (mean 2.5, sample variance 5/3), and the
    /// same data through the Welford accumulator as an independent computation.
    #[test]
    fn mean_and_variance_from_sums() {
        let (m, v) = mean_var_from_sums(4, 10.0, 30.0);
        assert_eq!(m, 2.5);
        assert!((v - 5.0 / 3.0).abs() < 1e-15);
        let mut w = MeanVar::new();
        [3.0, 0.0, 7.0, 7.0, 1.0].iter().for_each(|&x| w.push(x));
        let (m, v) = mean_var_from_sums(5, 18.0, 108.0);
        assert!((m - w.mean()).abs() < 1e-15 && (v - w.variance()).abs() < 1e-12);
        assert_eq!(mean_var_from_sums(1, 3.0, 9.0), (3.0, 0.0));
        assert_eq!(mean_var_from_sums(0, 0.0, 0.0), (0.0, 0.0));
    }

    /// Source: z(0.975) = 1.959964 (Abramowitz & Stegun Table 26.1, from memory); 90 %:
    /// z = 1.644854.
    #[test]
    fn z_interval_uses_the_two_sided_normal_quantile() {
        let (lo, hi) = z_interval(10.0, 2.0, 0.95).unwrap();
        assert!(
            (hi - 10.0 - 2.0 * 1.959964).abs() < 1e-5 && (10.0 - lo - 2.0 * 1.959964).abs() < 1e-5
        );
        let (lo, _) = z_interval(0.0, 1.0, 0.90).unwrap();
        assert!((lo + 1.644854).abs() < 1e-6);
        assert!(z_interval(0.0, 1.0, 1.0).is_err());
    }
}

//! Sample quantiles of sorted data and fixed-bin integer histograms.

use super::StatsError;

/// Quantile of already-sorted data by Hyndman & Fan (1996) definition 7, numpy's default
/// ("linear"): with `h = (n - 1) p`, the result interpolates linearly between
/// `sorted[floor(h)]` and `sorted[floor(h) + 1]`.
///
/// Hyndman R.J. & Fan Y. (1996), "Sample quantiles in statistical packages", The American
/// Statistician 50(4), 361–365. Definition 7 is chosen so results match what most readers
/// reproduce with numpy or R's default.
///
/// Returns NaN when `sorted` is empty or `p` is not in [0, 1]. The input is not checked for
/// order (that would cost a pass); unsorted input gives a meaningless result, not a panic.
pub fn quantile_sorted(sorted: &[f64], p: f64) -> f64 {
    let n = sorted.len();
    if n == 0 || !(0.0..=1.0).contains(&p) {
        return f64::NAN;
    }
    let h = (n - 1) as f64 * p;
    let lo = (h.floor() as usize).min(n - 1);
    let hi = (lo + 1).min(n - 1);
    let frac = h - lo as f64;
    sorted[lo] + frac * (sorted[hi] - sorted[lo])
}

/// Counts of non-negative integer outcomes `0..=max_value`, one bin each, plus an overflow
/// count for larger values. Mergeable; quantiles are of the integer distribution.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct Histogram {
    counts: Vec<u64>,
    overflow: u64,
    total: u64,
}

impl Histogram {
    /// A histogram with bins for `0..=max_value`. The bound is a `u32` so the bin vector's
    /// size is always reasonable.
    pub fn new(max_value: u32) -> Self {
        Self {
            counts: vec![0; max_value as usize + 1],
            overflow: 0,
            total: 0,
        }
    }

    /// Largest value with its own bin.
    pub fn max_value(&self) -> u64 {
        (self.counts.len() - 1) as u64
    }

    /// Record one outcome.
    #[inline]
    pub fn push(&mut self, value: u64) {
        match usize::try_from(value)
            .ok()
            .and_then(|i| self.counts.get_mut(i))
        {
            Some(c) => *c += 1,
            None => self.overflow += 1,
        }
        self.total += 1;
    }

    /// Count of outcomes equal to `value` (0 above the tracked range; see [`overflow`](Self::overflow)).
    pub fn count(&self, value: u64) -> u64 {
        if value > self.max_value() {
            return 0;
        }
        self.counts[value as usize]
    }

    /// Number of outcomes above [`max_value`](Self::max_value).
    pub fn overflow(&self) -> u64 {
        self.overflow
    }

    /// Total number of outcomes recorded.
    pub fn total(&self) -> u64 {
        self.total
    }

    /// Fold another histogram with the same range into this one.
    ///
    /// # Errors
    /// [`StatsError::HistogramMismatch`] if the ranges differ.
    pub fn merge(&mut self, other: &Histogram) -> Result<(), StatsError> {
        if other.counts.len() != self.counts.len() {
            return Err(StatsError::HistogramMismatch(
                self.max_value(),
                other.max_value(),
            ));
        }
        for (a, b) in self.counts.iter_mut().zip(&other.counts) {
            *a += b;
        }
        self.overflow += other.overflow;
        self.total += other.total;
        Ok(())
    }

    /// Smallest value `v` with empirical CDF `F(v) >= p` (the inverse of the step CDF;
    /// Hyndman & Fan definition 1). For `p = 0` this is the smallest observed value.
    ///
    /// # Errors
    /// [`StatsError::BadProbability`] unless `0 <= p <= 1`; [`StatsError::TooFewObservations`]
    /// when empty; [`StatsError::QuantileInOverflow`] when the answer lies above `max_value`.
    pub fn quantile(&self, p: f64) -> Result<u64, StatsError> {
        if !(0.0..=1.0).contains(&p) {
            return Err(StatsError::BadProbability(p));
        }
        if self.total == 0 {
            return Err(StatsError::TooFewObservations { needed: 1, have: 0 });
        }
        let target = p * self.total as f64;
        let mut cumulative = 0u64;
        for (v, &c) in self.counts.iter().enumerate() {
            cumulative += c;
            // `cumulative > 0` makes p = 0 return the smallest observed value.
            if cumulative > 0 && cumulative as f64 >= target {
                return Ok(v as u64);
            }
        }
        Err(StatsError::QuantileInOverflow {
            max: self.max_value(),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn type7_matches_numpy_by_hand() {
        // numpy.percentile([1, 3, 4, 7, 10], [0, 10, 25, 50, 90, 100]) with numpy's default
        // "linear" method (Hyndman & Fan type 7), computed by hand from its definition
        // h = (n-1) p: 1, 1 + 0.4*2 = 1.8, 3, 4, 7 + 0.6*3 = 8.8, 10.
        let x = [1.0, 3.0, 4.0, 7.0, 10.0];
        let expect = [
            (0.0, 1.0),
            (0.1, 1.8),
            (0.25, 3.0),
            (0.5, 4.0),
            (0.9, 8.8),
            (1.0, 10.0),
        ];
        for (p, q) in expect {
            assert!((quantile_sorted(&x, p) - q).abs() < 1e-12, "p={p}");
        }
        assert!(quantile_sorted(&[], 0.5).is_nan());
        assert!(quantile_sorted(&x, 1.5).is_nan());
        assert_eq!(quantile_sorted(&[2.5], 0.3), 2.5);
    }

    #[test]
    fn histogram_quantiles_and_merge() {
        let mut a = Histogram::new(5);
        for v in [0, 0, 1, 3] {
            a.push(v);
        }
        let mut b = Histogram::new(5);
        for v in [3, 9] {
            b.push(v);
        }
        a.merge(&b).unwrap();
        assert_eq!(a.total(), 6);
        assert_eq!(a.overflow(), 1);
        assert_eq!(a.count(3), 2);
        // CDF: F(0)=2/6, F(1)=3/6, F(3)=5/6, rest overflow.
        assert_eq!(a.quantile(0.0).unwrap(), 0);
        assert_eq!(a.quantile(1.0 / 3.0).unwrap(), 0);
        assert_eq!(a.quantile(0.4).unwrap(), 1);
        assert_eq!(a.quantile(0.5).unwrap(), 1);
        assert_eq!(a.quantile(0.8).unwrap(), 3);
        assert!(matches!(
            a.quantile(0.9),
            Err(StatsError::QuantileInOverflow { max: 5 })
        ));
        assert!(a.merge(&Histogram::new(4)).is_err());
        assert!(Histogram::new(3).quantile(0.5).is_err());
    }
}

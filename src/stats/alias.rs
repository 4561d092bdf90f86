//! Walker's alias method in Vose's numerically stable construction: O(n) set-up, O(1) draws
//! from a discrete distribution given by non-negative weights.
//!
//! Walker A.J. (1977), "An efficient method for generating discrete random variables with
//! general distributions", ACM TOMS 3(3), 253–256; Vose M.D. (1991), "A linear algorithm for
//! generating random numbers with a given distribution", IEEE TSE 17(9), 972–975.

use super::StatsError;
use rand::Rng;

/// Precomputed alias table. Probabilities are stored as `f64` and aliases as `u32` (tables
/// longer than `u32::MAX` are rejected), halving the alias column's memory against `usize`.
#[derive(Debug, Clone, PartialEq)]
pub struct AliasTable {
    prob: Vec<f64>,
    alias: Vec<u32>,
}

impl AliasTable {
    /// Build the table from weights proportional to the probabilities.
    ///
    /// # Errors
    /// [`StatsError::BadWeights`] if `weights` is empty, longer than `u32::MAX`, contains a
    /// negative or non-finite entry, or sums to zero (or to infinity).
    pub fn new(weights: &[f64]) -> Result<Self, StatsError> {
        let n = weights.len();
        if n == 0 {
            return Err(StatsError::BadWeights("empty"));
        }
        if n > u32::MAX as usize {
            return Err(StatsError::BadWeights("more than u32::MAX entries"));
        }
        if weights.iter().any(|w| !w.is_finite() || *w < 0.0) {
            return Err(StatsError::BadWeights("negative or non-finite weight"));
        }
        let sum: f64 = weights.iter().sum();
        if !sum.is_finite() || sum <= 0.0 {
            return Err(StatsError::BadWeights("weights sum to zero or overflow"));
        }
        let scale = n as f64 / sum;
        let mut prob: Vec<f64> = weights.iter().map(|w| w * scale).collect();
        let mut alias: Vec<u32> = (0..n as u32).collect();
        let mut small: Vec<u32> = Vec::new();
        let mut large: Vec<u32> = Vec::new();
        for (i, &p) in prob.iter().enumerate() {
            if p < 1.0 {
                small.push(i as u32);
            } else {
                large.push(i as u32);
            }
        }
        while let (Some(&s), Some(&l)) = (small.last(), large.last()) {
            small.pop();
            alias[s as usize] = l;
            // Vose: subtract the deficit from the large entry in this order to limit rounding.
            prob[l as usize] = (prob[l as usize] + prob[s as usize]) - 1.0;
            if prob[l as usize] < 1.0 {
                large.pop();
                small.push(l);
            }
        }
        // Leftovers in either list are 1 up to rounding.
        for i in large.into_iter().chain(small) {
            prob[i as usize] = 1.0;
        }
        Ok(Self { prob, alias })
    }

    /// Number of outcomes.
    pub fn len(&self) -> usize {
        self.prob.len()
    }

    /// Always false: construction rejects empty weights.
    pub fn is_empty(&self) -> bool {
        self.prob.is_empty()
    }

    /// Draw an index with probability proportional to its weight. O(1), two `u64` draws.
    ///
    /// The column is chosen by the multiply-shift map `(u * n) >> 64` of a 64-bit draw, whose
    /// bias is at most `n / 2^64`; the coin uses the top 53 bits of a second draw.
    #[inline]
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> usize {
        let n = self.prob.len() as u128;
        let column = ((rng.next_u64() as u128 * n) >> 64) as usize;
        let coin = (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64);
        if coin < self.prob[column] {
            column
        } else {
            self.alias[column] as usize
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stats::chi_square_p_value;
    use rand::SeedableRng;

    #[test]
    fn rejects_bad_weights() {
        assert!(AliasTable::new(&[]).is_err());
        assert!(AliasTable::new(&[1.0, -0.1]).is_err());
        assert!(AliasTable::new(&[1.0, f64::NAN]).is_err());
        assert!(AliasTable::new(&[1.0, f64::INFINITY]).is_err());
        assert!(AliasTable::new(&[0.0, 0.0]).is_err());
        assert!(AliasTable::new(&[f64::MAX, f64::MAX]).is_err());
    }

    #[test]
    fn zero_weight_never_drawn_and_single_entry() {
        let t = AliasTable::new(&[0.0, 1.0, 0.0]).unwrap();
        let mut rng = rand_pcg::Pcg64Mcg::seed_from_u64(7);
        assert!((0..10_000).all(|_| t.sample(&mut rng) == 1));
        let t = AliasTable::new(&[3.0]).unwrap();
        assert_eq!(t.sample(&mut rng), 0);
    }

    #[test]
    fn chi_square_fixed_seed() {
        // Goodness of fit of 1e6 draws against the weights, Pearson chi-square at alpha = 0.001.
        let weights = [0.5, 3.0, 1e-3, 7.25, 0.0, 2.0, 1.0, 11.0, 0.25, 4.0];
        let table = AliasTable::new(&weights).unwrap();
        let mut rng = rand_pcg::Pcg64Mcg::seed_from_u64(20_240_601);
        let draws = 1_000_000u64;
        let mut observed = [0u64; 10];
        for _ in 0..draws {
            observed[table.sample(&mut rng)] += 1;
        }
        assert_eq!(observed[4], 0);
        let sum: f64 = weights.iter().sum();
        // Drop the zero-weight cell (expected 0) from the test.
        let (obs, exp): (Vec<u64>, Vec<f64>) = weights
            .iter()
            .zip(observed)
            .filter(|(w, _)| **w > 0.0)
            .map(|(w, o)| (o, w / sum * draws as f64))
            .unzip();
        let p = chi_square_p_value(&obs, &exp).unwrap();
        assert!(p > 0.001, "p = {p}, observed {observed:?}");
    }
}

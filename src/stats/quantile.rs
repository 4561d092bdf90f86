//! Quantiles and means of integer outcomes held as counts per value (a histogram with one bin
//! per value `0..counts.len()`), as the engine's tallies hold them.

use super::StatsError;

/// Smallest value `v` with empirical CDF `F(v) >= p`, the inverse of the step CDF (Hyndman &
/// Fan 1996, definition 1), of the outcomes tallied in `counts` (`counts[v]` outcomes equal to
/// `v`). For `p = 0` this is the smallest observed value.
///
/// Hyndman R.J. & Fan Y. (1996), "Sample quantiles in statistical packages", The American
/// Statistician 50(4), 361–365. Definition 1 is chosen because a count quantile must be a
/// count (a number of spare segments, a histogram bin), never an interpolation.
///
/// # Errors
/// [`StatsError::BadProbability`] unless `0 <= p <= 1`; [`StatsError::TooFewObservations`]
/// when nothing was counted; [`StatsError::QuantileInOverflow`] when rounding puts the answer
/// past the last value (it cannot for a total below 2^53).
pub fn count_quantile(counts: &[u64], p: f64) -> Result<u64, StatsError> {
    if !(0.0..=1.0).contains(&p) {
        return Err(StatsError::BadProbability(p));
    }
    let total: u64 = counts.iter().sum();
    if total == 0 {
        return Err(StatsError::TooFewObservations { needed: 1, have: 0 });
    }
    // The smallest integer cumulative count that reaches p·total (at least one outcome).
    let need = (p * total as f64).ceil().max(1.0) as u64;
    let mut cum = 0;
    for (v, &c) in counts.iter().enumerate() {
        cum += c;
        if cum >= need {
            return Ok(v as u64);
        }
    }
    Err(StatsError::QuantileInOverflow {
        max: counts.len().saturating_sub(1) as u64,
    })
}

/// Mean of the outcomes tallied in `counts` (`Σ v·counts[v] / Σ counts[v]`, summed in value
/// order), or `None` when nothing was counted.
pub fn count_mean(counts: &[u64]) -> Option<f64> {
    let total: u64 = counts.iter().sum();
    (total > 0).then(|| {
        counts
            .iter()
            .enumerate()
            .map(|(v, &c)| v as f64 * c as f64)
            .sum::<f64>()
            / total as f64
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Source: the definition (Hyndman & Fan 1996, definition 1) worked by hand. Outcomes
    /// 0, 0, 1, 3, 3, 5: CDF F(0) = 2/6, F(1) = 3/6, F(3) = 5/6, F(5) = 1.
    #[test]
    fn inverse_step_cdf_by_hand() {
        let counts = [2, 1, 0, 2, 0, 1];
        assert_eq!(count_quantile(&counts, 0.0), Ok(0));
        assert_eq!(count_quantile(&counts, 1.0 / 3.0), Ok(0));
        assert_eq!(count_quantile(&counts, 0.4), Ok(1));
        assert_eq!(count_quantile(&counts, 0.5), Ok(1));
        assert_eq!(count_quantile(&counts, 0.8), Ok(3));
        assert_eq!(count_quantile(&counts, 5.0 / 6.0), Ok(3));
        assert_eq!(count_quantile(&counts, 0.9), Ok(5));
        assert_eq!(count_quantile(&counts, 1.0), Ok(5));
        // Leading zeros: p = 0 is the smallest observed value, not 0.
        assert_eq!(count_quantile(&[0, 0, 4], 0.0), Ok(2));
        assert!(matches!(
            count_quantile(&counts, 1.5),
            Err(StatsError::BadProbability(_))
        ));
        assert!(matches!(
            count_quantile(&[0, 0], 0.5),
            Err(StatsError::TooFewObservations { .. })
        ));
        assert!(count_quantile(&[], 0.5).is_err());
    }

    /// Source: the same quantile from the sorted list of outcomes, index ceil(p n) - 1
    /// (definition 1 written on order statistics), on pseudo-random count vectors.
    #[test]
    fn equals_the_order_statistic_of_the_expanded_sample() {
        let mut state = 0x2545_f491_4f6c_dd1du64;
        let mut next = |m: u64| {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            state % m
        };
        for _ in 0..200 {
            let counts: Vec<u64> = (0..1 + next(12)).map(|_| next(4)).collect();
            let sample: Vec<u64> = counts
                .iter()
                .enumerate()
                .flat_map(|(v, &c)| std::iter::repeat_n(v as u64, c as usize))
                .collect();
            if sample.is_empty() {
                continue;
            }
            let n = sample.len();
            for p in [0.0, 0.1, 0.5, 0.9, 0.95, 0.99, 1.0] {
                let k = ((p * n as f64).ceil() as usize).max(1) - 1;
                assert_eq!(
                    count_quantile(&counts, p),
                    Ok(sample[k]),
                    "{counts:?} p={p}"
                );
            }
            let mean = sample.iter().sum::<u64>() as f64 / n as f64;
            assert!((count_mean(&counts).unwrap() - mean).abs() < 1e-12 * mean.max(1.0));
        }
        assert_eq!(count_mean(&[0, 0]), None);
    }
}

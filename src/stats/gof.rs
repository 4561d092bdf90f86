//! Goodness-of-fit helpers for testing samplers: Pearson's chi-square and the one-sample
//! Kolmogorov–Smirnov test with the asymptotic Kolmogorov distribution.

use super::StatsError;
use statrs::function::gamma::checked_gamma_ur;

/// p-value of Pearson's chi-square statistic `Σ (O - E)² / E` with `k - 1` degrees of freedom
/// (the expected counts are taken as fully specified, no fitted parameters).
///
/// The upper tail of the chi-square distribution is the regularized upper incomplete gamma
/// function `Q(df/2, x/2)`. Cells should have expected counts of at least about 5 for the
/// chi-square approximation to hold; that is the caller's responsibility.
///
/// # Errors
/// [`StatsError::BadGoodnessOfFitInput`] if the slices differ in length, have fewer than two
/// cells, or any expected count is not finite and positive.
pub fn chi_square_p_value(observed: &[u64], expected: &[f64]) -> Result<f64, StatsError> {
    if observed.len() != expected.len() {
        return Err(StatsError::BadGoodnessOfFitInput("length mismatch"));
    }
    if observed.len() < 2 {
        return Err(StatsError::BadGoodnessOfFitInput("fewer than two cells"));
    }
    if expected.iter().any(|e| !e.is_finite() || *e <= 0.0) {
        return Err(StatsError::BadGoodnessOfFitInput(
            "expected count not finite and positive",
        ));
    }
    let statistic: f64 = observed
        .iter()
        .zip(expected)
        .map(|(&o, &e)| (o as f64 - e).powi(2) / e)
        .sum();
    if statistic <= 0.0 {
        return Ok(1.0);
    }
    let dof = (observed.len() - 1) as f64;
    checked_gamma_ur(dof / 2.0, statistic / 2.0)
        .map_err(|_| StatsError::NoConvergence("regularized upper incomplete gamma"))
}

/// One-sample Kolmogorov–Smirnov statistic `D = sup |F_n(x) - F(x)|` of sorted samples
/// against a continuous CDF. Returns NaN for an empty sample.
pub fn ks_statistic(sorted_samples: &[f64], cdf: impl Fn(f64) -> f64) -> f64 {
    let n = sorted_samples.len();
    if n == 0 {
        return f64::NAN;
    }
    let nf = n as f64;
    sorted_samples
        .iter()
        .enumerate()
        .map(|(i, &x)| {
            let f = cdf(x);
            (f - i as f64 / nf).max((i + 1) as f64 / nf - f)
        })
        .fold(0.0, f64::max)
}

/// Asymptotic p-value `P(D_n > d)` of the Kolmogorov–Smirnov statistic.
///
/// Uses the Kolmogorov limit distribution `Q(λ) = 2 Σ_{k≥1} (-1)^{k-1} exp(-2 k² λ²)` with
/// Stephens' finite-n correction `λ = (√n + 0.12 + 0.11/√n) d` (Stephens M.A. (1970),
/// J. R. Stat. Soc. B 32, 115–122; the form given in Press et al., Numerical Recipes, §14.3).
/// For small `λ` the alternating series converges slowly, so the Jacobi-transformed series
/// `1 - (√(2π)/λ) Σ_{k≥1} exp(-(2k-1)² π² / (8 λ²))` is used instead. Good enough for
/// accept/reject at conventional levels; not for p-values that need many digits.
pub fn ks_p_value(d: f64, n: u64) -> f64 {
    if n == 0 || !d.is_finite() || d <= 0.0 {
        return 1.0;
    }
    let sqrt_n = (n as f64).sqrt();
    let lambda = (sqrt_n + 0.12 + 0.11 / sqrt_n) * d;
    let p = if lambda < 1.0 {
        let pi2 = std::f64::consts::PI * std::f64::consts::PI;
        let s: f64 = (1..=20)
            .map(|k| {
                let odd = (2 * k - 1) as f64;
                (-odd * odd * pi2 / (8.0 * lambda * lambda)).exp()
            })
            .sum();
        1.0 - (2.0 * std::f64::consts::PI).sqrt() / lambda * s
    } else {
        let s: f64 = (1..=100)
            .map(|k| {
                let kf = k as f64;
                let sign = if k % 2 == 1 { 1.0 } else { -1.0 };
                sign * (-2.0 * kf * kf * lambda * lambda).exp()
            })
            .sum();
        2.0 * s
    };
    p.clamp(0.0, 1.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chi_square_known_values() {
        // Upper tail of chi-square: P(X > 3.841459) = 0.05 for 1 dof; P(X > 5.991465) = 0.05
        // for 2 dof (standard tables, Abramowitz & Stegun Table 26.8; values from memory). The
        // 2-dof case below is exact: the chi-square(2) upper tail is exp(-x/2).
        // observed (60, 40) vs expected (50, 50): statistic 4.0 -> p = 0.0455003 (1 dof).
        let p = chi_square_p_value(&[60, 40], &[50.0, 50.0]).unwrap();
        assert!((p - 0.0455003).abs() < 1e-6, "{p}");
        // 2 dof: p = exp(-x/2) exactly. (62, 50, 38) vs 50 each: x = (144 + 0 + 144)/50 = 5.76.
        let p = chi_square_p_value(&[62, 50, 38], &[50.0; 3]).unwrap();
        assert!((p - (-2.88_f64).exp()).abs() < 1e-12, "{p}");
        assert!(chi_square_p_value(&[1], &[1.0, 2.0]).is_err());
        assert!(chi_square_p_value(&[1, 2], &[0.0, 2.0]).is_err());
    }

    #[test]
    fn kolmogorov_distribution_values() {
        // Kolmogorov limit distribution critical values (standard tables, e.g. Smirnov 1948):
        // Q(1.3581) = 0.05, Q(1.6276) = 0.01, Q(1.2238) = 0.10 (values from memory). Large n so
        // the correction vanishes.
        let n = 100_000_000u64;
        let scale = (n as f64).sqrt() + 0.12 + 0.11 / (n as f64).sqrt();
        for (lambda, p) in [(1.3581, 0.05), (1.6276, 0.01), (1.2238, 0.10)] {
            assert!((ks_p_value(lambda / scale, n) - p).abs() < 2e-4, "{lambda}");
        }
        // Both series agree near the switch point λ = 1: Q(1) = 0.2699996 (from the k-series).
        let q1 = ks_p_value(1.0 / scale, n);
        assert!((q1 - 0.2699996).abs() < 1e-6, "{q1}");
        let q_below = ks_p_value(0.999_999 / scale, n);
        assert!((q_below - q1).abs() < 1e-5);
    }

    #[test]
    fn ks_statistic_of_grid() {
        // Samples at the midpoints (i + 1/2)/n of U(0,1) give D = 1/(2n) exactly.
        let n = 10;
        let xs: Vec<f64> = (0..n).map(|i| (i as f64 + 0.5) / n as f64).collect();
        let d = ks_statistic(&xs, |x| x.clamp(0.0, 1.0));
        assert!((d - 0.05).abs() < 1e-12);
    }
}

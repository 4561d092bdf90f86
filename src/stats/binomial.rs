//! Exact (Clopper–Pearson) binomial confidence interval.
//!
//! Clopper C.J. & Pearson E.S. (1934), "The use of confidence or fiducial limits illustrated in
//! the case of the binomial", Biometrika 26, 404–413. The bounds are quantiles of Beta
//! distributions; we find them by bisection on the regularized incomplete beta function
//! rather than with `statrs`' Beta inverse CDF, which is inaccurate for large trial counts and
//! may not return near 1e7 trials.
//!
//! The incomplete beta is evaluated here ([`beta_reg`]) with the same modified-Lentz continued
//! fraction as `statrs::function::beta::beta_reg`, but with an iteration cap that grows with
//! `sqrt(a + b)`. statrs stops after 140 terms and silently returns the unconverged value,
//! which is badly wrong when both `a` and `b` are large and `x` is near the mean (for example
//! 5e7 successes in 1e8 trials gave an inverted interval). Our version reports
//! non-convergence as an error instead.

use super::{check_confidence, StatsError};
use statrs::function::gamma::ln_gamma;

/// Two-sided Clopper–Pearson interval `(low, high)` for a binomial proportion.
///
/// `low` solves `P(X >= k | p) = (1 - confidence)/2`, i.e. `I_p(k, n-k+1) = alpha/2`;
/// `high` solves `P(X <= k | p) = alpha/2`, i.e. `I_p(k+1, n-k) = 1 - alpha/2`.
/// With `k = 0` the lower bound is 0; with `k = n` the upper bound is 1.
///
/// Accuracy: bisection runs until the bracket cannot shrink in floating point (at most 200
/// halvings), so the result is limited by `beta_reg` itself (about 1e-8 relative or better).
///
/// # Errors
/// [`StatsError::BadConfidence`] unless `0 < confidence < 1`; [`StatsError::BadCount`] if
/// `trials == 0` or `successes > trials`; [`StatsError::NoConvergence`] if `beta_reg` fails.
pub fn clopper_pearson(
    successes: u64,
    trials: u64,
    confidence: f64,
) -> Result<(f64, f64), StatsError> {
    check_confidence(confidence)?;
    if trials == 0 || successes > trials {
        return Err(StatsError::BadCount { successes, trials });
    }
    let alpha = 1.0 - confidence;
    let k = successes as f64;
    let n = trials as f64;
    let low = if successes == 0 {
        0.0
    } else {
        // I_p(k, n-k+1) increases with p.
        bisect_increasing(|p| beta_reg(k, n - k + 1.0, p), alpha / 2.0)?
    };
    let high = if successes == trials {
        1.0
    } else {
        bisect_increasing(|p| beta_reg(k + 1.0, n - k, p), 1.0 - alpha / 2.0)?
    };
    Ok((low, high))
}

/// Regularized incomplete beta `I_x(a, b)` for `a, b > 0`, `0 <= x <= 1`, by the continued
/// fraction of Press et al., Numerical Recipes (3rd ed.) §6.4, evaluated with the modified
/// Lentz method, on whichever of `I_x(a, b)` and `1 - I_{1-x}(b, a)` converges faster.
///
/// Accuracy is limited by the log-gamma prefactor (a difference of large `ln Γ` values): about
/// 1e-13 at `a + b ~ 10`, 1e-9 at `1e6`, 1e-8 at `1e8` (measured against `I_0.5(a, a) = 1/2`). Returns `Err(())` on invalid arguments or
/// if the fraction has not converged after `1000 + 20 sqrt(a + b)` terms.
pub(crate) fn beta_reg(a: f64, b: f64, x: f64) -> Result<f64, ()> {
    let valid = a > 0.0 && b > 0.0 && a.is_finite() && b.is_finite() && (0.0..=1.0).contains(&x);
    if !valid {
        return Err(());
    }
    if x == 0.0 {
        return Ok(0.0);
    }
    if x == 1.0 {
        return Ok(1.0);
    }
    let log_front = ln_gamma(a + b) - ln_gamma(a) - ln_gamma(b) + a * x.ln() + b * (-x).ln_1p();
    let front = log_front.exp();
    if x < (a + 1.0) / (a + b + 2.0) {
        Ok(front * beta_cf(a, b, x)? / a)
    } else {
        Ok(1.0 - front * beta_cf(b, a, 1.0 - x)? / b)
    }
}

fn beta_cf(a: f64, b: f64, x: f64) -> Result<f64, ()> {
    const EPS: f64 = 1e-16;
    const FPMIN: f64 = 1e-300;
    let max_terms = 1000 + (20.0 * (a + b).sqrt()) as u64;
    let (qab, qap, qam) = (a + b, a + 1.0, a - 1.0);
    let mut c = 1.0;
    let mut d = 1.0 - qab * x / qap;
    if d.abs() < FPMIN {
        d = FPMIN;
    }
    d = 1.0 / d;
    let mut h = d;
    for m in 1..=max_terms {
        let m = m as f64;
        let m2 = 2.0 * m;
        let aa = m * (b - m) * x / ((qam + m2) * (a + m2));
        d = 1.0 + aa * d;
        if d.abs() < FPMIN {
            d = FPMIN;
        }
        c = 1.0 + aa / c;
        if c.abs() < FPMIN {
            c = FPMIN;
        }
        d = 1.0 / d;
        h *= d * c;
        let aa = -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2));
        d = 1.0 + aa * d;
        if d.abs() < FPMIN {
            d = FPMIN;
        }
        c = 1.0 + aa / c;
        if c.abs() < FPMIN {
            c = FPMIN;
        }
        d = 1.0 / d;
        let del = d * c;
        h *= del;
        if (del - 1.0).abs() <= EPS {
            return Ok(h);
        }
    }
    Err(())
}

/// Root of `f(p) = target` on [0, 1] for `f` increasing from 0 to 1.
fn bisect_increasing<E>(f: impl Fn(f64) -> Result<f64, E>, target: f64) -> Result<f64, StatsError> {
    let (mut lo, mut hi) = (0.0_f64, 1.0_f64);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        let value = f(mid).map_err(|_| StatsError::NoConvergence("regularized incomplete beta"))?;
        if value < target {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Ok(0.5 * (lo + hi))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn check_value_3_of_1000() {
        // Check value from the project's crate notes (independent reference computation):
        // 3 of 1000 at 95 % -> (6.190999e-4, 8.742023e-3).
        let (lo, hi) = clopper_pearson(3, 1000, 0.95).unwrap();
        assert!((lo / 6.190999e-4 - 1.0).abs() < 2e-7, "{lo}");
        assert!((hi / 8.742023e-3 - 1.0).abs() < 2e-7, "{hi}");
    }

    #[test]
    fn zero_of_n_matches_closed_form() {
        // k = 0: high = 1 - (alpha/2)^(1/n) exactly (Clopper & Pearson 1934; the "rule of three"
        // is its large-n approximation).
        let (lo, hi) = clopper_pearson(0, 50, 0.95).unwrap();
        assert_eq!(lo, 0.0);
        let exact = 1.0 - 0.025_f64.powf(1.0 / 50.0);
        assert!((hi / exact - 1.0).abs() < 1e-9, "{hi} vs {exact}");
        let (lo, hi) = clopper_pearson(50, 50, 0.95).unwrap();
        assert_eq!(hi, 1.0);
        assert!((lo - 0.025_f64.powf(1.0 / 50.0)).abs() < 1e-9);
    }

    #[test]
    fn beta_reg_agrees_with_statrs_where_statrs_converges() {
        // Independent implementation: statrs' beta_reg, for small parameters where its
        // 140-term cap is ample.
        for &(a, b, x) in &[
            (0.5, 0.5, 0.3),
            (2.0, 3.0, 0.4),
            (3.0, 998.0, 0.002),
            (10.0, 1.0, 0.9),
        ] {
            let ours = beta_reg(a, b, x).unwrap();
            let theirs = statrs::function::beta::beta_reg(a, b, x);
            assert!(
                (ours - theirs).abs() < 1e-13,
                "{a} {b} {x}: {ours} vs {theirs}"
            );
        }
        // Closed form: I_x(1, b) = 1 - (1-x)^b.
        let v = beta_reg(1.0, 1e6, 2e-6).unwrap();
        assert!((v - (1.0 - (1.0 - 2e-6_f64).powf(1e6))).abs() < 1e-8);
        // Symmetry at the median of Beta(a, a): I_0.5(a, a) = 1/2, here with a = 5e7.
        assert!((beta_reg(5e7, 5e7, 0.5).unwrap() - 0.5).abs() < 1e-7);
    }

    #[test]
    fn mirror_symmetry_and_wilson_containment() {
        // Clopper-Pearson is symmetric under k -> n-k: (lo, hi)(k) = (1-hi, 1-lo)(n-k)
        // (Clopper & Pearson 1934, by the Beta(a,b)/Beta(b,a) reflection).
        for &(k, n) in &[(3u64, 1000u64), (17, 40), (1, 7)] {
            let (lo, hi) = clopper_pearson(k, n, 0.9).unwrap();
            let (lo2, hi2) = clopper_pearson(n - k, n, 0.9).unwrap();
            assert!((lo - (1.0 - hi2)).abs() < 1e-12 && (hi - (1.0 - lo2)).abs() < 1e-12);
        }
        // The exact interval is conservative: for these cases it is wider than the Wilson score
        // interval (Wilson E.B. (1927), JASA 22, 209-212), computed here independently, and the
        // two overlap heavily. (Containment does not hold in general: at 3/1000 Wilson's upper
        // end, 8.79e-3, lies above Clopper-Pearson's 8.74e-3.)
        let z = 1.959963984540054; // standard normal 97.5 % quantile
        for &(k, n) in &[(3u64, 1000u64), (17, 40), (1, 7), (50, 100)] {
            let (kf, nf) = (k as f64, n as f64);
            let ph = kf / nf;
            let centre = (ph + z * z / (2.0 * nf)) / (1.0 + z * z / nf);
            let half =
                z / (1.0 + z * z / nf) * (ph * (1.0 - ph) / nf + z * z / (4.0 * nf * nf)).sqrt();
            let (lo, hi) = clopper_pearson(k, n, 0.95).unwrap();
            assert!(hi - lo > 2.0 * half, "{k}/{n}");
            let overlap = hi.min(centre + half) - lo.max(centre - half);
            assert!(overlap > 0.8 * 2.0 * half, "{k}/{n}");
        }
    }

    #[test]
    fn large_n_returns() {
        let (lo, hi) = clopper_pearson(10, 100_000_000, 0.95).unwrap();
        assert!(lo > 0.0 && lo < 1e-7 && hi > 1e-7 && hi < 1e-6, "{lo} {hi}");
        let (lo, hi) = clopper_pearson(50_000_000, 100_000_000, 0.99).unwrap();
        assert!(lo < 0.5 && hi > 0.5 && hi - lo < 1e-3);
    }

    #[test]
    fn rejects_bad_input() {
        assert!(clopper_pearson(3, 2, 0.95).is_err());
        assert!(clopper_pearson(0, 0, 0.95).is_err());
        assert!(clopper_pearson(1, 2, 1.0).is_err());
        assert!(clopper_pearson(1, 2, f64::NAN).is_err());
    }
}

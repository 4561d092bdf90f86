//! Exact interval for the mean of a Poisson count.

/// Exact (Garwood 1936) two-sided interval for the mean of a Poisson count `k`:
/// `low` solves P(X >= k | mu) = alpha/2 and `high` solves P(X <= k | mu) = alpha/2.
/// With P(X <= k | mu) = Q(k + 1, mu) (regularised upper incomplete gamma), both are found by
/// bisection on `statrs`' regularised lower incomplete gamma.
/// Garwood F. (1936), "Fiducial limits for the Poisson distribution", Biometrika 28, 437–442.
pub fn poisson_interval(k: u64, confidence: f64) -> (f64, f64) {
    use statrs::function::gamma::gamma_lr;
    let alpha = (1.0 - confidence).clamp(1e-12, 1.0);
    let kf = k as f64;
    // Find mu with f(mu) = target for f increasing in mu.
    let solve = |f: &dyn Fn(f64) -> f64, target: f64| {
        let (mut lo, mut hi) = (0.0f64, kf + 10.0 * (kf + 1.0).sqrt() + 10.0);
        while f(hi) < target {
            hi *= 2.0;
        }
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if mid <= lo || mid >= hi {
                break;
            }
            if f(mid) < target {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        0.5 * (lo + hi)
    };
    let low = if k == 0 {
        0.0
    } else {
        // P(X >= k | mu) = P(k, mu) (regularised lower gamma), increasing in mu.
        solve(&|mu| gamma_lr(kf, mu), alpha / 2.0)
    };
    // P(X <= k | mu) = 1 - P(k + 1, mu) = alpha/2  <=>  P(k + 1, mu) = 1 - alpha/2.
    let high = solve(&|mu| gamma_lr(kf + 1.0, mu), 1.0 - alpha / 2.0);
    (low, high)
}

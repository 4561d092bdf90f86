//! The damage-memory estimate: a bay's loss probability when sub-critical holes are
//! remembered, from the order statistics of its segments' worst holes.
//!
//! Nothing here knows about tethers' physics: a bay is `N` segments, a decreasing list of
//! critical removed widths, and a rate function `H(x)` (per segment, per second) of strikes that
//! remove a width of at least `x`. The physical inputs come from [`crate::model::damage_memory`].
//!
//! # No repair: exact
//! Strikes on one segment that remove at least `x` form a Poisson process of rate `H(x)`, and a
//! segment's strength is set by its worst hole (holes at different places along a bay do not
//! add), so the worst hole by time `t`, `M(t)`, is the running maximum of a marked Poisson
//! process: `P(M(t) < x) = exp(−H(x) t)`. Different segments are independent.
//!
//! With `k` segments cut, each survivor fails when its worst hole is at least `h_k`; equal (or
//! no) load sharing makes the critical widths shrink as ribbons are lost,
//! `h_0 > h_1 > … > h_{m−1} > 0`, and `m` cuts lose the bay (`h_m = 0`: the survivors are
//! overloaded without a hole, or `m = N`). A cascade is followed to a stable state, so at any
//! time the number of cut segments is the smallest fixed point
//!
//! `K = min { k >= 0 : c_k <= k }`, with `c_k = #{segments with M >= h_k}`
//!
//! (start from no cut; cutting every segment with `M >= h_k` moves the state to `c_k`; repeat).
//! Holes only grow and the `h_k` only shrink, so `K(t)` never decreases and a cut segment stays
//! cut: **without repair the state at `T` depends only on the worst holes at `T`**, whatever
//! the order of the strikes. The bay is lost by `T` iff `c_k >= k + 1` for every `k < m`.
//! The counts `c_0 <= c_1 <= …` are those of `N` independent draws falling above each
//! threshold, so the probability follows from a recursion over thresholds: given `c_k`, the
//! `N − c_k` segments below `h_k` each lie above `h_{k+1}` with probability
//! `1 − exp(−(H(h_{k+1}) − H(h_k)) t)` (binomial step). Every term is a product of positive
//! numbers formed with `expm1`, so a probability of 1e-20 keeps its full relative accuracy.
//! This is [`cascade_outcome`] with no segment already cut.
//!
//! # With repair: an approximation
//! With repair a cut segment is spliced (a new segment) while its holed neighbours keep their
//! damage. We treat each cut that starts from an intact bay (a *trigger*: a strike removing at
//! least `h_0`, rate `N H(h_0)`) as a Poisson event at time `s`. At that moment the other
//! `N − 1` segments carry the holes of their age `s`, conditioned on being below `h_0`
//! (`P(M < x | M < h_0) = exp(−(H(x) − H(h_0)) s)`), and the trigger's redistribution cascades
//! through them at once ([`cascade_outcome`] with one segment already cut). If the cascade
//! stops at `k < m` cut segments, the bay is lost before it is repaired back to intact with the
//! memoryless chain's first-passage probability `r_k` of reaching `m` before `0` (birth rates
//! `λ_j`, repair rates `μ_j`; gambler's-ruin form, Karlin & Taylor 1975, *A First Course in
//! Stochastic Processes*, ch. 4 — [MEMORY] for the chapter). So
//!
//! `P(loss by T) = 1 − exp(−∫_0^T N H(h_0) [P_cascade(s) + Σ_k P_stop(k, s) r_k] ds)`.
//!
//! Approximations, all stated with the number: (1) every segment is as old as the mission
//! (splices renew only the few cut segments; this slightly overstates the latent damage);
//! (2) holes made during a repair window cut only through the memoryless chain (they are not
//! combined with the old holes of the same window); (3) triggers are rare and independent
//! (a bay is intact between them); (4) exponential repair, no fleet contention. Setting the
//! survivors' holes to zero (`P_cascade = 0`, stop at `k = 1`) gives the *direct-cut* part of
//! the same expression, `∫ N H(h_0) r_1 ds`, which is the memoryless mechanism; the rest is
//! the latent-damage part.

/// Rate of strikes per segment that remove a width of at least `x_m`, per second.
pub trait HoleRate {
    /// `H(x)`, 1/s per segment; non-increasing in `x`.
    fn hole_rate_at_least_per_s(&self, x_m: f64) -> f64;
}

impl<F: Fn(f64) -> f64> HoleRate for F {
    fn hole_rate_at_least_per_s(&self, x_m: f64) -> f64 {
        self(x_m)
    }
}

/// Where a cascade from the segments' worst holes ends.
#[derive(Debug, Clone, PartialEq)]
pub struct CascadeOutcome {
    /// `stop[i]`: probability that the bay settles with `already + i` cut segments.
    pub stop: Vec<f64>,
    /// Probability that no stable state below `m` exists (the bay is lost).
    pub loss: f64,
}

/// Binomial probability `C(n, j) p^j q^(n−j)` with `p` and `q = 1 − p` given separately (so
/// that neither is formed as a difference).
fn binomial_pmf(n: usize, j: usize, p: f64, q: f64) -> f64 {
    if j > n {
        return 0.0;
    }
    let mut c = 1.0f64;
    for i in 0..j {
        c = c * (n - i) as f64 / (i + 1) as f64;
    }
    let pj = if j == 0 { 1.0 } else { p.powi(j as i32) };
    let qn = if n == j { 1.0 } else { q.powi((n - j) as i32) };
    c * pj * qn
}

/// The cascade among `n` independent segments, `already` segments being cut, against the
/// thresholds `h_already > … > h_{m−1}` given through their cumulative hazards:
/// `exposure[i] = Λ_i >= 0` with `P(M >= h_{already+i}) = 1 − exp(−Λ_i)`, non-decreasing in
/// `i` (module notes). The bay settles at the first `k` with `#{M >= h_k} <= k − already`.
pub fn cascade_outcome(n: usize, already: usize, exposure: &[f64]) -> CascadeOutcome {
    let levels = exposure.len();
    let mut stop = vec![0.0; levels];
    // alive[c]: probability of c segments at or above the current threshold, not yet stopped.
    let mut alive = vec![0.0; n + 1];
    if levels == 0 {
        return CascadeOutcome { stop, loss: 1.0 };
    }
    // First threshold: binomial with p = 1 − exp(−Λ_0).
    let lam0 = exposure[0].max(0.0);
    let (p0, q0) = (-(-lam0).exp_m1(), (-lam0).exp());
    for (c, a) in alive.iter_mut().enumerate() {
        *a = binomial_pmf(n, c, p0, q0);
    }
    let mut prev = lam0;
    for (i, &lam) in exposure.iter().enumerate() {
        if i > 0 {
            // Step to the next (lower) threshold: each of the n − c segments below the previous
            // one lies above this one with p = 1 − exp(−(Λ_i − Λ_{i−1})).
            let d = (lam - prev).max(0.0);
            prev = lam.max(prev);
            let (p, q) = (-(-d).exp_m1(), (-d).exp());
            let mut next = vec![0.0; n + 1];
            for (c, &a) in alive.iter().enumerate() {
                if a == 0.0 {
                    continue;
                }
                for j in 0..=(n - c) {
                    next[c + j] += a * binomial_pmf(n - c, j, p, q);
                }
            }
            alive = next;
        }
        // Stable at k = already + i iff c <= i.
        for a in alive.iter_mut().take(i.min(n) + 1) {
            stop[i] += *a;
            *a = 0.0;
        }
        let _ = already;
    }
    CascadeOutcome {
        stop,
        loss: alive.iter().sum(),
    }
}

/// Exact no-repair loss probability of one bay by `t_s` (module notes): `n` segments,
/// critical widths `critical_m` (`h_0 > … > h_{m−1} > 0`; `m` cuts lose the bay).
pub fn no_repair_loss_probability(
    n: usize,
    critical_m: &[f64],
    rate: &dyn HoleRate,
    t_s: f64,
) -> f64 {
    if critical_m.is_empty() {
        return 1.0;
    }
    let exposure: Vec<f64> = critical_m
        .iter()
        .map(|&h| rate.hole_rate_at_least_per_s(h) * t_s)
        .collect();
    cascade_outcome(n, 0, &exposure).loss
}

/// `r_k`, k = 1..m−1: probability that a birth–death chain with births `lambda[j]` and deaths
/// `mu[j]` (state `j`), started in `k`, reaches `m` before `0` (gambler's-ruin form
/// `Σ_{i<k} ρ_i / Σ_{i<m} ρ_i`, `ρ_i = Π_{j=1..i} μ_j/λ_j`, evaluated in logarithms).
/// Index 0 of the result is unused (0).
pub fn reach_top_before_zero(lambda: &[f64], mu: &[f64]) -> Vec<f64> {
    let m = lambda.len();
    let mut log_rho = vec![0.0f64; m];
    for i in 1..m {
        log_rho[i] = log_rho[i - 1] + (mu[i].max(0.0)).ln() - lambda[i].ln();
    }
    let top = log_rho
        .iter()
        .copied()
        .filter(|x| !x.is_nan())
        .fold(f64::NEG_INFINITY, f64::max);
    let w: Vec<f64> = log_rho
        .iter()
        .map(|&x| if x.is_nan() { 0.0 } else { (x - top).exp() })
        .collect();
    let total: f64 = w.iter().sum();
    let mut out = vec![0.0; m];
    let mut acc = 0.0;
    for k in 1..m {
        acc += w[k - 1];
        out[k] = if total > 0.0 { acc / total } else { 1.0 };
    }
    out
}

/// One bay for the damage-memory estimate.
#[derive(Debug, Clone)]
pub struct MemoryBay<R: HoleRate> {
    /// Segments (ribbons) in the bay.
    pub ribbons: usize,
    /// Critical removed widths `h_0 > … > h_{m−1} > 0`, m.
    pub critical_m: Vec<f64>,
    /// `H(x)` of the bay, per segment.
    pub rate: R,
    /// Repair rate out of states `1..m−1` (index = cut segments; index 0 unused), 1/s; `None`
    /// without repair.
    pub repair_rate_per_s: Option<Vec<f64>>,
}

/// A bay's damage-memory result at the requested times.
#[derive(Debug, Clone, PartialEq)]
pub struct MemoryBayResult {
    /// Loss probability at each time.
    pub loss_probability: Vec<f64>,
    /// The direct-cut (memoryless) part at each time, same method.
    pub direct_loss_probability: Vec<f64>,
}

/// Gauss–Legendre nodes and weights on [−1, 1], 8 points (Abramowitz & Stegun 1964,
/// Table 25.4).
const GL8: [(f64, f64); 8] = [
    (-0.960_289_856_497_536_3, 0.101_228_536_290_376_3),
    (-0.796_666_477_413_626_7, 0.222_381_034_453_374_5),
    (-0.525_532_409_916_329, 0.313_706_645_877_887_3),
    (-0.183_434_642_495_649_8, 0.362_683_783_378_362),
    (0.183_434_642_495_649_8, 0.362_683_783_378_362),
    (0.525_532_409_916_329, 0.313_706_645_877_887_3),
    (0.796_666_477_413_626_7, 0.222_381_034_453_374_5),
    (0.960_289_856_497_536_3, 0.101_228_536_290_376_3),
];

/// Sub-intervals per requested time step in the repair integral.
const PANELS_PER_STEP: usize = 8;

impl<R: HoleRate> MemoryBay<R> {
    /// Loss probability (and its direct-cut part) at each of `times_s` (non-decreasing).
    pub fn solve(&self, times_s: &[f64]) -> MemoryBayResult {
        let m = self.critical_m.len();
        let n = self.ribbons;
        let h = &self.critical_m;
        if m == 0 {
            return MemoryBayResult {
                loss_probability: vec![1.0; times_s.len()],
                direct_loss_probability: vec![1.0; times_s.len()],
            };
        }
        let rates: Vec<f64> = h
            .iter()
            .map(|&x| self.rate.hole_rate_at_least_per_s(x).max(0.0))
            .collect();
        let repair = self
            .repair_rate_per_s
            .as_ref()
            .filter(|r| r.iter().skip(1).take(m.saturating_sub(1)).all(|&x| x > 0.0));
        let Some(mu) = repair else {
            // Exact (no repair).
            let lam: Vec<f64> = rates
                .iter()
                .enumerate()
                .map(|(k, r)| (n - k) as f64 * r)
                .collect();
            let loss = times_s
                .iter()
                .map(|&t| {
                    let exposure: Vec<f64> = rates.iter().map(|r| r * t).collect();
                    cascade_outcome(n, 0, &exposure).loss
                })
                .collect();
            let direct = pure_birth_absorption(&lam, times_s);
            return MemoryBayResult {
                loss_probability: loss,
                direct_loss_probability: direct,
            };
        };
        // With repair (module notes).
        let lam: Vec<f64> = rates
            .iter()
            .enumerate()
            .map(|(k, r)| (n - k) as f64 * r)
            .collect();
        let mut mu_full = vec![0.0; m];
        mu_full[1..m].copy_from_slice(&mu[1..m]);
        let r = if m > 1 {
            reach_top_before_zero(&lam, &mu_full)
        } else {
            vec![0.0]
        };
        let trigger = n as f64 * rates[0];
        let intensity = |s: f64| -> (f64, f64) {
            if m == 1 {
                return (trigger, trigger);
            }
            let exposure: Vec<f64> = rates[1..].iter().map(|&x| (x - rates[0]) * s).collect();
            let c = cascade_outcome(n - 1, 1, &exposure);
            let mut p = c.loss;
            for (i, &st) in c.stop.iter().enumerate() {
                p += st * r[1 + i];
            }
            (trigger * p, trigger * r[1])
        };
        let mut out = Vec::with_capacity(times_s.len());
        let mut direct = Vec::with_capacity(times_s.len());
        let (mut t0, mut acc, mut acc_d) = (0.0f64, 0.0f64, 0.0f64);
        for &t in times_s {
            let t = t.max(t0);
            let step = (t - t0) / PANELS_PER_STEP as f64;
            for p in 0..PANELS_PER_STEP {
                let a = t0 + p as f64 * step;
                for &(x, w) in &GL8 {
                    let s = a + 0.5 * step * (1.0 + x);
                    let (f, fd) = intensity(s);
                    acc += 0.5 * step * w * f;
                    acc_d += 0.5 * step * w * fd;
                }
            }
            t0 = t;
            out.push(-(-acc).exp_m1());
            direct.push(-(-acc_d).exp_m1());
        }
        MemoryBayResult {
            loss_probability: out,
            direct_loss_probability: direct,
        }
    }
}

/// Probability that a pure-birth chain `0 → 1 → … → m` with rates `lambda[k]` is absorbed in
/// `m` by each time: the memoryless no-repair bay (the shared uniformization routine).
fn pure_birth_absorption(lambda: &[f64], times_s: &[f64]) -> Vec<f64> {
    let zeros = vec![0.0; lambda.len()];
    match super::estimate::BayChain::new(lambda.to_vec(), zeros) {
        Ok(c) => c.loss_probabilities(times_s),
        Err(_) => vec![f64::NAN; times_s.len()],
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn single_threshold_is_the_binomial_tail() {
        // m = 1: the bay is lost iff at least one segment has M >= h_0:
        // 1 − exp(−N H t) (closed form).
        let lam = 0.3;
        let c = cascade_outcome(5, 0, &[lam]);
        assert!((c.loss - (1.0 - (-5.0 * lam).exp())).abs() < 1e-14);
        assert!((c.stop[0] - (-5.0 * lam).exp()).abs() < 1e-14);
    }

    #[test]
    fn probabilities_add_to_one() {
        let c = cascade_outcome(6, 0, &[0.01, 0.2, 0.9, 2.0]);
        let total: f64 = c.stop.iter().sum::<f64>() + c.loss;
        assert!((total - 1.0).abs() < 1e-13, "{total}");
    }

    #[test]
    fn gamblers_ruin_symmetric_walk() {
        // Equal birth and death rates: r_k = k/m (Karlin & Taylor; the symmetric random walk).
        let r = reach_top_before_zero(&[1.0; 5], &[0.0, 1.0, 1.0, 1.0, 1.0]);
        for (k, &v) in r.iter().enumerate().skip(1) {
            assert!((v - k as f64 / 5.0).abs() < 1e-14, "{k}: {v}");
        }
    }
}

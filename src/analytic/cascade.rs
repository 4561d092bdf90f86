//! Probability that an equal-sharing cascade severs a bay whose segments' worst holes are
//! independent but **not** identically distributed.
//!
//! [`super::damage_memory`] answers the same question for identically distributed holes with a
//! binomial recursion over the thresholds. Inside a history the segments of a bay differ: some
//! kept a hole drawn at an earlier state change, some were spliced and are new, and each has its
//! own critical width. This module takes the distribution of each segment's worst hole over the
//! thresholds and sums exactly over all outcomes.
//!
//! # The event
//! `m` segments are intact after a cut. With `k` of them cut by the cascade, each survivor
//! fails when its worst hole is at least `h_k` (`h_0 > h_1 > … > h_{m−1}`; equal load sharing
//! makes the thresholds depend only on how many are cut). As in [`super::damage_memory`], the
//! cascade stops at the smallest `k` with `c_k <= k`, `c_k = #{segments with M >= h_k}`, so the
//! bay is severed (all `m` cut) iff
//!
//! `c_k >= k + 1` for every `k = 0, …, m − 1`.
//!
//! # The sum
//! Each segment falls into one *bin* `b` (`b = min{k : M >= h_k}`, or `m` below every
//! threshold) with known probabilities `p_i(b)`, independently of the others; `c_k` counts the
//! segments in bins `<= k`. Adding the segments one at a time, the condition needs only the
//! counts capped at the level each must reach, `ĉ_k = min(c_k, k + 1)`. The capped vectors are
//! non-decreasing with `ĉ_k <= k + 1`, so there are Catalan-many of them (`C_{m+1}`: 14 for
//! `m = 3`, 132 for `m = 5`, 4862 for `m = 8`). A dynamic program over those states, built once
//! ([`SeverTable::new`]), gives the exact probability in `O(m · C_{m+1} · (m + 1))` with no
//! subtraction: every term is a product of bin probabilities, so a probability of 1e-12 keeps
//! its relative accuracy when the bin probabilities are formed accurately by the caller.
//!
//! The engine uses it for the conditional Monte Carlo at cuts (`simulate
//! --condition-cascades`); the tests check it against an enumeration of every bin assignment
//! with a literal cascade.

use std::collections::HashMap;

/// Largest number of intact segments the table covers.
pub const MAX_SEGMENTS: usize = 8;

/// Transition tables of the capped-count dynamic program, one per number of segments.
#[derive(Debug, Clone)]
pub struct SeverTable {
    /// `levels[m - 1]` for `m` segments.
    levels: Vec<Level>,
}

#[derive(Debug, Clone)]
struct Level {
    states: usize,
    /// `next[s * (m + 1) + b]`: the state after adding a segment in bin `b` to state `s`.
    next: Vec<u16>,
    /// The state in which every threshold count reached its level: severed.
    severed: usize,
}

impl Default for SeverTable {
    fn default() -> Self {
        Self::new()
    }
}

impl SeverTable {
    /// Build the tables for 1 to [`MAX_SEGMENTS`] segments (once per engine; about 0.3 MB).
    pub fn new() -> Self {
        SeverTable {
            levels: (1..=MAX_SEGMENTS).map(Level::build).collect(),
        }
    }

    /// The largest number of states of any level: the length each half of the work buffer
    /// of [`Self::sever_probability`] needs.
    pub fn max_states(&self) -> usize {
        self.levels.iter().map(|l| l.states).max().unwrap_or(1)
    }

    /// Probability that all `m` segments are cut. `bins[i * (m + 1) + b]` is the probability
    /// that segment `i`'s worst hole lies in bin `b` (each row sums to 1). `work` needs at
    /// least `2 * max_states()` entries; nothing is allocated. `None` when `m` is 0 or above
    /// [`MAX_SEGMENTS`], or the slices are too short.
    pub fn sever_probability(&self, m: usize, bins: &[f64], work: &mut [f64]) -> Option<f64> {
        if m == 0 || m > MAX_SEGMENTS || bins.len() < m * (m + 1) {
            return None;
        }
        let level = &self.levels[m - 1];
        let s_n = level.states;
        if work.len() < 2 * s_n {
            return None;
        }
        let (cur, nxt) = work.split_at_mut(s_n);
        let nxt = &mut nxt[..s_n];
        cur.fill(0.0);
        cur[0] = 1.0;
        let w = m + 1;
        for i in 0..m {
            let p = &bins[i * w..(i + 1) * w];
            nxt.fill(0.0);
            for (s, &ps) in cur.iter().enumerate() {
                if ps == 0.0 {
                    continue;
                }
                let row = &level.next[s * w..(s + 1) * w];
                for (b, &to) in row.iter().enumerate() {
                    nxt[to as usize] += ps * p[b];
                }
            }
            cur.copy_from_slice(nxt);
        }
        Some(cur[level.severed])
    }
}

/// One segment's part probabilities from `ln_f[k] = ln P(M < h_k)`, k < m (non-increasing):
/// `row[0] = P(M >= h_0)`, `row[k] = P(h_k <= M < h_{k-1})`, `row[m] = P(M < h_{m-1})`, formed
/// without cancellation (`-inf` entries: the hole already reaches that threshold). `row` has
/// `m + 1` entries.
pub fn parts_from_ln_f(ln_f: &[f64], row: &mut [f64]) {
    let m = ln_f.len();
    row[0] = -ln_f[0].exp_m1();
    for k in 1..m {
        row[k] = if ln_f[k - 1] == f64::NEG_INFINITY {
            0.0
        } else if ln_f[k] == f64::NEG_INFINITY {
            ln_f[k - 1].exp()
        } else {
            ln_f[k - 1].exp() * -(ln_f[k] - ln_f[k - 1]).min(0.0).exp_m1()
        };
    }
    row[m] = ln_f[m - 1].exp();
}

/// [`SeverTable::sever_probability`] when all `m` segments have the same distribution, from
/// `ln_below[k] = ln P(M < h_k)` (non-increasing in `k`; `-inf` when every segment reaches
/// `h_k`): the binomial recursion over thresholds of [`super::damage_memory`], in `O(m^3)` and
/// without allocation. `None` when `m` is 0 or above [`MAX_SEGMENTS`].
pub fn sever_probability_identical(m: usize, ln_below: &[f64]) -> Option<f64> {
    if m == 0 || m > MAX_SEGMENTS || ln_below.len() < m {
        return None;
    }
    // alive[c]: probability that c segments reach the current threshold and the cascade has
    // not stopped yet.
    let mut alive = [0.0f64; MAX_SEGMENTS + 1];
    let mut next = [0.0f64; MAX_SEGMENTS + 1];
    let mut prev = 0.0f64; // ln P(M < h_{k-1}), 0 before the first threshold
    for k in 0..m {
        // Step down to h_k: a segment below h_{k-1} reaches h_k with probability
        // p = 1 - P(M < h_k) / P(M < h_{k-1}).
        let d = (ln_below[k] - prev).min(0.0);
        let (p, q) = if d == f64::NEG_INFINITY || prev == f64::NEG_INFINITY {
            (1.0, 0.0)
        } else {
            (-d.exp_m1(), d.exp())
        };
        if k == 0 {
            for (c, a) in alive.iter_mut().enumerate().take(m + 1) {
                *a = binomial(m, c, p, q);
            }
        } else {
            next[..=m].fill(0.0);
            for c in 0..=m {
                let a = alive[c];
                if a == 0.0 {
                    continue;
                }
                for j in 0..=(m - c) {
                    next[c + j] += a * binomial(m - c, j, p, q);
                }
            }
            alive[..=m].copy_from_slice(&next[..=m]);
        }
        // The cascade stops at k cuts when at most k segments reach h_k.
        alive[..=k].fill(0.0);
        if prev != f64::NEG_INFINITY {
            prev = ln_below[k].min(prev);
        }
    }
    Some(alive[m])
}

/// `C(n, j) p^j q^(n - j)` with `p` and `q` given separately (neither formed as a difference).
fn binomial(n: usize, j: usize, p: f64, q: f64) -> f64 {
    if j > n {
        return 0.0;
    }
    let mut c = 1.0f64;
    for i in 0..j {
        c = c * (n - i) as f64 / (i + 1) as f64;
    }
    c * p.powi(j as i32) * q.powi((n - j) as i32)
}

impl Level {
    /// Enumerate the capped-count states reachable from "no segment yet" (breadth first, so
    /// state 0 is the start) and their transitions.
    fn build(m: usize) -> Level {
        // ĉ_k packed 4 bits per threshold (ĉ_k <= k + 1 <= 8).
        let get = |code: u32, k: usize| ((code >> (4 * k)) & 0xf) as usize;
        let add = |code: u32, b: usize| {
            let mut c = code;
            for k in b..m {
                let v = get(c, k);
                if v < k + 1 {
                    c += 1 << (4 * k);
                }
            }
            c
        };
        let mut index: HashMap<u32, u16> = HashMap::new();
        let mut codes = vec![0u32];
        index.insert(0, 0);
        let mut next = Vec::new();
        let mut s = 0;
        while s < codes.len() {
            let code = codes[s];
            for b in 0..=m {
                let to = add(code, b);
                let id = *index.entry(to).or_insert_with(|| {
                    codes.push(to);
                    (codes.len() - 1) as u16
                });
                next.push(id);
            }
            s += 1;
        }
        let full = (0..m).fold(0u32, |c, k| c | (((k + 1) as u32) << (4 * k)));
        // The full state is reachable (all segments in bin 0), so it is in the index.
        let severed = index.get(&full).copied().unwrap_or(0) as usize;
        Level {
            states: codes.len(),
            next,
            severed,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Independent answer: enumerate every assignment of segments to bins ((m + 1)^m cases),
    /// weight it by the product of the bin probabilities and follow the cascade literally
    /// (cut every intact segment in a bin <= the number cut so far, repeat until stable).
    fn enumerate(m: usize, bins: &[f64]) -> f64 {
        let w = m + 1;
        let mut total = 0.0;
        for case in 0..w.pow(m as u32) {
            let mut x = case;
            let mut prob = 1.0;
            let mut bin = vec![0; m];
            for (i, b) in bin.iter_mut().enumerate() {
                *b = x % w;
                x /= w;
                prob *= bins[i * w + *b];
            }
            let mut cut = vec![false; m];
            let mut k = 0;
            loop {
                let mut more = 0;
                for i in 0..m {
                    if !cut[i] && k < m && bin[i] <= k {
                        cut[i] = true;
                        more += 1;
                    }
                }
                if more == 0 {
                    break;
                }
                k += more;
            }
            if k == m {
                total += prob;
            }
        }
        total
    }

    /// A deterministic pseudo-random row of bin probabilities (a simple LCG: the check does
    /// not need good randomness, only varied rows).
    fn rows(m: usize, seed: u64) -> Vec<f64> {
        let mut s = seed;
        let mut out = Vec::new();
        for _ in 0..m {
            let mut row: Vec<f64> = (0..=m)
                .map(|_| {
                    s = s
                        .wrapping_mul(6364136223846793005)
                        .wrapping_add(1442695040888963407);
                    ((s >> 11) as f64 / (1u64 << 53) as f64).powi(3)
                })
                .collect();
            let sum: f64 = row.iter().sum();
            row.iter_mut().for_each(|p| *p /= sum);
            out.extend(row);
        }
        out
    }

    #[test]
    fn state_counts_are_catalan_numbers() {
        // C_{m+1}: 2, 5, 14, 42, 132, 429, 1430, 4862 (OEIS A000108).
        let t = SeverTable::new();
        let counts: Vec<usize> = t.levels.iter().map(|l| l.states).collect();
        assert_eq!(counts, [2, 5, 14, 42, 132, 429, 1430, 4862]);
        assert_eq!(t.max_states(), 4862);
    }

    #[test]
    fn matches_the_enumeration_of_every_bin_assignment() {
        let t = SeverTable::new();
        let mut work = vec![0.0; 2 * t.max_states()];
        for m in 1..=6 {
            for seed in 0..5 {
                let bins = rows(m, seed * 31 + m as u64);
                let dp = t.sever_probability(m, &bins, &mut work).unwrap();
                let brute = enumerate(m, &bins);
                assert!(
                    (dp - brute).abs() <= 1e-12 * brute.max(1e-300) + 1e-15,
                    "m {m} seed {seed}: {dp} vs {brute}"
                );
            }
        }
    }

    /// Hand-worked: two segments (m = 2), tails t_k = P(M >= h_k). Severed iff both reach
    /// h_1 and at least one reaches h_0: t1a t1b - (t1a - t0a)(t1b - t0b).
    #[test]
    fn two_segments_by_hand() {
        let (t0a, t1a, t0b, t1b) = (0.1, 0.4, 0.05, 0.3);
        let bins = [t0a, t1a - t0a, 1.0 - t1a, t0b, t1b - t0b, 1.0 - t1b];
        let t = SeverTable::new();
        let mut work = vec![0.0; 2 * t.max_states()];
        let p = t.sever_probability(2, &bins, &mut work).unwrap();
        let hand = t1a * t1b - (t1a - t0a) * (t1b - t0b);
        assert!((p - hand).abs() < 1e-15, "{p} vs {hand}");
    }

    /// Identically distributed segments: the binomial recursion of the damage-memory module
    /// ([`crate::analytic::damage_memory::cascade_outcome`], itself checked against brute force)
    /// gives the same severance probability.
    #[test]
    fn identical_segments_match_the_damage_memory_recursion() {
        // Exposures e_k = H(h_k) t: P(M < h_k) = exp(-e_k), increasing exposures.
        let exposure = [1e-4, 3e-3, 0.05, 0.4];
        let m = exposure.len();
        let f: Vec<f64> = exposure.iter().map(|e: &f64| (-e).exp()).collect();
        let mut row = vec![0.0; m + 1];
        row[0] = 1.0 - f[0];
        for b in 1..m {
            row[b] = f[b - 1] - f[b];
        }
        row[m] = f[m - 1];
        let bins: Vec<f64> = (0..m).flat_map(|_| row.clone()).collect();
        let t = SeverTable::new();
        let mut work = vec![0.0; 2 * t.max_states()];
        let p = t.sever_probability(m, &bins, &mut work).unwrap();
        let reference = crate::analytic::damage_memory::cascade_outcome(m, 0, &exposure).loss;
        assert!(
            (p - reference).abs() <= 1e-10 * reference,
            "{p} vs {reference}"
        );
    }

    #[test]
    fn out_of_range_sizes_give_none() {
        let t = SeverTable::new();
        let mut work = vec![0.0; 2 * t.max_states()];
        assert_eq!(t.sever_probability(0, &[], &mut work), None);
        assert_eq!(t.sever_probability(9, &[0.0; 90], &mut work), None);
        assert_eq!(t.sever_probability(2, &[0.5; 3], &mut work), None);
        let mut short = vec![0.0; 3];
        assert_eq!(t.sever_probability(2, &[0.5; 6], &mut short), None);
    }

    /// The identical-segment recursion equals the general sum on identical rows, including
    /// thresholds every segment already reaches (ln P = -inf).
    #[test]
    fn identical_recursion_matches_the_general_sum() {
        let t = SeverTable::new();
        let mut work = vec![0.0; 2 * t.max_states()];
        let cases: [&[f64]; 4] = [
            &[-1e-4, -3e-3, -0.05, -0.4],
            &[-1e-7, -2e-6, -1e-5, -3e-4, -1e-3],
            &[-0.2, -0.9, f64::NEG_INFINITY],
            &[-1e-3, -1e-3, -0.3],
        ];
        for ln_below in cases {
            let m = ln_below.len();
            let mut row = vec![0.0; m + 1];
            row[0] = -ln_below[0].exp_m1();
            for b in 1..m {
                row[b] = ln_below[b - 1].exp() - ln_below[b].exp();
            }
            row[m] = ln_below[m - 1].exp();
            let bins: Vec<f64> = (0..m).flat_map(|_| row.clone()).collect();
            let general = t.sever_probability(m, &bins, &mut work).unwrap();
            let fast = sever_probability_identical(m, ln_below).unwrap();
            assert!(
                (general - fast).abs() <= 1e-9 * general + 1e-300,
                "{ln_below:?}: {general} vs {fast}"
            );
        }
        assert_eq!(sever_probability_identical(0, &[]), None);
    }
}

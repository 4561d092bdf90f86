//! Load redistribution and failure cascades inside one bay.
//!
//! A bay holds up to [`MAX_RIBBONS`] parallel ribbons tied together by the cross-links at its
//! ends. When a segment is cut its tension must go to the bay's surviving ribbons; a
//! [`LoadSharing`] rule says how ([`EqualSharing`]: Daniels' equal load sharing;
//! [`LocalSharing`]: Harlow–Phoenix nearest-neighbour sharing). [`settle_bay`] follows the
//! resulting cascade (overloaded damaged ribbons failing in turn) to a stable state.
//!
//! Everything here is allocation-free: loads live in fixed-size stack arrays.

/// Largest number of ribbons in one bay supported by the allocation-free cascade.
pub const MAX_RIBBONS: usize = 64;

/// Relative tolerance of the overload test: a ribbon loaded to within this fraction of its
/// capacity counts as failing. Designs sized exactly to a margin (a taper to safety factor 2 with
/// half the ribbons cut) otherwise fail or survive on the last bit of a floating-point rounding.
pub const CAPACITY_TOLERANCE: f64 = 1e-9;

/// Geometric arrangement of the ribbons across the tether, which decides who is whose
/// neighbour for local load sharing.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Arrangement {
    /// Ribbons side by side in a flat row: the two edge ribbons have one neighbour each.
    Row,
    /// Ribbons around a closed ring: every ribbon has two neighbours, indices wrap.
    Ring,
}

/// Errors from the load-sharing routines.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum LoadSharingError {
    /// More ribbons than [`MAX_RIBBONS`].
    #[error("{0} ribbons in a bay; at most {MAX_RIBBONS} are supported")]
    TooManyRibbons(usize),
    /// `intact` and `capacity_n` have different lengths.
    #[error("{intact} intact flags but {capacity} capacities")]
    LengthMismatch {
        /// Length of the intact-flag slice.
        intact: usize,
        /// Length of the capacity slice.
        capacity: usize,
    },
}

/// A rule for sharing a bay's tension among its intact ribbons.
pub trait LoadSharing: Send + Sync + std::fmt::Debug {
    /// Per-ribbon tension given which ribbons are intact (cut ones get 0). `total_tension_n` is
    /// the bay's tension. Writes into `out[..intact.len()]`; if `out` is shorter, only its
    /// length is written. No allocation.
    fn distribute(&self, intact: &[bool], total_tension_n: f64, out: &mut [f64]);

    /// When every intact ribbon of a bay of `ribbons` with `cut` of them cut carries the same
    /// load `T / k` whichever ribbons are cut, the divisor `k`; `None` when the load depends on
    /// which ribbons are cut. Lets the engine test a new hole against one ribbon's load without
    /// settling the whole bay.
    fn uniform_share_divisor(&self, _ribbons: usize, _cut: usize) -> Option<f64> {
        None
    }
}

/// Daniels' equal (global) load sharing: every intact ribbon carries `T / survivors`.
///
/// Daniels H.E. (1945), Proc. R. Soc. Lond. A 183, 405–435. Appropriate when the cross-links
/// are stiff enough to force equal strain on all ribbons of a bay.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct EqualSharing;

impl LoadSharing for EqualSharing {
    fn distribute(&self, intact: &[bool], total_tension_n: f64, out: &mut [f64]) {
        let survivors = intact.iter().filter(|&&b| b).count();
        let share = if survivors > 0 {
            total_tension_n / survivors as f64
        } else {
            0.0
        };
        for (o, &ok) in out.iter_mut().zip(intact) {
            *o = if ok { share } else { 0.0 };
        }
    }

    fn uniform_share_divisor(&self, ribbons: usize, cut: usize) -> Option<f64> {
        Some(ribbons.saturating_sub(cut) as f64)
    }
}

/// No redistribution: every intact ribbon keeps its nominal share `T / N`, whatever is cut.
///
/// Not a physical rule for cross-linked ribbons; it reproduces the independent-segment model
/// behind the classical closed form P = 1 - prod_j [1 - (1 - exp(-lambda_j T))^N], used to check
/// the engine against it.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct NoRedistribution;

impl LoadSharing for NoRedistribution {
    fn distribute(&self, intact: &[bool], total_tension_n: f64, out: &mut [f64]) {
        let share = if intact.is_empty() {
            0.0
        } else {
            total_tension_n / intact.len() as f64
        };
        for (o, &ok) in out.iter_mut().zip(intact) {
            *o = if ok { share } else { 0.0 };
        }
    }

    fn uniform_share_divisor(&self, ribbons: usize, _cut: usize) -> Option<f64> {
        Some(ribbons as f64)
    }
}

/// Harlow–Phoenix local load sharing: each ribbon's nominal share is `T / N`; a cut ribbon's
/// share goes half to the nearest intact ribbon on each side. On a [`Arrangement::Ring`]
/// indices wrap; in a [`Arrangement::Row`] a run of cut ribbons at an edge sends its whole
/// share to its single intact flank. If no ribbon is intact all get 0.
///
/// Harlow D.G. & Phoenix S.L. (1978), J. Composite Materials 12, 195–214 (citation from
/// memory). A survivor between runs of `r1` and `r2` cut ribbons carries `(1 + (r1 + r2)/2) T/N`.
/// Total load is conserved.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LocalSharing {
    /// Row or ring.
    pub arrangement: Arrangement,
}

impl LoadSharing for LocalSharing {
    fn distribute(&self, intact: &[bool], total_tension_n: f64, out: &mut [f64]) {
        let n = intact.len().min(out.len());
        let intact = &intact[..n];
        let out = &mut out[..n];
        if n == 0 {
            return;
        }
        let nominal = total_tension_n / n as f64;
        let Some(first_intact) = intact.iter().position(|&b| b) else {
            out.fill(0.0);
            return;
        };
        for (o, &ok) in out.iter_mut().zip(intact) {
            *o = if ok { nominal } else { 0.0 };
        }
        match self.arrangement {
            Arrangement::Row => {
                let mut i = 0;
                while i < n {
                    if intact[i] {
                        i += 1;
                        continue;
                    }
                    let start = i;
                    while i < n && !intact[i] {
                        i += 1;
                    }
                    let run_load = (i - start) as f64 * nominal;
                    let left = start.checked_sub(1);
                    let right = (i < n).then_some(i);
                    match (left, right) {
                        (Some(l), Some(r)) => {
                            out[l] += 0.5 * run_load;
                            out[r] += 0.5 * run_load;
                        }
                        (Some(l), None) => out[l] += run_load,
                        (None, Some(r)) => out[r] += run_load,
                        (None, None) => {} // unreachable: at least one ribbon is intact
                    }
                }
            }
            Arrangement::Ring => {
                // Walk once around the ring starting just after an intact ribbon, so every cut
                // run is bounded by intact ribbons (the same one on both sides if only one is left).
                let mut left = first_intact;
                let mut step = 1;
                while step <= n {
                    let j = (first_intact + step) % n;
                    if intact[j] {
                        left = j;
                        step += 1;
                        continue;
                    }
                    let mut run = 0usize;
                    while !intact[(first_intact + step) % n] {
                        run += 1;
                        step += 1;
                    }
                    let right = (first_intact + step) % n;
                    let half = 0.5 * run as f64 * nominal;
                    out[left] += half;
                    out[right] += half;
                }
            }
        }
    }
}

/// Result of following a cascade in one bay.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct CascadeOutcome {
    /// Ribbons cut by the cascade (not counting those already cut on entry).
    pub newly_cut: u32,
    /// Intact ribbons left in the bay.
    pub survivors: u32,
}

impl CascadeOutcome {
    /// True when no ribbon is left: the bay has no load path (system loss).
    pub fn is_loss(&self) -> bool {
        self.survivors == 0
    }
}

/// Follow a cascade to a stable state.
///
/// `capacity_n[i]` is the load ribbon `i` can carry now (net width × thickness × allowable
/// stress). Repeatedly: distribute `total_tension_n` over the intact ribbons, and cut every
/// intact ribbon whose load exceeds its capacity (all overloaded ribbons in one round fail
/// together, then loads are redistributed), until none is overloaded or none is left.
/// `intact` is updated in place. At most `N` rounds.
///
/// Generic over the sharing rule (`S: ?Sized` so `&dyn LoadSharing` works too): with a concrete
/// rule the compiler inlines `distribute` into the loop, which matters because this runs after
/// every strike that damages a ribbon; through `dyn` it costs one indirect call per round.
///
/// A NaN tension or capacity never counts as overloaded (comparisons with NaN are false).
///
/// # Errors
/// [`LoadSharingError::TooManyRibbons`] above [`MAX_RIBBONS`];
/// [`LoadSharingError::LengthMismatch`] if the slices differ in length.
pub fn settle_bay<S: LoadSharing + ?Sized>(
    sharing: &S,
    intact: &mut [bool],
    capacity_n: &[f64],
    total_tension_n: f64,
) -> Result<CascadeOutcome, LoadSharingError> {
    let n = intact.len();
    if n > MAX_RIBBONS {
        return Err(LoadSharingError::TooManyRibbons(n));
    }
    if capacity_n.len() != n {
        return Err(LoadSharingError::LengthMismatch {
            intact: n,
            capacity: capacity_n.len(),
        });
    }
    let mut loads = [0.0_f64; MAX_RIBBONS];
    let mut newly_cut = 0u32;
    let mut survivors = intact.iter().filter(|&&b| b).count() as u32;
    while survivors > 0 {
        sharing.distribute(intact, total_tension_n, &mut loads[..n]);
        let mut cut_this_round = 0u32;
        // Decide all failures on the loads of this round before changing `intact`.
        let mut overloaded = [false; MAX_RIBBONS];
        for i in 0..n {
            if intact[i] && loads[i] > capacity_n[i] * (1.0 - CAPACITY_TOLERANCE) {
                overloaded[i] = true;
                cut_this_round += 1;
            }
        }
        if cut_this_round == 0 {
            break;
        }
        for (ok, &over) in intact.iter_mut().zip(&overloaded[..n]) {
            if over {
                *ok = false;
            }
        }
        newly_cut += cut_this_round;
        survivors -= cut_this_round;
    }
    Ok(CascadeOutcome {
        newly_cut,
        survivors,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn local(arrangement: Arrangement, intact: &[bool]) -> Vec<f64> {
        let mut out = vec![f64::NAN; intact.len()];
        LocalSharing { arrangement }.distribute(intact, 4.0 * intact.len() as f64, &mut out);
        out
    }

    #[test]
    fn equal_sharing_hand_cases() {
        let mut out = [0.0; 4];
        EqualSharing.distribute(&[true, false, true, true], 12.0, &mut out);
        assert_eq!(out, [4.0, 0.0, 4.0, 4.0]);
        EqualSharing.distribute(&[false; 4], 12.0, &mut out);
        assert_eq!(out, [0.0; 4]);
    }

    #[test]
    fn local_sharing_hand_cases() {
        // Nominal share 4 per ribbon in all cases below.
        // Row of 4, ribbon 1 cut: neighbours 0 and 2 get +2 each (half of 4).
        assert_eq!(
            local(Arrangement::Row, &[true, false, true, true]),
            [6.0, 0.0, 6.0, 4.0]
        );
        // Row, edge run of two cut ribbons: the single flank takes both shares.
        assert_eq!(
            local(Arrangement::Row, &[false, false, true, true]),
            [0.0, 0.0, 12.0, 4.0]
        );
        assert_eq!(
            local(Arrangement::Row, &[true, true, true, false]),
            [4.0, 4.0, 8.0, 0.0]
        );
        // Ring: cutting ribbon 0 sends half to ribbon 3 (wrap) and half to ribbon 1.
        assert_eq!(
            local(Arrangement::Ring, &[false, true, true, true]),
            [0.0, 6.0, 4.0, 6.0]
        );
        // Ring, run 3,0 cut: flanks 2 and 1 get +4 each.
        assert_eq!(
            local(Arrangement::Ring, &[false, true, true, false]),
            [0.0, 8.0, 8.0, 0.0]
        );
        // Ring, each survivor between two single-ribbon runs: 1 + (1 + 1)/2 = 2 nominal shares.
        assert_eq!(
            local(Arrangement::Ring, &[false, true, false, true]),
            [0.0, 8.0, 0.0, 8.0]
        );
        // Same pattern in a row: ribbon 0 is an edge run (all to ribbon 1), ribbon 2 is shared.
        assert_eq!(
            local(Arrangement::Row, &[false, true, false, true]),
            [0.0, 10.0, 0.0, 6.0]
        );
        // Ring with one survivor takes everything.
        assert_eq!(
            local(Arrangement::Ring, &[false, false, true, false]),
            [0.0, 0.0, 16.0, 0.0]
        );
        // Nothing intact.
        assert_eq!(local(Arrangement::Ring, &[false; 3]), [0.0; 3]);
        assert_eq!(local(Arrangement::Row, &[false; 3]), [0.0; 3]);
    }

    #[test]
    fn local_sharing_conserves_load() {
        // Every pattern of 6 ribbons with at least one survivor carries the full tension.
        for mask in 1u32..64 {
            let intact: Vec<bool> = (0..6).map(|i| mask & (1 << i) != 0).collect();
            for arrangement in [Arrangement::Row, Arrangement::Ring] {
                let total: f64 = local(arrangement, &intact).iter().sum();
                assert!((total - 24.0).abs() < 1e-12, "{mask:b} {arrangement:?}");
            }
        }
    }

    #[test]
    fn cascade_to_total_loss() {
        // Four ribbons, tension 4: each carries 1. Ribbon 0 is damaged (capacity 0.9), the
        // others hold 1.3. Round 1: ribbon 0 fails; the others carry 4/3 > 1.3 and all fail.
        let mut intact = [true; 4];
        let out = settle_bay(&EqualSharing, &mut intact, &[0.9, 1.3, 1.3, 1.3], 4.0).unwrap();
        assert_eq!(
            out,
            CascadeOutcome {
                newly_cut: 4,
                survivors: 0
            }
        );
        assert!(out.is_loss());
    }

    #[test]
    fn cascade_that_stops() {
        // Same, but the others hold 1.34 > 4/3: only ribbon 0 is lost.
        let mut intact = [true; 4];
        let out = settle_bay(&EqualSharing, &mut intact, &[0.9, 1.34, 1.34, 1.34], 4.0).unwrap();
        assert_eq!(
            out,
            CascadeOutcome {
                newly_cut: 1,
                survivors: 3
            }
        );
        assert_eq!(intact, [false, true, true, true]);
        // Local sharing in a row, nominal share 1: ribbon 1 (capacity 0.5) fails; neighbours 0
        // and 2 then carry 1.5, ribbon 3 carries 1. Ribbon 0 (capacity 1.4) fails; ribbon 2 is
        // now the single flank of the edge run 0..=1 and carries 1 + 2 = 3 < 3.1; ribbon 3
        // carries 1, just below its capacity 1.01. Stable with two survivors.
        let mut intact = [true; 4];
        let row = LocalSharing {
            arrangement: Arrangement::Row,
        };
        let out = settle_bay(&row, &mut intact, &[1.4, 0.5, 3.1, 1.01], 4.0).unwrap();
        assert_eq!(
            out,
            CascadeOutcome {
                newly_cut: 2,
                survivors: 2
            }
        );
        assert_eq!(intact, [false, false, true, true]);
    }

    #[test]
    fn settle_rejects_bad_shapes_and_works_through_dyn() {
        let mut big = [true; MAX_RIBBONS + 1];
        let caps = [1.0; MAX_RIBBONS + 1];
        assert!(settle_bay(&EqualSharing, &mut big, &caps, 1.0).is_err());
        let mut four = [true; 4];
        assert!(settle_bay(&EqualSharing, &mut four, &[1.0; 3], 1.0).is_err());
        let rule: &dyn LoadSharing = &EqualSharing;
        let out = settle_bay(rule, &mut four, &[1.01; 4], 4.0).unwrap();
        assert_eq!(
            out,
            CascadeOutcome {
                newly_cut: 0,
                survivors: 4
            }
        );
    }

    /// The engine's shortcut agrees with the rule it stands for: where a rule says every
    /// intact ribbon carries T / k, `distribute` gives exactly that to every intact ribbon of
    /// every cut pattern of six ribbons (Daniels' equal sharing: k = survivors; no
    /// redistribution: k = N); local sharing offers no shortcut.
    #[test]
    fn uniform_share_divisor_matches_distribute() {
        let n = 6;
        let rules: [&dyn LoadSharing; 2] = [&EqualSharing, &NoRedistribution];
        for rule in rules {
            for pattern in 0u32..(1 << n) {
                let intact: Vec<bool> = (0..n).map(|i| pattern & (1 << i) == 0).collect();
                let cut = intact.iter().filter(|&&b| !b).count();
                if cut == n {
                    continue;
                }
                let mut out = vec![f64::NAN; n];
                rule.distribute(&intact, 60.0, &mut out);
                let k = rule.uniform_share_divisor(n, cut).unwrap();
                for (o, &ok) in out.iter().zip(&intact) {
                    if ok {
                        assert_eq!(*o, 60.0 / k, "{rule:?} pattern {pattern:b}");
                    }
                }
            }
        }
        let local = LocalSharing {
            arrangement: Arrangement::Row,
        };
        assert_eq!(local.uniform_share_divisor(n, 1), None);
    }
}

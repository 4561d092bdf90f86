//! Residual strength of a holed ribbon: net section, Whitney–Nuismer point-stress and
//! average-stress criteria, and the finite-width correction.
//!
//! Provenance tags follow the project's damage reference sheet (REFERENCES-damage.md §2).
//! Notation: `W` ribbon width, `D` removed width (the hole's chord across the ribbon), `R = D/2`,
//! `σ_0` unnotched (allowable) strength, `σ_N` gross notched strength.
//!
//! - **Net section** (notch-insensitive; ductile films, split fibre tapes) [DERIVED §2.1]:
//!   `σ_N/σ_0 = 1 − D/W`. This is the former behaviour, kept bit for bit.
//! - **Point stress** (Whitney & Nuismer 1974, J. Compos. Mater. 8(3) 253 [READ abstract];
//!   formula [READ-sec] §2.3): `ξ = R/(R + d_0)`,
//!   `σ_N∞/σ_0 = 2 / [2 + ξ² + 3ξ⁴ − (K_T∞ − 3)(5ξ⁶ − 7ξ⁸)]`.
//! - **Average stress** (same source; form [MEMORY], limits [DERIVED]): `ξ = R/(R + a_0)`,
//!   `σ_N∞/σ_0 = 2(1 − ξ) / [2 − ξ² − ξ⁴ + (K_T∞ − 3)(ξ⁶ − ξ⁸)]`.
//! - **Finite-width correction** (isotropic, Heywood form, §2.4 [MEMORY]):
//!   `K_T/K_T∞ = [2 + (1 − D/W)³] / [3(1 − D/W)]`, `σ_N(W) = σ_N∞ · K_T∞/K_T`.
//!
//! # Validity (refused outside)
//! Both WN ratios must fall from 1 to `1/K_T∞` monotonically as the hole grows, or the
//! critical-width solve (strength(D) = load) has no unique answer. [DERIVED/COMPUTED]:
//! - point stress: the ratio exceeds 1 (strength above σ_0) for `K_T∞ > 9.219` — the "≳ 9" of
//!   §2.3 [READ-sec] — and stops being monotone already for `K_T∞ > 7.7086`
//!   ([`POINT_STRESS_MAX_KT`]); so highly orthotropic UD tapes (K_T∞ ≈ 7–15, §2.2) are refused
//!   with point stress;
//! - both criteria stop being monotone for `K_T∞ < 3`; a ribbon is loaded along its stiff
//!   direction, where `K_T∞ >= 3` (Lekhnitskii, §2.2), so `K_T∞ < 3` is refused;
//! - average stress is monotone for every `K_T∞ >= 3`; we accept up to 50.
//!
//! # Edge-breaking holes (rule)
//! The segment's state is one number, the largest removed width (the chord of the hole inside
//! the ribbon; `damage::removed_width_m`), and the strength is a function of that number
//! alone. A hole that breaks the ribbon edge is therefore rated as a central hole of the same
//! removed width. Under net section this is exact (§2.1: the edge-breaking hole removes its
//! chord). Under the WN criteria it is **not conservative**: an edge notch of depth `a` has
//! about the stress intensity of a central crack of length `2.5a` (edge factor 1.12, Tada
//! handbook, §2.7 [MEMORY]). The bias is open: it needs a segment state that also carries the
//! hole's position (and the on-demand sampler's hole-rate table split by edge contact). Use
//! the net-section model, or a shorter characteristic length, to bound it.

use thiserror::Error;

/// Largest `K_T∞` accepted with the point-stress criterion: above it the PSC ratio is not
/// monotone in hole size (root of `d/dξ` of the denominator, [COMPUTED] 7.7086).
pub const POINT_STRESS_MAX_KT: f64 = 7.7086;
/// Largest `K_T∞` accepted with the average-stress criterion (a wide engineering envelope).
pub const AVERAGE_STRESS_MAX_KT: f64 = 50.0;
/// Smallest `K_T∞` accepted with either WN criterion.
pub const WN_MIN_KT: f64 = 3.0;

/// A parameter set outside a criterion's validity.
#[derive(Debug, Clone, PartialEq, Error)]
#[error("{field} = {value} is out of range: allowed {range} {unit}; {reason}")]
pub struct NotchError {
    /// Parameter name with its unit suffix.
    pub field: &'static str,
    /// Value given.
    pub value: f64,
    /// Allowed range.
    pub range: String,
    /// Unit.
    pub unit: &'static str,
    /// Why.
    pub reason: &'static str,
}

/// A rule for the strength of a ribbon with a hole of removed width `D` (module docs).
pub trait ResidualStrength: Send + Sync + std::fmt::Debug {
    /// Short name for reports.
    fn name(&self) -> &'static str;

    /// Gross notched strength over unnotched strength, `σ_N/σ_0`, for removed width
    /// `removed_m` on a ribbon of width `width_m`: 1 at no hole, 0 at `removed_m >= width_m`,
    /// non-increasing between.
    fn strength_ratio(&self, removed_m: f64, width_m: f64) -> f64;

    /// Load a ribbon of width `width_m` with removed width `removed_m` carries at failure, N,
    /// given its intact capacity per unit width `per_width_n_per_m` (thickness × allowable).
    fn capacity_n(&self, removed_m: f64, width_m: f64, per_width_n_per_m: f64) -> f64 {
        width_m * per_width_n_per_m * self.strength_ratio(removed_m, width_m)
    }

    /// Smallest removed width at which a ribbon loaded with `load_n` fails, m: the solution of
    /// `capacity_n(D) = load_n` (unique, since the capacity is monotone), 0 when the intact
    /// ribbon already fails, `width_m` when only a full cut fails it. Found by bisection to
    /// 1e-13 of the width.
    fn critical_removed_width_m(&self, load_n: f64, width_m: f64, per_width_n_per_m: f64) -> f64 {
        if load_n.is_nan() || load_n <= 0.0 {
            return width_m;
        }
        if self.capacity_n(0.0, width_m, per_width_n_per_m) <= load_n {
            return 0.0;
        }
        let (mut lo, mut hi) = (0.0, width_m);
        for _ in 0..60 {
            let mid = 0.5 * (lo + hi);
            if self.capacity_n(mid, width_m, per_width_n_per_m) > load_n {
                lo = mid;
            } else {
                hi = mid;
            }
            if hi - lo <= 1e-13 * width_m {
                break;
            }
        }
        0.5 * (lo + hi)
    }
}

/// Net-section strength `1 − D/W` (notch-insensitive).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct NetSection;

impl ResidualStrength for NetSection {
    fn name(&self) -> &'static str {
        "net_section"
    }
    fn strength_ratio(&self, removed_m: f64, width_m: f64) -> f64 {
        ((width_m - removed_m) / width_m).clamp(0.0, 1.0)
    }
    /// `(w − D) × per-width capacity`, the former expression bit for bit.
    fn capacity_n(&self, removed_m: f64, width_m: f64, per_width_n_per_m: f64) -> f64 {
        (width_m - removed_m).max(0.0) * per_width_n_per_m
    }
    /// `w − load / per-width capacity`, the former expression bit for bit (may be negative
    /// when the intact ribbon is overloaded; callers clip).
    fn critical_removed_width_m(&self, load_n: f64, width_m: f64, per_width_n_per_m: f64) -> f64 {
        width_m - load_n / per_width_n_per_m
    }
}

/// Which Whitney–Nuismer criterion.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum WnCriterion {
    /// Point stress at distance `d_0` from the hole edge.
    PointStress,
    /// Stress averaged over `a_0` from the hole edge.
    AverageStress,
}

/// Whitney–Nuismer criterion with a characteristic length, optional finite-width correction.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WhitneyNuismer {
    criterion: WnCriterion,
    characteristic_length_m: f64,
    kt_infinite: f64,
    finite_width_correction: bool,
}

impl WhitneyNuismer {
    /// A validated criterion.
    ///
    /// # Errors
    /// [`NotchError`] naming the field, value, allowed range and unit.
    pub fn new(
        criterion: WnCriterion,
        characteristic_length_m: f64,
        kt_infinite: f64,
        finite_width_correction: bool,
    ) -> Result<Self, NotchError> {
        if !(characteristic_length_m > 0.0 && characteristic_length_m <= 1.0) {
            return Err(NotchError {
                field: "characteristic_length_mm",
                value: characteristic_length_m * 1e3,
                range: "(0, 1000]".into(),
                unit: "mm",
                reason: "the characteristic length is a material constant of order 0.01 to 10 mm",
            });
        }
        let (hi, reason) = match criterion {
            WnCriterion::PointStress => (
                POINT_STRESS_MAX_KT,
                "the point-stress polynomial is not monotone in hole size above K_T = 7.7086 and \
                 predicts strength above the unnotched value above 9.22 (REFERENCES-damage §2.3); \
                 use the average-stress criterion for highly orthotropic tapes",
            ),
            WnCriterion::AverageStress => (
                AVERAGE_STRESS_MAX_KT,
                "a ribbon loaded along its stiff direction has K_T >= 3; the upper end is a wide envelope",
            ),
        };
        if !(WN_MIN_KT..=hi).contains(&kt_infinite) {
            return Err(NotchError {
                field: "kt_infinite",
                value: kt_infinite,
                range: format!("[{WN_MIN_KT}, {hi}]"),
                unit: "(dimensionless)",
                reason: if kt_infinite < WN_MIN_KT {
                    "below 3 both Whitney–Nuismer ratios stop being monotone in hole size, and a ribbon \
                     loaded along its fibres has K_T >= 3 (Lekhnitskii, REFERENCES-damage §2.2)"
                } else {
                    reason
                },
            });
        }
        Ok(WhitneyNuismer {
            criterion,
            characteristic_length_m,
            kt_infinite,
            finite_width_correction,
        })
    }

    /// Infinite-plate ratio `σ_N∞/σ_0` for a hole of radius `radius_m`.
    pub fn infinite_plate_ratio(&self, radius_m: f64) -> f64 {
        if radius_m.is_nan() || radius_m <= 0.0 {
            return 1.0;
        }
        let xi = radius_m / (radius_m + self.characteristic_length_m);
        infinite_plate_ratio(self.criterion, xi, self.kt_infinite)
    }
}

/// `σ_N∞/σ_0` of a WN criterion at `ξ` with `K_T∞` (module docs; REFERENCES-damage §2.3).
pub fn infinite_plate_ratio(criterion: WnCriterion, xi: f64, kt_infinite: f64) -> f64 {
    let x2 = xi * xi;
    let x4 = x2 * x2;
    let x6 = x4 * x2;
    let x8 = x4 * x4;
    match criterion {
        WnCriterion::PointStress => {
            2.0 / (2.0 + x2 + 3.0 * x4 - (kt_infinite - 3.0) * (5.0 * x6 - 7.0 * x8))
        }
        WnCriterion::AverageStress => {
            let den = 2.0 - x2 - x4 + (kt_infinite - 3.0) * (x6 - x8);
            if xi >= 1.0 {
                1.0 / kt_infinite
            } else {
                2.0 * (1.0 - xi) / den
            }
        }
    }
}

/// Isotropic finite-width factor `K_T/K_T∞ = [2 + (1 − x)³] / [3(1 − x)]`, `x = D/W`
/// (REFERENCES-damage §2.4, Heywood form [MEMORY]); infinite at `x >= 1`.
pub fn finite_width_factor(x: f64) -> f64 {
    let y = 1.0 - x;
    if y <= 0.0 {
        return f64::INFINITY;
    }
    (2.0 + y * y * y) / (3.0 * y)
}

impl ResidualStrength for WhitneyNuismer {
    fn name(&self) -> &'static str {
        match self.criterion {
            WnCriterion::PointStress => "point_stress",
            WnCriterion::AverageStress => "average_stress",
        }
    }
    fn strength_ratio(&self, removed_m: f64, width_m: f64) -> f64 {
        if removed_m.is_nan() || removed_m <= 0.0 {
            return 1.0;
        }
        if removed_m >= width_m {
            return 0.0;
        }
        let r = self.infinite_plate_ratio(0.5 * removed_m);
        if self.finite_width_correction {
            r / finite_width_factor(removed_m / width_m)
        } else {
            // Without the correction the ratio still cannot exceed the net section.
            r.min(1.0 - removed_m / width_m)
        }
    }
}

/// The notch model a design carries (static dispatch for the engine's hot loop).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum NotchModel {
    /// Net section.
    NetSection(NetSection),
    /// A Whitney–Nuismer criterion.
    WhitneyNuismer(WhitneyNuismer),
}

impl Default for NotchModel {
    fn default() -> Self {
        NotchModel::NetSection(NetSection)
    }
}

impl ResidualStrength for NotchModel {
    fn name(&self) -> &'static str {
        match self {
            NotchModel::NetSection(m) => m.name(),
            NotchModel::WhitneyNuismer(m) => m.name(),
        }
    }
    #[inline]
    fn strength_ratio(&self, removed_m: f64, width_m: f64) -> f64 {
        match self {
            NotchModel::NetSection(m) => m.strength_ratio(removed_m, width_m),
            NotchModel::WhitneyNuismer(m) => m.strength_ratio(removed_m, width_m),
        }
    }
    #[inline]
    fn capacity_n(&self, removed_m: f64, width_m: f64, per_width_n_per_m: f64) -> f64 {
        match self {
            NotchModel::NetSection(m) => m.capacity_n(removed_m, width_m, per_width_n_per_m),
            NotchModel::WhitneyNuismer(m) => m.capacity_n(removed_m, width_m, per_width_n_per_m),
        }
    }
    fn critical_removed_width_m(&self, load_n: f64, width_m: f64, per_width_n_per_m: f64) -> f64 {
        match self {
            NotchModel::NetSection(m) => {
                m.critical_removed_width_m(load_n, width_m, per_width_n_per_m)
            }
            NotchModel::WhitneyNuismer(m) => {
                m.critical_removed_width_m(load_n, width_m, per_width_n_per_m)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn roark_howland_ktn(x: f64) -> f64 {
        // Roark, Formulas for Stress and Strain, Table 17.1 (central circular hole, axial
        // tension), net-section K_Tn [READ-sec] (REFERENCES-damage §2.2).
        3.0 - 3.13 * x + 3.66 * x * x - 1.53 * x * x * x
    }

    #[test]
    #[allow(clippy::approx_constant)] // 3.140 is a printed K_T, not pi
    fn finite_width_against_roark_and_heywood_table_2_2() {
        // REFERENCES-damage §2.2 [COMPUTED] table: K_Tn Heywood, K_Tn Roark/Howland fit, K_T
        // gross (Heywood), D/W = 0..0.6.
        let x = [0.0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6];
        let heywood_n = [3.000, 2.729, 2.512, 2.343, 2.216, 2.125, 2.064];
        let roark_n = [3.000, 2.722, 2.508, 2.349, 2.236, 2.159, 2.109];
        let gross = [3.000, 3.032, 3.140, 3.347, 3.693, 4.250, 5.160];
        for i in 0..x.len() {
            // Our factor is K_T(gross)/K_T∞ with K_T∞ = 3 (isotropic): K_Tn = 3 f (1 − x).
            let kt_gross = 3.0 * finite_width_factor(x[i]);
            let kt_net = kt_gross * (1.0 - x[i]);
            assert!(
                (kt_gross - gross[i]).abs() <= 0.0005 + 1e-12,
                "gross x {}",
                x[i]
            );
            assert!(
                (kt_net - heywood_n[i]).abs() <= 0.0005 + 1e-12,
                "net x {}",
                x[i]
            );
            assert!((roark_howland_ktn(x[i]) - roark_n[i]).abs() <= 0.0005 + 1e-12);
            // Heywood against Roark/Howland: within 2 % up to D/W = 0.5, the chart's validity
            // (a university design note, [READ]).
            if x[i] <= 0.5 {
                assert!(
                    (kt_net / roark_howland_ktn(x[i]) - 1.0).abs() < 0.02,
                    "x {}",
                    x[i]
                );
            }
        }
    }

    #[test]
    fn wn_limits() {
        // [DERIVED] §2.3: ratio → 1 for a vanishing hole, → 1/K_T∞ for a vanishing
        // characteristic length (ξ → 1).
        for kt in [3.0, 5.0, 7.7] {
            for c in [WnCriterion::PointStress, WnCriterion::AverageStress] {
                let wn = WhitneyNuismer::new(c, 1e-3, kt, false).unwrap();
                assert!((wn.infinite_plate_ratio(1e-12) - 1.0).abs() < 1e-9);
                let tiny = WhitneyNuismer::new(c, 1e-12, kt, false).unwrap();
                let r = tiny.infinite_plate_ratio(1e-2);
                assert!((r * kt - 1.0).abs() < 1e-6, "{c:?} kt {kt}: {r}");
            }
        }
    }

    #[test]
    fn worked_table_2_8_to_printed_digits() {
        // REFERENCES-damage §2.8 [COMPUTED]: σ_N/σ_0 with PSC d_0 = 1 mm, ASC a_0 = 3.8 mm,
        // K_T∞ = 3, isotropic FWC. Columns: W, D, net, brittle 1/K_T, PSC∞, PSC+FWC, ASC∞,
        // ASC+FWC.
        let rows: [[f64; 8]; 7] = [
            [10.0, 1.0, 0.900, 0.330, 0.931, 0.921, 0.890, 0.880],
            [10.0, 3.0, 0.700, 0.299, 0.728, 0.652, 0.749, 0.672],
            [30.0, 1.0, 0.967, 0.333, 0.931, 0.930, 0.890, 0.889],
            [30.0, 3.0, 0.900, 0.330, 0.728, 0.720, 0.749, 0.741],
            [30.0, 10.0, 0.667, 0.290, 0.483, 0.421, 0.549, 0.478],
            [100.0, 3.0, 0.970, 0.333, 0.728, 0.727, 0.749, 0.749],
            [100.0, 10.0, 0.900, 0.330, 0.483, 0.478, 0.549, 0.543],
        ];
        let psc_inf = WhitneyNuismer::new(WnCriterion::PointStress, 1e-3, 3.0, false).unwrap();
        let psc = WhitneyNuismer::new(WnCriterion::PointStress, 1e-3, 3.0, true).unwrap();
        let asc_inf = WhitneyNuismer::new(WnCriterion::AverageStress, 3.8e-3, 3.0, false).unwrap();
        let asc = WhitneyNuismer::new(WnCriterion::AverageStress, 3.8e-3, 3.0, true).unwrap();
        let close = |a: f64, b: f64, what: &str| {
            assert!(
                (a - b).abs() <= 0.0005 + 1e-12,
                "{what}: {a} vs printed {b}"
            );
        };
        for r in rows {
            let (w, d) = (r[0] * 1e-3, r[1] * 1e-3);
            close(NetSection.strength_ratio(d, w), r[2], "net");
            close(1.0 / (3.0 * finite_width_factor(d / w)), r[3], "brittle");
            close(psc_inf.infinite_plate_ratio(d / 2.0), r[4], "PSC inf");
            close(psc.strength_ratio(d, w), r[5], "PSC FWC");
            close(asc_inf.infinite_plate_ratio(d / 2.0), r[6], "ASC inf");
            close(asc.strength_ratio(d, w), r[7], "ASC FWC");
        }
    }

    #[test]
    fn validity_is_refused_with_field_value_range_unit() {
        let e = WhitneyNuismer::new(WnCriterion::PointStress, 1e-3, 14.8, true).unwrap_err();
        let s = e.to_string();
        assert!(
            s.contains("kt_infinite = 14.8") && s.contains("7.7086"),
            "{s}"
        );
        assert!(WhitneyNuismer::new(WnCriterion::AverageStress, 1e-3, 14.8, true).is_ok());
        assert!(WhitneyNuismer::new(WnCriterion::AverageStress, 1e-3, 2.0, true).is_err());
        let e = WhitneyNuismer::new(WnCriterion::AverageStress, 0.0, 3.0, true).unwrap_err();
        assert!(e.to_string().contains("characteristic_length_mm"));
    }

    #[test]
    fn monotone_at_the_validity_edges_and_critical_width_inverts() {
        // The accepted edges must still give a non-increasing strength in D.
        let models = [
            WhitneyNuismer::new(WnCriterion::PointStress, 1e-3, POINT_STRESS_MAX_KT, true).unwrap(),
            WhitneyNuismer::new(WnCriterion::PointStress, 1e-3, 3.0, false).unwrap(),
            WhitneyNuismer::new(WnCriterion::AverageStress, 1e-4, 50.0, true).unwrap(),
            WhitneyNuismer::new(WnCriterion::AverageStress, 3.8e-3, 3.0, false).unwrap(),
        ];
        let w = 0.02;
        for m in models {
            let mut prev = 1.0;
            for i in 0..=20_000 {
                let d = w * i as f64 / 20_000.0;
                let r = m.strength_ratio(d, w);
                assert!(r <= prev + 1e-12 && r <= 1.0, "{m:?} d {d}: {r} > {prev}");
                prev = r;
            }
            // critical_removed_width_m inverts capacity_n.
            let per_width = 20e-6 * 3.5e9;
            for share in [0.2, 0.5, 0.8, 0.99] {
                let load = share * w * per_width;
                let d = m.critical_removed_width_m(load, w, per_width);
                assert!(
                    (m.capacity_n(d, w, per_width) / load - 1.0).abs() < 1e-6,
                    "{m:?}"
                );
            }
        }
        // Net section keeps the former closed form.
        assert_eq!(
            NetSection.critical_removed_width_m(300.0, 0.012, 20e-6 * 3.5e9),
            0.012 - 300.0 / (20e-6 * 3.5e9)
        );
    }
}

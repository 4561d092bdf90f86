//! Hole size in a thin film: the hole factor `k = D_h / d_p` at normal incidence, and the
//! oblique footprint (an ellipse) projected on the ribbon's cross-width direction.
//!
//! Provenance tags follow the project's damage reference sheet (REFERENCES-damage.md):
//! [READ], [READ-sec], [MEMORY], [DERIVED], [COMPUTED].
//!
//! # Hole factor (REFERENCES-damage §1.2)
//! - **Sawle-type** bumper hole law `k = 0.45 v_n (t/d_p)^(2/3) + 0.90` (v_n in km/s), Al on
//!   Al, `t/d_p ≳ 0.05`, `v ≲ 7–15 km/s`; attributed to Sawle (1970), AIAA J. 8(7), 1240 —
//!   law and attribution [MEMORY].
//! - **Hill-type** law `k = 2.8 (ρ_p/ρ_t)^−0.035 (v/c_t)^0.335 (v/c_p)^0.113 (t/d_p)^0.516
//!   (cos θ)^0.026 + 0.6` (c = bulk sound speeds); coefficients [READ-sec] (three public
//!   solar-sail scripts), attributed to Hill (2004), Int. J. Impact Eng. 30(3), 303 [MEMORY].
//!   This law carries its own (weak) obliquity term, so it is evaluated as fitted: total speed
//!   `v` and `(cos θ)^0.026`; the normal-component rule is not applied a second time.
//! - **Constant** factor (the former behaviour): `k` fixed, an engineering assumption.
//!
//! Both fitted laws tend to a constant (0.90, 0.6) as `t/d_p → 0`, a fitting artefact: the
//! hole is never smaller than the projectile, so `k = max(1, law)` — the thin-film limit
//! `D_h = d_p` [DERIVED], supported by "damage very close to the projectile size at normal
//! incidence" (Francesconi et al. 2013, ESA SP-723) [READ abstract].
//!
//! # Normal-component rule
//! The Sawle-type law is evaluated with `v_n = v cos θ` (§1.1(i), [READ-sec]).
//!
//! # Oblique footprint [DERIVED]
//! The cylinder swept by a sphere meets the film in an ellipse of axes `k d_p` and
//! `k d_p / cos θ`, the long axis along the in-plane projection of the velocity. Grazing
//! particles fragment (Olivieri et al. 2024, Aerospace 11(8) 624, non-monotonic angle effect
//! [READ abstract]), so the elongation uses `max(cos θ, c_min)` with `c_min` a parameter
//! (default 0.2, i.e. elongation capped at 5: the base of the oblique-elongation range in
//! REFERENCES-damage "Ranges suggested", an engineering assumption). With `φ` the track angle
//! between the in-plane velocity and the ribbon's long axis, the width lost across the ribbon
//! is the ellipse's projection on the cross-width direction:
//!
//! `H = k d_p sqrt( cos²φ + sin²φ / max(cos θ, c_min)² )`.
//!
//! # Monotone in diameter
//! For fixed speed, angles and target, `d ↦ d k(d)` is non-decreasing for all three laws
//! (`0.45 v t^(2/3) d^(1/3) + 0.9 d`; `c t^0.516 d^0.484 + 0.6 d`; `k d`), and so is its
//! maximum with `d`; the footprint factor does not depend on `d`. Hole-rate quadratures rely on
//! this (tested).
//!
//! # Calibration envelope
//! A hole is *extrapolated* when `t/d_p` is outside [0.05, 0.3] or `v_n` is above 7 km/s
//! (REFERENCES-damage §1.3). The constant factor has no calibration of its own; the same
//! envelope tells whether any measured hole-size relation covers the impact.

use super::{check_range, DamageError};

/// Lower end of the calibrated thickness-to-diameter ratio (REFERENCES-damage §1.3).
pub const CALIBRATED_T_OVER_D_MIN: f64 = 0.05;
/// Upper end of the calibrated thickness-to-diameter ratio (REFERENCES-damage §1.3).
pub const CALIBRATED_T_OVER_D_MAX: f64 = 0.3;
/// Highest calibrated normal speed, m/s (REFERENCES-damage §1.3: "v_n above ≈ 7 km/s").
pub const CALIBRATED_NORMAL_SPEED_MAX_M_PER_S: f64 = 7_000.0;

/// Which relation gives the hole factor at normal incidence.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum HoleFactorLaw {
    /// `k` fixed (engineering assumption).
    Constant {
        /// Hole diameter over particle diameter.
        factor: f64,
    },
    /// Sawle-type law with the normal speed component.
    SawleType,
    /// Hill-type law with bulk sound speeds of target and projectile.
    HillType {
        /// Bulk sound speed of the film, m/s (REFERENCES-damage §1.2 table premise: 2.5 km/s
        /// for a polymer film, an assumption).
        target_sound_speed_m_per_s: f64,
        /// Bulk sound speed of the particle, m/s (same premise: 5 km/s).
        particle_sound_speed_m_per_s: f64,
    },
}

impl HoleFactorLaw {
    /// Hill-type law with the §1.2 table premises (c_t = 2.5 km/s, c_p = 5 km/s).
    pub const HILL_DEFAULT: HoleFactorLaw = HoleFactorLaw::HillType {
        target_sound_speed_m_per_s: 2_500.0,
        particle_sound_speed_m_per_s: 5_000.0,
    };

    /// Validated law.
    ///
    /// # Errors
    /// [`DamageError::OutOfRange`] for a constant factor outside [1, 3] or a non-positive sound
    /// speed.
    pub fn validated(self) -> Result<Self, DamageError> {
        match self {
            HoleFactorLaw::Constant { factor } => {
                check_range(
                    "hole_factor",
                    factor,
                    (1.0..=3.0).contains(&factor),
                    "[1, 3]",
                )?;
            }
            HoleFactorLaw::SawleType => {}
            HoleFactorLaw::HillType {
                target_sound_speed_m_per_s: ct,
                particle_sound_speed_m_per_s: cp,
            } => {
                check_range(
                    "target_sound_speed_m_per_s",
                    ct,
                    ct > 0.0 && ct <= 2e4,
                    "(0, 20000]",
                )?;
                check_range(
                    "particle_sound_speed_m_per_s",
                    cp,
                    cp > 0.0 && cp <= 2e4,
                    "(0, 20000]",
                )?;
            }
        }
        Ok(self)
    }

    /// Short name for reports.
    pub fn name(&self) -> &'static str {
        match self {
            HoleFactorLaw::Constant { .. } => "constant",
            HoleFactorLaw::SawleType => "sawle_type",
            HoleFactorLaw::HillType { .. } => "hill_type",
        }
    }

    /// The law's own value (before the thin-film floor), dimensionless.
    ///
    /// `t_over_d` film thickness over particle diameter; `speed_m_per_s` total speed;
    /// `cos_incidence` from the face normal; densities in kg/m³.
    pub fn raw_factor(
        &self,
        t_over_d: f64,
        speed_m_per_s: f64,
        cos_incidence: f64,
        particle_density_kg_per_m3: f64,
        target_density_kg_per_m3: f64,
    ) -> f64 {
        match *self {
            HoleFactorLaw::Constant { factor } => factor,
            HoleFactorLaw::SawleType => {
                let v_n_km_per_s = speed_m_per_s * cos_incidence / 1000.0;
                0.45 * v_n_km_per_s * t_over_d.cbrt().powi(2) + 0.90
            }
            HoleFactorLaw::HillType {
                target_sound_speed_m_per_s: ct,
                particle_sound_speed_m_per_s: cp,
            } => {
                let v = speed_m_per_s;
                2.8 * (particle_density_kg_per_m3 / target_density_kg_per_m3).powf(-0.035)
                    * (v / ct).powf(0.335)
                    * (v / cp).powf(0.113)
                    * t_over_d.powf(0.516)
                    * cos_incidence.powf(0.026)
                    + 0.6
            }
        }
    }

    /// Hole factor `k = max(1, law)` (thin-film floor), dimensionless.
    pub fn factor(
        &self,
        t_over_d: f64,
        speed_m_per_s: f64,
        cos_incidence: f64,
        particle_density_kg_per_m3: f64,
        target_density_kg_per_m3: f64,
    ) -> f64 {
        let k = self.raw_factor(
            t_over_d,
            speed_m_per_s,
            cos_incidence,
            particle_density_kg_per_m3,
            target_density_kg_per_m3,
        );
        if k > 1.0 {
            k
        } else {
            1.0
        }
    }
}

/// Hole size: factor law, footprint switch and grazing cap.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HoleSize {
    /// The factor relation.
    pub law: HoleFactorLaw,
    /// Elongate the hole as the oblique ellipse (false: a round hole of diameter `k d_p`).
    pub oblique_footprint: bool,
    /// Lower cap on `cos θ` in the elongation `1/cos θ` (0 < c_min <= 1).
    pub min_cos_incidence: f64,
}

impl HoleSize {
    /// The former behaviour: round hole `factor × d_p`.
    pub fn constant(factor: f64) -> Self {
        HoleSize {
            law: HoleFactorLaw::Constant { factor },
            oblique_footprint: false,
            min_cos_incidence: 0.2,
        }
    }

    /// Validated parameters.
    ///
    /// # Errors
    /// [`DamageError::OutOfRange`] naming the parameter.
    pub fn validated(self) -> Result<Self, DamageError> {
        self.law.validated()?;
        check_range(
            "min_cos_incidence",
            self.min_cos_incidence,
            self.min_cos_incidence > 0.0 && self.min_cos_incidence <= 1.0,
            "(0, 1]",
        )?;
        Ok(self)
    }

    /// Footprint factor across the ribbon: `sqrt(cos²φ + sin²φ / max(cos θ, c_min)²)` (1 when
    /// the oblique footprint is off).
    #[inline]
    pub fn footprint_factor(&self, cos_incidence: f64, track_angle_rad: f64) -> f64 {
        if !self.oblique_footprint {
            return 1.0;
        }
        let c = cos_incidence.max(self.min_cos_incidence).min(1.0);
        let (s, co) = track_angle_rad.sin_cos();
        (co * co + s * s / (c * c)).sqrt()
    }

    /// Largest footprint factor over all angles: `1 / c_min` with the footprint, else 1.
    pub fn max_footprint_factor(&self) -> f64 {
        if self.oblique_footprint {
            1.0 / self.min_cos_incidence
        } else {
            1.0
        }
    }

    /// Lateral hole width, m, for a particle of diameter `d_m` on a film `thickness_m` thick.
    #[allow(clippy::too_many_arguments)]
    #[inline]
    pub fn lateral_width_m(
        &self,
        d_m: f64,
        thickness_m: f64,
        speed_m_per_s: f64,
        cos_incidence: f64,
        track_angle_rad: f64,
        particle_density_kg_per_m3: f64,
        target_density_kg_per_m3: f64,
    ) -> f64 {
        let k = self.law.factor(
            thickness_m / d_m,
            speed_m_per_s,
            cos_incidence,
            particle_density_kg_per_m3,
            target_density_kg_per_m3,
        );
        k * d_m * self.footprint_factor(cos_incidence, track_angle_rad)
    }

    /// Upper bound on the lateral width over every angle and every speed up to
    /// `speed_bound_m_per_s`, m. Used to bound the smallest diameter able to open a hole.
    ///
    /// Sawle-type: `k/max(c, c_min)` is largest at `c = c_min` for `c >= c_min` (the law is
    /// affine in `c` with a positive intercept) and below it the numerator only falls; so the
    /// bound is `d max(1, f(v_max c_min)) / c_min` with the footprint, `d max(1, f(v_max))`
    /// without. Hill-type: its factor grows with speed and `(cos θ)^0.026 <= 1`, so
    /// `max(1, f(v_max, cos = 1))` times the largest footprint factor.
    pub fn max_lateral_width_m(
        &self,
        d_m: f64,
        thickness_m: f64,
        speed_bound_m_per_s: f64,
        particle_density_kg_per_m3: f64,
        target_density_kg_per_m3: f64,
    ) -> f64 {
        let t_over_d = thickness_m / d_m;
        let k = match self.law {
            HoleFactorLaw::SawleType if self.oblique_footprint => {
                self.law.factor(
                    t_over_d,
                    speed_bound_m_per_s,
                    self.min_cos_incidence,
                    particle_density_kg_per_m3,
                    target_density_kg_per_m3,
                ) / self.min_cos_incidence
            }
            _ => {
                self.law.factor(
                    t_over_d,
                    speed_bound_m_per_s,
                    1.0,
                    particle_density_kg_per_m3,
                    target_density_kg_per_m3,
                ) * self.max_footprint_factor()
            }
        };
        k * d_m
    }

    /// Whether a hole at these conditions is outside the calibration envelope (module docs).
    #[inline]
    pub fn is_extrapolated(&self, d_m: f64, thickness_m: f64, normal_speed_m_per_s: f64) -> bool {
        let r = thickness_m / d_m;
        !((CALIBRATED_T_OVER_D_MIN..=CALIBRATED_T_OVER_D_MAX).contains(&r)
            && normal_speed_m_per_s <= CALIBRATED_NORMAL_SPEED_MAX_M_PER_S)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const RHO_P: f64 = 2500.0;
    const RHO_T: f64 = 1400.0;

    /// REFERENCES-damage §1.2 [COMPUTED] table: D_h/d_p from the two laws, polymer target
    /// ρ_t = 1.4, ρ_p = 2.5 g/cm³, c_t = 2.5, c_p = 5 km/s, θ = 0. Cell = (Sawle, Hill) raw law
    /// values as printed (the Hill entry "0.91→1.0" is the raw 0.91 before the floor).
    #[test]
    fn table_1_2_to_printed_digits() {
        let t_over_d = [0.005, 0.01, 0.025, 0.05, 0.1];
        let speeds = [10.0, 20.0, 30.0];
        let table: [[(f64, f64); 3]; 5] = [
            [(1.03, 0.91), (1.16, 1.02), (1.29, 1.10)],
            [(1.11, 1.04), (1.32, 1.20), (1.53, 1.32)],
            [(1.28, 1.30), (1.67, 1.56), (2.05, 1.75)],
            [(1.51, 1.61), (2.12, 1.97), (2.73, 2.25)],
            [(1.87, 2.04), (2.84, 2.56), (3.81, 2.95)],
        ];
        for (i, &r) in t_over_d.iter().enumerate() {
            for (jv, &v) in speeds.iter().enumerate() {
                let (sawle, hill) = table[i][jv];
                let s = HoleFactorLaw::SawleType.raw_factor(r, v * 1e3, 1.0, RHO_P, RHO_T);
                let h = HoleFactorLaw::HILL_DEFAULT.raw_factor(r, v * 1e3, 1.0, RHO_P, RHO_T);
                assert!(
                    (s - sawle).abs() <= 0.005 + 1e-9,
                    "Sawle t/d {r} v {v}: {s}"
                );
                assert!((h - hill).abs() <= 0.005 + 1e-9, "Hill t/d {r} v {v}: {h}");
            }
        }
    }

    #[test]
    fn thin_film_floor_and_normal_incidence() {
        // §1.2: below calibration use max(1, law) — thin-film limit D_h = d_p [DERIVED].
        for law in [HoleFactorLaw::SawleType, HoleFactorLaw::HILL_DEFAULT] {
            let k = law.factor(1e-6, 20e3, 1.0, RHO_P, RHO_T);
            assert_eq!(k, 1.0, "{law:?}");
        }
        // Normal incidence, no track dependence: the footprint is the round hole.
        let hs = HoleSize {
            law: HoleFactorLaw::SawleType,
            oblique_footprint: true,
            min_cos_incidence: 0.2,
        };
        for phi in [0.0, 0.4, 1.2, std::f64::consts::FRAC_PI_2] {
            assert!((hs.footprint_factor(1.0, phi) - 1.0).abs() < 1e-15);
        }
        // Normal-component rule (§1.1(i) [READ-sec]): Sawle at v cos θ equals Sawle at normal
        // incidence with speed v cos θ.
        let a = HoleFactorLaw::SawleType.raw_factor(0.02, 20e3, 0.5, RHO_P, RHO_T);
        let b = HoleFactorLaw::SawleType.raw_factor(0.02, 10e3, 1.0, RHO_P, RHO_T);
        assert!((a - b).abs() < 1e-14);
    }

    #[test]
    fn ellipse_projection_geometry() {
        // [DERIVED] ellipse axes k d and k d / cos θ: across-track (φ = π/2) the width is
        // k d / cos θ, along-track (φ = 0) it is k d; the cap holds at grazing.
        let hs = HoleSize {
            law: HoleFactorLaw::Constant { factor: 1.0 },
            oblique_footprint: true,
            min_cos_incidence: 0.2,
        };
        let half_pi = std::f64::consts::FRAC_PI_2;
        assert!((hs.footprint_factor(0.5, half_pi) - 2.0).abs() < 1e-12);
        assert!((hs.footprint_factor(0.5, 0.0) - 1.0).abs() < 1e-12);
        assert!((hs.footprint_factor(0.01, half_pi) - 5.0).abs() < 1e-12);
        // At 45 deg track the projection of an ellipse with semi-axes a, b is sqrt((a²+b²)/2).
        let f = hs.footprint_factor(0.5, half_pi / 2.0);
        assert!((f - ((1.0 + 4.0) / 2.0f64).sqrt()).abs() < 1e-12);
        // Independent check: project 10 000 boundary points of the ellipse.
        let (c, phi) = (0.37f64, 0.9f64);
        let (a, b) = (0.5, 0.5 / c); // semi-axes (short, long) for k d = 1
        let mut lo = f64::INFINITY;
        let mut hi = f64::NEG_INFINITY;
        for i in 0..10_000 {
            let t = i as f64 / 10_000.0 * std::f64::consts::TAU;
            // Long axis along (cos φ, sin φ) in (along-ribbon, across-ribbon) coordinates.
            let across = b * t.cos() * phi.sin() + a * t.sin() * phi.cos();
            lo = lo.min(across);
            hi = hi.max(across);
        }
        assert!(((hi - lo) / hs.footprint_factor(c, phi) - 1.0).abs() < 1e-6);
    }

    #[test]
    fn width_is_monotone_in_diameter_and_bounded() {
        let laws = [
            HoleFactorLaw::Constant { factor: 1.3 },
            HoleFactorLaw::SawleType,
            HoleFactorLaw::HILL_DEFAULT,
        ];
        for law in laws {
            for footprint in [false, true] {
                let hs = HoleSize {
                    law,
                    oblique_footprint: footprint,
                    min_cos_incidence: 0.2,
                };
                for &v in &[500.0, 5e3, 20e3, 72e3] {
                    for &c in &[0.05, 0.2, 0.6, 1.0] {
                        for &phi in &[0.0, 0.7, 1.57] {
                            let mut prev = 0.0;
                            for i in 0..400 {
                                let d = 1e-6 * 10f64.powf(i as f64 / 100.0);
                                let hw = hs.lateral_width_m(d, 20e-6, v, c, phi, RHO_P, 1560.0);
                                assert!(hw >= prev, "{law:?} d {d} v {v} c {c}");
                                let bound = hs.max_lateral_width_m(d, 20e-6, 72e3, RHO_P, 1560.0);
                                assert!(hw <= bound * (1.0 + 1e-12), "{law:?} d {d} v {v} c {c}");
                                prev = hw;
                            }
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn extrapolation_envelope() {
        let hs = HoleSize::constant(1.3);
        assert!(!hs.is_extrapolated(20e-6 / 0.1, 20e-6, 5e3));
        assert!(hs.is_extrapolated(20e-6 / 0.1, 20e-6, 8e3)); // too fast
        assert!(hs.is_extrapolated(1e-3, 20e-6, 5e3)); // t/d = 0.02
        assert!(hs.is_extrapolated(20e-6 / 0.5, 20e-6, 5e3)); // t/d = 0.5
    }
}

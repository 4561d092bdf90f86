//! One strike -> removed ribbon width.
//!
//! This module owns the description of a single impact ([`Impact`]), the struck ribbon
//! ([`RibbonTarget`]), the pluggable [`PerforationLaw`] trait with its two implementations
//! ([`ThinFilmHoleLaw`], the default, and the classical [`FractionOfWidth`] criterion), and the
//! geometric overlap of a hole with the ribbon ([`removed_width_m`]). Whether the remaining net
//! width still carries the segment's tension is decided by the structure model, not here.

mod fraction;
pub mod hole_size;
mod low_speed;
mod thin_film;

pub use fraction::FractionOfWidth;
pub use hole_size::{HoleFactorLaw, HoleSize};
pub use low_speed::LowSpeedHoleLaw;
pub use thin_film::{ThinFilmHoleLaw, DEFAULT_SPEED_BOUND_M_PER_S};

/// Errors from constructing damage-model values.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum DamageError {
    /// A parameter is outside its accepted range (name, value, accepted range in words).
    #[error("{name} = {value} is outside the accepted range {range}")]
    OutOfRange {
        /// Parameter name, with its unit suffix.
        name: &'static str,
        /// Value given.
        value: f64,
        /// Accepted range, in words.
        range: &'static str,
    },
}

pub(crate) fn check_range(
    name: &'static str,
    value: f64,
    ok: bool,
    range: &'static str,
) -> Result<(), DamageError> {
    if ok && value.is_finite() {
        Ok(())
    } else {
        Err(DamageError::OutOfRange { name, value, range })
    }
}

/// One particle striking one face of a ribbon.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Impact {
    /// Particle diameter (sphere), m.
    pub diameter_m: f64,
    /// Impact speed relative to the ribbon, m/s.
    pub speed_m_per_s: f64,
    /// Cosine of the angle between the velocity and the struck face's normal, in [0, 1]
    /// (kept as a cosine because the laws use it and the sampler draws it directly: cos = sqrt(u)).
    pub cos_incidence: f64,
    /// Particle bulk density, kg/m³.
    pub density_kg_per_m3: f64,
    /// Angle between the in-plane projection of the particle velocity and the ribbon's long
    /// axis, rad, in [0, π/2] (0: the track runs along the ribbon; π/2: across it). Uniform on
    /// [0, π/2] for isotropic arrival; the strike sampler draws it as the last detail of a
    /// strike (`FRAC_PI_2 * u`). Laws with a round hole ignore it.
    pub track_angle_rad: f64,
}

impl Impact {
    /// A validated impact: positive finite diameter, speed and density; incidence in [0, π/2];
    /// track angle 0 (along the ribbon; see [`Impact::with_track_angle`]).
    ///
    /// # Errors
    /// [`DamageError::OutOfRange`] naming the first offending field.
    pub fn new(
        diameter_m: f64,
        speed_m_per_s: f64,
        incidence_rad: f64,
        density_kg_per_m3: f64,
    ) -> Result<Self, DamageError> {
        check_range("diameter_m", diameter_m, diameter_m > 0.0, "(0, inf)")?;
        check_range(
            "speed_m_per_s",
            speed_m_per_s,
            speed_m_per_s > 0.0,
            "(0, inf)",
        )?;
        check_range(
            "incidence_rad",
            incidence_rad,
            (0.0..=std::f64::consts::FRAC_PI_2).contains(&incidence_rad),
            "[0, pi/2]",
        )?;
        check_range(
            "density_kg_per_m3",
            density_kg_per_m3,
            density_kg_per_m3 > 0.0,
            "(0, inf)",
        )?;
        Ok(Self {
            diameter_m,
            speed_m_per_s,
            cos_incidence: incidence_rad.cos().clamp(0.0, 1.0),
            density_kg_per_m3,
            track_angle_rad: 0.0,
        })
    }

    /// The same impact with its track angle set (rad, clamped into [0, π/2]; NaN gives 0).
    pub fn with_track_angle(mut self, track_angle_rad: f64) -> Self {
        self.track_angle_rad = if track_angle_rad.is_nan() {
            0.0
        } else {
            track_angle_rad.clamp(0.0, std::f64::consts::FRAC_PI_2)
        };
        self
    }
}

/// The struck ribbon (one segment's cross-section and material).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RibbonTarget {
    /// Full ribbon width, m.
    pub width_m: f64,
    /// Film thickness, m.
    pub thickness_m: f64,
    /// Film density, kg/m³.
    pub density_kg_per_m3: f64,
}

impl RibbonTarget {
    /// A validated target: positive finite width, thickness and density.
    ///
    /// # Errors
    /// [`DamageError::OutOfRange`] naming the first offending field.
    pub fn new(
        width_m: f64,
        thickness_m: f64,
        density_kg_per_m3: f64,
    ) -> Result<Self, DamageError> {
        check_range("width_m", width_m, width_m > 0.0, "(0, inf)")?;
        check_range("thickness_m", thickness_m, thickness_m > 0.0, "(0, inf)")?;
        check_range(
            "density_kg_per_m3",
            density_kg_per_m3,
            density_kg_per_m3 > 0.0,
            "(0, inf)",
        )?;
        Ok(Self {
            width_m,
            thickness_m,
            density_kg_per_m3,
        })
    }
}

/// A rule turning one impact into a hole across the ribbon.
///
/// Implementations must be cheap (called once per strike) and must not panic: for
/// non-physical input (NaN, negative sizes) they return 0, "no hole".
pub trait PerforationLaw: Send + Sync + std::fmt::Debug {
    /// Short name for reports.
    fn name(&self) -> &str;
    /// Lateral width (across the ribbon) of the hole made by this impact, m; 0 when the film is
    /// not perforated. `f64::INFINITY` means "severs the ribbon outright" (fraction-of-width
    /// criterion).
    fn hole_width_m(&self, impact: &Impact, target: &RibbonTarget) -> f64;
    /// Smallest particle diameter, m, that can make a hole at least `hole_width_m` wide at any
    /// speed and angle the law accepts (used to choose the sampling mass floor). Must be a true
    /// lower bound.
    fn min_diameter_for_hole_m(&self, hole_width_m: f64, target: &RibbonTarget) -> f64;
    /// Whether this impact's hole lies outside the calibration range of the law (the hole was
    /// extrapolated). Laws without a calibration range say `false`.
    fn is_extrapolated(&self, _impact: &Impact, _target: &RibbonTarget) -> bool {
        false
    }
}

/// Width of ribbon removed by a hole: the overlap of `[c - h/2, c + h/2]` with `[0, w]`, m.
///
/// `hole_centre_m` is measured from one ribbon edge and may lie outside the ribbon (a particle
/// whose centre passes just beyond the edge still bites into it). An infinite hole removes the
/// whole width. Non-physical input (NaN, non-positive hole or width) removes nothing.
#[inline]
pub fn removed_width_m(hole_centre_m: f64, hole_width_m: f64, ribbon_width_m: f64) -> f64 {
    if !(hole_width_m > 0.0 && ribbon_width_m > 0.0 && ribbon_width_m.is_finite()) {
        return 0.0;
    }
    if hole_width_m == f64::INFINITY {
        return ribbon_width_m;
    }
    if !hole_centre_m.is_finite() {
        return 0.0;
    }
    let half = 0.5 * hole_width_m;
    let low = (hole_centre_m - half).max(0.0);
    let high = (hole_centre_m + half).min(ribbon_width_m);
    (high - low).max(0.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn overlap_edge_cases() {
        let w = 0.03;
        assert!((removed_width_m(0.015, 0.001, w) - 0.001).abs() < 1e-15); // inside
        assert!((removed_width_m(0.0, 0.001, w) - 0.0005).abs() < 1e-15); // centred on the edge
        assert!((removed_width_m(0.03, 0.001, w) - 0.0005).abs() < 1e-15); // other edge
        assert_eq!(removed_width_m(-0.0005, 0.001, w), 0.0); // just touching from outside
        assert!((removed_width_m(-0.0004, 0.001, w) - 0.0001).abs() < 1e-15); // grazing bite
        assert_eq!(removed_width_m(0.5, 0.001, w), 0.0); // far away
        assert!((removed_width_m(0.015, 0.1, w) - w).abs() < 1e-15); // hole wider than ribbon
        assert_eq!(removed_width_m(0.015, f64::INFINITY, w), w);
        assert_eq!(removed_width_m(-5.0, f64::INFINITY, w), w);
        assert_eq!(removed_width_m(0.015, 0.0, w), 0.0);
        assert_eq!(removed_width_m(f64::NAN, 0.001, w), 0.0);
        assert_eq!(removed_width_m(0.01, f64::NAN, w), 0.0);
        assert_eq!(removed_width_m(0.01, -1.0, w), 0.0);
    }

    #[test]
    fn constructors_validate() {
        assert!(Impact::new(1e-3, 2e4, 0.0, 2500.0).is_ok());
        assert!(Impact::new(-1e-3, 2e4, 0.0, 2500.0).is_err());
        assert!(Impact::new(1e-3, f64::NAN, 0.0, 2500.0).is_err());
        assert!(Impact::new(1e-3, 2e4, 2.0, 2500.0).is_err());
        assert!(RibbonTarget::new(0.03, 25e-6, 1420.0).is_ok());
        assert!(RibbonTarget::new(0.03, 0.0, 1420.0).is_err());
    }

    proptest::proptest! {
        // Contract of `min_diameter_for_hole_m`: hole_width >= h implies d >= min_diameter(h),
        // checked for both laws over random impacts, targets and thresholds.
        #[test]
        fn min_diameter_is_a_lower_bound(
            d in 1e-7f64..0.05,
            v in 1_000.0f64..80_000.0,
            angle in 0.0f64..std::f64::consts::FRAC_PI_2,
            rho_p in 300.0f64..8000.0,
            width in 1e-3f64..0.2,
            thickness in 5e-6f64..2e-4,
            rho_t in 900.0f64..3000.0,
            factor in 1.0f64..3.0,
            fraction in 0.05f64..1.0,
            h_share in 0.0f64..1.2,
        ) {
            let impact = Impact::new(d, v, angle, rho_p).unwrap();
            let target = RibbonTarget::new(width, thickness, rho_t).unwrap();
            let sawle = ThinFilmHoleLaw::with_hole_size(HoleSize {
                law: HoleFactorLaw::SawleType,
                oblique_footprint: true,
                min_cos_incidence: 0.2,
            })
            .unwrap();
            let hill = ThinFilmHoleLaw::with_hole_size(HoleSize {
                law: HoleFactorLaw::HILL_DEFAULT,
                oblique_footprint: true,
                min_cos_incidence: 0.2,
            })
            .unwrap();
            let impact = impact.with_track_angle(angle);
            let laws: [&dyn PerforationLaw; 4] = [
                &ThinFilmHoleLaw::new(factor).unwrap(),
                &FractionOfWidth::new(fraction).unwrap(),
                &sawle,
                &hill,
            ];
            for law in laws {
                let hole = law.hole_width_m(&impact, &target);
                // Thresholds up to (and just past) the hole actually made.
                let h = if hole.is_finite() { h_share * hole } else { h_share * width };
                if hole >= h && h > 0.0 {
                    proptest::prop_assert!(d >= law.min_diameter_for_hole_m(h, &target),
                        "{}: d={d} h={h} hole={hole}", law.name());
                }
            }
        }
    }
}

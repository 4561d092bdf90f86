//! A perforation rule for slow particles (lunar secondary ejecta, at most about 1 km/s).
//!
//! **The low-speed hole size is an assumption.** No hole-size data for polymer fibre films at
//! 0.05–1 km/s were found (REFERENCES-damage §3.2 is a gap). What is known: thin polycarbonate
//! films are perforated at tens of m/s by microprojectiles (LIPIT tests, Soft Matter 16(16),
//! 3886–3890, 2020 [READ abstract]), so a millimetre particle at hundreds of m/s goes through a
//! 20 µm film. We therefore take: perforation when the normal speed `v cos θ` is at least
//! `perforation_speed_m_per_s` (default 50 m/s); the hole is `hole_factor × d_p` (default 1.0,
//! the thin-film limit, since a slow particle has no energy to spare for a crater larger than
//! itself), elongated as the oblique ellipse of `damage::hole_size` with the same grazing cap.

use super::hole_size::{HoleFactorLaw, HoleSize};
use super::{check_range, DamageError, Impact, PerforationLaw, RibbonTarget};

/// Low-speed perforation rule (module docs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LowSpeedHoleLaw {
    hole: HoleSize,
    hole_factor: f64,
    perforation_speed_m_per_s: f64,
}

impl LowSpeedHoleLaw {
    /// A validated rule.
    ///
    /// # Errors
    /// [`DamageError::OutOfRange`] naming the parameter.
    pub fn new(
        hole_factor: f64,
        perforation_speed_m_per_s: f64,
        min_cos_incidence: f64,
    ) -> Result<Self, DamageError> {
        check_range(
            "perforation_speed_m_per_s",
            perforation_speed_m_per_s,
            (0.0..=1000.0).contains(&perforation_speed_m_per_s),
            "[0, 1000]",
        )?;
        let hole = HoleSize {
            law: HoleFactorLaw::Constant {
                factor: hole_factor,
            },
            oblique_footprint: true,
            min_cos_incidence,
        }
        .validated()?;
        Ok(LowSpeedHoleLaw {
            hole,
            hole_factor,
            perforation_speed_m_per_s,
        })
    }

    /// Largest lateral width over particle diameter (elongation cap included).
    pub fn max_width_factor(&self) -> f64 {
        self.hole_factor * self.hole.max_footprint_factor()
    }
}

impl PerforationLaw for LowSpeedHoleLaw {
    fn name(&self) -> &str {
        "low_speed_hole"
    }

    fn hole_width_m(&self, impact: &Impact, target: &RibbonTarget) -> f64 {
        let d = impact.diameter_m;
        let v_n = impact.speed_m_per_s * impact.cos_incidence;
        if !(d > 0.0 && d.is_finite() && v_n >= self.perforation_speed_m_per_s && v_n > 0.0) {
            return 0.0;
        }
        self.hole.lateral_width_m(
            d,
            target.thickness_m,
            impact.speed_m_per_s,
            impact.cos_incidence,
            impact.track_angle_rad,
            impact.density_kg_per_m3,
            target.density_kg_per_m3,
        )
    }

    /// `hole_width / (hole_factor / c_min)`: the widest footprint.
    fn min_diameter_for_hole_m(&self, hole_width_m: f64, _target: &RibbonTarget) -> f64 {
        if hole_width_m > 0.0 {
            hole_width_m / self.max_width_factor()
        } else {
            0.0
        }
    }

    /// Always: the low-speed hole size has no calibration at all.
    fn is_extrapolated(&self, _impact: &Impact, _target: &RibbonTarget) -> bool {
        true
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rule_and_bound() {
        let law = LowSpeedHoleLaw::new(1.0, 50.0, 0.2).unwrap();
        let film = RibbonTarget::new(0.012, 20e-6, 1560.0).unwrap();
        let slow = Impact::new(1e-3, 40.0, 0.0, 2500.0).unwrap();
        assert_eq!(law.hole_width_m(&slow, &film), 0.0);
        let across = Impact::new(1e-3, 500.0, 1.0, 2500.0)
            .unwrap()
            .with_track_angle(std::f64::consts::FRAC_PI_2);
        let w = law.hole_width_m(&across, &film);
        assert!((w - 1e-3 / 1.0f64.cos()).abs() < 1e-12, "{w}");
        assert!(law.min_diameter_for_hole_m(w, &film) <= 1e-3);
        assert!(LowSpeedHoleLaw::new(0.5, 50.0, 0.2).is_err());
        assert!(LowSpeedHoleLaw::new(1.0, -1.0, 0.2).is_err());
    }
}

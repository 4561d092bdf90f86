//! The classical fraction-of-width severance criterion, kept for comparison with the
//! literature.

use super::{check_range, DamageError, Impact, PerforationLaw, RibbonTarget};

/// A particle of diameter at least `fraction × ribbon width` severs the ribbon outright
/// (hole width `f64::INFINITY`); anything smaller does nothing.
///
/// The one-third rule is the classical assumption for tape tethers (called so in
/// "A severing rate model for tape tethers based on experimental ballistic equations",
/// Adv. Space Res. 75(11), 2025; the same 1/3-of-diameter rule is used for round tethers).
/// It ignores speed, angle and density, and small holes do not accumulate: use it to compare
/// with published severance rates, not as the default.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FractionOfWidth {
    fraction: f64,
}

impl Default for FractionOfWidth {
    fn default() -> Self {
        Self {
            fraction: 1.0 / 3.0,
        }
    }
}

impl FractionOfWidth {
    /// Criterion with the given fraction of the ribbon width.
    ///
    /// # Errors
    /// [`DamageError::OutOfRange`] unless `0 < fraction <= 1`.
    pub fn new(fraction: f64) -> Result<Self, DamageError> {
        check_range(
            "fraction",
            fraction,
            fraction > 0.0 && fraction <= 1.0,
            "(0, 1]",
        )?;
        Ok(Self { fraction })
    }

    /// Critical diameter as a fraction of ribbon width.
    pub fn fraction(&self) -> f64 {
        self.fraction
    }
}

impl PerforationLaw for FractionOfWidth {
    fn name(&self) -> &str {
        "fraction_of_width"
    }

    fn hole_width_m(&self, impact: &Impact, target: &RibbonTarget) -> f64 {
        if impact.diameter_m >= self.fraction * target.width_m && target.width_m > 0.0 {
            f64::INFINITY
        } else {
            0.0
        }
    }

    /// Any positive hole means severance, which needs `d >= fraction × width`.
    fn min_diameter_for_hole_m(&self, hole_width_m: f64, target: &RibbonTarget) -> f64 {
        if hole_width_m > 0.0 {
            self.fraction * target.width_m
        } else {
            0.0
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_third_rule() {
        let law = FractionOfWidth::default();
        let ribbon = RibbonTarget::new(0.03, 25e-6, 1420.0).unwrap();
        let at = |d: f64| Impact::new(d, 20_000.0, 0.3, 2500.0).unwrap();
        assert_eq!(law.hole_width_m(&at(0.0099), &ribbon), 0.0);
        assert_eq!(law.hole_width_m(&at(0.0100001), &ribbon), f64::INFINITY);
        assert!((law.min_diameter_for_hole_m(1e-6, &ribbon) - 0.01).abs() < 1e-15);
        assert!(FractionOfWidth::new(0.0).is_err());
        assert!(FractionOfWidth::new(1.5).is_err());
    }
}

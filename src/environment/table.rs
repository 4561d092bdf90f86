//! A cumulative flux given as a table of (mass, flux) points.
//!
//! File format (JSON, SI units; see `flux_models/grun1985_tabulated.json`):
//!
//! ```json
//! { "name": "...", "source": "full citation", "units": "free-text note",
//!   "mass_kg": [1e-15, 5e-15, ...], "flux_per_m2_per_year": [1.09e3, 6.11e2, ...] }
//! ```
//!
//! Masses are in kilograms (not grams) so that the file and the API use the same unit; the
//! flux follows the [`FluxModel`] convention (one face of a randomly tumbling plate).
//!
//! Between points the flux is interpolated linearly in `(ln m, ln F)`, the natural form for
//! power-law-like fluxes. Outside the table the same straight line through the two end points
//! is extended (log-log extrapolation): a table cannot know what lies beyond it, clamping to
//! the end value would invent a flat spectrum, and refusing would make every caller handle an
//! error for a mass a sampler may legitimately probe. [`FluxModel::valid_mass_range_kg`]
//! reports the table range so callers can tell when they are extrapolating.

use serde::Deserialize;

use super::{parse_json, EnvironmentError, FluxModel};

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct TableFile {
    name: String,
    source: String,
    #[serde(default, rename = "units")]
    _units: String,
    mass_kg: Vec<f64>,
    flux_per_m2_per_year: Vec<f64>,
}

/// A tabulated cumulative flux with log-log interpolation (see the module docs).
#[derive(Debug, Clone)]
pub struct TabulatedFlux {
    name: String,
    source: String,
    mass_kg: Vec<f64>,
    ln_mass: Vec<f64>,
    ln_flux: Vec<f64>,
}

impl TabulatedFlux {
    /// Builds a table after validating it.
    ///
    /// Rules, checked in this order: equal lengths; at least 2 points; every mass and flux
    /// finite and `> 0`; masses strictly increasing; flux non-increasing (a cumulative flux
    /// cannot grow with mass). Each error names the field, the index, the value and the rule.
    pub fn new(
        name: impl Into<String>,
        source: impl Into<String>,
        mass_kg: Vec<f64>,
        flux_per_m2_per_year: Vec<f64>,
    ) -> Result<Self, EnvironmentError> {
        if mass_kg.len() != flux_per_m2_per_year.len() {
            return Err(EnvironmentError::LengthMismatch {
                field_a: "mass_kg",
                len_a: mass_kg.len(),
                field_b: "flux_per_m2_per_year",
                len_b: flux_per_m2_per_year.len(),
            });
        }
        if mass_kg.len() < 2 {
            return Err(EnvironmentError::TooFewPoints {
                field: "mass_kg",
                count: mass_kg.len(),
                minimum: 2,
            });
        }
        for (field, values) in [
            ("mass_kg", &mass_kg),
            ("flux_per_m2_per_year", &flux_per_m2_per_year),
        ] {
            for (index, &value) in values.iter().enumerate() {
                if !(value.is_finite() && value > 0.0) {
                    return Err(EnvironmentError::InvalidTable {
                        field,
                        index,
                        value,
                        rule: "must be finite and > 0".to_string(),
                    });
                }
            }
        }
        for index in 1..mass_kg.len() {
            let (prev, value) = (mass_kg[index - 1], mass_kg[index]);
            if value <= prev {
                return Err(EnvironmentError::InvalidTable {
                    field: "mass_kg",
                    index,
                    value,
                    rule: format!("must be strictly increasing (previous value {prev})"),
                });
            }
            let (prev, value) = (flux_per_m2_per_year[index - 1], flux_per_m2_per_year[index]);
            if value > prev {
                return Err(EnvironmentError::InvalidTable {
                    field: "flux_per_m2_per_year",
                    index,
                    value,
                    rule: format!("must be non-increasing with mass (previous value {prev})"),
                });
            }
        }
        Ok(Self {
            name: name.into(),
            source: source.into(),
            ln_mass: mass_kg.iter().map(|m| m.ln()).collect(),
            ln_flux: flux_per_m2_per_year.iter().map(|f| f.ln()).collect(),
            mass_kg,
        })
    }

    /// Parses and validates a table file (format in the module docs). Unknown fields are
    /// rejected.
    pub fn from_json(text: &str) -> Result<Self, EnvironmentError> {
        let file: TableFile = parse_json("flux table", text)?;
        Self::new(
            file.name,
            file.source,
            file.mass_kg,
            file.flux_per_m2_per_year,
        )
    }

    /// Citation of the tabulated data, as given in the file.
    pub fn source(&self) -> &str {
        &self.source
    }

    /// The tabulated masses, kg.
    pub fn mass_kg(&self) -> &[f64] {
        &self.mass_kg
    }
}

impl FluxModel for TabulatedFlux {
    fn name(&self) -> &str {
        &self.name
    }

    /// Log-log interpolation inside the table, log-log extrapolation from the two end points
    /// outside it; `NaN` for a non-positive or non-finite mass.
    fn cumulative_flux_per_m2_per_year(&self, mass_kg: f64) -> f64 {
        if !(mass_kg.is_finite() && mass_kg > 0.0) {
            return f64::NAN;
        }
        let x = mass_kg.ln();
        let n = self.ln_mass.len();
        // Index of the segment [i, i+1] to use; the end segments also serve extrapolation.
        let i = self.ln_mass.partition_point(|&lm| lm <= x).clamp(1, n - 1) - 1;
        let (x0, x1) = (self.ln_mass[i], self.ln_mass[i + 1]);
        let (y0, y1) = (self.ln_flux[i], self.ln_flux[i + 1]);
        (y0 + (y1 - y0) * (x - x0) / (x1 - x0)).exp()
    }

    fn valid_mass_range_kg(&self) -> (f64, f64) {
        (self.mass_kg[0], self.mass_kg[self.mass_kg.len() - 1])
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn power_law() -> TabulatedFlux {
        // F = m^-1 exactly representable in log-log.
        TabulatedFlux::new("t", "test", vec![1e-6, 1e-4, 1e-2], vec![1e6, 1e4, 1e2]).unwrap()
    }

    #[test]
    fn interpolates_and_extrapolates_a_power_law_exactly() {
        let t = power_law();
        for m in [1e-9, 1e-6, 3e-5, 1e-4, 7e-3, 1e-2, 1.0] {
            let f = t.cumulative_flux_per_m2_per_year(m);
            assert!((f * m - 1.0).abs() < 1e-12, "m = {m}: {f}");
        }
        assert_eq!(t.valid_mass_range_kg(), (1e-6, 1e-2));
    }

    #[test]
    fn flat_segments_are_allowed() {
        let t = TabulatedFlux::new("t", "s", vec![1.0, 2.0, 3.0], vec![5.0, 5.0, 1.0]).unwrap();
        assert!((t.cumulative_flux_per_m2_per_year(1.5) - 5.0).abs() < 1e-12);
    }

    #[test]
    fn bad_masses_give_nan() {
        let t = power_law();
        for m in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            assert!(t.cumulative_flux_per_m2_per_year(m).is_nan());
        }
    }
}

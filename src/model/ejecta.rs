//! The lunar secondary-ejecta strike source on the lowest bays (REFERENCES-damage §3), built
//! from `environment.lunar_ejecta` when enabled.
//!
//! Per bay and speed bin the flux onto one face is `s × N_b(>= m) × f_b`, with `s` the
//! scenario's scale factor, `N_b` the SP-8013 cumulative flux and `f_b` the bay-averaged share
//! of the bin's speeds whose ballistic ceiling reaches the altitude
//! ([`LunarEjecta::mean_reach_fraction`]). A bay above the fastest bin's ceiling (≈ 374 km)
//! gets nothing.
//!
//! **Arrival geometry (assumption).** Ejecta that reach a vertical ribbon well above their
//! launch point travel mostly horizontally (REFERENCES-damage §3.6 [DERIVED]); we take them
//! exactly horizontal with a uniform azimuth. A face with a horizontal normal then sees
//! `cos θ = cos ψ` with the azimuth from the normal `ψ` weighted by `cos ψ` (so `sin ψ = u`),
//! and the in-plane projection of the velocity is horizontal: the track angle is `π/2`, and the
//! elongated footprint lies across the width (the worst case for the removed width).
//!
//! Strike rate above a diameter floor `d_f` per metre of one ribbon (both faces, exposure width
//! `w + d`): the cumulative flux is a power law in diameter, `F(d) = F(d_f)(d/d_f)^q` with
//! `q = 3 β` (`β` the mass index, −1.2), so `∫_{d_f}^∞ F = F(d_f) d_f / (−q − 1)` and the rate is
//! `2 F(d_f) (w + d_f + d_f/(−q − 1))` per bin.

use crate::damage::LowSpeedHoleLaw;
use crate::environment::{mass_from_diameter_kg, LunarEjecta};
use crate::scenario::{ScenarioError, SECONDS_PER_YEAR};

/// The ejecta source as the engine and reports need it.
#[derive(Debug, Clone)]
pub struct EjectaSource {
    /// The environment model.
    pub environment: LunarEjecta,
    /// Flux multiplier, in the file's accepted range.
    pub scale_factor: f64,
    /// Perforation rule at ejecta speeds.
    pub perforation: LowSpeedHoleLaw,
    /// Per bay and bin: bay-averaged reach fraction (0 above the ceiling).
    pub reach: Vec<Vec<f64>>,
}

impl EjectaSource {
    /// Build for bays with the given (bottom, top) altitudes.
    ///
    /// # Errors
    /// [`ScenarioError`] for a parameter outside the file's documented range.
    pub fn new(
        environment: LunarEjecta,
        scale_factor: f64,
        perforation: LowSpeedHoleLaw,
        bays: &[(f64, f64)],
    ) -> Result<Self, ScenarioError> {
        let (lo, hi) = environment.scale_factor_range;
        if !(scale_factor >= lo && scale_factor <= hi) {
            return Err(ScenarioError::OutOfRange {
                path: "environment.lunar_ejecta.flux_scale_factor".into(),
                value: scale_factor.to_string(),
                allowed: format!("[{lo}, {hi}]"),
                unit: "(dimensionless)".into(),
                note: "range documented in flux_models/sp8013_lunar_ejecta.json".into(),
            });
        }
        for (i, b) in environment.bins.iter().enumerate() {
            if !(b.mass_exponent * 3.0 < -1.0) {
                return Err(ScenarioError::Model {
                    path: format!("flux_models/sp8013_lunar_ejecta.json bins[{i}].mass_exponent"),
                    message: format!(
                        "{} gives an infinite edge-overlap integral; it must be below -1/3",
                        b.mass_exponent
                    ),
                });
            }
        }
        let top = environment.max_ceiling_altitude_m();
        let reach = bays
            .iter()
            .map(|&(a, b)| {
                (0..environment.bins.len())
                    .map(|k| {
                        if a >= top {
                            0.0
                        } else {
                            environment.mean_reach_fraction(k, a, b)
                        }
                    })
                    .collect()
            })
            .collect();
        Ok(EjectaSource {
            environment,
            scale_factor,
            perforation,
            reach,
        })
    }

    /// Whether bay `j` receives any ejecta.
    pub fn reaches_bay(&self, j: usize) -> bool {
        self.scale_factor > 0.0 && self.reach[j].iter().any(|&f| f > 0.0)
    }

    /// Strike rate per metre of one ribbon of width `width_m` in bay `j` by ejecta of bin `b`
    /// with diameter `>= floor_m`, per second (both faces, edge overlap; module docs).
    pub fn bin_rate_per_m_per_s(&self, j: usize, b: usize, width_m: f64, floor_m: f64) -> f64 {
        let f = self.reach[j][b] * self.scale_factor;
        if f <= 0.0 || !(floor_m > 0.0) {
            return 0.0;
        }
        let e = &self.environment;
        let m = mass_from_diameter_kg(floor_m, e.particle_density_kg_per_m3).unwrap_or(0.0);
        let q = 3.0 * e.bins[b].mass_exponent;
        let flux = e.bin_flux_per_m2_per_s(b, m) * f;
        2.0 * flux * (width_m + floor_m + floor_m / (-q - 1.0))
    }

    /// Strike rate per metre of one ribbon, all bins, per year.
    pub fn rate_per_m_per_year(&self, j: usize, width_m: f64, floor_m: f64) -> f64 {
        (0..self.environment.bins.len())
            .map(|b| self.bin_rate_per_m_per_s(j, b, width_m, floor_m))
            .sum::<f64>()
            * SECONDS_PER_YEAR
    }
}

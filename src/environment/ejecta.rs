//! Lunar secondary ejecta: the SP-8013-type cumulative flux per speed bin and the ballistic
//! ceiling of each speed (REFERENCES-damage §3).
//!
//! - Flux (§3.1, [READ-sec] via a public MSFC draft and its plotting script): in each
//!   ejecta-speed bin, `log10 N(>= m) = a_b − 1.2 log10 m` (m in g, N per m² per s). The
//!   parameters live in `flux_models/sp8013_lunar_ejecta.json`.
//! - Ceiling (§3.5, [DERIVED]; the exact apoapsis formula also [READ-sec]): a particle launched
//!   vertically at speed `v` from radius `R` rises to `h_max = R v² / (v_esc² − v²)`; any other
//!   launch angle rises less, so at altitude `h` only speeds `v >= v_min(h) = v_esc sqrt(h /
//!   (R + h))` can arrive (the inverse of the ceiling).
//! - **Assumptions** (ours, stated because no source settles them): speeds uniform within a
//!   bin (§3.7 suggests uniform or a power law); a particle able to reach `h` arrives there
//!   with the flux it had at the surface (no dilution with height — conservative); the SP-8013
//!   number is taken as the flux onto one face of the ribbon.

use serde::Deserialize;

use super::{parse_json, EnvironmentError};

/// The embedded parameter file.
pub const SP8013_EJECTA_JSON: &str = include_str!("../../flux_models/sp8013_lunar_ejecta.json");

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct EjectaFile {
    name: String,
    source: String,
    #[allow(dead_code)]
    meaning: String,
    mass_unit: String,
    flux_unit: String,
    valid_mass_range_g: [f64; 2],
    #[allow(dead_code)]
    valid_mass_range_note: String,
    particle_density_g_per_cm3: f64,
    #[allow(dead_code)]
    particle_density_note: String,
    bins: Vec<EjectaBin>,
    #[allow(dead_code)]
    speed_within_bin: String,
    scale_factor_range: [f64; 2],
    #[allow(dead_code)]
    scale_factor_note: String,
}

/// One ejecta-speed bin of the SP-8013 model.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EjectaBin {
    /// Lower speed, m/s.
    pub speed_low_m_per_s: f64,
    /// Upper speed, m/s.
    pub speed_high_m_per_s: f64,
    /// `a_b` in `log10 N = a_b + mass_exponent log10(m / 1 g)`, N per m² per s.
    pub log10_coefficient: f64,
    /// Cumulative mass index (−1.2 in SP-8013).
    pub mass_exponent: f64,
}

/// The SP-8013 lunar-ejecta environment with the Moon's radius and escape speed.
#[derive(Debug, Clone, PartialEq)]
pub struct LunarEjecta {
    /// Model name from the file.
    pub name: String,
    /// Citation from the file.
    pub source: String,
    /// Speed bins.
    pub bins: Vec<EjectaBin>,
    /// Particle density, kg/m³ (assumption, from the file).
    pub particle_density_kg_per_m3: f64,
    /// Mass range of the fit, kg.
    pub valid_mass_range_kg: (f64, f64),
    /// Accepted scale-factor range from the file.
    pub scale_factor_range: (f64, f64),
    /// Moon radius, m.
    pub moon_radius_m: f64,
    /// Escape speed at the surface, m/s.
    pub escape_speed_m_per_s: f64,
}

impl LunarEjecta {
    /// Parse the embedded file for a Moon of radius `moon_radius_m` and surface escape speed
    /// `escape_speed_m_per_s`.
    ///
    /// # Errors
    /// [`EnvironmentError`] for a malformed file or non-physical parameters.
    pub fn sp8013(moon_radius_m: f64, escape_speed_m_per_s: f64) -> Result<Self, EnvironmentError> {
        Self::from_json(SP8013_EJECTA_JSON, moon_radius_m, escape_speed_m_per_s)
    }

    /// Parse a file in the format of `flux_models/sp8013_lunar_ejecta.json`.
    ///
    /// # Errors
    /// [`EnvironmentError`] naming the field.
    pub fn from_json(
        text: &str,
        moon_radius_m: f64,
        escape_speed_m_per_s: f64,
    ) -> Result<Self, EnvironmentError> {
        let f: EjectaFile = parse_json("lunar ejecta parameter file", text)?;
        if f.mass_unit != "g" {
            return Err(EnvironmentError::InvalidUnit {
                field: "mass_unit",
                found: f.mass_unit,
                expected: "g",
            });
        }
        if f.flux_unit != "per m^2 per s" {
            return Err(EnvironmentError::InvalidUnit {
                field: "flux_unit",
                found: f.flux_unit,
                expected: "per m^2 per s",
            });
        }
        for (i, b) in f.bins.iter().enumerate() {
            let ok = b.speed_low_m_per_s >= 0.0
                && b.speed_high_m_per_s > b.speed_low_m_per_s
                && b.speed_high_m_per_s < escape_speed_m_per_s
                && b.log10_coefficient.is_finite()
                && b.mass_exponent < 0.0;
            if !ok {
                return Err(EnvironmentError::InvalidTable {
                    field: "bins",
                    index: i,
                    value: b.speed_high_m_per_s,
                    rule: "0 <= speed_low < speed_high < lunar escape speed, finite coefficient, mass_exponent < 0".into(),
                });
            }
        }
        if !(f.particle_density_g_per_cm3 > 0.0 && f.particle_density_g_per_cm3.is_finite()) {
            return Err(EnvironmentError::InvalidParameter {
                field: "particle_density_g_per_cm3",
                value: f.particle_density_g_per_cm3,
                rule: "must be finite and > 0".into(),
            });
        }
        Ok(LunarEjecta {
            name: f.name,
            source: f.source,
            bins: f.bins,
            particle_density_kg_per_m3: f.particle_density_g_per_cm3 * 1e3,
            valid_mass_range_kg: (f.valid_mass_range_g[0] / 1e3, f.valid_mass_range_g[1] / 1e3),
            scale_factor_range: (f.scale_factor_range[0], f.scale_factor_range[1]),
            moon_radius_m,
            escape_speed_m_per_s,
        })
    }

    /// Cumulative flux of bin `b` of particles of mass `>= mass_kg`, per m² per s (0 for a
    /// non-positive mass).
    pub fn bin_flux_per_m2_per_s(&self, b: usize, mass_kg: f64) -> f64 {
        if mass_kg.is_nan() || mass_kg <= 0.0 {
            return 0.0;
        }
        let bin = &self.bins[b];
        10f64.powf(bin.log10_coefficient + bin.mass_exponent * (mass_kg * 1e3).log10())
    }

    /// Ballistic ceiling of a vertical launch at `speed_m_per_s`, m above the surface:
    /// `R v² / (v_esc² − v²)` (infinite at or above escape speed).
    pub fn ceiling_altitude_m(&self, speed_m_per_s: f64) -> f64 {
        let (r, ve) = (self.moon_radius_m, self.escape_speed_m_per_s);
        let v2 = speed_m_per_s * speed_m_per_s;
        if v2 >= ve * ve {
            f64::INFINITY
        } else {
            r * v2 / (ve * ve - v2)
        }
    }

    /// Smallest launch speed that reaches altitude `altitude_m`, m/s:
    /// `v_esc sqrt(h / (R + h))`.
    pub fn min_speed_to_reach_m_per_s(&self, altitude_m: f64) -> f64 {
        let h = altitude_m.max(0.0);
        self.escape_speed_m_per_s * (h / (self.moon_radius_m + h)).sqrt()
    }

    /// Share of bin `b`'s particles (speeds uniform in the bin) able to reach `altitude_m`.
    pub fn reach_fraction(&self, b: usize, altitude_m: f64) -> f64 {
        let bin = &self.bins[b];
        let v_min = self.min_speed_to_reach_m_per_s(altitude_m);
        ((bin.speed_high_m_per_s - v_min.max(bin.speed_low_m_per_s))
            / (bin.speed_high_m_per_s - bin.speed_low_m_per_s))
            .clamp(0.0, 1.0)
    }

    /// Mean of [`Self::reach_fraction`] over altitudes `[low_m, high_m]` (midpoint rule, 400
    /// points; the fraction is continuous and monotone).
    pub fn mean_reach_fraction(&self, b: usize, low_m: f64, high_m: f64) -> f64 {
        let n = 400;
        let step = (high_m - low_m) / n as f64;
        (0..n)
            .map(|i| self.reach_fraction(b, low_m + (i as f64 + 0.5) * step))
            .sum::<f64>()
            / n as f64
    }

    /// Highest altitude any bin reaches, m.
    pub fn max_ceiling_altitude_m(&self) -> f64 {
        self.bins
            .iter()
            .map(|b| self.ceiling_altitude_m(b.speed_high_m_per_s))
            .fold(0.0, f64::max)
    }

    /// Cumulative flux of particles of mass `>= mass_kg` able to reach `altitude_m`, all bins,
    /// per m² per s.
    pub fn flux_at_altitude_per_m2_per_s(&self, mass_kg: f64, altitude_m: f64) -> f64 {
        (0..self.bins.len())
            .map(|b| self.bin_flux_per_m2_per_s(b, mass_kg) * self.reach_fraction(b, altitude_m))
            .sum()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn model() -> LunarEjecta {
        // REFERENCES-damage §3.5 table uses R = 1737.4 km and v_esc = 2.376 km/s exactly.
        LunarEjecta::sp8013(1_737.4e3, 2_376.0).unwrap()
    }

    #[test]
    fn coefficients_of_section_3_1() {
        // REFERENCES-damage §3.1 [READ-sec]: log10 N = -10.79, -11.88, -13.41 - 1.2 log10 m.
        let e = model();
        let m_g = 1e-3;
        for (b, a) in [-10.79, -11.88, -13.41].iter().enumerate() {
            let n = e.bin_flux_per_m2_per_s(b, m_g / 1e3);
            assert!((n.log10() - (a - 1.2 * m_g.log10())).abs() < 1e-12);
        }
        // Total [COMPUTED] -10.755 - 1.2 log10 m (matches the remembered total -10.75 [MEMORY]).
        let total: f64 = (0..3).map(|b| e.bin_flux_per_m2_per_s(b, 1e-3)).sum();
        assert!(
            (total.log10() - (-10.755)).abs() < 5e-4,
            "{}",
            total.log10()
        );
        // §3.1 [COMPUTED] table at 1e-3 g, per m² per year: total 2.21, <= 0.1 km/s 2.04,
        // 0.25-1 km/s 4.9e-3.
        let yr = crate::units::SECONDS_PER_YEAR;
        let at = |b: usize| e.bin_flux_per_m2_per_s(b, 1e-6) * yr;
        assert!((at(0) / 2.04 - 1.0).abs() < 0.01);
        assert!((at(2) / 4.9e-3 - 1.0).abs() < 0.01);
        assert!(((at(0) + at(1) + at(2)) / 2.21 - 1.0).abs() < 0.01);
    }

    #[test]
    fn ceiling_of_section_3_5() {
        // REFERENCES-damage §3.5 [COMPUTED] "h_max exact, vertical": 3.1, 19.5, 81, 374, 1151,
        // 4224, 25 862 km at 0.1 ... 2.3 km/s, against h = R v²/(v_esc² - v²) [DERIVED].
        let e = model();
        // (speed m/s, printed km, half a unit of the printed last digit)
        let table = [
            (100.0, 3.1, 0.05),
            (250.0, 19.5, 0.05),
            (500.0, 81.0, 0.5),
            (1000.0, 374.0, 0.5),
            (1500.0, 1151.0, 0.5),
            (2000.0, 4224.0, 0.5),
            (2300.0, 25_862.0, 0.5),
        ];
        for (v, h_km, printed_step) in table {
            let h = e.ceiling_altitude_m(v) / 1e3;
            // Values sit on rounding edges (80.50 printed 81), so 2 % slack on the half digit,
            // plus 2.5e-5 relative for the five-digit entry.
            let tol = printed_step * 1.02 + 2.5e-5 * h_km;
            assert!((h - h_km).abs() <= tol, "v {v}: {h} km vs {h_km}");
            // The inverse gives the speed back.
            assert!((e.min_speed_to_reach_m_per_s(h * 1e3) / v - 1.0).abs() < 1e-9);
        }
        assert!(e.ceiling_altitude_m(2_376.0).is_infinite());
        // The whole SP-8013 environment vanishes above ≈ 370 km (§3.5).
        assert!((e.max_ceiling_altitude_m() / 1e3 - 374.0).abs() < 0.5);
        assert_eq!(e.reach_fraction(2, 380e3), 0.0);
        assert_eq!(e.reach_fraction(0, 0.0), 1.0);
    }
}

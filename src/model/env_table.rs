//! The environment table (`tether-risk env`): the cumulative flux at chosen thresholds and
//! altitudes, with the local shielding and focusing factors, for a scenario's environment or
//! for the built-in Grün et al. (1985) model with every factor on.
//!
//! The command line checks its arguments' ranges and renders the rows; the computation lives
//! here so that a script using the library gets the same numbers.

use serde::{Deserialize, Serialize};

use crate::environment::{
    diameter_from_mass_m, local_factors_for, EnvironmentError, FluxModel, Grun1985,
    ShieldingGeometry, VelocityDistribution,
};
use crate::orbit::{EarthMoon, Side};

use super::Model;

/// One (altitude, threshold) row.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
pub struct EnvRow {
    /// Altitude above the lunar surface, km.
    pub altitude_km: f64,
    /// Mass threshold, g.
    pub mass_g: f64,
    /// Diameter of that mass at the chosen density, m.
    pub diameter_m: f64,
    /// Free-space model flux of particles >= mass, one face of a tumbling plate, per m^2 per year.
    pub model_flux_per_m2_per_year: f64,
    /// Moon shielding factor (for the geometry of [`EnvTable::geometry`]).
    pub shielding_factor: f64,
    /// Earth shielding factor.
    pub earth_shielding_factor: f64,
    /// Combined Moon and Earth focusing factor (velocity-distribution average).
    pub focusing_factor: f64,
    /// Mean impact speed after focusing, km/s.
    pub mean_speed_km_per_s: f64,
    /// Local flux = model x shielding x focusing x scale, per m^2 per year.
    pub local_flux_per_m2_per_year: f64,
}

/// The table and what it was computed for.
#[derive(Clone, Debug)]
pub struct EnvTable {
    /// Rows, altitude-major, thresholds in the order given.
    pub rows: Vec<EnvRow>,
    /// The flux model's name.
    pub flux_name: String,
    /// Scenario flux scale factor (1 without a scenario).
    pub flux_scale_factor: f64,
    /// Moon focusing, Earth focusing, Moon shielding switches.
    pub switches: (bool, bool, bool),
    /// The shielding geometry of the Moon-shielding column.
    pub geometry: ShieldingGeometry,
    /// Side of the Moon.
    pub side: Side,
    /// Particle density, kg/m^3.
    pub particle_density_kg_per_m3: f64,
}

/// Up to `count` bays of a model spread on a log scale of mid altitude from anchor to top (so
/// the low bays, where shielding and ejecta change fast, are not skipped), as bay indices,
/// ascending and without repeats.
pub fn spread_bays(model: &Model, count: usize) -> Vec<usize> {
    let bays = &model.profile.bays;
    let n = bays.len();
    if n == 0 || count == 0 {
        return Vec::new();
    }
    let k = count.min(n);
    let top = bays[n - 1].mid_altitude_m().max(1.0);
    let lo = bays[0].mid_altitude_m().max(1.0);
    let mut picked: Vec<usize> = (0..k)
        .map(|i| {
            let f = if n > 1 {
                i as f64 / (k - 1).max(1) as f64
            } else {
                0.0
            };
            let target = lo * (top / lo).powf(f);
            bays.iter()
                .enumerate()
                .min_by(|x, y| {
                    (x.1.mid_altitude_m() - target)
                        .abs()
                        .total_cmp(&(y.1.mid_altitude_m() - target).abs())
                })
                .map_or(0, |b| b.0)
        })
        .collect();
    picked.dedup();
    picked
}

/// The environment table at `altitudes_km` for thresholds `masses` (each as (mass in g as
/// given, mass in kg)).
///
/// With a model: its flux model and scale factor, its focusing and shielding switches, its
/// face geometry, particle density and side (`side` and `density_kg_per_m3` are ignored).
/// Without: the built-in Grün et al. (1985) model with the ECSS velocity distribution, every
/// factor on, the randomly oriented plate of the ECSS shielding factor, on `side` at
/// `density_kg_per_m3`.
///
/// # Errors
/// An altitude or mass the environment functions refuse (negative, not finite).
pub fn environment_table(
    model: Option<&Model>,
    altitudes_km: &[f64],
    masses: &[(f64, f64)],
    side: Side,
    density_kg_per_m3: f64,
) -> Result<EnvTable, EnvironmentError> {
    let orbit = EarthMoon::standard();
    let builtin: Box<dyn FluxModel> = Box::new(Grun1985::standard()?);
    let default_velocity = VelocityDistribution::ecss_table_c1()?;
    let (flux, velocity): (&dyn FluxModel, &VelocityDistribution) = match model {
        Some(m) => (m.flux.as_ref(), &m.velocity),
        None => (builtin.as_ref(), &default_velocity),
    };
    let (switches, geometry, scale, side, rho) = match model {
        Some(m) => {
            let e = &m.scenario.environment;
            (
                (e.moon_focusing, e.earth_focusing, e.moon_shielding),
                e.moon_shielding_geometry.for_bay(false),
                e.flux_scale_factor,
                m.scenario.tether.side,
                e.particle_density_kg_per_m3,
            )
        }
        None => (
            (true, true, true),
            ShieldingGeometry::RandomPlate,
            1.0,
            side,
            density_kg_per_m3,
        ),
    };
    let mut rows = Vec::with_capacity(altitudes_km.len() * masses.len());
    for &h in altitudes_km {
        let f = local_factors_for(
            &orbit,
            side,
            h * 1e3,
            velocity,
            switches.0,
            switches.1,
            switches.2,
            geometry,
        )?;
        let mean_speed = f.local_velocity(velocity)?.mean_speed_m_per_s() / 1e3;
        for &(g, m) in masses {
            let model_flux = scale * flux.cumulative_flux_per_m2_per_year(m);
            rows.push(EnvRow {
                altitude_km: h,
                mass_g: g,
                diameter_m: diameter_from_mass_m(m, rho)?,
                model_flux_per_m2_per_year: model_flux,
                shielding_factor: f.moon_shielding,
                earth_shielding_factor: f.earth_shielding,
                focusing_factor: f.focusing,
                mean_speed_km_per_s: mean_speed,
                local_flux_per_m2_per_year: model_flux * f.total(),
            });
        }
    }
    Ok(EnvTable {
        rows,
        flux_name: flux.name().to_string(),
        flux_scale_factor: scale,
        switches,
        geometry,
        side,
        particle_density_kg_per_m3: rho,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::environment::local_factors;

    /// Without a scenario the table is the built-in model with every factor on and the random
    /// plate: the same factors as `local_factors` (the ECSS sphere average), and the local flux
    /// is the model flux times their product.
    #[test]
    fn builtin_table_matches_the_environment_functions() {
        let t =
            environment_table(None, &[0.0, 100.0], &[(1e-3, 1e-6)], Side::Near, 2500.0).unwrap();
        assert_eq!(t.rows.len(), 2);
        let orbit = EarthMoon::standard();
        let v = VelocityDistribution::ecss_table_c1().unwrap();
        for r in &t.rows {
            let f = local_factors(
                &orbit,
                Side::Near,
                r.altitude_km * 1e3,
                &v,
                true,
                true,
                true,
            )
            .unwrap();
            assert_eq!(r.shielding_factor, f.moon_shielding);
            assert_eq!(
                r.local_flux_per_m2_per_year,
                r.model_flux_per_m2_per_year * f.total()
            );
        }
        // ECSS-E-ST-10-04C: the sphere-averaged Moon shielding factor (1 + cos eta)/2 is 1/2
        // at the surface (eta = 90 deg).
        assert!((t.rows[0].shielding_factor - 0.5).abs() < 1e-12);
    }
}

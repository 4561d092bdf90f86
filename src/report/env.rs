//! The environment table (`env`): cumulative flux at chosen thresholds and altitudes with the
//! local shielding and focusing factors.

use serde::Serialize;

use super::table::{sig, Table};

/// One (altitude, threshold) row.
#[derive(Clone, Debug, Serialize)]
pub struct EnvRow {
    /// Altitude above the lunar surface, km.
    pub altitude_km: f64,
    /// Mass threshold, g.
    pub mass_g: f64,
    /// Diameter of that mass at the chosen density, m.
    pub diameter_m: f64,
    /// Free-space model flux of particles >= mass, one face of a tumbling plate, per m^2 per year.
    pub model_flux_per_m2_per_year: f64,
    /// Moon shielding factor.
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

/// Rows as a text or CSV table.
pub fn env_table(rows: &[EnvRow]) -> Table {
    let mut t = Table::new([
        "altitude_km",
        "mass_g",
        "diameter_mm",
        "model_flux_m2_yr",
        "moon_shielding",
        "earth_shielding",
        "focusing",
        "mean_speed_km_s",
        "local_flux_m2_yr",
    ]);
    t.align[0] = super::table::Align::Right;
    for r in rows {
        t.push([
            sig(r.altitude_km, 6),
            sig(r.mass_g, 3),
            sig(r.diameter_m * 1e3, 4),
            sig(r.model_flux_per_m2_per_year, 5),
            sig(r.shielding_factor, 6),
            sig(r.earth_shielding_factor, 6),
            sig(r.focusing_factor, 6),
            sig(r.mean_speed_km_per_s, 4),
            sig(r.local_flux_per_m2_per_year, 5),
        ]);
    }
    t
}

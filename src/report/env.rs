//! The environment table (`env`): cumulative flux at chosen thresholds and altitudes with the
//! local shielding and focusing factors.

use super::table::{sig, Table};
pub use crate::model::env_table::EnvRow;

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

//! Strike rate onto a ribbon from a cumulative flux model.
//!
//! A flux model gives F(>= m), particles per m^2 per year onto one face of a randomly tumbling
//! plate (ECSS convention). A thin ribbon is hit on both faces, so 2F per unit ribbon area; a
//! particle of diameter d whose centre passes within d/2 of an edge still touches the ribbon, so
//! the exposed width is w + d. With n(d) = -dF/dd the rate per unit length of particles with
//! diameter at least d_c is
//!
//! 2 Int_{d_c}^inf (w + d) n(d) dd = 2 [ (w + d_c) F(d_c) + Int_{d_c}^inf F(d) dd ]
//!
//! (integration by parts). The last integral is done by Simpson's rule in ln d over four decades
//! above d_c; F falls at least as d^-3 there, so the truncated tail is below 1e-9 of the total.

use crate::environment::{mass_from_diameter_kg, FluxModel};

/// Rate of strikes per metre of one ribbon per year by particles of diameter >= `min_diameter_m`
/// (both faces, edge overlap included), before local shielding and focusing.
pub fn ribbon_strike_rate_per_m_per_year(
    flux: &dyn FluxModel,
    particle_density_kg_per_m3: f64,
    width_m: f64,
    min_diameter_m: f64,
) -> f64 {
    let f_of_d = |d: f64| {
        mass_from_diameter_kg(d, particle_density_kg_per_m3)
            .map(|m| flux.cumulative_flux_per_m2_per_year(m))
            .unwrap_or(0.0)
    };
    let dc = min_diameter_m;
    let intervals = 400;
    let (u0, u1) = (dc.ln(), dc.ln() + 4.0 * std::f64::consts::LN_10);
    let h = (u1 - u0) / intervals as f64;
    let g = |u: f64| {
        let d = u.exp();
        f_of_d(d) * d
    };
    let mut s = g(u0) + g(u1);
    for i in 1..intervals {
        let w = if i % 2 == 1 { 4.0 } else { 2.0 };
        s += w * g(u0 + i as f64 * h);
    }
    let tail = s * h / 3.0;
    2.0 * ((width_m + dc) * f_of_d(dc) + tail)
}

/// Rate of strikes per year that cut one cross-link: particles of diameter at least
/// `critical_diameter_m` onto its exposed area, F(>= m_c) x A x (local focusing and shielding)
/// x the flux scale factor, with m_c the mass of a sphere of that diameter at the particle
/// density. The flux model's F is the one-face flux of a randomly tumbling plate, so A counts
/// every face a particle can reach (a thin plate: both faces), as the ribbon rate counts both
/// faces of a ribbon. One such strike cuts the cross-link (engineering assumption: a single
/// critical size, no cumulative damage).
pub fn cross_link_strike_rate_per_year(
    flux: &dyn FluxModel,
    particle_density_kg_per_m3: f64,
    exposed_area_m2: f64,
    critical_diameter_m: f64,
    local_factor: f64,
) -> f64 {
    let f = mass_from_diameter_kg(critical_diameter_m, particle_density_kg_per_m3)
        .map(|m| flux.cumulative_flux_per_m2_per_year(m))
        .unwrap_or(0.0);
    f * exposed_area_m2 * local_factor
}

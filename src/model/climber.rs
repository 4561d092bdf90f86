//! Climber load: the weight of a loaded climber along the tether, from the Earth–Moon
//! effective field of [`crate::orbit`].
//!
//! A climber at rest on the tether (splicing) or climbing at constant speed pulls on the bay
//! it stands in with `(own mass + payload) × g_eff(h)`, where `g_eff` is the effective
//! (gravity + centrifugal) acceleration along the Earth–Moon line in the rotating frame
//! (Coriolis force is perpendicular to the tether for motion along it). Below L1 the pull is
//! toward the Moon; beyond L1 it is outward. Either way it adds to the tension of the bay below
//! (resp. above) the climber; we return its magnitude.
//!
//! These functions are the data the history loop needs to put climber loads on bays during
//! travel and splices (issue 10, item 3); `check` and `profile` use them now.

use crate::orbit::{EarthMoon, Side};

use super::Model;

/// Effective gravity at `altitude_m` above the lunar surface, m/s², positive toward the Moon.
pub fn effective_gravity_m_per_s2(orbit: &EarthMoon, side: Side, altitude_m: f64) -> f64 {
    orbit.effective_accel_toward_moon_m_per_s2(side, orbit.moon_radius_m + altitude_m)
}

/// Weight of a climber of total mass `total_mass_kg` at `altitude_m`, N (magnitude).
pub fn climber_weight_n(orbit: &EarthMoon, side: Side, altitude_m: f64, total_mass_kg: f64) -> f64 {
    total_mass_kg * effective_gravity_m_per_s2(orbit, side, altitude_m).abs()
}

/// Mass of a loaded climber (own mass + full payload) in the scenario, kg; `None` without
/// repair.
pub fn loaded_climber_mass_kg(model: &Model) -> Option<f64> {
    model
        .scenario
        .repair
        .as_ref()
        .map(|r| r.climber_mass_kg + r.payload_kg)
}

/// Weight of a loaded climber at the middle of bay `j`, N (0 without repair).
pub fn loaded_climber_weight_at_bay_n(model: &Model, j: usize) -> f64 {
    loaded_climber_mass_kg(model).map_or(0.0, |m| {
        climber_weight_n(
            &model.orbit,
            model.scenario.tether.side,
            model.profile.bays[j].mid_altitude_m(),
            m,
        )
    })
}

/// Largest loaded-climber weight anywhere on the tether and where: (altitude m, N). The field
/// is strongest at the anchor for a near-side tether (lunar surface gravity minus the small
/// Earth and centrifugal terms), so the bay bottoms and the top end are enough to search.
pub fn max_loaded_climber_weight(model: &Model) -> Option<(f64, f64)> {
    let m = loaded_climber_mass_kg(model)?;
    let side = model.scenario.tether.side;
    let mut best = (0.0, 0.0);
    let mut visit = |h: f64| {
        let w = climber_weight_n(&model.orbit, side, h, m);
        if w > best.1 {
            best = (h, w);
        }
    };
    for b in &model.profile.bays {
        visit(b.bottom_altitude_m);
    }
    visit(model.profile.length_m());
    Some(best)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Independent CR3BP gradient: differentiate the rotating-frame potential written out here
    /// from the textbook form Phi = -GM_E/r_E - GM_M/r_M - n² x²/2 (barycentric x), by central
    /// differences, with the DE430 GMs and D = 384 400 km typed in again.
    fn g_by_gradient(side: Side, altitude_m: f64) -> f64 {
        let gm_e = 398_600.435_436e9;
        let gm_m = 4_902.800_066e9;
        let d = 384_400e3;
        let r_m = 1_737.4e3;
        let n2 = (gm_e + gm_m) / (d * d * d);
        let mu = gm_m / (gm_e + gm_m);
        let phi = |r: f64| {
            // r from the Moon's centre along the line; x from the barycentre toward the Moon.
            let x = match side {
                Side::Near => (1.0 - mu) * d - r,
                Side::Far => (1.0 - mu) * d + r,
            };
            let r_e = (x + mu * d).abs();
            -gm_e / r_e - gm_m / r - 0.5 * n2 * x * x
        };
        let r = r_m + altitude_m;
        let step = 10.0;
        // Acceleration outward is -dPhi/dr, so toward the Moon it is +dPhi/dr.
        (phi(r + step) - phi(r - step)) / (2.0 * step)
    }

    #[test]
    fn effective_gravity_against_an_independent_cr3bp_gradient() {
        let orbit = EarthMoon::standard();
        for side in [Side::Near, Side::Far] {
            for h in [0.0, 100e3, 1_000e3, 20_000e3, 50_000e3, 70_000e3] {
                let g = effective_gravity_m_per_s2(&orbit, side, h);
                let want = g_by_gradient(side, h);
                assert!(
                    (g - want).abs() < 1e-7 * want.abs().max(1e-3),
                    "{side:?} h {h}: {g} vs {want}"
                );
            }
        }
        // Lunar surface gravity GM/R² = 1.624 m/s² less a few 1e-5 of tide and centrifugal.
        let g0 = effective_gravity_m_per_s2(&orbit, Side::Near, 0.0);
        assert!((g0 - 1.6243).abs() < 2e-3, "{g0}");
        // The figure: a 400 kg payload alone weighs about 650 N at the surface.
        assert!((climber_weight_n(&orbit, Side::Near, 0.0, 400.0) - 650.0).abs() < 5.0);
    }
}

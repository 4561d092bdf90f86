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
//! **What the history loop applies** ([`ClimberLoadTable`]). The design tension of every bay
//! already includes the traffic envelope `tether.traffic_load_n` at all times, so a climber
//! (or several) standing in a bay adds only the excess of their weight over the envelope:
//! extra tension = max(0, k W_j - envelope) for k climbers in bay j, W_j the weight of one
//! loaded climber (own mass + full payload, taken loaded in both directions: conservative) at
//! the end of the bay where the field is strongest. The extra acts on the bay the climber is
//! in, while it travels through it and while it splices there, shared among the intact ribbons
//! by the bay's load-sharing rule. Simplification, stated: a climber also loads the bays
//! between it and the counterweight; only the bay it stands in gets the extra here (the bay
//! whose grip and splice loads are local, and the one a repair climber visits because it is
//! weakened). Parked climbers rest on their station, not on a bay. A climber on the surface
//! run rests on the ground: its weight adds no tension there (weight 0; engineering
//! assumption, rolling resistance neglected).

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

/// Weight of a loaded climber at the middle of bay `j`, N (0 without repair, and on the
/// surface run, where the ground carries it).
pub fn loaded_climber_weight_at_bay_n(model: &Model, j: usize) -> f64 {
    if model.profile.bays[j].surface_run {
        return 0.0;
    }
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

/// Weight of one loaded climber in bay `j`: the larger of its weights at the bay's two ends
/// (the field is monotone inside a bay except right at L1, where it is near zero), N; 0 on
/// the surface run.
pub fn loaded_climber_weight_in_bay_n(model: &Model, j: usize) -> f64 {
    if model.profile.bays[j].surface_run {
        return 0.0;
    }
    loaded_climber_mass_kg(model).map_or(0.0, |m| {
        let side = model.scenario.tether.side;
        let b = &model.profile.bays[j];
        climber_weight_n(&model.orbit, side, b.bottom_altitude_m, m).max(climber_weight_n(
            &model.orbit,
            side,
            b.bottom_altitude_m + b.length_m(),
            m,
        ))
    })
}

/// The largest extra tension climbers can put on bay `j` (the whole fleet in it), N; 0 without
/// repair or with `repair.climber.load_on_bays` off.
pub fn max_extra_tension_n(model: &Model, j: usize) -> f64 {
    match model.scenario.repair.as_ref() {
        Some(r) if r.climber_load_on_bays => {
            let k: u32 = r.stations.iter().map(|s| s.climbers).sum();
            (f64::from(k) * loaded_climber_weight_in_bay_n(model, j)
                - model.scenario.tether.traffic_load_n)
                .max(0.0)
        }
        _ => 0.0,
    }
}

/// The extra tension one loaded climber puts on bay `j`, N; 0 without repair, with
/// `repair.climber.load_on_bays` off, or where the envelope covers it. The sampling floor
/// includes it.
pub fn single_climber_extra_tension_n(model: &Model, j: usize) -> f64 {
    match model.scenario.repair.as_ref() {
        Some(r) if r.climber_load_on_bays => (loaded_climber_weight_in_bay_n(model, j)
            - model.scenario.tether.traffic_load_n)
            .max(0.0),
        _ => 0.0,
    }
}

/// The climber loads the history loop puts on bays (see the module notes).
#[derive(Clone, Debug, PartialEq)]
pub struct ClimberLoadTable {
    /// Weight of one loaded climber in each bay, N.
    pub weight_n: Vec<f64>,
    /// The traffic envelope already in every bay's design tension, N.
    pub envelope_n: f64,
    /// Climbers in the whole fleet (the most that can stand in one bay).
    pub fleet_climbers: u32,
}

impl ClimberLoadTable {
    /// The table of a model; `None` without repair or with `repair.climber.load_on_bays` off.
    pub fn of(model: &Model) -> Option<Self> {
        let r = model.scenario.repair.as_ref()?;
        if !r.climber_load_on_bays {
            return None;
        }
        Some(ClimberLoadTable {
            weight_n: (0..model.profile.bays.len())
                .map(|j| loaded_climber_weight_in_bay_n(model, j))
                .collect(),
            envelope_n: model.scenario.tether.traffic_load_n,
            fleet_climbers: r.stations.iter().map(|s| s.climbers).sum(),
        })
    }

    /// Extra tension of bay `j` with `climbers` climbers in it, N.
    #[inline]
    pub fn extra_n(&self, j: usize, climbers: u32) -> f64 {
        if climbers == 0 {
            return 0.0;
        }
        (f64::from(climbers) * self.weight_n[j] - self.envelope_n).max(0.0)
    }

    /// The largest extra tension bay `j` can see (the whole fleet in it), N.
    pub fn max_extra_n(&self, j: usize) -> f64 {
        self.extra_n(j, self.fleet_climbers)
    }
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

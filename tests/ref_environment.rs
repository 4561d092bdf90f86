//! Checks of the orbit and environment modules against published values.
//!
//! Every check names its source beside it. Values marked "[computed]" were derived from a
//! published formula or table (the derivation is given in the comment); "[memory]" marks a
//! value recalled rather than read, which is used only with a loose tolerance.

use tether_risk::orbit::{EarthMoon, Side};

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

// ---------------------------------------------------------------------------------------
// Earth–Moon CR3BP. Constants: JPL DE430 GMs (Folkner et al. 2014, IPN PR 42-196),
// D = 384 400 km. Reference values [computed] by root-finding the collinear quintics
// (Szebehely 1967, "Theory of Orbits") in double precision with an independent solver.
// ---------------------------------------------------------------------------------------

#[test]
fn cr3bp_mass_ratio_from_de430() {
    // mu = GM_M/(GM_E+GM_M) with DE430 GMs = 0.0121505843 [computed]
    let mu = EarthMoon::standard().mass_ratio();
    assert!(
        (mu - 0.012_150_584_3).abs() < 1e-9,
        "DE430 mass ratio: got {mu}"
    );
}

#[test]
fn cr3bp_collinear_points() {
    let em = EarthMoon::standard();
    // Szebehely quintics with DE430 mu: gamma_L1 = 0.1509342834, gamma_L2 = 0.1678327446 [computed]
    let g1 = em.lagrange_gamma(Side::Near);
    let g2 = em.lagrange_gamma(Side::Far);
    assert!(
        (g1 - 0.150_934_283_4).abs() < 1e-9,
        "quintic L1 gamma: got {g1}"
    );
    assert!(
        (g2 - 0.167_832_744_6).abs() < 1e-9,
        "quintic L2 gamma: got {g2}"
    );
    // L1 58 019.1 km and L2 64 514.9 km from the Moon's centre [computed, gamma x D]
    let r1_km = em.lagrange_distance_from_moon_m(Side::Near) / 1e3;
    let r2_km = em.lagrange_distance_from_moon_m(Side::Far) / 1e3;
    assert!(
        (r1_km - 58_019.1).abs() < 0.05,
        "L1 distance: got {r1_km} km"
    );
    assert!(
        (r2_km - 64_514.9).abs() < 0.05,
        "L2 distance: got {r2_km} km"
    );
    // Barycentric x_L1 ~ 0.836915, x_L2 ~ 1.155682 (Szebehely 1967 / Koon, Lo, Marsden & Ross
    // 2011 tables for mu ~ 0.01215) [memory] — loose 1e-4 tolerance only.
    let mu = em.mass_ratio();
    assert!(
        (1.0 - mu - g1 - 0.836_915).abs() < 1e-4,
        "x_L1 vs published table [memory]"
    );
    assert!(
        (1.0 - mu + g2 - 1.155_682).abs() < 1e-4,
        "x_L2 vs published table [memory]"
    );
}

#[test]
fn cr3bp_effective_acceleration_table() {
    // Near-side effective acceleration a = -GM_E(x-x_E)/|x-x_E|^3 - GM_M(x-x_M)/|x-x_M|^3 + n^2 x
    // toward the Moon, DE430 GMs, D = 384 400 km, Kepler n [computed, independent script].
    let em = EarthMoon::standard();
    let table: [(f64, f64); 10] = [
        (1_737.4, 1.624182),
        (1_837.4, 1.452196),
        (2_737.4, 0.6542278),
        (6_737.4, 0.1078639),
        (11_737.4, 3.533175e-2),
        (21_737.4, 9.888491e-3),
        (31_737.4, 4.134617e-3),
        (41_737.4, 1.820787e-3),
        (51_737.4, 5.597556e-4),
        (56_737.4, 1.048714e-4),
    ];
    for (r_km, a_ref) in table {
        let a = em.effective_accel_toward_moon_m_per_s2(Side::Near, r_km * 1e3);
        assert!(
            rel(a, a_ref) < 1e-5,
            "CR3BP effective acceleration at r = {r_km} km: got {a}, reference {a_ref}"
        );
    }
    for side in [Side::Near, Side::Far] {
        let r = em.lagrange_distance_from_moon_m(side);
        let a = em.effective_accel_toward_moon_m_per_s2(side, r);
        assert!(
            a.abs() < 1e-12,
            "zero pull at the Lagrange point ({side:?}): got {a}"
        );
    }
}

#[test]
fn cr3bp_potential_differences() {
    // Phi = -GM_E/r_E - GM_M/r_M - n^2 x^2/2; surface -> L1 2.697668e6 J/kg,
    // far-side surface -> L2 2.706160e6 J/kg [computed; equal to the quadrature of a_eff]
    let em = EarthMoon::standard();
    let r0 = em.moon_radius_m;
    let near = em.potential_j_per_kg(Side::Near, em.lagrange_distance_from_moon_m(Side::Near))
        - em.potential_j_per_kg(Side::Near, r0);
    let far = em.potential_j_per_kg(Side::Far, em.lagrange_distance_from_moon_m(Side::Far))
        - em.potential_j_per_kg(Side::Far, r0);
    assert!(
        rel(near, 2.697668e6) < 1e-6,
        "Phi(L1) - Phi(surface): got {near}"
    );
    assert!(
        rel(far, 2.706160e6) < 1e-6,
        "Phi(L2) - Phi(surface): got {far}"
    );
}

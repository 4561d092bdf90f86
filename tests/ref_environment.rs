//! Checks of the orbit and environment modules against published values.
//!
//! Every check names its source beside it. Values marked "[computed]" were derived from a
//! published formula or table (the derivation is given in the comment); "[memory]" marks a
//! value recalled rather than read, which is used only with a loose tolerance.

use tether_risk::environment::{
    diameter_from_mass_m, ecss_table_c1_rows, escape_speed_m_per_s, focusing_factor, local_factors,
    mass_from_diameter_kg, shielding_factor, EnvironmentError, FluxModel, Grun1985, TabulatedFlux,
    VelocityDistribution, TABLE_C1_SPACING_M_PER_S,
};
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

// ---------------------------------------------------------------------------------------
// Grün et al. (1985) flux, ECSS-E-ST-10-04C Rev.1 eq. (10-1), against Table J-5.
// ---------------------------------------------------------------------------------------

/// ECSS-E-ST-10-04C Rev.1 Table J-5 (mass g, flux m^-2 yr^-1, randomly tumbling plate, no
/// shielding, no focusing), `true` where the printed value was read.
const TABLE_J5: [(f64, f64, bool); 30] = [
    (1e-12, 1.09e3, true),
    (5e-12, 6.11e2, false),
    (1e-11, 4.71e2, true),
    (5e-11, 2.57e2, false),
    (1e-10, 2.02e2, true),
    (5e-10, 1.20e2, false),
    (1e-9, 9.51e1, true),
    (5e-9, 5.15e1, true),
    (1e-8, 3.74e1, true),
    (5e-8, 1.51e1, false),
    (1e-7, 9.54e0, true),
    (5e-7, 2.74e0, false),
    (1e-6, 1.49e0, true),
    (5e-6, 3.07e-1, false),
    (1e-5, 1.47e-1, true),
    (5e-5, 2.36e-2, false),
    (1e-4, 1.04e-2, true),
    (5e-4, 1.43e-3, false),
    (1e-3, 5.97e-4, true),
    (5e-3, 7.57e-5, false),
    (1e-2, 3.07e-5, true),
    (5e-2, 3.72e-6, false),
    (1e-1, 1.49e-6, true),
    (5e-1, 1.77e-7, false),
    (1e0, 7.02e-8, true),
    (5e0, 8.22e-9, false),
    (1e1, 3.26e-9, true),
    (5e1, 3.79e-10, false),
    (1e2, 1.50e-10, true),
    (5e2, 1.74e-11, true),
];
// Rows with `false` are [computed, 3 s.f. as printed in J-5 — only the 17 rows quoted in
// REFERENCES.md were read]: the 15 powers of ten plus 5e-9 g and 5e2 g are the printed values.

#[test]
fn grun_matches_ecss_table_j5() {
    let g = Grun1985::standard().expect("embedded Grun1985 parameters parse");
    assert_eq!(TABLE_J5.iter().filter(|r| r.2).count(), 17);
    for (m_g, printed, read) in TABLE_J5 {
        let f = g.cumulative_flux_per_m2_per_year(m_g * 1e-3);
        let tag = if read { "read" } else { "computed, 3 s.f." };
        assert!(
            rel(f, printed) < 5e-3,
            "ECSS-E-ST-10-04C Rev.1 Table J-5 at {m_g} g ({tag}): model {f}, table {printed}"
        );
    }
}

#[test]
fn grun_formula_to_five_figures() {
    // ECSS-E-ST-10-04C Rev.1 eq. (10-1), evaluated independently to 5 s.f. [computed]:
    // F(1e-6 g) = 1.4880, F(1e-3 g) = 5.9675e-4, F(1 g) = 7.0213e-8, F(1e-12 g) = 1.0879e3.
    let g = Grun1985::standard().unwrap();
    for (m_g, f_ref) in [
        (1e-6, 1.4880),
        (1e-3, 5.9675e-4),
        (1.0, 7.0213e-8),
        (1e-12, 1.0879e3),
    ] {
        let f = g.cumulative_flux_per_m2_per_year(m_g * 1e-3);
        assert!(
            rel(f, f_ref) < 1e-4,
            "ECSS eq. (10-1) at {m_g} g: got {f}, expected {f_ref}"
        );
    }
    // Validity range = Table J-5 range, 1e-12 .. 5e2 g.
    let (lo, hi) = g.valid_mass_range_kg();
    assert!(
        rel(lo, 1e-15) < 1e-12 && rel(hi, 0.5) < 1e-12,
        "Table J-5 mass range"
    );
}

#[test]
fn diameter_column_of_table_j5() {
    // ECSS-E-ST-10-04C Rev.1 Table J-5 diameter column, rho = 2.5 g/cm^3 (10.2.2.2d), spheres;
    // d in cm to 4 s.f. [computed from d = (6m/(pi rho))^(1/3); matches the printed column].
    // Named checks at 1e-4 relative: 1e-6 g <-> 91.42 um, 1e-3 g <-> 914.2 um, 1 g <-> 9.142 mm.
    for (m_g, d_ref_m) in [(1e-6, 91.42e-6), (1e-3, 914.2e-6), (1.0, 9.142e-3)] {
        let d = diameter_from_mass_m(m_g * 1e-3, 2500.0).unwrap();
        assert!(
            rel(d, d_ref_m) < 1e-4,
            "Table J-5 diameter at {m_g} g: got {d} m"
        );
    }
    let rows: [(f64, f64); 15] = [
        (1e-12, 9.142e-5),
        (1e-11, 1.969e-4),
        (1e-10, 4.243e-4),
        (1e-9, 9.142e-4),
        (1e-8, 1.969e-3),
        (1e-7, 4.243e-3),
        (1e-6, 9.142e-3),
        (1e-5, 1.969e-2),
        (1e-4, 4.243e-2),
        (1e-3, 9.142e-2),
        (1e-2, 1.969e-1),
        (1e-1, 4.243e-1),
        (1e0, 9.142e-1),
        (1e1, 1.969e0),
        (1e2, 4.243e0),
    ];
    for (m_g, d_cm) in rows {
        let d_cm_model = diameter_from_mass_m(m_g * 1e-3, 2500.0).unwrap() * 1e2;
        // 1e-4 relative where the 4th figure allows it (the 9.142 rows); otherwise half a unit
        // in the 4th printed figure (1.969 vs 1.96949 is 2.5e-4 relative).
        let half_unit = 0.5 * 10f64.powf(d_cm.log10().floor() - 3.0);
        let tol = (1e-4 * d_cm).max(half_unit * 1.000_001);
        assert!(
            (d_cm_model - d_cm).abs() <= tol,
            "Table J-5 diameter at {m_g} g: got {d_cm_model} cm, table {d_cm} cm"
        );
        let m = mass_from_diameter_kg(d_cm * 1e-2, 2500.0).unwrap();
        // The cube triples the 4-figure rounding of the printed diameter (up to 7.5e-4).
        assert!(rel(m, m_g * 1e-3) < 1e-3, "inverse, Table J-5 at {m_g} g");
    }
    // d = 1 mm -> m = 1.309e-3 g at 2.5 g/cm^3 [computed from m = (pi/6) rho d^3]
    let m = mass_from_diameter_kg(1e-3, 2500.0).unwrap();
    assert!(rel(m, 1.309e-6) < 1e-3, "m(1 mm) = 1.309e-3 g");
}

// ---------------------------------------------------------------------------------------
// Tabulated flux: the demonstration table flux_models/grun1985_tabulated.json.
// ---------------------------------------------------------------------------------------

const GRUN_TABULATED: &str = include_str!("../flux_models/grun1985_tabulated.json");

#[test]
fn tabulated_grun_agrees_with_formula() {
    let g = Grun1985::standard().unwrap();
    let t = TabulatedFlux::from_json(GRUN_TABULATED).expect("demonstration table parses");
    assert_eq!(t.mass_kg().len(), 30, "30 rows as in ECSS Table J-5");
    assert_eq!(t.valid_mass_range_kg(), g.valid_mass_range_kg());
    // At the nodes: 3 s.f. rounding only (< 0.5 %).
    for &m in t.mass_kg() {
        let (a, b) = (
            t.cumulative_flux_per_m2_per_year(m),
            g.cumulative_flux_per_m2_per_year(m),
        );
        assert!(rel(a, b) < 5e-3, "node {m} kg: table {a}, formula {b}");
    }
    // Between the nodes log-log interpolation adds the curvature of the Grün curve. Measured
    // worst case 3.2 % near 2.25e-10 kg (the knee of F1, between 1e-10 and 5e-10 kg); the
    // 1 % aimed for is not reached with 30 rows around that knee.
    let mut worst: (f64, f64) = (0.0, 0.0);
    for w in t.mass_kg().windows(2) {
        for k in 1..20 {
            let m = (w[0].ln() + (w[1].ln() - w[0].ln()) * k as f64 / 20.0).exp();
            let e = rel(
                t.cumulative_flux_per_m2_per_year(m),
                g.cumulative_flux_per_m2_per_year(m),
            );
            if e > worst.0 {
                worst = (e, m);
            }
        }
    }
    assert!(
        worst.0 < 0.035,
        "log-log interpolation error {} at {} kg",
        worst.0,
        worst.1
    );
}

fn table_err(mass: Vec<f64>, flux: Vec<f64>) -> String {
    let e: EnvironmentError = TabulatedFlux::new("t", "test", mass, flux).unwrap_err();
    e.to_string()
}

#[test]
fn tabulated_flux_rejects_bad_tables() {
    let msg = table_err(vec![1.0, 2.0, 3.0], vec![3.0, 4.0, 1.0]);
    assert!(
        msg.contains("flux_per_m2_per_year[1]")
            && msg.contains('4')
            && msg.contains("non-increasing"),
        "non-monotone flux: {msg}"
    );
    let msg = table_err(vec![1.0, 3.0, 2.0], vec![3.0, 2.0, 1.0]);
    assert!(
        msg.contains("mass_kg[2]") && msg.contains("strictly increasing"),
        "unsorted masses: {msg}"
    );
    let msg = table_err(vec![1.0, 2.0], vec![3.0, -2.0]);
    assert!(
        msg.contains("flux_per_m2_per_year[1]") && msg.contains("-2") && msg.contains("> 0"),
        "negative flux: {msg}"
    );
    let msg = table_err(vec![1.0, f64::NAN], vec![3.0, 2.0]);
    assert!(
        msg.contains("mass_kg[1]") && msg.contains("NaN") && msg.contains("finite"),
        "NaN mass: {msg}"
    );
    let msg = table_err(vec![1.0, 2.0, 3.0], vec![3.0, 2.0]);
    assert!(
        msg.contains("mass_kg has 3") && msg.contains("flux_per_m2_per_year has 2"),
        "length mismatch: {msg}"
    );
    let msg = table_err(vec![1.0], vec![3.0]);
    assert!(
        msg.contains("mass_kg has 1") && msg.contains("at least 2"),
        "single point: {msg}"
    );
    let msg = TabulatedFlux::from_json(r#"{"name":"t","source":"s","mass_kg":[1,2],"flux":[2,1]}"#)
        .unwrap_err()
        .to_string();
    assert!(msg.contains("flux"), "unknown field in a table file: {msg}");
}

#[test]
fn tabulated_flux_extrapolates_log_log() {
    // Outside the table the end segment is extended: F = m^-1 stays exact.
    let t = TabulatedFlux::new("t", "s", vec![1e-6, 1e-3], vec![1e3, 1.0]).unwrap();
    assert!(rel(t.cumulative_flux_per_m2_per_year(1e-9), 1e6) < 1e-12);
    assert!(rel(t.cumulative_flux_per_m2_per_year(1.0), 1e-3) < 1e-12);
}

// ---------------------------------------------------------------------------------------
// ECSS-E-ST-10-04C Rev.1 Table C-1 and Annex C focusing / shielding.
// ---------------------------------------------------------------------------------------

#[test]
fn table_c1_integrity() {
    let rows = ecss_table_c1_rows().expect("embedded Table C-1 parses");
    assert_eq!(rows.len(), 143, "Table C-1: 0.5 .. 71.5 km/s");
    assert_eq!(TABLE_C1_SPACING_M_PER_S, 500.0);
    for (k, r) in rows.iter().enumerate() {
        assert!(
            (r.speed_m_per_s - 500.0 * (k + 1) as f64).abs() < 1e-9,
            "Table C-1 spacing"
        );
    }
    // Sum n(v_inf) * 0.5 km/s = 1.00097 [computed from Table C-1 as printed]
    let s: f64 = rows
        .iter()
        .map(|r| r.n_inf_s_per_m * TABLE_C1_SPACING_M_PER_S)
        .sum();
    assert!((s - 1.00097).abs() < 1e-4, "Table C-1 normalisation: {s}");
    // Spot rows as printed: 20.0 km/s -> 4.1e-2 / 4.9e-2; 71.5 km/s -> 4.9e-6 / 8.0e-6.
    assert!(
        rel(rows[39].n_inf_s_per_m * 1e3, 4.1e-2) < 1e-12,
        "Table C-1 row 20 km/s"
    );
    assert!(
        rel(rows[39].n_400km_s_per_m * 1e3, 4.9e-2) < 1e-12,
        "Table C-1 row 20 km/s"
    );
    assert!(
        rel(rows[142].n_inf_s_per_m * 1e3, 4.9e-6) < 1e-12,
        "Table C-1 row 71.5 km/s"
    );
    assert!(
        rel(rows[142].n_400km_s_per_m * 1e3, 8.0e-6) < 1e-12,
        "Table C-1 row 71.5 km/s"
    );

    // Mean speeds: n(v400) 19.68 km/s [computed; ECSS Fig. J-4 note quotes 19.7 at 400 km],
    // n(v_inf) 17.64 km/s [computed; the standard quotes 17.2, bin convention unresolved].
    let v400 = VelocityDistribution::ecss_table_c1_400km()
        .unwrap()
        .mean_speed_m_per_s();
    let vinf = VelocityDistribution::ecss_table_c1()
        .unwrap()
        .mean_speed_m_per_s();
    assert!(
        (v400 - 19_680.0).abs() < 50.0,
        "Table C-1 n(v400) mean speed: {v400}"
    );
    assert!(
        (vinf - 17_640.0).abs() < 50.0,
        "Table C-1 n(v_inf) mean speed: {vinf}"
    );
}

#[test]
fn lunar_shielding_factor() {
    // ECSS-E-ST-10-04C Rev.1 eqs C-26/C-27, R = 1737.4 km, R_A = 0 [computed]
    for (h_km, sf_ref) in [(0.0, 0.5), (100.0, 0.662_702), (1000.0, 0.886_383)] {
        let sf = shielding_factor(1_737.4e3, 0.0, h_km * 1e3).unwrap();
        assert!(
            (sf - sf_ref).abs() < 1e-6,
            "ECSS C-26/C-27, Moon, h = {h_km} km: {sf}"
        );
    }
    // Earth at the Moon's distance, R = 6378 km, R_A = 100 km: 0.99993 [computed]
    let sf = shielding_factor(6_378e3, 100e3, 384_400e3 - 6_378e3).unwrap();
    assert!(
        (sf - 0.99993).abs() < 1e-5,
        "ECSS C-26/C-27, Earth at 384 400 km: {sf}"
    );
}

#[test]
fn single_speed_focusing() {
    // ECSS C-16 and C-13, Moon surface, mu = 4900 km^3/s^2 (as printed in ECSS Annex C):
    // v_esc = 2.3750 km/s, G(20 km/s) = 1.01410 [computed]
    let ve = escape_speed_m_per_s(4_900e9, 1_737.4e3).unwrap();
    assert!(
        (ve - 2_375.0).abs() < 0.05,
        "ECSS C-16 lunar escape speed: {ve}"
    );
    let g = focusing_factor(20e3, ve).unwrap();
    assert!(
        (g - 1.01410).abs() < 1e-5,
        "ECSS C-13 at 20 km/s, lunar surface: {g}"
    );
    // Earth at r = 384 400 km, mu_E = 398 600.435 km^3/s^2: v_esc = 1.4401 km/s,
    // G(20 km/s) = 1.00518 [computed, ECSS C-16/C-13]
    let ve = escape_speed_m_per_s(398_600.435e9, 384_400e3).unwrap();
    assert!(
        (ve - 1_440.1).abs() < 0.05,
        "ECSS C-16 Earth escape speed at lunar distance: {ve}"
    );
    let g = focusing_factor(20e3, ve).unwrap();
    assert!(
        (g - 1.00518).abs() < 1e-5,
        "ECSS C-13 Earth at lunar distance: {g}"
    );
}

#[test]
fn mean_focusing_near_the_moon() {
    // ECSS C-18 point-sum over Table C-1 n(v_inf), mu = 4900 km^3/s^2, R = 1737.4 km
    // [computed, C-18 point-sum over Table C-1]: 1.06209 (surface), 1.05871 (100 km), 1.03941 (1000 km)
    let v = VelocityDistribution::ecss_table_c1().unwrap();
    for (h_km, g_ref) in [(0.0, 1.06209), (100.0, 1.05871), (1000.0, 1.03941)] {
        let ve = escape_speed_m_per_s(4_900e9, (1_737.4 + h_km) * 1e3).unwrap();
        let g = v.mean_focusing_factor(ve).unwrap();
        assert!(
            (g - g_ref).abs() < 1e-4,
            "ECSS C-18 G_bar, Moon, h = {h_km} km: {g}"
        );
        // The focused distribution carries the same information: sum of n_k G_k.
        let focused_total: f64 = v
            .speeds_m_per_s()
            .iter()
            .zip(v.weights())
            .map(|(s, w)| w * focusing_factor(*s, ve).unwrap())
            .sum();
        assert!((focused_total - g).abs() < 1e-12);
    }
    // Earth at 384 400 km: G_bar = 1.02283 [computed, ECSS C-18 over Table C-1]
    let ve = escape_speed_m_per_s(398_600.435e9, 384_400e3).unwrap();
    let g = v.mean_focusing_factor(ve).unwrap();
    assert!(
        (g - 1.02283).abs() < 1e-4,
        "ECSS C-18 G_bar, Earth at lunar distance: {g}"
    );
}

#[test]
fn combined_local_factors_along_the_near_side() {
    // Combined Earth+Moon focusing times shielding on the near-side line [computed with
    // C-13/C-18/C-26/C-27 over Table C-1; the combination is ours, not in the standard]: 0.543 (surface), 0.718 (100 km),
    // 0.942 (1000 km), 1.027 (10 000 km), 1.029 (58 000 km). DE430 GMs used here change G_bar
    // only in the 5th decimal.
    let orbit = EarthMoon::standard();
    let v = VelocityDistribution::ecss_table_c1().unwrap();
    for (h_km, total_ref) in [
        (0.0, 0.543),
        (100.0, 0.718),
        (1000.0, 0.942),
        (10_000.0, 1.027),
        (58_000.0, 1.029),
    ] {
        let f = local_factors(&orbit, Side::Near, h_km * 1e3, &v, true, true, true).unwrap();
        assert!(
            (f.total() - total_ref).abs() < 1.5e-3,
            "combined factor at h = {h_km} km: {}",
            f.total()
        );
    }
    // Moon-only focusing at the surface with DE430 GM: 1.06213 [computed, C-18 point-sum over Table C-1]
    let f = local_factors(&orbit, Side::Near, 0.0, &v, true, false, true).unwrap();
    assert!(
        (f.focusing - 1.06213).abs() < 1e-4,
        "G_bar Moon surface, DE430 GM: {}",
        f.focusing
    );
    assert_eq!(f.moon_shielding, 0.5, "ECSS C-26/C-27 at h = 0");
    // The local velocity distribution is the free-space one focused with the combined speed.
    let local = f.local_velocity(&v).unwrap();
    assert!(
        (local.speeds_m_per_s()[0]
            - (500.0f64.powi(2) + f.moon_escape_speed_m_per_s.powi(2)).sqrt())
        .abs()
            < 1e-9
    );
}

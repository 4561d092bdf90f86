//! Issue 16 item 4: a base away from the tether's foot, joined to it by a surface run.
//!
//! Sources of the independent answers:
//! - great-circle length: R x central angle with the spherical law of cosines,
//!   cos c = sin(phi1) sin(phi2) + cos(phi1) cos(phi2) cos(dlambda) (any spherical-trigonometry
//!   text; the formula is from memory, the special cases are checked exactly), R = 1737.4 km
//!   (IAU mean lunar radius, as listed with the JPL ephemeris constants; REFERENCES.md §2);
//! - flux: Grün et al. (1985) in the form of ECSS-E-ST-10-04C Rev.1 eq. (10-1), typed in again
//!   here (REFERENCES.md §1); a thin ribbon's rate per metre 2[(w + d)F(d) + Int_d^inf F]
//!   (REFERENCES.md §1, "plate <-> ribbon" [derived]);
//! - a face lying on the ground sees the open half-space only: 1/2 of the two-face rate
//!   (ECSS-E-ST-10-04C Rev.1 eqs C-26/C-27 at h = R_A give 1/2; derivation in
//!   environment::ShieldingGeometry::SurfaceLyingFace);
//! - Earth shielding at the Moon's distance: ECSS C-26/C-27 with R = 6378.137 km, R_A = 100 km;
//! - surface focusing: REFERENCES.md §2 "Values near the Moon" [computed], combined Earth and
//!   Moon focusing with the Moon's shielding = 0.543 at the lunar surface (3 s.f.).

use crate::util::*;
use serde_json::{json, Value};

const R_MOON_KM: f64 = 1737.4;

fn check_json(v: &Value, name: &str) -> Value {
    let p = scenario_with(name, |s| *s = v.clone());
    let o = run(&["check", p.to_str().unwrap(), "--format", "json"]);
    assert!(o.status.success(), "{name}: {}", stderr(&o));
    serde_json::from_str(&stdout(&o)).unwrap()
}

fn profile_json(v: &Value, name: &str) -> Value {
    let p = scenario_with(name, |s| *s = v.clone());
    let o = run(&["profile", p.to_str().unwrap(), "--format", "json"]);
    assert!(o.status.success(), "{name}: {}", stderr(&o));
    serde_json::from_str(&stdout(&o)).unwrap()
}

fn demo_with_base(lat: f64, lon: f64, side: &str) -> Value {
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["tether"]["anchor_latitude_deg"] = json!(lat);
    v["tether"]["anchor_longitude_deg"] = json!(lon);
    v["tether"]["side"] = json!(side);
    if side == "far" {
        // A far-side tether through L2 (64 515 km from the Moon's centre); stations on it.
        v["tether"]["top_altitude_km"] = json!(90000.0);
        v["tether"]["anchor_preload_n"] = json!(3000.0);
        v["repair"]["stations"][1]["altitude_km"] = json!(62000.0);
    }
    v
}

/// Central angle by the spherical law of cosines, from the base to the foot on the equator.
fn law_of_cosines_deg(lat: f64, lon: f64, foot_lon: f64) -> f64 {
    let (p, dl) = (lat.to_radians(), (lon - foot_lon).to_radians());
    let cos_c = p.sin() * 0.0f64.sin() + p.cos() * 0.0f64.cos() * dl.cos();
    cos_c.clamp(-1.0, 1.0).acos().to_degrees()
}

#[test]
fn surface_run_length_is_the_great_circle_distance() {
    // (lat, lon, side, foot longitude, exact angle where a special case gives one)
    let cases = [
        (80.0, 0.0, "near", 0.0, Some(80.0)),
        (-45.0, 0.0, "near", 0.0, Some(45.0)),
        (0.0, 30.0, "near", 0.0, Some(30.0)),
        (89.5, 77.0, "near", 0.0, None),
        (60.0, 60.0, "near", 0.0, None),        // cos c = 1/4
        (-30.0, 150.0, "far", 180.0, None),     // cos c = cos 30 cos 30 = 3/4
        (0.0, 180.0, "near", 0.0, Some(180.0)), // a far-side base for a near-side tether
    ];
    for (lat, lon, side, foot, exact) in cases {
        let v = demo_with_base(lat, lon, side);
        let c = check_json(&v, &format!("len-{lat}-{lon}-{side}"));
        let r = &c["surface_run"];
        let angle = law_of_cosines_deg(lat, lon, foot);
        if let Some(e) = exact {
            assert!(
                (angle - e).abs() < 1e-9,
                "test's own formula at {lat},{lon}"
            );
        }
        let want_km = R_MOON_KM * angle.to_radians();
        let got_km = r["length_km"].as_f64().unwrap();
        assert!(
            (got_km - want_km).abs() < 1e-9 * want_km,
            "({lat}, {lon}, {side}): surface run {got_km} km, great circle {want_km} km"
        );
        assert_eq!(r["foot_longitude_deg"].as_f64().unwrap(), foot);
        // Bays of the run: the cross-link spacing (50 km) from the base, the last one shorter.
        let bays = (want_km / 50.0).ceil() as u64;
        assert_eq!(r["bay_count"].as_u64().unwrap(), bays, "({lat}, {lon})");
        // The hanging tether is unchanged: 80 000 km (90 000 far side) in 50 km bays.
        let hanging = if side == "far" { 1800 } else { 1600 };
        assert_eq!(c["bay_count"].as_u64().unwrap(), bays + hanging);
        // The model statement names the run.
        let st = c["model_statement"]["anchor"].as_str().unwrap();
        assert!(st.contains("surface run of"), "{st}");
    }
    // The figure 0.25 quoted above for (60 N, 60 E) [derived: cos 60 x cos 60].
    assert!((law_of_cosines_deg(60.0, 60.0, 0.0) - 0.25f64.acos().to_degrees()).abs() < 1e-9);
}

#[test]
fn profile_positions_run_from_the_base() {
    let v = demo_with_base(70.0, 0.0, "near");
    let p = profile_json(&v, "positions");
    let run_km = R_MOON_KM * 70f64.to_radians();
    assert!((p["surface_run_length_km"].as_f64().unwrap() - run_km).abs() < 1e-6);
    let bays = p["bays"].as_array().unwrap();
    let k = (run_km / 50.0).ceil() as usize;
    for (j, b) in bays.iter().enumerate().take(k + 2) {
        let d = b["distance_from_base_km"].as_array().unwrap();
        let (lo, hi) = (d[0].as_f64().unwrap(), d[1].as_f64().unwrap());
        if j < k {
            assert_eq!(b["surface_run"], json!(true), "bay {j}");
            assert_eq!(b["bottom_altitude_km"].as_f64().unwrap(), 0.0);
            assert_eq!(b["top_altitude_km"].as_f64().unwrap(), 0.0);
            assert!((lo - 50.0 * j as f64).abs() < 1e-9);
            assert!((hi - (50.0 * (j + 1) as f64).min(run_km)).abs() < 1e-6);
            // A ribbon lying on the ground: shielding 1/2 [derived], no climber weight.
            assert_eq!(b["face_shielding_factor"].as_f64().unwrap(), 0.5);
            assert_eq!(b["climber_weight_n"].as_f64().unwrap(), 0.0);
            // Constant tension: the anchor tension of the hanging tether with traffic.
            assert!((b["max_tension_n"].as_f64().unwrap() - 1800.0).abs() < 1e-9);
        } else {
            assert!(b.get("surface_run").is_none(), "bay {j}");
            let alt = b["bottom_altitude_km"].as_f64().unwrap();
            assert!(
                (lo - (run_km + alt)).abs() < 1e-6,
                "bay {j}: {lo} vs {run_km} + {alt}"
            );
            assert!(hi > lo);
        }
    }
}

/// Cumulative Grün flux, ECSS-E-ST-10-04C Rev.1 eq. (10-1), per m² per year onto one face;
/// `m_g` in grams.
fn grun(m_g: f64) -> f64 {
    let yr = 3.15576e7;
    yr * ((2.2e3 * m_g.powf(0.306) + 15.0).powf(-4.38)
        + 1.3e-9 * (m_g + 1e11 * m_g.powi(2) + 1e27 * m_g.powi(4)).powf(-0.36)
        + 1.3e-16 * (m_g + 1e6 * m_g.powi(2)).powf(-0.85))
}

/// F of particles of at least diameter `d_m` (spheres of 2.5 g/cm³), per m² per year.
fn grun_d(d_m: f64) -> f64 {
    let m_g = std::f64::consts::PI / 6.0 * 2500.0 * d_m.powi(3) * 1e3;
    grun(m_g)
}

/// Two-face rate per metre of one ribbon, 2[(w + d)F(d) + Int_d^inf F(x) dx], the integral by
/// the trapezoid rule in ln x over eight decades (20 000 steps).
fn ribbon_rate_per_m(w: f64, d: f64) -> f64 {
    let (u0, u1) = (d.ln(), d.ln() + 8.0 * std::f64::consts::LN_10);
    let n = 20_000;
    let h = (u1 - u0) / n as f64;
    let g = |u: f64| grun_d(u.exp()) * u.exp();
    let mut s = 0.5 * (g(u0) + g(u1));
    for i in 1..n {
        s += g(u0 + i as f64 * h);
    }
    2.0 * ((w + d) * grun_d(d) + s * h)
}

/// Earth shielding at distance `r_km` from the Earth's centre (ECSS C-26/C-27, R_A = 100 km).
fn earth_shielding(r_km: f64) -> f64 {
    let sin_eta: f64 = (6378.137 + 100.0) / r_km;
    (1.0 + (1.0 - sin_eta * sin_eta).sqrt()) / 2.0
}

#[test]
fn surface_run_strike_rate_against_the_closed_form() {
    let mut v = demo_with_base(60.0, 0.0, "near");
    v["environment"]["moon_focusing"] = json!(false);
    v["environment"]["earth_focusing"] = json!(false);
    v["damage"] = json!({"law": "thin_film_hole", "hole_size": "constant", "hole_factor": 1.5});
    let c = check_json(&v, "rate");
    let r = &c["surface_run"];
    // Independent inputs: six 12 mm x 20 um ribbons of PBO at 5.8 GPa x 0.8 x 0.85 x 0.95, the
    // anchor tension 1500 N preload + 300 N traffic (the demo's numbers), net-section critical
    // hole w - T/(N t sigma), hole = 1.5 d.
    let (n, w, t) = (6.0, 12e-3, 20e-6);
    let sigma = 5.8e9 * 0.8 * 0.85 * 0.95;
    let tension = 1800.0;
    let crit = w - tension / (n * t * sigma);
    let d_min = crit / 1.5;
    let run_m = R_MOON_KM * 1e3 * 60f64.to_radians();
    // The constant-stress taper keeps 12 mm on the run: 1800 N needs only
    // 1800 / (6 x 20 um x sigma / 2.2) = 8.8 mm.
    assert!(tension / (n * t * sigma / 2.2) < w);
    let r_earth_km = 384_400.0 - R_MOON_KM; // the foot, on the Earth–Moon line
    let want = n * run_m * ribbon_rate_per_m(w, d_min) * 0.5 * earth_shielding(r_earth_km);
    let got = r["damaging_strike_rate_per_year"].as_f64().unwrap();
    assert!(
        (got / want - 1.0).abs() < 1e-4,
        "surface run: {got} damaging strikes per year, closed form {want}"
    );
    assert_eq!(r["shielding_factor"].as_f64().unwrap(), 0.5);
    assert!((r["tension_n"].as_f64().unwrap() - tension).abs() < 1e-9);

    // With focusing on, the run sees the surface focusing: REFERENCES.md §2 gives focusing x
    // Moon shielding = 0.543 at the surface (3 s.f.; the Earth shielding is folded in there
    // too, 0.99993), so the ratio to the unfocused rate is 0.543 / 0.5 / 0.99993 within the
    // rounding of the third figure (2e-3).
    v["environment"]["moon_focusing"] = json!(true);
    v["environment"]["earth_focusing"] = json!(true);
    let focused = check_json(&v, "rate-focused")["surface_run"]["damaging_strike_rate_per_year"]
        .as_f64()
        .unwrap();
    let ratio = focused / got;
    let want_ratio = 0.543 / 0.5 / earth_shielding(r_earth_km);
    assert!(
        (ratio / want_ratio - 1.0).abs() < 2e-3,
        "focusing on the surface: {ratio} against {want_ratio}"
    );
}

#[test]
fn base_at_the_foot_has_no_surface_run() {
    // The demo (0, 0), a near-side base written as 360 E, and a far-side tether from 180 E.
    for (lat, lon, side) in [
        (0.0, 0.0, "near"),
        (0.0, 360.0, "near"),
        (0.0, 180.0, "far"),
    ] {
        let v = demo_with_base(lat, lon, side);
        let c = check_json(&v, &format!("foot-{lon}-{side}"));
        assert!(c.get("surface_run").is_none(), "{lon} {side}");
        let st = c["model_statement"]["anchor"].as_str().unwrap();
        assert!(st.contains("no surface run"), "{st}");
        let p = profile_json(&v, &format!("foot-profile-{lon}-{side}"));
        assert!(p.get("surface_run_length_km").is_none());
        let b0 = &p["bays"][0];
        assert!(b0.get("surface_run").is_none() && b0.get("distance_from_base_km").is_none());
    }
}

#[test]
fn repair_positions_are_measured_from_the_base() {
    let v = demo_with_base(45.0, 0.0, "near");
    let m = model_of(&v);
    let run_m = R_MOON_KM * 1e3 * 45f64.to_radians();
    let r = m.scenario.repair.as_ref().unwrap();
    let plan = tether_risk::repair::RepairPlan::new(r, &m.profile, m.scenario.run.mission_s);
    // The base station (altitude 0) is at the base; the L1 station 56 000 km up the tether.
    assert_eq!(plan.stations[0].altitude_m, 0.0);
    assert!((plan.stations[1].altitude_m - (run_m + 56_000e3)).abs() < 1e-6);
    // The first hanging bay's middle is the run plus 25 km from the base: a climber from the
    // base drives the whole run first (60 m/s out, the demo's speed up).
    let k = m.profile.surface_bay_count();
    assert_eq!(k, (run_m / 50e3).ceil() as usize);
    let out = plan.travel_out_s(0, k);
    assert!((out - (run_m + 25e3) / 60.0).abs() < 1e-6, "{out}");
    // Bay 0 of the run is 25 km from the base.
    assert!((plan.travel_out_s(0, 0) - 25e3 / 60.0).abs() < 1e-9);
}

fn cuts_per_year(v: &Value, name: &str) -> (f64, f64) {
    let p = scenario_with(name, |s| *s = v.clone());
    let dir = temp_dir(&format!("{name}-out"));
    let o = run(&[
        "simulate",
        p.to_str().unwrap(),
        "--histories",
        "3000",
        "--seed",
        "5",
        "--out",
        dir.to_str().unwrap(),
        "--force",
    ]);
    assert!(o.status.success(), "{name}: {}", stderr(&o));
    let s: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap();
    let c = &s["cuts_per_year"];
    (
        c["estimate"].as_f64().unwrap(),
        c["ci_high"].as_f64().unwrap() - c["estimate"].as_f64().unwrap(),
    )
}

/// The surface run's bays take part in the histories: the polar base adds cuts, and no more
/// than the run's damaging strikes (only those can cut an intact segment), within the two
/// runs' 95 % intervals.
#[test]
fn a_surface_run_adds_cuts_bounded_by_its_damaging_strikes() {
    let base = demo_with_base(0.0, 0.0, "near");
    let polar = demo_with_base(80.0, 0.0, "near");
    let (c0, e0) = cuts_per_year(&base, "sim-foot");
    let (c1, e1) = cuts_per_year(&polar, "sim-polar");
    let run_rate = check_json(&polar, "sim-check")["surface_run"]["damaging_strike_rate_per_year"]
        .as_f64()
        .unwrap();
    let spread = e0.hypot(e1);
    assert!(
        c1 - c0 > spread,
        "polar {c1} against foot {c0} (+- {spread})"
    );
    assert!(
        c1 - c0 < run_rate + spread,
        "excess cuts {} above the run's damaging strikes {run_rate}",
        c1 - c0
    );
}

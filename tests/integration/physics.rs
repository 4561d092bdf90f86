//! Issue-10 physics end to end: the lunar-ejecta source in the strike sampler, the notch model
//! in the critical widths, the new JSON fields of `profile` and `check`, and the hole laws in
//! the hole-rate quadrature. Each check names its source (tags as in REFERENCES-damage.md).

use rand::SeedableRng;
use tether_risk::engine::StrikeSampler;
use tether_risk::model::hole_rate::HoleRateTable;
use tether_risk::model::Model;
use tether_risk::scenario::{self, Scenario};

use super::util::*;

fn model_with(f: impl FnOnce(&mut serde_json::Value)) -> Model {
    let mut v: serde_json::Value = serde_json::from_str(DEMO).unwrap();
    f(&mut v);
    let spec: scenario::ScenarioSpec = serde_json::from_value(v).unwrap();
    Model::build(Scenario::from_spec(spec, None).unwrap()).unwrap()
}

fn ejecta_on(v: &mut serde_json::Value) {
    v["environment"]["lunar_ejecta"] =
        serde_json::json!({"enabled": true, "flux_scale_factor": 1.0});
}

/// REFERENCES-damage §3.5 [DERIVED]: no ejecta particle can be above its vertical-launch
/// ceiling h = R v²/(v_esc² − v²). Statistical: 200 000 strikes drawn on the lowest bays; every
/// ejecta strike must sit below its speed's ceiling, no bay above the fastest bin's ceiling
/// (≈ 374 km) gets any, and the share of ejecta among a bay's strikes matches the rate ratio
/// within 4 binomial standard errors.
#[test]
fn no_ejecta_strike_above_the_ceiling() {
    let m = model_with(ejecta_on);
    let s = StrikeSampler::new(&m, 1.0).unwrap();
    let e = m.ejecta.as_ref().unwrap();
    let r_moon = m.orbit.moon_radius_m;
    let v_esc = (2.0 * m.orbit.gm_moon_m3_per_s2 / r_moon).sqrt();
    let mut rng = rand_pcg::Pcg64Mcg::seed_from_u64(10);
    for j in 0..10usize {
        let n = 20_000u64;
        let mut ejecta = 0u64;
        for _ in 0..n {
            let st = s.sample_in_bay(&mut rng, j);
            if let Some(alt) = st.ejecta_altitude_m {
                ejecta += 1;
                let v = st.speed_m_per_s;
                let ceiling = r_moon * v * v / (v_esc * v_esc - v * v);
                assert!(
                    alt <= ceiling,
                    "bay {j}: strike at {alt} m above ceiling {ceiling} m"
                );
                let bay = &m.profile.bays[j];
                assert!(alt >= bay.bottom_altitude_m && alt <= bay.top_altitude_m);
                assert!(v <= 1000.0);
            }
        }
        let bay = &m.profile.bays[j];
        if bay.bottom_altitude_m >= 374.1e3 {
            assert_eq!(ejecta, 0, "bay {j} is above every ceiling");
        }
        // Expected share from the rates the sampler was built with.
        let total = s.bay_rate_per_s(j);
        let prim_only = {
            let m0 = model_with(|_| {});
            StrikeSampler::new(&m0, 1.0).unwrap().bay_rate_per_s(j)
        };
        let p = 1.0 - prim_only / total;
        let se = (p * (1.0 - p) / n as f64).sqrt().max(1.0 / n as f64);
        let got = ejecta as f64 / n as f64;
        assert!(
            (got - p).abs() < 4.0 * se + 1e-12,
            "bay {j}: share {got} vs {p} (se {se})"
        );
        assert!(e.reaches_bay(j) == (p > 0.0));
    }
}

/// The hole-rate table with the ejecta source agrees with the ejecta sampler's removed widths:
/// the rate of holes removing at least the intact critical width, counted from sampled strikes
/// (4 standard errors of the Poisson count).
#[test]
fn ejecta_hole_rate_matches_the_sampler() {
    let m = model_with(ejecta_on);
    let table = HoleRateTable::build(&m, 1.0).unwrap();
    let s = StrikeSampler::new(&m, 1.0).unwrap();
    let n_rib = m.profile.design.ribbon_count as f64;
    let mut rng = rand_pcg::Pcg64Mcg::seed_from_u64(11);
    for j in [0usize, 3, 6] {
        let bay = &m.profile.bays[j];
        let c = m.bays[j].critical_hole_width_m[0];
        let draws = 100_000u64;
        let mut hits = 0u64;
        let target = tether_risk::damage::RibbonTarget {
            width_m: bay.width_m,
            thickness_m: m.profile.design.thickness_m,
            density_kg_per_m3: m.profile.design.density_kg_per_m3,
        };
        for _ in 0..draws {
            let st = s.sample_in_bay(&mut rng, j);
            let (law, rho): (&dyn tether_risk::damage::PerforationLaw, f64) =
                match st.ejecta_altitude_m {
                    Some(_) => {
                        let e = m.ejecta.as_ref().unwrap();
                        (&e.perforation, e.environment.particle_density_kg_per_m3)
                    }
                    None => (
                        m.perforation.as_ref(),
                        m.scenario.environment.particle_density_kg_per_m3,
                    ),
                };
            let impact = tether_risk::damage::Impact {
                diameter_m: st.diameter_m,
                speed_m_per_s: st.speed_m_per_s,
                cos_incidence: st.cos_incidence,
                density_kg_per_m3: rho,
                track_angle_rad: st.track_angle_rad,
            };
            let hole = law.hole_width_m(&impact, &target);
            if tether_risk::damage::removed_width_m(st.centre_m, hole, bay.width_m) >= c {
                hits += 1;
            }
        }
        let rate_sampler = s.bay_rate_per_s(j) * hits as f64 / draws as f64;
        let se = s.bay_rate_per_s(j) * (hits.max(1) as f64).sqrt() / draws as f64;
        let rate_table = table.bay(j).rate_at_least_per_s(c) * n_rib;
        assert!(
            (rate_sampler - rate_table).abs() < 4.0 * se + 0.01 * rate_table,
            "bay {j}: sampler {rate_sampler} table {rate_table} (se {se})"
        );
    }
}

/// `profile --format json` rows carry the issue-10 fields; `check --format json` carries
/// warnings with stable codes, among them the traffic envelope below a loaded climber's weight
/// (the demo: 300 N against (300 + 400) kg × 1.62 m/s² ≈ 1130 N at the anchor).
#[test]
fn profile_and_check_json_fields() {
    let o = run(&["profile", "demo", "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    let rows = v["bays"].as_array().unwrap();
    let n = 6;
    for r in rows {
        for k in [
            "face_shielding_factor",
            "ejecta_strike_rate_per_year",
            "climber_weight_n",
        ] {
            assert!(r[k].as_f64().is_some(), "missing {k}");
        }
        assert_eq!(r["critical_hole_widths_mm"].as_array().unwrap().len(), n);
    }
    // The face factor at the first bay's middle (25 km): 1 − (η − sin η cos η)/π [DERIVED].
    let r = 1737.4f64;
    let sin_eta = r / (r + 25.0);
    let eta = sin_eta.asin();
    let want = 1.0 - (eta - sin_eta * eta.cos()) / std::f64::consts::PI;
    assert!((rows[0]["face_shielding_factor"].as_f64().unwrap() - want).abs() < 1e-9);
    let w0 = rows[0]["climber_weight_n"].as_f64().unwrap();
    assert!((1000.0..1200.0).contains(&w0), "{w0}");

    let o = run(&["check", "demo", "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    let codes: Vec<&str> = v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w["code"].as_str().unwrap())
        .collect();
    assert!(
        codes.contains(&"traffic_envelope_below_climber_weight"),
        "{codes:?}"
    );
    // The demo's two decisive damage assumptions are named: the round constant hole and the
    // notch-insensitive net section (REFERENCES-damage.md §1.3 and §2.6).
    assert!(codes.contains(&"constant_hole_factor"), "{codes:?}");
    assert!(
        codes.contains(&"net_section_notch_insensitive"),
        "{codes:?}"
    );
    // Raising the envelope above the heaviest loaded climber removes that warning.
    let p = scenario_with("traffic-ok", |v| {
        v["tether"]["traffic_load_n"] = 1200.0.into()
    });
    let o = run(&["check", p.to_str().unwrap(), "--format", "json"]);
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert!(!v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .any(|w| w["code"] == "traffic_envelope_below_climber_weight"));
    // A notch-sensitive material does not get the net-section warning.
    let p = scenario_with("notch-wn", |v| {
        v["tether"]["material"]["notch_model"] = serde_json::json!({
            "model": "point_stress", "characteristic_length_mm": 1.0, "kt_infinite": 3.0,
            "basis": "engineering assumption"
        })
    });
    let o = run(&["check", p.to_str().unwrap(), "--format", "json"]);
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    let codes: Vec<&str> = v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w["code"].as_str().unwrap())
        .collect();
    assert!(
        !codes.contains(&"net_section_notch_insensitive"),
        "{codes:?}"
    );
    assert!(codes.contains(&"edge_holes_rated_as_central"), "{codes:?}");
}

/// The critical widths of `check`/`profile` follow the notch model: Whitney–Nuismer point
/// stress (d_0 = 1 mm, K_T∞ = 3, REFERENCES-damage §2.8 base) gives smaller critical holes than
/// net section, and the strength at that width equals the per-ribbon load.
#[test]
fn critical_widths_follow_the_notch_model() {
    let net = model_with(|_| {});
    let psc = model_with(|v| {
        v["tether"]["material"]["notch_model"] = serde_json::json!({
            "model": "point_stress", "characteristic_length_mm": 1.0, "kt_infinite": 3.0,
            "basis": "REFERENCES-damage §2.8 worked comparison"
        })
    });
    for j in [0usize, 10, 500] {
        for k in 0..3 {
            let a = net.bays[j].critical_hole_width_m[k];
            let b = psc.bays[j].critical_hole_width_m[k];
            assert!(b < a, "bay {j} k {k}: {b} !< {a}");
            let load = psc.profile.bays[j].max_tension_n / (6 - k) as f64;
            let cap = psc.profile.ribbon_capacity_n(j, b);
            assert!((cap / load - 1.0).abs() < 1e-6);
        }
    }
}

/// Parameter sets outside the point-stress criterion's validity are refused naming field,
/// value, range and unit (REFERENCES-damage §2.3: the PSC polynomial is unphysical for a large
/// orthotropic K_T∞; a UD tape guessed at K_T∞ ≈ 14.8, §2.2).
#[test]
fn point_stress_with_a_large_kt_is_refused() {
    let p = scenario_with("psc-kt", |v| {
        v["tether"]["material"]["notch_model"] = serde_json::json!({
            "model": "point_stress", "characteristic_length_mm": 1.0, "kt_infinite": 14.8,
            "basis": "engineering assumption"
        })
    });
    let o = run(&["check", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(
        e.contains("tether.material.notch_model.kt_infinite = 14.8")
            && e.contains("[3, 7.7086]")
            && e.contains("(dimensionless)"),
        "{e}"
    );
}

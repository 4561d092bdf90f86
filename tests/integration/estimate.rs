//! `tether-risk estimate`: the fast Markov estimate through the real binary, against closed
//! forms and the reference sheet's k-out-of-n values.

use crate::util::*;
use serde_json::Value;

/// A strong, light fictional ribbon material (invented numbers) so that a uniform-width
/// tether, or one single bay from the anchor past L1, can carry its own weight.
fn strong_uniform_tether(v: &mut Value) {
    let t = &mut v["tether"];
    t["material"]["name"] = "generic high-strength polymer".into();
    t["material"]["density_g_per_cm3"] = 0.97.into();
    t["material"]["ultimate_strength_gpa"] = 40.0.into();
    t["taper"] = "none".into();
}

fn estimate_json(path: &std::path::Path) -> Value {
    let o = run(&["estimate", path.to_str().unwrap(), "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    serde_json::from_str(&stdout(&o)).unwrap()
}

fn one_bay_validation(name: &str, crews: u32) -> std::path::PathBuf {
    scenario_with(name, |v| {
        strong_uniform_tether(v);
        v["tether"]["ribbon_count"] = 4.into();
        v["tether"]["top_altitude_km"] = 60_000.0.into();
        v["tether"]["cross_link_spacing_km"] = 60_000.0.into();
        v["repair"] = Value::Null;
        v["run"]["mission_years"] = 10.0.into();
        v["validation_mode"] = serde_json::json!({
            "cut_rate_per_segment_per_day": 0.01,
            "repair_rate_per_crew_per_day": 0.05,
            "crews_per_bay": crews,
            "required_ribbons": 1
        });
    })
}

#[test]
fn validation_mode_reproduces_k_out_of_n_reference() {
    // REFERENCES.md section 8 (Barlow–Proschan birth–death form, values computed there by
    // matrix solve): repairable 1-out-of-4, lambda = 0.01/day, mu = 0.05/day per crew,
    // R(10 yr = 3652.5 d) = 0.101688 with 1 crew and 0.59463 with 4 crews. (Recomputed here
    // with a 40-digit matrix exponential: 0.1016878222 and 0.5946296184.)
    for (crews, survival) in [(1, 0.101688), (4, 0.59463)] {
        let p = one_bay_validation(&format!("est-kofn-{crews}"), crews);
        let o = run(&["check", p.to_str().unwrap()]);
        assert!(
            o.status.success(),
            "the one-bay tether must be feasible: {}",
            stderr(&o)
        );
        let v = estimate_json(&p);
        assert_eq!(v["mode"], "synthetic_rates");
        assert_eq!(v["bay_count"], 1);
        let loss = v["loss_probability"].as_f64().unwrap();
        assert!(
            (loss - (1.0 - survival)).abs() < 1e-6,
            "{crews} crews: {loss} vs {}",
            1.0 - survival
        );
        let by_year = v["loss_probability_by_year"].as_array().unwrap();
        assert_eq!(by_year.len(), 10);
        assert_eq!(by_year[9]["loss_probability"].as_f64().unwrap(), loss);
        if crews == 1 {
            // Same table, R(1 yr) = 0.81814.
            let one = by_year[0]["loss_probability"].as_f64().unwrap();
            assert!((one - (1.0 - 0.81814)).abs() < 1e-5, "{one}");
        }
    }
}

/// `2 Int_{d_c}^inf (w + d) n(d) dd` with `n = -dF/dd` by a five-point difference in ln d and
/// Simpson's rule in ln d over eight decades: written here, apart from the library's
/// integration by parts.
fn direct_severing_integral(model: &tether_risk::model::Model, w: f64, d_c: f64) -> f64 {
    let rho = model.scenario.environment.particle_density_kg_per_m3;
    let f = |d: f64| {
        let m = std::f64::consts::PI / 6.0 * rho * d.powi(3);
        model.flux.cumulative_flux_per_m2_per_year(m)
    };
    // dF/du at u = ln d, five-point stencil; n(d) = -(dF/du) / d.
    let e = 1e-3;
    let n = |d: f64| {
        let fu = |k: f64| f(d * (k * e).exp());
        -(fu(-2.0) - 8.0 * fu(-1.0) + 8.0 * fu(1.0) - fu(2.0)) / (12.0 * e) / d
    };
    let (u0, u1) = (d_c.ln(), d_c.ln() + 8.0 * std::f64::consts::LN_10);
    let steps = 200_000;
    let h = (u1 - u0) / steps as f64;
    let y = |u: f64| {
        let d = u.exp();
        (w + d) * n(d) * d
    };
    let mut s = y(u0) + y(u1);
    for i in 1..steps {
        s += if i % 2 == 1 { 4.0 } else { 2.0 } * y(u0 + i as f64 * h);
    }
    2.0 * s * h / 3.0
}

#[test]
fn no_repair_no_sharing_matches_closed_form() {
    // REFERENCES.md section 6: n ribbons, no repair, a bay lost when all its ribbons are cut:
    // P(loss by T) = 1 - prod_j [1 - (1 - exp(-lambda_j T))^N], with lambda_j the severing
    // rate of one segment of bay j (fraction-of-width rule, both faces, edge overlap).
    let p = scenario_with("est-closed-form", |v| {
        strong_uniform_tether(v);
        v["tether"]["ribbon_count"] = 2.into();
        v["tether"]["load_sharing"] = "none".into();
        v["damage"] = serde_json::json!({"law": "fraction_of_width", "fraction": 1.0 / 3.0});
        v["repair"] = Value::Null;
        v["environment"]["flux_scale_factor"] = 0.1.into();
    });
    let v = estimate_json(&p);
    let sc = tether_risk::scenario::load(p.to_str().unwrap()).unwrap();
    let model = tether_risk::model::Model::build(sc).unwrap();
    let n = model.profile.design.ribbon_count as i32;
    let w = model.profile.bays[0].width_m;
    assert!(
        model.profile.bays.iter().all(|b| b.width_m == w),
        "uniform width expected"
    );
    let per_m_per_year = direct_severing_integral(&model, w, w / 3.0);
    let scale = model.scenario.environment.flux_scale_factor;
    let lambdas: Vec<f64> = model
        .profile
        .bays
        .iter()
        .zip(&model.bays)
        .map(|(b, t)| per_m_per_year * b.length_m() * t.factors.total() * scale)
        .collect();
    let points = v["loss_probability_by_year"].as_array().unwrap();
    assert_eq!(points.len(), 15);
    for pt in points {
        let years = pt["year"].as_f64().unwrap();
        let closed = 1.0
            - lambdas
                .iter()
                .map(|l| 1.0 - (1.0 - (-l * years).exp()).powi(n))
                .product::<f64>();
        let got = pt["loss_probability"].as_f64().unwrap();
        assert!(
            (got - closed).abs() < 1e-9 && (got / closed - 1.0).abs() < 1e-6,
            "year {years}: {got} vs {closed}"
        );
    }
    // Not a vacuous check: the loss probability is a few per cent at mission end, far from
    // both 0 and 1.
    let end = v["loss_probability"].as_f64().unwrap();
    assert!(end > 1e-2 && end < 0.2, "{end}");
}

#[test]
fn demo_estimate_prints_assumptions_and_json_contract() {
    let o = run(&["estimate", "demo"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let s = stdout(&o);
    for part in [
        "Probability of system loss by mission end",
        "assumptions",
        "independent bays",
        "exponential repair",
        "no memory of sub-critical damage",
        "no fleet contention",
        "Loss probability by mission year",
        "Bays contributing most",
        "Rates in the worst bay",
        "engineering estimates",
    ] {
        assert!(s.contains(part), "missing `{part}` in:\n{s}");
    }
    let o = run(&["estimate", "demo", "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: Value = serde_json::from_str(&stdout(&o)).unwrap();
    for key in [
        "version",
        "scenario",
        "scenario_hash",
        "loss_probability_by_year",
        "loss_probability",
        "assumptions",
        "bays",
        "repair_mean_time_hours",
    ] {
        assert!(v.get(key).is_some(), "missing key `{key}`");
    }
    let years = v["loss_probability_by_year"].as_array().unwrap();
    assert_eq!(years.len(), 15);
    assert!(years[0].get("year").is_some() && years[0].get("loss_probability").is_some());
    let bays = v["bays"].as_array().unwrap();
    assert_eq!(bays.len(), 20);
    for key in [
        "bay_index",
        "loss_probability",
        "cut_rate_per_year_by_state",
    ] {
        assert!(bays[0].get(key).is_some(), "missing bay key `{key}`");
    }
    // Bays are listed worst first, and the system is at least as likely lost as its worst bay.
    let p0 = bays[0]["loss_probability"].as_f64().unwrap();
    assert!(bays
        .iter()
        .all(|b| b["loss_probability"].as_f64().unwrap() <= p0));
    let total = v["loss_probability"].as_f64().unwrap();
    assert!(total >= p0 && total < 1.0);
    // The demo writes nothing: estimate creates no out/ folder of its own.
    assert!(v["assumptions"].as_array().unwrap().len() >= 4);
}

#[test]
fn local_sharing_says_equal_is_used() {
    let p = scenario_with("est-local", |v| {
        v["tether"]["load_sharing"] = "local".into();
    });
    let o = run(&["estimate", p.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stdout(&o).contains("EQUAL sharing"), "{}", stdout(&o));
}

#[test]
fn estimate_refuses_bad_input() {
    let o = run(&["estimate", "/nonexistent/scenario.json"]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    let p = scenario_with("est-bad", |v| {
        v["run"]["mission_years"] = (-1.0).into();
    });
    let o = run(&["estimate", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("run.mission_years"), "{}", stderr(&o));
}

//! The per-segment hole-rate function H_j(x) (model::hole_rate) against answers computed
//! without it:
//! - the strike-by-strike sampler (the reference engine): removed widths of sampled strikes,
//!   their rate above the floor (binomial, 4 standard errors) and their distribution above the
//!   floor, CDF 1 - H(x)/H(floor) (Kolmogorov–Smirnov, alpha = 0.001);
//! - the fraction-of-width criterion, where every strike by a particle of diameter >= f w
//!   removes the whole width: H(x) = 2 [(w + f w) F(f w) + Int_{f w}^inf F] x local x L for every
//!   x (the closed form of model::ribbon_strike_rate_per_m_per_year, itself checked against
//!   our own quadrature in engine_validation);
//! - monotonicity and the inverse: H(H^-1(y)) = y.

use serde_json::json;
use tether_risk::damage::{removed_width_m, Impact, RibbonTarget};
use tether_risk::engine::{stream, Engine, Purpose};
use tether_risk::model::hole_rate::HoleRateTable;
use tether_risk::model::{ribbon_strike_rate_per_m_per_year, Model};
use tether_risk::scenario::SECONDS_PER_YEAR;
use tether_risk::stats::ks_p_value;

use crate::util::*;

fn demo_no_repair() -> Model {
    let mut v: serde_json::Value = serde_json::from_str(DEMO).unwrap();
    v["repair"] = serde_json::Value::Null;
    model_of(&v)
}

/// Removed width of a sampled strike, as the strike-by-strike engine computes it.
fn removed(model: &Model, s: &tether_risk::engine::Strike) -> f64 {
    let bay = &model.profile.bays[s.bay as usize];
    let impact = Impact {
        diameter_m: s.diameter_m,
        speed_m_per_s: s.speed_m_per_s,
        cos_incidence: s.cos_incidence,
        density_kg_per_m3: model.scenario.environment.particle_density_kg_per_m3,
        track_angle_rad: s.track_angle_rad,
    };
    let target = RibbonTarget {
        width_m: bay.width_m,
        thickness_m: model.profile.design.thickness_m,
        density_kg_per_m3: model.profile.design.density_kg_per_m3,
    };
    removed_width_m(
        s.centre_m,
        model.perforation.hole_width_m(&impact, &target),
        bay.width_m,
    )
}

#[test]
fn hole_rate_matches_the_strike_sampler() {
    let model = demo_no_repair();
    let n = model.profile.design.ribbon_count as f64;
    let widest = (0..model.profile.bays.len())
        .max_by(|&a, &b| {
            model.profile.bays[a]
                .width_m
                .total_cmp(&model.profile.bays[b].width_m)
        })
        .unwrap();
    for (j, floor_fraction, seed) in [(0usize, 0.3, 11u64), (widest, 0.05, 12)] {
        let engine = Engine::new(&model, floor_fraction).unwrap();
        let table = HoleRateTable::build(&model, floor_fraction).unwrap();
        let hr = table.bay(j);
        let sampler = engine.sampler();
        let draws = 200_000usize;
        let mut rng = stream(seed, Purpose::Strikes, 0);
        let mut above: Vec<f64> = Vec::new();
        for _ in 0..draws {
            let s = sampler.sample_in_bay(&mut rng, j);
            let x = removed(&model, &s);
            if x >= hr.floor_m() {
                above.push(x);
            }
        }
        // Rate above the floor: strikes per segment per second x fraction above.
        let per_segment = sampler.bay_rate_per_s(j) / n;
        let p_hat = above.len() as f64 / draws as f64;
        let p_ref = hr.floor_rate_per_s() / per_segment;
        let se = (p_ref * (1.0 - p_ref) / draws as f64).sqrt();
        assert!(
            (p_hat - p_ref).abs() < 4.0 * se + 1e-4 * p_ref,
            "bay {j}: fraction above floor {p_hat} vs H(floor)/rate {p_ref} (se {se})"
        );
        // Distribution above the floor: CDF(x) = 1 - H(x)/H(floor).
        above.sort_by(f64::total_cmp);
        let m = above.len() as f64;
        let h0 = hr.floor_rate_per_s();
        let ks = above
            .iter()
            .enumerate()
            .map(|(i, &x)| {
                let f = 1.0 - hr.rate_at_least_per_s(x) / h0;
                (f - i as f64 / m).max((i + 1) as f64 / m - f)
            })
            .fold(0.0, f64::max);
        let p = ks_p_value(ks, above.len() as u64);
        assert!(
            p > STAT_ALPHA,
            "bay {j}: removed-width KS D = {ks:e}, p = {p:e}"
        );
        assert!(above.len() > 10_000, "bay {j}: only {} above", above.len());
    }
}

#[test]
fn fraction_of_width_rate_is_the_closed_form_at_every_width() {
    let mut v: serde_json::Value = serde_json::from_str(DEMO).unwrap();
    v["repair"] = serde_json::Value::Null;
    v["damage"] = json!({"law": "fraction_of_width", "fraction": 0.25});
    v["tether"]["load_sharing"] = json!("none");
    let model = model_of(&v);
    let table = HoleRateTable::build(&model, 1.0).unwrap();
    let env = &model.scenario.environment;
    for j in [
        0,
        model.profile.bays.len() / 2,
        model.profile.bays.len() - 1,
    ] {
        let bay = &model.profile.bays[j];
        let w = bay.width_m;
        let per_m = ribbon_strike_rate_per_m_per_year(
            model.flux.as_ref(),
            env.particle_density_kg_per_m3,
            w,
            0.25 * w,
        );
        let want = per_m * model.bays[j].factors.total() * env.flux_scale_factor * bay.length_m()
            / SECONDS_PER_YEAR;
        let hr = table.bay(j);
        for x in [hr.floor_m(), 0.5 * (hr.floor_m() + w), w] {
            let got = hr.rate_at_least_per_s(x);
            assert!(
                (got / want - 1.0).abs() < 2e-3,
                "bay {j} x {x}: H = {got:e}, closed form {want:e}"
            );
        }
    }
}

#[test]
fn hole_rate_is_monotone_and_its_inverse_inverts_it() {
    let model = demo_no_repair();
    let table = HoleRateTable::build(&model, 0.2).unwrap();
    for j in [0, 7, model.profile.bays.len() - 1] {
        let hr = table.bay(j);
        let (a, b) = (hr.floor_m(), hr.width_m());
        let mut prev = f64::INFINITY;
        for k in 0..=200 {
            let x = a * (b / a).powf(k as f64 / 200.0);
            let h = hr.rate_at_least_per_s(x);
            assert!(h <= prev && h >= 0.0, "bay {j}: H not monotone at {x}");
            prev = h;
            if h > hr.full_width_rate_per_s() && h < hr.floor_rate_per_s() {
                let back = hr.width_with_rate_m(h);
                assert!(
                    (back / x - 1.0).abs() < 1e-6,
                    "bay {j}: inverse {back} vs {x}"
                );
            }
        }
        assert!(hr.floor_rate_per_s() > hr.full_width_rate_per_s());
    }
}

//! Meteor streams (time-varying flux) against independent answers.
//!
//! - Expected strikes over a window: the strike-by-strike sampler's stream strikes summed over
//!   many histories against the peak rate times the **closed-form integral of the two-sided
//!   exponential profile**, ∫ exp(−|t − t_p|/τ) dt (the activity form of Jenniskens 1995,
//!   A&A 295, 206, ZHR ∝ 10^(−B|λ − λ_max|); REFERENCES-damage.md §4.2), computed here
//!   from the formula, not from the library's exposure function; the count is Poisson, so the
//!   tolerance is 4 standard errors (sqrt of the expectation). Histories that end in a loss
//!   stop early: the expectation integrates each history up to its own end (optional
//!   stopping of N(t) − Λ(t), a martingale).
//! - Strike counts by day of the year: Pearson's chi-square goodness of fit against the same
//!   closed-form expectation per bin (expected counts fixed in advance: K degrees of freedom),
//!   alpha = 0.001.
//! - The on-demand sampler with a stream against the strike-by-strike reference: Pearson's
//!   chi-square test of homogeneity on cut events by day-of-year bin (2 x K table), alpha =
//!   0.001.
//! - No streams: the goldens and the determinism suite (unchanged) guard the default path; an
//!   explicit empty list gives the very same summary.

use serde_json::{json, Value};
use statrs::distribution::{ChiSquared, ContinuousCDF};
use tether_risk::engine::{Engine, LogEvent, Sampler};

use crate::util::*;

const ALPHA: f64 = 0.001;
const DAY: f64 = 86_400.0;

/// The demo with no background flux, a one-year mission from 1 January and one stream peaking
/// on `peak_day` with e-folding `rise`/`fall` days and strength `flux` (per m² per year above
/// 1e-3 g, normal to the radiant).
fn stream_scenario(peak_day: f64, rise: f64, fall: f64, flux: f64, background: f64) -> Value {
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["environment"]["flux_scale_factor"] = json!(background);
    v["run"]["mission_years"] = json!(1.0);
    v["environment"]["meteor_streams"] = json!([{
        "name": "Test <stream>, \"A\"",
        "peak_day_of_year": peak_day,
        "radiant_speed_km_per_s": 59.0,
        "population_index": 2.2,
        "flux_above_reference_per_m2_per_year": flux,
        "reference_mass_g": 1e-3,
        "rise_e_folding_days": rise,
        "fall_e_folding_days": fall
    }]);
    v
}

/// Primitive of the two-sided exponential (peak at `tp`, widths `tr`, `tf`), from −∞, s.
fn primitive(t: f64, tp: f64, tr: f64, tf: f64) -> f64 {
    if t < tp {
        tr * ((t - tp) / tr).exp()
    } else {
        tr + tf * (1.0 - (-(t - tp) / tf).exp())
    }
}

fn integral(a: f64, b: f64, tp: f64, tr: f64, tf: f64) -> f64 {
    if b <= a {
        return 0.0;
    }
    primitive(b, tp, tr, tf) - primitive(a, tp, tr, tf)
}

#[test]
fn stream_strikes_match_the_integral_of_the_profile_and_its_shape() {
    let (peak, rise, fall) = (180.0, 1.5, 3.0);
    // Scale the strength so that a history sees about 20 stream strikes (rates are linear in
    // the strength).
    let probe = model_of(&stream_scenario(peak, rise, fall, 1.0, 0.0));
    let r1 = Engine::with_sampler(&probe, 1.0, Sampler::EveryStrike)
        .unwrap()
        .stream_peak_rate_per_s(0);
    assert!(r1 > 0.0);
    let (tp, tr, tf) = (peak * DAY, rise * DAY, fall * DAY);
    let g_mission = integral(0.0, 365.25 * DAY, tp, tr, tf);
    let flux = 20.0 / (r1 * g_mission);
    let model = model_of(&stream_scenario(peak, rise, fall, flux, 0.0));
    let engine = Engine::with_sampler(&model, 1.0, Sampler::EveryStrike).unwrap();
    let rate = engine.stream_peak_rate_per_s(0);
    assert!(
        (rate / (r1 * flux) - 1.0).abs() < 1e-9,
        "rate linear in strength"
    );
    // Day bins: the tails and 1-day bins from 6 days before to 12 after the peak.
    let mut edges = vec![0.0];
    for d in -6..=12 {
        edges.push(tp + d as f64 * DAY);
    }
    edges.push(365.25 * DAY);
    let k = edges.len() - 1;
    let mut counts = vec![0u64; k];
    let mut expected = vec![0.0f64; k];
    let histories = 1500;
    let mut total = 0u64;
    for h in 0..histories {
        let (out, log) = engine.replay(h, 77);
        let end = out.loss.map_or(365.25 * DAY, |l| l.time_s);
        for e in &log {
            if let LogEvent::Strike { time_s, strike, .. } = e {
                assert_eq!(strike.stream, Some(0), "no background strike expected");
                let b = edges
                    .partition_point(|&x| x <= *time_s)
                    .saturating_sub(1)
                    .min(k - 1);
                counts[b] += 1;
                total += 1;
            }
        }
        for b in 0..k {
            expected[b] += rate * integral(edges[b], edges[b + 1].min(end), tp, tr, tf);
        }
    }
    let want: f64 = expected.iter().sum();
    let se = want.sqrt();
    eprintln!("stream strikes: counted {total}, expected {want:.1} (SE {se:.1})");
    assert!(
        (total as f64 - want).abs() < 4.0 * se,
        "counted {total}, closed form {want:.1} ± {se:.1}"
    );
    let stat: f64 = counts
        .iter()
        .zip(&expected)
        .map(|(&c, &e)| (c as f64 - e).powi(2) / e)
        .sum();
    assert!(expected.iter().all(|&e| e >= 5.0), "{expected:?}");
    let p = 1.0 - ChiSquared::new(k as f64).unwrap().cdf(stat);
    eprintln!("by day: {counts:?} vs {expected:.1?}: chi2 {stat:.2} df {k} p {p:.3}");
    assert!(
        p > ALPHA,
        "strike counts by day do not follow the profile (p = {p:e})"
    );
}

/// Cut events by day bin, whole run.
fn cuts_by_bin(engine: &Engine, histories: u64, seed: u64, edges: &[f64]) -> Vec<u64> {
    let k = edges.len() - 1;
    let mut v = vec![0u64; k];
    for h in 0..histories {
        let (_, log) = engine.replay(h, seed);
        for e in &log {
            if let LogEvent::Cut { time_s, .. } = e {
                let b = edges
                    .partition_point(|&x| x <= *time_s)
                    .saturating_sub(1)
                    .min(k - 1);
                v[b] += 1;
            }
        }
    }
    v
}

#[test]
fn on_demand_cuts_by_day_agree_with_the_strike_by_strike_reference() {
    let (peak, rise, fall) = (181.0, 2.0, 4.0);
    let probe = model_of(&stream_scenario(peak, rise, fall, 1.0, 1.0));
    let r1 = Engine::new(&probe, 1.0).unwrap().stream_peak_rate_per_s(0);
    assert!(r1 > 0.0);
    // About 0.5 stream cuts per history at the peak's mission exposure, background x 5.
    let g = (rise + fall) * DAY;
    let mut v = stream_scenario(peak, rise, fall, 0.5 / (r1 * g), 5.0);
    v["run"]["mission_years"] = json!(1.0);
    let model = model_of(&v);
    let tp = peak * DAY;
    let mut edges = vec![0.0];
    for d in [-8, -4, -2, -1, 0, 1, 2, 4, 8, 16] {
        edges.push(tp + d as f64 * DAY);
    }
    edges.push(365.25 * DAY);
    let od = Engine::new(&model, 1.0).unwrap();
    let es = Engine::with_sampler(&model, 1.0, Sampler::EveryStrike).unwrap();
    let histories = 1500;
    let a = cuts_by_bin(&od, histories, 5, &edges);
    let b = cuts_by_bin(&es, histories, 6, &edges);
    let total: u64 = a.iter().chain(&b).sum();
    assert!(total > 800, "too few cuts to test: {total}");
    let (stat, df, p) = homogeneity(&a, &b);
    eprintln!("cuts by day: on-demand {a:?} every-strike {b:?}: chi2 {stat:.2} df {df} p {p:.3}");
    assert!(
        p > ALPHA,
        "samplers differ with a stream: {a:?} vs {b:?} (p = {p:e})"
    );
    // The peak bins hold far more cuts per day than the background months.
    let peak_rate = (a[4] + a[5]) as f64 / 2.0;
    let background_rate = a[0] as f64 / (tp / DAY - 8.0);
    assert!(peak_rate > 5.0 * background_rate, "{a:?}");
}

#[test]
fn an_empty_stream_list_is_the_default_bit_for_bit() {
    let a = scenario_with("streams-none", |_| {});
    let b = scenario_with("streams-empty", |v| {
        v["environment"]["meteor_streams"] = json!([]);
    });
    let run_one = |p: &std::path::Path, name: &str| {
        let out = temp_dir(name);
        let o = run(&[
            "simulate",
            p.to_str().unwrap(),
            "--histories",
            "2000",
            "--seed",
            "9",
            "--out",
            out.to_str().unwrap(),
        ]);
        assert!(o.status.success(), "{}", stderr(&o));
        let s: Value =
            serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap())
                .unwrap();
        (
            s["loss_probability"].clone(),
            s["mean_cuts"].clone(),
            s["tally"].clone(),
        )
    };
    assert_eq!(
        run_one(&a, "streams-none-out"),
        run_one(&b, "streams-empty-out")
    );
}

#[test]
fn bad_stream_fields_are_refused_with_path_value_range_and_unit() {
    for (field, value, needle) in [
        ("peak_day_of_year", json!(400.0), "peak_day_of_year"),
        ("radiant_speed_km_per_s", json!(90.0), "km/s"),
        ("population_index", json!(1.2), "population_index"),
        ("rise_e_folding_days", json!(-1.0), "rise_e_folding_days"),
    ] {
        let p = scenario_with("streams-bad", |v| {
            let mut s = stream_scenario(180.0, 1.0, 1.0, 1e-6, 1.0)["environment"]
                ["meteor_streams"][0]
                .clone();
            s[field] = value.clone();
            v["environment"]["meteor_streams"] = json!([s]);
        });
        let o = run(&["check", p.to_str().unwrap()]);
        assert_eq!(o.status.code(), Some(2), "{field}: {}", stderr(&o));
        let e = stderr(&o);
        assert!(
            e.contains("environment.meteor_streams[0]") && e.contains(needle),
            "{field}: {e}"
        );
    }
    // Both strength forms at once.
    let p = scenario_with("streams-both", |v| {
        let mut s =
            stream_scenario(180.0, 1.0, 1.0, 1e-6, 1.0)["environment"]["meteor_streams"][0].clone();
        s["zhr_per_hour"] = json!(100.0);
        v["environment"]["meteor_streams"] = json!([s]);
    });
    let o = run(&["check", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("zhr_per_hour"), "{}", stderr(&o));
}

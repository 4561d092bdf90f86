//! The count-only shortcut of the on-demand sampler (`engine/count_only.rs`) against the general
//! on-demand loop and an exact answer.
//!
//! Scenario: the demo without repair, equal load sharing, the 1/4-of-width cut rule (the
//! NumPy comparison's case a), flux scaled so that losses are common. Every bay j is then a
//! parallel system of N segments cut by independent Poisson processes of rate lambda_j (the
//! fraction rule cuts whatever the load), lost once k_j are cut (k_j: the first cut count at
//! which the survivors cannot carry the bay, `critical_hole_width_m[k] = 0`). The tether is a
//! series system of bays, so
//!
//! P(loss by T) = 1 - prod_j P(Binomial(N, 1 - exp(-lambda_j T)) < k_j)
//!
//! (the series system of k-out-of-n parallel systems; Barlow & Proschan 1975, *Statistical
//! Theory of Reliability and Life Testing*, ch. 2, citation from memory). lambda_j comes from
//! the test's own integral of the flux (`severing_rate_per_segment_per_year`), not from the
//! engine's rate tables.
//!
//! Checks: both paths within 3 binomial standard errors of P; the two paths' losses by cause
//! and cuts by altitude band homogeneous by Pearson's chi-square test (alpha = 0.001); the
//! shortcut's replay is the history it scored; results equal across thread counts; the
//! shortcut is used exactly where the module notes say.

use serde_json::{json, Value};

use tether_risk::engine::{Engine, LogEvent, Sampler, Tally};
use tether_risk::model::Model;
use tether_risk::scenario::SECONDS_PER_YEAR;

use crate::engine_validation::{model_with, severing_rate_per_segment_per_year};
use crate::util::{homogeneity, STAT_ALPHA};

const FRACTION: f64 = 0.25;

fn case_a(edit: impl FnOnce(&mut Value)) -> Model {
    model_with(|v| {
        v["repair"] = Value::Null;
        v["tether"]["load_sharing"] = json!("equal");
        v["damage"] = json!({"law": "fraction_of_width", "fraction": FRACTION});
        v["environment"]["flux_scale_factor"] = json!(3.0);
        edit(v);
    })
}

fn exact_loss_probability(model: &Model) -> f64 {
    let n = model.profile.design.ribbon_count;
    let t = model.scenario.run.mission_s / SECONDS_PER_YEAR;
    let mut ln_survive = 0.0;
    for j in 0..model.profile.bays.len() {
        let lambda = severing_rate_per_segment_per_year(model, j, FRACTION);
        let p = -(-lambda * t).exp_m1();
        let crit = &model.bays[j].critical_hole_width_m;
        let k = (0..=n)
            .find(|&i| crit.get(i).is_none_or(|&c| c <= 0.0))
            .unwrap();
        let binom = |i: usize| -> f64 {
            let c: f64 = (0..i).map(|m| (n - m) as f64 / (m + 1) as f64).product();
            c * p.powi(i as i32) * (1.0 - p).powi((n - i) as i32)
        };
        ln_survive += (0..k).map(binom).sum::<f64>().ln();
    }
    -ln_survive.exp_m1()
}

fn run(engine: &Engine<'_>, histories: u64, seed: u64, threads: usize) -> Tally {
    crate::util::run_engine(engine, histories, seed, threads)
}

fn within_3_se(t: &Tally, p: f64, what: &str) {
    let n = t.histories as f64;
    let est = t.losses as f64 / n;
    let se = (p * (1.0 - p) / n).sqrt();
    eprintln!(
        "{what}: {est:.5} vs exact {p:.5}, z = {:.2}",
        (est - p) / se
    );
    assert!(
        (est - p).abs() <= 3.0 * se,
        "{what}: {est} vs {p} (3 SE {})",
        3.0 * se
    );
}

#[test]
fn shortcut_and_general_loop_agree_with_each_other_and_the_binomial_closed_form() {
    let model = case_a(|_| {});
    let p = exact_loss_probability(&model);
    assert!((0.05..0.6).contains(&p), "the scenario resolves P: {p}");
    let fast = Engine::new(&model, 1.0).unwrap();
    assert_eq!(fast.count_only_path(), Ok(()));
    let general = Engine::new(&model, 1.0).unwrap().without_count_only();
    assert!(general.count_only_path().is_err());
    let n = 20_000;
    let a = run(&fast, n, 11, 2);
    let b = run(&general, n, 12, 2);
    within_3_se(&a, p, "count-only");
    within_3_se(&b, p, "general on-demand");
    let outcome = |t: &Tally| {
        let mut v = vec![t.histories - t.losses];
        v.extend_from_slice(&t.losses_by_cause);
        v
    };
    // Per-history scores only (histories are independent, so each is a two-multinomial
    // comparison; cut counts by band would not be: a cascade adds several cuts at once).
    for (what, x, y) in [
        ("outcomes", outcome(&a), outcome(&b)),
        (
            "largest cut count in a bay",
            a.max_cuts_in_bay.clone(),
            b.max_cuts_in_bay.clone(),
        ),
        (
            "losses by band",
            a.losses_by_band.clone(),
            b.losses_by_band.clone(),
        ),
        (
            "losses by year",
            a.losses_by_year.clone(),
            b.losses_by_year.clone(),
        ),
        (
            "losses by month",
            a.losses_by_month.clone(),
            b.losses_by_month.clone(),
        ),
    ] {
        let (s, df, pv) = homogeneity(&x, &y);
        eprintln!("{what}: {x:?} vs {y:?}: chi2 {s:.2} df {df} p {pv:.3}");
        assert!(
            pv > STAT_ALPHA,
            "{what} differ: {x:?} vs {y:?} (p = {pv:e})"
        );
    }
    // Mean cuts per history and time with a cut bay: two-sample z within 3.29 (alpha 0.001),
    // standard errors from the per-history sums of squares.
    let mean_se = |t: &Tally| {
        let n = t.histories as f64;
        let m = t.cuts as f64 / n;
        let v = (t.cuts_sq as f64 / n - m * m) / (n - 1.0);
        (m, v)
    };
    let ((ma, va), (mb, vb)) = (mean_se(&a), mean_se(&b));
    let z = (ma - mb) / (va + vb).sqrt();
    eprintln!("mean cuts per history {ma:.3} vs {mb:.3}: z = {z:.2}");
    assert!(z.abs() < 3.29, "mean cuts differ: {ma} vs {mb} (z = {z})");
    let fa = a.time_with_cut_bay_s as f64 / a.time_observed_s as f64;
    let fb = b.time_with_cut_bay_s as f64 / b.time_observed_s as f64;
    assert!((fa - fb).abs() < 0.02, "time with a cut bay: {fa} vs {fb}");
}

#[test]
fn a_replayed_history_is_the_history_the_shortcut_scored() {
    let model = case_a(|_| {});
    let engine = Engine::new(&model, 1.0).unwrap();
    let mut scratch = engine.new_scratch();
    let mut seen_loss = false;
    for h in 0..300 {
        let mut tally = engine.empty_tally();
        let out = engine.run_history(h, 5, &mut scratch, &mut tally, None);
        let (again, log) = engine.replay(h, 5);
        assert_eq!(out.cuts, again.cuts, "history {h}");
        assert_eq!(
            out.loss.map(|l| (l.time_s.to_bits(), l.bay, l.cause)),
            again.loss.map(|l| (l.time_s.to_bits(), l.bay, l.cause)),
            "history {h}"
        );
        let holes = log
            .iter()
            .filter(|e| matches!(e, LogEvent::CutHole { .. }))
            .count();
        let cuts: u32 = log
            .iter()
            .map(|e| match e {
                LogEvent::Cut { newly_cut, .. } => *newly_cut,
                _ => 0,
            })
            .sum();
        assert_eq!(cuts, out.cuts, "history {h}: the log's cuts");
        assert!(holes as u32 <= cuts && holes > 0 || cuts == 0);
        for e in &log {
            if let LogEvent::CutHole { bay, removed_m, .. } = e {
                let w = model.profile.bays[*bay as usize].width_m;
                assert!(
                    *removed_m >= FRACTION * w * (1.0 - 1e-9),
                    "a cut's hole reaches the rule"
                );
            }
        }
        seen_loss |= out.loss.is_some();
    }
    assert!(seen_loss, "some of the 300 histories are lost");
}

#[test]
fn shortcut_results_do_not_depend_on_the_thread_count() {
    let model = case_a(|_| {});
    let engine = Engine::new(&model, 1.0).unwrap();
    let one = run(&engine, 3_000, 9, 1);
    let two = run(&engine, 3_000, 9, 2);
    assert_eq!(one, two);
}

#[test]
fn shortcut_is_used_exactly_where_a_bay_is_its_cut_count() {
    let ok = |m: &Model| Engine::new(m, 1.0).unwrap().count_only_path();
    assert_eq!(ok(&case_a(|_| {})), Ok(()));
    // No load redistribution is a uniform rule too.
    assert_eq!(
        ok(&case_a(|v| v["tether"]["load_sharing"] = json!("none"))),
        Ok(())
    );
    let demo = model_with(|_| {});
    assert_eq!(ok(&demo), Err("repair changes bays' state"));
    let load_dependent = model_with(|v| v["repair"] = Value::Null);
    assert!(ok(&load_dependent).unwrap_err().contains("sub-critical"));
    let local = case_a(|v| v["tether"]["load_sharing"] = json!("local"));
    assert!(ok(&local).unwrap_err().contains("which ribbons are cut"));
    let model = case_a(|_| {});
    let weighted = Engine::new(&model, 1.0)
        .unwrap()
        .with_rare_event(4.0)
        .unwrap();
    assert_eq!(
        weighted.count_only_path(),
        Err("a weighted estimator is on")
    );
    let reference = Engine::with_sampler(&model, 1.0, Sampler::EveryStrike).unwrap();
    assert!(reference.count_only_path().is_err());
    let streams = case_a(|v| {
        v["environment"]["meteor_streams"] = json!([{"name": "Outburst A",
            "peak_day_of_year": 222.0, "radiant_speed_km_per_s": 59.0,
            "population_index": 2.2, "zhr_per_hour": 3000.0,
            "rise_b_per_deg": 0.4, "fall_b_per_deg": 0.2}]);
    });
    assert!(ok(&streams).unwrap_err().contains("streams"));
}

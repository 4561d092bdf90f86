//! The rare-event estimator is unbiased: it agrees with the birth–death chain far below what
//! plain Monte Carlo can resolve, and with plain Monte Carlo where both resolve the probability.

use serde_json::{json, Value};
use tether_risk::analytic::BirthDeath;
use tether_risk::engine::{Engine, RunOptions, RunSummary};
use tether_risk::model::Model;

use crate::util::{model_of, one_bay_validation, DEMO};

fn summary(model: &Model, histories: u64, seed: u64, factor: f64) -> RunSummary {
    let engine = Engine::new(model, 1.0)
        .unwrap()
        .with_rare_event(factor)
        .unwrap();
    let opts = RunOptions {
        histories,
        seed,
        threads: 2,
        floor_fraction: 1.0,
        shard: None,
        target_rel_error: None,
    };
    let tally = engine.run(&opts, &|_| {}).unwrap();
    RunSummary::from_tally(&engine, tally, histories, seed, None, 0.05)
}

/// The independent answer: the repairable 1-out-of-4 birth–death chain (Barlow & Proschan form,
/// REFERENCES.md §8), solved by uniformization in `analytic` — itself checked there against
/// the §8 table (R(10 yr) = 0.101688 for lambda = 0.01/d, mu = 0.05/d).
fn markov(lambda_per_day: f64, mu_per_day: f64) -> f64 {
    let day = 86_400.0;
    let chain = BirthDeath::k_out_of_n(4, 1, lambda_per_day / day, mu_per_day / day, 1).unwrap();
    chain.absorption_probability(3652.5 * day)
}

fn check(lambda: f64, mu: f64, factor: f64, histories: u64, seed: u64) -> (f64, f64) {
    let p = markov(lambda, mu);
    let s = summary(
        &model_of(&one_bay_validation(lambda, mu, 1)),
        histories,
        seed,
        factor,
    );
    let r = s.rare_event.expect("rare-event diagnostics");
    let est = r.loss_probability.estimate;
    assert!(
        (est - p).abs() < 3.0 * r.std_error,
        "lambda {lambda}/d: estimate {est:e} +- {:e} vs Markov {p:e}",
        r.std_error
    );
    assert!(r.effective_sample_size > 30.0, "{r:?}");
    (p, r.relative_error.unwrap())
}

#[test]
fn agrees_with_markov_near_1e_minus_6() {
    let (p, rel) = check(0.001, 0.5, 30.0, 100_000, 21);
    assert!(
        (3e-7..3e-6).contains(&p),
        "the case must sit near 1e-6: {p:e}"
    );
    // Plain Monte Carlo with the same histories would see no loss at all (p x n < 0.1).
    assert!(rel < 0.15, "relative error {rel}");
}

#[test]
fn agrees_with_markov_near_1e_minus_9() {
    let (p, rel) = check(0.0002, 0.5, 100.0, 200_000, 22);
    assert!(
        (3e-10..3e-9).contains(&p),
        "the case must sit near 1e-9: {p:e}"
    );
    assert!(rel < 0.3, "relative error {rel}");
}

#[test]
fn agrees_with_plain_monte_carlo_where_both_resolve() {
    // The physical engine (strikes, holes, cascades, repair) at a loss probability near 1e-2:
    // plain and rare-event estimates must agree within their combined intervals.
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["environment"]["flux_scale_factor"] = json!(8.0);
    v["run"]["mission_years"] = json!(5.0);
    let m = model_of(&v);
    let plain = summary(&m, 8_000, 31, 1.0);
    let rare = summary(&m, 8_000, 32, 10.0);
    let p = plain.loss_probability.estimate;
    assert!(
        (2e-3..5e-2).contains(&p),
        "regime check: plain estimate {p}"
    );
    let se_plain = (p * (1.0 - p) / 8_000.0).sqrt();
    let r = rare.rare_event.unwrap();
    let diff = (r.loss_probability.estimate - p).abs();
    let se = (se_plain * se_plain + r.std_error * r.std_error).sqrt();
    assert!(
        diff < 3.0 * se,
        "plain {p} vs rare-event {} (combined se {se})",
        r.loss_probability.estimate
    );
}

#[test]
fn boost_factor_one_is_plain_monte_carlo_bit_for_bit() {
    let m = model_of(&one_bay_validation(0.01, 0.05, 1));
    let a = summary(&m, 2_000, 5, 1.0);
    let engine = Engine::new(&m, 1.0).unwrap();
    let opts = RunOptions {
        histories: 2_000,
        seed: 5,
        threads: 1,
        floor_fraction: 1.0,
        shard: None,
        target_rel_error: None,
    };
    let b = RunSummary::from_tally(
        &engine,
        engine.run(&opts, &|_| {}).unwrap(),
        2_000,
        5,
        None,
        0.05,
    );
    assert_eq!(a, b);
}

/// Every loss-probability object in a JSON document (objects with `method` and `resolved`).
fn loss_objects(v: &Value, out: &mut Vec<Value>) {
    match v {
        Value::Object(m) => {
            if m.contains_key("resolved") && m.contains_key("method") && m.contains_key("estimate")
            {
                out.push(v.clone());
            }
            for x in m.values() {
                loss_objects(x, out);
            }
        }
        Value::Array(a) => a.iter().for_each(|x| loss_objects(x, out)),
        _ => {}
    }
}

#[test]
fn one_effective_loss_is_never_a_clopper_pearson_or_zero_width_interval() {
    // Through the binary: the demo with the rare-event estimator and few histories sees one
    // loss (effective sample size 1). The weighted estimate must come with its standard error
    // and "not resolved", never with a Clopper–Pearson label or a zero-width interval, in the
    // terminal, summary.json, the tables and the report. (The rule: stats::weighted — no
    // interval below an effective sample size of 100 or above a 10 % weight share.)
    use crate::util::{run, stdout, temp_dir};
    let dir = temp_dir("rare-one-loss");
    let d = dir.to_str().unwrap();
    let o = run(&[
        "simulate",
        "demo",
        "--rare-event",
        "30",
        "--histories",
        "3000",
        "--out",
        d,
        "--force",
    ]);
    assert!(o.status.success(), "{}", crate::util::stderr(&o));
    let text = stdout(&o);
    let line = text
        .lines()
        .find(|l| l.starts_with("Probability of system loss"))
        .expect("loss line");
    assert!(!line.contains("Clopper"), "{line}");
    assert!(line.contains("NOT RESOLVED"), "{line}");
    assert!(line.contains("SE "), "{line}");
    let summary: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap();
    let lp = &summary["loss_probability"];
    assert_eq!(lp["method"], "weighted");
    assert_eq!(lp["resolved"], false);
    assert!(lp["ci_low"].is_null() && lp["ci_high"].is_null(), "{lp}");
    assert!(lp["standard_error"].as_f64().unwrap() > 0.0);
    assert!(lp["effective_sample_size"].as_f64().unwrap() < 100.0);
    assert!(lp["largest_weight_share"].as_f64().is_some());
    assert!(!lp["interval_method"].as_str().unwrap().contains("Clopper"));
    let mut all = Vec::new();
    loss_objects(&summary, &mut all);
    assert!(all.len() > 10, "found {} loss objects", all.len());
    for x in &all {
        if x["method"] == "weighted" {
            assert!(!x["interval_method"].as_str().unwrap().contains("Clopper"));
            match (x["ci_low"].as_f64(), x["ci_high"].as_f64()) {
                (Some(a), Some(b)) => assert!(b > a, "zero-width interval {x}"),
                (None, None) => assert_eq!(x["resolved"], false, "{x}"),
                _ => panic!("half an interval: {x}"),
            }
        }
    }
    // Survival by year: no [1, 1] band for a year without a resolved estimate.
    let surv = std::fs::read_to_string(dir.join("survival_by_year.csv")).unwrap();
    assert!(!surv.contains("Clopper"), "{surv}");
    // The report: yearly table and headline.
    let o = run(&["report", d]);
    assert!(o.status.success(), "{}", crate::util::stderr(&o));
    let md = std::fs::read_to_string(dir.join("failure_tables.md")).unwrap();
    let yearly = md
        .split("## ")
        .find(|s| s.starts_with("Cumulative loss probability by mission year"))
        .unwrap();
    assert!(!yearly.contains("Clopper"), "{yearly}");
    assert!(yearly.contains("not resolved"), "{yearly}");
    let csv = std::fs::read_to_string(dir.join("failure_by_year.csv")).unwrap();
    assert!(!csv.contains("Clopper"), "{csv}");
    let html = std::fs::read_to_string(dir.join("report.html")).unwrap();
    assert!(html.contains("not resolved") || html.contains("NOT RESOLVED"));
    let _ = std::fs::remove_dir_all(&dir);
}

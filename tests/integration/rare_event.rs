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

//! The conditional Monte Carlo at cuts (`simulate --condition-cascades`,
//! `Engine::with_conditioned_cascades`) against independent answers: the exact no-repair
//! damage-memory probability (itself checked against brute-force order statistics in
//! damage_memory.rs) and plain Monte Carlo with repair.

use serde_json::{json, Value};
use tether_risk::engine::{Engine, EstimateMethod, RunOptions, RunSummary};
use tether_risk::model::damage_memory::solve;
use tether_risk::model::markov::mission_times_s;
use tether_risk::model::Model;

use crate::util::{model_of, run, scenario_with, stdout, temp_dir, DEMO};

/// The demo without repair, flux scaled by `flux`.
fn no_repair(flux: f64) -> Value {
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["repair"] = Value::Null;
    v["environment"]["flux_scale_factor"] = json!(flux);
    v
}

fn exact_no_repair(model: &Model) -> f64 {
    let times = mission_times_s(&model.scenario.run);
    let dm = solve(model, &times).unwrap();
    assert!(
        dm.exact,
        "the damage-memory estimate is exact without repair"
    );
    *dm.system_loss_probability.last().unwrap()
}

fn summary(engine: &Engine, n: u64, seed: u64, threads: usize) -> RunSummary {
    let opts = RunOptions {
        histories: n,
        seed,
        threads,
        floor_fraction: 1.0,
        shard: None,
        target_rel_error: None,
    };
    RunSummary::from_tally(
        engine,
        engine.run(&opts, &|_| {}).unwrap(),
        n,
        seed,
        None,
        0.05,
    )
}

fn conditioned(model: &Model) -> Engine<'_> {
    Engine::new(model, 1.0)
        .unwrap()
        .with_conditioned_cascades(true)
        .unwrap()
}

#[test]
fn switched_off_it_is_plain_monte_carlo_bit_for_bit() {
    let model = model_of(&no_repair(5.0));
    let plain = Engine::new(&model, 1.0).unwrap();
    let off = Engine::new(&model, 1.0)
        .unwrap()
        .with_conditioned_cascades(false)
        .unwrap();
    for h in 0..200 {
        assert_eq!(plain.replay(h, 9), off.replay(h, 9), "history {h}");
    }
}

/// Checks the weighted estimate against an exact value: within 3 of its own standard errors
/// (a 0.27 % false-alarm rate for a normal estimator; the seed is fixed), resolved, labelled
/// weighted and never Clopper–Pearson.
fn assert_matches(s: &RunSummary, exact: f64, max_rel_error: f64) {
    let lp = &s.loss_probability;
    assert_eq!(lp.method, EstimateMethod::Weighted);
    assert!(lp.resolved, "{lp:?}");
    assert!(!format!("{lp:?}").contains("Clopper"));
    let se = lp.standard_error;
    assert!(
        (lp.estimate - exact).abs() < 3.0 * se,
        "conditioned {:e} +- {se:e} vs exact {exact:e} (ESS {})",
        lp.estimate,
        lp.effective_sample_size
    );
    assert!(
        se / lp.estimate < max_rel_error,
        "relative error {} above {max_rel_error}",
        se / lp.estimate
    );
    let r = s.rare_event.as_ref().expect("weighted diagnostics");
    assert!(r.condition_cascades && r.scored_cascades > 0);
    assert!(r.method.contains("conditional Monte Carlo"));
    assert!(s.tallies_withheld.is_some() && s.repair.is_none());
}

#[test]
fn unbiased_against_the_exact_answer_near_2e_minus_3() {
    // Independent answer: the damage-memory estimate, exact without repair (1.95e-3 here).
    let model = model_of(&no_repair(1.0));
    let exact = exact_no_repair(&model);
    assert!((1e-3..5e-3).contains(&exact), "regime {exact}");
    let s = summary(&conditioned(&model), 100_000, 3, 2);
    assert_matches(&s, exact, 0.02);
}

#[test]
fn resolves_a_loss_probability_near_2e_minus_6_to_ten_percent() {
    // Flux x0.1: plain Monte Carlo would need about 1e8 histories for 190 losses. Independent
    // answer: the exact damage-memory value (1.875e-6).
    let model = model_of(&no_repair(0.1));
    let exact = exact_no_repair(&model);
    assert!((5e-7..5e-6).contains(&exact), "regime {exact}");
    let s = summary(&conditioned(&model), 400_000, 4, 2);
    assert_matches(&s, exact, 0.10);
}

#[test]
fn with_repair_it_agrees_with_plain_monte_carlo() {
    // The demo with repair (no exact answer): plain Monte Carlo is the independent answer.
    // Two-sample z test at alpha = 0.001 (|z| < 3.29), fixed seeds.
    let model = model_of(&serde_json::from_str::<Value>(DEMO).unwrap());
    let plain = summary(&Engine::new(&model, 1.0).unwrap(), 400_000, 5, 2);
    let cond = summary(&conditioned(&model), 40_000, 6, 2);
    let (a, b) = (&plain.loss_probability, &cond.loss_probability);
    let se_a = (a.estimate * (1.0 - a.estimate) / plain.histories as f64).sqrt();
    let z = (a.estimate - b.estimate) / (se_a.powi(2) + b.standard_error.powi(2)).sqrt();
    assert!(
        z.abs() < 3.29,
        "plain {:e} +- {se_a:e} vs conditioned {:e} +- {:e}: z = {z}",
        a.estimate,
        b.estimate,
        b.standard_error
    );
    // The conditioned run is far more precise per history: variance per history at least 100
    // times smaller (about 1000 measured on this case).
    let per_history = |se: f64, n: u64| se * se * n as f64;
    let ratio = per_history(se_a, plain.histories) / per_history(b.standard_error, cond.histories);
    assert!(ratio > 100.0, "variance ratio per history {ratio}");
}

#[test]
fn the_same_at_any_thread_count() {
    let model = model_of(&no_repair(0.3));
    let e = conditioned(&model);
    let one = summary(&e, 5_000, 8, 1);
    let three = summary(&e, 5_000, 8, 3);
    assert_eq!(
        one.loss_probability.estimate.to_bits(),
        three.loss_probability.estimate.to_bits()
    );
    assert_eq!(one.tally, three.tally);
}

#[test]
fn what_it_does_not_cover_is_refused_by_name() {
    let mut local = no_repair(1.0);
    local["tether"]["load_sharing"] = json!("local");
    let m = model_of(&local);
    let e = Engine::new(&m, 1.0)
        .unwrap()
        .with_conditioned_cascades(true)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("--condition-cascades") && e.contains("load_sharing"),
        "{e}"
    );
    let m = model_of(&no_repair(1.0));
    let e = Engine::new(&m, 1.0)
        .unwrap()
        .with_latent_bias(0.3)
        .unwrap()
        .with_conditioned_cascades(true)
        .unwrap_err()
        .to_string();
    assert!(e.contains("--latent-bias"), "{e}");
    let e = Engine::with_sampler(&m, 1.0, tether_risk::engine::Sampler::EveryStrike)
        .unwrap()
        .with_conditioned_cascades(true)
        .unwrap_err()
        .to_string();
    assert!(e.contains("on-demand"), "{e}");
}

/// Runs the binary with `--condition-cascades --force` added, checks it succeeded and printed no
/// exact-binomial label, and returns its standard output.
fn run_conditioned(args: &[&str]) -> String {
    let mut a = args.to_vec();
    a.extend(["--condition-cascades", "--force"]);
    let r = run(&a);
    assert!(r.status.success(), "{r:?}");
    let text = stdout(&r);
    assert!(!text.contains("Clopper"), "{text}");
    text
}

#[test]
fn through_the_binary_it_never_prints_an_exact_binomial_label() {
    let f = scenario_with("conditioned-binary", |v| {
        v["repair"] = Value::Null;
        v["environment"]["flux_scale_factor"] = json!(0.1);
    });
    let out = temp_dir("conditioned-binary-out");
    let f = f.to_str().unwrap();
    let o = out.to_str().unwrap();
    // Too few histories: the text says "not resolved" and prints no interval.
    let text = run_conditioned(&[
        "simulate",
        f,
        "--histories",
        "300",
        "--seed",
        "2",
        "--out",
        o,
    ]);
    assert!(text.contains("not resolved"), "{text}");
    assert!(text.contains("left out of this run"), "{text}");
    let v: Value = serde_json::from_str(&run_conditioned(&[
        "simulate",
        f,
        "--histories",
        "20000",
        "--seed",
        "2",
        "--out",
        o,
        "--format",
        "json",
    ]))
    .unwrap();
    let lp = &v["loss_probability"];
    assert_eq!(lp["method"], "weighted");
    assert!(lp["standard_error"].as_f64().unwrap() > 0.0);
    assert!(!lp["interval_method"]
        .as_str()
        .unwrap_or("")
        .contains("Clopper"));
    assert!(v["repair"].is_null() && v["tallies_withheld"].is_string());
    assert!(!out.join("altitude_bands.csv").exists());
}

/// `sweep` passes `--condition-cascades` to every point (it once accepted the flag and ran
/// plain Monte Carlo under an exact-binomial label), records it in the plan and the result,
/// and leaves out the points' biased counts; `sensitivity` does the same and lists a variant
/// the estimator does not cover (local sharing) as skipped, with the reason.
#[test]
fn sweep_and_sensitivity_run_every_point_conditioned_and_say_so() {
    let out = temp_dir("conditioned-sweep-out");
    let o = out.to_str().unwrap();
    let text = run_conditioned(&[
        "sweep",
        "demo",
        "--vary",
        "tether.ribbon_width_mm=11,13",
        "--histories",
        "3000",
        "--out",
        o,
    ]);
    assert!(text.contains("left out (-)"), "{text}");
    let v: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("sweep.json")).unwrap()).unwrap();
    assert_eq!(v["condition_cascades"], true);
    for p in v["points"].as_array().unwrap() {
        assert_eq!(p["loss_probability"]["method"], "weighted", "{p}");
        assert!(p["losses"].is_null() && p["cuts_per_year"].is_null(), "{p}");
    }
    let plan: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("sweep_plan.json")).unwrap())
            .unwrap();
    assert_eq!(plan["condition_cascades"], true);

    let out = temp_dir("conditioned-sensitivity-out");
    let v: Value = serde_json::from_str(&run_conditioned(&[
        "sensitivity",
        "demo",
        "--histories",
        "300",
        "--out",
        out.to_str().unwrap(),
        "--format",
        "json",
    ]))
    .unwrap();
    assert_eq!(v["condition_cascades"], true);
    assert_eq!(v["base"]["loss_probability"]["method"], "weighted");
    assert!(v["base"]["losses"].is_null());
    let skipped = v["skipped"].as_array().unwrap();
    assert!(
        skipped.iter().any(|s| s["input"] == "load-sharing rule"
            && s["reason"]
                .as_str()
                .unwrap()
                .contains("--condition-cascades")),
        "{skipped:?}"
    );
}

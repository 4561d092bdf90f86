//! Issue 10 items 3 and 6 through the library: the inspection / preventive-replacement policy
//! against the same runs without it (common random numbers: the same seed and streams), and
//! the climber-load switch. Expected answers are identities of the design (a threshold no
//! segment can reach changes nothing, bit for bit) and counts that must hold in every history.

use serde_json::{json, Value};
use tether_risk::engine::{Engine, RunOptions, Tally};
use tether_risk::model::Model;

use crate::util::model_of;

/// The demo with climber loads on the bays (`repair.climber.load_on_bays`).
fn demo() -> Value {
    let mut v: Value = serde_json::from_str(tether_risk::scenario::DEMO_SCENARIO_JSON).unwrap();
    v["run"]["mission_years"] = json!(15.0);
    v["repair"]["climber"]["load_on_bays"] = json!(true);
    v
}

fn run(model: &Model, histories: u64, seed: u64, threads: usize) -> Tally {
    let engine = Engine::new(model, 1.0).unwrap();
    crate::util::run_engine(&engine, histories, seed, threads)
}

#[test]
fn threshold_above_every_critical_width_is_bit_identical_to_no_policy() {
    // A hole is at most the ribbon width and every intact segment's critical width is below
    // it, so a threshold of the whole width can never be reached: the policy must then change
    // nothing at all, bit for bit, though it inspects every visited bay.
    let base = demo();
    let mut with = demo();
    with["repair"]["preventive_replacement"] = json!({
        "threshold": {"kind": "fraction_of_width", "fraction": 1.0},
        "at_climber_visits": true,
        "extra_spares_per_trip": 3
    });
    let (a, b) = (model_of(&base), model_of(&with));
    let ta = run(&a, 4000, 7, 2);
    let mut tb = run(&b, 4000, 7, 1);
    assert!(ta.losses > 20, "the comparison needs losses: {}", ta.losses);
    assert!(tb.repair.bays_inspected > 0, "visits were inspected");
    assert_eq!(tb.repair.preventive_replacements, 0);
    tb.repair.bays_inspected = 0;
    assert_eq!(ta, tb);
}

#[test]
fn zero_threshold_replaces_every_intact_segment_at_every_visit() {
    // With a zero threshold every intact segment of a visited bay is replaced: per visit, the
    // N - (cuts at the visit) intact ones. Spliced plus preventively replaced segments then sum
    // to N per visit exactly when every visit splices all the bay's cuts, which ample capacity
    // and stock ensure unless a cut arrives between dispatch and splice (rare): allow that.
    let mut v = demo();
    v["repair"]["climber"]["payload_kg"] = json!(4000.0);
    v["repair"]["stations"][0]["initial_stock_segments"] = json!(100_000);
    v["repair"]["stations"][1]["initial_stock_segments"] = json!(100_000);
    v["repair"]["preventive_replacement"] = json!({
        "threshold": {"kind": "fraction_of_width", "fraction": 0.0},
        "extra_spares_per_trip": 6
    });
    let m = model_of(&v);
    let t = run(&m, 3000, 11, 2);
    let n = 6u64;
    let r = &t.repair;
    assert!(r.bays_inspected > 100, "{}", r.bays_inspected);
    assert_eq!(r.preventive_short_of_spares, 0);
    let per_visit = r.preventive_at_visits + r.splices;
    assert!(
        per_visit <= n * r.bays_inspected && per_visit * 100 >= 99 * n * r.bays_inspected,
        "{} replaced + {} spliced over {} visits",
        r.preventive_at_visits,
        r.splices,
        r.bays_inspected
    );
    assert_eq!(r.preventive_at_inspections, 0);
}

#[test]
fn climber_load_and_policy_runs_are_reproducible_across_threads() {
    let mut v = demo();
    v["repair"]["preventive_replacement"] = json!({
        "threshold": {"kind": "fraction_of_next_critical", "fraction": 0.5},
        "inspection_interval_days": 180.0,
        "inspection_lowest_km": 300.0
    });
    let m = model_of(&v);
    let a = run(&m, 2000, 3, 1);
    let b = run(&m, 2000, 3, 2);
    assert_eq!(a, b);
    assert!(a.repair.inspections > 0 && a.repair.preventive_at_inspections > 0);
}

#[test]
fn switching_climber_load_off_removes_its_losses() {
    let mut off = demo();
    off["repair"]["climber"]["load_on_bays"] = json!(false);
    let t_off = run(&model_of(&off), 3000, 5, 2);
    assert_eq!(t_off.losses_by_cause[3], 0);
    assert_eq!(t_off.climber_load_cuts, 0);
    let t_on = run(&model_of(&demo()), 3000, 5, 2);
    assert!(t_on.climber_load_cuts > 0);
    assert!(t_on.losses_by_cause[3] > 0);
}

/// The demo with a preventive-replacement policy that acts often (low threshold, periodic
/// inspections of the lowest bays), climber load off, as a JSON value.
fn demo_with_policy() -> Value {
    let mut v: Value = serde_json::from_str(tether_risk::scenario::DEMO_SCENARIO_JSON).unwrap();
    v["repair"]["preventive_replacement"] = json!({
        "threshold": {"kind": "fraction_of_next_critical", "fraction": 0.5},
        "inspection_interval_days": 90.0,
        "inspection_lowest_km": 500.0
    });
    v
}

#[test]
fn paired_run_margins_are_the_two_plain_runs() {
    // Independent answer: each variant's margin of the paired table must be, bit for bit, the
    // plain run of that variant alone (same seed, same per-history streams), and the paired
    // counts must not depend on the thread count.
    let with_v = demo_with_policy();
    let mut without_v = with_v.clone();
    without_v["repair"]
        .as_object_mut()
        .unwrap()
        .remove("preventive_replacement");
    let (mw, mo) = (model_of(&with_v), model_of(&without_v));
    let (ew, eo) = (
        Engine::new(&mw, 1.0).unwrap(),
        Engine::new(&mo, 1.0).unwrap(),
    );
    let opts = |threads| RunOptions {
        histories: 3000,
        seed: 5,
        threads,
        floor_fraction: 1.0,
        shard: None,
        target_rel_error: None,
    };
    let p1 = ew.run_paired(&eo, &opts(1), None).unwrap();
    let p2 = ew.run_paired(&eo, &opts(2), None).unwrap();
    assert_eq!(p1.counts, p2.counts);
    assert_eq!(p1.first, run(&mw, 3000, 5, 2));
    assert_eq!(p1.second, run(&mo, 3000, 5, 2));
    assert_eq!(p1.counts.losses_first(), p1.first.losses);
    assert_eq!(p1.counts.losses_second(), p1.second.losses);
    assert!(p1.first.repair.preventive_replacements > 0);
    // The same engine against itself: every pair agrees.
    let same = eo.run_paired(&eo, &opts(2), None).unwrap();
    assert_eq!(
        same.counts.lost_only_first + same.counts.lost_only_second,
        0
    );
    assert_eq!(same.counts.lost_in_both, same.second.losses);
}

#[test]
fn compare_policy_writes_the_paired_effect_into_the_folder_and_report() {
    use crate::util::{run as bin, scenario_with, stderr, stdout, temp_dir};
    let file = scenario_with("policy-cli", |v| *v = demo_with_policy());
    let out = temp_dir("policy-cli-out");
    let o = bin(&[
        "simulate",
        file.to_str().unwrap(),
        "--histories",
        "4000",
        "--seed",
        "3",
        "--compare-policy",
        "--out",
        out.to_str().unwrap(),
        "--force",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = stdout(&o);
    assert!(
        text.contains("Preventive-replacement policy, the same 4000 histories"),
        "{text}"
    );
    let s: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let e = &s["policy_effect"];
    assert_eq!(e["run_has_policy"], json!(true));
    assert_eq!(e["histories"], json!(4000));
    // The run in the folder is the variant with the policy: its losses are the margin.
    assert_eq!(e["losses_with_policy"], s["tally"]["losses"]);
    let (lo, hi, d) = (
        e["difference_low"].as_f64().unwrap(),
        e["difference_high"].as_f64().unwrap(),
        e["difference"].as_f64().unwrap(),
    );
    assert!(lo <= d && d <= hi);
    let csv = std::fs::read_to_string(out.join("policy_effect.csv")).unwrap();
    assert!(csv.contains("difference (with - without)"), "{csv}");
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("Would inspection and preventive replacement help?"));
}

#[test]
fn compare_policy_is_refused_before_the_run_without_a_policy_or_with_latent_bias() {
    use crate::util::{run as bin, scenario_with, stderr, temp_dir};
    let plain = scenario_with("policy-none", |_| {});
    let out = temp_dir("policy-none-out");
    let o = bin(&[
        "simulate",
        plain.to_str().unwrap(),
        "--compare-policy",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        stderr(&o).contains("repair.preventive_replacement"),
        "{}",
        stderr(&o)
    );
    assert!(!out.join("summary.json").exists(), "refused before running");
    let with = scenario_with("policy-bias", |v| *v = demo_with_policy());
    let o = bin(&[
        "simulate",
        with.to_str().unwrap(),
        "--compare-policy",
        "--latent-bias",
        "0.5",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("plain Monte Carlo"), "{}", stderr(&o));
}

//! Trade studies through the real binary and the library: files and their contracts,
//! infeasible points, input errors, common random numbers, and the Pareto front.

use crate::util::*;
use serde_json::Value;
use tether_risk::sweep::{run_sweep, SweepResult, SweepSettings, SweepSpec};

fn demo_value() -> Value {
    serde_json::from_str(DEMO).unwrap()
}

fn settings(histories: u64) -> SweepSettings {
    SweepSettings {
        run: tether_risk::engine::RunChoices {
            histories: Some(histories),
            ..Default::default()
        },
        ..SweepSettings::default()
    }
}

fn sweep_lib(base: &Value, vary: &[&str], histories: u64) -> SweepResult {
    run_sweep(base, &SweepSpec::parse(vary).unwrap(), &settings(histories)).unwrap()
}

#[test]
fn two_by_two_demo_sweep_writes_every_file_and_is_reproducible() {
    let dir = temp_dir("sweep-2x2");
    let out = dir.join("out");
    let args = |threads: &'static str| {
        vec![
            "sweep".to_string(),
            "demo".into(),
            "--vary".into(),
            "tether.cross_link_spacing_km=25,50".into(),
            "--vary".into(),
            "tether.ribbon_count=4,6".into(),
            "--histories".into(),
            "500".into(),
            "--threads".into(),
            threads.into(),
            "--out".into(),
            out.to_str().unwrap().into(),
        ]
    };
    let a1 = args("1");
    let o = run(&a1.iter().map(String::as_str).collect::<Vec<_>>());
    assert!(o.status.success(), "{}", stderr(&o));
    let text = stdout(&o);
    assert!(text.contains("Pareto front"), "{text}");
    assert!(text.contains("engineering estimates"), "{text}");
    for f in [
        "sweep.json",
        "sweep.csv",
        "sweep.md",
        "heatmap.png",
        "heatmap.svg",
        "pareto.png",
        "pareto.svg",
    ] {
        assert!(out.join(f).is_file(), "missing {f}");
    }
    let first = std::fs::read(out.join("sweep.json")).unwrap();
    let v: Value = serde_json::from_slice(&first).unwrap();
    for key in [
        "version",
        "seed",
        "histories",
        "scenario_hash",
        "axes",
        "caution",
        "pareto_front",
    ] {
        assert!(!v[key].is_null(), "sweep.json lacks {key}");
    }
    assert_eq!(v["histories"], 500);
    let points = v["points"].as_array().unwrap();
    assert_eq!(points.len(), 4);
    for p in points {
        for key in [
            "values",
            "feasible",
            "loss_probability",
            "cuts_per_year",
            "stations",
            "masses",
            "payload_to_heaviest_segment",
            "min_intact_margin",
            "on_pareto_front",
        ] {
            assert!(p.get(key).is_some(), "point lacks {key}: {p}");
        }
        assert_eq!(p["feasible"], true, "{p}");
        for key in ["estimate", "ci_low", "ci_high"] {
            assert!(p["loss_probability"][key].is_f64(), "{p}");
        }
        let m = &p["masses"];
        let sum: f64 = [
            "ribbon_kg",
            "cross_links_kg",
            "spare_stock_kg",
            "climbers_kg",
            "counterweight_kg",
        ]
        .iter()
        .map(|k| m[k].as_f64().unwrap())
        .sum();
        let total = m["total_kg"].as_f64().unwrap();
        assert!((sum - total).abs() <= 1e-9 * total, "{m}");
        let stations = p["stations"].as_array().unwrap();
        assert_eq!(stations.len(), 2);
        assert!(stations[0]["recommended_initial_stock_segments"].is_u64());
        assert!(stations[0]["spare_demand_mission_p95_segments"].is_u64());
    }
    // Integer fields stay integers, real fields reals.
    assert_eq!(points[1]["values"][1], 6);
    assert!(points[1]["values"][0].is_f64());
    let csv = std::fs::read_to_string(out.join("sweep.csv")).unwrap();
    assert_eq!(csv.lines().count(), 5, "{csv}");
    assert!(csv.starts_with("index,tether.cross_link_spacing_km,tether.ribbon_count,feasible"));
    let md = std::fs::read_to_string(out.join("sweep.md")).unwrap();
    assert!(md.contains("| :--- |"), "{md}");
    assert!(std::fs::read(out.join("heatmap.png"))
        .unwrap()
        .starts_with(b"\x89PNG"));

    // Existing results are kept without --force.
    let o = run(&a1.iter().map(String::as_str).collect::<Vec<_>>());
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("--force"));
    // Same inputs at another thread count: the same bytes.
    let mut a2 = args("2");
    a2.push("--force".into());
    let o = run(&a2.iter().map(String::as_str).collect::<Vec<_>>());
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(
        std::fs::read(out.join("sweep.json")).unwrap() == first,
        "sweep.json differs between runs"
    );
}

#[test]
fn infeasible_points_are_reported_not_fatal() {
    let base = demo_value();
    // Payload 1 kg cannot carry a demo segment (tens of kg); taper none cannot hold the
    // ribbon's own weight up to L1 (README: PBO breaking length is far below the lunar
    // gravity-equivalent length to L1).
    let r = sweep_lib(
        &base,
        &[
            "repair.climber.payload_kg=400,1",
            "tether.taper=constant_stress,none",
        ],
        300,
    );
    assert_eq!(r.points.len(), 4);
    let ok = r.point_at(&[0, 0]).unwrap();
    assert!(ok.feasible && ok.loss_probability.is_some(), "{ok:?}");
    let payload = r.point_at(&[1, 0]).unwrap();
    assert!(!payload.feasible);
    assert!(
        payload.loss_probability.is_none(),
        "infeasible points are not simulated"
    );
    let why = payload.reason.as_deref().unwrap();
    assert!(why.contains("payload_kg"), "{why}");
    // Masses and the payload flag are still known: payload / heaviest segment below 1.
    assert!(payload.payload_to_heaviest_segment.unwrap() < 1.0);
    let taper = r.point_at(&[0, 1]).unwrap();
    assert!(!taper.feasible);
    assert!(
        taper.reason.as_deref().unwrap().contains("own weight"),
        "{:?}",
        taper.reason
    );
    assert!(!r.pareto_front.contains(&payload.index));
    assert!(!r.pareto_front.contains(&taper.index));
    assert_eq!(r.pareto_front, vec![ok.index]);

    // The binary reports them too and succeeds.
    let dir = temp_dir("sweep-infeasible");
    let o = run(&[
        "sweep",
        "demo",
        "--vary",
        "repair.climber.payload_kg=1",
        "--histories",
        "100",
        "--out",
        dir.join("o").to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stdout(&o).contains("Infeasible designs"), "{}", stdout(&o));
}

#[test]
fn bad_paths_values_and_grids_are_refused() {
    let dir = temp_dir("sweep-bad");
    let out = dir.join("o");
    let out = out.to_str().unwrap();
    let o = run(&[
        "sweep",
        "demo",
        "--vary",
        "tether.cross_link_spacing=25,50",
        "--out",
        out,
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        stderr(&o).contains("did you mean `tether.cross_link_spacing_km`"),
        "{}",
        stderr(&o)
    );
    let o = run(&[
        "sweep",
        "demo",
        "--vary",
        "tether.ribbon_count=4.5",
        "--out",
        out,
    ]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(
        e.contains("tether.ribbon_count") && e.contains("4.5") && e.contains("whole number"),
        "{e}"
    );
    // Out of the validated range: the scenario's own message, naming path, value and range.
    let o = run(&[
        "sweep",
        "demo",
        "--vary",
        "tether.ribbon_count=0",
        "--out",
        out,
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("tether.ribbon_count"), "{}", stderr(&o));
    let o = run(&["sweep", "demo", "--vary", "run.seed=1,2", "--out", out]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("--seed"), "{}", stderr(&o));
    // 15 x 14 = 210 points > 200.
    let a: Vec<String> = (1..=15).map(|i| i.to_string()).collect();
    let b: Vec<String> = (1..=14).map(|i| (i * 10).to_string()).collect();
    let va = format!("tether.ribbon_count={}", a.join(","));
    let vb = format!("tether.cross_link_spacing_km={}", b.join(","));
    let o = run(&["sweep", "demo", "--vary", &va, "--vary", &vb, "--out", out]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(e.contains("210 points") && e.contains("at most 200"), "{e}");
    assert!(!std::path::Path::new(out).join("sweep.json").exists());
}

#[test]
fn common_random_numbers_give_identical_counts_when_physics_is_unchanged() {
    // run.confidence changes only the interval, not the histories: with one seed for every
    // point the loss counts must be identical, and equal to a plain `simulate` run of the
    // base scenario at the same seed and history count (an independent path through the CLI).
    let r = sweep_lib(&demo_value(), &["run.confidence=0.9,0.95"], 1000);
    let (a, b) = (&r.points[0], &r.points[1]);
    assert_eq!(a.losses, b.losses);
    let (la, lb) = (
        a.loss_probability.clone().unwrap(),
        b.loss_probability.clone().unwrap(),
    );
    assert_eq!(la.estimate, lb.estimate);
    assert_eq!(
        a.cuts_per_year.unwrap().estimate,
        b.cuts_per_year.unwrap().estimate
    );
    // The field was applied: the 90 % interval sits inside the 95 % one.
    assert_eq!(la.confidence, 0.9);
    assert!(la.ci_high < lb.ci_high, "{la:?} {lb:?}");

    let dir = temp_dir("sweep-crn-sim");
    let o = run(&[
        "simulate",
        "demo",
        "--histories",
        "1000",
        "--out",
        dir.join("o").to_str().unwrap(),
        "--format",
        "json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let s: Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(s["tally"]["losses"].as_u64(), b.losses);
    assert_eq!(
        s["loss_probability"]["estimate"].as_f64(),
        Some(lb.estimate)
    );
}

#[test]
fn more_flux_never_lowers_the_loss_count_without_repair() {
    // Without repair and with common random numbers, scaling the flux by 10 scales every
    // strike gap by 1/10 and leaves every other draw unchanged (same stream, same per-bay
    // probabilities), so each history sees its 1x strikes, in order, plus later ones; damage
    // only accumulates, so every history lost at 1x is also lost at 10x. The loss count can
    // therefore not decrease (an exact consequence, not a statistical one). The base is 3x the
    // demo flux so that 500 histories hold some losses.
    let mut base = demo_value();
    base["repair"] = Value::Null;
    let r = sweep_lib(&base, &["environment.flux_scale_factor=3,30"], 500);
    let l1 = r.points[0].losses.unwrap();
    let l10 = r.points[1].losses.unwrap();
    assert!(l1 > 0, "the check needs some losses at 3x to mean anything");
    assert!(l10 >= l1, "{l1} losses at 3x but {l10} at 30x");
}

#[test]
fn pareto_front_marks_hand_checked_points() {
    // Source: hand-made case, checked by the definition of dominance (both minimised).
    // (mass kg, loss): #0 (10, 0.5) front; #1 (20, 0.1) front; #2 (15, 0.6) dominated by #0;
    // #3 (30, 0.1) dominated by #1 (same loss, heavier); #4 (5, 0.0) would dominate all but is
    // infeasible, so it is ignored; #5 (40, 0.0) saw no loss: its probability is unknown (only
    // an upper bound), so it is not ranked at all rather than put on the front as zero.
    let mut r = sweep_lib(&demo_value(), &["run.confidence=0.95"], 100);
    let template = r.points[0].clone();
    let cases = [
        (10.0, 0.5, true),
        (20.0, 0.1, true),
        (15.0, 0.6, true),
        (30.0, 0.1, true),
        (5.0, 0.0, false),
        (40.0, 0.0, true),
    ];
    r.points = cases
        .iter()
        .enumerate()
        .map(|(i, &(m, l, feasible))| {
            let mut p = template.clone();
            p.index = i;
            p.feasible = feasible;
            p.masses.as_mut().unwrap().total_kg = m;
            let lp = p.loss_probability.as_mut().unwrap();
            lp.estimate = l;
            lp.effective_sample_size = if l > 0.0 { 10.0 } else { 0.0 };
            p
        })
        .collect();
    r.mark_pareto_front();
    assert_eq!(r.pareto_front, vec![0, 1]);
    let marked: Vec<bool> = r.points.iter().map(|p| p.on_pareto_front).collect();
    assert_eq!(marked, vec![true, true, false, false, false, false]);
    assert_eq!(r.unknown_points(), vec![4, 5]);
    assert!(r.points[5]
        .unknown_reason
        .as_deref()
        .unwrap()
        .contains("no loss"));
}

fn sweep_json(args: &[&str]) -> Value {
    let o = run(args);
    assert!(o.status.success(), "{}", stderr(&o));
    serde_json::from_str(&stdout(&o)).unwrap()
}

/// Check `not_distinguishable_from` against the intervals themselves: j is listed for i exactly
/// when both are simulated and their intervals overlap (or one has no interval).
fn check_distinguishability(v: &Value) {
    let pts = v["points"].as_array().unwrap();
    let iv = |p: &Value| -> Option<Option<(f64, f64)>> {
        let l = p.get("loss_probability").filter(|l| !l.is_null())?;
        Some(
            match (
                l["ci_low"].as_f64(),
                l["ci_high"].as_f64(),
                l["resolved"].as_bool(),
            ) {
                (Some(a), Some(b), Some(true)) => Some((a, b)),
                _ => None,
            },
        )
    };
    for (i, p) in pts.iter().enumerate() {
        let listed: Vec<usize> = p["not_distinguishable_from"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_u64().unwrap() as usize)
            .collect();
        for (j, q) in pts.iter().enumerate() {
            if i == j {
                continue;
            }
            let expect = match (iv(p), iv(q)) {
                (Some(Some((a0, a1))), Some(Some((b0, b1)))) => a0 <= b1 && b0 <= a1,
                (Some(_), Some(_)) => true,
                _ => false,
            };
            assert_eq!(listed.contains(&j), expect, "points {i} and {j}: {p} {q}");
        }
    }
}

#[test]
fn sweep_without_losses_ranks_nothing_and_says_so() {
    // 150 demo histories per design: with a loss probability near 4e-4 both designs almost
    // surely see no loss. A zero count is not a zero probability: the Clopper–Pearson upper
    // bound for 0 events in n trials is 1 - (alpha/2)^(1/n) (Clopper & Pearson 1934, the
    // closed form of the zero-event case), and the designs must be reported as unknown, the
    // front empty, and no design recommended.
    let dir = temp_dir("sweep-unknown");
    let out = dir.join("out");
    let v = sweep_json(&[
        "sweep",
        "demo",
        "--vary",
        "tether.cross_link_spacing_km=25,50",
        "--histories",
        "150",
        "--out",
        out.to_str().unwrap(),
        "--format",
        "json",
    ]);
    let pts = v["points"].as_array().unwrap();
    assert!(
        pts.iter().all(|p| p["losses"] == 0),
        "the check needs zero losses: {v}"
    );
    let bound = 1.0 - 0.025f64.powf(1.0 / 150.0);
    for p in pts {
        assert_eq!(p["loss_known"], false, "{p}");
        assert_eq!(p["on_pareto_front"], false, "{p}");
        assert!(
            p["unknown_reason"]
                .as_str()
                .unwrap()
                .contains("no loss seen"),
            "{p}"
        );
        let hi = p["loss_probability"]["ci_high"].as_f64().unwrap();
        assert!((hi - bound).abs() < 1e-9, "{hi} vs {bound}");
    }
    assert_eq!(v["pareto_front"].as_array().unwrap().len(), 0);
    check_distinguishability(&v);
    // Two zero-loss designs share the interval [0, bound]: not distinguishable.
    assert_eq!(pts[0]["not_distinguishable_from"], serde_json::json!([1]));
    let md = std::fs::read_to_string(out.join("sweep.md")).unwrap();
    assert!(
        md.contains("no design has a known loss probability"),
        "{md}"
    );
    assert!(md.contains("not distinguishable from"), "{md}");
    assert!(md.contains("unknown"), "{md}");
    let csv = std::fs::read_to_string(out.join("sweep.csv")).unwrap();
    let header: Vec<&str> = csv.lines().next().unwrap().split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let row: Vec<&str> = csv.lines().nth(1).unwrap().split(',').collect();
    assert_eq!(row[col("loss_known")], "false");
    assert_eq!(row[col("not_distinguishable_from")], "1");
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("no design has a known loss probability"));
}

#[test]
fn sweep_honours_target_relative_error_per_point() {
    // With --target-rel-error each design stops at the first chunk boundary where the
    // relative standard error of its loss probability is at most the target. For plain
    // Monte Carlo that error is sqrt((1 - p) / (n p)) with p = k / n (binomial standard error
    // over the estimate), recomputed here from each point's own counts.
    let v = sweep_json(&[
        "sweep",
        "demo",
        "--vary",
        "environment.flux_scale_factor=20,60",
        "--histories",
        "200000",
        "--target-rel-error",
        "0.2",
        "--threads",
        "2",
        "--out",
        temp_dir("sweep-target").join("out").to_str().unwrap(),
        "--format",
        "json",
    ]);
    assert_eq!(v["target_rel_error"], 0.2);
    for p in v["points"].as_array().unwrap() {
        let n = p["histories_run"].as_u64().unwrap();
        let k = p["losses"].as_u64().unwrap();
        assert!(n < 200_000, "the target should stop the point early: {p}");
        assert_eq!(p["target_met"], true, "{p}");
        let est = k as f64 / n as f64;
        assert!((p["loss_probability"]["estimate"].as_f64().unwrap() - est).abs() < 1e-15);
        let rel = ((1.0 - est) / (n as f64 * est)).sqrt();
        let reported = p["relative_error"].as_f64().unwrap();
        assert!(reported <= 0.2, "{p}");
        assert!((reported - rel).abs() <= 1e-9 * rel, "{reported} vs {rel}");
        assert_eq!(p["loss_known"], true, "{p}");
    }
    check_distinguishability(&v);
}

#[test]
fn weighted_sweep_points_without_resolution_are_unknown() {
    // A rare-event sweep with few histories: the weighted estimates are not resolved (ESS
    // under 100), so no interval, no Clopper–Pearson label, and no ranking.
    let dir = temp_dir("sweep-weighted");
    let out = dir.join("out");
    let o = run(&[
        "sweep",
        "demo",
        "--vary",
        "tether.ribbon_count=4,6",
        "--histories",
        "300",
        "--rare-event",
        "30",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = stdout(&o);
    assert!(!text.contains("Clopper"), "{text}");
    let v: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("sweep.json")).unwrap()).unwrap();
    for p in v["points"].as_array().unwrap() {
        let l = &p["loss_probability"];
        assert_eq!(l["method"], "weighted", "{p}");
        if l["resolved"] == false {
            assert_eq!(p["loss_known"], false, "{p}");
            assert_eq!(p["on_pareto_front"], false, "{p}");
            assert!(
                p["unknown_reason"]
                    .as_str()
                    .unwrap()
                    .contains("not resolved"),
                "{p}"
            );
            assert!(text.contains("not resolved"), "{text}");
        }
    }
    check_distinguishability(&v);
}

#[test]
fn climber_sweep_shows_fleet_mass_and_cost_under_the_station_name() {
    // Climbers carry mass: total_kg differs between fleets by (difference in climbers) x
    // repair.climber.mass_kg, and fleet_cost = climbers x unit_cost (arithmetic of the
    // definitions; 300 kg is the documented default climber mass, an engineering assumption).
    let p = scenario_with("sweep-climbers", |v| {
        v["repair"]["climber"]["unit_cost"] = serde_json::json!(2.5);
    });
    let dir = temp_dir("sweep-climbers-out");
    let v = sweep_json(&[
        "sweep",
        p.to_str().unwrap(),
        "--vary",
        "repair.stations[0].climbers=1,3",
        "--histories",
        "200",
        "--out",
        dir.join("out").to_str().unwrap(),
        "--format",
        "json",
    ]);
    assert_eq!(v["axes"][0]["name"], "base climbers");
    let pts = v["points"].as_array().unwrap();
    assert_eq!(pts[0]["label"], "base climbers=1");
    // Station 1 (l1-station) keeps its 1 climber.
    assert_eq!(pts[0]["climbers"], 2);
    assert_eq!(pts[1]["climbers"], 4);
    let m = |i: usize, k: &str| pts[i]["masses"][k].as_f64().unwrap();
    assert_eq!(m(0, "climbers_kg"), 600.0);
    assert_eq!(m(1, "climbers_kg"), 1200.0);
    assert!((m(1, "total_kg") - m(0, "total_kg") - 600.0).abs() < 1e-6);
    assert_eq!(pts[0]["fleet_cost"], 5.0);
    assert_eq!(pts[1]["fleet_cost"], 10.0);
    let md = std::fs::read_to_string(dir.join("out").join("sweep.md")).unwrap();
    assert!(md.contains("base climbers"), "{md}");
    assert!(md.contains("fleet cost"), "{md}");
    assert!(!md.contains("stations[0]"), "{md}");
}

#[test]
fn fleet_recommendation_is_the_smallest_fleet_within_tolerance_of_the_largest() {
    // Definition (stated in the sweep documentation): the smallest fleet whose known loss
    // probability is at most 1.1 x that of the largest fleet swept. Recomputed here from the
    // points' own estimates. High flux so that every fleet sees losses.
    let p = scenario_with("sweep-fleet", |v| {
        v["environment"]["flux_scale_factor"] = serde_json::json!(40.0);
    });
    let v = sweep_json(&[
        "sweep",
        p.to_str().unwrap(),
        "--vary",
        "repair.stations[0].climbers=1,2,4",
        "--histories",
        "2000",
        "--out",
        temp_dir("sweep-fleet-out").join("out").to_str().unwrap(),
        "--format",
        "json",
    ]);
    let pts = v["points"].as_array().unwrap();
    let est = |i: usize| pts[i]["loss_probability"]["estimate"].as_f64().unwrap();
    assert!(
        pts.iter().all(|p| p["loss_known"] == true),
        "needs losses: {v}"
    );
    let recs = v["fleet_recommendations"].as_array().unwrap();
    assert_eq!(recs.len(), 1);
    let r = &recs[0];
    assert_eq!(r["station"], "base");
    assert_eq!(r["reference_point"], 2);
    let expect = (0..3).find(|&i| est(i) <= 1.1 * est(2)).unwrap();
    assert_eq!(r["recommended_point"], expect);
    assert_eq!(r["recommended_climbers"], [1, 2, 4][expect]);
}

#[test]
fn fleet_for_a_time_to_splice_requirement_is_the_smallest_meeting_it() {
    // Definition (repair.splice_p90_target_hours in the README): the smallest fleet swept
    // whose P90 time from cut to splice is at most the requirement. Recomputed here from the
    // points' own percentiles, with the requirement set between the largest and the smallest
    // fleet's P90 so that the answer is neither end by construction. High flux so that
    // climbers queue.
    let base = scenario_with("sweep-p90", |v| {
        v["environment"]["flux_scale_factor"] = serde_json::json!(40.0);
    });
    let args = |file: &std::path::Path, out: &str| {
        vec![
            "sweep".to_string(),
            file.to_str().unwrap().to_string(),
            "--vary".into(),
            "repair.stations[0].climbers=1,2,4".into(),
            "--histories".into(),
            "1000".into(),
            "--out".into(),
            temp_dir(out).join("out").to_str().unwrap().to_string(),
            "--format".into(),
            "json".into(),
        ]
    };
    let a = args(&base, "sweep-p90-a");
    let v = sweep_json(&a.iter().map(String::as_str).collect::<Vec<_>>());
    let p90 = |v: &serde_json::Value, i: usize| {
        v["points"][i]["time_to_splice_p90_hours"].as_f64().unwrap()
    };
    let (small, large) = (p90(&v, 0), p90(&v, 2));
    assert!(
        small > large,
        "more climbers, shorter P90: {small} vs {large}"
    );
    assert!(v["fleet_recommendations"][0]["splice_target_basis"] == "");
    let target = 0.5 * (small + large);
    let with_target = scenario_with("sweep-p90-t", |v| {
        v["environment"]["flux_scale_factor"] = serde_json::json!(40.0);
        v["repair"]["splice_p90_target_hours"] = serde_json::json!(target);
    });
    let b = args(&with_target, "sweep-p90-b");
    let w = sweep_json(&b.iter().map(String::as_str).collect::<Vec<_>>());
    let expect = (0..3).find(|&i| p90(&w, i) <= target).unwrap();
    assert!(expect > 0);
    let r = &w["fleet_recommendations"][0];
    assert_eq!(r["meets_splice_target_point"], expect);
    assert_eq!(r["meets_splice_target_climbers"], [1, 2, 4][expect]);
    assert_eq!(r["splice_p90_target_hours"].as_f64(), Some(target));
}

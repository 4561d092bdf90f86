//! `tether-risk compare DIR1 DIR2 ...` (issue 14 item 2), through the binary: two demo
//! variants side by side, the difference of loss probabilities with its interval, refusal of an
//! incomplete folder, and "not resolved" for an unresolved weighted run.

use std::path::{Path, PathBuf};

use serde_json::Value;

use crate::util::*;

fn simulate(scenario: &str, dir: &Path, extra: &[&str]) {
    let mut args = vec![
        "simulate",
        scenario,
        "--threads",
        "2",
        "--out",
        dir.to_str().unwrap(),
    ];
    args.extend_from_slice(extra);
    let o = run(&args);
    assert!(o.status.success(), "{}", stderr(&o));
}

/// Wilson score interval, z = 1.959964 (Wilson 1927, JASA 22:209; the two-sided 95 % normal
/// quantile from any statistics table).
fn wilson(k: f64, n: f64) -> (f64, f64) {
    let z = 1.959_963_984_540_054_f64;
    let p = k / n;
    let d = 1.0 + z * z / n;
    let c = (p + z * z / (2.0 * n)) / d;
    let h = z / d * (p * (1.0 - p) / n + z * z / (4.0 * n * n)).sqrt();
    (c - h, c + h)
}

/// Newcombe (1998), Stat. Med. 17:873, method 10, written out from the paper's formula
/// (independent of the library, whose own test checks the paper's Table II).
fn newcombe(k1: f64, n1: f64, k2: f64, n2: f64) -> (f64, f64) {
    let (p1, p2) = (k1 / n1, k2 / n2);
    let (l1, u1) = wilson(k1, n1);
    let (l2, u2) = wilson(k2, n2);
    let d = p1 - p2;
    (
        d - ((p1 - l1).powi(2) + (u2 - p2).powi(2)).sqrt(),
        d + ((u1 - p1).powi(2) + (p2 - l2).powi(2)).sqrt(),
    )
}

fn json(p: &Path) -> Value {
    serde_json::from_str(&std::fs::read_to_string(p).unwrap()).unwrap()
}

#[test]
fn issue14_compare_two_demo_variants() {
    let root = temp_dir("compare-two");
    let base = root.join("baseline");
    let hot = root.join("hot-flux");
    // The variant sees 30 times the demo's flux, so it is lost far more often: the
    // difference must be resolved and distinguishable. Different seeds make the runs
    // independent, as the interval assumes.
    let hot_scenario = scenario_with("compare-hot", |v| {
        v["name"] = "hot flux <x30>".into();
        v["environment"]["flux_scale_factor"] = 30.0.into();
    });
    simulate("demo", &base, &["--histories", "1000"]);
    simulate(
        hot_scenario.to_str().unwrap(),
        &hot,
        &["--histories", "800", "--seed", "7"],
    );
    let out = root.join("cmp");
    let o = run(&[
        "compare",
        base.to_str().unwrap(),
        hot.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = stdout(&o);
    assert!(
        text.contains("distinguishable: hot-flux has a higher loss probability than baseline"),
        "{text}"
    );
    for f in [
        "compare.html",
        "compare.json",
        "compare.csv",
        "compare.md",
        "survival.png",
        "survival.svg",
    ] {
        assert!(out.join(f).is_file(), "compare did not write {f}");
    }
    let png = std::fs::read(out.join("survival.png")).unwrap();
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");

    // The difference is design minus baseline with Newcombe's interval on the two counts.
    let c = json(&out.join("compare.json"));
    let s0 = json(&base.join("summary.json"));
    let s1 = json(&hot.join("summary.json"));
    let k0 = s0["tally"]["losses"].as_f64().unwrap();
    let k1 = s1["tally"]["losses"].as_f64().unwrap();
    assert!(
        k1 > 100.0,
        "the hot variant should lose many histories, lost {k1}"
    );
    let (lo, hi) = newcombe(k1, 800.0, k0, 1000.0);
    let d = &c["differences"][0];
    assert_eq!(d["design"], "hot-flux");
    assert_eq!(d["baseline"], "baseline");
    assert!((d["difference"].as_f64().unwrap() - (k1 / 800.0 - k0 / 1000.0)).abs() < 1e-12);
    assert!((d["ci_low"].as_f64().unwrap() - lo).abs() < 1e-9, "{d}");
    assert!((d["ci_high"].as_f64().unwrap() - hi).abs() < 1e-9, "{d}");
    assert_eq!(d["resolved"], true);
    assert_eq!(d["distinguishable"], true);
    assert!(d["method"].as_str().unwrap().contains("Newcombe"));
    // Key figures carry the scenario names (escaped in every format) and intervals.
    assert_eq!(c["designs"][1]["scenario"], "hot flux <x30>");
    let html = std::fs::read_to_string(out.join("compare.html")).unwrap();
    assert!(html.contains("hot flux &lt;x30&gt;") && !html.contains("<x30>"));
    assert!(html.contains("<svg") && html.contains("Is the difference real?"));
    let csv = std::fs::read_to_string(out.join("compare.csv")).unwrap();
    assert!(csv.starts_with("design,folder,scenario,"));
    assert_eq!(csv.lines().count(), 3, "{csv}");
    let md = std::fs::read_to_string(out.join("compare.md")).unwrap();
    assert!(
        md.contains("hot flux \\<x30\\>") || md.contains("hot flux &lt;x30&gt;"),
        "{md}"
    );
}

#[test]
fn issue14_compare_refuses_incomplete_and_reports_unresolved() {
    let root = temp_dir("compare-refuse");
    let base = root.join("baseline");
    simulate("demo", &base, &["--histories", "400"]);
    // A rare-event run of 300 histories sees no weighted loss: not resolved.
    let weighted = root.join("weighted");
    simulate(
        "demo",
        &weighted,
        &["--histories", "300", "--rare-event", "100", "--seed", "5"],
    );
    let out = root.join("cmp");
    let o = run(&[
        "compare",
        base.to_str().unwrap(),
        weighted.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--format",
        "json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let c: Value = serde_json::from_str(&stdout(&o)).unwrap();
    let d = &c["differences"][0];
    if c["designs"][1]["loss_probability"]["resolved"] == false {
        assert_eq!(d["resolved"], false);
        assert!(d["ci_low"].is_null() && d["distinguishable"].is_null());
        assert!(d["verdict"].as_str().unwrap().starts_with("not resolved"));
    }
    // Without its manifest a folder is refused (exit 2), naming the folder.
    let broken: PathBuf = root.join("broken");
    simulate("demo", &broken, &["--histories", "200"]);
    std::fs::remove_file(broken.join("manifest.json")).unwrap();
    let o = run(&[
        "compare",
        base.to_str().unwrap(),
        broken.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    let e = stderr(&o);
    assert!(e.contains("incomplete") && e.contains("broken"), "{e}");
    // One folder is not a comparison; the output folder may not be an input.
    let o = run(&["compare", base.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    let o = run(&[
        "compare",
        base.to_str().unwrap(),
        weighted.to_str().unwrap(),
        "--out",
        base.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
}

//! Determinism: the same scenario, seed and version give bit-identical summaries at any thread
//! count and shard split (DEVELOPERS.md, "Random streams"), and the demo's summary matches a
//! golden file at fixed significant digits.
//!
//! Interruption and resume are covered in robust.rs
//! (`sigint_then_resume_equals_uninterrupted_run`, `sigterm_then_resume_equals_uninterrupted_run`).
//!
//! The golden file `tests/golden/demo_summary.txt` is a regression record, not an independent
//! answer: it pins the demo's numbers so that an unintended change of the sampler, the physics or
//! the estimators shows up as a readable diff. After an intended change, rewrite it with
//!
//! ```sh
//! UPDATE_GOLDEN=1 cargo test --release --test integration determinism::golden
//! ```
//!
//! and say in the commit message why the numbers moved.

use std::path::Path;

use serde_json::Value;
use tether_risk::engine::{Engine, RunOptions, RunSummary, Sampler, Tally};
use tether_risk::model::Model;

use crate::util::*;

/// Run `simulate SCENARIO` with `extra` into a fresh folder; return summary.json's bytes.
fn summary_of(scenario: &str, name: &str, extra: &[&str]) -> Vec<u8> {
    let out = temp_dir(name).join("run");
    let mut args = vec!["simulate", scenario, "--out", out.to_str().unwrap()];
    args.extend_from_slice(extra);
    let o = run(&args);
    assert_eq!(o.status.code(), Some(0), "{name}: {}", stderr(&o));
    std::fs::read(out.join("summary.json")).unwrap()
}

fn summary_bytes(name: &str, extra: &[&str]) -> Vec<u8> {
    summary_of("demo", name, extra)
}

/// The demo with a five-year mission (cheaper histories, same physics and repair logistics).
fn five_years() -> &'static str {
    static P: std::sync::OnceLock<String> = std::sync::OnceLock::new();
    P.get_or_init(|| {
        scenario_with("det-five-years", |v| v["run"]["mission_years"] = 5.0.into())
            .to_str()
            .unwrap()
            .to_string()
    })
}

#[test]
fn thread_counts_give_identical_summaries() {
    for (sampler, histories) in [("on-demand", "20000"), ("every-strike", "3000")] {
        let common = [
            "--histories",
            histories,
            "--seed",
            "11",
            "--sampler",
            sampler,
        ];
        let one = summary_bytes(
            &format!("det-threads-1-{sampler}"),
            &[&common[..], &["--threads", "1"]].concat(),
        );
        let two = summary_bytes(
            &format!("det-threads-2-{sampler}"),
            &[&common[..], &["--threads", "2"]].concat(),
        );
        assert!(
            one == two,
            "{sampler}: summary.json differs between 1 and 2 threads"
        );
        let v: Value = serde_json::from_slice(&one).unwrap();
        assert_eq!(v["sampler"], sampler);
        assert!(
            v["tally"]["cuts"].as_u64().unwrap() > 0,
            "{sampler}: the run cuts"
        );
        if sampler == "every-strike" {
            assert!(
                v["tally"]["strikes"].as_u64().unwrap() > 0,
                "the run samples strikes"
            );
        }
    }
}

/// Through the library: three shards merged, summarised, equal the whole run exactly.
#[test]
fn three_shards_merged_equal_the_whole_run() {
    let mut sc = tether_risk::scenario::demo();
    sc.run.mission_years = 5.0;
    sc.run.mission_s = 5.0 * tether_risk::scenario::SECONDS_PER_YEAR;
    let model = Model::build(sc).unwrap();
    for sampler in [Sampler::OnDemand, Sampler::EveryStrike] {
        three_shards_for(&model, sampler);
    }
}

fn three_shards_for(model: &Model, sampler: Sampler) {
    let engine = Engine::with_sampler(model, 1.0, sampler).unwrap();
    let opts = |shard| RunOptions {
        histories: 7_500,
        seed: 5,
        threads: 2,
        floor_fraction: 1.0,
        shard,
        target_rel_error: None,
    };
    let whole = engine.run(&opts(None), &|_| {}).unwrap();
    let mut merged = engine.empty_tally();
    for i in 0..3 {
        let part = engine.run(&opts(Some((i, 3))), &|_| {}).unwrap();
        assert!(part.histories > 0 && part.histories < 7_500, "shard {i}");
        merged.merge(&part);
    }
    assert_eq!(merged, whole);
    let s_whole = RunSummary::from_tally(&engine, whole, 7_500, 5, None, 0.05);
    let s_merged = RunSummary::from_tally(&engine, merged, 7_500, 5, None, 0.05);
    assert_eq!(
        serde_json::to_string(&s_whole).unwrap(),
        serde_json::to_string(&s_merged).unwrap()
    );
}

/// Through the binary: the tallies of `--shard 0/3`, `1/3`, `2/3` add up to the whole run's,
/// and `tether-risk merge` of the three folders writes exactly the whole run's summary.json.
#[test]
fn cli_shards_add_up_to_the_whole_run_and_merge_exactly() {
    let common = ["--histories", "4500", "--seed", "9"];
    let tally = |b: &[u8]| -> Tally {
        let v: Value = serde_json::from_slice(b).unwrap();
        serde_json::from_value(v["tally"].clone()).unwrap()
    };
    let whole_bytes = summary_of(five_years(), "det-shard-whole", &common);
    let whole = tally(&whole_bytes);
    let mut merged: Option<Tally> = None;
    let mut dirs = Vec::new();
    for i in 0..3 {
        let shard = format!("{i}/3");
        let name = format!("det-shard-{i}");
        let part = tally(&summary_of(
            five_years(),
            &name,
            &[&common[..], &["--shard", &shard]].concat(),
        ));
        dirs.push(temp_dir_path(&name).join("run"));
        match merged.as_mut() {
            None => merged = Some(part),
            Some(m) => m.merge(&part),
        }
    }
    assert_eq!(merged.unwrap(), whole);

    let out = temp_dir("det-shard-merged").join("run");
    let mut args = vec!["merge".to_string()];
    args.extend(dirs.iter().map(|d| d.to_str().unwrap().to_string()));
    args.extend(["--out".to_string(), out.to_str().unwrap().to_string()]);
    let o = run(&args.iter().map(String::as_str).collect::<Vec<_>>());
    assert_eq!(o.status.code(), Some(0), "merge: {}", stderr(&o));
    let merged_bytes = std::fs::read(out.join("summary.json")).unwrap();
    if merged_bytes != whole_bytes {
        let (m, w): (Value, Value) = (
            serde_json::from_slice(&merged_bytes).unwrap(),
            serde_json::from_slice(&whole_bytes).unwrap(),
        );
        let keys: Vec<&String> = w
            .as_object()
            .unwrap()
            .keys()
            .filter(|k| m[k.as_str()] != w[k.as_str()])
            .collect();
        panic!("merged summary.json differs from the whole run in: {keys:?}");
    }
}

/// The folder `temp_dir(name)` made (without clearing it).
fn temp_dir_path(name: &str) -> std::path::PathBuf {
    std::env::temp_dir().join(format!("tether-risk-test-{}-{name}", std::process::id()))
}

// ---------------------------------------------------------------------------------------------
// Golden summary of the demo
// ---------------------------------------------------------------------------------------------

const GOLDEN: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/golden/demo_summary.txt");
const GOLDEN_EVERY_STRIKE: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/tests/golden/demo_summary_every_strike.txt"
);

/// Seven significant digits: far above the last-bit noise a platform's `ln`/`exp` could add,
/// far below any change worth noticing.
fn sig(x: f64) -> String {
    format!("{x:.6e}")
}

/// The key numbers of a summary as text, one per line.
fn reduce(s: &Value) -> String {
    let mut o = String::new();
    let mut line = |k: &str, v: String| {
        o.push_str(k);
        o.push(' ');
        o.push_str(&v);
        o.push('\n');
    };
    let num = |v: &Value| sig(v.as_f64().unwrap_or_else(|| panic!("not a number: {v}")));
    for k in ["scenario", "seed", "histories", "mission_years", "status"] {
        line(k, s[k].to_string());
    }
    for k in ["estimate", "ci_low", "ci_high", "confidence"] {
        line(
            &format!("loss_probability.{k}"),
            num(&s["loss_probability"][k]),
        );
    }
    for k in ["estimate", "ci_low", "ci_high"] {
        line(&format!("cuts_per_year.{k}"), num(&s["cuts_per_year"][k]));
    }
    for k in ["mean_cuts", "strikes_per_history", "cascade_cut_fraction"] {
        line(k, num(&s[k]));
    }
    for p in s["survival_by_year"].as_array().unwrap() {
        line(
            &format!("survival year {}", p["year"]),
            format!(
                "{} [{}, {}]",
                num(&p["estimate"]),
                num(&p["ci_low"]),
                num(&p["ci_high"])
            ),
        );
    }
    let c = &s["losses_by_cause"];
    line(
        "losses_by_cause direct/cascade/stockout/climber_load",
        format!(
            "{} {} {} {}",
            c["direct_cut"], c["cascade"], c["stockout_delay"], c["climber_load"]
        ),
    );
    for k in [
        "histories",
        "losses",
        "cuts",
        "strikes",
        "subcritical_holes",
    ] {
        line(&format!("tally.{k}"), s["tally"][k].to_string());
    }
    let r = &s["repair"];
    for k in ["mean", "p50", "p90", "p99"] {
        line(
            &format!("time_to_splice_hours.{k}"),
            num(&r["time_to_splice_hours"][k]),
        );
    }
    line("splices_per_year", num(&r["splices_per_year"]));
    line("climber_utilisation", num(&r["climber_utilisation"]));
    for st in r["recommended_initial_stock"].as_array().unwrap() {
        line(
            &format!("recommended_initial_stock {}", st["station"]),
            st["segments"].to_string(),
        );
    }
    o
}

/// A line diff: lines only in the golden file with `-`, only in the new text with `+`.
fn line_diff(want: &str, got: &str) -> String {
    let (w, g): (Vec<&str>, Vec<&str>) = (want.lines().collect(), got.lines().collect());
    let mut d = String::new();
    for i in 0..w.len().max(g.len()) {
        match (w.get(i), g.get(i)) {
            (Some(a), Some(b)) if a == b => {}
            (a, b) => {
                if let Some(a) = a {
                    d.push_str(&format!("- {a}\n"));
                }
                if let Some(b) = b {
                    d.push_str(&format!("+ {b}\n"));
                }
            }
        }
    }
    d
}

/// The demo (3000 histories, seed 20261202) reduced to key numbers equals the golden file.
/// UPDATE_GOLDEN=1 rewrites the file instead (see the module docs).
#[test]
fn golden_demo_summary() {
    for (sampler, golden) in [("on-demand", GOLDEN), ("every-strike", GOLDEN_EVERY_STRIKE)] {
        let bytes = summary_bytes(
            &format!("det-golden-{sampler}"),
            &[
                "--histories",
                "3000",
                "--seed",
                "20261202",
                "--threads",
                "2",
                "--sampler",
                sampler,
            ],
        );
        let s: Value = serde_json::from_slice(&bytes).unwrap();
        let got = format!(
            "# Key numbers of `tether-risk simulate demo --histories 3000 --seed 20261202 --sampler {sampler}`.\n\
             # Regression record, not a reference: regenerate with UPDATE_GOLDEN=1 (see\n\
             # tests/integration/determinism.rs) and say why the numbers moved.\n{}",
            reduce(&s)
        );
        if std::env::var("UPDATE_GOLDEN").is_ok_and(|v| v == "1") {
            std::fs::create_dir_all(Path::new(golden).parent().unwrap()).unwrap();
            std::fs::write(golden, &got).unwrap();
            eprintln!("rewrote {golden}");
            continue;
        }
        let want = std::fs::read_to_string(golden)
            .unwrap_or_else(|e| panic!("{golden}: {e}; create it with UPDATE_GOLDEN=1"));
        assert!(
            want == got,
            "the demo summary ({sampler}) differs from {golden} (- golden, + now):\n{}",
            line_diff(&want, &got)
        );
    }
}

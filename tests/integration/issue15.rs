//! Issue 15: one run-settings validation, one run-folder writer.

use std::path::Path;

use crate::util::{run, stderr, temp_dir, DEMO};

fn ok(o: &std::process::Output, what: &str) {
    assert_eq!(o.status.code(), Some(0), "{what}: {}", stderr(o));
}

/// A scenario with a tabulated flux model, two shards simulated and merged: the merged folder
/// carries flux_table.json (listed in its manifest), `report` re-reads it (its scenario hash
/// covers the table, so a folder without it is refused), and the merged summary is the one
/// run's summary byte for byte. Before issue 15 the merge wrote its own copy of the folder
/// files; one writer now serves simulate, merge and demo.
#[test]
fn merged_run_with_a_flux_table_can_be_re_read() {
    let dir = temp_dir("i15-flux-table-merge");
    let table = Path::new(env!("CARGO_MANIFEST_DIR")).join("flux_models/grun1985_tabulated.json");
    std::fs::copy(&table, dir.join("table.json")).unwrap();
    let mut v: serde_json::Value = serde_json::from_str(DEMO).unwrap();
    v["environment"]["flux_model"] = serde_json::json!({"table_file": "table.json"});
    let sc = dir.join("scenario.json");
    std::fs::write(&sc, serde_json::to_string_pretty(&v).unwrap()).unwrap();
    let sc = sc.to_str().unwrap();
    let d = |n: &str| dir.join(n).to_str().unwrap().to_string();
    for i in 0..2 {
        let shard = format!("{i}/2");
        let out = d(&format!("s{i}"));
        let args = [
            "simulate",
            sc,
            "--histories",
            "3000",
            "--threads",
            "2",
            "--shard",
            &shard,
            "--out",
            &out,
        ];
        ok(&run(&args), &format!("shard {i}"));
    }
    ok(
        &run(&["merge", &d("s0"), &d("s1"), "--out", &d("all")]),
        "merge",
    );
    let merged = dir.join("all");
    assert_eq!(
        std::fs::read(merged.join("flux_table.json")).unwrap(),
        std::fs::read(&table).unwrap(),
        "the merged folder holds the scenario's table"
    );
    let manifest: serde_json::Value =
        serde_json::from_slice(&std::fs::read(merged.join("manifest.json")).unwrap()).unwrap();
    let listed: Vec<&str> = manifest["files"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|f| f["path"].as_str())
        .collect();
    assert!(listed.contains(&"flux_table.json"), "{listed:?}");
    ok(&run(&["report", &d("all")]), "report of the merged folder");
    ok(
        &run(&[
            "simulate",
            sc,
            "--histories",
            "3000",
            "--threads",
            "1",
            "--out",
            &d("one"),
        ]),
        "whole run",
    );
    assert!(
        std::fs::read(merged.join("summary.json")).unwrap()
            == std::fs::read(dir.join("one/summary.json")).unwrap(),
        "merged and whole-run summaries differ"
    );
    // Without the table the folder is not the run it claims to be: the report refuses it.
    std::fs::remove_file(merged.join("flux_table.json")).unwrap();
    let o = run(&["report", &d("all")]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
}

/// The options shared by simulate, sweep and sensitivity are declared once: the same bad value
/// is refused by each command with the same message naming the option and its range (sweep had
/// no upper bound on --threads or --histories, and took no negative numbers).
#[test]
fn run_options_are_refused_alike_by_every_command() {
    let dir = temp_dir("i15-run-options");
    let cases: &[(&[&str], &str)] = &[
        (
            &["--threads", "5000"],
            "--threads = 5000 is out of range: allowed [0, 1024]",
        ),
        (
            &["--histories", "2e12"],
            "--histories = 2000000000000 is out of range: allowed [1, 1e12]",
        ),
        (
            &["--rare-event", "-3"],
            "--rare-event = -3 is out of range: allowed [1, 1e6]",
        ),
        (
            &["--target-rel-error", "1.5"],
            "--target-rel-error = 1.5 is out of range: allowed (0, 1)",
        ),
    ];
    for (k, (extra, want)) in cases.iter().enumerate() {
        for cmd in ["simulate", "sweep", "sensitivity"] {
            let out = d_out(&dir, k, cmd);
            let mut args = vec![cmd, "demo", "--out", &out];
            if cmd == "sweep" {
                args.extend(["--vary", "tether.ribbon_count=4,6"]);
            }
            args.extend_from_slice(extra);
            let o = run(&args);
            assert_eq!(o.status.code(), Some(2), "{cmd} {extra:?}: {}", stderr(&o));
            assert!(stderr(&o).contains(want), "{cmd} {extra:?}: {}", stderr(&o));
            assert!(
                !Path::new(&out).exists(),
                "{cmd} {extra:?}: the folder was created before the settings were checked"
            );
        }
    }
    // The stock-out target: simulate and sweep (sensitivity reports no recommended stock).
    for cmd in ["simulate", "sweep"] {
        let out = d_out(&dir, 99, cmd);
        let mut args = vec![cmd, "demo", "--out", &out, "--stockout-target", "-0.1"];
        if cmd == "sweep" {
            args.extend(["--vary", "tether.ribbon_count=4,6"]);
        }
        let o = run(&args);
        assert_eq!(o.status.code(), Some(2), "{cmd}: {}", stderr(&o));
        assert!(
            stderr(&o).contains("--stockout-target = -0.1 is out of range: allowed (0, 1)"),
            "{cmd}: {}",
            stderr(&o)
        );
    }
}

fn d_out(dir: &Path, k: usize, cmd: &str) -> String {
    dir.join(format!("{cmd}-{k}")).to_str().unwrap().to_string()
}

/// The synthetic constant-rate mode is called `synthetic_rates`; its old key `validation_mode`
/// is still read, to the same model (same scenario hash, so the same results for the same
/// seed), with a deprecation warning in `check`; giving both is refused, naming the old key.
#[test]
fn the_old_name_of_synthetic_rates_is_read_with_a_warning() {
    let new = crate::util::one_bay_validation(0.01, 0.05, 1);
    let mut old = new.clone();
    let settings = old["synthetic_rates"].take();
    old.as_object_mut().unwrap().remove("synthetic_rates");
    old["validation_mode"] = settings.clone();
    let a = crate::util::model_of(&new);
    let b = crate::util::model_of(&old);
    assert_eq!(a.scenario.hash, b.scenario.hash);
    assert_eq!(a.scenario.synthetic_rates, b.scenario.synthetic_rates);
    assert!(a.scenario.synthetic_rates.is_some());
    assert!(a.scenario.deprecations.is_empty());
    assert_eq!(b.scenario.deprecations.len(), 1);
    let dir = temp_dir("i15-old-key");
    let p = dir.join("old.json");
    std::fs::write(&p, old.to_string()).unwrap();
    let o = run(&["check", p.to_str().unwrap()]);
    ok(&o, "check with the old key");
    let text = String::from_utf8_lossy(&o.stdout).to_string() + &stderr(&o);
    assert!(
        text.contains("deprecated_input_name") && text.contains("synthetic_rates"),
        "{text}"
    );
    let mut both = new.clone();
    both["validation_mode"] = settings;
    let p = dir.join("both.json");
    std::fs::write(&p, both.to_string()).unwrap();
    let o = run(&["check", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("validation_mode"), "{}", stderr(&o));
}

//! Regression tests through the binary for the reliability round of issue 13 (items 3 and
//! 5-16) and issue 14 item 1 (every run folder is a report). Each test is named after its
//! item. The sources of the expectations are the issue's own statements of the defect and the
//! fix, OWASP's "CSV Injection" guidance (cells starting with = + - @ tab CR are prefixed with
//! a quote) and the CommonMark/GFM table syntax (a row is one line between pipes; raw HTML
//! passes through unless escaped).

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

use serde_json::{json, Value};

use crate::util::*;

fn expect_code(o: &Output, code: i32, what: &str) {
    let err = stderr(o);
    assert!(!err.contains("panicked"), "{what}: panic: {err}");
    assert_eq!(o.status.code(), Some(code), "{what}: stderr: {err}");
}

fn read_json(p: &Path) -> Value {
    let text = std::fs::read_to_string(p).unwrap_or_else(|e| panic!("{}: {e}", p.display()));
    serde_json::from_str(&text).unwrap()
}

/// The demo reduced to a half-year mission: cheap runs with the demo's repair fleet.
fn short_scenario(name: &str, f: impl FnOnce(&mut Value)) -> PathBuf {
    scenario_with(name, |v| {
        v["run"]["mission_years"] = json!(0.5);
        f(v);
    })
}

fn simulate(scenario: &Path, out: &Path, extra: &[&str]) -> Output {
    let mut args = vec![
        "simulate",
        scenario.to_str().unwrap(),
        "--histories",
        "2000",
        "--threads",
        "2",
        "--out",
        out.to_str().unwrap(),
    ];
    args.extend_from_slice(extra);
    run(&args)
}

/// Rewrite a run-folder file and bring the manifest's sizes up to date, so that the check
/// under test is the field validation, not the manifest.
fn tamper(dir: &Path, file: &str, f: impl FnOnce(&mut Value)) {
    let p = dir.join(file);
    let mut v = read_json(&p);
    f(&mut v);
    std::fs::write(&p, serde_json::to_string_pretty(&v).unwrap()).unwrap();
    let mp = dir.join("manifest.json");
    let mut m = read_json(&mp);
    if let Some(files) = m["files"].as_array_mut() {
        for e in files {
            let path = e["path"].as_str().unwrap().to_string();
            e["bytes"] = json!(std::fs::metadata(dir.join(&path)).unwrap().len());
        }
    }
    std::fs::write(&mp, serde_json::to_string_pretty(&m).unwrap()).unwrap();
}

fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap().flatten() {
        if e.file_type().unwrap().is_file() {
            std::fs::copy(e.path(), to.join(e.file_name())).unwrap();
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Item 3: Ctrl-C during a sweep keeps finished points; --resume continues to the same result.
// ---------------------------------------------------------------------------------------------

#[cfg(unix)]
#[test]
fn item3_sweep_interrupt_keeps_points_and_resume_equals_uninterrupted() {
    let sc = short_scenario("i3-scenario", |_| {});
    let args = |out: &Path| -> Vec<String> {
        [
            "sweep",
            sc.to_str().unwrap(),
            "--vary",
            "tether.cross_link_spacing_km=25,50,75,100",
            "--histories",
            "16000",
            "--threads",
            "1",
            "--out",
            out.to_str().unwrap(),
        ]
        .iter()
        .map(|s| s.to_string())
        .collect()
    };
    let base = temp_dir("i3");
    let full = base.join("full");
    let o = run(&args(&full).iter().map(String::as_str).collect::<Vec<_>>());
    expect_code(&o, 0, "uninterrupted sweep");

    let part = base.join("part");
    let child = Command::new(env!("CARGO_BIN_EXE_tether-risk"))
        .args(args(&part))
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let first = part.join("points").join("point-0000.json");
    for _ in 0..6000 {
        if first.exists() {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(10));
    }
    assert!(first.exists(), "the first point was never saved");
    let st = Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(st.success());
    let o = child.wait_with_output().unwrap();
    let err = stderr(&o);
    assert!(!err.contains("panicked"), "{err}");
    if o.status.code() == Some(130) {
        // Interrupted: the finished points are on disk, no final result pretends to be whole.
        assert!(err.contains("sweep --resume"), "{err}");
        assert!(!part.join("sweep.json").exists());
        assert!(!part.join("manifest.json").exists());
        let kept = std::fs::read_dir(part.join("points")).unwrap().count();
        assert!((1..4).contains(&kept), "{kept} points kept");
        let o = run(&[
            "sweep",
            "--resume",
            part.to_str().unwrap(),
            "--threads",
            "2",
        ]);
        expect_code(&o, 0, "resumed sweep");
        assert!(stderr(&o).contains("already done"), "{}", stderr(&o));
    } else {
        // The signal came after the last point: the sweep is complete.
        expect_code(&o, 0, "sweep that finished before the signal");
    }
    for f in ["sweep.json", "sweep.csv", "sweep.md"] {
        assert_eq!(
            std::fs::read(full.join(f)).unwrap(),
            std::fs::read(part.join(f)).unwrap(),
            "{f} differs from the uninterrupted sweep"
        );
    }
    // A finished sweep is not resumed, and an unfinished one is not silently replaced.
    let o = run(&["sweep", "--resume", part.to_str().unwrap()]);
    expect_code(&o, 2, "resume of a finished sweep");
}

// ---------------------------------------------------------------------------------------------
// Item 5: input files are read with a size cap.
// ---------------------------------------------------------------------------------------------

#[cfg(unix)]
#[test]
fn item5_endless_input_files_are_refused_with_a_cap() {
    let o = run(&["check", "/dev/zero"]);
    expect_code(&o, 2, "check /dev/zero");
    assert!(stderr(&o).contains("larger than 16 MiB"), "{}", stderr(&o));
    // A flux table that never ends.
    let sc = scenario_with("i5-table", |v| {
        v["environment"]["flux_model"] = json!({"table_file": "/dev/zero"});
    });
    let o = run(&["check", sc.to_str().unwrap()]);
    expect_code(&o, 2, "flux table /dev/zero");
    assert!(stderr(&o).contains("larger than"), "{}", stderr(&o));
    // A run-folder file that never ends.
    let d = temp_dir("i5-run");
    std::os::unix::fs::symlink("/dev/zero", d.join("summary.json")).unwrap();
    let o = run(&["report", d.to_str().unwrap()]);
    expect_code(&o, 2, "report of an endless summary.json");
    assert!(stderr(&o).contains("larger than"), "{}", stderr(&o));
}

// ---------------------------------------------------------------------------------------------
// Items 6 and 7: names cannot become spreadsheet formulas or live Markdown/HTML.
// ---------------------------------------------------------------------------------------------

const FORMULA: &str = "=HYPERLINK(\"http://x\")";
const MARKUP: &str = "<script>alert(1)</script><img src=x onerror=alert(2)>\n| x";

fn hostile_run(name: &str) -> (PathBuf, PathBuf) {
    let sc = short_scenario(name, |v| {
        v["name"] = json!(format!("@evil {MARKUP}"));
        v["repair"]["stations"][0]["name"] = json!(FORMULA);
        v["repair"]["stations"][1]["name"] = json!(MARKUP);
    });
    let out = sc.parent().unwrap().join("run");
    let o = simulate(&sc, &out, &[]);
    expect_code(&o, 0, "simulate with hostile names");
    (sc, out)
}

fn files_with(dir: &Path, ext: &str) -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .flatten()
        .map(|e| e.path())
        .filter(|p| p.extension().is_some_and(|e| e == ext))
        .collect();
    v.sort();
    v
}

fn assert_csv_inert(p: &Path) {
    let mut r = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_path(p)
        .unwrap();
    for rec in r.records() {
        for cell in rec.unwrap().iter() {
            let first = cell.as_bytes().first().copied();
            let risky = matches!(first, Some(b'=' | b'+' | b'@' | b'\t' | b'\r'))
                || (first == Some(b'-') && cell.parse::<f64>().is_err());
            assert!(!risky, "{}: live formula cell {cell:?}", p.display());
        }
    }
}

fn assert_markdown_inert(p: &Path) {
    let md = std::fs::read_to_string(p).unwrap();
    for bad in ["<script", "<img", "onerror=alert(2)>"] {
        assert!(!md.contains(bad), "{}: raw `{bad}`", p.display());
    }
    // Every table row is one whole line: starts and ends with a pipe, and has as many cells
    // as its table's header.
    let mut cols = None;
    for line in md.lines() {
        if line.starts_with('|') {
            assert!(line.ends_with('|'), "{}: broken row {line:?}", p.display());
            let n = line.replace("\\|", "").matches('|').count();
            match cols {
                None => cols = Some(n),
                Some(c) => assert_eq!(c, n, "{}: row {line:?}", p.display()),
            }
        } else {
            cols = None;
        }
    }
}

#[test]
fn item6_item7_hostile_names_are_neutralised_in_every_csv_and_markdown() {
    let (sc, out) = hostile_run("i67");
    let csvs = files_with(&out, "csv");
    assert!(csvs.len() >= 6, "{csvs:?}");
    let spares = std::fs::read_to_string(out.join("spares.csv")).unwrap();
    assert!(spares.contains("'=HYPERLINK"), "{spares}");
    for p in &csvs {
        assert_csv_inert(p);
    }
    let mds = files_with(&out, "md");
    assert!(mds.len() >= 4, "{mds:?}");
    for p in &mds {
        assert_markdown_inert(p);
    }
    // HTML escapes too (the report is written by simulate itself).
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(!html.contains("<script") && !html.contains("<img"));
    assert!(html.contains("&lt;script&gt;"));

    // The sweep's CSV and Markdown, with the names in station columns and labels.
    let sd = sc.parent().unwrap().join("sweep");
    let o = run(&[
        "sweep",
        sc.to_str().unwrap(),
        "--vary",
        "repair.stations[1].climbers=1,2",
        "--histories",
        "1000",
        "--out",
        sd.to_str().unwrap(),
    ]);
    expect_code(&o, 0, "sweep with hostile names");
    assert_csv_inert(&sd.join("sweep.csv"));
    assert_markdown_inert(&sd.join("sweep.md"));
    // Terminal and --format csv output go through the same table writers.
    let o = run(&["profile", sc.to_str().unwrap(), "--format", "csv"]);
    expect_code(&o, 0, "profile csv");
    // The sensitivity study's CSV and Markdown carry the scenario's name too.
    let sens = sc.parent().unwrap().join("sensitivity");
    let o = run(&[
        "sensitivity",
        sc.to_str().unwrap(),
        "--histories",
        "200",
        "--no-fast-estimate",
        "--out",
        sens.to_str().unwrap(),
    ]);
    expect_code(&o, 0, "sensitivity with hostile names");
    assert_csv_inert(&sens.join("sensitivity.csv"));
    assert_markdown_inert(&sens.join("sensitivity.md"));
}

// ---------------------------------------------------------------------------------------------
// Item 8: duplicate station names are refused; file stems are unique.
// ---------------------------------------------------------------------------------------------

#[test]
fn item8_duplicate_station_names_refused_and_plot_stems_unique() {
    let sc = short_scenario("i8-dup", |v| {
        v["repair"]["stations"][0]["name"] = json!("Depot");
        v["repair"]["stations"][1]["name"] = json!(" depot ");
    });
    let o = run(&["check", sc.to_str().unwrap()]);
    expect_code(&o, 2, "duplicate station names");
    let e = stderr(&o);
    assert!(
        e.contains("repair.stations[1].name") && e.contains("already used"),
        "{e}"
    );

    let sc = short_scenario("i8-stems", |v| {
        v["repair"]["stations"][0]["name"] = json!("x|y");
        v["repair"]["stations"][1]["name"] = json!("x/y");
    });
    let out = sc.parent().unwrap().join("run");
    expect_code(&simulate(&sc, &out, &[]), 0, "names that sanitise alike");
    for stem in ["spare_demand_x_y", "spare_demand_x_y-2"] {
        for ext in ["png", "svg"] {
            let p = out.join("plots").join(format!("{stem}.{ext}"));
            assert!(p.exists(), "{} missing", p.display());
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Item 9: init --force replaces only regular files and keeps their mode.
// ---------------------------------------------------------------------------------------------

#[cfg(unix)]
#[test]
fn item9_init_force_refuses_non_regular_files_and_keeps_mode() {
    use std::os::unix::fs::{FileTypeExt, PermissionsExt};
    let d = temp_dir("i9");
    let target = d.join("target.json");
    std::fs::write(&target, "keep me").unwrap();
    let link = d.join("link.json");
    std::os::unix::fs::symlink(&target, &link).unwrap();
    let o = run(&["init", link.to_str().unwrap(), "--force"]);
    expect_code(&o, 2, "init over a symlink");
    assert!(stderr(&o).contains("symbolic link"), "{}", stderr(&o));
    assert!(std::fs::symlink_metadata(&link)
        .unwrap()
        .file_type()
        .is_symlink());
    assert_eq!(std::fs::read_to_string(&target).unwrap(), "keep me");

    let fifo = d.join("fifo");
    let st = Command::new("mkfifo").arg(&fifo).status().unwrap();
    assert!(st.success());
    let o = run(&["init", fifo.to_str().unwrap(), "--force"]);
    expect_code(&o, 2, "init over a FIFO");
    assert!(std::fs::metadata(&fifo).unwrap().file_type().is_fifo());

    let o = run(&["init", "/dev/full", "--force"]);
    expect_code(&o, 2, "init over a device");
    assert!(std::fs::metadata("/dev/full")
        .unwrap()
        .file_type()
        .is_char_device());

    let private = d.join("private.json");
    std::fs::write(&private, "old").unwrap();
    std::fs::set_permissions(&private, std::fs::Permissions::from_mode(0o600)).unwrap();
    let o = run(&["init", private.to_str().unwrap(), "--force"]);
    expect_code(&o, 0, "init --force over a regular file");
    let m = std::fs::metadata(&private).unwrap();
    assert_eq!(m.permissions().mode() & 0o777, 0o600, "mode was reset");
    assert!(std::fs::read_to_string(&private)
        .unwrap()
        .contains("\"tether\""));
}

// ---------------------------------------------------------------------------------------------
// Item 10: an exclusive lock on the output folder.
// ---------------------------------------------------------------------------------------------

#[cfg(target_os = "linux")]
#[test]
fn item10_second_run_into_a_locked_folder_exits_2_and_stale_locks_are_taken_over() {
    let sc = short_scenario("i10", |_| {});
    let out = sc.parent().unwrap().join("run");
    std::fs::create_dir_all(&out).unwrap();
    let lock = out.join(".tether-risk.lock");
    // A live holder: this test process.
    std::fs::write(&lock, format!("{} 0\n", std::process::id())).unwrap();
    for args in [
        vec!["simulate", sc.to_str().unwrap(), "--histories", "1000"],
        vec!["report"],
    ] {
        let mut a = args.clone();
        if a[0] == "report" {
            a.push(out.to_str().unwrap());
        } else {
            a.extend(["--out", out.to_str().unwrap()]);
        }
        let o = run(&a);
        expect_code(&o, 2, "run into a locked folder");
        let e = stderr(&o);
        assert!(e.contains("in use by another tether-risk run"), "{e}");
        assert!(e.contains(&std::process::id().to_string()), "{e}");
    }
    assert!(lock.exists(), "another run's lock was removed");
    // A stale holder (a process id beyond any pid_max): taken over, then released.
    std::fs::write(&lock, "4294967295 7\n").unwrap();
    let o = simulate(&sc, &out, &[]);
    expect_code(&o, 0, "run over a stale lock");
    assert!(!lock.exists(), "lock not released at exit");
}

// ---------------------------------------------------------------------------------------------
// Item 11: --force replaces everything the tool wrote, and only that.
// ---------------------------------------------------------------------------------------------

#[test]
fn item11_force_leaves_no_old_report_and_keeps_foreign_files() {
    let sc = short_scenario("i11", |_| {});
    let out = sc.parent().unwrap().join("run");
    expect_code(&simulate(&sc, &out, &["--seed", "11"]), 0, "first run");
    let old = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(old.contains("seed 11"));
    std::fs::write(out.join("my-notes.txt"), "mine").unwrap();
    std::fs::write(out.join("plots").join("old_chart.svg"), "<svg/>").unwrap();
    expect_code(&simulate(&sc, &out, &["--seed", "12"]), 2, "no --force");
    expect_code(
        &simulate(&sc, &out, &["--seed", "12", "--force"]),
        0,
        "--force",
    );
    let new = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(new.contains("seed 12") && !new.contains("seed 11"));
    let md = std::fs::read_to_string(out.join("failure_tables.md")).unwrap();
    assert!(md.contains("seed 12"), "{md}");
    assert_eq!(
        std::fs::read_to_string(out.join("my-notes.txt")).unwrap(),
        "mine"
    );
    assert!(!out.join("plots").join("old_chart.svg").exists());
    assert_eq!(read_json(&out.join("summary.json"))["seed"], 12);
}

// ---------------------------------------------------------------------------------------------
// Item 12: stale temporary files are cleaned; completeness is explicit.
// ---------------------------------------------------------------------------------------------

#[test]
fn item12_stale_temps_cleaned_and_incomplete_folders_reported() {
    let sc = short_scenario("i12", |_| {});
    let out = sc.parent().unwrap().join("run");
    expect_code(&simulate(&sc, &out, &[]), 0, "run");
    let m = read_json(&out.join("manifest.json"));
    let listed: Vec<&str> = m["files"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["path"].as_str().unwrap())
        .collect();
    for f in [
        "summary.json",
        "scenario.json",
        "settings.json",
        "spares.csv",
    ] {
        assert!(
            listed.contains(&f),
            "manifest does not list {f}: {listed:?}"
        );
    }
    let t1 = out.join(".summary.json.tmp-999999");
    let t2 = out.join("plots").join(".report.svg.tmp-5");
    std::fs::write(&t1, "half a file").unwrap();
    std::fs::write(&t2, "half").unwrap();
    let o = run(&["report", out.to_str().unwrap()]);
    expect_code(&o, 0, "report of a complete folder");
    assert!(!t1.exists() && !t2.exists(), "stale temporary files left");
    assert!(!stderr(&o).contains("incomplete"));

    // Killed before the manifest: reported, with a warning in the report itself.
    std::fs::remove_file(out.join("manifest.json")).unwrap();
    let o = run(&["report", out.to_str().unwrap()]);
    expect_code(&o, 0, "report of a folder without manifest");
    assert!(stderr(&o).contains("incomplete"), "{}", stderr(&o));
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("WARNING: incomplete run folder"));

    // A listed file is missing: refused.
    let out2 = sc.parent().unwrap().join("run2");
    expect_code(&simulate(&sc, &out2, &[]), 0, "run 2");
    std::fs::remove_file(out2.join("spares.csv")).unwrap();
    let o = run(&["report", out2.to_str().unwrap()]);
    expect_code(&o, 2, "report with a missing table");
    assert!(
        stderr(&o).contains("spares.csv is missing"),
        "{}",
        stderr(&o)
    );
}

// ---------------------------------------------------------------------------------------------
// Items 13 and 14: merge validates what it reads and does not depend on the order.
// ---------------------------------------------------------------------------------------------

fn shards(name: &str, n: u64, extra: &[&str]) -> Vec<PathBuf> {
    let sc = short_scenario(name, |_| {});
    let base = sc.parent().unwrap().to_path_buf();
    (0..n)
        .map(|i| {
            let d = base.join(format!("s{i}"));
            let shard = format!("{i}/{n}");
            let mut a = vec!["--shard", shard.as_str(), "--histories", "6000"];
            a.extend_from_slice(extra);
            let mut args = vec!["simulate", sc.to_str().unwrap(), "--threads", "2"];
            args.extend(a);
            args.extend(["--out", d.to_str().unwrap()]);
            expect_code(&run(&args), 0, "shard");
            d
        })
        .collect()
}

fn merge(dirs: &[&Path], out: &Path) -> Output {
    let mut a: Vec<&str> = vec!["merge"];
    a.extend(dirs.iter().map(|d| d.to_str().unwrap()));
    a.extend(["--out", out.to_str().unwrap()]);
    run(&a)
}

#[test]
fn item13_merge_refuses_tampered_shard_files_without_panic() {
    let s = shards("i13", 2, &[]);
    let base = s[0].parent().unwrap().to_path_buf();
    expect_code(&merge(&[&s[0], &s[1]], &base.join("ok")), 0, "clean merge");
    type Edit = Box<dyn Fn(&mut Value)>;
    let cases: Vec<(&str, &str, Edit)> = vec![
        (
            "settings.json",
            "shard",
            Box::new(|v| v["shard"] = json!([5, 3])),
        ),
        (
            "settings.json",
            "shard",
            Box::new(|v| v["shard"] = json!([0, u64::MAX])),
        ),
        (
            "settings.json",
            "histories",
            Box::new(|v| v["histories"] = json!(0)),
        ),
        (
            "settings.json",
            "floor_fraction",
            Box::new(|v| v["floor_fraction"] = json!(-1.0)),
        ),
        (
            "summary.json",
            "losses_by_year",
            Box::new(|v| {
                v["tally"]["losses_by_year"]
                    .as_array_mut()
                    .unwrap()
                    .push(json!(1))
            }),
        ),
        (
            "summary.json",
            "losses",
            Box::new(|v| v["tally"]["losses"] = json!(u64::MAX)),
        ),
        (
            "summary.json",
            "histories",
            Box::new(|v| {
                v["tally"]["histories"] = json!(1);
                v["histories"] = json!(1);
            }),
        ),
        (
            "summary.json",
            "2^64",
            Box::new(|v| v["tally"]["cuts"] = json!(u64::MAX)),
        ),
        (
            "summary.json",
            "demand_mission",
            Box::new(|v| v["tally"]["repair"]["demand_mission"] = json!([[1]])),
        ),
    ];
    for (k, (file, expect, edit)) in cases.iter().enumerate() {
        let bad = base.join(format!("bad{k}"));
        let _ = std::fs::remove_dir_all(&bad);
        copy_dir(&s[1], &bad);
        tamper(&bad, file, edit);
        if *expect == "2^64" {
            // Both shards at the top of the range: only the sum overflows.
            let bad0 = base.join(format!("bad{k}-0"));
            let _ = std::fs::remove_dir_all(&bad0);
            copy_dir(&s[0], &bad0);
            tamper(&bad0, file, edit);
            let o = merge(&[&bad0, &bad], &base.join(format!("out{k}")));
            expect_code(&o, 2, &format!("{file}: {expect}"));
            assert!(stderr(&o).contains(expect), "{}", stderr(&o));
            continue;
        }
        let o = merge(&[&s[0], &bad], &base.join(format!("out{k}")));
        expect_code(&o, 2, &format!("{file}: {expect}"));
        assert!(stderr(&o).contains(expect), "{file}: {}", stderr(&o));
    }
    // A shard whose files changed after its run (manifest sizes not updated) is refused too.
    let bad = base.join("changed");
    copy_dir(&s[1], &bad);
    std::fs::write(bad.join("settings.json"), "{}").unwrap();
    expect_code(
        &merge(&[&s[0], &bad], &base.join("out-changed")),
        2,
        "changed shard",
    );
    // Issue 15 item 1: a shard manifest is read as the Manifest the shard run wrote; one that
    // lists no files cannot vouch for the shard, so it is refused, naming the file.
    let bad = base.join("unlisted");
    copy_dir(&s[1], &bad);
    let mut m = read_json(&bad.join("manifest.json"));
    m.as_object_mut().unwrap().remove("files");
    std::fs::write(bad.join("manifest.json"), m.to_string()).unwrap();
    let o = merge(&[&s[0], &bad], &base.join("out-unlisted"));
    expect_code(&o, 2, "shard manifest without files");
    assert!(
        stderr(&o)
            .contains("manifest.json is not a run manifest of this version: missing field `files`"),
        "{}",
        stderr(&o)
    );
}

#[test]
fn item14_merge_is_order_independent_for_rare_event_shards() {
    let s = shards("i14", 3, &["--rare-event", "30"]);
    let base = s[0].parent().unwrap().to_path_buf();
    let a = base.join("m012");
    let b = base.join("m201");
    expect_code(&merge(&[&s[0], &s[1], &s[2]], &a), 0, "merge 0 1 2");
    expect_code(&merge(&[&s[2], &s[0], &s[1]], &b), 0, "merge 2 0 1");
    assert_eq!(
        std::fs::read(a.join("summary.json")).unwrap(),
        std::fs::read(b.join("summary.json")).unwrap(),
        "merged summaries depend on the shard order"
    );
    let w = read_json(&a.join("summary.json"))["tally"]["weighted"].clone();
    let batches: Vec<u64> = w
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x["batch"].as_u64().unwrap())
        .collect();
    assert!(
        batches.windows(2).all(|p| p[0] < p[1]),
        "weighted batches not in batch order: {batches:?}"
    );
}

// ---------------------------------------------------------------------------------------------
// Item 15: non-UTF-8 output paths.
// ---------------------------------------------------------------------------------------------

#[cfg(target_os = "linux")]
#[test]
fn item15_non_utf8_out_path_runs_and_merges() {
    use std::ffi::OsStr;
    use std::os::unix::ffi::OsStrExt;
    let sc = short_scenario("i15", |_| {});
    let base = sc.parent().unwrap().to_path_buf();
    let out = base.join(OsStr::from_bytes(b"run-\xff\xfe"));
    let shard = |i: &str, d: &Path| {
        Command::new(env!("CARGO_BIN_EXE_tether-risk"))
            .arg("simulate")
            .arg(&sc)
            .args(["--histories", "2000", "--shard", i, "--out"])
            .arg(d)
            .stdin(Stdio::null())
            .output()
            .unwrap()
    };
    let s0 = base.join(OsStr::from_bytes(b"s0-\xff"));
    let s1 = base.join(OsStr::from_bytes(b"s1-\xff"));
    expect_code(&shard("0/2", &s0), 0, "shard 0 into a non-UTF-8 path");
    expect_code(&shard("1/2", &s1), 0, "shard 1 into a non-UTF-8 path");
    let o = Command::new(env!("CARGO_BIN_EXE_tether-risk"))
        .arg("merge")
        .arg(&s0)
        .arg(&s1)
        .arg("--out")
        .arg(&out)
        .stdin(Stdio::null())
        .output()
        .unwrap();
    expect_code(&o, 0, "merge into a non-UTF-8 path");
    assert!(out.join("summary.json").exists());
    assert!(out.join("report.html").exists());
    let o = Command::new(env!("CARGO_BIN_EXE_tether-risk"))
        .arg("report")
        .arg(&out)
        .stdin(Stdio::null())
        .output()
        .unwrap();
    expect_code(&o, 0, "report of a non-UTF-8 path");
}

// ---------------------------------------------------------------------------------------------
// Item 16: report checks the run folder's consistency.
// ---------------------------------------------------------------------------------------------

#[test]
fn item16_report_refuses_inconsistent_summaries() {
    let sc = short_scenario("i16", |_| {});
    let good = sc.parent().unwrap().join("run");
    expect_code(&simulate(&sc, &good, &[]), 0, "run");
    type Edit = Box<dyn Fn(&mut Value)>;
    let cases: Vec<(&str, Edit)> = vec![
        (
            "losses cannot exceed histories",
            Box::new(|v| v["tally"]["losses"] = json!(1_000_000)),
        ),
        (
            "mission_years",
            Box::new(|v| v["mission_years"] = json!(-3.0)),
        ),
        (
            "survival_by_year has 15000 rows",
            Box::new(|v| {
                let row = v["survival_by_year"][0].clone();
                v["survival_by_year"] = Value::Array(vec![row; 15000]);
            }),
        ),
        (
            "not a probability interval",
            Box::new(|v| v["loss_probability"]["estimate"] = json!(1.5)),
        ),
    ];
    for (k, (expect, edit)) in cases.iter().enumerate() {
        let bad = sc.parent().unwrap().join(format!("bad{k}"));
        copy_dir(&good, &bad);
        tamper(&bad, "summary.json", edit);
        let o = run(&["report", bad.to_str().unwrap()]);
        expect_code(&o, 2, expect);
        assert!(stderr(&o).contains(expect), "{expect}: {}", stderr(&o));
    }
}

// ---------------------------------------------------------------------------------------------
// Issue 14 item 1: every run folder is a report.
// ---------------------------------------------------------------------------------------------

#[test]
fn issue14_item1_simulate_and_sweep_folders_are_reports() {
    let sc = short_scenario("i14-1", |_| {});
    let out = sc.parent().unwrap().join("run");
    expect_code(&simulate(&sc, &out, &[]), 0, "simulate");
    for f in [
        "design.json",
        "estimate.json",
        "report.html",
        "manifest.json",
    ] {
        assert!(out.join(f).exists(), "simulate did not write {f}");
    }
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("Fast Markov estimate"), "no Markov card");
    assert!(html.contains("Design key numbers"), "no design table");
    assert!(!html.contains("incomplete run folder"));

    let sd = sc.parent().unwrap().join("sweep");
    let o = run(&[
        "sweep",
        sc.to_str().unwrap(),
        "--vary",
        "tether.ribbon_count=4,6",
        "--histories",
        "1000",
        "--out",
        sd.to_str().unwrap(),
    ]);
    expect_code(&o, 0, "sweep");
    let html = std::fs::read_to_string(sd.join("report.html")).unwrap();
    assert!(html.contains("Trade study"), "sweep report lacks its table");
    let o = run(&["report", sd.to_str().unwrap()]);
    expect_code(&o, 0, "report of a sweep folder");

    // A trade study of another scenario inside a run folder is refused, not merged in.
    let other = scenario_with("i14-1-other", |v| v["run"]["mission_years"] = json!(1.0));
    let o = run(&[
        "sweep",
        other.to_str().unwrap(),
        "--vary",
        "tether.ribbon_count=4,6",
        "--histories",
        "1000",
        "--out",
        out.join("sweep").to_str().unwrap(),
    ]);
    expect_code(&o, 0, "sweep of another scenario");
    let o = run(&["report", out.to_str().unwrap()]);
    expect_code(&o, 2, "report with a foreign sweep");
    assert!(stderr(&o).contains("scenario hash"), "{}", stderr(&o));
}

// ---------------------------------------------------------------------------------------------
// Item 1/2, same class: `demo` is a long command too; a signal stops it within seconds, exit 130,
// nothing half-written and no lock left behind.
// ---------------------------------------------------------------------------------------------

/// Start `args`, send `sig` after `after_ms`, and check the process ends with exit 130 within
/// 20 s, without a panic, leaving neither its lock nor temporary files in `out`.
#[cfg(unix)]
fn stops_cleanly_on(args: &[&str], out: &Path, sig: &str, after_ms: u64) -> String {
    let mut child = Command::new(env!("CARGO_BIN_EXE_tether-risk"))
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // The output folder appears once the command runs (after its signal handler is set up);
    // only then does the wait start. Not a timing assertion: it only waits.
    for _ in 0..6000 {
        if out.exists() {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(10));
    }
    std::thread::sleep(std::time::Duration::from_millis(after_ms));
    let st = Command::new("kill")
        .args([sig, &child.id().to_string()])
        .status()
        .unwrap();
    assert!(st.success());
    let sent = std::time::Instant::now();
    let status = loop {
        if let Some(s) = child.try_wait().unwrap() {
            break s;
        }
        assert!(
            sent.elapsed() < std::time::Duration::from_secs(20),
            "{args:?} still running 20 s after {sig}"
        );
        std::thread::sleep(std::time::Duration::from_millis(20));
    };
    let mut err = String::new();
    std::io::Read::read_to_string(&mut child.stderr.take().unwrap(), &mut err).unwrap();
    assert!(!err.contains("panicked"), "{err}");
    // Each command given here takes longer than `after_ms`; the signal must stop it.
    assert_eq!(status.code(), Some(130), "{args:?}: {err}");
    assert!(err.contains("interrupted"), "{err}");
    let names: Vec<String> = std::fs::read_dir(out)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert!(
        !names
            .iter()
            .any(|n| n.contains(".tmp-") || n == ".tether-risk.lock"),
        "{names:?}"
    );
    err
}

#[cfg(unix)]
#[test]
fn demo_stops_on_sigterm_and_leaves_no_lock_or_temp_files() {
    let out = temp_dir("demo-sigterm").join("demo");
    let o = out.to_str().unwrap();
    stops_cleanly_on(&["demo", "--threads", "1", "--out", o], &out, "-TERM", 300);
}

#[cfg(unix)]
#[test]
fn sensitivity_stops_on_sigint_and_says_nothing_was_written() {
    let out = temp_dir("sens-sigint").join("s");
    let o = out.to_str().unwrap();
    let err = stops_cleanly_on(
        &[
            "sensitivity",
            "demo",
            "--histories",
            "200000",
            "--threads",
            "1",
            "--out",
            o,
        ],
        &out,
        "-INT",
        1500,
    );
    assert!(err.contains("nothing was written"), "{err}");
    assert!(!out.join("sensitivity.json").exists());
}

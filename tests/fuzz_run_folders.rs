//! Property-based fuzzing of the files a run folder holds when they are read back: summary.json,
//! settings.json, checkpoint.json and manifest.json (proptest, stable toolchain), in the style
//! of `fuzz_scenarios.rs`.
//!
//! A small real run (two shards of the demo on a half-year mission) is made once through the
//! binary. Each case picks one file of one folder and mutates it: extreme and non-finite
//! numbers written as text (1e999, -1, 18446744073709551615, 2^64), wrong types, deleted
//! fields, emptied or grown arrays, and truncation of the text. Then, depending on the file:
//!
//! * summary.json / manifest.json: `report::assemble::RunFolder::load` and `render` in the
//!   library, inside `catch_unwind`; and every few cases `tether-risk report`;
//! * settings.json / summary.json of a shard: `tether-risk merge` of the two shards;
//! * checkpoint.json: `tether-risk simulate --resume`.
//!
//! Properties: nothing panics (library or binary); the binary exits with 0 or 2 (bad input),
//! never 1 or a signal; a merge that succeeds leaves a folder that `report` accepts.
//!
//! The short run (48 cases) is part of `cargo test --release`. The long run:
//!
//! ```sh
//! FUZZ_CASES=5000 cargo test --release --test fuzz_run_folders -- --ignored long
//! ```
//!
//! The random stream is fixed by `PROPTEST_RNG_SEED` (a fixed default otherwise).

use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::sync::OnceLock;

use proptest::prelude::*;
use proptest::test_runner::{Config, RngSeed, TestCaseError, TestRunner};
use serde_json::Value;

const DEFAULT_SEED: u64 = 20_261_203;

const RAW_TOKENS: &[&str] = &[
    "1e999",
    "-1e999",
    "-1",
    "0",
    "1",
    "2",
    "0.5",
    "1.5",
    "-0.0",
    "4294967296",
    "18446744073709551615",
    "18446744073709551616",
    "99999999999999999999999999999999",
    "1e308",
    "null",
    "true",
    "\"\"",
    "\"x\"",
    "[]",
    "{}",
    "[0, 18446744073709551615]",
    "[5, 3]",
    "[[1]]",
];

#[derive(Clone, Debug)]
enum Op {
    Token(usize),
    Delete,
    Grow,
    Truncate(u16),
}

#[derive(Clone, Debug)]
struct Plan {
    /// 0 summary, 1 manifest, 2 settings (merge), 3 shard summary (merge), 4 checkpoint.
    target: usize,
    edits: Vec<(u32, Op)>,
}

fn op() -> impl Strategy<Value = Op> {
    prop_oneof![
        6 => (0..RAW_TOKENS.len()).prop_map(Op::Token),
        2 => Just(Op::Delete),
        1 => Just(Op::Grow),
        1 => any::<u16>().prop_map(Op::Truncate),
    ]
}

fn plan() -> impl Strategy<Value = Plan> {
    (0usize..5, prop::collection::vec((any::<u32>(), op()), 1..4))
        .prop_map(|(target, edits)| Plan { target, edits })
}

fn bin() -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_tether-risk"));
    c.stdin(Stdio::null());
    c
}

fn ok(o: &Output, what: &str) {
    assert!(
        o.status.success(),
        "{what}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
}

/// The real folders, made once: `whole` (a complete run), `s0`, `s1` (two shards).
fn base() -> &'static PathBuf {
    static B: OnceLock<PathBuf> = OnceLock::new();
    B.get_or_init(|| {
        let b = std::env::temp_dir().join(format!("tr-fuzz-folders-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&b);
        std::fs::create_dir_all(&b).unwrap();
        let mut v: Value = serde_json::from_str(tether_risk::scenario::DEMO_SCENARIO_JSON).unwrap();
        v["run"]["mission_years"] = serde_json::json!(0.5);
        let sc = b.join("scenario.json");
        std::fs::write(&sc, v.to_string()).unwrap();
        let sim = |extra: &[&str], out: &str| {
            let o = bin()
                .arg("simulate")
                .arg(&sc)
                .args(["--histories", "2000", "--threads", "2"])
                .args(extra)
                .arg("--out")
                .arg(b.join(out))
                .output()
                .unwrap();
            ok(&o, out);
        };
        sim(&[], "whole");
        sim(&["--shard", "0/2"], "s0");
        sim(&["--shard", "1/2"], "s1");
        b
    })
}

fn copy_dir(from: &Path, to: &Path) {
    let _ = std::fs::remove_dir_all(to);
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap().flatten() {
        if e.file_type().unwrap().is_file() {
            std::fs::copy(e.path(), to.join(e.file_name())).unwrap();
        }
    }
}

fn leaf_paths(v: &Value, at: &mut Vec<Value>, out: &mut Vec<Vec<Value>>) {
    match v {
        Value::Object(o) => {
            for (k, x) in o {
                at.push(Value::String(k.clone()));
                out.push(at.clone());
                leaf_paths(x, at, out);
                at.pop();
            }
        }
        Value::Array(a) => {
            // Long arrays (histograms): a few elements are enough.
            for (i, x) in a.iter().enumerate().take(4) {
                at.push(Value::from(i));
                out.push(at.clone());
                leaf_paths(x, at, out);
                at.pop();
            }
        }
        _ => {}
    }
}

fn parent_mut<'a>(v: &'a mut Value, path: &[Value]) -> Option<&'a mut Value> {
    let mut cur = v;
    for k in path {
        cur = match k {
            Value::String(s) => cur.get_mut(s.as_str())?,
            Value::Number(n) => cur.get_mut(n.as_u64()? as usize)?,
            _ => return None,
        };
    }
    Some(cur)
}

/// Apply the edits to a JSON text; returns the mutated text.
fn mutate(text: &str, edits: &[(u32, Op)]) -> String {
    let mut v: Value = serde_json::from_str(text).unwrap();
    let mut paths = Vec::new();
    leaf_paths(&v, &mut Vec::new(), &mut paths);
    let mut tokens = Vec::new();
    let mut truncate = None;
    for (k, (pick, op)) in edits.iter().enumerate() {
        let path = &paths[*pick as usize % paths.len()];
        let (last, parent) = path.split_last().unwrap();
        let Some(p) = parent_mut(&mut v, parent) else {
            continue;
        };
        match op {
            Op::Token(t) => {
                let marker = format!("@@TOKEN{k}@@");
                tokens.push((format!("\"{marker}\""), RAW_TOKENS[*t]));
                match (p, last) {
                    (Value::Object(o), Value::String(s)) => {
                        o.insert(s.clone(), Value::String(marker));
                    }
                    (Value::Array(a), Value::Number(i)) => {
                        if let Some(x) = a.get_mut(i.as_u64().unwrap() as usize) {
                            *x = Value::String(marker);
                        }
                    }
                    _ => {}
                }
            }
            Op::Delete => match (p, last) {
                (Value::Object(o), Value::String(s)) => {
                    o.remove(s);
                }
                (Value::Array(a), Value::Number(i)) => {
                    let i = i.as_u64().unwrap() as usize;
                    if i < a.len() {
                        a.remove(i);
                    }
                }
                _ => {}
            },
            Op::Grow => {
                if let Value::Array(a) = p {
                    if let Some(x) = a.first().cloned() {
                        a.extend(std::iter::repeat_n(x, 20_000));
                    }
                }
            }
            Op::Truncate(at) => truncate = Some(*at),
        }
    }
    let mut s = serde_json::to_string(&v).unwrap();
    for (m, t) in tokens {
        s = s.replace(&m, t);
    }
    if let Some(at) = truncate {
        let n = (at as usize) % (s.len() + 1);
        let mut n = n;
        while !s.is_char_boundary(n) {
            n -= 1;
        }
        s.truncate(n);
    }
    s
}

/// Bring the manifest's recorded sizes up to date, so that the mutated field itself is what
/// the reader has to judge (not only the size mismatch).
fn refresh_manifest(dir: &Path) {
    let mp = dir.join("manifest.json");
    let Ok(text) = std::fs::read_to_string(&mp) else {
        return;
    };
    let Ok(mut m) = serde_json::from_str::<Value>(&text) else {
        return;
    };
    if let Some(files) = m.get_mut("files").and_then(Value::as_array_mut) {
        for e in files {
            if let Some(p) = e.get("path").and_then(Value::as_str) {
                if let Ok(md) = std::fs::metadata(dir.join(p)) {
                    e["bytes"] = Value::from(md.len());
                }
            }
        }
    }
    std::fs::write(&mp, m.to_string()).unwrap();
}

fn check_exit(o: &Output, what: &str) -> Result<(), String> {
    let err = String::from_utf8_lossy(&o.stderr);
    if err.contains("panicked") {
        return Err(format!("{what}: PANIC: {err}"));
    }
    match o.status.code() {
        Some(0) | Some(2) => Ok(()),
        c => Err(format!("{what}: exit {c:?}: {err}")),
    }
}

fn library_report(dir: &Path) -> Result<(), String> {
    use tether_risk::report::assemble::{render, RunFolder};
    let r = catch_unwind(AssertUnwindSafe(|| {
        if let Ok(f) = RunFolder::load(dir) {
            let _ = render(&f);
        }
    }));
    r.map_err(|p| {
        let msg = p
            .downcast_ref::<String>()
            .cloned()
            .or_else(|| p.downcast_ref::<&str>().map(|s| s.to_string()))
            .unwrap_or_default();
        format!("PANIC in RunFolder::load/render: {msg}")
    })
}

fn case(plan: &Plan, n: u64) -> Result<(), String> {
    let b = base();
    let work = b.join(format!("case-{}-{n}", std::process::id()));
    let _ = std::fs::remove_dir_all(&work);
    let result = (|| {
        match plan.target {
            0 | 1 => {
                let d = work.join("run");
                copy_dir(&b.join("whole"), &d);
                let file = if plan.target == 0 {
                    "summary.json"
                } else {
                    "manifest.json"
                };
                let text = std::fs::read_to_string(d.join(file)).unwrap();
                std::fs::write(d.join(file), mutate(&text, &plan.edits)).unwrap();
                if plan.target == 0 {
                    refresh_manifest(&d);
                }
                library_report(&d)?;
                if n % 4 == 0 {
                    let o = bin().arg("report").arg(&d).output().unwrap();
                    check_exit(&o, "report")?;
                }
                Ok(())
            }
            2 | 3 => {
                let s0 = work.join("s0");
                let s1 = work.join("s1");
                copy_dir(&b.join("s0"), &s0);
                copy_dir(&b.join("s1"), &s1);
                let file = if plan.target == 2 {
                    "settings.json"
                } else {
                    "summary.json"
                };
                let text = std::fs::read_to_string(s1.join(file)).unwrap();
                std::fs::write(s1.join(file), mutate(&text, &plan.edits)).unwrap();
                refresh_manifest(&s1);
                let out = work.join("merged");
                let o = bin()
                    .arg("merge")
                    .arg(&s0)
                    .arg(&s1)
                    .arg("--out")
                    .arg(&out)
                    .output()
                    .unwrap();
                check_exit(&o, "merge")?;
                if o.status.success() {
                    let r = bin().arg("report").arg(&out).output().unwrap();
                    if !r.status.success() {
                        return Err(format!(
                            "merge accepted a shard whose result report refuses: {}",
                            String::from_utf8_lossy(&r.stderr)
                        ));
                    }
                }
                Ok(())
            }
            _ => {
                // A checkpoint after every batch of the whole run: resuming it finishes at once.
                let d = work.join("run");
                copy_dir(&b.join("whole"), &d);
                let summary: Value =
                    serde_json::from_str(&std::fs::read_to_string(d.join("summary.json")).unwrap())
                        .unwrap();
                let settings: Value = serde_json::from_str(
                    &std::fs::read_to_string(d.join("settings.json")).unwrap(),
                )
                .unwrap();
                let c = serde_json::json!({
                    "version": summary["version"],
                    "scenario_hash": summary["scenario_hash"],
                    "settings": settings,
                    "checkpoint": {"tally": summary["tally"], "batches_done": 2},
                });
                let text = mutate(&c.to_string(), &plan.edits);
                std::fs::write(d.join("checkpoint.json"), text).unwrap();
                let o = bin()
                    .arg("simulate")
                    .arg("--resume")
                    .arg(&d)
                    .output()
                    .unwrap();
                check_exit(&o, "simulate --resume")
            }
        }
    })();
    let _ = std::fs::remove_dir_all(&work);
    result
}

fn fuzz(cases: u32) {
    let seed = std::env::var("PROPTEST_RNG_SEED")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(DEFAULT_SEED);
    let mut runner = TestRunner::new(Config {
        cases,
        rng_seed: RngSeed::Fixed(seed),
        failure_persistence: None,
        max_shrink_iters: 50,
        ..Config::default()
    });
    base();
    let counter = std::sync::atomic::AtomicU64::new(0);
    let hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(|_| {}));
    let result = runner.run(&plan(), |p| {
        let n = counter.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
        case(&p, n).map_err(|e| TestCaseError::fail(format!("{e}\nplan: {p:?}")))
    });
    std::panic::set_hook(hook);
    if let Err(e) = result {
        panic!("{e}");
    }
}

/// The mutation itself does what it says (so that the fuzz cannot pass by mutating nothing).
#[test]
fn mutations_change_the_document() {
    let t = r#"{"a": 1, "b": [1, 2], "c": {"d": "x"}}"#;
    let paths_len = 6;
    let mut changed = 0;
    for pick in 0..paths_len {
        for op in [Op::Token(0), Op::Delete, Op::Grow] {
            if mutate(t, &[(pick, op)])
                != serde_json::to_string(&serde_json::from_str::<Value>(t).unwrap()).unwrap()
            {
                changed += 1;
            }
        }
    }
    assert!(changed >= 10, "{changed}");
    assert!(mutate(t, &[(0, Op::Token(0))]).contains("1e999"));
}

/// The short run of the normal suite.
#[test]
fn short_fuzz_of_run_folder_files() {
    fuzz(48);
}

/// The long run: `FUZZ_CASES=5000 cargo test --release --test fuzz_run_folders -- --ignored long`
#[test]
#[ignore = "long fuzz run; see the module docs for the command"]
fn long_fuzz_of_run_folder_files() {
    let cases: u32 = std::env::var("FUZZ_CASES")
        .ok()
        .and_then(|s| s.trim().parse().ok())
        .unwrap_or(5000);
    fuzz(cases);
}

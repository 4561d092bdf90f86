//! Helpers shared by the integration tests.

use std::path::PathBuf;
use std::process::{Command, Output, Stdio};

pub const DEMO: &str = include_str!("../../src/scenario/demo.json");

/// A fresh temporary folder for one test.
pub fn temp_dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("tether-risk-test-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Run the binary with arguments.
pub fn run(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tether-risk"))
        .args(args)
        .stdin(Stdio::null())
        .output()
        .expect("binary runs")
}

/// Run the binary with text on standard input.
pub fn run_stdin(args: &[&str], input: &str) -> Output {
    use std::io::Write;
    let mut child = Command::new(env!("CARGO_BIN_EXE_tether-risk"))
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("binary starts");
    child
        .stdin
        .take()
        .unwrap()
        .write_all(input.as_bytes())
        .unwrap();
    child.wait_with_output().unwrap()
}

pub fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

pub fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// The demo scenario as a JSON value, changed by `f`, written to a file; returns its path.
pub fn scenario_with(name: &str, f: impl FnOnce(&mut serde_json::Value)) -> PathBuf {
    let mut v: serde_json::Value = serde_json::from_str(DEMO).unwrap();
    f(&mut v);
    let dir = temp_dir(name);
    let p = dir.join("scenario.json");
    std::fs::write(&p, serde_json::to_string_pretty(&v).unwrap()).unwrap();
    p
}

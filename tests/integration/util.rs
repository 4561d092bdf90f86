//! Helpers shared by the integration tests.

use std::path::PathBuf;
use std::process::{Command, Output, Stdio};

use statrs::distribution::{ChiSquared, ContinuousCDF};

pub const DEMO: &str = include_str!("../../src/scenario/demo.json");

/// Significance level of every goodness-of-fit test of the statistical tier
/// (engine_validation, ondemand, hole_rate: Kolmogorov–Smirnov and chi-square tests of the
/// samplers against their exact laws). Each runs with a fixed seed, so it passes or fails
/// deterministically; alpha is the chance that a correct change which reseeds a test (a new
/// draw order, a new stream) makes it fail anyway. With about 20 such assertions the chance
/// that a correct reseeding change trips at least one is at most about 2 % (Bonferroni); a
/// failure after such a change is checked by rerunning the test with a few other seeds, never
/// by loosening alpha. Tests with a tolerance from an estimator's standard error use 3 to 4
/// standard errors (two-sided false-alarm rate 0.27 % to 0.006 % each).
pub const STAT_ALPHA: f64 = 0.001;

/// Run `histories` plain histories of `engine` (floor fraction 1, whole run, no stopping rule).
pub fn run_engine(
    engine: &tether_risk::engine::Engine<'_>,
    histories: u64,
    seed: u64,
    threads: usize,
) -> tether_risk::engine::Tally {
    let opts = tether_risk::engine::RunOptions {
        histories,
        seed,
        threads,
        floor_fraction: 1.0,
        shard: None,
        target_rel_error: None,
    };
    engine.run(&opts, &|_| {}).unwrap()
}

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

/// Build a model from a scenario JSON value (panics on an invalid test scenario).
pub fn model_of(v: &serde_json::Value) -> tether_risk::model::Model {
    let spec = tether_risk::scenario::parse_spec(&v.to_string()).expect("scenario parses");
    let sc = tether_risk::scenario::Scenario::from_spec(spec, None).expect("scenario valid");
    tether_risk::model::Model::build(sc).expect("model builds")
}

/// One bay of four carbon-fibre ribbons from the surface past L1, in validation mode: a
/// repairable 1-out-of-4 system with cut rate `lambda_per_day` per segment and `crews` crews of
/// rate `mu_per_day`, over 10 years.
pub fn one_bay_validation(lambda_per_day: f64, mu_per_day: f64, crews: u32) -> serde_json::Value {
    use serde_json::{json, Value};
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["tether"]["top_altitude_km"] = json!(60000.0);
    v["tether"]["cross_link_spacing_km"] = json!(60000.0);
    v["tether"]["ribbon_count"] = json!(4);
    v["tether"]["taper"] = json!("none");
    v["tether"]["material"] =
        json!({"name": "carbon fibre", "ultimate_strength_gpa": 7.0, "density_g_per_cm3": 1.79});
    v["tether"]["anchor_preload_n"] = json!(10.0);
    v["tether"]["traffic_load_n"] = json!(0.0);
    v["repair"] = Value::Null;
    v["run"]["mission_years"] = json!(10.0);
    v["synthetic_rates"] = json!({
        "cut_rate_per_segment_per_day": lambda_per_day,
        "repair_rate_per_crew_per_day": mu_per_day,
        "crews_per_bay": crews,
        "required_ribbons": 1
    });
    v
}

/// Pearson's chi-square test of homogeneity of two count vectors; cells whose pooled count is
/// below 5 are merged with the next. Returns (statistic, degrees of freedom, p-value).
pub fn homogeneity(a: &[u64], b: &[u64]) -> (f64, usize, f64) {
    let mut cells: Vec<(f64, f64)> = Vec::new();
    let (mut pa, mut pb) = (0.0, 0.0);
    for (&x, &y) in a.iter().zip(b) {
        pa += x as f64;
        pb += y as f64;
        if pa + pb >= 5.0 {
            cells.push((pa, pb));
            pa = 0.0;
            pb = 0.0;
        }
    }
    if pa + pb > 0.0 {
        match cells.last_mut() {
            Some(c) => {
                c.0 += pa;
                c.1 += pb;
            }
            None => cells.push((pa, pb)),
        }
    }
    let (na, nb): (f64, f64) = cells.iter().fold((0.0, 0.0), |s, c| (s.0 + c.0, s.1 + c.1));
    let n = na + nb;
    let mut stat = 0.0;
    for &(x, y) in &cells {
        let col = x + y;
        let (ea, eb) = (col * na / n, col * nb / n);
        stat += (x - ea).powi(2) / ea + (y - eb).powi(2) / eb;
    }
    let df = cells.len().saturating_sub(1);
    if df == 0 {
        return (0.0, 0, 1.0);
    }
    let p = 1.0 - ChiSquared::new(df as f64).unwrap().cdf(stat);
    (stat, df, p)
}

//! Issue 14 items 4-8 (reports say what each number is, unit-slip warnings, formats, plots,
//! flux-model files), through the binary.

use serde_json::{json, Value};

use crate::util::*;

fn summary_of(scenario: &std::path::Path, name: &str, histories: &str) -> Value {
    let out = temp_dir(name).join("run");
    let o = run(&[
        "simulate",
        scenario.to_str().unwrap(),
        "--histories",
        histories,
        "--threads",
        "2",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap()
}

/// The wait from detection to dispatch is split into waiting for a climber and waiting for
/// stock; the two parts add up to the mean wait of Little's law. Each scenario is built so
/// that only one cause is possible: with no spare segment anywhere a free climber can only
/// wait for stock; with stock for the whole mission (2000 segments per station, far above
/// any demand) a segment can only wait for a climber.
#[test]
fn issue14_wait_split_into_climber_and_stock() {
    let no_stock = scenario_with("wait-no-stock", |v| {
        v["environment"]["flux_scale_factor"] = json!(5.0);
        for s in v["repair"]["stations"].as_array_mut().unwrap() {
            s["initial_stock_segments"] = json!(0);
        }
    });
    let s = summary_of(&no_stock, "wait-no-stock-run", "300");
    let r = &s["repair"];
    let total = r["queue"]["mean_wait_hours"].as_f64().unwrap();
    assert!(total > 0.0, "{r}");
    assert_eq!(r["mean_wait_for_climber_hours"].as_f64().unwrap(), 0.0);
    assert!((r["mean_wait_for_stock_hours"].as_f64().unwrap() - total).abs() < 1e-9 * total);

    let slow = scenario_with("wait-slow", |v| {
        v["environment"]["flux_scale_factor"] = json!(30.0);
        for s in v["repair"]["stations"].as_array_mut().unwrap() {
            s["initial_stock_segments"] = json!(2000);
            s["climbers"] = json!(1);
        }
        v["repair"]["climber"]["speed_up_m_per_s"] = json!(1.0);
        v["repair"]["climber"]["speed_down_m_per_s"] = json!(1.0);
    });
    let s = summary_of(&slow, "wait-slow-run", "300");
    let r = &s["repair"];
    let total = r["queue"]["mean_wait_hours"].as_f64().unwrap();
    assert!(total > 0.0, "{r}");
    assert_eq!(r["mean_wait_for_stock_hours"].as_f64().unwrap(), 0.0);
    assert!((r["mean_wait_for_climber_hours"].as_f64().unwrap() - total).abs() < 1e-9 * total);
}

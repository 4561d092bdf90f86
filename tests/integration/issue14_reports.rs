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

fn check_json(scenario: &std::path::Path) -> Value {
    let o = run(&["check", scenario.to_str().unwrap(), "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    serde_json::from_str(&stdout(&o)).unwrap()
}

/// A 3 mm anchor width is too narrow for the anchor tension: the constant-stress taper widens
/// bay 0, and `check` and the report must say so. Independent answer: the widened width is
/// the one at which the bay's largest stress sigma = T / (N w t) equals allowable stress /
/// design safety factor (the taper's definition, a closed form).
#[test]
fn issue14_overridden_anchor_width_is_stated() {
    let narrow = scenario_with("narrow-anchor", |v| {
        v["tether"]["ribbon_width_mm"] = json!(3.0);
    });
    let d = check_json(&narrow);
    let w_mm = d["anchor_bay_width_mm"].as_f64().unwrap();
    let p = run(&["profile", narrow.to_str().unwrap(), "--format", "json"]);
    let p: Value = serde_json::from_str(&stdout(&p)).unwrap();
    let t_n = p["bays"][0]["max_tension_n"].as_f64().unwrap();
    let v: Value = serde_json::from_str(&std::fs::read_to_string(&narrow).unwrap()).unwrap();
    let n = v["tether"]["ribbon_count"].as_f64().unwrap();
    let thick_m = v["tether"]["ribbon_thickness_um"].as_f64().unwrap() * 1e-6;
    let sf = v["tether"]["design_safety_factor"].as_f64().unwrap();
    let allow_pa = d["allowable_stress_gpa"].as_f64().unwrap() * 1e9;
    let expected_mm = t_n / (n * thick_m * allow_pa / sf) * 1e3;
    assert!(
        w_mm > 3.0 && (w_mm - expected_mm).abs() < 1e-6 * expected_mm,
        "{w_mm} vs {expected_mm}"
    );
    let over = d["model_statement"]["overridden_settings"]
        .as_array()
        .unwrap();
    assert_eq!(over.len(), 1, "{over:?}");
    assert!(over[0].as_str().unwrap().contains("tether.ribbon_width_mm"));
    let text = stdout(&run(&["check", narrow.to_str().unwrap()]));
    assert!(
        text.contains("bay 0 as built")
            && text.contains("Overridden setting: tether.ribbon_width_mm"),
        "{text}"
    );
    // The demo overrides nothing.
    let demo = check_json(std::path::Path::new("demo"));
    assert!(demo["model_statement"]["overridden_settings"]
        .as_array()
        .unwrap()
        .is_empty());
    assert!(demo["model_statement"]["flux_model_source"]
        .as_str()
        .unwrap()
        .contains("1985"));

    // The report of a run states the model and the override, and has the per-year cuts.
    let out = temp_dir("narrow-anchor-run").join("run");
    let o = run(&[
        "simulate",
        narrow.to_str().unwrap(),
        "--histories",
        "300",
        "--threads",
        "2",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    for s in [
        "What the model assumes",
        "Overridden settings: tether.ribbon_width_mm",
        "The Monte Carlo rests on these assumptions",
        "valid for particle masses",
        "How many segments are cut each year?",
        "year 15",
    ] {
        assert!(html.contains(s), "report lacks {s:?}");
    }
    // Per-year cuts: the counts add up to the mission's cuts (an identity of the tally), and
    // each interval holds its estimate.
    let s: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let years = s["expected_cuts_by_year"].as_array().unwrap();
    assert_eq!(years.len(), 15);
    let total: u64 = years.iter().map(|y| y["cuts"].as_u64().unwrap()).sum();
    assert_eq!(total, s["tally"]["cuts"].as_u64().unwrap());
    for y in years {
        let (e, lo, hi) = (
            y["expected_cuts"].as_f64().unwrap(),
            y["ci_low"].as_f64().unwrap(),
            y["ci_high"].as_f64().unwrap(),
        );
        assert!(lo <= e && e <= hi && hi > 0.0, "{y}");
    }
}

/// Unit slips are warned about (not refused) with the value, the usual range and the unit, in
/// `check`'s warnings list (text and JSON), and the demo raises none of them. The usual ranges
/// are engineering judgement (no standard gives them); each example is a factor of 50 or more
/// outside its range.
#[test]
fn issue14_unit_slip_warnings() {
    let codes = |v: &Value| -> Vec<String> {
        v["warnings"]
            .as_array()
            .unwrap()
            .iter()
            .map(|w| w["code"].as_str().unwrap().to_string())
            .collect()
    };
    let demo = check_json(std::path::Path::new("demo"));
    assert!(
        !codes(&demo).iter().any(|c| c.starts_with("unit.")),
        "{:?}",
        codes(&demo)
    );
    let cases: [(&str, &str, Value, &str, &str); 4] = [
        (
            "tether",
            "ribbon_thickness_um",
            json!(0.02),
            "unit.ribbon_thickness",
            "0.02 um is outside the usual 1 to 500 um",
        ),
        (
            "tether",
            "ribbon_width_mm",
            json!(0.03),
            "unit.ribbon_width",
            "0.03 mm is outside the usual 1 to 1000 mm",
        ),
        (
            "tether",
            "traffic_load_n",
            json!(0.0),
            "unit.traffic_load_zero",
            "tether.traffic_load_n = 0 N",
        ),
        (
            "climber",
            "speed_up_m_per_s",
            json!(0.05),
            "unit.climber_speed",
            "0.05 m/s is outside the usual 0.1 to 500 m/s",
        ),
    ];
    for (section, key, value, code, words) in cases {
        let p = scenario_with(&format!("slip-{key}"), |v| {
            if section == "climber" {
                v["repair"]["climber"][key] = value.clone();
            } else {
                v[section][key] = value.clone();
            }
        });
        let j = check_json(&p);
        let c = codes(&j);
        assert!(c.iter().any(|x| x == code), "{key}: {c:?}");
        assert_eq!(
            c.iter().filter(|x| x.starts_with("unit.")).count(),
            1,
            "{key}: only its own unit warning: {c:?}"
        );
        let o = run(&["check", p.to_str().unwrap()]);
        assert!(
            o.status.success(),
            "a unit slip is a warning, not a refusal: {}",
            stderr(&o)
        );
        let text = stdout(&o);
        assert!(
            text.contains(&format!("[{code}]")) && text.contains(words),
            "{text}"
        );
    }
}

/// `init` writes every section with its defaults, and the file is the demo scenario (same
/// hash as the built-in one).
#[test]
fn issue14_init_writes_every_section() {
    let dir = temp_dir("init-all");
    let f = dir.join("s.json");
    let o = run(&["init", f.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: Value = serde_json::from_str(&std::fs::read_to_string(&f).unwrap()).unwrap();
    for (section, key) in [
        ("damage", "law"),
        ("damage", "hole_size"),
        ("environment", "lunar_ejecta"),
        ("environment", "moon_shielding_geometry"),
        ("repair", "dispatch"),
        ("repair", "resupply"),
        ("repair", "detection"),
        ("run", "confidence"),
    ] {
        assert!(!v[section][key].is_null(), "init left out {section}.{key}");
    }
    assert!(!v["repair"]["climber"]["mass_kg"].is_null());
    assert!(!v["tether"]["material"]["notch_model"].is_null());
    let a = check_json(&f);
    let b = check_json(std::path::Path::new("demo"));
    assert_eq!(a["scenario_hash"], b["scenario_hash"]);
}

/// `--histories 1e4` and `20k` are read as 10000 and 20000 on every command that takes
/// histories; a fraction is refused with the accepted forms; a scenario file may write 1e4.
#[test]
fn issue14_histories_in_scientific_and_k_notation() {
    let root = temp_dir("histories-forms");
    for (h, n) in [("1e3", 1000u64), ("2k", 2000), ("1_500", 1500)] {
        let out = root.join(format!("run-{n}"));
        let o = run(&[
            "simulate",
            "demo",
            "--histories",
            h,
            "--threads",
            "2",
            "--out",
            out.to_str().unwrap(),
        ]);
        assert!(o.status.success(), "{h}: {}", stderr(&o));
        let s: Value =
            serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap())
                .unwrap();
        assert_eq!(s["histories"].as_u64(), Some(n), "{h}");
    }
    for cmd in ["simulate", "sweep", "sensitivity"] {
        let o = run(&[cmd, "demo", "--histories", "1.5"]);
        assert_eq!(o.status.code(), Some(2), "{cmd}");
        assert!(stderr(&o).contains("20k"), "{cmd}: {}", stderr(&o));
    }
    let p = scenario_with("histories-float", |v| v["run"]["histories"] = json!(1e4));
    let o = run(&["check", p.to_str().unwrap(), "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
}

/// `--format csv` emits CSV on simulate and check; terminal tables use words with units and
/// whole years; error paths never show `?:` or `.:`, and a cause is not printed twice.
#[test]
fn issue14_formats_tables_and_error_wording() {
    let out = temp_dir("formats").join("run");
    let o = run(&[
        "simulate",
        "demo",
        "--histories",
        "300",
        "--threads",
        "2",
        "--out",
        out.to_str().unwrap(),
        "--format",
        "csv",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let csv = stdout(&o);
    assert!(csv.starts_with("year,survival,ci_low,ci_high,"), "{csv}");
    assert!(csv.lines().nth(1).unwrap().starts_with("1,"), "{csv}");
    let o = run(&["check", "demo", "--format", "csv"]);
    assert!(
        stdout(&o).starts_with("quantity,value,unit\n"),
        "{}",
        stdout(&o)
    );
    let o = run(&[
        "simulate",
        "demo",
        "--histories",
        "300",
        "--threads",
        "2",
        "--out",
        out.to_str().unwrap(),
        "--force",
    ]);
    let text = stdout(&o);
    for words in [
        "mission year",
        "upper 95 % bound",
        "altitude band (km)",
        "year 1 ",
        "recommended initial stock (segments)",
    ] {
        assert!(
            text.contains(words),
            "terminal text lacks {words:?}:\n{text}"
        );
    }
    assert!(
        !text.contains("band_km") && !text.contains("1.000  "),
        "{text}"
    );
    assert!(!text.contains("1 losses"));
    // Error paths.
    let o = run_stdin(&["check", "-"], "{");
    let e = stderr(&o);
    assert!(
        !e.contains("?:") && !e.contains(".:") && e.contains("scenario file"),
        "{e}"
    );
    let o = run(&["check", "/nonexistent/x.json"]);
    let e = stderr(&o);
    assert_eq!(e.matches("No such file").count(), 1, "{e}");
    assert!(!e.contains("caused by"), "{e}");
}

/// A missing flux-model file is reported as such (not as an unreadable scenario), and
/// `env FILE` tabulates a scenario's own environment at its bays. Independent answer for
/// the shielding column: the same factor `profile` reports for bay 0 (the model's own table).
#[test]
fn issue14_flux_file_and_env_of_a_scenario() {
    let p = scenario_with("missing-flux", |v| {
        v["environment"]["flux_model"] = json!({"table_file": "no-such-flux.json"});
    });
    let o = run(&["check", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(
        e.contains("flux-model file")
            && e.contains("no-such-flux.json")
            && !e.contains("cannot read scenario file"),
        "{e}"
    );
    let o = run(&["env", "demo", "--mass-g", "1e-3", "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let rows: Value = serde_json::from_str(&stdout(&o)).unwrap();
    let prof: Value =
        serde_json::from_str(&stdout(&run(&["profile", "demo", "--format", "json"]))).unwrap();
    let bay0 = &prof["bays"][0];
    assert!(
        (rows[0]["altitude_km"].as_f64().unwrap() - 25.0).abs() < 1e-9,
        "{}",
        rows[0]
    );
    let a = rows[0]["shielding_factor"].as_f64().unwrap();
    let b = bay0["shielding_factor"].as_f64().unwrap();
    assert!((a - b).abs() < 1e-9, "{a} vs {b}");
    // A scale factor in the scenario scales the local flux.
    let scaled = scenario_with("env-scaled", |v| {
        v["environment"]["flux_scale_factor"] = json!(3.0)
    });
    let o = run(&[
        "env",
        scaled.to_str().unwrap(),
        "--mass-g",
        "1e-3",
        "--altitude-km",
        "25",
        "--format",
        "json",
    ]);
    let r2: Value = serde_json::from_str(&stdout(&o)).unwrap();
    let ratio = r2[0]["local_flux_per_m2_per_year"].as_f64().unwrap()
        / rows[0]["local_flux_per_m2_per_year"].as_f64().unwrap();
    assert!((ratio - 3.0).abs() < 1e-9, "{ratio}");
}

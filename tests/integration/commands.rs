//! The foundation commands through the real binary: init, check, env, profile, and their
//! machine-readable contracts.

use crate::util::*;
use serde_json::Value;

#[test]
fn init_writes_a_scenario_that_checks() {
    let dir = temp_dir("init");
    let p = dir.join("mine.json");
    let o = run(&["init", p.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let o = run(&["check", p.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    // A second init refuses to overwrite without --force.
    let o = run(&["init", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("--force"));
}

#[test]
fn check_prints_design_quantities_and_caution() {
    let o = run(&["check", "demo"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let s = stdout(&o);
    for part in [
        "L1 distance from Moon centre",
        "tether length",
        "bays",
        "largest tension",
        "smallest intact margin",
        "counterweight",
        "damaging strikes",
        "Critical hole width",
        "heaviest spare segment",
        "climber payload",
        "engineering estimates",
    ] {
        assert!(s.contains(part), "missing `{part}` in:\n{s}");
    }
}

#[test]
fn check_reads_stdin() {
    let o = run_stdin(&["check", "-", "--format", "json"], DEMO);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(v["bay_count"], 1600);
}

#[test]
fn profile_json_contract() {
    let o = run(&["profile", "demo", "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: Value = serde_json::from_str(&stdout(&o)).unwrap();
    // CR3BP with JPL DE430 GMs and D = 384 400 km: L1 58 019.1 km from the Moon's centre
    // (gamma_L1 = 0.1509342834 from the quintic; check value computed independently).
    let l1 = v["l1_distance_from_moon_center_km"].as_f64().unwrap();
    assert!((l1 - 58_019.1).abs() < 0.1, "{l1}");
    assert_eq!(v["tether_length_km"].as_f64().unwrap(), 80_000.0);
    let bays = v["bays"].as_array().unwrap();
    assert_eq!(bays.len() as u64, v["bay_count"].as_u64().unwrap());
    for key in [
        "bay_index",
        "bottom_altitude_km",
        "top_altitude_km",
        "max_tension_n",
        "margin",
        "damaging_strike_rate_per_year",
    ] {
        assert!(bays[0].get(key).is_some(), "missing {key}");
    }
    // Tension peaks at the bay holding L1 (the effective field changes sign there).
    let tmax = bays
        .iter()
        .max_by(|a, b| {
            a["max_tension_n"]
                .as_f64()
                .unwrap()
                .total_cmp(&b["max_tension_n"].as_f64().unwrap())
        })
        .unwrap();
    let lo = tmax["bottom_altitude_km"].as_f64().unwrap();
    let hi = tmax["top_altitude_km"].as_f64().unwrap();
    assert!(
        lo <= 56_281.7 && 56_281.7 <= hi,
        "peak tension in {lo}..{hi} km"
    );
}

#[test]
fn profile_csv_has_one_row_per_bay() {
    let o = run(&["profile", "demo", "--format", "csv"]);
    assert!(o.status.success());
    let s = stdout(&o);
    assert_eq!(s.lines().count(), 1 + 1600);
    assert!(s.starts_with("bay,bottom_km,top_km"));
}

#[test]
fn env_json_contract_and_reference_values() {
    let o = run(&[
        "env",
        "--altitude-km",
        "0,100,1000",
        "--mass-g",
        "1e-6,1e-3",
        "--format",
        "json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: Value = serde_json::from_str(&stdout(&o)).unwrap();
    let rows = v.as_array().unwrap();
    assert_eq!(rows.len(), 6);
    for r in rows {
        for key in [
            "altitude_km",
            "mass_g",
            "diameter_m",
            "model_flux_per_m2_per_year",
            "shielding_factor",
            "focusing_factor",
            "local_flux_per_m2_per_year",
        ] {
            assert!(r.get(key).is_some(), "missing {key}");
        }
    }
    // ECSS-E-ST-10-04C Rev.1 Table J-5: 1e-6 g -> 1.49 m^-2 yr^-1, d = 9.142e-3 cm at 2.5 g/cm^3.
    let r = &rows[0];
    assert!((r["model_flux_per_m2_per_year"].as_f64().unwrap() / 1.49 - 1.0).abs() < 0.005);
    assert!((r["diameter_m"].as_f64().unwrap() / 91.42e-6 - 1.0).abs() < 1e-3);
    // ECSS C-26/C-27 with R = 1737.4 km, no atmosphere: 0.5 at the surface, 0.662702 at 100 km.
    assert!((r["shielding_factor"].as_f64().unwrap() - 0.5).abs() < 1e-9);
    assert!((rows[2]["shielding_factor"].as_f64().unwrap() - 0.662702).abs() < 1e-6);
    let local = r["local_flux_per_m2_per_year"].as_f64().unwrap();
    let model = r["model_flux_per_m2_per_year"].as_f64().unwrap();
    let f = r["focusing_factor"].as_f64().unwrap();
    let earth = r["earth_shielding_factor"].as_f64().unwrap();
    assert!((local - model * 0.5 * f * earth).abs() <= 1e-9 * local);
    // Earth's shielding at the Moon's distance is 0.99993 (REFERENCES: C-26/C-27, R_A = 100 km).
    assert!((earth - 0.99993).abs() < 1e-5, "{earth}");
}

#[test]
fn env_refuses_bad_values() {
    let o = run(&["env", "--mass-g=-1"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("--mass-g = -1"));
}

#[test]
fn closed_pipe_is_not_a_panic() {
    use std::io::Read;
    use std::process::{Command, Stdio};
    let mut child = Command::new(env!("CARGO_BIN_EXE_tether-risk"))
        .args(["profile", "demo"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut out = child.stdout.take().unwrap();
    let mut buf = [0u8; 64];
    let _ = out.read(&mut buf).unwrap();
    drop(out);
    let o = child.wait_with_output().unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(!err.contains("panicked"), "{err}");
}

/// `simulate --shard I/3` three times, then `merge`: the merged summary.json is byte-identical
/// to one run of the same histories and seed (plain and rare-event estimators).
#[test]
fn three_shards_merge_to_the_single_run_bit_for_bit() {
    for extra in [&[][..], &["--rare-event", "10"][..]] {
        let dir = temp_dir(&format!("shards{}", extra.len()));
        let d = |n: &str| dir.join(n).to_str().unwrap().to_string();
        let mut shard_dirs = Vec::new();
        for i in 0..3 {
            let out = d(&format!("s{i}"));
            let shard = format!("{i}/3");
            let mut args = vec![
                "simulate",
                "demo",
                "--histories",
                "2500",
                "--shard",
                &shard,
                "--out",
                &out,
            ];
            args.extend_from_slice(extra);
            let o = run(&args);
            assert!(o.status.success(), "{}", stderr(&o));
            shard_dirs.push(out);
        }
        let all = d("all");
        let mut margs = vec!["merge"];
        margs.extend(shard_dirs.iter().map(String::as_str));
        margs.extend(["--out", &all]);
        let o = run(&margs);
        assert!(o.status.success(), "{}", stderr(&o));
        let one = d("one");
        let mut args = vec!["simulate", "demo", "--histories", "2500", "--out", &one];
        args.extend_from_slice(extra);
        assert!(run(&args).status.success());
        let a = std::fs::read(dir.join("all/summary.json")).unwrap();
        let b = std::fs::read(dir.join("one/summary.json")).unwrap();
        assert!(a == b, "merged and single-run summaries differ ({extra:?})");
        // A missing shard is refused.
        let o = run(&["merge", &shard_dirs[0], &shard_dirs[1], "--out", &d("bad")]);
        assert_eq!(o.status.code(), Some(2));
        assert!(
            stderr(&o).contains("shard 2/3 is missing"),
            "{}",
            stderr(&o)
        );
    }
}

//! `tether-risk sensitivity`: one-at-a-time swings through the real binary.

use serde_json::Value;

use crate::util::*;

#[test]
fn sensitivity_table_json_and_chart() {
    // The demo at twice the flux (losses at the 1e-2 level) with few histories: every input
    // runs at its low and high end with the base's seed and histories.
    let scen = scenario_with("sens-demo", |v| {
        v["environment"]["flux_scale_factor"] = 2.0.into();
        v["run"]["mission_years"] = 15.0.into();
    });
    let dir = temp_dir("sens-out");
    let o = run(&[
        "sensitivity",
        scen.to_str().unwrap(),
        "--histories",
        "400",
        "--no-fast-estimate",
        "--out",
        dir.to_str().unwrap(),
        "--force",
        "--format",
        "json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: Value = serde_json::from_str(&stdout(&o)).unwrap();
    let rows = v["rows"].as_array().unwrap();
    assert!(rows.len() >= 8, "{} rows", rows.len());
    for r in rows {
        for k in [
            "input",
            "low",
            "high",
            "loss_low",
            "loss_base",
            "loss_high",
            "swing",
        ] {
            assert!(!r[k].is_null(), "{k} missing in {r}");
        }
        for k in ["loss_low", "loss_base", "loss_high"] {
            let l = &r[k]["loss_probability"];
            if !l.is_null() {
                assert!(
                    l.get("ci_low").is_some() && l.get("ci_high").is_some(),
                    "{l}"
                );
                assert!(l.get("resolved").is_some() && l.get("method").is_some());
            }
        }
        // Each range names its source or says it is an engineering assumption.
        let basis = r["range_basis"].as_str().unwrap();
        assert!(
            basis.contains("[READ]") || basis.contains("engineering assumption"),
            "{basis}"
        );
        // Common random numbers: the base is the same run in every row.
        assert_eq!(r["loss_base"], rows[0]["loss_base"]);
        let status = r["swing_status"].as_str().unwrap();
        assert!(status == "measured" || status.starts_with("unresolved swing"));
    }
    // Sorted: measured swings first, largest first.
    let measured: Vec<f64> = rows
        .iter()
        .take_while(|r| r["swing_status"] == "measured")
        .map(|r| r["swing"].as_f64().unwrap())
        .collect();
    assert!(measured.windows(2).all(|w| w[0] >= w[1]), "{measured:?}");
    assert!(rows[measured.len()..]
        .iter()
        .all(|r| r["swing_status"] != "measured"));
    // Flux: three times the flux loses more than a third of it (ECSS range 0.33 to 3).
    let flux = rows
        .iter()
        .find(|r| r["input"] == "meteoroid flux scale factor")
        .unwrap();
    assert!(
        flux["loss_high"]["loss_probability"]["estimate"]
            .as_f64()
            .unwrap()
            > flux["loss_low"]["loss_probability"]["estimate"]
                .as_f64()
                .unwrap()
    );
    // The oblique footprint applies although the base leaves it at the law's default (null):
    // an ellipse d_p x d_p/cos(theta) removes more width than the round hole (REFERENCES-damage
    // §1.2, geometry), so the high end loses more.
    let foot = rows
        .iter()
        .find(|r| r["input"] == "oblique hole footprint (ellipse along the track)")
        .expect("footprint row");
    assert!(foot["base"].is_null(), "{}", foot["base"]);
    let est = |r: &Value, k: &str| r[k]["loss_probability"]["estimate"].as_f64().unwrap();
    assert!(est(foot, "loss_high") > est(foot, "loss_low"), "{foot}");
    // The notch model runs net section against Whitney–Nuismer point stress.
    let notch = rows
        .iter()
        .find(|r| r["input"] == "notch model (residual strength of a holed ribbon)")
        .expect("notch row");
    assert_eq!(notch["high"]["model"], "point_stress");
    assert!(est(notch, "loss_high") >= est(notch, "loss_low"), "{notch}");
    let md = std::fs::read_to_string(dir.join("sensitivity.md")).unwrap();
    assert!(
        md.contains("false .. true on/off (base model default)"),
        "{md}"
    );
    assert!(md.contains("net_section .. point_stress model"), "{md}");
    for f in ["sensitivity.csv", "sensitivity.md", "sensitivity.json"] {
        assert!(dir.join(f).exists(), "{f}");
    }
    let png = std::fs::read(dir.join("sensitivity.png")).unwrap();
    assert_eq!(&png[1..4], b"PNG");
    let svg = std::fs::read_to_string(dir.join("sensitivity.svg")).unwrap();
    assert!(svg.contains("<svg") && svg.contains("meteoroid flux scale factor"));
    let csv = std::fs::read_to_string(dir.join("sensitivity.csv")).unwrap();
    assert!(csv.starts_with("input,paths,low,base,high,unit,loss_low,"));
    let _ = std::fs::remove_dir_all(&dir);
}

//! Bad scenarios: each must be refused with exit code 2 and a message that names the field, the
//! value, the allowed range and the unit (or the physical reason), never a panic.

use crate::util::*;
use serde_json::{json, Value};

/// Check a scenario changed by `f`; return stderr after asserting exit code 2 and no panic.
fn refused(name: &str, f: impl FnOnce(&mut Value)) -> String {
    let p = scenario_with(name, f);
    let o = run(&["check", p.to_str().unwrap()]);
    let err = stderr(&o);
    assert_eq!(
        o.status.code(),
        Some(2),
        "{name}: expected exit 2, stderr: {err}"
    );
    assert!(!err.contains("panicked"), "{name}: panic: {err}");
    assert!(err.starts_with("error: "), "{name}: {err}");
    err
}

fn has(err: &str, parts: &[&str]) {
    for p in parts {
        assert!(err.contains(p), "expected `{p}` in: {err}");
    }
}

#[test]
fn unknown_top_level_field_suggests_nearest() {
    let e = refused("top-typo", |v| {
        let env = v["environment"].take();
        v.as_object_mut().unwrap().remove("environment");
        v["enviroment"] = env;
    });
    has(
        &e,
        &["unknown field `enviroment`", "did you mean `environment`"],
    );
}

#[test]
fn unknown_tether_field_suggests_nearest() {
    let e = refused("ribon", |v| {
        let t = v["tether"].as_object_mut().unwrap();
        let n = t.remove("ribbon_count").unwrap();
        t.insert("ribon_count".into(), n);
    });
    has(
        &e,
        &[
            "tether",
            "unknown field `ribon_count`",
            "did you mean `ribbon_count`",
        ],
    );
}

#[test]
fn unknown_nested_field_names_its_path() {
    let e = refused("climber-typo", |v| {
        v["repair"]["climber"]["payload_kgs"] = json!(400.0);
    });
    has(
        &e,
        &["repair.climber", "payload_kgs", "did you mean `payload_kg`"],
    );
}

#[test]
fn unknown_side_suggests_near() {
    let e = refused("side", |v| v["tether"]["side"] = json!("nera"));
    has(&e, &["tether.side", "`nera`", "did you mean `near`"]);
}

#[test]
fn unknown_flux_model_suggests_builtin() {
    let e = refused("flux", |v| v["environment"]["flux_model"] = json!("grun85"));
    has(
        &e,
        &[
            "environment.flux_model",
            "grun85",
            "did you mean `grun1985`",
        ],
    );
}

#[test]
fn negative_width_names_range_and_unit() {
    let e = refused("width", |v| v["tether"]["ribbon_width_mm"] = json!(-3.0));
    has(&e, &["tether.ribbon_width_mm = -3", "allowed (0, 5000] mm"]);
}

#[test]
fn zero_ribbons_refused() {
    let e = refused("count0", |v| v["tether"]["ribbon_count"] = json!(0));
    has(&e, &["tether.ribbon_count = 0", "[1, 64] ribbons"]);
}

#[test]
fn too_many_ribbons_refused() {
    let e = refused("count65", |v| v["tether"]["ribbon_count"] = json!(65));
    has(&e, &["tether.ribbon_count = 65", "[1, 64]"]);
}

#[test]
fn zero_thickness_refused() {
    let e = refused("thick", |v| v["tether"]["ribbon_thickness_um"] = json!(0.0));
    has(&e, &["tether.ribbon_thickness_um = 0", "(0, 10000] um"]);
}

#[test]
fn strength_in_mpa_instead_of_gpa_refused() {
    let e = refused("gpa", |v| {
        v["tether"]["material"]["ultimate_strength_gpa"] = json!(5800.0)
    });
    has(
        &e,
        &[
            "tether.material.ultimate_strength_gpa = 5800",
            "(0, 200] GPa",
        ],
    );
}

#[test]
fn density_in_kg_per_m3_instead_of_g_per_cm3_refused() {
    let e = refused("rho", |v| {
        v["tether"]["material"]["density_g_per_cm3"] = json!(1560.0)
    });
    has(
        &e,
        &[
            "tether.material.density_g_per_cm3 = 1560",
            "[0.1, 25] g/cm^3",
        ],
    );
}

#[test]
fn knockdown_above_one_refused() {
    let e = refused("kd", |v| {
        v["tether"]["material"]["strength_knockdowns"]["long_gauge"] = json!(1.5)
    });
    has(
        &e,
        &[
            "tether.material.strength_knockdowns.long_gauge = 1.5",
            "(0, 1]",
        ],
    );
}

#[test]
fn particle_density_zero_refused() {
    let e = refused("prho", |v| {
        v["environment"]["particle_density_g_per_cm3"] = json!(0.0)
    });
    has(
        &e,
        &[
            "environment.particle_density_g_per_cm3 = 0",
            "[0.1, 10] g/cm^3",
            "ECSS",
        ],
    );
}

#[test]
fn cross_link_spacing_longer_than_tether_refused() {
    let e = refused("spacing", |v| {
        v["tether"]["cross_link_spacing_km"] = json!(90000.0)
    });
    has(
        &e,
        &[
            "infeasible",
            "tether.cross_link_spacing_km = 90000 km",
            "longer than the tether",
        ],
    );
}

#[test]
fn top_below_l1_refused() {
    let e = refused("top", |v| {
        v["tether"]["top_altitude_km"] = json!(30000.0);
        v["repair"]["stations"][1]["altitude_km"] = json!(20000.0);
    });
    has(&e, &["infeasible", "below L1", "counterweight"]);
}

#[test]
fn untapered_ribbon_cannot_hold_its_own_weight() {
    let e = refused("weight", |v| v["tether"]["taper"] = json!("none"));
    has(
        &e,
        &[
            "infeasible",
            "cannot hold their own weight",
            "margin",
            "breaking length",
        ],
    );
}

#[test]
fn climber_that_cannot_lift_a_segment_refused() {
    let e = refused("payload", |v| {
        v["repair"]["climber"]["payload_kg"] = json!(1.0)
    });
    has(
        &e,
        &[
            "infeasible",
            "repair.climber.payload_kg = 1 kg",
            "cannot carry one spare segment",
        ],
    );
}

#[test]
fn station_off_the_tether_refused() {
    let e = refused("station", |v| {
        v["repair"]["stations"][1]["altitude_km"] = json!(90000.0)
    });
    has(
        &e,
        &[
            "repair.stations[1].altitude_km = 90000 km",
            "off the tether",
            "0 km to 80000 km",
        ],
    );
}

/// A base off the tether's foot is a design (joined by a surface run, see surface_run.rs);
/// only coordinates that name no point on the Moon are refused.
#[test]
fn anchor_latitude_beyond_the_pole_refused() {
    let e = refused("lat", |v| v["tether"]["anchor_latitude_deg"] = json!(91.0));
    has(&e, &["tether.anchor_latitude_deg = 91", "[-90, 90] deg"]);
}

#[test]
fn anchor_longitude_out_of_range_refused() {
    let e = refused("lon", |v| {
        v["tether"]["anchor_longitude_deg"] = json!(400.0)
    });
    has(
        &e,
        &["tether.anchor_longitude_deg = 400", "[-180, 360] deg"],
    );
}

#[test]
fn anchor_latitude_not_a_number_refused() {
    let e = refused("lat-nan", |v| {
        v["tether"]["anchor_latitude_deg"] = json!("north")
    });
    has(&e, &["anchor_latitude_deg"]);
}

#[test]
fn negative_mission_refused() {
    let e = refused("mission", |v| v["run"]["mission_years"] = json!(-1.0));
    has(&e, &["run.mission_years = -1", "[0, 1000] years"]);
}

#[test]
fn zero_histories_refused() {
    let e = refused("hist", |v| v["run"]["histories"] = json!(0));
    has(&e, &["run.histories = 0", "histories"]);
}

#[test]
fn confidence_above_one_refused() {
    let e = refused("conf", |v| v["run"]["confidence"] = json!(1.5));
    has(&e, &["run.confidence = 1.5", "[0.5, 0.999999]"]);
}

#[test]
fn design_safety_factor_below_one_refused() {
    let e = refused("sf", |v| v["tether"]["design_safety_factor"] = json!(0.5));
    has(&e, &["tether.design_safety_factor = 0.5", "[1, 100]"]);
}

#[test]
fn hole_factor_out_of_range_refused() {
    let e = refused("hole", |v| {
        v["damage"] = json!({"law": "thin_film_hole", "hole_factor": 5.0})
    });
    has(&e, &["damage.hole_factor = 5", "[1, 3]"]);
}

#[test]
fn wrong_type_names_field() {
    let e = refused("type", |v| v["tether"]["ribbon_count"] = json!("six"));
    has(&e, &["tether.ribbon_count", "invalid type", "line"]);
}

#[test]
fn missing_section_named() {
    let e = refused("missing", |v| {
        v.as_object_mut().unwrap().remove("tether");
    });
    has(&e, &["missing field `tether`"]);
}

#[test]
fn unknown_detection_kind_suggested() {
    let e = refused("detect", |v| {
        v["repair"]["detection"] = json!({"kind": "fixd", "delay_hours": 2.0})
    });
    has(&e, &["repair.detection", "`fixd`", "did you mean `fixed`"]);
}

#[test]
fn no_climbers_refused() {
    let e = refused("climbers", |v| {
        v["repair"]["stations"][0]["climbers"] = json!(0);
        v["repair"]["stations"][1]["climbers"] = json!(0);
    });
    has(&e, &["repair.stations", "no station has a climber"]);
}

#[test]
fn empty_station_list_refused() {
    let e = refused("nostations", |v| v["repair"]["stations"] = json!([]));
    has(&e, &["repair.stations", "at least one station"]);
}

#[test]
fn truncated_json_gives_line_and_column() {
    let dir = temp_dir("truncated");
    let p = dir.join("s.json");
    std::fs::write(&p, &DEMO[..DEMO.len() / 2]).unwrap();
    let o = run(&["check", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    has(&stderr(&o), &["EOF", "line"]);
}

#[test]
fn huge_number_refused_not_infinite() {
    let dir = temp_dir("huge");
    let p = dir.join("s.json");
    std::fs::write(
        &p,
        DEMO.replace("\"ribbon_width_mm\": 12.0", "\"ribbon_width_mm\": 1e999"),
    )
    .unwrap();
    let o = run(&["check", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    has(&stderr(&o), &["ribbon_width_mm"]);
}

#[test]
fn missing_file_is_an_input_error() {
    let o = run(&["check", "/nonexistent/scenario.json"]);
    assert_eq!(o.status.code(), Some(2));
    has(
        &stderr(&o),
        &["cannot read scenario file /nonexistent/scenario.json"],
    );
}

#[test]
fn non_positive_splice_requirement_is_refused_with_field_range_and_unit() {
    let e = refused("p90-target", |v| {
        v["repair"]["splice_p90_target_hours"] = json!(-5.0);
    });
    has(&e, &["repair.splice_p90_target_hours", "-5", "h"]);
}

#[test]
fn solar_climbers_with_a_surface_run_are_refused_with_the_reason() {
    let e = refused("solar-surface", |v| {
        v["tether"]["anchor_latitude_deg"] = json!(80.0);
        v["repair"]["climber"]["power"] =
            json!({"kind": "solar", "shade_speed_m_per_s": 0.0, "sun_angle_at_start_deg": 0.0});
    });
    has(&e, &["repair.climber.power", "surface run", "beamed"]);
}

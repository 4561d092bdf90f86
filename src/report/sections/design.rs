//! The design section: the tether as built from design.json.

use serde_json::Value;

use crate::report::failure::year_label;
use crate::report::html::{ReportTable, Section};
use crate::report::reader::RunFolder;
use crate::report::table::{sig, Table};

pub(crate) fn design_section(folder: &RunFolder) -> Section {
    let s = &folder.summary;
    let mut paragraphs = vec![format!(
        "Scenario \"{}\" (hash {}), {} mission years.",
        s.scenario,
        s.scenario_hash,
        year_label(s.mission_years)
    )];
    if let Some(spec) = &folder.scenario {
        paragraphs.push(spec.description.clone());
    }
    let mut tables = Vec::new();
    if let Some(d) = &folder.design {
        let mut t = Table::new(["quantity", "value", "unit"]);
        let mut row = |q: &str, key: &str, unit: &str, digits: usize| {
            let value = match d.get(key) {
                Some(Value::Number(n)) if n.is_u64() => n.to_string(),
                Some(v) => match v.as_f64() {
                    Some(x) => sig(x, digits),
                    None => return,
                },
                None => return,
            };
            t.push([q.to_string(), value, unit.to_string()]);
        };
        row("tether length (anchor to top)", "tether_length_km", "km", 6);
        row(
            "Lagrange point altitude above surface",
            "lagrange_altitude_km",
            "km",
            6,
        );
        row("ribbons", "ribbon_count", "", 3);
        row("cross-link spacing", "cross_link_spacing_km", "km", 4);
        row("bays", "bay_count", "", 6);
        row("allowable stress", "allowable_stress_gpa", "GPa", 4);
        row(
            "tension at anchor (with traffic)",
            "anchor_tension_n",
            "N",
            5,
        );
        row("largest tension", "max_tension_n", "N", 5);
        row("smallest intact margin", "min_margin", "-", 4);
        row("ribbon mass", "ribbon_mass_kg", "kg", 4);
        row("cross-link mass", "cross_links_mass_kg", "kg", 4);
        row("counterweight", "counterweight_kg", "kg", 4);
        row(
            "damaging strikes, whole tether",
            "damaging_strike_rate_per_year",
            "per year",
            4,
        );
        row(
            "heaviest spare segment",
            "heaviest_spare_segment_kg",
            "kg",
            4,
        );
        row("climber payload", "climber_payload_kg", "kg", 4);
        let mut t2 = t.clone();
        if let Some(m) = d.get("material").and_then(Value::as_str) {
            t2.rows.insert(
                3.min(t2.rows.len()),
                vec!["ribbon material".into(), m.into(), String::new()],
            );
        }
        if let Some(w) = d.get("ribbon_width_range_mm").and_then(Value::as_array) {
            let w: Vec<String> = w
                .iter()
                .filter_map(Value::as_f64)
                .map(|x| sig(x, 4))
                .collect();
            t2.push([
                "ribbon width (anchor / widest)".to_string(),
                w.join(" / "),
                "mm".to_string(),
            ]);
        }
        tables.push(ReportTable::from_table(
            "Design key numbers (from design.json)",
            &t2,
        ));
    } else {
        paragraphs
            .push("No design.json in this folder: the design key numbers are left out.".into());
    }
    if let Some(repair) = folder.scenario.as_ref().and_then(|v| v.repair.as_ref()) {
        let mut t = Table::new([
            "station",
            "altitude (km)",
            "climbers",
            "initial stock (segments)",
        ]);
        for x in &repair.stations {
            t.push([
                x.name.clone(),
                sig(x.altitude_km, 6),
                x.climbers.to_string(),
                x.initial_stock_segments.to_string(),
            ]);
        }
        tables.push(ReportTable::from_table(
            "Repair stations (from scenario.json)",
            &t,
        ));
    }
    Section {
        heading: "Scenario and design".into(),
        paragraphs,
        tables,
        ..Default::default()
    }
}

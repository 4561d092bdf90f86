//! The design section: the tether as built from design.json.

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
        let mut row = |q: &str, value: String, unit: &str| {
            t.push([q.to_string(), value, unit.to_string()]);
        };
        row(
            "tether length (anchor to top)",
            sig(d.tether_length_km, 6),
            "km",
        );
        row(
            "Lagrange point altitude above surface",
            sig(d.lagrange_altitude_km, 6),
            "km",
        );
        row("ribbons", d.ribbon_count.to_string(), "");
        row("ribbon material", d.material.clone(), "");
        row("cross-link spacing", sig(d.cross_link_spacing_km, 4), "km");
        row("bays", d.bay_count.to_string(), "");
        row("allowable stress", sig(d.allowable_stress_gpa, 4), "GPa");
        row(
            "tension at anchor (with traffic)",
            sig(d.anchor_tension_n, 5),
            "N",
        );
        row("largest tension", sig(d.max_tension_n, 5), "N");
        row("smallest intact margin", sig(d.min_margin, 4), "-");
        row("ribbon mass", sig(d.ribbon_mass_kg, 4), "kg");
        row("cross-link mass", sig(d.cross_links_mass_kg, 4), "kg");
        row("counterweight", sig(d.counterweight_kg, 4), "kg");
        row(
            "damaging strikes, whole tether",
            sig(d.damaging_strike_rate_per_year, 4),
            "per year",
        );
        row(
            "heaviest spare segment",
            sig(d.heaviest_spare_segment_kg, 4),
            "kg",
        );
        if let Some(p) = d.climber_payload_kg {
            row("climber payload", sig(p, 4), "kg");
        }
        let [w0, w1] = d.ribbon_width_range_mm;
        row(
            "ribbon width (anchor / widest)",
            format!("{} / {}", sig(w0, 4), sig(w1, 4)),
            "mm",
        );
        tables.push(ReportTable::from_table(
            "Design key numbers (from design.json)",
            &t,
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

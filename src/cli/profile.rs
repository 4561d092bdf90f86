//! `tether-risk profile FILE`: one row per bay.

use tether_risk::report::design::ProfileSummary;

use tether_risk::environment::horizontal_face_shielding_factor;
use tether_risk::model::Model;
use tether_risk::orbit::shadow::shaded_fraction_of_month;

use super::output::{load_model, print};
use super::Format;

/// Arguments of `profile`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Examples:\n  tether-risk profile demo | head -20\n  tether-risk profile my-tether.json --format csv > bays.csv"
)]
pub struct Args {
    /// Scenario file (JSON); `-` reads standard input; `demo` is the built-in scenario.
    file: String,
    /// Output format.
    #[arg(long, value_enum, default_value_t)]
    format: Format,
}

pub fn run(a: Args) -> anyhow::Result<()> {
    let model = load_model(&a.file)?;
    let p = ProfileSummary::from_model(&model);
    match a.format {
        Format::Json => {
            print(&(serde_json::to_string_pretty(&with_physics_fields(&model, &p)?)? + "\n"))
        }
        Format::Csv => print(&p.table().to_csv()),
        Format::Text => print(&format!(
            "Tether profile: scenario \"{}\" (hash {}), {} bays, {} km{}\n\n{}",
            p.scenario,
            p.scenario_hash,
            p.bay_count,
            p.tether_length_km,
            p.surface_run_length_km.map_or(String::new(), |l| format!(
                " hanging, plus a surface run of {l:.1} km from the base to the foot (bays marked \"surface run\"; altitude 0)"
            )),
            p.table().to_text()
        )),
    }
}

/// The profile as JSON with, per bay row: `face_shielding_factor` (the Moon's shielding of a
/// ribbon face, whose normal is horizontal; 1 with shielding off), `critical_hole_widths_mm`
/// (one value per number of ribbons already cut, 0..N-1, under the material's notch model),
/// `ejecta_strike_rate_per_year` (lunar-ejecta strikes able to sever an intact segment, all
/// ribbons; 0 with the source off) and `climber_weight_n` (a loaded climber at the bay's middle
/// in the local effective gravity; 0 without repair) and `shaded_fraction_of_month` (the part of
/// every synodic month the bay's middle spends in the Moon's shadow, `arcsin(R/r)/pi`: the same
/// every month with the Sun in the Moon's orbital plane, so also the mean over the year) and
/// `cross_link_strike_rate_per_year` (cuts per year of the cross-link at the bay's upper
/// station, the one joining it to the next bay up; 0 for the top bay, whose upper end is the
/// counterweight attachment, and 0 everywhere with `tether.cross_link_hits` off).
fn with_physics_fields(model: &Model, p: &ProfileSummary) -> anyhow::Result<serde_json::Value> {
    let mut v = serde_json::to_value(p)?;
    let orbit = &model.orbit;
    if let Some(rows) = v.get_mut("bays").and_then(|b| b.as_array_mut()) {
        for (j, row) in rows.iter_mut().enumerate() {
            let (Some(obj), Some(bay), Some(t)) = (
                row.as_object_mut(),
                model.profile.bays.get(j),
                model.bays.get(j),
            ) else {
                continue;
            };
            let face = if bay.surface_run {
                // A ribbon lying on the ground: its model factor (1/2, or 1 with shielding off).
                t.factors.moon_shielding
            } else if model.scenario.environment.moon_shielding {
                horizontal_face_shielding_factor(orbit.moon_radius_m, bay.mid_altitude_m())?
            } else {
                1.0
            };
            obj.insert("face_shielding_factor".into(), face.into());
            obj.insert(
                "critical_hole_widths_mm".into(),
                t.critical_hole_width_m
                    .iter()
                    .map(|h| h * 1e3)
                    .collect::<Vec<f64>>()
                    .into(),
            );
            obj.insert(
                "ejecta_strike_rate_per_year".into(),
                t.ejecta_strike_rate_per_year.into(),
            );
            obj.insert("climber_weight_n".into(), t.climber_weight_n.into());
            obj.insert(
                "cross_link_strike_rate_per_year".into(),
                model
                    .cross_link_rate_per_year
                    .get(j + 1)
                    .copied()
                    .unwrap_or(0.0)
                    .into(),
            );
            obj.insert(
                "shaded_fraction_of_month".into(),
                shaded_fraction_of_month(
                    orbit.moon_radius_m,
                    orbit.moon_radius_m + bay.mid_altitude_m(),
                )
                .into(),
            );
        }
    }
    Ok(v)
}

//! `tether-risk env`: cumulative flux at chosen thresholds and altitudes, with the local
//! shielding and focusing factors.

use tether_risk::environment::{mass_from_diameter_kg, ShieldingGeometry};
use tether_risk::model::env_table::{environment_table, spread_bays};

fn on(b: bool) -> &'static str {
    if b {
        "on"
    } else {
        "off"
    }
}
use tether_risk::orbit::Side;
use tether_risk::report::env::env_table;

use super::output::{print, InputError};
use super::Format;

/// Arguments of `env`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Examples:\n  tether-risk env --altitude-km 0,100,1000,56000 --mass-g 1e-6,1e-3,1\n  tether-risk env --altitude-km 100 --diameter-mm 1 --format json\n  tether-risk env my-tether.json            # its flux model, switches, density, side and bays\n  tether-risk env demo --altitude-km 250\n\nWithout FILE: the built-in Grün et al. (1985) model with focusing and shielding on and\n--side/--density-g-per-cm3 as given. With a scenario FILE: its environment section (flux model\nor table file, flux scale factor, focusing and shielding switches and geometry, particle\ndensity), its side, and the mid altitudes of up to 12 of its bays spread from anchor to top\n(or --altitude-km)."
)]
pub struct Args {
    /// Scenario file (JSON) whose environment and bays to tabulate; `demo` is the built-in one.
    file: Option<String>,
    /// Altitudes above the lunar surface, km (several: comma separated or repeated). Default
    /// 0, 100, 1000, 10000, 56000; with FILE, the mid altitudes of up to 12 of its bays.
    #[arg(long = "altitude-km", value_delimiter = ',', num_args = 1..)]
    altitude_km: Vec<f64>,
    /// Mass thresholds, g.
    #[arg(long = "mass-g", value_delimiter = ',', num_args = 1..)]
    mass_g: Vec<f64>,
    /// Diameter thresholds, mm (converted to mass with the particle density).
    #[arg(long = "diameter-mm", value_delimiter = ',', num_args = 1..)]
    diameter_mm: Vec<f64>,
    /// Side of the Moon the tether hangs on.
    #[arg(long, value_enum, default_value = "near")]
    side: SideArg,
    /// Meteoroid density, g/cm^3 (ECSS: 2.5 with the Grün model).
    #[arg(long = "density-g-per-cm3", default_value_t = 2.5)]
    density_g_per_cm3: f64,
    /// Output format.
    #[arg(long, value_enum, default_value_t)]
    format: Format,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug)]
enum SideArg {
    Near,
    Far,
}

pub fn run(a: Args) -> anyhow::Result<()> {
    let bad = |m: String| anyhow::Error::from(InputError(m));
    if !(0.1..=10.0).contains(&a.density_g_per_cm3) {
        return Err(bad(format!(
            "--density-g-per-cm3 = {} is out of range: allowed [0.1, 10] g/cm^3",
            a.density_g_per_cm3
        )));
    }
    let model = match &a.file {
        Some(f) => Some(super::output::load_model(f)?),
        None => None,
    };
    let rho = model.as_ref().map_or(a.density_g_per_cm3 * 1e3, |m| {
        m.scenario.environment.particle_density_kg_per_m3
    });
    let mut masses_kg: Vec<(f64, f64)> = Vec::new(); // (as given in g, kg)
    for &m in &a.mass_g {
        if !(m.is_finite() && m > 0.0) {
            return Err(bad(format!(
                "--mass-g = {m} is out of range: allowed (0, inf) g"
            )));
        }
        masses_kg.push((m, m * 1e-3));
    }
    for &d in &a.diameter_mm {
        if !(d.is_finite() && d > 0.0) {
            return Err(bad(format!(
                "--diameter-mm = {d} is out of range: allowed (0, inf) mm"
            )));
        }
        let kg = mass_from_diameter_kg(d * 1e-3, rho)?;
        masses_kg.push((kg * 1e3, kg));
    }
    if masses_kg.is_empty() {
        masses_kg = [1e-6, 1e-3, 1.0].iter().map(|&g| (g, g * 1e-3)).collect();
    }
    let mut altitude_km = a.altitude_km.clone();
    let mut bay_note = String::new();
    if altitude_km.is_empty() {
        match &model {
            Some(m) => {
                let picked = spread_bays(m, 12);
                bay_note = format!(
                    "Bays {} of {} (mid altitudes).\n",
                    picked
                        .iter()
                        .map(|b| b.to_string())
                        .collect::<Vec<_>>()
                        .join(", "),
                    m.profile.bays.len()
                );
                altitude_km = picked
                    .iter()
                    .map(|&b| m.profile.bays[b].mid_altitude_m() / 1e3)
                    .collect();
            }
            None => altitude_km = vec![0.0, 100.0, 1000.0, 10000.0, 56000.0],
        }
    }
    for &h in &altitude_km {
        if !(h.is_finite() && (0.0..=300_000.0).contains(&h)) {
            return Err(bad(format!(
                "--altitude-km = {h} is out of range: allowed [0, 300000] km"
            )));
        }
    }
    let side = match a.side {
        SideArg::Near => Side::Near,
        SideArg::Far => Side::Far,
    };
    let table = environment_table(model.as_ref(), &altitude_km, &masses_kg, side, rho)?;
    let rows = &table.rows;
    let (switches, scale, side) = (table.switches, table.flux_scale_factor, table.side);
    let face = match table.geometry {
        ShieldingGeometry::RandomPlate => "one face of a randomly tumbling plate",
        ShieldingGeometry::HangingRibbonFace => {
            "one face of a randomly tumbling plate; Moon shielding for a hanging ribbon's face (normal horizontal)"
        }
        ShieldingGeometry::SurfaceLyingFace => {
            "one face of a randomly tumbling plate; Moon shielding for a face lying on the ground"
        }
    };
    match a.format {
        Format::Json => print(&(serde_json::to_string_pretty(rows)? + "\n")),
        Format::Csv => print(&env_table(rows).to_csv()),
        Format::Text => print(&format!(
            "Meteoroid environment, {}{}, {} side, density {} g/cm^3\n{}\
             Flux: particles of at least the given mass per m^2 per year onto {face}{}.\n{bay_note}\n{}",
            match &model {
                Some(m) => format!("scenario \"{}\": {}", m.scenario.spec.name, table.flux_name),
                None => "Grün et al. (1985) in the ECSS-E-ST-10-04C form".into(),
            },
            if scale != 1.0 { format!(", flux scale factor {scale}") } else { String::new() },
            format!("{:?}", side).to_lowercase(),
            rho / 1e3,
            if model.is_some() {
                format!(
                    "Switches: Moon focusing {}, Earth focusing {}, Moon shielding {}.\n",
                    on(switches.0),
                    on(switches.1),
                    on(switches.2)
                )
            } else {
                String::new()
            },
            if scale != 1.0 { ", times the scale factor" } else { "" },
            {
                // Words with units on a terminal; CSV and JSON keep the field names.
                let mut t = env_table(rows);
                t.headers = [
                    "altitude (km)",
                    "mass (g)",
                    "diameter (mm)",
                    "model flux (per m^2 per year)",
                    "Moon shielding",
                    "Earth shielding",
                    "focusing",
                    "mean speed (km/s)",
                    "local flux (per m^2 per year)",
                ]
                .iter()
                .map(|h| h.to_string())
                .collect();
                t.to_text()
            }
        )),
    }
}

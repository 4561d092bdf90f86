//! `tether-risk env`: cumulative flux at chosen thresholds and altitudes, with the local
//! shielding and focusing factors.

use tether_risk::environment::FluxModel;
use tether_risk::environment::{
    diameter_from_mass_m, local_factors, mass_from_diameter_kg, Grun1985, VelocityDistribution,
};
use tether_risk::orbit::{EarthMoon, Side};
use tether_risk::report::env::{env_table, EnvRow};

use super::output::{print, InputError};
use super::Format;

/// Arguments of `env`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Examples:\n  tether-risk env --altitude-km 0,100,1000,56000 --mass-g 1e-6,1e-3,1\n  tether-risk env --altitude-km 100 --diameter-mm 1 --format json"
)]
pub struct Args {
    /// Altitudes above the lunar surface, km (several: comma separated or repeated).
    #[arg(long = "altitude-km", value_delimiter = ',', num_args = 1.., default_values_t = vec![0.0, 100.0, 1000.0, 10000.0, 56000.0])]
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
    let rho = a.density_g_per_cm3 * 1e3;
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
    for &h in &a.altitude_km {
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
    let orbit = EarthMoon::standard();
    let flux = Grun1985::standard()?;
    let velocity = VelocityDistribution::ecss_table_c1()?;
    let mut rows = Vec::new();
    for &h in &a.altitude_km {
        let f = local_factors(&orbit, side, h * 1e3, &velocity, true, true, true)?;
        let mean_speed = f.local_velocity(&velocity)?.mean_speed_m_per_s() / 1e3;
        for &(g, m) in &masses_kg {
            let model = flux.cumulative_flux_per_m2_per_year(m);
            rows.push(EnvRow {
                altitude_km: h,
                mass_g: g,
                diameter_m: diameter_from_mass_m(m, rho)?,
                model_flux_per_m2_per_year: model,
                shielding_factor: f.moon_shielding,
                earth_shielding_factor: f.earth_shielding,
                focusing_factor: f.focusing,
                mean_speed_km_per_s: mean_speed,
                local_flux_per_m2_per_year: model * f.total(),
            });
        }
    }
    match a.format {
        Format::Json => print(&(serde_json::to_string_pretty(&rows)? + "\n")),
        Format::Csv => print(&env_table(&rows).to_csv()),
        Format::Text => print(&format!(
            "Meteoroid environment, Grün et al. (1985) in the ECSS-E-ST-10-04C form, {} side, density {} g/cm^3\n\
             Flux: particles of at least the given mass per m^2 per year onto one face of a randomly tumbling plate.\n\n{}",
            format!("{:?}", side).to_lowercase(),
            a.density_g_per_cm3,
            env_table(&rows).to_text()
        )),
    }
}

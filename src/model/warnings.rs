//! Design warnings for `check`: conditions that do not make a scenario invalid but that a
//! reviewer must see. Each kind has a stable `code` (machine-readable output keys on it).

use serde::Serialize;

use crate::scenario::{DamageSpec, HoleSizeSpec};
use crate::structure::notch::NotchModel;

use super::{climber, Model};

/// A loaded climber (own mass + payload, times the local effective gravity) weighs more than
/// the traffic envelope somewhere on the tether.
pub const TRAFFIC_BELOW_CLIMBER_WEIGHT: &str = "traffic_envelope_below_climber_weight";
/// The lunar secondary-ejecta source is switched off.
pub const LUNAR_EJECTA_EXCLUDED: &str = "lunar_ejecta_excluded";
/// Lunar ejecta are on, but not modelled on the surface run.
pub const SURFACE_RUN_WITHOUT_EJECTA: &str = "surface_run_without_ejecta";
/// The hole size is a constant multiple of the particle diameter (engineering assumption).
pub const CONSTANT_HOLE_FACTOR: &str = "constant_hole_factor";
/// The ribbon's residual strength is net section: the notch-insensitive bound.
pub const NET_SECTION_NOTCH_INSENSITIVE: &str = "net_section_notch_insensitive";
/// A notch-sensitive model rates edge-breaking holes as central holes (not conservative).
pub const EDGE_HOLES_AS_CENTRAL: &str = "edge_holes_rated_as_central";
/// A deprecated input name was read under its new name.
pub const DEPRECATED_INPUT_NAME: &str = "deprecated_input_name";

/// One warning.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct DesignWarning {
    /// Stable identifier of the kind.
    pub code: &'static str,
    /// What and why, with the numbers.
    pub message: String,
}

/// The warnings of a built model, in a fixed order.
pub fn design_warnings(model: &Model) -> Vec<DesignWarning> {
    let mut out = Vec::new();
    let traffic = model.scenario.tether.traffic_load_n;
    // No climber travels under the looped-ribbon repair concept.
    let climbers_travel = model
        .scenario
        .repair
        .as_ref()
        .is_some_and(|r| r.looped.is_none());
    if let Some((alt, w)) = climber::max_loaded_climber_weight(model).filter(|_| climbers_travel) {
        if traffic < w {
            let mass = climber::loaded_climber_mass_kg(model).unwrap_or(0.0);
            out.push(DesignWarning {
                code: TRAFFIC_BELOW_CLIMBER_WEIGHT,
                message: format!(
                    "tether.traffic_load_n = {traffic} N is below the weight of a loaded climber \
                     ({mass:.0} kg = repair.climber.mass_kg + payload_kg) at {:.0} km: {w:.0} N. \
                     A climber splicing a weakened bay adds that load; raise the envelope, or \
                     simulate it with repair.climber.load_on_bays = true",
                    alt / 1e3
                ),
            });
        }
    }
    if !model.scenario.environment.lunar_ejecta.enabled {
        out.push(DesignWarning {
            code: LUNAR_EJECTA_EXCLUDED,
            message: "environment.lunar_ejecta.enabled = false: the SP-8013 secondary-ejecta \
                      environment, which exceeds the primary flux by orders of magnitude below \
                      about 374 km, is not included"
                .into(),
        });
    }
    let surface = model.profile.surface_bay_count();
    if surface > 0 && model.ejecta.is_some() {
        out.push(DesignWarning {
            code: SURFACE_RUN_WITHOUT_EJECTA,
            message: format!(
                "environment.lunar_ejecta is on, but its arrival geometry (horizontal onto a \
                 vertical face) does not describe the {:.0} km surface run lying on the ground: \
                 its {surface} bays get no ejecta strikes, so their ejecta risk is missing",
                model.profile.surface_run_length_m() / 1e3
            ),
        });
    }
    if let DamageSpec::ThinFilmHole {
        hole_size: HoleSizeSpec::Constant,
        hole_factor,
        ..
    } = model.scenario.damage
    {
        out.push(DesignWarning {
            code: CONSTANT_HOLE_FACTOR,
            message: format!(
                "damage.hole_size = \"constant\": every hole is {hole_factor} x the particle \
                 diameter, an engineering assumption; \"sawle_type\" or \"hill_type\" follow \
                 thickness, speed and obliquity. The hole factor and the oblique footprint \
                 (damage.oblique_footprint) can each move a latent-damage answer by orders of \
                 magnitude: run `tether-risk sensitivity` before quoting it"
            ),
        });
    }
    if matches!(model.profile.design.notch, NotchModel::NetSection(_)) {
        out.push(DesignWarning {
            code: NET_SECTION_NOTCH_INSENSITIVE,
            message: "tether.material.notch_model = net_section: a hole costs only the width it \
                      removes, the notch-insensitive bound (right for films that split or yield \
                      around the hole, optimistic for a notch-sensitive film); a Whitney-Nuismer \
                      criterion with a characteristic length of about 1 mm makes much smaller \
                      holes critical. Without residual-strength tests of this ribbon, run \
                      `tether-risk sensitivity`: the notch model can decide the answer"
                .into(),
        });
    }
    if matches!(model.profile.design.notch, NotchModel::WhitneyNuismer(_)) {
        out.push(DesignWarning {
            code: EDGE_HOLES_AS_CENTRAL,
            message: "a hole that breaks the ribbon edge is rated as a central hole of the same \
                      removed width, which is not conservative under a notch-sensitive model"
                .into(),
        });
    }
    out.extend(unit_slip_warnings(&model.scenario));
    out.extend(model.scenario.deprecations.iter().map(|m| DesignWarning {
        code: DEPRECATED_INPUT_NAME,
        message: m.clone(),
    }));
    out
}

/// A value that passes validation but lies outside the range usual for its quantity: most
/// likely a unit slip (micrometres given as millimetres, kilometres as metres). The usual
/// ranges are engineering judgement for tethers of this kind, not taken from a standard.
struct Usual {
    code: &'static str,
    path: &'static str,
    value: f64,
    low: f64,
    high: f64,
    unit: &'static str,
    hint: &'static str,
}

/// A value converted back to the user's unit, without the conversion's last-bit noise
/// (0.02e-6 m * 1e6 prints as 0.02, not 0.020000000000000004).
fn tidy(v: f64) -> String {
    let r: f64 = format!("{v:.9e}").parse().unwrap_or(v);
    format!("{r}")
}

/// Warnings (codes `unit.*`) for values physically odd for their unit. Silent on the demo.
pub fn unit_slip_warnings(sc: &crate::scenario::Scenario) -> Vec<DesignWarning> {
    let t = &sc.tether;
    let e = &sc.environment;
    let mut checks = vec![
        Usual {
            code: "unit.ribbon_thickness",
            path: "tether.ribbon_thickness_um",
            value: t.thickness_m * 1e6,
            low: 1.0,
            high: 500.0,
            unit: "um",
            hint: "the thickness is in micrometres, 1 mm = 1000 um",
        },
        Usual {
            code: "unit.ribbon_width",
            path: "tether.ribbon_width_mm",
            value: t.anchor_width_m * 1e3,
            low: 1.0,
            high: 1000.0,
            unit: "mm",
            hint: "the width is in millimetres, 1 cm = 10 mm",
        },
        Usual {
            code: "unit.cross_link_spacing",
            path: "tether.cross_link_spacing_km",
            value: t.cross_link_spacing_m / 1e3,
            low: 0.1,
            high: 5000.0,
            unit: "km",
            hint: "the spacing is in kilometres, 1 km = 1000 m",
        },
        Usual {
            code: "unit.ultimate_strength",
            path: "tether.material.ultimate_strength_gpa",
            value: t.ultimate_strength_pa / 1e9,
            low: 0.1,
            high: 100.0,
            unit: "GPa",
            hint: "the strength is in gigapascals, 1 GPa = 1000 MPa",
        },
        Usual {
            code: "unit.material_density",
            path: "tether.material.density_g_per_cm3",
            value: t.material_density_kg_per_m3 / 1e3,
            low: 0.8,
            high: 8.0,
            unit: "g/cm^3",
            hint: "the density is in g/cm^3, 1000 kg/m^3 = 1 g/cm^3",
        },
        Usual {
            code: "unit.particle_density",
            path: "environment.particle_density_g_per_cm3",
            value: e.particle_density_kg_per_m3 / 1e3,
            low: 0.5,
            high: 8.0,
            unit: "g/cm^3",
            hint: "meteoroid densities are about 0.5 to 8 g/cm^3",
        },
        Usual {
            code: "unit.mission_length",
            path: "run.mission_years",
            value: sc.run.mission_years,
            low: 1.0,
            high: 100.0,
            unit: "years",
            hint: "the mission is in years",
        },
    ];
    if let Some(r) = &sc.repair {
        for (path, v) in [
            ("repair.climber.speed_up_m_per_s", r.speed_up_m_per_s),
            ("repair.climber.speed_down_m_per_s", r.speed_down_m_per_s),
        ] {
            checks.push(Usual {
                code: "unit.climber_speed",
                path,
                value: v,
                low: 0.1,
                high: 500.0,
                unit: "m/s",
                hint: "the speed is in metres per second, 100 km/h = 27.8 m/s",
            });
        }
        checks.push(Usual {
            code: "unit.splice_time",
            path: "repair.climber.splice_hours",
            value: r.splice_s / crate::units::SECONDS_PER_HOUR,
            low: 0.1,
            high: 200.0,
            unit: "h",
            hint: "the splice time is in hours per segment",
        });
    }
    let mut out: Vec<DesignWarning> = checks
        .into_iter()
        .filter(|u| u.value < u.low || u.value > u.high)
        .map(|u| DesignWarning {
            code: u.code,
            message: format!(
                "{} = {} {} is outside the usual {} to {} {}; check the unit: {}. The value is used as given",
                u.path,
                tidy(u.value),
                u.unit,
                u.low,
                u.high,
                u.unit,
                u.hint
            ),
        })
        .collect();
    if t.traffic_load_n == 0.0 {
        out.push(DesignWarning {
            code: "unit.traffic_load_zero",
            message: "tether.traffic_load_n = 0 N: no climber or payload load is carried in any bay's tension (the usual envelope is the weight of a loaded climber, hundreds to thousands of N); give the traffic load in newtons".into(),
        });
    }
    out
}

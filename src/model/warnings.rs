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
/// The hole size is a constant multiple of the particle diameter (engineering assumption).
pub const CONSTANT_HOLE_FACTOR: &str = "constant_hole_factor";
/// A notch-sensitive model rates edge-breaking holes as central holes (not conservative).
pub const EDGE_HOLES_AS_CENTRAL: &str = "edge_holes_rated_as_central";

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
    if let Some((alt, w)) = climber::max_loaded_climber_weight(model) {
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
                 thickness, speed and obliquity"
            ),
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
    out
}

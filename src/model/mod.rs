//! A built model: everything the engine and the reports need, computed once from a validated
//! [`Scenario`]: the flux model, the velocity distribution, the perforation law, the tether
//! profile, and per-bay environment factors, critical hole widths and damaging-strike rates.
//!
//! This module is where the model implementations meet (the engine sees only the traits). It was
//! added to the layout of DESIGN.md because the per-bay tables need environment, structure and
//! damage together, and none of those may depend on the others in that direction.

pub mod climber;
pub mod damage_memory;
pub mod ejecta;
pub mod env_table;
pub mod hole_rate;
pub mod markov;
mod rates;
pub mod streams;
pub mod warnings;

pub use rates::{cross_link_strike_rate_per_year, ribbon_strike_rate_per_m_per_year};

use crate::damage::{
    FractionOfWidth, HoleFactorLaw, HoleSize, PerforationLaw, RibbonTarget, ThinFilmHoleLaw,
};
use crate::environment::{
    local_factors_for, FluxModel, Grun1985, LocalFactors, TabulatedFlux, VelocityDistribution,
};
use crate::orbit::EarthMoon;
use crate::repair::{DispatchPolicy, FirstCome, MostEndangered};
use crate::scenario::{
    DamageSpec, DispatchSpec, FluxModelSpec, HoleSizeSpec, LoadSharingSpec, Scenario,
    ScenarioError, TaperSpec,
};
use crate::structure::load_sharing::{
    EqualSharing, LoadSharing, LocalSharing, NoRedistribution, MAX_RIBBONS,
};
use crate::structure::{Taper, TetherDesign, TetherProfile};

/// Per-bay tables.
#[derive(Clone, Debug)]
pub struct BayTables {
    /// Environment factors at the bay's middle.
    pub factors: LocalFactors,
    /// Critical hole width with 0..N-1 ribbons already cut (equal sharing), m.
    pub critical_hole_width_m: Vec<f64>,
    /// Smallest particle diameter that can sever an intact segment of this bay, m.
    pub min_severing_diameter_m: f64,
    /// Rate of strikes (all ribbons of the bay) by particles able to sever an intact segment,
    /// per year.
    pub damaging_strike_rate_per_year: f64,
    /// Same for lunar ejecta (0 when the source is off or does not reach the bay), per year.
    pub ejecta_strike_rate_per_year: f64,
    /// Weight of a loaded climber (own mass + payload) at the bay's middle, N (0 without repair).
    pub climber_weight_n: f64,
}

/// The built model.
#[derive(Debug)]
pub struct Model {
    /// The scenario it was built from.
    pub scenario: Scenario,
    /// Earth–Moon constants.
    pub orbit: EarthMoon,
    /// Cumulative flux model.
    pub flux: Box<dyn FluxModel>,
    /// Free-space velocity distribution.
    pub velocity: VelocityDistribution,
    /// Perforation law.
    pub perforation: Box<dyn PerforationLaw>,
    /// The tether profile.
    pub profile: TetherProfile,
    /// Per-bay tables, same order as `profile.bays`.
    pub bays: Vec<BayTables>,
    /// The lunar-ejecta strike source, when enabled.
    pub ejecta: Option<ejecta::EjectaSource>,
    /// Cut rate of the cross-link at each station, per year (station k joins bay k - 1 and
    /// bay k; `bays + 1` entries). Only interior stations (1..bays) can be cut; the ends, the
    /// anchor and the counterweight attachments, and every station when cross-link hits are
    /// off, have rate 0.
    pub cross_link_rate_per_year: Vec<f64>,
    /// The load-sharing rule the scenario names (`tether.load_sharing`), as the engine uses it.
    pub load_sharing: Box<dyn LoadSharing>,
    /// The repair fleet's dispatch rule (`repair.dispatch`; most-endangered without repair).
    pub dispatch: Box<dyn DispatchPolicy>,
}

/// Build the flux model a scenario names.
pub fn build_flux_model(scenario: &Scenario) -> Result<Box<dyn FluxModel>, ScenarioError> {
    let env = &scenario.environment;
    let model_err = |message: String| ScenarioError::Model {
        path: "environment.flux_model".into(),
        message,
    };
    Ok(match &env.flux_model {
        FluxModelSpec::Builtin(name) if name == "grun1985" => {
            Box::new(Grun1985::standard().map_err(|e| model_err(e.to_string()))?)
        }
        FluxModelSpec::Builtin(name) if name == "grun1985_tabulated" => Box::new(
            TabulatedFlux::from_json(crate::environment::GRUN1985_TABULATED_JSON)
                .map_err(|e| model_err(e.to_string()))?,
        ),
        FluxModelSpec::Builtin(name) => return Err(model_err(format!("unknown model `{name}`"))),
        FluxModelSpec::Table { .. } => {
            let text = env
                .flux_table_json
                .as_deref()
                .ok_or_else(|| model_err("the table file was not read".into()))?;
            Box::new(TabulatedFlux::from_json(text).map_err(|e| model_err(e.to_string()))?)
        }
    })
}

/// The structure's view of a scenario's tether.
pub fn tether_design(scenario: &Scenario) -> TetherDesign {
    let t = &scenario.tether;
    TetherDesign {
        side: t.side,
        top_altitude_m: t.top_altitude_m,
        ribbon_count: t.ribbon_count,
        anchor_width_m: t.anchor_width_m,
        thickness_m: t.thickness_m,
        allowable_stress_pa: t.allowable_stress_pa,
        density_kg_per_m3: t.material_density_kg_per_m3,
        taper: match t.taper {
            TaperSpec::None => Taper::Uniform,
            TaperSpec::ConstantStress => Taper::ConstantStress,
        },
        design_safety_factor: t.design_safety_factor,
        cross_link_spacing_m: t.cross_link_spacing_m,
        cross_link_mass_kg: t.cross_link_mass_kg,
        anchor_preload_n: t.anchor_preload_n,
        traffic_load_n: t.traffic_load_n,
        notch: t.notch,
        surface_run_m: t.surface_run_m,
    }
}

/// Speed bound given to fitted hole laws, m/s: above the fastest focused speed of ECSS
/// Table C-1 (72 km/s plus half a bin, with the Moon's surface and the Earth's escape speeds
/// at lunar distance added in quadrature: about 72.3 km/s), with margin.
pub const HOLE_LAW_SPEED_BOUND_M_PER_S: f64 = 75_000.0;

/// The perforation law a scenario names.
pub fn build_perforation_law(
    scenario: &Scenario,
) -> Result<Box<dyn PerforationLaw>, ScenarioError> {
    let speed_bound_m_per_s = HOLE_LAW_SPEED_BOUND_M_PER_S;
    let err = |path: &str, message: String| ScenarioError::Model {
        path: path.into(),
        message,
    };
    Ok(match scenario.damage {
        DamageSpec::ThinFilmHole {
            hole_size: HoleSizeSpec::Constant,
            hole_factor,
            oblique_footprint: None | Some(false),
            ..
        } => Box::new(
            ThinFilmHoleLaw::new(hole_factor)
                .map_err(|e| err("damage.hole_factor", e.to_string()))?,
        ),
        DamageSpec::ThinFilmHole {
            hole_size,
            hole_factor,
            oblique_footprint,
            min_cos_incidence,
            target_sound_speed_m_per_s,
            particle_sound_speed_m_per_s,
        } => {
            let law = match hole_size {
                HoleSizeSpec::Constant => HoleFactorLaw::Constant {
                    factor: hole_factor,
                },
                HoleSizeSpec::SawleType => HoleFactorLaw::SawleType,
                HoleSizeSpec::HillType => HoleFactorLaw::HillType {
                    target_sound_speed_m_per_s,
                    particle_sound_speed_m_per_s,
                },
            };
            let hole = HoleSize {
                law,
                oblique_footprint: oblique_footprint.unwrap_or(true),
                min_cos_incidence,
            };
            Box::new(
                ThinFilmHoleLaw::with_hole_size(hole)
                    .and_then(|l| l.with_speed_bound(speed_bound_m_per_s))
                    .map_err(|e| err("damage", e.to_string()))?,
            )
        }
        DamageSpec::FractionOfWidth { fraction } => Box::new(
            FractionOfWidth::new(fraction).map_err(|e| err("damage.fraction", e.to_string()))?,
        ),
    })
}

impl Model {
    /// Build everything; refuses physically impossible designs with the reason.
    pub fn build(scenario: Scenario) -> Result<Self, ScenarioError> {
        let orbit = EarthMoon::standard();
        let flux = build_flux_model(&scenario)?;
        let env_err = |e: crate::environment::EnvironmentError| ScenarioError::Model {
            path: "environment".into(),
            message: e.to_string(),
        };
        let velocity = VelocityDistribution::ecss_table_c1().map_err(env_err)?;
        let perforation = build_perforation_law(&scenario)?;
        let profile = TetherProfile::build(&orbit, &tether_design(&scenario)).map_err(|e| {
            ScenarioError::Infeasible {
                reason: e.to_string(),
            }
        })?;
        check_repair_feasible(&scenario, &profile)?;

        let env = &scenario.environment;
        let n = profile.design.ribbon_count;
        let ejecta = if env.lunar_ejecta.enabled {
            let e = &env.lunar_ejecta;
            let environment = crate::environment::LunarEjecta::sp8013(
                orbit.moon_radius_m,
                (2.0 * orbit.gm_moon_m3_per_s2 / orbit.moon_radius_m).sqrt(),
            )
            .map_err(env_err)?;
            let min_cos = match scenario.damage {
                DamageSpec::ThinFilmHole {
                    min_cos_incidence, ..
                } => min_cos_incidence,
                DamageSpec::FractionOfWidth { .. } => 0.2,
            };
            let law = crate::damage::LowSpeedHoleLaw::new(
                e.hole_factor,
                e.perforation_speed_m_per_s,
                min_cos,
            )
            .map_err(|err| ScenarioError::Model {
                path: "environment.lunar_ejecta".into(),
                message: err.to_string(),
            })?;
            // The ejecta's arrival geometry (horizontal onto a vertical face) does not describe
            // a ribbon lying on the ground: surface-run bays get none (an infinite span lies
            // above every ceiling), and `check` warns.
            let spans: Vec<(f64, f64)> = profile
                .bays
                .iter()
                .map(|b| {
                    if b.surface_run {
                        (f64::INFINITY, f64::INFINITY)
                    } else {
                        (b.bottom_altitude_m, b.top_altitude_m)
                    }
                })
                .collect();
            Some(ejecta::EjectaSource::new(
                environment,
                e.flux_scale_factor,
                law,
                &spans,
            )?)
        } else {
            None
        };
        let mut bays = Vec::with_capacity(profile.bays.len());
        for (j, bay) in profile.bays.iter().enumerate() {
            let factors = local_factors_for(
                &orbit,
                scenario.tether.side,
                bay.mid_altitude_m(),
                &velocity,
                env.moon_focusing,
                env.earth_focusing,
                env.moon_shielding,
                env.moon_shielding_geometry.for_bay(bay.surface_run),
            )
            .map_err(env_err)?;
            let critical: Vec<f64> = (0..n.min(MAX_RIBBONS))
                .map(|k| profile.critical_hole_width_m(j, k))
                .collect();
            let target = RibbonTarget {
                width_m: bay.width_m,
                thickness_m: profile.design.thickness_m,
                density_kg_per_m3: profile.design.density_kg_per_m3,
            };
            let d_min = perforation.min_diameter_for_hole_m(critical[0], &target);
            let per_m = ribbon_strike_rate_per_m_per_year(
                flux.as_ref(),
                env.particle_density_kg_per_m3,
                bay.width_m,
                d_min,
            );
            let rate = per_m * bay.length_m() * n as f64 * factors.total() * env.flux_scale_factor;
            let ejecta_rate = match &ejecta {
                Some(e) if e.reaches_bay(j) && critical[0] > 0.0 => {
                    let d = e.perforation.min_diameter_for_hole_m(critical[0], &target);
                    e.rate_per_m_per_year(j, bay.width_m, d) * bay.length_m() * n as f64
                }
                _ => 0.0,
            };
            bays.push(BayTables {
                factors,
                critical_hole_width_m: critical,
                min_severing_diameter_m: d_min,
                damaging_strike_rate_per_year: rate,
                ejecta_strike_rate_per_year: ejecta_rate,
                climber_weight_n: 0.0,
            });
        }
        let mut cross_link_rate_per_year = vec![0.0; profile.bays.len() + 1];
        if let Some(h) = scenario.tether.cross_link_hits {
            for (k, rate) in cross_link_rate_per_year
                .iter_mut()
                .enumerate()
                .take(profile.bays.len())
                .skip(1)
            {
                // The station sits at the bottom of bay k; the shielding geometry is that
                // bay's (engineering assumption: the cross-link sees the sky as the ribbons
                // beside it do).
                let bay = &profile.bays[k];
                let factors = local_factors_for(
                    &orbit,
                    scenario.tether.side,
                    bay.bottom_altitude_m,
                    &velocity,
                    env.moon_focusing,
                    env.earth_focusing,
                    env.moon_shielding,
                    env.moon_shielding_geometry.for_bay(bay.surface_run),
                )
                .map_err(env_err)?;
                *rate = rates::cross_link_strike_rate_per_year(
                    flux.as_ref(),
                    env.particle_density_kg_per_m3,
                    h.exposed_area_m2,
                    h.critical_diameter_m,
                    factors.total() * env.flux_scale_factor,
                );
            }
        }
        let t = &scenario.tether;
        let load_sharing: Box<dyn LoadSharing> = match t.load_sharing {
            LoadSharingSpec::Equal => Box::new(EqualSharing),
            LoadSharingSpec::Local => Box::new(LocalSharing {
                arrangement: t.arrangement,
            }),
            LoadSharingSpec::None => Box::new(NoRedistribution),
        };
        let dispatch: Box<dyn DispatchPolicy> = match scenario.repair.as_ref().map(|r| r.dispatch) {
            Some(DispatchSpec::FirstCome) => Box::new(FirstCome),
            _ => Box::new(MostEndangered),
        };
        let mut model = Model {
            scenario,
            orbit,
            flux,
            velocity,
            perforation,
            profile,
            bays,
            ejecta,
            cross_link_rate_per_year,
            load_sharing,
            dispatch,
        };
        for j in 0..model.bays.len() {
            model.bays[j].climber_weight_n = climber::loaded_climber_weight_at_bay_n(&model, j);
        }
        Ok(model)
    }

    /// Sum of the per-bay damaging-strike rates, per year.
    pub fn total_damaging_strike_rate_per_year(&self) -> f64 {
        self.bays
            .iter()
            .map(|b| b.damaging_strike_rate_per_year)
            .sum()
    }
}

/// Refuse a repair fleet that cannot do its job at all.
fn check_repair_feasible(
    scenario: &Scenario,
    profile: &TetherProfile,
) -> Result<(), ScenarioError> {
    let Some(r) = &scenario.repair else {
        return Ok(());
    };
    // The shadow model follows a climber along the tether line (distance from the Moon's
    // centre = radius + altitude); on a surface run the distance stays the radius while the
    // position moves, and the sunlit side depends on the base's longitude, which it does not
    // model. Refused rather than answered wrongly.
    if r.solar.is_some() && profile.surface_run_length_m() > 0.0 {
        return Err(ScenarioError::Infeasible {
            reason: format!(
                "repair.climber.power = solar is not modelled with a surface run ({:.0} km from a base at tether.anchor_latitude_deg / anchor_longitude_deg away from the tether's foot): the shadow model covers climbers on the hanging tether only. Use {{\"kind\": \"beamed\"}} power, or put the base at the foot",
                profile.surface_run_length_m() / 1e3
            ),
        });
    }
    let (j, m) = profile.heaviest_segment();
    if m > r.payload_kg {
        let bay = &profile.bays[j];
        return Err(ScenarioError::Infeasible {
            reason: format!(
                "repair.climber.payload_kg = {} kg cannot carry one spare segment: bay {j} ({}) needs \
                 {:.1} kg of ribbon ({:.1} mm x {:.1} um x {:.1} km). Raise the payload, shorten \
                 tether.cross_link_spacing_km, or narrow the ribbons",
                r.payload_kg,
                if bay.surface_run {
                    format!(
                        "surface run, {:.0}-{:.0} km from the base",
                        bay.line_bottom_m / 1e3,
                        bay.line_top_m / 1e3
                    )
                } else {
                    format!(
                        "{:.0}-{:.0} km",
                        bay.bottom_altitude_m / 1e3,
                        bay.top_altitude_m / 1e3
                    )
                },
                m,
                bay.width_m * 1e3,
                profile.design.thickness_m * 1e6,
                bay.length_m() / 1e3
            ),
        });
    }
    Ok(())
}

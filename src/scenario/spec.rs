//! What a scenario file says: serde structs with unit-suffixed field names and no validation
//! beyond types. [`super::validate`] turns a [`ScenarioSpec`] into a checked, SI-unit
//! [`super::Scenario`].
//!
//! Every struct refuses unknown fields, so a misspelt field is an error (with the nearest valid
//! name suggested) rather than a silently ignored setting.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use crate::orbit::Side;
use crate::structure::load_sharing::Arrangement;

/// A whole scenario document, one section per concern.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ScenarioSpec {
    /// Short name used in reports.
    pub name: String,
    /// Free text describing the scenario.
    #[serde(default)]
    pub description: String,
    /// The meteoroid environment.
    pub environment: EnvironmentSpec,
    /// The tether design.
    pub tether: TetherSpec,
    /// How a strike turns into ribbon damage.
    #[serde(default)]
    pub damage: DamageSpec,
    /// Repair logistics; `null` means no repair.
    #[serde(default)]
    pub repair: Option<RepairSpec>,
    /// Run settings.
    pub run: RunSpec,
    /// Synthetic rates (for checking the engine against closed forms, not for design):
    /// replaces strikes by a constant cut rate per segment and repair logistics by exponential
    /// repair with a fixed number of crews per bay and no travel.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub synthetic_rates: Option<SyntheticRatesSpec>,
    /// The old name of `synthetic_rates` (still read, with a deprecation warning; moved into
    /// `synthetic_rates` when the scenario is validated). Keep it the last field: the scenario
    /// hash's canonical form relies on it (see [`crate::scenario::scenario_hash`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub validation_mode: Option<SyntheticRatesSpec>,
}

/// Synthetic rates: each bay of N ribbons becomes a repairable k-out-of-N system.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct SyntheticRatesSpec {
    /// Cut rate of each intact segment, per day.
    pub cut_rate_per_segment_per_day: f64,
    /// Repair rate of one crew, per day (0: no repair).
    pub repair_rate_per_crew_per_day: f64,
    /// Crews per bay working in parallel on that bay's cut segments.
    pub crews_per_bay: u32,
    /// Intact ribbons a bay needs to carry its load (k of k-out-of-N); fewer is a system loss.
    #[serde(default = "one_ribbon")]
    pub required_ribbons: u32,
}

fn one_ribbon() -> u32 {
    1
}

/// Which cumulative flux model to use.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
#[serde(untagged)]
pub enum FluxModelSpec {
    /// A built-in model by name: `"grun1985"` or `"grun1985_tabulated"`.
    Builtin(String),
    /// A tabulated model read from a JSON file (path relative to the scenario file).
    Table {
        /// Path to the table file.
        table_file: String,
    },
}

/// The meteoroid environment section.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EnvironmentSpec {
    /// Cumulative flux model.
    pub flux_model: FluxModelSpec,
    /// Meteoroid bulk density for mass <-> diameter, g/cm^3 (ECSS: 2.5 with the Grün model).
    #[serde(default = "default_particle_density")]
    pub particle_density_g_per_cm3: f64,
    /// Velocity distribution: `"ecss_table_c1"`.
    #[serde(default = "default_velocity")]
    pub velocity_distribution: String,
    /// Apply the Moon's gravitational focusing.
    #[serde(default = "yes")]
    pub moon_focusing: bool,
    /// Apply the Earth's gravitational focusing at the tether's distance from Earth.
    #[serde(default = "yes")]
    pub earth_focusing: bool,
    /// Apply the Moon's geometric shielding.
    #[serde(default = "yes")]
    pub moon_shielding: bool,
    /// Which shielding factor the ribbon gets: `ribbon_face` (default: the exact integral for a
    /// face whose normal is horizontal, 1 - (eta - sin eta cos eta)/pi) or `random_plate` (the
    /// ECSS sphere average (1 + cos eta)/2, for comparison).
    #[serde(default = "default_shielding_geometry")]
    pub moon_shielding_geometry: ShieldingGeometrySpec,
    /// Multiplier on the model flux, dimensionless (ECSS J.2.3.2: uncertainty 0.33 to 3).
    #[serde(default = "one")]
    pub flux_scale_factor: f64,
    /// Lunar secondary ejecta (a second strike source on the lowest bays).
    #[serde(default)]
    pub lunar_ejecta: LunarEjectaSpec,
    /// Day of the year on which the mission starts, d, in [0, 365.25) (default 0: 1 January).
    /// Places the meteor streams' peaks in mission time and names the months of the
    /// by-month tables.
    #[serde(default, skip_serializing_if = "is_zero")]
    pub mission_start_day_of_year: f64,
    /// Meteor streams on top of the sporadic background (default none: a constant flux).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub meteor_streams: Vec<MeteorStreamSpec>,
}

fn is_zero(v: &f64) -> bool {
    *v == 0.0
}

/// One meteor stream (see `environment::streams`): peak, activity profile, strength, speed.
/// Strength is either `zhr_per_hour` or `flux_above_reference_per_m2_per_year` with
/// `reference_mass_g`; each side of the profile is either a B slope per degree of solar
/// longitude (`rise_b_per_deg`, `fall_b_per_deg`) or an e-folding time in days.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct MeteorStreamSpec {
    /// Name for tables and checks.
    pub name: String,
    /// Peak time, days from the start of the year, in [0, 365.25).
    pub peak_day_of_year: f64,
    /// Geocentric speed of the stream's particles, km/s.
    pub radiant_speed_km_per_s: f64,
    /// Population index r (dimensionless; mass index s = 1 + 2.5 log10 r).
    pub population_index: f64,
    /// Zenithal hourly rate at the peak, per hour.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub zhr_per_hour: Option<f64>,
    /// Flux at the peak of particles of mass at least `reference_mass_g` through a surface
    /// normal to the radiant, per m^2 per year.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub flux_above_reference_per_m2_per_year: Option<f64>,
    /// Reference mass of `flux_above_reference_per_m2_per_year`, g.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reference_mass_g: Option<f64>,
    /// Profile slope before the peak, per degree of solar longitude (Jenniskens' B).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rise_b_per_deg: Option<f64>,
    /// Profile slope after the peak, per degree of solar longitude.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fall_b_per_deg: Option<f64>,
    /// e-folding time of the rise, days (instead of `rise_b_per_deg`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rise_e_folding_days: Option<f64>,
    /// e-folding time of the fall, days (instead of `fall_b_per_deg`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fall_e_folding_days: Option<f64>,
    /// Particle bulk density, g/cm^3 (ECSS-E-ST-10-04C 10.2.4.5c: 1.0 for streams).
    #[serde(default = "one")]
    pub particle_density_g_per_cm3: f64,
}

/// Surface geometry for the lunar shielding factor.
#[derive(Clone, Copy, Debug, Serialize, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum ShieldingGeometrySpec {
    /// A hanging ribbon's face (normal horizontal).
    RibbonFace,
    /// A randomly oriented plate (ECSS sphere average).
    RandomPlate,
}

impl ShieldingGeometrySpec {
    /// The shielding geometry of a bay's ribbon faces: a surface-run bay lies on the ground
    /// whatever the choice; a hanging bay's faces follow the choice.
    pub fn for_bay(self, surface_run: bool) -> crate::environment::ShieldingGeometry {
        use crate::environment::ShieldingGeometry as G;
        match self {
            _ if surface_run => G::SurfaceLyingFace,
            ShieldingGeometrySpec::RibbonFace => G::HangingRibbonFace,
            ShieldingGeometrySpec::RandomPlate => G::RandomPlate,
        }
    }
}

fn default_shielding_geometry() -> ShieldingGeometrySpec {
    ShieldingGeometrySpec::RibbonFace
}

/// Lunar secondary-ejecta source (SP-8013-type, parameters in
/// `flux_models/sp8013_lunar_ejecta.json`; REFERENCES-damage §3).
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct LunarEjectaSpec {
    /// Include the source.
    #[serde(default)]
    pub enabled: bool,
    /// Multiplier on the SP-8013 flux, dimensionless, in [0, 1] (SP-8013 "may overestimate";
    /// no published reduction factor: the range is an engineering assumption).
    #[serde(default = "one")]
    pub flux_scale_factor: f64,
    /// Hole diameter over particle diameter at ejecta speeds (<= 1 km/s), dimensionless.
    /// An assumption: no low-speed hole-size data for these films were found; 1.0 is the
    /// thin-film limit.
    #[serde(default = "one")]
    pub hole_factor: f64,
    /// Normal speed below which a slow particle does not perforate, m/s (tens of m/s for thin
    /// polycarbonate films, LIPIT tests, Soft Matter 16(16) 2020 [READ abstract]).
    #[serde(default = "default_ejecta_perforation_speed")]
    pub perforation_speed_m_per_s: f64,
}

impl Default for LunarEjectaSpec {
    fn default() -> Self {
        LunarEjectaSpec {
            enabled: false,
            flux_scale_factor: 1.0,
            hole_factor: 1.0,
            perforation_speed_m_per_s: default_ejecta_perforation_speed(),
        }
    }
}

fn default_ejecta_perforation_speed() -> f64 {
    50.0
}

/// Width schedule of the ribbons along the tether.
#[derive(Clone, Copy, Debug, Serialize, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum TaperSpec {
    /// Every bay has the anchor width.
    None,
    /// Each bay is widened (never narrowed below the anchor width) so that its largest intact
    /// stress is the allowable stress divided by `design_safety_factor`.
    ConstantStress,
}

/// How a cut ribbon's load reaches the survivors.
#[derive(Clone, Copy, Debug, Serialize, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum LoadSharingSpec {
    /// Equal sharing among the bay's surviving ribbons (Daniels).
    Equal,
    /// Nearest surviving neighbours take the load (Harlow–Phoenix local sharing).
    Local,
    /// No redistribution: a ribbon's tension never changes (for comparisons with closed forms).
    None,
}

impl LoadSharingSpec {
    /// The name as written in a scenario.
    pub fn name(self) -> &'static str {
        match self {
            LoadSharingSpec::Equal => "equal",
            LoadSharingSpec::Local => "local",
            LoadSharingSpec::None => "none",
        }
    }
}

/// Ribbon material, generic name.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MaterialSpec {
    /// Generic material name (PBO, para-aramid, UHMWPE, carbon fibre...).
    pub name: String,
    /// Ultimate tensile strength of the ribbon material, GPa.
    pub ultimate_strength_gpa: f64,
    /// Material density, g/cm^3.
    pub density_g_per_cm3: f64,
    /// Named strength knock-down factors (long gauge, ageing, joints...), each in (0, 1];
    /// the allowable stress is the ultimate strength times their product. They are
    /// unnotched-strength factors: stress concentration at holes is the notch model's job.
    #[serde(default)]
    pub strength_knockdowns: BTreeMap<String, f64>,
    /// Residual strength of a holed ribbon (default: net section, the notch-insensitive bound).
    #[serde(default)]
    pub notch_model: NotchModelSpec,
}

/// Residual-strength (notch) model of the ribbon material (REFERENCES-damage §2).
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq, Default)]
#[serde(tag = "model", rename_all = "snake_case", deny_unknown_fields)]
pub enum NotchModelSpec {
    /// Net section, strength x (1 - D/W): notch-insensitive (ductile films, split UD tapes).
    #[default]
    NetSection,
    /// Whitney–Nuismer point-stress criterion.
    PointStress {
        /// Characteristic distance d_0 from the hole edge, mm.
        characteristic_length_mm: f64,
        /// Infinite-plate stress concentration K_T∞, dimensionless (3 isotropic; <= 7.7086).
        #[serde(default = "default_kt")]
        kt_infinite: f64,
        /// Apply the isotropic (Heywood-form) finite-width correction.
        #[serde(default = "yes")]
        finite_width_correction: bool,
        /// Where the parameters come from, or "engineering assumption".
        basis: String,
    },
    /// Whitney–Nuismer average-stress criterion.
    AverageStress {
        /// Averaging length a_0 from the hole edge, mm.
        characteristic_length_mm: f64,
        /// Infinite-plate stress concentration K_T∞, dimensionless (>= 3).
        #[serde(default = "default_kt")]
        kt_infinite: f64,
        /// Apply the isotropic (Heywood-form) finite-width correction.
        #[serde(default = "yes")]
        finite_width_correction: bool,
        /// Where the parameters come from, or "engineering assumption".
        basis: String,
    },
}

fn default_kt() -> f64 {
    3.0
}

/// The tether section.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TetherSpec {
    /// `near` (through L1, towards Earth) or `far` (through L2).
    pub side: Side,
    /// Latitude of the base (where the anchor holds the tension) on the Moon, degrees,
    /// -90..90. The tether's foot is always on the equator at the sub-Earth point (`near`) or
    /// the anti-Earth point (`far`); a base elsewhere is joined to it by a surface run of
    /// ribbons lying on the ground along the great circle. Default 0.
    #[serde(default)]
    pub anchor_latitude_deg: f64,
    /// Longitude of the base, degrees east of the sub-Earth point, -180..360 (0 for `near`
    /// and 180 for `far`: base at the foot, no surface run).
    pub anchor_longitude_deg: f64,
    /// Altitude of the top end (counterweight) above the lunar surface, km.
    pub top_altitude_km: f64,
    /// Number of parallel ribbons.
    pub ribbon_count: u32,
    /// Ribbon width at the anchor, mm.
    pub ribbon_width_mm: f64,
    /// Ribbon thickness, micrometres.
    pub ribbon_thickness_um: f64,
    /// Ribbon material.
    pub material: MaterialSpec,
    /// Width schedule.
    #[serde(default = "default_taper")]
    pub taper: TaperSpec,
    /// Allowable stress over the largest intact stress that the taper aims for, dimensionless.
    #[serde(default = "default_design_safety_factor")]
    pub design_safety_factor: f64,
    /// Placement of ribbons across the tether (for local load sharing).
    #[serde(default = "default_arrangement")]
    pub arrangement: Arrangement,
    /// Load-sharing rule after a cut.
    #[serde(default = "default_load_sharing")]
    pub load_sharing: LoadSharingSpec,
    /// Distance between adjacent cross-links along the tether, km.
    pub cross_link_spacing_km: f64,
    /// Mass of one cross-link, kg.
    pub cross_link_mass_kg: f64,
    /// Strikes that cut cross-links (absent: cross-links are never hit, today's results).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cross_link_hits: Option<CrossLinkHitsSpec>,
    /// Tension held by the anchor, N.
    pub anchor_preload_n: f64,
    /// Design envelope of climber traffic, added to the tension in every bay, N.
    #[serde(default)]
    pub traffic_load_n: f64,
}

/// Cross-link hits: each interior cross-link can be cut by one particle at least the critical
/// diameter striking its exposed area; a cut cross-link stops load transfer at its station,
/// so the bays on either side act as one longer bay (see README, "Cross-link hits").
#[derive(Clone, Copy, Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct CrossLinkHitsSpec {
    /// Surface area of one cross-link that particles can strike, m^2 (a thin plate: both
    /// faces; a compact body: its whole outer surface). Counted like ribbon area: the flux
    /// model's one-face flux of a tumbling plate times this area.
    pub exposed_area_m2: f64,
    /// Smallest particle diameter that cuts a cross-link, mm.
    pub critical_diameter_mm: f64,
}

/// How a strike turns into a hole.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
#[serde(tag = "law", rename_all = "snake_case", deny_unknown_fields)]
pub enum DamageSpec {
    /// Default: perforation above the ballistic limit; hole size from a hole-size law.
    ThinFilmHole {
        /// Hole-size relation: `constant` (hole_factor x particle diameter), `sawle_type` or
        /// `hill_type` (REFERENCES-damage §1.2), floored at the particle diameter.
        #[serde(default = "default_hole_size")]
        hole_size: HoleSizeSpec,
        /// Hole width over particle diameter for `constant`, dimensionless (engineering
        /// assumption, 1.0 to 1.7).
        #[serde(default = "default_hole_factor")]
        hole_factor: f64,
        /// Oblique strikes make an ellipse d k x d k / cos(theta) along their track; the
        /// removed width is its projection across the ribbon. Default: on for the fitted laws,
        /// off for `constant` (the former round hole).
        #[serde(default)]
        oblique_footprint: Option<bool>,
        /// Cap on cos(theta) in the elongation 1/cos(theta), dimensionless (0.2: elongation
        /// at most 5; grazing particles fragment).
        #[serde(default = "default_min_cos")]
        min_cos_incidence: f64,
        /// Film bulk sound speed for `hill_type`, m/s (2500: polymer film, assumption).
        #[serde(default = "default_ct")]
        target_sound_speed_m_per_s: f64,
        /// Particle bulk sound speed for `hill_type`, m/s (5000: assumption).
        #[serde(default = "default_cp")]
        particle_sound_speed_m_per_s: f64,
    },
    /// Classical criterion: a particle of at least `fraction` of the ribbon width severs it.
    FractionOfWidth {
        /// Fraction of the ribbon width, dimensionless (classically 1/3).
        #[serde(default = "default_fraction")]
        fraction: f64,
    },
}

/// Hole-size relation of the thin-film law.
#[derive(Clone, Copy, Debug, Serialize, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum HoleSizeSpec {
    /// `hole_factor` x particle diameter (engineering assumption).
    Constant,
    /// Sawle-type law with the normal speed component (REFERENCES-damage §1.2, [MEMORY]).
    SawleType,
    /// Hill-type law (REFERENCES-damage §1.2, coefficients [READ-sec]).
    HillType,
}

impl Default for DamageSpec {
    fn default() -> Self {
        DamageSpec::ThinFilmHole {
            hole_size: default_hole_size(),
            hole_factor: default_hole_factor(),
            oblique_footprint: None,
            min_cos_incidence: default_min_cos(),
            target_sound_speed_m_per_s: default_ct(),
            particle_sound_speed_m_per_s: default_cp(),
        }
    }
}

impl DamageSpec {
    /// The thin-film law with a constant round hole `hole_factor × d_p` (the former default).
    pub fn constant_hole(hole_factor: f64) -> Self {
        DamageSpec::ThinFilmHole {
            hole_size: HoleSizeSpec::Constant,
            hole_factor,
            oblique_footprint: None,
            min_cos_incidence: default_min_cos(),
            target_sound_speed_m_per_s: default_ct(),
            particle_sound_speed_m_per_s: default_cp(),
        }
    }
}

fn default_hole_size() -> HoleSizeSpec {
    HoleSizeSpec::Constant
}
fn default_hole_factor() -> f64 {
    1.3
}
fn default_min_cos() -> f64 {
    0.2
}
fn default_ct() -> f64 {
    2500.0
}
fn default_cp() -> f64 {
    5000.0
}
fn default_fraction() -> f64 {
    1.0 / 3.0
}

/// A repair depot on the tether.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StationSpec {
    /// Station name.
    pub name: String,
    /// Altitude above the lunar surface, km.
    pub altitude_km: f64,
    /// Climbers based here.
    pub climbers: u32,
    /// Spare segments on hand at the start of the mission.
    pub initial_stock_segments: u32,
}

/// The repair climber design (all climbers are alike).
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ClimberSpec {
    /// Climbing speed away from the Moon, m/s.
    pub speed_up_m_per_s: f64,
    /// Descending speed towards the Moon, m/s.
    pub speed_down_m_per_s: f64,
    /// Largest spare-ribbon mass the climber can carry, kg.
    pub payload_kg: f64,
    /// Time to load and prepare at the station before leaving, hours.
    #[serde(default)]
    pub turnaround_hours: f64,
    /// Time to splice one segment on site, hours.
    pub splice_hours: f64,
    /// Own (empty) mass of one climber, kg. Default 300 kg: an engineering assumption (no
    /// source), of the order of the payload; the loaded climber's weight is
    /// (mass_kg + payload_kg) x local effective gravity.
    #[serde(default = "default_climber_mass")]
    pub mass_kg: f64,
    /// Cost of one climber in the user's own cost unit (any currency or index); optional. When
    /// given, trade studies report the fleet cost (climbers x unit cost) beside its mass.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unit_cost: Option<f64>,
    /// Whether a climber's weight loads the bays it is in while travelling and splicing
    /// (the excess of the weight over `tether.traffic_load_n`, which the design tension already
    /// carries everywhere). Default false for now (see the README: it moves the demo's answer
    /// about 80x on unsourced assumptions, and the strike-by-strike reference sampler cannot
    /// check it at practical cost); `check` warns whenever the envelope is below the weight.
    #[serde(default)]
    pub load_on_bays: bool,
    /// What powers the climbers, and so whether the Moon's shadow slows them (default
    /// `beamed`: power in shade as in sunlight, the behaviour before this option existed).
    #[serde(default, skip_serializing_if = "ClimberPowerSpec::is_beamed")]
    pub power: ClimberPowerSpec,
}

fn default_climber_mass() -> f64 {
    300.0
}

/// What powers a climber. Solar climbers slow down or stop while they are in the Moon's shadow
/// (a point at distance r from the Moon's centre is dark for arcsin(R/r)/pi of every synodic
/// month); see `repair::ShadeMotion` for the motion and its assumptions.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq, Default)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum ClimberPowerSpec {
    /// Power beamed from a station (or any supply the shadow does not cut): full speed always.
    #[default]
    Beamed,
    /// Solar cells only: in the shadow the climber moves at `shade_speed_m_per_s` (0: stops).
    Solar {
        /// Speed in the shadow, m/s (0: the climber stops until it is lit).
        #[serde(default)]
        shade_speed_m_per_s: f64,
        /// Angle at mission start, at the Moon's centre, from the tether's direction to the
        /// Sun, in the sense of the Sun's motion, degrees (0: Sun above the tether, all lit;
        /// 180: Sun behind the Moon; for a near-side tether 180 is new Moon).
        #[serde(default)]
        sun_angle_at_start_deg: f64,
    },
    /// Solar cells and a battery: in the shadow the climber moves at full speed on the
    /// battery, drawing `power_w`, until it is empty, then at `shade_speed_m_per_s`.
    SolarWithBattery {
        /// Usable battery energy, Wh (full at the start of each leg, refilled in light).
        battery_energy_wh: f64,
        /// Power drawn while moving at full speed, W.
        power_w: f64,
        /// Speed in the shadow with an empty battery, m/s (0: stops).
        #[serde(default)]
        shade_speed_m_per_s: f64,
        /// Sun angle at mission start, degrees (as for `solar`).
        #[serde(default)]
        sun_angle_at_start_deg: f64,
    },
}

impl ClimberPowerSpec {
    /// The default: no shade effect.
    pub fn is_beamed(&self) -> bool {
        matches!(self, ClimberPowerSpec::Beamed)
    }
}

/// How a cut is noticed.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum DetectionSpec {
    /// A fixed delay after the cut.
    Fixed {
        /// Delay, hours.
        delay_hours: f64,
    },
    /// An exponentially distributed delay.
    Exponential {
        /// Mean delay, hours.
        mean_hours: f64,
    },
    /// Cuts are found at the next periodic inspection.
    PeriodicInspection {
        /// Time between inspections, hours.
        interval_hours: f64,
    },
}

impl DetectionSpec {
    /// The `kind` as written in a scenario.
    pub fn kind(&self) -> &'static str {
        match self {
            DetectionSpec::Fixed { .. } => "fixed",
            DetectionSpec::Exponential { .. } => "exponential",
            DetectionSpec::PeriodicInspection { .. } => "periodic_inspection",
        }
    }
}

/// How spare stock is replenished.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum ResupplySpec {
    /// No resupply during the mission.
    None,
    /// A delivery of `batch_segments` to every station every `interval_days`.
    Periodic {
        /// Time between deliveries, days.
        interval_days: f64,
        /// Segments per delivery and station.
        batch_segments: u32,
    },
    /// Order `batch_segments` when a station's stock falls to `reorder_point_segments`.
    ReorderPoint {
        /// Stock level that triggers an order, segments.
        reorder_point_segments: u32,
        /// Segments per order.
        batch_segments: u32,
        /// Time from order to delivery, days.
        lead_time_days: f64,
    },
}

/// Order in which waiting repairs are served.
#[derive(Clone, Copy, Debug, Serialize, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum DispatchSpec {
    /// Most cut segments in the bay first, then lowest margin.
    MostEndangered,
    /// First come, first served.
    FirstCome,
}

impl DispatchSpec {
    /// The name as written in a scenario.
    pub fn name(self) -> &'static str {
        match self {
            DispatchSpec::MostEndangered => "most_endangered",
            DispatchSpec::FirstCome => "first_come",
        }
    }
}

/// The repair section.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RepairSpec {
    /// Depots.
    pub stations: Vec<StationSpec>,
    /// Climber design.
    pub climber: ClimberSpec,
    /// Detection of cuts.
    pub detection: DetectionSpec,
    /// Resupply of spare segments.
    #[serde(default = "default_resupply")]
    pub resupply: ResupplySpec,
    /// Dispatch policy.
    #[serde(default = "default_dispatch")]
    pub dispatch: DispatchSpec,
    /// Inspection and preventive replacement of holed intact segments (none by default).
    #[serde(default)]
    pub preventive_replacement: Option<PreventiveReplacementSpec>,
    /// Requirement on the 90th percentile of the time from a cut to its splice, hours: the
    /// run report says whether the fleet meets it, and a sweep over a station's `climbers`
    /// names the smallest fleet that does (none by default).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub splice_p90_target_hours: Option<f64>,
    /// How a cut segment is replaced: `climbers` (default: a climber carries a spare to the
    /// bay and splices it there) or `looped_ribbon` (the ribbon is a loop over pulleys at
    /// stations: the damaged length is hauled to a station, spliced there and hauled back).
    #[serde(default)]
    pub concept: RepairConceptSpec,
    /// The looped-ribbon concept's settings (used only with `concept: looped_ribbon`; always
    /// listed with their defaults, so a trade study can switch the concept alone).
    #[serde(default)]
    pub looped_ribbon: LoopedRibbonSpec,
    /// Repair of cut cross-links (needed, and only allowed, with `tether.cross_link_hits`): a
    /// climber carries a spare cross-link to the station and re-joins it there.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cross_link_repair: Option<CrossLinkRepairSpec>,
}

/// Repair of a cut cross-link: the cut is detected like a ribbon cut (the repair section's
/// detection model); a free climber from the nearest station holding a spare cross-link (ribbon
/// jobs are served first) carries it to the cross-link's station and re-joins it there, which
/// takes `repair_hours` on site; then it returns home. The two bays act as one merged span
/// from the cut until the re-join is done.
#[derive(Clone, Copy, Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct CrossLinkRepairSpec {
    /// Time on site to re-join one cross-link, hours.
    pub repair_hours: f64,
    /// Spare cross-links held at each station at mission start (0: cut cross-links are never
    /// repaired unless a delivery brings spares).
    pub spares_per_station: u32,
    /// Spare cross-links each resupply delivery brings to its station (with the ribbon
    /// segments of `repair.resupply`; 0 by default).
    #[serde(default)]
    pub resupply_batch: u32,
}

/// The repair concept.
#[derive(Clone, Copy, Debug, Serialize, Deserialize, PartialEq, Eq, Default)]
#[serde(rename_all = "snake_case")]
pub enum RepairConceptSpec {
    /// Climbers carry spares to the bay and splice on site (the behaviour before this option).
    #[default]
    Climbers,
    /// Ribbons are loops over pulleys at stations; damaged lengths are hauled to a station.
    LoopedRibbon,
}

impl RepairConceptSpec {
    /// The name as written in a scenario.
    pub fn name(self) -> &'static str {
        match self {
            RepairConceptSpec::Climbers => "climbers",
            RepairConceptSpec::LoopedRibbon => "looped_ribbon",
        }
    }
}

/// The looped-ribbon repair concept: each ribbon runs as a loop over a pulley at a station. A
/// detected cut is repaired by hauling the loop until the whole damaged length (the far end of
/// the cut segment) has reached the nearest pulley station, splicing a new length in there
/// (one of `station_splice_capacity` splice positions, a spare from the station's stock), and
/// hauling the loop back until the new length is in place. The defaults are invented
/// engineering values (no source), of the order of the demo's climber settings.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct LoopedRibbonSpec {
    /// Speed at which a loop is hauled along the line, m/s.
    #[serde(default = "default_haul_speed")]
    pub haul_speed_m_per_s: f64,
    /// Time to splice one new length in at a station, hours.
    #[serde(default = "default_station_splice_hours")]
    pub station_splice_hours: f64,
    /// Splices a station can work on at the same time (a whole number, at least 1).
    #[serde(default = "default_station_splice_capacity")]
    pub station_splice_capacity: u32,
    /// Names of the stations that hold pulleys (empty: every station).
    #[serde(default)]
    pub pulley_stations: Vec<String>,
}

impl Default for LoopedRibbonSpec {
    fn default() -> Self {
        LoopedRibbonSpec {
            haul_speed_m_per_s: default_haul_speed(),
            station_splice_hours: default_station_splice_hours(),
            station_splice_capacity: default_station_splice_capacity(),
            pulley_stations: Vec::new(),
        }
    }
}

fn default_haul_speed() -> f64 {
    20.0
}
fn default_station_splice_hours() -> f64 {
    6.0
}
fn default_station_splice_capacity() -> u32 {
    2
}

/// When a holed intact segment counts as worth replacing before it is cut.
#[derive(Clone, Copy, Debug, Serialize, Deserialize, PartialEq)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum ReplacementThresholdSpec {
    /// Worst hole at least this fraction of the ribbon width.
    FractionOfWidth {
        /// Threshold / ribbon width, dimensionless, in [0, 1].
        fraction: f64,
    },
    /// Worst hole at least this fraction of the critical width the segment would have with one
    /// more ribbon of its bay cut (the next cut level; equal sharing of the bay's tension).
    FractionOfNextCritical {
        /// Threshold / critical width at the next cut level, dimensionless, >= 0.
        fraction: f64,
    },
}

/// Inspection and preventive replacement: an intact segment whose worst hole is at least the
/// threshold is replaced with a spare, at every climber visit to a bay, at periodic
/// inspections of the lowest bays, or both.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct PreventiveReplacementSpec {
    /// The replacement threshold.
    pub threshold: ReplacementThresholdSpec,
    /// Inspect the bay a repair climber splices, after splicing.
    #[serde(default = "yes")]
    pub at_climber_visits: bool,
    /// Extra spare segments a repair climber takes beyond the cuts it is sent for (within its
    /// capacity and the station's stock); unused ones return to stock.
    #[serde(default = "default_extra_spares")]
    pub extra_spares_per_trip: u32,
    /// Time between periodic inspections, days (none when absent).
    #[serde(default)]
    pub inspection_interval_days: Option<f64>,
    /// Periodic inspections cover the bays whose bottom lies below this altitude, km.
    #[serde(default = "default_inspection_km")]
    pub inspection_lowest_km: f64,
    /// Spare segments an inspection climber takes (within capacity and stock).
    #[serde(default = "default_inspection_spares")]
    pub inspection_spares: u32,
}

fn default_extra_spares() -> u32 {
    2
}
fn default_inspection_km() -> f64 {
    500.0
}
fn default_inspection_spares() -> u32 {
    6
}

/// The run section.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RunSpec {
    /// Mission length, years (Julian, 365.25 d).
    pub mission_years: f64,
    /// Number of Monte Carlo histories (a whole number; `1e4` and `20000.0` are accepted).
    #[serde(deserialize_with = "whole_count")]
    pub histories: u64,
    /// Master seed.
    pub seed: u64,
    /// Confidence level of reported intervals, dimensionless.
    #[serde(default = "default_confidence")]
    pub confidence: f64,
}

/// A count written as an integer or as a whole floating-point number (`1e4`).
fn whole_count<'de, D: serde::Deserializer<'de>>(d: D) -> Result<u64, D::Error> {
    #[derive(Deserialize)]
    #[serde(untagged)]
    enum Count {
        Int(u64),
        Float(f64),
    }
    match Count::deserialize(d)? {
        Count::Int(n) => Ok(n),
        Count::Float(x) if x.is_finite() && x >= 0.0 && x.fract() == 0.0 && x < 1.8e19 => {
            Ok(x as u64)
        }
        Count::Float(x) => Err(serde::de::Error::custom(format!(
            "{x} is not a whole number of histories: write for example 20000 or 2e4"
        ))),
    }
}

fn default_particle_density() -> f64 {
    2.5
}
fn default_velocity() -> String {
    "ecss_table_c1".to_string()
}
fn yes() -> bool {
    true
}
fn one() -> f64 {
    1.0
}
fn default_taper() -> TaperSpec {
    TaperSpec::None
}
fn default_design_safety_factor() -> f64 {
    2.0
}
fn default_arrangement() -> Arrangement {
    Arrangement::Row
}
fn default_load_sharing() -> LoadSharingSpec {
    LoadSharingSpec::Equal
}
fn default_resupply() -> ResupplySpec {
    ResupplySpec::None
}
fn default_dispatch() -> DispatchSpec {
    DispatchSpec::MostEndangered
}
fn default_confidence() -> f64 {
    0.95
}

#[cfg(test)]
mod tests {
    use super::*;

    // Source: the scenario file format itself: the names the report prints must be the ones
    // serde reads and writes.
    #[test]
    fn names_are_the_serde_names() {
        let tag = |v: serde_json::Value| match v {
            serde_json::Value::String(s) => s,
            serde_json::Value::Object(o) => o["kind"].as_str().unwrap().to_string(),
            other => panic!("{other}"),
        };
        for l in [
            LoadSharingSpec::Equal,
            LoadSharingSpec::Local,
            LoadSharingSpec::None,
        ] {
            assert_eq!(tag(serde_json::to_value(l).unwrap()), l.name());
        }
        for d in [DispatchSpec::MostEndangered, DispatchSpec::FirstCome] {
            assert_eq!(tag(serde_json::to_value(d).unwrap()), d.name());
        }
        for d in [
            DetectionSpec::Fixed { delay_hours: 1.0 },
            DetectionSpec::Exponential { mean_hours: 1.0 },
            DetectionSpec::PeriodicInspection {
                interval_hours: 1.0,
            },
        ] {
            assert_eq!(tag(serde_json::to_value(&d).unwrap()), d.kind());
        }
    }
}

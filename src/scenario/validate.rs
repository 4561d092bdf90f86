//! Range checks and conversion to SI. Every check names the field path, the value, the allowed
//! range and the unit. The ranges are wide engineering envelopes: they catch typos and unit
//! mistakes (mm for m, GPa for MPa), not design choices.

use super::error::ScenarioError;
use super::spec::*;
use crate::orbit::Side;
use crate::structure::load_sharing::{Arrangement, MAX_RIBBONS};

/// Seconds in a Julian year (365.25 d), the year of the flux models (kept here for the
/// scenario's users; the home of unit constants is [`crate::units`]).
pub use crate::units::SECONDS_PER_YEAR;

/// Largest number of bays a scenario may have (memory of per-bay tables stays small).
pub const MAX_BAYS: usize = 2_000_000;

/// The environment section in SI units.
#[derive(Clone, Debug)]
pub struct EnvironmentSettings {
    /// Flux model choice.
    pub flux_model: FluxModelSpec,
    /// Text of a tabulated flux model file, when one is used.
    pub flux_table_json: Option<String>,
    /// Meteoroid density, kg/m^3.
    pub particle_density_kg_per_m3: f64,
    /// Velocity distribution name.
    pub velocity_distribution: String,
    /// Moon focusing on.
    pub moon_focusing: bool,
    /// Earth focusing on.
    pub earth_focusing: bool,
    /// Moon shielding on.
    pub moon_shielding: bool,
    /// Surface geometry of the Moon shielding factor.
    pub moon_shielding_geometry: ShieldingGeometrySpec,
    /// Flux multiplier.
    pub flux_scale_factor: f64,
    /// Lunar ejecta source, validated (`enabled` false: absent).
    pub lunar_ejecta: LunarEjectaSpec,
    /// Day of the year of mission start, d.
    pub mission_start_day_of_year: f64,
    /// Meteor streams in SI (empty: a constant flux).
    pub meteor_streams: Vec<crate::environment::MeteorStream>,
}

/// The tether section in SI units.
#[derive(Clone, Debug)]
pub struct TetherSettings {
    /// Near (L1) or far (L2) side.
    pub side: Side,
    /// Top end altitude above the lunar surface, m.
    pub top_altitude_m: f64,
    /// Ribbon count.
    pub ribbon_count: usize,
    /// Ribbon width at the anchor, m.
    pub anchor_width_m: f64,
    /// Ribbon thickness, m.
    pub thickness_m: f64,
    /// Generic material name.
    pub material_name: String,
    /// Ultimate strength, Pa.
    pub ultimate_strength_pa: f64,
    /// Product of the strength knock-down factors.
    pub knockdown: f64,
    /// Allowable stress = ultimate strength x knock-downs, Pa.
    pub allowable_stress_pa: f64,
    /// Material density, kg/m^3.
    pub material_density_kg_per_m3: f64,
    /// Width schedule.
    pub taper: TaperSpec,
    /// Target intact margin of the taper.
    pub design_safety_factor: f64,
    /// Ribbon arrangement.
    pub arrangement: Arrangement,
    /// Load-sharing rule.
    pub load_sharing: LoadSharingSpec,
    /// Cross-link spacing, m.
    pub cross_link_spacing_m: f64,
    /// Cross-link mass, kg.
    pub cross_link_mass_kg: f64,
    /// Cross-link hits (None: off, the default).
    pub cross_link_hits: Option<CrossLinkHits>,
    /// Anchor preload, N.
    pub anchor_preload_n: f64,
    /// Traffic load envelope, N.
    pub traffic_load_n: f64,
    /// Residual-strength model of a holed ribbon.
    pub notch: crate::structure::notch::NotchModel,
    /// Latitude of the base, deg.
    pub anchor_latitude_deg: f64,
    /// Longitude of the base, deg.
    pub anchor_longitude_deg: f64,
    /// Great-circle length of the surface run from the base to the tether's foot, m (0 when
    /// the base is at the foot).
    pub surface_run_m: f64,
}

/// Cross-link hits in SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CrossLinkHits {
    /// Exposed area of one cross-link, m^2.
    pub exposed_area_m2: f64,
    /// Smallest particle diameter that cuts a cross-link, m.
    pub critical_diameter_m: f64,
}

/// A station in SI units.
#[derive(Clone, Debug)]
pub struct StationSettings {
    /// Name.
    pub name: String,
    /// Altitude, m.
    pub altitude_m: f64,
    /// Climbers based here.
    pub climbers: u32,
    /// Initial stock, segments.
    pub initial_stock_segments: u32,
}

/// The repair section in SI units.
#[derive(Clone, Debug)]
pub struct RepairSettings {
    /// Stations, in the order given.
    pub stations: Vec<StationSettings>,
    /// Climb speed, m/s.
    pub speed_up_m_per_s: f64,
    /// Descent speed, m/s.
    pub speed_down_m_per_s: f64,
    /// Payload, kg.
    pub payload_kg: f64,
    /// Turnaround, s.
    pub turnaround_s: f64,
    /// Splice duration, s.
    pub splice_s: f64,
    /// Own mass of one climber, kg.
    pub climber_mass_kg: f64,
    /// Detection model (hours as written; converted where used).
    pub detection: DetectionSpec,
    /// Resupply model.
    pub resupply: ResupplySpec,
    /// Dispatch policy.
    pub dispatch: DispatchSpec,
    /// Climber weights load the bays they are in (`repair.climber.load_on_bays`).
    pub climber_load_on_bays: bool,
    /// Inspection and preventive replacement, if any.
    pub preventive: Option<PreventiveSettings>,
    /// Required 90th percentile of the time from cut to splice, hours (none when absent).
    pub splice_p90_target_hours: Option<f64>,
    /// Solar power: how the shadow slows climbers (None: beamed power, no shade effect).
    pub solar: Option<SolarSettings>,
    /// The looped-ribbon concept (None: climbers, the default).
    pub looped: Option<LoopedSettings>,
    /// Repair of cut cross-links (None: not given).
    pub cross_link_repair: Option<CrossLinkRepairSettings>,
}

/// Repair of cut cross-links in SI units (see [`crate::scenario::CrossLinkRepairSpec`]).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CrossLinkRepairSettings {
    /// Time on site to re-join one cross-link, s.
    pub repair_s: f64,
    /// Spare cross-links at each station at mission start.
    pub spares_per_station: u32,
    /// Spare cross-links per resupply delivery.
    pub resupply_batch: u32,
}

/// The looped-ribbon repair concept in SI units.
#[derive(Clone, Debug, PartialEq)]
pub struct LoopedSettings {
    /// Haul speed along the line, m/s.
    pub haul_speed_m_per_s: f64,
    /// Time to splice one new length in at a station, s.
    pub station_splice_s: f64,
    /// Simultaneous splices per pulley station.
    pub station_splice_capacity: u32,
    /// Whether station i holds a pulley (same order as `RepairSettings::stations`).
    pub pulley: Vec<bool>,
}

/// A solar climber's behaviour in the Moon's shadow, in SI units.
#[derive(Clone, Debug, PartialEq)]
pub struct SolarSettings {
    /// Speed in the shadow with no battery energy left, m/s.
    pub shade_speed_m_per_s: f64,
    /// Battery energy, J (0: none).
    pub battery_j: f64,
    /// Power drawn while moving on the battery, W (0 without a battery).
    pub power_w: f64,
    /// Sun angle at mission start from the tether's direction, rad.
    pub sun_angle_at_start_rad: f64,
}

/// Inspection and preventive replacement in SI units.
#[derive(Clone, Debug, PartialEq)]
pub struct PreventiveSettings {
    /// The threshold as written (fractions are dimensionless).
    pub threshold: ReplacementThresholdSpec,
    /// Inspect at every repair climber's visit to its bay.
    pub at_climber_visits: bool,
    /// Extra spares a repair climber takes.
    pub extra_spares_per_trip: u32,
    /// Periodic inspection interval, s (none when absent).
    pub inspection_interval_s: Option<f64>,
    /// Periodic inspections cover bays whose bottom is below this altitude, m.
    pub inspection_lowest_m: f64,
    /// Spares an inspection climber takes.
    pub inspection_spares: u32,
}

impl PreventiveSettings {
    /// The policy in words (for outputs), e.g. "replace an intact segment whose worst hole is
    /// at least 0.5 of its next critical width, at repair visits and at inspections every 90
    /// days of the bays below 500 km".
    pub fn describe(&self) -> String {
        let threshold = match self.threshold {
            ReplacementThresholdSpec::FractionOfWidth { fraction } => {
                format!("{fraction} of the ribbon width")
            }
            ReplacementThresholdSpec::FractionOfNextCritical { fraction } => {
                format!("{fraction} of its critical width at the next cut level")
            }
        };
        let mut when = Vec::new();
        if self.at_climber_visits {
            when.push("at repair visits".to_string());
        }
        if let Some(dt) = self.inspection_interval_s {
            when.push(format!(
                "at inspections every {} days of the bays below {} km",
                dt / 86_400.0,
                self.inspection_lowest_m / 1000.0
            ));
        }
        if when.is_empty() {
            when.push("never (no visits or inspections selected)".into());
        }
        format!(
            "replace an intact segment whose worst hole is at least {threshold}, {}",
            when.join(" and ")
        )
    }
}

/// The run section in SI units.
#[derive(Clone, Debug)]
pub struct RunSettings {
    /// Mission length, s.
    pub mission_s: f64,
    /// Mission length, years.
    pub mission_years: f64,
    /// Histories.
    pub histories: u64,
    /// Master seed.
    pub seed: u64,
    /// Confidence level.
    pub confidence: f64,
}

/// A validated scenario in SI units. Build one with [`Scenario::from_spec`].
#[derive(Clone, Debug)]
pub struct Scenario {
    /// The spec as written (kept for reports and hashing).
    pub spec: ScenarioSpec,
    /// Stable hash of the spec and any table it reads.
    pub hash: u64,
    /// Environment.
    pub environment: EnvironmentSettings,
    /// Tether.
    pub tether: TetherSettings,
    /// Damage law, validated.
    pub damage: DamageSpec,
    /// Repair, if any.
    pub repair: Option<RepairSettings>,
    /// Run settings.
    pub run: RunSettings,
    /// The synthetic constant-rate mode in SI units, when set.
    pub synthetic_rates: Option<SyntheticRatesSettings>,
    /// Deprecated input names that were read (one sentence each, shown as warnings).
    pub deprecations: Vec<String>,
}

/// The synthetic constant-rate mode in SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SyntheticRatesSettings {
    /// Cut rate per intact segment, 1/s.
    pub cut_rate_per_s: f64,
    /// Repair rate per crew, 1/s.
    pub repair_rate_per_s: f64,
    /// Crews per bay.
    pub crews_per_bay: u32,
    /// Intact ribbons a bay needs.
    pub required_ribbons: u32,
}

/// Allowed interval of a number.
struct Range {
    lo: f64,
    hi: f64,
    lo_open: bool,
}

impl Range {
    fn open_closed(lo: f64, hi: f64) -> Self {
        Range {
            lo,
            hi,
            lo_open: true,
        }
    }
    fn closed(lo: f64, hi: f64) -> Self {
        Range {
            lo,
            hi,
            lo_open: false,
        }
    }
    fn text(&self) -> String {
        format!(
            "{}{}, {}]",
            if self.lo_open { "(" } else { "[" },
            fmt_num(self.lo),
            fmt_num(self.hi)
        )
    }
    fn contains(&self, v: f64) -> bool {
        v.is_finite()
            && (if self.lo_open {
                v > self.lo
            } else {
                v >= self.lo
            })
            && v <= self.hi
    }
}

fn fmt_num(v: f64) -> String {
    if v != 0.0 && (v.abs() >= 1e6 || v.abs() < 1e-3) {
        format!("{v:e}")
    } else {
        format!("{v}")
    }
}

fn check(
    path: &str,
    value: f64,
    range: Range,
    unit: &str,
    note: &str,
) -> Result<f64, ScenarioError> {
    if range.contains(value) {
        Ok(value)
    } else {
        Err(ScenarioError::OutOfRange {
            path: path.to_string(),
            value: fmt_num(value),
            allowed: range.text(),
            unit: unit.to_string(),
            note: note.to_string(),
        })
    }
}

fn check_count(path: &str, value: u64, lo: u64, hi: u64, unit: &str) -> Result<u64, ScenarioError> {
    if (lo..=hi).contains(&value) {
        Ok(value)
    } else {
        Err(ScenarioError::OutOfRange {
            path: path.to_string(),
            value: value.to_string(),
            allowed: format!("[{lo}, {hi}]"),
            unit: unit.to_string(),
            note: String::new(),
        })
    }
}

fn choice(path: &str, value: &str, allowed: &[&str]) -> Result<(), ScenarioError> {
    if allowed.contains(&value) {
        Ok(())
    } else {
        Err(ScenarioError::UnknownChoice {
            path: path.to_string(),
            value: value.to_string(),
            suggestion: super::nearest(value, allowed.iter().copied()),
            expected: allowed.iter().map(|s| s.to_string()).collect(),
        })
    }
}

/// Built-in flux model names.
pub const BUILTIN_FLUX_MODELS: &[&str] = &["grun1985", "grun1985_tabulated"];

impl Scenario {
    /// Validate a spec. `flux_table_json` is the text of the table file when the spec names one.
    pub fn from_spec(
        mut spec: ScenarioSpec,
        flux_table_json: Option<String>,
    ) -> Result<Self, ScenarioError> {
        // The old name of the synthetic constant-rate mode: still read, under its new name.
        let mut deprecations = Vec::new();
        if let Some(old) = spec.validation_mode.take() {
            if spec.synthetic_rates.is_some() {
                return Err(ScenarioError::Model {
                    path: "validation_mode".into(),
                    message: "is the old name of synthetic_rates; give only synthetic_rates".into(),
                });
            }
            spec.synthetic_rates = Some(old);
            deprecations.push("validation_mode is the old name of synthetic_rates (the synthetic constant-rate mode); it is read as synthetic_rates, rename it in the scenario".to_string());
        }
        let hash = super::scenario_hash(&spec, flux_table_json.as_deref());
        let environment = validate_environment(&spec.environment, flux_table_json)?;
        let tether = validate_tether(&spec.tether)?;
        let damage = validate_damage(&spec.damage)?;
        let repair = match &spec.repair {
            Some(r) => Some(validate_repair(r, tether.top_altitude_m)?),
            None => None,
        };
        let run = validate_run(&spec.run)?;
        let synthetic_rates = match &spec.synthetic_rates {
            Some(v) => Some(validate_synthetic_rates(v, tether.ribbon_count)?),
            None => None,
        };
        check_cross_link_combinations(&tether, repair.as_ref(), synthetic_rates.is_some())?;
        Ok(Scenario {
            spec,
            hash,
            environment,
            tether,
            damage,
            repair,
            run,
            synthetic_rates,
            deprecations,
        })
    }

    /// The scenario hash as 16 hex digits.
    pub fn hash_hex(&self) -> String {
        format!("{:016x}", self.hash)
    }
}

fn validate_environment(
    e: &EnvironmentSpec,
    flux_table_json: Option<String>,
) -> Result<EnvironmentSettings, ScenarioError> {
    if let FluxModelSpec::Builtin(name) = &e.flux_model {
        choice("environment.flux_model", name, BUILTIN_FLUX_MODELS)?;
    }
    if matches!(e.flux_model, FluxModelSpec::Table { .. }) && flux_table_json.is_none() {
        return Err(ScenarioError::Model {
            path: "environment.flux_model.table_file".into(),
            message: "a tabulated flux model needs its file; load the scenario from a file path"
                .into(),
        });
    }
    let rho = check(
        "environment.particle_density_g_per_cm3",
        e.particle_density_g_per_cm3,
        Range::closed(0.1, 10.0),
        "g/cm^3",
        "ECSS-E-ST-10-04C J.2.1.2 quotes meteoroid densities of 0.15 to 8 g/cm^3",
    )?;
    choice(
        "environment.velocity_distribution",
        &e.velocity_distribution,
        &["ecss_table_c1"],
    )?;
    let scale = check(
        "environment.flux_scale_factor",
        e.flux_scale_factor,
        Range::closed(0.0, 100.0),
        "(dimensionless)",
        "ECSS gives a flux uncertainty factor of 0.33 to 3",
    )?;
    Ok(EnvironmentSettings {
        flux_model: e.flux_model.clone(),
        flux_table_json,
        particle_density_kg_per_m3: rho * 1000.0,
        velocity_distribution: e.velocity_distribution.clone(),
        moon_focusing: e.moon_focusing,
        earth_focusing: e.earth_focusing,
        moon_shielding: e.moon_shielding,
        moon_shielding_geometry: e.moon_shielding_geometry,
        flux_scale_factor: scale,
        lunar_ejecta: validate_ejecta(&e.lunar_ejecta)?,
        mission_start_day_of_year: check(
            "environment.mission_start_day_of_year",
            e.mission_start_day_of_year,
            Range::closed(0.0, 365.25),
            "d",
            "days from 1 January",
        )?,
        meteor_streams: validate_streams(&e.meteor_streams)?,
    })
}

/// Most meteor streams a scenario may list.
pub const MAX_METEOR_STREAMS: usize = 16;

fn validate_streams(
    list: &[MeteorStreamSpec],
) -> Result<Vec<crate::environment::MeteorStream>, ScenarioError> {
    use crate::environment::streams as st;
    if list.len() > MAX_METEOR_STREAMS {
        return Err(ScenarioError::OutOfRange {
            path: "environment.meteor_streams".into(),
            value: list.len().to_string(),
            allowed: format!("[0, {MAX_METEOR_STREAMS}]"),
            unit: "streams".into(),
            note: "list the strongest streams; the sporadic model already holds the yearly average of all".into(),
        });
    }
    let mut out = Vec::with_capacity(list.len());
    for (i, s) in list.iter().enumerate() {
        let p = |f: &str| format!("environment.meteor_streams[{i}].{f}");
        let model = |f: &str, message: String| ScenarioError::Model {
            path: p(f),
            message,
        };
        let name = s.name.trim();
        if name.is_empty() || name.chars().count() > 64 || name.chars().any(char::is_control) {
            return Err(model(
                "name",
                "a stream needs a name of 1 to 64 printable characters".into(),
            ));
        }
        if list[..i].iter().any(|o| o.name.trim() == name) {
            return Err(model("name", format!("two streams are named `{name}`")));
        }
        let peak = check(
            &p("peak_day_of_year"),
            s.peak_day_of_year,
            Range::closed(0.0, 365.0),
            "d",
            "days from 1 January",
        )?;
        let v = check(
            &p("radiant_speed_km_per_s"),
            s.radiant_speed_km_per_s,
            Range::closed(11.0, 73.0),
            "km/s",
            "geocentric speeds of meteoroids bound to the Sun lie between about 11 and 72 km/s",
        )?;
        let r = check(
            &p("population_index"),
            s.population_index,
            Range::open_closed(1.4, 4.0),
            "(dimensionless)",
            "the Koschack–Rendtel flux needs r > 1.3 and a bounded size distribution (mass index above 4/3) r > 1.36; showers have r of about 1.8 to 3.5",
        )?;
        let rho = check(
            &p("particle_density_g_per_cm3"),
            s.particle_density_g_per_cm3,
            Range::closed(0.1, 10.0),
            "g/cm^3",
            "ECSS-E-ST-10-04C 10.2.4.5c uses 1.0 g/cm^3 for streams",
        )?;
        let mass_index = st::mass_index_of_population_index(r);
        let (flux_ref, m_ref) = match (
            s.zhr_per_hour,
            s.flux_above_reference_per_m2_per_year,
            s.reference_mass_g,
        ) {
            (Some(zhr), None, None) => {
                let zhr = check(
                    &p("zhr_per_hour"),
                    zhr,
                    Range::closed(0.0, 1e6),
                    "per hour",
                    "annual showers reach ZHR 10 to 150, storms thousands",
                )?;
                (
                    st::koschack_rendtel_flux_per_km2_per_h(zhr, r) / 1e6 / crate::units::SECONDS_PER_HOUR,
                    st::mass_of_magnitude_6_5_kg(v * 1e3),
                )
            }
            (None, Some(f), Some(m)) => {
                let f = check(
                    &p("flux_above_reference_per_m2_per_year"),
                    f,
                    Range::closed(0.0, 1e6),
                    "m^-2 yr^-1",
                    "",
                )?;
                let m = check(
                    &p("reference_mass_g"),
                    m,
                    Range::closed(1e-15, 1e3),
                    "g",
                    "",
                )?;
                (f / crate::scenario::SECONDS_PER_YEAR, m * 1e-3)
            }
            _ => {
                return Err(model(
                    "zhr_per_hour",
                    "give the strength either as zhr_per_hour or as flux_above_reference_per_m2_per_year with reference_mass_g".into(),
                ))
            }
        };
        let side = |b: Option<f64>, days: Option<f64>, which: &str| -> Result<f64, ScenarioError> {
            match (b, days) {
                (Some(b), None) => Ok(st::e_folding_s_of_b(check(
                    &p(&format!("{which}_b_per_deg")),
                    b,
                    Range::closed(0.01, 1000.0),
                    "per degree of solar longitude",
                    "annual showers have B of about 0.1 to 1, outbursts 7 to 220 (Jenniskens)",
                )?)),
                (None, Some(d)) => Ok(check(
                    &p(&format!("{which}_e_folding_days")),
                    d,
                    Range::closed(1e-3, 45.0),
                    "d",
                    "a profile wider than 45 days is not a stream but background",
                )? * st::DAY_S),
                _ => Err(model(
                    &format!("{which}_b_per_deg"),
                    format!("give exactly one of {which}_b_per_deg and {which}_e_folding_days"),
                )),
            }
        };
        let rise = side(s.rise_b_per_deg, s.rise_e_folding_days, "rise")?;
        let fall = side(s.fall_b_per_deg, s.fall_e_folding_days, "fall")?;
        let stream = crate::environment::MeteorStream {
            name: name.to_string(),
            peak_day_of_year: peak,
            rise_e_folding_s: rise,
            fall_e_folding_s: fall,
            peak_flux_above_reference_per_m2_per_s: flux_ref,
            reference_mass_kg: m_ref,
            mass_index,
            speed_m_per_s: v * 1e3,
            density_kg_per_m3: rho * 1000.0,
        };
        stream.check().map_err(|e| model("name", e.to_string()))?;
        out.push(stream);
    }
    Ok(out)
}

fn validate_ejecta(e: &LunarEjectaSpec) -> Result<LunarEjectaSpec, ScenarioError> {
    check(
        "environment.lunar_ejecta.flux_scale_factor",
        e.flux_scale_factor,
        Range::closed(0.0, 1.0),
        "(dimensionless)",
        "SP-8013 \"may overestimate\"; no published factor exists, 0.3 is the suggested base and 1 the published model",
    )?;
    check(
        "environment.lunar_ejecta.hole_factor",
        e.hole_factor,
        Range::closed(1.0, 3.0),
        "(dimensionless)",
        "low-speed hole size is an assumption; 1.0 is the thin-film limit",
    )?;
    check(
        "environment.lunar_ejecta.perforation_speed_m_per_s",
        e.perforation_speed_m_per_s,
        Range::closed(0.0, 1000.0),
        "m/s",
        "thin polymer films are perforated at tens of m/s",
    )?;
    Ok(e.clone())
}

fn validate_tether(t: &TetherSpec) -> Result<TetherSettings, ScenarioError> {
    // The base may be anywhere on the Moon: a base away from the tether's foot (the sub-Earth
    // point for a near-side tether, the anti-Earth point for a far-side one) is joined to it by
    // a surface run along the great circle (`structure::surface`). Only coordinates that name
    // no point are refused.
    let lat = check(
        "tether.anchor_latitude_deg",
        t.anchor_latitude_deg,
        Range::closed(-90.0, 90.0),
        "deg",
        "latitude of the base; a base off the tether's foot is joined to it by a surface run",
    )?;
    let lon = check(
        "tether.anchor_longitude_deg",
        t.anchor_longitude_deg,
        Range::closed(-180.0, 360.0),
        "deg",
        "longitude of the base, east positive from the sub-Earth point",
    )?;
    let foot_lon = foot_longitude_deg(t.side);
    let surface_run_m = crate::structure::surface::surface_run_length_m(
        crate::orbit::EarthMoon::standard().moon_radius_m,
        lat,
        lon,
        foot_lon,
    );
    // Below a millimetre the run is rounding in the coordinates, not a design: none.
    let surface_run_m = if surface_run_m > 1e-3 {
        surface_run_m
    } else {
        0.0
    };
    let top_km = check(
        "tether.top_altitude_km",
        t.top_altitude_km,
        Range::open_closed(0.0, 300_000.0),
        "km",
        "",
    )?;
    let n = check_count(
        "tether.ribbon_count",
        u64::from(t.ribbon_count),
        1,
        MAX_RIBBONS as u64,
        "ribbons",
    )?;
    let w_mm = check(
        "tether.ribbon_width_mm",
        t.ribbon_width_mm,
        Range::open_closed(0.0, 5_000.0),
        "mm",
        "",
    )?;
    let th_um = check(
        "tether.ribbon_thickness_um",
        t.ribbon_thickness_um,
        Range::open_closed(0.0, 10_000.0),
        "um",
        "",
    )?;
    if th_um * 1e-3 > w_mm {
        return Err(ScenarioError::Infeasible {
            reason: format!(
                "tether.ribbon_thickness_um = {th_um} um is more than the width tether.ribbon_width_mm = {w_mm} mm: a ribbon is thinner than it is wide"
            ),
        });
    }
    if t.material.name.trim().is_empty() {
        return Err(ScenarioError::Model {
            path: "tether.material.name".into(),
            message: "give the material a generic name (for example PBO, para-aramid, UHMWPE, carbon fibre)".into(),
        });
    }
    let sigma = check(
        "tether.material.ultimate_strength_gpa",
        t.material.ultimate_strength_gpa,
        Range::open_closed(0.0, 200.0),
        "GPa",
        "",
    )?;
    let rho = check(
        "tether.material.density_g_per_cm3",
        t.material.density_g_per_cm3,
        Range::closed(0.1, 25.0),
        "g/cm^3",
        "",
    )?;
    let notch = validate_notch(&t.material.notch_model)?;
    let mut knockdown = 1.0;
    for (name, &f) in &t.material.strength_knockdowns {
        knockdown *= check(
            &format!("tether.material.strength_knockdowns.{name}"),
            f,
            Range::open_closed(0.0, 1.0),
            "(dimensionless)",
            "a knock-down factor multiplies the ultimate strength",
        )?;
    }
    let sf = check(
        "tether.design_safety_factor",
        t.design_safety_factor,
        Range::closed(1.0, 100.0),
        "(dimensionless)",
        "",
    )?;
    let spacing_km = check(
        "tether.cross_link_spacing_km",
        t.cross_link_spacing_km,
        Range::open_closed(0.0, 300_000.0),
        "km",
        "",
    )?;
    if spacing_km > top_km {
        return Err(ScenarioError::Infeasible {
            reason: format!(
                "tether.cross_link_spacing_km = {spacing_km} km is longer than the tether ({top_km} km from anchor to top): there must be at least one bay"
            ),
        });
    }
    let bays = (top_km / spacing_km).ceil() + (surface_run_m / 1e3 / spacing_km).ceil();
    if bays > MAX_BAYS as f64 {
        return Err(ScenarioError::OutOfRange {
            path: "tether.cross_link_spacing_km".into(),
            value: fmt_num(spacing_km),
            allowed: format!(
                "[{}, {}]",
                fmt_num(top_km / MAX_BAYS as f64),
                fmt_num(top_km)
            ),
            unit: "km".into(),
            note: format!("at most {MAX_BAYS} bays, surface run included"),
        });
    }
    let cl_mass = check(
        "tether.cross_link_mass_kg",
        t.cross_link_mass_kg,
        Range::closed(0.0, 1e4),
        "kg",
        "",
    )?;
    let cross_link_hits = match &t.cross_link_hits {
        Some(h) => Some(CrossLinkHits {
            exposed_area_m2: check(
                "tether.cross_link_hits.exposed_area_m2",
                h.exposed_area_m2,
                Range::open_closed(0.0, 1e4),
                "m^2",
                "the surface of one cross-link that particles can strike",
            )?,
            critical_diameter_m: check(
                "tether.cross_link_hits.critical_diameter_mm",
                h.critical_diameter_mm,
                Range::open_closed(0.0, 1e3),
                "mm",
                "the smallest particle diameter that cuts a cross-link",
            )? * 1e-3,
        }),
        None => None,
    };
    let preload = check(
        "tether.anchor_preload_n",
        t.anchor_preload_n,
        Range::closed(0.0, 1e9),
        "N",
        "",
    )?;
    let traffic = check(
        "tether.traffic_load_n",
        t.traffic_load_n,
        Range::closed(0.0, 1e9),
        "N",
        "",
    )?;
    Ok(TetherSettings {
        side: t.side,
        top_altitude_m: top_km * 1e3,
        ribbon_count: n as usize,
        anchor_width_m: w_mm * 1e-3,
        thickness_m: th_um * 1e-6,
        material_name: t.material.name.clone(),
        ultimate_strength_pa: sigma * 1e9,
        knockdown,
        allowable_stress_pa: sigma * 1e9 * knockdown,
        material_density_kg_per_m3: rho * 1e3,
        taper: t.taper,
        design_safety_factor: sf,
        arrangement: t.arrangement,
        load_sharing: t.load_sharing,
        cross_link_spacing_m: spacing_km * 1e3,
        cross_link_mass_kg: cl_mass,
        cross_link_hits,
        anchor_preload_n: preload,
        traffic_load_n: traffic,
        notch,
        anchor_latitude_deg: lat,
        anchor_longitude_deg: lon,
        surface_run_m,
    })
}

/// Longitude of the tether's foot, deg: the sub-Earth point (0) for a near-side tether, the
/// anti-Earth point (180) for a far-side one; both on the equator.
pub fn foot_longitude_deg(side: Side) -> f64 {
    match side {
        Side::Near => 0.0,
        Side::Far => 180.0,
    }
}

fn validate_notch(
    n: &NotchModelSpec,
) -> Result<crate::structure::notch::NotchModel, ScenarioError> {
    use crate::structure::notch::{NetSection, NotchModel, WhitneyNuismer, WnCriterion};
    let base = "tether.material.notch_model";
    let (criterion, length_mm, kt, fwc, basis) = match n {
        NotchModelSpec::NetSection => return Ok(NotchModel::NetSection(NetSection)),
        NotchModelSpec::PointStress {
            characteristic_length_mm,
            kt_infinite,
            finite_width_correction,
            basis,
        } => (
            WnCriterion::PointStress,
            *characteristic_length_mm,
            *kt_infinite,
            *finite_width_correction,
            basis,
        ),
        NotchModelSpec::AverageStress {
            characteristic_length_mm,
            kt_infinite,
            finite_width_correction,
            basis,
        } => (
            WnCriterion::AverageStress,
            *characteristic_length_mm,
            *kt_infinite,
            *finite_width_correction,
            basis,
        ),
    };
    if basis.trim().is_empty() {
        return Err(ScenarioError::Model {
            path: format!("{base}.basis"),
            message: "name the source of the notch parameters, or write \"engineering assumption\""
                .into(),
        });
    }
    WhitneyNuismer::new(criterion, length_mm * 1e-3, kt, fwc)
        .map(NotchModel::WhitneyNuismer)
        .map_err(|e| ScenarioError::OutOfRange {
            path: format!("{base}.{}", e.field),
            value: fmt_num(e.value),
            allowed: e.range.clone(),
            unit: e.unit.to_string(),
            note: e.reason.to_string(),
        })
}

fn validate_damage(d: &DamageSpec) -> Result<DamageSpec, ScenarioError> {
    match d {
        DamageSpec::ThinFilmHole {
            hole_factor,
            min_cos_incidence,
            target_sound_speed_m_per_s,
            particle_sound_speed_m_per_s,
            ..
        } => {
            check(
                "damage.hole_factor",
                *hole_factor,
                Range::closed(1.0, 3.0),
                "(dimensionless)",
                "hole width over particle diameter; thin-film experiments suggest 1.0 to 1.7",
            )?;
            check(
                "damage.min_cos_incidence",
                *min_cos_incidence,
                Range::open_closed(0.0, 1.0),
                "(dimensionless)",
                "cap on cos(theta) in the oblique elongation; 0.2 caps it at 5",
            )?;
            check(
                "damage.target_sound_speed_m_per_s",
                *target_sound_speed_m_per_s,
                Range::open_closed(0.0, 20_000.0),
                "m/s",
                "",
            )?;
            check(
                "damage.particle_sound_speed_m_per_s",
                *particle_sound_speed_m_per_s,
                Range::open_closed(0.0, 20_000.0),
                "m/s",
                "",
            )?;
        }
        DamageSpec::FractionOfWidth { fraction } => {
            check(
                "damage.fraction",
                *fraction,
                Range::open_closed(0.0, 1.0),
                "(fraction of ribbon width)",
                "classically 1/3",
            )?;
        }
    }
    Ok(d.clone())
}

/// Longest station or scenario name accepted, characters.
pub const MAX_NAME_CHARS: usize = 200;

/// What cross-link hits can be combined with: repair only by climbers with a cross-link repair
/// job (`repair.cross_link_repair`, which needs the hits), without preventive replacement or
/// climber loads (their state changes are not written for merged spans), and not the
/// synthetic constant-rate mode (no cross-links).
fn check_cross_link_combinations(
    tether: &TetherSettings,
    repair: Option<&RepairSettings>,
    synthetic: bool,
) -> Result<(), ScenarioError> {
    let refuse = |path: &str, message: String| {
        Err(ScenarioError::Model {
            path: path.into(),
            message,
        })
    };
    if tether.cross_link_hits.is_none() {
        if repair.is_some_and(|r| r.cross_link_repair.is_some()) {
            return refuse(
                "repair.cross_link_repair",
                "has nothing to repair: cross-links are never cut without tether.cross_link_hits (add it, or remove repair.cross_link_repair)".into(),
            );
        }
        return Ok(());
    }
    if synthetic {
        return refuse(
            "tether.cross_link_hits",
            "cannot be combined with synthetic_rates (its synthetic histories have no cross-links)"
                .into(),
        );
    }
    let Some(r) = repair else {
        return Ok(());
    };
    let other = if r.looped.is_some() {
        Some(("repair.concept", "the looped-ribbon concept (no climber travels to re-join a cross-link; use \"climbers\")"))
    } else if r.preventive.is_some() {
        Some(("repair.preventive_replacement", "preventive replacement (not built for merged spans yet; remove it to study cross-link hits with repair)"))
    } else if r.climber_load_on_bays {
        Some((
            "repair.climber.load_on_bays",
            "climber loads on the bays (not built for merged spans yet; set it to false)",
        ))
    } else if r.cross_link_repair.is_none() {
        Some(("repair.cross_link_repair", "a repair section without repair.cross_link_repair: say how a cut cross-link is re-joined (repair_hours, spares_per_station; spares_per_station 0 for cross-links that are never repaired)"))
    } else {
        None
    };
    match other {
        Some((path, what)) => refuse(
            "tether.cross_link_hits",
            format!("cannot be combined with {what} [{path}]"),
        ),
        None => Ok(()),
    }
}

fn validate_repair(r: &RepairSpec, top_altitude_m: f64) -> Result<RepairSettings, ScenarioError> {
    if r.stations.is_empty() {
        return Err(ScenarioError::Model {
            path: "repair.stations".into(),
            message: "at least one station is needed when repair is given (use \"repair\": null for no repair)".into(),
        });
    }
    let mut stations = Vec::with_capacity(r.stations.len());
    let mut total_climbers = 0u64;
    for (i, s) in r.stations.iter().enumerate() {
        let p = format!("repair.stations[{i}]");
        // Names key the per-station tables and plot files: two stations with one name would
        // share (and overwrite) them.
        if s.name.chars().count() > MAX_NAME_CHARS {
            return Err(ScenarioError::Model {
                path: format!("{p}.name"),
                message: format!(
                    "the name has {} characters; allowed at most {MAX_NAME_CHARS}",
                    s.name.chars().count()
                ),
            });
        }
        let key = s.name.trim().to_lowercase();
        if let Some(j) = r.stations[..i]
            .iter()
            .position(|o| o.name.trim().to_lowercase() == key)
        {
            return Err(ScenarioError::Model {
                path: format!("{p}.name"),
                message: format!(
                    "station name {:?} is already used by repair.stations[{j}] ({:?}); give every station its own name (compared without case and surrounding spaces)",
                    s.name, r.stations[j].name
                ),
            });
        }
        let top_km = top_altitude_m / 1e3;
        let alt = check(
            &format!("{p}.altitude_km"),
            s.altitude_km,
            Range::closed(0.0, 1e6),
            "km",
            "",
        )?;
        if alt > top_km {
            return Err(ScenarioError::Infeasible {
                reason: format!(
                    "{p}.altitude_km = {alt} km: station `{}` is off the tether, which runs from 0 km to {top_km} km",
                    s.name
                ),
            });
        }
        check_count(
            &format!("{p}.climbers"),
            u64::from(s.climbers),
            0,
            10_000,
            "climbers",
        )?;
        check_count(
            &format!("{p}.initial_stock_segments"),
            u64::from(s.initial_stock_segments),
            0,
            1_000_000,
            "segments",
        )?;
        total_climbers += u64::from(s.climbers);
        stations.push(StationSettings {
            name: s.name.clone(),
            altitude_m: alt * 1e3,
            climbers: s.climbers,
            initial_stock_segments: s.initial_stock_segments,
        });
    }
    let looped = validate_looped(r)?;
    if total_climbers == 0 && looped.is_none() {
        return Err(ScenarioError::Model {
            path: "repair.stations".into(),
            message: "no station has a climber, so no repair can ever happen (use \"repair\": null for no repair)".into(),
        });
    }
    let c = &r.climber;
    let up = check(
        "repair.climber.speed_up_m_per_s",
        c.speed_up_m_per_s,
        Range::open_closed(0.0, 1e4),
        "m/s",
        "",
    )?;
    let down = check(
        "repair.climber.speed_down_m_per_s",
        c.speed_down_m_per_s,
        Range::open_closed(0.0, 1e4),
        "m/s",
        "",
    )?;
    let payload = check(
        "repair.climber.payload_kg",
        c.payload_kg,
        Range::open_closed(0.0, 1e7),
        "kg",
        "",
    )?;
    let turnaround = check(
        "repair.climber.turnaround_hours",
        c.turnaround_hours,
        Range::closed(0.0, 1e5),
        "h",
        "",
    )?;
    let splice = check(
        "repair.climber.splice_hours",
        c.splice_hours,
        Range::closed(0.0, 1e5),
        "h",
        "",
    )?;
    let climber_mass = check(
        "repair.climber.mass_kg",
        c.mass_kg,
        Range::closed(0.0, 1e7),
        "kg",
        "own mass of an empty climber",
    )?;
    if let Some(cost) = c.unit_cost {
        check(
            "repair.climber.unit_cost",
            cost,
            Range::closed(0.0, 1e15),
            "cost units",
            "cost of one climber in the scenario's own cost unit",
        )?;
    }
    match &r.detection {
        DetectionSpec::Fixed { delay_hours } => {
            check(
                "repair.detection.delay_hours",
                *delay_hours,
                Range::closed(0.0, 1e6),
                "h",
                "",
            )?;
        }
        DetectionSpec::Exponential { mean_hours } => {
            check(
                "repair.detection.mean_hours",
                *mean_hours,
                Range::open_closed(0.0, 1e6),
                "h",
                "",
            )?;
        }
        DetectionSpec::PeriodicInspection { interval_hours } => {
            check(
                "repair.detection.interval_hours",
                *interval_hours,
                Range::open_closed(0.0, 1e6),
                "h",
                "",
            )?;
        }
    }
    match &r.resupply {
        ResupplySpec::None => {}
        ResupplySpec::Periodic {
            interval_days,
            batch_segments,
        } => {
            check(
                "repair.resupply.interval_days",
                *interval_days,
                Range::closed(1.0, 1e5),
                "d",
                "deliveries at most daily; spare demand is counted per delivery interval",
            )?;
            check_count(
                "repair.resupply.batch_segments",
                u64::from(*batch_segments),
                1,
                1_000_000,
                "segments",
            )?;
        }
        ResupplySpec::ReorderPoint {
            reorder_point_segments,
            batch_segments,
            lead_time_days,
        } => {
            check_count(
                "repair.resupply.reorder_point_segments",
                u64::from(*reorder_point_segments),
                0,
                1_000_000,
                "segments",
            )?;
            check_count(
                "repair.resupply.batch_segments",
                u64::from(*batch_segments),
                1,
                1_000_000,
                "segments",
            )?;
            check(
                "repair.resupply.lead_time_days",
                *lead_time_days,
                Range::closed(0.0, 1e5),
                "d",
                "",
            )?;
        }
    }
    let preventive = match &r.preventive_replacement {
        None => None,
        Some(p) => Some(validate_preventive(p, top_altitude_m)?),
    };
    if let Some(h) = r.splice_p90_target_hours {
        check(
            "repair.splice_p90_target_hours",
            h,
            Range::open_closed(0.0, 1e6),
            "h",
            "a requirement on the 90th percentile of the time from a cut to its splice",
        )?;
    }
    let solar = validate_power(&c.power, up.min(down))?;
    let cross_link_repair = validate_cross_link_repair(r)?;
    Ok(RepairSettings {
        stations,
        speed_up_m_per_s: up,
        speed_down_m_per_s: down,
        payload_kg: payload,
        turnaround_s: turnaround * crate::units::SECONDS_PER_HOUR,
        splice_s: splice * crate::units::SECONDS_PER_HOUR,
        climber_mass_kg: climber_mass,
        detection: r.detection.clone(),
        resupply: r.resupply.clone(),
        dispatch: r.dispatch,
        climber_load_on_bays: c.load_on_bays,
        preventive,
        splice_p90_target_hours: r.splice_p90_target_hours,
        solar,
        looped,
        cross_link_repair,
    })
}

/// `repair.cross_link_repair`, when given.
fn validate_cross_link_repair(
    r: &RepairSpec,
) -> Result<Option<CrossLinkRepairSettings>, ScenarioError> {
    let Some(x) = r.cross_link_repair.as_ref() else {
        return Ok(None);
    };
    let q = "repair.cross_link_repair";
    let hours = check(
        &format!("{q}.repair_hours"),
        x.repair_hours,
        Range::open_closed(0.0, 1e5),
        "h",
        "time on site to re-join one cross-link",
    )?;
    check_count(
        &format!("{q}.spares_per_station"),
        u64::from(x.spares_per_station),
        0,
        1_000_000,
        "spare cross-links at each station at mission start",
    )?;
    check_count(
        &format!("{q}.resupply_batch"),
        u64::from(x.resupply_batch),
        0,
        1_000_000,
        "spare cross-links per resupply delivery",
    )?;
    Ok(Some(CrossLinkRepairSettings {
        repair_s: hours * crate::units::SECONDS_PER_HOUR,
        spares_per_station: x.spares_per_station,
        resupply_batch: x.resupply_batch,
    }))
}

/// The looped-ribbon settings (checked whatever the concept, so a sweep can switch it), and
/// the options that belong to climbers refused under that concept.
fn validate_looped(r: &RepairSpec) -> Result<Option<LoopedSettings>, ScenarioError> {
    let q = "repair.looped_ribbon";
    let l = &r.looped_ribbon;
    let speed = check(
        &format!("{q}.haul_speed_m_per_s"),
        l.haul_speed_m_per_s,
        Range::open_closed(0.0, 1e4),
        "m/s",
        "speed at which a ribbon loop is hauled along the line",
    )?;
    let splice = check(
        &format!("{q}.station_splice_hours"),
        l.station_splice_hours,
        Range::closed(0.0, 1e5),
        "h",
        "time to splice one new length in at a station",
    )?;
    check_count(
        &format!("{q}.station_splice_capacity"),
        u64::from(l.station_splice_capacity),
        1,
        10_000,
        "simultaneous splices per station",
    )?;
    let mut pulley = vec![l.pulley_stations.is_empty(); r.stations.len()];
    for (i, name) in l.pulley_stations.iter().enumerate() {
        let key = name.trim().to_lowercase();
        match r
            .stations
            .iter()
            .position(|s| s.name.trim().to_lowercase() == key)
        {
            Some(k) => pulley[k] = true,
            None => {
                return Err(ScenarioError::Model {
                    path: format!("{q}.pulley_stations[{i}]"),
                    message: format!(
                    "{name:?} is not a station name; allowed: the names in repair.stations ({})",
                    r.stations
                        .iter()
                        .map(|s| format!("{:?}", s.name))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
                })
            }
        }
    }
    if r.concept != RepairConceptSpec::LoopedRibbon {
        return Ok(None);
    }
    let refuse = |path: &str, what: &str| {
        ScenarioError::Model {
        path: path.into(),
        message: format!(
            "{what} belongs to the climber concept; with repair.concept = \"looped_ribbon\" no climber travels, so it cannot be honoured (remove it or use \"climbers\")"
        ),
    }
    };
    if !r.climber.power.is_beamed() {
        return Err(refuse(
            "repair.climber.power",
            "solar power (climbers slowed in the Moon's shadow)",
        ));
    }
    if r.climber.load_on_bays {
        return Err(refuse(
            "repair.climber.load_on_bays",
            "a climber's weight on the bays it is in",
        ));
    }
    if r.preventive_replacement.is_some() {
        return Err(refuse(
            "repair.preventive_replacement",
            "inspection and preventive replacement at climber visits and inspection trips",
        ));
    }
    Ok(Some(LoopedSettings {
        haul_speed_m_per_s: speed,
        station_splice_s: splice * 3600.0,
        station_splice_capacity: l.station_splice_capacity,
        pulley,
    }))
}

fn validate_power(
    p: &ClimberPowerSpec,
    slowest_m_per_s: f64,
) -> Result<Option<SolarSettings>, ScenarioError> {
    let q = "repair.climber.power";
    let (vs, angle, battery) = match p {
        ClimberPowerSpec::Beamed => return Ok(None),
        ClimberPowerSpec::Solar {
            shade_speed_m_per_s,
            sun_angle_at_start_deg,
        } => (*shade_speed_m_per_s, *sun_angle_at_start_deg, None),
        ClimberPowerSpec::SolarWithBattery {
            battery_energy_wh,
            power_w,
            shade_speed_m_per_s,
            sun_angle_at_start_deg,
        } => (
            *shade_speed_m_per_s,
            *sun_angle_at_start_deg,
            Some((*battery_energy_wh, *power_w)),
        ),
    };
    let vs = check(
        &format!("{q}.shade_speed_m_per_s"),
        vs,
        Range::closed(0.0, slowest_m_per_s),
        "m/s",
        "at most the slower of the climb and descent speeds (0: the climber stops in shade)",
    )?;
    let angle = check(
        &format!("{q}.sun_angle_at_start_deg"),
        angle,
        Range::closed(0.0, 360.0),
        "deg",
        "0: Sun above the tether; 180: Sun behind the Moon",
    )?;
    let (battery_j, power_w) = match battery {
        None => (0.0, 0.0),
        Some((wh, w)) => {
            let wh = check(
                &format!("{q}.battery_energy_wh"),
                wh,
                Range::open_closed(0.0, 1e9),
                "Wh",
                "usable battery energy",
            )?;
            let w = check(
                &format!("{q}.power_w"),
                w,
                Range::open_closed(0.0, 1e9),
                "W",
                "power drawn while moving at full speed",
            )?;
            (wh * 3600.0 /* Wh to J */, w)
        }
    };
    Ok(Some(SolarSettings {
        shade_speed_m_per_s: vs,
        battery_j,
        power_w,
        sun_angle_at_start_rad: angle.to_radians(),
    }))
}

fn validate_preventive(
    p: &PreventiveReplacementSpec,
    top_altitude_m: f64,
) -> Result<PreventiveSettings, ScenarioError> {
    let q = "repair.preventive_replacement";
    match p.threshold {
        ReplacementThresholdSpec::FractionOfWidth { fraction } => {
            check(
                &format!("{q}.threshold.fraction"),
                fraction,
                Range::closed(0.0, 1.0),
                "of the ribbon width",
                "0 replaces every visited segment with any hole; 1 replaces only fully cut-through widths",
            )?;
        }
        ReplacementThresholdSpec::FractionOfNextCritical { fraction } => {
            check(
                &format!("{q}.threshold.fraction"),
                fraction,
                Range::closed(0.0, 1e3),
                "of the critical width at the next cut level",
                "at or above 1 nothing sub-critical at the next cut level is replaced",
            )?;
        }
    }
    check_count(
        &format!("{q}.extra_spares_per_trip"),
        u64::from(p.extra_spares_per_trip),
        0,
        1_000,
        "segments",
    )?;
    check_count(
        &format!("{q}.inspection_spares"),
        u64::from(p.inspection_spares),
        0,
        1_000,
        "segments",
    )?;
    let interval = match p.inspection_interval_days {
        None => None,
        Some(d) => Some(
            check(
                &format!("{q}.inspection_interval_days"),
                d,
                Range::closed(1.0, 1e5),
                "d",
                "at most one inspection a day",
            )? * 86_400.0,
        ),
    };
    let top_km = top_altitude_m / 1e3;
    let lowest = check(
        &format!("{q}.inspection_lowest_km"),
        p.inspection_lowest_km,
        Range::open_closed(0.0, top_km.max(1e-3)),
        "km",
        "altitude up to which periodic inspections look at the bays",
    )?;
    Ok(PreventiveSettings {
        threshold: p.threshold,
        at_climber_visits: p.at_climber_visits,
        extra_spares_per_trip: p.extra_spares_per_trip,
        inspection_interval_s: interval,
        inspection_lowest_m: lowest * 1e3,
        inspection_spares: p.inspection_spares,
    })
}

fn validate_synthetic_rates(
    v: &SyntheticRatesSpec,
    ribbons: usize,
) -> Result<SyntheticRatesSettings, ScenarioError> {
    let day = 86_400.0;
    let cut = check(
        "synthetic_rates.cut_rate_per_segment_per_day",
        v.cut_rate_per_segment_per_day,
        Range::closed(0.0, 1e6),
        "per day",
        "",
    )?;
    let rep = check(
        "synthetic_rates.repair_rate_per_crew_per_day",
        v.repair_rate_per_crew_per_day,
        Range::closed(0.0, 1e6),
        "per day",
        "",
    )?;
    check_count(
        "synthetic_rates.crews_per_bay",
        u64::from(v.crews_per_bay),
        0,
        64,
        "crews",
    )?;
    check_count(
        "synthetic_rates.required_ribbons",
        u64::from(v.required_ribbons),
        1,
        ribbons as u64,
        "ribbons (at most tether.ribbon_count)",
    )?;
    Ok(SyntheticRatesSettings {
        cut_rate_per_s: cut / day,
        repair_rate_per_s: rep / day,
        crews_per_bay: v.crews_per_bay,
        required_ribbons: v.required_ribbons,
    })
}

fn validate_run(r: &RunSpec) -> Result<RunSettings, ScenarioError> {
    let years = check(
        "run.mission_years",
        r.mission_years,
        Range::closed(0.0, 1000.0),
        "years",
        "",
    )?;
    let histories = check_count(
        "run.histories",
        r.histories,
        1,
        1_000_000_000_000,
        "histories",
    )?;
    let confidence = check(
        "run.confidence",
        r.confidence,
        Range::closed(0.5, 0.999999),
        "(fraction)",
        "",
    )?;
    Ok(RunSettings {
        mission_s: years * SECONDS_PER_YEAR,
        mission_years: years,
        histories,
        seed: r.seed,
        confidence,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn run(mission_years: f64, histories: u64, confidence: f64) -> RunSpec {
        RunSpec {
            mission_years,
            histories,
            seed: 1,
            confidence,
        }
    }

    fn path_of(e: ScenarioError) -> String {
        match e {
            ScenarioError::OutOfRange { path, .. } => path,
            other => panic!("not a range error: {other}"),
        }
    }

    /// The run section in SI: years to seconds with the Julian year (365.25 d, the
    /// astronomical convention of IAU), and each field refused outside its range naming its
    /// path (ranges are project conventions, no external source).
    #[test]
    fn run_section_converts_and_names_bad_fields() {
        let r = validate_run(&run(15.0, 1000, 0.95)).unwrap();
        assert_eq!(r.mission_s, 15.0 * 365.25 * 86_400.0);
        assert_eq!((r.histories, r.seed, r.confidence), (1000, 1, 0.95));
        let bad = [
            (run(-1.0, 1000, 0.95), "run.mission_years"),
            (run(f64::NAN, 1000, 0.95), "run.mission_years"),
            (run(15.0, 0, 0.95), "run.histories"),
            (run(15.0, 1_000_000_000_001, 0.95), "run.histories"),
            (run(15.0, 1000, 1.0), "run.confidence"),
            (run(15.0, 1000, 0.4), "run.confidence"),
        ];
        for (spec, path) in bad {
            assert_eq!(path_of(validate_run(&spec).unwrap_err()), path);
        }
        assert!(validate_run(&run(15.0, 1_000_000_000_000, 0.999_999)).is_ok());
    }

    /// Range checks refuse NaN at both kinds of bound and report the value as written.
    #[test]
    fn check_refuses_nan_and_reports_the_value() {
        assert!(check("a.b", f64::NAN, Range::closed(0.0, 1.0), "m", "").is_err());
        assert_eq!(
            check("a.b", 0.5, Range::closed(0.0, 1.0), "m", "").unwrap(),
            0.5
        );
        match check("a.b_mm", 2.5, Range::closed(0.0, 1.0), "mm", "").unwrap_err() {
            ScenarioError::OutOfRange {
                path, value, unit, ..
            } => assert_eq!(
                (path.as_str(), value.as_str(), unit.as_str()),
                ("a.b_mm", "2.5", "mm")
            ),
            other => panic!("{other}"),
        }
        assert!(check_count("n", 0, 1, 5, "segments").is_err());
        assert_eq!(check_count("n", 5, 1, 5, "segments").unwrap(), 5);
    }
}

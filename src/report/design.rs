//! Design summaries from a built model: what `check` and `profile` show, as serialisable
//! values rendered to text, JSON or CSV.

use serde::{Deserialize, Serialize};

use super::table::{sig, Table};
use super::CAUTION;
use crate::model::Model;
use crate::orbit::Side;

/// Critical hole widths of one bay for 0..N-1 cuts.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct CriticalRow {
    /// Why this bay is shown.
    pub label: String,
    /// Bay index.
    pub bay_index: usize,
    /// Bay mid altitude, km.
    pub altitude_km: f64,
    /// Critical hole width with k = 0..N-1 cuts already in the bay, mm.
    pub critical_hole_width_mm: Vec<f64>,
}

/// The surface run from a base away from the tether's foot (`check`; present only when the
/// base is off the foot). See [`crate::structure::surface`].
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct SurfaceRunSummary {
    /// Latitude of the base, deg.
    pub base_latitude_deg: f64,
    /// Longitude of the base, deg.
    pub base_longitude_deg: f64,
    /// Longitude of the tether's foot on the equator, deg (0 near side, 180 far side).
    pub foot_longitude_deg: f64,
    /// Central angle between base and foot, deg.
    pub central_angle_deg: f64,
    /// Great-circle length from the base to the foot, km (Moon radius x central angle).
    pub length_km: f64,
    /// Moon radius used, km.
    pub moon_radius_km: f64,
    /// Bays of the surface run (the first bays of the profile).
    pub bay_count: usize,
    /// Tension carried along the run (the hanging tether's anchor tension, with traffic), N.
    pub tension_n: f64,
    /// Moon shielding factor of a ribbon lying on the ground (1/2; 1 with shielding off).
    pub shielding_factor: f64,
    /// Damaging strikes per year on the whole run (all ribbons; able to sever an intact
    /// segment).
    pub damaging_strike_rate_per_year: f64,
    /// Ribbon mass of the run, kg (included in the ribbon mass).
    pub ribbon_mass_kg: f64,
}

impl SurfaceRunSummary {
    /// From a built model; `None` when the base is at the foot.
    pub fn from_model(m: &Model) -> Option<Self> {
        let p = &m.profile;
        let k = p.surface_bay_count();
        if k == 0 {
            return None;
        }
        let t = &m.scenario.tether;
        let d = &p.design;
        let r = m.orbit.moon_radius_m;
        Some(SurfaceRunSummary {
            base_latitude_deg: t.anchor_latitude_deg,
            base_longitude_deg: t.anchor_longitude_deg,
            foot_longitude_deg: crate::scenario::foot_longitude_deg(t.side),
            central_angle_deg: (p.surface_run_length_m() / r).to_degrees(),
            length_km: p.surface_run_length_m() / 1e3,
            moon_radius_km: r / 1e3,
            bay_count: k,
            tension_n: p.bays[0].max_tension_n,
            shielding_factor: m.bays[0].factors.moon_shielding,
            damaging_strike_rate_per_year: m.bays[..k]
                .iter()
                .map(|b| b.damaging_strike_rate_per_year)
                .sum(),
            ribbon_mass_kg: p.bays[..k]
                .iter()
                .map(|b| {
                    d.ribbon_count as f64
                        * b.width_m
                        * d.thickness_m
                        * d.density_kg_per_m3
                        * b.length_m()
                })
                .sum(),
        })
    }
}

/// Derived design quantities (`check`; `design.json` of a run folder, read back by the
/// report).
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct DesignSummary {
    /// Tool version.
    pub version: String,
    /// Scenario name.
    pub scenario: String,
    /// Scenario hash (hex).
    pub scenario_hash: String,
    /// `near` or `far`.
    pub side: Side,
    /// `L1` or `L2`.
    pub lagrange_point: String,
    /// Distance of L1 from the Moon's centre, km.
    pub l1_distance_from_moon_center_km: f64,
    /// Distance of L2 from the Moon's centre, km.
    pub l2_distance_from_moon_center_km: f64,
    /// Altitude of the tether's Lagrange point above the surface, km.
    pub lagrange_altitude_km: f64,
    /// Anchor to top end, km (the hanging tether, from its foot).
    pub tether_length_km: f64,
    /// Number of bays (surface run included).
    pub bay_count: usize,
    /// The surface run from a base off the tether's foot (absent when the base is at the
    /// foot).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub surface_run: Option<SurfaceRunSummary>,
    /// Cross-link spacing, km.
    pub cross_link_spacing_km: f64,
    /// Ribbon count.
    pub ribbon_count: usize,
    /// Material (generic name).
    pub material: String,
    /// Allowable stress, GPa.
    pub allowable_stress_gpa: f64,
    /// Ribbon width at the anchor and at its widest, mm.
    pub ribbon_width_range_mm: [f64; 2],
    /// Tension at the anchor including traffic, N.
    pub anchor_tension_n: f64,
    /// Largest tension including traffic, N.
    pub max_tension_n: f64,
    /// Altitude of the largest tension (bay middle), km.
    pub max_tension_altitude_km: f64,
    /// Smallest intact margin.
    pub min_margin: f64,
    /// Bay of the smallest margin.
    pub min_margin_bay: usize,
    /// Static tension at the top end, N.
    pub top_tension_n: f64,
    /// Counterweight that balances it, kg.
    pub counterweight_kg: f64,
    /// Ribbon mass, kg.
    pub ribbon_mass_kg: f64,
    /// Cross-link mass, kg.
    pub cross_links_mass_kg: f64,
    /// Damaging strikes per year on the whole tether (able to sever an intact segment).
    pub damaging_strike_rate_per_year: f64,
    /// Smallest, mean and largest per-bay damaging-strike rate, per year.
    pub damaging_strike_rate_per_bay_per_year: [f64; 3],
    /// Critical hole widths for representative bays.
    pub critical_hole_width: Vec<CriticalRow>,
    /// Heaviest spare segment, kg.
    pub heaviest_spare_segment_kg: f64,
    /// Bay of the heaviest spare segment.
    pub heaviest_spare_segment_bay: usize,
    /// Climber payload, kg (when repair is given).
    pub climber_payload_kg: Option<f64>,
    /// Ribbon width of bay 0 as built, mm: the given anchor width, or wider when the taper
    /// had to widen the anchor bay to keep its stress at allowable / safety factor.
    pub anchor_bay_width_mm: f64,
    /// The model behind every number (also the report's "model statement").
    pub model_statement: ModelStatement,
    /// The engineering caution.
    pub caution: String,
}

/// What the physics model is: flux model and its source, the switches that change the strike
/// rate, and every setting the program changed from what the scenario gave.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct ModelStatement {
    /// Flux model as named in the scenario (`grun1985`, or the table file).
    pub flux_model: String,
    /// The model's own name, with its published source.
    pub flux_model_source: String,
    /// Masses over which the flux model was fitted or tabulated, kg; strikes outside are
    /// extrapolated.
    pub flux_valid_mass_range_kg: [f64; 2],
    /// Multiplier on the whole flux.
    pub flux_scale_factor: f64,
    /// Meteoroid velocity distribution.
    pub velocity_distribution: String,
    /// Gravitational focusing by the Moon.
    pub moon_focusing: bool,
    /// Gravitational focusing by the Earth.
    pub earth_focusing: bool,
    /// Shielding by the Moon's body.
    pub moon_shielding: bool,
    /// Lunar ejecta as a second strike source.
    pub lunar_ejecta: bool,
    /// Where the base is and how it reaches the tether's foot, in words.
    pub anchor: String,
    /// Settings the program used instead of what the scenario gave, in words.
    pub overridden_settings: Vec<String>,
}

impl ModelStatement {
    /// From a built model.
    pub fn from_model(m: &Model) -> Self {
        use crate::scenario::FluxModelSpec;
        let env = &m.scenario.spec.environment;
        let (lo, hi) = m.flux.valid_mass_range_kg();
        let t = &m.scenario.tether;
        let bay0 = m
            .profile
            .bays
            .first()
            .map_or(t.anchor_width_m, |b| b.width_m);
        let mut overridden = Vec::new();
        if bay0 > t.anchor_width_m * (1.0 + 1e-9) {
            overridden.push(format!(
                "tether.ribbon_width_mm: the constant-stress taper widened the anchor bay (bay 0) to {} mm beyond the given {} mm, because at the given width its stress would exceed allowable stress / design safety factor; every result uses {} mm",
                sig(bay0 * 1e3, 4),
                sig(t.anchor_width_m * 1e3, 4),
                sig(bay0 * 1e3, 4)
            ));
        }
        ModelStatement {
            flux_model: match &env.flux_model {
                FluxModelSpec::Builtin(n) => n.clone(),
                FluxModelSpec::Table { table_file } => format!("table file {table_file}"),
            },
            flux_model_source: m.flux.name().to_string(),
            flux_valid_mass_range_kg: [lo, hi],
            flux_scale_factor: env.flux_scale_factor,
            velocity_distribution: env.velocity_distribution.clone(),
            moon_focusing: env.moon_focusing,
            earth_focusing: env.earth_focusing,
            moon_shielding: env.moon_shielding,
            lunar_ejecta: m.ejecta.is_some(),
            anchor: anchor_statement(m),
            overridden_settings: overridden,
        }
    }
}

/// The model statement's anchor row.
fn anchor_statement(m: &Model) -> String {
    let t = &m.scenario.tether;
    let foot = match t.side {
        Side::Near => "the sub-Earth point",
        Side::Far => "the anti-Earth point",
    };
    match SurfaceRunSummary::from_model(m) {
        None => format!("base at the tether's foot ({foot} on the equator); no surface run"),
        Some(r) => format!(
            "base at {} deg latitude, {} deg longitude, joined to the tether's foot ({foot}) by a surface run of {} km along the great circle (Moon radius {} km x central angle {} deg) in {} bays lying on the ground: tension {} N, constant (friction neglected; engineering assumption), flux of a face lying on the ground (shielding 1/2: the Moon hides the lower half-space), climbers add no load there, lunar ejecta not modelled on it; {} damaging strikes per year on the run",
            sig(r.base_latitude_deg, 6),
            sig(r.base_longitude_deg, 6),
            sig(r.length_km, 6),
            sig(r.moon_radius_km, 5),
            sig(r.central_angle_deg, 5),
            r.bay_count,
            sig(r.tension_n, 5),
            sig(r.damaging_strike_rate_per_year, 4)
        ),
    }
}

fn lagrange_name(side: Side) -> &'static str {
    match side {
        Side::Near => "L1",
        Side::Far => "L2",
    }
}

impl DesignSummary {
    /// Derive from a built model.
    pub fn from_model(m: &Model) -> Self {
        let p = &m.profile;
        let s = &m.scenario;
        let (jmax, tmax) = p.max_tension();
        let (jmin, min_margin) = p.min_margin();
        let rates: Vec<f64> = m
            .bays
            .iter()
            .map(|b| b.damaging_strike_rate_per_year)
            .collect();
        let total: f64 = rates.iter().sum();
        let lo = rates.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = rates.iter().copied().fold(0.0, f64::max);
        let widest = p.bays.iter().map(|b| b.width_m).fold(0.0, f64::max);
        let l_bay = p
            .bays
            .iter()
            .position(|b| b.top_altitude_m >= p.lagrange_altitude_m)
            .unwrap_or(p.bays.len() - 1);
        let surface = p.surface_bay_count();
        let mut picks = if surface > 0 {
            vec![("surface run", 0usize), ("bay at the foot", surface)]
        } else {
            vec![("anchor bay", 0usize)]
        };
        picks.extend([("smallest margin", jmin), ("largest tension", jmax)]);
        picks.push((
            if s.tether.side == Side::Near {
                "bay at L1"
            } else {
                "bay at L2"
            },
            l_bay,
        ));
        picks.push(("top bay", p.bays.len() - 1));
        let critical_hole_width = picks
            .into_iter()
            .map(|(label, j)| CriticalRow {
                label: label.to_string(),
                bay_index: j,
                altitude_km: p.bays[j].mid_altitude_m() / 1e3,
                critical_hole_width_mm: m.bays[j]
                    .critical_hole_width_m
                    .iter()
                    .map(|h| h * 1e3)
                    .collect(),
            })
            .collect();
        let (jseg, mseg) = p.heaviest_segment();
        DesignSummary {
            version: crate::VERSION.to_string(),
            scenario: s.spec.name.clone(),
            scenario_hash: s.hash_hex(),
            side: s.tether.side,
            lagrange_point: lagrange_name(s.tether.side).into(),
            l1_distance_from_moon_center_km: m.orbit.lagrange_distance_from_moon_m(Side::Near)
                / 1e3,
            l2_distance_from_moon_center_km: m.orbit.lagrange_distance_from_moon_m(Side::Far) / 1e3,
            lagrange_altitude_km: p.lagrange_altitude_m / 1e3,
            tether_length_km: p.length_m() / 1e3,
            bay_count: p.bays.len(),
            surface_run: SurfaceRunSummary::from_model(m),
            cross_link_spacing_km: s.tether.cross_link_spacing_m / 1e3,
            ribbon_count: s.tether.ribbon_count,
            material: s.tether.material_name.clone(),
            allowable_stress_gpa: s.tether.allowable_stress_pa / 1e9,
            ribbon_width_range_mm: [s.tether.anchor_width_m * 1e3, widest * 1e3],
            anchor_tension_n: s.tether.anchor_preload_n + s.tether.traffic_load_n,
            max_tension_n: tmax,
            max_tension_altitude_km: p.bays[jmax].mid_altitude_m() / 1e3,
            min_margin,
            min_margin_bay: jmin,
            top_tension_n: p.top_tension_n,
            counterweight_kg: p.counterweight_kg,
            ribbon_mass_kg: p.ribbon_mass_kg,
            cross_links_mass_kg: p.cross_links_mass_kg,
            damaging_strike_rate_per_year: total,
            damaging_strike_rate_per_bay_per_year: [lo, total / rates.len() as f64, hi],
            critical_hole_width,
            heaviest_spare_segment_kg: mseg,
            heaviest_spare_segment_bay: jseg,
            climber_payload_kg: s.repair.as_ref().map(|r| r.payload_kg),
            anchor_bay_width_mm: p
                .bays
                .first()
                .map_or(s.tether.anchor_width_m, |b| b.width_m)
                * 1e3,
            model_statement: ModelStatement::from_model(m),
            caution: CAUTION.to_string(),
        }
    }

    /// The design quantities as (quantity, value, unit) rows.
    pub fn quantity_table(&self) -> Table {
        let lp = &self.lagrange_point;
        let mut t = Table::new(["quantity", "value", "unit"]);
        let mut row = |q: &str, v: String, u: &str| t.push([q.to_string(), v, u.to_string()]);
        row(
            "side",
            format!("{:?} (through {lp})", self.side).to_lowercase(),
            "",
        );
        row(
            "L1 distance from Moon centre",
            sig(self.l1_distance_from_moon_center_km, 7),
            "km",
        );
        row(
            "L2 distance from Moon centre",
            sig(self.l2_distance_from_moon_center_km, 7),
            "km",
        );
        row(
            &format!("{lp} altitude above surface"),
            sig(self.lagrange_altitude_km, 7),
            "km",
        );
        row(
            "tether length (anchor to top)",
            sig(self.tether_length_km, 7),
            "km",
        );
        if let Some(r) = &self.surface_run {
            row(
                "surface run (base to foot, great circle)",
                format!(
                    "{} from {} N {} E, {} bays",
                    sig(r.length_km, 6),
                    sig(r.base_latitude_deg, 6),
                    sig(r.base_longitude_deg, 6),
                    r.bay_count
                ),
                "km",
            );
            row(
                "damaging strikes, surface run",
                sig(r.damaging_strike_rate_per_year, 4),
                "per year",
            );
        }
        row("bays", self.bay_count.to_string(), "");
        row(
            "cross-link spacing",
            sig(self.cross_link_spacing_km, 4),
            "km",
        );
        row(
            "ribbons",
            format!("{} x {}", self.ribbon_count, self.material),
            "",
        );
        row(
            "ribbon width (given at anchor / bay 0 as built / widest)",
            format!(
                "{} / {} / {}",
                sig(self.ribbon_width_range_mm[0], 4),
                sig(self.anchor_bay_width_mm, 4),
                sig(self.ribbon_width_range_mm[1], 4)
            ),
            "mm",
        );
        row("allowable stress", sig(self.allowable_stress_gpa, 4), "GPa");
        row(
            "tension at anchor (with traffic)",
            sig(self.anchor_tension_n, 5),
            "N",
        );
        row(
            "largest tension",
            format!(
                "{} at {} km",
                sig(self.max_tension_n, 5),
                sig(self.max_tension_altitude_km, 5)
            ),
            "N",
        );
        row(
            "smallest intact margin",
            format!("{} in bay {}", sig(self.min_margin, 4), self.min_margin_bay),
            "",
        );
        row("tension at top end", sig(self.top_tension_n, 5), "N");
        row(
            "counterweight to balance",
            sig(self.counterweight_kg, 4),
            "kg",
        );
        row("ribbon mass", sig(self.ribbon_mass_kg, 4), "kg");
        row("cross-link mass", sig(self.cross_links_mass_kg, 4), "kg");
        row(
            "damaging strikes, whole tether",
            sig(self.damaging_strike_rate_per_year, 4),
            "per year",
        );
        row(
            "damaging strikes per bay (min/mean/max)",
            self.damaging_strike_rate_per_bay_per_year
                .iter()
                .map(|v| sig(*v, 3))
                .collect::<Vec<_>>()
                .join(" / "),
            "per year",
        );
        row(
            "heaviest spare segment",
            format!(
                "{} (bay {})",
                sig(self.heaviest_spare_segment_kg, 4),
                self.heaviest_spare_segment_bay
            ),
            "kg",
        );
        match self.climber_payload_kg {
            Some(p) => row("climber payload", sig(p, 4), "kg"),
            None => row("climber payload", "no repair".into(), ""),
        }
        t
    }

    /// Human-readable text.
    pub fn to_text(&self) -> String {
        let mut o = String::new();
        o.push_str(&format!(
            "Design check: scenario \"{}\" (hash {}), tether-risk {}\n\n",
            self.scenario, self.scenario_hash, self.version
        ));
        let t = self.quantity_table();
        o.push_str(&t.to_text());
        for w in &self.model_statement.overridden_settings {
            o.push_str(&format!("Overridden setting: {w}.\n"));
        }
        o.push_str("\nCritical hole width (mm) with k ribbons already cut in the bay, equal load sharing\n");
        let n = self.ribbon_count;
        let mut headers = vec!["bay".to_string(), "altitude km".to_string()];
        headers.extend((0..n).map(|k| format!("k={k}")));
        let mut c = Table::new(headers);
        for r in &self.critical_hole_width {
            let mut cells = vec![
                format!("{} ({})", r.bay_index, r.label),
                sig(r.altitude_km, 5),
            ];
            cells.extend(r.critical_hole_width_mm.iter().map(|h| {
                if *h > 0.0 {
                    sig(*h, 3)
                } else {
                    "fails".into()
                }
            }));
            c.push(cells);
        }
        o.push_str(&c.to_text());
        o.push_str("\"fails\": the survivors are overloaded without any hole, so that many cuts in one bay cascade to loss.\n\n");
        o.push_str(&self.caution);
        o.push('\n');
        o
    }
}

/// One bay of the profile.
#[derive(Clone, Debug, Serialize)]
pub struct ProfileRow {
    /// Bay index from the anchor.
    pub bay_index: usize,
    /// Lower end, km above the surface.
    pub bottom_altitude_km: f64,
    /// Upper end, km.
    pub top_altitude_km: f64,
    /// Ribbon width, mm.
    pub width_mm: f64,
    /// Largest tension including traffic, N.
    pub max_tension_n: f64,
    /// Largest intact stress, MPa.
    pub max_stress_mpa: f64,
    /// Intact margin (capacity / largest tension).
    pub margin: f64,
    /// Moon shielding factor at the bay middle.
    pub shielding_factor: f64,
    /// Combined focusing factor at the bay middle.
    pub focusing_factor: f64,
    /// Damaging strikes per year on this bay (all ribbons).
    pub damaging_strike_rate_per_year: f64,
    /// Critical hole width with 0..N-1 cuts, mm.
    pub critical_hole_width_mm: Vec<f64>,
    /// The bay lies on the surface run (present only when true).
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    pub surface_run: bool,
    /// Ends of the bay as distance along the line from the base, km (present only with a
    /// surface run).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub distance_from_base_km: Option<[f64; 2]>,
}

/// The per-bay profile (`profile`).
#[derive(Clone, Debug, Serialize)]
pub struct ProfileSummary {
    /// Tool version.
    pub version: String,
    /// Scenario name.
    pub scenario: String,
    /// Scenario hash.
    pub scenario_hash: String,
    /// Distance of L1 from the Moon's centre, km.
    pub l1_distance_from_moon_center_km: f64,
    /// Distance of L2 from the Moon's centre, km.
    pub l2_distance_from_moon_center_km: f64,
    /// Anchor to top, km (the hanging tether, from its foot).
    pub tether_length_km: f64,
    /// Surface run from the base to the foot, km (present only when the base is off the foot).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub surface_run_length_km: Option<f64>,
    /// Number of bays.
    pub bay_count: usize,
    /// Bays from the base: the surface run's first, then the hanging tether's from its foot up.
    pub bays: Vec<ProfileRow>,
}

impl ProfileSummary {
    /// Derive from a built model.
    pub fn from_model(m: &Model) -> Self {
        let p = &m.profile;
        let bays = p
            .bays
            .iter()
            .zip(&m.bays)
            .map(|(b, t)| ProfileRow {
                bay_index: b.index,
                bottom_altitude_km: b.bottom_altitude_m / 1e3,
                top_altitude_km: b.top_altitude_m / 1e3,
                width_mm: b.width_m * 1e3,
                max_tension_n: b.max_tension_n,
                max_stress_mpa: p.max_stress_pa(b.index) / 1e6,
                margin: p.margin(b.index),
                shielding_factor: t.factors.moon_shielding,
                focusing_factor: t.factors.focusing,
                damaging_strike_rate_per_year: t.damaging_strike_rate_per_year,
                critical_hole_width_mm: t.critical_hole_width_m.iter().map(|h| h * 1e3).collect(),
                surface_run: b.surface_run,
                distance_from_base_km: (p.surface_run_length_m() > 0.0)
                    .then(|| [b.line_bottom_m / 1e3, b.line_top_m / 1e3]),
            })
            .collect();
        ProfileSummary {
            version: crate::VERSION.to_string(),
            scenario: m.scenario.spec.name.clone(),
            scenario_hash: m.scenario.hash_hex(),
            l1_distance_from_moon_center_km: m.orbit.lagrange_distance_from_moon_m(Side::Near)
                / 1e3,
            l2_distance_from_moon_center_km: m.orbit.lagrange_distance_from_moon_m(Side::Far) / 1e3,
            tether_length_km: p.length_m() / 1e3,
            surface_run_length_km: (p.surface_run_length_m() > 0.0)
                .then(|| p.surface_run_length_m() / 1e3),
            bay_count: p.bays.len(),
            bays,
        }
    }

    /// The bays as a table (text or CSV).
    pub fn table(&self) -> Table {
        let n = self
            .bays
            .first()
            .map_or(0, |b| b.critical_hole_width_mm.len());
        let mut headers: Vec<String> = [
            "bay",
            "bottom_km",
            "top_km",
            "width_mm",
            "max_tension_n",
            "stress_mpa",
            "margin",
            "shielding",
            "focusing",
            "damaging_per_year",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect();
        headers.extend((0..n).map(|k| format!("crit_hole_mm_k{k}")));
        let mut t = Table::new(headers);
        for b in &self.bays {
            let mut cells = vec![
                if b.surface_run {
                    format!("{} (surface run)", b.bay_index)
                } else {
                    b.bay_index.to_string()
                },
                sig(b.bottom_altitude_km, 6),
                sig(b.top_altitude_km, 6),
                sig(b.width_mm, 4),
                sig(b.max_tension_n, 5),
                sig(b.max_stress_mpa, 4),
                sig(b.margin, 4),
                sig(b.shielding_factor, 4),
                sig(b.focusing_factor, 5),
                sig(b.damaging_strike_rate_per_year, 3),
            ];
            cells.extend(b.critical_hole_width_mm.iter().map(|h| sig(*h, 3)));
            t.push(cells);
        }
        t
    }
}

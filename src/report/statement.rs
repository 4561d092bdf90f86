//! Report sections that say what each number is: the model statement (flux model and its
//! source, switches, valid mass range, the Monte Carlo assumptions listed like the Markov
//! ones, and any setting the program overrode) and the expected cuts in each mission year.
//! Built from the run folder's files alone.

use super::assemble::RunFolder;
use super::html::{ReportTable, Section};
use super::table::{sig, Table};
use crate::engine::RunSummary;
use crate::scenario::{
    ClimberPowerSpec, CrossLinkHitsSpec, CrossLinkRepairSpec, FluxModelSpec, RepairConceptSpec,
    ScenarioSpec,
};

fn on_off(v: bool) -> &'static str {
    if v {
        "on"
    } else {
        "off"
    }
}

/// The Monte Carlo assumptions, in words, for this run (the counterpart of the Markov
/// estimate's list).
pub fn monte_carlo_assumptions(s: &RunSummary, scenario: Option<&ScenarioSpec>) -> Vec<String> {
    let tether = scenario.map(|v| &v.tether);
    let repair = scenario.and_then(|v| v.repair.as_ref());
    let mut a = vec![
        format!(
            "each history is one mission of {} years from an intact tether; histories are independent{}",
            super::failure::year_label(s.mission_years),
            match &s.rare_event {
                Some(r) if r.condition_cascades => " and weighted by their likelihood ratio (conditional Monte Carlo at cuts: each cut adds the exact probability that its cascade severs the bay and the history goes on in the branch where the bay survives; first cuts aimed at bays where they can sever, damaged bays cut more often, the surviving branch drawn with more large holes)".to_string(),
                Some(r) => {
                    let mut what = Vec::new();
                    if r.rare_event_factor > 1.0 {
                        what.push(format!(
                            "strike rates on damaged bays multiplied by {}",
                            sig(r.rare_event_factor, 3)
                        ));
                    }
                    if r.latent_bias > 0.0 {
                        what.push(format!(
                            "worst holes before a cut drawn from a mixture with weight {} on reaching the next critical width",
                            sig(r.latent_bias, 3)
                        ));
                    }
                    format!(
                        " and weighted by their likelihood ratio (rare-event estimator: {})",
                        what.join("; ")
                    )
                }
                None => " and count equally".to_string(),
            }
        ),
        "strikes on each bay arrive as a Poisson process whose rate (flux model × scale factor × shielding × focusing × exposed ribbon area) is constant over the mission".into(),
        if s.sampler == "every-strike" {
            "every strike above the sampling floor is drawn (the reference sampler)".into()
        } else if s.history_path == crate::engine::COUNT_ONLY_PATH {
            "every hole above the sampling floor cuts whatever the load, loads are shared uniformly and bay tensions are constant, so each bay is described by its cut count alone: the on-demand sampler draws only cut candidates at each bay's largest cut rate and keeps each with probability rate now / largest rate (thinning; the same distribution as drawing every strike)".into()
        } else {
            "the on-demand sampler draws only the cuts and, whenever a bay changes state, each segment's worst hole (the same distribution as drawing every strike)".into()
        },
        if s.history_path == crate::engine::COUNT_ONLY_PATH {
            "a segment is cut by any hole at least the critical width; no smaller hole is left above the sampling floor, so there is no damage memory".into()
        } else {
            "a segment is cut when its worst hole is at least the critical width for the number of ribbons already cut in its bay; smaller holes stay and count again after later cuts (damage memory)".into()
        },
        format!(
            "a cut ribbon's load is shared by the ribbons left in its bay ({} load sharing); survivors loaded beyond their strength fail at once (cascade)",
            tether.map_or("the scenario's", |t| t.load_sharing.name())
        ),
        "the tether is lost when every ribbon of one bay is cut; one loss ends the history".into(),
        cross_link_assumption(
            tether.and_then(|t| t.cross_link_hits.as_ref()),
            repair.and_then(|r| r.cross_link_repair.as_ref()),
        ),
    ];
    let looped = repair.filter(|r| r.concept == RepairConceptSpec::LoopedRibbon);
    match repair {
        Some(r) if looped.is_some() => {
            let l = &r.looped_ribbon;
            a.push(format!(
                "looped-ribbon repair: each ribbon is a loop over pulleys at stations; a detected cut ({} detection) is hauled at {} m/s from its bay's middle to the nearest pulley station, waits there for one of {} splice positions and a spare, is spliced in {} h and hauled back; the bay stays weakened until the new length is in place; hauls do not delay each other and do not change the state of the other bays the moving loop passes through (engineering assumptions)",
                r.detection.kind(),
                sig(l.haul_speed_m_per_s, 3),
                l.station_splice_capacity,
                sig(l.station_splice_hours, 3)
            ));
        }
        Some(r) => a.push(format!(
            "cut segments are detected ({} detection), dispatched by the {} rule from the nearest station with a free climber and a spare segment, and spliced back to intact strength",
            r.detection.kind(),
            r.dispatch.name().replace('_', " ")
        )),
        None => a.push("no repair: cuts accumulate over the mission".into()),
    }
    if let Some(r) = repair.filter(|_| looped.is_none()) {
        a.push(climber_power_assumption(&r.climber.power));
    }
    a.push(if s.rare_event.is_some() {
        "the interval is the Wilson score interval on effective counts, given only when the weighted estimate is resolved".into()
    } else {
        "the interval is the exact Clopper–Pearson interval of the loss count".into()
    });
    a
}

/// Cross-link hits in words (the scenario's `tether.cross_link_hits`; absent: off).
fn cross_link_assumption(
    hits: Option<&CrossLinkHitsSpec>,
    repair: Option<&CrossLinkRepairSpec>,
) -> String {
    let Some(h) = hits else {
        return "cross-links are never hit (cross-link hits off): every cross-link transfers load for the whole mission".into();
    };
    format!(
        "each interior cross-link is cut by one particle of diameter at least {} mm striking its exposed area of {} m^2 (a Poisson process at the flux model's rate above that particle's mass at the cross-link's altitude, with the adjacent bay's shielding and focusing; engineering assumption: one critical size, no cumulative damage, no lunar ejecta or meteor streams on cross-links); a cut cross-link stops load transfer at its station, so the bays on either side act as one longer bay: a ribbon cut anywhere in the merged span counts as cut along all of it, the span's intact ribbons share the load, and the tether is lost when no ribbon is intact along a span; {}",
        sig(h.critical_diameter_mm, 4),
        sig(h.exposed_area_m2, 4),
        match repair {
            Some(r) => {
                format!(
                    "a cut cross-link is detected like a ribbon cut and re-joined by a climber from the nearest station holding a spare cross-link ({} at each station at mission start, {} more with each delivery; ribbon jobs are served first), {} h on site; the span splits again when it is re-joined",
                    r.spares_per_station,
                    r.resupply_batch,
                    sig(r.repair_hours, 4)
                )
            }
            None => "cut cross-links stay cut (no repair)".into(),
        }
    )
}

/// How the Moon's shadow acts on the climbers, in words (the scenario's
/// `repair.climber.power`; absent: beamed).
fn climber_power_assumption(power: &ClimberPowerSpec) -> String {
    let shade = |vs: f64| {
        if vs > 0.0 {
            format!("move at {} m/s", sig(vs, 3))
        } else {
            "stop".to_string()
        }
    };
    let geometry = "a point at distance r from the Moon's centre is in the shadow cylinder for arcsin(R/r)/π of every 29.53-day synodic month, with the Sun in the Moon's orbital plane (the Sun's few degrees out of that plane, the umbra's taper and the Earth's shadow are left out, which over-states shade high on the tether); splicing is not slowed by shade";
    match *power {
        ClimberPowerSpec::Beamed => {
            "climbers have full power in the Moon's shadow (beamed power): no waiting for light".into()
        }
        ClimberPowerSpec::Solar {
            shade_speed_m_per_s,
            sun_angle_at_start_deg,
        } => format!(
            "solar climbers {} while in the Moon's shadow (exact travel through the lit and dark stretches; Sun {} deg from the tether's direction at mission start); {geometry}",
            shade(shade_speed_m_per_s),
            sig(sun_angle_at_start_deg, 3)
        ),
        ClimberPowerSpec::SolarWithBattery {
            battery_energy_wh,
            power_w,
            shade_speed_m_per_s,
            sun_angle_at_start_deg,
        } => format!(
            "solar climbers run in the Moon's shadow on a {} Wh battery at {} W, then {} (battery full at each leg's start and refilled in light, an engineering assumption; Sun {} deg from the tether's direction at mission start); {geometry}",
            sig(battery_energy_wh, 3),
            sig(power_w, 3),
            shade(shade_speed_m_per_s),
            sig(sun_angle_at_start_deg, 3)
        ),
    }
}

/// "What the model assumes": flux model and source, switches, valid mass range, the Monte
/// Carlo assumptions and overridden settings.
pub fn model_section(folder: &RunFolder) -> Section {
    let s = &folder.summary;
    let env = folder.scenario.as_ref().map(|v| &v.environment);
    let st = folder.design.as_ref().map(|d| &d.model_statement);
    let mut paragraphs = Vec::new();
    match st {
        Some(m) => {
            let [lo, hi] = m.flux_valid_mass_range_kg;
            paragraphs.push(format!(
                "Flux model: {} (scenario setting {}), valid for particle masses {} kg to {} kg; outside that range the flux is extrapolated. Flux scale factor {}. Velocity distribution: {}.",
                m.flux_model_source,
                m.flux_model,
                sig(lo, 3),
                sig(hi, 3),
                sig(m.flux_scale_factor, 4),
                m.velocity_distribution,
            ));
            paragraphs.push(format!(
                "Switches: Moon focusing {}, Earth focusing {}, Moon shielding {}, lunar ejecta {}.",
                on_off(m.moon_focusing),
                on_off(m.earth_focusing),
                on_off(m.moon_shielding),
                on_off(m.lunar_ejecta)
            ));
            paragraphs.push(format!("Anchor: {}.", m.anchor));
            if let Some(list) = env.map(|e| &e.meteor_streams).filter(|l| !l.is_empty()) {
                let names: Vec<String> = list
                    .iter()
                    .map(|st| {
                        format!(
                            "{} (peak on day {}, {} km/s)",
                            st.name,
                            sig(st.peak_day_of_year, 4),
                            sig(st.radiant_speed_km_per_s, 3),
                        )
                    })
                    .collect();
                paragraphs.push(format!(
                    "Meteor streams on top of the sporadic background: {}. Each stream's activity is the two-sided exponential of Jenniskens (1995) around its yearly peak, its strength a power law in mass (from the ZHR by Koschack & Rendtel 1990, or a flux above a reference mass); its rates are integrated exactly over time in the Monte Carlo. Engineering assumptions: the ribbon's faces are randomly oriented against the radiant (a quarter of the normal flux per face), focusing at the radiant speed and the bay's shielding apply, the flux scale factor does not; the Grün model already holds the streams' yearly mean, so this counts it twice (conservative). The Markov and damage-memory estimates use the streams' mission-averaged rates.",
                    names.join("; ")
                ));
            }
            let over = &m.overridden_settings;
            if over.is_empty() {
                paragraphs.push(
                    "Overridden settings: none; every result uses the scenario's values as given."
                        .into(),
                );
            } else {
                paragraphs.push(format!("Overridden settings: {}.", over.join("; ")));
            }
        }
        None => {
            paragraphs.push(format!(
                "The flux model's source and valid mass range are recorded in design.json, which this folder lacks. Scenario flux model: {}, scale factor {}.",
                env.map_or("not recorded".into(), |e| flux_model_json(&e.flux_model)),
                env.map_or("not recorded".into(), |e| sig(e.flux_scale_factor, 4)),
            ));
        }
    }
    paragraphs.push(format!(
        "The Monte Carlo rests on these assumptions: {}.",
        monte_carlo_assumptions(s, folder.scenario.as_ref()).join("; ")
    ));
    Section {
        heading: "What the model assumes".into(),
        paragraphs,
        ..Default::default()
    }
}

/// The scenario's flux model as written in scenario.json (`"grun1985"`, `{"table_file": ...}`).
fn flux_model_json(m: &FluxModelSpec) -> String {
    serde_json::to_string(m).unwrap_or_default()
}

/// The expected cuts in each mission year with intervals (text, Markdown and HTML share it).
pub fn cuts_by_year_table(s: &RunSummary) -> Table {
    let pct = format!("{:.0} %", 100.0 * s.loss_probability.confidence);
    let mut t = Table::new([
        "mission year".to_string(),
        "cuts counted".to_string(),
        "expected cuts per mission in that year".to_string(),
        format!("lower {pct} bound"),
        format!("upper {pct} bound"),
    ]);
    for y in &s.expected_cuts_by_year {
        t.push([
            format!("year {}", y.year),
            y.cuts.to_string(),
            sig(y.expected_cuts, 3),
            sig(y.ci_low, 3),
            sig(y.ci_high, 3),
        ]);
    }
    t
}

/// "How many segments are cut each year?": the per-year table, or nothing for an old file.
pub fn cuts_section(s: &RunSummary) -> Option<Section> {
    if s.expected_cuts_by_year.is_empty() {
        return None;
    }
    if let Some(why) = &s.tallies_withheld {
        return Some(Section {
            heading: "How many segments are cut each year?".into(),
            paragraphs: vec![why.clone()],
            ..Default::default()
        });
    }
    let basis = if s.rare_event.is_some() {
        " Counted under the rare-event run's biased measure, so these are not the physical cut rates."
    } else {
        ""
    };
    Some(Section {
        heading: "How many segments are cut each year?".into(),
        paragraphs: vec![format!(
            "Expected cut segments in each mission year over the whole tether (cuts counted over all {} histories divided by the histories). The interval is the exact Poisson (Garwood) interval on the count, widened by the square root of the dispersion of cuts per history when cuts cluster; it is an approximation, as the dispersion is measured over the whole mission.{basis}",
            s.histories
        )],
        tables: {
            let mut t = vec![ReportTable::from_table(
                "Expected cuts by mission year",
                &cuts_by_year_table(s),
            )];
            if !s.by_month.is_empty() {
                t.push(ReportTable::from_table(
                    "Cuts and losses by month of the year (meteor streams)",
                    &by_month_table(s),
                ));
            }
            t
        },
        ..Default::default()
    })
}

/// Cuts and losses by calendar month (written with meteor streams).
pub fn by_month_table(s: &RunSummary) -> Table {
    let mut t = Table::new([
        "month".to_string(),
        "cuts counted".to_string(),
        "expected cuts per mission in that month".to_string(),
        "losses counted".to_string(),
        "share of histories lost in that month".to_string(),
    ]);
    for m in &s.by_month {
        t.push([
            m.month.clone(),
            m.cuts.to_string(),
            sig(m.expected_cuts, 3),
            m.losses.to_string(),
            m.loss_fraction
                .map_or("- (biased measure)".into(), |x| sig(x, 3)),
        ]);
    }
    t
}

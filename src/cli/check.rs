//! `tether-risk check FILE`: validate and print derived design quantities, and the expected
//! work of a run (state changes, strikes, estimated time on this machine).

use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

use tether_risk::engine::{Engine, Sampler, WORK_BUDGET_EVENTS};
use tether_risk::model::warnings::design_warnings;
use tether_risk::model::Model;
use tether_risk::orbit::shadow::shaded_fraction_of_month;
use tether_risk::report::design::DesignSummary;
use tether_risk::stats::sig;

use super::output::{load_model, print};
use super::Format;

/// Arguments of `check`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Examples:\n  tether-risk check my-tether.json\n  tether-risk check demo --format json\n  cat my-tether.json | tether-risk check -\n\nExit code 0: valid; 2: invalid (the reason is printed on stderr).\n\nThe work estimate runs the engine for about half a second to time it on this machine."
)]
pub struct Args {
    /// Scenario file (JSON); `-` reads standard input; `demo` is the built-in scenario.
    file: String,
    /// Output format.
    #[arg(long, value_enum, default_value_t)]
    format: Format,
}

/// Expected work of the scenario's run, with times measured on this machine.
#[derive(serde::Serialize)]
struct WorkReport {
    histories: u64,
    strikes_per_history: f64,
    state_changes_per_history: f64,
    on_demand_seconds_one_thread: f64,
    every_strike_seconds_one_thread: f64,
    budget_events: f64,
    every_strike_within_budget: bool,
    /// How on-demand runs its histories, with the reason when the count-only shortcut does not
    /// apply.
    history_path: String,
}

/// Time `sampler` for at most `limit` wall time; seconds per history (every-strike: from the
/// time per strike, so that one very long history still gives an estimate).
fn seconds_per_history(model: &Model, sampler: Sampler, limit: Duration) -> Option<f64> {
    let engine = Engine::with_sampler(model, 1.0, sampler).ok()?;
    let stop = AtomicBool::new(false);
    let mut scratch = engine.new_scratch();
    let mut tally = engine.empty_tally();
    let (mut strikes, mut done) = (0u64, 0u64);
    let started = Instant::now();
    std::thread::scope(|s| {
        s.spawn(|| {
            let step = Duration::from_millis(10);
            let mut waited = Duration::ZERO;
            while waited < limit && !stop.load(Ordering::Relaxed) {
                std::thread::sleep(step);
                waited += step;
            }
            stop.store(true, Ordering::Relaxed);
        });
        let mut h = 0;
        while !stop.load(Ordering::Relaxed) && h < 100_000 {
            let out = engine.run_history_until(
                h,
                model.scenario.run.seed,
                &mut scratch,
                &mut tally,
                None,
                Some(&stop),
            );
            strikes += out.strikes;
            if !out.stopped {
                done += 1;
            }
            h += 1;
        }
        stop.store(true, Ordering::Relaxed);
    });
    let elapsed = started.elapsed().as_secs_f64();
    match sampler {
        Sampler::EveryStrike if strikes > 0 => {
            Some(elapsed / strikes as f64 * engine.work_estimate().strikes_per_history)
        }
        _ if done > 0 => Some(elapsed / done as f64),
        _ => None,
    }
}

fn work_report(model: &Model) -> Option<WorkReport> {
    let engine = Engine::with_sampler(model, 1.0, Sampler::OnDemand).ok()?;
    let w = engine.work_estimate();
    let histories = model.scenario.run.histories;
    let od = seconds_per_history(model, Sampler::OnDemand, Duration::from_millis(200))?;
    let es = seconds_per_history(model, Sampler::EveryStrike, Duration::from_millis(300))?;
    Some(WorkReport {
        histories,
        strikes_per_history: w.strikes_per_history,
        state_changes_per_history: w.state_changes_per_history,
        on_demand_seconds_one_thread: od * histories as f64,
        every_strike_seconds_one_thread: es * histories as f64,
        budget_events: WORK_BUDGET_EVENTS,
        every_strike_within_budget: w.strikes_per_history * histories as f64 <= WORK_BUDGET_EVENTS,
        history_path: match engine.count_only_path() {
            Ok(()) => "count-only bays (every bay described by its cut count: cost per cut)".into(),
            Err(why) => {
                format!("general event loop (the count-only shortcut does not apply: {why})")
            }
        },
    })
}

fn work_text(w: &WorkReport) -> String {
    let t = |s: f64| {
        if s < 120.0 {
            format!("{s:.1} s")
        } else if s < 7200.0 {
            format!("{:.1} min", s / 60.0)
        } else {
            format!("{:.1} h", s / tether_risk::units::SECONDS_PER_HOUR)
        }
    };
    format!(
        "\nExpected work of the run ({} histories, estimates from the rates; times measured now on this machine, one thread)\n  \
         state changes per history (cuts, splices): {:.3}\n  \
         strikes per history above the floor (every-strike draws each): {:.4}\n  \
         on-demand histories: {}\n  \
         estimated time, on-demand sampler (default): {}\n  \
         estimated time, every-strike sampler: {}{}\n",
        w.histories,
        w.state_changes_per_history,
        w.strikes_per_history,
        w.history_path,
        t(w.on_demand_seconds_one_thread),
        t(w.every_strike_seconds_one_thread),
        if w.every_strike_within_budget {
            String::new()
        } else {
            format!(
                " (beyond the budget of {:.0e} strikes: every-strike needs --force)",
                w.budget_events
            )
        }
    )
}

/// The climbers' power and the shade they meet: kind, and the fraction of each synodic month
/// each station spends in the Moon's shadow (`arcsin(R/r)/pi`). None without repair.
fn climber_power(model: &Model) -> Option<(String, serde_json::Value)> {
    let r = model.scenario.repair.as_ref()?;
    let big_r = model.orbit.moon_radius_m;
    let shade: Vec<(String, f64)> = r
        .stations
        .iter()
        .map(|s| {
            (
                s.name.clone(),
                shaded_fraction_of_month(big_r, big_r + s.altitude_m),
            )
        })
        .collect();
    let stations = shade
        .iter()
        .map(|(n, f)| format!("{n} {:.3} %", 100.0 * f))
        .collect::<Vec<_>>()
        .join(", ");
    let (kind, how) = match &r.solar {
        None => (
            "beamed",
            "full power in shade, no waiting for light".to_string(),
        ),
        Some(s) => {
            let dark = if s.shade_speed_m_per_s > 0.0 {
                format!("{} m/s in shade", s.shade_speed_m_per_s)
            } else {
                "stops in shade".to_string()
            };
            if s.battery_j > 0.0 {
                (
                    "solar_with_battery",
                    format!(
                        "{} Wh battery at {} W ({:.2} h at full speed in shade), then {dark}",
                        s.battery_j / 3600.0, /* J to Wh */
                        s.power_w,
                        s.battery_j / s.power_w / tether_risk::units::SECONDS_PER_HOUR
                    ),
                )
            } else {
                ("solar", dark)
            }
        }
    };
    let line = format!(
        "Climber power: {kind}, {how}; part of each month in the Moon's shadow at the stations: {stations}\n"
    );
    let json = serde_json::json!({
        "kind": kind,
        "station_shaded_fraction_of_month": shade
            .iter()
            .map(|(n, f)| serde_json::json!({"station": n, "shaded_fraction_of_month": f}))
            .collect::<Vec<_>>(),
    });
    Some((line, json))
}

/// The looped-ribbon repair concept: haul speed, pulley stations and their splice positions,
/// and the haul time to the station and back over the bays. None without repair or under the
/// climber concept.
fn looped_repair(model: &Model) -> Option<(String, serde_json::Value)> {
    let r = model.scenario.repair.as_ref()?;
    let l = r.looped.as_ref()?;
    let plan =
        tether_risk::repair::RepairPlan::new(r, &model.profile, model.scenario.run.mission_s);
    let lp = plan.looped.as_ref()?;
    let hauls: Vec<f64> = (0..lp.haul_distance_m.len())
        .map(|j| 2.0 * lp.haul_s(j) / 3600.0)
        .collect();
    let n = hauls.len().max(1) as f64;
    let mean = hauls.iter().sum::<f64>() / n;
    let max = hauls.iter().copied().fold(0.0, f64::max);
    let min = hauls.iter().copied().fold(f64::INFINITY, f64::min);
    let pulleys: Vec<&str> = r
        .stations
        .iter()
        .zip(&l.pulley)
        .filter(|(_, &p)| p)
        .map(|(s, _)| s.name.as_str())
        .collect();
    let line = format!(
        "Repair concept: looped ribbon; loops hauled at {} m/s to the nearest pulley station ({}; {} splice positions each, {} h per splice); haul to the station and back over the bays: min {:.3} h, mean {:.3} h, max {:.3} h\n",
        l.haul_speed_m_per_s,
        pulleys.join(", "),
        l.station_splice_capacity,
        l.station_splice_s / 3600.0,
        min.min(max),
        mean,
        max
    );
    let json = serde_json::json!({
        "concept": "looped_ribbon",
        "haul_speed_m_per_s": l.haul_speed_m_per_s,
        "pulley_stations": pulleys,
        "station_splice_capacity": l.station_splice_capacity,
        "station_splice_hours": l.station_splice_s / 3600.0,
        "haul_time_both_ways_hours": {"min": min.min(max), "mean": mean, "max": max},
    });
    Some((line, json))
}

/// One `check` line per meteor stream: its peak, and the holes able to sever in some load
/// state (at least the smallest severing hole) it adds over the mission against the
/// background's.
#[derive(serde::Serialize)]
struct StreamCheck {
    name: String,
    peak_day_of_year: f64,
    rise_e_folding_days: f64,
    fall_e_folding_days: f64,
    peak_severing_strikes_per_year: f64,
    mission_severing_strikes: f64,
    background_mission_severing_strikes: f64,
}

fn stream_checks(model: &Model) -> anyhow::Result<Vec<StreamCheck>> {
    let env = &model.scenario.environment;
    if env.meteor_streams.is_empty() {
        return Ok(Vec::new());
    }
    let bg = tether_risk::model::hole_rate::HoleRateTable::build_background(model, 1.0)
        .map_err(anyhow::Error::msg)?;
    let n = model.profile.design.ribbon_count as f64;
    let bg_mission: f64 = (0..bg.len())
        .map(|j| bg.bay(j).floor_rate_per_s() * n)
        .sum::<f64>()
        * model.scenario.run.mission_s;
    env.meteor_streams
        .iter()
        .enumerate()
        .map(|(k, st)| {
            let (peak, mission) = tether_risk::model::streams::stream_damaging_strikes(model, k)
                .map_err(anyhow::Error::msg)?;
            Ok(StreamCheck {
                name: st.name.clone(),
                peak_day_of_year: st.peak_day_of_year,
                rise_e_folding_days: st.rise_e_folding_s / 86_400.0,
                fall_e_folding_days: st.fall_e_folding_s / 86_400.0,
                peak_severing_strikes_per_year: peak,
                mission_severing_strikes: mission,
                background_mission_severing_strikes: bg_mission,
            })
        })
        .collect()
}

fn stream_text(c: &StreamCheck) -> String {
    let share = if c.background_mission_severing_strikes > 0.0 {
        format!(
            "{:+.3} % of the background's",
            100.0 * c.mission_severing_strikes / c.background_mission_severing_strikes
        )
    } else {
        "no background".into()
    };
    format!(
        "Meteor stream \"{}\": peak on day {:.1} (e-folding {:.3} d before, {:.3} d after); strikes able to sever in some load state: {:.4} per year at the peak, {:.4} over the mission ({share}; background {:.4})\n",
        c.name,
        c.peak_day_of_year,
        c.rise_e_folding_days,
        c.fall_e_folding_days,
        c.peak_severing_strikes_per_year,
        c.mission_severing_strikes,
        c.background_mission_severing_strikes,
    )
}

/// The cross-link hits option: its state and, when on, the cut rates of the interior
/// cross-links (`tether.cross_link_hits`; the model's per-station rates).
fn cross_link_check(model: &Model) -> (String, serde_json::Value) {
    let Some(h) = model.scenario.tether.cross_link_hits else {
        return (
            "\nCross-link hits: off (tether.cross_link_hits absent): cross-links are never cut\n"
                .into(),
            serde_json::json!({ "enabled": false }),
        );
    };
    let rates = &model.cross_link_rate_per_year;
    let interior = model.profile.bays.len().saturating_sub(1);
    let total: f64 = rates.iter().sum();
    let (k_max, r_max) = rates
        .iter()
        .copied()
        .enumerate()
        .fold((0, 0.0), |b, (k, r)| if r > b.1 { (k, r) } else { b });
    let alt_km = model
        .profile
        .bays
        .get(k_max)
        .map_or(0.0, |b| b.bottom_altitude_m / 1e3);
    let years = model.scenario.run.mission_years;
    // The time a cut cross-link stays cut without queueing: the Markov estimate's mean repair
    // time at the cross-link's station (detection, turnaround, travel from the nearest station
    // with climbers), with the cross-link's time on site in place of a splice.
    let repair = model.scenario.repair.as_ref();
    let on_site_s = repair.and_then(|r| r.cross_link_repair).map(|x| x.repair_s);
    let down_s: Option<Vec<f64>> = repair.zip(on_site_s).and_then(|(r, on_site)| {
        let run_m = model.profile.surface_run_length_m();
        (0..rates.len())
            .map(|k| {
                let at_m = model
                    .profile
                    .bays
                    .get(k)
                    .map_or(model.profile.bays.last()?.line_top_m, |b| b.line_bottom_m);
                tether_risk::model::markov::repair_mean_time_along_line_s(r, at_m, run_m)
                    .map(|t| t - r.splice_s + on_site)
            })
            .collect::<Option<Vec<f64>>>()
    });
    let year_s = tether_risk::units::SECONDS_PER_YEAR;
    let (expected, repair_text, repair_json) = match &down_s {
        // With repair, each station alternates joined (exponential, its rate) and cut (R_k,
        // no queueing): long-run share cut lambda R / (1 + lambda R), cuts lambda T / (1 +
        // lambda R) (alternating renewal).
        Some(d) => {
            let (mut cuts, mut share_sum, mut worst) = (0.0, 0.0, (0usize, 0.0f64));
            for (k, (&r, &down)) in rates.iter().zip(d).enumerate().skip(1) {
                let lr = r / year_s * down;
                cuts += r * years / (1.0 + lr);
                let share = lr / (1.0 + lr);
                share_sum += share;
                if share > worst.1 {
                    worst = (k, share);
                }
            }
            let mean_share = share_sum / interior.max(1) as f64;
            let mean_down_h = d.iter().skip(1).sum::<f64>() / interior.max(1) as f64 / 3600.0;
            (
                cuts,
                format!(
                    "  cross-link repair: a cut stays cut about {} h on average (detection, turnaround, travel from the nearest station, {} h on site; no queueing): {} of the station-time cut on average, highest {} at station {}\n",
                    sig(mean_down_h, 3),
                    sig(on_site_s.unwrap_or(0.0) / 3600.0, 3),
                    sig(mean_share, 3),
                    sig(worst.1, 3),
                    worst.0,
                ),
                Some(serde_json::json!({
                    "mean_time_cut_hours": mean_down_h,
                    "mean_share_of_time_cut": mean_share,
                    "highest_share_of_time_cut": worst.1,
                    "highest_share_station": worst.0,
                })),
            )
        }
        // Each cross-link is cut at most once (no repair): sum of 1 - exp(-rate x mission).
        None => (
            rates.iter().map(|r| -(-r * years).exp_m1()).sum(),
            if repair.is_some() {
                String::new()
            } else {
                "  no repair: a cut cross-link stays cut\n".into()
            },
            None,
        ),
    };
    let text = format!(
        "\nCross-link hits: on (exposed area {} m^2, critical particle diameter {} mm per cross-link)\n  \
         {interior} interior cross-links: {} cuts per year in all (highest {} per year, station {k_max} at {} km); \
         {} cross-link cuts expected over the {} year mission; a cut cross-link merges its two bays (merged-bay rule)\n",
        sig(h.exposed_area_m2, 4),
        sig(h.critical_diameter_m * 1e3, 4),
        sig(total, 4),
        sig(r_max, 4),
        sig(alt_km, 5),
        sig(expected, 4),
        sig(years, 4),
    ) + &repair_text;
    let json = serde_json::json!({
        "enabled": true,
        "exposed_area_m2": h.exposed_area_m2,
        "critical_diameter_mm": h.critical_diameter_m * 1e3,
        "interior_cross_links": interior,
        "cross_link_strike_rate_per_year": total,
        "highest_station_rate_per_year": r_max,
        "highest_rate_station": k_max,
        "expected_cross_link_cuts_over_mission": expected,
        "repair": repair_json,
    });
    (text, json)
}

pub fn run(a: Args) -> anyhow::Result<()> {
    let model = load_model(&a.file)?;
    let looped = looped_repair(&model);
    let power = if looped.is_some() {
        None // no climber travels under the looped-ribbon concept
    } else {
        climber_power(&model)
    };
    let (xl_text, xl_json) = cross_link_check(&model);
    let streams = stream_checks(&model)?;
    let s = DesignSummary::from_model(&model);
    let work = if model.scenario.synthetic_rates.is_none() {
        work_report(&model)
    } else {
        None
    };
    let warnings = design_warnings(&model);
    match a.format {
        Format::Json => {
            // The design summary plus `warnings` (a list of {code, message}, one stable code per
            // kind, see tether_risk::model::warnings) and `work_estimate`.
            let mut v = serde_json::to_value(&s)?;
            if let Some(obj) = v.as_object_mut() {
                obj.insert("warnings".into(), serde_json::to_value(&warnings)?);
                if let Some((_, p)) = &power {
                    obj.insert("climber_power".into(), p.clone());
                }
                if let Some((_, l)) = &looped {
                    obj.insert("repair_concept".into(), l.clone());
                }
                if let Some(w) = &work {
                    obj.insert("work_estimate".into(), serde_json::to_value(w)?);
                }
                if !streams.is_empty() {
                    obj.insert("meteor_streams".into(), serde_json::to_value(&streams)?);
                }
                obj.insert("cross_link_hits".into(), xl_json);
            }
            print(&(serde_json::to_string_pretty(&v)? + "\n"))
        }
        // CSV: the design quantities (quantity, value, unit) and one row per warning.
        Format::Csv => {
            let mut t = s.quantity_table();
            for c in &streams {
                for (what, v, unit) in [
                    ("peak day", c.peak_day_of_year, "d of the year"),
                    (
                        "severing strikes at the peak",
                        c.peak_severing_strikes_per_year,
                        "1/yr",
                    ),
                    (
                        "severing strikes over the mission",
                        c.mission_severing_strikes,
                        "-",
                    ),
                    (
                        "background severing strikes over the mission",
                        c.background_mission_severing_strikes,
                        "-",
                    ),
                ] {
                    t.push([
                        format!("meteor stream {}: {what}", c.name),
                        format!("{v:.6e}"),
                        unit.to_string(),
                    ]);
                }
            }
            t.push([
                "cross-link hits".to_string(),
                xl_json["cross_link_strike_rate_per_year"]
                    .as_f64()
                    .map_or("off".to_string(), |r| format!("{r:.6e}")),
                "1/yr (all interior cross-links)".to_string(),
            ]);
            for w in &warnings {
                t.push([
                    format!("warning {}", w.code),
                    w.message.clone(),
                    String::new(),
                ]);
            }
            print(&t.to_csv())
        }
        Format::Text => {
            let mut text = s.to_text();
            if let Some((line, _)) = &power {
                text.push_str(line);
            }
            if let Some((line, _)) = &looped {
                text.push_str(line);
            }
            if let Some(w) = &work {
                text.push_str(&work_text(w));
            }
            for c in &streams {
                text.push_str(&stream_text(c));
            }
            text.push_str(&xl_text);
            if !warnings.is_empty() {
                text.push_str("\nWarnings\n");
                for w in &warnings {
                    text.push_str(&format!("- [{}] {}\n", w.code, w.message));
                }
            }
            print(&text)
        }
    }
}

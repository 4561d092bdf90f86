//! Issue 16 item 5: the looped-ribbon repair concept. Hand-worked haul times and station
//! queueing through the fleet's own event handlers, a Monte Carlo loss probability against a
//! closed form derived here (two-ribbon bays with a deterministic repair window fixed by the
//! haul distance and speed), and the refusal of climber-only options.

use serde_json::{json, Value};
use tether_risk::engine::{Engine, RunOptions, Sampler, Tally};
use tether_risk::model::Model;
use tether_risk::repair::{EventKind, FirstCome, Fleet, RepairPlan, RepairTally};
use tether_risk::scenario::SECONDS_PER_YEAR;

use crate::engine_validation::{closed_form_base, model_with, severing_rate_per_segment_per_year};
use crate::util::*;

const H: f64 = 3600.0;

/// The demo under the looped-ribbon concept with the given looped settings and stock.
fn looped_demo(looped: Value, base_stock: u32) -> Value {
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["repair"]["concept"] = json!("looped_ribbon");
    v["repair"]["looped_ribbon"] = looped;
    v["repair"]["resupply"] = json!({"kind": "none"});
    v["repair"]["stations"][0]["initial_stock_segments"] = json!(base_stock);
    v
}

/// Drive the fleet's handlers for cuts at t = 0 in `bays` (one segment each) until the queue
/// is empty or `until_s`: returns the times each bay's new length is in place, the tally and
/// the fleet (the engine's part, splicing the bay, is not needed for the fleet's times).
fn drive(
    v: &Value,
    bays: &[u32],
    until_s: f64,
) -> (Vec<(u32, f64)>, RepairTally, RepairPlan, Fleet) {
    let model = model_of(v);
    let settings = model.scenario.repair.as_ref().unwrap();
    let mission = model.scenario.run.mission_s;
    let plan = RepairPlan::new(settings, &model.profile, mission);
    let mut fleet = Fleet::new(&plan, mission);
    fleet.reset(&plan);
    let mut tally = RepairTally::new(plan.stations.len(), 16);
    let mut rng = <rand_pcg::Pcg64Mcg as rand::SeedableRng>::seed_from_u64(1);
    for &b in bays {
        fleet.on_cut(&plan, &mut rng, b, 1, 0.0);
    }
    let mut done = Vec::new();
    while let Some(ev) = fleet.queue.pop() {
        let t = ev.time_s;
        if t > until_s {
            break;
        }
        match ev.kind {
            EventKind::Detect { bay } => fleet.start_haul(&plan, bay, t, &mut tally),
            EventKind::HauledIn { station, bay } => {
                fleet.on_hauled_in(station, bay, 1, t, &mut tally);
                fleet.dispatch(&plan, &FirstCome, t, &mut tally);
            }
            EventKind::StationSpliceDone { station, bay } => {
                fleet.on_station_splice_done(&plan, station, bay, t);
                fleet.dispatch(&plan, &FirstCome, t, &mut tally);
            }
            EventKind::LengthInPlace { bay, .. } => {
                fleet.on_length_in_place(&plan, bay, &mut tally);
                done.push((bay, t));
            }
            _ => {}
        }
    }
    (done, tally, plan, fleet)
}

#[test]
fn issue16_haul_times_and_one_splice_position_worked_by_hand() {
    // Pulley at the base only (0 km), 20 m/s, 6 h per splice, one splice position, fixed
    // detection 2 h (the demo's). Bays 3 and 10 are cut at t = 0. Hand arithmetic, with x_j
    // the middle of bay j along the line (the haul distance to the base):
    //   bay 3:  at the station 2 h + x3/20, spliced 6 h, in place 2 h + 2 x3/20 + 6 h;
    //   bay 10: at the station 2 h + x10/20, which is before bay 3's splice ends (x10 - x3
    //           = 7 bays of 50 km = 350 km, 4.9 h < 6 h), so it waits for the position:
    //           spliced from 2 h + x3/20 + 6 h to + 12 h, in place x10/20 later.
    let v = looped_demo(
        json!({"haul_speed_m_per_s": 20.0, "station_splice_hours": 6.0,
               "station_splice_capacity": 1, "pulley_stations": ["base"]}),
        5,
    );
    let (done, tally, plan, _) = drive(&v, &[3, 10], f64::INFINITY);
    let x3 = plan.bay_altitude_m[3];
    let x10 = plan.bay_altitude_m[10];
    assert!((x3 - 3.5 * 50e3).abs() < 1e-6 && (x10 - 10.5 * 50e3).abs() < 1e-6);
    let l = plan.looped.as_ref().unwrap();
    assert_eq!(l.haul_station[3], 0);
    assert!((l.haul_s(10) - x10 / 20.0).abs() < 1e-9);
    let want3 = 2.0 * H + 2.0 * x3 / 20.0 + 6.0 * H;
    let start10 = 2.0 * H + x3 / 20.0 + 6.0 * H;
    let want10 = start10 + 6.0 * H + x10 / 20.0;
    assert_eq!(done.len(), 2);
    assert_eq!(done[0].0, 3);
    assert!((done[0].1 - want3).abs() < 1e-6, "{} vs {want3}", done[0].1);
    assert_eq!(done[1].0, 10);
    assert!(
        (done[1].1 - want10).abs() < 1e-6,
        "{} vs {want10}",
        done[1].1
    );
    // Bay 10's wait for the position: start10 - (2 h + x10/20); the haul times 2 x_j / 20.
    let wait10 = start10 - (2.0 * H + x10 / 20.0);
    assert_eq!(tally.looped_repairs, 2);
    assert_eq!(tally.hauls, 2);
    assert!(
        (tally.haul_time_sum_s as f64 - 2.0 * (x3 + x10) / 20.0).abs() <= 1.0,
        "{}",
        tally.haul_time_sum_s
    );
    let mut f = tally.clone();
    // The queue tallies give the wait (summed per length from station arrival to splice start).
    let (_, _, _, mut fleet) = drive(&v, &[3, 10], f64::INFINITY);
    fleet.finish(&plan, want10 + 1.0, &mut f);
    assert!(
        (f.queue_wait_sum_s as f64 - wait10).abs() <= 1.0,
        "{} vs {wait10}",
        f.queue_wait_sum_s
    );
    // Two positions: no wait, bay 10 in place 2 h + 2 x10/20 + 6 h after its cut.
    let v2 = looped_demo(
        json!({"haul_speed_m_per_s": 20.0, "station_splice_hours": 6.0,
               "station_splice_capacity": 2, "pulley_stations": ["base"]}),
        5,
    );
    let (done2, _, _, _) = drive(&v2, &[3, 10], f64::INFINITY);
    let want10_free = 2.0 * H + 2.0 * x10 / 20.0 + 6.0 * H;
    assert!((done2[1].1 - want10_free).abs() < 1e-6);
}

#[test]
fn issue16_the_nearest_pulley_station_and_an_empty_stock() {
    // Both stations hold pulleys: a bay above the midpoint (28 000 km) is hauled to the
    // station at 56 000 km, over |its middle - 56 000 km| (the top bay's middle is at
    // 79 975 km).
    let v = looped_demo(json!({"haul_speed_m_per_s": 10.0}), 1);
    let model = model_of(&v);
    let r = model.scenario.repair.as_ref().unwrap();
    let plan = RepairPlan::new(r, &model.profile, model.scenario.run.mission_s);
    let l = plan.looped.as_ref().unwrap();
    let top = plan.bay_altitude_m.len() - 1;
    assert_eq!(l.haul_station[top], 1);
    assert!((l.haul_distance_m[top] - (79_975e3 - 56_000e3)).abs() < 1e-3);
    assert_eq!(l.haul_station[0], 0);
    assert!((l.haul_distance_m[0] - plan.bay_altitude_m[0]).abs() < 1e-9);
    // One spare at the base, two cuts near it: the second length waits for stock (a stock-out
    // at the base) and is never spliced without resupply.
    let (done, tally, _, fleet) = drive(&v, &[3, 10], 1e9);
    assert_eq!(done.len(), 1);
    assert_eq!(tally.stockout_events[0], 1);
    assert!(fleet.bay_waits_for_stock(10));
    assert!(!fleet.bay_waits_for_stock(3));
}

/// Survival to `t` of one bay of two ribbons (no load sharing, 1/3-of-width rule), each intact
/// segment cut as a Poisson process of rate `lambda`, each cut segment back in service a fixed
/// `tau` after its cut; the bay is lost when the second segment is cut while the first is out.
///
/// Derivation (a semi-Markov renewal argument; the Laplace transform of a renewal equation, as
/// in any text on renewal theory, e.g. Cox 1962, Renewal Theory, ch. 2 — citation from
/// memory). From "both intact" the first cut comes after an Exp(2 lambda) time u; the other
/// segment then survives a window of length v = min(tau, t - u) with probability e^{-lambda v},
/// and after a full window the bay is as new. So
///   S(t) = e^{-2 lambda t} + Int_0^t 2 lambda e^{-2 lambda u} g(t - u) du,
///   g(v) = e^{-lambda v} (v < tau),  e^{-lambda tau} S(v - tau) (v >= tau).
/// Transforming, S~(s) = N(s) / D(s) with
///   N(s) = 1 + 2 lambda (1 - e^{-(s + lambda) tau}) / (s + lambda),
///   D(s) = s + 2 lambda - 2 lambda e^{-(s + lambda) tau}.
/// D has exactly one real zero s0, in (-lambda, 0) (D(-lambda) = -lambda < 0 < D(0), D
/// increasing); its other zeros are complex with real parts below s0 - ln(1/(2 lambda tau))/tau,
/// so for t of many tau S(t) = N(s0)/D'(s0) e^{s0 t}, D'(s) = 1 + 2 lambda tau e^{-(s+lambda) tau}.
fn two_ribbon_bay_survival(lambda: f64, tau: f64, t: f64) -> f64 {
    let d = |s: f64| s + 2.0 * lambda - 2.0 * lambda * (-(s + lambda) * tau).exp();
    let (mut lo, mut hi) = (-lambda, 0.0);
    for _ in 0..200 {
        let m = 0.5 * (lo + hi);
        if d(m) > 0.0 {
            hi = m;
        } else {
            lo = m;
        }
    }
    let s0 = 0.5 * (lo + hi);
    let e = (-(s0 + lambda) * tau).exp();
    let n = 1.0 + 2.0 * lambda * (1.0 - e) / (s0 + lambda);
    let dp = 1.0 + 2.0 * lambda * tau * e;
    n / dp * (s0 * t).exp()
}

/// Two untapered ribbons, no load sharing, 1/3-of-width rule (every bay a 1-of-2 system of
/// independent segments), repaired by looped ribbons hauled at `speed` to a pulley at the base
/// with ample splice positions and stock: the repair window of bay j is exactly
/// 2 h + 2 x_j / speed + 6 h.
fn closed_form_looped(speed: f64, years: f64) -> Model {
    model_with(|v| {
        closed_form_base(v, 2, years);
        v["repair"] = json!({
            "stations": [{"name": "base", "altitude_km": 0.0, "climbers": 0,
                          "initial_stock_segments": 1000000}],
            "climber": {"speed_up_m_per_s": 60.0, "speed_down_m_per_s": 80.0,
                        "payload_kg": 400.0, "splice_hours": 8.0},
            "detection": {"kind": "fixed", "delay_hours": 2.0},
            "concept": "looped_ribbon",
            "looped_ribbon": {"haul_speed_m_per_s": speed, "station_splice_hours": 6.0,
                              "station_splice_capacity": 10000}
        });
    })
}

fn run_with(model: &Model, sampler: Sampler, histories: u64, seed: u64) -> Tally {
    let engine = Engine::with_sampler(model, 1.0, sampler).unwrap();
    let opts = RunOptions {
        histories,
        seed,
        threads: 2,
        floor_fraction: 1.0,
        shard: None,
        target_rel_error: None,
    };
    engine.run(&opts, &|_| {}).unwrap()
}

/// The closed-form loss probability of [`closed_form_looped`]: bays in series, each surviving
/// with [`two_ribbon_bay_survival`] at its own cut rate (our own quadrature of the flux model,
/// `engine_validation`) and its own repair window from the haul distance.
fn closed_form_loss(model: &Model, speed: f64) -> f64 {
    let t = model.scenario.run.mission_s;
    let mut ln_s = 0.0;
    for (j, bay) in model.profile.bays.iter().enumerate() {
        let lambda =
            severing_rate_per_segment_per_year(model, j, 0.3333333333333333) / SECONDS_PER_YEAR;
        let x = bay.line_mid_m();
        let tau = 2.0 * H + 2.0 * x / speed + 6.0 * H;
        ln_s += two_ribbon_bay_survival(lambda, tau, t).ln();
    }
    -ln_s.exp_m1()
}

#[test]
fn issue16_looped_loss_probability_follows_from_haul_distance_and_speed() {
    let speed = 2.0;
    let model = closed_form_looped(speed, 15.0);
    let p = closed_form_loss(&model, speed);
    // Without repair the same bays would be lost far more often: the window matters.
    eprintln!("closed form P = {p:.5}");
    assert!((0.03..0.6).contains(&p), "the case resolves P: {p}");
    for (sampler, n, seed) in [
        (Sampler::OnDemand, 20_000u64, 51u64),
        (Sampler::EveryStrike, 4_000, 52),
    ] {
        let tally = run_with(&model, sampler, n, seed);
        let est = tally.losses as f64 / n as f64;
        let se = (p * (1.0 - p) / n as f64).sqrt();
        eprintln!(
            "{sampler:?}: estimate {est:.5}, closed form {p:.5}, z = {:.2}",
            (est - p) / se
        );
        assert!(
            (est - p).abs() < 3.0 * se,
            "{sampler:?}: {est} vs {p} (3 se = {})",
            3.0 * se
        );
        assert_eq!(tally.cascade_cuts, 0);
        assert!(tally.repair.looped_repairs > 0);
        // Every completed repair's haul time is 2 x_j / speed of its bay: the tallied mean
        // lies between the nearest and farthest bay's.
        let mean = tally.repair.haul_time_sum_s as f64 / tally.repair.looped_repairs as f64;
        let far = 2.0 * model.profile.length_m() / speed;
        assert!(mean > 0.0 && mean < far);
    }
}

#[test]
fn issue16_looped_concept_refuses_climber_only_options() {
    for (f, field) in [
        (
            Box::new(|v: &mut Value| {
                v["repair"]["climber"]["power"] = json!({"kind": "solar"});
            }) as Box<dyn Fn(&mut Value)>,
            "repair.climber.power",
        ),
        (
            Box::new(|v: &mut Value| v["repair"]["climber"]["load_on_bays"] = json!(true)),
            "repair.climber.load_on_bays",
        ),
        (
            Box::new(|v: &mut Value| {
                v["repair"]["preventive_replacement"] =
                    json!({"threshold": {"kind": "fraction_of_width", "fraction": 0.1}})
            }),
            "repair.preventive_replacement",
        ),
        (
            Box::new(|v: &mut Value| {
                v["repair"]["looped_ribbon"]["pulley_stations"] = json!(["nowhere"])
            }),
            "repair.looped_ribbon.pulley_stations[0]",
        ),
        (
            Box::new(|v: &mut Value| {
                v["repair"]["looped_ribbon"]["haul_speed_m_per_s"] = json!(0.0)
            }),
            "repair.looped_ribbon.haul_speed_m_per_s",
        ),
        (
            Box::new(|v: &mut Value| {
                v["repair"]["looped_ribbon"]["station_splice_capacity"] = json!(0)
            }),
            "repair.looped_ribbon.station_splice_capacity",
        ),
    ] {
        let p = scenario_with("looped-bad", |v| {
            v["repair"]["concept"] = json!("looped_ribbon");
            v["repair"]["looped_ribbon"] = json!({});
            f(v);
        });
        let o = run(&["check", p.to_str().unwrap()]);
        assert_eq!(o.status.code(), Some(2), "{field}: {}", stderr(&o));
        assert!(stderr(&o).contains(field), "{field}: {}", stderr(&o));
    }
    // The check line names the concept and the haul times.
    let p = scenario_with("looped-check", |v| {
        v["repair"]["concept"] = json!("looped_ribbon")
    });
    let o = run(&["check", p.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(
        stdout(&o).contains("Repair concept: looped ribbon"),
        "{}",
        stdout(&o)
    );
}

#[test]
fn issue16_looped_run_reports_its_concept_haul_times_and_statement_row() {
    // The demo with loops hauled at 20 m/s: every completed repair's time from cut to new
    // length in place is detection 2 h + haul both ways + 6 h splice (+ any wait), so the mean
    // time to repair is at least the mean haul time + 8 h; the report's model statement says
    // which concept ran.
    let p = scenario_with("looped-run", |v| {
        v["repair"]["concept"] = json!("looped_ribbon")
    });
    let dir = p.parent().unwrap().join("run");
    let o = run(&[
        "simulate",
        p.to_str().unwrap(),
        "--histories",
        "2000",
        "--out",
        dir.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(
        stdout(&o).contains("looped-ribbon repairs:"),
        "{}",
        stdout(&o)
    );
    let s: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap();
    let r = &s["repair"];
    assert_eq!(r["concept"], json!("looped_ribbon"));
    let l = &r["looped"];
    assert!(l["repairs"].as_u64().unwrap() > 100, "{l}");
    let haul = l["haul_time_hours"]["mean"].as_f64().unwrap();
    let p90 = l["haul_time_hours"]["p90"].as_f64().unwrap();
    assert!(haul > 0.0 && p90 >= l["haul_time_hours"]["p50"].as_f64().unwrap());
    let ttr = r["time_to_splice_hours"]["mean"].as_f64().unwrap();
    let wait = l["mean_station_wait_hours"].as_f64().unwrap();
    assert!(
        (ttr - (haul + 8.0 + wait)).abs() < 0.01 * ttr,
        "time to repair {ttr} h vs haul {haul} h + 8 h + wait {wait} h"
    );
    let o = run(&["report", dir.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let html = std::fs::read_to_string(dir.join("report.html")).unwrap();
    assert!(html.contains("looped-ribbon repair: each ribbon is a loop"));
    assert!(!html.contains("climbers have full power in the Moon"));
}

#[test]
fn issue16_one_trade_study_compares_both_concepts() {
    // The looped fields are listed with their defaults in every scenario, so the concept alone
    // is a sweep axis; the two points share the strikes (common random numbers) and differ in
    // the time to repair.
    let dir = temp_dir("looped-sweep");
    let out = dir.join("sweep");
    let o = run(&[
        "sweep",
        "demo",
        "--vary",
        "repair.concept=climbers,looped_ribbon",
        "--histories",
        "1000",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("sweep.json")).unwrap()).unwrap();
    let pts = v["points"].as_array().unwrap();
    assert_eq!(pts.len(), 2);
    let p90 = |i: usize| pts[i]["time_to_splice_p90_hours"].as_f64().unwrap();
    assert!(
        p90(1) > p90(0),
        "looped {} h vs climbers {} h",
        p90(1),
        p90(0)
    );
    // A concept that does not exist is refused with the field.
    let o = run(&[
        "sweep",
        "demo",
        "--vary",
        "repair.concept=climbers,pulleys",
        "--histories",
        "100",
        "--out",
        dir.join("bad").to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("concept"), "{}", stderr(&o));
}

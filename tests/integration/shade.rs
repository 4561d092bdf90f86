//! Issue 16 item 2: solar climbers in the Moon's shadow. The shaded fraction against an
//! independent vector computation and the closed form, constructed repair trips whose times are
//! worked out by hand, and a run whose mean wait for light is the closed-form mean.

use serde_json::{json, Value};
use tether_risk::orbit::shadow::{shaded_fraction_of_month, SYNODIC_MONTH_S};
use tether_risk::repair::{EventKind, FirstCome, Fleet, RepairPlan, RepairTally};

use crate::util::*;

/// Moon mean radius 1 737.4 km (IAU mean radius, as listed with the JPL ephemeris constants;
/// the value in `orbit::EarthMoon::standard`).
const R_MOON_M: f64 = 1_737.4e3;

/// Fraction of a synodic month in the shadow cylinder at distance `r` on the tether line, by
/// vectors: the Sun direction s = (cos psi, sin psi, 0) turns uniformly; the point p = (r, 0, 0)
/// is dark when it is behind the Moon (p . s < 0) and within R of the shadow axis
/// (|p - (p . s) s| < R). Midpoint rule over `n` equal steps of the month.
fn vector_shaded_fraction(r: f64, n: usize) -> f64 {
    let mut dark = 0usize;
    for k in 0..n {
        let psi = 2.0 * std::f64::consts::PI * (k as f64 + 0.5) / n as f64;
        let (sx, sy) = (psi.cos(), psi.sin());
        let along = r * sx;
        let (px, py) = (r - along * sx, -along * sy);
        if along < 0.0 && (px * px + py * py).sqrt() < R_MOON_M {
            dark += 1;
        }
    }
    dark as f64 / n as f64
}

#[test]
fn issue16_shaded_fraction_matches_arcsin_over_pi_at_several_altitudes() {
    // Closed form arcsin(R/r)/pi (the cylinder geometry of issue 16 item 2): 1/2 at the
    // surface. The vector count resolves it to 1/n.
    let n = 2_000_000;
    for alt_km in [0.0, 100.0, 1_000.0, 10_000.0, 56_000.0] {
        let r = R_MOON_M + alt_km * 1e3;
        let closed = (R_MOON_M / r).asin() / std::f64::consts::PI;
        let lib = shaded_fraction_of_month(R_MOON_M, r);
        assert!((lib - closed).abs() < 1e-15, "{alt_km} km");
        let v = vector_shaded_fraction(r, n);
        assert!(
            (v - closed).abs() < 2.0 / n as f64,
            "{alt_km} km: vectors {v}, arcsin(R/r)/pi {closed}"
        );
    }
    // The library's time-dependent test, sampled over one month, gives the same fraction.
    let m = tether_risk::repair::ShadeMotion {
        moon_radius_m: R_MOON_M,
        sun_rate_rad_per_s: tether_risk::orbit::shadow::sun_rate_rad_per_s(),
        sun_angle_at_start_rad: 0.3,
        shade_speed_m_per_s: 0.0,
        battery_j: 0.0,
        power_w: 0.0,
    };
    let steps = 200_000;
    for alt_m in [0.0, 500e3, 20_000e3] {
        let dark = (0..steps)
            .filter(|&k| m.is_dark(alt_m, SYNODIC_MONTH_S * (k as f64 + 0.5) / steps as f64))
            .count();
        let want = shaded_fraction_of_month(R_MOON_M, R_MOON_M + alt_m);
        assert!((dark as f64 / steps as f64 - want).abs() < 2.0 / steps as f64);
    }
}

#[test]
fn issue16_profile_json_gives_the_shaded_fraction_of_each_bay() {
    let o = run(&["profile", "demo", "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: Value = serde_json::from_str(&stdout(&o)).unwrap();
    let bays = v["bays"].as_array().unwrap();
    assert!(!bays.is_empty());
    for b in bays {
        let lo = b["bottom_altitude_km"].as_f64().unwrap();
        let hi = b["top_altitude_km"].as_f64().unwrap();
        let r = R_MOON_M + 0.5 * (lo + hi) * 1e3;
        let f = b["shaded_fraction_of_month"].as_f64().unwrap();
        let want = (R_MOON_M / r).asin() / std::f64::consts::PI;
        assert!((f - want).abs() < 1e-9, "{b}");
    }
}

/// The demo with one station at `altitude_km` (one climber), solar power `power`.
fn one_station(altitude_km: f64, power: Value) -> Value {
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["repair"]["stations"] = json!([{ "name": "base", "altitude_km": altitude_km, "climbers": 1, "initial_stock_segments": 50 }]);
    v["repair"]["climber"]["power"] = power;
    v
}

/// One cut in `bay` at `t_cut`, detected after the fixed delay, served by the one climber:
/// returns the time the splice is done and the fleet's tally.
fn single_repair(v: &Value, bay: u32, t_cut: f64) -> (f64, RepairTally, RepairPlan) {
    let model = model_of(v);
    let settings = model.scenario.repair.as_ref().unwrap();
    let mission = model.scenario.run.mission_s;
    let plan = RepairPlan::new(settings, &model.profile, mission)
        .with_solar(settings, model.orbit.moon_radius_m);
    let mut fleet = Fleet::new(&plan, mission);
    fleet.reset(&plan);
    let mut tally = RepairTally::new(plan.stations.len(), 16);
    let mut rng = <rand_pcg::Pcg64Mcg as rand::SeedableRng>::seed_from_u64(1);
    fleet.on_cut(&plan, &mut rng, bay, 1, t_cut);
    loop {
        let ev = fleet.queue.pop().expect("the splice happens");
        let t = ev.time_s;
        match ev.kind {
            EventKind::Detect { bay } => {
                fleet.on_detect(bay, 1, t, &mut tally);
                fleet.dispatch(&plan, &FirstCome, t, &mut tally);
            }
            EventKind::Arrive {
                station,
                bay,
                segments,
            } => fleet.on_arrive(&plan, station, bay, segments, t),
            EventKind::SpliceDone { .. } => {
                fleet.finish(&plan, t, &mut tally);
                return (t, tally, plan);
            }
            _ => {}
        }
    }
}

#[test]
fn issue16_a_climber_at_a_dark_station_waits_for_the_trailing_edge() {
    // Sun behind the Moon at mission start (180 deg): the surface is dark until the Sun angle
    // reaches 270 deg, a quarter of a synodic month (the surface's dark arc is +-90 deg). The
    // cut at t = 0 is detected at 2 h, the climber is ready at 2 h + 12 h turnaround, waits
    // at the base until T/4, then climbs at 60 m/s (the shadow recedes below it: arcsin(R/r)
    // shrinks as it rises and the Sun angle only grows) and splices for 8 h.
    let v = one_station(
        0.0,
        json!({"kind": "solar", "sun_angle_at_start_deg": 180.0}),
    );
    let bay = 40;
    let (done, tally, plan) = single_repair(&v, bay, 0.0);
    let h = 3600.0;
    let climb = plan.bay_altitude_m[bay as usize] / 60.0;
    let quarter = 0.25 * SYNODIC_MONTH_S;
    let want = quarter + climb + 8.0 * h;
    assert!(
        (done - want).abs() < 1e-3,
        "done {done} s, by hand {want} s"
    );
    // The trip's parts: travel = turnaround + climb, waiting for light = T/4 - 14 h, splice.
    assert_eq!(tally.dispatched_segments, 1);
    let near = |a: u64, b: f64| (a as f64 - b).abs() <= 1.0;
    assert!(near(tally.trip_travel_sum_s, 12.0 * h + climb));
    assert!(near(tally.trip_wait_for_light_sum_s, quarter - 14.0 * h));
    assert!(near(tally.trip_splice_sum_s, 8.0 * h));
    // Beamed power (the default): no wait, the old arithmetic.
    let (done_b, tally_b, _) =
        single_repair(&one_station(0.0, json!({"kind": "beamed"})), bay, 0.0);
    assert_eq!(done_b, 14.0 * h + climb + 8.0 * h);
    assert_eq!(tally_b.trip_wait_for_light_sum_s, 0);
}

#[test]
fn issue16_a_climbing_climber_caught_by_the_shadow_waits_where_it_stops() {
    // Sun at 140 deg at mission start; the climber leaves its lit station at 2 000 km at 14 h
    // (Sun at 147.1 deg; the shadow's leading edge there is at 152.3 deg) and climbs at 60 m/s
    // to the middle of bay 400 (20 025 km). The leading edge at distance r is at Sun angle
    // pi - arcsin(R/r): the climber stops at the first time tau where
    // psi0 + omega tau = pi - arcsin(R / (r0 + 60 (tau - 14 h))), found here by plain bisection
    // on that equation, waits at r until psi = pi + arcsin(R/r), then climbs on in light.
    let psi0 = 140f64.to_radians();
    let v = one_station(
        2_000.0,
        json!({"kind": "solar", "sun_angle_at_start_deg": 140.0}),
    );
    let bay = 400;
    let (done, tally, plan) = single_repair(&v, bay, 0.0);
    let pi = std::f64::consts::PI;
    let omega = 2.0 * pi / SYNODIC_MONTH_S;
    let h = 3600.0;
    let top = plan.bay_altitude_m[bay as usize];
    let dep = 14.0 * h;
    let r0 = R_MOON_M + 2_000e3;
    let r_of = |tau: f64| r0 + 60.0 * (tau - dep);
    let g = |tau: f64| psi0 + omega * tau - (pi - (R_MOON_M / r_of(tau)).asin());
    let t_top = dep + (R_MOON_M + top - r0) / 60.0;
    assert!(
        g(dep) < 0.0 && g(t_top) > 0.0,
        "the case must meet the shadow"
    );
    let (mut lo, mut hi) = (dep, t_top);
    for _ in 0..200 {
        let m = 0.5 * (lo + hi);
        if g(m) > 0.0 {
            hi = m
        } else {
            lo = m
        }
    }
    let r_stop = r_of(hi);
    let t_exit = (pi + (R_MOON_M / r_stop).asin() - psi0) / omega;
    let want = t_exit + (R_MOON_M + top - r_stop) / 60.0 + 8.0 * h;
    assert!(
        (done - want).abs() < 1e-3 * h,
        "done {done} s, by hand {want} s"
    );
    let wait = t_exit - hi;
    assert!((tally.trip_wait_for_light_sum_s as f64 - wait).abs() <= 1.0);
}

#[test]
fn issue16_mean_wait_for_light_from_the_surface_is_an_eighth_of_a_month() {
    // Solar climbers that stop in shade, all leaving from the surface station: a departure
    // in the surface's dark half (Sun angle in (90, 270) deg, probability 1/2) waits until
    // 270 deg, uniformly 0 to T/2; a lit departure is never caught on the way up (the
    // leading edge pi - arcsin(R/r) outruns the Sun angle for legs under months). With cut
    // times spread evenly over 185 months, the mean wait is T/8 = 88.59 h, with standard
    // deviation T sqrt(5/192) = 114.4 h per trip.
    let dir = temp_dir("shade-mean");
    let p = dir.join("s.json");
    let mut v = one_station(0.0, json!({"kind": "solar"}));
    v["repair"]["stations"][0]["climbers"] = json!(4);
    std::fs::write(&p, v.to_string()).unwrap();
    let out = dir.join("run");
    let o = run(&[
        "simulate",
        p.to_str().unwrap(),
        "--histories",
        "20000",
        "--threads",
        "2",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let s: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let r = &s["repair"];
    let t_month_h = SYNODIC_MONTH_S / 3600.0;
    let want = t_month_h / 8.0;
    let wait = r["mean_wait_for_light_hours"].as_f64().unwrap();
    let trips = s["tally"]["repair"]["dispatched_segments"]
        .as_u64()
        .unwrap();
    assert!(trips > 5_000, "{trips} trips");
    let se = t_month_h * (5.0f64 / 192.0).sqrt() / (trips as f64).sqrt();
    assert!(
        (wait - want).abs() < 4.0 * se,
        "mean wait for light {wait} h, T/8 = {want} h (4 se = {} h)",
        4.0 * se
    );
    // The parts add up to the time from cut to splice: detection 2 h + wait for dispatch +
    // travel + waiting for light + splicing (per segment sent vs per splice: within 1 %).
    let total = r["time_to_splice_hours"]["mean"].as_f64().unwrap();
    let parts = 2.0
        + r["queue"]["mean_wait_hours"].as_f64().unwrap()
        + r["mean_trip_travel_hours"].as_f64().unwrap()
        + wait
        + r["mean_trip_splice_hours"].as_f64().unwrap();
    assert!((parts / total - 1.0).abs() < 0.01, "{parts} h vs {total} h");
}

#[test]
fn issue16_bad_power_settings_are_refused_with_the_field() {
    for (power, field) in [
        (
            json!({"kind": "solar", "shade_speed_m_per_s": 100.0}),
            "repair.climber.power.shade_speed_m_per_s",
        ),
        (
            json!({"kind": "solar", "sun_angle_at_start_deg": -5.0}),
            "repair.climber.power.sun_angle_at_start_deg",
        ),
        (
            json!({"kind": "solar_with_battery", "battery_energy_wh": 0.0, "power_w": 100.0}),
            "repair.climber.power.battery_energy_wh",
        ),
        (
            json!({"kind": "solar_with_battery", "battery_energy_wh": 10.0, "power_w": -1.0}),
            "repair.climber.power.power_w",
        ),
    ] {
        let p = scenario_with("shade-bad", |v| {
            v["repair"]["climber"]["power"] = power.clone()
        });
        let o = run(&["check", p.to_str().unwrap()]);
        assert_eq!(o.status.code(), Some(2), "{power}");
        assert!(stderr(&o).contains(field), "{power}: {}", stderr(&o));
    }
}

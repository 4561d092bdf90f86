//! Cross-link hits (`tether.cross_link_hits`): the merged-bay rule against its closed form,
//! the cross-link cut count against the Poisson law, the strict invariants over merged spans,
//! and the refusals.

use serde_json::{json, Value};
use tether_risk::engine::{Engine, RunOptions, Tally};
use tether_risk::model::Model;

use super::util::{model_of, run, scenario_with, stderr, DEMO};

/// The demo without repair, with cross-link hits of `area_m2` and critical diameter 0.5 mm,
/// `ribbons` ribbons under `sharing`, the flux scaled by `flux`.
fn with_hits(area_m2: f64, ribbons: u32, sharing: &str, flux: f64) -> Value {
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["repair"] = Value::Null;
    v["environment"]["flux_scale_factor"] = json!(flux);
    v["tether"]["ribbon_count"] = json!(ribbons);
    v["tether"]["load_sharing"] = json!(sharing);
    v["tether"]["cross_link_hits"] =
        json!({"exposed_area_m2": area_m2, "critical_diameter_mm": 0.5});
    v
}

fn tally_of(engine: &Engine, n: u64, seed: u64) -> Tally {
    let opts = RunOptions {
        histories: n,
        seed,
        threads: 2,
        floor_fraction: 1.0,
        shard: None,
        target_rel_error: None,
    };
    engine.run(&opts, &|_| {}).unwrap()
}

/// Independent answer (closed form of the merged-bay rule, worked here, not by the engine):
/// without load redistribution (`load_sharing: none`, each intact ribbon carries T/N whatever
/// happens) and without repair, every segment j is cut by mission end independently with
/// p_j = 1 - exp(-lambda_j T) and every interior cross-link k with q_k = 1 - exp(-mu_k T);
/// nothing is ever restored, so "lost by T" is "lost in the state at T". The cut cross-links
/// split the bays into spans; a span a..=b survives when some ribbon is intact in all its
/// bays: P = 1 - (1 - prod_{j=a..b} (1 - p_j))^N, spans independent given the links. Summing
/// over the link states by dynamic programming on the last span's start a:
/// D(b) = sum_a D(a - 1) (1 - q_a)[a > 0] prod_{k=a+1..b} q_k S(a, b), P(loss) = 1 - D(M - 1).
fn merged_bay_loss_probability(p: &[f64], q: &[f64], n: i32) -> f64 {
    let m = p.len();
    let mut d = vec![0.0f64; m + 1]; // d[b + 1] = D(b); d[0] = D(-1) = 1
    d[0] = 1.0;
    for b in 0..m {
        let (mut prod_q, mut prod_intact, mut acc) = (1.0f64, 1.0f64, 0.0f64);
        for a in (0..=b).rev() {
            prod_intact *= 1.0 - p[a];
            let survive = 1.0 - (1.0 - prod_intact).powi(n);
            let boundary = if a > 0 { 1.0 - q[a] } else { 1.0 };
            acc += d[a] * boundary * prod_q * survive;
            if a > 0 {
                prod_q *= q[a];
            }
        }
        d[b + 1] = acc;
    }
    1.0 - d[m]
}

fn segment_and_link_probabilities(model: &Model, engine: &Engine) -> (Vec<f64>, Vec<f64>) {
    let od = engine.on_demand().unwrap();
    let t_s = engine.mission_s();
    let years = model.scenario.run.mission_years;
    let bays = model.profile.bays.len();
    let p: Vec<f64> = (0..bays)
        .map(|j| -(-od.segment_cut_rate_per_s(j) * t_s).exp_m1())
        .collect();
    let q: Vec<f64> = model
        .cross_link_rate_per_year
        .iter()
        .map(|r| -(-r * years).exp_m1())
        .collect();
    (p, q)
}

#[test]
fn no_repair_loss_probability_follows_the_merged_bay_rule() {
    let mut v = with_hits(0.02, 2, "none", 100.0);
    v["run"]["mission_years"] = json!(60.0);
    let model = model_of(&v);
    let engine = Engine::new(&model, 1.0).unwrap();
    let (p, q) = segment_and_link_probabilities(&model, &engine);
    let n_hist = 20_000;
    let t = tally_of(&engine, n_hist, 163);
    let want = merged_bay_loss_probability(&p, &q, 2);
    // The same without merging (every q = 0): the rule must matter in this case.
    let unmerged = merged_bay_loss_probability(&p, &vec![0.0; q.len()], 2);
    let mc = t.losses as f64 / n_hist as f64;
    let se = (want * (1.0 - want) / n_hist as f64).sqrt();
    eprintln!("merged-bay: Monte Carlo {mc} (se {se}), closed form {want}, unmerged {unmerged}");
    assert!(
        (want - unmerged).abs() > 8.0 * se,
        "regime: merged {want} vs unmerged {unmerged}, se {se}"
    );
    assert!(
        (mc - want).abs() < 3.0 * se,
        "Monte Carlo {mc} vs merged-bay closed form {want} (se {se}; unmerged {unmerged})"
    );
    assert!(t.cross_link_cuts > 0);
    assert_eq!(t.anomalies, 0);
}

#[test]
fn cross_link_cuts_per_history_follow_the_poisson_law() {
    // Independent answer: each interior cross-link is cut at most once, by mission end with
    // q_k = 1 - exp(-mu_k T), independently, so the mean count is sum q_k and its variance
    // sum q_k (1 - q_k). Six ribbons without redistribution: a loss needs all six cut along
    // one span, so no history ends early (checked).
    let model = model_of(&with_hits(0.5, 6, "none", 1.0));
    let engine = Engine::new(&model, 1.0).unwrap();
    let (_, q) = segment_and_link_probabilities(&model, &engine);
    let n_hist = 4_000;
    let t = tally_of(&engine, n_hist, 7);
    assert_eq!(t.losses, 0);
    let mean: f64 = q.iter().sum();
    let var: f64 = q.iter().map(|x| x * (1.0 - x)).sum();
    let se = (var / n_hist as f64).sqrt();
    let got = t.cross_link_cuts as f64 / n_hist as f64;
    eprintln!("cross-link cuts per history {got} vs sum q_k {mean} (se {se})");
    assert!(
        (got - mean).abs() < 3.0 * se,
        "cross-link cuts per history {got} vs sum of q_k {mean} (se {se})"
    );
}

#[test]
fn merged_spans_keep_the_invariants_and_raise_the_loss_probability() {
    // Equal sharing (loads and critical widths change across merged spans), strict invariant
    // checks after every event: no history reaches an impossible state, and merging bays can
    // only add losses (common random numbers: the ribbon draws are the same with the option
    // off, the cross-links have their own stream; not a strict coupling once states differ,
    // so the check is on the counts with a margin of 3 standard errors).
    let model = model_of(&with_hits(0.5, 6, "equal", 3.0));
    let engine = Engine::new(&model, 1.0).unwrap().with_invariant_checks();
    let n_hist = 4_000;
    let t = tally_of(&engine, n_hist, 7);
    assert_eq!(t.anomalies, 0, "{:?}", t.anomaly_examples);
    assert!(t.cross_link_cuts > 0);
    let mut off = with_hits(0.5, 6, "equal", 3.0);
    off["tether"]["cross_link_hits"] = Value::Null;
    let plain = tally_of(&Engine::new(&model_of(&off), 1.0).unwrap(), n_hist, 7);
    let se = (plain.losses.max(1) as f64).sqrt();
    eprintln!(
        "equal sharing, flux x3: {} losses with cross-link hits, {} without, in {n_hist}",
        t.losses, plain.losses
    );
    assert!(
        t.losses as f64 + 3.0 * se >= plain.losses as f64,
        "{} vs {}",
        t.losses,
        plain.losses
    );
}

#[test]
fn without_cross_link_hits_nothing_is_drawn_for_them() {
    // Default off: the strike, cut and loss counts equal those of the scenario as written
    // before the option existed (the goldens guard the demo; this guards a variant).
    let on = model_of(&with_hits(1e-12, 6, "equal", 3.0));
    let mut v = with_hits(0.5, 6, "equal", 3.0);
    v["tether"]
        .as_object_mut()
        .unwrap()
        .remove("cross_link_hits");
    let off = model_of(&v);
    let a = tally_of(&Engine::new(&off, 1.0).unwrap(), 2_000, 5);
    assert_eq!(a.cross_link_cuts, 0);
    // A vanishing exposed area draws its own stream only: every other draw is unchanged.
    let b = tally_of(&Engine::new(&on, 1.0).unwrap(), 2_000, 5);
    assert_eq!(b.cross_link_cuts, 0);
    assert_eq!((a.cuts, a.losses, a.cuts_sq), (b.cuts, b.losses, b.cuts_sq));
}

#[test]
fn bad_cross_link_inputs_are_refused_with_field_range_and_unit() {
    let p = scenario_with("xl-bad-area", |v| {
        v["tether"]["cross_link_hits"] =
            json!({"exposed_area_m2": -1.0, "critical_diameter_mm": 0.5});
    });
    let o = run(&["check", p.to_str().unwrap()]);
    let e = stderr(&o);
    assert_eq!(o.status.code(), Some(2), "{e}");
    assert!(
        e.contains("tether.cross_link_hits.exposed_area_m2")
            && e.contains("-1")
            && e.contains("m^2"),
        "{e}"
    );
    let p = scenario_with("xl-bad-d", |v| {
        v["tether"]["cross_link_hits"] = json!({"exposed_area_m2": 1.0, "critical_diameter_mm": 0});
        v["repair"] = Value::Null;
    });
    let e = stderr(&run(&["check", p.to_str().unwrap()]));
    assert!(
        e.contains("tether.cross_link_hits.critical_diameter_mm") && e.contains("mm"),
        "{e}"
    );
    // With a repair section but no repair.cross_link_repair: refused, naming the field.
    let p = scenario_with("xl-repair", |v| {
        v["tether"]["cross_link_hits"] =
            json!({"exposed_area_m2": 1.0, "critical_diameter_mm": 0.5});
    });
    let o = run(&["check", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("tether.cross_link_hits") && stderr(&o).contains("repair"));
    // The every-strike sampler does not sample cross-link cuts: refused, naming the field.
    let p = scenario_with("xl-es", |v| {
        v["tether"]["cross_link_hits"] =
            json!({"exposed_area_m2": 1.0, "critical_diameter_mm": 0.5});
        v["repair"] = Value::Null;
    });
    let dir = p.parent().unwrap().join("run");
    let o = run(&[
        "simulate",
        p.to_str().unwrap(),
        "--sampler",
        "every-strike",
        "--histories",
        "10",
        "--out",
        dir.to_str().unwrap(),
    ]);
    assert_ne!(o.status.code(), Some(0));
    assert!(
        stderr(&o).contains("tether.cross_link_hits"),
        "{}",
        stderr(&o)
    );
}

#[test]
fn check_profile_and_summary_report_the_option() {
    let p = scenario_with("xl-report", |v| {
        v["tether"]["cross_link_hits"] =
            json!({"exposed_area_m2": 1.0, "critical_diameter_mm": 0.5});
        v["repair"] = Value::Null;
    });
    let text = super::util::stdout(&run(&["check", p.to_str().unwrap()]));
    assert!(text.contains("Cross-link hits: on"), "{text}");
    let prof: Value = serde_json::from_str(&super::util::stdout(&run(&[
        "profile",
        p.to_str().unwrap(),
        "--format",
        "json",
    ])))
    .unwrap();
    let bays = prof["bays"].as_array().unwrap();
    assert!(bays[0]["cross_link_strike_rate_per_year"].as_f64().unwrap() > 0.0);
    assert_eq!(
        bays.last().unwrap()["cross_link_strike_rate_per_year"],
        json!(0.0)
    );
    let off = scenario_with("xl-off", |_| {});
    let text = super::util::stdout(&run(&["check", off.to_str().unwrap()]));
    assert!(text.contains("Cross-link hits: off"), "{text}");
    let dir = p.parent().unwrap().join("run");
    let o = run(&[
        "simulate",
        p.to_str().unwrap(),
        "--histories",
        "2000",
        "--out",
        dir.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let s: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap();
    assert!(s["cross_link_cuts_per_history"].as_f64().unwrap() > 0.0);
}

#[test]
fn cross_link_strike_rate_is_the_flux_above_the_critical_mass_times_the_exposed_area() {
    // Independent answer: F(1e-6 g) = 1.4880 per m^2 per year, ECSS-E-ST-10-04C Rev.1
    // eq. (10-1) (Grün 1985) evaluated independently to 5 s.f. (the same value as
    // tests/ref_environment.rs, computed), for the critical diameter whose sphere at 2.5 g/cm^3
    // weighs 1e-6 g. Focusing off; Moon shielding of a randomly oriented plate, ECSS eqs.
    // C-26/C-27: s = (1 + cos eta) / 2, sin eta = R / (R + h), R = 1737.4 km, at the station's
    // altitude h; Earth shielding by the same equations with R + R_A = 6378 + 100 km at the
    // station's distance from the Earth's centre, 384 400 km - 1737.4 km - h on the near side
    // (mean Earth–Moon distance, from memory; its uncertainty moves s by far less than 1e-5).
    let m_kg = 1e-9;
    let d_mm = (6.0 * m_kg / (std::f64::consts::PI * 2500.0)).cbrt() * 1e3;
    let area = 0.7;
    for shielding in [false, true] {
        let mut v = with_hits(area, 6, "equal", 1.0);
        v["tether"]["cross_link_hits"]["critical_diameter_mm"] = json!(d_mm);
        v["environment"]["moon_focusing"] = json!(false);
        v["environment"]["earth_focusing"] = json!(false);
        v["environment"]["moon_shielding"] = json!(shielding);
        v["environment"]["moon_shielding_geometry"] = json!("random_plate");
        let model = model_of(&v);
        let rates = &model.cross_link_rate_per_year;
        let bays = model.profile.bays.len();
        assert_eq!(rates.len(), bays + 1);
        assert_eq!(
            (rates[0], rates[bays]),
            (0.0, 0.0),
            "ends are not cross-links"
        );
        for k in [1, 2, 20, bays / 2, bays - 1] {
            let h = model.profile.bays[k].bottom_altitude_m;
            let s = if shielding {
                let sin_eta = 1737.4e3 / (1737.4e3 + h);
                0.5 * (1.0 + (1.0 - sin_eta * sin_eta).sqrt())
            } else {
                1.0
            };
            let sin_e = 6478e3 / (384_400e3 - 1737.4e3 - h);
            let s_earth = 0.5 * (1.0 + (1.0 - sin_e * sin_e).sqrt());
            let want = 1.4880 * area * s * s_earth;
            assert!(
                (rates[k] / want - 1.0).abs() < 1e-4,
                "station {k} at {h} m (shielding {shielding}): {} vs {want}",
                rates[k]
            );
        }
    }
}

/// The demo with cross-link hits and their repair, a fleet large enough that no job ever
/// queues (100 climbers and ample spares at each station), and ribbons strong enough that no
/// history is lost (so no downtime is cut short).
fn with_link_repair(repair_hours: f64) -> Value {
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["tether"]["ribbon_count"] = json!(8);
    v["tether"]["cross_link_hits"] = json!({"exposed_area_m2": 0.04, "critical_diameter_mm": 0.5});
    for s in v["repair"]["stations"].as_array_mut().unwrap() {
        s["climbers"] = json!(100);
        s["initial_stock_segments"] = json!(10_000);
    }
    v["repair"]["cross_link_repair"] =
        json!({"repair_hours": repair_hours, "spares_per_station": 10_000});
    v
}

/// Independent answer (alternating renewal process, worked here): a cross-link station is cut
/// at rate lambda while joined (a hit on a cut station changes nothing, and the rate does not
/// depend on the past: the up times are exponential), and a cut stays for the fixed time
/// R = detection + turnaround + travel from the nearest station + time on site (no queue).
/// The n-th cut comes at S_n = G_n + (n - 1) R with G_n ~ Gamma(n, lambda), so the expected time
/// cut by T is E[D(T)] = sum_n int_0^min(R, A_n) P(G_n <= A_n - s) ds, A_n = T - (n - 1) R
/// (Ross, Introduction to Probability Models, alternating renewal processes; the Gamma law of
/// a sum of exponential gaps). Its long-run share lambda R / (1 + lambda R) is the check on
/// this sum in the limit.
fn expected_time_cut_s(lambda_s: f64, r_s: f64, t_s: f64) -> f64 {
    // P(G_n <= x) = 1 - sum_{k<n} e^(-lambda x) (lambda x)^k / k!, terms in logs (no underflow).
    let gamma_cdf = |n: u32, x: f64| -> f64 {
        if x <= 0.0 {
            return 0.0;
        }
        let lx = lambda_s * x;
        let (mut ln_fact, mut sum) = (0.0f64, 0.0f64);
        for k in 0..n {
            if k > 0 {
                ln_fact += f64::from(k).ln();
            }
            sum += (-lx + f64::from(k) * lx.ln() - ln_fact).exp();
        }
        (1.0 - sum).max(0.0)
    };
    let mut total = 0.0;
    for n in 1..100_000u32 {
        let a = t_s - f64::from(n - 1) * r_s;
        if a <= 0.0 {
            break;
        }
        if gamma_cdf(n, a) < 1e-16 {
            break; // the n-th cut (and every later one) almost surely comes after T
        }
        let upper = r_s.min(a);
        // Simpson's rule over [0, upper] (the integrand is smooth).
        let m = 200;
        let h = upper / f64::from(m);
        let mut acc = gamma_cdf(n, a) + gamma_cdf(n, a - upper);
        for i in 1..m {
            let w = if i % 2 == 1 { 4.0 } else { 2.0 };
            acc += w * gamma_cdf(n, a - f64::from(i) * h);
        }
        total += acc * h / 3.0;
    }
    total
}

#[test]
fn the_renewal_sum_matches_its_closed_forms() {
    // Over 200 cycles the share of time cut tends to lambda R / (1 + lambda R) (Ross,
    // alternating renewal processes); the start in the joined state lowers it by a bounded
    // amount, below 1e-3 of the total here.
    let (lambda, r) = (1.0 / 1000.0, 250.0);
    let t = 2.5e5;
    let share = expected_time_cut_s(lambda, r, t) / t;
    let long_run = lambda * r / (1.0 + lambda * r);
    assert!(
        (share / long_run - 1.0).abs() < 1e-3,
        "{share} vs {long_run}"
    );
    // Within one repair time at most one cut can happen: E[D(T)] = E[(T - G_1)^+] =
    // T - (1 - e^(-lambda T)) / lambda for T <= R (worked by hand).
    let t = 200.0;
    let exact = t - (1.0 - (-lambda * t).exp()) / lambda;
    let sum = expected_time_cut_s(lambda, r, t);
    assert!((sum / exact - 1.0).abs() < 1e-9, "{sum} vs {exact}");
}

#[test]
fn time_cross_links_spend_cut_follows_the_alternating_renewal_law() {
    let repair_hours = 48.0;
    let model = model_of(&with_link_repair(repair_hours));
    let engine = Engine::new(&model, 1.0).unwrap().with_invariant_checks();
    let t_s = engine.mission_s();
    // R per station from the scenario's own numbers: detection 2 h, turnaround 12 h, climbing
    // at 60 m/s, descending at 80 m/s from the nearer of the two stations (0 and 56,000 km).
    let v = with_link_repair(repair_hours);
    let up = v["repair"]["climber"]["speed_up_m_per_s"].as_f64().unwrap();
    let down = v["repair"]["climber"]["speed_down_m_per_s"]
        .as_f64()
        .unwrap();
    let stations_m: Vec<f64> = v["repair"]["stations"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["altitude_km"].as_f64().unwrap() * 1e3)
        .collect();
    let fixed_s = (2.0 + 12.0 + repair_hours) * 3600.0;
    let years = model.scenario.run.mission_years;
    let mut expected = 0.0;
    let bays = model.profile.bays.len();
    for k in 1..bays {
        let x = model.profile.bays[k].line_bottom_m;
        let travel = stations_m
            .iter()
            .map(|&s| if x >= s { (x - s) / up } else { (s - x) / down })
            .fold(f64::INFINITY, f64::min);
        let lambda_s = model.cross_link_rate_per_year[k] * years / t_s; // per s
        expected += expected_time_cut_s(lambda_s, fixed_s + travel, t_s);
    }
    let n = 4_000u64;
    let mut scratch = engine.new_scratch();
    let mut tally = engine.empty_tally();
    let (mut sum, mut sum2, mut cuts) = (0.0f64, 0.0f64, 0u64);
    for i in 0..n {
        let out = engine.run_history(i, 31, &mut scratch, &mut tally, None);
        assert!(out.anomaly.is_none(), "{:?}", out.anomaly);
        assert!(
            out.loss.is_none(),
            "history {i} was lost: the case must have no losses"
        );
        sum += out.cross_link_down_s;
        sum2 += out.cross_link_down_s * out.cross_link_down_s;
        cuts += u64::from(out.cross_link_cuts);
    }
    let mean = sum / n as f64;
    let se = ((sum2 / n as f64 - mean * mean) / (n as f64 - 1.0)).sqrt();
    eprintln!(
        "time cut per history {mean:.0} s, renewal law {expected:.0} s, se {se:.0} s, {cuts} cuts"
    );
    assert!(
        cuts > 2_000,
        "too few cross-link cuts ({cuts}) for the check"
    );
    // Five standard errors (false alarm about 6e-7 for a normal mean).
    assert!(
        (mean - expected).abs() < 5.0 * se,
        "time cut per history {mean:.0} s vs renewal law {expected:.0} s (se {se:.0} s)"
    );
    // Every cut is re-joined or still open at the end; each re-join used one spare.
    let rt = &tally.repair;
    assert!(rt.cross_link_repairs <= cuts && rt.cross_link_repairs + n * (bays as u64) >= cuts);
    assert_eq!(rt.cross_link_stockout_events, 0);
    assert!(rt.cross_link_spares_used >= rt.cross_link_repairs);
}

#[test]
fn without_spares_cut_cross_links_stay_cut_and_stock_outs_are_counted() {
    let mut v = with_link_repair(48.0);
    v["repair"]["cross_link_repair"]["spares_per_station"] = json!(0);
    let model = model_of(&v);
    let engine = Engine::new(&model, 1.0).unwrap().with_invariant_checks();
    let t_s = engine.mission_s();
    let mut scratch = engine.new_scratch();
    let mut tally = engine.empty_tally();
    for i in 0..300u64 {
        let out = engine.run_history(i, 5, &mut scratch, &mut tally, None);
        assert!(out.anomaly.is_none(), "{:?}", out.anomaly);
        if out.loss.is_none() {
            // Never re-joined: the time cut is the time from each cut to the end. At least
            // one cut means some time cut, none means none.
            assert_eq!(out.cross_link_down_s > 0.0, out.cross_link_cuts > 0);
            assert!(out.cross_link_down_s <= f64::from(out.cross_link_cuts) * t_s);
        }
    }
    assert_eq!(tally.repair.cross_link_repairs, 0);
    assert!(tally.repair.cross_link_stockout_events > 0);
}

#[test]
fn cross_link_repair_combinations_are_refused_by_name() {
    // Repair of cross-links without cross-link hits: nothing to repair.
    let p = scenario_with("xl-repair-no-hits", |v| {
        v["repair"]["cross_link_repair"] = json!({"repair_hours": 4.0, "spares_per_station": 2});
    });
    let e = stderr(&run(&["check", p.to_str().unwrap()]));
    assert!(
        e.contains("repair.cross_link_repair") && e.contains("tether.cross_link_hits"),
        "{e}"
    );
    // A bad on-site time names the field, value, range and unit.
    let p = scenario_with("xl-repair-bad-h", |v| {
        v["tether"]["cross_link_hits"] =
            json!({"exposed_area_m2": 1.0, "critical_diameter_mm": 0.5});
        v["repair"]["cross_link_repair"] = json!({"repair_hours": 0.0, "spares_per_station": 2});
    });
    let e = stderr(&run(&["check", p.to_str().unwrap()]));
    assert!(
        e.contains("repair.cross_link_repair.repair_hours") && e.contains(" h"),
        "{e}"
    );
    // Preventive replacement is not built for merged spans: refused, naming it.
    let p = scenario_with("xl-repair-prev", |v| {
        v["tether"]["cross_link_hits"] =
            json!({"exposed_area_m2": 1.0, "critical_diameter_mm": 0.5});
        v["repair"]["cross_link_repair"] = json!({"repair_hours": 4.0, "spares_per_station": 2});
        v["repair"]["climber"]["load_on_bays"] = json!(true);
    });
    let e = stderr(&run(&["check", p.to_str().unwrap()]));
    assert!(e.contains("repair.climber.load_on_bays"), "{e}");
}

#[test]
fn contended_cross_link_repair_keeps_the_invariants() {
    // The demo's three climbers, few spare cross-links and a dense cross-link cut process:
    // ribbon and cross-link jobs compete for climbers, spares run out, splices fall inside
    // merged spans. The strict layer re-checks the bays and the fleet after every event.
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["tether"]["cross_link_hits"] = json!({"exposed_area_m2": 1.0, "critical_diameter_mm": 0.5});
    v["repair"]["cross_link_repair"] =
        json!({"repair_hours": 24.0, "spares_per_station": 5, "resupply_batch": 2});
    let model = model_of(&v);
    let engine = Engine::new(&model, 1.0).unwrap().with_invariant_checks();
    let mut scratch = engine.new_scratch();
    let mut tally = engine.empty_tally();
    for i in 0..300u64 {
        let out = engine.run_history(i, 9, &mut scratch, &mut tally, None);
        assert!(out.anomaly.is_none(), "history {i}: {:?}", out.anomaly);
    }
    let rt = &tally.repair;
    assert!(rt.cross_link_repairs > 0 && rt.cross_link_stockout_events > 0);
    assert!(rt.splices > 0);
    assert!(rt.cross_link_spares_used <= 300 * (2 * 5 + 2 * 2 * 15));
}

//! Repair logistics checked against independent answers: the birth–death Markov chain of a
//! repairable k-out-of-n system, Little's law, and common random numbers.

use serde_json::{json, Value};
use tether_risk::engine::{Engine, LogEvent, RunOptions, RunSummary, Sampler, Tally};
use tether_risk::model::Model;

use crate::util::{model_of, one_bay_validation, DEMO};

fn run(model: &Model, histories: u64, seed: u64) -> Tally {
    let engine = Engine::new(model, 1.0).unwrap();
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

fn assert_within_3se(p_hat: f64, p: f64, n: u64, what: &str) {
    let se = (p * (1.0 - p) / n as f64).sqrt();
    assert!(
        (p_hat - p).abs() < 3.0 * se,
        "{what}: simulated {p_hat}, expected {p} (3 se = {})",
        3.0 * se
    );
}

#[test]
fn one_out_of_four_one_crew_matches_birth_death_chain() {
    // Repairable 1-out-of-4, lambda = 0.01/day, mu = 0.05/day, one crew: R(10 yr = 3652.5 d) =
    // 0.101688 (birth–death chain in the Barlow & Proschan form, shared REFERENCES.md §8; value
    // computed by matrix exponential and checked against the first-passage MTTF of 1625 d).
    let n = 20_000;
    let t = run(&model_of(&one_bay_validation(0.01, 0.05, 1)), n, 11);
    assert_within_3se(
        t.losses as f64 / n as f64,
        1.0 - 0.101688,
        n,
        "1-of-4, one crew",
    );
}

#[test]
fn one_out_of_four_four_crews_matches_birth_death_chain() {
    // Same system with four crews: R(10 yr) = 0.59463 (REFERENCES.md §8, MTTF 7000 d).
    let n = 20_000;
    let t = run(&model_of(&one_bay_validation(0.01, 0.05, 4)), n, 12);
    assert_within_3se(
        t.losses as f64 / n as f64,
        1.0 - 0.59463,
        n,
        "1-of-4, four crews",
    );
}

#[test]
fn two_independent_bays_match_the_product_of_chains() {
    // Two bays of the 2-out-of-4, one-crew system of the next test, each with its own crew:
    // the tether survives when both bays do, R = 0.33726^2 (REFERENCES.md §8, independence).
    // Two bays run the general direct method (the one-bay chain has its own path).
    let mut v = one_bay_validation(0.01, 0.05, 1);
    v["tether"]["cross_link_spacing_km"] = json!(30000.0);
    v["synthetic_rates"]["required_ribbons"] = json!(2);
    v["run"]["mission_years"] = json!(1.0);
    let model = model_of(&v);
    assert_eq!(model.profile.bays.len(), 2);
    let n = 20_000;
    let t = run(&model, n, 14);
    assert_within_3se(
        t.losses as f64 / n as f64,
        1.0 - 0.33726f64.powi(2),
        n,
        "two bays of 2-of-4, one crew each",
    );
}

#[test]
fn two_out_of_four_one_crew_one_year() {
    // 2-out-of-4, one crew: R(1 yr = 365.25 d) = 0.33726 (REFERENCES.md §8).
    let mut v = one_bay_validation(0.01, 0.05, 1);
    v["synthetic_rates"]["required_ribbons"] = json!(2);
    v["run"]["mission_years"] = json!(1.0);
    let n = 20_000;
    let t = run(&model_of(&v), n, 13);
    assert_within_3se(
        t.losses as f64 / n as f64,
        1.0 - 0.33726,
        n,
        "2-of-4, one crew",
    );
}

/// The demo with a scarce fleet and a high flux so that repairs queue.
fn congested() -> Value {
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["environment"]["flux_scale_factor"] = json!(100.0);
    v["repair"]["stations"][0]["climbers"] = json!(1);
    v["repair"]["stations"][1]["climbers"] = json!(0);
    v["repair"]["climber"]["turnaround_hours"] = json!(200.0);
    v["run"]["mission_years"] = json!(3.0);
    v
}

#[test]
fn littles_law_holds_for_the_repair_queue() {
    // Little's law (Little 1961, Operations Research 9, 383): time-average number waiting =
    // arrival rate x mean wait. The two sides come from separate bookkeeping (an integral of the
    // queue length over event times, and per-segment detection-to-dispatch waits).
    let m = model_of(&congested());
    let engine = Engine::new(&m, 1.0).unwrap();
    let opts = RunOptions {
        histories: 400,
        seed: 5,
        threads: 2,
        floor_fraction: 1.0,
        shard: None,
        target_rel_error: None,
    };
    let tally = engine.run(&opts, &|_| {}).unwrap();
    let s = RunSummary::from_tally(&engine, tally, 400, 5, None, 0.05);
    let q = s.repair.unwrap().queue;
    assert!(
        q.mean_waiting_segments > 0.005,
        "the scenario must queue: {q:?}"
    );
    let rel = (q.mean_waiting_segments - q.arrival_rate_times_wait).abs() / q.mean_waiting_segments;
    // Only whole-second rounding per history separates the two sides.
    assert!(rel < 1e-4, "{q:?}");
}

#[test]
fn repair_settings_leave_strikes_identical() {
    // Common random numbers: strikes come from their own stream, so two scenarios differing only
    // in repair see exactly the same strikes (until one of them ends in a loss).
    let a = model_of(&congested());
    let mut vb = congested();
    vb["repair"]["climber"]["speed_up_m_per_s"] = json!(5.0);
    vb["repair"]["detection"] = json!({"kind": "exponential", "mean_hours": 48.0});
    let b = model_of(&vb);
    let (ea, eb) = (
        Engine::with_sampler(&a, 1.0, Sampler::EveryStrike).unwrap(),
        Engine::with_sampler(&b, 1.0, Sampler::EveryStrike).unwrap(),
    );
    // On-demand: the first cuts of untouched bays come from the strike stream, whatever the
    // state, so the first cut of every history is the same under both repair settings.
    let (oa, ob) = (Engine::new(&a, 1.0).unwrap(), Engine::new(&b, 1.0).unwrap());
    let mut first_cuts = 0;
    for h in 0..200 {
        let first = |e: &Engine<'_>| {
            e.replay(h, 99)
                .1
                .into_iter()
                .find(|x| matches!(x, LogEvent::CutHole { .. }))
        };
        let (x, y) = (first(&oa), first(&ob));
        assert_eq!(x, y, "on-demand history {h}");
        first_cuts += usize::from(x.is_some());
    }
    assert!(first_cuts > 0, "the check needs cuts");
    let mut differing_repairs = 0;
    for h in 0..20 {
        let (_, la) = ea.replay(h, 99);
        let (_, lb) = eb.replay(h, 99);
        let strikes = |l: &[LogEvent]| -> Vec<(f64, u32, u32, f64)> {
            l.iter()
                .filter_map(|e| match e {
                    LogEvent::Strike { time_s, strike, .. } => {
                        Some((*time_s, strike.bay, strike.ribbon, strike.diameter_m))
                    }
                    _ => None,
                })
                .collect()
        };
        let (sa, sb) = (strikes(&la), strikes(&lb));
        let k = sa.len().min(sb.len());
        assert!(k > 0);
        assert_eq!(sa[..k], sb[..k], "history {h}");
        let repairs = |l: &[LogEvent]| {
            l.iter()
                .filter(|e| matches!(e, LogEvent::Repair { .. }))
                .count()
        };
        if repairs(&la) != repairs(&lb) || la.len() != lb.len() {
            differing_repairs += 1;
        }
    }
    assert!(
        differing_repairs > 0,
        "the repair settings should change the repair events"
    );
}

#[test]
fn repair_that_never_acts_equals_no_repair_bit_for_bit() {
    // With detection later than the mission end, repair never acts: every damage score must equal
    // the run without repair exactly.
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["environment"]["flux_scale_factor"] = json!(20.0);
    v["run"]["mission_years"] = json!(5.0);
    let mut never = v.clone();
    never["repair"]["detection"] = json!({"kind": "fixed", "delay_hours": 1.0e6});
    let mut none = v.clone();
    none["repair"] = Value::Null;
    let (a, b) = (
        run(&model_of(&never), 3000, 3),
        run(&model_of(&none), 3000, 3),
    );
    assert!(
        a.cuts > 0 && a.losses > 0,
        "the check needs cuts and losses"
    );
    assert_eq!(a.losses, b.losses);
    assert_eq!(a.losses_by_year, b.losses_by_year);
    assert_eq!(a.losses_by_cause, b.losses_by_cause);
    assert_eq!(a.cuts, b.cuts);
    assert_eq!(a.cuts_sq, b.cuts_sq);
    assert_eq!(a.cuts_by_band, b.cuts_by_band);
    assert_eq!(a.strikes, b.strikes);
    assert_eq!(a.subcritical_holes, b.subcritical_holes);
    assert_eq!(a.max_cuts_in_bay, b.max_cuts_in_bay);
    assert_eq!(a.time_with_cut_bay_s, b.time_with_cut_bay_s);
    assert_eq!(a.repair.splices, 0);
}

#[test]
fn repair_lowers_loss_and_counts_spares() {
    let mut v: Value = serde_json::from_str(DEMO).unwrap();
    v["environment"]["flux_scale_factor"] = json!(20.0);
    v["run"]["mission_years"] = json!(5.0);
    let with = run(&model_of(&v), 3000, 4);
    let mut none = v.clone();
    none["repair"] = Value::Null;
    let without = run(&model_of(&none), 3000, 4);
    assert!(
        with.losses < without.losses,
        "{} vs {}",
        with.losses,
        without.losses
    );
    assert!(with.repair.splices > 0);
    let drawn: u64 = with
        .repair
        .demand_mission
        .iter()
        .map(|h| {
            h.iter()
                .enumerate()
                .map(|(k, &c)| k as u64 * c)
                .sum::<u64>()
        })
        .sum();
    // Every splice used one spare segment drawn at dispatch; trips still under way at the end
    // have drawn stock but not spliced yet.
    assert!(
        drawn >= with.repair.splices,
        "{drawn} drawn, {} spliced",
        with.repair.splices
    );
}

#[test]
fn strict_invariant_checks_find_nothing_in_busy_histories() {
    // The debug layer re-checks every bay and the fleet after every event: cut counts against
    // segment states, holes within the ribbon, no overloaded survivor after settling, idle
    // climbers within each station's fleet, event times in order. Busy scenarios (congested
    // repair; local sharing in a ring; rare-event extra strikes) must never trip it.
    let mut busy = congested();
    busy["environment"]["flux_scale_factor"] = json!(30.0);
    let mut ring = busy.clone();
    ring["tether"]["load_sharing"] = json!("local");
    ring["tether"]["arrangement"] = json!("ring");
    for (v, factor) in [(busy.clone(), 1.0), (ring, 1.0), (busy, 20.0)] {
        let m = model_of(&v);
        let engine = Engine::new(&m, 1.0)
            .unwrap()
            .with_rare_event(factor)
            .unwrap()
            .with_invariant_checks();
        let opts = RunOptions {
            histories: 12,
            seed: 8,
            threads: 2,
            floor_fraction: 1.0,
            shard: None,
            target_rel_error: None,
        };
        let t = engine.run(&opts, &|_| {}).unwrap();
        assert!(t.cuts > 20, "the check needs activity: {} cuts", t.cuts);
        assert_eq!(t.anomalies, 0, "{:?}", t.anomaly_examples);
    }
}

/// Expected numbers of cuts and splices over the mission in the repairable 1-out-of-4 chain
/// (lambda = 0.01/d, mu = 0.05/d, one crew, 10 years; no events after the loss): the integrals
/// of the event rates over the state probabilities, E[cuts] = Int sum_k p_k(t) (4 - k) lambda dt
/// and E[splices] = Int sum_k p_k(t) mu 1{k > 0} dt, with p(t) from the Kolmogorov forward
/// equations dp/dt = p Q (the same REFERENCES.md §8 chain) integrated here by classical RK4
/// (step 0.05 d; the absorption probability it gives is checked against the §8 value). The
/// simulated means must lie within 3 of their own standard errors; the yearly tallies must
/// add up to the totals exactly.
#[test]
fn cut_and_splice_counts_match_the_chain_expectations() {
    let (lambda, mu, n_rib, t_end) = (0.01f64, 0.05f64, 4usize, 3652.5f64);
    let up = |k: usize| (n_rib - k) as f64 * lambda;
    let down = |k: usize| if k > 0 { mu } else { 0.0 };
    // States 0..=3 transient (cuts so far), 4 absorbing.
    let deriv = |p: &[f64; 5]| {
        let mut d = [0.0; 5];
        for k in 0..4 {
            d[k] -= p[k] * (up(k) + down(k));
            d[k + 1] += p[k] * up(k);
            if k > 0 {
                d[k - 1] += p[k] * down(k);
            }
        }
        d
    };
    let rates = |p: &[f64; 5]| {
        let c: f64 = (0..4).map(|k| p[k] * up(k)).sum();
        let s: f64 = (0..4).map(|k| p[k] * down(k)).sum();
        (c, s)
    };
    let h = 0.05;
    let steps = (t_end / h).round() as usize;
    let mut p = [1.0, 0.0, 0.0, 0.0, 0.0];
    let (mut cuts, mut splices) = (0.0, 0.0);
    let add = |a: &[f64; 5], b: &[f64; 5], s: f64| {
        let mut r = *a;
        for i in 0..5 {
            r[i] += s * b[i];
        }
        r
    };
    for _ in 0..steps {
        // RK4 on p, Simpson on the rate integrals (p at the start, middle and end).
        let k1 = deriv(&p);
        let p2 = add(&p, &k1, h / 2.0);
        let k2 = deriv(&p2);
        let p3 = add(&p, &k2, h / 2.0);
        let k3 = deriv(&p3);
        let p4 = add(&p, &k3, h);
        let k4 = deriv(&p4);
        let mut next = p;
        for i in 0..5 {
            next[i] += h / 6.0 * (k1[i] + 2.0 * k2[i] + 2.0 * k3[i] + k4[i]);
        }
        let (c0, s0) = rates(&p);
        let (cm, sm) = rates(&add(&p, &add(&k2, &k3, 1.0), h / 4.0));
        let (c1, s1) = rates(&next);
        cuts += h / 6.0 * (c0 + 4.0 * cm + c1);
        splices += h / 6.0 * (s0 + 4.0 * sm + s1);
        p = next;
    }
    assert!(
        (p[4] - (1.0 - 0.101688)).abs() < 2e-6,
        "absorption by 10 yr: {}",
        p[4]
    );

    let model = model_of(&one_bay_validation(lambda, mu, 1));
    let engine = Engine::new(&model, 1.0).unwrap();
    let mut scratch = engine.new_scratch();
    let n = 20_000u64;
    let (mut sc, mut sc2, mut ss, mut ss2) = (0.0, 0.0, 0.0, 0.0);
    for h in 0..n {
        let mut t = engine.empty_tally();
        engine.run_history(h, 31, &mut scratch, &mut t, None);
        let (c, s) = (t.cuts as f64, t.repair.splices as f64);
        assert_eq!(t.cuts_by_year.iter().sum::<u64>(), t.cuts, "history {h}");
        assert_eq!(
            t.repair.splices_by_year.iter().sum::<u64>(),
            t.repair.splices
        );
        sc += c;
        sc2 += c * c;
        ss += s;
        ss2 += s * s;
    }
    let nf = n as f64;
    for (what, sum, sum2, expected) in [("cuts", sc, sc2, cuts), ("splices", ss, ss2, splices)] {
        let mean = sum / nf;
        let se = ((sum2 / nf - mean * mean) / (nf - 1.0)).sqrt();
        eprintln!("{what}: simulated {mean:.3} +- {se:.3}, chain {expected:.3}");
        assert!(
            (mean - expected).abs() < 3.0 * se,
            "{what}: {mean} vs {expected} (se {se})"
        );
    }
}

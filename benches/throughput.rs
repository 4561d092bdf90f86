//! Throughput of the Monte Carlo engine on the demo scenario with repair off.
//!
//! - `samplers/on_demand` and `samplers/every_strike`: whole histories of the demo with repair
//!   off, one thread, under each damage sampler (issue goal: on-demand >= 100x every-strike in
//!   histories per second). The on-demand group runs 100x more histories per iteration so both
//!   take comparable time; compare the throughput lines (histories/s);
//! - `histories/full`: whole every-strike histories (strike stream + holes + load checks +
//!   tallies), one thread, the same histories and seeds as a real run;
//! - `histories/bare_stream`: the same strike streams alone (gaps and strikes drawn over one
//!   mission, no damage processing), the floor that the full cost is compared with;
//! - `shortcut/count_only` and `shortcut/general_loop`: the NumPy comparison's case a (demo,
//!   repair off, equal sharing, 1/4-of-width cut rule), one thread, through the count-only
//!   shortcut and through the general on-demand loop (`Engine::without_count_only`);
//! - `profile/build`: building the model (profile, per-bay tables) and the strike sampler.
//!
//! Short settings (10 samples, a few seconds each) so `cargo bench` stays under two minutes.
//! Memory flatness is measured on the binary (peak RSS at 1e4 vs 1e6 histories), not here.

use std::hint::black_box;
use std::time::Duration;

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use tether_risk::engine::{stream, Engine, Purpose, Sampler};
use tether_risk::model::Model;
use tether_risk::scenario::{parse_spec, Scenario, DEMO_SCENARIO_JSON};

/// Histories per benchmark iteration.
const HISTORIES: u64 = 200;
const SEED: u64 = 20261202;

fn demo_without_repair() -> Scenario {
    let mut spec = parse_spec(DEMO_SCENARIO_JSON).expect("demo parses");
    spec.repair = None;
    Scenario::from_spec(spec, None).expect("demo validates")
}

/// Whole histories 0..histories of `engine` on one thread, per iteration.
fn bench_histories(b: &mut criterion::Bencher<'_>, engine: &Engine<'_>, histories: u64) {
    let mut scratch = engine.new_scratch();
    b.iter(|| {
        let mut tally = engine.empty_tally();
        for h in 0..histories {
            engine.run_history(h, SEED, &mut scratch, &mut tally, None);
        }
        black_box(tally.cuts)
    })
}

fn samplers(c: &mut Criterion) {
    let model = Model::build(demo_without_repair()).expect("demo builds");
    let mut group = c.benchmark_group("samplers");
    for (name, sampler, histories) in [
        ("on_demand", Sampler::OnDemand, 100 * HISTORIES),
        ("every_strike", Sampler::EveryStrike, HISTORIES),
    ] {
        let engine = Engine::with_sampler(&model, 1.0, sampler).expect("engine");
        group.throughput(Throughput::Elements(histories));
        group.bench_function(name, |b| bench_histories(b, &engine, histories));
    }
    group.finish();
}

fn shortcut(c: &mut Criterion) {
    let mut v: serde_json::Value = serde_json::from_str(DEMO_SCENARIO_JSON).expect("demo parses");
    v["repair"] = serde_json::Value::Null;
    v["tether"]["load_sharing"] = serde_json::json!("equal");
    v["damage"] = serde_json::json!({"law": "fraction_of_width", "fraction": 0.25});
    let spec = parse_spec(&v.to_string()).expect("case a parses");
    let model = Model::build(Scenario::from_spec(spec, None).expect("case a validates"))
        .expect("case a builds");
    let mut group = c.benchmark_group("shortcut");
    let histories = 20 * HISTORIES;
    group.throughput(Throughput::Elements(histories));
    for (name, engine) in [
        ("count_only", Engine::new(&model, 1.0).expect("engine")),
        (
            "general_loop",
            Engine::new(&model, 1.0)
                .expect("engine")
                .without_count_only(),
        ),
    ] {
        group.bench_function(name, |b| bench_histories(b, &engine, histories));
    }
    group.finish();
}

fn histories(c: &mut Criterion) {
    let model = Model::build(demo_without_repair()).expect("demo builds");
    let engine = Engine::with_sampler(&model, 1.0, Sampler::EveryStrike).expect("engine");
    let mut group = c.benchmark_group("histories");
    group.throughput(Throughput::Elements(HISTORIES));

    group.bench_function("full", |b| {
        let mut scratch = engine.new_scratch();
        b.iter(|| {
            let mut tally = engine.empty_tally();
            for h in 0..HISTORIES {
                engine.run_history(h, SEED, &mut scratch, &mut tally, None);
            }
            black_box(tally.strikes)
        })
    });

    // The demo as shipped, with repair logistics: same strikes, plus the event queue.
    let with_repair = Model::build(tether_risk::scenario::demo()).expect("demo builds");
    let engine_r = Engine::with_sampler(&with_repair, 1.0, Sampler::EveryStrike).expect("engine");
    group.bench_function("full_with_repair", |b| {
        let mut scratch = engine_r.new_scratch();
        b.iter(|| {
            let mut tally = engine_r.empty_tally();
            for h in 0..HISTORIES {
                engine_r.run_history(h, SEED, &mut scratch, &mut tally, None);
            }
            black_box(tally.strikes)
        })
    });

    group.bench_function("bare_stream", |b| {
        let sampler = engine.sampler();
        let mission = engine.mission_s();
        b.iter(|| {
            let mut strikes = 0u64;
            let mut acc = 0.0;
            for h in 0..HISTORIES {
                let mut rng = stream(SEED, Purpose::Strikes, h);
                let mut t = 0.0;
                loop {
                    t += sampler.next_gap_s(&mut rng);
                    if t > mission {
                        break;
                    }
                    let s = black_box(sampler.sample(&mut rng));
                    acc += s.diameter_m;
                    strikes += 1;
                }
            }
            black_box((strikes, acc))
        })
    });
    group.finish();
}

fn profile(c: &mut Criterion) {
    let scenario = demo_without_repair();
    let mut group = c.benchmark_group("profile");
    group.bench_function("build", |b| {
        b.iter(|| {
            let model = Model::build(black_box(scenario.clone())).expect("demo builds");
            let engine = Engine::new(&model, 1.0).expect("engine");
            black_box(engine.sampler().total_rate_per_s())
        })
    });
    group.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default()
        .sample_size(10)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(4));
    targets = samplers, shortcut, histories, profile
}
criterion_main!(benches);

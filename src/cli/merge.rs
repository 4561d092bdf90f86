//! `tether-risk merge DIR... --out DIR`: join shard results into the result of the whole run.
//!
//! Tallies are integer counts (and per-batch weighted sums folded in batch order), so the merged
//! summary is bit-identical to a single run with the same scenario, seed and histories.

use std::path::PathBuf;

use tether_risk::engine::{RunStatus, RunSummary, Tally};
use tether_risk::report::run::{crate_versions, run_text, write_run, Manifest};
use tether_risk::report::write_atomic;

use super::output::{print, InputError};
use super::simulate::{engine_for, model_from_dir, prepare_out_dir, RunSettingsFile};
use super::Format;

/// Arguments of `merge`.
#[derive(clap::Args, Debug)]
#[command(
    after_help = "Example (three shards, for instance as a job array on a batch scheduler):\n  tether-risk simulate s.json --shard 0/3 --out out/s0\n  tether-risk simulate s.json --shard 1/3 --out out/s1\n  tether-risk simulate s.json --shard 2/3 --out out/s2\n  tether-risk merge out/s0 out/s1 out/s2 --out out/all"
)]
pub struct Args {
    /// Shard result folders (each from `simulate --shard I/N`).
    #[arg(required = true)]
    dirs: Vec<PathBuf>,
    /// Output folder for the merged result.
    #[arg(long)]
    out: PathBuf,
    /// Replace results already in the output folder.
    #[arg(long)]
    force: bool,
    /// Output format on stdout.
    #[arg(long, value_enum, default_value_t)]
    format: Format,
}

fn read_json<T: serde::de::DeserializeOwned>(path: &std::path::Path) -> anyhow::Result<T> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| InputError(format!("cannot read {}: {e}", path.display())))?;
    Ok(serde_json::from_str(&text).map_err(|e| {
        InputError(format!(
            "{} is not a result file of this version: {e}",
            path.display()
        ))
    })?)
}

pub fn run(a: Args) -> anyhow::Result<()> {
    let mut parts: Vec<(RunSummary, RunSettingsFile)> = Vec::new();
    let stop = super::interrupt::flag();
    let bar = indicatif::ProgressBar::new(a.dirs.len() as u64);
    bar.set_style(
        indicatif::ProgressStyle::with_template("{spinner} reading shard {pos}/{len} {wide_bar}")
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
    );
    bar.enable_steady_tick(std::time::Duration::from_millis(250));
    for d in &a.dirs {
        if stop.load(std::sync::atomic::Ordering::SeqCst) {
            bar.finish_and_clear();
            return Err(
                super::interrupt::Stopped("merge stopped; nothing was written".into()).into(),
            );
        }
        bar.inc(1);
        parts.push((
            read_json(&d.join("summary.json"))?,
            read_json(&d.join("settings.json"))?,
        ));
    }
    bar.finish_and_clear();
    let (first, first_settings) = &parts[0];
    let count = match first_settings.shard {
        Some((_, n)) => n,
        None => {
            return Err(InputError(format!(
                "{} is not a shard result (it was run without --shard)",
                a.dirs[0].display()
            ))
            .into())
        }
    };
    let mut seen = vec![false; count as usize];
    for ((s, st), d) in parts.iter().zip(&a.dirs) {
        let same = s.scenario_hash == first.scenario_hash
            && s.version == first.version
            && st.seed == first_settings.seed
            && st.histories == first_settings.histories
            && st.floor_fraction == first_settings.floor_fraction
            && st.rare_event == first_settings.rare_event
            && st.stockout_target == first_settings.stockout_target;
        if !same {
            return Err(InputError(format!(
                "{} belongs to a different run (scenario, version, seed, histories or settings differ from {})",
                d.display(),
                a.dirs[0].display()
            ))
            .into());
        }
        let Some((i, n)) = st.shard else {
            return Err(InputError(format!("{} is not a shard result", d.display())).into());
        };
        if n != count {
            return Err(InputError(format!(
                "{} is shard {i}/{n}, the others are of {count}",
                d.display()
            ))
            .into());
        }
        if s.status != RunStatus::Complete {
            return Err(InputError(format!(
                "{} did not complete ({:?}); resume it before merging",
                d.display(),
                s.status
            ))
            .into());
        }
        if std::mem::replace(&mut seen[i as usize], true) {
            return Err(InputError(format!("shard {i}/{n} is given twice")).into());
        }
    }
    if let Some(missing) = seen.iter().position(|s| !s) {
        return Err(InputError(format!("shard {missing}/{count} is missing")).into());
    }
    let model = model_from_dir(&a.dirs[0])?;
    if model.scenario.hash_hex() != first.scenario_hash {
        return Err(InputError(format!(
            "{}/scenario.json does not match its summary",
            a.dirs[0].display()
        ))
        .into());
    }
    let mut settings = first_settings.clone();
    settings.shard = None;
    let engine = engine_for(&model, &settings)?;
    let mut tally: Tally = engine.empty_tally();
    for (s, _) in &parts {
        tally.merge(&s.tally);
    }
    let summary = RunSummary::from_outcome(
        &engine,
        tally,
        settings.histories,
        settings.seed,
        None,
        settings.stockout_target,
        RunStatus::Complete,
        settings.target_rel_error,
    );
    prepare_out_dir(&a.out, a.force)?;
    let manifest = Manifest {
        tool: "tether-risk".into(),
        version: tether_risk::VERSION.into(),
        scenario: summary.scenario.clone(),
        scenario_hash: summary.scenario_hash.clone(),
        seed: settings.seed,
        histories: summary.histories,
        batch_size: summary.batch_size,
        threads: 0,
        shard: None,
        crate_versions: crate_versions(),
        random_streams: "Pcg64Mcg per (seed, purpose, history), seeded through SplitMix64".into(),
        wall_time_s: 0.0,
        command: std::env::args().collect(),
    };
    let io =
        |e: std::io::Error| anyhow::anyhow!("cannot write results to {}: {e}", a.out.display());
    write_atomic(
        &a.out.join("scenario.json"),
        (serde_json::to_string_pretty(&model.scenario.spec)? + "\n").as_bytes(),
    )
    .map_err(io)?;
    write_atomic(
        &a.out.join("settings.json"),
        (serde_json::to_string_pretty(&settings)? + "\n").as_bytes(),
    )
    .map_err(io)?;
    write_run(&a.out, &summary, &manifest).map_err(io)?;
    match a.format {
        Format::Json => print(&(serde_json::to_string_pretty(&summary)? + "\n")),
        _ => print(&format!(
            "{}\nMerged {} shards into {}\n",
            run_text(&summary),
            count,
            a.out.display()
        )),
    }
}

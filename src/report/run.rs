//! Run results: the text rendering of a [`RunSummary`], the manifest, and writing a run's
//! output folder atomically.

use std::path::Path;

use serde::{Deserialize, Serialize};

use super::table::{sig, Table};
use super::write_atomic;
use crate::engine::RunSummary;

/// Provenance of a run, written beside its summary (`manifest.json`, read back by the report).
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct Manifest {
    /// Tool name.
    pub tool: String,
    /// Tool version.
    pub version: String,
    /// Scenario name.
    pub scenario: String,
    /// Scenario hash (hex).
    pub scenario_hash: String,
    /// Master seed.
    pub seed: u64,
    /// Histories run.
    pub histories: u64,
    /// Histories per batch.
    pub batch_size: u64,
    /// Worker threads used (results do not depend on it).
    pub threads: usize,
    /// Shard, if any.
    pub shard: Option<[u64; 2]>,
    /// Versions of the crates that determine the random numbers and statistics.
    pub crate_versions: Vec<(String, String)>,
    /// Random-stream scheme.
    pub random_streams: String,
    /// Wall-clock time of the run, s (not part of the results).
    pub wall_time_s: f64,
    /// The command line.
    pub command: Vec<String>,
    /// The result files of the run and their sizes. The manifest is written last, so a folder
    /// whose manifest lists files that are all present with these sizes is complete.
    pub files: Vec<super::folder::FileEntry>,
}

/// Versions of the crates that matter for reproducibility, read from the Cargo.lock that was
/// compiled in.
pub fn crate_versions() -> Vec<(String, String)> {
    const LOCK: &str = include_str!("../../Cargo.lock");
    const WANTED: &[&str] = &[
        "rand",
        "rand_core",
        "rand_pcg",
        "rand_distr",
        "statrs",
        "rayon",
        "serde_json",
    ];
    let mut out = Vec::new();
    let mut name: Option<&str> = None;
    for line in LOCK.lines() {
        if let Some(v) = line.strip_prefix("name = ") {
            name = Some(v.trim_matches('"'));
        } else if let Some(v) = line.strip_prefix("version = ") {
            if let Some(n) = name.take() {
                if WANTED.contains(&n) {
                    out.push((n.to_string(), v.trim_matches('"').to_string()));
                }
            }
        }
    }
    out
}

/// Human-readable summary of a run.
pub fn run_text(s: &RunSummary) -> String {
    let mut o = String::new();
    let pct = |x: f64| format!("{:.3} %", 100.0 * x);
    o.push_str(&format!(
        "Monte Carlo: scenario \"{}\" (hash {}), seed {}, {} histories, {} mission years, tether-risk {}\n",
        s.scenario, s.scenario_hash, s.seed, s.histories, s.mission_years, s.version
    ));
    if let Some([i, n]) = s.shard {
        o.push_str(&format!(
            "Shard {i} of {n}: a partial result; merge all shards for the full run.\n"
        ));
    }
    o.push('\n');
    let lp = &s.loss_probability;
    o.push_str(&format!(
        "Probability of system loss by mission end: {}\n",
        super::failure::loss_text(lp, 4)
    ));
    match &s.rare_event {
        Some(r) if r.condition_cascades => o.push_str(&format!(
            "  conditional Monte Carlo at cuts: {} cuts scored the probability that their cascade severs the bay; {} seen under the biased measure{} in {} histories.\n",
            r.scored_cascades,
            count_noun(r.losses_observed, "loss", "losses"),
            factor_note(r.rare_event_factor),
            s.histories
        )),
        Some(r) => o.push_str(&format!(
            "  {} seen under the biased measure{} in {} histories.\n",
            count_noun(r.losses_observed, "loss", "losses"),
            factor_note(r.rare_event_factor),
            s.histories
        )),
        None => o.push_str(&format!(
            "  {} in {} histories.\n",
            count_noun(s.tally.losses, "loss", "losses"),
            s.histories
        )),
    }
    if !lp.resolved {
        o.push_str("  Not resolved: the estimate rests on too few effectively independent losses for any interval to be trusted. Run more histories, or use plain Monte Carlo if the probability is within reach of it.\n");
    } else if s.tally.losses == 0 {
        o.push_str("  No loss was seen: the upper bound is what these histories can rule out; more histories lower it. Do not substitute the memoryless Markov number of `tether-risk estimate`: it forgets sub-critical holes and can be orders of magnitude too low where losses come from cascades through old damage (compare it with the damage-memory estimate printed beside it).\n");
    }
    if let Some(why) = &s.tallies_withheld {
        o.push_str(&format!("{why}\n\n"));
        o.push_str("Survival by mission year\n");
        o.push_str(&terminal_survival_table(s).to_text());
        o.push('\n');
        o.push_str(&s.caution);
        o.push('\n');
        return o;
    }
    o.push_str(&format!(
        "Cut segments per year (whole tether): {}  ({} .. {}); mean cuts per history {}\n",
        sig(s.cuts_per_year.estimate, 4),
        sig(s.cuts_per_year.ci_low, 4),
        sig(s.cuts_per_year.ci_high, 4),
        sig(s.mean_cuts, 4)
    ));
    if let Some(x) = s.cross_link_cuts_per_history {
        let share = s
            .cross_link_cut_fraction_of_time
            .map_or(String::new(), |f| {
                format!("; share of station-time cut {}", sig(f, 3))
            });
        match s.repair.as_ref().and_then(|r| r.cross_links.as_ref()) {
            Some(c) => o.push_str(&format!(
                "Cross-links cut per history: {}{share}; re-joined per history {}; mean wait from detection to dispatch {} h per detected cut; {} of {} detected cuts waited for a spare cross-link (a climber free, no spare at its station)\n",
                sig(x, 4),
                sig(c.repairs_per_history, 4),
                sig(c.mean_wait_hours, 3),
                c.stockout_events,
                c.detected
            )),
            None => o.push_str(&format!(
                "Cross-links cut per history: {}{share} (cross-link hits on; no cross-link repair)\n",
                sig(x, 4)
            )),
        }
    }
    o.push_str(&format!(
        "Losses by cause: {} direct cut, {} cascade, {} while waiting for spare stock, {} climber load; {} of cuts came from load redistribution\n",
        s.losses_by_cause.direct_cut,
        s.losses_by_cause.cascade,
        s.losses_by_cause.stockout_delay,
        s.losses_by_cause.climber_load,
        pct(s.cascade_cut_fraction)
    ));
    o.push_str(&format!(
        "Time with at least one cut bay: {} of the mission; strikes per history {}; sub-critical holes per history {} ({}, {} sampler{})\n\n",
        pct(s.fraction_of_time_with_cut_bay),
        sig(s.strikes_per_history, 4),
        sig(s.subcritical_holes_per_history, 4),
        if s.strike_tallies.is_empty() { "counted" } else { s.strike_tallies.as_str() },
        if s.sampler.is_empty() { "every-strike" } else { s.sampler.as_str() },
        if s.history_path == crate::engine::COUNT_ONLY_PATH { ", count-only bays" } else { "" }
    ));
    if let (Some(r), Some(sp)) = (&s.repair, &s.spares) {
        o.push_str("Repair logistics\n");
        let t = &r.time_to_splice_hours;
        o.push_str(&format!(
            "  time from cut to splice: mean {} h, P50 {} h, P90 {} h, P99 {} h\n",
            sig(t.mean, 3),
            sig(t.p50, 3),
            sig(t.p90, 3),
            sig(t.p99, 3)
        ));
        o.push_str(&format!(
            "  splices per year {}; climber utilisation {}; {} (Little's law: {} waiting = {} per hour x {} h)\n",
            sig(r.splices_per_year, 4),
            pct(r.climber_utilisation),
            wait_sentence(r),
            sig(r.queue.mean_waiting_segments, 3),
            sig(r.queue.arrival_rate_per_hour, 3),
            sig(r.queue.mean_wait_hours, 3)
        ));
        o.push_str(&format!("  {}\n", trip_sentence(r)));
        if let Some(p) = &r.preventive {
            o.push_str(&format!(
                "  preventive replacement: {} segments replaced ({} at repair visits, {} at periodic inspections; {} per history), {} spares used in all (splices + preventive), {} qualifying segments left for want of a spare; {} bays inspected, {} periodic inspections ({} skipped: no idle climber)\n",
                p.segments_replaced,
                p.replaced_at_visits,
                p.replaced_at_inspections,
                sig(p.replaced_per_history, 3),
                p.spares_used,
                p.short_of_spares,
                p.bays_inspected,
                p.inspections,
                p.inspections_skipped
            ));
        }
        o.push_str(&terminal_stock_table(r, sp, s.loss_probability.confidence).to_text());
        o.push_str(&format!(
            "  recommended initial stock: smallest stock whose chance of being exceeded by one interval's demand is below {}\n\n",
            pct(r.stockout_target)
        ));
    }
    if let Some(e) = &s.policy_effect {
        o.push_str(&policy_effect_text(e));
        o.push('\n');
    }
    o.push_str("Survival by mission year\n");
    o.push_str(&terminal_survival_table(s).to_text());
    o.push_str("\nCuts and losses by altitude band\n");
    o.push_str(&terminal_band_table(s).to_text());
    o.push('\n');
    o.push_str(&s.caution);
    o.push('\n');
    o
}

/// The paired policy comparison in words (terminal and `simulate.txt`).
pub fn policy_effect_text(e: &crate::engine::PolicyEffect) -> String {
    let conf = format!("{:.0} %", 100.0 * e.confidence);
    let arm = |k: u64| {
        let (lo, hi) =
            crate::stats::clopper_pearson(k, e.histories, e.confidence).unwrap_or((0.0, 1.0));
        format!(
            "{} ({conf} interval {} .. {}, exact binomial; {})",
            sig(k as f64 / e.histories.max(1) as f64, 3),
            sig(lo, 3),
            sig(hi, 3),
            count_noun(k, "loss", "losses")
        )
    };
    let verdict = if !e.resolved {
        "not resolved: the interval includes zero, so these histories cannot tell the policy's effect from none; run more histories"
    } else if e.difference < 0.0 {
        "resolved: the policy lowers the loss probability"
    } else {
        "resolved: the policy raises the loss probability (its replacements take climbers and spares that later cuts lack)"
    };
    format!(
        "Preventive-replacement policy, the same {} histories with and without it (seed {}, common random numbers{}):\n  policy: {}\n  with the policy:    {}; {} segments replaced and {} spares used per history\n  without the policy: {}; {} spares used per history\n  difference (with - without): {}, {conf} interval {} .. {} ({}); {verdict}\n  paired outcomes: {} lost in both, {} only with the policy, {} only without it\n",
        e.histories,
        e.seed,
        if e.run_has_policy {
            "; the run above is the one with the policy"
        } else {
            "; the run above is the one without it"
        },
        e.policy,
        arm(e.losses_with_policy),
        sig(e.replaced_per_history, 3),
        sig(e.spares_per_history_with_policy, 3),
        arm(e.losses_without_policy),
        sig(e.spares_per_history_without_policy, 3),
        sig(e.difference, 3),
        sig(e.difference_low, 3),
        sig(e.difference_high, 3),
        e.interval_method,
        e.lost_in_both,
        e.lost_only_with_policy,
        e.lost_only_without_policy
    )
}

/// "1 loss", "2 losses".
pub fn count_noun(n: u64, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

/// A machine table with words and units for a terminal instead of its snake_case headers.
fn with_headers(mut t: Table, headers: Vec<String>) -> Table {
    t.headers = headers;
    t
}

/// Survival by year for a terminal: words with units, "year 1", "yes"/"no".
pub fn terminal_survival_table(s: &RunSummary) -> Table {
    let pct = format!("{:.0} %", 100.0 * s.loss_probability.confidence);
    let mut t = with_headers(
        survival_table(s),
        vec![
            "mission year".into(),
            "survival".into(),
            format!("lower {pct} bound"),
            format!("upper {pct} bound"),
            "loss probability by then".into(),
            "standard error".into(),
            "estimator".into(),
            "resolved".into(),
            "interval method".into(),
        ],
    );
    for r in &mut t.rows {
        r[0] = format!("year {}", r[0]);
        r[7] = if r[7] == "true" { "yes" } else { "no" }.into();
    }
    t.align[0] = super::table::Align::Left;
    t.align[8] = super::table::Align::Left;
    t
}

/// Cuts and losses by altitude band for a terminal.
pub fn terminal_band_table(s: &RunSummary) -> Table {
    let pct = format!("{:.0} %", 100.0 * s.loss_probability.confidence);
    with_headers(
        altitude_bands_table(s),
        vec![
            "altitude band (km)".into(),
            "cuts per year".into(),
            "losses".into(),
            "loss probability in band".into(),
            format!("upper {pct} bound"),
        ],
    )
}

/// Spare demand and stock per station for a terminal.
pub fn terminal_stock_table(
    r: &crate::engine::RepairSummary,
    sp: &crate::engine::SpareSummary,
    confidence: f64,
) -> Table {
    let pct = format!("{:.0} %", 100.0 * confidence);
    with_headers(
        stock_table(r, sp),
        vec![
            "station".into(),
            "mission demand P50 (segments)".into(),
            "P90".into(),
            "P95".into(),
            "P99".into(),
            "one interval P95 (segments)".into(),
            "interval (days)".into(),
            "stock-out probability".into(),
            format!("upper {pct} bound"),
            "recommended initial stock (segments)".into(),
        ],
    )
}

/// Survival by year as a table.
pub fn survival_table(s: &RunSummary) -> Table {
    let mut t = Table::new([
        "year",
        "survival",
        "ci_low",
        "ci_high",
        "loss_probability",
        "loss_standard_error",
        "method",
        "resolved",
        "note",
    ]);
    for p in &s.survival_by_year {
        let opt = |v: Option<f64>| v.map_or(String::new(), |x| sig(x, 6));
        t.push([
            super::failure::year_label(p.year),
            sig(p.estimate, 6),
            opt(p.ci_low),
            opt(p.ci_high),
            sig(1.0 - p.estimate, 4),
            sig(p.loss.standard_error, 3),
            if p.loss.is_weighted() {
                "weighted"
            } else {
                "plain"
            }
            .to_string(),
            p.loss.resolved.to_string(),
            match &p.loss.unresolved_reason {
                Some(r) if !p.loss.resolved => format!("not resolved: {r}"),
                _ => p.loss.interval_method.clone(),
            },
        ]);
    }
    t
}

/// The wait from detection to dispatch split into waiting for a climber and waiting for
/// stock, naming the larger as the fix (one sentence, no trailing period).
pub fn wait_sentence(r: &crate::engine::RepairSummary) -> String {
    let q = &r.queue;
    if q.mean_wait_hours <= 0.0 {
        return "no detected segment waited for dispatch".into();
    }
    let (c, st) = (r.mean_wait_for_climber_hours, r.mean_wait_for_stock_hours);
    let fix = if st > c {
        "the larger is the wait for stock: more initial stock or faster resupply shortens it, more climbers would not"
    } else {
        "the larger is the wait for a climber: more climbers shorten it"
    };
    format!(
        "mean wait from detection to dispatch {} h per segment: {} h waiting for a climber (all out on jobs), {} h waiting for stock (a free climber without a spare segment at its station); {fix}",
        sig(q.mean_wait_hours, 3),
        sig(c, 3),
        sig(st, 3)
    )
}

/// The repair trip split into travel, waiting for light (solar climbers in the Moon's shadow)
/// and splicing, per segment sent (one sentence, no trailing period). With no time lost in
/// shade (beamed power, or solar climbers that never met the shadow) the waiting part is
/// stated as absent rather than as "0 h waiting for light".
pub fn trip_sentence(r: &crate::engine::RepairSummary) -> String {
    if let Some(l) = &r.looped {
        let h = &l.haul_time_hours;
        let utilisation = format!("{:.3} %", 100.0 * l.splice_position_utilisation);
        return format!(
            "looped-ribbon repairs: {} completed of {} hauls started; haul to the pulley station and back per repair: mean {} h, P50 {} h, P90 {} h; wait at the station for a splice position or a spare {} h; splice-position utilisation {}",
            l.repairs,
            l.hauls_started,
            sig(h.mean, 3),
            sig(h.p50, 3),
            sig(h.p90, 3),
            sig(l.mean_station_wait_hours, 3),
            utilisation
        );
    }
    let light = if r.mean_wait_for_light_hours > 0.0 {
        format!(
            ", waiting for light {} h (solar climbers in the Moon's shadow)",
            sig(r.mean_wait_for_light_hours, 3)
        )
    } else {
        String::new()
    };
    format!(
        "repair trip per segment sent: travel {} h (turnaround and climb at full speed){light}, splicing {} h; the rest of the time from cut to splice is detection and the wait for dispatch",
        sig(r.mean_trip_travel_hours, 3),
        sig(r.mean_trip_splice_hours, 3)
    )
}

/// Spare demand, stock-out probability and recommended stock per station.
pub fn stock_table(r: &crate::engine::RepairSummary, sp: &crate::engine::SpareSummary) -> Table {
    let mut t = Table::new([
        "station",
        "mission_demand_p50",
        "p90",
        "p95",
        "p99",
        "per_interval_p95",
        "interval_days",
        "stockout_probability",
        "ci_high",
        "recommended_stock",
    ]);
    for ((d, so), rec) in sp
        .demand_quantiles
        .iter()
        .zip(&r.stockout_probability)
        .zip(&r.recommended_initial_stock)
    {
        t.push([
            d.station.clone(),
            d.mission.p50.to_string(),
            d.mission.p90.to_string(),
            d.mission.p95.to_string(),
            d.mission.p99.to_string(),
            d.per_interval.p95.to_string(),
            sig(d.interval_days, 4),
            sig(so.probability.estimate, 3),
            sig(so.probability.ci_high, 3),
            rec.segments.to_string(),
        ]);
    }
    t
}

/// Cuts and losses by altitude band with machine-readable column keys: the run folder's
/// `altitude_bands.csv`/`.md` and, with headers for readers, the terminal table. (The report's
/// table of the same rows is [`super::failure::band_table`], which adds the interval basis.)
pub fn altitude_bands_table(s: &RunSummary) -> Table {
    let mut t = Table::new([
        "band_km",
        "cuts_per_year",
        "losses",
        "loss_probability",
        "ci_high",
    ]);
    for b in &s.cuts_by_altitude_band {
        t.push([
            format!("{:.0}-{:.0}", b.bottom_altitude_km, b.top_altitude_km),
            sig(b.cuts_per_year, 4),
            b.losses.to_string(),
            b.loss_probability
                .map_or("- (biased measure)".into(), |l| sig(l.estimate, 4)),
            b.loss_probability.map_or("-".into(), |l| sig(l.ci_high, 4)),
        ]);
    }
    t
}

/// Write `summary.json` and the tables into `dir`, each atomically; returns the names of the
/// files written (relative to `dir`) for the manifest. The manifest itself is written last by
/// [`write_manifest`].
pub fn write_run(dir: &Path, summary: &RunSummary) -> std::io::Result<Vec<String>> {
    std::fs::create_dir_all(dir)?;
    let json = |v: &dyn erased::Json| v.to_json();
    let mut names = Vec::new();
    let mut put = |name: &str, bytes: &[u8]| -> std::io::Result<()> {
        write_atomic(&dir.join(name), bytes)?;
        names.push(name.to_string());
        Ok(())
    };
    put("summary.json", json(summary).as_bytes())?;
    put(
        "survival_by_year.csv",
        survival_table(summary).to_csv().as_bytes(),
    )?;
    put(
        "survival_by_year.md",
        survival_table(summary).to_markdown().as_bytes(),
    )?;
    if summary.tallies_withheld.is_none() {
        put(
            "altitude_bands.csv",
            altitude_bands_table(summary).to_csv().as_bytes(),
        )?;
        put(
            "altitude_bands.md",
            altitude_bands_table(summary).to_markdown().as_bytes(),
        )?;
    }
    if !summary.by_month.is_empty() {
        let t = super::statement::by_month_table(summary);
        put("by_month.csv", t.to_csv().as_bytes())?;
        put("by_month.md", t.to_markdown().as_bytes())?;
    }
    if let (Some(r), Some(sp)) = (&summary.repair, &summary.spares) {
        put("spares.csv", stock_table(r, sp).to_csv().as_bytes())?;
        put("spares.md", stock_table(r, sp).to_markdown().as_bytes())?;
    }
    Ok(names)
}

/// Write `manifest.json` last, listing `files` (relative to `dir`) with their sizes.
pub fn write_manifest(dir: &Path, manifest: &Manifest, files: &[String]) -> std::io::Result<()> {
    let mut m = manifest.clone();
    m.files = super::folder::list_files(dir, files);
    write_atomic(
        &dir.join("manifest.json"),
        erased::Json::to_json(&m).as_bytes(),
    )
}

/// Remove `manifest.json` before a folder's files are rewritten, so that a writer killed half
/// way leaves a folder that says it is incomplete.
pub fn retract_manifest(dir: &Path) -> std::io::Result<()> {
    match std::fs::remove_file(dir.join("manifest.json")) {
        Err(e) if e.kind() != std::io::ErrorKind::NotFound => Err(e),
        _ => Ok(()),
    }
}

mod erased {
    /// Pretty JSON of any serialisable value.
    pub trait Json {
        fn to_json(&self) -> String;
    }
    impl<T: serde::Serialize> Json for T {
        fn to_json(&self) -> String {
            serde_json::to_string_pretty(self).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
                + "\n"
        }
    }
}

/// ` (rare-event factor X)` when strike rates on damaged bays were multiplied, else nothing (a
/// conditioned or latent-bias run alone leaves the factor at 1).
pub(crate) fn factor_note(factor: f64) -> String {
    if factor > 1.0 {
        format!(" (rare-event factor {})", sig(factor, 3))
    } else {
        String::new()
    }
}

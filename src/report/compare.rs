//! Designs side by side: the key figures of two or more finished run folders in one table,
//! the difference of each design's loss probability from the first (the baseline) with its
//! interval, whether that difference is resolved and distinguishable from zero, and the
//! survival curves overlaid.
//!
//! Only finished folders are compared: a folder without a manifest (a run that was killed
//! before it finished writing) is refused, because its files may not belong together.
//!
//! The difference interval is chosen by how each side was estimated (see
//! [`crate::stats::newcombe_hybrid`], [`crate::stats::normal_difference`],
//! [`crate::stats::mover`]); with either side unresolved there is no interval and the verdict
//! says "not resolved".
//!
//! Outputs (written by [`write_comparison`], each atomically, `compare.html` last):
//! `compare.json`, `compare.csv` (one row per design), `compare.md`, `survival.png`,
//! `survival.svg` and `compare.html`.

use std::path::{Path, PathBuf};

use serde::Serialize;

use super::assemble::{Completeness, ReportError, RunFolder};
use super::failure::{interval_cell, loss_cell, year_label, year_rows};
use super::figures::LOG_AXIS_BELOW;
use super::html::{render_report, KeyNumber, ReportDoc, ReportFigure, ReportTable, Section};
use super::plot::{survival_chart, ChartSpec, PlotError, ProbabilityAxis, Series};
use super::table::{sig, Align, Table};
use super::{markdown_escape, write_atomic};
use crate::engine::{Interval, LossProbability, RunSummary};
use crate::stats::{mover, newcombe_hybrid, normal_difference, wilson};

/// Most folders one comparison takes (the table must stay readable).
pub const MAX_COMPARED: usize = 12;

/// Why a comparison could not be made.
#[derive(Debug, thiserror::Error)]
pub enum CompareError {
    /// Fewer than two folders, or more than [`MAX_COMPARED`] (an input error).
    #[error("compare needs between 2 and {MAX_COMPARED} run folders, got {0}")]
    Count(usize),
    /// A folder could not be read as a run folder (an input error unless it is I/O).
    #[error("{dir}: {source}")]
    Folder {
        /// The folder.
        dir: PathBuf,
        /// Why.
        #[source]
        source: ReportError,
    },
    /// A folder has no manifest (an input error).
    #[error("{dir} is incomplete, so it is not compared: {reason}; finish the run (`tether-risk simulate --resume {dir}`) or rerun it")]
    Incomplete {
        /// The folder.
        dir: PathBuf,
        /// Why it counts as incomplete.
        reason: String,
    },
    /// The output folder is one of the compared folders (an input error).
    #[error("the output folder {0} is one of the folders compared; choose another --out")]
    OutIsInput(PathBuf),
    /// The chart could not be drawn.
    #[error("the survival chart could not be drawn: {0}")]
    Figure(#[from] PlotError),
    /// An output file could not be written.
    #[error("cannot write {path}: {source}")]
    Write {
        /// The file.
        path: PathBuf,
        /// The I/O error.
        #[source]
        source: std::io::Error,
    },
}

impl CompareError {
    /// True for errors caused by the input (exit code 2).
    pub fn is_input_error(&self) -> bool {
        match self {
            CompareError::Count(_)
            | CompareError::Incomplete { .. }
            | CompareError::OutIsInput(_) => true,
            CompareError::Folder { source, .. } => source.is_input_error(),
            CompareError::Figure(_) | CompareError::Write { .. } => false,
        }
    }
}

/// The key figures of one design.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ComparedDesign {
    /// Short name used in tables and the chart legend (the folder's name, made unique).
    pub label: String,
    /// The folder as given.
    pub folder: String,
    /// Scenario name.
    pub scenario: String,
    /// Scenario hash.
    pub scenario_hash: String,
    /// Master seed.
    pub seed: u64,
    /// Histories behind every estimate.
    pub histories: u64,
    /// Mission length, years.
    pub mission_years: f64,
    /// Ribbons (from scenario.json or design.json, when present).
    pub ribbon_count: Option<u64>,
    /// Cross-link spacing, km (when present).
    pub cross_link_spacing_km: Option<f64>,
    /// Ribbon plus cross-link mass, kg (from design.json, when present).
    pub tether_mass_kg: Option<f64>,
    /// Counterweight mass, kg (from design.json, when present).
    pub counterweight_kg: Option<f64>,
    /// Histories that ended in loss (under the biased measure for a weighted run).
    pub losses_observed: u64,
    /// Loss probability by mission end.
    pub loss_probability: LossProbability,
    /// Loss probability by the common horizon (the shortest mission compared).
    pub loss_probability_at_horizon: LossProbability,
    /// Probability of survival to mission end.
    pub survival_at_mission_end: f64,
    /// Cut segments per year, whole tether.
    pub cuts_per_year: Interval,
    /// 90th percentile of the time from cut to splice, hours (with repair).
    pub time_to_splice_p90_hours: Option<f64>,
    /// Climber utilisation (with repair).
    pub climber_utilisation: Option<f64>,
    /// Recommended initial stock summed over the stations, segments (with repair).
    pub recommended_initial_stock_segments: Option<u64>,
}

/// The difference of one design's loss probability from the baseline's.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LossDifference {
    /// The design.
    pub design: String,
    /// The baseline (the first folder).
    pub baseline: String,
    /// Mission time the two probabilities refer to, years.
    pub horizon_years: f64,
    /// Design minus baseline.
    pub difference: f64,
    /// Lower bound (absent when not resolved).
    pub ci_low: Option<f64>,
    /// Upper bound (absent when not resolved).
    pub ci_high: Option<f64>,
    /// Confidence level of the interval.
    pub confidence: f64,
    /// How the interval was formed, or why there is none.
    pub method: String,
    /// True when both estimates are resolved and the interval may be used.
    pub resolved: bool,
    /// True when the interval excludes zero (absent when not resolved).
    pub distinguishable: Option<bool>,
    /// The finding in words.
    pub verdict: String,
}

/// A whole comparison (`compare.json`).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Comparison {
    /// Tool version that made the comparison.
    pub version: String,
    /// Confidence level of the difference intervals.
    pub confidence: f64,
    /// Mission time the differences refer to (the shortest mission compared), years.
    pub horizon_years: f64,
    /// The designs, baseline first.
    pub designs: Vec<ComparedDesign>,
    /// Each later design against the baseline.
    pub differences: Vec<LossDifference>,
    /// What the reader must know to read the numbers.
    pub notes: Vec<String>,
    /// The engineering caution.
    pub caution: String,
}

/// Interval method names, as written in the outputs.
pub const NEWCOMBE_METHOD: &str =
    "Newcombe hybrid score interval (Newcombe 1998, Stat. Med. 17:873, method 10)";
/// For two weighted estimates.
pub const NORMAL_METHOD: &str =
    "normal interval from each estimate's standard error (two weighted estimates)";
/// For one plain and one weighted estimate.
pub const MOVER_METHOD: &str =
    "square-root recovery of the Wilson and weighted intervals (Zou & Donner 2008, Stat. Med. 27:1693)";

fn losses_by(s: &RunSummary, horizon: f64) -> (u64, LossProbability) {
    if horizon >= s.mission_years - 1e-9 {
        return (s.tally.losses, s.loss_probability.clone());
    }
    let rows = year_rows(s);
    match rows.iter().rev().find(|r| r.year <= horizon + 1e-9) {
        Some(r) => (r.losses, r.loss.clone()),
        None => (
            0,
            LossProbability::plain(0, s.histories, s.loss_probability.confidence),
        ),
    }
}

/// The difference `b − a` of two loss probabilities (`ka`, `kb` the plain loss counts).
fn difference(
    a: (&LossProbability, u64, u64),
    b: (&LossProbability, u64, u64),
    confidence: f64,
) -> (f64, Option<(f64, f64)>, String) {
    let (pa, ka, na) = a;
    let (pb, kb, nb) = b;
    let d = pb.estimate - pa.estimate;
    if !(pa.resolved && pb.resolved) {
        let which: Vec<&str> = [(pa, "the baseline"), (pb, "this design")]
            .iter()
            .filter(|(p, _)| !p.resolved)
            .map(|(_, w)| *w)
            .collect();
        return (
            d,
            None,
            format!(
                "none: not resolved ({} has no usable interval)",
                which.join(" and ")
            ),
        );
    }
    let r = match (pa.is_weighted(), pb.is_weighted()) {
        (false, false) => {
            newcombe_hybrid(kb, nb, ka, na, confidence).map(|x| (x, NEWCOMBE_METHOD.to_string()))
        }
        (true, true) => normal_difference(
            pb.estimate,
            pb.standard_error,
            pa.estimate,
            pa.standard_error,
            confidence,
        )
        .map(|x| (x, NORMAL_METHOD.to_string())),
        _ => {
            // Each side's own interval at the common confidence: Wilson for the plain side,
            // the stored weighted interval (same confidence, checked by the caller).
            let own = |p: &LossProbability, k: u64, n: u64| {
                if p.is_weighted() {
                    Ok(p.interval().unwrap_or((p.estimate, p.estimate)))
                } else {
                    wilson(k as f64, n as f64, confidence)
                }
            };
            own(pb, kb, nb).and_then(|ib| {
                own(pa, ka, na).map(|ia| {
                    (
                        mover(pb.estimate, ib, pa.estimate, ia),
                        MOVER_METHOD.to_string(),
                    )
                })
            })
        }
    };
    match r {
        Ok((x, m)) => (d, Some((x.low, x.high)), m),
        Err(e) => (d, None, format!("none: {e}")),
    }
}

fn verdict(design: &str, baseline: &str, d: f64, ci: Option<(f64, f64)>, pct: &str) -> String {
    match ci {
        None => format!(
            "not resolved: the difference between {design} and {baseline} has no interval; rerun the unresolved design with more histories"
        ),
        Some((lo, hi)) if lo > 0.0 || hi < 0.0 => format!(
            "distinguishable: {design} has a {} loss probability than {baseline} (by {}, {pct} interval {} to {})",
            if d < 0.0 { "lower" } else { "higher" },
            sig(d.abs(), 3),
            sig(lo, 3),
            sig(hi, 3)
        ),
        Some((lo, hi)) => format!(
            "not distinguishable: the {pct} interval of the difference ({} to {}) includes 0; more histories would be needed to tell {design} from {baseline}",
            sig(lo, 3),
            sig(hi, 3)
        ),
    }
}

fn labels(dirs: &[PathBuf]) -> Vec<String> {
    let short: Vec<String> = dirs
        .iter()
        .map(|d| {
            d.file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_else(|| d.display().to_string())
        })
        .collect();
    short
        .iter()
        .zip(dirs)
        .map(|(s, d)| {
            if short.iter().filter(|t| *t == s).count() > 1 {
                d.display().to_string()
            } else {
                s.clone()
            }
        })
        .collect()
}

/// Read the folders (each must be a finished run folder).
///
/// # Errors
/// [`CompareError::Count`], [`CompareError::Folder`], [`CompareError::Incomplete`].
pub fn load_folders(dirs: &[PathBuf]) -> Result<Vec<RunFolder>, CompareError> {
    if dirs.len() < 2 || dirs.len() > MAX_COMPARED {
        return Err(CompareError::Count(dirs.len()));
    }
    dirs.iter()
        .map(|d| {
            let f = RunFolder::load_with(d, Completeness::Check).map_err(|source| {
                CompareError::Folder {
                    dir: d.clone(),
                    source,
                }
            })?;
            match &f.incomplete {
                Some(reason) => Err(CompareError::Incomplete {
                    dir: d.clone(),
                    reason: reason.clone(),
                }),
                None => Ok(f),
            }
        })
        .collect()
}

/// Compare loaded run folders, the first as baseline.
pub fn compare(folders: &[RunFolder]) -> Comparison {
    let dirs: Vec<PathBuf> = folders.iter().map(|f| f.dir.clone()).collect();
    let labels = labels(&dirs);
    let confidence = folders[0].summary.loss_probability.confidence;
    let horizon = folders
        .iter()
        .map(|f| f.summary.mission_years)
        .fold(f64::INFINITY, f64::min);
    let mut notes = Vec::new();
    let designs: Vec<ComparedDesign> = folders
        .iter()
        .zip(&labels)
        .map(|(f, label)| {
            let s = &f.summary;
            let tether = f.scenario.as_ref().map(|v| &v.tether);
            let design = f.design.as_ref();
            let repair = s.repair.as_ref();
            ComparedDesign {
                label: label.clone(),
                folder: f.dir.display().to_string(),
                scenario: s.scenario.clone(),
                scenario_hash: s.scenario_hash.clone(),
                seed: s.seed,
                histories: s.histories,
                mission_years: s.mission_years,
                ribbon_count: tether
                    .map(|t| u64::from(t.ribbon_count))
                    .or_else(|| design.map(|d| d.ribbon_count as u64)),
                cross_link_spacing_km: tether
                    .map(|t| t.cross_link_spacing_km)
                    .or_else(|| design.map(|d| d.cross_link_spacing_km)),
                tether_mass_kg: design.map(|d| d.ribbon_mass_kg + d.cross_links_mass_kg),
                counterweight_kg: design.map(|d| d.counterweight_kg),
                losses_observed: s.tally.losses,
                loss_probability: s.loss_probability.clone(),
                loss_probability_at_horizon: losses_by(s, horizon).1,
                survival_at_mission_end: 1.0 - s.loss_probability.estimate,
                cuts_per_year: s.cuts_per_year,
                time_to_splice_p90_hours: repair.map(|r| r.time_to_splice_hours.p90),
                climber_utilisation: repair.map(|r| r.climber_utilisation),
                recommended_initial_stock_segments: repair
                    .map(|r| r.recommended_initial_stock.iter().map(|x| x.segments).sum()),
            }
        })
        .collect();
    let pct = format!("{:.0} %", 100.0 * confidence);
    let base = &folders[0].summary;
    let (kb, _) = losses_by(base, horizon);
    let differences = folders
        .iter()
        .zip(&designs)
        .skip(1)
        .map(|(f, dsg)| {
            let s = &f.summary;
            let (k, _) = losses_by(s, horizon);
            let (d, ci, method) = difference(
                (&designs[0].loss_probability_at_horizon, kb, base.histories),
                (&dsg.loss_probability_at_horizon, k, s.histories),
                confidence,
            );
            LossDifference {
                design: dsg.label.clone(),
                baseline: designs[0].label.clone(),
                horizon_years: horizon,
                difference: d,
                ci_low: ci.map(|c| c.0),
                ci_high: ci.map(|c| c.1),
                confidence,
                method,
                resolved: ci.is_some(),
                distinguishable: ci.map(|(lo, hi)| lo > 0.0 || hi < 0.0),
                verdict: verdict(&dsg.label, &designs[0].label, d, ci, &pct),
            }
        })
        .collect();
    if folders
        .iter()
        .any(|f| (f.summary.mission_years - horizon).abs() > 1e-9)
    {
        notes.push(format!(
            "The missions differ in length: the differences compare the loss probabilities by year {}, the shortest mission; the key-figure table gives each design's own mission end.",
            year_label(horizon)
        ));
    }
    if folders
        .iter()
        .any(|f| (f.summary.loss_probability.confidence - confidence).abs() > 1e-12)
    {
        notes.push(format!(
            "The runs use different confidence levels; the differences use the baseline's {pct}, each design's own interval is at its own level."
        ));
    }
    let seeds: Vec<u64> = folders.iter().map(|f| f.summary.seed).collect();
    if seeds.iter().skip(1).any(|s| *s == seeds[0]) {
        notes.push(format!(
            "Some runs share the baseline's seed {}: with common random numbers their estimates are positively correlated, and the difference intervals (which assume independent runs) are then wider than they need to be (conservative).",
            seeds[0]
        ));
    }
    for (i, a) in folders.iter().enumerate() {
        for b in folders.iter().skip(i + 1) {
            if a.summary.scenario_hash == b.summary.scenario_hash
                && a.summary.seed == b.summary.seed
            {
                notes.push(format!(
                    "{} and {} are runs of the same scenario (hash {}) with the same seed: they differ only in the number of histories, if at all.",
                    a.dir.display(),
                    b.dir.display(),
                    a.summary.scenario_hash
                ));
            }
        }
    }
    Comparison {
        version: crate::VERSION.to_string(),
        confidence,
        horizon_years: horizon,
        designs,
        differences,
        notes,
        caution: crate::CAUTION.to_string(),
    }
}

fn opt(v: Option<f64>, f: impl Fn(f64) -> String) -> String {
    v.map(f).unwrap_or_else(|| "—".into())
}

/// The key figures, one row per figure and one column per design.
pub fn key_table(c: &Comparison) -> Table {
    let pct = format!("{:.0} %", 100.0 * c.confidence);
    let mut headers = vec!["key figure".to_string()];
    headers.extend(c.designs.iter().map(|d| d.label.clone()));
    let mut t = Table::new(headers);
    let row = |name: String, f: &dyn Fn(&ComparedDesign) -> String| {
        let mut r = vec![name];
        r.extend(c.designs.iter().map(f));
        r
    };
    t.push(row("scenario".into(), &|d| d.scenario.clone()));
    t.push(row("ribbons".into(), &|d| {
        d.ribbon_count.map_or("—".into(), |n| n.to_string())
    }));
    t.push(row("cross-link spacing (km)".into(), &|d| {
        opt(d.cross_link_spacing_km, |x| sig(x, 4))
    }));
    t.push(row("ribbon and cross-link mass (t)".into(), &|d| {
        opt(d.tether_mass_kg, |x| sig(x / 1e3, 4))
    }));
    t.push(row("counterweight (t)".into(), &|d| {
        opt(d.counterweight_kg, |x| sig(x / 1e3, 4))
    }));
    t.push(row("mission (years)".into(), &|d| {
        year_label(d.mission_years)
    }));
    t.push(row("histories".into(), &|d| d.histories.to_string()));
    t.push(row("histories lost".into(), &|d| {
        d.losses_observed.to_string()
    }));
    t.push(row(
        format!("loss probability by mission end [{pct} interval]"),
        &|d| loss_cell(&d.loss_probability),
    ));
    t.push(row("survival to mission end".into(), &|d| {
        sig(d.survival_at_mission_end, 6)
    }));
    t.push(row(format!("cuts per year [{pct} interval]"), &|d| {
        interval_cell(
            d.cuts_per_year.estimate,
            d.cuts_per_year.ci_low,
            d.cuts_per_year.ci_high,
        )
    }));
    t.push(row(
        "time from cut to splice, 90th percentile (h)".into(),
        &|d| opt(d.time_to_splice_p90_hours, |x| sig(x, 3)),
    ));
    t.push(row("climber utilisation (%)".into(), &|d| {
        opt(d.climber_utilisation, |x| sig(100.0 * x, 3))
    }));
    t.push(row(
        "recommended initial stock, all stations (segments)".into(),
        &|d| {
            d.recommended_initial_stock_segments
                .map_or("—".into(), |n| n.to_string())
        },
    ));
    t
}

/// The differences from the baseline, one row per later design.
pub fn difference_table(c: &Comparison) -> Table {
    let pct = format!("{:.0} %", 100.0 * c.confidence);
    let mut t = Table::new([
        "design".to_string(),
        "baseline".to_string(),
        format!(
            "difference in loss probability by year {} (design − baseline)",
            year_label(c.horizon_years)
        ),
        format!("{pct} interval"),
        "distinguishable".to_string(),
        "interval method".to_string(),
    ]);
    for d in &c.differences {
        t.push([
            d.design.clone(),
            d.baseline.clone(),
            sig(d.difference, 3),
            match (d.ci_low, d.ci_high) {
                (Some(lo), Some(hi)) => format!("{} to {}", sig(lo, 3), sig(hi, 3)),
                _ => "not resolved".into(),
            },
            match d.distinguishable {
                Some(true) => "yes".into(),
                Some(false) => "no".into(),
                None => "not resolved".into(),
            },
            d.method.clone(),
        ]);
    }
    t.align[1] = Align::Left;
    t.align[4] = Align::Left;
    t.align[5] = Align::Left;
    t
}

/// One row per design with numbers in their own cells (`compare.csv`).
pub fn csv_table(c: &Comparison) -> Table {
    let mut t = Table::new([
        "design",
        "folder",
        "scenario",
        "scenario_hash",
        "seed",
        "histories",
        "mission_years",
        "histories_lost",
        "loss_probability",
        "loss_ci_low",
        "loss_ci_high",
        "loss_resolved",
        "loss_standard_error",
        "cuts_per_year",
        "cuts_per_year_ci_low",
        "cuts_per_year_ci_high",
        "time_to_splice_p90_hours",
        "climber_utilisation",
        "recommended_initial_stock_segments",
        "tether_mass_kg",
        "horizon_years",
        "difference_from_baseline",
        "difference_ci_low",
        "difference_ci_high",
        "difference_resolved",
        "distinguishable",
    ]);
    let o = |v: Option<f64>| v.map(|x| format!("{x}")).unwrap_or_default();
    for (i, d) in c.designs.iter().enumerate() {
        let diff = i.checked_sub(1).and_then(|j| c.differences.get(j));
        let lp = &d.loss_probability;
        t.push([
            d.label.clone(),
            d.folder.clone(),
            d.scenario.clone(),
            d.scenario_hash.clone(),
            d.seed.to_string(),
            d.histories.to_string(),
            format!("{}", d.mission_years),
            d.losses_observed.to_string(),
            format!("{}", lp.estimate),
            o(lp.interval().map(|x| x.0)),
            o(lp.interval().map(|x| x.1)),
            lp.resolved.to_string(),
            format!("{}", lp.standard_error),
            format!("{}", d.cuts_per_year.estimate),
            format!("{}", d.cuts_per_year.ci_low),
            format!("{}", d.cuts_per_year.ci_high),
            o(d.time_to_splice_p90_hours),
            o(d.climber_utilisation),
            d.recommended_initial_stock_segments
                .map(|n| n.to_string())
                .unwrap_or_default(),
            o(d.tether_mass_kg),
            format!("{}", c.horizon_years),
            diff.map(|x| format!("{}", x.difference))
                .unwrap_or_default(),
            o(diff.and_then(|x| x.ci_low)),
            o(diff.and_then(|x| x.ci_high)),
            diff.map(|x| x.resolved.to_string()).unwrap_or_default(),
            diff.and_then(|x| x.distinguishable)
                .map(|b| b.to_string())
                .unwrap_or_default(),
        ]);
    }
    t
}

/// Survival curves of every design on one chart (loss probability on a log axis when every
/// drawn value is below [`LOG_AXIS_BELOW`]). Years without a usable interval are not drawn.
///
/// # Errors
/// [`PlotError`] from the chart.
pub fn survival_overlay(
    c: &Comparison,
    summaries: &[&RunSummary],
) -> Result<(super::plot::Figure, String), PlotError> {
    let pct = format!("{:.0} %", 100.0 * c.confidence);
    let rows: Vec<Vec<_>> = summaries
        .iter()
        .map(|s| {
            year_rows(s)
                .into_iter()
                .filter(|r| r.loss.resolved)
                .collect()
        })
        .collect();
    let largest = rows
        .iter()
        .flatten()
        .filter_map(|r| r.ci_high)
        .fold(0.0f64, f64::max);
    let log = largest < LOG_AXIS_BELOW;
    let mut left_out = Vec::new();
    let mut bound_only = Vec::new();
    let mut series: Vec<Series> = rows
        .iter()
        .zip(&c.designs)
        .filter(|(rows, d)| {
            // A design with no loss at all has nothing to draw on the log axis but its upper
            // bound, which is what its run rules out: drawn dashed below.
            let none = log && rows.iter().all(|r| r.loss_probability == 0.0);
            if none {
                bound_only.push((
                    d.label.clone(),
                    rows.iter().map(|r| r.year).collect::<Vec<f64>>(),
                    rows.iter()
                        .map(|r| r.ci_high.unwrap_or(1.0).clamp(0.0, 1.0))
                        .collect::<Vec<f64>>(),
                ));
            }
            !none
        })
        .map(|(rows, d)| {
            let kept: Vec<_> = rows
                .iter()
                .filter(|r| !log || r.loss_probability > 0.0)
                .collect();
            if kept.len() < rows.len() || rows.len() < d.mission_years.ceil() as usize {
                left_out.push(d.label.clone());
            }
            let x = kept.iter().map(|r| r.year).collect();
            let c01 = |v: f64| v.clamp(0.0, 1.0);
            let (y, lo, hi) = if log {
                (
                    kept.iter().map(|r| c01(r.loss_probability)).collect(),
                    kept.iter()
                        .map(|r| c01(r.ci_low.unwrap_or(r.loss_probability)))
                        .collect(),
                    kept.iter()
                        .map(|r| c01(r.ci_high.unwrap_or(r.loss_probability)))
                        .collect(),
                )
            } else {
                (
                    kept.iter().map(|r| c01(1.0 - r.loss_probability)).collect(),
                    kept.iter()
                        .map(|r| c01(1.0 - r.ci_high.unwrap_or(r.loss_probability)))
                        .collect(),
                    kept.iter()
                        .map(|r| c01(1.0 - r.ci_low.unwrap_or(r.loss_probability)))
                        .collect(),
                )
            };
            Series::new(d.label.clone(), x, y).with_band(format!("{pct} interval"), lo, hi)
        })
        .collect();
    for (label, x, y) in &bound_only {
        series.push(
            Series::new(
                format!("{label}: no loss seen, upper {pct} bound"),
                x.clone(),
                y.clone(),
            )
            .dashed(),
        );
    }
    let (axis, title, y_label) = if log {
        (
            ProbabilityAxis::LossLog,
            "Which design is less likely to be lost by each mission year?",
            "Probability of system loss by then (log scale)",
        )
    } else {
        (
            ProbabilityAxis::Survival,
            "Which design is more likely to survive each mission year?",
            "Probability of survival",
        )
    };
    let spec = ChartSpec::new(title, "Time since mission start (years)", y_label);
    let fig = survival_chart(&series, axis, &spec)?;
    let mut caption = if log {
        format!("Probability that each design has been lost by each mission year, on a log scale because every value is below {LOG_AXIS_BELOW}; each shaded band is that design's {pct} interval.")
    } else {
        format!("Probability that each design is still whole at the end of each mission year; each shaded band is that design's {pct} interval.")
    };
    if !bound_only.is_empty() {
        caption.push_str(&format!(
            " No loss was seen in {}: the dashed line is the upper {pct} bound of its loss probability, what its histories rule out, not an estimate.",
            bound_only
                .iter()
                .map(|b| b.0.as_str())
                .collect::<Vec<_>>()
                .join(", ")
        ));
    }
    if !left_out.is_empty() {
        caption.push_str(&format!(
            " Years with no loss seen (not drawable on the log scale) or without a resolved interval are left out for: {}.",
            left_out.join(", ")
        ));
    }
    caption.push_str(" Overlapping bands do not by themselves mean the designs are indistinguishable: the difference table is the test.");
    for n in &fig.notes {
        caption.push(' ');
        caption.push_str(n);
    }
    Ok((fig, caption))
}

/// The Markdown page (`compare.md`).
pub fn markdown(c: &Comparison) -> String {
    let mut m = String::from("# Designs compared\n\n");
    m.push_str(&format!("{}\n\n## Key figures\n\n", c.caution));
    m.push_str(&key_table(c).to_markdown());
    m.push_str("\n## Difference of loss probabilities from the baseline\n\n");
    m.push_str(&difference_table(c).to_markdown());
    m.push('\n');
    for d in &c.differences {
        m.push_str(&format!("- {}\n", markdown_escape(&d.verdict)));
    }
    if !c.notes.is_empty() {
        m.push_str("\n## Notes\n\n");
        for n in &c.notes {
            m.push_str(&format!("- {}\n", markdown_escape(n)));
        }
    }
    m
}

fn html_doc(c: &Comparison, figure: &ReportFigure) -> ReportDoc {
    let pct = format!("{:.0} %", 100.0 * c.confidence);
    let cards = c
        .designs
        .iter()
        .map(|d| KeyNumber {
            label: format!(
                "{}: loss probability by year {}",
                d.label,
                year_label(d.mission_years)
            ),
            value: sig(d.loss_probability.estimate, 3),
            note: match d.loss_probability.interval() {
                Some((lo, hi)) => format!(
                    "{pct} interval {} to {}; {} of {} histories lost",
                    sig(lo, 3),
                    sig(hi, 3),
                    d.losses_observed,
                    d.histories
                ),
                None => format!(
                    "not resolved: {}",
                    d.loss_probability
                        .unresolved_reason
                        .as_deref()
                        .unwrap_or("no interval")
                ),
            },
        })
        .collect();
    let mut brief = Section {
        heading: "The answer in brief".into(),
        paragraphs: c
            .differences
            .iter()
            .map(|d| format!("{}: {}.", d.design, d.verdict))
            .collect(),
        cards,
        ..Default::default()
    };
    brief.paragraphs.insert(
        0,
        format!(
            "{} designs compared against the baseline {} (the first folder given).",
            c.designs.len(),
            c.designs[0].label
        ),
    );
    let method = Section {
        heading: "Is the difference real?".into(),
        paragraphs: vec![
            format!("Each row gives one design's loss probability by year {} minus the baseline's, with its {pct} interval. The difference is distinguishable when the interval excludes 0, and not resolved when either design's loss probability has no usable interval (a weighted estimate with too few effective losses).", year_label(c.horizon_years)),
            format!("Two plain Monte Carlo estimates: {NEWCOMBE_METHOD}, which combines the two Wilson score intervals. Two weighted (rare-event) estimates: {NORMAL_METHOD}. One of each: {MOVER_METHOD}. All assume the runs are independent."),
        ],
        tables: vec![ReportTable::from_table(
            "Difference of each design's loss probability from the baseline",
            &difference_table(c),
        )],
        ..Default::default()
    };
    let mut sections = vec![
        brief,
        Section {
            heading: "Key figures side by side".into(),
            tables: vec![ReportTable::from_table(
                format!("Key figures of each design ({pct} intervals; — where the run has no such figure)"),
                &key_table(c),
            )],
            ..Default::default()
        },
        method,
        Section {
            heading: "Survival over the mission".into(),
            figures: vec![figure.clone()],
            ..Default::default()
        },
        Section {
            heading: "Provenance".into(),
            paragraphs: c
                .designs
                .iter()
                .map(|d| {
                    format!(
                        "{}: folder {}, scenario \"{}\" (hash {}), seed {}, {} histories.",
                        d.label, d.folder, d.scenario, d.scenario_hash, d.seed, d.histories
                    )
                })
                .chain(std::iter::once(format!(
                    "Comparison made by tether-risk {} from the run folders' files alone (`tether-risk compare DIR1 DIR2 ...` makes it again).",
                    c.version
                )))
                .collect(),
            ..Default::default()
        },
    ];
    if !c.notes.is_empty() {
        sections.insert(
            1,
            Section {
                heading: "Read this first".into(),
                paragraphs: c.notes.clone(),
                ..Default::default()
            },
        );
    }
    ReportDoc {
        title: format!(
            "Designs compared: {}",
            c.designs
                .iter()
                .map(|d| d.label.as_str())
                .collect::<Vec<_>>()
                .join(" vs ")
        ),
        subtitle: format!(
            "Baseline {}; differences by mission year {}; tether-risk {}",
            c.designs[0].label,
            year_label(c.horizon_years),
            c.version
        ),
        caution: c.caution.clone(),
        sections,
    }
}

/// What [`write_comparison`] wrote.
#[derive(Clone, Debug)]
pub struct ComparisonWritten {
    /// The comparison.
    pub comparison: Comparison,
    /// Every file written, `compare.html` last.
    pub files: Vec<PathBuf>,
}

/// Compare the folders and write the outputs into `out`, each file atomically.
///
/// # Errors
/// See [`CompareError`].
pub fn write_comparison(dirs: &[PathBuf], out: &Path) -> Result<ComparisonWritten, CompareError> {
    let same = |a: &Path, b: &Path| match (a.canonicalize(), b.canonicalize()) {
        (Ok(x), Ok(y)) => x == y,
        _ => a == b,
    };
    if let Some(d) = dirs.iter().find(|d| same(d, out)) {
        return Err(CompareError::OutIsInput(d.clone()));
    }
    let folders = load_folders(dirs)?;
    let c = compare(&folders);
    let summaries: Vec<&RunSummary> = folders.iter().map(|f| &f.summary).collect();
    let (fig, caption) = survival_overlay(&c, &summaries)?;
    let figure = ReportFigure {
        caption,
        svg: fig.svg.clone(),
    };
    let json = serde_json::to_string_pretty(&c).unwrap_or_default() + "\n";
    let files: Vec<(&str, Vec<u8>)> = vec![
        ("compare.json", json.into_bytes()),
        ("compare.csv", csv_table(&c).to_csv().into_bytes()),
        ("compare.md", markdown(&c).into_bytes()),
        ("survival.png", fig.png.clone()),
        ("survival.svg", fig.svg.clone().into_bytes()),
        (
            "compare.html",
            render_report(&html_doc(&c, &figure)).into_bytes(),
        ),
    ];
    let mut written = Vec::new();
    for (name, bytes) in files {
        let path = out.join(name);
        write_atomic(&path, &bytes).map_err(|source| CompareError::Write {
            path: path.clone(),
            source,
        })?;
        written.push(path);
    }
    Ok(ComparisonWritten {
        comparison: c,
        files: written,
    })
}

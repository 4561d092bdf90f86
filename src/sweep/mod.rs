//! Trade studies: run a grid of designs derived from one base scenario, with common random
//! numbers across the grid.
//!
//! A [`SweepSpec`] lists up to [`MAX_AXES`] varied fields, each a dotted path into the scenario
//! JSON (`tether.cross_link_spacing_km`, `repair.stations[0].climbers`) with its values. The
//! full grid (at most [`MAX_POINTS`] points) is evaluated in a fixed order, first axis slowest.
//! Each point's scenario is the base scenario with the varied fields replaced; every value keeps
//! its field's JSON type (whole-number fields get integers).
//!
//! **Infeasible designs are results, not errors.** A point whose design cannot exist (a ribbon
//! that cannot hold its own weight, a spare segment heavier than the climber's payload, a
//! spacing longer than the tether) is recorded with `feasible = false` and the reason, and is
//! not simulated. A value that cannot be applied at all (a fraction for a whole-number field, a
//! number outside its allowed range) is an input error naming the path, the value and why.
//!
//! **Common random numbers.** Every feasible point runs the same engine with the same seed and
//! the same number of histories, one point after another (each run is itself parallel). History
//! i of every point draws its strikes from the same random-number stream, seeded from (seed,
//! strike purpose, i) and independent of the design, so differences between points are mostly
//! design effects rather than sampling noise. What those numbers turn into (which bay, which
//! particle) still depends on the design: a design with twice the strike rate sees the same
//! sequence of strikes arriving twice as fast. Fields that do not touch the physics (for
//! example `run.confidence`) give identical loss counts at every point. The seed and the number
//! of histories are therefore properties of the sweep, not of a point: `run.seed` and
//! `run.histories` cannot be varied.
//!
//! The same base scenario, grid, settings and version give a bit-identical [`SweepResult`] at
//! any thread count.

mod path;
pub mod sensitivity;

pub use path::{get as value_at_path, leaf_paths};

use std::sync::atomic::AtomicBool;

use serde::{Deserialize, Serialize};
use serde_json::Value;
use thiserror::Error;

use crate::engine::{
    Engine, EngineError, Interval, LossProbability, RunChoices, RunSettings, RunSettingsError,
    RunSummary,
};
use crate::model::{tether_design, Model};
use crate::orbit::EarthMoon;
use crate::scenario::{nearest, parse_spec, scenario_hash, Scenario, ScenarioError};
use crate::stats::{pareto_front, sig};
use crate::structure::TetherProfile;

/// Largest number of varied fields.
pub const MAX_AXES: usize = 3;
/// Largest number of grid points: a sweep is a trade study, not an optimiser, and each point is
/// a full Monte Carlo run.
pub const MAX_POINTS: usize = 200;

/// Fields that belong to the sweep as a whole (common random numbers need one seed and one
/// history count for every point).
const FIXED_PATHS: &[(&str, &str)] = &[("run.seed", "--seed"), ("run.histories", "--histories")];

/// Why a sweep could not be run.
#[derive(Debug, Error)]
pub enum SweepError {
    /// A `--vary` option is malformed or the grid is not allowed.
    #[error("{0}")]
    Spec(String),
    /// A varied path names no field of the scenario.
    #[error("--vary {path}: the scenario has no field `{path}`{}",
        suggestion.as_ref().map(|s| format!(" (did you mean `{s}`?)")).unwrap_or_else(|| "; fields look like tether.cross_link_spacing_km or repair.stations[0].climbers".into()))]
    UnknownPath {
        /// The path as given.
        path: String,
        /// The nearest valid path, if one is close.
        suggestion: Option<String>,
    },
    /// A value cannot be applied to its field.
    #[error("--vary {path}: value `{value}` cannot be used: {reason}")]
    BadValue {
        /// Field path.
        path: String,
        /// The value as given.
        value: String,
        /// Why not.
        reason: String,
    },
    /// The grid has too many points.
    #[error("the grid has {points} points ({shape}); at most {MAX_POINTS} are allowed: use fewer values per --vary")]
    TooManyPoints {
        /// Number of points requested.
        points: usize,
        /// Values per axis, e.g. `20 x 11`.
        shape: String,
    },
    /// The base scenario is not valid.
    #[error("base scenario: {0}")]
    Base(#[source] Box<ScenarioError>),
    /// One grid point's scenario is not valid for a reason other than infeasibility.
    #[error("grid point {label}: {source}")]
    Point {
        /// The point's varied values.
        label: String,
        /// The validation error.
        #[source]
        source: Box<ScenarioError>,
    },
    /// A run setting is out of range.
    #[error("{0}")]
    Settings(String),
    /// A run setting is out of range or not available for a study.
    #[error("{0}")]
    RunSettings(#[from] RunSettingsError),
    /// The conditional Monte Carlo at cuts does not cover a point's design (an input error).
    #[error("grid point {label}: {source}")]
    NotCovered {
        /// The point's varied values.
        label: String,
        /// The engine's reason.
        #[source]
        source: EngineError,
    },
    /// The Monte Carlo failed at run time.
    #[error("grid point {label}: the simulation failed: {message}")]
    Run {
        /// The point's varied values.
        label: String,
        /// What failed.
        message: String,
    },
}

impl SweepError {
    /// True for errors caused by the input (options or scenario), false for run-time failures.
    pub fn is_input_error(&self) -> bool {
        !matches!(self, SweepError::Run { .. })
    }
}

/// One varied field and its values as given on the command line.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Axis {
    /// Dotted path, e.g. `tether.ribbon_count` or `repair.stations[0].climbers`.
    pub path: String,
    /// Values as text, in the order given.
    pub values: Vec<String>,
}

/// The parsed `--vary` list: the axes of the grid.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SweepSpec {
    /// The axes, first one varying slowest.
    pub axes: Vec<Axis>,
}

impl SweepSpec {
    /// Parse `PATH=V1,V2,...` options. Checks the syntax, the number of axes, repeated paths or
    /// values, and the grid size; whether the paths and values fit the scenario is checked by
    /// [`run_sweep`].
    pub fn parse<S: AsRef<str>>(vary: &[S]) -> Result<Self, SweepError> {
        if vary.is_empty() {
            return Err(SweepError::Spec(
                "give at least one --vary PATH=V1,V2,... (for example --vary tether.ribbon_count=4,6)".into(),
            ));
        }
        if vary.len() > MAX_AXES {
            return Err(SweepError::Spec(format!(
                "{} --vary options given; at most {MAX_AXES} are allowed (a grid of more dimensions is too large to read)",
                vary.len()
            )));
        }
        let mut axes: Vec<Axis> = Vec::new();
        for v in vary {
            let v = v.as_ref();
            let (path, list) = v.split_once('=').ok_or_else(|| {
                SweepError::Spec(format!(
                    "--vary {v}: expected PATH=V1,V2,... (for example tether.ribbon_count=4,6)"
                ))
            })?;
            let path = path.trim().to_string();
            if path.is_empty() {
                return Err(SweepError::Spec(format!(
                    "--vary {v}: the field path before `=` is empty"
                )));
            }
            let values: Vec<String> = list.split(',').map(|s| s.trim().to_string()).collect();
            if values.iter().any(String::is_empty) {
                return Err(SweepError::Spec(format!(
                    "--vary {v}: a value is empty; separate values with single commas"
                )));
            }
            if axes.iter().any(|a| a.path == path) {
                return Err(SweepError::Spec(format!(
                    "--vary {path} is given twice; list all its values in one option"
                )));
            }
            axes.push(Axis { path, values });
        }
        let spec = SweepSpec { axes };
        spec.check_size()?;
        Ok(spec)
    }

    /// Number of grid points (product of the axis lengths).
    pub fn point_count(&self) -> usize {
        self.axes
            .iter()
            .fold(1usize, |n, a| n.saturating_mul(a.values.len()))
    }

    fn check_size(&self) -> Result<(), SweepError> {
        if self.axes.is_empty() || self.axes.len() > MAX_AXES {
            return Err(SweepError::Spec(format!(
                "a sweep needs 1 to {MAX_AXES} varied fields; {} given",
                self.axes.len()
            )));
        }
        if let Some(a) = self.axes.iter().find(|a| a.values.is_empty()) {
            return Err(SweepError::Spec(format!("--vary {}: no values", a.path)));
        }
        let n = self.point_count();
        if n > MAX_POINTS {
            return Err(SweepError::TooManyPoints {
                points: n,
                shape: self
                    .axes
                    .iter()
                    .map(|a| a.values.len().to_string())
                    .collect::<Vec<_>>()
                    .join(" x "),
            });
        }
        Ok(())
    }
}

/// How every point of a sweep is run.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct SweepSettings {
    /// The run settings of every point: histories (default: the base scenario's
    /// `run.histories`), seed (default: the base's `run.seed`), threads, sampler, rare-event
    /// factor, target error (histories are then a ceiling per point), stock-out target. A
    /// sweep has no shards and no latent-damage bias.
    pub run: RunChoices,
    /// Text of the flux table file when the base scenario names one.
    pub flux_table_json: Option<String>,
    /// Run points whose expected work is beyond the engine's budget.
    pub force_work: bool,
}

/// One axis of the grid as run.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct AxisResult {
    /// Dotted field path.
    pub path: String,
    /// Short name used in tables and labels (the last part of the path).
    pub name: String,
    /// Values as given on the command line (used in labels).
    pub labels: Vec<String>,
    /// Values as written into the scenario JSON (typed).
    pub values: Vec<Value>,
}

/// Spares at one repair station for one design.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct StationResult {
    /// Station name.
    pub station: String,
    /// Spare segments on hand at the start, from the scenario.
    pub initial_stock_segments: u32,
    /// Smallest initial stock that meets the stock-out target (absent when not simulated).
    pub recommended_initial_stock_segments: Option<u64>,
    /// 95th percentile of the segments drawn from this station over the whole mission (absent
    /// when not simulated).
    pub spare_demand_mission_p95_segments: Option<u64>,
}

/// Masses of one design, kg.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct MassBreakdown {
    /// All ribbons, kg.
    pub ribbon_kg: f64,
    /// All cross-links, kg.
    pub cross_links_kg: f64,
    /// Spare stock on hand at the start: the scenario's initial stock (all stations) times the
    /// heaviest segment's mass, kg (see [`SweepResult::spare_stock_basis`]).
    pub spare_stock_kg: f64,
    /// Counterweight, kg.
    pub counterweight_kg: f64,
    /// Repair climbers: the climbers of all stations times `repair.climber.mass_kg`, kg (0
    /// without repair).
    #[serde(default)]
    pub climbers_kg: f64,
    /// Sum of the above, kg.
    pub total_kg: f64,
    /// Recommended initial stock (all stations) times the heaviest segment's mass, kg; absent
    /// when not simulated. Not included in `total_kg`.
    pub recommended_spare_stock_kg: Option<f64>,
}

/// The result of one grid point.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PointResult {
    /// Position in the grid order (first axis slowest).
    pub index: usize,
    /// Index of the value on each axis.
    pub coordinates: Vec<usize>,
    /// The varied values, one per axis (typed, as written into the scenario).
    pub values: Vec<Value>,
    /// Short description, e.g. `cross_link_spacing_km=25, ribbon_count=4`.
    pub label: String,
    /// Hash of this point's scenario (as in every other output).
    pub scenario_hash: String,
    /// False when the design cannot exist; it was then not simulated.
    pub feasible: bool,
    /// Why the design is infeasible.
    pub reason: Option<String>,
    /// Probability of system loss by mission end: plain (Clopper–Pearson) or weighted (an
    /// interval only when resolved), with its method and diagnostics.
    pub loss_probability: Option<LossProbability>,
    /// Histories that ended in system loss (under the sampling measure).
    pub losses: Option<u64>,
    /// Cut segments per year, whole tether, with a normal interval.
    pub cuts_per_year: Option<Interval>,
    /// Histories this point ran: the sweep's `histories`, or fewer when `target_rel_error` was
    /// met earlier (absent when not simulated).
    #[serde(default)]
    pub histories_run: Option<u64>,
    /// Relative standard error of the loss probability reached (absent before a loss).
    #[serde(default)]
    pub relative_error: Option<f64>,
    /// True when the point stopped early because `target_rel_error` was met.
    #[serde(default)]
    pub target_met: bool,
    /// True when the point has a loss probability that can be ranked: simulated, with an
    /// interval (weighted estimates: resolved) and at least one loss. Points without one are
    /// unknown: they are left off the Pareto front and out of the recommendation, never
    /// treated as a zero probability.
    #[serde(default)]
    pub loss_known: bool,
    /// Why the loss probability is unknown (absent when known or not simulated).
    #[serde(default)]
    pub unknown_reason: Option<String>,
    /// Indices of the other simulated points that this run cannot tell apart from this one in
    /// loss probability: their intervals overlap this point's (a point with no interval is
    /// not distinguishable from any simulated point).
    #[serde(default)]
    pub not_distinguishable_from: Vec<usize>,
    /// 90th percentile of the time from a cut to its splice over all splices of the point,
    /// hours (absent without repair, when not simulated, or when nothing was spliced).
    #[serde(default)]
    pub time_to_splice_p90_hours: Option<f64>,
    /// Splices behind that percentile, all histories.
    #[serde(default)]
    pub splices: Option<u64>,
    /// Spares per repair station (empty without repair).
    pub stations: Vec<StationResult>,
    /// Masses (absent when the tether profile cannot be built).
    pub masses: Option<MassBreakdown>,
    /// Mass of the heaviest spare segment (one ribbon over one bay), kg.
    pub heaviest_segment_kg: Option<f64>,
    /// Climber payload, kg (absent without repair).
    pub climber_payload_kg: Option<f64>,
    /// Climbers of all stations (absent without repair).
    #[serde(default)]
    pub climbers: Option<u32>,
    /// Climbers times `repair.climber.unit_cost` (absent without repair or without a unit
    /// cost), in the scenario's cost unit.
    #[serde(default)]
    pub fleet_cost: Option<f64>,
    /// Climber payload over the heaviest segment's mass; below 1 a climber cannot carry a spare.
    pub payload_to_heaviest_segment: Option<f64>,
    /// Smallest intact strength margin over all bays (allowable over actual tension); below 1
    /// the ribbons cannot hold their own weight.
    pub min_intact_margin: Option<f64>,
    /// True when no other feasible design has both a lower (or equal) total mass and a lower
    /// (or equal) estimated loss probability, one of them strictly.
    pub on_pareto_front: bool,
}

/// Everything a sweep produced; serialised as `sweep.json`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SweepResult {
    /// Program name.
    pub tool: String,
    /// Program version.
    pub version: String,
    /// Base scenario name.
    pub scenario: String,
    /// Hash of the base scenario.
    pub scenario_hash: String,
    /// Master seed shared by every point.
    pub seed: u64,
    /// Histories per point.
    pub histories: u64,
    /// Rare-event factor (1: plain Monte Carlo).
    pub rare_event_factor: f64,
    /// Conditional Monte Carlo at cuts (`--condition-cascades`; absent in older files: off).
    #[serde(default)]
    pub condition_cascades: bool,
    /// Relative standard error at which each point stopped early (absent: every point ran
    /// `histories`).
    #[serde(default)]
    pub target_rel_error: Option<f64>,
    /// Stock-out target used for the recommended initial stock.
    pub stockout_target: f64,
    /// How the loss-probability interval was formed.
    pub loss_probability_method: String,
    /// The grid's axes.
    pub axes: Vec<AxisResult>,
    /// How points are ordered.
    pub point_order: String,
    /// What common random numbers mean here.
    pub common_random_numbers: String,
    /// How the spare-stock mass is computed.
    pub spare_stock_basis: String,
    /// The points, in grid order.
    pub points: Vec<PointResult>,
    /// Indices of the non-dominated feasible points, by increasing total mass.
    pub pareto_front: Vec<usize>,
    /// Fleet sizing, when an axis varies `repair.stations[i].climbers`: per combination of
    /// the other axes, the smallest fleet whose loss probability is within
    /// [`FLEET_TOLERANCE`] of the largest fleet swept.
    #[serde(default)]
    pub fleet_recommendations: Vec<FleetRecommendation>,
    /// The base scenario's requirement on the 90th percentile of the time from cut to splice,
    /// hours (`repair.splice_p90_target_hours`), used by the fleet recommendations.
    #[serde(default)]
    pub splice_p90_target_hours: Option<f64>,
    /// The engineering caution.
    pub caution: String,
}

/// Relative tolerance of the fleet recommendation: a fleet qualifies when its loss probability
/// is at most (1 + this) times the largest fleet's. A stated engineering choice, not a
/// standard.
pub const FLEET_TOLERANCE: f64 = 0.1;

/// The smallest adequate fleet at one station for one combination of the other axes.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FleetRecommendation {
    /// The varied field, e.g. `repair.stations[0].climbers`.
    pub path: String,
    /// The station's name.
    pub station: String,
    /// The other axes' values, e.g. `cross_link_spacing_km=25` (empty with one axis).
    pub other_values: String,
    /// Relative tolerance used ([`FLEET_TOLERANCE`]).
    pub tolerance: f64,
    /// The point with the largest fleet swept (the stand-in for an unlimited fleet).
    pub reference_point: usize,
    /// The smallest fleet that qualifies (absent when the reference's loss probability is
    /// unknown).
    pub recommended_point: Option<usize>,
    /// Climbers at the station in the recommended point.
    pub recommended_climbers: Option<u64>,
    /// True when the recommended point's interval overlaps the reference's (the run cannot
    /// tell them apart); false means it is known to be worse but within the tolerance.
    pub not_distinguishable_from_reference: Option<bool>,
    /// How the recommendation was made, or why there is none.
    pub basis: String,
    /// The scenario's requirement on the 90th percentile of the time from cut to splice,
    /// hours (`repair.splice_p90_target_hours`; absent when none is given).
    #[serde(default)]
    pub splice_p90_target_hours: Option<f64>,
    /// The smallest fleet swept whose P90 time to splice meets that target (absent without a
    /// target or when no fleet swept meets it).
    #[serde(default)]
    pub meets_splice_target_point: Option<usize>,
    /// Climbers at the station in that point.
    #[serde(default)]
    pub meets_splice_target_climbers: Option<u64>,
    /// How the P90 choice was made, or why there is none (empty without a target).
    #[serde(default)]
    pub splice_target_basis: String,
}
/// Text recorded in every sweep about common random numbers.
pub const CRN_NOTE: &str = "Every point uses the same seed and number of histories: history i of \
every design draws its strikes from the same random-number stream (common random numbers), so \
differences between designs are mostly design effects rather than sampling noise. The strikes \
those numbers produce still depend on the design (bays, widths, strike rates).";

/// Text recorded in every sweep about the spare-stock mass.
pub const SPARE_BASIS_NOTE: &str = "spare_stock_kg = initial stock of all stations (from the \
scenario) x mass of the heaviest segment (conservative: any bay's segment can be cut from a \
spare of that size). recommended_spare_stock_kg uses the recommended initial stock instead and \
is not part of total_kg. climbers_kg = climbers of all stations x repair.climber.mass_kg. \
total_kg = ribbons + cross-links + spare stock + climbers + counterweight.";

/// Caution specific to trade studies, shown with [`crate::CAUTION`].
pub const PARETO_NOTE: &str = "The Pareto front uses point estimates of the loss probability \
of the designs whose probability is known (an interval and at least one loss); designs with \
no resolved probability are unknown and are not ranked, and designs whose intervals overlap \
are marked as not distinguishable by this run.";

impl SweepResult {
    /// The point at these axis coordinates.
    pub fn point_at(&self, coordinates: &[usize]) -> Option<&PointResult> {
        self.points.iter().find(|p| p.coordinates == coordinates)
    }

    /// Recompute [`PointResult::loss_known`], [`PointResult::unknown_reason`],
    /// [`PointResult::not_distinguishable_from`], [`PointResult::on_pareto_front`] and
    /// [`SweepResult::pareto_front`].
    ///
    /// Only points whose loss probability is known enter the front (both total mass and
    /// estimated loss probability minimised): a point with zero losses has only an upper
    /// bound and an unresolved weighted estimate has none, so neither can be placed on the
    /// loss axis, and treating them as zero would let the lightest unknown design win.
    pub fn mark_pareto_front(&mut self) {
        for p in &mut self.points {
            let (known, reason) = loss_status(p);
            p.loss_known = known;
            p.unknown_reason = reason;
        }
        let intervals: Vec<Option<Option<(f64, f64)>>> = self
            .points
            .iter()
            .map(|p| p.loss_probability.as_ref().map(|l| l.interval()))
            .collect();
        for i in 0..self.points.len() {
            let Some(own) = intervals[i] else {
                self.points[i].not_distinguishable_from = Vec::new();
                continue;
            };
            self.points[i].not_distinguishable_from = intervals
                .iter()
                .enumerate()
                .filter(|&(j, other)| {
                    j != i
                        && match (own, other) {
                            (_, None) => false,
                            (Some((a0, a1)), Some(Some((b0, b1)))) => a0 <= *b1 && *b0 <= a1,
                            // No interval on either side: nothing tells them apart.
                            (None, Some(_)) | (Some(_), Some(None)) => true,
                        }
                })
                .map(|(j, _)| j)
                .collect();
        }
        let candidates: Vec<(usize, (f64, f64))> = self
            .points
            .iter()
            .enumerate()
            .filter_map(|(i, p)| {
                let m = p.masses.as_ref()?.total_kg;
                let l = p.loss_probability.as_ref()?.estimate;
                (p.feasible && p.loss_known).then_some((i, (m, l)))
            })
            .collect();
        let xy: Vec<(f64, f64)> = candidates.iter().map(|c| c.1).collect();
        let front: Vec<usize> = pareto_front(&xy)
            .into_iter()
            .map(|k| candidates[k].0)
            .collect();
        for (i, p) in self.points.iter_mut().enumerate() {
            p.on_pareto_front = front.contains(&i);
        }
        self.pareto_front = front;
    }

    /// Fleet recommendations (see [`FleetRecommendation`]); empty unless an axis varies a
    /// station's `climbers`.
    pub fn recommend_fleets(&self) -> Vec<FleetRecommendation> {
        let mut out = Vec::new();
        for (k, axis) in self.axes.iter().enumerate() {
            let Some(station_path) = axis.path.strip_suffix(".climbers") else {
                continue;
            };
            if !station_path.starts_with("repair.stations[") {
                continue;
            }
            let station = axis
                .name
                .strip_suffix(" climbers")
                .unwrap_or(station_path)
                .to_string();
            // Group by the other axes' coordinates.
            let mut groups: Vec<(Vec<usize>, Vec<usize>)> = Vec::new();
            for (i, p) in self.points.iter().enumerate() {
                let mut key = p.coordinates.clone();
                key.remove(k);
                match groups.iter_mut().find(|g| g.0 == key) {
                    Some(g) => g.1.push(i),
                    None => groups.push((key, vec![i])),
                }
            }
            for (key, members) in groups {
                let climbers = |i: usize| axis.values[self.points[i].coordinates[k]].as_u64();
                let mut sim: Vec<usize> = members
                    .into_iter()
                    .filter(|&i| {
                        self.points[i].feasible
                            && self.points[i].loss_probability.is_some()
                            && climbers(i).is_some()
                    })
                    .collect();
                sim.sort_by_key(|&i| climbers(i));
                let Some(&reference) = sim.last() else {
                    continue;
                };
                let other_values = self
                    .axes
                    .iter()
                    .enumerate()
                    .filter(|(a, _)| *a != k)
                    .zip(&key)
                    .map(|((_, a), &c)| format!("{}={}", a.name, a.labels[c]))
                    .collect::<Vec<_>>()
                    .join(", ");
                let mut rec = FleetRecommendation {
                    path: axis.path.clone(),
                    station: station.clone(),
                    other_values,
                    tolerance: FLEET_TOLERANCE,
                    reference_point: reference,
                    recommended_point: None,
                    recommended_climbers: None,
                    not_distinguishable_from_reference: None,
                    basis: String::new(),
                    splice_p90_target_hours: self.splice_p90_target_hours,
                    meets_splice_target_point: None,
                    meets_splice_target_climbers: None,
                    splice_target_basis: String::new(),
                };
                if let Some(target) = self.splice_p90_target_hours {
                    let pick = sim.iter().copied().find(|&i| {
                        self.points[i]
                            .time_to_splice_p90_hours
                            .is_some_and(|h| h <= target)
                    });
                    rec.splice_target_basis = match pick {
                        Some(i) => {
                            rec.meets_splice_target_point = Some(i);
                            rec.meets_splice_target_climbers = climbers(i);
                            format!(
                                "smallest fleet swept whose 90th percentile of the time from cut to splice ({} h over {} splices, a sample quantile) is at most the target of {} h (repair.splice_p90_target_hours)",
                                crate::stats::sig(self.points[i].time_to_splice_p90_hours.unwrap_or(f64::NAN), 3),
                                self.points[i].splices.unwrap_or(0),
                                crate::stats::sig(target, 3)
                            )
                        }
                        None => format!(
                            "no fleet swept meets the target of {} h on the 90th percentile of the time from cut to splice (repair.splice_p90_target_hours): sweep larger fleets, or faster climbers",
                            crate::stats::sig(target, 3)
                        ),
                    };
                }
                let r = &self.points[reference];
                if !r.loss_known {
                    rec.basis = format!(
                        "no recommendation: the largest fleet swept ({} climbers) has no known loss probability ({})",
                        climbers(reference).unwrap_or(0),
                        r.unknown_reason.as_deref().unwrap_or("unknown")
                    );
                    out.push(rec);
                    continue;
                }
                let p_ref = r.loss_probability.as_ref().map_or(f64::NAN, |l| l.estimate);
                let limit = p_ref * (1.0 + FLEET_TOLERANCE);
                let pick = sim.iter().copied().find(|&i| {
                    let p = &self.points[i];
                    p.loss_known
                        && p.loss_probability
                            .as_ref()
                            .is_some_and(|l| l.estimate <= limit)
                });
                if let Some(i) = pick {
                    rec.recommended_point = Some(i);
                    rec.recommended_climbers = climbers(i);
                    rec.not_distinguishable_from_reference = Some(
                        i == reference
                            || self.points[i].not_distinguishable_from.contains(&reference),
                    );
                    rec.basis = format!(
                        "smallest fleet with a known loss probability at most {} x that of the largest fleet swept ({} climbers, P = {}), which stands in for an unlimited fleet",
                        1.0 + FLEET_TOLERANCE,
                        climbers(reference).unwrap_or(0),
                        sig(p_ref, 3)
                    );
                }
                out.push(rec);
            }
        }
        out
    }

    /// Indices of the simulated points whose loss probability is unknown, in grid order.
    pub fn unknown_points(&self) -> Vec<usize> {
        self.points
            .iter()
            .enumerate()
            .filter(|(_, p)| p.loss_probability.is_some() && !p.loss_known)
            .map(|(i, _)| i)
            .collect()
    }
}

/// Whether a point's loss probability can be ranked, and why not.
fn loss_status(p: &PointResult) -> (bool, Option<String>) {
    let Some(l) = &p.loss_probability else {
        return (false, None);
    };
    match l.interval() {
        None => (
            false,
            Some(format!(
                "weighted estimate not resolved: {}",
                l.unresolved_reason.as_deref().unwrap_or("no interval")
            )),
        ),
        Some((_, hi)) if l.effective_sample_size <= 0.0 || l.estimate <= 0.0 => (
            false,
            Some(format!(
                "no loss seen: only an upper bound ({} at {} % confidence)",
                sig(hi, 3),
                l.confidence * 100.0
            )),
        ),
        Some(_) => (true, None),
    }
}

/// Run a sweep over `base_json` (a scenario document). See the module documentation.
pub fn run_sweep(
    base_json: &Value,
    spec: &SweepSpec,
    settings: &SweepSettings,
) -> Result<SweepResult, SweepError> {
    run_sweep_with_progress(base_json, spec, settings, &|_, _| {})
}

/// [`run_sweep`], calling `progress(point, point_count)` after each point.
pub fn run_sweep_with_progress(
    base_json: &Value,
    spec: &SweepSpec,
    settings: &SweepSettings,
    progress: &dyn Fn(&PointResult, usize),
) -> Result<SweepResult, SweepError> {
    let mut on_point = |p: &PointResult, n: usize| {
        progress(p, n);
        Ok(())
    };
    match run_sweep_resumable(
        base_json,
        spec,
        settings,
        Vec::new(),
        &mut on_point,
        None,
        &|_, _| {},
    )? {
        SweepOutcome::Complete(r) => Ok(*r),
        SweepOutcome::Interrupted { .. } => Err(SweepError::Settings(
            "the sweep stopped without a stop request".into(),
        )),
    }
}

/// How a resumable sweep ended.
#[derive(Clone, Debug, PartialEq)]
pub enum SweepOutcome {
    /// Every point is done.
    Complete(Box<SweepResult>),
    /// A stop was requested; `done` of `total` points are finished (each was handed to the
    /// caller's `on_point` as it finished).
    Interrupted {
        /// Points finished, including those given as already done.
        done: usize,
        /// Points in the grid.
        total: usize,
    },
}

/// A sweep that can stop and continue: `done` holds points finished earlier (for example read
/// back from disk; each must belong to this grid), `on_point(point, point_count)` is called
/// after each newly finished point (to save it), and `stop` is checked before each point and
/// inside each point's run; a point whose run was stopped is not kept. Because every point is
/// deterministic given the seed, continuing gives exactly the uninterrupted result.
/// `point_progress(done, histories)` reports the histories done inside the running point
/// (about 5 times a second, from a helper thread).
///
/// # Errors
/// As [`run_sweep`]; [`SweepError::Spec`] when a point in `done` does not belong to the grid,
/// and any error `on_point` returns.
pub fn run_sweep_resumable(
    base_json: &Value,
    spec: &SweepSpec,
    settings: &SweepSettings,
    done: Vec<PointResult>,
    on_point: &mut dyn FnMut(&PointResult, usize) -> Result<(), SweepError>,
    stop: Option<&AtomicBool>,
    point_progress: &(dyn Fn(u64, u64) + Sync),
) -> Result<SweepOutcome, SweepError> {
    spec.check_size()?;
    settings.run.check_study("a sweep")?;
    let table = settings.flux_table_json.clone();
    let base_spec =
        parse_spec(&base_json.to_string()).map_err(|e| SweepError::Base(Box::new(e)))?;
    // The base may itself be infeasible (the sweep may fix it); any other error is fatal.
    if let Err(e) = Scenario::from_spec(base_spec.clone(), table.clone()) {
        if !matches!(e, ScenarioError::Infeasible { .. }) {
            return Err(SweepError::Base(Box::new(e)));
        }
    }
    let run = settings
        .run
        .resolve(base_spec.run.histories, base_spec.run.seed)?;
    let histories = run.histories;
    let canonical = serde_json::to_value(&base_spec)
        .map_err(|e| SweepError::Spec(format!("the base scenario cannot be re-serialised: {e}")))?;
    let axes = resolve_axes(&canonical, spec, table.as_deref())?;

    let count = spec.point_count();
    let mut slots: Vec<Option<PointResult>> = vec![None; count];
    for p in done {
        let expected = (p.index < count).then(|| coordinates_of(p.index, &axes));
        if expected.as_ref() != Some(&p.coordinates)
            || p.label != point_label(&axes, &p.coordinates)
        {
            return Err(SweepError::Spec(format!(
                "saved point {} ({}) does not belong to this sweep's grid",
                p.index, p.label
            )));
        }
        let prob = |x: f64| x.is_finite() && (0.0..=1.0).contains(&x);
        let bound = |b: Option<f64>| b.is_none_or(prob);
        let sane = p.loss_probability.as_ref().is_none_or(|l| {
            prob(l.estimate)
                && bound(l.ci_low)
                && bound(l.ci_high)
                && !matches!((l.ci_low, l.ci_high), (Some(a), Some(b)) if a > b)
        }) && p.losses.is_none_or(|l| l <= histories)
            && p.masses
                .is_none_or(|m| m.total_kg.is_finite() && m.total_kg >= 0.0);
        if !sane {
            return Err(SweepError::Spec(format!(
                "saved point {} ({}) holds impossible values (a probability outside [0, 1], more losses than histories or a negative mass); delete its file to run it again",
                p.index, p.label
            )));
        }
        let i = p.index;
        if slots[i].replace(p).is_some() {
            return Err(SweepError::Spec(format!("saved point {i} is given twice")));
        }
    }
    let stopped = || stop.is_some_and(|f| f.load(std::sync::atomic::Ordering::SeqCst));
    for (index, slot) in slots.iter_mut().enumerate() {
        if slot.is_some() {
            continue;
        }
        if stopped() {
            break;
        }
        let coordinates = coordinates_of(index, &axes);
        let Some(p) = evaluate_point(
            &canonical,
            &axes,
            index,
            coordinates,
            &run,
            settings,
            stop,
            point_progress,
        )?
        else {
            break;
        };
        on_point(&p, count)?;
        *slot = Some(p);
    }
    let finished = slots.iter().filter(|p| p.is_some()).count();
    if finished < count {
        return Ok(SweepOutcome::Interrupted {
            done: finished,
            total: count,
        });
    }
    let points: Vec<PointResult> = slots.into_iter().flatten().collect();
    let mut result = SweepResult {
        tool: "tether-risk".into(),
        version: crate::VERSION.into(),
        scenario: base_spec.name.clone(),
        scenario_hash: format!("{:016x}", scenario_hash(&base_spec, table.as_deref())),
        seed: run.seed,
        histories,
        rare_event_factor: run.rare_event,
        condition_cascades: run.condition_cascades,
        target_rel_error: run.target_rel_error,
        stockout_target: run.stockout_target,
        loss_probability_method: if run.is_weighted() {
            format!(
                "rare-event weighted estimate; {} when resolved, no interval otherwise",
                crate::engine::WEIGHTED_INTERVAL_METHOD
            )
        } else {
            crate::engine::PLAIN_INTERVAL_METHOD.into()
        },
        axes,
        point_order: "grid order, first axis varying slowest".into(),
        common_random_numbers: CRN_NOTE.into(),
        spare_stock_basis: SPARE_BASIS_NOTE.into(),
        points,
        pareto_front: Vec::new(),
        fleet_recommendations: Vec::new(),
        splice_p90_target_hours: base_spec
            .repair
            .as_ref()
            .and_then(|r| r.splice_p90_target_hours),
        caution: format!("{} {PARETO_NOTE}", crate::CAUTION),
    };
    result.mark_pareto_front();
    result.fleet_recommendations = result.recommend_fleets();
    Ok(SweepOutcome::Complete(Box::new(result)))
}

/// The label of the point at `coordinates`, e.g. `cross_link_spacing_km=25, ribbon_count=4`.
fn point_label(axes: &[AxisResult], coordinates: &[usize]) -> String {
    axes.iter()
        .zip(coordinates)
        .map(|(a, &c)| format!("{}={}", a.name, a.labels.get(c).map_or("?", String::as_str)))
        .collect::<Vec<_>>()
        .join(", ")
}

/// A short name for a path: its last field, with the indexed parent when there is one. An
/// element that has a `name` (a repair station) is called by it: `repair.stations[0].climbers`
/// -> `base climbers` when station 0 is named `base`, `stations[0].climbers` otherwise.
fn short_name(canonical: &Value, path: &str) -> String {
    let parts: Vec<&str> = path.split('.').collect();
    match parts.as_slice() {
        [.., parent, last] if parent.contains('[') => {
            let parent_path = &path[..path.len() - last.len() - 1];
            match path::get(canonical, parent_path)
                .and_then(|v| v.get("name"))
                .and_then(Value::as_str)
                .map(str::trim)
                .filter(|n| !n.is_empty())
            {
                Some(name) => format!("{name} {last}"),
                None => format!("{parent}.{last}"),
            }
        }
        [.., last] => (*last).to_string(),
        [] => path.to_string(),
    }
}

/// Check every axis against the base scenario and convert its values to typed JSON.
fn resolve_axes(
    canonical: &Value,
    spec: &SweepSpec,
    table: Option<&str>,
) -> Result<Vec<AxisResult>, SweepError> {
    let leaves = leaf_paths(canonical);
    let mut out = Vec::with_capacity(spec.axes.len());
    for axis in &spec.axes {
        if let Some((_, option)) = FIXED_PATHS.iter().find(|(p, _)| *p == axis.path) {
            return Err(SweepError::Spec(format!(
                "--vary {}: the seed and the number of histories are shared by every point (common random numbers); set them with {option}",
                axis.path
            )));
        }
        let current = path::get(canonical, &axis.path).ok_or_else(|| SweepError::UnknownPath {
            path: axis.path.clone(),
            suggestion: nearest(&axis.path, leaves.iter().map(String::as_str)),
        })?;
        let mut values = Vec::with_capacity(axis.values.len());
        for text in &axis.values {
            let bad = |reason: String| SweepError::BadValue {
                path: axis.path.clone(),
                value: text.clone(),
                reason,
            };
            let v = path::convert(current, text).map_err(|r| {
                let hint = if matches!(current, Value::Object(_)) {
                    let inside: Vec<&str> = leaves
                        .iter()
                        .filter(|l| l.starts_with(&format!("{}.", axis.path)))
                        .map(String::as_str)
                        .take(4)
                        .collect();
                    format!(" (for example {})", inside.join(", "))
                } else {
                    String::new()
                };
                bad(format!("{r}{hint}"))
            })?;
            if values.contains(&v) {
                return Err(bad("it is listed twice".into()));
            }
            // Check the value on its own against the base: range and type errors are input
            // errors; infeasibility is a result and is found later, point by point.
            let mut doc = canonical.clone();
            path::set(&mut doc, &axis.path, v.clone());
            let spec = parse_spec(&doc.to_string()).map_err(|e| bad(e.to_string()))?;
            if let Err(e) = Scenario::from_spec(spec, table.map(str::to_string)) {
                if !matches!(e, ScenarioError::Infeasible { .. }) {
                    return Err(bad(e.to_string()));
                }
            }
            values.push(v);
        }
        out.push(AxisResult {
            path: axis.path.clone(),
            name: short_name(canonical, &axis.path),
            labels: axis.values.clone(),
            values,
        });
    }
    Ok(out)
}

/// Axis coordinates of point `index` (first axis slowest).
fn coordinates_of(mut index: usize, axes: &[AxisResult]) -> Vec<usize> {
    let mut c = vec![0; axes.len()];
    for (k, a) in axes.iter().enumerate().rev() {
        c[k] = index % a.values.len();
        index /= a.values.len();
    }
    c
}

fn infeasible(p: &mut PointResult, reason: String) -> PointResult {
    p.feasible = false;
    p.reason = Some(reason);
    p.clone()
}

// The run settings travel as separate values on purpose: the point's index and coordinates
// vary, the rest is shared by every point.
#[allow(clippy::too_many_arguments)]
fn evaluate_point(
    canonical: &Value,
    axes: &[AxisResult],
    index: usize,
    coordinates: Vec<usize>,
    run: &RunSettings,
    settings: &SweepSettings,
    stop: Option<&AtomicBool>,
    progress: &(dyn Fn(u64, u64) + Sync),
) -> Result<Option<PointResult>, SweepError> {
    let mut doc = canonical.clone();
    let mut values = Vec::with_capacity(axes.len());
    let mut label = Vec::with_capacity(axes.len());
    for (a, &c) in axes.iter().zip(&coordinates) {
        path::set(&mut doc, &a.path, a.values[c].clone());
        values.push(a.values[c].clone());
        label.push(format!("{}={}", a.name, a.labels[c]));
    }
    let label = label.join(", ");
    let table = settings.flux_table_json.clone();
    let point_err = |source: ScenarioError| SweepError::Point {
        label: label.clone(),
        source: Box::new(source),
    };
    let spec = parse_spec(&doc.to_string()).map_err(point_err)?;
    let mut p = PointResult {
        index,
        coordinates,
        values,
        label: label.clone(),
        scenario_hash: format!("{:016x}", scenario_hash(&spec, table.as_deref())),
        feasible: true,
        reason: None,
        loss_probability: None,
        losses: None,
        cuts_per_year: None,
        histories_run: None,
        relative_error: None,
        target_met: false,
        loss_known: false,
        unknown_reason: None,
        not_distinguishable_from: Vec::new(),
        time_to_splice_p90_hours: None,
        splices: None,
        stations: spec
            .repair
            .as_ref()
            .map(|r| {
                r.stations
                    .iter()
                    .map(|s| StationResult {
                        station: s.name.clone(),
                        initial_stock_segments: s.initial_stock_segments,
                        recommended_initial_stock_segments: None,
                        spare_demand_mission_p95_segments: None,
                    })
                    .collect()
            })
            .unwrap_or_default(),
        masses: None,
        heaviest_segment_kg: None,
        climber_payload_kg: spec.repair.as_ref().map(|r| r.climber.payload_kg),
        climbers: spec
            .repair
            .as_ref()
            .map(|r| r.stations.iter().map(|s| s.climbers).sum()),
        fleet_cost: spec.repair.as_ref().and_then(|r| {
            let n: u32 = r.stations.iter().map(|s| s.climbers).sum();
            r.climber.unit_cost.map(|c| f64::from(n) * c)
        }),
        payload_to_heaviest_segment: None,
        min_intact_margin: None,
        on_pareto_front: false,
    };
    let scenario = match Scenario::from_spec(spec, table) {
        Ok(s) => s,
        Err(ScenarioError::Infeasible { reason }) => return Ok(Some(infeasible(&mut p, reason))),
        Err(e) => return Err(point_err(e)),
    };

    // Masses and flags come from the profile alone, so an infeasible repair fleet still shows
    // its tether's masses and payload ratio.
    let profile = match TetherProfile::build(&EarthMoon::standard(), &tether_design(&scenario)) {
        Ok(pr) => pr,
        Err(e) => return Ok(Some(infeasible(&mut p, e.to_string()))),
    };
    let heaviest = profile.heaviest_segment().1;
    let stock: u64 = p
        .stations
        .iter()
        .map(|s| u64::from(s.initial_stock_segments))
        .sum();
    let spare = stock as f64 * heaviest;
    let climbers_kg = scenario.repair.as_ref().map_or(0.0, |r| {
        let n: u32 = r.stations.iter().map(|s| s.climbers).sum();
        f64::from(n) * r.climber_mass_kg
    });
    p.masses = Some(MassBreakdown {
        ribbon_kg: profile.ribbon_mass_kg,
        cross_links_kg: profile.cross_links_mass_kg,
        spare_stock_kg: spare,
        counterweight_kg: profile.counterweight_kg,
        climbers_kg,
        total_kg: profile.ribbon_mass_kg
            + profile.cross_links_mass_kg
            + spare
            + climbers_kg
            + profile.counterweight_kg,
        recommended_spare_stock_kg: None,
    });
    p.heaviest_segment_kg = Some(heaviest);
    p.payload_to_heaviest_segment = p.climber_payload_kg.map(|pl| {
        if heaviest > 0.0 {
            pl / heaviest
        } else {
            f64::INFINITY
        }
    });
    p.min_intact_margin = Some(profile.min_margin().1);

    let model = match Model::build(scenario) {
        Ok(m) => m,
        Err(ScenarioError::Infeasible { reason }) => return Ok(Some(infeasible(&mut p, reason))),
        Err(e) => return Err(point_err(e)),
    };
    let histories = run.histories;
    let engine = match Engine::for_settings(&model, run).and_then(|e| {
        // With a target error the history count is only a ceiling (as in `simulate`).
        if !settings.force_work && run.target_rel_error.is_none() {
            e.check_work_budget(histories, run.floor_fraction)?;
        }
        Ok(e)
    }) {
        Ok(e) => e,
        Err(EngineError::Model(m)) => {
            return Ok(Some(infeasible(
                &mut p,
                format!("the strikes cannot be sampled: {m}"),
            )))
        }
        Err(e @ EngineError::NotCovered(_)) => {
            return Err(SweepError::NotCovered { label, source: e })
        }
        Err(e) => {
            return Err(SweepError::Run {
                label,
                message: e.to_string(),
            })
        }
    };
    let opts = run.options(settings.run.threads);
    let outcome = engine
        .run_resumable(&opts, None, &|done| progress(done, histories), stop)
        .map_err(|e| SweepError::Run {
            label: label.clone(),
            message: e.to_string(),
        })?;
    if outcome.status == crate::engine::RunStatus::Interrupted {
        // A point whose run was stopped is not a result: it is run again on resume.
        return Ok(None);
    }
    let tally = outcome.tally;
    let s = RunSummary::from_outcome(
        &engine,
        tally,
        histories,
        run.seed,
        None,
        run.stockout_target,
        outcome.status,
        run.target_rel_error,
    );
    p.histories_run = Some(s.tally.histories);
    p.relative_error = s.relative_error;
    p.target_met = outcome.status == crate::engine::RunStatus::TargetMet;
    p.loss_probability = Some(s.loss_probability);
    if s.tallies_withheld.is_some() {
        // A conditioned run's counts (losses, cuts, splices, stock) are those of its biased
        // measure, not the design's: left out, as in the run's own outputs.
        return Ok(Some(p));
    }
    p.losses = Some(s.tally.losses);
    p.cuts_per_year = Some(s.cuts_per_year);
    if s.tally.repair.splices > 0 {
        p.splices = Some(s.tally.repair.splices);
        p.time_to_splice_p90_hours = s.repair.as_ref().map(|r| r.time_to_splice_hours.p90);
    }
    if let (Some(r), Some(sp)) = (&s.repair, &s.spares) {
        let mut recommended_total = 0u64;
        for st in &mut p.stations {
            st.recommended_initial_stock_segments = r
                .recommended_initial_stock
                .iter()
                .find(|x| x.station == st.station)
                .map(|x| x.segments);
            st.spare_demand_mission_p95_segments = sp
                .demand_quantiles
                .iter()
                .find(|x| x.station == st.station)
                .map(|x| x.mission.p95);
            recommended_total += st.recommended_initial_stock_segments.unwrap_or(0);
        }
        if let Some(m) = &mut p.masses {
            m.recommended_spare_stock_kg = Some(recommended_total as f64 * heaviest);
        }
    }
    Ok(Some(p))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parse_checks_syntax_and_size() {
        let s = SweepSpec::parse(&["tether.ribbon_count=4, 6", "a.b=1"]).unwrap();
        assert_eq!(s.axes[0].values, vec!["4", "6"]);
        assert_eq!(s.point_count(), 2);
        assert!(SweepSpec::parse(&["tether.ribbon_count"]).is_err());
        assert!(SweepSpec::parse(&["x=1,,2"]).is_err());
        assert!(SweepSpec::parse(&["x=1", "x=2"]).is_err());
        assert!(SweepSpec::parse(&["a=1", "b=1", "c=1", "d=1"]).is_err());
        let big: String = (0..201)
            .map(|i| i.to_string())
            .collect::<Vec<_>>()
            .join(",");
        let e = SweepSpec::parse(&[format!("a={big}")]).unwrap_err();
        assert!(
            matches!(e, SweepError::TooManyPoints { points: 201, .. }),
            "{e}"
        );
    }

    #[test]
    fn grid_order_first_axis_slowest() {
        let ax = |n: usize| AxisResult {
            path: String::new(),
            name: String::new(),
            labels: vec![String::new(); n],
            values: vec![Value::Null; n],
        };
        let axes = [ax(3), ax(2)];
        assert_eq!(coordinates_of(0, &axes), vec![0, 0]);
        assert_eq!(coordinates_of(1, &axes), vec![0, 1]);
        assert_eq!(coordinates_of(5, &axes), vec![2, 1]);
        let doc = serde_json::json!({
            "repair": { "stations": [{ "name": "base", "climbers": 2 }, { "climbers": 1 }] },
            "tether": { "ribbon_count": 4 }
        });
        assert_eq!(
            short_name(&doc, "repair.stations[0].climbers"),
            "base climbers"
        );
        assert_eq!(
            short_name(&doc, "repair.stations[1].climbers"),
            "stations[1].climbers"
        );
        assert_eq!(short_name(&doc, "tether.ribbon_count"), "ribbon_count");
    }
}

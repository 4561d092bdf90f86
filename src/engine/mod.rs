//! The Monte Carlo engine: random streams, one history, fixed batches run in parallel with
//! rayon, tallies merged in batch order.
//!
//! Reproducibility: a batch is a fixed range of global history indices (its size never depends on
//! the thread count), each history draws from its own (seed, purpose, index) streams, and batch
//! tallies are integer counts merged in batch order. The same scenario, seed and version give
//! the same bits at any thread count and any shard split.
//!
//! Memory is flat in the number of histories for plain runs: batches are run in chunks and
//! folded into one running tally as each chunk completes. A weighted run (rare-event or
//! latent-damage bias) also keeps one `WeightedBatch` per batch of 1000 histories (about
//! 180 bytes with 15 mission years: 18 MB at 1e8 histories), because its floating-point sums must be
//! added in batch order to stay bit-reproducible.

mod count_only;
mod events;
mod history;
mod ondemand;
mod paired;
mod rng;
mod sampler;
mod settings;
mod summary;
mod tally;
mod validation;

pub use history::{HistoryOutcome, LogEvent, Scratch};
pub use ondemand::{critical_width_m, OnDemandTables};
pub use paired::{PairedCounts, PairedOutcome, PolicyEffect, PAIRED_INTERVAL_METHOD};
pub use rng::{splitmix64, stream, Purpose};
pub use sampler::{unit, unit_nonzero, Strike, StrikeSampler};
pub use settings::{
    check_threads, parse_shard, RunChoices, RunField, RunSettings, RunSettingsError,
    DEFAULT_STOCKOUT_TARGET, MAX_HISTORIES, MAX_SHARDS, MAX_THREADS,
};
pub use summary::{
    BandRow, CauseCounts, CountQuantiles, DurationStats, EstimateMethod, Interval, LittleLaw,
    LossProbability, MonthRow, RepairSummary, RunSummary, SpareSummary, StationDemand,
    StationProbability, StationStock, SurvivalPoint, YearCuts, PLAIN_INTERVAL_METHOD,
    TALLIES_WITHHELD, WEIGHTED_INTERVAL_METHOD,
};
pub use tally::{Loss, LossCause, Tally, WeightedBatch, ANOMALY_EXAMPLES, LOSS_CAUSES};

use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::time::Duration;

use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use thiserror::Error;

use crate::model::Model;
use crate::repair::{DispatchPolicy, RepairPlan};
use crate::scenario::SECONDS_PER_YEAR;
use crate::structure::load_sharing::LoadSharing;

/// [`Engine::history_path`] of the count-only shortcut.
pub const COUNT_ONLY_PATH: &str = "count-only bays";

/// Histories per batch. Fixed: it is part of the reproducibility contract.
pub const BATCH_SIZE: u64 = 1000;

/// Largest number of altitude bands used for cut and loss tallies.
pub const ALTITUDE_BANDS: usize = 20;

/// Band edges (m above the surface) for tallies by altitude: fine near the anchor, where lunar
/// focusing, shielding and the narrow anchor ribbons make damage vary fastest, then every
/// 10 000 km. At most [`ALTITUDE_BANDS`] bands; the last ends at the top of the tether.
pub fn altitude_band_edges_m(top_m: f64) -> Vec<f64> {
    let mut edges = vec![0.0];
    for km in [100.0, 250.0, 500.0, 1_000.0, 2_000.0, 5_000.0, 10_000.0] {
        if km * 1e3 < top_m {
            edges.push(km * 1e3);
        }
    }
    let mut next = 20_000e3;
    while next < top_m && edges.len() < ALTITUDE_BANDS {
        edges.push(next);
        next += 10_000e3;
    }
    edges.push(top_m);
    edges
}

/// Batches run between two folds of the running tally.
const BATCHES_PER_CHUNK: u64 = 32;

/// Which damage sampler runs the histories. Both share the scenario, model, repair and tallies;
/// each is bit-reproducible across threads and shards; they agree in distribution, not in bits.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Sampler {
    /// Draw only cut events and, at each state change of a bay, the worst sub-critical holes
    /// of its segments (see `engine::ondemand`). Cost per cut, not per strike. The default.
    #[default]
    OnDemand,
    /// Draw every strike above the floor (the reference engine).
    EveryStrike,
}

impl Sampler {
    /// The name used on the command line and in reports.
    pub fn name(&self) -> &'static str {
        match self {
            Sampler::OnDemand => "on-demand",
            Sampler::EveryStrike => "every-strike",
        }
    }
}

/// Process-wide stop request (set by the command line's signal handler). Every run checks it
/// together with its own stop flag, so a run started by any command (simulate, sweep, merge's
/// callers) stops within a fraction of a second.
static STOP_REQUESTED: AtomicBool = AtomicBool::new(false);

/// Ask every running and future run of this process to stop soon (at most 1024 events later).
pub fn request_stop() {
    STOP_REQUESTED.store(true, Ordering::SeqCst);
}

/// True once [`request_stop`] was called.
pub fn stop_requested() -> bool {
    STOP_REQUESTED.load(Ordering::Relaxed)
}

/// Largest expected work of one run accepted without `--force`, in sampled events (every-strike:
/// strikes; on-demand: per-segment draws at state changes). At the measured ~0.3 µs per strike
/// this is about 1.7 hours of one core for the strike-by-strike engine.
pub const WORK_BUDGET_EVENTS: f64 = 2e10;

/// What one history is expected to cost.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct WorkEstimate {
    /// Expected strikes above the floor per history (what every-strike draws).
    pub strikes_per_history: f64,
    /// Expected bay state changes per history (cuts; with repair, splices too) on the intact
    /// tether's rates (a lower bound when cuts cluster).
    pub state_changes_per_history: f64,
    /// Expected sampled events per history for this engine's sampler.
    pub events_per_history: f64,
}

/// Engine failures.
#[derive(Debug, Error)]
pub enum EngineError {
    /// The model cannot be sampled.
    #[error("model: {0}")]
    Model(String),
    /// Bad run options.
    #[error("{0}")]
    Options(String),
    /// The conditional Monte Carlo at cuts does not cover this model (the reason, named).
    #[error("--condition-cascades {0}")]
    NotCovered(String),
    /// A run setting out of its range.
    #[error("{0}")]
    Settings(#[from] RunSettingsError),
    /// The run was stopped by a stop request before it finished (no result).
    #[error("interrupted before the run finished")]
    Interrupted,
    /// Too many histories reached an impossible state; the run was stopped.
    #[error("{count} of {histories} histories reached an impossible state (limit {limit}); first: {examples}. Replay one with `simulate --replay-history N`")]
    Anomalies {
        /// Anomalous histories.
        count: u64,
        /// Histories run.
        histories: u64,
        /// The limit.
        limit: u64,
        /// Examples as text.
        examples: String,
    },
}

/// How to run.
#[derive(Clone, Debug)]
pub struct RunOptions {
    /// Number of histories.
    pub histories: u64,
    /// Master seed.
    pub seed: u64,
    /// Worker threads (0: one per core). Never changes the results.
    pub threads: usize,
    /// Sampling floor as a fraction of the smallest severing hole (1: only severing-capable).
    pub floor_fraction: f64,
    /// Run only the batches b with b % count == index.
    pub shard: Option<(u64, u64)>,
    /// Stop at a chunk boundary once the loss probability's relative standard error is at most
    /// this.
    pub target_rel_error: Option<f64>,
}

/// How a run ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum RunStatus {
    /// Every batch ran.
    Complete,
    /// Stopped early because the target relative error was reached.
    TargetMet,
    /// Stopped by a signal; a checkpoint can resume it.
    Interrupted,
}

/// What a run returns.
#[derive(Clone, Debug)]
pub struct RunOutcome {
    /// Merged tally of the batches run.
    pub tally: Tally,
    /// How the run ended.
    pub status: RunStatus,
    /// Number of this run's batches done as a prefix of [`Engine::batches_of`].
    pub batches_done: u64,
    /// Positions beyond the prefix that are done too (after a stop inside a chunk).
    pub completed_beyond: Vec<u64>,
}

/// The batches of a run or shard: `start + k * step` for `k < count`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct BatchList {
    start: u64,
    step: u64,
    count: u64,
    histories: u64,
}

impl BatchList {
    /// Number of batches.
    pub fn len(&self) -> u64 {
        self.count
    }
    /// True when there is no batch.
    pub fn is_empty(&self) -> bool {
        self.count == 0
    }
    /// The k-th batch index.
    pub fn get(&self, k: u64) -> u64 {
        self.start + k * self.step
    }
    /// All batch indices in order.
    pub fn iter(&self) -> impl Iterator<Item = u64> + '_ {
        (0..self.count).map(|k| self.get(k))
    }
    /// Histories in these batches (the last batch of the run may be partial).
    pub fn histories(&self) -> u64 {
        if self.count == 0 {
            return 0;
        }
        let last = self.get(self.count - 1);
        let full = self.count * BATCH_SIZE;
        let last_size = (self.histories - last * BATCH_SIZE).min(BATCH_SIZE);
        full - BATCH_SIZE + last_size
    }
}

/// Enough to resume an interrupted run exactly.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct Checkpoint {
    /// Tally of the batches done.
    pub tally: Tally,
    /// Number of batches done (a prefix of the run's batch list).
    pub batches_done: u64,
    /// Positions in the run's batch list beyond the prefix that are also done (a stop in the
    /// middle of a chunk keeps the batches that finished), increasing.
    #[serde(default)]
    pub completed_beyond: Vec<u64>,
}

/// A model prepared for sampling. Immutable and shared by all threads.
#[derive(Debug)]
pub struct Engine<'m> {
    model: &'m Model,
    sampler: StrikeSampler,
    sampler_kind: Sampler,
    on_demand: Option<OnDemandTables>,
    sharing: &'m dyn LoadSharing,
    repair: Option<RepairPlan>,
    policy: &'m dyn DispatchPolicy,
    mission_s: f64,
    years: usize,
    bay_band: Vec<u16>,
    ribbons: usize,
    particle_density: f64,
    thickness_m: f64,
    ribbon_density: f64,
    rare_event_factor: f64,
    /// Defensive-mixture probability of the latent-damage bias (0: off).
    latent_bias: f64,
    /// Conditional Monte Carlo at cuts (`--condition-cascades`): the severance tables, when on.
    sever: Option<crate::analytic::cascade::SeverTable>,
    /// With it: the biased untouched-bay cut process (None: the natural one).
    first_cut_bias: Option<ondemand::FirstCutBias>,
    /// On-demand, uniform sharing, no streams: the loads' critical widths and rates by bay and
    /// intact count (None: computed at each change).
    uniform_levels: Option<ondemand::UniformLevels>,
    /// On-demand with every bay described by its cut count: the shortcut's tables (see
    /// `count_only.rs`), or why the scenario does not qualify.
    count_only: Result<count_only::CountOnly, &'static str>,
    strict: bool,
    /// Climber loads on bays (absent without repair or with them switched off).
    climber_load: Option<crate::model::climber::ClimberLoadTable>,
    /// Every-strike: one strike sampler per meteor stream (empty without streams or under
    /// on-demand).
    stream_samplers: Vec<sampler::StreamSampler>,
    /// Day of the year of mission start (streams' peaks, month tallies), d.
    start_day: f64,
    /// Cross-link hits (on-demand only; absent when off).
    cross_links: Option<CrossLinkTable>,
    /// Mission year and month of a time by table look-up (filled once the engine exists).
    calendar: history::Calendar,
}

/// The cut process of the interior cross-links: one Poisson process of total rate
/// `total_rate_s` whose events fall on station k with probability rate_k / total (a candidate
/// on a station already cut is discarded: thinning, exact).
#[derive(Debug)]
pub(crate) struct CrossLinkTable {
    /// Running sum of the stations' cut rates, 1/s (entry k: stations 0..=k).
    cumulative_s: Vec<f64>,
    /// Sum over the stations, 1/s.
    total_rate_s: f64,
}

impl CrossLinkTable {
    fn of(model: &Model) -> Option<Self> {
        model.scenario.tether.cross_link_hits?;
        let mut acc = 0.0;
        let cumulative_s: Vec<f64> = model
            .cross_link_rate_per_year
            .iter()
            .map(|r| {
                acc += r / SECONDS_PER_YEAR;
                acc
            })
            .collect();
        Some(CrossLinkTable {
            cumulative_s,
            total_rate_s: acc,
        })
    }

    /// The station of a candidate, from a uniform `u` in [0, 1).
    pub(crate) fn pick(&self, u: f64) -> usize {
        let x = u * self.total_rate_s;
        let k = self.cumulative_s.partition_point(|&c| c <= x);
        // Rounding at the top end: the last station with a positive rate.
        let last = self
            .cumulative_s
            .iter()
            .rposition(|&c| c < self.total_rate_s)
            .map_or(0, |p| p + 1);
        k.min(last)
    }
}

impl<'m> Engine<'m> {
    /// Prepare a model for the default (on-demand) sampler.
    pub fn new(model: &'m Model, floor_fraction: f64) -> Result<Self, EngineError> {
        Self::with_sampler(model, floor_fraction, Sampler::OnDemand)
    }

    /// Prepare a model for the given sampler: build the strike sampler (always: it also gives
    /// the expected strike counts) and, for on-demand, the hole-rate tables.
    pub fn with_sampler(
        model: &'m Model,
        floor_fraction: f64,
        sampler_kind: Sampler,
    ) -> Result<Self, EngineError> {
        RunField::FloorFraction.check(floor_fraction)?;
        let sampler = StrikeSampler::new(model, floor_fraction)?;
        let on_demand =
            if sampler_kind == Sampler::OnDemand && model.scenario.synthetic_rates.is_none() {
                Some(OnDemandTables::new(model, floor_fraction)?)
            } else {
                None
            };
        let t = &model.scenario.tether;
        let top = model.profile.length_m();
        let edges = altitude_band_edges_m(top);
        let bay_band = model
            .profile
            .bays
            .iter()
            .map(|b| {
                let h = b.mid_altitude_m();
                (edges.partition_point(|&e| e <= h).saturating_sub(1)).min(edges.len() - 2) as u16
            })
            .collect();
        let climber_load = if model.scenario.synthetic_rates.is_some() {
            None
        } else {
            crate::model::climber::ClimberLoadTable::of(model)
        };
        let repair = if model.scenario.synthetic_rates.is_some() {
            None
        } else {
            model.scenario.repair.as_ref().map(|r| {
                let mut plan = RepairPlan::new(r, &model.profile, model.scenario.run.mission_s)
                    .with_solar(r, model.orbit.moon_radius_m);
                if let Some(c) = climber_load.as_ref() {
                    plan.load_bays = (0..model.profile.bays.len())
                        .map(|j| c.max_extra_n(j) > 0.0)
                        .collect();
                }
                plan
            })
        };
        let stream_samplers =
            if sampler_kind == Sampler::EveryStrike && model.scenario.synthetic_rates.is_none() {
                (0..model.scenario.environment.meteor_streams.len())
                    .map(|k| sampler::StreamSampler::new(model, k, &sampler))
                    .collect::<Result<Vec<_>, _>>()?
            } else {
                Vec::new()
            };
        let cross_links = CrossLinkTable::of(model);
        if cross_links.is_some() && sampler_kind == Sampler::EveryStrike {
            return Err(EngineError::Options(
                "tether.cross_link_hits is sampled by the on-demand sampler only: run with `--sampler on-demand` (the default), or remove tether.cross_link_hits to use the every-strike reference".into(),
            ));
        }
        let uniform_levels = on_demand.as_ref().and_then(|od| {
            ondemand::UniformLevels::new(od, &model.profile, model.load_sharing.as_ref())
        });
        let count_only = match on_demand.as_ref() {
            None => Err("the every-strike sampler or synthetic-rates mode"),
            Some(od) => match count_only::ineligible(
                model,
                repair.is_some(),
                climber_load.is_some(),
                cross_links.is_some(),
                uniform_levels.as_ref(),
                od,
            ) {
                Some(why) => Err(why),
                None => uniform_levels
                    .as_ref()
                    .ok_or("the load-sharing rule's loads depend on which ribbons are cut")
                    .and_then(|u| {
                        count_only::CountOnly::new(model, od, u, model.load_sharing.as_ref())
                    }),
            },
        };
        let mut engine = Engine {
            model,
            sampler,
            sampler_kind,
            on_demand,
            sharing: model.load_sharing.as_ref(),
            repair,
            policy: model.dispatch.as_ref(),
            mission_s: model.scenario.run.mission_s,
            years: model.scenario.run.mission_years.ceil() as usize,
            bay_band,
            ribbons: t.ribbon_count,
            particle_density: model.scenario.environment.particle_density_kg_per_m3,
            thickness_m: t.thickness_m,
            ribbon_density: t.material_density_kg_per_m3,
            rare_event_factor: 1.0,
            latent_bias: 0.0,
            sever: None,
            first_cut_bias: None,
            uniform_levels,
            count_only,
            strict: false,
            climber_load,
            stream_samplers,
            start_day: model.scenario.environment.mission_start_day_of_year,
            cross_links,
            calendar: history::Calendar::empty(),
        };
        engine.calendar = history::Calendar::new(&engine);
        Ok(engine)
    }

    /// The engine a run's settings ask for: sampler and floor, rare-event factor and
    /// latent-damage bias.
    ///
    /// # Errors
    /// As [`Engine::with_sampler`], [`Engine::with_rare_event`] and [`Engine::with_latent_bias`].
    pub fn for_settings(model: &'m Model, s: &RunSettings) -> Result<Self, EngineError> {
        Self::with_sampler(model, s.floor_fraction, s.sampler)?
            .with_rare_event(s.rare_event)?
            .with_latent_bias(s.latent_bias)?
            .with_conditioned_cascades(s.condition_cascades)
    }

    /// Switch on the rare-event estimator: strikes (synthetic-rates mode: cuts) on bays that already
    /// have a cut become `factor` times as frequent, and every history carries its likelihood
    /// ratio. `factor` = 1 is plain Monte Carlo.
    pub fn with_rare_event(mut self, factor: f64) -> Result<Self, EngineError> {
        RunField::RareEvent.check(factor)?;
        if factor > 1.0 && self.cross_links.is_some() {
            return Err(EngineError::Options(
                "tether.cross_link_hits cannot be combined with the rare-event estimator yet: run with `--rare-event 1` or remove tether.cross_link_hits".into(),
            ));
        }
        self.rare_event_factor = factor;
        Ok(self)
    }

    /// Switch on the latent-damage importance sampling of the on-demand sampler: each worst
    /// sub-critical hole brought up to date at a state change is drawn from the defensive
    /// mixture (1 - p) f + p f 1{M >= a} / P(M >= a), a the segment's critical width after one
    /// more cut in its bay (see [`ondemand`]'s docs), and the history carries the likelihood
    /// ratio. `p` = 0 is plain Monte Carlo, bit for bit.
    pub fn with_latent_bias(mut self, p: f64) -> Result<Self, EngineError> {
        RunField::LatentBias.check(p)?;
        if p > 0.0 && self.cross_links.is_some() {
            return Err(EngineError::Options(
                "tether.cross_link_hits cannot be combined with the latent-damage bias yet: run with `--latent-bias 0` or remove tether.cross_link_hits".into(),
            ));
        }
        if p > 0.0 && (self.on_demand.is_none() || self.sampler_kind != Sampler::OnDemand) {
            return Err(EngineError::Options(
                "the latent-damage bias works on the on-demand sampler's worst-hole draws: it needs `--sampler on-demand` and a scenario outside synthetic-rates mode".into(),
            ));
        }
        self.latent_bias = p;
        Ok(self)
    }

    /// The latent-damage bias probability (0: off).
    pub fn latent_bias(&self) -> f64 {
        self.latent_bias
    }

    /// Switch on the conditional Monte Carlo at cuts (`--condition-cascades`; see
    /// `HistoryRun::condition_on_survival` in events.rs): at each cut the history scores the
    /// exact probability that the cascade through the bay's worst holes severs the bay, and
    /// goes on conditioned on the bay surviving, its weight multiplied by the survival
    /// probability. Unbiased by construction; `false` is plain Monte Carlo, bit for bit.
    ///
    /// # Errors
    /// [`EngineError::NotCovered`] for what it does not cover, named: the every-strike sampler or
    /// synthetic rates, a load-sharing rule whose loads depend on which ribbons are cut,
    /// meteor streams, cross-link hits, and the latent-damage bias. It combines with the
    /// rate inflation of `--rare-event` (both are likelihood-ratio changes of one history).
    pub fn with_conditioned_cascades(mut self, on: bool) -> Result<Self, EngineError> {
        if !on {
            self.sever = None;
            self.first_cut_bias = None;
            return Ok(self);
        }
        let refuse = |why: &str| Err(EngineError::NotCovered(why.to_string()));
        if self.on_demand.is_none() || self.sampler_kind != Sampler::OnDemand {
            return refuse("works on the on-demand sampler's worst holes: it needs `--sampler on-demand` and a scenario outside synthetic-rates mode");
        }
        if self
            .sharing
            .uniform_share_divisor(self.ribbons, 1)
            .is_none()
        {
            return refuse("needs a load-sharing rule under which every intact ribbon of a bay carries the same load (tether.load_sharing \"equal\"): with local sharing the severance probability depends on which ribbons are cut");
        }
        if !self.model.scenario.environment.meteor_streams.is_empty() {
            return refuse("does not cover meteor streams yet: remove environment.meteor_streams or run without --condition-cascades");
        }
        if self.cross_links.is_some() {
            return refuse("does not cover cross-link hits yet: remove tether.cross_link_hits or run without --condition-cascades");
        }
        if self.latent_bias > 0.0 {
            return refuse("replaces --latent-bias (both change the worst-hole draws at cuts): leave out --latent-bias");
        }
        let table = crate::analytic::cascade::SeverTable::new();
        self.first_cut_bias = self.on_demand.as_ref().and_then(|od| {
            ondemand::FirstCutBias::new(
                od,
                &self.model.profile,
                self.sharing,
                &table,
                self.mission_s,
            )
        });
        self.sever = Some(table);
        Ok(self)
    }

    /// True when the conditional Monte Carlo at cuts is on.
    pub fn conditions_cascades(&self) -> bool {
        self.sever.is_some()
    }

    /// True when histories carry likelihood-ratio weights (any rare-event estimator on).
    pub fn is_weighted(&self) -> bool {
        self.rare_event_factor > 1.0 || self.latent_bias > 0.0 || self.sever.is_some()
    }

    /// Check every invariant after every event (slow; for tests). A violation marks the history
    /// as anomalous, exactly as the cheap always-on checks do.
    pub fn with_invariant_checks(mut self) -> Self {
        self.strict = true;
        self
    }

    /// Run every history through the general on-demand loop, even where the count-only
    /// shortcut applies (for comparing the two; results differ draw for draw, not in law).
    pub fn without_count_only(mut self) -> Self {
        if self.count_only.is_ok() {
            self.count_only = Err("switched off");
        }
        self
    }

    /// Whether histories take the count-only shortcut (`Ok`) or, if not, why (`Err`): every
    /// bay described by its cut count (every hole above the floor cuts, uniform sharing,
    /// constant tensions; see `engine/count_only.rs`) and no weighted estimator.
    pub fn count_only_path(&self) -> Result<(), &'static str> {
        self.active_count_only().map(|_| ())
    }

    /// How histories are run, for the record: `count-only bays`, `general event loop`
    /// (on-demand), `strike by strike` (every-strike) or `synthetic-rates chain`.
    pub fn history_path(&self) -> &'static str {
        if self.model.scenario.synthetic_rates.is_some() {
            "synthetic-rates chain"
        } else if self.sampler_kind == Sampler::EveryStrike {
            "strike by strike"
        } else if self.count_only_path().is_ok() {
            COUNT_ONLY_PATH
        } else {
            "general event loop"
        }
    }

    fn active_count_only(&self) -> Result<&count_only::CountOnly, &'static str> {
        if self.is_weighted() {
            return Err("a weighted estimator is on");
        }
        self.count_only.as_ref().map_err(|why| *why)
    }

    /// The rare-event factor (1: plain Monte Carlo).
    pub fn rare_event_factor(&self) -> f64 {
        self.rare_event_factor
    }

    /// Which sampler runs the histories.
    pub fn sampler_kind(&self) -> Sampler {
        self.sampler_kind
    }

    /// Peak rate of meteor stream `k`'s own process, 1/s: every-strike, its strikes above the
    /// sampling floors on the whole tether; on-demand, its cuts of intact segments of the
    /// intact tether. 0 for a stream index out of range.
    pub fn stream_peak_rate_per_s(&self, k: usize) -> f64 {
        match (&self.on_demand, self.sampler_kind) {
            (Some(od), Sampler::OnDemand) => {
                if k < od.stream_count() {
                    od.stream_intact_cut_rate_per_s(k)
                } else {
                    0.0
                }
            }
            _ => self
                .stream_samplers
                .get(k)
                .map_or(0.0, |s| s.peak_rate_per_s()),
        }
    }

    /// The on-demand tables (absent under every-strike and in synthetic-rates mode).
    pub fn on_demand(&self) -> Option<&OnDemandTables> {
        self.on_demand.as_ref()
    }

    /// Expected strikes above the floor per second on the whole tether (Poisson rate; with the
    /// observed time it gives the expected strike count: optional stopping of N(t) - rate t).
    pub fn strike_rate_per_s(&self) -> f64 {
        self.sampler.total_rate_per_s()
    }

    /// Expected sub-critical holes (at least the floor) per second on the intact tether, from
    /// the hole-rate tables (on-demand only).
    pub fn subcritical_hole_rate_per_s(&self) -> Option<f64> {
        self.on_demand.as_ref().map(|o| o.subcritical_rate_per_s())
    }

    /// Expected work per history (from the rates; no history is run).
    pub fn work_estimate(&self) -> WorkEstimate {
        let strikes = self.sampler.total_rate_per_s() * self.mission_s;
        let cut_rate = match &self.on_demand {
            Some(o) => o.intact_cut_rate_per_s(),
            None => self.model.total_damaging_strike_rate_per_year() / SECONDS_PER_YEAR,
        };
        let changes = cut_rate * self.mission_s * if self.repair.is_some() { 2.0 } else { 1.0 };
        let events = match self.sampler_kind {
            Sampler::EveryStrike => strikes,
            Sampler::OnDemand => 1.0 + changes * self.ribbons as f64,
        };
        WorkEstimate {
            strikes_per_history: strikes,
            state_changes_per_history: changes,
            events_per_history: events,
        }
    }

    /// Refuse a run of `histories` whose expected work is beyond [`WORK_BUDGET_EVENTS`], with
    /// the drivers named (floor, ribbons, years, flux factor).
    pub fn check_work_budget(
        &self,
        histories: u64,
        floor_fraction: f64,
    ) -> Result<(), EngineError> {
        let w = self.work_estimate();
        let total = w.events_per_history * histories as f64;
        if total <= WORK_BUDGET_EVENTS {
            return Ok(());
        }
        let sc = &self.model.scenario;
        let unit = match self.sampler_kind {
            Sampler::EveryStrike => "strikes",
            Sampler::OnDemand => "segment draws",
        };
        Err(EngineError::Options(format!(
            "the expected work is {total:.2e} {unit} ({:.3e} per history x {histories} histories, {} sampler), beyond the budget of {WORK_BUDGET_EVENTS:.0e} (about 1.7 h of one core for every-strike). Drivers: floor fraction {floor_fraction} (strikes grow roughly as floor^-3 when it is lowered), {} ribbons, {} mission years, flux factor {}{}. Pass --force to run it anyway",
            w.events_per_history,
            self.sampler_kind.name(),
            self.ribbons,
            sc.run.mission_years,
            sc.environment.flux_scale_factor,
            if self.sampler_kind == Sampler::EveryStrike {
                "; the on-demand sampler (--sampler on-demand) costs per cut, not per strike"
            } else {
                ""
            }
        )))
    }

    /// The strike sampler.
    pub fn sampler(&self) -> &StrikeSampler {
        &self.sampler
    }

    /// The model.
    pub fn model(&self) -> &Model {
        self.model
    }

    /// Mission years rounded up (number of yearly tallies).
    pub fn years(&self) -> usize {
        self.years
    }

    /// An empty tally shaped for this engine.
    pub fn empty_tally(&self) -> Tally {
        Tally::new(
            self.years,
            altitude_band_edges_m(self.model.profile.length_m()).len() - 1,
            self.ribbons,
            self.repair.as_ref().map_or(0, |r| r.stations.len()),
        )
    }

    /// Run one batch: histories `[b * BATCH_SIZE, min((b + 1) * BATCH_SIZE, histories))`.
    pub fn run_batch(&self, b: u64, histories: u64, seed: u64, scratch: &mut Scratch) -> Tally {
        let done = AtomicU64::new(0);
        self.run_batch_until(b, histories, seed, scratch, None, &done)
            .unwrap_or_else(|| self.empty_tally())
    }

    /// [`Self::run_batch`], giving up (None) soon after `stop` is raised; adds the number of
    /// histories run to `done` as it goes (for progress display).
    pub fn run_batch_until(
        &self,
        b: u64,
        histories: u64,
        seed: u64,
        scratch: &mut Scratch,
        stop: Option<&AtomicBool>,
        done: &AtomicU64,
    ) -> Option<Tally> {
        let mut tally = self.empty_tally();
        let lo = b * BATCH_SIZE;
        let hi = histories.min(lo.saturating_add(BATCH_SIZE));
        if self.is_weighted() {
            tally.weighted.push(WeightedBatch {
                batch: b,
                sum_w_by_year: vec![0.0; self.years],
                ..Default::default()
            });
        }
        for h in lo..hi {
            if stop.is_some_and(|s| s.load(Ordering::Relaxed)) {
                return None;
            }
            let out = self.run_history_until(h, seed, scratch, &mut tally, None, stop);
            if out.stopped {
                return None;
            }
            if (h - lo) % 16 == 15 {
                done.fetch_add(16, Ordering::Relaxed);
            }
        }
        done.fetch_add((hi - lo) % 16, Ordering::Relaxed);
        Some(tally)
    }

    /// Replay one history with its event log.
    pub fn replay(&self, history: u64, seed: u64) -> (HistoryOutcome, Vec<LogEvent>) {
        let mut scratch = self.new_scratch();
        let mut tally = self.empty_tally();
        let mut log = Vec::new();
        let out = self.run_history(history, seed, &mut scratch, &mut tally, Some(&mut log));
        (out, log)
    }

    /// Run all batches (or a shard of them) and return the merged tally. `progress` is called
    /// with the number of histories done after each chunk.
    pub fn run(
        &self,
        opts: &RunOptions,
        progress: &(dyn Fn(u64) + Sync),
    ) -> Result<Tally, EngineError> {
        let out = self.run_resumable(opts, None, progress, None)?;
        if out.status == RunStatus::Interrupted {
            return Err(EngineError::Interrupted);
        }
        Ok(out.tally)
    }

    /// The batches this run (or shard) owns, in the order they are run. Arithmetic, not a
    /// list: a run may have up to 1e9 batches.
    pub fn batches_of(opts: &RunOptions) -> BatchList {
        let total = opts.histories.div_ceil(BATCH_SIZE);
        let (start, step) = opts.shard.unwrap_or((0, 1));
        let count = if start < total {
            (total - 1 - start) / step.max(1) + 1
        } else {
            0
        };
        BatchList {
            start,
            step: step.max(1),
            count,
            histories: opts.histories,
        }
    }

    /// Run from a checkpoint (or the start), stopping early when `stop` is raised or when
    /// `opts.target_rel_error` is reached.
    ///
    /// The stop flag is polled between histories and every 1024 events inside one, so a run
    /// stops within a fraction of a second whatever a history costs; the batches that finished
    /// are kept (the prefix and the finished batches of the interrupted chunk), so resuming
    /// gives the bits of the uninterrupted run. The target is checked at chunk boundaries,
    /// which depend only on the batch list: an early stop is deterministic given the seed.
    /// `progress` is called with the histories done (about 5 times a second while running,
    /// from a helper thread, and after each chunk).
    pub fn run_resumable(
        &self,
        opts: &RunOptions,
        start: Option<Checkpoint>,
        progress: &(dyn Fn(u64) + Sync),
        stop: Option<&AtomicBool>,
    ) -> Result<RunOutcome, EngineError> {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(opts.threads)
            .build()
            .map_err(|e| EngineError::Options(format!("cannot start worker threads: {e}")))?;
        let mine = Self::batches_of(opts);
        let stop: Option<&AtomicBool> = Some(stop.unwrap_or(&STOP_REQUESTED));
        let global_stop = || STOP_REQUESTED.load(Ordering::Relaxed);
        let (mut total, mut done_batches, mut beyond) = match start {
            Some(c) => (c.tally, c.batches_done, c.completed_beyond),
            None => (self.empty_tally(), 0, Vec::new()),
        };
        if done_batches > mine.len()
            || beyond.iter().any(|&k| k < done_batches || k >= mine.len())
            || beyond.windows(2).any(|w| w[0] >= w[1])
        {
            return Err(EngineError::Options(
                "the checkpoint does not belong to this run".into(),
            ));
        }
        // Chunk boundaries are multiples of BATCHES_PER_CHUNK in the list, whatever was resumed.
        let counter = AtomicU64::new(total.histories);
        let finished = AtomicBool::new(false);
        let mut status = RunStatus::Complete;
        let result: Result<(), EngineError> = std::thread::scope(|scope| {
            scope.spawn(|| {
                let mut last = u64::MAX;
                while !finished.load(Ordering::Relaxed) {
                    let now = counter.load(Ordering::Relaxed);
                    if now != last {
                        progress(now);
                        last = now;
                    }
                    std::thread::sleep(Duration::from_millis(100));
                }
            });
            let r = (|| {
                while done_batches < mine.len() {
                    if let Some(t) = opts.target_rel_error {
                        if done_batches % BATCHES_PER_CHUNK == 0
                            && self.relative_error(&total).is_some_and(|r| r <= t)
                        {
                            status = RunStatus::TargetMet;
                            break;
                        }
                    }
                    if global_stop() || stop.is_some_and(|s| s.load(Ordering::SeqCst)) {
                        status = RunStatus::Interrupted;
                        break;
                    }
                    let chunk_end = ((done_batches / BATCHES_PER_CHUNK + 1) * BATCHES_PER_CHUNK)
                        .min(mine.len());
                    let todo: Vec<u64> = (done_batches..chunk_end)
                        .filter(|k| beyond.binary_search(k).is_err())
                        .collect();
                    let tallies: Vec<(u64, Option<Tally>)> = pool.install(|| {
                        todo.par_iter()
                            .map_init(
                                || self.new_scratch(),
                                |scratch, &k| {
                                    let t = self.run_batch_until(
                                        mine.get(k),
                                        opts.histories,
                                        opts.seed,
                                        scratch,
                                        stop,
                                        &counter,
                                    );
                                    (k, t)
                                },
                            )
                            .collect()
                    });
                    let mut all = true;
                    for (k, t) in &tallies {
                        match t {
                            Some(t) => {
                                total.merge(t);
                                beyond.push(*k);
                            }
                            None => all = false,
                        }
                    }
                    beyond.sort_unstable();
                    while beyond.first() == Some(&done_batches) {
                        beyond.remove(0);
                        done_batches += 1;
                    }
                    counter.store(total.histories, Ordering::Relaxed);
                    progress(total.histories);
                    if !all {
                        status = RunStatus::Interrupted;
                        break;
                    }
                    let limit = (total.histories / 1000).max(10);
                    if total.anomalies > limit {
                        return Err(EngineError::Anomalies {
                            count: total.anomalies,
                            histories: total.histories,
                            limit,
                            examples: total
                                .anomaly_examples
                                .iter()
                                .map(|(h, r)| format!("history {h}: {r}"))
                                .collect::<Vec<_>>()
                                .join("; "),
                        });
                    }
                }
                Ok(())
            })();
            finished.store(true, Ordering::Relaxed);
            r
        });
        result?;
        // Batch order, whatever order the batches finished in (resumed runs, shards).
        total.weighted.sort_by_key(|w| w.batch);
        if status == RunStatus::Complete {
            if let Some(t) = opts.target_rel_error {
                if self.relative_error(&total).is_some_and(|r| r <= t) {
                    status = RunStatus::TargetMet;
                }
            }
        }
        Ok(RunOutcome {
            tally: total,
            status,
            batches_done: done_batches,
            completed_beyond: beyond,
        })
    }

    /// Relative standard error of the loss-probability estimate of a tally (None before the
    /// first loss).
    pub fn relative_error(&self, t: &Tally) -> Option<f64> {
        if t.losses == 0 || t.histories < 2 {
            return None;
        }
        let n = t.histories as f64;
        if self.is_weighted() {
            let mut batches: Vec<&WeightedBatch> = t.weighted.iter().collect();
            batches.sort_by_key(|b| b.batch);
            let (mut sw, mut sw2) = (0.0, 0.0);
            for b in batches {
                sw += b.sum_w;
                sw2 += b.sum_w2;
            }
            // The same estimate and standard error as the summary's (the largest weight does
            // not enter either).
            let w = crate::stats::WeightedProportion::from_sums(sw, sw2, 0.0, t.histories);
            (w.estimate > 0.0).then(|| w.standard_error / w.estimate)
        } else {
            let p = t.losses as f64 / n;
            Some(((1.0 - p) / (p * n)).sqrt())
        }
    }

    /// Reusable per-thread state for this engine.
    pub fn new_scratch(&self) -> Scratch {
        Scratch::new(
            self.model.profile.bays.len(),
            self.ribbons,
            self.repair.as_ref().map(|p| (p, self.mission_s)),
        )
    }

    /// Tension of bay `j` now: the design tension plus the extra of the climbers standing in
    /// it (see [`crate::model::climber`]), N.
    #[inline]
    pub(crate) fn bay_tension_n(&self, j: usize, scratch: &Scratch) -> f64 {
        let t = self.model.profile.bays[j].max_tension_n;
        match &self.climber_load {
            Some(c) => t + c.extra_n(j, u32::from(scratch.climbers_on_bay[j])),
            None => t,
        }
    }

    /// Drop the preventive-replacement policy (the `--compare-policy` baseline pass): the same
    /// model and streams, without inspections or preventive replacements.
    pub fn without_preventive_policy(mut self) -> Self {
        if let Some(p) = self.repair.as_mut() {
            p.preventive = None;
        }
        self
    }

    /// The repair plan, when repair is simulated.
    pub fn repair_plan(&self) -> Option<&RepairPlan> {
        self.repair.as_ref()
    }

    /// Mission length, s.
    pub fn mission_s(&self) -> f64 {
        self.mission_s
    }

    /// Mission length, years.
    pub fn mission_years(&self) -> f64 {
        self.mission_s / SECONDS_PER_YEAR
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn opts(histories: u64, shard: Option<(u64, u64)>) -> RunOptions {
        RunOptions {
            histories,
            seed: 1,
            threads: 1,
            floor_fraction: 1.0,
            shard,
            target_rel_error: None,
        }
    }

    /// The batch list is part of the reproducibility contract: fixed batches of
    /// [`BATCH_SIZE`] (the last one partial), shard I of N owning batches I, I + N, ...; the
    /// shards of any split partition the run's batches and histories.
    #[test]
    fn batches_partition_the_run_for_any_shard_split() {
        assert_eq!(BATCH_SIZE, 1000);
        let whole = Engine::batches_of(&opts(2500, None));
        assert_eq!(whole.iter().collect::<Vec<_>>(), vec![0, 1, 2]);
        assert_eq!(whole.histories(), 2500);
        for n in 1..=5u64 {
            let mut seen = Vec::new();
            let mut histories = 0;
            for i in 0..n {
                let b = Engine::batches_of(&opts(2500, Some((i, n))));
                seen.extend(b.iter());
                histories += b.histories();
            }
            seen.sort_unstable();
            assert_eq!(seen, vec![0, 1, 2], "{n} shards");
            assert_eq!(histories, 2500, "{n} shards");
        }
        let last = Engine::batches_of(&opts(2500, Some((2, 3))));
        assert_eq!((last.len(), last.histories()), (1, 500));
        assert!(Engine::batches_of(&opts(2500, Some((3, 4)))).is_empty());
        // 1e12 histories: arithmetic, not a list.
        let huge = Engine::batches_of(&opts(MAX_HISTORIES, Some((1, 7))));
        assert_eq!(huge.get(2), 15);
        assert_eq!(huge.histories(), huge.len() * BATCH_SIZE);
    }

    /// Band edges: from 0, increasing, ending at the top, at most [`ALTITUDE_BANDS`] bands;
    /// the fine edges near the anchor below the top only.
    #[test]
    fn altitude_bands_cover_the_tether() {
        assert_eq!(altitude_band_edges_m(300e3), vec![0.0, 100e3, 250e3, 300e3]);
        for top in [1e3, 5e6, 6e7, 3e8] {
            let e = altitude_band_edges_m(top);
            assert_eq!(e[0], 0.0);
            assert_eq!(*e.last().unwrap(), top);
            assert!(e.windows(2).all(|w| w[0] < w[1]), "{e:?}");
            assert!(
                e.len() - 1 <= ALTITUDE_BANDS,
                "{top}: {} bands",
                e.len() - 1
            );
        }
    }

    /// Source: the binomial standard error, SE(p̂)/p̂ = sqrt((1 − p̂) / (n p̂)) (any statistics
    /// text); none before the first loss.
    #[test]
    fn relative_error_of_a_plain_run_is_the_binomial_one() {
        let model = Model::build(crate::scenario::demo()).unwrap();
        let engine = Engine::new(&model, 1.0).unwrap();
        let mut t = engine.empty_tally();
        t.histories = 10_000;
        assert_eq!(engine.relative_error(&t), None);
        t.losses = 25;
        let want = ((1.0 - 0.0025) / 25.0f64).sqrt();
        assert!((engine.relative_error(&t).unwrap() - want).abs() < 1e-15);
    }

    /// Every range of the engine's constructors is the run settings' range (one check).
    #[test]
    fn constructors_refuse_settings_out_of_range() {
        let model = Model::build(crate::scenario::demo()).unwrap();
        for f in [0.0, 1.5, f64::NAN] {
            assert!(matches!(
                Engine::new(&model, f),
                Err(EngineError::Settings(RunSettingsError::OutOfRange {
                    field: RunField::FloorFraction,
                    ..
                }))
            ));
        }
        let e = || Engine::new(&model, 1.0).unwrap();
        assert!(e().with_rare_event(0.5).is_err());
        assert!(e().with_rare_event(1e6).is_ok());
        assert!(e().with_latent_bias(0.96).is_err());
        // The latent bias needs the on-demand sampler's worst-hole draws.
        let every = Engine::with_sampler(&model, 1.0, Sampler::EveryStrike).unwrap();
        assert!(matches!(
            every.with_latent_bias(0.3),
            Err(EngineError::Options(_))
        ));
    }
}

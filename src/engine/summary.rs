//! The run summary: estimates with intervals formed from a merged tally. It also carries the
//! raw tally so that shard results can be merged exactly later.

use serde::{Deserialize, Serialize};

use crate::stats::{
    clopper_pearson, count_mean, mean_var_from_sums, z_interval, StatsError, WeightedProportion,
};

use super::tally::Tally;
use super::{altitude_band_edges_m, Engine, BATCH_SIZE};
use crate::repair::RepairTally;

/// An estimate with a two-sided interval.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Interval {
    /// Point estimate.
    pub estimate: f64,
    /// Lower bound.
    pub ci_low: f64,
    /// Upper bound.
    pub ci_high: f64,
    /// Confidence level of the interval.
    pub confidence: f64,
}

/// How a loss probability was estimated.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum EstimateMethod {
    /// Plain Monte Carlo: losses counted in independent, equally weighted histories.
    Plain,
    /// Importance sampling: likelihood-ratio weighted histories.
    Weighted,
}

/// A loss probability from which on a weighted estimate is not a rare event: 1 %, where plain
/// Monte Carlo sees a hundred losses in 10,000 histories (common practice, no source).
pub const NOT_RARE: f64 = 0.01;

/// Interval method of a plain Monte Carlo probability.
pub const PLAIN_INTERVAL_METHOD: &str = "Clopper–Pearson (exact binomial)";
/// Interval method of a resolved weighted probability (see [`crate::stats::wilson_effective`]).
pub const WEIGHTED_INTERVAL_METHOD: &str =
    "Wilson score on effective counts (n* = p(1-p)/SE^2, events = ESS; Korn & Graubard 1998)";

/// A probability with everything a reviewer needs to judge it: the estimate, its standard
/// error, how it was obtained, and an interval only when one can honestly be formed.
///
/// Plain Monte Carlo: the interval is the exact Clopper–Pearson interval, valid at any count
/// (with no loss it runs from 0 to what the histories rule out), so it is always resolved;
/// `effective_sample_size` is the number of losses and `largest_weight_share` is 1/losses.
/// Weighted (rare-event) estimates: resolved only when the effective sample size of the lost
/// histories' weights is at least 100 and no history carries more than 10 % of the weight
/// ([`crate::stats::WeightedProportion`]); otherwise `ci_low`/`ci_high` are absent (`null`)
/// and `unresolved_reason` says why.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LossProbability {
    /// Point estimate.
    pub estimate: f64,
    /// Lower bound (absent when not resolved).
    pub ci_low: Option<f64>,
    /// Upper bound (absent when not resolved).
    pub ci_high: Option<f64>,
    /// Confidence level of the interval.
    pub confidence: f64,
    /// `plain` or `weighted`.
    pub method: EstimateMethod,
    /// How the interval was formed (or why there is none).
    pub interval_method: String,
    /// True when the interval may be used.
    pub resolved: bool,
    /// Why there is no interval.
    pub unresolved_reason: Option<String>,
    /// Standard error of the estimate.
    pub standard_error: f64,
    /// Effective number of losses: the Kish effective sample size of the lost histories'
    /// weights (plain Monte Carlo: the loss count).
    pub effective_sample_size: f64,
    /// Largest single loss weight over the total loss weight (plain: 1/losses; 0 with none).
    pub largest_weight_share: f64,
}

impl LossProbability {
    /// Plain Monte Carlo: `k` losses in `n` histories, Clopper–Pearson interval.
    pub fn plain(k: u64, n: u64, confidence: f64) -> Self {
        let (lo, hi) = clopper_pearson(k, n, confidence).unwrap_or((0.0, 1.0));
        let p = if n > 0 { k as f64 / n as f64 } else { 0.0 };
        LossProbability {
            estimate: p,
            ci_low: Some(lo),
            ci_high: Some(hi),
            confidence,
            method: EstimateMethod::Plain,
            interval_method: PLAIN_INTERVAL_METHOD.into(),
            resolved: true,
            unresolved_reason: None,
            standard_error: if n > 1 {
                (p * (1.0 - p) / n as f64).sqrt()
            } else {
                0.0
            },
            effective_sample_size: k as f64,
            largest_weight_share: if k > 0 { 1.0 / k as f64 } else { 0.0 },
        }
    }

    /// A weighted estimate with the resolution rules of [`WeightedProportion`]; an unresolved
    /// one at or above [`NOT_RARE`] says that plain Monte Carlo is the method for it.
    pub fn weighted(w: &WeightedProportion, confidence: f64) -> Self {
        let interval = w.interval(confidence).ok().flatten();
        LossProbability {
            estimate: w.estimate,
            ci_low: interval.map(|i| i.0),
            ci_high: interval.map(|i| i.1),
            confidence,
            method: EstimateMethod::Weighted,
            interval_method: if interval.is_some() {
                WEIGHTED_INTERVAL_METHOD.into()
            } else {
                "none: not resolved".into()
            },
            resolved: interval.is_some(),
            unresolved_reason: w.unresolved.map(|u| {
                // Weights degenerate when losses are common (many biased events a history):
                // that is plain Monte Carlo's ground.
                if w.estimate >= NOT_RARE {
                    format!("{u}; the estimate is not small, and plain Monte Carlo (without the rare-event options) resolves a loss probability this large directly")
                } else {
                    u.to_string()
                }
            }),
            standard_error: w.standard_error,
            effective_sample_size: w.effective_sample_size,
            largest_weight_share: w.largest_weight_share,
        }
    }

    /// The interval, when resolved.
    pub fn interval(&self) -> Option<(f64, f64)> {
        match (self.resolved, self.ci_low, self.ci_high) {
            (true, Some(lo), Some(hi)) => Some((lo, hi)),
            _ => None,
        }
    }

    /// True for a weighted estimate.
    pub fn is_weighted(&self) -> bool {
        self.method == EstimateMethod::Weighted
    }
}

/// Survival to the end of a mission year.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SurvivalPoint {
    /// Years since mission start.
    pub year: f64,
    /// Probability of no system loss by then.
    pub estimate: f64,
    /// Lower bound (absent when the loss probability by then is not resolved).
    pub ci_low: Option<f64>,
    /// Upper bound (absent when not resolved).
    pub ci_high: Option<f64>,
    /// The cumulative loss probability by then, with its method and diagnostics.
    pub loss: LossProbability,
}

/// Cuts and losses in one altitude band.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct BandRow {
    /// Lower edge, km above the surface.
    pub bottom_altitude_km: f64,
    /// Upper edge, km.
    pub top_altitude_km: f64,
    /// Expected cuts per year in the band (all histories).
    pub cuts_per_year: f64,
    /// Histories lost in this band.
    pub losses: u64,
    /// Loss probability in this band, with its Clopper–Pearson interval (plain Monte Carlo
    /// only; absent for rare-event runs, whose band counts are from the biased measure).
    pub loss_probability: Option<Interval>,
}

/// Cuts and losses in one calendar month of the year (written with meteor streams).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MonthRow {
    /// Month name (`Jan` ... `Dec`).
    pub month: String,
    /// Cut segments counted in that month over all histories (every mission year).
    pub cuts: u64,
    /// Expected cut segments in that month per mission (cuts / histories).
    pub expected_cuts: f64,
    /// Losses counted in that month.
    pub losses: u64,
    /// Share of histories lost in that month (plain runs; absent under a rare-event
    /// estimator, whose counts are under the biased measure).
    pub loss_fraction: Option<f64>,
}

/// Expected cuts in one mission year.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct YearCuts {
    /// Mission year (1-based; the last may be a fraction of a year).
    pub year: u32,
    /// Cut segments counted in that year over all histories.
    pub cuts: u64,
    /// Expected cut segments in that year per mission (cuts / histories).
    pub expected_cuts: f64,
    /// Lower bound: Garwood exact Poisson interval on the count, widened by the square root
    /// of the dispersion index (variance / mean of cuts per history over the mission) when
    /// cuts cluster (quasi-Poisson; McCullagh & Nelder 1989, §4.5), per history.
    pub ci_low: f64,
    /// Upper bound (as `ci_low`).
    pub ci_high: f64,
}

/// Losses by cause.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct CauseCounts {
    /// A strike cut the last surviving ribbon.
    pub direct_cut: u64,
    /// Overload cascade after a cut.
    pub cascade: u64,
    /// Lost while its repair waited for spare stock.
    pub stockout_delay: u64,
    /// Overloaded by a climber's weight arriving on a weakened bay.
    #[serde(default)]
    pub climber_load: u64,
}

/// Everything a run reports.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RunSummary {
    /// Tool version.
    pub version: String,
    /// Scenario name.
    pub scenario: String,
    /// Scenario hash (hex).
    pub scenario_hash: String,
    /// Master seed.
    pub seed: u64,
    /// Histories requested for the full run.
    pub histories_requested: u64,
    /// Histories run (and behind every estimate).
    pub histories: u64,
    /// Histories per batch.
    pub batch_size: u64,
    /// Shard `[index, count]` when this is a partial shard result.
    pub shard: Option<[u64; 2]>,
    /// How the run ended: complete, target met, or interrupted (then the results are partial).
    pub status: super::RunStatus,
    /// Requested relative standard error of the loss probability, if any.
    pub target_rel_error: Option<f64>,
    /// Relative standard error reached (absent before the first loss).
    pub relative_error: Option<f64>,
    /// Mission length, years.
    pub mission_years: f64,
    /// Probability of at least one system loss by mission end.
    pub loss_probability: LossProbability,
    /// Survival by year.
    pub survival_by_year: Vec<SurvivalPoint>,
    /// Mean number of cut segments per history over the mission.
    pub mean_cuts: f64,
    /// Mean number of cross-links cut per history (only with `tether.cross_link_hits`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cross_link_cuts_per_history: Option<f64>,
    /// Share of the time an interior cross-link station spends cut, mean over stations and
    /// histories (only with `tether.cross_link_hits`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cross_link_cut_fraction_of_time: Option<f64>,
    /// Cut segments per year, whole tether.
    pub cuts_per_year: Interval,
    /// Cuts and losses by altitude band.
    pub cuts_by_altitude_band: Vec<BandRow>,
    /// Expected cuts in each mission year, with intervals (counted under the biased measure
    /// in a rare-event run). Absent in files of older versions.
    #[serde(default)]
    pub expected_cuts_by_year: Vec<YearCuts>,
    /// Cuts and losses by calendar month (only with meteor streams; empty otherwise).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub by_month: Vec<MonthRow>,
    /// Losses by cause.
    pub losses_by_cause: CauseCounts,
    /// Fraction of cuts that came from load redistribution.
    pub cascade_cut_fraction: f64,
    /// Damage sampler that ran the histories (`on-demand` or `every-strike`).
    #[serde(default)]
    pub sampler: String,
    /// How the histories were run (`Engine::history_path`): `count-only bays` (the on-demand
    /// shortcut where every bay is described by its cut count), `general event loop`,
    /// `strike by strike` or `synthetic-rates chain`. Empty in files of older versions.
    #[serde(default)]
    pub history_path: String,
    /// How the two strike tallies below were obtained: `counted` (every-strike) or
    /// `expected from the rates` (on-demand, which draws no individual strike).
    #[serde(default)]
    pub strike_tallies: String,
    /// Strikes per history by particles above the sampling floor: the mean count (every-strike)
    /// or the expectation rate x observed time (on-demand).
    pub strikes_per_history: f64,
    /// Holes per history that cut nothing: every-strike, the mean count of strikes that deepened
    /// a segment's worst hole without cutting; on-demand, the expected number of holes at least
    /// the floor and below the intact critical width (rates of the intact tether x observed
    /// time).
    pub subcritical_holes_per_history: f64,
    /// Share of the holes that cut their segment whose size was extrapolated outside the hole
    /// law's calibration range (0 when nothing was cut): counted under every-strike, expected
    /// from the rates under on-demand (the share of the holes at least each cut segment's
    /// critical width, averaged over the cuts).
    #[serde(default)]
    pub extrapolated_share_of_cutting_holes: f64,
    /// Histories by the largest number of cuts seen at once in one bay (index = cuts).
    pub max_cuts_in_one_bay: Vec<u64>,
    /// Fraction of mission time with at least one cut bay (mean over histories).
    pub fraction_of_time_with_cut_bay: f64,
    /// Rare-event estimator diagnostics (absent for plain Monte Carlo). When present,
    /// `loss_probability` and `survival_by_year` are the weighted estimates.
    pub rare_event: Option<RareEventSummary>,
    /// Repair logistics (absent without repair).
    pub repair: Option<RepairSummary>,
    /// Spare-ribbon demand (absent without repair).
    pub spares: Option<SpareSummary>,
    /// Why the cut, cause, repair, spares and month tallies are left out (absent when they
    /// are given): under `--condition-cascades` histories run under a biased measure, so those
    /// counts are not the design's.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tallies_withheld: Option<String>,
    /// The raw counts (for merging shards).
    pub tally: Tally,
    /// Loss probability with and without a preventive-replacement policy over the same
    /// histories (`simulate --compare-policy`, and the demo); absent otherwise.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub policy_effect: Option<super::paired::PolicyEffect>,
    /// The engineering caution.
    pub caution: String,
}

/// What a conditioned run says in place of the tallies it leaves out.
pub const TALLIES_WITHHELD: &str = "Cuts, causes of loss, cuts by altitude band and month, repair logistics and spare demand are left out of this run: under --condition-cascades first cuts are drawn more often where they can sever, damaged bays are cut more often and every cut's cascade is conditioned on survival, so those counts are not the design's. The loss probability and survival by year are unbiased (weighted). Run the same scenario without --condition-cascades for the logistics and the cut counts: they are frequent events and need no rare-event method.";

fn cp(k: u64, n: u64, confidence: f64) -> Interval {
    let (lo, hi) = clopper_pearson(k, n, confidence).unwrap_or((0.0, 1.0));
    Interval {
        estimate: if n > 0 { k as f64 / n as f64 } else { 0.0 },
        ci_low: lo,
        ci_high: hi,
        confidence,
    }
}

impl RunSummary {
    /// Form the summary of a merged tally.
    pub fn from_tally(
        engine: &Engine<'_>,
        tally: Tally,
        histories_requested: u64,
        seed: u64,
        shard: Option<(u64, u64)>,
        stockout_target: f64,
    ) -> Self {
        Self::from_outcome(
            engine,
            tally,
            histories_requested,
            seed,
            shard,
            stockout_target,
            super::RunStatus::Complete,
            None,
        )
    }

    /// Form the summary of a run that may have stopped early.
    #[allow(clippy::too_many_arguments)]
    pub fn from_outcome(
        engine: &Engine<'_>,
        tally: Tally,
        histories_requested: u64,
        seed: u64,
        shard: Option<(u64, u64)>,
        stockout_target: f64,
        status: super::RunStatus,
        target_rel_error: Option<f64>,
    ) -> Self {
        let relative_error = engine.relative_error(&tally);
        let (repair, spares) = match Self::repair_parts(engine, &tally, stockout_target) {
            Some((r, s)) => (Some(r), Some(s)),
            None => (None, None),
        };
        let model = engine.model();
        let sc = &model.scenario;
        let conf = sc.run.confidence;
        let h = tally.histories.max(1) as f64;
        let years = engine.mission_years();
        let rare_event = RareEventSummary::from_tally(engine, &tally, conf);
        let loss_probability = match &rare_event {
            Some(r) => r.loss_probability.clone(),
            None => LossProbability::plain(tally.losses, tally.histories, conf),
        };

        let mut survival_by_year = Vec::with_capacity(tally.losses_by_year.len());
        let mut cum = 0u64;
        for (y, &l) in tally.losses_by_year.iter().enumerate() {
            cum += l;
            let i = match &rare_event {
                Some(r) => r.cumulative_by_year[y].clone(),
                None => LossProbability::plain(cum, tally.histories, conf),
            };
            survival_by_year.push(SurvivalPoint {
                year: ((y + 1) as f64).min(years),
                estimate: 1.0 - i.estimate,
                ci_low: i.interval().map(|(_, hi)| 1.0 - hi),
                ci_high: i.interval().map(|(lo, _)| 1.0 - lo),
                loss: i,
            });
        }

        let (mean, var) =
            mean_var_from_sums(tally.histories, tally.cuts as f64, tally.cuts_sq as f64);
        let se = (var / h).sqrt();
        // The confidence level was validated with the scenario; the fallback is z(0.975).
        let (lo, hi) = z_interval(mean, se, conf)
            .unwrap_or((mean - 1.959963984540054 * se, mean + 1.959963984540054 * se));
        let per_year = |x: f64| if years > 0.0 { x / years } else { 0.0 };
        let cuts_per_year = Interval {
            estimate: per_year(mean),
            ci_low: per_year(lo.max(0.0)),
            ci_high: per_year(hi),
            confidence: conf,
        };

        // Cuts cluster (cascades, one strike after another in a weakened bay), so the
        // per-year Poisson interval is widened by the mission's dispersion index.
        let dispersion = if mean > 0.0 {
            (var / mean).max(1.0)
        } else {
            1.0
        };
        let expected_cuts_by_year = tally
            .cuts_by_year
            .iter()
            .enumerate()
            .map(|(y, &k)| {
                let (lo, hi) = crate::stats::poisson_interval(k, conf);
                let kf = k as f64;
                let w = dispersion.sqrt();
                YearCuts {
                    year: (y + 1) as u32,
                    cuts: k,
                    expected_cuts: kf / h,
                    ci_low: (kf - w * (kf - lo)).max(0.0) / h,
                    ci_high: (kf + w * (hi - kf)) / h,
                }
            })
            .collect();
        let by_month = if sc.environment.meteor_streams.is_empty() {
            Vec::new()
        } else {
            crate::environment::streams::MONTH_NAMES
                .iter()
                .enumerate()
                .map(|(m, name)| {
                    let cuts = tally.cuts_by_month.get(m).copied().unwrap_or(0);
                    let losses = tally.losses_by_month.get(m).copied().unwrap_or(0);
                    MonthRow {
                        month: (*name).to_string(),
                        cuts,
                        expected_cuts: cuts as f64 / h,
                        losses,
                        loss_fraction: rare_event.is_none().then(|| losses as f64 / h),
                    }
                })
                .collect()
        };
        let edges = altitude_band_edges_m(model.profile.length_m());
        let cuts_by_altitude_band = (0..edges.len() - 1)
            .map(|b| BandRow {
                bottom_altitude_km: edges[b] / 1e3,
                top_altitude_km: edges[b + 1] / 1e3,
                cuts_per_year: per_year(tally.cuts_by_band.get(b).copied().unwrap_or(0) as f64 / h),
                losses: tally.losses_by_band.get(b).copied().unwrap_or(0),
                loss_probability: rare_event.is_none().then(|| {
                    cp(
                        tally.losses_by_band.get(b).copied().unwrap_or(0),
                        tally.histories,
                        conf,
                    )
                }),
            })
            .collect();

        let tallies_withheld = engine
            .conditions_cascades()
            .then(|| TALLIES_WITHHELD.to_string());
        let (repair, spares, by_month) = if tallies_withheld.is_some() {
            (None, None, Vec::new())
        } else {
            (repair, spares, by_month)
        };
        RunSummary {
            version: crate::VERSION.to_string(),
            scenario: sc.spec.name.clone(),
            scenario_hash: sc.hash_hex(),
            seed,
            histories_requested,
            histories: tally.histories,
            batch_size: BATCH_SIZE,
            shard: shard.map(|(i, n)| [i, n]),
            status,
            target_rel_error,
            relative_error,
            mission_years: years,
            loss_probability,
            survival_by_year,
            mean_cuts: mean,
            cross_link_cuts_per_history: sc
                .tether
                .cross_link_hits
                .map(|_| tally.cross_link_cuts as f64 / tally.histories.max(1) as f64),
            cross_link_cut_fraction_of_time: sc.tether.cross_link_hits.map(|_| {
                let interior = engine.model().profile.bays.len().saturating_sub(1) as f64;
                if interior > 0.0 && tally.time_observed_s > 0 {
                    tally.cross_link_down_s as f64 / (interior * tally.time_observed_s as f64)
                } else {
                    0.0
                }
            }),
            cuts_per_year,
            cuts_by_altitude_band,
            expected_cuts_by_year,
            by_month,
            losses_by_cause: CauseCounts {
                direct_cut: tally.losses_by_cause[0],
                cascade: tally.losses_by_cause[1],
                stockout_delay: tally.losses_by_cause[2],
                climber_load: tally.losses_by_cause[3],
            },
            cascade_cut_fraction: if tally.cuts > 0 {
                tally.cascade_cuts as f64 / tally.cuts as f64
            } else {
                0.0
            },
            sampler: engine.sampler_kind().name().to_string(),
            history_path: engine.history_path().to_string(),
            strike_tallies: match engine.sampler_kind() {
                super::Sampler::EveryStrike => "counted".to_string(),
                super::Sampler::OnDemand => "expected from the rates".to_string(),
            },
            strikes_per_history: match engine.sampler_kind() {
                super::Sampler::EveryStrike => tally.strikes as f64 / h,
                super::Sampler::OnDemand => {
                    engine.strike_rate_per_s() * tally.time_observed_s as f64 / h
                }
            },
            subcritical_holes_per_history: match engine.subcritical_hole_rate_per_s() {
                Some(r) => r * tally.time_observed_s as f64 / h,
                None => tally.subcritical_holes as f64 / h,
            },
            extrapolated_share_of_cutting_holes: if tally.cutting_holes > 0 {
                match engine.sampler_kind() {
                    super::Sampler::EveryStrike => {
                        tally.cutting_holes_extrapolated as f64 / tally.cutting_holes as f64
                    }
                    super::Sampler::OnDemand => {
                        tally.cutting_holes_extrapolated_expected_e9 as f64 * 1e-9
                            / tally.cutting_holes as f64
                    }
                }
            } else {
                0.0
            },
            max_cuts_in_one_bay: tally.max_cuts_in_bay.clone(),
            fraction_of_time_with_cut_bay: if engine.mission_s() > 0.0 {
                tally.time_with_cut_bay_s as f64 / h / engine.mission_s()
            } else {
                0.0
            },
            rare_event,
            repair,
            spares,
            tallies_withheld,
            tally,
            policy_effect: None,
            caution: crate::CAUTION.to_string(),
        }
    }
}

/// Mean and quantiles of a duration, hours.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct DurationStats {
    /// Mean.
    pub mean: f64,
    /// Median.
    pub p50: f64,
    /// 90th percentile.
    pub p90: f64,
    /// 99th percentile.
    pub p99: f64,
}

/// Little's law check for the repair queue.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct LittleLaw {
    /// Time-average number of segments waiting for dispatch.
    pub mean_waiting_segments: f64,
    /// Arrival rate of detected segments, per hour.
    pub arrival_rate_per_hour: f64,
    /// Mean wait from detection to dispatch, hours.
    pub mean_wait_hours: f64,
    /// arrival rate x mean wait (equals the mean number waiting by Little's law).
    pub arrival_rate_times_wait: f64,
}

/// A per-station probability.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct StationProbability {
    /// Station name.
    pub station: String,
    /// The probability, with a Clopper–Pearson interval.
    pub probability: Interval,
}

/// A per-station stock level.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct StationStock {
    /// Station name.
    pub station: String,
    /// Segments.
    pub segments: u64,
}

/// Quantiles of a count distribution.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct CountQuantiles {
    /// Mean.
    pub mean: f64,
    /// Median.
    pub p50: u64,
    /// 90th percentile.
    pub p90: u64,
    /// 95th percentile.
    pub p95: u64,
    /// 99th percentile.
    pub p99: u64,
}

/// Spare demand at one station.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct StationDemand {
    /// Station name.
    pub station: String,
    /// Segments drawn over the whole mission.
    pub mission: CountQuantiles,
    /// Segments drawn in one demand interval.
    pub per_interval: CountQuantiles,
    /// Largest demand in any interval of a history.
    pub max_per_interval: CountQuantiles,
    /// Demand interval (the resupply interval, or the mission), days.
    pub interval_days: f64,
    /// Probability of each mission demand (index = segments), for plots.
    pub mission_distribution: Vec<f64>,
}

/// Repair logistics results.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RepairSummary {
    /// Time from cut to splice, hours (quantiles from a histogram with 2.3 % wide bins).
    pub time_to_splice_hours: DurationStats,
    /// Segments spliced per year, whole tether.
    pub splices_per_year: f64,
    /// Climber busy time over available climber time.
    pub climber_utilisation: f64,
    /// Little's law for the queue.
    pub queue: LittleLaw,
    /// The part of the mean wait from detection to dispatch spent with no climber free
    /// anywhere (all out on jobs), hours per detected segment.
    #[serde(default)]
    pub mean_wait_for_climber_hours: f64,
    /// The rest of that mean wait: a climber was free but had no spare segment at its
    /// station (waiting for stock), hours per detected segment. The two add up to
    /// `queue.mean_wait_hours`.
    #[serde(default)]
    pub mean_wait_for_stock_hours: f64,
    /// Parts of a repair trip, hours per segment sent out (each is spliced unless the
    /// history ends first): turnaround and outbound travel at full speed.
    #[serde(default)]
    pub mean_trip_travel_hours: f64,
    /// The outbound delay of solar climbers in the Moon's shadow (waiting for light), hours
    /// per segment sent (0 with beamed power).
    #[serde(default)]
    pub mean_wait_for_light_hours: f64,
    /// Time on site from arrival to the end of the trip's splices, hours per segment sent.
    #[serde(default)]
    pub mean_trip_splice_hours: f64,
    /// Probability that a station runs out of stock when a job needs it, per station.
    pub stockout_probability: Vec<StationProbability>,
    /// Smallest initial stock per station that keeps the probability of any interval's demand
    /// exceeding it below the target.
    pub recommended_initial_stock: Vec<StationStock>,
    /// The stock-out target used.
    pub stockout_target: f64,
    /// Time-to-splice histogram as (bin centre hours, probability), for plots.
    pub time_to_splice_distribution: Vec<(f64, f64)>,
    /// Inspection and preventive replacement tallies (absent without the policy).
    #[serde(default)]
    pub preventive: Option<PreventiveSummary>,
    /// The repair concept (`climbers` or `looped_ribbon`; absent in older files: climbers).
    #[serde(default = "climbers_concept")]
    pub concept: String,
    /// What the looped-ribbon concept did (absent under the climber concept).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub looped: Option<LoopedSummary>,
    /// What the repair of cut cross-links did (absent without `repair.cross_link_repair`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cross_links: Option<CrossLinkRepairSummary>,
}

/// What the repair of cut cross-links did.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CrossLinkRepairSummary {
    /// Cross-links re-joined, all histories.
    pub repairs: u64,
    /// Cross-links re-joined per history.
    pub repairs_per_history: f64,
    /// Spare cross-links sent out, all histories.
    pub spares_used: u64,
    /// Detected cross-link cuts that waited for a spare (a climber free, no spare at its
    /// station), each counted once.
    pub stockout_events: u64,
    /// Cross-link cuts detected, all histories.
    pub detected: u64,
    /// Mean wait from detection to a climber's dispatch, hours per detected cross-link cut
    /// (waits still open at a history's end counted to that end).
    pub mean_wait_hours: f64,
}

fn climbers_concept() -> String {
    "climbers".into()
}

/// What the looped-ribbon repair concept did.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LoopedSummary {
    /// Repairs by concept: lengths hauled, spliced and back in place, all histories.
    pub repairs: u64,
    /// Damaged lengths hauled towards a station (repairs started), all histories.
    pub hauls_started: u64,
    /// Haul time per completed repair, to the station and back, hours (quantiles from the
    /// 2.3 %-bin histogram).
    pub haul_time_hours: DurationStats,
    /// Mean wait at the station for a splice position or a spare, hours per hauled length.
    pub mean_station_wait_hours: f64,
    /// Busy time of the stations' splice positions over the time available.
    pub splice_position_utilisation: f64,
}

/// What the inspection and preventive-replacement policy did.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PreventiveSummary {
    /// Intact segments replaced preventively, all histories.
    pub segments_replaced: u64,
    /// Of those, at repair visits.
    pub replaced_at_visits: u64,
    /// Of those, at periodic inspections.
    pub replaced_at_inspections: u64,
    /// Preventive replacements per history.
    pub replaced_per_history: f64,
    /// Spares used, all histories: splices of cut segments plus preventive replacements.
    pub spares_used: u64,
    /// Qualifying segments left in place for want of a spare.
    pub short_of_spares: u64,
    /// Bays inspected (visits and inspection steps).
    pub bays_inspected: u64,
    /// Periodic inspections started and skipped (no idle climber).
    pub inspections: u64,
    /// Periodic inspections skipped.
    pub inspections_skipped: u64,
}

/// Spare-ribbon demand.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SpareSummary {
    /// Per-station demand quantiles.
    pub demand_quantiles: Vec<StationDemand>,
}

/// Smallest value v with P(X <= v) >= p from integer counts.
/// The count quantile of a tally histogram ([`crate::stats::count_quantile`]): 0 when nothing
/// was counted.
fn count_quantile(hist: &[u64], p: f64) -> u64 {
    match crate::stats::count_quantile(hist, p) {
        Ok(v) => v,
        Err(StatsError::TooFewObservations { .. }) => 0,
        Err(_) => hist.len().saturating_sub(1) as u64,
    }
}

fn count_stats(hist: &[u64]) -> CountQuantiles {
    CountQuantiles {
        mean: count_mean(hist).unwrap_or(0.0),
        p50: count_quantile(hist, 0.5),
        p90: count_quantile(hist, 0.9),
        p95: count_quantile(hist, 0.95),
        p99: count_quantile(hist, 0.99),
    }
}

impl RunSummary {
    /// Repair and spare results from a tally (None without repair).
    pub fn repair_parts(
        engine: &Engine<'_>,
        tally: &Tally,
        stockout_target: f64,
    ) -> Option<(RepairSummary, SpareSummary)> {
        let plan = engine.repair_plan()?;
        let rt = &tally.repair;
        let conf = engine.model().scenario.run.confidence;
        let h = tally.histories.max(1) as f64;
        let years = engine.mission_years();
        let splice_total: u64 = rt.time_to_splice_hist.iter().sum();
        let splice_q = |p: f64| {
            RepairTally::splice_bin_centre_hours(count_quantile(&rt.time_to_splice_hist, p) as usize)
        };
        let time_to_splice_hours = DurationStats {
            mean: if rt.splices > 0 {
                rt.time_to_splice_sum_s as f64 / rt.splices as f64 / 3600.0
            } else {
                0.0
            },
            p50: if splice_total > 0 { splice_q(0.5) } else { 0.0 },
            p90: if splice_total > 0 { splice_q(0.9) } else { 0.0 },
            p99: if splice_total > 0 {
                splice_q(0.99)
            } else {
                0.0
            },
        };
        let observed_h = tally.time_observed_s as f64 / 3600.0;
        let climbers: u32 = plan.stations.iter().map(|s| s.climbers).sum();
        let arrival = if observed_h > 0.0 {
            rt.queue_arrivals as f64 / observed_h
        } else {
            0.0
        };
        let wait_h = if rt.queue_arrivals > 0 {
            rt.queue_wait_sum_s as f64 / rt.queue_arrivals as f64 / 3600.0
        } else {
            0.0
        };
        // Split the mean wait by the share of the waiting-time integral spent with no climber
        // free (the integral and the sum of waits are the same quantity by Little's law, both
        // counted to the end of each history).
        let no_climber_share = if rt.queue_area_s > 0 {
            (rt.queue_area_no_climber_s as f64 / rt.queue_area_s as f64).min(1.0)
        } else {
            0.0
        };
        let wait_for_climber_h = wait_h * no_climber_share;
        let per_sent = |sum_s: u64| {
            if rt.dispatched_segments > 0 {
                sum_s as f64 / rt.dispatched_segments as f64 / 3600.0
            } else {
                0.0
            }
        };
        let queue = LittleLaw {
            mean_waiting_segments: if observed_h > 0.0 {
                rt.queue_area_s as f64 / 3600.0 / observed_h
            } else {
                0.0
            },
            arrival_rate_per_hour: arrival,
            mean_wait_hours: wait_h,
            arrival_rate_times_wait: arrival * wait_h,
        };
        let mut stockout_probability = Vec::new();
        let mut recommended = Vec::new();
        let mut demand = Vec::new();
        for (i, s) in plan.stations.iter().enumerate() {
            stockout_probability.push(StationProbability {
                station: s.name.clone(),
                probability: cp(
                    rt.stockout_histories.get(i).copied().unwrap_or(0),
                    tally.histories,
                    conf,
                ),
            });
            let empty = Vec::new();
            let maxi = rt.demand_max_interval.get(i).unwrap_or(&empty);
            recommended.push(StationStock {
                station: s.name.clone(),
                segments: count_quantile(maxi, 1.0 - stockout_target),
            });
            let mission = rt.demand_mission.get(i).unwrap_or(&empty);
            let total: u64 = mission.iter().sum();
            let last = mission.iter().rposition(|&c| c > 0).unwrap_or(0);
            demand.push(StationDemand {
                station: s.name.clone(),
                mission: count_stats(mission),
                per_interval: count_stats(rt.demand_interval.get(i).unwrap_or(&empty)),
                max_per_interval: count_stats(maxi),
                interval_days: plan.demand_interval_s / 86_400.0,
                mission_distribution: mission[..=last]
                    .iter()
                    .map(|&c| {
                        if total > 0 {
                            c as f64 / total as f64
                        } else {
                            0.0
                        }
                    })
                    .collect(),
            });
        }
        let splice_dist = rt
            .time_to_splice_hist
            .iter()
            .enumerate()
            .filter(|(_, &c)| c > 0)
            .map(|(b, &c)| {
                (
                    RepairTally::splice_bin_centre_hours(b),
                    c as f64 / splice_total.max(1) as f64,
                )
            })
            .collect();
        let looped = plan.looped.as_ref().map(|l| {
            let total: u64 = rt.haul_time_hist.iter().sum();
            let q = |p: f64| {
                if total > 0 {
                    RepairTally::splice_bin_centre_hours(
                        count_quantile(&rt.haul_time_hist, p) as usize
                    )
                } else {
                    0.0
                }
            };
            let positions: u32 = l.splice_positions.iter().sum();
            LoopedSummary {
                repairs: rt.looped_repairs,
                hauls_started: rt.hauls,
                haul_time_hours: DurationStats {
                    mean: if rt.looped_repairs > 0 {
                        rt.haul_time_sum_s as f64 / rt.looped_repairs as f64 / 3600.0
                    } else {
                        0.0
                    },
                    p50: q(0.5),
                    p90: q(0.9),
                    p99: q(0.99),
                },
                mean_station_wait_hours: wait_h,
                splice_position_utilisation: if positions > 0 && tally.time_observed_s > 0 {
                    rt.busy_s as f64 / (f64::from(positions) * tally.time_observed_s as f64)
                } else {
                    0.0
                },
            }
        });
        Some((
            RepairSummary {
                concept: if looped.is_some() {
                    "looped_ribbon"
                } else {
                    "climbers"
                }
                .into(),
                looped,
                cross_links: plan.cross_link.as_ref().map(|_| CrossLinkRepairSummary {
                    repairs: rt.cross_link_repairs,
                    repairs_per_history: rt.cross_link_repairs as f64 / h,
                    spares_used: rt.cross_link_spares_used,
                    stockout_events: rt.cross_link_stockout_events,
                    detected: rt.cross_link_detections,
                    mean_wait_hours: if rt.cross_link_detections > 0 {
                        rt.cross_link_wait_sum_s as f64 / rt.cross_link_detections as f64 / 3600.0
                    } else {
                        0.0
                    },
                }),
                time_to_splice_hours,
                splices_per_year: if years > 0.0 {
                    rt.splices as f64 / h / years
                } else {
                    0.0
                },
                climber_utilisation: if plan.looped.is_none()
                    && climbers > 0
                    && tally.time_observed_s > 0
                {
                    rt.busy_s as f64 / (f64::from(climbers) * tally.time_observed_s as f64)
                } else {
                    0.0
                },
                queue,
                mean_wait_for_climber_hours: wait_for_climber_h,
                mean_wait_for_stock_hours: (wait_h - wait_for_climber_h).max(0.0),
                mean_trip_travel_hours: per_sent(rt.trip_travel_sum_s),
                mean_wait_for_light_hours: per_sent(rt.trip_wait_for_light_sum_s),
                mean_trip_splice_hours: per_sent(rt.trip_splice_sum_s),
                stockout_probability,
                recommended_initial_stock: recommended,
                stockout_target,
                time_to_splice_distribution: splice_dist,
                preventive: engine
                    .repair_plan()
                    .and_then(|p| p.preventive.as_ref())
                    .map(|_| PreventiveSummary {
                        segments_replaced: rt.preventive_replacements,
                        replaced_at_visits: rt.preventive_at_visits,
                        replaced_at_inspections: rt.preventive_at_inspections,
                        replaced_per_history: rt.preventive_replacements as f64 / h.max(1.0),
                        spares_used: rt.splices + rt.preventive_replacements,
                        short_of_spares: rt.preventive_short_of_spares,
                        bays_inspected: rt.bays_inspected,
                        inspections: rt.inspections,
                        inspections_skipped: rt.inspections_skipped,
                    }),
            },
            SpareSummary {
                demand_quantiles: demand,
            },
        ))
    }
}

/// Diagnostics of the rare-event (importance sampling) estimator.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RareEventSummary {
    /// Method and reference.
    pub method: String,
    /// The rare-event factor (`--rare-event`): strike (cut) rates on bays that already have a
    /// cut are multiplied by it (read as `boost_factor` in files of older versions).
    #[serde(alias = "boost_factor")]
    pub rare_event_factor: f64,
    /// Latent-damage bias: probability of the biased component of the defensive mixture for
    /// the worst sub-critical holes (0: off; absent in older files).
    #[serde(default)]
    pub latent_bias: f64,
    /// Conditional Monte Carlo at cuts (`--condition-cascades`; absent in older files: off).
    #[serde(default)]
    pub condition_cascades: bool,
    /// Conditional Monte Carlo: cuts at which a severance probability was scored (absent in
    /// older files).
    #[serde(default)]
    pub scored_cascades: u64,
    /// Weighted loss probability (interval only when resolved).
    pub loss_probability: LossProbability,
    /// Standard error of the estimate.
    pub std_error: f64,
    /// Standard error over the estimate (absent when no loss was seen).
    pub relative_error: Option<f64>,
    /// Kish effective sample size of the lost histories' weights.
    pub effective_sample_size: f64,
    /// Largest single weight over the sum of weights.
    pub largest_weight_share: f64,
    /// Histories that ended in loss under the biased measure.
    pub losses_observed: u64,
    /// Weighted cumulative loss probability by year. Per-year second moments and largest
    /// weights are not tallied, so each year uses bounds from the mission totals: the
    /// second moment `Σ w² 1{loss by y} <= Σ w² 1{loss}` and the largest weight `<= max w`.
    /// The standard error, effective sample size and weight share are therefore conservative
    /// (never more favourable than the truth), and so is the resolution decision.
    pub cumulative_by_year: Vec<LossProbability>,
}

impl RareEventSummary {
    fn from_tally(engine: &Engine<'_>, tally: &Tally, conf: f64) -> Option<Self> {
        if tally.weighted.is_empty() {
            return None;
        }
        let mut batches: Vec<&super::tally::WeightedBatch> = tally.weighted.iter().collect();
        batches.sort_by_key(|b| b.batch);
        let (mut sw, mut sw2, mut mx) = (0.0, 0.0, 0.0f64);
        let years = batches[0].sum_w_by_year.len();
        let mut by_year = vec![0.0; years];
        for b in &batches {
            sw += b.sum_w;
            sw2 += b.sum_w2;
            mx = mx.max(b.max_w);
            for (a, x) in by_year.iter_mut().zip(&b.sum_w_by_year) {
                *a += *x;
            }
        }
        let n = tally.histories;
        let total = WeightedProportion::from_sums(sw, sw2, mx, n);
        let lp = LossProbability::weighted(&total, conf);
        let mut cum = 0.0;
        let cumulative_by_year = by_year
            .iter()
            .map(|&w| {
                cum += w;
                // Bounds from the mission totals (see the field's notes).
                let year = WeightedProportion::from_sums(cum, sw2, mx.min(cum), n);
                LossProbability::weighted(&year, conf)
            })
            .collect();
        let mut parts = Vec::new();
        if engine.rare_event_factor() > 1.0 {
            parts.push("failure biasing by rate inflation on damaged bays (Heidelberger 1995, ACM TOMACS 5, 43)");
        }
        if engine.latent_bias() > 0.0 {
            parts.push("latent-damage bias: worst sub-critical holes from a defensive mixture toward the next critical width (Hesterberg 1995, Technometrics 37, 185)");
        }
        if engine.conditions_cascades() {
            parts.push("conditional Monte Carlo at cuts: each cut scores the exact probability that its cascade severs the bay and the history goes on conditioned on survival");
        }
        Some(RareEventSummary {
            method: format!("{}; likelihood-ratio weights", parts.join(" and ")),
            rare_event_factor: engine.rare_event_factor(),
            latent_bias: engine.latent_bias(),
            condition_cascades: engine.conditions_cascades(),
            scored_cascades: tally.scored_cascades,
            std_error: total.standard_error,
            relative_error: (total.estimate > 0.0).then(|| total.standard_error / total.estimate),
            effective_sample_size: total.effective_sample_size,
            largest_weight_share: total.largest_weight_share,
            loss_probability: lp,
            losses_observed: tally.losses,
            cumulative_by_year,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Source: the Clopper–Pearson check value of shared/ECOSYSTEM.md (independent reference):
    /// 3 failures in 1000 trials at 95 %: (6.190999e-4, 8.742023e-3).
    #[test]
    fn plain_loss_probability_carries_the_exact_interval() {
        let lp = LossProbability::plain(3, 1000, 0.95);
        assert_eq!(lp.estimate, 0.003);
        let (lo, hi) = lp.interval().unwrap();
        assert!((lo - 6.190999e-4).abs() < 1e-9, "{lo}");
        assert!((hi - 8.742023e-3).abs() < 1e-9, "{hi}");
        assert!(lp.resolved && !lp.is_weighted());
        assert_eq!(lp.effective_sample_size, 3.0);
    }

    /// Source: Clopper & Pearson (1934) with no event: the upper bound has the closed form
    /// 1 − (α/2)^(1/n); the lower bound is 0.
    #[test]
    fn no_loss_gives_the_closed_form_upper_bound() {
        let lp = LossProbability::plain(0, 2000, 0.95);
        let (lo, hi) = lp.interval().unwrap();
        assert_eq!(lo, 0.0);
        let want = 1.0 - 0.025f64.powf(1.0 / 2000.0);
        assert!((hi / want - 1.0).abs() < 1e-6, "{hi} vs {want}");
    }

    /// The tally's count histograms: nothing counted is 0, not an error; otherwise the
    /// definition-1 quantile of stats.
    #[test]
    fn count_summaries_of_tally_histograms() {
        assert_eq!(count_quantile(&[], 0.5), 0);
        assert_eq!(count_quantile(&[0, 0, 0], 0.95), 0);
        assert_eq!(count_quantile(&[5, 3, 2], 0.5), 0);
        assert_eq!(count_quantile(&[5, 3, 2], 0.8), 1);
        assert_eq!(count_quantile(&[5, 3, 2], 0.81), 2);
        let q = count_stats(&[5, 3, 2]);
        assert!((q.mean - 0.7).abs() < 1e-15);
        assert_eq!((q.p50, q.p90, q.p95, q.p99), (0, 2, 2, 2));
        assert_eq!(count_stats(&[]).mean, 0.0);
    }
}

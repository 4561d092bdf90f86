//! The run summary: estimates with intervals formed from a merged tally. It also carries the
//! raw tally so that shard results can be merged exactly later.

use serde::{Deserialize, Serialize};
use statrs::distribution::{ContinuousCDF, Normal};

use crate::stats::clopper_pearson;

use super::tally::Tally;
use super::{Engine, ALTITUDE_BANDS, BATCH_SIZE};

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

/// Survival to the end of a mission year.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct SurvivalPoint {
    /// Years since mission start.
    pub year: f64,
    /// Probability of no system loss by then.
    pub estimate: f64,
    /// Lower bound (Clopper–Pearson).
    pub ci_low: f64,
    /// Upper bound.
    pub ci_high: f64,
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
    /// Loss probability in this band, with its interval.
    pub loss_probability: Interval,
}

/// Losses by cause.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct CauseCounts {
    /// A strike cut the last surviving ribbon.
    pub direct_cut: u64,
    /// Overload cascade after a cut.
    pub cascade: u64,
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
    /// Mission length, years.
    pub mission_years: f64,
    /// Probability of at least one system loss by mission end.
    pub loss_probability: Interval,
    /// Survival by year.
    pub survival_by_year: Vec<SurvivalPoint>,
    /// Mean number of cut segments per history over the mission.
    pub mean_cuts: f64,
    /// Cut segments per year, whole tether.
    pub cuts_per_year: Interval,
    /// Cuts and losses by altitude band.
    pub cuts_by_altitude_band: Vec<BandRow>,
    /// Losses by cause.
    pub losses_by_cause: CauseCounts,
    /// Fraction of cuts that came from load redistribution.
    pub cascade_cut_fraction: f64,
    /// Mean sampled strikes per history (particles above the sampling floor).
    pub strikes_per_history: f64,
    /// Mean holes per history that cut nothing.
    pub subcritical_holes_per_history: f64,
    /// Histories by the largest number of cuts seen at once in one bay (index = cuts).
    pub max_cuts_in_one_bay: Vec<u64>,
    /// Fraction of mission time with at least one cut bay (mean over histories).
    pub fraction_of_time_with_cut_bay: f64,
    /// The raw counts (for merging shards).
    pub tally: Tally,
    /// The engineering caution.
    pub caution: String,
}

/// Two-sided normal quantile for a confidence level.
fn z_of(confidence: f64) -> f64 {
    Normal::new(0.0, 1.0)
        .map(|n| n.inverse_cdf(0.5 + confidence / 2.0))
        .unwrap_or(1.959963984540054)
}

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
    ) -> Self {
        let model = engine.model();
        let sc = &model.scenario;
        let conf = sc.run.confidence;
        let h = tally.histories.max(1) as f64;
        let years = engine.mission_years();
        let loss_probability = cp(tally.losses, tally.histories, conf);

        let mut survival_by_year = Vec::with_capacity(tally.losses_by_year.len());
        let mut cum = 0u64;
        for (y, &l) in tally.losses_by_year.iter().enumerate() {
            cum += l;
            let i = cp(cum, tally.histories, conf);
            survival_by_year.push(SurvivalPoint {
                year: ((y + 1) as f64).min(years),
                estimate: 1.0 - i.estimate,
                ci_low: 1.0 - i.ci_high,
                ci_high: 1.0 - i.ci_low,
            });
        }

        let mean = tally.cuts as f64 / h;
        let var = if tally.histories > 1 {
            ((tally.cuts_sq as f64) - (tally.cuts as f64).powi(2) / h).max(0.0) / (h - 1.0)
        } else {
            0.0
        };
        let se = (var / h).sqrt();
        let z = z_of(conf);
        let per_year = |x: f64| if years > 0.0 { x / years } else { 0.0 };
        let cuts_per_year = Interval {
            estimate: per_year(mean),
            ci_low: per_year((mean - z * se).max(0.0)),
            ci_high: per_year(mean + z * se),
            confidence: conf,
        };

        let top_km = model.profile.length_m() / 1e3;
        let cuts_by_altitude_band = (0..ALTITUDE_BANDS)
            .map(|b| BandRow {
                bottom_altitude_km: top_km * b as f64 / ALTITUDE_BANDS as f64,
                top_altitude_km: top_km * (b + 1) as f64 / ALTITUDE_BANDS as f64,
                cuts_per_year: per_year(tally.cuts_by_band.get(b).copied().unwrap_or(0) as f64 / h),
                losses: tally.losses_by_band.get(b).copied().unwrap_or(0),
                loss_probability: cp(
                    tally.losses_by_band.get(b).copied().unwrap_or(0),
                    tally.histories,
                    conf,
                ),
            })
            .collect();

        RunSummary {
            version: crate::VERSION.to_string(),
            scenario: sc.spec.name.clone(),
            scenario_hash: sc.hash_hex(),
            seed,
            histories_requested,
            histories: tally.histories,
            batch_size: BATCH_SIZE,
            shard: shard.map(|(i, n)| [i, n]),
            mission_years: years,
            loss_probability,
            survival_by_year,
            mean_cuts: mean,
            cuts_per_year,
            cuts_by_altitude_band,
            losses_by_cause: CauseCounts {
                direct_cut: tally.losses_by_cause[0],
                cascade: tally.losses_by_cause[1],
            },
            cascade_cut_fraction: if tally.cuts > 0 {
                tally.cascade_cuts as f64 / tally.cuts as f64
            } else {
                0.0
            },
            strikes_per_history: tally.strikes as f64 / h,
            subcritical_holes_per_history: tally.subcritical_holes as f64 / h,
            max_cuts_in_one_bay: tally.max_cuts_in_bay.clone(),
            fraction_of_time_with_cut_bay: if engine.mission_s() > 0.0 {
                tally.time_with_cut_bay_s as f64 / h / engine.mission_s()
            } else {
                0.0
            },
            tally,
            caution: crate::CAUTION.to_string(),
        }
    }
}

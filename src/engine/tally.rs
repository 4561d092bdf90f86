//! Tallies: what each history adds to its batch, merged batch by batch in order.
//!
//! Every plain score is an integer count (losses, cuts, sums of squares), so merging is exact
//! and cannot depend on thread scheduling. The one floating-point score is the weighted
//! estimator's likelihood-ratio sums ([`WeightedBatch`]): they are kept per batch and summed in
//! batch order when the summary is formed, so they too are the same bits at any thread count
//! and shard split.

use serde::{Deserialize, Serialize};

use crate::repair::RepairTally;

/// Why a bay lost its last load path.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LossCause {
    /// A strike cut the last surviving ribbon.
    DirectCut,
    /// A cut overloaded the survivors and they failed in a cascade.
    Cascade,
    /// The bay was lost while its repair waited for spare stock.
    StockoutDelay,
    /// A climber's weight arriving on the bay (travelling or splicing) overloaded its
    /// weakened ribbons.
    ClimberLoad,
}

/// Number of [`LossCause`] kinds.
pub const LOSS_CAUSES: usize = 4;

/// Tallies written before the climber-load cause hold three causes: read them as four.
fn causes_from_any<'de, D: serde::Deserializer<'de>>(d: D) -> Result<[u64; LOSS_CAUSES], D::Error> {
    let v: Vec<u64> = Vec::deserialize(d)?;
    if v.len() != 3 && v.len() != LOSS_CAUSES {
        return Err(serde::de::Error::custom(format!(
            "losses_by_cause has {} entries; expected 3 or {LOSS_CAUSES}",
            v.len()
        )));
    }
    let mut out = [0; LOSS_CAUSES];
    out[..v.len()].copy_from_slice(&v);
    Ok(out)
}

/// A system loss inside one history.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Loss {
    /// Time since mission start, s.
    pub time_s: f64,
    /// Bay index.
    pub bay: u32,
    /// Cause.
    pub cause: LossCause,
}

/// Mergeable counts for a set of histories.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Tally {
    /// Histories run.
    pub histories: u64,
    /// Histories that ended in system loss.
    pub losses: u64,
    /// Losses by cause: [direct cut, cascade, stock-out delay, climber load].
    #[serde(deserialize_with = "causes_from_any")]
    pub losses_by_cause: [u64; LOSS_CAUSES],
    /// Losses whose time falls in mission year y (0-based), y < years.
    pub losses_by_year: Vec<u64>,
    /// Losses by altitude band.
    pub losses_by_band: Vec<u64>,
    /// Sum over histories of cut segments.
    pub cuts: u64,
    /// Sum over histories of squared cut counts (for the interval on cuts per year).
    pub cuts_sq: u128,
    /// Cuts by altitude band.
    pub cuts_by_band: Vec<u64>,
    /// Cuts in each mission year.
    pub cuts_by_year: Vec<u64>,
    /// Cuts by calendar month of the year (0 = January; the scenario's
    /// `environment.mission_start_day_of_year` places mission time in the year). Unweighted
    /// counts.
    #[serde(default = "twelve")]
    pub cuts_by_month: Vec<u64>,
    /// Losses by calendar month of the year (unweighted counts).
    #[serde(default = "twelve")]
    pub losses_by_month: Vec<u64>,
    /// Cuts that were caused by load redistribution (not by a strike's own hole).
    pub cascade_cuts: u64,
    /// Cuts caused by a climber's weight arriving on a bay (a subset of `cascade_cuts`).
    #[serde(default)]
    pub climber_load_cuts: u64,
    /// Cross-links cut (`tether.cross_link_hits`; absent from files when zero).
    #[serde(default, skip_serializing_if = "is_zero")]
    pub cross_link_cuts: u64,
    /// Time cross-links spent cut, summed over stations and histories, s (absent from files
    /// when zero).
    #[serde(default, skip_serializing_if = "is_zero")]
    pub cross_link_down_s: u64,
    /// Conditional Monte Carlo at cuts: cuts at which a severance probability was scored
    /// (absent from files when zero).
    #[serde(default, skip_serializing_if = "is_zero")]
    pub scored_cascades: u64,
    /// Strikes sampled (above the floor).
    pub strikes: u64,
    /// Strikes that made a hole but cut nothing (sub-critical damage).
    pub subcritical_holes: u64,
    /// Strikes whose own hole cut the struck segment.
    #[serde(default)]
    pub cutting_holes: u64,
    /// Of those, holes outside the hole law's calibration range
    /// (`PerforationLaw::is_extrapolated`).
    #[serde(default)]
    pub cutting_holes_extrapolated: u64,
    /// On-demand (which draws no particle): the expected number of extrapolated cutting holes,
    /// the sum over cuts of the extrapolated share of the holes at least the segment's critical
    /// width, in units of 1e-9 hole (fixed point, so that sums are exact in any merge order).
    #[serde(default)]
    pub cutting_holes_extrapolated_expected_e9: u64,
    /// Histogram of the largest number of cuts seen at once in one bay (index = cuts).
    pub max_cuts_in_bay: Vec<u64>,
    /// Sum over histories of mission time with at least one cut bay, s (rounded to whole s).
    pub time_with_cut_bay_s: u64,
    /// Sum over histories of the time observed (mission, or until loss), s.
    pub time_observed_s: u64,
    /// Repair logistics counts (empty without repair).
    pub repair: RepairTally,
    /// Histories that reached an impossible state.
    pub anomalies: u64,
    /// The first (lowest-index) such histories and why, at most [`ANOMALY_EXAMPLES`].
    pub anomaly_examples: Vec<(u64, String)>,
    /// Rare-event estimator: one record per batch (empty for plain Monte Carlo). Float sums are
    /// kept per batch and folded in batch order when the summary is formed, so the result does
    /// not depend on threads or shards.
    pub weighted: Vec<WeightedBatch>,
}

fn is_zero(x: &u64) -> bool {
    *x == 0
}

/// How many anomalous histories a tally lists by index.
pub const ANOMALY_EXAMPLES: usize = 10;

impl Tally {
    /// Count a history that reached an impossible state.
    pub fn record_anomaly(&mut self, history: u64, reason: &str) {
        self.anomalies += 1;
        if self.anomaly_examples.len() < ANOMALY_EXAMPLES {
            self.anomaly_examples.push((history, reason.to_string()));
        }
    }
}

/// Likelihood-ratio sums of one batch (rare-event estimator).
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct WeightedBatch {
    /// Batch index.
    pub batch: u64,
    /// Sum of weight x loss indicator.
    pub sum_w: f64,
    /// Sum of squared weight x loss indicator.
    pub sum_w2: f64,
    /// Largest single weight of a lost history.
    pub max_w: f64,
    /// Sum of weight x indicator of a loss in each mission year.
    pub sum_w_by_year: Vec<f64>,
}

impl Tally {
    /// An empty tally with the given numbers of years, altitude bands and ribbons.
    pub fn new(years: usize, bands: usize, ribbons: usize, stations: usize) -> Self {
        Tally {
            losses_by_year: vec![0; years],
            losses_by_band: vec![0; bands],
            cuts_by_band: vec![0; bands],
            cuts_by_year: vec![0; years],
            cuts_by_month: vec![0; 12],
            losses_by_month: vec![0; 12],
            max_cuts_in_bay: vec![0; ribbons + 1],
            repair: RepairTally::new(stations, years),
            ..Default::default()
        }
    }

    /// Add another tally (order-independent because all fields are integers).
    pub fn merge(&mut self, o: &Tally) {
        self.histories += o.histories;
        self.losses += o.losses;
        for i in 0..LOSS_CAUSES {
            self.losses_by_cause[i] += o.losses_by_cause[i];
        }
        add(&mut self.losses_by_year, &o.losses_by_year);
        add(&mut self.losses_by_band, &o.losses_by_band);
        self.cuts += o.cuts;
        self.cuts_sq += o.cuts_sq;
        add(&mut self.cuts_by_band, &o.cuts_by_band);
        add(&mut self.cuts_by_year, &o.cuts_by_year);
        add(&mut self.cuts_by_month, &o.cuts_by_month);
        add(&mut self.losses_by_month, &o.losses_by_month);
        self.cascade_cuts += o.cascade_cuts;
        self.climber_load_cuts += o.climber_load_cuts;
        self.cross_link_cuts += o.cross_link_cuts;
        self.cross_link_down_s += o.cross_link_down_s;
        self.strikes += o.strikes;
        self.scored_cascades += o.scored_cascades;
        self.subcritical_holes += o.subcritical_holes;
        self.cutting_holes += o.cutting_holes;
        self.cutting_holes_extrapolated += o.cutting_holes_extrapolated;
        self.cutting_holes_extrapolated_expected_e9 += o.cutting_holes_extrapolated_expected_e9;
        add(&mut self.max_cuts_in_bay, &o.max_cuts_in_bay);
        self.time_with_cut_bay_s += o.time_with_cut_bay_s;
        self.time_observed_s += o.time_observed_s;
        self.anomalies += o.anomalies;
        self.anomaly_examples
            .extend(o.anomaly_examples.iter().cloned());
        self.anomaly_examples.sort();
        self.anomaly_examples.truncate(ANOMALY_EXAMPLES);
        self.weighted.extend(o.weighted.iter().cloned());
        self.repair.merge(&o.repair);
    }
}

fn twelve() -> Vec<u64> {
    vec![0; 12]
}

fn add(a: &mut Vec<u64>, b: &[u64]) {
    if a.len() < b.len() {
        a.resize(b.len(), 0);
    }
    for (x, y) in a.iter_mut().zip(b) {
        *x += *y;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn part(histories: u64, losses: u64, batch: u64) -> Tally {
        let mut t = Tally::new(2, 3, 4, 1);
        t.histories = histories;
        t.losses = losses;
        t.losses_by_cause[0] = losses;
        t.losses_by_year[1] = losses;
        t.cuts = 3 * losses;
        t.cuts_sq = 9 * u128::from(losses);
        t.max_cuts_in_bay[2] = histories;
        t.weighted.push(WeightedBatch {
            batch,
            sum_w: 0.5,
            sum_w2: 0.25,
            max_w: 0.5,
            sum_w_by_year: vec![0.0, 0.5],
        });
        t.record_anomaly(batch * 1000, "test");
        t
    }

    /// Source: the definition (a tally is counts; merging adds them). Merging is the same in
    /// either order for every count; the weighted batches keep their batch numbers (the engine
    /// sorts them into batch order) and the anomaly examples are kept sorted and capped.
    #[test]
    fn merge_adds_counts_in_any_order() {
        let (a, b) = (part(1000, 2, 0), part(500, 1, 7));
        let mut ab = a.clone();
        ab.merge(&b);
        let mut ba = b.clone();
        ba.merge(&a);
        assert_eq!(
            (ab.histories, ab.losses, ab.cuts, ab.cuts_sq),
            (1500, 3, 9, 27)
        );
        assert_eq!(ab.losses_by_year, vec![0, 3]);
        assert_eq!(ab.max_cuts_in_bay, vec![0, 0, 1500, 0, 0]);
        assert_eq!(ab.anomalies, 2);
        assert_eq!(ab.anomaly_examples, ba.anomaly_examples);
        ab.weighted.sort_by_key(|w| w.batch);
        ba.weighted.sort_by_key(|w| w.batch);
        assert_eq!(ab, ba);
        // The empty tally is the identity.
        let mut e = Tally::new(2, 3, 4, 1);
        e.merge(&a);
        assert_eq!(e, a);
    }

    /// A shorter vector (a tally from a shorter layout) is extended, never truncated.
    #[test]
    fn merge_extends_shorter_vectors() {
        let mut a = Tally::new(1, 1, 1, 0);
        let b = part(10, 1, 0);
        a.merge(&b);
        assert_eq!(a.losses_by_year, vec![0, 1]);
        assert_eq!(a.max_cuts_in_bay.len(), 5);
    }
}

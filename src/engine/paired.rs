//! Paired runs: the same histories under two variants of one design (common random numbers).
//!
//! History `h` of both engines draws from the same (seed, purpose, h) streams, so two variants
//! that differ only in a policy (say, preventive replacement of holed segments) see the same
//! strikes and differ only where the policy acts. Counting, history by history, whether each
//! variant lost the system gives the 2 x 2 table of paired outcomes; the difference of the
//! two loss probabilities then has Newcombe's paired score interval
//! ([`crate::stats::newcombe_paired`]), which is much narrower than the interval for two
//! independent runs when the variants mostly agree.
//!
//! Plain (unweighted) engines only: a weighted history's outcome is not a 0/1 count.
//! The counts are integers, merged in any order: the result does not depend on threads.

use std::sync::atomic::{AtomicBool, Ordering};

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use super::{Engine, EngineError, RunOptions, Tally, BATCH_SIZE, STOP_REQUESTED};
use crate::stats::newcombe_paired;

/// Interval method named in outputs for the paired difference.
pub const PAIRED_INTERVAL_METHOD: &str =
    "Newcombe 1998 paired score interval (method 10), same histories under both variants";

/// The effect of a preventive-replacement policy: the same histories run with and without it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PolicyEffect {
    /// The policy, in words.
    pub policy: String,
    /// True when the run this belongs to is the variant with the policy (`--compare-policy`);
    /// false when the policy was added to the run's design for the comparison (the demo).
    pub run_has_policy: bool,
    /// Histories run under both variants (the first `histories` of the run's seed).
    pub histories: u64,
    /// Master seed.
    pub seed: u64,
    /// Losses with the policy.
    pub losses_with_policy: u64,
    /// Losses without the policy.
    pub losses_without_policy: u64,
    /// Histories lost under both variants.
    pub lost_in_both: u64,
    /// Histories lost only with the policy (it can cost a loss: a replacement takes a
    /// climber and spares that a later cut then lacks).
    pub lost_only_with_policy: u64,
    /// Histories lost only without the policy (losses it prevented).
    pub lost_only_without_policy: u64,
    /// Loss probability with the policy.
    pub loss_probability_with_policy: f64,
    /// Loss probability without the policy.
    pub loss_probability_without_policy: f64,
    /// Difference, with minus without (negative: the policy lowers the risk).
    pub difference: f64,
    /// Lower bound of the difference.
    pub difference_low: f64,
    /// Upper bound of the difference.
    pub difference_high: f64,
    /// Confidence level of the interval.
    pub confidence: f64,
    /// Interval method.
    pub interval_method: String,
    /// True when the interval excludes zero: the policy's effect is resolved by this run.
    pub resolved: bool,
    /// Segments replaced preventively per history (with the policy).
    pub replaced_per_history: f64,
    /// Spare segments used per history with the policy (splices plus replacements).
    pub spares_per_history_with_policy: f64,
    /// Spare segments used per history without the policy (splices).
    pub spares_per_history_without_policy: f64,
    /// Segments that qualified for replacement but were left for want of a spare, per history.
    #[serde(default)]
    pub short_of_spares_per_history: f64,
}

impl PolicyEffect {
    /// The effect from a paired run whose first engine had the policy and whose second did not.
    ///
    /// # Errors
    /// [`EngineError::Options`] for an empty run or a bad confidence level.
    pub fn from_paired(
        policy: String,
        run_has_policy: bool,
        seed: u64,
        with_first: &PairedOutcome,
        confidence: f64,
    ) -> Result<Self, EngineError> {
        let c = &with_first.counts;
        let d = newcombe_paired(
            c.lost_in_both,
            c.lost_only_first,
            c.lost_only_second,
            c.lost_in_neither(),
            confidence,
        )
        .map_err(|e| EngineError::Options(format!("paired interval: {e}")))?;
        let n = c.histories as f64;
        let spares = |t: &Tally| (t.repair.splices + t.repair.preventive_replacements) as f64 / n;
        Ok(PolicyEffect {
            policy,
            run_has_policy,
            histories: c.histories,
            seed,
            losses_with_policy: c.losses_first(),
            losses_without_policy: c.losses_second(),
            lost_in_both: c.lost_in_both,
            lost_only_with_policy: c.lost_only_first,
            lost_only_without_policy: c.lost_only_second,
            loss_probability_with_policy: c.losses_first() as f64 / n,
            loss_probability_without_policy: c.losses_second() as f64 / n,
            difference: d.estimate,
            difference_low: d.low,
            difference_high: d.high,
            confidence,
            interval_method: PAIRED_INTERVAL_METHOD.to_string(),
            resolved: d.excludes_zero(),
            replaced_per_history: with_first.first.repair.preventive_replacements as f64 / n,
            spares_per_history_with_policy: spares(&with_first.first),
            spares_per_history_without_policy: spares(&with_first.second),
            short_of_spares_per_history: with_first.first.repair.preventive_short_of_spares as f64
                / n,
        })
    }
}

/// Paired outcomes of the same histories under two engines, `first` and `second`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct PairedCounts {
    /// Histories run under both.
    pub histories: u64,
    /// Histories lost under both.
    pub lost_in_both: u64,
    /// Histories lost under the first only.
    pub lost_only_first: u64,
    /// Histories lost under the second only.
    pub lost_only_second: u64,
}

impl PairedCounts {
    /// Histories lost under neither.
    pub fn lost_in_neither(&self) -> u64 {
        self.histories - self.lost_in_both - self.lost_only_first - self.lost_only_second
    }

    /// Losses under the first engine.
    pub fn losses_first(&self) -> u64 {
        self.lost_in_both + self.lost_only_first
    }

    /// Losses under the second engine.
    pub fn losses_second(&self) -> u64 {
        self.lost_in_both + self.lost_only_second
    }

    fn add(&mut self, o: &PairedCounts) {
        self.histories += o.histories;
        self.lost_in_both += o.lost_in_both;
        self.lost_only_first += o.lost_only_first;
        self.lost_only_second += o.lost_only_second;
    }
}

/// What a paired run returns: the table of paired outcomes and each engine's own tally (so
/// either variant's figures, such as spares used, can be reported beside the difference).
#[derive(Clone, Debug)]
pub struct PairedOutcome {
    /// The 2 x 2 table.
    pub counts: PairedCounts,
    /// The first engine's tally over the same histories.
    pub first: Tally,
    /// The second engine's tally over the same histories.
    pub second: Tally,
}

impl<'m> Engine<'m> {
    /// Run histories `0..opts.histories` under this engine and `other` (the shard and target
    /// of `opts` are not used), history by history, and count the paired outcomes.
    ///
    /// # Errors
    /// [`EngineError::Options`] when either engine is weighted, the two engines' tallies have
    /// different shapes (not two variants of one design), or the thread pool cannot start;
    /// [`EngineError::Interrupted`] when a stop was requested.
    pub fn run_paired(
        &self,
        other: &Engine<'_>,
        opts: &RunOptions,
        stop: Option<&AtomicBool>,
    ) -> Result<PairedOutcome, EngineError> {
        if self.is_weighted() || other.is_weighted() {
            return Err(EngineError::Options(
                "a paired comparison needs plain Monte Carlo on both sides (no --rare-event, --latent-bias or --condition-cascades)".into(),
            ));
        }
        let (a, b) = (self.empty_tally(), other.empty_tally());
        if a.losses_by_year.len() != b.losses_by_year.len()
            || a.losses_by_band.len() != b.losses_by_band.len()
            || a.max_cuts_in_bay.len() != b.max_cuts_in_bay.len()
        {
            return Err(EngineError::Options(
                "a paired comparison needs two variants of one design (same mission, length and ribbon count)".into(),
            ));
        }
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(opts.threads)
            .build()
            .map_err(|e| EngineError::Options(format!("cannot start worker threads: {e}")))?;
        let stopped = || {
            STOP_REQUESTED.load(Ordering::Relaxed)
                || stop.is_some_and(|s| s.load(Ordering::Relaxed))
        };
        let batches = opts.histories.div_ceil(BATCH_SIZE);
        let mut out = PairedOutcome {
            counts: PairedCounts::default(),
            first: a,
            second: b,
        };
        // Chunks of batches, folded as each finishes: memory stays flat in the history count.
        const CHUNK: u64 = 64;
        for chunk in 0..batches.div_ceil(CHUNK) {
            let range = chunk * CHUNK..batches.min((chunk + 1) * CHUNK);
            let results: Vec<Option<(PairedCounts, Tally, Tally)>> = pool.install(|| {
                range
                    .into_par_iter()
                    .map_init(
                        || (self.new_scratch(), other.new_scratch()),
                        |(sa, sb), batch| {
                            let mut counts = PairedCounts::default();
                            let (mut ta, mut tb) = (self.empty_tally(), other.empty_tally());
                            let lo = batch * BATCH_SIZE;
                            let hi = opts.histories.min(lo + BATCH_SIZE);
                            for h in lo..hi {
                                if stopped() {
                                    return None;
                                }
                                let oa =
                                    self.run_history_until(h, opts.seed, sa, &mut ta, None, stop);
                                let ob =
                                    other.run_history_until(h, opts.seed, sb, &mut tb, None, stop);
                                if oa.stopped || ob.stopped {
                                    return None;
                                }
                                counts.histories += 1;
                                match (oa.loss.is_some(), ob.loss.is_some()) {
                                    (true, true) => counts.lost_in_both += 1,
                                    (true, false) => counts.lost_only_first += 1,
                                    (false, true) => counts.lost_only_second += 1,
                                    (false, false) => {}
                                }
                            }
                            Some((counts, ta, tb))
                        },
                    )
                    .collect()
            });
            // Batch order (integer tallies: any order gives the same bits; this one is explicit).
            for r in results {
                let (c, ta, tb) = r.ok_or(EngineError::Interrupted)?;
                out.counts.add(&c);
                out.first.merge(&ta);
                out.second.merge(&tb);
            }
        }
        Ok(out)
    }
}

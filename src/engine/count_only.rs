//! Count-only bays: the on-demand sampler's exact shortcut when a bay's state is its cut count.
//!
//! # When a bay is described by one number
//! The on-demand sampler ([`super::ondemand`]) follows each bay's worst holes because a
//! sub-critical hole can turn into a cut when the bay's loads rise. That memory is empty when
//! **every hole above the size floor cuts** in every load state the bay can be in: the floor is
//! then the critical width of every intact segment (the fraction-of-width rule is the common
//! case: a hole wider than a fixed share of the width severs a ribbon whatever its load). With
//! in addition
//! - a uniform load-sharing rule (every intact ribbon of a bay carries the same load, which
//!   depends only on how many are intact: equal sharing, Daniels 1945),
//! - constant bay tensions (no climbers' weight, no repair, no inspections),
//! - no cross-link hits and no meteor streams (no time-varying rates),
//!
//! bay j with k intact ribbons is cut at the rate ρ_j(k) = k r_j(k) (r_j(k) the cut rate of one
//! segment at the load of k intact ribbons), every intact ribbon equally likely, and a cut
//! either leaves the k - 1 survivors able to carry the tension or cascades through all of
//! them. Bays never interact. The history is a set of independent pure-birth chains.
//!
//! # Sampling it exactly at a few nanoseconds per cut
//! Let D_j = max_k ρ_j(k) over the counts the bay can hold. The superposition of Poisson
//! processes of rates D_j over the bays is one process of rate D = Σ_j D_j whose events fall on
//! bay j with probability D_j / D (alias table). A candidate on bay j when it holds k intact
//! ribbons is kept with probability ρ_j(k) / D_j and otherwise discarded (thinning, Lewis &
//! Shedler 1979, "Simulation of nonhomogeneous Poisson processes by thinning", Naval Research
//! Logistics Quarterly 26, 403): the kept events of bay j are then exactly its birth chain.
//! Under the fraction rule ρ_j(k) = k λ_j, D_j = N λ_j, so the first candidate on a bay is
//! always kept and later ones with probability k / N: a candidate that falls on an already cut
//! ribbon changes nothing.
//!
//! Each candidate costs one exponential gap, one alias draw and, on a damaged bay, one coin;
//! each kept one, a table look-up of its cascade and the common scores
//! ([`Engine::record_cuts`]). Nothing per segment is recomputed: no loads, critical widths,
//! rates or worst-hole draws, all of which are constant or empty here. The general on-demand
//! history loop ([`super::events`]) gives the same law with more work per cut; the two are
//! compared by a two-sample test in `tests/integration/count_only.rs`.
//!
//! # Scores
//! Identical to the general loop's: the cut and cascade counts, cuts by altitude band, year and
//! month, the time with a cut bay, the largest cut count in a bay, the loss with its time, bay
//! and cause, and the hole-rate extrapolation share of each cut as an expectation (a table per
//! bay and intact count). Under `--replay-history` each kept cut also logs the width it removed,
//! drawn from P(X >= x | X >= c) = H(x) / H(c) on the damage stream, which the history's
//! outcome never reads (so a replayed history is the history the run scored). Cuts fill a
//! bay's ribbons in order (0, 1, 2, ...), so a replay's ribbon numbers say how many were cut
//! before, not which ribbon (under a uniform rule nothing depends on which).
//!
//! Not used (the general loop runs instead) under the rare-event estimator, the latent-damage
//! bias or conditional Monte Carlo at cuts, whose weights live in the general loop.

use std::sync::atomic::{AtomicBool, Ordering};

use rand::RngExt;
use rand_distr::Exp1;

use crate::model::Model;
use crate::stats::AliasTable;
use crate::structure::load_sharing::{settle_bay, LoadSharing, MAX_RIBBONS};

use super::history::{HistoryOutcome, LogEvent, Scratch};
use super::ondemand::{OnDemandTables, UniformLevels};
use super::rng::{stream, Purpose};
use super::sampler::unit;
use super::tally::Tally;
use super::Engine;

/// Largest expected number of sub-critical holes (between the floor and the critical width)
/// over the tether and the mission for which a scenario counts as count-only. Rounding in the
/// hole-rate table leaves H(floor) - H(c) at about 1e-16 of H where the law has no such holes
/// (fraction of width: 1e-24 /s on the demo's bays); leaving them out changes any probability
/// by at most this expectation (a chosen bound, far below what Monte Carlo resolves).
const MAX_SUB_CRITICAL_HOLES: f64 = 1e-9;

/// Candidates between two polls of the stop flag.
const CANDIDATES_PER_STOP_POLL: u64 = 1024;

/// What a cut at a given intact count does to the bay.
#[derive(Clone, Copy, Debug, PartialEq)]
struct CutStep {
    /// Rate of the bay's next cut, ρ_j(k) = k r_j(k), 1/s.
    rate_s: f64,
    /// Ribbons the cascade cuts after the hole's cut (0 or all survivors).
    cascade: u32,
    /// Intact ribbons left after the cut and its cascade.
    survivors: u32,
    /// Expected share of the cut's hole from the extrapolated part of the hole-rate table,
    /// times 1e9 (the general loop's `cutting_holes_extrapolated_expected_e9` increment).
    extrapolated_e9: u64,
    /// Critical width of the cut segment, m (for the removed width in an event log).
    critical_m: f64,
}

/// Tables of the count-only shortcut, built once per engine when the scenario qualifies.
#[derive(Debug)]
pub(crate) struct CountOnly {
    n: usize,
    /// Per bay and intact count k = 0..=N (stride N + 1; k = 0 unused).
    steps: Vec<CutStep>,
    /// Dominating rate D_j per bay, 1/s.
    dominating_s: Vec<f64>,
    /// Bay of a candidate, in proportion to D_j.
    alias: AliasTable,
    /// 1 / D, D = Σ_j D_j: the mean gap between candidates, s.
    mean_gap_s: f64,
}

/// Why a scenario is not sampled count-only (for `check` and the tests).
pub(crate) fn ineligible(
    model: &Model,
    has_repair: bool,
    has_climber_load: bool,
    has_cross_links: bool,
    levels: Option<&UniformLevels>,
    od: &OnDemandTables,
) -> Option<&'static str> {
    if model.scenario.synthetic_rates.is_some() {
        return Some("synthetic-rates mode");
    }
    if has_repair {
        return Some("repair changes bays' state");
    }
    if has_climber_load {
        return Some("climbers change bay tensions");
    }
    if has_cross_links {
        return Some("cross-link hits merge bays");
    }
    if !od.stream_holes.is_empty() {
        return Some("meteor streams make rates vary in time");
    }
    let Some(levels) = levels else {
        return Some("the load-sharing rule's loads depend on which ribbons are cut");
    };
    let n = model.profile.design.ribbon_count;
    // Expected number of holes between the floor and the critical width over every segment
    // and the whole mission, at the worst intact count of each bay: an upper bound on the
    // probability that any such hole exists, and so on what leaving them out can change.
    let mut sub_critical = 0.0;
    for j in 0..model.profile.bays.len() {
        let hr = od.holes.bay(j);
        for k in 1..=n {
            let excess = hr.floor_rate_per_s() - levels.get(j, k).2;
            if !excess.is_finite() {
                return Some("a bay's hole-rate table is not finite");
            }
        }
        let worst = (1..=n)
            .map(|k| (hr.floor_rate_per_s() - levels.get(j, k).2).max(0.0))
            .fold(0.0, f64::max);
        sub_critical += worst * n as f64 * model.scenario.run.mission_s;
    }
    if !(sub_critical.is_finite() && sub_critical <= MAX_SUB_CRITICAL_HOLES) {
        return Some("sub-critical holes are possible (the cut rule depends on load)");
    }
    None
}

impl CountOnly {
    /// The tables, or why they cannot be built (then the general loop runs).
    pub(crate) fn new(
        model: &Model,
        od: &OnDemandTables,
        levels: &UniformLevels,
        sharing: &dyn LoadSharing,
    ) -> Result<Self, &'static str> {
        let p = &model.profile;
        let n = p.design.ribbon_count;
        if n == 0 || n > MAX_RIBBONS {
            return Err("ribbon count outside the cascade tables");
        }
        let mut steps = Vec::with_capacity(p.bays.len() * (n + 1));
        let mut dominating_s = Vec::with_capacity(p.bays.len());
        for (j, bay) in p.bays.iter().enumerate() {
            let hr = od.holes.bay(j);
            let full = p.ribbon_capacity_n(j, 0.0);
            let capacity = [full; MAX_RIBBONS];
            let mut d = 0.0f64;
            steps.push(CutStep {
                rate_s: 0.0,
                cascade: 0,
                survivors: 0,
                extrapolated_e9: 0,
                critical_m: 0.0,
            });
            for k in 1..=n {
                let (_, c, r) = levels.get(j, k);
                // After the cut: k - 1 intact ribbons with no holes (nothing sub-critical).
                let mut intact = [false; MAX_RIBBONS];
                intact[..k - 1].fill(true);
                let outcome =
                    settle_bay(sharing, &mut intact[..n], &capacity[..n], bay.max_tension_n)
                        .map_err(|_| "the cascade could not be tabulated")?;
                if outcome.newly_cut > 0 && outcome.survivors > 0 {
                    // A partial cascade: which ribbons fail would matter; not tabulated.
                    return Err("a cascade can leave survivors");
                }
                let rate_s = k as f64 * r;
                if !(rate_s.is_finite() && rate_s >= 0.0) {
                    return Err("a bay's cut rate is not finite");
                }
                d = d.max(rate_s);
                steps.push(CutStep {
                    rate_s,
                    cascade: outcome.newly_cut,
                    survivors: outcome.survivors,
                    extrapolated_e9: (hr.extrapolated_share_at_least(c) * 1e9).round() as u64,
                    critical_m: c,
                });
            }
            dominating_s.push(d);
        }
        let total_s: f64 = dominating_s.iter().sum();
        if !(total_s > 0.0 && total_s.is_finite()) {
            return Err("no bay can be cut");
        }
        let alias = AliasTable::new(&dominating_s).map_err(|_| "the bay alias table failed")?;
        Ok(CountOnly {
            n,
            steps,
            dominating_s,
            alias,
            mean_gap_s: 1.0 / total_s,
        })
    }

    #[inline]
    fn step(&self, j: usize, intact: usize) -> &CutStep {
        &self.steps[j * (self.n + 1) + intact]
    }
}

impl Engine<'_> {
    /// One history of a count-only scenario (see the module notes): candidates at the
    /// dominating rates, thinned to each bay's birth chain, scored as the general loop scores.
    pub(crate) fn run_count_only_history(
        &self,
        index: u64,
        seed: u64,
        scratch: &mut Scratch,
        tally: &mut Tally,
        mut log: Option<&mut Vec<LogEvent>>,
        stop: Option<&AtomicBool>,
    ) -> HistoryOutcome {
        let Ok(co) = self.active_count_only() else {
            return HistoryOutcome {
                anomaly: Some("count-only history run on a scenario that does not qualify"),
                ..HistoryOutcome::default()
            };
        };
        scratch.reset();
        let mut rng = stream(seed, Purpose::Strikes, index);
        let mut damage = log.is_some().then(|| stream(seed, Purpose::Damage, index));
        let mut out = HistoryOutcome {
            weight: 1.0,
            ..HistoryOutcome::default()
        };
        let n = self.ribbons;
        let mut t = 0.0;
        let mut candidates = 0u64;
        loop {
            // Ziggurat exponential (rand_distr's Exp1; Marsaglia & Tsang 2000): no logarithm on
            // the common path.
            t += rng.sample::<f64, _>(Exp1) * co.mean_gap_s;
            if t > self.mission_s {
                break;
            }
            candidates += 1;
            if candidates % CANDIDATES_PER_STOP_POLL == 0
                && stop.is_some_and(|s| s.load(Ordering::Relaxed))
            {
                out.stopped = true;
                return out;
            }
            let j = co.alias.sample(&mut rng);
            let cut_before = scratch.cuts_in(j as u32) as usize;
            let intact = n - cut_before.min(n);
            let step = *co.step(j, intact);
            let d = co.dominating_s[j];
            if step.rate_s < d && unit(&mut rng) * d >= step.rate_s {
                continue; // thinned: not an event of this bay's chain
            }
            let bay = j as u32;
            let slot = scratch.slot(bay, n);
            let base = slot * n;
            // Cuts fill the bay's ribbons in order: under a uniform rule which ribbon is cut
            // changes nothing that is scored.
            scratch.intact[base + cut_before] = false;
            if step.cascade > 0 {
                scratch.intact[base..base + n].fill(false);
            }
            tally.cutting_holes += 1;
            tally.cutting_holes_extrapolated_expected_e9 += step.extrapolated_e9;
            if let (Some(l), Some(rng_d), Some(od)) =
                (log.as_deref_mut(), damage.as_mut(), self.on_demand.as_ref())
            {
                let hr = od.holes.bay(j);
                let c = step.critical_m;
                let removed = hr.width_with_rate_m(unit(rng_d) * hr.rate_at_least_per_s(c));
                scratch.worst_hole_m[base + cut_before] = removed.max(c).min(hr.width_m());
                l.push(LogEvent::CutHole {
                    time_s: t,
                    bay,
                    ribbon: cut_before as u32,
                    removed_m: removed,
                });
            }
            let loss = self.record_cuts(
                t,
                bay,
                slot,
                1 + step.cascade,
                step.cascade,
                step.survivors,
                scratch,
                tally,
                &mut out,
                log.as_deref_mut(),
            );
            if self.strict {
                if let Some(a) = self.check_invariants(scratch, Some(bay)) {
                    out.anomaly = Some(a);
                    break;
                }
            }
            if loss.is_some() {
                out.loss = loss;
                break;
            }
        }
        let end = out.loss.map_or(self.mission_s, |l| l.time_s);
        if self.strict && out.anomaly.is_none() && out.loss.is_none() {
            out.anomaly = self.check_invariants(scratch, None);
        }
        self.close_history(index, end, scratch, tally, &out, log);
        out
    }
}

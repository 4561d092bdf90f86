//! One history as a sequence of events.
//!
//! ```text
//! loop {
//!     match next_event() {
//!         Repair(t)       => on_repair_step(t)     // detection, arrival, splice, return, resupply
//!         Strike(t)       => on_strike(t)          // every-strike: one particle
//!         FirstCut(t)     => on_first_cut(t)       // on-demand: a cut on a bay untouched so far
//!         Cut(t)          => on_cut(t)             // on-demand: a cut on a bay holding state
//!         MissionEnd      => break
//!     }
//! }
//! on_mission_end()
//! ```
//!
//! Both samplers share this loop, the repair fleet and every score; they differ in what a
//! damage event is (a strike, or a cut drawn from the hole-rate functions; see
//! [`super::ondemand`]).
//!
//! **Every change of a bay's state follows one recipe** ([`HistoryRun::bring_up_to_date`],
//! the change, `settle_bay`, [`HistoryRun::loads_changed`]):
//! 1. bring the worst holes of the bay's intact segments up to date (on-demand: one draw of the
//!    conditional maximum each; every-strike: nothing, they are always current);
//! 2. apply the change (mark a segment cut; splice; in future: an inspection replacing holed
//!    segments, a climber's weight added to or removed from the bay's tension);
//! 3. follow the cascade with the new loads and score the cuts;
//! 4. compute the new critical widths and cut rates of the bay.
//!
//! The climber-load changes (`ClimberIn`/`ClimberOut` repair events: [`HistoryRun::on_climber_load`])
//! and inspections with preventive replacement (at a repair visit inside the splice, or a
//! periodic inspection step: [`HistoryRun::inspect_bay`]) follow these four steps too.
//!
//! Ties: repair events first, then extra (rare-event) strikes or cuts in touched bays, then the
//! natural strike or untouched-bay cut. Gaps are exponential, so drawing the next damage time
//! before handling earlier repair events is exact (memorylessness), and the strike stream does
//! not depend on repair: two scenarios differing only in repair see the same strikes (on-demand:
//! the same first cuts of untouched bays).

use std::sync::atomic::{AtomicBool, Ordering};

use rand_pcg::Pcg64Mcg;

use crate::repair::{EventKind, Fleet, PreventivePlan, RepairPlan};
use crate::scenario::ReplacementThresholdSpec;
use crate::structure::load_sharing::{settle_bay, MAX_RIBBONS};

use super::history::{HistoryOutcome, LogEvent, Scratch};
use super::ondemand::critical_width_m;
use super::rng::{stream, Purpose};
use super::sampler::{unit, unit_nonzero};
use super::tally::{LossCause, Tally};
use super::{Engine, Sampler};
use crate::model::hole_rate::{combined_rate_at_least_per_s, width_with_combined_rate_m};

/// Events between two polls of the stop flag inside one history.
const EVENTS_PER_STOP_POLL: u64 = 1024;

/// What comes next in a history.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Event {
    /// A repair event from the fleet's queue (detection, arrival, splice, return, resupply).
    Repair(f64),
    /// Every-strike: the next particle strike; `extra` for the rare-event estimator's strikes.
    Strike { t: f64, extra: bool },
    /// On-demand: a candidate cut from the process of bays untouched so far.
    FirstCut(f64),
    /// On-demand: a cut on a bay that holds state.
    Cut(f64),
    /// Meteor stream `k`: every-strike, its next strike; on-demand, its next cut candidate on
    /// a bay untouched so far.
    Stream { k: usize, t: f64 },
    /// On-demand with cross-link hits: the next cross-link cut candidate.
    CrossLink(f64),
    /// Nothing before mission end.
    MissionEnd,
}

/// Whether the history goes on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Flow {
    Go,
    End,
}

/// The rare-event change of measure inside one history (failure biasing by rate inflation;
/// Heidelberger 1995, ACM TOMACS 5, 43). Damage events on bays that already have a cut are made
/// `factor` times as frequent (the rare-event factor, `--rare-event`; the literature's theta):
/// every-strike by an extra Poisson process of strikes of rate
/// (factor - 1) x (strike rate of the damaged bays); on-demand by multiplying the cut rates of
/// those bays. The history carries the likelihood ratio
/// factor^-(boosted events) x exp((factor - 1) x integral of the natural rate of those events).
pub(crate) struct RareEvent {
    factor: f64,
    /// Latent-damage bias: probability of the biased component of the defensive mixture used
    /// for worst-hole draws (0: off).
    latent_p: f64,
    /// Conditional Monte Carlo at cuts on (`--condition-cascades`).
    conditioned: bool,
    /// Q − R of the biased untouched-bay cut process, 1/s (0 without it): the likelihood
    /// ratio gains exp((Q − R) t) by time t.
    excess_rate_s: f64,
    /// Conditional Monte Carlo: extra cut rate given to each damaged bay, 1/s (0: none).
    extra_per_bay_s: f64,
    /// The extra rate now, summed over the damaged bays that can still be cut, 1/s.
    extra_total_s: f64,
    /// Time the extra rate last changed, s.
    t_extra: f64,
    /// Conditional Monte Carlo: the loss probability scored so far in this history (each
    /// term the weight at a cut times that cut's severance probability).
    captured: f64,
    ln_factor: f64,
    log_w: f64,
    /// Natural rate of the boosted events now, 1/s.
    rate_s: f64,
    t_last: f64,
    /// Every-strike: time of the next extra strike.
    next_extra_s: f64,
    rng: Pcg64Mcg,
}

impl RareEvent {
    pub(crate) fn new(factor: f64, latent_p: f64, conditioned: bool, rng: Pcg64Mcg) -> Self {
        RareEvent {
            factor,
            latent_p,
            conditioned,
            excess_rate_s: 0.0,
            extra_per_bay_s: 0.0,
            extra_total_s: 0.0,
            t_extra: 0.0,
            captured: 0.0,
            ln_factor: factor.ln(),
            log_w: 0.0,
            rate_s: 0.0,
            t_last: 0.0,
            next_extra_s: f64::INFINITY,
            rng,
        }
    }

    /// Plain Monte Carlo when false (factor 1): nothing is drawn, the weight stays 1.
    pub(crate) fn active(&self) -> bool {
        self.factor > 1.0 || self.latent_p > 0.0 || self.conditioned
    }

    /// Conditional Monte Carlo at a cut: the bay is severed now with probability `p_sever`.
    /// Score it at the current weight (the caller then weights the surviving branch, see
    /// `HistoryRun::condition_on_survival`). Returns the score added.
    pub(crate) fn score(&mut self, t: f64, p_sever: f64) -> f64 {
        let score = self.weight_at(t) * p_sever;
        self.captured += score;
        score
    }

    /// The untouched-bay cut process runs at Q instead of R: `excess_rate_s` = Q − R.
    pub(crate) fn set_untouched_excess(&mut self, excess_rate_s: f64) {
        self.excess_rate_s = excess_rate_s;
    }

    /// Conditional Monte Carlo: every damaged bay that can still be cut gets `per_bay_s` of
    /// extra cut rate (a defensive mixture: natural rate plus a constant).
    pub(crate) fn set_extra_per_bay(&mut self, per_bay_s: f64) {
        self.extra_per_bay_s = per_bay_s;
    }

    /// The extra rate given to one damaged bay, 1/s.
    pub(crate) fn extra_per_bay(&self) -> f64 {
        self.extra_per_bay_s
    }

    /// `bays` damaged bays can be cut from `t` on: close the extra rate's compensator
    /// integral at the old total.
    pub(crate) fn set_extra_bays(&mut self, t: f64, bays: usize) {
        if self.extra_per_bay_s > 0.0 {
            self.log_w += self.extra_total_s * (t - self.t_extra);
            self.t_extra = t;
            self.extra_total_s = self.extra_per_bay_s * bays as f64;
        }
    }

    /// The loss probability scored by the conditional Monte Carlo in this history.
    pub(crate) fn captured(&self) -> f64 {
        self.captured
    }

    /// The latent-damage bias probability (0: off).
    pub(crate) fn latent_p(&self) -> f64 {
        self.latent_p
    }

    /// Multiply the likelihood ratio by `w` (a draw from a biased distribution).
    pub(crate) fn add_log_weight(&mut self, ln_w: f64) {
        self.log_w += ln_w;
    }

    /// The multiplier on the rates of damaged bays.
    pub(crate) fn factor(&self) -> f64 {
        self.factor
    }

    /// The natural rate of boostable events changes at `t`: close the compensator integral at
    /// the old rate.
    pub(crate) fn set_rate(&mut self, t: f64, rate_s: f64) {
        if !self.active() {
            return;
        }
        self.log_w += (self.factor - 1.0) * self.rate_s * (t - self.t_last);
        self.t_last = t;
        self.rate_s = rate_s;
    }

    /// Every-strike: the damaged set changed at `t` (or an extra strike was used): close the
    /// integral and draw the next extra strike at the new rate.
    pub(crate) fn strikes_changed(&mut self, t: f64, damaged_rate_s: f64) {
        if !self.active() {
            return;
        }
        self.set_rate(t, damaged_rate_s);
        let extra = (self.factor - 1.0) * damaged_rate_s;
        self.next_extra_s = if extra > 0.0 {
            t - unit_nonzero(&mut self.rng).ln() / extra
        } else {
            f64::INFINITY
        };
    }

    /// One boosted event happened (a strike or cut on a damaged bay).
    pub(crate) fn on_boosted_event(&mut self) {
        if self.active() {
            self.log_w -= self.ln_factor;
        }
    }

    /// Every-strike: a damaged bay chosen in proportion to its strike rate.
    pub(crate) fn pick_damaged(&mut self, damaged: &[(u32, f64)]) -> usize {
        let total: f64 = damaged.iter().map(|d| d.1).sum();
        let mut x = unit(&mut self.rng) * total;
        for &(b, r) in damaged {
            if x < r {
                return b as usize;
            }
            x -= r;
        }
        damaged.last().map_or(0, |d| d.0 as usize)
    }

    /// Likelihood ratio of the history observed until `end`.
    pub(crate) fn weight_at(&self, end: f64) -> f64 {
        if !self.active() {
            return 1.0;
        }
        (self.log_w
            + (self.factor - 1.0) * self.rate_s * (end - self.t_last)
            + self.excess_rate_s * end
            + self.extra_total_s * (end - self.t_extra))
            .exp()
    }
}

/// The mutable state of one history being run.
pub(crate) struct HistoryRun<'a, 'm> {
    e: &'a Engine<'m>,
    scratch: &'a mut Scratch,
    tally: &'a mut Tally,
    log: Option<&'a mut Vec<LogEvent>>,
    fleet: Option<Fleet>,
    /// Strikes (every-strike) or untouched-bay cut candidates (on-demand).
    strikes: Pcg64Mcg,
    /// On-demand: draws inside bays holding state.
    damage: Pcg64Mcg,
    repair: Pcg64Mcg,
    rare: RareEvent,
    out: HistoryOutcome,
    last_t: f64,
    /// Next natural strike / untouched-bay cut candidate, s.
    next_primary_s: f64,
    /// On-demand: next cut on a bay holding state, s.
    next_cut_s: f64,
    events: u64,
    stop: Option<&'a AtomicBool>,
    /// Segments replaced in the inspection being handled (bit i: ribbon i).
    replaced_mask: u64,
    /// Meteor streams: their own random stream (see [`Purpose::Streams`]).
    streams_rng: Pcg64Mcg,
    /// Next event of each meteor stream's process, s (first `stream_count` entries).
    next_stream_s: [f64; MAX_STREAMS],
    stream_count: usize,
    /// Cross-link hits: their own random stream (see [`Purpose::CrossLinks`]).
    links_rng: Pcg64Mcg,
    /// Next cross-link cut candidate, s (infinite without cross-link hits).
    next_link_s: f64,
}

/// Conditional Monte Carlo at cuts: expected extra cuts per damaged bay and mission given by
/// the additive rate `EXTRA_CUTS_PER_DAMAGED_BAY / T` (a defensive mixture: the natural rate is
/// kept). A tuning choice with no source: on the demo without repair at flux x0.1 (loss
/// probability 1.9e-6) 1 and 3 gave the best work-normalised efficiency and 10 or more gave
/// heavy-tailed weights (each damaged bay that is not cut again carries exp(extra rate x time)).
const EXTRA_CUTS_PER_DAMAGED_BAY: f64 = 2.0;

/// Conditional Monte Carlo at cuts: the surviving branch draws the bay's fresh worst holes from
/// the defensive mixture `(1 - β) f + β f_γ`, β = [`SURVIVOR_TILT_SHARE`]. Under `f_γ` each
/// segment's fresh maximum reaches the cascade threshold h_l, l = [`SURVIVOR_TILT_LEVEL`], with
/// its odds multiplied by γ (`q' = γ q / (1 + (γ - 1) q)`, q the natural probability), and is
/// drawn naturally within the part it falls in: the density ratio `f_γ / f` is `q'/q` at or
/// above h_l and `(1 - q')/(1 - q)` below, so the bulk of small holes keeps weight 1. A
/// cascade that stops short of severance, or a hole left between h_1 and h_0, leaves the bay
/// likely to be lost at its next cut; drawn naturally, those branches are rare and arrive with
/// large weights (on the demo without repair at 1.9e-6, 55 histories of 1e6 carried 91 % of
/// the variance). γ and l are tuning values with no source, chosen by measurement on that case
/// (1e6 histories, two to four seeds each, SE² x run time in units of 1e-16 s): no tilt 12 to
/// 50; tilt at h_0 with γ = 5, 20, 60, 200, 1000, 5000: 60 to 85, 13 to 16, 8 to 12, 4.7 to
/// 4.9, 8 to 9.5, 9 to 28; at h_1 with γ = 20, 40, 80, 200, 400, 1000: 2.5, 1.8, 1.6 to 1.7,
/// 1.8 to 2.1, 3.1 to 3.2, 7.4 to 7.5; at h_2 and h_3 (γ = 200): 110 to 210.
const SURVIVOR_TILT: f64 = 80.0;

/// The cascade threshold h_l whose odds [`SURVIVOR_TILT`] multiplies: h_1, the critical width
/// after one more cut (h_0 for a bay with a single segment left besides the one being cut).
const SURVIVOR_TILT_LEVEL: usize = 1;

/// β of [`SURVIVOR_TILT`]: the share of the tilted component (a tuning value, no source; a
/// half keeps each draw's likelihood-ratio factor below 2).
const SURVIVOR_TILT_SHARE: f64 = 0.5;

/// How the fresh worst holes of a bay are drawn: `tilted` (from `f_γ`, else natural), the odds
/// factor γ whose density ratio `f_γ / f` the draw reports (1: none), the threshold h_l it acts
/// on (`level` l, its width and rate `H(h_l)`), and a segment drawn naturally and left out of
/// the ratio (the one about to be cut). Segments whose old hole already reaches the threshold
/// width are drawn naturally.
#[derive(Clone, Copy, Debug)]
struct Tilt {
    tilted: bool,
    gamma: f64,
    threshold_rate_s: f64,
    threshold_m: f64,
    level: usize,
    skip: Option<usize>,
}

impl Tilt {
    const NONE: Tilt = Tilt {
        tilted: false,
        gamma: 1.0,
        threshold_rate_s: 0.0,
        threshold_m: f64::INFINITY,
        level: 0,
        skip: None,
    };

    /// The tilted probability of reaching the threshold, from the natural one.
    fn odds(&self, q: f64) -> f64 {
        self.gamma * q / (1.0 + (self.gamma - 1.0) * q)
    }
}

/// Most meteor streams a history handles (the scenario's limit).
const MAX_STREAMS: usize = crate::scenario::MAX_METEOR_STREAMS;

impl<'a, 'm> HistoryRun<'a, 'm> {
    pub(crate) fn new(
        e: &'a Engine<'m>,
        index: u64,
        seed: u64,
        scratch: &'a mut Scratch,
        tally: &'a mut Tally,
        log: Option<&'a mut Vec<LogEvent>>,
        stop: Option<&'a AtomicBool>,
    ) -> Self {
        scratch.reset();
        let mut fleet = scratch.fleet.take();
        if let (Some(f), Some(plan)) = (fleet.as_mut(), e.repair.as_ref()) {
            f.reset(plan);
        }
        let mut strikes = stream(seed, Purpose::Strikes, index);
        let next_primary_s = match &e.on_demand {
            Some(od) if e.sampler_kind == Sampler::OnDemand => exp_gap(
                &mut strikes,
                e.first_cut_bias
                    .as_ref()
                    .map_or(od.intact_cut_rate_per_s(), |b| b.total_rate_s),
            ),
            _ => e.sampler.next_gap_s(&mut strikes),
        };
        let stream_count = e
            .model
            .scenario
            .environment
            .meteor_streams
            .len()
            .min(MAX_STREAMS);
        let mut run = HistoryRun {
            e,
            scratch,
            tally,
            log,
            fleet,
            strikes,
            damage: stream(seed, Purpose::Damage, index),
            repair: stream(seed, Purpose::Repair, index),
            rare: RareEvent::new(
                e.rare_event_factor,
                e.latent_bias,
                e.sever.is_some(),
                stream(seed, Purpose::RareEvent, index),
            ),
            out: HistoryOutcome::default(),
            last_t: 0.0,
            next_primary_s,
            next_cut_s: f64::INFINITY,
            events: 0,
            stop,
            replaced_mask: 0,
            streams_rng: stream(seed, Purpose::Streams, index),
            next_stream_s: [f64::INFINITY; MAX_STREAMS],
            stream_count,
            links_rng: stream(seed, Purpose::CrossLinks, index),
            next_link_s: f64::INFINITY,
        };
        if let Some(b) = e.first_cut_bias.as_ref() {
            run.rare.set_untouched_excess(b.excess_rate_s);
        }
        if e.sever.is_some() {
            run.rare
                .set_extra_per_bay(EXTRA_CUTS_PER_DAMAGED_BAY / e.mission_s);
        }
        if let Some(xl) = e.cross_links.as_ref() {
            let stations = e.model.profile.bays.len() + 1;
            if run.scratch.link_cut.len() != stations {
                run.scratch.link_cut = vec![false; stations];
                run.scratch.link_cut_at_s = vec![0.0; stations];
            }
            run.next_link_s = exp_gap(&mut run.links_rng, xl.total_rate_s);
        }
        for k in 0..run.stream_count {
            run.next_stream_s[k] = run.next_stream_time(k, 0.0);
        }
        run
    }

    /// Peak rate of stream `k`'s process: every-strike, its strikes above the floors;
    /// on-demand, its cut candidates on untouched bays. 1/s.
    fn stream_peak_rate(&self, k: usize) -> f64 {
        match (self.e.sampler_kind, self.e.on_demand.as_ref()) {
            (Sampler::OnDemand, Some(od)) => od.streams.get(k).map_or(0.0, |s| s.total_rate_s),
            _ => self
                .e
                .stream_samplers
                .get(k)
                .map_or(0.0, |s| s.peak_rate_per_s()),
        }
    }

    /// The next event of stream `k`'s process after `t0`: an exponential exposure at the peak
    /// rate turned into time by the inverse of the integrated profile (exact inversion of
    /// the inhomogeneous Poisson process).
    fn next_stream_time(&mut self, k: usize, t0: f64) -> f64 {
        let r = self.stream_peak_rate(k);
        if r.is_nan() || r <= 0.0 {
            return f64::INFINITY;
        }
        let exposure = -unit_nonzero(&mut self.streams_rng).ln() / r;
        self.e.model.scenario.environment.meteor_streams[k].time_after_exposure_s(
            self.e.start_day,
            t0,
            exposure,
        )
    }

    /// Activity g_k(t) of stream `k`.
    #[inline]
    fn stream_activity(&self, k: usize, t: f64) -> f64 {
        self.e.model.scenario.environment.meteor_streams[k].profile(self.e.start_day, t)
    }

    /// Run to the end; the outcome (its scores are in the tally).
    pub(crate) fn run(mut self, index: u64) -> HistoryOutcome {
        loop {
            if self.stop_requested() {
                self.out.stopped = true;
                break;
            }
            let flow = match self.next_event() {
                Event::Repair(t) => self.on_repair_step(t),
                Event::Strike { t, extra } => self.on_strike(t, extra),
                Event::FirstCut(t) => self.on_first_cut(t),
                Event::Cut(t) => self.on_cut(t),
                Event::Stream { k, t } => self.on_stream(k, t),
                Event::CrossLink(t) => self.on_cross_link(t),
                Event::MissionEnd => break,
            };
            if flow == Flow::End {
                break;
            }
        }
        self.on_mission_end(index)
    }

    /// A cheap check of the stop flag every [`EVENTS_PER_STOP_POLL`] events.
    fn stop_requested(&mut self) -> bool {
        self.events += 1;
        self.events % EVENTS_PER_STOP_POLL == 0
            && self.stop.is_some_and(|s| s.load(Ordering::Relaxed))
    }

    /// The earliest of: the next repair event, the next damage event, mission end.
    fn next_event(&self) -> Event {
        let t_repair = self
            .fleet
            .as_ref()
            .and_then(|f| f.queue.next_time())
            .unwrap_or(f64::INFINITY);
        let (t_boost, boost) = match self.e.sampler_kind {
            Sampler::EveryStrike => (
                self.rare.next_extra_s,
                Event::Strike {
                    t: self.rare.next_extra_s,
                    extra: true,
                },
            ),
            Sampler::OnDemand => (self.next_cut_s, Event::Cut(self.next_cut_s)),
        };
        let t_primary = self.next_primary_s;
        let (mut t_stream, mut k_stream) = (f64::INFINITY, 0);
        for k in 0..self.stream_count {
            if self.next_stream_s[k] < t_stream {
                t_stream = self.next_stream_s[k];
                k_stream = k;
            }
        }
        // Without cross-link hits t_link is infinite and every test on it below holds.
        let t_link = self.next_link_s;
        if t_repair
            .min(t_boost)
            .min(t_primary)
            .min(t_stream)
            .min(t_link)
            > self.e.mission_s
        {
            return Event::MissionEnd;
        }
        if t_repair <= t_primary
            && t_repair <= t_boost
            && t_repair <= t_stream
            && t_repair <= t_link
        {
            return Event::Repair(t_repair);
        }
        if t_boost < t_primary && t_boost <= t_stream && t_boost <= t_link {
            return boost;
        }
        if t_stream < t_primary && t_stream <= t_link {
            return Event::Stream {
                k: k_stream,
                t: t_stream,
            };
        }
        if t_link < t_primary {
            return Event::CrossLink(t_link);
        }
        match self.e.sampler_kind {
            Sampler::EveryStrike => Event::Strike {
                t: t_primary,
                extra: false,
            },
            Sampler::OnDemand => Event::FirstCut(t_primary),
        }
    }

    /// Time must not go backwards; a NaN or earlier time marks the history anomalous.
    fn advance_clock(&mut self, t: f64, what: &'static str) -> Flow {
        if t.is_nan() || t < self.last_t {
            self.out.anomaly = Some(what);
            return Flow::End;
        }
        self.last_t = t;
        Flow::Go
    }

    // ---------------------------------------------------------------------------------------
    // Repair
    // ---------------------------------------------------------------------------------------

    /// One event of the repair fleet.
    fn on_repair_step(&mut self, _t: f64) -> Flow {
        let (Some(mut fleet), Some(plan)) = (self.fleet.take(), self.e.repair.as_ref()) else {
            return Flow::End;
        };
        let Some(ev) = fleet.queue.pop() else {
            self.fleet = Some(fleet);
            return Flow::End;
        };
        if let Some(l) = self.log.as_deref_mut() {
            l.push(LogEvent::Repair {
                time_s: ev.time_s,
                kind: ev.kind,
            });
        }
        if self.advance_clock(ev.time_s, "time went backwards at a repair event") == Flow::End {
            self.fleet = Some(fleet);
            return Flow::End;
        }
        let t = ev.time_s;
        let policy = self.e.policy;
        let damaged_before = self.scratch.damaged.len();
        match ev.kind {
            EventKind::Detect { bay } => {
                let rt = &mut self.tally.repair;
                if plan.looped.is_some() {
                    fleet.start_haul(plan, bay, t, rt);
                } else {
                    fleet.on_detect(bay, self.scratch.cuts_in(bay), t, rt);
                    fleet.dispatch(plan, policy, t, rt);
                }
            }
            EventKind::HauledIn { station, bay } => {
                let rt = &mut self.tally.repair;
                fleet.on_hauled_in(station, bay, self.scratch.cuts_in(bay), t, rt);
                fleet.dispatch(plan, policy, t, rt);
            }
            EventKind::StationSpliceDone { station, bay } => {
                fleet.on_station_splice_done(plan, station, bay, t);
                fleet.dispatch(plan, policy, t, &mut self.tally.repair);
            }
            EventKind::LengthInPlace { station, bay } => {
                fleet.on_length_in_place(plan, bay, &mut self.tally.repair);
                // The looped concept refuses preventive replacement: a plain splice.
                self.on_splice(&mut fleet, plan, t, station, bay, 1);
            }
            EventKind::Arrive {
                station,
                bay,
                segments,
            } => fleet.on_arrive(plan, station, bay, segments, t),
            EventKind::SpliceDone {
                station,
                bay,
                segments,
            } => {
                let replaced = self.on_splice(&mut fleet, plan, t, station, bay, segments);
                let done = t + f64::from(replaced) * plan.splice_s;
                fleet.on_splice_done(plan, station, bay, done);
            }
            EventKind::Return { station } => {
                fleet.on_return(station, t);
                fleet.dispatch(plan, policy, t, &mut self.tally.repair);
            }
            EventKind::Resupply { station } => self.on_resupply(&mut fleet, plan, station, t),
            EventKind::ClimberIn { bay } | EventKind::ClimberOut { bay } => {
                // May cut segments: the fleet must be in place to schedule their detection.
                self.fleet = Some(fleet);
                let up = matches!(ev.kind, EventKind::ClimberIn { .. });
                let flow = self.on_climber_load(t, bay, up);
                if flow == Flow::Go && self.e.strict {
                    if let Some(a) = self.e.check_invariants(self.scratch, Some(bay)) {
                        self.out.anomaly = Some(a);
                        return Flow::End;
                    }
                }
                return flow;
            }
            EventKind::LinkDetect { link } => {
                fleet.on_link_detect(link, t, &mut self.tally.repair);
                fleet.dispatch(plan, policy, t, &mut self.tally.repair);
            }
            EventKind::LinkArrive { station, link } => fleet.on_link_arrive(plan, station, link, t),
            EventKind::LinkDone { station, link } => {
                self.fleet = Some(fleet);
                let flow = self.rejoin_link(t, link);
                let Some(mut fleet) = self.fleet.take() else {
                    return Flow::End;
                };
                fleet.on_link_done(plan, station, link, t, &mut self.tally.repair);
                self.fleet = Some(fleet);
                return flow;
            }
            EventKind::InspectionDue => fleet.on_inspection_due(plan, t, &mut self.tally.repair),
            EventKind::InspectStep {
                station,
                bay,
                up,
                spares,
            } => {
                let budget = spares.min(fleet.stock(station));
                let (replaced, short) = self.inspect_bay(t, bay, budget);
                fleet.take_stock(plan, station, replaced, t);
                let rt = &mut self.tally.repair;
                rt.bays_inspected += 1;
                rt.preventive_replacements += u64::from(replaced);
                rt.preventive_at_inspections += u64::from(replaced);
                rt.preventive_short_of_spares += u64::from(short);
                let done = t + f64::from(replaced) * plan.splice_s;
                fleet.on_inspect_step_done(plan, station, bay, up, spares - replaced, done);
            }
        }
        let flow = if self.e.strict {
            let bay = match ev.kind {
                EventKind::SpliceDone { bay, .. }
                | EventKind::Detect { bay }
                | EventKind::LengthInPlace { bay, .. } => Some(bay),
                _ => Some(u32::MAX),
            };
            match self
                .e
                .check_invariants(self.scratch, bay)
                .or_else(|| fleet.check(plan))
            {
                Some(a) => {
                    self.out.anomaly = Some(a);
                    Flow::End
                }
                None => Flow::Go,
            }
        } else {
            Flow::Go
        };
        self.fleet = Some(fleet);
        if self.e.sampler_kind == Sampler::EveryStrike
            && self.scratch.damaged.len() != damaged_before
        {
            let r = self.scratch.damaged_rate();
            self.rare.strikes_changed(t, r);
        }
        flow
    }

    /// A delivery of spare stock reaches a station: idle climbers may now be dispatched.
    fn on_resupply(&mut self, fleet: &mut Fleet, plan: &RepairPlan, station: u32, t: f64) {
        fleet.on_resupply(plan, station, t);
        fleet.dispatch(plan, self.e.policy, t, &mut self.tally.repair);
    }

    /// A splice is done: a bay state change (segments replaced, loads fall). With a
    /// preventive-replacement policy acting at visits, the climber first replaces the intact
    /// segments whose worst hole is at least the threshold (spares beyond the cuts, within its
    /// capacity, the policy's extra spares and the station's stock), in the same state change.
    /// Returns the segments replaced preventively (each takes one more splice time).
    fn on_splice(
        &mut self,
        fleet: &mut Fleet,
        plan: &RepairPlan,
        t: f64,
        station: u32,
        bay: u32,
        segments: u32,
    ) -> u32 {
        let n = self.e.ribbons;
        let mut replaced = 0;
        if let Some(p) = plan.preventive.as_ref().filter(|p| p.at_visits) {
            let cap = plan.capacity_per_trip[bay as usize].saturating_sub(segments);
            let budget = cap.min(p.extra_spares).min(fleet.stock(station));
            let (r, short) = self.inspect_bay(t, bay, budget);
            fleet.take_stock(plan, station, r, t);
            let rt = &mut self.tally.repair;
            rt.bays_inspected += 1;
            rt.preventive_replacements += u64::from(r);
            rt.preventive_at_visits += u64::from(r);
            rt.preventive_short_of_spares += u64::from(short);
            replaced = r;
        }
        let slot = self.scratch.slot(bay, n);
        let (a, b) = self.scratch.span_of(bay);
        if a == b {
            self.bring_up_to_date(slot, t);
            self.e
                .splice(t, bay, segments, self.scratch, &mut self.tally.repair);
            // More survivors carry less each: nothing can fail, so no cascade to follow.
            self.loads_changed(slot, t);
            return replaced;
        }
        // A merged span (cut cross-link): a spliced ribbon intact along the span carries load
        // again, so every bay of the span changes state.
        for other in a..=b {
            if let Some(s) = self.scratch.slot_of(other) {
                self.bring_up_to_date(s, t);
            }
        }
        self.e
            .splice(t, bay, segments, self.scratch, &mut self.tally.repair);
        for other in a..=b {
            if let Some(s) = self.scratch.slot_of(other) {
                self.loads_changed(s, t);
            }
        }
        replaced
    }

    /// The replacement threshold for the intact segments of the bay in `slot` (or of an
    /// untouched bay `j` when `slot` is None), m.
    fn replacement_threshold_m(&self, p: &PreventivePlan, j: usize, slot: Option<usize>) -> f64 {
        let e = self.e;
        match p.threshold {
            ReplacementThresholdSpec::FractionOfWidth { fraction } => {
                fraction * e.model.profile.bays[j].width_m
            }
            ReplacementThresholdSpec::FractionOfNextCritical { fraction } => {
                let cuts = slot.map_or(0, |s| self.scratch.cuts_in_bay[s]) as usize;
                let left = e.ribbons.saturating_sub(cuts + 1);
                if left == 0 {
                    return 0.0; // the next cut loses the bay
                }
                let load = e.bay_tension_n(j, self.scratch) / left as f64;
                fraction * critical_width_m(&e.model.profile, j, load).max(0.0)
            }
        }
    }

    /// Inspect `bay` at `t` and replace up to `budget` intact segments whose worst hole is at
    /// least the policy's threshold, worst first. A state change (bring up to date, replace,
    /// new rates), except that a threshold no intact segment can reach (at least every intact
    /// segment's critical width: its worst hole is below it) returns at once without drawing
    /// anything, so such a policy leaves the history bit for bit as without it. An untouched
    /// bay is set up like a first cut (intact loads since mission start). Returns (replaced,
    /// qualifying segments left for want of spares).
    pub(crate) fn inspect_bay(&mut self, t: f64, bay: u32, budget: u32) -> (u32, u32) {
        let e = self.e;
        let Some(p) = e.repair.as_ref().and_then(|r| r.preventive.as_ref()) else {
            return (0, 0);
        };
        let n = e.ribbons;
        let j = bay as usize;
        let slot = self.scratch.slot_of(bay);
        let threshold = self.replacement_threshold_m(p, j, slot);
        // Can any intact segment hold a hole at least the threshold?
        let reachable = match (slot, e.sampler_kind, e.on_demand.as_ref()) {
            (Some(s), Sampler::OnDemand, Some(_)) => (0..n).any(|i| {
                self.scratch.intact[s * n + i] && threshold < self.scratch.critical_m[s * n + i]
            }),
            (None, Sampler::OnDemand, Some(od)) => {
                // Untouched: intact loads, no climber (a climber's extra would have touched it).
                threshold < od.intact_critical_width_m(j)
            }
            (Some(s), _, _) => (0..n).any(|i| {
                self.scratch.intact[s * n + i] && self.scratch.worst_hole_m[s * n + i] >= threshold
            }),
            (None, _, _) => threshold <= 0.0,
        };
        if !reachable {
            return (0, 0);
        }
        let slot = match slot {
            Some(s) => s,
            None => {
                let s = self.scratch.slot(bay, n);
                self.loads_changed(s, 0.0); // intact loads since mission start
                s
            }
        };
        self.bring_up_to_date(slot, t);
        let base = slot * n;
        let mut replaced = 0;
        let mut short = 0;
        loop {
            // Worst qualifying segment first (deterministic: lowest index among equals).
            let mut pick: Option<usize> = None;
            for i in 0..n {
                let h = self.scratch.worst_hole_m[base + i];
                if self.scratch.intact[base + i]
                    && h >= threshold
                    && !self.replaced_now(i)
                    && pick.is_none_or(|k| h > self.scratch.worst_hole_m[base + k])
                {
                    pick = Some(i);
                }
            }
            let Some(i) = pick else { break };
            if replaced == budget {
                short = (0..n)
                    .filter(|&k| {
                        self.scratch.intact[base + k]
                            && self.scratch.worst_hole_m[base + k] >= threshold
                            && !self.replaced_now(k)
                    })
                    .count() as u32;
                break;
            }
            self.scratch.worst_hole_m[base + i] = 0.0;
            self.mark_replaced(i);
            replaced += 1;
        }
        self.replaced_mask = 0;
        // New ribbon only raises capacities: nothing can fail; rates change.
        self.loads_changed(slot, t);
        (replaced, short)
    }

    #[inline]
    fn replaced_now(&self, i: usize) -> bool {
        self.replaced_mask & (1u64 << i) != 0
    }

    #[inline]
    fn mark_replaced(&mut self, i: usize) {
        self.replaced_mask |= 1u64 << i;
    }

    /// A climber crosses into (`arrives`) or out of `bay` at `t`. When the bay's climber extra
    /// changes, a state change: bring the worst holes up to date under the old load (an
    /// untouched bay is set up like a first cut), change the tension, follow the cascade with
    /// the new loads (cuts and a loss scored as caused by the climber's load), new rates.
    fn on_climber_load(&mut self, t: f64, bay: u32, arrives: bool) -> Flow {
        let e = self.e;
        let Some(cl) = e.climber_load.as_ref() else {
            return Flow::Go;
        };
        if self.advance_clock(t, "time went backwards at a climber load change") == Flow::End {
            return Flow::End;
        }
        let j = bay as usize;
        let n = e.ribbons;
        let before = self.scratch.climbers_on_bay[j];
        let after = if arrives {
            before.saturating_add(1)
        } else {
            before.saturating_sub(1)
        };
        if before == 0 && after > 0 {
            self.scratch.climber_bays.push(bay);
        }
        let changed = cl.extra_n(j, u32::from(before)) != cl.extra_n(j, u32::from(after));
        if !changed {
            self.scratch.climbers_on_bay[j] = after;
            return Flow::Go; // the envelope covers it: no state change, nothing drawn
        }
        let slot = match self.scratch.slot_of(bay) {
            Some(s) => s,
            None => {
                let s = self.scratch.slot(bay, n);
                self.loads_changed(s, 0.0); // intact loads since mission start
                s
            }
        };
        self.bring_up_to_date(slot, t);
        self.scratch.climbers_on_bay[j] = after;
        if !arrives {
            // Less load: nothing can fail.
            self.loads_changed(slot, t);
            return Flow::Go;
        }
        let base = slot * n;
        let mut capacity = [0.0f64; MAX_RIBBONS];
        for (cap, hole) in capacity
            .iter_mut()
            .zip(&self.scratch.worst_hole_m[base..base + n])
        {
            *cap = e.model.profile.ribbon_capacity_n(j, *hole);
        }
        let tension = e.bay_tension_n(j, self.scratch);
        let damaged_before = self.scratch.damaged.len();
        let intact = &mut self.scratch.intact[base..base + n];
        let Ok(cascade) = settle_bay(e.sharing, intact, &capacity[..n], tension) else {
            self.out.anomaly = Some("too many ribbons for the cascade");
            return Flow::End;
        };
        let newly = cascade.newly_cut;
        let mut loss = None;
        if newly > 0 {
            self.tally.climber_load_cuts += u64::from(newly);
            loss = e.record_cuts(
                t,
                bay,
                slot,
                newly,
                newly,
                cascade.survivors,
                self.scratch,
                self.tally,
                &mut self.out,
                self.log.as_deref_mut(),
            );
            if let Some(l) = loss.as_mut() {
                l.cause = LossCause::ClimberLoad;
            }
        }
        self.loads_changed(slot, t);
        if e.sampler_kind == Sampler::EveryStrike && self.scratch.damaged.len() != damaged_before {
            let r = self.scratch.damaged_rate();
            self.rare.strikes_changed(t, r);
        }
        self.after_cuts(t, bay, newly, loss)
    }

    // ---------------------------------------------------------------------------------------
    // Damage: every-strike
    // ---------------------------------------------------------------------------------------

    /// Every-strike: one particle strike (natural, or an extra one of the rare-event estimator).
    fn on_strike(&mut self, t: f64, extra: bool) -> Flow {
        let strike = if extra {
            let j = self.rare.pick_damaged(&self.scratch.damaged);
            let s = self.e.sampler.sample_in_bay(&mut self.rare.rng, j);
            self.rare.next_extra_s = f64::INFINITY; // drawn again below
            s
        } else {
            // Draw order per strike: its details, then the gap to the next one (the same order
            // as the bare strike stream).
            let s = self.e.sampler.sample(&mut self.strikes);
            self.next_primary_s = t + self.e.sampler.next_gap_s(&mut self.strikes);
            s
        };
        self.out.strikes += 1;
        if self.advance_clock(t, "time went backwards at a strike") == Flow::End {
            return Flow::End;
        }
        if !(strike.diameter_m.is_finite()
            && strike.diameter_m > 0.0
            && strike.speed_m_per_s.is_finite())
        {
            self.out.anomaly = Some("non-finite strike");
            return Flow::End;
        }
        if self.scratch.cuts_in(strike.bay) > 0 {
            self.rare.on_boosted_event();
        }
        let damaged_before = self.scratch.damaged.len();
        let (newly, loss) = self.e.apply_strike(
            t,
            &strike,
            self.scratch,
            self.tally,
            &mut self.out,
            self.log.as_deref_mut(),
        );
        if self.rare.active()
            && (self.scratch.damaged.len() != damaged_before
                || self.rare.next_extra_s.is_infinite())
        {
            let r = self.scratch.damaged_rate();
            self.rare.strikes_changed(t, r);
        }
        if self.e.strict {
            if let Some(a) = self.e.check_invariants(self.scratch, Some(strike.bay)) {
                self.out.anomaly = Some(a);
                return Flow::End;
            }
        }
        self.after_cuts(t, strike.bay, newly, loss)
    }

    // ---------------------------------------------------------------------------------------
    // Damage: on-demand
    // ---------------------------------------------------------------------------------------

    /// An event of meteor stream `k`. Every-strike: one stream particle (details, then the
    /// stream's next strike time; never boosted by the rare-event estimator, which biases the
    /// background strikes only). On-demand: a cut candidate of the stream's untouched-bay
    /// process (bay, ribbon, next time), discarded on a bay that holds state (that bay's own
    /// process includes the stream).
    fn on_stream(&mut self, k: usize, t: f64) -> Flow {
        if self.e.sampler_kind == Sampler::EveryStrike {
            let Some(sampler) = self.e.stream_samplers.get(k) else {
                return Flow::End;
            };
            let strike = sampler.sample(&mut self.streams_rng);
            self.next_stream_s[k] = self.next_stream_time(k, t);
            self.out.strikes += 1;
            if self.advance_clock(t, "time went backwards at a stream strike") == Flow::End {
                return Flow::End;
            }
            if !(strike.diameter_m.is_finite() && strike.diameter_m > 0.0) {
                self.out.anomaly = Some("non-finite strike");
                return Flow::End;
            }
            let damaged_before = self.scratch.damaged.len();
            let (newly, loss) = self.e.apply_strike(
                t,
                &strike,
                self.scratch,
                self.tally,
                &mut self.out,
                self.log.as_deref_mut(),
            );
            if self.rare.active() && self.scratch.damaged.len() != damaged_before {
                let r = self.scratch.damaged_rate();
                self.rare.strikes_changed(t, r);
            }
            if self.e.strict {
                if let Some(a) = self.e.check_invariants(self.scratch, Some(strike.bay)) {
                    self.out.anomaly = Some(a);
                    return Flow::End;
                }
            }
            return self.after_cuts(t, strike.bay, newly, loss);
        }
        let Some(od) = self.e.on_demand.as_ref() else {
            return Flow::End;
        };
        let n = self.e.ribbons;
        let bay = od.streams[k].bay_alias.sample(&mut self.streams_rng) as u32;
        let ribbon = ((unit(&mut self.streams_rng) * n as f64) as usize).min(n - 1);
        self.next_stream_s[k] = self.next_stream_time(k, t);
        if self.scratch.slot_of(bay).is_some() {
            return Flow::Go; // thinned away
        }
        if self.advance_clock(t, "time went backwards at a stream cut") == Flow::End {
            return Flow::End;
        }
        let slot = self.scratch.slot(bay, n);
        self.loads_changed(slot, 0.0); // intact loads since mission start
        self.cut_segment(t, slot, ribbon, Some(k))
    }

    /// On-demand: a candidate of the untouched-bay cut process. Draws (bay, ribbon, next gap)
    /// whatever the state, so this stream does not depend on what happened elsewhere; a
    /// candidate on a bay that already holds state is discarded (that bay has its own process).
    fn on_first_cut(&mut self, t: f64) -> Flow {
        let Some(od) = self.e.on_demand.as_ref() else {
            return Flow::End;
        };
        let n = self.e.ribbons;
        let bias = self.e.first_cut_bias.as_ref();
        let bay = match bias {
            Some(b) => b.alias.sample(&mut self.strikes),
            None => od.pick_bay(&mut self.strikes),
        } as u32;
        let ribbon = ((unit(&mut self.strikes) * n as f64) as usize).min(n - 1);
        let rate = bias.map_or(od.intact_cut_rate_per_s(), |b| b.total_rate_s);
        self.next_primary_s = t + exp_gap(&mut self.strikes, rate);
        if let Some(b) = bias {
            // Every candidate of the biased process, kept or discarded, carries r_j / q_j.
            self.rare.add_log_weight(b.ln_ratio[bay as usize]);
        }
        if self.scratch.slot_of(bay).is_some() {
            return Flow::Go; // thinned away
        }
        if self.advance_clock(t, "time went backwards at a cut") == Flow::End {
            return Flow::End;
        }
        let slot = self.scratch.slot(bay, n);
        self.loads_changed(slot, 0.0); // intact loads since mission start
        self.cut_segment(t, slot, ribbon, None)
    }

    /// On-demand: a cut on a bay holding state, chosen in proportion to the (boosted) rates.
    fn on_cut(&mut self, t: f64) -> Flow {
        if self.advance_clock(t, "time went backwards at a cut") == Flow::End {
            return Flow::End;
        }
        let n = self.e.ribbons;
        let total = self.touched_cut_rate();
        let mut x = unit(&mut self.damage) * total;
        let s = &*self.scratch;
        let mut pick = None;
        for slot in 0..s.touched.len() {
            let r = self.biased_cut_rate(slot);
            if x < r {
                pick = Some(slot);
                break;
            }
            x -= r;
        }
        let Some(slot) = pick.or_else(|| {
            (0..s.touched.len())
                .rev()
                .find(|&k| s.bay_cut_rate_s[k] > 0.0)
        }) else {
            self.next_cut_s = f64::INFINITY;
            return Flow::Go;
        };
        let mut y = unit(&mut self.damage) * s.bay_cut_rate_s[slot];
        let base = slot * n;
        let mut ribbon = None;
        for i in 0..n {
            let r = s.cut_rate_s[base + i];
            if r > 0.0 && y < r {
                ribbon = Some(i);
                break;
            }
            y -= r;
        }
        let Some(ribbon) = ribbon.or_else(|| (0..n).rev().find(|&i| s.cut_rate_s[base + i] > 0.0))
        else {
            self.next_cut_s = f64::INFINITY;
            return Flow::Go;
        };
        if s.cuts_in_bay[slot] > 0 {
            self.rare.on_boosted_event();
            let extra = self.rare.extra_per_bay();
            if extra > 0.0 {
                // Natural over biased rate of the chosen bay: (r / (θ r + ε)) = (1/θ) ·
                // θ r / (θ r + ε); the 1/θ is the boosted event's factor above.
                let boosted = s.bay_cut_rate_s[slot] * self.rare.factor();
                self.rare.add_log_weight((boosted / (boosted + extra)).ln());
            }
        }
        if self.stream_count == 0 {
            return self.cut_segment(t, slot, ribbon, None);
        }
        // With streams the segment's rate is the dominating one, H_bg(c) + Σ_k H_k(c) at the
        // streams' peaks: choose the source in proportion, and keep a stream candidate with
        // probability g_k(t) (thinning; the rejected candidate changes nothing).
        let Some(od) = self.e.on_demand.as_ref() else {
            return Flow::End;
        };
        let j = s.touched[slot] as usize;
        let c = s.critical_m[base + ribbon];
        let mut z = unit(&mut self.damage) * s.cut_rate_s[base + ribbon];
        let mut source = None;
        let r_bg = od.holes.bay(j).rate_at_least_per_s(c);
        if z >= r_bg {
            z -= r_bg;
            source = Some(self.stream_count - 1);
            for k in 0..self.stream_count {
                let r = od.stream_holes[k].bay(j).rate_at_least_per_s(c);
                if z < r {
                    source = Some(k);
                    break;
                }
                z -= r;
            }
        }
        if let Some(k) = source {
            if unit(&mut self.damage) >= self.stream_activity(k, t) {
                // Rejected: no state change; the next candidate at the same rates.
                let rate = self.touched_cut_rate();
                self.next_cut_s = t + exp_gap(&mut self.damage, rate);
                return Flow::Go;
            }
        }
        self.cut_segment(t, slot, ribbon, source)
    }

    /// On-demand: segment `ribbon` of the bay in `slot` is cut at `t` (a hole at least its
    /// critical width). The state-change recipe: bring up to date, cut, cascade, new rates.
    /// `source`: `None` for the background, `Some(k)` for meteor stream k (the cut's removed
    /// width follows that source's hole-size law).
    fn cut_segment(&mut self, t: f64, slot: usize, ribbon: usize, source: Option<usize>) -> Flow {
        let e = self.e;
        let Some(od) = e.on_demand.as_ref() else {
            return Flow::End;
        };
        let n = e.ribbons;
        let base = slot * n;
        let bay = self.scratch.touched[slot];
        let j = bay as usize;
        if e.sever.is_some() && self.condition_on_survival(slot, ribbon, t) == Flow::End {
            return Flow::End;
        }
        self.bring_up_to_date_before_cut(slot, t);
        // The cut's removed width: P(X >= x | X >= c) = H(x) / H(c).
        let hr = match source {
            Some(k) => od.stream_holes[k].bay(j),
            None => od.holes.bay(j),
        };
        let c = self.scratch.critical_m[base + ribbon];
        let removed = hr.width_with_rate_m(unit(&mut self.damage) * hr.rate_at_least_per_s(c));
        self.scratch.worst_hole_m[base + ribbon] = removed.max(c).min(hr.width_m());
        // The extrapolation tally as an expectation: P(extrapolated | X >= c).
        self.tally.cutting_holes += 1;
        self.tally.cutting_holes_extrapolated_expected_e9 +=
            (hr.extrapolated_share_at_least(c) * 1e9).round() as u64;
        self.scratch.intact[base + ribbon] = false;
        if let Some(l) = self.log.as_deref_mut() {
            l.push(LogEvent::CutHole {
                time_s: t,
                bay,
                ribbon: ribbon as u32,
                removed_m: removed,
            });
        }
        let (a, b) = self.scratch.span_of(bay);
        if a != b {
            // A merged span: the other bays' worst holes up to date, then the span's cascade.
            for other in (a..=b).filter(|&o| o != bay) {
                match self.scratch.slot_of(other) {
                    Some(s) => self.bring_up_to_date(s, t),
                    None => {
                        self.out.anomaly = Some("a bay of a merged span holds no state");
                        return Flow::End;
                    }
                }
            }
            return self.settle_span(t, a, b, Some(bay));
        }
        // Cascade with the up-to-date worst holes.
        let mut capacity = [0.0f64; MAX_RIBBONS];
        for (cap, hole) in capacity
            .iter_mut()
            .zip(&self.scratch.worst_hole_m[base..base + n])
        {
            *cap = e.model.profile.ribbon_capacity_n(j, *hole);
        }
        let tension = e.bay_tension_n(j, self.scratch);
        let intact = &mut self.scratch.intact[base..base + n];
        let Ok(cascade) = settle_bay(e.sharing, intact, &capacity[..n], tension) else {
            self.out.anomaly = Some("too many ribbons for the cascade");
            return Flow::End;
        };
        let newly = 1 + cascade.newly_cut;

        let loss = e.record_cuts(
            t,
            bay,
            slot,
            newly,
            cascade.newly_cut,
            cascade.survivors,
            self.scratch,
            self.tally,
            &mut self.out,
            self.log.as_deref_mut(),
        );
        self.loads_changed(slot, t);
        if e.strict {
            if let Some(a) = e.check_invariants(self.scratch, Some(bay)) {
                self.out.anomaly = Some(a);
                return Flow::End;
            }
        }
        self.after_cuts(t, bay, newly, loss)
    }

    /// Cross-link hits: the cross-link at a station is cut at `t` (a candidate on a station
    /// already cut changes nothing). The state-change recipe over the new merged span: both
    /// neighbouring bays take state (untouched ones with their intact loads since mission
    /// start), every bay of the span is brought up to date, the link is cut, the span's
    /// cascade runs under the merged-bay rule, and every bay of the span gets its new rates.
    fn on_cross_link(&mut self, t: f64) -> Flow {
        let e = self.e;
        let Some(xl) = e.cross_links.as_ref() else {
            return Flow::End;
        };
        let k = xl.pick(unit(&mut self.links_rng));
        self.next_link_s = t + exp_gap(&mut self.links_rng, xl.total_rate_s);
        let bays = e.model.profile.bays.len();
        if k == 0 || k >= bays || self.scratch.link_cut[k] {
            return Flow::Go; // thinned away (an end or a cut station)
        }
        if self.advance_clock(t, "time went backwards at a cross-link cut") == Flow::End {
            return Flow::End;
        }
        let n = e.ribbons;
        for bay in [k as u32 - 1, k as u32] {
            if self.scratch.slot_of(bay).is_none() {
                let slot = self.scratch.slot(bay, n);
                self.loads_changed(slot, 0.0); // intact loads since mission start
            }
        }
        let (a, _) = self.scratch.span_of(k as u32 - 1);
        let (_, b) = self.scratch.span_of(k as u32);
        for bay in a..=b {
            if let Some(slot) = self.scratch.slot_of(bay) {
                self.bring_up_to_date(slot, t);
            }
        }
        self.scratch.link_cut[k] = true;
        if !self.scratch.links_cut.contains(&(k as u32)) {
            self.scratch.links_cut.push(k as u32);
        }
        self.scratch.link_cut_at_s[k] = t;
        self.out.cross_link_cuts += 1;
        if let (Some(f), Some(plan)) = (self.fleet.as_mut(), e.repair.as_ref()) {
            f.on_link_cut(plan, &mut self.repair, k as u32, t);
        }
        self.settle_span(t, a, b, None)
    }

    /// Cross-link repair: the cross-link at station `k` is re-joined at `t`. The state-change
    /// recipe over the merged span it splits: every bay of the span is brought up to date, the
    /// link carries load again, and each of the two spans left settles under its own loads
    /// (more ribbons intact along a shorter span carry no more each, so nothing is expected to
    /// fail; the cascade is followed all the same) and gets its new rates.
    fn rejoin_link(&mut self, t: f64, k: u32) -> Flow {
        let ku = k as usize;
        if self.scratch.link_cut.get(ku) != Some(&true) || k == 0 {
            self.out.anomaly = Some("a cross-link re-joined that was not cut");
            return Flow::End;
        }
        let (a, b) = self.scratch.span_of(k);
        for bay in a..=b {
            if let Some(slot) = self.scratch.slot_of(bay) {
                self.bring_up_to_date(slot, t);
            }
        }
        self.scratch.link_cut[ku] = false;
        self.scratch.link_down_s += (t - self.scratch.link_cut_at_s[ku]).max(0.0);
        if self.settle_span(t, a, k - 1, None) == Flow::End {
            return Flow::End;
        }
        self.settle_span(t, k, b, None)
    }

    /// The cascade of the merged span `a..=b` at `t` (every bay in it holds state and is up to
    /// date), after a cut in bay `direct` (its segment already marked cut) or, with `None`,
    /// after a cross-link cut. The merged-bay rule: a ribbon carries load along the span only
    /// where it is intact in every bay of it, and the span's intact ribbons share the load
    /// under the scenario's rule with each bay's own tension. Sharing rules are linear in the
    /// tension, so ribbon i fails in the span when some bay b has load_b,i > capacity_b,i, that
    /// is when the share at tension 1 exceeds min_b capacity_b,i / T_b: one cascade on those
    /// ratios is the span's cascade. A ribbon failing in it is cut in the bay where that ratio
    /// is smallest (its weakest section). Then the span's bays get their new rates and a span
    /// without an intact ribbon is a loss.
    fn settle_span(&mut self, t: f64, a: u32, b: u32, direct: Option<u32>) -> Flow {
        let e = self.e;
        let n = e.ribbons;
        let mut ratio = [f64::INFINITY; MAX_RIBBONS];
        let mut weakest = [a; MAX_RIBBONS];
        for bay in a..=b {
            let Some(slot) = self.scratch.slot_of(bay) else {
                self.out.anomaly = Some("a bay of a merged span holds no state");
                return Flow::End;
            };
            let base = slot * n;
            let tension = e.bay_tension_n(bay as usize, self.scratch);
            for i in 0..n {
                let cap = e
                    .model
                    .profile
                    .ribbon_capacity_n(bay as usize, self.scratch.worst_hole_m[base + i]);
                let r = if tension > 0.0 {
                    cap / tension
                } else {
                    f64::INFINITY
                };
                if r < ratio[i] {
                    ratio[i] = r;
                    weakest[i] = bay;
                }
            }
        }
        let mut span = self.scratch.span_intact(a, b, n);
        let before = span;
        let Ok(cascade) = settle_bay(e.sharing, &mut span[..n], &ratio[..n], 1.0) else {
            self.out.anomaly = Some("too many ribbons for the cascade");
            return Flow::End;
        };
        // Newly failed ribbons, each cut in its weakest bay of the span.
        let mut loss: Option<super::tally::Loss> = None;
        let mut load_cuts = 0u32;
        for bay in a..=b {
            let Some(slot) = self.scratch.slot_of(bay) else {
                continue;
            };
            let base = slot * n;
            let mut by_load = 0u32;
            for i in 0..n {
                if before[i] && !span[i] && weakest[i] == bay {
                    self.scratch.intact[base + i] = false;
                    by_load += 1;
                }
            }
            load_cuts += by_load;
            let by_hole = u32::from(direct == Some(bay));
            if by_load + by_hole > 0 {
                let l = e.record_cuts(
                    t,
                    bay,
                    slot,
                    by_load + by_hole,
                    by_load,
                    cascade.survivors,
                    self.scratch,
                    self.tally,
                    &mut self.out,
                    self.log.as_deref_mut(),
                );
                if l.is_some() && (loss.is_none() || direct == Some(bay)) {
                    loss = l;
                }
                self.schedule_detection(t, bay, by_load + by_hole);
            }
        }
        if let Some(l) = loss.as_mut() {
            // The cause over the whole span: any cut by load redistribution makes it a cascade.
            l.cause = if load_cuts > 0 || direct.is_none() {
                LossCause::Cascade
            } else {
                LossCause::DirectCut
            };
        }
        if cascade.survivors == 0 && loss.is_none() {
            // The cross-link's cut alone left no ribbon intact along the span.
            loss = Some(super::tally::Loss {
                time_s: t,
                bay: a,
                cause: LossCause::Cascade,
            });
        }
        for bay in a..=b {
            if let Some(slot) = self.scratch.slot_of(bay) {
                self.loads_changed(slot, t);
            }
        }
        if e.strict {
            for bay in a..=b {
                if let Some(x) = e.check_invariants(self.scratch, Some(bay)) {
                    self.out.anomaly = Some(x);
                    return Flow::End;
                }
            }
        }
        // The cuts' detections are scheduled above, bay by bay: only the loss to hand on.
        self.after_cuts(t, direct.unwrap_or(a), 0, loss)
    }

    /// Conditional Monte Carlo at a cut (`--condition-cascades`), called just before the bay's
    /// worst holes are brought up to date for a cut of `ribbon`.
    ///
    /// Given the history so far, the cut's cascade severs the bay with probability
    /// `P = P(c_k >= k + 1 for every k < m)` over the *fresh* worst holes of the other `m`
    /// intact segments (each `M_i = max(old hole, sub-critical maximum since the last change)`,
    /// `P(M_i < x) = 1{old < x} exp(-(H(x) - H(c_i)) dt)`, independent), with the equal-sharing
    /// thresholds `h_k` of `k` further cuts: [`crate::analytic::cascade`] sums it exactly. The
    /// history scores `w P` as a loss now and goes on in the surviving branch. Drawn from the
    /// natural law conditioned on survival that branch would carry weight `w (1 - P)`; it is
    /// drawn instead from the tilted mixture `g` of [`SURVIVOR_TILT`] conditioned on survival
    /// (by rejection: draws from `g` until the cascade leaves a survivor, at most
    /// 2/(1 - P) on average), weight `w (1 - P_g) f/g`, `P_g` the severance probability under
    /// `g` from the same sum. The estimator, the sum of the scores plus the weight of a loss
    /// the history still meets, has the plain estimator's expectation at every cut
    /// (conditional Monte Carlo: the conditional expectation replaces the indicator; the same
    /// bookkeeping as implicit capture in particle transport; the tilt is importance sampling
    /// of the surviving branch). Nothing is scored when `P` is 0, above
    /// 0.999 (the indicator is then sampled plainly), or the bay is part of a merged span or has more
    /// than [`crate::analytic::cascade::MAX_SEGMENTS`] intact segments: those cuts are sampled
    /// plainly, which keeps the estimator unbiased.
    fn condition_on_survival(&mut self, slot: usize, ribbon: usize, t: f64) -> Flow {
        use crate::analytic::cascade::MAX_SEGMENTS;
        /// Above this severance probability the cut is sampled plainly (rejection would take
        /// over a thousand draws and nothing is rare).
        const MAX_SCORED: f64 = 0.999;
        /// Plain redraws before the conditional draw is called impossible (each is rejected
        /// with probability at most 0.999: 1e5 draws all rejected has probability 4e-44).
        const MAX_REDRAWS: u32 = 100_000;
        let e = self.e;
        let (Some(table), Some(od)) = (e.sever.as_ref(), e.on_demand.as_ref()) else {
            return Flow::Go;
        };
        let n = e.ribbons;
        let base = slot * n;
        let s = &mut *self.scratch;
        let bay = s.touched[slot];
        let j = bay as usize;
        let (a, b) = s.span_of(bay);
        let m = (0..n)
            .filter(|&i| i != ribbon && s.intact[base + i])
            .count();
        if a != b || m == 0 || m > MAX_SEGMENTS {
            return Flow::Go;
        }
        let dt = (t - s.updated_s[slot]).max(0.0);
        let hr = od.holes.bay(j);
        let floor = hr.floor_m();
        let tension = e.bay_tension_n(j, s);
        let cut_after = n - m;
        // Thresholds h_k (0: the survivors fail without a hole) and H(h_k).
        let mut h = [0.0f64; MAX_SEGMENTS];
        let mut rate_h = [f64::INFINITY; MAX_SEGMENTS];
        for k in 0..m {
            let Some(div) = e.sharing.uniform_share_divisor(n, cut_after + k) else {
                return Flow::Go;
            };
            let load = if div > 0.0 {
                tension / div
            } else {
                f64::INFINITY
            };
            let c = critical_width_m(&e.model.profile, j, load);
            // Holes below the floor are never drawn, so the engine's cascade sees them as
            // absent: a threshold below the floor acts as the floor.
            if c > 0.0 {
                h[k] = c.max(floor);
                rate_h[k] = hr.rate_at_least_per_s(h[k]);
            }
        }
        // ln F_k = ln P(M < h_k) of each segment (-inf when its old hole already reaches h_k).
        let mut ln_f = [[0.0f64; MAX_SEGMENTS]; MAX_SEGMENTS];
        for (row, i) in ln_f
            .iter_mut()
            .zip((0..n).filter(|&i| i != ribbon && s.intact[base + i]))
        {
            let old = s.worst_hole_m[base + i];
            let c_i = s.critical_m[base + i];
            let rate_c = s.cut_rate_s[base + i];
            for k in 0..m {
                row[k] = if h[k] <= 0.0 || old >= h[k] {
                    f64::NEG_INFINITY
                } else if h[k] >= c_i {
                    0.0 // fresh holes stay below c_i <= h_k
                } else {
                    -((rate_h[k] - rate_c).max(0.0) * dt)
                };
            }
        }
        let need = 2 * table.max_states();
        if s.sever_work.len() < need {
            s.sever_work.resize(need, 0.0); // once per scratch
        }
        let p = sever_probability(table, m, &ln_f, None, &mut s.sever_work);
        let Some(p) = p else {
            return Flow::Go;
        };
        if !(p > 0.0 && p <= MAX_SCORED) {
            return Flow::Go;
        }
        // Severance probability under the tilted law (finite ln F scaled by γ) and under the
        // mixture the surviving branch is drawn from.
        let level = SURVIVOR_TILT_LEVEL.min(m - 1);
        let tilted_law = Tilt {
            gamma: SURVIVOR_TILT,
            level,
            ..Tilt::NONE
        };
        let p_tilted = sever_probability(
            table,
            m,
            &ln_f,
            Some(&tilted_law),
            &mut self.scratch.sever_work,
        )
        .unwrap_or(p);
        let p_mix = (1.0 - SURVIVOR_TILT_SHARE) * p + SURVIVOR_TILT_SHARE * p_tilted;
        let score = self.rare.score(t, p);
        let year = e.year_of(t);
        if let Some(c) = self
            .tally
            .weighted
            .last_mut()
            .and_then(|wb| wb.sum_w_by_year.get_mut(year))
        {
            *c += score;
        }
        self.tally.scored_cascades += 1;
        // The surviving branch: draws from the mixture until the cascade leaves a survivor
        // (rejection: an exact draw from the mixture given survival). Its weight factor is
        // P_mix(survive) f / g = (1 - p_mix) / ((1 - β) + β f_γ / f) in place of the plain
        // 1 - p, and at most 1 / (1 - β).
        let mut saved = [0.0f64; MAX_RIBBONS];
        saved[..n].copy_from_slice(&self.scratch.worst_hole_m[base..base + n]);
        let saved_t = self.scratch.updated_s[slot];
        for _ in 0..MAX_REDRAWS {
            let tilt = Tilt {
                tilted: unit(&mut self.damage) < SURVIVOR_TILT_SHARE,
                gamma: SURVIVOR_TILT,
                level,
                threshold_rate_s: rate_h[level],
                threshold_m: h[level],
                skip: Some(ribbon),
            };
            let ln_r = self.update_worst_holes(slot, t, false, tilt);
            if !self.cut_would_sever(slot, ribbon) {
                let g_over_f = (1.0 - SURVIVOR_TILT_SHARE) + SURVIVOR_TILT_SHARE * ln_r.exp();
                self.rare.add_log_weight((-p_mix).ln_1p() - g_over_f.ln());
                return Flow::Go;
            }
            self.scratch.worst_hole_m[base..base + n].copy_from_slice(&saved[..n]);
            self.scratch.updated_s[slot] = saved_t;
        }
        self.out.anomaly = Some("the conditional draw given survival was rejected 100000 times");
        Flow::End
    }

    /// Would cutting `ribbon` now sever its bay through the cascade of the current worst holes?
    /// The engine's own cascade on a copy of the bay's state.
    fn cut_would_sever(&self, slot: usize, ribbon: usize) -> bool {
        let e = self.e;
        let n = e.ribbons;
        let base = slot * n;
        let s = &*self.scratch;
        let j = s.touched[slot] as usize;
        let mut intact = [false; MAX_RIBBONS];
        intact[..n].copy_from_slice(&s.intact[base..base + n]);
        intact[ribbon] = false;
        let mut capacity = [0.0f64; MAX_RIBBONS];
        for (cap, hole) in capacity[..n]
            .iter_mut()
            .zip(&s.worst_hole_m[base..base + n])
        {
            *cap = e.model.profile.ribbon_capacity_n(j, *hole);
        }
        let tension = e.bay_tension_n(j, s);
        settle_bay(e.sharing, &mut intact[..n], &capacity[..n], tension)
            .is_ok_and(|c| c.survivors == 0)
    }

    /// Step 1 of a state change (on-demand): draw the worst sub-critical hole of each intact
    /// segment over the time since the bay's last change, P(M < x) = exp(-(H(x) - H(c)) dt),
    /// and keep the larger of it and the worst hole so far. One uniform per intact segment.
    ///
    /// Under the latent-damage bias (`--latent-bias p`) the bay's draws come instead from the
    /// defensive mixture g = (1 - p) f + p f 1{B} / P(B), where f is the natural joint law of
    /// the bay's worst holes and B the event that at least one intact segment reaches a_i, its
    /// critical width after one more cut in the bay (load scaled by n/(n - 1), n the intact
    /// segments: exact for equal sharing; any threshold keeps the estimator unbiased). With
    /// q_i = P(M_i >= a_i) = 1 - exp(-(H(a_i) - H(c_i)) dt), P(B) = 1 - prod (1 - q_i). The
    /// conditioned component draws the first segment in B exactly (P(first = i) =
    /// prod_{k<i} (1 - q_k) q_i / P(B)), the ones before it below their threshold and the rest
    /// naturally, each by inversion of its own distribution function. The history's likelihood
    /// ratio gains f/g = 1 / (1 - p + p 1{B} / P(B)), one factor per cut and never above
    /// 1/(1 - p) (defensive mixtures: Hesterberg 1995, Technometrics 37, 185). With p = 0 the
    /// draws are the plain ones, bit for bit. It biases the first link of a latent-damage
    /// cascade; the later links (holes reaching c_2, c_3, ...) stay natural. The bias is
    /// applied only before a cut ([`Self::bring_up_to_date_before_cut`]), the one change after
    /// which those holes can matter at once; splices and inspections draw plainly (fewer
    /// weight factors).
    pub(crate) fn bring_up_to_date(&mut self, slot: usize, t: f64) {
        self.update_worst_holes(slot, t, false, Tilt::NONE);
    }

    /// [`Self::bring_up_to_date`] just before a cut in the bay (latent-damage bias applies).
    pub(crate) fn bring_up_to_date_before_cut(&mut self, slot: usize, t: f64) {
        self.update_worst_holes(slot, t, true, Tilt::NONE);
    }

    /// Step 1 with the fresh maxima drawn from an exposure-tilted law (see [`Tilt`]); returns
    /// `ln(f_γ / f)` of the draw (0 without a tilt).
    fn update_worst_holes(&mut self, slot: usize, t: f64, before_cut: bool, tilt: Tilt) -> f64 {
        let Some(od) = self.e.on_demand.as_ref() else {
            return 0.0; // every-strike: holes are always current
        };
        if self.e.sampler_kind != Sampler::OnDemand {
            return 0.0;
        }
        let e = self.e;
        let s = &mut *self.scratch;
        let dt = t - s.updated_s[slot];
        s.updated_s[slot] = t;
        if !(dt > 0.0) {
            return 0.0;
        }
        let n = e.ribbons;
        let base = slot * n;
        let j = s.touched[slot] as usize;
        let hr = od.holes.bay(j);
        // With meteor streams every rate below is the interval's mean rate
        // K(x) = H_bg(x) + Σ_k H_k(x) G_k / dt (G_k the exact integral of stream k's profile
        // over the interval): P(M < x) = exp(-(K(x) - K(c)) dt) as before.
        let streams = self.stream_count > 0;
        let mut wk = [0.0f64; MAX_STREAMS];
        if streams {
            let t0 = t - dt;
            for (k, w) in wk.iter_mut().enumerate().take(self.stream_count) {
                *w = e.model.scenario.environment.meteor_streams[k].exposure_s(e.start_day, t0, t)
                    / dt;
            }
        }
        let wk = &wk[..self.stream_count];
        let tables = &od.stream_holes[..];
        let rate_at = |x: f64| {
            if streams {
                combined_rate_at_least_per_s(hr, tables, j, wk, x)
            } else {
                hr.rate_at_least_per_s(x)
            }
        };
        let floor_rate = if streams {
            rate_at(hr.floor_m())
        } else {
            hr.floor_rate_per_s()
        };
        // The bias thresholds: critical widths one cut later (only when the bias is on and a
        // further cut would leave a survivor).
        let p = self.rare.latent_p();
        let alive = s.intact[base..base + n].iter().filter(|&&b| b).count();
        let mut next_rate = [0.0f64; MAX_RIBBONS];
        let biased = before_cut && p > 0.0 && alive >= 2 && tilt.gamma == 1.0;
        if biased {
            let mut loads = [0.0f64; MAX_RIBBONS];
            e.sharing.distribute(
                &s.intact[base..base + n],
                e.model.profile.bays[j].max_tension_n,
                &mut loads[..n],
            );
            let scale = alive as f64 / (alive - 1) as f64;
            for i in 0..n {
                if s.intact[base + i] {
                    let a =
                        critical_width_m(&e.model.profile, j, loads[i] * scale).max(hr.floor_m());
                    next_rate[i] = rate_at(a);
                }
            }
        }
        // q_i = P(M_i >= a_i) under the natural law; Q = P(at least one i).
        let mut q = [0.0f64; MAX_RIBBONS];
        let mut none_big = 1.0;
        // K(c_i) of each intact segment (without streams: its cut rate, as stored).
        let mut rate_c = [0.0f64; MAX_RIBBONS];
        for (i, rc) in rate_c.iter_mut().enumerate().take(n) {
            if s.intact[base + i] {
                *rc = if streams {
                    rate_at(s.critical_m[base + i])
                } else {
                    s.cut_rate_s[base + i]
                };
            }
        }
        // No intact segment can hold a hole between the floor and its critical width (a law
        // whose every hole cuts, such as fraction of width): nothing to draw, no random number
        // used (the biased component then has probability 0 too).
        if (0..n).all(|i| !s.intact[base + i] || floor_rate <= rate_c[i]) {
            return 0.0;
        }
        if biased {
            for i in 0..n {
                if s.intact[base + i] {
                    q[i] = -(-(next_rate[i] - rate_c[i]).max(0.0) * dt).exp_m1();
                    none_big *= 1.0 - q[i];
                }
            }
        }
        let big_q = 1.0 - none_big;
        // The mixture's component: with probability p, the natural law conditioned on at least
        // one segment reaching its next critical width; otherwise the natural law. Under the
        // conditioned component the first such segment is drawn from
        // P(first = i) = prod_{k<i} (1 - q_k) q_i / Q, the ones before it below their
        // threshold, the ones after it from the natural law (an exact conditional draw).
        let mut first_big = usize::MAX;
        let mixture = biased && big_q > 0.0;
        if mixture && unit_nonzero(&mut self.damage) < p {
            let mut x = unit(&mut self.damage) * big_q;
            let mut before = 1.0;
            for i in (0..n).filter(|&i| s.intact[base + i]) {
                let pi = before * q[i];
                if pi > 0.0 {
                    first_big = i; // the last candidate also absorbs rounding in x
                }
                if x < pi {
                    break;
                }
                x -= pi;
                before *= 1.0 - q[i];
            }
        }
        let mut any_big = false;
        let mut ln_ratio = 0.0;
        for i in 0..n {
            if !s.intact[base + i] {
                continue;
            }
            let u = unit_nonzero(&mut self.damage);
            let h_c = rate_c[i];
            // F = P(M < m) at the drawn m: the plain draw uses F = u.
            let big_f = if first_big == usize::MAX || i > first_big {
                u
            } else if i < first_big {
                u * (1.0 - q[i])
            } else {
                (1.0 - q[i]) + u * q[i]
            };
            if mixture && big_f >= 1.0 - q[i] {
                any_big = true;
            }
            let mut big_f = big_f;
            // (A segment whose old hole already reaches h_l is drawn naturally: its part is
            // settled, as in the tilted parts of `sever_probability`.)
            if tilt.gamma != 1.0
                && Some(i) != tilt.skip
                && s.worst_hole_m[base + i] < tilt.threshold_m
            {
                // q = P(fresh max >= h_l) under f; the draw puts F at or above 1 - q with
                // probability q' (tilted) or q (natural), inverting within each part.
                let q = -(-(tilt.threshold_rate_s - h_c).max(0.0) * dt).exp_m1();
                if q > 0.0 && q < 1.0 {
                    let q_t = tilt.odds(q);
                    if tilt.tilted {
                        big_f = if big_f < 1.0 - q_t {
                            big_f / (1.0 - q_t) * (1.0 - q)
                        } else {
                            (1.0 - q) + (big_f - (1.0 - q_t)) / q_t * q
                        };
                    }
                    ln_ratio += if big_f >= 1.0 - q {
                        (q_t / q).ln()
                    } else {
                        ((1.0 - q_t) / (1.0 - q)).ln()
                    };
                }
            }
            let target = h_c - big_f.ln() / dt;
            if target >= floor_rate {
                continue; // the largest sub-critical hole is below the floor: irrelevant
            }
            let c = s.critical_m[base + i];
            let m = if streams {
                width_with_combined_rate_m(hr, tables, j, wk, target)
            } else {
                hr.width_with_rate_m(target)
            }
            .min(c * (1.0 - 1e-9));
            if m > s.worst_hole_m[base + i] {
                s.worst_hole_m[base + i] = m;
            }
        }
        if mixture {
            // f/g = 1 / ((1 - p) + p 1{any big} / Q), at most 1/(1 - p).
            let g_over_f = (1.0 - p) + if any_big { p / big_q } else { 0.0 };
            self.rare.add_log_weight(-g_over_f.ln());
        }
        ln_ratio
    }

    /// Step 4 of a state change (on-demand): the bay's loads changed at `t`; compute each intact
    /// segment's critical width and cut rate H(c), the bay's total, and redraw the next cut on
    /// bays holding state (exact: exponential gaps are memoryless). Also moves the rare-event
    /// compensator to the new rate of damaged bays.
    pub(crate) fn loads_changed(&mut self, slot: usize, t: f64) {
        if self.e.sampler_kind != Sampler::OnDemand {
            return;
        }
        let Some(od) = self.e.on_demand.as_ref() else {
            return;
        };
        let e = self.e;
        let n = e.ribbons;
        let base = slot * n;
        let s = &mut *self.scratch;
        let j = s.touched[slot] as usize;
        let hr = od.holes.bay(j);
        let mut loads = [0.0f64; MAX_RIBBONS];
        let tension = e.bay_tension_n(j, s);
        // The merged-bay rule: loads are shared over the ribbons intact along the whole span
        // (the bay's own intact ribbons without cross-link hits or beside intact cross-links).
        let (a, b) = s.span_of(j as u32);
        let span = s.span_intact(a, b, n);
        e.sharing.distribute(&span[..n], tension, &mut loads[..n]);
        let mut total = 0.0;
        // Segments with the same load (all of a bay under equal sharing) have the same critical
        // width and rate: computed once per distinct load (same bits in, same bits out), or
        // looked up when the bay alone carries its own largest tension.
        let mut last: Option<(f64, f64, f64)> = None;
        if let Some(u) = e.uniform_levels.as_ref() {
            if a == b && tension.to_bits() == e.model.profile.bays[j].max_tension_n.to_bits() {
                let intact = span[..n].iter().filter(|&&x| x).count();
                if intact > 0 {
                    // Used below only for segments whose load has the table's bits.
                    last = Some(u.get(j, intact));
                }
            }
        }
        for i in 0..n {
            if span[i] {
                let (c, r) = match last {
                    Some((l, c, r)) if l.to_bits() == loads[i].to_bits() => (c, r),
                    _ => {
                        let c = critical_width_m(&e.model.profile, j, loads[i]).max(hr.floor_m());
                        let mut r = hr.rate_at_least_per_s(c);
                        // Meteor streams: the dominating rate at their peaks (thinned in
                        // `on_cut`).
                        for table in &od.stream_holes {
                            r += table.bay(j).rate_at_least_per_s(c);
                        }
                        last = Some((loads[i], c, r));
                        (c, r)
                    }
                };
                s.critical_m[base + i] = c;
                s.cut_rate_s[base + i] = r;
                total += r;
            } else if s.intact[base + i] {
                // Intact here but cut elsewhere in the merged span: it carries no load, so no
                // hole in this bay can change anything (critical width: the whole ribbon).
                s.critical_m[base + i] = e.model.profile.bays[j].width_m;
                s.cut_rate_s[base + i] = 0.0;
            } else {
                s.critical_m[base + i] = 0.0;
                s.cut_rate_s[base + i] = 0.0;
            }
        }
        s.bay_cut_rate_s[slot] = total;
        s.updated_s[slot] = t;
        let t_now = t.max(self.last_t);
        let damaged: f64 = (0..s.touched.len())
            .filter(|&k| s.cuts_in_bay[k] > 0)
            .map(|k| s.bay_cut_rate_s[k])
            .sum();
        self.rare.set_rate(t_now, damaged);
        if self.rare.extra_per_bay() > 0.0 {
            let bays = (0..s.touched.len())
                .filter(|&k| s.cuts_in_bay[k] > 0 && s.bay_cut_rate_s[k] > 0.0)
                .count();
            self.rare.set_extra_bays(t_now, bays);
        }
        let rate = self.touched_cut_rate();
        self.next_cut_s = t_now + exp_gap(&mut self.damage, rate);
    }

    /// Total (boosted) cut rate of the bays holding state, 1/s.
    fn touched_cut_rate(&self) -> f64 {
        let s = &*self.scratch;
        (0..s.touched.len()).map(|k| self.biased_cut_rate(k)).sum()
    }

    /// Cut rate of the bay in `slot` under the rare-event measure, 1/s: damaged bays at the
    /// rare-event factor times their rate, plus the conditional Monte Carlo's extra rate when
    /// they can still be cut; the natural rate otherwise.
    fn biased_cut_rate(&self, slot: usize) -> f64 {
        let s = &*self.scratch;
        let r = s.bay_cut_rate_s[slot];
        if s.cuts_in_bay[slot] == 0 {
            return r;
        }
        let extra = if r > 0.0 {
            self.rare.extra_per_bay()
        } else {
            0.0
        };
        r * self.rare.factor() + extra
    }

    /// Schedule the detection of `newly` new cuts in `bay` at `t` (nothing without repair).
    fn schedule_detection(&mut self, t: f64, bay: u32, newly: u32) {
        if newly > 0 {
            if let (Some(f), Some(plan)) = (self.fleet.as_mut(), self.e.repair.as_ref()) {
                let cuts = self.scratch.cuts_in(bay);
                for _ in 0..newly {
                    f.on_cut(plan, &mut self.repair, bay, cuts, t);
                }
            }
        }
    }

    /// After cuts in `bay`: schedule their detection; a loss ends the history.
    fn after_cuts(
        &mut self,
        t: f64,
        bay: u32,
        newly: u32,
        loss: Option<super::tally::Loss>,
    ) -> Flow {
        self.schedule_detection(t, bay, newly);
        match loss {
            Some(mut loss) => {
                if loss.cause != LossCause::ClimberLoad
                    && self
                        .fleet
                        .as_ref()
                        .is_some_and(|f| f.bay_waits_for_stock(loss.bay))
                {
                    loss.cause = LossCause::StockoutDelay;
                }
                self.out.loss = Some(loss);
                Flow::End
            }
            None => Flow::Go,
        }
    }

    // ---------------------------------------------------------------------------------------
    // Mission end
    // ---------------------------------------------------------------------------------------

    /// Close the history: repair tallies up to the end, the likelihood ratio, final invariant
    /// check and the common scores. Nothing is drawn (on-demand: no tally needs the sub-critical
    /// holes; their expected numbers come from the rates).
    fn on_mission_end(mut self, index: u64) -> HistoryOutcome {
        let e = self.e;
        if self.out.stopped {
            self.scratch.fleet = self.fleet.take();
            return self.out;
        }
        let end = self.out.loss.map_or(e.mission_s, |l| l.time_s);
        if let (Some(f), Some(plan)) = (self.fleet.as_mut(), e.repair.as_ref()) {
            f.finish(plan, end, &mut self.tally.repair);
        }
        if e.cross_links.is_some() {
            self.out.cross_link_down_s = self.scratch.link_down_until(end);
        }
        self.scratch.fleet = self.fleet.take();
        self.out.weight = self.rare.weight_at(end);
        self.out.captured = self.rare.captured();
        if e.strict && self.out.anomaly.is_none() && self.out.loss.is_none() {
            self.out.anomaly = e.check_invariants(self.scratch, None);
        }
        if !self.out.weight.is_finite() && self.out.anomaly.is_none() {
            self.out.anomaly = Some("non-finite likelihood ratio");
        }
        e.close_history(index, end, self.scratch, self.tally, &self.out, self.log);
        self.out
    }

    /// Test hook: bring every bay holding state up to `t` (on-demand) and list its segments as
    /// (bay, ribbon, worst hole m, intact).
    pub(crate) fn segments_at(&mut self, t: f64) -> Vec<(u32, u32, f64, bool)> {
        let n = self.e.ribbons;
        let mut v = Vec::new();
        for slot in 0..self.scratch.touched.len() {
            self.bring_up_to_date(slot, t);
            for i in 0..n {
                v.push((
                    self.scratch.touched[slot],
                    i as u32,
                    self.scratch.worst_hole_m[slot * n + i],
                    self.scratch.intact[slot * n + i],
                ));
            }
        }
        v
    }
}

/// Severance probability of a cut's cascade over `m` segments whose final worst holes have
/// `ln P(M_r < h_k) = ln_f[r][k]` ([`crate::analytic::cascade`]), under the natural law or,
/// with `tilt`, with each segment's odds of reaching h_l multiplied by γ ([`Tilt`]). `None`
/// when the table cannot say.
fn sever_probability(
    table: &crate::analytic::cascade::SeverTable,
    m: usize,
    ln_f: &[[f64; crate::analytic::cascade::MAX_SEGMENTS]; crate::analytic::cascade::MAX_SEGMENTS],
    tilt: Option<&Tilt>,
    work: &mut [f64],
) -> Option<f64> {
    use crate::analytic::cascade::MAX_SEGMENTS;
    // The tilt scales the parts at or above h_l by q'/q and those below by (1 - q')/(1 - q)
    // (q = 1 - F_l): F_k is multiplied by the second factor for k >= l, and 1 - F_k by the
    // first for k < l.
    let mut tilted = [[0.0f64; MAX_SEGMENTS]; MAX_SEGMENTS];
    let ln_f = match tilt {
        None => ln_f,
        Some(tilt) => {
            let l = tilt.level;
            for (out, lf) in tilted[..m].iter_mut().zip(&ln_f[..m]) {
                out[..m].copy_from_slice(&lf[..m]);
                let q = -lf[l].exp_m1();
                if q > 0.0 && q < 1.0 {
                    let q_t = tilt.odds(q);
                    let shift = ((1.0 - q_t) / (1.0 - q)).ln();
                    for o in out[l..m].iter_mut() {
                        *o += shift;
                    }
                    // Above h_l the parts scale by q'/q: 1 - F'_k = (q'/q)(1 - F_k).
                    for (o, &x) in out[..l].iter_mut().zip(&lf[..l]) {
                        *o = (-(q_t / q) * -x.exp_m1()).ln_1p();
                    }
                }
            }
            &tilted
        }
    };
    let identical = (1..m).all(|r| (0..m).all(|k| ln_f[r][k].to_bits() == ln_f[0][k].to_bits()));
    if identical {
        // A bay's first cut: its other segments share one law (binomial recursion).
        return crate::analytic::cascade::sever_probability_identical(m, &ln_f[0][..m]);
    }
    let w = m + 1;
    let mut bins = [0.0f64; MAX_SEGMENTS * (MAX_SEGMENTS + 1)];
    for (r, lf) in ln_f[..m].iter().enumerate() {
        crate::analytic::cascade::parts_from_ln_f(&lf[..m], &mut bins[r * w..(r + 1) * w]);
    }
    table.sever_probability(m, &bins[..m * w], work)
}

/// An exponential gap at `rate` (infinite when the rate is 0).
#[inline]
fn exp_gap(rng: &mut Pcg64Mcg, rate_s: f64) -> f64 {
    if rate_s > 0.0 {
        -unit_nonzero(rng).ln() / rate_s
    } else {
        f64::INFINITY
    }
}

impl Engine<'_> {
    /// Run history `index`, adding its scores to `tally`. `log`, when given, receives every
    /// event (for `--replay-history`).
    pub fn run_history(
        &self,
        index: u64,
        seed: u64,
        scratch: &mut Scratch,
        tally: &mut Tally,
        log: Option<&mut Vec<LogEvent>>,
    ) -> HistoryOutcome {
        if let Some(v) = self.model.scenario.synthetic_rates {
            return self.run_validation_history(index, seed, &v, scratch, tally, log);
        }
        self.run_history_until(index, seed, scratch, tally, log, None)
    }

    /// [`Self::run_history`], abandoning the history (outcome `stopped`) soon after `stop` is
    /// raised: the flag is polled every 1024 events.
    pub fn run_history_until(
        &self,
        index: u64,
        seed: u64,
        scratch: &mut Scratch,
        tally: &mut Tally,
        log: Option<&mut Vec<LogEvent>>,
        stop: Option<&AtomicBool>,
    ) -> HistoryOutcome {
        if let Some(v) = self.model.scenario.synthetic_rates {
            return self.run_validation_history(index, seed, &v, scratch, tally, log);
        }
        if self.active_count_only().is_ok() {
            return self.run_count_only_history(index, seed, scratch, tally, log, stop);
        }
        HistoryRun::new(self, index, seed, scratch, tally, log, stop).run(index)
    }

    /// Run history `index` and list, at its end, every segment of the bays that hold state as
    /// (bay, ribbon, worst hole m, intact), with the end time (on-demand: brought up to date to
    /// the end with extra draws that change nothing else). For distribution tests.
    pub fn segments_at_end(
        &self,
        index: u64,
        seed: u64,
    ) -> (HistoryOutcome, f64, Vec<(u32, u32, f64, bool)>) {
        let mut scratch = self.new_scratch();
        let mut tally = self.empty_tally();
        let mut run = HistoryRun::new(self, index, seed, &mut scratch, &mut tally, None, None);
        loop {
            let flow = match run.next_event() {
                Event::Repair(t) => run.on_repair_step(t),
                Event::Strike { t, extra } => run.on_strike(t, extra),
                Event::FirstCut(t) => run.on_first_cut(t),
                Event::Cut(t) => run.on_cut(t),
                Event::Stream { k, t } => run.on_stream(k, t),
                Event::CrossLink(t) => run.on_cross_link(t),
                Event::MissionEnd => break,
            };
            if flow == Flow::End {
                break;
            }
        }
        let end = run.out.loss.map_or(self.mission_s, |l| l.time_s);
        let segs = run.segments_at(end);
        let out = run.out;
        (out, end, segs)
    }
}

#[cfg(test)]
mod tests {
    //! The climber-load and preventive-replacement state changes on constructed bays. Expected
    //! outcomes are worked by hand from the net-section rule (the demo's notch model):
    //! capacity(h) = (w - h) t sigma_allow (Daniels equal sharing of the bay tension among the
    //! survivors; REFERENCES-damage.md §2.1 net section), not from the engine's own functions.
    use super::*;
    use crate::model::Model;
    use crate::scenario::{parse_spec, Scenario, DEMO_SCENARIO_JSON};

    fn demo_model(edit: impl FnOnce(&mut serde_json::Value)) -> Model {
        let mut v: serde_json::Value = serde_json::from_str(DEMO_SCENARIO_JSON).unwrap();
        v["repair"]["climber"]["load_on_bays"] = serde_json::json!(true);
        edit(&mut v);
        let sc = Scenario::from_spec(parse_spec(&v.to_string()).unwrap(), None).unwrap();
        Model::build(sc).unwrap()
    }

    /// Bay 0 of the demo with ribbon 0 cut and a hole `hole_m` in ribbon 1.
    fn weakened_bay(run: &mut HistoryRun<'_, '_>, hole_m: f64) {
        let n = run.e.ribbons;
        let slot = run.scratch.slot(0, n);
        run.scratch.intact[slot * n] = false;
        run.scratch.add_cuts(slot, n, 1, 0.0, 1e-12);
        run.scratch.worst_hole_m[slot * n + 1] = hole_m;
    }

    #[test]
    fn a_climbers_weight_breaks_a_holed_segment_it_would_not_break_alone() {
        let model = demo_model(|_| {});
        let e = Engine::with_sampler(&model, 1.0, Sampler::EveryStrike).unwrap();
        let p = &model.profile;
        let (w, t_m) = (p.bays[0].width_m, p.design.thickness_m);
        let sigma = p.design.allowable_stress_pa;
        let tension = p.bays[0].max_tension_n;
        // The loaded climber: 300 kg own mass + 400 kg payload; its weight at the anchor bay is
        // checked against an independent CR3BP gradient in model::climber's tests.
        let weight = e.climber_load.as_ref().unwrap().weight_n[0];
        let extra = weight - 300.0; // less the 300 N traffic envelope of the demo
        assert!(extra > 500.0, "{extra}");
        // Holes at which a survivor of five fails: h = w - load / (t sigma).
        let h_alone = w - tension / 5.0 / (t_m * sigma);
        let h_loaded = w - (tension + extra) / 5.0 / (t_m * sigma);
        assert!(0.0 < h_loaded && h_loaded < h_alone, "{h_loaded} {h_alone}");
        // Four intact survivors then carry (T + extra)/4 each against w t sigma.
        let four_fail = (tension + extra) / 4.0 > w * t_m * sigma * (1.0 - CAPACITY_TOL);
        for (hole, cut) in [
            (0.5 * (h_loaded + h_alone), true),
            (0.999 * h_loaded, false),
        ] {
            let mut scratch = e.new_scratch();
            let mut tally = e.empty_tally();
            let mut run = HistoryRun::new(&e, 0, 1, &mut scratch, &mut tally, None, None);
            weakened_bay(&mut run, hole);
            // Without the climber the bay is stable with this hole (a survivor of five).
            assert!(tension / 5.0 < (w - hole) * t_m * sigma);
            let flow = run.on_climber_load(3600.0, 0, true);
            let n = run.e.ribbons;
            let intact1 = run.scratch.intact[1];
            let loss = run.out.loss;
            let cuts = run.tally.climber_load_cuts;
            if cut {
                assert!(!intact1, "the climber's weight must cut the holed segment");
                if four_fail {
                    assert_eq!(cuts, 5);
                    assert_eq!(flow, Flow::End);
                    assert_eq!(loss.unwrap().cause, LossCause::ClimberLoad);
                } else {
                    assert_eq!(cuts, 1);
                    assert!(loss.is_none());
                }
            } else {
                assert!(
                    intact1,
                    "hole {hole} below the loaded critical width {h_loaded}"
                );
                assert_eq!(cuts, 0);
                assert_eq!(flow, Flow::Go);
                // Leaving again changes nothing and the bay carries its design tension.
                assert_eq!(run.on_climber_load(7200.0, 0, false), Flow::Go);
                assert_eq!(run.scratch.climbers_on_bay[0], 0);
                assert_eq!(e.bay_tension_n(0, run.scratch), tension);
                assert_eq!(run.scratch.cuts_in(0), 1);
                assert_eq!(n, 6);
            }
        }
    }

    const CAPACITY_TOL: f64 = crate::structure::load_sharing::CAPACITY_TOLERANCE;

    /// The merged-bay rule on constructed bays 10 and 11 of the demo (no repair, cross-link
    /// hits on, equal sharing, net section): the cross-link between them is cut. Worked by
    /// hand: the span's intact ribbons are those intact in both bays, each carrying T_b / k in
    /// bay b; a ribbon of width w fails when T_b / k > w t sigma.
    #[test]
    fn a_cut_cross_link_merges_two_bays_under_the_union_of_their_cuts() {
        let model = demo_model(|v| {
            v["repair"] = serde_json::Value::Null;
            v["tether"]["cross_link_hits"] =
                serde_json::json!({"exposed_area_m2": 1.0, "critical_diameter_mm": 0.5});
        });
        let e = Engine::new(&model, 1.0).unwrap();
        let p = &model.profile;
        let t_m = p.design.thickness_m;
        let sigma = p.design.allowable_stress_pa;
        let n = e.ribbons;
        let setup = |run: &mut HistoryRun<'_, '_>, cut10: &[usize], cut11: &[usize]| {
            for (bay, cuts) in [(10u32, cut10), (11, cut11)] {
                let slot = run.scratch.slot(bay, n);
                for &i in cuts {
                    run.scratch.intact[slot * n + i] = false;
                }
                run.scratch.add_cuts(slot, n, cuts.len() as u32, 0.0, 1e-12);
                run.loads_changed(slot, 0.0);
            }
            run.scratch.link_cut[11] = true;
            run.scratch.links_cut.push(11);
        };
        // Ribbons 0-2 cut below, 3-4 above: one ribbon left along the span; it carries the
        // whole tension, beyond w t sigma (6 / 2.2 times it at the design margin): loss.
        for b in [10, 11] {
            assert!(p.bays[b].max_tension_n > p.bays[b].width_m * t_m * sigma);
        }
        let mut scratch = e.new_scratch();
        let mut tally = e.empty_tally();
        let mut run = HistoryRun::new(&e, 0, 1, &mut scratch, &mut tally, None, None);
        setup(&mut run, &[0, 1, 2], &[3, 4]);
        assert_eq!(run.scratch.span_of(10), (10, 11));
        assert_eq!(run.settle_span(3600.0, 10, 11, None), Flow::End);
        assert_eq!(run.out.loss.unwrap().cause, LossCause::Cascade);
        // Ribbon 0 cut below, ribbon 1 above: four left, each T_b / 4 (below w t sigma); the
        // critical width of ribbon 2 in bay b is w_b - T_b / (4 t sigma), and ribbon 1 in bay
        // 10 (intact there, cut above) carries nothing and cannot be cut again.
        let mut scratch = e.new_scratch();
        let mut tally = e.empty_tally();
        let mut run = HistoryRun::new(&e, 0, 1, &mut scratch, &mut tally, None, None);
        setup(&mut run, &[0], &[1]);
        assert_eq!(run.settle_span(3600.0, 10, 11, None), Flow::Go);
        assert!(run.out.loss.is_none());
        for b in [10u32, 11] {
            let slot = run.scratch.slot_of(b).unwrap();
            let bay = &p.bays[b as usize];
            // (The engine's 1e-9 capacity tolerance: a load within it counts as failing.)
            let want = bay.width_m - bay.max_tension_n / 4.0 / (1.0 - CAPACITY_TOL) / (t_m * sigma);
            let got = run.scratch.critical_m[slot * n + 2];
            assert!((got / want - 1.0).abs() < 1e-9, "bay {b}: {got} vs {want}");
        }
        let s10 = run.scratch.slot_of(10).unwrap();
        assert!(run.scratch.intact[s10 * n + 1]);
        assert_eq!(run.scratch.cut_rate_s[s10 * n + 1], 0.0);
        assert_eq!(run.scratch.cuts_in(10) + run.scratch.cuts_in(11), 2);
    }

    #[test]
    fn zero_threshold_replaces_every_intact_segment_of_a_visited_bay() {
        let model = demo_model(|v| {
            v["repair"]["climber"]["payload_kg"] = serde_json::json!(4000.0);
            v["repair"]["preventive_replacement"] = serde_json::json!({
                "threshold": {"kind": "fraction_of_width", "fraction": 0.0},
                "extra_spares_per_trip": 6
            });
        });
        for sampler in [Sampler::EveryStrike, Sampler::OnDemand] {
            let e = Engine::with_sampler(&model, 1.0, sampler).unwrap();
            let mut scratch = e.new_scratch();
            let mut tally = e.empty_tally();
            let mut run = HistoryRun::new(&e, 0, 1, &mut scratch, &mut tally, None, None);
            let n = e.ribbons;
            weakened_bay(&mut run, 1e-4);
            let slot = run.scratch.slot_of(0).unwrap();
            run.loads_changed(slot, 0.0);
            let mut fleet = run.fleet.take().unwrap();
            let plan = e.repair.as_ref().unwrap();
            let replaced = run.on_splice(&mut fleet, plan, 86_400.0, 0, 0, 1);
            assert_eq!(replaced as usize, n - 1, "{sampler:?}");
            assert!(run.scratch.intact[..n].iter().all(|&ok| ok));
            assert!(run.scratch.worst_hole_m[..n].iter().all(|&h| h == 0.0));
            assert_eq!(run.tally.repair.preventive_at_visits, (n - 1) as u64);
            assert_eq!(run.tally.repair.preventive_short_of_spares, 0);
            // Stock was debited: 20 at the base less the five replacements.
            assert_eq!(fleet.stock(0), 20 - (n as u32 - 1));
        }
    }

    #[test]
    fn a_threshold_above_every_critical_width_draws_nothing_and_replaces_nothing() {
        let model = demo_model(|v| {
            v["repair"]["preventive_replacement"] = serde_json::json!({
                "threshold": {"kind": "fraction_of_width", "fraction": 1.0}
            });
        });
        let e = Engine::new(&model, 1.0).unwrap();
        let mut scratch = e.new_scratch();
        let mut tally = e.empty_tally();
        let mut run = HistoryRun::new(&e, 0, 1, &mut scratch, &mut tally, None, None);
        weakened_bay(&mut run, 1e-3);
        let slot = run.scratch.slot_of(0).unwrap();
        run.loads_changed(slot, 0.0);
        let before = run.damage.clone();
        let (r, short) = run.inspect_bay(86_400.0, 0, 6);
        assert_eq!((r, short), (0, 0));
        // The damage stream is untouched: the history goes on as without the policy.
        let mut a = before;
        assert_eq!(
            rand::Rng::next_u64(&mut a),
            rand::Rng::next_u64(&mut run.damage)
        );
        // An untouched bay is not set up either.
        assert_eq!(run.inspect_bay(86_400.0, 7, 6), (0, 0));
        assert!(run.scratch.slot_of(7).is_none());
    }

    /// Severance probability by enumeration of every assignment of the `m` segments to their
    /// parts (bin 0: at or above h_0; bin k: in [h_k, h_{k-1}); bin m: below h_{m-1}) with the
    /// tilted part probabilities written out directly (q' above h_0, the rest scaled by
    /// (1 - q')/(1 - q)), and the cascade rule "at least k + 1 segments at or above h_k for
    /// every k < m" applied to each assignment. Independent of both the F-shift used by
    /// `sever_probability` and the dynamic program of `analytic::cascade`.
    fn enumerated(ln_f: &[Vec<f64>], gamma: Option<f64>, level: usize) -> f64 {
        let m = ln_f.len();
        let rows: Vec<Vec<f64>> = ln_f
            .iter()
            .map(|lf| {
                let f: Vec<f64> = lf.iter().map(|x| x.exp()).collect();
                let mut row = vec![1.0 - f[0]];
                for k in 1..m {
                    row.push(f[k - 1] - f[k]);
                }
                row.push(f[m - 1]);
                if let Some(g) = gamma {
                    // Parts 0..=level lie at or above h_level.
                    let q: f64 = row[..=level].iter().sum();
                    if q > 0.0 && q < 1.0 {
                        let qt = g * q / (1.0 + (g - 1.0) * q);
                        for (b, x) in row.iter_mut().enumerate() {
                            *x *= if b <= level {
                                qt / q
                            } else {
                                (1.0 - qt) / (1.0 - q)
                            };
                        }
                    }
                }
                row
            })
            .collect();
        let mut total = 0.0;
        let mut bins = vec![0usize; m];
        loop {
            let p: f64 = bins.iter().enumerate().map(|(r, &b)| rows[r][b]).product();
            // At least k + 1 segments at or above h_k, for every k.
            let severs = (0..m).all(|k| bins.iter().filter(|&&b| b <= k).count() > k);
            if severs {
                total += p;
            }
            let mut r = 0;
            while r < m {
                bins[r] += 1;
                if bins[r] <= m {
                    break;
                }
                bins[r] = 0;
                r += 1;
            }
            if r == m {
                return total;
            }
        }
    }

    #[test]
    fn tilted_severance_probability_matches_enumeration_of_the_tilted_parts() {
        use crate::analytic::cascade::{SeverTable, MAX_SEGMENTS};
        let table = SeverTable::new();
        let mut work = vec![0.0; 2 * table.max_states()];
        // ln F_k = ln P(M < h_k), non-increasing in k: distinct rows, identical rows, and a
        // row whose old hole already reaches h_1 (-inf from k = 1 on).
        let cases: Vec<Vec<Vec<f64>>> = vec![
            vec![
                vec![-0.01, -0.05, -0.3],
                vec![-0.002, -0.04, -0.9],
                vec![-0.2, -0.25, -1.5],
            ],
            vec![vec![-0.003, -0.02, -0.1, -0.6]; 4],
            vec![vec![-0.05, f64::NEG_INFINITY], vec![-0.001, -0.3]],
        ];
        for ln_f in &cases {
            let m = ln_f.len();
            let mut a = [[0.0f64; MAX_SEGMENTS]; MAX_SEGMENTS];
            for (r, lf) in ln_f.iter().enumerate() {
                a[r][..m].copy_from_slice(lf);
            }
            for level in 0..m {
                for gamma in [None, Some(7.0), Some(200.0)] {
                    let tilt = gamma.map(|g| Tilt {
                        gamma: g,
                        level,
                        ..Tilt::NONE
                    });
                    let got = sever_probability(&table, m, &a, tilt.as_ref(), &mut work).unwrap();
                    let want = enumerated(ln_f, gamma, level);
                    assert!(
                        (got - want).abs() <= 1e-12 * want.max(1e-300) + 1e-15,
                        "m {m}, level {level}, gamma {gamma:?}: {got} vs enumeration {want}"
                    );
                }
            }
        }
    }
}

//! One history: the loop reads in one screen.
//!
//! next strike -> repair events due before it (detections, departures, arrivals, splices,
//! returns, resupplies) -> apply strike: hole, worst cross-section, load check and cascade ->
//! record cuts, schedule their detection -> a loss ends the history.
//!
//! A segment's state is its largest hole (the worst cross-section; see the sampler's notes on why
//! holes along a bay do not add) and whether it is cut. Only bays touched in this history hold
//! state, in a reusable arena: nothing is allocated per strike or per history once the arena
//! has grown to the largest number of bays touched in a history.
//!
//! Strike gaps are exponential, so drawing the next strike time before handling the repair
//! events that come earlier is exact (memorylessness), and the strike stream's draws do not
//! depend on repair: two scenarios differing only in repair see the same strikes.

use crate::damage::{removed_width_m, Impact, RibbonTarget};
use crate::repair::{EventKind, Fleet, RepairPlan, RepairTally};
use crate::scenario::LoadSharingSpec;
use crate::structure::load_sharing::{settle_bay, CAPACITY_TOLERANCE, MAX_RIBBONS};

use super::rng::{stream, Purpose};
use super::sampler::Strike;
use super::tally::{Loss, LossCause, Tally};
use super::Engine;

const UNTOUCHED: u32 = u32::MAX;

/// Reusable per-thread state of a history.
#[derive(Debug, Default)]
pub struct Scratch {
    slot_of_bay: Vec<u32>,
    touched: Vec<u32>,
    worst_hole_m: Vec<f64>,
    intact: Vec<bool>,
    cuts_in_bay: Vec<u32>,
    /// Times of the bay's current cuts, oldest first (stride N).
    cut_times: Vec<f64>,
    bays_with_cuts: u32,
    cut_since_s: f64,
    cut_time_acc_s: f64,
    max_cuts: u32,
    fleet: Option<Fleet>,
    /// Validation mode: damaged bays and their cut counts.
    pub(crate) validation_bays: Vec<(u32, u64)>,
    /// Bays with at least one cut and their strike rates, 1/s.
    damaged: Vec<(u32, f64)>,
}

impl Scratch {
    /// Scratch for a tether of `bays` bays and `ribbons` ribbons, with repair state if needed.
    pub fn new(bays: usize, ribbons: usize, plan: Option<(&RepairPlan, f64)>) -> Self {
        Scratch {
            slot_of_bay: vec![UNTOUCHED; bays],
            touched: Vec::with_capacity(64),
            worst_hole_m: Vec::with_capacity(64 * ribbons),
            intact: Vec::with_capacity(64 * ribbons),
            cuts_in_bay: Vec::with_capacity(64),
            cut_times: Vec::with_capacity(64 * ribbons),
            fleet: plan.map(|(p, mission)| Fleet::new(p, mission)),
            ..Default::default()
        }
    }

    pub(crate) fn reset(&mut self) {
        for &b in &self.touched {
            self.slot_of_bay[b as usize] = UNTOUCHED;
        }
        self.touched.clear();
        self.worst_hole_m.clear();
        self.intact.clear();
        self.cuts_in_bay.clear();
        self.cut_times.clear();
        self.bays_with_cuts = 0;
        self.damaged.clear();
        self.cut_since_s = 0.0;
        self.cut_time_acc_s = 0.0;
        self.max_cuts = 0;
    }

    pub(crate) fn slot(&mut self, bay: u32, ribbons: usize) -> usize {
        let s = self.slot_of_bay[bay as usize];
        if s != UNTOUCHED {
            return s as usize;
        }
        let s = self.touched.len();
        self.touched.push(bay);
        self.slot_of_bay[bay as usize] = s as u32;
        self.worst_hole_m.extend(std::iter::repeat_n(0.0, ribbons));
        self.intact.extend(std::iter::repeat_n(true, ribbons));
        self.cut_times.extend(std::iter::repeat_n(0.0, ribbons));
        self.cuts_in_bay.push(0);
        s
    }

    pub(crate) fn note_max_cuts(&mut self, cuts: u32) {
        self.max_cuts = self.max_cuts.max(cuts);
    }

    fn damaged_rate(&self) -> f64 {
        self.damaged.iter().map(|d| d.1).sum()
    }

    fn cuts_in(&self, bay: u32) -> u32 {
        match self.slot_of_bay[bay as usize] {
            UNTOUCHED => 0,
            s => self.cuts_in_bay[s as usize],
        }
    }

    /// Record `newly` new cuts in the bay of `slot` at `t`.
    fn add_cuts(&mut self, slot: usize, ribbons: usize, newly: u32, t: f64, bay_rate_s: f64) {
        let before = self.cuts_in_bay[slot];
        for k in 0..newly {
            let i = (before + k) as usize;
            if i < ribbons {
                self.cut_times[slot * ribbons + i] = t;
            }
        }
        self.cuts_in_bay[slot] = before + newly;
        self.max_cuts = self.max_cuts.max(self.cuts_in_bay[slot]);
        if before == 0 {
            if self.bays_with_cuts == 0 {
                self.cut_since_s = t;
            }
            self.bays_with_cuts += 1;
            self.damaged.push((self.touched[slot], bay_rate_s));
        }
    }
}

/// The rare-event change of measure inside one history: strikes on bays that already have a cut
/// are made `theta` times as frequent by an extra Poisson process of rate (theta - 1) x (strike
/// rate of the damaged bays), and the history carries the likelihood ratio
/// theta^-(strikes on damaged bays) x exp((theta - 1) x integral of that rate over time)
/// (failure biasing by rate inflation; Heidelberger 1995, ACM TOMACS 5, 43).
struct Bias {
    theta: f64,
    ln_theta: f64,
    log_w: f64,
    rate_s: f64,
    t_last: f64,
    next_extra_s: f64,
    rng: rand_pcg::Pcg64Mcg,
}

impl Bias {
    fn new(theta: f64, rng: rand_pcg::Pcg64Mcg) -> Self {
        Bias {
            theta,
            ln_theta: theta.ln(),
            log_w: 0.0,
            rate_s: 0.0,
            t_last: 0.0,
            next_extra_s: f64::INFINITY,
            rng,
        }
    }

    fn active(&self) -> bool {
        self.theta > 1.0
    }

    /// The damaged set changed at `t` (or an extra strike was used): close the compensator
    /// integral at the old rate and draw the next extra strike at the new one.
    fn changed(&mut self, t: f64, damaged_rate_s: f64) {
        if !self.active() {
            return;
        }
        self.log_w += (self.theta - 1.0) * self.rate_s * (t - self.t_last);
        self.t_last = t;
        self.rate_s = damaged_rate_s;
        let extra = (self.theta - 1.0) * damaged_rate_s;
        self.next_extra_s = if extra > 0.0 {
            t - super::sampler::open01(&mut self.rng).ln() / extra
        } else {
            f64::INFINITY
        };
    }

    /// A damaged bay chosen in proportion to its strike rate.
    fn pick_damaged(&mut self, damaged: &[(u32, f64)]) -> usize {
        let total: f64 = damaged.iter().map(|d| d.1).sum();
        let mut x = super::sampler::unit(&mut self.rng) * total;
        for &(b, r) in damaged {
            if x < r {
                return b as usize;
            }
            x -= r;
        }
        damaged.last().map_or(0, |d| d.0 as usize)
    }

    /// Likelihood ratio of the history observed until `end`.
    fn weight_at(&self, end: f64) -> f64 {
        if !self.active() {
            return 1.0;
        }
        (self.log_w + (self.theta - 1.0) * self.rate_s * (end - self.t_last)).exp()
    }
}

/// What happened in one history, beyond what went into the tally.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HistoryOutcome {
    /// The system loss, if any.
    pub loss: Option<Loss>,
    /// Cut segments.
    pub cuts: u32,
    /// Strikes sampled.
    pub strikes: u64,
    /// Likelihood ratio of the history (1 without the rare-event estimator).
    pub weight: f64,
    /// An impossible state reached by this history (it is counted, and the run aborts past a
    /// threshold); replay it with `simulate --replay-history`.
    pub anomaly: Option<&'static str>,
}

/// Event-log entry for replaying a history.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum LogEvent {
    /// A strike and the width it removed (m, 0 for none).
    Strike {
        /// Time, s.
        time_s: f64,
        /// The strike.
        strike: Strike,
        /// Width removed, m.
        removed_m: f64,
    },
    /// Segments cut by that strike (including cascade).
    Cut {
        /// Time, s.
        time_s: f64,
        /// Bay.
        bay: u32,
        /// Newly cut segments.
        newly_cut: u32,
        /// Survivors left in the bay.
        survivors: u32,
    },
    /// A repair event.
    Repair {
        /// Time, s.
        time_s: f64,
        /// What happened.
        kind: EventKind,
    },
    /// System loss.
    Loss(Loss),
}

impl Default for HistoryOutcome {
    fn default() -> Self {
        HistoryOutcome {
            loss: None,
            cuts: 0,
            strikes: 0,
            weight: 1.0,
            anomaly: None,
        }
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
        mut log: Option<&mut Vec<LogEvent>>,
    ) -> HistoryOutcome {
        if let Some(v) = self.model.scenario.validation_mode {
            return self.run_validation_history(index, seed, &v, scratch, tally, log);
        }
        let mut rng = stream(seed, Purpose::Strikes, index);
        let mut repair_rng = stream(seed, Purpose::Repair, index);
        let mut bias = Bias::new(self.bias_factor, stream(seed, Purpose::Bias, index));
        scratch.reset();
        let mut fleet = scratch.fleet.take();
        if let (Some(f), Some(plan)) = (fleet.as_mut(), self.repair.as_ref()) {
            f.reset(plan);
        }
        let mission = self.mission_s;
        let mut out = HistoryOutcome::default();
        let mut t_strike = self.sampler.next_gap_s(&mut rng);
        let mut last_t = 0.0;
        loop {
            let t_repair = fleet
                .as_ref()
                .and_then(|f| f.queue.next_time())
                .unwrap_or(f64::INFINITY);
            if t_strike.min(t_repair).min(bias.next_extra_s) > mission {
                break;
            }
            // Repair events first on ties, then extra (biased) strikes, then natural strikes.
            if t_repair <= t_strike && t_repair <= bias.next_extra_s {
                if let (Some(f), Some(plan)) = (fleet.as_mut(), self.repair.as_ref()) {
                    let Some(ev) = f.queue.pop() else { break };
                    if let Some(l) = log.as_deref_mut() {
                        l.push(LogEvent::Repair {
                            time_s: ev.time_s,
                            kind: ev.kind,
                        });
                    }
                    if ev.time_s.is_nan() || ev.time_s < last_t {
                        out.anomaly = Some("time went backwards at a repair event");
                        break;
                    }
                    last_t = ev.time_s;
                    let damaged_before = scratch.damaged.len();
                    self.handle_repair_event(ev.time_s, ev.kind, plan, f, scratch, tally);
                    if self.strict {
                        let bay = match ev.kind {
                            EventKind::SpliceDone { bay, .. } | EventKind::Detect { bay } => {
                                Some(bay)
                            }
                            _ => Some(u32::MAX),
                        };
                        if let Some(a) = self
                            .check_invariants(scratch, bay)
                            .or_else(|| f.check(plan))
                        {
                            out.anomaly = Some(a);
                            break;
                        }
                    }
                    if scratch.damaged.len() != damaged_before {
                        bias.changed(ev.time_s, scratch.damaged_rate());
                    }
                }
                continue;
            }
            let (t, strike) = if bias.next_extra_s < t_strike {
                let t = bias.next_extra_s;
                let j = bias.pick_damaged(&scratch.damaged);
                let s = self.sampler.sample_in_bay(&mut bias.rng, j);
                bias.next_extra_s = f64::INFINITY; // drawn again below
                (t, s)
            } else {
                // Draw order per strike: its details, then the gap to the next one (the same
                // order as the bare strike stream).
                let t = t_strike;
                let s = self.sampler.sample(&mut rng);
                t_strike = t + self.sampler.next_gap_s(&mut rng);
                (t, s)
            };
            out.strikes += 1;
            if t.is_nan() || t < last_t {
                out.anomaly = Some("time went backwards at a strike");
                break;
            }
            last_t = t;
            if !(strike.diameter_m.is_finite()
                && strike.diameter_m > 0.0
                && strike.speed_m_per_s.is_finite())
            {
                out.anomaly = Some("non-finite strike");
                break;
            }
            if bias.active() && scratch.cuts_in(strike.bay) > 0 {
                bias.log_w -= bias.ln_theta;
            }
            let damaged_before = scratch.damaged.len();
            let (newly, loss) =
                self.apply_strike(t, &strike, scratch, tally, &mut out, log.as_deref_mut());
            if bias.active()
                && (scratch.damaged.len() != damaged_before || bias.next_extra_s.is_infinite())
            {
                bias.changed(t, scratch.damaged_rate());
            }
            if self.strict {
                if let Some(a) = self.check_invariants(scratch, Some(strike.bay)) {
                    out.anomaly = Some(a);
                    break;
                }
            }
            if newly > 0 {
                if let (Some(f), Some(plan)) = (fleet.as_mut(), self.repair.as_ref()) {
                    let cuts = scratch.cuts_in(strike.bay);
                    for _ in 0..newly {
                        f.on_cut(plan, &mut repair_rng, strike.bay, cuts, t);
                    }
                }
            }
            if let Some(mut loss) = loss {
                if fleet
                    .as_ref()
                    .is_some_and(|f| f.bay_waits_for_stock(loss.bay))
                {
                    loss.cause = LossCause::StockoutDelay;
                }
                out.loss = Some(loss);
                break;
            }
        }
        let end = out.loss.map_or(mission, |l| l.time_s);
        if let (Some(f), Some(plan)) = (fleet.as_mut(), self.repair.as_ref()) {
            f.finish(plan, end, &mut tally.repair);
        }
        scratch.fleet = fleet;
        out.weight = bias.weight_at(end);
        if self.strict && out.anomaly.is_none() && out.loss.is_none() {
            out.anomaly = self.check_invariants(scratch, None);
        }
        if !out.weight.is_finite() && out.anomaly.is_none() {
            out.anomaly = Some("non-finite likelihood ratio");
        }
        self.close_history(index, end, scratch, tally, &out, log);
        out
    }

    /// Scores common to every history kind.
    pub(crate) fn close_history(
        &self,
        index: u64,
        end: f64,
        scratch: &mut Scratch,
        tally: &mut Tally,
        out: &HistoryOutcome,
        log: Option<&mut Vec<LogEvent>>,
    ) {
        if let Some(reason) = out.anomaly {
            tally.record_anomaly(index, reason);
        }
        let mut cut_time = scratch.cut_time_acc_s;
        if scratch.bays_with_cuts > 0 {
            cut_time += (end - scratch.cut_since_s).max(0.0);
        }
        tally.time_with_cut_bay_s += cut_time.round() as u64;
        tally.time_observed_s += end.max(0.0).round() as u64;
        tally.histories += 1;
        tally.strikes += out.strikes;
        tally.cuts += u64::from(out.cuts);
        tally.cuts_sq += u128::from(out.cuts) * u128::from(out.cuts);
        let m = (scratch.max_cuts as usize).min(tally.max_cuts_in_bay.len().saturating_sub(1));
        if let Some(c) = tally.max_cuts_in_bay.get_mut(m) {
            *c += 1;
        }
        if let (Some(loss), Some(wb)) = (out.loss, tally.weighted.last_mut()) {
            let w = out.weight;
            wb.sum_w += w;
            wb.sum_w2 += w * w;
            wb.max_w = wb.max_w.max(w);
            let y = self.year_of(loss.time_s);
            if let Some(c) = wb.sum_w_by_year.get_mut(y) {
                *c += w;
            }
        }
        if let Some(loss) = out.loss {
            tally.losses += 1;
            tally.losses_by_cause[loss.cause as usize] += 1;
            let y = self.year_of(loss.time_s);
            if let Some(c) = tally.losses_by_year.get_mut(y) {
                *c += 1;
            }
            tally.losses_by_band[self.bay_band[loss.bay as usize] as usize] += 1;
            if let Some(l) = log {
                l.push(LogEvent::Loss(loss));
            }
        }
    }

    /// Consistency of the touched bays (all, or only `only_bay`; strict mode, used by the tests
    /// after every event on the bay the event touched, and on all bays at the end of a history):
    /// cut counts match the intact flags, holes are finite and within the ribbon, damaged bays
    /// are listed, and no intact ribbon is overloaded.
    pub(crate) fn check_invariants(
        &self,
        scratch: &Scratch,
        only_bay: Option<u32>,
    ) -> Option<&'static str> {
        let n = self.ribbons;
        let slots = match only_bay {
            Some(b) => match scratch.slot_of_bay.get(b as usize) {
                Some(&s) if s != UNTOUCHED => s as usize..s as usize + 1,
                _ => 0..0,
            },
            None => 0..scratch.touched.len(),
        };
        for slot in slots {
            let bay = scratch.touched[slot];
            let base = slot * n;
            let w = self.model.profile.bays[bay as usize].width_m;
            let intact = &scratch.intact[base..base + n];
            let cut = intact.iter().filter(|&&ok| !ok).count() as u32;
            if cut != scratch.cuts_in_bay[slot] {
                return Some("cut count does not match the segments' state");
            }
            if scratch.worst_hole_m[base..base + n]
                .iter()
                .any(|h| !(h.is_finite() && *h >= 0.0 && *h <= w))
            {
                return Some("hole width outside [0, ribbon width]");
            }
            if (cut > 0) != scratch.damaged.iter().any(|d| d.0 == bay) {
                return Some("damaged-bay list out of step");
            }
            if cut as usize == n {
                continue; // a lost bay ends the history
            }
            let mut loads = [0.0f64; MAX_RIBBONS];
            let tension = self.model.profile.bays[bay as usize].max_tension_n;
            if !tension.is_finite() {
                return Some("non-finite tension");
            }
            self.sharing.distribute(intact, tension, &mut loads[..n]);
            for i in 0..n {
                let cap = self
                    .model
                    .profile
                    .ribbon_capacity_n(bay as usize, scratch.worst_hole_m[base + i]);
                if !loads[i].is_finite() {
                    return Some("non-finite ribbon load");
                }
                if intact[i] && loads[i] > cap * (1.0 - CAPACITY_TOLERANCE) {
                    return Some("an intact ribbon is overloaded after settling");
                }
            }
        }
        None
    }

    pub(crate) fn year_of(&self, time_s: f64) -> usize {
        let y = (time_s / crate::scenario::SECONDS_PER_YEAR) as usize;
        y.min(self.years.saturating_sub(1))
    }

    fn handle_repair_event(
        &self,
        t: f64,
        kind: EventKind,
        plan: &RepairPlan,
        fleet: &mut Fleet,
        scratch: &mut Scratch,
        tally: &mut Tally,
    ) {
        let policy = self.policy.as_ref();
        let rt = &mut tally.repair;
        match kind {
            EventKind::Detect { bay } => {
                fleet.on_detect(bay, scratch.cuts_in(bay), t, rt);
                fleet.dispatch(plan, policy, t, rt);
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
                self.splice(t, bay, segments, scratch, rt);
                fleet.on_splice_done(plan, station, bay, t);
            }
            EventKind::Return { station } => {
                fleet.on_return(station, t);
                fleet.dispatch(plan, policy, t, rt);
            }
            EventKind::Resupply { station } => {
                fleet.on_resupply(plan, station, t);
                fleet.dispatch(plan, policy, t, rt);
            }
        }
    }

    /// Replace up to `segments` cut segments of `bay` with new ribbon.
    fn splice(&self, t: f64, bay: u32, segments: u32, scratch: &mut Scratch, rt: &mut RepairTally) {
        let n = self.ribbons;
        let slot = scratch.slot(bay, n);
        let base = slot * n;
        let mut left = segments.min(scratch.cuts_in_bay[slot]);
        let done = left;
        for i in 0..n {
            if left == 0 {
                break;
            }
            if !scratch.intact[base + i] {
                scratch.intact[base + i] = true;
                scratch.worst_hole_m[base + i] = 0.0;
                left -= 1;
            }
        }
        // Times of the oldest cuts, paired first in first out.
        let cuts = scratch.cuts_in_bay[slot] as usize;
        for k in 0..done as usize {
            let dt_h = (t - scratch.cut_times[base + k]) / 3600.0;
            rt.time_to_splice_hist[RepairTally::splice_bin(dt_h)] += 1;
            rt.time_to_splice_sum_s += (dt_h * 3600.0).round() as u64;
        }
        scratch
            .cut_times
            .copy_within(base + done as usize..base + cuts.min(n), base);
        scratch.cuts_in_bay[slot] -= done;
        rt.splices += u64::from(done);
        if let Some(c) = rt.splices_by_year.get_mut(self.year_of(t)) {
            *c += u64::from(done);
        }
        if done > 0 && scratch.cuts_in_bay[slot] == 0 {
            scratch.damaged.retain(|d| d.0 != bay);
            scratch.bays_with_cuts -= 1;
            if scratch.bays_with_cuts == 0 {
                scratch.cut_time_acc_s += t - scratch.cut_since_s;
            }
        }
    }

    /// Apply one strike at time `t`; returns the number of new cuts and the loss if the bay
    /// lost its last load path.
    fn apply_strike(
        &self,
        t: f64,
        s: &Strike,
        scratch: &mut Scratch,
        tally: &mut Tally,
        out: &mut HistoryOutcome,
        log: Option<&mut Vec<LogEvent>>,
    ) -> (u32, Option<Loss>) {
        let n = self.ribbons;
        let j = s.bay as usize;
        let slot = scratch.slot(s.bay, n);
        let base = slot * n;
        let r = s.ribbon as usize;
        let bay = &self.model.profile.bays[j];
        let w = bay.width_m;
        let mut extrapolated = false;
        let removed = if scratch.intact[base + r] {
            let (law, density): (&dyn crate::damage::PerforationLaw, f64) =
                match (&self.model.ejecta, s.ejecta_altitude_m) {
                    (Some(e), Some(_)) => {
                        (&e.perforation, e.environment.particle_density_kg_per_m3)
                    }
                    _ => (self.model.perforation.as_ref(), self.particle_density),
                };
            let impact = Impact {
                diameter_m: s.diameter_m,
                speed_m_per_s: s.speed_m_per_s,
                cos_incidence: s.cos_incidence,
                density_kg_per_m3: density,
                track_angle_rad: s.track_angle_rad,
            };
            let target = RibbonTarget {
                width_m: w,
                thickness_m: self.thickness_m,
                density_kg_per_m3: self.ribbon_density,
            };
            let hole = law.hole_width_m(&impact, &target);
            extrapolated = hole > 0.0 && law.is_extrapolated(&impact, &target);
            removed_width_m(s.centre_m, hole, w)
        } else {
            0.0 // a cut segment carries nothing; a second hole changes nothing
        };
        let mut log = log;
        if let Some(l) = log.as_deref_mut() {
            l.push(LogEvent::Strike {
                time_s: t,
                strike: *s,
                removed_m: removed,
            });
        }
        if removed <= scratch.worst_hole_m[base + r] {
            return (0, None);
        }
        scratch.worst_hole_m[base + r] = removed;
        // Fast path: under equal (or no) sharing the struck ribbon's load is known, and the other
        // ribbons are unchanged and were stable, so the bay settles unless this ribbon fails —
        // the same test settle_bay would make first. Most holes are sub-critical.
        let survivors = match self.sharing_kind {
            LoadSharingSpec::Equal => Some((n as u32 - scratch.cuts_in_bay[slot]) as f64),
            LoadSharingSpec::None => Some(n as f64),
            LoadSharingSpec::Local => None,
        };
        if let Some(k) = survivors {
            let load = bay.max_tension_n / k;
            if load <= self.model.profile.ribbon_capacity_n(j, removed) * (1.0 - CAPACITY_TOLERANCE)
            {
                tally.subcritical_holes += 1;
                return (0, None);
            }
        }
        let mut capacity = [0.0f64; MAX_RIBBONS];
        for (c, hole) in capacity
            .iter_mut()
            .zip(&scratch.worst_hole_m[base..base + n])
        {
            *c = self.model.profile.ribbon_capacity_n(j, *hole);
        }
        let intact = &mut scratch.intact[base..base + n];
        // Slices have N <= MAX_RIBBONS entries by construction, so settle_bay cannot fail here.
        let Ok(outcome) = settle_bay(
            self.sharing.as_ref(),
            intact,
            &capacity[..n],
            bay.max_tension_n,
        ) else {
            return (0, None);
        };
        if outcome.newly_cut == 0 {
            tally.subcritical_holes += 1;
            return (0, None);
        }
        let struck_cut = !intact[r];
        if struck_cut {
            tally.cutting_holes += 1;
            tally.cutting_holes_extrapolated += u64::from(extrapolated);
        }
        let newly = outcome.newly_cut;
        out.cuts += newly;
        tally.cascade_cuts += u64::from(newly - u32::from(struck_cut));
        let band = self.bay_band[j] as usize;
        tally.cuts_by_band[band] += u64::from(newly);
        let y = self.year_of(t);
        if let Some(c) = tally.cuts_by_year.get_mut(y) {
            *c += u64::from(newly);
        }
        scratch.add_cuts(slot, n, newly, t, self.sampler.bay_rate_per_s(j));
        if let Some(l) = log {
            l.push(LogEvent::Cut {
                time_s: t,
                bay: s.bay,
                newly_cut: newly,
                survivors: outcome.survivors,
            });
        }
        if outcome.survivors == 0 {
            let cause = if newly > 1 {
                LossCause::Cascade
            } else {
                LossCause::DirectCut
            };
            return (
                newly,
                Some(Loss {
                    time_s: t,
                    bay: s.bay,
                    cause,
                }),
            );
        }
        (newly, None)
    }
}

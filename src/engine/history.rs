//! Per-history state and the scores common to both samplers.
//!
//! A segment's state is its largest hole (the worst cross-section; see the sampler's notes on why
//! holes along a bay do not add) and whether it is cut. Only bays touched in this history hold
//! state, in a reusable arena ([`Scratch`]): nothing is allocated per strike or per history once
//! the arena has grown to the largest number of bays touched in a history. The event loop itself
//! is in `events.rs`.

use crate::damage::{removed_width_m, Impact, RibbonTarget};
use crate::repair::{EventKind, Fleet, RepairPlan, RepairTally};
use crate::structure::load_sharing::{settle_bay, CAPACITY_TOLERANCE, MAX_RIBBONS};

use super::sampler::Strike;
use super::tally::{Loss, LossCause, Tally};
use super::Engine;

const UNTOUCHED: u32 = u32::MAX;

/// Reusable per-thread state of a history.
#[derive(Debug, Default)]
pub struct Scratch {
    pub(crate) slot_of_bay: Vec<u32>,
    pub(crate) touched: Vec<u32>,
    pub(crate) worst_hole_m: Vec<f64>,
    pub(crate) intact: Vec<bool>,
    pub(crate) cuts_in_bay: Vec<u32>,
    /// Times of the bay's current cuts, oldest first (stride N).
    pub(crate) cut_times: Vec<f64>,
    pub(crate) bays_with_cuts: u32,
    pub(crate) cut_since_s: f64,
    pub(crate) cut_time_acc_s: f64,
    pub(crate) max_cuts: u32,
    pub(crate) fleet: Option<Fleet>,
    /// Synthetic-rates mode: damaged bays and their cut counts.
    pub(crate) validation_bays: Vec<(u32, u64)>,
    /// Bays with at least one cut and their strike rates, 1/s.
    pub(crate) damaged: Vec<(u32, f64)>,
    /// On-demand: critical width of each segment under its current load, m (stride N).
    pub(crate) critical_m: Vec<f64>,
    /// On-demand: cut rate H(c) of each intact segment, 1/s (0 when cut; stride N).
    pub(crate) cut_rate_s: Vec<f64>,
    /// On-demand: sum of `cut_rate_s` over the bay's segments, 1/s.
    pub(crate) bay_cut_rate_s: Vec<f64>,
    /// On-demand: time up to which the bay's worst holes are drawn, s.
    pub(crate) updated_s: Vec<f64>,
    /// Climbers standing in each bay now (every bay).
    pub(crate) climbers_on_bay: Vec<u16>,
    /// Bays with a climber count changed in this history (for the reset).
    pub(crate) climber_bays: Vec<u32>,
    /// Cross-link hits: whether the cross-link at station k (joining bay k - 1 and bay k) is
    /// cut (`bays + 1` entries when cross-link hits are on, else empty).
    pub(crate) link_cut: Vec<bool>,
    /// Stations cut in this history (for the reset).
    pub(crate) links_cut: Vec<u32>,
    /// Time the cross-link at station k was last cut, s (meaningful while `link_cut[k]`).
    pub(crate) link_cut_at_s: Vec<f64>,
    /// Time cross-links spent cut and since re-joined in this history, summed over stations, s.
    pub(crate) link_down_s: f64,
    /// Work buffer of the conditional Monte Carlo's severance sum (sized on first use).
    pub(crate) sever_work: Vec<f64>,
}

impl Scratch {
    /// Scratch for a tether of `bays` bays and `ribbons` ribbons, with repair state if needed.
    pub fn new(bays: usize, ribbons: usize, plan: Option<(&RepairPlan, f64)>) -> Self {
        Scratch {
            slot_of_bay: vec![UNTOUCHED; bays],
            climbers_on_bay: vec![0; bays],
            climber_bays: Vec::with_capacity(64),
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
        for &b in &self.climber_bays {
            self.climbers_on_bay[b as usize] = 0;
        }
        self.climber_bays.clear();
        for &k in &self.links_cut {
            self.link_cut[k as usize] = false;
        }
        self.links_cut.clear();
        self.link_down_s = 0.0;
        for &b in &self.touched {
            self.slot_of_bay[b as usize] = UNTOUCHED;
        }
        self.touched.clear();
        self.critical_m.clear();
        self.cut_rate_s.clear();
        self.bay_cut_rate_s.clear();
        self.updated_s.clear();
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
        self.critical_m.extend(std::iter::repeat_n(0.0, ribbons));
        self.cut_rate_s.extend(std::iter::repeat_n(0.0, ribbons));
        self.bay_cut_rate_s.push(0.0);
        self.updated_s.push(0.0);
        self.cuts_in_bay.push(0);
        s
    }

    /// The arena slot of `bay`, if the bay holds state in this history.
    pub(crate) fn slot_of(&self, bay: u32) -> Option<usize> {
        match self.slot_of_bay[bay as usize] {
            UNTOUCHED => None,
            s => Some(s as usize),
        }
    }

    /// The merged span of `bay`: the bays `a..=b` joined to it through cut cross-links (just
    /// `(bay, bay)` when no cross-link beside it is cut, always without cross-link hits).
    pub(crate) fn span_of(&self, bay: u32) -> (u32, u32) {
        let (mut a, mut b) = (bay, bay);
        while a > 0 && self.link_cut.get(a as usize) == Some(&true) {
            a -= 1;
        }
        while self.link_cut.get(b as usize + 1) == Some(&true) {
            b += 1;
        }
        (a, b)
    }

    /// The merged-bay rule: a ribbon is intact in the span `a..=b` only when it is intact in
    /// every bay of the span (bays without state are intact).
    /// Cross-link time cut up to `end`, summed over stations: the re-joined ones and those
    /// still cut, s.
    pub(crate) fn link_down_until(&self, end: f64) -> f64 {
        self.link_down_s
            + self
                .links_cut
                .iter()
                .filter(|&&k| self.link_cut[k as usize])
                .map(|&k| (end - self.link_cut_at_s[k as usize]).max(0.0))
                .sum::<f64>()
    }

    pub(crate) fn span_intact(&self, a: u32, b: u32, ribbons: usize) -> [bool; MAX_RIBBONS] {
        let mut mask = [false; MAX_RIBBONS];
        mask[..ribbons].fill(true);
        for bay in a..=b {
            if let Some(slot) = self.slot_of(bay) {
                let base = slot * ribbons;
                for (m, &ok) in mask[..ribbons]
                    .iter_mut()
                    .zip(&self.intact[base..base + ribbons])
                {
                    *m &= ok;
                }
            }
        }
        mask
    }

    pub(crate) fn note_max_cuts(&mut self, cuts: u32) {
        self.max_cuts = self.max_cuts.max(cuts);
    }

    pub(crate) fn damaged_rate(&self) -> f64 {
        self.damaged.iter().map(|d| d.1).sum()
    }

    pub(crate) fn cuts_in(&self, bay: u32) -> u32 {
        match self.slot_of_bay[bay as usize] {
            UNTOUCHED => 0,
            s => self.cuts_in_bay[s as usize],
        }
    }

    /// Record `newly` new cuts in the bay of `slot` at `t`.
    pub(crate) fn add_cuts(
        &mut self,
        slot: usize,
        ribbons: usize,
        newly: u32,
        t: f64,
        bay_rate_s: f64,
    ) {
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

/// What happened in one history, beyond what went into the tally.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HistoryOutcome {
    /// The system loss, if any.
    pub loss: Option<Loss>,
    /// Cut segments.
    pub cuts: u32,
    /// Cross-links cut.
    pub cross_link_cuts: u32,
    /// Time cross-links spent cut (re-joined or not), summed over stations, s.
    pub cross_link_down_s: f64,
    /// Strikes sampled.
    pub strikes: u64,
    /// Likelihood ratio of the history (1 without the rare-event estimator).
    pub weight: f64,
    /// Conditional Monte Carlo at cuts: the loss probability this history scored at its cuts
    /// (0 otherwise); the history's estimate is this plus `weight` if it ended in a loss.
    pub captured: f64,
    /// The history was abandoned because a stop was requested; its scores are incomplete and
    /// its batch must be discarded.
    pub stopped: bool,
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
    /// Segments cut by that strike or cut event (including cascade).
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
    /// On-demand: segment `ribbon` of `bay` is cut by a hole removing `removed_m` (drawn from
    /// the hole-rate function above its critical width).
    CutHole {
        /// Time, s.
        time_s: f64,
        /// Bay.
        bay: u32,
        /// Ribbon.
        ribbon: u32,
        /// Removed width, m.
        removed_m: f64,
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
            cross_link_cuts: 0,
            cross_link_down_s: 0.0,
            strikes: 0,
            weight: 1.0,
            captured: 0.0,
            stopped: false,
            anomaly: None,
        }
    }
}

impl Engine<'_> {
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
        tally.cross_link_cuts += u64::from(out.cross_link_cuts);
        tally.cross_link_down_s += out.cross_link_down_s.round() as u64;
        tally.cuts_sq += u128::from(out.cuts) * u128::from(out.cuts);
        let m = (scratch.max_cuts as usize).min(tally.max_cuts_in_bay.len().saturating_sub(1));
        if let Some(c) = tally.max_cuts_in_bay.get_mut(m) {
            *c += 1;
        }
        if let Some(wb) = tally.weighted.last_mut() {
            // The history's score: its loss indicator times its weight, plus what the
            // conditional Monte Carlo scored at its cuts (already added to its years).
            let natural = out.loss.map_or(0.0, |_| out.weight);
            let score = natural + out.captured;
            if score > 0.0 {
                wb.sum_w += score;
                wb.sum_w2 += score * score;
                wb.max_w = wb.max_w.max(score);
            }
            if let Some(loss) = out.loss {
                let y = self.year_of(loss.time_s);
                if let Some(c) = wb.sum_w_by_year.get_mut(y) {
                    *c += natural;
                }
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
            if let Some(c) = tally.losses_by_month.get_mut(self.month_of(loss.time_s)) {
                *c += 1;
            }
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
            let tension = self.bay_tension_n(bay as usize, scratch);
            if !tension.is_finite() {
                return Some("non-finite tension");
            }
            // Loads over the merged span (the bay's own ribbons without cross-link hits).
            let (a, b) = scratch.span_of(bay);
            let span = scratch.span_intact(a, b, n);
            if !span[..n].iter().any(|&ok| ok) {
                continue; // a lost span ends the history
            }
            self.sharing
                .distribute(&span[..n], tension, &mut loads[..n]);
            for i in 0..n {
                let cap = self
                    .model
                    .profile
                    .ribbon_capacity_n(bay as usize, scratch.worst_hole_m[base + i]);
                if !loads[i].is_finite() {
                    return Some("non-finite ribbon load");
                }
                if span[i] && loads[i] > cap * (1.0 - CAPACITY_TOLERANCE) {
                    return Some("an intact ribbon is overloaded after settling");
                }
            }
        }
        None
    }

    pub(crate) fn month_of(&self, time_s: f64) -> usize {
        crate::environment::streams::month_of(self.start_day, time_s)
    }

    /// (`year_of`, `month_of`) of a time, by the calendar table within the mission.
    #[inline]
    pub(crate) fn when(&self, time_s: f64) -> (usize, usize) {
        if (0.0..=self.mission_s).contains(&time_s) {
            self.calendar.at(time_s)
        } else {
            (self.year_of(time_s), self.month_of(time_s))
        }
    }

    /// Mission year (0-based) of a time, s.
    pub(crate) fn year_of(&self, time_s: f64) -> usize {
        let y = (time_s / crate::scenario::SECONDS_PER_YEAR) as usize;
        y.min(self.years.saturating_sub(1))
    }
}

/// The mission year and month of any time by a table look-up: the mission cut into the
/// intervals on which ([`Engine::year_of`], [`Engine::month_of`]) is constant, each interval's
/// start found by bisection on the bits of the time (the smallest f64 at which either value
/// changes), so a look-up gives exactly what the two functions give, without their division
/// and remainder. About 200 intervals for a 15-year mission.
#[derive(Clone, Debug)]
pub(crate) struct Calendar {
    /// Start of each interval, s (ascending; the first is 0).
    starts_s: Vec<f64>,
    /// (year, month) on each interval.
    when: Vec<(usize, usize)>,
    /// Intervals per second of mission (the look-up's first guess).
    per_s: f64,
}

impl Calendar {
    /// A placeholder until the engine it describes exists (every time in year 0, month 0).
    pub(crate) fn empty() -> Self {
        Calendar {
            starts_s: vec![0.0],
            when: vec![(0, 0)],
            per_s: 0.0,
        }
    }

    pub(crate) fn new(e: &Engine<'_>) -> Self {
        let of = |t: f64| (e.year_of(t), e.month_of(t));
        let mut starts_s = vec![0.0];
        let mut when = vec![of(0.0)];
        let mut t = 0.0f64;
        // Up to a day past the mission end (times are never later than the end).
        let until = e.mission_s + crate::units::SECONDS_PER_DAY;
        while t <= until && starts_s.len() < 100_000 {
            let now = of(t);
            // The next change is at the next month end or year boundary, whichever is first;
            // both are predicted to within rounding, then bracketed and bisected exactly.
            let (_, days_left) = crate::environment::streams::month_and_days_left(e.start_day, t);
            let month_end = t + days_left * crate::units::SECONDS_PER_DAY;
            let year_end = (now.0 + 1) as f64 * crate::scenario::SECONDS_PER_YEAR;
            let mut hi = month_end.min(year_end) + 1e-3;
            let mut step = 1e-3;
            while of(hi) == now && hi <= until {
                step *= 2.0;
                hi += step;
            }
            if of(hi) == now {
                break; // no further change within the mission
            }
            // Smallest f64 in (t, hi] at which the pair differs (positive floats order as
            // their bits).
            let (mut lo_b, mut hi_b) = (t.to_bits(), hi.to_bits());
            while hi_b - lo_b > 1 {
                let mid = lo_b + (hi_b - lo_b) / 2;
                if of(f64::from_bits(mid)) == now {
                    lo_b = mid;
                } else {
                    hi_b = mid;
                }
            }
            t = f64::from_bits(hi_b);
            starts_s.push(t);
            when.push(of(t));
        }
        let per_s = (starts_s.len() as f64 / e.mission_s.max(1.0)).max(0.0);
        Calendar {
            starts_s,
            when,
            per_s,
        }
    }

    /// [`Self::at`] for a history's non-decreasing times in [0, mission end]: `cursor` (0 at the
    /// history's start) remembers the interval, so the usual step is one predictable compare.
    #[inline]
    pub(crate) fn forward(&self, cursor: &mut usize, t: f64) -> (usize, usize) {
        let last = self.starts_s.len() - 1;
        let mut i = (*cursor).min(last);
        while i < last && self.starts_s[i + 1] <= t {
            i += 1;
        }
        while i > 0 && self.starts_s[i] > t {
            i -= 1; // only if a caller's time went backwards
        }
        *cursor = i;
        self.when[i]
    }

    /// Start of the first interval after `i` in a later mission year (infinite if none), s.
    pub(crate) fn next_year_start_s(&self, i: usize) -> f64 {
        let y = self.interval(i).0;
        (i + 1..self.when.len())
            .find(|&j| self.when[j].0 != y)
            .map_or(f64::INFINITY, |j| self.starts_s[j])
    }

    /// (year, month) of interval `i`.
    #[inline]
    pub(crate) fn interval(&self, i: usize) -> (usize, usize) {
        self.when[i.min(self.when.len() - 1)]
    }

    /// (mission year, month) of `t` in [0, mission end], as `year_of` and `month_of` give them.
    #[inline]
    pub(crate) fn at(&self, t: f64) -> (usize, usize) {
        let last = self.starts_s.len() - 1;
        let mut i = ((t * self.per_s) as usize).min(last);
        while i < last && self.starts_s[i + 1] <= t {
            i += 1;
        }
        while i > 0 && self.starts_s[i] > t {
            i -= 1;
        }
        self.when[i]
    }
}

impl Engine<'_> {
    /// Replace up to `segments` cut segments of `bay` with new ribbon.
    pub(crate) fn splice(
        &self,
        t: f64,
        bay: u32,
        segments: u32,
        scratch: &mut Scratch,
        rt: &mut RepairTally,
    ) {
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
    pub(crate) fn apply_strike(
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
                    _ => (
                        self.model.perforation.as_ref(),
                        match s.stream {
                            Some(k) => {
                                self.model.scenario.environment.meteor_streams[k as usize]
                                    .density_kg_per_m3
                            }
                            None => self.particle_density,
                        },
                    ),
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
        let survivors = self
            .sharing
            .uniform_share_divisor(n, scratch.cuts_in_bay[slot] as usize);
        if let Some(k) = survivors {
            let load = self.bay_tension_n(j, scratch) / k;
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
        // Slices have N <= MAX_RIBBONS entries by construction, so settle_bay cannot fail here.
        let tension = self.bay_tension_n(j, scratch);
        let intact = &mut scratch.intact[base..base + n];
        let Ok(outcome) = settle_bay(self.sharing, intact, &capacity[..n], tension) else {
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
        let (newly, survivors) = (outcome.newly_cut, outcome.survivors);
        let loss = self.record_cuts(
            t,
            s.bay,
            slot,
            newly,
            newly - u32::from(struck_cut),
            survivors,
            scratch,
            tally,
            out,
            log,
        );
        (newly, loss)
    }

    /// Score `newly` new cuts in `bay` (slot `slot`) at `t`, `not_by_hole` of them caused by
    /// load redistribution alone; `survivors` intact segments are left. Returns the loss when
    /// none is left.
    #[allow(clippy::too_many_arguments)]
    pub(crate) fn record_cuts(
        &self,
        t: f64,
        bay: u32,
        slot: usize,
        newly: u32,
        not_by_hole: u32,
        survivors: u32,
        scratch: &mut Scratch,
        tally: &mut Tally,
        out: &mut HistoryOutcome,
        log: Option<&mut Vec<LogEvent>>,
    ) -> Option<Loss> {
        let n = self.ribbons;
        let j = bay as usize;
        out.cuts += newly;
        tally.cascade_cuts += u64::from(not_by_hole);
        let band = self.bay_band[j] as usize;
        tally.cuts_by_band[band] += u64::from(newly);
        let (y, month) = self.when(t);
        if let Some(c) = tally.cuts_by_year.get_mut(y) {
            *c += u64::from(newly);
        }
        if let Some(c) = tally.cuts_by_month.get_mut(month) {
            *c += u64::from(newly);
        }
        scratch.add_cuts(slot, n, newly, t, self.sampler.bay_rate_per_s(j));
        if let Some(l) = log {
            l.push(LogEvent::Cut {
                time_s: t,
                bay,
                newly_cut: newly,
                survivors,
            });
        }
        if survivors == 0 {
            let cause = if newly > 1 {
                LossCause::Cascade
            } else {
                LossCause::DirectCut
            };
            return Some(Loss {
                time_s: t,
                bay,
                cause,
            });
        }
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The arena gives each touched bay one slot of `ribbons` entries, once, and `reset`
    /// returns every bay to untouched (the next history starts clean without reallocating).
    #[test]
    fn scratch_slots_are_allocated_once_and_reset() {
        let mut s = Scratch::new(10, 3, None);
        assert_eq!(s.slot_of(4), None);
        assert_eq!(s.slot(4, 3), 0);
        assert_eq!(s.slot(7, 3), 1);
        assert_eq!(s.slot(4, 3), 0, "a bay keeps its slot");
        assert_eq!(s.slot_of(7), Some(1));
        assert_eq!(s.worst_hole_m.len(), 6);
        assert!(s.intact.iter().all(|&x| x));
        assert_eq!(s.cuts_in(4), 0);
        s.cuts_in_bay[1] = 2;
        assert_eq!(s.cuts_in(7), 2);
        s.note_max_cuts(2);
        s.note_max_cuts(1);
        assert_eq!(s.max_cuts, 2);
        s.damaged.push((7, 1.5));
        s.damaged.push((4, 0.25));
        assert_eq!(s.damaged_rate(), 1.75);
        let capacity = s.worst_hole_m.capacity();
        s.reset();
        assert_eq!(s.slot_of(4), None);
        assert_eq!(s.slot_of(7), None);
        assert!(s.worst_hole_m.is_empty() && s.touched.is_empty() && s.damaged.is_empty());
        assert_eq!((s.max_cuts, s.bays_with_cuts), (0, 0));
        assert_eq!(
            s.worst_hole_m.capacity(),
            capacity,
            "reset keeps the allocation"
        );
        assert_eq!(s.slot(7, 3), 0, "slots start again from 0");
    }

    /// Year of an event time on the demo (a 15-year mission): Julian years of 365.25 days,
    /// the end of the mission counted in its last year.
    /// The calendar table gives `year_of` and `month_of` exactly: random times from seconds to
    /// months apart, times at and one ulp around every year boundary, around every computed
    /// month end and on both sides of every interval start, over a mission of 15.5 years that
    /// starts on several days of the year.
    #[test]
    fn calendar_matches_the_direct_computation() {
        for start in [0.0, 100.5, 364.9] {
            let mut v: serde_json::Value =
                serde_json::from_str(crate::scenario::DEMO_SCENARIO_JSON).unwrap();
            v["environment"]["mission_start_day_of_year"] = serde_json::json!(start);
            v["run"]["mission_years"] = serde_json::json!(15.5);
            let spec = crate::scenario::parse_spec(&v.to_string()).unwrap();
            let scenario = crate::scenario::Scenario::from_spec(spec, None).unwrap();
            let model = crate::model::Model::build(scenario).unwrap();
            let e = Engine::new(&model, 1.0).unwrap();
            let mut times = Vec::new();
            let mut x = 0.123_456_789f64;
            let mut t = 0.0;
            while t < e.mission_s {
                x = (x * 3.987_654_321 + 0.5).fract();
                t += 10f64.powf(x * 7.0); // 1 s .. 4 months
                times.push(t);
            }
            for k in 1..17u32 {
                let b = f64::from(k) * crate::scenario::SECONDS_PER_YEAR;
                times.extend([
                    f64::from_bits(b.to_bits() - 1),
                    b,
                    f64::from_bits(b.to_bits() + 1),
                ]);
            }
            let mut probe = 0.0;
            while probe < e.mission_s {
                let (_, left) =
                    crate::environment::streams::month_and_days_left(e.start_day, probe);
                probe += left * crate::units::SECONDS_PER_DAY;
                for d in [-2e-3, -1e-6, 0.0, 1e-6] {
                    times.push(probe + d);
                }
                times.push(f64::from_bits(probe.to_bits() - 1));
                probe += 1.0;
            }
            times.retain(|t| *t >= 0.0 && *t <= e.mission_s);
            times.sort_by(f64::total_cmp);
            let cal = Calendar::new(&e);
            let mut cursor = 0;
            assert!(
                (150..250).contains(&cal.starts_s.len()),
                "{}",
                cal.starts_s.len()
            );
            for &t in &times {
                assert_eq!(cal.forward(&mut cursor, t), cal.at(t), "cursor at {t} s");
                let (y, m) = cal.at(t);
                assert_eq!(y, e.year_of(t), "year at {t} s, start {start}");
                assert_eq!(m, e.month_of(t), "month at {t} s, start {start}");
            }
            // Each interval's next year change is where year_of changes.
            for i in 0..cal.starts_s.len() {
                let next = cal.next_year_start_s(i);
                let y = cal.interval(i).0;
                if next.is_finite() {
                    assert_eq!(e.year_of(f64::from_bits(next.to_bits() - 1)), y);
                    assert_eq!(e.year_of(next), y + 1);
                } else {
                    assert_eq!(y + 1, e.years, "only the last year has no next");
                }
            }
            // Both sides of every interval start.
            for &t in &cal.starts_s[1..] {
                let before = f64::from_bits(t.to_bits() - 1);
                assert_eq!(cal.at(before), (e.year_of(before), e.month_of(before)));
                assert_eq!(cal.at(t), (e.year_of(t), e.month_of(t)));
            }
        }
    }

    #[test]
    fn year_of_clamps_to_the_mission() {
        let model = crate::model::Model::build(crate::scenario::demo()).unwrap();
        let engine = Engine::new(&model, 1.0).unwrap();
        let y = crate::scenario::SECONDS_PER_YEAR;
        assert_eq!(y, 365.25 * 86_400.0);
        assert_eq!(engine.year_of(0.0), 0);
        assert_eq!(engine.year_of(0.999 * y), 0);
        assert_eq!(engine.year_of(1.0 * y), 1);
        assert_eq!(engine.year_of(14.5 * y), 14);
        assert_eq!(engine.year_of(15.0 * y), 14);
        assert_eq!(engine.year_of(1e12 * y), 14);
    }
}

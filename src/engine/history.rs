//! One history: the loop reads in one screen.
//!
//! next strike -> (repair events due before it) -> apply strike: hole, worst cross-section,
//! load check and cascade -> record cuts -> loss ends the history.
//!
//! A segment's state is its largest hole (the worst cross-section; see the sampler's notes on why
//! holes along a bay do not add) and whether it is cut. Only bays touched in this history hold
//! state, in a reusable arena: nothing is allocated per strike or per history once the arena
//! has grown to the largest number of bays touched in a history.

use rand::Rng;

use crate::damage::{removed_width_m, Impact, RibbonTarget};
use crate::structure::load_sharing::{settle_bay, MAX_RIBBONS};

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
    bays_with_cuts: u32,
    cut_since_s: f64,
    max_cuts: u32,
}

impl Scratch {
    /// Scratch for a tether of `bays` bays and `ribbons` ribbons.
    pub fn new(bays: usize, ribbons: usize) -> Self {
        Scratch {
            slot_of_bay: vec![UNTOUCHED; bays],
            touched: Vec::with_capacity(64),
            worst_hole_m: Vec::with_capacity(64 * ribbons),
            intact: Vec::with_capacity(64 * ribbons),
            cuts_in_bay: Vec::with_capacity(64),
            ..Default::default()
        }
    }

    fn reset(&mut self) {
        for &b in &self.touched {
            self.slot_of_bay[b as usize] = UNTOUCHED;
        }
        self.touched.clear();
        self.worst_hole_m.clear();
        self.intact.clear();
        self.cuts_in_bay.clear();
        self.bays_with_cuts = 0;
        self.cut_since_s = 0.0;
        self.max_cuts = 0;
    }

    fn slot(&mut self, bay: u32, ribbons: usize) -> usize {
        let s = self.slot_of_bay[bay as usize];
        if s != UNTOUCHED {
            return s as usize;
        }
        let s = self.touched.len();
        self.touched.push(bay);
        self.slot_of_bay[bay as usize] = s as u32;
        self.worst_hole_m.extend(std::iter::repeat_n(0.0, ribbons));
        self.intact.extend(std::iter::repeat_n(true, ribbons));
        self.cuts_in_bay.push(0);
        s
    }
}

/// What happened in one history, beyond what went into the tally.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct HistoryOutcome {
    /// The system loss, if any.
    pub loss: Option<Loss>,
    /// Cut segments.
    pub cuts: u32,
    /// Strikes sampled.
    pub strikes: u64,
}

/// Event-log entry for replaying a history.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum LogEvent {
    /// A strike and the hole it made (m, 0 for none).
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
    /// System loss.
    Loss(Loss),
}

impl Engine<'_> {
    /// Run history `index` with the strike stream `rng`, adding its scores to `tally`.
    /// `log`, when given, receives every event (for `--replay-history`).
    pub fn run_history<R: Rng + ?Sized>(
        &self,
        rng: &mut R,
        scratch: &mut Scratch,
        tally: &mut Tally,
        mut log: Option<&mut Vec<LogEvent>>,
    ) -> HistoryOutcome {
        scratch.reset();
        let mission = self.mission_s;
        let mut out = HistoryOutcome::default();
        let mut t = 0.0;
        loop {
            let t_next = t + self.sampler.next_gap_s(rng);
            if t_next > mission {
                break;
            }
            t = t_next;
            let strike = self.sampler.sample(rng);
            out.strikes += 1;
            if let Some(loss) =
                self.apply_strike(t, &strike, scratch, tally, &mut out, log.as_deref_mut())
            {
                out.loss = Some(loss);
                break;
            }
        }
        let end = out.loss.map_or(mission, |l| l.time_s);
        if scratch.bays_with_cuts > 0 {
            tally.time_with_cut_bay_s += (end - scratch.cut_since_s).max(0.0).round() as u64;
        }
        tally.histories += 1;
        tally.strikes += out.strikes;
        tally.cuts += u64::from(out.cuts);
        tally.cuts_sq += u128::from(out.cuts) * u128::from(out.cuts);
        let m = (scratch.max_cuts as usize).min(tally.max_cuts_in_bay.len().saturating_sub(1));
        if let Some(c) = tally.max_cuts_in_bay.get_mut(m) {
            *c += 1;
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
        out
    }

    fn year_of(&self, time_s: f64) -> usize {
        let y = (time_s / crate::scenario::SECONDS_PER_YEAR) as usize;
        y.min(self.years.saturating_sub(1))
    }

    /// Apply one strike at time `t`; returns the loss if the bay lost its last load path.
    fn apply_strike(
        &self,
        t: f64,
        s: &Strike,
        scratch: &mut Scratch,
        tally: &mut Tally,
        out: &mut HistoryOutcome,
        log: Option<&mut Vec<LogEvent>>,
    ) -> Option<Loss> {
        let n = self.ribbons;
        let j = s.bay as usize;
        let slot = scratch.slot(s.bay, n);
        let base = slot * n;
        let r = s.ribbon as usize;
        let bay = &self.model.profile.bays[j];
        let w = bay.width_m;
        let removed = if scratch.intact[base + r] {
            let impact = Impact {
                diameter_m: s.diameter_m,
                speed_m_per_s: s.speed_m_per_s,
                incidence_rad: s.incidence_rad,
                density_kg_per_m3: self.particle_density,
            };
            let target = RibbonTarget {
                width_m: w,
                thickness_m: self.thickness_m,
                density_kg_per_m3: self.ribbon_density,
            };
            let hole = self.model.perforation.hole_width_m(&impact, &target);
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
            return None;
        }
        scratch.worst_hole_m[base + r] = removed;
        let mut capacity = [0.0f64; MAX_RIBBONS];
        for (c, hole) in capacity
            .iter_mut()
            .zip(&scratch.worst_hole_m[base..base + n])
        {
            *c = (w - hole).max(0.0) * self.per_width_capacity;
        }
        let intact = &mut scratch.intact[base..base + n];
        // Slices have N <= MAX_RIBBONS entries by construction, so settle_bay cannot fail here.
        let Ok(outcome) = settle_bay(
            self.sharing.as_ref(),
            intact,
            &capacity[..n],
            bay.max_tension_n,
        ) else {
            return None;
        };
        if outcome.newly_cut == 0 {
            tally.subcritical_holes += 1;
            return None;
        }
        let struck_cut = !intact[r];
        let newly = outcome.newly_cut;
        out.cuts += newly;
        tally.cascade_cuts += u64::from(newly - u32::from(struck_cut));
        let band = self.bay_band[j] as usize;
        tally.cuts_by_band[band] += u64::from(newly);
        let y = self.year_of(t);
        if let Some(c) = tally.cuts_by_year.get_mut(y) {
            *c += u64::from(newly);
        }
        let before = scratch.cuts_in_bay[slot];
        scratch.cuts_in_bay[slot] += newly;
        scratch.max_cuts = scratch.max_cuts.max(scratch.cuts_in_bay[slot]);
        if before == 0 {
            if scratch.bays_with_cuts == 0 {
                scratch.cut_since_s = t;
            }
            scratch.bays_with_cuts += 1;
        }
        if let Some(l) = log {
            l.push(LogEvent::Cut {
                time_s: t,
                bay: s.bay,
                newly_cut: newly,
                survivors: outcome.survivors,
            });
        }
        if outcome.survivors == 0 {
            return Some(Loss {
                time_s: t,
                bay: s.bay,
                cause: if newly > 1 {
                    LossCause::Cascade
                } else {
                    LossCause::DirectCut
                },
            });
        }
        None
    }
}

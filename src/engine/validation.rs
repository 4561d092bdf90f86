//! Synthetic-rates histories: a constant cut rate per intact segment and exponential repair by a
//! fixed number of crews per bay, no travel, no load redistribution. Each bay of N ribbons is
//! then a repairable k-out-of-N system whose loss probability has a closed form (birth–death
//! chain; Barlow & Proschan), so the engine's bookkeeping can be checked exactly.
//!
//! Simulated as a continuous-time Markov chain by the direct method (Gillespie 1977, J. Phys.
//! Chem. 81, 2340): the next event comes after an exponential time at the total rate (ziggurat
//! draw), and is a cut or a repair in proportion to their rates. All draws use the strike
//! stream.
//!
//! With the rare-event estimator on, the cut rate of intact segments in bays that already have a
//! cut is multiplied by the rare-event factor, and the history carries the likelihood ratio
//! factor^-(such cuts) x exp((factor - 1) x lambda x integral of their number over time) — the
//! same failure biasing by rate inflation as for strikes (Heidelberger 1995, ACM TOMACS 5, 43).

use rand::RngExt;
use rand_distr::Exp1;

use crate::scenario::SyntheticRatesSettings;

use super::history::{HistoryOutcome, LogEvent, Scratch};
use super::rng::{stream, Purpose};
use super::sampler::unit;
use super::tally::{Loss, LossCause, Tally};
use super::Engine;

impl Engine<'_> {
    pub(crate) fn run_validation_history(
        &self,
        index: u64,
        seed: u64,
        v: &SyntheticRatesSettings,
        scratch: &mut Scratch,
        tally: &mut Tally,
        log: Option<&mut Vec<LogEvent>>,
    ) -> HistoryOutcome {
        if self.model.profile.bays.len() == 1 && self.rare_event_factor == 1.0 {
            return self.run_one_bay_chain(index, seed, v, scratch, tally, log);
        }
        let mut rng = stream(seed, Purpose::Strikes, index);
        scratch.reset();
        let n = self.ribbons as u64;
        let bays = self.model.profile.bays.len() as u64;
        let required = u64::from(v.required_ribbons);
        let crews = u64::from(v.crews_per_bay);
        let factor = self.rare_event_factor;
        let ln_factor = factor.ln();
        let lambda = v.cut_rate_per_s;
        let mut log_w = 0.0;
        let mut out = HistoryOutcome::default();
        let mut t = 0.0;
        // Bays with cuts and their counts (few at any time).
        let mut damaged: Vec<(u32, u64)> = std::mem::take(&mut scratch.validation_bays);
        damaged.clear();
        let mut cursor = 0usize; // calendar interval of the last event
        loop {
            let intact_damaged: u64 = damaged.iter().map(|&(_, k)| n - k).sum();
            let undamaged_bays = bays - damaged.len() as u64;
            let cut_u = lambda * (undamaged_bays * n) as f64;
            let cut_d = factor * lambda * intact_damaged as f64;
            let busy: u64 = damaged.iter().map(|&(_, k)| k.min(crews)).sum();
            let repair = v.repair_rate_per_s * busy as f64;
            let total = cut_u + cut_d + repair;
            if total <= 0.0 {
                break;
            }
            // Ziggurat exponential (rand_distr's Exp1; Marsaglia & Tsang 2000): no logarithm on
            // the common path.
            let dt = rng.sample::<f64, _>(Exp1) / total;
            let dt_in_mission = dt.min(self.mission_s - t);
            log_w += (factor - 1.0) * lambda * intact_damaged as f64 * dt_in_mission;
            t += dt;
            if t > self.mission_s {
                break;
            }
            let x = unit(&mut rng) * total;
            if x < cut_u + cut_d {
                let bay = if x < cut_u {
                    // A uniformly chosen undamaged bay, by rejection.
                    loop {
                        let b = ((unit(&mut rng) * bays as f64) as u64).min(bays - 1) as u32;
                        if !damaged.iter().any(|d| d.0 == b) {
                            break b;
                        }
                    }
                } else {
                    log_w -= ln_factor;
                    let mut y = unit(&mut rng) * intact_damaged as f64;
                    let mut pick = damaged[damaged.len() - 1].0;
                    for &(b, k) in &damaged {
                        if y < (n - k) as f64 {
                            pick = b;
                            break;
                        }
                        y -= (n - k) as f64;
                    }
                    pick
                };
                let k = match damaged.iter_mut().find(|d| d.0 == bay) {
                    Some(d) => {
                        d.1 += 1;
                        d.1
                    }
                    None => {
                        damaged.push((bay, 1));
                        1
                    }
                };
                out.cuts += 1;
                scratch.note_max_cuts(k as u32);
                tally.cuts_by_band[self.bay_band[bay as usize] as usize] += 1;
                if let Some(c) = tally
                    .cuts_by_year
                    .get_mut(self.calendar.forward(&mut cursor, t).0)
                {
                    *c += 1;
                }
                if n - k < required {
                    out.loss = Some(Loss {
                        time_s: t,
                        bay,
                        cause: LossCause::DirectCut,
                    });
                    break;
                }
            } else {
                // A repair, in proportion to the busy crews of each damaged bay.
                let mut y = (x - cut_u - cut_d) / v.repair_rate_per_s;
                let mut pick = damaged.len() - 1;
                for (i, &(_, k)) in damaged.iter().enumerate() {
                    let w = k.min(crews) as f64;
                    if y < w {
                        pick = i;
                        break;
                    }
                    y -= w;
                }
                damaged[pick].1 -= 1;
                if damaged[pick].1 == 0 {
                    damaged.swap_remove(pick);
                }
                tally.repair.splices += 1;
                if let Some(c) = tally
                    .repair
                    .splices_by_year
                    .get_mut(self.calendar.forward(&mut cursor, t).0)
                {
                    *c += 1;
                }
            }
        }
        scratch.validation_bays = damaged;
        out.weight = if factor > 1.0 { log_w.exp() } else { 1.0 };
        let end = out.loss.map_or(self.mission_s, |l| l.time_s);
        self.close_history(index, end, scratch, tally, &out, log);
        out
    }

    /// One bay, plain Monte Carlo: the same chain by the same direct method, its state a single
    /// cut count k, so each state's exponential scale 1 / (up_k + down_k) and cut probability
    /// up_k / (up_k + down_k) are tabulated once per history instead of summed over the
    /// damaged bays and divided at every event.
    fn run_one_bay_chain(
        &self,
        index: u64,
        seed: u64,
        v: &SyntheticRatesSettings,
        scratch: &mut Scratch,
        tally: &mut Tally,
        log: Option<&mut Vec<LogEvent>>,
    ) -> HistoryOutcome {
        use crate::structure::load_sharing::MAX_RIBBONS;
        let mut rng = stream(seed, Purpose::Strikes, index);
        scratch.reset();
        let n = self.ribbons.min(MAX_RIBBONS);
        let required = (v.required_ribbons as usize).min(n);
        let crews = v.crews_per_bay as usize;
        // Lost once fewer than `required` are intact: at k = fail cuts.
        let fail = n - required + 1;
        let mut scale_s = [0.0f64; MAX_RIBBONS + 1];
        let mut p_cut = [0.0f64; MAX_RIBBONS + 1];
        for k in 0..fail {
            let up = v.cut_rate_per_s * (n - k) as f64;
            let down = v.repair_rate_per_s * k.min(crews) as f64;
            let total = up + down;
            scale_s[k] = if total > 0.0 { 1.0 / total } else { 0.0 };
            p_cut[k] = if total > 0.0 { up / total } else { 0.0 };
        }
        let band = self.bay_band[0] as usize;
        let mut out = HistoryOutcome {
            weight: 1.0,
            ..HistoryOutcome::default()
        };
        let mut t = 0.0;
        let mut k = 0usize;
        let mut max_k = 0usize;
        // Calendar interval of the last year change, the year and when it ends (one compare
        // per event).
        let mut cursor = 0usize;
        let mut year = self.calendar.interval(0).0;
        let mut year_until = self.calendar.next_year_start_s(0);
        let mut log = log;
        loop {
            if scale_s[k] == 0.0 {
                break; // no event can happen
            }
            t += rng.sample::<f64, _>(Exp1) * scale_s[k];
            if t > self.mission_s {
                break;
            }
            if t >= year_until {
                // Crossed into a later mission year: look it up once a year.
                self.calendar.forward(&mut cursor, t);
                year = self.calendar.interval(cursor).0;
                year_until = self.calendar.next_year_start_s(cursor);
            }
            let y = year;
            // Branch-free step (the cut-or-repair choice is a coin the predictor cannot learn).
            // (At k = 0 no repair is possible, p_cut = 1 and the coin always says cut.)
            let cut = usize::from(unit(&mut rng) < p_cut[k]);
            k = k + 2 * cut - 1;
            max_k = max_k.max(k);
            out.cuts += cut as u32;
            if let Some(c) = tally.cuts_by_year.get_mut(y) {
                *c += cut as u64;
            }
            if let Some(c) = tally.repair.splices_by_year.get_mut(y) {
                *c += 1 - cut as u64;
            }
            if let Some(l) = log.as_deref_mut() {
                if cut == 1 {
                    l.push(LogEvent::Cut {
                        time_s: t,
                        bay: 0,
                        newly_cut: 1,
                        survivors: (n - k) as u32,
                    });
                }
            }
            if k >= fail {
                out.loss = Some(Loss {
                    time_s: t,
                    bay: 0,
                    cause: LossCause::DirectCut,
                });
                break;
            }
        }
        tally.cuts_by_band[band] += u64::from(out.cuts);
        // Every splice undid one cut: splices = cuts - the final cut count.
        tally.repair.splices += u64::from(out.cuts) - k as u64;
        scratch.note_max_cuts(max_k as u32);
        let end = out.loss.map_or(self.mission_s, |l| l.time_s);
        self.close_history(index, end, scratch, tally, &out, log);
        out
    }
}

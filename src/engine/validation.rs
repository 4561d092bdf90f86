//! Validation-mode histories: a constant cut rate per intact segment and exponential repair by a
//! fixed number of crews per bay, no travel, no load redistribution. Each bay of N ribbons is
//! then a repairable k-out-of-N system whose loss probability has a closed form (birth–death
//! chain; Barlow & Proschan), so the engine's bookkeeping can be checked exactly.
//!
//! Simulated as a continuous-time Markov chain by the direct method (Gillespie 1977, J. Phys.
//! Chem. 81, 2340): the next event comes after an exponential time at the total rate, and is a
//! cut or a repair in proportion to their rates. All draws use the strike stream.

use crate::scenario::ValidationSettings;

use super::history::{HistoryOutcome, LogEvent, Scratch};
use super::rng::{stream, Purpose};
use super::sampler::{open01, unit};
use super::tally::{Loss, LossCause, Tally};
use super::Engine;

impl Engine<'_> {
    pub(crate) fn run_validation_history(
        &self,
        index: u64,
        seed: u64,
        v: &ValidationSettings,
        scratch: &mut Scratch,
        tally: &mut Tally,
        log: Option<&mut Vec<LogEvent>>,
    ) -> HistoryOutcome {
        let mut rng = stream(seed, Purpose::Strikes, index);
        scratch.reset();
        let n = self.ribbons as u64;
        let bays = self.model.profile.bays.len() as u64;
        let required = u64::from(v.required_ribbons);
        let mut out = HistoryOutcome::default();
        let mut t = 0.0;
        let mut total_cut: u64 = 0;
        // Bays with cuts and their counts (few at any time).
        let mut damaged: Vec<(u32, u64)> = std::mem::take(&mut scratch.validation_bays);
        damaged.clear();
        loop {
            let cut_rate = v.cut_rate_per_s * (bays * n - total_cut) as f64;
            let repair_rate: f64 = v.repair_rate_per_s
                * damaged
                    .iter()
                    .map(|&(_, k)| k.min(u64::from(v.crews_per_bay)) as f64)
                    .sum::<f64>();
            let total = cut_rate + repair_rate;
            if total <= 0.0 {
                break;
            }
            t += -open01(&mut rng).ln() / total;
            if t > self.mission_s {
                break;
            }
            if unit(&mut rng) * total < cut_rate {
                // A uniformly chosen intact segment: bay by rejection on its intact share.
                let bay = loop {
                    let b = ((unit(&mut rng) * bays as f64) as u64).min(bays - 1) as u32;
                    let k = damaged.iter().find(|d| d.0 == b).map_or(0, |d| d.1);
                    if unit(&mut rng) * (n as f64) < (n - k) as f64 {
                        break b;
                    }
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
                total_cut += 1;
                out.cuts += 1;
                scratch.note_max_cuts(k as u32);
                tally.cuts_by_band[self.bay_band[bay as usize] as usize] += 1;
                if let Some(c) = tally.cuts_by_year.get_mut(self.year_of(t)) {
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
                let mut x = unit(&mut rng) * repair_rate / v.repair_rate_per_s;
                let mut pick = damaged.len() - 1;
                for (i, &(_, k)) in damaged.iter().enumerate() {
                    let w = k.min(u64::from(v.crews_per_bay)) as f64;
                    if x < w {
                        pick = i;
                        break;
                    }
                    x -= w;
                }
                damaged[pick].1 -= 1;
                if damaged[pick].1 == 0 {
                    damaged.swap_remove(pick);
                }
                total_cut -= 1;
                tally.repair.splices += 1;
                if let Some(c) = tally.repair.splices_by_year.get_mut(self.year_of(t)) {
                    *c += 1;
                }
            }
        }
        scratch.validation_bays = damaged;
        let end = out.loss.map_or(self.mission_s, |l| l.time_s);
        self.close_history(end, scratch, tally, &out, log);
        out
    }
}

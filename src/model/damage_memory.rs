//! Inputs of the damage-memory estimate ([`crate::analytic::damage_memory`]) from a built
//! [`Model`]: per bay, the critical removed widths by number of cut segments, the rate `H(x)`
//! of strikes that remove at least `x` from one segment, and the repair rate.
//!
//! `H(x)` is the per-segment hole-rate table of [`super::hole_rate`]: the rate of holes whose
//! removed width is at least `x`, integrated over the same strike distributions the samplers
//! draw (every source, the scenario's hole-size law with its speed and angle dependence, edge
//! overlap, both faces, local shielding, focusing and the flux scale factor). [`HoleRate`] is
//! the seam between the analytic solution and that table.

use crate::analytic::damage_memory::{HoleRate, MemoryBay};
use crate::scenario::LoadSharingSpec;

use super::hole_rate::{BayHoleRate, HoleRateTable};
use super::markov::repair_mean_time_along_line_s;
use super::Model;

impl HoleRate for BayHoleRate {
    fn hole_rate_at_least_per_s(&self, x_m: f64) -> f64 {
        if x_m.is_nan() || x_m <= 0.0 {
            return f64::INFINITY;
        }
        self.rate_at_least_per_s(x_m)
    }
}

/// Critical removed widths `h_0 >= h_1 >= …` of bay `j` while they stay positive (the sharing
/// rule `none` keeps `h_0`; `local` is approximated by equal sharing, as in the Markov
/// estimate).
pub fn critical_widths_m(model: &Model, j: usize) -> Vec<f64> {
    let n = model.profile.design.ribbon_count;
    let mut h = Vec::with_capacity(n);
    for k in 0..n {
        let hk = match model.scenario.tether.load_sharing {
            LoadSharingSpec::None => model.profile.critical_hole_width_m(j, 0),
            LoadSharingSpec::Equal | LoadSharingSpec::Local => {
                model.profile.critical_hole_width_m(j, k)
            }
        };
        if hk > 0.0 {
            h.push(hk);
        } else {
            break;
        }
    }
    h
}

/// The per-segment hole-rate table at the sampling floor of the engine (fraction 1: the
/// smallest hole that can sever in any stable state). `None` in synthetic-rates mode (no holes) or
/// when the table cannot be built.
pub fn rate_table(model: &Model) -> Option<HoleRateTable> {
    if model.scenario.synthetic_rates.is_some() {
        return None;
    }
    HoleRateTable::build(model, 1.0).ok()
}

/// Every bay's damage-memory input (empty in synthetic-rates mode, which has no holes).
pub fn memory_bays(model: &Model, table: &HoleRateTable) -> Vec<MemoryBay<BayHoleRate>> {
    if model.scenario.synthetic_rates.is_some() {
        return Vec::new();
    }
    let sc = &model.scenario;
    let n = model.profile.design.ribbon_count;
    (0..model.profile.bays.len())
        .map(|j| {
            let bay = &model.profile.bays[j];
            let critical_m = critical_widths_m(model, j);
            let repair = sc
                .repair
                .as_ref()
                .and_then(|r| {
                    repair_mean_time_along_line_s(
                        r,
                        bay.line_mid_m(),
                        model.profile.surface_run_length_m(),
                    )
                })
                .filter(|&t| t > 0.0)
                .map(|t| {
                    let mut v = vec![1.0 / t; critical_m.len().max(1)];
                    v[0] = 0.0;
                    v
                });
            MemoryBay {
                ribbons: n,
                critical_m,
                rate: table.bay(j).clone(),
                repair_rate_per_s: repair,
            }
        })
        .collect()
}

/// The damage-memory estimate of a whole tether.
#[derive(Debug, Clone, PartialEq)]
pub struct DamageMemoryResult {
    /// Evaluation times, s.
    pub times_s: Vec<f64>,
    /// True when every bay is solved exactly (no repair anywhere).
    pub exact: bool,
    /// System loss probability at each time (independent bays).
    pub system_loss_probability: Vec<f64>,
    /// The direct-cut (memoryless) part of the same calculation at each time.
    pub system_direct_loss_probability: Vec<f64>,
    /// Per bay, in bay order: loss probability at each time.
    pub bay_loss_probability: Vec<Vec<f64>>,
    /// Per bay: direct-cut part at each time.
    pub bay_direct_loss_probability: Vec<Vec<f64>>,
}

/// Solve every bay at `times_s` (non-decreasing) and combine them as independent bays.
/// `None` in synthetic-rates mode or when no bay can be cut.
pub fn solve(model: &Model, times_s: &[f64]) -> Option<DamageMemoryResult> {
    use rayon::prelude::*;
    let table = rate_table(model)?;
    let bays = memory_bays(model, &table);
    if bays.is_empty() {
        return None;
    }
    let exact = bays.iter().all(|b| b.repair_rate_per_s.is_none());
    // Per-bay results in bay order (collect keeps the order; no float reduction in parallel).
    let results: Vec<_> = bays.par_iter().map(|b| b.solve(times_s)).collect();
    let system = |pick: &dyn Fn(&crate::analytic::damage_memory::MemoryBayResult) -> &Vec<f64>| {
        (0..times_s.len())
            .map(|i| {
                crate::analytic::estimate::union_of_independent(results.iter().map(|r| pick(r)[i]))
            })
            .collect::<Vec<f64>>()
    };
    Some(DamageMemoryResult {
        times_s: times_s.to_vec(),
        exact,
        system_loss_probability: system(&|r| &r.loss_probability),
        system_direct_loss_probability: system(&|r| &r.direct_loss_probability),
        bay_loss_probability: results.iter().map(|r| r.loss_probability.clone()).collect(),
        bay_direct_loss_probability: results
            .iter()
            .map(|r| r.direct_loss_probability.clone())
            .collect(),
    })
}

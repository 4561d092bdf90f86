//! The fast Markov estimate as a serialisable summary, rendered as text or JSON
//! (`estimate.json` of a run folder, read back by the report).
//!
//! The assumptions travel with the number: they are part of the summary and the text shows
//! them right under the headline probability, because the estimate means nothing without them.

use serde::{Deserialize, Serialize};

use super::table::{sig, Table};
use super::CAUTION;
use crate::analytic::estimate::SystemEstimate;
use crate::model::damage_memory::DamageMemoryResult;
use crate::model::markov::{MarkovMode, MarkovModel};
use crate::model::Model;
use crate::scenario::SECONDS_PER_YEAR;

/// Bays listed in the summary (largest loss probability first).
pub const TOP_BAYS: usize = 20;

/// Loss probability at one time.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
pub struct YearPoint {
    /// Mission time, years.
    pub year: f64,
    /// Probability that the system is lost by then.
    pub loss_probability: f64,
}

/// One bay's contribution.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
pub struct BayEstimate {
    /// Bay index from the anchor.
    pub bay_index: usize,
    /// Bay bottom and top altitude, km (0, 0 on the surface run).
    pub altitude_range_km: [f64; 2],
    /// The bay lies on the surface run from a base off the tether's foot (present only when
    /// true).
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub surface_run: bool,
    /// Probability that this bay is lost by mission end.
    pub loss_probability: f64,
    /// Share of the system's log-survival deficit `−ln(1 − P)` due to this bay.
    pub share_of_system_loss: f64,
    /// Cut rate out of each transient state (k = 0, 1, ... cut segments), per year; a cut in
    /// the last state loses the bay.
    pub cut_rate_per_year_by_state: Vec<f64>,
    /// Repair rate out of each transient state, per year (0 in state 0).
    pub repair_rate_per_year_by_state: Vec<f64>,
    /// Mean repair time used for this bay, hours (`null`: no repair).
    pub repair_mean_time_hours: Option<f64>,
}

/// What `estimate` reports.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
pub struct EstimateSummary {
    /// Tool version.
    pub version: String,
    /// Scenario name.
    pub scenario: String,
    /// Scenario hash (hex).
    pub scenario_hash: String,
    /// `physical` (rates from the flux and the design) or `validation` (constant rates).
    pub mode: String,
    /// Mission length, years.
    pub mission_years: f64,
    /// Ribbons per bay.
    pub ribbon_count: usize,
    /// Number of bays.
    pub bay_count: usize,
    /// System loss probability at each whole mission year and at mission end.
    pub loss_probability_by_year: Vec<YearPoint>,
    /// System loss probability by mission end.
    pub loss_probability: f64,
    /// The assumptions the number rests on.
    pub assumptions: Vec<String>,
    /// Upper bound on the fraction of severing strikes the perforation threshold would stop
    /// (thin-film law only; the estimate ignores the threshold).
    pub unperforated_fraction_bound: Option<f64>,
    /// The bays with the largest loss probability, at most [`TOP_BAYS`], largest first.
    pub bays: Vec<BayEstimate>,
    /// Largest mean repair time over the bays, hours (`null`: no repair). Per-bay values are
    /// in `bays`; travel makes them differ.
    pub repair_mean_time_hours: Option<f64>,
    /// The damage-memory estimate beside this memoryless one (`null` in synthetic-rates mode).
    pub damage_memory: Option<DamageMemorySummary>,
    /// Engineering caution.
    pub caution: String,
}

/// Relative difference above which the damage-memory and memoryless estimates are reported as
/// disagreeing. Both are computed to better than 1e-6 relative (quadrature and
/// uniformization); with repair the damage-memory estimate is an approximation whose error is
/// not bounded analytically, and 10 % is the tolerance it is checked to against Monte Carlo
/// in the tests where that is affordable. A difference beyond it is a difference of model
/// (memory of holes), not of numerics.
pub const AGREEMENT_TOLERANCE: f64 = 0.1;

/// One bay's damage-memory result.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
pub struct MemoryBayEstimate {
    /// Bay index from the anchor.
    pub bay_index: usize,
    /// Bay bottom and top altitude, km (0, 0 on the surface run).
    pub altitude_range_km: [f64; 2],
    /// The bay lies on the surface run from a base off the tether's foot (present only when
    /// true).
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub surface_run: bool,
    /// Damage-memory loss probability by mission end.
    pub loss_probability: f64,
    /// Share of this bay's loss that needs old sub-critical holes.
    pub latent_damage_share: f64,
}

/// The damage-memory estimate (see [`crate::analytic::damage_memory`]).
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
pub struct DamageMemorySummary {
    /// How it was computed.
    pub method: String,
    /// True when exact under its stated assumptions (no repair).
    pub exact: bool,
    /// System loss probability by mission end.
    pub loss_probability: f64,
    /// System loss probability at each whole mission year and at mission end.
    pub loss_probability_by_year: Vec<YearPoint>,
    /// The direct-cut part (every cut made by one strike at least the then-critical width).
    pub direct_cut_loss_probability_by_year: Vec<YearPoint>,
    /// Share of the mission-end loss probability that needs old sub-critical holes
    /// (`1 − direct / total`).
    pub latent_damage_share: f64,
    /// `latent damage` or `direct cuts`: which mechanism carries most of the loss.
    pub dominant_mechanism: String,
    /// Damage-memory over memoryless (Markov) loss probability at mission end (`null` when the
    /// memoryless one is 0).
    pub ratio_to_memoryless: Option<f64>,
    /// True when the two differ by more than [`AGREEMENT_TOLERANCE`].
    pub disagrees_with_memoryless: bool,
    /// The approximations behind the number.
    pub approximations: Vec<String>,
    /// Bays with the largest damage-memory loss probability, at most [`TOP_BAYS`].
    pub bays: Vec<MemoryBayEstimate>,
}

impl EstimateSummary {
    /// Summarise a solved estimate. `estimate` must come from `markov.solve` at the mission
    /// times (the last time is the mission end).
    pub fn new(model: &Model, markov: &MarkovModel, estimate: &SystemEstimate) -> Self {
        let sc = &model.scenario;
        let last = estimate.times_s.len().saturating_sub(1);
        let at_end = |i: usize| -> f64 {
            estimate.bay_loss_probability[i]
                .get(last)
                .copied()
                .unwrap_or(0.0)
        };
        let loss_probability = estimate
            .system_loss_probability
            .get(last)
            .copied()
            .unwrap_or(0.0);
        let total_deficit: f64 = (0..markov.bays.len())
            .map(|i| -(-at_end(i).clamp(0.0, 1.0)).ln_1p())
            .sum();
        let mut order: Vec<usize> = (0..markov.bays.len()).collect();
        order.sort_by(|&a, &b| at_end(b).total_cmp(&at_end(a)).then(a.cmp(&b)));
        let per_year = |v: &[f64]| v.iter().map(|r| r * SECONDS_PER_YEAR).collect::<Vec<_>>();
        let bays = order
            .iter()
            .take(TOP_BAYS)
            .map(|&i| {
                let mb = &markov.bays[i];
                let bay = &model.profile.bays[mb.bay_index];
                let p = at_end(i);
                let deficit = -(-p.clamp(0.0, 1.0)).ln_1p();
                BayEstimate {
                    bay_index: mb.bay_index,
                    altitude_range_km: [bay.bottom_altitude_m / 1e3, bay.top_altitude_m / 1e3],
                    surface_run: bay.surface_run,
                    loss_probability: p,
                    share_of_system_loss: if total_deficit > 0.0 && total_deficit.is_finite() {
                        deficit / total_deficit
                    } else {
                        0.0
                    },
                    cut_rate_per_year_by_state: per_year(mb.chain.cut_rate_per_s()),
                    repair_rate_per_year_by_state: per_year(mb.chain.repair_rate_per_s()),
                    repair_mean_time_hours: mb
                        .repair_mean_time_s
                        .map(|t| t / crate::units::SECONDS_PER_HOUR),
                }
            })
            .collect();
        let repair_mean_time_hours = markov
            .bays
            .iter()
            .filter_map(|b| b.repair_mean_time_s)
            .reduce(f64::max)
            .map(|t| t / crate::units::SECONDS_PER_HOUR);
        EstimateSummary {
            version: crate::VERSION.into(),
            scenario: sc.spec.name.clone(),
            scenario_hash: sc.hash_hex(),
            mode: match markov.mode {
                MarkovMode::Physical => "physical".into(),
                MarkovMode::SyntheticRates => "synthetic_rates".into(),
            },
            mission_years: sc.run.mission_years,
            ribbon_count: model.profile.design.ribbon_count,
            bay_count: markov.bays.len(),
            loss_probability_by_year: estimate
                .times_s
                .iter()
                .zip(&estimate.system_loss_probability)
                .map(|(&t, &p)| YearPoint {
                    year: t / SECONDS_PER_YEAR,
                    loss_probability: p,
                })
                .collect(),
            loss_probability,
            assumptions: markov.assumptions.clone(),
            unperforated_fraction_bound: markov.unperforated_fraction_bound,
            bays,
            repair_mean_time_hours,
            damage_memory: None,
            caution: CAUTION.into(),
        }
    }

    /// Add the damage-memory estimate (solved at the same times as the Markov estimate).
    pub fn with_damage_memory(mut self, model: &Model, dm: Option<&DamageMemoryResult>) -> Self {
        let Some(dm) = dm else {
            return self;
        };
        let last = dm.times_s.len().saturating_sub(1);
        let points = |v: &[f64]| {
            dm.times_s
                .iter()
                .zip(v)
                .map(|(&t, &p)| YearPoint {
                    year: t / SECONDS_PER_YEAR,
                    loss_probability: p,
                })
                .collect::<Vec<_>>()
        };
        let total = dm.system_loss_probability.get(last).copied().unwrap_or(0.0);
        let direct = dm
            .system_direct_loss_probability
            .get(last)
            .copied()
            .unwrap_or(0.0);
        let share = |t: f64, d: f64| {
            if t > 0.0 {
                (1.0 - d / t).clamp(0.0, 1.0)
            } else {
                0.0
            }
        };
        let latent = share(total, direct);
        let ratio = (self.loss_probability > 0.0).then(|| total / self.loss_probability);
        let disagrees = match ratio {
            Some(r) => (r - 1.0).abs() > AGREEMENT_TOLERANCE,
            None => total > 0.0,
        };
        let mut order: Vec<usize> = (0..dm.bay_loss_probability.len()).collect();
        let at_end = |i: usize| dm.bay_loss_probability[i].get(last).copied().unwrap_or(0.0);
        order.sort_by(|&a, &b| at_end(b).total_cmp(&at_end(a)).then(a.cmp(&b)));
        let bays = order
            .iter()
            .take(TOP_BAYS)
            .map(|&i| {
                let bay = &model.profile.bays[i];
                let d = dm.bay_direct_loss_probability[i]
                    .get(last)
                    .copied()
                    .unwrap_or(0.0);
                MemoryBayEstimate {
                    bay_index: i,
                    altitude_range_km: [bay.bottom_altitude_m / 1e3, bay.top_altitude_m / 1e3],
                    surface_run: bay.surface_run,
                    loss_probability: at_end(i),
                    latent_damage_share: share(at_end(i), d),
                }
            })
            .collect();
        let mut approximations = vec![
            "each segment's worst hole is the running maximum of a Poisson process of removed widths, P(M < x) = exp(-H(x) t); holes at different places along a bay do not add".to_string(),
            "independent bays; equal load sharing (local sharing is approximated by equal sharing; sharing `none` keeps the intact critical width)".into(),
            "speed-independent hole, as in the memoryless estimate".into(),
        ];
        if dm.exact {
            approximations.push("no repair: exact from the order statistics of the segments' worst holes against the critical widths".into());
        } else {
            approximations.extend([
                "with repair (approximation): a cut in an intact bay triggers a cascade through the other segments' accumulated holes at once; if it stops short of loss, the bay is lost before repair with the memoryless chain's first-passage probability".to_string(),
                "every segment is taken as old as the mission (splices renew only cut segments; slightly pessimistic)".into(),
                "holes made during a repair window cut only through the memoryless chain; triggers are rare and independent; exponential repair with no fleet contention or stock-outs".into(),
            ]);
        }
        self.damage_memory = Some(DamageMemorySummary {
            method: if dm.exact {
                "order statistics of the worst holes, exact without repair".into()
            } else {
                "order statistics of the worst holes at each trigger cut, with repair by the memoryless first-passage probability (approximation)".into()
            },
            exact: dm.exact,
            loss_probability: total,
            loss_probability_by_year: points(&dm.system_loss_probability),
            direct_cut_loss_probability_by_year: points(&dm.system_direct_loss_probability),
            latent_damage_share: latent,
            dominant_mechanism: if latent > 0.5 {
                "latent damage".into()
            } else {
                "direct cuts".into()
            },
            ratio_to_memoryless: ratio,
            disagrees_with_memoryless: disagrees,
            approximations,
            bays,
        });
        self
    }

    /// Loss probability by year as a table.
    pub fn year_table(&self) -> Table {
        let dm = self.damage_memory.as_ref();
        let mut header = vec!["year", "loss_probability", "survival"];
        if dm.is_some() {
            header.extend(["damage_memory_loss_probability", "direct_cut_part"]);
        }
        let mut t = Table::new(header);
        for (i, p) in self.loss_probability_by_year.iter().enumerate() {
            let year = if p.year.fract() == 0.0 {
                format!("{:.0}", p.year)
            } else {
                sig(p.year, 4)
            };
            let mut row = vec![
                year,
                sig(p.loss_probability, 4),
                sig(1.0 - p.loss_probability, 10),
            ];
            if let Some(d) = dm {
                let at = |v: &[YearPoint]| {
                    v.get(i)
                        .map_or(String::new(), |x| sig(x.loss_probability, 4))
                };
                row.push(at(&d.loss_probability_by_year));
                row.push(at(&d.direct_cut_loss_probability_by_year));
            }
            t.push(row);
        }
        t
    }

    /// The top bays as a table (at most `rows`).
    pub fn bay_table(&self, rows: usize) -> Table {
        let mut t = Table::new([
            "bay",
            "altitude_km",
            "loss_probability",
            "share",
            "repair_mean_h",
        ]);
        for b in self.bays.iter().take(rows) {
            t.push([
                if b.surface_run {
                    format!("{} (surface run)", b.bay_index)
                } else {
                    b.bay_index.to_string()
                },
                format!(
                    "{:.0}-{:.0}",
                    b.altitude_range_km[0], b.altitude_range_km[1]
                ),
                sig(b.loss_probability, 4),
                format!("{:.1} %", 100.0 * b.share_of_system_loss),
                b.repair_mean_time_hours
                    .map_or("none".into(), |h| sig(h, 4)),
            ]);
        }
        t
    }

    /// Per-state rates of the worst bay as a table (empty when there are no bays).
    pub fn worst_bay_table(&self) -> Table {
        let mut t = Table::new(["cut_segments", "cut_rate_per_year", "repair_rate_per_year"]);
        if let Some(b) = self.bays.first() {
            let m = b.cut_rate_per_year_by_state.len();
            for (k, (c, r)) in b
                .cut_rate_per_year_by_state
                .iter()
                .zip(&b.repair_rate_per_year_by_state)
                .enumerate()
            {
                let label = if k + 1 == m {
                    format!("{k} (next cut loses the bay)")
                } else {
                    k.to_string()
                };
                t.push([label, sig(*c, 4), sig(*r, 4)]);
            }
        }
        t
    }

    /// Human-readable rendering.
    pub fn to_text(&self) -> String {
        let mut o = String::new();
        o.push_str(&format!(
            "Markov estimate ({} mode): scenario \"{}\" (hash {}), {} ribbons x {} bays, {} mission years, tether-risk {}\n\n",
            self.mode,
            self.scenario,
            self.scenario_hash,
            self.ribbon_count,
            self.bay_count,
            self.mission_years,
            self.version
        ));
        o.push_str("Probability of system loss by mission end\n");
        if let Some(d) = &self.damage_memory {
            o.push_str(&format!(
                "  damage-memory estimate ({}): {}\n",
                if d.exact {
                    "remembers sub-critical holes; exact without repair"
                } else {
                    "remembers sub-critical holes; approximation with repair"
                },
                sig(d.loss_probability, 4)
            ));
        }
        o.push_str(&format!(
            "  memoryless Markov estimate (forgets sub-critical holes): {}\n",
            sig(self.loss_probability, 4)
        ));
        if let Some(d) = &self.damage_memory {
            o.push_str(&format!(
                "  dominant mechanism: {} ({:.1} % of the damage-memory loss needs old sub-critical holes; the rest is direct cuts)\n",
                d.dominant_mechanism,
                100.0 * d.latent_damage_share
            ));
            if d.disagrees_with_memoryless {
                o.push_str(&format!(
                    "  DISAGREE: the two differ by {} (more than the {:.0} % both are good to): the memoryless number misses losses through accumulated holes and must not be used on its own for this design.\n",
                    match d.ratio_to_memoryless {
                        Some(r) if r >= 1.0 => format!("a factor {}", sig(r, 3)),
                        Some(r) => format!("a factor {} (damage-memory lower)", sig(1.0 / r, 3)),
                        None => "an undefined factor (memoryless estimate 0)".into(),
                    },
                    100.0 * AGREEMENT_TOLERANCE
                ));
            } else {
                o.push_str(&format!(
                    "  agree within {:.0} %: sub-critical damage memory does not change the answer here.\n",
                    100.0 * AGREEMENT_TOLERANCE
                ));
            }
        }
        o.push_str("The memoryless number holds only under these assumptions:\n");
        for a in &self.assumptions {
            o.push_str(&format!("  - {a}\n"));
        }
        if let Some(d) = &self.damage_memory {
            o.push_str("The damage-memory number rests on:\n");
            for a in &d.approximations {
                o.push_str(&format!("  - {a}\n"));
            }
        }
        o.push_str("Use `tether-risk simulate` for a result without them.\n\n");
        o.push_str("Loss probability by mission year\n");
        o.push_str(&self.year_table().to_text());
        let shown = self.bays.len().min(10);
        o.push_str(&format!(
            "\nBays contributing most (top {shown} of {}; share of -ln(1 - P))\n",
            self.bay_count
        ));
        o.push_str(&self.bay_table(shown).to_text());
        if let Some(b) = self.bays.first() {
            o.push_str(&format!(
                "\nRates in the worst bay (bay {}, {:.0}-{:.0} km), by segments already cut\n",
                b.bay_index, b.altitude_range_km[0], b.altitude_range_km[1]
            ));
            o.push_str(&self.worst_bay_table().to_text());
        }
        if let Some(h) = self.repair_mean_time_hours {
            o.push_str(&format!(
                "\nLongest mean repair time over the bays: {} h\n",
                sig(h, 4)
            ));
        }
        o.push('\n');
        o.push_str(&self.caution);
        o.push('\n');
        o
    }
}

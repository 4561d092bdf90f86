//! The fast Markov estimate as a serialisable summary, rendered as text or JSON.
//!
//! The assumptions travel with the number: they are part of the summary and the text shows
//! them right under the headline probability, because the estimate means nothing without them.

use serde::Serialize;

use super::table::{sig, Table};
use super::CAUTION;
use crate::analytic::estimate::SystemEstimate;
use crate::model::markov::{MarkovMode, MarkovModel};
use crate::model::Model;
use crate::scenario::SECONDS_PER_YEAR;

/// Bays listed in the summary (largest loss probability first).
pub const TOP_BAYS: usize = 20;

/// Loss probability at one time.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct YearPoint {
    /// Mission time, years.
    pub year: f64,
    /// Probability that the system is lost by then.
    pub loss_probability: f64,
}

/// One bay's contribution.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct BayEstimate {
    /// Bay index from the anchor.
    pub bay_index: usize,
    /// Bay bottom and top altitude, km.
    pub altitude_range_km: [f64; 2],
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
#[derive(Clone, Debug, Serialize, PartialEq)]
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
    /// Engineering caution.
    pub caution: String,
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
                    loss_probability: p,
                    share_of_system_loss: if total_deficit > 0.0 && total_deficit.is_finite() {
                        deficit / total_deficit
                    } else {
                        0.0
                    },
                    cut_rate_per_year_by_state: per_year(mb.chain.cut_rate_per_s()),
                    repair_rate_per_year_by_state: per_year(mb.chain.repair_rate_per_s()),
                    repair_mean_time_hours: mb.repair_mean_time_s.map(|t| t / 3600.0),
                }
            })
            .collect();
        let repair_mean_time_hours = markov
            .bays
            .iter()
            .filter_map(|b| b.repair_mean_time_s)
            .reduce(f64::max)
            .map(|t| t / 3600.0);
        EstimateSummary {
            version: crate::VERSION.into(),
            scenario: sc.spec.name.clone(),
            scenario_hash: sc.hash_hex(),
            mode: match markov.mode {
                MarkovMode::Physical => "physical".into(),
                MarkovMode::Validation => "validation".into(),
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
            caution: CAUTION.into(),
        }
    }

    /// Loss probability by year as a table.
    pub fn year_table(&self) -> Table {
        let mut t = Table::new(["year", "loss_probability", "survival"]);
        for p in &self.loss_probability_by_year {
            let year = if p.year.fract() == 0.0 {
                format!("{:.0}", p.year)
            } else {
                sig(p.year, 4)
            };
            t.push([
                year,
                sig(p.loss_probability, 4),
                sig(1.0 - p.loss_probability, 10),
            ]);
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
                b.bay_index.to_string(),
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
        o.push_str(&format!(
            "Probability of system loss by mission end: {}\n",
            sig(self.loss_probability, 4)
        ));
        o.push_str("This number holds only under these assumptions:\n");
        for a in &self.assumptions {
            o.push_str(&format!("  - {a}\n"));
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

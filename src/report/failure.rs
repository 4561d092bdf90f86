//! Failure-probability tables for review documents: cumulative loss probability by mission
//! year, loss by altitude band, loss by cause, and the Markov estimate against the Monte Carlo.
//!
//! Every probability carries its interval and the number of histories behind it. Each table
//! comes twice from the same rows: a CSV with one number per column (for machines) and a
//! Markdown table with "estimate [low, high]" cells (for pasting into a review document).
//!
//! Rare-event runs: the yearly and total loss probabilities are the weighted (unbiased)
//! estimates; the band and cause counts are the biased measure's counts, which show where and
//! how losses happen but not how often. The tables say so.

use serde::Serialize;

use super::table::{sig, Table};
use crate::engine::{LossProbability, RunSummary};
use crate::stats::{clopper_pearson, poisson_interval};

/// One table as CSV (separate columns) and Markdown (combined cells), with a note on its basis.
#[derive(Clone, Debug)]
pub struct DualTable {
    /// One number per column.
    pub csv: Table,
    /// Readable cells: "estimate [low, high]", "losses / histories".
    pub markdown: Table,
    /// What the numbers rest on (estimator, measure); shown above the Markdown table.
    pub note: String,
}

/// A value with an interval, formatted for a table cell.
pub fn interval_cell(estimate: f64, lo: f64, hi: f64) -> String {
    format!("{} [{}, {}]", sig(estimate, 3), sig(lo, 3), sig(hi, 3))
}

/// A loss probability as one table cell: "estimate [low, high]" when resolved, otherwise
/// "estimate ± SE, not resolved (reason)" — never an interval that cannot be trusted.
pub fn loss_cell(lp: &LossProbability) -> String {
    match lp.interval() {
        Some((lo, hi)) => interval_cell(lp.estimate, lo, hi),
        None => format!(
            "{} (SE {}), not resolved: {}",
            sig(lp.estimate, 3),
            sig(lp.standard_error, 2),
            lp.unresolved_reason.as_deref().unwrap_or("no interval")
        ),
    }
}

/// A loss probability in a sentence, with the interval method and the diagnostics a reviewer
/// needs: `digits` significant digits.
pub fn loss_text(lp: &LossProbability, digits: usize) -> String {
    let conf = format!("{:.0} %", 100.0 * lp.confidence);
    let diag = format!(
        "SE {}, effective sample size {}, largest weight {} %",
        sig(lp.standard_error, 2),
        sig(lp.effective_sample_size, 3),
        sig(100.0 * lp.largest_weight_share, 2)
    );
    match (lp.interval(), lp.is_weighted()) {
        (Some((lo, hi)), false) => format!(
            "{}  ({conf} interval {} .. {}, {})",
            sig(lp.estimate, digits),
            sig(lo, digits),
            sig(hi, digits),
            lp.interval_method
        ),
        (Some((lo, hi)), true) => format!(
            "{}  (weighted estimate; {conf} interval {} .. {}, {}; {diag})",
            sig(lp.estimate, digits),
            sig(lo, digits),
            sig(hi, digits),
            lp.interval_method
        ),
        (None, _) => format!(
            "{}  NOT RESOLVED: {}; no interval is given (weighted estimate; {diag})",
            sig(lp.estimate, digits),
            lp.unresolved_reason.as_deref().unwrap_or("no interval")
        ),
    }
}

/// CSV header names of the loss-probability columns written by [`loss_csv_cells`].
pub const LOSS_CSV_COLUMNS: [&str; 9] = [
    "loss_probability",
    "ci_low",
    "ci_high",
    "standard_error",
    "effective_sample_size",
    "largest_weight_share",
    "resolved",
    "method",
    "interval",
];

/// The loss-probability columns of a CSV row: an unresolved estimate has empty bounds.
pub fn loss_csv_cells(lp: &LossProbability, digits: usize) -> [String; 9] {
    let (lo, hi) = lp
        .interval()
        .map_or((String::new(), String::new()), |(a, b)| {
            (sig(a, digits), sig(b, digits))
        });
    [
        sig(lp.estimate, digits),
        lo,
        hi,
        sig(lp.standard_error, 4),
        sig(lp.effective_sample_size, 4),
        sig(lp.largest_weight_share, 4),
        lp.resolved.to_string(),
        if lp.is_weighted() {
            "weighted"
        } else {
            "plain"
        }
        .into(),
        match &lp.unresolved_reason {
            Some(r) if !lp.resolved => format!("not resolved: {r}"),
            _ => lp.interval_method.clone(),
        },
    ]
}

/// Clopper–Pearson interval of `k` in `n`, or (0, 1) when it cannot be formed (n = 0).
fn cp(k: u64, n: u64, confidence: f64) -> (f64, f64) {
    clopper_pearson(k, n, confidence).unwrap_or((0.0, 1.0))
}

fn conf_pct(s: &RunSummary) -> String {
    format!("{:.0} %", 100.0 * s.loss_probability.confidence)
}

/// Cumulative loss probability by mission year.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct YearRow {
    /// End of the mission year, years.
    pub year: f64,
    /// Probability of system loss by then.
    pub loss_probability: f64,
    /// Lower bound (absent when not resolved).
    pub ci_low: Option<f64>,
    /// Upper bound (absent when not resolved).
    pub ci_high: Option<f64>,
    /// The estimate with its method and diagnostics.
    pub loss: LossProbability,
    /// Losses seen by then (under the biased measure for rare-event runs).
    pub losses: u64,
    /// Histories behind the estimate.
    pub histories: u64,
}

/// The rows of the yearly table.
pub fn year_rows(s: &RunSummary) -> Vec<YearRow> {
    let mut cum = 0u64;
    s.survival_by_year
        .iter()
        .enumerate()
        .map(|(i, p)| {
            cum += s.tally.losses_by_year.get(i).copied().unwrap_or(0);
            let loss = p.loss.clone();
            YearRow {
                year: p.year,
                loss_probability: loss.estimate,
                ci_low: loss.interval().map(|i| i.0),
                ci_high: loss.interval().map(|i| i.1),
                loss,
                losses: cum,
                histories: s.histories,
            }
        })
        .collect()
}

/// A time in years as written in tables: whole years without decimals.
pub fn year_label(y: f64) -> String {
    if y.fract() == 0.0 {
        format!("{y:.0}")
    } else {
        sig(y, 4)
    }
}

/// Cumulative loss probability by mission year.
pub fn year_table(s: &RunSummary) -> DualTable {
    let rare = s.rare_event.is_some();
    let mut header: Vec<String> = vec!["year".into()];
    header.extend(LOSS_CSV_COLUMNS.iter().map(|c| c.to_string()));
    header.extend(["losses".into(), "histories".into()]);
    let mut csv = Table::new(header);
    let mut md = Table::new([
        "mission year".to_string(),
        format!("loss probability by then [{} interval]", conf_pct(s)),
        if rare {
            "losses seen (biased measure) / histories".to_string()
        } else {
            "losses / histories".to_string()
        },
        "survival probability".to_string(),
    ]);
    for r in year_rows(s) {
        let mut row = vec![year_label(r.year)];
        row.extend(loss_csv_cells(&r.loss, 6));
        row.extend([r.losses.to_string(), r.histories.to_string()]);
        csv.push(row);
        md.push([
            year_label(r.year),
            loss_cell(&r.loss),
            format!("{} / {}", r.losses, r.histories),
            sig(1.0 - r.loss_probability, 6),
        ]);
    }
    let note = match &s.rare_event {
        Some(r) => format!(
            "Weighted rare-event estimates (likelihood-ratio weights) from {} histories, not binomial counts. An interval is given only where the estimate is resolved (effective sample size of the loss weights at least {:.0} and no history above {:.0} % of the weight); it is a {} {} interval. Yearly diagnostics are bounded from the mission totals, so they are conservative. Mission end: {}.",
            s.histories,
            crate::stats::MIN_EFFECTIVE_SAMPLE_SIZE,
            100.0 * crate::stats::MAX_WEIGHT_SHARE,
            conf_pct(s),
            crate::engine::WEIGHTED_INTERVAL_METHOD,
            loss_text(&r.loss_probability, 3)
        ),
        None => format!(
            "Plain Monte Carlo: losses counted in {} independent histories; {} Clopper–Pearson intervals.",
            s.histories,
            conf_pct(s)
        ),
    };
    DualTable {
        csv,
        markdown: md,
        note,
    }
}

fn biased_note(s: &RunSummary) -> String {
    match &s.rare_event {
        Some(r) => format!(
            " This is a rare-event run: the counts here are from the biased measure (cut rates on damaged bays multiplied by {}), so they show where and how losses happen, not how often; no probability or interval is formed from them. The weighted (unbiased) total is {}.",
            sig(r.rare_event_factor, 3),
            loss_cell(&r.loss_probability)
        ),
        None => String::new(),
    }
}

/// Cuts and losses by altitude band.
pub fn band_table(s: &RunSummary) -> DualTable {
    let conf = s.loss_probability.confidence;
    let n = s.histories;
    let exposure_years = n as f64 * s.mission_years;
    let total_losses: u64 = s.tally.losses_by_band.iter().sum();
    let basis = if s.rare_event.is_some() {
        "biased-measure counts"
    } else {
        "plain Monte Carlo"
    };
    let mut csv = Table::new([
        "band_bottom_km",
        "band_top_km",
        "cuts",
        "cuts_per_year",
        "cuts_per_year_ci_low",
        "cuts_per_year_ci_high",
        "losses",
        "histories",
        "loss_probability",
        "ci_low",
        "ci_high",
        "share_of_losses",
        "basis",
    ]);
    let pct = conf_pct(s);
    let mut md = Table::new([
        "altitude band (km)".to_string(),
        format!("cuts per year, whole band [{pct} interval]"),
        "losses / histories".to_string(),
        format!("loss probability in band [{pct} interval]"),
        "share of losses".to_string(),
    ]);
    for (b, row) in s.cuts_by_altitude_band.iter().enumerate() {
        let cuts = s.tally.cuts_by_band.get(b).copied().unwrap_or(0);
        let losses = s.tally.losses_by_band.get(b).copied().unwrap_or(0);
        let (clo, chi) = poisson_interval(cuts, conf);
        let per_year = |x: f64| {
            if exposure_years > 0.0 {
                x / exposure_years
            } else {
                0.0
            }
        };
        let rare = s.rare_event.is_some();
        let (llo, lhi) = cp(losses, n, conf);
        let p = losses as f64 / n.max(1) as f64;
        // Biased-measure counts are not probabilities: leave the probability cells empty.
        let prob = |x: f64| if rare { String::new() } else { sig(x, 4) };
        let share = if total_losses > 0 {
            losses as f64 / total_losses as f64
        } else {
            0.0
        };
        let band = format!("{:.0}-{:.0}", row.bottom_altitude_km, row.top_altitude_km);
        csv.push([
            sig(row.bottom_altitude_km, 6),
            sig(row.top_altitude_km, 6),
            cuts.to_string(),
            sig(per_year(cuts as f64), 4),
            sig(per_year(clo), 4),
            sig(per_year(chi), 4),
            losses.to_string(),
            n.to_string(),
            prob(p),
            prob(llo),
            prob(lhi),
            sig(share, 4),
            basis.to_string(),
        ]);
        md.push([
            band,
            interval_cell(per_year(cuts as f64), per_year(clo), per_year(chi)),
            format!("{losses} / {n}"),
            if rare {
                "not a probability (biased measure)".into()
            } else {
                interval_cell(p, llo, lhi)
            },
            if total_losses > 0 {
                format!("{:.1} %", 100.0 * share)
            } else {
                "-".into()
            },
        ]);
    }
    let note = format!(
        "Altitude above the lunar surface. Cut intervals: exact Poisson (Garwood) on the band's cut count over {} histories x {} years; loss intervals (plain Monte Carlo only): Clopper–Pearson on the band's losses in {} histories.{}",
        n,
        year_label(s.mission_years),
        n,
        biased_note(s)
    );
    DualTable {
        csv,
        markdown: md,
        note,
    }
}

/// Losses by cause.
pub fn cause_table(s: &RunSummary) -> DualTable {
    let conf = s.loss_probability.confidence;
    let n = s.histories;
    let c = &s.losses_by_cause;
    let total = c.direct_cut + c.cascade + c.stockout_delay + c.climber_load;
    let basis = if s.rare_event.is_some() {
        "biased-measure counts"
    } else {
        "plain Monte Carlo"
    };
    let mut csv = Table::new([
        "cause",
        "losses",
        "histories",
        "loss_probability",
        "ci_low",
        "ci_high",
        "share_of_losses",
        "share_ci_low",
        "share_ci_high",
        "basis",
    ]);
    let pct = conf_pct(s);
    let mut md = Table::new([
        "cause".to_string(),
        "losses / histories".to_string(),
        format!("loss probability [{pct} interval]"),
        format!("share of losses [{pct} interval]"),
    ]);
    let rows = [
        (
            "direct cut (a strike cut the last surviving ribbon)",
            c.direct_cut,
        ),
        ("cascade (survivors overloaded after a cut)", c.cascade),
        (
            "stock-out delay (repair waited for spare stock)",
            c.stockout_delay,
        ),
        (
            "climber load (a climber's weight overloaded a weakened bay)",
            c.climber_load,
        ),
        ("all causes", total),
    ];
    let rare = s.rare_event.is_some();
    for (name, k) in rows {
        let (lo, hi) = cp(k, n, conf);
        let p = k as f64 / n.max(1) as f64;
        let prob = |x: f64| if rare { String::new() } else { sig(x, 4) };
        let (share, slo, shi) = if total > 0 {
            let (a, b) = cp(k, total, conf);
            (k as f64 / total as f64, a, b)
        } else {
            (0.0, 0.0, 0.0)
        };
        csv.push([
            name.split(" (").next().unwrap_or(name).to_string(),
            k.to_string(),
            n.to_string(),
            prob(p),
            prob(lo),
            prob(hi),
            sig(share, 4),
            sig(slo, 4),
            sig(shi, 4),
            basis.to_string(),
        ]);
        md.push([
            name.to_string(),
            format!("{k} / {n}"),
            if rare {
                "not a probability (biased measure)".into()
            } else {
                interval_cell(p, lo, hi)
            },
            if total > 0 {
                format!(
                    "{:.1} % [{:.1} %, {:.1} %]",
                    100.0 * share,
                    100.0 * slo,
                    100.0 * shi
                )
            } else {
                "no losses".into()
            },
        ]);
    }
    if let Some(r) = &s.rare_event {
        let lp = &r.loss_probability;
        let cells = loss_csv_cells(lp, 4);
        csv.push([
            "all causes, weighted estimate".to_string(),
            r.losses_observed.to_string(),
            n.to_string(),
            cells[0].clone(),
            cells[1].clone(),
            cells[2].clone(),
            String::new(),
            String::new(),
            String::new(),
            format!("weighted (unbiased); {}", cells[8]),
        ]);
        md.push([
            "all causes, weighted estimate (unbiased)".to_string(),
            format!("{} / {n}", r.losses_observed),
            loss_cell(lp),
            String::new(),
        ]);
    }
    let note = if rare {
        format!(
            "Shares of losses by cause: Clopper–Pearson on the cause's count among all {total} losses seen under the biased measure (where and how losses happen).{}",
            biased_note(s)
        )
    } else {
        format!(
            "Clopper–Pearson intervals: the loss probability on the losses in {n} histories, the share on the cause's count among all {total} losses.{}",
            biased_note(s)
        )
    };
    DualTable {
        csv,
        markdown: md,
        note,
    }
}

/// The Markov estimate's loss probability at one time (as read from `estimate.json`).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MarkovPoint {
    /// Mission time, years.
    pub year: f64,
    /// System loss probability by then.
    pub loss_probability: f64,
}

/// Why the two answers may differ, for the text beside the comparison.
pub const COMPARISON_EXPLANATION: &str = "The Markov estimate treats each bay as a chain over its number of cut segments, with independent bays and exponential repair. It has no memory of sub-critical damage (a hole that does not cut today is forgotten, although it would cut once a neighbouring ribbon fails and the load is redistributed) and no fleet contention (every bay has its own climber and spare stock is always on hand). The Monte Carlo keeps both. A ratio near 1 means those effects do not matter for this design; a large ratio means they do: the losses then come from cascades through accumulated sub-critical holes or from waiting for climbers and stock, and the Markov number must not be used on its own.";

/// Monte Carlo against the Markov estimate at each mission year both give.
pub fn comparison_table(s: &RunSummary, markov: &[MarkovPoint]) -> DualTable {
    let pct = conf_pct(s);
    let mut csv = Table::new([
        "year",
        "monte_carlo",
        "mc_ci_low",
        "mc_ci_high",
        "losses",
        "histories",
        "markov",
        "ratio_mc_to_markov",
        "ratio_ci_low",
        "ratio_ci_high",
    ]);
    let mut md = Table::new([
        "mission year".to_string(),
        format!("Monte Carlo [{pct} interval]"),
        "losses / histories".to_string(),
        "Markov estimate".to_string(),
        format!("ratio Monte Carlo / Markov [{pct} interval]"),
    ]);
    for r in year_rows(s) {
        let Some(m) = markov.iter().find(|m| (m.year - r.year).abs() < 1e-6) else {
            continue;
        };
        let ratio = |x: f64| {
            if m.loss_probability > 0.0 {
                Some(x / m.loss_probability)
            } else {
                None
            }
        };
        let (re, rl, rh) = (
            ratio(r.loss_probability),
            r.ci_low.and_then(ratio),
            r.ci_high.and_then(ratio),
        );
        let f = |v: Option<f64>| v.map_or(String::new(), |v| sig(v, 4));
        csv.push([
            year_label(r.year),
            sig(r.loss_probability, 6),
            f(r.ci_low),
            f(r.ci_high),
            r.losses.to_string(),
            r.histories.to_string(),
            sig(m.loss_probability, 6),
            f(re),
            f(rl),
            f(rh),
        ]);
        md.push([
            year_label(r.year),
            loss_cell(&r.loss),
            format!("{} / {}", r.losses, r.histories),
            sig(m.loss_probability, 4),
            match (re, rl, rh) {
                (Some(e), Some(l), Some(h)) => interval_cell(e, l, h),
                (Some(e), _, _) => format!("{} (Monte Carlo not resolved)", sig(e, 3)),
                _ => "undefined (Markov estimate is 0)".into(),
            },
        ]);
    }
    DualTable {
        csv,
        markdown: md,
        note: COMPARISON_EXPLANATION.to_string(),
    }
}

/// All failure tables as one Markdown document (`failure_tables.md`).
pub fn failure_markdown(
    s: &RunSummary,
    comparison: Option<&DualTable>,
    missing_estimate_note: Option<&str>,
) -> String {
    let mut o = format!(
        "# Failure probabilities: scenario \"{}\"\n\n{}\n\nScenario hash {}, seed {}, {} histories, {} mission years, tether-risk {}.\n\n",
        super::escape::markdown_escape(&s.scenario),
        s.caution,
        s.scenario_hash,
        s.seed,
        s.histories,
        year_label(s.mission_years),
        s.version
    );
    let mut part = |title: &str, t: &DualTable| {
        o.push_str(&format!(
            "## {title}\n\n{}\n\n",
            super::escape::markdown_escape(&t.note)
        ));
        o.push_str(&t.markdown.to_markdown());
        o.push('\n');
    };
    part(
        "Cumulative loss probability by mission year",
        &year_table(s),
    );
    part("Loss by altitude band", &band_table(s));
    part("Loss by cause", &cause_table(s));
    match (comparison, missing_estimate_note) {
        (Some(c), _) => part("Markov estimate against Monte Carlo", c),
        (None, Some(n)) => o.push_str(&format!(
            "## Markov estimate against Monte Carlo\n\n{n}\n\n"
        )),
        (None, None) => {}
    }
    o.push_str(&s.caution);
    o.push('\n');
    o
}

#[cfg(test)]
mod tests {
    use super::*;

    // Source: the Clopper–Pearson check value in the project's crate notes: 3 in 1000 at
    // 95 % gives (6.190999e-4, 8.742023e-3); the interval cell must carry it.
    #[test]
    fn interval_cell_format() {
        let (lo, hi) = cp(3, 1000, 0.95);
        assert_eq!(interval_cell(0.003, lo, hi), "0.00300 [6.19e-4, 0.00874]");
    }
}

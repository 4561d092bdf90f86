//! The decision charts of a run, drawn from its summary (and the Markov estimate when there is
//! one): survival over the mission, cuts and losses by altitude, spare demand per station, and
//! time to splice. Each chart's title is the question it answers.

use super::failure::MarkovPoint;
use super::plot::{
    bar_chart, distribution_chart, histogram_chart, survival_chart, Bar, ChartSpec, Figure,
    HistogramBin, Marker, PlotError, PmfPoint, ProbabilityAxis, Series,
};
use super::table::sig;
use crate::engine::RunSummary;
use crate::stats::clopper_pearson;
use crate::stats::poisson_interval;

/// Largest loss probability (including interval bounds) still drawn on a linear survival
/// axis; below it the differences from 1 would be invisible, so the log loss axis is used.
pub const LOG_AXIS_BELOW: f64 = 0.05;

/// A chart with the file stem it is written under (in `plots/`) and its caption.
#[derive(Clone, Debug)]
pub struct NamedFigure {
    /// File stem: `plots/<stem>.png` and `plots/<stem>.svg`.
    pub stem: String,
    /// What the chart shows and how to read it.
    pub caption: String,
    /// The drawing.
    pub figure: Figure,
}

/// An error naming the chart that could not be drawn.
#[derive(Debug, thiserror::Error)]
#[error("chart '{chart}' could not be drawn: {source}")]
pub struct FigureError {
    /// Chart file stem.
    pub chart: String,
    /// The plotting error.
    #[source]
    pub source: PlotError,
}

fn named(
    stem: &str,
    caption: String,
    figure: Result<Figure, PlotError>,
) -> Result<NamedFigure, FigureError> {
    let figure = figure.map_err(|source| FigureError {
        chart: stem.to_string(),
        source,
    })?;
    let mut caption = caption;
    for n in &figure.notes {
        caption.push(' ');
        caption.push_str(n);
    }
    Ok(NamedFigure {
        stem: stem.to_string(),
        caption,
        figure,
    })
}

/// Survival (or loss probability on a log axis, chosen automatically) over the mission:
/// the Monte Carlo with its interval band and, when given, the Markov estimate dashed.
pub fn survival_figure(
    s: &RunSummary,
    markov: Option<&[MarkovPoint]>,
) -> Result<NamedFigure, FigureError> {
    // Only years with a usable interval are drawn: an unresolved weighted estimate has none,
    // and drawing its point with a zero-width band would claim a certainty the run lacks.
    let all_years = super::failure::year_rows(s);
    let unresolved = all_years.iter().filter(|r| !r.loss.resolved).count();
    let rows: Vec<_> = all_years.into_iter().filter(|r| r.loss.resolved).collect();
    let largest = rows
        .iter()
        .filter_map(|r| r.ci_high)
        .chain(markov.unwrap_or(&[]).iter().map(|m| m.loss_probability))
        .fold(0.0f64, f64::max);
    let log = largest < LOG_AXIS_BELOW;
    let clamp = |v: f64| v.clamp(0.0, 1.0);
    let pct = format!("{:.0} %", 100.0 * s.loss_probability.confidence);
    let band_label = if s.rare_event.is_some() {
        format!("{pct} interval (weighted, Wilson on effective counts)")
    } else {
        format!("{pct} Clopper–Pearson interval")
    };
    // On the log axis a year with no loss seen has a zero estimate and a zero lower bound,
    // which would stretch the band to the bottom of the axis: leave those years out and say so.
    let all_rows = rows.len();
    let rows: Vec<_> = rows
        .into_iter()
        .filter(|r| !log || r.loss_probability > 0.0)
        .collect();
    let left_out = all_rows - rows.len();
    let x: Vec<f64> = rows.iter().map(|r| r.year).collect();
    let mc_name = if s.rare_event.is_some() {
        "Monte Carlo (rare-event, weighted)"
    } else {
        "Monte Carlo"
    };
    let mc = if log {
        Series::new(
            mc_name,
            x.clone(),
            rows.iter().map(|r| clamp(r.loss_probability)).collect(),
        )
        .with_band(
            band_label,
            rows.iter()
                .map(|r| clamp(r.ci_low.unwrap_or(r.loss_probability)))
                .collect(),
            rows.iter()
                .map(|r| clamp(r.ci_high.unwrap_or(r.loss_probability)))
                .collect(),
        )
    } else {
        Series::new(
            mc_name,
            x.clone(),
            rows.iter()
                .map(|r| clamp(1.0 - r.loss_probability))
                .collect(),
        )
        .with_band(
            band_label,
            rows.iter()
                .map(|r| clamp(1.0 - r.ci_high.unwrap_or(r.loss_probability)))
                .collect(),
            rows.iter()
                .map(|r| clamp(1.0 - r.ci_low.unwrap_or(r.loss_probability)))
                .collect(),
        )
    };
    let mut series = vec![mc];
    if let Some(m) = markov {
        let y = m
            .iter()
            .map(|p| {
                clamp(if log {
                    p.loss_probability
                } else {
                    1.0 - p.loss_probability
                })
            })
            .collect();
        series.push(
            Series::new(
                "Markov estimate (independent bays, no damage memory)",
                m.iter().map(|p| p.year).collect(),
                y,
            )
            .dashed(),
        );
    }
    let (axis, title, y_label) = if log {
        (
            ProbabilityAxis::LossLog,
            "How likely is the tether to be lost by each mission year?",
            "Probability of system loss by then (log scale)",
        )
    } else {
        (
            ProbabilityAxis::Survival,
            "How likely is the tether to survive each mission year?",
            "Probability of survival",
        )
    };
    let spec = ChartSpec::new(title, "Time since mission start (years)", y_label);
    let mut caption = if log {
        format!("Probability that the tether has been lost (severed) by each mission year, on a log scale because it is below {LOG_AXIS_BELOW}. The shaded band is the Monte Carlo's {pct} interval.")
    } else {
        format!("Probability that the tether is still whole at the end of each mission year. The shaded band is the Monte Carlo's {pct} interval.")
    };
    if left_out > 0 {
        caption.push_str(&format!(
            " The first {left_out} mission year(s) saw no loss in {} histories (upper bound {}) and cannot be drawn on the log scale.",
            s.histories,
            sig(
                clopper_pearson(0, s.histories, s.loss_probability.confidence)
                    .map_or(1.0, |(_, h)| h),
                3
            )
        ));
    }
    if unresolved > 0 {
        caption.push_str(&format!(
            " {unresolved} mission year(s) have a weighted estimate that is not resolved ({}) and are not drawn.",
            s.loss_probability
                .unresolved_reason
                .as_deref()
                .unwrap_or("too few effective losses")
        ));
    }
    if markov.is_some() {
        caption.push_str(" The dashed line is the fast Markov estimate; the gap between the two is what sub-critical damage memory and fleet contention add.");
    }
    named("survival", caption, survival_chart(&series, axis, &spec))
}

fn band_label(bottom: f64, top: f64) -> String {
    format!("{bottom:.0}–{top:.0}")
}

/// Cuts per year by altitude band with exact Poisson error bars.
pub fn cuts_figure(s: &RunSummary) -> Result<NamedFigure, FigureError> {
    let conf = s.loss_probability.confidence;
    let exposure = s.histories as f64 * s.mission_years;
    let scale = |x: f64| if exposure > 0.0 { x / exposure } else { 0.0 };
    let bars: Vec<Bar> = s
        .cuts_by_altitude_band
        .iter()
        .enumerate()
        .map(|(b, row)| {
            let k = s.tally.cuts_by_band.get(b).copied().unwrap_or(0);
            let (lo, hi) = poisson_interval(k, conf);
            // Bands differ in length (100 km near the anchor, 10 000 km higher up): per
            // 1000 km of tether, so the bars compare like with like.
            let per = 1000.0 / (row.top_altitude_km - row.bottom_altitude_km).max(1e-9);
            Bar::new(
                band_label(row.bottom_altitude_km, row.top_altitude_km),
                scale(k as f64) * per,
            )
            .with_error(scale(lo) * per, scale(hi) * per)
        })
        .collect();
    let spec = ChartSpec::new(
        "Where along the tether are ribbon segments cut?",
        "Altitude band above the lunar surface (km)",
        "Cut segments per year per 1000 km of tether (1/(year·1000 km))",
    );
    let mut caption = format!(
        "Cut segments per year in each altitude band (all ribbons) per 1000 km of the band's length, because the bands differ in length; from {} histories; error bars are exact {:.0} % Poisson intervals on the band's cut count. The tables give the band totals.",
        s.histories,
        100.0 * conf
    );
    if s.rare_event.is_some() {
        caption.push_str(" Rare-event run: counts are from the biased measure (cut rates inflated on damaged bays), so they overstate cuts; use them for where, not how many.");
    }
    named("cuts_by_altitude", caption, bar_chart(&bars, &spec))
}

/// Loss probability by altitude band (where the severing happens) with Clopper–Pearson bars.
/// Rare-event runs: the share of the losses seen under the biased measure (not a probability).
pub fn losses_figure(s: &RunSummary) -> Result<NamedFigure, FigureError> {
    let conf = s.loss_probability.confidence;
    let n = s.histories;
    let rare = s.rare_event.is_some();
    let total: u64 = s.tally.losses_by_band.iter().sum();
    let bars: Vec<Bar> = s
        .cuts_by_altitude_band
        .iter()
        .enumerate()
        .map(|(b, row)| {
            let k = s.tally.losses_by_band.get(b).copied().unwrap_or(0);
            let of = if rare { total } else { n };
            let (lo, hi) = clopper_pearson(k, of, conf).unwrap_or((0.0, 1.0));
            Bar::new(
                band_label(row.bottom_altitude_km, row.top_altitude_km),
                k as f64 / of.max(1) as f64,
            )
            .with_error(lo, hi)
        })
        .collect();
    let spec = ChartSpec::new(
        "Where along the tether is it severed?",
        "Altitude band above the lunar surface (km)",
        if rare {
            "Share of the losses seen, biased measure"
        } else {
            "Probability of loss in the band over the mission"
        },
    );
    let caption = if rare {
        format!(
            "Share of the {total} losses seen under the biased (rare-event) measure that happen in each altitude band; error bars are {:.0} % Clopper–Pearson intervals on the band's share of those losses. These show where losses happen, not how often: the weighted loss probability is in the tables.",
            100.0 * conf
        )
    } else {
        format!(
            "Probability that the system loss happens in each altitude band, from {} losses in {} histories; error bars are {:.0} % Clopper–Pearson intervals (a band with no loss still has an upper bound).",
            s.tally.losses,
            n,
            100.0 * conf
        )
    };
    named("losses_by_altitude", caption, bar_chart(&bars, &spec))
}

/// Spare-segment demand over the mission, one chart per station, with the recommended stock.
pub fn spare_figures(s: &RunSummary) -> Result<Vec<NamedFigure>, FigureError> {
    let (Some(r), Some(sp)) = (&s.repair, &s.spares) else {
        return Ok(Vec::new());
    };
    let mut out = Vec::new();
    let names: Vec<&str> = sp
        .demand_quantiles
        .iter()
        .map(|d| d.station.as_str())
        .collect();
    let stems = crate::report::unique_file_stems(&names, "station");
    for (d, stem) in sp.demand_quantiles.iter().zip(&stems) {
        let rec = r
            .recommended_initial_stock
            .iter()
            .find(|x| x.station == d.station)
            .map(|x| x.segments);
        let points: Vec<PmfPoint> = d
            .mission_distribution
            .iter()
            .enumerate()
            .map(|(k, &p)| PmfPoint {
                count: k as u64,
                probability: p.clamp(0.0, 1.0),
            })
            .collect();
        let mut markers = Vec::new();
        if let Some(rec) = rec {
            markers.push(Marker::new(
                rec as f64,
                format!("recommended initial stock = {rec}"),
            ));
        }
        markers.push(Marker::new(
            d.mission.p95 as f64,
            format!("mission P95 = {}", d.mission.p95),
        ));
        let spec = ChartSpec::new(
            format!("How many spare segments does station '{}' use?", d.station),
            "Spare segments drawn over the whole mission (segments)",
            "Probability of drawing that many",
        );
        let caption = format!(
            "Station '{}': probability of drawing each number of spare segments over the mission ({} histories; mean {}). The recommended initial stock is the smallest stock that one {}-day demand interval exceeds with probability below {:.0} %; demand beyond it is met by resupply.",
            d.station,
            s.histories,
            sig(d.mission.mean, 3),
            sig(d.interval_days, 4),
            100.0 * r.stockout_target
        );
        out.push(named(
            &format!("spare_demand_{stem}"),
            caption,
            histogram_chart(&points, &markers, &spec),
        )?);
    }
    Ok(out)
}

/// Time from cut to splice with P50, P90 and P99 marked.
pub fn splice_figure(s: &RunSummary) -> Result<Option<NamedFigure>, FigureError> {
    let Some(r) = &s.repair else {
        return Ok(None);
    };
    // Bins are geometric (equal width in log time); edges from the centre ratio.
    let ratio = crate::repair::RepairTally::splice_bin_centre_hours(1)
        / crate::repair::RepairTally::splice_bin_centre_hours(0);
    let half = ratio.sqrt();
    let bins: Vec<HistogramBin> = r
        .time_to_splice_distribution
        .iter()
        .map(|&(c, p)| HistogramBin {
            lo: c / half,
            hi: c * half,
            // Bins widen with time; a density keeps bar areas equal to probabilities.
            height: p / (c * half - c / half),
        })
        .collect();
    let t = &r.time_to_splice_hours;
    let markers = [
        Marker::new(t.p50, format!("P50 = {} h", sig(t.p50, 3))),
        Marker::new(t.p90, format!("P90 = {} h", sig(t.p90, 3))),
        Marker::new(t.p99, format!("P99 = {} h", sig(t.p99, 3))),
    ];
    let spec = ChartSpec::new(
        "How long is a cut segment left unrepaired?",
        "Time from cut to splice (hours)",
        "Probability density (1/hour)",
    );
    let caption = format!(
        "Distribution of the time from a cut to its splice (detection, waiting for a climber and stock, travel, splicing) over all splices in {} histories; mean {} h. Bar area is probability (bins are {:.1} % wide). Dashed lines: median, 90th and 99th percentiles.",
        s.histories,
        sig(t.mean, 3),
        100.0 * (ratio - 1.0)
    );
    named(
        "time_to_splice",
        caption,
        distribution_chart(&bins, &markers, &spec),
    )
    .map(Some)
}

/// Every chart of a run, in report order.
pub fn run_figures(
    s: &RunSummary,
    markov: Option<&[MarkovPoint]>,
) -> Result<Vec<NamedFigure>, FigureError> {
    let mut v = vec![
        survival_figure(s, markov)?,
        cuts_figure(s)?,
        losses_figure(s)?,
    ];
    v.extend(spare_figures(s)?);
    v.extend(splice_figure(s)?);
    Ok(v)
}

//! The report's prose sections, one file each; every function turns a read run folder
//! (and the rendered figures and tables) into a [`Section`].

mod design;
mod key;
mod location;
mod provenance;
mod repair;
mod sensitivity;
mod survival;
mod sweep;
pub(crate) use design::*;
pub(crate) use key::*;
pub(crate) use location::*;
pub(crate) use provenance::*;
pub(crate) use repair::*;
pub(crate) use sensitivity::*;
pub(crate) use survival::*;
pub(crate) use sweep::*;

use crate::engine::RunSummary;
use crate::report::failure::DualTable;
use crate::report::figures::NamedFigure;
use crate::report::html::{ReportFigure, ReportTable};
use crate::report::table::sig;
use crate::scenario::ScenarioSpec;

pub(crate) struct DocTables<'a> {
    pub(crate) years: &'a DualTable,
    pub(crate) bands: &'a DualTable,
    pub(crate) causes: &'a DualTable,
    pub(crate) comparison: Option<&'a DualTable>,
}

pub(crate) fn report_table(caption: &str, t: &DualTable) -> ReportTable {
    ReportTable::from_table(format!("{caption}. {}", t.note), &t.markdown)
}

pub(crate) fn figure(figures: &[NamedFigure], stem_prefix: &str) -> Vec<ReportFigure> {
    figures
        .iter()
        .filter(|f| f.stem.starts_with(stem_prefix))
        .map(|f| ReportFigure {
            caption: format!("{} (plots/{}.png, .svg)", f.caption, f.stem),
            svg: f.figure.svg.clone(),
        })
        .collect()
}

pub(crate) fn pct(x: f64) -> String {
    if x > 0.0 && x < 0.001 {
        format!("{} %", sig(100.0 * x, 2))
    } else {
        format!("{:.1} %", 100.0 * x)
    }
}

/// The climbers of all stations (none without a scenario or without repair).
pub(crate) fn climber_count(scenario: Option<&ScenarioSpec>) -> Option<u64> {
    let repair = scenario?.repair.as_ref()?;
    Some(repair.stations.iter().map(|s| u64::from(s.climbers)).sum())
}

/// The band where most losses happened (or most cuts, when there is no loss).
pub(crate) fn worst_band(s: &RunSummary) -> (String, String) {
    let label = |b: usize| {
        s.cuts_by_altitude_band
            .get(b)
            .map_or(String::from("?"), |r| {
                format!("{:.0}–{:.0} km", r.bottom_altitude_km, r.top_altitude_km)
            })
    };
    let losses = &s.tally.losses_by_band;
    let total: u64 = losses.iter().sum();
    let most_cuts = (0..s.cuts_by_altitude_band.len())
        .max_by(|&a, &b| {
            s.cuts_by_altitude_band[a]
                .cuts_per_year
                .total_cmp(&s.cuts_by_altitude_band[b].cuts_per_year)
                .then(b.cmp(&a))
        })
        .unwrap_or(0);
    if total > 0 {
        let b = (0..losses.len())
            .max_by(|&a, &b| losses[a].cmp(&losses[b]).then(b.cmp(&a)))
            .unwrap_or(0);
        let biased = if s.rare_event.is_some() {
            " (biased-measure counts)"
        } else {
            ""
        };
        (
            label(b),
            format!(
                "{} of {} losses{biased} ({:.0} %); most cuts: {}",
                losses[b],
                total,
                100.0 * losses[b] as f64 / total as f64,
                label(most_cuts)
            ),
        )
    } else {
        (
            label(most_cuts),
            "no loss seen; the band with the most cuts".into(),
        )
    }
}

//! The survival section: loss probability by year.

use super::*;
use crate::report::figures::NamedFigure;
use crate::report::html::{ReportTable, Section};
use crate::report::reader::RunFolder;

pub(crate) fn survival_section(
    folder: &RunFolder,
    figures: &[NamedFigure],
    t: &DocTables<'_>,
) -> Section {
    let mut paragraphs = Vec::new();
    let mut tables = vec![report_table(
        "Cumulative loss probability by mission year",
        t.years,
    )];
    match (t.comparison, &folder.estimate) {
        (Some(c), Some(e)) => {
            paragraphs.push(c.note.clone());
            paragraphs.push(format!(
                "The Markov estimate ({} mode) rests on these assumptions: {}",
                e.mode,
                e.assumptions.join("; ")
            ));
            tables.push(ReportTable::from_table(
                "Markov estimate against Monte Carlo, by mission year (ratio interval: the Monte Carlo interval over the Markov value)",
                &c.markdown,
            ));
        }
        _ => paragraphs
            .push("No Markov estimate in this folder, so the Monte Carlo is shown alone.".into()),
    }
    Section {
        heading: "How likely is loss over the mission?".into(),
        paragraphs,
        figures: figure(figures, "survival"),
        tables,
        ..Default::default()
    }
}

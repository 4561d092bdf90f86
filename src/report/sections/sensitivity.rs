//! The sensitivity section (a trade study inside a run folder).

use crate::report::html::{ReportFigure, ReportTable, Section};
use crate::report::table::sig;

pub(crate) fn sensitivity_section(
    r: &crate::sweep::sensitivity::SensitivityResult,
    svg: Option<&str>,
) -> Section {
    let measured: Vec<&crate::sweep::sensitivity::SensitivityRow> = r
        .rows
        .iter()
        .filter(|x| x.swing_status == "measured")
        .collect();
    let mut paragraphs = vec![format!(
        "Each uncertain input was set to the low and the high end of its documented range, one at a time, all others at the base, with {} histories and the same seed for every run (common random numbers). Rows are sorted by swing |P(high) - P(low)|; each range names its source or is marked as an engineering assumption.",
        r.histories
    )];
    match measured.first() {
        Some(top) => paragraphs.push(format!(
            "The answer hangs most on the {}: over {} the loss probability moves by {}{}.",
            top.input,
            crate::report::sensitivity::range_label(top),
            sig(top.swing, 2),
            if top.distinguishable {
                ""
            } else {
                ", although the two ends' intervals overlap in this run"
            }
        )),
        None => {
            let fast = r
                .rows
                .iter()
                .filter_map(|x| x.damage_memory_swing.map(|s| (s, x)))
                .max_by(|a, b| a.0.total_cmp(&b.0));
            paragraphs.push(format!(
                "No swing is measured: at least one end of every input saw no loss or is not resolved, so the Monte Carlo ranking is unknown; run more histories.{}",
                fast.map_or(String::new(), |(s, x)| format!(
                    " The fast damage-memory estimate (no sampling noise, its own assumptions) swings most with the {} ({}).",
                    x.input,
                    sig(s, 2)
                ))
            ));
        }
    }
    Section {
        heading: "Which assumption decides the answer?".into(),
        paragraphs,
        cards: Vec::new(),
        figures: svg
            .map(|s| ReportFigure {
                caption: format!(
                    "{} (sensitivity/sensitivity.svg)",
                    crate::report::sensitivity::FIGURE_CAPTION
                ),
                svg: s.to_string(),
            })
            .into_iter()
            .collect(),
        tables: vec![ReportTable::from_table(
            "One-at-a-time sensitivity, sorted by swing (sensitivity/sensitivity.md holds the same table)",
            &crate::report::sensitivity::sensitivity_table(r, true),
        )],
    }
}

//! The where-it-fails section: altitude bands and causes.

use super::*;
use crate::report::figures::NamedFigure;
use crate::report::html::Section;

pub(crate) fn where_section(
    figures: &[NamedFigure],
    t: &DocTables<'_>,
    withheld: Option<&str>,
) -> Section {
    if let Some(why) = withheld {
        return Section {
            heading: "Where along the tether, and why?".into(),
            paragraphs: vec![why.to_string()],
            ..Default::default()
        };
    }
    let mut figs = figure(figures, "losses_by_altitude");
    figs.extend(figure(figures, "cuts_by_altitude"));
    Section {
        heading: "Where along the tether, and why?".into(),
        figures: figs,
        tables: vec![
            report_table("Cuts and losses by altitude band", t.bands),
            report_table("Losses by cause", t.causes),
        ],
        ..Default::default()
    }
}

//! The trade-study report of a sweep folder.

use crate::report::html::{ReportFigure, ReportTable, Section};
use crate::report::reader::SweepInput;

/// The trade-study heading, naming what was varied: `tether.cross_link_spacing_km` reads
/// "cross-link spacing", `tether.ribbon_count` "ribbon count".
pub fn varied_heading(paths: &[&str]) -> String {
    let words: Vec<String> = paths
        .iter()
        .map(|p| {
            let last = p.rsplit('.').next().unwrap_or(p);
            let last = last.split('[').next().unwrap_or(last);
            let mut w: Vec<&str> = last.split('_').filter(|w| !w.is_empty()).collect();
            const UNITS: &[&str] = &[
                "km", "m", "mm", "um", "n", "kg", "gpa", "hours", "days", "years", "s", "per", "g",
                "cm3", "deg",
            ];
            while w.len() > 1 && w.last().is_some_and(|u| UNITS.contains(u)) {
                w.pop();
            }
            // `per` starts a unit (`speed_m_per_s`): cut from the first unit word on.
            if let Some(i) = w.iter().position(|x| *x == "per").filter(|&i| i > 0) {
                w.truncate(i);
                while w.len() > 1 && w.last().is_some_and(|u| UNITS.contains(u)) {
                    w.pop();
                }
            }
            let phrase = w.join(" ").replace("cross link", "cross-link");
            // A plural (`climbers`, `initial_stock_segments`) is a count.
            if phrase.ends_with('s') && !phrase.ends_with("ss") {
                format!("number of {phrase}")
            } else {
                phrase
            }
        })
        .collect();
    match words.len() {
        0 => "Which design in the trade study is best for its mass?".into(),
        1 => format!("Which {} is best for its mass?", words[0]),
        _ => format!(
            "Which combination of {} is best for its mass?",
            words.join(" and ")
        ),
    }
}

pub(crate) fn sweep_section(sw: &SweepInput) -> Section {
    let r = &sw.result;
    let mut paragraphs = vec![format!(
        "{} designs, at most {} histories each, seed {}.",
        r.points.len(),
        r.histories,
        r.seed
    )];
    paragraphs.push(
        "Designs on the mass against loss-probability front (only designs with a known loss probability; no other design is lighter and safer):".into(),
    );
    paragraphs.extend(crate::report::sweep::recommendation(r));
    if r.condition_cascades {
        paragraphs.push(format!(
            "Every design ran the conditional Monte Carlo at cuts: the loss probabilities are weighted estimates, and the columns losses, cuts/yr, stock and spares are left out (-). {}",
            crate::engine::TALLIES_WITHHELD
        ));
    }
    paragraphs.push(r.common_random_numbers.clone());
    paragraphs.push(r.spare_stock_basis.clone());
    let mut figures = Vec::new();
    for (svg, caption) in [
        (
            &sw.heatmap_svg,
            "Loss probability over the design grid (sweep/heatmap.svg)",
        ),
        (
            &sw.pareto_svg,
            "Loss probability against total mass; the front is marked (sweep/pareto.svg)",
        ),
    ] {
        if let Some(svg) = svg {
            figures.push(ReportFigure {
                caption: caption.to_string(),
                svg: svg.clone(),
            });
        }
    }
    Section {
        heading: varied_heading(&r.axes.iter().map(|a| a.path.as_str()).collect::<Vec<_>>()),
        paragraphs,
        cards: Vec::new(),
        figures,
        tables: vec![ReportTable::from_table(
            "Trade study: one row per design (sweep/sweep.md holds the same table)",
            &crate::report::sweep::sweep_table(r, true),
        )],
    }
}

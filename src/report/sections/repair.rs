//! The repair section and the fleet paragraph.

use super::*;
use crate::report::figures::NamedFigure;
use crate::report::html::{ReportTable, Section};
use crate::report::reader::RunFolder;
use crate::report::run::stock_table;
use crate::report::table::sig;

pub(crate) fn repair_section(folder: &RunFolder, figures: &[NamedFigure]) -> Section {
    let s = &folder.summary;
    let (Some(r), Some(sp)) = (&s.repair, &s.spares) else {
        return Section {
            heading: "What stock and fleet keep it alive?".into(),
            paragraphs: vec![s
                .tallies_withheld
                .clone()
                .unwrap_or_else(|| "This scenario has no repair logistics.".into())],
            ..Default::default()
        };
    };
    let q = &r.queue;
    let mut figs = figure(figures, "spare_demand_");
    figs.extend(figure(figures, "time_to_splice"));
    let mut paragraphs = vec![fleet_paragraph(folder, r)];
    if let (Some(c), Some(cuts)) = (r.cross_links.as_ref(), s.cross_link_cuts_per_history) {
        let share = s.cross_link_cut_fraction_of_time.unwrap_or(0.0);
        let waited = if c.detected > 0 {
            c.stockout_events as f64 / c.detected as f64
        } else {
            0.0
        };
        paragraphs.push(format!(
            "Cross-links: {} are cut per history and {} re-joined; an interior cross-link station is cut {} of the time on average, and a detected cross-link cut waits {} h on average for a climber to leave with a spare. {} of the detected cross-link cuts waited for a spare cross-link.{}",
            sig(cuts, 3),
            sig(c.repairs_per_history, 3),
            pct(share),
            sig(c.mean_wait_hours, 3),
            pct(waited),
            if waited > 0.01 {
                " Spare cross-links, not climbers, set how long the bays stay merged: raise repair.cross_link_repair.spares_per_station or resupply_batch and compare the share of time cut."
            } else {
                ""
            }
        ));
    }
    paragraphs.insert(
        0,
        if q.mean_wait_hours > 0.0 {
            format!(
                "Climbers are busy {} of the available time; {} segments are spliced per year. On average {} detected segments wait for dispatch; {} (Little's law: arrival rate {} per hour x mean wait = {}).",
                pct(r.climber_utilisation),
                sig(r.splices_per_year, 3),
                sig(q.mean_waiting_segments, 3),
                crate::report::run::wait_sentence(r),
                sig(q.arrival_rate_per_hour, 3),
                sig(q.arrival_rate_times_wait, 3)
            )
        } else {
            format!(
                "Climbers are busy {} of the available time; {} segments are spliced per year. No detected segment ever waited for dispatch: the fleet and stock are large enough for this cut rate, and the time to splice is detection, travel and splicing.",
                pct(r.climber_utilisation),
                sig(r.splices_per_year, 3)
            )
        },
    );
    Section {
        heading: "What stock and fleet keep it alive?".into(),
        paragraphs,
        figures: figs,
        tables: vec![ReportTable::from_table(
            format!(
                "Spare demand and stock per station: mission demand quantiles (segments), the 95th percentile of one demand interval, the chance of a stock-out (Clopper–Pearson upper bound) and the recommended initial stock (stock-out target {})",
                pct(r.stockout_target)
            ),
            &{
                let mut t = stock_table(r, sp);
                t.headers = [
                    "station",
                    "mission demand P50",
                    "P90",
                    "P95",
                    "P99",
                    "one interval P95",
                    "interval (days)",
                    "stock-out probability",
                    "upper bound",
                    "recommended initial stock",
                ]
                .iter()
                .map(|h| h.to_string())
                .collect();
                t
            },
        )],
        ..Default::default()
    }
}

/// The fleet next to the stock: the time-to-splice requirement (if the scenario states one)
/// against the run's P90, and the fleet recommendation of a sweep over climbers in the
/// folder, or the command that makes one.
pub(crate) fn fleet_paragraph(folder: &RunFolder, r: &crate::engine::RepairSummary) -> String {
    let p90 = r.time_to_splice_hours.p90;
    let target = folder
        .scenario
        .as_ref()
        .and_then(|v| v.repair.as_ref()?.splice_p90_target_hours);
    let mut o = match target {
        Some(t) if p90 <= t => format!(
            "Fleet: the 90th percentile of the time from cut to splice is {} h, within the requirement of {} h (repair.splice_p90_target_hours).",
            sig(p90, 3),
            sig(t, 3)
        ),
        Some(t) => format!(
            "Fleet: the 90th percentile of the time from cut to splice is {} h, above the requirement of {} h (repair.splice_p90_target_hours): add climbers (if they wait), stock (if splices wait for spares) or speed.",
            sig(p90, 3),
            sig(t, 3)
        ),
        None => format!(
            "Fleet: the 90th percentile of the time from cut to splice is {} h; no requirement is stated (repair.splice_p90_target_hours).",
            sig(p90, 3)
        ),
    };
    let recs = folder
        .sweep
        .as_ref()
        .map_or(&[][..], |sw| &sw.result.fleet_recommendations[..]);
    if recs.is_empty() {
        o.push_str(" To size the fleet, sweep a station's climbers (`tether-risk sweep FILE --vary 'repair.stations[0].climbers=1,2,3'`): the sweep names the smallest fleet whose loss probability is within 10 % of the largest swept and, with a requirement, the smallest that meets it.");
    } else {
        for f in recs {
            let station = &f.station;
            let at = match f.other_values.as_str() {
                "" => String::new(),
                v => format!(" at {v}"),
            };
            if let Some(c) = f.recommended_climbers {
                o.push_str(&format!(
                    " Trade study{at}: {c} climber(s) at {station} ({}).",
                    f.basis
                ));
            }
            if let Some(c) = f.meets_splice_target_climbers {
                o.push_str(&format!(
                    " For the time-to-splice requirement{at}: {c} climber(s) at {station}."
                ));
            }
        }
    }
    o
}

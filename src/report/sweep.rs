//! Trade-study output: the sweep table as text, Markdown and CSV, the loss-probability heat map
//! and the mass against loss-probability chart, and the folder of files they go into.

use std::path::{Path, PathBuf};

use super::plot::{heatmap, pareto_chart, ChartSpec, Figure, HeatmapGrid, ParetoPoint, PlotError};
use super::table::{sig, Table};
use super::write_atomic;
use crate::sweep::{PointResult, SweepResult};

/// Why sweep results could not be written.
#[derive(Debug, thiserror::Error)]
pub enum SweepWriteError {
    /// A file could not be written.
    #[error("cannot write {path}: {source}")]
    Io {
        /// File path.
        path: String,
        /// Underlying error.
        source: std::io::Error,
    },
    /// A chart could not be drawn.
    #[error("cannot draw {what}: {source}")]
    Plot {
        /// Which chart.
        what: String,
        /// Underlying error.
        source: PlotError,
    },
}

/// The files a sweep writes into its folder (heat maps for further values of a third axis add
/// `heatmap-2.png` and so on).
pub const SWEEP_FILES: &[&str] = &[
    "sweep.json",
    "sweep.csv",
    "sweep.md",
    "heatmap.png",
    "heatmap.svg",
    "pareto.png",
    "pareto.svg",
];

fn opt(v: Option<f64>, digits: usize) -> String {
    v.map(|x| sig(x, digits)).unwrap_or_else(|| "-".into())
}

/// A mass to the kilogram (totals differ by a climber's mass in a fleet sweep, which
/// significant figures would hide).
fn kg(v: Option<f64>) -> String {
    match v {
        Some(x) if x.is_finite() && x.abs() >= 10.0 && x.abs() < 1e15 => format!("{x:.0}"),
        other => opt(other, 4),
    }
}

/// Where a point stands in the ranking: `*` on the Pareto front, `unknown` when simulated
/// without a known loss probability, empty otherwise.
fn front_mark(p: &PointResult) -> &'static str {
    if p.on_pareto_front {
        "*"
    } else if p.loss_probability.is_some() && !p.loss_known {
        "unknown"
    } else {
        ""
    }
}

/// The points this point cannot be told apart from: `#i` joined, `all others` when it is
/// every other simulated point (of two or more), `-` for none.
fn indistinct(r: &SweepResult, p: &PointResult, sep: &str) -> String {
    let others = r
        .points
        .iter()
        .filter(|q| q.index != p.index && q.loss_probability.is_some())
        .count();
    if p.loss_probability.is_none() {
        return "-".into();
    }
    let n = &p.not_distinguishable_from;
    if n.is_empty() {
        "-".into()
    } else if n.len() == others && others > 1 {
        "all others".into()
    } else {
        n.iter()
            .map(|i| format!("#{i}"))
            .collect::<Vec<_>>()
            .join(sep)
    }
}

fn any_cost(r: &SweepResult) -> bool {
    r.points.iter().any(|p| p.fleet_cost.is_some())
}

fn stations_of(r: &SweepResult) -> Vec<String> {
    let mut names: Vec<String> = Vec::new();
    for p in &r.points {
        for s in &p.stations {
            if !names.contains(&s.station) {
                names.push(s.station.clone());
            }
        }
    }
    names
}

/// Per-station values joined with `+`, in the order of `names` (`-` where absent).
fn per_station(
    p: &PointResult,
    names: &[String],
    f: impl Fn(&crate::sweep::StationResult) -> Option<u64>,
) -> String {
    if !p.feasible || p.loss_probability.is_none() {
        return "-".into();
    }
    names
        .iter()
        .map(|n| {
            p.stations
                .iter()
                .find(|s| &s.station == n)
                .and_then(&f)
                .map(|v| v.to_string())
                .unwrap_or_else(|| "-".into())
        })
        .collect::<Vec<_>>()
        .join("+")
}

/// Footnote numbers of the infeasible points, in point order.
fn infeasible_notes(r: &SweepResult) -> Vec<(usize, &PointResult)> {
    r.points
        .iter()
        .filter(|p| !p.feasible)
        .enumerate()
        .map(|(k, p)| (k + 1, p))
        .collect()
}

/// The sweep as a table, one row per point. `full` adds the mass components (for Markdown and
/// review documents); the text form keeps the totals.
pub fn sweep_table(r: &SweepResult, full: bool) -> Table {
    let names = stations_of(r);
    let station_hdr = if names.is_empty() {
        String::new()
    } else {
        format!(" ({})", names.join("+"))
    };
    let mut headers: Vec<String> = vec!["#".into()];
    headers.extend(r.axes.iter().map(|a| a.name.clone()));
    headers.extend([
        "feasible".to_string(),
        "P(loss)".into(),
        match confidence(r) {
            Some(c) => format!("{} % interval", c * 100.0),
            None => "interval (run.confidence)".into(),
        },
        "losses".into(),
    ]);
    if r.target_rel_error.is_some() {
        headers.push("histories".into());
    }
    headers.extend(["not distinguishable from".to_string(), "cuts/yr".into()]);
    if !names.is_empty() {
        headers.push(format!("rec. stock{station_hdr}"));
        headers.push(format!("spare P95{station_hdr}"));
    }
    if full {
        headers.extend([
            "ribbon kg".to_string(),
            "cross-links kg".into(),
            "spares kg".into(),
            "counterweight kg".into(),
        ]);
    }
    if !names.is_empty() {
        headers.push("climbers".into());
        headers.push("climbers kg".into());
    }
    headers.push("total kg".into());
    if any_cost(r) {
        headers.push("fleet cost".into());
    }
    if !names.is_empty() {
        headers.push("payload/segment".into());
    }
    headers.extend(["min margin".to_string(), "front".into()]);
    let mut t = Table::new(headers);
    let notes = infeasible_notes(r);
    for p in &r.points {
        let mut row = vec![p.index.to_string()];
        for (a, &c) in r.axes.iter().zip(&p.coordinates) {
            row.push(a.labels[c].clone());
        }
        let note = notes
            .iter()
            .find(|(_, q)| q.index == p.index)
            .map(|(k, _)| *k);
        row.push(match note {
            Some(k) => format!("no [{k}]"),
            None => "yes".into(),
        });
        match &p.loss_probability {
            Some(l) => {
                row.push(sig(l.estimate, 3));
                row.push(match l.interval() {
                    Some((lo, hi)) => format!("{} .. {}", sig(lo, 3), sig(hi, 3)),
                    None => "not resolved".into(),
                });
            }
            None => {
                row.push("-".into());
                row.push("-".into());
            }
        }
        row.push(
            p.losses
                .map(|l| l.to_string())
                .unwrap_or_else(|| "-".into()),
        );
        if r.target_rel_error.is_some() {
            row.push(
                p.histories_run
                    .map(|h| h.to_string())
                    .unwrap_or_else(|| "-".into()),
            );
        }
        row.push(indistinct(r, p, " "));
        row.push(opt(p.cuts_per_year.map(|c| c.estimate), 3));
        if !names.is_empty() {
            row.push(per_station(p, &names, |s| {
                s.recommended_initial_stock_segments
            }));
            row.push(per_station(p, &names, |s| {
                s.spare_demand_mission_p95_segments
            }));
        }
        let m = p.masses.as_ref();
        if full {
            row.push(opt(m.map(|m| m.ribbon_kg), 4));
            row.push(opt(m.map(|m| m.cross_links_kg), 4));
            row.push(opt(m.map(|m| m.spare_stock_kg), 4));
            row.push(opt(m.map(|m| m.counterweight_kg), 4));
        }
        if !names.is_empty() {
            row.push(
                p.climbers
                    .map(|c| c.to_string())
                    .unwrap_or_else(|| "-".into()),
            );
            row.push(kg(m.map(|m| m.climbers_kg)));
        }
        row.push(kg(m.map(|m| m.total_kg)));
        if any_cost(r) {
            row.push(opt(p.fleet_cost, 4));
        }
        if !names.is_empty() {
            row.push(opt(p.payload_to_heaviest_segment, 3));
        }
        row.push(opt(p.min_intact_margin, 3));
        row.push(front_mark(p).into());
        t.push(row);
    }
    t
}

/// The confidence level shared by every interval, if they share one.
fn confidence(r: &SweepResult) -> Option<f64> {
    let mut levels = r
        .points
        .iter()
        .filter_map(|p| p.loss_probability.as_ref().map(|l| l.confidence));
    let first = levels.next()?;
    levels.all(|c| c == first).then_some(first)
}

/// The sweep as CSV with full-precision numbers and one column per station value.
pub fn sweep_csv(r: &SweepResult) -> String {
    let names = stations_of(r);
    let mut headers: Vec<String> = vec!["index".into()];
    headers.extend(r.axes.iter().map(|a| a.path.clone()));
    headers.extend(
        [
            "feasible",
            "reason",
            "loss_probability",
            "ci_low",
            "ci_high",
            "confidence",
            "losses",
            "histories",
            "relative_error",
            "target_met",
            "loss_known",
            "unknown_reason",
            "not_distinguishable_from",
            "cuts_per_year",
        ]
        .map(String::from),
    );
    for n in &names {
        headers.push(format!("initial_stock_segments_{n}"));
        headers.push(format!("recommended_initial_stock_segments_{n}"));
        headers.push(format!("spare_demand_mission_p95_segments_{n}"));
    }
    headers.extend(
        [
            "ribbon_kg",
            "cross_links_kg",
            "spare_stock_kg",
            "counterweight_kg",
            "climbers",
            "climbers_kg",
            "total_kg",
            "fleet_cost",
            "recommended_spare_stock_kg",
            "heaviest_segment_kg",
            "climber_payload_kg",
            "payload_to_heaviest_segment",
            "min_intact_margin",
            "on_pareto_front",
            "scenario_hash",
        ]
        .map(String::from),
    );
    let f = |v: Option<f64>| v.map(|x| format!("{x}")).unwrap_or_default();
    let u = |v: Option<u64>| v.map(|x| x.to_string()).unwrap_or_default();
    let mut t = Table::new(headers);
    for p in &r.points {
        let mut row = vec![p.index.to_string()];
        for (a, &c) in r.axes.iter().zip(&p.coordinates) {
            row.push(a.labels[c].clone());
        }
        let l = p.loss_probability.as_ref();
        row.push(p.feasible.to_string());
        row.push(p.reason.clone().unwrap_or_default());
        row.push(f(l.map(|l| l.estimate)));
        row.push(f(l.and_then(|l| l.interval()).map(|i| i.0)));
        row.push(f(l.and_then(|l| l.interval()).map(|i| i.1)));
        row.push(f(l.map(|l| l.confidence)));
        row.push(u(p.losses));
        row.push(if p.losses.is_some() {
            p.histories_run.unwrap_or(r.histories).to_string()
        } else {
            String::new()
        });
        row.push(f(p.relative_error));
        row.push(if p.losses.is_some() {
            p.target_met.to_string()
        } else {
            String::new()
        });
        row.push(if p.losses.is_some() {
            p.loss_known.to_string()
        } else {
            String::new()
        });
        row.push(p.unknown_reason.clone().unwrap_or_default());
        // Indices separated by spaces: one CSV cell.
        row.push(
            p.not_distinguishable_from
                .iter()
                .map(|i| i.to_string())
                .collect::<Vec<_>>()
                .join(" "),
        );
        row.push(f(p.cuts_per_year.map(|c| c.estimate)));
        for n in &names {
            let s = p.stations.iter().find(|s| &s.station == n);
            row.push(u(s.map(|s| u64::from(s.initial_stock_segments))));
            row.push(u(s.and_then(|s| s.recommended_initial_stock_segments)));
            row.push(u(s.and_then(|s| s.spare_demand_mission_p95_segments)));
        }
        let m = p.masses.as_ref();
        row.push(f(m.map(|m| m.ribbon_kg)));
        row.push(f(m.map(|m| m.cross_links_kg)));
        row.push(f(m.map(|m| m.spare_stock_kg)));
        row.push(f(m.map(|m| m.counterweight_kg)));
        row.push(u(p.climbers.map(u64::from)));
        row.push(f(m.map(|m| m.climbers_kg)));
        row.push(f(m.map(|m| m.total_kg)));
        row.push(f(p.fleet_cost));
        row.push(f(m.and_then(|m| m.recommended_spare_stock_kg)));
        row.push(f(p.heaviest_segment_kg));
        row.push(f(p.climber_payload_kg));
        row.push(f(p.payload_to_heaviest_segment));
        row.push(f(p.min_intact_margin));
        row.push(p.on_pareto_front.to_string());
        row.push(p.scenario_hash.clone());
        t.push(row);
    }
    t.to_csv()
}

/// The lines under the table: infeasible reasons, the Pareto front, method notes, caution.
fn notes(r: &SweepResult, bullet: &str) -> String {
    let mut o = String::new();
    let inf = infeasible_notes(r);
    if !inf.is_empty() {
        o.push_str("\nInfeasible designs (not simulated):\n");
        for (k, p) in inf {
            o.push_str(&format!(
                "{bullet}[{k}] #{} {}: {}\n",
                p.index,
                p.label,
                p.reason.as_deref().unwrap_or("")
            ));
        }
    }
    o.push_str("\nPareto front (designs with a known loss probability not beaten on both total mass and loss probability; by increasing mass):\n");
    for line in recommendation(r) {
        o.push_str(&format!("{bullet}{line}\n"));
    }
    o.push_str(&format!(
        "\n{} histories per point, seed {} for every point. {}\nMasses: {}\nMargins: min margin = smallest intact allowable-over-actual tension over all bays; payload/segment = climber payload over the heaviest spare segment's mass (below 1 no climber can carry a spare). Stock columns list the stations in the order of the header.\n\n{}\n",
        r.histories, r.seed, r.common_random_numbers, r.spare_stock_basis, r.caution
    ));
    if r.condition_cascades {
        // Before the caution paragraph: why the count columns are empty.
        let at = o.rfind("\n\n").map_or(o.len(), |i| i + 1);
        o.insert_str(
            at,
            &format!(
                "Columns losses, cuts/yr, stock and spares are left out (-): {}\n",
                crate::engine::TALLIES_WITHHELD
            ),
        );
    }
    o
}

/// The Pareto front, the designs that cannot be ranked and what the run allows one to
/// conclude, one sentence per line. Points with no known loss probability are listed as
/// unknown, never ranked as safe; front designs whose intervals overlap are said to be not
/// distinguishable.
pub fn recommendation(r: &SweepResult) -> Vec<String> {
    let mut out = Vec::new();
    let label = |i: usize| format!("#{i} {}", r.points[i].label);
    let unknown = r.unknown_points();
    for &i in &r.pareto_front {
        let p = &r.points[i];
        let iv = p
            .loss_probability
            .as_ref()
            .and_then(|l| l.interval())
            .map(|(lo, hi)| format!(" ({} .. {})", sig(lo, 3), sig(hi, 3)))
            .unwrap_or_default();
        out.push(format!(
            "{}: total {} kg, P(loss) {}{iv}",
            label(i),
            kg(p.masses.map(|m| m.total_kg)),
            opt(p.loss_probability.as_ref().map(|l| l.estimate), 3)
        ));
    }
    if r.pareto_front.is_empty() {
        if unknown.is_empty() {
            out.push("none (no feasible design was simulated)".into());
        } else {
            out.push(format!(
                "none: no design has a known loss probability ({} simulated, all unknown). The designs cannot be ranked by safety, and the lightest is not thereby the best: run more histories (--histories, --target-rel-error) or the rare-event estimator (--rare-event) before choosing.",
                unknown.len()
            ));
        }
    } else {
        let front = &r.pareto_front;
        // Pairs on the front that this run cannot tell apart.
        let mut pairs = Vec::new();
        for (k, &i) in front.iter().enumerate() {
            for &j in &front[k + 1..] {
                if r.points[i].not_distinguishable_from.contains(&j) {
                    pairs.push((i, j));
                }
            }
        }
        let lightest = front[0];
        let mass = |i: usize| r.points[i].masses.map_or(f64::NAN, |m| m.total_kg);
        let lighter_unknown: Vec<usize> = unknown
            .iter()
            .copied()
            .filter(|&i| mass(i) < mass(lightest))
            .collect();
        if !lighter_unknown.is_empty() {
            out.push(format!(
                "No recommendation yet: {} lighter than the front's lightest design ({}) {} no known loss probability and may be as safe; resolve {} first (more histories, --target-rel-error or --rare-event).",
                if lighter_unknown.len() == 1 { "a design" } else { "designs" },
                label(lightest),
                if lighter_unknown.len() == 1 { "has" } else { "have" },
                lighter_unknown
                    .iter()
                    .map(|&i| format!("#{i}"))
                    .collect::<Vec<_>>()
                    .join(", ")
            ));
        } else if front.len() == 1 {
            out.push(format!(
                "Recommendation on this evidence: {} (the only design on the front).",
                label(lightest)
            ));
        } else if pairs.len() == front.len() * (front.len() - 1) / 2 {
            out.push(format!(
                "The front's designs are not distinguishable in loss probability (their intervals overlap): within this run the lightest, {}, is as safe as the heavier ones; more histories are needed to show that a heavier design is safer.",
                label(lightest)
            ));
        } else {
            out.push(format!(
                "Lightest design on the front: {}; a heavier front design is worth its mass only where its interval lies below the lighter one's.",
                label(lightest)
            ));
            if !pairs.is_empty() {
                out.push(format!(
                    "Not distinguishable on the front (intervals overlap): {}.",
                    pairs
                        .iter()
                        .map(|(i, j)| format!("#{i} and #{j}"))
                        .collect::<Vec<_>>()
                        .join("; ")
                ));
            }
        }
    }
    if !unknown.is_empty() && !r.pareto_front.is_empty() {
        out.push(format!(
            "Unknown, not ranked ({} design(s) without a known loss probability; one of them may belong on the front):",
            unknown.len()
        ));
    }
    if !unknown.is_empty() {
        for &i in unknown.iter().take(20) {
            out.push(format!(
                "  {}: {}",
                label(i),
                r.points[i].unknown_reason.as_deref().unwrap_or("unknown")
            ));
        }
        if unknown.len() > 20 {
            out.push(format!(
                "  ... and {} more (see sweep.csv)",
                unknown.len() - 20
            ));
        }
    }
    for f in &r.fleet_recommendations {
        let at = if f.other_values.is_empty() {
            String::new()
        } else {
            format!(" at {}", f.other_values)
        };
        out.push(match (f.recommended_point, f.recommended_climbers) {
            (Some(i), Some(c)) => format!(
                "Fleet at {}{at}: {c} climber(s) (#{i}); {}{}.",
                f.station,
                f.basis,
                match f.not_distinguishable_from_reference {
                    Some(true) => "; not distinguishable from it in this run",
                    _ => "",
                }
            ),
            _ => format!("Fleet at {}{at}: {}.", f.station, f.basis),
        });
        if !f.splice_target_basis.is_empty() {
            out.push(match f.meets_splice_target_climbers {
                Some(c) => format!(
                    "Fleet at {}{at} for the time-to-splice target: {c} climber(s); {}.",
                    f.station, f.splice_target_basis
                ),
                None => format!("Fleet at {}{at}: {}.", f.station, f.splice_target_basis),
            });
        }
    }
    if let Some(t) = r.target_rel_error {
        out.push(format!(
            "Each design stopped once its relative standard error reached {t} (at most {} histories); the histories column gives each design's count.",
            r.histories
        ));
    }
    out
}

fn heading(r: &SweepResult) -> String {
    format!(
        "Trade study of scenario \"{}\" (hash {}), tether-risk {}: {} points over {}; loss probability: {}",
        r.scenario,
        r.scenario_hash,
        r.version,
        r.points.len(),
        r.axes
            .iter()
            .map(|a| format!("{} = {}", a.path, a.labels.join(", ")))
            .collect::<Vec<_>>()
            .join("; "),
        r.loss_probability_method
    )
}

/// Text for a terminal: heading, table, Pareto front, notes and caution.
pub fn sweep_text(r: &SweepResult) -> String {
    format!(
        "{}\n\n{}{}",
        heading(r),
        sweep_table(r, false).to_text(),
        notes(r, "  ")
    )
}

/// Markdown that pastes into a review document.
pub fn sweep_markdown(r: &SweepResult) -> String {
    // Names, labels and reasons come from the scenario and the command line: escape every
    // line of free text, not only the table (the bullets' `- ` is left as it is).
    let esc = super::escape::markdown_escape;
    let notes: Vec<String> = notes(r, "- ").lines().map(esc).collect();
    format!(
        "## {}\n\n{}{}\n",
        esc(&heading(r)),
        sweep_table(r, true).to_markdown(),
        notes.join("\n")
    )
}

/// Loss-probability heat maps over the first two axes: one for two or fewer axes; with a third
/// axis, one per value of it. Returns (file stem, figure).
pub fn heatmap_figures(r: &SweepResult) -> Result<Vec<(String, Figure)>, PlotError> {
    let ax = &r.axes;
    let x = &ax[0];
    let (y_labels, y_name) = match ax.get(1) {
        Some(a) => (a.labels.clone(), a.path.clone()),
        None => (vec![String::new()], "(one varied field)".to_string()),
    };
    let third = ax.get(2);
    let slices = third.map_or(1, |a| a.labels.len());
    let mut out = Vec::with_capacity(slices);
    for k in 0..slices {
        let mut z = vec![vec![0.0; x.labels.len()]; y_labels.len()];
        let mut infeasible = Vec::new();
        for p in &r.points {
            if third.is_some() && p.coordinates[2] != k {
                continue;
            }
            let (c, row) = (p.coordinates[0], p.coordinates.get(1).copied().unwrap_or(0));
            z[row][c] = p.loss_probability.as_ref().map_or(0.0, |l| l.estimate);
            if !p.feasible {
                infeasible.push(p);
            }
        }
        let mut title = "Probability of system loss by mission end".to_string();
        if let Some(a) = third {
            title.push_str(&format!(" ({} = {})", a.name, a.labels[k]));
        }
        if !infeasible.is_empty() {
            let names: Vec<String> = infeasible
                .iter()
                .map(|p| {
                    p.coordinates
                        .iter()
                        .take(2)
                        .zip(ax)
                        .map(|(&c, a)| a.labels[c].clone())
                        .collect::<Vec<_>>()
                        .join("/")
                })
                .collect();
            title.push_str(&if names.len() <= 3 {
                format!(" (infeasible, drawn grey: {})", names.join(", "))
            } else {
                format!(" ({} infeasible designs drawn grey)", names.len())
            });
        }
        let grid = HeatmapGrid {
            x_labels: x.labels.clone(),
            y_labels: y_labels.clone(),
            z,
            z_label: "Loss probability by mission end".into(),
        };
        let spec = ChartSpec::new(title, x.path.clone(), y_name.clone());
        let stem = if k == 0 {
            "heatmap".to_string()
        } else {
            format!("heatmap-{}", k + 1)
        };
        out.push((stem, heatmap(&grid, &spec)?));
    }
    Ok(out)
}

/// Total mass against loss probability for the feasible designs whose loss probability is
/// known, the non-dominated ones marked (the same front as the table's). Designs without a
/// known probability cannot be placed on the loss axis: the title counts them. Labels are the
/// varied values in axis order.
pub fn pareto_figure(r: &SweepResult) -> Result<Figure, PlotError> {
    let unknown = r.unknown_points().len();
    let pts: Vec<ParetoPoint> = r
        .points
        .iter()
        .filter(|p| p.feasible && p.loss_known)
        .filter_map(|p| {
            Some(ParetoPoint {
                label: r
                    .axes
                    .iter()
                    .zip(&p.coordinates)
                    .map(|(a, &c)| a.labels[c].clone())
                    .collect::<Vec<_>>()
                    .join("/"),
                mass_kg: p.masses?.total_kg,
                loss_probability: p.loss_probability.as_ref()?.estimate,
            })
        })
        .collect();
    let names: Vec<&str> = r.axes.iter().map(|a| a.name.as_str()).collect();
    let unknown_note = match unknown {
        0 => String::new(),
        1 => "; 1 design with no known loss probability not drawn".into(),
        n => format!("; {n} designs with no known loss probability not drawn"),
    };
    let spec = ChartSpec::new(
        format!(
            "Mass against loss probability (labels: {}{unknown_note})",
            names.join("/")
        ),
        "Total mass: ribbons + cross-links + spares + climbers + counterweight (kg)",
        "Probability of system loss by mission end",
    );
    pareto_chart(&pts, &spec)
}

/// Write every sweep file into `dir` (which must exist), each atomically. Returns the paths.
pub fn write_sweep(dir: &Path, r: &SweepResult) -> Result<Vec<PathBuf>, SweepWriteError> {
    let mut written = Vec::new();
    let mut put = |name: &str, bytes: &[u8]| -> Result<(), SweepWriteError> {
        let p = dir.join(name);
        write_atomic(&p, bytes).map_err(|source| SweepWriteError::Io {
            path: p.display().to_string(),
            source,
        })?;
        written.push(p);
        Ok(())
    };
    let json = serde_json::to_string_pretty(r).map_err(|e| SweepWriteError::Io {
        path: dir.join("sweep.json").display().to_string(),
        source: std::io::Error::other(e),
    })? + "\n";
    put("sweep.json", json.as_bytes())?;
    put("sweep.csv", sweep_csv(r).as_bytes())?;
    put("sweep.md", sweep_markdown(r).as_bytes())?;
    let plot = |what: &str| {
        let what = what.to_string();
        move |source| SweepWriteError::Plot { what, source }
    };
    for (stem, fig) in heatmap_figures(r).map_err(plot("the heat map"))? {
        put(&format!("{stem}.png"), &fig.png)?;
        put(&format!("{stem}.svg"), fig.svg.as_bytes())?;
    }
    let fig = pareto_figure(r).map_err(plot("the Pareto chart"))?;
    put("pareto.png", &fig.png)?;
    put("pareto.svg", fig.svg.as_bytes())?;
    Ok(written)
}

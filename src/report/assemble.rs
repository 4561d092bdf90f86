//! The decision report of a run folder: failure tables, charts and `report.html`, rendered
//! from the saved files alone (no simulation).
//!
//! Inputs in the run folder: `summary.json` (required), and, when present, `manifest.json`,
//! `scenario.json`, `design.json` (design summary), `estimate.json` (Markov estimate) and
//! `sweep/sweep.json` with `sweep/heatmap.svg` and `sweep/pareto.svg` (a trade study), read by
//! [`super::reader`] as the types their writers define (a missing, stale or differently shaped
//! optional file leaves its section out with a note instead of failing). Each section is built
//! in [`super::sections`]; this module only orchestrates.
//!
//! Outputs: `failure_tables.md`, `failure_by_year.csv`, `failure_by_band.csv`,
//! `failure_by_cause.csv`, `markov_vs_monte_carlo.csv` (with an estimate), `plots/*.png` and
//! `plots/*.svg`, and `report.html`. Everything is rendered in memory first; only then is each
//! file written atomically, `report.html` last, so a failed render leaves the folder as it was.

use std::path::{Path, PathBuf};

use super::failure::{
    band_table, cause_table, comparison_table, failure_markdown, year_label, year_table,
};
use super::figures::{run_figures, NamedFigure};
use super::html::{render_report, ReportDoc, Section};
use super::reader::{read_capped, read_main_file};
pub use super::reader::{Completeness, ReportError, RunFolder, SweepInput};
use super::sections::*;
use super::table::Table;
use super::write_atomic;

/// One output file, relative to the run folder.
#[derive(Clone, Debug)]
pub struct OutputFile {
    /// Path inside the run folder.
    pub path: PathBuf,
    /// Contents.
    pub bytes: Vec<u8>,
}

/// What [`write_report`] wrote.
#[derive(Clone, Debug)]
pub struct ReportWritten {
    /// The HTML report.
    pub html: PathBuf,
    /// Every file written, in order.
    pub files: Vec<PathBuf>,
    /// Sections left out and why.
    pub notes: Vec<String>,
}

/// Read the run folder, render everything, and write it atomically.
///
/// # Errors
/// See [`ReportError`].
pub fn write_report(dir: &Path) -> Result<ReportWritten, ReportError> {
    write_report_with(dir, Completeness::Check)
}

/// [`write_report`] for a folder that is being written now (the manifest comes after the
/// report), or a finished one.
///
/// # Errors
/// See [`ReportError`].
pub fn write_report_with(
    dir: &Path,
    completeness: Completeness,
) -> Result<ReportWritten, ReportError> {
    let mut folder = RunFolder::load_with(dir, completeness)?;
    if let Some(w) = &folder.incomplete {
        folder.notes.insert(0, format!("Warning: {w}."));
    }
    let files = render(&folder)?;
    let plots = dir.join("plots");
    std::fs::create_dir_all(&plots).map_err(|source| ReportError::Write {
        path: plots.clone(),
        source,
    })?;
    let mut written = Vec::new();
    for f in &files {
        let path = dir.join(&f.path);
        write_atomic(&path, &f.bytes).map_err(|source| ReportError::Write {
            path: path.clone(),
            source,
        })?;
        written.push(path);
    }
    // Outputs of an earlier rendering that this one does not produce (a comparison without
    // estimate.json now, a chart of a station that no longer exists) must not stay behind
    // looking current.
    let mut stale: Vec<PathBuf> = vec![dir.join("markov_vs_monte_carlo.csv")];
    if let Ok(entries) = std::fs::read_dir(&plots) {
        stale.extend(
            entries
                .flatten()
                .map(|e| e.path())
                .filter(|p| p.extension().is_some_and(|x| x == "png" || x == "svg")),
        );
    }
    for p in stale {
        if !written.contains(&p) && p.is_file() {
            std::fs::remove_file(&p).map_err(|source| ReportError::Write {
                path: p.clone(),
                source,
            })?;
        }
    }
    Ok(ReportWritten {
        html: dir.join("report.html"),
        files: written,
        notes: folder.notes,
    })
}

/// Render `report.html` of a sweep folder (one written by `tether-risk sweep`) from its
/// `sweep.json`, `heatmap.svg` and `pareto.svg`.
///
/// # Errors
/// [`ReportError::NotARunFolder`] without `sweep.json`, [`ReportError::BadSummary`] when it is
/// not a trade study of this version or is inconsistent.
pub fn write_sweep_report(dir: &Path) -> Result<ReportWritten, ReportError> {
    let path = dir.join("sweep.json");
    let text = read_main_file(dir, &path)?;
    let r: crate::sweep::SweepResult =
        serde_json::from_str(&text).map_err(|e| ReportError::BadSummary {
            path: path.clone(),
            reason: format!("it is not a trade study of this version: {e}"),
        })?;
    super::folder::validate_sweep(&r).map_err(|reason| ReportError::BadSummary {
        path: path.clone(),
        reason: format!("it is not consistent: {reason}"),
    })?;
    let sw = SweepInput {
        result: r.clone(),
        heatmap_svg: read_capped(&dir.join("heatmap.svg")).ok(),
        pareto_svg: read_capped(&dir.join("pareto.svg")).ok(),
    };
    let mut notes = Vec::new();
    if sw.heatmap_svg.is_none() || sw.pareto_svg.is_none() {
        notes.push("heatmap.svg or pareto.svg is missing: its chart is left out.".to_string());
    }
    let mut brief = Section {
        heading: "Trade study".into(),
        paragraphs: vec![format!(
            "Scenario \"{}\" (hash {}) varied over {}; {} designs, {} of them feasible.",
            r.scenario,
            r.scenario_hash,
            r.axes
                .iter()
                .map(|a| format!("{} = {}", a.path, a.labels.join(", ")))
                .collect::<Vec<_>>()
                .join("; "),
            r.points.len(),
            r.points.iter().filter(|p| p.feasible).count()
        )],
        ..Default::default()
    };
    for p in r.points.iter().filter(|p| !p.feasible) {
        brief.paragraphs.push(format!(
            "Infeasible (not simulated): {}: {}",
            p.label,
            p.reason.as_deref().unwrap_or("")
        ));
    }
    let mut sections = vec![brief, sweep_section(&sw)];
    sections.push(Section {
        heading: "Provenance".into(),
        paragraphs: vec![format!(
            "Trade study by tether-risk {}, {} histories per design, seed {}; report rendered by tether-risk {} from the files in this folder (`tether-risk report DIR` renders it again).",
            r.version,
            r.histories,
            r.seed,
            crate::VERSION
        )],
        ..Default::default()
    });
    if !notes.is_empty() {
        sections.push(Section {
            heading: "Sections left out".into(),
            paragraphs: notes.clone(),
            ..Default::default()
        });
    }
    let doc = ReportDoc {
        title: format!("Trade study of tether \"{}\"", r.scenario),
        subtitle: format!(
            "Scenario hash {}, seed {}, {} histories per design, tether-risk {}",
            r.scenario_hash, r.seed, r.histories, r.version
        ),
        caution: crate::CAUTION.to_string(),
        sections,
    };
    let html = dir.join("report.html");
    write_atomic(&html, render_report(&doc).as_bytes()).map_err(|source| ReportError::Write {
        path: html.clone(),
        source,
    })?;
    Ok(ReportWritten {
        html: html.clone(),
        files: vec![html],
        notes,
    })
}

fn csv_file(name: &str, t: &Table) -> OutputFile {
    OutputFile {
        path: PathBuf::from(name),
        bytes: t.to_csv().into_bytes(),
    }
}

/// Render every output of a run folder in memory; `report.html` comes last.
///
/// # Errors
/// [`ReportError::Figure`] if a chart cannot be drawn.
pub fn render(folder: &RunFolder) -> Result<Vec<OutputFile>, ReportError> {
    let s = &folder.summary;
    let markov = folder.markov_points();
    let years = year_table(s);
    let bands = band_table(s);
    let causes = cause_table(s);
    let comparison = markov.as_deref().map(|m| comparison_table(s, m));
    let missing =
        "No Markov estimate (estimate.json) in this folder; see the notes in report.html.";
    let mut files = vec![
        OutputFile {
            path: "failure_tables.md".into(),
            bytes: failure_markdown(s, comparison.as_ref(), Some(missing)).into_bytes(),
        },
        csv_file("failure_by_year.csv", &years.csv),
        csv_file("failure_by_band.csv", &bands.csv),
        csv_file("failure_by_cause.csv", &causes.csv),
    ];
    if let Some(c) = &comparison {
        files.push(csv_file("markov_vs_monte_carlo.csv", &c.csv));
    }
    if let Some(e) = &s.policy_effect {
        files.push(csv_file(
            "policy_effect.csv",
            &super::policy::policy_table(e),
        ));
    }
    let figures = run_figures(s, markov.as_deref())?;
    for f in &figures {
        files.push(OutputFile {
            path: Path::new("plots").join(format!("{}.png", f.stem)),
            bytes: f.figure.png.clone(),
        });
        files.push(OutputFile {
            path: Path::new("plots").join(format!("{}.svg", f.stem)),
            bytes: f.figure.svg.clone().into_bytes(),
        });
    }
    let doc = report_doc(
        folder,
        &figures,
        &DocTables {
            years: &years,
            bands: &bands,
            causes: &causes,
            comparison: comparison.as_ref(),
        },
    );
    files.push(OutputFile {
        path: "report.html".into(),
        bytes: render_report(&doc).into_bytes(),
    });
    Ok(files)
}

fn report_doc(folder: &RunFolder, figures: &[NamedFigure], t: &DocTables<'_>) -> ReportDoc {
    let s = &folder.summary;
    let mut sections = vec![
        key_section(folder),
        design_section(folder),
        super::statement::model_section(folder),
        survival_section(folder, figures, t),
        where_section(figures, t, folder.summary.tallies_withheld.as_deref()),
    ];
    sections.extend(super::statement::cuts_section(s));
    sections.push(repair_section(folder, figures));
    if let Some(e) = &s.policy_effect {
        sections.push(super::policy::policy_section(e));
    }
    if let Some(sw) = &folder.sweep {
        sections.push(sweep_section(sw));
    }
    if let Some((r, svg)) = &folder.sensitivity {
        sections.push(sensitivity_section(r, svg.as_deref()));
    }
    sections.push(provenance_section(folder));
    if !folder.notes.is_empty() {
        sections.push(Section {
            heading: "Sections left out".into(),
            paragraphs: folder.notes.clone(),
            ..Default::default()
        });
    }
    ReportDoc {
        title: format!("Severance risk of tether \"{}\"", s.scenario),
        subtitle: format!(
            "Scenario hash {}, seed {}, {} histories, {} mission years, tether-risk {}",
            s.scenario_hash,
            s.seed,
            s.histories,
            year_label(s.mission_years),
            s.version
        ),
        caution: crate::CAUTION.to_string(),
        sections,
    }
}

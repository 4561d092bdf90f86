//! The decision report of a run folder: failure tables, charts and `report.html`, rendered
//! from the saved files alone (no simulation).
//!
//! Inputs in the run folder: `summary.json` (required), and, when present, `manifest.json`,
//! `scenario.json`, `design.json` (design summary), `estimate.json` (Markov estimate) and
//! `sweep/sweep.json` with `sweep/heatmap.svg` and `sweep/pareto.svg` (a trade study). The
//! optional files are read defensively as JSON values or through small views of the fields
//! used here, so a missing or stale file leaves its section out with a note instead of failing.
//!
//! Outputs: `failure_tables.md`, `failure_by_year.csv`, `failure_by_band.csv`,
//! `failure_by_cause.csv`, `markov_vs_monte_carlo.csv` (with an estimate), `plots/*.png` and
//! `plots/*.svg`, and `report.html`. Everything is rendered in memory first; only then is each
//! file written atomically, `report.html` last, so a failed render leaves the folder as it was.

use std::path::{Path, PathBuf};

use serde::Deserialize;
use serde_json::Value;

use super::failure::{
    band_table, cause_table, comparison_table, failure_markdown, interval_cell, year_label,
    year_table, DualTable, MarkovPoint,
};
use super::figures::{run_figures, FigureError, NamedFigure};
use super::html::{render_report, KeyNumber, ReportDoc, ReportFigure, ReportTable, Section};
use super::run::stock_table;
use super::table::{sig, Table};
use super::write_atomic;
use crate::engine::RunSummary;

/// Why a report could not be made.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// The folder has no `summary.json`: it is not a run folder (an input error).
    #[error("{dir} holds no summary.json, so it is not a run folder: give the folder `tether-risk simulate --out` or `tether-risk demo` wrote")]
    NotARunFolder {
        /// The folder given.
        dir: PathBuf,
    },
    /// A required file could not be read or parsed (an input error).
    #[error("{path} is not a readable run summary: {reason}")]
    BadSummary {
        /// The file.
        path: PathBuf,
        /// What was wrong.
        reason: String,
    },
    /// The folder's files contradict each other or its manifest (an input error).
    #[error("{dir} is not a consistent run folder: {}; rerun the command that wrote it (with --force) or restore the files", problems.join("; "))]
    Inconsistent {
        /// The folder.
        dir: PathBuf,
        /// What disagrees.
        problems: Vec<String>,
    },
    /// Another process is writing the folder (an input error).
    #[error(transparent)]
    Locked(#[from] super::folder::LockError),
    /// A chart could not be drawn.
    #[error(transparent)]
    Figure(#[from] FigureError),
    /// An output file could not be written.
    #[error("cannot write {path}: {source}")]
    Write {
        /// The file.
        path: PathBuf,
        /// The I/O error.
        #[source]
        source: std::io::Error,
    },
}

impl ReportError {
    /// True for errors caused by the input folder (exit code 2), false for run-time failures.
    pub fn is_input_error(&self) -> bool {
        matches!(
            self,
            ReportError::NotARunFolder { .. }
                | ReportError::BadSummary { .. }
                | ReportError::Inconsistent { .. }
                | ReportError::Locked(_)
        )
    }
}

/// The fields of `estimate.json` the report uses (a view of
/// [`crate::report::estimate::EstimateSummary`]).
#[derive(Clone, Debug, Deserialize, PartialEq)]
pub struct EstimateView {
    /// Scenario hash the estimate was made for.
    pub scenario_hash: String,
    /// `physical` or `validation`.
    pub mode: String,
    /// System loss probability by mission end.
    pub loss_probability: f64,
    /// Loss probability at each whole year and at mission end.
    pub loss_probability_by_year: Vec<EstimateYearView>,
    /// The assumptions behind the number.
    #[serde(default)]
    pub assumptions: Vec<String>,
    /// The damage-memory estimate (absent in older files and where it does not apply).
    #[serde(default)]
    pub damage_memory: Option<DamageMemoryView>,
}

/// The damage-memory part of estimate.json.
#[derive(Clone, Debug, Deserialize, PartialEq)]
pub struct DamageMemoryView {
    /// Exact (no repair) or an approximation (with repair).
    pub exact: bool,
    /// System loss probability by mission end.
    pub loss_probability: f64,
    /// Which mechanism dominates (`latent damage` or `direct cuts`).
    #[serde(default)]
    pub dominant_mechanism: String,
}

/// One year of the Markov estimate.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq)]
pub struct EstimateYearView {
    /// Mission time, years.
    pub year: f64,
    /// System loss probability by then.
    pub loss_probability: f64,
}

/// An optional trade study found in `sweep/`.
#[derive(Clone, Debug)]
pub struct SweepInput {
    /// `sweep/sweep.json` as read.
    pub value: Value,
    /// `sweep/heatmap.svg`, if present.
    pub heatmap_svg: Option<String>,
    /// `sweep/pareto.svg`, if present.
    pub pareto_svg: Option<String>,
}

/// Everything read from a run folder.
#[derive(Clone, Debug)]
pub struct RunFolder {
    /// The folder.
    pub dir: PathBuf,
    /// The run summary.
    pub summary: RunSummary,
    /// `manifest.json`.
    pub manifest: Option<Value>,
    /// `scenario.json`.
    pub scenario: Option<Value>,
    /// `design.json`.
    pub design: Option<Value>,
    /// `estimate.json`, when present and made for the same scenario.
    pub estimate: Option<EstimateView>,
    /// The trade study, if any.
    pub sweep: Option<SweepInput>,
    /// `sensitivity/sensitivity.json` with `sensitivity/sensitivity.svg`, if present.
    pub sensitivity: Option<(crate::sweep::sensitivity::SensitivityResult, Option<String>)>,
    /// What was missing or left out, in words.
    pub notes: Vec<String>,
    /// Why the folder may be incomplete (no manifest listing its files), shown as a warning at
    /// the top of the report; `None` when the manifest vouches for every file.
    pub incomplete: Option<String>,
}

/// Read a run-folder file with the run-file size cap.
fn read_capped(path: &Path) -> std::io::Result<String> {
    crate::scenario::read_text_capped(
        path,
        crate::scenario::MAX_RUN_FILE_BYTES,
        "a run-folder file",
    )
}

/// How [`RunFolder::load_with`] treats the manifest.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Completeness {
    /// The folder is finished: check the files its manifest lists (a missing manifest makes
    /// the folder incomplete; listed files that are missing or changed are an error).
    Check,
    /// The caller is writing the run now and writes the manifest after the report.
    Writing,
}

fn read_json(path: &Path, notes: &mut Vec<String>, what: &str) -> Option<Value> {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    match read_capped(path) {
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            notes.push(format!("{name} not found: {what} left out."));
            None
        }
        Err(e) => {
            notes.push(format!("{name} could not be read ({e}): {what} left out."));
            None
        }
        Ok(text) => match serde_json::from_str(&text) {
            Ok(v) => Some(v),
            Err(e) => {
                notes.push(format!("{name} is not valid JSON ({e}): {what} left out."));
                None
            }
        },
    }
}

impl RunFolder {
    /// Read a run folder. Only `summary.json` is required.
    ///
    /// # Errors
    /// [`ReportError::NotARunFolder`] without `summary.json`; [`ReportError::BadSummary`] if it
    /// cannot be read as a run summary.
    pub fn load(dir: &Path) -> Result<Self, ReportError> {
        Self::load_with(dir, Completeness::Check)
    }

    /// [`RunFolder::load`], saying whether the manifest is to be checked.
    ///
    /// # Errors
    /// As [`RunFolder::load`], and [`ReportError::Inconsistent`] when the manifest's files or
    /// the scenario hashes of the folder's files disagree.
    pub fn load_with(dir: &Path, completeness: Completeness) -> Result<Self, ReportError> {
        let path = dir.join("summary.json");
        let text = read_main_file(dir, &path)?;
        let summary: RunSummary =
            serde_json::from_str(&text).map_err(|e| ReportError::BadSummary {
                path: path.clone(),
                reason: e.to_string(),
            })?;
        if summary.histories == 0 {
            return Err(ReportError::BadSummary {
                path,
                reason: "it records 0 histories; there is nothing to report".into(),
            });
        }
        super::folder::validate_summary(&summary).map_err(|reason| ReportError::BadSummary {
            path: path.clone(),
            reason: format!("it is not consistent: {reason}"),
        })?;
        let mut notes = Vec::new();
        let manifest = read_json(&dir.join("manifest.json"), &mut notes, "the manifest");
        let mut problems = Vec::new();
        let incomplete = match (completeness, &manifest) {
            (Completeness::Writing, _) => None,
            (Completeness::Check, None) => Some(
                "this folder has no readable manifest.json, which a run writes last: the run that wrote it may have been killed before it finished, so its files may not belong together".to_string(),
            ),
            (Completeness::Check, Some(m)) => match m.get("files") {
                None => Some(
                    "manifest.json does not list the run's files (written by an older version), so the folder's completeness cannot be checked".to_string(),
                ),
                Some(f) => match serde_json::from_value::<Vec<super::folder::FileEntry>>(f.clone())
                {
                    Ok(files) => {
                        problems.extend(super::folder::check_listed_files(dir, &files));
                        None
                    }
                    Err(e) => {
                        problems.push(format!("manifest.json: files is not a file list ({e})"));
                        None
                    }
                },
            },
        };
        if let Some(h) = manifest
            .as_ref()
            .and_then(|m| m.get("scenario_hash"))
            .and_then(Value::as_str)
        {
            if h != summary.scenario_hash {
                problems.push(format!(
                    "manifest.json is for scenario hash {h}, summary.json for {}",
                    summary.scenario_hash
                ));
            }
        }
        if let Ok(text) = read_capped(&dir.join("scenario.json")) {
            if let Ok(spec) = crate::scenario::parse_spec(&text) {
                let table = read_capped(&dir.join("flux_table.json")).ok();
                let h = format!(
                    "{:016x}",
                    crate::scenario::scenario_hash(&spec, table.as_deref())
                );
                if h != summary.scenario_hash {
                    problems.push(format!(
                        "scenario.json has hash {h}, but summary.json was run for {}",
                        summary.scenario_hash
                    ));
                }
            }
        }
        let scenario = read_json(
            &dir.join("scenario.json"),
            &mut notes,
            "the scenario description",
        );
        let design = read_json(
            &dir.join("design.json"),
            &mut notes,
            "the design key numbers (write it with `tether-risk check FILE --format json > design.json`)",
        );
        let estimate = read_json(
            &dir.join("estimate.json"),
            &mut notes,
            "the Markov estimate and its comparison with the Monte Carlo (write it with `tether-risk estimate FILE --format json > estimate.json`)",
        )
        .and_then(|v| match serde_json::from_value::<EstimateView>(v) {
            Ok(e) if e.scenario_hash != summary.scenario_hash => {
                notes.push(format!(
                    "estimate.json was made for scenario hash {}, not this run's {}: the Markov comparison is left out.",
                    e.scenario_hash, summary.scenario_hash
                ));
                None
            }
            Ok(e) => Some(e),
            Err(e) => {
                notes.push(format!(
                    "estimate.json is not a Markov estimate ({e}): the Markov comparison is left out."
                ));
                None
            }
        });
        let design = design.filter(|d| {
            let hash = d.get("scenario_hash").and_then(Value::as_str);
            if hash.is_some_and(|h| h != summary.scenario_hash) {
                notes.push("design.json was made for another scenario: the design key numbers are left out.".into());
                false
            } else {
                true
            }
        });
        let sweep_dir = dir.join("sweep");
        let sweep = if sweep_dir.join("sweep.json").exists() {
            read_json(&sweep_dir.join("sweep.json"), &mut notes, "the trade study").map(|value| {
                SweepInput {
                    value,
                    heatmap_svg: read_capped(&sweep_dir.join("heatmap.svg")).ok(),
                    pareto_svg: read_capped(&sweep_dir.join("pareto.svg")).ok(),
                }
            })
        } else {
            notes.push("No trade study (sweep/sweep.json) in this folder: the trade-study comparison is left out.".into());
            None
        };
        let sens_dir = dir.join("sensitivity");
        let sensitivity = if sens_dir.join("sensitivity.json").exists() {
            match read_capped(&sens_dir.join("sensitivity.json"))
                .map_err(|e| e.to_string())
                .and_then(|t| serde_json::from_str(&t).map_err(|e| e.to_string()))
            {
                Ok(r) => Some((r, read_capped(&sens_dir.join("sensitivity.svg")).ok())),
                Err(e) => {
                    notes.push(format!("sensitivity/sensitivity.json is not readable ({e}): the sensitivity section is left out."));
                    None
                }
            }
        } else {
            notes.push("No sensitivity study (sensitivity/sensitivity.json) in this folder: the section \"Which assumption decides the answer?\" is left out; make it with `tether-risk sensitivity FILE --out DIR/sensitivity`.".into());
            None
        };
        if let Some(h) = sweep
            .as_ref()
            .and_then(|s| s.value.get("scenario_hash"))
            .and_then(Value::as_str)
        {
            if h != summary.scenario_hash {
                problems.push(format!(
                    "sweep/sweep.json is a trade study of scenario hash {h}, not of this run's scenario {}; move it out of the folder or rerun the sweep from this scenario",
                    summary.scenario_hash
                ));
            }
        }
        if !problems.is_empty() {
            return Err(ReportError::Inconsistent {
                dir: dir.to_path_buf(),
                problems,
            });
        }
        Ok(RunFolder {
            sensitivity,
            dir: dir.to_path_buf(),
            summary,
            manifest,
            scenario,
            design,
            estimate,
            sweep,
            notes,
            incomplete,
        })
    }

    fn markov_points(&self) -> Option<Vec<MarkovPoint>> {
        self.estimate.as_ref().map(|e| {
            e.loss_probability_by_year
                .iter()
                .filter(|p| p.year.is_finite() && p.loss_probability.is_finite())
                .map(|p| MarkovPoint {
                    year: p.year,
                    loss_probability: p.loss_probability.clamp(0.0, 1.0),
                })
                .collect()
        })
    }
}

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

/// Read the file that makes `dir` a folder of its kind (`summary.json`, `sweep.json`), size
/// capped: absent means not such a folder, unreadable means a bad summary.
fn read_main_file(dir: &Path, path: &Path) -> Result<String, ReportError> {
    read_capped(path).map_err(|e| {
        if e.kind() == std::io::ErrorKind::NotFound {
            ReportError::NotARunFolder {
                dir: dir.to_path_buf(),
            }
        } else {
            ReportError::BadSummary {
                path: path.to_path_buf(),
                reason: e.to_string(),
            }
        }
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
    let value: Value = serde_json::from_str(&text).unwrap_or(Value::Null);
    let sw = SweepInput {
        value,
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

struct DocTables<'a> {
    years: &'a DualTable,
    bands: &'a DualTable,
    causes: &'a DualTable,
    comparison: Option<&'a DualTable>,
}

fn report_table(caption: &str, t: &DualTable) -> ReportTable {
    ReportTable::from_table(format!("{caption}. {}", t.note), &t.markdown)
}

fn figure(figures: &[NamedFigure], stem_prefix: &str) -> Vec<ReportFigure> {
    figures
        .iter()
        .filter(|f| f.stem.starts_with(stem_prefix))
        .map(|f| ReportFigure {
            caption: format!("{} (plots/{}.png, .svg)", f.caption, f.stem),
            svg: f.figure.svg.clone(),
        })
        .collect()
}

fn pct(x: f64) -> String {
    if x > 0.0 && x < 0.001 {
        format!("{} %", sig(100.0 * x, 2))
    } else {
        format!("{:.1} %", 100.0 * x)
    }
}

fn climber_count(scenario: Option<&Value>) -> Option<u64> {
    let st = scenario?.get("repair")?.get("stations")?.as_array()?;
    Some(
        st.iter()
            .filter_map(|s| s.get("climbers").and_then(Value::as_u64))
            .sum(),
    )
}

/// The band where most losses happened (or most cuts, when there is no loss).
fn worst_band(s: &RunSummary) -> (String, String) {
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

fn key_section(folder: &RunFolder) -> Section {
    let s = &folder.summary;
    let lp = &s.loss_probability;
    let conf = format!("{:.0} %", 100.0 * lp.confidence);
    let years = year_label(s.mission_years);
    let mut cards = Vec::new();
    let basis = match &s.rare_event {
        Some(r) => format!(
            "weighted rare-event estimate, {} histories, {} losses under the biased measure, SE {}, effective sample size {}, largest weight {:.1} %",
            s.histories,
            r.losses_observed,
            sig(lp.standard_error, 2),
            sig(lp.effective_sample_size, 3),
            100.0 * lp.largest_weight_share
        ),
        None => format!(
            "{} losses in {} histories, Clopper–Pearson",
            s.tally.losses, s.histories
        ),
    };
    cards.push(KeyNumber {
        label: format!("Probability of losing the tether within {years} years"),
        value: if lp.resolved {
            sig(lp.estimate, 2)
        } else {
            format!("{} (not resolved)", sig(lp.estimate, 2))
        },
        note: match lp.interval() {
            Some((lo, hi)) => format!("{conf} interval {} – {}; {basis}", sig(lo, 2), sig(hi, 2)),
            None => format!(
                "no interval: {}; {basis}",
                lp.unresolved_reason.as_deref().unwrap_or("not resolved")
            ),
        },
    });
    let (band, note) = worst_band(s);
    cards.push(KeyNumber {
        label: "Where it is severed".into(),
        value: band,
        note: format!("altitude above the lunar surface; {note}"),
    });
    if let (Some(r), Some(sp)) = (&s.repair, &s.spares) {
        let stock = r
            .recommended_initial_stock
            .iter()
            .map(|x| format!("{}: {}", x.station, x.segments))
            .collect::<Vec<_>>()
            .join(" · ");
        let interval = sp
            .demand_quantiles
            .first()
            .map_or(String::new(), |d| sig(d.interval_days, 4));
        cards.push(KeyNumber {
            label: "Recommended initial spare stock (segments)".into(),
            value: stock,
            note: format!(
                "per station; stock-out within one {interval}-day resupply interval below {}",
                pct(r.stockout_target)
            ),
        });
        let climbers = climber_count(folder.scenario.as_ref())
            .map_or(String::new(), |c| format!("{c} climbers; "));
        cards.push(KeyNumber {
            label: "Repair fleet utilisation".into(),
            value: pct(r.climber_utilisation),
            note: format!(
                "{climbers}{} splices per year; waits per segment: {} h for a climber, {} h for stock",
                sig(r.splices_per_year, 3),
                sig(r.mean_wait_for_climber_hours, 3),
                sig(r.mean_wait_for_stock_hours, 3)
            ),
        });
        let t = &r.time_to_splice_hours;
        cards.push(KeyNumber {
            label: "Time from cut to splice".into(),
            value: format!("{} h median", sig(t.p50, 3)),
            note: format!(
                "P90 {} h, P99 {} h, mean {} h; per segment sent: travel {} h{}, splicing {} h",
                sig(t.p90, 3),
                sig(t.p99, 3),
                sig(t.mean, 3),
                sig(r.mean_trip_travel_hours, 3),
                if r.mean_wait_for_light_hours > 0.0 {
                    format!(
                        ", waiting for light {} h",
                        sig(r.mean_wait_for_light_hours, 3)
                    )
                } else {
                    String::new()
                },
                sig(r.mean_trip_splice_hours, 3)
            ),
        });
    }
    if let Some(e) = &folder.estimate {
        // A ratio of 0 from a run that saw no loss says nothing: give the bound instead.
        let ratio = if lp.estimate == 0.0 {
            format!(
                "no loss seen in the Monte Carlo (upper bound {}), so no ratio",
                lp.ci_high.map_or("not resolved".into(), |h| sig(h, 2))
            )
        } else if e.loss_probability > 0.0 {
            format!(
                "Monte Carlo / Markov = {}",
                sig(lp.estimate / e.loss_probability, 2)
            )
        } else {
            "Markov estimate is 0".into()
        };
        if let Some(d) = e
            .damage_memory
            .as_ref()
            .filter(|d| d.loss_probability.is_finite() && (0.0..=1.0).contains(&d.loss_probability))
        {
            let agree = match (lp.ci_low, lp.ci_high) {
                (Some(lo), Some(hi)) if lp.estimate > 0.0 => {
                    if (lo..=hi).contains(&d.loss_probability) {
                        "inside the Monte Carlo interval".to_string()
                    } else {
                        format!(
                            "outside the Monte Carlo interval (Monte Carlo / estimate = {})",
                            sig(lp.estimate / d.loss_probability.max(f64::MIN_POSITIVE), 2)
                        )
                    }
                }
                _ => "no resolved Monte Carlo interval to compare with".into(),
            };
            cards.push(KeyNumber {
                label: format!("Fast damage-memory estimate, {years} years"),
                value: sig(d.loss_probability, 2),
                note: format!(
                    "{agree}; remembers each segment's worst hole ({}); dominant mechanism: {}",
                    if d.exact {
                        "exact without repair"
                    } else {
                        "approximation with repair"
                    },
                    d.dominant_mechanism
                ),
            });
        }
        cards.push(KeyNumber {
            label: format!("Fast Markov estimate, {years} years"),
            value: sig(e.loss_probability, 2),
            note: format!("{ratio}; ignores sub-critical damage memory and fleet contention"),
        });
    }
    let mut paragraphs = Vec::new();
    if let Some(w) = &folder.incomplete {
        paragraphs.push(format!(
            "WARNING: incomplete run folder: {w}. Check the numbers against the run's own output before relying on them."
        ));
    }
    paragraphs.push(answer_sentence(folder));
    if s.status != crate::engine::RunStatus::Complete {
        paragraphs.push(format!(
            "Run status: {:?}. {} of {} requested histories were run; the numbers rest on those.",
            s.status, s.histories, s.histories_requested
        ));
    }
    if s.shard.is_some() {
        paragraphs.push(
            "This folder holds one shard of a run: a partial result. Merge the shards first."
                .into(),
        );
    }
    Section {
        heading: "The answer in brief".into(),
        paragraphs,
        cards,
        ..Default::default()
    }
}

fn answer_sentence(folder: &RunFolder) -> String {
    let s = &folder.summary;
    let lp = &s.loss_probability;
    let c = &s.losses_by_cause;
    let mut o = match lp.interval() {
        Some((lo, hi)) => format!(
            "Over the {}-year mission the tether is severed with probability {} ({:.0} % interval {} to {}{}). ",
            year_label(s.mission_years),
            sig(lp.estimate, 2),
            100.0 * lp.confidence,
            sig(lo, 2),
            sig(hi, 2),
            if lp.is_weighted() {
                ", weighted estimate"
            } else {
                ""
            }
        ),
        None => format!(
            "Over the {}-year mission the weighted estimate of the probability that the tether is severed is {} (standard error {}), but it is NOT RESOLVED: {}. No interval can be given; run more histories or a better-suited estimator before quoting it. ",
            year_label(s.mission_years),
            sig(lp.estimate, 2),
            sig(lp.standard_error, 2),
            lp.unresolved_reason.as_deref().unwrap_or("too few effective losses")
        ),
    };
    let total = c.direct_cut + c.cascade + c.stockout_delay + c.climber_load;
    if total > 0 {
        o.push_str(&format!(
            "Of the {total} losses seen, {} were cascades (survivors overloaded after a cut), {} direct cuts, {} losses while waiting for spare stock and {} caused by a climber's weight arriving on a weakened bay. ",
            c.cascade, c.direct_cut, c.stockout_delay, c.climber_load
        ));
    } else {
        o.push_str("No loss was seen: the upper bound is what these histories can rule out. ");
    }
    if let Some(d) = folder
        .estimate
        .as_ref()
        .and_then(|e| e.damage_memory.as_ref())
    {
        o.push_str(&format!(
            "The fast damage-memory estimate, which remembers each segment's worst hole ({}), gives {}; dominant mechanism: {}. ",
            if d.exact { "exact without repair" } else { "an approximation with repair" },
            sig(d.loss_probability, 2),
            d.dominant_mechanism
        ));
    }
    if let Some(e) = &folder.estimate {
        if e.loss_probability > 0.0 && lp.estimate > 0.0 {
            let r = lp.estimate / e.loss_probability;
            if r > 10.0 {
                o.push_str(&format!(
                    "The fast Markov estimate ({}) is {} times smaller because it forgets sub-critical holes and ignores fleet contention; here those effects dominate the risk. ",
                    sig(e.loss_probability, 2),
                    sig(r, 2)
                ));
            } else {
                o.push_str(&format!(
                    "The fast Markov estimate ({}) agrees within a factor {}. ",
                    sig(e.loss_probability, 2),
                    sig(r.max(1.0 / r), 2)
                ));
            }
        }
    }
    if let Some(r) = &s.repair {
        let stock = r
            .recommended_initial_stock
            .iter()
            .map(|x| {
                format!(
                    "{} segment{} at {}",
                    x.segments,
                    if x.segments == 1 { "" } else { "s" },
                    x.station
                )
            })
            .collect::<Vec<_>>()
            .join(" and ");
        o.push_str(&format!(
            "The repair fleet is busy {} of the time; a cut is spliced within {} h in 90 % of cases; an initial stock of {stock} keeps the stock-out chance per resupply interval below {}.",
            pct(r.climber_utilisation),
            sig(r.time_to_splice_hours.p90, 3),
            pct(r.stockout_target)
        ));
    } else {
        o.push_str("This scenario has no repair: cut segments stay cut.");
    }
    o
}

fn design_section(folder: &RunFolder) -> Section {
    let s = &folder.summary;
    let mut paragraphs = vec![format!(
        "Scenario \"{}\" (hash {}), {} mission years.",
        s.scenario,
        s.scenario_hash,
        year_label(s.mission_years)
    )];
    if let Some(d) = folder
        .scenario
        .as_ref()
        .and_then(|v| v.get("description"))
        .and_then(Value::as_str)
    {
        paragraphs.push(d.to_string());
    }
    let mut tables = Vec::new();
    if let Some(d) = &folder.design {
        let mut t = Table::new(["quantity", "value", "unit"]);
        let mut row = |q: &str, key: &str, unit: &str, digits: usize| {
            let value = match d.get(key) {
                Some(Value::Number(n)) if n.is_u64() => n.to_string(),
                Some(v) => match v.as_f64() {
                    Some(x) => sig(x, digits),
                    None => return,
                },
                None => return,
            };
            t.push([q.to_string(), value, unit.to_string()]);
        };
        row("tether length (anchor to top)", "tether_length_km", "km", 6);
        row(
            "Lagrange point altitude above surface",
            "lagrange_altitude_km",
            "km",
            6,
        );
        row("ribbons", "ribbon_count", "", 3);
        row("cross-link spacing", "cross_link_spacing_km", "km", 4);
        row("bays", "bay_count", "", 6);
        row("allowable stress", "allowable_stress_gpa", "GPa", 4);
        row(
            "tension at anchor (with traffic)",
            "anchor_tension_n",
            "N",
            5,
        );
        row("largest tension", "max_tension_n", "N", 5);
        row("smallest intact margin", "min_margin", "-", 4);
        row("ribbon mass", "ribbon_mass_kg", "kg", 4);
        row("cross-link mass", "cross_links_mass_kg", "kg", 4);
        row("counterweight", "counterweight_kg", "kg", 4);
        row(
            "damaging strikes, whole tether",
            "damaging_strike_rate_per_year",
            "per year",
            4,
        );
        row(
            "heaviest spare segment",
            "heaviest_spare_segment_kg",
            "kg",
            4,
        );
        row("climber payload", "climber_payload_kg", "kg", 4);
        let mut t2 = t.clone();
        if let Some(m) = d.get("material").and_then(Value::as_str) {
            t2.rows.insert(
                3.min(t2.rows.len()),
                vec!["ribbon material".into(), m.into(), String::new()],
            );
        }
        if let Some(w) = d.get("ribbon_width_range_mm").and_then(Value::as_array) {
            let w: Vec<String> = w
                .iter()
                .filter_map(Value::as_f64)
                .map(|x| sig(x, 4))
                .collect();
            t2.push([
                "ribbon width (anchor / widest)".to_string(),
                w.join(" / "),
                "mm".to_string(),
            ]);
        }
        tables.push(ReportTable::from_table(
            "Design key numbers (from design.json)",
            &t2,
        ));
    } else {
        paragraphs
            .push("No design.json in this folder: the design key numbers are left out.".into());
    }
    if let Some(st) = folder
        .scenario
        .as_ref()
        .and_then(|v| v.get("repair"))
        .and_then(|r| r.get("stations"))
        .and_then(Value::as_array)
    {
        let mut t = Table::new([
            "station",
            "altitude (km)",
            "climbers",
            "initial stock (segments)",
        ]);
        for x in st {
            let f = |k: &str| {
                x.get(k).map_or(String::new(), |v| match v {
                    Value::Number(n) if n.is_u64() => n.to_string(),
                    Value::Number(n) => n.as_f64().map_or(n.to_string(), |f| sig(f, 6)),
                    Value::String(s) => s.clone(),
                    other => other.to_string(),
                })
            };
            t.push([
                f("name"),
                f("altitude_km"),
                f("climbers"),
                f("initial_stock_segments"),
            ]);
        }
        tables.push(ReportTable::from_table(
            "Repair stations (from scenario.json)",
            &t,
        ));
    }
    Section {
        heading: "Scenario and design".into(),
        paragraphs,
        tables,
        ..Default::default()
    }
}

fn survival_section(folder: &RunFolder, figures: &[NamedFigure], t: &DocTables<'_>) -> Section {
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

fn where_section(figures: &[NamedFigure], t: &DocTables<'_>) -> Section {
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

fn repair_section(folder: &RunFolder, figures: &[NamedFigure]) -> Section {
    let s = &folder.summary;
    let (Some(r), Some(sp)) = (&s.repair, &s.spares) else {
        return Section {
            heading: "What stock and fleet keep it alive?".into(),
            paragraphs: vec!["This scenario has no repair logistics.".into()],
            ..Default::default()
        };
    };
    let q = &r.queue;
    let mut figs = figure(figures, "spare_demand_");
    figs.extend(figure(figures, "time_to_splice"));
    let mut paragraphs = vec![fleet_paragraph(folder, r)];
    paragraphs.insert(
        0,
        if q.mean_wait_hours > 0.0 {
            format!(
                "Climbers are busy {} of the available time; {} segments are spliced per year. On average {} detected segments wait for dispatch; {} (Little's law: arrival rate {} per hour x mean wait = {}).",
                pct(r.climber_utilisation),
                sig(r.splices_per_year, 3),
                sig(q.mean_waiting_segments, 3),
                super::run::wait_sentence(r),
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
fn fleet_paragraph(folder: &RunFolder, r: &crate::engine::RepairSummary) -> String {
    let p90 = r.time_to_splice_hours.p90;
    let target = folder
        .scenario
        .as_ref()
        .and_then(|v| v.get("repair")?.get("splice_p90_target_hours")?.as_f64());
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
    let recs: Vec<Value> = folder
        .sweep
        .as_ref()
        .and_then(|sw| sw.value.get("fleet_recommendations")?.as_array().cloned())
        .unwrap_or_default();
    if recs.is_empty() {
        o.push_str(" To size the fleet, sweep a station's climbers (`tether-risk sweep FILE --vary 'repair.stations[0].climbers=1,2,3'`): the sweep names the smallest fleet whose loss probability is within 10 % of the largest swept and, with a requirement, the smallest that meets it.");
    } else {
        for f in recs {
            let text = |k: &str| f.get(k).and_then(Value::as_str).unwrap_or("").to_string();
            let station = text("station");
            let at = match text("other_values") {
                v if v.is_empty() => String::new(),
                v => format!(" at {v}"),
            };
            if let Some(c) = f.get("recommended_climbers").and_then(Value::as_u64) {
                o.push_str(&format!(
                    " Trade study{at}: {c} climber(s) at {station} ({}).",
                    text("basis")
                ));
            }
            if let Some(c) = f
                .get("meets_splice_target_climbers")
                .and_then(Value::as_u64)
            {
                o.push_str(&format!(
                    " For the time-to-splice requirement{at}: {c} climber(s) at {station}."
                ));
            }
        }
    }
    o
}

fn sweep_cell(v: &Value) -> String {
    match v {
        Value::Null => String::new(),
        Value::Bool(b) => b.to_string(),
        Value::Number(n) => n.as_f64().map_or(n.to_string(), |f| sig(f, 4)),
        Value::String(s) => s.clone(),
        Value::Object(o) => match (
            o.get("estimate").and_then(Value::as_f64),
            o.get("ci_low").and_then(Value::as_f64),
            o.get("ci_high").and_then(Value::as_f64),
        ) {
            (Some(e), Some(l), Some(h)) => interval_cell(e, l, h),
            _ => short_json(v),
        },
        Value::Array(_) => short_json(v),
    }
}

fn short_json(v: &Value) -> String {
    let s = v.to_string();
    if s.chars().count() > 60 {
        s.chars().take(57).collect::<String>() + "..."
    } else {
        s
    }
}

/// The rows of a trade study: the top-level array, or the first array of objects in it
/// (preferring the usual names).
fn sweep_rows(v: &Value) -> Option<&Vec<Value>> {
    let is_rows = |a: &Vec<Value>| !a.is_empty() && a.iter().all(Value::is_object);
    if let Some(a) = v.as_array() {
        return is_rows(a).then_some(a);
    }
    let o = v.as_object()?;
    for key in ["rows", "points", "results", "cases", "runs"] {
        if let Some(a) = o.get(key).and_then(Value::as_array) {
            if is_rows(a) {
                return Some(a);
            }
        }
    }
    o.values().filter_map(Value::as_array).find(|a| is_rows(a))
}

fn sensitivity_section(
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

/// Largest number of trade-study rows shown in the report.
const SWEEP_ROWS_SHOWN: usize = 200;

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

fn sweep_section(sw: &SweepInput) -> Section {
    // A sweep written by this version renders with the sweep's own table and front; anything
    // else falls back to a generic reading of its rows.
    if let Some(r) = serde_json::from_value::<crate::sweep::SweepResult>(sw.value.clone())
        .ok()
        .filter(|r| super::folder::validate_sweep(r).is_ok())
    {
        let mut paragraphs = vec![format!(
            "{} designs, at most {} histories each, seed {}.",
            r.points.len(),
            r.histories,
            r.seed
        )];
        paragraphs.push(
            "Designs on the mass against loss-probability front (only designs with a known loss probability; no other design is lighter and safer):".into(),
        );
        paragraphs.extend(crate::report::sweep::recommendation(&r));
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
        return Section {
            heading: varied_heading(&r.axes.iter().map(|a| a.path.as_str()).collect::<Vec<_>>()),
            paragraphs,
            cards: Vec::new(),
            figures,
            tables: vec![ReportTable::from_table(
                "Trade study: one row per design (sweep/sweep.md holds the same table)",
                &crate::report::sweep::sweep_table(&r, true),
            )],
        };
    }
    let mut paragraphs = Vec::new();
    if let Some(o) = sw.value.as_object() {
        for (k, v) in o {
            if let Some(text) = v.as_str() {
                paragraphs.push(format!("{}: {text}", k.replace('_', " ")));
            }
        }
    }
    let mut tables = Vec::new();
    match sweep_rows(&sw.value) {
        Some(rows) => {
            let mut headers: Vec<String> = Vec::new();
            for r in rows {
                if let Some(o) = r.as_object() {
                    for k in o.keys() {
                        if !headers.contains(k) {
                            headers.push(k.clone());
                        }
                    }
                }
            }
            let mut t = Table::new(headers.clone());
            for r in rows.iter().take(SWEEP_ROWS_SHOWN) {
                t.push(
                    headers
                        .iter()
                        .map(|h| r.get(h).map_or(String::new(), sweep_cell)),
                );
            }
            let more = if rows.len() > SWEEP_ROWS_SHOWN {
                format!(
                    " (first {SWEEP_ROWS_SHOWN} of {} rows; all are in sweep/sweep.json)",
                    rows.len()
                )
            } else {
                String::new()
            };
            tables.push(ReportTable::from_table(
                format!("Trade study cases from sweep/sweep.json{more}"),
                &t,
            ));
        }
        None => paragraphs
            .push("sweep/sweep.json holds no table of cases that this report can show.".into()),
    }
    let mut figures = Vec::new();
    for (svg, what) in [
        (&sw.heatmap_svg, "Trade study heat map (sweep/heatmap.svg)"),
        (
            &sw.pareto_svg,
            "Loss probability against mass: the Pareto front of the cases (sweep/pareto.svg)",
        ),
    ] {
        if let Some(svg) = svg {
            figures.push(ReportFigure {
                caption: what.to_string(),
                svg: svg.clone(),
            });
        }
    }
    Section {
        heading: varied_heading(&[]),
        paragraphs,
        figures,
        tables,
        ..Default::default()
    }
}

fn provenance_section(folder: &RunFolder) -> Section {
    let s = &folder.summary;
    let mut t = Table::new(["item", "value"]);
    let get = |k: &str| folder.manifest.as_ref().and_then(|m| m.get(k));
    let text = |v: &Value| match v {
        Value::String(s) => s.clone(),
        Value::Array(a) => a
            .iter()
            .map(|x| match x {
                Value::String(s) => s.clone(),
                Value::Array(p) => p
                    .iter()
                    .map(|y| y.as_str().map_or(y.to_string(), str::to_string))
                    .collect::<Vec<_>>()
                    .join(" "),
                other => other.to_string(),
            })
            .collect::<Vec<_>>()
            .join(if matches!(a.first(), Some(Value::Array(_))) {
                ", "
            } else {
                " "
            }),
        other => other.to_string(),
    };
    t.push(["tool version".to_string(), s.version.clone()]);
    t.push(["scenario".to_string(), s.scenario.clone()]);
    t.push(["scenario hash".to_string(), s.scenario_hash.clone()]);
    t.push(["seed".to_string(), s.seed.to_string()]);
    t.push([
        "histories".to_string(),
        format!("{} (requested {})", s.histories, s.histories_requested),
    ]);
    t.push(["histories per batch".to_string(), s.batch_size.to_string()]);
    t.push([
        "run status".to_string(),
        format!("{:?}", s.status).to_lowercase(),
    ]);
    if let Some(r) = &s.rare_event {
        t.push([
            "estimator".to_string(),
            format!(
                "{}; boost factor {}; effective sample size {}",
                r.method,
                sig(r.rare_event_factor, 3),
                sig(r.effective_sample_size, 3)
            ),
        ]);
    } else {
        t.push(["estimator".to_string(), "plain Monte Carlo".to_string()]);
    }
    for (key, label) in [
        ("crate_versions", "crate versions"),
        ("random_streams", "random streams"),
        ("threads", "threads (results do not depend on it)"),
        ("command", "command"),
        ("wall_time_s", "wall time (s)"),
    ] {
        if let Some(v) = get(key) {
            t.push([label.to_string(), text(v)]);
        }
    }
    let mut paragraphs = Vec::new();
    if folder.manifest.is_none() {
        paragraphs.push("No manifest.json: crate versions are not recorded.".into());
    }
    paragraphs.push(format!(
        "Report rendered by tether-risk {} from the files in this folder; `tether-risk report DIR` renders it again.",
        crate::VERSION
    ));
    Section {
        heading: "Provenance".into(),
        paragraphs,
        tables: vec![ReportTable::from_table("Manifest", &t)],
        ..Default::default()
    }
}

fn report_doc(folder: &RunFolder, figures: &[NamedFigure], t: &DocTables<'_>) -> ReportDoc {
    let s = &folder.summary;
    let mut sections = vec![
        key_section(folder),
        design_section(folder),
        super::statement::model_section(folder),
        survival_section(folder, figures, t),
        where_section(figures, t),
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::markov::{mission_times_s, MarkovModel};
    use crate::model::Model;
    use crate::report::design::DesignSummary;
    use crate::report::estimate::EstimateSummary;

    // Source: the file contract of this module: the views must read what the estimate and
    // design writers produce, so a renamed field shows up here rather than as a silently
    // missing section.
    #[test]
    fn views_read_the_writers_output() {
        let model = Model::build(crate::scenario::demo()).unwrap();
        let markov = MarkovModel::build(&model).unwrap();
        let est = markov.solve(&mission_times_s(&model.scenario.run)).unwrap();
        let e = EstimateSummary::new(&model, &markov, &est);
        let v: EstimateView = serde_json::from_value(serde_json::to_value(&e).unwrap()).unwrap();
        assert_eq!(v.loss_probability, e.loss_probability);
        assert_eq!(
            v.loss_probability_by_year.len(),
            e.loss_probability_by_year.len()
        );
        assert_eq!(v.scenario_hash, e.scenario_hash);
        let d = serde_json::to_value(DesignSummary::from_model(&model)).unwrap();
        for key in [
            "tether_length_km",
            "ribbon_count",
            "cross_link_spacing_km",
            "ribbon_mass_kg",
            "min_margin",
            "scenario_hash",
        ] {
            assert!(d.get(key).is_some(), "design.json lost `{key}`");
        }
    }

    // Source: the defensive-reading rule for the optional trade study: rows are found under
    // the usual names or as the first array of objects, and interval objects become cells.
    #[test]
    fn sweep_rows_are_found() {
        let v = serde_json::json!({"note": "x", "cases": [{"a": 1.0, "p": {"estimate": 0.5, "ci_low": 0.25, "ci_high": 0.75}}]});
        let rows = sweep_rows(&v).unwrap();
        assert_eq!(rows.len(), 1);
        assert_eq!(sweep_cell(&rows[0]["p"]), "0.500 [0.250, 0.750]");
        assert!(sweep_rows(&serde_json::json!({"x": [1, 2]})).is_none());
    }
}

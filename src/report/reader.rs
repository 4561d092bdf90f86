//! The run folder read into memory: `summary.json` (required) and the optional files beside
//! it, each checked against the manifest. The report's sections render from a [`RunFolder`];
//! nothing here writes.
//!
//! Every file is read as the type its writer defines: `summary.json` as
//! [`RunSummary`], `scenario.json` through the scenario loader as a [`ScenarioSpec`]
//! (deprecated names accepted as the loader accepts them, nothing else), `design.json` as
//! [`DesignSummary`], `estimate.json` as [`EstimateSummary`], `sweep/sweep.json` as
//! [`SweepResult`] and `sensitivity/sensitivity.json` as
//! [`crate::sweep::sensitivity::SensitivityResult`]. There is no second guess: an optional file
//! of another shape is left out with a note giving serde's reason.

use std::path::{Path, PathBuf};

use serde_json::Value;

use super::design::DesignSummary;
use super::estimate::EstimateSummary;
use super::failure::MarkovPoint;
use super::figures::FigureError;
use super::run::Manifest;
use crate::engine::RunSummary;
use crate::scenario::ScenarioSpec;
use crate::sweep::SweepResult;

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

/// An optional trade study found in `sweep/`.
#[derive(Clone, Debug)]
pub struct SweepInput {
    /// `sweep/sweep.json`, read as the sweep's own result and checked
    /// ([`crate::report::folder::validate_sweep`]).
    pub result: SweepResult,
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
    /// `manifest.json`, when it is a manifest of this version.
    pub manifest: Option<Manifest>,
    /// `scenario.json`, as the scenario loader reads it ([`crate::scenario::parse_spec`]:
    /// unknown fields refused, deprecated names accepted).
    pub scenario: Option<ScenarioSpec>,
    /// `design.json`, when present and made for the same scenario.
    pub design: Option<DesignSummary>,
    /// `estimate.json`, when present and made for the same scenario.
    pub estimate: Option<EstimateSummary>,
    /// The trade study, if any.
    pub sweep: Option<SweepInput>,
    /// `sensitivity/sensitivity.json` with `sensitivity/sensitivity.svg`, if present.
    pub sensitivity: Option<(crate::sweep::sensitivity::SensitivityResult, Option<String>)>,
    /// What was missing or left out, in words.
    pub notes: Vec<String>,
    /// Why the folder may be incomplete (no manifest listing its files), shown as a warning at
    /// the top of the report; `None` when the manifest vouches for every file.
    pub incomplete: Option<String>,
    /// The report is rendered while the run is written ([`Completeness::Writing`]): the
    /// manifest comes after it.
    pub writing: bool,
}

/// Read a run-folder file with the run-file size cap.
pub(crate) fn read_capped(path: &Path) -> std::io::Result<String> {
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
        let mut problems = Vec::new();
        let hash = summary.scenario_hash.as_str();
        let (manifest, incomplete) =
            read_manifest(dir, completeness, hash, &mut notes, &mut problems);
        let scenario = read_scenario(dir, hash, &mut notes, &mut problems);
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
        .and_then(|v| match serde_json::from_value::<EstimateSummary>(v) {
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
        let design = design.and_then(|v| match serde_json::from_value::<DesignSummary>(v) {
            Ok(d) if d.scenario_hash != summary.scenario_hash => {
                notes.push("design.json was made for another scenario: the design key numbers are left out.".into());
                None
            }
            Ok(d) => Some(d),
            Err(e) => {
                notes.push(format!(
                    "design.json is not a design summary of this version ({e}): the design key numbers are left out."
                ));
                None
            }
        });
        let sweep = read_sweep(dir, &mut notes);
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
        if let Some(h) = sweep.as_ref().map(|s| &s.result.scenario_hash) {
            if h != hash {
                problems.push(format!(
                    "sweep/sweep.json is a trade study of scenario hash {h}, not of this run's scenario {hash}; move it out of the folder or rerun the sweep from this scenario"
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
            writing: matches!(completeness, Completeness::Writing),
        })
    }

    pub(crate) fn markov_points(&self) -> Option<Vec<MarkovPoint>> {
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

/// `manifest.json` and, when the folder is to be checked, why it may be incomplete. Without a
/// manifest (or with one that is not JSON) the folder may be incomplete; a JSON manifest of
/// another shape (a damaged file list, an older version's manifest) cannot vouch for the
/// files, so it is a problem, as are listed files that disagree with it.
fn read_manifest(
    dir: &Path,
    completeness: Completeness,
    scenario_hash: &str,
    notes: &mut Vec<String>,
    problems: &mut Vec<String>,
) -> (Option<Manifest>, Option<String>) {
    let raw = read_json(&dir.join("manifest.json"), notes, "the manifest");
    // A manifest of an older version that lists no files is reported as before: it cannot
    // vouch for the folder (a warning), but it is not refused; a damaged file list is.
    let unlisted = raw
        .as_ref()
        .is_some_and(|v| v.is_object() && v.get("files").is_none());
    let manifest = raw.map(serde_json::from_value::<Manifest>);
    let incomplete = match (completeness, &manifest) {
        (Completeness::Writing, _) => None,
        (Completeness::Check, None) => Some(
            "this folder has no readable manifest.json, which a run writes last: the run that wrote it may have been killed before it finished, so its files may not belong together".to_string(),
        ),
        (Completeness::Check, Some(Err(_))) if unlisted => Some(
            "manifest.json is from an older version and lists no files, so it cannot vouch that the folder's files belong together".to_string(),
        ),
        (Completeness::Check, Some(Err(e))) => {
            problems.push(format!(
                "manifest.json is not a run manifest of this version ({e})"
            ));
            None
        }
        (Completeness::Check, Some(Ok(m))) => {
            problems.extend(super::folder::check_listed_files(dir, &m.files));
            None
        }
    };
    let manifest = manifest.and_then(Result::ok);
    if let Some(h) = manifest.as_ref().map(|m| &m.scenario_hash) {
        if h != scenario_hash {
            problems.push(format!(
                "manifest.json is for scenario hash {h}, summary.json for {scenario_hash}"
            ));
        }
    }
    (manifest, incomplete)
}

/// `scenario.json` through the scenario loader, its hash checked against the run's (with
/// `flux_table.json` when there is one). The notes for an absent or broken file come from
/// [`read_json`]; a JSON document the loader refuses is left out with the loader's reason.
fn read_scenario(
    dir: &Path,
    scenario_hash: &str,
    notes: &mut Vec<String>,
    problems: &mut Vec<String>,
) -> Option<ScenarioSpec> {
    let spec = read_capped(&dir.join("scenario.json"))
        .ok()
        .map(|text| crate::scenario::parse_spec(&text));
    if let Some(Ok(spec)) = &spec {
        let table = read_capped(&dir.join("flux_table.json")).ok();
        let h = format!(
            "{:016x}",
            crate::scenario::scenario_hash(spec, table.as_deref())
        );
        if h != scenario_hash {
            problems.push(format!(
                "scenario.json has hash {h}, but summary.json was run for {scenario_hash}"
            ));
        }
    }
    read_json(
        &dir.join("scenario.json"),
        notes,
        "the scenario description",
    )
    .and_then(|_| match spec {
        Some(Ok(spec)) => Some(spec),
        Some(Err(e)) => {
            notes.push(format!(
                "scenario.json is not a scenario ({e}): the scenario description is left out."
            ));
            None
        }
        None => None,
    })
}

/// `sweep/sweep.json` as the sweep's result, checked, with its charts; absent, unreadable or
/// of another shape: a note and `None`.
fn read_sweep(dir: &Path, notes: &mut Vec<String>) -> Option<SweepInput> {
    let sweep_dir = dir.join("sweep");
    if !sweep_dir.join("sweep.json").exists() {
        notes.push("No trade study (sweep/sweep.json) in this folder: the trade-study comparison is left out.".into());
        return None;
    }
    let v = read_json(&sweep_dir.join("sweep.json"), notes, "the trade study")?;
    let read = serde_json::from_value::<SweepResult>(v).map_err(|e| e.to_string());
    match read.and_then(|r| super::folder::validate_sweep(&r).map(|()| r)) {
        Ok(result) => Some(SweepInput {
            result,
            heatmap_svg: read_capped(&sweep_dir.join("heatmap.svg")).ok(),
            pareto_svg: read_capped(&sweep_dir.join("pareto.svg")).ok(),
        }),
        Err(e) => {
            notes.push(format!("sweep/sweep.json is not a trade study of this version ({e}): the trade-study comparison is left out."));
            None
        }
    }
}

/// Read the file that makes `dir` a folder of its kind (`summary.json`, `sweep.json`), size
/// capped: absent means not such a folder, unreadable means a bad summary.
pub(crate) fn read_main_file(dir: &Path, path: &Path) -> Result<String, ReportError> {
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::markov::{mission_times_s, MarkovModel};
    use crate::model::Model;

    // Source: the file contract of this module: the reader reads estimate.json and
    // design.json as the writers' own types, so what a writer writes must read back whole
    // (a skipped field needs its default), or the report would leave the section out.
    #[test]
    fn writers_output_reads_back_as_their_types() {
        let model = Model::build(crate::scenario::demo()).unwrap();
        let markov = MarkovModel::build(&model).unwrap();
        let times = mission_times_s(&model.scenario.run);
        let est = markov.solve(&times).unwrap();
        let dm = crate::model::damage_memory::solve(&model, &times);
        let e = EstimateSummary::new(&model, &markov, &est).with_damage_memory(&model, dm.as_ref());
        assert!(e.damage_memory.is_some());
        let text = serde_json::to_string_pretty(&e).unwrap();
        let back: EstimateSummary = serde_json::from_str(&text).unwrap();
        assert_eq!(back, e);
        let d = DesignSummary::from_model(&model);
        let text = serde_json::to_string_pretty(&d).unwrap();
        let back: DesignSummary = serde_json::from_str(&text).unwrap();
        assert_eq!(serde_json::to_string_pretty(&back).unwrap(), text);
    }
}

//! Run folders as a whole: the exclusive lock a writer holds, clean-up of temporary files a
//! killed writer left, the files each command knows it writes (what `--force` clears), the
//! manifest's list of a complete run's files, and consistency checks of a summary read back
//! from disk.
//!
//! Protocol of a writer (simulate, merge, sweep, demo, report): take [`RunLock`] (which also
//! removes stale `.NAME.tmp-PID` files), remove `manifest.json` first (the folder is now
//! incomplete), write every result file atomically, and write `manifest.json` last with the
//! list of result files and their sizes. A reader trusts a folder whose manifest lists files
//! that are all present with those sizes ([`check_listed_files`]).

use std::io::Write;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::engine::RunSummary;

/// Name of the lock file inside a locked folder.
pub const LOCK_FILE: &str = ".tether-risk.lock";

/// Why a folder could not be locked.
#[derive(Debug, thiserror::Error)]
pub enum LockError {
    /// Another live process holds the lock.
    #[error("{dir} is in use by another tether-risk run (process {pid}, lock file {lock}); wait for it to finish or choose another output folder")]
    Held {
        /// The folder.
        dir: PathBuf,
        /// Process holding it.
        pid: u32,
        /// The lock file.
        lock: PathBuf,
    },
    /// The lock file could not be created or read.
    #[error("cannot lock output folder {dir}: {source}")]
    Io {
        /// The folder.
        dir: PathBuf,
        /// The I/O error.
        #[source]
        source: std::io::Error,
    },
}

/// An exclusive lock on an output folder, released (the lock file removed) when dropped. A lock
/// left by a process that no longer runs (killed with SIGKILL, or a second Ctrl-C) is detected
/// by its process id (and, on Linux, the process start time, against reuse of the id) and
/// taken over.
#[derive(Debug)]
pub struct RunLock {
    path: PathBuf,
    token: String,
}

/// Start time of a process (clock ticks since boot, field 22 of `/proc/PID/stat`), where known.
fn process_start(pid: u32) -> Option<u64> {
    let stat = std::fs::read_to_string(format!("/proc/{pid}/stat")).ok()?;
    // The command name (field 2) is in parentheses and may hold spaces: count after the last ')'.
    let rest = &stat[stat.rfind(')')? + 1..];
    rest.split_whitespace().nth(19)?.parse().ok()
}

/// False only when the process named in a lock token is known not to run any more.
fn holder_alive(token: &str) -> bool {
    let mut it = token.split_whitespace();
    let Some(pid) = it.next().and_then(|p| p.parse::<u32>().ok()) else {
        // Not a lock this program wrote (empty after a crash while writing it): stale.
        return false;
    };
    let start: u64 = it.next().and_then(|s| s.parse().ok()).unwrap_or(0);
    if Path::new("/proc/self/stat").exists() {
        match process_start(pid) {
            None => false,
            Some(s) => start == 0 || s == start,
        }
    } else {
        // No way to ask on this platform: assume it runs; the message names the lock file.
        true
    }
}

impl RunLock {
    /// Lock `dir` (which must exist) for writing, then remove temporary files that a killed
    /// writer left in it.
    ///
    /// # Errors
    /// [`LockError::Held`] when another live process holds it.
    pub fn acquire(dir: &Path) -> Result<RunLock, LockError> {
        let io = |source| LockError::Io {
            dir: dir.to_path_buf(),
            source,
        };
        let path = dir.join(LOCK_FILE);
        let pid = std::process::id();
        let token = format!("{pid} {}\n", process_start(pid).unwrap_or(0));
        for _ in 0..3 {
            match std::fs::OpenOptions::new()
                .write(true)
                .create_new(true)
                .open(&path)
            {
                Ok(mut f) => {
                    f.write_all(token.as_bytes()).map_err(io)?;
                    f.sync_all().map_err(io)?;
                    let lock = RunLock { path, token };
                    clean_stale_temps(dir);
                    return Ok(lock);
                }
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                    let held = std::fs::read_to_string(&path).unwrap_or_default();
                    if holder_alive(&held) {
                        let pid = held
                            .split_whitespace()
                            .next()
                            .and_then(|p| p.parse().ok())
                            .unwrap_or(0);
                        return Err(LockError::Held {
                            dir: dir.to_path_buf(),
                            pid,
                            lock: path,
                        });
                    }
                    break_stale(dir, &path, &held);
                }
                Err(e) => return Err(io(e)),
            }
        }
        Err(io(std::io::Error::other(
            "the lock file keeps reappearing; another run is starting in this folder",
        )))
    }

    /// The lock file.
    pub fn path(&self) -> &Path {
        &self.path
    }
}

/// Remove a stale lock, serialised through a second lock file so that two processes that both
/// found the same stale lock cannot remove each other's fresh one.
fn break_stale(dir: &Path, path: &Path, seen: &str) {
    let breaker = dir.join(format!("{LOCK_FILE}.break"));
    if let Ok(m) = std::fs::metadata(&breaker) {
        // A breaker left by a process killed in the few microseconds it exists.
        if m.modified()
            .ok()
            .and_then(|t| t.elapsed().ok())
            .is_some_and(|age| age.as_secs() > 10)
        {
            let _ = std::fs::remove_file(&breaker);
        }
    }
    if std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&breaker)
        .is_ok()
    {
        if std::fs::read_to_string(path).unwrap_or_default() == seen {
            let _ = std::fs::remove_file(path);
        }
        let _ = std::fs::remove_file(&breaker);
    } else {
        std::thread::sleep(std::time::Duration::from_millis(20));
    }
}

impl Drop for RunLock {
    fn drop(&mut self) {
        if std::fs::read_to_string(&self.path).is_ok_and(|t| t == self.token) {
            let _ = std::fs::remove_file(&self.path);
        }
    }
}

/// True for the name of a temporary file of [`super::write_atomic`]: `.NAME.tmp-PID`.
pub fn is_temp_name(name: &str) -> bool {
    name.starts_with('.')
        && name.rsplit_once(".tmp-").is_some_and(|(head, pid)| {
            head.len() > 1 && pid.bytes().all(|b| b.is_ascii_digit()) && !pid.is_empty()
        })
}

/// Remove temporary files that a killed writer left in `dir` and its known subfolders. Call it
/// only while holding the folder's [`RunLock`] (no live writer then uses them). Returns what
/// was removed.
pub fn clean_stale_temps(dir: &Path) -> Vec<PathBuf> {
    let mut removed = Vec::new();
    for sub in ["", "plots", "sweep", "points"] {
        let d = if sub.is_empty() {
            dir.to_path_buf()
        } else {
            dir.join(sub)
        };
        let Ok(entries) = std::fs::read_dir(&d) else {
            continue;
        };
        for e in entries.flatten() {
            let name = e.file_name();
            let Some(name) = name.to_str() else { continue };
            if is_temp_name(name) && e.file_type().is_ok_and(|t| t.is_file()) {
                let p = e.path();
                if std::fs::remove_file(&p).is_ok() {
                    removed.push(p);
                }
            }
        }
    }
    removed
}

/// Files a run folder (simulate, merge, demo) holds, relative to the folder. Plots are the
/// `.png` and `.svg` files in `plots/`.
pub const RUN_FILES: &[&str] = &[
    "manifest.json",
    "summary.json",
    "settings.json",
    "scenario.json",
    "flux_table.json",
    "checkpoint.json",
    "survival_by_year.csv",
    "survival_by_year.md",
    "altitude_bands.csv",
    "altitude_bands.md",
    "by_month.csv",
    "by_month.md",
    "spares.csv",
    "spares.md",
    "design.json",
    "design.txt",
    "estimate.json",
    "profile.csv",
    "profile.json",
    "simulate.txt",
    "failure_tables.md",
    "failure_by_year.csv",
    "failure_by_band.csv",
    "failure_by_cause.csv",
    "markov_vs_monte_carlo.csv",
    "policy_effect.csv",
    "report.html",
];

/// Files a sweep folder holds, besides `heatmap*.png/.svg` and `points/point-*.json`.
pub const SWEEP_FILES: &[&str] = &[
    "manifest.json",
    "sweep.json",
    "sweep.csv",
    "sweep.md",
    "sweep_plan.json",
    "pareto.png",
    "pareto.svg",
    "report.html",
];

fn remove_if_file(p: &Path, removed: &mut Vec<PathBuf>) -> std::io::Result<()> {
    match std::fs::symlink_metadata(p) {
        Ok(m) if m.is_file() || m.file_type().is_symlink() => {
            std::fs::remove_file(p)?;
            removed.push(p.to_path_buf());
            Ok(())
        }
        _ => Ok(()),
    }
}

fn remove_matching(
    dir: &Path,
    keep: impl Fn(&str) -> bool,
    removed: &mut Vec<PathBuf>,
) -> std::io::Result<()> {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return Ok(());
    };
    for e in entries.flatten() {
        if let Some(name) = e.file_name().to_str() {
            if keep(name) {
                remove_if_file(&e.path(), removed)?;
            }
        }
    }
    Ok(())
}

/// Remove the files an earlier run wrote into a run folder (only those this program writes;
/// anything else in the folder stays). `manifest.json` goes first, so a crash half way leaves
/// a folder that says it is incomplete. Returns what was removed.
pub fn clear_run_outputs(dir: &Path) -> std::io::Result<Vec<PathBuf>> {
    let mut removed = Vec::new();
    for f in RUN_FILES {
        remove_if_file(&dir.join(f), &mut removed)?;
    }
    remove_matching(
        &dir.join("plots"),
        |n| n.ends_with(".png") || n.ends_with(".svg"),
        &mut removed,
    )?;
    Ok(removed)
}

/// Remove the files an earlier sweep wrote into a sweep folder (see [`clear_run_outputs`]).
pub fn clear_sweep_outputs(dir: &Path) -> std::io::Result<Vec<PathBuf>> {
    let mut removed = Vec::new();
    for f in SWEEP_FILES {
        remove_if_file(&dir.join(f), &mut removed)?;
    }
    remove_matching(
        dir,
        |n| n.starts_with("heatmap") && (n.ends_with(".png") || n.ends_with(".svg")),
        &mut removed,
    )?;
    remove_matching(
        &dir.join("points"),
        |n| n.starts_with("point-") && n.ends_with(".json"),
        &mut removed,
    )?;
    Ok(removed)
}

/// One file of a complete run, as listed in its manifest.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct FileEntry {
    /// Path relative to the folder, `/`-separated.
    pub path: String,
    /// Size, bytes.
    pub bytes: u64,
}

/// The size of each of `names` (relative to `dir`) that exists, for the manifest.
pub fn list_files(dir: &Path, names: &[String]) -> Vec<FileEntry> {
    names
        .iter()
        .filter_map(|n| {
            let m = std::fs::metadata(dir.join(n)).ok()?;
            m.is_file().then(|| FileEntry {
                path: n.clone(),
                bytes: m.len(),
            })
        })
        .collect()
}

/// Largest number of files a manifest may list.
pub const MAX_LISTED_FILES: usize = 100_000;

/// Problems with the files a manifest lists: missing, of another size, or a path that leaves
/// the folder. Empty when the folder is complete.
pub fn check_listed_files(dir: &Path, files: &[FileEntry]) -> Vec<String> {
    let mut problems = Vec::new();
    if files.len() > MAX_LISTED_FILES {
        problems.push(format!(
            "the manifest lists {} files; at most {MAX_LISTED_FILES} are expected",
            files.len()
        ));
        return problems;
    }
    for f in files {
        let p = Path::new(&f.path);
        if p.is_absolute()
            || p.components()
                .any(|c| !matches!(c, std::path::Component::Normal(_)))
        {
            problems.push(format!(
                "the manifest lists {:?}, which is not a file inside the folder",
                f.path
            ));
            continue;
        }
        match std::fs::metadata(dir.join(p)) {
            Ok(m) if m.is_file() && m.len() == f.bytes => {}
            Ok(m) if m.is_file() => problems.push(format!(
                "{} has {} bytes, the manifest says {} (changed or damaged after the run)",
                f.path,
                m.len(),
                f.bytes
            )),
            _ => problems.push(format!("{} is missing", f.path)),
        }
    }
    problems
}

/// Largest number of rows of any per-year, per-band or per-station list accepted in a summary
/// read back from disk.
pub const MAX_SUMMARY_ROWS: usize = 100_000;

fn prob_ok(p: f64) -> bool {
    p.is_finite() && (0.0..=1.0).contains(&p)
}

/// A bound that is absent (an unresolved weighted estimate prints none) or a probability.
fn bound_ok(p: Option<f64>) -> bool {
    p.is_none_or(prob_ok)
}

/// A bound for an error message ("none" when absent).
fn fmt_bound(p: Option<f64>) -> String {
    p.map_or("none".into(), |v| v.to_string())
}

/// Both bounds present and out of order.
fn bounds_reversed(low: Option<f64>, high: Option<f64>) -> bool {
    matches!((low, high), (Some(l), Some(h)) if l > h)
}

/// Check a summary read back from disk for consistency before it is rendered or merged. The
/// message names the field and what is wrong.
///
/// # Errors
/// A description of the first inconsistency found.
pub fn validate_summary(s: &RunSummary) -> Result<(), String> {
    let t = &s.tally;
    let fail = |m: String| Err(m);
    if s.histories == 0 {
        return fail("histories = 0: there is nothing to report".into());
    }
    if s.histories > 1_000_000_000_000 {
        return fail(format!(
            "histories = {} is beyond the largest run (1e12)",
            s.histories
        ));
    }
    if s.histories_requested < s.histories && s.shard.is_none() {
        return fail(format!(
            "histories = {} is more than the {} requested",
            s.histories, s.histories_requested
        ));
    }
    if t.histories != s.histories {
        return fail(format!(
            "tally.histories = {} differs from histories = {}",
            t.histories, s.histories
        ));
    }
    if s.batch_size == 0 {
        return fail("batch_size = 0".into());
    }
    if let Some([i, n]) = s.shard {
        if n == 0 || i >= n {
            return fail(format!(
                "shard = [{i}, {n}] is not a shard I of N with I < N"
            ));
        }
    }
    if let Some(e) = &s.policy_effect {
        let discordant = e.lost_in_both as u128
            + e.lost_only_with_policy as u128
            + e.lost_only_without_policy as u128;
        let probabilities = [
            e.loss_probability_with_policy,
            e.loss_probability_without_policy,
            e.confidence,
        ];
        let differences = [e.difference, e.difference_low, e.difference_high];
        if e.histories == 0
            || discordant > e.histories as u128
            || e.losses_with_policy != e.lost_in_both + e.lost_only_with_policy
            || e.losses_without_policy != e.lost_in_both + e.lost_only_without_policy
            || probabilities.iter().any(|p| !(0.0..=1.0).contains(p))
            || differences.iter().any(|d| !(-1.0..=1.0).contains(d))
            || e.difference_low > e.difference_high
            || !(e.replaced_per_history.is_finite() && e.replaced_per_history >= 0.0)
        {
            return fail(
                "policy_effect: its counts, probabilities or interval are inconsistent".into(),
            );
        }
    }
    if t.losses > s.histories {
        return fail(format!(
            "{} losses in {} histories: losses cannot exceed histories",
            t.losses, s.histories
        ));
    }
    let by_cause = t
        .losses_by_cause
        .iter()
        .try_fold(0u64, |a, &b| a.checked_add(b));
    if by_cause != Some(t.losses) {
        return fail(format!(
            "tally.losses_by_cause {:?} does not add up to the {} losses",
            t.losses_by_cause, t.losses
        ));
    }
    for (name, v) in [
        ("tally.losses_by_year", &t.losses_by_year),
        ("tally.losses_by_band", &t.losses_by_band),
    ] {
        if v.len() > MAX_SUMMARY_ROWS {
            return fail(format!("{name} has {} rows", v.len()));
        }
        if v.iter()
            .try_fold(0u64, |a, &b| a.checked_add(b))
            .is_none_or(|x| x > t.losses)
        {
            return fail(format!(
                "{name} adds up to more than the {} losses",
                t.losses
            ));
        }
    }
    if !(s.mission_years.is_finite() && (0.0..=1000.0).contains(&s.mission_years)) {
        return fail(format!(
            "mission_years = {} is out of range: allowed [0, 1000] years",
            s.mission_years
        ));
    }
    let max_years = s.mission_years.ceil() as usize + 2;
    if s.survival_by_year.len() > max_years {
        return fail(format!(
            "survival_by_year has {} rows for a {}-year mission",
            s.survival_by_year.len(),
            s.mission_years
        ));
    }
    for (i, p) in s.survival_by_year.iter().enumerate() {
        if !(p.year.is_finite() && p.year >= 0.0 && p.year <= s.mission_years + 1.0) {
            return fail(format!(
                "survival_by_year[{i}].year = {} is outside the mission",
                p.year
            ));
        }
        if !(prob_ok(p.estimate) && bound_ok(p.ci_low) && bound_ok(p.ci_high))
            || bounds_reversed(p.ci_low, p.ci_high)
        {
            return fail(format!(
                "survival_by_year[{i}] holds a value outside [0, 1]"
            ));
        }
    }
    let lp = &s.loss_probability;
    if !(prob_ok(lp.estimate) && bound_ok(lp.ci_low) && bound_ok(lp.ci_high))
        || bounds_reversed(lp.ci_low, lp.ci_high)
        || (lp.resolved && (lp.ci_low.is_none() || lp.ci_high.is_none()))
        || !(lp.standard_error.is_finite() && lp.standard_error >= 0.0)
        || !(lp.effective_sample_size.is_finite() && lp.effective_sample_size >= 0.0)
        || !(0.0..=1.0).contains(&lp.largest_weight_share)
        || !(lp.confidence > 0.0 && lp.confidence < 1.0)
    {
        return fail(format!(
            "loss_probability = {} [{}, {}] at confidence {} is not a probability interval",
            lp.estimate,
            fmt_bound(lp.ci_low),
            fmt_bound(lp.ci_high),
            lp.confidence
        ));
    }
    if s.cuts_by_altitude_band.len() > MAX_SUMMARY_ROWS {
        return fail(format!(
            "cuts_by_altitude_band has {} rows",
            s.cuts_by_altitude_band.len()
        ));
    }
    for (i, b) in s.cuts_by_altitude_band.iter().enumerate() {
        if !(b.bottom_altitude_km.is_finite()
            && b.top_altitude_km.is_finite()
            && b.cuts_per_year.is_finite()
            && b.cuts_per_year >= 0.0
            && b.losses <= t.losses
            && b.loss_probability
                .as_ref()
                .is_none_or(|l| prob_ok(l.estimate) && prob_ok(l.ci_high)))
        {
            return fail(format!(
                "cuts_by_altitude_band[{i}] holds an impossible value"
            ));
        }
    }
    for (name, v) in [
        ("mean_cuts", s.mean_cuts),
        ("strikes_per_history", s.strikes_per_history),
        (
            "subcritical_holes_per_history",
            s.subcritical_holes_per_history,
        ),
    ] {
        if !(v.is_finite() && v >= 0.0) {
            return fail(format!("{name} = {v} is not a finite count"));
        }
    }
    for (name, v) in [
        ("cascade_cut_fraction", s.cascade_cut_fraction),
        (
            "fraction_of_time_with_cut_bay",
            s.fraction_of_time_with_cut_bay,
        ),
    ] {
        if !prob_ok(v) {
            return fail(format!("{name} = {v} is outside [0, 1]"));
        }
    }
    for (name, n) in [
        ("max_cuts_in_one_bay", s.max_cuts_in_one_bay.len()),
        ("tally.max_cuts_in_bay", t.max_cuts_in_bay.len()),
        ("tally.cuts_by_band", t.cuts_by_band.len()),
        ("tally.cuts_by_year", t.cuts_by_year.len()),
        ("tally.weighted", t.weighted.len()),
        ("tally.anomaly_examples", t.anomaly_examples.len()),
        (
            "tally.repair.splices_by_year",
            t.repair.splices_by_year.len(),
        ),
        (
            "tally.repair.time_to_splice_hist",
            t.repair.time_to_splice_hist.len(),
        ),
        ("tally.repair.demand_mission", t.repair.demand_mission.len()),
    ] {
        if n > MAX_SUMMARY_ROWS {
            return fail(format!("{name} has {n} rows"));
        }
    }
    if let Some(r) = &s.repair {
        if r.stockout_probability.len() > MAX_SUMMARY_ROWS
            || r.recommended_initial_stock.len() > MAX_SUMMARY_ROWS
            || r.time_to_splice_distribution.len() > MAX_SUMMARY_ROWS
        {
            return fail("repair holds more rows than any run writes".into());
        }
        if !prob_ok(r.climber_utilisation) || !prob_ok(r.stockout_target) {
            return fail("repair.climber_utilisation or stockout_target is outside [0, 1]".into());
        }
    }
    if let Some(sp) = &s.spares {
        if sp.demand_quantiles.len() > MAX_SUMMARY_ROWS {
            return fail("spares.demand_quantiles holds more rows than any run writes".into());
        }
        for d in &sp.demand_quantiles {
            if d.mission_distribution.len() > 10_000_000
                || !d.mission_distribution.iter().all(|p| prob_ok(*p))
            {
                return fail(format!(
                    "spares: the demand distribution of station {:?} is not a distribution",
                    d.station
                ));
            }
        }
    }
    Ok(())
}

/// Check a trade study read back from disk (`sweep.json`, a saved point) before it is
/// rendered: every point's coordinates inside the axes, the front's indices inside the points,
/// probabilities in [0, 1].
///
/// # Errors
/// A description of the first inconsistency found.
pub fn validate_sweep(r: &crate::sweep::SweepResult) -> Result<(), String> {
    if r.axes.is_empty() || r.axes.len() > 3 {
        return Err(format!("{} axes; a sweep has 1 to 3", r.axes.len()));
    }
    for (k, a) in r.axes.iter().enumerate() {
        if a.labels.is_empty() || a.labels.len() != a.values.len() {
            return Err(format!(
                "axes[{k}] has {} labels for {} values",
                a.labels.len(),
                a.values.len()
            ));
        }
    }
    if r.points.len() > crate::sweep::MAX_POINTS {
        return Err(format!(
            "{} points; a sweep has at most {}",
            r.points.len(),
            crate::sweep::MAX_POINTS
        ));
    }
    for (i, p) in r.points.iter().enumerate() {
        validate_point(r, p).map_err(|e| format!("points[{i}]: {e}"))?;
    }
    if let Some(i) = r.pareto_front.iter().find(|&&i| i >= r.points.len()) {
        return Err(format!(
            "pareto_front names point {i} of {}",
            r.points.len()
        ));
    }
    Ok(())
}

/// Check one point of a trade study against the sweep's axes.
///
/// # Errors
/// A description of the first inconsistency found.
pub fn validate_point(
    r: &crate::sweep::SweepResult,
    p: &crate::sweep::PointResult,
) -> Result<(), String> {
    if p.coordinates.len() != r.axes.len()
        || p.coordinates
            .iter()
            .zip(&r.axes)
            .any(|(&c, a)| c >= a.labels.len())
    {
        return Err(format!(
            "coordinates {:?} are outside the grid",
            p.coordinates
        ));
    }
    if let Some(l) = &p.loss_probability {
        if !(prob_ok(l.estimate) && bound_ok(l.ci_low) && bound_ok(l.ci_high))
            || bounds_reversed(l.ci_low, l.ci_high)
        {
            return Err("loss_probability is outside [0, 1]".into());
        }
    }
    if p.losses.is_some_and(|l| l > r.histories) {
        return Err("more losses than histories".into());
    }
    if p.stations.len() > MAX_SUMMARY_ROWS {
        return Err("too many stations".into());
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tmp(name: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("tr-folder-{}-{name}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).unwrap();
        d
    }

    #[test]
    fn lock_is_exclusive_and_released() {
        let d = tmp("lock");
        let a = RunLock::acquire(&d).unwrap();
        assert!(matches!(RunLock::acquire(&d), Err(LockError::Held { .. })));
        drop(a);
        assert!(!d.join(LOCK_FILE).exists());
        let _b = RunLock::acquire(&d).unwrap();
    }

    #[test]
    fn stale_lock_and_temps_are_cleaned() {
        let d = tmp("stale");
        // A process id far beyond the kernel's pid_max cannot run.
        std::fs::write(d.join(LOCK_FILE), "4294967295 1\n").unwrap();
        std::fs::write(d.join(".summary.json.tmp-12345"), "half").unwrap();
        std::fs::write(d.join(".keep"), "not a temp").unwrap();
        let _l = RunLock::acquire(&d).unwrap();
        assert!(!d.join(".summary.json.tmp-12345").exists());
        assert!(d.join(".keep").exists());
    }

    #[test]
    fn temp_names() {
        assert!(is_temp_name(".summary.json.tmp-123"));
        assert!(!is_temp_name("summary.json.tmp-123"));
        assert!(!is_temp_name(".x.tmp-"));
        assert!(!is_temp_name(".x.tmp-12a"));
    }

    #[test]
    fn listed_files_are_checked() {
        let d = tmp("list");
        std::fs::write(d.join("a.json"), "12345").unwrap();
        let l = list_files(&d, &["a.json".into(), "missing.json".into()]);
        assert_eq!(l.len(), 1);
        assert!(check_listed_files(&d, &l).is_empty());
        std::fs::write(d.join("a.json"), "1234").unwrap();
        assert_eq!(check_listed_files(&d, &l).len(), 1);
        let bad = [FileEntry {
            path: "../x".into(),
            bytes: 0,
        }];
        assert!(check_listed_files(&d, &bad)[0].contains("not a file inside"));
    }
}

//! The provenance section: what made the run.

use crate::report::html::{ReportTable, Section};
use crate::report::reader::RunFolder;
use crate::report::table::{sig, Table};

pub(crate) fn provenance_section(folder: &RunFolder) -> Section {
    let s = &folder.summary;
    let mut t = Table::new(["item", "value"]);
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
                "{}{}; effective sample size {}",
                r.method,
                crate::report::run::factor_note(r.rare_event_factor),
                sig(r.effective_sample_size, 3)
            ),
        ]);
    } else {
        t.push(["estimator".to_string(), "plain Monte Carlo".to_string()]);
    }
    if let Some(m) = &folder.manifest {
        let crates: Vec<String> = m
            .crate_versions
            .iter()
            .map(|(name, version)| format!("{name} {version}"))
            .collect();
        t.push(["crate versions".to_string(), crates.join(", ")]);
        t.push(["random streams".to_string(), m.random_streams.clone()]);
        t.push([
            "threads (results do not depend on it)".to_string(),
            m.threads.to_string(),
        ]);
        t.push(["command".to_string(), m.command.join(" ")]);
        // As recorded (the shortest text that reads back as the same number).
        t.push([
            "wall time (s)".to_string(),
            serde_json::to_string(&m.wall_time_s).unwrap_or_default(),
        ]);
    }
    let mut paragraphs = Vec::new();
    if folder.manifest.is_none() {
        paragraphs.push(if folder.writing {
            // The manifest lists this report's hash, so it is written after it.
            "manifest.json (crate versions, command, threads, wall time, file hashes) is written after this report; `tether-risk report DIR` shows it here.".into()
        } else {
            "No manifest.json: crate versions are not recorded.".into()
        });
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

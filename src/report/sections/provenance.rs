//! The provenance section: what made the run.

use serde_json::Value;

use crate::report::html::{ReportTable, Section};
use crate::report::reader::RunFolder;
use crate::report::table::{sig, Table};

pub(crate) fn provenance_section(folder: &RunFolder) -> Section {
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
                "{}; rare-event factor {}; effective sample size {}",
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

//! The sensitivity study's outputs: the swing table (text, Markdown, CSV), `sensitivity.json`,
//! and the swing chart (PNG and SVG, embedded font).

use std::path::{Path, PathBuf};

use super::failure::loss_cell;
use super::plot::{tornado_chart, ChartSpec, Figure, PlotError, SwingRow};
use super::table::{sig, Table};
use super::write_atomic;
use crate::sweep::sensitivity::{SensitivityResult, SensitivityRow, VariantResult};

/// A value as written in a table cell: strings without quotes, a tagged model object by its
/// tag (`point_stress`), a null field as the model's default.
fn value_label(v: &serde_json::Value) -> String {
    match v {
        serde_json::Value::String(s) => s.clone(),
        serde_json::Value::Null => "model default".into(),
        serde_json::Value::Object(o) if o.get("model").is_some_and(|m| m.is_string()) => {
            o["model"].as_str().unwrap_or_default().to_string()
        }
        serde_json::Value::Number(n) => n.as_f64().map_or_else(|| n.to_string(), |x| sig(x, 3)),
        other => other.to_string(),
    }
}

fn variant_cell(v: &VariantResult) -> String {
    match (&v.loss_probability, &v.infeasible) {
        (_, Some(r)) => format!("infeasible ({r})"),
        // A weighted run's loss count is that of its biased measure: its effective sample
        // size says how much the estimate rests on instead.
        (Some(l), None) => match l.method {
            crate::engine::EstimateMethod::Weighted => {
                format!("{} (ESS {})", loss_cell(l), sig(l.effective_sample_size, 3))
            }
            crate::engine::EstimateMethod::Plain => format!(
                "{} ({})",
                loss_cell(l),
                super::run::count_noun(v.losses.unwrap_or(0), "loss", "losses")
            ),
        },
        (None, None) => "-".into(),
    }
}

/// The range of a row, e.g. `0.33 .. 3 x model flux (base 1)`.
pub fn range_label(r: &SensitivityRow) -> String {
    format!(
        "{} .. {} {} (base {})",
        value_label(&r.low),
        value_label(&r.high),
        r.unit,
        value_label(&r.base)
    )
}

/// The swing table, sorted as in the result (largest measured swing first).
pub fn sensitivity_table(s: &SensitivityResult, with_basis: bool) -> Table {
    let conf = s
        .base
        .loss_probability
        .as_ref()
        .map_or(95.0, |l| 100.0 * l.confidence);
    let mut header = vec![
        "#".to_string(),
        "input".into(),
        "range".into(),
        format!("P(loss) at low [{conf:.0} % interval]"),
        "base".into(),
        "at high".into(),
        "swing |high - low|".into(),
        "swing status".into(),
        "ends distinguishable".into(),
        "fast estimate swing (damage memory)".into(),
    ];
    if with_basis {
        header.push("range basis".into());
    }
    let mut t = Table::new(header);
    for (i, r) in s.rows.iter().enumerate() {
        let mut row = vec![
            (i + 1).to_string(),
            r.input.clone(),
            range_label(r),
            variant_cell(&r.loss_low),
            variant_cell(&r.loss_base),
            variant_cell(&r.loss_high),
            if r.swing_status == "measured" {
                sig(r.swing, 3)
            } else {
                format!("{} (unresolved)", sig(r.swing, 3))
            },
            r.swing_status.clone(),
            if r.distinguishable {
                "yes"
            } else {
                "no (intervals overlap)"
            }
            .into(),
            r.damage_memory_swing.map_or("-".into(), |x| sig(x, 3)),
        ];
        if with_basis {
            row.push(r.range_basis.clone());
        }
        t.push(row);
    }
    t
}

fn bases(s: &SensitivityResult) -> String {
    let mut o = String::from("\nRange bases:\n");
    for (i, r) in s.rows.iter().enumerate() {
        o.push_str(&format!("  {}. {}: {}\n", i + 1, r.input, r.range_basis));
    }
    o
}

/// One row per input with one number per column.
pub fn sensitivity_csv(s: &SensitivityResult) -> String {
    let mut t = Table::new([
        "input",
        "paths",
        "low",
        "base",
        "high",
        "unit",
        "loss_low",
        "loss_low_ci_low",
        "loss_low_ci_high",
        "loss_base",
        "loss_base_ci_low",
        "loss_base_ci_high",
        "loss_high",
        "loss_high_ci_low",
        "loss_high_ci_high",
        "swing",
        "signed_swing",
        "swing_status",
        "distinguishable",
        "damage_memory_low",
        "damage_memory_base",
        "damage_memory_high",
        "range_basis",
    ]);
    let est = |v: &VariantResult| {
        let l = v.loss_probability.as_ref();
        let i = l.and_then(|l| l.interval());
        [
            l.map_or(String::new(), |l| format!("{}", l.estimate)),
            i.map_or(String::new(), |i| format!("{}", i.0)),
            i.map_or(String::new(), |i| format!("{}", i.1)),
        ]
    };
    let dm = |v: &VariantResult| {
        v.damage_memory_estimate
            .map_or(String::new(), |x| format!("{x}"))
    };
    for r in &s.rows {
        let mut row = vec![
            r.input.clone(),
            r.paths.join(" "),
            value_label(&r.low),
            value_label(&r.base),
            value_label(&r.high),
            r.unit.clone(),
        ];
        row.extend(est(&r.loss_low));
        row.extend(est(&r.loss_base));
        row.extend(est(&r.loss_high));
        row.extend([
            format!("{}", r.swing),
            format!("{}", r.signed_swing),
            r.swing_status.clone(),
            r.distinguishable.to_string(),
            dm(&r.loss_low),
            dm(&r.loss_base),
            dm(&r.loss_high),
            r.range_basis.clone(),
        ]);
        t.push(row);
    }
    t.to_csv()
}

fn notes(s: &SensitivityResult) -> String {
    let mut o = String::new();
    if !s.skipped.is_empty() {
        o.push_str("\nNot applicable to this scenario:\n");
        for k in &s.skipped {
            o.push_str(&format!("  - {}: {}\n", k.input, k.reason));
        }
    }
    o.push_str(&format!(
        "\nOne input at a time at the ends of its range, all others at the base; {} histories and seed {} for every run. {}\nSwing = |P(high) - P(low)|; a swing is \"measured\" only when both ends are resolved with at least one loss; otherwise it ranks after the measured ones. The fast-estimate column is the damage-memory estimate's swing (no sampling noise; its own assumptions).\n\n{}\n",
        s.histories, s.seed, s.common_random_numbers, s.caution
    ));
    o
}

/// Terminal text.
pub fn sensitivity_text(s: &SensitivityResult) -> String {
    format!(
        "Which assumption decides the answer? One-at-a-time sensitivity of scenario \"{}\" (tether-risk {})\nBase: {}\n\n{}{}",
        s.scenario,
        s.version,
        variant_cell(&s.base),
        sensitivity_table(s, false).to_text(),
        bases(s) + &notes(s)
    )
}

/// Markdown for a review document.
pub fn sensitivity_markdown(s: &SensitivityResult) -> String {
    // The scenario's name and the reasons of infeasible variants are free text from the input:
    // every line outside the table is escaped (the table escapes its own cells).
    let esc = super::escape::markdown_escape;
    let notes: Vec<String> = notes(s).lines().map(esc).collect();
    format!(
        "## Which assumption decides the answer? Scenario \"{}\"\n\nBase: {}\n\n{}{}\n",
        esc(&s.scenario),
        esc(&variant_cell(&s.base)),
        sensitivity_table(s, true).to_markdown(),
        notes.join("\n")
    )
}

/// The swing chart of the Monte Carlo loss probabilities.
pub fn sensitivity_figure(s: &SensitivityResult) -> Result<Figure, PlotError> {
    let est = |v: &VariantResult| v.loss_probability.as_ref().map_or(0.0, |l| l.estimate);
    let rows: Vec<SwingRow> = s
        .rows
        .iter()
        .map(|r| SwingRow {
            label: format!(
                "{} ({} .. {})",
                r.input,
                value_label(&r.low),
                value_label(&r.high)
            ),
            low: est(&r.loss_low),
            high: est(&r.loss_high),
            resolved: r.swing_status == "measured",
        })
        .collect();
    let spec = ChartSpec::new(
        "Which assumption decides the answer? Loss probability at each input's low and high end",
        "Probability of system loss by mission end, log scale; vertical line: base",
        "",
    )
    .with_size_px(1100, (160 + 60 * rows.len() as u32).clamp(400, 2000));
    tornado_chart(&rows, est(&s.base), &spec)
}

/// Caption of the swing chart.
pub const FIGURE_CAPTION: &str = "Each bar spans the loss probability from the input's low end to its high end (first colour: low end, second colour: high end), all other inputs at the base; the vertical line is the base. Grey bars have an end that is not resolved (no loss seen, or a weighted estimate without an interval): their length is not a measured difference.";

/// Write `sensitivity.json`, `.csv`, `.md` and `sensitivity.png`/`.svg` into `dir` (created
/// if needed), each atomically. Returns the paths written.
pub fn write_sensitivity(dir: &Path, s: &SensitivityResult) -> std::io::Result<Vec<PathBuf>> {
    std::fs::create_dir_all(dir)?;
    let mut written = Vec::new();
    let mut put = |name: &str, bytes: &[u8]| -> std::io::Result<()> {
        let p = dir.join(name);
        write_atomic(&p, bytes)?;
        written.push(p);
        Ok(())
    };
    let json = serde_json::to_string_pretty(s).map_err(std::io::Error::other)? + "\n";
    put("sensitivity.json", json.as_bytes())?;
    put("sensitivity.csv", sensitivity_csv(s).as_bytes())?;
    put("sensitivity.md", sensitivity_markdown(s).as_bytes())?;
    let fig = sensitivity_figure(s).map_err(std::io::Error::other)?;
    put("sensitivity.png", &fig.png)?;
    put("sensitivity.svg", fig.svg.as_bytes())?;
    Ok(written)
}

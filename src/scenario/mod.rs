//! The input: what a scenario file says ([`ScenarioSpec`]), its validation into SI units
//! ([`Scenario`]), and the built-in demo scenario.
//!
//! Input comes in two stages. Parsing refuses unknown fields and wrong types, naming the field
//! path and the closest valid name; validation checks every number against its allowed range and
//! unit. Physical feasibility (can the ribbon hold its own weight?) needs the geometry and is
//! checked when the model is built ([`crate::model::Model::build`]).
//!
//! This is the only module that reads input files.

mod error;
mod materials;
mod read;
mod spec;
mod validate;

pub use error::{nearest, ScenarioError};
pub use materials::{catalogue_material, material_catalogue, CatalogueEntry, MATERIALS_JSON};
pub use read::{read_text_capped, read_text_limited, MAX_INPUT_BYTES, MAX_RUN_FILE_BYTES};
pub use spec::*;
pub use validate::*;

/// The built-in demo scenario: an invented near-side ribbon system, for demonstration only.
pub const DEMO_SCENARIO_JSON: &str = include_str!("demo.json");

/// Parse scenario text (JSON) into a spec, with field paths and suggestions in errors.
pub fn parse_spec(text: &str) -> Result<ScenarioSpec, ScenarioError> {
    let de = &mut serde_json::Deserializer::from_str(text);
    let result: Result<ScenarioSpec, _> = serde_path_to_error::deserialize(de);
    result.map_err(|e| {
        let path = e.path().to_string();
        let inner = e.into_inner();
        describe_serde_error(&path, &inner)
    })
}

/// Turn a serde error into one of ours, recognising unknown fields and variants.
fn describe_serde_error(path: &str, err: &serde_json::Error) -> ScenarioError {
    // serde_path_to_error writes `?` for a position it cannot name and `.` for the root;
    // neither means anything to a user.
    let named: Vec<&str> = path
        .split('.')
        .filter(|p| !p.is_empty() && *p != "?")
        .collect();
    let path = named.join(".");
    let path = path.as_str();
    let msg = err.to_string();
    // serde's wording: "unknown field `x`, expected one of `a`, `b` at line 1 column 2"
    // or "unknown field `x`, expected `a` or `b`"; the same shapes for variants.
    for (kind, is_field) in [("unknown field `", true), ("unknown variant `", false)] {
        if let Some(rest) = msg.strip_prefix(kind) {
            if let Some(end) = rest.find('`') {
                let word = rest[..end].to_string();
                let expected = backticked(&rest[end + 1..]);
                let suggestion = nearest(&word, expected.iter().map(String::as_str));
                // serde_path_to_error ends the path at the unknown field for fields; drop it.
                let section = if is_field {
                    parent_path(path, &word)
                } else {
                    path.to_string()
                };
                return if is_field {
                    ScenarioError::UnknownField {
                        path: section,
                        field: word,
                        suggestion,
                        expected,
                    }
                } else {
                    ScenarioError::UnknownChoice {
                        path: section,
                        value: word,
                        suggestion,
                        expected,
                    }
                };
            }
        }
    }
    let message = match msg.find(" at line ") {
        Some(i) => msg[..i].to_string(),
        None => msg.clone(),
    };
    let message = if path.ends_with("flux_model") && message.contains("did not match any variant") {
        "expected \"grun1985\", \"grun1985_tabulated\" or {\"table_file\": \"PATH\"}".to_string()
    } else {
        message
    };
    ScenarioError::Syntax {
        path: if path.is_empty() {
            "scenario file".into()
        } else {
            path.to_string()
        },
        message,
        line: err.line(),
        column: err.column(),
    }
}

fn backticked(s: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut parts = s.split('`');
    parts.next();
    while let Some(word) = parts.next() {
        out.push(word.to_string());
        parts.next();
    }
    out
}

fn parent_path(path: &str, field: &str) -> String {
    let p = path.strip_suffix(field).unwrap_or(path);
    let p = p.strip_suffix('.').unwrap_or(p);
    if p.is_empty() || p == "." {
        "(top level)".to_string()
    } else {
        p.to_string()
    }
}

/// Read and validate a scenario file. `-` reads standard input. A tabulated flux model's
/// `table_file` is resolved relative to the scenario file's folder and read here.
pub fn load(path: &str) -> Result<Scenario, ScenarioError> {
    let (text, base) = if path == "-" {
        let s = read_text_limited(std::io::stdin(), MAX_INPUT_BYTES, "a scenario").map_err(
            |source| ScenarioError::Io {
                path: "<stdin>".into(),
                source,
            },
        )?;
        (s, std::path::PathBuf::from("."))
    } else {
        let s = read_text_capped(
            std::path::Path::new(path),
            MAX_INPUT_BYTES,
            "a scenario file",
        )
        .map_err(|source| ScenarioError::Io {
            path: path.to_string(),
            source,
        })?;
        let base = std::path::Path::new(path)
            .parent()
            .map(|p| p.to_path_buf())
            .unwrap_or_default();
        (s, base)
    };
    let spec = parse_spec(&text)?;
    let table_text = match &spec.environment.flux_model {
        FluxModelSpec::Table { table_file } => {
            let p = base.join(table_file);
            Some(
                read_text_capped(&p, MAX_INPUT_BYTES, "a flux table").map_err(|source| {
                    ScenarioError::FluxFile {
                        path: p.display().to_string(),
                        table_file: table_file.clone(),
                        source,
                    }
                })?,
            )
        }
        FluxModelSpec::Builtin(_) => None,
    };
    Scenario::from_spec(spec, table_text)
}

/// The built-in demo scenario, validated.
pub fn demo() -> Scenario {
    let spec = parse_spec(DEMO_SCENARIO_JSON).expect("the embedded demo scenario parses");
    Scenario::from_spec(spec, None).expect("the embedded demo scenario is valid")
}

/// A stable 64-bit hash (FNV-1a) of the scenario's canonical JSON, recorded in every output so
/// that a result can be matched to its input.
pub fn scenario_hash(spec: &ScenarioSpec, table_text: Option<&str>) -> u64 {
    // The canonical form is the one of versions before `synthetic_rates` was named: its
    // settings under the old key `validation_mode` (the last field, `null` when absent), so a
    // scenario keeps its hash whichever name it uses.
    let mut c = spec.clone();
    c.validation_mode = c.synthetic_rates.take().or(c.validation_mode);
    let mut canonical = serde_json::to_string(&c).unwrap_or_default();
    if c.validation_mode.is_none() && canonical.ends_with('}') {
        canonical.pop();
        canonical.push_str(",\"validation_mode\":null}");
    }
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in canonical.bytes().chain(table_text.unwrap_or("").bytes()) {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn demo_parses_and_validates() {
        let s = demo();
        assert!(s.tether.ribbon_count >= 2);
    }

    #[test]
    fn unknown_field_gets_a_suggestion() {
        let text = DEMO_SCENARIO_JSON.replace("\"ribbon_count\"", "\"ribon_count\"");
        let err = parse_spec(&text).unwrap_err().to_string();
        assert!(err.contains("tether"), "{err}");
        assert!(err.contains("did you mean `ribbon_count`"), "{err}");
    }
}

//! Input errors. Each one names the field path, the value, the allowed range and the unit, so
//! that a user can fix the file without reading code.

use thiserror::Error;

/// Why a scenario could not be accepted.
#[derive(Debug, Error)]
pub enum ScenarioError {
    /// The file could not be read.
    #[error("cannot read scenario file {path}: {source}")]
    Io {
        /// File path.
        path: String,
        /// Underlying error.
        source: std::io::Error,
    },
    /// The flux-model table file a scenario names could not be read.
    #[error("cannot read the flux-model file {path} named by environment.flux_model.table_file = \"{table_file}\" (a path relative to the scenario file's folder): {source}; the file format is described in the README section \"Flux-model files\"")]
    FluxFile {
        /// The path as resolved.
        path: String,
        /// The path as written in the scenario.
        table_file: String,
        /// Underlying error.
        source: std::io::Error,
    },
    /// The text is not valid JSON, or a value has the wrong type.
    #[error("{path}: {message} (line {line}, column {column})")]
    Syntax {
        /// Field path where parsing stopped (`.` for the document root).
        path: String,
        /// What went wrong.
        message: String,
        /// 1-based line.
        line: usize,
        /// 1-based column.
        column: usize,
    },
    /// A field name that no section accepts.
    #[error("{path}: unknown field `{field}`{}; valid fields here: {}",
        suggestion.as_ref().map(|s| format!(" (did you mean `{s}`?)")).unwrap_or_default(),
        expected.join(", "))]
    UnknownField {
        /// Path of the section holding the field.
        path: String,
        /// The unknown name as written.
        field: String,
        /// Closest valid name, if one is close.
        suggestion: Option<String>,
        /// All valid names at this place.
        expected: Vec<String>,
    },
    /// A choice that is not one of the allowed words.
    #[error("{path}: unknown choice `{value}`{}; allowed: {}",
        suggestion.as_ref().map(|s| format!(" (did you mean `{s}`?)")).unwrap_or_default(),
        expected.join(", "))]
    UnknownChoice {
        /// Field path.
        path: String,
        /// The value as written.
        value: String,
        /// Closest allowed value.
        suggestion: Option<String>,
        /// All allowed values.
        expected: Vec<String>,
    },
    /// A number outside its allowed range.
    #[error(
        "{path} = {value} is out of range: allowed {allowed} {unit}{}",
        note_suffix(note)
    )]
    OutOfRange {
        /// Field path.
        path: String,
        /// The value as written.
        value: String,
        /// Allowed range, e.g. `(0, 1000]`.
        allowed: String,
        /// Unit of the field.
        unit: String,
        /// Why the range is what it is (may be empty).
        note: String,
    },
    /// A flux model or table that could not be used.
    #[error("{path}: {message}")]
    Model {
        /// Field path.
        path: String,
        /// What went wrong.
        message: String,
    },
    /// The design is physically impossible.
    #[error("infeasible design: {reason}")]
    Infeasible {
        /// Explanation, naming the quantities involved.
        reason: String,
    },
}

fn note_suffix(note: &str) -> String {
    if note.is_empty() {
        String::new()
    } else {
        format!(" ({note})")
    }
}

/// The closest candidate to `word` by edit distance, if it is close enough to be a likely typo.
pub fn nearest<'a>(word: &str, candidates: impl IntoIterator<Item = &'a str>) -> Option<String> {
    let mut best: Option<(usize, &str)> = None;
    for c in candidates {
        let d = levenshtein(&word.to_lowercase(), &c.to_lowercase());
        if best.is_none_or(|(bd, _)| d < bd) {
            best = Some((d, c));
        }
    }
    let (d, c) = best?;
    // Accept up to a third of the word's length as typos (at least 2 edits).
    let limit = (word.chars().count() / 3).max(2);
    (d <= limit).then(|| c.to_string())
}

fn levenshtein(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for i in 1..=a.len() {
        cur[0] = i;
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            cur[j] = (prev[j] + 1).min(cur[j - 1] + 1).min(prev[j - 1] + cost);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nearest_finds_typos_and_ignores_strangers() {
        let names = ["ribbon_count", "ribbon_width_mm", "side"];
        assert_eq!(
            nearest("ribon_count", names).as_deref(),
            Some("ribbon_count")
        );
        assert_eq!(
            nearest("ribbon_width_m", names).as_deref(),
            Some("ribbon_width_mm")
        );
        assert_eq!(nearest("colour", names), None);
    }
}

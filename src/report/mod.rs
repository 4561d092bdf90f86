//! Output: JSON, CSV, Markdown and text renderings of summaries, and atomic file writes.
//!
//! This is the only module that writes output files. It sees summaries (serialisable values
//! built from a model or a run), never engine internals.

pub mod assemble;
mod atomic;
pub mod compare;
pub mod design;
pub mod env;
pub mod escape;
pub mod estimate;
pub mod failure;
pub mod figures;
pub mod folder;
pub mod html;
pub mod plot;
pub mod policy;
pub mod reader;
pub mod run;
mod sections;
pub mod sensitivity;
pub mod statement;
pub mod sweep;
pub mod table;

pub use atomic::write_atomic;
pub use escape::{csv_cell, markdown_escape, unique_file_stems};

pub use crate::CAUTION;

/// A name made safe as a file or folder name: ASCII letters, digits, `-` and `_` kept, anything
/// else replaced by `_`; `fallback` when nothing is left.
pub fn file_stem(name: &str, fallback: &str) -> String {
    let s: String = name
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                c
            } else {
                '_'
            }
        })
        .collect();
    if s.is_empty() {
        fallback.into()
    } else {
        s
    }
}

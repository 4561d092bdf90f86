//! The library's module dependency graph, read from the source: every `crate::MODULE` path
//! outside comments in `src/FROM/` is an edge FROM -> MODULE. Each module has a layer; an edge
//! may only point to a strictly lower layer, so the graph has no cycle and no upward import
//! (DEVELOPERS.md "Dependencies", shared/DESIGN.md "Rules of the road").
//!
//! `cargo test --release --test module_graph -- --nocapture` prints the graph as drawn in
//! DEVELOPERS.md.

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;

/// Layers, lowest first. A module may use modules of lower layers only.
const LAYERS: &[&[&str]] = &[
    &["orbit", "stats", "units"],
    &["environment", "structure"],
    &["damage", "scenario"],
    &["analytic", "repair"],
    &["model"],
    &["engine"],
    &["sweep"],
    &["report"],
];

fn layer_of(m: &str) -> Option<usize> {
    LAYERS.iter().position(|l| l.contains(&m))
}

fn rust_files(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    for e in std::fs::read_dir(dir).unwrap().flatten() {
        let p = e.path();
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

/// `crate::NAME` paths (lower-case names: modules, not items such as `crate::VERSION`) in the
/// code lines of a file; comment lines (`//`, `///`, `//!`) are skipped, and so is a file's
/// unit-test module (`#[cfg(test)]` then `mod ...`, which ends the file by convention): tests
/// may build their fixtures from higher layers, as dev-dependencies may.
fn crate_paths(text: &str) -> BTreeSet<String> {
    let mut out = BTreeSet::new();
    let mut after_cfg_test = false;
    for line in text.lines() {
        let code = line.trim_start();
        if after_cfg_test && code.starts_with("mod ") {
            break;
        }
        if !code.is_empty() {
            after_cfg_test = code == "#[cfg(test)]";
        }
        if code.starts_with("//") {
            continue;
        }
        let mut rest = code;
        while let Some(i) = rest.find("crate::") {
            let after = &rest[i + "crate::".len()..];
            let name: String = after
                .chars()
                .take_while(|c| c.is_ascii_lowercase() || *c == '_' || c.is_ascii_digit())
                .collect();
            if !name.is_empty() {
                out.insert(name);
            }
            rest = after;
        }
    }
    out
}

fn graph() -> BTreeMap<String, BTreeSet<String>> {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut g = BTreeMap::new();
    for e in std::fs::read_dir(&src).unwrap().flatten() {
        let p = e.path();
        if !p.is_dir() {
            continue;
        }
        let name = p.file_name().unwrap().to_str().unwrap().to_string();
        if name == "cli" {
            continue; // the binary's half: it uses the library as `tether_risk::`
        }
        let mut files = Vec::new();
        rust_files(&p, &mut files);
        let mut deps = BTreeSet::new();
        for f in files {
            deps.extend(crate_paths(&std::fs::read_to_string(f).unwrap()));
        }
        deps.remove(&name);
        g.insert(name, deps);
    }
    g
}

#[test]
fn every_import_points_to_a_lower_layer() {
    let g = graph();
    let mut problems = Vec::new();
    for (from, deps) in &g {
        let Some(lf) = layer_of(from) else {
            problems.push(format!(
                "module {from} has no layer in tests/module_graph.rs"
            ));
            continue;
        };
        println!(
            "{from:<12} -> {}",
            deps.iter().cloned().collect::<Vec<_>>().join(", ")
        );
        for d in deps {
            match layer_of(d) {
                Some(ld) if ld < lf => {}
                Some(_) => problems.push(format!("{from} uses crate::{d} (same or higher layer)")),
                None => problems.push(format!("{from} uses crate::{d}, which has no layer")),
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

/// The reader itself: comments are skipped, items (upper case) are not modules, and several
/// paths on one line are all found.
#[test]
fn crate_paths_reads_code_lines_only() {
    let text = "//! see [`crate::report`]\nuse crate::stats::{sig, pareto_front};\nlet v = crate::VERSION; let e = crate::engine::X + crate::model::Y;\n    /// crate::sweep\n#[cfg(test)]\nfn f() { crate::analytic::g() }\n#[cfg(test)]\nmod tests {\n    use crate::report::X;\n}\n";
    let want: BTreeSet<String> = ["stats", "engine", "model", "analytic"]
        .iter()
        .map(|s| s.to_string())
        .collect();
    assert_eq!(crate_paths(text), want);
}

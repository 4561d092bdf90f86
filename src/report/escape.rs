//! Making untrusted text (scenario names, station names, labels) safe in the formats a
//! reviewer opens: CSV cells that a spreadsheet would run as formulas, Markdown that a viewer
//! would render as HTML or links, and file stems that must not collide.
//!
//! Every CSV and Markdown writer of the crate goes through [`super::table::Table`], which calls
//! these; free text around tables (headings, bullets) calls [`markdown_escape`] directly.

/// A CSV cell that a spreadsheet will show as text, never run as a formula.
///
/// Cells starting with `=`, `+`, `-`, `@`, a tab or a carriage return are formulas (or can
/// become one) in common spreadsheet programs; such a cell gets a leading `'`, the prefix that
/// spreadsheet-safety guidance for CSV export recommends (OWASP, "CSV Injection"). A cell that
/// is a plain number (`-1.5`, `+3`, `-2.0e-5`) is left as it is, so numeric columns stay
/// numeric.
pub fn csv_cell(s: &str) -> std::borrow::Cow<'_, str> {
    let risky = matches!(
        s.as_bytes().first(),
        Some(b'=' | b'+' | b'-' | b'@' | b'\t' | b'\r' | b'\n')
    );
    if risky && !is_plain_number(s) {
        std::borrow::Cow::Owned(format!("'{s}"))
    } else {
        std::borrow::Cow::Borrowed(s)
    }
}

fn is_plain_number(s: &str) -> bool {
    s.bytes()
        .all(|b| b.is_ascii_digit() || matches!(b, b'+' | b'-' | b'.' | b'e' | b'E'))
        && s.parse::<f64>().is_ok()
}

/// Text made inert inside Markdown (a table cell, a heading or a bullet): HTML markup
/// (`<`, `>`, `&`) becomes entities, table pipes, backslashes, backticks and link brackets are
/// backslash-escaped, and line breaks become spaces so that a name cannot end a table row or
/// start a new block.
pub fn markdown_escape(s: &str) -> String {
    let mut o = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '&' => o.push_str("&amp;"),
            '|' | '\\' | '`' | '[' | ']' => {
                o.push('\\');
                o.push(c);
            }
            '\n' | '\r' | '\u{2028}' | '\u{2029}' | '\u{85}' => o.push(' '),
            c if c.is_control() => o.push(' '),
            c => o.push(c),
        }
    }
    o
}

/// File stems for `names`, in order: each made safe with [`super::file_stem`], and made unique
/// (compared without case, for case-insensitive file systems) by appending `-2`, `-3`, ...
pub fn unique_file_stems<S: AsRef<str>>(names: &[S], fallback: &str) -> Vec<String> {
    // A set of the taken stems and, per base, the next suffix to try: linear in the names (a
    // list scanned from suffix 2 each time made 20,000 equal names take minutes). The result
    // is the same: suffixes below a base's next one are all taken, and stay taken.
    let mut taken = std::collections::HashSet::with_capacity(names.len());
    let mut next_suffix: std::collections::HashMap<String, usize> = Default::default();
    let mut out = Vec::with_capacity(names.len());
    for n in names {
        let base = super::file_stem(n.as_ref(), fallback);
        let mut stem = base.clone();
        let mut k = next_suffix.get(&base).copied().unwrap_or(2);
        if taken.contains(&stem.to_lowercase()) {
            stem = format!("{base}-{k}");
            k += 1;
            while taken.contains(&stem.to_lowercase()) {
                stem = format!("{base}-{k}");
                k += 1;
            }
            next_suffix.insert(base, k);
        }
        taken.insert(stem.to_lowercase());
        out.push(stem);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    // Source: OWASP "CSV Injection" guidance (cells beginning with = + - @ tab CR are prefixed
    // with a single quote); numbers are common practice to leave unchanged.
    #[test]
    fn formulas_are_neutralised_numbers_kept() {
        assert_eq!(
            csv_cell("=HYPERLINK(\"http://x\")"),
            "'=HYPERLINK(\"http://x\")"
        );
        assert_eq!(csv_cell("+1+cmd"), "'+1+cmd");
        assert_eq!(csv_cell("-2+3"), "'-2+3");
        assert_eq!(csv_cell("@SUM(A1)"), "'@SUM(A1)");
        assert_eq!(csv_cell("\tx"), "'\tx");
        assert_eq!(csv_cell("-1.5"), "-1.5");
        assert_eq!(csv_cell("-2.0e-5"), "-2.0e-5");
        assert_eq!(csv_cell("base"), "base");
        assert_eq!(csv_cell(""), "");
    }

    #[test]
    fn markdown_is_inert() {
        assert_eq!(
            markdown_escape("<script>x</script>|a\nb"),
            "&lt;script&gt;x&lt;/script&gt;\\|a b"
        );
        assert_eq!(
            markdown_escape("[a](javascript:x)"),
            "\\[a\\](javascript:x)"
        );
        assert_eq!(markdown_escape("L1 station"), "L1 station");
    }

    /// The first definition (a list scanned from suffix 2 for every name), kept as the reference
    /// the linear one must reproduce.
    fn naive_stems(names: &[&str], fallback: &str) -> Vec<String> {
        let mut taken: Vec<String> = Vec::new();
        let mut out = Vec::new();
        for n in names {
            let base = crate::report::file_stem(n, fallback);
            let mut stem = base.clone();
            let mut k = 2;
            while taken.contains(&stem.to_lowercase()) {
                stem = format!("{base}-{k}");
                k += 1;
            }
            taken.push(stem.to_lowercase());
            out.push(stem);
        }
        out
    }

    #[test]
    fn many_equal_names_are_linear_and_match_the_first_definition() {
        let mixed = [
            "a", "A", "a", "a-2", "a", "b", "B-2", "b", "b", "", "", "x|y", "x/y", "a-3", "a",
        ];
        assert_eq!(unique_file_stems(&mixed, "s"), naive_stems(&mixed, "s"));
        // 20,000 equal names (a crafted summary.json once made the report hang on this).
        let many = vec!["base"; 20_000];
        let stems = unique_file_stems(&many, "s");
        let set: std::collections::HashSet<_> = stems.iter().map(|s| s.to_lowercase()).collect();
        assert_eq!(set.len(), many.len());
        assert_eq!(stems[19_999], "base-20000");
    }

    #[test]
    fn stems_are_unique() {
        assert_eq!(
            unique_file_stems(&["x|y", "x/y", "X_Y", "z"], "s"),
            vec!["x_y", "x_y-2", "X_Y-3", "z"]
        );
    }
}

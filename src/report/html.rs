//! One self-contained HTML report: inline CSS and inline SVG figures, no scripts, no network
//! and no external fonts, so it opens the same anywhere and prints cleanly.
//!
//! The report is built from plain data ([`ReportDoc`]); every piece of text is escaped. Figures
//! are inlined as SVG markup, which must come from [`crate::report::plot`]: anything that does
//! not look like a single `<svg>` element, or that carries script, is replaced by an escaped
//! notice rather than inlined.

use crate::report::table::{Align, Table};
use std::fmt::Write as _;

/// A whole report.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ReportDoc {
    /// Page title and main heading.
    pub title: String,
    /// One line under the title (scenario, date of run, version...).
    pub subtitle: String,
    /// Caution shown in a box at the top and again at the bottom.
    pub caution: String,
    /// Sections in order.
    pub sections: Vec<Section>,
}

/// One section: heading, then paragraphs, key numbers, figures and tables, in that order.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Section {
    /// Section heading.
    pub heading: String,
    /// Paragraphs of plain text.
    pub paragraphs: Vec<String>,
    /// Key numbers shown as cards.
    pub cards: Vec<KeyNumber>,
    /// Figures.
    pub figures: Vec<ReportFigure>,
    /// Tables.
    pub tables: Vec<ReportTable>,
}

/// A headline number, e.g. label "Loss probability, 10 years", value "3.1e-4", note "95 %
/// interval 2.0e-4 to 4.6e-4".
#[derive(Clone, Debug, Default, PartialEq)]
pub struct KeyNumber {
    /// What the number is.
    pub label: String,
    /// The number as text, with its unit.
    pub value: String,
    /// A short qualifier (interval, basis); may be empty.
    pub note: String,
}

/// A table with a caption. Columns listed in `numeric_columns` are right aligned.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ReportTable {
    /// Caption: what the table shows.
    pub caption: String,
    /// Column headers (with units).
    pub headers: Vec<String>,
    /// Rows of cells.
    pub rows: Vec<Vec<String>>,
    /// Indices of right-aligned (numeric) columns.
    pub numeric_columns: Vec<usize>,
}

impl ReportTable {
    /// A report table from a [`Table`], keeping its alignment.
    pub fn from_table(caption: impl Into<String>, table: &Table) -> Self {
        let numeric_columns = (0..table.headers.len())
            .filter(|&i| table.align.get(i).copied().unwrap_or(Align::Right) == Align::Right)
            .collect();
        ReportTable {
            caption: caption.into(),
            headers: table.headers.clone(),
            rows: table.rows.clone(),
            numeric_columns,
        }
    }
}

/// A figure: SVG markup from [`crate::report::plot`] and a caption.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ReportFigure {
    /// Caption: what the figure shows and how to read it.
    pub caption: String,
    /// One `<svg>...</svg>` element.
    pub svg: String,
}

/// Escape text for HTML element content and attribute values.
pub fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

/// The SVG to inline, or `None` if it is not a single `<svg>` element free of script: no
/// script, foreign-object or frame elements, no comments, no event-handler (`on...=`) or link
/// attributes. Only markup inside tags is checked; text content is already escaped.
fn safe_svg(svg: &str) -> Option<&str> {
    let mut s = svg.trim();
    if s.starts_with("<?xml") {
        s = s[s.find("?>")? + 2..].trim_start();
    }
    let lower = s.to_ascii_lowercase();
    if !lower.starts_with("<svg")
        || !lower.ends_with("</svg>")
        || lower.matches("<svg").count() != 1
    {
        return None;
    }
    for tag in lower.split('<').skip(1) {
        let tag = tag.split('>').next().unwrap_or("");
        let name = tag
            .split(|c: char| c.is_whitespace() || c == '/')
            .find(|t| !t.is_empty())
            .unwrap_or("");
        if ["script", "foreignobject", "iframe", "a", "use", "image"].contains(&name)
            || tag.starts_with("!--")
        {
            return None;
        }
        let bytes = tag.as_bytes();
        for (i, _) in tag.match_indices("on") {
            let after_space = i > 0 && bytes[i - 1].is_ascii_whitespace();
            let rest = &tag[i + 2..];
            let word_len = rest.bytes().take_while(|b| b.is_ascii_alphabetic()).count();
            if after_space && word_len > 0 && rest[word_len..].trim_start().starts_with('=') {
                return None;
            }
        }
        if tag.contains("href") || tag.contains("javascript:") {
            return None;
        }
    }
    Some(s)
}

const CSS: &str = r#"
:root { --ink: #1d1d1f; --muted: #5a5a5f; --line: #d6d6db; --accent: #0b5394; --warn-bg: #fff4e0; --warn: #8a4b00; }
* { box-sizing: border-box; }
body { margin: 0 auto; max-width: 1000px; padding: 24px 28px 48px; color: var(--ink);
  font: 16px/1.5 system-ui, -apple-system, "Segoe UI", Roboto, "DejaVu Sans", Arial, sans-serif; }
h1 { font-size: 1.9em; margin: 0.2em 0 0.1em; }
.subtitle { color: var(--muted); margin: 0 0 1em; }
h2 { font-size: 1.35em; margin: 1.8em 0 0.5em; padding-bottom: 0.2em; border-bottom: 2px solid var(--line); }
.caution { background: var(--warn-bg); color: var(--warn); border: 1px solid #e8c58a; border-left: 6px solid #d98e04;
  padding: 10px 14px; margin: 1em 0; border-radius: 4px; font-weight: 600; }
nav.toc { font-size: 0.95em; margin: 0.5em 0 1em; }
nav.toc ol { margin: 0.2em 0; padding-left: 1.4em; columns: 2; }
nav.toc a { color: var(--accent); text-decoration: none; }
.cards { display: flex; flex-wrap: wrap; gap: 12px; margin: 1em 0; }
.card { flex: 1 1 200px; border: 1px solid var(--line); border-radius: 6px; padding: 10px 14px; background: #fafafc; }
.card .label { color: var(--muted); font-size: 0.9em; }
.card .value { font-size: 1.6em; font-weight: 700; margin: 2px 0; font-variant-numeric: tabular-nums; }
.card .note { color: var(--muted); font-size: 0.85em; }
figure { margin: 1.2em 0; }
figure svg { display: block; width: 100%; max-width: 900px; height: auto; margin: 0 auto; }
figcaption, caption { color: var(--muted); font-size: 0.92em; margin-top: 0.4em; text-align: left; }
caption { caption-side: top; margin-bottom: 0.4em; font-weight: 600; color: var(--ink); }
.table-wrap { overflow-x: auto; margin: 1em 0; }
table { border-collapse: collapse; font-size: 0.92em; font-variant-numeric: tabular-nums; }
th, td { border-bottom: 1px solid var(--line); padding: 4px 10px; text-align: left; vertical-align: top; }
th { background: #f2f2f5; border-bottom: 2px solid #b9b9c0; }
td.num, th.num { text-align: right; }
tbody tr:nth-child(even) td { background: #fafafc; }
footer { margin-top: 2.5em; color: var(--muted); font-size: 0.9em; }
@media print {
  body { max-width: none; padding: 0; font-size: 11pt; }
  nav.toc { display: none; }
  h2 { break-after: avoid; }
  figure, .table-wrap, .cards, .caution { break-inside: avoid; }
  .card, th, tbody tr:nth-child(even) td { background: none; }
  .caution { background: none; color: #000; border: 2px solid #000; }
  .table-wrap { overflow: visible; }
  a { color: inherit; }
}
"#;

/// The whole report as one HTML document.
pub fn render_report(doc: &ReportDoc) -> String {
    let mut h = String::new();
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <title>{}</title>\n<style>{}</style>\n</head>\n<body>\n<header>\n<h1>{}</h1>\n",
        escape(&doc.title),
        CSS,
        escape(&doc.title)
    );
    if !doc.subtitle.is_empty() {
        let _ = writeln!(h, "<p class=\"subtitle\">{}</p>", escape(&doc.subtitle));
    }
    let caution = format!(
        "<p class=\"caution\" role=\"note\">{}</p>\n",
        escape(&doc.caution)
    );
    h.push_str(&caution);
    if doc.sections.len() > 1 {
        h.push_str("<nav class=\"toc\"><strong>Contents</strong><ol>\n");
        for (i, s) in doc.sections.iter().enumerate() {
            let _ = writeln!(
                h,
                "<li><a href=\"#s{}\">{}</a></li>",
                i + 1,
                escape(&s.heading)
            );
        }
        h.push_str("</ol></nav>\n");
    }
    h.push_str("</header>\n<main>\n");
    for (i, s) in doc.sections.iter().enumerate() {
        section(&mut h, i + 1, s);
    }
    h.push_str("</main>\n<footer>\n");
    h.push_str(&caution);
    h.push_str("</footer>\n</body>\n</html>\n");
    h
}

fn section(h: &mut String, n: usize, s: &Section) {
    let _ = writeln!(h, "<section id=\"s{n}\">\n<h2>{}</h2>", escape(&s.heading));
    for p in &s.paragraphs {
        let _ = writeln!(h, "<p>{}</p>", escape(p));
    }
    if !s.cards.is_empty() {
        h.push_str("<div class=\"cards\">\n");
        for c in &s.cards {
            let _ = write!(
                h,
                "<div class=\"card\"><div class=\"label\">{}</div><div class=\"value\">{}</div>",
                escape(&c.label),
                escape(&c.value)
            );
            if !c.note.is_empty() {
                let _ = write!(h, "<div class=\"note\">{}</div>", escape(&c.note));
            }
            h.push_str("</div>\n");
        }
        h.push_str("</div>\n");
    }
    for f in &s.figures {
        h.push_str("<figure>\n");
        match safe_svg(&f.svg) {
            Some(svg) => h.push_str(svg),
            None => h.push_str("<p class=\"caution\">This figure could not be included.</p>"),
        }
        let _ = writeln!(
            h,
            "\n<figcaption>{}</figcaption>\n</figure>",
            escape(&f.caption)
        );
    }
    for t in &s.tables {
        table(h, t);
    }
    h.push_str("</section>\n");
}

fn table(h: &mut String, t: &ReportTable) {
    let class = |i: usize| {
        if t.numeric_columns.contains(&i) {
            " class=\"num\""
        } else {
            ""
        }
    };
    let _ = write!(
        h,
        "<div class=\"table-wrap\"><table>\n<caption>{}</caption>\n<thead><tr>",
        escape(&t.caption)
    );
    for (i, head) in t.headers.iter().enumerate() {
        let _ = write!(h, "<th scope=\"col\"{}>{}</th>", class(i), escape(head));
    }
    h.push_str("</tr></thead>\n<tbody>\n");
    for row in &t.rows {
        h.push_str("<tr>");
        for (i, cell) in row.iter().enumerate() {
            let _ = write!(h, "<td{}>{}</td>", class(i), escape(cell));
        }
        h.push_str("</tr>\n");
    }
    h.push_str("</tbody>\n</table></div>\n");
}

#[cfg(test)]
mod tests {
    use super::*;

    // Source: the HTML5 specification's five characters that need escaping in text and
    // quoted attributes.
    #[test]
    fn escapes_markup() {
        assert_eq!(
            escape(r#"<a href="x">&'"#),
            "&lt;a href=&quot;x&quot;&gt;&amp;&#39;"
        );
    }

    // Source: the rule in this module's documentation: only a single script-free <svg>.
    #[test]
    fn svg_filter() {
        assert!(safe_svg("<svg width=\"1\"></svg>").is_some());
        assert!(safe_svg("<?xml version=\"1.0\"?>\n<svg></svg>").is_some());
        assert!(safe_svg("<svg><script>alert(1)</script></svg>").is_none());
        assert!(safe_svg("<svg onload=\"x()\"></svg>").is_none());
        assert!(safe_svg("<p>hi</p>").is_none());
        assert!(safe_svg("<svg><text x=\"1\">depends on ribbons</text></svg>").is_some());
        assert!(safe_svg("<svg><a href=\"x\">y</a></svg>").is_none());
    }
}

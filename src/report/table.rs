//! A plain table rendered as aligned text, CSV or Markdown. Human and machine output share the
//! data, not the code.

/// Column alignment.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Align {
    /// Left aligned (names).
    Left,
    /// Right aligned (numbers).
    Right,
}

/// A table of strings with headers.
#[derive(Clone, Debug, Default)]
pub struct Table {
    /// Column headers.
    pub headers: Vec<String>,
    /// Alignment per column (missing entries are right aligned).
    pub align: Vec<Align>,
    /// Rows of cells.
    pub rows: Vec<Vec<String>>,
}

impl Table {
    /// A table with these headers, first column left aligned, others right aligned.
    pub fn new<S: Into<String>>(headers: impl IntoIterator<Item = S>) -> Self {
        let headers: Vec<String> = headers.into_iter().map(Into::into).collect();
        let align = (0..headers.len())
            .map(|i| if i == 0 { Align::Left } else { Align::Right })
            .collect();
        Table {
            headers,
            align,
            rows: Vec::new(),
        }
    }

    /// Append a row.
    pub fn push<S: Into<String>>(&mut self, row: impl IntoIterator<Item = S>) {
        self.rows.push(row.into_iter().map(Into::into).collect());
    }

    fn widths(&self) -> Vec<usize> {
        let mut w: Vec<usize> = self.headers.iter().map(|h| h.chars().count()).collect();
        for r in &self.rows {
            for (i, c) in r.iter().enumerate() {
                if i < w.len() {
                    w[i] = w[i].max(c.chars().count());
                }
            }
        }
        w
    }

    fn line(&self, cells: &[String], widths: &[usize], sep: &str) -> String {
        let mut out = String::new();
        for (i, w) in widths.iter().enumerate() {
            let cell = cells.get(i).map(String::as_str).unwrap_or("");
            // A name with control characters (terminal escape sequences, line breaks) must not
            // reach a terminal or break the alignment.
            let clean: String;
            let c = if cell.chars().any(char::is_control) {
                clean = cell
                    .chars()
                    .map(|c| if c.is_control() { ' ' } else { c })
                    .collect();
                clean.as_str()
            } else {
                cell
            };
            let pad = w.saturating_sub(c.chars().count());
            if i > 0 {
                out.push_str(sep);
            }
            match self.align.get(i).copied().unwrap_or(Align::Right) {
                Align::Left => {
                    out.push_str(c);
                    out.push_str(&" ".repeat(pad));
                }
                Align::Right => {
                    out.push_str(&" ".repeat(pad));
                    out.push_str(c);
                }
            }
        }
        out.trim_end().to_string()
    }

    /// Aligned text for a terminal.
    pub fn to_text(&self) -> String {
        let w = self.widths();
        let mut out = self.line(&self.headers, &w, "  ");
        out.push('\n');
        out.push_str(
            &w.iter()
                .map(|n| "-".repeat(*n))
                .collect::<Vec<_>>()
                .join("  "),
        );
        out.push('\n');
        for r in &self.rows {
            out.push_str(&self.line(r, &w, "  "));
            out.push('\n');
        }
        out
    }

    /// Markdown (GitHub pipe table) that pastes into a review document; every cell passes
    /// through [`super::escape::markdown_escape`].
    pub fn to_markdown(&self) -> String {
        let w = self.widths();
        let esc = |s: &str| super::escape::markdown_escape(s);
        let mut out = String::from("| ");
        out.push_str(
            &self
                .headers
                .iter()
                .map(|h| esc(h))
                .collect::<Vec<_>>()
                .join(" | "),
        );
        out.push_str(" |\n|");
        for (i, _) in w.iter().enumerate() {
            out.push_str(match self.align.get(i).copied().unwrap_or(Align::Right) {
                Align::Left => " :--- |",
                Align::Right => " ---: |",
            });
        }
        out.push('\n');
        for r in &self.rows {
            out.push_str("| ");
            out.push_str(&r.iter().map(|c| esc(c)).collect::<Vec<_>>().join(" | "));
            out.push_str(" |\n");
        }
        out
    }

    /// CSV with a header line; every cell passes through [`super::escape::csv_cell`], so a
    /// name cannot become a live spreadsheet formula.
    pub fn to_csv(&self) -> String {
        let mut w = csv::Writer::from_writer(Vec::new());
        // Writing to a Vec cannot fail.
        let safe = |cells: &[String]| -> Vec<String> {
            cells
                .iter()
                .map(|c| super::escape::csv_cell(c).into_owned())
                .collect()
        };
        let _ = w.write_record(safe(&self.headers));
        for r in &self.rows {
            let _ = w.write_record(safe(r));
        }
        String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
    }
}

pub use crate::stats::sig;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn renders_all_three_forms() {
        let mut t = Table::new(["bay", "margin"]);
        t.push(["0", "2.00"]);
        t.push(["12", "1.5"]);
        assert_eq!(
            t.to_text(),
            "bay  margin\n---  ------\n0      2.00\n12      1.5\n"
        );
        assert_eq!(t.to_csv(), "bay,margin\n0,2.00\n12,1.5\n");
        assert!(t
            .to_markdown()
            .starts_with("| bay | margin |\n| :--- | ---: |"));
    }

    #[test]
    fn significant_figures() {
        assert_eq!(sig(1.23456, 3), "1.23");
        assert_eq!(sig(56281.74, 6), "56281.7");
        assert_eq!(sig(1.2e-5, 3), "1.20e-5");
        assert_eq!(sig(0.0, 3), "0");
    }
}

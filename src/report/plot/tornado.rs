//! Horizontal swing ("tornado") chart of a one-at-a-time sensitivity study: one bar per input
//! from the result at its low end to the result at its high end, on a log axis, with the base
//! result as a vertical line. Rows are drawn in the order given (largest swing first).

use super::axis::{decade_range, fmt_decade};
use super::layout::{
    centre_message, frame, palette, plot_rect, text, AXIS_SIZE, GRID, MUTED, TICK_SIZE,
};
use super::{check_finite, draw_err, render, Chart, ChartSpec, Figure, PlotError};
use plotters::coord::Shift;
use plotters::prelude::*;

/// One input's swing.
#[derive(Clone, Debug, PartialEq)]
pub struct SwingRow {
    /// Input label (with its range), e.g. "flux scale factor 0.33 .. 3".
    pub label: String,
    /// Result at the input's low end (>= 0).
    pub low: f64,
    /// Result at the input's high end (>= 0).
    pub high: f64,
    /// False when either end is not resolved (drawn grey, labelled).
    pub resolved: bool,
}

/// The swing chart; `base` is the result at every input's base value. Values of 0 (nothing
/// seen) are drawn at the left edge of the axis and listed in a note.
///
/// Errors: non-finite or negative values.
pub fn tornado_chart(rows: &[SwingRow], base: f64, spec: &ChartSpec) -> Result<Figure, PlotError> {
    check_finite(
        "swing values",
        rows.iter().flat_map(|r| [r.low, r.high]).chain([base]),
    )?;
    if let Some(index) = rows
        .iter()
        .flat_map(|r| [r.low, r.high])
        .position(|v| v < 0.0)
    {
        return Err(PlotError::OutOfRange {
            what: "swing values".into(),
            index,
            value: rows
                .iter()
                .flat_map(|r| [r.low, r.high])
                .nth(index)
                .unwrap_or(0.0),
            min: 0.0,
            max: f64::INFINITY,
        });
    }
    render(spec, &Tornado { rows, base, spec })
}

struct Tornado<'a> {
    rows: &'a [SwingRow],
    base: f64,
    spec: &'a ChartSpec,
}

impl Chart for Tornado<'_> {
    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<Vec<String>, PlotError> {
        let n = self.rows.len();
        let positive = self
            .rows
            .iter()
            .flat_map(|r| [r.low, r.high])
            .chain([self.base])
            .filter(|v| *v > 0.0);
        let (min_pos, max) =
            positive.fold((f64::INFINITY, 0.0f64), |(a, b), v| (a.min(v), b.max(v)));
        let mut notes = Vec::new();
        let (x0, x1) = if min_pos.is_finite() {
            decade_range(min_pos, max)
        } else {
            (-6.0, 0.0)
        };
        let zeros: Vec<&str> = self
            .rows
            .iter()
            .filter(|r| r.low == 0.0 || r.high == 0.0)
            .map(|r| r.label.as_str())
            .collect();
        if !zeros.is_empty() {
            notes.push(format!(
                "no loss was seen at one end of: {} (drawn at the left edge; only an upper bound is known)",
                zeros.join("; ")
            ));
        }
        if self.rows.iter().any(|r| !r.resolved) {
            notes.push("grey bars: at least one end is not resolved; their swing is not a measured difference".into());
        }
        let area = frame(root, &self.spec.title, &notes)?;
        let widest = self
            .rows
            .iter()
            .map(|r| {
                area.estimate_text_size(&r.label, &text(TICK_SIZE))
                    .map(|s| s.0)
            })
            .collect::<Result<Vec<_>, _>>()
            .map_err(draw_err)?
            .into_iter()
            .max()
            .unwrap_or(40);
        let mut chart = ChartBuilder::on(&area)
            .margin(16)
            .margin_right(30)
            .x_label_area_size(56)
            .y_label_area_size((widest + 20).min(area.dim_in_pixel().0 / 2))
            .build_cartesian_2d(x0..x1, (0..n.max(1) as i32 - 1).into_segmented())
            .map_err(draw_err)?;
        let yfmt = |v: &SegmentValue<i32>| match v {
            SegmentValue::CenterOf(i) if *i >= 0 && (*i as usize) < n => {
                // First row at the top.
                self.rows[n - 1 - *i as usize].label.clone()
            }
            _ => String::new(),
        };
        let xfmt = |v: &f64| fmt_decade(*v);
        chart
            .configure_mesh()
            .disable_y_mesh()
            .x_desc(self.spec.x_label.as_str())
            .y_desc(self.spec.y_label.as_str())
            .label_style(text(TICK_SIZE))
            .axis_desc_style(text(AXIS_SIZE))
            .light_line_style(GRID.mix(0.6))
            .bold_line_style(GRID)
            .x_labels(((x1 - x0) as usize + 1).max(2))
            .x_label_formatter(&xfmt)
            .y_labels(n + 1)
            .y_label_formatter(&yfmt)
            .draw()
            .map_err(draw_err)?;
        let ((_, py0), (_, py1)) = plot_rect(&chart);
        let slot = (py1 - py0) as f64 / n.max(1) as f64;
        let exp = |v: f64| if v > 0.0 { v.log10().max(x0) } else { x0 };
        let b = exp(self.base);
        for (k, r) in self.rows.iter().enumerate() {
            let i = (n - 1 - k) as i32;
            let (lo_c, hi_c) = if r.resolved {
                (palette(0), palette(1))
            } else {
                (MUTED, MUTED)
            };
            for (v, c) in [(r.low, lo_c), (r.high, hi_c)] {
                let e = exp(v);
                let (a, z) = if e < b { (e, b) } else { (b, e) };
                let mut rect = Rectangle::new(
                    [(a, SegmentValue::Exact(i)), (z, SegmentValue::Exact(i + 1))],
                    c.mix(if r.resolved { 0.85 } else { 0.45 }).filled(),
                );
                rect.set_margin((slot * 0.15) as u32, (slot * 0.15) as u32, 0, 0);
                chart.draw_series(std::iter::once(rect)).map_err(draw_err)?;
            }
        }
        chart
            .draw_series(LineSeries::new(
                [
                    (b, SegmentValue::Exact(0)),
                    (b, SegmentValue::Exact(n.max(1) as i32)),
                ],
                BLACK.stroke_width(2),
            ))
            .map_err(draw_err)?;
        if n == 0 {
            centre_message(root, plot_rect(&chart), "No inputs to show.")?;
        }
        Ok(notes)
    }
}

//! Bars over named categories (e.g. cuts per year by altitude band), with optional error bars.

use super::axis::{linear_range, tick_label};
use super::layout::{
    centre_message, frame, palette, plot_rect, text, text_size, AXIS_SIZE, GRID, TICK_SIZE,
};
use super::{check_finite, draw_err, render, Chart, ChartSpec, Figure, PlotError};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// One bar: a category label, its value and an optional interval.
#[derive(Clone, Debug, PartialEq)]
pub struct Bar {
    /// Category label, e.g. an altitude band "20–40" (its unit belongs in the axis label).
    pub label: String,
    /// Bar height, in the unit of the vertical axis label.
    pub value: f64,
    /// Optional interval (low, high) drawn as an error bar.
    pub error: Option<(f64, f64)>,
}

impl Bar {
    /// A bar without an error bar.
    pub fn new(label: impl Into<String>, value: f64) -> Self {
        Bar {
            label: label.into(),
            value,
            error: None,
        }
    }

    /// The same bar with an interval.
    pub fn with_error(mut self, lo: f64, hi: f64) -> Self {
        self.error = Some((lo, hi));
        self
    }
}

/// A bar chart over categories in the given order. When the category labels would overlap,
/// only every k-th one is written.
///
/// Errors: non-finite values or interval ends. No bars gives an empty chart with a note.
pub fn bar_chart(bars: &[Bar], spec: &ChartSpec) -> Result<Figure, PlotError> {
    check_finite("bar values", bars.iter().map(|b| b.value))?;
    check_finite(
        "bar intervals",
        bars.iter()
            .flat_map(|b| b.error.map(|(l, h)| [l, h]).into_iter().flatten()),
    )?;
    render(spec, &BarChart { bars, spec })
}

struct BarChart<'a> {
    bars: &'a [Bar],
    spec: &'a ChartSpec,
}

impl Chart for BarChart<'_> {
    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<Vec<String>, PlotError> {
        let n = self.bars.len();
        let values = self.bars.iter().flat_map(|b| {
            let (l, h) = b.error.unwrap_or((b.value, b.value));
            [b.value, l, h]
        });
        let (min, max) = values.fold((0.0f64, 0.0f64), |(a, b), v| (a.min(v), b.max(v)));
        let (y0, y1) = linear_range(min, max, true);
        let mut empty = None;
        if n == 0 {
            empty = Some("No bars to show.".to_string());
        } else if self.bars.iter().all(|b| b.value == 0.0) {
            empty = Some("Every value is zero.".to_string());
        }

        let area = frame(root, &self.spec.title, &[])?;
        // Every category is labelled: labels too wide for their slot are staggered over as
        // many rows as needed instead of being thinned out (a thinned label could be the band
        // that holds the losses).
        let mut widest = 0;
        let mut tall = 0;
        for b in self.bars {
            let (w, h) = text_size(root, &b.label, &text(TICK_SIZE))?;
            widest = widest.max(w);
            tall = tall.max(h);
        }
        let width_px = root.dim_in_pixel().0 as f64;
        let slot_guess = (width_px - 16.0 - 30.0 - 86.0) / n.max(1) as f64;
        let rows = ((widest as f64 + 10.0) / slot_guess.max(1.0))
            .ceil()
            .clamp(1.0, 6.0) as usize;
        let row_h = tall + 4;
        let mut chart = ChartBuilder::on(&area)
            .margin(16)
            .margin_right(30)
            .x_label_area_size(40 + rows as i32 * row_h)
            .y_label_area_size(86)
            .build_cartesian_2d((0..n.max(1) as i32 - 1).into_segmented(), y0..y1)
            .map_err(draw_err)?;
        let ((px0, _), (px1, py1)) = plot_rect(&chart);
        let slot = (px1 - px0) as f64 / n.max(1) as f64;
        let xfmt = |_: &SegmentValue<i32>| String::new();
        let yfmt = |v: &f64| tick_label(*v, y1 - y0);
        chart
            .configure_mesh()
            .disable_x_mesh()
            .x_desc(self.spec.x_label.as_str())
            .y_desc(self.spec.y_label.as_str())
            .label_style(text(TICK_SIZE))
            .axis_desc_style(text(AXIS_SIZE))
            .light_line_style(GRID.mix(0.6))
            .max_light_lines(1)
            .bold_line_style(GRID)
            .x_labels(n + 1)
            .x_label_formatter(&xfmt)
            .y_label_formatter(&yfmt)
            .y_labels(10)
            .draw()
            .map_err(draw_err)?;

        let colour = palette(0);
        chart
            .draw_series(self.bars.iter().enumerate().map(|(i, b)| {
                let i = i as i32;
                let mut r = Rectangle::new(
                    [
                        (SegmentValue::Exact(i), 0.0),
                        (SegmentValue::Exact(i + 1), b.value),
                    ],
                    colour.mix(0.85).filled(),
                );
                r.set_margin(0, 0, (slot * 0.12) as u32, (slot * 0.12) as u32);
                r
            }))
            .map_err(draw_err)?;
        // Error bars in pixels: a vertical line with whiskers (no marker at the estimate).
        let whisker = ((slot * 0.15) as i32).clamp(2, 10);
        for (i, b) in self.bars.iter().enumerate() {
            let Some((l, h)) = b.error else { continue };
            let x = SegmentValue::CenterOf(i as i32);
            let (px, pl) = chart.backend_coord(&(x.clone(), l.min(h)));
            let (_, ph) = chart.backend_coord(&(x, l.max(h)));
            let style = BLACK.stroke_width(2);
            for path in [
                vec![(px, pl), (px, ph)],
                vec![(px - whisker, pl), (px + whisker, pl)],
                vec![(px - whisker, ph), (px + whisker, ph)],
            ] {
                root.draw(&PathElement::new(path, style))
                    .map_err(draw_err)?;
            }
        }
        if y0 < 0.0 {
            chart
                .draw_series(LineSeries::new(
                    [
                        (SegmentValue::Exact(0), 0.0),
                        (SegmentValue::Exact(n.max(1) as i32), 0.0),
                    ],
                    BLACK.stroke_width(1),
                ))
                .map_err(draw_err)?;
        }
        let style = text(TICK_SIZE).pos(Pos::new(HPos::Center, VPos::Top));
        for (i, b) in self.bars.iter().enumerate() {
            let x = px0 + ((i as f64 + 0.5) * slot) as i32;
            let y = py1 + 8 + (i % rows) as i32 * row_h;
            if rows > 1 && i % rows > 0 {
                // A short tick leads the eye from a lower row to its bar.
                root.draw(&PathElement::new(
                    vec![(x, py1 + 2), (x, y - 2)],
                    GRID.stroke_width(1),
                ))
                .map_err(draw_err)?;
            }
            root.draw(&Text::new(b.label.clone(), (x, y), style.clone()))
                .map_err(draw_err)?;
        }
        if let Some(msg) = &empty {
            centre_message(root, plot_rect(&chart), msg)?;
        }
        Ok(empty.into_iter().collect())
    }
}

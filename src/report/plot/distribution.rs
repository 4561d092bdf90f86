//! Distributions: a discrete one (probability of each count) and a continuous one given as a
//! histogram, each with labelled vertical markers (recommended stock, percentiles).

use super::axis::{linear_range, tick_label};
use super::layout::{
    centre_message, frame, palette, plot_rect, text, text_size, AXIS_SIZE, GRID, SMALL_SIZE,
    TICK_SIZE,
};
use super::{check_finite, check_range, draw_err, render, Chart, ChartSpec, Figure, PlotError};
use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Probability of one count, e.g. of needing `count` spare segments.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PmfPoint {
    /// The count.
    pub count: u64,
    /// Its probability, in [0, 1].
    pub probability: f64,
}

/// One histogram bin of a continuous quantity.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HistogramBin {
    /// Lower edge, in the unit of the horizontal axis label.
    pub lo: f64,
    /// Upper edge.
    pub hi: f64,
    /// Bar height as given (a probability, a density or a count: say which in the axis label).
    pub height: f64,
}

/// A labelled vertical line, e.g. the recommended stock or a percentile.
#[derive(Clone, Debug, PartialEq)]
pub struct Marker {
    /// Position on the horizontal axis.
    pub x: f64,
    /// Text written beside the line, e.g. "P90 = 130 h".
    pub label: String,
}

impl Marker {
    /// A marker at `x` with `label`.
    pub fn new(x: f64, label: impl Into<String>) -> Self {
        Marker {
            x,
            label: label.into(),
        }
    }
}

/// A discrete distribution as bars, one per count, with labelled markers.
///
/// Errors: probabilities outside [0, 1] or non-finite, non-finite marker positions. No points or
/// all-zero probabilities give an empty chart with a note.
pub fn histogram_chart(
    points: &[PmfPoint],
    markers: &[Marker],
    spec: &ChartSpec,
) -> Result<Figure, PlotError> {
    check_range(
        "probabilities",
        points.iter().map(|p| p.probability),
        0.0,
        1.0,
    )?;
    check_finite("marker positions", markers.iter().map(|m| m.x))?;
    let bins: Vec<HistogramBin> = points
        .iter()
        .map(|p| HistogramBin {
            lo: p.count as f64 - 0.4,
            hi: p.count as f64 + 0.4,
            height: p.probability,
        })
        .collect();
    render(
        spec,
        &DistChart {
            bins: &bins,
            markers,
            spec,
            integer_x: true,
        },
    )
}

/// A continuous distribution drawn from its histogram, with labelled markers (e.g. P50, P90,
/// P99).
///
/// Errors: non-finite edges, heights or marker positions. No bins or all-zero heights give an
/// empty chart with a note.
pub fn distribution_chart(
    bins: &[HistogramBin],
    markers: &[Marker],
    spec: &ChartSpec,
) -> Result<Figure, PlotError> {
    check_finite("bin edges", bins.iter().flat_map(|b| [b.lo, b.hi]))?;
    check_finite("bin heights", bins.iter().map(|b| b.height))?;
    check_finite("marker positions", markers.iter().map(|m| m.x))?;
    render(
        spec,
        &DistChart {
            bins,
            markers,
            spec,
            integer_x: false,
        },
    )
}

struct DistChart<'a> {
    bins: &'a [HistogramBin],
    markers: &'a [Marker],
    spec: &'a ChartSpec,
    integer_x: bool,
}

impl Chart for DistChart<'_> {
    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<Vec<String>, PlotError> {
        let xs = self
            .bins
            .iter()
            .flat_map(|b| [b.lo, b.hi])
            .chain(self.markers.iter().map(|m| m.x));
        let (xmin, xmax) = xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
            (a.min(x), b.max(x))
        });
        let (x0, x1) = if self.integer_x {
            let (lo, hi) = if xmin <= xmax {
                (xmin.min(-0.4), xmax)
            } else {
                (-0.5, 10.0)
            };
            (lo - 0.6, hi + 0.6 + 0.02 * (hi - lo))
        } else {
            linear_range(xmin, xmax, false)
        };
        let (hmin, hmax) = self.bins.iter().fold((0.0f64, 0.0f64), |(a, b), v| {
            (a.min(v.height), b.max(v.height))
        });
        let (y0, y1) = linear_range(hmin, hmax, true);
        // Headroom for the marker labels.
        let y1 = y1 + (y1 - y0) * 0.06 * self.markers.len().min(4) as f64;
        let mut empty = None;
        if self.bins.is_empty() {
            empty = Some("No data to show.".to_string());
        } else if self.bins.iter().all(|b| b.height == 0.0) {
            empty = Some("Every value is zero.".to_string());
        }

        let area = frame(root, &self.spec.title, &[])?;
        let mut chart: ChartContext<DB, Cartesian2d<RangedCoordf64, RangedCoordf64>> =
            ChartBuilder::on(&area)
                .margin(16)
                .margin_right(30)
                .x_label_area_size(56)
                .y_label_area_size(86)
                .build_cartesian_2d(x0..x1, y0..y1)
                .map_err(draw_err)?;
        let integer_x = self.integer_x;
        let xfmt = |v: &f64| {
            if integer_x {
                if (v - v.round()).abs() < 1e-9 && *v >= 0.0 {
                    format!("{}", v.round() as i64)
                } else {
                    String::new()
                }
            } else {
                tick_label(*v, x1 - x0)
            }
        };
        let yfmt = |v: &f64| tick_label(*v, y1 - y0);
        let x_ticks = if integer_x {
            ((x1 - x0).floor() as usize).clamp(2, 12)
        } else {
            10
        };
        chart
            .configure_mesh()
            .x_desc(self.spec.x_label.as_str())
            .y_desc(self.spec.y_label.as_str())
            .label_style(text(TICK_SIZE))
            .axis_desc_style(text(AXIS_SIZE))
            .light_line_style(GRID.mix(0.6))
            .max_light_lines(1)
            .bold_line_style(GRID)
            .x_labels(x_ticks)
            .x_label_formatter(&xfmt)
            .y_labels(10)
            .y_label_formatter(&yfmt)
            .draw()
            .map_err(draw_err)?;

        let colour = palette(0);
        chart
            .draw_series(self.bins.iter().map(|b| {
                Rectangle::new(
                    [(b.lo.min(b.hi), 0.0), (b.lo.max(b.hi), b.height)],
                    colour.mix(0.8).filled(),
                )
            }))
            .map_err(draw_err)?;
        // A zero-width bin would vanish: draw it as a spike.
        chart
            .draw_series(self.bins.iter().filter(|b| b.lo == b.hi).map(|b| {
                PathElement::new(vec![(b.lo, 0.0), (b.lo, b.height)], colour.stroke_width(3))
            }))
            .map_err(draw_err)?;
        if !integer_x {
            // Thin outlines separate adjacent bins.
            chart
                .draw_series(self.bins.iter().map(|b| {
                    Rectangle::new(
                        [(b.lo.min(b.hi), 0.0), (b.lo.max(b.hi), b.height)],
                        WHITE.mix(0.9).stroke_width(1),
                    )
                }))
                .map_err(draw_err)?;
        }
        draw_markers(root, &chart, self.markers, (x0, x1), y0)?;

        if let Some(msg) = &empty {
            centre_message(root, plot_rect(&chart), msg)?;
        }
        Ok(empty.into_iter().collect())
    }
}

/// Dashed vertical lines with labels, stacked downwards from the top so that labels of close
/// markers do not overlap; a label goes left of its line when it would leave the plot.
fn draw_markers<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    chart: &ChartContext<DB, Cartesian2d<RangedCoordf64, RangedCoordf64>>,
    markers: &[Marker],
    (x0, x1): (f64, f64),
    y0: f64,
) -> Result<(), PlotError> {
    let ((_, py0), (px1, py1)) = plot_rect(chart);
    let style = text(SMALL_SIZE);
    let mut order: Vec<usize> = (0..markers.len()).collect();
    order.sort_by(|a, b| markers[*a].x.total_cmp(&markers[*b].x).then(a.cmp(b)));
    let line_h = (SMALL_SIZE * 1.2) as i32;
    let mut placed: Vec<(i32, i32, i32, i32)> = Vec::new();
    for (rank, &i) in order.iter().enumerate() {
        let m = &markers[i];
        if m.x < x0 || m.x > x1 {
            continue;
        }
        let colour = if markers.len() == 1 {
            RGBColor(180, 30, 30)
        } else {
            palette(1 + rank)
        };
        let (px, _) = chart.backend_coord(&(m.x, y0));
        let mut y = py0 + 6;
        // Dashed line: short segments in pixels, identical in both backends.
        let mut yy = py0;
        while yy < py1 {
            let end = (yy + 7).min(py1);
            root.draw(&PathElement::new(
                vec![(px, yy), (px, end)],
                colour.stroke_width(2),
            ))
            .map_err(draw_err)?;
            yy += 12;
        }
        let (tw, th) = text_size(root, &m.label, &style)?;
        let right = px + 6 + tw < px1;
        let (lx0, lx1) = if right {
            (px + 6, px + 6 + tw)
        } else {
            (px - 6 - tw, px - 6)
        };
        while placed
            .iter()
            .any(|&(a, b, c, d)| lx0 < b && lx1 > a && y < d && y + th > c)
        {
            y += line_h;
        }
        placed.push((lx0, lx1, y, y + th));
        let anchor = if right { HPos::Left } else { HPos::Right };
        let tx = if right { px + 6 } else { px - 6 };
        root.draw(&Rectangle::new(
            [(lx0 - 2, y - 1), (lx1 + 2, y + th + 2)],
            WHITE.mix(0.85).filled(),
        ))
        .map_err(draw_err)?;
        root.draw(&Text::new(
            m.label.clone(),
            (tx, y),
            style.color(&colour).pos(Pos::new(anchor, VPos::Top)),
        ))
        .map_err(draw_err)?;
    }
    Ok(())
}

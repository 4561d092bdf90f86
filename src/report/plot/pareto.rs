//! Trade-off between mass and loss probability: every design as a labelled point, the
//! non-dominated ones marked and joined.

use super::axis::{decade_range, fmt_decade, linear_range, tick_label};
use super::layout::{
    centre_message, frame, palette, plot_rect, text, text_size, AXIS_SIZE, GRID, MUTED, SMALL_SIZE,
    TICK_SIZE,
};
use super::{check_finite, check_range, draw_err, render, Chart, ChartSpec, Figure, PlotError};
use crate::stats::pareto_front;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// One design in a trade study.
#[derive(Clone, Debug, PartialEq)]
pub struct ParetoPoint {
    /// Short name written beside the point.
    pub label: String,
    /// Tether mass, kg.
    pub mass_kg: f64,
    /// Probability of loss over the mission, in [0, 1].
    pub loss_probability: f64,
}

/// Scatter of loss probability (log axis) against mass (linear axis), each point labelled;
/// non-dominated designs are filled and joined, dominated ones drawn hollow in grey. Designs
/// with zero loss probability cannot sit on a log axis: they are drawn on the bottom edge as
/// triangles, with a note.
///
/// Errors: non-finite masses, loss probabilities outside [0, 1]. No points gives an empty chart
/// with a note.
pub fn pareto_chart(points: &[ParetoPoint], spec: &ChartSpec) -> Result<Figure, PlotError> {
    check_finite("design masses", points.iter().map(|p| p.mass_kg))?;
    check_range(
        "design loss probabilities",
        points.iter().map(|p| p.loss_probability),
        0.0,
        1.0,
    )?;
    render(spec, &ParetoChart { points, spec })
}

struct ParetoChart<'a> {
    points: &'a [ParetoPoint],
    spec: &'a ChartSpec,
}

impl Chart for ParetoChart<'_> {
    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<Vec<String>, PlotError> {
        let pts = self.points;
        let mut notes = Vec::new();
        let mut empty = None;
        let pos = pts.iter().map(|p| p.loss_probability).filter(|v| *v > 0.0);
        let min_pos = pos.clone().fold(f64::INFINITY, f64::min);
        let max = pos.fold(0.0, f64::max);
        let zeros = pts.iter().filter(|p| p.loss_probability == 0.0).count();
        let (y0, y1) = if min_pos.is_finite() {
            decade_range(min_pos, max)
        } else {
            (-6.0, 0.0)
        };
        if pts.is_empty() {
            empty = Some("No designs to show.".to_string());
        }
        if zeros > 0 {
            notes.push(format!(
                "{zeros} design(s) had no observed loss; they are drawn as triangles on the bottom edge (loss below the axis range)."
            ));
        }
        let to_y = |v: f64| if v > 0.0 { v.log10() } else { y0 };
        let (xmin, xmax) = pts
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
                (a.min(p.mass_kg), b.max(p.mass_kg))
            });
        let (x0, x1) = linear_range(xmin, xmax, false);
        // Room on the right for the last point's label.
        let x1 = x1 + 0.08 * (x1 - x0);

        let area = frame(root, &self.spec.title, &notes)?;
        let mut chart = ChartBuilder::on(&area)
            .margin(16)
            .margin_right(30)
            .x_label_area_size(56)
            .y_label_area_size(86)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(draw_err)?;
        let xfmt = |v: &f64| tick_label(*v, x1 - x0);
        let yfmt = |v: &f64| fmt_decade(*v);
        chart
            .configure_mesh()
            .x_desc(self.spec.x_label.as_str())
            .y_desc(self.spec.y_label.as_str())
            .label_style(text(TICK_SIZE))
            .axis_desc_style(text(AXIS_SIZE))
            .light_line_style(GRID.mix(0.6))
            .max_light_lines(1)
            .bold_line_style(GRID)
            .x_labels(10)
            .x_label_formatter(&xfmt)
            .y_labels((y1 - y0) as usize + 1)
            .y_max_light_lines(0)
            .y_label_formatter(&yfmt)
            .draw()
            .map_err(draw_err)?;
        let mut k = y0;
        while k < y1 {
            for m in 2..10 {
                let y = k + (m as f64).log10();
                chart
                    .draw_series(LineSeries::new([(x0, y), (x1, y)], GRID.mix(0.5)))
                    .map_err(draw_err)?;
            }
            k += 1.0;
        }

        let xy: Vec<(f64, f64)> = pts
            .iter()
            .map(|p| (p.mass_kg, p.loss_probability))
            .collect();
        let front = pareto_front(&xy);
        let on_front: Vec<bool> = (0..pts.len()).map(|i| front.contains(&i)).collect();
        let colour = palette(0);
        chart
            .draw_series(LineSeries::new(
                front.iter().map(|&i| (xy[i].0, to_y(xy[i].1))),
                colour.stroke_width(2),
            ))
            .map_err(draw_err)?
            .label("Non-dominated designs")
            .legend(move |(x, y)| {
                EmptyElement::at((x, y))
                    + PathElement::new(vec![(0, 0), (24, 0)], colour.stroke_width(2))
                    + Circle::new((12, 0), 5, colour.filled())
            });
        // Dominated designs hollow and grey, then the front filled on top. Zero-loss designs
        // sit on the bottom edge as triangles.
        for front_pass in [false, true] {
            let style = if front_pass {
                colour.filled()
            } else {
                MUTED.stroke_width(2)
            };
            let chosen: Vec<usize> = (0..pts.len())
                .filter(|&i| on_front[i] == front_pass)
                .collect();
            if chosen.is_empty() {
                continue;
            }
            let at = |i: usize| (pts[i].mass_kg, to_y(pts[i].loss_probability));
            chart
                .draw_series(
                    chosen
                        .iter()
                        .filter(|&&i| pts[i].loss_probability == 0.0)
                        .map(|&i| TriangleMarker::new(at(i), 8, style)),
                )
                .map_err(draw_err)?;
            let circles = chart
                .draw_series(
                    chosen
                        .iter()
                        .filter(|&&i| pts[i].loss_probability > 0.0)
                        .map(|&i| Circle::new(at(i), 6, style)),
                )
                .map_err(draw_err)?;
            if !front_pass {
                circles
                    .label("Dominated designs")
                    .legend(|(x, y)| Circle::new((x + 12, y), 5, MUTED.stroke_width(2)));
            }
        }

        // Labels: try right, left, above, below; take the first spot clear of placed labels,
        // of the points, and of the plot edges.
        let ((px0, py0), (px1, py1)) = plot_rect(&chart);
        let pix: Vec<(i32, i32)> = pts
            .iter()
            .map(|p| chart.backend_coord(&(p.mass_kg, to_y(p.loss_probability))))
            .collect();
        let style = text(SMALL_SIZE);
        let mut placed: Vec<(i32, i32, i32, i32)> = Vec::new();
        let mut order: Vec<usize> = front.clone();
        order.extend((0..pts.len()).filter(|i| !on_front[*i]));
        for &i in &order {
            let (tw, th) = text_size(root, &pts[i].label, &style)?;
            let (cx, cy) = pix[i];
            let candidates = [
                (cx + 10, cy - th / 2),
                (cx - 10 - tw, cy - th / 2),
                (cx - tw / 2, cy - 10 - th),
                (cx - tw / 2, cy + 10),
                (cx + 10, cy - 6 - th),
                (cx + 10, cy + 6),
                (cx - 10 - tw, cy - 6 - th),
                (cx - 10 - tw, cy + 6),
            ];
            let clear = |(x, y): (i32, i32)| {
                let r = (x - 2, x + tw + 2, y - 1, y + th + 1);
                r.0 >= px0
                    && r.1 <= px1
                    && r.2 >= py0
                    && r.3 <= py1
                    && !placed
                        .iter()
                        .any(|q| r.0 < q.1 && r.1 > q.0 && r.2 < q.3 && r.3 > q.2)
                    && !pix
                        .iter()
                        .any(|&(x, y)| x + 6 > r.0 && x - 6 < r.1 && y + 6 > r.2 && y - 6 < r.3)
            };
            let (x, y) = candidates
                .iter()
                .copied()
                .find(|c| clear(*c))
                .unwrap_or(candidates[0]);
            placed.push((x - 2, x + tw + 2, y - 1, y + th + 1));
            let fg = if on_front[i] { BLACK } else { MUTED };
            root.draw(&Text::new(
                pts[i].label.clone(),
                (x, y),
                style.color(&fg).pos(Pos::new(HPos::Left, VPos::Top)),
            ))
            .map_err(draw_err)?;
        }

        if let Some(msg) = &empty {
            centre_message(root, ((px0, py0), (px1, py1)), msg)?;
        } else {
            chart
                .configure_series_labels()
                .position(SeriesLabelPosition::UpperRight)
                .label_font(text(SMALL_SIZE))
                .background_style(WHITE.mix(0.85))
                .border_style(BLACK.mix(0.4))
                .margin(10)
                .draw()
                .map_err(draw_err)?;
        }
        notes.extend(empty);
        Ok(notes)
    }
}

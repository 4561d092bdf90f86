//! A grid of magnitudes over two swept parameters (e.g. loss probability by ribbon count and
//! cross-link spacing), coloured on a log scale, with a colour bar and the value in each cell.

use super::axis::{decade_range, fmt_decade, fmt_sig};
use super::colour::{is_dark, scale};
use super::layout::{
    centre_message, frame, plot_rect, text, text_size, AXIS_SIZE, SMALL_SIZE, TICK_SIZE,
};
use super::{check_len, check_range, draw_err, render, Chart, ChartSpec, Figure, PlotError};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Values over a grid of two parameters.
#[derive(Clone, Debug, PartialEq)]
pub struct HeatmapGrid {
    /// Labels of the columns (values of the horizontal parameter), left to right.
    pub x_labels: Vec<String>,
    /// Labels of the rows (values of the vertical parameter), bottom to top.
    pub y_labels: Vec<String>,
    /// `z[row][column]`, non-negative; `row` indexes `y_labels`, `column` indexes `x_labels`.
    pub z: Vec<Vec<f64>>,
    /// What the colour shows, with its unit, e.g. "Loss probability over 10 years (-)".
    pub z_label: String,
}

/// A heat map with a logarithmic colour scale (whole decades), a colour bar, and each cell's
/// value written in it when the cells are large enough. Zero cells are grey and labelled "0".
///
/// Errors: a row count different from `y_labels`, a row length different from `x_labels`,
/// negative or non-finite values. An empty grid or an all-zero grid gives an empty chart with
/// a note.
pub fn heatmap(grid: &HeatmapGrid, spec: &ChartSpec) -> Result<Figure, PlotError> {
    check_len("heatmap rows", grid.y_labels.len(), grid.z.len())?;
    for (i, row) in grid.z.iter().enumerate() {
        check_len(&format!("heatmap row {i}"), grid.x_labels.len(), row.len())?;
        check_range(
            &format!("heatmap row {i}"),
            row.iter().copied(),
            0.0,
            f64::MAX,
        )?;
    }
    render(spec, &Heatmap { grid, spec })
}

struct Heatmap<'a> {
    grid: &'a HeatmapGrid,
    spec: &'a ChartSpec,
}

const ZERO_CELL: RGBColor = RGBColor(232, 232, 232);

impl Chart for Heatmap<'_> {
    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<Vec<String>, PlotError> {
        let g = self.grid;
        let (nx, ny) = (g.x_labels.len(), g.y_labels.len());
        let values = || g.z.iter().flatten().copied();
        let min_pos = values().filter(|v| *v > 0.0).fold(f64::INFINITY, f64::min);
        let max = values().fold(0.0, f64::max);
        let mut notes = Vec::new();
        let mut empty = None;
        let (d0, d1) = if min_pos.is_finite() {
            decade_range(min_pos, max)
        } else {
            (-6.0, 0.0)
        };
        if nx == 0 || ny == 0 {
            empty = Some("No grid points to show.".to_string());
        } else if !min_pos.is_finite() {
            empty = Some("Every value is zero: nothing to show on a log colour scale.".to_string());
        }
        let t_of = |v: f64| (v.log10() - d0) / (d1 - d0);

        let area = frame(root, &self.spec.title, &[])?;
        let (aw, _) = area.dim_in_pixel();
        let (main, side) = area.split_horizontally(aw.saturating_sub(150));
        let mut chart = ChartBuilder::on(&main)
            .margin(16)
            .x_label_area_size(56)
            .y_label_area_size(96)
            .build_cartesian_2d(
                (0..nx.max(1) as i32 - 1).into_segmented(),
                (0..ny.max(1) as i32 - 1).into_segmented(),
            )
            .map_err(draw_err)?;
        let ((px0, py0), (px1, py1)) = plot_rect(&chart);
        let cell_w = (px1 - px0) as f64 / nx.max(1) as f64;
        let cell_h = (py1 - py0) as f64 / ny.max(1) as f64;

        // Thin the axis labels when they would collide.
        let mut widest = 0;
        for l in &g.x_labels {
            widest = widest.max(text_size(root, l, &text(TICK_SIZE))?.0);
        }
        let every_x = ((widest as f64 + 12.0) / cell_w).ceil().max(1.0) as usize;
        let every_y = ((TICK_SIZE * 1.3) / cell_h).ceil().max(1.0) as usize;
        let label = |labels: &[String], every: usize, v: &SegmentValue<i32>| match v {
            SegmentValue::CenterOf(i)
                if *i >= 0 && (*i as usize) < labels.len() && (*i as usize) % every == 0 =>
            {
                labels[*i as usize].clone()
            }
            _ => String::new(),
        };
        let xfmt = |v: &SegmentValue<i32>| label(&g.x_labels, every_x, v);
        let yfmt = |v: &SegmentValue<i32>| label(&g.y_labels, every_y, v);
        chart
            .configure_mesh()
            .disable_mesh()
            .x_desc(self.spec.x_label.as_str())
            .y_desc(self.spec.y_label.as_str())
            .label_style(text(TICK_SIZE))
            .axis_desc_style(text(AXIS_SIZE))
            .x_labels(nx + 1)
            .y_labels(ny + 1)
            .x_label_formatter(&xfmt)
            .y_label_formatter(&yfmt)
            .draw()
            .map_err(draw_err)?;

        // Cells.
        for (r, row) in g.z.iter().enumerate() {
            for (c, v) in row.iter().enumerate() {
                let colour = if *v > 0.0 { scale(t_of(*v)) } else { ZERO_CELL };
                let (c, r) = (c as i32, r as i32);
                chart
                    .draw_series(std::iter::once(Rectangle::new(
                        [
                            (SegmentValue::Exact(c), SegmentValue::Exact(r)),
                            (SegmentValue::Exact(c + 1), SegmentValue::Exact(r + 1)),
                        ],
                        colour.filled(),
                    )))
                    .map_err(draw_err)?;
            }
        }
        // Cell labels, if they fit at a readable size.
        let widest_value = values().map(|v| fmt_sig(v, 2)).try_fold(0, |w, s| {
            text_size(root, &s, &text(SMALL_SIZE)).map(|(tw, _)| w.max(tw))
        })?;
        if empty.is_none() && (widest_value as f64 + 6.0 > cell_w || SMALL_SIZE * 1.1 > cell_h) {
            notes.push("Cells are too small for their values to be written; read them from the colour bar.".to_string());
        } else if empty.is_none() {
            for (r, row) in g.z.iter().enumerate() {
                for (c, v) in row.iter().enumerate() {
                    let bg = if *v > 0.0 { scale(t_of(*v)) } else { ZERO_CELL };
                    let fg = if is_dark(bg) { WHITE } else { BLACK };
                    let pos = (
                        px0 + ((c as f64 + 0.5) * cell_w) as i32,
                        py1 - ((r as f64 + 0.5) * cell_h) as i32,
                    );
                    let style = text(SMALL_SIZE)
                        .color(&fg)
                        .pos(Pos::new(HPos::Center, VPos::Center));
                    root.draw(&Text::new(fmt_sig(*v, 2), pos, style))
                        .map_err(draw_err)?;
                }
            }
        }

        // Colour bar on the right, in pixels: one strip per pixel row, decade ticks.
        let (sx, _) = side.get_base_pixel();
        let bar_x0 = sx + 14;
        let bar_x1 = bar_x0 + 22;
        let (bar_y0, bar_y1) = (py0, py1);
        for y in bar_y0..bar_y1 {
            let t = (bar_y1 - 1 - y) as f64 / ((bar_y1 - bar_y0 - 1).max(1)) as f64;
            root.draw(&Rectangle::new(
                [(bar_x0, y), (bar_x1, y + 1)],
                scale(t).filled(),
            ))
            .map_err(draw_err)?;
        }
        root.draw(&Rectangle::new(
            [(bar_x0, bar_y0), (bar_x1, bar_y1)],
            BLACK.stroke_width(1),
        ))
        .map_err(draw_err)?;
        let decades = (d1 - d0).round() as i32;
        let step = ((decades + 7) / 8).max(1);
        let mut k = 0;
        while k <= decades {
            let e = d0 + k as f64;
            let y = bar_y1 - ((k as f64 / decades as f64) * (bar_y1 - bar_y0) as f64) as i32;
            root.draw(&PathElement::new(
                vec![(bar_x1, y), (bar_x1 + 5, y)],
                BLACK.stroke_width(1),
            ))
            .map_err(draw_err)?;
            let style = text(TICK_SIZE).pos(Pos::new(HPos::Left, VPos::Center));
            root.draw(&Text::new(fmt_decade(e), (bar_x1 + 8, y), style))
                .map_err(draw_err)?;
            k += step;
        }
        let desc = text(AXIS_SIZE)
            .transform(FontTransform::Rotate90)
            .pos(Pos::new(HPos::Center, VPos::Top));
        root.draw(&Text::new(
            g.z_label.clone(),
            (sx + 150 - 8, (bar_y0 + bar_y1) / 2),
            desc,
        ))
        .map_err(draw_err)?;

        if let Some(msg) = &empty {
            centre_message(root, ((px0, py0), (px1, py1)), msg)?;
        }
        notes.extend(empty);
        Ok(notes)
    }
}

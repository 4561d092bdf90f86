//! Shared layout: text styles, the title strip, the notes footer, the series palette.

use super::{draw_err, PlotError, FONT};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Title text size (drawing-library units; about 21 px per em).
pub(super) const TITLE_SIZE: f64 = 26.0;
/// Tick label size.
pub(super) const TICK_SIZE: f64 = 17.0;
/// Axis description size.
pub(super) const AXIS_SIZE: f64 = 19.0;
/// Notes, legends and in-chart labels.
pub(super) const SMALL_SIZE: f64 = 16.0;

/// Colours for series, distinguishable by readers with the common colour-vision deficiencies.
pub(super) const PALETTE: [RGBColor; 6] = [
    RGBColor(0, 114, 178),
    RGBColor(213, 94, 0),
    RGBColor(0, 158, 115),
    RGBColor(204, 121, 167),
    RGBColor(230, 159, 0),
    RGBColor(86, 180, 233),
];
/// Grey for grid lines and secondary marks.
pub(super) const GRID: RGBColor = RGBColor(225, 225, 225);
/// Grey for notes and de-emphasised marks.
pub(super) const MUTED: RGBColor = RGBColor(110, 110, 110);

pub(super) fn palette(i: usize) -> RGBColor {
    PALETTE[i % PALETTE.len()]
}

/// A text style in the embedded font.
pub(super) fn text(size: f64) -> TextStyle<'static> {
    (FONT, size).into_font().color(&BLACK)
}

/// Width and height in pixels of `s` drawn in `style`.
pub(super) fn text_size<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    s: &str,
    style: &TextStyle,
) -> Result<(i32, i32), PlotError> {
    let (w, h) = area.estimate_text_size(s, style).map_err(draw_err)?;
    Ok((w as i32, h as i32))
}

/// Greedy word wrap of `s` to lines no wider than `max_w` pixels.
fn wrap<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    s: &str,
    style: &TextStyle,
    max_w: i32,
) -> Result<Vec<String>, PlotError> {
    let mut lines: Vec<String> = Vec::new();
    let mut line = String::new();
    for word in s.split_whitespace() {
        let candidate = if line.is_empty() {
            word.to_string()
        } else {
            format!("{line} {word}")
        };
        if !line.is_empty() && text_size(area, &candidate, style)?.0 > max_w {
            lines.push(std::mem::replace(&mut line, word.to_string()));
        } else {
            line = candidate;
        }
    }
    if !line.is_empty() {
        lines.push(line);
    }
    Ok(lines)
}

/// Draw the title at the top (wrapped to two lines at most, shrinking the font if needed) and
/// the notes at the bottom; return the area left for the chart.
pub(super) fn frame<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    title: &str,
    notes: &[String],
) -> Result<DrawingArea<DB, Shift>, PlotError> {
    let (w, h) = root.dim_in_pixel();
    let max_w = w as i32 - 40;
    let mut size = TITLE_SIZE;
    let mut lines = wrap(root, title, &text(size), max_w)?;
    while lines.len() > 2 && size > 16.0 {
        size -= 2.0;
        lines = wrap(root, title, &text(size), max_w)?;
    }
    lines.truncate(3);
    let line_h = (size * 1.05) as i32;
    let style = text(size).pos(Pos::new(HPos::Center, VPos::Top));
    for (i, line) in lines.iter().enumerate() {
        root.draw(&Text::new(
            line.clone(),
            (w as i32 / 2, 10 + i as i32 * line_h),
            style.clone(),
        ))
        .map_err(draw_err)?;
    }
    let top = 18 + lines.len() as i32 * line_h;

    let note_style = text(SMALL_SIZE)
        .color(&MUTED)
        .pos(Pos::new(HPos::Left, VPos::Bottom));
    let note_h = (SMALL_SIZE * 1.1) as i32;
    let mut note_lines = Vec::new();
    for note in notes {
        note_lines.extend(wrap(root, &format!("Note: {note}"), &note_style, max_w)?);
    }
    let bottom = h as i32 - 6 - note_lines.len() as i32 * note_h;
    for (i, line) in note_lines.iter().enumerate() {
        let y = bottom + (i as i32 + 1) * note_h;
        root.draw(&Text::new(line.clone(), (20, y), note_style.clone()))
            .map_err(draw_err)?;
    }
    Ok(root.margin(top.max(0) as u32, (h as i32 - bottom).max(0) as u32, 0, 0))
}

/// Write `msg` in the middle of the pixel rectangle (an empty chart's explanation).
pub(super) fn centre_message<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    rect: ((i32, i32), (i32, i32)),
    msg: &str,
) -> Result<(), PlotError> {
    let ((x0, y0), (x1, y1)) = rect;
    let style = text(AXIS_SIZE)
        .color(&MUTED)
        .pos(Pos::new(HPos::Center, VPos::Center));
    root.draw(&Text::new(
        msg.to_string(),
        ((x0 + x1) / 2, (y0 + y1) / 2),
        style,
    ))
    .map_err(draw_err)
}

/// Pixel rectangle of a chart's plotting area, in the root's coordinates.
pub(super) fn plot_rect<DB: DrawingBackend, CT: plotters::coord::CoordTranslate>(
    chart: &ChartContext<DB, CT>,
) -> ((i32, i32), (i32, i32)) {
    let (xr, yr) = chart.plotting_area().get_pixel_range();
    ((xr.start, yr.start), (xr.end, yr.end))
}

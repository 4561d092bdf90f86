//! Probability of survival (or of loss) against time, with interval bands.

use super::axis::{decade_range, fmt_decade, linear_range, tick_label};
use super::layout::{
    centre_message, frame, palette, plot_rect, text, AXIS_SIZE, GRID, SMALL_SIZE, TICK_SIZE,
};
use super::{
    check_finite, check_len, check_range, draw_err, render, Chart, ChartSpec, Figure, PlotError,
};
use plotters::coord::Shift;
use plotters::prelude::*;

/// An interval band around a series, e.g. a 95 % Clopper–Pearson interval.
#[derive(Clone, Debug, PartialEq)]
pub struct Band {
    /// Legend text for the band, e.g. "95 % interval".
    pub label: String,
    /// Lower bound at each point of the series.
    pub lo: Vec<f64>,
    /// Upper bound at each point of the series.
    pub hi: Vec<f64>,
}

/// One named line of (time, probability) points.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// Legend text, e.g. "Monte Carlo" or "Markov estimate".
    pub name: String,
    /// Time of each point, years since the start.
    pub x_years: Vec<f64>,
    /// Probability at each point: survival for [`ProbabilityAxis::Survival`], loss for
    /// [`ProbabilityAxis::LossLog`].
    pub y: Vec<f64>,
    /// Optional interval band, same length as `y`.
    pub band: Option<Band>,
    /// Draw the line dashed (for an approximate or analytic estimate).
    pub dashed: bool,
}

impl Series {
    /// A solid line without a band.
    pub fn new(name: impl Into<String>, x_years: Vec<f64>, y: Vec<f64>) -> Self {
        Series {
            name: name.into(),
            x_years,
            y,
            band: None,
            dashed: false,
        }
    }

    /// Add an interval band.
    pub fn with_band(mut self, label: impl Into<String>, lo: Vec<f64>, hi: Vec<f64>) -> Self {
        self.band = Some(Band {
            label: label.into(),
            lo,
            hi,
        });
        self
    }

    /// Draw this series dashed.
    pub fn dashed(mut self) -> Self {
        self.dashed = true;
        self
    }
}

/// Which probability the vertical axis shows.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ProbabilityAxis {
    /// Probability of survival on a linear axis, zoomed to the data with 1 at the top.
    Survival,
    /// Probability of loss on a logarithmic axis (whole decades), for small values such as
    /// 1e-6. Zero values cannot be drawn and are left out with a note.
    LossLog,
}

/// Probability against time for one or more series, each with an optional interval band.
///
/// Errors: non-finite times, probabilities outside [0, 1], or a band whose length differs from
/// its series. No points at all, or no positive value on the log axis, gives an empty chart
/// with a note.
pub fn survival_chart(
    series: &[Series],
    axis: ProbabilityAxis,
    spec: &ChartSpec,
) -> Result<Figure, PlotError> {
    for s in series {
        check_len(
            &format!("series '{}' y", s.name),
            s.x_years.len(),
            s.y.len(),
        )?;
        check_finite(
            &format!("series '{}' x_years", s.name),
            s.x_years.iter().copied(),
        )?;
        check_range(
            &format!("series '{}' y", s.name),
            s.y.iter().copied(),
            0.0,
            1.0,
        )?;
        if let Some(b) = &s.band {
            check_len(
                &format!("series '{}' band lo", s.name),
                s.y.len(),
                b.lo.len(),
            )?;
            check_len(
                &format!("series '{}' band hi", s.name),
                s.y.len(),
                b.hi.len(),
            )?;
            check_range(
                &format!("series '{}' band lo", s.name),
                b.lo.iter().copied(),
                0.0,
                1.0,
            )?;
            check_range(
                &format!("series '{}' band hi", s.name),
                b.hi.iter().copied(),
                0.0,
                1.0,
            )?;
        }
    }
    render(spec, &SurvivalChart { series, axis, spec })
}

struct SurvivalChart<'a> {
    series: &'a [Series],
    axis: ProbabilityAxis,
    spec: &'a ChartSpec,
}

impl SurvivalChart<'_> {
    fn all_y(&self) -> impl Iterator<Item = f64> + '_ {
        self.series.iter().flat_map(|s| {
            let band = s.band.iter().flat_map(|b| b.lo.iter().chain(b.hi.iter()));
            s.y.iter().chain(band).copied()
        })
    }
}

impl Chart for SurvivalChart<'_> {
    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<Vec<String>, PlotError> {
        let n_points: usize = self.series.iter().map(|s| s.y.len()).sum();
        let log = self.axis == ProbabilityAxis::LossLog;
        let mut notes = Vec::new();
        let mut empty = None;
        if n_points == 0 {
            empty = Some("No data points to show.".to_string());
        }

        // Vertical range, in plotted coordinates (exponents on the log axis).
        let (y0, y1) = if log {
            let min_pos = self
                .all_y()
                .filter(|v| *v > 0.0)
                .fold(f64::INFINITY, f64::min);
            let max = self.all_y().fold(0.0, f64::max);
            let zeros = self
                .series
                .iter()
                .flat_map(|s| &s.y)
                .filter(|v| **v == 0.0)
                .count();
            if !min_pos.is_finite() {
                if n_points > 0 {
                    empty = Some(
                        "Every loss probability is zero: nothing to show on a log scale.".into(),
                    );
                }
                (-6.0, 0.0)
            } else {
                if zeros > 0 {
                    notes.push(format!("{zeros} point(s) with zero loss probability cannot be drawn on the log scale and are left out."));
                }
                decade_range(min_pos, max)
            }
        } else {
            let min = self.all_y().fold(1.0, f64::min);
            let lo = if min >= 1.0 {
                0.0
            } else {
                (min - 0.08 * (1.0 - min)).max(0.0)
            };
            (lo, 1.0 + 0.03 * (1.0 - lo))
        };
        let to_y = |v: f64| {
            if log {
                v.max(10f64.powf(y0)).log10()
            } else {
                v
            }
        };
        let (xmin, xmax) = self
            .series
            .iter()
            .flat_map(|s| &s.x_years)
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
                (a.min(*x), b.max(*x))
            });
        let (x0, x1) = linear_range(xmin, xmax, true);

        let area = frame(root, &self.spec.title, &notes)?;
        let mut chart = ChartBuilder::on(&area)
            .margin(16)
            .margin_right(30)
            .x_label_area_size(56)
            .y_label_area_size(86)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(draw_err)?;
        let xfmt = |v: &f64| tick_label(*v, x1 - x0);
        let yfmt = |v: &f64| {
            if log {
                fmt_decade(*v)
            } else if *v > 1.0 + 1e-12 {
                String::new()
            } else {
                tick_label(*v, y1 - y0)
            }
        };
        let mut mesh = chart.configure_mesh();
        mesh.x_desc(self.spec.x_label.as_str())
            .y_desc(self.spec.y_label.as_str())
            .label_style(text(TICK_SIZE))
            .axis_desc_style(text(AXIS_SIZE))
            .light_line_style(GRID.mix(0.6))
            .max_light_lines(1)
            .bold_line_style(GRID)
            .x_label_formatter(&xfmt)
            .y_label_formatter(&yfmt)
            .x_labels(10);
        if log {
            mesh.y_labels((y1 - y0) as usize + 1).y_max_light_lines(0);
        } else {
            mesh.y_labels(10);
        }
        mesh.draw().map_err(draw_err)?;

        if log {
            // Minor lines at 2..9 times each decade.
            let minor = GRID.mix(0.5);
            let mut k = y0;
            while k < y1 {
                for m in 2..10 {
                    let y = k + (m as f64).log10();
                    chart
                        .draw_series(LineSeries::new([(x0, y), (x1, y)], minor))
                        .map_err(draw_err)?;
                }
                k += 1.0;
            }
        } else if y1 > 1.0 {
            // The certainty line.
            chart
                .draw_series(LineSeries::new([(x0, 1.0), (x1, 1.0)], BLACK.mix(0.3)))
                .map_err(draw_err)?;
        }

        // Bands first, so lines stay on top.
        for (i, s) in self.series.iter().enumerate() {
            let Some(b) = &s.band else { continue };
            if s.y.is_empty() {
                continue;
            }
            let colour = palette(i);
            let mut order: Vec<usize> = (0..s.y.len()).collect();
            order.sort_by(|a, b| s.x_years[*a].total_cmp(&s.x_years[*b]).then(a.cmp(b)));
            let mut poly: Vec<(f64, f64)> = order
                .iter()
                .map(|&j| (s.x_years[j], to_y(b.lo[j].min(b.hi[j]))))
                .collect();
            poly.extend(
                order
                    .iter()
                    .rev()
                    .map(|&j| (s.x_years[j], to_y(b.lo[j].max(b.hi[j])))),
            );
            chart
                .draw_series(std::iter::once(Polygon::new(
                    poly,
                    colour.mix(0.22).filled(),
                )))
                .map_err(draw_err)?
                .label(format!("{}: {}", s.name, b.label))
                .legend(move |(x, y)| {
                    Rectangle::new([(x, y - 6), (x + 20, y + 6)], colour.mix(0.3).filled())
                });
        }
        for (i, s) in self.series.iter().enumerate() {
            if s.y.is_empty() {
                continue;
            }
            let colour = palette(i);
            let style = colour.stroke_width(3);
            let mut order: Vec<usize> = (0..s.y.len()).collect();
            order.sort_by(|a, b| s.x_years[*a].total_cmp(&s.x_years[*b]).then(a.cmp(b)));
            // On the log axis a zero breaks the line.
            let mut runs: Vec<Vec<(f64, f64)>> = vec![Vec::new()];
            for &j in &order {
                if log && s.y[j] <= 0.0 {
                    runs.push(Vec::new());
                } else {
                    runs.last_mut()
                        .expect("runs is never empty")
                        .push((s.x_years[j], to_y(s.y[j])));
                }
            }
            runs.retain(|r| !r.is_empty());
            for (k, run) in runs.iter().enumerate() {
                let drawn = if s.dashed {
                    chart.draw_series(DashedLineSeries::new(run.clone(), 12, 7, style))
                } else {
                    chart.draw_series(LineSeries::new(run.clone(), style))
                }
                .map_err(draw_err)?;
                if k == 0 {
                    let dashed = s.dashed;
                    drawn.label(s.name.clone()).legend(move |(x, y)| {
                        let (a, b) = if dashed { (9, 15) } else { (24, 0) };
                        EmptyElement::at((x, y))
                            + PathElement::new(vec![(0, 0), (a, 0)], colour.stroke_width(3))
                            + PathElement::new(vec![(b, 0), (24, 0)], colour.stroke_width(3))
                    });
                }
                if run.len() == 1 || run.len() <= 40 {
                    chart
                        .draw_series(run.iter().map(|p| Circle::new(*p, 3, colour.filled())))
                        .map_err(draw_err)?;
                }
            }
        }

        if let Some(msg) = &empty {
            centre_message(root, plot_rect(&chart), msg)?;
        } else {
            chart
                .configure_series_labels()
                .position(if log {
                    SeriesLabelPosition::UpperLeft
                } else {
                    SeriesLabelPosition::LowerLeft
                })
                .label_font(text(SMALL_SIZE))
                .background_style(WHITE.mix(0.85))
                .border_style(BLACK.mix(0.4))
                .margin(10)
                .draw()
                .map_err(draw_err)?;
        }
        let mut all = notes;
        all.extend(empty);
        Ok(all)
    }
}

//! Charts as PNG bytes and SVG text, drawn from plain data.
//!
//! Every chart function takes plain values (numbers, labels) and a [`ChartSpec`] with the
//! title and axis labels, and returns a [`Figure`] holding the same drawing twice: a PNG for
//! files and an SVG for the HTML report. Nothing here knows about the engine.
//!
//! Text is drawn with DejaVu Sans, embedded in the binary (`fonts/`, with its licence), so a
//! drawing never depends on the fonts of the machine it runs on, and the same input gives the
//! same bytes. Non-finite input is refused with [`PlotError::NonFinite`]; input with nothing to
//! draw (no points, every value zero on a log axis) gives an empty chart carrying a note, also
//! listed in [`Figure::notes`] so a caption can repeat it.

mod axis;
mod bar;
mod colour;
mod distribution;
mod heatmap;
mod layout;
mod pareto;
mod survival;
mod tornado;

pub use bar::{bar_chart, Bar};
pub use distribution::{distribution_chart, histogram_chart, HistogramBin, Marker, PmfPoint};
pub use heatmap::{heatmap, HeatmapGrid};
pub use pareto::{pareto_chart, ParetoPoint};
pub use survival::{survival_chart, Band, ProbabilityAxis, Series};
pub use tornado::{tornado_chart, SwingRow};

use plotters::coord::Shift;
use plotters::prelude::*;

/// Default canvas width: readable on a laptop screen and on an A4 page.
pub const DEFAULT_WIDTH_PX: u32 = 900;
/// Default canvas height.
pub const DEFAULT_HEIGHT_PX: u32 = 600;
/// Smallest accepted canvas side; below this the labels no longer fit.
pub const MIN_SIDE_PX: u32 = 300;
/// Largest accepted canvas side (keeps the PNG buffer bounded).
pub const MAX_SIDE_PX: u32 = 4000;

/// Font family name under which the embedded font is registered.
const FONT: &str = "sans-serif";
static FONT_BYTES: &[u8] = include_bytes!("../fonts/DejaVuSans.ttf");

/// A rendered chart: the same drawing as PNG bytes and as SVG text.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Figure {
    /// PNG file contents (8-bit RGB).
    pub png: Vec<u8>,
    /// SVG document (one `<svg>` element, no XML declaration), suitable for inlining in HTML.
    pub svg: String,
    /// Notes drawn on the chart about what could not be shown (empty when all data is shown).
    pub notes: Vec<String>,
    /// Canvas width in pixels.
    pub width_px: u32,
    /// Canvas height in pixels.
    pub height_px: u32,
}

/// What a chart says: its title (the question it answers), axis labels with units, and size.
#[derive(Clone, Debug, PartialEq)]
pub struct ChartSpec {
    /// Title: the question the chart answers, e.g. "How likely is the tether to survive?".
    pub title: String,
    /// Horizontal axis label with its unit, e.g. "Time since start (years)".
    pub x_label: String,
    /// Vertical axis label with its unit, e.g. "Probability of survival (-)".
    pub y_label: String,
    /// Canvas width in pixels.
    pub width_px: u32,
    /// Canvas height in pixels.
    pub height_px: u32,
}

impl ChartSpec {
    /// A spec with the default 900 x 600 px canvas.
    pub fn new(
        title: impl Into<String>,
        x_label: impl Into<String>,
        y_label: impl Into<String>,
    ) -> Self {
        ChartSpec {
            title: title.into(),
            x_label: x_label.into(),
            y_label: y_label.into(),
            width_px: DEFAULT_WIDTH_PX,
            height_px: DEFAULT_HEIGHT_PX,
        }
    }

    /// The same spec on a canvas of another size.
    pub fn with_size_px(mut self, width_px: u32, height_px: u32) -> Self {
        self.width_px = width_px;
        self.height_px = height_px;
        self
    }
}

/// Why a chart could not be drawn.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlotError {
    /// A value is NaN or infinite.
    #[error("{what}: value {index} is not a finite number")]
    NonFinite {
        /// Which input holds the value.
        what: String,
        /// Position of the value in that input.
        index: usize,
    },
    /// A value lies outside the range the chart accepts (e.g. a probability above 1).
    #[error("{what}: value {index} is {value}, outside [{min}, {max}]")]
    OutOfRange {
        /// Which input holds the value.
        what: String,
        /// Position of the value in that input.
        index: usize,
        /// The value.
        value: f64,
        /// Smallest accepted value.
        min: f64,
        /// Largest accepted value.
        max: f64,
    },
    /// Two inputs that must have the same length do not.
    #[error("{what}: expected {expected} values, found {found}")]
    LengthMismatch {
        /// Which input has the wrong length.
        what: String,
        /// Length required.
        expected: usize,
        /// Length given.
        found: usize,
    },
    /// The canvas size is outside the supported range.
    #[error("canvas {width_px} x {height_px} px: each side must be between {MIN_SIDE_PX} and {MAX_SIDE_PX} px")]
    InvalidSize {
        /// Requested width.
        width_px: u32,
        /// Requested height.
        height_px: u32,
    },
    /// The embedded font could not be loaded.
    #[error("the embedded font could not be loaded")]
    Font,
    /// The drawing library reported an error.
    #[error("drawing failed: {0}")]
    Draw(String),
    /// PNG encoding failed.
    #[error("PNG encoding failed: {0}")]
    Png(String),
}

/// Map a drawing-library error to ours.
fn draw_err<E: std::error::Error + Send + Sync>(e: DrawingAreaErrorKind<E>) -> PlotError {
    PlotError::Draw(e.to_string())
}

/// One chart's drawing code, run once per backend.
trait Chart {
    /// Draw on `root` (already cleared to white); return notes about data not shown.
    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<Vec<String>, PlotError>;
}

fn register_font() -> Result<(), PlotError> {
    static ONCE: std::sync::OnceLock<bool> = std::sync::OnceLock::new();
    let ok = *ONCE.get_or_init(|| {
        plotters::style::register_font(FONT, FontStyle::Normal, FONT_BYTES).is_ok()
            && plotters::style::register_font(FONT, FontStyle::Bold, FONT_BYTES).is_ok()
    });
    if ok {
        Ok(())
    } else {
        Err(PlotError::Font)
    }
}

/// Draw `chart` to PNG and SVG.
fn render(spec: &ChartSpec, chart: &impl Chart) -> Result<Figure, PlotError> {
    let (w, h) = (spec.width_px, spec.height_px);
    if !(MIN_SIDE_PX..=MAX_SIDE_PX).contains(&w) || !(MIN_SIDE_PX..=MAX_SIDE_PX).contains(&h) {
        return Err(PlotError::InvalidSize {
            width_px: w,
            height_px: h,
        });
    }
    register_font()?;

    let mut rgb = vec![0u8; w as usize * h as usize * 3];
    let notes = {
        let root = BitMapBackend::with_buffer(&mut rgb, (w, h)).into_drawing_area();
        root.fill(&WHITE).map_err(draw_err)?;
        let notes = chart.draw(&root)?;
        root.present().map_err(draw_err)?;
        notes
    };
    let png = encode_png(&rgb, w, h)?;

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (w, h)).into_drawing_area();
        root.fill(&WHITE).map_err(draw_err)?;
        chart.draw(&root)?;
        root.present().map_err(draw_err)?;
    }
    Ok(Figure {
        png,
        svg,
        notes,
        width_px: w,
        height_px: h,
    })
}

/// Encode an 8-bit RGB buffer as PNG. Done here rather than by the drawing library so that no
/// image-processing dependency is needed; settings are fixed, so output is byte-stable.
fn encode_png(rgb: &[u8], w: u32, h: u32) -> Result<Vec<u8>, PlotError> {
    let mut out = Vec::new();
    let mut enc = png::Encoder::new(&mut out, w, h);
    enc.set_color(png::ColorType::Rgb);
    enc.set_depth(png::BitDepth::Eight);
    let mut writer = enc
        .write_header()
        .map_err(|e| PlotError::Png(e.to_string()))?;
    writer
        .write_image_data(rgb)
        .map_err(|e| PlotError::Png(e.to_string()))?;
    writer.finish().map_err(|e| PlotError::Png(e.to_string()))?;
    Ok(out)
}

/// Refuse NaN and infinities in `values`.
fn check_finite(what: &str, values: impl IntoIterator<Item = f64>) -> Result<(), PlotError> {
    match values.into_iter().position(|v| !v.is_finite()) {
        Some(index) => Err(PlotError::NonFinite {
            what: what.to_string(),
            index,
        }),
        None => Ok(()),
    }
}

/// Refuse values outside `[min, max]` (and non-finite ones).
fn check_range(
    what: &str,
    values: impl IntoIterator<Item = f64>,
    min: f64,
    max: f64,
) -> Result<(), PlotError> {
    for (index, value) in values.into_iter().enumerate() {
        if !value.is_finite() {
            return Err(PlotError::NonFinite {
                what: what.to_string(),
                index,
            });
        }
        if value < min || value > max {
            return Err(PlotError::OutOfRange {
                what: what.to_string(),
                index,
                value,
                min,
                max,
            });
        }
    }
    Ok(())
}

fn check_len(what: &str, expected: usize, found: usize) -> Result<(), PlotError> {
    if expected == found {
        Ok(())
    } else {
        Err(PlotError::LengthMismatch {
            what: what.to_string(),
            expected,
            found,
        })
    }
}

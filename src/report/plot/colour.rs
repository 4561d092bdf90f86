//! A sequential colour scale for magnitudes: pale yellow (low) through orange to dark red
//! (high), so that higher risk reads as hotter. Lightness falls monotonically, so it also
//! survives greyscale printing.

use plotters::style::RGBColor;

const STOPS: [(f64, [f64; 3]); 5] = [
    (0.00, [255.0, 255.0, 204.0]),
    (0.25, [254.0, 217.0, 118.0]),
    (0.50, [253.0, 141.0, 60.0]),
    (0.75, [227.0, 26.0, 28.0]),
    (1.00, [128.0, 0.0, 38.0]),
];

/// Colour at `t` in [0, 1] (clamped).
pub(super) fn scale(t: f64) -> RGBColor {
    let t = if t.is_nan() { 0.0 } else { t.clamp(0.0, 1.0) };
    let k = STOPS
        .iter()
        .rposition(|(s, _)| *s <= t)
        .unwrap_or(0)
        .min(STOPS.len() - 2);
    let (t0, c0) = STOPS[k];
    let (t1, c1) = STOPS[k + 1];
    let f = (t - t0) / (t1 - t0);
    let mix = |i: usize| (c0[i] + f * (c1[i] - c0[i])).round().clamp(0.0, 255.0) as u8;
    RGBColor(mix(0), mix(1), mix(2))
}

/// Whether text on `c` should be white rather than black (relative luminance below one half).
pub(super) fn is_dark(c: RGBColor) -> bool {
    let RGBColor(r, g, b) = c;
    (0.2126 * r as f64 + 0.7152 * g as f64 + 0.0722 * b as f64) < 128.0
}

#[cfg(test)]
mod tests {
    use super::*;

    // Source: the stop table above; ends and midpoint must reproduce it exactly.
    #[test]
    fn stops_and_contrast() {
        assert_eq!(scale(0.0), RGBColor(255, 255, 204));
        assert_eq!(scale(0.5), RGBColor(253, 141, 60));
        assert_eq!(scale(1.0), RGBColor(128, 0, 38));
        assert_eq!(scale(2.0), scale(1.0));
        assert!(!is_dark(scale(0.0)));
        assert!(is_dark(scale(1.0)));
    }
}

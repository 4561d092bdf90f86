//! Axis ranges and tick-label text.

/// Padded range for a linear axis holding `min..=max`; a degenerate range is widened so that
/// a single value sits in the middle. With `from_zero`, the axis starts at zero when all
/// values are non-negative.
pub(super) fn linear_range(min: f64, max: f64, from_zero: bool) -> (f64, f64) {
    let (mut lo, mut hi) = if min <= max { (min, max) } else { (0.0, 1.0) };
    if from_zero && lo >= 0.0 {
        lo = 0.0;
    }
    let span = hi - lo;
    if span <= f64::EPSILON * hi.abs().max(1e-300) || span == 0.0 {
        let half = if hi == 0.0 { 1.0 } else { 0.5 * hi.abs() };
        return (
            if from_zero && lo >= 0.0 {
                0.0
            } else {
                lo - half
            },
            hi + half,
        );
    }
    if !(from_zero && lo == 0.0) {
        lo -= 0.05 * span;
    }
    hi += 0.05 * span;
    (lo, hi)
}

/// Whole decades (as base-10 exponents) covering the positive values `min_pos..=max`.
pub(super) fn decade_range(min_pos: f64, max: f64) -> (f64, f64) {
    let lo = min_pos.log10().floor();
    let mut hi = max.log10().ceil();
    if hi <= lo {
        hi = lo + 1.0;
    }
    (lo, hi)
}

/// Decimal places that distinguish ticks about `span / 10` apart.
pub(super) fn decimals_for(span: f64) -> usize {
    if span.is_nan() || span <= 0.0 {
        return 0;
    }
    let d = (-(span / 10.0).log10()).ceil() + 1.0;
    d.clamp(0.0, 12.0) as usize
}

/// A tick label on a linear axis with at most `decimals` places, trailing zeros removed.
pub(super) fn fmt_linear(v: f64, decimals: usize) -> String {
    if v.abs() >= 1e6 {
        return fmt_sig(v, 3);
    }
    let mut s = format!("{v:.decimals$}");
    if s.contains('.') {
        s = s.trim_end_matches('0').trim_end_matches('.').to_string();
    }
    if s == "-0" {
        s = "0".into();
    }
    s
}

/// A tick label on a linear axis spanning `span`: plain decimals with the places that tell
/// ticks about `span / 10` apart, and for |v| >= 1e6 a mantissa with the same resolution
/// (fixed places, so neighbouring ticks never print alike: 1.5566e7, 1.5568e7, not 1.56e7
/// twice) instead of three significant digits whatever the span.
pub(super) fn tick_label(v: f64, span: f64) -> String {
    if v.abs() < 1e6 || !(span.is_finite() && span > 0.0) {
        return fmt_linear(v, decimals_for(span));
    }
    let e = v.abs().log10().floor();
    let d = (e - (span / 10.0).log10()).ceil().clamp(0.0, 12.0) as usize;
    format!("{:.*}e{}", d, v / 10f64.powf(e), e as i32)
}

/// A tick label on a log axis whose coordinate is the exponent `e`: only whole decades are
/// labelled, as plain decimals near 1 and as powers of ten elsewhere.
pub(super) fn fmt_decade(e: f64) -> String {
    let k = e.round();
    if (e - k).abs() > 1e-6 {
        return String::new();
    }
    let k = k as i32;
    match k {
        -3..=-1 => format!("{:.*}", (-k) as usize, 10f64.powi(k)),
        0..=3 => format!("{}", 10i32.pow(k as u32)),
        _ => format!("1e{k}"),
    }
}

/// `v` with `sig` significant digits, in scientific notation when far from 1.
pub(super) fn fmt_sig(v: f64, sig: usize) -> String {
    if v == 0.0 {
        return "0".into();
    }
    let mag = v.abs().log10().floor() as i32;
    if (-2..4).contains(&mag) {
        let decimals = (sig as i32 - 1 - mag).max(0) as usize;
        fmt_linear(v, decimals)
    } else {
        let s = format!("{:.*e}", sig.saturating_sub(1), v);
        // "3.20e-5" -> "3.2e-5"
        match s.split_once('e') {
            Some((m, e)) if m.contains('.') => {
                format!("{}e{}", m.trim_end_matches('0').trim_end_matches('.'), e)
            }
            _ => s,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Source: hand-worked expectations for the label rules written above.
    #[test]
    fn labels() {
        assert_eq!(fmt_decade(-6.0), "1e-6");
        assert_eq!(fmt_decade(-2.0), "0.01");
        assert_eq!(fmt_decade(0.0), "1");
        assert_eq!(fmt_decade(-2.5), "");
        assert_eq!(fmt_sig(3.2e-5, 2), "3.2e-5");
        assert_eq!(fmt_sig(0.5, 2), "0.5");
        assert_eq!(fmt_sig(1234.0, 3), "1234");
        assert_eq!(fmt_sig(12345.0, 3), "1.23e4");
        assert_eq!(fmt_linear(-0.0, 2), "0");
        assert_eq!(fmt_linear(0.99990, 5), "0.9999");
        // Large values: the mantissa resolves the tick spacing, with fixed places.
        assert_eq!(tick_label(1.5566e7, 2000.0), "1.55660e7");
        assert_eq!(tick_label(1.5568e7, 2000.0), "1.55680e7");
        assert_eq!(tick_label(1.6e7, 1.1e6), "1.60e7");
        assert_eq!(tick_label(1.58e7, 1.1e6), "1.58e7");
        assert_eq!(tick_label(250.0, 100.0), "250");
    }

    // Ticks of a narrow range of large values stay distinct (the Pareto chart's mass axis).
    #[test]
    fn narrow_large_ranges_keep_ticks_distinct() {
        for (lo, hi) in [(1.5566e7, 1.5568e7), (2.0e9, 2.0001e9), (1.0e6, 1.2e6)] {
            let span: f64 = hi - lo;
            let labels: Vec<String> = (0..=10)
                .map(|k| tick_label(lo + span * k as f64 / 10.0, span))
                .collect();
            for w in labels.windows(2) {
                assert_ne!(w[0], w[1], "{lo}..{hi}: {labels:?}");
            }
        }
    }

    // Source: hand-worked ranges; degenerate inputs must give a non-empty range.
    #[test]
    fn ranges() {
        assert_eq!(decade_range(3e-6, 2e-3), (-6.0, -2.0));
        assert_eq!(decade_range(1e-3, 1e-3), (-3.0, -2.0));
        let (lo, hi) = linear_range(5.0, 5.0, false);
        assert!(lo < 5.0 && hi > 5.0);
        let (lo, hi) = linear_range(0.0, 0.0, true);
        assert!(lo == 0.0 && hi > 0.0);
        assert_eq!(linear_range(0.0, 10.0, true), (0.0, 10.5));
    }
}

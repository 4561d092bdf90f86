//! Numbers to significant figures, as estimates are quoted.

/// Format a number to `sig` significant figures, switching to exponent form outside 1e-3..1e6.
/// Non-finite values print as Rust does (`NaN`, `inf`); zero prints as `0`.
pub fn sig(v: f64, sig: usize) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    if v == 0.0 {
        return "0".into();
    }
    let a = v.abs();
    if !(1e-3..1e6).contains(&a) {
        return format!("{:.*e}", sig.saturating_sub(1), v);
    }
    let digits = a.log10().floor() as i32;
    let decimals = (sig as i32 - 1 - digits).max(0) as usize;
    format!("{v:.decimals$}")
}

#[cfg(test)]
mod tests {
    use super::sig;

    // Source: the rounding rule itself (round half to even is not involved: the cases are
    // exact in binary or far from a tie).
    #[test]
    fn significant_figures_in_both_forms() {
        assert_eq!(sig(0.0, 3), "0");
        assert_eq!(sig(1234.5678, 3), "1235");
        assert_eq!(sig(0.012345, 3), "0.0123");
        assert_eq!(sig(4.65e-4, 3), "4.65e-4");
        assert_eq!(sig(2.5e7, 2), "2.5e7");
        assert_eq!(sig(-0.5, 2), "-0.50");
        assert_eq!(sig(f64::NAN, 3), "NaN");
    }
}

//! Unit conversions used across the crate. Everything inside the code is SI; these constants
//! turn the units of scenario fields and reports (hours, days, years) into seconds and back.
//! The year is the Julian year of the flux models (ECSS-E-ST-10-04C quotes fluxes per year).

/// Seconds in an hour.
pub const SECONDS_PER_HOUR: f64 = 3_600.0;
/// Seconds in a day.
pub const SECONDS_PER_DAY: f64 = 86_400.0;
/// Days in the model year (Julian, 365.25 d).
pub const DAYS_PER_YEAR: f64 = 365.25;
/// Seconds in the model year (Julian, 365.25 d = 3.15576e7 s).
pub const SECONDS_PER_YEAR: f64 = DAYS_PER_YEAR * SECONDS_PER_DAY;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_julian_year_in_seconds() {
        // 365.25 d x 86 400 s (the Julian year, IAU definition).
        assert_eq!(SECONDS_PER_YEAR, 3.15576e7);
        assert_eq!(SECONDS_PER_DAY, 24.0 * SECONDS_PER_HOUR);
    }
}

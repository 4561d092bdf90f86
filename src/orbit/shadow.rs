//! The Moon's shadow on the tether line: which points are dark at a given Sun phase, and for
//! what fraction of a month.
//!
//! **Geometry.** Sunlight is taken as parallel rays (the Sun is 400 times farther than the
//! tether is long) and the shadow as the cylinder of radius `R` behind the Moon. A point at
//! distance `r` from the Moon's centre along the unit vector `u` of the tether line is dark when
//! it lies behind the Moon (`u . s < 0`, `s` the unit vector to the Sun) and within the cylinder
//! (`r sin(theta) < R`, `theta` the angle between `u` and `-s`), that is when the Sun lies
//! within `alpha(r) = arcsin(R / r)` of the direction opposite the tether. The tether line is
//! fixed in the frame that turns with the Moon (it points at the Earth, or away from it), and
//! the Sun's direction turns once per synodic month in that frame, so the Sun angle grows
//! uniformly and a point is dark for `2 alpha / (2 pi) = arcsin(R / r) / pi` of every month
//! (1/2 at the surface).
//!
//! **The Sun angle** `psi` is measured at the Moon's centre from the tether's direction to the
//! Sun, in the sense of the Sun's apparent motion: `psi = 0` puts the Sun above the tether (all
//! of it lit), `psi = 180 deg` behind the Moon (the surface end dark). It is the same formula on
//! either side: the side only decides which lunar phase a given `psi` is. A near-side tether
//! points at the Earth, so its `psi = 180 deg` is new Moon (the Sun beyond the Moon as seen from
//! the Earth) and `psi = 0` full Moon; a far-side tether points away from the Earth, so the dark
//! middle of its month is at full Moon.
//!
//! Left out (each named in the model statement): the Sun's elevation out of the Moon's orbital
//! plane (up to about 5 deg, which makes the high points miss the shadow in some months, so the
//! cylinder in the plane over-states shade there), the umbra's taper and the penumbra (a cone
//! of half-angle about 0.27 deg: at 60 000 km the dark core is about 15 % narrower than the
//! cylinder), and the Earth's shadow (lunar eclipses, a few hours a few times a year).

use std::f64::consts::PI;

/// Mean synodic month, s: 29.530 589 d (the mean interval between new Moons; Astronomical
/// Almanac value, from memory).
pub const SYNODIC_MONTH_S: f64 = 29.530_589 * 86_400.0;

/// Rate of the Sun angle in the Moon's turning frame, rad/s.
pub fn sun_rate_rad_per_s() -> f64 {
    2.0 * PI / SYNODIC_MONTH_S
}

/// Half-width of the dark arc of Sun angles at distance `r_m` from the Moon's centre,
/// `arcsin(R / r)`, rad (pi/2 at or below the surface).
#[inline]
pub fn shadow_half_angle_rad(moon_radius_m: f64, r_m: f64) -> f64 {
    (moon_radius_m / r_m).min(1.0).asin()
}

/// Fraction of a synodic month that a point at `r_m` from the Moon's centre on the tether line
/// spends in the Moon's shadow, `arcsin(R / r) / pi` (dimensionless; 1/2 at the surface).
pub fn shaded_fraction_of_month(moon_radius_m: f64, r_m: f64) -> f64 {
    shadow_half_angle_rad(moon_radius_m, r_m) / PI
}

/// `x` reduced to (-pi, pi].
#[inline]
pub fn wrap_angle_rad(x: f64) -> f64 {
    let y = x - 2.0 * PI * ((x + PI) / (2.0 * PI)).floor();
    // y in [-pi, pi); move -pi to pi.
    if y <= -PI {
        y + 2.0 * PI
    } else {
        y
    }
}

/// How deep a point at `r_m` lies in the shadow at Sun angle `psi_rad`, rad: `alpha(r)` less
/// the angle between the Sun and the direction opposite the tether. Positive: dark; zero or
/// negative: lit (the boundary counts as lit).
#[inline]
pub fn shadow_depth_rad(moon_radius_m: f64, r_m: f64, psi_rad: f64) -> f64 {
    shadow_half_angle_rad(moon_radius_m, r_m) - wrap_angle_rad(psi_rad - PI).abs()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wrap_lands_in_the_half_open_circle() {
        for x in [-7.0, -PI, -1.0, 0.0, 1.0, PI, 4.0, 100.0] {
            let y = wrap_angle_rad(x);
            assert!(y > -PI && y <= PI, "{x} -> {y}");
            let turns = (x - y) / (2.0 * PI);
            assert!((turns - turns.round()).abs() < 1e-12);
        }
    }

    #[test]
    fn surface_is_dark_half_the_month() {
        let r = 1_737.4e3;
        assert!((shaded_fraction_of_month(r, r) - 0.5).abs() < 1e-15);
        assert!(shadow_depth_rad(r, r, PI) > 0.0);
        assert!(shadow_depth_rad(r, r, 0.0) < 0.0);
    }
}

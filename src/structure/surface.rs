//! The surface run: a base away from the tether's foot joined to it by ribbons lying on the
//! ground.
//!
//! A tether balanced through L1 (L2) hangs along the Earth–Moon line, so its foot is the
//! sub-Earth (anti-Earth) point on the equator whatever the base's position. A base elsewhere
//! (a polar or high-latitude site) is joined to the foot by the same ribbon bundle laid on the
//! surface along the great circle, of length `R × c` with `c` the central angle between the
//! base and the foot.
//!
//! **Central angle.** With latitudes `φ` and longitude difference `Δλ`,
//! `c = atan2(sqrt((cos φ2 sin Δλ)² + (cos φ1 sin φ2 − sin φ1 cos φ2 cos Δλ)²),
//! sin φ1 sin φ2 + cos φ1 cos φ2 cos Δλ)`: the spherical law of cosines for the cosine and the
//! cross product for the sine (the special case of Vincenty's formula on a sphere), well
//! conditioned at every distance, including near zero and near the antipode. Every point is
//! reachable; at the antipode the route is not unique but its length `π R` is.
//!
//! **Mechanics (engineering assumptions).** The surface run carries the anchor tension of the
//! hanging tether, constant along its length: friction with the ground and the turning
//! structure at the foot are neglected. It does not lift off: lying on a convex sphere under
//! tension `T` it presses on the ground with `T / R` per metre in addition to its weight. A
//! climber on it rests on the ground and adds no tension.

/// Central angle between two points on a sphere given by latitude and longitude in degrees,
/// radians, in `[0, π]` (module docs).
pub fn central_angle_rad(lat1_deg: f64, lon1_deg: f64, lat2_deg: f64, lon2_deg: f64) -> f64 {
    let (p1, p2) = (lat1_deg.to_radians(), lat2_deg.to_radians());
    let dl = (lon2_deg - lon1_deg).to_radians();
    let (s1, c1) = p1.sin_cos();
    let (s2, c2) = p2.sin_cos();
    let (sd, cd) = dl.sin_cos();
    let y = (c2 * sd).hypot(c1 * s2 - s1 * c2 * cd);
    let x = s1 * s2 + c1 * c2 * cd;
    y.atan2(x)
}

/// Length of the surface run from a base at (`lat_deg`, `lon_deg`) to the foot at
/// (0, `foot_lon_deg`) on a sphere of radius `radius_m`, m.
pub fn surface_run_length_m(radius_m: f64, lat_deg: f64, lon_deg: f64, foot_lon_deg: f64) -> f64 {
    radius_m * central_angle_rad(lat_deg, lon_deg, 0.0, foot_lon_deg)
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    /// Closed forms on a sphere [DERIVED]: pole to equator is a quarter circle; along the
    /// equator the angle is the longitude difference; along a meridian it is the latitude
    /// difference; the antipode is half a circle.
    #[test]
    fn closed_form_angles() {
        let close = |a: f64, b: f64| assert!((a - b).abs() < 1e-12, "{a} vs {b}");
        close(central_angle_rad(90.0, 0.0, 0.0, 0.0), PI / 2.0);
        close(central_angle_rad(-90.0, 123.0, 0.0, 0.0), PI / 2.0);
        close(central_angle_rad(0.0, 30.0, 0.0, 0.0), PI / 6.0);
        close(
            central_angle_rad(0.0, -170.0, 0.0, 170.0),
            20f64.to_radians(),
        );
        close(central_angle_rad(40.0, 0.0, 0.0, 0.0), 40f64.to_radians());
        close(central_angle_rad(0.0, 0.0, 0.0, 180.0), PI);
        close(central_angle_rad(0.0, 0.0, 0.0, 0.0), 0.0);
        close(central_angle_rad(0.0, 360.0, 0.0, 0.0), 0.0);
    }

    /// Against the spherical law of cosines written out independently (away from 0 and π,
    /// where it is well conditioned).
    #[test]
    fn agrees_with_law_of_cosines() {
        for &(lat, lon) in &[(60.0, 60.0), (-35.0, 110.0), (85.5, -20.0), (12.0, 179.0)] {
            let (p, l): (f64, f64) = (f64::to_radians(lat), f64::to_radians(lon));
            let cos_c = p.sin() * 0.0f64.sin() + p.cos() * 0.0f64.cos() * l.cos();
            let c = cos_c.acos();
            assert!((central_angle_rad(lat, lon, 0.0, 0.0) - c).abs() < 1e-12);
        }
        // cos c = cos 60 cos 60 = 1/4 for (60 N, 60 E) from (0, 0).
        assert!((central_angle_rad(60.0, 60.0, 0.0, 0.0) - 0.25f64.acos()).abs() < 1e-12);
    }

    #[test]
    fn small_distances_are_accurate() {
        // 1 m on the Moon: the law of cosines loses most digits here; this form does not.
        let r: f64 = 1_737.4e3;
        let dlat_deg = (1.0 / r).to_degrees();
        let l = surface_run_length_m(r, dlat_deg, 0.0, 0.0);
        assert!((l - 1.0).abs() < 1e-9, "{l}");
    }
}

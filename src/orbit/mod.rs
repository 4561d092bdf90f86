//! Earth–Moon geometry in the circular restricted three-body problem (CR3BP).
//!
//! This module owns the physical constants of the Earth–Moon pair, the collinear Lagrange
//! points L1 and L2, and the effective (gravity + centrifugal) acceleration and potential
//! along the Earth–Moon line in the frame that rotates with the Moon. A tether hanging from a
//! lunar equatorial base through L1 (near side) or L2 (far side) lies on that line, so these
//! one-dimensional quantities are all the structure model needs.
//!
//! Choices that are not obvious:
//! - The mean motion is derived from Kepler's third law with the CR3BP distance `D`
//!   (`n^2 D^3 = GM_E + GM_M`), not from the sidereal month. Only then is L1/L2 an exact
//!   equilibrium of the rotating-frame field, which the tension integral relies on.
//! - Distances along the tether are measured from the Moon's centre (`r_from_moon_m`), with a
//!   [`Side`] saying which way; the barycentric coordinate `x` is internal.
//! - The scalar functions return plain `f64` because they are evaluated inside integrals. They
//!   are defined for every finite `r_from_moon_m > 0` except the Earth's centre itself; a
//!   non-positive or non-finite distance yields `NaN`. Callers validating user input should use
//!   [`EarthMoon::check_distance_from_moon_m`], which returns a typed error instead.

pub mod shadow;

use thiserror::Error;

/// Which side of the Moon the tether hangs on.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Side {
    /// Toward the Earth, through L1.
    Near,
    /// Away from the Earth, through L2.
    Far,
}

/// Errors from validating a geometric input.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum OrbitError {
    /// A distance from the Moon's centre was not a finite positive number, or it placed the
    /// point at the Earth's centre.
    #[error("distance from the Moon's centre {value_m} m is invalid: {rule}")]
    InvalidDistance {
        /// The offending value, in metres.
        value_m: f64,
        /// The rule it broke.
        rule: &'static str,
    },
}

/// Physical constants of the Earth–Moon CR3BP.
///
/// Build the published set with [`EarthMoon::standard`]; the fields are public so that a
/// sensitivity study can perturb one constant.
#[derive(Clone, Debug)]
pub struct EarthMoon {
    /// Gravitational parameter of the Earth, m^3/s^2.
    pub gm_earth_m3_per_s2: f64,
    /// Gravitational parameter of the Moon, m^3/s^2.
    pub gm_moon_m3_per_s2: f64,
    /// Earth–Moon distance (fixed in the CR3BP), m.
    pub distance_m: f64,
    /// Angular rate of the rotating frame, rad/s.
    pub mean_motion_rad_per_s: f64,
    /// Mean radius of the Moon, m.
    pub moon_radius_m: f64,
    /// Equatorial radius of the Earth, m.
    pub earth_radius_m: f64,
}

/// Newton iterations allowed for the Lagrange quintic; convergence from Hill's start takes ~5.
const MAX_NEWTON_ITERATIONS: usize = 60;

impl EarthMoon {
    /// The standard constant set.
    ///
    /// - `GM_E = 398 600.435436 km^3/s^2`, `GM_M = 4 902.800066 km^3/s^2`: JPL planetary and
    ///   lunar ephemeris DE430 (Folkner et al. 2014, IPN Progress Report 42-196).
    /// - `D = 384 400 km`: the conventional CR3BP Earth–Moon distance (e.g. Koon, Lo, Marsden &
    ///   Ross 2011, "Dynamical Systems, the Three-Body Problem and Space Mission Design"; from
    ///   memory).
    /// - `n = sqrt((GM_E + GM_M)/D^3)`: Kepler's third law with `D`, so the model is a
    ///   self-consistent CR3BP (period 27.2846 d rather than the sidereal 27.3217 d).
    /// - Moon radius 1 737.4 km: IAU mean radius (as listed with the JPL ephemeris constants).
    /// - Earth radius 6 378.137 km: WGS 84 / IERS equatorial radius.
    pub fn standard() -> Self {
        let gm_earth_m3_per_s2: f64 = 398_600.435_436e9;
        let gm_moon_m3_per_s2: f64 = 4_902.800_066e9;
        let distance_m: f64 = 384_400.0e3;
        let mean_motion_rad_per_s =
            ((gm_earth_m3_per_s2 + gm_moon_m3_per_s2) / distance_m.powi(3)).sqrt();
        Self {
            gm_earth_m3_per_s2,
            gm_moon_m3_per_s2,
            distance_m,
            mean_motion_rad_per_s,
            moon_radius_m: 1_737.4e3,
            earth_radius_m: 6_378.137e3,
        }
    }

    /// CR3BP mass ratio `mu = GM_M / (GM_E + GM_M)` (dimensionless).
    pub fn mass_ratio(&self) -> f64 {
        self.gm_moon_m3_per_s2 / (self.gm_earth_m3_per_s2 + self.gm_moon_m3_per_s2)
    }

    /// Distance of L1 (`Side::Near`) or L2 (`Side::Far`) from the Moon's centre, in units of
    /// the Earth–Moon distance.
    ///
    /// Solves the classical collinear-point quintics (Szebehely 1967, "Theory of Orbits", §4.5)
    ///
    /// ```text
    /// L1: g^5 - (3-mu) g^4 + (3-2mu) g^3 - mu g^2 + 2mu g - mu = 0
    /// L2: g^5 + (3-mu) g^4 + (3-2mu) g^3 - mu g^2 - 2mu g - mu = 0
    /// ```
    ///
    /// by Newton's method started at Hill's approximation `(mu/3)^(1/3)`, which lies within a
    /// few per cent of the root for the Earth–Moon ratio, and iterated until the step stops
    /// shrinking (full double precision).
    pub fn lagrange_gamma(&self, side: Side) -> f64 {
        let mu = self.mass_ratio();
        // Sign pattern of the L1 / L2 quintics: the two differ in the g^4 and g^1 terms.
        let s = match side {
            Side::Near => -1.0,
            Side::Far => 1.0,
        };
        let c = [1.0, s * (3.0 - mu), 3.0 - 2.0 * mu, -mu, -s * 2.0 * mu, -mu];
        let poly = |g: f64| c.iter().fold(0.0, |acc, &k| acc * g + k);
        let dpoly = |g: f64| {
            c[..5]
                .iter()
                .enumerate()
                .fold(0.0, |acc, (i, &k)| acc * g + k * (5 - i) as f64)
        };
        let mut g = (mu / 3.0).cbrt();
        let mut last_step = f64::INFINITY;
        for _ in 0..MAX_NEWTON_ITERATIONS {
            let step = poly(g) / dpoly(g);
            if !step.is_finite() {
                break;
            }
            g -= step;
            if step.abs() >= last_step || step.abs() <= f64::EPSILON * g.abs() {
                break;
            }
            last_step = step.abs();
        }
        g
    }

    /// Distance of L1 (`Side::Near`) or L2 (`Side::Far`) from the Moon's centre, m.
    pub fn lagrange_distance_from_moon_m(&self, side: Side) -> f64 {
        self.lagrange_gamma(side) * self.distance_m
    }

    /// Returns an error unless `r_from_moon_m` is a finite positive distance that does not
    /// coincide with the Earth's centre.
    pub fn check_distance_from_moon_m(
        &self,
        side: Side,
        r_from_moon_m: f64,
    ) -> Result<(), OrbitError> {
        if !r_from_moon_m.is_finite() || r_from_moon_m <= 0.0 {
            return Err(OrbitError::InvalidDistance {
                value_m: r_from_moon_m,
                rule: "must be finite and > 0",
            });
        }
        if side == Side::Near && r_from_moon_m == self.distance_m {
            return Err(OrbitError::InvalidDistance {
                value_m: r_from_moon_m,
                rule: "must not coincide with the Earth's centre",
            });
        }
        Ok(())
    }

    /// Distance from the Earth's centre of the point `r_from_moon_m` from the Moon's centre on
    /// the Earth–Moon line, m. `NaN` for a non-positive or non-finite input.
    pub fn earth_distance_m(&self, side: Side, r_from_moon_m: f64) -> f64 {
        if !valid_r(r_from_moon_m) {
            return f64::NAN;
        }
        match side {
            Side::Near => (self.distance_m - r_from_moon_m).abs(),
            Side::Far => self.distance_m + r_from_moon_m,
        }
    }

    /// Barycentric coordinate `x` (m) of the point, x axis from the Earth toward the Moon.
    fn barycentric_x_m(&self, side: Side, r_from_moon_m: f64) -> f64 {
        let x_moon = (1.0 - self.mass_ratio()) * self.distance_m;
        match side {
            Side::Near => x_moon - r_from_moon_m,
            Side::Far => x_moon + r_from_moon_m,
        }
    }

    /// Effective acceleration (Earth and Moon gravity plus centrifugal, in the rotating frame)
    /// along the Earth–Moon line, m/s^2, positive toward the Moon.
    ///
    /// `a_x = -GM_E (x-x_E)/|x-x_E|^3 - GM_M (x-x_M)/|x-x_M|^3 + n^2 x`, projected on the
    /// direction toward the Moon. It is zero at L1/L2 and negative beyond them (a hanging
    /// ribbon is pulled outward there). Coriolis force vanishes for a tether at rest in the
    /// rotating frame. `NaN` for a non-positive or non-finite input.
    pub fn effective_accel_toward_moon_m_per_s2(&self, side: Side, r_from_moon_m: f64) -> f64 {
        if !valid_r(r_from_moon_m) {
            return f64::NAN;
        }
        let mu = self.mass_ratio();
        let x = self.barycentric_x_m(side, r_from_moon_m);
        let x_earth = -mu * self.distance_m;
        let x_moon = (1.0 - mu) * self.distance_m;
        let de = x - x_earth;
        let dm = x - x_moon;
        let n2 = self.mean_motion_rad_per_s.powi(2);
        let a_x = -self.gm_earth_m3_per_s2 * de / de.abs().powi(3)
            - self.gm_moon_m3_per_s2 * dm / dm.abs().powi(3)
            + n2 * x;
        match side {
            Side::Near => a_x,
            Side::Far => -a_x,
        }
    }

    /// Effective potential in the rotating frame, J/kg:
    /// `Phi = -GM_E/r_E - GM_M/r_M - n^2 x^2 / 2`, with `x` measured from the barycentre.
    ///
    /// The work per unit mass to raise a ribbon element from the lunar surface to a point is
    /// the potential difference between them. `NaN` for a non-positive or non-finite input.
    pub fn potential_j_per_kg(&self, side: Side, r_from_moon_m: f64) -> f64 {
        if !valid_r(r_from_moon_m) {
            return f64::NAN;
        }
        let x = self.barycentric_x_m(side, r_from_moon_m);
        let r_earth = self.earth_distance_m(side, r_from_moon_m);
        -self.gm_earth_m3_per_s2 / r_earth
            - self.gm_moon_m3_per_s2 / r_from_moon_m
            - 0.5 * self.mean_motion_rad_per_s.powi(2) * x * x
    }
}

fn valid_r(r_m: f64) -> bool {
    r_m.is_finite() && r_m > 0.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quintic_root_is_an_equilibrium() {
        let em = EarthMoon::standard();
        for side in [Side::Near, Side::Far] {
            let r = em.lagrange_distance_from_moon_m(side);
            let a = em.effective_accel_toward_moon_m_per_s2(side, r);
            assert!(a.abs() < 1e-12, "{side:?}: a = {a}");
        }
    }

    #[test]
    fn newton_converges_over_a_wide_range_of_mass_ratios() {
        // From Sun–Earth-like (3e-6) to a heavy secondary (0.3): the root must be an
        // equilibrium of the same field, so the solver does not depend on the Earth–Moon start.
        for mu in [3.0e-6, 1.0e-3, 0.012, 0.1, 0.3] {
            let mut em = EarthMoon::standard();
            let total = em.gm_earth_m3_per_s2 + em.gm_moon_m3_per_s2;
            em.gm_moon_m3_per_s2 = mu * total;
            em.gm_earth_m3_per_s2 = (1.0 - mu) * total;
            for side in [Side::Near, Side::Far] {
                let g = em.lagrange_gamma(side);
                assert!(g > 0.0 && g < 1.0, "mu = {mu}, {side:?}: gamma = {g}");
                let r = g * em.distance_m;
                let a = em.effective_accel_toward_moon_m_per_s2(side, r);
                let scale = em.gm_moon_m3_per_s2 / (r * r);
                assert!(a.abs() < 1e-12 * scale, "mu = {mu}, {side:?}: a = {a}");
            }
        }
    }

    #[test]
    fn hill_start_is_close_to_root() {
        // Hill's approximation is 5-6 % off for the Earth–Moon ratio ([computed] from the quintic roots).
        let em = EarthMoon::standard();
        let hill = (em.mass_ratio() / 3.0).cbrt();
        for side in [Side::Near, Side::Far] {
            let g = em.lagrange_gamma(side);
            assert!(((hill - g) / g).abs() < 0.07);
        }
        assert!(em.lagrange_gamma(Side::Near) < hill && hill < em.lagrange_gamma(Side::Far));
    }

    #[test]
    fn acceleration_sign_changes_at_l1_and_l2() {
        let em = EarthMoon::standard();
        for side in [Side::Near, Side::Far] {
            let r = em.lagrange_distance_from_moon_m(side);
            assert!(em.effective_accel_toward_moon_m_per_s2(side, 0.9 * r) > 0.0);
            assert!(em.effective_accel_toward_moon_m_per_s2(side, 1.1 * r) < 0.0);
        }
    }

    #[test]
    fn acceleration_is_minus_gradient_of_potential() {
        let em = EarthMoon::standard();
        for side in [Side::Near, Side::Far] {
            for r in [2.0e6, 1.0e7, 4.0e7, 8.0e7] {
                let h = 1.0;
                let dphi = (em.potential_j_per_kg(side, r + h)
                    - em.potential_j_per_kg(side, r - h))
                    / (2.0 * h);
                let a = em.effective_accel_toward_moon_m_per_s2(side, r);
                // Moving away from the Moon raises Phi where the pull is toward the Moon.
                assert!(
                    (dphi - a).abs() < 1e-6 * a.abs().max(1e-3),
                    "{side:?} r={r}"
                );
            }
        }
    }

    #[test]
    fn bad_distances_give_nan_or_error() {
        let em = EarthMoon::standard();
        for r in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            assert!(em.potential_j_per_kg(Side::Near, r).is_nan());
            assert!(em
                .effective_accel_toward_moon_m_per_s2(Side::Far, r)
                .is_nan());
            assert!(em.earth_distance_m(Side::Far, r).is_nan());
            assert!(em.check_distance_from_moon_m(Side::Near, r).is_err());
        }
        let err = em
            .check_distance_from_moon_m(Side::Near, em.distance_m)
            .unwrap_err();
        assert!(err.to_string().contains("Earth's centre"));
        assert!(em
            .check_distance_from_moon_m(Side::Far, em.distance_m)
            .is_ok());
    }

    #[test]
    fn values_are_finite_for_positive_r() {
        let em = EarthMoon::standard();
        for side in [Side::Near, Side::Far] {
            for r in [1.0, 1.0e3, 1.737e6, 5.8e7, 3.0e8, 1.0e9] {
                assert!(em.potential_j_per_kg(side, r).is_finite());
                assert!(em.effective_accel_toward_moon_m_per_s2(side, r).is_finite());
            }
        }
    }
}

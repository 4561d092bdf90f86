//! Scalar environment factors: escape speed, single-speed gravitational focusing, body
//! shielding, and the spherical mass–diameter relation.
//!
//! Each function implements one published formula (named in its docs) and validates its
//! arguments, returning [`EnvironmentError::InvalidArgument`] rather than a `NaN`.

use super::EnvironmentError;

fn require(
    name: &'static str,
    value: f64,
    ok: bool,
    rule: &'static str,
) -> Result<f64, EnvironmentError> {
    if ok && value.is_finite() {
        Ok(value)
    } else {
        Err(EnvironmentError::InvalidArgument { name, value, rule })
    }
}

fn positive(name: &'static str, value: f64) -> Result<f64, EnvironmentError> {
    require(name, value, value > 0.0, "must be finite and > 0")
}

fn non_negative(name: &'static str, value: f64) -> Result<f64, EnvironmentError> {
    require(name, value, value >= 0.0, "must be finite and >= 0")
}

/// Escape speed `v_esc = sqrt(2 GM / r)`, m/s (ECSS-E-ST-10-04C Rev.1 eq. C-16).
/// `gm_m3_per_s2` and `r_m` must be finite and `> 0`.
pub fn escape_speed_m_per_s(gm_m3_per_s2: f64, r_m: f64) -> Result<f64, EnvironmentError> {
    let gm = positive("gm_m3_per_s2", gm_m3_per_s2)?;
    let r = positive("r_m", r_m)?;
    Ok((2.0 * gm / r).sqrt())
}

/// Gravitational focusing factor for one speed, `G = 1 + v_esc^2 / v_inf^2`
/// (ECSS-E-ST-10-04C Rev.1 eq. C-13). `v_inf` must be `> 0`, `v_esc >= 0`.
pub fn focusing_factor(v_inf_m_per_s: f64, v_esc_m_per_s: f64) -> Result<f64, EnvironmentError> {
    let v = positive("v_inf_m_per_s", v_inf_m_per_s)?;
    let ve = non_negative("v_esc_m_per_s", v_esc_m_per_s)?;
    Ok(1.0 + (ve * ve) / (v * v))
}

/// Shielding factor of a spherical body, `s_f = (1 + cos eta)/2` with
/// `sin eta = (R + R_A)/(R + h)` (ECSS-E-ST-10-04C Rev.1 eqs C-26/C-27; C-13/C-14 in the 2008
/// edition). `R_A` is the height of the absorbing layer (ECSS: 100 km for the Earth's
/// atmosphere; 0 for the Moon). At or below `h = R_A` the body hides a full half-space and
/// the factor is 0.5.
///
/// `body_radius_m > 0`, `shield_height_m >= 0`, `altitude_m >= 0`, all finite.
pub fn shielding_factor(
    body_radius_m: f64,
    shield_height_m: f64,
    altitude_m: f64,
) -> Result<f64, EnvironmentError> {
    let r = positive("body_radius_m", body_radius_m)?;
    let r_a = non_negative("shield_height_m", shield_height_m)?;
    let h = non_negative("altitude_m", altitude_m)?;
    if h <= r_a {
        return Ok(0.5);
    }
    let sin_eta = (r + r_a) / (r + h);
    Ok((1.0 + (1.0 - sin_eta * sin_eta).sqrt()) / 2.0)
}

/// Mass of a sphere of diameter `d_m` and density `density_kg_per_m3`: `m = (pi/6) rho d^3`
/// (ECSS-E-ST-10-04C Rev.1 §10.2.2.2d prescribes spheres of 2500 kg/m^3 with the Grün model).
/// `d_m >= 0`, density `> 0`.
pub fn mass_from_diameter_kg(d_m: f64, density_kg_per_m3: f64) -> Result<f64, EnvironmentError> {
    let d = non_negative("d_m", d_m)?;
    let rho = positive("density_kg_per_m3", density_kg_per_m3)?;
    Ok(std::f64::consts::PI / 6.0 * rho * d.powi(3))
}

/// Diameter of a sphere of mass `m_kg` and density `density_kg_per_m3`:
/// `d = (6 m / (pi rho))^(1/3)`. `m_kg >= 0`, density `> 0`.
pub fn diameter_from_mass_m(m_kg: f64, density_kg_per_m3: f64) -> Result<f64, EnvironmentError> {
    let m = non_negative("m_kg", m_kg)?;
    let rho = positive("density_kg_per_m3", density_kg_per_m3)?;
    Ok((6.0 * m / (std::f64::consts::PI * rho)).cbrt())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trip_mass_diameter() {
        for d in [1e-6, 1e-3, 0.02] {
            let m = mass_from_diameter_kg(d, 2500.0).unwrap();
            assert!((diameter_from_mass_m(m, 2500.0).unwrap() / d - 1.0).abs() < 1e-14);
        }
    }

    #[test]
    fn shielding_limits() {
        assert_eq!(shielding_factor(1.0, 0.0, 0.0).unwrap(), 0.5);
        assert_eq!(shielding_factor(6.378e6, 1e5, 5e4).unwrap(), 0.5);
        assert!(shielding_factor(1.0, 0.0, 1e12).unwrap() > 0.999_999);
    }

    #[test]
    fn rejects_bad_arguments() {
        let e = escape_speed_m_per_s(1.0, 0.0).unwrap_err().to_string();
        assert!(e.contains("r_m") && e.contains("> 0"), "{e}");
        assert!(focusing_factor(0.0, 1.0).is_err());
        assert!(focusing_factor(1.0, f64::NAN).is_err());
        assert!(shielding_factor(1.0, 0.0, -1.0).is_err());
        assert!(mass_from_diameter_kg(1.0, 0.0).is_err());
        assert!(diameter_from_mass_m(-1.0, 1.0).is_err());
    }
}

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

/// Shielding factor of a spherical body without atmosphere for a **flat face whose normal is
/// horizontal** (perpendicular to the local vertical), such as either face of a ribbon hanging
/// along the vertical: the fraction of an isotropic flux onto the face that the body does not
/// block.
///
/// [DERIVED] The body hides the cone of half-angle `eta` around the nadir, `sin eta = R/(R+h)`.
/// The face's plane contains the nadir, so it cuts the cone in half. With `alpha` measured
/// from the nadir and `beta` the azimuth from the face normal, the blocked part of the face's
/// cosine-weighted flux is `Int_0^eta Int_{-pi/2}^{pi/2} sin(alpha) cos(beta) sin(alpha) dbeta
/// dalpha = eta - sin(eta) cos(eta)`, out of `pi` for the open half-space, so
///
/// `s_face = 1 - (eta - sin(eta) cos(eta)) / pi`.
///
/// Limits: 1/2 at the surface (`eta = pi/2`), 1 far away. This replaces the ECSS
/// sphere-averaged factor [`shielding_factor`] (a randomly oriented plate) for ribbon faces;
/// it is larger because a sideways-looking face sees the Moon only at grazing cosines
/// (0.758 against 0.709 at 175 km).
pub fn horizontal_face_shielding_factor(
    body_radius_m: f64,
    altitude_m: f64,
) -> Result<f64, EnvironmentError> {
    let r = positive("body_radius_m", body_radius_m)?;
    let h = non_negative("altitude_m", altitude_m)?;
    let sin_eta = (r / (r + h)).min(1.0);
    let eta = sin_eta.asin();
    let cos_eta = (1.0 - sin_eta * sin_eta).sqrt();
    Ok(1.0 - (eta - sin_eta * cos_eta) / std::f64::consts::PI)
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

    /// Independent check of the face integral: midpoint quadrature over the face's front
    /// hemisphere in the face's own polar coordinates, testing each direction against the
    /// Moon's cone (no use of the closed form).
    fn face_factor_by_quadrature(r: f64, h: f64) -> f64 {
        let sin_eta = r / (r + h);
        let cos_eta = (1.0 - sin_eta * sin_eta).sqrt();
        let (nt, np) = (1200, 1200);
        let mut blocked = 0.0;
        let mut open = 0.0;
        for i in 0..nt {
            let t = (i as f64 + 0.5) / nt as f64 * std::f64::consts::FRAC_PI_2;
            for k in 0..np {
                let p = (k as f64 + 0.5) / np as f64 * std::f64::consts::TAU;
                // Face normal = z; the nadir lies in the face plane, along -x.
                let dir = (t.sin() * p.cos(), t.sin() * p.sin(), t.cos());
                let w = t.cos() * t.sin(); // cosine weight x solid-angle Jacobian
                open += w;
                if -dir.0 >= cos_eta {
                    blocked += w;
                }
            }
        }
        1.0 - blocked / open
    }

    #[test]
    fn horizontal_face_shielding_against_quadrature_and_limits() {
        let r = 1_737.4e3;
        for h in [0.0, 25e3, 175e3, 500e3, 2_000e3, 20_000e3] {
            let exact = horizontal_face_shielding_factor(r, h).unwrap();
            let q = face_factor_by_quadrature(r, h);
            assert!((exact - q).abs() < 2e-3, "h {h}: {exact} vs quadrature {q}");
        }
        // Surface limit 1/2, far limit 1 [DERIVED].
        assert!((horizontal_face_shielding_factor(r, 0.0).unwrap() - 0.5).abs() < 1e-12);
        assert!(horizontal_face_shielding_factor(r, 1e13).unwrap() > 1.0 - 1e-9);
        // Issue 10 quotes 0.758 at 175 km and 0.873 at 500 km (REFERENCES-damage-consistent
        // [COMPUTED] values), against the ECSS sphere average 0.709 and 0.815.
        let f175 = horizontal_face_shielding_factor(r, 175e3).unwrap();
        let f500 = horizontal_face_shielding_factor(r, 500e3).unwrap();
        assert!((f175 - 0.758).abs() < 5e-4, "{f175}");
        assert!((f500 - 0.873).abs() < 5e-4, "{f500}");
        assert!((shielding_factor(r, 0.0, 175e3).unwrap() - 0.709).abs() < 5e-4);
        assert!((shielding_factor(r, 0.0, 500e3).unwrap() - 0.815).abs() < 5e-4);
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

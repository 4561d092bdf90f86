//! Meteoroid environment: flux models, the speed distribution, and the local factors
//! (shielding and gravitational focusing) along the tether.
//!
//! This module owns everything that turns "where on the tether" into "how many particles of
//! what mass and speed arrive per m^2 per year":
//! - [`FluxModel`] (the trait) and its implementations [`Grun1985`] (published formula,
//!   parameters from `flux_models/grun1985.json`) and [`TabulatedFlux`] (any table file);
//! - [`VelocityDistribution`] with the ECSS Table C-1 data and its local refocusing;
//! - scalar factors ([`escape_speed_m_per_s`], [`focusing_factor`], [`shielding_factor`], the
//!   mass–diameter pair) and their combination at one
//!   point of the tether in [`local_factors`].
//!
//! Parameter files are embedded with `include_str!` and parsed from `&str`; nothing here
//! reads files or prints.
//!
//! **Combining Earth and Moon focusing** is our choice, not the standard's: ECSS Annex C
//! treats one attracting body. We put `v_esc,E^2 + v_esc,M^2` into eq. C-13 bin by bin,
//! i.e. the particle's speed gain is the sum of the two potential wells. Near the Moon this
//! agrees with the product `G_bar_E · G_bar_M` to three decimals (the cross term is
//! second-order small).

mod ejecta;
mod factors;
mod flux;
mod grun;
pub mod streams;
mod table;
mod velocity;

use thiserror::Error;

use crate::orbit::{EarthMoon, OrbitError, Side};

pub use ejecta::{EjectaBin, LunarEjecta, SP8013_EJECTA_JSON};
pub use factors::{
    diameter_from_mass_m, escape_speed_m_per_s, focusing_factor, horizontal_face_shielding_factor,
    mass_from_diameter_kg, shielding_factor,
};
pub use flux::FluxModel;
pub use grun::Grun1985;
pub use streams::MeteorStream;
pub use table::TabulatedFlux;
pub use velocity::{
    ecss_table_c1_rows, TableC1Row, VelocityDistribution, TABLE_C1_SPACING_M_PER_S,
};

/// The Table J-5 masses tabulated from the Grün formula (`flux_models/grun1985_tabulated.json`),
/// offered as the built-in model `grun1985_tabulated` to exercise the tabulated format.
pub const GRUN1985_TABULATED_JSON: &str = include_str!("../../flux_models/grun1985_tabulated.json");

/// Height of the Earth's absorbing atmosphere for shielding, m (ECSS-E-ST-10-04C Rev.1
/// C.1.5.2.2: R_A = 100 km).
pub const EARTH_SHIELD_HEIGHT_M: f64 = 100e3;

/// Errors from building or evaluating environment models.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum EnvironmentError {
    /// A parameter or table file is not valid JSON for its format.
    #[error("{what}: cannot parse at `{path}`: {message}")]
    Parse {
        /// Which kind of file was being parsed.
        what: &'static str,
        /// JSON path of the failure (`.` for the document root).
        path: String,
        /// The parser's message.
        message: String,
    },
    /// A unit string in a file is not the one the format requires.
    #[error("{field} is \"{found}\" but must be \"{expected}\"")]
    InvalidUnit {
        /// The field holding the unit.
        field: &'static str,
        /// What the file says.
        found: String,
        /// What the format requires.
        expected: &'static str,
    },
    /// A scalar model parameter breaks its rule.
    #[error("{field} = {value}: {rule}")]
    InvalidParameter {
        /// Name of the parameter (as in the file).
        field: &'static str,
        /// The offending value.
        value: f64,
        /// The rule it broke.
        rule: String,
    },
    /// One entry of a table breaks its rule.
    #[error("{field}[{index}] = {value}: {rule}")]
    InvalidTable {
        /// Name of the array (as in the file).
        field: &'static str,
        /// Zero-based index of the entry.
        index: usize,
        /// The offending value.
        value: f64,
        /// The rule it broke.
        rule: String,
    },
    /// Two arrays that must pair up have different lengths.
    #[error(
        "{field_a} has {len_a} entries but {field_b} has {len_b}: they must have equal lengths"
    )]
    LengthMismatch {
        /// First array.
        field_a: &'static str,
        /// Its length.
        len_a: usize,
        /// Second array.
        field_b: &'static str,
        /// Its length.
        len_b: usize,
    },
    /// A table has fewer points than it needs.
    #[error("{field} has {count} entries: at least {minimum} are required")]
    TooFewPoints {
        /// Name of the array.
        field: &'static str,
        /// How many entries it has.
        count: usize,
        /// How many are needed.
        minimum: usize,
    },
    /// A function argument breaks its rule.
    #[error("argument {name} = {value}: {rule}")]
    InvalidArgument {
        /// Name of the argument.
        name: &'static str,
        /// The offending value.
        value: f64,
        /// The rule it broke.
        rule: &'static str,
    },
    /// A position on the tether is invalid.
    #[error(transparent)]
    Orbit(#[from] OrbitError),
}

/// Deserialises `text`, reporting the JSON path of any failure.
fn parse_json<T: serde::de::DeserializeOwned>(
    what: &'static str,
    text: &str,
) -> Result<T, EnvironmentError> {
    let de = &mut serde_json::Deserializer::from_str(text);
    serde_path_to_error::deserialize(de).map_err(|e| EnvironmentError::Parse {
        what,
        path: e.path().to_string(),
        message: e.into_inner().to_string(),
    })
}

/// Flux multipliers at one point on the tether (all dimensionless except where named).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LocalFactors {
    /// Altitude above the lunar surface, m.
    pub altitude_m: f64,
    /// Lunar shielding factor `s_f` (1 when lunar shielding is switched off).
    pub moon_shielding: f64,
    /// Earth shielding factor `s_f` at the point's distance from the Earth (≈ 1 near the Moon).
    pub earth_shielding: f64,
    /// Lunar escape speed used for focusing, m/s (0 when lunar focusing is switched off).
    pub moon_escape_speed_m_per_s: f64,
    /// Earth escape speed used for focusing, m/s (0 when Earth focusing is switched off).
    pub earth_escape_speed_m_per_s: f64,
    /// Combined mean focusing factor `G_bar` (see the module docs for the combination).
    pub focusing: f64,
}

impl LocalFactors {
    /// Total multiplier on the 1-AU flux: `focusing × moon_shielding × earth_shielding`.
    pub fn total(&self) -> f64 {
        self.focusing * self.moon_shielding * self.earth_shielding
    }

    /// Combined escape speed `sqrt(v_esc,E^2 + v_esc,M^2)`, m/s.
    pub fn combined_escape_speed_m_per_s(&self) -> f64 {
        self.earth_escape_speed_m_per_s
            .hypot(self.moon_escape_speed_m_per_s)
    }

    /// The speed distribution seen at this point: `free_space` (normally the Table C-1
    /// `n(v_inf)` column) focused with the combined escape speed.
    pub fn local_velocity(
        &self,
        free_space: &VelocityDistribution,
    ) -> Result<VelocityDistribution, EnvironmentError> {
        free_space.focused(self.combined_escape_speed_m_per_s())
    }
}

/// Which flat surface the lunar shielding factor is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ShieldingGeometry {
    /// A randomly oriented plate: the ECSS sphere-averaged factor `(1 + cos eta)/2`
    /// (what the `env` command tabulates).
    RandomPlate,
    /// A face of a ribbon hanging along the vertical (normal horizontal):
    /// [`horizontal_face_shielding_factor`] (what the tether model uses).
    HangingRibbonFace,
    /// A ribbon lying flat on the ground (the surface run): exactly 1/2 at any altitude given.
    ///
    /// [DERIVED] Its upper face sees the whole open half-space, `pi I` per unit area = the
    /// one-face flux F of the ECSS convention (ECSS-E-ST-10-04C Rev.1 §10.2; a plate face
    /// receives `Int_hemisphere I cos(theta) dOmega = pi I`); its lower face rests on the
    /// ground and sees none. Against the two-face rate 2F of a ribbon in free space that is a
    /// factor of 1/2, the ECSS C-26/C-27 surface value (`h = R_A`). The exposed area is the
    /// upper face, width `w` (plus the particle diameter for edge overlap) times length.
    SurfaceLyingFace,
}

/// Shielding and focusing at `altitude_m` above the lunar surface on the given side, for a
/// randomly oriented plate ([`ShieldingGeometry::RandomPlate`]; see [`local_factors_for`]).
///
/// - Lunar shielding: eqs C-26/C-27 with `R = orbit.moon_radius_m`, `R_A = 0` (no atmosphere).
/// - Earth shielding: the same with `R = orbit.earth_radius_m`, `R_A` =
///   [`EARTH_SHIELD_HEIGHT_M`], at the point's distance from the Earth; always applied (it is
///   0.99993 at lunar distance).
/// - Focusing: eq. C-18 point-sum over `velocity` with `v_esc^2 = v_esc,E^2 + v_esc,M^2`
///   (each term only if switched on); escape speeds from eq. C-16 with the orbit's GMs.
///
/// `altitude_m` must be finite and `>= 0`.
pub fn local_factors(
    orbit: &EarthMoon,
    side: Side,
    altitude_m: f64,
    velocity: &VelocityDistribution,
    include_moon_focusing: bool,
    include_earth_focusing: bool,
    include_moon_shielding: bool,
) -> Result<LocalFactors, EnvironmentError> {
    local_factors_for(
        orbit,
        side,
        altitude_m,
        velocity,
        include_moon_focusing,
        include_earth_focusing,
        include_moon_shielding,
        ShieldingGeometry::RandomPlate,
    )
}

/// [`local_factors`] with the lunar shielding for the given surface geometry (the Earth's
/// shielding, about 0.99993 at lunar distance, stays the sphere average).
#[allow(clippy::too_many_arguments)]
pub fn local_factors_for(
    orbit: &EarthMoon,
    side: Side,
    altitude_m: f64,
    velocity: &VelocityDistribution,
    include_moon_focusing: bool,
    include_earth_focusing: bool,
    include_moon_shielding: bool,
    geometry: ShieldingGeometry,
) -> Result<LocalFactors, EnvironmentError> {
    if !(altitude_m.is_finite() && altitude_m >= 0.0) {
        return Err(EnvironmentError::InvalidArgument {
            name: "altitude_m",
            value: altitude_m,
            rule: "must be finite and >= 0",
        });
    }
    let r_moon_m = orbit.moon_radius_m + altitude_m;
    orbit.check_distance_from_moon_m(side, r_moon_m)?;
    let r_earth_m = orbit.earth_distance_m(side, r_moon_m);

    let moon_shielding = if include_moon_shielding {
        match geometry {
            ShieldingGeometry::RandomPlate => {
                shielding_factor(orbit.moon_radius_m, 0.0, altitude_m)?
            }
            ShieldingGeometry::HangingRibbonFace => {
                horizontal_face_shielding_factor(orbit.moon_radius_m, altitude_m)?
            }
            ShieldingGeometry::SurfaceLyingFace => 0.5,
        }
    } else {
        1.0
    };
    let earth_shielding = shielding_factor(
        orbit.earth_radius_m,
        EARTH_SHIELD_HEIGHT_M,
        (r_earth_m - orbit.earth_radius_m).max(0.0),
    )?;
    let moon_escape_speed_m_per_s = if include_moon_focusing {
        escape_speed_m_per_s(orbit.gm_moon_m3_per_s2, r_moon_m)?
    } else {
        0.0
    };
    let earth_escape_speed_m_per_s = if include_earth_focusing {
        escape_speed_m_per_s(orbit.gm_earth_m3_per_s2, r_earth_m)?
    } else {
        0.0
    };
    let focusing = velocity
        .mean_focusing_factor(earth_escape_speed_m_per_s.hypot(moon_escape_speed_m_per_s))?;
    Ok(LocalFactors {
        altitude_m,
        moon_shielding,
        earth_shielding,
        moon_escape_speed_m_per_s,
        earth_escape_speed_m_per_s,
        focusing,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn switches_turn_factors_off() {
        let orbit = EarthMoon::standard();
        let v = VelocityDistribution::ecss_table_c1().unwrap();
        let f = local_factors(&orbit, Side::Near, 0.0, &v, false, false, false).unwrap();
        assert_eq!(f.moon_shielding, 1.0);
        assert!((f.focusing - 1.0).abs() < 1e-14);
        assert!((f.earth_shielding - 1.0).abs() < 1e-3);
        assert_eq!(f.local_velocity(&v).unwrap(), v);
    }

    #[test]
    fn rejects_negative_altitude() {
        let orbit = EarthMoon::standard();
        let v = VelocityDistribution::ecss_table_c1().unwrap();
        let e = local_factors(&orbit, Side::Far, -1.0, &v, true, true, true).unwrap_err();
        assert!(e.to_string().contains("altitude_m"));
    }

    #[test]
    fn parse_errors_name_the_path() {
        let e = TabulatedFlux::from_json(
            r#"{"name":"x","source":"y","mass_kg":[1,"a"],"flux_per_m2_per_year":[1,1]}"#,
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("mass_kg[1]"), "{e}");
    }
}

//! The Grün et al. (1985) interplanetary meteoroid flux in the ECSS form.
//!
//! ECSS-E-ST-10-04C Rev.1 §10.2.2.2a, eq. (10-1), with `m` in grams:
//!
//! ```text
//! F(m) = 3.15576e7 · [F1 + F2 + F3]                  per m^2 per year
//! F1 = (2.2e3 · m^0.306 + 15)^(-4.38)
//! F2 = 1.3e-9  · (m + 1e11 m^2 + 1e27 m^4)^(-0.36)
//! F3 = 1.3e-16 · (m + 1e6 m^2)^(-0.85)
//! ```
//!
//! Source: Grün E., Zook H.A., Fechtig H., Giese R.H., "Collisional balance of the meteoritic
//! complex", Icarus 62, 244–272 (1985). The bracket is the original flux per m^2 per second;
//! 3.15576e7 s is one Julian year.
//!
//! Every coefficient lives in `flux_models/grun1985.json` (embedded at compile time) rather
//! than in code, so that the numbers a reviewer checks against the standard are in one
//! readable file with their citation, and a variant can be loaded with
//! [`Grun1985::from_json`]. The API takes kilograms; the conversion to grams happens here.

use serde::Deserialize;

use super::{parse_json, EnvironmentError, FluxModel};

const EMBEDDED_JSON: &str = include_str!("../../flux_models/grun1985.json");
const GRAMS_PER_KG: f64 = 1e3;

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
/// The file as written; the `_`-prefixed fields are documentation for the human reader.
struct GrunFile {
    name: String,
    source: String,
    #[serde(default, rename = "meaning")]
    _meaning: String,
    #[serde(default, rename = "form")]
    _form: String,
    mass_unit: String,
    flux_unit: String,
    valid_mass_range_g: [f64; 2],
    #[serde(default, rename = "valid_mass_range_note")]
    _valid_mass_range_note: String,
    seconds_per_year: f64,
    #[serde(default, rename = "seconds_per_year_note")]
    _seconds_per_year_note: String,
    f1: F1Params,
    f2: F2Params,
    f3: F3Params,
}

/// `F1 = (a m^b + c)^exponent`.
#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(deny_unknown_fields)]
struct F1Params {
    a: f64,
    b: f64,
    c: f64,
    exponent: f64,
}

/// `F2 = coefficient (m + c2 m^2 + c4 m^4)^exponent`.
#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(deny_unknown_fields)]
struct F2Params {
    coefficient: f64,
    c2: f64,
    c4: f64,
    exponent: f64,
}

/// `F3 = coefficient (m + c2 m^2)^exponent`.
#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(deny_unknown_fields)]
struct F3Params {
    coefficient: f64,
    c2: f64,
    exponent: f64,
}

/// The Grün et al. (1985) flux model with its parameters (see the module docs).
#[derive(Debug, Clone)]
pub struct Grun1985 {
    name: String,
    source: String,
    valid_mass_range_kg: (f64, f64),
    seconds_per_year: f64,
    f1: F1Params,
    f2: F2Params,
    f3: F3Params,
}

impl Grun1985 {
    /// The published parameter set, parsed from the embedded `flux_models/grun1985.json`.
    ///
    /// Returns an error only if that file was edited into an invalid state; the test suite
    /// parses it.
    pub fn standard() -> Result<Self, EnvironmentError> {
        Self::from_json(EMBEDDED_JSON)
    }

    /// Parses and validates a parameter file in the format of `flux_models/grun1985.json`.
    ///
    /// Rules: `mass_unit` is `"g"`, `flux_unit` is `"per m^2 per s"`; every number is finite;
    /// multiplying coefficients and `seconds_per_year` are `> 0`; additive constants are
    /// `>= 0`; exponents are `< 0` (a cumulative flux falls with mass); the validity range is
    /// `0 < low < high`. Unknown fields are rejected so a misspelt coefficient cannot be
    /// silently ignored.
    pub fn from_json(text: &str) -> Result<Self, EnvironmentError> {
        let file: GrunFile = parse_json("Grun1985 parameter file", text)?;
        if file.mass_unit != "g" {
            return Err(EnvironmentError::InvalidUnit {
                field: "mass_unit",
                found: file.mass_unit,
                expected: "g",
            });
        }
        if file.flux_unit != "per m^2 per s" {
            return Err(EnvironmentError::InvalidUnit {
                field: "flux_unit",
                found: file.flux_unit,
                expected: "per m^2 per s",
            });
        }
        let checks: [(&'static str, f64, Rule); 15] = [
            ("seconds_per_year", file.seconds_per_year, Rule::Positive),
            ("f1.a", file.f1.a, Rule::Positive),
            ("f1.b", file.f1.b, Rule::Positive),
            ("f1.c", file.f1.c, Rule::NonNegative),
            ("f1.exponent", file.f1.exponent, Rule::Negative),
            ("f2.coefficient", file.f2.coefficient, Rule::Positive),
            ("f2.c2", file.f2.c2, Rule::NonNegative),
            ("f2.c4", file.f2.c4, Rule::NonNegative),
            ("f2.exponent", file.f2.exponent, Rule::Negative),
            ("f3.coefficient", file.f3.coefficient, Rule::Positive),
            ("f3.c2", file.f3.c2, Rule::NonNegative),
            ("f3.exponent", file.f3.exponent, Rule::Negative),
            (
                "valid_mass_range_g[0]",
                file.valid_mass_range_g[0],
                Rule::Positive,
            ),
            (
                "valid_mass_range_g[1]",
                file.valid_mass_range_g[1],
                Rule::Positive,
            ),
            (
                "valid_mass_range_g[1]",
                file.valid_mass_range_g[1],
                Rule::Above(file.valid_mass_range_g[0]),
            ),
        ];
        for (field, value, rule) in checks {
            rule.check(field, value)?;
        }
        Ok(Self {
            name: file.name,
            source: file.source,
            valid_mass_range_kg: (
                file.valid_mass_range_g[0] / GRAMS_PER_KG,
                file.valid_mass_range_g[1] / GRAMS_PER_KG,
            ),
            seconds_per_year: file.seconds_per_year,
            f1: file.f1,
            f2: file.f2,
            f3: file.f3,
        })
    }

    /// Full citation of the parameter set, as given in the parameter file.
    pub fn source(&self) -> &str {
        &self.source
    }

    /// The original Grün flux, per m^2 per second, with the mass in grams.
    fn flux_per_m2_per_s(&self, m_g: f64) -> f64 {
        let (f1, f2, f3) = (self.f1, self.f2, self.f3);
        let m2 = m_g * m_g;
        let term1 = (f1.a * m_g.powf(f1.b) + f1.c).powf(f1.exponent);
        let term2 = f2.coefficient * (m_g + f2.c2 * m2 + f2.c4 * m2 * m2).powf(f2.exponent);
        let term3 = f3.coefficient * (m_g + f3.c2 * m2).powf(f3.exponent);
        term1 + term2 + term3
    }
}

impl FluxModel for Grun1985 {
    fn name(&self) -> &str {
        &self.name
    }

    /// Grün flux at `mass_kg`; `+inf` at zero mass (the F2 and F3 terms diverge), `NaN` for
    /// a negative or non-finite mass.
    fn cumulative_flux_per_m2_per_year(&self, mass_kg: f64) -> f64 {
        if !(mass_kg.is_finite() && mass_kg >= 0.0) {
            return f64::NAN;
        }
        self.seconds_per_year * self.flux_per_m2_per_s(mass_kg * GRAMS_PER_KG)
    }

    fn valid_mass_range_kg(&self) -> (f64, f64) {
        self.valid_mass_range_kg
    }
}

/// A validation rule for one scalar parameter.
#[derive(Clone, Copy)]
enum Rule {
    Positive,
    NonNegative,
    Negative,
    Above(f64),
}

impl Rule {
    fn check(self, field: &'static str, value: f64) -> Result<(), EnvironmentError> {
        let (ok, rule) = match self {
            Rule::Positive => (value > 0.0, "must be finite and > 0".to_string()),
            Rule::NonNegative => (value >= 0.0, "must be finite and >= 0".to_string()),
            Rule::Negative => (value < 0.0, "must be finite and < 0".to_string()),
            Rule::Above(low) => (
                value > low,
                format!("must be greater than the lower bound {low}"),
            ),
        };
        if ok && value.is_finite() {
            Ok(())
        } else {
            Err(EnvironmentError::InvalidParameter { field, value, rule })
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn embedded_file_parses_with_table_j5_range() {
        let g = Grun1985::standard().unwrap();
        let (lo, hi) = g.valid_mass_range_kg();
        // ECSS-E-ST-10-04C Rev.1 Table J-5 spans 1e-12 g .. 5e2 g.
        assert!((lo - 1e-15).abs() < 1e-30 && (hi - 0.5).abs() < 1e-15);
        assert!(g.source().contains("Icarus 62"));
    }

    #[test]
    fn formula_matches_an_independent_evaluation() {
        // ECSS-E-ST-10-04C Rev.1 eq. (10-1) written out directly, m = 1e-6 g.
        let m: f64 = 1e-6;
        let direct = 3.15576e7
            * ((2.2e3 * m.powf(0.306) + 15.0).powf(-4.38)
                + 1.3e-9 * (m + 1e11 * m * m + 1e27 * m.powi(4)).powf(-0.36)
                + 1.3e-16 * (m + 1e6 * m * m).powf(-0.85));
        let g = Grun1985::standard().unwrap();
        let f = g.cumulative_flux_per_m2_per_year(m / 1e3);
        assert!(((f - direct) / direct).abs() < 1e-14);
    }

    #[test]
    fn bad_masses() {
        let g = Grun1985::standard().unwrap();
        assert!(g.cumulative_flux_per_m2_per_year(-1.0).is_nan());
        assert!(g.cumulative_flux_per_m2_per_year(f64::NAN).is_nan());
        assert_eq!(g.cumulative_flux_per_m2_per_year(0.0), f64::INFINITY);
        assert!(g.checked_flux_per_m2_per_year(0.0).is_err());
    }

    #[test]
    fn rejects_bad_files() {
        let good = EMBEDDED_JSON;
        let err = Grun1985::from_json(&good.replace("\"exponent\": -4.38", "\"exponent\": 4.38"))
            .unwrap_err()
            .to_string();
        assert!(err.contains("f1.exponent") && err.contains("< 0"), "{err}");
        let err =
            Grun1985::from_json(&good.replace("\"mass_unit\": \"g\"", "\"mass_unit\": \"kg\""))
                .unwrap_err()
                .to_string();
        assert!(err.contains("mass_unit"), "{err}");
        let err = Grun1985::from_json(&good.replace("\"c2\": 1e6", "\"c_2\": 1e6"))
            .unwrap_err()
            .to_string();
        assert!(err.contains("f3"), "{err}");
        let err = Grun1985::from_json(&good.replace("[1e-12, 5e2]", "[5e2, 1e-12]"))
            .unwrap_err()
            .to_string();
        assert!(err.contains("valid_mass_range_g[1]"), "{err}");
    }
}

//! Meteoroid speed distribution: the ECSS Table C-1 data and its local refocusing.
//!
//! A [`VelocityDistribution`] is discrete: each bin is represented by its centre speed and
//! carries a probability weight (weights sum to 1). Treating bins as point masses makes the
//! ECSS refocusing procedure (ECSS-E-ST-10-04C Rev.1 eqs C-20…C-24) exact without the
//! re-binning step: every particle of bin `k` is sped up to `sqrt(v_k^2 + v_esc^2)` and the
//! bin's population is multiplied by `G_k = 1 + v_esc^2 / v_k^2`. The same point-sum gives
//! the mean focusing factor of eq. C-18.
//!
//! The source table is embedded from `flux_models/ecss_table_c1_velocity.json` (all 143
//! rows, 0.5–71.5 km/s, both columns as printed); the file is in km/s because the standard
//! is, and is converted to SI when parsed.

use serde::Deserialize;

use super::{parse_json, EnvironmentError};

const EMBEDDED_JSON: &str = include_str!("../../flux_models/ecss_table_c1_velocity.json");
const M_PER_S_PER_KM_PER_S: f64 = 1e3;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct TableC1File {
    #[serde(rename = "name")]
    _name: String,
    #[serde(rename = "source")]
    _source: String,
    #[serde(default, rename = "units")]
    _units: String,
    #[serde(default, rename = "columns")]
    _columns: String,
    spacing_km_per_s: f64,
    rows: Vec<TableC1FileRow>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct TableC1FileRow {
    speed_km_per_s: f64,
    n_inf: f64,
    n_400km: f64,
}

/// One row of ECSS-E-ST-10-04C Rev.1 Table C-1, in SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TableC1Row {
    /// Bin-centre speed, m/s.
    pub speed_m_per_s: f64,
    /// Probability density of the speed far from the Earth (no focusing), per (m/s).
    pub n_inf_s_per_m: f64,
    /// Probability density of the speed at 400 km above the Earth, per (m/s).
    pub n_400km_s_per_m: f64,
}

/// Bin spacing of Table C-1, m/s (0.5 km/s).
pub const TABLE_C1_SPACING_M_PER_S: f64 = 500.0;

/// Parses the embedded ECSS Table C-1 (all 143 rows), checking that the rows are evenly
/// spaced at [`TABLE_C1_SPACING_M_PER_S`] and that every density is finite and `>= 0`.
pub fn ecss_table_c1_rows() -> Result<Vec<TableC1Row>, EnvironmentError> {
    let file: TableC1File = parse_json("ECSS Table C-1 file", EMBEDDED_JSON)?;
    let spacing_m_per_s = file.spacing_km_per_s * M_PER_S_PER_KM_PER_S;
    if (spacing_m_per_s - TABLE_C1_SPACING_M_PER_S).abs() > 1e-9 {
        return Err(EnvironmentError::InvalidParameter {
            field: "spacing_km_per_s",
            value: file.spacing_km_per_s,
            rule: "must be 0.5 (Table C-1 spacing)".to_string(),
        });
    }
    let mut rows = Vec::with_capacity(file.rows.len());
    for (index, r) in file.rows.iter().enumerate() {
        let expected_km_per_s = file.spacing_km_per_s * (index + 1) as f64;
        if (r.speed_km_per_s - expected_km_per_s).abs() > 1e-9 {
            return Err(EnvironmentError::InvalidTable {
                field: "rows.speed_km_per_s",
                index,
                value: r.speed_km_per_s,
                rule: format!("must be {expected_km_per_s} (evenly spaced from the first bin)"),
            });
        }
        for (field, value) in [("rows.n_inf", r.n_inf), ("rows.n_400km", r.n_400km)] {
            if !(value.is_finite() && value >= 0.0) {
                return Err(EnvironmentError::InvalidTable {
                    field,
                    index,
                    value,
                    rule: "must be finite and >= 0".to_string(),
                });
            }
        }
        rows.push(TableC1Row {
            speed_m_per_s: r.speed_km_per_s * M_PER_S_PER_KM_PER_S,
            n_inf_s_per_m: r.n_inf / M_PER_S_PER_KM_PER_S,
            n_400km_s_per_m: r.n_400km / M_PER_S_PER_KM_PER_S,
        });
    }
    Ok(rows)
}

/// A discrete distribution of meteoroid speeds (bin centres with weights summing to 1).
#[derive(Debug, Clone, PartialEq)]
pub struct VelocityDistribution {
    speeds_m_per_s: Vec<f64>,
    weights: Vec<f64>,
}

impl VelocityDistribution {
    /// Builds a distribution from bin speeds and non-negative weights, normalising the weights
    /// to sum 1.
    ///
    /// Rules: equal lengths, at least one bin, speeds finite, `> 0` and strictly increasing,
    /// weights finite and `>= 0` with a positive sum.
    pub fn new(speeds_m_per_s: Vec<f64>, weights: Vec<f64>) -> Result<Self, EnvironmentError> {
        if speeds_m_per_s.len() != weights.len() {
            return Err(EnvironmentError::LengthMismatch {
                field_a: "speeds_m_per_s",
                len_a: speeds_m_per_s.len(),
                field_b: "weights",
                len_b: weights.len(),
            });
        }
        if speeds_m_per_s.is_empty() {
            return Err(EnvironmentError::TooFewPoints {
                field: "speeds_m_per_s",
                count: 0,
                minimum: 1,
            });
        }
        for (index, &value) in speeds_m_per_s.iter().enumerate() {
            let rule = if !(value.is_finite() && value > 0.0) {
                Some("must be finite and > 0".to_string())
            } else if index > 0 && value <= speeds_m_per_s[index - 1] {
                Some(format!(
                    "must be strictly increasing (previous value {})",
                    speeds_m_per_s[index - 1]
                ))
            } else {
                None
            };
            if let Some(rule) = rule {
                return Err(EnvironmentError::InvalidTable {
                    field: "speeds_m_per_s",
                    index,
                    value,
                    rule,
                });
            }
        }
        for (index, &value) in weights.iter().enumerate() {
            if !(value.is_finite() && value >= 0.0) {
                return Err(EnvironmentError::InvalidTable {
                    field: "weights",
                    index,
                    value,
                    rule: "must be finite and >= 0".to_string(),
                });
            }
        }
        let total: f64 = weights.iter().sum();
        if !(total > 0.0 && total.is_finite()) {
            return Err(EnvironmentError::InvalidParameter {
                field: "weights",
                value: total,
                rule: "the sum of the weights must be finite and > 0".to_string(),
            });
        }
        Ok(Self {
            speeds_m_per_s,
            weights: weights.iter().map(|w| w / total).collect(),
        })
    }

    /// The unfocused distribution far from any body: the `n(v_inf)` column of ECSS-E-ST-10-04C
    /// Rev.1 Table C-1. This is the one to refocus locally with [`Self::focused`].
    pub fn ecss_table_c1() -> Result<Self, EnvironmentError> {
        let rows = ecss_table_c1_rows()?;
        Self::new(
            rows.iter().map(|r| r.speed_m_per_s).collect(),
            rows.iter().map(|r| r.n_inf_s_per_m).collect(),
        )
    }

    /// The `n(v at 400 km)` column of Table C-1 (Earth-focused at 400 km altitude); provided
    /// for comparison with the standard, not for use near the Moon.
    pub fn ecss_table_c1_400km() -> Result<Self, EnvironmentError> {
        let rows = ecss_table_c1_rows()?;
        Self::new(
            rows.iter().map(|r| r.speed_m_per_s).collect(),
            rows.iter().map(|r| r.n_400km_s_per_m).collect(),
        )
    }

    /// Bin speeds, m/s, strictly increasing.
    pub fn speeds_m_per_s(&self) -> &[f64] {
        &self.speeds_m_per_s
    }

    /// Bin probabilities, summing to 1.
    pub fn weights(&self) -> &[f64] {
        &self.weights
    }

    /// Mean speed `sum(w_k v_k)`, m/s.
    pub fn mean_speed_m_per_s(&self) -> f64 {
        self.speeds_m_per_s
            .iter()
            .zip(&self.weights)
            .map(|(v, w)| v * w)
            .sum()
    }

    /// The distribution after gravitational focusing by a body whose escape speed at the
    /// point is `escape_speed_m_per_s` (ECSS-E-ST-10-04C Rev.1 eqs C-20…C-24, point-mass
    /// bins): speeds become `sqrt(v^2 + v_esc^2)`, weights are multiplied by
    /// `G_k = 1 + v_esc^2 / v_k^2` and renormalised. The escape speed must be finite and `>= 0`.
    pub fn focused(&self, escape_speed_m_per_s: f64) -> Result<Self, EnvironmentError> {
        let ve2 = checked_escape_speed(escape_speed_m_per_s)?.powi(2);
        if ve2 == 0.0 {
            // Exactly the input: renormalising again would only perturb the last bits.
            return Ok(self.clone());
        }
        let speeds = self
            .speeds_m_per_s
            .iter()
            .map(|v| (v * v + ve2).sqrt())
            .collect();
        let weights = self
            .speeds_m_per_s
            .iter()
            .zip(&self.weights)
            .map(|(v, w)| w * (1.0 + ve2 / (v * v)))
            .collect();
        Self::new(speeds, weights)
    }

    /// Mean focusing factor `G_bar = sum(n_k G_k) / sum(n_k)` with `G_k = 1 + v_esc^2/v_k^2`:
    /// the point-sum form of ECSS-E-ST-10-04C Rev.1 eq. C-18 over this distribution's bins.
    /// The escape speed must be finite and `>= 0`.
    pub fn mean_focusing_factor(&self, escape_speed_m_per_s: f64) -> Result<f64, EnvironmentError> {
        let ve2 = checked_escape_speed(escape_speed_m_per_s)?.powi(2);
        Ok(self
            .speeds_m_per_s
            .iter()
            .zip(&self.weights)
            .map(|(v, w)| w * (1.0 + ve2 / (v * v)))
            .sum())
    }

    /// Cumulative probabilities: `cdf[k] = sum(w_0..=w_k)`, with the last entry set to exactly
    /// one. Sample a bin by drawing `u` in `[0, 1)` and taking the first `k` with
    /// `u < cdf[k]` (`partition_point`, O(log n)).
    pub fn cdf(&self) -> Vec<f64> {
        let mut acc = 0.0;
        let mut cdf: Vec<f64> = self
            .weights
            .iter()
            .map(|w| {
                acc += w;
                acc
            })
            .collect();
        if let Some(last) = cdf.last_mut() {
            *last = 1.0;
        }
        cdf
    }
}

fn checked_escape_speed(v_m_per_s: f64) -> Result<f64, EnvironmentError> {
    if v_m_per_s.is_finite() && v_m_per_s >= 0.0 {
        Ok(v_m_per_s)
    } else {
        Err(EnvironmentError::InvalidArgument {
            name: "escape_speed_m_per_s",
            value: v_m_per_s,
            rule: "must be finite and >= 0",
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zero_escape_speed_changes_nothing() {
        let d = VelocityDistribution::ecss_table_c1().unwrap();
        assert_eq!(d.focused(0.0).unwrap(), d);
        assert!((d.mean_focusing_factor(0.0).unwrap() - 1.0).abs() < 1e-14);
    }

    #[test]
    fn focusing_speeds_up_and_weights_slow_bins() {
        let d = VelocityDistribution::ecss_table_c1().unwrap();
        let f = d.focused(2_375.0).unwrap();
        // Every particle speeds up, but slow bins gain the most weight (G_k is largest there).
        assert!(f
            .speeds_m_per_s()
            .iter()
            .zip(d.speeds_m_per_s())
            .all(|(a, b)| a > b));
        assert!(f.weights()[0] > d.weights()[0]);
        assert!((f.weights().iter().sum::<f64>() - 1.0).abs() < 1e-12);
    }

    #[test]
    fn cdf_is_monotone_and_ends_at_one() {
        let cdf = VelocityDistribution::ecss_table_c1().unwrap().cdf();
        assert_eq!(cdf.len(), 143);
        assert!(cdf.windows(2).all(|w| w[0] <= w[1]));
        assert_eq!(*cdf.last().unwrap(), 1.0);
    }

    #[test]
    fn rejects_bad_input() {
        let e = VelocityDistribution::new(vec![1.0, 1.0], vec![0.5, 0.5]).unwrap_err();
        assert!(e.to_string().contains("speeds_m_per_s[1]"), "{e}");
        let e = VelocityDistribution::new(vec![1.0, 2.0], vec![0.5, -0.5]).unwrap_err();
        assert!(e.to_string().contains("weights[1]"), "{e}");
        assert!(VelocityDistribution::new(vec![1.0], vec![0.0]).is_err());
        assert!(VelocityDistribution::new(vec![], vec![]).is_err());
        let d = VelocityDistribution::new(vec![1.0], vec![1.0]).unwrap();
        assert!(d.focused(f64::NAN).is_err());
        assert!(d.mean_focusing_factor(-1.0).is_err());
    }
}

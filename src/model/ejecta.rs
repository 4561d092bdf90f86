//! The lunar secondary-ejecta strike source on the lowest bays (REFERENCES-damage §3), built
//! from `environment.lunar_ejecta` when enabled.
//!
//! Per bay and speed bin the flux onto one face is `s × N_b(>= m) × f_b`, with `s` the
//! scenario's scale factor, `N_b` the SP-8013 cumulative flux and `f_b` the bay-averaged share
//! of the bin's speeds whose ballistic ceiling reaches the altitude
//! ([`LunarEjecta::mean_reach_fraction`]). A bay above the fastest bin's ceiling (≈ 374 km)
//! gets nothing.
//!
//! **Arrival geometry (assumption).** Ejecta that reach a vertical ribbon well above their
//! launch point travel mostly horizontally (REFERENCES-damage §3.6 [DERIVED]); we take them
//! exactly horizontal with a uniform azimuth. A face with a horizontal normal then sees
//! `cos θ = cos ψ` with the azimuth from the normal `ψ` weighted by `cos ψ` (so `sin ψ = u`),
//! and the in-plane projection of the velocity is horizontal: the track angle is `π/2`, and the
//! elongated footprint lies across the width (the worst case for the removed width).
//!
//! Strike rate above a diameter floor `d_f` per metre of one ribbon (both faces, exposure width
//! `w + d`): the cumulative flux is a power law in diameter, `F(d) = F(d_f)(d/d_f)^q` with
//! `q = 3 β` (`β` the mass index, −1.2), so `∫_{d_f}^∞ F = F(d_f) d_f / (−q − 1)` and the rate is
//! `2 F(d_f) (w + d_f + d_f/(−q − 1))` per bin.

use crate::damage::LowSpeedHoleLaw;
use crate::environment::{mass_from_diameter_kg, LunarEjecta};
use crate::scenario::{ScenarioError, SECONDS_PER_YEAR};

use super::Model;

/// The ejecta source as the engine and reports need it.
#[derive(Debug, Clone)]
pub struct EjectaSource {
    /// The environment model.
    pub environment: LunarEjecta,
    /// Flux multiplier, in the file's accepted range.
    pub scale_factor: f64,
    /// Perforation rule at ejecta speeds.
    pub perforation: LowSpeedHoleLaw,
    /// Per bay and bin: bay-averaged reach fraction (0 above the ceiling).
    pub reach: Vec<Vec<f64>>,
}

impl EjectaSource {
    /// Build for bays with the given (bottom, top) altitudes.
    ///
    /// # Errors
    /// [`ScenarioError`] for a parameter outside the file's documented range.
    pub fn new(
        environment: LunarEjecta,
        scale_factor: f64,
        perforation: LowSpeedHoleLaw,
        bays: &[(f64, f64)],
    ) -> Result<Self, ScenarioError> {
        let (lo, hi) = environment.scale_factor_range;
        if !(lo..=hi).contains(&scale_factor) {
            return Err(ScenarioError::OutOfRange {
                path: "environment.lunar_ejecta.flux_scale_factor".into(),
                value: scale_factor.to_string(),
                allowed: format!("[{lo}, {hi}]"),
                unit: "(dimensionless)".into(),
                note: "range documented in flux_models/sp8013_lunar_ejecta.json".into(),
            });
        }
        for (i, b) in environment.bins.iter().enumerate() {
            if (b.mass_exponent * 3.0).is_nan() || b.mass_exponent * 3.0 >= -1.0 {
                return Err(ScenarioError::Model {
                    path: format!("flux_models/sp8013_lunar_ejecta.json bins[{i}].mass_exponent"),
                    message: format!(
                        "{} gives an infinite edge-overlap integral; it must be below -1/3",
                        b.mass_exponent
                    ),
                });
            }
        }
        let top = environment.max_ceiling_altitude_m();
        let reach = bays
            .iter()
            .map(|&(a, b)| {
                (0..environment.bins.len())
                    .map(|k| {
                        if a >= top {
                            0.0
                        } else {
                            environment.mean_reach_fraction(k, a, b)
                        }
                    })
                    .collect()
            })
            .collect();
        Ok(EjectaSource {
            environment,
            scale_factor,
            perforation,
            reach,
        })
    }

    /// Whether bay `j` receives any ejecta.
    pub fn reaches_bay(&self, j: usize) -> bool {
        self.scale_factor > 0.0 && self.reach[j].iter().any(|&f| f > 0.0)
    }

    /// Strike rate per metre of one ribbon of width `width_m` in bay `j` by ejecta of bin `b`
    /// with diameter `>= floor_m`, per second (both faces, edge overlap; module docs).
    pub fn bin_rate_per_m_per_s(&self, j: usize, b: usize, width_m: f64, floor_m: f64) -> f64 {
        let f = self.reach[j][b] * self.scale_factor;
        if f <= 0.0 || floor_m.is_nan() || floor_m <= 0.0 {
            return 0.0;
        }
        let e = &self.environment;
        let m = mass_from_diameter_kg(floor_m, e.particle_density_kg_per_m3).unwrap_or(0.0);
        let q = 3.0 * e.bins[b].mass_exponent;
        let flux = e.bin_flux_per_m2_per_s(b, m) * f;
        2.0 * flux * (width_m + floor_m + floor_m / (-q - 1.0))
    }

    /// Strike rate per metre of one ribbon, all bins, per year.
    pub fn rate_per_m_per_year(&self, j: usize, width_m: f64, floor_m: f64) -> f64 {
        (0..self.environment.bins.len())
            .map(|b| self.bin_rate_per_m_per_s(j, b, width_m, floor_m))
            .sum::<f64>()
            * SECONDS_PER_YEAR
    }
}

/// Sub-intervals of each speed bin in the hole-rate quadrature.
const SPEED_NODES_PER_BIN: usize = 16;
/// Gauss–Legendre nodes and weights on [0, 1] (4 points), for `sin ψ = u`.
const GL4: [(f64, f64); 4] = [
    (0.069_431_844_202_973_71, 0.173_927_422_568_726_9),
    (0.330_009_478_207_571_9, 0.326_072_577_431_273_1),
    (0.669_990_521_792_428_1, 0.326_072_577_431_273_1),
    (0.930_568_155_797_026_3, 0.173_927_422_568_726_9),
];

/// The ejecta as a strike source of the hole-rate table
/// ([`crate::model::hole_rate::StrikeSource`]), matching the strike sampler's draws: per bin,
/// (altitude, speed) uniform over the part of the bay × bin below each speed's ceiling,
/// horizontal arrival with `sin ψ = u`, track angle π/2, the low-speed perforation rule.
///
/// All bins must share one mass index (they do in SP-8013: −1.2), so that the bin mix, and
/// with it the impact nodes, does not depend on the diameter, as the table requires.
#[derive(Debug)]
pub struct EjectaStrikes<'m> {
    source: &'m EjectaSource,
    nodes: Vec<Vec<crate::model::hole_rate::ImpactNode>>,
    /// Per bay: Σ_b scale × reach × 10^{a_b} (flux coefficient at 1 g), per m² per s.
    coefficient: Vec<f64>,
    mass_exponent: f64,
}

impl<'m> EjectaStrikes<'m> {
    /// The ejecta source of a model.
    ///
    /// # Errors
    /// A text when the bins do not share one mass index.
    pub fn new(model: &Model, source: &'m EjectaSource) -> Result<Self, String> {
        let e = &source.environment;
        let beta = e.bins[0].mass_exponent;
        if e.bins.iter().any(|b| b.mass_exponent != beta) {
            return Err("the hole-rate table needs one mass index for all ejecta bins".into());
        }
        let mut nodes = Vec::with_capacity(model.profile.bays.len());
        let mut coefficient = Vec::with_capacity(model.profile.bays.len());
        for (j, bay) in model.profile.bays.iter().enumerate() {
            let (lo, hi) = (bay.bottom_altitude_m, bay.top_altitude_m);
            let mut bay_nodes = Vec::new();
            let mut total = 0.0;
            for (b, bin) in e.bins.iter().enumerate() {
                let share =
                    source.reach[j][b] * source.scale_factor * 10f64.powf(bin.log10_coefficient);
                if share.is_nan() || share <= 0.0 {
                    continue;
                }
                total += share;
                // Speed marginal of the accepted (altitude, speed) region: ∝ the length of the
                // bay below the speed's ceiling.
                let dv =
                    (bin.speed_high_m_per_s - bin.speed_low_m_per_s) / SPEED_NODES_PER_BIN as f64;
                let mut sub = Vec::with_capacity(SPEED_NODES_PER_BIN);
                let mut sub_total = 0.0;
                for k in 0..SPEED_NODES_PER_BIN {
                    let v = bin.speed_low_m_per_s + (k as f64 + 0.5) * dv;
                    let len = (e.ceiling_altitude_m(v) - lo).clamp(0.0, hi - lo);
                    sub.push((v, len));
                    sub_total += len;
                }
                if sub_total.is_nan() || sub_total <= 0.0 {
                    continue;
                }
                for (v, len) in sub {
                    for &(u, wu) in &GL4 {
                        bay_nodes.push(crate::model::hole_rate::ImpactNode {
                            speed_m_per_s: v,
                            cos_incidence: (1.0 - u * u).sqrt(),
                            track_angle_rad: std::f64::consts::FRAC_PI_2,
                            weight: share * len / sub_total * wu,
                        });
                    }
                }
            }
            if total > 0.0 {
                for n in &mut bay_nodes {
                    n.weight /= total;
                }
            }
            nodes.push(bay_nodes);
            coefficient.push(total);
        }
        Ok(EjectaStrikes {
            source,
            nodes,
            coefficient,
            mass_exponent: beta,
        })
    }
}

impl crate::model::hole_rate::StrikeSource for EjectaStrikes<'_> {
    fn name(&self) -> &str {
        "lunar secondary ejecta (SP-8013)"
    }
    fn flux_above_per_m2_per_s(&self, bay: usize, diameter_m: f64) -> f64 {
        let c = self.coefficient[bay];
        if c.is_nan() || c <= 0.0 {
            return 0.0;
        }
        let rho = self.source.environment.particle_density_kg_per_m3;
        let m_g = mass_from_diameter_kg(diameter_m, rho).unwrap_or(0.0) * 1e3;
        if m_g.is_nan() || m_g <= 0.0 {
            return 0.0;
        }
        c * m_g.powf(self.mass_exponent)
    }
    fn impact_nodes(&self, bay: usize) -> Vec<crate::model::hole_rate::ImpactNode> {
        self.nodes[bay].clone()
    }
    fn particle_density_kg_per_m3(&self) -> f64 {
        self.source.environment.particle_density_kg_per_m3
    }
    fn perforation_law(&self) -> Option<&dyn crate::damage::PerforationLaw> {
        Some(&self.source.perforation)
    }
}

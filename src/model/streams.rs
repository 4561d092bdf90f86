//! Meteor streams as strike sources (see [`crate::environment::streams`] for the profile and
//! the strength).
//!
//! At its peak a stream is a second strike source for the hole-rate quadrature
//! ([`StreamStrikes`], one [`HoleRateTable`] per stream); at time t its rates are the peak
//! rates times the activity g(t), so a segment's hole rate is H_bg(x) + Σ_k g_k(t) H_k(x).
//!
//! Geometry (engineering assumptions, stated in the model statement):
//! - the stream's flux is given through a surface normal to the radiant; the ribbon turns
//!   once a month against the stars with the Earth–Moon line, so its faces are taken as
//!   randomly oriented against the radiant: one face receives a quarter of the normal flux
//!   (the mean of max(cos, 0) over directions), the same convention as the sporadic flux
//!   onto a randomly tumbling plate (ECSS), and the incidence cosine on a struck face then has
//!   density 2 cos, i.e. cos = sqrt(u) as for isotropic flux;
//! - speed: the radiant (geocentric) speed, focused by the Moon and Earth at the bay,
//!   v = sqrt(v∞² + v_esc²), and the flux raised by the focusing factor 1 + v_esc²/v∞² at that
//!   single speed (the same rule the sporadic bins use);
//! - the bay's lunar and Earth shielding factors apply as for the sporadic flux (an
//!   orientation average: a narrow radiant below the local horizon is shielded completely);
//! - `environment.flux_scale_factor` (the uncertainty of the sporadic model) does not apply;
//! - the Grün flux already holds the yearly average of the streams (ECSS §10.2.4.1), so adding
//!   streams on top double counts their yearly mean (about 10 % of the annual exposure for the
//!   50 strongest showers at 1 mm aluminium, McBride 1997 as summarised in REFERENCES-damage.md
//!   §4.2): conservative.

use crate::environment::{mass_from_diameter_kg, MeteorStream};
use crate::scenario::SECONDS_PER_YEAR;

use super::hole_rate::{
    speed_band_altitude_m, speed_band_of, HoleRateTable, ImpactNode, StrikeSource, GL2, GL4,
    SPEED_BANDS,
};
use super::Model;

/// One stream at its peak as the hole-rate quadrature sees it.
#[derive(Debug)]
pub struct StreamStrikes<'m> {
    stream: &'m MeteorStream,
    name: String,
    /// Per-bay multiplier on the normal flux: 1/4 (random face) x shielding x focusing.
    multiplier: Vec<f64>,
    /// Per-bay impact speed, m/s.
    speed_m_per_s: Vec<f64>,
}

/// Per-bay constants of a stream: (multiplier on the normal flux, impact speed m/s).
pub fn stream_bay_constants(
    model: &Model,
    stream: &MeteorStream,
) -> Result<Vec<(f64, f64)>, String> {
    let env = &model.scenario.environment;
    let top = model.profile.length_m();
    let v = stream.speed_m_per_s;
    let mut band_esc = Vec::with_capacity(SPEED_BANDS);
    for b in 0..SPEED_BANDS {
        let lf = crate::environment::local_factors(
            &model.orbit,
            model.scenario.tether.side,
            speed_band_altitude_m(b, top),
            &model.velocity,
            env.moon_focusing,
            env.earth_focusing,
            env.moon_shielding,
        )
        .map_err(|e| e.to_string())?;
        band_esc.push(lf.combined_escape_speed_m_per_s());
    }
    Ok(model
        .profile
        .bays
        .iter()
        .zip(&model.bays)
        .map(|(bay, t)| {
            let v_esc = band_esc[speed_band_of(bay.mid_altitude_m(), top)];
            let focus = 1.0 + v_esc * v_esc / (v * v);
            let shield = t.factors.moon_shielding * t.factors.earth_shielding;
            (0.25 * shield * focus, (v * v + v_esc * v_esc).sqrt())
        })
        .collect())
}

impl<'m> StreamStrikes<'m> {
    /// The source of stream `k` of a model.
    pub fn new(model: &'m Model, k: usize) -> Result<Self, String> {
        let stream = &model.scenario.environment.meteor_streams[k];
        let c = stream_bay_constants(model, stream)?;
        Ok(StreamStrikes {
            stream,
            name: format!("meteor stream {}", stream.name),
            multiplier: c.iter().map(|x| x.0).collect(),
            speed_m_per_s: c.iter().map(|x| x.1).collect(),
        })
    }
}

impl StrikeSource for StreamStrikes<'_> {
    fn name(&self) -> &str {
        &self.name
    }
    fn flux_above_per_m2_per_s(&self, bay: usize, diameter_m: f64) -> f64 {
        mass_from_diameter_kg(diameter_m, self.stream.density_kg_per_m3)
            .map(|m| self.stream.peak_flux_above_per_m2_per_s(m))
            .unwrap_or(0.0)
            * self.multiplier[bay]
    }
    fn impact_nodes(&self, bay: usize) -> Vec<ImpactNode> {
        let mut nodes = Vec::with_capacity(GL4.len() * GL2.len());
        for &(u, wu) in &GL4 {
            for &(a, wa) in &GL2 {
                nodes.push(ImpactNode {
                    speed_m_per_s: self.speed_m_per_s[bay],
                    cos_incidence: u.sqrt(),
                    track_angle_rad: std::f64::consts::FRAC_PI_2 * a,
                    weight: wu * wa,
                });
            }
        }
        nodes
    }
    fn particle_density_kg_per_m3(&self) -> f64 {
        self.stream.density_kg_per_m3
    }
}

/// The hole-rate table of each stream at its peak (same x grid as the background's: the grid
/// depends only on the bay's floor and width).
pub fn stream_tables(model: &Model, floor_fraction: f64) -> Result<Vec<HoleRateTable>, String> {
    (0..model.scenario.environment.meteor_streams.len())
        .map(|k| {
            let src = StreamStrikes::new(model, k)?;
            HoleRateTable::build_with_sources(model, floor_fraction, &[&src])
        })
        .collect()
}

/// Mean activity of each stream over the mission, ∫ g / T (dimensionless).
pub fn mission_mean_activity(model: &Model) -> Vec<f64> {
    let env = &model.scenario.environment;
    let t = model.scenario.run.mission_s;
    env.meteor_streams
        .iter()
        .map(|s| s.exposure_s(env.mission_start_day_of_year, 0.0, t) / t)
        .collect()
}

/// Expected strikes per year at the peak of stream `k` by particles able to sever an intact
/// segment, whole tether (for `check`), and the same over the mission.
pub fn stream_damaging_strikes(model: &Model, k: usize) -> Result<(f64, f64), String> {
    let table = {
        let src = StreamStrikes::new(model, k)?;
        HoleRateTable::build_with_sources(model, 1.0, &[&src])?
    };
    let n = model.profile.design.ribbon_count as f64;
    let peak_per_s: f64 = (0..table.len())
        .map(|j| table.bay(j).floor_rate_per_s() * n)
        .sum();
    let env = &model.scenario.environment;
    let exposure = env.meteor_streams[k].exposure_s(
        env.mission_start_day_of_year,
        0.0,
        model.scenario.run.mission_s,
    );
    Ok((peak_per_s * SECONDS_PER_YEAR, peak_per_s * exposure))
}

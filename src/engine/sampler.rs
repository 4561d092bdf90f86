//! Strike sampling: O(1) per strike.
//!
//! Strikes on the whole tether form a Poisson process in time whose rate varies along the tether
//! (non-homogeneous in space, constant in time: the flux models are yearly averages). We draw the
//! gap to the next strike from the total rate, then the bay from an alias table of per-bay rates,
//! then the particle size, ribbon, lateral position, speed and incidence.
//!
//! **Size with edge overlap.** A particle of diameter d touches a ribbon of width w when its centre
//! passes within d/2 of it, so the size density of strikes on a ribbon is proportional to
//! (w + d) n(d) on d >= d_floor, with n = -dF/dd. We split it into two components with exact
//! weights: w n(d) (mass F(d_floor) x w) and d n(d) (mass G(d_floor) = d_floor F(d_floor) +
//! Int_{d_floor}^inf F). Each is inverted with a table uniform in ln F (or ln G) built once for
//! the run, so a draw is one uniform, one table look-up and one interpolation.
//!
//! **Mass floor, and why it does not bias results.** A segment's strength is set by its worst
//! cross-section: holes at different places along a bay tens of kilometres long do not add (two
//! millimetre holes overlap along the bay with probability of order hole size / bay length per
//! pair). So a segment is cut when its largest hole leaves too little net width for its current
//! load. Per bay, the floor is the smallest diameter that can open the smallest hole that severs
//! a segment in any stable load state of the bay (the largest load a surviving ribbon can carry
//! under the sharing rule). A hole below it can never sever, now or after any redistribution, so
//! leaving those particles out changes no loss, cut or cascade. An optional factor below 1 lowers
//! the floor to also sample (and count) sub-critical holes.
//!
//! **Speed** is drawn from the locally focused ECSS Table C-1 distribution of the bay's
//! altitude band (32 bands), uniformly within the 0.5 km/s bin. **Incidence** on a flat face
//! under isotropic flux has density 2 cos(theta) sin(theta), so cos(theta) = sqrt(u). The
//! **track angle** (in-plane velocity to the ribbon's long axis) is uniform on [0, π/2].
//!
//! **Draw order** per strike (strikes stream): bay (alias), size component, size, ribbon,
//! centre, speed bin, speed within the bin, incidence, track angle; then the gap to the next
//! strike.

use rand::Rng;

use crate::damage::RibbonTarget;
use crate::environment::{mass_from_diameter_kg, FluxModel};
use crate::model::Model;
use crate::scenario::SECONDS_PER_YEAR;
use crate::stats::AliasTable;

use super::EngineError;

/// One sampled strike.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Strike {
    /// Bay index.
    pub bay: u32,
    /// Ribbon index within the bay.
    pub ribbon: u32,
    /// Particle diameter, m.
    pub diameter_m: f64,
    /// Particle centre across the ribbon from one edge, m (in [-d/2, w + d/2]).
    pub centre_m: f64,
    /// Impact speed, m/s.
    pub speed_m_per_s: f64,
    /// Cosine of the angle from the face normal.
    pub cos_incidence: f64,
    /// Angle between the in-plane velocity and the ribbon's long axis, rad, in [0, π/2].
    pub track_angle_rad: f64,
    /// `Some(altitude above the surface, m)` for a lunar-ejecta strike; `None` for a primary
    /// meteoroid.
    pub ejecta_altitude_m: Option<f64>,
    /// `Some(k)` for a particle of meteor stream k (its density applies); `None` otherwise.
    pub stream: Option<u16>,
}

/// Per-bay lunar-ejecta sampling constants (see [`crate::model::ejecta`]).
#[derive(Clone, Debug)]
struct EjectaBay {
    /// Probability that a strike on this bay is a primary meteoroid.
    p_primary: f64,
    /// Cumulative bin probabilities among ejecta strikes.
    bin_cdf: Vec<f64>,
    floor_m: f64,
    bottom_m: f64,
    top_m: f64,
}

/// Per-bay sampling constants.
#[derive(Clone, Copy, Debug)]
struct BaySampling {
    width_m: f64,
    /// Probability of the w n(d) component.
    p_width: f64,
    ln_f_floor: f64,
    ln_g_floor: f64,
    band: u16,
}

/// Inverse of a decreasing function y(d), tabulated uniformly in ln y.
#[derive(Clone, Debug)]
struct InverseTable {
    ln_y_max: f64,
    step: f64,
    ln_d: Vec<f64>,
}

impl InverseTable {
    /// `ln_y` evaluated on the grid `ln_d_grid` (increasing), decreasing values.
    fn build(ln_d_grid: &[f64], ln_y: &[f64], points: usize) -> Self {
        let ln_y_max = ln_y[0];
        let ln_y_min = *ln_y.last().unwrap_or(&ln_y_max);
        let step = (ln_y_max - ln_y_min) / (points - 1) as f64;
        let mut out = Vec::with_capacity(points);
        let mut k = 0;
        for i in 0..points {
            let target = ln_y_max - i as f64 * step;
            while k + 2 < ln_y.len() && ln_y[k + 1] > target {
                k += 1;
            }
            let (y0, y1) = (ln_y[k], ln_y[k + 1]);
            let f = if y0 > y1 {
                ((y0 - target) / (y0 - y1)).clamp(0.0, 1.0)
            } else {
                0.0
            };
            out.push(ln_d_grid[k] + f * (ln_d_grid[k + 1] - ln_d_grid[k]));
        }
        InverseTable {
            ln_y_max,
            step,
            ln_d: out,
        }
    }

    /// Diameter where ln y(d) = `ln_y`, clamped to the table.
    #[inline]
    fn diameter(&self, ln_y: f64) -> f64 {
        let t = ((self.ln_y_max - ln_y) / self.step).max(0.0);
        let i = t as usize;
        if i + 1 >= self.ln_d.len() {
            return self.ln_d[self.ln_d.len() - 1].exp();
        }
        let f = t - i as f64;
        (self.ln_d[i] + f * (self.ln_d[i + 1] - self.ln_d[i])).exp()
    }
}

/// A velocity band: alias table over the focused speed bins.
#[derive(Clone, Debug)]
struct VelocityBand {
    alias: AliasTable,
    v_inf_m_per_s: Vec<f64>,
    v_esc_sq: f64,
}

/// Samples strikes for one built model. Immutable: shared by all threads.
#[derive(Debug)]
pub struct StrikeSampler {
    bay_alias: AliasTable,
    bay_rate_per_s: Vec<f64>,
    bays: Vec<BaySampling>,
    total_rate_per_s: f64,
    ribbon_count: u32,
    inv_f: InverseTable,
    inv_g: InverseTable,
    bands: Vec<VelocityBand>,
    bin_half_width_m_per_s: f64,
    floor_diameter_m: Vec<f64>,
    /// Lunar-ejecta constants for bays the source reaches (`None` elsewhere or when off).
    ejecta_bays: Vec<Option<EjectaBay>>,
    /// Ejecta bins: (low, high speed m/s, diameter exponent q of F(d) ∝ d^q).
    ejecta_bins: Vec<(f64, f64, f64)>,
    ejecta_ceiling: Option<crate::environment::LunarEjecta>,
}

const GRID: usize = 16_384;
const DECADES_ABOVE_FLOOR: f64 = 5.0;
const BANDS: usize = 32;

use crate::model::hole_rate::smallest_severing_hole_m;

impl StrikeSampler {
    /// Build for a model. `floor_fraction` in (0, 1] scales each bay's smallest severing hole
    /// to set the sampling floor (1: only particles that can sever on their own).
    pub fn new(model: &Model, floor_fraction: f64) -> Result<Self, EngineError> {
        let env = &model.scenario.environment;
        let flux: &dyn FluxModel = model.flux.as_ref();
        let rho_p = env.particle_density_kg_per_m3;
        let n = model.profile.design.ribbon_count;
        let f_of_d = |d: f64| {
            mass_from_diameter_kg(d, rho_p)
                .map(|m| flux.cumulative_flux_per_m2_per_year(m))
                .unwrap_or(0.0)
        };

        // Per-bay floor diameters.
        let mut floor_diameter_m = Vec::with_capacity(model.profile.bays.len());
        for (j, bay) in model.profile.bays.iter().enumerate() {
            let h = smallest_severing_hole_m(model, j) * floor_fraction;
            let target = RibbonTarget {
                width_m: bay.width_m,
                thickness_m: model.profile.design.thickness_m,
                density_kg_per_m3: model.profile.design.density_kg_per_m3,
            };
            let d = model.perforation.min_diameter_for_hole_m(h, &target);
            if !(d.is_finite() && d > 0.0) {
                return Err(EngineError::Model(format!(
                    "bay {j}: no finite particle diameter can open a {h:.3e} m hole; check the damage law"
                )));
            }
            floor_diameter_m.push(d);
        }
        let d_lo = floor_diameter_m
            .iter()
            .copied()
            .fold(f64::INFINITY, f64::min);
        let d_hi_max = floor_diameter_m.iter().copied().fold(0.0, f64::max);
        let ln_lo = d_lo.ln();
        let ln_hi = d_hi_max.ln() + DECADES_ABOVE_FLOOR * std::f64::consts::LN_10;

        // Forward grid of F(d) and G(d) = d F(d) + Int_d^inf F, uniform in ln d.
        let h = (ln_hi - ln_lo) / (GRID - 1) as f64;
        let ln_d: Vec<f64> = (0..GRID).map(|i| ln_lo + i as f64 * h).collect();
        let f: Vec<f64> = ln_d.iter().map(|&u| f_of_d(u.exp())).collect();
        if f[0] <= 0.0 {
            return Err(EngineError::Model(
                "the flux model gives no particles above the sampling floor".into(),
            ));
        }
        let mut tail = vec![0.0; GRID];
        for i in (0..GRID - 1).rev() {
            // Int F dd = Int F d du, trapezoid in u = ln d.
            let a = f[i] * ln_d[i].exp();
            let b = f[i + 1] * ln_d[i + 1].exp();
            tail[i] = tail[i + 1] + 0.5 * (a + b) * h;
        }
        let g: Vec<f64> = (0..GRID).map(|i| ln_d[i].exp() * f[i] + tail[i]).collect();
        // Floors on the grid's top end can have F = 0; keep logs finite and decreasing.
        let ln_of = |v: &[f64]| -> Vec<f64> {
            let mut out: Vec<f64> = Vec::with_capacity(v.len());
            for (i, &x) in v.iter().enumerate() {
                let l = if x > 0.0 { x.ln() } else { f64::NEG_INFINITY };
                let prev = if i > 0 { out[i - 1] } else { f64::INFINITY };
                out.push(if l.is_finite() {
                    l.min(prev)
                } else {
                    prev - 1.0
                });
            }
            out
        };
        let ln_f = ln_of(&f);
        let ln_g = ln_of(&g);
        let inv_f = InverseTable::build(&ln_d, &ln_f, GRID);
        let inv_g = InverseTable::build(&ln_d, &ln_g, GRID);
        let interp = |table: &[f64], d: f64| -> f64 {
            let t = ((d.ln() - ln_lo) / h).clamp(0.0, (GRID - 1) as f64);
            let i = (t as usize).min(GRID - 2);
            let fr = t - i as f64;
            table[i] + fr * (table[i + 1] - table[i])
        };

        // Velocity bands by altitude, uniform in ln(1 + h / 100 km).
        let top = model.profile.length_m();
        let band_of = |alt: f64| -> usize {
            let x = (1.0 + alt / 1e5).ln() / (1.0 + top / 1e5).ln();
            ((x * BANDS as f64) as usize).min(BANDS - 1)
        };
        let mut bands = Vec::with_capacity(BANDS);
        let free = &model.velocity;
        for b in 0..BANDS {
            let x = (b as f64 + 0.5) / BANDS as f64;
            let alt = ((1.0 + top / 1e5).powf(x) - 1.0) * 1e5;
            let lf = crate::environment::local_factors(
                &model.orbit,
                model.scenario.tether.side,
                alt,
                free,
                env.moon_focusing,
                env.earth_focusing,
                env.moon_shielding,
            )
            .map_err(|e| EngineError::Model(e.to_string()))?;
            let v_esc = lf.combined_escape_speed_m_per_s();
            let weights: Vec<f64> = free
                .speeds_m_per_s()
                .iter()
                .zip(free.weights())
                .map(|(&v, &w)| w * (1.0 + v_esc * v_esc / (v * v)))
                .collect();
            bands.push(VelocityBand {
                alias: AliasTable::new(&weights).map_err(|e| EngineError::Model(e.to_string()))?,
                v_inf_m_per_s: free.speeds_m_per_s().to_vec(),
                v_esc_sq: v_esc * v_esc,
            });
        }
        let speeds = free.speeds_m_per_s();
        let bin_half_width_m_per_s = if speeds.len() > 1 {
            0.5 * (speeds[1] - speeds[0])
        } else {
            0.0
        };

        // Per-bay rates and component weights.
        let mut rates = Vec::with_capacity(model.profile.bays.len());
        let mut bays = Vec::with_capacity(model.profile.bays.len());
        for (j, bay) in model.profile.bays.iter().enumerate() {
            let d = floor_diameter_m[j];
            let w = bay.width_m;
            let fl = interp(&f, d);
            let gl = interp(&g, d);
            let local = model.bays[j].factors.total() * env.flux_scale_factor;
            let per_m_per_year = 2.0 * (w * fl + gl) * local;
            rates.push(per_m_per_year * bay.length_m() * n as f64);
            bays.push(BaySampling {
                width_m: w,
                p_width: if w * fl + gl > 0.0 {
                    w * fl / (w * fl + gl)
                } else {
                    1.0
                },
                ln_f_floor: if fl > 0.0 { fl.ln() } else { f64::NEG_INFINITY },
                ln_g_floor: if gl > 0.0 { gl.ln() } else { f64::NEG_INFINITY },
                band: band_of(bay.mid_altitude_m()) as u16,
            });
        }
        // Lunar ejecta: a second source on the bays it reaches, added to those bays' rates.
        let mut ejecta_bays: Vec<Option<EjectaBay>> = vec![None; model.profile.bays.len()];
        let mut ejecta_bins = Vec::new();
        if let Some(e) = &model.ejecta {
            ejecta_bins = e
                .environment
                .bins
                .iter()
                .map(|b| {
                    (
                        b.speed_low_m_per_s,
                        b.speed_high_m_per_s,
                        3.0 * b.mass_exponent,
                    )
                })
                .collect();
            for (j, bay) in model.profile.bays.iter().enumerate() {
                if !e.reaches_bay(j) {
                    continue;
                }
                let target = RibbonTarget {
                    width_m: bay.width_m,
                    thickness_m: model.profile.design.thickness_m,
                    density_kg_per_m3: model.profile.design.density_kg_per_m3,
                };
                let h = smallest_severing_hole_m(model, j) * floor_fraction;
                let floor = crate::damage::PerforationLaw::min_diameter_for_hole_m(
                    &e.perforation,
                    h,
                    &target,
                );
                let per_bin: Vec<f64> = (0..ejecta_bins.len())
                    .map(|b| {
                        e.bin_rate_per_m_per_s(j, b, bay.width_m, floor)
                            * SECONDS_PER_YEAR
                            * bay.length_m()
                            * n as f64
                    })
                    .collect();
                let total_ej: f64 = per_bin.iter().sum();
                if total_ej.is_nan() || total_ej <= 0.0 {
                    continue;
                }
                let mut acc = 0.0;
                let bin_cdf = per_bin
                    .iter()
                    .map(|r| {
                        acc += r / total_ej;
                        acc
                    })
                    .collect();
                let primary = rates[j];
                rates[j] += total_ej;
                ejecta_bays[j] = Some(EjectaBay {
                    p_primary: primary / rates[j],
                    bin_cdf,
                    floor_m: floor,
                    bottom_m: bay.bottom_altitude_m,
                    top_m: bay.top_altitude_m,
                });
            }
        }
        let total_per_year: f64 = rates.iter().sum();
        let bay_alias = if total_per_year > 0.0 {
            AliasTable::new(&rates).map_err(|e| EngineError::Model(e.to_string()))?
        } else {
            AliasTable::new(&vec![1.0; rates.len()])
                .map_err(|e| EngineError::Model(e.to_string()))?
        };
        Ok(StrikeSampler {
            bay_alias,
            bay_rate_per_s: rates.iter().map(|r| r / SECONDS_PER_YEAR).collect(),
            bays,
            total_rate_per_s: total_per_year / SECONDS_PER_YEAR,
            ribbon_count: n as u32,
            inv_f,
            inv_g,
            bands,
            bin_half_width_m_per_s,
            floor_diameter_m,
            ejecta_bays,
            ejecta_bins,
            ejecta_ceiling: model.ejecta.as_ref().map(|e| e.environment.clone()),
        })
    }

    /// Total strike rate above the floors, whole tether, per second.
    pub fn total_rate_per_s(&self) -> f64 {
        self.total_rate_per_s
    }

    /// Strike rate above the floor on bay `j` (all its ribbons), per second.
    pub fn bay_rate_per_s(&self, j: usize) -> f64 {
        self.bay_rate_per_s[j]
    }

    /// Sampling floor diameter of bay `j`, m.
    pub fn floor_diameter_m(&self, j: usize) -> f64 {
        self.floor_diameter_m[j]
    }

    /// Time to the next strike on the whole tether, s (infinite when the rate is zero).
    #[inline]
    pub fn next_gap_s<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        if self.total_rate_per_s <= 0.0 {
            return f64::INFINITY;
        }
        -unit_nonzero(rng).ln() / self.total_rate_per_s
    }

    /// Draw one strike (bay, ribbon, size, position, speed, angle).
    #[inline]
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> Strike {
        let j = self.bay_alias.sample(rng);
        self.sample_in_bay(rng, j)
    }

    /// Draw the strike's details given its bay.
    ///
    /// On a bay the lunar-ejecta source reaches, one extra uniform comes first and chooses the
    /// source (and, for ejecta, the speed bin); other bays draw exactly as without ejecta.
    #[inline]
    pub fn sample_in_bay<R: Rng + ?Sized>(&self, rng: &mut R, j: usize) -> Strike {
        if let Some(e) = &self.ejecta_bays[j] {
            let u = unit(rng);
            if u >= e.p_primary {
                let v = (u - e.p_primary) / (1.0 - e.p_primary);
                let bin = e
                    .bin_cdf
                    .partition_point(|&c| c <= v)
                    .min(e.bin_cdf.len() - 1);
                return self.sample_ejecta(rng, j, e, bin);
            }
        }
        self.sample_primary(rng, j)
    }

    /// An ejecta strike on bay `j` from speed bin `bin`. Draw order: size component, size,
    /// ribbon, centre, then (altitude uniform in the bay, speed uniform in the bin) pairs until
    /// the speed's ballistic ceiling reaches the altitude, then the arrival azimuth. The track
    /// angle is π/2 (horizontal arrival; see `model::ejecta`), no draw.
    fn sample_ejecta<R: Rng + ?Sized>(
        &self,
        rng: &mut R,
        j: usize,
        e: &EjectaBay,
        bin: usize,
    ) -> Strike {
        let (v_lo, v_hi, q) = self.ejecta_bins[bin];
        let w = self.bays[j].width_m;
        let d_f = e.floor_m;
        // Components w n(d) (mass w F_f) and d n(d) (mass d_f F_f (-q)/(-q-1)).
        let p_width = w / (w + d_f * (-q) / (-q - 1.0));
        let u_comp = unit(rng);
        let u = unit_nonzero(rng);
        let d = if u_comp < p_width {
            d_f * u.powf(1.0 / q)
        } else {
            d_f * u.powf(1.0 / (q + 1.0))
        };
        let ribbon = ((unit(rng) * self.ribbon_count as f64) as u32).min(self.ribbon_count - 1);
        let centre = -0.5 * d + unit(rng) * (w + d);
        let ceiling = self
            .ejecta_ceiling
            .as_ref()
            .expect("ejecta bays exist only with the ejecta model");
        let (mut alt, mut speed);
        loop {
            alt = e.bottom_m + unit(rng) * (e.top_m - e.bottom_m);
            speed = v_lo + unit(rng) * (v_hi - v_lo);
            if ceiling.ceiling_altitude_m(speed) >= alt {
                break;
            }
        }
        // Horizontal arrival, azimuth from the face normal weighted by cos: sin(psi) = u.
        let s_psi = unit(rng);
        let cos_incidence = (1.0 - s_psi * s_psi).sqrt();
        Strike {
            bay: j as u32,
            ribbon,
            diameter_m: d,
            centre_m: centre,
            speed_m_per_s: speed.max(f64::MIN_POSITIVE),
            cos_incidence,
            track_angle_rad: std::f64::consts::FRAC_PI_2,
            ejecta_altitude_m: Some(alt),
            stream: None,
        }
    }

    #[inline]
    fn sample_primary<R: Rng + ?Sized>(&self, rng: &mut R, j: usize) -> Strike {
        let b = &self.bays[j];
        let u_comp = unit(rng);
        let u = unit_nonzero(rng);
        let d = if u_comp < b.p_width {
            self.inv_f.diameter(b.ln_f_floor + u.ln())
        } else {
            self.inv_g.diameter(b.ln_g_floor + u.ln())
        };
        let ribbon = ((unit(rng) * self.ribbon_count as f64) as u32).min(self.ribbon_count - 1);
        let centre = -0.5 * d + unit(rng) * (b.width_m + d);
        let band = &self.bands[b.band as usize];
        let k = band.alias.sample(rng);
        let v_inf = band.v_inf_m_per_s[k] + (2.0 * unit(rng) - 1.0) * self.bin_half_width_m_per_s;
        let speed = (v_inf.max(0.0).powi(2) + band.v_esc_sq).sqrt();
        let cos_incidence = unit(rng).sqrt();
        // Isotropic arrival: the in-plane direction is uniform, so the angle to the long axis
        // folded into [0, π/2] is uniform. Last detail draw of a strike.
        let track_angle_rad = std::f64::consts::FRAC_PI_2 * unit(rng);
        Strike {
            bay: j as u32,
            ribbon,
            diameter_m: d,
            centre_m: centre,
            speed_m_per_s: speed,
            cos_incidence,
            track_angle_rad,
            ejecta_altitude_m: None,
            stream: None,
        }
    }
}

/// Uniform in [0, 1) with 53 random bits.
#[inline]
pub fn unit<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

/// Uniform in (0, 1].
#[inline]
pub fn unit_nonzero<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    1.0 - unit(rng)
}

/// Strikes of one meteor stream at its peak (every-strike sampler): per-bay rates above the
/// floor, the bay alias table, and the power-law size distribution. The strike times come from
/// the stream's time profile (inversion of the integrated rate; see
/// [`crate::environment::streams`]).
///
/// Sizes: F(>= d) = A_j d^q with q = 3 (1 - s) (s the mass index), so the w n(d) component is
/// d = d_f u^(1/q) and the d n(d) component d = d_f u^(1/(q+1)) (mass d_f F(d_f) (-q)/(-q-1);
/// s > 4/3 keeps it finite). Speed: the radiant speed focused at the bay; incidence cos =
/// sqrt(u) (random face orientation against the radiant); track angle uniform.
///
/// **Draw order** per stream strike (streams stream): bay (alias), size component, size,
/// ribbon, centre, incidence, track angle; then the gap to the stream's next strike.
#[derive(Debug)]
pub struct StreamSampler {
    index: u16,
    bay_alias: AliasTable,
    total_rate_per_s: f64,
    q: f64,
    /// Per bay: (probability of the w n(d) component, floor diameter m, width m, speed m/s).
    bays: Vec<(f64, f64, f64, f64)>,
    ribbon_count: u32,
}

impl StreamSampler {
    /// Build for stream `k` of a model, with the floors of the strike sampler.
    pub fn new(model: &Model, k: usize, sampler: &StrikeSampler) -> Result<Self, EngineError> {
        let stream = &model.scenario.environment.meteor_streams[k];
        let consts = crate::model::streams::stream_bay_constants(model, stream)
            .map_err(EngineError::Model)?;
        let q = 3.0 * (1.0 - stream.mass_index);
        if q.is_nan() || q >= -1.0 {
            return Err(EngineError::Model(format!(
                "meteor stream `{}`: mass index {} <= 4/3 gives an unbounded size distribution",
                stream.name, stream.mass_index
            )));
        }
        let n = model.profile.design.ribbon_count;
        let mut rates = Vec::with_capacity(consts.len());
        let mut bays = Vec::with_capacity(consts.len());
        for (j, bay) in model.profile.bays.iter().enumerate() {
            let d_f = sampler.floor_diameter_m(j);
            let w = bay.width_m;
            let f = mass_from_diameter_kg(d_f, stream.density_kg_per_m3)
                .map(|m| stream.peak_flux_above_per_m2_per_s(m))
                .unwrap_or(0.0)
                * consts[j].0;
            let g = d_f * f * (-q) / (-q - 1.0);
            rates.push(2.0 * (w * f + g) * bay.length_m() * n as f64);
            bays.push((
                if w * f + g > 0.0 {
                    w * f / (w * f + g)
                } else {
                    1.0
                },
                d_f,
                w,
                consts[j].1,
            ));
        }
        let total: f64 = rates.iter().sum();
        let bay_alias = if total > 0.0 {
            AliasTable::new(&rates)
        } else {
            AliasTable::new(&vec![1.0; rates.len()])
        }
        .map_err(|e| EngineError::Model(e.to_string()))?;
        Ok(StreamSampler {
            index: k as u16,
            bay_alias,
            total_rate_per_s: total,
            q,
            bays,
            ribbon_count: n as u32,
        })
    }

    /// Strike rate above the floors at the peak, whole tether, per second.
    pub fn peak_rate_per_s(&self) -> f64 {
        self.total_rate_per_s
    }

    /// Draw one stream strike's details.
    #[inline]
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> Strike {
        let j = self.bay_alias.sample(rng);
        let (p_width, d_f, w, speed) = self.bays[j];
        let u_comp = unit(rng);
        let u = unit_nonzero(rng);
        let d = if u_comp < p_width {
            d_f * u.powf(1.0 / self.q)
        } else {
            d_f * u.powf(1.0 / (self.q + 1.0))
        };
        let ribbon = ((unit(rng) * self.ribbon_count as f64) as u32).min(self.ribbon_count - 1);
        let centre = -0.5 * d + unit(rng) * (w + d);
        let cos_incidence = unit(rng).sqrt();
        let track_angle_rad = std::f64::consts::FRAC_PI_2 * unit(rng);
        Strike {
            bay: j as u32,
            ribbon,
            diameter_m: d,
            centre_m: centre,
            speed_m_per_s: speed,
            cos_incidence,
            track_angle_rad,
            ejecta_altitude_m: None,
            stream: Some(self.index),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::{stream, Purpose};

    fn demo() -> Model {
        Model::build(crate::scenario::demo()).unwrap()
    }

    /// Ranges of the uniform helpers (their definitions: 53 random bits scaled by 2^-53), and
    /// the mean 1/2 within 4 standard errors (sd 1/sqrt(12), closed form) for a fixed seed.
    #[test]
    fn uniforms_stay_in_their_intervals() {
        let mut r = stream(3, Purpose::Analysis, 0);
        let n = 100_000;
        let mut sum = 0.0;
        for _ in 0..n {
            let u = unit(&mut r);
            let o = unit_nonzero(&mut r);
            assert!((0.0..1.0).contains(&u), "{u}");
            assert!(o > 0.0 && o <= 1.0, "{o}");
            sum += u;
        }
        let se = (1.0 / 12.0 / n as f64).sqrt();
        assert!((sum / n as f64 - 0.5).abs() < 4.0 * se);
    }

    /// Source: a Poisson process of rate λ has exponential gaps of mean 1/λ and standard
    /// deviation 1/λ (closed form). 20 000 gaps, fixed seed, tolerance 4 standard errors.
    #[test]
    fn gaps_have_the_mean_of_the_total_rate() {
        let model = demo();
        let s = StrikeSampler::new(&model, 1.0).unwrap();
        let rate = s.total_rate_per_s();
        assert!(rate > 0.0 && rate.is_finite());
        let total: f64 = (0..model.profile.bays.len())
            .map(|j| s.bay_rate_per_s(j))
            .sum();
        assert!(
            (total / rate - 1.0).abs() < 1e-9,
            "bay rates add up to the total"
        );
        let mut r = stream(5, Purpose::Strikes, 0);
        let n = 20_000;
        let mean: f64 = (0..n).map(|_| s.next_gap_s(&mut r)).sum::<f64>() / n as f64;
        assert!(
            (mean * rate - 1.0).abs() < 4.0 / (n as f64).sqrt(),
            "{}",
            mean * rate
        );
    }

    /// Every drawn strike is a possible one: its bay, a ribbon of the bay, a diameter at least
    /// the bay's floor, a centre within d/2 of the ribbon, angles in range.
    #[test]
    fn strikes_are_geometrically_possible() {
        let model = demo();
        let s = StrikeSampler::new(&model, 1.0).unwrap();
        let ribbons = model.scenario.tether.ribbon_count as u32;
        let mut r = stream(9, Purpose::Strikes, 1);
        let bays = model.profile.bays.len();
        for k in 0..5_000 {
            let j = k % bays;
            let st = s.sample_in_bay(&mut r, j);
            let w = model.profile.bays[j].width_m;
            let d = st.diameter_m;
            assert_eq!(st.bay as usize, j);
            assert!(st.ribbon < ribbons);
            assert!(d >= s.floor_diameter_m(j) * (1.0 - 1e-12), "{d}");
            assert!(st.centre_m >= -d / 2.0 - 1e-12 && st.centre_m <= w + d / 2.0 + 1e-12);
            assert!((0.0..=1.0).contains(&st.cos_incidence));
            assert!((0.0..=std::f64::consts::FRAC_PI_2 + 1e-12).contains(&st.track_angle_rad));
            assert!(st.speed_m_per_s > 0.0 && st.speed_m_per_s.is_finite());
        }
    }
}

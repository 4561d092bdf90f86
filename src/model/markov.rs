//! Per-bay Markov chains for the fast estimate, built from a [`Model`].
//!
//! Each bay becomes a continuous-time chain over its number of cut segments `k`; the chain is
//! solved by [`crate::analytic::estimate`]. This builder lives in `model` (not `analytic`)
//! because the rates need the flux model, the tether profile and the damage law together,
//! and `analytic` stays free of the physical model.
//!
//! # Cut rate in state k
//! With `k` segments cut, each of the `N − k` survivors carries `T/(N − k)` (equal sharing;
//! `T` the bay's largest tension) and is cut by a strike that removes at least
//! `h_k = profile.critical_hole_width_m(j, k)` of its width. If `h_k = 0` the survivors are
//! overloaded without any hole, so reaching `k` cuts is itself the loss: the chain has
//! `m = min{k : h_k = 0}` (or `N`) transient states and a cut in state `m − 1` is absorption.
//! With load sharing `none` every ribbon keeps `T/N`, so `h_0` is used in every state.
//!
//! **Which strikes sever.** A particle of diameter `d` touching a ribbon of width `w` has its
//! centre `c` uniform on `[−d/2, w + d/2]` (length `w + d`; both faces, as in the sampler),
//! and a hole of width `H` centred on it removes `min(c + H/2, w) − max(c − H/2, 0)`. That is
//! at least `h` (with `0 < h <= w`) iff `H >= h` and `c ∈ [h − H/2, w − h + H/2]`, an interval
//! of length `w − 2h + H` symmetric about `w/2`, as is `[−d/2, w + d/2]`; so the measure of
//! severing centres is `clip(w − 2h + H, 0, w + d)` when `H >= h` and 0 otherwise (an
//! infinite hole gives the whole `w + d`). With `n(d) = −dF/dd` the per-ribbon rate per unit
//! length is `2 ∫ n(d) len(d) dd`, times the bay length, the local shielding × focusing factor
//! and the scenario's flux scale factor.
//!
//! - Thin-film hole law, `H = f d`: `len = 0` below `d_min = h/f`; `w − 2h + f d` up to
//!   `d_sat = 2h/(f − 1)` (never reached when `f = 1`); `w + d` above. Integrating by parts
//!   (`F g → 0` at infinity) gives
//!   `∫ n len = F(d_min)(w − h) + f [G(d_min) − G(d_sat)] + G(d_sat)`, `G(d) = ∫_d^∞ F`,
//!   which needs only `F`, not its derivative (so a tabulated, piecewise log-linear `F` is
//!   handled exactly as well as a closed form).
//! - Fraction-of-width law (`H = ∞` when `d >= φ w`): `∫ n len = F(φw)(w + φw) + G(φw)`,
//!   the model's own [`super::ribbon_strike_rate_per_m_per_year`] form.
//!
//! **Speed-independent hole (assumption).** The thin-film law makes a hole only above a
//! speed- and angle-dependent ballistic limit of a few micrometres; particles able to cut are
//! hundreds of times larger, so we take every strike to perforate. The builder checks this:
//! [`MarkovModel::unperforated_fraction_bound`] is an upper bound on the fraction of severing
//! strikes the threshold would stop (slowest speed in the table, smallest severing diameter,
//! incidence density `2 cos θ sin θ` so `P(cos θ < c) = c²`).
//!
//! # Repair rate in state k >= 1
//! One climber works on the bay, one segment at a time, with no waiting for a climber or for
//! stock; the repair time is taken as exponential with mean = mean detection delay (fixed:
//! the delay; exponential: its mean; periodic inspection: half the interval, the mean wait for
//! a cut at a uniformly random time) + turnaround + one-way travel from the nearest station
//! that has climbers to the bay's middle (climbing at the up speed, descending at the down
//! speed) + splice. Repair rate = 1/mean. The return trip does not delay the bay.
//!
//! # Synthetic-rates mode
//! Cut rate `(N − k) λ`, repair rate `min(k, crews) μ`, loss when fewer than `k_req` ribbons
//! are intact: the repairable k-out-of-n chain (Barlow–Proschan birth–death form), in every
//! bay.

use crate::analytic::estimate::{estimate_system, BayChain, EstimateError, SystemEstimate};
use crate::analytic::AnalyticError;
use crate::damage::{Impact, RibbonTarget, ThinFilmHoleLaw};
use crate::environment::{mass_from_diameter_kg, FluxModel};
use crate::scenario::{
    DamageSpec, DetectionSpec, HoleSizeSpec, LoadSharingSpec, RepairSettings, RunSettings,
    SyntheticRatesSettings, SECONDS_PER_YEAR,
};

use super::Model;

/// Nodes per unit of `ln d` in the tail-integral table (step 0.02).
const NODES_PER_LN: f64 = 50.0;
/// Decades above the largest diameter needed where the tail integral is cut off. The flux
/// falls at least as `d^-3` there (Grün: about `d^-4`), so the neglected tail is below
/// `1e-12` of `G` at the largest diameter needed.
const TAIL_DECADES: f64 = 6.0;

/// The tail integral `G(d) = ∫_d^∞ F(d') dd'` of a cumulative flux in diameter, tabulated once.
///
/// Nodes are uniform in `u = ln d` with step 0.02; each interval is integrated by Simpson's
/// rule in `u` (`F dd = F d du`) with its midpoint, so the relative error per interval is about
/// `step^4/2880` times the fourth `u`-derivative scale of `F d` (below 1e-9 for the Grün model,
/// whose `F d` varies as a few powers of `d`). A value between nodes adds the Simpson integral
/// from `d` to the next node; below the first node the piece is integrated with 64 intervals.
#[derive(Debug, Clone)]
pub struct TailIntegral<'a> {
    flux: &'a dyn FluxModel,
    particle_density_kg_per_m3: f64,
    ln_d0: f64,
    step: f64,
    /// `G` at each node, per m per year.
    g: Vec<f64>,
}

impl<'a> TailIntegral<'a> {
    /// Tabulate for diameters from `min_diameter_m` to `max_diameter_m` (both > 0, finite).
    pub fn new(
        flux: &'a dyn FluxModel,
        particle_density_kg_per_m3: f64,
        min_diameter_m: f64,
        max_diameter_m: f64,
    ) -> Self {
        let ln_d0 = min_diameter_m.ln();
        let ln_top =
            max_diameter_m.max(min_diameter_m).ln() + TAIL_DECADES * std::f64::consts::LN_10;
        let intervals = (((ln_top - ln_d0) * NODES_PER_LN).ceil() as usize).max(1);
        let step = (ln_top - ln_d0) / intervals as f64;
        let mut table = TailIntegral {
            flux,
            particle_density_kg_per_m3,
            ln_d0,
            step,
            g: vec![0.0; intervals + 1],
        };
        for i in (0..intervals).rev() {
            let a = ln_d0 + i as f64 * step;
            table.g[i] = table.g[i + 1] + table.simpson(a, a + step, 1);
        }
        table
    }

    /// Cumulative flux of particles of diameter `>= d_m`, one face, per m² per year (0 for
    /// a diameter the flux model cannot take).
    pub fn flux_per_m2_per_year(&self, d_m: f64) -> f64 {
        let f = mass_from_diameter_kg(d_m, self.particle_density_kg_per_m3)
            .map(|m| self.flux.cumulative_flux_per_m2_per_year(m))
            .unwrap_or(0.0);
        if f.is_finite() && f > 0.0 {
            f
        } else {
            0.0
        }
    }

    /// `∫ F dd` over `[e^a, e^b]` by composite Simpson in `u = ln d` with `2 pairs` intervals.
    fn simpson(&self, a: f64, b: f64, pairs: usize) -> f64 {
        let n = 2 * pairs;
        let h = (b - a) / n as f64;
        let y = |u: f64| {
            let d = u.exp();
            self.flux_per_m2_per_year(d) * d
        };
        let mut s = y(a) + y(b);
        for i in 1..n {
            s += if i % 2 == 1 { 4.0 } else { 2.0 } * y(a + i as f64 * h);
        }
        s * h / 3.0
    }

    /// `G(d) = ∫_d^∞ F dd'`, per m per year; 0 above the table (and for `d = ∞`).
    pub fn tail_per_m_per_year(&self, d_m: f64) -> f64 {
        if d_m.is_nan() || d_m <= 0.0 {
            return f64::NAN;
        }
        let u = d_m.ln();
        let last = self.g.len() - 1;
        if u < self.ln_d0 {
            return self.g[0] + self.simpson(u, self.ln_d0, 32);
        }
        let t = (u - self.ln_d0) / self.step;
        if t >= last as f64 {
            return 0.0;
        }
        let i = t.floor() as usize;
        let next = self.ln_d0 + (i + 1) as f64 * self.step;
        self.g[i + 1] + self.simpson(u, next, 1)
    }

    /// Rate of strikes that remove at least `critical_hole_m` of a ribbon of width `width_m`,
    /// per metre of one ribbon per year, both faces, before local shielding, focusing and the
    /// flux scale factor (see the module notes for the derivation). 0 when no hole can remove
    /// that much (`critical_hole_m > width_m`); `critical_hole_m` must be > 0 for the thin-film
    /// law (a zero critical hole is handled by the chain as immediate loss).
    pub fn severing_rate_per_m_per_year(
        &self,
        damage: &DamageSpec,
        width_m: f64,
        critical_hole_m: f64,
    ) -> f64 {
        let w = width_m;
        let h = critical_hole_m;
        if h > w {
            return 0.0;
        }
        let integral = match *damage {
            DamageSpec::FractionOfWidth { fraction } => {
                let dc = fraction * w;
                self.flux_per_m2_per_year(dc) * (w + dc) + self.tail_per_m_per_year(dc)
            }
            DamageSpec::ThinFilmHole { hole_factor: f, .. } => {
                let d_min = h / f;
                let (g_sat, g_min) = (
                    if f > 1.0 {
                        self.tail_per_m_per_year(2.0 * h / (f - 1.0))
                    } else {
                        0.0
                    },
                    self.tail_per_m_per_year(d_min),
                );
                self.flux_per_m2_per_year(d_min) * (w - h) + f * (g_min - g_sat) + g_sat
            }
        };
        2.0 * integral
    }
}

/// Smallest and largest diameters at which a severing integral starts or changes form, for
/// a critical hole `h` on width `w`.
fn diameters_needed(damage: &DamageSpec, w: f64, h: f64) -> [f64; 2] {
    match *damage {
        DamageSpec::FractionOfWidth { fraction } => [fraction * w, fraction * w],
        DamageSpec::ThinFilmHole { hole_factor: f, .. } => {
            let d_min = h / f;
            let d_sat = if f > 1.0 { 2.0 * h / (f - 1.0) } else { d_min };
            [d_min, d_sat.max(d_min)]
        }
    }
}

/// Mean repair time of a segment in a bay whose middle is at `altitude_m`, s, or `None` when
/// no station has a climber (see the module notes for how the mean is formed).
pub fn repair_mean_time_s(repair: &RepairSettings, altitude_m: f64) -> Option<f64> {
    repair_mean_time_along_line_s(repair, altitude_m, 0.0)
}

/// [`repair_mean_time_s`] for a point `position_m` along the line from the base of a tether
/// with a surface run of `surface_run_m` (stations placed as in
/// [`crate::structure::line_position_of_altitude_m`]).
pub fn repair_mean_time_along_line_s(
    repair: &RepairSettings,
    position_m: f64,
    surface_run_m: f64,
) -> Option<f64> {
    let altitude_m = position_m;
    let at = |s: &crate::scenario::StationSettings| {
        crate::structure::line_position_of_altitude_m(s.altitude_m, surface_run_m)
    };
    let hour = 3600.0;
    let detection_s = match repair.detection {
        DetectionSpec::Fixed { delay_hours } => delay_hours * hour,
        DetectionSpec::Exponential { mean_hours } => mean_hours * hour,
        DetectionSpec::PeriodicInspection { interval_hours } => 0.5 * interval_hours * hour,
    };
    if let Some(l) = repair.looped.as_ref() {
        // Looped ribbon: haul to the nearest pulley station, splice there, haul back.
        let d = repair
            .stations
            .iter()
            .zip(&l.pulley)
            .filter(|(_, &p)| p)
            .map(|(s, _)| (at(s) - altitude_m).abs())
            .min_by(f64::total_cmp)?;
        return Some(detection_s + 2.0 * d / l.haul_speed_m_per_s + l.station_splice_s);
    }
    let station = repair
        .stations
        .iter()
        .filter(|s| s.climbers > 0)
        .min_by(|a, b| {
            let da = (at(a) - altitude_m).abs();
            let db = (at(b) - altitude_m).abs();
            da.total_cmp(&db)
        })?;
    let distance = altitude_m - at(station);
    let travel_s = if distance >= 0.0 {
        distance / repair.speed_up_m_per_s
    } else {
        -distance / repair.speed_down_m_per_s
    };
    Some(detection_s + repair.turnaround_s + travel_s + repair.splice_s)
}

/// The mission's evaluation times: every whole year, and the mission end when it is not a
/// whole year (or is 0), s.
pub fn mission_times_s(run: &RunSettings) -> Vec<f64> {
    let years = run.mission_years;
    let whole = years.floor() as u64;
    let mut t: Vec<f64> = (1..=whole).map(|y| y as f64 * SECONDS_PER_YEAR).collect();
    if years == 0.0 || years > whole as f64 {
        t.push(run.mission_s);
    }
    t
}

/// Which chain the estimate uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MarkovMode {
    /// Cut rates from the flux, the profile and the damage law; repair from the logistics.
    Physical,
    /// The scenario's synthetic-rates mode: the k-out-of-n chain with its constant rates.
    SyntheticRates,
}

/// One bay's chain and what it was built from.
#[derive(Debug, Clone)]
pub struct MarkovBay {
    /// Bay index.
    pub bay_index: usize,
    /// The chain over cut segments.
    pub chain: BayChain,
    /// Mean repair time used for this bay, s (`None`: no repair).
    pub repair_mean_time_s: Option<f64>,
}

/// Every bay's chain, with the assumptions behind them.
#[derive(Debug, Clone)]
pub struct MarkovModel {
    /// Physical or synthetic-rates mode.
    pub mode: MarkovMode,
    /// Per-bay chains, in bay order.
    pub bays: Vec<MarkovBay>,
    /// The assumptions, in words, to print next to the numbers.
    pub assumptions: Vec<String>,
    /// Upper bound on the fraction of severing strikes that the thin-film law's speed- and
    /// angle-dependent perforation threshold would not perforate (`None` when it does not
    /// apply: fraction-of-width law or synthetic-rates mode).
    pub unperforated_fraction_bound: Option<f64>,
}

fn chain_error(bay_index: usize) -> impl Fn(AnalyticError) -> EstimateError {
    move |source| EstimateError::Chain { bay_index, source }
}

impl MarkovModel {
    /// Build every bay's chain from a built model.
    ///
    /// # Errors
    /// [`EstimateError::Chain`] if a bay's rates are not finite (a flux model returning NaN).
    pub fn build(model: &Model) -> Result<Self, EstimateError> {
        match model.scenario.synthetic_rates {
            Some(v) => Self::build_validation(model, &v),
            None => Self::build_physical(model),
        }
    }

    fn build_validation(model: &Model, v: &SyntheticRatesSettings) -> Result<Self, EstimateError> {
        let n = model.profile.design.ribbon_count as u32;
        let m = n + 1 - v.required_ribbons.min(n);
        let cut: Vec<f64> = (0..m)
            .map(|k| f64::from(n - k) * v.cut_rate_per_s)
            .collect();
        let repair: Vec<f64> = (0..m)
            .map(|k| f64::from(k.min(v.crews_per_bay)) * v.repair_rate_per_s)
            .collect();
        let chain = BayChain::new(cut, repair).map_err(chain_error(0))?;
        let mean =
            (v.repair_rate_per_s > 0.0 && v.crews_per_bay > 0).then(|| 1.0 / v.repair_rate_per_s);
        let bays = (0..model.profile.bays.len())
            .map(|j| MarkovBay {
                bay_index: j,
                chain: chain.clone(),
                repair_mean_time_s: mean,
            })
            .collect();
        let day = 86_400.0;
        let assumptions = vec![
            format!(
                "synthetic-rates mode: every intact segment is cut at {} per day, each of {} crews per bay repairs at {} per day, a bay is lost when fewer than {} of its {} ribbons are intact (repairable k-out-of-n chain, Barlow–Proschan birth–death form)",
                v.cut_rate_per_s * day,
                v.crews_per_bay,
                v.repair_rate_per_s * day,
                v.required_ribbons,
                n
            ),
            "independent bays: the system survives only if every bay does, and bays do not influence each other".into(),
            "exponential repair times with no waiting for crews or spare stock".into(),
        ];
        Ok(MarkovModel {
            mode: MarkovMode::SyntheticRates,
            bays,
            assumptions,
            unperforated_fraction_bound: None,
        })
    }

    fn build_physical(model: &Model) -> Result<Self, EstimateError> {
        let sc = &model.scenario;
        // Fitted hole laws, the oblique footprint and the lunar-ejecta source have no closed
        // form: their cut rates come from the per-bay hole-rate table H_j(x) (rate per segment
        // of holes removing at least x), cut rate in state k = (N − k) H_j(h_k).
        let needs_table = match &sc.damage {
            DamageSpec::ThinFilmHole {
                hole_size,
                oblique_footprint,
                ..
            } => *hole_size != HoleSizeSpec::Constant || *oblique_footprint == Some(true),
            DamageSpec::FractionOfWidth { .. } => false,
        } || sc.environment.lunar_ejecta.enabled
            || !sc.environment.meteor_streams.is_empty();
        let hole_rates = if needs_table {
            Some(
                super::hole_rate::HoleRateTable::build(model, 1.0)
                    .map_err(EstimateError::Unsupported)?,
            )
        } else {
            None
        };
        let profile = &model.profile;
        let n = profile.design.ribbon_count;
        let sharing = sc.tether.load_sharing;
        let damage = &sc.damage;

        // Critical holes per bay and transient state.
        let holes: Vec<Vec<f64>> = (0..profile.bays.len())
            .map(|j| {
                let mut h = Vec::with_capacity(n);
                for k in 0..n {
                    let hk = match sharing {
                        LoadSharingSpec::None => profile.critical_hole_width_m(j, 0),
                        LoadSharingSpec::Equal | LoadSharingSpec::Local => {
                            profile.critical_hole_width_m(j, k)
                        }
                    };
                    if hk > 0.0 {
                        h.push(hk);
                    } else {
                        break;
                    }
                }
                h
            })
            .collect();

        // One tail-integral table spanning every diameter needed.
        let (mut d_lo, mut d_hi) = (f64::INFINITY, 0.0f64);
        for (j, hs) in holes.iter().enumerate() {
            let w = profile.bays[j].width_m;
            for &h in hs {
                let [a, b] = diameters_needed(damage, w, h);
                d_lo = d_lo.min(a);
                d_hi = d_hi.max(b);
            }
        }
        let table = (d_lo.is_finite() && d_lo > 0.0).then(|| {
            TailIntegral::new(
                model.flux.as_ref(),
                sc.environment.particle_density_kg_per_m3,
                d_lo,
                d_hi,
            )
        });

        let mut bays = Vec::with_capacity(profile.bays.len());
        for (j, hs) in holes.iter().enumerate() {
            let bay = &profile.bays[j];
            // Per-metre rate (both faces included) -> per segment per second.
            let scale =
                bay.length_m() * model.bays[j].factors.total() * sc.environment.flux_scale_factor
                    / SECONDS_PER_YEAR;
            let mean = sc.repair.as_ref().and_then(|r| {
                repair_mean_time_along_line_s(r, bay.line_mid_m(), profile.surface_run_length_m())
            });
            let repair_rate = mean.map_or(0.0, |t| if t > 0.0 { 1.0 / t } else { 0.0 });
            let mut cut = Vec::with_capacity(hs.len());
            let mut repair = Vec::with_capacity(hs.len());
            for (k, &h) in hs.iter().enumerate() {
                if let Some(t) = &hole_rates {
                    cut.push((n - k) as f64 * t.bay(j).rate_at_least_per_s(h));
                    repair.push(if k == 0 { 0.0 } else { repair_rate });
                    continue;
                }
                let per_ribbon = table.as_ref().map_or(0.0, |t| {
                    t.severing_rate_per_m_per_year(damage, bay.width_m, h)
                });
                cut.push((n - k) as f64 * per_ribbon * scale);
                repair.push(if k == 0 { 0.0 } else { repair_rate });
            }
            bays.push(MarkovBay {
                bay_index: j,
                chain: BayChain::new(cut, repair).map_err(chain_error(j))?,
                repair_mean_time_s: mean,
            });
        }

        let bound = match *damage {
            _ if hole_rates.is_some() => None,
            DamageSpec::ThinFilmHole { hole_factor, .. } => {
                Some(unperforated_fraction_bound(model, &holes, hole_factor))
            }
            DamageSpec::FractionOfWidth { .. } => None,
        };
        let mut assumptions = physical_assumptions(model, bound);
        if let Some(t) = &hole_rates {
            assumptions.push(format!(
                "cut rates from the per-bay hole-rate table (quadrature over diameter, speed, incidence and track angle of: {})",
                t.sources().join(", ")
            ));
        }
        if !sc.environment.meteor_streams.is_empty() {
            assumptions.push(
                "meteor streams enter at their mission-averaged rates (the chains need constant rates; a stream's peak raises the risk of short exposures more than this shows; the Monte Carlo uses the exact time profile)"
                    .to_string(),
            );
        }
        if sc.tether.cross_link_hits.is_some() {
            assumptions.push(
                "cross-link hits and their repair are left out: every bay stays a separate bay (the merged-bay rule after a cross-link cut is in the Monte Carlo only, so this estimate is optimistic)"
                    .to_string(),
            );
        }
        Ok(MarkovModel {
            mode: MarkovMode::Physical,
            bays,
            assumptions,
            unperforated_fraction_bound: bound,
        })
    }

    /// Solve every bay at `times_s` and combine them (see [`estimate_system`]).
    ///
    /// # Errors
    /// [`EstimateError::BadTime`] for a negative or non-finite time.
    pub fn solve(&self, times_s: &[f64]) -> Result<SystemEstimate, EstimateError> {
        let chains: Vec<BayChain> = self.bays.iter().map(|b| b.chain.clone()).collect();
        estimate_system(&chains, times_s)
    }
}

/// Upper bound over bays on the fraction of severing strikes that would not perforate under
/// the thin-film law's ballistic limit (module notes). 1 if the bound cannot be formed.
fn unperforated_fraction_bound(model: &Model, holes: &[Vec<f64>], hole_factor: f64) -> f64 {
    let law = match ThinFilmHoleLaw::new(hole_factor) {
        Ok(l) => l,
        Err(_) => return 1.0,
    };
    let speeds = model.velocity.speeds_m_per_s();
    let weights = model.velocity.weights();
    let half_bin = if speeds.len() > 1 {
        0.5 * (speeds[1] - speeds[0])
    } else {
        0.0
    };
    let v_inf_low = speeds
        .iter()
        .zip(weights)
        .find(|(_, &w)| w > 0.0)
        .map_or(0.0, |(&v, _)| (v - half_bin).max(0.0));
    let rho_p = model.scenario.environment.particle_density_kg_per_m3;
    let mut worst = 0.0f64;
    for (j, hs) in holes.iter().enumerate() {
        let Some(&h_small) = hs.iter().min_by(|a, b| a.total_cmp(b)) else {
            continue;
        };
        let d = h_small / hole_factor;
        let v_esc = model.bays[j].factors.combined_escape_speed_m_per_s();
        let v = v_inf_low.hypot(v_esc);
        if v.is_nan() || v <= 0.0 {
            return 1.0;
        }
        let target = RibbonTarget {
            width_m: model.profile.bays[j].width_m,
            thickness_m: model.profile.design.thickness_m,
            density_kg_per_m3: model.profile.design.density_kg_per_m3,
        };
        let limit = |cos_theta: f64| {
            let impact = Impact {
                diameter_m: d,
                speed_m_per_s: v,
                cos_incidence: cos_theta.clamp(0.0, 1.0),
                density_kg_per_m3: rho_p,
                track_angle_rad: 0.0,
            };
            law.ballistic_limit_diameter_m(&impact, &target)
        };
        let normal = limit(1.0);
        if normal.is_nan() || normal >= d {
            return 1.0;
        }
        // The limit grows as cos θ falls: bisect for the cos θ where it reaches d.
        let (mut lo, mut hi) = (0.0f64, 1.0f64);
        for _ in 0..80 {
            let mid = 0.5 * (lo + hi);
            if limit(mid) >= d {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        worst = worst.max(hi * hi);
    }
    worst
}

fn physical_assumptions(model: &Model, bound: Option<f64>) -> Vec<String> {
    let sc = &model.scenario;
    let mut a = vec![
        "independent bays: strikes on different bays are independent and each bay is repaired on its own; the system survives only if every bay does".to_string(),
        "no memory of sub-critical damage: a strike either cuts a segment at the bay's current load or leaves it as new, so holes that would cut after a later redistribution (cascades) are not counted".into(),
    ];
    a.push(match sc.tether.load_sharing {
        LoadSharingSpec::Equal => "equal load sharing among a bay's surviving ribbons, at the bay's largest tension".into(),
        LoadSharingSpec::Local => "local load sharing was requested; this estimate uses EQUAL sharing among a bay's survivors as an approximation (local sharing loads the neighbours of a cut more, so the estimate may be optimistic)".into(),
        LoadSharingSpec::None => "no load sharing: every ribbon keeps its intact share T/N, and a bay is lost only when all its ribbons are cut".into(),
    });
    match &sc.repair {
        Some(r) => a.push(if r.looped.is_some() {
            "exponential repair: one segment at a time per bay, with exponential repair time of the stated mean (detection + haul to the nearest pulley station and back + station splice); no splice-position contention, spare stock always on hand, resupply ignored".into()
        } else {
            "exponential repair: one climber per bay repairs one segment at a time, with exponential repair time of the stated mean (detection + turnaround + one-way travel from the nearest station with climbers + splice); no fleet contention, spare stock always on hand, resupply ignored".into()
        }),
        None => a.push("no repair".into()),
    }
    match (&sc.damage, bound) {
        (DamageSpec::ThinFilmHole { hole_factor, .. }, Some(b)) => a.push(format!(
            "speed-independent hole: every strike perforates and opens a hole {hole_factor} x the particle diameter; the perforation threshold is ignored (it would stop at most {b:.1e} of the strikes able to cut, slowest speed and smallest cutting particle)"
        )),
        (DamageSpec::FractionOfWidth { fraction }, _) => a.push(format!(
            "fraction-of-width criterion: a particle of at least {fraction:.4} x the ribbon width cuts the segment outright, anything smaller does nothing"
        )),
        _ => {}
    }
    a
}

/// Measure of particle-centre positions, m, across `[−d/2, w + d/2]` for which a hole of width
/// `hole_width_m` (`f64::INFINITY`: the whole width) removes at least `critical_hole_m` of a
/// ribbon of width `width_m`: `clip(w − 2h + H, 0, w + d)` when `H >= h`, else 0 (module notes).
/// The rate integrals use this in closed form after integration by parts.
pub fn severing_centre_range_m(
    width_m: f64,
    critical_hole_m: f64,
    hole_width_m: f64,
    diameter_m: f64,
) -> f64 {
    let (w, h, d) = (width_m, critical_hole_m, diameter_m);
    if !(hole_width_m >= h && h <= w && hole_width_m > 0.0) {
        return 0.0;
    }
    if hole_width_m == f64::INFINITY {
        return w + d;
    }
    (w - 2.0 * h + hole_width_m).clamp(0.0, w + d)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::damage::removed_width_m;
    use crate::environment::Grun1985;
    use crate::scenario::{StationSettings, SECONDS_PER_YEAR};

    /// `F(m) = a m^-alpha`, so in diameter `F(d) = C d^-s` with `s = 3 alpha`.
    #[derive(Debug)]
    struct PowerLaw {
        a: f64,
        alpha: f64,
    }

    impl FluxModel for PowerLaw {
        fn name(&self) -> &str {
            "power law"
        }
        fn cumulative_flux_per_m2_per_year(&self, mass_kg: f64) -> f64 {
            self.a * mass_kg.powf(-self.alpha)
        }
        fn valid_mass_range_kg(&self) -> (f64, f64) {
            (0.0, f64::INFINITY)
        }
    }

    #[test]
    fn centre_range_matches_the_overlap_geometry() {
        // Independent answer: scan the centre across [-d/2, w + d/2] with the sampler's own
        // overlap function (damage::removed_width_m) and measure where the removed width
        // reaches h.
        let w = 0.03;
        for &(h, hole, d) in &[
            (0.01, 0.012, 0.0092),
            (0.01, 0.02, 0.015),
            (0.01, 0.08, 0.06),
            (0.005, 0.004, 0.003),
            (0.029, 0.035, 0.03),
            (0.01, f64::INFINITY, 0.01),
        ] {
            let steps = 400_000;
            let dc = (w + d) / steps as f64;
            let hits = (0..steps)
                .filter(|i| {
                    let c = -0.5 * d + (*i as f64 + 0.5) * dc;
                    removed_width_m(c, hole, w) >= h
                })
                .count();
            let scanned = hits as f64 * dc;
            let formula = severing_centre_range_m(w, h, hole, d);
            assert!(
                (scanned - formula).abs() < 2.0 * dc,
                "h={h} H={hole} d={d}: {scanned} vs {formula}"
            );
        }
    }

    /// Closed form of `2 ∫ n(d) len(d) dd` for `F = C d^-s` and `H = f d` (elementary
    /// integrals of powers), the independent answer for the by-parts evaluation.
    fn power_law_closed_form(c: f64, s: f64, w: f64, h: f64, f: f64) -> f64 {
        let d_min = h / f;
        let k = s / (s - 1.0);
        let pw = |d: f64, e: f64| if d.is_finite() { d.powf(e) } else { 0.0 };
        let d_sat = if f > 1.0 {
            2.0 * h / (f - 1.0)
        } else {
            f64::INFINITY
        };
        let inner = (w - 2.0 * h) * c * (pw(d_min, -s) - pw(d_sat, -s))
            + f * k * c * (pw(d_min, 1.0 - s) - pw(d_sat, 1.0 - s));
        let outer = w * c * pw(d_sat, -s) + k * c * pw(d_sat, 1.0 - s);
        2.0 * (inner + outer)
    }

    #[test]
    fn thin_film_rate_matches_power_law_closed_form() {
        let rho = 2500.0;
        let flux = PowerLaw {
            a: 1e-9,
            alpha: 4.0 / 3.0,
        };
        // F(d) = a (pi rho / 6)^-alpha d^-3 alpha.
        let c = flux.a * (std::f64::consts::PI * rho / 6.0).powf(-flux.alpha);
        let s = 3.0 * flux.alpha;
        let table = TailIntegral::new(&flux, rho, 1e-4, 1.0);
        for &(w, h, f) in &[
            (0.03, 0.01, 1.3),
            (0.03, 0.01, 1.0),
            (0.1, 0.002, 2.5),
            (0.012, 0.0119, 1.7),
        ] {
            let got = table.severing_rate_per_m_per_year(&DamageSpec::constant_hole(f), w, h);
            let want = power_law_closed_form(c, s, w, h, f);
            assert!(
                (got / want - 1.0).abs() < 1e-8,
                "w={w} h={h} f={f}: {got} vs {want}"
            );
        }
        // A hole wider than the ribbon cannot be removed.
        let none = table.severing_rate_per_m_per_year(&DamageSpec::constant_hole(1.3), 0.01, 0.02);
        assert_eq!(none, 0.0);
    }

    #[test]
    fn fraction_rate_matches_the_model_strike_rate() {
        // Independent answer: 2 (w + d_c) F(d_c) + 2 Int_{d_c} F dd, the model's own
        // ribbon_strike_rate_per_m_per_year (separate Simpson grid), for the one-third rule.
        let flux = Grun1985::standard().unwrap();
        let rho = 2500.0;
        let table = TailIntegral::new(&flux, rho, 1e-3, 0.05);
        for w in [0.003, 0.012, 0.03, 0.1] {
            let law = DamageSpec::FractionOfWidth {
                fraction: 1.0 / 3.0,
            };
            let got = table.severing_rate_per_m_per_year(&law, w, 0.5 * w);
            let want = crate::model::ribbon_strike_rate_per_m_per_year(&flux, rho, w, w / 3.0);
            assert!((got / want - 1.0).abs() < 1e-6, "w={w}: {got} vs {want}");
        }
    }

    #[test]
    fn grun_tail_by_parts_matches_direct_integral() {
        // Independent answer: 2 Int n(d) len(d) dd done directly, with n = -dF/dd by central
        // differences and the centre range from severing_centre_range_m, Simpson in ln d on a
        // fine grid split at the kink d_sat.
        let flux = Grun1985::standard().unwrap();
        let rho = 2500.0;
        let (w, h, f) = (0.03, 0.008, 1.3);
        let table = TailIntegral::new(&flux, rho, 1e-3, 0.1);
        let got = table.severing_rate_per_m_per_year(&DamageSpec::constant_hole(f), w, h);
        let big_f =
            |d: f64| flux.cumulative_flux_per_m2_per_year(mass_from_diameter_kg(d, rho).unwrap());
        let n = |d: f64| {
            let e = 1e-4f64;
            -(big_f(d * e.exp()) - big_f(d * (-e).exp())) / (d * 2.0 * e.sinh())
        };
        let piece = |a: f64, b: f64| {
            let steps = 20_000;
            let (u0, u1) = (a.ln(), b.ln());
            let du = (u1 - u0) / steps as f64;
            let y = |u: f64| {
                let d = u.exp();
                n(d) * severing_centre_range_m(w, h, f * d, d) * d
            };
            let mut acc = y(u0) + y(u1);
            for i in 1..steps {
                acc += if i % 2 == 1 { 4.0 } else { 2.0 } * y(u0 + i as f64 * du);
            }
            acc * du / 3.0
        };
        let (d_min, d_sat) = (h / f, 2.0 * h / (f - 1.0));
        let want = 2.0 * (piece(d_min * (1.0 + 1e-12), d_sat) + piece(d_sat, d_sat * 1e6));
        assert!((got / want - 1.0).abs() < 1e-6, "{got} vs {want}");
    }

    fn repair(detection: DetectionSpec) -> RepairSettings {
        RepairSettings {
            stations: vec![
                StationSettings {
                    name: "base".into(),
                    altitude_m: 0.0,
                    climbers: 2,
                    initial_stock_segments: 1,
                },
                StationSettings {
                    name: "empty".into(),
                    altitude_m: 29_000e3,
                    climbers: 0,
                    initial_stock_segments: 1,
                },
                StationSettings {
                    name: "high".into(),
                    altitude_m: 56_000e3,
                    climbers: 1,
                    initial_stock_segments: 1,
                },
            ],
            speed_up_m_per_s: 60.0,
            speed_down_m_per_s: 80.0,
            payload_kg: 400.0,
            turnaround_s: 12.0 * 3600.0,
            splice_s: 8.0 * 3600.0,
            climber_mass_kg: 300.0,
            detection,
            resupply: crate::scenario::ResupplySpec::None,
            dispatch: crate::scenario::DispatchSpec::FirstCome,
            climber_load_on_bays: true,
            preventive: None,
            splice_p90_target_hours: None,
            solar: None,
            looped: None,
            cross_link_repair: None,
        }
    }

    #[test]
    fn repair_mean_time_by_hand() {
        // Hand arithmetic. Bay at 30 000 km: the station at 29 000 km has no climber; the
        // nearest with one is at 56 000 km, 26 000 km above: 26e6 m / 80 m/s = 325 000 s.
        let h = 3600.0;
        let r = repair(DetectionSpec::Fixed { delay_hours: 2.0 });
        let t = repair_mean_time_s(&r, 30_000e3).unwrap();
        assert!(
            (t - (2.0 * h + 12.0 * h + 325_000.0 + 8.0 * h)).abs() < 1e-6,
            "{t}"
        );
        // Bay at 10 000 km: from the base, climbing: 1e7 / 60 s; periodic inspection every
        // 24 h adds its mean wait of 12 h.
        let r = repair(DetectionSpec::PeriodicInspection {
            interval_hours: 24.0,
        });
        let t = repair_mean_time_s(&r, 10_000e3).unwrap();
        assert!(
            (t - (12.0 * h + 12.0 * h + 1e7 / 60.0 + 8.0 * h)).abs() < 1e-6,
            "{t}"
        );
        let r = repair(DetectionSpec::Exponential { mean_hours: 5.0 });
        let t = repair_mean_time_s(&r, 56_000e3).unwrap();
        assert!((t - 25.0 * h).abs() < 1e-6, "{t}");
    }

    #[test]
    fn mission_times() {
        let run = |years: f64| RunSettings {
            mission_s: years * SECONDS_PER_YEAR,
            mission_years: years,
            histories: 1,
            seed: 1,
            confidence: 0.95,
        };
        assert_eq!(mission_times_s(&run(3.0)).len(), 3);
        let t = mission_times_s(&run(2.5));
        assert_eq!(t.len(), 3);
        assert!((t[2] - 2.5 * SECONDS_PER_YEAR).abs() < 1e-3);
        assert_eq!(mission_times_s(&run(0.0)), vec![0.0]);
    }

    #[test]
    fn demo_perforation_threshold_is_negligible() {
        // The speed-independent hole assumption: for the demo the ballistic limit (a few
        // micrometres, REFERENCES.md section 5: 2.9 um for a 25 um film at 20 km/s) is far
        // below the smallest cutting particle (millimetres), so the stopped fraction, which
        // scales as (D_c/d)^(2 lambda/xi) ~ (1e-3)^3.2, must be tiny.
        let model = Model::build(crate::scenario::demo()).unwrap();
        let m = MarkovModel::build(&model).unwrap();
        let b = m.unperforated_fraction_bound.unwrap();
        assert!(b > 0.0 && b < 1e-5, "{b}");
        assert_eq!(m.bays.len(), model.profile.bays.len());
        // Equal sharing in the demo: 4 transient states (k = 4 already overloads the survivors,
        // per `check demo`'s critical-hole table).
        assert!(m.bays.iter().all(|b| b.chain.transient_states() == 4));
    }
}

//! Default perforation law for thin ribbons: an ECSS ballistic-limit threshold and a hole whose
//! size follows a hole-size law ([`HoleSize`]: constant factor, Sawle-type or Hill-type, with
//! the oblique elliptical footprint).

use super::hole_size::HoleSize;
use super::{check_range, DamageError, Impact, PerforationLaw, RibbonTarget};

/// Thin-film hole law: perforation above a ballistic limit, lateral hole width from a
/// [`HoleSize`] law (see `damage::hole_size` for the relations and their provenance).
///
/// # Perforation threshold
/// ECSS-E-ST-10-04C Rev.1 (2020), Annex J.3.3.1, eq. (J-4), the single-wall ballistic-limit
/// equation with the thick-plate parameter set:
///
/// `D_c = [ t / (K_f · K1 · ρ_p^β · v^γ · (cos α)^ξ · ρ_t^κ) ]^(1/λ)`,
/// λ = 1.056, β = 0.519, γ = 2/3, ξ = 2/3, κ = 0,
///
/// evaluated in the units the annex uses for this family of equations: thickness and diameter
/// in cm, density in g/cm³, speed in km/s (the annex does not restate units beside the
/// equation; this is our reading). `K_f = 1.8` is the perforation threshold and `K1` the
/// material constant (0.33 for aluminium). The film is replaced by the aluminium plate of the
/// same areal density, `t = t_film · ρ_film / ρ_Al` with ρ_Al = 2700 kg/m³.
///
/// A 25 µm film is far thinner than the plates this equation was calibrated on. We use it only
/// as a conservative threshold: it declares perforation at a few micrometres for typical
/// speeds (about t/5, consistent with thin-foil experience quoted in the literature), and the
/// particles that matter for severance are hundreds of times larger, so the threshold mainly
/// sets the smallest particle worth sampling. Perforation is declared when `d_p > D_c`.
///
/// # Hole width
/// In the thin-film limit (`t ≪ d_p`) the hole tends to the projectile diameter; foil
/// experiments and extrapolated hole-size relations put `D_h / d_p` between about 1.0 and 1.7.
/// [`ThinFilmHoleLaw::new`] keeps the former constant round hole `hole_factor × d_p`
/// (**1.3 is an engineering assumption, not a fitted value**); [`ThinFilmHoleLaw::with_hole_size`]
/// takes a fitted law and the oblique footprint.
///
/// # Speed bound
/// Speeds above `speed_bound_m_per_s` are evaluated at the bound, so that
/// [`PerforationLaw::min_diameter_for_hole_m`] is a true lower bound. The model builder sets
/// the bound above every speed its environment produces, so the clamp never acts in a run.
///
/// # Validity
/// Intended for polymer films of some tens of µm struck by particles of µm to cm size at
/// 10–70 km/s. Outside that, treat results as indicative. Stress concentration and tear
/// propagation from the hole edge are the structure model's notch model
/// (`structure::notch`), not part of the hole size.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ThinFilmHoleLaw {
    hole_factor: f64,
    hole: HoleSize,
    speed_bound_m_per_s: f64,
    material_constant_k1: f64,
    perforation_factor_kf: f64,
}

/// Default speed bound of the hole law, m/s (above the 72 km/s top of ECSS Table C-1 plus
/// focusing).
pub const DEFAULT_SPEED_BOUND_M_PER_S: f64 = 100_000.0;

/// Reference aluminium density for the areal-density-equivalent thickness, kg/m³.
pub const ALUMINIUM_DENSITY_KG_PER_M3: f64 = 2700.0;

const LAMBDA: f64 = 1.056;
const BETA: f64 = 0.519;
const GAMMA: f64 = 2.0 / 3.0;
const XI: f64 = 2.0 / 3.0;

impl Default for ThinFilmHoleLaw {
    fn default() -> Self {
        Self {
            hole_factor: 1.3,
            hole: HoleSize::constant(1.3),
            speed_bound_m_per_s: DEFAULT_SPEED_BOUND_M_PER_S,
            material_constant_k1: 0.33,
            perforation_factor_kf: 1.8,
        }
    }
}

impl ThinFilmHoleLaw {
    /// Default constants (`K1 = 0.33`, `K_f = 1.8`) with the given hole factor `D_h / d_p`.
    ///
    /// # Errors
    /// [`DamageError::OutOfRange`] unless `1.0 <= hole_factor <= 3.0`.
    pub fn new(hole_factor: f64) -> Result<Self, DamageError> {
        check_range(
            "hole_factor",
            hole_factor,
            (1.0..=3.0).contains(&hole_factor),
            "[1, 3]",
        )?;
        Ok(Self {
            hole_factor,
            hole: HoleSize::constant(hole_factor),
            ..Self::default()
        })
    }

    /// Default constants with a general hole-size law (validated).
    ///
    /// # Errors
    /// [`DamageError::OutOfRange`] naming the offending hole-size parameter.
    pub fn with_hole_size(hole: HoleSize) -> Result<Self, DamageError> {
        let hole = hole.validated()?;
        let hole_factor = match hole.law {
            super::HoleFactorLaw::Constant { factor } => factor,
            _ => f64::NAN,
        };
        Ok(Self {
            hole_factor,
            hole,
            ..Self::default()
        })
    }

    /// Replace the speed bound (m/s): speeds above it are evaluated at the bound.
    ///
    /// # Errors
    /// [`DamageError::OutOfRange`] unless `0 < bound <= 1e6`.
    pub fn with_speed_bound(mut self, speed_bound_m_per_s: f64) -> Result<Self, DamageError> {
        check_range(
            "speed_bound_m_per_s",
            speed_bound_m_per_s,
            speed_bound_m_per_s > 0.0 && speed_bound_m_per_s <= 1e6,
            "(0, 1e6]",
        )?;
        self.speed_bound_m_per_s = speed_bound_m_per_s;
        Ok(self)
    }

    /// The hole-size law.
    pub fn hole_size(&self) -> &HoleSize {
        &self.hole
    }

    /// Replace the ECSS material constant `K1` (0.33 aluminium, 0.2 stainless steel).
    ///
    /// # Errors
    /// [`DamageError::OutOfRange`] unless `0 < k1 <= 10`.
    pub fn with_material_constant(mut self, k1: f64) -> Result<Self, DamageError> {
        check_range(
            "material_constant_k1",
            k1,
            k1 > 0.0 && k1 <= 10.0,
            "(0, 10]",
        )?;
        self.material_constant_k1 = k1;
        Ok(self)
    }

    /// Hole width over particle diameter for the constant law (NaN for a fitted law).
    pub fn hole_factor(&self) -> f64 {
        self.hole_factor
    }

    /// ECSS material constant `K1`.
    pub fn material_constant_k1(&self) -> f64 {
        self.material_constant_k1
    }

    /// Ballistic-limit particle diameter `D_c`, m, of eq. (J-4) for this impact's speed, angle
    /// and density on the target's aluminium-equivalent thickness. Infinite at grazing
    /// incidence; NaN for non-physical input.
    pub fn ballistic_limit_diameter_m(&self, impact: &Impact, target: &RibbonTarget) -> f64 {
        let t_al_cm =
            target.thickness_m * target.density_kg_per_m3 / ALUMINIUM_DENSITY_KG_PER_M3 * 100.0;
        let rho_p_g_per_cm3 = impact.density_kg_per_m3 / 1000.0;
        let v_km_per_s = impact.speed_m_per_s / 1000.0;
        let cos_a = impact.cos_incidence.clamp(0.0, 1.0);
        let denominator = self.perforation_factor_kf
            * self.material_constant_k1
            * rho_p_g_per_cm3.powf(BETA)
            * v_km_per_s.powf(GAMMA)
            * cos_a.powf(XI);
        let d_c_cm = (t_al_cm / denominator).powf(1.0 / LAMBDA);
        d_c_cm / 100.0
    }
}

impl PerforationLaw for ThinFilmHoleLaw {
    fn name(&self) -> &str {
        "thin_film_hole"
    }

    /// Runs once per strike, so the test d > D_c is done in logarithms (four `ln` instead of
    /// four `powf`): lambda ln d > ln t - ln(K_f K1) - beta ln rho - gamma ln(v cos), using
    /// gamma = xi. It is the same inequality as [`Self::ballistic_limit_diameter_m`].
    fn hole_width_m(&self, impact: &Impact, target: &RibbonTarget) -> f64 {
        const { assert!(GAMMA == XI) };
        let d = impact.diameter_m;
        let t_al_cm =
            target.thickness_m * target.density_kg_per_m3 / ALUMINIUM_DENSITY_KG_PER_M3 * 100.0;
        let cos_a = impact.cos_incidence.clamp(0.0, 1.0);
        let lhs = LAMBDA * (d * 100.0).ln()
            + (self.perforation_factor_kf * self.material_constant_k1).ln()
            + BETA * (impact.density_kg_per_m3 / 1000.0).ln()
            + GAMMA * (impact.speed_m_per_s / 1000.0 * cos_a).ln();
        // NaN in any input makes the comparison false: no hole.
        if !(d > 0.0 && d.is_finite() && lhs > t_al_cm.ln()) {
            return 0.0;
        }
        if let (super::HoleFactorLaw::Constant { .. }, false) =
            (self.hole.law, self.hole.oblique_footprint)
        {
            // The former law, bit for bit.
            return self.hole_factor * d;
        }
        self.hole.lateral_width_m(
            d,
            target.thickness_m,
            impact.speed_m_per_s.min(self.speed_bound_m_per_s),
            cos_a,
            impact.track_angle_rad,
            impact.density_kg_per_m3,
            target.density_kg_per_m3,
        )
    }

    /// Constant round law: `hole_width_m / hole_factor` (the hole is never wider). Otherwise the
    /// diameter at which the largest lateral width over every angle and every speed up to the
    /// speed bound ([`HoleSize::max_lateral_width_m`], non-decreasing in `d`) reaches
    /// `hole_width_m`, found by bisection in `ln d` and returned from below.
    fn min_diameter_for_hole_m(&self, hole_width_m: f64, target: &RibbonTarget) -> f64 {
        if hole_width_m.is_nan() || hole_width_m <= 0.0 {
            return 0.0;
        }
        if let (super::HoleFactorLaw::Constant { .. }, false) =
            (self.hole.law, self.hole.oblique_footprint)
        {
            return hole_width_m / self.hole_factor;
        }
        // Particle density does not enter the Sawle-type law; the Hill-type law depends on it
        // as (rho_p)^-0.035, largest for the lightest particles: use a low bound (100 kg/m^3,
        // below the ECSS lightest meteoroid 150 kg/m^3).
        let rho_p = 100.0;
        let max_w = |d: f64| {
            self.hole.max_lateral_width_m(
                d,
                target.thickness_m,
                self.speed_bound_m_per_s,
                rho_p,
                target.density_kg_per_m3,
            )
        };
        let (mut lo, mut hi) = (hole_width_m * 1e-9, hole_width_m);
        if max_w(lo) >= hole_width_m {
            return lo;
        }
        for _ in 0..80 {
            let mid = (lo * hi).sqrt();
            if max_w(mid) >= hole_width_m {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        lo
    }

    fn is_extrapolated(&self, impact: &Impact, target: &RibbonTarget) -> bool {
        self.hole.is_extrapolated(
            impact.diameter_m,
            target.thickness_m,
            impact.speed_m_per_s * impact.cos_incidence,
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ecss_j4_check_value() {
        // ECSS-E-ST-10-04C Rev.1 eq. (J-4) with K_f = 1.8, K1 = 0.33, rho_p = 2.5 g/cm^3,
        // v = 20 km/s, normal incidence, 25 um aluminium: D_c = 5.41 um (value computed from the
        // printed equation; project reference sheet section 5).
        let law = ThinFilmHoleLaw::default();
        let al = RibbonTarget::new(0.03, 25e-6, ALUMINIUM_DENSITY_KG_PER_M3).unwrap();
        let impact = Impact::new(1e-3, 20_000.0, 0.0, 2500.0).unwrap();
        let d_c = law.ballistic_limit_diameter_m(&impact, &al);
        assert!((d_c / 5.41e-6 - 1.0).abs() < 1e-3, "{d_c}");
        // Areal-density equivalent: 25 um film at 1420 kg/m^3 ~ 13.1 um aluminium -> ~2.9 um
        // (same reference sheet, worked example).
        let film = RibbonTarget::new(0.03, 25e-6, 1420.0).unwrap();
        let d_c_film = law.ballistic_limit_diameter_m(&impact, &film);
        assert!((d_c_film / 2.9e-6 - 1.0).abs() < 0.02, "{d_c_film}");
    }

    #[test]
    fn log_domain_test_agrees_with_the_ballistic_limit() {
        // The fast per-strike test must be the same inequality as eq. (J-4) written out.
        let law = ThinFilmHoleLaw::default();
        let film = RibbonTarget::new(0.03, 20e-6, 1560.0).unwrap();
        for &d in &[1e-7, 3e-7, 1e-6, 2.9e-6, 3e-6, 1e-5, 1e-3] {
            for &v in &[1_000.0, 5_000.0, 20_000.0, 70_000.0] {
                for &a in &[0.0, 0.5, 1.2, 1.5, 1.5706] {
                    let impact = Impact::new(d, v, a, 2500.0).unwrap();
                    let d_c = law.ballistic_limit_diameter_m(&impact, &film);
                    if (d / d_c - 1.0).abs() < 1e-9 {
                        continue;
                    }
                    let holed = law.hole_width_m(&impact, &film) > 0.0;
                    assert_eq!(holed, d > d_c, "d {d} v {v} a {a} d_c {d_c}");
                }
            }
        }
    }

    #[test]
    fn threshold_and_hole_width() {
        let law = ThinFilmHoleLaw::new(1.3).unwrap();
        let al = RibbonTarget::new(0.03, 25e-6, ALUMINIUM_DENSITY_KG_PER_M3).unwrap();
        let small = Impact::new(5.3e-6, 20_000.0, 0.0, 2500.0).unwrap();
        let big = Impact::new(5.5e-6, 20_000.0, 0.0, 2500.0).unwrap();
        assert_eq!(law.hole_width_m(&small, &al), 0.0);
        assert!((law.hole_width_m(&big, &al) - 1.3 * 5.5e-6).abs() < 1e-18);
        // Grazing incidence never perforates.
        let grazing = Impact::new(1e-3, 20_000.0, std::f64::consts::FRAC_PI_2, 2500.0).unwrap();
        assert_eq!(law.hole_width_m(&grazing, &al), 0.0);
        // Non-physical input gives no hole rather than a panic.
        let bad = Impact {
            diameter_m: f64::NAN,
            ..big
        };
        assert_eq!(law.hole_width_m(&bad, &al), 0.0);
        let bad = Impact {
            track_angle_rad: f64::NAN,
            ..big
        };
        // The constant round law ignores the track.
        assert!(law.hole_width_m(&bad, &al) > 0.0);
    }

    #[test]
    fn constructor_validates() {
        assert!(ThinFilmHoleLaw::new(0.9).is_err());
        assert!(ThinFilmHoleLaw::new(3.1).is_err());
        assert!(ThinFilmHoleLaw::new(f64::NAN).is_err());
        assert!(ThinFilmHoleLaw::new(1.0).is_ok());
        assert!(ThinFilmHoleLaw::default()
            .with_material_constant(0.0)
            .is_err());
        assert!(ThinFilmHoleLaw::default()
            .with_material_constant(0.2)
            .is_ok());
    }
}

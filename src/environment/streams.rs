//! Meteor streams: a time-varying flux on top of the sporadic background.
//!
//! # Activity profile
//! Jenniskens (1995, *A&A* 295, 206; REFERENCES-damage.md §4.2) writes a shower's activity as
//! ZHR(λ☉) = ZHR_max · 10^(−B |λ☉ − λ☉,max|), with separate B before and after the peak (per
//! degree of solar longitude). Here time runs in seconds from mission start; the solar
//! longitude advances 360° per model year (the Julian year of the flux models, 365.25 d — the
//! tropical year is 365.2422 d: a 0.002 % difference, an engineering simplification), so the
//! profile is a two-sided exponential in time, g(t) = exp(−|δ| / τ), with δ the time from the
//! nearest peak taken the short way round the year (|δ| ≤ half a year), τ = τ_rise before the
//! peak and τ_fall after it, and τ = 1 / (B ln 10 · 360° / year). The peak repeats every year.
//! g is 1 at the peak: a stream's strength is its peak strength.
//!
//! # Exposure: the exact integral
//! Rates become integrals over time: the expected number of stream events over [t0, t1] is the
//! peak rate times G(t0, t1) = ∫ g. With A(δ) the integral of g over one year from the point
//! half a year before a peak,
//!
//! A(δ) = τ_r (e^{δ/τ_r} − e^{−Y/(2τ_r)})           for δ < 0,
//! A(δ) = A_r + τ_f (1 − e^{−δ/τ_f}),  A_r = τ_r (1 − e^{−Y/(2τ_r)})   for δ ≥ 0,
//!
//! and G over whole years is A(Y/2) per year, so G is closed form and so is its inverse (the
//! time at which a given exposure is reached: how the strike and cut times of an inhomogeneous
//! Poisson process are drawn by inversion of the integrated rate; e.g. Ross, *Simulation*,
//! §5.5 — a standard result).
//!
//! # Strength
//! Either the flux of particles of mass at least a reference mass at the peak, onto a surface
//! normal to the radiant, with the population index r, or the peak ZHR with r through
//! Koschack & Rendtel (1990, eq. 41): Q_6.5 [km⁻² h⁻¹] = ZHR (13.1 r − 16.45)(r − 1.3)^0.748 /
//! 37 200, the flux of meteoroids brighter than +6.5 mag, whose mass is (Verniani 1964 /
//! Jacchia et al. 1967 via Peterson 1999) m [kg] = 1e-3 · 10^((−8.75 log10 v − 6.5 + 11.59) /
//! 2.25), v in km/s. The cumulative mass distribution is the power law F(≥ m) = F_ref (m /
//! m_ref)^(1 − s) with mass index s = 1 + 2.5 log10 r (REFERENCES-damage.md §4.2; the power
//! law itself is recalled from memory as the standard form, the ECSS stream annex was not
//! found).

use super::EnvironmentError;

/// Days in the model year.
pub use crate::units::DAYS_PER_YEAR as YEAR_DAYS;
/// Seconds in a day.
pub use crate::units::SECONDS_PER_DAY as DAY_S;
/// Seconds in the model year (Julian, 365.25 d).
pub use crate::units::SECONDS_PER_YEAR as YEAR_S;

/// Koschack & Rendtel (1990, eq. 41): flux of meteoroids brighter than +6.5 mag through a
/// surface normal to the radiant, per km² per hour, for a zenithal hourly rate `zhr` and
/// population index `r` (> 1.3).
pub fn koschack_rendtel_flux_per_km2_per_h(zhr: f64, r: f64) -> f64 {
    zhr * (13.1 * r - 16.45) * (r - 1.3).powf(0.748) / 37_200.0
}

/// Mass of a meteoroid of absolute magnitude +6.5 at speed `speed_m_per_s`, kg (Verniani 1964
/// luminous efficiency, Jacchia et al. 1967 fit, via Peterson 1999; REFERENCES-damage.md §4.2).
pub fn mass_of_magnitude_6_5_kg(speed_m_per_s: f64) -> f64 {
    let v = speed_m_per_s / 1e3;
    1e-3 * 10f64.powf((-8.75 * v.log10() - 6.5 + 11.59) / 2.25)
}

/// Mass index s = 1 + 2.5 log10 r of population index `r`.
pub fn mass_index_of_population_index(r: f64) -> f64 {
    1.0 + 2.5 * r.log10()
}

/// One meteor stream in SI units.
#[derive(Clone, Debug, PartialEq)]
pub struct MeteorStream {
    /// Name (user input: escape it in every output).
    pub name: String,
    /// Peak time in the year, days from the start of the year, in [0, 365.25).
    pub peak_day_of_year: f64,
    /// e-folding time of the rise before the peak, s.
    pub rise_e_folding_s: f64,
    /// e-folding time of the fall after the peak, s.
    pub fall_e_folding_s: f64,
    /// Flux of particles of mass >= `reference_mass_kg` at the peak through a surface normal to
    /// the radiant, per m² per s.
    pub peak_flux_above_reference_per_m2_per_s: f64,
    /// Reference mass, kg.
    pub reference_mass_kg: f64,
    /// Mass index s of the cumulative law F ∝ m^(1 − s), s > 1.
    pub mass_index: f64,
    /// Geocentric (free-space) speed of the stream's particles, m/s.
    pub speed_m_per_s: f64,
    /// Particle bulk density, kg/m³ (ECSS-E-ST-10-04C 10.2.4.5c: 1.0 g/cm³ for streams).
    pub density_kg_per_m3: f64,
}

/// e-folding time, s, of a profile slope `b_per_deg` (B of Jenniskens' form, per degree of
/// solar longitude, the longitude advancing 360° per model year).
pub fn e_folding_s_of_b(b_per_deg: f64) -> f64 {
    YEAR_S / (360.0 * b_per_deg * std::f64::consts::LN_10)
}

impl MeteorStream {
    /// Check the parameters (validation has given the user-facing errors already).
    pub fn check(&self) -> Result<(), EnvironmentError> {
        let ok = self.rise_e_folding_s > 0.0
            && self.fall_e_folding_s > 0.0
            && self.rise_e_folding_s.is_finite()
            && self.fall_e_folding_s.is_finite()
            && self.peak_flux_above_reference_per_m2_per_s >= 0.0
            && self.peak_flux_above_reference_per_m2_per_s.is_finite()
            && self.reference_mass_kg > 0.0
            && self.mass_index > 1.0
            && self.speed_m_per_s > 0.0
            && self.density_kg_per_m3 > 0.0
            && (0.0..YEAR_DAYS).contains(&self.peak_day_of_year);
        if ok {
            Ok(())
        } else {
            Err(EnvironmentError::InvalidParameter {
                field: "meteor_stream",
                value: self.peak_flux_above_reference_per_m2_per_s,
                rule: "a stream needs positive widths, mass, speed and density, a mass index above 1 and a peak day in [0, 365.25)".into(),
            })
        }
    }

    /// Flux of particles of mass >= `mass_kg` at the peak through a surface normal to the
    /// radiant, per m² per s.
    pub fn peak_flux_above_per_m2_per_s(&self, mass_kg: f64) -> f64 {
        if mass_kg.is_nan() || mass_kg <= 0.0 {
            return 0.0;
        }
        self.peak_flux_above_reference_per_m2_per_s
            * (mass_kg / self.reference_mass_kg).powf(1.0 - self.mass_index)
    }

    /// The activity g(t) at `t_s` seconds after mission start, mission starting on day
    /// `start_day` of the year; 1 at the peak.
    pub fn profile(&self, start_day: f64, t_s: f64) -> f64 {
        let (_, delta) = self.phase(start_day, t_s);
        if delta < 0.0 {
            (delta / self.rise_e_folding_s).exp()
        } else {
            (-delta / self.fall_e_folding_s).exp()
        }
    }

    /// u = time since the point half a year before the first peak at or after... (the year's
    /// antipode of the peak), split as (whole years, δ in [−Y/2, Y/2)).
    fn phase(&self, start_day: f64, t_s: f64) -> (f64, f64) {
        let u = t_s + (start_day - self.peak_day_of_year) * DAY_S + 0.5 * YEAR_S;
        let k = (u / YEAR_S).floor();
        let r = (u - k * YEAR_S).clamp(0.0, YEAR_S);
        (k, r - 0.5 * YEAR_S)
    }

    fn rise_area_s(&self) -> f64 {
        self.rise_e_folding_s * (-(-0.5 * YEAR_S / self.rise_e_folding_s).exp_m1())
    }

    /// ∫ g over one whole year, s.
    pub fn year_exposure_s(&self) -> f64 {
        self.rise_area_s()
            + self.fall_e_folding_s * (-(-0.5 * YEAR_S / self.fall_e_folding_s).exp_m1())
    }

    /// A(δ): ∫ g from half a year before a peak to δ after it, s.
    fn area_s(&self, delta: f64) -> f64 {
        let (tr, tf) = (self.rise_e_folding_s, self.fall_e_folding_s);
        if delta < 0.0 {
            tr * ((delta / tr).exp() - (-0.5 * YEAR_S / tr).exp())
        } else {
            self.rise_area_s() + tf * (-(-delta / tf).exp_m1())
        }
    }

    /// Cumulative exposure from a fixed origin to `t_s`, s.
    fn cumulative_s(&self, start_day: f64, t_s: f64) -> f64 {
        let (k, delta) = self.phase(start_day, t_s);
        k * self.year_exposure_s() + self.area_s(delta)
    }

    /// G(t0, t1) = ∫_{t0}^{t1} g(t) dt, s (exact; 0 when t1 <= t0).
    pub fn exposure_s(&self, start_day: f64, t0_s: f64, t1_s: f64) -> f64 {
        if t1_s.is_nan() || t0_s.is_nan() || t1_s <= t0_s {
            return 0.0;
        }
        let (k0, d0) = self.phase(start_day, t0_s);
        let (k1, d1) = self.phase(start_day, t1_s);
        let v = (k1 - k0) * self.year_exposure_s() + self.area_s(d1) - self.area_s(d0);
        v.max(0.0)
    }

    /// The time t1 >= `t0_s` with G(t0, t1) = `exposure_s` (the inverse of the integrated
    /// profile, closed form), s. Infinite for an infinite exposure.
    pub fn time_after_exposure_s(&self, start_day: f64, t0_s: f64, exposure_s: f64) -> f64 {
        if !exposure_s.is_finite() {
            return f64::INFINITY;
        }
        let g_year = self.year_exposure_s();
        let target = self.cumulative_s(start_day, t0_s) + exposure_s.max(0.0);
        let k = (target / g_year).floor();
        let rem = (target - k * g_year).clamp(0.0, g_year);
        let ar = self.rise_area_s();
        let (tr, tf) = (self.rise_e_folding_s, self.fall_e_folding_s);
        let delta = if rem < ar {
            (tr * (rem / tr + (-0.5 * YEAR_S / tr).exp()).ln()).min(0.0)
        } else {
            let arg = (1.0 - (rem - ar) / tf).max(f64::MIN_POSITIVE);
            (-tf * arg.ln()).clamp(0.0, 0.5 * YEAR_S)
        };
        let u = k * YEAR_S + delta + 0.5 * YEAR_S;
        let t = u - ((start_day - self.peak_day_of_year) * DAY_S + 0.5 * YEAR_S);
        t.max(t0_s)
    }
}

/// Month of the year (0 = January) of `t_s` seconds after a mission start on day `start_day`
/// (a 365-day calendar without leap days, its December stretched to the 365.25-day model year:
/// a convention for tables).
pub fn month_of(start_day: f64, t_s: f64) -> usize {
    month_and_days_left(start_day, t_s).0
}

/// Day of the year at which each month ends (the convention of [`month_of`]).
const MONTH_ENDS: [f64; 12] = [
    31.0, 59.0, 90.0, 120.0, 151.0, 181.0, 212.0, 243.0, 273.0, 304.0, 334.0, 365.25,
];

/// [`month_of`] and the days from `t_s` to the end of that month (approximate to rounding).
pub(crate) fn month_and_days_left(start_day: f64, t_s: f64) -> (usize, f64) {
    let d = (start_day + t_s / DAY_S).rem_euclid(YEAR_DAYS);
    let m = MONTH_ENDS.iter().position(|&e| d < e).unwrap_or(11);
    (m, (MONTH_ENDS[m] - d).max(0.0))
}

/// Month names for tables.
pub const MONTH_NAMES: [&str; 12] = [
    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec",
];

#[cfg(test)]
mod tests {
    use super::*;

    fn stream(peak: f64, rise_days: f64, fall_days: f64) -> MeteorStream {
        MeteorStream {
            name: "test".into(),
            peak_day_of_year: peak,
            rise_e_folding_s: rise_days * DAY_S,
            fall_e_folding_s: fall_days * DAY_S,
            peak_flux_above_reference_per_m2_per_s: 1e-12,
            reference_mass_kg: 1e-6,
            mass_index: 1.8,
            speed_m_per_s: 59e3,
            density_kg_per_m3: 1000.0,
        }
    }

    /// Composite Simpson with many panels: an independent numerical integral of g.
    fn simpson(s: &MeteorStream, start: f64, a: f64, b: f64) -> f64 {
        let n = 400_000;
        let h = (b - a) / n as f64;
        let mut acc = s.profile(start, a) + s.profile(start, b);
        for i in 1..n {
            acc += if i % 2 == 1 { 4.0 } else { 2.0 } * s.profile(start, a + i as f64 * h);
        }
        acc * h / 3.0
    }

    #[test]
    fn exposure_is_the_closed_form_integral_of_the_two_sided_exponential() {
        // Closed form over a window containing one peak far from the antipode:
        // ∫ = τr (1 − e^{−a/τr}) + τf (1 − e^{−b/τf}) for a window [peak − a, peak + b].
        let s = stream(200.0, 1.5, 3.0);
        let start = 10.0;
        let peak_t = (200.0 - 10.0) * DAY_S;
        let (a, b) = (4.0 * DAY_S, 7.0 * DAY_S);
        let want = s.rise_e_folding_s * -(-a / s.rise_e_folding_s).exp_m1()
            + s.fall_e_folding_s * -(-b / s.fall_e_folding_s).exp_m1();
        let got = s.exposure_s(start, peak_t - a, peak_t + b);
        assert!((got / want - 1.0).abs() < 1e-9, "{got} {want}");
        // Against Simpson's rule over windows crossing the year boundary and several years.
        for (t0, t1) in [
            (0.0, 3.0 * YEAR_S),
            (100.0 * DAY_S, 500.0 * DAY_S),
            (peak_t, peak_t + 1.0),
        ] {
            let num = if t1 - t0 > 1.0 {
                // split at peaks so Simpson sees smooth pieces
                let mut pts = vec![t0];
                let mut p = peak_t - 2.0 * YEAR_S;
                while p < t1 {
                    if p > t0 {
                        pts.push(p);
                    }
                    p += YEAR_S;
                }
                pts.push(t1);
                pts.windows(2)
                    .map(|w| simpson(&s, start, w[0], w[1]))
                    .sum::<f64>()
            } else {
                // One second after the peak: τf (1 − e^{−1/τf}).
                s.fall_e_folding_s * -(-1.0 / s.fall_e_folding_s).exp_m1()
            };
            let got = s.exposure_s(start, t0, t1);
            assert!((got / num - 1.0).abs() < 1e-9, "[{t0}, {t1}]: {got} {num}");
        }
        // Whole years: the per-year exposure ≈ τr + τf (tails beyond half a year negligible).
        let y = s.year_exposure_s();
        assert!((y / ((1.5 + 3.0) * DAY_S) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn inverse_of_the_exposure_returns_the_time() {
        let s = stream(5.0, 0.7, 2.0);
        for &start in &[0.0, 3.0, 300.0] {
            for &t0 in &[0.0, 1e5, 4e6, 3e7, 6.5e7] {
                for &e in &[1.0, 1e3, 5e4, 3e5, 1e6, 5e6] {
                    let t1 = s.time_after_exposure_s(start, t0, e);
                    let back = s.exposure_s(start, t0, t1);
                    assert!(
                        (back - e).abs() <= 1e-6 * e.max(1.0) + 1e-3,
                        "start {start} t0 {t0} e {e}: t1 {t1} back {back}"
                    );
                }
            }
        }
    }

    #[test]
    fn zhr_conversion_reproduces_the_perseid_example() {
        // REFERENCES-damage.md §4.2 [COMPUTED]: Perseids at peak, ZHR 100, r 2.2, 59 km/s:
        // Q_6.5 = 0.031 km^-2 h^-1, s = 1.86, m(+6.5) = 2.4e-5 g, F(>= 1e-3 g) = 3.5e-13 m^-2 s^-1.
        let q = koschack_rendtel_flux_per_km2_per_h(100.0, 2.2);
        assert!((q - 0.031).abs() < 0.0005, "{q}");
        let s = mass_index_of_population_index(2.2);
        assert!((s - 1.86).abs() < 0.005, "{s}");
        let m = mass_of_magnitude_6_5_kg(59e3);
        assert!((m * 1e3 / 2.4e-5 - 1.0).abs() < 0.02, "{m}");
        let st = MeteorStream {
            peak_flux_above_reference_per_m2_per_s: q / 1e6 / 3600.0,
            reference_mass_kg: m,
            mass_index: s,
            ..stream(140.0, 1.0, 1.0)
        };
        let f = st.peak_flux_above_per_m2_per_s(1e-6);
        assert!((f / 3.5e-13 - 1.0).abs() < 0.02, "{f}");
    }

    #[test]
    fn b_slope_gives_the_e_folding_time() {
        // 10^(-B Δλ) = e^(-Δt/τ) with Δλ = 360 Δt / year: τ = year / (360 B ln 10).
        let tau = e_folding_s_of_b(0.2);
        let dt = 2.5 * DAY_S;
        let dl = 360.0 * dt / YEAR_S;
        assert!(((-dt / tau).exp() / 10f64.powf(-0.2 * dl) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn months_follow_the_calendar() {
        assert_eq!(month_of(0.0, 0.0), 0);
        assert_eq!(month_of(0.0, 31.0 * DAY_S), 1);
        assert_eq!(month_of(364.0, 0.0), 11);
        assert_eq!(month_of(364.0, 2.0 * DAY_S), 0);
        assert_eq!(month_of(212.5, 0.0), 7);
    }
}

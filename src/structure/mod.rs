//! The tether: ribbons, bays and cross-links; the tension profile from anchor preload, ribbon
//! weight in the effective Earth–Moon field and traffic; the counterweight; per-bay margins and
//! critical hole widths; and (in [`load_sharing`]) how a cut ribbon's load reaches the survivors.
//!
//! Tension along a hanging ribbon of linear density lambda changes by lambda x dPhi, where Phi is
//! the effective (gravity + centrifugal) potential along the Earth–Moon line ([`crate::orbit`]),
//! so the profile is exact bay by bay without numerical integration. Cross-link masses are
//! smeared along their bay (mass / spacing added to the linear density): at 50 km spacing the
//! error in tension is far below the traffic envelope.

pub mod load_sharing;
pub mod notch;
pub mod surface;

use thiserror::Error;

use notch::{NotchModel, ResidualStrength};

use crate::orbit::{EarthMoon, Side};

/// Width schedule of the ribbons.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Taper {
    /// Every bay has the anchor width.
    Uniform,
    /// Each bay is widened (never narrowed below the anchor width) so that its largest intact
    /// stress equals allowable stress / design safety factor.
    ConstantStress,
}

/// What the structure needs to know about the design (SI units).
#[derive(Clone, Debug)]
pub struct TetherDesign {
    /// Near (L1) or far (L2) side.
    pub side: Side,
    /// Top end altitude above the lunar surface, m.
    pub top_altitude_m: f64,
    /// Number of parallel ribbons.
    pub ribbon_count: usize,
    /// Ribbon width at the anchor, m.
    pub anchor_width_m: f64,
    /// Ribbon thickness, m.
    pub thickness_m: f64,
    /// Allowable stress (ultimate x knock-downs), Pa.
    pub allowable_stress_pa: f64,
    /// Ribbon material density, kg/m^3.
    pub density_kg_per_m3: f64,
    /// Width schedule.
    pub taper: Taper,
    /// Target intact margin used by the taper.
    pub design_safety_factor: f64,
    /// Distance between cross-links, m.
    pub cross_link_spacing_m: f64,
    /// Mass of one cross-link, kg.
    pub cross_link_mass_kg: f64,
    /// Tension at the anchor, N.
    pub anchor_preload_n: f64,
    /// Traffic envelope added to every bay's tension, N.
    pub traffic_load_n: f64,
    /// Residual strength of a holed ribbon (net section, Whitney–Nuismer).
    pub notch: NotchModel,
    /// Length of the surface run from the base to the tether's foot, m (0: the base is at the
    /// foot; see [`surface`]).
    pub surface_run_m: f64,
}

/// One bay: the stretch between two adjacent cross-links.
///
/// Bays are listed from the base: first the surface run's bays (if any; altitude 0), then the
/// hanging tether's from its foot up. Positions along the line (`line_*`) are measured from
/// the base; on the hanging part they are the altitude plus the surface run's length, so with
/// no surface run they equal the altitudes.
#[derive(Clone, Debug, PartialEq)]
pub struct Bay {
    /// Index from the base (0).
    pub index: usize,
    /// Lower end altitude above the lunar surface, m (0 on the surface run).
    pub bottom_altitude_m: f64,
    /// Upper end altitude, m (0 on the surface run).
    pub top_altitude_m: f64,
    /// The bay lies on the ground between the base and the tether's foot.
    pub surface_run: bool,
    /// End nearer the base, as distance along the line from the base, m.
    pub line_bottom_m: f64,
    /// End farther from the base, distance along the line from the base, m.
    pub line_top_m: f64,
    /// Ribbon width in this bay, m.
    pub width_m: f64,
    /// Static tension (no traffic) at the lower end, N.
    pub bottom_tension_n: f64,
    /// Static tension (no traffic) at the upper end, N.
    pub top_tension_n: f64,
    /// Largest tension anywhere in the bay including traffic, N: the design load of the bay.
    pub max_tension_n: f64,
}

impl Bay {
    /// Length along the tether, m.
    pub fn length_m(&self) -> f64 {
        if self.surface_run {
            self.line_top_m - self.line_bottom_m
        } else {
            self.top_altitude_m - self.bottom_altitude_m
        }
    }
    /// Altitude of the bay's middle, m (0 on the surface run).
    pub fn mid_altitude_m(&self) -> f64 {
        0.5 * (self.bottom_altitude_m + self.top_altitude_m)
    }
    /// Middle of the bay as distance along the line from the base, m.
    pub fn line_mid_m(&self) -> f64 {
        0.5 * (self.line_bottom_m + self.line_top_m)
    }
}

/// Position along the line from the base of a point given by its altitude, m: a point at
/// altitude 0 (a station "at the anchor") is at the base; a point above the surface is on
/// the hanging tether, `surface_run_m` beyond the base. Identity without a surface run.
pub fn line_position_of_altitude_m(altitude_m: f64, surface_run_m: f64) -> f64 {
    if surface_run_m > 0.0 && altitude_m > 0.0 {
        altitude_m + surface_run_m
    } else {
        altitude_m
    }
}

/// Why a design cannot be built.
#[derive(Debug, Error, PartialEq)]
pub enum StructureError {
    /// The design is physically impossible; the text says why and what to change.
    #[error("{0}")]
    Infeasible(String),
}

/// The built tether: bays with their widths and tensions, and whole-tether quantities.
#[derive(Clone, Debug)]
pub struct TetherProfile {
    /// The design this was built from.
    pub design: TetherDesign,
    /// Bays from the anchor upwards.
    pub bays: Vec<Bay>,
    /// Distance of the Lagrange point (L1 near side, L2 far side) from the Moon's centre, m.
    pub lagrange_distance_from_moon_m: f64,
    /// Altitude of the Lagrange point above the lunar surface, m.
    pub lagrange_altitude_m: f64,
    /// Static tension at the top end, held by the counterweight, N.
    pub top_tension_n: f64,
    /// Counterweight mass that balances the top tension, kg.
    pub counterweight_kg: f64,
    /// Effective outward acceleration at the top end, m/s^2.
    pub top_outward_accel_m_per_s2: f64,
    /// Total ribbon mass, kg.
    pub ribbon_mass_kg: f64,
    /// Total cross-link mass, kg.
    pub cross_links_mass_kg: f64,
}

impl TetherProfile {
    /// Build the bays, widths and tension profile. Refuses impossible designs with the reason.
    pub fn build(orbit: &EarthMoon, design: &TetherDesign) -> Result<Self, StructureError> {
        let d = design;
        let r_moon = orbit.moon_radius_m;
        let r_l = orbit.lagrange_distance_from_moon_m(d.side);
        let alt_l = r_l - r_moon;
        let point = if d.side == Side::Near { "L1" } else { "L2" };
        if d.top_altitude_m <= alt_l {
            return Err(StructureError::Infeasible(format!(
                "tether.top_altitude_km = {:.1} km is below {point} ({:.1} km above the lunar surface): \
                 only a top end beyond {point} can hold a counterweight that keeps the tether up",
                d.top_altitude_m / 1e3,
                alt_l / 1e3
            )));
        }
        let n = d.ribbon_count as f64;
        let t = d.thickness_m;
        let rho = d.density_kg_per_m3;
        let sigma_design = d.allowable_stress_pa / d.design_safety_factor;
        let lambda_cl = d.cross_link_mass_kg / d.cross_link_spacing_m;
        let phi = |alt: f64| orbit.potential_j_per_kg(d.side, r_moon + alt);
        let phi_l = phi(alt_l);

        let bay_count = (d.top_altitude_m / d.cross_link_spacing_m).ceil() as usize;
        let run = d.surface_run_m;
        let surface_count = if run > 0.0 {
            (run / d.cross_link_spacing_m).ceil() as usize
        } else {
            0
        };
        let mut bays = Vec::with_capacity(surface_count + bay_count);
        let mut t_bottom = d.anchor_preload_n;
        let mut ribbon_mass = 0.0;
        // The surface run: constant tension (the anchor tension of the hanging tether, friction
        // neglected), so the constant-stress taper gives every surface bay the width it gives a
        // bay with no potential rise.
        for j in 0..surface_count {
            let lo = j as f64 * d.cross_link_spacing_m;
            let hi = ((j + 1) as f64 * d.cross_link_spacing_m).min(run);
            let width = match d.taper {
                Taper::Uniform => d.anchor_width_m,
                Taper::ConstantStress => {
                    ((t_bottom + d.traffic_load_n) / (n * t * sigma_design)).max(d.anchor_width_m)
                }
            };
            bays.push(Bay {
                index: j,
                bottom_altitude_m: 0.0,
                top_altitude_m: 0.0,
                surface_run: true,
                line_bottom_m: lo,
                line_top_m: hi,
                width_m: width,
                bottom_tension_n: t_bottom,
                top_tension_n: t_bottom,
                max_tension_n: t_bottom + d.traffic_load_n,
            });
            ribbon_mass += n * width * t * rho * (hi - lo);
        }
        for j in 0..bay_count {
            let lo = j as f64 * d.cross_link_spacing_m;
            let hi = ((j + 1) as f64 * d.cross_link_spacing_m).min(d.top_altitude_m);
            let phi_lo = phi(lo);
            let phi_hi = phi(hi);
            // Potential rise from the bay bottom to the bay's highest-tension point.
            let dphi_to_max = if hi <= alt_l {
                phi_hi - phi_lo
            } else if lo < alt_l {
                phi_l - phi_lo
            } else {
                0.0
            };
            let width = match d.taper {
                Taper::Uniform => d.anchor_width_m,
                Taper::ConstantStress => {
                    let denom = n * t * (sigma_design - rho * dphi_to_max);
                    if denom <= 0.0 {
                        return Err(StructureError::Infeasible(format!(
                            "bay {} ({:.0}-{:.0} km): a {:.1} km bay of this material cannot carry its own weight at \
                             the design stress {:.3} GPa; shorten tether.cross_link_spacing_km or lower tether.design_safety_factor",
                            surface_count + j,
                            lo / 1e3,
                            hi / 1e3,
                            (hi - lo) / 1e3,
                            sigma_design / 1e9
                        )));
                    }
                    let need = (t_bottom + lambda_cl * dphi_to_max + d.traffic_load_n) / denom;
                    need.max(d.anchor_width_m)
                }
            };
            let lambda = n * width * t * rho + lambda_cl;
            let t_top = t_bottom + lambda * (phi_hi - phi_lo);
            let t_max_static = t_bottom + lambda * dphi_to_max;
            bays.push(Bay {
                index: surface_count + j,
                bottom_altitude_m: lo,
                top_altitude_m: hi,
                surface_run: false,
                line_bottom_m: lo + run,
                line_top_m: hi + run,
                width_m: width,
                bottom_tension_n: t_bottom,
                top_tension_n: t_top,
                max_tension_n: t_max_static.max(t_top) + d.traffic_load_n,
            });
            ribbon_mass += n * width * t * rho * (hi - lo);
            t_bottom = t_top;
        }
        let top_tension = t_bottom;
        let a_out = -orbit.effective_accel_toward_moon_m_per_s2(d.side, r_moon + d.top_altitude_m);
        if top_tension < 0.0 {
            return Err(StructureError::Infeasible(format!(
                "the ribbon beyond {point} pulls outward harder than the anchor holds: the tension would fall to \
                 {:.0} N at the top end. Raise tether.anchor_preload_n by at least {:.0} N or lower tether.top_altitude_km",
                top_tension, -top_tension
            )));
        }
        let profile = TetherProfile {
            design: design.clone(),
            lagrange_distance_from_moon_m: r_l,
            lagrange_altitude_m: alt_l,
            top_tension_n: top_tension,
            counterweight_kg: top_tension / a_out,
            top_outward_accel_m_per_s2: a_out,
            ribbon_mass_kg: ribbon_mass,
            cross_links_mass_kg: ((surface_count + bay_count) as f64 + 1.0) * d.cross_link_mass_kg,
            bays,
        };
        profile.check_self_support(phi_l - phi(0.0))?;
        Ok(profile)
    }

    fn check_self_support(&self, dphi_anchor_to_l: f64) -> Result<(), StructureError> {
        let (j, m) = self.min_margin();
        if m >= 1.0 {
            return Ok(());
        }
        let d = &self.design;
        let bay = &self.bays[j];
        let breaking_length_km = d.allowable_stress_pa / d.density_kg_per_m3 / 9.80665 / 1e3;
        Err(StructureError::Infeasible(format!(
            "the ribbons cannot hold their own weight: in bay {j} ({:.0}-{:.0} km) the intact tension {:.0} N exceeds \
             what {} ribbons of {:.1} mm x {:.1} um can carry at the allowable stress {:.3} GPa ({:.0} N; margin {:.3}). \
             The material's breaking length at allowable stress is {:.0} km against {:.0} km of lunar-gravity \
             equivalent up to the Lagrange point (potential difference / g0). Use \"taper\": \"constant_stress\", \
             wider or more ribbons, a stronger material, or a lower anchor preload",
            bay.bottom_altitude_m / 1e3,
            bay.top_altitude_m / 1e3,
            bay.max_tension_n,
            d.ribbon_count,
            bay.width_m * 1e3,
            d.thickness_m * 1e6,
            d.allowable_stress_pa / 1e9,
            self.capacity_n(j),
            m,
            breaking_length_km,
            dphi_anchor_to_l / 9.80665 / 1e3
        )))
    }

    /// Length of the hanging tether from its foot to the top end (the top end's altitude), m.
    pub fn length_m(&self) -> f64 {
        self.design.top_altitude_m
    }

    /// Length of the surface run from the base to the foot, m (0 without one).
    pub fn surface_run_length_m(&self) -> f64 {
        self.design.surface_run_m
    }

    /// Number of surface-run bays (they come first in [`TetherProfile::bays`]).
    pub fn surface_bay_count(&self) -> usize {
        self.bays.iter().take_while(|b| b.surface_run).count()
    }

    /// Tension all intact ribbons of bay `j` can carry together, N.
    pub fn capacity_n(&self, j: usize) -> f64 {
        let d = &self.design;
        d.ribbon_count as f64 * self.bays[j].width_m * d.thickness_m * d.allowable_stress_pa
    }

    /// Intact margin of bay `j`: capacity over largest tension.
    pub fn margin(&self, j: usize) -> f64 {
        self.capacity_n(j) / self.bays[j].max_tension_n
    }

    /// Bay index and value of the smallest intact margin.
    pub fn min_margin(&self) -> (usize, f64) {
        (0..self.bays.len())
            .map(|j| (j, self.margin(j)))
            .fold((0, f64::INFINITY), |a, b| if b.1 < a.1 { b } else { a })
    }

    /// Largest intact stress in bay `j`, Pa.
    pub fn max_stress_pa(&self, j: usize) -> f64 {
        let d = &self.design;
        self.bays[j].max_tension_n / (d.ribbon_count as f64 * self.bays[j].width_m * d.thickness_m)
    }

    /// Load a ribbon of bay `j` with removed width `removed_m` carries at failure, N, under the
    /// design's notch model (net section: `(w − D) t σ`).
    #[inline]
    pub fn ribbon_capacity_n(&self, j: usize, removed_m: f64) -> f64 {
        let d = &self.design;
        d.notch.capacity_n(
            removed_m,
            self.bays[j].width_m,
            d.thickness_m * d.allowable_stress_pa,
        )
    }

    /// Smallest removed width at which a ribbon of bay `j` carrying `load_n` fails, m, under
    /// the design's notch model (net section: `w − load/(t σ)`, possibly negative when the
    /// intact ribbon is already overloaded).
    pub fn critical_removed_width_for_load_m(&self, j: usize, load_n: f64) -> f64 {
        let d = &self.design;
        d.notch.critical_removed_width_m(
            load_n,
            self.bays[j].width_m,
            d.thickness_m * d.allowable_stress_pa,
        )
    }

    /// Critical hole width in bay `j` with `cuts` ribbons already cut, equal load sharing: the
    /// removed width at which a surviving ribbon carrying T/(N-cuts) fails under the design's
    /// notch model (net section: w - T / ((N - cuts) t sigma)). Zero means the survivors fail
    /// without any hole.
    pub fn critical_hole_width_m(&self, j: usize, cuts: usize) -> f64 {
        let d = &self.design;
        if cuts >= d.ribbon_count {
            return 0.0;
        }
        let per_ribbon = self.bays[j].max_tension_n / (d.ribbon_count - cuts) as f64;
        let w = self.bays[j].width_m;
        let h = self.critical_removed_width_for_load_m(j, per_ribbon);
        // Same tolerance as the overload test: a survivor at its capacity fails without a hole.
        if h > w * load_sharing::CAPACITY_TOLERANCE {
            h
        } else {
            0.0
        }
    }

    /// Mass of one spare segment (one ribbon over one bay) for bay `j`, kg.
    pub fn segment_mass_kg(&self, j: usize) -> f64 {
        let d = &self.design;
        self.bays[j].width_m * d.thickness_m * d.density_kg_per_m3 * self.bays[j].length_m()
    }

    /// Heaviest spare segment over all bays: (bay index, kg).
    pub fn heaviest_segment(&self) -> (usize, f64) {
        (0..self.bays.len())
            .map(|j| (j, self.segment_mass_kg(j)))
            .fold((0, 0.0), |a, b| if b.1 > a.1 { b } else { a })
    }

    /// Largest static tension and where: (bay index, N, including traffic).
    pub fn max_tension(&self) -> (usize, f64) {
        (0..self.bays.len())
            .map(|j| (j, self.bays[j].max_tension_n))
            .fold((0, 0.0), |a, b| if b.1 > a.1 { b } else { a })
    }
}

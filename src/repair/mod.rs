//! Repair logistics: stations (depots) with climbers and spare stock, climber trips, detection of
//! cuts, dispatch policy, resupply, and the per-history event queue that holds them.
//!
//! The engine owns the history loop; this module owns what happens between strikes: a cut is
//! detected after a delay, becomes a job for its bay, waits for an idle climber at a station with
//! stock, and is served by a trip: turnaround at the station, travel to the bay, one splice per
//! segment carried, travel back. A splice replaces a segment with new ribbon (holes cleared).
//!
//! **Climber motion.** Climbers move at a constant speed up and a constant speed down. A real
//! climber is power-limited near the Moon, where the effective gravity is 1.6 m/s^2, and nearly
//! weightless near L1; a constant speed is the speed the power budget sustains and is the input
//! a fleet designer controls. Travel time is |altitude difference| / speed. With a surface run
//! (a base away from the tether's foot) every position is the distance along the line from
//! the base ([`crate::structure::Bay`]): a climber drives the run at its speeds "up" (away from
//! the base) and "down", and a station at altitude 0 is at the base.
//!
//! **Capacity.** A climber carries as many spare segments for one bay as its payload allows
//! (payload / segment mass, at least one: the model refuses a climber that cannot lift one) and
//! repairs all detected cuts of that bay it can carry in one trip.
//!
//! Randomness (exponential detection delays) comes only from the repair stream, so changing the
//! repair settings leaves every strike identical.

mod dispatch;
mod fleet;
mod shade;

pub use dispatch::{DispatchPolicy, FirstCome, Job, MostEndangered};
pub use fleet::{Event, EventKind, EventQueue, Fleet, RepairTally};
pub use shade::ShadeMotion;

use crate::scenario::{
    DetectionSpec, DispatchSpec, LoopedSettings, RepairSettings, ReplacementThresholdSpec,
    ResupplySpec,
};
use crate::structure::TetherProfile;

/// How cuts are detected.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Detection {
    /// Fixed delay, s.
    Fixed(f64),
    /// Exponential delay with this mean, s.
    Exponential(f64),
    /// Found at the next inspection; inspections every this many s from mission start.
    Periodic(f64),
}

/// How stock is replenished.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Resupply {
    /// Never.
    None,
    /// Every `interval_s` each station receives `batch` segments.
    Periodic {
        /// Interval, s.
        interval_s: f64,
        /// Segments per delivery.
        batch: u32,
    },
    /// When a station's stock falls to `reorder_point`, `batch` arrive after `lead_time_s`.
    ReorderPoint {
        /// Trigger level, segments.
        reorder_point: u32,
        /// Segments per order.
        batch: u32,
        /// Delay, s.
        lead_time_s: f64,
    },
}

/// A station as the simulation needs it.
#[derive(Clone, Debug)]
pub struct Station {
    /// Name.
    pub name: String,
    /// Position along the line from the base, m: the station's altitude, plus the surface
    /// run's length for a station above the surface.
    pub altitude_m: f64,
    /// Climbers based here.
    pub climbers: u32,
    /// Initial stock, segments.
    pub initial_stock: u32,
}

/// Everything fixed about repair for one built model.
#[derive(Clone, Debug)]
pub struct RepairPlan {
    /// Stations.
    pub stations: Vec<Station>,
    /// Climb speed, m/s.
    pub speed_up_m_per_s: f64,
    /// Descent speed, m/s.
    pub speed_down_m_per_s: f64,
    /// Turnaround at the station before leaving, s.
    pub turnaround_s: f64,
    /// Splice time per segment, s.
    pub splice_s: f64,
    /// Detection model.
    pub detection: Detection,
    /// Resupply model.
    pub resupply: Resupply,
    /// Dispatch policy.
    pub dispatch: DispatchSpec,
    /// Segments a climber can carry for bay j.
    pub capacity_per_trip: Vec<u32>,
    /// Middle of bay j along the line from the base, m (its mid altitude without a surface run).
    pub bay_altitude_m: Vec<f64>,
    /// Intact margin of bay j (for the most-endangered policy's tie-break).
    pub bay_margin: Vec<f64>,
    /// Interval over which spare demand is counted, s (resupply interval, or the mission).
    pub demand_interval_s: f64,
    /// Bays where climbers can add load (empty without climber loads: no load events).
    pub load_bays: Vec<bool>,
    /// End of bay j nearer the base, along the line, m.
    pub bay_bottom_m: Vec<f64>,
    /// End of bay j farther from the base, along the line, m.
    pub bay_top_m: Vec<f64>,
    /// Inspection and preventive replacement, if any.
    pub preventive: Option<PreventivePlan>,
    /// Solar climbers: how the Moon's shadow slows them (None: beamed power, travel at
    /// constant speed).
    pub shade: Option<ShadeMotion>,
    /// The looped-ribbon concept (None: climbers).
    pub looped: Option<LoopPlan>,
    /// Repair of cut cross-links (None: cut cross-links stay cut).
    pub cross_link: Option<CrossLinkPlan>,
}

/// Repair of cut cross-links as the fleet needs it: the on-site time, the spare parts, and
/// where each cross-link station lies along the line.
#[derive(Clone, Debug, PartialEq)]
pub struct CrossLinkPlan {
    /// Time on site to re-join one cross-link, s.
    pub repair_s: f64,
    /// Spare cross-links at each station at mission start.
    pub initial_stock: u32,
    /// Spare cross-links per resupply delivery.
    pub resupply_batch: u32,
    /// Position along the line of cross-link station k (joining bay k - 1 and bay k; entry
    /// 0 is the base end and entry `bays` the top), m.
    pub link_m: Vec<f64>,
}

/// The looped-ribbon concept as the fleet needs it. Each ribbon runs as a loop over a pulley
/// at a station. A detected cut in bay j is repaired in three steps: the loop is hauled until
/// the damaged length reaches the nearest pulley station (haul distance: from the bay's middle
/// to the station along the line, as a climber's travel is measured), the length is cut out
/// and a new one spliced in at the station (one of its splice positions, one spare from its
/// stock; waiting when all positions are busy or the stock is empty), and the loop is hauled
/// back the same distance until the new length is in place. The bay stays weakened (the
/// segment counts as cut) from the cut until the new length is in place. Hauls of different
/// cuts do not delay each other (each loop has its own drive), and hauling does not change the
/// state of the other bays the moving loop passes through (an engineering assumption).
#[derive(Clone, Debug, PartialEq)]
pub struct LoopPlan {
    /// Haul speed, m/s.
    pub haul_speed_m_per_s: f64,
    /// Splice time at a station, s.
    pub station_splice_s: f64,
    /// Splice positions at each station (0 at stations without a pulley).
    pub splice_positions: Vec<u32>,
    /// The pulley station nearest bay j (ties: the first listed).
    pub haul_station: Vec<u32>,
    /// One-way haul distance of bay j to its station, m.
    pub haul_distance_m: Vec<f64>,
}

impl LoopPlan {
    /// The plan for stations at `station_m` along the line and bays with middles at
    /// `bay_mid_m`.
    pub fn new(l: &LoopedSettings, station_m: &[f64], bay_mid_m: &[f64]) -> Self {
        let mut haul_station = Vec::with_capacity(bay_mid_m.len());
        let mut haul_distance_m = Vec::with_capacity(bay_mid_m.len());
        for &x in bay_mid_m {
            let mut best: Option<(usize, f64)> = None;
            for (s, &at) in station_m.iter().enumerate() {
                if !l.pulley.get(s).copied().unwrap_or(false) {
                    continue;
                }
                let d = (x - at).abs();
                if best.is_none_or(|(_, b)| d < b) {
                    best = Some((s, d));
                }
            }
            let (s, d) = best.unwrap_or((0, 0.0));
            haul_station.push(s as u32);
            haul_distance_m.push(d);
        }
        LoopPlan {
            haul_speed_m_per_s: l.haul_speed_m_per_s,
            station_splice_s: l.station_splice_s,
            splice_positions: station_m
                .iter()
                .enumerate()
                .map(|(s, _)| {
                    if l.pulley.get(s).copied().unwrap_or(false) {
                        l.station_splice_capacity
                    } else {
                        0
                    }
                })
                .collect(),
            haul_station,
            haul_distance_m,
        }
    }

    /// One-way haul time of bay j, s.
    #[inline]
    pub fn haul_s(&self, j: usize) -> f64 {
        self.haul_distance_m[j] / self.haul_speed_m_per_s
    }
}

/// Inspection and preventive replacement as the fleet and the engine need it.
#[derive(Clone, Debug, PartialEq)]
pub struct PreventivePlan {
    /// The threshold.
    pub threshold: ReplacementThresholdSpec,
    /// Inspect at repair visits.
    pub at_visits: bool,
    /// Extra spares a repair climber may use at a visit.
    pub extra_spares: u32,
    /// Periodic inspection interval, s.
    pub interval_s: Option<f64>,
    /// Periodic inspections cover bays 0..inspect_bays.
    pub inspect_bays: usize,
    /// Spares an inspection climber takes.
    pub inspection_spares: u32,
}

impl RepairPlan {
    /// Build from validated settings and the tether profile.
    pub fn new(r: &RepairSettings, profile: &TetherProfile, mission_s: f64) -> Self {
        let h = 3600.0;
        let detection = match r.detection {
            DetectionSpec::Fixed { delay_hours } => Detection::Fixed(delay_hours * h),
            DetectionSpec::Exponential { mean_hours } => Detection::Exponential(mean_hours * h),
            DetectionSpec::PeriodicInspection { interval_hours } => {
                Detection::Periodic(interval_hours * h)
            }
        };
        let day = 86_400.0;
        let resupply = match r.resupply {
            ResupplySpec::None => Resupply::None,
            ResupplySpec::Periodic {
                interval_days,
                batch_segments,
            } => Resupply::Periodic {
                interval_s: interval_days * day,
                batch: batch_segments,
            },
            ResupplySpec::ReorderPoint {
                reorder_point_segments,
                batch_segments,
                lead_time_days,
            } => Resupply::ReorderPoint {
                reorder_point: reorder_point_segments,
                batch: batch_segments,
                lead_time_s: lead_time_days * day,
            },
        };
        let capacity_per_trip = (0..profile.bays.len())
            .map(|j| {
                let m = profile.segment_mass_kg(j);
                if m > 0.0 {
                    ((r.payload_kg / m).floor() as u32).max(1)
                } else {
                    u32::MAX
                }
            })
            .collect();
        let demand_interval_s = match resupply {
            Resupply::Periodic { interval_s, .. } => interval_s.min(mission_s.max(1.0)),
            _ => mission_s.max(1.0),
        };
        let station_m: Vec<f64> = r
            .stations
            .iter()
            .map(|s| {
                crate::structure::line_position_of_altitude_m(
                    s.altitude_m,
                    profile.surface_run_length_m(),
                )
            })
            .collect();
        let bay_mid_m: Vec<f64> = profile.bays.iter().map(|b| b.line_mid_m()).collect();
        let looped = r
            .looped
            .as_ref()
            .map(|l| LoopPlan::new(l, &station_m, &bay_mid_m));
        RepairPlan {
            stations: r
                .stations
                .iter()
                .map(|s| Station {
                    name: s.name.clone(),
                    altitude_m: crate::structure::line_position_of_altitude_m(
                        s.altitude_m,
                        profile.surface_run_length_m(),
                    ),
                    climbers: s.climbers,
                    initial_stock: s.initial_stock_segments,
                })
                .collect(),
            speed_up_m_per_s: r.speed_up_m_per_s,
            speed_down_m_per_s: r.speed_down_m_per_s,
            turnaround_s: r.turnaround_s,
            splice_s: r.splice_s,
            detection,
            resupply,
            dispatch: r.dispatch,
            capacity_per_trip,
            bay_altitude_m: profile.bays.iter().map(|b| b.line_mid_m()).collect(),
            bay_margin: (0..profile.bays.len()).map(|j| profile.margin(j)).collect(),
            demand_interval_s,
            load_bays: Vec::new(),
            bay_bottom_m: profile.bays.iter().map(|b| b.line_bottom_m).collect(),
            bay_top_m: profile.bays.iter().map(|b| b.line_top_m).collect(),
            preventive: r.preventive.as_ref().map(|p| PreventivePlan {
                threshold: p.threshold,
                at_visits: p.at_climber_visits,
                extra_spares: p.extra_spares_per_trip,
                interval_s: p.inspection_interval_s,
                inspect_bays: profile
                    .bays
                    .partition_point(|b| b.bottom_altitude_m < p.inspection_lowest_m),
                inspection_spares: p.inspection_spares,
            }),
            shade: None,
            looped,
            cross_link: r.cross_link_repair.map(|x| CrossLinkPlan {
                repair_s: x.repair_s,
                initial_stock: x.spares_per_station,
                resupply_batch: x.resupply_batch,
                link_m: profile
                    .bays
                    .iter()
                    .map(|b| b.line_bottom_m)
                    .chain(profile.bays.last().map(|b| b.line_top_m))
                    .collect(),
            }),
        }
    }

    /// Set the shadow model of solar climbers from validated settings (`moon_radius_m` from
    /// the model's constants); nothing without solar power.
    pub fn with_solar(mut self, r: &RepairSettings, moon_radius_m: f64) -> Self {
        self.shade = r.solar.as_ref().map(|s| ShadeMotion {
            moon_radius_m,
            sun_rate_rad_per_s: crate::orbit::shadow::sun_rate_rad_per_s(),
            sun_angle_at_start_rad: s.sun_angle_at_start_rad,
            shade_speed_m_per_s: s.shade_speed_m_per_s,
            battery_j: s.battery_j,
            power_w: s.power_w,
        });
        self
    }

    /// Time of a leg from altitude `from_m` to `to_m` started at `t0_s`, s: the distance at the
    /// climb or descent speed, plus the delay in the Moon's shadow for solar climbers (exact,
    /// see [`ShadeMotion`]). Without solar power it is the same arithmetic as
    /// [`RepairPlan::travel_out_s`], to the bit.
    #[inline]
    pub fn leg_s(&self, from_m: f64, to_m: f64, t0_s: f64) -> f64 {
        let d = to_m - from_m;
        let speed = if d >= 0.0 {
            self.speed_up_m_per_s
        } else {
            self.speed_down_m_per_s
        };
        match &self.shade {
            None => {
                if d >= 0.0 {
                    d / speed
                } else {
                    -d / speed
                }
            }
            Some(m) => m.arrival_s(from_m, to_m, t0_s, speed) - t0_s,
        }
    }

    /// One-way travel time from station `s` to bay `j`, s.
    #[inline]
    pub fn travel_out_s(&self, s: usize, j: usize) -> f64 {
        let d = self.bay_altitude_m[j] - self.stations[s].altitude_m;
        if d >= 0.0 {
            d / self.speed_up_m_per_s
        } else {
            -d / self.speed_down_m_per_s
        }
    }

    /// Travel time back from bay `j` to station `s`, s.
    #[inline]
    pub fn travel_back_s(&self, s: usize, j: usize) -> f64 {
        let d = self.stations[s].altitude_m - self.bay_altitude_m[j];
        if d >= 0.0 {
            d / self.speed_up_m_per_s
        } else {
            -d / self.speed_down_m_per_s
        }
    }

    /// Simultaneous repairs station `s` can serve: its climbers, or under the looped-ribbon
    /// concept its splice positions.
    #[inline]
    pub fn servers(&self, s: usize) -> u32 {
        match &self.looped {
            Some(l) => l.splice_positions[s],
            None => self.stations[s].climbers,
        }
    }

    /// Number of demand intervals in a mission.
    pub fn demand_intervals(&self, mission_s: f64) -> usize {
        ((mission_s / self.demand_interval_s).ceil() as usize).max(1)
    }
}

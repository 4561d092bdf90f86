//! The per-history repair state: the event queue, stations' stock and idle climbers, waiting
//! jobs, and the repair tallies. Reused across histories (cleared, not reallocated).

use std::cmp::Ordering;
use std::collections::BinaryHeap;

use rand::Rng;
use serde::{Deserialize, Serialize};

use super::dispatch::{DispatchPolicy, Job};
use super::{Detection, RepairPlan, Resupply};

/// What happens at an event.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum EventKind {
    /// A cut in `bay` is detected.
    Detect {
        /// Bay.
        bay: u32,
    },
    /// A climber from `station` arrives at `bay` carrying `segments`.
    Arrive {
        /// Home station.
        station: u32,
        /// Bay.
        bay: u32,
        /// Spare segments carried.
        segments: u32,
    },
    /// The climber has spliced `segments` in `bay`.
    SpliceDone {
        /// Home station.
        station: u32,
        /// Bay.
        bay: u32,
        /// Segments replaced.
        segments: u32,
    },
    /// The climber is back at `station`.
    Return {
        /// Station.
        station: u32,
    },
    /// A delivery reaches `station`.
    Resupply {
        /// Station.
        station: u32,
    },
    /// A climber crosses into `bay` (its weight starts to load the bay).
    ClimberIn {
        /// Bay.
        bay: u32,
    },
    /// A climber crosses out of `bay`.
    ClimberOut {
        /// Bay.
        bay: u32,
    },
    /// Looped ribbon: the damaged length of a cut in `bay` has been hauled to `station`.
    HauledIn {
        /// Pulley station.
        station: u32,
        /// Bay.
        bay: u32,
    },
    /// Looped ribbon: a new length for `bay` is spliced in at `station`; the haul back starts.
    StationSpliceDone {
        /// Pulley station.
        station: u32,
        /// Bay.
        bay: u32,
    },
    /// Looped ribbon: the new length is in place in `bay` (the segment carries load again).
    LengthInPlace {
        /// Pulley station it came from.
        station: u32,
        /// Bay.
        bay: u32,
    },
    /// A cut of the cross-link at station `link` is detected.
    LinkDetect {
        /// Cross-link station (joining bay `link - 1` and bay `link`).
        link: u32,
    },
    /// A climber from `station` reaches cross-link station `link` with a spare cross-link.
    LinkArrive {
        /// Home station.
        station: u32,
        /// Cross-link station.
        link: u32,
    },
    /// The cross-link at `link` is re-joined (load transfer there again).
    LinkDone {
        /// Home station.
        station: u32,
        /// Cross-link station.
        link: u32,
    },
    /// A periodic inspection of the lowest bays is due.
    InspectionDue,
    /// An inspection climber from `station` is at the middle of `bay`, sweeping up or down,
    /// with `spares` spare segments left on board.
    InspectStep {
        /// Home station.
        station: u32,
        /// Bay.
        bay: u32,
        /// Sweeping away from the Moon.
        up: bool,
        /// Spares left on board.
        spares: u32,
    },
}

/// A timed event; ordered by time, then by insertion.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Event {
    /// Time, s.
    pub time_s: f64,
    /// Insertion number (tie-break).
    pub seq: u64,
    /// What happens.
    pub kind: EventKind,
}

impl Eq for Event {}
impl Ord for Event {
    fn cmp(&self, o: &Self) -> Ordering {
        // BinaryHeap is a max-heap: reverse so the earliest (then first inserted) pops first.
        o.time_s.total_cmp(&self.time_s).then(o.seq.cmp(&self.seq))
    }
}
impl PartialOrd for Event {
    fn partial_cmp(&self, o: &Self) -> Option<Ordering> {
        Some(self.cmp(o))
    }
}

/// Events of one history, earliest first.
#[derive(Clone, Debug, Default)]
pub struct EventQueue {
    heap: BinaryHeap<Event>,
    seq: u64,
}

impl EventQueue {
    /// Schedule an event.
    pub fn push(&mut self, time_s: f64, kind: EventKind) {
        self.seq += 1;
        self.heap.push(Event {
            time_s,
            seq: self.seq,
            kind,
        });
    }
    /// Time of the next event.
    pub fn next_time(&self) -> Option<f64> {
        self.heap.peek().map(|e| e.time_s)
    }
    /// Remove and return the next event.
    pub fn pop(&mut self) -> Option<Event> {
        self.heap.pop()
    }
    fn clear(&mut self) {
        self.heap.clear();
        self.seq = 0;
    }
}

/// Bins per decade of the time-to-splice histogram (resolution about 2.3 %).
pub const SPLICE_BINS_PER_DECADE: usize = 100;
/// Lower edge of the time-to-splice histogram, hours.
pub const SPLICE_HIST_MIN_HOURS: f64 = 0.01;
/// Decades covered (0.01 h to 1e5 h).
pub const SPLICE_HIST_DECADES: usize = 7;
/// Largest demand count held in the demand histograms (larger counts go to the last bin).
pub const DEMAND_MAX: usize = 2000;

/// Mergeable repair counts (integers, so merging is exact).
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct RepairTally {
    /// Segments spliced.
    pub splices: u64,
    /// Splices by mission year.
    pub splices_by_year: Vec<u64>,
    /// Histogram of time from cut to splice (log bins, see the constants).
    pub time_to_splice_hist: Vec<u64>,
    /// Sum of times from cut to splice, s.
    pub time_to_splice_sum_s: u64,
    /// Detected segments that entered the queue.
    pub queue_arrivals: u64,
    /// Sum of waits from detection to dispatch, s.
    pub queue_wait_sum_s: u64,
    /// Integral over time of the number of segments waiting, segment x s.
    pub queue_area_s: u64,
    /// The part of `queue_area_s` during which no climber was free anywhere (segments
    /// waiting for a climber); the rest was spent with a free climber that had no stock
    /// at its station (waiting for stock). Absent in files of older versions.
    #[serde(default)]
    pub queue_area_no_climber_s: u64,
    /// Climber busy time (dispatch to return), s.
    pub busy_s: u64,
    /// Histories with at least one stock-out, per station.
    pub stockout_histories: Vec<u64>,
    /// Stock-out events, per station.
    pub stockout_events: Vec<u64>,
    /// Per station: histogram of segments drawn over the mission.
    pub demand_mission: Vec<Vec<u64>>,
    /// Per station: histogram of segments drawn in one demand interval (every interval of
    /// every history is one sample).
    pub demand_interval: Vec<Vec<u64>>,
    /// Per station: histogram over histories of the largest demand in any interval.
    pub demand_max_interval: Vec<Vec<u64>>,
    /// Intact segments replaced preventively (worst hole at least the policy's threshold).
    #[serde(default)]
    pub preventive_replacements: u64,
    /// Preventive replacements at repair climbers' visits.
    #[serde(default)]
    pub preventive_at_visits: u64,
    /// Preventive replacements at periodic inspections.
    #[serde(default)]
    pub preventive_at_inspections: u64,
    /// Qualifying segments left in place for want of a spare on board or in stock.
    #[serde(default)]
    pub preventive_short_of_spares: u64,
    /// Bays inspected (visits and periodic inspection steps).
    #[serde(default)]
    pub bays_inspected: u64,
    /// Periodic inspections started.
    #[serde(default)]
    pub inspections: u64,
    /// Periodic inspections skipped (no idle climber anywhere).
    #[serde(default)]
    pub inspections_skipped: u64,
    /// Segments sent out on repair trips (each is spliced unless the history ends first).
    #[serde(default)]
    pub dispatched_segments: u64,
    /// Per segment sent, summed: turnaround and outbound travel at full speed, s.
    #[serde(default)]
    pub trip_travel_sum_s: u64,
    /// Per segment sent, summed: the outbound delay of solar climbers in the Moon's shadow
    /// (waiting for light), s.
    #[serde(default)]
    pub trip_wait_for_light_sum_s: u64,
    /// Per segment sent, summed: time on site from arrival to the end of the trip's splices, s.
    #[serde(default)]
    pub trip_splice_sum_s: u64,
    /// Looped ribbon: damaged lengths hauled to a station (repairs started).
    #[serde(default, skip_serializing_if = "is_zero")]
    pub hauls: u64,
    /// Looped ribbon: repairs completed (new length in place).
    #[serde(default, skip_serializing_if = "is_zero")]
    pub looped_repairs: u64,
    /// Looped ribbon: haul time of the completed repairs (to the station and back), summed, s.
    #[serde(default, skip_serializing_if = "is_zero")]
    pub haul_time_sum_s: u64,
    /// Looped ribbon: histogram of the haul time of completed repairs (the time-to-splice
    /// bins; empty under the climber concept).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub haul_time_hist: Vec<u64>,
    /// Cross-links re-joined (`repair.cross_link_repair`).
    #[serde(default, skip_serializing_if = "is_zero")]
    pub cross_link_repairs: u64,
    /// Spare cross-links sent out on repair trips.
    #[serde(default, skip_serializing_if = "is_zero")]
    pub cross_link_spares_used: u64,
    /// Cross-link cuts detected (each becomes a repair job).
    #[serde(default, skip_serializing_if = "is_zero")]
    pub cross_link_detections: u64,
    /// Detected cross-link cuts that waited at some point with a climber free but no spare
    /// cross-link at its station (each counted once, however long it waits).
    #[serde(default, skip_serializing_if = "is_zero")]
    pub cross_link_stockout_events: u64,
    /// Sum over detected cross-link cuts of the wait from detection to dispatch (open waits
    /// counted to the history's end), s.
    #[serde(default, skip_serializing_if = "is_zero")]
    pub cross_link_wait_sum_s: u64,
}

fn is_zero(x: &u64) -> bool {
    *x == 0
}

impl RepairTally {
    /// Empty tally for `stations` stations and `years` mission years.
    pub fn new(stations: usize, years: usize) -> Self {
        let bins = SPLICE_BINS_PER_DECADE * SPLICE_HIST_DECADES;
        RepairTally {
            splices_by_year: vec![0; years],
            time_to_splice_hist: vec![0; bins],
            stockout_histories: vec![0; stations],
            stockout_events: vec![0; stations],
            demand_mission: vec![vec![0; DEMAND_MAX + 1]; stations],
            demand_interval: vec![vec![0; DEMAND_MAX + 1]; stations],
            demand_max_interval: vec![vec![0; DEMAND_MAX + 1]; stations],
            ..Default::default()
        }
    }

    /// Add another tally.
    pub fn merge(&mut self, o: &RepairTally) {
        self.splices += o.splices;
        add(&mut self.splices_by_year, &o.splices_by_year);
        add(&mut self.time_to_splice_hist, &o.time_to_splice_hist);
        self.time_to_splice_sum_s += o.time_to_splice_sum_s;
        self.queue_arrivals += o.queue_arrivals;
        self.queue_wait_sum_s += o.queue_wait_sum_s;
        self.queue_area_s += o.queue_area_s;
        self.queue_area_no_climber_s += o.queue_area_no_climber_s;
        self.busy_s += o.busy_s;
        self.preventive_replacements += o.preventive_replacements;
        self.preventive_at_visits += o.preventive_at_visits;
        self.preventive_at_inspections += o.preventive_at_inspections;
        self.preventive_short_of_spares += o.preventive_short_of_spares;
        self.bays_inspected += o.bays_inspected;
        self.inspections += o.inspections;
        self.inspections_skipped += o.inspections_skipped;
        self.dispatched_segments += o.dispatched_segments;
        self.trip_travel_sum_s += o.trip_travel_sum_s;
        self.trip_wait_for_light_sum_s += o.trip_wait_for_light_sum_s;
        self.trip_splice_sum_s += o.trip_splice_sum_s;
        self.hauls += o.hauls;
        self.looped_repairs += o.looped_repairs;
        self.haul_time_sum_s += o.haul_time_sum_s;
        add(&mut self.haul_time_hist, &o.haul_time_hist);
        self.cross_link_repairs += o.cross_link_repairs;
        self.cross_link_detections += o.cross_link_detections;
        self.cross_link_spares_used += o.cross_link_spares_used;
        self.cross_link_stockout_events += o.cross_link_stockout_events;
        self.cross_link_wait_sum_s += o.cross_link_wait_sum_s;
        add(&mut self.stockout_histories, &o.stockout_histories);
        add(&mut self.stockout_events, &o.stockout_events);
        for (a, b) in [
            (&mut self.demand_mission, &o.demand_mission),
            (&mut self.demand_interval, &o.demand_interval),
            (&mut self.demand_max_interval, &o.demand_max_interval),
        ] {
            if a.len() < b.len() {
                a.resize(b.len(), vec![0; DEMAND_MAX + 1]);
            }
            for (x, y) in a.iter_mut().zip(b) {
                add(x, y);
            }
        }
    }

    /// Bin of a time-to-splice in hours.
    pub fn splice_bin(hours: f64) -> usize {
        let bins = SPLICE_BINS_PER_DECADE * SPLICE_HIST_DECADES;
        if hours.is_nan() || hours <= SPLICE_HIST_MIN_HOURS {
            return 0;
        }
        (((hours / SPLICE_HIST_MIN_HOURS).log10() * SPLICE_BINS_PER_DECADE as f64) as usize)
            .min(bins - 1)
    }

    /// Geometric centre of a time-to-splice bin, hours.
    pub fn splice_bin_centre_hours(bin: usize) -> f64 {
        SPLICE_HIST_MIN_HOURS * 10f64.powf((bin as f64 + 0.5) / SPLICE_BINS_PER_DECADE as f64)
    }
}

fn add(a: &mut Vec<u64>, b: &[u64]) {
    if a.len() < b.len() {
        a.resize(b.len(), 0);
    }
    for (x, y) in a.iter_mut().zip(b) {
        *x += *y;
    }
}

/// The delay from a cut at `t` to its detection under the plan's detection model (one draw
/// from `rng` for exponential delays, none otherwise).
fn detection_delay_s<R: Rng + ?Sized>(plan: &RepairPlan, rng: &mut R, t: f64) -> f64 {
    match plan.detection {
        Detection::Fixed(d) => d,
        Detection::Exponential(mean) => {
            let u = 1.0 - (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64);
            -mean * u.ln()
        }
        Detection::Periodic(every) => {
            let next = ((t / every).floor() + 1.0) * every;
            next - t
        }
    }
}

/// Per-history fleet state.
#[derive(Debug)]
pub struct Fleet {
    /// Pending events.
    pub queue: EventQueue,
    stock: Vec<u32>,
    idle: Vec<u32>,
    order_outstanding: Vec<bool>,
    jobs: Vec<Job>,
    stockout_seen: Vec<bool>,
    demand: Vec<u32>,
    intervals: usize,
    waiting: u32,
    area: f64,
    area_no_climber: f64,
    area_t: f64,
    busy: f64,
    wait_sum: f64,
    trip_travel: f64,
    trip_light_wait: f64,
    trip_splice: f64,
    /// Looped ribbon: hauled-in lengths waiting at each station for a splice position or stock.
    loop_jobs: Vec<Vec<Job>>,
    /// Spare cross-links at each station.
    link_stock: Vec<u32>,
    /// Detected cross-link cuts waiting for a climber and a spare, first come first served.
    link_jobs: Vec<LinkJob>,
    /// Sum of cross-link waits (detection to dispatch) so far, s: minus the detection time of
    /// each waiting job, plus its dispatch time.
    link_wait_sum: f64,
}

/// A detected cross-link cut waiting for repair.
#[derive(Clone, Copy, Debug, PartialEq)]
struct LinkJob {
    link: u32,
    detected_s: f64,
    stockout: bool,
}

impl Fleet {
    /// Fleet state for a plan and mission length.
    pub fn new(plan: &RepairPlan, mission_s: f64) -> Self {
        let n = plan.stations.len();
        let intervals = plan.demand_intervals(mission_s);
        Fleet {
            queue: EventQueue::default(),
            stock: vec![0; n],
            idle: vec![0; n],
            order_outstanding: vec![false; n],
            jobs: Vec::with_capacity(16),
            stockout_seen: vec![false; n],
            demand: vec![0; n * intervals],
            intervals,
            waiting: 0,
            area: 0.0,
            area_no_climber: 0.0,
            area_t: 0.0,
            busy: 0.0,
            wait_sum: 0.0,
            trip_travel: 0.0,
            trip_light_wait: 0.0,
            trip_splice: 0.0,
            loop_jobs: (0..n).map(|_| Vec::with_capacity(8)).collect(),
            link_stock: vec![0; n],
            link_jobs: Vec::with_capacity(8),
            link_wait_sum: 0.0,
        }
    }

    /// Reset to the mission start: stock and climbers home, first resupply scheduled.
    pub fn reset(&mut self, plan: &RepairPlan) {
        self.queue.clear();
        for (i, s) in plan.stations.iter().enumerate() {
            self.stock[i] = s.initial_stock;
            self.idle[i] = plan.servers(i);
            self.order_outstanding[i] = false;
            self.stockout_seen[i] = false;
        }
        self.jobs.clear();
        self.loop_jobs.iter_mut().for_each(Vec::clear);
        let link_stock = plan.cross_link.as_ref().map_or(0, |x| x.initial_stock);
        self.link_stock.iter_mut().for_each(|s| *s = link_stock);
        self.link_jobs.clear();
        self.link_wait_sum = 0.0;
        self.demand.iter_mut().for_each(|d| *d = 0);
        self.waiting = 0;
        self.area = 0.0;
        self.area_no_climber = 0.0;
        self.area_t = 0.0;
        self.busy = 0.0;
        self.wait_sum = 0.0;
        self.trip_travel = 0.0;
        self.trip_light_wait = 0.0;
        self.trip_splice = 0.0;
        if let Resupply::Periodic { interval_s, .. } = plan.resupply {
            for s in 0..plan.stations.len() {
                self.queue
                    .push(interval_s, EventKind::Resupply { station: s as u32 });
            }
        }
        if let Some(every) = plan.preventive.as_ref().and_then(|p| p.interval_s) {
            self.queue.push(every, EventKind::InspectionDue);
        }
    }

    /// Spare segments in stock at `station`.
    pub fn stock(&self, station: u32) -> u32 {
        self.stock[station as usize]
    }

    /// Take `n` spares from `station`'s stock at `t` for preventive replacement (counted in
    /// the station's demand like any spare drawn).
    pub fn take_stock(&mut self, plan: &RepairPlan, station: u32, n: u32, t: f64) {
        let s = station as usize;
        let n = n.min(self.stock[s]);
        if n == 0 {
            return; // nothing drawn: the fleet is left exactly as it was
        }
        self.stock[s] -= n;
        let interval = ((t / plan.demand_interval_s) as usize).min(self.intervals - 1);
        self.demand[s * self.intervals + interval] += n;
        self.reorder_if_low(plan, s, t);
    }

    /// Under a reorder-point policy, order a delivery for station `s` when its stock has
    /// fallen to the reorder point and no order is outstanding.
    fn reorder_if_low(&mut self, plan: &RepairPlan, s: usize, t: f64) {
        if let Resupply::ReorderPoint {
            reorder_point,
            lead_time_s,
            ..
        } = plan.resupply
        {
            if self.stock[s] <= reorder_point && !self.order_outstanding[s] {
                self.order_outstanding[s] = true;
                self.queue
                    .push(t + lead_time_s, EventKind::Resupply { station: s as u32 });
            }
        }
    }

    /// Schedule the climber-load events of a climber moving from altitude `from_m` (leaving at
    /// `t0_s`) to `to_m`: a `ClimberIn` when it crosses into a bay, a `ClimberOut` when it
    /// crosses out. `from_station`: it starts at a station (not yet on any bay: the first bay
    /// gets a `ClimberIn` at `t0_s`); otherwise it is already in the bay holding `from_m`.
    /// `to_station`: it ends at a station (the last bay gets a `ClimberOut` on arrival);
    /// otherwise it stays in the bay holding `to_m`. Only bays where climbers can add load are
    /// listed (nothing is scheduled without climber loads).
    fn push_leg(
        &mut self,
        plan: &RepairPlan,
        t0_s: f64,
        from_m: f64,
        to_m: f64,
        from_station: bool,
        to_station: bool,
    ) {
        if plan.load_bays.is_empty() {
            return;
        }
        let up = to_m >= from_m;
        let speed = if up {
            plan.speed_up_m_per_s
        } else {
            plan.speed_down_m_per_s
        };
        let (lo, hi) = if up { (from_m, to_m) } else { (to_m, from_m) };
        // Bays overlapping [lo, hi] (touching at a point counts for the end bays only).
        let first = plan.bay_top_m.partition_point(|&top| top <= lo);
        let last = plan
            .bay_bottom_m
            .partition_point(|&b| b < hi)
            .max(first + 1)
            .min(plan.bay_top_m.len());
        let n_bays = last.saturating_sub(first);
        for k in 0..n_bays {
            let j = if up { first + k } else { last - 1 - k };
            let is_first = k == 0;
            let is_last = k + 1 == n_bays;
            if !plan.load_bays[j] {
                continue;
            }
            let (enter_m, leave_m) = if up {
                (
                    plan.bay_bottom_m[j].max(from_m),
                    plan.bay_top_m[j].min(to_m),
                )
            } else {
                (
                    plan.bay_top_m[j].min(from_m),
                    plan.bay_bottom_m[j].max(to_m),
                )
            };
            if !is_first || from_station {
                let t = match plan.shade {
                    None => t0_s + (enter_m - from_m).abs() / speed,
                    // The motion does not depend on where the leg ends: the time to a bay
                    // boundary is the time of the leg cut short there.
                    Some(_) => t0_s + plan.leg_s(from_m, enter_m, t0_s),
                };
                self.queue.push(t, EventKind::ClimberIn { bay: j as u32 });
            }
            if !is_last || to_station {
                let t = match plan.shade {
                    None => t0_s + (leave_m - from_m).abs() / speed,
                    Some(_) => t0_s + plan.leg_s(from_m, leave_m, t0_s),
                };
                self.queue.push(t, EventKind::ClimberOut { bay: j as u32 });
            }
        }
    }

    /// Jobs waiting now.
    pub fn jobs(&self) -> &[Job] {
        &self.jobs
    }

    /// Integrate the number waiting up to `t`, before any state change at `t`. The span is
    /// charged to waiting for a climber when no climber was free anywhere, else to waiting
    /// for stock (a free climber without stock at its station: dispatch serves every job it
    /// can, so a job left waiting beside a free climber lacks stock).
    fn advance_area(&mut self, t: f64) {
        let a = f64::from(self.waiting) * (t - self.area_t);
        self.area += a;
        if self.waiting > 0 && self.idle.iter().all(|&c| c == 0) {
            self.area_no_climber += a;
        }
        self.area_t = t;
    }

    /// A new cut in `bay` at `t`: schedule its detection (repair stream for random delays).
    pub fn on_cut<R: Rng + ?Sized>(
        &mut self,
        plan: &RepairPlan,
        rng: &mut R,
        bay: u32,
        cuts_in_bay: u32,
        t: f64,
    ) {
        let delay = detection_delay_s(plan, rng, t);
        self.queue.push(t + delay, EventKind::Detect { bay });
        for j in self.jobs.iter_mut().filter(|j| j.bay == bay) {
            j.cuts_in_bay = cuts_in_bay;
        }
        for q in &mut self.loop_jobs {
            for j in q.iter_mut().filter(|j| j.bay == bay) {
                j.cuts_in_bay = cuts_in_bay;
            }
        }
    }

    /// Looped ribbon: a cut in `bay` is detected at `t`; its loop is hauled to the bay's
    /// pulley station (arriving after the one-way haul time).
    pub fn start_haul(&mut self, plan: &RepairPlan, bay: u32, t: f64, tally: &mut RepairTally) {
        let Some(l) = plan.looped.as_ref() else {
            return;
        };
        let j = bay as usize;
        tally.hauls += 1;
        self.queue.push(
            t + l.haul_s(j),
            EventKind::HauledIn {
                station: l.haul_station[j],
                bay,
            },
        );
    }

    /// Looped ribbon: the damaged length of a cut in `bay` reached `station` at `t`: it waits
    /// there for a splice position and a spare (served by [`Fleet::dispatch`]).
    pub fn on_hauled_in(
        &mut self,
        station: u32,
        bay: u32,
        cuts_in_bay: u32,
        t: f64,
        tally: &mut RepairTally,
    ) {
        self.advance_area(t);
        self.waiting += 1;
        tally.queue_arrivals += 1;
        self.wait_sum -= t;
        self.loop_jobs[station as usize].push(Job {
            bay,
            segments: 1,
            detected_s: t,
            cuts_in_bay,
            stockout: false,
        });
    }

    /// Looped ribbon: serve the lengths waiting at station `s` while it has a free splice
    /// position and stock (the dispatch policy chooses among them; `detected_s` of a waiting
    /// length is its arrival at the station).
    fn serve_station(
        &mut self,
        plan: &RepairPlan,
        policy: &dyn DispatchPolicy,
        s: usize,
        t: f64,
        tally: &mut RepairTally,
    ) {
        let Some(l) = plan.looped.as_ref() else {
            return;
        };
        while self.idle[s] > 0 && !self.loop_jobs[s].is_empty() {
            let k = policy.choose(&self.loop_jobs[s], plan);
            if self.stock[s] == 0 {
                if !self.loop_jobs[s][k].stockout {
                    self.loop_jobs[s][k].stockout = true;
                    tally.stockout_events[s] += 1;
                    self.stockout_seen[s] = true;
                }
                return;
            }
            let bay = self.loop_jobs[s][k].bay;
            self.loop_jobs[s].swap_remove(k);
            self.stock[s] -= 1;
            self.idle[s] -= 1;
            let interval = ((t / plan.demand_interval_s) as usize).min(self.intervals - 1);
            self.demand[s * self.intervals + interval] += 1;
            self.waiting -= 1;
            self.wait_sum += t;
            self.busy -= t;
            tally.dispatched_segments += 1;
            self.queue.push(
                t + l.station_splice_s,
                EventKind::StationSpliceDone {
                    station: s as u32,
                    bay,
                },
            );
            self.reorder_if_low(plan, s, t);
        }
    }

    /// Looped ribbon: the splice at `station` is done at `t`: the position is free, and the
    /// loop is hauled back until the new length is in place in `bay`.
    pub fn on_station_splice_done(&mut self, plan: &RepairPlan, station: u32, bay: u32, t: f64) {
        let Some(l) = plan.looped.as_ref() else {
            return;
        };
        self.advance_area(t);
        self.idle[station as usize] += 1;
        self.busy += t;
        self.queue.push(
            t + l.haul_s(bay as usize),
            EventKind::LengthInPlace { station, bay },
        );
    }

    /// Looped ribbon: count a completed repair of `bay` and its haul time (both ways).
    pub fn on_length_in_place(&mut self, plan: &RepairPlan, bay: u32, tally: &mut RepairTally) {
        let Some(l) = plan.looped.as_ref() else {
            return;
        };
        let haul = 2.0 * l.haul_s(bay as usize);
        if tally.haul_time_hist.is_empty() {
            // Once per tally (the climber concept never holds one).
            tally.haul_time_hist = vec![0; SPLICE_BINS_PER_DECADE * SPLICE_HIST_DECADES];
        }
        tally.haul_time_hist[RepairTally::splice_bin(haul / 3600.0)] += 1;
        tally.haul_time_sum_s += haul.round() as u64;
        tally.looped_repairs += 1;
    }

    /// A detection event: the cut joins (or becomes) its bay's waiting job.
    pub fn on_detect(&mut self, bay: u32, cuts_in_bay: u32, t: f64, tally: &mut RepairTally) {
        self.advance_area(t);
        self.waiting += 1;
        tally.queue_arrivals += 1;
        // Waits are summed per segment from detection to dispatch; the sum starts now.
        self.wait_sum -= t;
        if let Some(j) = self.jobs.iter_mut().find(|j| j.bay == bay) {
            j.segments += 1;
            j.cuts_in_bay = cuts_in_bay;
        } else {
            self.jobs.push(Job {
                bay,
                segments: 1,
                detected_s: t,
                cuts_in_bay,
                stockout: false,
            });
        }
    }

    /// Serve waiting jobs while a climber and stock allow.
    pub fn dispatch(
        &mut self,
        plan: &RepairPlan,
        policy: &dyn DispatchPolicy,
        t: f64,
        tally: &mut RepairTally,
    ) {
        // Close the span before this instant under the state that held during it.
        self.advance_area(t);
        if plan.looped.is_some() {
            for s in 0..plan.stations.len() {
                self.serve_station(plan, policy, s, t, tally);
            }
            return;
        }
        self.serve_ribbon_jobs(plan, policy, t, tally);
        self.serve_link_jobs(plan, t, tally);
    }

    /// Climbers: serve waiting ribbon jobs (in the policy's order) while a climber and stock
    /// allow.
    fn serve_ribbon_jobs(
        &mut self,
        plan: &RepairPlan,
        policy: &dyn DispatchPolicy,
        t: f64,
        tally: &mut RepairTally,
    ) {
        while !self.jobs.is_empty() && self.idle.iter().any(|&c| c > 0) {
            let k = policy.choose(&self.jobs, plan);
            let bay = self.jobs[k].bay as usize;
            // Nearest station with an idle climber and stock; note stock-outs at nearer ones.
            let mut best: Option<(usize, f64)> = None;
            let mut nearest_idle: Option<(usize, f64)> = None;
            for s in 0..plan.stations.len() {
                if self.idle[s] == 0 {
                    continue;
                }
                let tt = plan.leg_s(
                    plan.stations[s].altitude_m,
                    plan.bay_altitude_m[bay],
                    t + plan.turnaround_s,
                );
                if nearest_idle.is_none_or(|(_, b)| tt < b) {
                    nearest_idle = Some((s, tt));
                }
                if self.stock[s] > 0 && best.is_none_or(|(_, b)| tt < b) {
                    best = Some((s, tt));
                }
            }
            let Some((s, travel)) = best else {
                // Idle climbers but no stock anywhere they are: a stock-out at the nearest.
                if let Some((s, _)) = nearest_idle {
                    if !self.jobs[k].stockout {
                        self.jobs[k].stockout = true;
                        tally.stockout_events[s] += 1;
                        self.stockout_seen[s] = true;
                    }
                }
                return;
            };
            let n = self.jobs[k]
                .segments
                .min(plan.capacity_per_trip[bay])
                .min(self.stock[s]);
            self.stock[s] -= n;
            self.idle[s] -= 1;
            let interval = ((t / plan.demand_interval_s) as usize).min(self.intervals - 1);
            self.demand[s * self.intervals + interval] += n;
            self.advance_area(t);
            self.waiting -= n;
            self.wait_sum += f64::from(n) * t;
            self.jobs[k].segments -= n;
            if self.jobs[k].segments == 0 {
                self.jobs.swap_remove(k);
            }
            self.busy -= t;
            // The trip's parts per segment sent: turnaround and travel in light, the delay in
            // the shadow, and the splicing of the n segments (all finish together).
            let light = plan.travel_out_s(s, bay);
            let nf = f64::from(n);
            tally.dispatched_segments += u64::from(n);
            self.trip_travel += nf * (plan.turnaround_s + light);
            self.trip_light_wait += nf * (travel - light).max(0.0);
            self.trip_splice += nf * nf * plan.splice_s;
            self.push_leg(
                plan,
                t + plan.turnaround_s,
                plan.stations[s].altitude_m,
                plan.bay_altitude_m[bay],
                true,
                false,
            );
            self.queue.push(
                t + plan.turnaround_s + travel,
                EventKind::Arrive {
                    station: s as u32,
                    bay: bay as u32,
                    segments: n,
                },
            );
            self.reorder_if_low(plan, s, t);
        }
    }

    /// Serve waiting cross-link jobs, first detected first, after the ribbon jobs: each goes to
    /// the nearest station (by travel time) with a free climber and a spare cross-link. When
    /// free climbers have no spare at their stations, every job waiting then is a cross-link
    /// stock-out (each counted once); they wait for a return or a delivery.
    fn serve_link_jobs(&mut self, plan: &RepairPlan, t: f64, tally: &mut RepairTally) {
        let Some(x) = plan.cross_link.as_ref() else {
            return;
        };
        while !self.link_jobs.is_empty() && self.idle.iter().any(|&c| c > 0) {
            let mut k = 0;
            for (i, j) in self.link_jobs.iter().enumerate().skip(1) {
                if j.detected_s < self.link_jobs[k].detected_s {
                    k = i;
                }
            }
            let link = self.link_jobs[k].link;
            let to_m = x.link_m[link as usize];
            let mut best: Option<(usize, f64)> = None;
            for s in 0..plan.stations.len() {
                if self.idle[s] == 0 || self.link_stock[s] == 0 {
                    continue;
                }
                let tt = plan.leg_s(plan.stations[s].altitude_m, to_m, t + plan.turnaround_s);
                if best.is_none_or(|(_, b)| tt < b) {
                    best = Some((s, tt));
                }
            }
            let Some((s, travel)) = best else {
                // No free climber has a spare: every waiting cross-link cut waits for stock.
                for j in self.link_jobs.iter_mut().filter(|j| !j.stockout) {
                    j.stockout = true;
                    tally.cross_link_stockout_events += 1;
                }
                return;
            };
            self.link_jobs.swap_remove(k);
            self.link_stock[s] -= 1;
            self.idle[s] -= 1;
            self.busy -= t;
            self.link_wait_sum += t;
            tally.cross_link_spares_used += 1;
            self.push_leg(
                plan,
                t + plan.turnaround_s,
                plan.stations[s].altitude_m,
                to_m,
                true,
                false,
            );
            self.queue.push(
                t + plan.turnaround_s + travel,
                EventKind::LinkArrive {
                    station: s as u32,
                    link,
                },
            );
        }
    }

    /// A cut of the cross-link at station `link` at `t`: schedule its detection (repair stream
    /// for random delays). Nothing without cross-link repair.
    pub fn on_link_cut<R: Rng + ?Sized>(
        &mut self,
        plan: &RepairPlan,
        rng: &mut R,
        link: u32,
        t: f64,
    ) {
        if plan.cross_link.is_none() {
            return;
        }
        let delay = detection_delay_s(plan, rng, t);
        self.queue.push(t + delay, EventKind::LinkDetect { link });
    }

    /// A cross-link cut is detected at `t`: it waits for a climber and a spare.
    pub fn on_link_detect(&mut self, link: u32, t: f64, tally: &mut RepairTally) {
        tally.cross_link_detections += 1;
        self.link_wait_sum -= t;
        self.link_jobs.push(LinkJob {
            link,
            detected_s: t,
            stockout: false,
        });
    }

    /// The climber reached cross-link station `link`: schedule the end of the re-join.
    pub fn on_link_arrive(&mut self, plan: &RepairPlan, station: u32, link: u32, t: f64) {
        let Some(x) = plan.cross_link.as_ref() else {
            return;
        };
        self.queue
            .push(t + x.repair_s, EventKind::LinkDone { station, link });
    }

    /// The cross-link at `link` is re-joined at `t`: count it and send the climber home.
    pub fn on_link_done(
        &mut self,
        plan: &RepairPlan,
        station: u32,
        link: u32,
        t: f64,
        tally: &mut RepairTally,
    ) {
        let Some(x) = plan.cross_link.as_ref() else {
            return;
        };
        tally.cross_link_repairs += 1;
        let from_m = x.link_m[link as usize];
        let home_m = plan.stations[station as usize].altitude_m;
        self.push_leg(plan, t, from_m, home_m, false, true);
        self.queue.push(
            t + plan.leg_s(from_m, home_m, t),
            EventKind::Return { station },
        );
    }

    /// The climber reached the bay: schedule the end of splicing.
    pub fn on_arrive(&mut self, plan: &RepairPlan, station: u32, bay: u32, segments: u32, t: f64) {
        self.queue.push(
            t + f64::from(segments) * plan.splice_s,
            EventKind::SpliceDone {
                station,
                bay,
                segments,
            },
        );
    }

    /// Splicing done: send the climber home.
    pub fn on_splice_done(&mut self, plan: &RepairPlan, station: u32, bay: u32, t: f64) {
        let back = plan.leg_s(
            plan.bay_altitude_m[bay as usize],
            plan.stations[station as usize].altitude_m,
            t,
        );
        self.push_leg(
            plan,
            t,
            plan.bay_altitude_m[bay as usize],
            plan.stations[station as usize].altitude_m,
            false,
            true,
        );
        self.queue.push(t + back, EventKind::Return { station });
    }

    /// A periodic inspection is due at `t`: schedule the next one and send an idle climber
    /// from the station nearest the inspected bays (none idle: skipped and counted). It sweeps
    /// the inspected bays from the end nearer its station, stopping at each bay's middle.
    pub fn on_inspection_due(&mut self, plan: &RepairPlan, t: f64, tally: &mut RepairTally) {
        let Some(p) = plan.preventive.as_ref() else {
            return;
        };
        if let Some(every) = p.interval_s {
            self.queue.push(t + every, EventKind::InspectionDue);
        }
        if p.inspect_bays == 0 {
            return;
        }
        let lo_mid = plan.bay_altitude_m[0];
        let hi_mid = plan.bay_altitude_m[p.inspect_bays - 1];
        let centre = 0.5 * (lo_mid + hi_mid);
        let mut best: Option<(usize, f64)> = None;
        for s in 0..plan.stations.len() {
            if self.idle[s] == 0 {
                continue;
            }
            let d = (plan.stations[s].altitude_m - centre).abs();
            if best.is_none_or(|(_, b)| d < b) {
                best = Some((s, d));
            }
        }
        let Some((s, _)) = best else {
            tally.inspections_skipped += 1;
            return;
        };
        tally.inspections += 1;
        self.idle[s] -= 1;
        self.busy -= t;
        let a = plan.stations[s].altitude_m;
        let up = a <= centre;
        let first = if up { 0 } else { p.inspect_bays - 1 };
        let start = t + plan.turnaround_s;
        let target = plan.bay_altitude_m[first];
        self.push_leg(plan, start, a, target, true, false);
        let travel = plan.leg_s(a, target, start);
        self.queue.push(
            start + travel,
            EventKind::InspectStep {
                station: s as u32,
                bay: first as u32,
                up,
                spares: p.inspection_spares,
            },
        );
    }

    /// An inspection step is finished at `t` (after any replacements): go on to the next bay
    /// of the sweep, or home.
    pub fn on_inspect_step_done(
        &mut self,
        plan: &RepairPlan,
        station: u32,
        bay: u32,
        up: bool,
        spares: u32,
        t: f64,
    ) {
        let k = plan.preventive.as_ref().map_or(0, |p| p.inspect_bays);
        let j = bay as usize;
        let next = if up {
            (j + 1 < k).then_some(j + 1)
        } else {
            j.checked_sub(1)
        };
        match next {
            Some(nj) => {
                let (a, b) = (plan.bay_altitude_m[j], plan.bay_altitude_m[nj]);
                self.push_leg(plan, t, a, b, false, false);
                self.queue.push(
                    t + plan.leg_s(a, b, t),
                    EventKind::InspectStep {
                        station,
                        bay: nj as u32,
                        up,
                        spares,
                    },
                );
            }
            None => self.on_splice_done(plan, station, bay, t),
        }
    }

    /// The climber is home and free.
    pub fn on_return(&mut self, station: u32, t: f64) {
        self.advance_area(t);
        self.idle[station as usize] += 1;
        self.busy += t;
    }

    /// A delivery arrived.
    pub fn on_resupply(&mut self, plan: &RepairPlan, station: u32, t: f64) {
        let s = station as usize;
        match plan.resupply {
            Resupply::Periodic { interval_s, batch } => {
                self.stock[s] = self.stock[s].saturating_add(batch);
                self.add_link_stock(plan, s);
                self.queue
                    .push(t + interval_s, EventKind::Resupply { station });
            }
            Resupply::ReorderPoint { batch, .. } => {
                self.stock[s] = self.stock[s].saturating_add(batch);
                self.add_link_stock(plan, s);
                self.order_outstanding[s] = false;
            }
            Resupply::None => {}
        }
    }

    /// A delivery to station `s` brings its spare cross-links too.
    fn add_link_stock(&mut self, plan: &RepairPlan, s: usize) {
        if let Some(x) = plan.cross_link.as_ref() {
            self.link_stock[s] = self.link_stock[s].saturating_add(x.resupply_batch);
        }
    }

    /// Close the history at `end_s`: count open waits and busy climbers up to the end, and add
    /// the per-history demand and stock-out scores.
    pub fn finish(&mut self, plan: &RepairPlan, end_s: f64, tally: &mut RepairTally) {
        self.advance_area(end_s);
        let waiting_now = f64::from(self.waiting);
        let wait_sum = self.wait_sum + waiting_now * end_s;
        let busy_now: u32 = plan
            .stations
            .iter()
            .enumerate()
            .map(|(i, _)| plan.servers(i) - self.idle[i].min(plan.servers(i)))
            .sum();
        let busy = self.busy + f64::from(busy_now) * end_s;
        tally.queue_wait_sum_s += wait_sum.max(0.0).round() as u64;
        tally.queue_area_s += self.area.max(0.0).round() as u64;
        tally.queue_area_no_climber_s +=
            self.area_no_climber.clamp(0.0, self.area.max(0.0)).round() as u64;
        tally.busy_s += busy.max(0.0).round() as u64;
        tally.trip_travel_sum_s += self.trip_travel.round() as u64;
        tally.trip_wait_for_light_sum_s += self.trip_light_wait.round() as u64;
        tally.trip_splice_sum_s += self.trip_splice.round() as u64;
        let link_waits = self.link_wait_sum + self.link_jobs.len() as f64 * end_s;
        tally.cross_link_wait_sum_s += link_waits.max(0.0).round() as u64;
        for s in 0..plan.stations.len() {
            if self.stockout_seen[s] {
                tally.stockout_histories[s] += 1;
            }
            let row = &self.demand[s * self.intervals..(s + 1) * self.intervals];
            let total: u32 = row.iter().sum();
            tally.demand_mission[s][(total as usize).min(DEMAND_MAX)] += 1;
            let mut max = 0;
            for &d in row {
                tally.demand_interval[s][(d as usize).min(DEMAND_MAX)] += 1;
                max = max.max(d);
            }
            tally.demand_max_interval[s][(max as usize).min(DEMAND_MAX)] += 1;
        }
    }

    /// Consistency of the fleet (for the engine's strict invariant checks): no station has more
    /// idle climbers than it owns, waiting jobs hold segments, the waiting count matches them,
    /// and every pending event lies in the future of the last one handled.
    pub fn check(&self, plan: &RepairPlan) -> Option<&'static str> {
        for i in 0..plan.stations.len() {
            if self.idle[i] > plan.servers(i) {
                return Some("more idle climbers (splice positions) than a station owns");
            }
        }
        if self.jobs.iter().any(|j| j.segments == 0) {
            return Some("an empty repair job is waiting");
        }
        let waiting: u32 = self.jobs.iter().map(|j| j.segments).sum::<u32>()
            + self.loop_jobs.iter().map(|q| q.len() as u32).sum::<u32>();
        if waiting != self.waiting {
            return Some("waiting-segment count out of step with the jobs");
        }
        if self
            .queue
            .next_time()
            .is_some_and(|t| t.is_nan() || t < self.area_t)
        {
            return Some("an event is scheduled in the past");
        }
        None
    }

    /// Whether a job waiting for stock exists for `bay`.
    pub fn bay_waits_for_stock(&self, bay: u32) -> bool {
        self.jobs.iter().any(|j| j.bay == bay && j.stockout)
            || self
                .loop_jobs
                .iter()
                .any(|q| q.iter().any(|j| j.bay == bay && j.stockout))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Events leave the queue earliest first, ties in the order they were scheduled (the
    /// history must not depend on the heap's internal order).
    #[test]
    fn queue_is_by_time_then_insertion() {
        let mut q = EventQueue::default();
        q.push(5.0, EventKind::Detect { bay: 1 });
        q.push(2.0, EventKind::Detect { bay: 2 });
        q.push(5.0, EventKind::Detect { bay: 3 });
        q.push(2.0, EventKind::Detect { bay: 4 });
        assert_eq!(q.next_time(), Some(2.0));
        let order: Vec<u32> = std::iter::from_fn(|| q.pop())
            .map(|e| match e.kind {
                EventKind::Detect { bay } => bay,
                _ => unreachable!(),
            })
            .collect();
        assert_eq!(order, vec![2, 4, 1, 3]);
        assert_eq!(q.next_time(), None);
    }

    /// Time-to-splice bins: 100 per decade from 0.01 h (about 2.3 % wide, 10^(1/100) - 1);
    /// a bin's geometric centre falls back into that bin; out-of-range times are clamped.
    #[test]
    fn splice_bins_are_logarithmic() {
        assert!((10f64.powf(0.01) - 1.0 - 0.0233).abs() < 1e-4);
        assert_eq!(RepairTally::splice_bin(0.0), 0);
        assert_eq!(RepairTally::splice_bin(f64::NAN), 0);
        // Just inside a decade boundary (exact decades are at the mercy of log10's last bit).
        assert_eq!(RepairTally::splice_bin(0.1001), 100);
        assert_eq!(RepairTally::splice_bin(1.001), 200);
        let last = SPLICE_BINS_PER_DECADE * SPLICE_HIST_DECADES - 1;
        assert_eq!(RepairTally::splice_bin(1e9), last);
        for bin in [0, 1, 57, 200, 699] {
            let c = RepairTally::splice_bin_centre_hours(bin);
            assert_eq!(RepairTally::splice_bin(c), bin, "bin {bin}, centre {c} h");
        }
    }

    /// Repair tallies add count by count in either order.
    #[test]
    fn repair_tallies_merge_by_adding() {
        let mut a = RepairTally::new(2, 3);
        a.splices = 4;
        a.splices_by_year[1] = 4;
        a.stockout_histories[1] = 1;
        let mut b = RepairTally::new(2, 3);
        b.splices = 1;
        b.splices_by_year[2] = 1;
        b.time_to_splice_hist[200] = 1;
        let mut ab = a.clone();
        ab.merge(&b);
        let mut ba = b.clone();
        ba.merge(&a);
        assert_eq!(ab, ba);
        assert_eq!(ab.splices, 5);
        assert_eq!(ab.splices_by_year, vec![0, 4, 1]);
        assert_eq!(ab.stockout_histories, vec![0, 1]);
    }

    /// A reset fleet is at the mission start of the demo: every station's initial stock and
    /// climbers at home, nothing waiting, the first resupply (if periodic) scheduled.
    #[test]
    fn reset_returns_the_fleet_to_the_mission_start() {
        let model = crate::model::Model::build(crate::scenario::demo()).unwrap();
        let r = model.scenario.repair.as_ref().unwrap();
        let plan = super::super::RepairPlan::new(r, &model.profile, model.scenario.run.mission_s);
        let mut f = Fleet::new(&plan, model.scenario.run.mission_s);
        f.reset(&plan);
        for (i, s) in plan.stations.iter().enumerate() {
            assert_eq!(f.stock(i as u32), s.initial_stock);
        }
        f.take_stock(&plan, 0, 1, 10.0);
        f.reset(&plan);
        assert_eq!(f.stock(0), plan.stations[0].initial_stock);
        assert!(f.jobs().is_empty());
    }
}

//! Dispatch: which waiting repair job a free climber takes next.

use super::RepairPlan;

/// Detected cut segments of one bay waiting for a climber.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Job {
    /// Bay index.
    pub bay: u32,
    /// Segments waiting in this job.
    pub segments: u32,
    /// Time the job was created (first detection), s.
    pub detected_s: f64,
    /// Cut segments in the bay now (kept current by the fleet).
    pub cuts_in_bay: u32,
    /// This job has waited for stock.
    pub stockout: bool,
}

/// A rule choosing the next job. Implementations must be cheap and deterministic.
pub trait DispatchPolicy: Send + Sync + std::fmt::Debug {
    /// Index into `jobs` (non-empty) of the job to serve next.
    fn choose(&self, jobs: &[Job], plan: &RepairPlan) -> usize;
}

/// Most-endangered bay first: most cut segments, then lowest intact margin, then earliest.
#[derive(Clone, Copy, Debug, Default)]
pub struct MostEndangered;

impl DispatchPolicy for MostEndangered {
    fn choose(&self, jobs: &[Job], plan: &RepairPlan) -> usize {
        let mut best = 0;
        for (i, j) in jobs.iter().enumerate().skip(1) {
            let b = &jobs[best];
            let better = j.cuts_in_bay > b.cuts_in_bay
                || (j.cuts_in_bay == b.cuts_in_bay
                    && (plan.bay_margin[j.bay as usize] < plan.bay_margin[b.bay as usize]
                        || (plan.bay_margin[j.bay as usize] == plan.bay_margin[b.bay as usize]
                            && j.detected_s < b.detected_s)));
            if better {
                best = i;
            }
        }
        best
    }
}

/// First come, first served (by detection time).
#[derive(Clone, Copy, Debug, Default)]
pub struct FirstCome;

impl DispatchPolicy for FirstCome {
    fn choose(&self, jobs: &[Job], _plan: &RepairPlan) -> usize {
        let mut best = 0;
        for (i, j) in jobs.iter().enumerate().skip(1) {
            if j.detected_s < jobs[best].detected_s {
                best = i;
            }
        }
        best
    }
}

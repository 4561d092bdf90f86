//! # tether-risk
//!
//! Micrometeoroid severance risk for long multi-ribbon space tethers: strikes sampled from a
//! published meteoroid flux model along the real Earth–Moon geometry, ribbon damage, load
//! redistribution across cross-links, and repair logistics, with confidence intervals.
//!
//! Results are engineering estimates for trade studies; they do not replace qualified review,
//! the applicable space-engineering standards, or licensed practice.
#![deny(missing_docs)]

pub mod analytic;
pub mod damage;
pub mod environment;
pub mod orbit;
pub mod stats;
pub mod structure;

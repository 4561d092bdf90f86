//! # tether-risk
//!
//! Micrometeoroid severance risk for long multi-ribbon space tethers: strikes sampled from a
//! published meteoroid flux model along the real Earth–Moon geometry, ribbon damage, load
//! redistribution across cross-links, and repair logistics, with confidence intervals.
//!
//! Results are engineering estimates for trade studies; they do not replace qualified review,
//! the applicable space-engineering standards, or licensed practice.
#![deny(missing_docs)]

/// This crate's version, recorded in every output.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");

/// The engineering caution carried by every report and the README.
pub const CAUTION: &str =
    "Caution: results are engineering estimates for trade studies. They do not replace \
qualified review, the applicable space-engineering standards, or licensed practice.";

pub mod analytic;
pub mod damage;
pub mod engine;
pub mod environment;
pub mod model;
pub mod orbit;
pub mod repair;
pub mod report;
pub mod scenario;
pub mod stats;
pub mod structure;
pub mod sweep;

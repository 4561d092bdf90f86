//! # tether-risk
//!
//! Micrometeoroid severance risk for long multi-ribbon space tethers: strikes sampled from a
//! published meteoroid flux model along the real Earth–Moon geometry, ribbon damage, load
//! redistribution across cross-links, and repair logistics, with confidence intervals.
//!
//! Results are engineering estimates for trade studies; they do not replace qualified review,
//! the applicable space-engineering standards, or licensed practice.
//!
//! # Example
//!
//! The built-in demo scenario, 2000 histories of the Monte Carlo, the loss probability with
//! its exact (Clopper–Pearson) interval:
//!
//! ```
//! use tether_risk::engine::{Engine, RunChoices, RunSummary};
//! use tether_risk::model::Model;
//! use tether_risk::scenario;
//!
//! // Scenario (validated, SI units) -> model (per-bay rates, tensions, critical holes).
//! let model = Model::build(scenario::demo())?;
//! // Run settings: 2000 histories, the scenario's seed, the on-demand sampler, plain
//! // Monte Carlo; checked once, as the command line checks them.
//! let run = &model.scenario.run;
//! let settings = RunChoices { histories: Some(2000), ..Default::default() }
//!     .resolve(run.histories, run.seed)?;
//! let engine = Engine::for_settings(&model, &settings)?;
//! // Fixed batches in parallel (0 threads: one per core); same bits at any thread count.
//! let tally = engine.run(&settings.options(0), &|_| {})?;
//! let summary = RunSummary::from_tally(
//!     &engine,
//!     tally,
//!     settings.histories,
//!     settings.seed,
//!     None,
//!     settings.stockout_target,
//! );
//! let p = &summary.loss_probability;
//! let (low, high) = p.interval().expect("a plain run always has an interval");
//! assert!(low <= p.estimate && p.estimate <= high && high <= 1.0);
//! println!("P(loss over the mission) = {:.2e} ({low:.2e} .. {high:.2e})", p.estimate);
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```
//!
//! # Modules
//!
//! From the input to the output: [`scenario`] (the input, validated to SI), the model chain
//! [`orbit`] -> [`environment`], [`structure`] -> [`damage`], [`repair`], its meeting point
//! [`model`], the Monte Carlo [`engine`], the fast answers of [`analytic`], the generic
//! [`stats`], trade studies in [`sweep`], and the writers of [`report`]. Imports point one
//! way only, from higher layers to lower ones (`tests/module_graph.rs` lists the layers and
//! checks every `crate::` path).
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
pub mod units;

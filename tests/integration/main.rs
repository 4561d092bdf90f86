//! Integration tests: they run the real `tether-risk` binary in a temporary folder.
//!
//! The statistical tier lives in `engine_validation`, `ondemand` and `hole_rate`: samplers
//! against their exact laws (goodness of fit at [`util::STAT_ALPHA`], fixed seeds, its note on
//! the false-alarm rate) and Monte Carlo estimates against closed forms (tolerances from the
//! estimator's standard error). Run it alone with
//! `cargo test --release --test integration -- engine_validation ondemand hole_rate`.

mod util;

mod bad_input;
mod commands;
mod compare;
mod conditioned;
mod count_only;
mod cross_links;
mod damage_memory;
mod determinism;
mod engine_validation;
mod estimate;
mod hole_rate;
mod issue13;
mod issue14_reports;
mod issue15;
mod looped;
mod ondemand;
mod physics;
mod policy;
mod rare_event;
mod repair;
mod report;
mod robust;
mod sensitivity;
mod shade;
mod streams;
mod surface_run;
mod sweep;

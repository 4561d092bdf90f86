//! Integration tests: they run the real `tether-risk` binary in a temporary folder.

mod util;

mod bad_input;
mod commands;
mod compare;
mod damage_memory;
mod determinism;
mod engine_validation;
mod estimate;
mod hole_rate;
mod issue13;
mod issue14_reports;
mod ondemand;
mod physics;
mod policy;
mod rare_event;
mod repair;
mod report;
mod robust;
mod sensitivity;
mod streams;
mod sweep;

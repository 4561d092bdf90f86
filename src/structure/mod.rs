//! The tether structure: ribbons, bays, cross-links, tension profile and load sharing.

pub mod load_sharing;

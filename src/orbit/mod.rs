//! orbit (to be written).

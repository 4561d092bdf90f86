//! stats (to be written).

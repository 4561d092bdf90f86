//! environment (to be written).

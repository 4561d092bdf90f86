//! structure (to be written).

//! damage (to be written).

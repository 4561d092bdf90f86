//! analytic (to be written).

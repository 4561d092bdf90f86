//! Random streams: one generator per (purpose, history).
//!
//! Each stream is seeded by mixing (master seed, purpose tag, global history index) through the
//! SplitMix64 finaliser (Steele, Lea & Flood 2014, "Fast splittable pseudorandom number
//! generators", OOPSLA) into a 128-bit state for `Pcg64Mcg` (O'Neill 2014, PCG). Raw indices are
//! never used as PCG streams: rand_pcg documents that nearby stream values can be correlated.
//! Streams never depend on thread ids, batch sizes or the clock, so any split of the work gives
//! the same numbers.

use rand_pcg::Pcg64Mcg;

/// What a stream is used for. Separate purposes give common random numbers: two scenarios that
/// differ only in repair settings see identical strikes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[repr(u64)]
pub enum Purpose {
    /// Strike times, bays, ribbons, positions, sizes, speeds and angles.
    Strikes = 0x5354_524b,
    /// Any randomness in repair logistics.
    Repair = 0x5245_5041,
    /// Analysis (bootstrap and the like).
    Analysis = 0x414e_4c59,
    /// On-demand sampler: draws inside bays that hold state (worst holes brought up to date,
    /// cut widths, cuts on those bays), kept apart so the untouched-bay cut process on the
    /// strike stream does not depend on them.
    Damage = 0x444d_4745,
    /// Extra strikes of the rare-event estimator (importance sampling), kept apart so the
    /// natural strikes stay identical with and without it.
    RareEvent = 0x4249_4153,
    /// Meteor streams: every-strike, the stream strikes; on-demand, the stream cut process of
    /// untouched bays (kept apart so the background draws stay identical with and without
    /// streams).
    Streams = 0x5354_524d,
    /// Cross-link hits (on-demand): the cut process of the interior cross-links, kept apart so
    /// every other draw stays identical with and without cross-link hits.
    CrossLinks = 0x584c_4e4b,
}

/// SplitMix64 finaliser: a bijective 64-bit mixer with full avalanche.
pub fn splitmix64(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9e37_79b9_7f4a_7c15);
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// The generator for one (purpose, history) of a run with master seed `seed`.
pub fn stream(seed: u64, purpose: Purpose, history: u64) -> Pcg64Mcg {
    let a = splitmix64(seed ^ splitmix64(purpose as u64));
    let b = splitmix64(a ^ splitmix64(history.wrapping_add(0x6a09_e667_f3bc_c909)));
    let c = splitmix64(b ^ 0x243f_6a88_85a3_08d3);
    Pcg64Mcg::new((u128::from(b) << 64) | u128::from(c))
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};

    #[test]
    fn pcg_reference_vector() {
        // Value-stability vector recorded for rand_pcg 0.10 (see ECOSYSTEM notes): guards the
        // pinned generator against silent changes.
        let mut r = Pcg64Mcg::seed_from_u64(0);
        assert_eq!(r.next_u64(), 0x5603_f242_407d_eca2);
    }

    #[test]
    fn streams_differ_by_purpose_history_and_seed() {
        let x = |s, p, h| stream(s, p, h).next_u64();
        let base = x(1, Purpose::Strikes, 0);
        assert_ne!(base, x(1, Purpose::Repair, 0));
        assert_ne!(base, x(1, Purpose::Strikes, 1));
        assert_ne!(base, x(2, Purpose::Strikes, 0));
        assert_eq!(base, x(1, Purpose::Strikes, 0));
        // Extreme seeds and indices work.
        let _ = x(0, Purpose::Strikes, u64::MAX);
        let _ = x(u64::MAX, Purpose::Analysis, 0);
    }
}

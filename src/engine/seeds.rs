//! Random streams: one generator per (replication, stream, purpose), seeded by
//! a splittable hash of the master seed. A stream is keyed by a hash of its
//! name, so changing one stream leaves every other stream's numbers as they
//! were (common random numbers across designs).
//!
//! The generator is Xoshiro256++ from `rand_xoshiro`, a named algorithm that
//! does not change between versions; `seed_from_u64` expands the 64-bit key
//! with SplitMix64.

use rand::SeedableRng;
use rand_xoshiro::Xoshiro256PlusPlus;

/// Purpose: arrival times (and idle times of finite sources).
pub const ARRIVALS: u64 = 1;
/// Purpose: holding times.
pub const HOLDING: u64 = 2;
/// Purpose: redial decisions and delays.
pub const RETRY: u64 = 3;
/// Purpose: patience of waiting callers.
pub const PATIENCE: u64 = 4;
/// Purpose: the calls in progress seated at time 0 (steady start): their
/// keys and residual holding times.
pub const INITIAL: u64 = 5;
/// Purpose: the day's forecast factor of a stream's rate (one draw per
/// replication, keyed by the stream or by the label of a shared factor).
/// A purpose of its own, so that no other stream's numbers move when a
/// scenario gains or loses uncertainty.
pub const FORECAST: u64 = 6;

/// SplitMix64's finaliser (Steele, Lea and Flood, 2014): a bijective mix of
/// 64 bits with good avalanche.
pub fn mix(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9e37_79b9_7f4a_7c15);
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// The generator of (`seed`, `replication`, stream key, `purpose`).
pub fn generator(seed: u64, replication: u64, stream_key: u64, purpose: u64) -> Xoshiro256PlusPlus {
    let key = mix(mix(mix(mix(seed) ^ replication) ^ stream_key) ^ purpose);
    Xoshiro256PlusPlus::seed_from_u64(key)
}

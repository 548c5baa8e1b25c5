//! Random streams. Every object owns its streams, derived from (run seed, object id,
//! purpose); draws for one object never depend on any other object, so results are the
//! same whatever the thread count, chunking or sharding.

use rand_pcg::Pcg64;

/// What a stream is used for; each purpose gets an independent stream per object.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[repr(u64)]
pub enum Purpose {
    /// Drawing the object's elements and properties (`seine draw`).
    Draw = 1,
    /// Per-visit detection draws (`seine observe`).
    Observe = 2,
    /// Cloning particles and redrawing angles (clones, detectability, bias maps).
    Clone = 3,
    /// Anything a later analysis needs (synthetic catalogues and the like).
    Analysis = 4,
    /// Measured positions of detections (`observe --fit-orbits`).
    Astrometry = 5,
    /// A bias-map or detectability trial's a, e, i drawn from the catalogue's fit errors.
    FitErrors = 6,
}

/// SplitMix64 finaliser (Steele, Lea & Flood 2014): a bijective mixer of 64-bit words.
#[inline]
pub fn splitmix64(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// The stream of object `id` for `purpose` in a run with `seed`.
pub fn object_stream(seed: u64, id: i64, purpose: Purpose) -> Pcg64 {
    let a = splitmix64(seed ^ splitmix64(purpose as u64));
    let b = splitmix64(a ^ splitmix64(id as u64));
    pcg_from(a, b)
}

/// A PCG64 with state (a, b) and a stream selector mixed from them.
fn pcg_from(a: u64, b: u64) -> Pcg64 {
    let c = splitmix64(b ^ 0x5EED_5EED_5EED_5EED);
    let state = ((a as u128) << 64) | b as u128;
    let stream = ((c as u128) << 64) | splitmix64(c) as u128;
    Pcg64::new(state, stream)
}

/// A stream made from a 64-bit key drawn from another stream: how one object's stream
/// hands each survey a stream of its own (see `engine::pipeline`), so that where one survey
/// stops drawing never moves the draws of another.
pub fn substream(key: u64) -> Pcg64 {
    let a = splitmix64(key ^ 0x0B5E_4E00_0B5E_4E00);
    pcg_from(a, splitmix64(a))
}

/// A stream for run-level draws that belong to no object (e.g. weather in a plan).
pub fn run_stream(seed: u64, purpose: Purpose, index: u64) -> Pcg64 {
    object_stream(seed ^ 0xA5A5_A5A5_0000_0000, index as i64, purpose)
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::RngExt;

    #[test]
    fn streams_differ_by_id_and_purpose_and_repeat() {
        let x: f64 = object_stream(7, 1, Purpose::Draw).random();
        let y: f64 = object_stream(7, 2, Purpose::Draw).random();
        let z: f64 = object_stream(7, 1, Purpose::Observe).random();
        let again: f64 = object_stream(7, 1, Purpose::Draw).random();
        assert!(x != y && x != z);
        assert_eq!(x, again);
    }

    #[test]
    fn substreams_differ_by_key_and_repeat() {
        let x: u64 = substream(1).random();
        let y: u64 = substream(2).random();
        assert!(x != y);
        assert_eq!(x, substream(1).random::<u64>());
    }
}

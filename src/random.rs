//! The one derivation of seeded random streams: stream number `stream` of
//! the ChaCha generator with 8 rounds (Bernstein 2008, "ChaCha, a variant of
//! Salsa20") from `rand_chacha`, its 256-bit key spread from the 64-bit seed
//! by SplitMix64 (Steele, Lea & Flood 2014, "Fast splittable pseudorandom
//! number generators", OOPSLA). Simulation draws its data and each Monte
//! Carlo chunk from streams of its seed; the bootstrap draws replicate `i`
//! from stream `i`.

use rand_chacha::ChaCha8Rng;
use rand_chacha::rand_core::SeedableRng;

/// SplitMix64's output function applied to successive states.
fn splitmix64(state: &mut u64) -> u64 {
    *state = state.wrapping_add(0x9e37_79b9_7f4a_7c15);
    let mut z = *state;
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// The random stream `stream` of `seed`.
pub fn stream_rng(seed: u64, stream: u64) -> ChaCha8Rng {
    let mut key = [0u8; 32];
    let mut state = seed;
    for chunk in key.chunks_exact_mut(8) {
        chunk.copy_from_slice(&splitmix64(&mut state).to_le_bytes());
    }
    let mut rng = ChaCha8Rng::from_seed(key);
    rng.set_stream(stream);
    rng
}

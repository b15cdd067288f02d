//! Seeded randomness: one `ChaCha8Rng` per component, derived from the master seed and the
//! component's name, and the FNV-1a 64 checksum used for seeds and for the manifest.

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;

/// The master seed of the demo coastline. Changing it changes every generated file.
pub const MASTER_SEED: u64 = 20_261_115;

/// FNV-1a 64-bit hash of `bytes` (a fast non-cryptographic checksum; Fowler, Noll and Vo).
pub fn fnv1a64(bytes: &[u8]) -> u64 {
    const OFFSET_BASIS: u64 = 0xcbf2_9ce4_8422_2325;
    const PRIME: u64 = 0x0000_0100_0000_01b3;
    let mut hash = OFFSET_BASIS;
    for &byte in bytes {
        hash ^= u64::from(byte);
        hash = hash.wrapping_mul(PRIME);
    }
    hash
}

/// A random stream for one named component: ChaCha8 keyed by the master seed and the name.
///
/// The 32-byte ChaCha key is the master seed (little-endian) followed by the FNV-1a 64 hash of
/// the name, then both again with their bits inverted, so distinct names give unrelated streams.
pub fn component_rng(master_seed: u64, component: &str) -> ChaCha8Rng {
    let name_hash = fnv1a64(component.as_bytes());
    let mut key = [0u8; 32];
    key[0..8].copy_from_slice(&master_seed.to_le_bytes());
    key[8..16].copy_from_slice(&name_hash.to_le_bytes());
    key[16..24].copy_from_slice(&(!master_seed).to_le_bytes());
    key[24..32].copy_from_slice(&(!name_hash).to_le_bytes());
    ChaCha8Rng::from_seed(key)
}

/// Replicate `replicate` of a named component: the component's ChaCha8 key with the
/// replicate number as the ChaCha stream (nonce), so replicates are independent and each can
/// be drawn on its own, in any order.
pub fn replicate_rng(master_seed: u64, component: &str, replicate: u64) -> ChaCha8Rng {
    let mut rng = component_rng(master_seed, component);
    rng.set_stream(replicate);
    rng
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::Rng;

    /// FNV-1a 64 test vectors from the algorithm's reference page (Fowler, Noll, Vo:
    /// "FNV hash", isthe.com/chongo/tech/comp/fnv): "" and "a" (recalled from memory).
    #[test]
    fn fnv1a64_matches_reference_vectors() {
        assert_eq!(fnv1a64(b""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a64(b"a"), 0xaf63_dc4c_8601_ec8c);
    }

    #[test]
    fn component_streams_are_repeatable_and_distinct() {
        let a1: u64 = component_rng(1, "enso").r#gen();
        let a2: u64 = component_rng(1, "enso").r#gen();
        let b: u64 = component_rng(1, "rmm").r#gen();
        let c: u64 = component_rng(2, "enso").r#gen();
        assert_eq!(a1, a2);
        assert_ne!(a1, b);
        assert_ne!(a1, c);
        let r0: u64 = replicate_rng(1, "enso", 0).r#gen();
        let r1: u64 = replicate_rng(1, "enso", 1).r#gen();
        assert_eq!(r0, a1, "replicate 0 is the component's own stream");
        assert_ne!(r0, r1);
        assert_eq!(r1, replicate_rng(1, "enso", 1).r#gen::<u64>());
    }
}

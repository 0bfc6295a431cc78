//! Seed derivation: every random draw is keyed by what it is for, never by when it happens.
//!
//! A [`Key`] is the SHA-256 of a labelled list of parts (study seed, replicate, target, a set of
//! columns, ...). The draw for row `i` under a key comes from a ChaCha20 stream selected by `i`, so
//! the value does not depend on evaluation order, thread count or how the work is split.

use rand_chacha::ChaCha20Rng;
use rand_core::{Rng, SeedableRng};
use sha2::{Digest, Sha256};

/// A 256-bit key for one family of random draws.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Key([u8; 32]);

impl Key {
    /// Starts a key from a purpose label and the study seed; finish it with [`KeyBuilder::finish`].
    #[allow(clippy::new_ret_no_self)] // a key is always built from parts; the builder is the point
    pub fn new(purpose: &str, seed: u64) -> KeyBuilder {
        let mut hasher = Sha256::new();
        hasher.update(b"forebear-key-v1");
        let builder = KeyBuilder { hasher };
        builder.text(purpose).number(seed)
    }

    /// The random stream for one row (or any other index) under this key.
    pub fn stream(&self, index: u64) -> ChaCha20Rng {
        let mut rng = ChaCha20Rng::from_seed(self.0);
        rng.set_stream(index);
        rng
    }

    /// The same random stream as [`Key::stream`], computed one ChaCha20 block at a time: for the
    /// few draws of a tie-break, where [`Key::stream`] would compute four blocks (256 bytes) and
    /// set up a generator to use the first eight bytes. Every value equals that of
    /// [`Key::stream`] at the same position (`tests::short_streams_equal_full_streams`).
    pub fn short_stream(&self, index: u64) -> ShortStream {
        let mut key = [0u32; 8];
        for (word, bytes) in key.iter_mut().zip(self.0.chunks_exact(4)) {
            *word = u32::from_le_bytes(bytes.try_into().expect("four bytes"));
        }
        ShortStream {
            key,
            nonce: index,
            block: 0,
            words: [0; 16],
            used: 16,
        }
    }

    /// Raw key bytes.
    pub fn bytes(&self) -> &[u8; 32] {
        &self.0
    }
}

/// The ChaCha20 block function (Bernstein, "ChaCha, a variant of Salsa20", 2008; the quarter
/// round and word layout as in RFC 8439, section 2.3): 20 rounds over the constants, the 256-bit
/// key, a 64-bit block counter (words 12–13) and a 64-bit nonce (words 14–15), which is the layout
/// `rand_chacha` uses for its block position and stream number.
fn chacha20_block(key: &[u32; 8], block: u64, nonce: u64) -> [u32; 16] {
    #[inline(always)]
    fn quarter(s: &mut [u32; 16], a: usize, b: usize, c: usize, d: usize) {
        s[a] = s[a].wrapping_add(s[b]);
        s[d] = (s[d] ^ s[a]).rotate_left(16);
        s[c] = s[c].wrapping_add(s[d]);
        s[b] = (s[b] ^ s[c]).rotate_left(12);
        s[a] = s[a].wrapping_add(s[b]);
        s[d] = (s[d] ^ s[a]).rotate_left(8);
        s[c] = s[c].wrapping_add(s[d]);
        s[b] = (s[b] ^ s[c]).rotate_left(7);
    }
    let input: [u32; 16] = [
        0x6170_7865,
        0x3320_646e,
        0x7962_2d32,
        0x6b20_6574,
        key[0],
        key[1],
        key[2],
        key[3],
        key[4],
        key[5],
        key[6],
        key[7],
        block as u32,
        (block >> 32) as u32,
        nonce as u32,
        (nonce >> 32) as u32,
    ];
    let mut s = input;
    for _ in 0..10 {
        quarter(&mut s, 0, 4, 8, 12);
        quarter(&mut s, 1, 5, 9, 13);
        quarter(&mut s, 2, 6, 10, 14);
        quarter(&mut s, 3, 7, 11, 15);
        quarter(&mut s, 0, 5, 10, 15);
        quarter(&mut s, 1, 6, 11, 12);
        quarter(&mut s, 2, 7, 8, 13);
        quarter(&mut s, 3, 4, 9, 14);
    }
    for (word, start) in s.iter_mut().zip(input) {
        *word = word.wrapping_add(start);
    }
    s
}

/// The keyed stream of one index, one ChaCha20 block at a time (see [`Key::short_stream`]).
pub struct ShortStream {
    key: [u32; 8],
    nonce: u64,
    block: u64,
    words: [u32; 16],
    /// Words of `words` already returned (16: none left).
    used: usize,
}

impl ShortStream {
    fn next_word(&mut self) -> u32 {
        if self.used == 16 {
            self.words = chacha20_block(&self.key, self.block, self.nonce);
            self.block = self.block.wrapping_add(1);
            self.used = 0;
        }
        self.used += 1;
        self.words[self.used - 1]
    }
}

impl rand_core::TryRng for ShortStream {
    type Error = std::convert::Infallible;

    fn try_next_u32(&mut self) -> Result<u32, Self::Error> {
        Ok(self.next_word())
    }

    /// Two words, the first the low half (as `rand_core`'s block generators combine them).
    fn try_next_u64(&mut self) -> Result<u64, Self::Error> {
        let low = self.next_word();
        let high = self.next_word();
        Ok((u64::from(high) << 32) | u64::from(low))
    }

    fn try_fill_bytes(&mut self, dst: &mut [u8]) -> Result<(), Self::Error> {
        for chunk in dst.chunks_mut(4) {
            let word = self.next_word().to_le_bytes();
            chunk.copy_from_slice(&word[..chunk.len()]);
        }
        Ok(())
    }
}

/// Accumulates the parts of a key. Each part is length-prefixed so that no two different part
/// lists hash the same bytes.
pub struct KeyBuilder {
    hasher: Sha256,
}

impl KeyBuilder {
    /// Adds a text part.
    pub fn text(mut self, part: &str) -> Self {
        self.hasher.update(b"t");
        self.hasher.update((part.len() as u64).to_le_bytes());
        self.hasher.update(part.as_bytes());
        self
    }

    /// Adds an integer part.
    pub fn number(mut self, part: u64) -> Self {
        self.hasher.update(b"n");
        self.hasher.update(part.to_le_bytes());
        self
    }

    /// Adds a set of names: sorted first, so that the key does not depend on insertion order.
    pub fn set<S: AsRef<str>>(mut self, parts: &[S]) -> Self {
        let mut sorted: Vec<&str> = parts.iter().map(AsRef::as_ref).collect();
        sorted.sort_unstable();
        sorted.dedup();
        self.hasher.update(b"s");
        self.hasher.update((sorted.len() as u64).to_le_bytes());
        for part in sorted {
            self = self.text(part);
        }
        self
    }

    /// Finishes the key.
    pub fn finish(self) -> Key {
        Key(self.hasher.finalize().into())
    }
}

/// A uniform integer in `0..bound` without modulo bias (rejection from the top of the u64 range).
///
/// Written here rather than taken from a distribution crate so that the mapping from random bits to
/// choices can never change under a dependency upgrade: the digest promise depends on it.
pub fn uniform_below(rng: &mut impl Rng, bound: u64) -> u64 {
    assert!(bound > 0, "uniform_below needs a positive bound");
    let zone = u64::MAX - (u64::MAX % bound);
    loop {
        let draw = rng.next_u64();
        if draw < zone {
            return draw % bound;
        }
    }
}

/// A uniform integer in `0..bound` from 32-bit draws without modulo bias and, almost always,
/// without a division: Lemire's multiply-and-reject method ("Fast random integer generation in an
/// interval", ACM Transactions on Modeling and Computer Simulation 29(1), 2019, Algorithm 5). The
/// 64-bit product x·bound of a draw x splits into the result (high half) and a remainder (low
/// half); draws whose remainder is below 2^32 mod bound are rejected, which leaves exactly
/// ⌊2^32 / bound⌋ accepted draws for every result.
pub fn uniform_below_u32(rng: &mut impl Rng, bound: u32) -> u32 {
    assert!(bound > 0, "uniform_below_u32 needs a positive bound");
    let mut product = u64::from(rng.next_u32()) * u64::from(bound);
    if (product as u32) < bound {
        let threshold = bound.wrapping_neg() % bound;
        while (product as u32) < threshold {
            product = u64::from(rng.next_u32()) * u64::from(bound);
        }
    }
    (product >> 32) as u32
}

/// A uniform double in [0, 1) with 53 random bits.
pub fn unit_interval(rng: &mut impl Rng) -> f64 {
    (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

/// A standard normal draw by the Box–Muller transform (Box and Muller, Ann. Math. Statist. 1958).
pub fn standard_normal(rng: &mut impl Rng) -> f64 {
    loop {
        let u1 = unit_interval(rng);
        if u1 > 0.0 {
            let u2 = unit_interval(rng);
            return (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn set_parts_do_not_depend_on_order() {
        let a = Key::new("nn", 7).set(&["b", "a", "c"]).finish();
        let b = Key::new("nn", 7).set(&["c", "b", "a"]).finish();
        assert_eq!(a, b);
        let c = Key::new("nn", 8).set(&["c", "b", "a"]).finish();
        assert_ne!(a, c);
    }

    #[test]
    fn length_prefix_separates_part_boundaries() {
        let a = Key::new("x", 1).text("ab").text("c").finish();
        let b = Key::new("x", 1).text("a").text("bc").finish();
        assert_ne!(a, b);
    }

    #[test]
    fn streams_are_reproducible_and_distinct() {
        let key = Key::new("test", 1).finish();
        let first: Vec<u64> = (0..4).map(|_| key.stream(5).next_u64()).collect();
        assert!(first.windows(2).all(|w| w[0] == w[1]));
        assert_ne!(key.stream(5).next_u64(), key.stream(6).next_u64());
    }

    /// RFC 8439, appendix A.1, test vector #1: the all-zero key, block counter and nonce (where
    /// the 64/64 and 32/96 splits of counter and nonce agree).
    #[test]
    fn chacha20_block_matches_rfc_8439_test_vector_1() {
        let block = chacha20_block(&[0; 8], 0, 0);
        let bytes: Vec<u8> = block.iter().flat_map(|w| w.to_le_bytes()).collect();
        let expected = "76b8e0ada0f13d90405d6ae55386bd28bdd219b8a08ded1aa836efcc8b770dc7\
                        da41597c5157488d7724e03fb8d84a376a43b8f41518a11cc387b669b2ee6586";
        let hex: String = bytes.iter().map(|b| format!("{b:02x}")).collect();
        assert_eq!(hex, expected);
    }

    /// Keyed short streams give `rand_chacha`'s values at every position, across block ends.
    #[test]
    fn short_streams_equal_full_streams() {
        for seed in 0..8u64 {
            let key = Key::new("short-stream", seed).number(seed * 7).finish();
            for index in [0u64, 1, 2, 15, 16, 1 << 20, u64::MAX - 1, u64::MAX] {
                let mut full = key.stream(index);
                let mut short = key.short_stream(index);
                for _ in 0..40 {
                    assert_eq!(
                        short.next_u64(),
                        full.next_u64(),
                        "seed {seed}, index {index}"
                    );
                }
                assert_eq!(short.next_u32(), full.next_u32());
                assert_eq!(short.next_u64(), full.next_u64());
                for bound in [2u64, 3, 7, 1000, u64::MAX] {
                    assert_eq!(
                        uniform_below(&mut short, bound),
                        uniform_below(&mut full, bound)
                    );
                }
            }
        }
    }

    /// A generator that returns the given 32-bit values in turn.
    struct Replay(Vec<u32>, usize);

    impl rand_core::TryRng for Replay {
        type Error = std::convert::Infallible;
        fn try_next_u32(&mut self) -> Result<u32, Self::Error> {
            self.1 += 1;
            Ok(self.0[self.1 - 1])
        }
        fn try_next_u64(&mut self) -> Result<u64, Self::Error> {
            unreachable!("uniform_below_u32 draws 32 bits at a time")
        }
        fn try_fill_bytes(&mut self, _: &mut [u8]) -> Result<(), Self::Error> {
            unreachable!()
        }
    }

    /// Lemire (2019): an accepted draw x gives ⌊x·bound / 2^32⌋; x is rejected exactly when
    /// x·bound mod 2^32 < 2^32 mod bound.
    #[test]
    fn lemire_draws_map_and_reject_as_the_paper_states() {
        for bound in [1u32, 2, 3, 7, 10, 1000, (1 << 31) + 1, u32::MAX] {
            let threshold = ((1u64 << 32) % u64::from(bound)) as u32;
            for x in [0u32, 1, 2, 12345, 1 << 31, u32::MAX - 1, u32::MAX] {
                let low = (u64::from(x) * u64::from(bound)) as u32;
                // u32::MAX is never rejected (its low half is 2^32 − bound ≥ the threshold)
                let mut replay = Replay(vec![x, u32::MAX], 0);
                let got = uniform_below_u32(&mut replay, bound);
                if low < threshold {
                    // rejected: the next draw, u32::MAX, gives bound − 1
                    assert_eq!((got, replay.1), (bound - 1, 2), "bound {bound}, x {x}");
                } else {
                    let expected = ((u64::from(x) * u64::from(bound)) >> 32) as u32;
                    assert_eq!((got, replay.1), (expected, 1), "bound {bound}, x {x}");
                }
            }
        }
    }

    /// Each result has exactly ⌊2^32 / bound⌋ accepted draws: counted here over all 2^32 draws
    /// scaled down, by counting for every result the draws x with ⌊x·b / 2^32⌋ = k whose low half
    /// is at or above the threshold, in closed form per k.
    #[test]
    fn lemire_accepts_equally_many_draws_for_every_result() {
        for bound in [3u64, 7, 10, 641, 6700417, (1 << 31) + 1] {
            let two32 = 1u64 << 32;
            let threshold = two32 % bound;
            let mut counts = Vec::new();
            for k in [0, 1, bound / 2, bound - 1] {
                // x with x·b in [k·2^32 + threshold, (k + 1)·2^32): accepted and giving k
                let low = (k * two32 + threshold).div_ceil(bound);
                let high = ((k + 1) * two32).div_ceil(bound);
                counts.push(high - low);
            }
            assert!(
                counts.iter().all(|&c| c == two32 / bound),
                "bound {bound}: {counts:?}"
            );
        }
    }

    #[test]
    fn uniform_below_stays_in_range() {
        let mut rng = Key::new("range", 3).finish().stream(0);
        for bound in 1..50u64 {
            for _ in 0..20 {
                assert!(uniform_below(&mut rng, bound) < bound);
            }
        }
    }
}

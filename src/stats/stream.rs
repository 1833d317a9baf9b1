//! Keyed counter-based random streams for the sampled statistics:
//! Philox4x64-10 (Salmon, Moraes, Dror & Shaw, "Parallel random numbers: as
//! easy as 1, 2, 3", SC 2011), and Lemire's bounded integers.
//!
//! Data flow: used only inside `stats`. A counter-based generator is a keyed
//! bijection of a counter: word j of a stream is a pure function of
//! (key, counter), so any permutation or resample can be drawn on any thread
//! in any order and still gets the same numbers. Each randomization
//! permutation and each bootstrap resample is its own stream
//! ([`Stream::new`]: key = (seed, purpose), counter = (block, number, 0, 0)),
//! so its draws depend on the seed, the purpose and its number only — never
//! on the thread count, on the chunking of the work, or on the other tests.

/// Philox multipliers and Weyl key increments for 4×64 words (Salmon et al.
/// 2011, table 2; the same constants as numpy's `Philox` bit generator,
/// which `tests/fixtures/stats/philox.json` checks against).
const MULTIPLIERS: [u64; 2] = [0xD2E7_470E_E14C_6C93, 0xCA5A_8263_9512_1157];
const KEY_INCREMENTS: [u64; 2] = [0x9E37_79B9_7F4A_7C15, 0xBB67_AE85_84CA_A73B];
/// Rounds: 10, the authors' recommended default (7 already pass BigCrush).
const ROUNDS: usize = 10;

/// One Philox4x64-10 block: four 64-bit words for `counter` under `key`.
#[inline]
pub(crate) fn philox4x64(counter: [u64; 4], key: [u64; 2]) -> [u64; 4] {
    let [mut c0, mut c1, mut c2, mut c3] = counter;
    let [mut k0, mut k1] = key;
    for round in 0..ROUNDS {
        if round > 0 {
            k0 = k0.wrapping_add(KEY_INCREMENTS[0]);
            k1 = k1.wrapping_add(KEY_INCREMENTS[1]);
        }
        let p0 = u128::from(MULTIPLIERS[0]) * u128::from(c0);
        let p1 = u128::from(MULTIPLIERS[1]) * u128::from(c2);
        let (hi0, lo0) = ((p0 >> 64) as u64, p0 as u64);
        let (hi1, lo1) = ((p1 >> 64) as u64, p1 as u64);
        (c0, c1, c2, c3) = (hi1 ^ c1 ^ k0, lo1, hi0 ^ c3 ^ k1, lo0);
    }
    [c0, c1, c2, c3]
}

/// What a stream is drawn for; part of the key, so the randomization test
/// and the bootstrap never share numbers.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Purpose {
    /// Sign flips of one randomization permutation.
    SignFlips = 1,
    /// Indices of one bootstrap resample.
    Resample = 2,
}

/// The words of stream (seed, purpose, number), in order: word j is word
/// j mod 4 of Philox4x64-10 with counter (⌊j/4⌋, number, 0, 0) and key
/// (seed, purpose). Read either as 64-bit words or as 32-bit halves (low
/// half first); a stream is read one way only.
pub(crate) struct Stream {
    key: [u64; 2],
    number: u64,
    block: u64,
    words: [u64; 4],
    /// 32-bit halves of `words` already used (0..=8).
    used: usize,
}

impl Stream {
    /// Stream `number` (permutation or resample number) of `purpose` under
    /// `seed`.
    pub(crate) fn new(seed: u64, purpose: Purpose, number: u64) -> Stream {
        Stream { key: [seed, purpose as u64], number, block: 0, words: [0; 4], used: 8 }
    }

    /// Computes the next block once every half of the current one is used.
    #[inline]
    fn refill(&mut self) {
        if self.used >= 8 {
            self.words = philox4x64([self.block, self.number, 0, 0], self.key);
            self.block = self.block.wrapping_add(1);
            self.used = 0;
        }
    }

    /// The next 64-bit word (an unused high half left by
    /// [`Stream::next_u32`] is skipped).
    #[inline]
    pub(crate) fn next_u64(&mut self) -> u64 {
        self.used = self.used.div_ceil(2) * 2;
        self.refill();
        let word = self.words.get(self.used / 2).copied().unwrap_or_default();
        self.used += 2;
        word
    }

    /// The next 32 bits: the low half of a word, then its high half.
    #[inline]
    pub(crate) fn next_u32(&mut self) -> u32 {
        self.refill();
        let word = self.words.get(self.used / 2).copied().unwrap_or_default();
        let half = (word >> (32 * (self.used % 2))) as u32;
        self.used += 1;
        half
    }

    /// A uniform integer in 0..`n` (`n` ≥ 1), exactly uniform: Lemire's
    /// multiply-and-reject ("Fast random integer generation in an interval",
    /// ACM TOMACS 29(1) 2019, algorithm 5) on 32-bit draws. A draw is
    /// rejected with probability below n / 2^32, and only then does the
    /// method compute a remainder.
    #[cfg(test)]
    fn below(&mut self, n: u32) -> u32 {
        debug_assert!(n > 0);
        let mut product = u64::from(self.next_u32()) * u64::from(n);
        if (product as u32) < n {
            let threshold = n.wrapping_neg() % n.max(1);
            while (product as u32) < threshold {
                product = u64::from(self.next_u32()) * u64::from(n);
            }
        }
        (product >> 32) as u32
    }

    /// Calls `each` with `count` uniform integers in 0..`n` (`n` ≥ 1), the
    /// same numbers, in the same order, as `count` calls of Lemire's
    /// multiply-and-reject method ("Fast random integer generation in an
    /// interval", ACM TOMACS 29(1) 2019, algorithm 5) on the stream's 32-bit
    /// draws: a draw x is used as ⌊x·n / 2^32⌋ unless (x·n mod 2^32) <
    /// (2^32 − n) mod n, in which case the next draw is tried. This makes the
    /// integers exactly uniform; a draw is rejected with probability below
    /// n / 2^32. (The threshold is computed once here rather than only after
    /// a low product, as the paper does to skip a division; the accepted
    /// draws are the same.)
    #[inline]
    pub(crate) fn each_below(&mut self, n: u32, count: usize, mut each: impl FnMut(u32)) {
        let n = n.max(1);
        let threshold = n.wrapping_neg() % n;
        let mut left = count;
        while left > 0 {
            let product = u64::from(self.next_u32()) * u64::from(n);
            if (product as u32) >= threshold {
                each((product >> 32) as u32);
                left -= 1;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde::Deserialize;

    #[derive(Deserialize)]
    struct Case {
        counter: [String; 4],
        key: [String; 2],
        words: [String; 4],
    }

    fn hex(s: &str) -> u64 {
        u64::from_str_radix(s, 16).expect("fixture holds hex words")
    }

    #[test]
    fn philox_matches_numpy() {
        // Source: numpy.random.Philox (Philox4x64-10), whose first output for
        // counter c is the block of counter c + 1; scripts/philox_fixture.py
        // writes the blocks of counter c itself.
        let path = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/stats/philox.json");
        let text = std::fs::read_to_string(path).expect("committed fixture is readable");
        let cases: Vec<Case> = serde_json::from_str(&text).expect("committed fixture is JSON");
        assert!(cases.len() >= 4);
        for case in &cases {
            let counter = case.counter.each_ref().map(|s| hex(s));
            let key = case.key.each_ref().map(|s| hex(s));
            let want = case.words.each_ref().map(|s| hex(s));
            assert_eq!(philox4x64(counter, key), want, "counter {counter:x?} key {key:x?}");
        }
    }

    #[test]
    fn stream_words_are_the_blocks_in_order() {
        let mut stream = Stream::new(42, Purpose::Resample, 7);
        let first = philox4x64([0, 7, 0, 0], [42, 2]);
        let second = philox4x64([1, 7, 0, 0], [42, 2]);
        let words: Vec<u64> = (0..8).map(|_| stream.next_u64()).collect();
        assert_eq!(words, [first, second].concat());
        let mut halves = Stream::new(42, Purpose::Resample, 7);
        assert_eq!(halves.next_u32(), first[0] as u32);
        assert_eq!(halves.next_u32(), (first[0] >> 32) as u32);
        assert_eq!(halves.next_u32(), first[1] as u32);
    }

    #[test]
    fn below_is_uniform_and_in_range() {
        // 7 buckets, 70,000 draws: each count is 10,000 ± 4 standard errors
        // (√(70,000 · 1/7 · 6/7) ≈ 93; binomial, common practice).
        let mut stream = Stream::new(1, Purpose::Resample, 0);
        let mut counts = [0u32; 7];
        for _ in 0..70_000 {
            let i = stream.below(7) as usize;
            counts[i] += 1;
        }
        for c in counts {
            assert!(c.abs_diff(10_000) < 4 * 93, "{counts:?}");
        }
        assert_eq!(stream.below(1), 0);
        // n = 2^32 − 1 forces the rejection branch's remainder.
        let big = u32::MAX;
        assert!((0..1000).all(|_| stream.below(big) < big));
    }

    #[test]
    fn each_below_draws_what_below_draws() {
        // The batch form must give the paper's algorithm's numbers, draw for
        // draw, including rejections: n = 3 · 2^30 rejects a quarter of the
        // draws (threshold 2^30).
        for n in [1, 2, 7, 10_000, 3 << 30, u32::MAX] {
            let mut one = Stream::new(5, Purpose::Resample, 3);
            let want: Vec<u32> = (0..500).map(|_| one.below(n)).collect();
            let mut batch = Stream::new(5, Purpose::Resample, 3);
            let mut got = Vec::new();
            batch.each_below(n, 500, |x| got.push(x));
            assert_eq!(got, want, "n = {n}");
            assert_eq!(batch.next_u32(), one.next_u32(), "same draws consumed, n = {n}");
        }
    }
}

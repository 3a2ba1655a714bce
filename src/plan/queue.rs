//! A monotone priority queue (radix heap) for non-negative f64 keys.
//!
//! Method: the radix heap of Ahuja, Mehlhorn, Orlin and Tarjan, "Faster algorithms for
//! the shortest path problem", Journal of the ACM 37(2), 1990, here with a radix of 16
//! (their paper also treats larger radices). It is correct only when no key smaller than
//! `last`, the last key popped, is pushed, which A* with a consistent heuristic
//! guarantees (f never decreases along the search). Non-negative IEEE 754 doubles order
//! like their bit patterns as u64, so the heap works on those bits. A key that rounding
//! made a hair smaller than `last` is raised to `last` (a change of the order of one ulp,
//! far below the planner's 1e-9 tolerance).
//!
//! # Buckets
//! A key k equal to `last` goes to bucket 0. Otherwise let L be the highest 4-bit digit
//! (nibble) where k and `last` differ and d the value of k's digit there: k goes to
//! bucket 1 + 16·L + d. Bucket order is key order: keys in a lower level agree with
//! `last` on digit L, where keys of level L are larger, and within a level the digit
//! decides. Popping from an empty bucket 0 takes the lowest non-empty bucket, makes its
//! smallest key the new `last` and spreads its entries again; they all agree with the new
//! `last` on digit L and above, so each lands in a lower level. An entry therefore moves
//! at most 16 times (64 with one bucket per bit, the common form: the planner's keys
//! differ in some 40 low mantissa bits, and entries there moved about 30 times each).
//! A bit mask of the non-empty buckets finds the next one without scanning.
//! An entry is three 32-bit words (key high, key low, value), 12 bytes instead of the 16
//! a `(u64, u32)` pair takes with its padding.

/// Bits per digit.
const DIGIT_BITS: u32 = 4;
/// Digits in a 64-bit key.
const LEVELS: usize = 64usize.div_ceil(DIGIT_BITS as usize);
/// Number of buckets: "equal to last" plus one per (level, digit value).
const BUCKETS: usize = 1 + (LEVELS << DIGIT_BITS);
/// Words of the occupancy mask.
const MASK_WORDS: usize = (BUCKETS - 1).div_ceil(64);

/// Radix heap of (key, value) with monotone keys.
#[derive(Debug, Clone)]
pub struct RadixHeap {
    buckets: Vec<Vec<Entry>>,
    /// Bit i − 1 set ⇔ bucket i (≥ 1) is non-empty.
    occupied: [u64; MASK_WORDS],
    last: u64,
    len: usize,
}

impl Default for RadixHeap {
    fn default() -> Self {
        RadixHeap::new()
    }
}

/// (key high bits, key low bits, value).
type Entry = [u32; 3];

#[inline]
fn entry(key: u64, value: u32) -> Entry {
    [(key >> 32) as u32, key as u32, value]
}

#[inline]
fn key_of(e: &Entry) -> u64 {
    (u64::from(e[0]) << 32) | u64::from(e[1])
}

/// The bucket of `key` (≥ `last`), see the module doc.
#[inline]
fn bucket_of(key: u64, last: u64) -> usize {
    let x = key ^ last;
    if x == 0 {
        return 0;
    }
    let level = (63 - x.leading_zeros()) / DIGIT_BITS;
    let digit = (key >> (DIGIT_BITS * level)) & ((1 << DIGIT_BITS) - 1);
    1 + ((level as usize) << DIGIT_BITS) + digit as usize
}

impl RadixHeap {
    /// An empty heap.
    pub fn new() -> RadixHeap {
        RadixHeap {
            buckets: (0..BUCKETS).map(|_| Vec::new()).collect(),
            occupied: [0; MASK_WORDS],
            last: 0,
            len: 0,
        }
    }

    /// Number of entries (including stale ones the caller skips).
    pub fn len(&self) -> usize {
        self.len
    }

    /// True when empty.
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    #[inline]
    fn put(&mut self, b: usize, e: Entry) {
        self.buckets[b].push(e);
        if b > 0 {
            self.occupied[(b - 1) / 64] |= 1 << ((b - 1) % 64);
        }
    }

    /// Pushes `value` with priority `key` (≥ 0; raised to the last popped key).
    #[inline]
    pub fn push(&mut self, key: f64, value: u32) {
        debug_assert!(key >= 0.0, "negative key {key}");
        let k = key.max(0.0).to_bits().max(self.last);
        self.put(bucket_of(k, self.last), entry(k, value));
        self.len += 1;
    }

    /// Pops an entry with the smallest key.
    pub fn pop(&mut self) -> Option<(f64, u32)> {
        if self.len == 0 {
            return None;
        }
        if self.buckets[0].is_empty() {
            // The lowest non-empty bucket (there is one: len > 0 and bucket 0 is empty).
            let w = self.occupied.iter().position(|&m| m != 0)?;
            let bit = self.occupied[w].trailing_zeros() as usize;
            self.occupied[w] &= !(1 << bit);
            let i = 1 + 64 * w + bit;
            let mut moved = std::mem::take(&mut self.buckets[i]);
            let min = moved.iter().map(key_of).min()?;
            self.last = min;
            // Every entry lands in a lower level (module doc), never back in bucket i.
            for e in &moved {
                self.put(bucket_of(key_of(e), min), *e);
            }
            // Give the emptied bucket its allocation back for reuse.
            moved.clear();
            self.buckets[i] = moved;
        }
        self.len -= 1;
        let e = self.buckets[0].pop()?;
        Some((f64::from_bits(key_of(&e)), e[2]))
    }

    /// Empties the heap, keeping its allocations.
    pub fn clear(&mut self) {
        for b in &mut self.buckets {
            b.clear();
        }
        self.occupied = [0; MASK_WORDS];
        self.last = 0;
        self.len = 0;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Against std's BinaryHeap on a monotone random sequence of pushes and pops: keys
    /// spread widely from zero, and keys packed close together far from zero (as the
    /// planner's are: they then differ only in low mantissa digits, every level used).
    #[test]
    fn pops_in_key_order_like_a_binary_heap() {
        for (base, spread) in [(0.0, 10.0), (7.5e5, 0.01)] {
            let mut rng = crate::terrain::synth::SplitMix64::new(5);
            let mut radix = RadixHeap::new();
            let mut reference = std::collections::BinaryHeap::new();
            let mut floor = base;
            let mut popped = 0;
            for i in 0..20_000u32 {
                let pushes = (rng.next_u64() % 3) as u32;
                for j in 0..pushes {
                    let key = floor + rng.next_f64() * spread;
                    radix.push(key, i * 4 + j);
                    reference.push(std::cmp::Reverse((key.to_bits(), i * 4 + j)));
                }
                if rng.next_u64().is_multiple_of(2) {
                    let a = radix.pop();
                    let b = reference
                        .pop()
                        .map(|std::cmp::Reverse((k, _))| f64::from_bits(k));
                    assert_eq!(a.map(|x| x.0), b);
                    if let Some((k, _)) = a {
                        floor = k;
                        popped += 1;
                    }
                }
            }
            assert_eq!(radix.len(), reference.len());
            // Drain: the rest comes out in order too.
            while let Some(std::cmp::Reverse((k, _))) = reference.pop() {
                assert_eq!(radix.pop().map(|x| x.0), Some(f64::from_bits(k)));
            }
            assert!(radix.is_empty() && radix.pop().is_none());
            assert!(popped > 5_000, "{popped}");
        }
    }
}

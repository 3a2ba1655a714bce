//! A monotone priority queue (radix heap) for non-negative f64 keys.
//!
//! Method: the radix heap of Ahuja, Mehlhorn, Orlin and Tarjan, "Faster algorithms for
//! the shortest path problem", Journal of the ACM 37(2), 1990, in the common
//! bit-bucket form: a key goes into bucket `64 − leading_zeros(key ^ last)`, where `last`
//! is the last key popped. It is correct only when no key smaller than `last` is pushed,
//! which A* with a consistent heuristic guarantees (f never decreases along the search).
//! Non-negative IEEE 754 doubles order like their bit patterns as u64, so the heap works
//! on those bits. A key that rounding made a hair smaller than `last` is raised to
//! `last` (a change of the order of one ulp, far below the planner's 1e-9 tolerance).
//! Each entry moves to a lower bucket at most 64 times: O(1) amortised push, O(64) pop.

/// Radix heap of (key, value) with monotone keys.
#[derive(Debug, Clone)]
pub struct RadixHeap {
    buckets: Vec<Vec<(u64, u32)>>,
    last: u64,
    len: usize,
}

impl Default for RadixHeap {
    fn default() -> Self {
        RadixHeap::new()
    }
}

#[inline]
fn bucket_of(key: u64, last: u64) -> usize {
    (64 - (key ^ last).leading_zeros()) as usize
}

impl RadixHeap {
    /// An empty heap.
    pub fn new() -> RadixHeap {
        RadixHeap {
            buckets: (0..65).map(|_| Vec::new()).collect(),
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

    /// Pushes `value` with priority `key` (≥ 0; raised to the last popped key).
    #[inline]
    pub fn push(&mut self, key: f64, value: u32) {
        debug_assert!(key >= 0.0, "negative key {key}");
        let k = key.max(0.0).to_bits().max(self.last);
        self.buckets[bucket_of(k, self.last)].push((k, value));
        self.len += 1;
    }

    /// Pops an entry with the smallest key.
    pub fn pop(&mut self) -> Option<(f64, u32)> {
        if self.len == 0 {
            return None;
        }
        if self.buckets[0].is_empty() {
            let i = self.buckets.iter().position(|b| !b.is_empty())?;
            let min = self.buckets[i].iter().map(|e| e.0).min()?;
            self.last = min;
            let moved = std::mem::take(&mut self.buckets[i]);
            for e in &moved {
                self.buckets[bucket_of(e.0, min)].push(*e);
            }
            // Give the emptied bucket its allocation back for reuse.
            let mut moved = moved;
            moved.clear();
            if self.buckets[i].is_empty() {
                self.buckets[i] = moved;
            }
        }
        self.len -= 1;
        self.buckets[0].pop().map(|(k, v)| (f64::from_bits(k), v))
    }

    /// Empties the heap, keeping its allocations.
    pub fn clear(&mut self) {
        for b in &mut self.buckets {
            b.clear();
        }
        self.last = 0;
        self.len = 0;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Against std's BinaryHeap on a monotone random sequence of pushes and pops.
    #[test]
    fn pops_in_key_order_like_a_binary_heap() {
        let mut rng = crate::terrain::synth::SplitMix64::new(5);
        let mut radix = RadixHeap::new();
        let mut reference = std::collections::BinaryHeap::new();
        let mut floor = 0.0f64;
        for i in 0..20_000u32 {
            let pushes = (rng.next_u64() % 3) as u32;
            for j in 0..pushes {
                let key = floor + rng.next_f64() * 10.0;
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
                }
            }
        }
        assert_eq!(radix.len(), reference.len());
    }
}

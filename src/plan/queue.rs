//! A monotone priority queue for the planner's f64 keys: buckets of a fixed key width
//! over a circular window, the bucket being served split into finer ones, each sorted
//! when served ([`BucketQueue`]). It replaced
//! a radix heap (Ahuja, Mehlhorn, Orlin and Tarjan, JACM 37(2), 1990), in which an entry
//! moved up to 16 times between buckets: here an entry moves twice, into its bucket and
//! then into its fine bucket, which is sorted in place when its turn comes (instruction
//! counts in benches/results/2026-12-02-route-search.txt, times in
//! benches/results/2026-12-03-route-search.txt).

/// An entry as one integer whose order is the pop order reversed: the complement of the
/// key's bits (positive f64 keys order as their bits) above the complement of the value,
/// so that sorting ascending and popping from the end gives the smallest key first and,
/// among equal keys, the smallest value (a cell index) first. One integer compare per
/// step of a sort.
type Entry = u128;

#[inline]
fn entry(key: u64, value: u32) -> Entry {
    (u128::from(!key) << 32) | u128::from(!value)
}

#[inline]
fn key_of(e: Entry) -> u64 {
    !((e >> 32) as u64)
}

#[inline]
fn value_of(e: Entry) -> u32 {
    !(e as u32)
}

/// A monotone priority queue of (f64 key, u32 value) by buckets of a fixed key width,
/// the current bucket sorted.
///
/// Method: a bucket queue in the manner of Dial ("Algorithm 360: shortest-path forest
/// with topological ordering", CACM 12(11), 1969), with buckets of width Δ over a
/// circular window of [`RING`] buckets, keys beyond the window in an overflow list, and
/// the bucket being served sorted by key (in reverse, popped from its end; equal keys
/// by value), so that
/// entries leave in exact key order (not only bucket order): the bucket index
/// ⌊(k − k₀)/Δ⌋ is monotone in the key, so bucket order is key order, and the sort
/// orders within a bucket. A bucket whose turn comes is first spread over `SUB` (16) fine
/// buckets of width Δ/SUB (the fine index ⌊(k − k₀)·SUB/Δ⌋, of which the bucket index
/// is the quotient by SUB, so fine order is key order too), and each fine bucket is
/// sorted when its turn comes: pushes go to the few buckets of width Δ a round touches
/// (their ends stay in cache), sorts stay small. An entry pushed into the fine bucket
/// being served is inserted at its place. It needs monotone keys (no key below the last
/// popped is pushed, up to rounding: such a key is raised to the last popped). Served
/// storage circulates between the fine buckets and `near`; a bucket's storage, once
/// spread, goes to a pool of spare storage that the next bucket to receive its first
/// entry takes from, so storage circulates instead of being allocated and grown again.
///
/// Aligned to 128 bytes (two cache lines, the span the hardware's adjacent-line
/// prefetch fetches together) so that two queues side by side, as the two threads of
/// [`super::bidir`] keep them, never share a line: when they did, the counters each
/// thread writes on every push and pop made the line travel between the cores, and the
/// 4096 × 4096 bench took 1.57 s instead of 1.16 s (median wall time, user time 2.69
/// against 1.87 s; benches/results/2026-12-04-route-search.txt).
#[derive(Debug, Clone)]
#[repr(align(128))]
pub struct BucketQueue {
    /// SUB / the bucket width: fine buckets per unit of key.
    inv_fine: f64,
    origin: f64,
    /// The bucket being served.
    cur: u64,
    /// Its fine bucket being served (entries in `near`, sorted in reverse pop order) ...
    sub_cur: usize,
    near: Vec<Entry>,
    /// ... and its later fine buckets, unsorted, with a bit set for each non-empty one.
    sub: [Vec<Entry>; SUB],
    sub_occupied: u32,
    ring: Vec<Vec<Entry>>,
    occupied: [u64; RING / 64],
    /// Spare bucket storage (empty, with capacity), at most as many as buckets were
    /// occupied at once. The window's buckets keep none when served: with buckets of
    /// 1/128 flat step they hold hundreds of entries, and storage kept by each of the
    /// window's 16384 buckets raised the bench's peak by 50 MB (to over 24 bytes per
    /// cell); the pool holds storage for the buckets occupied at once only (on the bench
    /// about a thousand: the queued keys spread less than 8 flat steps), and took the
    /// allocator's 4 % of the instructions away (benches/results).
    pool: Vec<Vec<Entry>>,
    /// Entries at or beyond bucket `cur + RING`, and the smallest bucket among them.
    far: Vec<(u64, Entry)>,
    far_min: u64,
    last: f64,
    len: usize,
    started: bool,
}

/// Fine buckets a bucket is split into when its turn comes (a power of two, at most 32).
const SUB: usize = 16;

/// SUB / `width`, for a bucket width that is positive and finite (any other gives 1).
fn inv_fine(width: f64) -> f64 {
    let width = if width > 0.0 && width.is_finite() {
        width
    } else {
        1.0
    };
    SUB as f64 / width
}

/// Buckets in the window (a power of two).
pub const RING: usize = 16384;

impl Default for BucketQueue {
    fn default() -> Self {
        BucketQueue::new(1.0)
    }
}

impl BucketQueue {
    /// An empty queue with buckets `width` wide (> 0, finite).
    pub fn new(width: f64) -> BucketQueue {
        BucketQueue {
            inv_fine: inv_fine(width),
            origin: 0.0,
            cur: 0,
            sub_cur: 0,
            near: Default::default(),
            sub: Default::default(),
            sub_occupied: 0,
            ring: (0..RING).map(|_| Vec::new()).collect(),
            occupied: [0; RING / 64],
            pool: Vec::new(),
            far: Vec::new(),
            far_min: u64::MAX,
            last: 0.0,
            len: 0,
            started: false,
        }
    }

    /// Empties the queue and sets a new bucket width, keeping the allocations.
    pub fn reset(&mut self, width: f64) {
        for (w, word) in self.occupied.iter_mut().enumerate() {
            while *word != 0 {
                let b = word.trailing_zeros() as usize;
                *word &= *word - 1;
                let mut bucket = std::mem::take(&mut self.ring[64 * w + b]);
                bucket.clear();
                self.pool.push(bucket);
            }
        }
        self.near.clear();
        for b in &mut self.sub {
            b.clear();
        }
        self.sub_occupied = 0;
        self.sub_cur = 0;
        self.far.clear();
        self.far_min = u64::MAX;
        self.inv_fine = inv_fine(width);
        self.cur = 0;
        self.last = 0.0;
        self.len = 0;
        self.started = false;
    }

    /// Number of entries (including stale ones the caller skips).
    pub fn len(&self) -> usize {
        self.len
    }

    /// True when empty.
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// Pushes `value` with priority `key` (raised to the last popped key).
    #[inline(always)]
    pub fn push(&mut self, key: f64, value: u32) {
        let k = key.max(self.last);
        if !self.started {
            self.started = true;
            self.origin = k;
        }
        let bits = k.to_bits();
        let f = self.fine(k);
        let idx = f / SUB as u64;
        self.len += 1;
        let e = entry(bits, value);
        if idx <= self.cur {
            self.place_current(f, e);
        } else if idx - self.cur < RING as u64 {
            self.ring_push(idx, e);
        } else {
            self.far.push((idx, e));
            self.far_min = self.far_min.min(idx);
        }
    }

    /// Pushes `e` into window bucket `idx` (in the window, beyond `cur`); an empty bucket
    /// without storage takes spare storage from the pool.
    #[inline(always)]
    fn ring_push(&mut self, idx: u64, e: Entry) {
        let slot = idx as usize & (RING - 1);
        let bucket = &mut self.ring[slot];
        if bucket.capacity() == 0 {
            if let Some(spare) = self.pool.pop() {
                *bucket = spare;
            }
        }
        bucket.push(e);
        self.occupied[slot / 64] |= 1 << (slot % 64);
    }

    /// The fine bucket of key `k`: ⌊(k − k₀)·SUB/Δ⌋, its bucket that over SUB. Through
    /// i64 (one instruction on x86-64, where f64 → u64 takes a dozen); a key a hair below
    /// the origin truncates to 0.
    #[inline(always)]
    fn fine(&self, k: f64) -> u64 {
        (((k - self.origin) * self.inv_fine) as i64).max(0) as u64
    }

    /// Puts an entry of the bucket being served (fine bucket `f`) in its fine bucket:
    /// inserted at its place in `near` when that is the fine bucket being served (or an
    /// earlier one, by rounding), else appended to its own.
    #[inline(always)]
    fn place_current(&mut self, f: u64, e: Entry) {
        let s = if f / (SUB as u64) < self.cur {
            0
        } else {
            (f % SUB as u64) as usize
        };
        if s <= self.sub_cur {
            let at = self.near.partition_point(|&x| x < e);
            self.near.insert(at, e);
        } else {
            self.sub[s].push(e);
            self.sub_occupied |= 1 << s;
        }
    }

    /// Pops an entry with the smallest key.
    #[inline]
    pub fn pop(&mut self) -> Option<(f64, u32)> {
        loop {
            if let Some(e) = self.near.pop() {
                self.len -= 1;
                self.last = f64::from_bits(key_of(e));
                return Some((self.last, value_of(e)));
            }
            if self.len == 0 {
                return None;
            }
            self.advance();
        }
    }

    /// Moves to the next non-empty fine bucket (of the bucket being served, else of the
    /// next non-empty bucket, whose entries are first spread over its fine buckets) and
    /// sorts it into `near` (which is empty).
    fn advance(&mut self) {
        if self.next_sub() {
            return;
        }
        let next = self.next_slot().or_else(|| {
            // The window is empty: move it to the overflow's first bucket.
            self.cur = self.far_min - 1;
            self.migrate();
            self.next_slot()
        });
        let Some(d) = next else {
            return;
        };
        self.cur += d;
        let slot = self.cur as usize & (RING - 1);
        self.occupied[slot / 64] &= !(1 << (slot % 64));
        let mut bucket = std::mem::take(&mut self.ring[slot]);
        for &e in &bucket {
            self.spread(e);
        }
        bucket.clear();
        self.pool.push(bucket);
        self.migrate();
        // Fine bucket 0 may have received entries: start at it.
        self.sub_cur = usize::MAX;
        self.next_sub();
    }

    /// Appends an entry of the bucket about to be served to its fine bucket (before any
    /// fine bucket of it is served).
    fn spread(&mut self, e: Entry) {
        let s = (self.fine(f64::from_bits(key_of(e))) % SUB as u64) as usize;
        self.sub[s].push(e);
        self.sub_occupied |= 1 << s;
    }

    /// Serves the next non-empty fine bucket of the bucket being served (after
    /// `sub_cur`; all of them when `sub_cur` is `usize::MAX`): false when there is none.
    fn next_sub(&mut self) -> bool {
        let later = if self.sub_cur == usize::MAX {
            self.sub_occupied
        } else {
            self.sub_occupied & !((2u32 << self.sub_cur).wrapping_sub(1))
        };
        if later == 0 {
            return false;
        }
        let s = later.trailing_zeros() as usize;
        self.sub_occupied &= !(1 << s);
        self.sub_cur = s;
        std::mem::swap(&mut self.near, &mut self.sub[s]);
        self.near.sort_unstable();
        true
    }

    /// The distance (1..RING) from `cur` to the next occupied bucket of the window.
    fn next_slot(&self) -> Option<u64> {
        let start = (self.cur as usize + 1) & (RING - 1);
        for i in 0..=RING / 64 {
            let w = (start / 64 + i) % (RING / 64);
            let mut word = self.occupied[w];
            if i == 0 {
                word &= !0u64 << (start % 64);
            } else if i == RING / 64 {
                word &= !(!0u64 << (start % 64));
            }
            if word != 0 {
                let slot = 64 * w + word.trailing_zeros() as usize;
                let d = (slot + RING - (self.cur as usize & (RING - 1))) & (RING - 1);
                return Some(d as u64);
            }
        }
        None
    }

    /// Moves the overflow entries that the window now covers into their buckets.
    fn migrate(&mut self) {
        if self.far_min >= self.cur.saturating_add(RING as u64) {
            return;
        }
        let mut far_min = u64::MAX;
        let mut i = 0;
        while i < self.far.len() {
            let (idx, e) = self.far[i];
            if idx < self.cur.saturating_add(RING as u64) {
                self.far.swap_remove(i);
                if idx <= self.cur {
                    // Only `advance` has such entries, before it serves a fine bucket.
                    self.spread(e);
                } else {
                    self.ring_push(idx, e);
                }
            } else {
                far_min = far_min.min(idx);
                i += 1;
            }
        }
        self.far_min = far_min;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The queue behind an interface, for the test.
    trait Queue {
        fn push(&mut self, key: f64, value: u32);
        fn pop(&mut self) -> Option<(f64, u32)>;
        fn len(&self) -> usize;
        fn is_empty(&self) -> bool;
    }

    impl Queue for BucketQueue {
        fn push(&mut self, key: f64, value: u32) {
            BucketQueue::push(self, key, value)
        }
        fn pop(&mut self) -> Option<(f64, u32)> {
            BucketQueue::pop(self)
        }
        fn len(&self) -> usize {
            BucketQueue::len(self)
        }
        fn is_empty(&self) -> bool {
            BucketQueue::is_empty(self)
        }
    }

    /// Against std's BinaryHeap on a monotone random sequence of pushes and pops: keys
    /// spread widely from zero, and keys packed close together far from zero (as the
    /// planner's are: they then differ only in low mantissa digits, every level used).
    fn pops_in_key_order(q: &mut impl Queue, base: f64, spread: f64) {
        let mut rng = crate::terrain::synth::SplitMix64::new(5);
        let mut reference = std::collections::BinaryHeap::new();
        let mut floor = base;
        let mut popped = 0;
        for i in 0..20_000u32 {
            let pushes = (rng.next_u64() % 3) as u32;
            for j in 0..pushes {
                // Now and then a key far ahead (beyond a bucket window).
                let far = if rng.next_u64().is_multiple_of(50) {
                    3000.0 * spread
                } else {
                    0.0
                };
                let key = floor + far + rng.next_f64() * spread;
                q.push(key, i * 4 + j);
                reference.push(std::cmp::Reverse((key.to_bits(), i * 4 + j)));
            }
            if rng.next_u64().is_multiple_of(2) {
                let a = q.pop();
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
        assert_eq!(q.len(), reference.len());
        // Drain: the rest comes out in order too.
        while let Some(std::cmp::Reverse((k, _))) = reference.pop() {
            assert_eq!(q.pop().map(|x| x.0), Some(f64::from_bits(k)));
        }
        assert!(q.is_empty() && q.pop().is_none());
        assert!(popped > 5_000, "{popped}");
    }

    /// Bucket widths from far below the key steps (most entries overflow the window) to
    /// far above them (everything in one bucket), and a queue reused after a reset.
    #[test]
    fn bucket_queue_pops_in_key_order_like_a_binary_heap() {
        for (base, spread) in [(0.0, 10.0), (7.5e5, 0.01)] {
            for width in [spread * 1e-4, spread * 0.05, spread, spread * 1e4] {
                let mut q = BucketQueue::new(width);
                pops_in_key_order(&mut q, base, spread);
                q.push(1.0, 1);
                q.reset(width);
                pops_in_key_order(&mut q, base, spread);
            }
        }
    }
}

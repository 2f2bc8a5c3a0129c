//! A monotone radix heap for whole-second keys.
//!
//! Dijkstra never pushes a key smaller than the last one popped, so items can be filed by the
//! highest bit in which their key differs from that last key; popping refiles only the smallest
//! non-empty bucket. Push is O(1), pop amortised O(log C) for key range C, and buckets are plain
//! `Vec`s that keep their capacity between searches (no allocation per query once warm).

#[derive(Debug)]
pub struct RadixHeap {
    last: u32,
    len: usize,
    buckets: [Vec<(u32, u32)>; 33],
}

impl Default for RadixHeap {
    fn default() -> Self {
        RadixHeap { last: 0, len: 0, buckets: std::array::from_fn(|_| Vec::new()) }
    }
}

#[inline]
fn bucket(a: u32, b: u32) -> usize {
    (32 - (a ^ b).leading_zeros()) as usize
}

impl RadixHeap {
    pub fn clear(&mut self) {
        for b in &mut self.buckets {
            b.clear();
        }
        self.last = 0;
        self.len = 0;
    }

    pub fn len(&self) -> usize {
        self.len
    }

    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// Pushes `value` with `key`; `key` must be at least the last popped key.
    #[inline]
    pub fn push(&mut self, key: u32, value: u32) {
        debug_assert!(key >= self.last, "radix heap keys must be monotone");
        let key = key.max(self.last);
        self.buckets[bucket(key, self.last)].push((key, value));
        self.len += 1;
    }

    /// The value that the next `pop` returns if nothing is pushed before it, when that is known
    /// without refiling (a hint for prefetching).
    #[inline]
    pub fn next_value(&self) -> Option<u32> {
        self.buckets[0].last().map(|x| x.1)
    }

    /// Pops an item with the smallest key.
    #[inline]
    pub fn pop(&mut self) -> Option<(u32, u32)> {
        if self.len == 0 {
            return None;
        }
        if self.buckets[0].is_empty() {
            let i = self.buckets.iter().position(|b| !b.is_empty())?;
            let min = self.buckets[i].iter().map(|x| x.0).min()?;
            self.last = min;
            let items = std::mem::take(&mut self.buckets[i]);
            for &(k, v) in &items {
                self.buckets[bucket(k, min)].push((k, v));
            }
            // Give the emptied bucket its buffer back to keep capacity.
            let mut items = items;
            items.clear();
            self.buckets[i] = items;
        }
        self.len -= 1;
        self.buckets[0].pop()
    }
}

#[cfg(test)]
mod tests {
    use super::RadixHeap;

    // Checked against std's BinaryHeap (a general-purpose reference implementation) on a
    // monotone sequence of operations.
    #[test]
    fn pops_in_key_order_like_binary_heap() {
        let mut h = RadixHeap::default();
        let mut reference = std::collections::BinaryHeap::new();
        let mut x: u64 = 0x9e37_79b9_7f4a_7c15;
        let mut last = 0u32;
        for round in 0..20_000u32 {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            if !x.is_multiple_of(3) || reference.is_empty() {
                let key = last + (x % 5000) as u32;
                h.push(key, round);
                reference.push(std::cmp::Reverse(key));
            } else {
                let (k, _) = h.pop().expect("not empty");
                let std::cmp::Reverse(r) = reference.pop().expect("not empty");
                assert_eq!(k, r);
                last = k;
            }
        }
        while let Some(std::cmp::Reverse(r)) = reference.pop() {
            assert_eq!(h.pop().map(|p| p.0), Some(r));
        }
        assert!(h.pop().is_none());
    }
}

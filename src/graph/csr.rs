//! The one compressed-sparse-row builder: items grouped by a dense `u32` key, so the items of key
//! `k` are `items[first[k]..first[k + 1]]`. Departures per stop, stop patterns per stop, walking
//! links ending at a stop and the stop graph's edges are all built with it.

/// Groups `items` by key (keys below `n`) with a stable counting sort: returns the `n + 1`
/// offsets and the items, key by key, each key's items in input order. The iterator is walked
/// twice (count, then place), so nothing but the result is allocated.
pub fn group<T, I>(n: usize, items: I) -> (Vec<u32>, Vec<T>)
where
    T: Copy + Default,
    I: Iterator<Item = (u32, T)> + Clone,
{
    let mut first = vec![0u32; n + 1];
    for (k, _) in items.clone() {
        first[k as usize + 1] += 1;
    }
    for i in 0..n {
        first[i + 1] += first[i];
    }
    let mut slot = first.clone();
    let mut out = vec![T::default(); first[n] as usize];
    for (k, v) in items {
        out[slot[k as usize] as usize] = v;
        slot[k as usize] += 1;
    }
    (first, out)
}

#[cfg(test)]
mod tests {
    use super::group;

    #[test]
    fn groups_stably_by_key() {
        let (first, items) = group(4, [(2u32, 'a'), (0, 'b'), (2, 'c'), (3, 'd'), (0, 'e')].into_iter());
        assert_eq!(first, vec![0, 2, 2, 4, 5]);
        assert_eq!(items, vec!['b', 'e', 'a', 'c', 'd']);
    }
}

//! The network's stop patterns: its distinct stop sequences, and where each stop appears in
//! them. Built once per network on its first goal-directed search ([`super::Network::patterns`]);
//! the boardings bound of [`crate::route::boardings`] searches over them.

use std::collections::HashMap;

use super::{csr, Network, LAST_OF_TRIP};
use crate::timetable::StopIdx;

/// The distinct stop sequences of a network, and where each stop appears in them.
#[derive(Debug, Clone, Default)]
pub struct Patterns {
    /// Pattern `p` is `stops[first[p]..first[p + 1]]`.
    first: Vec<u32>,
    stops: Vec<StopIdx>,
    /// Stop `s` appears at `(pattern, position)` for each item of `at[at_first[s]..at_first[s + 1]]`.
    at_first: Vec<u32>,
    at: Vec<(u32, u32)>,
}

impl Patterns {
    pub fn build(net: &Network) -> Patterns {
        let stops = net.stop_first.len().saturating_sub(1);
        let event_stops: Vec<StopIdx> = net.events.iter().map(|ev| ev.stop).collect();
        let mut ids: HashMap<&[StopIdx], u32> = HashMap::new();
        let mut out = Patterns { first: vec![0], ..Patterns::default() };
        let mut start = 0usize;
        for e in 0..net.events() {
            if net.flags(e) & LAST_OF_TRIP == 0 {
                continue;
            }
            let seq = &event_stops[start..=e];
            start = e + 1;
            let next = ids.len() as u32;
            if *ids.entry(seq).or_insert(next) == next {
                out.stops.extend_from_slice(seq);
                out.first.push(out.stops.len() as u32);
            }
        }
        let positions = (0..out.first.len() - 1).flat_map(|p| (out.first[p]..out.first[p + 1]).map(move |pos| (p as u32, pos)));
        let (at_first, at) = csr::group(stops, positions.map(|(p, pos)| (out.stops[pos as usize].0, (p, pos - out.first[p as usize]))));
        (out.at_first, out.at) = (at_first, at);
        out
    }

    /// Where stop `s` appears: `(pattern, position)` pairs.
    #[inline]
    pub fn at(&self, s: StopIdx) -> &[(u32, u32)] {
        &self.at[self.at_first[s.idx()] as usize..self.at_first[s.idx() + 1] as usize]
    }

    /// The stop sequence of pattern `p`.
    #[inline]
    pub fn stops_of(&self, p: u32) -> &[StopIdx] {
        &self.stops[self.first[p as usize] as usize..self.first[p as usize + 1] as usize]
    }

    pub fn count(&self) -> usize {
        self.first.len() - 1
    }

    pub fn bytes(&self) -> usize {
        (self.first.capacity() + self.at_first.capacity()) * 4 + self.stops.capacity() * 4 + self.at.capacity() * 8
    }
}

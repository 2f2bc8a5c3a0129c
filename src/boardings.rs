//! Lower bounds on the boardings still needed to reach a target, so the goal-directed search can
//! charge the transfer penalty of every boarding that surely lies ahead, not just the next one.
//!
//! A *pattern* is one distinct stop sequence of the network's trip instances. For a set of
//! targets, a breadth-first search over patterns and walking links gives, per stop:
//! - `alight[s]`: boardings still needed after alighting at `s` (0 where the sink is reached
//!   from `s`: a target, or a stop with a walking link to one);
//! - `wait[s]`: boardings needed from waiting at `s`, the next one included
//!   (`1 +` the least `alight` of a stop after `s` on a pattern through `s`).
//!
//! and on board event `e`, `min alight[stop]` over the rest of its trip ([`Boardings::ride`]).
//! Both search over a *relaxation* of the time-expanded graph: pickup and drop-off rules,
//! step-free masks, times and minimum transfer times are ignored, and a change at the alighting
//! stop itself is always allowed. So for every edge `u → v` of the graph, the boardings bound
//! `b` satisfies `b(u) ≤ b(v) + [u → v boards]`, and `penalty × b` is a consistent bound on the
//! penalty part of the cost. Values are cut at [`CAP`], which keeps every such inequality
//! (each is `x ≤ y` or `x ≤ y + 1`, and both survive `min(·, c)`).
//! Added to the landmark bound on the rest of the cost, the sum stays consistent.

use std::collections::HashMap;

use crate::bounds::WalkLinks;
use crate::network::{Network, LAST_OF_TRIP};
use crate::timetable::StopIdx;

/// Waiting counts boardings exactly up to here (more are bounded by `CAP + 1`), alighting up to
/// `CAP − 1` (more by `CAP`): the last level's walking links, the costliest step, are left out.
/// 2 settled the fewest nodes per unit of time on the metro preset (DEVELOPERS.md).
pub const CAP: u8 = 2;

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
        let mut count = vec![0u32; stops + 1];
        out.stops.iter().for_each(|s| count[s.idx() + 1] += 1);
        for s in 0..stops {
            count[s + 1] += count[s];
        }
        out.at = vec![(0, 0); out.stops.len()];
        let mut fill = count.clone();
        for p in 0..out.first.len() - 1 {
            for pos in out.first[p]..out.first[p + 1] {
                let s = out.stops[pos as usize].idx();
                out.at[fill[s] as usize] = (p as u32, pos - out.first[p]);
                fill[s] += 1;
            }
        }
        out.at_first = count;
        out
    }

    pub fn count(&self) -> usize {
        self.first.len() - 1
    }

    pub fn bytes(&self) -> usize {
        (self.first.capacity() + self.at_first.capacity()) * 4 + self.stops.capacity() * 4 + self.at.capacity() * 8
    }
}

/// Per-stop boardings bounds for one set of targets, with reusable buffers.
#[derive(Debug, Default)]
pub struct Boardings {
    pub alight: Vec<u8>,
    pub wait: Vec<u8>,
    /// Per pattern: its positions before this are already bounded.
    covered: Vec<u32>,
    frontier: Vec<StopIdx>,
    reached: Vec<StopIdx>,
}

impl Boardings {
    /// Fills the bounds for `targets` (see the module text).
    pub fn compute(&mut self, pat: &Patterns, walk: &WalkLinks, stops: usize, targets: &[StopIdx]) {
        self.alight.clear();
        self.alight.resize(stops, CAP);
        self.wait.clear();
        self.wait.resize(stops, CAP + 1);
        self.covered.clear();
        self.covered.resize(pat.count(), 0);
        self.frontier.clear();
        for &t in targets {
            self.lower_alight(t, 0);
            for l in walk.ending_at(t) {
                self.lower_alight(l.from, 0);
            }
        }
        for level in 1..=CAP {
            // Waiting at a stop before a frontier stop on some pattern: `level` boardings.
            self.reached.clear();
            for i in 0..self.frontier.len() {
                let s = self.frontier[i];
                for &(p, pos) in &pat.at[pat.at_first[s.idx()] as usize..pat.at_first[s.idx() + 1] as usize] {
                    let base = pat.first[p as usize];
                    for j in self.covered[p as usize]..pos {
                        let u = pat.stops[(base + j) as usize];
                        if self.wait[u.idx()] > level {
                            self.wait[u.idx()] = level;
                            self.reached.push(u);
                        }
                    }
                    self.covered[p as usize] = self.covered[p as usize].max(pos);
                }
            }
            // Alighting where a change (same stop or a walk) reaches such a stop: `level` as well.
            self.frontier.clear();
            if level == CAP {
                break;
            }
            for i in 0..self.reached.len() {
                let u = self.reached[i];
                self.lower_alight(u, level);
                for l in walk.ending_at(u) {
                    self.lower_alight(l.from, level);
                }
            }
            if self.frontier.is_empty() {
                break;
            }
        }
    }

    #[inline]
    fn lower_alight(&mut self, s: StopIdx, level: u8) {
        if self.alight[s.idx()] > level {
            self.alight[s.idx()] = level;
            self.frontier.push(s);
        }
    }

    /// Boardings still needed on board event `e`: the least `alight` over the rest of its trip.
    #[inline]
    pub fn ride(&self, net: &Network, e: usize) -> u8 {
        let mut best = CAP;
        let mut j = e;
        while net.flags(j) & LAST_OF_TRIP == 0 {
            j += 1;
            best = best.min(self.alight[net.stop(j).idx()]);
            if best == 0 {
                break;
            }
        }
        best
    }
}

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

use crate::graph::{Network, Patterns, LAST_OF_TRIP};
use crate::route::bounds::WalkLinks;
use crate::timetable::StopIdx;

/// Waiting counts boardings exactly up to here (more are bounded by `CAP + 1`), alighting up to
/// `CAP − 1` (more by `CAP`): the last level's walking links, the costliest step, are left out.
/// 2 settled the fewest nodes per unit of time on the metro preset (DEVELOPERS.md).
pub const CAP: u8 = 2;

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
                for &(p, pos) in pat.at(s) {
                    let seq = pat.stops_of(p);
                    for j in self.covered[p as usize]..pos {
                        let u = seq[j as usize];
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

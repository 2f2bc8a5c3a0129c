//! Earliest arrival at every stop for every departure of a time window, in one self-pruning pass.
//!
//! Leaving the origin at `t` the rider may wait there for any later departure, so every node of
//! the time-expanded graph that can be reached leaving at `t' > t` can also be reached leaving at
//! `t`, and a stop's earliest arrival is the earliest time of any reachable alighting or walk
//! there. So the departures are taken from the latest to the earliest, and the reachable set is
//! only ever grown: what a later departure reached is kept, and an earlier one explores just the
//! nodes it adds. Each ride node is explored once for the whole window (once per ride count
//! when the rides are capped), instead of once per departure.
//!
//! New nodes are explored in time order (a monotone radix heap on departure time) so a stop's
//! walking links are mostly relaxed once, from its earliest alighting. Lowering a stop's entry
//! time from `old` to `new` boards exactly its departures in `[new, old)`: the later ones were
//! boarded when the entry was `old`. A cursor per stop remembers where they start, so lowering
//! walks back from it instead of searching.
//!
//! Arrivals found for a later departure are not cut at an earlier departure's horizon: the pass
//! explores up to the last departure plus the longest duration, and a caller reads an arrival
//! later than its own departure plus the longest duration as "not reached". That is exact: a
//! journey arriving by then uses only nodes up to then.
//!
//! With a cap of `K` rides, each ride node keeps the fewest rides it can be reached with, and
//! each stop one entry time per ride count: a node reached again with fewer rides is explored
//! again. The result for every departure equals the one-to-all sweep ([`super::sweep`]) and
//! Dijkstra ([`super::search::run_all`]) at that departure; tests check both.

use crate::graph::{Network, HAS_RULES, LAST_OF_TRIP};
use crate::route::bounds::WalkLinks;
use crate::route::edges::{flags_ok, rule_boardings};
use crate::route::query::{prefetch, Params};
use crate::route::radix_heap::RadixHeap;
use crate::timetable::{StopIdx, Timetable, NO_DROP_OFF, NO_PICKUP};

/// The most rides a capped profile may count (a cap above it is no cap in practice).
pub const MAX_RIDES_CAP: u8 = 16;

/// What a profile search is asked.
pub(crate) struct ProfileQuery<'a> {
    pub tt: &'a Timetable,
    pub net: &'a Network,
    pub walk: &'a WalkLinks,
    pub origins: &'a [StopIdx],
    /// Departures from the origins on the network's timeline, ascending.
    pub departures: &'a [u32],
    pub p: &'a Params,
    /// At most this many rides (`None`: any number).
    pub max_rides: Option<u8>,
}

/// Per stop and ride count: the earliest time its waiting chain can be entered, and `pos`, the
/// position (in the stop's departures) of the first one boarded from it: the departures from `pos`
/// up to the horizon have all been boarded, so lowering the entry boards those before `pos`,
/// walking back, without a search.
#[derive(Debug, Clone, Copy)]
struct Slot {
    entry: u32,
    pos: u32,
}

const FRESH: Slot = Slot { entry: u32::MAX, pos: u32::MAX };

/// Buffers of the profile search, reused across queries.
#[derive(Debug, Default)]
pub struct ProfileBuffers {
    slots: Vec<Slot>,
    /// Per stop and ride count: earliest alighting so far (a later one walks the same links later).
    alight: Vec<u32>,
    /// Per event: the fewest rides its ride node is reached with, and the ride count it was last
    /// explored with (`NONE`: not yet), side by side so a ride costs one cache miss, not two.
    ride: Vec<[u8; 2]>,
    heap: RadixHeap,
    arrival: Vec<u32>,
}

const NONE: u8 = u8::MAX;

struct Pass<'q, 'b> {
    q: &'q ProfileQuery<'q>,
    b: &'b mut ProfileBuffers,
    /// Ride counts kept per stop: 1 without a cap (every count is 0), else cap + 1.
    levels: usize,
    /// Added to the ride count by a boarding: 0 without a cap.
    inc: u8,
    horizon: u32,
    mask: u8,
    change_s: u32,
}

impl Pass<'_, '_> {
    #[inline]
    fn reach(&mut self, s: StopIdx, at: u32) {
        let a = &mut self.b.arrival[s.idx()];
        *a = (*a).min(at);
    }

    /// Rides a ride node with `rides` counted, if that is fewer than before.
    #[inline]
    fn board(&mut self, e: u32, rides: u8) {
        let r = &mut self.b.ride[e as usize][0];
        if *r > rides {
            *r = rides;
            self.b.heap.push(self.q.net.dep(e as usize), e);
        }
    }

    /// Arrival at stop `s` at `at` with `k` rides, ready to board (after a walk, or after the
    /// change time): lowers its arrival and entry, and boards what that opens. The entry is never
    /// earlier than the arrival, so a time not earlier than the entry changes nothing.
    #[inline]
    fn enter(&mut self, s: StopIdx, k: u8, at: u32) {
        if at < self.b.slots[s.idx() * self.levels + k as usize].entry {
            self.reach(s, at);
            self.lower_entry(s, k, at);
        }
    }

    /// Lowers the entry time of stop `s` with `k` rides used to `at`, boarding what that opens.
    fn lower_entry(&mut self, s: StopIdx, k: u8, at: u32) {
        let base = s.idx() * self.levels;
        let slot = self.b.slots[base + k as usize];
        if at >= slot.entry {
            return;
        }
        let net = self.q.net;
        let lo = net.stop_first[s.idx()];
        let mut pos = if slot.entry == u32::MAX {
            net.first_departure(s, self.horizon.saturating_add(1)).unwrap_or(net.stop_first[s.idx() + 1])
        } else {
            slot.pos
        };
        let rides = k + self.inc;
        let boards = (rides as usize) < self.levels;
        while pos > lo && net.by_stop_dep[pos as usize - 1] >= at {
            pos -= 1;
            let f = net.by_stop[pos as usize];
            let flags = net.flags(f as usize);
            if boards && flags & (NO_PICKUP | LAST_OF_TRIP) == 0 && flags_ok(flags, self.mask) {
                self.board(f, rides);
            }
        }
        for x in &mut self.b.slots[base + k as usize..base + self.levels] {
            if at < x.entry {
                // A higher ride count's departures from `pos` on are boarded with fewer rides now.
                *x = Slot { entry: at, pos: if x.entry == u32::MAX { pos } else { x.pos.min(pos) } };
            }
        }
    }

    fn explore(&mut self, e: usize) {
        let [k, done] = self.b.ride[e];
        if done <= k {
            return;
        }
        self.b.ride[e][1] = k;
        let (tt, net, p) = (self.q.tt, self.q.net, self.q.p);
        let e2 = e + 1;
        let next = net.events[e2];
        let (next_flags, next_dep) = (next.flags, next.dep);
        if next_flags & LAST_OF_TRIP == 0 && next_dep <= self.horizon {
            self.board(e2 as u32, k);
        }
        let (ta, v) = (net.arr(e2), next.stop);
        if next_flags & NO_DROP_OFF != 0 || !flags_ok(next_flags, self.mask) || ta > self.horizon {
            return;
        }
        self.reach(v, ta);
        if next_flags & HAS_RULES != 0 {
            let rides = k + self.inc;
            if (rides as usize) < self.levels {
                for (f, _) in rule_boardings(tt, net, p, self.horizon, self.mask, e2, 0) {
                    self.board(f, rides);
                }
            }
        } else if let Some(mt) = tt.stop_transfer_s(v, self.change_s) {
            self.lower_entry(v, k, ta + mt);
        }
        let slot = v.idx() * self.levels + k as usize;
        if ta >= self.b.alight[slot] {
            return;
        }
        self.b.alight[slot] = ta;
        let walk = self.q.walk;
        for f in walk.from(v) {
            self.enter(f.to, k, ta + f.walk_s);
        }
    }
}

/// Runs the profile search and calls `each(i, depart_s, arrival)` for every departure of
/// `q.departures`, from the last to the first, with the earliest arrival at every stop leaving at
/// that departure (`u32::MAX`: not reached). An arrival later than `depart_s + p.max_duration_s`
/// is to be read as not reached (see the module's documentation).
pub(crate) fn profile(q: &ProfileQuery, b: &mut ProfileBuffers, mut each: impl FnMut(usize, u32, &[u32])) {
    let n = q.tt.stops.len();
    let events = q.net.events();
    let (levels, inc) = match q.max_rides {
        Some(k) => (k.min(MAX_RIDES_CAP) as usize + 1, 1),
        None => (1, 0),
    };
    b.slots.clear();
    b.slots.resize(n * levels, FRESH);
    b.alight.clear();
    b.alight.resize(n * levels, u32::MAX);
    b.ride.clear();
    b.ride.resize(events, [NONE; 2]);
    b.arrival.clear();
    b.arrival.resize(n, u32::MAX);
    b.heap.clear();
    let Some(&last) = q.departures.last() else { return };
    let mut pass = Pass {
        q,
        b,
        levels,
        inc,
        horizon: last.saturating_add(q.p.max_duration_s),
        mask: q.p.step_free.event_mask(),
        change_s: q.p.transfer_s(),
    };
    for (i, &t) in q.departures.iter().enumerate().rev() {
        for &o in q.origins {
            pass.enter(o, 0, t);
            for f in q.walk.from(o) {
                pass.enter(f.to, 0, t + f.walk_s);
            }
        }
        while let Some((_, e)) = pass.b.heap.pop() {
            if let Some(next) = pass.b.heap.next_value() {
                prefetch(&q.net.events[next as usize + 1]);
            }
            pass.explore(e as usize);
        }
        pass.b.heap.clear();
        each(i, t, &pass.b.arrival);
    }
}

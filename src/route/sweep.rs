//! One-to-all earliest arrival by a sweep of the time-expanded graph in time order.
//!
//! Which nodes of the graph can be reached from the origin does not depend on costs, and a
//! stop's earliest arrival is the earliest time of any reachable alighting or walk there, so
//! a one-to-all query needs reachability, not Dijkstra. Every edge goes forward in time, so the
//! graph is a DAG and visiting the rides in order of departure time visits it in topological
//! order (ties resolved below). The waiting chain of a stop is reachable from its earliest
//! entry onwards, so one time per stop stands for all its waiting nodes, and one bit per event
//! for its ride node. Each ride is read once, near the rides of the same moment, instead of
//! being pushed through a priority queue.
//!
//! Ties: a ride of duration 0 followed by a change of 0 s (a timed transfer, or a walk of 0 s)
//! reaches rides that leave at the same instant, possibly earlier in the order. When that
//! happens, the rides of that instant are read again until nothing changes.
//!
//! The result is the one Dijkstra on the same graph gives (`search::run_all`); a test checks
//! it against that on random feeds.

use crate::graph::{Network, HAS_RULES, LAST_OF_TRIP};
use crate::route::bounds::WalkLinks;
use crate::route::edges::{flags_ok, rule_boardings};
use crate::route::query::Params;
use crate::timetable::{StopIdx, Timetable, NO_DROP_OFF, NO_PICKUP};

/// Per stop during a sweep.
#[derive(Debug, Clone, Copy)]
pub(crate) struct SweepStop {
    /// Earliest time the waiting chain can be entered.
    entry: u32,
    /// Earliest alighting so far: a later one would walk the same links later.
    alight: u32,
}

/// Buffers of the sweep, reused across queries.
#[derive(Debug, Default)]
pub(crate) struct SweepBuffers {
    stops: Vec<SweepStop>,
    /// One bit per event: its ride node is reachable.
    on_board: Vec<u64>,
}

const FRESH: SweepStop = SweepStop { entry: u32::MAX, alight: u32::MAX };

/// What the sweep reads of one ride `e` (and of `e + 1`, where it alights).
#[derive(Debug, Clone, Copy, Default)]
struct Ride {
    e: u32,
    dep: u32,
    stop: StopIdx,
    flags: u8,
    next_flags: u8,
    next_dep: u32,
    next_arr: u32,
    next_stop: StopIdx,
}

/// Rides gathered ahead of the sweep, in one tight loop of independent loads that the processor
/// overlaps: in time order the rides lie scattered over the event arrays, and read one by one
/// among the sweep's branches each costs a cache miss after the other.
const AHEAD: usize = 64;

fn gather(net: &Network, order: &[u32], from: usize, out: &mut [Ride; AHEAD]) -> usize {
    let n = AHEAD.min(order.len().saturating_sub(from));
    for (r, &e) in out.iter_mut().zip(&order[from..from + n]) {
        let (a, b) = (net.events[e as usize], net.events[e as usize + 1]);
        *r = Ride {
            e,
            dep: a.dep,
            stop: a.stop,
            flags: a.flags,
            next_flags: b.flags,
            next_dep: b.dep,
            next_arr: b.dep - b.dwell as u32,
            next_stop: b.stop,
        };
    }
    n
}

/// What a sweep is asked: from where and when, under which parameters, walking the links of
/// `walk` (prepared for `p`'s walking setting).
pub(crate) struct SweepQuery<'a> {
    pub tt: &'a Timetable,
    pub net: &'a Network,
    pub walk: &'a WalkLinks,
    pub origins: &'a [StopIdx],
    pub depart_s: u32,
    pub p: &'a Params,
}

/// Writes into `arrival` (one slot per stop) the earliest arrival at every stop from the
/// origins leaving at `depart_s`, within `p.max_duration_s` (u32::MAX: not reached).
pub(crate) fn one_to_all(q: &SweepQuery, buf: &mut SweepBuffers, arrival: &mut [u32]) {
    let SweepQuery { tt, net, walk, origins, depart_s, p } = *q;
    let n = tt.stops.len();
    buf.stops.clear();
    buf.stops.resize(n, FRESH);
    buf.on_board.clear();
    buf.on_board.resize(net.events().div_ceil(64), 0);
    arrival.iter_mut().for_each(|a| *a = u32::MAX);
    let SweepBuffers { stops, on_board } = buf;

    let horizon = depart_s.saturating_add(p.max_duration_s);
    let mask = p.step_free.event_mask();
    let change_s = p.transfer_s();
    for &o in origins {
        arrival[o.idx()] = arrival[o.idx()].min(depart_s);
        stops[o.idx()].entry = stops[o.idx()].entry.min(depart_s);
        for f in walk.from(o) {
            let t = depart_s + f.walk_s;
            arrival[f.to.idx()] = arrival[f.to.idx()].min(t);
            stops[f.to.idx()].entry = stops[f.to.idx()].entry.min(t);
        }
    }

    let order = net.rides_by_time();
    let start = order.partition_point(|&e| net.dep(e as usize) < depart_s);
    // First ride of the instant being read, that instant, and whether a change made during it
    // lands on the same instant (so its rides must be read again).
    let (mut group, mut group_t, mut again) = (start, u32::MAX, false);
    let mut i = start;
    let (mut ahead, mut ahead_from, mut ahead_n) = ([Ride::default(); AHEAD], 0, 0);
    loop {
        if i < ahead_from || i >= ahead_from + ahead_n {
            (ahead_from, ahead_n) = (i, gather(net, order, i, &mut ahead));
        }
        let r = match (i < ahead_from + ahead_n).then(|| ahead[i - ahead_from]) {
            Some(r) if r.dep <= horizon => r,
            _ if again => {
                again = false;
                i = group;
                continue;
            }
            _ => break,
        };
        let (e, t) = (r.e as usize, r.dep);
        if t != group_t {
            if again {
                again = false;
                i = group;
                continue;
            }
            (group, group_t) = (i, t);
        }
        i += 1;
        let bit = 1u64 << (e % 64);
        if on_board[e / 64] & bit == 0 {
            if r.flags & NO_PICKUP != 0 || !flags_ok(r.flags, mask) || t < stops[r.stop.idx()].entry {
                continue;
            }
            on_board[e / 64] |= bit;
        }
        // On board at e: stay on, and alight at the next stop.
        let e2 = e + 1;
        if r.next_flags & LAST_OF_TRIP == 0 && r.next_dep <= horizon {
            on_board[e2 / 64] |= 1u64 << (e2 % 64);
        }
        let (ta, v) = (r.next_arr, r.next_stop);
        if r.next_flags & NO_DROP_OFF != 0 || !flags_ok(r.next_flags, mask) || ta > horizon {
            continue;
        }
        arrival[v.idx()] = arrival[v.idx()].min(ta);
        if r.next_flags & HAS_RULES != 0 {
            for (f, _) in rule_boardings(tt, net, p, horizon, mask, e2, 0) {
                let f = f as usize;
                if on_board[f / 64] & (1u64 << (f % 64)) == 0 {
                    on_board[f / 64] |= 1u64 << (f % 64);
                    again |= net.dep(f) == t;
                }
            }
        } else if let Some(mt) = tt.stop_transfer_s(v, change_s) {
            again |= lower_entry(stops, v, ta + mt, t);
        }
        if ta >= stops[v.idx()].alight {
            continue;
        }
        stops[v.idx()].alight = ta;
        for f in walk.from(v) {
            let at = ta + f.walk_s;
            arrival[f.to.idx()] = arrival[f.to.idx()].min(at);
            again |= lower_entry(stops, f.to, at, t);
        }
    }
}

/// Lowers the entry time of `s` to `at`; true when that lands on the instant `now` being read.
#[inline]
fn lower_entry(stops: &mut [SweepStop], s: StopIdx, at: u32, now: u32) -> bool {
    let m = &mut stops[s.idx()];
    if at < m.entry {
        m.entry = at;
        return at == now;
    }
    false
}

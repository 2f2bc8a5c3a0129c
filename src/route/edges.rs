//! Which edges of the time-expanded graph a query may use, shared by Dijkstra ([`super::search`])
//! and the one-to-all sweep ([`super::sweep`]): the step-free mask on events, and the direct
//! boardings that a trip- or route-specific transfer rule allows; and every edge of a node listed
//! with its cost ([`edges_of`]), for the oracle tests that rebuild the graph.

use crate::graph::{Network, Node, NodeIds, HAS_RULES, LAST_OF_TRIP};
use crate::route::query::{weighted_walk_s, Params, Query};
use crate::timetable::{StopIdx, Timetable, NO_DROP_OFF, NO_PICKUP};

/// Boardings at the stop of event `e2` for a rider alighting there from a trip that a
/// trip- or route-specific transfer rule names: each later departure is checked against the
/// rules (`Timetable::change_s`) and boarded directly, instead of through the shared waiting chain
/// (which cannot remember which trip the rider came from).
pub(crate) fn rule_boardings(tt: &Timetable, net: &Network, p: &Params, horizon: u32, mask: u8, e2: usize, at: u32) -> Vec<(u32, u32)> {
    let (v, ta) = (net.stop(e2), net.arr(e2));
    let from_trip = net.instance_of(e2 as u32).trip;
    let mut out = Vec::new();
    let Some(start) = net.first_departure(v, ta) else { return out };
    for pos in start..net.stop_first[v.idx() + 1] {
        let dep = net.by_stop_dep[pos as usize];
        if dep > horizon {
            break;
        }
        let f = net.by_stop[pos as usize];
        if f as usize == e2 || net.flags(f as usize) & (NO_PICKUP | LAST_OF_TRIP) != 0 || !event_ok(net, mask, f as usize) {
            continue;
        }
        let to_trip = net.instance_of(f).trip;
        if let Some(m) = tt.change_s(v, from_trip, to_trip, p.transfer_s()) {
            if dep >= ta + m {
                out.push((f, at + (dep - ta) + p.transfer_penalty_s));
            }
        }
    }
    out
}

/// True when event `e` may be used under the step-free mask (0: any).
#[inline]
pub(crate) fn event_ok(net: &Network, mask: u8, e: usize) -> bool {
    flags_ok(net.flags(e), mask)
}

/// [`event_ok`] on an event's flags already read.
#[inline]
pub(crate) fn flags_ok(flags: u8, mask: u8) -> bool {
    mask == 0 || flags & mask != 0
}

/// The outgoing edges of a node with their costs, as the search relaxes them (for oracle tests).
pub fn edges_of(q: Query, node: u32, out: &mut Vec<(u32, u32)>) {
    let Query { tt, net, ends, p, .. } = q;
    out.clear();
    let ids = NodeIds::of(net);
    let walk = tt.walk(p.step_free.walk_profile());
    let mask = p.step_free.event_mask();
    let ok = |e: usize| mask == 0 || net.flags(e) & mask != 0;
    let enter = |s: StopIdx, t: u32, extra: u32, out: &mut Vec<(u32, u32)>, from_t: u32| {
        if let Some(q) = net.first_departure(s, t) {
            let dep = net.dep(net.by_stop[q as usize] as usize);
            out.push((ids.wait(0, q), (dep - from_t) + extra));
        }
    };
    match ids.decode(node).1 {
        Node::Wait(pos) => {
            let ev = net.by_stop[pos as usize] as usize;
            let s = net.stop(ev);
            if pos + 1 < net.stop_first[s.idx() + 1] {
                out.push((ids.wait(0, pos + 1), net.dep(net.by_stop[pos as usize + 1] as usize) - net.dep(ev)));
            }
            if net.flags(ev) & (NO_PICKUP | LAST_OF_TRIP) == 0 && ok(ev) {
                out.push((ids.ride(0, ev as u32), p.transfer_penalty_s));
            }
        }
        Node::Ride(e) if net.flags(e as usize) & LAST_OF_TRIP != 0 => {}
        Node::Ride(e) => {
            let e = e as usize;
            let t = net.dep(e);
            let e2 = e + 1;
            if net.flags(e2) & LAST_OF_TRIP == 0 {
                out.push((ids.ride(0, e2 as u32), net.dep(e2) - t));
            }
            if net.flags(e2) & NO_DROP_OFF == 0 && ok(e2) {
                let ta = net.arr(e2);
                let v = net.stop(e2);
                if ends.targets.contains(&v) {
                    out.push((ids.sink(0), ta - t));
                }
                if net.flags(e2) & HAS_RULES != 0 {
                    for (f, cost) in rule_boardings(tt, net, p, u32::MAX, mask, e2, ta - t) {
                        out.push((ids.ride(0, f), cost));
                    }
                } else if let Some(mt) = tt.stop_transfer_s(v, p.transfer_s()) {
                    enter(v, ta + mt, 0, out, t);
                }
                for f in walk.from(v) {
                    if f.length_m as f64 <= p.max_walk_m {
                        let d = f.duration_s(p.walk_speed_mps);
                        let wc = weighted_walk_s(d, p.walk_weight);
                        if ends.targets.contains(&f.to) {
                            out.push((ids.sink(0), ta - t + wc));
                        }
                        if let Some(q) = net.first_departure(f.to, ta + d) {
                            let dep = net.dep(net.by_stop[q as usize] as usize);
                            out.push((ids.wait(0, q), (ta - t) + wc + (dep - ta - d)));
                        }
                    }
                }
            }
        }
        Node::Sink => {}
    }
}

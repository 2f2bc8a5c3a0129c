//! Which edges of the time-expanded graph a query may use, shared by Dijkstra ([`super::search`])
//! and the one-to-all sweep ([`super::sweep`]): the step-free mask on events, and the direct
//! boardings that a trip- or route-specific transfer rule allows.

use crate::graph::{Network, LAST_OF_TRIP};
use crate::route::query::Params;
use crate::timetable::{Timetable, NO_PICKUP};

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

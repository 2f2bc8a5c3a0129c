//! The journeys a query asks for, made from runs of the search ([`super::search`]): the best
//! journey leaving at or after a time (riding, or walking only), the next options after it, and
//! the fewest-rides set (earliest arrival per number of rides).

use super::search::{decode, run, Goal, Run, SearchState};
use crate::graph::{Network, Node};
use crate::route::query::{weighted_walk_s, Endpoints, Journey, Params, Query};
use crate::timetable::{StopIdx, Timetable};

fn sink_arrival(net: &Network, tt: &Timetable, st: &SearchState, p: &Params, ends: &Endpoints, sink: u32) -> Option<(u32, u32)> {
    let r = st.pred_of(sink);
    let Node::Ride(e) = decode(net, r).1 else { return None };
    let e2 = e as usize + 1;
    let (ta, v) = (net.arr(e2), net.stop(e2));
    if ends.targets.contains(&v) {
        return Some((ta, 0));
    }
    let walk = tt.walk(p.step_free.walk_profile());
    ends.targets
        .iter()
        .filter_map(|&t| walk.between(v, t))
        .filter(|f| f.length_m as f64 <= p.max_walk_m)
        .map(|f| (ta + f.duration_s(p.walk_speed_mps), f.duration_s(p.walk_speed_mps)))
        .min()
}

/// True when the step `a → b` boards a vehicle (from a waiting node, or directly under a
/// trip-specific transfer rule).
pub fn is_boarding(net: &Network, a: u32, b: u32) -> bool {
    match (decode(net, a).1, decode(net, b).1) {
        (Node::Wait(_), Node::Ride(_)) => true,
        (Node::Ride(x), Node::Ride(y)) => y != x + 1,
        _ => false,
    }
}

fn rides_on(net: &Network, nodes: &[u32]) -> u32 {
    nodes.windows(2).filter(|w| is_boarding(net, w[0], w[1])).count() as u32
}

fn direct_walk(q: Query) -> Option<Journey> {
    let Query { tt, ends, depart_s, p, .. } = q;
    let walk = tt.walk(p.step_free.walk_profile());
    let mut best: Option<(u32, StopIdx, StopIdx)> = None;
    for &o in &ends.origins {
        if ends.targets.contains(&o) {
            best = Some((0, o, o));
            break;
        }
        for &t in &ends.targets {
            if let Some(f) = walk.between(o, t).filter(|f| f.length_m as f64 <= p.max_walk_m) {
                let d = f.duration_s(p.walk_speed_mps);
                if best.is_none_or(|b| d < b.0) {
                    best = Some((d, o, t));
                }
            }
        }
    }
    best.map(|(d, o, t)| {
        let wc = weighted_walk_s(d, p.walk_weight);
        Journey { nodes: vec![], arrival_s: depart_s + d, cost_s: depart_s + wc, rides: 0, direct_walk: Some((o, t, d)) }
    })
}

/// The best journey leaving at or after `depart_s`, by generalised cost.
pub fn earliest(q: Query, st: &mut SearchState) -> Option<Journey> {
    let ride = earliest_rides_only(q, st);
    let walk = direct_walk(q);
    match (ride, walk) {
        (Some(r), Some(w)) => Some(if w.cost_s <= r.cost_s { w } else { r }),
        (r, w) => r.or(w),
    }
}

/// When the rider must leave the origin for `j` (latest, given its first boarding).
pub fn departure_of(q: Query, j: &Journey) -> u32 {
    let Query { tt, net, ends, depart_s, p } = q;
    if j.direct_walk.is_some() {
        return depart_s;
    }
    let Some(&first) = j.nodes.first() else { return depart_s };
    let Node::Wait(pos) = decode(net, first).1 else { return depart_s };
    // The first boarding is the first W→R step.
    let board = j.nodes.windows(2).find_map(|w| match (decode(net, w[0]).1, decode(net, w[1]).1) {
        (Node::Wait(_), Node::Ride(e)) => Some(e),
        _ => None,
    });
    let Some(e) = board else { return depart_s };
    let s = net.stop(net.by_stop[pos as usize] as usize);
    let access = access_walk_s(tt, ends, s, p).unwrap_or(0);
    net.dep(e as usize).saturating_sub(access).max(depart_s)
}

/// Walking time from the nearest origin to `s` (0 when `s` is an origin).
pub fn access_walk_s(tt: &Timetable, ends: &Endpoints, s: StopIdx, p: &Params) -> Option<u32> {
    if ends.origins.contains(&s) {
        return Some(0);
    }
    let walk = tt.walk(p.step_free.walk_profile());
    ends.origins
        .iter()
        .filter_map(|&o| walk.between(o, s))
        .filter(|f| f.length_m as f64 <= p.max_walk_m)
        .map(|f| f.duration_s(p.walk_speed_mps))
        .min()
}

/// Up to `k` options: the best journey leaving at or after `depart_s`, then the best leaving after
/// that one's departure, and so on ("next K departures"). An option that a later one beats on
/// arrival and rides is dropped, so departures and arrivals both increase. A walk-only journey
/// is listed once.
pub fn options(q: Query, st: &mut SearchState, k: usize) -> Vec<Journey> {
    let mut out: Vec<Journey> = Vec::new();
    let mut t = q.depart_s;
    let mut allow_walk = true;
    while out.len() < k {
        let found = if allow_walk { earliest(q.leaving(t), st) } else { earliest_rides_only(q.leaving(t), st) };
        let Some(j) = found else { break };
        if j.direct_walk.is_some() {
            allow_walk = false;
            out.push(j);
            continue;
        }
        t = departure_of(q.leaving(t), &j) + 1;
        if out.iter().any(|o| o.nodes == j.nodes) {
            continue;
        }
        // A later departure that arrives no later makes the earlier option pointless.
        while out.last().is_some_and(|o| o.direct_walk.is_none() && o.arrival_s >= j.arrival_s && o.rides >= j.rides) {
            out.pop();
        }
        out.push(j);
    }
    out
}

fn earliest_rides_only(q: Query, st: &mut SearchState) -> Option<Journey> {
    let Query { tt, net, ends, p, .. } = q;
    run(Run { q, layers: 1, goal: Goal::Target }, st);
    let sink = st.sink(0);
    let c = st.cost_of(sink)?;
    let nodes = st.trace(sink);
    let (arrival_s, _) = sink_arrival(net, tt, st, p, ends, sink)?;
    let rides = rides_on(net, &nodes);
    Some(Journey { cost_s: c - p.transfer_penalty_s * rides.min(1), nodes, arrival_s, rides, direct_walk: None })
}

/// Pareto set over (arrival time, number of rides), fewest rides first. Runs a layered search
/// (layer = rides so far) with no penalty, so its memory grows with `max_rides`.
pub fn pareto(q: Query, st: &mut SearchState, max_rides: u32) -> Vec<Journey> {
    let Query { tt, net, ends, p, .. } = q;
    let no_penalty = Params { transfer_penalty_s: 0, ..p.clone() };
    let q = Query { p: &no_penalty, ..q };
    run(Run { q, layers: max_rides + 1, goal: Goal::Target }, st);
    let mut out: Vec<Journey> = Vec::new();
    if let Some(w) = direct_walk(q) {
        out.push(w);
    }
    for layer in 1..=max_rides {
        let sink = st.sink(layer);
        if st.cost_of(sink).is_none() {
            continue;
        }
        let nodes = st.trace(sink);
        let Some((arrival_s, _)) = sink_arrival(net, tt, st, q.p, ends, sink) else { continue };
        if out.last().is_some_and(|b| b.arrival_s <= arrival_s) {
            continue;
        }
        out.push(Journey { cost_s: arrival_s, arrival_s, rides: layer, nodes, direct_walk: None });
    }
    out
}

//! The interchange audit: at a station, every arrival against every other route and direction
//! departing there — which connections are made, which are missed and by how much, how long
//! people wait.
//!
//! **Definition.** The station's stops are its own (or the stop itself outside any station) plus
//! the stops its stops walk to (transfers.txt links, pathways, street links within the walking
//! limit). For each arrival of a trip that allows drop-off there within the window (not the first
//! stop of its trip), and for each route and direction (`route_id` + `direction_id`, the headsign
//! where `direction_id` is absent) other than the arriving trip's own, departing from the
//! station's stops with pickup allowed:
//! - the change time is the `transfers.txt` rule at one stop with the GTFS precedence (trip over
//!   route over stop, `Timetable::change_s`: timed transfer 1 → 0 s, 2 → `min_transfer_time`,
//!   3 → not possible), else the default minimum change time; between two stops, the walking
//!   link's time (the feed's `min_transfer_time`, else pathways, else the walk at the walking
//!   speed), no link → not possible;
//! - slack = departure − arrival; the connection is the first departure with slack ≥ change time
//!   (`made`, wait = slack), within the horizon; none → `none`;
//! - `missed_by` = change time − slack of the latest departure with 0 ≤ slack < change time.
//!
//! - in-seat continuations are left out: when the arriving trip ends at the station and the next
//!   trip of its block (`block_id`, same service day) starts there, the rider stays seated, so
//!   the arrival has no row for that trip's route and direction.
//!
//! Summaries over the rows: per pair of arriving and departing route/direction
//! ([`pair_summaries`]) and per station ([`Tally`], [`rank`]).

use super::window::percentile;
use crate::graph::{Network, LAST_OF_TRIP};
use crate::route::Params;
use crate::timetable::{StopIdx, Timetable, TripIdx, WalkProfile, NO_DROP_OFF, NO_PICKUP};

/// What became of one arrival's connection to one route and direction.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Status {
    Made,
    /// No departure with enough slack within the horizon.
    None,
    /// `transfers.txt` forbids the change (type 3), or no walking link joins the two stops.
    NotPossible,
}

impl Status {
    /// The name the files and JSON use.
    pub fn name(self) -> &'static str {
        match self {
            Status::Made => "made",
            Status::None => "none",
            Status::NotPossible => "not_possible",
        }
    }
}

/// A departing route and direction.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Line {
    pub route: u32,
    /// `direction_id`, or the headsign where it is absent.
    pub direction: String,
}

/// One row: an arrival against one departing route and direction.
#[derive(Debug, Clone)]
pub struct Connection {
    /// Network event of the arrival.
    pub arrival_event: u32,
    pub arr_trip: TripIdx,
    pub arr_stop: StopIdx,
    /// Arrival, s on the network's timeline.
    pub arrival_s: u32,
    /// The arriving trip's route and direction, an index into [`Audit::lines`].
    pub arr_line: u32,
    /// The departing route and direction, an index into [`Audit::lines`].
    pub line: u32,
    /// The departure made (none unless the status is made).
    pub dep: Option<Dep>,
    pub change_s: Option<u32>,
    pub wait_s: Option<u32>,
    pub status: Status,
    /// Change time minus slack of the latest departure missed, and its trip.
    pub missed: Option<(u32, TripIdx)>,
}

/// A departure: its network event, trip, stop and time (s on the network's timeline).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Dep {
    pub event: u32,
    pub trip: TripIdx,
    pub stop: StopIdx,
    pub at: u32,
}

/// The settings of an audit.
#[derive(Debug, Clone, Copy)]
pub struct AuditSpec {
    /// Arrivals in `[start_s, end_s)` on the network's timeline.
    pub start_s: u32,
    pub end_s: u32,
    /// Departures up to this long after an arrival are considered, s.
    pub horizon_s: u32,
}

/// The station's stops and the stops they walk to.
pub fn station_stops(tt: &Timetable, p: &Params, own: &[StopIdx]) -> Vec<StopIdx> {
    let mut out: Vec<StopIdx> = own.to_vec();
    for &s in own {
        for f in tt.walk(WalkProfile::Standard).from(s) {
            if f.length_m as f64 <= p.max_walk_m {
                out.push(f.to);
            }
        }
    }
    out.sort_unstable();
    out.dedup();
    out
}

/// The line a trip runs as.
pub fn line_of(tt: &Timetable, t: TripIdx) -> Line {
    let trip = &tt.trips[t.idx()];
    let direction = match trip.direction {
        Some(d) => d.to_string(),
        None => trip.headsign.clone().unwrap_or_default(),
    };
    Line { route: trip.route.0, direction }
}

/// The change time from `a` (alighting trip `ta`) to `d` (boarding trip `td`); `None`: not possible.
pub fn change_time(tt: &Timetable, p: &Params, a: StopIdx, ta: TripIdx, d: StopIdx, td: TripIdx) -> Option<u32> {
    if a == d {
        return tt.change_s(a, ta, td, p.transfer_s());
    }
    tt.walk(WalkProfile::Standard)
        .from(a)
        .iter()
        .filter(|f| f.to == d && f.length_m as f64 <= p.max_walk_m)
        .map(|f| f.duration_s(p.walk_speed_mps))
        .min()
}

/// Whether the trips of two events belong to one block on one service day.
fn same_block(tt: &Timetable, net: &Network, a: u32, b: u32) -> bool {
    let (ia, ib) = (net.instance_of(a), net.instance_of(b));
    let (ta, tb) = (&tt.trips[ia.trip.idx()], &tt.trips[ib.trip.idx()]);
    ia.trip != ib.trip
        && ia.offset_s == ib.offset_s
        && ta.block.is_some()
        && ta.block == tb.block
        && tt.routes[ta.route.idx()].feed == tt.routes[tb.route.idx()].feed
}

/// Departures with pickup from `stops` on the network, as (time, event), in time order.
pub fn departures(net: &Network, stops: &[StopIdx]) -> Vec<(u32, u32)> {
    let mut out = Vec::new();
    for &s in stops {
        for pos in net.stop_first[s.idx()] as usize..net.stop_first[s.idx() + 1] as usize {
            let (t, e) = (net.by_stop_dep[pos], net.by_stop[pos]);
            if net.flags(e as usize) & (NO_PICKUP | LAST_OF_TRIP) == 0 {
                out.push((t, e));
            }
        }
    }
    out.sort_unstable();
    out
}

/// The rows of one station, and what there was to audit.
#[derive(Debug, Clone, Default)]
pub struct Audit {
    pub rows: Vec<Connection>,
    /// The routes and directions the rows name.
    pub lines: Vec<Line>,
    /// Arrivals in the window.
    pub arrivals: u32,
    /// Departures on the whole network (the date and the early hours of the next).
    pub departures: u32,
}

/// Audits the stops `stops` (from [`station_stops`]): one row per arrival in the window and
/// departing line, in order of arrival then line.
pub fn audit(tt: &Timetable, net: &Network, p: &Params, stops: &[StopIdx], spec: &AuditSpec) -> Audit {
    // Every departure (with pickup) from the station's stops on the date, by line: the lines to
    // audit are all of them, so one that does not leave within the horizon shows as `none`
    // rather than vanishing; the departures matched are those within reach of the window.
    let last = spec.end_s.saturating_add(spec.horizon_s);
    let mut line_ids: std::collections::HashMap<Line, usize> = std::collections::HashMap::new();
    let mut trip_line: std::collections::HashMap<TripIdx, usize> = std::collections::HashMap::new();
    let mut lines: Vec<Line> = Vec::new();
    let mut line_idx = |t: TripIdx, lines: &mut Vec<Line>| -> usize {
        *trip_line.entry(t).or_insert_with(|| {
            let l = line_of(tt, t);
            *line_ids.entry(l.clone()).or_insert_with(|| {
                lines.push(l);
                lines.len() - 1
            })
        })
    };
    // (time, event, line) of departures within reach, and of first departures of trips (block
    // continuations) in time order.
    let all = departures(net, stops);
    let mut deps: Vec<(u32, u32, usize)> = Vec::with_capacity(all.len());
    for &(t, e) in &all {
        let l = line_idx(net.instance_of(e).trip, &mut lines);
        if t >= spec.start_s && t <= last {
            deps.push((t, e, l));
        }
    }
    let mut by_line: Vec<Vec<(u32, u32)>> = vec![Vec::new(); lines.len()];
    for &(t, e, l) in &deps {
        by_line[l].push((t, e));
    }
    // Audit lines in a stable order (route, then direction).
    let mut order: Vec<usize> = (0..lines.len()).collect();
    order.sort_by(|&a, &b| lines[a].cmp(&lines[b]));

    let mut arrivals: Vec<(u32, u32)> = Vec::new();
    for &s in stops {
        for pos in net.stop_first[s.idx()] as usize..net.stop_first[s.idx() + 1] as usize {
            let e = net.by_stop[pos] as usize;
            let first_of_trip = e == 0 || net.flags(e - 1) & LAST_OF_TRIP != 0;
            let at = net.arr(e);
            if first_of_trip || net.flags(e) & NO_DROP_OFF != 0 || at < spec.start_s || at >= spec.end_s {
                continue;
            }
            arrivals.push((at, e as u32));
        }
    }
    arrivals.sort_unstable();
    let mut rows = Vec::new();
    for &(at, e) in &arrivals {
        let arr_trip = net.instance_of(e).trip;
        let own = line_idx(arr_trip, &mut lines);
        let a_stop = net.stop(e as usize);
        // The in-seat continuation: this trip ends here and the next trip of its block starts here.
        let seated = if net.flags(e as usize) & LAST_OF_TRIP != 0 && tt.trips[arr_trip.idx()].block.is_some() {
            let from = deps.partition_point(|d| d.0 < at);
            deps[from..]
                .iter()
                .take_while(|d| d.0 - at <= spec.horizon_s)
                .find(|d| (d.1 == 0 || net.flags(d.1 as usize - 1) & LAST_OF_TRIP != 0) && same_block(tt, net, e, d.1))
                .map(|d| d.2)
        } else {
            None
        };
        for &l in order.iter().filter(|&&l| l != own && Some(l) != seated) {
            let mut row = Connection {
                arrival_event: e,
                arr_trip,
                arr_stop: a_stop,
                arrival_s: at,
                arr_line: own as u32,
                line: l as u32,
                dep: None,
                change_s: None,
                wait_s: None,
                status: Status::None,
                missed: None,
            };
            let mine = &by_line[l];
            let mut any = false;
            let mut possible = false;
            for &(t, f) in &mine[mine.partition_point(|d| d.0 < at)..] {
                let slack = t - at;
                if slack > spec.horizon_s {
                    break;
                }
                any = true;
                let (d_trip, d_stop) = (net.instance_of(f).trip, net.stop(f as usize));
                let Some(ch) = change_time(tt, p, a_stop, arr_trip, d_stop, d_trip) else { continue };
                possible = true;
                row.change_s = Some(ch);
                if slack < ch {
                    row.missed = Some((ch - slack, d_trip));
                    continue;
                }
                row.dep = Some(Dep { event: f, trip: d_trip, stop: d_stop, at: t });
                row.wait_s = Some(slack);
                row.status = Status::Made;
                break;
            }
            if any && !possible {
                // Every departure within the horizon is forbidden or out of walking reach.
                row.status = Status::NotPossible;
            }
            rows.push(row);
        }
    }
    Audit { rows, lines, arrivals: arrivals.len() as u32, departures: all.len() as u32 }
}

/// Waits that count as made "within" these many minutes in the summaries (inclusive).
pub const WITHIN_MIN: [u32; 3] = [5, 10, 15];

/// Counts and waits over a set of rows.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Tally {
    /// Arrival × line rows.
    pub rows: u32,
    pub made: u32,
    pub none: u32,
    pub not_possible: u32,
    /// Made with a wait of at most [`WITHIN_MIN`] minutes.
    pub made_within: [u32; 3],
    /// A departure missed by at most the near-miss limit (the row may still be made later).
    pub near_misses: u32,
    /// Median and 90th percentile of the waits of made rows, s (Hyndman–Fan 7).
    pub median_wait_s: Option<f64>,
    pub p90_wait_s: Option<f64>,
}

impl Tally {
    pub fn of<'a>(rows: impl Iterator<Item = &'a Connection>, near_s: u32) -> Tally {
        let mut t = Tally::default();
        let mut waits = Vec::new();
        for r in rows {
            t.rows += 1;
            match r.status {
                Status::Made => t.made += 1,
                Status::None => t.none += 1,
                Status::NotPossible => t.not_possible += 1,
            }
            if let Some(w) = r.wait_s {
                waits.push(w);
                for (k, m) in WITHIN_MIN.iter().enumerate() {
                    if w <= m * 60 {
                        t.made_within[k] += 1;
                    }
                }
            }
            if r.missed.is_some_and(|m| m.0 <= near_s) {
                t.near_misses += 1;
            }
        }
        waits.sort_unstable();
        t.median_wait_s = percentile(&waits, 50.0);
        t.p90_wait_s = percentile(&waits, 90.0);
        t
    }
}

/// One pair of arriving and departing route/direction at a station.
#[derive(Debug, Clone, PartialEq)]
pub struct PairSummary {
    /// Indices into [`Audit::lines`].
    pub arr: u32,
    pub dep: u32,
    /// `rows` is the number of arrivals of `arr`.
    pub tally: Tally,
}

/// Per pair of arriving and departing line, in line order.
pub fn pair_summaries(a: &Audit, near_s: u32) -> Vec<PairSummary> {
    let mut groups: std::collections::HashMap<(u32, u32), Vec<&Connection>> = Default::default();
    for r in &a.rows {
        groups.entry((r.arr_line, r.line)).or_default().push(r);
    }
    let mut out: Vec<PairSummary> =
        groups.into_iter().map(|((arr, dep), v)| PairSummary { arr, dep, tally: Tally::of(v.into_iter(), near_s) }).collect();
    out.sort_by(|x, y| (&a.lines[x.arr as usize], &a.lines[x.dep as usize]).cmp(&(&a.lines[y.arr as usize], &a.lines[y.dep as usize])));
    out
}

/// Ranks (1 = first) by near misses, most first, and by median wait, longest first (a station
/// with no made connection last); ties keep the given order.
pub fn rank(tallies: &[Tally]) -> (Vec<u32>, Vec<u32>) {
    let mut by_near: Vec<usize> = (0..tallies.len()).collect();
    by_near.sort_by_key(|&i| std::cmp::Reverse(tallies[i].near_misses));
    let mut by_wait: Vec<usize> = (0..tallies.len()).collect();
    by_wait.sort_by(|&a, &b| {
        let w = |i: usize| tallies[i].median_wait_s.unwrap_or(f64::NEG_INFINITY);
        w(b).total_cmp(&w(a))
    });
    let mut near = vec![0; tallies.len()];
    let mut wait = vec![0; tallies.len()];
    for (k, &i) in by_near.iter().enumerate() {
        near[i] = k as u32 + 1;
    }
    for (k, &i) in by_wait.iter().enumerate() {
        wait[i] = k as u32 + 1;
    }
    (near, wait)
}

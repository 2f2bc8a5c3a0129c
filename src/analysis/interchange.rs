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
//! In-seat (block) continuations are not recognised: the timetable does not keep `block_id`.

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
    pub line: Line,
    /// The departure made (or, with status none, nothing).
    pub dep: Option<(TripIdx, StopIdx, u32)>,
    pub change_s: Option<u32>,
    pub wait_s: Option<u32>,
    pub status: Status,
    /// Change time minus slack of the latest departure missed, and its trip.
    pub missed: Option<(u32, TripIdx)>,
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
fn change(tt: &Timetable, p: &Params, a: StopIdx, ta: TripIdx, d: StopIdx, td: TripIdx) -> Option<u32> {
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

/// Audits the stops `stops` (from [`station_stops`]): one row per arrival in the window and
/// departing line, in order of arrival then line.
pub fn audit(tt: &Timetable, net: &Network, p: &Params, stops: &[StopIdx], spec: &AuditSpec) -> Vec<Connection> {
    // Every departure (with pickup) from the station's stops on the date, with its line: the
    // lines to audit are all of them, so one that does not leave within the horizon shows as
    // `none` rather than vanishing; the departures matched are those within reach of the window.
    let last = spec.end_s.saturating_add(spec.horizon_s);
    let mut day: Vec<(u32, u32, Line)> = Vec::new();
    for &s in stops {
        for pos in net.stop_first[s.idx()] as usize..net.stop_first[s.idx() + 1] as usize {
            let (t, e) = (net.by_stop_dep[pos], net.by_stop[pos]);
            if net.flags(e as usize) & (NO_PICKUP | LAST_OF_TRIP) == 0 {
                day.push((t, e, line_of(tt, net.instance_of(e).trip)));
            }
        }
    }
    let mut lines: Vec<Line> = day.iter().map(|d| d.2.clone()).collect();
    lines.sort();
    lines.dedup();
    day.retain(|d| d.0 >= spec.start_s && d.0 <= last);
    day.sort_unstable_by_key(|d| (d.0, d.1));
    let (deps, dep_line): (Vec<(u32, u32)>, Vec<Line>) = day.into_iter().map(|(t, e, l)| ((t, e), l)).unzip();

    let mut rows = Vec::new();
    let mut arrivals: Vec<(u32, u32)> = Vec::new();
    for &s in stops {
        let (a, b) = (net.stop_first[s.idx()] as usize, net.stop_first[s.idx() + 1] as usize);
        for pos in a..b {
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
    for &(at, e) in &arrivals {
        let inst_trip = net.instance_of(e).trip;
        let own = line_of(tt, inst_trip);
        let a_stop = net.stop(e as usize);
        let from = deps.partition_point(|d| d.0 < at);
        for line in lines.iter().filter(|l| **l != own) {
            let mut row = Connection {
                arrival_event: e,
                arr_trip: inst_trip,
                arr_stop: a_stop,
                arrival_s: at,
                line: line.clone(),
                dep: None,
                change_s: None,
                wait_s: None,
                status: Status::None,
                missed: None,
            };
            let mut possible = false;
            for (k, &(t, f)) in deps.iter().enumerate().skip(from) {
                let slack = t - at;
                if slack > spec.horizon_s {
                    break;
                }
                if dep_line[k] != *line {
                    continue;
                }
                let (d_trip, d_stop) = (net.instance_of(f).trip, net.stop(f as usize));
                let Some(ch) = change(tt, p, a_stop, inst_trip, d_stop, d_trip) else { continue };
                possible = true;
                if slack < ch {
                    row.missed = Some((ch - slack, d_trip));
                    row.change_s = Some(ch);
                    continue;
                }
                row.dep = Some((d_trip, d_stop, t));
                row.change_s = Some(ch);
                row.wait_s = Some(slack);
                row.status = Status::Made;
                break;
            }
            if !possible && row.status == Status::None {
                // Every departure within the horizon is forbidden or unreachable on foot; with
                // none at all, the line does not leave within the horizon (status none).
                let any =
                    deps.iter().enumerate().skip(from).take_while(|(_, d)| d.0 - at <= spec.horizon_s).any(|(k, _)| dep_line[k] == *line);
                if any {
                    row.status = Status::NotPossible;
                }
            }
            rows.push(row);
        }
    }
    rows
}

//! The front door of the interchange audit ([`crate::analysis::interchange`]): a station (or all),
//! a date and a window of arrivals in; rows with ids and service-day times, the summaries per
//! pair of routes and per station, and the departures for a time line out.

use serde::{Deserialize, Serialize};

use super::Engine;
use crate::analysis::interchange::{self as ia, audit, station_stops, AuditSpec, Line, Status, Tally};
use crate::error::QueryError;
use crate::graph::LAST_OF_TRIP;
use crate::journey::{Builder, Itinerary};
use crate::route::search::Endpoints;
use crate::timetable::{StopIdx, StopKind, TripIdx, NO_DROP_OFF, NO_PICKUP};

/// Departures this long after an arrival are considered when none is given, minutes (common
/// practice, no source).
pub const DEFAULT_HORIZON_MIN: u32 = 60;
/// A missed connection is a near miss when missed by at most this, minutes (common practice, no source).
pub const DEFAULT_NEAR_MISS_MIN: u32 = 2;

#[derive(Debug, Clone, Serialize, Deserialize, Default)]
#[serde(default, deny_unknown_fields)]
pub struct InterchangeQuery {
    /// A station or stop id, or `all`.
    pub station: String,
    pub date: String,
    /// "HH:MM-HH:MM" of arrivals; default the whole service day.
    pub window: Option<String>,
    pub horizon_min: Option<u32>,
    pub near_miss_min: Option<u32>,
}

/// Shared text: ids repeat across millions of rows, so each is held once.
pub type Text = std::sync::Arc<str>;

/// A service-day time: seconds from noon minus 12 h of the service date; shown (and serialised)
/// as HH:MM:SS, the hours passing 24 after midnight.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub struct ServiceTime(pub u32);

impl std::fmt::Display for ServiceTime {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let s = self.0;
        write!(f, "{:02}:{:02}:{:02}", s / 3600, s / 60 % 60, s % 60)
    }
}

impl Serialize for ServiceTime {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_str(self)
    }
}

/// One row of the audit, as the shells write it.
#[derive(Debug, Clone, Serialize)]
pub struct ConnectionRow {
    pub station: Text,
    pub arr_trip_id: Text,
    pub arr_route_id: Text,
    pub arr_direction: Text,
    pub arr_stop_id: Text,
    pub arrival: ServiceTime,
    pub dep_route_id: Text,
    pub dep_direction: Text,
    pub dep_trip_id: Option<Text>,
    pub dep_stop_id: Option<Text>,
    pub departure: Option<ServiceTime>,
    pub change_s: Option<u32>,
    pub wait_s: Option<u32>,
    pub status: Status,
    pub missed_by_s: Option<u32>,
    pub missed_trip_id: Option<Text>,
    /// Missed by at most the near-miss limit.
    pub near_miss: bool,
    /// Network events of the arrival and of the departure made, for [`Engine::connection_journey`].
    pub arr_event: u32,
    pub dep_event: Option<u32>,
}

/// One pair of arriving and departing route/direction at a station.
#[derive(Debug, Clone, Serialize)]
pub struct PairRow {
    pub station: String,
    pub arr_route_id: String,
    pub arr_route_name: String,
    pub arr_direction: String,
    pub dep_route_id: String,
    pub dep_route_name: String,
    pub dep_direction: String,
    /// Arrivals of the arriving route/direction in the window.
    pub arrivals: u32,
    pub made: u32,
    /// Share of the arrivals whose connection is made with a wait of at most 5, 10, 15 min (0–1).
    pub made_within_5: f64,
    pub made_within_10: f64,
    pub made_within_15: f64,
    /// Of the made connections, s (linear between closest ranks).
    pub median_wait_s: Option<f64>,
    pub p90_wait_s: Option<f64>,
    pub near_misses: u32,
}

/// One station's totals, and its place in the rankings.
#[derive(Debug, Clone, Serialize)]
pub struct StationRow {
    pub station: String,
    pub name: String,
    pub lat: f64,
    pub lon: f64,
    /// Arrivals in the window.
    pub arrivals: u32,
    /// Arrival × departing route/direction rows.
    pub connections: u32,
    pub made: u32,
    pub none: u32,
    pub not_possible: u32,
    pub near_misses: u32,
    pub median_wait_s: Option<f64>,
    pub p90_wait_s: Option<f64>,
    /// 1 = most near misses.
    pub rank_near_misses: u32,
    /// 1 = longest median wait.
    pub rank_median_wait: u32,
}

/// A departure for the time line of one station.
#[derive(Debug, Clone, Serialize)]
pub struct DepartureMark {
    pub route_id: String,
    pub direction: String,
    pub trip_id: String,
    pub stop_id: String,
    /// Service-day time, HH:MM:SS.
    pub departure: String,
}

/// The whole audit.
#[derive(Debug, Clone, Serialize, Default)]
pub struct InterchangeReport {
    pub date: String,
    /// Service-day times of the window of arrivals, HH:MM:SS.
    pub window: [String; 2],
    pub horizon_min: u32,
    pub near_miss_min: u32,
    /// Empty when the rows were handed on as they came ([`Engine::interchange_with`]).
    pub rows: Vec<ConnectionRow>,
    pub pairs: Vec<PairRow>,
    /// Ranked by near misses (most first).
    pub stations: Vec<StationRow>,
    /// One station only: its departures from the window's start to its end plus the horizon.
    pub departures: Vec<DepartureMark>,
    /// Why there is nothing to show, when there is not.
    pub note: Option<String>,
}

/// Service-day time text, HH:MM:SS.
pub fn service_time(s: u32) -> String {
    ServiceTime(s).to_string()
}

/// Each id made shared text once.
struct Ids<'a> {
    tt: &'a crate::timetable::Timetable,
    trips: Vec<Option<Text>>,
    stops: Vec<Option<Text>>,
}

impl Ids<'_> {
    fn trip(&mut self, t: TripIdx) -> Text {
        self.trips[t.idx()].get_or_insert_with(|| self.tt.trips[t.idx()].id.as_str().into()).clone()
    }
    fn stop(&mut self, s: StopIdx) -> Text {
        self.stops[s.idx()].get_or_insert_with(|| self.tt.stop(s).id.as_str().into()).clone()
    }
}

impl Engine {
    /// The interchange audit of one station, or of every station (`all`), rows kept.
    pub fn interchange(&mut self, q: &InterchangeQuery) -> Result<InterchangeReport, QueryError> {
        let mut rows = Vec::new();
        let mut r = self
            .interchange_with(q, &mut |_, _, chunk| {
                rows.extend_from_slice(chunk);
                true
            })?
            .expect("never cancelled");
        r.rows = rows;
        Ok(r)
    }

    /// The audit, handing each station's rows to `each(done, total, rows)` as it goes (stations
    /// in id order); `each` returning false cancels (`Ok(None)`). Every bad value is reported
    /// before any work.
    pub fn interchange_with(
        &mut self,
        q: &InterchangeQuery,
        each: &mut dyn FnMut(usize, usize, &[ConnectionRow]) -> bool,
    ) -> Result<Option<InterchangeReport>, QueryError> {
        if self.tt.feeds.is_empty() {
            return Err(QueryError::NoFeed);
        }
        let date = self.analysis_date(&q.date)?;
        let span = self.span(date, q.window.as_deref())?;
        let horizon_min = q.horizon_min.unwrap_or(DEFAULT_HORIZON_MIN);
        let near_miss_min = q.near_miss_min.unwrap_or(DEFAULT_NEAR_MISS_MIN);
        if horizon_min == 0 || horizon_min > 24 * 60 {
            return Err(QueryError::BadOption(format!("horizon {horizon_min} min: give 1 to 1440 minutes")));
        }
        if near_miss_min > horizon_min {
            return Err(QueryError::BadOption(format!(
                "near-miss limit {near_miss_min} min is longer than the horizon, {horizon_min} min"
            )));
        }
        let (horizon_s, near_s) = (horizon_min * 60, near_miss_min * 60);
        let all = q.station == "all";
        let stations = self.interchange_stations(&q.station)?;
        let p = self.params_for(&super::PlanQuery::default())?;
        self.network(date);
        let stop_sets = self.station_stop_sets(&stations, &p);
        let net = self.net.as_ref().expect("network built");
        let tt = &self.tt;
        let route = |l: &Line| &tt.routes[l.route as usize];
        let route_name = |l: &Line| {
            let r = route(l);
            if r.short_name.is_empty() {
                r.long_name.clone()
            } else {
                r.short_name.clone()
            }
        };
        let mut ids = Ids { tt, trips: vec![None; tt.trips.len()], stops: vec![None; tt.stops.len()] };
        let mut report = InterchangeReport {
            date: date.to_string(),
            window: [service_time(span.start_s), service_time(span.end_s)],
            horizon_min,
            near_miss_min,
            ..Default::default()
        };
        let mut tallies = Vec::new();
        let (mut arrivals_seen, mut departures_seen) = (0u32, 0u32);
        let total = stations.len();
        for (done, &st) in stations.iter().enumerate() {
            let stops = &stop_sets[done];
            let a = audit(tt, net, &p, stops, &AuditSpec { start_s: span.start_s, end_s: span.end_s, horizon_s });
            arrivals_seen += a.arrivals;
            departures_seen += a.departures;
            let station = ids.stop(st);
            let line_text: Vec<(Text, Text)> = a.lines.iter().map(|l| (route(l).id.as_str().into(), l.direction.as_str().into())).collect();
            let rows: Vec<ConnectionRow> = a
                .rows
                .iter()
                .map(|r| {
                    let (arr, dep) = (&line_text[r.arr_line as usize], &line_text[r.line as usize]);
                    ConnectionRow {
                        station: station.clone(),
                        arr_trip_id: ids.trip(r.arr_trip),
                        arr_route_id: arr.0.clone(),
                        arr_direction: arr.1.clone(),
                        arr_stop_id: ids.stop(r.arr_stop),
                        arrival: ServiceTime(r.arrival_s),
                        dep_route_id: dep.0.clone(),
                        dep_direction: dep.1.clone(),
                        dep_trip_id: r.dep.map(|d| ids.trip(d.trip)),
                        dep_stop_id: r.dep.map(|d| ids.stop(d.stop)),
                        departure: r.dep.map(|d| ServiceTime(d.at)),
                        change_s: r.change_s,
                        wait_s: r.wait_s,
                        status: r.status,
                        missed_by_s: r.missed.map(|m| m.0),
                        missed_trip_id: r.missed.map(|m| ids.trip(m.1)),
                        near_miss: r.missed.is_some_and(|m| m.0 <= near_s),
                        arr_event: r.arrival_event,
                        dep_event: r.dep.map(|d| d.event),
                    }
                })
                .collect();
            if !each(done + 1, total, &rows) {
                return Ok(None);
            }
            for s in ia::pair_summaries(&a, near_s) {
                let share = |k: usize| if s.tally.rows == 0 { 0.0 } else { s.tally.made_within[k] as f64 / s.tally.rows as f64 };
                let (arr, dep) = (&a.lines[s.arr as usize], &a.lines[s.dep as usize]);
                report.pairs.push(PairRow {
                    station: station.to_string(),
                    arr_route_id: route(arr).id.clone(),
                    arr_route_name: route_name(arr),
                    arr_direction: arr.direction.clone(),
                    dep_route_id: route(dep).id.clone(),
                    dep_route_name: route_name(dep),
                    dep_direction: dep.direction.clone(),
                    arrivals: s.tally.rows,
                    made: s.tally.made,
                    made_within_5: share(0),
                    made_within_10: share(1),
                    made_within_15: share(2),
                    median_wait_s: s.tally.median_wait_s,
                    p90_wait_s: s.tally.p90_wait_s,
                    near_misses: s.tally.near_misses,
                });
            }
            let t = Tally::of(a.rows.iter(), near_s);
            let s = tt.stop(st);
            report.stations.push(StationRow {
                station: station.to_string(),
                name: s.name.clone(),
                lat: s.lat,
                lon: s.lon,
                arrivals: a.arrivals,
                connections: t.rows,
                made: t.made,
                none: t.none,
                not_possible: t.not_possible,
                near_misses: t.near_misses,
                median_wait_s: t.median_wait_s,
                p90_wait_s: t.p90_wait_s,
                rank_near_misses: 0,
                rank_median_wait: 0,
            });
            tallies.push(t);
            if !all {
                let last = span.end_s.saturating_add(horizon_s);
                report.departures = ia::departures(net, stops)
                    .into_iter()
                    .filter(|&(t, _)| t >= span.start_s && t <= last)
                    .map(|(t, e)| {
                        let trip = net.instance_of(e).trip;
                        let l = ia::line_of(tt, trip);
                        DepartureMark {
                            route_id: route(&l).id.clone(),
                            direction: l.direction,
                            trip_id: tt.trips[trip.idx()].id.clone(),
                            stop_id: tt.stop(net.stop(e as usize)).id.clone(),
                            departure: service_time(t),
                        }
                    })
                    .collect();
            }
        }
        let (near, wait) = ia::rank(&tallies);
        for (k, s) in report.stations.iter_mut().enumerate() {
            s.rank_near_misses = near[k];
            s.rank_median_wait = wait[k];
        }
        report.stations.sort_by_key(|s| s.rank_near_misses);
        if report.stations.iter().all(|s| s.connections == 0) {
            let [from, to] = &report.window;
            let at = if all { "any station".to_string() } else { tt.stop(stations[0]).name.clone() };
            report.note = Some(if stations.is_empty() {
                "The loaded feeds have no station (no stop with location_type 1): audit a stop by its id instead.".to_string()
            } else if departures_seen == 0 {
                format!("No trip leaves {at} on {date}: there is no connection to audit.")
            } else if arrivals_seen == 0 {
                format!("No trip arrives at {at} between {from} and {to} on {date}: there is no connection to audit.")
            } else {
                format!("Only one route and direction calls at {at} between {from} and {to} on {date}: there is no connection to audit.")
            });
        }
        Ok(Some(report))
    }

    /// The stations `station` names: every station (`all`, in id order) or the one place.
    pub fn interchange_stations(&self, station: &str) -> Result<Vec<StopIdx>, QueryError> {
        if station != "all" {
            return Ok(vec![self.places.stops[self.resolve_place(station)?]]);
        }
        let mut v: Vec<StopIdx> =
            (0..self.places.len()).map(|p| self.places.stops[p]).filter(|&s| self.tt.stop(s).kind == StopKind::Station).collect();
        v.sort_by(|a, b| self.tt.stop(*a).id.cmp(&self.tt.stop(*b).id));
        Ok(v)
    }

    /// The stops each station (or stop) is audited over: its own stops (the stop itself outside
    /// any station) and the stops they walk to ([`station_stops`]).
    pub fn station_stop_sets(&self, stations: &[StopIdx], p: &crate::route::Params) -> Vec<Vec<StopIdx>> {
        let tt = &self.tt;
        // Each stop under its station, found once for all the stations.
        let mut within: std::collections::HashMap<StopIdx, Vec<StopIdx>> = stations.iter().map(|&st| (st, Vec::new())).collect();
        for c in (0..tt.stops.len() as u32).map(StopIdx) {
            let st = tt.station_of(c);
            if st != c {
                if let Some(v) = within.get_mut(&st) {
                    v.push(c);
                }
            }
        }
        stations
            .iter()
            .map(|&st| {
                let own = if tt.stop(st).kind == StopKind::Station { within.get(&st).cloned().unwrap_or_default() } else { vec![st] };
                station_stops(tt, p, &own)
            })
            .collect()
    }

    /// The two-ride journey of a made connection on `date` (its row's `arr_event` and
    /// `dep_event`): the arriving trip from the stop before the arrival where boarding is
    /// allowed, the change, and the departing trip to its next stop where alighting is allowed.
    pub fn connection_journey(&mut self, date: &str, arr_event: u32, dep_event: u32) -> Result<Itinerary, QueryError> {
        let date = self.analysis_date(date)?;
        let p = self.params_for(&super::PlanQuery::default())?;
        self.network(date);
        let net = self.net.as_ref().expect("network built");
        let n = net.events() as u32;
        let bad = |m: &str| QueryError::BadOption(format!("connection {arr_event}→{dep_event}: {m}"));
        if arr_event >= n || dep_event >= n {
            return Err(bad("no such event on this date's network (was it audited on another date?)"));
        }
        let flags = |e: u32| net.flags(e as usize);
        // The nearest earlier event of the arriving trip with pickup, and the nearest later one
        // of the departing trip with drop-off (a trip's events are consecutive; its last one is
        // flagged).
        let mut board = None;
        let mut e = arr_event;
        while e > 0 && flags(e - 1) & LAST_OF_TRIP == 0 {
            e -= 1;
            if flags(e) & NO_PICKUP == 0 {
                board = Some(e);
                break;
            }
        }
        let board = board.ok_or_else(|| bad("no earlier stop of the arriving trip where boarding is allowed"))?;
        if flags(dep_event) & (NO_PICKUP | LAST_OF_TRIP) != 0 {
            return Err(bad("boarding is not allowed at the departure"));
        }
        let mut alight = None;
        let mut e = dep_event;
        while flags(e) & LAST_OF_TRIP == 0 && e + 1 < n {
            e += 1;
            if flags(e) & NO_DROP_OFF == 0 {
                alight = Some(e);
                break;
            }
        }
        let alight = alight.ok_or_else(|| bad("no later stop of the departing trip where alighting is allowed"))?;
        let ends = Endpoints { origins: vec![net.stop(board as usize)], targets: vec![net.stop(alight as usize)] };
        let b = Builder { tt: &self.tt, net, params: &p, ends: &ends, walk_cfg: &self.walk_cfg, query_s: net.dep(board as usize) };
        Ok(b.connection(board, arr_event, dep_event, alight))
    }
}

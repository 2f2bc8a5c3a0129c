//! The front door of the interchange audit ([`crate::analysis::interchange`]): a station (or all),
//! a date and a window of arrivals in; rows with ids and service-day times out.

use serde::{Deserialize, Serialize};

use super::Engine;
use crate::analysis::interchange::{audit, station_stops, AuditSpec, Status};
use crate::error::QueryError;
use crate::timetable::calendar::parse_date;
use crate::timetable::{StopIdx, StopKind};

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

/// One row of the audit, as the shells write it.
#[derive(Debug, Clone, Serialize)]
pub struct ConnectionRow {
    pub station: String,
    pub arr_trip_id: String,
    pub arr_route_id: String,
    pub arr_stop_id: String,
    /// Service-day time, HH:MM:SS (may pass 24:00:00).
    pub arrival: String,
    pub dep_route_id: String,
    pub dep_direction: String,
    pub dep_trip_id: Option<String>,
    pub dep_stop_id: Option<String>,
    pub departure: Option<String>,
    pub change_s: Option<u32>,
    pub wait_s: Option<u32>,
    pub status: Status,
    pub missed_by_s: Option<u32>,
    pub missed_trip_id: Option<String>,
    /// Missed by at most the near-miss limit.
    pub near_miss: bool,
}

/// Service-day time text: seconds from the date's noon-minus-12 h, HH:MM:SS.
pub fn service_time(s: u32) -> String {
    format!("{:02}:{:02}:{:02}", s / 3600, s / 60 % 60, s % 60)
}

impl Engine {
    /// The interchange audit of one station, or of every station (`all`).
    pub fn interchange(&mut self, q: &InterchangeQuery) -> Result<Vec<ConnectionRow>, QueryError> {
        if self.tt.feeds.is_empty() {
            return Err(QueryError::NoFeed);
        }
        let date = parse_date(&q.date).ok_or_else(|| QueryError::BadDate(q.date.clone()))?;
        let span = self.span(date, q.window.as_deref())?;
        let horizon_s = q.horizon_min.unwrap_or(DEFAULT_HORIZON_MIN) * 60;
        let near_s = q.near_miss_min.unwrap_or(DEFAULT_NEAR_MISS_MIN) * 60;
        let stations: Vec<StopIdx> = if q.station == "all" {
            (0..self.places.len())
                .filter(|&p| self.tt.stop(self.places.stops[p]).kind == StopKind::Station)
                .map(|p| self.places.stops[p])
                .collect()
        } else {
            vec![self.places.stops[self.resolve_place(&q.station)?]]
        };
        let p = self.params_for(&super::PlanQuery::default())?;
        self.network(date);
        let net = self.net.as_ref().expect("network built");
        let tt = &self.tt;
        // Each stop under its station, found once for all the stations audited.
        let mut within: std::collections::HashMap<StopIdx, Vec<StopIdx>> = stations.iter().map(|&st| (st, Vec::new())).collect();
        for c in (0..tt.stops.len() as u32).map(StopIdx) {
            let st = tt.station_of(c);
            if st != c {
                if let Some(v) = within.get_mut(&st) {
                    v.push(c);
                }
            }
        }
        let mut out = Vec::new();
        for st in stations {
            let own: Vec<StopIdx> =
                if tt.stop(st).kind == StopKind::Station { std::mem::take(within.get_mut(&st).expect("listed")) } else { vec![st] };
            let stops = station_stops(tt, &p, &own);
            let rows = audit(tt, net, &p, &stops, &AuditSpec { start_s: span.start_s, end_s: span.end_s, horizon_s });
            let route_id = |t: crate::timetable::TripIdx| tt.routes[tt.trips[t.idx()].route.idx()].id.clone();
            for r in rows {
                out.push(ConnectionRow {
                    station: tt.stop(st).id.clone(),
                    arr_trip_id: tt.trips[r.arr_trip.idx()].id.clone(),
                    arr_route_id: route_id(r.arr_trip),
                    arr_stop_id: tt.stop(r.arr_stop).id.clone(),
                    arrival: service_time(r.arrival_s),
                    dep_route_id: tt.routes[r.line.route as usize].id.clone(),
                    dep_direction: r.line.direction.clone(),
                    dep_trip_id: r.dep.map(|d| tt.trips[d.0.idx()].id.clone()),
                    dep_stop_id: r.dep.map(|d| tt.stop(d.1).id.clone()),
                    departure: r.dep.map(|d| service_time(d.2)),
                    change_s: r.change_s,
                    wait_s: r.wait_s,
                    status: r.status,
                    missed_by_s: r.missed.map(|m| m.0),
                    missed_trip_id: r.missed.map(|m| tt.trips[m.1.idx()].id.clone()),
                    near_miss: r.missed.is_some_and(|m| m.0 <= near_s),
                });
            }
        }
        Ok(out)
    }
}

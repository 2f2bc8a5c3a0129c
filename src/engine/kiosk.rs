//! The kiosk board: from one stop, at one instant, the next departures by line and the next
//! journeys to a few destinations, standard and step-free.
//!
//! The instant is a clock reading (milliseconds since the Unix epoch), not a local clock time:
//! the service date is the local calendar date of the instant in the first feed's time zone (the
//! day before when the instant falls before that date's origin, "noon minus 12 h"), and every
//! time shown is the instant of a departure turned back into local clock time through the tz
//! database (chrono-tz). So a board is right across a clock change, including the hour that
//! repeats when clocks go back, where a local clock reading alone would be ambiguous.

use chrono::{DateTime, Duration, NaiveDate, Utc};
use serde::Serialize;

use super::{Engine, NoJourney, PlanQuery};
use crate::error::QueryError;
use crate::journey::Itinerary;
use crate::route::search::StepFree;
use crate::timetable::calendar::day_origin;
use crate::timetable::{Access, Mode, StopIdx, StopKind, NO_PICKUP};

/// What a board shows; defaults are the kiosk's.
#[derive(Debug, Clone)]
pub struct BoardQuery {
    pub stop: String,
    pub destinations: Vec<String>,
    /// The device clock, ms since 1970-01-01T00:00:00Z.
    pub now_ms: i64,
    /// How far ahead departures are listed, minutes.
    pub horizon_min: u32,
    /// Departures shown per line (route, direction and headsign).
    pub per_line: usize,
    /// Journeys shown per destination and profile.
    pub journeys: usize,
}

impl BoardQuery {
    pub fn new(stop: &str, now_ms: i64) -> BoardQuery {
        BoardQuery { stop: stop.to_string(), destinations: Vec::new(), now_ms, horizon_min: 90, per_line: 3, journeys: 2 }
    }
}

/// Whether the loaded dates cover the instant's service date.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Coverage {
    Covered,
    /// The service date is before the first date loaded.
    NotYet,
    /// The service date is after the last date loaded: no times are shown.
    RunOut,
}

#[derive(Debug, Clone, Serialize)]
pub struct BoardDeparture {
    /// Local clock time of the departure, HH:MM.
    pub time: String,
    /// Whole minutes from the instant to the departure, rounded down.
    pub in_min: u32,
    /// The departure, ms since the Unix epoch.
    pub at_ms: i64,
    pub stop_id: String,
    pub platform: Option<String>,
    /// Trip and stop step-free status (the less accessible of the two), after overrides.
    pub step_free: Access,
    pub trip_id: String,
}

/// One line of the board: a route in one direction towards one headsign.
#[derive(Debug, Clone, Serialize)]
pub struct BoardLine {
    pub route_id: String,
    /// The route's short name, else its long name.
    pub name: String,
    pub mode: Mode,
    pub color: String,
    pub text_color: String,
    pub direction: Option<u8>,
    pub headsign: String,
    pub departures: Vec<BoardDeparture>,
}

#[derive(Debug, Clone, Serialize)]
pub struct BoardDestination {
    pub stop_id: String,
    pub name: String,
    pub standard: Vec<Itinerary>,
    pub standard_none: Option<NoJourney>,
    /// Strict step-free: only elements the feed marks accessible.
    pub step_free: Vec<Itinerary>,
    pub step_free_none: Option<NoJourney>,
    /// First step-free arrival minus first standard arrival, s.
    pub step_free_extra_s: Option<i64>,
}

#[derive(Debug, Clone, Serialize)]
pub struct Board {
    pub stop_id: String,
    pub stop_name: String,
    pub timezone: String,
    /// The instant as local clock time, HH:MM, and its local calendar date.
    pub now: String,
    pub today: String,
    pub service_date: String,
    /// First and last service date loaded.
    pub first_date: String,
    pub last_date: String,
    pub coverage: Coverage,
    pub lines: Vec<BoardLine>,
    pub destinations: Vec<BoardDestination>,
}

fn instant(ms: i64) -> Result<DateTime<Utc>, QueryError> {
    DateTime::from_timestamp_millis(ms).ok_or_else(|| QueryError::BadOption(format!("clock reading {ms} ms is out of range")))
}

impl Engine {
    /// The board at `q.now_ms`. Unknown stops are refused with suggestions.
    pub fn board(&mut self, q: &BoardQuery) -> Result<Board, QueryError> {
        let Some((first, last)) = self.tt.date_range() else { return Err(QueryError::NoFeed) };
        let stop = self.resolve(&q.stop)?;
        let dests = q.destinations.iter().map(|d| self.resolve(d)).collect::<Result<Vec<_>, _>>()?;
        let tz = self.tt.feeds[0].timezone;
        let now = instant(q.now_ms)?;
        let local = now.with_timezone(&tz);
        let today = local.date_naive();
        let date: NaiveDate = if now < day_origin(tz, today) { today - Duration::days(1) } else { today };
        let coverage = if date > last {
            Coverage::RunOut
        } else if date < first {
            Coverage::NotYet
        } else {
            Coverage::Covered
        };
        let st = self.tt.stop(stop);
        let mut board = Board {
            stop_id: st.id.clone(),
            stop_name: st.name.clone(),
            timezone: tz.name().to_string(),
            now: local.format("%H:%M").to_string(),
            today: today.to_string(),
            service_date: date.to_string(),
            first_date: first.to_string(),
            last_date: last.to_string(),
            coverage,
            lines: Vec::new(),
            destinations: Vec::new(),
        };
        if coverage != Coverage::Covered {
            return Ok(board);
        }
        let origin = day_origin(tz, date);
        let now_s = (now - origin).num_seconds().max(0) as u32;
        board.lines = self.departures(stop, date, now_s, q);
        for d in dests {
            board.destinations.push(self.destination(stop, d, date, now_s, q.journeys)?);
        }
        Ok(board)
    }

    fn departures(&mut self, stop: StopIdx, date: NaiveDate, now_s: u32, q: &BoardQuery) -> Vec<BoardLine> {
        // A station's platforms and boarding areas (at any depth), else the stop itself.
        let tt = &self.tt;
        let stops: Vec<StopIdx> = if tt.stop(stop).kind == StopKind::Station {
            (0..tt.stops.len() as u32)
                .map(StopIdx)
                .filter(|&s| {
                    s != stop && tt.station_of(s) == stop && matches!(tt.stop(s).kind, StopKind::Platform | StopKind::BoardingArea)
                })
                .collect()
        } else {
            vec![stop]
        };
        self.network(date);
        let (tt, net) = (&self.tt, self.net.as_ref().expect("network built"));
        let (tz, origin) = (net.tz, net.origin());
        let until = now_s.saturating_add(q.horizon_min * 60);
        // (route, direction, headsign) → line index
        let mut lines: Vec<BoardLine> = Vec::new();
        let mut keys: Vec<(u32, Option<u8>, String)> = Vec::new();
        let mut found: Vec<(u32, u32, StopIdx)> = Vec::new();
        for &s in &stops {
            let (a, b) = (net.stop_first[s.idx()] as usize, net.stop_first[s.idx() + 1] as usize);
            let deps = &net.by_stop_dep[a..b];
            let from = deps.partition_point(|&d| d < now_s);
            for p in a + from..b {
                if net.by_stop_dep[p] > until {
                    break;
                }
                found.push((net.by_stop_dep[p], net.by_stop[p], s));
            }
        }
        found.sort_unstable();
        for (dep, e, s) in found {
            if net.flags(e as usize) & NO_PICKUP != 0 {
                continue;
            }
            let inst = net.instance_of(e);
            let trip = tt.trip(inst.trip);
            if inst.skip + (e - inst.first) + 1 >= trip.len {
                continue; // the trip ends here: nothing leaves
            }
            let route = &tt.routes[trip.route.idx()];
            let headsign = trip.headsign.clone().unwrap_or_else(|| tt.stop(tt.ev_stop[trip.events().end - 1]).name.clone());
            let key = (trip.route.0, trip.direction, headsign);
            let i = match keys.iter().position(|k| *k == key) {
                Some(i) => i,
                None => {
                    keys.push(key.clone());
                    lines.push(BoardLine {
                        route_id: route.id.clone(),
                        name: if route.short_name.is_empty() { route.long_name.clone() } else { route.short_name.clone() },
                        mode: route.mode,
                        color: route.color.clone(),
                        text_color: route.text_color.clone(),
                        direction: trip.direction,
                        headsign: key.2,
                        departures: Vec::new(),
                    });
                    lines.len() - 1
                }
            };
            if lines[i].departures.len() >= q.per_line {
                continue;
            }
            let at = origin + Duration::seconds(dep as i64);
            let stp = tt.stop(s);
            lines[i].departures.push(BoardDeparture {
                time: at.with_timezone(&tz).format("%H:%M").to_string(),
                in_min: (dep - now_s) / 60,
                at_ms: at.timestamp_millis(),
                stop_id: stp.id.clone(),
                platform: stp.platform_code.clone(),
                step_free: tt.trip_access(inst.trip).worst(tt.stop_access(s)),
                trip_id: trip.id.clone(),
            });
        }
        lines
    }

    fn destination(&mut self, from: StopIdx, to: StopIdx, date: NaiveDate, now_s: u32, k: usize) -> Result<BoardDestination, QueryError> {
        let (from_id, to_id) = (self.tt.stop(from).id.clone(), self.tt.stop(to).id.clone());
        let q = |step_free| PlanQuery { from: from_id.clone(), to: to_id.clone(), step_free, next: Some(k), ..PlanQuery::default() };
        let standard = self.plan_at(&q(StepFree::Off), date, now_s)?;
        let step_free = self.plan_at(&q(StepFree::Strict), date, now_s)?;
        Ok(BoardDestination {
            stop_id: to_id,
            name: self.tt.stop(to).name.clone(),
            standard: standard.journeys,
            standard_none: standard.nothing_found,
            step_free: step_free.journeys,
            step_free_none: step_free.nothing_found,
            step_free_extra_s: step_free.step_free_extra_s,
        })
    }
}

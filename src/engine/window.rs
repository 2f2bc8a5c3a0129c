//! The front door for questions about a window of departures: reach over the window from one
//! place, the travel-time profile of one pair (the saw-tooth of waiting), and the setting of a
//! travel-time matrix whose origins the shells run (one thread or Web Worker each). The
//! definitions are in [`crate::analysis::window`]; the validation of a request happens here,
//! before any search.

use chrono::NaiveDate;
use serde::{Deserialize, Serialize};

use super::{Engine, StopMatch};
use crate::analysis::window::{summarise, Destinations, PairStats, TravelTimes, WindowRun, WindowSpec, NONE};
use crate::error::QueryError;
use crate::route::profile::MAX_RIDES_CAP;
use crate::route::search::{Params, StepFree};
use crate::timetable::calendar::{clock_to_seconds, parse_clock, parse_date, seconds_to_clock};
use crate::timetable::StopIdx;

/// Percentiles reported when none are asked for.
pub const DEFAULT_PERCENTILES: [f64; 2] = [50.0, 90.0];
/// Longest travel time counted over a window when none is given, minutes (common practice for
/// a city's travel-time analyses, no source).
pub const DEFAULT_MAX_DURATION_MIN: u32 = 120;

/// A window request as the CLI, the page and the Python package send it.
#[derive(Debug, Clone, Serialize, Deserialize, Default)]
#[serde(default, deny_unknown_fields)]
pub struct WindowQuery {
    /// YYYY-MM-DD
    pub date: String,
    /// "HH:MM-HH:MM", local time; the end is not sampled; "24:00" may end a window.
    pub window: String,
    /// Minutes between sampled departures; default 1.
    pub step_min: Option<u32>,
    /// Percentiles to report, each 0–100; default 50 and 90.
    pub percentiles: Option<Vec<f64>>,
    /// Cut-off for the share within it and the cumulative opportunities, minutes (inclusive).
    pub cutoff_min: Option<u32>,
    /// At most this many rides (0: walking only).
    pub max_rides: Option<u8>,
    /// Longest travel time counted, minutes; default 120 (raised to the cut-off when that is longer).
    pub max_duration_min: Option<u32>,
    pub step_free: StepFree,
    /// Walking speed, m/s.
    pub walking_speed_mps: Option<f64>,
    /// Longest walking link, m.
    pub walk_limit_m: Option<f64>,
}

/// A checked window request: the date, the departures and what to report, the routing parameters.
#[derive(Debug, Clone)]
pub struct WindowSetting {
    pub date: NaiveDate,
    pub spec: WindowSpec,
    pub p: Params,
    pub step_min: u32,
}

/// What is reported for one place over the window.
#[derive(Debug, Clone, Serialize)]
pub struct PlaceTimes {
    pub stop_id: String,
    pub name: String,
    pub station: bool,
    pub lat: f64,
    pub lon: f64,
    pub min_s: Option<u32>,
    pub percentiles_s: Vec<Option<f64>>,
    pub share_within_cutoff: Option<f64>,
    pub departures_reached: u32,
}

/// Reach over a window from one place.
#[derive(Debug, Clone, Serialize)]
pub struct WindowReach {
    pub from: StopMatch,
    pub date: String,
    pub window: String,
    pub step_min: u32,
    /// Departures sampled.
    pub departures: u32,
    pub percentiles: Vec<f64>,
    pub cutoff_min: Option<u32>,
    pub max_duration_min: u32,
    pub max_rides: Option<u8>,
    /// Every place reached at some departure (the origin left out), quickest first.
    pub places: Vec<PlaceTimes>,
}

/// One sampled departure of a pair's profile.
#[derive(Debug, Clone, Serialize)]
pub struct DepartureTime {
    /// Local clock, "HH:MM".
    pub depart: String,
    pub depart_s: u32,
    /// None: no journey within the longest duration.
    pub travel_s: Option<u32>,
}

/// The travel time of one pair at every sampled departure, and its summary.
#[derive(Debug, Clone, Serialize)]
pub struct PairProfile {
    pub from: StopMatch,
    pub to: StopMatch,
    pub date: String,
    pub window: String,
    pub percentiles: Vec<f64>,
    pub cutoff_min: Option<u32>,
    pub max_duration_min: u32,
    pub departures: Vec<DepartureTime>,
    pub min_s: Option<u32>,
    pub percentiles_s: Vec<Option<f64>>,
    pub share_within_cutoff: Option<f64>,
}

/// A window "HH:MM-HH:MM" as minutes of the day, start < end ≤ 24:00.
pub fn parse_window(text: &str) -> Result<(u32, u32), QueryError> {
    let bad = |why: &str| QueryError::BadOption(format!("window {text:?} {why}"));
    let (a, b) = text.split_once('-').ok_or_else(|| bad("is not HH:MM-HH:MM"))?;
    let minutes = |s: &str| -> Option<u32> {
        if s.trim() == "24:00" {
            return Some(24 * 60);
        }
        parse_clock(s).map(|(h, m)| h * 60 + m)
    };
    let minutes = |s: &str| {
        minutes(s).ok_or_else(|| match s.trim().split(':').next().and_then(|h| h.parse::<u32>().ok()) {
            Some(h) if h >= 24 => bad("is outside the service day, 00:00-24:00 (a time after midnight belongs to the next date)"),
            _ => bad("is not HH:MM-HH:MM"),
        })
    };
    let (start, end) = (minutes(a)?, minutes(b)?);
    if end <= start {
        return Err(bad("ends before it starts (or when it starts); a window past midnight is not supported, split it in two"));
    }
    Ok((start, end))
}

/// A window of the date as minutes of the day and as `[start_s, end_s)` on the date's network
/// timeline (local clock in the first feed's zone).
#[derive(Debug, Clone, Copy)]
pub struct Span {
    pub start_min: u32,
    pub end_min: u32,
    pub start_s: u32,
    pub end_s: u32,
}

impl Engine {
    /// A date for an analysis: parsed, and within the loaded feeds' dates.
    pub fn analysis_date(&self, text: &str) -> Result<NaiveDate, QueryError> {
        let date = parse_date(text).ok_or_else(|| QueryError::BadDate(text.to_string()))?;
        if let Some((first, last)) = self.tt.date_range() {
            if date < first || date > last {
                return Err(QueryError::BadOption(format!("date {date} is outside the loaded feeds' dates, {first} to {last}")));
            }
        }
        Ok(date)
    }

    /// The window `text` ("HH:MM-HH:MM", `None`: the whole day) of `date` on the network timeline.
    pub fn span(&self, date: NaiveDate, text: Option<&str>) -> Result<Span, QueryError> {
        let (start_min, end_min) = text.map_or(Ok((0, 24 * 60)), parse_window)?;
        let tz = self.tt.feeds.first().ok_or(QueryError::NoFeed)?.timezone;
        let bad = || QueryError::BadTime(text.unwrap_or("00:00-24:00").to_string());
        // 24:00 is a minute after 23:59.
        let at = |m: u32| {
            clock_to_seconds(tz, date, (m / 60).min(23), if m >= 24 * 60 { 59 } else { m % 60 })
                .map(|s| s + if m >= 24 * 60 { 60 } else { 0 })
        };
        let start_s = at(start_min).ok_or_else(bad)?.max(0) as u32;
        let end_s = at(end_min).ok_or_else(bad)?.max(0) as u32;
        Ok(Span { start_min, end_min, start_s, end_s })
    }

    /// Checks a window request and prepares it: every bad value is reported here, before any work.
    pub fn window_setting(&self, q: &WindowQuery) -> Result<WindowSetting, QueryError> {
        if self.tt.feeds.is_empty() {
            return Err(QueryError::NoFeed);
        }
        let date = self.analysis_date(&q.date)?;
        let span = self.span(date, Some(&q.window))?;
        let step_min = q.step_min.unwrap_or(1);
        if step_min == 0 {
            return Err(QueryError::BadOption("step 0 min: give a step of at least 1 minute".into()));
        }
        let percentiles = q.percentiles.clone().unwrap_or_else(|| DEFAULT_PERCENTILES.to_vec());
        if let Some(p) = percentiles.iter().find(|p| !(p.is_finite() && (0.0..=100.0).contains(*p))) {
            return Err(QueryError::BadOption(format!("percentile {p} is outside 0–100")));
        }
        if let Some(k) = q.max_rides.filter(|&k| k > MAX_RIDES_CAP) {
            return Err(QueryError::BadOption(format!("at most {k} rides: the cap can be 0–{MAX_RIDES_CAP}")));
        }
        let base = crate::engine::PlanQuery {
            step_free: q.step_free,
            walking_speed_mps: q.walking_speed_mps,
            walk_limit_m: q.walk_limit_m,
            change_penalty_s: Some(0),
            ..Default::default()
        };
        let mut p = self.params_for(&base)?;
        let max_min = q.max_duration_min.unwrap_or(DEFAULT_MAX_DURATION_MIN).max(q.cutoff_min.unwrap_or(0));
        if !(1..=24 * 60).contains(&max_min) {
            return Err(QueryError::BadOption(format!("longest travel time {max_min} min is outside 1–1440")));
        }
        p.max_duration_s = max_min * 60;
        let n = (span.end_min - span.start_min).div_ceil(step_min);
        let departures = (0..n).map(|i| span.start_s + i * step_min * 60).collect();
        let spec = WindowSpec { departures, percentiles, cutoff_s: q.cutoff_min.map(|c| c * 60), max_rides: q.max_rides };
        Ok(WindowSetting { date, spec, p, step_min })
    }

    /// The place a text names (a station, or a stop outside any station; a platform of a
    /// station stands for its station).
    pub fn resolve_place(&self, text: &str) -> Result<usize, QueryError> {
        let s = self.resolve(text)?;
        self.places.place_of(&self.tt, s).ok_or_else(|| {
            QueryError::BadOption(format!("{text:?} is neither a station nor a stop where vehicles call: give a station or platform id"))
        })
    }

    /// Builds the date's network and returns the run that every origin of the setting shares.
    pub fn window_run<'a>(&'a mut self, w: &'a WindowSetting) -> WindowRun<'a> {
        self.network(w.date);
        let net = self.net.as_ref().expect("network built");
        WindowRun { tt: &self.tt, net, places: &self.places, spec: &w.spec, p: &w.p }
    }

    /// Travel times from `from` to every place over the window.
    fn times_from(&mut self, from: usize, w: &WindowSetting) -> TravelTimes {
        let origins: Vec<StopIdx> = self.places.endpoints(from).to_vec();
        let mut state = std::mem::take(&mut self.state);
        let mut out = TravelTimes::default();
        self.window_run(w).travel_times(&mut state, &origins, &mut out);
        self.state = state;
        out
    }

    /// Reach over the window: for every place reached from `from` at some departure, the
    /// shortest travel time, the percentiles and the share within the cut-off.
    pub fn reach_window(&mut self, from: &str, q: &WindowQuery) -> Result<WindowReach, QueryError> {
        let w = self.window_setting(q)?;
        let from = self.resolve_place(from)?;
        let mut times = self.times_from(from, &w);
        let mut stats = PairStats::default();
        let mut places = Vec::new();
        for to in 0..self.places.len() {
            let t = times.of_place(to);
            if to == from || t.iter().all(|&x| x == NONE) {
                continue;
            }
            summarise(t, &w.spec, &mut stats);
            let st = self.tt.stop(self.places.stops[to]);
            places.push(PlaceTimes {
                stop_id: st.id.clone(),
                name: st.name.clone(),
                station: st.kind == crate::timetable::StopKind::Station,
                lat: st.lat,
                lon: st.lon,
                min_s: stats.min_s,
                percentiles_s: stats.percentiles_s.clone(),
                share_within_cutoff: stats.share_within_cutoff,
                departures_reached: stats.departures_reached,
            });
        }
        places.sort_by(|a, b| a.min_s.cmp(&b.min_s).then_with(|| a.stop_id.cmp(&b.stop_id)));
        Ok(WindowReach {
            from: self.stop_match(self.places.stops[from]),
            date: w.date.to_string(),
            window: q.window.clone(),
            step_min: w.step_min,
            departures: w.spec.departures.len() as u32,
            percentiles: w.spec.percentiles.clone(),
            cutoff_min: q.cutoff_min,
            max_duration_min: w.p.max_duration_s / 60,
            max_rides: w.spec.max_rides,
            places,
        })
    }

    /// The travel time from `from` to `to` at every sampled departure of the window.
    pub fn pair_profile(&mut self, from: &str, to: &str, q: &WindowQuery) -> Result<PairProfile, QueryError> {
        let w = self.window_setting(q)?;
        let (a, b) = (self.resolve_place(from)?, self.resolve_place(to)?);
        let mut times = self.times_from(a, &w);
        let t = times.of_place(b);
        let tz = self.tt.feeds[0].timezone;
        let departures = w
            .spec
            .departures
            .iter()
            .zip(t.iter())
            .map(|(&d, &x)| DepartureTime {
                depart: seconds_to_clock(tz, w.date, d as i64),
                depart_s: d,
                travel_s: (x != NONE).then_some(if a == b { 0 } else { x }),
            })
            .collect();
        let mut stats = PairStats::default();
        summarise(t, &w.spec, &mut stats);
        Ok(PairProfile {
            from: self.stop_match(self.places.stops[a]),
            to: self.stop_match(self.places.stops[b]),
            date: w.date.to_string(),
            window: q.window.clone(),
            percentiles: w.spec.percentiles.clone(),
            cutoff_min: q.cutoff_min,
            max_duration_min: w.p.max_duration_s / 60,
            departures,
            min_s: stats.min_s,
            percentiles_s: stats.percentiles_s,
            share_within_cutoff: stats.share_within_cutoff,
        })
    }

    /// Resolves a list of place texts; on the first that fails, its index in the list and the error.
    pub fn resolve_places(&self, texts: &[String]) -> Result<Vec<usize>, (usize, QueryError)> {
        texts.iter().enumerate().map(|(i, t)| self.resolve_place(t).map_err(|e| (i, e))).collect()
    }

    /// Which places a matrix reports as destinations (`None`: all) and their weights for the
    /// cumulative opportunities (empty: none asked for).
    pub fn destinations(&self, report: Option<&[usize]>, weights: &[(usize, f64)]) -> Destinations {
        let n = self.places.len();
        let mut d = Destinations { report: vec![report.is_none(); n], weight: Vec::new() };
        for &p in report.unwrap_or(&[]) {
            d.report[p] = true;
        }
        if !weights.is_empty() {
            d.weight = vec![0.0; n];
            for &(p, w) in weights {
                d.weight[p] += w;
            }
        }
        d
    }

    /// The stop id of place `p`.
    pub fn place_id(&self, p: usize) -> &str {
        &self.tt.stop(self.places.stops[p]).id
    }
}

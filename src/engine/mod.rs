//! The library's front door: loaded feeds, the network of the last date asked for, stop search
//! and planning, all in plain serialisable values. The CLI and the WASM module are thin shells
//! around [`Engine`]. The questions about a window of departures (reach, a pair's profile,
//! matrices) are in [`window`].

pub mod compare;
pub mod interchange;
pub mod kiosk;
pub mod stepfree;
pub mod window;

use chrono::NaiveDate;
use serde::{Deserialize, Serialize};
use unicode_normalization::UnicodeNormalization;

use crate::analysis::places::Places;
use crate::error::{FeedError, QueryError};
use crate::graph::Network;
use crate::journey::{Builder, Check, Itinerary, LegKind, RouteRef};
use crate::route::options;
use crate::route::search::{self, Endpoints, Journey, Params, Query, SearchState, StepFree};
use crate::timetable::calendar::{clock_to_seconds, parse_clock, parse_date};
use crate::timetable::snapshot::{SnapshotError, SnapshotInfo};
use crate::timetable::{Access, FeedMeta, Stop, StopIdx, StopKind, Timetable, WalkConfig};

/// A planning request as the page and the CLI send it. Missing fields take the defaults of
/// [`Params::new`] (stated in DEVELOPERS.md, `timeweave plan --help` and beside the page's fields).
#[derive(Debug, Clone, Serialize, Deserialize, Default)]
#[serde(default, deny_unknown_fields)]
pub struct PlanQuery {
    pub from: String,
    pub to: String,
    /// YYYY-MM-DD
    pub date: String,
    /// HH:MM local time
    pub time: String,
    pub step_free: StepFree,
    /// Longest walking link, m.
    pub walk_limit_m: Option<f64>,
    /// Walking speed, m/s.
    pub walking_speed_mps: Option<f64>,
    /// Added to the cost of each change of vehicle, s.
    pub change_penalty_s: Option<u32>,
    pub walk_weight: Option<f64>,
    /// Longest journey searched, s.
    pub max_duration_s: Option<u32>,
    /// How many successive journeys (each leaving after the one before); default 3.
    pub next: Option<usize>,
    /// Also list, for each number of rides, the earliest arrival (fewest rides first).
    pub fewest_rides: bool,
}

/// Why a plan has no journey, with the facts behind it. Words for each code are made by the
/// shells' presentation layer.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(tag = "code", rename_all = "snake_case")]
pub enum NoJourney {
    /// The date lies outside every loaded feed's calendar.
    OutsideFeedDates { date: String, first_date: String, last_date: String },
    /// No trip runs on the date.
    NoServiceOnDate { date: String },
    /// The standard journey exists, but uses elements a step-free journey cannot.
    NoStepFreePath { standard_depart: String, standard_arrive: String, blocked_by: Vec<Blocked> },
    /// Nothing within the whole day.
    NoConnection,
}

/// A leg of the standard journey that blocks the step-free one, and the checks that fail.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct Blocked {
    pub kind: LegKind,
    pub route: Option<RouteRef>,
    pub start: String,
    pub end: String,
    pub checks: Vec<Check>,
}

/// Something the rider should know about the journeys found.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(tag = "code", rename_all = "snake_case")]
pub enum Note {
    /// Lenient step-free: some legs rely on elements whose accessibility the feed does not state.
    LenientUnknownUsed,
    /// No journey arrives within the longest duration searched; the first journey found is
    /// shown anyway (a long wait, or a long ride). `duration_s`: its arrival minus the time
    /// asked for, waiting included.
    BeyondMaxDuration { max_duration_s: u32, duration_s: u32 },
}

#[derive(Debug, Clone, Serialize)]
pub struct PlanResult {
    /// The request, as understood.
    pub asked: PlanQuery,
    pub journeys: Vec<Itinerary>,
    pub nothing_found: Option<NoJourney>,
    /// Step-free first journey's arrival minus the standard one's, s.
    pub step_free_extra_s: Option<i64>,
    /// With `fewest_rides`: for each number of rides, the earliest arrival, when it is earlier
    /// than with fewer rides (fewest rides first).
    pub fewest_rides: Vec<Itinerary>,
    pub notes: Vec<Note>,
}

#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct StopMatch {
    pub id: String,
    pub feed: String,
    pub name: String,
    pub code: Option<String>,
    pub platform: Option<String>,
    pub station: Option<String>,
    pub lat: f64,
    pub lon: f64,
    pub kind: StopKind,
}

#[derive(Debug, Clone, Serialize)]
pub struct SketchLine {
    pub route_id: String,
    pub short_name: String,
    pub color: String,
    pub points: Vec<[f32; 2]>,
}

#[derive(Debug, Clone, Serialize)]
pub struct SketchStop {
    pub id: String,
    pub name: String,
    pub lat: f64,
    pub lon: f64,
    pub station: bool,
}

#[derive(Debug, Clone, Serialize)]
pub struct Sketch {
    pub min_lat: f64,
    pub min_lon: f64,
    pub max_lat: f64,
    pub max_lon: f64,
    pub stops: Vec<SketchStop>,
    pub lines: Vec<SketchLine>,
}

/// Earliest arrival per stop, for reach ("what can be reached in 45 minutes").
#[derive(Debug, Clone, Serialize)]
pub struct Reach<'a> {
    pub stop_id: &'a str,
    pub name: &'a str,
    pub arrive_s: u32,
    pub minutes: u32,
}

#[derive(Default)]
pub struct Engine {
    pub tt: Timetable,
    pub walk_cfg: WalkConfig,
    net: Option<Network>,
    state: SearchState,
    /// Normalised names, parallel to `tt.stops`.
    names: Vec<String>,
    /// The places analyses report on (stations, stops outside stations).
    pub places: Places,
    /// Set when the timetable came from a snapshot rather than feeds.
    pub snapshot: Option<SnapshotInfo>,
}

/// Lower case without accents, for matching names typed by people.
pub fn normalise(s: &str) -> String {
    s.nfd().filter(|c| !unicode_normalization::char::is_combining_mark(*c)).flat_map(char::to_lowercase).collect()
}

impl Engine {
    pub fn new() -> Engine {
        Engine::default()
    }

    fn loaded(&mut self) {
        self.net = None;
        self.names = self.tt.stops.iter().map(|s| normalise(&s.name)).collect();
        self.places = Places::of(&self.tt);
    }

    pub fn load_zip(&mut self, name: &str, bytes: &[u8], progress: crate::feed::Progress) -> Result<&FeedMeta, FeedError> {
        let name = crate::feed::unique_name(&self.tt, name);
        let idx = crate::feed::load_zip(&mut self.tt, &name, bytes, &self.walk_cfg, progress)?;
        self.loaded();
        Ok(&self.tt.feeds[idx.idx()])
    }

    /// Loads a feed whose files a shell provides (a folder, say) under `name` (made unique).
    pub fn load_source(
        &mut self,
        name: &str,
        source: &mut dyn crate::feed::FeedSource,
        progress: crate::feed::Progress,
    ) -> Result<&FeedMeta, FeedError> {
        let name = crate::feed::unique_name(&self.tt, name);
        let idx = crate::feed::load_source(&mut self.tt, &name, source, &self.walk_cfg, progress)?;
        self.loaded();
        Ok(&self.tt.feeds[idx.idx()])
    }

    /// Loads a snapshot ([`crate::timetable::snapshot`]) into an engine with nothing loaded.
    /// On error the engine is unchanged.
    pub fn load_snapshot(&mut self, bytes: &[u8]) -> Result<&SnapshotInfo, SnapshotError> {
        if !self.tt.feeds.is_empty() {
            return Err(SnapshotError::NotEmpty);
        }
        let (mut tt, info) = crate::timetable::snapshot::read(bytes)?;
        crate::timetable::walking::rebuild(&mut tt, &self.walk_cfg);
        self.tt = tt;
        self.loaded();
        Ok(self.snapshot.insert(info))
    }

    /// The snapshot of the loaded timetable for the service dates `first..=last` (see
    /// [`crate::timetable::snapshot::write`]); refused when a date is outside the loaded feeds.
    pub fn snapshot_bytes(&self, first: NaiveDate, last: NaiveDate, made_by: &str) -> Result<Vec<u8>, QueryError> {
        let Some((f0, f1)) = self.tt.date_range() else { return Err(QueryError::NoFeed) };
        if first > last || first < f0 || last > f1 {
            return Err(QueryError::BadOption(format!(
                "the dates {first} to {last} are not all within the loaded feeds, which cover {f0} to {f1}"
            )));
        }
        Ok(crate::timetable::snapshot::write(&self.tt, first, last, made_by))
    }

    pub fn remove_feed(&mut self, name: &str) -> bool {
        match self.tt.without_feed(name) {
            Some(mut tt) => {
                crate::timetable::walking::rebuild(&mut tt, &self.walk_cfg);
                self.tt = tt;
                self.loaded();
                true
            }
            None => false,
        }
    }

    /// The network of `date`, built on first use and kept until another date is asked for.
    /// The network last built ([`Engine::network`]), if any.
    pub fn built(&self) -> Option<&Network> {
        self.net.as_ref()
    }

    pub fn network(&mut self, date: NaiveDate) -> &Network {
        if self.net.as_ref().is_none_or(|n| n.date != date) {
            self.net = Some(Network::build(&self.tt, date));
        }
        self.net.as_ref().expect("just built")
    }

    /// Stops whose name, id or code matches `text`, case- and accent-insensitively; stations
    /// before their platforms, exact and prefix matches first.
    pub fn search_stops(&self, text: &str, limit: usize) -> Vec<StopMatch> {
        let q = normalise(text.trim());
        if q.is_empty() {
            return vec![];
        }
        let mut hits: Vec<(u8, usize)> = Vec::new();
        for (i, s) in self.tt.stops.iter().enumerate() {
            if !matches!(s.kind, StopKind::Platform | StopKind::Station) {
                continue;
            }
            // A platform whose station matches equally is folded into the station.
            let n = &self.names[i];
            let rank = if self.names_by_id(s, text.trim()) || s.code.as_deref() == Some(text.trim()) {
                0
            } else if *n == q {
                1
            } else if n.starts_with(&q) {
                2
            } else if n.split(|c: char| !c.is_alphanumeric()).any(|w| w.starts_with(&q)) {
                3
            } else if n.contains(&q) {
                4
            } else {
                continue;
            };
            let folded = s.parent.is_some_and(|p| self.names[p.idx()] == *n) && rank > 0;
            let rank = rank * 2 + u8::from(s.kind == StopKind::Platform);
            if !folded {
                hits.push((rank, i));
            }
        }
        hits.sort_by(|a, b| a.0.cmp(&b.0).then_with(|| self.tt.stops[a.1].name.cmp(&self.tt.stops[b.1].name)));
        hits.truncate(limit);
        hits.into_iter().map(|(_, i)| self.stop_match(StopIdx(i as u32))).collect()
    }

    pub(crate) fn stop_match(&self, s: StopIdx) -> StopMatch {
        let st = self.tt.stop(s);
        StopMatch {
            id: st.id.clone(),
            feed: self.tt.feeds.get(st.feed.idx()).map(|f| f.name.clone()).unwrap_or_default(),
            name: st.name.clone(),
            code: st.code.clone(),
            platform: st.platform_code.clone(),
            station: self.tt.station_name(s).map(str::to_string),
            lat: st.lat,
            lon: st.lon,
            kind: st.kind,
        }
    }

    /// Resolves a stop given by id (`id` or `feed:id`) or by name.
    pub fn resolve(&self, text: &str) -> Result<StopIdx, QueryError> {
        let t = text.trim();
        let by_id: Vec<usize> = self.tt.stops.iter().enumerate().filter(|(_, s)| self.names_by_id(s, t)).map(|(i, _)| i).collect();
        if by_id.len() == 1 {
            return Ok(StopIdx(by_id[0] as u32));
        }
        let q = normalise(t);
        let candidates = self.search_stops(t, 50);
        let exact: Vec<&StopMatch> = candidates.iter().filter(|m| normalise(&m.name) == q).collect();
        let pick = |m: &StopMatch| {
            self.tt.stops.iter().position(|s| s.id == m.id && self.tt.feeds[s.feed.idx()].name == m.feed).map(|i| StopIdx(i as u32))
        };
        let unique = |list: &[&StopMatch]| -> Option<StopIdx> {
            // One place: all hits belong to the same station.
            let first = pick(list.first()?)?;
            let st = self.tt.station_of(first);
            list.iter().all(|m| pick(m).is_some_and(|s| self.tt.station_of(s) == st)).then_some(st)
        };
        if let Some(s) = unique(&exact) {
            return Ok(s);
        }
        if exact.is_empty() {
            let all: Vec<&StopMatch> = candidates.iter().collect();
            if let Some(s) = unique(&all) {
                return Ok(s);
            }
        }
        let label = |m: &StopMatch| format!("{} [{}:{}]", m.name, m.feed, m.id);
        if !exact.is_empty() || !candidates.is_empty() {
            let list: Vec<String> = if exact.is_empty() {
                candidates.iter().take(8).map(label).collect()
            } else {
                exact.iter().take(8).map(|m| label(m)).collect()
            };
            return Err(QueryError::AmbiguousStop { text: t.to_string(), candidates: list });
        }
        // Nothing contains the text: suggest the closest names.
        let mut scored: Vec<(f64, usize)> = self
            .names
            .iter()
            .enumerate()
            .filter(|(i, _)| matches!(self.tt.stops[*i].kind, StopKind::Platform | StopKind::Station) && self.tt.stops[*i].parent.is_none())
            .map(|(i, n)| (strsim::jaro_winkler(&q, n), i))
            .collect();
        scored.sort_by(|a, b| b.0.total_cmp(&a.0));
        let mut suggestions: Vec<String> = Vec::new();
        for (_, i) in scored {
            let n = self.tt.stops[i].name.clone();
            if !suggestions.contains(&n) {
                suggestions.push(n);
            }
            if suggestions.len() == 5 {
                break;
            }
        }
        Err(QueryError::UnknownStop { text: t.to_string(), suggestions })
    }

    /// True when `text` is the stop's id, plain (`stop_id`) or scoped to its feed (`feed:stop_id`).
    fn names_by_id(&self, s: &Stop, text: &str) -> bool {
        s.id == text
            || text.split_once(':').is_some_and(|(f, id)| id == s.id && self.tt.feeds.get(s.feed.idx()).is_some_and(|m| m.name == f))
    }

    /// The stop `text` names, as [`Engine::resolve`] finds it, described for a picker.
    pub fn resolve_match(&self, text: &str) -> Result<StopMatch, QueryError> {
        self.resolve(text).map(|s| self.stop_match(s))
    }

    /// Where a search starts or ends for a stop: a station's entrances when it has any, else its
    /// platforms; any other stop is itself.
    pub fn endpoints_of(&self, s: StopIdx) -> Vec<StopIdx> {
        crate::analysis::places::endpoints(&self.tt, s)
    }

    pub fn params_for(&self, q: &PlanQuery) -> Result<Params, QueryError> {
        let mut p = Params::new(q.step_free);
        if let Some(v) = q.walking_speed_mps {
            if !(v.is_finite() && v > 0.05 && v < 10.0) {
                return Err(QueryError::BadOption(format!("walking speed {v} m/s is outside 0.05–10")));
            }
            p.walk_speed_mps = v;
        }
        if let Some(v) = q.walk_limit_m {
            if !(v.is_finite() && v >= 0.0) {
                return Err(QueryError::BadOption(format!("maximum walk {v} m must be zero or more")));
            }
            p.max_walk_m = v;
        }
        if let Some(v) = q.change_penalty_s {
            p.transfer_penalty_s = v.min(3 * 3600);
        }
        if let Some(v) = q.walk_weight {
            if !(v.is_finite() && (1.0..=10.0).contains(&v)) {
                return Err(QueryError::BadOption(format!("walk weight {v} must be 1–10")));
            }
            p.walk_weight = v;
        }
        if let Some(v) = q.max_duration_s {
            p.max_duration_s = v.clamp(60, 24 * 3600);
        }
        Ok(p)
    }

    /// Plans a journey: the next `options` itineraries, or why there is none.
    pub fn plan(&mut self, q: &PlanQuery) -> Result<PlanResult, QueryError> {
        if self.tt.feeds.is_empty() {
            return Err(QueryError::NoFeed);
        }
        let date = parse_date(&q.date).ok_or_else(|| QueryError::BadDate(q.date.clone()))?;
        let (h, m) = parse_clock(&q.time).ok_or_else(|| QueryError::BadTime(q.time.clone()))?;
        let tz = self.tt.feeds[0].timezone;
        let depart_s = clock_to_seconds(tz, date, h, m).ok_or_else(|| QueryError::BadTime(q.time.clone()))?.max(0) as u32;
        self.plan_at(q, date, depart_s)
    }

    /// [`Engine::plan`] leaving `depart_s` seconds after `date`'s origin (`q.date` and `q.time`
    /// are not read): for callers that hold an instant, such as a clock, rather than a clock
    /// reading, which is ambiguous in the hour repeated when clocks go back.
    pub fn plan_at(&mut self, q: &PlanQuery, date: NaiveDate, depart_s: u32) -> Result<PlanResult, QueryError> {
        if self.tt.feeds.is_empty() {
            return Err(QueryError::NoFeed);
        }
        let from = self.resolve(&q.from)?;
        let to = self.resolve(&q.to)?;
        let p = self.params_for(q)?;
        let k = q.next.unwrap_or(3).clamp(1, 10);
        let ends = Endpoints { origins: self.endpoints_of(from), targets: self.endpoints_of(to) };
        let mut result = PlanResult {
            asked: q.clone(),
            journeys: vec![],
            nothing_found: None,
            step_free_extra_s: None,
            fewest_rides: vec![],
            notes: vec![],
        };
        self.network(date);
        let journeys = self.run_options(&ends, depart_s, &p, k);
        result.journeys = journeys.iter().map(|j| self.build(j, &ends, &p, depart_s)).collect();
        if q.fewest_rides {
            let net = self.net.as_ref().expect("network built");
            // The layered search holds one label set per ride count; fewer layers on big networks.
            let max_rides = if net.events() > 1_000_000 { 3 } else { 5 };
            let set = options::pareto(Query::new(&self.tt, net, &ends, depart_s, &p), &mut self.state, max_rides);
            result.fewest_rides = set.iter().map(|j| self.build(j, &ends, &p, depart_s)).collect();
        }
        if q.step_free != StepFree::Off {
            let std = Params {
                step_free: StepFree::Off,
                walk_speed_mps: q.walking_speed_mps.unwrap_or(Params::new(StepFree::Off).walk_speed_mps),
                ..p.clone()
            };
            let standard = self.run_options(&ends, depart_s, &std, 1);
            if let (Some(s), Some(first)) = (standard.first(), result.journeys.first()) {
                let si = self.build(s, &ends, &std, depart_s);
                result.step_free_extra_s = Some(first.arrive_s as i64 - si.arrive_s as i64);
            }
            if result.journeys.is_empty() {
                if let Some(s) = standard.first() {
                    let si = self.build(s, &ends, &std, depart_s);
                    let blocked_by = self.blocking(&si, &p);
                    result.nothing_found = Some(NoJourney::NoStepFreePath {
                        standard_depart: si.depart.clone(),
                        standard_arrive: si.arrive.clone(),
                        blocked_by,
                    });
                }
            }
            if q.step_free == StepFree::Lenient && result.journeys.iter().any(|i| i.step_free == Access::Unknown) {
                result.notes.push(Note::LenientUnknownUsed);
            }
        }
        if result.journeys.is_empty() && result.nothing_found.is_none() {
            match self.why_none(date, &ends, depart_s, &p) {
                Ok(why) => result.nothing_found = Some(why),
                Err(beyond) => {
                    result.notes.push(Note::BeyondMaxDuration { max_duration_s: p.max_duration_s, duration_s: beyond.arrive_s - depart_s });
                    result.journeys.push(beyond);
                }
            }
        }
        Ok(result)
    }

    fn run_options(&mut self, ends: &Endpoints, depart_s: u32, p: &Params, k: usize) -> Vec<Journey> {
        let net = self.net.as_ref().expect("network built");
        options::options(Query::new(&self.tt, net, ends, depart_s, p), &mut self.state, k)
    }

    fn build(&self, j: &Journey, ends: &Endpoints, p: &Params, depart_s: u32) -> Itinerary {
        let net = self.net.as_ref().expect("network built");
        Builder { tt: &self.tt, net, params: p, ends, walk_cfg: &self.walk_cfg, query_s: depart_s }.build(j)
    }

    /// The legs of a standard itinerary that a step-free journey cannot use, with the checks
    /// that fail.
    fn blocking(&self, it: &Itinerary, p: &Params) -> Vec<Blocked> {
        let bad = |a: Access| match p.step_free {
            StepFree::Strict => a != Access::Yes,
            _ => a == Access::No,
        };
        it.legs
            .iter()
            .filter(|leg| bad(leg.step_free.status))
            .map(|leg| Blocked {
                kind: leg.kind,
                route: leg.route.clone(),
                start: leg.start.name.clone(),
                end: leg.end.name.clone(),
                checks: leg.step_free.checks.iter().filter(|c| bad(c.verdict)).cloned().collect(),
            })
            .collect()
    }

    /// Why nothing was found; or, when a journey exists beyond the longest duration searched,
    /// that journey (`Err`), so it can be shown with a note instead of hidden.
    fn why_none(&mut self, date: NaiveDate, ends: &Endpoints, depart_s: u32, p: &Params) -> Result<NoJourney, Itinerary> {
        if let Some((first, last)) = self.tt.date_range() {
            if date < first || date > last {
                return Ok(NoJourney::OutsideFeedDates {
                    date: date.to_string(),
                    first_date: first.to_string(),
                    last_date: last.to_string(),
                });
            }
        }
        let net = self.net.as_ref().expect("network built");
        if net.trips_today == 0 {
            return Ok(NoJourney::NoServiceOnDate { date: date.to_string() });
        }
        let mut longer = p.clone();
        longer.max_duration_s = 48 * 3600;
        if let Some(j) = options::earliest(Query::new(&self.tt, net, ends, depart_s, &longer), &mut self.state) {
            return Err(self.build(&j, ends, &longer, depart_s));
        }
        Ok(NoJourney::NoConnection)
    }

    /// Earliest arrival at every stop within `limit_min` minutes ("what can be reached"), as
    /// minutes after the departure per stop index (`u32::MAX`: not reached), in the order of
    /// [`Engine::stop_ids`]: the compact form for drawing many stops.
    pub fn reach_minutes(
        &mut self,
        from: &str,
        date: &str,
        time: &str,
        step_free: StepFree,
        limit_min: u32,
    ) -> Result<Vec<u32>, QueryError> {
        let depart_s = self.reach_search(from, date, time, step_free, limit_min)?;
        Ok(self.state.stop_arrivals()[..self.tt.stops.len()]
            .iter()
            .map(|&a| if a == u32::MAX { a } else { (a - depart_s).div_ceil(60) })
            .collect())
    }

    /// The same as a list of the platforms reached, earliest first.
    pub fn reach(&mut self, from: &str, date: &str, time: &str, step_free: StepFree, limit_min: u32) -> Result<Vec<Reach<'_>>, QueryError> {
        let depart_s = self.reach_search(from, date, time, step_free, limit_min)?;
        let arr = &self.state.stop_arrivals()[..self.tt.stops.len()];
        let mut out: Vec<Reach> = arr
            .iter()
            .enumerate()
            .filter(|(i, &a)| a != u32::MAX && self.tt.stops[*i].kind == StopKind::Platform)
            .map(|(i, &a)| Reach {
                stop_id: &self.tt.stops[i].id,
                name: &self.tt.stops[i].name,
                arrive_s: a,
                minutes: (a - depart_s).div_ceil(60),
            })
            .collect();
        out.sort_by_key(|r| r.arrive_s);
        Ok(out)
    }

    /// Runs the one-to-all sweep of a reach query; the arrivals stay in the search state.
    /// Returns the departure on the network's timeline.
    fn reach_search(&mut self, from: &str, date: &str, time: &str, step_free: StepFree, limit_min: u32) -> Result<u32, QueryError> {
        let date = parse_date(date).ok_or_else(|| QueryError::BadDate(date.into()))?;
        let (h, m) = parse_clock(time).ok_or_else(|| QueryError::BadTime(time.into()))?;
        let from = self.resolve(from)?;
        let origins = self.endpoints_of(from);
        let tz = self.tt.feeds.first().ok_or(QueryError::NoFeed)?.timezone;
        let depart_s = clock_to_seconds(tz, date, h, m).ok_or_else(|| QueryError::BadTime(time.into()))?.max(0) as u32;
        let mut p = Params::new(step_free);
        p.max_duration_s = limit_min * 60;
        self.network(date);
        let net = self.net.as_ref().expect("network built");
        search::one_to_all(&self.tt, net, &mut self.state, &origins, depart_s, &p);
        Ok(depart_s)
    }

    /// Stop ids in index order (the order of [`Engine::reach_minutes`]).
    pub fn stop_ids(&self) -> Vec<String> {
        self.tt.stops.iter().map(|s| s.id.clone()).collect()
    }

    /// Stops and lines for a schematic drawing.
    pub fn sketch(&self) -> Sketch {
        let tt = &self.tt;
        let mut sk = Sketch {
            min_lat: f64::INFINITY,
            min_lon: f64::INFINITY,
            max_lat: f64::NEG_INFINITY,
            max_lon: f64::NEG_INFINITY,
            stops: vec![],
            lines: vec![],
        };
        for s in &tt.stops {
            if !s.lat.is_finite()
                || !matches!(s.kind, StopKind::Platform | StopKind::Station)
                || (s.kind == StopKind::Platform && s.parent.is_some())
            {
                continue;
            }
            sk.min_lat = sk.min_lat.min(s.lat);
            sk.max_lat = sk.max_lat.max(s.lat);
            sk.min_lon = sk.min_lon.min(s.lon);
            sk.max_lon = sk.max_lon.max(s.lon);
            sk.stops.push(SketchStop {
                id: s.id.clone(),
                name: s.name.clone(),
                lat: s.lat,
                lon: s.lon,
                station: s.kind == StopKind::Station,
            });
        }
        // One drawing per route: its longest trip's shape, or its stops in order.
        let mut best: Vec<Option<usize>> = vec![None; tt.routes.len()];
        for (i, t) in tt.trips.iter().enumerate() {
            let b = &mut best[t.route.idx()];
            if b.is_none_or(|j| tt.trips[j].len < t.len) {
                *b = Some(i);
            }
        }
        for (r, b) in best.iter().enumerate() {
            let Some(ti) = *b else { continue };
            let trip = &tt.trips[ti];
            let points = match trip.shape.and_then(|s| tt.shapes.get(s as usize)).filter(|s| s.len() >= 2) {
                Some(shape) => shape.clone(),
                None => trip.events().map(|e| tt.stop(tt.ev_stop[e])).map(|s| [s.lat as f32, s.lon as f32]).collect(),
            };
            let route = &tt.routes[r];
            sk.lines.push(SketchLine {
                route_id: route.id.clone(),
                short_name: route.short_name.clone(),
                color: route.color.clone(),
                points,
            });
        }
        sk
    }
}

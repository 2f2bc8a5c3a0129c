//! The compact timetable: everything routing needs from one or more feeds, in flat arrays indexed
//! by `u32` newtypes, with the parse structures already dropped.
//!
//! Stop events of a trip are stored contiguously in trip order (`ev_*` arrays, struct of arrays),
//! so a trip is a `first_event..first_event+len` range and "staying seated" is "the next index".
//! Times are seconds from the trip's service-day origin (noon minus 12 h, GTFS Schedule reference),
//! so they may exceed 24 h. The timetable is date-independent; [`crate::graph::Network`] picks
//! the trips of one service date.

pub mod calendar;
pub mod snapshot;
pub mod walking;

use chrono::NaiveDate;
use chrono_tz::Tz;
use serde::{Deserialize, Serialize};

use crate::error::WarningLog;
pub use calendar::Service;
pub use walking::{Footpath, FootpathSet, PathwayStep, WalkConfig, WalkProfile};

macro_rules! index_type {
    ($name:ident) => {
        #[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize, Default)]
        pub struct $name(pub u32);
        impl $name {
            #[inline]
            pub fn idx(self) -> usize {
                self.0 as usize
            }
        }
    };
}
index_type!(StopIdx);
index_type!(RouteIdx);
index_type!(TripIdx);
index_type!(ServiceIdx);
index_type!(FeedIdx);
index_type!(PathwayIdx);

/// Accessibility as the feed states it (GTFS `wheelchair_boarding` / `wheelchair_accessible`):
/// 0 or empty = no information, 1 = accessible, 2 = not accessible.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Access {
    #[default]
    Unknown,
    Yes,
    No,
}

impl Access {
    /// The less accessible of the two: no over unknown over yes.
    pub fn worst(self, other: Access) -> Access {
        match (self, other) {
            (Access::No, _) | (_, Access::No) => Access::No,
            (Access::Unknown, _) | (_, Access::Unknown) => Access::Unknown,
            _ => Access::Yes,
        }
    }
    pub fn from_gtfs(a: gtfs_structures::Availability) -> Access {
        use gtfs_structures::Availability::*;
        match a {
            Available => Access::Yes,
            NotAvailable => Access::No,
            _ => Access::Unknown,
        }
    }
    pub fn code(self) -> u8 {
        match self {
            Access::Unknown => 0,
            Access::Yes => 1,
            Access::No => 2,
        }
    }
}

/// GTFS `location_type`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum StopKind {
    Platform,
    Station,
    Entrance,
    Node,
    BoardingArea,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Stop {
    pub feed: FeedIdx,
    pub id: String,
    pub code: Option<String>,
    pub name: String,
    pub lat: f64,
    pub lon: f64,
    pub kind: StopKind,
    pub parent: Option<StopIdx>,
    /// As given in the feed.
    pub wheelchair_raw: Access,
    /// After the parent-station inheritance of the GTFS Schedule reference.
    pub wheelchair: Access,
    /// True when `wheelchair` came from the parent station.
    pub wheelchair_inherited: bool,
    pub level: Option<String>,
    pub platform_code: Option<String>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Mode {
    Tram,
    Metro,
    Rail,
    Bus,
    Ferry,
    CableTram,
    AerialLift,
    Funicular,
    Trolleybus,
    Monorail,
    Other,
}

impl Mode {
    pub fn from_route_type(rt: &gtfs_structures::RouteType) -> Mode {
        use gtfs_structures::RouteType::*;
        match rt {
            Tramway => Mode::Tram,
            Subway => Mode::Metro,
            Rail => Mode::Rail,
            Bus => Mode::Bus,
            Ferry => Mode::Ferry,
            CableCar => Mode::CableTram,
            Gondola => Mode::AerialLift,
            Funicular => Mode::Funicular,
            Extended(e) => Mode::from_extended_code(e.to_standard_route_type()),
            Other(11) => Mode::Trolleybus,
            Other(12) => Mode::Monorail,
            Other(_) => Mode::Other,
        }
    }
    fn from_extended_code(rt: gtfs_structures::RouteType) -> Mode {
        match rt {
            gtfs_structures::RouteType::Extended(_) => Mode::Other,
            other => Mode::from_route_type(&other),
        }
    }
    pub fn name(self) -> &'static str {
        match self {
            Mode::Tram => "tram",
            Mode::Metro => "metro",
            Mode::Rail => "rail",
            Mode::Bus => "bus",
            Mode::Ferry => "ferry",
            Mode::CableTram => "cable tram",
            Mode::AerialLift => "aerial lift",
            Mode::Funicular => "funicular",
            Mode::Trolleybus => "trolleybus",
            Mode::Monorail => "monorail",
            Mode::Other => "other",
        }
    }
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Route {
    pub feed: FeedIdx,
    pub id: String,
    pub short_name: String,
    pub long_name: String,
    pub mode: Mode,
    pub route_type: i16,
    /// `#RRGGBB`; GTFS default white background / black text when absent.
    pub color: String,
    pub text_color: String,
    pub agency: String,
}

#[derive(Debug, Clone, Serialize)]
pub struct Trip {
    pub id: String,
    pub route: RouteIdx,
    pub service: ServiceIdx,
    pub headsign: Option<String>,
    pub short_name: Option<String>,
    pub direction: Option<u8>,
    pub wheelchair: Access,
    pub shape: Option<u32>,
    pub first_event: u32,
    pub len: u32,
    /// Expanded from `frequencies.txt` with `exact_times` = 0: times are estimates.
    pub frequency_based: bool,
    /// Headway of the frequency entry this trip was expanded from.
    pub headway_s: Option<u32>,
    /// `block_id`: trips of one block on one service day are run by the same vehicle, so a
    /// rider can stay seated from one to the next (GTFS Schedule reference, trips.txt).
    pub block: Option<String>,
}

impl Trip {
    pub fn events(&self) -> std::ops::Range<usize> {
        self.first_event as usize..(self.first_event + self.len) as usize
    }
}

/// Stop-event flags.
pub const NO_PICKUP: u8 = 1;
pub const NO_DROP_OFF: u8 = 2;
/// Time interpolated by us (the feed left it empty at a non-timepoint).
pub const INTERPOLATED: u8 = 4;

/// One loaded feed's metadata and load report.
#[derive(Debug, Clone, Serialize)]
pub struct FeedMeta {
    pub name: String,
    #[serde(serialize_with = "ser_tz")]
    pub timezone: Tz,
    pub agencies: Vec<String>,
    /// `feed_info.txt`'s (feed_publisher_name, feed_version), when it gives both.
    pub edition: Option<(String, String)>,
    pub first_date: Option<NaiveDate>,
    pub last_date: Option<NaiveDate>,
    pub stops: usize,
    pub routes: usize,
    pub trips: usize,
    pub stop_events: usize,
    pub warnings: WarningLog,
    /// Stop, route, trip and service index ranges this feed occupies.
    #[serde(skip)]
    pub stop_range: (u32, u32),
    #[serde(skip)]
    pub trip_range: (u32, u32),
}

fn ser_tz<S: serde::Serializer>(tz: &Tz, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(tz.name())
}

/// A transfer rule from `transfers.txt` that is not a plain stop-to-stop walking link.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum TransferRule {
    /// transfer_type 1: the connection is timed, no minimum time.
    Timed,
    /// transfer_type 2 with its min_transfer_time.
    MinTime(u32),
    /// transfer_type 3: no transfer.
    Forbidden,
}

/// Everything routable, from all loaded feeds.
#[derive(Debug, Clone, Default)]
pub struct Timetable {
    pub feeds: Vec<FeedMeta>,
    pub stops: Vec<Stop>,
    pub routes: Vec<Route>,
    pub trips: Vec<Trip>,
    pub services: Vec<Service>,
    pub ev_stop: Vec<StopIdx>,
    pub ev_arr: Vec<u32>,
    pub ev_dep: Vec<u32>,
    pub ev_flags: Vec<u8>,
    /// Minimum transfer time at a stop from a `transfers.txt` row with from_stop_id = to_stop_id,
    /// or `Forbidden` for transfer_type 3 there. Stops without a rule use the walking default.
    pub stop_rules: Vec<(StopIdx, TransferRule)>,
    /// Stop-to-stop rules between different stops (override or forbid the walking link).
    pub link_rules: Vec<(StopIdx, StopIdx, TransferRule)>,
    /// Trip- or route-specific rules for changing at one stop, sorted by stop. Only rules with a
    /// `from_trip_id` or `from_route_id` are kept (see DEVELOPERS.md).
    pub specific_rules: Vec<SpecificRule>,
    pub pathways: Vec<Pathway>,
    /// Simplified shapes (lat, lon) for drawing.
    pub shapes: Vec<Vec<[f32; 2]>>,
    /// Walking links per [`WalkProfile`], rebuilt when feeds change.
    pub walk_standard: FootpathSet,
    pub walk_step_free: FootpathSet,
    pub walk_step_free_strict: FootpathSet,
    /// Accessibility the user sets over the feed's (outages, or what-if-fixed); cleared when a
    /// feed is added or removed, since indices move.
    pub overrides: Overrides,
}

/// One side of a trip- or route-specific transfer rule.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub enum RuleEnd {
    Any,
    Route(RouteIdx),
    /// A trip id (every trip expanded from it by frequencies.txt shares it).
    Trip(String),
}

impl RuleEnd {
    /// How specific a match is (trip 2, route 1, any 0), or `None` when it does not match.
    pub fn matches(&self, tt: &Timetable, t: TripIdx) -> Option<u8> {
        let trip = tt.trip(t);
        match self {
            RuleEnd::Any => Some(0),
            RuleEnd::Route(r) => (trip.route == *r).then_some(1),
            RuleEnd::Trip(id) => (trip.id == *id).then_some(2),
        }
    }
}

#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct SpecificRule {
    pub stop: StopIdx,
    pub from: RuleEnd,
    pub to: RuleEnd,
    pub rule: TransferRule,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Pathway {
    pub id: String,
    pub from: StopIdx,
    pub to: StopIdx,
    pub mode: PathwayMode,
    pub bidirectional: bool,
    pub length_m: Option<f32>,
    pub traversal_time_s: Option<u32>,
    pub stair_count: Option<i32>,
    pub max_slope: Option<f32>,
    pub min_width_m: Option<f32>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PathwayMode {
    Walkway,
    Stairs,
    MovingSidewalk,
    Escalator,
    Elevator,
    FareGate,
    ExitGate,
}

impl PathwayMode {
    pub fn from_gtfs(m: gtfs_structures::PathwayMode) -> Self {
        use gtfs_structures::PathwayMode as G;
        match m {
            G::Walkway => PathwayMode::Walkway,
            G::Stairs => PathwayMode::Stairs,
            G::MovingSidewalk => PathwayMode::MovingSidewalk,
            G::Escalator => PathwayMode::Escalator,
            G::Elevator => PathwayMode::Elevator,
            G::FareGate => PathwayMode::FareGate,
            G::ExitGate => PathwayMode::ExitGate,
        }
    }
    pub fn name(self) -> &'static str {
        match self {
            PathwayMode::Walkway => "walkway",
            PathwayMode::Stairs => "stairs",
            PathwayMode::MovingSidewalk => "moving_sidewalk",
            PathwayMode::Escalator => "escalator",
            PathwayMode::Elevator => "elevator",
            PathwayMode::FareGate => "fare_gate",
            PathwayMode::ExitGate => "exit_gate",
        }
    }
}

/// An element's accessibility as the user sets it, over the feed's.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Override {
    /// Out of service (a lift or ramp out of order, a stop or route not step-free today).
    OutOfService,
    /// Taken as step-free: what fixing it would change.
    AssumedAccessible,
}

impl Override {
    pub fn access(self) -> Access {
        match self {
            Override::OutOfService => Access::No,
            Override::AssumedAccessible => Access::Yes,
        }
    }
}

/// Overrides by element. A stop's applies to the stops of a station it names, a route's to its trips.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Overrides {
    pub stops: std::collections::HashMap<StopIdx, Override>,
    pub pathways: std::collections::HashMap<PathwayIdx, Override>,
    pub routes: std::collections::HashMap<RouteIdx, Override>,
}

impl Overrides {
    pub fn is_empty(&self) -> bool {
        self.stops.is_empty() && self.pathways.is_empty() && self.routes.is_empty()
    }
}

impl Timetable {
    /// The override on stop `s` (or on its station), if any.
    pub fn stop_override(&self, s: StopIdx) -> Option<Override> {
        if self.overrides.stops.is_empty() {
            return None;
        }
        let st = self.stop(s);
        self.overrides.stops.get(&s).or_else(|| st.parent.and_then(|p| self.overrides.stops.get(&p))).copied()
    }
    /// `wheelchair_boarding` after inheritance and overrides.
    pub fn stop_access(&self, s: StopIdx) -> Access {
        self.stop_override(s).map_or(self.stop(s).wheelchair, Override::access)
    }
    /// The override on trip `t`'s route, if any.
    pub fn trip_override(&self, t: TripIdx) -> Option<Override> {
        if self.overrides.routes.is_empty() {
            return None;
        }
        self.overrides.routes.get(&self.trips[t.idx()].route).copied()
    }
    /// `wheelchair_accessible` after overrides.
    pub fn trip_access(&self, t: TripIdx) -> Access {
        self.trip_override(t).map_or(self.trips[t.idx()].wheelchair, Override::access)
    }

    pub fn stop(&self, s: StopIdx) -> &Stop {
        &self.stops[s.idx()]
    }
    pub fn trip(&self, t: TripIdx) -> &Trip {
        &self.trips[t.idx()]
    }
    pub fn stop_events(&self) -> usize {
        self.ev_stop.len()
    }
    /// The station a stop belongs to (itself when it has no parent).
    pub fn station_of(&self, s: StopIdx) -> StopIdx {
        let mut cur = s;
        for _ in 0..4 {
            match self.stops[cur.idx()].parent {
                Some(p) if p != cur => cur = p,
                _ => break,
            }
        }
        cur
    }
    /// Display name of a stop with its station, e.g. "Platform 2 (Oskerveld Central)".
    pub fn station_name(&self, s: StopIdx) -> Option<&str> {
        let st = self.station_of(s);
        (st != s).then(|| self.stops[st.idx()].name.as_str())
    }
    pub fn walk(&self, profile: WalkProfile) -> &FootpathSet {
        match profile {
            WalkProfile::Standard => &self.walk_standard,
            WalkProfile::StepFreeLenient => &self.walk_step_free,
            WalkProfile::StepFreeStrict => &self.walk_step_free_strict,
        }
    }
    /// Minimum transfer time at a stop, `None` when transfers there are forbidden.
    pub fn stop_transfer_s(&self, s: StopIdx, default_s: u32) -> Option<u32> {
        match self.stop_rules.binary_search_by_key(&s, |r| r.0) {
            Ok(i) => match self.stop_rules[i].1 {
                TransferRule::Timed => Some(0),
                TransferRule::MinTime(t) => Some(t),
                TransferRule::Forbidden => None,
            },
            Err(_) => Some(default_s),
        }
    }
    /// The trip- or route-specific rules at a stop.
    pub fn rules_at(&self, s: StopIdx) -> &[SpecificRule] {
        let a = self.specific_rules.partition_point(|r| r.stop < s);
        let b = self.specific_rules.partition_point(|r| r.stop <= s);
        &self.specific_rules[a..b]
    }

    /// The rule for changing from trip `a` to trip `b` at stop `s`: the most specific matching
    /// specific rule (trip over route over any, the "from" side first), else the stop's own.
    /// `None` when the change is forbidden, else the minimum time.
    pub fn change_s(&self, s: StopIdx, a: TripIdx, b: TripIdx, default_s: u32) -> Option<u32> {
        let best =
            self.rules_at(s).iter().filter_map(|r| Some(((r.from.matches(self, a)?, r.to.matches(self, b)?), r.rule))).max_by_key(|x| x.0);
        match best {
            Some((_, TransferRule::Forbidden)) => None,
            Some((_, TransferRule::Timed)) => Some(0),
            Some((_, TransferRule::MinTime(m))) => Some(m),
            None => self.stop_transfer_s(s, default_s),
        }
    }

    /// Bytes held by the per-stop-event arrays.
    pub fn event_bytes(&self) -> usize {
        self.ev_stop.capacity() * 4 + self.ev_arr.capacity() * 4 + self.ev_dep.capacity() * 4 + self.ev_flags.capacity()
    }
    /// First and last date any loaded feed covers.
    pub fn date_range(&self) -> Option<(NaiveDate, NaiveDate)> {
        let first = self.feeds.iter().filter_map(|f| f.first_date).min()?;
        let last = self.feeds.iter().filter_map(|f| f.last_date).max()?;
        Some((first, last))
    }
}

impl Timetable {
    /// Appends a feed read on its own, shifting all of its indices past the loaded ones.
    /// Walking links must be rebuilt afterwards (`walking::rebuild`), since new stops may be near
    /// old ones.
    pub fn append(&mut self, mut other: Timetable) -> FeedIdx {
        let feed = FeedIdx(self.feeds.len() as u32);
        let (so, ro, to, sv, eo, sh) = (
            self.stops.len() as u32,
            self.routes.len() as u32,
            self.trips.len() as u32,
            self.services.len() as u32,
            self.ev_stop.len() as u32,
            self.shapes.len() as u32,
        );
        let s = |x: StopIdx| StopIdx(x.0 + so);
        for mut st in other.stops.drain(..) {
            st.feed = feed;
            st.parent = st.parent.map(s);
            self.stops.push(st);
        }
        for mut r in other.routes.drain(..) {
            r.feed = feed;
            self.routes.push(r);
        }
        for mut t in other.trips.drain(..) {
            t.route = RouteIdx(t.route.0 + ro);
            t.service = ServiceIdx(t.service.0 + sv);
            t.first_event += eo;
            t.shape = t.shape.map(|x| x + sh);
            self.trips.push(t);
        }
        self.services.append(&mut other.services);
        self.ev_stop.extend(other.ev_stop.iter().map(|&x| s(x)));
        self.ev_arr.append(&mut other.ev_arr);
        self.ev_dep.append(&mut other.ev_dep);
        self.ev_flags.append(&mut other.ev_flags);
        self.stop_rules.extend(other.stop_rules.iter().map(|&(a, r)| (s(a), r)));
        self.stop_rules.sort_by_key(|r| r.0);
        self.link_rules.extend(other.link_rules.iter().map(|&(a, b, r)| (s(a), s(b), r)));
        let shift = |e: &RuleEnd| match e {
            RuleEnd::Route(r) => RuleEnd::Route(RouteIdx(r.0 + ro)),
            other => other.clone(),
        };
        for r in other.specific_rules.drain(..) {
            self.specific_rules.push(SpecificRule { stop: s(r.stop), from: shift(&r.from), to: shift(&r.to), rule: r.rule });
        }
        self.specific_rules.sort_by_key(|r| r.stop);
        for mut p in other.pathways.drain(..) {
            p.from = s(p.from);
            p.to = s(p.to);
            self.pathways.push(p);
        }
        self.shapes.append(&mut other.shapes);
        for mut m in other.feeds.drain(..) {
            m.stop_range = (so, self.stops.len() as u32);
            m.trip_range = (to, self.trips.len() as u32);
            self.feeds.push(m);
        }
        feed
    }

    /// Removes one feed, keeping the others (rebuilt by re-appending them in order).
    pub fn without_feed(&self, name: &str) -> Option<Timetable> {
        let pos = self.feeds.iter().position(|f| f.name == name)?;
        let mut out = Timetable::default();
        for (i, _) in self.feeds.iter().enumerate() {
            if i != pos {
                out.append(self.extract_feed(i));
            }
        }
        Some(out)
    }

    /// A copy of one loaded feed as a timetable of its own (indices from 0).
    fn extract_feed(&self, i: usize) -> Timetable {
        let m = &self.feeds[i];
        let (s0, s1) = m.stop_range;
        let (t0, t1) = m.trip_range;
        let mut out = Timetable::default();
        let ls = |x: StopIdx| StopIdx(x.0 - s0);
        out.stops = self.stops[s0 as usize..s1 as usize]
            .iter()
            .cloned()
            .map(|mut st| {
                st.parent = st.parent.map(ls);
                st
            })
            .collect();
        let trips = &self.trips[t0 as usize..t1 as usize];
        let r0 = self.routes.iter().position(|r| r.feed.idx() == i).unwrap_or(0) as u32;
        let r1 = self.routes.iter().rposition(|r| r.feed.idx() == i).map_or(r0, |x| x as u32 + 1);
        out.routes = self.routes[r0 as usize..r1 as usize].to_vec();
        let sv0 = trips.iter().map(|t| t.service.0).min().unwrap_or(0);
        let sv1 = trips.iter().map(|t| t.service.0 + 1).max().unwrap_or(sv0);
        out.services = self.services[sv0 as usize..sv1 as usize].to_vec();
        let e0 = trips.first().map_or(0, |t| t.first_event);
        let e1 = trips.last().map_or(e0, |t| t.first_event + t.len);
        let sh0 = trips.iter().filter_map(|t| t.shape).min().unwrap_or(0);
        let sh1 = trips.iter().filter_map(|t| t.shape).max().map_or(sh0, |x| x + 1);
        out.shapes = self.shapes.get(sh0 as usize..sh1 as usize).map(|s| s.to_vec()).unwrap_or_default();
        out.trips = trips
            .iter()
            .cloned()
            .map(|mut t| {
                t.route = RouteIdx(t.route.0 - r0);
                t.service = ServiceIdx(t.service.0 - sv0);
                t.first_event -= e0;
                t.shape = t.shape.map(|x| x - sh0);
                t
            })
            .collect();
        let (e0, e1) = (e0 as usize, e1 as usize);
        out.ev_stop = self.ev_stop[e0..e1].iter().map(|&x| ls(x)).collect();
        out.ev_arr = self.ev_arr[e0..e1].to_vec();
        out.ev_dep = self.ev_dep[e0..e1].to_vec();
        out.ev_flags = self.ev_flags[e0..e1].to_vec();
        let mine = |x: StopIdx| x.0 >= s0 && x.0 < s1;
        out.stop_rules = self.stop_rules.iter().filter(|r| mine(r.0)).map(|&(a, r)| (ls(a), r)).collect();
        out.link_rules = self.link_rules.iter().filter(|r| mine(r.0)).map(|&(a, b, r)| (ls(a), ls(b), r)).collect();
        let unshift = |e: &RuleEnd| match e {
            RuleEnd::Route(r) => RuleEnd::Route(RouteIdx(r.0 - r0)),
            other => other.clone(),
        };
        out.specific_rules = self
            .specific_rules
            .iter()
            .filter(|r| mine(r.stop))
            .map(|r| SpecificRule { stop: ls(r.stop), from: unshift(&r.from), to: unshift(&r.to), rule: r.rule })
            .collect();
        out.pathways = self
            .pathways
            .iter()
            .filter(|p| mine(p.from))
            .cloned()
            .map(|mut p| {
                p.from = ls(p.from);
                p.to = ls(p.to);
                p
            })
            .collect();
        out.feeds = vec![m.clone()];
        out
    }
}

//! The snapshot: a loaded timetable cut to a run of service dates, in one binary file a kiosk (or
//! the command line) reads without parsing GTFS.
//!
//! Layout, all integers little-endian:
//!
//! | bytes | what |
//! |---|---|
//! | 0–7 | the signature `TWEAVSNP` |
//! | 8–11 | format version, [`VERSION`] |
//! | 12–15 | CRC-32 (IEEE 802.3, as zlib's `crc32`) of the body |
//! | 16–23 | body length in bytes |
//! | 24– | the body: [`Body`] in postcard (serde's compact varint format, whose wire format is frozen at 1.0) |
//!
//! The body stores each trip as a stop pattern (stops and pickup/drop-off flags, shared by every
//! trip that calls at the same stops), a running-time profile (arrival and dwell offsets from the
//! trip's first arrival, shared by every trip that runs the same times) and a start time. Service
//! calendars are cut to the snapshot's dates (and the day before), so it runs no trip on a date it
//! does not cover. Walking
//! links are not stored: they are rebuilt on load from stops, transfers and pathways, so a
//! snapshot never disagrees with the walking model of the build that reads it.
//!
//! **Invariant:** reading never panics on any bytes: every index in a body is checked before it
//! is used, and anything wrong is a [`SnapshotError`].

use std::collections::HashMap;

use chrono::{Duration, NaiveDate};
use serde::{Deserialize, Serialize};

use super::{
    Access, FeedMeta, Pathway, Route, RouteIdx, RuleEnd, Service, ServiceIdx, SpecificRule, Stop, StopIdx, Timetable, TransferRule, Trip,
};
use crate::error::WarningLog;

pub const SIGNATURE: &[u8; 8] = b"TWEAVSNP";
/// Bumped whenever [`Body`] changes shape; a file of another version is refused, never guessed.
pub const VERSION: u32 = 1;
const HEADER: usize = 24;

/// Why a file is not a snapshot this build can read.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error, Serialize)]
#[serde(tag = "code", rename_all = "snake_case")]
pub enum SnapshotError {
    #[error("not a timeweave snapshot: it does not start with the signature TWEAVSNP (make one with `timeweave snapshot`)")]
    NotSnapshot,
    #[error(
        "snapshot format version {found}, but this build reads version {expected}: make the snapshot again with this build (`timeweave snapshot` or `timeweave kiosk`)"
    )]
    Version { found: u32, expected: u32 },
    #[error("the snapshot is cut short: its header announces {expected} bytes of timetable, the file holds {found}: copy it again")]
    Truncated { expected: u64, found: u64 },
    #[error("the snapshot is damaged: its checksum is {stored:08x} but its contents give {computed:08x}: copy it again")]
    Checksum { stored: u32, computed: u32 },
    #[error("the snapshot's timetable cannot be read ({0}) although its checksum matches: make it again with this build")]
    Body(String),
    #[error("a snapshot holds a whole timetable: load it on its own, not beside other feeds")]
    NotEmpty,
}

/// What a snapshot says about itself, readable from the header and body without building.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct SnapshotInfo {
    pub version: u32,
    pub checksum: u32,
    /// The program that wrote it, e.g. `timeweave 0.1.0`.
    pub made_by: String,
    /// First and last service date it covers.
    pub first: NaiveDate,
    pub last: NaiveDate,
    pub bytes: u64,
}

#[derive(Serialize, Deserialize)]
struct FeedPart {
    name: String,
    timezone: String,
    agencies: Vec<String>,
    edition: Option<(String, String)>,
    first_date: Option<NaiveDate>,
    last_date: Option<NaiveDate>,
    stops: (u32, u32),
    trips: (u32, u32),
    warnings_total: u64,
}

/// A trip without its stop events: they are its pattern's stops at its profile's times.
#[derive(Serialize, Deserialize)]
struct TripPart {
    id: String,
    route: RouteIdx,
    service: ServiceIdx,
    /// Index into [`Body::texts`] (headsigns repeat across trips).
    headsign: Option<u32>,
    short_name: Option<String>,
    direction: Option<u8>,
    wheelchair: Access,
    shape: Option<u32>,
    pattern: u32,
    profile: u32,
    /// First arrival, seconds from the service day's origin.
    start: u32,
    frequency_based: bool,
    headway_s: Option<u32>,
    block: Option<u32>,
}

#[derive(Serialize, Deserialize)]
struct Body {
    made_by: String,
    first: NaiveDate,
    last: NaiveDate,
    feeds: Vec<FeedPart>,
    stops: Vec<Stop>,
    routes: Vec<Route>,
    services: Vec<Service>,
    texts: Vec<String>,
    /// Stop patterns: (stops, flags), one pair per stop event of a trip.
    patterns: Vec<(Vec<StopIdx>, Vec<u8>)>,
    /// Running-time profiles: per stop event, (arrival − previous departure, or 0 first; dwell).
    profiles: Vec<Vec<(u32, u32)>>,
    trips: Vec<TripPart>,
    stop_rules: Vec<(StopIdx, TransferRule)>,
    link_rules: Vec<(StopIdx, StopIdx, TransferRule)>,
    specific_rules: Vec<SpecificRule>,
    pathways: Vec<Pathway>,
    shapes: Vec<Vec<[f32; 2]>>,
}

/// Interns values, handing out their index in first-seen order.
struct Interner<K> {
    index: HashMap<K, u32>,
    items: Vec<K>,
}

impl<K: std::hash::Hash + Eq + Clone> Interner<K> {
    fn new() -> Self {
        Interner { index: HashMap::new(), items: Vec::new() }
    }
    fn id(&mut self, k: K) -> u32 {
        if let Some(&i) = self.index.get(&k) {
            return i;
        }
        let i = self.items.len() as u32;
        self.index.insert(k.clone(), i);
        self.items.push(k);
        i
    }
}

/// Writes the snapshot of `tt` for the service dates `first..=last`: the trips that run on one
/// of them or on the day before `first` (whose trips after midnight run into `first`).
pub fn write(tt: &Timetable, first: NaiveDate, last: NaiveDate, made_by: &str) -> Vec<u8> {
    let day_before = first - Duration::days(1);
    let runs: Vec<bool> = tt
        .services
        .iter()
        .map(|s| {
            let mut d = day_before;
            while d <= last {
                if s.runs_on(d) {
                    return true;
                }
                d += Duration::days(1);
            }
            false
        })
        .collect();
    let mut texts = Interner::new();
    let mut patterns = Interner::new();
    let mut profiles = Interner::new();
    let mut trips = Vec::new();
    let mut feeds = Vec::new();
    for f in &tt.feeds {
        let t0 = trips.len() as u32;
        for t in &tt.trips[f.trip_range.0 as usize..f.trip_range.1 as usize] {
            if !runs[t.service.idx()] {
                continue;
            }
            let ev = t.events();
            let stops = tt.ev_stop[ev.clone()].to_vec();
            let flags = tt.ev_flags[ev.clone()].to_vec();
            let mut prev_dep = tt.ev_arr.get(ev.start).copied().unwrap_or(0);
            let profile: Vec<(u32, u32)> = ev
                .clone()
                .map(|e| {
                    let (arr, dep) = (tt.ev_arr[e], tt.ev_dep[e]);
                    let step = (arr.saturating_sub(prev_dep), dep.saturating_sub(arr));
                    prev_dep = dep;
                    step
                })
                .collect();
            trips.push(TripPart {
                id: t.id.clone(),
                route: t.route,
                service: t.service,
                headsign: t.headsign.clone().map(|h| texts.id(h)),
                short_name: t.short_name.clone(),
                direction: t.direction,
                wheelchair: t.wheelchair,
                shape: t.shape,
                pattern: patterns.id((stops, flags)),
                profile: profiles.id(profile),
                start: tt.ev_arr.get(ev.start).copied().unwrap_or(0),
                frequency_based: t.frequency_based,
                headway_s: t.headway_s,
                block: t.block.clone().map(|b| texts.id(b)),
            });
        }
        let clip_first = f.first_date.map(|d| d.max(first));
        let clip_last = f.last_date.map(|d| d.min(last));
        feeds.push(FeedPart {
            name: f.name.clone(),
            timezone: f.timezone.name().to_string(),
            agencies: f.agencies.clone(),
            edition: f.edition.clone(),
            first_date: clip_first,
            last_date: clip_last,
            stops: f.stop_range,
            trips: (t0, trips.len() as u32),
            warnings_total: f.warnings.total,
        });
    }
    let body = Body {
        made_by: made_by.to_string(),
        first,
        last,
        feeds,
        stops: tt.stops.clone(),
        routes: tt.routes.clone(),
        services: tt.services.iter().map(|s| clip(s, day_before, last)).collect(),
        texts: texts.items,
        patterns: patterns.items,
        profiles: profiles.items,
        trips,
        stop_rules: tt.stop_rules.clone(),
        link_rules: tt.link_rules.clone(),
        specific_rules: tt.specific_rules.clone(),
        pathways: tt.pathways.clone(),
        shapes: tt.shapes.clone(),
    };
    let payload = postcard::to_stdvec(&body).expect("a timetable always serialises");
    let mut out = Vec::with_capacity(HEADER + payload.len());
    out.extend_from_slice(SIGNATURE);
    out.extend_from_slice(&VERSION.to_le_bytes());
    out.extend_from_slice(&crc32fast::hash(&payload).to_le_bytes());
    out.extend_from_slice(&(payload.len() as u64).to_le_bytes());
    out.extend_from_slice(&payload);
    out
}

/// A service cut to the dates `first..=last`, so a snapshot answers for no date it does not hold.
fn clip(s: &Service, first: NaiveDate, last: NaiveDate) -> Service {
    let within = |d: &&NaiveDate| first <= **d && **d <= last;
    Service {
        id: s.id.clone(),
        weekdays: s.weekdays,
        start: s.start.map(|d| d.max(first)),
        end: s.end.map(|d| d.min(last)),
        added: s.added.iter().filter(within).copied().collect(),
        removed: s.removed.iter().filter(within).copied().collect(),
    }
}

/// True when `bytes` start with the snapshot signature (so a shell can tell a snapshot from a zip).
pub fn is_snapshot(bytes: &[u8]) -> bool {
    bytes.starts_with(SIGNATURE)
}

/// Checks the header and checksum; returns the version, stored checksum and body.
fn open(bytes: &[u8]) -> Result<(u32, &[u8]), SnapshotError> {
    if !is_snapshot(bytes) {
        return Err(SnapshotError::NotSnapshot);
    }
    let word = |a: usize, b: usize| bytes.get(a..b).ok_or(SnapshotError::Truncated { expected: HEADER as u64, found: bytes.len() as u64 });
    let version = u32::from_le_bytes(word(8, 12)?.try_into().expect("4 bytes"));
    if version != VERSION {
        return Err(SnapshotError::Version { found: version, expected: VERSION });
    }
    let stored = u32::from_le_bytes(word(12, 16)?.try_into().expect("4 bytes"));
    let len = u64::from_le_bytes(word(16, 24)?.try_into().expect("8 bytes"));
    let found = (bytes.len() - HEADER) as u64;
    if found != len {
        return Err(SnapshotError::Truncated { expected: len, found });
    }
    let body = &bytes[HEADER..];
    let computed = crc32fast::hash(body);
    if computed != stored {
        return Err(SnapshotError::Checksum { stored, computed });
    }
    Ok((stored, body))
}

fn bad(what: impl Into<String>) -> SnapshotError {
    SnapshotError::Body(what.into())
}

/// Reads a snapshot into a timetable (walking links not yet built: `walking::rebuild`).
pub fn read(bytes: &[u8]) -> Result<(Timetable, SnapshotInfo), SnapshotError> {
    let (checksum, payload) = open(bytes)?;
    let body: Body = postcard::from_bytes(payload).map_err(|e| bad(e.to_string()))?;
    let info = SnapshotInfo {
        version: VERSION,
        checksum,
        made_by: body.made_by.clone(),
        first: body.first,
        last: body.last,
        bytes: bytes.len() as u64,
    };
    Ok((build(body)?, info))
}

fn check_stop(n: usize, s: StopIdx, what: &str) -> Result<(), SnapshotError> {
    if s.idx() < n {
        Ok(())
    } else {
        Err(bad(format!("{what} names stop {} of {n}", s.0)))
    }
}

fn build(b: Body) -> Result<Timetable, SnapshotError> {
    let n_stops = b.stops.len();
    for s in &b.stops {
        if let Some(p) = s.parent {
            check_stop(n_stops, p, "a stop's parent")?;
        }
    }
    for r in &b.stop_rules {
        check_stop(n_stops, r.0, "a transfer rule")?;
    }
    for r in &b.link_rules {
        check_stop(n_stops, r.0, "a transfer rule")?;
        check_stop(n_stops, r.1, "a transfer rule")?;
    }
    for r in &b.specific_rules {
        check_stop(n_stops, r.stop, "a transfer rule")?;
        for end in [&r.from, &r.to] {
            if let RuleEnd::Route(x) = end {
                if x.idx() >= b.routes.len() {
                    return Err(bad("a transfer rule names a route out of range"));
                }
            }
        }
    }
    for p in &b.pathways {
        check_stop(n_stops, p.from, "a pathway")?;
        check_stop(n_stops, p.to, "a pathway")?;
    }
    for (stops, flags) in &b.patterns {
        if stops.len() != flags.len() {
            return Err(bad("a stop pattern's stops and flags differ in length"));
        }
        for &s in stops {
            check_stop(n_stops, s, "a stop pattern")?;
        }
    }
    let mut tt = Timetable::default();
    for t in &b.trips {
        let (Some((stops, flags)), Some(profile)) = (b.patterns.get(t.pattern as usize), b.profiles.get(t.profile as usize)) else {
            return Err(bad(format!("trip {:?} names a pattern or profile out of range", t.id)));
        };
        if stops.len() != profile.len()
            || t.route.idx() >= b.routes.len()
            || t.service.idx() >= b.services.len()
            || t.shape.is_some_and(|s| s as usize >= b.shapes.len())
        {
            return Err(bad(format!("trip {:?} does not fit its pattern, route, service or shape", t.id)));
        }
        let text = |i: Option<u32>| -> Result<Option<String>, SnapshotError> {
            i.map(|i| b.texts.get(i as usize).cloned().ok_or_else(|| bad(format!("trip {:?} names a text out of range", t.id)))).transpose()
        };
        let first_event = tt.ev_stop.len() as u32;
        let mut dep = t.start;
        for (i, &(step, dwell)) in profile.iter().enumerate() {
            let arr = if i == 0 { t.start } else { dep.checked_add(step).ok_or_else(|| bad("a time overflows"))? };
            dep = arr.checked_add(dwell).ok_or_else(|| bad("a time overflows"))?;
            tt.ev_arr.push(arr);
            tt.ev_dep.push(dep);
        }
        tt.ev_stop.extend_from_slice(stops);
        tt.ev_flags.extend_from_slice(flags);
        tt.trips.push(Trip {
            id: t.id.clone(),
            route: t.route,
            service: t.service,
            headsign: text(t.headsign)?,
            short_name: t.short_name.clone(),
            direction: t.direction,
            wheelchair: t.wheelchair,
            shape: t.shape,
            first_event,
            len: stops.len() as u32,
            frequency_based: t.frequency_based,
            headway_s: t.headway_s,
            block: text(t.block)?,
        });
    }
    if b.feeds.is_empty() {
        return Err(bad("it holds no feed"));
    }
    let mut prev = (0u32, 0u32);
    for f in &b.feeds {
        let ok = f.stops.0 == prev.0 && f.stops.0 <= f.stops.1 && f.trips.0 == prev.1 && f.trips.0 <= f.trips.1;
        if !ok {
            return Err(bad(format!("feed {:?} does not follow the one before it", f.name)));
        }
        prev = (f.stops.1, f.trips.1);
        let timezone = f.timezone.parse().map_err(|_| bad(format!("time zone {:?} is not in the tz database", f.timezone)))?;
        let trips = &tt.trips[f.trips.0 as usize..f.trips.1.min(tt.trips.len() as u32) as usize];
        tt.feeds.push(FeedMeta {
            name: f.name.clone(),
            timezone,
            agencies: f.agencies.clone(),
            edition: f.edition.clone(),
            first_date: f.first_date,
            last_date: f.last_date,
            stops: (f.stops.1 - f.stops.0) as usize,
            routes: b.routes.iter().filter(|r| r.feed.idx() == tt.feeds.len()).count(),
            trips: trips.len(),
            stop_events: trips.iter().map(|t| t.len as usize).sum(),
            warnings: WarningLog { issues: Vec::new(), total: f.warnings_total },
            stop_range: f.stops,
            trip_range: f.trips,
        });
    }
    if prev != (n_stops as u32, tt.trips.len() as u32) {
        return Err(bad("the feeds do not cover every stop and trip"));
    }
    if b.stops.iter().any(|s| s.feed.idx() >= b.feeds.len()) || b.routes.iter().any(|r| r.feed.idx() >= b.feeds.len()) {
        return Err(bad("a stop or route names a feed out of range"));
    }
    tt.stops = b.stops;
    tt.routes = b.routes;
    tt.services = b.services;
    tt.stop_rules = b.stop_rules;
    tt.link_rules = b.link_rules;
    tt.specific_rules = b.specific_rules;
    tt.pathways = b.pathways;
    tt.shapes = b.shapes;
    Ok(tt)
}

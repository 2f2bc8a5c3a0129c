//! The feed layer: GTFS bytes (a zip, or files a shell provides) → rows → one feed's [`Timetable`], appended to the loaded
//! ones only when the whole feed has been read.
//!
//! The new feed is built in a timetable of its own and merged afterwards, so a feed that fails
//! leaves the loaded network untouched. Ids are scoped per feed (two feeds may both have stop "1").
//! `stop_times.txt`, by far the largest file, is read with the csv crate's `ByteRecord` (no owned
//! strings per row) and built trip by trip as the rows come; only a file whose trips' rows are
//! not together is read a second time into a buffer of all rows (`stop_times.rs`).

pub mod alerts;
pub mod files;
mod stop_times;
pub mod table;

use std::collections::HashMap;

use chrono::NaiveDate;
use chrono_tz::Tz;
use rustc_hash::FxHashMap;
use serde::Deserialize;

use crate::error::{FeedError, FeedIssue, WarningLog};
use crate::timetable::calendar::{parse_gtfs_date, Service};
use crate::timetable::walking::{haversine_m, WalkConfig};
use crate::timetable::*;
pub use files::{FeedFiles, FeedSource, Limits};
use stop_times::{read_stop_times, StopTimesCx};
use table::{parse_time, read_table};

/// Called with a stage name and a fraction 0–1 of the whole load.
pub type Progress<'p> = &'p mut dyn FnMut(&str, f32);

/// Loads a feed from zip bytes and appends it to `tt`. On error `tt` is unchanged.
pub fn load_zip(tt: &mut Timetable, name: &str, bytes: &[u8], walk: &WalkConfig, progress: Progress) -> Result<FeedIdx, FeedError> {
    progress("unzipping", 0.02);
    let files = FeedFiles::from_zip(name, bytes, &Limits::default()).map_err(FeedError)?;
    load_files(tt, name, files, walk, progress)
}

/// Loads a feed from a [`FeedSource`] a shell provides (a folder, say) and appends it to `tt`.
/// On error `tt` is unchanged.
pub fn load_source(
    tt: &mut Timetable,
    name: &str,
    source: &mut dyn FeedSource,
    walk: &WalkConfig,
    progress: Progress,
) -> Result<FeedIdx, FeedError> {
    progress("reading", 0.0);
    load_files(tt, name, FeedFiles::from_source(source, &Limits::default()), walk, progress)
}

/// `base`, or `base-2`, `base-3`… when a loaded feed already has that name.
pub fn unique_name(tt: &Timetable, base: &str) -> String {
    let mut name = base.to_string();
    let mut k = 2;
    while tt.feeds.iter().any(|f| f.name == name) {
        name = format!("{base}-{k}");
        k += 1;
    }
    name
}

fn load_files(
    tt: &mut Timetable,
    name: &str,
    mut files: FeedFiles<'_>,
    walk: &WalkConfig,
    progress: Progress,
) -> Result<FeedIdx, FeedError> {
    let feed = read_feed(name, &mut files, progress).map_err(FeedError)?;
    if let Some(clash) = version_clash(tt, &feed) {
        return Err(FeedError(clash));
    }
    progress("building", 0.9);
    let idx = tt.append(feed);
    crate::timetable::walking::rebuild(tt, walk);
    progress("done", 1.0);
    Ok(idx)
}

/// A new feed that looks like another version of one already loaded, which would double the
/// service if both were merged: the same `feed_info.txt` publisher and version, or an agency of
/// the same name with `trip_id`s in common. Feeds that only share service ids (`WKD`) or a
/// publisher are not versions of each other. Comparing two versions is a separate capability.
fn version_clash(loaded: &Timetable, new: &Timetable) -> Option<FeedIssue> {
    let meta = new.feeds.first()?;
    let new_trips: std::collections::HashSet<&str> = new.trips.iter().map(|t| t.id.as_str()).collect();
    for f in &loaded.feeds {
        if let (Some(a), Some(b)) = (&f.edition, &meta.edition) {
            if a == b {
                let msg = format!(
                    "has the same feed_info.txt (feed_publisher_name {:?}, feed_version {:?}) as the loaded feed {}; loading it again would run every trip twice. Remove {} first to load this one",
                    a.0, a.1, f.name, f.name
                );
                return Some(FeedIssue::new(&meta.name, msg).file("feed_info.txt"));
            }
        }
        let Some(agency) = meta.agencies.iter().find(|a| f.agencies.contains(a)) else { continue };
        let (t0, t1) = f.trip_range;
        let shared: Vec<&str> =
            loaded.trips[t0 as usize..t1 as usize].iter().map(|t| t.id.as_str()).filter(|id| new_trips.contains(id)).collect();
        if let Some(example) = shared.first() {
            let msg = format!(
                "looks like another version of the loaded feed {}: both have the agency {agency:?} and {} trip_id(s) in common (e.g. {example:?}); merging them would run those trips twice. Remove {} first, or load the two versions one at a time",
                f.name,
                shared.len(),
                f.name
            );
            return Some(FeedIssue::new(&meta.name, msg).file("trips.txt").field("trip_id").value(example));
        }
    }
    None
}

#[derive(Deserialize)]
struct FrequencyRow {
    trip_id: String,
    #[serde(deserialize_with = "table::time_field")]
    start_time: u32,
    #[serde(deserialize_with = "table::time_field")]
    end_time: u32,
    headway_secs: u32,
    #[serde(default)]
    exact_times: Option<String>,
}

#[derive(Deserialize)]
struct TransferRow {
    #[serde(default)]
    from_stop_id: Option<String>,
    #[serde(default)]
    to_stop_id: Option<String>,
    #[serde(default)]
    from_route_id: Option<String>,
    #[serde(default)]
    to_route_id: Option<String>,
    #[serde(default)]
    from_trip_id: Option<String>,
    #[serde(default)]
    to_trip_id: Option<String>,
    transfer_type: gtfs_structures::TransferType,
    #[serde(default)]
    min_transfer_time: Option<u32>,
}

#[derive(Deserialize)]
struct CalendarRow {
    service_id: String,
    monday: u8,
    tuesday: u8,
    wednesday: u8,
    thursday: u8,
    friday: u8,
    saturday: u8,
    sunday: u8,
    start_date: String,
    end_date: String,
}

#[derive(Deserialize)]
struct CalendarDateRow {
    service_id: String,
    date: String,
    exception_type: u8,
}

#[derive(Deserialize)]
struct FeedInfoRow {
    #[serde(default)]
    feed_publisher_name: Option<String>,
    #[serde(default)]
    feed_version: Option<String>,
    #[serde(default)]
    feed_start_date: Option<String>,
    #[serde(default)]
    feed_end_date: Option<String>,
}

/// Fraction of the load each stage reaches when done (stop_times dominates).
const STAGES: [(&str, f32); 12] = [
    ("agency.txt", 0.04),
    ("stops.txt", 0.08),
    ("routes.txt", 0.10),
    ("calendar.txt", 0.11),
    ("calendar_dates.txt", 0.12),
    ("trips.txt", 0.16),
    ("frequencies.txt", 0.17),
    ("stop_times.txt", 0.80),
    ("transfers.txt", 0.82),
    ("pathways.txt", 0.84),
    ("feed_info.txt", 0.85),
    ("shapes.txt", 0.88),
];

fn stage(progress: &mut dyn FnMut(&str, f32), file: &str) {
    let start = STAGES.iter().position(|s| s.0 == file).map(|i| if i == 0 { 0.03 } else { STAGES[i - 1].1 }).unwrap_or(0.5);
    progress(&format!("parsing {file}"), start);
}

fn read_feed(feed: &str, files: &mut FeedFiles<'_>, progress: Progress) -> Result<Timetable, FeedIssue> {
    let mut w = WarningLog::default();
    let mut tt = Timetable::default();
    for required in ["agency.txt", "stops.txt", "routes.txt", "trips.txt", "stop_times.txt"] {
        if !files.has(required) {
            return Err(FeedIssue::new(feed, format!("required file {required} is missing (GTFS Schedule reference)")).file(required));
        }
    }
    if !files.has("calendar.txt") && !files.has("calendar_dates.txt") {
        return Err(FeedIssue::new(
            feed,
            "neither calendar.txt nor calendar_dates.txt is present; one of them is required (GTFS Schedule reference)",
        )
        .file("calendar.txt"));
    }

    // agency.txt: the time zone every stop time is counted in.
    stage(progress, "agency.txt");
    let mut agencies: Vec<gtfs_structures::Agency> = Vec::new();
    let mut agency_lines = Vec::new();
    read_table(files, feed, "agency.txt", &["agency_name", "agency_timezone"], &mut w, |line, a: gtfs_structures::Agency, _| {
        agencies.push(a);
        agency_lines.push(line);
    })?;
    let Some(first) = agencies.first() else {
        return Err(FeedIssue::new(feed, "agency.txt has no usable row").file("agency.txt"));
    };
    let tz: Tz = first.timezone.parse().map_err(|_| {
        FeedIssue::new(feed, "agency_timezone is not a time zone of the IANA tz database (e.g. \"Etc/GMT-1\")")
            .file("agency.txt")
            .line(agency_lines[0])
            .field("agency_timezone")
            .value(&first.timezone)
    })?;
    for (a, &line) in agencies.iter().zip(&agency_lines).skip(1) {
        if a.timezone != first.timezone {
            w.push(
                FeedIssue::new(
                    feed,
                    format!("all agencies of a feed must share agency_timezone (GTFS Schedule reference); using {}", first.timezone),
                )
                .file("agency.txt")
                .line(line)
                .field("agency_timezone")
                .value(&a.timezone),
            );
        }
    }
    let agency_name: HashMap<String, String> = agencies.iter().map(|a| (a.id.clone().unwrap_or_default(), a.name.clone())).collect();

    // stops.txt
    stage(progress, "stops.txt");
    let mut stop_index: FxHashMap<String, StopIdx> = FxHashMap::default();
    let mut parents: Vec<(StopIdx, String, u64)> = Vec::new();
    read_table(files, feed, "stops.txt", &["stop_id"], &mut w, |line, s: gtfs_structures::Stop, w| {
        let issue = |m: String| FeedIssue::new(feed, m).file("stops.txt").line(line);
        if stop_index.contains_key(&s.id) {
            w.push(issue("stop_id is used twice; the later row is skipped".into()).field("stop_id").value(&s.id));
            return;
        }
        use gtfs_structures::LocationType as L;
        let kind = match s.location_type {
            L::StopPoint => StopKind::Platform,
            L::StopArea => StopKind::Station,
            L::StationEntrance => StopKind::Entrance,
            L::GenericNode => StopKind::Node,
            L::BoardingArea => StopKind::BoardingArea,
            _ => {
                w.push(issue("location_type must be 0–4 (GTFS Schedule reference); row skipped".into()).field("location_type"));
                return;
            }
        };
        let needs_position = matches!(kind, StopKind::Platform | StopKind::Station | StopKind::Entrance);
        let (lat, lon) = (s.latitude.unwrap_or(f64::NAN), s.longitude.unwrap_or(f64::NAN));
        if needs_position {
            if !(-90.0..=90.0).contains(&lat) {
                w.push(
                    issue(format!(
                        "stop {}: stop_lat must be a WGS84 latitude −90…90 (required for location_type 0–2); stop skipped",
                        s.id
                    ))
                    .field("stop_lat")
                    .value(&lat.to_string()),
                );
                return;
            }
            if !(-180.0..=180.0).contains(&lon) {
                w.push(
                    issue(format!(
                        "stop {}: stop_lon must be a WGS84 longitude −180…180 (required for location_type 0–2); stop skipped",
                        s.id
                    ))
                    .field("stop_lon")
                    .value(&lon.to_string()),
                );
                return;
            }
            if lat == 0.0 && lon == 0.0 {
                w.push(
                    issue(format!("stop {}: position 0,0 is a placeholder, not a real stop position; stop skipped", s.id))
                        .field("stop_lat")
                        .value("0"),
                );
                return;
            }
        }
        let idx = StopIdx(tt.stops.len() as u32);
        stop_index.insert(s.id.clone(), idx);
        if let Some(p) = s.parent_station.as_ref().filter(|p| !p.is_empty()) {
            parents.push((idx, p.clone(), line));
        }
        let wc = Access::from_gtfs(s.wheelchair_boarding);
        tt.stops.push(Stop {
            feed: FeedIdx(0),
            name: s.name.clone().unwrap_or_else(|| s.id.clone()),
            id: s.id,
            code: s.code.filter(|c| !c.is_empty()),
            lat,
            lon,
            kind,
            parent: None,
            wheelchair_raw: wc,
            wheelchair: wc,
            wheelchair_inherited: false,
            level: s.level_id.filter(|l| !l.is_empty()),
            platform_code: s.platform_code.filter(|p| !p.is_empty()),
        });
    })?;
    for (child, parent, line) in parents {
        match stop_index.get(&parent) {
            Some(&p) if p == child => w.push(
                FeedIssue::new(feed, "a stop cannot be its own parent_station; parent ignored")
                    .file("stops.txt")
                    .line(line)
                    .field("parent_station")
                    .value(&parent),
            ),
            Some(&p) => tt.stops[child.idx()].parent = Some(p),
            None => w.push(
                FeedIssue::new(feed, "parent_station names no stop of this feed; parent ignored")
                    .file("stops.txt")
                    .line(line)
                    .field("parent_station")
                    .value(&parent),
            ),
        }
    }
    inherit_wheelchair(&mut tt);
    if tt.stops.is_empty() {
        return Err(FeedIssue::new(feed, "stops.txt has no usable row").file("stops.txt"));
    }

    // routes.txt
    stage(progress, "routes.txt");
    let mut route_index: HashMap<String, RouteIdx> = HashMap::new();
    read_table(files, feed, "routes.txt", &["route_id", "route_type"], &mut w, |line, r: gtfs_structures::Route, w| {
        if route_index.contains_key(&r.id) {
            w.push(
                FeedIssue::new(feed, "route_id is used twice; the later row is skipped")
                    .file("routes.txt")
                    .line(line)
                    .field("route_id")
                    .value(&r.id),
            );
            return;
        }
        route_index.insert(r.id.clone(), RouteIdx(tt.routes.len() as u32));
        let agency = r
            .agency_id
            .as_ref()
            .and_then(|a| agency_name.get(a))
            .or_else(|| agencies.first().map(|a| &a.name))
            .cloned()
            .unwrap_or_default();
        tt.routes.push(Route {
            feed: FeedIdx(0),
            short_name: r.short_name.clone().unwrap_or_default(),
            long_name: r.long_name.clone().unwrap_or_default(),
            mode: Mode::from_route_type(&r.route_type),
            route_type: route_type_code(&r.route_type),
            color: r.color.map(|c| format!("#{:02X}{:02X}{:02X}", c.r, c.g, c.b)).unwrap_or_else(|| "#FFFFFF".into()),
            text_color: r.text_color.map(|c| format!("#{:02X}{:02X}{:02X}", c.r, c.g, c.b)).unwrap_or_else(|| "#000000".into()),
            agency,
            id: r.id,
        });
    })?;

    // calendar.txt, calendar_dates.txt
    stage(progress, "calendar.txt");
    let mut service_index: HashMap<String, ServiceIdx> = HashMap::new();
    let mut service = |id: &str, tt: &mut Timetable| -> ServiceIdx {
        *service_index.entry(id.to_string()).or_insert_with(|| {
            tt.services.push(Service::new(id));
            ServiceIdx(tt.services.len() as u32 - 1)
        })
    };
    read_table(
        files,
        feed,
        "calendar.txt",
        &["service_id", "monday", "tuesday", "wednesday", "thursday", "friday", "saturday", "sunday", "start_date", "end_date"],
        &mut w,
        |line, c: CalendarRow, w| {
            let issue = |m: &str, field: &str, v: &str| FeedIssue::new(feed, m).file("calendar.txt").line(line).field(field).value(v);
            let (Some(start), Some(end)) = (parse_gtfs_date(&c.start_date), parse_gtfs_date(&c.end_date)) else {
                let bad = if parse_gtfs_date(&c.start_date).is_none() { ("start_date", &c.start_date) } else { ("end_date", &c.end_date) };
                w.push(issue("not a date YYYYMMDD; row skipped", bad.0, bad.1));
                return;
            };
            if end < start {
                w.push(issue(&format!("end_date is before start_date {}; row skipped", c.start_date), "end_date", &c.end_date));
                return;
            }
            let days = [c.monday, c.tuesday, c.wednesday, c.thursday, c.friday, c.saturday, c.sunday];
            if days.iter().any(|&d| d > 1) {
                w.push(issue("weekday fields must be 0 or 1; row skipped", "monday", ""));
                return;
            }
            let s = service(&c.service_id, &mut tt);
            let svc = &mut tt.services[s.idx()];
            svc.weekdays = days.map(|d| d == 1);
            svc.start = Some(start);
            svc.end = Some(end);
        },
    )?;
    stage(progress, "calendar_dates.txt");
    read_table(files, feed, "calendar_dates.txt", &["service_id", "date", "exception_type"], &mut w, |line, c: CalendarDateRow, w| {
        let Some(date) = parse_gtfs_date(&c.date) else {
            w.push(
                FeedIssue::new(feed, "not a date YYYYMMDD; row skipped").file("calendar_dates.txt").line(line).field("date").value(&c.date),
            );
            return;
        };
        let s = service(&c.service_id, &mut tt);
        match c.exception_type {
            1 => tt.services[s.idx()].added.push(date),
            2 => tt.services[s.idx()].removed.push(date),
            other => w.push(
                FeedIssue::new(feed, "exception_type must be 1 (added) or 2 (removed); row skipped")
                    .file("calendar_dates.txt")
                    .line(line)
                    .field("exception_type")
                    .value(&other.to_string()),
            ),
        }
    })?;

    // trips.txt
    stage(progress, "trips.txt");
    let mut trip_index: FxHashMap<String, TripIdx> = FxHashMap::default();
    let mut shape_ids: HashMap<String, u32> = HashMap::new();
    read_table(files, feed, "trips.txt", &["route_id", "service_id", "trip_id"], &mut w, |line, t: gtfs_structures::RawTrip, w| {
        let issue = |m: &str, field: &str, v: &str| FeedIssue::new(feed, m).file("trips.txt").line(line).field(field).value(v);
        if trip_index.contains_key(&t.id) {
            return w.push(issue("trip_id is used twice; the later row is skipped", "trip_id", &t.id));
        }
        let Some(&route) = route_index.get(&t.route_id) else {
            return w.push(issue("route_id names no route in routes.txt; trip skipped", "route_id", &t.route_id));
        };
        let Some(&service) = service_index.get(&t.service_id) else {
            return w.push(issue(
                "service_id is in neither calendar.txt nor calendar_dates.txt; trip skipped",
                "service_id",
                &t.service_id,
            ));
        };
        let shape = t.shape_id.as_ref().filter(|s| !s.is_empty()).map(|s| {
            let n = shape_ids.len() as u32;
            *shape_ids.entry(s.clone()).or_insert(n)
        });
        trip_index.insert(t.id.clone(), TripIdx(tt.trips.len() as u32));
        tt.trips.push(Trip {
            route,
            service,
            headsign: t.trip_headsign.filter(|h| !h.is_empty()),
            short_name: t.trip_short_name.filter(|h| !h.is_empty()),
            direction: t.direction_id.map(|d| d as u8),
            wheelchair: Access::from_gtfs(t.wheelchair_accessible),
            shape,
            first_event: 0,
            len: 0,
            frequency_based: false,
            headway_s: None,
            block: t.block_id.filter(|b| !b.is_empty()),
            id: t.id,
        });
    })?;

    // frequencies.txt
    stage(progress, "frequencies.txt");
    let mut frequencies: HashMap<TripIdx, Vec<FrequencyRow>> = HashMap::new();
    read_table(
        files,
        feed,
        "frequencies.txt",
        &["trip_id", "start_time", "end_time", "headway_secs"],
        &mut w,
        |line, f: FrequencyRow, w| {
            let issue = |m: &str, field: &str, v: &str| FeedIssue::new(feed, m).file("frequencies.txt").line(line).field(field).value(v);
            let Some(&t) = trip_index.get(&f.trip_id) else {
                return w.push(issue("trip_id names no trip in trips.txt; row skipped", "trip_id", &f.trip_id));
            };
            if f.headway_secs == 0 || f.end_time <= f.start_time {
                return w.push(issue(
                    "headway_secs must be positive and end_time after start_time; row skipped",
                    "headway_secs",
                    &f.headway_secs.to_string(),
                ));
            }
            if !matches!(f.exact_times.as_deref(), None | Some("") | Some("0") | Some("1")) {
                return w.push(issue("exact_times must be 0 or 1; row skipped", "exact_times", f.exact_times.as_deref().unwrap_or("")));
            }
            frequencies.entry(t).or_default().push(f);
        },
    )?;

    // stop_times.txt
    stage(progress, "stop_times.txt");
    read_stop_times(
        &StopTimesCx { feed, trip_index: &trip_index, stop_index: &stop_index, frequencies: &frequencies },
        files,
        &mut tt,
        &mut w,
        progress,
    )?;

    // transfers.txt
    stage(progress, "transfers.txt");
    let children = children_of(&tt);
    let expand = |s: StopIdx| -> Vec<StopIdx> {
        if tt.stops[s.idx()].kind == StopKind::Station {
            children.get(&s).cloned().unwrap_or_default()
        } else {
            vec![s]
        }
    };
    let mut stop_rules = Vec::new();
    let mut link_rules = Vec::new();
    let mut specific_rules = Vec::new();
    let mut specific = 0u64;
    read_table(files, feed, "transfers.txt", &["transfer_type"], &mut w, |line, t: TransferRow, w| {
        let issue = |m: &str, field: &str, v: &str| FeedIssue::new(feed, m).file("transfers.txt").line(line).field(field).value(v);
        use gtfs_structures::TransferType as T;
        let rule = match t.transfer_type {
            T::Recommended => TransferRule::MinTime(0),
            T::Timed => TransferRule::Timed,
            T::MinTime => match t.min_transfer_time {
                Some(m) => TransferRule::MinTime(m),
                None => {
                    return w.push(issue(
                        "transfer_type 2 needs min_transfer_time (GTFS Schedule reference); row skipped",
                        "min_transfer_time",
                        "",
                    ))
                }
            },
            T::Impossible => TransferRule::Forbidden,
            T::StayOnBoard | T::MustAlight => return, // in-seat rules: staying seated is already free
        };
        let given = |x: &Option<String>| x.as_deref().filter(|s| !s.is_empty()).map(str::to_string);
        let (ft, tt_, fr, tr) = (given(&t.from_trip_id), given(&t.to_trip_id), given(&t.from_route_id), given(&t.to_route_id));
        if ft.is_some() || tt_.is_some() || fr.is_some() || tr.is_some() {
            let end = |trip: Option<String>, route: Option<String>, tf: &str, rf: &str| -> Result<RuleEnd, FeedIssue> {
                if let Some(id) = trip {
                    return if trip_index.contains_key(&id) {
                        Ok(RuleEnd::Trip(id))
                    } else {
                        Err(issue("names no trip in trips.txt; row skipped", tf, &id))
                    };
                }
                match route {
                    Some(id) => route_index
                        .get(&id)
                        .map(|&r| RuleEnd::Route(r))
                        .ok_or_else(|| issue("names no route in routes.txt; row skipped", rf, &id)),
                    None => Ok(RuleEnd::Any),
                }
            };
            let (from, to) = match (end(ft, fr, "from_trip_id", "from_route_id"), end(tt_, tr, "to_trip_id", "to_route_id")) {
                (Ok(a), Ok(b)) => (a, b),
                (Err(e), _) | (_, Err(e)) => return w.push(e),
            };
            let same_stop = t.from_stop_id.is_some() && t.from_stop_id == t.to_stop_id;
            match (from == RuleEnd::Any, t.from_stop_id.as_deref().and_then(|s| stop_index.get(s)), same_stop) {
                (false, Some(&at), true) => {
                    for x in expand(at) {
                        specific_rules.push(SpecificRule { stop: x, from: from.clone(), to: to.clone(), rule });
                    }
                }
                _ => specific += 1,
            }
            return;
        }
        let (Some(from), Some(to)) =
            (t.from_stop_id.as_deref().filter(|s| !s.is_empty()), t.to_stop_id.as_deref().filter(|s| !s.is_empty()))
        else {
            return w.push(issue("from_stop_id and to_stop_id are required for a stop-to-stop transfer; row skipped", "from_stop_id", ""));
        };
        let Some(&a) = stop_index.get(from) else { return w.push(issue("from_stop_id names no stop; row skipped", "from_stop_id", from)) };
        let Some(&b) = stop_index.get(to) else { return w.push(issue("to_stop_id names no stop; row skipped", "to_stop_id", to)) };
        for x in expand(a) {
            for y in expand(b) {
                if x == y {
                    stop_rules
                        .push((x, if rule == TransferRule::MinTime(0) && t.transfer_type == T::Recommended { continue } else { rule }));
                } else if t.transfer_type != T::Recommended {
                    link_rules.push((x, y, rule));
                }
            }
        }
    })?;
    if specific > 0 {
        w.push(FeedIssue::new(feed, format!("{specific} trip- or route-specific transfer rows are not applied: only rules with a from_trip_id or from_route_id and the same from_stop_id and to_stop_id are; those changes follow the stops' rules")).file("transfers.txt"));
    }
    stop_rules.sort_by_key(|r| r.0);
    stop_rules.dedup_by_key(|r| r.0);
    tt.stop_rules = stop_rules;
    tt.link_rules = link_rules;
    specific_rules.sort_by_key(|r| r.stop);
    tt.specific_rules = specific_rules;

    // pathways.txt
    stage(progress, "pathways.txt");
    read_table(
        files,
        feed,
        "pathways.txt",
        &["pathway_id", "from_stop_id", "to_stop_id", "pathway_mode", "is_bidirectional"],
        &mut w,
        |line, p: gtfs_structures::RawPathway, w| {
            let issue = |m: &str, field: &str, v: &str| FeedIssue::new(feed, m).file("pathways.txt").line(line).field(field).value(v);
            let Some(&from) = stop_index.get(&p.from_stop_id) else {
                return w.push(issue("from_stop_id names no stop; pathway skipped", "from_stop_id", &p.from_stop_id));
            };
            let Some(&to) = stop_index.get(&p.to_stop_id) else {
                return w.push(issue("to_stop_id names no stop; pathway skipped", "to_stop_id", &p.to_stop_id));
            };
            for (s, field) in [(from, "from_stop_id"), (to, "to_stop_id")] {
                if tt.stops[s.idx()].kind == StopKind::Station {
                    return w.push(issue(
                        "a pathway cannot start or end at a station (location_type 1, GTFS Schedule reference); pathway skipped",
                        field,
                        &tt.stops[s.idx()].id,
                    ));
                }
            }
            tt.pathways.push(Pathway {
                id: p.id,
                from,
                to,
                mode: PathwayMode::from_gtfs(p.mode),
                bidirectional: p.is_bidirectional == gtfs_structures::PathwayDirectionType::Bidirectional,
                length_m: p.length.filter(|l| l.is_finite() && *l >= 0.0),
                traversal_time_s: p.traversal_time,
                stair_count: p.stair_count,
                max_slope: p.max_slope,
                min_width_m: p.min_width,
            });
        },
    )?;

    // feed_info.txt: the feed's validity dates.
    stage(progress, "feed_info.txt");
    let mut dates: (Option<NaiveDate>, Option<NaiveDate>) = (None, None);
    let mut edition: Option<(String, String)> = None;
    read_table(files, feed, "feed_info.txt", &[], &mut w, |_, f: FeedInfoRow, _| {
        dates = (f.feed_start_date.as_deref().and_then(parse_gtfs_date), f.feed_end_date.as_deref().and_then(parse_gtfs_date));
        let nonempty = |v: Option<String>| v.map(|v| v.trim().to_string()).filter(|v| !v.is_empty());
        edition = nonempty(f.feed_publisher_name).zip(nonempty(f.feed_version));
    })?;
    let first_date = dates.0.or_else(|| tt.services.iter().filter_map(Service::first_date).min());
    let last_date = dates.1.or_else(|| tt.services.iter().filter_map(Service::last_date).max());

    // shapes.txt: kept simplified, only for drawing.
    stage(progress, "shapes.txt");
    let mut shape_points: Vec<Vec<(usize, [f32; 2])>> = vec![Vec::new(); shape_ids.len()];
    read_table(
        files,
        feed,
        "shapes.txt",
        &["shape_id", "shape_pt_lat", "shape_pt_lon", "shape_pt_sequence"],
        &mut w,
        |_, s: gtfs_structures::Shape, _| {
            if let Some(&i) = shape_ids.get(&s.id) {
                shape_points[i as usize].push((s.sequence, [s.latitude as f32, s.longitude as f32]));
            }
        },
    )?;
    tt.shapes = shape_points.into_iter().map(simplify_shape).collect();

    tt.feeds.push(FeedMeta {
        name: feed.to_string(),
        timezone: tz,
        agencies: agencies.iter().map(|a| a.name.clone()).collect(),
        edition,
        first_date,
        last_date,
        stops: tt.stops.len(),
        routes: tt.routes.len(),
        trips: tt.trips.len(),
        stop_events: tt.ev_stop.len(),
        warnings: w,
        stop_range: (0, 0),
        trip_range: (0, 0),
    });
    Ok(tt)
}

fn route_type_code(rt: &gtfs_structures::RouteType) -> i16 {
    use gtfs_structures::RouteType::*;
    match rt {
        Tramway => 0,
        Subway => 1,
        Rail => 2,
        Bus => 3,
        Ferry => 4,
        CableCar => 5,
        Gondola => 6,
        Funicular => 7,
        Extended(e) => *e as i16,
        Other(i) => *i,
    }
}

fn children_of(tt: &Timetable) -> HashMap<StopIdx, Vec<StopIdx>> {
    let mut m: HashMap<StopIdx, Vec<StopIdx>> = HashMap::new();
    for (i, s) in tt.stops.iter().enumerate() {
        if let Some(p) = s.parent {
            m.entry(p).or_default().push(StopIdx(i as u32));
        }
    }
    m
}

/// GTFS Schedule reference, stops.txt `wheelchair_boarding`: for a child stop or entrance, an
/// empty or 0 value means "inherit the parent station's value". Boarding areas inherit from their
/// platform, which may itself have inherited.
fn inherit_wheelchair(tt: &mut Timetable) {
    for _ in 0..3 {
        for i in 0..tt.stops.len() {
            let s = &tt.stops[i];
            if s.wheelchair != Access::Unknown || s.kind == StopKind::Station {
                continue;
            }
            if let Some(p) = s.parent {
                let pw = tt.stops[p.idx()].wheelchair;
                if pw != Access::Unknown {
                    tt.stops[i].wheelchair = pw;
                    tt.stops[i].wheelchair_inherited = true;
                }
            }
        }
    }
}

/// Keeps at most ~200 points of a shape (every k-th), enough for a schematic drawing.
fn simplify_shape(mut pts: Vec<(usize, [f32; 2])>) -> Vec<[f32; 2]> {
    pts.sort_by_key(|p| p.0);
    let step = pts.len().div_ceil(200).max(1);
    let last = pts.last().map(|p| p.1);
    let mut out: Vec<[f32; 2]> = pts.iter().step_by(step).map(|p| p.1).collect();
    if let Some(l) = last {
        if out.last() != Some(&l) {
            out.push(l);
        }
    }
    out
}

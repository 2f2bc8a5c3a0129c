//! An oracle for the model, not only the search: random feeds are planned by the engine and by a
//! plain model written here from the feeds' own rows, independently of `src/` (no engine type,
//! table or walking link is read). The model's rules are the GTFS Schedule reference's and the
//! ones DEVELOPERS.md states for the engine:
//!
//! - footpaths from coordinates: stops within 400 m (great-circle, mean Earth radius
//!   6,371,008.8 m, IUGG) get a street link of 1.3 × that length, walked at 1.3 m/s, seconds
//!   rounded up; links longer than the 800 m walking limit are not used (all common practice, no
//!   source, as DEVELOPERS.md says);
//! - `transfers.txt`, GTFS Schedule reference: at one stop, transfer_type 1 = no minimum,
//!   2 = `min_transfer_time`, 3 = no change there (otherwise 60 s, common practice); between two
//!   stops, 3 removes the link, 1 and 2 make one exist, and a type 2 time is the change time; a
//!   station id stands for all its child stops;
//! - `frequencies.txt`, GTFS Schedule reference: trips at start + k × headway < end, stop times
//!   as offsets from the template trip's first departure;
//! - service days, GTFS Schedule reference: calendar.txt weekdays within its dates, then
//!   calendar_dates.txt exceptions (1 added, 2 removed); times past 24:00:00 belong to the day
//!   the trip's service runs on, so the previous day's trips still run after midnight;
//! - pickup_type / drop_off_type 1 = none; 0, 2 and 3 allow boarding or alighting (2 and 3 by
//!   arrangement), GTFS Schedule reference;
//! - two feeds share stop ids; a journey may walk between their stops.
//!
//! Checks, for random queries: the earliest arrival with no change penalty (a Connection Scan
//! over the model); the fewest-rides set (earliest arrival per number of rides, a round-based
//! scan of the model); the best generalised cost under the default 300 s change penalty (the
//! least of `arrival + 300 × (rides − 1)` over that set, or a walk-only journey); and each of the
//! next three options: its cost is the best the model finds leaving at its departure.

mod support;

use std::collections::HashMap;

use support::{Feed, Rng};
use timeweave::engine::{Engine, PlanQuery};
use timeweave::route::options;
use timeweave::route::search::{Endpoints, Params, Query, SearchState, StepFree};

/// Wednesday 2026-06-10; the previous day is a Tuesday.
const DATE: &str = "2026-06-10";
const DAY: i64 = 86_400;
const WALK_MPS: f64 = 1.3;
const RADIUS_M: f64 = 400.0;
const DETOUR: f64 = 1.3;
const WALK_LIMIT_M: f64 = 800.0;
const DEFAULT_CHANGE_S: i64 = 60;
const PENALTY_S: i64 = 300;
const HORIZON_S: i64 = 4 * 3600;

#[derive(Clone)]
struct StopSpec {
    id: String,
    lat: f64,
    lon: f64,
    /// Child of the feed's station `ST`.
    in_station: bool,
}

#[derive(Clone)]
struct TripSpec {
    id: String,
    service: &'static str,
    /// (stop index in the feed, arrival s, departure s, pickup_type, drop_off_type)
    times: Vec<(usize, i64, i64, u8, u8)>,
    /// (start s, end s, headway s, exact_times)
    frequency: Option<(i64, i64, i64, u8)>,
}

struct FeedSpec {
    name: &'static str,
    stops: Vec<StopSpec>,
    trips: Vec<TripSpec>,
    /// (from stop id or "ST", to stop id or "ST", transfer_type, min_transfer_time)
    transfers: Vec<(String, String, u8, i64)>,
}

fn clock(s: i64) -> String {
    format!("{:02}:{:02}:{:02}", s / 3600, s / 60 % 60, s % 60)
}

fn random_feed(rng: &mut Rng, name: &'static str, prefix: &str) -> FeedSpec {
    // Stops on a grid of cells about 220 m apart, so neighbours are within the walking radius
    // and a change often needs a walk. Ids S0… are the same in both feeds.
    let n = 5 + rng.below(4) as usize;
    let mut cells: Vec<(u32, u32)> = Vec::new();
    while cells.len() < n {
        let c = (rng.below(4), rng.below(4));
        if !cells.contains(&c) {
            cells.push(c);
        }
    }
    let stops: Vec<StopSpec> = cells
        .iter()
        .enumerate()
        .map(|(i, &(y, x))| StopSpec {
            id: format!("S{i}"),
            lat: 52.0 + y as f64 * 0.002 + rng.below(300) as f64 * 1e-6,
            lon: 13.0 + x as f64 * 0.003 + rng.below(300) as f64 * 1e-6,
            in_station: i < 2,
        })
        .collect();
    let mut trips = Vec::new();
    let count = 6 + rng.below(7) as usize;
    for k in 0..count {
        let len = 2 + rng.below(3) as usize;
        let mut seq: Vec<usize> = Vec::new();
        while seq.len() < len {
            let s = rng.below(n as u32) as usize;
            if seq.last() != Some(&s) && !seq.contains(&s) {
                seq.push(s);
            }
        }
        let night = rng.chance(20);
        let service = if night {
            "NIGHT"
        } else if rng.chance(15) {
            "EXTRA"
        } else {
            "WK"
        };
        let mut t = if night { 23 * 3600 + 30 * 60 + rng.below(50) as i64 * 60 } else { 7 * 3600 + rng.below(100) as i64 * 60 };
        let mut times = Vec::new();
        for (i, &s) in seq.iter().enumerate() {
            if i > 0 {
                t += 60 * (1 + rng.below(6) as i64);
            }
            let dwell = if rng.chance(20) { 60 } else { 0 };
            let kind = |rng: &mut Rng| [0u8, 0, 0, 0, 1, 2, 3][rng.below(7) as usize];
            times.push((s, t, t + dwell, kind(rng), kind(rng)));
            t += dwell;
        }
        let frequency = (!night && rng.chance(15)).then(|| {
            let start = times[0].2;
            (start, start + 1800 + rng.below(3) as i64 * 600, 600 + rng.below(3) as i64 * 300, rng.below(2) as u8)
        });
        trips.push(TripSpec { id: format!("{prefix}{k}"), service, times, frequency });
    }
    let mut transfers = Vec::new();
    for _ in 0..rng.below(4) {
        let (a, b) = (rng.below(n as u32) as usize, rng.below(n as u32) as usize);
        let ty = [1u8, 2, 2, 3][rng.below(4) as usize];
        transfers.push((stops[a].id.clone(), stops[b].id.clone(), ty, 30 * (1 + rng.below(10) as i64)));
    }
    if rng.chance(40) {
        transfers.push(("ST".into(), "ST".into(), 2, 30 * (1 + rng.below(8) as i64)));
    }
    FeedSpec { name, stops, trips, transfers }
}

fn to_feed(f: &FeedSpec) -> Feed {
    let mut stops = String::from("stop_id,stop_name,stop_lat,stop_lon,location_type,parent_station\n");
    stops += &format!("ST,{} Station,{:.6},{:.6},1,\n", f.name, f.stops[0].lat, f.stops[0].lon);
    for s in &f.stops {
        stops += &format!("{},{} {},{:.6},{:.6},0,{}\n", s.id, f.name, s.id, s.lat, s.lon, if s.in_station { "ST" } else { "" });
    }
    let mut trips = String::from("route_id,service_id,trip_id\n");
    let mut times = String::from("trip_id,arrival_time,departure_time,stop_id,stop_sequence,pickup_type,drop_off_type\n");
    let mut freqs = String::from("trip_id,start_time,end_time,headway_secs,exact_times\n");
    for t in &f.trips {
        trips += &format!("R,{},{}\n", t.service, t.id);
        for (i, &(s, a, d, pu, dr)) in t.times.iter().enumerate() {
            times += &format!("{},{},{},{},{},{pu},{dr}\n", t.id, clock(a), clock(d), f.stops[s].id, i + 1);
        }
        if let Some((start, end, h, exact)) = t.frequency {
            freqs += &format!("{},{},{},{h},{exact}\n", t.id, clock(start), clock(end));
        }
    }
    let mut transfers = String::from("from_stop_id,to_stop_id,transfer_type,min_transfer_time\n");
    for (a, b, ty, m) in &f.transfers {
        transfers += &format!("{a},{b},{ty},{}\n", if *ty == 2 { m.to_string() } else { String::new() });
    }
    Feed::default()
        .file(
            "agency.txt",
            &format!("agency_id,agency_name,agency_url,agency_timezone\nA,{} Lines,https://transit.example/,Etc/GMT-1\n", f.name),
        )
        .one_route()
        .file("stops.txt", &stops)
        .file("trips.txt", &trips)
        .file("stop_times.txt", &times)
        .file("frequencies.txt", &freqs)
        .file("transfers.txt", &transfers)
        // WK: weekdays; NIGHT: every day; EXTRA: only on the query date, added by an exception.
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
            WK,1,1,1,1,1,0,0,20260101,20261231
            NIGHT,1,1,1,1,1,1,1,20260101,20261231",
        )
        .file("calendar_dates.txt", "service_id,date,exception_type\nEXTRA,20260610,1\nWK,20260609,2\n")
}

// ------------------------------------------------------------------------------------ the model

/// Stops of the model are (feed, index) pairs flattened into one list.
struct Model {
    /// Connections (from, to, dep, arr, trip instance, pickup at from, drop-off at to), by dep.
    conns: Vec<(usize, usize, i64, i64, usize, bool, bool)>,
    /// Walking links: from → [(to, seconds)].
    walks: Vec<Vec<(usize, i64)>>,
    /// Change time at each stop, `None` where changing there is forbidden.
    change: Vec<Option<i64>>,
    index: HashMap<(usize, String), usize>,
}

fn haversine(a: (f64, f64), b: (f64, f64)) -> f64 {
    let (p1, p2) = (a.0.to_radians(), b.0.to_radians());
    let (dp, dl) = (p2 - p1, (b.1 - a.1).to_radians());
    let h = (dp / 2.0).sin().powi(2) + p1.cos() * p2.cos() * (dl / 2.0).sin().powi(2);
    2.0 * 6_371_008.8 * h.sqrt().min(1.0).asin()
}

/// Seconds to walk `length_m` (stored as `f32` metres, as a walking length is kept).
fn walk_s(length_m: f64) -> i64 {
    ((length_m as f32) as f64 / WALK_MPS).ceil() as i64
}

fn build_model(feeds: &[FeedSpec]) -> Model {
    let mut index = HashMap::new();
    let mut pos = Vec::new();
    for (fi, f) in feeds.iter().enumerate() {
        for s in &f.stops {
            index.insert((fi, s.id.clone()), pos.len());
            pos.push((s.lat, s.lon));
        }
    }
    let n = pos.len();
    // Street links within the radius, across feeds too.
    let mut link: HashMap<(usize, usize), (f64, Option<i64>)> = HashMap::new();
    for a in 0..n {
        for b in 0..n {
            let d = haversine(pos[a], pos[b]);
            if a != b && d <= RADIUS_M {
                link.insert((a, b), (d * DETOUR, None));
            }
        }
    }
    let mut change = vec![Some(DEFAULT_CHANGE_S); n];
    for (fi, f) in feeds.iter().enumerate() {
        let expand = |id: &str| -> Vec<usize> {
            if id == "ST" {
                f.stops.iter().filter(|s| s.in_station).map(|s| index[&(fi, s.id.clone())]).collect()
            } else {
                vec![index[&(fi, id.to_string())]]
            }
        };
        // Later rows for the same pair replace earlier ones, as a table keyed by the pair would.
        let mut same: HashMap<usize, (u8, i64)> = HashMap::new();
        for (a, b, ty, m) in &f.transfers {
            for x in expand(a) {
                for y in expand(b) {
                    if x == y {
                        same.entry(x).or_insert((*ty, *m));
                    } else {
                        let length = haversine(pos[x], pos[y]) * DETOUR;
                        match ty {
                            3 => {
                                link.remove(&(x, y));
                            }
                            2 => {
                                link.insert((x, y), (length, Some(*m)));
                            }
                            _ => {
                                link.entry((x, y)).or_insert((length, None));
                            }
                        }
                    }
                }
            }
        }
        for (x, (ty, m)) in same {
            change[x] = match ty {
                1 => Some(0),
                2 => Some(m),
                _ => None,
            };
        }
    }
    let mut walks = vec![Vec::new(); n];
    for ((a, b), (length, given)) in link {
        if length <= WALK_LIMIT_M {
            walks[a].push((b, given.unwrap_or_else(|| walk_s(length))));
        }
    }
    // Trip instances on the previous day, the date and the next day, on the date's timeline.
    // WK: Wednesday and Thursday (Tuesday 2026-06-09 removed by exception); NIGHT: every day;
    // EXTRA: added on the date only.
    let runs = |service: &str, day: i64| match service {
        "WK" => day >= 0,
        "NIGHT" => true,
        "EXTRA" => day == 0,
        _ => false,
    };
    let mut conns = Vec::new();
    let mut instance = 0;
    for (fi, f) in feeds.iter().enumerate() {
        for t in &f.trips {
            let starts: Vec<i64> = match t.frequency {
                None => vec![t.times[0].2],
                Some((start, end, h, _)) => (0..).map(|k| start + k * h).take_while(|&s| s < end).collect(),
            };
            for day in [-1i64, 0, 1] {
                if !runs(t.service, day) {
                    continue;
                }
                for &start in &starts {
                    let shift = day * DAY + start - t.times[0].2;
                    for w in t.times.windows(2) {
                        let (a, b) = (w[0], w[1]);
                        let from = index[&(fi, f.stops[a.0].id.clone())];
                        let to = index[&(fi, f.stops[b.0].id.clone())];
                        conns.push((from, to, a.2 + shift, b.1 + shift, instance, a.3 != 1, b.4 != 1));
                    }
                    instance += 1;
                }
            }
        }
    }
    conns.sort_by_key(|c| (c.2, c.3));
    Model { conns, walks, change, index }
}

impl Model {
    /// Earliest arrival at `target` leaving `origin` at `t0`: `[0]` walking only (or already
    /// there), `[k]` with 1 to k rides (`None`: not reachable); round k boards only from the
    /// entries that fewer rides made.
    fn by_rides(&self, origin: usize, target: usize, t0: i64, max_rides: usize) -> Vec<Option<i64>> {
        let n = self.walks.len();
        let horizon = t0 + HORIZON_S;
        let mut out = vec![None; max_rides + 1];
        // Entry time into each stop's departures, and arrival at the target, after 0 rides.
        let mut entry = vec![i64::MAX; n];
        entry[origin] = t0;
        let mut best = if origin == target { Some(t0) } else { None };
        for &(w, s) in &self.walks[origin] {
            entry[w] = entry[w].min(t0 + s);
            if w == target {
                best = Some(best.map_or(t0 + s, |b: i64| b.min(t0 + s)));
            }
        }
        out[0] = best;
        let trips = self.conns.iter().map(|c| c.4).max().map_or(0, |m| m + 1);
        for k in 1..=max_rides {
            let mut next = vec![i64::MAX; n];
            let mut on = vec![false; trips];
            // Journeys that ride: 1 to k rides (a walk-only arrival stays in `out[0]`).
            let mut arrive = if k == 1 { None } else { out[k - 1] };
            for &(from, to, dep, arr, trip, pickup, drop_off) in &self.conns {
                if dep > horizon {
                    break;
                }
                if !on[trip] && pickup && entry[from] <= dep {
                    on[trip] = true;
                }
                if !on[trip] || !drop_off || arr > horizon {
                    continue;
                }
                if to == target {
                    arrive = Some(arrive.map_or(arr, |a| a.min(arr)));
                }
                if let Some(c) = self.change[to] {
                    next[to] = next[to].min(arr + c);
                }
                for &(w, s) in &self.walks[to] {
                    next[w] = next[w].min(arr + s);
                    if w == target {
                        arrive = Some(arrive.map_or(arr + s, |a| a.min(arr + s)));
                    }
                }
            }
            for s in 0..n {
                entry[s] = entry[s].min(next[s]);
            }
            out[k] = arrive;
        }
        out
    }

    /// The least generalised cost of a journey that rides at least once.
    fn best_ride_cost(&self, origin: usize, target: usize, t0: i64) -> Option<i64> {
        let rides = self.by_rides(origin, target, t0, 8);
        // With k rides at most, a journey with fewer costs no more than its arrival + 300 × (k − 1).
        (1..rides.len()).filter_map(|k| rides[k].map(|a| a + PENALTY_S * (k as i64 - 1))).min()
    }

    /// The least generalised cost leaving at `t0`: arrival + penalty for each ride after the
    /// first, or a walk-only arrival.
    fn best_cost(&self, origin: usize, target: usize, t0: i64) -> Option<i64> {
        let walk_only =
            if origin == target { Some(t0) } else { self.walks[origin].iter().filter(|w| w.0 == target).map(|w| t0 + w.1).min() };
        let ride = self.best_ride_cost(origin, target, t0);
        match (ride, walk_only) {
            (Some(r), Some(w)) => Some(r.min(w)),
            (r, w) => r.or(w),
        }
    }
}

// ------------------------------------------------------------------------------------ the checks

#[test]
fn the_engine_agrees_with_an_independent_model_of_the_feeds() {
    let mut rng = Rng(0x6f72_6163_6c65);
    let (mut checked, mut with_change_and_walk, mut across_feeds, mut night, mut options_checked) = (0, 0, 0, 0, 0);
    for case in 0..100 {
        let feeds = [random_feed(&mut rng, "east", "E"), random_feed(&mut rng, "west", "W")];
        let mut engine = Engine::new();
        for f in &feeds {
            if let Err(e) = engine.load_zip(f.name, &to_feed(f).zip(), &mut |_, _| {}) {
                panic!("case {case}: feed {} does not load: {e}", f.name);
            }
        }
        let model = build_model(&feeds);
        let date = chrono::NaiveDate::from_ymd_opt(2026, 6, 10).expect("date");
        let net = timeweave::graph::Network::build(&engine.tt, date);
        let mut st = SearchState::new();
        for _ in 0..12 {
            let (fa, fb) = (rng.below(2) as usize, rng.below(2) as usize);
            let (a, b) = (rng.below(feeds[fa].stops.len() as u32) as usize, rng.below(feeds[fb].stops.len() as u32) as usize);
            let (ida, idb) = (&feeds[fa].stops[a].id, &feeds[fb].stops[b].id);
            let t0 = if rng.chance(25) { 5 * 60 * rng.below(12) as i64 } else { 7 * 3600 + 60 * rng.below(90) as i64 };
            let (o, t) = (model.index[&(fa, ida.clone())], model.index[&(fb, idb.clone())]);
            let from = format!("{}:{ida}", feeds[fa].name);
            let to = format!("{}:{idb}", feeds[fb].name);
            let ends = Endpoints {
                origins: engine.endpoints_of(engine.resolve(&from).expect("origin")),
                targets: engine.endpoints_of(engine.resolve(&to).expect("target")),
            };
            let what = format!("case {case}: {from} → {to} at {}", clock(t0));

            // 1. Earliest arrival, no penalty.
            let zero = Params { transfer_penalty_s: 0, ..Params::default() };
            let ours = options::earliest(Query::new(&engine.tt, &net, &ends, t0 as u32, &zero), &mut st).map(|j| j.arrival_s as i64);
            let rides = model.by_rides(o, t, t0, 8);
            let oracle = rides.iter().flatten().min().copied();
            assert_eq!(ours, oracle, "{what}: earliest arrival (penalty 0)");

            // 2. The fewest-rides set: earliest arrival per number of rides, each earlier than with fewer.
            let set = options::pareto(Query::new(&engine.tt, &net, &ends, t0 as u32, &zero), &mut st, 4);
            let ours: Vec<(u32, i64)> = set.iter().map(|j| (j.rides, j.arrival_s as i64)).collect();
            let mut want: Vec<(u32, i64)> = Vec::new();
            for (k, a) in rides.iter().enumerate().take(5) {
                if let Some(a) = *a {
                    if want.last().is_none_or(|w| a < w.1) {
                        want.push((k as u32, a));
                    }
                }
            }
            assert_eq!(ours, want, "{what}: earliest arrival by number of rides");

            // 3. The best journey under the default change penalty, through the front door.
            let q = PlanQuery {
                from: from.clone(),
                to: to.clone(),
                date: DATE.into(),
                time: clock(t0)[..5].to_string(),
                step_free: StepFree::Off,
                next: Some(3),
                ..PlanQuery::default()
            };
            let r = engine.plan(&q).unwrap_or_else(|e| panic!("{what}: {e}"));
            if r.notes.iter().any(|n| matches!(n, timeweave::engine::Note::BeyondMaxDuration { .. })) {
                // Nothing within the longest journey searched (4 h); the journey shown lies beyond.
                assert_eq!(model.best_cost(o, t, t0), None, "{what}: a journey within 4 h exists");
                assert!(r.journeys.iter().all(|j| j.arrive_s as i64 > t0 + HORIZON_S), "{what}");
                checked += 1;
                continue;
            }
            let first = r.journeys.first().map(|j| j.cost_s as i64);
            assert_eq!(first, model.best_cost(o, t, t0), "{what}: best generalised cost (300 s per change)");
            // 4. The next options: each is the best the model finds leaving at its departure.
            let mut walked_already = false;
            for j in &r.journeys {
                // A walk-only journey is listed once (DEVELOPERS.md, K options): after it, the
                // options are the best journeys that ride.
                let want =
                    if walked_already { model.best_ride_cost(o, t, j.depart_s as i64) } else { model.best_cost(o, t, j.depart_s as i64) };
                assert_eq!(Some(j.cost_s as i64), want, "{what}: option leaving {}", j.depart);
                walked_already |= j.rides == 0;
                options_checked += 1;
            }
            checked += 1;
            // What the earliest journey (no penalty) needed, as the engine and the model agree on it.
            let fastest =
                engine.plan(&PlanQuery { change_penalty_s: Some(0), next: Some(1), ..q.clone() }).unwrap_or_else(|e| panic!("{what}: {e}"));
            if let Some(j) = fastest.journeys.first() {
                assert_eq!(Some(j.arrive_s as i64), oracle, "{what}: earliest arrival through the front door");
                let walked = j.legs.iter().any(|l| l.kind != timeweave::journey::LegKind::Ride && l.duration_s > 0);
                if j.rides >= 2 && walked {
                    with_change_and_walk += 1;
                }
            }
            if let Some(j) = r.journeys.first() {
                let feeds: std::collections::HashSet<&str> =
                    j.legs.iter().flat_map(|l| [l.start.feed.as_str(), l.end.feed.as_str()]).collect();
                if feeds.len() > 1 {
                    across_feeds += 1;
                }
                if j.depart_s < 3 * 3600 {
                    night += 1;
                }
            }
        }
    }
    eprintln!("model oracle: {checked} queries, {options_checked} options; first journey with a change and a walk: {with_change_and_walk}; across feeds: {across_feeds}; after midnight: {night}");
    assert_eq!(checked, 1200);
    // The generator must make the cases that test the model, not only trivial ones.
    assert!(with_change_and_walk >= 40, "only {with_change_and_walk} journeys needed a change and a walk");
    assert!(across_feeds >= 100, "only {across_feeds} journeys crossed feeds");
    assert!(night >= 20, "only {night} journeys ran after midnight");
}

/// Travel times over a window, with and without a cap on the rides, against the model leaving at
/// each departure alone: the profile search explores the window's departures together (latest
/// first, keeping what a later one reached), the model starts afresh at each.
#[test]
fn window_travel_times_equal_the_model_at_every_departure() {
    let mut rng = Rng(0x7769_6e64);
    let (mut compared, mut reached, mut capped_differs) = (0, 0, 0);
    for case in 0..100 {
        let feeds = [random_feed(&mut rng, "east", "E"), random_feed(&mut rng, "west", "W")];
        let mut engine = Engine::new();
        for f in &feeds {
            engine.load_zip(f.name, &to_feed(f).zip(), &mut |_, _| {}).unwrap_or_else(|e| panic!("case {case}: {e}"));
        }
        let model = build_model(&feeds);
        let net = timeweave::graph::Network::build(&engine.tt, chrono::NaiveDate::from_ymd_opt(2026, 6, 10).expect("date"));
        let mut st = SearchState::new();
        let fa = rng.below(2) as usize;
        let a = rng.below(feeds[fa].stops.len() as u32) as usize;
        let from = format!("{}:{}", feeds[fa].name, feeds[fa].stops[a].id);
        let o = model.index[&(fa, feeds[fa].stops[a].id.clone())];
        let origins = engine.endpoints_of(engine.resolve(&from).expect("origin"));
        let start = if rng.chance(25) { 60 * rng.below(60) } else { 7 * 3600 + 60 * rng.below(90) };
        let mut departures = vec![start];
        for _ in 0..11 {
            departures.push(departures.last().copied().unwrap_or(start) + 60 * (1 + rng.below(5)));
        }
        let cap = [None, Some(0u8), Some(1), Some(1), Some(2)][rng.below(5) as usize];
        let p = Params { transfer_penalty_s: 0, ..Params::default() };
        let mut arrivals: Vec<Vec<u32>> = vec![Vec::new(); departures.len()];
        let w = timeweave::route::search::Window { origins: &origins, departures: &departures, max_rides: cap };
        timeweave::route::search::profile(&engine.tt, &net, &mut st, w, &p, |i, _, arr| arrivals[i] = arr.to_vec());
        for _ in 0..6 {
            let fb = rng.below(2) as usize;
            let b = rng.below(feeds[fb].stops.len() as u32) as usize;
            let to = format!("{}:{}", feeds[fb].name, feeds[fb].stops[b].id);
            let t = model.index[&(fb, feeds[fb].stops[b].id.clone())];
            let targets = engine.endpoints_of(engine.resolve(&to).expect("target"));
            for (i, &t0) in departures.iter().enumerate() {
                let limit = t0 + p.max_duration_s;
                let ours = targets.iter().map(|s| arrivals[i][s.idx()]).min().filter(|&x| x <= limit);
                let by_rides = model.by_rides(o, t, t0 as i64, cap.map_or(8, usize::from));
                let want = by_rides.iter().flatten().min().copied().filter(|&x| x <= limit as i64);
                assert_eq!(
                    ours.map(i64::from),
                    want,
                    "case {case}: {from} → {to} leaving {} (departure {i}), at most {cap:?} rides",
                    clock(t0 as i64)
                );
                compared += 1;
                reached += usize::from(want.is_some());
                if cap.is_some()
                    && want != model.by_rides(o, t, t0 as i64, 8).iter().flatten().min().copied().filter(|&x| x <= limit as i64)
                {
                    capped_differs += 1;
                }
            }
        }
    }
    eprintln!(
        "window: {compared} departures compared, {reached} with a journey, {capped_differs} where the cap on rides changed the answer"
    );
    assert!(reached > 1000, "only {reached} departures with a journey");
    assert!(capped_differs > 30, "the cap on rides changed only {capped_differs} answers; the check would be weak");
}

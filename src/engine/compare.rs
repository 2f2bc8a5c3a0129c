//! Before and after: two versions of a timetable, each its own engine (never merged), compared
//! over one window of departures — per pair of places, per station, per route, and the
//! interchange audit's connections whose status changed.
//!
//! **Definitions.** Places are matched by id (a station's or stop's `stop_id`); a place in one
//! version only is reported as such, never guessed. Per pair and version: the median and 90th
//! percentile of the travel times over the window (the window analyses'; none when that share of
//! departures has no journey) and whether any departure has a journey. A pair is `lost` when only
//! the before version reaches it at some departure, `gained` when only the after version does,
//! `unreachable` when neither; otherwise `slower`, `faster` or `unchanged` by the medians compared
//! to the second (a pair reached in both with no median in one is `slower` or `faster` by which
//! one has it). Per station: the median over its destinations reached in both of the change of
//! median, and the cumulative opportunities within the cut-off (destinations weighted 1: the
//! summed share of departures within it), before and after; `service` `lost` or `gained` when
//! the station has departures in one version only.

use std::collections::HashMap;

use serde::{Deserialize, Serialize};

use super::interchange::{ConnectionRow, InterchangeQuery};
use super::window::{WindowQuery, WindowSetting};
use super::Engine;
use crate::analysis::places::sample_pairs;
use crate::analysis::window::{percentile, percentile_f64, TravelTimes, WindowRun, NONE};
use crate::error::QueryError;
use crate::route::search::SearchState;

/// Pairs more than this much slower or faster count in the headline, minutes, when none is given
/// (the example; common practice, no source).
pub const DEFAULT_HEADLINE_MIN: u32 = 5;

#[derive(Debug, Clone, Serialize, Deserialize, Default)]
#[serde(default, deny_unknown_fields)]
pub struct CompareQuery {
    /// Service date of the before version (and of the after one unless `after_date` is given).
    pub date: String,
    pub after_date: Option<String>,
    /// "HH:MM-HH:MM" of departures (and of arrivals for the connections).
    pub window: String,
    pub step_min: Option<u32>,
    /// `all` (every pair of places in both versions) or `sample:N`; ignored with `pair_list`.
    pub pairs: Option<String>,
    pub pair_list: Option<Vec<(String, String)>>,
    pub seed: Option<u64>,
    /// With `all`: only these destinations (place ids), for every origin; the places' changes are
    /// then taken over them.
    pub destinations: Option<Vec<String>>,
    /// Cut-off of the cumulative opportunities, minutes; default 30.
    pub cutoff_min: Option<u32>,
    /// The headline's threshold, minutes; default 5.
    pub headline_min: Option<u32>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum PairChange {
    Unchanged,
    Faster,
    Slower,
    Lost,
    Gained,
    Unreachable,
    OnlyBefore,
    OnlyAfter,
}

/// One version's summary of a pair.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct VersionTimes {
    pub p50_s: Option<f64>,
    pub p90_s: Option<f64>,
    pub reached: bool,
    /// Share of departures within the cut-off.
    pub within: f64,
}

/// Rounded to the millisecond, as every time the shells write (interpolation leaves float noise).
fn ms(x: f64) -> f64 {
    (x * 1000.0).round() / 1000.0
}

fn version_times(times: &mut [u32], cutoff_s: u32) -> VersionTimes {
    let n = times.len().max(1) as f64;
    let within = times.iter().filter(|&&t| t != NONE && t <= cutoff_s).count() as f64 / n;
    let reached = times.iter().any(|&t| t != NONE);
    times.sort_unstable();
    VersionTimes { p50_s: percentile(times, 50.0).map(ms), p90_s: percentile(times, 90.0).map(ms), reached, within }
}

/// The change of a pair reached (or not) in both versions.
pub fn pair_change(b: &VersionTimes, a: &VersionTimes) -> PairChange {
    match (b.reached, a.reached) {
        (false, false) => PairChange::Unreachable,
        (true, false) => PairChange::Lost,
        (false, true) => PairChange::Gained,
        (true, true) => match (b.p50_s, a.p50_s) {
            (Some(x), Some(y)) if y > x => PairChange::Slower,
            (Some(x), Some(y)) if y < x => PairChange::Faster,
            (Some(_), Some(_)) | (None, None) => PairChange::Unchanged,
            (Some(_), None) => PairChange::Slower,
            (None, Some(_)) => PairChange::Faster,
        },
    }
}

#[derive(Debug, Clone, Serialize)]
pub struct ComparePairRow {
    pub from_stop_id: String,
    pub to_stop_id: String,
    pub before_p50_s: Option<f64>,
    pub after_p50_s: Option<f64>,
    pub before_p90_s: Option<f64>,
    pub after_p90_s: Option<f64>,
    pub status: PairChange,
}

#[derive(Debug, Clone, Serialize)]
pub struct CompareStationRow {
    pub station: String,
    pub name: String,
    /// Destinations reached in both versions (over which the change is taken).
    pub destinations_both: u32,
    /// Median over those destinations of (after − before median), s.
    pub median_change_s: Option<f64>,
    /// Destinations reached at some departure.
    pub reached_before: u32,
    pub reached_after: u32,
    /// Cumulative opportunities within the cut-off (each destination weighted 1).
    pub opportunities_before: f64,
    pub opportunities_after: f64,
    /// Departures from the station on the date (with pickup).
    pub departures_before: u32,
    pub departures_after: u32,
    /// `lost`, `gained`, `kept` or `none`.
    pub service: &'static str,
}

impl CompareStationRow {
    /// A place with its departures in each version and nothing compared yet.
    fn new(station: String, name: String, departures_before: u32, departures_after: u32, service: &'static str) -> Self {
        CompareStationRow {
            station,
            name,
            destinations_both: 0,
            median_change_s: None,
            reached_before: 0,
            reached_after: 0,
            opportunities_before: 0.0,
            opportunities_after: 0.0,
            departures_before,
            departures_after,
            service,
        }
    }
}

#[derive(Debug, Clone, Serialize)]
pub struct CompareRouteRow {
    pub route_id: String,
    pub name: String,
    pub trips_before: u32,
    pub trips_after: u32,
    /// First and last departure from any stop, service-day HH:MM:SS.
    pub first_before: Option<String>,
    pub first_after: Option<String>,
    pub last_before: Option<String>,
    pub last_after: Option<String>,
    /// Median gap between consecutive trip starts within the window, s.
    pub headway_before_s: Option<f64>,
    pub headway_after_s: Option<f64>,
}

#[derive(Debug, Clone, Serialize)]
pub struct ConnectionChangeRow {
    pub station: String,
    pub arr_route_id: String,
    pub arr_direction: String,
    /// Service-day HH:MM:SS of the arrival (the key across versions, with the routes).
    pub arrival: String,
    pub dep_route_id: String,
    pub dep_direction: String,
    pub before_status: Option<String>,
    pub after_status: Option<String>,
    pub before_wait_s: Option<u32>,
    pub after_wait_s: Option<u32>,
    pub before_near_miss: bool,
    pub after_near_miss: bool,
    /// `made_to_missed`, `missed_to_made`, `new_near_miss`, `near_miss_gone`, `only_before`,
    /// `only_after`.
    pub change: &'static str,
}

#[derive(Debug, Clone, Default, Serialize)]
pub struct CompareCounts {
    pub pairs: u64,
    pub unchanged: u64,
    pub faster: u64,
    pub slower: u64,
    /// More than the headline threshold slower / faster.
    pub slower_beyond: u64,
    pub faster_beyond: u64,
    pub lost: u64,
    pub gained: u64,
    pub unreachable: u64,
    pub only_before: u64,
    pub only_after: u64,
}

#[derive(Debug, Clone, Default, Serialize)]
pub struct CompareReport {
    pub date: String,
    pub after_date: String,
    pub window: String,
    pub departures: u32,
    pub cutoff_min: u32,
    pub headline_min: u32,
    pub counts: CompareCounts,
    /// "N % of pairs are more than 5 min slower, M % faster".
    pub headline: String,
    pub stations: Vec<CompareStationRow>,
    pub routes: Vec<CompareRouteRow>,
    pub connections: Vec<ConnectionChangeRow>,
    /// Places in one version only.
    pub only_before: Vec<String>,
    pub only_after: Vec<String>,
}

/// A bad value of one version, named.
fn in_version(name: &str, e: QueryError) -> QueryError {
    QueryError::BadOption(format!("{name} version: {e}"))
}

/// Place ids of an engine, in place order.
fn place_ids(e: &Engine) -> Vec<String> {
    (0..e.places.len()).map(|p| e.place_id(p).to_string()).collect()
}

/// Departures (with pickup) from each place's stops on the network built.
fn place_departures(e: &Engine) -> Vec<u32> {
    use crate::timetable::StopIdx;
    let net = e.built().expect("network built");
    let mut out = vec![0u32; e.places.len()];
    for s in (0..e.tt.stops.len() as u32).map(StopIdx) {
        if let Some(p) = e.places.place_of(&e.tt, s) {
            out[p] += crate::analysis::interchange::departures(net, &[s]).len() as u32;
        }
    }
    out
}

/// A route's name, trips, first and last departure, and median gap between trip starts.
type RouteFig = (String, u32, Option<u32>, Option<u32>, Option<f64>);

/// Per route id: trips of the date, first and last departure, median gap between trip starts
/// within `[from_s, to_s)` in the route's busiest direction.
fn route_figures(e: &Engine, from_s: u32, to_s: u32) -> HashMap<String, RouteFig> {
    let (tt, net) = (&e.tt, e.built().expect("network built"));
    let mut out: HashMap<String, RouteFig> = HashMap::new();
    let mut starts: HashMap<(String, Option<u8>), Vec<u32>> = HashMap::new();
    for inst in &net.instances {
        // The date's own trips (not the previous day's late ones nor the next day's early ones).
        if inst.offset_s.abs() >= 12 * 3600 {
            continue;
        }
        let trip = &tt.trips[inst.trip.idx()];
        let route = &tt.routes[trip.route.idx()];
        let name = if route.short_name.is_empty() { route.long_name.clone() } else { route.short_name.clone() };
        let first = net.dep(inst.first as usize);
        let e = out.entry(route.id.clone()).or_insert((name, 0, None, None, None));
        e.1 += 1;
        e.2 = Some(e.2.map_or(first, |x| x.min(first)));
        e.3 = Some(e.3.map_or(first, |x| x.max(first)));
        if first >= from_s && first < to_s {
            starts.entry((route.id.clone(), trip.direction)).or_default().push(first);
        }
    }
    let mut busiest: HashMap<String, Vec<u32>> = HashMap::new();
    for ((route, _), v) in starts {
        let b = busiest.entry(route).or_default();
        if v.len() > b.len() {
            *b = v;
        }
    }
    for (route, mut v) in busiest {
        v.sort_unstable();
        let mut gaps: Vec<u32> = v.windows(2).map(|w| w[1] - w[0]).collect();
        gaps.sort_unstable();
        if let Some(e) = out.get_mut(&route) {
            e.4 = percentile(&gaps, 50.0);
        }
    }
    out
}

/// Connections keyed across versions: station, arriving route and direction, arrival, leaving
/// route and direction.
type ConnKey = (String, String, String, String, String, String);

fn conn_key(r: &ConnectionRow) -> ConnKey {
    (
        r.station.to_string(),
        r.arr_route_id.to_string(),
        r.arr_direction.to_string(),
        r.arrival.to_string(),
        r.dep_route_id.to_string(),
        r.dep_direction.to_string(),
    )
}

/// Compares `before` and `after` (each an engine of its own feeds), handing the pairs to
/// `each(done, total, rows)` origin by origin; `each` returning false cancels (`Ok(None)`).
/// Every bad value is reported, naming the version, before any work.
pub fn compare(
    before: &mut Engine,
    after: &mut Engine,
    q: &CompareQuery,
    threads: usize,
    each: &mut dyn FnMut(usize, usize, &[ComparePairRow]) -> bool,
) -> Result<Option<CompareReport>, QueryError> {
    for (name, e) in [("before", &*before), ("after", &*after)] {
        if e.tt.feeds.is_empty() {
            return Err(in_version(name, QueryError::NoFeed));
        }
    }
    let after_date = q.after_date.clone().unwrap_or_else(|| q.date.clone());
    let wq = |date: &str| WindowQuery {
        date: date.to_string(),
        window: q.window.clone(),
        step_min: q.step_min,
        percentiles: Some(vec![50.0, 90.0]),
        cutoff_min: Some(q.cutoff_min.unwrap_or(30)),
        ..Default::default()
    };
    if q.after_date.is_none() {
        if let (Some((b0, b1)), Some((a0, a1))) = (before.tt.date_range(), after.tt.date_range()) {
            if b1 < a0 || a1 < b0 {
                return Err(QueryError::BadOption(format!(
                    "the before version ({b0} to {b1}) and the after version ({a0} to {a1}) share no service date: give an after date of its own"
                )));
            }
        }
    }
    let bs: WindowSetting = before.window_setting(&wq(&q.date)).map_err(|e| in_version("before", e))?;
    let as_: WindowSetting = after.window_setting(&wq(&after_date)).map_err(|e| in_version("after", e))?;
    let cutoff_s = q.cutoff_min.unwrap_or(30) * 60;
    let headline_s = q.headline_min.unwrap_or(DEFAULT_HEADLINE_MIN) as f64 * 60.0;
    // Places matched by id.
    let (bid, aid) = (place_ids(before), place_ids(after));
    let a_of: HashMap<&str, usize> = aid.iter().enumerate().map(|(i, s)| (s.as_str(), i)).collect();
    let b_of: HashMap<&str, usize> = bid.iter().enumerate().map(|(i, s)| (s.as_str(), i)).collect();
    let common: Vec<(usize, usize)> = bid.iter().enumerate().filter_map(|(i, s)| a_of.get(s.as_str()).map(|&j| (i, j))).collect();
    let mut report = CompareReport {
        date: q.date.clone(),
        after_date: after_date.clone(),
        window: q.window.clone(),
        departures: bs.spec.departures.len() as u32,
        cutoff_min: cutoff_s / 60,
        headline_min: (headline_s / 60.0) as u32,
        only_before: bid.iter().filter(|s| !a_of.contains_key(s.as_str())).cloned().collect(),
        only_after: aid.iter().filter(|s| !b_of.contains_key(s.as_str())).cloned().collect(),
        ..Default::default()
    };
    // The pairs, by origin, as indices into `common`; list pairs naming a place of one version
    // only become rows of their own.
    let mut one_sided: Vec<ComparePairRow> = Vec::new();
    let mut by_origin: std::collections::BTreeMap<usize, Vec<usize>> = Default::default();
    let k_of: HashMap<usize, usize> = common.iter().enumerate().map(|(k, &(i, _))| (i, k)).collect();
    if let Some(list) = &q.pair_list {
        for (n, (x, y)) in list.iter().enumerate() {
            let place = |id: &str| -> Result<(Option<usize>, Option<usize>), QueryError> {
                let pb = before.resolve_place(id).ok();
                let pa = after.resolve_place(id).ok();
                if pb.is_none() && pa.is_none() {
                    return Err(QueryError::BadOption(format!("pair {}: {id:?} is a place of neither version", n + 1)));
                }
                Ok((pb, pa))
            };
            let ((xb, xa), (yb, ya)) = (place(x)?, place(y)?);
            match (xb.zip(yb).and_then(|(i, j)| Some((*k_of.get(&i)?, *k_of.get(&j)?))), xa.is_some() && ya.is_some()) {
                (Some((ki, kj)), true) if ki != kj => by_origin.entry(ki).or_default().push(kj),
                (Some(_), true) => {}
                _ => one_sided.push(ComparePairRow {
                    from_stop_id: x.clone(),
                    to_stop_id: y.clone(),
                    before_p50_s: None,
                    after_p50_s: None,
                    before_p90_s: None,
                    after_p90_s: None,
                    status: if xb.is_some() && yb.is_some() { PairChange::OnlyBefore } else { PairChange::OnlyAfter },
                }),
            }
        }
    } else {
        let n = common.len();
        match q.pairs.as_deref().unwrap_or("all") {
            "all" => {
                let dests: Vec<usize> = match &q.destinations {
                    None => (0..n).collect(),
                    Some(ids) => {
                        let mut v = Vec::new();
                        for id in ids {
                            let i = before.resolve_place(id).map_err(|e| QueryError::BadOption(format!("destination {id:?}: {e}")))?;
                            let k = *k_of
                                .get(&i)
                                .ok_or_else(|| QueryError::BadOption(format!("destination {id:?} is not a place of the after version")))?;
                            v.push(k);
                        }
                        v
                    }
                };
                for k in 0..n {
                    by_origin.insert(k, dests.iter().copied().filter(|&j| j != k).collect());
                }
            }
            s => {
                for (i, j) in sample_pairs(s, n, q.seed.unwrap_or(1), " in both versions").map_err(QueryError::BadOption)? {
                    by_origin.entry(i).or_default().push(j);
                }
            }
        }
    }
    let pairs: Vec<(usize, Vec<usize>)> = by_origin
        .into_iter()
        .map(|(k, mut v)| {
            v.sort_unstable();
            v.dedup();
            (k, v)
        })
        .collect();
    // Both networks, their departures per place and their routes.
    before.network(bs.date);
    after.network(as_.date);
    let (b_eng, a_eng): (&Engine, &Engine) = (before, after);
    let (dep_b, dep_a) = (place_departures(b_eng), place_departures(a_eng));
    let rb = route_figures(b_eng, bs.spec.departures[0], bs.spec.departures.last().copied().unwrap_or(0) + 60 * bs.step_min);
    let ra = route_figures(a_eng, as_.spec.departures[0], as_.spec.departures.last().copied().unwrap_or(0) + 60 * as_.step_min);
    let run_b = WindowRun { tt: &b_eng.tt, net: b_eng.built().expect("built"), places: &b_eng.places, spec: &bs.spec, p: &bs.p };
    let run_a = WindowRun { tt: &a_eng.tt, net: a_eng.built().expect("built"), places: &a_eng.places, spec: &as_.spec, p: &as_.p };
    type State = (SearchState, SearchState, TravelTimes);
    let work = |st: &mut State, i: usize| -> Vec<(VersionTimes, VersionTimes)> {
        let (k, dests) = (&pairs[i].0, &pairs[i].1);
        let (ob, oa) = common[*k];
        run_b.travel_times(&mut st.0, b_eng.places.endpoints(ob), &mut st.2);
        let vb: Vec<VersionTimes> = dests.iter().map(|&j| version_times(st.2.of_place(common[j].0), cutoff_s)).collect();
        run_a.travel_times(&mut st.1, a_eng.places.endpoints(oa), &mut st.2);
        dests.iter().zip(vb).map(|(&j, vb)| (vb, version_times(st.2.of_place(common[j].1), cutoff_s))).collect()
    };
    // Per origin: the changes of median to destinations reached in both, and the opportunities.
    let counts = &mut report.counts;
    let mut stations: HashMap<usize, CompareStationRow> = HashMap::new();
    let mut rows: Vec<ComparePairRow> = Vec::new();
    let total = pairs.len();
    let mut sink = |i: usize, out: Vec<(VersionTimes, VersionTimes)>| -> bool {
        let (k, dests) = (&pairs[i].0, &pairs[i].1);
        let (ob, oa) = common[*k];
        rows.clear();
        let mut changes_f: Vec<f64> = Vec::new();
        let name = || b_eng.tt.stop(b_eng.places.stops[ob]).name.clone();
        let st = stations.entry(*k).or_insert_with(|| CompareStationRow::new(bid[ob].clone(), name(), dep_b[ob], dep_a[oa], "kept"));
        for (&j, (vb, va)) in dests.iter().zip(&out) {
            let status = pair_change(vb, va);
            counts.pairs += 1;
            match status {
                PairChange::Unchanged => counts.unchanged += 1,
                PairChange::Faster => counts.faster += 1,
                PairChange::Slower => counts.slower += 1,
                PairChange::Lost => counts.lost += 1,
                PairChange::Gained => counts.gained += 1,
                PairChange::Unreachable => counts.unreachable += 1,
                PairChange::OnlyBefore | PairChange::OnlyAfter => {}
            }
            if let (Some(x), Some(y)) = (vb.p50_s, va.p50_s) {
                counts.slower_beyond += (y - x > headline_s) as u64;
                counts.faster_beyond += (x - y > headline_s) as u64;
                changes_f.push(y - x);
            }
            st.reached_before += vb.reached as u32;
            st.reached_after += va.reached as u32;
            st.opportunities_before += vb.within;
            st.opportunities_after += va.within;
            rows.push(ComparePairRow {
                from_stop_id: bid[ob].clone(),
                to_stop_id: bid[common[j].0].clone(),
                before_p50_s: vb.p50_s,
                after_p50_s: va.p50_s,
                before_p90_s: vb.p90_s,
                after_p90_s: va.p90_s,
                status,
            });
        }
        changes_f.sort_by(f64::total_cmp);
        st.destinations_both = changes_f.len() as u32;
        st.median_change_s = percentile_f64(&changes_f, 50.0);
        each(i + 1, total, &rows)
    };
    let done = crate::engine::compare::for_each_origin(
        total,
        threads,
        || (SearchState::new(), SearchState::new(), TravelTimes::default()),
        work,
        &mut sink,
    );
    if !done {
        return Ok(None);
    }
    if !one_sided.is_empty() {
        for r in &one_sided {
            match r.status {
                PairChange::OnlyBefore => report.counts.only_before += 1,
                _ => report.counts.only_after += 1,
            }
        }
        report.counts.pairs += one_sided.len() as u64;
        if !each(total, total, &one_sided) {
            return Ok(None);
        }
    }
    // Stations: every place of either version, with its service.
    let mut station_rows: Vec<CompareStationRow> = Vec::new();
    for (k, &(ob, oa)) in common.iter().enumerate() {
        let mut row = stations.remove(&k).unwrap_or_else(|| {
            CompareStationRow::new(bid[ob].clone(), b_eng.tt.stop(b_eng.places.stops[ob]).name.clone(), dep_b[ob], dep_a[oa], "kept")
        });
        row.service = match (row.departures_before > 0, row.departures_after > 0) {
            (true, false) => "lost",
            (false, true) => "gained",
            (true, true) => "kept",
            (false, false) => "none",
        };
        station_rows.push(row);
    }
    for (eng, ids, deps, side) in [(b_eng, &bid, &dep_b, "lost"), (a_eng, &aid, &dep_a, "gained")] {
        let other: &HashMap<&str, usize> = if side == "lost" { &a_of } else { &b_of };
        for (p, id) in ids.iter().enumerate().filter(|(_, id)| !other.contains_key(id.as_str())) {
            let (db, da) = if side == "lost" { (deps[p], 0) } else { (0, deps[p]) };
            station_rows.push(CompareStationRow::new(id.clone(), eng.tt.stop(eng.places.stops[p]).name.clone(), db, da, side));
        }
    }
    for r in &mut station_rows {
        r.opportunities_before = ms(r.opportunities_before);
        r.opportunities_after = ms(r.opportunities_after);
        r.median_change_s = r.median_change_s.map(ms);
    }
    report.stations = station_rows;
    // Routes, by id across versions.
    let mut ids: Vec<&String> = rb.keys().chain(ra.keys()).collect();
    ids.sort();
    ids.dedup();
    let time = |s: Option<u32>| s.map(super::interchange::service_time);
    report.routes = ids
        .into_iter()
        .map(|id| {
            let (x, y) = (rb.get(id), ra.get(id));
            CompareRouteRow {
                route_id: id.clone(),
                name: x.or(y).map(|r| r.0.clone()).unwrap_or_default(),
                trips_before: x.map_or(0, |r| r.1),
                trips_after: y.map_or(0, |r| r.1),
                first_before: time(x.and_then(|r| r.2)),
                first_after: time(y.and_then(|r| r.2)),
                last_before: time(x.and_then(|r| r.3)),
                last_after: time(y.and_then(|r| r.3)),
                headway_before_s: x.and_then(|r| r.4),
                headway_after_s: y.and_then(|r| r.4),
            }
        })
        .collect();
    // Connections whose status changed.
    let iq = |date: &str| InterchangeQuery {
        station: "all".into(),
        date: date.to_string(),
        window: Some(q.window.clone()),
        ..Default::default()
    };
    let cb = before.interchange(&iq(&q.date)).map_err(|e| in_version("before", e))?.rows;
    let ca = after.interchange(&iq(&after_date)).map_err(|e| in_version("after", e))?.rows;
    let mut old: HashMap<ConnKey, &ConnectionRow> = cb.iter().map(|r| (conn_key(r), r)).collect();
    let made = |r: &ConnectionRow| r.status == crate::analysis::interchange::Status::Made;
    let row = |x: Option<&ConnectionRow>, y: Option<&ConnectionRow>, change: &'static str| {
        let r = x.or(y).expect("one side");
        ConnectionChangeRow {
            station: r.station.to_string(),
            arr_route_id: r.arr_route_id.to_string(),
            arr_direction: r.arr_direction.to_string(),
            arrival: r.arrival.to_string(),
            dep_route_id: r.dep_route_id.to_string(),
            dep_direction: r.dep_direction.to_string(),
            before_status: x.map(|r| r.status.name().to_string()),
            after_status: y.map(|r| r.status.name().to_string()),
            before_wait_s: x.and_then(|r| r.wait_s),
            after_wait_s: y.and_then(|r| r.wait_s),
            before_near_miss: x.is_some_and(|r| r.near_miss),
            after_near_miss: y.is_some_and(|r| r.near_miss),
            change,
        }
    };
    for y in &ca {
        match old.remove(&conn_key(y)) {
            None => report.connections.push(row(None, Some(y), "only_after")),
            Some(x) => {
                let change = match (made(x), made(y), x.near_miss, y.near_miss) {
                    (true, false, _, _) => Some("made_to_missed"),
                    (false, true, _, _) => Some("missed_to_made"),
                    (_, _, false, true) => Some("new_near_miss"),
                    (_, _, true, false) => Some("near_miss_gone"),
                    _ => None,
                };
                if let Some(c) = change {
                    report.connections.push(row(Some(x), Some(y), c));
                }
            }
        }
    }
    let mut gone: Vec<&ConnectionRow> = old.into_values().collect();
    gone.sort_by_key(|r| conn_key(r));
    for x in gone {
        report.connections.push(row(Some(x), None, "only_before"));
    }
    let c = &report.counts;
    let share = |n: u64| if c.pairs == 0 { 0.0 } else { 100.0 * n as f64 / c.pairs as f64 };
    report.headline = format!(
        "{:.1} % of pairs are more than {} min slower, {:.1} % more than {} min faster; {} pairs lost, {} gained",
        share(c.slower_beyond),
        report.headline_min,
        share(c.faster_beyond),
        report.headline_min,
        c.lost,
        c.gained
    );
    Ok(Some(report))
}

/// Runs `work(state, i)` for `i` in `0..n` (each thread with its own state from `init`), results
/// to `sink` in order; false when `sink` stopped it.
pub(crate) fn for_each_origin<S, T: Send>(
    n: usize,
    threads: usize,
    init: impl Fn() -> S + Sync,
    work: impl Fn(&mut S, usize) -> T + Sync,
    sink: &mut dyn FnMut(usize, T) -> bool,
) -> bool {
    #[cfg(not(target_arch = "wasm32"))]
    {
        let cancel = std::sync::atomic::AtomicBool::new(false);
        let ended =
            crate::analysis::matrix::run_each_with(n, threads, &cancel, init, work, |i, out| if sink(i, out) { Ok(()) } else { Err(()) });
        ended == Ok(crate::analysis::matrix::Ended::Done)
    }
    #[cfg(target_arch = "wasm32")]
    {
        let _ = threads;
        let mut st = init();
        (0..n).all(|i| sink(i, work(&mut st, i)))
    }
}

//! Property tests of the search on many random small feeds.
//!
//! 1. With no transfer penalty, the engine's earliest arrival (`search::earliest` and
//!    `Engine::plan`) equals that of a plain Connection Scan written here from the case itself,
//!    not from the engine's timetable.
//! 2. Every node on a returned journey's path has the same cost in the target search as in a
//!    one-to-all search from the same origin and time.
//!
//! Feeds: 3–8 stops placed 0.03° of latitude (≈ 3.3 km) apart, so no walking links are generated
//! (the link radius is 400 m); 2–12 trips with random stop sequences, increasing times and random
//! pickup/drop-off restrictions; one service date. Times are whole minutes within about two hours,
//! so arrivals and departures often coincide or lie exactly one change time apart, the cases where
//! a wrong change-time rule would show.

mod support;

use std::cell::Cell;

use chrono::NaiveDate;
use proptest::prelude::*;
use proptest::sample::Index;
use proptest::test_runner::TestRunner;
use support::{hms, query, Feed};
use timeweave::graph::Network;
use timeweave::route::options;
use timeweave::route::search::{self, Endpoints, Params, Query, SearchState};
use timeweave::timetable::StopIdx;

const DATE: &str = "2026-05-12";

/// One stop event after the first: step to the next stop (stop + step mod n), travel and dwell
/// minutes, and whether boarding and alighting are allowed there.
#[derive(Debug, Clone)]
struct Event {
    step: usize,
    travel_min: u32,
    dwell_min: u32,
    pickup: bool,
    drop_off: bool,
}

#[derive(Debug, Clone)]
struct TripSpec {
    first_stop: usize,
    start_min: u32,
    events: Vec<Event>,
}

impl TripSpec {
    /// (stop, arrival s, departure s, pickup allowed, drop-off allowed) per stop event.
    fn stop_times(&self, n: usize) -> Vec<(usize, u32, u32, bool, bool)> {
        let mut out = Vec::new();
        let (mut stop, mut t) = (self.first_stop, self.start_min * 60);
        for (i, e) in self.events.iter().enumerate() {
            if i > 0 {
                stop = (stop + e.step) % n;
                t += e.travel_min * 60;
            }
            out.push((stop, t, t + e.dwell_min * 60, e.pickup, e.drop_off));
            t += e.dwell_min * 60;
        }
        out
    }
}

#[derive(Debug, Clone)]
struct Case {
    n: usize,
    trips: Vec<TripSpec>,
    origin: usize,
    target: usize,
    depart_min: u32,
    penalty_s: u32,
}

fn trip(n: usize) -> impl Strategy<Value = TripSpec> {
    let event = (1..n, 1u32..=6, 0u32..=2, prop::bool::weighted(0.8), prop::bool::weighted(0.8))
        .prop_map(|(step, travel_min, dwell_min, pickup, drop_off)| Event { step, travel_min, dwell_min, pickup, drop_off });
    (0..n, 360u32..=420, prop::collection::vec(event, 2..=8)).prop_map(|(first_stop, start_min, events)| TripSpec {
        first_stop,
        start_min,
        events,
    })
}

fn case() -> impl Strategy<Value = Case> {
    (3usize..=8)
        .prop_flat_map(|n| {
            (Just(n), prop::collection::vec(trip(n), 2..=12), any::<Index>(), any::<Index>(), 1..n, 350u32..=430, prop::bool::ANY)
        })
        .prop_map(|(n, trips, which_trip, which_event, target_step, depart_min, penalty)| {
            // Start where some trip stops, so that many cases have a journey.
            let t = which_trip.get(&trips);
            let origin = t.stop_times(n)[which_event.index(t.events.len())].0;
            Case { n, origin, target: (origin + target_step) % n, depart_min, penalty_s: if penalty { 300 } else { 0 }, trips }
        })
}

fn feed(c: &Case) -> Feed {
    let mut stops = String::from("stop_id,stop_name,stop_lat,stop_lon\n");
    for i in 0..c.n {
        stops += &format!("S{i},Stop {i},{:.4},13.0\n", 52.0 + 0.03 * i as f64);
    }
    let mut trips = String::from("route_id,service_id,trip_id\n");
    let mut times = String::from("trip_id,arrival_time,departure_time,stop_id,stop_sequence,pickup_type,drop_off_type\n");
    for (k, t) in c.trips.iter().enumerate() {
        trips += &format!("R,DAY,T{k}\n");
        for (seq, (s, a, d, pick, drop)) in t.stop_times(c.n).into_iter().enumerate() {
            times += &format!("T{k},{},{},S{s},{},{},{}\n", hms(a), hms(d), seq + 1, u8::from(!pick), u8::from(!drop));
        }
    }
    Feed::new("Etc/GMT-1")
        .one_route()
        .file("stops.txt", &stops)
        .file("calendar_dates.txt", "service_id,date,exception_type\nDAY,20260512,1")
        .file("trips.txt", &trips)
        .file("stop_times.txt", &times)
}

/// Connection Scan Algorithm, Dibbelt, Pajor, Strasser, Wagner 2013/2017, as an independent
/// oracle: earliest arrival at the target, or `None`.
fn connection_scan(c: &Case, depart_s: u32, min_transfer_s: u32, horizon_s: u32) -> Option<u32> {
    struct Conn {
        from: usize,
        to: usize,
        dep: u32,
        arr: u32,
        trip: usize,
        seq: usize,
        pickup: bool,
        drop_off: bool,
    }
    let mut conns = Vec::new();
    for (k, t) in c.trips.iter().enumerate() {
        let st = t.stop_times(c.n);
        for (i, w) in st.windows(2).enumerate() {
            conns.push(Conn { from: w[0].0, to: w[1].0, dep: w[0].2, arr: w[1].1, trip: k, seq: i, pickup: w[0].3, drop_off: w[1].4 });
        }
    }
    conns.sort_by_key(|c| (c.dep, c.trip, c.seq));
    // Earliest time a rider can board at each stop: the query time at the origin (no change
    // time), arrival + min_transfer_s elsewhere.
    let mut ready = vec![u32::MAX; c.n];
    ready[c.origin] = depart_s;
    let mut on_board = vec![false; c.trips.len()];
    let mut best: Option<u32> = None;
    for k in conns.iter().filter(|k| k.dep >= depart_s) {
        if on_board[k.trip] || (k.pickup && ready[k.from] <= k.dep) {
            on_board[k.trip] = true;
            if k.drop_off && k.arr <= horizon_s {
                if k.to == c.target {
                    best = Some(best.map_or(k.arr, |b| b.min(k.arr)));
                }
                ready[k.to] = ready[k.to].min(k.arr + min_transfer_s);
            }
        }
    }
    best
}

/// Cases per property (at least 256 asked for; a case takes about a millisecond in release mode).
const CASES: u32 = 1024;

fn config() -> ProptestConfig {
    let mut cfg = ProptestConfig::with_cases(CASES);
    cfg.failure_persistence = None;
    cfg
}

#[test]
fn earliest_arrival_equals_connection_scan() {
    let found = Cell::new(0u32);
    TestRunner::new(config())
        .run(&case(), |c| {
            let mut engine = feed(&c).load_zip();
            let depart_s = c.depart_min * 60;
            // min_transfer_s 60 s: Params::default(), common practice, no source.
            let p = Params { transfer_penalty_s: 0, ..Params::default() };
            let want = connection_scan(&c, depart_s, p.min_transfer_s, depart_s + p.max_duration_s);
            let got = {
                let tt = &engine.tt;
                let net = Network::build(tt, NaiveDate::parse_from_str(DATE, "%Y-%m-%d").expect("date"));
                let idx = |i: usize| StopIdx(tt.stops.iter().position(|s| s.id == format!("S{i}")).expect("stop") as u32);
                let ends = Endpoints { origins: vec![idx(c.origin)], targets: vec![idx(c.target)] };
                options::earliest(Query::new(tt, &net, &ends, depart_s, &p), &mut SearchState::new()).map(|j| j.arrival_s)
            };
            prop_assert_eq!(got, want, "search::earliest");
            // The same through the front door, options 1.
            let mut q = query(&format!("S{}", c.origin), &format!("S{}", c.target), DATE, &hms(depart_s)[..5]);
            q.change_penalty_s = Some(0);
            q.next = Some(1);
            let r = engine.plan(&q).map_err(|e| TestCaseError::fail(e.to_string()))?;
            prop_assert_eq!(r.journeys.first().map(|i| i.arrive_s), want, "Engine::plan");
            found.set(found.get() + u32::from(want.is_some()));
            Ok(())
        })
        .unwrap();
    eprintln!("{} of {CASES} cases had a journey", found.get());
    assert!(found.get() >= CASES / 4, "only {} of {CASES} cases had a journey; the oracle comparison would be weak", found.get());
}

#[test]
fn every_node_of_a_returned_path_has_its_one_to_all_cost() {
    let checked = Cell::new(0u32);
    TestRunner::new(config())
        .run(&case(), |c| {
            let engine = feed(&c).load_zip();
            let tt = &engine.tt;
            let net = Network::build(tt, NaiveDate::parse_from_str(DATE, "%Y-%m-%d").expect("date"));
            let idx = |i: usize| StopIdx(tt.stops.iter().position(|s| s.id == format!("S{i}")).expect("stop") as u32);
            let ends = Endpoints { origins: vec![idx(c.origin)], targets: vec![idx(c.target)] };
            let depart_s = c.depart_min * 60;
            let p = Params { transfer_penalty_s: c.penalty_s, ..Params::default() };
            let mut st = SearchState::new();
            let Some(j) = options::earliest(Query::new(tt, &net, &ends, depart_s, &p), &mut st) else { return Ok(()) };
            let in_target: Vec<Option<u32>> = j.nodes.iter().map(|&n| st.cost_of(n)).collect();
            prop_assert!(in_target.iter().all(Option::is_some), "a path node without a cost: {:?}", in_target);
            search::run_all(Query::new(tt, &net, &ends, depart_s, &p), &mut st);
            let in_all: Vec<Option<u32>> = j.nodes.iter().map(|&n| st.cost_of(n)).collect();
            // "Every prefix of a shortest path is a shortest path": a standard property of
            // shortest paths, recalled from memory (e.g. Cormen et al., Introduction to
            // Algorithms, optimal substructure lemma), checked node by node.
            prop_assert_eq!(in_target, in_all, "path {:?}", j.nodes);
            checked.set(checked.get() + 1);
            Ok(())
        })
        .unwrap();
    assert!(checked.get() >= CASES / 4, "only {} of {CASES} cases had a journey", checked.get());
}

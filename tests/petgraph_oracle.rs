//! The engine's Dijkstra against petgraph's on the same time-expanded graph.
//!
//! A random feed (a 6 × 4 grid of stops 300 m apart, so neighbours get walking links; a few
//! hundred trips with random pickup/drop-off and wheelchair values, night trips past 24:00, a
//! frequencies.txt template and transfers.txt rules) is expanded for one date. Every node's
//! outgoing edges are read with `search::edges_of` into a `petgraph::Graph`, plus one source node
//! joined to the waiting nodes where the search's origins enter (`search::run`: at the origin's
//! first departure at or after the query time, and after each walking link from the origin, at
//! the cost the search gives them). The node costs of `search::run_all` must equal petgraph's
//! distances from that source plus the query time, for every node within the time limit, and
//! nodes past the time limit must be unreached.

mod support;

use chrono::NaiveDate;
use petgraph::graph::{Graph, NodeIndex};
use support::{hms, Feed, Rng};
use timeweave::graph::{Network, HAS_RULES, LAST_OF_TRIP, STEP_FREE_UNKNOWN, STEP_FREE_YES};
use timeweave::route::bounds::UNREACHABLE;
use timeweave::route::search::{self, decode, node_time, Endpoints, Node, Params, Query, SearchState, StepFree};
use timeweave::route::{edges, options};
use timeweave::timetable::{StopIdx, Timetable, NO_DROP_OFF};
use timeweave::Engine;

const STOPS: u32 = 24;

fn random_feed(seed: u64) -> Feed {
    let mut rng = Rng(seed);
    let mut stops = String::from("stop_id,stop_name,stop_lat,stop_lon,wheelchair_boarding\n");
    for i in 0..STOPS {
        // 0.0027° of latitude ≈ 300 m; 0.00438° of longitude at 52° N ≈ 300 m.
        let (row, col) = (i / 6, i % 6);
        let wb = rng.pick(&["", "0", "1", "1", "1", "2"]);
        stops += &format!("S{i},Grid stop {i},{:.5},{:.5},{wb}\n", 52.0 + row as f64 * 0.0027, 13.0 + col as f64 * 0.00438);
    }
    let mut trips = String::from("route_id,service_id,trip_id,wheelchair_accessible\n");
    let mut times = String::from("trip_id,arrival_time,departure_time,stop_id,stop_sequence,pickup_type,drop_off_type\n");
    let mut add_trip = |rng: &mut Rng, id: &str, start: u32| {
        trips += &format!("R,ALL,{id},{}\n", rng.pick(&["", "1", "1", "1", "2"]));
        let len = 3 + rng.below(8);
        let mut stop = rng.below(STOPS);
        let mut t = start;
        for seq in 0..len {
            let dwell = 30 * rng.below(3);
            let flag = |rng: &mut Rng| if rng.below(10) == 0 { "1" } else { "0" };
            let (pick, drop) = (flag(rng), flag(rng));
            times += &format!("{id},{},{},S{stop},{},{pick},{drop}\n", hms(t), hms(t + dwell), seq + 1);
            t += dwell + 60 + 30 * rng.below(15);
            stop = (stop + 1 + rng.below(STOPS - 1)) % STOPS;
        }
    };
    for k in 0..260 {
        let start = 6 * 3600 + 30 * rng.below(8 * 120);
        add_trip(&mut rng, &format!("T{k}"), start);
    }
    // Night trips of the service day, past 24:00:00: on the query date they come from the
    // previous day's service.
    for k in 0..15 {
        let start = 24 * 3600 + 30 * rng.below(3 * 120);
        add_trip(&mut rng, &format!("N{k}"), start);
    }
    add_trip(&mut rng, "FREQ", 6 * 3600);
    daily_feed(&stops, &trips, &times)
        .file("frequencies.txt", "trip_id,start_time,end_time,headway_secs,exact_times\nFREQ,06:00:00,09:00:00,600,1")
        .file(
            "transfers.txt",
            "from_stop_id,to_stop_id,transfer_type,min_transfer_time,from_route_id,from_trip_id,to_trip_id
            S3,S3,2,300,,,
            S5,S5,1,,,,
            S7,S7,3,,,,
            S0,S1,2,400,,,
            S2,S3,3,,,,
            S4,S4,2,0,R,,
            S9,S9,3,,,T3,T8",
        )
}

/// The same grid of stops served by a few fixed lines (a random path of 4–6 stops each, 30 trips
/// a line), so reaching a stop takes anything from one boarding to several, and walking to
/// another line's stop often saves one.
fn line_feed(seed: u64) -> Feed {
    let mut rng = Rng(seed);
    let mut stops = String::from("stop_id,stop_name,stop_lat,stop_lon\n");
    for i in 0..STOPS {
        let (row, col) = (i / 6, i % 6);
        stops += &format!("S{i},Grid stop {i},{:.5},{:.5}\n", 52.0 + row as f64 * 0.0027, 13.0 + col as f64 * 0.00438);
    }
    let mut trips = String::from("route_id,service_id,trip_id\n");
    let mut times = String::from("trip_id,arrival_time,departure_time,stop_id,stop_sequence\n");
    for line in 0..7 {
        let mut path: Vec<u32> = Vec::new();
        while path.len() < 4 + rng.below(3) as usize {
            let s = rng.below(STOPS);
            if !path.contains(&s) {
                path.push(s);
            }
        }
        let hops: Vec<u32> = path.iter().map(|_| 120 + 60 * rng.below(4)).collect();
        for k in 0..30 {
            let id = format!("L{line}T{k}");
            trips += &format!("R,ALL,{id}\n");
            let mut t = 6 * 3600 + 60 * rng.below(6 * 60);
            for (seq, (&stop, &hop)) in path.iter().zip(&hops).enumerate() {
                times += &format!("{id},{},{},S{stop},{}\n", hms(t), hms(t), seq + 1);
                t += hop;
            }
        }
    }
    daily_feed(&stops, &trips, &times)
}

/// One route running every day of 2026.
fn daily_feed(stops: &str, trips: &str, times: &str) -> Feed {
    Feed::new("Etc/GMT-1")
        .one_route()
        .file("stops.txt", stops)
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
            ALL,1,1,1,1,1,1,1,20260101,20261231",
        )
        .file("trips.txt", trips)
        .file("stop_times.txt", times)
}

/// Position (waiting node) of the first departure at `s` at or after `t`, by a plain scan.
fn first_at(net: &Network, s: StopIdx, t: u32) -> Option<u32> {
    (net.stop_first[s.idx()]..net.stop_first[s.idx() + 1]).find(|&p| net.dep(net.by_stop[p as usize] as usize) >= t)
}

/// The search's graph for `ends` in petgraph: every node's edges from `search::edges_of` (only
/// into nodes within the time limit, and into the sink only from alightings within it), plus a
/// source joined to where the origins enter. Returns the graph and its source.
fn oracle_graph(tt: &Timetable, net: &Network, ends: &Endpoints, depart_s: u32, p: &Params) -> (Graph<(), u32>, NodeIndex) {
    let nodes = 2 * net.events() as u32 + 1;
    let horizon = depart_s + p.max_duration_s;
    let mut g: Graph<(), u32> = Graph::with_capacity(nodes as usize + 1, 4 * nodes as usize);
    for _ in 0..nodes {
        g.add_node(());
    }
    let source = g.add_node(());
    let mut out = Vec::new();
    for node in 0..nodes {
        // The ride node of a trip's last event has no incoming edge (staying seated and boarding
        // both stop before it), and `edges_of` must not be asked about it (see the ignored test).
        if let Node::Ride(e) = decode(net, node).1 {
            if net.flags(e as usize) & LAST_OF_TRIP != 0 {
                continue;
            }
        }
        edges::edges_of(Query::new(tt, net, ends, 0, p), node, &mut out);
        for &(to, w) in &out {
            let within = match (decode(net, node).1, decode(net, to).1) {
                (Node::Ride(e), Node::Sink) => net.arr(e as usize + 1) <= horizon,
                _ => node_time(net, to).is_some_and(|t| t <= horizon),
            };
            if within {
                g.add_edge(NodeIndex::new(node as usize), NodeIndex::new(to as usize), w);
            }
        }
    }
    let dep = |q: u32| net.dep(net.by_stop[q as usize] as usize);
    let walk_cost = |d: u32| if p.walk_weight == 1.0 { d } else { (d as f64 * p.walk_weight).round() as u32 };
    for &o in &ends.origins {
        if let Some(q) = first_at(net, o, depart_s).filter(|&q| dep(q) <= horizon) {
            g.add_edge(source, NodeIndex::new(q as usize), dep(q) - depart_s);
        }
        for f in tt.walk(p.step_free.walk_profile()).from(o) {
            if f.length_m as f64 <= p.max_walk_m {
                let d = f.duration_s(p.walk_speed_mps);
                if let Some(q) = first_at(net, f.to, depart_s + d).filter(|&q| dep(q) <= horizon) {
                    g.add_edge(source, NodeIndex::new(q as usize), walk_cost(d) + (dep(q) - depart_s - d));
                }
            }
        }
    }
    (g, source)
}

/// Compares one search with petgraph; returns how many nodes were reached.
fn compare(tt: &Timetable, net: &Network, origins: &[StopIdx], depart_s: u32, p: &Params) -> usize {
    let ends = Endpoints { origins: origins.to_vec(), targets: vec![] };
    let mut st = SearchState::new();
    search::run_all(Query::new(tt, net, &ends, depart_s, p), &mut st);
    let (g, source) = oracle_graph(tt, net, &ends, depart_s, p);

    // petgraph::algo::dijkstra as an independent reference implementation.
    let dist = petgraph::algo::dijkstra(&g, source, None, |e| *e.weight());
    let horizon = depart_s + p.max_duration_s;
    let mut reached = 0;
    for node in 0..2 * net.events() as u32 + 1 {
        let engine = st.cost_of(node);
        let within = node_time(net, node).is_some_and(|t| t <= horizon);
        if within {
            let oracle = dist.get(&NodeIndex::new(node as usize)).map(|d| d + depart_s);
            assert_eq!(
                engine,
                oracle,
                "node {node} ({:?}, time {:?}), query {depart_s} from {origins:?}, {p:?}",
                decode(net, node).1,
                node_time(net, node)
            );
        } else {
            assert_eq!(engine, None, "node {node} is past the time limit but was reached");
        }
        reached += usize::from(engine.is_some());
    }
    reached
}

/// The goal-directed search (landmark bounds, pruning by the best sink) against petgraph's plain
/// Dijkstra to the sink, for one target; returns whether it was reached. The caller keeps `st`
/// across calls, so bounds kept from an earlier search are exercised too.
fn compare_to_target(
    tt: &Timetable,
    net: &Network,
    st: &mut SearchState,
    origins: &[StopIdx],
    target: StopIdx,
    depart_s: u32,
    p: &Params,
) -> bool {
    let ends = Endpoints { origins: origins.to_vec(), targets: vec![target] };
    search::run_to_target(Query::new(tt, net, &ends, depart_s, p), st);
    let engine = st.cost_of(st.sink(0));
    let (g, source) = oracle_graph(tt, net, &ends, depart_s, p);
    let sink = NodeIndex::new(2 * net.events());
    // petgraph::algo::dijkstra as an independent reference implementation.
    let oracle = petgraph::algo::dijkstra(&g, source, Some(sink), |e| *e.weight()).get(&sink).map(|d| d + depart_s);
    assert_eq!(engine, oracle, "sink cost to {target:?}, query {depart_s} from {origins:?}, {p:?}");
    engine.is_some()
}

/// The one-to-all sweep's earliest arrival per stop against arrivals read off petgraph's
/// reachable nodes: at the origins at the query time, after the walks from them, and at every
/// alighting (the event after a reached ride node, where drop-off and the step-free mask allow,
/// within the time limit), directly and after each walking link from there. Returns how many
/// stops were reached.
fn compare_sweep(tt: &Timetable, net: &Network, origins: &[StopIdx], depart_s: u32, p: &Params) -> usize {
    let ends = Endpoints { origins: origins.to_vec(), targets: vec![] };
    let oracle = petgraph_arrivals(tt, net, origins, depart_s, p);
    let mut st = SearchState::new();
    let swept = search::one_to_all(tt, net, &mut st, origins, depart_s, p).to_vec();
    for s in 0..tt.stops.len() {
        assert_eq!(swept[s], oracle[s], "earliest arrival at {}, query {depart_s} from {origins:?}, {p:?}", tt.stops[s].id);
    }
    // And Dijkstra's own one-to-all gives the same arrivals.
    search::run_all(Query::new(tt, net, &ends, depart_s, p), &mut st);
    assert_eq!(&st.stop_arrivals()[..tt.stops.len()], &swept[..], "run_all's arrivals");
    oracle.iter().filter(|&&t| t != u32::MAX).count()
}

/// Earliest arrival per stop read off the nodes petgraph's Dijkstra reaches (see [`compare_sweep`]).
fn petgraph_arrivals(tt: &Timetable, net: &Network, origins: &[StopIdx], depart_s: u32, p: &Params) -> Vec<u32> {
    let ends = Endpoints { origins: origins.to_vec(), targets: vec![] };
    let (g, source) = oracle_graph(tt, net, &ends, depart_s, p);
    // petgraph::algo::dijkstra as an independent reference implementation of reachability.
    let dist = petgraph::algo::dijkstra(&g, source, None, |e| *e.weight());
    let horizon = depart_s + p.max_duration_s;
    let walk = tt.walk(p.step_free.walk_profile());
    let walks =
        |s: StopIdx| walk.from(s).iter().filter(|f| f.length_m as f64 <= p.max_walk_m).map(|f| (f.to, f.duration_s(p.walk_speed_mps)));
    let mut oracle = vec![u32::MAX; tt.stops.len()];
    let mut arrive = |s: StopIdx, t: u32| oracle[s.idx()] = oracle[s.idx()].min(t);
    for &o in origins {
        arrive(o, depart_s);
        walks(o).for_each(|(to, d)| arrive(to, depart_s + d));
    }
    let step_free_ok = |e: usize| match p.step_free {
        StepFree::Off => true,
        StepFree::Strict => net.flags(e) & STEP_FREE_YES != 0,
        StepFree::Lenient => net.flags(e) & (STEP_FREE_YES | STEP_FREE_UNKNOWN) != 0,
    };
    for e in 0..net.events() {
        let reached = dist.contains_key(&NodeIndex::new(net.events() + e));
        let e2 = e + 1;
        if !reached || net.flags(e) & LAST_OF_TRIP != 0 || net.flags(e2) & NO_DROP_OFF != 0 || !step_free_ok(e2) || net.arr(e2) > horizon {
            continue;
        }
        let (v, ta) = (net.stop(e2), net.arr(e2));
        arrive(v, ta);
        walks(v).for_each(|(to, d)| arrive(to, ta + d));
    }
    oracle
}

fn stop(tt: &Timetable, id: &str) -> StopIdx {
    StopIdx(tt.stops.iter().position(|s| s.id == id).expect("stop") as u32)
}

#[test]
fn node_costs_equal_petgraph_dijkstra() {
    let engine: Engine = random_feed(0x7157_2026).load();
    let tt = &engine.tt;
    let date = NaiveDate::from_ymd_opt(2026, 6, 10).expect("date");
    let net = Network::build(tt, date);
    assert!(net.events() > 1500, "a graph of a few thousand nodes ({} events)", net.events());
    assert!(tt.walk_standard.len() > 20, "the grid has walking links");

    let off = Params::default();
    let heavy = Params { transfer_penalty_s: 120, walk_weight: 2.0, max_walk_m: 500.0, ..Params::default() };
    let all_day = Params { max_duration_s: 30 * 3600, ..Params::default() };
    let cases: Vec<(Vec<&str>, u32, Params)> = vec![
        (vec!["S0"], 7 * 3600, off.clone()),
        (vec!["S5", "S6"], 6 * 3600 + 1800, heavy),
        (vec!["S10"], 7 * 3600 + 900, Params::new(StepFree::Strict)),
        (vec!["S12"], 1200, Params { max_duration_s: 8 * 3600, ..Params::new(StepFree::Lenient) }),
        (vec!["S3"], 5 * 3600, all_day),
        (vec!["S7"], 8 * 3600 + 17, Params { transfer_penalty_s: 0, ..off }),
    ];
    for (origins, depart_s, p) in cases {
        let origins: Vec<StopIdx> = origins.iter().map(|id| stop(tt, id)).collect();
        let reached = compare(tt, &net, &origins, depart_s, &p);
        assert!(reached > 200, "only {reached} nodes reached from {origins:?} at {depart_s}; the comparison would be weak");
    }
}

#[test]
fn goal_directed_sink_costs_equal_petgraph_dijkstra() {
    let engine: Engine = random_feed(0x7157_2026).load();
    let tt = &engine.tt;
    let net = Network::build(tt, NaiveDate::from_ymd_opt(2026, 6, 10).expect("date"));
    let heavy = Params { transfer_penalty_s: 120, walk_weight: 2.0, max_walk_m: 500.0, ..Params::default() };
    // Slower walking first, so that bounds wrongly kept from the previous search would be too
    // high. (On this grid rides are faster than walks between most stops, so the walking setting
    // moves the bounds little; the check is that sharing one state keeps every answer exact.)
    let cases: Vec<(Vec<&str>, u32, Params)> = vec![
        (vec!["S0"], 7 * 3600, Params { walk_speed_mps: 0.4, ..Params::default() }),
        (vec!["S0"], 7 * 3600, Params::default()),
        (vec!["S5", "S6"], 6 * 3600 + 1800, heavy),
        (vec!["S10"], 7 * 3600 + 900, Params::new(StepFree::Strict)),
        (vec!["S12"], 1200, Params { max_duration_s: 8 * 3600, ..Params::new(StepFree::Lenient) }),
        (vec!["S7"], 8 * 3600 + 17, Params { transfer_penalty_s: 0, max_duration_s: 3600, ..Params::default() }),
    ];
    let cases: Vec<(Vec<StopIdx>, u32, Params)> =
        cases.into_iter().map(|(o, d, p)| (o.iter().map(|id| stop(tt, id)).collect(), d, p)).collect();
    // Target by target, every case in turn on one search state: consecutive searches share the
    // target but not always the origin or walking setting, so kept bounds must be told apart.
    let mut st = SearchState::new();
    let mut reached = vec![0; cases.len()];
    for t in 0..tt.stops.len() as u32 {
        for (i, (origins, depart_s, p)) in cases.iter().enumerate() {
            if !origins.contains(&StopIdx(t)) && compare_to_target(tt, &net, &mut st, origins, StopIdx(t), *depart_s, p) {
                reached[i] += 1;
            }
        }
    }
    for (i, n) in reached.iter().enumerate() {
        assert!(*n > 5, "only {n} targets reached in case {i}; the comparison would be weak");
    }
}

#[test]
fn one_to_all_sweep_arrivals_equal_petgraph_reachability() {
    let engine: Engine = random_feed(0x7157_2026).load();
    let tt = &engine.tt;
    let net = Network::build(tt, NaiveDate::from_ymd_opt(2026, 6, 10).expect("date"));
    assert!(net.events.iter().any(|ev| ev.flags & HAS_RULES != 0), "the feed has route-specific transfer rules");
    let short = Params { max_duration_s: 1800, ..Params::default() };
    let cases: Vec<(Vec<&str>, u32, Params)> = vec![
        (vec!["S0"], 7 * 3600, Params::default()),
        (vec!["S4"], 6 * 3600 + 1800, Params { max_walk_m: 500.0, walk_speed_mps: 0.9, ..Params::default() }),
        (vec!["S10"], 7 * 3600 + 900, Params::new(StepFree::Strict)),
        (vec!["S12"], 1200, Params { max_duration_s: 8 * 3600, ..Params::new(StepFree::Lenient) }),
        (vec!["S5", "S9"], 8 * 3600 + 17, short),
        // No walking: changes happen only at a stop, where the route rule at S4 decides.
        (vec!["S0"], 7 * 3600, Params { max_walk_m: 0.0, ..Params::default() }),
        (vec!["S13"], 9 * 3600, Params { max_walk_m: 0.0, ..Params::default() }),
    ];
    for (origins, depart_s, p) in cases {
        let origins: Vec<StopIdx> = origins.iter().map(|id| stop(tt, id)).collect();
        let reached = compare_sweep(tt, &net, &origins, depart_s, &p);
        assert!(reached > 5, "only {reached} stops reached from {origins:?} at {depart_s}; the comparison would be weak");
    }
}

/// The profile search over a window against petgraph, departure by departure: what it reports
/// for each departure (read up to that departure's own time limit) must be what petgraph's
/// Dijkstra reaches leaving at that departure alone. The window's departures are irregular (steps
/// of 0–7 min, some repeated) and run past midnight in one case.
#[test]
fn profile_arrivals_equal_petgraph_reachability_at_every_departure() {
    let engine: Engine = random_feed(0x7157_2026).load();
    let tt = &engine.tt;
    let net = Network::build(tt, NaiveDate::from_ymd_opt(2026, 6, 10).expect("date"));
    let cases: Vec<(Vec<&str>, u32, Params)> = vec![
        (vec!["S0"], 7 * 3600, Params::default()),
        (vec!["S4"], 6 * 3600 + 1800, Params { max_walk_m: 500.0, walk_speed_mps: 0.9, max_duration_s: 2400, ..Params::default() }),
        (vec!["S10"], 7 * 3600 + 900, Params::new(StepFree::Strict)),
        (vec!["S12"], 23 * 3600 + 1500, Params { max_duration_s: 3 * 3600, ..Params::new(StepFree::Lenient) }),
        (vec!["S5", "S9"], 8 * 3600 + 17, Params { max_duration_s: 1800, ..Params::default() }),
        (vec!["S13"], 9 * 3600, Params { max_walk_m: 0.0, ..Params::default() }),
    ];
    let mut rng = Rng(0x7072_6f66);
    let mut st = SearchState::new();
    let mut compared = 0;
    for (origins, start, p) in cases {
        let origins: Vec<StopIdx> = origins.iter().map(|id| stop(tt, id)).collect();
        let mut departures = vec![start];
        for _ in 0..14 {
            departures.push(departures.last().copied().unwrap_or(start) + 60 * rng.below(8));
        }
        let mut got: Vec<Vec<u32>> = vec![Vec::new(); departures.len()];
        let w = search::Window { origins: &origins, departures: &departures, max_rides: None };
        search::profile(tt, &net, &mut st, w, &p, |i, t, arrival| {
            let limit = t + p.max_duration_s;
            got[i] = arrival.iter().map(|&a| if a > limit { u32::MAX } else { a }).collect();
        });
        for (i, &t) in departures.iter().enumerate() {
            // The window reads an arrival past the time limit as none; the sweep keeps a walk that
            // starts within the limit and ends past it, so the oracle's arrivals are cut the same way.
            let limit = t + p.max_duration_s;
            let oracle: Vec<u32> =
                petgraph_arrivals(tt, &net, &origins, t, &p).into_iter().map(|a| if a > limit { u32::MAX } else { a }).collect();
            for s in 0..tt.stops.len() {
                assert_eq!(
                    got[i][s], oracle[s],
                    "arrival at {} leaving {t} (departure {i} of the window) from {origins:?}, {p:?}",
                    tt.stops[s].id
                );
            }
            compared += oracle.iter().filter(|&&a| a != u32::MAX).count();
        }
    }
    assert!(compared > 1000, "only {compared} stop arrivals compared; the check would be weak");
}

/// The boardings bounds of the goal-directed search against the fewest boardings petgraph
/// finds from each node to the sink of one target: the same graph, reversed, weighted 1 on a
/// boarding and 0 elsewhere. The bound may fall short (it is computed on a relaxation, and cut at
/// `boardings::CAP`) but never exceed it; and on every edge it may drop only by the edge's
/// boardings (consistency, which A* needs). Also checked: many bounds of 1 and of 2 are exact, so
/// a bound stuck low would fail.
#[test]
fn boardings_bounds_never_exceed_the_fewest_boardings_petgraph_finds() {
    use timeweave::route::boardings::Boardings;
    use timeweave::route::bounds::WalkLinks;
    let engine: Engine = line_feed(0xB0A2_2026).load();
    let tt = &engine.tt;
    let net = Network::build(tt, NaiveDate::from_ymd_opt(2026, 6, 10).expect("date"));
    let mut b = Boardings::default();
    let nodes = 2 * net.events() as u32 + 1;
    let sink = nodes - 1;
    let mut exact = [0usize; 4];
    for p in [Params::default(), Params { max_walk_m: 0.0, ..Params::default() }] {
        let walk = WalkLinks::build(tt, &p.walk_key(&net));
        for t in (0..tt.stops.len() as u32).step_by(3) {
            let ends = Endpoints { origins: vec![], targets: vec![StopIdx(t)] };
            b.compute(net.patterns(), &walk, tt.stops.len(), &ends.targets);
            let bound = |node: u32| match decode(&net, node).1 {
                Node::Wait(q) => b.wait[net.stop(net.by_stop[q as usize] as usize).idx()] as u32,
                Node::Ride(e) => b.ride(&net, e as usize) as u32,
                Node::Sink => 0,
            };
            let (g, _) = oracle_graph(tt, &net, &ends, 0, &Params { max_duration_s: 40 * 3600, ..p });
            let mut rev: Graph<(), u32> = Graph::with_capacity(g.node_count(), g.edge_count());
            for _ in 0..g.node_count() {
                rev.add_node(());
            }
            for e in g.raw_edges() {
                let (a, z) = (e.source().index() as u32, e.target().index() as u32);
                if a < nodes {
                    let boards = u32::from(options::is_boarding(&net, a, z));
                    assert!(
                        bound(a) <= bound(z) + boards,
                        "bound drops by more than {boards} on {:?} → {:?} (target {t})",
                        decode(&net, a).1,
                        decode(&net, z).1
                    );
                    rev.add_edge(e.target(), e.source(), boards);
                }
            }
            // petgraph::algo::dijkstra as an independent reference implementation.
            let fewest = petgraph::algo::dijkstra(&rev, NodeIndex::new(sink as usize), None, |e| *e.weight());
            for (n, &k) in &fewest {
                let node = n.index() as u32;
                assert!(
                    bound(node) <= k,
                    "{:?}: bound {} above the fewest boardings {k} (target {t}, {p:?})",
                    decode(&net, node).1,
                    bound(node)
                );
                if bound(node) == k {
                    exact[k.min(3) as usize] += 1;
                }
            }
        }
    }
    assert!(exact[1] > 100 && exact[2] > 100, "exact bounds by value 0, 1, 2, 3+: {exact:?}; the check would be weak");
}

/// The whole bound the goal-directed search keys its nodes by (`search::node_bounds`: landmark
/// or exact stop-graph time, with its fallback away from the target, plus the boardings
/// penalties) against each node's true cost to the sink, from petgraph's Dijkstra on the reversed
/// graph. A* settles nodes at their exact cost only when the bound never exceeds that cost
/// (admissible) and drops along no edge by more than the edge's weight (consistent). Also checked:
/// it is exact at many nodes, so a bound stuck low would fail.
#[test]
fn goal_directed_bounds_never_exceed_petgraph_costs_to_the_sink() {
    let engine: Engine = random_feed(0x7157_2026).load();
    let tt = &engine.tt;
    let net = Network::build(tt, NaiveDate::from_ymd_opt(2026, 6, 10).expect("date"));
    let nodes = 2 * net.events() as u32 + 1;
    let sink = nodes - 1;
    let mut st = SearchState::new();
    let (mut exact, mut checked) = (0usize, 0usize);
    let params = [
        Params::default(),
        Params { transfer_penalty_s: 120, walk_weight: 2.0, max_walk_m: 500.0, walk_speed_mps: 0.9, ..Params::new(StepFree::Lenient) },
    ];
    for p in params {
        let p = Params { max_duration_s: 40 * 3600, ..p };
        for t in 0..tt.stops.len() as u32 {
            let ends = Endpoints { origins: vec![], targets: vec![StopIdx(t)] };
            let (g, _) = oracle_graph(tt, &net, &ends, 0, &p);
            let mut rev: Graph<(), u32> = Graph::with_capacity(g.node_count(), g.edge_count());
            for _ in 0..g.node_count() {
                rev.add_node(());
            }
            for e in g.raw_edges() {
                rev.add_edge(e.target(), e.source(), e.weight);
            }
            // petgraph::algo::dijkstra as an independent reference implementation.
            let to_sink = petgraph::algo::dijkstra(&rev, NodeIndex::new(sink as usize), None, |e| *e.weight());
            for o in [(t + 5) % STOPS, (t + 11) % STOPS, (t + 17) % STOPS] {
                let ends = Endpoints { origins: vec![StopIdx(o)], targets: vec![StopIdx(t)] };
                let bound = search::node_bounds(Query::new(tt, &net, &ends, 0, &p), &mut st);
                for e in g.raw_edges() {
                    let (a, z) = (e.source().index(), e.target().index());
                    if a < nodes as usize && bound[a] != UNREACHABLE && bound[z] != UNREACHABLE {
                        assert!(
                            bound[a] <= e.weight + bound[z],
                            "bound drops by more than the edge's {} on {:?} → {:?} ({} → {}; {o} → {t}, {p:?})",
                            e.weight,
                            decode(&net, a as u32).1,
                            decode(&net, z as u32).1,
                            bound[a],
                            bound[z]
                        );
                    }
                }
                for (n, &c) in &to_sink {
                    let node = n.index();
                    if node < nodes as usize {
                        assert!(
                            bound[node] <= c,
                            "{:?}: bound {} above its cost to the sink {c} ({o} → {t}, {p:?})",
                            decode(&net, node as u32).1,
                            bound[node]
                        );
                        checked += 1;
                        exact += usize::from(bound[node] == c);
                    }
                }
            }
        }
    }
    assert!(exact > 1000, "{exact} of {checked} bounds exact; the check would be weak");
}

/// `edges_of` is documented as "the outgoing edges of a node", for oracle tests that enumerate
/// every node. On the ride node of a trip's last event it reads the event after it, which belongs
/// to the next trip, or lies past the end of the arrays for the network's last event.
#[test]
fn edges_of_is_defined_on_every_node() {
    let engine = random_feed(1).load();
    let net = Network::build(&engine.tt, NaiveDate::from_ymd_opt(2026, 6, 10).expect("date"));
    let ends = Endpoints { origins: vec![StopIdx(0)], targets: vec![] };
    let p = Params::default();
    let mut out = Vec::new();
    for node in 0..2 * net.events() as u32 + 1 {
        edges::edges_of(Query::new(&engine.tt, &net, &ends, 0, &p), node, &mut out);
        if let Node::Ride(e) = decode(&net, node).1 {
            if net.flags(e as usize) & LAST_OF_TRIP != 0 {
                assert!(out.is_empty(), "Ride({e}) is the last event of its trip: no edge leaves it, got {out:?}");
            }
        }
    }
}

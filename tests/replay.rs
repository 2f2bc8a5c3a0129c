//! Property test: on ≥ 1000 random small feeds, every itinerary `Engine::plan` returns (standard
//! and strict step-free) replays against the feed (tests/support/replay.rs), and with no transfer
//! penalty the first itinerary arrives exactly when an earliest-arrival Connection Scan written
//! here says it can.
//!
//! Feeds: 3–7 stops on a north–south line at multiples of ≈ 144 m (0.0013°), so some are within
//! the 400 m walking radius and some are not; some stops are platforms of one station (they
//! inherit its wheelchair_boarding when theirs is empty); 0–3 pathways of random modes between
//! nearby stops; 2–14 trips of 2–6 stops with random stop sequences, whole-minute times, wheelchair_accessible
//! 0/1/2 and pickup/drop-off restrictions; one service every day of 2026.
//!
//! The oracle reads trips and stop accessibility from the case itself, not from the engine. Its
//! walking links are the engine's precomputed walking closure (`Timetable::walk`) with their
//! durations at the query's speed: walking geometry is data here, the routing is ours. Rules
//! (GTFS Schedule reference: pickup_type / drop_off_type 1, wheelchair_accessible and
//! wheelchair_boarding 1 for strict step-free; DEVELOPERS.md: change time `Params::transfer_s()` at
//! the same stop, walking links instead of it between stops, max_walk_m per link).

mod support;

use std::sync::atomic::{AtomicUsize, Ordering};

use chrono::NaiveDate;
use proptest::prelude::*;
use proptest::test_runner::{Config, TestRunner};
use support::replay::replay;
use support::{hms, Feed};
use timeweave::engine::{Engine, PlanQuery};
use timeweave::route::search::{Params, StepFree};
use timeweave::timetable::StopIdx;

const DATE: &str = "2026-05-13";
const CASES: u32 = 1000;

#[derive(Debug, Clone)]
struct StopSpec {
    /// Position on the line, × 0.0013° of latitude (≈ 144.6 m).
    pos: u8,
    /// wheelchair_boarding 0 (empty), 1, 2.
    wheelchair: u8,
    /// A platform of station ST.
    in_station: bool,
}

#[derive(Debug, Clone)]
struct EventSpec {
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
    wheelchair: u8,
    events: Vec<EventSpec>,
}

#[derive(Debug, Clone)]
struct PathwaySpec {
    from: usize,
    to: usize,
    /// pathway_mode 1 walkway, 2 stairs, 3 moving sidewalk, 4 escalator, 5 elevator.
    mode: u8,
    bidirectional: bool,
}

#[derive(Debug, Clone)]
struct QuerySpec {
    from: usize,
    to: usize,
    /// Minutes after 07:50.
    min: u32,
    strict: bool,
}

#[derive(Debug, Clone)]
struct Case {
    stops: Vec<StopSpec>,
    station_wheelchair: u8,
    trips: Vec<TripSpec>,
    pathways: Vec<PathwaySpec>,
    queries: Vec<QuerySpec>,
}

const STEP_DEG: f64 = 0.0013;

impl Case {
    fn lat(&self, s: usize) -> f64 {
        50.0 + self.stops[s].pos as f64 * STEP_DEG
    }
    /// wheelchair_boarding after inheritance from the station (GTFS Schedule reference: empty on
    /// a child stop means the parent's value).
    fn stop_access(&self, s: usize) -> u8 {
        let st = &self.stops[s];
        if st.wheelchair == 0 && st.in_station {
            self.station_wheelchair
        } else {
            st.wheelchair
        }
    }
    /// (stop, arrival s, departure s, pickup allowed, drop-off allowed) per stop event.
    fn stop_times(&self, t: &TripSpec) -> Vec<(usize, u32, u32, bool, bool)> {
        let n = self.stops.len();
        let (mut stop, mut time) = (t.first_stop, 8 * 3600 + t.start_min * 60);
        let mut out = Vec::new();
        for (i, e) in t.events.iter().enumerate() {
            if i > 0 {
                stop = (stop + e.step) % n;
                time += e.travel_min * 60;
            }
            out.push((stop, time, time + e.dwell_min * 60, e.pickup, e.drop_off));
            time += e.dwell_min * 60;
        }
        out
    }
}

fn case() -> impl Strategy<Value = Case> {
    (3usize..=7).prop_flat_map(|n| {
        let stop =
            (0u8..16, 0u8..3, prop::bool::weighted(0.3)).prop_map(|(pos, wheelchair, in_station)| StopSpec { pos, wheelchair, in_station });
        let event = (1..n, 1u32..8, 0u32..3, prop::bool::weighted(0.85), prop::bool::weighted(0.85))
            .prop_map(|(step, travel_min, dwell_min, pickup, drop_off)| EventSpec { step, travel_min, dwell_min, pickup, drop_off });
        let trip = (0..n, 0u32..60, prop::sample::select(vec![0u8, 1, 1, 1, 2]), prop::collection::vec(event, 2..=6))
            .prop_map(|(first_stop, start_min, wheelchair, events)| TripSpec { first_stop, start_min, wheelchair, events });
        let pathway = (0..n, 1..n, 1u8..=5, any::<bool>()).prop_map(move |(from, d, mode, bidirectional)| PathwaySpec {
            from,
            to: (from + d) % n,
            mode,
            bidirectional,
        });
        let query = (0..n, 1..n, 0u32..100, any::<bool>()).prop_map(move |(from, d, min, strict)| QuerySpec {
            from,
            to: (from + d) % n,
            min,
            strict,
        });
        (
            prop::collection::vec(stop, n),
            prop::sample::select(vec![0u8, 1, 1, 2]),
            prop::collection::vec(trip, 2..=14),
            prop::collection::vec(pathway, 0..=3),
            prop::collection::vec(query, 3),
        )
            .prop_map(|(stops, station_wheelchair, trips, pathways, queries)| Case {
                stops,
                station_wheelchair,
                trips,
                pathways,
                queries,
            })
    })
}

fn feed(c: &Case) -> Feed {
    let mut stops = String::from("stop_id,stop_name,stop_lat,stop_lon,location_type,parent_station,wheelchair_boarding\n");
    stops.push_str(&format!("ST,Quillon Interchange,{:.6},10.000000,1,,{}\n", c.lat(0), c.station_wheelchair));
    for (i, s) in c.stops.iter().enumerate() {
        let wc = if s.wheelchair == 0 { String::new() } else { s.wheelchair.to_string() };
        stops.push_str(&format!("S{i},Stop {i},{:.6},10.000000,0,{},{wc}\n", c.lat(i), if s.in_station { "ST" } else { "" }));
    }
    let mut trips = String::from("route_id,service_id,trip_id,wheelchair_accessible\n");
    let mut times = String::from("trip_id,arrival_time,departure_time,stop_id,stop_sequence,pickup_type,drop_off_type\n");
    for (k, t) in c.trips.iter().enumerate() {
        trips.push_str(&format!("R,ALL,T{k},{}\n", t.wheelchair));
        for (seq, (s, a, d, up, down)) in c.stop_times(t).into_iter().enumerate() {
            times.push_str(&format!("T{k},{},{},S{s},{},{},{}\n", hms(a), hms(d), seq + 1, u8::from(!up), u8::from(!down)));
        }
    }
    let mut pathways = String::from("pathway_id,from_stop_id,to_stop_id,pathway_mode,is_bidirectional,length,traversal_time\n");
    for (k, p) in c.pathways.iter().enumerate() {
        // At least the great-circle distance, so walks stay physically possible.
        let len = (c.lat(p.from) - c.lat(p.to)).abs() * 111_200.0 * 1.2 + 3.0;
        let traversal = if p.mode == 5 { "40" } else { "" };
        pathways.push_str(&format!("PW{k},S{},S{},{},{},{len:.1},{traversal}\n", p.from, p.to, p.mode, u8::from(p.bidirectional)));
    }
    Feed::new("Etc/GMT-1")
        .one_route()
        .file("stops.txt", &stops)
        .file("calendar.txt", "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nALL,1,1,1,1,1,1,1,20260101,20261231\n")
        .file("trips.txt", &trips)
        .file("stop_times.txt", &times)
        .file("pathways.txt", &pathways)
}

/// Earliest arrival at `to` leaving `from` at `t0`: a Connection Scan repeated until nothing
/// improves (so connections at equal times are handled whatever their order).
fn oracle(
    c: &Case,
    links: &dyn Fn(usize) -> Vec<(usize, u32)>,
    from: usize,
    to: usize,
    t0: u32,
    strict: bool,
    change_s: u32,
) -> Option<u32> {
    const INF: u32 = u32::MAX;
    let n = c.stops.len();
    let mut ready = vec![INF; n];
    let mut best = INF;
    ready[from] = t0;
    for (b, d) in links(from) {
        ready[b] = ready[b].min(t0 + d);
        if b == to {
            best = best.min(t0 + d);
        }
    }
    // (dep, arr, from, to, trip, board ok, alight ok)
    let mut conns = Vec::new();
    for (k, t) in c.trips.iter().enumerate() {
        let st = c.stop_times(t);
        let sf = |s: usize| !strict || (t.wheelchair == 1 && c.stop_access(s) == 1);
        for w in st.windows(2) {
            let ((s1, _, d1, up, _), (s2, a2, _, _, down)) = (w[0], w[1]);
            conns.push((d1, a2, s1, s2, k, up && sf(s1), down && sf(s2)));
        }
    }
    conns.sort();
    loop {
        let mut changed = false;
        let mut on = vec![false; c.trips.len()];
        for &(dep, arr, s1, s2, k, board, alight) in &conns {
            if !on[k] && board && ready[s1] <= dep {
                on[k] = true;
            }
            if !on[k] || !alight {
                continue;
            }
            if s2 == to {
                best = best.min(arr);
            }
            if arr + change_s < ready[s2] {
                ready[s2] = arr + change_s;
                changed = true;
            }
            for (b, d) in links(s2) {
                if b == to {
                    best = best.min(arr + d);
                }
                if arr + d < ready[b] {
                    ready[b] = arr + d;
                    changed = true;
                }
            }
        }
        if !changed {
            break;
        }
    }
    (best != INF).then_some(best)
}

static QUERIES: AtomicUsize = AtomicUsize::new(0);
static ITINERARIES: AtomicUsize = AtomicUsize::new(0);
static ORACLE_HITS: AtomicUsize = AtomicUsize::new(0);
static WALK_LEGS: AtomicUsize = AtomicUsize::new(0);
static PATHWAY_STEPS: AtomicUsize = AtomicUsize::new(0);
static CHANGES: AtomicUsize = AtomicUsize::new(0);

fn check_case(c: &Case) -> Result<(), TestCaseError> {
    let mut engine: Engine = feed(c).load_zip();
    let date = NaiveDate::parse_from_str(DATE, "%Y-%m-%d").expect("date");
    let idx: Vec<StopIdx> = (0..c.stops.len()).map(|i| engine.resolve(&format!("S{i}")).expect("stop resolves")).collect();
    for q in &c.queries {
        let sf = if q.strict { StepFree::Strict } else { StepFree::Off };
        let t0 = 7 * 3600 + 50 * 60 + q.min * 60;
        let time = format!("{:02}:{:02}", t0 / 3600, t0 / 60 % 60);
        for penalty in [None, Some(0)] {
            let pq = PlanQuery {
                from: format!("S{}", q.from),
                to: format!("S{}", q.to),
                date: DATE.into(),
                time: time.clone(),
                step_free: sf,
                change_penalty_s: penalty,
                walk_weight: Some(1.0),
                next: Some(3),
                ..PlanQuery::default()
            };
            let r = engine.plan(&pq).map_err(|e| TestCaseError::fail(format!("plan {pq:?}: {e}")))?;
            QUERIES.fetch_add(1, Ordering::Relaxed);
            let p: Params = engine.params_for(&pq).expect("params");
            let (from, to) = (engine.endpoints_of(idx[q.from]), engine.endpoints_of(idx[q.to]));
            for it in &r.journeys {
                ITINERARIES.fetch_add(1, Ordering::Relaxed);
                WALK_LEGS.fetch_add(it.legs.iter().filter(|l| l.kind != timeweave::journey::LegKind::Ride).count(), Ordering::Relaxed);
                PATHWAY_STEPS.fetch_add(it.legs.iter().map(|l| l.pathways.len()).sum(), Ordering::Relaxed);
                CHANGES.fetch_add(
                    it.legs.iter().filter(|l| l.kind == timeweave::journey::LegKind::Ride).count().saturating_sub(1),
                    Ordering::Relaxed,
                );
                if let Err(m) = replay(&engine.tt, date, t0, &p, &from, &to, it) {
                    return Err(TestCaseError::fail(format!(
                        "{m}\nquery {pq:?}\nitinerary {}",
                        serde_json::to_string_pretty(it).unwrap_or_default()
                    )));
                }
            }
            if penalty == Some(0) {
                let walk = engine.tt.walk(sf.walk_profile());
                let links = |s: usize| -> Vec<(usize, u32)> {
                    walk.from(idx[s])
                        .iter()
                        .filter(|f| f.length_m as f64 <= p.max_walk_m)
                        .filter_map(|f| idx.iter().position(|&x| x == f.to).map(|b| (b, f.duration_s(p.walk_speed_mps))))
                        .collect()
                };
                let want = oracle(c, &links, q.from, q.to, t0, q.strict, p.transfer_s());
                let got = r.journeys.first().map(|i| i.arrive_s);
                prop_assert_eq!(got, want, "first arrival vs Connection Scan; query {:?}; result {:?}", pq, r.nothing_found);
                if want.is_some() {
                    ORACLE_HITS.fetch_add(1, Ordering::Relaxed);
                }
            }
        }
    }
    Ok(())
}

#[test]
fn itineraries_replay_and_first_arrival_matches_connection_scan() {
    let mut runner = TestRunner::new(Config { cases: CASES, failure_persistence: None, ..Config::default() });
    let ran = AtomicUsize::new(0);
    let result = runner.run(&case(), |c| {
        ran.fetch_add(1, Ordering::Relaxed);
        check_case(&c)
    });
    println!(
        "replay: {} generated cases ({CASES} required passes), {} plan queries, {} itineraries replayed ({} walk legs, {} pathway steps, {} changes), {} penalty-0 queries with a journey per the oracle",
        ran.load(Ordering::Relaxed),
        QUERIES.load(Ordering::Relaxed),
        ITINERARIES.load(Ordering::Relaxed),
        WALK_LEGS.load(Ordering::Relaxed),
        PATHWAY_STEPS.load(Ordering::Relaxed),
        CHANGES.load(Ordering::Relaxed),
        ORACLE_HITS.load(Ordering::Relaxed)
    );
    if let Err(e) = result {
        panic!("{e}");
    }
}

/// The validator itself can fail: a planned itinerary on the base feed of the bad-feed corpus
/// replays, and each tampered copy of it is rejected.
#[test]
fn replay_rejects_tampered_itineraries() {
    use support::badfeeds::{base_files, BASE_LAT};
    use timeweave::journey::LegKind;
    let mut e = Engine::new();
    e.load_zip("base", &base_files(BASE_LAT).zip(), &mut |_, _| {}).expect("base feed");
    let q = PlanQuery { from: "A".into(), to: "D".into(), date: "2026-06-03".into(), time: "07:50".into(), ..PlanQuery::default() };
    let r = e.plan(&q).expect("plan");
    let it = r.journeys.first().expect("an itinerary A → D").clone();
    let p = e.params_for(&q).expect("params");
    let date = NaiveDate::from_ymd_opt(2026, 6, 3).expect("date");
    let (from, to) = (e.endpoints_of(e.resolve("A").expect("A")), e.endpoints_of(e.resolve("D").expect("D")));
    let t0 = 7 * 3600 + 50 * 60;
    replay(&e.tt, date, t0, &p, &from, &to, &it).expect("the planned itinerary replays");
    let ride = it.legs.iter().position(|l| l.kind == LegKind::Ride).expect("a ride");
    let walk = it.legs.iter().position(|l| l.kind != LegKind::Ride).expect("a walk C → D (transfers.txt C,D,2,120)");
    let mut tampered = Vec::new();
    let mut t = it.clone();
    t.legs[ride].depart_s += 60;
    t.legs[ride].duration_s -= 60;
    tampered.push(("ride leaves a minute late", t));
    let mut t = it.clone();
    t.legs[ride].trip_id = Some("T2".into());
    tampered.push(("ride on another trip", t));
    let mut t = it.clone();
    t.legs[walk].arrive_s = t.legs[walk].depart_s + 5;
    t.legs[walk].duration_s = 5;
    t.arrive_s = t.legs.last().map_or(0, |l| l.arrive_s);
    tampered.push(("walk of 55 m in 5 s", t));
    let mut t = it.clone();
    t.legs.remove(walk);
    tampered.push(("walk left out", t));
    let mut t = it.clone();
    t.legs[ride].calls.clear();
    tampered.push(("intermediate stop B dropped", t));
    for (what, t) in tampered {
        assert!(replay(&e.tt, date, t0, &p, &from, &to, &t).is_err(), "replay accepted a tampered itinerary: {what}");
    }
    // Strict step-free: platform A inherits wheelchair_boarding 1 from station S, trips are
    // marked 1, so the same ride replays under strict rules; after marking T1 not accessible it
    // must not.
    let strict = Params::new(StepFree::Strict);
    let rides_only = timeweave::journey::Itinerary { legs: it.legs[..=ride].to_vec(), arrive_s: it.legs[ride].arrive_s, ..it.clone() };
    let at_c = e.endpoints_of(e.resolve("C").expect("C"));
    replay(&e.tt, date, t0, &strict, &from, &at_c, &rides_only).expect("accessible ride replays under strict rules");
    let t1 = e.tt.trips.iter().position(|t| t.id == "T1").expect("T1");
    e.tt.trips[t1].wheelchair = timeweave::timetable::Access::No;
    assert!(
        replay(&e.tt, date, t0, &strict, &from, &at_c, &rides_only).is_err(),
        "replay accepted a strict ride on a trip with wheelchair_accessible 2"
    );
}

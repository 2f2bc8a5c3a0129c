//! The interchange audit against connections worked by hand, the GTFS Schedule reference's
//! `transfer_type` and `block_id` definitions, and the replay validator (every made connection is
//! a journey a person can take).

mod support;

use support::replay::{replay, stop_of};
use support::{demo, hms, Feed};
use timeweave::analysis::interchange::Status;
use timeweave::engine::interchange::{ConnectionRow, InterchangeQuery};
use timeweave::journey::LegKind;
use timeweave::route::search::{Params, StepFree};
use timeweave::Engine;

/// Route A arrives at X at 08:07; route B leaves X at `deps` (HH:MM); `transfers` is the body of
/// transfers.txt (empty: none).
fn feed(deps: &[&str], transfers: &str) -> Feed {
    feed_full(&["08:07"], deps, transfers, "")
}

/// Route A arrives at X (from P) at `arrs`, route B leaves X (to Q) at `deps`; with `block`, A's
/// first trip ends at X in block K, and route C's trip C0 starts there in block `block` at 08:10.
fn feed_full(arrs: &[&str], deps: &[&str], transfers: &str, block: &str) -> Feed {
    let mut trips = String::from("route_id,service_id,trip_id,direction_id,block_id\n");
    let mut times = String::from("trip_id,arrival_time,departure_time,stop_id,stop_sequence\n");
    for (i, a) in arrs.iter().enumerate() {
        trips += &format!("A,ALL,A{i},0,{}\n", if i == 0 && !block.is_empty() { "K" } else { "" });
        times += &format!("A{i},07:30:00,07:30:00,P,1\nA{i},{a}:00,{a}:00,X,2\n");
    }
    for (i, d) in deps.iter().enumerate() {
        trips += &format!("B,ALL,B{i},0,\n");
        times += &format!("B{i},{d}:00,{d}:00,X,1\nB{i},11:00:00,11:00:00,Q,2\n");
    }
    if !block.is_empty() {
        trips += &format!("C,ALL,C0,1,{block}\n");
        times += "C0,08:10:00,08:10:00,X,1\nC0,08:40:00,08:40:00,P,2\n";
    }
    let mut f = Feed::new("Etc/GMT-1")
        .file("stops.txt", "stop_id,stop_name,stop_lat,stop_lon\nP,Stop P,52.0,13.0\nX,Stop X,52.1,13.0\nQ,Stop Q,52.2,13.0\n")
        .file("routes.txt", "route_id,agency_id,route_short_name,route_type\nA,TA,A,3\nB,TA,B,3\nC,TA,C,3\n")
        .file("trips.txt", &trips)
        .file("stop_times.txt", &times)
        .file("calendar.txt", "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nALL,1,1,1,1,1,1,1,20260101,20261231\n");
    if !transfers.is_empty() {
        f = f.file("transfers.txt", &format!("from_stop_id,to_stop_id,transfer_type,min_transfer_time\n{transfers}\n"));
    }
    f
}

fn query(station: &str, window: &str) -> InterchangeQuery {
    InterchangeQuery { station: station.into(), date: "2026-06-10".into(), window: Some(window.into()), ..Default::default() }
}

fn rows(deps: &[&str], transfers: &str) -> Vec<ConnectionRow> {
    let mut e = feed(deps, transfers).load();
    let r = e.interchange(&query("X", "08:00-08:30")).expect("audit").rows;
    // Route A's arrival against route B: one row (A's own line is left out).
    assert_eq!(r.len(), 1, "{r:?}");
    r
}

#[test]
fn a_two_minute_change_misses_the_next_minute_and_makes_the_one_after() {
    // Worked by hand (common practice, no source): arrival 08:07, change time 120 s, departures
    // 08:08 and 08:15 of one route → 08:08 missed by 60 s, 08:15 made with an 8 min wait.
    let r = &rows(&["08:08", "08:15"], "X,X,2,120")[0];
    assert_eq!((r.arrival.to_string().as_str(), r.status, r.change_s), ("08:07:00", Status::Made, Some(120)));
    assert_eq!((r.departure.map(|d| d.to_string()).as_deref(), r.wait_s), (Some("08:15:00"), Some(480)));
    assert_eq!((r.missed_by_s, r.missed_trip_id.as_deref(), r.near_miss), (Some(60), Some("B0"), true));
    assert_eq!((&*r.arr_route_id, &*r.dep_route_id, &*r.dep_direction), ("A", "B", "0"));
}

#[test]
fn transfer_types_follow_the_gtfs_schedule_reference() {
    // GTFS Schedule reference, transfers.txt: 0 (or no rule) = recommended point, the default
    // change time applies (ours: 60 s, common practice, no source); 1 = timed transfer, the
    // departing vehicle waits (0 s); 2 = at least min_transfer_time; 3 = no transfer possible.
    let deps = ["08:07", "08:08", "08:12"];
    let none = &rows(&deps, "")[0];
    assert_eq!((none.change_s, none.departure.map(|d| d.to_string()).as_deref(), none.missed_by_s), (Some(60), Some("08:08:00"), Some(60)));
    let type0 = &rows(&deps, "X,X,0,")[0];
    assert_eq!((type0.change_s, type0.departure.map(|d| d.to_string()).as_deref()), (Some(60), Some("08:08:00")));
    let timed = &rows(&deps, "X,X,1,")[0];
    assert_eq!(
        (timed.change_s, timed.departure.map(|d| d.to_string()).as_deref(), timed.wait_s, timed.missed_by_s),
        (Some(0), Some("08:07:00"), Some(0), None)
    );
    let min = &rows(&deps, "X,X,2,300")[0];
    assert_eq!(
        (min.change_s, min.departure.map(|d| d.to_string()).as_deref(), min.wait_s, min.missed_by_s),
        (Some(300), Some("08:12:00"), Some(300), Some(240))
    );
    assert!(!min.near_miss, "missed by 4 min is not a near miss at the default 2 min");
    let forbidden = &rows(&deps, "X,X,3,")[0];
    assert_eq!((forbidden.status, forbidden.departure.map(|d| d.to_string()).as_deref()), (Status::NotPossible, None));
}

#[test]
fn no_departure_within_the_horizon_is_none() {
    let r = &rows(&["09:30"], "")[0];
    assert_eq!((r.status, r.departure.map(|d| d.to_string()).as_deref(), r.missed_by_s), (Status::None, None, None));
}

#[test]
fn the_summary_per_route_pair_counts_shares_and_waits() {
    // Worked by hand (common practice, no source): A arrives 08:07, 08:27, 08:47; B leaves
    // 08:11, 08:35, 09:07; change 60 s (our default) → waits 4, 8, 20 min, all made. Within 5 min:
    // 1 of 3; within 10 and 15 min: 2 of 3. Median 480 s; 90th percentile by linear
    // interpolation between closest ranks (Hyndman & Fan 1996, definition 7): rank 0.9 × 2 = 1.8,
    // 480 + 0.8 × (1200 − 480) = 1056 s.
    let mut e = feed_full(&["08:07", "08:27", "08:47"], &["08:11", "08:35", "09:07"], "", "").load();
    let r = e.interchange(&query("X", "08:00-09:00")).expect("audit");
    assert_eq!(r.pairs.len(), 1, "{:?}", r.pairs);
    let p = &r.pairs[0];
    assert_eq!((p.arr_route_id.as_str(), p.dep_route_id.as_str(), p.arrivals, p.made), ("A", "B", 3, 3));
    assert_eq!((p.made_within_5, p.made_within_10, p.made_within_15), (1.0 / 3.0, 2.0 / 3.0, 2.0 / 3.0));
    assert_eq!((p.median_wait_s, p.p90_wait_s, p.near_misses), (Some(480.0), Some(1056.0), 0));
    let st = &r.stations[0];
    assert_eq!((st.station.as_str(), st.arrivals, st.connections, st.made, st.rank_near_misses), ("X", 3, 3, 3, 1));
    // The time line: every departure from the window's start to its end plus the horizon.
    let deps: Vec<&str> = r.departures.iter().map(|d| d.departure.as_str()).collect();
    assert_eq!(deps, ["08:11:00", "08:35:00", "09:07:00"]);
}

#[test]
fn an_in_seat_continuation_of_the_block_is_not_a_connection() {
    // GTFS Schedule reference, trips.txt block_id: consecutive trips of one block are made by the
    // same vehicle, so a rider can stay aboard. A0 ends at X in block K and C0 starts there at
    // 08:10 in block K: A0's arrival has no row for route C. In another block it does.
    let lines = |block: &str| {
        let mut e = feed_full(&["08:07"], &["08:15"], "", block).load();
        let r = e.interchange(&query("X", "08:00-08:30")).expect("audit").rows;
        r.iter().map(|r| format!("{}>{}", r.arr_trip_id, r.dep_route_id)).collect::<Vec<_>>()
    };
    assert_eq!(lines("K"), ["A0>B"]);
    assert_eq!(lines("L"), ["A0>B", "A0>C"]);
}

#[test]
fn bad_input_is_refused_before_any_work() {
    let mut e = feed(&["08:15"], "").load();
    let err = |q: InterchangeQuery, e: &mut timeweave::Engine| e.interchange(&q).expect_err("refused").to_string();
    assert!(err(query("X", "25:00-26:00"), &mut e).contains("outside the service day"));
    assert!(err(query("X", "09:00-08:00"), &mut e).contains("ends before it starts"));
    assert!(err(InterchangeQuery { date: "2027-06-10".into(), ..query("X", "08:00-09:00") }, &mut e)
        .contains("outside the loaded feeds' dates"));
    assert!(err(InterchangeQuery { near_miss_min: Some(90), ..query("X", "08:00-09:00") }, &mut e).contains("longer than the horizon"));
    let unknown = err(query("Stop Xx", "08:00-09:00"), &mut e);
    assert!(unknown.contains("did you mean"), "{unknown}");
}

#[test]
fn a_stop_with_no_departure_gives_an_empty_audit_with_a_sentence() {
    let mut e = feed(&["08:15"], "").load();
    let r = e.interchange(&query("Q", "08:00-12:00")).expect("no departure is no error");
    assert!(r.rows.is_empty() && r.pairs.is_empty());
    assert_eq!(r.note.as_deref(), Some("No trip leaves Stop Q on 2026-06-10: there is no connection to audit."));
    let r = e.interchange(&query("X", "12:00-13:00")).expect("no arrival is no error");
    assert!(r.note.as_deref().is_some_and(|n| n.starts_with("No trip arrives at Stop X between 12:00:00 and 13:00:00")), "{:?}", r.note);
}

/// Every made row of an audit replays as a two-ride journey; returns how many were checked.
fn replay_made(e: &mut timeweave::Engine, q: &InterchangeQuery) -> usize {
    let r = e.interchange(q).expect("audit");
    let date = chrono::NaiveDate::parse_from_str(&q.date, "%Y-%m-%d").expect("date");
    let p = Params::new(StepFree::Off);
    let mut n = 0;
    for row in r.rows.iter().filter(|r| r.status == Status::Made) {
        let it = e.connection_journey(&q.date, row.arr_event, row.dep_event.expect("made has a departure")).expect("journey");
        let first = stop_of(&e.tt, &it.legs[0].start).expect("first stop");
        let last = stop_of(&e.tt, &it.legs[it.legs.len() - 1].end).expect("last stop");
        if let Err(m) = replay(&e.tt, date, it.depart_s, &p, &[first], &[last], &it) {
            panic!("made connection {row:?} does not replay: {m}");
        }
        let rides: Vec<_> = it.legs.iter().filter(|l| l.kind == LegKind::Ride).collect();
        assert_eq!(rides.len(), 2, "{row:?}");
        assert_eq!((rides[0].trip_id.as_deref(), rides[1].trip_id.as_deref()), (Some(&*row.arr_trip_id), row.dep_trip_id.as_deref()));
        assert_eq!(hms(rides[1].depart_s - rides[0].arrive_s), hms(row.wait_s.expect("made has a wait")), "{row:?}");
        n += 1;
    }
    n
}

#[test]
fn every_made_connection_of_the_demo_city_replays_as_a_journey() {
    let mut e = Engine::new();
    for folder in ["oskerveld-city", "oskerveld-rail"] {
        timeweave_disk::load_feed(&mut e, &demo(folder), &mut |_, _| {}).expect("demo loads");
    }
    let q = InterchangeQuery { station: "all".into(), date: "2026-12-02".into(), window: Some("06:00-10:00".into()), ..Default::default() };
    let n = replay_made(&mut e, &q);
    assert!(n > 1000, "only {n} made connections");
}

#[test]
fn every_made_connection_of_a_generated_city_replays_as_a_journey() {
    let mut zip = std::io::Cursor::new(Vec::new());
    timeweave_synth::write_feed(timeweave_synth::Preset::Small, 7, &mut zip).expect("generated feed");
    let mut e = Engine::new();
    e.load_zip("synth", zip.get_ref(), &mut |_, _| {}).expect("generated feed loads");
    let q = InterchangeQuery { station: "all".into(), date: "2026-06-10".into(), window: Some("07:00-09:00".into()), ..Default::default() };
    let n = replay_made(&mut e, &q);
    assert!(n > 1000, "only {n} made connections");
}

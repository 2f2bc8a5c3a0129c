//! The interchange audit against connections worked by hand and the GTFS Schedule reference's
//! `transfer_type` values.

mod support;

use support::Feed;
use timeweave::analysis::interchange::Status;
use timeweave::engine::interchange::{ConnectionRow, InterchangeQuery};

/// Route A arrives at X at 08:07; route B leaves X at `deps` (HH:MM); `transfers` is the body of
/// transfers.txt (empty: none).
fn feed(deps: &[&str], transfers: &str) -> Feed {
    let mut trips = String::from("route_id,service_id,trip_id,direction_id\nA,ALL,A1,0\n");
    let mut times =
        String::from("trip_id,arrival_time,departure_time,stop_id,stop_sequence\nA1,07:50:00,07:50:00,P,1\nA1,08:07:00,08:07:00,X,2\n");
    for (i, d) in deps.iter().enumerate() {
        trips += &format!("B,ALL,B{i},0\n");
        times += &format!("B{i},{d}:00,{d}:00,X,1\nB{i},11:00:00,11:00:00,Q,2\n");
    }
    let mut f = Feed::new("Etc/GMT-1")
        .file("stops.txt", "stop_id,stop_name,stop_lat,stop_lon\nP,Stop P,52.0,13.0\nX,Stop X,52.1,13.0\nQ,Stop Q,52.2,13.0\n")
        .file("routes.txt", "route_id,agency_id,route_short_name,route_type\nA,TA,A,3\nB,TA,B,3\n")
        .file("trips.txt", &trips)
        .file("stop_times.txt", &times)
        .file("calendar.txt", "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nALL,1,1,1,1,1,1,1,20260101,20261231\n");
    if !transfers.is_empty() {
        f = f.file("transfers.txt", &format!("from_stop_id,to_stop_id,transfer_type,min_transfer_time\n{transfers}\n"));
    }
    f
}

fn rows(deps: &[&str], transfers: &str) -> Vec<ConnectionRow> {
    let mut e = feed(deps, transfers).load();
    let q = InterchangeQuery { station: "X".into(), date: "2026-06-10".into(), window: Some("08:00-08:30".into()), ..Default::default() };
    let r = e.interchange(&q).expect("audit");
    // Route A's arrival against route B: one row (A's own line is left out).
    assert_eq!(r.len(), 1, "{r:?}");
    r
}

#[test]
fn a_two_minute_change_misses_the_next_minute_and_makes_the_one_after() {
    // Worked by hand (common practice, no source): arrival 08:07, change time 120 s, departures
    // 08:08 and 08:15 of one route → 08:08 missed by 60 s, 08:15 made with an 8 min wait.
    let r = &rows(&["08:08", "08:15"], "X,X,2,120")[0];
    assert_eq!((r.arrival.as_str(), r.status, r.change_s), ("08:07:00", Status::Made, Some(120)));
    assert_eq!((r.departure.as_deref(), r.wait_s), (Some("08:15:00"), Some(480)));
    assert_eq!((r.missed_by_s, r.missed_trip_id.as_deref(), r.near_miss), (Some(60), Some("B0"), true));
    assert_eq!((r.arr_route_id.as_str(), r.dep_route_id.as_str(), r.dep_direction.as_str()), ("A", "B", "0"));
}

#[test]
fn transfer_types_follow_the_gtfs_schedule_reference() {
    // GTFS Schedule reference, transfers.txt: 0 (or no rule) = recommended point, the default
    // change time applies (ours: 60 s, common practice, no source); 1 = timed transfer, the
    // departing vehicle waits (0 s); 2 = at least min_transfer_time; 3 = no transfer possible.
    let deps = ["08:07", "08:08", "08:12"];
    let none = &rows(&deps, "")[0];
    assert_eq!((none.change_s, none.departure.as_deref(), none.missed_by_s), (Some(60), Some("08:08:00"), Some(60)));
    let type0 = &rows(&deps, "X,X,0,")[0];
    assert_eq!((type0.change_s, type0.departure.as_deref()), (Some(60), Some("08:08:00")));
    let timed = &rows(&deps, "X,X,1,")[0];
    assert_eq!((timed.change_s, timed.departure.as_deref(), timed.wait_s, timed.missed_by_s), (Some(0), Some("08:07:00"), Some(0), None));
    let min = &rows(&deps, "X,X,2,300")[0];
    assert_eq!((min.change_s, min.departure.as_deref(), min.wait_s, min.missed_by_s), (Some(300), Some("08:12:00"), Some(300), Some(240)));
    assert!(!min.near_miss, "missed by 4 min is not a near miss at the default 2 min");
    let forbidden = &rows(&deps, "X,X,3,")[0];
    assert_eq!((forbidden.status, forbidden.departure.as_deref()), (Status::NotPossible, None));
}

#[test]
fn no_departure_within_the_horizon_is_none() {
    let r = &rows(&["09:30"], "")[0];
    assert_eq!((r.status, r.departure.as_deref(), r.missed_by_s), (Status::None, None, None));
}

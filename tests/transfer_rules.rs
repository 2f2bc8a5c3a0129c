//! Trip- and route-specific rows of transfers.txt.
mod support;

use support::{plan, query, Feed};
use timeweave::route::search::StepFree;

/// Stops A → X on trip T1 (arrives 08:10), then X → B on T2 (leaves 08:15) or T3 (leaves 08:30).
fn feed(transfers: &str) -> Feed {
    Feed::new("Etc/GMT-1")
        .file("stops.txt", "stop_id,stop_name,stop_lat,stop_lon\nA,Stop A,52.00,13.00\nX,Stop X,52.05,13.00\nB,Stop B,52.10,13.00\n")
        .file("routes.txt", "route_id,agency_id,route_short_name,route_type\nR1,TA,1,3\nR2,TA,2,3\nR3,TA,3,3\n")
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nS,1,1,1,1,1,1,1,20260101,20271231\n",
        )
        .file("trips.txt", "route_id,service_id,trip_id\nR1,S,T1\nR2,S,T2\nR3,S,T3\n")
        .file(
            "stop_times.txt",
            "trip_id,arrival_time,departure_time,stop_id,stop_sequence
             T1,08:00:00,08:00:00,A,1
             T1,08:10:00,08:10:00,X,2
             T2,08:15:00,08:15:00,X,1
             T2,08:25:00,08:25:00,B,2
             T3,08:30:00,08:30:00,X,1
             T3,08:40:00,08:40:00,B,2",
        )
        .file("transfers.txt", transfers)
}

fn arrival(transfers: &str) -> Vec<String> {
    let mut e = feed(transfers).load();
    let mut q = query("A", "B", "2026-12-02", "07:55");
    q.next = Some(1);
    let r = plan(&mut e, &q, StepFree::Off);
    r.journeys
        .iter()
        .map(|i| format!("{} {}", i.arrive, i.legs.iter().filter_map(|l| l.trip_id.clone()).collect::<Vec<_>>().join("+")))
        .collect()
}

#[test]
fn without_rules_the_first_connection_is_taken() {
    // 5 min at X is above the default change time (60 s, common practice, no source).
    assert_eq!(arrival("from_stop_id,to_stop_id,transfer_type\n"), vec!["08:25 T1+T2"]);
}

#[test]
fn trip_to_trip_transfer_type_3_forbids_that_change() {
    // GTFS Schedule reference, transfers.txt: transfer_type 3 "Transfers are not possible between
    // routes at the location"; with from_trip_id/to_trip_id the rule applies to those trips.
    let rows = "from_stop_id,to_stop_id,from_trip_id,to_trip_id,transfer_type\nX,X,T1,T2,3\n";
    assert_eq!(arrival(rows), vec!["08:40 T1+T3"]);
}

#[test]
fn route_to_route_min_transfer_time_applies_to_those_routes() {
    // GTFS Schedule reference, transfers.txt: transfer_type 2 needs min_transfer_time between the
    // routes named; 10 min from route R1 to R2 rules out the 5-minute change.
    let rows = "from_stop_id,to_stop_id,from_route_id,to_route_id,transfer_type,min_transfer_time\nX,X,R1,R2,2,600\n";
    assert_eq!(arrival(rows), vec!["08:40 T1+T3"]);
    // The same rule for other routes leaves R1 → R2 alone.
    let rows = "from_stop_id,to_stop_id,from_route_id,to_route_id,transfer_type,min_transfer_time\nX,X,R3,R2,2,600\n";
    assert_eq!(arrival(rows), vec!["08:25 T1+T2"]);
}

#[test]
fn trip_specific_timed_transfer_beats_a_stop_wide_forbid() {
    // GTFS Schedule reference, transfers.txt: the most specific rule applies (trip over stop);
    // transfer_type 1 is a timed, guaranteed connection.
    let rows = "from_stop_id,to_stop_id,from_trip_id,to_trip_id,transfer_type\nX,X,,,3\nX,X,T1,T2,1\n";
    assert_eq!(arrival(rows), vec!["08:25 T1+T2"]);
}

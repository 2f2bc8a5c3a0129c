//! GTFS Schedule reference semantics, checked through `Engine::plan` and the calendar functions:
//! times past 24:00:00, the "noon minus 12 h" origin on clock-change days, calendar_dates
//! exceptions, frequencies, parent-station wheelchair inheritance, transfers.txt rules and
//! pickup/drop-off restrictions. Every feed is tiny and built in the test; stops that must not be
//! joined by a walk are placed 5 km or more apart (links are generated only within 400 m).

mod support;

use chrono::{NaiveDate, TimeZone, Utc};
use support::{departures, plan, query, Feed};
use timeweave::engine::{NoJourney, Note, PlanQuery};
use timeweave::journey::{Fact, LegKind};
use timeweave::route::search::StepFree;
use timeweave::timetable::calendar::{clock_to_seconds, day_origin, seconds_to_clock};
use timeweave::timetable::Access;

fn date(y: i32, m: u32, d: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(y, m, d).expect("valid date")
}

const TWO_STOPS: &str = "stop_id,stop_name,stop_lat,stop_lon
    A,Alder Quay,52.00,13.00
    B,Birch Row,52.05,13.00";

// ---------------------------------------------------------------------------------------------
// Times past 24:00:00

fn night_feed() -> Feed {
    Feed::new("Etc/GMT-1")
        .one_route()
        .file("stops.txt", TWO_STOPS)
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
            MON,1,0,0,0,0,0,0,20260601,20260630",
        )
        .file(
            "trips.txt",
            "route_id,service_id,trip_id
            R,MON,NIGHT
            R,MON,DAY",
        )
        .file(
            "stop_times.txt",
            "trip_id,arrival_time,departure_time,stop_id,stop_sequence
            NIGHT,25:10:00,25:10:00,A,1
            NIGHT,25:30:00,25:30:00,B,2
            DAY,8:05:00,8:05:00,A,1
            DAY,8:25:00,8:25:00,B,2",
        )
}

#[test]
fn a_trip_past_midnight_belongs_to_its_service_day_and_is_found_the_next_morning() {
    let mut engine = night_feed().load();
    // 2026-06-01 is a Monday, so the MON service runs on it and not on Tuesday 2026-06-02.
    // GTFS Schedule reference, field types, Time (used by stop_times.txt arrival_time and
    // departure_time): "For times occurring after midnight on the service day, enter the time as a
    // value greater than 24:00:00"; 25:10:00 of Monday's service day is 01:10 on Tuesday.
    let r = plan(&mut engine, &query("A", "B", "2026-06-02", "01:00"), StepFree::Off);
    assert_eq!(r.journeys.len(), 1, "{r:?}");
    let it = &r.journeys[0];
    assert_eq!(it.legs[0].trip_id.as_deref(), Some("NIGHT"));
    assert_eq!((it.depart.as_str(), it.arrive.as_str()), ("01:10", "01:30"));
    // The zone has no clock change, so Tuesday's origin is Tuesday 00:00 and 01:10 is 4200 s after it.
    assert_eq!((it.depart_s, it.arrive_s), (4200, 5400));

    // Asked on the service day itself, the same trip is shown on the next calendar day.
    // DEVELOPERS.md result shape: "+1" is appended when the clock reads the next calendar day.
    let r = plan(&mut engine, &query("A", "B", "2026-06-01", "23:00"), StepFree::Off);
    let it = &r.journeys[0];
    assert_eq!(it.legs[0].trip_id.as_deref(), Some("NIGHT"));
    assert_eq!((it.depart.as_str(), it.depart_s), ("01:10+1", 25 * 3600 + 600));

    // GTFS Schedule reference, field types: Time "H:MM:SS is also accepted".
    let r = plan(&mut engine, &query("A", "B", "2026-06-01", "08:00"), StepFree::Off);
    assert_eq!(departures(&r).first().map(String::as_str), Some("08:05"));

    // Tuesday's service does not run, so nothing leaves after midnight into Wednesday.
    let r = plan(&mut engine, &query("A", "B", "2026-06-03", "01:00"), StepFree::Off);
    assert!(r.journeys.is_empty(), "{r:?}");
}

// ---------------------------------------------------------------------------------------------
// Noon minus 12 h on the days clocks change

fn dst_feed() -> Feed {
    // "CET": a tz-database zone name without a place name, with the EU summer-time rules.
    Feed::new("CET")
        .one_route()
        .file("stops.txt", TWO_STOPS)
        .file(
            "calendar_dates.txt",
            "service_id,date,exception_type
            DST,20260329,1
            DST,20261025,1",
        )
        .file(
            "trips.txt",
            "route_id,service_id,trip_id
            R,DST,EARLY
            R,DST,MORNING",
        )
        .file(
            "stop_times.txt",
            "trip_id,arrival_time,departure_time,stop_id,stop_sequence
            EARLY,01:00:00,01:00:00,A,1
            EARLY,01:20:00,01:20:00,B,2
            MORNING,08:00:00,08:00:00,A,1
            MORNING,08:20:00,08:20:00,B,2",
        )
}

#[test]
fn noon_minus_twelve_hours_on_the_spring_clock_change() {
    let cet: chrono_tz::Tz = "CET".parse().expect("CET is in the tz database");
    let d = date(2026, 3, 29);
    // Recalled from memory (tz database, EU rules): on 2026-03-29 clocks go from 02:00 CET to
    // 03:00 CEST, i.e. at 01:00 UTC. Noon that day is 12:00 CEST = 10:00 UTC.
    // GTFS Schedule reference, field types, Time: "measured from noon minus 12h of the service day
    // (effectively midnight except for days on which daylight savings time changes occur)".
    // So the origin is 10:00 UTC − 12 h = 2026-03-28 22:00 UTC, which is 23:00 CET of the previous day.
    assert_eq!(day_origin(cet, d), Utc.with_ymd_and_hms(2026, 3, 28, 22, 0, 0).unwrap());
    // Noon is 12 h after the origin by definition.
    assert_eq!(clock_to_seconds(cet, d, 12, 0), Some(12 * 3600));
    // 08:00 CEST = 06:00 UTC = origin + 8 h.
    assert_eq!(clock_to_seconds(cet, d, 8, 0), Some(8 * 3600));
    // Local midnight = 23:00 UTC = origin + 1 h.
    assert_eq!(clock_to_seconds(cet, d, 0, 0), Some(3600));
    assert_eq!(seconds_to_clock(cet, d, 8 * 3600), "08:00");
    assert_eq!(seconds_to_clock(cet, d, 3600), "00:00");
    assert_eq!(seconds_to_clock(cet, d, 0), "23:00-1");
    // Origin + 2 h = 00:00 UTC = 01:00 CET; origin + 3 h = 01:00 UTC = 03:00 CEST (02:xx is skipped).
    assert_eq!(seconds_to_clock(cet, d, 2 * 3600), "01:00");
    assert_eq!(seconds_to_clock(cet, d, 3 * 3600), "03:00");
    // calendar.rs contract (the engine's own choice, no outside source): a skipped clock time
    // means the first instant after the gap, 03:00 CEST = origin + 3 h.
    assert_eq!(clock_to_seconds(cet, d, 2, 30), Some(3 * 3600));

    let mut engine = dst_feed().load();
    // A stop_time of 08:00:00 is origin + 8 h, shown as local 08:00 (derived above).
    let r = plan(&mut engine, &query("A", "B", "2026-03-29", "07:00"), StepFree::Off);
    let it = &r.journeys[0];
    assert_eq!(
        (it.legs[0].trip_id.as_deref(), it.depart.as_str(), it.depart_s, it.arrive.as_str()),
        (Some("MORNING"), "08:00", 8 * 3600, "08:20")
    );
    // A stop_time of 01:00:00 is origin + 1 h: 00:00 local, because the origin is 23:00 of the
    // previous day (derived above from the reference's definition).
    let r = plan(&mut engine, &query("A", "B", "2026-03-29", "00:00"), StepFree::Off);
    let it = &r.journeys[0];
    assert_eq!(
        (it.legs[0].trip_id.as_deref(), it.depart.as_str(), it.depart_s, it.arrive.as_str()),
        (Some("EARLY"), "00:00", 3600, "00:20")
    );
}

#[test]
fn noon_minus_twelve_hours_on_the_autumn_clock_change() {
    let cet: chrono_tz::Tz = "CET".parse().expect("CET is in the tz database");
    let d = date(2026, 10, 25);
    // Recalled from memory (tz database, EU rules): on 2026-10-25 clocks go back from 03:00 CEST
    // to 02:00 CET at 01:00 UTC. Noon is 12:00 CET = 11:00 UTC, so the origin ("noon minus 12h",
    // GTFS Schedule reference) is 2026-10-24 23:00 UTC = 01:00 CEST on the 25th.
    assert_eq!(day_origin(cet, d), Utc.with_ymd_and_hms(2026, 10, 24, 23, 0, 0).unwrap());
    assert_eq!(clock_to_seconds(cet, d, 12, 0), Some(12 * 3600));
    assert_eq!(seconds_to_clock(cet, d, 0), "01:00");
    // 08:00 CET = 07:00 UTC = origin + 8 h.
    assert_eq!(clock_to_seconds(cet, d, 8, 0), Some(8 * 3600));

    let mut engine = dst_feed().load();
    // A stop_time of 01:00:00 is origin + 1 h = 00:00 UTC = 02:00 CEST.
    let r = plan(&mut engine, &query("A", "B", "2026-10-25", "01:30"), StepFree::Off);
    let it = &r.journeys[0];
    assert_eq!((it.legs[0].trip_id.as_deref(), it.depart.as_str(), it.depart_s), (Some("EARLY"), "02:00", 3600));
    let r = plan(&mut engine, &query("A", "B", "2026-10-25", "07:00"), StepFree::Off);
    assert_eq!(departures(&r).first().map(String::as_str), Some("08:00"));
}

// ---------------------------------------------------------------------------------------------
// calendar.txt and calendar_dates.txt

#[test]
fn calendar_dates_add_and_remove_single_dates() {
    let mut engine = Feed::new("Etc/GMT-1")
        .one_route()
        .file("stops.txt", TWO_STOPS)
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
            WK,1,1,1,1,1,0,0,20260601,20260630",
        )
        .file(
            "calendar_dates.txt",
            "service_id,date,exception_type
            WK,20260606,1
            WK,20260610,2",
        )
        .file("trips.txt", "route_id,service_id,trip_id\nR,WK,T")
        .file(
            "stop_times.txt",
            "trip_id,arrival_time,departure_time,stop_id,stop_sequence
            T,09:00:00,09:00:00,A,1
            T,09:20:00,09:20:00,B,2",
        )
        .load();
    let runs = |engine: &mut timeweave::Engine, d: &str| !plan(engine, &query("A", "B", d, "08:00"), StepFree::Off).journeys.is_empty();
    // GTFS Schedule reference, calendar.txt: the weekly pattern applies from start_date to
    // end_date, and of end_date: "This service day is included in the interval".
    assert!(runs(&mut engine, "2026-06-01"), "start_date (a Monday) is included");
    assert!(runs(&mut engine, "2026-06-08"), "an ordinary Monday");
    assert!(runs(&mut engine, "2026-06-30"), "end_date (a Tuesday) is included");
    assert!(!runs(&mut engine, "2026-06-13"), "an ordinary Saturday");
    // GTFS Schedule reference, calendar_dates.txt: exception_type 1 "service has been added for the
    // specified date", 2 "service has been removed for the specified date".
    assert!(runs(&mut engine, "2026-06-06"), "Saturday added by exception_type 1");
    assert!(!runs(&mut engine, "2026-06-10"), "Wednesday removed by exception_type 2");
    let r = plan(&mut engine, &query("A", "B", "2026-06-10", "08:00"), StepFree::Off);
    assert!(matches!(r.nothing_found, Some(NoJourney::NoServiceOnDate { .. })), "{r:?}");
}

// ---------------------------------------------------------------------------------------------
// frequencies.txt

fn frequency_feed() -> Feed {
    Feed::new("Etc/GMT-1")
        .one_route()
        .file(
            "stops.txt",
            "stop_id,stop_name,stop_lat,stop_lon
            A,Alder Quay,52.00,13.00
            B,Birch Row,52.05,13.00
            C,Cedar Steps,52.10,13.00
            D,Dogwood Lane,52.15,13.00",
        )
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
            ALL,1,1,1,1,1,1,1,20260101,20261231",
        )
        .file(
            "trips.txt",
            "route_id,service_id,trip_id
            R,ALL,EXACT
            R,ALL,HEADWAY",
        )
        // The EXACT template's absolute times (10:00) are deliberately outside its window.
        .file(
            "stop_times.txt",
            "trip_id,arrival_time,departure_time,stop_id,stop_sequence
            EXACT,10:00:00,10:00:00,A,1
            EXACT,10:12:00,10:12:00,B,2
            HEADWAY,06:00:00,06:00:00,C,1
            HEADWAY,06:15:00,06:15:00,D,2",
        )
        .file(
            "frequencies.txt",
            "trip_id,start_time,end_time,headway_secs,exact_times
            EXACT,06:00:00,08:00:00,1800,1
            HEADWAY,06:00:00,07:00:00,900,0",
        )
}

#[test]
fn frequencies_with_exact_times_run_at_start_plus_k_headways_before_end() {
    let mut engine = frequency_feed().load();
    let mut q = query("A", "B", "2026-06-10", "05:30");
    q.next = Some(10);
    let r = plan(&mut engine, &q, StepFree::Off);
    // GTFS Schedule reference, frequencies.txt, exact_times=1: trips start at
    // start_time + x·headway_secs for x = 0, 1, 2, … while that start is before end_time, so
    // 06:00–08:00 every 1800 s gives 06:00, 06:30, 07:00, 07:30 (not 08:00).
    assert_eq!(departures(&r), ["06:00", "06:30", "07:00", "07:30"]);
    // GTFS Schedule reference, frequencies.txt: for such trips stop_times.txt gives only the
    // time differences between stops (12 min here), not absolute times.
    let arrivals: Vec<&str> = r.journeys.iter().map(|i| i.arrive.as_str()).collect();
    assert_eq!(arrivals, ["06:12", "06:42", "07:12", "07:42"]);
    // exact_times=1 is "schedule-based" (GTFS Schedule reference), so not flagged as estimates.
    assert!(r.journeys.iter().all(|i| i.legs.iter().all(|l| !l.frequency_based)), "{r:?}");
}

#[test]
fn headway_based_frequencies_are_expanded_and_flagged() {
    let mut engine = frequency_feed().load();
    let mut q = query("C", "D", "2026-06-10", "05:30");
    q.next = Some(10);
    let r = plan(&mut engine, &q, StepFree::Off);
    let deps: Vec<u32> = r.journeys.iter().map(|i| i.depart_s).collect();
    assert!(!deps.is_empty(), "{r:?}");
    // GTFS Schedule reference, frequencies.txt: headway_secs is the "time between departures from
    // the same stop" during the interval from start_time to end_time (06:00–07:00).
    assert!(deps.iter().all(|&d| (6 * 3600..7 * 3600).contains(&d)), "{deps:?}");
    assert!(deps.windows(2).all(|w| w[1] - w[0] == 900), "{deps:?}");
    assert_eq!(deps.len(), 4, "one hour at a 900 s headway");
    // GTFS Schedule reference, frequencies.txt: exact_times=0 means "frequency-based trips", whose
    // times are not exactly scheduled, and the result says so on each ride leg.
    for it in &r.journeys {
        let ride = it.legs.iter().find(|l| l.kind == LegKind::Ride).expect("a ride leg");
        assert!(ride.frequency_based, "{ride:?}");
        assert_eq!(ride.duration_s, 15 * 60);
    }
}

// ---------------------------------------------------------------------------------------------
// wheelchair_boarding and parent stations

fn wheelchair_feed() -> Feed {
    Feed::new("Etc/GMT-1")
        .one_route()
        .file(
            "stops.txt",
            "stop_id,stop_name,stop_lat,stop_lon,location_type,parent_station,wheelchair_boarding
            ST_Y,Yarrow Station,52.00,13.00,1,,1
            P_Y,Yarrow Station platform,52.00,13.00,0,ST_Y,
            ST_N,Nettle Station,52.05,13.00,1,,2
            P_N,Nettle Station platform,52.05,13.00,0,ST_N,
            ST_H,Heron Station,52.10,13.00,1,,1
            P_H1,Heron Station platform 1,52.10,13.00,0,ST_H,2
            P_H2,Heron Station platform 2,52.1003,13.00,0,ST_H,
            U,Umber Corner,52.15,13.00,0,,0
            X,Xylem Park,52.20,13.00,0,,1",
        )
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
            ALL,1,1,1,1,1,1,1,20260101,20261231",
        )
        .file(
            "trips.txt",
            "route_id,service_id,trip_id,wheelchair_accessible
            R,ALL,TY,1
            R,ALL,TN,1
            R,ALL,TH1,1
            R,ALL,TH2,1
            R,ALL,TU,1",
        )
        .file(
            "stop_times.txt",
            "trip_id,arrival_time,departure_time,stop_id,stop_sequence
            TY,08:10:00,08:10:00,P_Y,1
            TY,08:30:00,08:30:00,X,2
            TN,08:10:00,08:10:00,P_N,1
            TN,08:30:00,08:30:00,X,2
            TH1,08:05:00,08:05:00,P_H1,1
            TH1,08:25:00,08:25:00,X,2
            TH2,08:35:00,08:35:00,P_H2,1
            TH2,08:55:00,08:55:00,X,2
            TU,08:10:00,08:10:00,U,1
            TU,08:30:00,08:30:00,X,2",
        )
}

#[test]
fn child_platforms_inherit_wheelchair_boarding_from_their_station() {
    let engine = wheelchair_feed().load();
    let stop = |id: &str| engine.tt.stops.iter().find(|s| s.id == id).expect("stop loaded");
    // GTFS Schedule reference, stops.txt wheelchair_boarding, child stops: "0 or empty - Stop will
    // inherit its wheelchair_boarding behavior from the parent station, if specified in the parent."
    assert_eq!((stop("P_Y").wheelchair, stop("P_Y").wheelchair_inherited), (Access::Yes, true));
    assert_eq!((stop("P_N").wheelchair, stop("P_N").wheelchair_inherited), (Access::No, true));
    assert_eq!((stop("P_H2").wheelchair, stop("P_H2").wheelchair_inherited), (Access::Yes, true));
    // A child's own value 2 ("there exists no accessible path … to the specific stop/platform")
    // is kept even though its station says 1.
    assert_eq!((stop("P_H1").wheelchair, stop("P_H1").wheelchair_inherited), (Access::No, false));
    // Parentless stop, 0: "No accessibility information for the stop".
    assert_eq!(stop("U").wheelchair, Access::Unknown);
}

#[test]
fn step_free_planning_follows_inherited_and_own_wheelchair_boarding() {
    let mut engine = wheelchair_feed().load();
    // Inherited 1 (GTFS Schedule reference, see above): a strict step-free journey exists.
    let r = plan(&mut engine, &query("ST_Y", "X", "2026-06-10", "08:00"), StepFree::Strict);
    let it = r.journeys.first().unwrap_or_else(|| panic!("{r:?}"));
    assert_eq!((it.step_free, it.legs[0].trip_id.as_deref()), (Access::Yes, Some("TY")));
    assert!(
        it.legs[0].step_free.checks.iter().any(|c| matches!(&c.fact, Fact::Stop { inherited_from: Some(_), .. })),
        "{:?}",
        it.legs[0].step_free
    );

    // Inherited 2: no step-free journey, strict or lenient; the standard one exists and is named.
    for sf in [StepFree::Strict, StepFree::Lenient] {
        let r = plan(&mut engine, &query("ST_N", "X", "2026-06-10", "08:00"), sf);
        assert!(r.journeys.is_empty(), "{sf:?}: {r:?}");
        let why = r.nothing_found.as_ref().expect("a reason");
        let NoJourney::NoStepFreePath { blocked_by, .. } = why else { panic!("{why:?}") };
        assert!(
            blocked_by.iter().flat_map(|b| &b.checks).any(|c| matches!(&c.fact, Fact::Stop { stop_id, .. } if stop_id == "P_N")),
            "{why:?}"
        );
    }
    assert!(!plan(&mut engine, &query("ST_N", "X", "2026-06-10", "08:00"), StepFree::Off).journeys.is_empty());

    // A platform's own 2 blocks its trip; the station's other platform (inherited 1) is used.
    let std = plan(&mut engine, &query("ST_H", "X", "2026-06-10", "08:00"), StepFree::Off);
    assert_eq!(std.journeys[0].legs.iter().find_map(|l| l.trip_id.as_deref()), Some("TH1"));
    let sf = plan(&mut engine, &query("ST_H", "X", "2026-06-10", "08:00"), StepFree::Strict);
    let it = sf.journeys.first().unwrap_or_else(|| panic!("{sf:?}"));
    assert_eq!(it.legs.iter().find_map(|l| l.trip_id.as_deref()), Some("TH2"));
    assert_eq!(it.arrive, "08:55");
    // 08:55 − 08:25: the step-free first option's arrival minus the standard one's (DEVELOPERS.md).
    assert_eq!(sf.step_free_extra_s, Some(30 * 60));

    // GTFS Schedule reference: 0 = no information. Strict mode accepts only 1; lenient mode also
    // accepts unknown and flags it (the engine's documented modes, search::StepFree).
    let strict = plan(&mut engine, &query("U", "X", "2026-06-10", "08:00"), StepFree::Strict);
    assert!(strict.journeys.is_empty(), "{strict:?}");
    assert!(matches!(strict.nothing_found, Some(NoJourney::NoStepFreePath { .. })), "{strict:?}");
    let lenient = plan(&mut engine, &query("U", "X", "2026-06-10", "08:00"), StepFree::Lenient);
    let it = lenient.journeys.first().unwrap_or_else(|| panic!("{lenient:?}"));
    assert_eq!(it.step_free, Access::Unknown);
    assert!(lenient.notes.contains(&Note::LenientUnknownUsed), "lenient results that rely on unknown elements carry a note");
}

// ---------------------------------------------------------------------------------------------
// transfers.txt

/// O → A by R1, then on from A itself, or after a walk to B (100 m) or F (445 m).
fn transfer_feed(trips: &[&str], transfers: Option<&str>) -> Feed {
    let all = [
        ("R1", "O,08:00:00", "A,08:10:00"),
        ("R2", "B,08:13:00", "D,08:40:00"),
        ("R2B", "B,08:25:00", "D,08:50:00"),
        ("R3", "A,09:00:00", "D,09:30:00"),
        ("R4", "A,08:12:00", "D,08:45:00"),
        ("R5", "A,08:25:00", "D,08:55:00"),
        ("R6", "F,08:15:00", "D,08:45:00"),
        ("R7", "F,08:30:00", "D,09:00:00"),
        ("R8", "B,08:11:30", "D,08:35:00"),
    ];
    let mut trip_rows = String::from("route_id,service_id,trip_id\n");
    let mut times = String::from("trip_id,stop_id,arrival_time,departure_time,stop_sequence\n");
    for (id, from, to) in all.iter().filter(|t| trips.contains(&t.0)) {
        trip_rows += &format!("R,ALL,{id}\n");
        for (seq, st) in [from, to].iter().enumerate() {
            let (stop, t) = st.split_once(',').expect("stop,time");
            times += &format!("{id},{stop},{t},{t},{}\n", seq + 1);
        }
    }
    let feed = Feed::new("Etc/GMT-1")
        .one_route()
        // A and B are 100 m apart (0.0009° of latitude), F 445 m from A; O and D are far from
        // everything.
        .file(
            "stops.txt",
            "stop_id,stop_name,stop_lat,stop_lon
            O,Osier Gate,52.30,13.00
            A,Aspen Yard,52.00,13.00
            B,Beech Yard,52.0009,13.00
            F,Fir Yard,52.0040,13.00
            D,Damson Hill,52.10,13.00",
        )
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
            ALL,1,1,1,1,1,1,1,20260101,20261231",
        )
        .file("trips.txt", &trip_rows)
        .file("stop_times.txt", &times);
    match transfers {
        Some(t) => feed.file("transfers.txt", &format!("from_stop_id,to_stop_id,transfer_type,min_transfer_time\n{t}")),
        None => feed,
    }
}

fn arrival(feed: Feed) -> (String, timeweave::journey::Itinerary) {
    let mut engine = feed.load();
    let r = plan(&mut engine, &query("O", "D", "2026-06-10", "07:55"), StepFree::Off);
    let it = r.journeys.first().unwrap_or_else(|| panic!("no journey: {r:?}")).clone();
    (it.arrive.clone(), it)
}

fn walks_between(it: &timeweave::journey::Itinerary, a: &str, b: &str) -> bool {
    it.legs.iter().any(|l| l.kind != LegKind::Ride && l.start.stop_id == a && l.end.stop_id == b)
}

#[test]
fn transfer_type_3_between_two_stops_forbids_that_walk() {
    let trips = ["R1", "R2", "R3"];
    // Control: without transfers.txt the 100 m walk A → B catches R2 at 08:13.
    let (arr, it) = arrival(transfer_feed(&trips, None));
    assert_eq!(arr, "08:40");
    assert!(walks_between(&it, "A", "B"), "{it:?}");
    // GTFS Schedule reference, transfers.txt transfer_type 3: "Transfers are not possible between
    // routes at the location", here from stop A to stop B; the journey waits for R3 at A instead.
    let (arr, it) = arrival(transfer_feed(&trips, Some("A,B,3,")));
    assert_eq!(arr, "09:30");
    assert!(!walks_between(&it, "A", "B"), "{it:?}");
    // GTFS Schedule reference, transfers.txt: the rule runs from from_stop_id to to_stop_id, so a
    // rule B → A leaves A → B alone.
    let (arr, _) = arrival(transfer_feed(&trips, Some("B,A,3,")));
    assert_eq!(arr, "08:40");
    // Without the alternative there is no journey at all.
    let mut engine = transfer_feed(&["R1", "R2"], Some("A,B,3,")).load();
    let r = plan(&mut engine, &query("O", "D", "2026-06-10", "07:55"), StepFree::Off);
    assert!(r.journeys.is_empty(), "{r:?}");
}

#[test]
fn transfer_type_2_min_transfer_time_at_one_stop_is_respected() {
    // From_stop_id = to_stop_id: the default change time is 60 s (Params::default().min_transfer_s,
    // common practice, no source), so R4 at 08:12 is caught after arriving at 08:10.
    let trips = ["R1", "R4", "R5"];
    assert_eq!(arrival(transfer_feed(&trips, None)).0, "08:45");
    // GTFS Schedule reference, transfers.txt transfer_type 2: "requires a minimum amount of time
    // between arrival and departure", given by min_transfer_time: with 600 s at A, R4 at 08:12 is
    // missed and R5 at 08:25 is the first.
    assert_eq!(arrival(transfer_feed(&trips, Some("A,A,2,600"))).0, "08:55");
}

#[test]
fn transfer_type_2_between_stops_beyond_walking_range_gives_a_link_of_at_least_its_time() {
    // F is 445 m from A, beyond the 400 m street-link radius: without a rule there is no walk A → F
    // and the journey waits for R3 at A.
    let trips = ["R1", "R3", "R6", "R7"];
    assert_eq!(arrival(transfer_feed(&trips, None)).0, "09:30");
    // GTFS Schedule reference, transfers.txt transfer_type 2: the transfer is possible and needs
    // min_transfer_time (600 s, more than the 445 s walk): 08:10 + 600 s = 08:20, so R6 at 08:15 is
    // missed and R7 at 08:30 is taken.
    let (arr, it) = arrival(transfer_feed(&trips, Some("A,F,2,600")));
    assert_eq!(arr, "09:00");
    let walk = it.legs.iter().find(|l| l.kind != LegKind::Ride).expect("a walk A → F");
    assert_eq!((walk.start.stop_id.as_str(), walk.end.stop_id.as_str(), walk.duration_s), ("A", "F", 600), "{walk:?}");
}

/// Engine bug found by this test: the walking closure counts a rule's min_transfer_time as walking
/// metres (× 1.3 m/s) and drops links longer than WalkConfig::max_link_m (1500 m), so a
/// transfers.txt rule `A,F,2,900` (445 m apart: 578 m + 900 s × 1.3 = 1748 "m") silently
/// disappears. Expected (GTFS Schedule reference, transfer_type 2: the transfer is possible after
/// min_transfer_time): at F 08:25, R7 08:30, arrival 09:00. Actual: no link, R3, 09:30.
#[test]
fn transfer_type_2_with_a_long_min_transfer_time_keeps_its_link() {
    let trips = ["R1", "R3", "R6", "R7"];
    // GTFS Schedule reference, transfers.txt transfer_type 2 (as above), min_transfer_time 900 s.
    let (arr, it) = arrival(transfer_feed(&trips, Some("A,F,2,900")));
    assert_eq!(arr, "09:00", "{it:?}");
}

/// Engine bug found by this test: a transfer_type 2 rule between two stops that are also within
/// the street-link radius is ignored, because the walking closure keeps the cheaper plain street
/// segment (min_s 0) next to the rule's link (min_s = min_transfer_time). Input: A and B 100 m
/// apart, transfers.txt `A,B,2,600`. Expected (GTFS Schedule reference, transfer_type 2): the walk
/// A → B takes at least 600 s, so R2 at 08:13 is missed and R2B at 08:25 arrives 08:50. Actual:
/// the 101 s street walk, R2, 08:40. The demo city's rules (Lantern Square 180 s, Tram Place
/// 120 s, …) are affected the same way.
#[test]
fn transfer_type_2_min_transfer_time_between_nearby_stops_is_respected() {
    let trips = ["R1", "R2", "R2B", "R3"];
    // Control: the 100 m walk (about 101 s: 130 m at 1.3 m/s) catches R2 at 08:13.
    assert_eq!(arrival(transfer_feed(&trips, None)).0, "08:40");
    let engine = transfer_feed(&trips, Some("A,B,2,600")).load();
    let idx = |id: &str| timeweave::timetable::StopIdx(engine.tt.stops.iter().position(|s| s.id == id).expect("stop") as u32);
    let link = engine.tt.walk(timeweave::timetable::WalkProfile::Standard).between(idx("A"), idx("B")).copied();
    // GTFS Schedule reference, transfers.txt transfer_type 2: "requires a minimum amount of time
    // between arrival and departure", here min_transfer_time 600 s.
    assert!(link.is_some_and(|f| f.duration_s(1.3) >= 600), "{link:?}");
    let (arr, it) = arrival(transfer_feed(&trips, Some("A,B,2,600")));
    assert_eq!(arr, "08:50", "{it:?}");
    let walk = it.legs.iter().find(|l| l.kind != LegKind::Ride).expect("a walk A → B");
    assert!(walk.duration_s >= 600, "{walk:?}");
}

/// The feed's time wins over our estimate (issue: at two interchanges of a real feed, the walk
/// estimate beat the operator's shorter `min_transfer_time` and the journey arrived minutes late).
/// A and B are 100 m apart: our estimate is 130 m of street at 1.3 m/s, 100 s, so R1 (A 08:10)
/// misses R8 (B 08:11:30) and takes R2 (08:40). With `A,B,2,60` the change takes the feed's 60 s.
#[test]
fn transfer_type_2_min_transfer_time_is_the_change_time_not_a_floor_under_our_estimate() {
    let trips = ["R1", "R2", "R8"];
    assert_eq!(arrival(transfer_feed(&trips, None)).0, "08:40", "control: the 100 s estimate misses R8");
    // GTFS Schedule reference, transfers.txt: min_transfer_time is the time a typical rider needs
    // to move between the two stops, buffer included (wording recalled from memory): 60 s here.
    let (arr, it) = arrival(transfer_feed(&trips, Some("A,B,2,60")));
    assert_eq!(arr, "08:35", "{it:?}");
    let walk = it.legs.iter().find(|l| l.kind != LegKind::Ride).expect("a change A → B");
    assert_eq!(walk.duration_s, 60, "{walk:?}");

    // Slower riders (our rule, DEVELOPERS.md): the feed's time scaled by 1.3 m/s ÷ their speed;
    // on the step-free path, the larger of that and our estimate along it.
    let engine = transfer_feed(&trips, Some("A,B,2,60")).load();
    let idx = |id: &str| timeweave::timetable::StopIdx(engine.tt.stops.iter().position(|s| s.id == id).expect("stop") as u32);
    let link = |profile| engine.tt.walk(profile).between(idx("A"), idx("B")).copied().expect("a link A → B");
    let standard = link(timeweave::timetable::WalkProfile::Standard);
    assert_eq!(standard.duration_s(1.3), 60);
    assert_eq!(standard.duration_s(2.0), 60, "a faster walker is not given less than the operator states");
    assert_eq!(standard.duration_s(0.8), 98, "60 s × 1.3 / 0.8 = 97.5, rounded up");
    let step_free = link(timeweave::timetable::WalkProfile::StepFreeLenient);
    let estimate = (standard.length_m as f64 / 0.8).ceil() as u32;
    assert!(estimate > 98, "{estimate}");
    assert_eq!(step_free.duration_s(0.8), estimate, "the step-free path keeps our estimate when it is longer");
}

// ---------------------------------------------------------------------------------------------
// pickup_type and drop_off_type

#[test]
fn pickup_type_and_drop_off_type_1_are_respected() {
    let mut engine = Feed::new("Etc/GMT-1")
        .one_route()
        .file(
            "stops.txt",
            "stop_id,stop_name,stop_lat,stop_lon
            O,Orchard End,52.00,13.00
            M,Medlar Cross,52.05,13.00
            D,Dunlin Fields,52.10,13.00",
        )
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
            ALL,1,1,1,1,1,1,1,20260101,20261231",
        )
        .file("trips.txt", "route_id,service_id,trip_id\nR,ALL,P1\nR,ALL,P2")
        .file(
            "stop_times.txt",
            "trip_id,arrival_time,departure_time,stop_id,stop_sequence,pickup_type,drop_off_type
            P1,08:00:00,08:00:00,O,1,0,0
            P1,08:10:00,08:10:00,M,2,1,1
            P1,08:20:00,08:20:00,D,3,0,0
            P2,09:00:00,09:00:00,O,1,0,0
            P2,09:10:00,09:10:00,M,2,0,0
            P2,09:20:00,09:20:00,D,3,0,0",
        )
        .load();
    let first = |engine: &mut timeweave::Engine, from: &str, to: &str| {
        let r = plan(engine, &query(from, to, "2026-06-10", "07:50"), StepFree::Off);
        let it = r.journeys.first().unwrap_or_else(|| panic!("{r:?}"));
        (it.legs[0].trip_id.clone().unwrap_or_default(), it.depart.clone(), it.arrive.clone())
    };
    // GTFS Schedule reference, stop_times.txt pickup_type 1: "No pickup available" at M on P1.
    assert_eq!(first(&mut engine, "M", "D"), ("P2".into(), "09:10".into(), "09:20".into()));
    // GTFS Schedule reference, stop_times.txt drop_off_type 1: "No drop off available" at M on P1.
    assert_eq!(first(&mut engine, "O", "M"), ("P2".into(), "09:00".into(), "09:10".into()));
    // Riding through M is unaffected.
    assert_eq!(first(&mut engine, "O", "D"), ("P1".into(), "08:00".into(), "08:20".into()));
}

// ---------------------------------------------------------------------------------------------
// Changes at the same instant

/// A ride of no duration into a timed transfer: the connecting trip leaves the very second the
/// first one arrives, and is listed first, so a sweep in order of departure reads it before the
/// ride that reaches it.
fn same_instant_feed() -> Feed {
    Feed::new("Etc/GMT-1")
        .one_route()
        .file(
            "stops.txt",
            "stop_id,stop_name,stop_lat,stop_lon
            A,Alder Quay,52.00,13.00
            B,Birch Row,52.05,13.00
            C,Cedar Gate,52.10,13.00",
        )
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
            MON,1,0,0,0,0,0,0,20260601,20260630",
        )
        .file(
            "trips.txt",
            "route_id,service_id,trip_id
            R,MON,ONWARD
            R,MON,FEEDER",
        )
        .file(
            "stop_times.txt",
            "trip_id,arrival_time,departure_time,stop_id,stop_sequence
            ONWARD,8:00:00,8:00:00,B,1
            ONWARD,8:10:00,8:10:00,C,2
            FEEDER,8:00:00,8:00:00,A,1
            FEEDER,8:00:00,8:00:00,B,2",
        )
        .file("transfers.txt", "from_stop_id,to_stop_id,transfer_type\nB,B,1")
}

#[test]
fn a_timed_transfer_at_the_same_instant_is_reached_by_the_one_to_all_sweep() {
    let mut engine = same_instant_feed().load();
    // GTFS Schedule reference, transfers.txt transfer_type 1: "Timed transfer point between two
    // routes. The departing vehicle is expected to wait for the arriving one and leave sufficient
    // time for a rider to transfer between routes." So C is reached at 08:10 via FEEDER, ONWARD.
    let r = plan(&mut engine, &query("A", "C", "2026-06-01", "07:55"), StepFree::Off);
    assert_eq!(r.journeys.first().map(|it| it.arrive.as_str()), Some("08:10"), "{r:?}");
    let reach = engine.reach("A", "2026-06-01", "07:55", StepFree::Off, 60).expect("reach");
    let at = |id: &str| reach.iter().find(|x| x.stop_id == id).map(|x| x.minutes);
    assert_eq!((at("B"), at("C")), (Some(5), Some(15)), "{reach:?}");
    // The compact form gives the same minutes, per stop in the order of `stop_ids`.
    let minutes = engine.reach_minutes("A", "2026-06-01", "07:55", StepFree::Off, 60).expect("reach_minutes");
    let ids = engine.stop_ids();
    let compact = |id: &str| ids.iter().position(|s| s == id).map(|i| minutes[i]);
    assert_eq!((compact("A"), compact("B"), compact("C")), (Some(0), Some(5), Some(15)));
}

// ---------------------------------------------------------------------------------------------
// Row order of stop_times.txt

/// GTFS Schedule reference, stop_times.txt stop_sequence: "The values must increase along the
/// trip but do not need to be consecutive." The reference sets no order for the file's rows, so
/// the same rows in any order must give the same timetable, and each bad row one warning.
#[test]
fn stop_times_rows_in_any_order_give_the_same_journeys_and_warnings() {
    // (trip, stop, time, stop_sequence). T1's row 20 comes twice (a repeated line: the second is
    // skipped with a warning), and the row at stop Z names no stop (skipped with a warning).
    let rows = [
        ("T1", "A", "08:00:00", 10),
        ("T1", "B", "08:10:00", 20),
        ("T1", "B", "08:10:00", 20),
        ("T1", "C", "08:20:00", 30),
        ("T2", "A", "08:05:00", 5),
        ("T2", "Z", "08:07:00", 6),
        ("T2", "C", "08:15:00", 7),
        ("T3", "B", "08:30:00", 1),
        ("T3", "C", "08:40:00", 2),
    ];
    let feed = |order: &[usize]| {
        let mut times = String::from("trip_id,stop_id,arrival_time,departure_time,stop_sequence\n");
        for &i in order {
            let (trip, stop, t, seq) = rows[i];
            times += &format!("{trip},{stop},{t},{t},{seq}\n");
        }
        Feed::new("Etc/GMT-1")
            .one_route()
            .file(
                "stops.txt",
                "stop_id,stop_name,stop_lat,stop_lon
                A,Alder Quay,52.00,13.00
                B,Birch Row,52.05,13.00
                C,Cedar End,52.10,13.00",
            )
            .file(
                "calendar.txt",
                "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
                ALL,1,1,1,1,1,1,1,20260101,20261231",
            )
            .file(
                "trips.txt",
                "route_id,service_id,trip_id
                R,ALL,T1
                R,ALL,T2
                R,ALL,T3",
            )
            .file("stop_times.txt", &times)
    };
    let answer = |order: &[usize]| {
        let dir = feed(order).write_dir();
        let mut engine = timeweave::engine::Engine::new();
        let meta = timeweave_disk::load_feed(&mut engine, dir.path(), &mut |_, _| {}).unwrap_or_else(|e| panic!("{order:?}: {e}"));
        let mut warnings: Vec<String> = meta.warnings.issues.iter().map(|w| w.message.clone()).collect();
        warnings.sort();
        // The warning names the file's line of the row at Z (line 1 is the header).
        let z_line = order.iter().position(|&i| i == 5).map(|p| p as u64 + 2);
        let stop_warning = meta.warnings.issues.iter().find(|w| w.field.as_deref() == Some("stop_id")).map(|w| w.line);
        assert_eq!(stop_warning, Some(z_line), "{order:?}: {:?}", meta.warnings.issues);
        let journeys: Vec<Vec<String>> = [("A", "C", "07:55"), ("B", "C", "08:01"), ("A", "B", "07:55")]
            .iter()
            .map(|(f, t, at)| departures_and_arrivals(&plan(&mut engine, &query(f, t, "2026-06-10", at), StepFree::Off)))
            .collect();
        (journeys, warnings)
    };
    let in_order: Vec<usize> = (0..rows.len()).collect();
    let expected = answer(&in_order);
    // T2 (08:05, arriving 08:15) is the fastest A → C; B → C after 08:01 is T1's 08:10; A → B
    // only T1.
    assert_eq!(expected.0[0].first().map(String::as_str), Some("08:05-08:15"), "{expected:?}");
    assert_eq!(expected.0[1].first().map(String::as_str), Some("08:10-08:20"), "{expected:?}");
    assert_eq!(expected.0[2].first().map(String::as_str), Some("08:00-08:10"), "{expected:?}");
    assert_eq!(expected.1.len(), 2, "one warning per bad row: {:?}", expected.1);
    // Each trip's rows together but backwards, the trips in another order, and rows of
    // different trips interleaved.
    let layouts: [&[usize]; 3] = [&[3, 2, 1, 0, 6, 5, 4, 8, 7], &[7, 8, 4, 5, 6, 0, 1, 2, 3], &[0, 4, 7, 1, 5, 8, 2, 6, 3]];
    for order in layouts {
        assert_eq!(answer(order), expected, "rows in the order {order:?}");
    }
}

fn departures_and_arrivals(r: &timeweave::engine::PlanResult) -> Vec<String> {
    r.journeys.iter().map(|i| format!("{}-{}", i.depart, i.arrive)).collect()
}

// ---------------------------------------------------------------------------------------------
// Two versions of one feed

fn versioned_feed(agency: &str, version: &str, trip: &str) -> Feed {
    Feed::default()
        .file("agency.txt", &format!("agency_id,agency_name,agency_url,agency_timezone\nTA,{agency},https://transit.example/,Etc/GMT-1\n"))
        .one_route()
        .file(
            "stops.txt",
            "stop_id,stop_name,stop_lat,stop_lon
            A,Alder Quay,52.00,13.00
            B,Birch Row,52.05,13.00",
        )
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
            WKD,1,1,1,1,1,1,1,20260101,20261231",
        )
        .file("trips.txt", &format!("route_id,service_id,trip_id\nR,WKD,{trip}\n"))
        .file(
            "stop_times.txt",
            &format!(
                "trip_id,stop_id,arrival_time,departure_time,stop_sequence\n{trip},A,08:00:00,08:00:00,1\n{trip},B,08:20:00,08:20:00,2\n"
            ),
        )
        .file(
            "feed_info.txt",
            &format!(
                "feed_publisher_name,feed_publisher_url,feed_lang,feed_version\nTest Publisher,https://transit.example/,en,{version}\n"
            ),
        )
}

/// Two versions of one agency's feed (this week's and next month's zip) would double the service
/// if merged. The GTFS Schedule reference: trip_id identifies a trip and feed_info.txt's
/// feed_version identifies the dataset's version, so the same agency with the same trip_ids, or
/// the same publisher and version, is the same feed. Refused with a message naming both files;
/// the feed loaded first keeps answering. Feeds of one publisher that only share service ids load.
#[test]
fn a_second_version_of_a_loaded_feed_is_refused() {
    let mut engine = timeweave::Engine::new();
    engine.load_zip("week-49", &versioned_feed("Test Transit", "2026.49", "T1").zip(), &mut |_, _| {}).expect("first version");
    // Same agency, same trip_id, other feed_version.
    let err = engine.load_zip("week-53", &versioned_feed("Test Transit", "2026.53", "T1").zip(), &mut |_, _| {}).expect_err("refused");
    let msg = err.to_string();
    assert!(msg.contains("week-53") && msg.contains("week-49") && msg.contains("T1"), "{msg}");
    assert_eq!((err.0.file.as_deref(), err.0.field.as_deref()), (Some("trips.txt"), Some("trip_id")));
    // Same publisher and feed_version, even with other agency and trips.
    let err = engine.load_zip("copy", &versioned_feed("Other Transit", "2026.49", "X9").zip(), &mut |_, _| {}).expect_err("refused");
    assert_eq!(err.0.file.as_deref(), Some("feed_info.txt"), "{err}");
    assert_eq!(engine.tt.feeds.len(), 1, "nothing was appended");
    assert_eq!(plan(&mut engine, &query("A", "B", "2026-06-10", "07:55"), StepFree::Off).journeys.len(), 1, "the first feed still answers");
    // Another agency of the same publisher, sharing only the service id WKD: a different feed.
    engine.load_zip("rail", &versioned_feed("Other Transit", "2026.49-rail", "R9").zip(), &mut |_, _| {}).expect("a different feed loads");
    assert_eq!(engine.tt.feeds.len(), 2);
}

/// A journey that exists must be found: with the only trip five hours after the query, the plan
/// shows that journey with the note `beyond_max_duration` instead of hiding it; a longer
/// `max_duration_s` makes it an ordinary answer. (The 4 h default is common practice, no source.)
#[test]
fn a_journey_beyond_the_longest_duration_is_shown_with_a_note() {
    let mut engine = versioned_feed("Test Transit", "1", "T1").load();
    let r = plan(&mut engine, &query("A", "B", "2026-06-10", "03:00"), StepFree::Off);
    assert_eq!(r.journeys.len(), 1, "{r:?}");
    assert_eq!((r.journeys[0].depart.as_str(), r.journeys[0].arrive.as_str()), ("08:00", "08:20"));
    assert!(r.nothing_found.is_none());
    assert_eq!(r.notes, vec![Note::BeyondMaxDuration { max_duration_s: 4 * 3600, duration_s: 5 * 3600 + 20 * 60 }]);
    let longer = PlanQuery { max_duration_s: Some(6 * 3600), ..query("A", "B", "2026-06-10", "03:00") };
    let r = plan(&mut engine, &longer, StepFree::Off);
    assert_eq!(r.journeys.len(), 1);
    assert!(r.notes.is_empty(), "{:?}", r.notes);
}

//! The snapshot and the kiosk board through the library API (the CLI: crates/cli/tests/kiosk.rs;
//! the page: tests/browser/kiosk.test.mjs).
//!
//! Sources beside each check:
//! - the GTFS Schedule reference (stop_times.txt: times are measured from "noon minus 12h" of the
//!   service day, which differs from midnight on the days clocks change);
//! - the tz database's rules for zone `CET` (EU rule: summer time from 01:00 UTC on the last
//!   Sunday of March to 01:00 UTC on the last Sunday of October; in 2026, 29 March and 25
//!   October), the times below worked by hand from them;
//! - CRC-32 as in zlib / ISO-HDLC (reflected polynomial 0xEDB88320), written out bit by bit here,
//!   with the catalogue check value CRC-32("123456789") = 0xCBF43926 (recalled from memory).

mod support;

use proptest::prelude::*;
use support::{demo_engine, Feed};
use timeweave::engine::kiosk::{BoardQuery, Coverage};
use timeweave::engine::{Engine, PlanQuery};
use timeweave::error::QueryError;
use timeweave::route::search::StepFree;
use timeweave::timetable::snapshot::{SnapshotError, VERSION};

fn date(s: &str) -> chrono::NaiveDate {
    s.parse().expect("test date")
}

fn demo_snapshot() -> Vec<u8> {
    demo_engine().snapshot_bytes(date("2026-12-01"), date("2026-12-07"), "test").expect("demo dates are in the feeds")
}

fn from_snapshot(bytes: &[u8]) -> Engine {
    let mut engine = Engine::new();
    if let Err(e) = engine.load_snapshot(bytes) {
        panic!("snapshot does not load: {e}");
    }
    engine
}

/// CRC-32 from its definition: reflected, polynomial 0xEDB88320, initial and final XOR all ones.
fn crc32_by_bits(data: &[u8]) -> u32 {
    let mut c = 0xFFFF_FFFFu32;
    for &b in data {
        c ^= b as u32;
        for _ in 0..8 {
            c = if c & 1 == 1 { (c >> 1) ^ 0xEDB8_8320 } else { c >> 1 };
        }
    }
    !c
}

#[test]
fn the_header_carries_signature_version_length_and_the_crc32_of_the_body() {
    assert_eq!(crc32_by_bits(b"123456789"), 0xCBF4_3926, "the bitwise CRC-32 itself (catalogue check value)");
    let snap = demo_snapshot();
    assert_eq!(&snap[0..8], b"TWEAVSNP");
    assert_eq!(u32::from_le_bytes(snap[8..12].try_into().unwrap()), VERSION);
    assert_eq!(u64::from_le_bytes(snap[16..24].try_into().unwrap()), (snap.len() - 24) as u64);
    assert_eq!(u32::from_le_bytes(snap[12..16].try_into().unwrap()), crc32_by_bits(&snap[24..]));
}

/// Every plan from the snapshot equals the plan from the feeds themselves: the same itineraries,
/// leg by leg, standard and step-free, including just after midnight on the first day (the day
/// before's late trips are kept) and late on the day before the last, whose journeys run into it.
/// (A journey late on the last day that would end the next morning is not held: that morning is
/// outside the snapshot.)
#[test]
fn a_snapshot_plans_exactly_as_its_feeds() {
    let mut feeds = demo_engine();
    let mut snap = from_snapshot(&demo_snapshot());
    let places: Vec<String> = feeds.places.stops.iter().map(|&s| feeds.tt.stop(s).id.clone()).collect();
    assert!(places.len() > 40, "{} places", places.len());
    let mut seed = 7u64;
    let mut compared = 0;
    for (day, time) in
        [("2026-12-01", "00:10"), ("2026-12-02", "08:00"), ("2026-12-05", "13:37"), ("2026-12-06", "23:20"), ("2026-12-07", "18:00")]
    {
        for _ in 0..60 {
            let a = (timeweave::analysis::places::splitmix(&mut seed) % places.len() as u64) as usize;
            let b = (timeweave::analysis::places::splitmix(&mut seed) % places.len() as u64) as usize;
            if a == b {
                continue;
            }
            for sf in [StepFree::Off, StepFree::Strict] {
                let q = PlanQuery {
                    from: places[a].clone(),
                    to: places[b].clone(),
                    date: day.into(),
                    time: time.into(),
                    step_free: sf,
                    ..PlanQuery::default()
                };
                let x = serde_json::to_value(feeds.plan(&q).expect("plan from feeds")).unwrap();
                let y = serde_json::to_value(snap.plan(&q).expect("plan from snapshot")).unwrap();
                assert_eq!(x, y, "{q:?}");
                compared += 1;
            }
        }
    }
    assert!(compared > 400, "{compared} plans compared");
}

#[test]
fn a_snapshot_covers_its_dates_only() {
    let mut snap = from_snapshot(&demo_snapshot());
    assert_eq!(snap.tt.date_range(), Some((date("2026-12-01"), date("2026-12-07"))));
    let info = snap.snapshot.clone().expect("snapshot info");
    assert_eq!((info.first, info.last), (date("2026-12-01"), date("2026-12-07")));
    let q =
        PlanQuery { from: "ORR_QSF".into(), to: "ORR_TLM".into(), date: "2026-12-09".into(), time: "08:00".into(), ..PlanQuery::default() };
    let r = snap.plan(&q).expect("a date outside is a result, not an error");
    assert!(r.journeys.is_empty());
    assert!(matches!(r.nothing_found, Some(timeweave::engine::NoJourney::OutsideFeedDates { .. })), "{:?}", r.nothing_found);
    // A Sunday alone holds fewer trips than the feeds (Saturday's late trips run into it), and
    // dates outside the feeds are refused.
    let feeds = demo_engine();
    let sunday = from_snapshot(&feeds.snapshot_bytes(date("2026-12-06"), date("2026-12-06"), "test").unwrap());
    assert!(sunday.tt.trips.len() < feeds.tt.trips.len(), "{} of {}", sunday.tt.trips.len(), feeds.tt.trips.len());
    let err = feeds.snapshot_bytes(date("2027-03-30"), date("2027-04-05"), "test").expect_err("past the feeds' last date");
    assert!(err.to_string().contains("2026-11-01 to 2027-03-31"), "{err}");
    // A snapshot is a whole timetable: it does not go beside loaded feeds.
    let mut with_feeds = demo_engine();
    assert_eq!(with_feeds.load_snapshot(&demo_snapshot()).map(|_| ()), Err(SnapshotError::NotEmpty));
    assert_eq!(with_feeds.tt.feeds.len(), 2, "the loaded feeds are kept");
}

#[test]
fn damaged_cut_and_other_version_snapshots_are_refused_with_their_reason() {
    let good = demo_snapshot();
    let load = |b: &[u8]| Engine::new().load_snapshot(b).map(|_| ()).expect_err("must be refused");
    let mut flipped = good.clone();
    let mid = 24 + (good.len() - 24) / 2;
    flipped[mid] ^= 0x40;
    let e = load(&flipped);
    assert!(matches!(e, SnapshotError::Checksum { .. }), "{e:?}");
    assert!(e.to_string().contains("damaged"), "{e}");
    let e = load(&good[..good.len() - 100]);
    assert_eq!(e, SnapshotError::Truncated { expected: (good.len() - 24) as u64, found: (good.len() - 124) as u64 });
    let mut old = good.clone();
    old[8..12].copy_from_slice(&0u32.to_le_bytes());
    let e = load(&old);
    assert_eq!(e, SnapshotError::Version { found: 0, expected: VERSION });
    assert!(e.to_string().contains("version 0") && e.to_string().contains("make the snapshot again"), "{e}");
    assert_eq!(load(b"PK\x03\x04 a zip, not a snapshot"), SnapshotError::NotSnapshot);
    assert_eq!(load(b""), SnapshotError::NotSnapshot);
    // Every cut of the file is refused, none panics.
    for len in (0..good.len()).step_by(97) {
        load(&good[..len]);
    }
}

fn with_body(body: &[u8]) -> Vec<u8> {
    let mut out = b"TWEAVSNP".to_vec();
    out.extend_from_slice(&VERSION.to_le_bytes());
    out.extend_from_slice(&crc32_by_bits(body).to_le_bytes());
    out.extend_from_slice(&(body.len() as u64).to_le_bytes());
    out.extend_from_slice(body);
    out
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]
    /// A body with a correct checksum but made-up contents is refused (or read, if it happens to
    /// be well formed), never a panic; so is a real body with one byte changed and the checksum
    /// made to match, which reaches the index checks.
    #[test]
    fn bodies_with_a_valid_checksum_never_panic(body in proptest::collection::vec(any::<u8>(), 0..400), at in any::<prop::sample::Index>(), byte in any::<u8>()) {
        let _ = Engine::new().load_snapshot(&with_body(&body));
        let good = demo_snapshot();
        let mut real = good[24..].to_vec();
        let i = at.index(real.len());
        real[i] = byte;
        let _ = Engine::new().load_snapshot(&with_body(&real));
    }
}

/// A feed in zone CET whose Sunday trips leave stop A at 01:30, 02:30, 03:00 and 03:30 (GTFS
/// times), on the Sundays clocks change.
fn cet_feed() -> Feed {
    Feed::new("CET")
        .one_route()
        .file(
            "stops.txt",
            "stop_id,stop_name,stop_lat,stop_lon
             A,Aldgrove,50.0000,10.0000
             B,Birchmere,50.0100,10.0000",
        )
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
             SUN,0,0,0,0,0,0,1,20260101,20261231",
        )
        .file(
            "trips.txt",
            "route_id,service_id,trip_id,trip_headsign
             R,SUN,T0130,Birchmere
             R,SUN,T0230,Birchmere
             R,SUN,T0300,Birchmere
             R,SUN,T0330,Birchmere",
        )
        .file(
            "stop_times.txt",
            "trip_id,arrival_time,departure_time,stop_id,stop_sequence
             T0130,01:30:00,01:30:00,A,1
             T0130,01:40:00,01:40:00,B,2
             T0230,02:30:00,02:30:00,A,1
             T0230,02:40:00,02:40:00,B,2
             T0300,03:00:00,03:00:00,A,1
             T0300,03:10:00,03:10:00,B,2
             T0330,03:30:00,03:30:00,A,1
             T0330,03:40:00,03:40:00,B,2",
        )
}

/// (clock time, minutes from now, trip) of every departure from A.
fn board_at(engine: &mut Engine, instant: &str) -> (String, String, Vec<(String, u32, String)>) {
    let ms = chrono::DateTime::parse_from_rfc3339(instant).expect("test instant").timestamp_millis();
    let mut q = BoardQuery::new("A", ms);
    q.horizon_min = 180;
    q.per_line = 10;
    let b = engine.board(&q).expect("board");
    let deps = b.lines.iter().flat_map(|l| l.departures.iter().map(|d| (d.time.clone(), d.in_min, d.trip_id.clone()))).collect();
    (b.now, b.service_date, deps)
}

fn dep(t: &str, min: u32, trip: &str) -> (String, u32, String) {
    (t.to_string(), min, trip.to_string())
}

#[test]
fn the_board_is_right_across_the_autumn_clock_change() {
    // 2026-10-25: origin = noon CET (11:00Z) - 12 h = 2026-10-24T23:00Z. GTFS 01:30 = 00:30Z,
    // still summer time (CEST, +2): 02:30. GTFS 02:30 = 01:30Z, after the change (CET, +1):
    // 02:30 again. GTFS 03:00 = 02:00Z = 03:00; 03:30 = 02:30Z = 03:30.
    let mut e = cet_feed().load();
    let (now, day, deps) = board_at(&mut e, "2026-10-25T00:20:00Z");
    assert_eq!((now.as_str(), day.as_str()), ("02:20", "2026-10-25"));
    assert_eq!(deps, vec![dep("02:30", 10, "T0130"), dep("02:30", 70, "T0230"), dep("03:00", 100, "T0300"), dep("03:30", 130, "T0330")]);
    // An hour later the clock reads 02:20 again (CET): the first 02:30 has gone.
    let (now, _, deps) = board_at(&mut e, "2026-10-25T01:20:00Z");
    assert_eq!(now, "02:20");
    assert_eq!(deps, vec![dep("02:30", 10, "T0230"), dep("03:00", 40, "T0300"), dep("03:30", 70, "T0330")]);
}

#[test]
fn the_board_is_right_across_the_spring_clock_change() {
    // 2026-03-29: origin = noon CEST (10:00Z) - 12 h = 2026-03-28T22:00Z, which is 23:00 CET on
    // the 28th, not midnight. GTFS 01:30 = 23:30Z = 00:30 CET; 02:30 = 00:30Z = 01:30 CET;
    // 03:00 = 01:00Z = 03:00 CEST; 03:30 = 01:30Z = 03:30 CEST.
    let mut e = cet_feed().load();
    let (now, day, deps) = board_at(&mut e, "2026-03-28T23:00:00Z");
    assert_eq!((now.as_str(), day.as_str()), ("00:00", "2026-03-29"));
    assert_eq!(deps, vec![dep("00:30", 30, "T0130"), dep("01:30", 90, "T0230"), dep("03:00", 120, "T0300"), dep("03:30", 150, "T0330")]);
}

#[test]
fn a_board_past_its_dates_shows_no_times_and_says_why() {
    let mut snap = from_snapshot(&demo_snapshot());
    let at = |s: &str| chrono::DateTime::parse_from_rfc3339(s).unwrap().timestamp_millis();
    let mut q = BoardQuery::new("ORR_CEN", at("2026-12-08T09:00:00Z"));
    q.destinations = vec!["OCT_WMD".into()];
    let b = snap.board(&q).expect("board");
    assert_eq!(b.coverage, Coverage::RunOut);
    assert!(b.lines.is_empty() && b.destinations.is_empty());
    q.now_ms = at("2026-11-30T09:00:00Z");
    assert_eq!(snap.board(&q).expect("board").coverage, Coverage::NotYet);
    q.now_ms = at("2026-12-07T09:00:00Z");
    let b = snap.board(&q).expect("board");
    assert_eq!(b.coverage, Coverage::Covered);
    assert!(!b.lines.is_empty());
    assert_eq!(b.destinations.len(), 1);
    assert!(!b.destinations[0].standard.is_empty());
    q.stop = "Oskerveld Centrl".into();
    match snap.board(&q) {
        Err(QueryError::UnknownStop { suggestions, .. }) => {
            assert!(suggestions.iter().any(|s| s == "Oskerveld Central"), "{suggestions:?}")
        }
        other => panic!("expected UnknownStop, got {other:?}"),
    }
}

/// Every journey the board returns replays through the replay validator (tests/support/replay.rs:
/// each ride on its trip's own stop times, each change and walk long enough), for both profiles,
/// over a morning of boards from the demo's rail station to every other place.
#[test]
fn every_board_journey_replays() {
    use timeweave::route::search::Params;
    let mut e = from_snapshot(&demo_snapshot());
    let at = chrono::DateTime::parse_from_rfc3339("2026-12-02T06:30:00Z").unwrap().timestamp_millis();
    let places: Vec<String> = e.places.stops.iter().map(|&s| e.tt.stop(s).id.clone()).filter(|id| id != "ORR_CEN").collect();
    let mut checked = 0;
    for step in 0..4 {
        let mut q = BoardQuery::new("ORR_CEN", at + step * 37 * 60_000);
        q.destinations = places.clone();
        let b = e.board(&q).expect("board");
        let from = e.endpoints_of(e.resolve("ORR_CEN").unwrap());
        let origin = timeweave::timetable::calendar::day_origin(e.tt.feeds[0].timezone, date(&b.service_date));
        let now_s = ((q.now_ms / 1000) - origin.timestamp()) as u32;
        for d in &b.destinations {
            let to = e.endpoints_of(e.resolve(&d.stop_id).unwrap());
            for (its, sf) in [(&d.standard, StepFree::Off), (&d.step_free, StepFree::Strict)] {
                let p = Params::new(sf);
                for it in its.iter() {
                    if let Err(m) = support::replay::replay(&e.tt, date(&b.service_date), now_s, &p, &from, &to, it) {
                        panic!("board journey to {} ({sf:?}) does not replay: {m}", d.stop_id);
                    }
                    checked += 1;
                }
            }
        }
    }
    assert!(checked > 300, "{checked} journeys replayed");
}

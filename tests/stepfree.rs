//! The step-free audit on a small station of our own: a street entrance, a lift (pathway_mode 5)
//! and stairs (2) down to a platform, a bus from there. Sources beside each check: the GTFS
//! Schedule reference (pathway_mode, wheelchair_boarding and its inheritance, wheelchair_accessible),
//! the 2010 ADA Standards for Accessible Design §405.2 (ramp running slope not steeper than 1:12 =
//! 0.0833), and travel times worked by hand.

mod support;

use support::Feed;
use timeweave::analysis::stepfree::PairStatus;
use timeweave::engine::stepfree::{OutageEffect, StepFreePairRow, StepFreeQuery, StepFreeReport};

/// Station S (wheelchair_boarding `station_wb`) with entrance E (1) and platform P
/// (`platform_wb`); `pathways` are rows of pathways.txt between E and P; bus R1 (accessible)
/// leaves P every 10 min from 08:05 and reaches stop Q 15 min later.
fn station(station_wb: &str, platform_wb: &str, pathways: &str) -> Feed {
    let mut trips = String::from("route_id,service_id,trip_id,wheelchair_accessible\n");
    let mut times = String::from("trip_id,arrival_time,departure_time,stop_id,stop_sequence\n");
    for k in 0..8 {
        let (h, m) = (8 + (5 + 10 * k) / 60, (5 + 10 * k) % 60);
        trips += &format!("R1,ALL,T{k},1\n");
        times += &format!(
            "T{k},{h:02}:{m:02}:00,{h:02}:{m:02}:00,P,1\nT{k},{:02}:{:02}:00,{:02}:{:02}:00,Q,2\n",
            h + (m + 15) / 60,
            (m + 15) % 60,
            h + (m + 15) / 60,
            (m + 15) % 60
        );
    }
    Feed::new("Etc/GMT-1")
        .file(
            "stops.txt",
            &format!(
                "stop_id,stop_name,stop_lat,stop_lon,location_type,parent_station,wheelchair_boarding\n\
                 S,Station S,52.0,13.0,1,,{station_wb}\nE,Entrance E,52.0004,13.0,2,S,1\nP,Platform P,52.0,13.0,0,S,{platform_wb}\nQ,Stop Q,52.05,13.0,0,,1\n"
            ),
        )
        .file("routes.txt", "route_id,agency_id,route_short_name,route_type\nR1,TA,1,3\n")
        .file("trips.txt", &trips)
        .file("stop_times.txt", &times)
        .file("calendar.txt", "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nALL,1,1,1,1,1,1,1,20260101,20261231\n")
        .file("pathways.txt", &format!("pathway_id,from_stop_id,to_stop_id,pathway_mode,is_bidirectional,length,traversal_time,max_slope\n{pathways}"))
}

const LIFT: &str = "PW_LIFT,E,P,5,1,,20,\n";
const STAIRS: &str = "PW_STAIRS,E,P,2,1,,60,\n";

fn audit(f: &Feed, outages: &[&str]) -> (StepFreeReport, Vec<StepFreePairRow>) {
    let mut e = f.load();
    let q = StepFreeQuery {
        date: "2026-06-10".into(),
        window: "08:00-09:00".into(),
        pair_list: Some(vec![("S".into(), "Q".into())]),
        outages: outages.iter().map(|s| s.to_string()).collect(),
        ..Default::default()
    };
    let mut rows = Vec::new();
    let r = e
        .stepfree_with(&q, 1, &mut |_, _, chunk| {
            rows.extend_from_slice(chunk);
            true
        })
        .expect("audit")
        .expect("not cancelled");
    assert_eq!(rows.len(), 1, "{rows:?}");
    (r, rows)
}

#[test]
fn step_free_through_the_lift_with_the_times_worked_by_hand() {
    // Worked by hand (common practice, no source): leaving the entrance at each minute 08:00–08:59
    // the lift takes 20 s, so the bus at 08:05 + 10 k is caught up to 4 min 40 s before it; the
    // waits are 1–10 min, six departures each, plus 15 min on board: 16–25 min. The median of 60
    // (linear between the closest ranks, rank 0.5 × 59 = 29.5) lies between the 30th (20 min) and
    // 31st (21 min) values: 20.5 min = 1230 s. The lift's time does not depend on the speed, so
    // step-free takes the same.
    let (r, rows) = audit(&station("1", "", &format!("{LIFT}{STAIRS}")), &[]);
    let p = &rows[0];
    assert_eq!(
        (p.status, p.standard_p50_s, p.stepfree_p50_s, p.extra_p50_s),
        (PairStatus::StepFree, Some(1230.0), Some(1230.0), Some(0.0))
    );
    assert_eq!((p.standard_reached, p.stepfree_reached), (60, 60));
    assert!(p.blocking.is_empty() && r.elements.is_empty());
    assert_eq!((r.counts.pairs, r.counts.step_free, r.counts.blocked), (1, 1, 0));
    assert!(r.caution.contains("confirm on site and with the operator"));
}

#[test]
fn with_the_lift_out_the_pair_is_lost_and_the_lift_is_named() {
    // GTFS Schedule reference, pathways.txt: pathway_mode 5 is an elevator, 2 stairs; stairs are
    // not step-free. With the lift out of service only the stairs remain.
    let (r, rows) = audit(&station("1", "", &format!("{LIFT}{STAIRS}")), &["PW_LIFT"]);
    let p = &rows[0];
    assert_eq!((p.status, p.outage_status, p.outage_stepfree_p50_s), (PairStatus::StepFree, Some(OutageEffect::Lost), None));
    assert_eq!(p.outage_blocking, ["pathway:PW_LIFT"]);
    assert_eq!((r.counts.lost, r.outages.len(), r.outages[0].element_kind), (1, 1, "pathway"));
}

#[test]
fn stairs_only_block_the_pair_and_fixing_them_opens_it() {
    let (r, rows) = audit(&station("1", "", STAIRS), &[]);
    let p = &rows[0];
    assert_eq!(
        (p.status, p.stepfree_p50_s, p.blocking.as_slice()),
        (PairStatus::Blocked, None, ["pathway:PW_STAIRS".to_string()].as_slice())
    );
    assert_eq!(r.elements.len(), 1);
    let e = &r.elements[0];
    assert_eq!((e.element_kind, e.element_id.as_str(), e.pairs_blocked, e.pairs_unblocked_if_fixed), ("pathway", "PW_STAIRS", 1, Some(1)));
}

#[test]
fn a_ramp_steeper_than_one_in_twelve_is_not_step_free() {
    // 2010 ADA Standards §405.2: running slope not steeper than 1:12 (0.0833). 0.10 is refused,
    // 0.08 accepted.
    let ramp = |slope: &str| format!("PW_RAMP,E,P,1,1,30,,{slope}\n");
    let (_, steep) = audit(&station("1", "", &ramp("0.10")), &[]);
    assert_eq!((steep[0].status, steep[0].blocking.as_slice()), (PairStatus::Blocked, ["pathway:PW_RAMP".to_string()].as_slice()));
    let (_, gentle) = audit(&station("1", "", &ramp("0.08")), &[]);
    assert_eq!(gentle[0].status, PairStatus::StepFree);
}

#[test]
fn a_platform_inherits_wheelchair_boarding_from_its_station() {
    // GTFS Schedule reference, stops.txt wheelchair_boarding: for a child stop, empty (or 0)
    // inherits the parent station's value; 1 some step-free path, 2 none.
    let (_, yes) = audit(&station("1", "", LIFT), &[]);
    assert_eq!(yes[0].status, PairStatus::StepFree);
    let (_, no) = audit(&station("2", "", LIFT), &[]);
    assert_eq!((no[0].status, no[0].blocking.as_slice()), (PairStatus::Blocked, ["stop:P".to_string()].as_slice()));
    // The platform's own value wins over the station's.
    let (_, own) = audit(&station("2", "1", LIFT), &[]);
    assert_eq!(own[0].status, PairStatus::StepFree);
}

#[test]
fn unknown_outages_are_refused_with_suggestions_before_any_work() {
    let mut e = station("1", "", LIFT).load();
    let q = StepFreeQuery {
        date: "2026-06-10".into(),
        window: "08:00-09:00".into(),
        pairs: Some("all".into()),
        outages: vec!["PW_LIFTT".into(), "NOPE".into()],
        ..Default::default()
    };
    let mut called = false;
    let err = e
        .stepfree_with(&q, 1, &mut |_, _, _| {
            called = true;
            true
        })
        .expect_err("refused")
        .to_string();
    assert!(!called, "nothing run");
    assert!(err.contains("\"PW_LIFTT\"") && err.contains("pathway:PW_LIFT") && err.contains("\"NOPE\""), "{err}");
    let bad = StepFreeQuery { pairs: Some("sample:0".into()), outages: vec![], ..q };
    assert!(e.stepfree_with(&bad, 1, &mut |_, _, _| true).expect_err("refused").to_string().contains("sample of 0 pairs"));
}

/// A FeedMessage (GTFS-Realtime reference, gtfs-realtime.proto) with one alert of `effect` on
/// stop `stop`, active over `period` (POSIX seconds) when given.
fn alert_bytes(effect: i32, stop: &str, period: Option<(u64, u64)>) -> Vec<u8> {
    use prost::Message;
    use timeweave::feed::alerts::*;
    let msg = FeedMessage {
        header: Some(FeedHeader { gtfs_realtime_version: Some("2.0".into()), timestamp: Some(1_781_000_000) }),
        entity: vec![FeedEntity {
            id: Some("lift-1".into()),
            is_deleted: None,
            alert: Some(Alert {
                active_period: period.map(|(s, e)| TimeRange { start: Some(s), end: Some(e) }).into_iter().collect(),
                informed_entity: vec![EntitySelector { agency_id: None, route_id: None, stop_id: Some(stop.into()) }],
                effect: Some(effect),
            }),
        }],
    };
    msg.encode_to_vec()
}

#[test]
fn an_accessibility_alert_on_the_platform_takes_its_lift_out() {
    // GTFS-Realtime reference: Alert.effect ACCESSIBILITY_ISSUE = 11, NO_SERVICE = 1; the entity
    // selector names a stop, not a pathway, so the lift touching the stop is what goes out.
    let mut e = station("1", "", &format!("{LIFT}{STAIRS}")).load();
    let a = e.outages_from_alerts(&alert_bytes(11, "P", None), "2026-06-10", "08:00-09:00").expect("alerts");
    let (out, skipped) = (a.outages, a.skipped);
    assert_eq!(out, [("pathway:PW_LIFT".to_string(), "alert lift-1".to_string())]);
    assert!(skipped.is_empty());
    let q = StepFreeQuery {
        date: "2026-06-10".into(),
        window: "08:00-09:00".into(),
        pair_list: Some(vec![("S".into(), "Q".into())]),
        outages: out.iter().map(|x| x.0.clone()).collect(),
        outage_sources: out.iter().map(|x| x.1.clone()).collect(),
        ..Default::default()
    };
    let mut rows = Vec::new();
    let r = e.stepfree_with(&q, 1, &mut |_, _, c| {
        rows.extend_from_slice(c);
        true
    });
    let r = r.expect("audit").expect("done");
    assert_eq!((rows[0].outage_status, r.outages[0].source.as_str()), (Some(OutageEffect::Lost), "alert lift-1"));
    // Another effect, or an alert over another day, sets nothing out.
    assert!(e.outages_from_alerts(&alert_bytes(1, "P", None), "2026-06-10", "08:00-09:00").expect("alerts").outages.is_empty());
    // 2026-06-11 00:00 UTC onwards: after the window (UTC+1, so 08:00–09:00 is 07:00–08:00 UTC on the 10th).
    let later = alert_bytes(11, "P", Some((1_781_136_000, 1_781_222_400)));
    assert!(e.outages_from_alerts(&later, "2026-06-10", "08:00-09:00").expect("alerts").outages.is_empty());
    assert_eq!(e.outages_from_alerts(&later, "2026-06-11", "08:00-09:00").expect("alerts").outages.len(), 1);
    // Not protobuf at all: refused with the reason.
    let err = e.outages_from_alerts(b"stop_id,effect\nP,ACCESSIBILITY_ISSUE\n", "2026-06-10", "08:00-09:00").expect_err("refused");
    assert!(err.to_string().contains("not a GTFS-Realtime FeedMessage"), "{err}");
}

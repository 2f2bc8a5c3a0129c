//! Great-circle distances (`timetable::walking::haversine_m`) against published and derived
//! reference values, and walking times on generated links: length = distance × detour factor,
//! duration = length ÷ walking speed.

mod support;

use std::f64::consts::PI;

use support::{plan, query, Feed};
use timeweave::journey::LegKind;
use timeweave::route::search::{Params, StepFree};
use timeweave::timetable::walking::{haversine_m, WalkConfig};
use timeweave::timetable::WalkProfile;

/// IUGG mean Earth radius R1 = 6,371,008.8 m (recalled from memory: IUGG / Geodetic Reference
/// System 1980, mean radius of the three semi-axes).
const R: f64 = 6_371_008.8;

#[test]
fn one_degree_quarter_meridian_and_half_circumference_on_the_iugg_sphere() {
    // Derived: one degree of a great circle is πR/180 = 111,195.08 m on that sphere.
    let degree = PI * R / 180.0;
    assert!((degree - 111_195.08).abs() < 0.01, "{degree}");
    // One degree of latitude along a meridian and one degree of longitude along the equator are
    // both great-circle arcs of 1°. Tolerance 1 mm (floating point only).
    assert!((haversine_m(0.0, 0.0, 1.0, 0.0) - degree).abs() < 1e-3);
    assert!((haversine_m(0.0, 0.0, 0.0, 1.0) - degree).abs() < 1e-3);
    assert!((haversine_m(52.0, 13.0, 53.0, 13.0) - degree).abs() < 1e-3, "a meridian degree anywhere");
    // Derived: equator to pole is a quarter circle, πR/2 = 10,007,557.22 m.
    assert!((haversine_m(0.0, 0.0, 90.0, 0.0) - PI * R / 2.0).abs() < 1e-3);
    assert!((PI * R / 2.0 - 10_007_557.22).abs() < 0.01);
    // Derived: antipodes are half a circle apart, πR = 20,015,114.44 m (the formula's edge case).
    assert!((haversine_m(0.0, 0.0, 0.0, 180.0) - PI * R).abs() < 1e-3);
    assert!((haversine_m(30.0, 40.0, -30.0, -140.0) - PI * R).abs() < 1e-3);
    // Distance is symmetric and zero for one point.
    assert_eq!(haversine_m(52.1, 13.2, 52.1, 13.2), 0.0);
    assert!((haversine_m(52.1, 13.2, 48.3, 2.1) - haversine_m(48.3, 2.1, 52.1, 13.2)).abs() < 1e-6);
}

fn dms(d: f64, m: f64, s: f64) -> f64 {
    d + m / 60.0 + s / 3600.0
}

#[test]
fn published_worked_example() {
    // Recalled from memory: Movable Type Scripts, "Calculate distance, bearing and more between
    // Latitude/Longitude points", haversine worked example 50°03′59″N 005°42′53″W to
    // 58°38′38″N 003°04′12″W: 968.9 km, on a sphere of R = 6371 km.
    let d = haversine_m(dms(50.0, 3.0, 59.0), -dms(5.0, 42.0, 53.0), dms(58.0, 38.0, 38.0), -dms(3.0, 4.0, 12.0));
    // Tolerance: the published figure is rounded to 0.1 km (±50 m); our radius is 8.8 m larger
    // (1.4 ppm, 1.3 m over this distance).
    assert!((d - 968_900.0).abs() <= 50.0 + 1.4e-6 * 968_900.0, "{d}");
    // The same on the page's own radius, rescaled: the formula is linear in R.
    let on_6371 = d * 6_371_000.0 / R;
    assert!((on_6371 - 968_900.0).abs() <= 50.0, "{on_6371}");
}

/// Stops A–B 0.0018° of latitude apart (≈ 200 m), C 0.0045° further (≈ 500 m from B), and a far
/// pair D–E only so the feed has a trip.
fn walk_feed() -> Feed {
    Feed::new("Etc/GMT-1")
        .one_route()
        .file(
            "stops.txt",
            "stop_id,stop_name,stop_lat,stop_lon
            A,Ashfield Gate,52.0000,13.00
            B,Bramble Gate,52.0018,13.00
            C,Cobble Gate,52.0063,13.00
            D,Dovecote End,52.10,13.00
            E,Elmstead End,52.20,13.00",
        )
        .file(
            "calendar.txt",
            "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date
            ALL,1,1,1,1,1,1,1,20260101,20261231",
        )
        .file("trips.txt", "route_id,service_id,trip_id\nR,ALL,T")
        .file(
            "stop_times.txt",
            "trip_id,arrival_time,departure_time,stop_id,stop_sequence
            T,09:00:00,09:00:00,D,1
            T,09:20:00,09:20:00,E,2",
        )
}

#[test]
fn walking_links_are_distance_times_detour_over_speed() {
    let cfg = WalkConfig::default();
    // Defaults, common practice, no source: detour factor 1.3, link radius 400 m, walking speed
    // 1.3 m/s, step-free speed 0.8 m/s.
    assert_eq!((cfg.detour_factor, cfg.link_radius_m), (1.3, 400.0));
    assert_eq!(Params::default().walk_speed_mps, 1.3);
    assert_eq!(Params::new(StepFree::Strict).walk_speed_mps, 0.8);

    let mut engine = walk_feed().load();
    let idx = |id: &str| timeweave::timetable::StopIdx(engine.tt.stops.iter().position(|s| s.id == id).expect("stop") as u32);
    let (a, b, c) = (idx("A"), idx("B"), idx("C"));
    let d_ab = haversine_m(52.0, 13.0, 52.0018, 13.0);
    assert!((d_ab - 200.15).abs() < 0.01, "{d_ab}");
    let link = *engine.tt.walk(WalkProfile::Standard).between(a, b).expect("A and B are within 400 m");
    // length = great-circle distance × detour factor (f32 storage: within 1 cm).
    assert!((link.length_m as f64 - d_ab * cfg.detour_factor).abs() < 0.01, "{link:?}");
    // duration = length ÷ speed, rounded up to whole seconds.
    let expect_s = |speed: f64| (d_ab * cfg.detour_factor / speed).ceil() as u32;
    assert_eq!(link.duration_s(1.3), expect_s(1.3));
    assert_eq!(link.duration_s(1.3), 201);
    // B–C is about 500 m, beyond the 400 m link radius: no link.
    assert!(engine.tt.walk(WalkProfile::Standard).between(b, c).is_none());

    // Through the planner: a walk-only journey takes the same time, at each profile's speed.
    for (sf, speed) in [(StepFree::Off, 1.3), (StepFree::Strict, 0.8)] {
        let r = plan(&mut engine, &query("A", "B", "2026-06-10", "08:00"), sf);
        let it = r.journeys.first().unwrap_or_else(|| panic!("{r:?}"));
        assert_eq!(it.rides, 0);
        assert_eq!(it.legs.len(), 1, "{it:?}");
        assert_eq!(it.legs[0].kind, LegKind::Walk);
        assert_eq!(it.legs[0].duration_s, expect_s(speed), "{sf:?}");
        assert_eq!(it.duration_s, expect_s(speed));
        // distance_m is the walked length, rounded to metres.
        assert_eq!(it.legs[0].distance_m, Some((d_ab * cfg.detour_factor).round() as u32));
    }
}

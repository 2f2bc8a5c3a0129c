//! Before and after on the demo city and a feed of our own: a timetable compared with itself
//! changes nothing; removing every trip of one route only ever takes service away (removing
//! connections cannot make an earliest arrival earlier: the earliest arrival over a subset of a
//! graph's edges is never sooner, common practice, no source), the stops only that route served
//! lose their service, and pairs on a line of their own are unchanged to the second.

mod support;

use std::collections::{HashMap, HashSet};
use std::path::Path;

use support::{demo, Feed};
use timeweave::engine::compare::{compare, ComparePairRow, CompareQuery, CompareReport, PairChange};
use timeweave::Engine;

fn engine_of(folders: &[&Path]) -> Engine {
    let mut e = Engine::new();
    for f in folders {
        timeweave_disk::load_feed(&mut e, f, &mut |_, _| {}).expect("feed loads");
    }
    e
}

fn run(before: &mut Engine, after: &mut Engine, q: &CompareQuery) -> (CompareReport, Vec<ComparePairRow>) {
    let mut rows = Vec::new();
    let r = compare(before, after, q, 2, &mut |_, _, c| {
        rows.extend_from_slice(c);
        true
    })
    .expect("compare")
    .expect("not cancelled");
    (r, rows)
}

fn query(date: &str, window: &str) -> CompareQuery {
    CompareQuery { date: date.into(), window: window.into(), ..Default::default() }
}

/// The demo city's folder with every trip of `route` taken out of trips.txt and stop_times.txt.
fn without_route(route: &str) -> (tempfile::TempDir, HashSet<String>) {
    let dir = tempfile::tempdir().unwrap();
    let src = demo("oskerveld-city");
    let mut gone = HashSet::new();
    for entry in std::fs::read_dir(&src).unwrap() {
        let p = entry.unwrap().path();
        let name = p.file_name().unwrap().to_str().unwrap().to_string();
        let text = std::fs::read_to_string(&p).unwrap();
        let out = match name.as_str() {
            "trips.txt" => text
                .lines()
                .filter(|l| {
                    let keep = !l.starts_with(&format!("{route},"));
                    if !keep {
                        gone.insert(l.split(',').nth(2).unwrap().to_string());
                    }
                    keep
                })
                .collect::<Vec<_>>()
                .join("\n"),
            _ => text,
        };
        std::fs::write(dir.path().join(&name), out + "\n").unwrap();
    }
    let st = std::fs::read_to_string(dir.path().join("stop_times.txt")).unwrap();
    let kept: Vec<&str> = st.lines().filter(|l| !gone.contains(l.split(',').next().unwrap())).collect();
    std::fs::write(dir.path().join("stop_times.txt"), kept.join("\n") + "\n").unwrap();
    (dir, gone)
}

#[test]
fn a_timetable_compared_with_itself_changes_nothing() {
    let folders = [demo("oskerveld-city"), demo("oskerveld-rail")];
    let refs: Vec<&Path> = folders.iter().map(|p| p.as_path()).collect();
    let (mut b, mut a) = (engine_of(&refs), engine_of(&refs));
    let (r, rows) = run(&mut b, &mut a, &query("2026-12-02", "07:00-08:00"));
    assert!(rows.len() > 2000);
    for p in &rows {
        assert!(matches!(p.status, PairChange::Unchanged | PairChange::Unreachable), "{p:?}");
        assert_eq!((p.before_p50_s, p.before_p90_s), (p.after_p50_s, p.after_p90_s), "{p:?}");
    }
    assert!(r.connections.is_empty(), "{:?}", &r.connections[..r.connections.len().min(3)]);
    assert!(r.stations.iter().all(|s| s.median_change_s.is_none_or(|m| m == 0.0) && s.service != "lost" && s.service != "gained"));
    assert!(r.routes.iter().all(|x| x.trips_before == x.trips_after && x.headway_before_s == x.headway_after_s));
    assert!(r.only_before.is_empty() && r.only_after.is_empty());
    assert!(r.headline.starts_with("0.0 % of pairs are more than 5 min slower, 0.0 % more than 5 min faster"), "{}", r.headline);
}

#[test]
fn removing_the_ferry_only_takes_service_away() {
    let (dir, gone) = without_route("F1");
    assert!(!gone.is_empty());
    let rail = demo("oskerveld-rail");
    let before_dirs = [demo("oskerveld-city"), rail.clone()];
    let mut b = engine_of(&before_dirs.iter().map(|p| p.as_path()).collect::<Vec<_>>());
    let mut a = engine_of(&[dir.path(), rail.as_path()]);
    let (r, rows) = run(&mut b, &mut a, &query("2026-12-02", "07:00-09:00"));
    // Nothing can get faster, nothing can be gained.
    for p in &rows {
        assert!(!matches!(p.status, PairChange::Faster | PairChange::Gained), "{p:?}");
        if let (Some(x), Some(y)) = (p.before_p50_s, p.after_p50_s) {
            assert!(y >= x, "{p:?}");
        }
    }
    assert!(rows.iter().any(|p| p.status == PairChange::Lost || p.status == PairChange::Slower), "the ferry mattered to someone");
    assert_eq!(r.counts.faster + r.counts.gained, 0);
    // The stops only the ferry served, read from stop_times.txt itself, lose their service.
    let st = std::fs::read_to_string(demo("oskerveld-city").join("stop_times.txt")).unwrap();
    let mut by_stop: HashMap<String, HashSet<bool>> = HashMap::new();
    for l in st.lines().skip(1) {
        let f: Vec<&str> = l.split(',').collect();
        by_stop.entry(f[3].to_string()).or_default().insert(gone.contains(f[0]));
    }
    let ferry_only: Vec<&String> = by_stop.iter().filter(|(_, v)| v.len() == 1 && v.contains(&true)).map(|(k, _)| k).collect();
    assert!(!ferry_only.is_empty(), "the demo has stops only the ferry serves");
    for s in ferry_only {
        let row = r.stations.iter().find(|x| x.station == *s).unwrap_or_else(|| panic!("station row for {s}"));
        assert_eq!((row.service, row.departures_after), ("lost", 0), "{row:?}");
    }
    let f1 = r.routes.iter().find(|x| x.route_id == "F1").expect("F1 listed");
    assert!(f1.trips_before > 0 && f1.trips_after == 0);
}

/// Two lines 20 km apart, A (stops A1–A3) and B (B1–B3), every 10 min from 07:00; `with_b`: B runs.
fn two_lines(with_b: bool) -> Feed {
    let mut trips = String::from("route_id,service_id,trip_id\n");
    let mut times = String::from("trip_id,arrival_time,departure_time,stop_id,stop_sequence\n");
    for (line, run) in [("A", true), ("B", with_b)] {
        if !run {
            continue;
        }
        for k in 0..12 {
            let m = k * 10;
            trips += &format!("{line},ALL,{line}{k}\n");
            for (i, s) in [1, 2, 3].iter().enumerate() {
                let t = m + 6 * i as u32;
                times += &format!("{line}{k},{:02}:{:02}:00,{:02}:{:02}:00,{line}{s},{}\n", 7 + t / 60, t % 60, 7 + t / 60, t % 60, i + 1);
            }
        }
    }
    Feed::new("Etc/GMT-1")
        .file("stops.txt", "stop_id,stop_name,stop_lat,stop_lon\nA1,A one,52.00,13.00\nA2,A two,52.02,13.00\nA3,A three,52.04,13.00\nB1,B one,52.20,13.00\nB2,B two,52.22,13.00\nB3,B three,52.24,13.00\n")
        .file("routes.txt", "route_id,agency_id,route_short_name,route_type\nA,TA,A,3\nB,TA,B,3\n")
        .file("trips.txt", &trips)
        .file("stop_times.txt", &times)
        .file("calendar.txt", "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nALL,1,1,1,1,1,1,1,20260101,20261231\n")
}

#[test]
fn pairs_on_a_line_of_their_own_are_unchanged_to_the_second() {
    let (mut b, mut a) = (two_lines(true).load(), two_lines(false).load());
    let (r, rows) = run(&mut b, &mut a, &query("2026-06-10", "07:00-08:00"));
    for p in &rows {
        let a_only = p.from_stop_id.starts_with('A') && p.to_stop_id.starts_with('A');
        if a_only {
            // The line runs one way: A2 → A1 is unreachable in both.
            assert!(matches!(p.status, PairChange::Unchanged | PairChange::Unreachable), "{p:?}");
            assert_eq!((p.before_p50_s, p.before_p90_s), (p.after_p50_s, p.after_p90_s), "{p:?}");
        } else if p.from_stop_id.starts_with('B') && p.to_stop_id.starts_with('B') && p.from_stop_id < p.to_stop_id {
            assert_eq!(p.status, PairChange::Lost, "{p:?}");
        }
    }
    let a_reached =
        rows.iter().filter(|p| p.from_stop_id.starts_with('A') && p.to_stop_id.starts_with('A') && p.before_p50_s.is_some()).count();
    assert_eq!(a_reached, 3, "A1→A2, A1→A3, A2→A3");
    let b1 = r.stations.iter().find(|s| s.station == "B1").expect("B1");
    assert_eq!(b1.service, "lost");
}

#[test]
fn dates_outside_a_version_are_refused_naming_it() {
    let (mut b, mut a) = (two_lines(true).load(), two_lines(false).load());
    let err = |q: CompareQuery, b: &mut Engine, a: &mut Engine| compare(b, a, &q, 1, &mut |_, _, _| true).expect_err("refused").to_string();
    let q = CompareQuery { after_date: Some("2027-03-03".into()), ..query("2026-06-10", "07:00-08:00") };
    let e = err(q, &mut b, &mut a);
    assert!(e.starts_with("after version:") && e.contains("outside the loaded feeds' dates"), "{e}");
    let e = err(query("2025-06-10", "07:00-08:00"), &mut b, &mut a);
    assert!(e.starts_with("before version:"), "{e}");
}

#[test]
fn chosen_destinations_limit_the_pairs_and_the_changes() {
    let (mut b, mut a) = (two_lines(true).load(), two_lines(false).load());
    let q = CompareQuery { destinations: Some(vec!["A3".into()]), ..query("2026-06-10", "07:00-08:00") };
    let (r, rows) = run(&mut b, &mut a, &q);
    assert!(rows.iter().all(|p| p.to_stop_id == "A3"), "{rows:?}");
    assert_eq!(rows.len(), 5, "every other place to A3");
    let a1 = r.stations.iter().find(|s| s.station == "A1").expect("A1");
    assert_eq!((a1.destinations_both, a1.median_change_s), (1, Some(0.0)));
}

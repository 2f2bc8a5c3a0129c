//! `timeweave interchange` on the demo city, through the binary: the three files it writes, read
//! back with the `csv` crate (a general-purpose RFC 4180 reader), and its refusals of bad input
//! before any file is left behind.

mod support;

use support::csv_rows;

fn run(args: &[&str]) -> (bool, String, String) {
    support::run("interchange", args)
}

#[test]
fn all_stations_write_rows_route_pairs_and_a_ranking() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("hubs.csv");
    let (ok, stdout, err) = run(&["--station", "all", "--window", "07:00-09:00", "--out", out.to_str().unwrap()]);
    assert!(ok, "{err}");
    assert!(stdout.contains("near misses") && stdout.contains("hubs.pairs.csv"), "{stdout}");
    let (head, rows) = csv_rows(&out);
    assert_eq!(
        head,
        [
            "station",
            "arr_trip_id",
            "arr_route_id",
            "arr_direction",
            "arr_stop_id",
            "arrival",
            "dep_route_id",
            "dep_direction",
            "dep_trip_id",
            "dep_stop_id",
            "departure",
            "change_s",
            "wait_s",
            "status",
            "missed_by_s",
            "missed_trip_id",
            "near_miss"
        ]
    );
    assert!(rows.len() > 500, "{} rows", rows.len());
    for r in &rows {
        match r[13].as_str() {
            "made" => {
                let (change, wait): (u32, u32) = (r[11].parse().unwrap(), r[12].parse().unwrap());
                assert!(wait >= change, "{r:?}");
                assert!(r[10] >= r[5], "departs no earlier than it arrives: {r:?}");
            }
            "none" | "not_possible" => assert!(r[8].is_empty() && r[10].is_empty() && r[12].is_empty(), "{r:?}"),
            other => panic!("status {other}"),
        }
        assert_ne!((r[2].as_str(), r[3].as_str()), (r[6].as_str(), r[7].as_str()), "never a route's own direction");
    }
    let (head, pairs) = csv_rows(&dir.path().join("hubs.pairs.csv"));
    assert_eq!(
        head[..7],
        ["station", "arr_route_id", "arr_route_name", "arr_direction", "dep_route_id", "dep_route_name", "dep_direction"]
    );
    // Each pair's arrivals are the rows of that pair.
    let total: u64 = pairs.iter().map(|p| p[7].parse::<u64>().unwrap()).sum();
    assert_eq!(total, rows.len() as u64);
    let (head, stations) = csv_rows(&dir.path().join("hubs.stations.csv"));
    let rank = head.iter().position(|h| h == "rank_near_misses").unwrap();
    let near = head.iter().position(|h| h == "near_misses").unwrap();
    let ranks: Vec<u32> = stations.iter().map(|s| s[rank].parse().unwrap()).collect();
    assert_eq!(ranks, (1..=stations.len() as u32).collect::<Vec<_>>(), "ranked by near misses");
    let nears: Vec<u32> = stations.iter().map(|s| s[near].parse().unwrap()).collect();
    assert!(nears.windows(2).all(|w| w[0] >= w[1]), "{nears:?}");
}

#[test]
fn bad_input_leaves_no_file() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("x.csv");
    for (args, says) in [
        (vec!["--station", "Quistenferd"], "did you mean"),
        (vec!["--station", "all", "--window", "23:00-25:30"], "outside the service day"),
        (vec!["--station", "all", "--horizon", "0"], "horizon"),
    ] {
        let mut a = args.clone();
        a.extend(["--out", out.to_str().unwrap()]);
        let (ok, _, err) = run(&a);
        assert!(!ok && err.contains(says), "{args:?}: {err}");
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0, "{args:?} left a file");
    }
}

//! `timeweave stepfree` on the demo city, through the binary: the folder it writes, read back with
//! the `csv` crate (a general-purpose RFC 4180 reader), an outage of a lift of the rail station,
//! and its refusals of bad input before any file is written.

mod support;

use support::csv_rows;

fn run(args: &[&str]) -> (bool, String, String) {
    support::run("stepfree", args)
}

#[test]
fn the_folder_holds_pairs_elements_completeness_and_the_caution() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("audit");
    let (ok, stdout, err) = run(&["--window", "07:00-08:00", "--outage", "PW_P1_ELEVATOR", "--out", out.to_str().unwrap()]);
    assert!(ok, "{err}");
    assert!(stdout.contains("Caution: Results reflect the feed's data"), "{stdout}");
    let (head, pairs) = csv_rows(&out.join("pairs.csv"));
    assert_eq!(head[..7], ["from_stop_id", "to_stop_id", "standard_p50_s", "stepfree_p50_s", "extra_p50_s", "status", "blocking"]);
    let n = (pairs.len() as f64).sqrt().ceil() as usize;
    assert_eq!(pairs.len(), n * (n - 1), "every ordered pair of {n} places");
    let status = head.iter().position(|h| h == "status").unwrap();
    let outage = head.iter().position(|h| h == "outage_status").unwrap();
    let outage_blocking = head.iter().position(|h| h == "outage_blocking").unwrap();
    let (mut lost, mut slower) = (0, 0);
    for p in &pairs {
        match p[status].as_str() {
            "step_free" => match (p[2].parse::<f64>(), p[3].parse::<f64>()) {
                // A median exists when at least half the departures have a journey.
                (Ok(a), Ok(b)) => assert!((b - a - p[4].parse::<f64>().unwrap()).abs() < 1e-6, "{p:?}"),
                _ => assert!(p[4].is_empty(), "{p:?}"),
            },
            "blocked" => assert!(p[3].is_empty() && p[4].is_empty(), "{p:?}"),
            "no_journey" => {}
            other => panic!("status {other}"),
        }
        slower += (p[outage] == "slower") as u32;
        if p[outage] == "lost" {
            lost += 1;
            assert_eq!(p[outage_blocking], "pathway:PW_P1_ELEVATOR", "{p:?}");
        }
    }
    // Platform 1 is step-free only by this lift (demo-data/README.md); with it out, journeys
    // through platform 1 move to other platforms and trains, or are lost.
    assert!(lost + slower > 0, "the platform 1 lift out changes some pairs");
    assert!(pairs.iter().any(|p| p[status] == "blocked" && !p[6].is_empty()), "blocked pairs are explained");
    let (head, elements) = csv_rows(&out.join("elements.csv"));
    assert_eq!(
        head,
        [
            "element_kind",
            "element_id",
            "name",
            "pairs_blocked",
            "pairs_unblocked_if_fixed",
            "origins_concerned",
            "origins_rerun",
            "estimated"
        ]
    );
    assert!(!elements.is_empty());
    let opened: Vec<u32> = elements.iter().map(|e| e[4].parse().unwrap_or(0)).collect();
    assert!(opened.windows(2).all(|w| w[0] >= w[1]), "ranked by pairs opened if fixed: {opened:?}");
    let (_, outages) = csv_rows(&out.join("outages.csv"));
    assert_eq!(outages[0][..2], ["pathway", "PW_P1_ELEVATOR"]);
    let (_, completeness) = csv_rows(&out.join("completeness.csv"));
    assert!(completeness.iter().any(|c| c[0] == "feed") && completeness.iter().any(|c| c[0] == "route"));
    let about = std::fs::read_to_string(out.join("about.txt")).unwrap();
    assert!(about.contains("CAUTION: Results reflect the feed's data") && about.contains("Definitions:"));
}

#[test]
fn bad_input_is_refused_before_any_file() {
    let dir = tempfile::tempdir().unwrap();
    let pairs = dir.path().join("pairs.csv");
    std::fs::write(&pairs, "from_stop_id,to_stop_id\nORR_QSF,ORR_CEN\nORR_QSF,NO_SUCH_STOP\n").unwrap();
    let alerts = dir.path().join("alerts.pb");
    std::fs::write(&alerts, "stop_id,effect\nORR_CEN,ACCESSIBILITY_ISSUE\n").unwrap();
    let out = dir.path().join("audit");
    for (args, says) in [
        (vec!["--pairs", pairs.to_str().unwrap()], "line 3: field to_stop_id"),
        (vec!["--outage", "PW_P1_ELEVATR"], "pathway:PW_P1_ELEVATOR"),
        (vec!["--alerts", alerts.to_str().unwrap()], "not a GTFS-Realtime FeedMessage"),
        (vec!["--pairs", "sample:0"], "sample of 0 pairs"),
    ] {
        let mut a = vec!["--window", "07:00-08:00"];
        a.extend(args.iter().copied());
        a.extend(["--out", out.to_str().unwrap()]);
        let (ok, _, err) = run(&a);
        assert!(!ok && err.contains(says), "{args:?}: {err}");
        assert!(!out.exists() || std::fs::read_dir(&out).unwrap().count() == 0, "{args:?} left a file");
    }
}

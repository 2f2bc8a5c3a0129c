//! `timeweave compare` through the binary: the demo city against itself without its ferry, the
//! folder read back with the `csv` crate (a general-purpose RFC 4180 reader), and the refusals of
//! bad input before any file is written.

use std::path::{Path, PathBuf};
use std::process::Command;

mod support;

use support::{csv_rows, demo};

fn compare(after_city: &Path, extra: &[&str], out: &Path) -> (bool, String, String) {
    let o = Command::new(env!("CARGO_BIN_EXE_timeweave"))
        .arg("compare")
        .args(["--before"])
        .arg(demo("oskerveld-city"))
        .args(["--before"])
        .arg(demo("oskerveld-rail"))
        .args(["--after"])
        .arg(after_city)
        .args(["--after"])
        .arg(demo("oskerveld-rail"))
        .args(["--date", "2026-12-02", "--window", "07:00-09:00"])
        .args(extra)
        .arg("--out")
        .arg(out)
        .output()
        .expect("run the timeweave binary");
    (o.status.success(), String::from_utf8_lossy(&o.stdout).into_owned(), String::from_utf8_lossy(&o.stderr).into_owned())
}

/// The demo city without route `route`'s trips.
fn without(route: &str, dir: &Path) -> PathBuf {
    let to = dir.join("city-after");
    std::fs::create_dir_all(&to).unwrap();
    let mut gone = std::collections::HashSet::new();
    for e in std::fs::read_dir(demo("oskerveld-city")).unwrap() {
        let p = e.unwrap().path();
        let name = p.file_name().unwrap().to_owned();
        let mut text = std::fs::read_to_string(&p).unwrap();
        if name == "trips.txt" {
            text = text
                .lines()
                .filter(|l| {
                    let keep = !l.starts_with(&format!("{route},"));
                    if !keep {
                        gone.insert(l.split(',').nth(2).unwrap().to_string());
                    }
                    keep
                })
                .map(|l| format!("{l}\n"))
                .collect();
        }
        std::fs::write(to.join(name), text).unwrap();
    }
    let st = std::fs::read_to_string(to.join("stop_times.txt")).unwrap();
    let kept: String = st.lines().filter(|l| !gone.contains(l.split(',').next().unwrap())).map(|l| format!("{l}\n")).collect();
    std::fs::write(to.join("stop_times.txt"), kept).unwrap();
    to
}

#[test]
fn the_demo_without_its_ferry() {
    let dir = tempfile::tempdir().unwrap();
    let after = without("F1", dir.path());
    let out = dir.path().join("cmp");
    let (ok, stdout, err) = compare(&after, &[], &out);
    assert!(ok, "{err}");
    assert!(stdout.contains("% of pairs are more than 5 min slower") && stdout.contains("Places that lose all service:"), "{stdout}");
    let (head, pairs) = csv_rows(&out.join("pairs.csv"));
    assert_eq!(head, ["from_stop_id", "to_stop_id", "before_p50_s", "after_p50_s", "before_p90_s", "after_p90_s", "status"]);
    assert!(pairs.iter().all(|p| p[6] != "faster" && p[6] != "gained"), "taking trips away never speeds anything up");
    assert!(pairs.iter().any(|p| p[6] == "lost"));
    let (head, stations) = csv_rows(&out.join("stations.csv"));
    let service = head.iter().position(|h| h == "service").unwrap();
    assert!(stations.iter().any(|s| s[service] == "lost"));
    let (_, routes) = csv_rows(&out.join("routes.csv"));
    let f1 = routes.iter().find(|r| r[0] == "F1").expect("F1");
    assert_eq!(f1[3], "0", "{f1:?}");
    assert!(std::fs::read_to_string(out.join("about.txt")).unwrap().contains("Definitions:"));
}

#[test]
fn bad_input_is_refused_before_any_file() {
    let dir = tempfile::tempdir().unwrap();
    let after = without("F1", dir.path());
    let out = dir.path().join("cmp");
    let pairs = dir.path().join("pairs.csv");
    std::fs::write(&pairs, "from_stop_id,to_stop_id\nOCT_WMD,OCT_FNR\nOCT_WMD,NOWHERE\n").unwrap();
    for (extra, says) in [
        (vec!["--after-date", "2031-01-01"], "after version:"),
        (vec!["--pairs", pairs.to_str().unwrap()], "line 3: field to_stop_id"),
        (vec!["--pairs", "sample:0"], "sample of 0 pairs"),
    ] {
        let (ok, _, err) = compare(&after, &extra, &out);
        assert!(!ok && err.contains(says), "{extra:?}: {err}");
        assert!(!out.exists(), "{extra:?} left {}", out.display());
    }
}

//! `timeweave snapshot`, `timeweave kiosk` and `timeweave board` on the demo city, as a user runs
//! them. Sources: the W3C Web App Manifest (members name, start_url, display, icons with src,
//! sizes and type) and Service Workers (the worker's script at the folder root, so its scope
//! covers the page); the GTFS Schedule reference for the stop ids refused.

mod support;

use std::path::{Path, PathBuf};
use std::process::Command;

use support::demo;

fn timeweave(args: &[&str]) -> (bool, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_timeweave")).args(args).output().expect("run the timeweave binary");
    (out.status.success(), String::from_utf8_lossy(&out.stdout).into_owned(), String::from_utf8_lossy(&out.stderr).into_owned())
}

fn feeds() -> Vec<String> {
    let (a, b) = (demo("oskerveld-city"), demo("oskerveld-rail"));
    vec!["--feed".into(), a.display().to_string(), "--feed".into(), b.display().to_string()]
}

fn with_feeds(command: &str, rest: &[&str]) -> (bool, String, String) {
    let mut args: Vec<String> = vec![command.to_string()];
    args.extend(feeds());
    args.extend(rest.iter().map(|s| s.to_string()));
    timeweave(&args.iter().map(String::as_str).collect::<Vec<_>>())
}

/// A page folder like the built `www/`: the kiosk's own files from the source tree, and stand-in
/// WASM files (this test checks the folder, not the module; the browser test runs the real one).
fn page_folder(root: &Path) -> PathBuf {
    let www = root.join("www");
    std::fs::create_dir_all(www.join("kiosk")).unwrap();
    std::fs::create_dir_all(www.join("pkg")).unwrap();
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../www/kiosk");
    for f in std::fs::read_dir(&src).unwrap() {
        let f = f.unwrap();
        std::fs::copy(f.path(), www.join("kiosk").join(f.file_name())).unwrap();
    }
    std::fs::write(www.join("pkg/timeweave.js"), "export default function init() {}\n").unwrap();
    std::fs::write(www.join("pkg/timeweave_bg.wasm"), b"\0asm\x01\0\0\0").unwrap();
    www
}

fn files_under(dir: &Path, base: &Path, out: &mut Vec<String>) {
    for e in std::fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        if p.is_dir() {
            files_under(&p, base, out);
        } else {
            out.push(p.strip_prefix(base).unwrap().to_string_lossy().replace('\\', "/"));
        }
    }
}

#[test]
fn a_snapshot_is_read_by_every_command_and_a_damaged_one_is_named() {
    let dir = tempfile::tempdir().unwrap();
    let snap = dir.path().join("demo.twsnap");
    let (ok, out, err) = with_feeds("snapshot", &["--from", "2026-12-01", "--days", "7", "--out", snap.to_str().unwrap()]);
    assert!(ok, "{err}");
    assert!(out.contains("service dates 2026-12-01 to 2026-12-07"), "{out}");
    let s = snap.to_str().unwrap();
    let (ok, out, err) = timeweave(&["check", "--feed", s]);
    assert!(ok, "{err}");
    assert!(out.contains("2026-12-01 to 2026-12-07"), "{out}");
    // The same plan from the snapshot as from the feeds.
    let plan = ["--from", "ORR_QSF", "--to", "ORR_TLM", "--date", "2026-12-02", "--at", "08:00", "--json"];
    let (_, from_feeds, _) = with_feeds("plan", &plan);
    let mut args = vec!["plan", "--feed", s];
    args.extend(plan);
    let (ok, from_snap, err) = timeweave(&args);
    assert!(ok, "{err}");
    assert_eq!(from_snap, from_feeds);
    // One byte changed: refused, naming the file and the reason.
    let mut bytes = std::fs::read(&snap).unwrap();
    let mid = bytes.len() / 2;
    bytes[mid] ^= 1;
    std::fs::write(&snap, &bytes).unwrap();
    let (ok, _, err) = timeweave(&["check", "--feed", s]);
    assert!(!ok);
    assert!(err.contains(s) && err.contains("damaged"), "{err}");
}

#[test]
fn the_kiosk_folder_holds_everything_the_page_needs() {
    let dir = tempfile::tempdir().unwrap();
    let www = page_folder(dir.path());
    let out = dir.path().join("hall");
    let args = ["--stop", "ORR_CEN", "--destinations", "OCT_WMD,ORR_VMJ", "--from", "2026-12-01", "--days", "3"];
    let mut all: Vec<&str> = args.to_vec();
    let (w, o) = (www.to_str().unwrap(), out.to_str().unwrap());
    all.extend(["--www", w, "--out", o]);
    let (ok, said, err) = with_feeds("kiosk", &all);
    assert!(ok, "{err}");
    assert!(said.contains("service dates 2026-12-01 to 2026-12-03"), "{said}");
    let config: serde_json::Value = serde_json::from_slice(&std::fs::read(out.join("kiosk.json")).unwrap()).unwrap();
    assert_eq!(config["stop"], "ORR_CEN");
    assert_eq!(config["destinations"], serde_json::json!(["OCT_WMD", "ORR_VMJ"]));
    assert_eq!((config["first_date"].as_str(), config["last_date"].as_str()), (Some("2026-12-01"), Some("2026-12-03")));
    // W3C Web App Manifest: the members a browser needs to install and open it.
    let m: serde_json::Value = serde_json::from_slice(&std::fs::read(out.join("manifest.webmanifest")).unwrap()).unwrap();
    assert!(m["name"].as_str().is_some_and(|n| n.contains("Oskerveld Central")), "{m}");
    assert_eq!(m["start_url"], "./");
    assert_eq!(m["display"], "fullscreen");
    let icon = &m["icons"][0];
    assert!(out.join(icon["src"].as_str().unwrap()).is_file());
    assert_eq!((icon["sizes"].as_str(), icon["type"].as_str()), (Some("any"), Some("image/svg+xml")));
    // Service Workers: sw.js at the root, so its scope is the whole folder; it keeps every file.
    assert!(out.join("sw.js").is_file());
    let list = std::fs::read_to_string(out.join("kiosk-files.js")).unwrap();
    let listed: Vec<String> =
        serde_json::from_str(list.lines().find_map(|l| l.strip_prefix("self.KIOSK_FILES = ")).unwrap().trim_end_matches(';')).unwrap();
    let mut present = Vec::new();
    files_under(&out, &out, &mut present);
    for f in &present {
        if f != "sw.js" && f != "kiosk-files.js" {
            assert!(listed.contains(f), "{f} is not kept by the service worker: {listed:?}");
        }
    }
    for f in listed.iter().filter(|f| *f != "./") {
        assert!(out.join(f).is_file(), "{f} is listed but not written");
    }
    // The folder's snapshot loads.
    let (ok, said, err) = timeweave(&["check", "--feed", out.join("timetable.twsnap").to_str().unwrap()]);
    assert!(ok && said.contains("2026-12-01 to 2026-12-03"), "{said}{err}");
    // Written again over itself: replaced whole.
    std::fs::write(out.join("kiosk.json.extra"), "x").unwrap();
    let (ok, _, err) = with_feeds("kiosk", &all);
    assert!(ok, "{err}");
    assert!(!out.join("kiosk.json.extra").exists());
}

#[test]
fn bad_kiosk_input_is_refused_before_anything_is_written() {
    let dir = tempfile::tempdir().unwrap();
    let www = page_folder(dir.path());
    let out = dir.path().join("hall");
    let (w, o) = (www.to_str().unwrap(), out.to_str().unwrap());
    let cases: [(&[&str], &str); 5] = [
        (&["--stop", "Oskerveld Centrl", "--from", "2026-12-01"], "did you mean: Oskerveld Central"),
        (
            &["--stop", "ORR_CEN", "--destinations", "OCT_WMD,NOWHERE", "--from", "2026-12-01"],
            "--destinations: no stop matches \"NOWHERE\"",
        ),
        (&["--stop", "ORR_CEN", "--from", "2027-03-30", "--days", "7"], "which cover 2026-11-01 to 2027-03-31"),
        (&["--stop", "ORR_CEN", "--from", "2026-12-01", "--days", "0"], "--days 0 must be 1-366"),
        (&["--stop", "ORR_CEN", "--from", "2026-12-01", "--www", "/nonexistent-www"], "build the page"),
    ];
    for (args, expect) in cases {
        let mut all = args.to_vec();
        if !args.contains(&"--www") {
            all.extend(["--www", w]);
        }
        all.extend(["--out", o]);
        let (ok, _, err) = with_feeds("kiosk", &all);
        assert!(!ok, "{args:?} was accepted");
        assert!(err.contains(expect), "{args:?}: {err}");
        assert!(!out.exists(), "{args:?} left {o}");
    }
    let mut left = Vec::new();
    files_under(dir.path(), dir.path(), &mut left);
    assert!(left.iter().all(|f| f.starts_with("www/")), "temporary files left: {left:?}");
    // A folder that holds something else is not replaced.
    std::fs::create_dir_all(&out).unwrap();
    std::fs::write(out.join("notes.txt"), "mine").unwrap();
    let (ok, _, err) = with_feeds("kiosk", &["--stop", "ORR_CEN", "--from", "2026-12-01", "--www", w, "--out", o]);
    assert!(!ok && err.contains("is not a folder this command wrote"), "{err}");
    assert_eq!(std::fs::read_to_string(out.join("notes.txt")).unwrap(), "mine");
}

#[test]
fn the_board_lists_departures_journeys_and_the_caution() {
    let (ok, out, err) = with_feeds("board", &["--stop", "ORR_CEN", "--destinations", "OCT_WMD", "--at", "2026-12-02T07:00:00Z"]);
    assert!(ok, "{err}");
    assert!(out.starts_with("Oskerveld Central (ORR_CEN) at 08:00 on 2026-12-02 (Etc/GMT-1)"), "{out}");
    // demo-data/oskerveld-rail/stop_times.txt: R2_WKD_1_0815 leaves platform 3 at 08:15; R2_WKD_0_0805
    // ends there at 08:19 (pickup_type 1), so it is not a departure.
    assert!(out.contains("R2 to Mossgrave Halt: 08:15 (15 min platform 3, step-free)"), "{out}");
    assert!(out.contains("to Wendmoor Depot (OCT_WMD): standard 08:09-08:21"), "{out}");
    assert!(out.contains("confirm on site and with the operator"), "{out}");
    let (ok, _, err) = with_feeds("board", &["--stop", "ORR_CEN", "--at", "yesterday"]);
    assert!(!ok && err.contains("RFC 3339"), "{err}");
}

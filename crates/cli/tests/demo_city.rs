//! The demo city in demo-data/ through the command-line binary.
//!
//! The expected journeys come from demo-data/README.md ("Designed step-free cases", case A): that
//! is the data's own design note, recomputed by demo-data/check_city.py, not an outside source.
//! The JSON field names come from the result shape in DEVELOPERS.md.

use std::path::{Path, PathBuf};
use std::process::Command;

use serde_json::Value;

fn demo(folder: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../../demo-data").join(folder)
}

/// Runs `timeweave plan` on both demo feeds for case A; returns (success, stdout, stderr).
fn cli_plan(extra: &[&str]) -> (bool, String, String) {
    let (city, rail) = (demo("oskerveld-city"), demo("oskerveld-rail"));
    let out = Command::new(env!("CARGO_BIN_EXE_timeweave"))
        .arg("plan")
        .arg("--feed")
        .arg(&city)
        .arg("--feed")
        .arg(&rail)
        .args(["--date", "2026-12-02", "--at", "08:00"])
        .args(extra)
        .output()
        .expect("run the timeweave binary");
    (out.status.success(), String::from_utf8_lossy(&out.stdout).into_owned(), String::from_utf8_lossy(&out.stderr).into_owned())
}

fn cli_json(extra: &[&str]) -> Value {
    let mut args = vec!["--from", "Quistenford", "--to", "Tollimere", "--json"];
    args.extend_from_slice(extra);
    let (ok, out, err) = cli_plan(&args);
    assert!(ok, "timeweave plan failed: {err}");
    serde_json::from_str(&out).unwrap_or_else(|e| panic!("--json output is not JSON ({e}):\n{out}"))
}

fn ride(it: &Value) -> &Value {
    it["legs"].as_array().expect("legs").iter().find(|l| l["kind"] == "ride").expect("a ride leg")
}

#[test]
fn case_a_standard_and_step_free_differ_by_the_trips_wheelchair_accessible() {
    // demo-data/README.md, case A: standard R1_WKD_0_0754 dep 08:03 arr 08:34.
    let standard = cli_json(&[]);
    let it = &standard["journeys"][0];
    assert_eq!((it["depart"].as_str(), it["arrive"].as_str()), (Some("08:03"), Some("08:34")), "{it}");
    let r = ride(it);
    assert_eq!(r["trip_id"], "R1_WKD_0_0754");
    // README: "The standard journey's step-free status is 'no', with the reason being that trip",
    // whose wheelchair_accessible is 2.
    assert_eq!(it["step_free"], "no");
    assert_eq!(r["step_free"]["status"], "no");
    // The check is data (element, GTFS field, value) with its words beside it.
    let checks = r["step_free"]["checks"].as_array().expect("checks");
    let trip = checks.iter().find(|c| c["element"] == "trip").expect("a trip check");
    assert_eq!(
        (trip["trip_id"].as_str(), trip["wheelchair_accessible"].as_str(), trip["verdict"].as_str()),
        (Some("R1_WKD_0_0754"), Some("no"), Some("no"))
    );
    let text = trip["text"].as_str().expect("text");
    assert!(text.contains("R1_WKD_0_0754") && text.contains("wheelchair_accessible") && text.contains("(2)"), "{text}");
    assert!(standard["step_free_extra_s"].is_null());

    // README, case A strict: R1_WKD_0_0854 (wheelchair_accessible 1) dep 09:03 arr 09:34, +3600 s.
    let strict = cli_json(&["--step-free"]);
    let it = &strict["journeys"][0];
    assert_eq!((it["depart"].as_str(), it["arrive"].as_str()), (Some("09:03"), Some("09:34")), "{it}");
    assert_eq!(ride(it)["trip_id"], "R1_WKD_0_0854");
    assert_eq!(it["step_free"], "yes");
    assert_eq!(strict["asked"]["step_free"], "strict");
    let extra = strict["step_free_extra_s"].as_i64().expect("step_free_extra_s is a number");
    assert!(extra > 0);
    assert_eq!(extra, 3600);

    // README, case A lenient: R1_WKD_0_0824 (wheelchair_accessible empty) dep 08:33 arr 09:04, +1800 s.
    let lenient = cli_json(&["--step-free", "lenient"]);
    let it = &lenient["journeys"][0];
    assert_eq!((it["depart"].as_str(), it["arrive"].as_str()), (Some("08:33"), Some("09:04")), "{it}");
    assert_eq!(ride(it)["trip_id"], "R1_WKD_0_0824");
    assert_eq!(it["step_free"], "unknown");
    assert_eq!(lenient["step_free_extra_s"], 1800);
    let notes = lenient["notes"].as_array().expect("notes");
    assert!(
        notes.iter().any(|n| n["code"] == "lenient_unknown_used" && n["text"].is_string()),
        "lenient results relying on unknown values are flagged: {notes:?}"
    );
    assert!(lenient["caution"].as_str().is_some_and(|c| c.contains("Confirm on site")), "step-free JSON carries the caution");
}

fn keys(v: &Value) -> Vec<&str> {
    let mut k: Vec<&str> = v.as_object().unwrap_or_else(|| panic!("not an object: {v}")).keys().map(String::as_str).collect();
    k.sort_unstable();
    k
}

fn has_all(v: &Value, documented: &[&str]) {
    let present = keys(v);
    let missing: Vec<&&str> = documented.iter().filter(|k| !present.contains(k)).collect();
    assert!(missing.is_empty(), "documented fields {missing:?} missing from {present:?}");
}

#[test]
fn json_output_has_the_documented_fields() {
    let r = cli_json(&[]);
    // DEVELOPERS.md, "The result shape".
    has_all(&r, &["asked", "journeys", "nothing_found", "step_free_extra_s", "fewest_rides", "notes"]);
    has_all(
        &r["asked"],
        &[
            "from",
            "to",
            "date",
            "time",
            "step_free",
            "walk_limit_m",
            "walking_speed_mps",
            "change_penalty_s",
            "max_duration_s",
            "next",
            "fewest_rides",
        ],
    );
    assert_eq!(
        (r["asked"]["date"].as_str(), r["asked"]["time"].as_str(), r["asked"]["step_free"].as_str()),
        (Some("2026-12-02"), Some("08:00"), Some("off"))
    );
    assert!(r["nothing_found"].is_null());
    let its = r["journeys"].as_array().expect("journeys");
    assert!(!its.is_empty() && its.len() <= 3, "the CLI asks for 3 options by default");
    for it in its {
        has_all(
            it,
            &[
                "depart_s",
                "arrive_s",
                "depart",
                "arrive",
                "duration_s",
                "rides",
                "ride_s",
                "walk_s",
                "wait_s",
                "cost_s",
                "step_free",
                "legs",
            ],
        );
        let (d, a) = (it["depart_s"].as_u64().expect("depart_s"), it["arrive_s"].as_u64().expect("arrive_s"));
        assert_eq!(it["duration_s"].as_u64(), Some(a - d));
        // Where the time goes adds up to the whole journey (DEVELOPERS.md, the result shape).
        let split = ["ride_s", "walk_s", "wait_s"].iter().map(|k| it[*k].as_u64().expect("seconds")).sum::<u64>();
        assert_eq!(split, a - d, "{it}");
        for leg in it["legs"].as_array().expect("legs") {
            has_all(
                leg,
                &[
                    "kind",
                    "start",
                    "end",
                    "depart_s",
                    "arrive_s",
                    "depart",
                    "arrive",
                    "duration_s",
                    "wait_before_s",
                    "route",
                    "trip_id",
                    "headsign",
                    "frequency_based",
                    "calls",
                    "distance_m",
                    "pathways",
                    "step_free",
                ],
            );
            has_all(&leg["step_free"], &["status", "checks"]);
            for check in leg["step_free"]["checks"].as_array().expect("checks") {
                has_all(check, &["element", "verdict", "text"]);
            }
            for stop in [&leg["start"], &leg["end"]] {
                has_all(stop, &["stop_id", "feed", "name", "platform_code", "lat", "lon", "station"]);
            }
            assert!(["walk", "ride", "in_station"].contains(&leg["kind"].as_str().expect("kind")));
        }
    }
    let ride = ride(&its[0]);
    has_all(&ride["route"], &["route_id", "short_name", "long_name", "mode", "color", "text_color"]);
    // demo-data/README.md route table: R1, rail, colours 6D1A47 / FFFFFF.
    assert_eq!((ride["route"]["short_name"].as_str(), ride["route"]["mode"].as_str()), (Some("R1"), Some("rail")));
    assert_eq!((ride["route"]["color"].as_str(), ride["route"]["text_color"].as_str()), (Some("#6D1A47"), Some("#FFFFFF")));
    assert_eq!((ride["start"]["stop_id"].as_str(), ride["end"]["stop_id"].as_str()), (Some("ORR_QSF"), Some("ORR_TLM")));
    // demo-data/README.md: R1 runs Quistenford – Oskerveld West – Oskerveld Central – Oskerveld East – Tollimere.
    let calls: Vec<&str> = ride["calls"].as_array().expect("calls").iter().filter_map(|s| s["name"].as_str()).collect();
    assert_eq!(calls, ["Oskerveld West", "Oskerveld Central", "Oskerveld East"]);
    has_all(&ride["calls"][0], &["stop_id", "name", "arrive", "depart", "arrive_s", "depart_s"]);
}

#[test]
fn step_free_text_output_carries_the_caution() {
    let (ok, out, err) = cli_plan(&["--from", "Quistenford", "--to", "Tollimere", "--step-free"]);
    assert!(ok, "{err}");
    // The project rules: step-free results show the caution about feed data.
    assert!(out.contains("may be incomplete or out of date") && out.contains("Confirm on site"), "{out}");
    assert!(out.contains("60 min later"), "{out}");
}

#[test]
fn an_unknown_stop_name_fails_with_suggestions() {
    let (ok, _, stderr) = cli_plan(&["--from", "Quistenferd", "--to", "Tollimere"]);
    assert!(!ok);
    assert!(stderr.contains("no stop matches") && stderr.contains("Quistenford"), "{stderr}");
}

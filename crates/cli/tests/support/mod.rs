//! Shared by the binary's tests: run `timeweave <command>` on the demo city, read CSV back.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Command;

pub fn demo(folder: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../../demo-data").join(folder)
}

/// `timeweave COMMAND --feed city --feed rail --date 2026-12-02 ARGS…`: (success, stdout, stderr).
pub fn run(command: &str, args: &[&str]) -> (bool, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_timeweave"))
        .arg(command)
        .arg("--feed")
        .arg(demo("oskerveld-city"))
        .arg("--feed")
        .arg(demo("oskerveld-rail"))
        .args(["--date", "2026-12-02"])
        .args(args)
        .output()
        .expect("run the timeweave binary");
    (out.status.success(), String::from_utf8_lossy(&out.stdout).into_owned(), String::from_utf8_lossy(&out.stderr).into_owned())
}

/// Header and records of a CSV file, through the `csv` crate (a general-purpose RFC 4180 reader).
pub fn csv_rows(path: &Path) -> (Vec<String>, Vec<Vec<String>>) {
    let mut r = csv::Reader::from_path(path).expect("open CSV");
    let head = r.headers().expect("header").iter().map(str::to_string).collect();
    let rows = r.records().map(|x| x.expect("RFC 4180 record").iter().map(str::to_string).collect()).collect();
    (head, rows)
}

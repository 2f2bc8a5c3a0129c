//! A tiny GTFS feed builder for the integration tests.
//!
//! A [`Feed`] is a list of named `.txt` files held as text. It is written to a fresh folder under
//! the system temp directory (removed again when the `tempfile` guard drops) or zipped in memory,
//! and loaded the way the shells load feeds (`timeweave_disk::load_feed` / `Engine::load_zip`), so every
//! test goes through the same ingest path as the CLI and the page.
#![allow(dead_code)]

use std::io::{Cursor, Write};
use std::path::{Path, PathBuf};

use timeweave::engine::{Engine, PlanQuery, PlanResult};
use timeweave::route::search::StepFree;

/// GTFS files by name, in the order they were added.
#[derive(Debug, Clone, Default)]
pub struct Feed {
    pub files: Vec<(String, String)>,
}

impl Feed {
    /// A feed with one agency in time zone `tz` and no other file yet.
    pub fn new(tz: &str) -> Feed {
        Feed::default().file(
            "agency.txt",
            &format!("agency_id,agency_name,agency_url,agency_timezone\nTA,Test Transit,https://transit.example/,{tz}\n"),
        )
    }

    /// Sets (or replaces) one file. Leading spaces of each line are removed, so tests can indent
    /// their CSV text.
    pub fn file(mut self, name: &str, text: &str) -> Feed {
        let body: String = text.lines().map(str::trim_start).filter(|l| !l.is_empty()).map(|l| format!("{l}\n")).collect();
        self.files.retain(|(n, _)| n != name);
        self.files.push((name.to_string(), body));
        self
    }

    /// One route `R` of type 3 (bus), for feeds that need nothing more.
    pub fn one_route(self) -> Feed {
        self.file("routes.txt", "route_id,agency_id,route_short_name,route_long_name,route_type\nR,TA,1,Test line,3\n")
    }

    /// Writes the files into a new, empty temporary folder (removed when the guard drops).
    pub fn write_dir(&self) -> tempfile::TempDir {
        let dir = tempfile::Builder::new().prefix("timeweave-test-").tempdir().expect("create temp feed folder");
        for (name, text) in &self.files {
            std::fs::write(dir.path().join(name), text).expect("write feed file");
        }
        dir
    }

    /// The files as a deflated zip archive in memory.
    pub fn zip(&self) -> Vec<u8> {
        let mut w = zip::ZipWriter::new(Cursor::new(Vec::new()));
        let options = zip::write::SimpleFileOptions::default().compression_method(zip::CompressionMethod::Deflated);
        for (name, text) in &self.files {
            w.start_file(name.as_str(), options).expect("zip entry");
            w.write_all(text.as_bytes()).expect("zip write");
        }
        w.finish().expect("zip finish").into_inner()
    }

    /// A new engine with this feed loaded from a folder (`timeweave_disk::load_feed`).
    pub fn load(&self) -> Engine {
        let dir = self.write_dir();
        let mut engine = Engine::new();
        if let Err(e) = timeweave_disk::load_feed(&mut engine, dir.path(), &mut |_, _| {}) {
            panic!("test feed did not load: {e}");
        }
        engine
    }

    /// A new engine with this feed loaded from zip bytes (`Engine::load_zip`).
    pub fn load_zip(&self) -> Engine {
        let mut engine = Engine::new();
        if let Err(e) = engine.load_zip("test", &self.zip(), &mut |_, _| {}) {
            panic!("test feed did not load: {e}");
        }
        engine
    }
}

/// A planning query with the given fields and defaults for the rest.
pub fn query(from: &str, to: &str, date: &str, time: &str) -> PlanQuery {
    PlanQuery { from: from.into(), to: to.into(), date: date.into(), time: time.into(), ..PlanQuery::default() }
}

/// Plans `q` with the step-free mode `sf`, panicking on a query error (the tests' queries are valid).
pub fn plan(engine: &mut Engine, q: &PlanQuery, sf: StepFree) -> PlanResult {
    let q = PlanQuery { step_free: sf, ..q.clone() };
    match engine.plan(&q) {
        Ok(r) => r,
        Err(e) => panic!("query {q:?} failed: {e}"),
    }
}

/// Departure clock texts of all itineraries.
pub fn departures(r: &PlanResult) -> Vec<String> {
    r.journeys.iter().map(|i| i.depart.clone()).collect()
}

/// GTFS time text `HH:MM:SS` for seconds after the service day's origin (hours may pass 24).
pub fn hms(s: u32) -> String {
    format!("{:02}:{:02}:{:02}", s / 3600, s / 60 % 60, s % 60)
}

/// Path of a folder of the demo city.
pub fn demo(folder: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data").join(folder)
}
pub mod badfeeds;
pub mod replay;

/// SplitMix64 (Steele, Lea, Flood 2014): a small deterministic generator, so random feeds are the
/// same on every run.
pub struct Rng(pub u64);

impl Rng {
    pub fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    pub fn below(&mut self, n: u32) -> u32 {
        (self.next() % n as u64) as u32
    }
    pub fn chance(&mut self, percent: u32) -> bool {
        self.below(100) < percent
    }
    pub fn pick<'a>(&mut self, items: &[&'a str]) -> &'a str {
        items[self.below(items.len() as u32) as usize]
    }
}

/// A new engine with both demo feeds loaded from their folders, as the CLI loads them.
pub fn demo_engine() -> Engine {
    let mut engine = Engine::new();
    for folder in ["oskerveld-city", "oskerveld-rail"] {
        if let Err(e) = timeweave_disk::load_feed(&mut engine, &demo(folder), &mut |_, _| {}) {
            panic!("demo feed {folder} does not load: {e}");
        }
    }
    engine
}

//! Window benchmarks (issue 14), side by side in one run on generated feeds (`synth`, seed 1):
//!
//! - **metro, one origin, 07:00–09:00 at 1 min (120 departures):** the profile search
//!   (`search::profile`, every departure's arrivals handed on) against its baseline, 120 separate
//!   one-to-all sweeps (`search::one_to_all`) at the same departures; the same origins, taken in
//!   turns. Every departure's arrivals of the two must be equal (cut at the time limit, as the
//!   window reads them); disagreements are counted. Also the whole per-origin work of a matrix
//!   row (`WindowRun::origin_rows`: profile, travel times per place, percentiles).
//! - **region, the all-places matrix over 07:00–09:00** with `analysis::matrix::run` on all cores,
//!   rows counted but not written, and the resident memory after a tenth of the origins and at the
//!   end (streamed output: it must not grow with the origins).
//!
//! Run with `cargo bench --bench window`; writes `bench-out/window.md`. Settings (environment):
//! `TIMEWEAVE_BENCH_WINDOW_ORIGINS` (metro origins, default 20), `TIMEWEAVE_BENCH_PRESETS`
//! (default `metro,region`).

use std::fmt::Write as _;
use std::path::Path;
use std::sync::atomic::AtomicBool;
use std::time::Instant;

use chrono::NaiveDate;
use timeweave::analysis::matrix;
use timeweave::analysis::window::{Rows, TravelTimes};
use timeweave::engine::window::WindowQuery;
use timeweave::route::search::{self, Params, SearchState, Window};
use timeweave::timetable::StopIdx;
use timeweave_synth::Preset;

mod common;
use common::{load, median};

const DATE: &str = "2026-12-02";

fn rss_mb() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| s.lines().find(|l| l.starts_with("VmRSS:")).and_then(|l| l.split_whitespace().nth(1)?.parse::<f64>().ok()))
        .map_or(f64::NAN, |kb| kb / 1024.0)
}

fn query() -> WindowQuery {
    WindowQuery {
        date: DATE.into(),
        window: "07:00-09:00".into(),
        percentiles: Some(vec![5.0, 25.0, 50.0, 75.0, 95.0]),
        ..Default::default()
    }
}

/// (profile ms, 120 sweeps ms, origin_rows ms) medians, origins, disagreements.
fn metro(out: &mut String) {
    let n: usize = std::env::var("TIMEWEAVE_BENCH_WINDOW_ORIGINS").ok().and_then(|v| v.parse().ok()).unwrap_or(20);
    let mut engine = load(Preset::Metro);
    let setting = engine.window_setting(&query()).expect("window");
    let places = engine.places.clone();
    let run = engine.window_run(&setting);
    let (tt, net, p): (_, _, &Params) = (run.tt, run.net, run.p);
    let deps = &setting.spec.departures;
    // Origins: every k-th place, so they spread over the city.
    let step = (places.len() / n).max(1);
    let origins: Vec<usize> = (0..places.len()).step_by(step).take(n).collect();
    let mut st = SearchState::new();
    // Warm-up: walking links, the rides sorted by time.
    search::one_to_all(tt, net, &mut st, places.endpoints(0), deps[0], p);
    let (mut prof, mut sweeps, mut rows_ms) = (Vec::new(), Vec::new(), Vec::new());
    let (mut disagree, mut compared) = (0usize, 0usize);
    let mut got: Vec<Vec<u32>> = vec![Vec::new(); deps.len()];
    let (mut times, mut rows) = (TravelTimes::default(), Rows::default());
    let dest = engine_destinations(places.len());
    for &o in &origins {
        let ends: Vec<StopIdx> = places.endpoints(o).to_vec();
        let t = Instant::now();
        let w = Window { origins: &ends, departures: deps, max_rides: None };
        search::profile(tt, net, &mut st, w, p, |i, d, arr| {
            let limit = d + p.max_duration_s;
            got[i].clear();
            got[i].extend(arr.iter().map(|&a| if a > limit { u32::MAX } else { a }));
        });
        prof.push(t.elapsed().as_secs_f64() * 1e3);
        let t = Instant::now();
        let mut each = Vec::with_capacity(deps.len());
        for &d in deps {
            let limit = d + p.max_duration_s;
            each.push(
                search::one_to_all(tt, net, &mut st, &ends, d, p).iter().map(|&a| if a > limit { u32::MAX } else { a }).collect::<Vec<_>>(),
            );
        }
        sweeps.push(t.elapsed().as_secs_f64() * 1e3);
        for (i, e) in each.iter().enumerate() {
            compared += 1;
            if *e != got[i] {
                disagree += 1;
            }
        }
        let t = Instant::now();
        run.origin_rows(&mut st, o, &dest, &mut times, &mut rows);
        rows_ms.push(t.elapsed().as_secs_f64() * 1e3);
    }
    let (a, b, c) = (median(&mut prof), median(&mut sweeps), median(&mut rows_ms));
    let _ = writeln!(out, "| metro | one origin, 07:00–09:00 at 1 min ({} departures), {} origins | profile search: **{a:.1} ms** | 120 one-to-all sweeps: {b:.1} ms | **{:.1}×** faster | {disagree} of {compared} departures differ | a matrix row (profile + travel times per place + percentiles): {c:.1} ms |", deps.len(), origins.len(), b / a);
    let _ = writeln!(out, "\nTargets (metro): profile ≥ 20× faster than 120 separate one-to-all searches: {:.1}× ({}); ≤ 60 ms median native: {a:.1} ms ({}).", b / a, if b / a >= 20.0 { "met" } else { "missed" }, if a <= 60.0 { "met" } else { "missed" });
}

fn engine_destinations(n: usize) -> timeweave::analysis::window::Destinations {
    timeweave::analysis::window::Destinations { report: vec![true; n], weight: Vec::new() }
}

fn region(out: &mut String) {
    let mut engine = load(Preset::Region);
    let setting = engine.window_setting(&query()).expect("window");
    let n = engine.places.len();
    let dest = engine_destinations(n);
    let origins: Vec<usize> = (0..n).collect();
    let threads = std::thread::available_parallelism().map_or(1, |t| t.get());
    let cancel = AtomicBool::new(false);
    let run = engine.window_run(&setting);
    let rss0 = rss_mb();
    let (mut rows, mut rss_tenth) = (0u64, f64::NAN);
    let t = Instant::now();
    matrix::run(run, &origins, &dest, threads, &cancel, |i, _, r| {
        rows += r.len() as u64;
        if i == n / 10 {
            rss_tenth = rss_mb();
        }
        Ok::<(), ()>(())
    })
    .expect("matrix");
    let s = t.elapsed().as_secs_f64();
    let rss_end = rss_mb();
    let _ = writeln!(out, "| region | all {n} places × {n} places, 07:00–09:00 at 1 min, 5 percentiles, {threads} threads | **{s:.1} s** ({:.1} ms per origin per thread) | {rows} reachable pairs | resident memory before / after a tenth / at the end: {rss0:.0} / {rss_tenth:.0} / {rss_end:.0} MB |", s * 1e3 * threads as f64 / n as f64);
    let _ = writeln!(
        out,
        "\nTarget (region): the all-stations matrix over 07:00–09:00 ≤ 60 s native on this machine: {s:.1} s ({}).",
        if s <= 60.0 { "met" } else { "missed" }
    );
}

fn main() {
    let presets = std::env::var("TIMEWEAVE_BENCH_PRESETS").unwrap_or_else(|_| "metro,region".into());
    let mut out = String::from("### Window analyses (`cargo bench --bench window`)\n\nService date 2026-12-02; synth seed 1; medians; native, release build.\n\n| preset | what | ours | baseline in the same run | ratio | agreement | |\n|---|---|---|---|---|---|---|\n");
    let _ = NaiveDate::from_ymd_opt(2026, 12, 2);
    let mut targets = String::new();
    for p in presets.split(',') {
        let mut part = String::new();
        match p.trim() {
            "metro" => metro(&mut part),
            "region" => region(&mut part),
            other => eprintln!("unknown preset {other}"),
        }
        let (row, rest) = part.split_once('\n').unwrap_or((&part, ""));
        out += row;
        out += "\n";
        targets += rest;
    }
    out += &targets;
    println!("{out}");
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("bench-out");
    let _ = std::fs::create_dir_all(&dir);
    let _ = std::fs::write(dir.join("window.md"), &out);
}

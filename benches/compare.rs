//! Timetable comparison benchmark (issue 17), on the generated region feed (`synth`, seed 1)
//! against itself, with its baseline in the same run:
//!
//! - **region, every pair of places, 07:00–09:00:** the whole comparison (`engine::compare`:
//!   both versions' window profiles per origin, stations, routes, both interchange audits),
//!   rows counted, not written;
//! - **baseline:** one version's all-places matrix over the same window (`analysis::matrix::run`),
//!   the work one side of the comparison cannot do without.
//!
//! Run with `cargo bench --bench compare`; writes `bench-out/compare.md`.

use std::fmt::Write as _;
use std::path::Path;
use std::sync::atomic::AtomicBool;
use std::time::Instant;

use timeweave::analysis::matrix;
use timeweave::engine::compare::{compare, CompareQuery};
use timeweave::engine::window::WindowQuery;
use timeweave_synth::Preset;

mod common;
use common::load;

fn main() {
    let (mut before, mut after) = (load(Preset::Region), load(Preset::Region));
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    let q = CompareQuery { date: "2026-12-02".into(), window: "07:00-09:00".into(), pairs: Some("all".into()), ..Default::default() };
    let t = Instant::now();
    let mut rows = 0usize;
    let r = compare(&mut before, &mut after, &q, threads, &mut |_, _, c| {
        rows += c.len();
        true
    })
    .expect("compare")
    .expect("done");
    let full = t.elapsed().as_secs_f64();
    let setting = before
        .window_setting(&WindowQuery {
            date: q.date.clone(),
            window: q.window.clone(),
            percentiles: Some(vec![50.0, 90.0]),
            ..Default::default()
        })
        .expect("window");
    let n = before.places.len();
    let dest = before.destinations(None, &[]);
    let origins: Vec<usize> = (0..n).collect();
    let run = before.window_run(&setting);
    let t = Instant::now();
    let cancel = AtomicBool::new(false);
    matrix::run(run, &origins, &dest, threads, &cancel, |_, _, _| Ok::<(), ()>(())).expect("matrix");
    let one = t.elapsed().as_secs_f64();
    let mut out = String::from("### Timetable comparison (`cargo bench --bench compare`)\n\nThe region preset (synth seed 1) against itself, 2026-12-02, 07:00–09:00 at 1 min; native, release build.\n\n| what | ours | baseline in the same run | |\n|---|---|---|---|\n");
    let _ = writeln!(
        out,
        "| region, every pair of places ({rows} pairs, {} unchanged; {threads} threads) | whole comparison **{full:.1} s** | one version's all-places matrix {one:.1} s | target ≤ 120 s: {} |",
        r.counts.unchanged,
        if full <= 120.0 { "met" } else { "missed" }
    );
    println!("{out}");
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("bench-out");
    let _ = std::fs::create_dir_all(&dir);
    let _ = std::fs::write(dir.join("compare.md"), &out);
}

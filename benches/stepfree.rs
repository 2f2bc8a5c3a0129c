//! Step-free audit benchmark (issue 16), on the generated region feed (`synth`, seed 1), with its
//! baseline in the same run:
//!
//! - **region, every pair of places, 07:00–08:00:** the whole audit (`Engine::stepfree_with`:
//!   both profiles per origin, blocked pairs explained, the top 10 elements rerun as fixed),
//!   rows counted, not written; against the floor under it, the same two window profiles per
//!   origin with nothing explained and nothing rerun.
//! - **a 500-pair sample:** the whole audit (the page's target is for this size).
//!
//! Run with `cargo bench --bench stepfree`; writes `bench-out/stepfree.md`.

use std::fmt::Write as _;
use std::path::Path;
use std::time::Instant;

use timeweave::engine::stepfree::StepFreeQuery;
use timeweave_synth::Preset;

mod common;
use common::load;

fn main() {
    let mut engine = load(Preset::Region);
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    let base = StepFreeQuery { date: "2026-12-02".into(), window: "07:00-08:00".into(), pairs: Some("all".into()), ..Default::default() };
    let mut out = String::from("### Step-free audit (`cargo bench --bench stepfree`)\n\nService date 2026-12-02, 07:00–08:00 at 1 min (60 departures); synth region seed 1; native, release build.\n\n| what | ours | baseline in the same run | |\n|---|---|---|---|\n");
    let mut run = |q: &StepFreeQuery| {
        let t = Instant::now();
        let mut rows = 0usize;
        let r = engine
            .stepfree_with(q, threads, &mut |_, _, c| {
                rows += c.len();
                true
            })
            .expect("audit")
            .expect("not cancelled");
        (t.elapsed().as_secs_f64(), rows, r)
    };
    let (full, rows, r) = run(&base);
    let (floor, _, _) = run(&StepFreeQuery { explain_per_origin: Some(0), fix_top: Some(0), ..base.clone() });
    let _ = writeln!(
        out,
        "| region, every pair of places ({rows} pairs; {} step-free, {} blocked, {} explained; {threads} threads) | whole audit **{full:.1} s** | both profiles alone (nothing explained, nothing rerun) {floor:.1} s | target ≤ 60 s: {} |",
        r.counts.step_free,
        r.counts.blocked,
        r.counts.explained,
        if full <= 60.0 { "met" } else { "missed" }
    );
    let (sample, rows, _) = run(&StepFreeQuery { pairs: Some("sample:500".into()), ..base.clone() });
    let _ = writeln!(
        out,
        "| region, a sample of {rows} pairs | whole audit **{:.0} ms** (native; the page's figure is in the guide) | | |",
        sample * 1e3
    );
    println!("{out}");
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("bench-out");
    let _ = std::fs::create_dir_all(&dir);
    let _ = std::fs::write(dir.join("stepfree.md"), &out);
}

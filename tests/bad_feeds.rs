//! The bad-feed corpus (tests/support/badfeeds.rs) loaded into an engine that already has the
//! valid base feed: each feed gives its expected fatal error or located warning, nothing panics,
//! and the base feed answers the same plan queries afterwards as before.
//!
//! Expected outcomes follow DEVELOPERS.md's Decisions table and the GTFS Schedule reference; each
//! corpus entry names its source.

mod support;

use std::panic::{catch_unwind, AssertUnwindSafe};
use std::time::{Duration, Instant};

use support::badfeeds::{base_files, corpus, BadFeed, Expect, BASE_LAT};
use timeweave::engine::{Engine, PlanQuery};
use timeweave::error::FeedIssue;

enum Got {
    Fatal(FeedIssue),
    Loaded(Vec<FeedIssue>),
    Panic(String),
}

fn base_engine() -> Engine {
    let mut e = Engine::new();
    // The cases are tampered copies of the base feed; under the base's own agency name they would be
    // refused as another version of it (same agency, same trip_ids) before their own defect counts.
    let base = base_files(BASE_LAT).replace("agency.txt", "Test Transit", "Base Transit");
    e.load_zip("base", &base.zip(), &mut |_, _| {}).expect("the base feed loads");
    e
}

/// The base feed's answers to a few queries, as JSON text (itineraries in full).
fn base_answers(e: &mut Engine) -> String {
    let mut out = String::new();
    for (from, to, time) in [("base:A", "base:D", "07:50"), ("base:S", "base:C", "08:30"), ("base:A", "base:C", "10:05")] {
        let q = PlanQuery { from: from.into(), to: to.into(), date: "2026-06-03".into(), time: time.into(), ..PlanQuery::default() };
        match e.plan(&q) {
            Ok(r) => out.push_str(&serde_json::to_string(&(r.journeys, r.nothing_found)).expect("json")),
            Err(err) => out.push_str(&format!("error {err}")),
        }
        out.push('\n');
    }
    out
}

fn load(e: &mut Engine, case: &BadFeed) -> (Got, Duration) {
    let t = Instant::now();
    let got = catch_unwind(AssertUnwindSafe(|| match e.load_zip("bad", &case.bytes, &mut |_, _| {}) {
        Ok(meta) => Got::Loaded(meta.warnings.issues.clone()),
        Err(err) => Got::Fatal(err.0),
    }));
    let got = got.unwrap_or_else(|p| {
        Got::Panic(p.downcast_ref::<String>().cloned().or_else(|| p.downcast_ref::<&str>().map(|s| s.to_string())).unwrap_or_default())
    });
    (got, t.elapsed())
}

fn describe(i: &FeedIssue) -> String {
    format!("file {:?} line {:?} field {:?} value {:?}: {}", i.file, i.line, i.field, i.value, i.message)
}

/// Whether the outcome is the expected one; `Err` says how it differs.
fn judge(case: &BadFeed, got: &Got, e: &mut Engine) -> Result<(), String> {
    match (&case.expect, got) {
        (_, Got::Panic(m)) => Err(format!("PANIC: {m}")),
        (Expect::Fatal { file, line, field }, Got::Fatal(i)) => {
            if i.message.trim().is_empty() {
                return Err("fatal error with an empty message".into());
            }
            if e.tt.feeds.len() != 1 {
                return Err("a refused feed was appended".into());
            }
            if i.file.as_deref() != *file || i.line != *line || i.field.as_deref() != *field {
                return Err(format!("expected fatal at file {file:?} line {line:?} field {field:?}, got {}", describe(i)));
            }
            Ok(())
        }
        (Expect::Fatal { .. }, Got::Loaded(w)) => Err(format!(
            "expected a fatal error, the feed loaded with {} warnings: {:?}",
            w.len(),
            w.iter().map(describe).collect::<Vec<_>>()
        )),
        (_, Got::Fatal(i)) => Err(format!("expected the feed to load, got fatal {}", describe(i))),
        (Expect::Warning { file, line, field }, Got::Loaded(w)) => {
            let hit = w.iter().find(|i| i.file.as_deref() == Some(*file) && i.line == Some(*line) && i.field.as_deref() == Some(*field));
            match hit {
                Some(i) if !i.message.trim().is_empty() => {}
                Some(_) => return Err("warning with an empty message".into()),
                None => {
                    return Err(format!(
                        "expected a warning at {file} line {line} field {field}; warnings: {:?}",
                        w.iter().map(describe).collect::<Vec<_>>()
                    ))
                }
            }
            // The rest of the feed loads: it still has its stops and answers a query.
            support::badfeeds::first_a_to_c(e, "bad").map(|_| ())
        }
        (Expect::Loads, Got::Loaded(w)) => {
            if let Some(check) = case.check {
                check(e, "bad").map_err(|m| format!("{m}; warnings: {:?}", w.iter().map(describe).collect::<Vec<_>>()))?;
            }
            Ok(())
        }
    }
}

/// Resets the process's peak resident size (Linux `clear_refs` 5) and returns a reader of it.
fn peak_rss_kb() -> Option<u64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    s.lines().find(|l| l.starts_with("VmHWM:"))?.split_whitespace().nth(1)?.parse().ok()
}

fn run_case(case: &BadFeed) -> Result<(), String> {
    let mut e = base_engine();
    let before = base_answers(&mut e);
    let base_stops = e.tt.stops.len();
    if case.bomb {
        let _ = std::fs::write("/proc/self/clear_refs", "5");
    }
    let rss0 = peak_rss_kb();
    let (got, took) = load(&mut e, case);
    let rss1 = peak_rss_kb();
    let verdict = judge(case, &got, &mut e);
    if let Got::Panic(_) = got {
        return verdict;
    }
    if case.bomb {
        // DEVELOPERS.md Decisions: refused before expanding, so quickly and without the memory.
        if took > Duration::from_secs(2) {
            return Err(format!("refusing the bomb took {took:?}"));
        }
        if let (Some(a), Some(b)) = (rss0, rss1) {
            if b.saturating_sub(a) > 32 * 1024 {
                return Err(format!("peak memory grew by {} KiB while refusing the bomb", b - a));
            }
        }
    }
    let after = base_answers(&mut e);
    if after != before {
        return Err(format!("the base feed answers differently after loading this feed:\nbefore {before}\nafter  {after}"));
    }
    if e.tt.stops.iter().filter(|s| e.tt.feeds[s.feed.idx()].name == "base").count() != base_stops {
        return Err("the base feed lost stops".into());
    }
    verdict
}

/// Writes the corpus as zips with an index of expected outcomes into the cargo test scratch
/// folder, for the browser test (tests/browser/badcorpus.test.mjs) to load through the page.
fn write_corpus(corpus: &[BadFeed]) {
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("bad-corpus");
    std::fs::create_dir_all(&dir).expect("corpus folder");
    let mut index = Vec::new();
    for (i, c) in corpus.iter().enumerate() {
        if c.bytes.len() > 1 << 20 {
            continue; // the bombs' megabytes stay out of the browser sample
        }
        let file = format!("bad-{i:02}.zip");
        std::fs::write(dir.join(&file), &c.bytes).expect("write corpus zip");
        let (kind, gtfs_file, line, field) = match &c.expect {
            Expect::Fatal { file, line, field } => ("fatal", file.map(str::to_string), *line, field.map(str::to_string)),
            Expect::Warning { file, line, field } => ("warning", Some(file.to_string()), Some(*line), Some(field.to_string())),
            Expect::Loads => ("loads", None, None, None),
        };
        index.push(serde_json::json!({ "zip": file, "name": c.name, "expect": kind, "file": gtfs_file, "line": line, "field": field, "engine_issue": c.engine_issue }));
    }
    std::fs::write(dir.join("index.json"), serde_json::to_string_pretty(&index).expect("json")).expect("write index");
}

#[test]
fn corpus_outcomes() {
    let corpus = corpus();
    write_corpus(&corpus);
    assert!(corpus.len() >= 40, "the corpus has {} feeds", corpus.len());
    // The deflated 50 MB entry really is past the 1000× limit (else the case proves nothing).
    let real = corpus.iter().find(|c| c.name.starts_with("50 MB")).expect("real bomb case");
    let mut zip = zip::ZipArchive::new(std::io::Cursor::new(&real.bytes)).expect("bomb zip");
    let entry = zip.by_name("stop_times.txt").expect("bomb entry");
    assert!(entry.size() / entry.compressed_size() > 1000, "the 50 MB bomb entry compresses only to {} bytes", entry.compressed_size());
    drop(entry);

    let (mut fatal, mut warnings, mut loads) = (0, 0, 0);
    let mut failures = Vec::new();
    let mut known = Vec::new();
    for case in &corpus {
        match case.expect {
            Expect::Fatal { .. } => fatal += 1,
            Expect::Warning { .. } => warnings += 1,
            Expect::Loads => loads += 1,
        }
        let r = run_case(case);
        match (&r, case.engine_issue) {
            (Err(m), _)
                if m.starts_with("PANIC")
                    || m.contains("answers differently")
                    || m.contains("lost stops")
                    || m.contains("was appended") =>
            {
                failures.push(format!("{}: {m}", case.name))
            }
            (Err(m), Some(issue)) => known.push(format!("{} (known engine issue: {issue}): {m}", case.name)),
            (Ok(()), Some(issue)) => {
                failures.push(format!("{}: marked as engine issue \"{issue}\" but now right; remove the mark", case.name))
            }
            (Err(m), None) => failures.push(format!("{} [{}]: {m}", case.name, case.source)),
            (Ok(()), None) => {}
        }
    }
    println!(
        "bad-feed corpus: {} feeds, {fatal} fatal, {warnings} warnings, {loads} load fine; {} known engine issues",
        corpus.len(),
        known.len()
    );
    for k in &known {
        println!("  {k}");
    }
    assert!(failures.is_empty(), "{} of {} corpus feeds wrong:\n{}", failures.len(), corpus.len(), failures.join("\n"));
}

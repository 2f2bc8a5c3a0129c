//! `timeweave stepfree`: the step-free audit into a folder — `pairs.csv`, `elements.csv`,
//! `completeness.csv`, `outages.csv` (with outages) and `about.txt` (the caution, the settings,
//! the counts, the definitions). Pairs, outages and alerts are checked before any work; every file
//! is staged in the folder and renamed into place at the end, so Ctrl-C leaves none.

use std::path::{Path, PathBuf};

use timeweave::engine::stepfree::{StepFreeQuery, StepFreeReport, CAUTION};
use timeweave::engine::Engine;
use timeweave_disk::Staged;
use timeweave_tables::StepFreePairTable;

use crate::window::{streamed, write_rows, StreamError};

/// The definitions behind every number `stepfree` writes, for its `--help` and `about.txt`.
pub const DEFINITIONS: &str = "\
Definitions:
  travel time at a departure: as in `reach --window` (waiting at the origin counts); standard profile at the walking speed, step-free profile at --step-free-speed with only step-free trips, stops and pathways (strict: marked 1 in the feed; --lenient: also unknown).
  standard_p50_s, stepfree_p50_s: the median over the window's departures, seconds (linear interpolation between the closest ranks); empty when half or more of the departures have no journey.
  extra_p50_s: stepfree_p50_s minus standard_p50_s.
  status: step_free (the step-free profile reaches the pair at some departure), blocked (only the standard profile does), no_journey.
  blocking: for blocked pairs, the elements of the standard journey at the first departure with one that fail the step-free check, as kind:id (a trip counts against its route); at most --explain pairs per origin are explained, chosen by --seed.
  outage_status: with outages, lost (step-free before, not with them), slower (a later median, or fewer departures with a journey), unchanged, not_step_free (not step-free before either); outage_blocking: the elements out of service on the step-free journey a lost pair had.
  elements.csv: pairs_blocked = explained blocked pairs whose standard journey the element fails; pairs_unblocked_if_fixed = of the blocked pairs from the origins of those pairs, how many the step-free profile reaches with that element alone taken as step-free (the --fix-top elements with most pairs blocked are rerun; others empty); origins_concerned, origins_rerun: when more origins are concerned than --fix-origins, a seeded sample is rerun and the count scaled up (estimated = true). Ranked by pairs_unblocked_if_fixed, then pairs_blocked.
  completeness.csv: per feed, agency and route, stops (where vehicles call, and entrances) with wheelchair_boarding unknown after inheritance, trips with wheelchair_accessible unknown, pathways (feed only) whose step-free status cannot be checked (walkways, moving sidewalks and fare gates without max_slope).
  Steepest step-free slope 1:12 (0.083; 2010 ADA Standards §405.2); narrowest step-free pathway 0.9 m (recalled from memory; local codes prevail).";

pub struct Args<'a> {
    pub date: String,
    pub window: String,
    pub step: Option<u32>,
    pub pairs: &'a str,
    pub seed: Option<u64>,
    pub lenient: bool,
    pub outage: &'a [String],
    pub outages: Option<&'a Path>,
    pub alerts: Option<&'a Path>,
    pub step_free_speed: Option<f64>,
    pub fix_top: Option<u32>,
    pub fix_origins: Option<u32>,
    pub explain: Option<u32>,
    pub threads: Option<usize>,
    pub out: &'a Path,
}

/// Reads a pairs file: CSV with `from_stop_id,to_stop_id`; every id checked with `check`,
/// naming the file, line and field of the first bad one.
pub fn read_pairs(path: &Path, check: &dyn Fn(&str) -> Result<(), String>) -> Result<Vec<(String, String)>, String> {
    let at = |line: u64, m: String| format!("error: {}: line {line}: {m}", path.display());
    let mut r = csv::Reader::from_path(path).map_err(|e| format!("error: cannot read {}: {e}", path.display()))?;
    let head = r.headers().map_err(|e| at(1, format!("{e}")))?.clone();
    let col = |name: &str| {
        head.iter()
            .position(|h| h.trim() == name)
            .ok_or_else(|| at(1, format!("no {name} column (expected the header from_stop_id,to_stop_id)")))
    };
    let (a, b) = (col("from_stop_id")?, col("to_stop_id")?);
    let mut out = Vec::new();
    for rec in r.records() {
        let rec = rec.map_err(|e| at(e.position().map_or(0, |p| p.line()), format!("{e}")))?;
        let line = rec.position().map_or(0, |p| p.line());
        let get = |k: usize, name: &str| -> Result<String, String> {
            let v = rec.get(k).unwrap_or("").trim().to_string();
            if v.is_empty() {
                return Err(at(line, format!("field {name}: empty (expected a station or stop id)")));
            }
            check(&v).map_err(|e| at(line, format!("field {name}: {e}")))?;
            Ok(v)
        };
        out.push((get(a, "from_stop_id")?, get(b, "to_stop_id")?));
    }
    if out.is_empty() {
        return Err(format!("error: {}: no pairs (expected rows of from_stop_id,to_stop_id)", path.display()));
    }
    Ok(out)
}

/// Outage ids from a file: one per line; blank lines and lines starting with # are skipped.
fn outages_file(engine: &Engine, path: &Path) -> Result<Vec<String>, String> {
    let text = std::fs::read_to_string(path).map_err(|e| format!("error: cannot read {}: {e}", path.display()))?;
    let mut out = Vec::new();
    let mut bad = Vec::new();
    for (i, l) in text.lines().enumerate() {
        let l = l.trim();
        if l.is_empty() || l.starts_with('#') {
            continue;
        }
        match engine.resolve_element(l) {
            Ok(_) => out.push(l.to_string()),
            Err(e) => bad.push(format!("{}: line {}: {e}", path.display(), i + 1)),
        }
    }
    if !bad.is_empty() {
        return Err(format!("error: {}; nothing was run", bad.join("; ")));
    }
    Ok(out)
}

pub fn run(engine: &mut Engine, a: Args) -> Result<(), String> {
    let mut q = StepFreeQuery {
        date: a.date.clone(),
        window: a.window.clone(),
        step_min: a.step,
        seed: a.seed,
        lenient: a.lenient,
        step_free_speed_mps: a.step_free_speed,
        fix_top: a.fix_top,
        fix_origins: a.fix_origins,
        explain_per_origin: a.explain,
        outages: a.outage.to_vec(),
        ..Default::default()
    };
    if a.pairs == "all" || a.pairs.starts_with("sample:") {
        q.pairs = Some(a.pairs.to_string());
    } else {
        q.pair_list = Some(read_pairs(Path::new(a.pairs), &|v| engine.resolve_place(v).map(|_| ()).map_err(|e| e.to_string()))?);
    }
    if let Some(p) = a.outages {
        q.outages.extend(outages_file(engine, p)?);
    }
    if let Some(p) = a.alerts {
        let bytes = std::fs::read(p).map_err(|e| format!("error: cannot read {}: {e}", p.display()))?;
        let found = engine.outages_from_alerts(&bytes, &q.date, &q.window).map_err(|e| format!("error: {}: {e}", p.display()))?;
        for s in &found.skipped {
            eprintln!("{}: skipped: {s}", p.display());
        }
        q.add_outages(found.outages);
    }
    if a.out.is_file() {
        return Err(format!("error: --out {} is a file; give a folder", a.out.display()));
    }
    std::fs::create_dir_all(a.out).map_err(|e| format!("error: cannot create {}: {e}", a.out.display()))?;
    let cannot = |p: &Path, e: &dyn std::fmt::Display| format!("error: cannot write {}: {e}", p.display());
    let path = |name: &str| -> PathBuf { a.out.join(name) };
    let stage = |p: &Path| Staged::create(p).map_err(|e| cannot(p, &e));
    let with_outages = !q.outages.is_empty();
    let names = ["pairs.csv", "elements.csv", "completeness.csv", "outages.csv", "about.txt"];
    let mut staged = Vec::new();
    for n in names.iter().filter(|n| with_outages || **n != "outages.csv") {
        staged.push((path(n), stage(&path(n))?));
    }
    let file = |name: &str| staged.iter().find(|(p, _)| p.file_name().is_some_and(|f| f == name)).map(|x| &x.1).expect("staged");
    let pairs_path = path("pairs.csv");
    let mut table = StepFreePairTable::new(file("pairs.csv").writer().map_err(|e| cannot(&pairs_path, &e))?, with_outages)
        .map_err(|e| cannot(&pairs_path, &e))?;
    let threads = a.threads.unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()));
    let started = std::time::Instant::now();
    let report = streamed("origins", |sink| engine.stepfree_with(&q, threads, sink), |rows| table.add(rows)).map_err(|e| match e {
        StreamError::Query(m) => m,
        StreamError::Table(e) => cannot(&pairs_path, &e),
        StreamError::Cancelled => "cancelled: nothing was written".into(),
    })?;
    let mut w = table.finish().map_err(|e| cannot(&pairs_path, &e))?;
    std::io::Write::flush(&mut w).map_err(|e| cannot(&pairs_path, &e))?;
    write_rows(file("elements.csv"), &path("elements.csv"), &report.elements)?;
    write_rows(file("completeness.csv"), &path("completeness.csv"), &report.completeness)?;
    if with_outages {
        write_rows(file("outages.csv"), &path("outages.csv"), &report.outages)?;
    }
    let about = about(&report, &q, a.pairs, started.elapsed().as_secs_f64());
    let mut w = file("about.txt").writer().map_err(|e| cannot(&path("about.txt"), &e))?;
    std::io::Write::write_all(&mut w, about.as_bytes())
        .and_then(|_| std::io::Write::flush(&mut w))
        .map_err(|e| cannot(&path("about.txt"), &e))?;
    for (p, s) in staged {
        s.commit().map_err(|e| cannot(&p, &e))?;
    }
    crate::say(&summary(&report));
    crate::say(&format!(
        "{}: pairs.csv, elements.csv, completeness.csv{}, about.txt",
        a.out.display(),
        if with_outages { ", outages.csv" } else { "" }
    ));
    crate::say(&format!("Caution: {CAUTION}"));
    Ok(())
}

fn pct(a: u64, b: u64) -> String {
    if b == 0 {
        "—".into()
    } else {
        format!("{:.1} %", 100.0 * a as f64 / b as f64)
    }
}

fn summary(r: &StepFreeReport) -> String {
    let c = &r.counts;
    let mut s = format!(
        "{} pairs, {} {} departures of {}: {} step-free ({}), {} blocked ({}), {} with no journey; {} blocked pairs explained",
        c.pairs,
        r.date,
        r.departures,
        r.window,
        c.step_free,
        pct(c.step_free, c.pairs),
        c.blocked,
        pct(c.blocked, c.pairs),
        c.no_journey,
        c.explained
    );
    if !r.outages.is_empty() {
        s += &format!(
            "; with {} element(s) out of service: {} pairs lose step-free access, {} are slower",
            r.outages.len(),
            c.lost,
            c.slower
        );
    }
    if let Some(e) = r.elements.first() {
        s += &format!(
            "; first to fix: {} {} ({}), blocking {} explained pairs{}",
            e.element_kind,
            e.element_id,
            e.name,
            e.pairs_blocked,
            e.pairs_unblocked_if_fixed.map(|n| format!(", {n} reachable step-free if fixed")).unwrap_or_default()
        );
    }
    s
}

fn about(r: &StepFreeReport, q: &StepFreeQuery, pairs: &str, secs: f64) -> String {
    format!(
        "timeweave step-free audit\n\nCAUTION: {CAUTION}\n\nDate {}, departures {} (every {} min, {} in all); pairs {pairs}; profile {}; step-free speed {} m/s, walking speed {} m/s; seed {}; computed in {secs:.1} s.\n\n{}\n\n{DEFINITIONS}\n",
        r.date,
        r.window,
        q.step_min.unwrap_or(1),
        r.departures,
        r.profile,
        r.step_free_speed_mps,
        r.walking_speed_mps,
        q.seed.unwrap_or(1),
        summary(r)
    )
}

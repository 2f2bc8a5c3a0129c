//! The window commands: `reach --window` and `matrix`. Options are checked, and every origin and
//! destination resolved, before any search; output goes to a temporary file renamed at the end.

use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::Instant;

use timeweave::analysis::matrix::{self, Ended};
use timeweave::engine::window::WindowQuery;
use timeweave::engine::Engine;
use timeweave::route::StepFree;
use timeweave_tables::FillError;
use timeweave_tables::{Format, MatrixTable, OpportunityTable};

/// The definitions behind every number the window commands print, for their `--help`.
pub const DEFINITIONS: &str = "\
Definitions:
  travel time at a departure t: the earliest arrival of a journey leaving the origin at or after t, minus t (waiting at the origin counts); minimum change times and walking links, no change penalty; none when nothing arrives within --max-duration.
  window: departures start, start + step, ... before its end (07:00-09:00 at 1 min = 120 departures, 07:00 to 08:59), local time of the first feed.
  min_s: the shortest travel time over the window, seconds.
  p{P}_s: the P-th percentile of the travel times over the window, seconds, by linear interpolation between the closest ranks (rank P/100 x (n - 1) of the n sorted values, from 0); a departure with no journey counts as infinitely long, so a percentile that reaches one is empty.
  share_within_cutoff: the share (0-1) of departures with a journey of at most --cutoff minutes (inclusive).
  departures_with_journey: how many departures of the window have a journey.
  opportunities_within_cutoff: for an origin, the sum over destinations of weight x share_within_cutoff: the weighted count of destinations within the cut-off, averaged over the window.
  places: stations, and stops outside any station; a journey starts or ends at a station's entrances (its platforms when it has none), as in `plan`.";

#[derive(clap::Args)]
pub struct WindowArgs {
    /// Departure window, local HH:MM-HH:MM; the end is not sampled.
    #[arg(long, value_name = "HH:MM-HH:MM")]
    pub window: Option<String>,
    /// Minutes between sampled departures.
    #[arg(long, default_value_t = 1, value_name = "MIN")]
    pub step: u32,
    /// Percentiles to report, comma-separated, each 0-100 [default: 50,90 for reach; 5,25,50,75,95 for matrix].
    #[arg(long, value_name = "P,P,...")]
    pub percentiles: Option<String>,
    /// Cut-off for share_within_cutoff and the opportunities, minutes (inclusive).
    #[arg(long, value_name = "MIN")]
    pub cutoff: Option<u32>,
    /// At most this many rides per journey (0: walking only) [default: any].
    #[arg(long, value_name = "N")]
    pub max_rides: Option<u8>,
    /// Longest travel time counted, minutes [default: 120, or the cut-off when longer].
    #[arg(long, value_name = "MIN")]
    pub max_duration: Option<u32>,
}

/// Percentiles from "5,25,50".
fn percentiles(text: &str) -> Result<Vec<f64>, String> {
    text.split(',')
        .map(|p| p.trim().parse::<f64>().map_err(|_| format!("error: percentile {p:?} is not a number (give them as 5,25,50)")))
        .collect()
}

pub fn query(date: String, w: &WindowArgs, window: String, step_free: StepFree, default_pct: &[f64]) -> Result<WindowQuery, String> {
    Ok(WindowQuery {
        date,
        window,
        step_min: Some(w.step),
        percentiles: Some(match &w.percentiles {
            Some(t) => percentiles(t)?,
            None => default_pct.to_vec(),
        }),
        cutoff_min: w.cutoff,
        max_rides: w.max_rides,
        max_duration_min: w.max_duration,
        step_free,
        ..WindowQuery::default()
    })
}

fn minutes(s: Option<f64>) -> String {
    s.map_or("-".into(), |v| format!("{:.1}", v / 60.0))
}

/// `reach --window`: per place, min and percentiles; text, JSON, or a CSV file.
pub fn reach(engine: &mut Engine, from: &str, q: &WindowQuery, out: Option<&Path>, as_json: bool) -> Result<(), String> {
    let staged =
        out.map(|p| timeweave_disk::Staged::create(p).map_err(|e| format!("error: cannot write {}: {e}", p.display()))).transpose()?;
    let r = engine.reach_window(from, q).map_err(|e| format!("error: {e}"))?;
    if let (Some(staged), Some(path)) = (staged, out) {
        let fail = |e: String| format!("error: cannot write {}: {e}", path.display());
        let w = staged.writer().map_err(|e| fail(e.to_string()))?;
        let mut w = timeweave_tables::reach_csv(w, &r).map_err(|e| fail(e.to_string()))?;
        std::io::Write::flush(&mut w).map_err(|e| fail(e.to_string()))?;
        staged.commit().map_err(|e| fail(e.to_string()))?;
        crate::say(&format!("{}: {} places reached from {} over {} departures", path.display(), r.places.len(), r.from.name, r.departures));
        return Ok(());
    }
    if as_json {
        return crate::json(&r);
    }
    let cut = r.cutoff_min.map(|c| format!(", share within {c} min")).unwrap_or_default();
    crate::say(&format!(
        "{} places reached from {} [{}] on {}, {} departures {} every {} min (minutes{cut}):",
        r.places.len(),
        r.from.name,
        r.from.id,
        r.date,
        r.departures,
        r.window,
        r.step_min
    ));
    let heads: Vec<String> = r.percentiles.iter().map(|p| format!("p{p}")).collect();
    crate::say(&format!("  {:>6} {}  place", "min", heads.iter().map(|h| format!("{h:>6}")).collect::<String>()));
    for p in &r.places {
        let pct: String = p.percentiles_s.iter().map(|&x| format!("{:>6}", minutes(x))).collect();
        let share = p.share_within_cutoff.map(|s| format!("  {:>3.0} %", s * 100.0)).unwrap_or_default();
        crate::say(&format!("  {:>6} {pct}{share}  {} [{}]", minutes(p.min_s.map(f64::from)), p.name, p.stop_id));
    }
    Ok(())
}

/// Stop ids from `all`, `ID,ID` or a file (one id per line, or a CSV with a `stop_id` column):
/// each with where it came from, for error messages. `None`: all places.
fn id_list(arg: &str, what: &str) -> Result<Option<Vec<(String, String)>>, String> {
    if arg == "all" {
        return Ok(None);
    }
    let path = Path::new(arg);
    if !path.is_file() {
        return Ok(Some(arg.split(',').map(|id| (id.trim().to_string(), format!("--{what} {id:?}"))).collect()));
    }
    let text = std::fs::read_to_string(path).map_err(|e| format!("error: cannot read {}: {e}", path.display()))?;
    let mut rows = csv::ReaderBuilder::new().has_headers(false).flexible(true).from_reader(text.as_bytes());
    let mut out = Vec::new();
    let mut column = 0;
    for (i, rec) in rows.records().enumerate() {
        let rec = rec.map_err(|e| format!("error: {} line {}: {e}", path.display(), i + 1))?;
        if i == 0 {
            if let Some(c) = rec.iter().position(|h| h.trim().trim_start_matches('\u{feff}') == "stop_id") {
                column = c;
                continue;
            }
        }
        let Some(id) = rec.get(column).map(str::trim).filter(|s| !s.is_empty()) else { continue };
        out.push((id.to_string(), format!("{} line {}", path.display(), i + 1)));
    }
    if out.is_empty() {
        return Err(format!("error: {} lists no stop ids (one per line, or a CSV with a stop_id column)", path.display()));
    }
    Ok(Some(out))
}

fn resolve(engine: &Engine, list: Option<Vec<(String, String)>>) -> Result<Option<Vec<usize>>, String> {
    let Some(list) = list else { return Ok(None) };
    let ids: Vec<String> = list.iter().map(|l| l.0.clone()).collect();
    engine.resolve_places(&ids).map(Some).map_err(|(i, e)| format!("error: {}: {e}", list[i].1))
}

/// Weights from a `stop_id,weight` CSV, per place.
fn weights(engine: &Engine, path: &Path) -> Result<Vec<(usize, f64)>, String> {
    let text = std::fs::read_to_string(path).map_err(|e| format!("error: cannot read {}: {e}", path.display()))?;
    let mut rows = csv::ReaderBuilder::new().from_reader(text.as_bytes());
    let head = rows.headers().map_err(|e| format!("error: {}: {e}", path.display()))?.clone();
    let col = |name: &str| {
        head.iter()
            .position(|h| h.trim().trim_start_matches('\u{feff}') == name)
            .ok_or_else(|| format!("error: {} line 1: no {name} column (expected the header stop_id,weight)", path.display()))
    };
    let (ci, cw) = (col("stop_id")?, col("weight")?);
    let mut out = Vec::new();
    for (i, rec) in rows.records().enumerate() {
        let line = i + 2;
        let rec = rec.map_err(|e| format!("error: {} line {line}: {e}", path.display()))?;
        let id = rec.get(ci).unwrap_or("").trim();
        let w: f64 = rec.get(cw).unwrap_or("").trim().parse().ok().filter(|w: &f64| w.is_finite() && *w >= 0.0).ok_or_else(|| {
            format!("error: {} line {line}: weight {:?} is not a number of at least 0", path.display(), rec.get(cw).unwrap_or(""))
        })?;
        let p = engine.resolve_place(id).map_err(|e| format!("error: {} line {line}: {e}", path.display()))?;
        out.push((p, w));
    }
    Ok(out)
}

/// Where the opportunities of a matrix written to `out` go: `NAME.opportunities.csv` beside it.
pub fn opportunities_path(out: &Path) -> PathBuf {
    beside(out, "opportunities")
}

/// `NAME.WHAT.csv` beside the output file `NAME.EXT`.
pub fn beside(out: &Path, what: &str) -> PathBuf {
    let stem = out.file_stem().map(|s| s.to_string_lossy().into_owned()).unwrap_or_else(|| "out".into());
    out.with_file_name(format!("{stem}.{what}.csv"))
}

/// A flag set by Ctrl-C (the CLI runs one command, so one handler).
pub fn cancel_on_ctrl_c() -> Arc<AtomicBool> {
    let cancel = Arc::new(AtomicBool::new(false));
    let c = cancel.clone();
    let _ = ctrlc::set_handler(move || c.store(true, Ordering::Relaxed));
    cancel
}

/// Serialisable rows as a whole CSV file into a staged file.
pub fn write_rows<T: serde::Serialize>(file: &timeweave_disk::Staged, path: &Path, rows: &[T]) -> Result<(), String> {
    let cannot = |e: &dyn std::fmt::Display| format!("error: cannot write {}: {e}", path.display());
    let mut w = timeweave_tables::rows_csv(file.writer().map_err(|e| cannot(&e))?, rows).map_err(|e| cannot(&e))?;
    std::io::Write::flush(&mut w).map_err(|e| cannot(&e))
}

/// Why a streamed run wrote nothing.
pub enum StreamError {
    /// A bad request, as the engine put it.
    Query(String),
    /// The table could not be written.
    Table(timeweave_tables::TableError),
    Cancelled,
}

/// Runs an analysis that hands its rows on as it goes (`run` calls its sink with done, total and
/// the rows), adding them to a table with `add`, with a progress bar over `what` (when there is
/// more than one) and Ctrl-C.
pub fn streamed<R, T>(
    what: &'static str,
    run: impl FnOnce(&mut dyn FnMut(usize, usize, &[T]) -> bool) -> Result<Option<R>, timeweave::error::QueryError>,
    mut add: impl FnMut(&[T]) -> Result<(), timeweave_tables::TableError>,
) -> Result<R, StreamError> {
    let cancel = cancel_on_ctrl_c();
    let mut progress: Option<indicatif::ProgressBar> = None;
    let report = timeweave_tables::fill(run, &mut add, |done, total| {
        if total > 1 {
            progress.get_or_insert_with(|| bar(total, what)).set_position(done as u64);
        }
        !cancel.load(Ordering::Relaxed)
    });
    if let Some(b) = progress {
        b.finish_and_clear();
    }
    match report {
        Ok(r) => r.ok_or(StreamError::Cancelled),
        Err(FillError::Run(e)) => Err(StreamError::Query(format!("error: {e}"))),
        Err(FillError::Table(e)) => Err(StreamError::Table(e)),
    }
}

/// A progress bar over `n` things.
pub fn bar(n: usize, what: &str) -> indicatif::ProgressBar {
    let bar = indicatif::ProgressBar::new(n as u64);
    bar.set_style(
        indicatif::ProgressStyle::with_template(&format!(
            "{{bar:40}} {{pos}}/{{len}} {what}, {{per_sec}}, {{elapsed}} elapsed, about {{eta}} left"
        ))
        .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
    );
    bar
}

/// "I/N" → (I, N), 1 ≤ I ≤ N.
pub fn parse_shard(text: &str) -> Result<(usize, usize), String> {
    let bad = || format!("error: --shard {text:?}: give I/N with 1 <= I <= N (shard I of N)");
    let (i, n) = text.split_once('/').ok_or_else(bad)?;
    let (i, n): (usize, usize) = (i.trim().parse().map_err(|_| bad())?, n.trim().parse().map_err(|_| bad())?);
    if i == 0 || n == 0 || i > n {
        return Err(bad());
    }
    Ok((i, n))
}

pub struct MatrixArgs<'a> {
    pub shard: Option<&'a str>,
    pub origins: &'a str,
    pub destinations: &'a str,
    pub opportunities: Option<&'a Path>,
    pub out: &'a Path,
    pub threads: Option<usize>,
}

/// `matrix`: every origin's row over the window, streamed to CSV or Parquet with a progress bar.
pub fn matrix(engine: &mut Engine, q: &WindowQuery, a: MatrixArgs) -> Result<(), String> {
    let format = Format::of_name(&a.out.to_string_lossy())
        .ok_or_else(|| format!("error: --out {}: give a file name ending in .csv or .parquet", a.out.display()))?;
    let setting = engine.window_setting(q).map_err(|e| format!("error: {e}"))?;
    let mut origins = resolve(engine, id_list(a.origins, "origins")?)?.unwrap_or_else(|| (0..engine.places.len()).collect());
    if let Some(spec) = a.shard {
        let (i, n) = parse_shard(spec)?;
        origins = matrix::shard(&origins, i, n).to_vec();
    }
    let report = resolve(engine, id_list(a.destinations, "destinations")?)?;
    let weights = match a.opportunities {
        Some(p) if setting.spec.cutoff_s.is_none() => {
            return Err(format!("error: --opportunities {} needs --cutoff MIN (opportunities count destinations within it)", p.display()))
        }
        Some(p) => weights(engine, p)?,
        None => Vec::new(),
    };
    let dest = engine.destinations(report.as_deref(), &weights);
    let cannot = |p: &Path, e: &dyn std::fmt::Display| format!("error: cannot write {}: {e}", p.display());
    let staged = timeweave_disk::Staged::create(a.out).map_err(|e| cannot(a.out, &e))?;
    let opp_path = a.opportunities.map(|_| opportunities_path(a.out));
    let opp_staged = opp_path.as_deref().map(|p| timeweave_disk::Staged::create(p).map_err(|e| cannot(p, &e))).transpose()?;

    let cancel = cancel_on_ctrl_c();
    let ids: Vec<String> = (0..engine.places.len()).map(|p| engine.place_id(p).to_string()).collect();
    let mut table = MatrixTable::new(format, staged.writer().map_err(|e| cannot(a.out, &e))?, &setting.spec.percentiles)
        .map_err(|e| cannot(a.out, &e))?;
    let mut opp = match &opp_staged {
        Some(s) => Some(OpportunityTable::new(s.writer().map_err(|e| cannot(a.out, &e))?).map_err(|e| cannot(a.out, &e))?),
        None => None,
    };
    let bar = bar(origins.len(), "origins");
    let threads = a.threads.unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()));
    let started = Instant::now();
    let ended = {
        let run = engine.window_run(&setting);
        matrix::run(run, &origins, &dest, threads, &cancel, |_, from, rows| {
            table.origin(&ids[from], rows, |to| ids[to as usize].as_str())?;
            if let (Some(o), Some(v)) = (opp.as_mut(), rows.opportunities) {
                o.origin(&ids[from], v)?;
            }
            bar.inc(1);
            Ok::<(), timeweave_tables::TableError>(())
        })
        .map_err(|e| cannot(a.out, &e))?
    };
    bar.finish_and_clear();
    if ended == Ended::Cancelled {
        return Err("cancelled: nothing was written".into());
    }
    let rows = table.rows;
    let mut w = table.finish().map_err(|e| cannot(a.out, &e))?;
    std::io::Write::flush(&mut w).map_err(|e| cannot(a.out, &e))?;
    if let (Some(o), Some(p)) = (opp, opp_path.as_deref()) {
        let mut w = o.finish().map_err(|e| cannot(p, &e))?;
        std::io::Write::flush(&mut w).map_err(|e| cannot(p, &e))?;
    }
    staged.commit().map_err(|e| cannot(a.out, &e))?;
    if let (Some(s), Some(p)) = (opp_staged, opp_path.as_deref()) {
        s.commit().map_err(|e| cannot(p, &e))?;
        crate::say(&format!("{}: cumulative opportunities of {} origins", p.display(), origins.len()));
    }
    crate::say(&format!(
        "{}: {rows} reachable pairs from {} origins, {} departures each, in {:.1} s on {threads} threads",
        a.out.display(),
        origins.len(),
        setting.spec.departures.len(),
        started.elapsed().as_secs_f64()
    ));
    Ok(())
}

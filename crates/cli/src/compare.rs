//! `timeweave compare`: two versions of a timetable (each one or more feeds, loaded into an engine
//! of its own) compared over a window, into a folder — `pairs.csv`, `stations.csv`, `routes.csv`,
//! `connections.csv` and `about.txt` — with a one-screen summary. Everything is checked before any
//! work; the files are staged and renamed at the end, so Ctrl-C leaves none.

use std::path::{Path, PathBuf};

use timeweave::engine::compare::{compare, CompareQuery, CompareReport};
use timeweave::engine::Engine;
use timeweave_disk::Staged;
use timeweave_tables::SerdeTable;

use crate::stepfree::read_pairs;
use crate::window::{streamed, write_rows, StreamError};

/// The definitions behind every number `compare` writes, for its `--help` and `about.txt`.
pub const DEFINITIONS: &str = "\
Definitions:
  places are matched by stop_id across the versions; a place in one version only is listed as such (only_before, only_after), never guessed.
  travel time at a departure: as in `reach --window` (waiting at the origin counts); p50, p90: median and 90th percentile over the window's departures, seconds (linear interpolation between the closest ranks; empty when that share of departures has no journey).
  status: lost (reached at some departure before, at none after), gained (the reverse), unreachable (neither), else slower, faster or unchanged by the medians, to the second (a pair with a median in one version only is slower or faster accordingly).
  stations.csv, per place: median_change_s = median over the destinations (all, or --destinations) reached in both of (after - before median); opportunities = destinations weighted 1, each counted by its share of departures within --cutoff; departures = departures with pickup from the place's stops on the date; service = lost, gained, kept or none.
  routes.csv: trips of the date; first and last trip start (service-day HH:MM:SS); headway = the median gap between trip starts within the window in the route's busiest direction, seconds.
  connections.csv: the interchange audit of every station over the window in both versions, rows matched by station, arriving route and direction, arrival time, leaving route and direction; listed when made_to_missed, missed_to_made, new_near_miss, near_miss_gone, only_before or only_after.
  headline: the share of compared pairs more than 5 min slower (or faster) by median.";

pub struct Args<'a> {
    pub before: &'a [PathBuf],
    pub after: &'a [PathBuf],
    pub date: String,
    pub after_date: Option<String>,
    pub window: String,
    pub step: Option<u32>,
    pub pairs: &'a str,
    pub seed: Option<u64>,
    pub cutoff: Option<u32>,
    pub destinations: Option<String>,
    pub threads: Option<usize>,
    pub out: &'a Path,
}

pub fn run(before: &mut Engine, after: &mut Engine, a: Args) -> Result<(), String> {
    let mut q = CompareQuery {
        date: a.date.clone(),
        after_date: a.after_date.clone(),
        window: a.window.clone(),
        step_min: a.step,
        seed: a.seed,
        cutoff_min: a.cutoff,
        destinations: a.destinations.as_deref().map(|d| d.split(',').map(|x| x.trim().to_string()).filter(|x| !x.is_empty()).collect()),
        ..Default::default()
    };
    if a.pairs == "all" || a.pairs.starts_with("sample:") {
        q.pairs = Some(a.pairs.to_string());
    } else {
        let check = |v: &str| {
            if before.resolve_place(v).is_err() && after.resolve_place(v).is_err() {
                Err("a place of neither version (expected a station or stop id)".to_string())
            } else {
                Ok(())
            }
        };
        q.pair_list = Some(read_pairs(Path::new(a.pairs), &check)?);
    }
    if a.out.is_file() {
        return Err(format!("error: --out {} is a file; give a folder", a.out.display()));
    }
    let cannot = |p: &Path, e: &dyn std::fmt::Display| format!("error: cannot write {}: {e}", p.display());
    let names = ["pairs.csv", "stations.csv", "routes.csv", "connections.csv", "about.txt"];
    // The folder is made only once the request is known to be good: the first origin's rows
    // arrive after every check, so it is made here and the files staged in it.
    std::fs::create_dir_all(a.out).map_err(|e| format!("error: cannot create {}: {e}", a.out.display()))?;
    let mut staged = Vec::new();
    for n in names {
        let p = a.out.join(n);
        let s = Staged::create(&p).map_err(|e| cannot(&p, &e))?;
        staged.push((p, s));
    }
    let file = |name: &str| &staged.iter().find(|(p, _)| p.ends_with(name)).expect("staged").1;
    let pairs_path = a.out.join("pairs.csv");
    let mut table = SerdeTable::new(file("pairs.csv").writer().map_err(|e| cannot(&pairs_path, &e))?);
    let threads = a.threads.unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()));
    let started = std::time::Instant::now();
    let outcome = streamed("origins", |sink| compare(before, after, &q, threads, sink), |rows| table.add(rows));
    let report = match outcome {
        Ok(r) => r,
        Err(e) => {
            drop(staged);
            // Nothing was written: leave no empty folder made here behind.
            let _ = std::fs::remove_dir(a.out);
            return Err(match e {
                StreamError::Query(m) => m,
                StreamError::Table(e) => cannot(&pairs_path, &e),
                StreamError::Cancelled => "cancelled: nothing was written".into(),
            });
        }
    };
    let mut w = table.finish().map_err(|e| cannot(&pairs_path, &e))?;
    std::io::Write::flush(&mut w).map_err(|e| cannot(&pairs_path, &e))?;
    write_rows(file("stations.csv"), &a.out.join("stations.csv"), &report.stations)?;
    write_rows(file("routes.csv"), &a.out.join("routes.csv"), &report.routes)?;
    write_rows(file("connections.csv"), &a.out.join("connections.csv"), &report.connections)?;
    let text = format!(
        "timeweave timetable comparison\n\n{}\n\nComputed in {:.1} s.\n\n{DEFINITIONS}\n",
        summary(&report, a.before, a.after),
        started.elapsed().as_secs_f64()
    );
    let about = a.out.join("about.txt");
    let mut w = file("about.txt").writer().map_err(|e| cannot(&about, &e))?;
    std::io::Write::write_all(&mut w, text.as_bytes()).and_then(|_| std::io::Write::flush(&mut w)).map_err(|e| cannot(&about, &e))?;
    for (p, s) in staged {
        s.commit().map_err(|e| cannot(&p, &e))?;
    }
    crate::say(&summary(&report, a.before, a.after));
    crate::say(&format!("{}: pairs.csv, stations.csv, routes.csv, connections.csv, about.txt", a.out.display()));
    Ok(())
}

/// The one-screen summary.
fn summary(r: &CompareReport, before: &[PathBuf], after: &[PathBuf]) -> String {
    let names = |v: &[PathBuf]| v.iter().map(|p| p.display().to_string()).collect::<Vec<_>>().join(", ");
    let c = &r.counts;
    let mut lines = vec![
        format!(
            "Before: {} on {}. After: {} on {}. Departures {} ({}), cut-off {} min.",
            names(before),
            r.date,
            names(after),
            r.after_date,
            r.window,
            r.departures,
            r.cutoff_min
        ),
        r.headline.clone(),
        format!(
            "{} pairs: {} unchanged, {} slower, {} faster, {} lost, {} gained, {} unreachable in both{}.",
            c.pairs,
            c.unchanged,
            c.slower,
            c.faster,
            c.lost,
            c.gained,
            c.unreachable,
            if c.only_before + c.only_after > 0 {
                format!(", {} with a place of one version only", c.only_before + c.only_after)
            } else {
                String::new()
            }
        ),
    ];
    let lost: Vec<&str> = r.stations.iter().filter(|s| s.service == "lost").map(|s| s.station.as_str()).collect();
    let gained: Vec<&str> = r.stations.iter().filter(|s| s.service == "gained").map(|s| s.station.as_str()).collect();
    let list = |v: &[&str]| if v.len() > 8 { format!("{}, … ({} in all)", v[..8].join(", "), v.len()) } else { v.join(", ") };
    if !lost.is_empty() {
        lines.push(format!("Places that lose all service: {}.", list(&lost)));
    }
    if !gained.is_empty() {
        lines.push(format!("Places that gain service: {}.", list(&gained)));
    }
    let mut slower: Vec<_> = r.stations.iter().filter(|s| s.median_change_s.is_some_and(|m| m > 0.0)).collect();
    slower.sort_by(|a, b| b.median_change_s.unwrap_or(0.0).total_cmp(&a.median_change_s.unwrap_or(0.0)));
    if !slower.is_empty() {
        lines.push(format!(
            "Most slowed places (median change to their destinations): {}.",
            slower
                .iter()
                .take(5)
                .map(|s| format!("{} +{:.1} min", s.name, s.median_change_s.unwrap_or(0.0) / 60.0))
                .collect::<Vec<_>>()
                .join(", ")
        ));
    }
    let count = |k: &str| r.connections.iter().filter(|x| x.change == k).count();
    lines.push(format!(
        "Connections: {} made before and missed after, {} the reverse, {} new near misses, {} gone; {} only before, {} only after.",
        count("made_to_missed"),
        count("missed_to_made"),
        count("new_near_miss"),
        count("near_miss_gone"),
        count("only_before"),
        count("only_after")
    ));
    let changed: Vec<String> = r
        .routes
        .iter()
        .filter(|x| x.trips_before != x.trips_after)
        .map(|x| format!("{} {}→{}", x.name, x.trips_before, x.trips_after))
        .collect();
    if !changed.is_empty() {
        lines.push(format!("Routes with a different number of trips: {}.", changed.join(", ")));
    }
    lines.join("\n")
}

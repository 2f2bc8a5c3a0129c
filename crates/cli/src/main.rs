//! The native command line: a thin shell around [`timeweave::Engine`].

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};
use timeweave::engine::{Engine, PlanQuery};
use timeweave::route::StepFree;

mod compare;
mod interchange;
mod kiosk;
mod stepfree;
mod window;

#[derive(Parser)]
#[command(name = "timeweave", version, about = "Journey planning and service connectivity over GTFS timetables", after_help = TIMES)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

/// How times read, for every command's help.
const INTERCHANGE_HELP: &str = "Definitions:
  change_s: the transfers.txt rule at one stop (trip over route over stop; type 1 timed = 0 s, 2 = min_transfer_time, 3 = not possible), else 60 s; between two stops the walking link's time (the feed's min_transfer_time, else pathways, else the walk at 1.3 m/s).
  slack: departure minus arrival. made: the first departure of the route/direction with slack >= change_s; wait_s = its slack. none: no such departure within --horizon. not_possible: transfers.txt forbids the change or no walking link joins the stops.
  missed_by_s: change_s minus the slack of the latest departure with 0 <= slack < change_s (missed_trip_id); near_miss = 1 when it is at most --near-miss.
  arrival, departure: service-day time HH:MM:SS (may pass 24:00:00).
  A trip that ends here and continues as the next trip of its block (block_id, same service day) starting here is an in-seat continuation: no row for that route/direction.
NAME.pairs.csv, one row per arriving x departing route/direction:
  arrivals: arrivals of the arriving route/direction in the window; made: of them, connections made.
  made_within_5/10/15: share (0-1) of the arrivals made with wait_s <= 5/10/15 min.
  median_wait_s, p90_wait_s: of the made connections, seconds, linear interpolation between the closest ranks; empty when none is made.
  near_misses: arrivals that missed a departure by at most --near-miss (even if a later one is made).
NAME.stations.csv, one row per station, ranked by near misses:
  arrivals, connections (arrival x route/direction rows), made, none, not_possible, near_misses, median_wait_s, p90_wait_s as above;
  rank_near_misses: 1 = most near misses; rank_median_wait: 1 = longest median wait (stations with none made last).";

const WINDOW_HELP: &str = const_format::concatcp!(TIMES, "\n\n", window::DEFINITIONS);

const TIMES: &str = "Times: a departure is local clock time (HH:MM) in the first feed's agency_timezone on the service date. \
Durations print in whole minutes, rounded up for walks and reach; *_s fields in --json are seconds, and *_s times count from noon minus 12 h of the service date (the GTFS service-day origin).";

/// Step-free profile of a search.
#[derive(Clone, Copy, clap::ValueEnum)]
enum StepFreeArg {
    /// Only trips, stops and pathways the feed marks accessible (1).
    Strict,
    /// Also elements whose accessibility the feed leaves unknown (0 or empty); such legs are flagged.
    Lenient,
}

fn step_free_of(a: Option<StepFreeArg>) -> StepFree {
    match a {
        None => StepFree::Off,
        Some(StepFreeArg::Strict) => StepFree::Strict,
        Some(StepFreeArg::Lenient) => StepFree::Lenient,
    }
}

#[derive(clap::Args)]
struct Feeds {
    /// GTFS feed: a .zip file or a folder of .txt files; repeat to load several feeds together.
    #[arg(long = "feed", required = true, value_name = "FILE")]
    feeds: Vec<PathBuf>,
}

#[derive(Subcommand)]
enum Command {
    /// Journeys between two stops: the next departures after a time, each with its legs and
    /// where its time goes (on board, walking, waiting).
    #[command(after_help = TIMES)]
    Plan {
        #[command(flatten)]
        feeds: Feeds,
        /// Origin: stop id, feed:stop_id when two feeds share the id, or (part of) a stop name.
        #[arg(long)]
        from: String,
        /// Destination, as --from.
        #[arg(long)]
        to: String,
        /// Service date, YYYY-MM-DD.
        #[arg(long)]
        date: String,
        /// Earliest departure, local clock time HH:MM.
        #[arg(long)]
        at: String,
        /// Step-free journeys only; `--step-free` alone means strict.
        #[arg(long, value_enum, num_args = 0..=1, default_missing_value = "strict", value_name = "PROFILE")]
        step_free: Option<StepFreeArg>,
        /// How many successive journeys to list (each leaves after the one before), 1–10.
        #[arg(long, default_value_t = 3, value_name = "N")]
        next: usize,
        /// Longest single walk between stops, metres [default: 800].
        #[arg(long, value_name = "M")]
        walk_limit: Option<f64>,
        /// Walking speed, m/s [default: 1.3; step-free 0.8].
        #[arg(long, value_name = "MPS")]
        walking_speed: Option<f64>,
        /// Minutes added to the cost of each change of vehicle when ranking journeys [default: 5].
        #[arg(long, value_name = "MIN")]
        change_penalty: Option<u32>,
        /// Longest journey searched, minutes [default: 240]. A journey beyond it is still shown, with a note.
        #[arg(long, value_name = "MIN")]
        max_duration: Option<u32>,
        /// Also list, for each number of rides, the earliest arrival.
        #[arg(long)]
        fewest_rides: bool,
        /// Print the result as JSON (the shape documented in DEVELOPERS.md).
        #[arg(long)]
        json: bool,
    },
    /// Find stops by name, id or code (case- and accent-insensitive).
    Stops {
        #[command(flatten)]
        feeds: Feeds,
        /// Text to look for in stop names, ids and codes.
        #[arg(long)]
        search: String,
        /// Most stops listed.
        #[arg(long, default_value_t = 20)]
        limit: usize,
        /// Print the matches as JSON.
        #[arg(long)]
        json: bool,
    },
    /// Every stop reachable from a stop: at one departure within a time limit (--at), or over a
    /// window of departures with the shortest time and percentiles per place (--window).
    #[command(after_help = WINDOW_HELP)]
    Reach {
        #[command(flatten)]
        feeds: Feeds,
        /// Origin, as for `plan --from`.
        #[arg(long)]
        from: String,
        /// Service date, YYYY-MM-DD.
        #[arg(long)]
        date: String,
        /// One departure, local clock time HH:MM (or give --window).
        #[arg(long, conflicts_with = "window")]
        at: Option<String>,
        /// Time limit with --at, minutes (arrival minus departure, rounded up).
        #[arg(long, default_value_t = 45)]
        minutes: u32,
        #[command(flatten)]
        window: window::WindowArgs,
        /// Step-free reach only; `--step-free` alone means strict.
        #[arg(long, value_enum, num_args = 0..=1, default_missing_value = "strict", value_name = "PROFILE")]
        step_free: Option<StepFreeArg>,
        /// With --window: write the places reached to this CSV file instead of printing them.
        #[arg(long, value_name = "FILE.csv", requires = "window")]
        out: Option<PathBuf>,
        /// Print the stops reached as JSON.
        #[arg(long)]
        json: bool,
    },
    /// A travel-time matrix over a window of departures: one row per reachable pair of places,
    /// with the shortest time, percentiles and the share within a cut-off, as CSV or Parquet.
    #[command(after_help = WINDOW_HELP)]
    Matrix {
        #[command(flatten)]
        feeds: Feeds,
        /// Service date, YYYY-MM-DD.
        #[arg(long)]
        date: String,
        #[command(flatten)]
        window: window::WindowArgs,
        /// Origins: all (every place), ID,ID,... or a file (one id per line, or a CSV with a stop_id column).
        #[arg(long, default_value = "all", value_name = "all|ID,ID|FILE")]
        origins: String,
        /// Destinations, as --origins.
        #[arg(long, default_value = "all", value_name = "all|ID,ID|FILE")]
        destinations: String,
        /// Step-free journeys only; `--step-free` alone means strict.
        #[arg(long, value_enum, num_args = 0..=1, default_missing_value = "strict", value_name = "PROFILE")]
        step_free: Option<StepFreeArg>,
        /// Weights of destinations (CSV stop_id,weight): also write each origin's cumulative
        /// opportunities within --cutoff to NAME.opportunities.csv beside --out.
        #[arg(long, value_name = "FILE.csv")]
        opportunities: Option<PathBuf>,
        /// Output file, .csv (RFC 4180) or .parquet; written under a temporary name and renamed at the end.
        #[arg(long, value_name = "FILE")]
        out: PathBuf,
        /// Threads [default: all cores].
        #[arg(long, value_name = "N")]
        threads: Option<usize>,
        /// Only shard I of N of the origins: the I-th of N consecutive runs of nearly equal
        /// length, in origin order (all places in index order, or as given), so N runs of the
        /// command with 1/N … N/N together write every row once.
        #[arg(long, value_name = "I/N")]
        shard: Option<String>,
    },
    /// The interchange audit of a station (or all): for every arrival and every other route and
    /// direction leaving there, whether the connection is made, missed and by how much, and the wait.
    #[command(after_help = INTERCHANGE_HELP)]
    Interchange {
        #[command(flatten)]
        feeds: Feeds,
        /// Service date, YYYY-MM-DD.
        #[arg(long)]
        date: String,
        /// Station or stop id (or name), or `all` for every station.
        #[arg(long)]
        station: String,
        /// Arrivals in this window, local HH:MM-HH:MM [default: the whole service day].
        #[arg(long, value_name = "HH:MM-HH:MM")]
        window: Option<String>,
        /// A missed connection is a near miss when missed by at most this, minutes [default: 2].
        #[arg(long, value_name = "MIN")]
        near_miss: Option<u32>,
        /// Departures up to this long after an arrival are considered, minutes [default: 60].
        #[arg(long, value_name = "MIN")]
        horizon: Option<u32>,
        /// Output CSV file of the rows; NAME.pairs.csv and NAME.stations.csv are written beside it
        /// (all three whole or not at all).
        #[arg(long, value_name = "FILE.csv")]
        out: PathBuf,
    },
    /// The step-free audit: for pairs of places over a window, standard against step-free travel
    /// times, the pairs only the standard profile reaches and the elements that block them, the
    /// elements ranked by what fixing each would open, outages (elements out of service, or a
    /// GTFS-Realtime alerts file) and the pairs they cost, and the completeness of the feed's
    /// accessibility data. Writes a folder of CSV files and about.txt.
    #[command(after_help = stepfree::DEFINITIONS)]
    Stepfree {
        #[command(flatten)]
        feeds: Feeds,
        /// Service date, YYYY-MM-DD.
        #[arg(long)]
        date: String,
        /// Departures in this window, local HH:MM-HH:MM (the end not sampled).
        #[arg(long, value_name = "HH:MM-HH:MM")]
        window: String,
        /// Minutes between sampled departures [default: 1].
        #[arg(long, value_name = "MIN")]
        step: Option<u32>,
        /// all (every pair of places), sample:N (N pairs drawn with --seed) or a CSV file with
        /// from_stop_id,to_stop_id (a station counts any of its stops).
        #[arg(long, default_value = "all", value_name = "all|sample:N|FILE")]
        pairs: String,
        /// Seed of the sample and of the choice of blocked pairs to explain [default: 1].
        #[arg(long)]
        seed: Option<u64>,
        /// Unknown accessibility (0 or empty) counts as step-free [default: strict, only 1 does].
        #[arg(long)]
        lenient: bool,
        /// An element out of service: pathway, stop, entrance, station or route id (plain, or
        /// pathway:ID, stop:ID, route:ID); repeat for several.
        #[arg(long, value_name = "ID")]
        outage: Vec<String>,
        /// A file of outage ids, one per line (# starts a comment).
        #[arg(long, value_name = "FILE")]
        outages: Option<PathBuf>,
        /// A GTFS-Realtime alerts file (protobuf FeedMessage): alerts with effect
        /// ACCESSIBILITY_ISSUE active in the window set the lifts and ramps of their stops (or the
        /// stop, or the route) out of service.
        #[arg(long, value_name = "FILE.pb")]
        alerts: Option<PathBuf>,
        /// Rolling or walking speed of the step-free profile, m/s [default: 0.8].
        #[arg(long, value_name = "MPS")]
        step_free_speed: Option<f64>,
        /// Elements, most-blocking first, rerun as if fixed [default: 10, at most 50].
        #[arg(long, value_name = "K")]
        fix_top: Option<u32>,
        /// Origins rerun per element tried as fixed, a seeded sample, the count scaled up [default: 200; 0: all].
        #[arg(long, value_name = "N")]
        fix_origins: Option<u32>,
        /// Blocked pairs per origin whose blocking elements are found [default: 10].
        #[arg(long, value_name = "N")]
        explain: Option<u32>,
        /// Threads [default: all cores].
        #[arg(long, value_name = "N")]
        threads: Option<usize>,
        /// Output folder (created if missing); its files are written whole or not at all.
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
    },
    /// Compare two versions of a timetable over a window, never merged: per pair of places the
    /// median and 90th percentile before and after, per place the change and lost or gained
    /// service, per route trips, first and last departures and headway, the connections whose
    /// status changed, and a headline. Writes a folder of CSV files and about.txt.
    #[command(after_help = compare::DEFINITIONS)]
    Compare {
        /// A feed of the version before (a .zip or a folder); repeat for several.
        #[arg(long, required = true, value_name = "FILE")]
        before: Vec<PathBuf>,
        /// A feed of the version after; repeat for several.
        #[arg(long, required = true, value_name = "FILE")]
        after: Vec<PathBuf>,
        /// Service date, YYYY-MM-DD (of both versions unless --after-date is given).
        #[arg(long)]
        date: String,
        /// Service date of the version after, YYYY-MM-DD (compare a Wednesday of each).
        #[arg(long)]
        after_date: Option<String>,
        /// Departures in this window, local HH:MM-HH:MM (the end not sampled).
        #[arg(long, value_name = "HH:MM-HH:MM")]
        window: String,
        /// Minutes between sampled departures [default: 1].
        #[arg(long, value_name = "MIN")]
        step: Option<u32>,
        /// all (every pair of places in both versions), sample:N, or a CSV file with
        /// from_stop_id,to_stop_id.
        #[arg(long, default_value = "all", value_name = "all|sample:N|FILE")]
        pairs: String,
        /// Seed of the sample [default: 1].
        #[arg(long)]
        seed: Option<u64>,
        /// Cut-off of the cumulative opportunities, minutes [default: 30].
        #[arg(long, value_name = "MIN")]
        cutoff: Option<u32>,
        /// With --pairs all: only these destinations (ID,ID,...); each place's change is taken over them.
        #[arg(long, value_name = "ID,ID")]
        destinations: Option<String>,
        /// Threads [default: all cores].
        #[arg(long, value_name = "N")]
        threads: Option<usize>,
        /// Output folder (created if missing); its files are written whole or not at all.
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
    },
    /// Load feeds and print what was read, with every warning (file, line, field).
    Check {
        #[command(flatten)]
        feeds: Feeds,
        /// Print the feed reports as JSON.
        #[arg(long)]
        json: bool,
    },
    /// Write a generated, deterministic GTFS feed of an invented city (for tests and benchmarks).
    Synth {
        /// small (≈ 50 k stop times), region (≈ 600 k) or metro (≈ 5 M).
        #[arg(long, default_value = "small")]
        preset: String,
        /// Seed of the generator: the same preset and seed give the same feed.
        #[arg(long, default_value_t = 1)]
        seed: u64,
        /// Zip file to write (replaced whole, or left untouched on error).
        #[arg(long, value_name = "FILE")]
        out: PathBuf,
    },
    /// Write the routable timetable of a run of service dates as one binary snapshot file, which
    /// a kiosk (and every command's --feed) reads without parsing GTFS.
    Snapshot {
        #[command(flatten)]
        feeds: Feeds,
        #[command(flatten)]
        dates: kiosk::Dates,
        /// Snapshot file to write (replaced whole, or left untouched on error).
        #[arg(long, value_name = "FILE")]
        out: PathBuf,
    },
    /// Write a self-contained kiosk folder (page, WASM, snapshot, web app manifest, service
    /// worker) showing departures from one stop and journeys to a few destinations, offline.
    #[command(after_help = kiosk::BOARD_HELP)]
    Kiosk {
        #[command(flatten)]
        feeds: Feeds,
        #[command(flatten)]
        at: kiosk::Where,
        #[command(flatten)]
        dates: kiosk::Dates,
        /// Heading shown on the screen (default: the stop's name).
        #[arg(long)]
        title: Option<String>,
        /// Folder holding the built page (kiosk/ and pkg/); default: this source tree's www/.
        #[arg(long, value_name = "DIR")]
        www: Option<PathBuf>,
        /// Folder to write (a folder this command wrote before is replaced whole).
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
    },
    /// The kiosk's board as text: next departures from a stop and journeys to destinations.
    #[command(after_help = kiosk::BOARD_HELP)]
    Board {
        #[command(flatten)]
        feeds: Feeds,
        #[command(flatten)]
        place: kiosk::Where,
        /// The instant, RFC 3339 (e.g. 2026-10-25T00:20:00Z); default: now.
        #[arg(long)]
        at: Option<String>,
        /// Minutes ahead to list departures.
        #[arg(long, default_value_t = 90)]
        horizon: u32,
        #[arg(long)]
        json: bool,
    },
    /// Serve the web page (or any folder) on 127.0.0.1 only.
    Serve {
        /// Port to listen on; 0 picks a free one.
        #[arg(long, default_value_t = 8080)]
        port: u16,
        /// Folder to serve.
        #[arg(long, default_value = "www")]
        root: PathBuf,
        /// Extra GTFS zips offered to the page under feeds/ (repeatable).
        #[arg(long = "feed", value_name = "FILE")]
        feeds: Vec<PathBuf>,
    },
}

fn load(feeds: &[PathBuf], quiet: bool) -> Result<Engine, String> {
    let mut engine = Engine::new();
    for f in feeds {
        let meta = timeweave_disk::load_feed(&mut engine, f, &mut |_, _| {}).map_err(|e| format!("error: {e}"))?;
        if !quiet && meta.warnings.total > 0 {
            eprintln!("{}: {} warnings (run `timeweave check` to list them)", meta.name, meta.warnings.total);
        }
    }
    Ok(engine)
}

/// Writes to stdout; a closed pipe (`| head`) ends the output quietly instead of panicking.
pub(crate) fn say(text: &str) {
    use std::io::Write;
    let mut out = std::io::stdout().lock();
    if out.write_all(text.as_bytes()).and_then(|_| out.write_all(b"\n")).is_err() {
        std::process::exit(0);
    }
}

macro_rules! println {
    ($($t:tt)*) => { say(&format!($($t)*)) };
}

fn main() -> ExitCode {
    match run(Cli::parse()) {
        Ok(()) => ExitCode::SUCCESS,
        Err(msg) => {
            eprintln!("{msg}");
            ExitCode::FAILURE
        }
    }
}

pub(crate) fn json<T: serde::Serialize>(v: &T) -> Result<(), String> {
    println!("{}", serde_json::to_string_pretty(v).map_err(|e| e.to_string())?);
    Ok(())
}

fn run(cli: Cli) -> Result<(), String> {
    match cli.command {
        Command::Plan {
            feeds,
            from,
            to,
            date,
            at,
            step_free,
            next,
            walk_limit,
            walking_speed,
            change_penalty,
            max_duration,
            fewest_rides,
            json: as_json,
        } => {
            let mut engine = load(&feeds.feeds, as_json)?;
            let q = PlanQuery {
                from,
                to,
                date,
                time: at,
                step_free: step_free_of(step_free),
                walk_limit_m: walk_limit,
                walking_speed_mps: walking_speed,
                change_penalty_s: change_penalty.map(|m| m * 60),
                max_duration_s: max_duration.map(|m| m * 60),
                next: Some(next),
                fewest_rides,
                ..PlanQuery::default()
            };
            let result = engine.plan(&q).map_err(|e| format!("error: {e}"))?;
            if as_json {
                json(&timeweave_present::plan_json(&result))
            } else {
                say(timeweave_present::plan_text(&result).trim_end());
                Ok(())
            }
        }
        Command::Stops { feeds, search, limit, json: as_json } => {
            let engine = load(&feeds.feeds, as_json)?;
            let hits = engine.search_stops(&search, limit);
            if as_json {
                return json(&hits);
            }
            if hits.is_empty() {
                return Err(match engine.resolve(&search) {
                    Err(e) => format!("{e}"),
                    Ok(_) => format!("no stop matches {search:?}"),
                });
            }
            for h in hits {
                let extra = [h.platform.as_ref().map(|p| format!("platform {p}")), h.station.as_ref().map(|s| format!("in {s}"))]
                    .into_iter()
                    .flatten()
                    .collect::<Vec<_>>()
                    .join(", ");
                println!(
                    "{:<24} {}{}",
                    format!("{}:{}", h.feed, h.id),
                    h.name,
                    if extra.is_empty() { String::new() } else { format!(" ({extra})") }
                );
            }
            Ok(())
        }
        Command::Reach { feeds, from, date, at, minutes, window: w, step_free, out, json: as_json } => {
            let mut engine = load(&feeds.feeds, as_json)?;
            let sf = step_free_of(step_free);
            let at = match (at, &w.window) {
                (_, Some(span)) => {
                    let q = window::query(date, &w, span.clone(), sf, &timeweave::engine::window::DEFAULT_PERCENTILES)?;
                    return window::reach(&mut engine, &from, &q, out.as_deref(), as_json);
                }
                (Some(at), None) => at,
                (None, None) => return Err("error: give --at HH:MM (one departure) or --window HH:MM-HH:MM".into()),
            };
            let reach = engine.reach(&from, &date, &at, sf, minutes).map_err(|e| format!("error: {e}"))?;
            if as_json {
                return json(&reach);
            }
            println!("{} stops reachable within {minutes} min:", reach.len());
            for r in reach {
                println!("  {:>3} min  {} [{}]", r.minutes, r.name, r.stop_id);
            }
            Ok(())
        }
        Command::Matrix { feeds, date, window: w, origins, destinations, step_free, opportunities, out, threads, shard } => {
            let span = w.window.clone().ok_or("error: give --window HH:MM-HH:MM")?;
            let mut engine = load(&feeds.feeds, false)?;
            let q = window::query(date, &w, span, step_free_of(step_free), &[5.0, 25.0, 50.0, 75.0, 95.0])?;
            let a = window::MatrixArgs {
                shard: shard.as_deref(),
                origins: &origins,
                destinations: &destinations,
                opportunities: opportunities.as_deref(),
                out: &out,
                threads,
            };
            window::matrix(&mut engine, &q, a)
        }
        Command::Interchange { feeds, date, station, window, near_miss, horizon, out } => {
            let mut engine = load(&feeds.feeds, false)?;
            let q =
                timeweave::engine::interchange::InterchangeQuery { station, date, window, horizon_min: horizon, near_miss_min: near_miss };
            interchange::run(&mut engine, &q, &out)
        }
        Command::Stepfree {
            feeds,
            date,
            window,
            step,
            pairs,
            seed,
            lenient,
            outage,
            outages,
            alerts,
            step_free_speed,
            fix_top,
            fix_origins,
            explain,
            threads,
            out,
        } => {
            let mut engine = load(&feeds.feeds, false)?;
            let a = stepfree::Args {
                date,
                window,
                step,
                pairs: &pairs,
                seed,
                lenient,
                outage: &outage,
                outages: outages.as_deref(),
                alerts: alerts.as_deref(),
                step_free_speed,
                fix_top,
                fix_origins,
                explain,
                threads,
                out: &out,
            };
            stepfree::run(&mut engine, a)
        }
        Command::Compare { before, after, date, after_date, window, step, pairs, seed, cutoff, destinations, threads, out } => {
            let mut b = load(&before, false)?;
            let mut a = load(&after, false)?;
            let args = compare::Args {
                before: &before,
                after: &after,
                date,
                after_date,
                window,
                step,
                pairs: &pairs,
                seed,
                cutoff,
                destinations,
                threads,
                out: &out,
            };
            compare::run(&mut b, &mut a, args)
        }
        Command::Check { feeds, json: as_json } => {
            let engine = load(&feeds.feeds, true)?;
            if as_json {
                return json(&engine.tt.feeds);
            }
            for f in &engine.tt.feeds {
                println!(
                    "{}: {} stops, {} routes, {} trips, {} stop events, {} to {}, time zone {}",
                    f.name,
                    f.stops,
                    f.routes,
                    f.trips,
                    f.stop_events,
                    opt(f.first_date),
                    opt(f.last_date),
                    f.timezone.name()
                );
                for w in &f.warnings.issues {
                    println!("  warning: {w}");
                }
                if f.warnings.total as usize > f.warnings.issues.len() {
                    println!("  … and {} more warnings", f.warnings.total as usize - f.warnings.issues.len());
                }
            }
            Ok(())
        }
        Command::Synth { preset, seed, out } => {
            let preset: timeweave_synth::Preset = preset.parse().map_err(|e| format!("error: {e}"))?;
            let stats = timeweave_disk::write_atomically(&out, |w| timeweave_synth::write_feed(preset, seed, w))
                .map_err(|e| format!("error: cannot write {}: {e}", out.display()))?;
            println!(
                "{}: {} stops, {} routes, {} trips, {} stop times, {} bytes",
                out.display(),
                stats.stops,
                stats.routes,
                stats.trips,
                stats.stop_times,
                stats.bytes
            );
            Ok(())
        }
        Command::Snapshot { feeds, dates, out } => {
            let engine = load(&feeds.feeds, false)?;
            kiosk::snapshot(&engine, &dates, &out)
        }
        Command::Kiosk { feeds, at, dates, title, www, out } => {
            let mut engine = load(&feeds.feeds, false)?;
            let www = www.unwrap_or_else(kiosk::default_www);
            let args = kiosk::KioskArgs {
                stop: &at.stop,
                destinations: &at.destinations,
                dates: &dates,
                title: title.as_deref(),
                www: &www,
                out: &out,
            };
            kiosk::kiosk(&mut engine, args)
        }
        Command::Board { feeds, place, at, horizon, json: as_json } => {
            let now_ms = kiosk::parse_at(at.as_deref())?;
            let mut engine = load(&feeds.feeds, as_json)?;
            let mut q = timeweave::engine::kiosk::BoardQuery::new(&place.stop, now_ms);
            q.destinations = place.destinations;
            q.horizon_min = horizon.clamp(1, 24 * 60);
            kiosk::board(&mut engine, &q, as_json)
        }
        Command::Serve { port, root, feeds } => timeweave_serve::serve(&root, port, &feeds).map_err(|e| format!("error: {e}")),
    }
}

fn opt<T: std::fmt::Display>(v: Option<T>) -> String {
    v.map_or("?".into(), |v| v.to_string())
}

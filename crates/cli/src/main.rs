//! The native command line: a thin shell around [`timeweave::Engine`].

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};
use timeweave::engine::{Engine, PlanQuery, PlanResult};
use timeweave::route::search::StepFree;

#[derive(Parser)]
#[command(name = "timeweave", version, about = "Journey planning and service connectivity over GTFS timetables")]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Plan journeys between two stops.
    Plan {
        /// GTFS feed: a .zip file or a folder of .txt files; repeat to merge feeds.
        #[arg(long = "feed", required = true)]
        feeds: Vec<PathBuf>,
        /// Origin: stop id, feed:stop id, or (part of) a stop name.
        #[arg(long)]
        from: String,
        /// Destination, as --from.
        #[arg(long)]
        to: String,
        /// Service date, YYYY-MM-DD.
        #[arg(long)]
        date: String,
        /// Departure, local clock time HH:MM.
        #[arg(long)]
        at: String,
        /// Step-free only: trips, stops and station paths marked wheelchair-accessible.
        #[arg(long)]
        step_free: bool,
        /// With --step-free: also allow elements whose accessibility is unknown (flagged).
        #[arg(long)]
        lenient: bool,
        /// Number of options (next departures).
        #[arg(long, default_value_t = 3)]
        options: usize,
        /// Longest walk per link, metres.
        #[arg(long)]
        max_walk: Option<f64>,
        /// Walking speed, m/s.
        #[arg(long)]
        walk_speed: Option<f64>,
        /// Penalty per boarding after the first, minutes.
        #[arg(long)]
        transfer_penalty: Option<u32>,
        /// Also list the Pareto set over arrival time and number of rides.
        #[arg(long)]
        pareto: bool,
        /// Print the result as JSON (the shape documented in DEVELOPERS.md).
        #[arg(long)]
        json: bool,
    },
    /// Find stops by name, id or code.
    Stops {
        #[arg(long = "feed", required = true)]
        feeds: Vec<PathBuf>,
        #[arg(long)]
        search: String,
        #[arg(long, default_value_t = 20)]
        limit: usize,
        #[arg(long)]
        json: bool,
    },
    /// Everything reachable from a stop within a time limit.
    Reach {
        #[arg(long = "feed", required = true)]
        feeds: Vec<PathBuf>,
        #[arg(long)]
        from: String,
        #[arg(long)]
        date: String,
        #[arg(long)]
        at: String,
        /// Time limit, minutes.
        #[arg(long, default_value_t = 45)]
        minutes: u32,
        #[arg(long)]
        step_free: bool,
        #[arg(long)]
        json: bool,
    },
    /// Load feeds and print what was read, with warnings.
    Check {
        #[arg(long = "feed", required = true)]
        feeds: Vec<PathBuf>,
        #[arg(long)]
        json: bool,
    },
    /// Write a generated, deterministic GTFS feed of an invented city (for tests and benchmarks).
    Synth {
        /// small (≈ 50 k stop times), region (≈ 600 k) or metro (≈ 5 M).
        #[arg(long, default_value = "small")]
        preset: String,
        #[arg(long, default_value_t = 1)]
        seed: u64,
        #[arg(long)]
        out: PathBuf,
    },
    /// Serve the web page (www/) and the WASM build on localhost.
    Serve {
        #[arg(long, default_value_t = 8080)]
        port: u16,
        /// Folder to serve.
        #[arg(long, default_value = "www")]
        root: PathBuf,
        /// Extra feeds offered to the page.
        #[arg(long = "feed")]
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
fn say(text: &str) {
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

fn json<T: serde::Serialize>(v: &T) -> Result<(), String> {
    println!("{}", serde_json::to_string_pretty(v).map_err(|e| e.to_string())?);
    Ok(())
}

fn run(cli: Cli) -> Result<(), String> {
    match cli.command {
        Command::Plan { feeds, from, to, date, at, step_free, lenient, options, max_walk, walk_speed, transfer_penalty, pareto, json: as_json } => {
            let mut engine = load(&feeds, as_json)?;
            let q = PlanQuery {
                from,
                to,
                date,
                time: at,
                step_free: match (step_free, lenient) {
                    (false, _) => StepFree::Off,
                    (true, false) => StepFree::Strict,
                    (true, true) => StepFree::Lenient,
                },
                max_walk_m: max_walk,
                walk_speed_mps: walk_speed,
                transfer_penalty_s: transfer_penalty.map(|m| m * 60),
                options: Some(options),
                pareto,
                ..PlanQuery::default()
            };
            let result = engine.plan(&q).map_err(|e| format!("error: {e}"))?;
            if as_json {
                json(&result)
            } else {
                say(present_plan(&result).trim_end());
                Ok(())
            }
        }
        Command::Stops { feeds, search, limit, json: as_json } => {
            let engine = load(&feeds, as_json)?;
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
                let extra = [h.platform.as_ref().map(|p| format!("platform {p}")), h.station.as_ref().map(|s| format!("in {s}"))].into_iter().flatten().collect::<Vec<_>>().join(", ");
                println!("{:<24} {}{}", format!("{}:{}", h.feed, h.id), h.name, if extra.is_empty() { String::new() } else { format!(" ({extra})") });
            }
            Ok(())
        }
        Command::Reach { feeds, from, date, at, minutes, step_free, json: as_json } => {
            let mut engine = load(&feeds, as_json)?;
            let sf = if step_free { StepFree::Strict } else { StepFree::Off };
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
        Command::Check { feeds, json: as_json } => {
            let engine = load(&feeds, true)?;
            if as_json {
                return json(&engine.tt.feeds);
            }
            for f in &engine.tt.feeds {
                println!("{}: {} stops, {} routes, {} trips, {} stop events, {} to {}, time zone {}", f.name, f.stops, f.routes, f.trips, f.stop_events, opt(f.first_date), opt(f.last_date), f.timezone.name());
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
            let file = std::fs::File::create(&out).map_err(|e| format!("error: cannot create {}: {e}", out.display()))?;
            let stats = timeweave_synth::write_feed(preset, seed, std::io::BufWriter::new(file)).map_err(|e| format!("error: {e}"))?;
            println!("{}: {} stops, {} routes, {} trips, {} stop times, {} bytes", out.display(), stats.stops, stats.routes, stats.trips, stats.stop_times, stats.bytes);
            Ok(())
        }
        Command::Serve { port, root, feeds } => timeweave_serve::serve(&root, port, &feeds).map_err(|e| format!("error: {e}")),
    }
}

fn opt<T: std::fmt::Display>(v: Option<T>) -> String {
    v.map_or("?".into(), |v| v.to_string())
}

fn present_plan(r: &PlanResult) -> String {
    use std::fmt::Write;
    let mut out = String::new();
    let _ = writeln!(out, "From {} to {} on {} at {}{}", r.query.from, r.query.to, r.query.date, r.query.time, match r.query.step_free {
        StepFree::Off => "",
        StepFree::Strict => " (step-free)",
        StepFree::Lenient => " (step-free, lenient)",
    });
    if let Some(n) = &r.no_journey {
        let _ = writeln!(out, "No journey: {}", n.message);
        for b in &n.blocking {
            let _ = writeln!(out, "  blocked by: {b}");
        }
    }
    for (i, it) in r.itineraries.iter().enumerate() {
        let _ = writeln!(out, "\nOption {}: {} → {}, {} min, {} ride{}, walk {} min, step-free: {:?}", i + 1, it.depart, it.arrive, it.duration_s / 60, it.rides, if it.rides == 1 { "" } else { "s" }, it.walk_s.div_ceil(60), it.step_free);
        for leg in &it.legs {
            let place = |p: &timeweave::journey::Place| match &p.platform {
                Some(pl) => format!("{} (platform {pl})", p.name),
                None => p.name.clone(),
            };
            match &leg.route {
                Some(route) => {
                    let wait = if leg.wait_before_s >= 60 { format!("  wait {} min, then", leg.wait_before_s / 60) } else { String::new() };
                    if !wait.is_empty() {
                        let _ = writeln!(out, "{wait}");
                    }
                    let _ = writeln!(out, "  {} {} {} {} → {} {}  {} {}{}", leg.depart, place(&leg.from), route.mode, route.short_name, leg.arrive, place(&leg.to), leg.headsign.as_deref().map(|h| format!("towards {h}")).unwrap_or_default(), if leg.intermediate_stops.is_empty() { String::new() } else { format!("({} stops between)", leg.intermediate_stops.len()) }, if leg.frequency_based { " [frequency-based: times are estimates]" } else { "" });
                }
                None => {
                    let how = if leg.path.is_empty() { String::new() } else { format!(" via {}", leg.path.iter().map(|p| p.mode.as_str()).collect::<Vec<_>>().join(", ")) };
                    let _ = writeln!(out, "  {} walk {} min {} → {}{}{}", leg.depart, leg.duration_s.div_ceil(60), place(&leg.from), place(&leg.to), leg.distance_m.map(|d| format!(", {d} m")).unwrap_or_default(), how);
                }
            }
            if r.query.step_free != StepFree::Off {
                let _ = writeln!(out, "      step-free: {:?} — {}", leg.step_free.status, leg.step_free.reasons.join("; "));
            }
        }
    }
    if !r.pareto.is_empty() {
        let _ = writeln!(out, "\nFewer rides or earlier arrival (Pareto set):");
        for it in &r.pareto {
            let _ = writeln!(out, "  {} ride{}: {} → {} ({} min)", it.rides, if it.rides == 1 { "" } else { "s" }, it.depart, it.arrive, it.duration_s / 60);
        }
    }
    if let Some(x) = r.step_free_extra_s {
        let _ = writeln!(out, "\nThe step-free journey arrives {} min {} than the standard one.", x.abs() / 60, if x >= 0 { "later" } else { "earlier" });
    }
    if r.query.step_free != StepFree::Off {
        let _ = writeln!(out, "\nCaution: results reflect the feed's data, which may be incomplete or out of date. Confirm on site and with the operator; local codes and licensed practice prevail.");
    }
    for w in &r.warnings {
        let _ = writeln!(out, "note: {w}");
    }
    out
}

//! `timeweave snapshot`, `timeweave kiosk` and `timeweave board`: the timetable as one binary
//! file, the self-contained kiosk folder built around it, and the kiosk's board as text.

use std::path::{Path, PathBuf};

use chrono::{DateTime, Duration, NaiveDate, Utc};
use timeweave::engine::kiosk::{Board, BoardQuery, Coverage};
use timeweave::engine::Engine;
use timeweave::timetable::calendar::parse_date;
use timeweave::timetable::Access;

use crate::say;

/// Words for `--help`: what every figure on the board means.
pub const BOARD_HELP: &str = "Definitions:
  The service date is the local calendar date of --at in the first feed's agency_timezone (the day before when --at falls before that date's origin, noon minus 12 h).
  A departure's time is its instant in local clock time (tz database rules, so right across a clock change); min: whole minutes from --at, rounded down.
  step-free: the trip and the stop are both marked accessible in the feed (wheelchair_accessible, wheelchair_boarding); unknown: the feed does not say.
  Journeys: the next journeys leaving at or after --at, standard and strict step-free (only elements the feed marks accessible); +N min: first step-free arrival minus first standard arrival.";

/// Where a board stands and where its journeys go.
#[derive(clap::Args)]
pub struct Where {
    /// The stop or station the board stands at (id, code or name).
    #[arg(long)]
    pub stop: String,
    /// Destinations shown with their next journeys, comma-separated ids.
    #[arg(long, value_delimiter = ',')]
    pub destinations: Vec<String>,
}

/// The service dates a snapshot covers.
#[derive(clap::Args)]
pub struct Dates {
    /// First service date, YYYY-MM-DD (default: today in the first feed's time zone).
    #[arg(long)]
    from: Option<String>,
    /// Service dates covered, from --from on (1-366).
    #[arg(long, default_value_t = 7)]
    days: u32,
}

/// `--from` (default: today in the first feed's time zone) and the `days - 1` after it.
fn dates(engine: &Engine, d: &Dates) -> Result<(NaiveDate, NaiveDate), String> {
    let (from, days) = (d.from.as_deref(), d.days);
    if !(1..=366).contains(&days) {
        return Err(format!("error: --days {days} must be 1-366"));
    }
    let first = match from {
        Some(text) => parse_date(text).ok_or_else(|| format!("error: --from {text:?} is not YYYY-MM-DD"))?,
        None => Utc::now().with_timezone(&engine.tt.feeds[0].timezone).date_naive(),
    };
    Ok((first, first + Duration::days(days as i64 - 1)))
}

fn made_by() -> String {
    format!("timeweave {}", env!("CARGO_PKG_VERSION"))
}

pub fn snapshot(engine: &Engine, d: &Dates, out: &Path) -> Result<(), String> {
    let (first, last) = dates(engine, d)?;
    let bytes = engine.snapshot_bytes(first, last, &made_by()).map_err(|e| format!("error: {e}"))?;
    timeweave_disk::write_atomically(out, |w| std::io::Write::write_all(w, &bytes))
        .map_err(|e| format!("error: cannot write {}: {e}", out.display()))?;
    say(&format!("{}: {} bytes, service dates {first} to {last}", out.display(), bytes.len()));
    Ok(())
}

/// The page's files a kiosk folder copies: (path under --www, path in the folder).
const PAGE_FILES: [(&str, &str); 6] = [
    ("kiosk/index.html", "index.html"),
    ("kiosk/kiosk.js", "kiosk.js"),
    ("kiosk/kiosk.css", "kiosk.css"),
    ("kiosk/sw.js", "sw.js"),
    ("kiosk/icon.svg", "icon.svg"),
    ("pkg/timeweave.js", "pkg/timeweave.js"),
];
const WASM: (&str, &str) = ("pkg/timeweave_bg.wasm", "pkg/timeweave_bg.wasm");
pub const SNAPSHOT_FILE: &str = "timetable.twsnap";

/// The page files as built in this source tree, when the binary runs where it was built.
pub fn default_www() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../../www")
}

pub struct KioskArgs<'a> {
    pub stop: &'a str,
    pub destinations: &'a [String],
    pub dates: &'a Dates,
    pub title: Option<&'a str>,
    pub www: &'a Path,
    pub out: &'a Path,
}

fn write(dir: &Path, name: &str, bytes: &[u8]) -> Result<(), String> {
    let path = dir.join(name);
    if let Some(parent) = path.parent() {
        std::fs::create_dir_all(parent).map_err(|e| format!("error: cannot create {}: {e}", parent.display()))?;
    }
    std::fs::write(&path, bytes).map_err(|e| format!("error: cannot write {}: {e}", path.display()))
}

pub fn kiosk(engine: &mut Engine, a: KioskArgs) -> Result<(), String> {
    // Everything that can be refused is refused before anything is written.
    let stop = engine.resolve_match(a.stop).map_err(|e| format!("error: --stop: {e}"))?;
    let mut dests = Vec::new();
    for d in a.destinations {
        dests.push(engine.resolve_match(d).map_err(|e| format!("error: --destinations: {e}"))?);
    }
    let (first, last) = dates(engine, a.dates)?;
    let mut page = Vec::new();
    for (from, to) in PAGE_FILES.iter().chain([&WASM]) {
        let path = a.www.join(from);
        let bytes = std::fs::read(&path).map_err(|e| {
            format!("error: the kiosk page file {} cannot be read ({e}): build the page (scripts/build.sh) or pass --www", path.display())
        })?;
        page.push((*to, bytes));
    }
    let snap = engine.snapshot_bytes(first, last, &made_by()).map_err(|e| format!("error: {e}"))?;
    let staged = timeweave_disk::StagedFolder::create(a.out, |p| p.join("kiosk.json").is_file())
        .map_err(|e| format!("error: cannot write {}: {e}", a.out.display()))?;
    let checksum = u32::from_le_bytes(snap[12..16].try_into().expect("snapshot header"));
    // The cache name changes with any file, so a new page or a new timetable replaces the old whole.
    let mut all = crc32fast::Hasher::new();
    all.update(&snap);
    page.iter().for_each(|(_, b)| all.update(b));
    let cache = all.finalize();
    let title = a.title.map_or_else(|| stop.name.clone(), str::to_string);
    let config = serde_json::json!({
        "title": title,
        "stop": stop.id,
        "stop_name": stop.name,
        "destinations": dests.iter().map(|d| d.id.clone()).collect::<Vec<_>>(),
        "snapshot": SNAPSHOT_FILE,
        "checksum": format!("{checksum:08x}"),
        "first_date": first.to_string(),
        "last_date": last.to_string(),
        "made_by": made_by(),
    });
    let manifest = serde_json::json!({
        "name": format!("{title} departures"),
        "short_name": "Departures",
        "start_url": "./",
        "scope": "./",
        "display": "fullscreen",
        "background_color": "#101418",
        "theme_color": "#101418",
        "icons": [{ "src": "icon.svg", "sizes": "any", "type": "image/svg+xml" }],
    });
    // The service worker's list: every file of the folder.
    let mut files: Vec<&str> = vec!["./", "kiosk.json", "manifest.webmanifest", SNAPSHOT_FILE];
    files.extend(page.iter().map(|(to, _)| *to).filter(|f| *f != "sw.js"));
    let list = format!(
        "// Written by `timeweave kiosk`: the files the service worker keeps, and its cache name.\nself.KIOSK_CACHE = 'timeweave-kiosk-{cache:08x}';\nself.KIOSK_FILES = {};\n",
        serde_json::to_string(&files).expect("strings")
    );
    let dir = staged.dir();
    for (to, bytes) in &page {
        write(dir, to, bytes)?;
    }
    write(dir, SNAPSHOT_FILE, &snap)?;
    write(dir, "kiosk.json", serde_json::to_string_pretty(&config).expect("json").as_bytes())?;
    write(dir, "manifest.webmanifest", serde_json::to_string_pretty(&manifest).expect("json").as_bytes())?;
    write(dir, "kiosk-files.js", list.as_bytes())?;
    staged.commit().map_err(|e| format!("error: cannot write {}: {e}", a.out.display()))?;
    say(&format!(
        "{}: kiosk for {} ({}), {} destinations, service dates {first} to {last}, timetable {} bytes; serve it with `timeweave serve --root {}`",
        a.out.display(),
        stop.name,
        stop.id,
        dests.len(),
        snap.len(),
        a.out.display()
    ));
    Ok(())
}

fn access(a: Access) -> &'static str {
    match a {
        Access::Yes => "step-free",
        Access::No => "not step-free",
        Access::Unknown => "step-free unknown",
    }
}

pub fn parse_at(text: Option<&str>) -> Result<i64, String> {
    match text {
        None => Ok(Utc::now().timestamp_millis()),
        Some(t) => DateTime::parse_from_rfc3339(t)
            .map(|d| d.timestamp_millis())
            .map_err(|e| format!("error: --at {t:?} is not an RFC 3339 instant such as 2026-10-25T00:20:00Z ({e})")),
    }
}

pub fn board(engine: &mut Engine, q: &BoardQuery, as_json: bool) -> Result<(), String> {
    let b: Board = engine.board(q).map_err(|e| format!("error: {e}"))?;
    if as_json {
        return crate::json(&b);
    }
    say(&format!(
        "{} ({}) at {} on {} ({}), service date {}; timetable {} to {}",
        b.stop_name, b.stop_id, b.now, b.today, b.timezone, b.service_date, b.first_date, b.last_date
    ));
    match b.coverage {
        Coverage::RunOut => say(&format!("The timetable ends on {}: no departure times are shown.", b.last_date)),
        Coverage::NotYet => say(&format!("The timetable starts on {}: no departure times are shown yet.", b.first_date)),
        Coverage::Covered => {}
    }
    for l in &b.lines {
        let deps: Vec<String> = l
            .departures
            .iter()
            .map(|d| {
                let platform = d.platform.as_ref().map(|p| format!(" platform {p}")).unwrap_or_default();
                format!("{} ({} min{platform}, {})", d.time, d.in_min, access(d.step_free))
            })
            .collect();
        say(&format!("  {} to {}: {}", l.name, l.headsign, deps.join("; ")));
    }
    for d in &b.destinations {
        let fmt = |its: &[timeweave::journey::Itinerary]| {
            its.iter()
                .map(|i| format!("{}-{} ({} min, {} rides)", i.depart, i.arrive, i.duration_s.div_ceil(60), i.rides))
                .collect::<Vec<_>>()
                .join("; ")
        };
        let extra = d.step_free_extra_s.map(|s| format!(", step-free {:+} min", s / 60)).unwrap_or_default();
        say(&format!("  to {} ({}): standard {}; step-free {}{extra}", d.name, d.stop_id, fmt(&d.standard), fmt(&d.step_free)));
    }
    say(timeweave::engine::stepfree::CAUTION);
    Ok(())
}

//! The bad-feed corpus: malformed feeds as zip bytes, each derived from one small valid base feed
//! and paired with the outcome the contributor guide's Decisions table asks for (fatal: not a zip,
//! decompression bomb, missing required file or column, invalid agency_timezone, no usable stop;
//! everything else a located warning with the row skipped and the rest of the feed loaded).
//!
//! Line numbers are 1-based with the header as line 1 (DEVELOPERS.md, `FeedIssue`), counted as
//! physical lines of the file, the way an editor shows them.
#![allow(dead_code)]

use std::io::{Cursor, Write};

/// What loading a corpus feed must give.
#[derive(Debug, Clone, PartialEq)]
pub enum Expect {
    /// The feed is refused; the error names this file / line / field (`None`: not applicable).
    Fatal { file: Option<&'static str>, line: Option<u64>, field: Option<&'static str> },
    /// The feed loads; one warning names exactly this file, line and field; the row is skipped.
    Warning { file: &'static str, line: u64, field: &'static str },
    /// The feed loads; `check` tells whether it was read right.
    Loads,
}

/// What a loaded feed must satisfy beyond its expected outcome; `feed` is its name in the engine.
pub type Check = fn(&mut timeweave::engine::Engine, &str) -> Result<(), String>;

pub struct BadFeed {
    pub name: &'static str,
    pub bytes: Vec<u8>,
    pub expect: Expect,
    /// Where the expected outcome comes from.
    pub source: &'static str,
    pub check: Option<Check>,
    /// Set when the engine is known to get this case wrong (reported to the lead); the main test
    /// then only checks that nothing panics and the loaded feed is intact.
    pub engine_issue: Option<&'static str>,
    /// The bomb cases: the load must finish quickly without expanding the entry.
    pub bomb: bool,
}

const GTFS: &str = "GTFS Schedule reference";
const GUIDE: &str = "DEVELOPERS.md Decisions (fatal vs warning)";

/// The files of a feed, as bytes (some cases hold invalid UTF-8).
#[derive(Clone)]
pub struct Files(pub Vec<(String, Vec<u8>)>);

impl Files {
    pub fn get(&self, name: &str) -> &[u8] {
        &self.0.iter().find(|(n, _)| n == name).expect("file of the base feed").1
    }
    pub fn set(mut self, name: &str, body: impl Into<Vec<u8>>) -> Files {
        let body = body.into();
        match self.0.iter_mut().find(|(n, _)| n == name) {
            Some(f) => f.1 = body,
            None => self.0.push((name.to_string(), body)),
        }
        self
    }
    pub fn remove(mut self, name: &str) -> Files {
        self.0.retain(|(n, _)| n != name);
        self
    }
    /// Appends one row and returns the files and the row's line number.
    pub fn append(self, name: &str, row: impl AsRef<[u8]>) -> (Files, u64) {
        let mut body = self.get(name).to_vec();
        body.extend_from_slice(row.as_ref());
        body.push(b'\n');
        let line = body.iter().filter(|&&b| b == b'\n').count() as u64;
        (self.set(name, body), line)
    }
    /// Replaces the one occurrence of `from` in file `name`.
    pub fn replace(self, name: &str, from: &str, to: impl AsRef<[u8]>) -> Files {
        let body = self.get(name).to_vec();
        let pos = body.windows(from.len()).position(|w| w == from.as_bytes()).unwrap_or_else(|| panic!("{from:?} not in {name}"));
        let mut out = body[..pos].to_vec();
        out.extend_from_slice(to.as_ref());
        out.extend_from_slice(&body[pos + from.len()..]);
        self.set(name, out)
    }
    pub fn zip(&self) -> Vec<u8> {
        zip_entries(&self.0.iter().map(|(n, b)| (n.as_str(), b.as_slice())).collect::<Vec<_>>(), zip::CompressionMethod::Deflated)
    }
}

pub fn zip_entries(entries: &[(&str, &[u8])], method: zip::CompressionMethod) -> Vec<u8> {
    let mut w = zip::ZipWriter::new(Cursor::new(Vec::new()));
    let options = zip::write::SimpleFileOptions::default()
        .compression_method(method)
        .compression_level(if method == zip::CompressionMethod::Stored { None } else { Some(9) });
    for (name, body) in entries {
        w.start_file(*name, options).expect("zip entry");
        w.write_all(body).expect("zip write");
    }
    w.finish().expect("zip finish").into_inner()
}

/// The valid base feed, placed at latitude `lat0` (the corpus feeds sit one degree north of the
/// base feed loaded beside them, so their stops never link to it by walking).
///
/// Stops: station S with platform A (inherits wheelchair_boarding) and entrance E, stops B, C and
/// D (D 55 m from C). Trips every day of 2026: T1 A 08:00 → B 08:05/08:06 → C 08:10, T2 A 09:00 →
/// C 09:10, T3 A 10:00 → C 10:10 repeated every 20 min until 11:00. A change C → D needs 120 s.
pub fn base_files(lat0: f64) -> Files {
    let lat = |d: f64| format!("{:.6}", lat0 + d);
    Files(vec![
        ("agency.txt".into(), b"agency_id,agency_name,agency_url,agency_timezone\nTA,Test Transit,https://transit.example/,Etc/GMT-1\n".to_vec()),
        (
            "stops.txt".into(),
            format!(
                "stop_id,stop_name,stop_lat,stop_lon,location_type,parent_station,wheelchair_boarding\n\
                 S,Larch Station,{},10.000000,1,,1\n\
                 A,Larch Station platform 1,{},10.000000,0,S,\n\
                 B,Birch Lane,{},10.000000,0,,1\n\
                 C,Cedar Yard,{},10.000000,0,,1\n\
                 D,Dogwood Row,{},10.000000,0,,1\n\
                 E,Larch Station entrance,{},10.000500,2,S,1\n",
                lat(0.0),
                lat(0.0),
                lat(0.01),
                lat(0.02),
                lat(0.0205),
                lat(0.0)
            )
            .into_bytes(),
        ),
        ("routes.txt".into(), b"route_id,agency_id,route_short_name,route_long_name,route_type\nR,TA,1,Test line,3\n".to_vec()),
        ("calendar.txt".into(), b"service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nWK,1,1,1,1,1,1,1,20260101,20261231\n".to_vec()),
        ("calendar_dates.txt".into(), b"service_id,date,exception_type\nWK,20261225,2\n".to_vec()),
        ("trips.txt".into(), b"route_id,service_id,trip_id,wheelchair_accessible\nR,WK,T1,1\nR,WK,T2,1\nR,WK,T3,1\n".to_vec()),
        (
            "stop_times.txt".into(),
            b"trip_id,arrival_time,departure_time,stop_id,stop_sequence,pickup_type,drop_off_type\n\
              T1,08:00:00,08:00:00,A,1,0,0\n\
              T1,08:05:00,08:06:00,B,2,0,0\n\
              T1,08:10:00,08:10:00,C,3,0,0\n\
              T2,09:00:00,09:00:00,A,1,0,0\n\
              T2,09:10:00,09:10:00,C,2,0,0\n\
              T3,10:00:00,10:00:00,A,1,0,0\n\
              T3,10:10:00,10:10:00,C,2,0,0\n"
                .to_vec(),
        ),
        ("frequencies.txt".into(), b"trip_id,start_time,end_time,headway_secs,exact_times\nT3,10:00:00,11:00:00,1200,1\n".to_vec()),
        ("transfers.txt".into(), b"from_stop_id,to_stop_id,transfer_type,min_transfer_time\nC,D,2,120\n".to_vec()),
        ("pathways.txt".into(), b"pathway_id,from_stop_id,to_stop_id,pathway_mode,is_bidirectional\nP1,E,A,1,1\n".to_vec()),
    ])
}

/// Latitude of the corpus feeds.
pub const BAD_LAT: f64 = 51.0;
/// Latitude of the base feed loaded before each corpus feed.
pub const BASE_LAT: f64 = 50.0;

fn fatal(file: Option<&'static str>, line: Option<u64>, field: Option<&'static str>) -> Expect {
    Expect::Fatal { file, line, field }
}

/// A bad feed with a warning at `line` of `file`, field `field`.
fn warn(name: &'static str, f: (Files, u64), file: &'static str, field: &'static str, source: &'static str) -> BadFeed {
    BadFeed {
        name,
        bytes: f.0.zip(),
        expect: Expect::Warning { file, line: f.1, field },
        source,
        check: None,
        engine_issue: None,
        bomb: false,
    }
}

fn warn_at(name: &'static str, f: Files, file: &'static str, line: u64, field: &'static str, source: &'static str) -> BadFeed {
    warn(name, (f, line), file, field, source)
}

fn refused(name: &'static str, bytes: Vec<u8>, expect: Expect, source: &'static str) -> BadFeed {
    BadFeed { name, bytes, expect, source, check: None, engine_issue: None, bomb: false }
}

fn loads(name: &'static str, f: Files, check: Check, source: &'static str) -> BadFeed {
    BadFeed { name, bytes: f.zip(), expect: Expect::Loads, source, check: Some(check), engine_issue: None, bomb: false }
}

/// Plans `feed:A` → `feed:C` on Wednesday 2026-06-03 at 07:30 and returns (depart, arrive) of the
/// first option.
pub fn first_a_to_c(engine: &mut timeweave::engine::Engine, feed: &str) -> Result<(String, String), String> {
    let q = timeweave::engine::PlanQuery {
        from: format!("{feed}:A"),
        to: format!("{feed}:C"),
        date: "2026-06-03".into(),
        time: "07:30".into(),
        ..Default::default()
    };
    let r = engine.plan(&q).map_err(|e| format!("plan {feed}:A → {feed}:C failed: {e}"))?;
    let it = r.journeys.first().ok_or_else(|| format!("no itinerary {feed}:A → {feed}:C: {:?}", r.nothing_found))?;
    Ok((it.depart.clone(), it.arrive.clone()))
}

fn expect_t1(engine: &mut timeweave::engine::Engine, feed: &str) -> Result<(), String> {
    // The base feed's first trip, T1: A 08:00 → C 08:10.
    match first_a_to_c(engine, feed)? {
        (d, a) if d == "08:00" && a == "08:10" => Ok(()),
        other => Err(format!("expected T1 08:00 → 08:10, got {other:?}")),
    }
}

fn stop_name(engine: &timeweave::engine::Engine, feed: &str, id: &str) -> Result<String, String> {
    let s = engine.resolve(&format!("{feed}:{id}")).map_err(|e| format!("{feed}:{id} does not resolve: {e}"))?;
    Ok(engine.tt.stops[s.idx()].name.clone())
}

/// A feed whose stop_times.txt is `mb` MiB of one repeated byte, deflated (≈ 1030× smaller).
pub fn real_bomb(mb: usize) -> Vec<u8> {
    base_files(BAD_LAT).set("stop_times.txt", vec![b'a'; mb << 20]).zip()
}

/// Rewrites the declared uncompressed size of entry `name` (local header and central directory)
/// to `size`, leaving the data as it is: a zip whose sizes lie.
pub fn declare_size(mut zip: Vec<u8>, name: &str, size: u32) -> Vec<u8> {
    let n = name.as_bytes();
    let mut i = 0;
    while i + 46 <= zip.len() {
        let sig = &zip[i..i + 4];
        if sig == b"PK\x03\x04" {
            let name_len = u16::from_le_bytes([zip[i + 26], zip[i + 27]]) as usize;
            if zip.get(i + 30..i + 30 + name_len) == Some(n) {
                zip[i + 22..i + 26].copy_from_slice(&size.to_le_bytes());
            }
        } else if sig == b"PK\x01\x02" {
            let name_len = u16::from_le_bytes([zip[i + 28], zip[i + 29]]) as usize;
            if zip.get(i + 46..i + 46 + name_len) == Some(n) {
                zip[i + 24..i + 28].copy_from_slice(&size.to_le_bytes());
            }
        }
        i += 1;
    }
    zip
}

/// Pseudo-random bytes (xorshift), which deflate cannot shrink.
fn noise(len: usize, mut x: u64) -> Vec<u8> {
    (0..len)
        .map(|_| {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            b'a' + (x % 26) as u8
        })
        .collect()
}

/// The whole corpus.
pub fn corpus() -> Vec<BadFeed> {
    let b = || base_files(BAD_LAT);
    let st = "stop_times.txt";
    let mut v: Vec<BadFeed> = Vec::new();

    // --- the archive itself
    v.push(refused("not a zip", b"agency_id,agency_name,agency_url,agency_timezone\n".to_vec(), fatal(None, None, None), GUIDE));
    let whole = b().zip();
    v.push(refused("truncated zip", whole[..whole.len() / 2].to_vec(), fatal(None, None, None), GUIDE));
    v.push(refused("empty file (0 bytes)", Vec::new(), fatal(None, None, None), GUIDE));
    v.push(refused("zip with no entries", zip_entries(&[], zip::CompressionMethod::Stored), fatal(Some("agency.txt"), None, None), GTFS));

    // --- required files and columns
    for (name, file) in [
        ("missing agency.txt", "agency.txt"),
        ("missing stops.txt", "stops.txt"),
        ("missing routes.txt", "routes.txt"),
        ("missing trips.txt", "trips.txt"),
        ("missing stop_times.txt", "stop_times.txt"),
    ] {
        v.push(refused(name, b().remove(file).zip(), fatal(Some(file), None, None), GTFS));
    }
    let none = refused(
        "neither calendar.txt nor calendar_dates.txt",
        b().remove("calendar.txt").remove("calendar_dates.txt").zip(),
        fatal(Some("calendar.txt"), None, None),
        GTFS,
    );
    v.push(none);
    v.push(refused(
        "stops.txt without stop_id column",
        b().replace("stops.txt", "stop_id,", "stop_ident,").zip(),
        fatal(Some("stops.txt"), Some(1), Some("stop_id")),
        GTFS,
    ));
    v.push(refused(
        "stop_times.txt without arrival_time column",
        b().replace(st, "arrival_time,", "arrival,").zip(),
        fatal(Some(st), Some(1), Some("arrival_time")),
        GTFS,
    ));
    v.push(refused(
        "trips.txt without service_id column",
        b().replace("trips.txt", "service_id,", "svc,").zip(),
        fatal(Some("trips.txt"), Some(1), Some("service_id")),
        GTFS,
    ));
    v.push(refused(
        "empty stops.txt entry",
        b().set("stops.txt", Vec::new()).zip(),
        fatal(Some("stops.txt"), Some(1), Some("stop_id")),
        GTFS,
    ));
    v.push(refused(
        "invalid agency_timezone",
        b().replace("agency.txt", "Etc/GMT-1", "Mars/Olympus").zip(),
        fatal(Some("agency.txt"), Some(2), Some("agency_timezone")),
        GUIDE,
    ));
    v.push(refused(
        "agency.txt with a header only",
        b().set("agency.txt", "agency_id,agency_name,agency_url,agency_timezone\n").zip(),
        fatal(Some("agency.txt"), None, None),
        GUIDE,
    ));
    let placeholder = "stop_id,stop_name,stop_lat,stop_lon\nA,Nowhere,0,0\nC,Nowhere either,0,0\n";
    v.push(refused("no usable stop (all at 0,0)", b().set("stops.txt", placeholder).zip(), fatal(Some("stops.txt"), None, None), GUIDE));

    // --- text encodings that must load
    let bom = |f: Files| Files(f.0.into_iter().map(|(n, body)| (n, [b"\xEF\xBB\xBF".as_slice(), &body].concat())).collect());
    v.push(loads("UTF-8 BOM on every file", bom(b()), expect_t1, "GTFS Schedule reference (files may start with a UTF-8 BOM)"));
    let crlf = |f: Files| {
        Files(f.0.into_iter().map(|(n, body)| (n, String::from_utf8(body).expect("utf8").replace('\n', "\r\n").into_bytes())).collect())
    };
    v.push(loads("CRLF line ends", crlf(b()), expect_t1, "RFC 4180 (CRLF is the standard CSV line end)"));
    let quoted = b().replace("stops.txt", "B,Birch Lane,", "B,\"Birch Lane, north\nside \"\"old\"\"\",");
    v.push(loads(
        "quoted field with comma, newline and quotes",
        quoted.clone(),
        |e, f| {
            let n = stop_name(e, f, "B")?;
            if n != "Birch Lane, north\nside \"old\"" {
                return Err(format!("stop B name read as {n:?}"));
            }
            expect_t1(e, f)
        },
        "RFC 4180 (quoted fields may hold commas, line breaks and doubled quotes)",
    ));
    // After a row spanning two lines, a bad row is located at its physical line.
    v.push(warn(
        "bad row after a two-line quoted row",
        quoted.append("stops.txt", "Z,Zinc Gate,91.0,10.0,0,,1"),
        "stops.txt",
        "stop_lat",
        "RFC 4180 line breaks; GTFS Schedule reference (stop_lat −90…90)",
    ));
    let utf8 = warn(
        "invalid UTF-8 in stops.txt stop_name",
        b().append("stops.txt", b"Z,Zinc \xFF\xFE Gate,51.03,10.0,0,,1"),
        "stops.txt",
        "stop_name",
        "GTFS Schedule reference (files are UTF-8)",
    );
    v.push(utf8);
    v.push(warn(
        "invalid UTF-8 in stop_times.txt trip_id",
        b().append(st, b"T\xFF1,08:20:00,08:20:00,D,9,0,0"),
        st,
        "trip_id",
        "GTFS Schedule reference (files are UTF-8)",
    ));
    let short = warn(
        "row shorter than the header (stops.txt)",
        b().append("stops.txt", "Z,Zinc Gate"),
        "stops.txt",
        "stop_lat",
        "GTFS Schedule reference (stop_lat required for location_type 0)",
    );
    v.push(short);

    // --- times
    for (name, time) in [
        ("arrival_time 25:61:00", "25:61:00"),
        ("arrival_time -1:00:00", "-1:00:00"),
        ("arrival_time ab:cd:ef", "ab:cd:ef"),
        ("arrival_time 08:05", "08:05"),
        ("arrival_time 8:5:0", "8:5:0"),
    ] {
        v.push(warn_at(
            name,
            b().replace(st, "T1,08:05:00,08:06:00,B", format!("T1,{time},08:06:00,B")),
            st,
            3,
            "arrival_time",
            "GTFS Schedule reference (Time is HH:MM:SS, H:MM:SS accepted)",
        ));
    }
    v.push(warn_at(
        "departure_time 08:06:60",
        b().replace(st, "T1,08:05:00,08:06:00,B", "T1,08:05:00,08:06:60,B"),
        st,
        3,
        "departure_time",
        GTFS,
    ));
    v.push(warn_at(
        "empty times at a trip's first stop",
        b().replace(st, "T1,08:00:00,08:00:00,A", "T1,,,A"),
        st,
        2,
        "arrival_time",
        "GTFS Schedule reference (times required at the first and last stop)",
    ));
    v.push(warn_at(
        "empty times at a trip's last stop",
        b().replace(st, "T1,08:10:00,08:10:00,C", "T1,,,C"),
        st,
        4,
        "arrival_time",
        "GTFS Schedule reference (times required at the first and last stop)",
    ));
    v.push(warn_at(
        "arrives before it left the previous stop",
        b().replace(st, "T1,08:10:00,08:10:00,C", "T1,08:04:00,08:10:00,C"),
        st,
        4,
        "arrival_time",
        "GTFS Schedule reference (times increase along a trip)",
    ));
    v.push(warn_at(
        "departs a stop before it arrives there",
        b().replace(st, "T1,08:05:00,08:06:00,B", "T1,08:05:00,08:04:00,B"),
        st,
        3,
        "departure_time",
        "GTFS Schedule reference (departure_time ≥ arrival_time)",
    ));

    // --- stop_times references and order
    v.push(warn(
        "stop_times row of an unknown trip",
        b().append(st, "T9,08:20:00,08:20:00,D,1,0,0"),
        st,
        "trip_id",
        "GTFS Schedule reference (trip_id references trips.txt)",
    ));
    v.push(warn(
        "stop_times row at an unknown stop",
        b().append(st, "T1,08:20:00,08:20:00,Q,4,0,0"),
        st,
        "stop_id",
        "GTFS Schedule reference (stop_id references stops.txt)",
    ));
    v.push(warn(
        "duplicate stop_sequence in a trip",
        b().append(st, "T1,08:20:00,08:20:00,D,3,0,0"),
        st,
        "stop_sequence",
        "GTFS Schedule reference (stop_sequence unique per trip)",
    ));
    v.push(warn(
        "stop_sequence not a number",
        b().append(st, "T1,08:20:00,08:20:00,D,four,0,0"),
        st,
        "stop_sequence",
        "GTFS Schedule reference (stop_sequence is a non-negative integer)",
    ));
    let single = warn(
        "trip with a single stop",
        b().append("trips.txt", "R,WK,T4,1").0.append(st, "T4,08:20:00,08:20:00,D,1,0,0"),
        st,
        "trip_id",
        "GTFS Schedule reference (a trip has at least two stop times)",
    );
    v.push(single);
    let mut rows: Vec<&[u8]> = b"T1,08:10:00,08:10:00,C,3,0,0\nT3,10:10:00,10:10:00,C,2,0,0\nT1,08:00:00,08:00:00,A,1,0,0\nT2,09:10:00,09:10:00,C,2,0,0\nT1,08:05:00,08:06:00,B,2,0,0\nT3,10:00:00,10:00:00,A,1,0,0\nT2,09:00:00,09:00:00,A,1,0,0\n".split(|&c| c == b'\n').collect();
    rows.retain(|r| !r.is_empty());
    let shuffled = [b"trip_id,arrival_time,departure_time,stop_id,stop_sequence,pickup_type,drop_off_type".as_slice()]
        .into_iter()
        .chain(rows)
        .collect::<Vec<_>>()
        .join(&b'\n');
    v.push(loads(
        "stop_times rows out of order",
        b().set(st, [shuffled, b"\n".to_vec()].concat()),
        |e, f| {
            expect_t1(e, f)?;
            let m = e.tt.feeds.iter().find(|m| m.name == f).ok_or("feed missing")?;
            let t = (m.trip_range.0..m.trip_range.1).map(|i| &e.tt.trips[i as usize]).find(|t| t.id == "T1").ok_or("T1 missing")?;
            let ids: Vec<&str> = t.events().map(|ev| e.tt.stops[e.tt.ev_stop[ev].idx()].id.as_str()).collect();
            if ids != ["A", "B", "C"] {
                return Err(format!("T1 stops in order {ids:?}, expected A, B, C"));
            }
            Ok(())
        },
        "GTFS Schedule reference (stop_sequence orders the stops; rows need not be sorted)",
    ));

    // --- calendar
    v.push(warn(
        "calendar ends before it starts",
        b().append("calendar.txt", "SX,1,1,1,1,1,0,0,20260601,20260501"),
        "calendar.txt",
        "end_date",
        "GTFS Schedule reference (service between start_date and end_date)",
    ));
    v.push(warn(
        "calendar start_date not YYYYMMDD",
        b().append("calendar.txt", "SX,1,1,1,1,1,0,0,2026-06-01,20261231"),
        "calendar.txt",
        "start_date",
        "GTFS Schedule reference (Date is YYYYMMDD)",
    ));
    v.push(warn(
        "calendar start_date 20260231",
        b().append("calendar.txt", "SX,1,1,1,1,1,0,0,20260231,20261231"),
        "calendar.txt",
        "start_date",
        "GTFS Schedule reference (Date is YYYYMMDD); Gregorian calendar",
    ));
    v.push(warn(
        "calendar weekday value 2",
        b().append("calendar.txt", "SX,2,1,1,1,1,0,0,20260101,20261231"),
        "calendar.txt",
        "monday",
        "GTFS Schedule reference (weekday fields are 0 or 1)",
    ));
    v.push(warn(
        "calendar_dates bad date",
        b().append("calendar_dates.txt", "WK,2026-12-24,2"),
        "calendar_dates.txt",
        "date",
        "GTFS Schedule reference (Date is YYYYMMDD)",
    ));
    v.push(warn(
        "calendar_dates exception_type 3",
        b().append("calendar_dates.txt", "WK,20261224,3"),
        "calendar_dates.txt",
        "exception_type",
        "GTFS Schedule reference (exception_type is 1 or 2)",
    ));

    // --- stops
    v.push(warn(
        "stop at 0,0",
        b().append("stops.txt", "Z,Zinc Gate,0,0,0,,1"),
        "stops.txt",
        "stop_lat",
        "common practice, no source (0,0 is a placeholder position)",
    ));
    v.push(warn(
        "latitude 91",
        b().append("stops.txt", "Z,Zinc Gate,91,10.0,0,,1"),
        "stops.txt",
        "stop_lat",
        "GTFS Schedule reference (stop_lat −90…90)",
    ));
    let lon = warn(
        "longitude 181",
        b().append("stops.txt", "Z,Zinc Gate,51.03,181,0,,1"),
        "stops.txt",
        "stop_lon",
        "GTFS Schedule reference (stop_lon −180…180)",
    );
    v.push(lon);
    v.push(warn(
        "stop_lat not a number",
        b().append("stops.txt", "Z,Zinc Gate,north,10.0,0,,1"),
        "stops.txt",
        "stop_lat",
        "GTFS Schedule reference (stop_lat is a Float)",
    ));
    v.push(warn(
        "location_type 9",
        b().append("stops.txt", "Z,Zinc Gate,51.03,10.0,9,,1"),
        "stops.txt",
        "location_type",
        "GTFS Schedule reference (location_type 0–4)",
    ));
    v.push(warn(
        "duplicate stop_id",
        b().append("stops.txt", "C,Cedar Yard again,51.03,10.0,0,,1"),
        "stops.txt",
        "stop_id",
        "GTFS Schedule reference (stop_id unique in the feed)",
    ));
    v.push(warn(
        "stop is its own parent",
        b().append("stops.txt", "Z,Zinc Gate,51.03,10.0,0,Z,1"),
        "stops.txt",
        "parent_station",
        "GTFS Schedule reference (parent_station names another stop)",
    ));
    v.push(warn(
        "unknown parent_station",
        b().append("stops.txt", "Z,Zinc Gate,51.03,10.0,0,NOPE,1"),
        "stops.txt",
        "parent_station",
        "GTFS Schedule reference (parent_station references stops.txt)",
    ));

    // --- routes and trips
    v.push(warn(
        "duplicate route_id",
        b().append("routes.txt", "R,TA,2,Other line,3"),
        "routes.txt",
        "route_id",
        "GTFS Schedule reference (route_id unique)",
    ));
    v.push(warn(
        "route_type not a number",
        b().append("routes.txt", "R2,TA,2,Other line,bus"),
        "routes.txt",
        "route_type",
        "GTFS Schedule reference (route_type is an Enum)",
    ));
    v.push(warn(
        "duplicate trip_id",
        b().append("trips.txt", "R,WK,T1,1"),
        "trips.txt",
        "trip_id",
        "GTFS Schedule reference (trip_id unique)",
    ));
    v.push(warn(
        "trip of an unknown route",
        b().append("trips.txt", "R9,WK,T4,1"),
        "trips.txt",
        "route_id",
        "GTFS Schedule reference (route_id references routes.txt)",
    ));
    v.push(warn(
        "trip of an unknown service",
        b().append("trips.txt", "R,NOPE,T4,1"),
        "trips.txt",
        "service_id",
        "GTFS Schedule reference (service_id references calendar/calendar_dates)",
    ));
    v.push(warn(
        "frequencies headway 0",
        b().append("frequencies.txt", "T2,12:00:00,13:00:00,0,0"),
        "frequencies.txt",
        "headway_secs",
        "GTFS Schedule reference (headway_secs is a positive integer)",
    ));
    v.push(warn(
        "frequencies of an unknown trip",
        b().append("frequencies.txt", "T9,12:00:00,13:00:00,600,0"),
        "frequencies.txt",
        "trip_id",
        "GTFS Schedule reference (trip_id references trips.txt)",
    ));

    // --- transfers and pathways
    v.push(warn(
        "transfer to a missing stop",
        b().append("transfers.txt", "C,NOPE,2,60"),
        "transfers.txt",
        "to_stop_id",
        "GTFS Schedule reference (to_stop_id references stops.txt)",
    ));
    v.push(warn(
        "transfer from a missing stop",
        b().append("transfers.txt", "NOPE,C,2,60"),
        "transfers.txt",
        "from_stop_id",
        "GTFS Schedule reference (from_stop_id references stops.txt)",
    ));
    v.push(warn(
        "transfer_type 2 without min_transfer_time",
        b().append("transfers.txt", "B,C,2,"),
        "transfers.txt",
        "min_transfer_time",
        "GTFS Schedule reference (min_transfer_time required for transfer_type 2)",
    ));
    v.push(warn(
        "pathway to a missing stop",
        b().append("pathways.txt", "P2,E,NOPE,1,1"),
        "pathways.txt",
        "to_stop_id",
        "GTFS Schedule reference (to_stop_id references stops.txt)",
    ));
    v.push(warn(
        "pathway to a station",
        b().append("pathways.txt", "P2,E,S,1,1"),
        "pathways.txt",
        "to_stop_id",
        "GTFS Schedule reference (pathways do not end at a station, location_type 1)",
    ));
    let mode = warn(
        "pathway_mode 9",
        b().append("pathways.txt", "P2,E,A,9,1"),
        "pathways.txt",
        "pathway_mode",
        "GTFS Schedule reference (pathway_mode 1–7)",
    );
    v.push(mode);

    // --- merging
    v.push(loads(
        "same ids as the loaded base feed",
        b(),
        |e, f| {
            let ours = e.resolve(&format!("{f}:A")).map_err(|x| x.to_string())?;
            let theirs = e.resolve("base:A").map_err(|x| x.to_string())?;
            if ours == theirs {
                return Err("base:A and the new feed's A resolve to the same stop".into());
            }
            expect_t1(e, f)
        },
        "DEVELOPERS.md invariant (ids are scoped per feed; feed:id when ambiguous)",
    ));

    // --- decompression bombs
    let mut lie = refused(
        "declared size 4 GiB (ratio far past 1000×)",
        declare_size(b().zip(), "stop_times.txt", u32::MAX),
        fatal(Some("stop_times.txt"), None, None),
        "DEVELOPERS.md Decisions (bombs refused from the central directory)",
    );
    lie.bomb = true;
    v.push(lie);
    let mut total = b();
    for (i, name) in ["extra1.txt", "extra2.txt", "extra3.txt"].iter().enumerate() {
        total = total.set(name, noise(3 << 20, 11 + i as u64));
    }
    let mut bytes = total.zip();
    for name in ["extra1.txt", "extra2.txt", "extra3.txt"] {
        bytes = declare_size(bytes, name, 1 << 30);
    }
    let mut big = refused(
        "three entries declaring 1 GiB each (total past 2 GiB)",
        bytes,
        fatal(None, None, None),
        "DEVELOPERS.md Decisions (total uncompressed > 2 GiB refused)",
    );
    big.bomb = true;
    v.push(big);
    let mut real = refused(
        "50 MB of one byte deflated",
        real_bomb(50),
        fatal(Some("stop_times.txt"), None, None),
        "DEVELOPERS.md Decisions (any entry expanding > 1000× refused)",
    );
    real.bomb = true;
    v.push(real);
    v
}

//! Row-by-row reading of one GTFS CSV file.
//!
//! gtfs-structures supplies the record types and their field parsing; this loop drives the csv
//! reader itself so that one bad row becomes a located warning and the rest of the file is still
//! read (gtfs-structures' own readers stop at the first bad row). Missing required columns are
//! fatal, because no row of the file could be right.

use std::io::Read;

use serde::de::DeserializeOwned;

use crate::error::{FeedIssue, WarningLog};

/// Opens a CSV reader that tolerates ragged rows. It does not trim: the csv crate's trimming
/// builds a new record per row, so callers trim fields themselves (real feeds pad them).
pub fn csv_reader<R: Read>(r: R) -> csv::Reader<R> {
    csv::ReaderBuilder::new().flexible(true).buffer_capacity(1 << 16).from_reader(r)
}

/// Header names with a leading UTF-8 byte-order mark removed.
pub fn clean_headers(feed: &str, file: &str, h: Result<&csv::StringRecord, csv::Error>) -> Result<Vec<String>, FeedIssue> {
    let h = h.map_err(|e| FeedIssue::new(feed, format!("unreadable header: {}", csv_message(&e))).file(file).line(1))?;
    Ok(h.iter().map(|c| c.trim_start_matches('\u{feff}').trim().to_string()).collect())
}

pub fn require_columns(feed: &str, file: &str, headers: &[String], required: &[&str]) -> Result<(), FeedIssue> {
    for col in required {
        if !headers.iter().any(|h| h == col) {
            return Err(FeedIssue::new(
                feed,
                format!("required column {col} is missing (GTFS Schedule reference); the header has: {}", headers.join(",")),
            )
            .file(file)
            .line(1)
            .field(col));
        }
    }
    Ok(())
}

pub fn csv_message(e: &csv::Error) -> String {
    match e.kind() {
        csv::ErrorKind::Utf8 { err, .. } => format!("text is not valid UTF-8 ({err}); GTFS files must be UTF-8"),
        csv::ErrorKind::Deserialize { err, .. } => err.kind().to_string(),
        _ => e.to_string(),
    }
}

/// Columns whose GTFS type is a number (Float, Integer, Non-negative integer or Enum).
const NUMERIC_COLUMNS: &[&str] = &[
    "stop_lat",
    "stop_lon",
    "location_type",
    "wheelchair_boarding",
    "route_type",
    "route_sort_order",
    "direction_id",
    "wheelchair_accessible",
    "bikes_allowed",
    "pathway_mode",
    "is_bidirectional",
    "length",
    "traversal_time",
    "stair_count",
    "max_slope",
    "min_width",
    "level_index",
    "shape_pt_lat",
    "shape_pt_lon",
    "shape_pt_sequence",
    "shape_dist_traveled",
    "transfer_type",
    "min_transfer_time",
    "headway_secs",
    "exact_times",
    "exception_type",
    "monday",
    "tuesday",
    "wednesday",
    "thursday",
    "friday",
    "saturday",
    "sunday",
];

/// Enumerated columns and their values in the GTFS Schedule reference.
const ENUM_COLUMNS: &[(&str, &[&str])] = &[
    ("location_type", &["0", "1", "2", "3", "4"]),
    ("wheelchair_boarding", &["0", "1", "2"]),
    ("wheelchair_accessible", &["0", "1", "2"]),
    ("bikes_allowed", &["0", "1", "2"]),
    ("direction_id", &["0", "1"]),
    ("pathway_mode", &["1", "2", "3", "4", "5", "6", "7"]),
    ("is_bidirectional", &["0", "1"]),
    ("transfer_type", &["0", "1", "2", "3", "4", "5"]),
    ("exact_times", &["0", "1"]),
    ("exception_type", &["1", "2"]),
];

/// Reads every row of `file` as `T`, calling `row(line, record)` for each good one. Returns
/// `Ok(None)` when the file is absent.
pub fn read_table<T: DeserializeOwned>(
    files: &mut super::files::FeedFiles<'_>,
    feed: &str,
    file: &str,
    required: &[&str],
    warnings: &mut WarningLog,
    mut row: impl FnMut(u64, T, &mut WarningLog),
) -> Result<Option<usize>, FeedIssue> {
    let Some(reader) = files.open(feed, file)? else { return Ok(None) };
    let mut rdr = csv_reader(reader);
    let headers = clean_headers(feed, file, rdr.headers())?;
    require_columns(feed, file, &headers, required)?;
    let header_rec = csv::StringRecord::from(headers.clone());
    let (mut raw, mut rec) = (csv::StringRecord::new(), csv::StringRecord::new());
    let mut good = 0usize;
    loop {
        let line = rdr.position().line();
        match rdr.read_record(&mut raw) {
            Ok(false) => break,
            Ok(true) => {}
            Err(e) => {
                let line = e.position().map(|p| p.line()).unwrap_or(line);
                if matches!(e.kind(), csv::ErrorKind::Io(_)) {
                    return Err(FeedIssue::new(feed, csv_message(&e)).file(file).line(line));
                }
                let mut issue = FeedIssue::new(feed, format!("{}; row skipped", csv_message(&e))).file(file).line(line);
                if let csv::ErrorKind::Utf8 { err, .. } = e.kind() {
                    if let Some(name) = headers.get(err.field()) {
                        issue = issue.field(name);
                    }
                }
                warnings.push(issue);
                continue;
            }
        }
        let line = raw.position().map(|p| p.line()).unwrap_or(line);
        rec.clear();
        raw.iter().for_each(|f| rec.push_field(f.trim()));

        if rec.iter().all(str::is_empty) {
            continue;
        }
        match rec.deserialize::<T>(Some(&header_rec)) {
            Ok(v) => {
                good += 1;
                row(line, v, warnings);
            }
            Err(e) => {
                let mut issue = FeedIssue::new(feed, format!("{}; row skipped", csv_message(&e))).file(file).line(line);
                let field = match e.kind() {
                    csv::ErrorKind::Deserialize { err, .. } => err.field().map(|i| i as usize),
                    _ => None,
                };
                // Some field parsers report no field index; find the number that does not parse,
                // or the enumerated value outside its list.
                // A short row: the first field it lacks.
                let short = rec.len() < headers.len();
                if short {
                    issue.message = format!("row has {} fields but the header has {}; {}", rec.len(), headers.len(), issue.message);
                }
                let field = field
                    .or(if short { Some(rec.len()) } else { None })
                    .or_else(|| {
                        headers.iter().enumerate().position(|(i, h)| {
                            NUMERIC_COLUMNS.contains(&h.as_str()) && rec.get(i).is_some_and(|v| !v.is_empty() && v.parse::<f64>().is_err())
                        })
                    })
                    .or_else(|| {
                        headers.iter().enumerate().position(|(i, h)| {
                            ENUM_COLUMNS.iter().any(|(c, ok)| c == h && rec.get(i).is_some_and(|v| !v.is_empty() && !ok.contains(&v)))
                        })
                    });
                if let Some(i) = field {
                    if let Some(name) = headers.get(i) {
                        issue = issue.field(name);
                        if NUMERIC_COLUMNS.contains(&name.as_str()) {
                            issue.message = format!("expected a number (GTFS Schedule reference field type); {}", issue.message);
                        }
                    }
                    if let Some(v) = rec.get(i) {
                        issue = issue.value(v);
                    }
                }
                warnings.push(issue);
            }
        }
    }
    Ok(Some(good))
}

/// Strict GTFS time `H:MM:SS` (hours may exceed 24, minutes and seconds 00–59).
pub fn parse_time(s: &[u8]) -> Option<u32> {
    let mut parts = s.split(|&b| b == b':');
    let (h, m, sec) = (parts.next()?, parts.next()?, parts.next()?);
    if parts.next().is_some() || h.is_empty() || h.len() > 3 || m.len() != 2 || sec.len() != 2 {
        return None;
    }
    let num = |p: &[u8]| p.iter().try_fold(0u32, |a, &b| b.is_ascii_digit().then(|| a * 10 + (b - b'0') as u32));
    let (h, m, sec) = (num(h)?, num(m)?, num(sec)?);
    (m < 60 && sec < 60).then_some(h * 3600 + m * 60 + sec)
}

pub fn time_field<'de, D: serde::Deserializer<'de>>(d: D) -> Result<u32, D::Error> {
    let s: String = serde::Deserialize::deserialize(d)?;
    parse_time(s.as_bytes()).ok_or_else(|| serde::de::Error::custom(format!("{s:?} is not a time H:MM:SS (minutes and seconds below 60)")))
}

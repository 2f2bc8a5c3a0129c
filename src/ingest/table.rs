//! Row-by-row reading of one GTFS CSV file.
//!
//! gtfs-structures supplies the record types and their field parsing; this loop drives the csv
//! reader itself so that one bad row becomes a located warning and the rest of the file is still
//! read (gtfs-structures' own readers stop at the first bad row). Missing required columns are
//! fatal, because no row of the file could be right.

use std::io::Read;

use serde::de::DeserializeOwned;

use crate::error::{FeedIssue, WarningLog};

/// Opens a CSV reader that trims fields (real feeds pad them) and tolerates ragged rows.
pub fn csv_reader<R: Read>(r: R) -> csv::Reader<R> {
    csv::ReaderBuilder::new().flexible(true).trim(csv::Trim::All).from_reader(r)
}

/// Header names with a leading UTF-8 byte-order mark removed.
pub fn clean_headers(feed: &str, file: &str, h: Result<&csv::StringRecord, csv::Error>) -> Result<Vec<String>, FeedIssue> {
    let h = h.map_err(|e| FeedIssue::new(feed, format!("unreadable header: {}", csv_message(&e))).file(file).line(1))?;
    Ok(h.iter().map(|c| c.trim_start_matches('\u{feff}').trim().to_string()).collect())
}

pub fn require_columns(feed: &str, file: &str, headers: &[String], required: &[&str]) -> Result<(), FeedIssue> {
    for col in required {
        if !headers.iter().any(|h| h == col) {
            return Err(FeedIssue::new(feed, format!("required column {col} is missing (GTFS Schedule reference); the header has: {}", headers.join(","))).file(file).line(1).field(col));
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
    let mut rec = csv::StringRecord::new();
    let mut good = 0usize;
    loop {
        let line = rdr.position().line();
        match rdr.read_record(&mut rec) {
            Ok(false) => break,
            Ok(true) => {}
            Err(e) => {
                let line = e.position().map(|p| p.line()).unwrap_or(line);
                if matches!(e.kind(), csv::ErrorKind::Io(_)) {
                    return Err(FeedIssue::new(feed, csv_message(&e)).file(file).line(line));
                }
                warnings.push(FeedIssue::new(feed, format!("{}; row skipped", csv_message(&e))).file(file).line(line));
                continue;
            }
        }
        let line = rec.position().map(|p| p.line()).unwrap_or(line);
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
                if let csv::ErrorKind::Deserialize { err, .. } = e.kind() {
                    if let Some(i) = err.field() {
                        if let Some(name) = headers.get(i as usize) {
                            issue = issue.field(name);
                        }
                        if let Some(v) = rec.get(i as usize) {
                            issue = issue.value(v);
                        }
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

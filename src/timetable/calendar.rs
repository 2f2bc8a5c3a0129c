//! Service days and the time origin of a service day.
//!
//! The GTFS Schedule reference measures stop times from "noon minus 12 h" of the service day in
//! the agency's time zone. On the day clocks change that origin is not local midnight, so every
//! conversion between seconds and clock time goes through [`day_origin`] (chrono-tz).

use chrono::{DateTime, Datelike, Duration, NaiveDate, NaiveTime, TimeZone, Utc};
use chrono_tz::Tz;
use serde::{Deserialize, Serialize};

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Service {
    pub id: String,
    /// Monday first.
    pub weekdays: [bool; 7],
    pub start: Option<NaiveDate>,
    pub end: Option<NaiveDate>,
    pub added: Vec<NaiveDate>,
    pub removed: Vec<NaiveDate>,
}

impl Service {
    pub fn new(id: &str) -> Self {
        Service { id: id.to_string(), weekdays: [false; 7], start: None, end: None, added: vec![], removed: vec![] }
    }
    /// calendar.txt's weekly pattern within its date range, then calendar_dates.txt exceptions
    /// (exception_type 1 adds the date, 2 removes it), as the GTFS Schedule reference defines.
    pub fn runs_on(&self, date: NaiveDate) -> bool {
        if self.removed.contains(&date) {
            return false;
        }
        if self.added.contains(&date) {
            return true;
        }
        match (self.start, self.end) {
            (Some(s), Some(e)) => s <= date && date <= e && self.weekdays[date.weekday().num_days_from_monday() as usize],
            _ => false,
        }
    }
    pub fn first_date(&self) -> Option<NaiveDate> {
        self.start.into_iter().chain(self.added.iter().copied()).min()
    }
    pub fn last_date(&self) -> Option<NaiveDate> {
        self.end.into_iter().chain(self.added.iter().copied()).max()
    }
}

/// The instant "noon minus 12 h" of `date` in `tz`.
pub fn day_origin(tz: Tz, date: NaiveDate) -> DateTime<Utc> {
    let noon = date.and_time(NaiveTime::from_hms_opt(12, 0, 0).expect("valid time"));
    // Noon exists and is unambiguous in every zone in the tz database; fall back to UTC noon.
    let local = tz.from_local_datetime(&noon).earliest().map(|t| t.with_timezone(&Utc)).unwrap_or_else(|| Utc.from_utc_datetime(&noon));
    local - Duration::hours(12)
}

/// Seconds from `origin_date`'s origin in `tz_a` to `other`'s origin in `tz_b`.
pub fn origin_offset_s(tz_a: Tz, origin_date: NaiveDate, tz_b: Tz, other: NaiveDate) -> i64 {
    (day_origin(tz_b, other) - day_origin(tz_a, origin_date)).num_seconds()
}

/// Local clock time `hh:mm` on `date` as seconds from the date's origin. A clock time that does
/// not exist (skipped by a clock change) is taken as the first instant after the gap.
pub fn clock_to_seconds(tz: Tz, date: NaiveDate, hour: u32, minute: u32) -> Option<i64> {
    let naive = date.and_time(NaiveTime::from_hms_opt(hour, minute, 0)?);
    let instant = match tz.from_local_datetime(&naive) {
        chrono::LocalResult::Single(t) => t.with_timezone(&Utc),
        chrono::LocalResult::Ambiguous(a, _) => a.with_timezone(&Utc),
        chrono::LocalResult::None => {
            // Walk forward minute by minute out of the gap (gaps are at most a few hours).
            let mut probe = naive;
            loop {
                probe += Duration::minutes(1);
                if let Some(t) = tz.from_local_datetime(&probe).earliest() {
                    break t.with_timezone(&Utc);
                }
                if probe - naive > Duration::hours(4) {
                    return None;
                }
            }
        }
    };
    Some((instant - day_origin(tz, date)).num_seconds())
}

/// Seconds from `date`'s origin as local clock text, "HH:MM", with "+1" (or "+N") when the clock
/// reads a later calendar day.
pub fn seconds_to_clock(tz: Tz, date: NaiveDate, seconds: i64) -> String {
    let t = (day_origin(tz, date) + Duration::seconds(seconds)).with_timezone(&tz);
    let days = (t.date_naive() - date).num_days();
    let hm = t.format("%H:%M").to_string();
    if days == 0 {
        hm
    } else {
        format!("{hm}{days:+}")
    }
}

pub fn parse_date(s: &str) -> Option<NaiveDate> {
    NaiveDate::parse_from_str(s.trim(), "%Y-%m-%d").ok().or_else(|| NaiveDate::parse_from_str(s.trim(), "%Y%m%d").ok())
}

/// "HH:MM" or "HH:MM:SS" clock text from a user, 00:00–23:59.
pub fn parse_clock(s: &str) -> Option<(u32, u32)> {
    let mut it = s.trim().split(':');
    let h: u32 = it.next()?.parse().ok()?;
    let m: u32 = it.next()?.parse().ok()?;
    if let Some(sec) = it.next() {
        let _: u32 = sec.parse().ok()?;
    }
    (h < 24 && m < 60 && it.next().is_none()).then_some((h, m))
}

/// GTFS date field text `YYYYMMDD`.
pub fn parse_gtfs_date(s: &str) -> Option<NaiveDate> {
    let s = s.trim();
    if s.len() != 8 || !s.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    NaiveDate::parse_from_str(s, "%Y%m%d").ok()
}

//! Travel times over a window of departures, and what is reported of them.
//!
//! **Travel time at departure `t`:** the earliest arrival of a journey that leaves the origin at
//! or after `t`, minus `t` (waiting at the origin counts), with the minimum change times and the
//! walking links, no change penalty, optionally at most `K` rides; none when no journey arrives
//! within the longest duration. The window's departures are `start, start + step, …` before its
//! end (the end is not sampled: 07:00–09:00 at 1 min is 120 departures, 07:00 to 08:59).
//!
//! **Reported per pair:** the shortest travel time; percentiles by linear interpolation between
//! the closest ranks (rank `p/100 · (n − 1)` of the n sorted values, counted from 0; Hyndman and
//! Fan's definition 7, numpy's default), where a departure without a journey counts as infinitely
//! long, so a percentile that reaches one is none; the share of departures with a journey of at
//! most the cut-off (inclusive); the number of departures with a journey. The cumulative
//! opportunities of an origin are `Σ weight(d) · share(d)` over its destinations: the weighted
//! count of destinations within the cut-off, averaged over the window.

use crate::analysis::places::{Places, NO_PLACE};
use crate::graph::Network;
use crate::route::search::{self, SearchState, Window};
use crate::route::Params;
use crate::timetable::{StopIdx, Timetable};

/// Not reached.
pub const NONE: u32 = u32::MAX;

/// The departures of a window and what to report over them.
#[derive(Debug, Clone, PartialEq)]
pub struct WindowSpec {
    /// Departures on the network's timeline, ascending.
    pub departures: Vec<u32>,
    /// Requested percentiles, each in 0–100.
    pub percentiles: Vec<f64>,
    /// Cut-off for the share within it and the opportunities, s (inclusive).
    pub cutoff_s: Option<u32>,
    pub max_rides: Option<u8>,
}

/// What is reported for one origin–destination pair over the window.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PairStats {
    /// Shortest travel time, s (none: no journey at any departure).
    pub min_s: Option<u32>,
    /// One per requested percentile, s.
    pub percentiles_s: Vec<Option<f64>>,
    /// Share of departures with a journey of at most the cut-off (none without a cut-off).
    pub share_within_cutoff: Option<f64>,
    /// Departures with a journey.
    pub departures_reached: u32,
}

/// The percentile `p` (0–100) of ascending `sorted` by linear interpolation between the closest
/// ranks; `NONE` values count as infinitely long.
pub fn percentile(sorted: &[u32], p: f64) -> Option<f64> {
    interpolate(sorted.len(), p, |i| (sorted[i] != NONE).then_some(sorted[i] as f64))
}

/// [`percentile`] of ascending seconds that may be negative or fractional (changes of a median).
pub fn percentile_f64(sorted: &[f64], p: f64) -> Option<f64> {
    interpolate(sorted.len(), p, |i| Some(sorted[i]))
}

/// Linear interpolation between the closest ranks (Hyndman–Fan definition 7) over `n` ascending
/// values read by `at` (`None`: infinitely long, so no value).
fn interpolate(n: usize, p: f64, at: impl Fn(usize) -> Option<f64>) -> Option<f64> {
    if n == 0 {
        return None;
    }
    let rank = p / 100.0 * (n - 1) as f64;
    let lo = rank.floor() as usize;
    let hi = (rank.ceil() as usize).min(n - 1);
    let (a, b) = (at(lo)?, at(hi)?);
    Some(a + (b - a) * (rank - lo as f64))
}

/// Summarises one pair's travel times (one per departure, `NONE` where none); sorts `times`.
pub fn summarise(times: &mut [u32], spec: &WindowSpec, out: &mut PairStats) {
    times.sort_unstable();
    out.min_s = times.first().copied().filter(|&t| t != NONE);
    out.percentiles_s.clear();
    out.percentiles_s.extend(spec.percentiles.iter().map(|&p| percentile(times, p)));
    let reached = times.partition_point(|&t| t != NONE);
    out.departures_reached = reached as u32;
    out.share_within_cutoff = spec.cutoff_s.map(|c| {
        let within = times.partition_point(|&t| t <= c);
        within as f64 / times.len().max(1) as f64
    });
}

/// Travel times from one origin to every place, one per departure of the window.
#[derive(Debug, Clone, Default)]
pub struct TravelTimes {
    pub departures: usize,
    /// Place-major: `secs[place * departures + i]`, `NONE` where no journey.
    pub secs: Vec<u32>,
}

impl TravelTimes {
    pub fn of_place(&mut self, p: usize) -> &mut [u32] {
        let d = self.departures;
        &mut self.secs[p * d..(p + 1) * d]
    }
}

/// One window analysis on one network: the shared inputs of every origin's work (`Sync`, so
/// native shells run origins on several threads, each with its own [`SearchState`]).
#[derive(Clone, Copy)]
pub struct WindowRun<'a> {
    pub tt: &'a Timetable,
    pub net: &'a Network,
    pub places: &'a Places,
    pub spec: &'a WindowSpec,
    pub p: &'a Params,
}

/// The pairs of one origin, column by column (reused across origins).
#[derive(Debug, Clone, Default)]
pub struct Rows {
    /// Destination place.
    pub to: Vec<u32>,
    pub min_s: Vec<u32>,
    /// Row-major, `percentiles` per row.
    pub percentiles_s: Vec<Option<f64>>,
    pub share_within_cutoff: Vec<Option<f64>>,
    pub departures_reached: Vec<u32>,
    /// Cumulative opportunities of the origin (when weights were given).
    pub opportunities: Option<f64>,
}

impl Rows {
    pub fn len(&self) -> usize {
        self.to.len()
    }
    pub fn is_empty(&self) -> bool {
        self.to.is_empty()
    }
    fn clear(&mut self) {
        self.to.clear();
        self.min_s.clear();
        self.percentiles_s.clear();
        self.share_within_cutoff.clear();
        self.departures_reached.clear();
        self.opportunities = None;
    }
}

/// Per place: reported as a destination, and its weight for the cumulative opportunities.
#[derive(Debug, Clone, Default)]
pub struct Destinations {
    pub report: Vec<bool>,
    /// Empty: no opportunities asked for.
    pub weight: Vec<f64>,
}

impl WindowRun<'_> {
    /// Fills `out` with the travel times from `origins` (leaving from any of them) to every
    /// place over the window, by one profile search.
    pub fn travel_times(&self, st: &mut SearchState, origins: &[StopIdx], out: &mut TravelTimes) {
        let WindowRun { tt, net, places, spec, p } = *self;
        let d = spec.departures.len();
        out.departures = d;
        out.secs.clear();
        out.secs.resize(places.len() * d, NONE);
        let w = Window { origins, departures: &spec.departures, max_rides: spec.max_rides };
        let secs = &mut out.secs;
        search::profile(tt, net, st, w, p, |i, t, arrival| {
            let limit = t.saturating_add(p.max_duration_s);
            for (s, &a) in arrival.iter().enumerate() {
                let pl = places.of_stop[s];
                if a > limit || pl == NO_PLACE {
                    continue;
                }
                let slot = &mut secs[pl as usize * d + i];
                *slot = (*slot).min(a - t);
            }
        });
    }

    /// The rows of origin place `from`: every destination place reached at some departure (the
    /// origin itself left out of the rows, but counted in its cumulative opportunities at 0 s).
    pub fn origin_rows(&self, st: &mut SearchState, from: usize, dest: &Destinations, tt_buf: &mut TravelTimes, out: &mut Rows) {
        out.clear();
        self.travel_times(st, self.places.endpoints(from), tt_buf);
        let mut stats = PairStats::default();
        let mut opp = 0.0;
        for to in 0..self.places.len() {
            let w = dest.weight.get(to).copied().unwrap_or(0.0);
            let report = dest.report[to] && to != from;
            if !(report || w > 0.0) {
                continue;
            }
            let times = tt_buf.of_place(to);
            if times.iter().all(|&t| t == NONE) {
                continue;
            }
            summarise(times, self.spec, &mut stats);
            opp += w * stats.share_within_cutoff.unwrap_or(0.0);
            if !report {
                continue;
            }
            out.to.push(to as u32);
            out.min_s.push(stats.min_s.unwrap_or(NONE));
            out.percentiles_s.extend_from_slice(&stats.percentiles_s);
            out.share_within_cutoff.push(stats.share_within_cutoff);
            out.departures_reached.push(stats.departures_reached);
        }
        if !dest.weight.is_empty() {
            out.opportunities = Some(opp);
        }
    }
}

//! The time-expanded graph of one service date.
//!
//! Every stop event of every trip running that day becomes two nodes:
//! - a **waiting node** `W(p)` at its stop, at its departure time, where `p` is the event's
//!   position in the stop's departures sorted by time. `W(p) → W(p+1)` is the waiting chain; it is
//!   implicit in the array order, so it costs no memory.
//! - a **ride node** `R(e)`: on board trip instance at event `e`, about to leave at its departure
//!   time. `R(e) → R(e+1)` is staying seated (no transfer); alighting at `e+1` leads to the
//!   waiting chain of that stop after its minimum transfer time, or along a walking link to
//!   another stop's chain.
//!
//! Boarding `W(p) → R(e)` is the only edge with a transfer penalty. All edges go forward in time,
//! so costs are non-negative and Dijkstra applies.
//!
//! The date's timeline counts seconds from the date's "noon minus 12 h" in the first feed's zone.
//! It holds the trips of the service day itself, the previous service day's trips still running
//! after that origin (night services past 24:00), and the next service day's trips that leave
//! before [`NEXT_DAY_HORIZON_S`].

use std::sync::atomic::{AtomicU64, Ordering};

use chrono::{Duration, NaiveDate};
use chrono_tz::Tz;

pub mod csr;
mod nodes;
mod patterns;

pub use nodes::{Node, NodeIds};
pub use patterns::Patterns;

use crate::timetable::calendar::{day_origin, origin_offset_s};
use crate::timetable::{Access, StopIdx, Timetable, TripIdx, NO_DROP_OFF, NO_PICKUP};

static NEXT_ID: AtomicU64 = AtomicU64::new(1);

/// A process-unique id, so caches can tell one built network from another.
pub fn next_id() -> u64 {
    NEXT_ID.fetch_add(1, Ordering::Relaxed)
}

/// The next day's trips that leave before this time on the date's timeline are included: 30 h,
/// i.e. 06:00 of the next day.
pub const NEXT_DAY_HORIZON_S: i64 = 30 * 3600;

/// Flags per network event (in addition to the timetable's pickup/drop-off bits).
pub const LAST_OF_TRIP: u8 = 8;
/// Trip and stop both marked wheelchair-accessible (1) for boarding/alighting here.
pub const STEP_FREE_YES: u8 = 16;
/// Neither trip nor stop marked not accessible (2), but at least one unknown (0/empty).
pub const STEP_FREE_UNKNOWN: u8 = 32;

/// Alighting here falls under a trip- or route-specific transfer rule of `transfers.txt`.
pub const HAS_RULES: u8 = 64;

/// One stop event of a trip instance, packed into 11 bytes: the search and the sweep read an
/// event's fields together, so one record costs one cache line where four arrays cost four.
/// (Fields of a packed struct are read by value; unaligned loads are cheap on x86 and in WASM.)
#[repr(C, packed)]
#[derive(Debug, Clone, Copy)]
pub struct Event {
    pub dep: u32,
    pub stop: StopIdx,
    /// Seconds between arrival and departure, cut at 65,535.
    pub dwell: u16,
    pub flags: u8,
}

const _: () = assert!(std::mem::size_of::<Event>() == 11);

/// A trip running on the timeline, `offset_s` after its own service day's origin.
#[derive(Debug, Clone, Copy)]
pub struct Instance {
    pub trip: TripIdx,
    /// Seconds from this network's origin to the instance's service-day origin.
    pub offset_s: i32,
    /// First network event of the instance.
    pub first: u32,
    /// Index of that event within the trip (events before it were cut off before the origin).
    pub skip: u32,
}

#[derive(Debug, Clone)]
pub struct Network {
    /// Process-unique, so prepared search data can tell networks apart.
    pub id: u64,
    pub date: NaiveDate,
    pub tz: Tz,
    pub instances: Vec<Instance>,
    /// The network events, each trip instance's in order along it. The arrival is `dep − dwell`
    /// (see [`Network::arr`]).
    pub events: Vec<Event>,
    /// Departures of each stop sorted by time: events `by_stop[stop_first[s]..stop_first[s+1]]`.
    pub stop_first: Vec<u32>,
    pub by_stop: Vec<u32>,
    /// Departure time of `by_stop[p]`, contiguous so the binary search of a stop's departures
    /// and the waiting chain read one cache-friendly array.
    pub by_stop_dep: Vec<u32>,
    /// Trips running on the date itself (not counting the neighbouring days).
    pub trips_today: usize,
    /// Events that leave on a ride (all but each trip's last), sorted by departure time then
    /// event: built on the first one-to-all sweep, as only that needs it.
    rides_by_time: std::sync::OnceLock<Vec<u32>>,
    /// The distinct stop sequences, built on the first goal-directed search (search data, like
    /// the landmark tables, so not counted in [`Network::bytes`]).
    patterns: std::sync::OnceLock<Patterns>,
}

impl Network {
    pub fn build(tt: &Timetable, date: NaiveDate) -> Network {
        let tz = tt.feeds.first().map(|f| f.timezone).unwrap_or(chrono_tz::UTC);
        let mut net = Network {
            id: next_id(),
            date,
            tz,
            instances: Vec::new(),
            events: Vec::new(),
            stop_first: Vec::new(),
            by_stop: Vec::new(),
            by_stop_dep: Vec::new(),
            trips_today: 0,
            rides_by_time: Default::default(),
            patterns: Default::default(),
        };
        let days = [date - Duration::days(1), date, date + Duration::days(1)];
        // Per feed and day: offset of that service day's origin, and which services run.
        let mut runs: Vec<[bool; 3]> = vec![[false; 3]; tt.services.len()];
        for (si, svc) in tt.services.iter().enumerate() {
            for (d, day) in days.iter().enumerate() {
                runs[si][d] = svc.runs_on(*day);
            }
        }
        let offsets: Vec<[i64; 3]> = tt.feeds.iter().map(|f| days.map(|day| origin_offset_s(tz, date, f.timezone, day))).collect();
        // Trips are appended feed by feed, so the feed of a trip only moves forward.
        let mut feed = 0usize;
        for (ti, trip) in tt.trips.iter().enumerate() {
            while feed + 1 < tt.feeds.len() && ti >= tt.feeds[feed].trip_range.1 as usize {
                feed += 1;
            }
            for d in 0..3 {
                if !runs[trip.service.idx()][d] {
                    continue;
                }
                let off = offsets.get(feed).map_or((d as i64 - 1) * 86_400, |o| o[d]);
                let ev = trip.events();
                let first_dep = tt.ev_dep[ev.start] as i64 + off;
                let last_arr = tt.ev_arr[ev.end - 1] as i64 + off;
                if last_arr < 0 || (d == 2 && first_dep >= NEXT_DAY_HORIZON_S) {
                    continue;
                }
                if d == 1 {
                    net.trips_today += 1;
                }
                // Cut events that leave before the origin (only the previous day's late trips).
                let skip = ev.clone().take_while(|&e| (tt.ev_dep[e] as i64 + off) < 0).count();
                if ev.len() - skip < 2 {
                    continue;
                }
                let first = net.events.len() as u32;
                net.instances.push(Instance { trip: TripIdx(ti as u32), offset_s: off as i32, first, skip: skip as u32 });
                let stops_access = |e: usize| tt.stop_access(tt.ev_stop[e]);
                let trip_access = tt.trip_access(TripIdx(ti as u32));
                for e in ev.start + skip..ev.end {
                    let dep = (tt.ev_dep[e] as i64 + off) as u32;
                    let arr = (tt.ev_arr[e] as i64 + off).max(0) as u32;
                    let dwell = dep.saturating_sub(arr).min(u16::MAX as u32) as u16;
                    let mut f = tt.ev_flags[e] & (NO_PICKUP | NO_DROP_OFF);
                    if e + 1 == ev.end {
                        f |= LAST_OF_TRIP;
                    }
                    f |= step_free_bits(trip_access, stops_access(e));
                    if !tt.specific_rules.is_empty()
                        && tt.rules_at(tt.ev_stop[e]).iter().any(|r| r.from.matches(tt, TripIdx(ti as u32)).is_some())
                    {
                        f |= HAS_RULES;
                    }
                    net.events.push(Event { dep, stop: tt.ev_stop[e], dwell, flags: f });
                }
            }
        }
        // Departures per stop, grouped by stop, then sorted by time within each stop.
        let n_stops = tt.stops.len();
        let (stop_first, mut by_stop) = csr::group(n_stops, net.events.iter().enumerate().map(|(e, ev)| (ev.stop.0, e as u32)));
        net.stop_first = stop_first;
        for s in 0..n_stops {
            let r = net.stop_first[s] as usize..net.stop_first[s + 1] as usize;
            by_stop[r].sort_unstable_by_key(|&e| (net.dep(e as usize), e));
        }
        net.by_stop_dep = by_stop.iter().map(|&e| net.dep(e as usize)).collect();
        net.by_stop = by_stop;
        net.events.shrink_to_fit();
        net.instances.shrink_to_fit();
        net
    }

    /// Arrival time of event `e`. A dwell longer than 65,535 s (18 h 12 min) is cut at the
    /// arrival end: the rider is taken to arrive that long before the departure.
    #[inline]
    pub fn arr(&self, e: usize) -> u32 {
        let ev = self.events[e];
        ev.dep - ev.dwell as u32
    }

    /// Departure time of event `e` (for a trip's last event, its arrival).
    #[inline]
    pub fn dep(&self, e: usize) -> u32 {
        self.events[e].dep
    }

    #[inline]
    pub fn stop(&self, e: usize) -> StopIdx {
        self.events[e].stop
    }

    #[inline]
    pub fn flags(&self, e: usize) -> u8 {
        self.events[e].flags
    }

    pub fn events(&self) -> usize {
        self.events.len()
    }

    /// Position in the stop's departures of the first one at or after `t`, or `None`.
    #[inline]
    pub fn first_departure(&self, s: StopIdx, t: u32) -> Option<u32> {
        let (a, b) = (self.stop_first[s.idx()] as usize, self.stop_first[s.idx() + 1] as usize);
        let deps = &self.by_stop_dep[a..b];
        let i = deps.partition_point(|&d| d < t);
        (i < deps.len()).then_some((a + i) as u32)
    }

    /// The same, searching outward from position `near` (any value; out of the stop's range
    /// means no hint) before bisecting: cheaper when the answer is close to it.
    #[inline]
    pub fn first_departure_near(&self, s: StopIdx, t: u32, near: u32) -> Option<u32> {
        let (a, b) = (self.stop_first[s.idx()], self.stop_first[s.idx() + 1]);
        if near < a || near >= b {
            return self.first_departure(s, t);
        }
        let deps = &self.by_stop_dep;
        // Bracket the answer in (lo, hi]: deps[lo] < t ≤ deps[hi], with a = virtual −∞, b = +∞.
        let (mut lo, mut hi);
        if deps[near as usize] < t {
            lo = near;
            let mut step = 1;
            loop {
                let next = lo + step;
                if next >= b {
                    hi = b;
                    break;
                }
                if deps[next as usize] >= t {
                    hi = next;
                    break;
                }
                lo = next;
                step *= 2;
            }
            lo += 1;
        } else {
            hi = near;
            let mut step = 1;
            loop {
                if hi < a + step {
                    lo = a;
                    break;
                }
                let prev = hi - step;
                if deps[prev as usize] < t {
                    lo = prev + 1;
                    break;
                }
                hi = prev;
                step *= 2;
            }
        }
        // Now the answer lies in [lo, hi] (hi = b meaning none).
        let i = lo + deps[lo as usize..hi as usize].partition_point(|&d| d < t) as u32;
        (i < b).then_some(i)
    }

    /// Events that leave on a ride, in order of departure (ties by event, so a trip's rides at
    /// one instant keep their order along the trip).
    pub fn patterns(&self) -> &Patterns {
        self.patterns.get_or_init(|| Patterns::build(self))
    }

    pub fn rides_by_time(&self) -> &[u32] {
        self.rides_by_time.get_or_init(|| {
            let mut order: Vec<u32> = (0..self.events() as u32).filter(|&e| self.flags(e as usize) & LAST_OF_TRIP == 0).collect();
            order.sort_unstable_by_key(|&e| ((self.dep(e as usize) as u64) << 32) | e as u64);
            order.shrink_to_fit();
            order
        })
    }

    /// The instance an event belongs to.
    pub fn instance_of(&self, e: u32) -> &Instance {
        let i = self.instances.partition_point(|inst| inst.first <= e) - 1;
        &self.instances[i]
    }

    /// Index in the timetable of network event `e`.
    pub fn timetable_event(&self, tt: &Timetable, e: u32) -> usize {
        let inst = self.instance_of(e);
        tt.trips[inst.trip.idx()].first_event as usize + inst.skip as usize + (e - inst.first) as usize
    }

    /// Bytes held by the graph arrays (with the sweep order once built).
    pub fn bytes(&self) -> usize {
        self.events.capacity() * std::mem::size_of::<Event>()
            + self.by_stop.capacity() * 4
            + self.by_stop_dep.capacity() * 4
            + self.stop_first.capacity() * 4
            + self.instances.capacity() * std::mem::size_of::<Instance>()
            + self.rides_by_time.get().map_or(0, |o| o.capacity() * 4)
    }

    /// The instant of the timeline's origin.
    pub fn origin(&self) -> chrono::DateTime<chrono::Utc> {
        day_origin(self.tz, self.date)
    }
}

fn step_free_bits(trip: Access, stop: Access) -> u8 {
    match (trip, stop) {
        (Access::No, _) | (_, Access::No) => 0,
        (Access::Yes, Access::Yes) => STEP_FREE_YES,
        _ => STEP_FREE_UNKNOWN,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn with_departures(stops: &[Vec<u32>]) -> Network {
        let mut stop_first = vec![0u32];
        let mut by_stop_dep = Vec::new();
        for deps in stops {
            let mut d = deps.clone();
            d.sort_unstable();
            by_stop_dep.extend(d);
            stop_first.push(by_stop_dep.len() as u32);
        }
        Network {
            id: 0,
            date: NaiveDate::MIN,
            tz: chrono_tz::UTC,
            instances: vec![],
            events: vec![],
            stop_first,
            by_stop: vec![],
            by_stop_dep,
            trips_today: 0,
            rides_by_time: Default::default(),
            patterns: Default::default(),
        }
    }

    proptest! {
        // The galloping search must find what std's `partition_point` (the reference, a plain
        // binary search) finds, from any hint, inside or outside the stop's range.
        #[test]
        fn galloping_matches_partition_point(stops in prop::collection::vec(prop::collection::vec(0u32..200, 0..40), 1..4), s in 0usize..4, t in 0u32..210, near in 0u32..130) {
            let net = with_departures(&stops);
            let s = StopIdx((s % stops.len()) as u32);
            prop_assert_eq!(net.first_departure_near(s, t, near), net.first_departure(s, t));
        }
    }
}

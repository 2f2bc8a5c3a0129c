//! The step-free audit: for pairs of places over a window of departures, the standard travel
//! time against the step-free one, which pairs only the standard profile reaches, and how
//! complete the feed's accessibility data is.
//!
//! **Definitions.** For a pair and a profile, the travel time at each departure of the window is
//! the window analyses' ([`super::window`]); `p50` is their median (Hyndman–Fan 7, a departure
//! with no journey counting as infinitely long, so no median when half or more have none) and
//! `reached` the number of departures with a journey. A pair is `step_free` when the step-free
//! profile reaches it at some departure, `blocked` when only the standard one does, `no_journey`
//! when neither does. `extra_p50` = step-free p50 − standard p50, where both exist.
//!
//! The elements that block a pair, the ranking by what fixing one would change, and outages are
//! the engine's ([`crate::engine::stepfree`]): they need journeys and reruns.

use std::collections::HashMap;

use serde::Serialize;

use super::window::{percentile, TravelTimes, WindowRun, NONE};
use crate::route::SearchState;
use crate::timetable::{Access, PathwayMode, StopKind, Timetable};

/// One profile's summary of a pair over the window.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Side {
    /// Median travel time, s; `None` when half or more of the departures have no journey.
    pub p50_s: Option<f64>,
    /// Departures with a journey.
    pub reached: u32,
    /// The first departure (index into the window's) with a journey.
    pub first: Option<u32>,
}

impl Side {
    /// Summarises one place's travel times (reordered in place).
    pub fn of(times: &mut [u32]) -> Side {
        let first = times.iter().position(|&t| t != NONE).map(|i| i as u32);
        let reached = times.iter().filter(|&&t| t != NONE).count() as u32;
        times.sort_unstable();
        Side { p50_s: percentile(times, 50.0), reached, first }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum PairStatus {
    StepFree,
    /// Reached by the standard profile at some departure, never by the step-free one.
    Blocked,
    NoJourney,
}

impl PairStatus {
    /// The name the files and JSON use.
    pub fn name(self) -> &'static str {
        match self {
            PairStatus::StepFree => "step_free",
            PairStatus::Blocked => "blocked",
            PairStatus::NoJourney => "no_journey",
        }
    }
}

/// One pair, both profiles.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PairTimes {
    /// Destination place.
    pub to: u32,
    pub standard: Side,
    pub step_free: Side,
}

impl PairTimes {
    pub fn status(&self) -> PairStatus {
        if self.standard.reached == 0 && self.step_free.reached == 0 {
            PairStatus::NoJourney
        } else if self.step_free.reached == 0 {
            PairStatus::Blocked
        } else {
            PairStatus::StepFree
        }
    }
    /// Step-free median minus standard median, s.
    pub fn extra_p50_s(&self) -> Option<f64> {
        Some(self.step_free.p50_s? - self.standard.p50_s?)
    }
}

/// One profile's summaries from origin place `from` to each of `dests`.
pub fn sides(run: WindowRun, st: &mut SearchState, buf: &mut TravelTimes, from: usize, dests: &[u32]) -> Vec<Side> {
    run.travel_times(st, run.places.endpoints(from), buf);
    dests.iter().map(|&d| Side::of(buf.of_place(d as usize))).collect()
}

/// Both profiles from `from` to each of `dests` (the two runs share the network).
pub fn origin_pairs(
    standard: WindowRun,
    step_free: WindowRun,
    st: &mut SearchState,
    buf: &mut TravelTimes,
    from: usize,
    dests: &[u32],
) -> Vec<PairTimes> {
    let a = sides(standard, st, buf, from, dests);
    let b = sides(step_free, st, buf, from, dests);
    dests.iter().zip(a.into_iter().zip(b)).map(|(&to, (standard, step_free))| PairTimes { to, standard, step_free }).collect()
}

/// Counts of elements whose accessibility the feed gives as unknown, in one scope.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Completeness {
    /// `feed`, `agency` or `route`.
    pub scope: &'static str,
    pub id: String,
    pub name: String,
    /// Stops where vehicles call (platforms and stops), and entrances.
    pub stops: u32,
    /// Of them, `wheelchair_boarding` empty or 0 after inheritance from the parent station.
    pub stops_unknown: u32,
    pub trips: u32,
    /// Of them, `wheelchair_accessible` empty or 0.
    pub trips_unknown: u32,
    /// Pathways (feed scope only; empty for agencies and routes).
    pub pathways: Option<u32>,
    /// Of them, walkways, moving sidewalks and fare gates without `max_slope`: the 1:12 rule
    /// cannot be checked. Stairs and escalators are known not step-free, elevators step-free.
    pub pathways_unknown: Option<u32>,
}

/// Per feed, per agency and per route: the share of stops, trips and pathways whose
/// accessibility is unknown. A stop counts for a route (and its agency) when a trip of the route
/// calls there.
pub fn completeness(tt: &Timetable) -> Vec<Completeness> {
    let unknown = |a: Access| a == Access::Unknown;
    let mut out = Vec::new();
    // Feeds: every stop where vehicles may call, and every entrance.
    for (f, meta) in tt.feeds.iter().enumerate() {
        let mut c = Completeness { scope: "feed", id: meta.name.clone(), name: meta.name.clone(), ..Default::default() };
        for st in tt.stops.iter().filter(|s| s.feed.idx() == f && matches!(s.kind, StopKind::Platform | StopKind::Entrance)) {
            c.stops += 1;
            c.stops_unknown += unknown(st.wheelchair) as u32;
        }
        for t in tt.trips.iter().filter(|t| tt.routes[t.route.idx()].feed.idx() == f) {
            c.trips += 1;
            c.trips_unknown += unknown(t.wheelchair) as u32;
        }
        let (mut n, mut u) = (0, 0);
        for pw in tt.pathways.iter().filter(|p| tt.stop(p.from).feed.idx() == f) {
            n += 1;
            let checkable = matches!(pw.mode, PathwayMode::Stairs | PathwayMode::Escalator | PathwayMode::Elevator);
            u += (!checkable && pw.max_slope.is_none()) as u32;
        }
        c.pathways = Some(n);
        c.pathways_unknown = Some(u);
        out.push(c);
    }
    // Routes and agencies: the trips, and the stops their trips call at.
    let mut by_route: Vec<(Completeness, std::collections::HashSet<u32>)> = tt
        .routes
        .iter()
        .map(|r| {
            let name = if r.short_name.is_empty() { r.long_name.clone() } else { r.short_name.clone() };
            (Completeness { scope: "route", id: r.id.clone(), name, ..Default::default() }, Default::default())
        })
        .collect();
    for t in &tt.trips {
        let (c, stops) = &mut by_route[t.route.idx()];
        c.trips += 1;
        c.trips_unknown += unknown(t.wheelchair) as u32;
        for e in t.events() {
            stops.insert(tt.ev_stop[e].0);
        }
    }
    let mut agencies: HashMap<(u32, String), (Completeness, std::collections::HashSet<u32>)> = HashMap::new();
    for (r, (c, stops)) in by_route.iter_mut().enumerate() {
        c.stops = stops.len() as u32;
        c.stops_unknown = stops.iter().filter(|&&s| unknown(tt.stops[s as usize].wheelchair)).count() as u32;
        let route = &tt.routes[r];
        let a = agencies.entry((route.feed.0, route.agency.clone())).or_insert_with(|| {
            (
                Completeness { scope: "agency", id: route.agency.clone(), name: route.agency.clone(), ..Default::default() },
                Default::default(),
            )
        });
        a.0.trips += c.trips;
        a.0.trips_unknown += c.trips_unknown;
        a.1.extend(stops.iter().copied());
    }
    let mut agencies: Vec<_> = agencies.into_iter().collect();
    agencies.sort_by(|x, y| x.0.cmp(&y.0));
    for (_, (mut c, stops)) in agencies {
        c.stops = stops.len() as u32;
        c.stops_unknown = stops.iter().filter(|&&s| unknown(tt.stops[s as usize].wheelchair)).count() as u32;
        out.push(c);
    }
    out.extend(by_route.into_iter().map(|(c, _)| c));
    out
}

//! Itineraries: a journey's graph path turned into legs a person can follow, in the one JSON shape
//! that the CLI (`--json`), the WASM API and the page share (documented in DEVELOPERS.md).
//!
//! Each leg says whether it is step-free and why, from the feed's own fields: the trip's
//! `wheelchair_accessible`, the stops' `wheelchair_boarding` (after parent-station inheritance)
//! and each pathway's mode, stairs, slope and width.

use serde::Serialize;

use crate::graph::Network;
use crate::route::options::{access_walk_s, is_boarding};
use crate::route::search::{decode, Node};
use crate::route::{Endpoints, Journey, Params};
use crate::timetable::calendar::seconds_to_clock;
use crate::timetable::walking::{pathway_access, PathwayFinding};
use crate::timetable::{Access, Footpath, Override, StopIdx, StopKind, Timetable, WalkConfig};

/// A stop as a journey names it.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct StopRef {
    pub stop_id: String,
    pub feed: String,
    pub name: String,
    pub platform_code: Option<String>,
    pub lat: f64,
    pub lon: f64,
    /// The parent station's name.
    pub station: Option<String>,
}

#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct RouteRef {
    pub route_id: String,
    pub short_name: String,
    pub long_name: String,
    pub mode: String,
    pub color: String,
    pub text_color: String,
    pub agency: String,
}

/// A stop the vehicle calls at between boarding and alighting.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct Call {
    pub stop_id: String,
    pub name: String,
    pub arrive_s: u32,
    pub depart_s: u32,
    pub arrive: String,
    pub depart: String,
}

/// One pathway walked, in the direction walked; `from` and `to` are stop names.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct PathwayStep {
    pub pathway_id: String,
    pub pathway_mode: String,
    pub from: String,
    pub to: String,
}

/// Where a stop was used in a leg.
#[derive(Debug, Clone, Copy, Serialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum StopRole {
    Boarding,
    Alighting,
    Entrance,
}

/// What a step-free judgement was made on: the element and the feed's value for it.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(tag = "element", rename_all = "snake_case")]
pub enum Fact {
    /// The trip's `wheelchair_accessible`; `overridden` when the user set its route's.
    Trip {
        trip_id: String,
        wheelchair_accessible: Access,
        #[serde(skip_serializing_if = "Option::is_none")]
        overridden: Option<Override>,
    },
    /// A stop's `wheelchair_boarding`, after inheritance from its parent station
    /// (`inherited_from`: that station's name); `overridden` when the user set it (or its station's).
    Stop {
        role: StopRole,
        stop_id: String,
        name: String,
        wheelchair_boarding: Access,
        inherited_from: Option<String>,
        #[serde(skip_serializing_if = "Option::is_none")]
        overridden: Option<Override>,
    },
    /// One pathway, with what its fields show.
    Pathway {
        pathway_id: String,
        pathway_mode: String,
        #[serde(flatten)]
        finding: PathwayFinding,
    },
    /// A walk along streets, which GTFS does not describe: taken as step-free.
    Street,
}

/// One element a leg's step-free status was judged on, and the verdict.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct Check {
    pub verdict: Access,
    #[serde(flatten)]
    pub fact: Fact,
}

/// A leg's step-free status and every check it rests on.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct StepFreeEvidence {
    pub status: Access,
    pub checks: Vec<Check>,
}

impl StepFreeEvidence {
    fn new() -> Self {
        StepFreeEvidence { status: Access::Yes, checks: vec![] }
    }
    fn add(&mut self, verdict: Access, fact: Fact) {
        self.status = self.status.worst(verdict);
        self.checks.push(Check { verdict, fact });
    }
    /// The checks that are not step-free (or unknown).
    pub fn problems(&self) -> impl Iterator<Item = &Check> {
        self.checks.iter().filter(|c| c.verdict != Access::Yes)
    }
}

#[derive(Debug, Clone, Copy, Serialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum LegKind {
    /// Along streets (and any pathways at either end).
    Walk,
    Ride,
    /// Inside a station: pathways or a `transfers.txt` link, no street.
    InStation,
}

#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct Leg {
    pub kind: LegKind,
    pub start: StopRef,
    pub end: StopRef,
    pub depart_s: u32,
    pub arrive_s: u32,
    pub depart: String,
    pub arrive: String,
    pub duration_s: u32,
    pub wait_before_s: u32,
    pub route: Option<RouteRef>,
    pub trip_id: Option<String>,
    pub headsign: Option<String>,
    pub frequency_based: bool,
    pub calls: Vec<Call>,
    pub distance_m: Option<u32>,
    pub pathways: Vec<PathwayStep>,
    pub step_free: StepFreeEvidence,
}

/// A journey a person can follow: legs, and where its time goes.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct Itinerary {
    pub depart_s: u32,
    pub arrive_s: u32,
    pub depart: String,
    pub arrive: String,
    pub duration_s: u32,
    pub rides: u32,
    /// On board, s.
    pub ride_s: u32,
    /// Walking, in the street and inside stations, s.
    pub walk_s: u32,
    /// Waiting before each ride, s (`ride_s + walk_s + wait_s = duration_s`).
    pub wait_s: u32,
    pub cost_s: u32,
    pub step_free: Access,
    pub legs: Vec<Leg>,
}

pub struct Builder<'a> {
    pub tt: &'a Timetable,
    pub net: &'a Network,
    pub params: &'a Params,
    pub ends: &'a Endpoints,
    pub walk_cfg: &'a WalkConfig,
    pub query_s: u32,
}

impl Builder<'_> {
    fn clock(&self, s: u32) -> String {
        seconds_to_clock(self.net.tz, self.net.date, s as i64)
    }

    pub fn place(&self, s: StopIdx) -> StopRef {
        let st = self.tt.stop(s);
        StopRef {
            stop_id: st.id.clone(),
            feed: self.tt.feeds.get(st.feed.idx()).map(|f| f.name.clone()).unwrap_or_default(),
            name: st.name.clone(),
            platform_code: st.platform_code.clone(),
            lat: st.lat,
            lon: st.lon,
            station: self.tt.station_name(s).map(str::to_string),
        }
    }

    fn stop_check(&self, s: StopIdx, role: StopRole) -> (Access, Fact) {
        let st = self.tt.stop(s);
        let inherited_from = if st.wheelchair_inherited { self.tt.station_name(s).map(str::to_string) } else { None };
        (
            self.tt.stop_access(s),
            Fact::Stop {
                role,
                stop_id: st.id.clone(),
                name: st.name.clone(),
                wheelchair_boarding: st.wheelchair,
                inherited_from,
                overridden: self.tt.stop_override(s),
            },
        )
    }

    fn walk_leg(&self, from: StopIdx, to: StopIdx, f: Option<&Footpath>, depart_s: u32, d: u32) -> Leg {
        let walk = self.tt.walk(self.params.step_free.walk_profile());
        let mut status = StepFreeEvidence::new();
        let mut path = vec![];
        let mut kind = LegKind::Walk;
        if let Some(f) = f {
            if !f.street {
                kind = LegKind::InStation;
            } else {
                status.add(Access::Yes, Fact::Street);
            }
            for step in walk.steps(f) {
                let pw = &self.tt.pathways[step.pathway.idx()];
                let (a, finding) = pathway_access(self.tt, step.pathway, self.walk_cfg);
                status.add(a, Fact::Pathway { pathway_id: pw.id.clone(), pathway_mode: pw.mode.name().into(), finding });
                let (x, y) = if step.reversed { (pw.to, pw.from) } else { (pw.from, pw.to) };
                path.push(PathwayStep {
                    pathway_id: pw.id.clone(),
                    pathway_mode: pw.mode.name().into(),
                    from: self.tt.stop(x).name.clone(),
                    to: self.tt.stop(y).name.clone(),
                });
            }
            for s in [from, to] {
                if self.tt.stop(s).kind == StopKind::Entrance {
                    let (a, fact) = self.stop_check(s, StopRole::Entrance);
                    status.add(a, fact);
                }
            }
        }
        Leg {
            kind,
            start: self.place(from),
            end: self.place(to),
            depart_s,
            arrive_s: depart_s + d,
            depart: self.clock(depart_s),
            arrive: self.clock(depart_s + d),
            duration_s: d,
            wait_before_s: 0,
            route: None,
            trip_id: None,
            headsign: None,
            frequency_based: false,
            calls: vec![],
            distance_m: f.map(|f| f.length_m.round() as u32),
            pathways: path,
            step_free: status,
        }
    }

    fn footpath(&self, a: StopIdx, b: StopIdx) -> Option<(&Footpath, u32)> {
        let f = self.tt.walk(self.params.step_free.walk_profile()).between(a, b)?;
        Some((f, f.duration_s(self.params.walk_speed_mps)))
    }

    fn ride_leg(&self, board: u32, last: u32, wait_before_s: u32) -> Leg {
        let (net, tt) = (self.net, self.tt);
        let alight = last as usize + 1;
        let inst = net.instance_of(board);
        let trip = tt.trip(inst.trip);
        let route = &tt.routes[trip.route.idx()];
        let (from, to) = (net.stop(board as usize), net.stop(alight));
        let mut status = StepFreeEvidence::new();
        status.add(
            self.tt.trip_access(inst.trip),
            Fact::Trip { trip_id: trip.id.clone(), wheelchair_accessible: trip.wheelchair, overridden: self.tt.trip_override(inst.trip) },
        );
        for (s, role) in [(from, StopRole::Boarding), (to, StopRole::Alighting)] {
            let (a, fact) = self.stop_check(s, role);
            status.add(a, fact);
        }
        let calls = (board as usize + 1..alight)
            .map(|e| Call {
                stop_id: tt.stop(net.stop(e)).id.clone(),
                name: tt.stop(net.stop(e)).name.clone(),
                arrive_s: net.arr(e),
                depart_s: net.dep(e),
                arrive: self.clock(net.arr(e)),
                depart: self.clock(net.dep(e)),
            })
            .collect();
        let (d, a) = (net.dep(board as usize), net.arr(alight));
        Leg {
            kind: LegKind::Ride,
            start: self.place(from),
            end: self.place(to),
            depart_s: d,
            arrive_s: a,
            depart: self.clock(d),
            arrive: self.clock(a),
            duration_s: a - d,
            wait_before_s,
            route: Some(RouteRef {
                route_id: route.id.clone(),
                short_name: route.short_name.clone(),
                long_name: route.long_name.clone(),
                mode: route.mode.name().into(),
                color: route.color.clone(),
                text_color: route.text_color.clone(),
                agency: route.agency.clone(),
            }),
            trip_id: Some(trip.id.clone()),
            headsign: trip.headsign.clone(),
            frequency_based: trip.frequency_based,
            calls,
            distance_m: None,
            pathways: vec![],
            step_free: status,
        }
    }

    /// Turns a journey into legs.
    pub fn build(&self, j: &Journey) -> Itinerary {
        let mut legs: Vec<Leg> = Vec::new();
        if let Some((o, t, d)) = j.direct_walk {
            // The walk leaves when the search that found it did (a later option may be a walk
            // found from a later time than the query's).
            let leave = j.arrival_s - d;
            if o != t {
                let f = self.footpath(o, t).map(|x| x.0);
                legs.push(self.walk_leg(o, t, f, leave, d));
            }
            return self.finish(j, legs, leave);
        }
        let net = self.net;
        // Ride segments: (board event, last ride event).
        let mut rides: Vec<(u32, u32)> = Vec::new();
        for w in j.nodes.windows(2) {
            let Node::Ride(e) = decode(net, w[1]).1 else { continue };
            if is_boarding(net, w[0], w[1]) {
                rides.push((e, e));
            } else if let Some(r) = rides.last_mut() {
                r.1 = e;
            }
        }
        let mut t = self.query_s;
        let mut at: Option<StopIdx> = None;
        let mut depart = None;
        for &(board, last) in &rides {
            let s = net.stop(board as usize);
            match at {
                None => {
                    // Access: from the nearest origin to the first boarding stop.
                    if !self.ends.origins.contains(&s) {
                        let d = access_walk_s(self.tt, self.ends, s, self.params).unwrap_or(0);
                        let o = self
                            .ends
                            .origins
                            .iter()
                            .copied()
                            .find(|&o| self.footpath(o, s).is_some_and(|x| x.1 == d))
                            .unwrap_or(self.ends.origins[0]);
                        let leave = net.dep(board as usize).saturating_sub(d).max(self.query_s);
                        legs.push(self.walk_leg(o, s, self.footpath(o, s).map(|x| x.0), leave, d));
                        t = leave + d;
                        depart = Some(leave);
                    } else {
                        depart = Some(net.dep(board as usize));
                        t = net.dep(board as usize);
                    }
                }
                Some(prev) if prev != s => {
                    let (f, d) = self.footpath(prev, s).map(|(f, d)| (Some(f), d)).unwrap_or((None, 0));
                    legs.push(self.walk_leg(prev, s, f, t, d));
                    t += d;
                }
                _ => {}
            }
            let wait = net.dep(board as usize).saturating_sub(t);
            let leg = self.ride_leg(board, last, wait);
            t = leg.arrive_s;
            at = Some(net.stop(last as usize + 1));
            legs.push(leg);
        }
        if let Some(v) = at {
            if !self.ends.targets.contains(&v) {
                let best = self
                    .ends
                    .targets
                    .iter()
                    .filter_map(|&tg| self.footpath(v, tg).map(|(f, d)| (d, tg, *f)))
                    .filter(|x| x.2.length_m as f64 <= self.params.max_walk_m)
                    .min_by_key(|x| x.0);
                if let Some((d, tg, f)) = best {
                    legs.push(self.walk_leg(v, tg, Some(&f), t, d));
                }
            }
        }
        self.finish(j, legs, depart.unwrap_or(self.query_s))
    }

    /// The two-ride journey of one connection: the ride into network event `arrival` from
    /// `board` (an earlier event of the same trip), the change (a walk or in-station leg between
    /// two stops), and the ride from `departure` to `alight` (a later event of its trip). The
    /// cost is the duration. The caller checks that the events are what it says.
    pub fn connection(&self, board: u32, arrival: u32, departure: u32, alight: u32) -> Itinerary {
        let net = self.net;
        let first = self.ride_leg(board, arrival - 1, 0);
        let (a, d) = (net.stop(arrival as usize), net.stop(departure as usize));
        let mut legs = vec![first];
        let mut t = net.arr(arrival as usize);
        if a != d {
            let (f, w) = self.footpath(a, d).map(|(f, w)| (Some(f), w)).unwrap_or((None, 0));
            legs.push(self.walk_leg(a, d, f, t, w));
            t += w;
        }
        let wait = net.dep(departure as usize).saturating_sub(t);
        legs.push(self.ride_leg(departure, alight - 1, wait));
        let depart_s = net.dep(board as usize);
        let arrival_s = net.arr(alight as usize);
        let j = Journey { nodes: Vec::new(), arrival_s, cost_s: arrival_s - depart_s, rides: 2, direct_walk: None };
        self.finish(&j, legs, depart_s)
    }

    fn finish(&self, j: &Journey, legs: Vec<Leg>, depart_s: u32) -> Itinerary {
        let arrive_s = legs.last().map_or(depart_s, |l| l.arrive_s);
        let walk_s = legs.iter().filter(|l| l.kind != LegKind::Ride).map(|l| l.duration_s).sum();
        let ride_s = legs.iter().filter(|l| l.kind == LegKind::Ride).map(|l| l.duration_s).sum();
        let step_free = legs.iter().fold(Access::Yes, |a, l| a.worst(l.step_free.status));
        Itinerary {
            depart_s,
            arrive_s,
            depart: self.clock(depart_s),
            arrive: self.clock(arrive_s),
            duration_s: arrive_s - depart_s,
            rides: j.rides,
            ride_s,
            walk_s,
            // Whatever of the span is neither ride nor walk is waiting (before rides, and after
            // an access walk that arrives early).
            wait_s: (arrive_s - depart_s).saturating_sub(ride_s + walk_s),
            cost_s: j.cost_s,
            step_free,
            legs,
        }
    }
}

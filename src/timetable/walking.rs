//! Walking links between stops, for each walking profile.
//!
//! A walking link ("footpath") joins two stops where a rider can alight or board (platforms and
//! street stops) or enter (station entrances). It is made of at most one street segment (between
//! stops within [`WalkConfig::link_radius_m`], great-circle distance × detour factor) plus any
//! pathways inside the stations at either end. Inside a station that has `pathways.txt` rows, the
//! reference says the pathways are the complete picture, so its platforms are reached from the
//! street only through its entrances. Links are precomputed as a closure so the time-expanded graph
//! needs one hop per transfer; lengths and fixed times are kept apart so the walking speed can be
//! chosen per query.

use std::cmp::Reverse;
use std::collections::BinaryHeap;

use serde::Serialize;

use super::{Access, PathwayIdx, PathwayMode, StopIdx, StopKind, Timetable, TransferRule};

/// Build-time walking parameters. Query-time ones (speed, maximum walk) are in `search::Query`.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct WalkConfig {
    /// Stops closer than this (great-circle) get a street link. 400 m: common practice, no source.
    pub link_radius_m: f64,
    /// Street distance / great-circle distance. 1.3: common practice, no source.
    pub detour_factor: f64,
    /// Speed used to turn a pathway's traversal_time into a length, m/s. 1.3: common practice,
    /// no source (typical adult walking speed 1.2–1.4 m/s, recalled from memory).
    pub reference_speed_mps: f64,
    /// Elevator ride and wait when pathways.txt gives no traversal_time, s. Common practice, no source.
    pub elevator_default_s: u32,
    /// Steepest slope treated as step-free: 1:12 = 0.083 (recalled from memory: the usual ramp
    /// limit of accessibility codes; local codes prevail).
    pub max_step_free_slope: f32,
    /// Narrowest pathway treated as step-free, m: 0.9 (recalled from memory; local codes prevail).
    pub min_step_free_width_m: f32,
    /// Longest walking link kept, in metres of walking (fixed times counted at reference speed).
    pub max_link_m: f64,
}

impl Default for WalkConfig {
    fn default() -> Self {
        WalkConfig {
            link_radius_m: 400.0,
            detour_factor: 1.3,
            reference_speed_mps: 1.3,
            elevator_default_s: 45,
            max_step_free_slope: 0.083,
            min_step_free_width_m: 0.9,
            max_link_m: 1500.0,
        }
    }
}

/// Which walking links exist: everyone's, or only step-free ones (lenient also lets through
/// elements whose accessibility the feed leaves unknown).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum WalkProfile {
    Standard,
    StepFreeLenient,
    StepFreeStrict,
}

impl WalkProfile {
    pub const ALL: [WalkProfile; 3] = [WalkProfile::Standard, WalkProfile::StepFreeLenient, WalkProfile::StepFreeStrict];
    pub fn index(self) -> usize {
        self as usize
    }
}

/// One step of a walking link that follows a pathway.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct PathwayStep {
    pub pathway: PathwayIdx,
    /// Walked from the pathway's to_stop to its from_stop.
    pub reversed: bool,
}

#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Footpath {
    pub to: StopIdx,
    /// Walking length, metres (street part and pathways with a length).
    pub length_m: f32,
    /// Time that does not depend on walking speed (elevators), s.
    pub fixed_s: u32,
    /// The time `transfers.txt` gives for this change (transfer_type 2, `min_transfer_time`), s;
    /// [`NO_GIVEN_TIME`] when it gives none.
    pub given_s: u32,
    /// True in the standard profile: the feed's time replaces our estimate. In the step-free
    /// profiles the path (and the rider) may be slower than the one the operator timed, so the
    /// larger of the two counts.
    pub given_only: bool,
    /// Worst accessibility of the link's parts.
    pub access: Access,
    pub steps_start: u32,
    pub steps_len: u16,
    /// True when the link includes a street segment.
    pub street: bool,
}

/// `Footpath::given_s` when `transfers.txt` gives no time for the link.
pub const NO_GIVEN_TIME: u32 = u32::MAX;

/// The walking speed a feed's `min_transfer_time` is taken to be timed at: the standard profile's
/// default, 1.3 m/s (common practice, no source). A slower rider takes the feed's time scaled by
/// the ratio of the speeds; a faster one is not given less than the operator states.
pub const GIVEN_TIME_SPEED_MPS: f64 = 1.3;

impl Footpath {
    /// Seconds to walk this link at `speed_mps`. Where `transfers.txt` gives a time, the standard
    /// profile takes that time (scaled up for a speed below [`GIVEN_TIME_SPEED_MPS`]); the
    /// step-free profiles take the larger of it and our estimate along their own path.
    #[inline]
    pub fn duration_s(&self, speed_mps: f64) -> u32 {
        let estimate = (self.length_m as f64 / speed_mps).ceil() as u32 + self.fixed_s;
        if self.given_s == NO_GIVEN_TIME {
            return estimate;
        }
        let given = if speed_mps >= GIVEN_TIME_SPEED_MPS {
            self.given_s
        } else {
            (self.given_s as f64 * GIVEN_TIME_SPEED_MPS / speed_mps).ceil() as u32
        };
        if self.given_only {
            given
        } else {
            estimate.max(given)
        }
    }
}

/// Walking links in CSR form: the links from stop `s` are `paths[first[s]..first[s+1]]`,
/// sorted by target stop.
#[derive(Debug, Clone, Default)]
pub struct FootpathSet {
    pub first: Vec<u32>,
    pub paths: Vec<Footpath>,
    pub steps: Vec<PathwayStep>,
}

impl FootpathSet {
    #[inline]
    pub fn from(&self, s: StopIdx) -> &[Footpath] {
        match (self.first.get(s.idx()), self.first.get(s.idx() + 1)) {
            (Some(&a), Some(&b)) => &self.paths[a as usize..b as usize],
            _ => &[],
        }
    }
    pub fn between(&self, a: StopIdx, b: StopIdx) -> Option<&Footpath> {
        let links = self.from(a);
        links.binary_search_by_key(&b, |f| f.to).ok().map(|i| &links[i])
    }
    pub fn steps(&self, f: &Footpath) -> &[PathwayStep] {
        &self.steps[f.steps_start as usize..f.steps_start as usize + f.steps_len as usize]
    }
    pub fn len(&self) -> usize {
        self.paths.len()
    }
    pub fn is_empty(&self) -> bool {
        self.paths.is_empty()
    }
}

/// Great-circle distance in metres (haversine, mean Earth radius 6,371,008.8 m: IUGG mean radius).
pub fn haversine_m(lat1: f64, lon1: f64, lat2: f64, lon2: f64) -> f64 {
    const R: f64 = 6_371_008.8;
    let (p1, p2) = (lat1.to_radians(), lat2.to_radians());
    let dp = p2 - p1;
    let dl = (lon2 - lon1).to_radians();
    let a = (dp / 2.0).sin().powi(2) + p1.cos() * p2.cos() * (dl / 2.0).sin().powi(2);
    2.0 * R * a.sqrt().min(1.0).asin()
}

/// What a pathway's fields show about step-free use (the first problem found, in this order).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "finding", rename_all = "snake_case")]
pub enum PathwayFinding {
    /// No problem in the fields the feed gives.
    StepFree,
    /// `pathway_mode` 2.
    Stairs,
    /// `pathway_mode` 4.
    Escalator,
    /// `stair_count` other than 0.
    StairCount { stair_count: i32 },
    /// `max_slope` steeper than the limit (ratio).
    TooSteep { max_slope: f32, limit: f32 },
    /// `min_width` narrower than the limit (m).
    TooNarrow { min_width_m: f32, limit_m: f32 },
    /// Set out of service by the user (an outage).
    OutOfService,
    /// Taken as step-free by the user (what fixing it would change).
    AssumedStepFree,
}

/// Accessibility of one pathway for a wheelchair user, with what it was judged on.
pub fn pathway_access(tt: &Timetable, p: PathwayIdx, cfg: &WalkConfig) -> (Access, PathwayFinding) {
    match tt.overrides.pathways.get(&p) {
        Some(super::Override::OutOfService) => return (Access::No, PathwayFinding::OutOfService),
        Some(super::Override::AssumedAccessible) => return (Access::Yes, PathwayFinding::AssumedStepFree),
        None => {}
    }
    let pw = &tt.pathways[p.idx()];
    match pw.mode {
        PathwayMode::Stairs => return (Access::No, PathwayFinding::Stairs),
        PathwayMode::Escalator => return (Access::No, PathwayFinding::Escalator),
        _ => {}
    }
    if let Some(n) = pw.stair_count.filter(|&n| n != 0) {
        return (Access::No, PathwayFinding::StairCount { stair_count: n });
    }
    if let Some(s) = pw.max_slope.filter(|s| s.abs() > cfg.max_step_free_slope) {
        return (Access::No, PathwayFinding::TooSteep { max_slope: s, limit: cfg.max_step_free_slope });
    }
    if let Some(w) = pw.min_width_m.filter(|&w| w < cfg.min_step_free_width_m) {
        return (Access::No, PathwayFinding::TooNarrow { min_width_m: w, limit_m: cfg.min_step_free_width_m });
    }
    (Access::Yes, PathwayFinding::StepFree)
}

fn allowed(profile: WalkProfile, a: Access) -> bool {
    match profile {
        WalkProfile::Standard => true,
        WalkProfile::StepFreeLenient => a != Access::No,
        WalkProfile::StepFreeStrict => a == Access::Yes,
    }
}

#[derive(Clone, Copy)]
struct Edge {
    to: u32,
    length_m: f32,
    fixed_s: u32,
    access: Access,
    /// `u32::MAX` for a street segment or transfer link.
    pathway: u32,
    reversed: bool,
}

/// Recomputes the walking links of every profile from stops, pathways and transfer rules.
pub fn rebuild(tt: &mut Timetable, cfg: &WalkConfig) {
    let n = tt.stops.len();
    let mut has_pathways = vec![false; n];
    for pw in &tt.pathways {
        has_pathways[tt.station_of(pw.from).idx()] = true;
        has_pathways[tt.station_of(pw.to).idx()] = true;
    }
    let in_pathway_station = |s: usize| has_pathways[tt.station_of(StopIdx(s as u32)).idx()];
    // Stops a rider starts or ends a walk at.
    let endpoint = |s: usize| matches!(tt.stops[s].kind, StopKind::Platform | StopKind::Entrance | StopKind::BoardingArea);
    let street = |s: usize| match tt.stops[s].kind {
        StopKind::Entrance => true,
        StopKind::Platform => !in_pathway_station(s),
        _ => false,
    };

    let mut edges: Vec<Vec<Edge>> = vec![Vec::new(); n];
    // Street segments, found through a grid of link-radius cells.
    let cell_deg = cfg.link_radius_m / 111_000.0;
    let mut grid: std::collections::HashMap<(i64, i64), Vec<u32>> = std::collections::HashMap::new();
    for (i, s) in tt.stops.iter().enumerate() {
        if street(i) && s.lat.is_finite() && s.lon.is_finite() {
            grid.entry(((s.lat / cell_deg).floor() as i64, (s.lon / cell_deg).floor() as i64)).or_default().push(i as u32);
        }
    }
    for (&(cy, cx), members) in &grid {
        for &a in members {
            let sa = &tt.stops[a as usize];
            let lon_cells = (1.0 / sa.lat.to_radians().cos().max(0.05)).ceil() as i64;
            for dy in -1..=1 {
                for dx in -lon_cells..=lon_cells {
                    let Some(other) = grid.get(&(cy + dy, cx + dx)) else { continue };
                    for &b in other {
                        if b == a {
                            continue;
                        }
                        let sb = &tt.stops[b as usize];
                        let d = haversine_m(sa.lat, sa.lon, sb.lat, sb.lon);
                        if d <= cfg.link_radius_m {
                            let access = Access::worst(entrance_access(tt, a), entrance_access(tt, b));
                            edges[a as usize].push(Edge {
                                to: b,
                                length_m: (d * cfg.detour_factor) as f32,
                                fixed_s: 0,
                                access,
                                pathway: u32::MAX,
                                reversed: false,
                            });
                        }
                    }
                }
            }
        }
    }
    for (i, pw) in tt.pathways.iter().enumerate() {
        let (access, _) = pathway_access(tt, PathwayIdx(i as u32), cfg);
        let (length_m, fixed_s) = pathway_cost(pw, cfg);
        let e = |to: StopIdx, reversed| Edge { to: to.0, length_m, fixed_s, access, pathway: i as u32, reversed };
        edges[pw.from.idx()].push(e(pw.to, false));
        if pw.bidirectional {
            edges[pw.to.idx()].push(e(pw.from, true));
        }
    }
    let mut rules = tt.link_rules.clone();
    rules.sort_by_key(|r| (r.0, r.1));
    let mut sets = Vec::with_capacity(3);
    for profile in WalkProfile::ALL {
        sets.push(closure(tt, cfg, profile, &edges, &endpoint, &rules));
    }
    tt.walk_step_free_strict = sets.pop().unwrap_or_default();
    tt.walk_step_free = sets.pop().unwrap_or_default();
    tt.walk_standard = sets.pop().unwrap_or_default();
}

fn entrance_access(tt: &Timetable, s: u32) -> Access {
    let st = &tt.stops[s as usize];
    match st.kind {
        StopKind::Entrance => tt.stop_access(StopIdx(s)),
        // A street stop: the street itself is not described by the feed; assumed step-free.
        _ => Access::Yes,
    }
}

fn pathway_cost(pw: &super::Pathway, cfg: &WalkConfig) -> (f32, u32) {
    match pw.mode {
        PathwayMode::Elevator => (pw.length_m.unwrap_or(0.0), pw.traversal_time_s.unwrap_or(cfg.elevator_default_s)),
        _ => match (pw.length_m, pw.traversal_time_s) {
            (Some(l), _) => (l, 0),
            (None, Some(t)) => ((t as f64 * cfg.reference_speed_mps) as f32, 0),
            // Neither given: a short connection inside a station. 10 m: common practice, no source.
            (None, None) => (10.0, 0),
        },
    }
}

#[allow(clippy::too_many_arguments)]
fn closure(
    tt: &Timetable,
    cfg: &WalkConfig,
    profile: WalkProfile,
    edges: &[Vec<Edge>],
    endpoint: &dyn Fn(usize) -> bool,
    rules: &[(StopIdx, StopIdx, TransferRule)],
) -> FootpathSet {
    let n = tt.stops.len();
    let mut set = FootpathSet { first: Vec::with_capacity(n + 1), paths: Vec::new(), steps: Vec::new() };
    // State (stop, street segment used) → cost in walking metres; reset through `touched`.
    let mut dist = vec![f64::INFINITY; 2 * n];
    let mut pred: Vec<(u32, Edge)> = vec![(u32::MAX, edges_dummy()); 2 * n];
    let mut touched: Vec<u32> = Vec::new();
    let mut heap: BinaryHeap<Reverse<(u64, u32)>> = BinaryHeap::new();
    let cost = |e: &Edge| e.length_m as f64 + e.fixed_s as f64 * cfg.reference_speed_mps;
    for s in 0..n {
        set.first.push(set.paths.len() as u32);
        if !endpoint(s) || !allowed(profile, entrance_access(tt, s as u32)) && tt.stops[s].kind == StopKind::Entrance {
            continue;
        }
        let start = 2 * s;
        dist[start] = 0.0;
        touched.push(start as u32);
        heap.push(Reverse((0, start as u32)));
        let mut found: Vec<(u32, u32)> = Vec::new(); // (stop, state)
        while let Some(Reverse((c_mm, state))) = heap.pop() {
            let c = c_mm as f64 / 1000.0;
            if c > dist[state as usize] + 1e-6 {
                continue;
            }
            let (v, used_street) = ((state / 2) as usize, state % 2 == 1);
            if v != s && endpoint(v) {
                found.push((v as u32, state));
            }
            for e in &edges[v] {
                let is_street = e.pathway == u32::MAX;
                if is_street && used_street {
                    continue;
                }
                if !allowed(profile, e.access) {
                    continue;
                }
                let nc = c + cost(e);
                if nc > cfg.max_link_m {
                    continue;
                }
                let ns = 2 * e.to as usize + usize::from(used_street || is_street);
                if nc + 1e-6 < dist[ns] {
                    if dist[ns].is_infinite() {
                        touched.push(ns as u32);
                    }
                    dist[ns] = nc;
                    pred[ns] = (state, *e);
                    heap.push(Reverse(((nc * 1000.0) as u64, ns as u32)));
                }
            }
        }
        // Keep the cheaper of the two states per target stop.
        found.sort_by(|a, b| a.0.cmp(&b.0).then(dist[a.1 as usize].total_cmp(&dist[b.1 as usize])));
        found.dedup_by_key(|f| f.0);
        let first_new = set.paths.len();
        for (to, state) in found {
            let mut fp = Footpath {
                to: StopIdx(to),
                length_m: 0.0,
                fixed_s: 0,
                given_s: NO_GIVEN_TIME,
                given_only: false,
                access: Access::Yes,
                steps_start: set.steps.len() as u32,
                steps_len: 0,
                street: false,
            };
            let mut chain = Vec::new();
            let mut cur = state;
            while cur as usize != start {
                let (p, e) = pred[cur as usize];
                chain.push(e);
                cur = p;
            }
            chain.reverse();
            for e in &chain {
                fp.length_m += e.length_m;
                fp.fixed_s += e.fixed_s;
                fp.access = Access::worst(fp.access, e.access);
                if e.pathway == u32::MAX {
                    fp.street = true;
                } else {
                    set.steps.push(PathwayStep { pathway: PathwayIdx(e.pathway), reversed: e.reversed });
                    fp.steps_len = fp.steps_len.saturating_add(1);
                }
            }
            set.paths.push(fp);
        }
        apply_link_rules(tt, cfg, profile, s, rules, &mut set, first_new);
        for &t in &touched {
            dist[t as usize] = f64::INFINITY;
        }
        touched.clear();
    }
    set.first.push(set.paths.len() as u32);
    set
}

/// transfers.txt rows between two different stops override the walking closure for that pair:
/// transfer_type 3 removes the link, 1 and 2 make sure it exists (even past the walking limit);
/// a transfer_type 2 `min_transfer_time` is the time the change takes (the GTFS Schedule
/// reference: the time a typical rider needs to move between the two stops, buffer included),
/// in place of our estimate in the standard profile and as a floor in the step-free ones
/// ([`Footpath::duration_s`]). The feed does not say whether such a link is step-free, so a link
/// that exists only because of the rule is "unknown" (left out of the strict profile).
fn apply_link_rules(
    tt: &Timetable,
    cfg: &WalkConfig,
    profile: WalkProfile,
    s: usize,
    rules: &[(StopIdx, StopIdx, TransferRule)],
    set: &mut FootpathSet,
    first_new: usize,
) {
    let from = StopIdx(s as u32);
    let lo = rules.partition_point(|r| r.0 < from);
    let hi = rules.partition_point(|r| r.0 <= from);
    if lo == hi {
        return;
    }
    for &(_, to, rule) in &rules[lo..hi] {
        let existing = set.paths[first_new..].iter().position(|f| f.to == to).map(|i| i + first_new);
        match (rule, existing) {
            (TransferRule::Forbidden, Some(i)) => {
                set.paths.remove(i);
            }
            (TransferRule::Forbidden, None) => {}
            (TransferRule::MinTime(m), Some(i)) => {
                set.paths[i].given_s = m;
                set.paths[i].given_only = profile == WalkProfile::Standard;
            }
            (TransferRule::Timed, Some(_)) => {}
            (rule, None) => {
                if !allowed(profile, Access::Unknown) || to.idx() == s {
                    continue;
                }
                let (a, b) = (tt.stop(from), tt.stop(to));
                let length_m = (haversine_m(a.lat, a.lon, b.lat, b.lon) * cfg.detour_factor) as f32;
                let given_s = if let TransferRule::MinTime(m) = rule { m } else { NO_GIVEN_TIME };
                set.paths.push(Footpath {
                    to,
                    length_m,
                    fixed_s: 0,
                    given_s,
                    given_only: profile == WalkProfile::Standard,
                    access: Access::Unknown,
                    steps_start: set.steps.len() as u32,
                    steps_len: 0,
                    street: true,
                });
            }
        }
    }
    set.paths[first_new..].sort_by_key(|f| f.to);
}

fn edges_dummy() -> Edge {
    Edge { to: 0, length_m: 0.0, fixed_s: 0, access: Access::Yes, pathway: u32::MAX, reversed: false }
}

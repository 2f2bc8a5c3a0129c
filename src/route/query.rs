//! The vocabulary every search speaks: what a query asks ([`Params`], [`StepFree`]), where it
//! starts and ends ([`Endpoints`]), and what it finds ([`Journey`], a path of graph nodes).

use serde::Serialize;

use crate::graph::{Network, STEP_FREE_UNKNOWN, STEP_FREE_YES};
use crate::timetable::{StopIdx, Timetable, WalkProfile};

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum StepFree {
    #[default]
    Off,
    /// Only elements marked accessible (1).
    Strict,
    /// Also elements whose accessibility is unknown (0 or empty); such legs are flagged.
    Lenient,
}

impl StepFree {
    pub fn walk_profile(self) -> WalkProfile {
        match self {
            StepFree::Off => WalkProfile::Standard,
            StepFree::Strict => WalkProfile::StepFreeStrict,
            StepFree::Lenient => WalkProfile::StepFreeLenient,
        }
    }
    pub(crate) fn event_mask(self) -> u8 {
        match self {
            StepFree::Off => 0,
            StepFree::Strict => STEP_FREE_YES,
            StepFree::Lenient => STEP_FREE_YES | STEP_FREE_UNKNOWN,
        }
    }
}

/// The walking setting that prepared data (walking links, landmark tables) depend on.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WalkKey {
    pub network: u64,
    pub profile: WalkProfile,
    pub speed_mps: f64,
    pub max_walk_m: f64,
    pub weight: f64,
}

/// Routing parameters of one query, with the defaults and where they come from.
#[derive(Debug, Clone, Serialize)]
pub struct Params {
    pub step_free: StepFree,
    /// Walking speed, m/s. Default 1.3 (common practice, no source); step-free default 0.8
    /// (common practice, no source: manual wheelchair users on level ground, recalled from memory).
    pub walk_speed_mps: f64,
    /// Longest single walking link, metres. Default 800 (common practice, no source).
    pub max_walk_m: f64,
    /// Added for each boarding after the first, s. Default 300 (common practice, no source).
    pub transfer_penalty_s: u32,
    /// Walking time is multiplied by this in the cost (1.0 = none).
    pub walk_weight: f64,
    /// Minimum time to change vehicles at the same stop, s. Default 60 (common practice, no source).
    pub min_transfer_s: u32,
    /// Extra change time for the step-free profile, s. Default 120 (common practice, no source).
    pub step_free_extra_transfer_s: u32,
    /// Journeys longer than this are not searched, s. Default 4 h.
    pub max_duration_s: u32,
}

impl Params {
    pub fn new(step_free: StepFree) -> Params {
        Params {
            step_free,
            walk_speed_mps: if step_free == StepFree::Off { 1.3 } else { 0.8 },
            max_walk_m: 800.0,
            transfer_penalty_s: 300,
            walk_weight: 1.0,
            min_transfer_s: 60,
            step_free_extra_transfer_s: 120,
            max_duration_s: 4 * 3600,
        }
    }
    /// What the prepared walking data of this setting on `net` are filed under.
    pub fn walk_key(&self, net: &Network) -> WalkKey {
        WalkKey {
            network: net.id,
            profile: self.step_free.walk_profile(),
            speed_mps: self.walk_speed_mps,
            max_walk_m: self.max_walk_m,
            weight: self.walk_weight,
        }
    }
    pub fn transfer_s(&self) -> u32 {
        self.min_transfer_s + if self.step_free == StepFree::Off { 0 } else { self.step_free_extra_transfer_s }
    }
}

impl Default for Params {
    fn default() -> Self {
        Params::new(StepFree::Off)
    }
}

/// Where a search starts and ends: stops reachable at no walking cost (a station's entrances or
/// platforms, or one stop).
#[derive(Debug, Clone)]
pub struct Endpoints {
    pub origins: Vec<StopIdx>,
    pub targets: Vec<StopIdx>,
}

/// One journey as a path of graph nodes.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Journey {
    /// Nodes from the first waiting node to the sink (empty for a walk-only journey).
    pub nodes: Vec<u32>,
    pub arrival_s: u32,
    /// Generalised cost, first boarding's penalty taken off.
    pub cost_s: u32,
    pub rides: u32,
    /// Walk-only journey: origin, target, walking seconds.
    pub direct_walk: Option<(StopIdx, StopIdx, u32)>,
}

/// Walking seconds as they count in the cost: times the walk weight, rounded to the second
/// (exactly `walk_s` at weight 1).
#[inline]
pub fn weighted_walk_s(walk_s: u32, weight: f64) -> u32 {
    if weight == 1.0 {
        walk_s
    } else {
        (walk_s as f64 * weight).round() as u32
    }
}

/// One search request on one date's network: the inputs every search function takes.
#[derive(Clone, Copy)]
pub struct Query<'a> {
    pub tt: &'a Timetable,
    pub net: &'a Network,
    pub ends: &'a Endpoints,
    /// Earliest departure from the origins, s on the network's timeline.
    pub depart_s: u32,
    pub p: &'a Params,
}

impl<'a> Query<'a> {
    pub fn new(tt: &'a Timetable, net: &'a Network, ends: &'a Endpoints, depart_s: u32, p: &'a Params) -> Self {
        Query { tt, net, ends, depart_s, p }
    }
    /// The same request, leaving at or after `depart_s` instead.
    pub fn leaving(self, depart_s: u32) -> Self {
        Query { depart_s, ..self }
    }
}

/// Asks the processor to bring `x` into cache (a hint only; no effect where unsupported).
#[inline(always)]
pub(crate) fn prefetch<T>(x: &T) {
    #[cfg(target_arch = "x86_64")]
    // SAFETY: a prefetch never faults and reads nothing into the program; the pointer is valid.
    unsafe {
        std::arch::x86_64::_mm_prefetch(x as *const T as *const i8, std::arch::x86_64::_MM_HINT_T0)
    };
    #[cfg(not(target_arch = "x86_64"))]
    let _ = x;
}

//! The front door of the step-free audit ([`crate::analysis::stepfree`]): pairs of places over a
//! window, standard against step-free; for blocked pairs, the elements on the standard journey
//! that fail the step-free check; the elements ranked by how many blocked pairs fixing each alone
//! would open; outages (elements set out of service) and the pairs they cost; the completeness
//! of the feed's accessibility data.
//!
//! Overrides (outages, what-if-fixed) are set on the timetable only for the length of one audit
//! and always cleared before it returns.

use std::collections::{BTreeMap, HashMap};

use serde::{Deserialize, Serialize};

use super::window::{WindowQuery, WindowSetting};
use super::Engine;
use crate::analysis::places::{sample_pairs, splitmix};
use crate::analysis::stepfree::{completeness, origin_pairs, sides, Completeness, PairStatus, PairTimes, Side};
use crate::analysis::window::{TravelTimes, WindowRun};
use crate::error::QueryError;
use crate::journey::{Builder, Fact, Itinerary};
use crate::route::options;
use crate::route::search::{Endpoints, Query, SearchState, StepFree};
use crate::timetable::{Access, FeedIdx, Override, Overrides, PathwayIdx, RouteIdx, StopIdx, StopKind};

/// Blocked pairs explained per origin when none is given: the elements of a blocked pair come
/// from a journey search of its own, so this bounds the work on large pair sets.
pub const DEFAULT_EXPLAIN_PER_ORIGIN: u32 = 10;
/// Origins rerun per element tried as fixed when none is given (a seeded sample of the origins
/// concerned, the count scaled up; 0: all).
pub const DEFAULT_FIX_ORIGINS: u32 = 200;
/// Elements whose fixing is tried (a rerun each) when none is given.
pub const DEFAULT_FIX_TOP: u32 = 10;
/// The caution every page, report and file of accessibility results carries.
pub const CAUTION: &str = "Results reflect the feed's data, which may be incomplete or out of date; confirm on site and with the operator; local codes and licensed practice prevail.";

#[derive(Debug, Clone, Serialize, Deserialize, Default)]
#[serde(default, deny_unknown_fields)]
pub struct StepFreeQuery {
    pub date: String,
    /// "HH:MM-HH:MM" of departures.
    pub window: String,
    /// Minutes between sampled departures; default 1.
    pub step_min: Option<u32>,
    /// `all` (every pair of places) or `sample:N`; ignored when `pair_list` is given.
    pub pairs: Option<String>,
    /// Pairs of place ids (station or stop ids; a platform stands for its station).
    pub pair_list: Option<Vec<(String, String)>>,
    /// Seed of the sample and of the choice of blocked pairs to explain; default 1.
    pub seed: Option<u64>,
    /// Step-free profile `lenient`: unknown accessibility counts as step-free. Default strict.
    pub lenient: bool,
    /// Rolling or walking speed of the step-free profile, m/s; default 0.8.
    pub step_free_speed_mps: Option<f64>,
    /// Walking speed of the standard profile, m/s; default 1.3.
    pub walking_speed_mps: Option<f64>,
    /// Elements out of service: pathway, stop (a station: all its stops; an entrance) or route
    /// ids, plain or as `pathway:ID`, `stop:ID`, `route:ID`.
    pub outages: Vec<String>,
    /// Where each outage came from (`option`, `alert ID`), in the order of `outages`; missing: `option`.
    pub outage_sources: Vec<String>,
    /// How many elements, most-blocking first, to rerun as if fixed; default 10, at most 50.
    pub fix_top: Option<u32>,
    /// At most this many origins rerun per element tried as fixed (a seeded sample, the count
    /// scaled to all the origins concerned); default 200, 0: all.
    pub fix_origins: Option<u32>,
    /// How many blocked pairs per origin get their blocking elements; default 10.
    pub explain_per_origin: Option<u32>,
}

impl StepFreeQuery {
    /// Adds outages with where they came from (an alerts file's, say); the outages given before
    /// without a source are from the `option`.
    pub fn add_outages(&mut self, found: Vec<(String, String)>) {
        self.outage_sources.resize(self.outages.len(), "option".into());
        for (id, source) in found {
            self.outages.push(id);
            self.outage_sources.push(source);
        }
    }
}

/// An element whose accessibility a pair's step-free journey depends on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Element {
    Stop(StopIdx),
    Pathway(PathwayIdx),
    Route(RouteIdx),
}

/// One pair, as the shells write it.
#[derive(Debug, Clone, Serialize)]
pub struct StepFreePairRow {
    pub from_stop_id: String,
    pub to_stop_id: String,
    /// Medians over the window's departures, s; empty when half or more have no journey.
    pub standard_p50_s: Option<f64>,
    pub stepfree_p50_s: Option<f64>,
    pub extra_p50_s: Option<f64>,
    pub status: PairStatus,
    /// Blocked pairs: the elements of the standard journey (at the first departure with one)
    /// that fail the step-free check, as `kind:id`; empty when not explained.
    pub blocking: Vec<String>,
    /// With outages: the step-free median with them, and what changed.
    pub outage_stepfree_p50_s: Option<f64>,
    pub outage_status: Option<OutageEffect>,
    /// Pairs lost to the outages: the elements set out of service on the step-free journey
    /// they had (at its first departure), as `kind:id`.
    pub outage_blocking: Vec<String>,
    /// Departures with a journey, of the window's.
    pub standard_reached: u32,
    pub stepfree_reached: u32,
}

/// What outages did to a pair.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum OutageEffect {
    /// Step-free before, not with the outages.
    Lost,
    /// Still step-free, with a longer median.
    Slower,
    Unchanged,
    /// Not step-free before either.
    NotStepFree,
}

impl OutageEffect {
    /// The name the files and JSON use.
    pub fn name(self) -> &'static str {
        match self {
            OutageEffect::Lost => "lost",
            OutageEffect::Slower => "slower",
            OutageEffect::Unchanged => "unchanged",
            OutageEffect::NotStepFree => "not_step_free",
        }
    }
}

/// One element in the ranking.
#[derive(Debug, Clone, Serialize)]
pub struct ElementRow {
    /// `pathway`, `stop`, `entrance`, `station` or `route`.
    pub element_kind: &'static str,
    pub element_id: String,
    pub name: String,
    /// Explained blocked pairs whose standard journey it fails.
    pub pairs_blocked: u32,
    /// Of the blocked pairs from the origins of those pairs, how many the step-free profile
    /// reaches with this element alone taken as step-free; empty when not tried. When more
    /// origins are concerned than rerun, the count over those rerun scaled up (`estimated`).
    pub pairs_unblocked_if_fixed: Option<u32>,
    /// Origins concerned (their explained pairs fail the element), and of them rerun.
    pub origins_concerned: u32,
    pub origins_rerun: u32,
    pub estimated: bool,
}

/// An element set out of service.
#[derive(Debug, Clone, Serialize)]
pub struct OutageRow {
    pub element_kind: &'static str,
    pub element_id: String,
    pub name: String,
    /// Where it came from: `option`, or `alert ENTITY_ID`.
    pub source: String,
}

#[derive(Debug, Clone, Default, Serialize)]
pub struct StepFreeCounts {
    pub pairs: u64,
    pub step_free: u64,
    pub blocked: u64,
    pub no_journey: u64,
    /// Blocked pairs whose elements were found.
    pub explained: u64,
    /// With outages: step-free pairs lost, and made slower.
    pub lost: u64,
    pub slower: u64,
}

/// The audit, without the pairs (handed on as they come).
#[derive(Debug, Clone, Serialize, Default)]
pub struct StepFreeReport {
    pub date: String,
    pub window: String,
    /// `strict` or `lenient`.
    pub profile: &'static str,
    pub step_free_speed_mps: f64,
    pub walking_speed_mps: f64,
    pub departures: u32,
    pub counts: StepFreeCounts,
    /// Ranked: by pairs opened if fixed (those tried), then by pairs blocked.
    pub elements: Vec<ElementRow>,
    pub outages: Vec<OutageRow>,
    pub completeness: Vec<Completeness>,
    pub caution: &'static str,
}

/// An element a page offers for outages.
#[derive(Debug, Clone, Serialize)]
pub struct PickableElement {
    /// `pathway:ID` or `stop:ID`, as [`StepFreeQuery::outages`] takes it.
    pub id: String,
    /// `lift`, `ramp`, `station` or `entrance`.
    pub kind: &'static str,
    pub name: String,
    pub station: String,
    /// Where it is drawn: the stop it starts at.
    pub stop_id: String,
    pub lat: f64,
    pub lon: f64,
}

/// What an alerts file sets out of service.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct AlertOutages {
    /// `(kind:id, source)`, for [`StepFreeQuery::outages`] and [`StepFreeQuery::outage_sources`].
    pub outages: Vec<(String, String)>,
    /// What an alert named that the feeds do not hold, or did not say.
    pub skipped: Vec<String>,
}

/// The pairs to audit, grouped by origin place, each with its destination places.
type ByOrigin = Vec<(usize, Vec<u32>)>;

/// The ids of elements by feed, to map an itinerary's facts back to elements.
struct ElementIds {
    stops: HashMap<(FeedIdx, String), StopIdx>,
    pathways: HashMap<(FeedIdx, String), PathwayIdx>,
    trips: HashMap<(FeedIdx, String), RouteIdx>,
    feeds: HashMap<String, FeedIdx>,
}

impl Engine {
    fn element_ids(&self) -> ElementIds {
        let tt = &self.tt;
        ElementIds {
            stops: tt.stops.iter().enumerate().map(|(i, s)| ((s.feed, s.id.clone()), StopIdx(i as u32))).collect(),
            pathways: tt.pathways.iter().enumerate().map(|(i, p)| ((tt.stop(p.from).feed, p.id.clone()), PathwayIdx(i as u32))).collect(),
            trips: tt.trips.iter().map(|t| ((tt.routes[t.route.idx()].feed, t.id.clone()), t.route)).collect(),
            feeds: tt.feeds.iter().enumerate().map(|(i, f)| (f.name.clone(), FeedIdx(i as u32))).collect(),
        }
    }

    pub fn element_kind(&self, e: Element) -> &'static str {
        match e {
            Element::Stop(s) => match self.tt.stop(s).kind {
                StopKind::Entrance => "entrance",
                StopKind::Station => "station",
                _ => "stop",
            },
            Element::Pathway(_) => "pathway",
            Element::Route(_) => "route",
        }
    }

    pub fn element_id(&self, e: Element) -> &str {
        match e {
            Element::Stop(s) => &self.tt.stop(s).id,
            Element::Pathway(p) => &self.tt.pathways[p.idx()].id,
            Element::Route(r) => &self.tt.routes[r.idx()].id,
        }
    }

    pub fn element_name(&self, e: Element) -> String {
        let tt = &self.tt;
        match e {
            Element::Stop(s) => tt.stop(s).name.clone(),
            Element::Pathway(p) => {
                let pw = &tt.pathways[p.idx()];
                format!("{} between {} and {}", pw.mode.name(), tt.stop(pw.from).name, tt.stop(pw.to).name)
            }
            Element::Route(r) => {
                let r = &tt.routes[r.idx()];
                if r.short_name.is_empty() {
                    r.long_name.clone()
                } else {
                    r.short_name.clone()
                }
            }
        }
    }

    /// The element `text` names: a pathway, stop or route id, plain or as `pathway:ID`,
    /// `stop:ID`, `route:ID`. Unknown or ambiguous: an error that says so, with suggestions.
    pub fn resolve_element(&self, text: &str) -> Result<Element, QueryError> {
        let tt = &self.tt;
        let (kind, id) = match text.split_once(':') {
            Some((k, rest)) if matches!(k, "pathway" | "stop" | "entrance" | "station" | "route") => {
                (Some(if k == "pathway" || k == "route" { k } else { "stop" }), rest)
            }
            _ => (None, text),
        };
        let mut found: Vec<Element> = Vec::new();
        if kind.is_none_or(|k| k == "pathway") {
            found.extend(tt.pathways.iter().enumerate().filter(|(_, p)| p.id == id).map(|(i, _)| Element::Pathway(PathwayIdx(i as u32))));
        }
        if kind.is_none_or(|k| k == "stop") {
            found.extend(
                tt.stops.iter().enumerate().filter(|(_, s)| self.names_by_id(s, id)).map(|(i, _)| Element::Stop(StopIdx(i as u32))),
            );
        }
        if kind.is_none_or(|k| k == "route") {
            found.extend(tt.routes.iter().enumerate().filter(|(_, r)| r.id == id).map(|(i, _)| Element::Route(RouteIdx(i as u32))));
        }
        match found.len() {
            1 => Ok(found[0]),
            0 => {
                let all = tt
                    .pathways
                    .iter()
                    .map(|p| format!("pathway:{}", p.id))
                    .chain(tt.routes.iter().map(|r| format!("route:{}", r.id)))
                    .chain(
                        tt.stops
                            .iter()
                            .filter(|s| matches!(s.kind, StopKind::Station | StopKind::Entrance | StopKind::Platform))
                            .map(|s| format!("stop:{}", s.id)),
                    );
                let mut scored: Vec<(f64, String)> =
                    all.map(|c| (strsim::jaro_winkler(text, c.split_once(':').map_or(&c[..], |x| x.1)), c)).collect();
                scored.sort_by(|a, b| b.0.total_cmp(&a.0));
                let near: Vec<String> = scored.into_iter().take(5).map(|x| x.1).collect();
                Err(QueryError::BadOption(format!("no pathway, stop or route {text:?} (did you mean: {})", near.join(", "))))
            }
            _ => {
                let list: Vec<String> = found.iter().map(|&e| format!("{}:{}", self.element_kind_prefix(e), self.element_id(e))).collect();
                Err(QueryError::BadOption(format!("{text:?} names several elements: {}; write one of them", list.join(", "))))
            }
        }
    }

    /// The outages a GTFS-Realtime alerts file gives for `date` and `window` ("HH:MM-HH:MM"):
    /// each alert with effect `ACCESSIBILITY_ISSUE` active then, its stops mapped to the lift
    /// (`pathway_mode` 5) and ramp (walkway with a `max_slope`) pathways that touch them or, for a
    /// station, its stops (the alert's entity selector has no pathway field, so this mapping is
    /// ours); a stop without such a pathway is set out of service itself, a route as a whole.
    pub fn outages_from_alerts(&self, bytes: &[u8], date: &str, window: &str) -> Result<AlertOutages, QueryError> {
        let alerts = crate::feed::alerts::accessibility_alerts(bytes).map_err(QueryError::BadOption)?;
        let date = self.analysis_date(date)?;
        let span = self.span(date, Some(window))?;
        let tz = self.tt.feeds.first().ok_or(QueryError::NoFeed)?.timezone;
        let origin = crate::timetable::calendar::day_origin(tz, date).timestamp();
        let (from, to) = ((origin + span.start_s as i64).max(0) as u64, (origin + span.end_s as i64).max(0) as u64);
        let tt = &self.tt;
        let (mut out, mut skipped) = (Vec::new(), Vec::new());
        let push = |e: Element, source: &str, out: &mut Vec<(String, String)>| {
            let key = format!("{}:{}", self.element_kind_prefix(e), self.element_id(e));
            if !out.iter().any(|(k, _)| *k == key) {
                out.push((key, source.to_string()));
            }
        };
        for a in alerts.iter().filter(|a| a.active_during(from, to)) {
            let source = format!("alert {}", a.entity_id);
            for sid in &a.stop_ids {
                let stops: Vec<StopIdx> =
                    tt.stops.iter().enumerate().filter(|(_, s)| s.id == *sid).map(|(i, _)| StopIdx(i as u32)).collect();
                if stops.is_empty() {
                    skipped.push(format!("{source}: no stop {sid:?} in the loaded feeds"));
                    continue;
                }
                for s in stops {
                    // The stop, and the stops of its station when it is one.
                    let touched: Vec<StopIdx> = if tt.stop(s).kind == StopKind::Station {
                        (0..tt.stops.len() as u32).map(StopIdx).filter(|&c| c == s || tt.stop(c).parent == Some(s)).collect()
                    } else {
                        vec![s]
                    };
                    let lifts: Vec<PathwayIdx> = tt
                        .pathways
                        .iter()
                        .enumerate()
                        .filter(|(_, p)| {
                            let ramp = p.mode == crate::timetable::PathwayMode::Walkway && p.max_slope.is_some_and(|m| m != 0.0);
                            (p.mode == crate::timetable::PathwayMode::Elevator || ramp)
                                && (touched.contains(&p.from) || touched.contains(&p.to))
                        })
                        .map(|(i, _)| PathwayIdx(i as u32))
                        .collect();
                    if lifts.is_empty() {
                        push(Element::Stop(s), &source, &mut out);
                    }
                    for p in lifts {
                        push(Element::Pathway(p), &source, &mut out);
                    }
                }
            }
            for rid in &a.route_ids {
                let routes: Vec<usize> = tt.routes.iter().enumerate().filter(|(_, r)| r.id == *rid).map(|(i, _)| i).collect();
                if routes.is_empty() {
                    skipped.push(format!("{source}: no route {rid:?} in the loaded feeds"));
                }
                for r in routes {
                    push(Element::Route(RouteIdx(r as u32)), &source, &mut out);
                }
            }
            if a.stop_ids.is_empty() && a.route_ids.is_empty() {
                skipped.push(format!("{source}: informs no stop or route (agencies and trips are not read)"));
            }
        }
        Ok(AlertOutages { outages: out, skipped })
    }

    /// The elements a page offers for outages: lifts (`pathway_mode` 5) and ramps (walkways with
    /// a `max_slope`), then stations and entrances, each with its station's name and a position.
    pub fn accessibility_elements(&self) -> Vec<PickableElement> {
        let tt = &self.tt;
        let station = |s: StopIdx| tt.station_name(s).unwrap_or(&tt.stop(s).name).to_string();
        let mut out: Vec<PickableElement> = tt
            .pathways
            .iter()
            .enumerate()
            .filter(|(_, p)| {
                p.mode == crate::timetable::PathwayMode::Elevator
                    || (p.mode == crate::timetable::PathwayMode::Walkway && p.max_slope.is_some_and(|m| m != 0.0))
            })
            .map(|(i, p)| {
                let e = Element::Pathway(PathwayIdx(i as u32));
                let at = tt.stop(p.from);
                PickableElement {
                    id: format!("pathway:{}", p.id),
                    kind: if p.mode == crate::timetable::PathwayMode::Elevator { "lift" } else { "ramp" },
                    name: self.element_name(e),
                    station: station(p.from),
                    stop_id: at.id.clone(),
                    lat: at.lat,
                    lon: at.lon,
                }
            })
            .collect();
        for (i, s) in tt.stops.iter().enumerate().filter(|(_, s)| matches!(s.kind, StopKind::Station | StopKind::Entrance)) {
            out.push(PickableElement {
                id: format!("stop:{}", s.id),
                kind: if s.kind == StopKind::Station { "station" } else { "entrance" },
                name: s.name.clone(),
                station: station(StopIdx(i as u32)),
                stop_id: s.id.clone(),
                lat: s.lat,
                lon: s.lon,
            });
        }
        out
    }

    fn element_kind_prefix(&self, e: Element) -> &'static str {
        match e {
            Element::Stop(_) => "stop",
            Element::Pathway(_) => "pathway",
            Element::Route(_) => "route",
        }
    }

    /// Sets `o` over the feed's accessibility (or clears it with the default): the walking links
    /// are rebuilt when pathways or stops change, the date's network always.
    pub fn set_overrides(&mut self, o: Overrides) {
        if self.tt.overrides == o {
            return;
        }
        let walking =
            !(self.tt.overrides.pathways.is_empty() && self.tt.overrides.stops.is_empty() && o.pathways.is_empty() && o.stops.is_empty());
        self.tt.overrides = o;
        if walking {
            crate::timetable::walking::rebuild(&mut self.tt, &self.walk_cfg);
        }
        self.net = None;
        self.state = SearchState::new();
    }

    fn overrides_of(elements: &[Element], how: Override) -> Overrides {
        let mut o = Overrides::default();
        for &e in elements {
            match e {
                Element::Stop(s) => {
                    o.stops.insert(s, how);
                }
                Element::Pathway(p) => {
                    o.pathways.insert(p, how);
                }
                Element::Route(r) => {
                    o.routes.insert(r, how);
                }
            }
        }
        o
    }

    /// The pairs a query asks for, by origin; every bad value is reported here.
    fn audit_pairs(&self, q: &StepFreeQuery) -> Result<ByOrigin, QueryError> {
        let n = self.places.len();
        let mut map: BTreeMap<usize, Vec<u32>> = BTreeMap::new();
        if let Some(list) = &q.pair_list {
            for (k, (a, b)) in list.iter().enumerate() {
                let at = |e: QueryError| QueryError::BadOption(format!("pair {} ({a}, {b}): {e}", k + 1));
                let (a, b) = (self.resolve_place(a).map_err(at)?, self.resolve_place(b).map_err(at)?);
                if a != b {
                    map.entry(a).or_default().push(b as u32);
                }
            }
        } else {
            match q.pairs.as_deref().unwrap_or("all") {
                "all" => {
                    for a in 0..n {
                        map.insert(a, (0..n as u32).filter(|&b| b as usize != a).collect());
                    }
                }
                s => {
                    for (a, b) in sample_pairs(s, n, q.seed.unwrap_or(1), "").map_err(QueryError::BadOption)? {
                        map.entry(a).or_default().push(b as u32);
                    }
                }
            }
        }
        Ok(map
            .into_iter()
            .map(|(a, mut v)| {
                v.sort_unstable();
                v.dedup();
                (a, v)
            })
            .collect())
    }

    /// The standard and step-free window settings of a query.
    fn audit_settings(&self, q: &StepFreeQuery) -> Result<(WindowSetting, WindowSetting), QueryError> {
        let base = WindowQuery {
            date: q.date.clone(),
            window: q.window.clone(),
            step_min: q.step_min,
            percentiles: Some(vec![50.0]),
            walking_speed_mps: q.walking_speed_mps,
            ..Default::default()
        };
        let standard = self.window_setting(&base)?;
        let sf = WindowQuery {
            step_free: if q.lenient { StepFree::Lenient } else { StepFree::Strict },
            walking_speed_mps: q.step_free_speed_mps,
            ..base
        };
        Ok((standard, self.window_setting(&sf)?))
    }

    /// The step-free audit, handing each origin's pairs to `each(done, total, rows)` in origin
    /// order; `each` returning false cancels (`Ok(None)`). `threads` > 1 runs origins on native
    /// threads (the output is the same). Every bad value is reported before any work.
    pub fn stepfree_with(
        &mut self,
        q: &StepFreeQuery,
        threads: usize,
        each: &mut dyn FnMut(usize, usize, &[StepFreePairRow]) -> bool,
    ) -> Result<Option<StepFreeReport>, QueryError> {
        if self.tt.feeds.is_empty() {
            return Err(QueryError::NoFeed);
        }
        let (standard, step_free) = self.audit_settings(q)?;
        let pairs = self.audit_pairs(q)?;
        let mut outages = Vec::new();
        let mut bad = Vec::new();
        for o in &q.outages {
            match self.resolve_element(o) {
                Ok(e) => outages.push(e),
                Err(e) => bad.push(e.to_string()),
            }
        }
        if !bad.is_empty() {
            return Err(QueryError::BadOption(format!("outages: {}; nothing was run", bad.join("; "))));
        }
        let fix_top = q.fix_top.unwrap_or(DEFAULT_FIX_TOP);
        if fix_top > 50 {
            return Err(QueryError::BadOption(format!("fix-top {fix_top}: give 0 to 50 (each is a rerun)")));
        }
        let explain = q.explain_per_origin.unwrap_or(DEFAULT_EXPLAIN_PER_ORIGIN) as usize;
        let seed = q.seed.unwrap_or(1);
        self.set_overrides(Overrides::default());
        let result = self.audit_run(q, &standard, &step_free, &pairs, &outages, fix_top, explain, seed, threads, each);
        self.set_overrides(Overrides::default());
        result
    }

    #[allow(clippy::too_many_arguments)]
    fn audit_run(
        &mut self,
        q: &StepFreeQuery,
        standard: &WindowSetting,
        step_free: &WindowSetting,
        pairs: &ByOrigin,
        outages: &[Element],
        fix_top: u32,
        explain: usize,
        seed: u64,
        threads: usize,
        each: &mut dyn FnMut(usize, usize, &[StepFreePairRow]) -> bool,
    ) -> Result<Option<StepFreeReport>, QueryError> {
        let total = pairs.len();
        // Outages first: the step-free side of every pair with them, kept compact until the
        // baseline's rows are written.
        let mut with_outage: Vec<Vec<Side>> = Vec::new();
        if !outages.is_empty() {
            self.set_overrides(Self::overrides_of(outages, Override::OutOfService));
            let run = self.window_run(step_free);
            let work = |st: &mut SearchState, buf: &mut TravelTimes, i: usize| sides(run, st, buf, pairs[i].0, &pairs[i].1);
            let done = for_origins(total, threads, work, &mut |_, v| {
                with_outage.push(v);
                each(0, total, &[])
            });
            self.set_overrides(Overrides::default());
            if !done {
                return Ok(None);
            }
        }
        let strict = !q.lenient;
        let fails = move |a: Access| if strict { a != Access::Yes } else { a == Access::No };
        let mut report = StepFreeReport {
            date: q.date.clone(),
            window: q.window.clone(),
            profile: if strict { "strict" } else { "lenient" },
            step_free_speed_mps: step_free.p.walk_speed_mps,
            walking_speed_mps: standard.p.walk_speed_mps,
            departures: standard.spec.departures.len() as u32,
            caution: CAUTION,
            outages: outages
                .iter()
                .enumerate()
                .map(|(k, &e)| OutageRow {
                    element_kind: self.element_kind(e),
                    element_id: self.element_id(e).to_string(),
                    name: self.element_name(e),
                    source: q.outage_sources.get(k).cloned().unwrap_or_else(|| "option".into()),
                })
                .collect(),
            ..Default::default()
        };
        // element → (origin index, destination) of the explained blocked pairs it fails.
        let mut blocked_by: HashMap<Element, Vec<(u32, u32)>> = HashMap::new();
        let mut blocked_dests: Vec<Vec<u32>> = vec![Vec::new(); total];
        let ids = self.element_ids();
        self.window_run(standard);
        let this: &Engine = self;
        let std_run = WindowRun {
            tt: &this.tt,
            net: this.built().expect("network built"),
            places: &this.places,
            spec: &standard.spec,
            p: &standard.p,
        };
        let sf_run = WindowRun { spec: &step_free.spec, p: &step_free.p, ..std_run };
        let work = |st: &mut SearchState, buf: &mut TravelTimes, i: usize| {
            let (from, dests) = (pairs[i].0, &pairs[i].1);
            let times = origin_pairs(std_run, sf_run, st, buf, from, dests);
            // Which blocked pairs to explain: a seeded order of their own per origin, so the
            // same whatever the number of threads.
            let mut x = seed ^ (from as u64).wrapping_mul(0x2545_F491_4F6C_DD1D);
            let mut keyed: Vec<(u64, usize)> =
                (0..times.len()).filter(|&k| times[k].status() == PairStatus::Blocked).map(|k| (splitmix(&mut x), k)).collect();
            keyed.sort_unstable();
            let mut explained: Vec<(usize, Vec<Element>)> = Vec::new();
            for &(_, k) in keyed.iter().take(explain) {
                let p = &times[k];
                let Some(first) = p.standard.first else { continue };
                let ends =
                    Endpoints { origins: this.places.endpoints(from).to_vec(), targets: this.places.endpoints(p.to as usize).to_vec() };
                let depart_s = std_run.spec.departures[first as usize];
                let Some(j) = options::earliest(Query::new(std_run.tt, std_run.net, &ends, depart_s, std_run.p), st) else { continue };
                let b = Builder {
                    tt: std_run.tt,
                    net: std_run.net,
                    params: std_run.p,
                    ends: &ends,
                    walk_cfg: &this.walk_cfg,
                    query_s: depart_s,
                };
                explained.push((k, journey_elements(&b.build(&j), &ids, &fails)));
            }
            // Pairs the outages cost: which of the elements out of service their step-free
            // journey used.
            let mut lost: Vec<(usize, Vec<Element>)> = Vec::new();
            if let Some(o) = with_outage.get(i) {
                for (k, p) in times.iter().enumerate() {
                    if outage_effect(p, &o[k]) != OutageEffect::Lost {
                        continue;
                    }
                    let Some(first) = p.step_free.first else { continue };
                    let ends =
                        Endpoints { origins: this.places.endpoints(from).to_vec(), targets: this.places.endpoints(p.to as usize).to_vec() };
                    let depart_s = sf_run.spec.departures[first as usize];
                    let Some(j) = options::earliest(Query::new(sf_run.tt, sf_run.net, &ends, depart_s, sf_run.p), st) else { continue };
                    let b = Builder {
                        tt: sf_run.tt,
                        net: sf_run.net,
                        params: sf_run.p,
                        ends: &ends,
                        walk_cfg: &this.walk_cfg,
                        query_s: depart_s,
                    };
                    let used = journey_elements(&b.build(&j), &ids, &|_| true);
                    lost.push((k, used.into_iter().filter(|e| outages.contains(e) || covers(this, outages, *e)).collect()));
                }
            }
            (times, explained, lost)
        };
        let counts = &mut report.counts;
        let mut rows: Vec<StepFreePairRow> = Vec::new();
        type Explained = Vec<(usize, Vec<Element>)>;
        let done = for_origins(total, threads, work, &mut |i, (times, explained, lost): (Vec<PairTimes>, Explained, Explained)| {
            let from = pairs[i].0;
            let mut blocking: Vec<Vec<String>> = vec![Vec::new(); times.len()];
            for (k, els) in &explained {
                counts.explained += 1;
                for &e in els {
                    blocked_by.entry(e).or_default().push((i as u32, times[*k].to));
                }
                blocking[*k] = els.iter().map(|&e| format!("{}:{}", this.element_kind(e), this.element_id(e))).collect();
            }
            let mut outage_blocking: Vec<Vec<String>> = vec![Vec::new(); times.len()];
            for (k, els) in &lost {
                outage_blocking[*k] = els.iter().map(|&e| format!("{}:{}", this.element_kind(e), this.element_id(e))).collect();
            }
            rows.clear();
            for (k, p) in times.iter().enumerate() {
                let status = p.status();
                counts.pairs += 1;
                match status {
                    PairStatus::StepFree => counts.step_free += 1,
                    PairStatus::Blocked => {
                        counts.blocked += 1;
                        blocked_dests[i].push(p.to);
                    }
                    PairStatus::NoJourney => counts.no_journey += 1,
                }
                let (outage_p50, outage_status) = match with_outage.get(i).map(|v| v[k]) {
                    None => (None, None),
                    Some(o) => {
                        let effect = outage_effect(p, &o);
                        counts.lost += (effect == OutageEffect::Lost) as u64;
                        counts.slower += (effect == OutageEffect::Slower) as u64;
                        (o.p50_s, Some(effect))
                    }
                };
                rows.push(StepFreePairRow {
                    from_stop_id: this.place_id(from).to_string(),
                    to_stop_id: this.place_id(p.to as usize).to_string(),
                    standard_p50_s: p.standard.p50_s,
                    stepfree_p50_s: p.step_free.p50_s,
                    extra_p50_s: p.extra_p50_s(),
                    status,
                    blocking: std::mem::take(&mut blocking[k]),
                    outage_stepfree_p50_s: outage_p50,
                    outage_status,
                    outage_blocking: std::mem::take(&mut outage_blocking[k]),
                    standard_reached: p.standard.reached,
                    stepfree_reached: p.step_free.reached,
                });
            }
            each(i + 1, total, &rows)
        });
        if !done {
            return Ok(None);
        }
        // The ranking: elements by explained pairs blocked; the first `fix_top` rerun as fixed.
        let mut ranked: Vec<(Element, Vec<(u32, u32)>)> = blocked_by.into_iter().collect();
        ranked.sort_by(|a, b| b.1.len().cmp(&a.1.len()).then(a.0.cmp(&b.0)));
        let mut opened: HashMap<Element, (u32, u32, u32)> = HashMap::new();
        let cap = q.fix_origins.unwrap_or(DEFAULT_FIX_ORIGINS) as usize;
        for (e, on) in ranked.iter().take(fix_top as usize) {
            // The blocked pairs of the origins whose explained pairs it fails (a seeded sample
            // of them when there are more than the cap).
            let mut origins: Vec<u32> = on.iter().map(|x| x.0).collect();
            origins.sort_unstable();
            origins.dedup();
            let concerned = origins.len();
            if cap > 0 && concerned > cap {
                let mut x = seed ^ 0x5851_F42D_4C95_7F2D;
                let mut keyed: Vec<(u64, u32)> = origins.iter().map(|&o| (splitmix(&mut x), o)).collect();
                keyed.sort_unstable();
                origins = keyed.into_iter().take(cap).map(|k| k.1).collect();
                origins.sort_unstable();
            }
            let sub: ByOrigin = origins.iter().map(|&i| (pairs[i as usize].0, blocked_dests[i as usize].clone())).collect();
            self.set_overrides(Self::overrides_of(&[*e], Override::AssumedAccessible));
            let run = self.window_run(step_free);
            let work = |st: &mut SearchState, buf: &mut TravelTimes, i: usize| sides(run, st, buf, sub[i].0, &sub[i].1);
            let mut n = 0u32;
            let done = for_origins(sub.len(), threads, work, &mut |_, v: Vec<Side>| {
                n += v.iter().filter(|s| s.reached > 0).count() as u32;
                each(total, total, &[])
            });
            if !done {
                self.set_overrides(Overrides::default());
                return Ok(None);
            }
            let scaled = (n as f64 * concerned as f64 / origins.len().max(1) as f64).round() as u32;
            opened.insert(*e, (scaled, concerned as u32, origins.len() as u32));
        }
        self.set_overrides(Overrides::default());
        report.elements = ranked
            .iter()
            .map(|(e, on)| ElementRow {
                element_kind: self.element_kind(*e),
                element_id: self.element_id(*e).to_string(),
                name: self.element_name(*e),
                pairs_blocked: on.len() as u32,
                pairs_unblocked_if_fixed: opened.get(e).map(|x| x.0),
                origins_concerned: {
                    let mut o: Vec<u32> = on.iter().map(|x| x.0).collect();
                    o.sort_unstable();
                    o.dedup();
                    o.len() as u32
                },
                origins_rerun: opened.get(e).map_or(0, |x| x.2),
                estimated: opened.get(e).is_some_and(|x| x.2 < x.1),
            })
            .collect();
        report.elements.sort_by(|a, b| {
            b.pairs_unblocked_if_fixed
                .unwrap_or(0)
                .cmp(&a.pairs_unblocked_if_fixed.unwrap_or(0))
                .then(b.pairs_blocked.cmp(&a.pairs_blocked))
        });
        report.completeness = completeness(&self.tt);
        Ok(Some(report))
    }
}

/// Whether an outage on a station or a route covers element `e` (a stop of that station, a
/// route's own element).
fn covers(e: &Engine, outages: &[Element], x: Element) -> bool {
    match x {
        Element::Stop(s) => e.tt.stop(s).parent.is_some_and(|p| outages.contains(&Element::Stop(p))),
        _ => false,
    }
}

/// What the outages did to a pair: `o` is its step-free side with them.
fn outage_effect(p: &PairTimes, o: &Side) -> OutageEffect {
    if p.status() != PairStatus::StepFree {
        OutageEffect::NotStepFree
    } else if o.reached == 0 {
        OutageEffect::Lost
    } else if o.reached < p.step_free.reached
        || o.p50_s.zip(p.step_free.p50_s).is_some_and(|(a, b)| a > b)
        || (o.p50_s.is_none() && p.step_free.p50_s.is_some())
    {
        OutageEffect::Slower
    } else {
        OutageEffect::Unchanged
    }
}

/// Runs `work(state, buffer, i)` for `i` in `0..n`, on native threads where there are, and hands
/// the results to `sink` in order; false when `sink` stopped it.
fn for_origins<T: Send>(
    n: usize,
    threads: usize,
    work: impl Fn(&mut SearchState, &mut TravelTimes, usize) -> T + Sync,
    sink: &mut dyn FnMut(usize, T) -> bool,
) -> bool {
    #[cfg(not(target_arch = "wasm32"))]
    {
        let cancel = std::sync::atomic::AtomicBool::new(false);
        let ended = crate::analysis::matrix::run_each(n, threads, &cancel, work, |i, out| if sink(i, out) { Ok(()) } else { Err(()) });
        ended == Ok(crate::analysis::matrix::Ended::Done)
    }
    #[cfg(target_arch = "wasm32")]
    {
        let _ = threads;
        let mut st = SearchState::new();
        let mut buf = TravelTimes::default();
        (0..n).all(|i| sink(i, work(&mut st, &mut buf, i)))
    }
}

/// The elements of an itinerary that fail the step-free check (`fails`), without repeats: a
/// trip counts against its route, an entrance or a stop against itself, a pathway against itself.
fn journey_elements(it: &Itinerary, ids: &ElementIds, fails: &dyn Fn(Access) -> bool) -> Vec<Element> {
    let mut out: Vec<Element> = Vec::new();
    for leg in &it.legs {
        let feed = ids.feeds.get(&leg.start.feed).copied().unwrap_or(FeedIdx(0));
        for c in leg.step_free.checks.iter().filter(|c| fails(c.verdict)) {
            let e = match &c.fact {
                Fact::Trip { trip_id, .. } => ids.trips.get(&(feed, trip_id.clone())).map(|&r| Element::Route(r)),
                Fact::Stop { stop_id, .. } => ids.stops.get(&(feed, stop_id.clone())).map(|&s| Element::Stop(s)),
                Fact::Pathway { pathway_id, .. } => ids.pathways.get(&(feed, pathway_id.clone())).map(|&p| Element::Pathway(p)),
                Fact::Street => None,
            };
            if let Some(e) = e {
                if !out.contains(&e) {
                    out.push(e);
                }
            }
        }
    }
    out
}

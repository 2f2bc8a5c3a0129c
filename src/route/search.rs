//! Dijkstra on the time-expanded graph, on generalised cost.
//!
//! Cost at a node = its time + a penalty for each boarding + extra weight on walking. Since every
//! node has a fixed time, minimising cost node by node is exact (unlike label-per-stop
//! time-dependent search with penalties). Every boarding is charged; the first one's penalty is
//! taken off the reported cost, which ranks journeys the same way as "penalty per boarding after
//! the first" among journeys that ride at all; a walk-only journey is compared separately.
//!
//! Point-to-point searches are goal-directed (A*): a node's key is its cost plus a lower bound on
//! the cost still to go (time from [`crate::route::bounds`]: exact on the stop graph near the query,
//! landmarks elsewhere; penalties from [`crate::route::boardings`]), and once the sink has a
//! label nothing with a greater key is pushed. The bound is consistent, so settled nodes keep
//! their exact Dijkstra costs. One-to-all searches run undirected.
//!
//! This file is the search itself: its reusable state, the query context and the loop. The
//! journeys a caller asks for (the best, the next options, the fewest-rides set) are made from
//! its runs in [`super::options`]; the edges it relaxes, listed for oracle tests, are in
//! [`super::edges`].
//!
//! **Invariant:** a search allocates only when the graph grew since the previous one, or on the
//! first search with a new walking setting (its prepared links and tables); buffers are reused
//! and reset by generation stamps.

pub use crate::graph::Node;
use crate::graph::{Network, NodeIds, HAS_RULES, LAST_OF_TRIP};
use crate::route::boardings::Boardings;
use crate::route::bounds::{Active, Anchor, Landmarks, Prepared, Tentative, WalkLinks, EXACT_ACTIVE, UNREACHABLE};
use crate::route::edges::{event_ok, rule_boardings};
use crate::route::profile::{self, ProfileBuffers, ProfileQuery};
use crate::route::query::prefetch;
pub use crate::route::query::{weighted_walk_s, Endpoints, Journey, Params, Query, StepFree, WalkKey};
use crate::route::radix_heap::RadixHeap;
use crate::route::sweep::{self, SweepBuffers};
use crate::timetable::{StopIdx, Timetable, NO_DROP_OFF, NO_PICKUP};

/// Reusable buffers for searches on one network.
#[derive(Debug, Default)]
pub struct SearchState {
    /// Per node: (generation stamp, cost, predecessor), together so a relaxation touches one
    /// cache line.
    labels: Vec<Label>,
    generation: u32,
    heap: RadixHeap,
    /// What this search knows of each stop, in one record so a touch costs one cache miss.
    marks: Vec<StopMark>,
    /// Per stop, apart from `marks` so the many entries that turn out dominated read a small
    /// array that stays in cache.
    entries: Vec<Entry>,
    stop_arrival: Vec<u32>,
    prune: bool,
    /// The node id layout of the network searched last.
    ids: NodeIds,
    layers: u32,
    /// Cost of the best sink label so far: nodes whose key exceeds it are not pushed.
    best: u32,
    /// Walking links and landmark tables per walking setting, most recently used last.
    prepared: Vec<Prepared>,
    /// Per stop: (bound generation, bound to the target). The bounds depend only on the target,
    /// the landmarks chosen and the walking setting, so successive searches for the same pair
    /// (the next options) reuse them.
    bounds: Vec<(u32, u32)>,
    bound_gen: u32,
    /// What the kept bounds are for: walking setting, targets then origins, landmarks.
    bound_for: Option<(WalkKey, Vec<StopIdx>, Active)>,
    /// The backward A* of the kept bounds (`Landmarks::exact_near`): its per-stop state, stamped
    /// with the bound generation, and its last key `K`; a stop it did not settle is bounded by
    /// `max(K − π(s), landmark bound)`.
    exact: Vec<Tentative>,
    exact_key: u32,
    /// The targets and the origins with their landmark distances (`Landmarks::anchor`).
    target_anchors: Vec<Anchor>,
    origin_anchors: Vec<Anchor>,
    /// Boardings bounds for the targets of the kept bounds.
    boardings: Boardings,
    /// The entries of one change, found before they are relaxed (`Ctx::change`).
    entering: Vec<Entering>,
    /// Buffers of the one-to-all sweep.
    sweep: SweepBuffers,
    /// Buffers of the profile search over a window.
    profile: ProfileBuffers,
    pub settled: u64,
}

/// Walking settings whose prepared data are kept (each holds the links and, once used for a
/// point-to-point search, 128 bytes of landmark distances per stop).
const PREPARED_KEPT: usize = 4;

/// Per stop and search. A record whose `stamp` is not the search's generation is read as fresh:
/// bound not computed, no entry, no alighting, not a target.
#[derive(Debug, Clone, Copy, Default)]
#[repr(C, align(32))]
struct StopMark {
    stamp: u32,
    /// Lower bound on the cost from a ride node here to the sink.
    h: u32,
    /// The same for alightings (arrival time, cost − time).
    alight_t: u32,
    alight_off: u32,
    /// Where the last departure search at this stop ended: the next one gallops from there, as
    /// a search asks about nearby times at a stop again and again.
    last_pos: u32,
    /// Cost of going on to the sink from an alighting here: 0 at a target, the cheapest walking
    /// link's cost beside one, `u32::MAX` elsewhere.
    sink_walk: u32,
}

/// The best-known waiting-chain entry of a stop in the search of generation `stamp`: requested
/// time `t` and offset `off` (cost − time). A later entry no earlier and no cheaper in offset is
/// dominated and skipped.
#[derive(Debug, Clone, Copy, Default)]
struct Entry {
    stamp: u32,
    t: u32,
    off: u32,
}

#[derive(Debug, Clone, Copy, Default)]
struct Label {
    stamp: u32,
    cost: u32,
    pred: u32,
}

pub const NO_PRED: u32 = u32::MAX;
/// Heap items with this bit set stand for the deferred changes after an alighting from the ride
/// node in the other bits (node ids stay below 2³¹).
const DEFERRED: u32 = 1 << 31;
/// Predecessor of nodes reached straight from the origin.
pub const FROM_ORIGIN: u32 = u32::MAX - 1;

impl SearchState {
    pub fn new() -> Self {
        SearchState::default()
    }

    fn reset(&mut self, net: &Network, stops: usize, layers: u32) {
        self.ids = NodeIds::of(net);
        self.layers = layers;
        let total = (self.ids.per_layer() * layers) as usize;
        if self.labels.len() < total {
            self.labels.resize(total, Label { stamp: 0, cost: u32::MAX, pred: NO_PRED });
        }
        if self.marks.len() < stops {
            self.marks.resize(stops, StopMark::default());
            self.entries.resize(stops, Entry::default());
            self.bounds.resize(stops, (0, 0));
            self.stop_arrival.resize(stops, u32::MAX);
        }
        // Domination between labels holds only within one layer.
        self.prune = layers == 1;
        self.generation = self.generation.wrapping_add(1);
        if self.generation == 0 {
            self.labels.iter_mut().for_each(|l| l.stamp = 0);
            self.marks.iter_mut().for_each(|m| m.stamp = 0);
            self.entries.iter_mut().for_each(|m| m.stamp = 0);
            self.generation = 1;
        }
        self.heap.clear();
        self.settled = 0;
        self.best = u32::MAX;
    }

    /// The prepared data for `key`, built when missing (links always; landmarks when `goal`).
    /// The caller hands it back with [`SearchState::give_back`].
    pub(crate) fn take_prepared(&mut self, tt: &Timetable, net: &Network, key: WalkKey, goal: bool) -> Prepared {
        let mut prep = match self.prepared.iter().position(|p| p.key == key) {
            Some(i) => self.prepared.remove(i),
            None => Prepared { key, walk: WalkLinks::build(tt, &key), landmarks: None },
        };
        if goal && prep.landmarks.is_none() {
            prep.landmarks = Some(Landmarks::build(tt, net, &prep.walk));
        }
        prep
    }
    pub(crate) fn give_back(&mut self, prep: Prepared) {
        if self.prepared.len() >= PREPARED_KEPT {
            self.prepared.remove(0);
        }
        self.prepared.push(prep);
    }

    /// Starts a new bound generation unless the bounds kept are for the same targets, origins,
    /// landmarks and walking setting.
    /// True when it did.
    fn use_bounds_for(&mut self, key: WalkKey, ends: &Endpoints, act: Active) -> bool {
        let same = |t: &[StopIdx]| {
            t.len() == ends.targets.len() + ends.origins.len() && t.starts_with(&ends.targets) && t.ends_with(&ends.origins)
        };
        if self.bound_for.as_ref().is_some_and(|(k, t, a)| *k == key && same(t) && *a == act) {
            return false;
        }
        self.bound_gen = self.bound_gen.wrapping_add(1);
        if self.bound_gen == 0 {
            self.bounds.iter_mut().for_each(|b| b.0 = 0);
            self.exact.iter_mut().for_each(|b| b.stamp = 0);
            self.bound_gen = 1;
        }
        match &mut self.bound_for {
            Some((k, t, a)) => {
                (*k, *a) = (key, act);
                t.clear();
                t.extend_from_slice(&ends.targets);
                t.extend_from_slice(&ends.origins);
            }
            None => self.bound_for = Some((key, [&ends.targets[..], &ends.origins[..]].concat(), act)),
        }
        true
    }

    /// Cost of a node in the last search, `None` when it was not reached.
    #[inline]
    pub fn cost_of(&self, node: u32) -> Option<u32> {
        self.labels.get(node as usize).filter(|l| l.stamp == self.generation).map(|l| l.cost)
    }
    pub fn pred_of(&self, node: u32) -> u32 {
        if self.cost_of(node).is_some() {
            self.labels[node as usize].pred
        } else {
            NO_PRED
        }
    }
    pub fn sink(&self, layer: u32) -> u32 {
        self.ids.sink(layer)
    }
    /// Earliest arrival per stop after a one-to-all search (sweep or `run_all`).
    pub fn stop_arrivals(&self) -> &[u32] {
        &self.stop_arrival
    }

    /// Lowers `node` to `cost` when that is better; `h` is its bound to the target (its A* key is
    /// `cost + h`), and a key above the best sink found so far is not worth pushing.
    #[inline]
    fn relax(&mut self, node: u32, cost: u32, h: u32, pred: u32) {
        if h == UNREACHABLE {
            return;
        }
        let key = cost + h;
        if key > self.best {
            return;
        }
        let l = &mut self.labels[node as usize];
        if l.stamp != self.generation || cost < l.cost {
            *l = Label { stamp: self.generation, cost, pred };
            self.heap.push(key, node);
        }
    }
    /// Relaxes a sink (bound 0); with `prune`, its cost then bounds every key worth pushing.
    #[inline]
    fn relax_sink(&mut self, sink: u32, cost: u32, pred: u32, prune: bool) {
        self.relax(sink, cost, 0, pred);
        if prune && cost < self.best {
            self.best = cost;
        }
    }
}

/// What a run of the search looks for.
#[derive(Clone, Copy, PartialEq, Eq)]
pub(super) enum Goal {
    /// Stop at the first settled sink.
    Target,
    /// Settle everything within the time limit.
    All,
}

/// The layer of `node` and what it stands for ([`NodeIds::decode`] on `net`'s layout).
pub fn decode(net: &Network, node: u32) -> (u32, Node) {
    NodeIds::of(net).decode(node)
}

/// Time of a graph node on the network's timeline.
pub fn node_time(net: &Network, node: u32) -> Option<u32> {
    match decode(net, node).1 {
        Node::Wait(p) => Some(net.dep(net.by_stop[p as usize] as usize)),
        Node::Ride(e) => Some(net.dep(e as usize)),
        Node::Sink => None,
    }
}

/// One search's fixed inputs and what follows from them, read by every step: the query context.
struct Ctx<'a> {
    tt: &'a Timetable,
    net: &'a Network,
    ends: &'a Endpoints,
    p: &'a Params,
    /// Walking links at the query's walking setting.
    walk: &'a WalkLinks,
    ids: NodeIds,
    depart_s: u32,
    /// Layers of the graph searched (1, or one per number of rides for the fewest-rides set).
    layers: u32,
    mask: u8,
    horizon: u32,
    goal: Goal,
    /// Landmark tables, and the landmarks chosen for this query, when it is goal-directed.
    landmarks: Option<(&'a Landmarks, Active)>,
}

/// One run of the search: the query, how many layers, and what it looks for.
#[derive(Clone, Copy)]
pub(super) struct Run<'a> {
    pub q: Query<'a>,
    pub layers: u32,
    pub goal: Goal,
}

impl<'a> Ctx<'a> {
    fn new(run: Run<'a>, walk: &'a WalkLinks, landmarks: Option<(&'a Landmarks, Active)>) -> Self {
        let (q, layers, goal) = (run.q, run.layers, run.goal);
        Ctx {
            tt: q.tt,
            net: q.net,
            ends: q.ends,
            p: q.p,
            walk,
            ids: NodeIds::of(q.net),
            depart_s: q.depart_s,
            layers,
            mask: q.p.step_free.event_mask(),
            horizon: q.depart_s.saturating_add(q.p.max_duration_s),
            goal,
            landmarks,
        }
    }

    /// The record of stop `s` in this search, made fresh (with its bound) on first touch.
    #[inline]
    fn mark<'s>(&self, st: &'s mut SearchState, s: StopIdx) -> &'s mut StopMark {
        if st.marks[s.idx()].stamp != st.generation {
            self.fresh_mark(st, s);
        }
        &mut st.marks[s.idx()]
    }
    /// The first touch of stop `s` in this search: its bound, from those kept or made now.
    #[inline(never)]
    fn fresh_mark(&self, st: &mut SearchState, s: StopIdx) {
        let h = match self.landmarks {
            None => 0,
            Some((lm, _)) => {
                let b = &mut st.bounds[s.idx()];
                if b.0 != st.bound_gen {
                    let alt = st.target_anchors.iter().map(|a| lm.bound_to(a, s)).min().unwrap_or(0);
                    // A stop the backward A* touched carries its bound from the origins.
                    let kept = st.exact.get(s.idx()).filter(|x| x.stamp == st.bound_gen).map(|x| x.potential);
                    let from_origin = kept.unwrap_or_else(|| bound_from(lm, &st.origin_anchors, s));
                    let far = if st.exact_key == UNREACHABLE { UNREACHABLE } else { st.exact_key.saturating_sub(from_origin) };
                    *b = (st.bound_gen, alt.max(far));
                }
                b.1
            }
        };
        let m = &mut st.marks[s.idx()];
        // The departure hint stays: it is only a hint, checked on use.
        *m = StopMark { stamp: st.generation, h, alight_t: u32::MAX, alight_off: u32::MAX, last_pos: m.last_pos, sink_walk: u32::MAX };
    }
    /// Landmark bound on the cost from stop `s` to the sink, penalties left out (0 when not
    /// goal-directed).
    #[inline]
    fn h_stop(&self, st: &mut SearchState, s: StopIdx) -> u32 {
        self.mark(st, s).h
    }
    /// `h` plus the penalties of `boardings` more boardings (none when not goal-directed).
    #[inline]
    fn with_boardings(&self, h: u32, boardings: u8) -> u32 {
        if h == UNREACHABLE || self.landmarks.is_none() {
            h
        } else {
            h + self.p.transfer_penalty_s * boardings as u32
        }
    }
    /// Lower bound on the cost from waiting node at `s` with landmark bound `h` to the sink.
    #[inline]
    fn h_wait(&self, st: &SearchState, s: StopIdx, h: u32) -> u32 {
        self.with_boardings(h, st.boardings.wait.get(s.idx()).copied().unwrap_or(1))
    }
    /// Lower bound on the cost from ride node `R(e)` to the sink.
    #[inline]
    fn h_ride(&self, st: &mut SearchState, e: usize) -> u32 {
        let h = self.h_stop(st, self.net.stop(e));
        if self.landmarks.is_none() || h == UNREACHABLE {
            return h;
        }
        self.with_boardings(h, st.boardings.ride(self.net, e))
    }
    #[inline]
    fn event_ok(&self, e: usize) -> bool {
        event_ok(self.net, self.mask, e)
    }

    /// Enters the waiting chain of `s` at the first departure at or after `t`.
    #[inline]
    fn enter(&self, st: &mut SearchState, layer: u32, s: StopIdx, t: u32, cost: u32, pred: u32) {
        if let Some(x) = self.entry(st, layer, s, t, cost, pred) {
            st.relax(x.node, x.cost, x.h, x.pred);
        }
    }

    /// What [`Ctx::enter`] would relax, found without touching the node's label (a random read
    /// into the largest array, whose miss the caller overlaps with other work): `None` when the
    /// entry is dominated, bounded out or has no departure in time.
    #[inline]
    fn entry(&self, st: &mut SearchState, layer: u32, s: StopIdx, t: u32, cost: u32, pred: u32) -> Option<Entering> {
        // Entering at time t with cost c gives every later waiting node the cost
        // c − t + its time, so an earlier entry (time ≤ t) at no greater offset c − t dominates
        // this one and nothing would change: skip it before searching the departures. An entry
        // recorded here and then cut by the bound below is safe to keep: whatever it dominates
        // is cut by the same bound, which only tightens.
        if st.prune {
            let off = cost - t;
            let gen = st.generation;
            let en = &mut st.entries[s.idx()];
            if en.stamp != gen {
                *en = Entry { stamp: gen, t: u32::MAX, off: u32::MAX };
            }
            if en.t <= t && en.off <= off {
                return None;
            }
            if t <= en.t && off <= en.off {
                (en.t, en.off) = (t, off);
            }
        }
        let h1 = self.h_stop(st, s);
        let h = self.h_wait(st, s, h1);
        if h == UNREACHABLE || cost + h > st.best {
            return None;
        }
        let m = self.mark(st, s);
        let p = self.net.first_departure_near(s, t, m.last_pos)?;
        m.last_pos = p;
        let dep = self.net.by_stop_dep[p as usize];
        if dep > self.horizon {
            return None;
        }
        let node = self.ids.wait(layer, p);
        if let Some(l) = st.labels.get(node as usize) {
            prefetch(l);
        }
        Some(Entering { node, cost: cost + (dep - t), h, pred })
    }

    /// False when an earlier alighting at `s` (no later, at no greater offset) already did
    /// everything this one would.
    #[inline]
    fn alight_useful(&self, st: &mut SearchState, s: StopIdx, ta: u32, at: u32) -> bool {
        if !st.prune {
            return true;
        }
        let off = at - ta;
        let m = self.mark(st, s);
        if m.alight_t <= ta && m.alight_off <= off {
            return false;
        }
        if ta <= m.alight_t && off <= m.alight_off {
            (m.alight_t, m.alight_off) = (ta, off);
        }
        true
    }

    /// The changes after alighting at event `e2` at cost `at` from ride node `node`: into the
    /// stop's own waiting chain (unless a trip-specific rule governs it) and along each walking
    /// link (sorted by cost, so the first one that cannot beat the best journey ends the loop).
    #[inline]
    fn change(&self, st: &mut SearchState, layer: u32, node: u32, e2: usize, at: u32, rules: bool) {
        let tt = self.tt;
        let (v, ta) = (self.net.stop(e2), self.net.arr(e2));
        // Entries are found first and relaxed after, so the label misses of all of them overlap.
        let mut entering = std::mem::take(&mut st.entering);
        entering.clear();
        if !rules {
            if let Some(mt) = tt.stop_transfer_s(v, self.p.transfer_s()) {
                entering.extend(self.entry(st, layer, v, ta + mt, at + mt, node));
            }
        }
        // Each link's entry has a key of at least `at + h(v)` plus the penalties of the boardings
        // still needed from its end (the landmark bound is consistent along the link): links
        // whose end needs too many are passed over without touching that stop's record.
        let hv = self.h_stop(st, v);
        let floor = if self.landmarks.is_some() && hv != UNREACHABLE { Some(at + hv) } else { None };
        let links = self.walk.from(v);
        for (i, f) in links.iter().enumerate() {
            let wc = at + f.cost_s;
            if wc > st.best {
                break;
            }
            if let Some(floor) = floor {
                if self.with_boardings(floor, st.boardings.wait[f.to.idx()]) > st.best {
                    continue;
                }
            }
            if let Some(ahead) = links.get(i + PREFETCH_AHEAD) {
                prefetch(&st.entries[ahead.to.idx()]);
            }
            self.record_arrival(st, f.to, ta + f.walk_s);
            entering.extend(self.entry(st, layer, f.to, ta + f.walk_s, wc, node));
        }
        for x in &entering {
            st.relax(x.node, x.cost, x.h, x.pred);
        }
        st.entering = entering;
    }

    fn sink_walk(&self, st: &mut SearchState, s: StopIdx) -> u32 {
        self.mark(st, s).sink_walk
    }

    fn record_arrival(&self, st: &mut SearchState, s: StopIdx, t: u32) {
        if self.goal == Goal::All && t < st.stop_arrival[s.idx()] {
            st.stop_arrival[s.idx()] = t;
        }
    }
}

/// A waiting node about to be relaxed from an entry into its stop's chain.
#[derive(Debug, Clone, Copy)]
struct Entering {
    node: u32,
    cost: u32,
    h: u32,
    pred: u32,
}

/// How many walking links ahead `change` asks for the stop records it will read.
const PREFETCH_AHEAD: usize = 4;

pub(super) fn run(run: Run, st: &mut SearchState) {
    let q = run.q;
    st.reset(q.net, q.tt.stops.len(), run.layers);
    let directed = run.goal == Goal::Target && !q.ends.targets.is_empty();
    let prep = st.take_prepared(q.tt, q.net, q.p.walk_key(q.net), directed);
    let landmarks = if run.goal == Goal::Target { goal_bounds(q.tt, q.net, st, &prep, q.ends) } else { None };
    search_loop(&Ctx::new(run, &prep.walk, landmarks), st);
    st.give_back(prep);
}

/// Makes ready the bounds of a goal-directed search from `ends` (kept from the previous search
/// when it had the same ends, landmarks and walking setting), and returns its landmarks; `None`
/// when it cannot be goal-directed.
fn goal_bounds<'a>(
    tt: &Timetable,
    net: &Network,
    st: &mut SearchState,
    prep: &'a Prepared,
    ends: &Endpoints,
) -> Option<(&'a Landmarks, Active)> {
    let (Some(lm), Some(&o), Some(&t)) = (prep.landmarks.as_ref(), ends.origins.first(), ends.targets.first()) else { return None };
    let act = lm.select(o, t);
    st.target_anchors.clear();
    st.target_anchors.extend(ends.targets.iter().map(|&t| lm.anchor(&act, t)));
    st.origin_anchors.clear();
    st.origin_anchors.extend(ends.origins.iter().map(|&o| lm.anchor(&act.first(EXACT_ACTIVE), o)));
    if st.use_bounds_for(prep.key, ends, act) {
        st.boardings.compute(net.patterns(), &prep.walk, tt.stops.len(), &ends.targets);
        if st.exact.len() < tt.stops.len() {
            st.exact.resize(tt.stops.len(), Tentative::default());
        }
        let (bounds, gen) = (&mut st.bounds, st.bound_gen);
        let anchors = &st.origin_anchors;
        let from_origins = |s: usize| bound_from(lm, anchors, StopIdx(s as u32));
        st.exact_key = lm.exact_near(ends, &mut st.heap, (&mut st.exact, gen), from_origins, |s, d| bounds[s] = (gen, d));
        st.heap.clear();
    }
    Some((lm, act))
}

/// Lower bound on the cost from the nearest origin to `s` (0 with no origin).
#[inline]
fn bound_from(lm: &Landmarks, origins: &[Anchor], s: StopIdx) -> u32 {
    origins.iter().map(|a| lm.bound_from(a, s)).min().unwrap_or(0)
}

/// The lower bound on the cost from every node to the sink that a point-to-point search from
/// `ends` keys its nodes by, node by node (for oracle tests); `UNREACHABLE` where the search
/// knows the sink cannot be reached.
pub fn node_bounds(q: Query, st: &mut SearchState) -> Vec<u32> {
    let Query { tt, net, ends, p, .. } = q;
    st.reset(net, tt.stops.len(), 1);
    let prep = st.take_prepared(tt, net, p.walk_key(net), true);
    let landmarks = goal_bounds(tt, net, st, &prep, ends);
    let cx = Ctx::new(Run { q, layers: 1, goal: Goal::Target }, &prep.walk, landmarks);
    let out = (0..cx.ids.per_layer())
        .map(|node| match decode(net, node).1 {
            Node::Wait(q) => {
                let s = net.stop(net.by_stop[q as usize] as usize);
                let h = cx.h_stop(st, s);
                cx.h_wait(st, s, h)
            }
            Node::Ride(e) => cx.h_ride(st, e as usize),
            Node::Sink => 0,
        })
        .collect();
    st.give_back(prep);
    out
}

fn search_loop(cx: &Ctx, st: &mut SearchState) {
    let (net, walk, ids, layers, goal) = (cx.net, cx.walk, cx.ids, cx.layers, cx.goal);
    let (ends, depart_s, p) = (cx.ends, cx.depart_s, cx.p);
    // With one layer, the first sink label bounds every useful key; with several, each layer's
    // sink is wanted on its own.
    let prune_by_sink = layers == 1 && goal == Goal::Target;
    for &t in &ends.targets {
        cx.mark(st, t).sink_walk = 0;
        for l in walk.ending_at(t) {
            let m = cx.mark(st, l.from);
            m.sink_walk = m.sink_walk.min(l.cost_s);
        }
    }
    if goal == Goal::All {
        st.stop_arrival.iter_mut().for_each(|a| *a = u32::MAX);
    }
    for &o in &ends.origins {
        cx.record_arrival(st, o, depart_s);
        cx.enter(st, 0, o, depart_s, depart_s, FROM_ORIGIN);
        for f in walk.from(o) {
            cx.record_arrival(st, f.to, depart_s + f.walk_s);
            cx.enter(st, 0, f.to, depart_s + f.walk_s, depart_s + f.cost_s, FROM_ORIGIN);
        }
    }
    let defer = cx.landmarks.is_some() && layers == 1;
    let mut sinks_left = layers;
    while let Some((key, node)) = st.heap.pop() {
        if let Some(next) = st.heap.next_value() {
            let n = next & !DEFERRED;
            if let Some(l) = st.labels.get(n as usize) {
                prefetch(l);
            }
            // What settling it reads first: a waiting node's event, a ride node's next event.
            match ids.decode(n).1 {
                Node::Wait(q) => {
                    if let Some(ev) = net.by_stop.get(q as usize) {
                        prefetch(ev);
                    }
                }
                Node::Ride(e) => {
                    if let Some(ev) = net.events.get(e as usize + 1) {
                        prefetch(ev);
                    }
                }
                Node::Sink => {}
            }
        }
        if node & DEFERRED != 0 {
            // The changes after alighting from ride node `r` (settled, so its cost is final).
            let r = node & !DEFERRED;
            let (layer, Node::Ride(e)) = ids.decode(r) else { unreachable!("only ride nodes are deferred") };
            let e = e as usize;
            let at = st.labels[r as usize].cost + (net.arr(e + 1) - net.dep(e));
            cx.change(st, layer, r, e + 1, at, net.flags(e + 1) & HAS_RULES != 0);
            continue;
        }
        let c = st.labels[node as usize].cost;
        let (layer, kind) = ids.decode(node);
        // The next layer boarding leads to: the same one with one layer, else one more ride.
        let boarded = if layers == 1 { Some(0) } else { Some(layer + 1).filter(|&l| l < layers) };
        match kind {
            Node::Wait(pos) => {
                let ev = net.by_stop[pos as usize] as usize;
                let s = net.stop(ev);
                let hs = cx.h_stop(st, s);
                let h = cx.h_wait(st, s, hs);
                if key > c + h {
                    continue;
                }
                st.settled += 1;
                let t = net.by_stop_dep[pos as usize];
                if pos + 1 < net.stop_first[s.idx() + 1] {
                    let nt = net.by_stop_dep[pos as usize + 1];
                    if nt <= cx.horizon {
                        st.relax(ids.wait(layer, pos + 1), c + (nt - t), h, node);
                    }
                }
                let f = net.flags(ev);
                if f & (NO_PICKUP | LAST_OF_TRIP) == 0 && cx.event_ok(ev) {
                    if let Some(next_layer) = boarded {
                        let hr = cx.h_ride(st, ev);
                        st.relax(ids.ride(next_layer, ev as u32), c + p.transfer_penalty_s, hr, node);
                    }
                }
            }
            Node::Ride(e) => {
                // On board, leaving at dep[e].
                let e = e as usize;
                if key > c + cx.h_ride(st, e) {
                    continue;
                }
                st.settled += 1;
                let t = net.dep(e);
                let e2 = e + 1;
                let v = net.stop(e2);
                if net.flags(e2) & LAST_OF_TRIP == 0 && net.dep(e2) <= cx.horizon {
                    let h = cx.h_ride(st, e2);
                    st.relax(ids.ride(layer, e2 as u32), c + (net.dep(e2) - t), h, node);
                }
                if net.flags(e2) & NO_DROP_OFF != 0 || !cx.event_ok(e2) {
                    continue;
                }
                let ta = net.arr(e2);
                if ta > cx.horizon {
                    continue;
                }
                let at = c + (ta - t);
                if at > st.best || !cx.alight_useful(st, v, ta, at) {
                    continue;
                }
                cx.record_arrival(st, v, ta);
                let sink_walk = cx.sink_walk(st, v);
                if sink_walk != u32::MAX {
                    st.relax_sink(ids.sink(layer), at + sink_walk, node, prune_by_sink);
                }
                let rules = net.flags(e2) & HAS_RULES != 0;
                if rules {
                    if let Some(next_layer) = boarded {
                        for (f, cost) in rule_boardings(cx.tt, net, p, cx.horizon, cx.mask, e2, at) {
                            let h = cx.h_ride(st, f as usize);
                            st.relax(ids.ride(next_layer, f), cost, h, node);
                        }
                    }
                }
                if defer {
                    // Every change from here boards again later (at least once, and at least as often
                    // as `alight[v]` says), so this bounds the key of whatever it reaches: file the
                    // changes under it, to be made only if the search gets that far (most alightings
                    // near the end of a search never do).
                    let hs = cx.h_stop(st, v);
                    let h = cx.with_boardings(hs, st.boardings.alight[v.idx()].max(1));
                    if h != UNREACHABLE && at + h <= st.best {
                        st.heap.push(at + h, node | DEFERRED);
                    }
                } else {
                    cx.change(st, layer, node, e2, at, rules);
                }
            }
            Node::Sink => {
                if key > c {
                    continue;
                }
                st.settled += 1;
                if goal == Goal::Target {
                    sinks_left -= 1;
                    if sinks_left == 0 {
                        break;
                    }
                }
            }
        }
    }
}

impl SearchState {
    /// The node path from the origin to `sink`, through each node's predecessor.
    pub(super) fn trace(&self, sink: u32) -> Vec<u32> {
        let mut nodes = vec![sink];
        let mut cur = sink;
        while let Some(p) = self.labels.get(cur as usize).map(|l| l.pred) {
            if p == FROM_ORIGIN || p == NO_PRED {
                break;
            }
            nodes.push(p);
            cur = p;
        }
        nodes.reverse();
        nodes
    }
}

/// Earliest arrival at every stop from the origins leaving at `depart_s`, within
/// `p.max_duration_s` (u32::MAX: not reached), by the one-to-all sweep ([`sweep`]); the
/// arrivals also stay in `st` ([`SearchState::stop_arrivals`]).
pub fn one_to_all<'s>(tt: &Timetable, net: &Network, st: &'s mut SearchState, origins: &[StopIdx], depart_s: u32, p: &Params) -> &'s [u32] {
    let prep = st.take_prepared(tt, net, p.walk_key(net), false);
    let n = tt.stops.len();
    if st.stop_arrival.len() < n {
        st.stop_arrival.resize(n, u32::MAX);
    }
    let q = sweep::SweepQuery { tt, net, walk: &prep.walk, origins, depart_s, p };
    sweep::one_to_all(&q, &mut st.sweep, &mut st.stop_arrival[..n]);
    st.give_back(prep);
    &st.stop_arrival[..n]
}

/// What a profile search over a time window asks: from which stops, at which departures
/// (ascending, on the network's timeline), with at most how many rides (`None`: any).
#[derive(Debug, Clone, Copy)]
pub struct Window<'a> {
    pub origins: &'a [StopIdx],
    pub departures: &'a [u32],
    pub max_rides: Option<u8>,
}

/// Earliest arrival at every stop for each departure of the window, by the self-pruning profile
/// search ([`profile`]): calls `each(i, depart_s, arrival)` from the last departure to the first.
/// An arrival later than `depart_s + p.max_duration_s` is to be read as not reached.
pub fn profile(tt: &Timetable, net: &Network, st: &mut SearchState, w: Window, p: &Params, each: impl FnMut(usize, u32, &[u32])) {
    let prep = st.take_prepared(tt, net, p.walk_key(net), false);
    let q = ProfileQuery { tt, net, walk: &prep.walk, origins: w.origins, departures: w.departures, p, max_rides: w.max_rides };
    profile::profile(&q, &mut st.profile, each);
    st.give_back(prep);
}

/// Runs a target search and keeps all state, for tests that compare node costs.
pub fn run_to_target(q: Query, st: &mut SearchState) {
    run(Run { q, layers: 1, goal: Goal::Target }, st);
}

/// Runs a search that settles every node within the time limit, keeping all state.
pub fn run_all(q: Query, st: &mut SearchState) {
    run(Run { q, layers: 1, goal: Goal::All }, st);
}

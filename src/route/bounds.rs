//! What a search prepares once per network and walking setting, and reuses query after query:
//! the walking links at the query's speed, and lower bounds on the cost still to go, for
//! goal-directed search (A*).
//!
//! **Walking links.** The timetable stores each link's length and fixed time; a search needs
//! seconds at one speed, filtered by the longest walk allowed. [`WalkLinks`] holds exactly that,
//! 12 bytes a link, sorted by cost within a stop, so the hot loop does no floating point and can
//! stop at the first link too long for the best journey found so far.
//!
//! **Lower bounds (landmarks).** A *stop graph* relaxes the time-expanded graph: one edge per pair
//! of consecutive stops of any trip, weighted by the fastest ride between them that day, plus the
//! walking links at their cost. Its shortest distances never exceed the cost of any journey
//! (waiting, penalties and timetables only add), so for landmarks `L` the triangle inequality gives
//! `d(s, T) ≥ max(d(L, T) − d(L, s), d(s, L) − d(T, L))` (Goldberg and Harrelson, "Computing
//! the shortest path: A* search meets graph theory", SODA 2005). Tables of `d(L, ·)` and
//! `d(·, L)` cost two stop-graph Dijkstras per landmark, once; a query reads two rows per stop it
//! touches. A stop that cannot reach a landmark the target reaches cannot reach the target:
//! its bound is [`UNREACHABLE`] and the search never enters it.
//!
//! **Exact near the query.** Landmark bounds are loosest near the origin, where a search spends
//! most of its work. So per query an A* on the reversed stop graph runs from the target towards
//! the origin, guided by the landmark bound from the origin, until the origin is settled
//! ([`Landmarks::exact_near`]): the stops it settles (those on or near the best stop-graph routes)
//! get their exact stop-graph distance, and the others `max(K − π(s), landmark bound)`, where `K`
//! is the origin's distance and `π(s)` the landmark bound from the origin to `s`.
//!
//! **Invariant:** the bound is *consistent* (for every edge `u → v` of the time-expanded graph,
//! `h(u) ≤ w(u, v) + h(v)`), because every such edge is matched by a stop-graph path no longer than
//! it. So A* keys never decrease, the radix heap stays valid, and every node the search settles
//! carries its exact Dijkstra cost.

use crate::graph::{csr, Network, LAST_OF_TRIP};
use crate::route::query::{weighted_walk_s, Endpoints, WalkKey};
use crate::route::radix_heap::RadixHeap;
use crate::timetable::{StopIdx, Timetable};

/// Bound of a stop that cannot reach the target.
pub const UNREACHABLE: u32 = u32::MAX;
/// Marks a settled stop's distance in [`Landmarks::exact_near`] (distances stay below 2³¹ s).
const SETTLED: u32 = 1 << 31;

/// Landmarks per table, and how many of them one query uses. 16 and 8 are common choices for
/// ALT (common practice, no source); measured here in DEVELOPERS.md.
pub const LANDMARKS: usize = 16;
pub const ACTIVE: usize = 8;
/// Of the active landmarks, how many the backward A* of [`Landmarks::exact_near`] is guided by
/// (the best for the query's pair): a weaker guide settles more stops there, but leaves a larger
/// `K − π(s)` bound on the stops it did not settle, and the search settles fewer nodes (measured
/// in DEVELOPERS.md).
pub const EXACT_ACTIVE: usize = 4;

/// One walking link at one speed.
#[derive(Debug, Clone, Copy)]
pub struct Link {
    pub to: StopIdx,
    /// Walking time, s.
    pub walk_s: u32,
    /// Its cost in the search (walking time × walk weight).
    pub cost_s: u32,
}

/// A walking link seen from its end: where it starts and what it costs.
#[derive(Debug, Clone, Copy, Default)]
pub struct InLink {
    pub from: StopIdx,
    pub cost_s: u32,
}

/// Walking links of one profile at one speed, within the longest walk, in CSR form sorted by cost;
/// also by their end, so a query can find the stops that walk to its targets.
#[derive(Debug, Clone, Default)]
pub struct WalkLinks {
    first: Vec<u32>,
    links: Vec<Link>,
    ending_first: Vec<u32>,
    ending: Vec<InLink>,
}

impl WalkLinks {
    pub fn build(tt: &Timetable, key: &WalkKey) -> WalkLinks {
        let set = tt.walk(key.profile);
        let mut out = WalkLinks { first: Vec::with_capacity(tt.stops.len() + 1), ..WalkLinks::default() };
        out.first.push(0);
        for s in 0..tt.stops.len() {
            let start = out.links.len();
            for f in set.from(StopIdx(s as u32)) {
                if f.length_m as f64 <= key.max_walk_m {
                    let walk_s = f.duration_s(key.speed_mps);
                    let cost_s = weighted_walk_s(walk_s, key.weight);
                    out.links.push(Link { to: f.to, walk_s, cost_s });
                }
            }
            out.links[start..].sort_unstable_by_key(|l| (l.cost_s, l.to));
            out.first.push(out.links.len() as u32);
        }
        let n = tt.stops.len();
        let first = &out.first;
        let ending = (0..n).flat_map(|s| {
            out.links[first[s] as usize..first[s + 1] as usize]
                .iter()
                .map(move |l| (l.to.0, InLink { from: StopIdx(s as u32), cost_s: l.cost_s }))
        });
        (out.ending_first, out.ending) = csr::group(n, ending);
        out
    }

    /// The links that end at `t`.
    #[inline]
    pub fn ending_at(&self, t: StopIdx) -> &[InLink] {
        &self.ending[self.ending_first[t.idx()] as usize..self.ending_first[t.idx() + 1] as usize]
    }

    #[inline]
    pub fn from(&self, s: StopIdx) -> &[Link] {
        &self.links[self.first[s.idx()] as usize..self.first[s.idx() + 1] as usize]
    }

    pub fn bytes(&self) -> usize {
        (self.first.capacity() + self.ending_first.capacity()) * 4
            + self.links.capacity() * std::mem::size_of::<Link>()
            + self.ending.capacity() * std::mem::size_of::<InLink>()
    }
}

/// A weighted directed graph over stops in CSR form.
#[derive(Debug, Clone, Default)]
struct StopGraph {
    first: Vec<u32>,
    /// Edges as (head, weight): both are read together.
    edges: Vec<(u32, u32)>,
}

impl StopGraph {
    fn from_edges(n: usize, mut edges: Vec<(u32, u32, u32)>) -> StopGraph {
        edges.sort_unstable();
        edges.dedup_by_key(|e| (e.0, e.1));
        let (first, edges) = csr::group(n, edges.iter().map(|e| (e.0, (e.1, e.2))));
        StopGraph { first, edges }
    }

    /// Distances from `src` to every stop (`UNREACHABLE` where none).
    fn dijkstra(&self, src: usize, heap: &mut RadixHeap, dist: &mut [u32]) {
        dist.iter_mut().for_each(|d| *d = UNREACHABLE);
        heap.clear();
        dist[src] = 0;
        heap.push(0, src as u32);
        while let Some((d, u)) = heap.pop() {
            if d > dist[u as usize] {
                continue;
            }
            let (a, b) = (self.first[u as usize] as usize, self.first[u as usize + 1] as usize);
            for &(v, w) in &self.edges[a..b] {
                let (v, nd) = (v as usize, d.saturating_add(w));
                if nd < dist[v] {
                    dist[v] = nd;
                    heap.push(nd, v as u32);
                }
            }
        }
    }
}

/// A stop's state in [`Landmarks::exact_near`]: its tentative distance (with [`SETTLED`] once
/// final) and its potential, valid in the search of `stamp`.
#[derive(Debug, Clone, Copy, Default)]
pub struct Tentative {
    pub stamp: u32,
    d: u32,
    pub potential: u32,
}

/// Landmark distance tables: for stop `s`, `rows[s][2i]` is `d(L_i, s)` and `rows[s][2i + 1]` is
/// `d(s, L_i)`, so one stop's bound reads one row.
#[derive(Debug, Clone, Default)]
pub struct Landmarks {
    pub landmarks: Vec<StopIdx>,
    rows: Vec<[u32; 2 * LANDMARKS]>,
    /// The stop graph reversed, for exact bounds near a query's target.
    reversed: StopGraph,
}

impl Landmarks {
    pub fn build(tt: &Timetable, net: &Network, walk: &WalkLinks) -> Landmarks {
        let n = tt.stops.len();
        if n == 0 {
            return Landmarks::default();
        }
        // Stop graph: the fastest ride between consecutive stops, and the walking links.
        let mut edges: Vec<(u32, u32, u32)> = Vec::new();
        let mut next: Vec<(u32, u32)> = Vec::new();
        for s in 0..n {
            next.clear();
            for p in net.stop_first[s]..net.stop_first[s + 1] {
                let e = net.by_stop[p as usize] as usize;
                if net.flags(e) & LAST_OF_TRIP != 0 {
                    continue;
                }
                let v = net.stop(e + 1).0;
                let w = net.arr(e + 1).saturating_sub(net.dep(e));
                match next.iter_mut().find(|x| x.0 == v) {
                    Some(x) => x.1 = x.1.min(w),
                    None => next.push((v, w)),
                }
            }
            edges.extend(next.iter().map(|&(v, w)| (s as u32, v, w)));
            edges.extend(walk.from(StopIdx(s as u32)).iter().map(|l| (s as u32, l.to.0, l.cost_s)));
        }
        let reversed: Vec<(u32, u32, u32)> = edges.iter().map(|&(a, b, w)| (b, a, w)).collect();
        let fwd = StopGraph::from_edges(n, edges);
        let bwd = StopGraph::from_edges(n, reversed);

        let landmarks = pick_landmarks(tt, net);
        let mut rows = vec![[UNREACHABLE; 2 * LANDMARKS]; n];
        let mut heap = RadixHeap::default();
        let mut dist = vec![UNREACHABLE; n];
        for (i, l) in landmarks.iter().enumerate() {
            fwd.dijkstra(l.idx(), &mut heap, &mut dist);
            rows.iter_mut().zip(&dist).for_each(|(r, &d)| r[2 * i] = d);
            bwd.dijkstra(l.idx(), &mut heap, &mut dist);
            rows.iter_mut().zip(&dist).for_each(|(r, &d)| r[2 * i + 1] = d);
        }
        Landmarks { landmarks, rows, reversed: bwd }
    }

    pub fn bytes(&self) -> usize {
        self.rows.capacity() * std::mem::size_of::<[u32; 2 * LANDMARKS]>()
            + self.reversed.first.capacity() * 4
            + self.reversed.edges.capacity() * 8
    }

    /// Exact stop-graph costs to the nearest target, by A* on the reversed stop graph towards the
    /// origins (`potential(s)`: a consistent lower bound on the cost from the origins to `s`), until
    /// every origin is settled: `put(s, d)` for each stop settled. Returns the last key `K`: every
    /// stop not put has `d(s) ≥ K − potential(s)` (A* settles in key order), every stop put has
    /// `d(s) ≤ K − potential(s)`, so `max(K − potential(s), landmark bound)` bounds the others and
    /// the bound made of both stays consistent. `UNREACHABLE` when an origin cannot reach a target.
    /// `tentative` is the per-stop state with the stamp of this search.
    pub fn exact_near(
        &self,
        ends: &Endpoints,
        heap: &mut RadixHeap,
        (tentative, stamp): (&mut [Tentative], u32),
        potential: impl Fn(usize) -> u32,
        mut put: impl FnMut(usize, u32),
    ) -> u32 {
        let (targets, origins) = (&ends.targets[..], &ends.origins[..]);
        let g = &self.reversed;
        heap.clear();
        for &t in targets {
            let pt = potential(t.idx());
            if let Some(x) = tentative.get_mut(t.idx()).filter(|_| pt != UNREACHABLE) {
                *x = Tentative { stamp, d: 0, potential: pt };
                heap.push(pt, t.0);
            }
        }
        let mut left = origins.len();
        let is_origin = |u: u32| origins.iter().any(|o| o.0 == u);
        while let Some((key, u)) = heap.pop() {
            let x = &mut tentative[u as usize];
            // Stale, or settled already (its distance then carries the `SETTLED` bit).
            if x.stamp != stamp || key != x.d.wrapping_add(x.potential) {
                continue;
            }
            let d = x.d;
            x.d |= SETTLED;
            put(u as usize, d);
            if is_origin(u) {
                left -= 1;
                if left == 0 {
                    return key;
                }
            }
            let (a, b) = (g.first[u as usize] as usize, g.first[u as usize + 1] as usize);
            for &(v, w) in &g.edges[a..b] {
                let (v, nd) = (v as usize, d.saturating_add(w));
                let y = &mut tentative[v];
                if y.stamp != stamp {
                    *y = Tentative { stamp, d: UNREACHABLE & !SETTLED, potential: potential(v) };
                }
                if y.potential != UNREACHABLE && nd < y.d & !SETTLED {
                    y.d = nd;
                    heap.push(nd + y.potential, v as u32);
                }
            }
        }
        // Every stop that reaches a target was settled before an origin was missed.
        UNREACHABLE
    }

    /// The `ACTIVE` landmarks that bound the cost from `s` to `t` best, best first: a query uses
    /// only these, so each stop it touches costs a few reads, while the table keeps a landmark
    /// behind most targets (the usual ALT practice of choosing landmarks per query, Goldberg and
    /// Harrelson).
    pub fn select(&self, s: StopIdx, t: StopIdx) -> Active {
        let mut scored: Vec<(u32, u8)> = (0..self.landmarks.len()).map(|i| (self.bound_by(i, s, t), i as u8)).collect();
        scored.sort_unstable_by(|a, b| b.cmp(a));
        let mut active = Active { n: 0, which: [0; ACTIVE] };
        for &(_, i) in scored.iter().take(ACTIVE) {
            active.which[active.n] = i;
            active.n += 1;
        }
        active
    }

    /// Stop `a` with its distances from and to the active landmarks, read once per query so
    /// that each bound after reads only the other stop's row.
    pub fn anchor(&self, active: &Active, a: StopIdx) -> Anchor {
        let mut out = Anchor::default();
        let Some(ra) = self.rows.get(a.idx()) else { return out };
        for &i in &active.which[..active.n] {
            out.which[out.n] = i;
            out.from_l[out.n] = ra[2 * i as usize];
            out.to_l[out.n] = ra[2 * i as usize + 1];
            out.n += 1;
        }
        out
    }

    /// Lower bound on the cost from `s` to the anchor's stop (`UNREACHABLE` when `s` cannot
    /// reach it).
    #[inline]
    pub fn bound_to(&self, a: &Anchor, s: StopIdx) -> u32 {
        let Some(rs) = self.rows.get(s.idx()) else { return 0 };
        let mut h = 0;
        for k in 0..a.n {
            let i = a.which[k] as usize;
            h = h.max(pair_bound(rs[2 * i], a.from_l[k], rs[2 * i + 1], a.to_l[k]));
        }
        h
    }

    /// Lower bound on the cost from the anchor's stop to `s`.
    #[inline]
    pub fn bound_from(&self, a: &Anchor, s: StopIdx) -> u32 {
        let Some(rs) = self.rows.get(s.idx()) else { return 0 };
        let mut h = 0;
        for k in 0..a.n {
            let i = a.which[k] as usize;
            h = h.max(pair_bound(a.from_l[k], rs[2 * i], a.to_l[k], rs[2 * i + 1]));
        }
        h
    }

    #[inline]
    fn bound_by(&self, i: usize, s: StopIdx, t: StopIdx) -> u32 {
        let (Some(rs), Some(rt)) = (self.rows.get(s.idx()), self.rows.get(t.idx())) else { return 0 };
        pair_bound(rs[2 * i], rt[2 * i], rs[2 * i + 1], rt[2 * i + 1])
    }
}

/// Lower bound on `d(s, t)` from one landmark `L`, given `ls = d(L, s)`, `lt = d(L, t)`,
/// `sl = d(s, L)`, `tl = d(t, L)`.
#[inline]
fn pair_bound(ls: u32, lt: u32, sl: u32, tl: u32) -> u32 {
    let mut h = 0;
    // d(s, t) ≥ d(L, t) − d(L, s)
    if lt != UNREACHABLE && ls != UNREACHABLE && lt > ls {
        h = lt - ls;
    }
    // d(s, t) ≥ d(s, L) − d(t, L); s cannot reach L but t can: s cannot reach t.
    if tl != UNREACHABLE {
        if sl == UNREACHABLE {
            return UNREACHABLE;
        }
        if sl > tl {
            h = h.max(sl - tl);
        }
    }
    h
}

/// One stop of a query with its distances from (`from_l`) and to (`to_l`) the active
/// landmarks `which`.
#[derive(Debug, Clone, Copy, Default)]
pub struct Anchor {
    n: usize,
    which: [u8; ACTIVE],
    from_l: [u32; ACTIVE],
    to_l: [u32; ACTIVE],
}

/// Landmarks used by one query.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Active {
    n: usize,
    which: [u8; ACTIVE],
}

impl Active {
    /// The best `k` of them.
    pub fn first(mut self, k: usize) -> Active {
        self.n = self.n.min(k);
        self
    }
}

/// Landmarks spread over the area: farthest-point selection on stops with departures, starting
/// from the stop farthest from the first one (distances on an equirectangular projection, which is
/// enough for choosing).
fn pick_landmarks(tt: &Timetable, net: &Network) -> Vec<StopIdx> {
    let served: Vec<usize> = (0..tt.stops.len()).filter(|&s| net.stop_first[s + 1] > net.stop_first[s]).collect();
    if served.is_empty() {
        return Vec::new();
    }
    let xy: Vec<(f64, f64)> = served
        .iter()
        .map(|&s| {
            let st = &tt.stops[s];
            (st.lon * st.lat.to_radians().cos(), st.lat)
        })
        .collect();
    let d2 = |a: (f64, f64), b: (f64, f64)| (a.0 - b.0).powi(2) + (a.1 - b.1).powi(2);
    let mut near = vec![f64::INFINITY; served.len()];
    let mut chosen: Vec<usize> = Vec::new();
    let mut pick = (0..served.len()).max_by(|&a, &b| d2(xy[a], xy[0]).total_cmp(&d2(xy[b], xy[0]))).unwrap_or(0);
    while chosen.len() < LANDMARKS.min(served.len()) {
        chosen.push(pick);
        for (i, n) in near.iter_mut().enumerate() {
            *n = n.min(d2(xy[i], xy[pick]));
        }
        pick = (0..served.len()).max_by(|&a, &b| near[a].total_cmp(&near[b])).unwrap_or(0);
        if near[pick] == 0.0 {
            break;
        }
    }
    chosen.into_iter().map(|i| StopIdx(served[i] as u32)).collect()
}

/// Everything prepared for one walking setting on one network.
#[derive(Debug)]
pub struct Prepared {
    pub key: WalkKey,
    pub walk: WalkLinks,
    /// Built on the first goal-directed search with this setting.
    pub landmarks: Option<Landmarks>,
}

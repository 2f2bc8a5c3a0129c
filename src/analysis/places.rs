//! The places an analysis reports on: every station, and every stop that serves vehicles outside
//! any station. A journey starts or ends at a place's endpoints: a station's entrances when it has
//! any, else its platforms; any other stop is its own endpoint (the journey planner's rule, so a
//! matrix cell and a planned journey agree).

use crate::timetable::{StopIdx, StopKind, Timetable};

/// Not an endpoint of any place.
pub const NO_PLACE: u32 = u32::MAX;

#[derive(Debug, Clone, Default)]
pub struct Places {
    /// The place's own stop: a station, or a platform without a station.
    pub stops: Vec<StopIdx>,
    /// Per place, its endpoints (CSR: `endpoints[first[p]..first[p + 1]]`).
    first: Vec<u32>,
    endpoints: Vec<StopIdx>,
    /// Per stop of the timetable: the place it is an endpoint of, or [`NO_PLACE`].
    pub of_stop: Vec<u32>,
}

/// Where a search starts or ends for stop `s`: a station's entrances when it has any, else its
/// platforms; any other stop is itself.
pub fn endpoints(tt: &Timetable, s: StopIdx) -> Vec<StopIdx> {
    let st = tt.stop(s);
    if st.kind != StopKind::Station {
        return vec![s];
    }
    let children = || tt.stops.iter().enumerate().filter(move |(_, c)| c.parent == Some(s));
    let of_kind = |k: StopKind| children().filter(|c| c.1.kind == k).map(|c| StopIdx(c.0 as u32)).collect::<Vec<_>>();
    let entrances = of_kind(StopKind::Entrance);
    if entrances.is_empty() {
        of_kind(StopKind::Platform)
    } else {
        entrances
    }
}

impl Places {
    pub fn of(tt: &Timetable) -> Places {
        let n = tt.stops.len();
        let mut children: Vec<Vec<StopIdx>> = vec![Vec::new(); n];
        for (i, s) in tt.stops.iter().enumerate() {
            if let Some(p) = s.parent {
                children[p.idx()].push(StopIdx(i as u32));
            }
        }
        let mut out = Places { first: vec![0], of_stop: vec![NO_PLACE; n], ..Places::default() };
        for (i, s) in tt.stops.iter().enumerate() {
            let own = StopIdx(i as u32);
            let ends: Vec<StopIdx> = match s.kind {
                StopKind::Station => {
                    let of_kind = |k| children[i].iter().copied().filter(|c| tt.stop(*c).kind == k).collect::<Vec<_>>();
                    let e = of_kind(StopKind::Entrance);
                    if e.is_empty() {
                        of_kind(StopKind::Platform)
                    } else {
                        e
                    }
                }
                StopKind::Platform if s.parent.is_none_or(|p| tt.stop(p).kind != StopKind::Station) => vec![own],
                _ => continue,
            };
            if ends.is_empty() {
                continue;
            }
            let p = out.stops.len() as u32;
            out.stops.push(own);
            for &e in &ends {
                out.of_stop[e.idx()] = p;
            }
            out.endpoints.extend(ends);
            out.first.push(out.endpoints.len() as u32);
        }
        out
    }

    pub fn len(&self) -> usize {
        self.stops.len()
    }

    pub fn is_empty(&self) -> bool {
        self.stops.is_empty()
    }

    pub fn endpoints(&self, p: usize) -> &[StopIdx] {
        &self.endpoints[self.first[p] as usize..self.first[p + 1] as usize]
    }

    /// The place stop `s` stands for: itself when it is a place, else the place it is an endpoint
    /// of, else its station's place.
    pub fn place_of(&self, tt: &Timetable, s: StopIdx) -> Option<usize> {
        if let Ok(p) = self.stops.binary_search(&s) {
            return Some(p);
        }
        if self.of_stop[s.idx()] != NO_PLACE {
            return Some(self.of_stop[s.idx()] as usize);
        }
        let parent = tt.stop(s).parent?;
        self.place_of(tt, parent)
    }
}

/// SplitMix64 (Steele, Lea, Flood 2014): seeded, the same draws on every run.
pub fn splitmix(x: &mut u64) -> u64 {
    *x = x.wrapping_add(0x9E37_79B9_7F4A_7C15);
    let mut z = *x;
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// The pairs of a `sample:N` request over `n` places: N distinct ordered pairs of different
/// places drawn with `seed`. `of` ends the message of a bad N ("the pairs of {n} places{of}").
pub fn sample_pairs(spec: &str, n: usize, seed: u64, of: &str) -> Result<Vec<(usize, usize)>, String> {
    let k: u64 = spec
        .strip_prefix("sample:")
        .and_then(|k| k.parse().ok())
        .ok_or_else(|| format!("pairs {spec:?}: give all, sample:N or a list of pairs"))?;
    let total = (n as u64) * (n as u64).saturating_sub(1);
    if k == 0 || k > total {
        return Err(format!("sample of {k} pairs: give 1 to {total} (the pairs of {n} places{of})"));
    }
    let mut seen = std::collections::HashSet::new();
    let mut out = Vec::with_capacity(k as usize);
    let mut x = seed;
    while (out.len() as u64) < k {
        let a = (splitmix(&mut x) % n as u64) as usize;
        let b = (splitmix(&mut x) % n as u64) as usize;
        if a != b && seen.insert((a, b)) {
            out.push((a, b));
        }
    }
    Ok(out)
}

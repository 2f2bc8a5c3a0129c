//! Interchange audit benchmark (issue 15), on generated feeds (`synth`, seed 1), with its
//! baseline in the same run:
//!
//! - **metro, all stations, the whole service day:** the audit (`analysis::interchange::audit`
//!   over every station) and the whole command path (`Engine::interchange_with`: the audit, rows
//!   as text, summaries, rankings), medians of 3 runs.
//! - **baseline:** the audit as first written — for every arrival and line, a walk through all
//!   departures within the horizon, whatever their line — on a sample of stations (every 6th; on
//!   the busiest station alone it takes minutes), against ours on the same sample; every row must
//!   agree (status, departure, wait, missed by).
//! - **region, one station** (the busiest), the whole command path: the work behind one station in
//!   the page (the page adds its drawing and the WASM boundary).
//!
//! Run with `cargo bench --bench interchange`; writes `bench-out/interchange.md`.

use std::fmt::Write as _;
use std::path::Path;
use std::time::Instant;

use timeweave::analysis::interchange::{self as ia, audit, change_time, AuditSpec, Line, Status};
use timeweave::engine::interchange::InterchangeQuery;
use timeweave::engine::PlanQuery;
use timeweave::graph::{Network, LAST_OF_TRIP};
use timeweave::route::Params;
use timeweave::timetable::{StopIdx, Timetable, NO_DROP_OFF, NO_PICKUP};
use timeweave_synth::Preset;

mod common;
use common::{load, median};

const DATE: &str = "2026-12-02";

/// One row as (arrival event, line, status, departure event, wait, missed by) for comparison.
type Key = (u32, Line, Status, Option<u32>, Option<u32>, Option<u32>);

/// The first version: every departure within the horizon scanned for every arrival and line.
fn baseline(tt: &Timetable, net: &Network, p: &Params, stops: &[StopIdx], spec: &AuditSpec) -> Vec<Key> {
    let last = spec.end_s.saturating_add(spec.horizon_s);
    let mut day: Vec<(u32, u32, Line)> = Vec::new();
    for &s in stops {
        for pos in net.stop_first[s.idx()] as usize..net.stop_first[s.idx() + 1] as usize {
            let (t, e) = (net.by_stop_dep[pos], net.by_stop[pos]);
            if net.flags(e as usize) & (NO_PICKUP | LAST_OF_TRIP) == 0 {
                day.push((t, e, ia::line_of(tt, net.instance_of(e).trip)));
            }
        }
    }
    let mut lines: Vec<Line> = day.iter().map(|d| d.2.clone()).collect();
    lines.sort();
    lines.dedup();
    day.retain(|d| d.0 >= spec.start_s && d.0 <= last);
    day.sort_unstable_by_key(|d| (d.0, d.1));
    let mut arrivals: Vec<(u32, u32)> = Vec::new();
    for &s in stops {
        for pos in net.stop_first[s.idx()] as usize..net.stop_first[s.idx() + 1] as usize {
            let e = net.by_stop[pos] as usize;
            let first = e == 0 || net.flags(e - 1) & LAST_OF_TRIP != 0;
            let at = net.arr(e);
            if !first && net.flags(e) & NO_DROP_OFF == 0 && at >= spec.start_s && at < spec.end_s {
                arrivals.push((at, e as u32));
            }
        }
    }
    arrivals.sort_unstable();
    let mut out = Vec::new();
    for &(at, e) in &arrivals {
        let trip = net.instance_of(e).trip;
        let own = ia::line_of(tt, trip);
        let a_stop = net.stop(e as usize);
        let from = day.partition_point(|d| d.0 < at);
        for line in lines.iter().filter(|l| **l != own) {
            let (mut status, mut dep, mut wait, mut missed, mut any, mut possible) = (Status::None, None, None, None, false, false);
            for &(t, f, ref l) in &day[from..] {
                let slack = t - at;
                if slack > spec.horizon_s {
                    break;
                }
                if l != line {
                    continue;
                }
                any = true;
                let Some(ch) = change_time(tt, p, a_stop, trip, net.stop(f as usize), net.instance_of(f).trip) else { continue };
                possible = true;
                if slack < ch {
                    missed = Some(ch - slack);
                    continue;
                }
                (status, dep, wait) = (Status::Made, Some(f), Some(slack));
                break;
            }
            if any && !possible {
                status = Status::NotPossible;
            }
            out.push((e, line.clone(), status, dep, wait, missed));
        }
    }
    out
}

fn metro(out: &mut String) {
    let mut engine = load(Preset::Metro);
    let q = InterchangeQuery { station: "all".into(), date: DATE.into(), ..Default::default() };
    let stations = engine.interchange_stations("all").expect("stations");
    let p = engine.params_for(&PlanQuery::default()).expect("params");
    let span = engine.span(engine.analysis_date(DATE).expect("date"), None).expect("day");
    engine.network(engine.analysis_date(DATE).expect("date"));
    let sets = engine.station_stop_sets(&stations, &p);
    let spec = AuditSpec { start_s: span.start_s, end_s: span.end_s, horizon_s: 3600 };
    let (tt, net) = (&engine.tt, engine.built().expect("network"));
    let (mut core, mut rows) = (Vec::new(), 0usize);
    for _ in 0..3 {
        let t = Instant::now();
        rows = sets.iter().map(|s| audit(tt, net, &p, s, &spec).rows.len()).sum();
        core.push(t.elapsed().as_secs_f64());
    }
    // The baseline on every 6th station, ours on the same, row by row.
    let sample: Vec<&Vec<StopIdx>> = sets.iter().step_by(6).collect();
    let (mut ours_s, mut base_s, mut compared, mut differ) = (0.0, 0.0, 0usize, 0usize);
    for s in &sample {
        let t = Instant::now();
        let a = audit(tt, net, &p, s, &spec);
        ours_s += t.elapsed().as_secs_f64();
        let t = Instant::now();
        let b = baseline(tt, net, &p, s, &spec);
        base_s += t.elapsed().as_secs_f64();
        let mine: Vec<Key> = a
            .rows
            .iter()
            .map(|r| (r.arrival_event, a.lines[r.line as usize].clone(), r.status, r.dep.map(|d| d.event), r.wait_s, r.missed.map(|m| m.0)))
            .collect();
        compared += b.len().max(mine.len());
        differ += b.iter().zip(&mine).filter(|(x, y)| x != y).count() + b.len().abs_diff(mine.len());
    }
    let mut whole = Vec::new();
    for _ in 0..3 {
        let t = Instant::now();
        let mut n = 0usize;
        engine
            .interchange_with(&q, &mut |_, _, r| {
                n += r.len();
                true
            })
            .expect("audit")
            .expect("not cancelled");
        whole.push(t.elapsed().as_secs_f64());
        assert_eq!(n, rows);
    }
    let (c, w) = (median(&mut core), median(&mut whole));
    let _ = writeln!(out, "| metro | all {} stations, the whole service day ({rows} rows) | audit **{c:.2} s**; with rows as text, summaries, rankings **{w:.2} s** | | |", stations.len());
    let _ = writeln!(out, "| metro | every 6th station ({} stations) | ours {:.2} s | first version (scan every departure within the horizon) {:.2} s | **{:.1}×**; {differ} of {compared} rows differ |", sample.len(), ours_s, base_s, base_s / ours_s);
    let _ = writeln!(
        out,
        "\nTarget (metro): all stations for a whole service day ≤ 10 s native: {w:.2} s ({}).",
        if w <= 10.0 { "met" } else { "missed" }
    );
}

fn region(out: &mut String) {
    let mut engine = load(Preset::Region);
    let all = engine.interchange(&InterchangeQuery { station: "all".into(), date: DATE.into(), ..Default::default() }).expect("audit");
    let busiest = all.stations.iter().max_by_key(|s| s.connections).expect("a station").station.clone();
    let q = InterchangeQuery { station: busiest.clone(), date: DATE.into(), window: Some("07:00-09:00".into()), ..Default::default() };
    let mut times = Vec::new();
    let mut rows = 0;
    for _ in 0..5 {
        let t = Instant::now();
        rows = engine.interchange(&q).expect("audit").rows.len();
        times.push(t.elapsed().as_secs_f64() * 1e3);
    }
    let _ = writeln!(out, "| region | the busiest station ({busiest}), 07:00–09:00, {rows} rows | **{:.1} ms** (native; the page's figure is in the guide) | | |", median(&mut times));
}

fn main() {
    let mut out = String::from("### Interchange audit (`cargo bench --bench interchange`)\n\nService date 2026-12-02; synth seed 1; medians; native, release build.\n\n| preset | what | ours | baseline in the same run | ratio, agreement |\n|---|---|---|---|---|\n");
    let mut targets = String::new();
    for f in [metro as fn(&mut String), region] {
        let mut part = String::new();
        f(&mut part);
        let (rows, rest) = part.split_once("\n\n").unwrap_or((&part, ""));
        out += rows;
        out += "\n";
        targets += rest;
    }
    out += "\n";
    out += &targets;
    println!("{out}");
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("bench-out");
    let _ = std::fs::create_dir_all(&dir);
    let _ = std::fs::write(dir.join("interchange.md"), &out);
}

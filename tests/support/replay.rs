//! Replay: checks an [`Itinerary`] against the feed itself, independently of the search.
//!
//! Each ride must be a trip that runs on the service day it is placed on (the timetable's
//! services and the query date), calling at the leg's stops in that order at exactly the leg's
//! times (after the day's offset), with pickup allowed where it boards and drop-off where it
//! alights. Each change must leave the minimum transfer time at the same stop, or the walking
//! link's time between two stops, and never use a `transfer_type` 3 rule. Each walk must take at
//! least the great-circle distance divided by the walking speed. Legs must join in place and time.
//! A strict step-free itinerary may only use trips with `wheelchair_accessible` 1, stops with
//! `wheelchair_boarding` 1 (after inheritance) and no stairs or escalator pathways.
//!
//! Rules from the GTFS Schedule reference (stop_times pickup_type/drop_off_type, trips
//! wheelchair_accessible, stops wheelchair_boarding and its inheritance, transfers transfer_type,
//! pathways pathway_mode) and DEVELOPERS.md (walking speed, change time, service-day timeline).
#![allow(dead_code)]

use chrono::{Duration, NaiveDate};
use timeweave::journey::{Itinerary, LegKind, StopRef};
use timeweave::route::search::{Params, StepFree};
use timeweave::timetable::calendar::origin_offset_s;
use timeweave::timetable::walking::haversine_m;
use timeweave::timetable::{Access, PathwayMode, StopIdx, Timetable, TransferRule, NO_DROP_OFF, NO_PICKUP};

/// The stop a place names (its feed and stop id).
pub fn stop_of(tt: &Timetable, p: &StopRef) -> Result<StopIdx, String> {
    tt.stops
        .iter()
        .position(|s| s.id == p.stop_id && tt.feeds.get(s.feed.idx()).is_some_and(|f| f.name == p.feed))
        .map(|i| StopIdx(i as u32))
        .ok_or_else(|| format!("place {}:{} is no stop of the timetable", p.feed, p.stop_id))
}

fn same(a: &StopRef, b: &StopRef) -> bool {
    a.stop_id == b.stop_id && a.feed == b.feed
}

/// wheelchair_boarding after inheritance, from the raw values: an empty/0 value on a child stop
/// takes its parent's (GTFS Schedule reference, stops.txt), up the parent chain.
pub fn wheelchair_of(tt: &Timetable, s: StopIdx) -> Access {
    let mut cur = s;
    for _ in 0..4 {
        let st = tt.stop(cur);
        if st.wheelchair_raw != Access::Unknown {
            return st.wheelchair_raw;
        }
        match st.parent {
            Some(p) => cur = p,
            None => break,
        }
    }
    Access::Unknown
}

/// The least distance a walk from `a` to `b` can cover: the great circle, or with pathways, the
/// great circle to and from the nearest ends of the pathways plus their `length` (the GTFS
/// Schedule reference gives a pathway's horizontal length as the feed's word, which may be shorter
/// than the distance between its ends' coordinates; a pathway without one counts 0 m).
fn street_least_m(tt: &Timetable, a: StopIdx, b: StopIdx, steps: &[timeweave::journey::PathwayStep]) -> f64 {
    let gc = |x: StopIdx, y: StopIdx| {
        let (sx, sy) = (tt.stop(x), tt.stop(y));
        haversine_m(sx.lat, sx.lon, sy.lat, sy.lon)
    };
    if steps.is_empty() {
        return gc(a, b);
    }
    let feeds = [tt.stop(a).feed, tt.stop(b).feed];
    let used: Vec<_> = steps
        .iter()
        .filter_map(|s| tt.pathways.iter().find(|pw| pw.id == s.pathway_id && feeds.contains(&tt.stop(pw.from).feed)))
        .collect();
    let ends: Vec<StopIdx> = used.iter().flat_map(|pw| [pw.from, pw.to]).collect();
    let near = |x: StopIdx| ends.iter().map(|&e| gc(x, e)).fold(f64::INFINITY, f64::min);
    near(a) + used.iter().map(|pw| pw.length_m.unwrap_or(0.0) as f64).sum::<f64>() + near(b)
}

/// Minimum change time at one stop: its transfers.txt rule, else the query's change time.
fn change_at(tt: &Timetable, s: StopIdx, p: &Params) -> Result<u32, String> {
    match tt.stop_rules.iter().find(|r| r.0 == s).map(|r| r.1) {
        Some(TransferRule::Forbidden) => Err(format!("change at stop {} where transfers.txt forbids it (transfer_type 3)", tt.stop(s).id)),
        Some(TransferRule::MinTime(m)) => Ok(m),
        Some(TransferRule::Timed) => Ok(0),
        None => Ok(p.transfer_s()),
    }
}

/// Checks `it`, planned from `from` to `to` on `date` leaving at or after `query_s` with `p`.
/// `from`/`to` are the endpoint stop sets the query resolved to.
pub fn replay(
    tt: &Timetable,
    date: NaiveDate,
    query_s: u32,
    p: &Params,
    from: &[StopIdx],
    to: &[StopIdx],
    it: &Itinerary,
) -> Result<(), String> {
    let legs = &it.legs;
    let strict = p.step_free == StepFree::Strict;
    if legs.is_empty() {
        return if from.iter().any(|s| to.contains(s)) { Ok(()) } else { Err("no legs, but origin and destination differ".into()) };
    }
    let first = stop_of(tt, &legs[0].start)?;
    let last = stop_of(tt, &legs[legs.len() - 1].end)?;
    if !from.contains(&first) {
        return Err(format!("starts at {}, not at the origin", legs[0].start.stop_id));
    }
    if !to.contains(&last) {
        return Err(format!("ends at {}, not at the destination", legs[legs.len() - 1].end.stop_id));
    }
    if legs[0].depart_s < query_s {
        return Err(format!("leaves at {} before the query time {query_s}", legs[0].depart_s));
    }
    if it.depart_s != legs[0].depart_s || it.arrive_s != legs[legs.len() - 1].arrive_s {
        return Err(format!(
            "itinerary {}–{} does not span its legs {}–{}",
            it.depart_s,
            it.arrive_s,
            legs[0].depart_s,
            legs[legs.len() - 1].arrive_s
        ));
    }
    let tz0 = tt.feeds[0].timezone;
    let mut prev_ride: Option<(StopIdx, u32)> = None; // (alighting stop, arrival) of the last ride
    let mut walked_since_ride = false;
    for (i, leg) in legs.iter().enumerate() {
        let at = |m: String| format!("leg {i} ({:?} {}→{}): {m}", leg.kind, leg.start.stop_id, leg.end.stop_id);
        if leg.arrive_s < leg.depart_s || leg.duration_s != leg.arrive_s - leg.depart_s {
            return Err(at(format!("times {}–{} with duration {}", leg.depart_s, leg.arrive_s, leg.duration_s)));
        }
        if i > 0 {
            let before = &legs[i - 1];
            if !same(&before.end, &leg.start) {
                return Err(at(format!("starts at {} but the previous leg ended at {}", leg.start.stop_id, before.end.stop_id)));
            }
            if leg.depart_s < before.arrive_s {
                return Err(at(format!("leaves at {} before the previous leg arrives at {}", leg.depart_s, before.arrive_s)));
            }
        }
        let (a, b) = (stop_of(tt, &leg.start)?, stop_of(tt, &leg.end)?);
        match leg.kind {
            LegKind::Walk | LegKind::InStation => {
                if a == b {
                    return Err(at("a walk from a stop to itself".into()));
                }
                let sa = tt.stop(a);
                let gc = street_least_m(tt, a, b, &leg.pathways);
                let least = (gc / p.walk_speed_mps).floor() as u32;
                if leg.duration_s < least {
                    return Err(at(format!(
                        "walks {gc:.0} m in {} s, faster than {} m/s (at least {least} s)",
                        leg.duration_s, p.walk_speed_mps
                    )));
                }
                let link =
                    tt.walk(p.step_free.walk_profile()).between(a, b).ok_or_else(|| at("no walking link between these stops".into()))?;
                if leg.duration_s < link.duration_s(p.walk_speed_mps) {
                    return Err(at(format!(
                        "walks in {} s, the walking link takes {} s",
                        leg.duration_s,
                        link.duration_s(p.walk_speed_mps)
                    )));
                }
                if (link.length_m as f64) > p.max_walk_m {
                    return Err(at(format!("walks {} m, more than the maximum {} m", link.length_m, p.max_walk_m)));
                }
                if tt.link_rules.iter().any(|r| r.0 == a && r.1 == b && r.2 == TransferRule::Forbidden)
                    && prev_ride.is_some()
                    && i + 1 < legs.len()
                {
                    return Err(at("a change along a link transfers.txt forbids (transfer_type 3)".into()));
                }
                if strict {
                    for step in &leg.pathways {
                        let pw = tt
                            .pathways
                            .iter()
                            .find(|pw| pw.id == step.pathway_id && tt.stop(pw.from).feed == sa.feed)
                            .ok_or_else(|| at(format!("pathway {} is not in the feed", step.pathway_id)))?;
                        if matches!(pw.mode, PathwayMode::Stairs | PathwayMode::Escalator) {
                            return Err(at(format!("step-free walk uses pathway {} ({:?})", pw.id, pw.mode)));
                        }
                    }
                    for s in [a, b] {
                        if tt.stop(s).kind == timeweave::timetable::StopKind::Entrance && wheelchair_of(tt, s) != Access::Yes {
                            return Err(at(format!("step-free walk through entrance {} not marked accessible", tt.stop(s).id)));
                        }
                    }
                }
                walked_since_ride = true;
            }
            LegKind::Ride => {
                let trip_id = leg.trip_id.as_deref().ok_or_else(|| at("a ride without trip_id".into()))?;
                let feed = tt.feeds.iter().position(|f| f.name == leg.start.feed).ok_or_else(|| at("unknown feed".into()))?;
                let meta = &tt.feeds[feed];
                let mut found = None;
                'search: for t in meta.trip_range.0..meta.trip_range.1 {
                    let trip = &tt.trips[t as usize];
                    if trip.id != trip_id {
                        continue;
                    }
                    for k in -1i64..=1 {
                        let day = date + Duration::days(k);
                        if !tt.services[trip.service.idx()].runs_on(day) {
                            continue;
                        }
                        let off = origin_offset_s(tz0, date, meta.timezone, day);
                        let ev: Vec<usize> = trip.events().collect();
                        for (x, &e) in ev.iter().enumerate() {
                            if tt.ev_stop[e] != a || tt.ev_dep[e] as i64 + off != leg.depart_s as i64 {
                                continue;
                            }
                            for &f in &ev[x + 1..] {
                                if tt.ev_stop[f] == b && tt.ev_arr[f] as i64 + off == leg.arrive_s as i64 {
                                    found = Some((t, e, f));
                                    break 'search;
                                }
                            }
                        }
                    }
                }
                let (t, e, f) = found.ok_or_else(|| {
                    at(format!(
                        "no trip {trip_id} running around {date} leaves {} at {} and reaches {} at {}",
                        leg.start.stop_id, leg.depart_s, leg.end.stop_id, leg.arrive_s
                    ))
                })?;
                if tt.ev_flags[e] & NO_PICKUP != 0 {
                    return Err(at("boards where pickup_type is 1 (no pickup)".into()));
                }
                if tt.ev_flags[f] & NO_DROP_OFF != 0 {
                    return Err(at("alights where drop_off_type is 1 (no drop-off)".into()));
                }
                if leg.calls.len() != f - e - 1 {
                    return Err(at(format!("{} intermediate stops listed, the trip has {}", leg.calls.len(), f - e - 1)));
                }
                if strict {
                    let trip = &tt.trips[t as usize];
                    if trip.wheelchair != Access::Yes {
                        return Err(at(format!("step-free ride on trip {} with wheelchair_accessible {:?}", trip.id, trip.wheelchair)));
                    }
                    for s in [a, b] {
                        if wheelchair_of(tt, s) != Access::Yes {
                            return Err(at(format!(
                                "step-free ride boards or alights at {} with wheelchair_boarding {:?} (after inheritance)",
                                tt.stop(s).id,
                                wheelchair_of(tt, s)
                            )));
                        }
                    }
                }
                if let Some((s, arr)) = prev_ride {
                    if !walked_since_ride {
                        if s != a {
                            return Err(at("a change between different stops without a walk".into()));
                        }
                        let need = change_at(tt, a, p).map_err(&at)?;
                        if leg.depart_s < arr + need {
                            return Err(at(format!("changes at {} in {} s, the minimum is {need} s", tt.stop(a).id, leg.depart_s - arr)));
                        }
                    }
                }
                prev_ride = Some((b, leg.arrive_s));
                walked_since_ride = false;
            }
        }
    }
    Ok(())
}

//! Words for the core's results, made in one place so the command line, the page (through the
//! WASM shell) and later a kiosk or a notebook say the same thing.
//!
//! The core returns codes and facts ([`timeweave::journey::Check`], [`NoJourney`], [`Note`]);
//! this crate turns them into English sentences, and into the one JSON shape the CLI's `--json`
//! and the page share: the core's data with a `text` beside every coded item
//! ([`plan_json`]).
//!
//! **Boundary:** only the shells depend on this crate; the core never does.

use std::fmt::Write as _;

use serde_json::Value;
use timeweave::engine::{Blocked, NoJourney, Note, PlanResult};
use timeweave::journey::{Check, Fact, Itinerary, Leg, LegKind, StopRef, StopRole};
use timeweave::route::StepFree;
use timeweave::timetable::walking::PathwayFinding;
use timeweave::timetable::Access;

/// Shown with every step-free result (the project's rule for accessibility results).
pub const CAUTION: &str = "Results reflect the feed's data, which may be incomplete or out of date. Confirm on site and with the operator; local codes and licensed practice prevail.";

/// A GTFS accessibility value in words, with the code the feed uses.
pub fn access_words(a: Access) -> &'static str {
    match a {
        Access::Yes => "accessible (1)",
        Access::No => "not accessible (2)",
        Access::Unknown => "no information (0 or empty)",
    }
}

fn role_word(r: StopRole) -> &'static str {
    match r {
        StopRole::Boarding => "boarding",
        StopRole::Alighting => "alighting",
        StopRole::Entrance => "entrance",
    }
}

/// What the user set over the feed's value, in words.
fn override_words(o: Option<timeweave::timetable::Override>, what: &str) -> String {
    match o {
        None => String::new(),
        Some(timeweave::timetable::Override::OutOfService) => format!("; {what} set out of service for this analysis"),
        Some(timeweave::timetable::Override::AssumedAccessible) => format!("; {what} taken as step-free for this analysis"),
    }
}

/// One step-free check in words, naming the element and the feed's value.
pub fn check_text(c: &Check) -> String {
    match &c.fact {
        Fact::Trip { trip_id, wheelchair_accessible, overridden } => {
            format!(
                "trip {trip_id}: wheelchair_accessible {}{}",
                access_words(*wheelchair_accessible),
                override_words(*overridden, "its route")
            )
        }
        Fact::Stop { role, stop_id, name, wheelchair_boarding, inherited_from, overridden } => {
            let how = inherited_from.as_ref().map(|s| format!(" (inherited from station {s})")).unwrap_or_default();
            format!(
                "{} stop {name} ({stop_id}): wheelchair_boarding {}{how}{}",
                role_word(*role),
                access_words(*wheelchair_boarding),
                override_words(*overridden, "it")
            )
        }
        Fact::Pathway { pathway_id, pathway_mode, finding } => {
            let what = match finding {
                PathwayFinding::StepFree => "step-free".to_string(),
                PathwayFinding::Stairs => "stairs are not step-free".to_string(),
                PathwayFinding::Escalator => "escalators are not usable by wheelchair".to_string(),
                PathwayFinding::StairCount { stair_count } => format!("stair_count {stair_count}"),
                PathwayFinding::TooSteep { max_slope, limit } => format!("max_slope {max_slope} is steeper than {limit}"),
                PathwayFinding::TooNarrow { min_width_m, limit_m } => format!("min_width {min_width_m} m is narrower than {limit_m} m"),
                PathwayFinding::OutOfService => "out of service (set for this analysis)".to_string(),
                PathwayFinding::AssumedStepFree => "taken as step-free (set for this analysis)".to_string(),
            };
            format!("pathway {pathway_id} ({pathway_mode}): {what}")
        }
        Fact::Street => "street walk: the feed does not describe streets; assumed step-free".to_string(),
    }
}

/// A blocking leg of the standard journey in words.
pub fn blocked_text(b: &Blocked) -> String {
    let what = match &b.route {
        Some(r) => format!("{} {} from {} to {}", r.mode, r.short_name, b.start, b.end),
        None if b.kind == LegKind::InStation => format!("path inside the station from {} to {}", b.start, b.end),
        None => format!("walk from {} to {}", b.start, b.end),
    };
    format!("{what}: {}", b.checks.iter().map(check_text).collect::<Vec<_>>().join("; "))
}

/// Why there is no journey, in one sentence.
pub fn nothing_found_text(n: &NoJourney) -> String {
    match n {
        NoJourney::OutsideFeedDates { date, first_date, last_date } => {
            format!("{date} is outside the dates the loaded feeds cover ({first_date} to {last_date}).")
        }
        NoJourney::NoServiceOnDate { date } => format!("No trip of the loaded feeds runs on {date}."),
        NoJourney::NoStepFreePath { standard_depart, standard_arrive, .. } => {
            format!("No step-free journey found. The standard journey (leaving {standard_depart}, arriving {standard_arrive}) uses elements that are not step-free.")
        }
        NoJourney::NoConnection => "No connection between these stops on this date after this time.".to_string(),
    }
}

/// A note on the journeys found, in one sentence.
pub fn note_text(n: &Note) -> String {
    match n {
        Note::LenientUnknownUsed => "Some legs rely on elements whose accessibility the feed does not state (lenient step-free).".to_string(),
        Note::BeyondMaxDuration { max_duration_s, duration_s } => format!(
            "Nothing arrives within the longest journey searched ({} min); the first journey found arrives {} min after the time asked for (waiting included) and is shown anyway.",
            max_duration_s / 60,
            duration_s.div_ceil(60)
        ),
    }
}

/// The plan as the JSON the CLI prints with `--json` and the page receives: the core's data,
/// with `text` beside each check, the reason for no journey, each blocking leg and each note.
pub fn plan_json(p: &PlanResult) -> Value {
    let mut v = serde_json::to_value(p).unwrap_or(Value::Null);
    let texts = |v: &mut Value, its: &[Itinerary]| {
        for (it, jv) in its.iter().zip(v.as_array_mut().into_iter().flatten()) {
            for (leg, lv) in it.legs.iter().zip(jv["legs"].as_array_mut().into_iter().flatten()) {
                for (c, cv) in leg.step_free.checks.iter().zip(lv["step_free"]["checks"].as_array_mut().into_iter().flatten()) {
                    cv["text"] = Value::String(check_text(c));
                }
            }
        }
    };
    texts(&mut v["journeys"], &p.journeys);
    texts(&mut v["fewest_rides"], &p.fewest_rides);
    if let Some(n) = &p.nothing_found {
        v["nothing_found"]["text"] = Value::String(nothing_found_text(n));
        if let NoJourney::NoStepFreePath { blocked_by, .. } = n {
            for (b, bv) in blocked_by.iter().zip(v["nothing_found"]["blocked_by"].as_array_mut().into_iter().flatten()) {
                bv["text"] = Value::String(blocked_text(b));
                for (c, cv) in b.checks.iter().zip(bv["checks"].as_array_mut().into_iter().flatten()) {
                    cv["text"] = Value::String(check_text(c));
                }
            }
        }
    }
    for (n, nv) in p.notes.iter().zip(v["notes"].as_array_mut().into_iter().flatten()) {
        nv["text"] = Value::String(note_text(n));
    }
    if p.asked.step_free != StepFree::Off {
        v["caution"] = Value::String(CAUTION.to_string());
    }
    v
}

fn stop_words(p: &StopRef) -> String {
    match &p.platform_code {
        Some(pl) => format!("{} (platform {pl})", p.name),
        None => p.name.clone(),
    }
}

fn minutes(s: u32) -> u32 {
    s.div_ceil(60)
}

fn plural(n: u32, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

fn leg_lines(out: &mut String, leg: &Leg, step_free: bool) {
    match &leg.route {
        Some(route) => {
            if leg.wait_before_s >= 60 {
                let _ = writeln!(out, "  wait {} min, then", leg.wait_before_s / 60);
            }
            let towards = leg.headsign.as_deref().map(|h| format!("towards {h}")).unwrap_or_default();
            let between =
                if leg.calls.is_empty() { String::new() } else { format!("({} between)", plural(leg.calls.len() as u32, "stop", "stops")) };
            let estimate = if leg.frequency_based { " [frequency-based: times are estimates]" } else { "" };
            let _ = writeln!(
                out,
                "  {} {} {} {} → {} {}  {towards} {between}{estimate}",
                leg.depart,
                stop_words(&leg.start),
                route.mode,
                route.short_name,
                leg.arrive,
                stop_words(&leg.end)
            );
        }
        None => {
            let verb = if leg.kind == LegKind::InStation { "change on foot" } else { "walk" };
            let how = if leg.pathways.is_empty() {
                String::new()
            } else {
                format!(" via {}", leg.pathways.iter().map(|p| p.pathway_mode.as_str()).collect::<Vec<_>>().join(", "))
            };
            let _ = writeln!(
                out,
                "  {} {verb} {} min {} → {}{}{how}",
                leg.depart,
                minutes(leg.duration_s),
                stop_words(&leg.start),
                stop_words(&leg.end),
                leg.distance_m.map(|d| format!(", {d} m")).unwrap_or_default()
            );
        }
    }
    if step_free {
        let _ = writeln!(
            out,
            "      step-free: {} — {}",
            status_word(leg.step_free.status),
            leg.step_free.checks.iter().map(check_text).collect::<Vec<_>>().join("; ")
        );
    }
}

fn status_word(a: Access) -> &'static str {
    match a {
        Access::Yes => "yes",
        Access::No => "no",
        Access::Unknown => "unknown",
    }
}

/// The plan as the command line prints it.
pub fn plan_text(r: &PlanResult) -> String {
    let mut out = String::new();
    let q = &r.asked;
    let mode = match q.step_free {
        StepFree::Off => "",
        StepFree::Strict => " (step-free)",
        StepFree::Lenient => " (step-free, lenient)",
    };
    let _ = writeln!(out, "From {} to {} on {} at {}{mode}", q.from, q.to, q.date, q.time);
    if let Some(n) = &r.nothing_found {
        let _ = writeln!(out, "No journey: {}", nothing_found_text(n));
        if let NoJourney::NoStepFreePath { blocked_by, .. } = n {
            for b in blocked_by {
                let _ = writeln!(out, "  blocked by: {}", blocked_text(b));
            }
        }
    }
    for (i, it) in r.journeys.iter().enumerate() {
        let _ = writeln!(
            out,
            "\nJourney {}: {} → {}, {} min ({} min on board, {} min walking, {} min waiting), {}, step-free: {}",
            i + 1,
            it.depart,
            it.arrive,
            it.duration_s / 60,
            minutes(it.ride_s),
            minutes(it.walk_s),
            it.wait_s / 60,
            plural(it.rides, "ride", "rides"),
            status_word(it.step_free)
        );
        for leg in &it.legs {
            leg_lines(&mut out, leg, q.step_free != StepFree::Off);
        }
    }
    if !r.fewest_rides.is_empty() {
        let _ = writeln!(out, "\nEarliest arrival by number of rides:");
        for it in &r.fewest_rides {
            let _ = writeln!(out, "  {}: {} → {} ({} min)", plural(it.rides, "ride", "rides"), it.depart, it.arrive, it.duration_s / 60);
        }
    }
    if let Some(x) = r.step_free_extra_s {
        let _ = writeln!(
            out,
            "\nThe step-free journey arrives {} min {} than the standard one.",
            x.abs() / 60,
            if x >= 0 { "later" } else { "earlier" }
        );
    }
    if q.step_free != StepFree::Off {
        let _ = writeln!(out, "\nCaution: {CAUTION}");
    }
    for n in &r.notes {
        let _ = writeln!(out, "note: {}", note_text(n));
    }
    out
}

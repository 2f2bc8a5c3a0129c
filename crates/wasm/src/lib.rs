//! The WASM shell: the only crate that knows about JavaScript. Values cross as plain objects
//! through serde-wasm-bindgen, in the shapes documented in DEVELOPERS.md; plans carry the words
//! of `timeweave-present`, the same as the command line's `--json`.

use serde::Serialize;
use wasm_bindgen::prelude::*;

use timeweave::engine::{Engine as Core, PlanQuery};
use timeweave::error::FeedIssue;
use timeweave::timetable::FeedMeta;

#[wasm_bindgen]
pub struct Engine {
    core: Core,
}

#[derive(Serialize)]
struct LoadReport<'a> {
    feed: &'a str,
    stops: usize,
    routes: usize,
    trips: usize,
    stop_events: usize,
    warnings: &'a [FeedIssue],
    warnings_total: u64,
    first_date: Option<String>,
    last_date: Option<String>,
    timezone: &'a str,
}

fn report(m: &FeedMeta) -> LoadReport<'_> {
    LoadReport {
        feed: &m.name,
        stops: m.stops,
        routes: m.routes,
        trips: m.trips,
        stop_events: m.stop_events,
        warnings: &m.warnings.issues,
        warnings_total: m.warnings.total,
        first_date: m.first_date.map(|d| d.to_string()),
        last_date: m.last_date.map(|d| d.to_string()),
        timezone: m.timezone.name(),
    }
}

fn to_js<T: Serialize>(v: &T) -> Result<JsValue, JsValue> {
    v.serialize(&serde_wasm_bindgen::Serializer::json_compatible()).map_err(|e| JsValue::from_str(&e.to_string()))
}

#[derive(Serialize)]
struct QueryFailure {
    message: String,
    #[serde(flatten)]
    detail: timeweave::error::QueryError,
}

/// A failed query as the JS error value: its message and its typed detail.
fn failure(e: timeweave::error::QueryError) -> JsValue {
    to_js(&QueryFailure { message: e.to_string(), detail: e }).unwrap_or_else(|e| e)
}

fn step_free_of(strict: bool) -> timeweave::route::StepFree {
    if strict {
        timeweave::route::StepFree::Strict
    } else {
        timeweave::route::StepFree::Off
    }
}

#[wasm_bindgen]
impl Engine {
    #[wasm_bindgen(constructor)]
    pub fn new() -> Engine {
        Engine { core: Core::new() }
    }

    /// Loads a GTFS zip. Throws a `FeedIssue` object on a fatal problem; the feeds loaded before
    /// stay loaded.
    pub fn load_feed(&mut self, name: &str, bytes: &[u8], progress: &js_sys::Function) -> Result<JsValue, JsValue> {
        let mut cb = |stage: &str, fraction: f32| {
            let _ = progress.call2(&JsValue::NULL, &JsValue::from_str(stage), &JsValue::from_f64(fraction as f64));
        };
        match self.core.load_zip(name, bytes, &mut cb) {
            Ok(meta) => to_js(&report(meta)),
            Err(e) => Err(to_js(&e.0)?),
        }
    }

    pub fn remove_feed(&mut self, name: &str) -> bool {
        self.core.remove_feed(name)
    }

    pub fn feeds(&self) -> Result<JsValue, JsValue> {
        to_js(&self.core.tt.feeds.iter().map(report).collect::<Vec<_>>())
    }

    pub fn search_stops(&self, text: &str, limit: usize) -> Result<JsValue, JsValue> {
        to_js(&self.core.search_stops(text, limit))
    }

    /// The one stop `text` names (an id, `feed:stop_id`, or a name that is not ambiguous).
    /// Throws `{ message, AmbiguousStop: { text, candidates } }` or `{ message, UnknownStop: { text,
    /// suggestions } }` otherwise, so the page can ask instead of guessing.
    pub fn resolve_stop(&self, text: &str) -> Result<JsValue, JsValue> {
        self.core.resolve_match(text).map_err(failure).and_then(|m| to_js(&m))
    }

    /// Plans a journey. Throws `{ message, ... }` when the query itself is wrong (unknown stop,
    /// bad date); "no journey" is a normal result.
    pub fn plan(&mut self, query: JsValue) -> Result<JsValue, JsValue> {
        let q: PlanQuery = serde_wasm_bindgen::from_value(query).map_err(|e| JsValue::from_str(&format!("bad query: {e}")))?;
        self.core.plan(&q).map_err(failure).and_then(|r| to_js(&timeweave_present::plan_json(&r)))
    }

    /// Every platform reached, earliest first. The list can hold tens of thousands of objects, so
    /// it crosses as JSON text and is parsed by the browser's own parser, which builds them
    /// faster than one serde-wasm-bindgen call per field.
    pub fn reach(&mut self, from: &str, date: &str, time: &str, step_free: bool, minutes: u32) -> Result<JsValue, JsValue> {
        let r = self.core.reach(from, date, time, step_free_of(step_free), minutes).map_err(failure)?;
        let text = serde_json::to_string(&r).map_err(|e| JsValue::from_str(&e.to_string()))?;
        js_sys::JSON::parse(&text)
    }

    /// Minutes to every stop (index order of `stop_ids`; 4294967295: not reached), as a
    /// Uint32Array: the one-to-all answer without building an object per stop.
    pub fn reach_minutes(&mut self, from: &str, date: &str, time: &str, step_free: bool, minutes: u32) -> Result<Vec<u32>, JsValue> {
        self.core.reach_minutes(from, date, time, step_free_of(step_free), minutes).map_err(failure)
    }

    pub fn stop_ids(&self) -> Result<JsValue, JsValue> {
        to_js(&self.core.stop_ids())
    }

    pub fn sketch(&self) -> Result<JsValue, JsValue> {
        to_js(&self.core.sketch())
    }

    /// Bytes of the timetable's per-stop-event arrays (the date's graph is not counted).
    pub fn memory_bytes(&self) -> usize {
        self.core.tt.event_bytes()
    }
}

impl Default for Engine {
    fn default() -> Self {
        Engine::new()
    }
}

//! The WASM shell: the only crate that knows about JavaScript. Values cross as plain objects
//! through serde-wasm-bindgen, in the shapes documented in DEVELOPERS.md; plans carry the words
//! of `timeweave-present`, the same as the command line's `--json`.

use serde::Serialize;
use wasm_bindgen::prelude::*;

use timeweave::analysis::window::{Destinations, Rows, TravelTimes};
use timeweave::engine::compare::{ComparePairRow, CompareQuery, CompareReport, PairChange};
use timeweave::engine::interchange::{ConnectionRow, InterchangeQuery};
use timeweave::engine::kiosk::BoardQuery;
use timeweave::engine::stepfree::{StepFreePairRow, StepFreeQuery, StepFreeReport};
use timeweave::engine::window::{WindowQuery, WindowSetting};
use timeweave::engine::{Engine as Core, PlanQuery};
use timeweave::error::FeedIssue;
use timeweave::route::SearchState;
use timeweave::timetable::FeedMeta;
use timeweave_tables::{Format, MatrixTable};

#[wasm_bindgen]
pub struct Engine {
    core: Core,
    /// The window setting and destinations of the matrix being computed (`matrix_setup`).
    matrix: Option<(WindowSetting, Destinations)>,
    state: SearchState,
    times: TravelTimes,
    rows: Rows,
    /// The matrix file being written (`table_begin` … `table_finish`).
    table: Option<MatrixTable<Vec<u8>>>,
    /// The rows of the last one-station interchange audit, handed out a pair at a time.
    ix_rows: Vec<ConnectionRow>,
    /// The last step-free audit, for its downloads.
    sf: Option<(StepFreeReport, Vec<StepFreePairRow>)>,
    /// The version after of a comparison: a timetable of its own, never merged with `core`.
    after: Core,
    /// The last comparison, for its downloads.
    cmp: Option<(CompareReport, Vec<ComparePairRow>)>,
}

fn json_value<T: Serialize>(v: &T) -> Result<JsValue, JsValue> {
    let text = serde_json::to_string(v).map_err(|e| JsValue::from_str(&e.to_string()))?;
    js_sys::JSON::parse(&text)
}

fn typed<T: Into<JsValue>>(o: &js_sys::Object, key: &str, v: T) -> Result<(), JsValue> {
    js_sys::Reflect::set(o, &JsValue::from_str(key), &v.into()).map(|_| ())
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

/// Pair rows a page shows: all up to 5,000, else those `first` picks before the others, 5,000 in all.
fn first_shown<T>(rows: &[T], first: impl Fn(&T) -> bool) -> Vec<&T> {
    const SHOWN: usize = 5000;
    rows.iter().filter(|r| first(r)).chain(rows.iter().filter(|r| !first(r))).take(SHOWN).collect()
}

/// Tells a page's `progress(done, total)` callback, if it gave one.
fn tell(progress: &Option<js_sys::Function>, done: usize, total: usize) {
    if let Some(f) = progress {
        let _ = f.call2(&JsValue::NULL, &JsValue::from(done as u32), &JsValue::from(total as u32));
    }
}

fn interchange_query(v: JsValue) -> Result<InterchangeQuery, JsValue> {
    serde_wasm_bindgen::from_value(v).map_err(|e| JsValue::from_str(&format!("bad interchange query: {e}")))
}

fn window_query(v: JsValue) -> Result<WindowQuery, JsValue> {
    serde_wasm_bindgen::from_value(v).map_err(|e| JsValue::from_str(&format!("bad window request: {e}")))
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
        Engine {
            core: Core::new(),
            matrix: None,
            state: SearchState::new(),
            times: TravelTimes::default(),
            rows: Rows::default(),
            table: None,
            ix_rows: Vec::new(),
            sf: None,
            after: Core::new(),
            cmp: None,
        }
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

    /// Reach over a window of departures (`WindowQuery` fields), every place reached with its
    /// shortest time, percentiles and share within the cut-off; as JSON parsed by the browser.
    pub fn reach_window(&mut self, from: &str, query: JsValue) -> Result<JsValue, JsValue> {
        let q = window_query(query)?;
        json_value(&self.core.reach_window(from, &q).map_err(failure)?)
    }

    /// The travel time of one pair at every departure of the window, and its summary.
    pub fn pair_profile(&mut self, from: &str, to: &str, query: JsValue) -> Result<JsValue, JsValue> {
        let q = window_query(query)?;
        json_value(&self.core.pair_profile(from, to, &q).map_err(failure)?)
    }

    /// The places analyses report on, in index order: `{ id, name, lat, lon, station }`.
    pub fn places(&self) -> Result<JsValue, JsValue> {
        #[derive(Serialize)]
        struct Place<'a> {
            id: &'a str,
            name: &'a str,
            lat: f64,
            lon: f64,
            station: bool,
        }
        let c = &self.core;
        let list: Vec<Place> = c
            .places
            .stops
            .iter()
            .map(|&s| {
                let st = c.tt.stop(s);
                Place { id: &st.id, name: &st.name, lat: st.lat, lon: st.lon, station: st.kind == timeweave::timetable::StopKind::Station }
            })
            .collect();
        json_value(&list)
    }

    /// Checks a matrix request and keeps it for `matrix_origin`: the window (`WindowQuery`
    /// fields), the destination places (`null`: all) and, for the cumulative opportunities,
    /// weights per place (`null`: none). Throws on a bad request, before any search.
    pub fn matrix_setup(&mut self, query: JsValue, destinations: Option<Vec<u32>>, weights: Option<Vec<f64>>) -> Result<u32, JsValue> {
        let q = window_query(query)?;
        let setting = self.core.window_setting(&q).map_err(failure)?;
        let n = self.core.places.len();
        let report: Option<Vec<usize>> = destinations.map(|d| d.into_iter().map(|p| p as usize).filter(|&p| p < n).collect());
        let w: Vec<(usize, f64)> = weights.unwrap_or_default().into_iter().enumerate().filter(|(p, w)| *p < n && *w > 0.0).collect();
        let dest = self.core.destinations(report.as_deref(), &w);
        self.matrix = Some((setting, dest));
        Ok(n as u32)
    }

    /// The rows of origin place `origin` under the kept matrix request, column by column as typed
    /// arrays (no object per row): `{ to: Uint32Array (destination places), min_s: Uint32Array,
    /// percentiles_s: Float64Array (row-major, NaN where none), share_within_cutoff:
    /// Float64Array (NaN without a cut-off), departures_reached: Uint32Array, opportunities }`.
    pub fn matrix_origin(&mut self, origin: u32) -> Result<JsValue, JsValue> {
        let (setting, dest) = self.matrix.take().ok_or_else(|| JsValue::from_str("matrix_setup was not called"))?;
        if origin as usize >= self.core.places.len() {
            self.matrix = Some((setting, dest));
            return Err(JsValue::from_str(&format!("no place {origin}")));
        }
        let run = self.core.window_run(&setting);
        run.origin_rows(&mut self.state, origin as usize, &dest, &mut self.times, &mut self.rows);
        self.matrix = Some((setting, dest));
        let r = &self.rows;
        let o = js_sys::Object::new();
        typed(&o, "to", js_sys::Uint32Array::from(&r.to[..]))?;
        typed(&o, "min_s", js_sys::Uint32Array::from(&r.min_s[..]))?;
        let pct: Vec<f64> = r.percentiles_s.iter().map(|x| x.unwrap_or(f64::NAN)).collect();
        typed(&o, "percentiles_s", js_sys::Float64Array::from(&pct[..]))?;
        let share: Vec<f64> = r.share_within_cutoff.iter().map(|x| x.unwrap_or(f64::NAN)).collect();
        typed(&o, "share_within_cutoff", js_sys::Float64Array::from(&share[..]))?;
        typed(&o, "departures_reached", js_sys::Uint32Array::from(&r.departures_reached[..]))?;
        typed(&o, "opportunities", r.opportunities.map_or(JsValue::NULL, JsValue::from_f64))?;
        Ok(o.into())
    }

    /// Starts a matrix file, `csv` or `parquet`, with these percentile columns.
    pub fn table_begin(&mut self, format: &str, percentiles: Vec<f64>) -> Result<(), JsValue> {
        let f = Format::of_name(&format!("x.{format}")).ok_or_else(|| JsValue::from_str("format is csv or parquet"))?;
        self.table = Some(MatrixTable::new(f, Vec::new(), &percentiles).map_err(|e| JsValue::from_str(&e.to_string()))?);
        Ok(())
    }

    /// Appends one origin's rows (the arrays `matrix_origin` returned) to the file being written.
    pub fn table_add(
        &mut self,
        origin: u32,
        to: Vec<u32>,
        min_s: Vec<u32>,
        percentiles_s: Vec<f64>,
        share: Vec<f64>,
        reached: Vec<u32>,
    ) -> Result<(), JsValue> {
        let t = self.table.as_mut().ok_or_else(|| JsValue::from_str("table_begin was not called"))?;
        let c = &self.core;
        let n = c.places.len() as u32;
        if origin >= n || to.iter().any(|&p| p >= n) {
            return Err(JsValue::from_str("a place index is out of range"));
        }
        let some = |x: f64| (!x.is_nan()).then_some(x);
        let rows = Rows {
            to,
            min_s,
            percentiles_s: percentiles_s.into_iter().map(some).collect(),
            share_within_cutoff: share.into_iter().map(some).collect(),
            departures_reached: reached,
            opportunities: None,
        };
        t.origin(c.place_id(origin as usize), &rows, |p| c.place_id(p as usize)).map_err(|e| JsValue::from_str(&e.to_string()))
    }

    /// Finishes the file and returns its bytes.
    pub fn table_finish(&mut self) -> Result<Vec<u8>, JsValue> {
        let t = self.table.take().ok_or_else(|| JsValue::from_str("table_begin was not called"))?;
        t.finish().map_err(|e| JsValue::from_str(&e.to_string()))
    }

    /// The interchange audit (`InterchangeQuery` fields) as JSON parsed by the browser: the
    /// summaries, the ranking and (one station) its departures, without the rows — a busy
    /// station has hundreds of thousands. The rows of a one-station audit are kept here and
    /// handed out a pair at a time (`interchange_pair`). `progress(done, total)` is told after
    /// each station.
    pub fn interchange(&mut self, query: JsValue, progress: Option<js_sys::Function>) -> Result<JsValue, JsValue> {
        let q = interchange_query(query)?;
        let keep = q.station != "all";
        let mut rows = Vec::new();
        self.ix_rows = Vec::new();
        let report = self
            .core
            .interchange_with(&q, &mut |done, total, chunk| {
                if keep {
                    rows.extend_from_slice(chunk);
                }
                tell(&progress, done, total);
                true
            })
            .map_err(failure)?
            .ok_or_else(|| JsValue::from_str("cancelled"))?;
        self.ix_rows = rows;
        json_value(&report)
    }

    /// The rows of one arriving × leaving route/direction of the last one-station audit.
    pub fn interchange_pair(
        &self,
        arr_route_id: &str,
        arr_direction: &str,
        dep_route_id: &str,
        dep_direction: &str,
    ) -> Result<JsValue, JsValue> {
        let rows: Vec<&ConnectionRow> = self
            .ix_rows
            .iter()
            .filter(|r| {
                &*r.arr_route_id == arr_route_id
                    && &*r.arr_direction == arr_direction
                    && &*r.dep_route_id == dep_route_id
                    && &*r.dep_direction == dep_direction
            })
            .collect();
        json_value(&rows)
    }

    /// One table of the interchange audit as CSV bytes, the same as the CLI writes: `rows`
    /// (`--out`), `pairs` or `stations`.
    pub fn interchange_csv(&mut self, query: JsValue, table: &str) -> Result<Vec<u8>, JsValue> {
        let q = interchange_query(query)?;
        let err = |e: timeweave_tables::TableError| JsValue::from_str(&e.to_string());
        match table {
            "rows" => {
                let mut t = timeweave_tables::ConnectionTable::new(Vec::new()).map_err(err)?;
                let core = &mut self.core;
                timeweave_tables::fill(|sink| core.interchange_with(&q, sink), |chunk| t.add(chunk), |_, _| true).map_err(|e| match e {
                    timeweave_tables::FillError::Run(e) => failure(e),
                    timeweave_tables::FillError::Table(e) => err(e),
                })?;
                t.finish().map_err(err)
            }
            "pairs" | "stations" => {
                let r =
                    self.core.interchange_with(&q, &mut |_, _, _| true).map_err(failure)?.ok_or_else(|| JsValue::from_str("cancelled"))?;
                if table == "pairs" {
                    timeweave_tables::rows_csv(Vec::new(), &r.pairs).map_err(err)
                } else {
                    timeweave_tables::rows_csv(Vec::new(), &r.stations).map_err(err)
                }
            }
            other => Err(JsValue::from_str(&format!("no table {other:?}: rows, pairs or stations"))),
        }
    }

    /// The step-free audit (`StepFreeQuery` fields; an alerts file's bytes in `alerts`, read
    /// into outages first). Returns `{ report, pairs, pairs_total, skipped }`: the report (counts,
    /// ranked elements, outages, completeness, the caution) and the pairs — all of them up to
    /// 5,000, else the blocked and lost ones first, 5,000 in all. The whole result is kept for
    /// `stepfree_csv`. `progress(done, total)` after each origin.
    pub fn stepfree(&mut self, query: JsValue, alerts: Option<Vec<u8>>, progress: Option<js_sys::Function>) -> Result<JsValue, JsValue> {
        let mut q: StepFreeQuery =
            serde_wasm_bindgen::from_value(query).map_err(|e| JsValue::from_str(&format!("bad step-free query: {e}")))?;
        let mut skipped = Vec::new();
        if let Some(bytes) = alerts {
            let found = self.core.outages_from_alerts(&bytes, &q.date, &q.window).map_err(failure)?;
            q.add_outages(found.outages);
            skipped = found.skipped;
        }
        self.sf = None;
        let mut rows = Vec::new();
        let report = self
            .core
            .stepfree_with(&q, 1, &mut |done, total, chunk| {
                rows.extend_from_slice(chunk);
                tell(&progress, done, total);
                true
            })
            .map_err(failure)?
            .ok_or_else(|| JsValue::from_str("cancelled"))?;
        use timeweave::engine::stepfree::OutageEffect;
        let shown = first_shown(&rows, |r| {
            r.status == timeweave::analysis::stepfree::PairStatus::Blocked || r.outage_status == Some(OutageEffect::Lost)
        });
        #[derive(Serialize)]
        struct Out<'a> {
            report: &'a StepFreeReport,
            pairs: Vec<&'a StepFreePairRow>,
            pairs_total: usize,
            skipped: Vec<String>,
        }
        let v = json_value(&Out { report: &report, pairs: shown, pairs_total: rows.len(), skipped })?;
        self.sf = Some((report, rows));
        Ok(v)
    }

    /// One file of the last step-free audit, the same as the CLI writes: `pairs`, `elements`,
    /// `completeness` or `outages` (CSV bytes).
    pub fn stepfree_csv(&self, table: &str) -> Result<Vec<u8>, JsValue> {
        let (r, rows) = self.sf.as_ref().ok_or_else(|| JsValue::from_str("no step-free audit yet"))?;
        let err = |e: timeweave_tables::TableError| JsValue::from_str(&e.to_string());
        match table {
            "pairs" => {
                let mut t = timeweave_tables::StepFreePairTable::new(Vec::new(), !r.outages.is_empty()).map_err(err)?;
                t.add(rows).map_err(err)?;
                t.finish().map_err(err)
            }
            "elements" => timeweave_tables::rows_csv(Vec::new(), &r.elements).map_err(err),
            "completeness" => timeweave_tables::rows_csv(Vec::new(), &r.completeness).map_err(err),
            "outages" => timeweave_tables::rows_csv(Vec::new(), &r.outages).map_err(err),
            other => Err(JsValue::from_str(&format!("no table {other:?}: pairs, elements, completeness or outages"))),
        }
    }

    /// Loads one feed of the version after of a comparison (kept apart from the loaded feeds).
    pub fn after_load(&mut self, name: &str, bytes: &[u8]) -> Result<JsValue, JsValue> {
        match self.after.load_zip(name, bytes, &mut |_, _| {}) {
            Ok(meta) => to_js(&report(meta)),
            Err(e) => Err(to_js(&e.0)?),
        }
    }

    /// Empties the version after.
    pub fn after_clear(&mut self) {
        self.after = Core::new();
        self.cmp = None;
    }

    /// Compares the loaded feeds (before) with the version after (`CompareQuery` fields):
    /// `{ report, pairs, pairs_total }` — the pairs all up to 5,000, else the changed ones first.
    /// Kept for `compare_csv`. `progress(done, total)` after each origin.
    pub fn compare(&mut self, query: JsValue, progress: Option<js_sys::Function>) -> Result<JsValue, JsValue> {
        let q: CompareQuery = serde_wasm_bindgen::from_value(query).map_err(|e| JsValue::from_str(&format!("bad comparison: {e}")))?;
        self.cmp = None;
        let mut rows = Vec::new();
        let report = timeweave::engine::compare::compare(&mut self.core, &mut self.after, &q, 1, &mut |done, total, chunk| {
            rows.extend_from_slice(chunk);
            tell(&progress, done, total);
            true
        })
        .map_err(failure)?
        .ok_or_else(|| JsValue::from_str("cancelled"))?;
        let shown = first_shown(&rows, |r| !matches!(r.status, PairChange::Unchanged | PairChange::Unreachable));
        #[derive(Serialize)]
        struct Out<'a> {
            report: &'a CompareReport,
            pairs: Vec<&'a ComparePairRow>,
            pairs_total: usize,
        }
        let v = json_value(&Out { report: &report, pairs: shown, pairs_total: rows.len() })?;
        self.cmp = Some((report, rows));
        Ok(v)
    }

    /// One file of the last comparison, as the CLI writes it: `pairs`, `stations`, `routes` or
    /// `connections` (CSV bytes).
    pub fn compare_csv(&self, table: &str) -> Result<Vec<u8>, JsValue> {
        let (r, rows) = self.cmp.as_ref().ok_or_else(|| JsValue::from_str("no comparison yet"))?;
        let err = |e: timeweave_tables::TableError| JsValue::from_str(&e.to_string());
        match table {
            "pairs" => {
                let mut t = timeweave_tables::SerdeTable::new(Vec::new());
                t.add(rows).map_err(err)?;
                t.finish().map_err(err)
            }
            "stations" => timeweave_tables::rows_csv(Vec::new(), &r.stations).map_err(err),
            "routes" => timeweave_tables::rows_csv(Vec::new(), &r.routes).map_err(err),
            "connections" => timeweave_tables::rows_csv(Vec::new(), &r.connections).map_err(err),
            other => Err(JsValue::from_str(&format!("no table {other:?}: pairs, stations, routes or connections"))),
        }
    }

    /// The elements an outage can be set on, for a picker: lifts and ramps (pathways), stations
    /// and entrances, with where they are: `[{ id: "pathway:ID", kind, name, station, lat, lon }]`.
    pub fn accessibility_elements(&self) -> Result<JsValue, JsValue> {
        json_value(&self.core.accessibility_elements())
    }

    /// The two-ride journey of a made connection (a row's `arr_event` and `dep_event` on `date`).
    pub fn connection_journey(&mut self, date: &str, arr_event: u32, dep_event: u32) -> Result<JsValue, JsValue> {
        json_value(&self.core.connection_journey(date, arr_event, dep_event).map_err(failure)?)
    }

    pub fn stop_ids(&self) -> Result<JsValue, JsValue> {
        to_js(&self.core.stop_ids())
    }

    pub fn sketch(&self) -> Result<JsValue, JsValue> {
        to_js(&self.core.sketch())
    }

    /// Bytes of the timetable's per-stop-event arrays (the date's graph is not counted).
    /// Loads a snapshot (`timeweave snapshot`) into an engine with nothing loaded; the error is
    /// the snapshot's own sentence (damaged, cut short, another format version…).
    pub fn load_snapshot(&mut self, bytes: &[u8]) -> Result<JsValue, JsValue> {
        let info = self.core.load_snapshot(bytes).map_err(|e| js_sys::Error::new(&e.to_string()))?;
        to_js(info)
    }

    /// The kiosk board from `stop` at the clock reading `now_ms` (ms since the Unix epoch).
    pub fn board(&mut self, stop: &str, destinations: Vec<String>, now_ms: f64) -> Result<JsValue, JsValue> {
        let mut q = BoardQuery::new(stop, now_ms as i64);
        q.destinations = destinations;
        self.core.board(&q).map_err(failure).and_then(|b| to_js(&b))
    }

    pub fn memory_bytes(&self) -> usize {
        self.core.tt.event_bytes()
    }
}

impl Default for Engine {
    fn default() -> Self {
        Engine::new()
    }
}

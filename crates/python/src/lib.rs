//! The Python shell: `timeweave._native`, a PyO3 extension around the same core as the command
//! line. Tables cross as the bytes the CLI would write (Parquet for the matrix, CSV with the CLI's
//! columns for the rest; `python/timeweave/__init__.py` turns them into pyarrow tables with
//! explicit column types), so a notebook and a `timeweave … --out` run give the same table.
//!
//! Every search runs with the GIL released (`Python::detach`), so other Python threads (a Dask
//! worker's heartbeat among them) keep running. Errors are `timeweave.TimeweaveError` with the
//! CLI's located message.

use std::path::PathBuf;
use std::sync::atomic::AtomicBool;
use std::sync::Mutex;

use pyo3::create_exception;
use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;
use pyo3::types::PyBytes;
use timeweave::analysis::matrix;
use timeweave::engine::interchange::InterchangeQuery;
use timeweave::engine::stepfree::StepFreeQuery;
use timeweave::engine::window::WindowQuery;
use timeweave::engine::{Engine, PlanQuery};
use timeweave_tables::{fill, ConnectionTable, FillError, Format, MatrixTable, StepFreePairTable};

create_exception!(_native, TimeweaveError, PyValueError, "A request timeweave refuses, with the CLI's located message.");

fn fail(e: impl std::fmt::Display) -> PyErr {
    TimeweaveError::new_err(e.to_string())
}

fn filled<E: std::fmt::Display>(e: FillError<E>) -> PyErr {
    match e {
        FillError::Run(e) => fail(e),
        FillError::Table(e) => fail(e),
    }
}

fn parse<T: serde::de::DeserializeOwned>(what: &str, json: &str) -> PyResult<T> {
    serde_json::from_str(json).map_err(|e| fail(format!("bad {what}: {e}")))
}

/// One or more feeds (GTFS zips, folders or snapshots) loaded together.
#[pyclass(module = "timeweave._native", name = "Network")]
struct Network {
    engine: Mutex<Engine>,
}

impl Network {
    /// Runs `f` on the engine with the GIL released.
    fn with<T: Send>(&self, py: Python<'_>, f: impl FnOnce(&mut Engine) -> PyResult<T> + Send) -> PyResult<T> {
        py.detach(|| {
            let mut engine = self.engine.lock().map_err(|_| fail("an earlier call failed inside the engine"))?;
            f(&mut engine)
        })
    }
}

#[pymethods]
impl Network {
    #[new]
    fn new(py: Python<'_>, feeds: Vec<PathBuf>) -> PyResult<Self> {
        if feeds.is_empty() {
            return Err(fail("give at least one feed"));
        }
        let engine = py.detach(|| {
            let mut engine = Engine::new();
            for f in &feeds {
                timeweave_disk::load_feed(&mut engine, f, &mut |_, _| {}).map_err(|e| fail(e.0))?;
            }
            Ok::<_, PyErr>(engine)
        })?;
        Ok(Network { engine: Mutex::new(engine) })
    }

    /// The feeds' reports (name, counts, dates, time zone) as JSON.
    fn feeds_json(&self, py: Python<'_>) -> PyResult<String> {
        self.with(py, |e| serde_json::to_string(&e.tt.feeds).map_err(fail))
    }

    /// The place ids analyses report on, in index order (the matrix's origin order).
    fn places(&self, py: Python<'_>) -> PyResult<Vec<String>> {
        self.with(py, |e| Ok((0..e.places.len()).map(|p| e.place_id(p).to_string()).collect()))
    }

    /// A plan (PlanQuery as JSON) as the CLI's `--json`.
    fn plan_json(&self, py: Python<'_>, query: &str) -> PyResult<String> {
        let q: PlanQuery = parse("plan query", query)?;
        self.with(py, |e| {
            let r = e.plan(&q).map_err(fail)?;
            serde_json::to_string(&timeweave_present::plan_json(&r)).map_err(fail)
        })
    }

    /// Reach over a window from one place: the CLI's `reach --window --out` CSV.
    fn reach_csv<'py>(&self, py: Python<'py>, from_stop: &str, query: &str) -> PyResult<Bound<'py, PyBytes>> {
        let q: WindowQuery = parse("window query", query)?;
        let bytes = self.with(py, |e| {
            let r = e.reach_window(from_stop, &q).map_err(fail)?;
            timeweave_tables::reach_csv(Vec::new(), &r).map_err(fail)
        })?;
        Ok(PyBytes::new(py, &bytes))
    }

    /// The travel-time matrix over a window as the CLI's Parquet file; `shard` = (i, n) takes the
    /// i-th of n consecutive runs of the origins, as `timeweave matrix --shard i/n`. A
    /// KeyboardInterrupt stops it between origins.
    #[pyo3(signature = (query, origins=None, destinations=None, shard=None, threads=None))]
    fn matrix_parquet<'py>(
        &self,
        py: Python<'py>,
        query: &str,
        origins: Option<Vec<String>>,
        destinations: Option<Vec<String>>,
        shard: Option<(usize, usize)>,
        threads: Option<usize>,
    ) -> PyResult<Bound<'py, PyBytes>> {
        let q: WindowQuery = parse("window query", query)?;
        if let Some((i, n)) = shard {
            if i == 0 || n == 0 || i > n {
                return Err(fail(format!("shard ({i}, {n}): give (i, n) with 1 <= i <= n")));
            }
        }
        let bytes = self.with(py, |e| {
            let setting = e.window_setting(&q).map_err(fail)?;
            let resolve = |e: &Engine, list: &Option<Vec<String>>, what: &str| {
                list.as_ref()
                    .map(|ids| e.resolve_places(ids).map_err(|(i, err)| fail(format!("{what}[{i}] {:?}: {err}", ids[i]))))
                    .transpose()
            };
            let mut from = resolve(e, &origins, "origins")?.unwrap_or_else(|| (0..e.places.len()).collect());
            if let Some((i, n)) = shard {
                from = matrix::shard(&from, i, n).to_vec();
            }
            let report = resolve(e, &destinations, "destinations")?;
            let dest = e.destinations(report.as_deref(), &[]);
            let ids: Vec<String> = (0..e.places.len()).map(|p| e.place_id(p).to_string()).collect();
            let mut table = MatrixTable::new(Format::Parquet, Vec::new(), &setting.spec.percentiles).map_err(fail)?;
            let threads = threads.unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get())).max(1);
            let never = AtomicBool::new(false);
            let run = e.window_run(&setting);
            // Ctrl-C in Python (KeyboardInterrupt) is seen between origins and stops the run.
            matrix::run(run, &from, &dest, threads, &never, |_, o, rows| {
                Python::attach(|py| py.check_signals())?;
                table.origin(&ids[o], rows, |to| ids[to as usize].as_str()).map_err(fail)
            })?;
            table.finish().map_err(fail)
        })?;
        Ok(PyBytes::new(py, &bytes))
    }

    /// The interchange audit's rows (InterchangeQuery as JSON) as the CLI's `NAME.csv`.
    fn interchange_csv<'py>(&self, py: Python<'py>, query: &str) -> PyResult<Bound<'py, PyBytes>> {
        let q: InterchangeQuery = parse("interchange query", query)?;
        let bytes = self.with(py, |e| {
            let mut table = ConnectionTable::new(Vec::new()).map_err(fail)?;
            fill(|sink| e.interchange_with(&q, sink), |rows| table.add(rows), |_, _| true).map_err(filled)?;
            table.finish().map_err(fail)
        })?;
        Ok(PyBytes::new(py, &bytes))
    }

    /// The step-free audit's pairs (StepFreeQuery as JSON) as the CLI's `pairs.csv`.
    #[pyo3(signature = (query, threads=None))]
    fn stepfree_csv<'py>(&self, py: Python<'py>, query: &str, threads: Option<usize>) -> PyResult<Bound<'py, PyBytes>> {
        let q: StepFreeQuery = parse("step-free query", query)?;
        let bytes = self.with(py, |e| {
            let mut table = StepFreePairTable::new(Vec::new(), !q.outages.is_empty()).map_err(fail)?;
            let threads = threads.unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get())).max(1);
            fill(|sink| e.stepfree_with(&q, threads, sink), |rows| table.add(rows), |_, _| true).map_err(filled)?;
            table.finish().map_err(fail)
        })?;
        Ok(PyBytes::new(py, &bytes))
    }
}

#[pymodule]
fn _native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<Network>()?;
    m.add("TimeweaveError", m.py().get_type::<TimeweaveError>())?;
    Ok(())
}

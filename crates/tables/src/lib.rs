//! Tables out of the window analyses, into any writer: the travel-time matrix (long format, one
//! row per reachable pair) as CSV (RFC 4180, through the `csv` crate) or Parquet (through the
//! `parquet` crate's Arrow writer, Snappy-compressed, a row group every [`ROW_GROUP`] rows), the
//! reach of one origin and the cumulative opportunities as CSV. The CLI writes them to files, the
//! WASM shell into memory for a download, the Python package hands Arrow data on.
//!
//! Column names: `from_stop_id`, `to_stop_id`, `min_s`, one `p{P}_s` per requested percentile
//! (`p5_s`, `p97_5_s` for 97.5), `share_within_cutoff` (empty without a cut-off),
//! `departures_with_journey`. Times are seconds; percentiles are rounded to the millisecond;
//! shares are written in full (the shortest text that reads back to the same number).

use std::io::Write;
use std::sync::Arc;

use arrow_array::builder::{Float64Builder, StringBuilder, UInt32Builder};
use arrow_array::{ArrayRef, RecordBatch};
use arrow_schema::{DataType, Field, Schema, SchemaRef};
use parquet::arrow::ArrowWriter;
use parquet::basic::Compression;
use parquet::file::properties::WriterProperties;
use timeweave::analysis::window::{Rows, NONE};
use timeweave::engine::interchange::{ConnectionRow, Text};
use timeweave::engine::window::WindowReach;

/// Rows per Parquet row group (and per Arrow batch handed to the writer).
pub const ROW_GROUP: usize = 65_536;

#[derive(Debug, thiserror::Error)]
pub enum TableError {
    #[error("{0}")]
    Io(#[from] std::io::Error),
    #[error("CSV: {0}")]
    Csv(#[from] csv::Error),
    #[error("Parquet: {0}")]
    Parquet(#[from] parquet::errors::ParquetError),
    #[error("Arrow: {0}")]
    Arrow(#[from] arrow_schema::ArrowError),
}

/// Why [`fill`] stopped: the analysis refused (`Run`) or the table could not be written.
#[derive(Debug)]
pub enum FillError<E> {
    Run(E),
    Table(TableError),
}

/// Fills a table from an analysis that hands its rows on in chunks: `run` calls its sink with
/// done, total and the rows; each chunk goes to `add`, and the first write error stops the run;
/// `go_on(done, total)` is asked after each chunk (progress, cancel). The one loop the CLI, the
/// page and the Python package share for the interchange and step-free tables.
pub fn fill<R, T, E>(
    run: impl FnOnce(&mut dyn FnMut(usize, usize, &[T]) -> bool) -> Result<R, E>,
    mut add: impl FnMut(&[T]) -> Result<(), TableError>,
    mut go_on: impl FnMut(usize, usize) -> bool,
) -> Result<R, FillError<E>> {
    let mut failed = None;
    let r = run(&mut |done, total, rows| {
        if let Err(e) = add(rows) {
            failed = Some(e);
            return false;
        }
        go_on(done, total)
    })
    .map_err(FillError::Run)?;
    match failed {
        Some(e) => Err(FillError::Table(e)),
        None => Ok(r),
    }
}

/// The file formats a matrix can be written in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Csv,
    Parquet,
}

impl Format {
    /// The format a file name asks for, by its extension.
    pub fn of_name(name: &str) -> Option<Format> {
        let lower = name.to_ascii_lowercase();
        if lower.ends_with(".csv") {
            Some(Format::Csv)
        } else if lower.ends_with(".parquet") {
            Some(Format::Parquet)
        } else {
            None
        }
    }
}

/// The column name of percentile `p`: `p50_s`, `p97_5_s`.
pub fn percentile_column(p: f64) -> String {
    let text = format!("{}", (p * 1000.0).round() / 1000.0);
    format!("p{}_s", text.replace('.', "_"))
}

/// The matrix's column names for these percentiles.
pub fn matrix_columns(percentiles: &[f64]) -> Vec<String> {
    let mut c = vec!["from_stop_id".to_string(), "to_stop_id".into(), "min_s".into()];
    c.extend(percentiles.iter().map(|&p| percentile_column(p)));
    c.extend(["share_within_cutoff".to_string(), "departures_with_journey".into()]);
    c
}

/// Rounds to the millisecond, the precision written.
fn ms(x: f64) -> f64 {
    (x * 1000.0).round() / 1000.0
}

fn cell(x: Option<f64>) -> String {
    x.map(|v| format!("{}", ms(v))).unwrap_or_default()
}

struct ParquetSink<W: Write + Send> {
    writer: ArrowWriter<W>,
    schema: SchemaRef,
    from: StringBuilder,
    to: StringBuilder,
    min: UInt32Builder,
    pct: Vec<Float64Builder>,
    share: Float64Builder,
    reached: UInt32Builder,
    rows: usize,
}

impl<W: Write + Send> ParquetSink<W> {
    fn flush(&mut self) -> Result<(), TableError> {
        if self.rows == 0 {
            return Ok(());
        }
        let mut cols: Vec<ArrayRef> = vec![Arc::new(self.from.finish()), Arc::new(self.to.finish()), Arc::new(self.min.finish())];
        cols.extend(self.pct.iter_mut().map(|b| Arc::new(b.finish()) as ArrayRef));
        cols.push(Arc::new(self.share.finish()));
        cols.push(Arc::new(self.reached.finish()));
        self.writer.write(&RecordBatch::try_new(self.schema.clone(), cols)?)?;
        self.writer.flush()?;
        self.rows = 0;
        Ok(())
    }
}

enum Inner<W: Write + Send> {
    Csv(Box<csv::Writer<W>>),
    Parquet(Box<ParquetSink<W>>),
}

/// A matrix being written, origin by origin.
pub struct MatrixTable<W: Write + Send> {
    inner: Inner<W>,
    percentiles: usize,
    pub rows: u64,
}

impl<W: Write + Send> MatrixTable<W> {
    pub fn new(format: Format, out: W, percentiles: &[f64]) -> Result<Self, TableError> {
        let cols = matrix_columns(percentiles);
        let inner = match format {
            Format::Csv => {
                let mut w = csv::Writer::from_writer(out);
                w.write_record(&cols)?;
                Inner::Csv(Box::new(w))
            }
            Format::Parquet => {
                let mut fields = vec![
                    Field::new(&cols[0], DataType::Utf8, false),
                    Field::new(&cols[1], DataType::Utf8, false),
                    Field::new(&cols[2], DataType::UInt32, false),
                ];
                fields.extend(cols[3..3 + percentiles.len()].iter().map(|c| Field::new(c, DataType::Float64, true)));
                fields.push(Field::new("share_within_cutoff", DataType::Float64, true));
                fields.push(Field::new("departures_with_journey", DataType::UInt32, false));
                let schema = Arc::new(Schema::new(fields));
                let props =
                    WriterProperties::builder().set_compression(Compression::SNAPPY).set_max_row_group_row_count(Some(ROW_GROUP)).build();
                let writer = ArrowWriter::try_new(out, schema.clone(), Some(props))?;
                Inner::Parquet(Box::new(ParquetSink {
                    writer,
                    schema,
                    from: StringBuilder::new(),
                    to: StringBuilder::new(),
                    min: UInt32Builder::new(),
                    pct: (0..percentiles.len()).map(|_| Float64Builder::new()).collect(),
                    share: Float64Builder::new(),
                    reached: UInt32Builder::new(),
                    rows: 0,
                }))
            }
        };
        Ok(MatrixTable { inner, percentiles: percentiles.len(), rows: 0 })
    }

    /// Appends the rows of one origin; `id_of` names a destination place.
    pub fn origin<'a>(&mut self, from_id: &str, rows: &Rows, id_of: impl Fn(u32) -> &'a str) -> Result<(), TableError> {
        let np = self.percentiles;
        match &mut self.inner {
            Inner::Csv(w) => {
                let mut rec: Vec<String> = Vec::with_capacity(5 + np);
                for r in 0..rows.len() {
                    rec.clear();
                    rec.push(from_id.to_string());
                    rec.push(id_of(rows.to[r]).to_string());
                    rec.push(rows.min_s[r].to_string());
                    rec.extend(rows.percentiles_s[r * np..(r + 1) * np].iter().map(|&x| cell(x)));
                    rec.push(rows.share_within_cutoff[r].map(|x| format!("{x}")).unwrap_or_default());
                    rec.push(rows.departures_reached[r].to_string());
                    w.write_record(&rec)?;
                }
            }
            Inner::Parquet(p) => {
                for r in 0..rows.len() {
                    p.from.append_value(from_id);
                    p.to.append_value(id_of(rows.to[r]));
                    debug_assert_ne!(rows.min_s[r], NONE, "only reachable pairs are rows");
                    p.min.append_value(rows.min_s[r]);
                    for (k, b) in p.pct.iter_mut().enumerate() {
                        b.append_option(rows.percentiles_s[r * np + k].map(ms));
                    }
                    p.share.append_option(rows.share_within_cutoff[r]);
                    p.reached.append_value(rows.departures_reached[r]);
                    p.rows += 1;
                    if p.rows >= ROW_GROUP {
                        p.flush()?;
                    }
                }
            }
        }
        self.rows += rows.len() as u64;
        Ok(())
    }

    /// Writes what is buffered and the file's footer; returns the writer.
    pub fn finish(self) -> Result<W, TableError> {
        match self.inner {
            Inner::Csv(w) => (*w).into_inner().map_err(|e| TableError::Io(e.into_error())),
            Inner::Parquet(mut p) => {
                p.flush()?;
                Ok(p.writer.into_inner()?)
            }
        }
    }
}

/// The cumulative opportunities per origin, as CSV: `from_stop_id,opportunities_within_cutoff`.
pub struct OpportunityTable<W: Write> {
    w: csv::Writer<W>,
}

impl<W: Write> OpportunityTable<W> {
    pub fn new(out: W) -> Result<Self, TableError> {
        let mut w = csv::Writer::from_writer(out);
        w.write_record(["from_stop_id", "opportunities_within_cutoff"])?;
        Ok(OpportunityTable { w })
    }
    pub fn origin(&mut self, from_id: &str, value: f64) -> Result<(), TableError> {
        self.w.write_record([from_id, &format!("{}", ms(value))])?;
        Ok(())
    }
    pub fn finish(self) -> Result<W, TableError> {
        self.w.into_inner().map_err(|e| TableError::Io(e.into_error()))
    }
}

/// Reach over a window as CSV: `stop_id,name,min_s,p…_s,share_within_cutoff,departures_with_journey`.
pub fn reach_csv<W: Write>(out: W, r: &WindowReach) -> Result<W, TableError> {
    let mut w = csv::Writer::from_writer(out);
    let mut head = vec!["stop_id".to_string(), "name".into(), "min_s".into()];
    head.extend(r.percentiles.iter().map(|&p| percentile_column(p)));
    head.extend(["share_within_cutoff".to_string(), "departures_with_journey".into()]);
    w.write_record(&head)?;
    for p in &r.places {
        let mut rec = vec![p.stop_id.clone(), p.name.clone(), p.min_s.map(|m| m.to_string()).unwrap_or_default()];
        rec.extend(p.percentiles_s.iter().map(|&x| cell(x)));
        rec.push(p.share_within_cutoff.map(|x| format!("{x}")).unwrap_or_default());
        rec.push(p.departures_reached.to_string());
        w.write_record(&rec)?;
    }
    w.into_inner().map_err(|e| TableError::Io(e.into_error()))
}

/// The interchange audit's rows as CSV, written a station at a time: one row per arrival and
/// departing route/direction; empty cells where a value does not apply; `near_miss` 1 or 0.
pub struct ConnectionTable<W: Write> {
    w: csv::Writer<W>,
    pub rows: u64,
}

impl<W: Write> ConnectionTable<W> {
    pub fn new(out: W) -> Result<Self, TableError> {
        let mut w = csv::Writer::from_writer(out);
        w.write_record([
            "station",
            "arr_trip_id",
            "arr_route_id",
            "arr_direction",
            "arr_stop_id",
            "arrival",
            "dep_route_id",
            "dep_direction",
            "dep_trip_id",
            "dep_stop_id",
            "departure",
            "change_s",
            "wait_s",
            "status",
            "missed_by_s",
            "missed_trip_id",
            "near_miss",
        ])?;
        Ok(ConnectionTable { w, rows: 0 })
    }

    pub fn add(&mut self, rows: &[ConnectionRow]) -> Result<(), TableError> {
        use std::fmt::Write as _;
        // One buffer per cell kind, reused: no allocation per row.
        let (mut arr, mut dep) = (String::new(), String::new());
        let mut nums = [String::new(), String::new(), String::new()];
        for r in rows {
            let status = r.status.name();
            arr.clear();
            let _ = write!(arr, "{}", r.arrival);
            dep.clear();
            if let Some(d) = r.departure {
                let _ = write!(dep, "{d}");
            }
            for (buf, v) in nums.iter_mut().zip([r.change_s, r.wait_s, r.missed_by_s]) {
                buf.clear();
                if let Some(v) = v {
                    let _ = write!(buf, "{v}");
                }
            }
            self.w.write_record([
                &*r.station,
                &r.arr_trip_id,
                &r.arr_route_id,
                &r.arr_direction,
                &r.arr_stop_id,
                &arr,
                &r.dep_route_id,
                &r.dep_direction,
                opt(&r.dep_trip_id),
                opt(&r.dep_stop_id),
                &dep,
                &nums[0],
                &nums[1],
                status,
                &nums[2],
                opt(&r.missed_trip_id),
                if r.near_miss { "1" } else { "0" },
            ])?;
        }
        self.rows += rows.len() as u64;
        Ok(())
    }

    pub fn finish(self) -> Result<W, TableError> {
        self.w.into_inner().map_err(|e| TableError::Io(e.into_error()))
    }
}

fn opt(x: &Option<Text>) -> &str {
    x.as_deref().unwrap_or("")
}

/// Any serialisable rows as CSV, the header from the field names (pairs and stations of the
/// interchange audit).
pub fn rows_csv<W: Write, T: serde::Serialize>(out: W, rows: &[T]) -> Result<W, TableError> {
    let mut w = csv::Writer::from_writer(out);
    for r in rows {
        w.serialize(r)?;
    }
    w.into_inner().map_err(|e| TableError::Io(e.into_error()))
}

/// The step-free audit's pairs as CSV, written an origin at a time: `blocking` (and
/// `outage_blocking`) list elements as `kind:id` separated by `;`; the outage columns only when
/// outages were set; empty cells where a value does not apply.
pub struct StepFreePairTable<W: Write> {
    w: csv::Writer<W>,
    outages: bool,
    pub rows: u64,
}

impl<W: Write> StepFreePairTable<W> {
    pub fn new(out: W, outages: bool) -> Result<Self, TableError> {
        let mut w = csv::Writer::from_writer(out);
        let mut head = vec!["from_stop_id", "to_stop_id", "standard_p50_s", "stepfree_p50_s", "extra_p50_s", "status", "blocking"];
        if outages {
            head.extend(["outage_stepfree_p50_s", "outage_status", "outage_blocking"]);
        }
        head.extend(["standard_departures_with_journey", "stepfree_departures_with_journey"]);
        w.write_record(&head)?;
        Ok(StepFreePairTable { w, outages, rows: 0 })
    }

    pub fn add(&mut self, rows: &[timeweave::engine::stepfree::StepFreePairRow]) -> Result<(), TableError> {
        let secs = |x: Option<f64>| x.map(|v| format!("{}", (v * 1000.0).round() / 1000.0)).unwrap_or_default();
        for r in rows {
            let mut rec = vec![
                r.from_stop_id.clone(),
                r.to_stop_id.clone(),
                secs(r.standard_p50_s),
                secs(r.stepfree_p50_s),
                secs(r.extra_p50_s),
                r.status.name().to_string(),
                r.blocking.join(";"),
            ];
            if self.outages {
                let effect = r.outage_status.map_or("", |e| e.name());
                rec.extend([secs(r.outage_stepfree_p50_s), effect.to_string(), r.outage_blocking.join(";")]);
            }
            rec.extend([r.standard_reached.to_string(), r.stepfree_reached.to_string()]);
            self.w.write_record(&rec)?;
        }
        self.rows += rows.len() as u64;
        Ok(())
    }

    pub fn finish(self) -> Result<W, TableError> {
        self.w.into_inner().map_err(|e| TableError::Io(e.into_error()))
    }
}

/// Serialisable rows as CSV, added a batch at a time (the header from the field names, written
/// with the first row).
pub struct SerdeTable<W: Write> {
    w: csv::Writer<W>,
    pub rows: u64,
}

impl<W: Write> SerdeTable<W> {
    pub fn new(out: W) -> Self {
        SerdeTable { w: csv::Writer::from_writer(out), rows: 0 }
    }

    pub fn add<T: serde::Serialize>(&mut self, rows: &[T]) -> Result<(), TableError> {
        for r in rows {
            self.w.serialize(r)?;
        }
        self.rows += rows.len() as u64;
        Ok(())
    }

    pub fn finish(self) -> Result<W, TableError> {
        self.w.into_inner().map_err(|e| TableError::Io(e.into_error()))
    }
}

//! `timeweave interchange`: the audit's rows to `--out`, the summaries per route pair and per
//! station beside it (`NAME.pairs.csv`, `NAME.stations.csv`). All three files are created before
//! any work and renamed into place together at the end; Ctrl-C leaves none.

use std::path::Path;

use timeweave::analysis::interchange::Status;
use timeweave::engine::interchange::InterchangeQuery;
use timeweave::engine::Engine;
use timeweave_disk::Staged;
use timeweave_tables::ConnectionTable;

use crate::window::{beside, streamed, write_rows, StreamError};

pub fn run(engine: &mut Engine, q: &InterchangeQuery, out: &Path) -> Result<(), String> {
    let cannot = |p: &Path, e: &dyn std::fmt::Display| format!("error: cannot write {}: {e}", p.display());
    let (pairs_path, stations_path) = (beside(out, "pairs"), beside(out, "stations"));
    let stage = |p: &Path| Staged::create(p).map_err(|e| cannot(p, &e));
    let (rows_file, pairs_file, stations_file) = (stage(out)?, stage(&pairs_path)?, stage(&stations_path)?);
    let mut table = ConnectionTable::new(rows_file.writer().map_err(|e| cannot(out, &e))?).map_err(|e| cannot(out, &e))?;
    let (mut made, mut none, mut not_possible, mut near) = (0u64, 0u64, 0u64, 0u64);
    let report = streamed(
        "stations",
        |sink| engine.interchange_with(q, sink),
        |rows: &[timeweave::engine::interchange::ConnectionRow]| {
            for r in rows {
                match r.status {
                    Status::Made => made += 1,
                    Status::None => none += 1,
                    Status::NotPossible => not_possible += 1,
                }
                near += r.near_miss as u64;
            }
            table.add(rows)
        },
    )
    .map_err(|e| match e {
        StreamError::Query(m) => m,
        StreamError::Table(e) => cannot(out, &e),
        StreamError::Cancelled => "cancelled: nothing was written".into(),
    })?;
    let rows = table.rows;
    let mut w = table.finish().map_err(|e| cannot(out, &e))?;
    std::io::Write::flush(&mut w).map_err(|e| cannot(out, &e))?;
    write_rows(&pairs_file, &pairs_path, &report.pairs)?;
    write_rows(&stations_file, &stations_path, &report.stations)?;
    for (file, path) in [(rows_file, out), (pairs_file, pairs_path.as_path()), (stations_file, stations_path.as_path())] {
        file.commit().map_err(|e| cannot(path, &e))?;
    }
    if let Some(note) = &report.note {
        crate::say(note);
    }
    crate::say(&format!(
        "{}: {rows} arrival × route/direction rows at {} station(s): {made} made, {none} none within the horizon, {not_possible} not possible; {near} near misses (missed by at most {} min)",
        out.display(),
        report.stations.len(),
        report.near_miss_min
    ));
    crate::say(&format!(
        "{}: {} route pairs; {}: stations ranked by near misses",
        pairs_path.display(),
        report.pairs.len(),
        stations_path.display()
    ));
    Ok(())
}

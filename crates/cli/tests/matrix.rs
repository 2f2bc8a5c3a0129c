//! `timeweave matrix` and `reach --window` on the demo city, through the binary: the files they
//! write, read back with the `csv` and `parquet` crates (general-purpose readers of RFC 4180 and
//! of the Parquet format), and their refusals of bad input before any work.

mod support;

use support::csv_rows;

fn run(args: &[&str]) -> (bool, String, String) {
    support::run(args[0], &args[1..])
}

#[test]
fn csv_and_parquet_hold_the_same_matrix_whatever_the_threads() {
    let dir = tempfile::tempdir().unwrap();
    let (csv1, csv2, pq) = (dir.path().join("one.csv"), dir.path().join("two.csv"), dir.path().join("m.parquet"));
    let common = ["--window", "07:00-08:00", "--step", "2", "--percentiles", "50,97.5", "--cutoff", "30"];
    for (out, threads) in [(&csv1, "1"), (&csv2, "2"), (&pq, "2")] {
        let mut args = vec!["matrix"];
        args.extend(common);
        args.extend(["--threads", threads, "--out", out.to_str().unwrap()]);
        let (ok, stdout, err) = run(&args);
        assert!(ok, "{err}");
        assert!(stdout.contains("reachable pairs"), "{stdout}");
    }
    assert_eq!(std::fs::read(&csv1).unwrap(), std::fs::read(&csv2).unwrap(), "the same bytes on 1 and 2 threads");
    let (head, rows) = csv_rows(&csv1);
    assert_eq!(head, ["from_stop_id", "to_stop_id", "min_s", "p50_s", "p97_5_s", "share_within_cutoff", "departures_with_journey"]);
    assert!(rows.len() > 1000, "{} rows", rows.len());
    for r in &rows {
        assert_ne!(r[0], r[1], "no row from a place to itself");
        let min: f64 = r[2].parse().unwrap();
        if let Ok(p50) = r[3].parse::<f64>() {
            assert!(p50 >= min, "{r:?}");
        }
        let share: f64 = r[5].parse().unwrap();
        assert!((0.0..=1.0).contains(&share));
        assert!(r[6].parse::<u32>().unwrap() <= 30, "30 departures at most");
    }
    // The Parquet file, read by the parquet crate's Arrow reader, holds the same cells.
    use arrow_array::{Array, Float64Array, StringArray, UInt32Array};
    let file = std::fs::File::open(&pq).unwrap();
    let reader = parquet::arrow::arrow_reader::ParquetRecordBatchReaderBuilder::try_new(file).unwrap().build().unwrap();
    let mut i = 0;
    for batch in reader {
        let b = batch.unwrap();
        let s = |c: usize| b.column(c).as_any().downcast_ref::<StringArray>().unwrap().clone();
        let u = |c: usize| b.column(c).as_any().downcast_ref::<UInt32Array>().unwrap().clone();
        let f = |c: usize| b.column(c).as_any().downcast_ref::<Float64Array>().unwrap().clone();
        let (from, to, min, p50, share) = (s(0), s(1), u(2), f(3), f(5));
        for k in 0..b.num_rows() {
            let r = &rows[i];
            assert_eq!((from.value(k), to.value(k), min.value(k).to_string()), (r[0].as_str(), r[1].as_str(), r[2].clone()));
            let p = if p50.is_null(k) { String::new() } else { format!("{}", p50.value(k)) };
            assert_eq!(p, r[3]);
            assert_eq!(format!("{}", share.value(k)), r[5]);
            i += 1;
        }
    }
    assert_eq!(i, rows.len());
}

#[test]
fn bad_input_is_refused_before_any_work_and_leaves_no_file() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("m.csv");
    let origins = dir.path().join("origins.csv");
    std::fs::write(&origins, "stop_id\nORR_QSF\nORR_QSFX\n").unwrap();
    let o = origins.to_str().unwrap();
    let m = out.to_str().unwrap();
    let txt = dir.path().join("m.txt");
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (vec!["matrix", "--window", "09:00-07:00", "--out", m], "ends before it starts"),
        (vec!["matrix", "--window", "07:00-09:00", "--step", "0", "--out", m], "step 0"),
        (vec!["matrix", "--window", "07:00-09:00", "--percentiles", "50,120", "--out", m], "percentile 120 is outside 0–100"),
        (
            vec!["matrix", "--window", "07:00-09:00", "--origins", o, "--out", m],
            "origins.csv line 3: no stop matches \"ORR_QSFX\"; did you mean",
        ),
        (vec!["matrix", "--window", "07:00-09:00", "--out", "/nonexistent-folder/m.csv"], "cannot write /nonexistent-folder/m.csv"),
        (vec!["matrix", "--window", "07:00-09:00", "--out", txt.to_str().unwrap()], "ending in .csv or .parquet"),
    ];
    for (args, want) in cases {
        let (ok, _, err) = run(&args);
        assert!(!ok, "{args:?} succeeded");
        assert!(err.contains(want), "{args:?}: {err}");
        assert!(!err.contains("origins,") && !err.contains("reachable pairs"), "no work was done: {err}");
        let left: Vec<_> = std::fs::read_dir(dir.path()).unwrap().map(|e| e.unwrap().file_name()).collect();
        assert_eq!(left, vec![std::ffi::OsString::from("origins.csv")], "{args:?} left files behind");
    }
}

#[test]
fn opportunities_and_reach_over_a_window_are_written_beside() {
    let dir = tempfile::tempdir().unwrap();
    let weights = dir.path().join("jobs.csv");
    std::fs::write(&weights, "stop_id,weight\nOCT_TPL,1000\nORR_TLM,250\n").unwrap();
    let out = dir.path().join("m.parquet");
    let (ok, stdout, err) = run(&[
        "matrix",
        "--window",
        "07:00-09:00",
        "--cutoff",
        "45",
        "--origins",
        "ORR_QSF,OCT_TPL",
        "--opportunities",
        weights.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(ok, "{err}");
    assert!(stdout.contains("m.opportunities.csv"), "{stdout}");
    let (head, rows) = csv_rows(&dir.path().join("m.opportunities.csv"));
    assert_eq!(head, ["from_stop_id", "opportunities_within_cutoff"]);
    assert_eq!(rows.len(), 2);
    // From OCT_TPL its own 1000 count at 0 min at every departure.
    let tpl: f64 = rows.iter().find(|r| r[0] == "OCT_TPL").unwrap()[1].parse().unwrap();
    assert!((1000.0..=1250.0).contains(&tpl), "{tpl}");

    let reach = dir.path().join("reach.csv");
    let (ok, _, err) = run(&["reach", "--from", "Quistenford", "--window", "07:00-09:00", "--out", reach.to_str().unwrap()]);
    assert!(ok, "{err}");
    let (head, rows) = csv_rows(&reach);
    assert_eq!(head, ["stop_id", "name", "min_s", "p50_s", "p90_s", "share_within_cutoff", "departures_with_journey"]);
    assert!(rows.len() > 20);
    let (ok, _, err) = run(&["reach", "--from", "Quistenford"]);
    assert!(!ok && err.contains("give --at HH:MM"), "{err}");
}

#[test]
fn shards_together_write_the_whole_matrix_once() {
    // The shards of a split (1/3, 2/3, 3/3) hold every row of the unsplit matrix once.
    let dir = tempfile::tempdir().unwrap();
    let common = ["--window", "07:00-07:30", "--step", "5"];
    let whole = dir.path().join("whole.csv");
    let mut a = vec!["matrix"];
    a.extend(common);
    a.extend(["--out", whole.to_str().unwrap()]);
    let (ok, _, err) = run(&a);
    assert!(ok, "{err}");
    let (head, all) = csv_rows(&whole);
    let mut parts = Vec::new();
    for k in 1..=3 {
        let out = dir.path().join(format!("part{k}.csv"));
        let shard = format!("{k}/3");
        let mut a = vec!["matrix"];
        a.extend(common);
        a.extend(["--shard", shard.as_str(), "--out", out.to_str().unwrap()]);
        let (ok, _, err) = run(&a);
        assert!(ok, "{err}");
        let (h, rows) = csv_rows(&out);
        assert_eq!(h, head);
        assert!(!rows.is_empty(), "shard {k} has rows");
        parts.extend(rows);
    }
    assert_eq!(parts, all, "the shards in order are the whole file");
    for bad in ["0/3", "4/3", "x"] {
        let out = dir.path().join("bad.csv");
        let mut a = vec!["matrix"];
        a.extend(common);
        a.extend(["--shard", bad, "--out", out.to_str().unwrap()]);
        let (ok, _, err) = run(&a);
        assert!(!ok && err.contains("--shard"), "{bad}: {err}");
        assert!(!out.exists());
    }
}

//! Arbitrary bytes as the content of stops.txt or stop_times.txt (first byte chooses) inside an
//! otherwise valid feed: loading never panics, and a loaded feed answers a plan query.
#![no_main]

use std::io::{Cursor, Write};

use libfuzzer_sys::fuzz_target;
use timeweave::engine::{Engine, PlanQuery};

const AGENCY: &str = "agency_id,agency_name,agency_url,agency_timezone\nFA,Fuzz Transit,https://transit.example/,Etc/GMT-1\n";
const STOPS: &str = "stop_id,stop_name,stop_lat,stop_lon\nA,Alder Square,50.0,10.0\nB,Birch Lane,50.01,10.0\nC,Cedar Yard,50.02,10.0\n";
const ROUTES: &str = "route_id,agency_id,route_short_name,route_long_name,route_type\nR,FA,1,Fuzz line,3\n";
const CALENDAR: &str =
    "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nWK,1,1,1,1,1,1,1,20260101,20261231\n";
const TRIPS: &str = "route_id,service_id,trip_id\nR,WK,T1\nR,WK,T2\n";
const STOP_TIMES: &str = "trip_id,arrival_time,departure_time,stop_id,stop_sequence\nT1,08:00:00,08:00:00,A,1\nT1,08:05:00,08:06:00,B,2\nT1,08:10:00,08:10:00,C,3\nT2,09:00:00,09:00:00,A,1\nT2,09:10:00,09:10:00,C,2\n";

fn zip(files: &[(&str, &[u8])]) -> Vec<u8> {
    let mut w = zip::ZipWriter::new(Cursor::new(Vec::new()));
    let opt = zip::write::SimpleFileOptions::default().compression_method(zip::CompressionMethod::Stored);
    for (name, body) in files {
        w.start_file(*name, opt).expect("zip entry");
        w.write_all(body).expect("zip write");
    }
    w.finish().expect("zip finish").into_inner()
}

fuzz_target!(|data: &[u8]| {
    let Some((&which, body)) = data.split_first() else { return };
    let (stops, stop_times): (&[u8], &[u8]) = if which & 1 == 0 { (body, STOP_TIMES.as_bytes()) } else { (STOPS.as_bytes(), body) };
    let bytes = zip(&[
        ("agency.txt", AGENCY.as_bytes()),
        ("stops.txt", stops),
        ("routes.txt", ROUTES.as_bytes()),
        ("calendar.txt", CALENDAR.as_bytes()),
        ("trips.txt", TRIPS.as_bytes()),
        ("stop_times.txt", stop_times),
    ]);
    let mut engine = Engine::new();
    if let Err(e) = engine.load_zip("fuzz", &bytes, &mut |_, _| {}) {
        assert!(!e.0.message.is_empty(), "fatal error without a message");
        return;
    }
    for (from, to) in [("A", "C"), ("C", "A"), ("B", "C")] {
        let q = PlanQuery { from: from.into(), to: to.into(), date: "2026-06-03".into(), time: "07:30".into(), ..PlanQuery::default() };
        let _ = engine.plan(&q);
    }
    let _ = engine.sketch();
});

//! stop_times.txt, by far the largest file: streamed with the csv crate's `ByteRecord` and built
//! into the timetable's events trip by trip as the rows come, each trip checked, its missing
//! times interpolated and, when frequencies.txt names it, expanded into its runs.

use super::*;

const NO_TIME: u32 = u32::MAX;

/// One stop_times row, held until all rows are read (rows need not be in order in the file).
#[derive(Clone, Copy)]
struct StopTimeRow {
    trip: u32,
    seq: u32,
    stop: u32,
    arr: u32,
    dep: u32,
    line: u32,
    flags: u8,
}

/// What reading stop_times.txt needs of the files read before it.
pub(super) struct StopTimesCx<'a> {
    pub feed: &'a str,
    pub trip_index: &'a FxHashMap<String, TripIdx>,
    pub stop_index: &'a FxHashMap<String, StopIdx>,
    pub frequencies: &'a HashMap<TripIdx, Vec<FrequencyRow>>,
}

/// Reads stop_times.txt into the trips' events.
///
/// Feeds nearly always list each trip's rows together, so the first pass builds trip by trip as
/// the rows come, holding one trip's rows at a time. If a trip's rows turn up again after another
/// trip's, that pass is undone (events, trips and its warnings) and a second pass holds all rows
/// and sorts them by trip.
pub(super) fn read_stop_times(
    cx: &StopTimesCx,
    files: &mut FeedFiles<'_>,
    tt: &mut Timetable,
    w: &mut WarningLog,
    progress: Progress,
) -> Result<(), FeedIssue> {
    let mut trips = TripBuilder::new(std::mem::take(&mut tt.trips));
    let (events, kept, total) = (tt.ev_stop.len(), w.issues.len(), w.total);
    if !scan_stop_times(cx, files, w, progress, |r, w| trips.push(cx, tt, w, r))? {
        trips.reset();
        tt.ev_stop.truncate(events);
        tt.ev_arr.truncate(events);
        tt.ev_dep.truncate(events);
        tt.ev_flags.truncate(events);
        w.issues.truncate(kept);
        w.total = total;
        let mut rows = Vec::new();
        scan_stop_times(cx, files, w, progress, |r, _| {
            rows.push(r);
            true
        })?;
        rows.sort_by_key(|r| r.trip); // stable: each trip's rows keep the file's order
        for r in rows {
            trips.push(cx, tt, w, r);
        }
    }
    progress("parsing stop_times.txt", 0.7);
    trips.finish(cx, tt, w);
    Ok(())
}

/// Reads the rows of stop_times.txt, handing each usable one to `row` until it returns false.
/// Returns whether every row was handed over. Bad rows become located warnings and are skipped.
fn scan_stop_times(
    cx: &StopTimesCx,
    files: &mut FeedFiles<'_>,
    w: &mut WarningLog,
    progress: Progress,
    mut row: impl FnMut(StopTimeRow, &mut WarningLog) -> bool,
) -> Result<bool, FeedIssue> {
    const FILE: &str = "stop_times.txt";
    let feed = cx.feed;
    let reader = files.open(feed, FILE)?.ok_or_else(|| FeedIssue::new(feed, "required file is missing").file(FILE))?;
    let mut rdr = table::csv_reader(reader);
    let headers = {
        let h = rdr
            .byte_headers()
            .map_err(|e| FeedIssue::new(feed, format!("unreadable header: {}", table::csv_message(&e))).file(FILE).line(1))?;
        let strings: Vec<String> = h.iter().map(|c| String::from_utf8_lossy(c).trim_start_matches('\u{feff}').trim().to_string()).collect();
        strings
    };
    table::require_columns(feed, FILE, &headers, &["trip_id", "stop_id", "stop_sequence", "arrival_time", "departure_time"])?;
    let col = |name: &str| headers.iter().position(|h| h == name);
    let (c_trip, c_stop, c_seq) = (col("trip_id").unwrap_or(0), col("stop_id").unwrap_or(0), col("stop_sequence").unwrap_or(0));
    let (c_arr, c_dep) = (col("arrival_time").unwrap_or(0), col("departure_time").unwrap_or(0));
    let (c_pick, c_drop) = (col("pickup_type"), col("drop_off_type"));

    let mut rec = csv::ByteRecord::new();
    let mut rows = 0usize;
    // Consecutive rows mostly share a trip: the last trip_id found, and its trip.
    let mut last_trip: (Vec<u8>, Option<TripIdx>) = (Vec::new(), None);
    let issue = |m: String, line: u64, field: &str, v: &[u8]| {
        FeedIssue::new(feed, m).file(FILE).line(line).field(field).value(&String::from_utf8_lossy(v))
    };
    loop {
        match rdr.read_byte_record(&mut rec) {
            Ok(false) => return Ok(true),
            Ok(true) => {}
            Err(e) => {
                let line = e.position().map(|p| p.line()).unwrap_or(0);
                if matches!(e.kind(), csv::ErrorKind::Io(_)) {
                    return Err(FeedIssue::new(feed, table::csv_message(&e)).file(FILE).line(line));
                }
                w.push(FeedIssue::new(feed, format!("{}; row skipped", table::csv_message(&e))).file(FILE).line(line));
                continue;
            }
        }
        let line = rec.position().map(|p| p.line()).unwrap_or(0);
        rows += 1;
        if rows.is_multiple_of(65536) {
            progress("parsing stop_times.txt", 0.17);
        }
        let get = |c: usize| rec.get(c).unwrap_or(b"").trim_ascii();
        let text = |c: usize| std::str::from_utf8(get(c)).ok();
        let trip = if last_trip.1.is_some() && last_trip.0 == get(c_trip) {
            last_trip.1
        } else {
            let Some(trip_id) = text(c_trip) else {
                w.push(issue("not valid UTF-8; row skipped".into(), line, "trip_id", get(c_trip)));
                continue;
            };
            let found = cx.trip_index.get(trip_id).copied();
            if found.is_some() {
                last_trip = (trip_id.as_bytes().to_vec(), found);
            }
            found
        };
        let Some(trip) = trip else {
            w.push(issue("trip_id names no trip in trips.txt; row skipped".into(), line, "trip_id", get(c_trip)));
            continue;
        };
        let Some(&stop) = text(c_stop).and_then(|s| cx.stop_index.get(s)) else {
            w.push(issue("stop_id names no usable stop in stops.txt; row skipped".into(), line, "stop_id", get(c_stop)));
            continue;
        };
        let Some(seq) = text(c_seq).and_then(|s| s.parse::<u32>().ok()) else {
            w.push(issue("stop_sequence must be a non-negative whole number; row skipped".into(), line, "stop_sequence", get(c_seq)));
            continue;
        };
        let time = |c: usize| -> Result<u32, ()> {
            let v = get(c);
            if v.is_empty() {
                Ok(NO_TIME)
            } else {
                parse_time(v).ok_or(())
            }
        };
        let (arr, dep) = match (time(c_arr), time(c_dep)) {
            (Ok(a), Ok(d)) => (a, d),
            (Err(()), _) => {
                w.push(issue(
                    "arrival_time is not a time H:MM:SS (minutes and seconds below 60); row skipped".into(),
                    line,
                    "arrival_time",
                    get(c_arr),
                ));
                continue;
            }
            (_, Err(())) => {
                w.push(issue(
                    "departure_time is not a time H:MM:SS (minutes and seconds below 60); row skipped".into(),
                    line,
                    "departure_time",
                    get(c_dep),
                ));
                continue;
            }
        };
        let (arr, dep) = match (arr, dep) {
            (NO_TIME, d) => (d, d),
            (a, NO_TIME) => (a, a),
            (a, d) => (a, d),
        };
        let mut flags = 0;
        if c_pick.is_some_and(|c| get(c) == b"1") {
            flags |= NO_PICKUP;
        }
        if c_drop.is_some_and(|c| get(c) == b"1") {
            flags |= NO_DROP_OFF;
        }
        if !row(StopTimeRow { trip: trip.0, seq, stop: stop.0, arr, dep, line: line.min(u32::MAX as u64) as u32, flags }, w) {
            return Ok(false);
        }
    }
}

/// Builds trips from their stop_times rows, one trip at a time: validated, interpolated and, for
/// trips in frequencies.txt, expanded into their runs.
struct TripBuilder {
    /// The trips of trips.txt, by `TripIdx`.
    templates: Vec<Trip>,
    /// Trips built, in the order their rows came.
    out: Vec<Trip>,
    /// Per template: its rows have been built.
    done: Vec<bool>,
    /// The rows of the trip being gathered.
    group: Vec<StopTimeRow>,
}

impl TripBuilder {
    fn new(templates: Vec<Trip>) -> Self {
        let done = vec![false; templates.len()];
        TripBuilder { out: Vec::with_capacity(templates.len()), templates, done, group: Vec::new() }
    }

    /// Adds a row; false when its trip was already built, i.e. that trip's rows are not together.
    fn push(&mut self, cx: &StopTimesCx, tt: &mut Timetable, w: &mut WarningLog, r: StopTimeRow) -> bool {
        if self.group.first().is_some_and(|g| g.trip != r.trip) {
            self.flush(cx, tt, w);
        }
        if self.done[r.trip as usize] {
            return false;
        }
        self.group.push(r);
        true
    }

    fn flush(&mut self, cx: &StopTimesCx, tt: &mut Timetable, w: &mut WarningLog) {
        const FILE: &str = "stop_times.txt";
        let Some(t) = self.group.first().map(|g| g.trip as usize) else { return };
        self.done[t] = true;
        let trip = &self.templates[t];
        // Stable: of two rows with one stop_sequence, the file's first stays first.
        self.group.sort_by_key(|r| r.seq);
        let mut prev = None;
        self.group.retain(|r| {
            let twice = prev == Some(r.seq);
            prev = Some(r.seq);
            if twice {
                w.push(
                    FeedIssue::new(cx.feed, format!("stop_sequence {} appears twice in trip {}; the later row is skipped", r.seq, trip.id))
                        .file(FILE)
                        .line(r.line as u64)
                        .field("stop_sequence")
                        .value(&r.seq.to_string()),
                );
            }
            !twice
        });
        if let Err(issue) = check_and_interpolate(cx.feed, tt, &trip.id, &mut self.group) {
            w.push(issue);
            self.group.clear();
            return;
        }
        match cx.frequencies.get(&TripIdx(t as u32)) {
            None => push_trip(tt, &mut self.out, trip.clone(), &self.group, 0),
            Some(freqs) => {
                let base = self.group[0].dep;
                for f in freqs {
                    let exact = f.exact_times.as_deref() == Some("1");
                    let mut start = f.start_time;
                    while start < f.end_time {
                        let mut run = trip.clone();
                        run.frequency_based = !exact;
                        run.headway_s = Some(f.headway_secs);
                        push_trip(tt, &mut self.out, run, &self.group, start as i64 - base as i64);
                        start += f.headway_secs;
                    }
                }
            }
        }
        self.group.clear();
    }

    /// Forgets everything built.
    fn reset(&mut self) {
        self.out.clear();
        self.done.fill(false);
        self.group.clear();
    }

    fn finish(mut self, cx: &StopTimesCx, tt: &mut Timetable, w: &mut WarningLog) {
        self.flush(cx, tt, w);
        let no_times = self.done.iter().filter(|seen| !**seen).count();
        if no_times > 0 {
            w.push(
                FeedIssue::new(cx.feed, format!("{no_times} trips have no usable stop_times rows and are left out")).file("stop_times.txt"),
            );
        }
        tt.trips = self.out;
    }
}

fn push_trip(tt: &mut Timetable, out: &mut Vec<Trip>, mut trip: Trip, group: &[StopTimeRow], shift: i64) {
    trip.first_event = tt.ev_stop.len() as u32;
    trip.len = group.len() as u32;
    for r in group {
        tt.ev_stop.push(StopIdx(r.stop));
        tt.ev_arr.push((r.arr as i64 + shift).max(0) as u32);
        tt.ev_dep.push((r.dep as i64 + shift).max(0) as u32);
        tt.ev_flags.push(r.flags);
    }
    out.push(trip);
}

/// Checks one trip's rows and fills empty times between timepoints, linearly by great-circle
/// distance between the stops (the GTFS Schedule reference leaves interpolation to consumers).
fn check_and_interpolate(feed: &str, tt: &Timetable, trip_id: &str, g: &mut [StopTimeRow]) -> Result<(), FeedIssue> {
    const FILE: &str = "stop_times.txt";
    if g.len() < 2 {
        return Err(FeedIssue::new(feed, format!("trip {trip_id} has fewer than two stops; trip left out"))
            .file(FILE)
            .line(g.first().map_or(0, |r| r.line as u64))
            .field("trip_id")
            .value(trip_id));
    }
    for r in [g[0], g[g.len() - 1]] {
        if r.arr == NO_TIME {
            return Err(FeedIssue::new(feed, format!("the first and last stop of trip {trip_id} need arrival_time and departure_time (GTFS Schedule reference); trip left out")).file(FILE).line(r.line as u64).field("arrival_time"));
        }
    }
    let mut k = 0;
    while k < g.len() {
        if g[k].arr != NO_TIME {
            k += 1;
            continue;
        }
        let a = k - 1;
        let mut b = k;
        while g[b].arr == NO_TIME {
            b += 1;
        }
        let pos = |r: &StopTimeRow| {
            let s = &tt.stops[r.stop as usize];
            (s.lat, s.lon)
        };
        let mut dists = vec![0.0f64; b - a + 1];
        for j in a + 1..=b {
            let (p, q) = (pos(&g[j - 1]), pos(&g[j]));
            let d = haversine_m(p.0, p.1, q.0, q.1);
            dists[j - a] = dists[j - a - 1] + if d.is_finite() { d.max(1.0) } else { 1.0 };
        }
        let (t0, t1) = (g[a].dep as f64, g[b].arr as f64);
        let total = dists[b - a];
        for j in a + 1..b {
            let t = (t0 + (t1 - t0) * dists[j - a] / total).round() as u32;
            g[j].arr = t;
            g[j].dep = t;
            g[j].flags |= INTERPOLATED;
        }
        k = b;
    }
    for j in 0..g.len() {
        if g[j].dep < g[j].arr {
            return Err(FeedIssue::new(
                feed,
                format!("trip {trip_id} departs stop {} before it arrives there; trip left out", tt.stops[g[j].stop as usize].id),
            )
            .file(FILE)
            .line(g[j].line as u64)
            .field("departure_time"));
        }
        if j > 0 && g[j].arr < g[j - 1].dep {
            return Err(FeedIssue::new(
                feed,
                format!(
                    "trip {trip_id} arrives at stop {} at {} before it left the previous stop at {}; trip left out",
                    tt.stops[g[j].stop as usize].id,
                    hms(g[j].arr),
                    hms(g[j - 1].dep)
                ),
            )
            .file(FILE)
            .line(g[j].line as u64)
            .field("arrival_time"));
        }
    }
    Ok(())
}

pub fn hms(s: u32) -> String {
    format!("{:02}:{:02}:{:02}", s / 3600, s / 60 % 60, s % 60)
}

//! Travel times over a window of departures, against values worked out by hand.

mod support;

use support::Feed;
use timeweave::engine::window::WindowQuery;
use timeweave::error::QueryError;

/// Stops far enough apart (≈ 11 km) that no walking link joins them.
fn stops(ids: &[&str]) -> String {
    let mut s = String::from("stop_id,stop_name,stop_lat,stop_lon\n");
    for (i, id) in ids.iter().enumerate() {
        s += &format!("{id},Stop {id},{:.3},13.0\n", 52.0 + 0.1 * i as f64);
    }
    s
}

/// Routes leaving `O`, each a frequency-based trip (exact times): (route, destination, minutes
/// in vehicle, headway in minutes), running 06:00–10:00 on every day of 2026.
fn feed(lines: &[(&str, &str, u32, u32)]) -> Feed {
    let mut ids = vec!["O"];
    ids.extend(lines.iter().map(|l| l.1));
    let (mut routes, mut trips, mut times, mut freq) = (
        String::from("route_id,agency_id,route_short_name,route_type\n"),
        String::from("route_id,service_id,trip_id\n"),
        String::from("trip_id,arrival_time,departure_time,stop_id,stop_sequence\n"),
        String::from("trip_id,start_time,end_time,headway_secs,exact_times\n"),
    );
    for (r, to, ride, headway) in lines {
        routes += &format!("{r},TA,{r},3\n");
        trips += &format!("{r},ALL,T{r}\n");
        times += &format!("T{r},06:00:00,06:00:00,O,1\nT{r},{t},{t},{to},2\n", t = format!("06:{ride:02}:00"));
        freq += &format!("T{r},06:00:00,10:00:00,{},1\n", headway * 60);
    }
    Feed::new("Etc/GMT-1")
        .file("stops.txt", &stops(&ids))
        .file("routes.txt", &routes)
        .file("trips.txt", &trips)
        .file("stop_times.txt", &times)
        .file("frequencies.txt", &freq)
        .file("calendar.txt", "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date\nALL,1,1,1,1,1,1,1,20260101,20261231\n")
}

fn window(w: &str, percentiles: &[f64]) -> WindowQuery {
    WindowQuery { date: "2026-06-10".into(), window: w.into(), percentiles: Some(percentiles.to_vec()), ..WindowQuery::default() }
}

#[test]
fn a_ten_minute_headway_gives_the_hand_worked_percentiles() {
    let mut engine = feed(&[("L", "B", 20, 10)]).load();
    let r = engine.pair_profile("O", "B", &window("07:00-09:00", &[25.0, 50.0, 90.0])).expect("profile");
    assert_eq!(r.departures.len(), 120, "07:00–09:00 at 1 min: 07:00 to 08:59");
    // The saw-tooth: 20 min at :00, 29 at :01, 28 at :02 … 21 at :09.
    let minutes: Vec<u32> = r.departures.iter().take(10).map(|d| d.travel_s.expect("journey") / 60).collect();
    assert_eq!(minutes, [20, 29, 28, 27, 26, 25, 24, 23, 22, 21]);
    // Worked by hand (the check, linear interpolation between closest ranks): min 20,
    // p25 22, median 24.5, p90 28.1 minutes.
    assert_eq!(r.min_s, Some(20 * 60));
    let got: Vec<f64> = r.percentiles_s.iter().map(|p| (p.expect("percentile") / 60.0 * 1000.0).round() / 1000.0).collect();
    assert_eq!(got, [22.0, 24.5, 28.1]);
}

#[test]
fn cumulative_opportunities_count_the_cutoff_inclusively() {
    // D1 every minute, 40 min in vehicle: 40 min at every departure. D2 every 10 min, 40 min in
    // vehicle: 40…49 min, evenly. Weights 100 and 50, cut-off 45 min: 100 + 50 × 6/10 = 130
    // counting "≤ 45" (125 if the cut-off were strict) — the worked check, after
    // Geurs and van Wee (2004), definition recalled from memory.
    let mut engine = feed(&[("A", "D1", 40, 1), ("B", "D2", 40, 10)]).load();
    let q = WindowQuery { cutoff_min: Some(45), ..window("07:00-08:00", &[50.0]) };
    let setting = engine.window_setting(&q).expect("setting");
    let places = engine.resolve_places(&["O".into(), "D1".into(), "D2".into()]).expect("places");
    let dest = engine.destinations(None, &[(places[1], 100.0), (places[2], 50.0)]);
    let run = engine.window_run(&setting);
    let mut st = timeweave::route::SearchState::new();
    let (mut times, mut rows) = Default::default();
    run.origin_rows(&mut st, places[0], &dest, &mut times, &mut rows);
    let opp = rows.opportunities.expect("opportunities");
    assert!((opp - 130.0).abs() < 1e-9, "opportunities {opp}");
    assert_eq!(rows.len(), 2, "both destinations are rows");
    let d2 = rows.to.iter().position(|&t| t as usize == places[2]).expect("D2 row");
    assert_eq!(rows.share_within_cutoff[d2], Some(0.6));
}

#[test]
fn bad_windows_are_refused_before_any_search() {
    let engine = feed(&[("L", "B", 20, 10)]).load();
    let bad = |q: WindowQuery| match engine.window_setting(&q) {
        Err(QueryError::BadOption(m)) => m,
        other => panic!("{q:?} gave {other:?}"),
    };
    assert!(bad(window("09:00-07:00", &[50.0])).contains("ends before it starts"));
    assert!(bad(WindowQuery { step_min: Some(0), ..window("07:00-09:00", &[50.0]) }).contains("step 0"));
    assert!(bad(window("07:00-09:00", &[50.0, 101.0])).contains("percentile 101 is outside 0–100"));
    assert!(bad(window("07:00-09:00", &[-1.0])).contains("outside 0–100"));
    assert!(bad(window("7-9", &[50.0])).contains("is not HH:MM-HH:MM"));
    assert!(bad(WindowQuery { date: "2027-06-10".into(), ..window("07:00-09:00", &[50.0]) }).contains("outside the loaded feeds' dates"));
}

#[test]
fn a_place_never_reached_is_not_a_row_and_a_missing_departure_makes_high_percentiles_none() {
    // B is served only until 10:00: from 09:30 to 10:30 the last departures have no journey.
    let mut engine = feed(&[("L", "B", 20, 10)]).load();
    let r = engine.pair_profile("O", "B", &window("09:30-10:30", &[10.0, 90.0])).expect("profile");
    let none = r.departures.iter().filter(|d| d.travel_s.is_none()).count();
    assert!(none > 0 && none < 60, "{none} departures without a journey");
    assert!(r.percentiles_s[0].is_some(), "p10 is reached");
    assert_eq!(r.percentiles_s[1], None, "p90 falls among departures with no journey");
    let reach = engine.reach_window("B", &window("07:00-09:00", &[50.0])).expect("reach");
    assert!(reach.places.is_empty(), "nothing leaves B: {:?}", reach.places);
}

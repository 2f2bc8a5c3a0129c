//! Synthetic GTFS feeds for an invented city, for tests and benchmarks.
//!
//! This module owns the whole generator: a network model (radial and ring lines of four modes on a
//! plane around lat 52.0 lon 13.0, interchange stations with levels and pathways, feeder bus lines),
//! a timetable whose headways follow the time of day, and a streaming CSV/zip writer.
//!
//! Why it is built this way:
//! - **Determinism.** Every random choice comes from our own SplitMix64 generator (or a hash of the
//!   seed and a row number), and the trigonometry is our own (`sin_cos`, `atan2`, built from `+ − × ÷`
//!   and `sqrt`, which IEEE 754 rounds exactly), so the same preset and seed give the same rows on
//!   every platform and with every crate version. Zip entries carry a fixed time stamp, fixed
//!   permissions and a fixed host system. (The deflate bytes themselves are as stable as the
//!   compressor linked into the build.)
//! - **Streaming.** Only the network (stops, lines, station interiors) is held in memory, a few
//!   megabytes for the largest preset. `trips.txt` and `stop_times.txt` are produced row by row from
//!   the line patterns and the headway tables, straight into the zip writer, so the 5 M-row `metro`
//!   preset needs no more memory than `small`.
//! - **Sizes on target.** Feeder bus lines are added until the stop count reaches the preset's
//!   target, then one global headway factor is found by bisection so that `stop_times.txt` has the
//!   target row count; per-line headways are whole minutes.
//!
//! **Invariant:** departures, arrivals and stop sequences strictly increase along every trip; ring
//! trips start and end at the same stop (first and last `stop_sequence` share a `stop_id`).
//! **Invariant:** every stop_id, trip_id, route_id, service_id, shape_id, level_id and parent_station
//! written is defined in its own file.

use std::collections::HashSet;
use std::f64::consts::{FRAC_PI_2, PI};
use std::fmt;
use std::io::{self, Seek, Write};
use std::str::FromStr;

use zip::write::SimpleFileOptions;
use zip::{CompressionMethod, DateTime, System, ZipWriter};

/// Size class of the generated feed. Counts are all rows of the file (`stops` counts stations,
/// platforms, entrances and generic nodes too); each lands within ±10 % of the figure below.
///
/// | preset | stops.txt rows | trips | stop_times rows | city radius |
/// |---|---|---|---|---|
/// | `small`  |    ≈ 300 |   ≈ 2,800 |    ≈ 50,000 |  6 km |
/// | `region` |  ≈ 3,000 |  ≈ 24,000 |   ≈ 600,000 | 30 km |
/// | `metro`  | ≈ 20,000 | ≈ 130,000 | ≈ 5,000,000 | 25 km |
///
/// `metro` is shaped after a large metropolitan network (about 20,800 stops, 125,000 trips and
/// 4.85 M connections, a connection being one stop-to-stop hop: stop_times − trips).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Preset {
    Small,
    Region,
    Metro,
}

impl Preset {
    /// The name accepted by [`FromStr`].
    pub fn name(self) -> &'static str {
        match self {
            Preset::Small => "small",
            Preset::Region => "region",
            Preset::Metro => "metro",
        }
    }
}

impl fmt::Display for Preset {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// A preset name that is none of `small`, `region`, `metro`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct UnknownPreset(pub String);

impl fmt::Display for UnknownPreset {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "unknown preset \"{}\": expected small, region or metro", self.0)
    }
}

impl std::error::Error for UnknownPreset {}

impl FromStr for Preset {
    type Err = UnknownPreset;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        match s.trim().to_ascii_lowercase().as_str() {
            "small" => Ok(Preset::Small),
            "region" => Ok(Preset::Region),
            "metro" => Ok(Preset::Metro),
            _ => Err(UnknownPreset(s.to_string())),
        }
    }
}

/// Row counts of the written feed and the zip's size in bytes.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct SynthStats {
    /// Rows of stops.txt (all location types).
    pub stops: usize,
    /// Rows of routes.txt.
    pub routes: usize,
    /// Rows of trips.txt.
    pub trips: usize,
    /// Rows of stop_times.txt.
    pub stop_times: usize,
    /// Bytes written to `out`, from its position at the call to the end of the zip.
    pub bytes: usize,
}

/// Writes a complete GTFS zip (deflate) to `out`. Same preset + seed => byte-identical zip.
///
/// Files: agency, stops, routes, trips, stop_times, calendar, calendar_dates, feed_info, transfers,
/// levels, pathways, shapes. The feed is valid from 2026-01-01 to 2027-12-31 in the agency time
/// zone `Etc/GMT-1`; all names are generated and belong to no real place.
pub fn write_feed<W: Write + Seek>(preset: Preset, seed: u64, mut out: W) -> io::Result<SynthStats> {
    let start = out.stream_position()?;
    let net = Network::build(preset, seed);
    let mut stats = SynthStats { stops: net.stops.len(), routes: net.lines.len(), ..Default::default() };

    let opts = SimpleFileOptions::default()
        .compression_method(CompressionMethod::Deflated)
        .compression_level(Some(3))
        .last_modified_time(feed_timestamp())
        .unix_permissions(0o644)
        .system(System::Unix)
        .large_file(false);
    let mut w = CsvZip { zip: ZipWriter::new(out), buf: Vec::with_capacity(FLUSH_AT + 1024), opts };

    net.write_agency(&mut w)?;
    net.write_stops(&mut w)?;
    net.write_routes(&mut w)?;
    stats.trips = net.write_trips(&mut w)?;
    stats.stop_times = net.write_stop_times(&mut w)?;
    net.write_calendar(&mut w)?;
    net.write_calendar_dates(&mut w)?;
    net.write_feed_info(&mut w, preset, seed)?;
    net.write_transfers(&mut w)?;
    net.write_levels(&mut w)?;
    net.write_pathways(&mut w)?;
    net.write_shapes(&mut w)?;

    w.flush()?;
    let mut out = w.zip.finish().map_err(io::Error::other)?;
    let end = out.stream_position()?;
    stats.bytes = (end - start) as usize;
    Ok(stats)
}

/// The fixed last-modified time of every zip entry.
fn feed_timestamp() -> DateTime {
    DateTime::from_date_and_time(2026, 1, 1, 0, 0, 0).expect("2026-01-01 00:00:00 is a valid zip time")
}

// ---------------------------------------------------------------------------------------------
// Randomness and arithmetic-only trigonometry
// ---------------------------------------------------------------------------------------------

/// SplitMix64 (Steele, Lea & Flood 2014; the constants of Vigna's reference `splitmix64.c`).
#[derive(Clone)]
struct SplitMix64(u64);

impl SplitMix64 {
    fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        mix64(self.0)
    }
    /// Uniform in [0, 1).
    fn unit(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }
    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }
    /// Uniform in 0..n (n > 0).
    fn below(&mut self, n: u64) -> u64 {
        ((self.next_u64() as u128 * n as u128) >> 64) as u64
    }
    fn chance(&mut self, p: f64) -> bool {
        self.unit() < p
    }
    fn angle(&mut self) -> f64 {
        self.range(0.0, 2.0 * PI)
    }
}

/// The SplitMix64 output function, used as a stateless hash.
fn mix64(mut z: u64) -> u64 {
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// A uniform number in [0, 1) from a seed and two keys, independent of any generator's position.
fn hash_unit(seed: u64, a: u64, b: u64) -> f64 {
    let h = mix64(mix64(mix64(seed) ^ a) ^ b.wrapping_mul(0x9E37_79B9_7F4A_7C15));
    (h >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

/// Sine and cosine from a Taylor series on x/8 followed by three angle doublings; |error| < 1e-14
/// for |x| ≤ 100. Only `+ − × ÷` are used, so results are identical on every platform.
fn sin_cos(x: f64) -> (f64, f64) {
    let two_pi = 2.0 * PI;
    let r = x - (x / two_pi).round() * two_pi;
    let a = r / 8.0;
    let a2 = a * a;
    let (mut s, mut c) = (0.0, 0.0);
    let (mut ts, mut tc) = (a, 1.0);
    for k in 0..11 {
        s += ts;
        c += tc;
        let k = k as f64;
        ts *= -a2 / ((2.0 * k + 2.0) * (2.0 * k + 3.0));
        tc *= -a2 / ((2.0 * k + 1.0) * (2.0 * k + 2.0));
    }
    for _ in 0..3 {
        let s2 = 2.0 * s * c;
        let c2 = c * c - s * s;
        s = s2;
        c = c2;
    }
    (s, c)
}

/// Arc tangent by four argument halvings, atan(x) = 2·atan(x / (1 + √(1 + x²))), then a Taylor
/// series on |y| ≤ tan(π/32).
fn atan(x: f64) -> f64 {
    let mut y = x;
    for _ in 0..4 {
        y /= 1.0 + (1.0 + y * y).sqrt();
    }
    let y2 = y * y;
    let mut term = y;
    let mut s = 0.0;
    for k in 0..14 {
        s += term / (2 * k + 1) as f64;
        term *= -y2;
    }
    16.0 * s
}

fn atan2(y: f64, x: f64) -> f64 {
    if x == 0.0 && y == 0.0 {
        return 0.0;
    }
    if x.abs() >= y.abs() {
        let a = atan(y / x);
        if x > 0.0 {
            a
        } else if !y.is_sign_negative() {
            a + PI
        } else {
            a - PI
        }
    } else {
        let a = atan(x / y);
        if y > 0.0 {
            FRAC_PI_2 - a
        } else {
            -FRAC_PI_2 - a
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Plane geometry
// ---------------------------------------------------------------------------------------------

/// Metres east (x) and north (y) of the city centre.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Pt {
    x: f64,
    y: f64,
}

impl Pt {
    const ZERO: Pt = Pt { x: 0.0, y: 0.0 };
    fn new(x: f64, y: f64) -> Pt {
        Pt { x, y }
    }
    fn polar(r: f64, angle: f64) -> Pt {
        let (s, c) = sin_cos(angle);
        Pt::new(r * c, r * s)
    }
    fn add(self, o: Pt) -> Pt {
        Pt::new(self.x + o.x, self.y + o.y)
    }
    fn sub(self, o: Pt) -> Pt {
        Pt::new(self.x - o.x, self.y - o.y)
    }
    fn scale(self, k: f64) -> Pt {
        Pt::new(self.x * k, self.y * k)
    }
    fn dot(self, o: Pt) -> f64 {
        self.x * o.x + self.y * o.y
    }
    fn len(self) -> f64 {
        self.dot(self).sqrt()
    }
    fn dist(self, o: Pt) -> f64 {
        self.sub(o).len()
    }
    fn unit(self) -> Pt {
        let l = self.len();
        if l > 0.0 {
            self.scale(1.0 / l)
        } else {
            Pt::new(1.0, 0.0)
        }
    }
    /// The right-hand normal of a direction of travel.
    fn right(self) -> Pt {
        Pt::new(self.y, -self.x)
    }
}

/// Centre of the invented city.
const CENTRE_LAT_MICRO: i64 = 52_000_000;
const CENTRE_LON_MICRO: i64 = 13_000_000;
/// Metres per degree of latitude (spherical approximation, common practice, no source).
const M_PER_DEG_LAT: f64 = 111_320.0;
/// Metres per degree of longitude at 52° N: 111,320 × cos 52°.
const M_PER_DEG_LON: f64 = 68_535.4;

/// Latitude and longitude in millionths of a degree.
fn micro_lat_lon(p: Pt) -> (i64, i64) {
    (CENTRE_LAT_MICRO + (p.y / M_PER_DEG_LAT * 1e6).round() as i64, CENTRE_LON_MICRO + (p.x / M_PER_DEG_LON * 1e6).round() as i64)
}

// ---------------------------------------------------------------------------------------------
// The network model
// ---------------------------------------------------------------------------------------------

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Mode {
    Rail,
    Metro,
    Tram,
    Bus,
}

/// Lines of one group share nodes where they cross; different groups meet only on foot.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Group {
    /// Rail and metro: crossings become interchange stations.
    Heavy,
    Tram,
    Bus,
}

impl Mode {
    fn route_type(self) -> u8 {
        match self {
            Mode::Tram => 0,
            Mode::Metro => 1,
            Mode::Rail => 2,
            Mode::Bus => 3,
        }
    }
    fn group(self) -> Group {
        match self {
            Mode::Rail | Mode::Metro => Group::Heavy,
            Mode::Tram => Group::Tram,
            Mode::Bus => Group::Bus,
        }
    }
    /// Running time of one hop: a fixed acceleration/braking loss plus distance at cruising speed.
    fn hop_s(self, d: f64) -> u32 {
        let (loss, speed_mps) = match self {
            Mode::Rail => (50.0, 25.0),
            Mode::Metro => (25.0, 14.0),
            Mode::Tram => (15.0, 8.0),
            Mode::Bus => (15.0, 7.0),
        };
        ((loss + d / speed_mps).round() as u32).max(30)
    }
    fn dwell_s(self) -> u32 {
        match self {
            Mode::Rail => 40,
            Mode::Metro => 20,
            Mode::Tram => 10,
            Mode::Bus => 0,
        }
    }
    /// Running times in the peak bands, in thousandths of the off-peak time (road traffic).
    fn peak_permille(self) -> u32 {
        match self {
            Mode::Bus => 1150,
            Mode::Tram => 1080,
            _ => 1000,
        }
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum LineShape {
    Radial,
    Ring,
    Feeder,
}

struct Node {
    p: Pt,
    group: Group,
    /// Unit normal to the creating line's direction; bus stop pairs sit at ±12 m along it.
    perp: Pt,
    name: String,
    /// Lines through this node, in line order, without repeats.
    lines: Vec<u32>,
    /// First stop made for this node (the parent station for an interchange).
    first_stop: u32,
    station: Option<u32>,
}

struct Line {
    mode: Mode,
    shape: LineShape,
    nodes: Vec<u32>,
    base_headway_s: u32,
    offset_s: [u32; 2],
    /// Stops of the trip pattern per direction (a ring repeats its first stop at the end).
    stops: [Vec<u32>; 2],
    /// Off-peak running time into stop i from stop i − 1 (index 0 unused, 0).
    hop_s: [Vec<u32>; 2],
    short_name: String,
    long_name: String,
    headsign: [String; 2],
    color: [u8; 3],
    text_color: [u8; 3],
    agency: &'static str,
    /// Share of a tram line's trips run with step-free vehicles.
    low_floor_share: f64,
    sort_order: u32,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum StepFree {
    /// Elevators from the street to every platform.
    Full,
    /// The last platform has only stairs.
    Partial,
    /// No elevators at all.
    None,
}

struct Station {
    platforms: Vec<u32>,
    entrances: [u32; 2],
    concourse: u32,
    design: StepFree,
    index: u32,
}

struct Stop {
    name: String,
    code: Option<u32>,
    p: Pt,
    location_type: u8,
    parent: Option<u32>,
    /// 0 = empty, 1 = accessible, 2 = not accessible.
    wheelchair: u8,
    level: Option<(u32, u8)>,
    platform_code: Option<u32>,
}

struct Pathway {
    from: u32,
    to: u32,
    mode: u8,
    bidirectional: bool,
    length_dm: u32,
    traversal_s: u32,
    stair_count: Option<i32>,
    min_width_cm: Option<u32>,
    signposted_as: &'static str,
    reversed_signposted_as: &'static str,
}

struct Transfer {
    from: u32,
    to: u32,
    kind: u8,
    min_s: Option<u32>,
}

/// Per-preset layout. Extents and radii in metres.
struct Spec {
    stops_target: usize,
    stop_times_target: usize,
    city_r: f64,
    rail_radials: usize,
    rail_extent: f64,
    rail_spacing: f64,
    metro_radials: usize,
    metro_extent: f64,
    metro_spacing: f64,
    /// (mode, radius, spacing)
    heavy_rings: &'static [(Mode, f64, f64)],
    tram_radials: usize,
    tram_extent: f64,
    tram_spacing: f64,
    tram_rings: &'static [(f64, f64)],
    bus_radials: usize,
    bus_extent: f64,
    bus_spacing: f64,
    bus_rings: &'static [(f64, f64)],
    feeder_len: usize,
}

impl Spec {
    fn of(preset: Preset) -> Spec {
        match preset {
            Preset::Small => Spec {
                stops_target: 300,
                stop_times_target: 50_000,
                city_r: 6_000.0,
                rail_radials: 1,
                rail_extent: 6_000.0,
                rail_spacing: 1_500.0,
                metro_radials: 2,
                metro_extent: 4_500.0,
                metro_spacing: 800.0,
                heavy_rings: &[(Mode::Metro, 2_500.0, 800.0)],
                tram_radials: 1,
                tram_extent: 4_000.0,
                tram_spacing: 450.0,
                tram_rings: &[],
                bus_radials: 1,
                bus_extent: 5_000.0,
                bus_spacing: 400.0,
                bus_rings: &[(3_800.0, 420.0)],
                feeder_len: 10,
            },
            Preset::Region => Spec {
                stops_target: 3_000,
                stop_times_target: 600_000,
                city_r: 30_000.0,
                rail_radials: 5,
                rail_extent: 30_000.0,
                rail_spacing: 2_800.0,
                metro_radials: 3,
                metro_extent: 9_000.0,
                metro_spacing: 900.0,
                heavy_rings: &[(Mode::Rail, 8_000.0, 1_600.0)],
                tram_radials: 4,
                tram_extent: 6_000.0,
                tram_spacing: 450.0,
                tram_rings: &[(3_500.0, 450.0)],
                bus_radials: 3,
                bus_extent: 12_000.0,
                bus_spacing: 450.0,
                bus_rings: &[(6_000.0, 450.0), (11_000.0, 500.0)],
                feeder_len: 18,
            },
            Preset::Metro => Spec {
                stops_target: 20_000,
                stop_times_target: 5_000_000,
                city_r: 25_000.0,
                rail_radials: 6,
                rail_extent: 28_000.0,
                rail_spacing: 2_200.0,
                metro_radials: 9,
                metro_extent: 13_000.0,
                metro_spacing: 900.0,
                heavy_rings: &[(Mode::Rail, 7_000.0, 1_400.0), (Mode::Metro, 4_000.0, 800.0)],
                tram_radials: 12,
                tram_extent: 9_000.0,
                tram_spacing: 450.0,
                tram_rings: &[(3_000.0, 450.0), (6_000.0, 450.0)],
                bus_radials: 6,
                bus_extent: 15_000.0,
                bus_spacing: 400.0,
                bus_rings: &[(9_000.0, 400.0), (13_000.0, 420.0)],
                feeder_len: 37,
            },
        }
    }
}

/// Invented place names from syllables; unique within one feed.
struct Namer {
    rng: SplitMix64,
    used: HashSet<String>,
}

const SYLLABLES: &[&str] = &[
    "ka", "vel", "mor", "ith", "sa", "lun", "dre", "ob", "tar", "wyn", "ez", "qui", "ran", "fo", "hal", "ny", "pel", "shar", "ust", "vo",
    "bri", "cal", "dun", "eth", "gro", "ivo", "jal", "kor", "lem", "nad", "oru", "pry", "rim", "sol", "tev", "ura", "wex", "yal", "zim",
    "ard", "fir", "quen", "thal",
];
const SUFFIXES: &[&str] = &[
    "Street", "Square", "Park", "Gate", "Market", "Hill", "Bridge", "Lane", "Cross", "Yard", "Fields", "Wharf", "Common", "Row", "Green",
    "Terrace", "Mill", "Court", "Avenue", "Place",
];

impl Namer {
    fn word(&mut self, syllables: usize) -> String {
        let mut w = String::new();
        for _ in 0..syllables {
            w.push_str(SYLLABLES[self.rng.below(SYLLABLES.len() as u64) as usize]);
        }
        let mut c = w.chars();
        match c.next() {
            Some(f) => f.to_ascii_uppercase().to_string() + c.as_str(),
            None => w,
        }
    }
    fn place(&mut self) -> String {
        for attempt in 0..40 {
            let n = if self.rng.chance(0.7) { 2 } else { 3 };
            let w = self.word(n);
            let name = if attempt < 20 {
                format!("{} {}", w, SUFFIXES[self.rng.below(SUFFIXES.len() as u64) as usize])
            } else {
                format!("{} {} {}", w, self.word(2), SUFFIXES[self.rng.below(SUFFIXES.len() as u64) as usize])
            };
            if self.used.insert(name.clone()) {
                return name;
            }
        }
        let name = format!("{} {}", self.word(3), self.used.len());
        self.used.insert(name.clone());
        name
    }
}

/// Service ids and their headway bands: (from_s, to_s, headway multiplier, peak).
const SERVICES: [&str; 3] = ["WD", "SA", "SU"];
type Band = (u32, u32, f64, bool);
const fn hm(h: u32, m: u32) -> u32 {
    h * 3600 + m * 60
}
const BANDS: [&[Band]; 3] = [
    &[
        (hm(5, 0), hm(6, 0), 2.0, false),
        (hm(6, 0), hm(7, 0), 1.3, false),
        (hm(7, 0), hm(9, 0), 0.6, true),
        (hm(9, 0), hm(16, 0), 1.0, false),
        (hm(16, 0), hm(19, 0), 0.7, true),
        (hm(19, 0), hm(21, 0), 1.5, false),
        (hm(21, 0), hm(24, 30), 2.5, false),
    ],
    &[
        (hm(5, 30), hm(8, 0), 2.0, false),
        (hm(8, 0), hm(19, 0), 1.2, false),
        (hm(19, 0), hm(21, 0), 1.6, false),
        (hm(21, 0), hm(24, 30), 2.5, false),
    ],
    &[(hm(6, 0), hm(10, 0), 2.0, false), (hm(10, 0), hm(19, 0), 1.5, false), (hm(19, 0), hm(24, 30), 2.5, false)],
];

/// Headway in whole minutes, 2 to 60 minutes.
fn headway_s(base_s: u32, mult: f64, factor: f64) -> u32 {
    let minutes = (base_s as f64 * mult * factor / 60.0).round();
    (minutes.clamp(2.0, 60.0) as u32) * 60
}

/// First departures of one line, service and direction: (departure at the first stop, in a peak band).
fn departures(line: &Line, service: usize, dir: usize, factor: f64) -> Vec<(u32, bool)> {
    let bands = BANDS[service];
    let last = bands[bands.len() - 1].1;
    let mut t = bands[0].0 + line.offset_s[dir];
    let mut b = 0;
    let mut out = Vec::new();
    while t <= last {
        while b + 1 < bands.len() && t >= bands[b].1 {
            b += 1;
        }
        out.push((t, bands[b].3));
        t += headway_s(line.base_headway_s, bands[b].2, factor);
    }
    out
}

struct Network {
    seed: u64,
    city: String,
    nodes: Vec<Node>,
    lines: Vec<Line>,
    stops: Vec<Stop>,
    stations: Vec<Station>,
    pathways: Vec<Pathway>,
    transfers: Vec<Transfer>,
    headway_factor: f64,
}

/// Counts of one timetable without writing it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
struct Counts {
    trips: usize,
    stop_times: usize,
}

impl Network {
    fn build(preset: Preset, seed: u64) -> Network {
        let spec = Spec::of(preset);
        let preset_key = preset as u64 + 1;
        let mut b = Builder {
            rng: SplitMix64(mix64(seed ^ mix64(preset_key))),
            names: Namer { rng: SplitMix64(mix64(seed ^ mix64(preset_key + 100))), used: HashSet::new() },
            nodes: Vec::new(),
            lines: Vec::new(),
        };
        let city = b.names.word(3);
        b.layout(&spec, &city);
        let mut net = Network {
            seed,
            city,
            nodes: b.nodes,
            lines: b.lines,
            stops: Vec::new(),
            stations: Vec::new(),
            pathways: Vec::new(),
            transfers: Vec::new(),
            headway_factor: 1.0,
        };
        let mut rng = b.rng;
        net.make_stops(&mut rng);
        net.make_patterns();
        net.make_route_labels(&mut rng);
        net.make_pathways(&mut rng);
        net.make_transfers(&feeder_hubs(&net));
        net.headway_factor = net.calibrate(spec.stop_times_target);
        net
    }

    /// One timetable's counts at a headway factor.
    fn counts(&self, factor: f64) -> Counts {
        let mut c = Counts { trips: 0, stop_times: 0 };
        for line in &self.lines {
            for svc in 0..SERVICES.len() {
                for dir in 0..2 {
                    let n = departures(line, svc, dir, factor).len();
                    c.trips += n;
                    c.stop_times += n * line.stops[dir].len();
                }
            }
        }
        c
    }

    /// The headway factor whose stop_times count is nearest the target (bisection on log factor).
    fn calibrate(&self, target: usize) -> f64 {
        let (mut lo, mut hi) = (0.05f64.ln(), 20.0f64.ln());
        let mut best = (usize::MAX, 1.0);
        for _ in 0..40 {
            let mid = 0.5 * (lo + hi);
            let f = mid.exp();
            let n = self.counts(f).stop_times;
            let err = n.abs_diff(target);
            if err < best.0 {
                best = (err, f);
            }
            if n > target {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        best.1
    }

    fn add_stop(&mut self, s: Stop) -> u32 {
        self.stops.push(s);
        (self.stops.len() - 1) as u32
    }

    /// Stops for every node: a single stop, a bus stop pair, or an interchange station with
    /// platforms per line, two entrances and a concourse node.
    fn make_stops(&mut self, rng: &mut SplitMix64) {
        for ni in 0..self.nodes.len() {
            let (p, group, perp, name, nlines) = {
                let n = &self.nodes[ni];
                (n.p, n.group, n.perp, n.name.clone(), n.lines.len())
            };
            let first = self.stops.len() as u32;
            match group {
                Group::Heavy if nlines >= 2 => {
                    let index = self.stations.len() as u32;
                    let design = [StepFree::Full, StepFree::Partial, StepFree::None, StepFree::Full, StepFree::Full, StepFree::Partial]
                        [index as usize % 6];
                    let parent = self.add_stop(Stop {
                        name: name.clone(),
                        code: None,
                        p,
                        location_type: 1,
                        parent: None,
                        wheelchair: match design {
                            StepFree::Full => 1,
                            StepFree::Partial => 0,
                            StepFree::None => 2,
                        },
                        level: None,
                        platform_code: None,
                    });
                    let along = Pt::polar(1.0, rng.angle());
                    let mut platforms = Vec::new();
                    for k in 0..nlines {
                        let wheelchair = match design {
                            StepFree::Full | StepFree::None => 0,
                            StepFree::Partial => {
                                if k + 1 == nlines {
                                    2
                                } else {
                                    1
                                }
                            }
                        };
                        let off = (k as f64 - (nlines as f64 - 1.0) / 2.0) * 14.0;
                        platforms.push(self.add_stop(Stop {
                            name: name.clone(),
                            code: None,
                            p: p.add(along.scale(off)),
                            location_type: 0,
                            parent: Some(parent),
                            wheelchair,
                            level: Some((index, 2)),
                            platform_code: Some(k as u32 + 1),
                        }));
                    }
                    let mut entrances = [0; 2];
                    for (e, slot) in entrances.iter_mut().enumerate() {
                        let ep = p.add(Pt::polar(rng.range(60.0, 120.0), rng.angle()));
                        let step_free = e == 0 && design != StepFree::None;
                        *slot = self.add_stop(Stop {
                            name: format!("{} entrance {}", name, if e == 0 { 'A' } else { 'B' }),
                            code: None,
                            p: ep,
                            location_type: 2,
                            parent: Some(parent),
                            wheelchair: if step_free { 1 } else { 2 },
                            level: Some((index, 0)),
                            platform_code: None,
                        });
                    }
                    let concourse = self.add_stop(Stop {
                        name: format!("{} concourse", name),
                        code: None,
                        p,
                        location_type: 3,
                        parent: Some(parent),
                        wheelchair: 0,
                        level: Some((index, 1)),
                        platform_code: None,
                    });
                    self.stations.push(Station { platforms, entrances, concourse, design, index });
                    self.nodes[ni].station = Some(index);
                }
                Group::Heavy | Group::Tram => {
                    let u = rng.unit();
                    let wheelchair = if group == Group::Heavy {
                        if u < 0.80 {
                            1
                        } else if u < 0.92 {
                            2
                        } else {
                            0
                        }
                    } else if u < 0.60 {
                        1
                    } else if u < 0.85 {
                        2
                    } else {
                        0
                    };
                    self.add_stop(Stop {
                        name,
                        code: if group == Group::Tram { Some(10_000 + self.stops.len() as u32) } else { None },
                        p,
                        location_type: 0,
                        parent: None,
                        wheelchair,
                        level: None,
                        platform_code: None,
                    });
                }
                Group::Bus => {
                    let u = rng.unit();
                    let wheelchair = if u < 0.65 {
                        1
                    } else if u < 0.75 {
                        2
                    } else {
                        0
                    };
                    for side in [1.0, -1.0] {
                        self.add_stop(Stop {
                            name: name.clone(),
                            code: Some(10_000 + self.stops.len() as u32),
                            p: p.add(perp.scale(12.0 * side)),
                            location_type: 0,
                            parent: None,
                            wheelchair,
                            level: None,
                            platform_code: None,
                        });
                    }
                }
            }
            self.nodes[ni].first_stop = first;
        }
    }

    /// The stop a line uses at a node when travelling along `travel`.
    fn stop_at(&self, line: u32, node: u32, travel: Pt) -> u32 {
        let n = &self.nodes[node as usize];
        match (n.group, n.station) {
            (Group::Heavy, Some(st)) => {
                let k = n.lines.iter().position(|&l| l == line).expect("line passes its own nodes");
                self.stations[st as usize].platforms[k]
            }
            (Group::Bus, _) => {
                if n.perp.dot(travel.right()) >= 0.0 {
                    n.first_stop
                } else {
                    n.first_stop + 1
                }
            }
            _ => n.first_stop,
        }
    }

    /// Stop patterns and off-peak running times per direction.
    fn make_patterns(&mut self) {
        for li in 0..self.lines.len() {
            let mut seq0 = self.lines[li].nodes.clone();
            if self.lines[li].shape == LineShape::Ring {
                seq0.push(seq0[0]);
            }
            let mut seq1 = seq0.clone();
            seq1.reverse();
            let mode = self.lines[li].mode;
            for (dir, seq) in [seq0, seq1].into_iter().enumerate() {
                let pos = |i: usize| self.nodes[seq[i] as usize].p;
                let last = seq.len() - 1;
                let mut stops = Vec::with_capacity(seq.len());
                for (i, &node) in seq.iter().enumerate() {
                    let travel = pos((i + 1).min(last)).sub(pos(i.saturating_sub(1)));
                    stops.push(self.stop_at(li as u32, node, travel));
                }
                let mut hops = vec![0u32; stops.len()];
                for i in 1..stops.len() {
                    let d = self.stops[stops[i - 1] as usize].p.dist(self.stops[stops[i] as usize].p);
                    hops[i] = mode.hop_s(d);
                }
                self.lines[li].stops[dir] = stops;
                self.lines[li].hop_s[dir] = hops;
            }
        }
    }

    /// Short and long names, headsigns, colours and sort order.
    fn make_route_labels(&mut self, rng: &mut SplitMix64) {
        let mut per_mode = [0u32; 4];
        let ring_names = ["Inner", "Middle", "Outer", "Far"];
        let mut rings_seen = [0usize; 4];
        for li in 0..self.lines.len() {
            let mode = self.lines[li].mode;
            let mi = mode as usize;
            per_mode[mi] += 1;
            let n = per_mode[mi];
            let short = match mode {
                Mode::Rail => format!("R{n}"),
                Mode::Metro => format!("M{n}"),
                Mode::Tram => format!("T{n}"),
                Mode::Bus => format!("{}", 99 + n),
            };
            let first = &self.stops[self.lines[li].stops[0][0] as usize].name;
            let last = &self.stops[*self.lines[li].stops[0].last().expect("non-empty pattern") as usize].name;
            let (long, heads) = if self.lines[li].shape == LineShape::Ring {
                let adj = ring_names[rings_seen[mi].min(ring_names.len() - 1)];
                rings_seen[mi] += 1;
                let mode_word = match mode {
                    Mode::Rail => "Rail",
                    Mode::Metro => "Metro",
                    Mode::Tram => "Tram",
                    Mode::Bus => "Bus",
                };
                let long = format!("{adj} {mode_word} Ring");
                (long.clone(), [format!("{long} anticlockwise"), format!("{long} clockwise")])
            } else {
                (format!("{first} - {last}"), [last.clone(), first.clone()])
            };
            let (sat, light) = match mode {
                Mode::Rail => (0.65, rng.range(0.30, 0.42)),
                Mode::Metro => (0.75, rng.range(0.35, 0.55)),
                Mode::Tram => (0.60, rng.range(0.40, 0.60)),
                Mode::Bus => (0.45, rng.range(0.30, 0.65)),
            };
            let hue = match mode {
                Mode::Bus => rng.range(0.0, 360.0),
                _ => (n as f64 * 137.508 + mi as f64 * 40.0) % 360.0,
            };
            let color = hsl_to_rgb(hue, sat, light);
            let line = &mut self.lines[li];
            line.short_name = short;
            line.long_name = long;
            line.headsign = heads;
            line.color = color;
            line.text_color = text_color_for(color);
            line.agency = if mode == Mode::Rail { "A2" } else { "A1" };
            line.sort_order = (mi as u32 + 1) * 1000 + n;
            line.low_floor_share = if mode == Mode::Tram { [1.0, 0.7, 0.4][n as usize % 3] } else { 1.0 };
        }
    }

    /// Levels and pathways inside every interchange station.
    fn make_pathways(&mut self, rng: &mut SplitMix64) {
        for st in &self.stations {
            let elevator_to = |k: usize| match st.design {
                StepFree::Full => true,
                StepFree::Partial => k + 1 < st.platforms.len(),
                StepFree::None => false,
            };
            let [ea, eb] = st.entrances;
            let c = st.concourse;
            let mut add = |from, to, mode, bidirectional, length_dm, traversal_s, stair_count, sign, rsign| {
                self.pathways.push(Pathway {
                    from,
                    to,
                    mode,
                    bidirectional,
                    length_dm,
                    traversal_s,
                    stair_count,
                    min_width_cm: if mode == 1 || mode == 3 { Some(240) } else { None },
                    signposted_as: sign,
                    reversed_signposted_as: rsign,
                });
            };
            add(ea, c, 2, true, 180, 45, Some(-24), "Trains", "Exit A");
            if st.design != StepFree::None {
                add(ea, c, 5, true, 60, 50, None, "Trains", "Exit A");
            }
            add(eb, c, 4, false, 220, 30, None, "Trains", "");
            add(c, eb, 4, false, 220, 30, None, "Exit B", "");
            for (k, &pf) in st.platforms.iter().enumerate() {
                add(c, pf, 2, true, 140, 35, Some(-20), "Platforms", "Exit");
                if elevator_to(k) {
                    add(c, pf, 5, true, 60, 45, None, "Platforms", "Exit");
                }
                if k == 0 {
                    add(c, pf, 4, false, 160, 25, None, "Platforms", "");
                    add(pf, c, 4, false, 160, 25, None, "Exit", "");
                }
                if k + 1 < st.platforms.len() {
                    let next = st.platforms[k + 1];
                    let length_dm = (rng.range(40.0, 90.0) * 10.0).round() as u32;
                    if elevator_to(k) && elevator_to(k + 1) {
                        let mode = if st.index == 0 && k == 0 { 3 } else { 1 };
                        add(pf, next, mode, true, length_dm, length_dm / 11 + 1, None, "Other platforms", "Other platforms");
                    } else {
                        // A footbridge: up and down again, so no net stair count.
                        add(pf, next, 2, true, length_dm, length_dm / 8 + 20, None, "Other platforms", "Other platforms");
                    }
                }
            }
        }
    }

    /// A few transfers: timed minimums inside interchanges, a recommended one, a timed one, and
    /// one that is not possible.
    fn make_transfers(&mut self, feeder_hubs: &[(u32, u32)]) {
        for st in self.stations.iter().take(8) {
            if st.platforms.len() >= 2 {
                let min_s = 120 + 60 * (st.index % 4);
                self.transfers.push(Transfer { from: st.platforms[0], to: st.platforms[1], kind: 2, min_s: Some(min_s) });
                self.transfers.push(Transfer { from: st.platforms[1], to: st.platforms[0], kind: 2, min_s: Some(min_s) });
            }
        }
        if let Some(st) = self.stations.first().filter(|st| st.platforms.len() >= 3) {
            self.transfers.push(Transfer { from: st.platforms[0], to: st.platforms[2], kind: 0, min_s: None });
        }
        for (k, &(hub_node, feeder)) in feeder_hubs.iter().take(3).enumerate() {
            let hub = self.nodes[hub_node as usize].first_stop;
            let bus = self.lines[feeder as usize].stops[0][0];
            let (kind, min_s) = match k {
                0 => (3, None),
                1 => (1, None),
                _ => (2, Some(240)),
            };
            self.transfers.push(Transfer { from: hub, to: bus, kind, min_s });
            self.transfers.push(Transfer { from: bus, to: hub, kind, min_s });
        }
    }

    // --- writers -------------------------------------------------------------------------------

    fn write_agency<W: Write + Seek>(&self, w: &mut CsvZip<W>) -> io::Result<()> {
        w.file("agency.txt", "agency_id,agency_name,agency_url,agency_timezone,agency_lang,agency_phone")?;
        let host = self.city.to_ascii_lowercase();
        for (id, suffix, sub, phone) in [("A1", "Transit", "transit", "+00 100 0001"), ("A2", "Regional Rail", "rail", "+00 100 0002")] {
            w.text(id).text(&format!("{} {}", self.city, suffix)).text(&format!("https://{sub}.{host}.invalid/"));
            w.text("Etc/GMT-1").text("en").text(phone);
            w.end_row()?;
        }
        Ok(())
    }

    fn write_stops<W: Write + Seek>(&self, w: &mut CsvZip<W>) -> io::Result<()> {
        w.file(
            "stops.txt",
            "stop_id,stop_code,stop_name,stop_lat,stop_lon,location_type,parent_station,wheelchair_boarding,level_id,platform_code",
        )?;
        for (i, s) in self.stops.iter().enumerate() {
            let (lat, lon) = micro_lat_lon(s.p);
            w.id(b"s", i as u64);
            match s.code {
                Some(c) => w.uint(c as u64),
                None => w.empty(),
            };
            w.text(&s.name).fixed(lat, 6).fixed(lon, 6).uint(s.location_type as u64);
            match s.parent {
                Some(p) => w.id(b"s", p as u64),
                None => w.empty(),
            };
            if s.wheelchair == 0 {
                w.empty()
            } else {
                w.uint(s.wheelchair as u64)
            };
            match s.level {
                Some((st, k)) => w.level_id(st, k),
                None => w.empty(),
            };
            match s.platform_code {
                Some(c) => w.uint(c as u64),
                None => w.empty(),
            };
            w.end_row()?;
        }
        Ok(())
    }

    fn write_routes<W: Write + Seek>(&self, w: &mut CsvZip<W>) -> io::Result<()> {
        w.file(
            "routes.txt",
            "route_id,agency_id,route_short_name,route_long_name,route_type,route_color,route_text_color,route_sort_order",
        )?;
        for (i, l) in self.lines.iter().enumerate() {
            w.id(b"r", i as u64).text(l.agency).text(&l.short_name).text(&l.long_name).uint(l.mode.route_type() as u64);
            w.hex(l.color).hex(l.text_color).uint(l.sort_order as u64);
            w.end_row()?;
        }
        Ok(())
    }

    /// Calls `f(line, service, dir, trip number, departure, peak)` for every trip in file order.
    fn for_each_trip(&self, mut f: impl FnMut(usize, usize, usize, u64, u32, bool) -> io::Result<()>) -> io::Result<u64> {
        let mut n = 0u64;
        for (li, line) in self.lines.iter().enumerate() {
            for svc in 0..SERVICES.len() {
                for dir in 0..2 {
                    for (t0, peak) in departures(line, svc, dir, self.headway_factor) {
                        f(li, svc, dir, n, t0, peak)?;
                        n += 1;
                    }
                }
            }
        }
        Ok(n)
    }

    fn trip_wheelchair(&self, line: &Line, trip: u64) -> u8 {
        let u = hash_unit(self.seed, 0x7721, trip);
        match line.mode {
            Mode::Rail => {
                if u < 0.9 {
                    1
                } else {
                    0
                }
            }
            Mode::Metro => {
                if u < 0.93 {
                    1
                } else if u < 0.97 {
                    2
                } else {
                    0
                }
            }
            Mode::Tram => {
                if u < line.low_floor_share * 0.95 {
                    1
                } else if u < 0.95 {
                    2
                } else {
                    0
                }
            }
            Mode::Bus => {
                if u < 0.8 {
                    1
                } else if u < 0.9 {
                    2
                } else {
                    0
                }
            }
        }
    }

    fn write_trips<W: Write + Seek>(&self, w: &mut CsvZip<W>) -> io::Result<usize> {
        w.file("trips.txt", "route_id,service_id,trip_id,trip_headsign,direction_id,shape_id,wheelchair_accessible")?;
        let n = self.for_each_trip(|li, svc, dir, trip, _t0, _peak| {
            let line = &self.lines[li];
            w.id(b"r", li as u64).text(SERVICES[svc]).id(b"t", trip).text(&line.headsign[dir]).uint(dir as u64);
            w.shape_id(li, dir);
            match self.trip_wheelchair(line, trip) {
                0 => w.empty(),
                v => w.uint(v as u64),
            };
            w.end_row()
        })?;
        Ok(n as usize)
    }

    fn write_stop_times<W: Write + Seek>(&self, w: &mut CsvZip<W>) -> io::Result<usize> {
        w.file("stop_times.txt", "trip_id,arrival_time,departure_time,stop_id,stop_sequence")?;
        let mut rows = 0usize;
        self.for_each_trip(|li, _svc, dir, trip, t0, peak| {
            let line = &self.lines[li];
            let stops = &line.stops[dir];
            let hops = &line.hop_s[dir];
            let permille = if peak { line.mode.peak_permille() } else { 1000 };
            let dwell = line.mode.dwell_s();
            let mut dep = t0;
            for i in 0..stops.len() {
                let arr = if i == 0 { t0 } else { dep + (hops[i] * permille + 500) / 1000 };
                dep = if i == 0 || i + 1 == stops.len() { arr } else { arr + dwell };
                w.id(b"t", trip).time(arr).time(dep).id(b"s", stops[i] as u64).uint(i as u64 + 1);
                w.end_row()?;
            }
            rows += stops.len();
            Ok(())
        })?;
        Ok(rows)
    }

    fn write_calendar<W: Write + Seek>(&self, w: &mut CsvZip<W>) -> io::Result<()> {
        w.file("calendar.txt", "service_id,monday,tuesday,wednesday,thursday,friday,saturday,sunday,start_date,end_date")?;
        for (svc, days) in [("WD", [1, 1, 1, 1, 1, 0, 0]), ("SA", [0, 0, 0, 0, 0, 1, 0]), ("SU", [0, 0, 0, 0, 0, 0, 1])] {
            w.text(svc);
            for d in days {
                w.uint(d);
            }
            w.text(FEED_START).text(FEED_END);
            w.end_row()?;
        }
        Ok(())
    }

    /// Holidays of the invented city run the Sunday timetable; one extra Saturday service too.
    fn write_calendar_dates<W: Write + Seek>(&self, w: &mut CsvZip<W>) -> io::Result<()> {
        w.file("calendar_dates.txt", "service_id,date,exception_type")?;
        for &(y, m, d) in HOLIDAYS {
            let date = format!("{y:04}{m:02}{d:02}");
            let regular = match weekday(y, m, d) {
                0..=4 => "WD",
                5 => "SA",
                _ => continue,
            };
            w.text(regular).text(&date).uint(2);
            w.end_row()?;
            w.text("SU").text(&date).uint(1);
            w.end_row()?;
        }
        // A Thursday before a holiday runs the Saturday timetable instead of the weekday one.
        w.text("WD").text("20261224").uint(2);
        w.end_row()?;
        w.text("SA").text("20261224").uint(1);
        w.end_row()
    }

    fn write_feed_info<W: Write + Seek>(&self, w: &mut CsvZip<W>, preset: Preset, seed: u64) -> io::Result<()> {
        w.file("feed_info.txt", "feed_publisher_name,feed_publisher_url,feed_lang,feed_start_date,feed_end_date,feed_version")?;
        w.text("timeweave synthetic feeds").text("https://synth.timeweave.invalid/").text("en");
        w.text(FEED_START).text(FEED_END).text(&format!("synth-{}-{}", preset.name(), seed));
        w.end_row()
    }

    fn write_transfers<W: Write + Seek>(&self, w: &mut CsvZip<W>) -> io::Result<()> {
        w.file("transfers.txt", "from_stop_id,to_stop_id,transfer_type,min_transfer_time")?;
        for t in &self.transfers {
            w.id(b"s", t.from as u64).id(b"s", t.to as u64).uint(t.kind as u64);
            match t.min_s {
                Some(s) => w.uint(s as u64),
                None => w.empty(),
            };
            w.end_row()?;
        }
        Ok(())
    }

    fn write_levels<W: Write + Seek>(&self, w: &mut CsvZip<W>) -> io::Result<()> {
        w.file("levels.txt", "level_id,level_index,level_name")?;
        for st in &self.stations {
            for (k, (index, name)) in [("0", "Street"), ("-1", "Concourse"), ("-2", "Platforms")].into_iter().enumerate() {
                w.level_id(st.index, k as u8).text(index).text(name);
                w.end_row()?;
            }
        }
        Ok(())
    }

    fn write_pathways<W: Write + Seek>(&self, w: &mut CsvZip<W>) -> io::Result<()> {
        w.file(
            "pathways.txt",
            "pathway_id,from_stop_id,to_stop_id,pathway_mode,is_bidirectional,length,traversal_time,stair_count,min_width,signposted_as,reversed_signposted_as",
        )?;
        for (i, p) in self.pathways.iter().enumerate() {
            w.id(b"pw", i as u64).id(b"s", p.from as u64).id(b"s", p.to as u64);
            w.uint(p.mode as u64).uint(p.bidirectional as u64).fixed(p.length_dm as i64, 1).uint(p.traversal_s as u64);
            match p.stair_count {
                Some(c) => w.int(c as i64),
                None => w.empty(),
            };
            match p.min_width_cm {
                Some(c) => w.fixed(c as i64, 2),
                None => w.empty(),
            };
            w.text(p.signposted_as).text(p.reversed_signposted_as);
            w.end_row()?;
        }
        Ok(())
    }

    fn write_shapes<W: Write + Seek>(&self, w: &mut CsvZip<W>) -> io::Result<()> {
        w.file("shapes.txt", "shape_id,shape_pt_lat,shape_pt_lon,shape_pt_sequence,shape_dist_traveled")?;
        for (li, line) in self.lines.iter().enumerate() {
            for dir in 0..2 {
                let mut dist = 0.0;
                let mut prev: Option<Pt> = None;
                for (i, &s) in line.stops[dir].iter().enumerate() {
                    let p = self.stops[s as usize].p;
                    if let Some(q) = prev {
                        dist += q.dist(p);
                    }
                    prev = Some(p);
                    let (lat, lon) = micro_lat_lon(p);
                    w.shape_id(li, dir);
                    w.fixed(lat, 6).fixed(lon, 6).uint(i as u64 + 1).fixed((dist * 10.0).round() as i64, 1);
                    w.end_row()?;
                }
            }
        }
        Ok(())
    }
}

const FEED_START: &str = "20260101";
const FEED_END: &str = "20271231";
/// Public holidays of the invented city (dates only; weekday resolved by [`weekday`]).
const HOLIDAYS: &[(i32, u32, u32)] = &[
    (2026, 1, 1),
    (2026, 4, 6),
    (2026, 5, 1),
    (2026, 12, 25),
    (2026, 12, 26),
    (2027, 1, 1),
    (2027, 3, 29),
    (2027, 5, 1),
    (2027, 12, 25),
    (2027, 12, 26),
];

/// Day of week, 0 = Monday … 6 = Sunday, from the days-from-civil count (recalled from memory:
/// the proleptic Gregorian era arithmetic in Howard Hinnant's date algorithms).
fn weekday(y: i32, m: u32, d: u32) -> u32 {
    let y = if m <= 2 { y - 1 } else { y } as i64;
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let mp = (m as i64 + 9) % 12;
    let doy = (153 * mp + 2) / 5 + d as i64 - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    let days = era * 146_097 + doe - 719_468; // days since 1970-01-01, a Thursday
    ((days + 3).rem_euclid(7)) as u32
}

fn feeder_hubs(net: &Network) -> Vec<(u32, u32)> {
    // The hub of a feeder is the rapid-transit node nearest its first stop.
    let rapid: Vec<u32> = (0..net.nodes.len() as u32).filter(|&n| net.nodes[n as usize].group != Group::Bus).collect();
    let mut out = Vec::new();
    for (li, line) in net.lines.iter().enumerate() {
        if line.shape != LineShape::Feeder {
            continue;
        }
        let p = net.nodes[line.nodes[0] as usize].p;
        let hub = rapid.iter().copied().min_by(|&a, &b| net.nodes[a as usize].p.dist(p).total_cmp(&net.nodes[b as usize].p.dist(p)));
        if let Some(h) = hub {
            out.push((h, li as u32));
        }
        if out.len() >= 3 {
            break;
        }
    }
    out
}

fn hsl_to_rgb(h: f64, s: f64, l: f64) -> [u8; 3] {
    let c = (1.0 - (2.0 * l - 1.0).abs()) * s;
    let hp = h / 60.0;
    let x = c * (1.0 - ((hp % 2.0) - 1.0).abs());
    let (r, g, b) = match hp as u32 {
        0 => (c, x, 0.0),
        1 => (x, c, 0.0),
        2 => (0.0, c, x),
        3 => (0.0, x, c),
        4 => (x, 0.0, c),
        _ => (c, 0.0, x),
    };
    let m = l - c / 2.0;
    let to = |v: f64| ((v + m) * 255.0).round().clamp(0.0, 255.0) as u8;
    [to(r), to(g), to(b)]
}

/// WCAG 2.1 relative luminance of an sRGB colour.
fn relative_luminance(rgb: [u8; 3]) -> f64 {
    let lin = |c: u8| {
        let c = c as f64 / 255.0;
        if c <= 0.04045 {
            c / 12.92
        } else {
            ((c + 0.055) / 1.055).powf(2.4)
        }
    };
    0.2126 * lin(rgb[0]) + 0.7152 * lin(rgb[1]) + 0.0722 * lin(rgb[2])
}

/// Black or white, whichever contrasts more with the background (always ≥ 4.58 : 1).
fn text_color_for(bg: [u8; 3]) -> [u8; 3] {
    let l = relative_luminance(bg);
    if 1.05 / (l + 0.05) >= (l + 0.05) / 0.05 {
        [255, 255, 255]
    } else {
        [0, 0, 0]
    }
}

// ---------------------------------------------------------------------------------------------
// Layout
// ---------------------------------------------------------------------------------------------

struct Builder {
    rng: SplitMix64,
    names: Namer,
    nodes: Vec<Node>,
    lines: Vec<Line>,
}

/// A straight line through (or near) the centre: points are u·t + v·offset.
struct RadialDef {
    mode: Mode,
    theta: f64,
    offset: f64,
    t_min: f64,
    t_max: f64,
    spacing: f64,
    forced: Vec<(f64, u32)>,
}

struct RingDef {
    mode: Mode,
    r: f64,
    spacing: f64,
    forced: Vec<(f64, u32)>,
}

impl Builder {
    fn add_node(&mut self, p: Pt, group: Group, perp: Pt) -> u32 {
        let name = self.names.place();
        self.add_named_node(p, group, perp, name)
    }

    fn add_named_node(&mut self, p: Pt, group: Group, perp: Pt, name: String) -> u32 {
        self.nodes.push(Node { p, group, perp, name, lines: Vec::new(), first_stop: 0, station: None });
        (self.nodes.len() - 1) as u32
    }

    fn push_line(&mut self, mode: Mode, shape: LineShape, nodes: Vec<u32>) {
        let li = self.lines.len() as u32;
        for &n in &nodes {
            let l = &mut self.nodes[n as usize].lines;
            if !l.contains(&li) {
                l.push(li);
            }
        }
        let base_headway_s = 60
            * match mode {
                Mode::Rail => 20,
                Mode::Metro => 5,
                Mode::Tram => 10,
                Mode::Bus => match shape {
                    LineShape::Feeder => [10, 12, 15, 20, 20, 30][self.rng.below(6) as usize],
                    _ => 10,
                },
            };
        let off0 = 60 * self.rng.below(base_headway_s as u64 / 60) as u32;
        let off1 = (off0 + base_headway_s / 2) % base_headway_s / 60 * 60;
        self.lines.push(Line {
            mode,
            shape,
            nodes,
            base_headway_s,
            offset_s: [off0, off1],
            stops: [Vec::new(), Vec::new()],
            hop_s: [Vec::new(), Vec::new()],
            short_name: String::new(),
            long_name: String::new(),
            headsign: [String::new(), String::new()],
            color: [0; 3],
            text_color: [0; 3],
            agency: "A1",
            low_floor_share: 1.0,
            sort_order: 0,
        });
    }

    /// Rows of stops.txt that the nodes made so far will produce.
    fn estimated_stops(&self) -> usize {
        self.nodes
            .iter()
            .map(|n| match n.group {
                Group::Heavy if n.lines.len() >= 2 => 4 + n.lines.len(),
                Group::Heavy | Group::Tram => 1,
                Group::Bus => 2,
            })
            .sum()
    }

    fn radials(
        &mut self,
        mode: Mode,
        count: usize,
        phase: f64,
        extent: f64,
        spacing: f64,
        offset: impl Fn(&mut SplitMix64, usize) -> f64,
    ) -> Vec<RadialDef> {
        (0..count)
            .map(|i| {
                let step = PI / count as f64;
                let theta = phase + step * i as f64 + self.rng.range(-0.12, 0.12) * step;
                RadialDef {
                    mode,
                    theta,
                    offset: offset(&mut self.rng, i),
                    t_min: -extent * self.rng.range(0.75, 1.0),
                    t_max: extent * self.rng.range(0.75, 1.0),
                    spacing,
                    forced: Vec::new(),
                }
            })
            .collect()
    }

    /// Shared nodes where radials cross rings of the same group.
    fn cross(&mut self, radials: &mut [RadialDef], rings: &mut [RingDef], group: Group) {
        for rd in radials.iter_mut() {
            let (s, c) = sin_cos(rd.theta);
            let (u, v) = (Pt::new(c, s), Pt::new(-s, c));
            for rg in rings.iter_mut() {
                if rg.r <= rd.offset.abs() + 1.0 {
                    continue;
                }
                let t = (rg.r * rg.r - rd.offset * rd.offset).sqrt();
                for t in [t, -t] {
                    if t <= rd.t_min + 0.3 * rd.spacing || t >= rd.t_max - 0.3 * rd.spacing {
                        continue;
                    }
                    let p = u.scale(t).add(v.scale(rd.offset));
                    let node = self.add_node(p, group, v);
                    rd.forced.push((t, node));
                    rg.forced.push((atan2(p.y, p.x), node));
                }
            }
        }
    }

    fn build_radial(&mut self, rd: RadialDef) {
        let group = rd.mode.group();
        let (s, c) = sin_cos(rd.theta);
        let (u, v) = (Pt::new(c, s), Pt::new(-s, c));
        let pos = |t: f64| u.scale(t).add(v.scale(rd.offset));
        let mut anchors: Vec<(f64, Option<u32>)> = rd.forced.iter().map(|&(t, n)| (t, Some(n))).collect();
        anchors.sort_by(|a, b| a.0.total_cmp(&b.0));
        if anchors.first().is_none_or(|a| a.0 - rd.t_min > 0.3 * rd.spacing) {
            anchors.insert(0, (rd.t_min, None));
        }
        if anchors.last().is_none_or(|a| rd.t_max - a.0 > 0.3 * rd.spacing) {
            anchors.push((rd.t_max, None));
        }
        let wiggle = if group == Group::Bus { 30.0 } else { 0.0 };
        let mut nodes = Vec::new();
        for i in 0..anchors.len() {
            let (t, fixed) = anchors[i];
            let id = match fixed {
                Some(id) => id,
                None => self.add_node(pos(t), group, v),
            };
            nodes.push(id);
            if i + 1 < anchors.len() {
                let t2 = anchors[i + 1].0;
                let k = ((t2 - t) / rd.spacing).round().max(1.0) as usize;
                let seg = (t2 - t) / k as f64;
                for j in 1..k {
                    let tj = t + seg * j as f64 + seg * self.rng.range(-0.15, 0.15);
                    let w = self.rng.range(-wiggle, wiggle);
                    let id = self.add_node(pos(tj).add(v.scale(w)), group, v);
                    nodes.push(id);
                }
            }
        }
        self.push_line(rd.mode, LineShape::Radial, nodes);
    }

    fn build_ring(&mut self, rg: RingDef) {
        let group = rg.mode.group();
        let two_pi = 2.0 * PI;
        let mut anchors: Vec<(f64, Option<u32>)> = rg.forced.iter().map(|&(a, n)| (a.rem_euclid(two_pi), Some(n))).collect();
        anchors.sort_by(|a, b| a.0.total_cmp(&b.0));
        if anchors.is_empty() {
            anchors.push((self.rng.angle(), None));
        }
        let wiggle = if group == Group::Bus { 30.0 } else { 0.0 };
        let mut nodes = Vec::new();
        let n = anchors.len();
        for i in 0..n {
            let (a, fixed) = anchors[i];
            let id = match fixed {
                Some(id) => id,
                None => {
                    let p = Pt::polar(rg.r, a);
                    self.add_node(p, group, p.unit())
                }
            };
            nodes.push(id);
            let mut b = if i + 1 < n { anchors[i + 1].0 } else { anchors[0].0 + two_pi };
            if b <= a {
                b += two_pi;
            }
            let k = ((rg.r * (b - a)) / rg.spacing).round().max(if n == 1 { 3.0 } else { 1.0 }) as usize;
            let seg = (b - a) / k as f64;
            for j in 1..k {
                let aj = a + seg * j as f64 + seg * self.rng.range(-0.15, 0.15);
                let r = rg.r + self.rng.range(-wiggle, wiggle);
                let p = Pt::polar(r, aj);
                let id = self.add_node(p, group, p.unit());
                nodes.push(id);
            }
        }
        self.push_line(rg.mode, LineShape::Ring, nodes);
    }

    /// A bus line from near a rapid-transit stop, wandering outwards or across, kept in the city.
    fn build_feeder(&mut self, hub: Pt, len: usize, spacing: f64, city_r: f64) {
        let mut p = hub.add(Pt::polar(self.rng.range(80.0, 250.0), self.rng.angle()));
        let mut heading = self.rng.angle();
        let mut nodes = Vec::with_capacity(len);
        for _ in 0..len {
            let dir = Pt::polar(1.0, heading);
            nodes.push(self.add_node(p, Group::Bus, dir.right()));
            heading += self.rng.range(-0.3, 0.3);
            let step = spacing * self.rng.range(0.75, 1.25);
            let mut next = p.add(Pt::polar(step, heading));
            if next.len() > city_r {
                heading = atan2(-p.y, -p.x) + self.rng.range(-0.7, 0.7);
                next = p.add(Pt::polar(step, heading));
            }
            p = next;
        }
        self.push_line(Mode::Bus, LineShape::Feeder, nodes);
    }

    fn layout(&mut self, spec: &Spec, city: &str) {
        // Rail and metro: radials through the centre station, interleaved by angle.
        let n_heavy = spec.rail_radials + spec.metro_radials;
        let phase = self.rng.range(0.0, PI);
        let mut heavy: Vec<RadialDef> = Vec::new();
        let all = self.radials(Mode::Metro, n_heavy, phase, 1.0, 1.0, |_, _| 0.0);
        for (i, mut rd) in all.into_iter().enumerate() {
            let is_rail = spec.rail_radials > 0 && (i + 1) * spec.rail_radials / n_heavy > i * spec.rail_radials / n_heavy;
            let (mode, extent, spacing) = if is_rail {
                (Mode::Rail, spec.rail_extent, spec.rail_spacing)
            } else {
                (Mode::Metro, spec.metro_extent, spec.metro_spacing)
            };
            rd.mode = mode;
            rd.t_min *= extent;
            rd.t_max *= extent;
            rd.spacing = spacing;
            heavy.push(rd);
        }
        if !heavy.is_empty() {
            let centre = self.add_named_node(Pt::ZERO, Group::Heavy, Pt::new(0.0, 1.0), format!("{city} Central"));
            for rd in heavy.iter_mut() {
                rd.forced.push((0.0, centre));
            }
        }
        let mut heavy_rings: Vec<RingDef> =
            spec.heavy_rings.iter().map(|&(mode, r, spacing)| RingDef { mode, r, spacing, forced: Vec::new() }).collect();
        self.cross(&mut heavy, &mut heavy_rings, Group::Heavy);
        for rd in heavy {
            self.build_radial(rd);
        }
        for rg in heavy_rings {
            self.build_ring(rg);
        }

        // Trams: radials passing 150–350 m beside the centre, and rings.
        let tram_phase = phase + 0.5 * PI / spec.tram_radials.max(1) as f64;
        let mut trams = self.radials(Mode::Tram, spec.tram_radials, tram_phase, spec.tram_extent, spec.tram_spacing, |rng, i| {
            let d = rng.range(150.0, 350.0);
            if i % 2 == 0 {
                d
            } else {
                -d
            }
        });
        let mut tram_rings: Vec<RingDef> =
            spec.tram_rings.iter().map(|&(r, spacing)| RingDef { mode: Mode::Tram, r, spacing, forced: Vec::new() }).collect();
        self.cross(&mut trams, &mut tram_rings, Group::Tram);
        for rd in trams {
            self.build_radial(rd);
        }
        for rg in tram_rings {
            self.build_ring(rg);
        }

        // Buses: trunk radials and rings, then feeders until the stop target is met.
        let bus_phase = self.rng.range(0.0, PI);
        let mut buses =
            self.radials(Mode::Bus, spec.bus_radials, bus_phase, spec.bus_extent, spec.bus_spacing, |rng, _| rng.range(-500.0, 500.0));
        let mut bus_rings: Vec<RingDef> =
            spec.bus_rings.iter().map(|&(r, spacing)| RingDef { mode: Mode::Bus, r, spacing, forced: Vec::new() }).collect();
        self.cross(&mut buses, &mut bus_rings, Group::Bus);
        for rd in buses {
            self.build_radial(rd);
        }
        for rg in bus_rings {
            self.build_ring(rg);
        }

        let hubs: Vec<Pt> = self.nodes.iter().filter(|n| n.group != Group::Bus).map(|n| n.p).collect();
        let mut estimate = self.estimated_stops();
        while !hubs.is_empty() {
            let len = ((spec.feeder_len as f64 * self.rng.range(0.7, 1.3)).round() as usize).max(3);
            if estimate + len >= spec.stops_target {
                break;
            }
            let hub = hubs[self.rng.below(hubs.len() as u64) as usize];
            self.build_feeder(hub, len, spec.bus_spacing * 0.9, spec.city_r);
            estimate += 2 * len;
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Streaming CSV into the zip
// ---------------------------------------------------------------------------------------------

const FLUSH_AT: usize = 1 << 16;

/// Builds rows in a buffer and hands full buffers to the zip writer. Field methods write the
/// separator themselves; `end_row` ends the line.
struct CsvZip<W: Write + Seek> {
    zip: ZipWriter<W>,
    buf: Vec<u8>,
    opts: SimpleFileOptions,
}

impl<W: Write + Seek> CsvZip<W> {
    fn file(&mut self, name: &str, header: &str) -> io::Result<()> {
        self.flush()?;
        self.zip.start_file(name, self.opts).map_err(io::Error::other)?;
        self.buf.extend_from_slice(header.as_bytes());
        self.buf.push(b'\n');
        Ok(())
    }

    fn flush(&mut self) -> io::Result<()> {
        if !self.buf.is_empty() {
            self.zip.write_all(&self.buf)?;
            self.buf.clear();
        }
        Ok(())
    }

    fn end_row(&mut self) -> io::Result<()> {
        if self.buf.last() == Some(&b',') {
            self.buf.pop();
        }
        self.buf.push(b'\n');
        if self.buf.len() >= FLUSH_AT {
            self.flush()?;
        }
        Ok(())
    }

    fn sep(&mut self) -> &mut Self {
        self.buf.push(b',');
        self
    }

    fn empty(&mut self) -> &mut Self {
        self.sep()
    }

    fn text(&mut self, s: &str) -> &mut Self {
        if s.bytes().any(|b| matches!(b, b',' | b'"' | b'\n' | b'\r')) {
            self.buf.push(b'"');
            for b in s.bytes() {
                if b == b'"' {
                    self.buf.push(b'"');
                }
                self.buf.push(b);
            }
            self.buf.push(b'"');
        } else {
            self.buf.extend_from_slice(s.as_bytes());
        }
        self.sep()
    }

    fn digits(&mut self, mut v: u64) {
        let mut tmp = [0u8; 20];
        let mut i = tmp.len();
        loop {
            i -= 1;
            tmp[i] = b'0' + (v % 10) as u8;
            v /= 10;
            if v == 0 {
                break;
            }
        }
        self.buf.extend_from_slice(&tmp[i..]);
    }

    fn uint(&mut self, v: u64) -> &mut Self {
        self.digits(v);
        self.sep()
    }

    fn int(&mut self, v: i64) -> &mut Self {
        if v < 0 {
            self.buf.push(b'-');
        }
        self.digits(v.unsigned_abs());
        self.sep()
    }

    /// A prefixed numeric id such as `s123` or `t45678`.
    fn id(&mut self, prefix: &[u8], v: u64) -> &mut Self {
        self.buf.extend_from_slice(prefix);
        self.digits(v);
        self.sep()
    }

    /// `sh12a` / `sh12b`: line 12, direction 0 / 1.
    fn shape_id(&mut self, line: usize, dir: usize) -> &mut Self {
        self.buf.extend_from_slice(b"sh");
        self.digits(line as u64);
        self.buf.push(if dir == 0 { b'a' } else { b'b' });
        self.sep()
    }

    fn level_id(&mut self, station: u32, k: u8) -> &mut Self {
        self.buf.extend_from_slice(b"lv");
        self.digits(station as u64);
        self.buf.extend_from_slice(match k {
            0 => b"_street".as_slice(),
            1 => b"_concourse".as_slice(),
            _ => b"_platforms".as_slice(),
        });
        self.sep()
    }

    /// A decimal with `decimals` places from an integer scaled by 10^decimals.
    fn fixed(&mut self, v: i64, decimals: u32) -> &mut Self {
        let scale = 10u64.pow(decimals);
        let a = v.unsigned_abs();
        if v < 0 {
            self.buf.push(b'-');
        }
        self.digits(a / scale);
        self.buf.push(b'.');
        let mut f = a % scale;
        let mut frac = [b'0'; 20];
        for i in (0..decimals as usize).rev() {
            frac[i] = b'0' + (f % 10) as u8;
            f /= 10;
        }
        self.buf.extend_from_slice(&frac[..decimals as usize]);
        self.sep()
    }

    /// HH:MM:SS, hours may pass 24.
    fn time(&mut self, s: u32) -> &mut Self {
        let (h, m, sec) = (s / 3600, s / 60 % 60, s % 60);
        if h < 10 {
            self.buf.push(b'0');
        }
        self.digits(h as u64);
        for v in [m, sec] {
            self.buf.push(b':');
            self.buf.push(b'0' + (v / 10) as u8);
            self.buf.push(b'0' + (v % 10) as u8);
        }
        self.sep()
    }

    fn hex(&mut self, rgb: [u8; 3]) -> &mut Self {
        const HEX: &[u8; 16] = b"0123456789ABCDEF";
        for c in rgb {
            self.buf.push(HEX[(c >> 4) as usize]);
            self.buf.push(HEX[(c & 15) as usize]);
        }
        self.sep()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::HashMap;
    use std::io::{Cursor, Read};

    /// A parsed CSV file: header and rows of fields (RFC 4180 quoting).
    struct Table {
        header: Vec<String>,
        rows: Vec<Vec<String>>,
    }

    impl Table {
        fn parse(text: &str) -> Table {
            let mut records = Vec::new();
            let mut field = String::new();
            let mut record = Vec::new();
            let mut quoted = false;
            let mut chars = text.chars().peekable();
            while let Some(c) = chars.next() {
                match (quoted, c) {
                    (true, '"') if chars.peek() == Some(&'"') => {
                        field.push('"');
                        chars.next();
                    }
                    (true, '"') => quoted = false,
                    (true, c) => field.push(c),
                    (false, '"') => quoted = true,
                    (false, ',') => record.push(std::mem::take(&mut field)),
                    (false, '\r') => {}
                    (false, '\n') => {
                        record.push(std::mem::take(&mut field));
                        records.push(std::mem::take(&mut record));
                    }
                    (false, c) => field.push(c),
                }
            }
            assert!(field.is_empty() && record.is_empty(), "file must end with a newline");
            let header = records.remove(0);
            for (i, r) in records.iter().enumerate() {
                assert_eq!(r.len(), header.len(), "line {} has {} fields, header has {}", i + 2, r.len(), header.len());
            }
            Table { header, rows: records }
        }
        fn col(&self, name: &str) -> usize {
            self.header.iter().position(|h| h == name).unwrap_or_else(|| panic!("no column {name}"))
        }
        fn column(&self, name: &str) -> Vec<&str> {
            let c = self.col(name);
            self.rows.iter().map(|r| r[c].as_str()).collect()
        }
    }

    /// Seeds the semantic checks run on.
    const TEST_SEEDS: [u64; 4] = [1, 2, 3, 42];

    fn small_feed(seed: u64) -> (Vec<u8>, SynthStats) {
        let mut out = Cursor::new(Vec::new());
        let stats = write_feed(Preset::Small, seed, &mut out).expect("writing to memory cannot fail");
        (out.into_inner(), stats)
    }

    fn read_feed(bytes: &[u8]) -> HashMap<String, Table> {
        let mut zip = zip::ZipArchive::new(Cursor::new(bytes)).expect("a readable zip");
        let mut files = HashMap::new();
        for i in 0..zip.len() {
            let mut f = zip.by_index(i).unwrap();
            assert_eq!(f.compression(), CompressionMethod::Deflated, "{}", f.name());
            assert_eq!(f.last_modified(), Some(feed_timestamp()), "{}", f.name());
            let mut text = String::new();
            f.read_to_string(&mut text).unwrap();
            files.insert(f.name().to_string(), Table::parse(&text));
        }
        files
    }

    fn secs(t: &str) -> u32 {
        let p: Vec<u32> = t.split(':').map(|x| x.parse().unwrap()).collect();
        assert_eq!(p.len(), 3, "time {t} is not HH:MM:SS");
        assert!(p[1] < 60 && p[2] < 60, "time {t}");
        p[0] * 3600 + p[1] * 60 + p[2]
    }

    #[test]
    fn splitmix64_matches_reference_outputs() {
        // Source: Vigna's reference splitmix64.c, state 0, first four outputs.
        let mut r = SplitMix64(0);
        let got: Vec<u64> = (0..4).map(|_| r.next_u64()).collect();
        assert_eq!(got, [0xE220A8397B1DCDAF, 0x6E789E6AA1B965F4, 0x06C45D188009454F, 0xF88BB8A8724C81EC]);
    }

    #[test]
    fn own_trigonometry_matches_std() {
        // Reference: Rust std f64::sin, f64::cos and f64::atan2 (the platform libm).
        for i in -2000..=2000 {
            let x = i as f64 * 0.0123;
            let (s, c) = sin_cos(x);
            assert!((s - x.sin()).abs() < 1e-13 && (c - x.cos()).abs() < 1e-13, "x = {x}");
            for &(y, xx) in &[(x, 1.0), (1.0, x), (-x, -0.5), (x, -3.0), (-2.0, x)] {
                assert!((atan2(y, xx) - y.atan2(xx)).abs() < 1e-13, "atan2({y}, {xx})");
            }
        }
    }

    #[test]
    fn weekday_agrees_with_zeller() {
        // Source: Zeller's congruence (h = 0 is Saturday); and 1970-01-01 was a Thursday (POSIX epoch).
        assert_eq!(weekday(1970, 1, 1), 3);
        let days_in = |y: i32, m: u32| match m {
            2 if y % 4 == 0 && (y % 100 != 0 || y % 400 == 0) => 29,
            2 => 28,
            4 | 6 | 9 | 11 => 30,
            _ => 31,
        };
        for y in 2024..=2028 {
            for m in 1..=12u32 {
                for d in 1..=days_in(y, m) {
                    let (zm, zy) = if m < 3 { (m as i64 + 12, y as i64 - 1) } else { (m as i64, y as i64) };
                    let (k, j) = (zy % 100, zy / 100);
                    let h = (d as i64 + 13 * (zm + 1) / 5 + k + k / 4 + j / 4 + 5 * j) % 7;
                    let monday0 = (h + 5) % 7;
                    assert_eq!(weekday(y, m, d) as i64, monday0, "{y}-{m}-{d}");
                }
            }
        }
    }

    #[test]
    fn preset_names_parse() {
        assert_eq!("small".parse::<Preset>(), Ok(Preset::Small));
        assert_eq!("Region".parse::<Preset>(), Ok(Preset::Region));
        assert_eq!("metro".parse::<Preset>(), Ok(Preset::Metro));
        let err = "huge".parse::<Preset>().unwrap_err();
        assert_eq!(err.to_string(), "unknown preset \"huge\": expected small, region or metro");
        for p in [Preset::Small, Preset::Region, Preset::Metro] {
            assert_eq!(p.to_string().parse::<Preset>(), Ok(p));
        }
    }

    #[test]
    fn same_seed_gives_same_bytes() {
        let (a, sa) = small_feed(7);
        let (b, sb) = small_feed(7);
        assert_eq!(sa, sb);
        assert!(a == b, "two runs with seed 7 differ");
        assert_eq!(sa.bytes, a.len());
        let (c, _) = small_feed(8);
        assert!(a != c, "seeds 7 and 8 gave the same feed");
    }

    #[test]
    fn bytes_count_from_the_writers_start_position() {
        let mut out = Cursor::new(b"prefix".to_vec());
        out.set_position(6);
        let stats = write_feed(Preset::Small, 1, &mut out).unwrap();
        assert_eq!(stats.bytes + 6, out.get_ref().len());
    }

    /// Size targets of the brief, ±10 %. The metro figures follow a published large metropolitan
    /// network: about 20,800 stops, 125,000 trips and 4.85 M connections (stop_times − trips).
    #[test]
    fn presets_hit_their_size_targets() {
        let within = |got: usize, want: usize| (got as f64 - want as f64).abs() <= 0.1 * want as f64;
        for (preset, stops, trips, stop_times) in
            [(Preset::Small, 300, None, 50_000), (Preset::Region, 3_000, None, 600_000), (Preset::Metro, 20_000, Some(130_000), 5_000_000)]
        {
            for seed in [1, 2] {
                let net = Network::build(preset, seed);
                let c = net.counts(net.headway_factor);
                assert!(within(net.stops.len(), stops), "{preset}: {} stops", net.stops.len());
                assert!(within(c.stop_times, stop_times), "{preset}: {} stop_times", c.stop_times);
                if let Some(t) = trips {
                    assert!(within(c.trips, t), "{preset}: {} trips", c.trips);
                    assert!(within(c.stop_times - c.trips, 4_850_000), "{preset}: {} connections", c.stop_times - c.trips);
                    assert!(within(net.stops.len(), 20_800), "{preset}: {} stops", net.stops.len());
                }
            }
        }
    }

    #[test]
    fn small_feed_counts_and_stats_match_its_files() {
        let (bytes, stats) = small_feed(1);
        let f = read_feed(&bytes);
        assert!((270..=330).contains(&stats.stops), "{} stops", stats.stops);
        assert!((45_000..=55_000).contains(&stats.stop_times), "{} stop_times", stats.stop_times);
        assert_eq!(f["stops.txt"].rows.len(), stats.stops);
        assert_eq!(f["routes.txt"].rows.len(), stats.routes);
        assert_eq!(f["trips.txt"].rows.len(), stats.trips);
        assert_eq!(f["stop_times.txt"].rows.len(), stats.stop_times);
    }

    #[test]
    fn required_columns_of_the_gtfs_schedule_reference_are_present() {
        // Source: GTFS Schedule reference (gtfs.org/schedule/reference), "Required" and the
        // "Conditionally Required" fields this feed needs, per file.
        let (bytes, _) = small_feed(1);
        let f = read_feed(&bytes);
        let required: &[(&str, &[&str])] = &[
            ("agency.txt", &["agency_id", "agency_name", "agency_url", "agency_timezone"]),
            ("stops.txt", &["stop_id", "stop_name", "stop_lat", "stop_lon", "location_type", "parent_station"]),
            ("routes.txt", &["route_id", "agency_id", "route_short_name", "route_long_name", "route_type"]),
            ("trips.txt", &["route_id", "service_id", "trip_id"]),
            ("stop_times.txt", &["trip_id", "arrival_time", "departure_time", "stop_id", "stop_sequence"]),
            (
                "calendar.txt",
                &["service_id", "monday", "tuesday", "wednesday", "thursday", "friday", "saturday", "sunday", "start_date", "end_date"],
            ),
            ("calendar_dates.txt", &["service_id", "date", "exception_type"]),
            ("feed_info.txt", &["feed_publisher_name", "feed_publisher_url", "feed_lang"]),
            ("transfers.txt", &["from_stop_id", "to_stop_id", "transfer_type"]),
            ("pathways.txt", &["pathway_id", "from_stop_id", "to_stop_id", "pathway_mode", "is_bidirectional"]),
            ("levels.txt", &["level_id", "level_index"]),
            ("shapes.txt", &["shape_id", "shape_pt_lat", "shape_pt_lon", "shape_pt_sequence"]),
        ];
        assert_eq!(f.len(), required.len(), "files: {:?}", f.keys().collect::<Vec<_>>());
        for (file, cols) in required {
            let t = f.get(*file).unwrap_or_else(|| panic!("{file} missing"));
            for c in *cols {
                assert!(t.header.iter().any(|h| h == c), "{file} lacks {c}");
            }
            assert!(!t.rows.is_empty(), "{file} is empty");
        }
        // Reference: stop_name, stop_lat, stop_lon required for location_type 0, 1, 2;
        // parent_station required for 2, 3, 4 and forbidden for 1.
        let s = &f["stops.txt"];
        let (lt, name, lat, lon, parent) =
            (s.col("location_type"), s.col("stop_name"), s.col("stop_lat"), s.col("stop_lon"), s.col("parent_station"));
        for r in &s.rows {
            if matches!(r[lt].as_str(), "0" | "1" | "2") {
                assert!(!r[name].is_empty() && !r[lat].is_empty() && !r[lon].is_empty(), "{r:?}");
            }
            match r[lt].as_str() {
                "2" | "3" => assert!(!r[parent].is_empty(), "{r:?}"),
                "1" => assert!(r[parent].is_empty(), "{r:?}"),
                _ => {}
            }
        }
        // Reference: agency_timezone is a tz database name; feed_info dates as asked.
        assert!(f["agency.txt"].column("agency_timezone").iter().all(|z| *z == "Etc/GMT-1"));
        assert_eq!(f["feed_info.txt"].column("feed_start_date"), ["20260101"]);
        assert_eq!(f["feed_info.txt"].column("feed_end_date"), ["20271231"]);
    }

    #[test]
    fn every_reference_resolves() {
        for seed in TEST_SEEDS {
            every_reference_resolves_for(seed);
        }
    }

    fn every_reference_resolves_for(seed: u64) {
        let (bytes, _) = small_feed(seed);
        let f = read_feed(&bytes);
        let ids = |file: &str, col: &str| -> HashSet<String> { f[file].column(col).into_iter().map(String::from).collect() };
        let stops = ids("stops.txt", "stop_id");
        let trips = ids("trips.txt", "trip_id");
        let routes = ids("routes.txt", "route_id");
        let services = ids("calendar.txt", "service_id");
        let shapes = ids("shapes.txt", "shape_id");
        let levels = ids("levels.txt", "level_id");
        let agencies = ids("agency.txt", "agency_id");
        assert_eq!(stops.len(), f["stops.txt"].rows.len(), "stop_id unique");
        assert_eq!(trips.len(), f["trips.txt"].rows.len(), "trip_id unique");
        let st = &f["stop_times.txt"];
        for (t, s) in st.column("trip_id").iter().zip(st.column("stop_id")) {
            assert!(trips.contains(*t), "stop_times trip_id {t}");
            assert!(stops.contains(s), "stop_times stop_id {s}");
        }
        let tr = &f["trips.txt"];
        for ((r, sv), sh) in tr.column("route_id").iter().zip(tr.column("service_id")).zip(tr.column("shape_id")) {
            assert!(routes.contains(*r) && services.contains(sv) && shapes.contains(sh), "{r} {sv} {sh}");
        }
        assert!(f["routes.txt"].column("agency_id").iter().all(|a| agencies.contains(*a)));
        for s in f["calendar_dates.txt"].column("service_id") {
            assert!(services.contains(s));
        }
        let s = &f["stops.txt"];
        let kind: HashMap<&str, &str> = s.column("stop_id").into_iter().zip(s.column("location_type")).collect();
        for (p, l) in s.column("parent_station").iter().zip(s.column("level_id")) {
            // Reference: parent_station must name a location_type 1 station.
            assert!(p.is_empty() || kind.get(p) == Some(&"1"), "parent {p}");
            assert!(l.is_empty() || levels.contains(l), "level {l}");
        }
        let t = &f["transfers.txt"];
        for (a, b) in t.column("from_stop_id").iter().zip(t.column("to_stop_id")) {
            assert!(stops.contains(*a) && stops.contains(b), "transfer {a} -> {b}");
        }
        let used_stops: HashSet<&str> = st.column("stop_id").into_iter().collect();
        for (id, lt) in s.column("stop_id").iter().zip(s.column("location_type")) {
            assert_eq!(lt == "0", used_stops.contains(id), "stop {id} (location_type {lt}) served iff a stop/platform");
        }
    }

    #[test]
    fn times_increase_along_every_trip_and_service_runs_late() {
        for seed in TEST_SEEDS {
            times_increase_along_every_trip_and_service_runs_late_for(seed);
        }
    }

    fn times_increase_along_every_trip_and_service_runs_late_for(seed: u64) {
        let (bytes, _) = small_feed(seed);
        let f = read_feed(&bytes);
        let st = &f["stop_times.txt"];
        let (ti, ai, di, si, qi) =
            (st.col("trip_id"), st.col("arrival_time"), st.col("departure_time"), st.col("stop_id"), st.col("stop_sequence"));
        let mut seen = HashSet::new();
        let mut prev: Option<(&str, u32, u32)> = None;
        let (mut first_dep, mut last_first_dep, mut past_midnight) = (u32::MAX, 0, 0);
        let mut firsts: HashMap<&str, &str> = HashMap::new();
        let mut ring_trips = 0;
        for r in &st.rows {
            let (trip, arr, dep, seq) = (r[ti].as_str(), secs(&r[ai]), secs(&r[di]), r[qi].parse::<u32>().unwrap());
            assert!(arr <= dep, "{r:?}");
            match prev {
                Some((p, pdep, pseq)) if p == trip => {
                    assert!(arr > pdep, "trip {trip}: arrival {} not after previous departure", r[ai]);
                    assert!(seq > pseq, "trip {trip}: stop_sequence {seq} after {pseq}");
                    if seq > 2 && firsts.get(trip) == Some(&r[si].as_str()) {
                        ring_trips += 1;
                    }
                }
                _ => {
                    assert!(seen.insert(trip.to_string()), "rows of trip {trip} are not contiguous");
                    firsts.insert(trip, r[si].as_str());
                    first_dep = first_dep.min(dep);
                    last_first_dep = last_first_dep.max(dep);
                }
            }
            if arr >= 24 * 3600 {
                past_midnight += 1;
            }
            prev = Some((trip, dep, seq));
        }
        assert!((hm(5, 0)..hm(5, 15)).contains(&first_dep), "service starts about 05:00, not {first_dep} s");
        assert!(last_first_dep <= hm(24, 30) && last_first_dep >= hm(24, 0), "last departure {last_first_dep}");
        assert!(past_midnight > 100, "only {past_midnight} stop times after 24:00:00");
        assert!(ring_trips > 0, "ring trips return to their first stop");
    }

    #[test]
    fn headways_are_shorter_in_the_peaks() {
        // Brief: peaks 07–09 and 16–19 denser, evenings sparser (common practice, no source).
        let net = Network::build(Preset::Metro, 1);
        let metro = net.lines.iter().find(|l| l.mode == Mode::Metro).unwrap();
        let deps = departures(metro, 0, 0, net.headway_factor);
        let per_hour = |a: u32, b: u32| deps.iter().filter(|(t, _)| *t >= a && *t < b).count() as f64 / ((b - a) as f64 / 3600.0);
        let (am, mid, pm, eve) =
            (per_hour(hm(7, 0), hm(9, 0)), per_hour(hm(10, 0), hm(15, 0)), per_hour(hm(16, 0), hm(19, 0)), per_hour(hm(21, 0), hm(24, 0)));
        assert!(am > mid && pm > mid && mid > eve, "per hour: am {am} midday {mid} pm {pm} evening {eve}");
        let sunday = departures(metro, 2, 0, net.headway_factor).len();
        assert!(sunday < deps.len(), "Sunday {sunday} vs weekday {}", deps.len());
    }

    /// Great-circle distance, haversine formula with the mean Earth radius 6,371,008.8 m
    /// (IUGG mean radius; recalled from memory).
    fn haversine_m(a: (f64, f64), b: (f64, f64)) -> f64 {
        let (la1, lo1, la2, lo2) = (a.0.to_radians(), a.1.to_radians(), b.0.to_radians(), b.1.to_radians());
        let h = ((la2 - la1) / 2.0).sin().powi(2) + la1.cos() * la2.cos() * ((lo2 - lo1) / 2.0).sin().powi(2);
        2.0 * 6_371_008.8 * h.sqrt().asin()
    }

    #[test]
    fn lines_meet_within_walking_distance() {
        for seed in TEST_SEEDS {
            lines_meet_within_walking_distance_for(seed);
        }
    }

    fn lines_meet_within_walking_distance_for(seed: u64) {
        let (bytes, _) = small_feed(seed);
        let f = read_feed(&bytes);
        let s = &f["stops.txt"];
        let pos: HashMap<&str, (f64, f64)> = s
            .column("stop_id")
            .into_iter()
            .zip(s.column("stop_lat").into_iter().zip(s.column("stop_lon")))
            .map(|(id, (la, lo))| (id, (la.parse().unwrap(), lo.parse().unwrap())))
            .collect();
        let station: HashMap<&str, &str> = s.column("stop_id").into_iter().zip(s.column("parent_station")).collect();
        let trip_route: HashMap<&str, &str> = f["trips.txt"].column("trip_id").into_iter().zip(f["trips.txt"].column("route_id")).collect();
        let mut route_stops: HashMap<&str, HashSet<&str>> = HashMap::new();
        let st = &f["stop_times.txt"];
        for (t, stop) in st.column("trip_id").iter().zip(st.column("stop_id")) {
            route_stops.entry(trip_route[t]).or_default().insert(stop);
        }
        let mut routes: Vec<&str> = route_stops.keys().copied().collect();
        routes.sort();
        let mut parent: Vec<usize> = (0..routes.len()).collect();
        fn find(p: &mut [usize], x: usize) -> usize {
            if p[x] != x {
                let r = find(p, p[x]);
                p[x] = r;
            }
            p[x]
        }
        for (i, a) in routes.iter().enumerate() {
            let mut walk_link = false;
            for (j, b) in routes.iter().enumerate() {
                if i == j {
                    continue;
                }
                for sa in &route_stops[a] {
                    for sb in &route_stops[b] {
                        let same_station = !station[sa].is_empty() && station[sa] == station[sb];
                        let d = haversine_m(pos[sa], pos[sb]);
                        if sa == sb || same_station || d <= 400.0 {
                            let (ra, rb) = (find(&mut parent, i), find(&mut parent, j));
                            parent[ra] = rb;
                        }
                        if (50.0..=400.0).contains(&d) && !same_station {
                            walk_link = true;
                        }
                    }
                }
            }
            assert!(walk_link, "route {a} has no stop 50–400 m from another route's stop");
        }
        let root = find(&mut parent, 0);
        for i in 0..routes.len() {
            assert_eq!(find(&mut parent, i), root, "route {} is cut off from route {}", routes[i], routes[0]);
        }
    }

    #[test]
    fn station_interiors_follow_the_pathway_rules() {
        for seed in TEST_SEEDS {
            station_interiors_follow_the_pathway_rules_for(seed);
        }
    }

    fn station_interiors_follow_the_pathway_rules_for(seed: u64) {
        let (bytes, _) = small_feed(seed);
        let f = read_feed(&bytes);
        let s = &f["stops.txt"];
        let ids = s.column("stop_id");
        let lt: HashMap<&str, &str> = ids.iter().copied().zip(s.column("location_type")).collect();
        let wb: HashMap<&str, &str> = ids.iter().copied().zip(s.column("wheelchair_boarding")).collect();
        let parent: HashMap<&str, &str> = ids.iter().copied().zip(s.column("parent_station")).collect();
        let p = &f["pathways.txt"];
        let mut all: HashMap<&str, Vec<&str>> = HashMap::new();
        let mut step_free: HashMap<&str, Vec<&str>> = HashMap::new();
        let mut modes = HashSet::new();
        for r in &p.rows {
            let (from, to, mode, bidi) = (
                r[p.col("from_stop_id")].as_str(),
                r[p.col("to_stop_id")].as_str(),
                r[p.col("pathway_mode")].as_str(),
                r[p.col("is_bidirectional")].as_str(),
            );
            // Reference: pathway ends are location_type 0, 2, 3 or 4, never a station (1).
            assert!(matches!(lt[from], "0" | "2" | "3" | "4") && matches!(lt[to], "0" | "2" | "3" | "4"), "{r:?}");
            // Reference: exit gates (7) are never bidirectional; escalators run one way here.
            if mode == "7" || mode == "4" {
                assert_eq!(bidi, "0", "{r:?}");
            }
            modes.insert(mode.to_string());
            // Reference: stair_count positive when walking up from from_stop_id to to_stop_id.
            let stairs = &r[p.col("stair_count")];
            if !stairs.is_empty() {
                assert_eq!(mode, "2");
            }
            let free = matches!(mode, "1" | "3" | "5" | "6" | "7");
            for (a, b, ok) in [(from, to, true), (to, from, bidi == "1")] {
                if ok {
                    all.entry(a).or_default().push(b);
                    if free {
                        step_free.entry(a).or_default().push(b);
                    }
                }
            }
        }
        for m in ["1", "2", "3", "4", "5"] {
            assert!(modes.contains(m), "no pathway_mode {m}: walkway, stairs, moving sidewalk, escalator, elevator");
        }
        let reach = |g: &HashMap<&str, Vec<&str>>, from: &str, to: &str| {
            let mut stack = vec![from.to_string()];
            let mut seen = HashSet::new();
            while let Some(n) = stack.pop() {
                if n == to {
                    return true;
                }
                if seen.insert(n.clone()) {
                    for m in g.get(n.as_str()).into_iter().flatten() {
                        stack.push(m.to_string());
                    }
                }
            }
            false
        };
        let mut checked = [0usize; 3];
        for &id in &ids {
            if lt[id] != "0" || parent[id].is_empty() {
                continue;
            }
            let entrances: Vec<&str> = ids.iter().copied().filter(|e| lt[e] == "2" && parent[e] == parent[id]).collect();
            // Reference: each platform has a path to and from an entrance/exit.
            assert!(entrances.iter().any(|e| reach(&all, e, id) && reach(&all, id, e)), "platform {id} unreachable");
            // Reference: wheelchair_boarding of a child stop, empty inherits the parent's; 1 means
            // some accessible path from outside the station to the platform, 2 none.
            let own = wb[id];
            let resolved = if own.is_empty() { wb[parent[id]] } else { own };
            let free_path = entrances.iter().any(|e| reach(&step_free, e, id) && reach(&step_free, id, e));
            match resolved {
                "1" => assert!(free_path, "platform {id} marked accessible without a step-free path"),
                "2" => assert!(!free_path, "platform {id} marked not accessible but has a step-free path"),
                other => panic!("platform {id} resolves to wheelchair_boarding {other:?}"),
            }
            checked[if own.is_empty() {
                0
            } else if own == "1" {
                1
            } else {
                2
            }] += 1;
        }
        assert!(checked.iter().all(|&n| n > 0), "inherited / own 1 / own 2 platforms: {checked:?}");
        // Reference: levels.txt is required when pathways include elevators.
        assert!(!f["levels.txt"].rows.is_empty());
    }

    #[test]
    fn accessibility_values_are_mixed() {
        let (bytes, _) = small_feed(1);
        let f = read_feed(&bytes);
        for (file, col) in [("stops.txt", "wheelchair_boarding"), ("trips.txt", "wheelchair_accessible")] {
            let vals: HashSet<&str> = f[file].column(col).into_iter().collect();
            // Reference: 0 or empty = no information, 1 = accessible, 2 = not accessible.
            assert_eq!(vals, HashSet::from(["", "1", "2"]), "{file} {col}");
        }
    }

    #[test]
    fn calendar_exceptions_fall_on_matching_weekdays() {
        let (bytes, _) = small_feed(1);
        let f = read_feed(&bytes);
        let cal = &f["calendar.txt"];
        let days = ["monday", "tuesday", "wednesday", "thursday", "friday", "saturday", "sunday"];
        let runs = |svc: &str, wd: usize| cal.rows.iter().any(|r| r[cal.col("service_id")] == svc && r[cal.col(days[wd])] == "1");
        let cd = &f["calendar_dates.txt"];
        let (mut removed, mut added) = (0, 0);
        for r in &cd.rows {
            let (svc, date, ex) = (&r[cd.col("service_id")], &r[cd.col("date")], &r[cd.col("exception_type")]);
            assert!(date.as_str() >= FEED_START && date.as_str() <= FEED_END, "{date}");
            let (y, m, d) = (date[..4].parse().unwrap(), date[4..6].parse().unwrap(), date[6..].parse().unwrap());
            let wd = weekday(y, m, d) as usize;
            // Reference: exception_type 1 adds service on the date, 2 removes it.
            match ex.as_str() {
                "2" => {
                    assert!(runs(svc, wd), "{svc} removed on {date}, a day it does not run");
                    removed += 1;
                }
                "1" => {
                    assert!(!runs(svc, wd), "{svc} added on {date}, a day it already runs");
                    added += 1;
                }
                other => panic!("exception_type {other}"),
            }
        }
        assert!(removed >= 5 && added >= 5, "{removed} removed, {added} added");
    }

    #[test]
    fn route_colours_meet_wcag_contrast() {
        // Source: WCAG 2.1 contrast ratio (L1 + 0.05) / (L2 + 0.05), SC 1.4.3 minimum 4.5 : 1.
        let (bytes, _) = small_feed(1);
        let f = read_feed(&bytes);
        let r = &f["routes.txt"];
        let parse = |h: &str| -> [u8; 3] {
            assert_eq!(h.len(), 6, "{h}");
            [0, 2, 4].map(|i| u8::from_str_radix(&h[i..i + 2], 16).unwrap())
        };
        for (bg, fg) in r.column("route_color").into_iter().zip(r.column("route_text_color")) {
            let (a, b) = (relative_luminance(parse(bg)), relative_luminance(parse(fg)));
            let ratio = (a.max(b) + 0.05) / (a.min(b) + 0.05);
            assert!(ratio >= 4.5, "{bg} on {fg}: {ratio:.2}");
        }
        let types: HashSet<&str> = r.column("route_type").into_iter().collect();
        assert_eq!(types, HashSet::from(["0", "1", "2", "3"]), "tram, metro, rail and bus routes");
    }

    #[test]
    fn transfers_include_minimum_times_and_a_forbidden_one() {
        let (bytes, _) = small_feed(1);
        let f = read_feed(&bytes);
        let t = &f["transfers.txt"];
        let mut kinds = HashSet::new();
        for r in &t.rows {
            let (kind, min) = (&r[t.col("transfer_type")], &r[t.col("min_transfer_time")]);
            // Reference: transfer_type 2 requires min_transfer_time; it is a non-negative integer.
            assert_eq!(kind == "2", !min.is_empty(), "{r:?}");
            if !min.is_empty() {
                assert!(min.parse::<u32>().unwrap() > 0);
            }
            kinds.insert(kind.clone());
        }
        assert!(kinds.contains("2") && kinds.contains("3"), "{kinds:?}");
    }
}

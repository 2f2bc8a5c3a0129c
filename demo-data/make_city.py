#!/usr/bin/env python3
"""Write the invented demo city of Oskerveld as two GTFS Schedule feeds.

    python3 demo-data/make_city.py            # rewrite oskerveld-city/ and oskerveld-rail/
    python3 demo-data/make_city.py --zip DIR  # also write DIR/oskerveld-city.zip, DIR/oskerveld-rail.zip

The output is deterministic: no randomness, no clock, fixed row order, LF line ends, UTF-8
without a byte-order mark. Zips get fixed member timestamps, so the same source gives the same
bytes. Edit this script, not the generated .txt files. demo-data/README.md says what is in the
feeds and which journeys were designed on purpose; demo-data/check_city.py checks the output.

Everything here is invented: the city, its districts, streets, stops, agencies and people.
Coordinates are plain numbers around lat 52.0, lon 13.0; positions are laid out in metres
east (x) and north (y) of that point and converted with a flat-earth approximation.
"""

import csv
import io
import math
import os
import sys
import zipfile

HERE = os.path.dirname(os.path.abspath(__file__))

LAT0, LON0 = 52.0, 13.0
M_PER_DEG_LAT = 111_195.0
M_PER_DEG_LON = M_PER_DEG_LAT * math.cos(math.radians(LAT0))

FEED_START, FEED_END = "20261101", "20270331"
TIMEZONE = "Etc/GMT-1"  # UTC+01:00 all year; an Etc zone carries no place name
SERVICES = [  # service_id, mon..sun
    ("WKD", (1, 1, 1, 1, 1, 0, 0)),
    ("SAT", (0, 0, 0, 0, 0, 1, 0)),
    ("SUN", (0, 0, 0, 0, 0, 0, 1)),
]
EXCEPTION_DAY = "20261225"  # weekday service removed, Sunday service added


def latlon(x, y):
    return (round(LAT0 + y / M_PER_DEG_LAT, 6), round(LON0 + x / M_PER_DEG_LON, 6))


def hms(minutes):
    """Minutes after the service day's time origin -> GTFS HH:MM:SS (hours may exceed 23)."""
    total = int(round(minutes * 60))
    return "%02d:%02d:%02d" % (total // 3600, total // 60 % 60, total % 60)


def hm(text):
    h, m = text.split(":")
    return int(h) * 60 + int(m)


def dist(a, b):
    return math.hypot(a[0] - b[0], a[1] - b[1])


# --------------------------------------------------------------------------------------------
# Stops. Each entry: id -> dict(name, x, y, plus optional GTFS fields).
# wheelchair_boarding: 1 most, 2 a few, "" (unknown) some; child platforms leave it empty and
# inherit from their parent station.
# --------------------------------------------------------------------------------------------

def stop(name, x, y, wb="1", code="", platform="", loc="0", parent="", level=""):
    return dict(name=name, x=x, y=y, wb=wb, code=code, platform=platform, loc=loc,
                parent=parent, level=level)


CITY_STOPS = {
    # Tram T1, west to east
    "OCT_WMD": stop("Wendmoor Depot", -3800, 400, code="1101"),
    "OCT_FNR": stop("Fennick Road", -3000, 300, code="1102"),
    "OCT_RPW": stop("Cordwinder Yard", -2200, 350, code="1103"),
    "OCT_GLW": stop("Glassworks", -1400, 250, code="1104"),
    "OCT_WVM": stop("Weavers' Market", -700, 200, code="1105"),
    # The city's tram interchange beside the rail station (a city-feed station with three
    # platforms; the rail station itself is in the rail feed).
    "OCT_TPL": stop("Central Station (Tram Place)", -35, 115, loc="1"),
    "OCT_TPL_A": stop("Central Station (Tram Place)", -40, 110, wb="", platform="A",
                      parent="OCT_TPL", code="1106"),
    "OCT_TPL_B": stop("Central Station (Tram Place)", 10, 125, wb="", platform="B",
                      parent="OCT_TPL", code="2106"),
    "OCT_TPL_C": stop("Central Station (Tram Place)", -90, 95, wb="", platform="C",
                      parent="OCT_TPL", code="3101"),
    "OCT_LSQ": stop("Lantern Square", 700, 300, code="1107"),
    "OCT_CLK": stop("Clocktower", 1400, 500, code="1108"),
    "OCT_CVG": stop("Corvell Gardens", 2200, 700, code="1109"),
    "OCT_HLV": stop("Halvering", 3000, 900, wb=""),
    "OCT_BRH": stop("Brisk Hollow", 3800, 1000, code="1111"),
    # Tram T2, north to south
    "OCT_OBH": stop("Stargazer Rise", 600, 3800, code="2101"),
    "OCT_UNN": stop("University North", 500, 3000, code="2102"),
    "OCT_TNR": stop("Tanpit Row", 650, 2200, wb="2", code="2103"),  # high-floor platform
    "OCT_OMT": stop("Coinstamp Court", 800, 1400, code="2104"),
    "OCT_LSN": stop("Lantern Square North", 780, 380, code="2105"),
    "OCT_INF": stop("Infirmary", -200, -900, code="2107"),
    "OCT_KTB": stop("Kettlewhistle Bridge", -300, -2000, code="2108"),
    "OCT_VEL": stop("Vélodrome", -200, -2800, wb=""),
    "OCT_GWL": stop("Greywater Loop", -100, -3700, code="2110"),
    # Tram T3 (headway-based), Tram Place to the harbour
    "OCT_DKR": stop("Dockwright Road", 1300, -300, code="3102"),
    "OCT_CUS": stop("Tidewaiter Wharf", 1800, -900, code="3103"),
    "OCT_HST": stop("Netmender Steps", 2300, -1500, code="3104"),
    # Ferry F1
    "OCT_PIER_H": stop("Netmender Steps Pier", 2420, -1630, code="5101"),
    "OCT_PIER_L": stop("Beaconlamp Pier", 3300, -2500, code="5102"),
    "OCT_PIER_S": stop("Saltreed Pier", 3900, -3500, code="5103"),
    # Bus 10, north-west to south-east
    "OCT_WHT": stop("Wendle Heights", -3000, 3000, code="4101"),
    "OCT_QRL": stop("Slatecutter Lane", -2500, 2200, wb="2", code="4102"),  # kerb too low
    "OCT_LNS": stop("Linnetfield Street", -2300, 1200, wb="", code="4103"),
    "OCT_RPN": stop("Cordwinder Yard North", -2130, 440, code="4104"),
    "OCT_TLS": stop("Candlewax Street", -1200, -100, code="4105"),
    "OCT_CYS_1": stop("Coachyard Street", 60, -140, platform="1", code="4106"),
    "OCT_CYS_2": stop("Coachyard Street", 110, -160, platform="2", code="4116"),
    "OCT_INE": stop("Infirmary East", -50, -850, code="4107"),
    "OCT_DVL": stop("Pigeonloft Lane", 800, -1800, wb="", code="4108"),
    "OCT_PLM": stop("Pell Marsh", 1500, -2700, code="4109"),
    # Bus 11 (non-timepoint intermediate stops), north to south on the east side
    "OCT_UNG": stop("University North Gate", 560, 2900, code="4201"),
    "OCT_VRP": stop("Verrin Park", 1600, 2600, code="4202"),
    "OCT_HTC": stop("Feltmaker's Close", 2000, 1900, wb="", code="4203"),
    "OCT_TSR": stop("Tinsmith Row", 2200, 1300, code="4204"),
    "OCT_CVE": stop("Corvell Gardens East", 2330, 760, code="4205"),
    "OCT_CRC": stop("Crêperie Corner", 2500, 200, code="4206"),
    "OCT_SLP": stop("Sloe Park", 2500, -600, code="4207"),
    "OCT_HSE": stop("Netmender Steps East", 2420, -1380, code="4208"),
    # Express X4 and night bus N1 share some of the above
    "OCT_GLN": stop("Glassworks North", -1380, 370, code="4301"),
}

LEVELS = [  # level_id, level_index, level_name
    ("ORR_CEN_L0", "0", "Street level"),
    ("ORR_CEN_LC", "-1", "Concourse"),
    ("ORR_CEN_LP", "-2", "Platforms"),
]

RAIL_STOPS = {
    "ORR_VMJ": stop("Vellmark Junction", -22000, 1500, code="VMJ"),
    "ORR_QSF": stop("Quistenford", -14000, 900, code="QSF"),
    "ORR_OWS": stop("Oskerveld West", -3050, 150, code="OWS"),
    # Oskerveld Central: parent station, three platforms, two entrances, two generic nodes.
    "ORR_CEN": stop("Oskerveld Central", 0, 0, code="CEN", loc="1"),
    "ORR_CEN_P1": stop("Oskerveld Central", 0, -10, wb="", platform="1", parent="ORR_CEN",
                       level="ORR_CEN_LP"),
    "ORR_CEN_P2": stop("Oskerveld Central", 0, -25, wb="", platform="2", parent="ORR_CEN",
                       level="ORR_CEN_LP"),
    "ORR_CEN_P3": stop("Oskerveld Central", 40, -40, wb="", platform="3", parent="ORR_CEN",
                       level="ORR_CEN_LP"),
    "ORR_CEN_EN": stop("Oskerveld Central, Tram Place entrance", 0, 60, wb="2", loc="2",
                       parent="ORR_CEN", level="ORR_CEN_L0"),
    "ORR_CEN_ES": stop("Oskerveld Central, Coachyard Street entrance", 20, -70, wb="1", loc="2",
                       parent="ORR_CEN", level="ORR_CEN_L0"),
    "ORR_CEN_HU": stop("Oskerveld Central concourse", 0, 25, wb="", loc="3", parent="ORR_CEN",
                       level="ORR_CEN_LC"),
    "ORR_CEN_HP": stop("Oskerveld Central concourse, ticketed side", 0, 10, wb="", loc="3",
                       parent="ORR_CEN", level="ORR_CEN_LC"),
    "ORR_OES": stop("Oskerveld East", 3750, 1180, code="OES"),
    "ORR_TLM": stop("Tollimere", 12000, 2500, code="TLM"),
    "ORR_ONO": stop("Oskerveld North", 450, 3950, wb="", code="ONO"),
    "ORR_MSG": stop("Mossgrave Halt", -600, 7000, wb="2", code="MSG"),  # footbridge only
}

# Pathways inside Oskerveld Central. stair_count > 0 means the rider climbs going from
# from_stop_id to to_stop_id, so every stair and escalator row starts on the lower node.
# Columns: id, from, to, mode, bidirectional, length, traversal_time, stair_count, max_slope,
# min_width, signposted_as, reversed_signposted_as
PATHWAYS = [
    ("PW_EN_STAIRS", "ORR_CEN_HU", "ORR_CEN_EN", 2, 1, 16, 40, 28, "", 3.0,
     "Tram Place", "Trains"),
    ("PW_EN_ESCALATOR", "ORR_CEN_HU", "ORR_CEN_EN", 4, 0, 16, 30, "", "", 1.0,
     "Tram Place", ""),
    ("PW_ES_RAMP", "ORR_CEN_ES", "ORR_CEN_HU", 1, 1, 85, 75, "", 0.06, 2.4,
     "Trains", "Coachyard Street"),
    ("PW_GATES_IN", "ORR_CEN_HU", "ORR_CEN_HP", 6, 0, 3, 8, "", "", 0.9, "Platforms", ""),
    ("PW_GATES_OUT", "ORR_CEN_HP", "ORR_CEN_HU", 7, 0, 3, 8, "", "", 0.9, "Way out", ""),
    ("PW_P1_STAIRS", "ORR_CEN_P1", "ORR_CEN_HP", 2, 1, 14, 35, 24, "", 2.0,
     "Way out", "Platform 1"),
    ("PW_P1_ELEVATOR", "ORR_CEN_P1", "ORR_CEN_HP", 5, 1, "", 60, "", "", 1.1,
     "Concourse", "Platform 1"),
    ("PW_P2_STAIRS", "ORR_CEN_P2", "ORR_CEN_HP", 2, 1, 14, 35, 24, "", 2.0,
     "Way out", "Platform 2"),
    ("PW_P2_RAMP", "ORR_CEN_P2", "ORR_CEN_HP", 1, 1, 110, 100, "", 0.05, 1.8,
     "Way out", "Platform 2 (step-free)"),
    ("PW_P3_STAIRS", "ORR_CEN_P3", "ORR_CEN_HP", 2, 1, 14, 35, 24, "", 2.0,
     "Way out", "Platform 3"),
    ("PW_P2_P3", "ORR_CEN_P2", "ORR_CEN_P3", 1, 1, 45, 40, "", "", 2.5,
     "Platform 3", "Platform 2"),
]

# --------------------------------------------------------------------------------------------
# Routes and their stop patterns.
# --------------------------------------------------------------------------------------------

CITY_ROUTES = [  # route_id, short, long, type, colour, text colour, sort order
    ("T1", "T1", "Wendmoor Depot – Brisk Hollow", 0, "B3261E", "FFFFFF", 1),
    ("T2", "T2", "Stargazer Rise – Greywater Loop", 0, "00677F", "FFFFFF", 2),
    ("T3", "T3", "Central Station – Netmender Steps", 0, "7B3F98", "FFFFFF", 3),
    ("B10", "10", "Wendle Heights – Pell Marsh", 3, "2F6B2F", "FFFFFF", 10),
    ("B11", "11", "University North Gate – Netmender Steps East", 3, "9A4A00", "FFFFFF", 11),
    ("X4", "X4", "Wendle Heights Express", 700, "F3C623", "1A1A1A", 14),
    ("N1", "N1", "Night bus Coachyard Street – Wendle Heights", 3, "20264D", "FFD34E", 20),
    ("F1", "F1", "Harbour ferry", 4, "005E86", "FFFFFF", 30),
]

RAIL_ROUTES = [
    ("R1", "R1", "Vellmark Junction – Oskerveld Central – Tollimere", 2, "6D1A47", "FFFFFF", 1),
    ("R2", "R2", "Mossgrave Halt – Oskerveld Central", 2, "4B5B12", "FFFFFF", 2),
]

# Patterns in direction 0; direction 1 is the reverse unless given explicitly.
PATTERNS = {
    "T1": ["OCT_WMD", "OCT_FNR", "OCT_RPW", "OCT_GLW", "OCT_WVM", "OCT_TPL_A", "OCT_LSQ",
           "OCT_CLK", "OCT_CVG", "OCT_HLV", "OCT_BRH"],
    "T2": ["OCT_OBH", "OCT_UNN", "OCT_TNR", "OCT_OMT", "OCT_LSN", "OCT_TPL_B", "OCT_INF",
           "OCT_KTB", "OCT_VEL", "OCT_GWL"],
    "T3": ["OCT_TPL_C", "OCT_LSQ", "OCT_DKR", "OCT_CUS", "OCT_HST"],
    "B10": ["OCT_WHT", "OCT_QRL", "OCT_LNS", "OCT_RPN", "OCT_TLS", "OCT_CYS_1", "OCT_INE",
            "OCT_DVL", "OCT_PLM"],
    "B11": ["OCT_UNG", "OCT_VRP", "OCT_HTC", "OCT_TSR", "OCT_CVE", "OCT_CRC", "OCT_SLP",
            "OCT_HSE"],
    "X4": ["OCT_WHT", "OCT_GLN", "OCT_CYS_2", "OCT_HSE"],
    "N1": ["OCT_CYS_2", "OCT_TLS", "OCT_GLN", "OCT_RPN", "OCT_LNS", "OCT_QRL", "OCT_WHT"],
    "F1": ["OCT_PIER_H", "OCT_PIER_L", "OCT_PIER_S"],
}

# Commercial speed in metres per minute (run time between stops = distance / speed, at least 1).
SPEED = {"T1": 330, "T2": 330, "T3": 300, "B10": 300, "B11": 300, "X4": 500, "N1": 420,
         "F1": 230}
DWELL = {"OCT_TPL_A": 1, "OCT_TPL_B": 1}  # minutes between arrival and departure

# B11: these stops are non-timepoints (no times, timepoint=0); the planner interpolates.
B11_TIMEPOINTS = {"OCT_UNG", "OCT_CVE", "OCT_HSE"}

# Rail: explicit minutes after the first departure: (stop_id, arrive, depart).
R1_EAST = [("ORR_VMJ", 0, 0), ("ORR_QSF", 8, 9), ("ORR_OWS", 19, 20), ("ORR_CEN_P1", 24, 26),
           ("ORR_OES", 31, 32), ("ORR_TLM", 40, 40)]
R1_WEST = [("ORR_TLM", 0, 0), ("ORR_OES", 8, 9), ("ORR_CEN_P2", 14, 16), ("ORR_OWS", 20, 21),
           ("ORR_QSF", 31, 32), ("ORR_VMJ", 40, 40)]
R2_SOUTH = [("ORR_MSG", 0, 0), ("ORR_ONO", 7, 8), ("ORR_CEN_P3", 14, 14)]
R2_NORTH = [("ORR_CEN_P3", 0, 0), ("ORR_ONO", 6, 7), ("ORR_MSG", 14, 14)]

# --------------------------------------------------------------------------------------------
# Timetables: per route and service, a list of (from, to, headway) windows in minutes;
# departures are from, from+h, ... while <= to (the last window's end is included).
# --------------------------------------------------------------------------------------------

TRAM_WKD = [("05:30", "07:00", 15), ("07:00", "09:00", 10), ("09:00", "16:00", 15),
            ("16:00", "18:30", 10), ("18:30", "24:00", 15)]
TRAM_SAT = [("06:00", "24:00", 15)]
TRAM_SUN = [("07:00", "24:00", 15)]

TIMETABLE = {
    "T1": {"WKD": TRAM_WKD, "SAT": TRAM_SAT, "SUN": TRAM_SUN},
    "T2": {"WKD": TRAM_WKD, "SAT": TRAM_SAT, "SUN": TRAM_SUN},
    "B10": {"WKD": [("05:45", "07:00", 20), ("07:00", "09:00", 15), ("09:00", "16:00", 20),
                    ("16:00", "18:30", 15), ("18:30", "23:30", 30)],
            "SAT": [("06:00", "19:00", 20), ("19:00", "23:30", 30)],
            "SUN": [("07:00", "23:00", 30)]},
    "B11": {"WKD": [("06:00", "20:00", 20), ("20:00", "22:00", 30)],
            "SAT": [("07:00", "20:00", 30)],
            "SUN": [("08:00", "20:00", 30)]},
    "X4": {"WKD": [("06:00", "20:00", 30)],
           "SAT": [("08:00", "18:00", 30)]},  # no Sunday service
}
# Night bus: every night, times past midnight belong to the previous service day.
NIGHT = {0: ("23:40", "27:40", 30), 1: ("24:05", "27:35", 30)}

# Headway-based tram T3 (exact_times=0): frequencies rows per service.
T3_FREQ = {
    "WKD": [("05:30", "07:00", 900), ("07:00", "09:00", 600), ("09:00", "16:00", 900),
            ("16:00", "18:30", 600), ("18:30", "24:00", 900)],
    "SAT": [("06:00", "24:00", 900)],
    "SUN": [("07:00", "24:00", 900)],
}
# Ferry F1 as a compressed fixed schedule (exact_times=1); end_time is exclusive, so
# 06:00-22:00 every 1800 s departs 06:00, 06:30, ... 21:30.
F1_FREQ = {"WKD": [("06:00", "22:00", 1800)], "SAT": [("07:00", "22:00", 1800)],
           "SUN": [("08:00", "21:00", 1800)]}

RAIL_TIMETABLE = {  # route, direction -> service -> (first, last, headway) of the first stop
    ("R1", 0): {"WKD": ("05:24", "23:24", 30), "SAT": ("06:24", "23:24", 30),
                "SUN": ("07:24", "23:24", 30)},
    ("R1", 1): {"WKD": ("05:10", "23:10", 30), "SAT": ("06:10", "23:10", 30),
                "SUN": ("07:10", "23:10", 30)},
    ("R2", 0): {"WKD": ("06:05", "22:35", 30), "SAT": ("07:05", "22:35", 30),
                "SUN": ("08:05", "21:35", 30)},
    ("R2", 1): {"WKD": ("06:15", "22:45", 30), "SAT": ("07:15", "22:45", 30),
                "SUN": ("08:15", "21:45", 30)},
}

# R1 rolling-stock rotation by trip index within a service and direction: slot 5 is an older
# unit with steps (wheelchair_accessible=2), slot 0 is a hired unit whose access is not
# recorded (empty), the rest are low-floor units (1). The designed step-free case in
# README.md depends on this; main() asserts it.
R1_ROTATION = ["", "1", "1", "1", "1", "2"]


def departures(windows):
    out = []
    for i, (a, b, h) in enumerate(windows):
        t, end = hm(a), hm(b)
        last = i == len(windows) - 1
        while t < end or (last and t == end):
            out.append(t)
            t += h
    return out


def run_minutes(pattern, route):
    """Cumulative (arrive, depart) minutes along a pattern from distance and speed."""
    stops = CITY_STOPS
    out, t = [], 0
    for i, sid in enumerate(pattern):
        if i > 0:
            prev = stops[pattern[i - 1]]
            cur = stops[sid]
            t += max(1, round(dist((prev["x"], prev["y"]), (cur["x"], cur["y"])) / SPEED[route]))
        dwell = DWELL.get(sid, 0) if 0 < i < len(pattern) - 1 else 0
        out.append((sid, t, t + dwell))
        t += dwell
    return out


# --------------------------------------------------------------------------------------------
# Shapes: a quadratic Bezier per stop-to-stop segment, bulging to a side fixed by the segment's
# unordered end stations, so both directions of a line trace (nearly) the same curve even where
# they use different platforms.
# --------------------------------------------------------------------------------------------

def segment_points(p, q, key):
    length = dist(p, q)
    a, b = sorted([p, q])
    ux, uy = (b[0] - a[0]) / length, (b[1] - a[1]) / length
    side = 1 if sum(ord(c) for c in key) % 2 == 0 else -1
    bulge = min(0.07 * length, 200.0) * side
    cx, cy = (p[0] + q[0]) / 2 - uy * bulge, (p[1] + q[1]) / 2 + ux * bulge
    n = max(2, min(10, int(length // 300) + 2))
    pts = []
    for k in range(1, n + 1):
        t = k / n
        x = (1 - t) ** 2 * p[0] + 2 * (1 - t) * t * cx + t * t * q[0]
        y = (1 - t) ** 2 * p[1] + 2 * (1 - t) * t * cy + t * t * q[1]
        pts.append((x, y))
    return pts


def shape_rows(shape_id, stop_ids, stops):
    coords = [(stops[s]["x"], stops[s]["y"]) for s in stop_ids]
    pts = [coords[0]]
    for i in range(1, len(coords)):
        key = "|".join(sorted([stops[s]["parent"] or s for s in stop_ids[i - 1:i + 1]]))
        pts.extend(segment_points(coords[i - 1], coords[i], key))
    rows, travelled = [], 0.0
    for i, (x, y) in enumerate(pts):
        if i > 0:
            travelled += dist(pts[i - 1], (x, y))
        lat, lon = latlon(x, y)
        rows.append([shape_id, "%.6f" % lat, "%.6f" % lon, str(i + 1), "%.1f" % travelled])
    return rows


# --------------------------------------------------------------------------------------------
# Writing.
# --------------------------------------------------------------------------------------------

def stops_rows(stops):
    rows = []
    for sid, s in stops.items():
        lat, lon = latlon(s["x"], s["y"])
        rows.append([sid, s["code"], s["name"], "%.6f" % lat, "%.6f" % lon, s["loc"],
                     s["parent"], s["wb"], s["level"], s["platform"]])
    return rows


STOPS_HEADER = ["stop_id", "stop_code", "stop_name", "stop_lat", "stop_lon", "location_type",
                "parent_station", "wheelchair_boarding", "level_id", "platform_code"]
ROUTES_HEADER = ["route_id", "agency_id", "route_short_name", "route_long_name", "route_type",
                 "route_color", "route_text_color", "route_sort_order"]
TRIPS_HEADER = ["route_id", "service_id", "trip_id", "trip_headsign", "trip_short_name",
                "direction_id", "shape_id", "wheelchair_accessible"]
STOP_TIMES_HEADER = ["trip_id", "arrival_time", "departure_time", "stop_id", "stop_sequence",
                     "pickup_type", "drop_off_type", "timepoint"]
CALENDAR_HEADER = ["service_id", "monday", "tuesday", "wednesday", "thursday", "friday",
                   "saturday", "sunday", "start_date", "end_date"]
TRANSFERS_HEADER = ["from_stop_id", "to_stop_id", "from_route_id", "to_route_id",
                    "transfer_type", "min_transfer_time"]


def write_csv(folder, name, header, rows):
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    for r in rows:
        assert len(r) == len(header), (name, r)
        w.writerow(["" if v is None else v for v in r])
    with open(os.path.join(folder, name), "w", encoding="utf-8", newline="") as f:
        f.write(buf.getvalue())


def common_files(folder, agency_id, agency_name, agency_url, feed_version):
    write_csv(folder, "agency.txt",
              ["agency_id", "agency_name", "agency_url", "agency_timezone", "agency_lang"],
              [[agency_id, agency_name, agency_url, TIMEZONE, "en"]])
    write_csv(folder, "calendar.txt", CALENDAR_HEADER,
              [[sid, *days, FEED_START, FEED_END] for sid, days in SERVICES])
    write_csv(folder, "calendar_dates.txt", ["service_id", "date", "exception_type"],
              [["WKD", EXCEPTION_DAY, "2"], ["SUN", EXCEPTION_DAY, "1"]])
    write_csv(folder, "feed_info.txt",
              ["feed_publisher_name", "feed_publisher_url", "feed_lang", "feed_start_date",
               "feed_end_date", "feed_version", "feed_contact_email"],
              [["timeweave demo data (invented city of Oskerveld)",
                "https://timeweave.example/demo-data", "en", FEED_START, FEED_END,
                feed_version, "demo-data@timeweave.example"]])


def build_city(folder):
    stops = CITY_STOPS
    trips, stop_times, shapes, freqs = [], [], [], []

    def pattern(route, direction):
        p = PATTERNS[route]
        return p if direction == 0 else list(reversed(p))

    for route in PATTERNS:
        shape_dir0 = shape_rows("%s_0" % route, pattern(route, 0), stops)
        shapes.extend(shape_dir0)
        n = len(shape_dir0)
        back, travelled = [], 0.0
        pts = [(r[1], r[2]) for r in reversed(shape_dir0)]
        total = float(shape_dir0[-1][4])
        for i, (lat, lon) in enumerate(pts):
            back.append(["%s_1" % route, lat, lon, str(i + 1),
                         "%.1f" % (total - float(shape_dir0[n - 1 - i][4]))])
        shapes.extend(back)

    def add_trip(route, service, direction, start, wa, pickup_drop=None, short=""):
        pat = pattern(route, direction)
        times = run_minutes(pat, route)
        trip_id = "%s_%s_%d_%s" % (route, service, direction, hms(start)[:5].replace(":", ""))
        headsign = stops[pat[-1]]["name"]
        trips.append([route, service, trip_id, headsign, short, str(direction),
                      "%s_%d" % (route, direction), wa])
        for seq, (sid, arr, dep) in enumerate(times, start=1):
            pickup, drop = "", ""
            if pickup_drop:
                pickup, drop = pickup_drop(seq, len(times), sid)
            timed = route != "B11" or sid in B11_TIMEPOINTS
            a = hms(start + arr) if timed else ""
            d = hms(start + dep) if timed else ""
            stop_times.append([trip_id, a, d, sid, str(seq), pickup, drop,
                               "1" if timed else "0"])
        return trip_id

    for route, per_service in TIMETABLE.items():
        wa = "2" if route == "X4" else "1"  # X4 runs high-floor coaches
        for service, windows in per_service.items():
            for direction in (0, 1):
                for t in departures(windows):
                    add_trip(route, service, direction, t, wa)

    def night_rules(direction):
        """N1: inner-city stops are board-only outbound and alight-only inbound."""
        inner = {"OCT_CYS_2", "OCT_TLS", "OCT_GLN"}

        def rule(seq, count, sid):
            if seq == 1:
                return "", "1"
            if seq == count:
                return "1", ""
            if sid in inner:
                return ("", "1") if direction == 0 else ("1", "")
            return "", ""
        return rule

    for service, _ in SERVICES:
        for direction, (a, b, h) in NIGHT.items():
            for t in range(hm(a), hm(b) + 1, h):
                add_trip("N1", service, direction, t, "1", night_rules(direction))

    for route, table, exact in (("T3", T3_FREQ, "0"), ("F1", F1_FREQ, "1")):
        for service, rows in table.items():
            for direction in (0, 1):
                trip_id = add_trip(route, service, direction, hm(rows[0][0]), "1")
                for a, b, secs in rows:
                    freqs.append([trip_id, hms(hm(a)), hms(hm(b)), str(secs), exact])

    transfers = []
    for a, b, secs in (("OCT_LSQ", "OCT_LSN", 180), ("OCT_TPL_A", "OCT_TPL_B", 120),
                       ("OCT_TPL_A", "OCT_TPL_C", 60), ("OCT_TPL_B", "OCT_TPL_C", 120),
                       ("OCT_HST", "OCT_PIER_H", 240)):
        transfers.append([a, b, "", "", "2", str(secs)])
        transfers.append([b, a, "", "", "2", str(secs)])
    transfers.append(["OCT_CYS_1", "OCT_CYS_2", "", "", "0", ""])
    transfers.append(["OCT_CYS_2", "OCT_CYS_1", "", "", "0", ""])

    os.makedirs(folder, exist_ok=True)
    common_files(folder, "OCT", "Oskerveld City Transit", "https://transit.oskerveld.example/",
                 "2026.11-city-1")
    write_csv(folder, "stops.txt", STOPS_HEADER, stops_rows(stops))
    write_csv(folder, "routes.txt", ROUTES_HEADER,
              [[r, "OCT", s, l, str(t), c, tc, str(o)] for r, s, l, t, c, tc, o in CITY_ROUTES])
    write_csv(folder, "trips.txt", TRIPS_HEADER, trips)
    write_csv(folder, "stop_times.txt", STOP_TIMES_HEADER, stop_times)
    write_csv(folder, "frequencies.txt",
              ["trip_id", "start_time", "end_time", "headway_secs", "exact_times"], freqs)
    write_csv(folder, "transfers.txt", TRANSFERS_HEADER, transfers)
    write_csv(folder, "shapes.txt", ["shape_id", "shape_pt_lat", "shape_pt_lon",
                                     "shape_pt_sequence", "shape_dist_traveled"], shapes)
    return trips


def build_rail(folder):
    stops = RAIL_STOPS
    trips, stop_times, shapes = [], [], []
    patterns = {("R1", 0): R1_EAST, ("R1", 1): R1_WEST, ("R2", 0): R2_SOUTH,
                ("R2", 1): R2_NORTH}
    train_base = {("R1", 0): 1101, ("R1", 1): 1102, ("R2", 0): 2101, ("R2", 1): 2102}
    service_offset = {"WKD": 0, "SAT": 200, "SUN": 400}
    for (route, direction), pat in patterns.items():
        shapes.extend(shape_rows("%s_%d" % (route, direction), [p[0] for p in pat], stops))
        for service, (first, last, h) in RAIL_TIMETABLE[(route, direction)].items():
            for k, start in enumerate(range(hm(first), hm(last) + 1, h)):
                if route == "R1":
                    wa = R1_ROTATION[k % len(R1_ROTATION)]
                else:
                    wa = "1"
                trip_id = "%s_%s_%d_%s" % (route, service, direction,
                                           hms(start)[:5].replace(":", ""))
                number = train_base[(route, direction)] + service_offset[service] + 2 * k
                headsign = stops[pat[-1][0]]["name"]
                trips.append([route, service, trip_id, headsign, str(number), str(direction),
                              "%s_%d" % (route, direction), wa])
                for i, (sid, arr, dep) in enumerate(pat):
                    pickup = "1" if i == len(pat) - 1 else ""
                    drop = "1" if i == 0 else ""
                    stop_times.append([trip_id, hms(start + arr), hms(start + dep), sid,
                                       str(10 * (i + 1)), pickup, drop, "1"])

    transfers = []
    for a, b, secs in (("ORR_CEN_P3", "ORR_CEN_P1", 240), ("ORR_CEN_P3", "ORR_CEN_P2", 180)):
        transfers.append([a, b, "", "", "2", str(secs)])
        transfers.append([b, a, "", "", "2", str(secs)])

    os.makedirs(folder, exist_ok=True)
    common_files(folder, "ORR", "Oskerveld Regional Rail", "https://rail.oskerveld.example/",
                 "2026.11-rail-1")
    write_csv(folder, "stops.txt", STOPS_HEADER, stops_rows(stops))
    write_csv(folder, "levels.txt", ["level_id", "level_index", "level_name"],
              [list(l) for l in LEVELS])
    write_csv(folder, "pathways.txt",
              ["pathway_id", "from_stop_id", "to_stop_id", "pathway_mode", "is_bidirectional",
               "length", "traversal_time", "stair_count", "max_slope", "min_width",
               "signposted_as", "reversed_signposted_as"],
              [[str(v) for v in p] for p in PATHWAYS])
    write_csv(folder, "routes.txt", ROUTES_HEADER,
              [[r, "ORR", s, l, str(t), c, tc, str(o)] for r, s, l, t, c, tc, o in RAIL_ROUTES])
    write_csv(folder, "trips.txt", TRIPS_HEADER, trips)
    write_csv(folder, "stop_times.txt", STOP_TIMES_HEADER, stop_times)
    write_csv(folder, "transfers.txt", TRANSFERS_HEADER, transfers)
    write_csv(folder, "shapes.txt", ["shape_id", "shape_pt_lat", "shape_pt_lon",
                                     "shape_pt_sequence", "shape_dist_traveled"], shapes)
    return trips


def write_zip(folder, path):
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for name in sorted(os.listdir(folder)):
            if not name.endswith(".txt"):
                continue
            info = zipfile.ZipInfo(name, date_time=(2026, 11, 1, 0, 0, 0))
            info.compress_type = zipfile.ZIP_DEFLATED
            info.external_attr = 0o644 << 16
            with open(os.path.join(folder, name), "rb") as f:
                z.writestr(info, f.read())


def main(argv):
    city = os.path.join(HERE, "oskerveld-city")
    rail = os.path.join(HERE, "oskerveld-rail")
    build_city(city)
    rail_trips = build_rail(rail)

    # The designed step-free case (README.md) rests on these three R1 trips.
    wa = {t[2]: t[7] for t in rail_trips}
    assert wa["R1_WKD_0_0754"] == "2", wa["R1_WKD_0_0754"]
    assert wa["R1_WKD_0_0824"] == "", wa["R1_WKD_0_0824"]
    assert wa["R1_WKD_0_0854"] == "1", wa["R1_WKD_0_0854"]

    if len(argv) == 3 and argv[1] == "--zip":
        os.makedirs(argv[2], exist_ok=True)
        write_zip(city, os.path.join(argv[2], "oskerveld-city.zip"))
        write_zip(rail, os.path.join(argv[2], "oskerveld-rail.zip"))
    elif len(argv) != 1:
        sys.exit("usage: make_city.py [--zip OUTDIR]")


if __name__ == "__main__":
    main(sys.argv)

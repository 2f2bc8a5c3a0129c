#!/usr/bin/env python3
"""Check the generated Oskerveld feeds (stdlib only): python3 demo-data/check_city.py

Three kinds of check:
1. Structure, against the GTFS Schedule reference (https://gtfs.org/documentation/schedule/reference/):
   required columns, referenced ids exist, stop_sequence and times increase along each trip,
   departure >= arrival, pathway field rules, frequencies windows.
2. The demo's own promises written in README.md: interchange distances, feature placement,
   counts, WCAG contrast of route colours.
3. The designed step-free journeys in README.md, recomputed with a deliberately simple
   earliest-arrival search written here (not the project's engine), so README figures cannot drift
   from the data. Its step-free rules are the ones README.md states.

Exits non-zero with one line per failure.
"""

import csv
import datetime
import heapq
import math
import os
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
FEEDS = ["oskerveld-city", "oskerveld-rail"]
FAILURES = []


def fail(msg):
    FAILURES.append(msg)


def check(cond, msg):
    if not cond:
        fail(msg)
    return cond


def read(feed, name):
    path = os.path.join(HERE, feed, name)
    if not os.path.exists(path):
        return None
    with open(path, "rb") as f:
        raw = f.read()
    check(not raw.startswith(b"\xef\xbb\xbf"), "%s/%s: starts with a byte-order mark" % (feed, name))
    check(b"\r" not in raw, "%s/%s: contains CR characters" % (feed, name))
    text = raw.decode("utf-8")
    rows = list(csv.DictReader(text.splitlines()))
    header = text.split("\n", 1)[0].split(",")
    return header, rows


# GTFS Schedule reference, "Field Definitions": fields marked Required, plus the ones that are
# conditionally required and always apply to these feeds (agency_id with several agencies once
# merged; stop_name/lat/lon for location types 0-2; a route name).
REQUIRED = {
    "agency.txt": ["agency_id", "agency_name", "agency_url", "agency_timezone"],
    "stops.txt": ["stop_id", "stop_name", "stop_lat", "stop_lon"],
    "routes.txt": ["route_id", "agency_id", "route_type"],
    "trips.txt": ["route_id", "service_id", "trip_id"],
    "stop_times.txt": ["trip_id", "arrival_time", "departure_time", "stop_id", "stop_sequence"],
    "calendar.txt": ["service_id", "monday", "tuesday", "wednesday", "thursday", "friday",
                     "saturday", "sunday", "start_date", "end_date"],
    "calendar_dates.txt": ["service_id", "date", "exception_type"],
    "feed_info.txt": ["feed_publisher_name", "feed_publisher_url", "feed_lang"],
    "transfers.txt": ["from_stop_id", "to_stop_id", "transfer_type"],
    "shapes.txt": ["shape_id", "shape_pt_lat", "shape_pt_lon", "shape_pt_sequence"],
    "frequencies.txt": ["trip_id", "start_time", "end_time", "headway_secs"],
    "levels.txt": ["level_id", "level_index"],
    "pathways.txt": ["pathway_id", "from_stop_id", "to_stop_id", "pathway_mode",
                     "is_bidirectional"],
}
MUST_HAVE = {
    "oskerveld-city": ["agency.txt", "stops.txt", "routes.txt", "trips.txt", "stop_times.txt",
                       "calendar.txt", "calendar_dates.txt", "feed_info.txt", "transfers.txt",
                       "shapes.txt", "frequencies.txt"],
    "oskerveld-rail": ["agency.txt", "stops.txt", "routes.txt", "trips.txt", "stop_times.txt",
                       "calendar.txt", "calendar_dates.txt", "feed_info.txt", "transfers.txt",
                       "shapes.txt", "levels.txt", "pathways.txt"],
}


def secs(t):
    h, m, s = t.split(":")
    check(len(m) == 2 and len(s) == 2 and 0 <= int(m) < 60 and 0 <= int(s) < 60,
          "time %r is not HH:MM:SS" % t)
    return int(h) * 3600 + int(m) * 60 + int(s)


def metres(a, b):
    """Equirectangular distance; fine at city scale."""
    lat = math.radians((a[0] + b[0]) / 2)
    dy = (a[0] - b[0]) * 111_195.0
    dx = (a[1] - b[1]) * 111_195.0 * math.cos(lat)
    return math.hypot(dx, dy)


def rel_lum(hexcolour):
    # WCAG 2.1, definition of "relative luminance".
    out = []
    for i in (0, 2, 4):
        c = int(hexcolour[i:i + 2], 16) / 255
        out.append(c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4)
    return 0.2126 * out[0] + 0.7152 * out[1] + 0.0722 * out[2]


def contrast(a, b):
    la, lb = sorted([rel_lum(a), rel_lum(b)], reverse=True)
    return (la + 0.05) / (lb + 0.05)


def load():
    data = {}
    for feed in FEEDS:
        files = {}
        for name in sorted(os.listdir(os.path.join(HERE, feed))):
            if name.endswith(".txt"):
                files[name] = read(feed, name)
        for name in MUST_HAVE[feed]:
            check(name in files, "%s: %s missing" % (feed, name))
        for name, (header, rows) in files.items():
            for col in REQUIRED.get(name, []):
                check(col in header, "%s/%s: required column %s missing" % (feed, name, col))
            for i, r in enumerate(rows, start=2):
                check(None not in r and all(v is not None for v in r.values()),
                      "%s/%s line %d: wrong number of fields" % (feed, name, i))
        data[feed] = {k: v[1] for k, v in files.items()}
    return data


def check_feed(feed, f):
    stops = {s["stop_id"]: s for s in f["stops.txt"]}
    check(len(stops) == len(f["stops.txt"]), "%s: duplicate stop_id" % feed)
    levels = {l["level_id"] for l in f.get("levels.txt", [])}
    for s in stops.values():
        lt = s["location_type"] or "0"
        p = s["parent_station"]
        if lt in ("0", "1", "2"):
            check(s["stop_name"] and s["stop_lat"] and s["stop_lon"],
                  "%s: stop %s lacks name or position" % (feed, s["stop_id"]))
        if lt in ("2", "3", "4"):
            check(p != "", "%s: stop %s (type %s) needs parent_station" % (feed, s["stop_id"], lt))
        if lt == "1":
            check(p == "", "%s: station %s has a parent" % (feed, s["stop_id"]))
        if p:
            check(p in stops and (stops[p]["location_type"] or "0") == "1",
                  "%s: stop %s parent %s is not a station" % (feed, s["stop_id"], p))
        if s["level_id"]:
            check(s["level_id"] in levels, "%s: stop %s level %s unknown" % (feed, s["stop_id"],
                                                                           s["level_id"]))
        check(s["wheelchair_boarding"] in ("", "0", "1", "2"),
              "%s: stop %s wheelchair_boarding %r" % (feed, s["stop_id"], s["wheelchair_boarding"]))

    agencies = {a["agency_id"] for a in f["agency.txt"]}
    for a in f["agency.txt"]:
        check(a["agency_timezone"] == "Etc/GMT-1", "%s: timezone %s" % (feed, a["agency_timezone"]))
        check(a["agency_lang"] == "en", "%s: agency_lang" % feed)
    routes = {r["route_id"]: r for r in f["routes.txt"]}
    for r in routes.values():
        check(r["agency_id"] in agencies, "%s: route %s agency unknown" % (feed, r["route_id"]))
        check(r["route_short_name"] or r["route_long_name"], "%s: route %s unnamed" % (feed, r["route_id"]))
        # WCAG 2.1 SC 1.4.3 (AA): contrast at least 4.5:1 for normal text.
        c = contrast(r["route_color"], r["route_text_color"])
        check(c >= 4.5, "%s: route %s contrast %.2f < 4.5" % (feed, r["route_id"], c))

    services = {c["service_id"] for c in f["calendar.txt"]}
    for c in f["calendar.txt"]:
        check(c["start_date"] == "20261101" and c["end_date"] == "20270331",
              "%s: calendar dates for %s" % (feed, c["service_id"]))
    for c in f["calendar_dates.txt"]:
        check(c["service_id"] in services, "%s: calendar_dates service %s" % (feed, c["service_id"]))
        check(c["exception_type"] in ("1", "2"), "%s: exception_type" % feed)
    exc = {(c["service_id"], c["date"], c["exception_type"]) for c in f["calendar_dates.txt"]}
    check(("WKD", "20261225", "2") in exc and ("SUN", "20261225", "1") in exc,
          "%s: exception day 2026-12-25 not as designed" % feed)
    fi = f["feed_info.txt"][0]
    check(fi["feed_start_date"] == "20261101" and fi["feed_end_date"] == "20270331",
          "%s: feed_info dates" % feed)

    shapes = {}
    for row in f["shapes.txt"]:
        shapes.setdefault(row["shape_id"], []).append(row)
    for sid, pts in shapes.items():
        seqs = [int(p["shape_pt_sequence"]) for p in pts]
        check(seqs == sorted(seqs) and len(set(seqs)) == len(seqs),
              "%s: shape %s sequence not increasing" % (feed, sid))
        d = [float(p["shape_dist_traveled"]) for p in pts]
        check(d == sorted(d), "%s: shape %s distance decreases" % (feed, sid))

    trips = {t["trip_id"]: t for t in f["trips.txt"]}
    check(len(trips) == len(f["trips.txt"]), "%s: duplicate trip_id" % feed)
    for t in trips.values():
        check(t["route_id"] in routes, "%s: trip %s route" % (feed, t["trip_id"]))
        check(t["service_id"] in services, "%s: trip %s service" % (feed, t["trip_id"]))
        check(t["shape_id"] in shapes, "%s: trip %s shape" % (feed, t["trip_id"]))
        check(t["wheelchair_accessible"] in ("", "0", "1", "2"), "%s: trip %s wa" % (feed, t["trip_id"]))
    check(set(shapes) == {t["shape_id"] for t in trips.values()}, "%s: unused shapes" % feed)

    by_trip = {}
    for st in f["stop_times.txt"]:
        by_trip.setdefault(st["trip_id"], []).append(st)
    check(set(by_trip) == set(trips), "%s: trips without stop_times or the reverse" % feed)
    for tid, sts in by_trip.items():
        seqs = [int(s["stop_sequence"]) for s in sts]
        check(all(a < b for a, b in zip(seqs, seqs[1:])),
              "%s: trip %s stop_sequence not strictly increasing in file order" % (feed, tid))
        check(sts[0]["arrival_time"] and sts[-1]["arrival_time"],
              "%s: trip %s first/last stop without times" % (feed, tid))
        last = -1
        for s in sts:
            check(s["stop_id"] in stops and (stops[s["stop_id"]]["location_type"] or "0") == "0",
                  "%s: trip %s uses %s, not a stop/platform" % (feed, tid, s["stop_id"]))
            a, d = s["arrival_time"], s["departure_time"]
            check(bool(a) == bool(d), "%s: trip %s seq %s only one of arr/dep" % (feed, tid, s["stop_sequence"]))
            if s["timepoint"] == "1" or a:
                check(a and s["timepoint"] != "0",
                      "%s: trip %s seq %s timepoint/times disagree" % (feed, tid, s["stop_sequence"]))
            if a:
                check(secs(d) >= secs(a), "%s: trip %s departs before arriving" % (feed, tid))
                check(secs(a) > last, "%s: trip %s time does not increase at seq %s" % (feed, tid, s["stop_sequence"]))
                last = secs(d)
            check(s["pickup_type"] in ("", "0", "1", "2", "3") and
                  s["drop_off_type"] in ("", "0", "1", "2", "3"), "%s: trip %s pickup/drop" % (feed, tid))
        # the shape passes through every stop of the trip
        pts = [(float(p["shape_pt_lat"]), float(p["shape_pt_lon"])) for p in shapes[trips[tid]["shape_id"]]]
        for s in sts:
            pos = (float(stops[s["stop_id"]]["stop_lat"]), float(stops[s["stop_id"]]["stop_lon"]))
            check(min(metres(pos, p) for p in pts) < 1.0,
                  "%s: shape of %s misses stop %s" % (feed, tid, s["stop_id"]))

    for fr in f.get("frequencies.txt", []):
        check(fr["trip_id"] in trips, "%s: frequencies trip %s" % (feed, fr["trip_id"]))
        check(secs(fr["start_time"]) < secs(fr["end_time"]) and int(fr["headway_secs"]) > 0,
              "%s: frequencies window %s" % (feed, fr))
        check(fr["exact_times"] in ("0", "1"), "%s: exact_times" % feed)
    for tid in {fr["trip_id"] for fr in f.get("frequencies.txt", [])}:
        first = min(secs(fr["start_time"]) for fr in f["frequencies.txt"] if fr["trip_id"] == tid)
        check(secs(by_trip[tid][0]["departure_time"]) == first,
              "%s: template trip %s does not start at its first window" % (feed, tid))

    for tr in f["transfers.txt"]:
        check(tr["from_stop_id"] in stops and tr["to_stop_id"] in stops,
              "%s: transfer stops %s -> %s" % (feed, tr["from_stop_id"], tr["to_stop_id"]))
        check(tr["transfer_type"] in ("0", "1", "2", "3"), "%s: transfer_type" % feed)
        if tr["transfer_type"] == "2":
            check(tr["min_transfer_time"] != "", "%s: type 2 without min_transfer_time" % feed)

    for pw in f.get("pathways.txt", []):
        for end in ("from_stop_id", "to_stop_id"):
            s = stops.get(pw[end])
            check(s is not None and (s["location_type"] or "0") in ("0", "2", "3", "4"),
                  "%s: pathway %s %s is missing or a station" % (feed, pw["pathway_id"], end))
        mode = pw["pathway_mode"]
        check(mode in "1234567" and len(mode) == 1, "%s: pathway_mode %s" % (feed, mode))
        if mode == "7":
            check(pw["is_bidirectional"] == "0", "%s: exit gate %s is bidirectional" % (feed, pw["pathway_id"]))
        if pw["stair_count"]:
            check(mode == "2", "%s: stair_count on a non-stair pathway" % feed)
        if pw["max_slope"]:
            check(mode in ("1", "3"), "%s: max_slope on mode %s" % (feed, mode))
    return stops, trips, by_trip


# ---------------------------------------------------------------------------------------------
# A small earliest-arrival search for the designed journeys (README.md, "Step-free rules used").
# ---------------------------------------------------------------------------------------------

WALK_MPS = 1.2       # common practice, no source
MAX_WALK_M = 400     # footpath radius between street-level stops and entrances
MAX_RAMP_SLOPE = 0.083  # 1:12, recalled from memory as the usual ramp limit
MIN_WIDTH_M = 0.8    # clear width for a wheelchair, recalled from memory


class Net:
    def __init__(self, data, date):
        self.stops, self.trips, self.events = {}, {}, []
        dow = date.weekday()
        ymd = date.strftime("%Y%m%d")
        self.edges = {}
        in_pathway_station = set()
        for feed in FEEDS:
            f = data[feed]
            for s in f["stops.txt"]:
                self.stops[s["stop_id"]] = s
            for pw in f.get("pathways.txt", []):
                for end in ("from_stop_id", "to_stop_id"):
                    in_pathway_station.add(self.stops[pw[end]]["parent_station"])
            active = set()
            for c in f["calendar.txt"]:
                keys = ["monday", "tuesday", "wednesday", "thursday", "friday", "saturday", "sunday"]
                if c[keys[dow]] == "1" and c["start_date"] <= ymd <= c["end_date"]:
                    active.add(c["service_id"])
            for c in f["calendar_dates.txt"]:
                if c["date"] == ymd:
                    (active.add if c["exception_type"] == "1" else active.discard)(c["service_id"])
            freqs = {}
            for fr in f.get("frequencies.txt", []):
                freqs.setdefault(fr["trip_id"], []).append(fr)
            by_trip = {}
            for st in f["stop_times.txt"]:
                by_trip.setdefault(st["trip_id"], []).append(st)
            for t in f["trips.txt"]:
                if t["service_id"] not in active:
                    continue
                sts = by_trip[t["trip_id"]]
                times = interpolate(sts)
                starts = [0]
                if t["trip_id"] in freqs:
                    base = times[0][0]
                    starts = []
                    for fr in freqs[t["trip_id"]]:
                        s0, e0, h = secs(fr["start_time"]), secs(fr["end_time"]), int(fr["headway_secs"])
                        starts += [s - base for s in range(s0, e0, h)]
                for k, shift in enumerate(starts):
                    tid = t["trip_id"] if len(starts) == 1 else "%s@%d" % (t["trip_id"], k)
                    self.trips[tid] = dict(t, route=t["route_id"],
                                           rows=[(st["stop_id"], a + shift, d + shift,
                                                  st["pickup_type"], st["drop_off_type"])
                                                 for st, (a, d) in zip(sts, times)])
        # station pathways
        for feed in FEEDS:
            for pw in data[feed].get("pathways.txt", []):
                free = pathway_step_free(pw)
                t = int(pw["traversal_time"])
                self.add_edge(pw["from_stop_id"], pw["to_stop_id"], t, free, pw["pathway_id"])
                if pw["is_bidirectional"] == "1":
                    self.add_edge(pw["to_stop_id"], pw["from_stop_id"], t, free, pw["pathway_id"])
        # street footpaths between street-level places: stops outside pathway stations and
        # entrances of pathway stations
        street = [sid for sid, s in self.stops.items()
                  if ((s["location_type"] or "0") == "0" and s["parent_station"] not in in_pathway_station)
                  or (s["location_type"] == "2")]
        for a in street:
            for b in street:
                if a == b:
                    continue
                d = metres(self.pos(a), self.pos(b))
                if d <= MAX_WALK_M:
                    # stepping between the street and an entrance needs the entrance's access
                    free = all(self.wb(x) == "1" for x in (a, b) if self.stops[x]["location_type"] == "2")
                    self.add_edge(a, b, int(math.ceil(d / WALK_MPS)), free, "street")

    def pos(self, sid):
        s = self.stops[sid]
        return float(s["stop_lat"]), float(s["stop_lon"])

    def wb(self, sid):
        s = self.stops[sid]
        v = s["wheelchair_boarding"]
        if v in ("", "0") and s["parent_station"]:
            v = self.stops[s["parent_station"]]["wheelchair_boarding"]
        return v

    def add_edge(self, a, b, t, free, label):
        self.edges.setdefault(a, []).append((b, t, free, label))

    def earliest(self, origin, dest, depart_s, mode):
        """mode: off | strict | lenient. Returns (arrival_s, legs) or None."""
        def ok_stop(sid):
            v = self.wb(sid)
            return mode == "off" or v == "1" or (mode == "lenient" and v in ("", "0"))

        def ok_trip(t):
            v = t["wheelchair_accessible"]
            return mode == "off" or v == "1" or (mode == "lenient" and v in ("", "0"))

        best = {origin: depart_s}
        back = {}
        heap = [(depart_s, origin)]
        while heap:
            t, s = heapq.heappop(heap)
            if t > best.get(s, 1 << 40):
                continue
            if s == dest:
                break
            for b, dt, free, label in self.edges.get(s, []):
                if mode != "off" and not free:
                    continue
                if t + dt < best.get(b, 1 << 40):
                    best[b] = t + dt
                    back[b] = (s, label)
                    heapq.heappush(heap, (t + dt, b))
            if not ok_stop(s):
                continue
            for tid, trip in self.trips.items():
                if not ok_trip(trip):
                    continue
                rows = trip["rows"]
                for i, (sid, a, d, pick, drop) in enumerate(rows):
                    if sid == s and d >= t and pick != "1":
                        for sid2, a2, d2, pick2, drop2 in rows[i + 1:]:
                            if drop2 != "1" and ok_stop(sid2) and a2 < best.get(sid2, 1 << 40):
                                best[sid2] = a2
                                back[sid2] = (s, "%s %s dep %s" % (trip["route"], tid, clock(d)))
                                heapq.heappush(heap, (a2, sid2))
                        break
        if dest not in best:
            return None
        legs, cur = [], dest
        while cur != origin:
            prev, label = back[cur]
            legs.append("%s -> %s [%s]" % (prev, cur, label))
            cur = prev
        return best[dest], list(reversed(legs))


def pathway_step_free(pw):
    mode = pw["pathway_mode"]
    if mode in ("2", "4"):  # stairs, escalator
        return False
    if pw["max_slope"] and float(pw["max_slope"]) > MAX_RAMP_SLOPE:
        return False
    if pw["min_width"] and float(pw["min_width"]) < MIN_WIDTH_M:
        return False
    return True


def interpolate(sts):
    """Times per row; untimed rows get times linearly by distance between timed neighbours."""
    out = [None] * len(sts)
    for i, s in enumerate(sts):
        if s["arrival_time"]:
            out[i] = (secs(s["arrival_time"]), secs(s["departure_time"]))
    i = 0
    while i < len(sts):
        if out[i] is None:
            j = i
            while out[j] is None:
                j += 1
            t0, t1 = out[i - 1][1], out[j][0]
            for k in range(i, j):
                v = t0 + (t1 - t0) * (k - i + 1) // (j - i + 1)
                out[k] = (v, v)
            i = j
        i += 1
    return out


def clock(s):
    return "%02d:%02d" % (s // 3600, s // 60 % 60)


def check_design(data):
    cs = {s["stop_id"]: s for f in FEEDS for s in data[f]["stops.txt"]}

    def pos(sid):
        return float(cs[sid]["stop_lat"]), float(cs[sid]["stop_lon"])

    # stop ids, route ids and trip ids are unique across the two feeds
    for key, name in (("stop_id", "stops.txt"), ("route_id", "routes.txt"), ("trip_id", "trips.txt")):
        a = {r[key] for r in data[FEEDS[0]][name]}
        b = {r[key] for r in data[FEEDS[1]][name]}
        check(not (a & b), "%s shared between feeds: %s" % (key, sorted(a & b)))

    # interchanges: stops of different lines 50-250 m apart (README, "Interchanges")
    for a, b in [("OCT_LSQ", "OCT_LSN"), ("OCT_RPW", "OCT_RPN"), ("OCT_GLW", "OCT_GLN"),
                 ("OCT_INF", "OCT_INE"), ("OCT_UNN", "OCT_UNG"), ("OCT_CVG", "OCT_CVE"),
                 ("OCT_HST", "OCT_HSE"), ("OCT_HST", "OCT_PIER_H"), ("OCT_FNR", "ORR_OWS"),
                 ("OCT_BRH", "ORR_OES"), ("OCT_OBH", "ORR_ONO"), ("OCT_CYS_1", "ORR_CEN_ES"),
                 ("OCT_CYS_2", "ORR_CEN_ES"), ("OCT_TPL_A", "ORR_CEN_EN"), ("OCT_TPL_B", "ORR_CEN_EN"),
                 ("OCT_TPL_C", "ORR_CEN_EN"), ("OCT_TPL_A", "OCT_TPL_B"),
                 ("OCT_TPL_A", "OCT_TPL_C"), ("OCT_TPL_B", "OCT_TPL_C"), ("OCT_CYS_1", "OCT_CYS_2")]:
        d = metres(pos(a), pos(b))
        check(50 <= d <= 250, "interchange %s-%s is %.0f m" % (a, b, d))
    for t in ("OCT_TPL_A", "OCT_TPL_B", "OCT_TPL_C"):
        d = metres(pos(t), pos("ORR_CEN"))
        check(60 <= d <= 150, "tram stop %s is %.0f m from Oskerveld Central" % (t, d))
    # the city is about 8 km across
    city = [pos(s["stop_id"]) for s in data["oskerveld-city"]["stops.txt"]]
    ns = metres((min(p[0] for p in city), 13.0), (max(p[0] for p in city), 13.0))
    ew = metres((52.0, min(p[1] for p in city)), (52.0, max(p[1] for p in city)))
    check(6000 <= ns <= 9000 and 6000 <= ew <= 9000, "city extent %.0f x %.0f m" % (ew, ns))

    # features in place
    city_st = data["oskerveld-city"]["stop_times.txt"]
    check(any(s["trip_id"].startswith("N1_") and s["arrival_time"] >= "24:" for s in city_st),
          "night bus has no times past midnight")
    check(any(s["trip_id"].startswith("B11_") and s["timepoint"] == "0" and not s["arrival_time"]
              for s in city_st), "B11 has no non-timepoint rows")
    fr = data["oskerveld-city"]["frequencies.txt"]
    check({r["exact_times"] for r in fr} == {"0", "1"}, "frequencies lack exact_times 0 and 1")
    wa = {t["wheelchair_accessible"] for t in data["oskerveld-rail"]["trips.txt"]}
    check(wa == {"", "1", "2"}, "rail wheelchair_accessible values %s" % wa)
    types = {r["route_type"] for f in FEEDS for r in data[f]["routes.txt"]}
    check({"0", "2", "3", "4", "700"} <= types, "route types %s" % types)
    check(all(data[f]["agency.txt"][0]["agency_id"] == a for f, a in zip(FEEDS, ["OCT", "ORR"])),
          "agency ids")
    rail = {s["stop_id"]: s for s in data["oskerveld-rail"]["stops.txt"]}
    kinds = [rail[s]["location_type"] for s in rail if rail[s]["parent_station"] == "ORR_CEN"]
    check(kinds.count("0") in (2, 3, 4) and kinds.count("2") == 2 and kinds.count("3") >= 1,
          "Oskerveld Central children %s" % kinds)
    modes = {p["pathway_mode"] for p in data["oskerveld-rail"]["pathways.txt"]}
    check({"1", "2", "4", "5", "6"} <= modes, "pathway modes %s" % modes)

    # counts (README, "Size")
    n_stops = sum(len(data[f]["stops.txt"]) for f in FEEDS)
    n_st = sum(len(data[f]["stop_times.txt"]) for f in FEEDS)
    check(40 <= n_stops <= 80, "%d stops" % n_stops)
    check(n_st < 40000, "%d stop_times" % n_st)

    # calendar facts the README relies on
    check(datetime.date(2026, 12, 2).weekday() == 2, "2026-12-02 is not a Wednesday")
    check(datetime.date(2026, 12, 25).weekday() == 4, "2026-12-25 is not a Friday")

    # station graph: only the elevator gives step-free access to platform 1; the Tram Place
    # entrance has no step-free pathway at all
    pws = data["oskerveld-rail"]["pathways.txt"]

    def reach(start, allow):
        seen, todo = {start}, [start]
        while todo:
            n = todo.pop()
            for p in pws:
                if not allow(p):
                    continue
                for a, b in ((p["from_stop_id"], p["to_stop_id"]),
                             (p["to_stop_id"], p["from_stop_id"]) if p["is_bidirectional"] == "1" else (None, None)):
                    if a == n and b not in seen:
                        seen.add(b)
                        todo.append(b)
        return seen

    for ent in ("ORR_CEN_EN", "ORR_CEN_ES"):
        check({"ORR_CEN_P1", "ORR_CEN_P2", "ORR_CEN_P3"} <= reach(ent, lambda p: True),
              "%s does not reach every platform" % ent)
    check("ORR_CEN_P1" in reach("ORR_CEN_ES", pathway_step_free), "P1 not step-free from ES")
    check("ORR_CEN_P1" not in reach("ORR_CEN_ES", lambda p: pathway_step_free(p) and p["pathway_mode"] != "5"),
          "P1 step-free without the elevator")
    check(reach("ORR_CEN_EN", pathway_step_free) == {"ORR_CEN_EN"}, "EN has a step-free pathway")
    check(rail["ORR_CEN_EN"]["wheelchair_boarding"] == "2", "EN wheelchair_boarding")
    for plat in ("ORR_CEN_P1", "ORR_CEN_P2", "ORR_CEN_P3"):
        back_out = reach(plat, lambda p: True)
        check("ORR_CEN_EN" in back_out and "ORR_CEN_ES" in back_out, "%s cannot reach the exits" % plat)

    # designed journeys (README, "Designed step-free cases")
    net = Net(data, datetime.date(2026, 12, 2))
    h8 = 8 * 3600
    expect = [
        ("A", "ORR_QSF", "ORR_TLM", "off", "08:34"),
        ("A", "ORR_QSF", "ORR_TLM", "lenient", "09:04"),
        ("A", "ORR_QSF", "ORR_TLM", "strict", "09:34"),
        ("B", "OCT_TPL_A", "ORR_TLM", "off", "08:34"),
        ("B", "OCT_TPL_A", "ORR_TLM", "lenient", "09:04"),
        ("B", "OCT_TPL_A", "ORR_TLM", "strict", "09:34"),
    ]
    report = []
    for case, o, d, mode, want in expect:
        res = net.earliest(o, d, h8, mode)
        got = clock(res[0]) if res else None
        check(got == want, "case %s %s->%s %s: arrive %s, expected %s" % (case, o, d, mode, got, want))
        report.append((case, mode, got, res[1] if res else []))
    # case B: the standard path uses the Tram Place stairs, the step-free one the ramp + elevator
    std = " ".join(report[3][3])
    sf = " ".join(report[5][3])
    check("PW_EN_STAIRS" in std, "case B standard path does not use the Tram Place stairs")
    check("PW_ES_RAMP" in sf and "PW_P1_ELEVATOR" in sf, "case B step-free path avoids ramp/elevator")
    # case C: Mossgrave Halt has no step-free journey at any time
    for mode, want_none in (("off", False), ("strict", True), ("lenient", True)):
        res = net.earliest("ORR_CEN_ES", "ORR_MSG", h8, mode)
        check((res is None) == want_none, "case C %s: %s" % (mode, res and clock(res[0])))
    return report


def main():
    data = load()
    for feed in FEEDS:
        check_feed(feed, data[feed])
    report = check_design(data) if not FAILURES else []
    for case, mode, got, legs in report:
        print("case %s %-7s arrive %s" % (case, mode, got))
        for leg in legs:
            print("    " + leg)
    if FAILURES:
        for m in FAILURES:
            print("FAIL: " + m)
        sys.exit(1)
    print("ok: %s" % ", ".join("%s %d stops %d trips %d stop_times" % (
        f, len(data[f]["stops.txt"]), len(data[f]["trips.txt"]), len(data[f]["stop_times.txt"]))
        for f in FEEDS))


if __name__ == "__main__":
    main()

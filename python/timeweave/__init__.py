"""timeweave from Python: journeys, reach over a time window, travel-time matrices, the
interchange audit and the step-free audit over GTFS timetables, as pyarrow tables.

    >>> import timeweave
    >>> net = timeweave.Network(["demo-data/oskerveld-city", "demo-data/oskerveld-rail"])
    >>> m = net.matrix("2026-12-02", "07:00-09:00")          # pyarrow.Table
    >>> m.to_pandas()                                         # pandas.DataFrame

The tables have the columns of the command line's files (``timeweave matrix``, ``reach --window``,
``interchange``, ``stepfree``), with the same definitions (``timeweave <command> --help``):
seconds in ``*_s`` columns, shares 0-1, an empty cell (null) where a value does not apply.
Searches release the GIL. A refused request raises :class:`TimeweaveError` with the command
line's located message (file, line, field; or the option and what was expected).

For a matrix larger than one machine, see :mod:`timeweave.cluster`.
"""

from __future__ import annotations

import csv
import io
import json
import os
import re
from typing import Any, Mapping, Sequence

import pyarrow as pa
import pyarrow.csv as pacsv
import pyarrow.parquet as pq

from ._native import Network as _Native
from ._native import TimeweaveError

__all__ = ["Network", "TimeweaveError"]

PathLike = str | os.PathLike[str]

# Arrow's own thread pool is left alone: on this project's machines a threaded read sometimes ends
# the interpreter with "terminate called without an active exception" at exit (pyarrow 24 and 26,
# measured in DEVELOPERS.md). The tables here are read single-threaded; the engine has its own threads.

#: Column types of the tables read from the engine's CSV; columns not named are text.
_PERCENTILE = re.compile(r"p[0-9.]+_s")
_REACH = {"min_s": pa.float64(), "share_within_cutoff": pa.float64(),
          "departures_with_journey": pa.int64()}
_INTERCHANGE = {"arr_direction": pa.int64(), "dep_direction": pa.int64(), "change_s": pa.int64(), "wait_s": pa.int64(),
                "missed_by_s": pa.int64(), "near_miss": pa.int64()}
_STEPFREE = {"standard_p50_s": pa.float64(), "stepfree_p50_s": pa.float64(), "extra_p50_s": pa.float64(),
             "outage_p50_s": pa.float64(), "standard_departures_with_journey": pa.int64(),
             "stepfree_departures_with_journey": pa.int64(), "outage_departures_with_journey": pa.int64()}


#: The matrix's percentiles when none are given, as ``timeweave matrix`` (reach's are 50 and 90).
MATRIX_PERCENTILES = (5.0, 25.0, 50.0, 75.0, 95.0)


def _csv_table(data: bytes, types: Mapping[str, pa.DataType]) -> pa.Table:
    """The engine's CSV as a table: named columns typed, the rest text; empty cells null."""
    if not data:
        return pa.table({})
    header = next(csv.reader(io.StringIO(data[: data.index(b"\n")].decode("utf-8"))))
    # Percentile columns (p50_s, p12.5_s, …) are seconds whatever percentiles were asked for.
    column_types = {c: types.get(c, pa.float64() if _PERCENTILE.fullmatch(c) else pa.string()) for c in header}
    opts = pacsv.ConvertOptions(column_types=column_types, strings_can_be_null=True, null_values=[""])
    return pacsv.read_csv(io.BytesIO(data), read_options=pacsv.ReadOptions(use_threads=False), convert_options=opts)


def _query(**fields: Any) -> str:
    """A request as JSON, leaving out the fields not given (the engine's defaults apply)."""
    return json.dumps({k: v for k, v in fields.items() if v is not None})


def _window(date: str, window: str, *, step: int | None, percentiles: Sequence[float] | None,
            cutoff: int | None, max_rides: int | None, max_duration: int | None, step_free: str) -> str:
    return _query(date=date, window=window, step_free=step_free, step_min=step,
                  percentiles=[float(p) for p in percentiles] if percentiles is not None else None,
                  cutoff_min=cutoff, max_rides=max_rides, max_duration_min=max_duration)


class Network:
    """One or more feeds loaded together: GTFS zips, folders of ``.txt`` files, or snapshots
    written by ``timeweave snapshot``. Loading happens once; every method reuses it.

    :raises TimeweaveError: a feed that cannot be loaded, with the file, line and field.
    """

    def __init__(self, feeds: Sequence[PathLike] | PathLike) -> None:
        if isinstance(feeds, (str, os.PathLike)):
            feeds = [feeds]
        self.feeds = [os.fspath(f) for f in feeds]
        self._net = _Native(self.feeds)

    def __repr__(self) -> str:
        return f"timeweave.Network({self.feeds!r})"

    def __reduce__(self):  # a Network travels to Dask workers as its feed paths and loads there
        return (Network, (self.feeds,))

    def info(self) -> list[dict[str, Any]]:
        """Each feed's report: name, counts, first and last date, time zone, warnings."""
        return json.loads(self._net.feeds_json())

    def places(self) -> list[str]:
        """The stop ids of the places analyses report on (stations, and stops outside stations),
        in the matrix's origin order."""
        return self._net.places()

    def plan(self, from_stop: str, to_stop: str, date: str, time: str, *, step_free: str = "off",
             next: int = 3) -> pa.Table:
        """The next journeys leaving ``from_stop`` at or after ``time`` (HH:MM local) on ``date``
        (YYYY-MM-DD), one row per leg: ``journey`` (0-based), ``leg``, ``kind`` (ride, walk,
        in_station), stops, clock times and ``*_s`` seconds from the service day's origin (noon
        minus 12 h), route, trip and headsign. ``step_free``: off, strict or lenient."""
        q = {"from": from_stop, "to": to_stop, "date": date, "time": time, "step_free": step_free, "next": next}
        r = json.loads(self._net.plan_json(json.dumps(q)))
        rows = []
        for j, it in enumerate(r["journeys"]):
            for k, leg in enumerate(it["legs"]):
                route = leg.get("route") or {}
                rows.append({
                    "journey": j, "leg": k, "kind": leg["kind"],
                    "from_stop_id": leg["start"]["stop_id"], "from_name": leg["start"]["name"],
                    "to_stop_id": leg["end"]["stop_id"], "to_name": leg["end"]["name"],
                    "depart": leg["depart"], "arrive": leg["arrive"],
                    "depart_s": leg["depart_s"], "arrive_s": leg["arrive_s"], "duration_s": leg["duration_s"],
                    "route_id": route.get("route_id"), "route_name": route.get("short_name") or route.get("long_name"),
                    "trip_id": leg.get("trip_id"), "headsign": leg.get("headsign"),
                })
        schema = pa.schema([("journey", pa.int64()), ("leg", pa.int64()), ("kind", pa.string()),
                            ("from_stop_id", pa.string()), ("from_name", pa.string()), ("to_stop_id", pa.string()),
                            ("to_name", pa.string()), ("depart", pa.string()), ("arrive", pa.string()),
                            ("depart_s", pa.int64()), ("arrive_s", pa.int64()), ("duration_s", pa.int64()),
                            ("route_id", pa.string()), ("route_name", pa.string()), ("trip_id", pa.string()),
                            ("headsign", pa.string())])
        return pa.Table.from_pylist(rows, schema=schema)

    def reach(self, from_stop: str, date: str, window: str, *, step: int | None = None,
              percentiles: Sequence[float] | None = None, cutoff: int | None = None, max_rides: int | None = None,
              max_duration: int | None = None, step_free: str = "off") -> pa.Table:
        """Travel times from one place to every place over a window of departures (``HH:MM-HH:MM``,
        every ``step`` minutes, end excluded), as ``timeweave reach --window``: per place the
        shortest time and percentiles (``p50_s``…, seconds, waiting at the origin counted), the
        share within ``cutoff`` minutes, and the departures with a journey."""
        q = _window(date, window, step=step, percentiles=percentiles, cutoff=cutoff, max_rides=max_rides,
                    max_duration=max_duration, step_free=step_free)
        return _csv_table(self._net.reach_csv(from_stop, q), _REACH)

    def matrix(self, date: str, window: str, *, origins: Sequence[str] | None = None,
               destinations: Sequence[str] | None = None, step: int | None = None,
               percentiles: Sequence[float] | None = None, cutoff: int | None = None,
               max_rides: int | None = None, max_duration: int | None = None, step_free: str = "off",
               shard: tuple[int, int] | None = None, threads: int | None = None) -> pa.Table:
        """The travel-time matrix over a window, as ``timeweave matrix``: one row per origin and
        destination with a journey at some departure; ``min_s``, percentiles ``p5_s``… (seconds),
        ``share_within_cutoff``, ``departures_with_journey``. ``origins``/``destinations``: stop
        ids (default every place). ``shard=(i, n)``: the i-th of n consecutive runs of the
        origins, as ``--shard i/n``. Runs on ``threads`` native threads (default all cores);
        Ctrl-C (KeyboardInterrupt) stops it between origins."""
        if percentiles is None:
            percentiles = MATRIX_PERCENTILES
        q = _window(date, window, step=step, percentiles=percentiles, cutoff=cutoff, max_rides=max_rides,
                    max_duration=max_duration, step_free=step_free)
        data = self._net.matrix_parquet(q, list(origins) if origins is not None else None,
                                        list(destinations) if destinations is not None else None,
                                        tuple(shard) if shard is not None else None, threads)
        return pq.read_table(io.BytesIO(data), use_threads=False)

    def interchange(self, date: str, station: str = "all", *, window: str | None = None,
                    horizon: int | None = None, near_miss: int | None = None) -> pa.Table:
        """The interchange audit's rows, as ``timeweave interchange``: every arrival in the window
        against every other route and direction leaving the station, ``status`` made, none or
        not_possible, ``change_s``, ``wait_s``, ``missed_by_s``, ``near_miss``."""
        q = _query(date=date, station=station, window=window, horizon_min=horizon, near_miss_min=near_miss)
        return _csv_table(self._net.interchange_csv(q), _INTERCHANGE)

    def stepfree(self, date: str, window: str, *, pairs: str = "all", seed: int | None = None,
                 lenient: bool = False, outages: Sequence[str] = (), threads: int | None = None) -> pa.Table:
        """The step-free audit's pairs, as ``timeweave stepfree``'s pairs.csv: both medians,
        ``extra_p50_s``, ``status`` (step_free, blocked, no_journey) and the blocking elements.
        ``pairs``: all or sample:N.

        Results reflect the feed's data, which may be incomplete or out of date; confirm on site
        and with the operator; local codes and licensed practice prevail."""
        q = _query(date=date, window=window, pairs=pairs, lenient=lenient, outages=list(outages), seed=seed)
        return _csv_table(self._net.stepfree_csv(q, threads), _STEPFREE)

"""Travel-time matrices sharded by origin across a Dask distributed cluster.

Dask schedules; timeweave computes. The origins are split into ``shards`` consecutive runs, as
``timeweave matrix --shard i/n`` splits them; each shard is one task. A worker loads the network
once (kept per worker process for later tasks on the same feeds), computes its shard with the
native core, and writes one Parquet file under the output folder, hive-style::

    OUT/_timeweave_run.json                      what this folder holds (feeds, date, settings)
    OUT/date=2026-12-02/shard=0001/part.parquet  shard 1's rows
    ...

Read it back with ``pyarrow.dataset.dataset(OUT, partitioning="hive")`` (the partition keys
come back as columns ``date`` and ``shard``).

A shard's file is written under a temporary name and renamed once complete, so a worker that
dies mid-shard leaves no partial file; Dask runs the task again on another worker (a lost worker's
tasks are rescheduled; a task that raises is retried ``retries`` times), and a rerun writes the same
file again, so the folder never holds a shard twice or misses one. A folder that already holds a
different run is refused unless ``overwrite=True``; the same run again keeps the shards already
written and computes the rest.

    >>> from dask.distributed import Client
    >>> client = Client("tcp://scheduler.example:8786")        # or Client(LocalCluster())
    >>> timeweave.cluster.matrix(client, ["/data/region.zip"], "2026-12-02", "07:00-09:00",
    ...                          "/shared/matrix", shards=64)

Every worker must see the feed paths and the output folder at the same paths (a shared file
system), and have this package installed.
"""

from __future__ import annotations

import json
import os
import shutil
import time
import uuid
from typing import Any, Sequence

import pyarrow.parquet as pq

from . import Network

__all__ = ["matrix", "RUN_FILE"]

RUN_FILE = "_timeweave_run.json"

#: Networks loaded in this process (a Dask worker), by their feed paths.
_LOADED: dict[tuple[str, ...], Network] = {}


def _network(feeds: tuple[str, ...]) -> Network:
    net = _LOADED.get(feeds)
    if net is None:
        net = _LOADED[feeds] = Network(list(feeds))
    return net


def _feed_stamp(path: str) -> dict[str, Any]:
    """What identifies a feed for the run file: its absolute path, size and modification time."""
    st = os.stat(path)
    return {"path": os.path.abspath(path), "bytes": st.st_size if os.path.isfile(path) else None,
            "modified_ns": st.st_mtime_ns}


def _partition(out: str, date: str, i: int) -> str:
    return os.path.join(out, f"date={date}", f"shard={i:04d}")


def _shard_task(feeds: tuple[str, ...], date: str, window: str, options: dict[str, Any], i: int, n: int,
                out: str, threads: int | None) -> tuple[int, int]:
    """One shard: computed with the native core, written whole under a temporary name, renamed."""
    table = _network(feeds).matrix(date, window, shard=(i, n), threads=threads, **options)
    folder = _partition(out, date, i)
    os.makedirs(folder, exist_ok=True)
    tmp = os.path.join(folder, f".part-{uuid.uuid4().hex}.parquet.tmp")
    pq.write_table(table, tmp)
    os.replace(tmp, os.path.join(folder, "part.parquet"))
    return i, table.num_rows


def _prepare(out: str, run: dict[str, Any], overwrite: bool) -> None:
    path = os.path.join(out, RUN_FILE)
    if os.path.isdir(out) and os.listdir(out):
        held = None
        if os.path.isfile(path):
            with open(path, encoding="utf-8") as f:
                held = json.load(f)
        if held != run:
            if not overwrite:
                what = "a different run" if held is not None else "files that are not a timeweave run"
                differs = sorted(k for k in run if held is None or held.get(k) != run[k])
                raise FileExistsError(
                    f"{out} already holds {what} (differs in: {', '.join(differs)}); "
                    "choose another folder or pass overwrite=True")
            shutil.rmtree(out)
    os.makedirs(out, exist_ok=True)
    tmp = f"{path}.{uuid.uuid4().hex}.tmp"
    with open(tmp, "w", encoding="utf-8") as f:
        json.dump(run, f, indent=2, sort_keys=True)
    os.replace(tmp, path)


def matrix(client: Any, feeds: Sequence[str | os.PathLike[str]], date: str, window: str, out: str | os.PathLike[str],
           *, shards: int | None = None, overwrite: bool = False, retries: int = 2, threads: int | None = 1,
           origins: Sequence[str] | None = None, destinations: Sequence[str] | None = None,
           step: int | None = None, percentiles: Sequence[float] | None = None, cutoff: int | None = None,
           max_rides: int | None = None, max_duration: int | None = None, step_free: str = "off",
           progress: bool = True) -> dict[str, Any]:
    """Computes the travel-time matrix of ``feeds`` over ``window`` on ``date`` on the Dask
    cluster behind ``client``, one task per shard of origins, into the folder ``out``.

    ``shards``: how many tasks (default four per worker thread, so a slow shard does not hold
    the end). ``threads``: native threads per task (default 1: Dask already runs one task per
    worker thread). ``progress``: Dask's progress bar of the shards (text in a terminal, a widget
    in a notebook). Ctrl-C (KeyboardInterrupt) cancels the shards not yet done; the shards already
    written stay, and the same call again computes only the rest. The other options are
    :meth:`timeweave.Network.matrix`'s.

    :returns: ``{"out", "shards", "rows", "seconds"}``.
    :raises FileExistsError: ``out`` holds a different run and ``overwrite`` is false.
    :raises TimeweaveError: a refused request (checked on this machine before any task runs).
    """
    feeds_t = tuple(os.path.abspath(os.fspath(f)) for f in feeds)
    out = os.path.abspath(os.fspath(out))
    options: dict[str, Any] = {"origins": list(origins) if origins is not None else None,
                               "destinations": list(destinations) if destinations is not None else None,
                               "step": step, "percentiles": list(percentiles) if percentiles is not None else None,
                               "cutoff": cutoff, "max_rides": max_rides, "max_duration": max_duration,
                               "step_free": step_free}
    # Refuse bad input before any task: the request is checked on one origin here.
    local = _network(feeds_t)
    places = local.places() if origins is None else list(origins)
    local.matrix(date, window, **{**options, "origins": places[:1]})
    if shards is None:
        shards = max(1, 4 * sum(client.nthreads().values()))
    shards = max(1, min(int(shards), len(places)))
    run = {"feeds": [_feed_stamp(f) for f in feeds_t], "date": date, "window": window, "options": options,
           "shards": shards}
    _prepare(out, run, overwrite)
    started = time.perf_counter()
    todo = [i for i in range(1, shards + 1) if not os.path.isfile(os.path.join(_partition(out, date, i), "part.parquet"))]
    futures = [client.submit(_shard_task, feeds_t, date, window, options, i, shards, out, threads,
                             key=f"timeweave-shard-{i}-of-{shards}-{uuid.uuid4().hex[:8]}", retries=retries, pure=False)
               for i in todo]
    try:
        if progress and futures:
            from dask.distributed import progress as show
            show(futures)
        client.gather(futures)
    except KeyboardInterrupt:
        client.cancel(futures)
        raise
    rows = 0
    for i in range(1, shards + 1):
        folder = _partition(out, date, i)
        for name in os.listdir(folder):
            if name.endswith(".tmp"):
                os.remove(os.path.join(folder, name))  # left by a worker killed mid-write
        rows += pq.ParquetFile(os.path.join(folder, "part.parquet")).metadata.num_rows
    return {"out": out, "shards": shards, "rows": rows, "seconds": time.perf_counter() - started}

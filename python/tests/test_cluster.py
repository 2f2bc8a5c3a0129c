"""timeweave.cluster.matrix on a real Dask LocalCluster of two worker processes.

Source beside each check: the single-process matrix of the same network (timeweave.Network,
itself checked against the CLI's file in test_network.py), read and sorted by pyarrow; Dask's own
scheduler retries the shard of a worker process killed here with SIGKILL.
"""

from __future__ import annotations

import os
import signal
import time

import pyarrow.dataset as ds
import pytest
from dask.distributed import Client, LocalCluster

import timeweave
import timeweave.cluster

DATE, WINDOW = "2026-12-02", "07:00-09:00"
KEYS = [("from_stop_id", "ascending"), ("to_stop_id", "ascending")]


@pytest.fixture(scope="module")
def client():
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cluster, Client(cluster) as c:
        yield c


def read(out):
    t = ds.dataset(out, partitioning="hive", format="parquet").to_table(use_threads=False)
    return t.drop_columns(["date", "shard"]).sort_by(KEYS)


def test_the_cluster_matrix_equals_the_single_process_matrix(client, synth_small, tmp_path):
    out = tmp_path / "m"
    r = timeweave.cluster.matrix(client, [synth_small], DATE, WINDOW, out, shards=6)
    single = timeweave.Network([synth_small]).matrix(DATE, WINDOW).sort_by(KEYS)
    assert r["rows"] == single.num_rows > 10_000
    assert read(out).equals(single)
    parts = sorted(p.relative_to(out).as_posix() for p in out.rglob("*.parquet"))
    assert parts == [f"date={DATE}/shard={i:04d}/part.parquet" for i in range(1, 7)]
    # The same run again keeps what is there; a different run is refused; overwrite replaces.
    again = timeweave.cluster.matrix(client, [synth_small], DATE, WINDOW, out, shards=6)
    assert again["rows"] == r["rows"]
    with pytest.raises(FileExistsError, match="different run.*window"):
        timeweave.cluster.matrix(client, [synth_small], DATE, "07:00-08:00", out, shards=6)
    assert read(out).equals(single), "a refused run leaves the folder as it was"
    done = timeweave.cluster.matrix(client, [synth_small], DATE, "07:00-08:00", out, shards=6, overwrite=True)
    assert read(out).equals(timeweave.Network([synth_small]).matrix(DATE, "07:00-08:00").sort_by(KEYS))
    import json
    assert json.loads((out / timeweave.cluster.RUN_FILE).read_text())["window"] == "07:00-08:00"
    assert done["rows"] == read(out).num_rows
    # A folder of something else is refused too.
    other = tmp_path / "other"
    other.mkdir()
    (other / "notes.txt").write_text("mine")
    with pytest.raises(FileExistsError, match="not a timeweave run"):
        timeweave.cluster.matrix(client, [synth_small], DATE, WINDOW, other, shards=2)


def test_a_worker_killed_mid_shard_loses_and_doubles_nothing(client, synth_small, tmp_path):
    out = tmp_path / "m"
    pids = client.run(os.getpid)  # worker address -> process id
    victim = {}

    def kill_when_busy():
        # Wait until a worker is inside a shard, then kill its process outright.
        deadline = time.time() + 60
        while time.time() < deadline:
            busy = {w: t for w, t in client.processing().items() if t}
            if busy:
                w = next(iter(busy))
                victim["worker"], victim["pid"] = w, pids[w]
                os.kill(pids[w], signal.SIGKILL)
                return
            time.sleep(0.02)

    import threading
    killer = threading.Thread(target=kill_when_busy)
    killer.start()
    r = timeweave.cluster.matrix(client, [synth_small], DATE, WINDOW, out, shards=8, progress=False)
    killer.join()
    assert victim, "no worker was busy to be killed"
    single = timeweave.Network([synth_small]).matrix(DATE, WINDOW).sort_by(KEYS)
    got = read(out)
    assert got.num_rows == single.num_rows == r["rows"]
    assert got.equals(single)
    assert not list(out.rglob("*.tmp"))

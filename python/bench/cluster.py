"""Cluster bench: the region preset's all-places matrix over 07:00-09:00, single process on the
machine's cores (the baseline) and through timeweave.cluster on a Dask LocalCluster of one worker
process per core, in the same run; then the per-origin cost on the metro preset (about 20 k
stops), from which the README's estimate for a 20 k-stop network is made.

Not a test. Run: python3 python/bench/cluster.py   (writes bench-out/cluster.md)
Environment: TIMEWEAVE_BIN (the CLI, to generate the feeds on first use).
"""

from __future__ import annotations

import os
import random
import shutil
import subprocess
import tempfile
import time
from pathlib import Path

from dask.distributed import Client, LocalCluster

import timeweave
import timeweave.cluster

REPO = Path(__file__).resolve().parents[2]
OUT = REPO / "bench-out"
BIN = os.environ.get("TIMEWEAVE_BIN") or str(REPO / "target" / "release" / "timeweave")
DATE, WINDOW = "2026-12-02", "07:00-09:00"


def feed(preset: str) -> str:
    path = OUT / f"{preset}-1.zip"
    if not path.exists():
        OUT.mkdir(exist_ok=True)
        subprocess.run([BIN, "synth", "--preset", preset, "--seed", "1", "--out", str(path)], check=True)
    return str(path)


def main() -> None:
    cores = os.cpu_count() or 1
    region = feed("region")
    t = time.perf_counter()
    single = timeweave.Network([region]).matrix(DATE, WINDOW, threads=cores)
    single_s = time.perf_counter() - t
    work = Path(tempfile.mkdtemp(prefix="timeweave-cluster-bench-"))
    try:
        with LocalCluster(n_workers=cores, threads_per_worker=1, processes=True, dashboard_address=None) as cluster, \
                Client(cluster) as client:
            t = time.perf_counter()
            r = timeweave.cluster.matrix(client, [region], DATE, WINDOW, work / "m", shards=8 * cores)
            cluster_s = time.perf_counter() - t
    finally:
        shutil.rmtree(work, ignore_errors=True)
    assert r["rows"] == single.num_rows

    metro = timeweave.Network([feed("metro")])
    places = metro.places()
    random.seed(1)
    sample = random.sample(places, 41)
    metro.matrix(DATE, WINDOW, origins=sample[:1], threads=1)  # builds the date's graph
    t = time.perf_counter()
    metro.matrix(DATE, WINDOW, origins=sample[1:], threads=1)
    per_origin = (time.perf_counter() - t) / 40

    lines = [
        "### Cluster (`python3 python/bench/cluster.py`)", "",
        f"{cores} cores; region preset, {single.num_rows:,} pairs, {DATE} {WINDOW} every minute.", "",
        "| what | seconds |", "|---|---|",
        f"| single process, `Network.matrix(threads={cores})` (baseline) | {single_s:.1f} |",
        f"| `timeweave.cluster.matrix`, LocalCluster of {cores} worker processes × 1 thread, {r['shards']} shards (each worker loads the feed once) | {cluster_s:.1f} |",
        "",
        f"Metro preset ({len(places):,} places): **{per_origin:.3f} s per origin per thread** over {WINDOW} "
        f"(40 random origins, one thread, graph already built); all {len(places):,} origins ≈ "
        f"{per_origin * len(places) / 60:.0f} thread-minutes.",
    ]
    text = "\n".join(lines)
    OUT.mkdir(exist_ok=True)
    (OUT / "cluster.md").write_text(text + "\n")
    print(text)


if __name__ == "__main__":
    main()

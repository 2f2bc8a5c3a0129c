"""timeweave.Network on the demo city and a generated feed.

Sources beside each check: the command line's own files read by pyarrow (a general-purpose Arrow
and Parquet library) — the package must give the CLI's tables, column for column; the demo data's
design note (demo-data/README.md, case A) for one journey; the GIL test uses only the standard
library's threading.
"""

from __future__ import annotations

import subprocess
import threading
import time

import pyarrow.csv as pacsv
import pyarrow.parquet as pq
import pytest

import timeweave
from conftest import BIN, DEMO


@pytest.fixture(scope="module")
def net() -> timeweave.Network:
    return timeweave.Network(DEMO)


def cli(*args: str) -> None:
    feeds = [a for f in DEMO for a in ("--feed", f)]
    subprocess.run([BIN, args[0], *feeds, *args[1:]], check=True, capture_output=True)


def test_plan_gives_the_designed_journey(net):
    # demo-data/README.md, designed case A: Quistenford → Tollimere at 08:00 arrives 08:34.
    legs = net.plan("ORR_QSF", "ORR_TLM", "2026-12-02", "08:00", next=1).to_pylist()
    assert legs[-1]["arrive"] == "08:34"
    assert legs[0]["from_stop_id"] == "ORR_QSF" and legs[-1]["to_stop_id"] == "ORR_TLM"
    assert all(l["journey"] == 0 for l in legs)


def test_matrix_equals_the_cli_parquet_file(net, tmp_path):
    out = tmp_path / "m.parquet"
    cli("matrix", "--date", "2026-12-02", "--window", "07:00-08:00", "--out", str(out))
    expected = pq.read_table(out, use_threads=False)
    got = net.matrix("2026-12-02", "07:00-08:00")
    assert got.num_rows > 1000
    assert got.equals(expected)
    # pandas through to_pandas(), as notebooks use it
    df = got.to_pandas()
    assert list(df.columns)[:3] == ["from_stop_id", "to_stop_id", "min_s"]


def test_matrix_shards_together_are_the_whole(net):
    whole = net.matrix("2026-12-02", "07:00-07:30")
    parts = [net.matrix("2026-12-02", "07:00-07:30", shard=(i, 3)) for i in (1, 2, 3)]
    import pyarrow as pa
    assert pa.concat_tables(parts).equals(whole)


def test_reach_interchange_and_stepfree_equal_the_cli_files(net, tmp_path):
    cli("reach", "--from", "ORR_CEN", "--date", "2026-12-02", "--window", "07:00-08:00", "--out", str(tmp_path / "r.csv"))
    got = net.reach("ORR_CEN", "2026-12-02", "07:00-08:00")
    assert got.column_names == pacsv.read_csv(tmp_path / "r.csv", read_options=pacsv.ReadOptions(use_threads=False)).column_names
    assert got.to_pylist() == timeweave._csv_table((tmp_path / "r.csv").read_bytes(), timeweave._REACH).to_pylist()
    assert got.schema.field("p50_s").type == "double"

    cli("interchange", "--date", "2026-12-02", "--station", "ORR_CEN", "--out", str(tmp_path / "ix.csv"))
    got = net.interchange("2026-12-02", "ORR_CEN")
    assert got.num_rows == pacsv.read_csv(tmp_path / "ix.csv", read_options=pacsv.ReadOptions(use_threads=False)).num_rows > 100
    assert got.equals(timeweave._csv_table((tmp_path / "ix.csv").read_bytes(), timeweave._INTERCHANGE))
    assert set(got.column("status").to_pylist()) <= {"made", "none", "not_possible"}

    cli("stepfree", "--date", "2026-12-02", "--window", "07:00-08:00", "--pairs", "sample:40", "--out", str(tmp_path / "sf"))
    got = net.stepfree("2026-12-02", "07:00-08:00", pairs="sample:40")
    assert got.equals(timeweave._csv_table((tmp_path / "sf" / "pairs.csv").read_bytes(), timeweave._STEPFREE))
    assert got.num_rows == 40


def test_refusals_carry_the_cli_messages(net, tmp_path):
    with pytest.raises(timeweave.TimeweaveError, match="did you mean: Quistenford"):
        net.plan("Quistenferd", "ORR_TLM", "2026-12-02", "08:00")
    with pytest.raises(timeweave.TimeweaveError, match="window"):
        net.matrix("2026-12-02", "09:00-08:00")
    missing = tmp_path / "nowhere.zip"
    with pytest.raises(timeweave.TimeweaveError, match="nowhere.zip"):
        timeweave.Network([str(missing)])
    bad = tmp_path / "bad"
    bad.mkdir()
    (bad / "agency.txt").write_text("agency_id,agency_name,agency_url,agency_timezone\nA,X,https://x.example/,Not/AZone\n")
    with pytest.raises(timeweave.TimeweaveError, match="bad/stops.txt: required file stops.txt is missing"):
        timeweave.Network([str(bad)])


def test_searches_release_the_gil(synth_small):
    # With the GIL held by the matrix, this thread could not count at all while it runs.
    net = timeweave.Network([synth_small])
    done = threading.Event()
    result = {}

    def work():
        result["t"] = net.matrix("2026-12-02", "07:00-08:00", threads=1)
        done.set()

    t = threading.Thread(target=work)
    t.start()
    time.sleep(0.05)
    counted = 0
    while not done.is_set():
        counted += 1
        time.sleep(0)
    t.join()
    assert result["t"].num_rows > 0
    assert counted > 100, f"the main thread ran only {counted} times during the matrix"


def test_ctrl_c_stops_a_matrix_between_origins(synth_small):
    import os
    import signal
    net = timeweave.Network([synth_small])
    window = "04:00-24:00"
    whole = time.perf_counter()
    net.matrix("2026-12-02", window, threads=1)
    whole = time.perf_counter() - whole
    timer = threading.Timer(whole * 0.15, lambda: os.kill(os.getpid(), signal.SIGINT))
    timer.start()
    started = time.perf_counter()
    with pytest.raises(KeyboardInterrupt):
        net.matrix("2026-12-02", window, threads=1)
    stopped = time.perf_counter() - started
    timer.join()
    assert stopped < whole * 0.6, f"stopped after {stopped:.2f} s of a {whole:.2f} s matrix"

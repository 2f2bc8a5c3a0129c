"""Shared by the package's tests: the demo city, the CLI binary, a generated feed."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]
BIN = os.environ.get("TIMEWEAVE_BIN") or str(REPO / "target" / "release" / "timeweave")
DEMO = [str(REPO / "demo-data" / "oskerveld-city"), str(REPO / "demo-data" / "oskerveld-rail")]
sys.path.insert(0, str(Path(__file__).parent))


@pytest.fixture(scope="session")
def synth_small(tmp_path_factory) -> str:
    """The generator's `small` preset (about 50 k stop times), written by the CLI."""
    out = tmp_path_factory.mktemp("feeds") / "small-1.zip"
    subprocess.run([BIN, "synth", "--preset", "small", "--seed", "1", "--out", str(out)], check=True, capture_output=True)
    return str(out)

"""Shared fixtures: small scale files and data files written in code, and the Agg backend for figures."""
from __future__ import annotations

import hashlib
import os
from pathlib import Path

import pytest
from hypothesis import settings

os.environ.setdefault("MPLBACKEND", "Agg")

# property tests draw the same examples on every run: a rare failing case shows up for whoever changed the
# code, not later in an unrelated CI run
settings.register_profile("repeatable", derandomize=True, deadline=None)  # timings vary on a shared machine
settings.load_profile("repeatable")

BASIC_SCALES = """\
version: 1
title: Ward survey
id_column: staff_id
groups: [shift]
response:
  min: 1
  max: 5
  labels: {1: Strongly disagree, 2: Disagree, 3: Neither agree nor disagree, 4: Agree, 5: Strongly agree}
  missing_codes: [9, 99]
scales:
  workload:
    title: Workload strain
    items: [wl1, wl2, wl3]
    reverse: [wl3]
    score: mean
    min_answered: 2
  stay:
    title: Intent to stay
    items: [st1, st2]
    score: sum
    min_answered: 1.0
    response: {min: 1, max: 7}
"""

BASIC_DATA = """\
staff_id,shift,wl1,wl2,wl3,st1,st2
s01,day,1,2,5,7,6
s02,night,Agree, strongly DISAGREE ,9,1,2
s03,day,5,5,1,,3
s04,night,4,,,4,4
"""


@pytest.fixture
def write_file(tmp_path: Path):
    """Write text (or bytes) to a file in tmp_path and return its path."""

    def write(name: str, content: str | bytes) -> Path:
        path = tmp_path / name
        path.parent.mkdir(parents=True, exist_ok=True)
        if isinstance(content, bytes):
            path.write_bytes(content)
        else:
            path.write_text(content, encoding="utf-8")
        return path

    return write


@pytest.fixture
def basic_files(write_file):
    return write_file("data.csv", BASIC_DATA), write_file("scales.yaml", BASIC_SCALES)


def folder_fingerprint(folder: Path) -> dict[str, str]:
    """SHA-256 of every file below ``folder``: to show a failed command changed nothing."""
    return {str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.rglob("*")) if p.is_file()}


@pytest.fixture(scope="session")
def demo_run(tmp_path_factory):
    """The default demo (600 respondents, a full report), built once per test session for every test that
    reads it; written with --force into a folder that already holds a file of the user's."""
    import contextlib
    import io
    from dataclasses import dataclass

    from scalewright.cli import main

    @dataclass(frozen=True)
    class DemoRun:
        folder: Path
        printed: str

    folder = tmp_path_factory.mktemp("demo")
    (folder / "notes.txt").write_text("my own file\n")
    stdout = io.StringIO()
    with contextlib.redirect_stdout(stdout):
        status = main(["demo", "--out", str(folder), "--force", "--quiet"])
    assert status == 0
    return DemoRun(folder=folder, printed=stdout.getvalue())


@pytest.fixture(scope="session")
def cluster():
    """One local Dask cluster of two workers per test process, shared by every Dask test. Threads, not
    processes: the tests stay fast and the partitions still go to two separate workers. The dashboard takes a
    free port (``:0``): clusters of parallel test processes would otherwise all ask for 8787."""
    pytest.importorskip("distributed")
    from dask.distributed import LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1, processes=False, dashboard_address=":0") as local:
        yield local

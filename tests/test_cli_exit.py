"""The console script's end: everything printed and written arrives, and the exit code is the command's.

The process ends without the interpreter's teardown once a command has returned (``scalewright.cli.leave``);
these checks run the real console entry point in a child process and compare what it printed with the
same command run in this process by ``main``.
"""
from __future__ import annotations

import io
import json
import os
import subprocess
import sys
import threading
from contextlib import redirect_stdout
from pathlib import Path

import pytest

from scalewright.cli import leave, main

from .engine_data import SCALES, survey_rows, write_csv

SRC = Path(__file__).resolve().parents[1] / "src"


def _console(*arguments: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "scalewright", *arguments], capture_output=True, text=True,
                          timeout=120, env={**os.environ, "PYTHONPATH": str(SRC)})


@pytest.fixture
def survey(tmp_path: Path) -> tuple[Path, Path]:
    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    return write_csv(tmp_path / "survey.csv", survey_rows(400)), scales


def test_everything_printed_and_written_arrives(survey, tmp_path):
    data, scales = survey
    printed = io.StringIO()
    with redirect_stdout(printed):
        assert main(["tally", str(data), "-s", str(scales), "--items", "--format", "json"]) == 0
    child = _console("tally", str(data), "-s", str(scales), "--items", "--format", "json")
    assert child.returncode == 0, child.stderr
    # the whole document arrives through the pipe, and the written file is complete
    assert json.loads(child.stdout) == json.loads(printed.getvalue())
    out = tmp_path / "reliability.json"
    child = _console("reliability", str(data), "-s", str(scales), "--format", "json", "--out", str(out))
    assert child.returncode == 0, child.stderr
    assert json.loads(out.read_text(encoding="utf-8"))["command"] == "reliability"


def test_the_exit_code_and_error_line_are_the_commands(survey, tmp_path):
    _, scales = survey
    child = _console("reliability", str(tmp_path / "absent.csv"), "-s", str(scales))
    assert child.returncode == main(["reliability", str(tmp_path / "absent.csv"), "-s", str(scales)]) != 0
    assert child.stderr.startswith("error: ")
    assert "Traceback" not in child.stderr


def test_a_thread_still_running_gets_the_usual_exit():
    # with a thread of ours alive the process is not ended at once: leave() raises SystemExit as sys.exit does
    release = threading.Event()
    waiting = threading.Thread(target=release.wait)
    waiting.start()
    try:
        with pytest.raises(SystemExit) as ended:
            leave(3)
        assert ended.value.code == 3
    finally:
        release.set()
        waiting.join()

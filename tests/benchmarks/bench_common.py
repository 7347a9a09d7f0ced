"""What the benchmark scripts share: the generated survey files, timing a child process, the load average."""
from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TypeVar

import numpy as np

T = TypeVar("T")

#: answers 1-5 cut from a standard-normal-ish latent variable
CUTS = np.array([-1.3, -0.4, 0.4, 1.3])


def scale_file_text(title: str, *, scales: int, items: int, reversed_items: Sequence[int],
                    groups: Sequence[str] = ()) -> str:
    """Scale file of ``scales`` scales ``scale0, scale1, ...`` of items ``s{scale}_{1..items}`` on 1-5.

    ``reversed_items`` are the item numbers (1-based) keyed the other way in every scale.
    """
    lines = ["version: 1", f"title: {title}", "id_column: staff_id", f"groups: [{', '.join(groups)}]",
             "response: {min: 1, max: 5, missing_codes: [9]}", "scales:"]
    for s in range(scales):
        names = [f"s{s}_{j}" for j in range(1, items + 1)]
        lines += [f"  scale{s}:", f"    title: Scale {s}", f"    items: [{', '.join(names)}]",
                  f"    reverse: [{', '.join(names[j - 1] for j in reversed_items)}]"]
    return "\n".join(lines) + "\n"


def survey_table(rng: np.random.Generator, rows: int, *, scales: int, items: int, reversed_items: Sequence[int],
                 groups: Mapping[str, np.ndarray], start: int = 0):
    """A fictional staff climate survey as an Arrow table: ids ``p{start}...``, subgroup columns drawn from
    ``groups`` (column -> its levels), congeneric 1-5 items (loading .7) with about 1% blanks."""
    import pyarrow as pa

    columns = {"staff_id": pa.array(np.char.add("p", np.arange(start, start + rows).astype(str)))}
    for column, levels in groups.items():
        columns[column] = pa.array(rng.choice(levels, rows))
    for s in range(scales):
        factor = rng.standard_normal(rows).astype(np.float32)
        for j in range(1, items + 1):
            answer = 0.7 * factor + 0.71 * rng.standard_normal(rows).astype(np.float32)
            if j in reversed_items:
                answer = -answer
            codes = (1 + np.searchsorted(CUTS, answer)).astype(np.int8)
            columns[f"s{s}_{j}"] = pa.array(codes, mask=rng.random(rows) < 0.01)
    return pa.table(columns)


def scalewright_command(*arguments: str) -> list[str]:
    """The command line that runs ``scalewright ARGUMENTS`` with this Python."""
    return [sys.executable, "-c", "import sys; from scalewright.cli import main; sys.exit(main(sys.argv[1:]))",
            *arguments]


@dataclass(frozen=True)
class ChildRun:
    """One child process: wall and CPU seconds (user + system), peak resident memory, exit status, stderr."""

    wall_s: float
    cpu_s: float
    peak_mb: float
    code: int
    error: str


def run_child(arguments: Sequence[str], env: Mapping[str, str] | None = None) -> ChildRun:
    """Run ``arguments`` as a child process (output discarded) and measure it (``os.wait4`` rusage)."""
    start = time.perf_counter()
    process = subprocess.Popen(list(arguments), stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                               env=None if env is None else dict(env))
    error = process.stderr.read().decode() if process.stderr is not None else ""
    _, status, usage = os.wait4(process.pid, 0)
    elapsed = time.perf_counter() - start
    process.returncode = os.waitstatus_to_exitcode(status)
    # Linux reports the peak resident set size in kilobytes
    return ChildRun(wall_s=elapsed, cpu_s=usage.ru_utime + usage.ru_stime, peak_mb=usage.ru_maxrss / 1024,
                    code=process.returncode, error=error)


def clocked(call: Callable[[], T]) -> tuple[T, float]:
    """What ``call()`` returns and the wall seconds it took."""
    start = time.perf_counter()
    result = call()
    return result, time.perf_counter() - start


def timed(repeat: int, call: Callable[[], object]) -> tuple[float, float]:
    """Fastest and median wall seconds of ``repeat`` calls of ``call`` in this process."""
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        call()
        times.append(time.perf_counter() - start)
    return min(times), statistics.median(times)


def load() -> str:
    """The 1, 5 and 15-minute load averages: the machine is shared, so every figure is read beside them."""
    try:
        return " ".join(Path("/proc/loadavg").read_text().split()[:3])
    except OSError:
        return "n/a"


def folder_options(description: str, *, repeat: int, profile: bool = False) -> argparse.Namespace:
    """The common command line (a folder for the generated files, ``--rows``, ``--repeat``, and ``--profile``
    where asked for); the folder made."""
    parser = argparse.ArgumentParser(description=description)
    parser.add_argument("folder", nargs="?", type=Path, default=None)
    parser.add_argument("--rows", type=int, default=1_000_000)
    parser.add_argument("--repeat", type=int, default=repeat)
    if profile:
        parser.add_argument("--profile", action="store_true")
    options = parser.parse_args()
    options.folder = options.folder or Path(tempfile.mkdtemp(prefix="scalewright-bench-"))
    options.folder.mkdir(parents=True, exist_ok=True)
    return options

"""Benchmark of `scalewright reliability` against a bare pandas parse of the same CSV file.

Generates a fictional staff climate survey (default 1,000,000 respondents x 60 items in 10 scales of 6,
answers 1-5, about 1% blanks) as CSV plus its scale file into FOLDER (default: a new temporary folder; keep
it outside the repository), then times, each in its own child process:

1. ``pandas.read_csv(path, engine="pyarrow")`` -- the floor;
2. ``scalewright reliability DATA --scales FILE --format json --out ...``.

Peak memory is the child's maximum resident set size (``os.wait4`` rusage). Goal (issue 3): the command
within 1.5x the bare parse, under 3 GB.

    python tests/benchmarks/bench_reliability.py [FOLDER] [--rows N] [--repeat R] [--profile]

``--profile`` also runs the command in this process under cProfile and prints where the time goes.
"""
from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

N_SCALES = 10
ITEMS_PER_SCALE = 6


def write_inputs(folder: Path, rows: int, seed: int = 2026) -> tuple[Path, Path]:
    """Write the data file and the scale file; reuse them if a previous run left them for this size."""
    import pyarrow as pa
    import pyarrow.csv as pacsv

    data = folder / f"climate_{rows}.csv"
    scales = folder / "climate.yaml"
    lines = ["version: 1", "title: Staff climate survey (benchmark)", "id_column: staff_id",
             "groups: []", "response: {min: 1, max: 5, missing_codes: [9]}", "scales:"]
    for s in range(N_SCALES):
        names = [f"s{s}_{j}" for j in range(1, ITEMS_PER_SCALE + 1)]
        lines += [f"  scale{s}:", f"    title: Scale {s}", f"    items: [{', '.join(names)}]",
                  f"    reverse: [{names[2]}, {names[5]}]"]
    scales.write_text("\n".join(lines) + "\n", encoding="utf-8")
    if data.exists():
        return data, scales
    rng = np.random.default_rng(seed)
    columns = {"staff_id": pa.array(np.char.add("p", np.arange(rows).astype(str))),
               "shift": pa.array(rng.choice(np.array(["day", "night", "rotating"]), rows))}
    cuts = np.array([-1.3, -0.4, 0.4, 1.3])
    for s in range(N_SCALES):
        factor = rng.standard_normal(rows).astype(np.float32)
        for j in range(1, ITEMS_PER_SCALE + 1):
            answer = 0.7 * factor + 0.71 * rng.standard_normal(rows).astype(np.float32)
            if j in (3, 6):
                answer = -answer
            codes = (1 + np.searchsorted(cuts, answer)).astype(np.int8)
            blank = rng.random(rows) < 0.01
            columns[f"s{s}_{j}"] = pa.array(codes, mask=blank)
    pacsv.write_csv(pa.table(columns), data)
    return data, scales


def run_child(arguments: list[str]) -> tuple[float, float, int]:
    """Wall seconds, peak RSS in MB and exit status of one child process."""
    start = time.perf_counter()
    process = subprocess.Popen(arguments, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(process.pid, 0)
    elapsed = time.perf_counter() - start
    process.returncode = os.waitstatus_to_exitcode(status)
    if process.returncode:
        sys.stderr.write(process.stderr.read().decode())
    return elapsed, usage.ru_maxrss / 1024, process.returncode  # Linux reports kilobytes


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("folder", nargs="?", type=Path, default=None)
    parser.add_argument("--rows", type=int, default=1_000_000)
    parser.add_argument("--repeat", type=int, default=1)
    parser.add_argument("--profile", action="store_true")
    options = parser.parse_args()
    folder = options.folder or Path(tempfile.mkdtemp(prefix="scalewright-bench-"))
    folder.mkdir(parents=True, exist_ok=True)
    start = time.perf_counter()
    data, scales = write_inputs(folder, options.rows)
    print(f"inputs: {data} ({data.stat().st_size / 1e6:.0f} MB) written/reused in {time.perf_counter() - start:.1f} s")
    parse = [sys.executable, "-c", f"import pandas; pandas.read_csv({str(data)!r}, engine='pyarrow')"]
    out = folder / "reliability.json"
    command = [sys.executable, "-c", "import sys; from scalewright.cli import main; sys.exit(main(sys.argv[1:]))",
               "reliability", str(data), "--scales", str(scales), "--format", "json", "--out", str(out)]
    results = []
    for _ in range(options.repeat):
        parse_s, parse_mb, _ = run_child(parse)
        command_s, command_mb, status = run_child(command)
        results.append({"parse_s": parse_s, "parse_peak_mb": parse_mb, "command_s": command_s,
                        "command_peak_mb": command_mb, "ratio": command_s / parse_s, "status": status})
        print(f"bare parse {parse_s:6.2f} s {parse_mb:7.0f} MB | reliability {command_s:6.2f} s {command_mb:7.0f} MB"
              f" | ratio {command_s / parse_s:.2f} | exit {status}")
    best_parse = min(r["parse_s"] for r in results)
    best_command = min(r["command_s"] for r in results)
    ratios = sorted(r["ratio"] for r in results)
    median_ratio = ratios[len(ratios) // 2]
    # the fastest of several runs is the least disturbed by other work on the machine
    print(f"best of {len(results)}: bare parse {best_parse:.2f} s, reliability {best_command:.2f} s, "
          f"ratio of the bests {best_command / best_parse:.2f}; median of the paired ratios {median_ratio:.2f}")
    summary = {"rows": options.rows, "best_parse_s": best_parse, "best_command_s": best_command,
               "ratio_of_bests": best_command / best_parse, "median_ratio": median_ratio, "items": N_SCALES * ITEMS_PER_SCALE, "scales": N_SCALES,
               "file_mb": data.stat().st_size / 1e6, "runs": results, "cpu_count": os.cpu_count()}
    (folder / "bench_reliability.json").write_text(json.dumps(summary, indent=2), encoding="utf-8")
    if options.profile:
        import cProfile
        import pstats

        from scalewright.cli import main as cli_main

        profiler = cProfile.Profile()
        profiler.enable()
        cli_main(command[3:])
        profiler.disable()
        pstats.Stats(profiler).sort_stats("cumulative").print_stats(35)
    return 0 if all(r["status"] == 0 for r in results) else 1


if __name__ == "__main__":
    sys.exit(main())

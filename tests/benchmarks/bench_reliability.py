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

import json
import os
import sys
import time
from pathlib import Path

from bench_common import folder_options, run_child, scale_file_text, scalewright_command, survey_table

N_SCALES = 10
ITEMS_PER_SCALE = 6
#: the third and sixth item of every scale are keyed the other way
REVERSED_ITEMS = (3, 6)
SHIFTS = ("day", "night", "rotating")


def write_scales(folder: Path) -> Path:
    scales = folder / "climate.yaml"
    scales.write_text(scale_file_text("Staff climate survey (benchmark)", scales=N_SCALES, items=ITEMS_PER_SCALE,
                                      reversed_items=REVERSED_ITEMS), encoding="utf-8")
    return scales


def write_inputs(folder: Path, rows: int, seed: int = 2026) -> tuple[Path, Path]:
    """Write the data file and the scale file; reuse them if a previous run left them for this size."""
    import numpy as np
    import pyarrow.csv as pacsv

    data, scales = folder / f"climate_{rows}.csv", write_scales(folder)
    if not data.exists():
        table = survey_table(np.random.default_rng(seed), rows, scales=N_SCALES, items=ITEMS_PER_SCALE,
                             reversed_items=REVERSED_ITEMS, groups={"shift": np.array(SHIFTS)})
        pacsv.write_csv(table, data)
    return data, scales


def main() -> int:
    options = folder_options(__doc__.splitlines()[0], repeat=1, profile=True)
    folder = options.folder
    start = time.perf_counter()
    data, scales = write_inputs(folder, options.rows)
    print(f"inputs: {data} ({data.stat().st_size / 1e6:.0f} MB) written/reused in {time.perf_counter() - start:.1f} s")
    parse = [sys.executable, "-c", f"import pandas; pandas.read_csv({str(data)!r}, engine='pyarrow')"]
    out = folder / "reliability.json"
    command = scalewright_command("reliability", str(data), "--scales", str(scales), "--format", "json",
                                  "--out", str(out))
    results = []
    for _ in range(options.repeat):
        bare, run = run_child(parse), run_child(command)
        sys.stderr.write(run.error if run.code else "")
        parse_s, parse_mb, command_s, command_mb, status = bare.wall_s, bare.peak_mb, run.wall_s, run.peak_mb, run.code
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
               "ratio_of_bests": best_command / best_parse, "median_ratio": median_ratio,
               "items": N_SCALES * ITEMS_PER_SCALE, "scales": N_SCALES,
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

"""Benchmark of the 60 x 60 polychoric matrix of 1,000,000 respondents, beyond reading the file.

Uses the data and scale file of ``bench_reliability.py`` (1,000,000 x 60 items in 10 scales of 6, answers
1-5, about 1% blanks; written into FOLDER or reused). In one process it reads the file as the commands
do (``load_inputs``), then times, separately and each ``--repeat`` times:

1. the pair tables of all 60 items (1,770 pairs) from the one-byte codes, pairwise and listwise;
2. the polychoric estimates of the 1,770 pairs with standard errors from those tables;
3. the whole of ``polychoric_of_items`` (what ``--ordinal`` calls: tables, estimates, keying, smoothing).

Goal (issue 18): step 3 at most 2 s. The load average of the machine is printed beside every figure:
the machine is shared, so figures vary with it; the process's CPU seconds are printed too (the steps run
in one thread, so on an idle machine their wall time is close to their CPU time).

    python tests/benchmarks/bench_polychoric.py [FOLDER] [--rows N] [--repeat R]
"""
from __future__ import annotations

import json
import os
import sys
import time

import numpy as np
from bench_common import folder_options, load
from bench_reliability import write_inputs


def main() -> int:
    options = folder_options(__doc__.splitlines()[0], repeat=3)
    folder = options.folder
    data, scales = write_inputs(folder, options.rows)

    from scalewright.analyses.ordinal import polychoric_of_items
    from scalewright.cli.common import load_inputs
    from scalewright.stats.pair_tables import pair_tables
    from scalewright.stats.polychoric import polychoric_pairs

    start, cpu_start = time.perf_counter(), time.process_time()
    inputs = load_inputs(data, scales)
    read_s, read_cpu_s = time.perf_counter() - start, time.process_time() - cpu_start
    responses, spec = inputs.responses, inputs.spec
    items = list(spec.items)
    codes = np.asarray(responses.codes(items))
    print(f"read {data.name}: {read_s:.2f} s wall, {read_cpu_s:.2f} s CPU (load {load()}); "
          f"{codes.shape[0]:,} rows x {codes.shape[1]} items")
    runs = []
    for _ in range(options.repeat):
        before = load()
        t0, c0 = time.perf_counter(), time.process_time()
        tables = pair_tables(codes, 5)
        t1, c1 = time.perf_counter(), time.process_time()
        upper = np.triu_indices(len(items), 1)
        estimates = polychoric_pairs(tables.answered()[upper])
        t2, c2 = time.perf_counter(), time.process_time()
        pairwise = polychoric_of_items(responses, items, pairwise=True)
        t3, c3 = time.perf_counter(), time.process_time()
        listwise = polychoric_of_items(responses, items)
        t4, c4 = time.perf_counter(), time.process_time()
        run = {"tables_s": t1 - t0, "estimates_s": t2 - t1, "pairwise_total_s": t3 - t2, "listwise_total_s": t4 - t3,
               # CPU seconds of this process: less disturbed by other work than wall time (one thread here)
               "tables_cpu_s": c1 - c0, "estimates_cpu_s": c2 - c1, "pairwise_total_cpu_s": c3 - c2,
               "listwise_total_cpu_s": c4 - c3,
               "pairs": int(estimates.rho.size), "load_before": before, "load_after": load(),
               "listwise_rows": listwise.n_used, "smoothed": bool(pairwise.smoothed)}
        runs.append(run)
        print(f"tables {run['tables_s']:.2f} s ({run['tables_cpu_s']:.2f} CPU) | estimates {run['estimates_s']:.2f} s "
              f"({run['estimates_cpu_s']:.2f} CPU) | whole, pairwise {run['pairwise_total_s']:.2f} s "
              f"({run['pairwise_total_cpu_s']:.2f} CPU) | whole, listwise {run['listwise_total_s']:.2f} s "
              f"({run['listwise_total_cpu_s']:.2f} CPU) | load {before} -> {run['load_after']}")
    best = {key: min(r[key] for r in runs) for key in runs[0] if key.endswith("_s")}
    print(f"best of {len(runs)}: " + ", ".join(f"{k} {v:.2f}" for k, v in best.items()))
    summary = {"rows": int(codes.shape[0]), "items": len(items), "read_s": read_s, "read_cpu_s": read_cpu_s,
               "best": best, "runs": runs,
               "cpu_count": os.cpu_count()}
    (folder / "bench_polychoric.json").write_text(json.dumps(summary, indent=2), encoding="utf-8")
    return 0


if __name__ == "__main__":
    sys.exit(main())

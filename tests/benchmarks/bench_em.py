"""Benchmark of EM (means and covariances of every item under missing at random) beside reading the file.

Uses the data of ``bench_reliability.py`` (1,000,000 respondents x 60 items, answers 1-5, about 1% blanks
per item; generated once into FOLDER and reused). In this process it times:

1. reading the file into one-byte codes (``scalewright.data.read_responses``) -- the floor;
2. the per-pattern summary of all 60 items (``PatternSummary.from_codes``);
3. EM to convergence (``em_means_and_covariance``) and Little's MCAR test.

Goal (issue 19): 2 + 3 at most 2 s. Each step is repeated and the best time kept (the machine is shared);
the load average is printed beside the figures.

    python tests/benchmarks/bench_em.py [FOLDER] [--rows N] [--repeat R]
"""
from __future__ import annotations

import json
import os
import sys
from functools import partial

from bench_common import clocked, folder_options
from bench_reliability import write_inputs  # the same generated file


def main() -> int:
    options = folder_options(__doc__.splitlines()[0], repeat=3)
    folder = options.folder
    data, scales = write_inputs(folder, options.rows)

    from scalewright.data import read_responses
    from scalewright.spec import load_spec
    from scalewright.stats.em import em_means_and_covariance, little_mcar_test
    from scalewright.stats.missing_patterns import PatternSummary

    spec = load_spec(scales)
    runs = []
    for _ in range(options.repeat):
        load_before = os.getloadavg()[0]
        responses, read_s = clocked(partial(read_responses, data, spec))
        codes, codes_s = clocked(partial(responses.codes, spec.items))
        read_s += codes_s
        summary, summary_s = clocked(partial(PatternSummary.from_codes, codes))
        estimate, em_s = clocked(partial(em_means_and_covariance, summary))
        test, mcar_s = clocked(partial(little_mcar_test, summary, estimate))
        runs.append({"read_s": read_s, "summary_s": summary_s, "em_s": em_s, "mcar_s": mcar_s,
                     "beyond_reading_s": summary_s + em_s + mcar_s, "iterations": estimate.iterations,
                     "patterns": int(summary.counts.size), "held_as_rows": int(summary.rows.shape[0]),
                     "load_before": load_before, "load_after": os.getloadavg()[0]})
        print(f"read {read_s:5.2f} s | summary {summary_s:5.2f} s | EM {em_s:5.2f} s ({estimate.iterations} "
              f"iterations) | Little {mcar_s:5.2f} s | beyond reading {summary_s + em_s + mcar_s:5.2f} s | "
              f"{summary.counts.size} patterns, {summary.rows.shape[0]} rows held | load "
              f"{load_before:.1f} -> {os.getloadavg()[0]:.1f} | chi2 {test.chi2:.0f} on {test.df} df")
        del responses, codes, summary
    best = min(runs, key=lambda r: r["beyond_reading_s"])
    print(f"best of {len(runs)}: read {min(r['read_s'] for r in runs):.2f} s, beyond reading "
          f"{best['beyond_reading_s']:.2f} s (summary {best['summary_s']:.2f}, EM {best['em_s']:.2f}, "
          f"Little {best['mcar_s']:.2f})")
    (folder / "bench_em.json").write_text(json.dumps({"rows": options.rows, "items": len(spec.items),
                                                      "runs": runs, "cpu_count": os.cpu_count()}, indent=2),
                                          encoding="utf-8")
    return 0


if __name__ == "__main__":
    sys.exit(main())

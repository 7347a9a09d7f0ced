"""Timing of the structure statistics: parallel analysis at 5,000 x 40 with 100 iterations, and the whole
analysis (KMO, Bartlett, parallel analysis, EFA, per-scale summaries) on generated four-factor data.

    python tests/benchmarks/bench_structure.py [--rows 5000] [--items 40] [--iterations 100] [--repeat 5]

Prints the minimum and median wall time of each step (the minimum is the least disturbed by other load).
"""
from __future__ import annotations

import argparse
import warnings
from functools import partial

import numpy as np
from bench_common import load, timed


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=5000)
    parser.add_argument("--items", type=int, default=40)
    parser.add_argument("--iterations", type=int, default=100)
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    # factor_analyzer 0.5.1 passes an argument scikit-learn 1.7 renamed; harmless below 1.8
    warnings.filterwarnings("ignore", message="'force_all_finite' was renamed", category=FutureWarning)

    from scalewright.stats.parallel import random_eigenvalues
    from scalewright.stats.structure import analyse_structure

    rng = np.random.default_rng(2026)
    n, p = args.rows, args.items
    factors = rng.standard_normal((n, 4))
    data = np.column_stack([0.7 * factors[:, j * 4 // p] + 0.71 * rng.standard_normal(n) for j in range(p)])
    names = [f"item{j + 1}" for j in range(p)]
    item_scale = {name: f"scale{j * 4 // p + 1}" for j, name in enumerate(names)}
    analyse_structure(data[:200], item_names=names, item_scale=item_scale, iterations=2)  # imports, warm-up
    for sampler in ("wishart", "data"):
        random_eigenvalues(50, 5, iterations=2, sampler=sampler)  # scipy.stats is imported on first use

    for sampler in ("wishart", "data"):
        best, median = timed(args.repeat, partial(random_eigenvalues, n, p, iterations=args.iterations, seed=1,
                                                  sampler=sampler))
        print(f"parallel analysis {n} x {p}, {args.iterations} iterations, {sampler} draws: "
              f"min {best:.2f} s, median {median:.2f} s (load {load()})")
    best, median = timed(args.repeat, lambda: analyse_structure(data, item_names=names, item_scale=item_scale,
                                                                iterations=args.iterations))
    print(f"whole analysis {n} x {p} (4 factors, minres, oblimin): min {best:.2f} s, median {median:.2f} s "
          f"(load {load()})")


if __name__ == "__main__":
    main()

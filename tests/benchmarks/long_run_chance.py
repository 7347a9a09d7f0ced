"""How often attentive respondents reach the `long-run` cut-off by chance, by the number of items.

Generated one-factor surveys (5-point answers cut from a normal trait plus noise, every item keyed the
same way: the case most prone to runs) with item loadings .6, .75 and .85; for 4 to 20 items, the share
of respondents whose longest run of one answer reaches the default cut-off (60% of the items, rounded up,
at least 2), computed with the project's own `longstring`. It backs the default of
`ScreenThresholds.long_run_min_items` (docs/screening.md).

Run: python tests/benchmarks/long_run_chance.py [--respondents N]
Prints a Markdown table.
"""
from __future__ import annotations

import argparse
import math
import sys

import numpy as np

from scalewright.stats.careless_indices import longstring
from scalewright.stats.screen_rules import ScreenThresholds

CUTS = np.array([-1.2, -0.4, 0.4, 1.2])  # the thresholds of a 5-point answer on the standard normal scale


def chance_share(n_items: int, loading: float, respondents: int, rng: np.random.Generator) -> float:
    trait = rng.standard_normal((respondents, 1))
    latent = loading * trait + math.sqrt(1 - loading**2) * rng.standard_normal((respondents, n_items))
    answers = (1 + np.searchsorted(CUTS, latent)).astype(float)
    return float(np.mean(longstring(answers) >= ScreenThresholds().long_run_items(n_items)))


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--respondents", type=int, default=20_000)
    options = parser.parse_args()
    rng = np.random.default_rng(2026)
    sizes = (4, 5, 6, 8, 10, 12, 15, 20)
    loadings = (0.6, 0.75, 0.85)
    print("| items | run that flags | " + " | ".join(f"loading {x:g}" for x in loadings) + " |")
    print("| --- | --- | " + " | ".join("---" for _ in loadings) + " |")
    for k in sizes:
        shares = [chance_share(k, loading, options.respondents, rng) for loading in loadings]
        print(f"| {k} | {ScreenThresholds().long_run_items(k)} | " + " | ".join(f"{100 * s:.1f}%" for s in shares) + " |")
    return 0


if __name__ == "__main__":
    sys.exit(main())

"""How often the `miskey-suspect` flag names exactly the mis-keyed items, by the old and the new rule.

Run: python tests/benchmarks/miskey_flags.py [--reps 200] [--seed 15]
Prints a Markdown table for docs/reliability.md.

Each data set is a one-factor scale of k items answered on 1..K (five or six answer codes), some of whose
items are answered in reverse but not declared reverse-keyed (the forgotten reverse key). Loadings are drawn
anew for every data set from U(.45, .80). A data set counts as *exact* when the flagged items are the
mis-keyed ones, no more and no fewer; *missed* and *false* count mis-keyed items not flagged and correctly
keyed items flagged.

- new rule (today): the sign of the item's loading on the scale's first factor, below -.10
  (``scalewright.stats.reliability_flags.reliability_flags``);
- old rule (before): item-rest r below 0 *or* a negative loading (re-implemented here for comparison).
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "src"))

from scalewright.stats.reliability import scale_reliability  # noqa: E402

DESIGNS = (  # (k items, answer codes, mis-keyed positions)
    (5, 5, (2,)),
    (5, 5, (1, 4)),
    (5, 6, (0, 3)),
    (6, 5, (1, 3, 5)),
    (5, 6, (4,)),
)
SIZES = (100, 300, 1000, 2800)


def answers(n: int, k: int, codes: int, miskeyed: tuple[int, ...], rng: np.random.Generator) -> np.ndarray:
    loadings = rng.uniform(0.45, 0.80, size=k)
    latent = rng.normal(size=(n, 1)) * loadings + rng.normal(size=(n, k)) * np.sqrt(1 - loadings**2)
    cuts = np.quantile(rng.normal(size=20000), np.linspace(0, 1, codes + 1)[1:-1]) + rng.normal(0, 0.2)
    x = np.searchsorted(cuts, latent).astype(float) + 1.0
    x[:, list(miskeyed)] = codes + 1 - x[:, list(miskeyed)]
    return x


def old_rule(result) -> set[str]:
    return {name for name, item in result.items.items()
            if (np.isfinite(item.item_rest_r) and item.item_rest_r < 0)
            or (np.isfinite(item.loading) and item.loading < 0)}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--reps", type=int, default=200)
    parser.add_argument("--seed", type=int, default=15)
    args = parser.parse_args(argv)
    rng = np.random.default_rng(args.seed)
    print("| k | codes | mis-keyed | n | new: exact | new: missed / false | old: exact | old: missed / false |")
    print("| ---: | ---: | --- | ---: | ---: | --- | ---: | --- |")
    for k, codes, miskeyed in DESIGNS:
        names = [f"i{j + 1}" for j in range(k)]
        truth = {names[j] for j in miskeyed}
        for n in SIZES:
            tallies = {"new": [0, 0, 0], "old": [0, 0, 0]}
            for _ in range(args.reps):
                result = scale_reliability(answers(n, k, codes, miskeyed, rng), item_names=names, low=1, high=codes)
                found = {"new": {f.item for f in result.flags if f.code == "miskey-suspect"}, "old": old_rule(result)}
                for rule, flagged in found.items():
                    tallies[rule][0] += flagged == truth
                    tallies[rule][1] += len(truth - flagged)
                    tallies[rule][2] += len(flagged - truth)
            new, old = tallies["new"], tallies["old"]
            print(f"| {k} | {codes} | {', '.join(names[j] for j in miskeyed)} | {n} | {new[0] / args.reps:.3f} | "
                  f"{new[1]} / {new[2]} | {old[0] / args.reps:.3f} | {old[1]} / {old[2]} |")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

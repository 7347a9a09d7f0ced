"""Accuracy of the shape label on generated rating data of every shape, sample size and item count.

Data come from a latent model: each item answer is the category of (trait + item shift + noise), cut into
equal answer categories on [0, 1] and clipped at the ends; the score is the mean of the answered items (about
2% of answers missing at random, at least 75% of items needed).  The shape is given to the *true score* -- the
expected item mean of a respondent -- which is drawn from a distribution of the intended shape on the answer
range widened at each end by h / (2 sqrt(k)), h = 1/k the score step, and clipped to the range (without
widening the lowest and highest attainable scores would hold too few respondents; the width was chosen so that
a uniform true score gives about equal counts to every attainable score, for 1 to 10 items); the trait is the value whose expected item mean is that true score (the curve is inverted numerically).
Giving the shape to the true score rather than to the trait keeps the answer categories' staircase from adding
floor and ceiling piles that are not part of the intended shape.  Shape parameters are drawn anew for every
data set, so the rule is not tuned to one point.

Run:  python tests/benchmarks/shape_label_accuracy.py [--reps 200] [--seed 2026] [--markdown]
The table in docs/shape.md comes from this script (seeds differ from the tests' seeds).
"""
from __future__ import annotations

import argparse
import sys
import time

import numpy as np

SHAPES = ("symmetric", "left-skewed", "right-skewed", "uniform", "bimodal")
SAMPLE_SIZES = (100, 200, 500, 1000, 5000)
ITEM_COUNTS = (1, 3, 5, 10)


def true_score_share(shape: str, n: int, rng: np.random.Generator) -> np.ndarray:
    """True scores as shares of the answer range, on (0, 1), of the intended shape; parameters vary."""
    if shape == "symmetric":
        a = rng.uniform(3.0, 8.0)
        return rng.beta(a, a, size=n)
    if shape in ("left-skewed", "right-skewed"):
        # Beta(a, b) with b in 1.3..2 and a = 3..5 b: population skewness about -0.7 to -1.2
        b = rng.uniform(1.3, 2.0)
        a = b * rng.uniform(3.0, 5.0)
        theta = rng.beta(a, b, size=n)
        return theta if shape == "left-skewed" else 1.0 - theta
    if shape == "uniform":
        return rng.uniform(0.0, 1.0, size=n)
    if shape == "bimodal":
        centre_low, centre_high = rng.uniform(0.18, 0.3), rng.uniform(0.7, 0.82)
        spread = rng.uniform(0.06, 0.1)
        share_low = rng.uniform(0.35, 0.65)
        low = rng.random(n) < share_low
        mixed = np.where(low, rng.normal(centre_low, spread, n), rng.normal(centre_high, spread, n))
        return np.clip(mixed, 0.001, 0.999)
    raise ValueError(f"unknown shape {shape}")


def trait_for_true_score(share: np.ndarray, shifts: np.ndarray, *, categories: int, noise: float) -> np.ndarray:
    """Trait whose expected item mean is 1 + share (categories - 1): the inverse of a smooth staircase."""
    from scipy.special import ndtr

    thetas = np.linspace(-1.0, 2.0, 6001)
    cuts = np.arange(1, categories) / categories
    expected = 1.0 + ndtr((thetas[:, None, None] + shifts[None, :, None] - cuts[None, None, :]) / noise).sum(axis=2).mean(axis=1)
    return np.interp(1.0 + share * (categories - 1), expected, thetas)


def item_responses(share: np.ndarray, k: int, rng: np.random.Generator, *, categories: int = 5,
                   noise: float = 0.08, item_shift: float = 0.03, missing_rate: float = 0.02) -> np.ndarray:
    """n x k answers 1..categories (NaN missing): category of trait + item shift + noise, clipped."""
    n = share.size
    shifts = rng.normal(0.0, item_shift, size=k)
    step = 1.0 / k
    margin = step / (2 * np.sqrt(k))
    widened = np.clip((share * (categories - 1 + 2 * margin) - margin) / (categories - 1), 0.0, 1.0)
    theta = trait_for_true_score(widened, shifts, categories=categories, noise=noise)
    latent = theta[:, None] + shifts[None, :] + rng.normal(0.0, noise, size=(n, k))
    answers = np.clip(np.floor(latent * categories), 0, categories - 1) + 1.0
    if missing_rate > 0:
        answers[rng.random((n, k)) < missing_rate] = np.nan
    return answers


def mean_scores(answers: np.ndarray, *, min_share: float = 0.75) -> np.ndarray:
    k = answers.shape[1]
    answered = np.isfinite(answers).sum(axis=1)
    with np.errstate(invalid="ignore"):
        scores = np.nansum(answers, axis=1) / np.where(answered > 0, answered, 1)
    return np.where(answered >= max(1, int(np.ceil(min_share * k))), scores, np.nan)


def generate_scores(shape: str, n: int, k: int, rng: np.random.Generator, *, categories: int = 5) -> np.ndarray:
    return mean_scores(item_responses(true_score_share(shape, n, rng), k, rng, categories=categories))


def label_of(scores: np.ndarray, k: int, categories: int) -> str | None:
    from scalewright.stats.score_grid import attainable_scores, score_resolution
    from scalewright.stats.shape import describe_scores

    grid = attainable_scores(1, categories, k, min_answered=int(np.ceil(0.75 * k)))
    return describe_scores(scores, attainable=grid, resolution=score_resolution(1, categories, k),
                           answer_levels=categories).shape


def run_study(*, reps: int, seed: int, sizes=SAMPLE_SIZES, items=ITEM_COUNTS, shapes=SHAPES,
              categories=(5, 7)) -> dict:
    """Share of correct labels per (shape, n, k); answer formats alternate between 5 and 7 categories."""
    rng = np.random.default_rng(seed)
    results: dict = {}
    confusion: dict = {}
    for shape in shapes:
        for n in sizes:
            for k in items:
                right = 0
                for rep in range(reps):
                    cats = categories[rep % len(categories)]
                    label = label_of(generate_scores(shape, n, k, rng, categories=cats), k, cats)
                    right += label == shape
                    confusion.setdefault((shape, n), {}).setdefault(label, 0)
                    confusion[(shape, n)][label] += 1
                results[(shape, n, k)] = right / reps
    return {"accuracy": results, "confusion": confusion}


def markdown_table(accuracy: dict, sizes=SAMPLE_SIZES, items=ITEM_COUNTS, shapes=SHAPES) -> str:
    lines = ["| shape | items | " + " | ".join(f"n = {n}" for n in sizes) + " |",
             "| :--- | ---: | " + " | ".join("---:" for _ in sizes) + " |"]
    for shape in shapes:
        for k in items:
            cells = " | ".join(f"{accuracy[(shape, n, k)]:.2f}" for n in sizes)
            lines.append(f"| {shape} | {k} | {cells} |")
    return "\n".join(lines)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--reps", type=int, default=200)
    parser.add_argument("--seed", type=int, default=2026)
    parser.add_argument("--sizes", type=str, default=",".join(map(str, SAMPLE_SIZES)))
    parser.add_argument("--items", type=str, default=",".join(map(str, ITEM_COUNTS)))
    args = parser.parse_args(argv)
    sizes = tuple(int(s) for s in args.sizes.split(","))
    items = tuple(int(s) for s in args.items.split(","))
    start = time.perf_counter()
    study = run_study(reps=args.reps, seed=args.seed, sizes=sizes, items=items)
    print(markdown_table(study["accuracy"], sizes=sizes, items=items))
    print()
    print("labels given, by true shape and n (all item counts):")
    for (shape, n), counts in sorted(study["confusion"].items(), key=lambda kv: (SHAPES.index(kv[0][0]), kv[0][1])):
        print(f"  {shape:>12} n={n:<5} " + ", ".join(f"{label}: {c}" for label, c in sorted(counts.items(), key=str)))
    worst = min(v for (s, n, k), v in study["accuracy"].items() if n >= 200) if any(n >= 200 for n in sizes) else None
    print(f"\nlowest accuracy at n >= 200: {worst}   ({time.perf_counter() - start:.0f} s, reps={args.reps}, seed={args.seed})")
    return 0


if __name__ == "__main__":
    sys.exit(main())

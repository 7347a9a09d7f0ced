"""Recall and false-positive rate of `screen_respondents` on generated surveys with injected careless answers.

Run: python tests/benchmarks/screen_recall.py [--quick]
Prints a Markdown table (one row per design) for docs/screening.md. The generator is also used by
tests/test_quality_recall.py (on seeds this script does not use).
"""
from __future__ import annotations

import argparse
import sys
from dataclasses import dataclass

import numpy as np

ATTENTIVE, STRAIGHT, RANDOM = 0, 1, 2


@dataclass(frozen=True)
class GeneratedSurvey:
    raw: np.ndarray                     # n x p answers in questionnaire order, not keyed
    keyed_by_scale: dict[str, np.ndarray]
    kind: np.ndarray                    # ATTENTIVE / STRAIGHT / RANDOM per respondent
    ids: list[str]
    low: int
    high: int


def make_survey(*, seed: int, n: int = 600, n_scales: int = 4, k: int = 6, low: int = 1, high: int = 5,
                careless_share: float = 0.06, missing_share: float = 0.02, interleave: bool = False,
                factor_r: float = 0.3, item_shift: float = 0.7) -> GeneratedSurvey:
    """A fictional staff climate survey: correlated latent traits, items with a third reverse-worded.

    Careless respondents are ``careless_share`` of n, half straight-liners (one answer, chosen at random,
    for every item) and half random clickers (every answer uniform over the answer range). Item means differ
    by a latent shift drawn from U(-``item_shift``, ``item_shift``) per item (0.05: means that barely differ).
    """
    rng = np.random.default_rng(seed)
    p = n_scales * k
    phi = np.full((n_scales, n_scales), factor_r) + (1 - factor_r) * np.eye(n_scales)
    traits = rng.multivariate_normal(np.zeros(n_scales), phi, size=n)
    loadings = rng.uniform(0.55, 0.8, size=p)
    reverse = np.zeros(p, dtype=bool)
    for s in range(n_scales):
        picks = rng.choice(k, size=max(1, k // 3), replace=False)
        reverse[s * k + picks] = True
    scale_of = np.repeat(np.arange(n_scales), k)
    shift = rng.uniform(-item_shift, item_shift, size=p)
    # answers in the trait's direction; reverse-worded items are then answered the other way round
    latent = traits[:, scale_of] * loadings + rng.normal(size=(n, p)) * np.sqrt(1 - loadings ** 2) + shift
    levels = high - low + 1
    from scipy.stats import norm
    cuts = norm.ppf(np.arange(1, levels) / levels)
    keyed_answers = low + np.searchsorted(cuts, latent)
    raw_by_item = np.where(reverse, low + high - keyed_answers, keyed_answers).astype(float)

    kind = np.zeros(n, dtype=int)
    n_careless = int(round(careless_share * n))
    chosen = rng.choice(n, size=n_careless, replace=False)
    kind[chosen[: n_careless // 2]] = STRAIGHT
    kind[chosen[n_careless // 2:]] = RANDOM
    straight = kind == STRAIGHT
    raw_by_item[straight] = rng.integers(low, high + 1, size=straight.sum())[:, None]
    rand = kind == RANDOM
    raw_by_item[rand] = rng.integers(low, high + 1, size=(rand.sum(), p))
    holes = rng.random((n, p)) < missing_share
    raw_by_item[holes] = np.nan

    order = np.arange(p).reshape(n_scales, k).T.reshape(-1) if interleave else np.arange(p)
    raw = raw_by_item[:, order]
    keyed_all = np.where(reverse, low + high - raw_by_item, raw_by_item)
    keyed = {f"scale{s + 1}": keyed_all[:, s * k:(s + 1) * k] for s in range(n_scales)}
    return GeneratedSurvey(raw, keyed, kind, [f"r{i:05d}" for i in range(n)], low, high)


def rates(flagged: np.ndarray, kind: np.ndarray) -> dict[str, float]:
    careless = kind != ATTENTIVE
    return {
        "recall": float(flagged[careless].mean()),
        "recall_straight": float(flagged[kind == STRAIGHT].mean()),
        "recall_random": float(flagged[kind == RANDOM].mean()),
        "false_positive": float(flagged[~careless].mean()),
    }


DESIGNS = [
    # name, keyword arguments of make_survey
    ("4 scales x 6 items, 1-5, n=600", dict(n=600, n_scales=4, k=6)),
    ("3 scales x 4 items, 1-5, n=300", dict(n=300, n_scales=3, k=4)),
    ("5 scales x 8 items, 1-7, n=1000", dict(n=1000, n_scales=5, k=8, high=7)),
    ("6 scales x 5 items, 1-5, interleaved, n=800", dict(n=800, n_scales=6, k=5, interleave=True)),
    ("4 scales x 6 items, 1-5, n=200", dict(n=200, n_scales=4, k=6)),
    ("2 scales x 10 items, 0-4, n=500", dict(n=500, n_scales=2, k=10, low=0, high=4)),
]


def study(seeds: range) -> list[dict]:
    from scalewright.stats.screening import screen_respondents

    rows = []
    for name, kwargs in DESIGNS:
        found = []
        for seed in seeds:
            survey = make_survey(seed=seed, **kwargs)
            result = screen_respondents(survey.raw, survey.keyed_by_scale, ids=survey.ids)
            found.append(rates(result.flagged, survey.kind))
        rows.append({"design": name, "seeds": len(seeds),
                     **{key: float(np.mean([f[key] for f in found])) for key in found[0]},
                     "worst_recall": float(min(f["recall"] for f in found)),
                     "worst_false_positive": float(max(f["false_positive"] for f in found))})
    return rows


def demo_study(seeds: range, *, n: int = 800, with_durations: bool = True) -> dict:
    """The project's demo survey (4 scales, 18 items, about 5% careless), read and screened like the CLI does."""
    import tempfile
    from pathlib import Path

    from scalewright.analyses.screen import analyse_screen
    from scalewright.data import read_responses
    from scalewright.demo_data import generate_staff_climate
    from scalewright.spec import load_spec

    spec = load_spec(Path(__file__).parents[2] / "src" / "scalewright" / "resources" / "staff-climate.yaml")
    found = []
    with tempfile.TemporaryDirectory() as folder:
        for seed in seeds:
            frame, truth = generate_staff_climate(seed=seed, n=n)
            path = Path(folder) / "survey.csv"
            frame.to_csv(path, index=False)
            result = analyse_screen(spec, read_responses(path, spec),
                                    duration_column="duration_s" if with_durations else None)
            kind = np.where(truth.careless_kind == "straight-line", STRAIGHT,
                            np.where(truth.careless_kind == "random", RANDOM, ATTENTIVE))
            found.append(rates(result.flagged, kind))
    name = f"demo survey, 4 scales / 18 items, n={n}, {'with' if with_durations else 'without'} durations"
    return {"design": name, "seeds": len(seeds), **{key: float(np.mean([f[key] for f in found])) for key in found[0]},
            "worst_recall": float(min(f["recall"] for f in found)),
            "worst_false_positive": float(max(f["false_positive"] for f in found))}


def attentive_study(seeds: range, shifts=(0.05, 0.2, 0.7, 1.5)) -> list[dict]:
    """Share of attentive respondents (no careless ones generated) carrying any flag, strong or weak, and
    against-sample in particular, by how much the item means differ (latent shift U(-s, s) per item)."""
    from scalewright.stats.screen_rules import FLAG_AGAINST_SAMPLE
    from scalewright.stats.screening import screen_respondents

    rows = []
    for name, kwargs in DESIGNS:
        for shift in shifts:
            carrying, against, used = [], [], 0
            for seed in seeds:
                survey = make_survey(seed=seed, careless_share=0.0, item_shift=shift, **kwargs)
                result = screen_respondents(survey.raw, survey.keyed_by_scale, ids=survey.ids)
                carrying.append(np.mean([len(codes) > 0 for codes in result.flags]))
                against.append(np.mean([FLAG_AGAINST_SAMPLE in codes for codes in result.flags]))
                used += next(u.used for u in result.weak_indices if u.index == FLAG_AGAINST_SAMPLE)
            rows.append({"design": name, "shift": shift, "any_mean": float(np.mean(carrying)),
                         "any_worst": float(np.max(carrying)), "against_mean": float(np.mean(against)),
                         "used": used, "seeds": len(seeds)})
    return rows


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="5 seeds per design instead of 30")
    args = parser.parse_args(argv)
    seeds = range(1000, 1005) if args.quick else range(1000, 1030)
    rows = study(seeds)
    rows.append(demo_study(seeds, with_durations=True))
    rows.append(demo_study(seeds, with_durations=False))
    print("| design | seeds | recall | straight-liners | random clickers | false positives | worst recall | worst false positives |")
    print("| --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: |")
    for r in rows:
        print(f"| {r['design']} | {r['seeds']} | {r['recall']:.1%} | {r['recall_straight']:.1%} | "
              f"{r['recall_random']:.1%} | {r['false_positive']:.1%} | {r['worst_recall']:.1%} | "
              f"{r['worst_false_positive']:.1%} |")
    print()
    print("| design | item-mean shift | against-sample used (of seeds) | attentive with any flag | worst seed | "
          "attentive with against-sample |")
    print("| --- | ---: | ---: | ---: | ---: | ---: |")
    for r in attentive_study(seeds):
        print(f"| {r['design']} | {r['shift']:g} | {r['used']} of {r['seeds']} | {r['any_mean']:.1%} | "
              f"{r['any_worst']:.1%} | {r['against_mean']:.1%} |")
    return 0


if __name__ == "__main__":
    sys.exit(main())

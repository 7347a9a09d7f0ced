"""A fictional staff climate survey, generated from a latent-variable model whose truth is known.

The scenario is invented for this project: *Kestrel Bay Health*, a fictional network of four hospital and
community sites, asks its staff about workload strain, team support, recognition and their intent to stay.
Nothing here describes real people or a real organisation, and the item wording is our own.

The generator is pure: :func:`generate_staff_climate` returns a data frame (as a survey export would look,
mess included) and a :class:`DemoTruth` with the values the data were built from. It writes nothing.
The model and its known reliability are in :mod:`scalewright.demo_model`; the survey mess (careless and
partial respondents, blanks, "no answer" codes, answer texts) in :mod:`scalewright.demo_mess`.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from .demo_mess import AGREE_LABELS, LIKELY_LABELS, MISSING_CODES, TEXT_COLUMNS, add_mess, answers_as_text
from .demo_model import (
    AGE_GROUPS,
    GROUP_EFFECTS,
    ITEMS,
    LATENT_CORRELATION,
    POPULATION_SEED,
    POPULATION_SIZE,
    SCALE_NAMES,
    SCALES,
    SHIFTS,
    SITES,
    TENURES,
    ScaleModel,
    _simulate,
    population_values,
)
from .errors import UsageError
from .results import to_jsonable
from .seeds import DEFAULT_SEED  # the one default seed of the tool

__all__ = [
    "AGREE_LABELS", "DATA_FILE_NAME", "DEFAULT_N", "DEFAULT_SEED", "ITEMS", "LIKELY_LABELS", "MISSING_CODES",
    "SCALES", "SCALE_FILE_NAME", "SCALE_NAMES", "TEXT_COLUMNS", "DemoTruth", "ScaleModel",
    "generate_staff_climate", "population_values", "scale_file_text",
]

#: file name of the scale file shipped in ``scalewright/resources`` (and copied to ``scales/``)
SCALE_FILE_NAME = "staff-climate.yaml"
#: file name of the data file ``scalewright demo`` writes
DATA_FILE_NAME = "staff-climate.csv"
DEFAULT_N = 600


@dataclass(frozen=True)
class DemoTruth:
    """What the demo data were built from (see :mod:`scalewright.demo_model` for the model and the methods).

    ``loadings`` and ``thresholds`` are per item as worded (reverse-worded items load negatively);
    ``true_scores`` holds ``staff_id`` and the latent trait of each scale, one row per respondent in data
    order; ``careless`` / ``careless_kind`` ("straight-line", "random" or "") and ``partial`` flag rows
    of the data in the same order.
    """

    seed: int
    n: int
    scales: dict[str, tuple[str, ...]]
    reverse: dict[str, tuple[str, ...]]
    loadings: dict[str, float]
    thresholds: dict[str, tuple[float, ...]]
    latent_correlation: pd.DataFrame
    group_effects: dict[str, dict[str, dict[str, float]]]
    true_scores: pd.DataFrame
    careless: np.ndarray
    careless_kind: np.ndarray
    partial: np.ndarray
    population_size: int = POPULATION_SIZE
    population_seed: int = POPULATION_SEED

    # the population values describe the model, not the sample: computed on first use (about 1.5 s), cached

    @property
    def population_reliability(self) -> dict[str, float]:
        return dict(population_values(self.population_size, self.population_seed)[0])

    @property
    def population_alpha(self) -> dict[str, float]:
        return dict(population_values(self.population_size, self.population_seed)[1])

    @property
    def omega_continuous(self) -> dict[str, float]:
        return dict(population_values(self.population_size, self.population_seed)[2])

    def to_dict(self) -> dict[str, Any]:
        return {
            "seed": self.seed, "n": self.n, "scales": to_jsonable(self.scales),
            "reverse": to_jsonable(self.reverse), "loadings": to_jsonable(self.loadings),
            "thresholds": to_jsonable(self.thresholds),
            "latent_correlation": {r: to_jsonable(self.latent_correlation.loc[r].to_dict())
                                   for r in self.latent_correlation.index},
            "group_effects": to_jsonable(self.group_effects),
            "careless_ids": to_jsonable(self.true_scores["staff_id"][self.careless].tolist()),
            "partial_ids": to_jsonable(self.true_scores["staff_id"][self.partial].tolist()),
            "population_reliability": to_jsonable(self.population_reliability),
            "population_alpha": to_jsonable(self.population_alpha),
            "omega_continuous": to_jsonable(self.omega_continuous),
            "population_size": self.population_size, "population_seed": self.population_seed,
        }


def _check_arguments(seed: Any, n: Any) -> None:
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0:
        raise UsageError(f"demo seed must be a whole number >= 0, not {seed!r}")
    if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or not 40 <= n <= 1_000_000:
        raise UsageError(f"demo size n must be a whole number from 40 to 1000000, not {n!r}")


def generate_staff_climate(seed: int = DEFAULT_SEED, n: int = DEFAULT_N) -> tuple[pd.DataFrame, DemoTruth]:
    """The fictional staff climate survey of Kestrel Bay Health: ``n`` respondents, seeded.

    Returns the data as a survey export would give them (``staff_id``, ``site``, ``shift``, ``age_group``,
    ``tenure``, ``duration_s`` and the items ``wl1`` ... ``it3``; codes, answer texts, blanks and the
    "no answer" codes 9 and 99 mixed as described in the module docstring) and the :class:`DemoTruth`.
    The same seed gives the same data; nothing is written or printed.
    """
    _check_arguments(seed, n)
    rng = np.random.default_rng(seed)
    groups, eta, answers = _simulate(rng, n)
    mess = add_mess(rng, answers)

    ids = _staff_ids(rng, n)
    frame = pd.DataFrame({
        "staff_id": ids,
        "site": np.asarray(SITES, dtype=object)[groups["site"]],
        "shift": np.asarray(SHIFTS, dtype=object)[groups["shift"]],
        "age_group": np.asarray(AGE_GROUPS, dtype=object)[groups["age_group"]],
        "tenure": np.asarray(TENURES, dtype=object)[groups["tenure"]],
        "duration_s": np.round(mess.seconds).astype(np.int64),
    })
    for j, item in enumerate(ITEMS):
        frame[item] = pd.array(mess.answers[:, j], dtype="Int64")
    answers_as_text(rng, frame, mess.answers)

    truth = DemoTruth(
        seed=int(seed), n=int(n),
        scales={s.name: s.items for s in SCALES},
        reverse={s.name: s.reverse for s in SCALES},
        loadings={i: l for s in SCALES for i, l in zip(s.items, s.loadings, strict=True)},
        thresholds={i: t for s in SCALES for i, t in zip(s.items, s.thresholds, strict=True)},
        latent_correlation=pd.DataFrame(LATENT_CORRELATION, index=list(SCALE_NAMES), columns=list(SCALE_NAMES)),
        group_effects=GROUP_EFFECTS,
        true_scores=pd.DataFrame({"staff_id": ids, **{name: eta[:, i] for i, name in enumerate(SCALE_NAMES)}}),
        careless=mess.careless_kind != "", careless_kind=mess.careless_kind, partial=mess.partial,
    )
    return frame, truth


def _staff_ids(rng: np.random.Generator, n: int) -> np.ndarray:
    """``n`` distinct ids ``KB`` + digits: five digits while they suffice (so a seed keeps its ids), more above."""
    digits = 5
    while 9 * 10 ** (digits - 1) < n:
        digits += 1
    low = 10 ** (digits - 1)
    numbers = rng.choice(9 * low, size=n, replace=False) + low
    return np.char.add("KB", numbers.astype(str)).astype(object)


def scale_file_text() -> str:
    """The demo's scale file, as shipped in the package (``scalewright/resources/staff-climate.yaml``)."""
    from importlib.resources import files

    return (files("scalewright") / "resources" / SCALE_FILE_NAME).read_text(encoding="utf-8")

"""A fictional staff climate survey, generated from a latent-variable model whose truth is known.

The scenario is invented for this project: *Kestrel Bay Health*, a fictional network of four hospital and
community sites, asks its staff about workload strain, team support, recognition and their intent to stay.
Nothing here describes real people or a real organisation, and the item wording is our own.

The generator is pure: :func:`generate_staff_climate` returns a data frame (as a survey export would look,
mess included) and a :class:`DemoTruth` with the values the data were built from. It writes nothing.

Model
-----
Four correlated latent traits ``eta`` (workload, support, recognition, intent), one per scale:
``eta = mu(shift, site, tenure) + z``, with ``z ~ N(0, Phi)`` and ``Phi`` the *within-group* latent
correlation matrix :data:`LATENT_CORRELATION`; ``mu`` adds the group effects of :data:`GROUP_EFFECTS`
(workload strain is higher on night and rotating shifts, intent to stay lower there, and so on).
Each item is congeneric: a continuous response ``y* = lambda eta + sqrt(1 - lambda^2) e`` with
``e ~ N(0, 1)`` (``lambda`` is negative for the reverse-worded items), cut at its thresholds ``tau``
into the answer ``min + #{k : y* > tau_k}``.

Then the survey mess: about 5% careless respondents (half straight-liners, half random clickers),
about 3% who stopped part-way, scattered blanks, "no answer" codes 9 and 99, and answer texts instead of
codes in some columns (in varying case and with stray spaces).

Known reliability
-----------------
Three population values are given per scale, for the composite (mean) of its *keyed* discrete items
computed on respondents who answered every item (the model without careless responding):

``population_reliability``
    Classical reliability ``rho = corr(X, T)^2 = var(T) / var(X)`` of the composite ``X``, where
    ``T = E[X | eta]`` is its true score. ``T`` is exact: ``E[x_j | eta] = min + sum_k
    Phi((lambda_j eta - tau_jk) / psi_j)`` with ``psi_j = sqrt(1 - lambda_j^2)``. The correlation is taken on a
    large sample from the same model (:data:`POPULATION_SIZE` = 200,000 rows, seed :data:`POPULATION_SEED`);
    its Monte-Carlo error is about 0.001.
``population_alpha``
    Cronbach's (1951) alpha of the population covariance matrix of the keyed discrete items, from the same
    large sample: what a sample alpha estimates. Alpha is at most ``rho`` for congeneric items.
``omega_continuous``
    McDonald's (1999) omega, ``(sum lambda)^2 v / ((sum lambda)^2 v + sum psi_j^2)``, of the *continuous*
    responses ``y*``, with ``v = 1 + var(mu)`` the latent variance including the group effects (exact,
    from the group probabilities). Discretising loses information, so this is an upper reference.

References
----------
.. [1] Cronbach, L. J. (1951). Coefficient alpha and the internal structure of tests. Psychometrika 16, 297-334.
.. [2] McDonald, R. P. (1999). Test Theory: A Unified Treatment. Mahwah, NJ: Erlbaum.
.. [3] Meade, A. W., & Craig, S. B. (2012). Identifying careless responses in survey data.
       Psychological Methods 17, 437-455.
"""
from __future__ import annotations

import functools
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from .errors import UsageError
from .results import to_jsonable
from .seeds import DEFAULT_SEED  # the one default seed of the tool

#: file name of the scale file shipped in ``scalewright/resources`` (and copied to ``scales/``)
SCALE_FILE_NAME = "staff-climate.yaml"
#: file name of the data file ``scalewright demo`` writes
DATA_FILE_NAME = "staff-climate.csv"
DEFAULT_N = 600
POPULATION_SIZE = 200_000
POPULATION_SEED = 20_260_611

AGREE_LABELS = {1: "Strongly disagree", 2: "Disagree", 3: "Neither agree nor disagree", 4: "Agree",
                5: "Strongly agree"}
LIKELY_LABELS = {1: "Extremely unlikely", 2: "Very unlikely", 3: "Somewhat unlikely",
                 4: "Neither likely nor unlikely", 5: "Somewhat likely", 6: "Very likely", 7: "Extremely likely"}
MISSING_CODES = (9, 99)

SHIFTS = ("day", "night", "rotating")
SHIFT_P = (0.50, 0.25, 0.25)
SITES = ("Kestrel Bay General", "Millbrook Community", "Saltmere Clinic", "Ashcombe Rehabilitation")
SITE_P = (0.40, 0.25, 0.20, 0.15)
AGE_GROUPS = ("18-29", "30-39", "40-49", "50-59", "60+")
AGE_P = (0.18, 0.27, 0.25, 0.20, 0.10)
TENURES = ("under 1 year", "1-4 years", "5-9 years", "10+ years")
#: tenure band given the age group (rows follow AGE_GROUPS)
TENURE_GIVEN_AGE = ((0.35, 0.50, 0.13, 0.02),
                    (0.20, 0.40, 0.28, 0.12),
                    (0.12, 0.30, 0.28, 0.30),
                    (0.08, 0.22, 0.25, 0.45),
                    (0.05, 0.15, 0.25, 0.55))


@dataclass(frozen=True)
class ScaleModel:
    """One scale of the model: items, their signed loadings and thresholds, and the answer range."""

    name: str
    title: str
    items: tuple[str, ...]
    loadings: tuple[float, ...]          # signed, on the item as worded: negative for reverse-worded items
    thresholds: tuple[tuple[float, ...], ...]
    low: int
    high: int

    @property
    def reverse(self) -> tuple[str, ...]:
        return tuple(item for item, loading in zip(self.items, self.loadings, strict=True) if loading < 0)


def _cuts(base: tuple[float, ...], offsets: tuple[float, ...]) -> tuple[tuple[float, ...], ...]:
    return tuple(tuple(round(t + o, 3) for t in base) for o in offsets)


_FIVE = (-1.9, -0.9, 0.0, 1.0)
_SEVEN = (-1.8, -1.1, -0.5, 0.0, 0.6, 1.3)

SCALES: tuple[ScaleModel, ...] = (
    ScaleModel("workload", "Workload strain", ("wl1", "wl2", "wl3", "wl4", "wl5", "wl6"),
               (0.75, 0.70, -0.60, 0.72, 0.65, -0.55),
               _cuts(_FIVE, (-0.2, 0.1, 0.0, -0.3, 0.2, 0.1)), 1, 5),
    ScaleModel("support", "Team support", ("ts1", "ts2", "ts3", "ts4", "ts5"),
               (0.80, 0.75, 0.78, 0.70, 0.65),
               _cuts(_FIVE, (-0.4, -0.3, -0.2, -0.1, -0.5)), 1, 5),
    ScaleModel("recognition", "Recognition", ("rc1", "rc2", "rc3", "rc4"),
               (0.78, 0.82, 0.70, 0.60),
               _cuts(_FIVE, (0.2, 0.3, 0.0, 0.1)), 1, 5),
    ScaleModel("intent", "Intent to stay", ("it1", "it2", "it3"),
               (0.85, 0.80, 0.75),
               _cuts(_SEVEN, (0.0, 0.2, 0.3)), 1, 7),
)
SCALE_NAMES = tuple(s.name for s in SCALES)
ITEMS = tuple(item for s in SCALES for item in s.items)

#: within-group correlation of the latent traits, in the order of SCALE_NAMES
LATENT_CORRELATION = np.array([
    [1.00, -0.30, -0.35, -0.40],
    [-0.30, 1.00, 0.50, 0.45],
    [-0.35, 0.50, 1.00, 0.50],
    [-0.40, 0.45, 0.50, 1.00],
])

#: additive effects on the latent means: column -> level -> {scale: shift in latent SD units}
GROUP_EFFECTS: dict[str, dict[str, dict[str, float]]] = {
    "shift": {"night": {"workload": 0.60, "intent": -0.20},
              "rotating": {"workload": 0.35, "intent": -0.10}},
    "site": {"Millbrook Community": {"support": -0.30},
             "Saltmere Clinic": {"recognition": 0.25}},
    "tenure": {"under 1 year": {"intent": -0.20},
               "10+ years": {"intent": 0.30}},
}

#: columns that arrive as answer texts: item -> (group column, level) or None for the whole column
TEXT_COLUMNS: dict[str, tuple[str, str] | None] = {
    "rc2": None,
    **{item: ("site", "Millbrook Community") for item in ("ts1", "ts2", "ts3", "ts4", "ts5")},
    "it2": ("shift", "night"),
}

CARELESS_SHARE = 0.05
PARTIAL_SHARE = 0.03
BLANK_SHARE = 0.006
CODE_9_SHARE = 0.006
CODE_99_SHARE = 0.002


@dataclass(frozen=True)
class DemoTruth:
    """What the demo data were built from (see the module docstring for the model and the methods).

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


# --------------------------------------------------------------------------------------------- model


def _draw_category(rng: np.random.Generator, probs: np.ndarray) -> np.ndarray:
    """One category index per row of ``probs`` (n x c, rows summing to 1), vectorised."""
    cumulative = np.cumsum(probs, axis=1)
    cumulative[:, -1] = 1.0
    return (rng.random((probs.shape[0], 1)) > cumulative).sum(axis=1)


def _effect_table(column: str, levels: tuple[str, ...]) -> np.ndarray:
    """levels x scales matrix of latent mean shifts of one group column."""
    table = np.zeros((len(levels), len(SCALES)))
    for level, effects in GROUP_EFFECTS.get(column, {}).items():
        for scale, shift in effects.items():
            table[levels.index(level), SCALE_NAMES.index(scale)] = shift
    return table


def _simulate(rng: np.random.Generator, n: int) -> tuple[dict[str, np.ndarray], np.ndarray, np.ndarray]:
    """Groups (level indices), latent traits (n x 4) and clean discrete answers (n x items) of the model."""
    shift = rng.choice(len(SHIFTS), size=n, p=SHIFT_P)
    site = rng.choice(len(SITES), size=n, p=SITE_P)
    age = rng.choice(len(AGE_GROUPS), size=n, p=AGE_P)
    tenure = _draw_category(rng, np.asarray(TENURE_GIVEN_AGE)[age])
    mu = (_effect_table("shift", SHIFTS)[shift] + _effect_table("site", SITES)[site]
          + _effect_table("tenure", TENURES)[tenure])
    eta = mu + rng.standard_normal((n, len(SCALES))) @ np.linalg.cholesky(LATENT_CORRELATION).T
    columns = []
    for index, scale in enumerate(SCALES):
        loadings = np.asarray(scale.loadings)
        ystar = eta[:, [index]] * loadings + rng.standard_normal((n, len(loadings))) * np.sqrt(1 - loadings**2)
        cuts = np.asarray(scale.thresholds)  # items x thresholds
        columns.append(scale.low + (ystar[:, :, None] > cuts[None, :, :]).sum(axis=2))
    answers = np.concatenate(columns, axis=1).astype(np.float64)
    return {"shift": shift, "site": site, "age_group": age, "tenure": tenure}, eta, answers


def _keyed_composites(answers: np.ndarray) -> np.ndarray:
    """n x scales means of the keyed items (complete answers)."""
    out, start = [], 0
    for scale in SCALES:
        block = answers[:, start:start + len(scale.items)].copy()
        reverse = np.asarray(scale.loadings) < 0
        block[:, reverse] = scale.low + scale.high - block[:, reverse]
        out.append(block.mean(axis=1))
        start += len(scale.items)
    return np.column_stack(out)


def _true_composites(eta: np.ndarray) -> np.ndarray:
    """Exact true scores ``E[X | eta]`` of the keyed composites (normal-ogive expectation per item)."""
    from scipy.special import ndtr

    out = []
    for index, scale in enumerate(SCALES):
        loadings = np.asarray(scale.loadings)
        cuts = np.asarray(scale.thresholds)
        psi = np.sqrt(1 - loadings**2)
        z = (eta[:, index, None, None] * loadings[None, :, None] - cuts[None, :, :]) / psi[None, :, None]
        expected = scale.low + ndtr(z).sum(axis=2)  # n x items
        reverse = loadings < 0
        expected[:, reverse] = scale.low + scale.high - expected[:, reverse]
        out.append(expected.mean(axis=1))
    return np.column_stack(out)


def _alpha(block: np.ndarray) -> float:
    """Cronbach (1951): k/(k-1) (1 - sum s_j^2 / s_X^2), from the covariance matrix."""
    cov = np.cov(block, rowvar=False)
    k = cov.shape[0]
    return float(k / (k - 1) * (1 - np.trace(cov) / cov.sum()))


def _latent_variance() -> np.ndarray:
    """Exact variance of each latent trait across the whole population: 1 + var(mu), mu additive."""
    tenure_p = np.asarray(AGE_P) @ np.asarray(TENURE_GIVEN_AGE)
    total = np.ones(len(SCALES))
    for column, levels, probs in (("shift", SHIFTS, np.asarray(SHIFT_P)), ("site", SITES, np.asarray(SITE_P)),
                                  ("tenure", TENURES, tenure_p)):
        table = _effect_table(column, levels)
        mean = probs @ table
        total += probs @ (table - mean) ** 2
    return total


@functools.lru_cache(maxsize=2)
def population_values(size: int = POPULATION_SIZE, seed: int = POPULATION_SEED
                      ) -> tuple[dict[str, float], dict[str, float], dict[str, float]]:
    """(reliability, alpha, continuous omega) per scale of the model; see the module docstring.

    The same for every demo seed: they describe the model, not one sample of it.
    """
    rng = np.random.default_rng(seed)
    _, eta, answers = _simulate(rng, size)
    observed = _keyed_composites(answers)
    true = _true_composites(eta)
    reliability, alpha, omega = {}, {}, {}
    variance = _latent_variance()
    start = 0
    for index, scale in enumerate(SCALES):
        k = len(scale.items)
        block = answers[:, start:start + k].copy()
        reverse = np.asarray(scale.loadings) < 0
        block[:, reverse] = scale.low + scale.high - block[:, reverse]
        start += k
        reliability[scale.name] = float(np.corrcoef(observed[:, index], true[:, index])[0, 1] ** 2)
        alpha[scale.name] = _alpha(block)
        loadings = np.abs(np.asarray(scale.loadings))
        common = loadings.sum() ** 2 * variance[index]
        omega[scale.name] = float(common / (common + (1 - loadings**2).sum()))
    return reliability, alpha, omega


# ---------------------------------------------------------------------------------------------- mess


def _as_text(rng: np.random.Generator, codes: np.ndarray, labels: dict[int, str]) -> np.ndarray:
    """Answer texts for integer codes, in the varying spellings a survey export produces."""
    low = min(labels)
    table = np.array([labels[c] for c in sorted(labels)], dtype=object)
    text = pd.Series(table[codes.astype(int) - low], dtype=object)
    style = rng.choice(5, size=len(codes), p=(0.65, 0.12, 0.06, 0.10, 0.07))
    lower = text.str.lower()
    text = text.where(style != 1, lower)
    text = text.where(style != 2, text.str.upper())
    text = text.where(style != 3, " " + lower + " ")
    text = text.where(style != 4, text + "  ")
    text = text.to_numpy(dtype=object)
    return text


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
    p = answers.shape[1]
    lows = np.concatenate([[s.low] * len(s.items) for s in SCALES])
    highs = np.concatenate([[s.high] * len(s.items) for s in SCALES])

    # careless respondents: half straight-line one code, half click at random within each item's range
    n_careless = max(2, int(round(CARELESS_SHARE * n)))
    careless_rows = rng.choice(n, size=n_careless, replace=False)
    straight, random_rows = careless_rows[: n_careless // 2], careless_rows[n_careless // 2:]
    answers[straight] = rng.integers(1, 6, size=(len(straight), 1))
    answers[random_rows] = rng.integers(lows, highs + 1, size=(len(random_rows), p))
    kind = np.full(n, "", dtype=object)
    kind[straight] = "straight-line"
    kind[random_rows] = "random"

    # respondents who stopped part-way (items are asked in file order)
    n_partial = max(1, int(round(PARTIAL_SHARE * n)))
    partial_rows = rng.choice(np.setdiff1d(np.arange(n), careless_rows), size=n_partial, replace=False)
    stop = rng.integers(3, p - 1, size=n_partial)
    answers[partial_rows[:, None], np.arange(p)[None, :]] = np.where(
        np.arange(p)[None, :] >= stop[:, None], np.nan, answers[partial_rows])
    partial = np.zeros(n, dtype=bool)
    partial[partial_rows] = True

    # scattered blanks and "no answer" codes
    draw = rng.random((n, p))
    answered = ~np.isnan(answers)
    answers[answered & (draw < BLANK_SHARE)] = np.nan
    answers[answered & (draw >= BLANK_SHARE) & (draw < BLANK_SHARE + CODE_9_SHARE)] = 9
    answers[answered & (draw >= BLANK_SHARE + CODE_9_SHARE)
            & (draw < BLANK_SHARE + CODE_9_SHARE + CODE_99_SHARE)] = 99

    # response duration: careless respondents are fast, partial ones stopped early
    seconds = rng.lognormal(np.log(470), 0.35, size=n)
    seconds[straight] = rng.lognormal(np.log(150), 0.30, size=len(straight))
    seconds[random_rows] = rng.lognormal(np.log(135), 0.30, size=len(random_rows))
    seconds[partial_rows] *= (stop + 1) / p

    ids = _staff_ids(rng, n)
    frame = pd.DataFrame({
        "staff_id": ids,
        "site": np.asarray(SITES, dtype=object)[groups["site"]],
        "shift": np.asarray(SHIFTS, dtype=object)[groups["shift"]],
        "age_group": np.asarray(AGE_GROUPS, dtype=object)[groups["age_group"]],
        "tenure": np.asarray(TENURES, dtype=object)[groups["tenure"]],
        "duration_s": np.round(seconds).astype(np.int64),
    })
    for j, item in enumerate(ITEMS):
        frame[item] = pd.array(answers[:, j], dtype="Int64")
    for item, where in TEXT_COLUMNS.items():
        j = ITEMS.index(item)
        labels = LIKELY_LABELS if highs[j] == 7 else AGREE_LABELS
        rows = np.ones(n, dtype=bool) if where is None else (frame[where[0]].to_numpy() == where[1])
        rows &= (answers[:, j] >= lows[j]) & (answers[:, j] <= highs[j])
        column = frame[item].astype(object).where(frame[item].notna(), None)
        column[rows] = _as_text(rng, answers[rows, j], labels)
        frame[item] = column

    truth = DemoTruth(
        seed=int(seed), n=int(n),
        scales={s.name: s.items for s in SCALES},
        reverse={s.name: s.reverse for s in SCALES},
        loadings={i: l for s in SCALES for i, l in zip(s.items, s.loadings, strict=True)},
        thresholds={i: t for s in SCALES for i, t in zip(s.items, s.thresholds, strict=True)},
        latent_correlation=pd.DataFrame(LATENT_CORRELATION, index=list(SCALE_NAMES), columns=list(SCALE_NAMES)),
        group_effects=GROUP_EFFECTS,
        true_scores=pd.DataFrame({"staff_id": ids, **{name: eta[:, i] for i, name in enumerate(SCALE_NAMES)}}),
        careless=kind != "", careless_kind=kind, partial=partial,
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

"""The latent-variable model behind the fictional staff climate survey, and its known reliability.

Model
-----
Four correlated latent traits ``eta`` (workload, support, recognition, intent), one per scale:
``eta = mu(shift, site, tenure) + z``, with ``z ~ N(0, Phi)`` and ``Phi`` the *within-group* latent
correlation matrix :data:`LATENT_CORRELATION`; ``mu`` adds the group effects of :data:`GROUP_EFFECTS`
(workload strain is higher on night and rotating shifts, intent to stay lower there, and so on).
Each item is congeneric: a continuous response ``y* = lambda eta + sqrt(1 - lambda^2) e`` with
``e ~ N(0, 1)`` (``lambda`` is negative for the reverse-worded items), cut at its thresholds ``tau``
into the answer ``min + #{k : y* > tau_k}``.

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
"""
from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

POPULATION_SIZE = 200_000
POPULATION_SEED = 20_260_611

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

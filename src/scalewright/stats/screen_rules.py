"""The rules of the careless-responding screen: its flag codes, its cut-offs and when a weak index may count.

The flag codes are our own: strong ones flag a respondent alone; weak ones only together (``somewhat-far``
with ``uneven-halves`` or ``against-sample``). :mod:`.screening` applies the rules.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from ..notes import Note, not_computable, note
from ..results import ResultMixin

# ---------------------------------------------------------------------------------------------------------------
# flag codes (our own); strong ones flag a respondent alone; weak ones only together: somewhat-far with
# uneven-halves or against-sample

FLAG_LONG_RUN = "long-run"
FLAG_FAR_FROM_SAMPLE = "far-from-sample"
FLAG_FAST = "fast"
FLAG_MANY_MISSING = "many-missing"
FLAG_DUPLICATE_ANSWERS = "duplicate-answers"
FLAG_DUPLICATE_ID = "duplicate-id"
FLAG_UNEVEN_HALVES = "uneven-halves"
FLAG_AGAINST_SAMPLE = "against-sample"
FLAG_SOMEWHAT_FAR = "somewhat-far"

STRONG_FLAGS = (FLAG_LONG_RUN, FLAG_FAR_FROM_SAMPLE, FLAG_FAST, FLAG_DUPLICATE_ANSWERS, FLAG_DUPLICATE_ID)
WEAK_FLAGS = (FLAG_SOMEWHAT_FAR, FLAG_UNEVEN_HALVES, FLAG_AGAINST_SAMPLE)
#: listed for the record but not marking a respondent: an unfinished questionnaire is not careless answering
#: (scoring's ``min_answered`` already deals with it)
INFO_FLAGS = (FLAG_MANY_MISSING,)
FLAG_ORDER = STRONG_FLAGS + WEAK_FLAGS + INFO_FLAGS


#: a weak index is used only when at most this share of attentive respondents is expected below its cut-off
#: (our own rule, chosen on generated data: docs/screening.md)
WEAK_INDEX_MAX_EXPECTED_BELOW = 0.10


@dataclass(frozen=True)
class WeakIndexUse(ResultMixin):
    """Whether a weak index can tell careless from attentive answering in this sample, and why.

    ``typical`` is the value an attentive respondent is expected to have, in the index's own units (even-odd
    consistency after the Spearman-Brown step, as its cut-off); ``points`` the number of values
    each respondent's correlation rests on; ``expected_below`` the share of attentive respondents expected
    below ``cutoff`` by Fisher's z (SE 1/sqrt(points - 3)). The index raises its flag only when ``used``.
    """

    index: str
    used: bool
    typical: float
    points: int
    cutoff: float
    expected_below: float

    def to_dict(self) -> dict[str, Any]:
        """The JSON form: the expected share in percent (``expected_below_pct``), and why a value is null."""
        out = super().to_dict()
        below = out.pop("expected_below")
        out["expected_below_pct"] = None if below is None else 100 * below
        reasons = {"typical": "not-finite",
                   "expected_below_pct": "fewer-than-4-points" if self.points < 4 else "not-finite"}
        out["notes"] = [not_computable(key, reason, points=self.points).to_dict()
                        for key, reason in reasons.items() if out[key] is None]
        return out


def expected_share_below(typical: float, cutoff: float, points: int) -> float:
    r"""Share of correlations below ``cutoff`` when the true value is ``typical`` and each rests on ``points``.

    .. math:: P = \Phi\left((\operatorname{artanh} c - \operatorname{artanh} \rho) \sqrt{m - 3}\right)

    NaN when ``points`` < 4 or ``typical`` is not a correlation.

    References
    ----------
    .. [1] Fisher, R. A. (1921). On the "probable error" of a coefficient of correlation deduced from a small
       sample. Metron, 1, 3-32.
    """
    from scipy.special import ndtr

    if points < 4 or not (math.isfinite(typical) and -1 < typical < 1) or not -1 < cutoff < 1:
        return 1.0 if points >= 4 and math.isfinite(typical) and typical <= -1 else math.nan
    return float(ndtr((math.atanh(cutoff) - math.atanh(typical)) * math.sqrt(points - 3)))


@dataclass(frozen=True)
class ScreenThresholds(ResultMixin):
    """When an index raises a flag. Defaults and their sources are listed in docs/screening.md.

    Strong flags mark a respondent alone; the weak ones mark a respondent only together: ``somewhat-far``
    (Mahalanobis p below ``mahalanobis_p_weak``) with ``uneven-halves`` or ``against-sample``.
    """

    long_run_share: float = 0.6        # longest identical run covers at least this share of the items
    long_run_min_items: int = 10       # long runs flag only on questionnaires of at least this many items
    mahalanobis_p: float = 0.001       # strong: chi-square p of D2 below this
    mahalanobis_p_weak: float = 0.05   # weak: chi-square p of D2 below this
    person_total_min: float = 0.15     # weak: person-total r below this
    even_odd_min: float = 0.3          # weak: even-odd consistency below this
    missing_share_max: float = 0.5     # listed only: more than this share of items unanswered
    speed_share: float = 1 / 3         # strong: faster than this share of the median duration
    duplicate_min_items: int = 10      # identical rows flag only with at least this many answered items

    def __post_init__(self) -> None:
        from ..errors import UsageError

        for name in ("long_run_share", "mahalanobis_p", "mahalanobis_p_weak", "missing_share_max", "speed_share"):
            value = getattr(self, name)
            if not (isinstance(value, (int, float)) and 0 < value < 1 or (name == "long_run_share" and value == 1)):
                raise UsageError(f"screen threshold {name} must lie between 0 and 1, got {value!r}")
        for name in ("person_total_min", "even_odd_min"):
            value = getattr(self, name)
            if not (isinstance(value, (int, float)) and -1 <= value <= 1):
                raise UsageError(f"screen threshold {name} must lie between -1 and 1, got {value!r}")
        if self.mahalanobis_p_weak < self.mahalanobis_p:
            raise UsageError(f"screen threshold mahalanobis_p_weak ({self.mahalanobis_p_weak!r}) must not be below "
                             f"mahalanobis_p ({self.mahalanobis_p!r})")
        for name in ("duplicate_min_items", "long_run_min_items"):
            value = getattr(self, name)
            if int(value) != value or value < 1:
                raise UsageError(f"screen threshold {name} must be a whole number >= 1, got {value!r}")

    def to_dict(self) -> dict[str, Any]:
        """The JSON form: shares in percent with ``_pct`` in the key, p-value cut-offs as ``pvalue``."""
        return {"long_run_pct": 100 * self.long_run_share, "mahalanobis_pvalue": self.mahalanobis_p,
                "mahalanobis_pvalue_weak": self.mahalanobis_p_weak, "person_total_min": self.person_total_min,
                "even_odd_min": self.even_odd_min, "missing_pct_max": 100 * self.missing_share_max,
                "speed_pct": 100 * self.speed_share, "duplicate_min_items": self.duplicate_min_items,
                "long_run_min_items": self.long_run_min_items}

    def long_run_items(self, n_items: int) -> int:
        """The run length that raises ``long-run`` on a questionnaire of ``n_items`` items (at least 2)."""
        return max(2, math.ceil(self.long_run_share * n_items - 1e-9))

    def checks_long_runs(self, n_items: int) -> bool:
        """Whether ``long-run`` is judged on a questionnaire of ``n_items`` items. On a short one, attentive
        respondents give long runs by chance: on generated one-factor data (5-point answers, loadings
        .6 to .85, every item keyed one way) 23 - 41% of them reach 60% of 5 items, 2 - 12% of 10
        (tests/benchmarks/long_run_chance.py)."""
        return n_items >= self.long_run_min_items

    def run_limit(self, n_items: int) -> int:
        """The run length that raises ``long-run``, or ``n_items + 1`` (no row has such a run) when the
        questionnaire is too short for the flag (:meth:`checks_long_runs`)."""
        return self.long_run_items(n_items) if self.checks_long_runs(n_items) else n_items + 1

    def too_short_for(self, n_items: int) -> list[tuple[str, Note]]:
        """The flags a questionnaire of ``n_items`` items is too short to judge, each with the note saying
        why (the same on every route of the screen)."""
        out = []
        if not self.checks_long_runs(n_items):
            out.append((FLAG_LONG_RUN, note("long-run-not-checked", flag=FLAG_LONG_RUN, items=n_items,
                                            min_items=self.long_run_min_items)))
        if n_items < self.duplicate_min_items:
            out.append((FLAG_DUPLICATE_ANSWERS, note("duplicates-not-checked", flag=FLAG_DUPLICATE_ANSWERS,
                                                     items=n_items, min_items=self.duplicate_min_items)))
        return out


#: the default cut-offs, one shared instance (a frozen dataclass, so safe as a default argument)
DEFAULT_SCREEN_THRESHOLDS = ScreenThresholds()

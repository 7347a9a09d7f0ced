"""Scoring: reverse-key items and build one composite score per scale per respondent."""
from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Protocol

import numpy as np
import pandas as pd

from .errors import UsageError
from .files import neutralise_formula, write_atomic_with
from .results import ResultMixin
from .spec_model import Scale, ScaleSpec

STANDARDIZE = ("pomp", "z")


def reverse_key(values: np.ndarray, low: float, high: float) -> np.ndarray:
    """Reverse-key answers on the range ``low..high``: ``low + high - x`` (missing stays missing)."""
    return low + high - np.asarray(values, dtype=np.float64)


class RowsToScore(Protocol):
    """What scoring reads of the responses: :class:`~scalewright.responses.Responses`, or one block of a
    file read in blocks (``engine/score_stream.py``)."""

    @property
    def ids(self) -> pd.Series: ...

    @property
    def n(self) -> int: ...

    def matrix(self, names: Sequence[str]) -> np.ndarray: ...


def keyed_items(responses: RowsToScore, scale: Scale) -> np.ndarray:
    """The scale's items as an n x k float64 matrix, reverse-worded items keyed, NaN where missing."""
    keyed = responses.matrix(scale.items)  # fancy indexing already made a copy
    for position, item in enumerate(scale.items):
        if scale.is_reversed(item):
            keyed[:, position] = reverse_key(keyed[:, position], scale.response.min, scale.response.max)
    return keyed


def composite(keyed: np.ndarray, *, method: str = "mean", required: int | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Composite score of each row and how many items it answered.

    ``mean`` is the mean of the answered items; ``sum`` is prorated: that mean times ``k``, so a
    respondent who skipped an item is not scored as if the answer were zero. Rows with fewer than
    ``required`` answered items get NaN.
    """
    keyed = np.asarray(keyed, dtype=np.float64)
    if keyed.ndim != 2:
        raise UsageError("composite() needs a respondents x items matrix")
    k = keyed.shape[1]
    required = k if required is None else int(required)
    if not 1 <= required <= k:
        raise UsageError(f"required answered items must be between 1 and {k}, not {required}")
    if method not in ("mean", "sum"):
        raise UsageError(f"score method must be mean or sum, not {method!r}")
    answered = np.sum(~np.isnan(keyed), axis=1)
    totals = np.nansum(keyed, axis=1)
    # one division of exact whole numbers (answer codes sum exactly), so a score is the double nearest its
    # true value and is written without float noise (3.2, not 3.2000000000000002)
    with np.errstate(invalid="ignore", divide="ignore"):
        scores = (totals * k if method == "sum" else totals) / answered
    scores = np.where(answered >= required, scores, np.nan)
    return scores, answered


def score_range(scale: Scale) -> tuple[float, float]:
    """Lowest and highest possible composite score."""
    low, high = float(scale.response.min), float(scale.response.max)
    return (low * scale.k, high * scale.k) if scale.score == "sum" else (low, high)


def pomp(scores: np.ndarray, low: float, high: float) -> np.ndarray:
    """Percent of maximum possible: 100 (x - low) / (high - low). Cohen, Cohen, Aiken & West (1999)."""
    return 100.0 * (np.asarray(scores, dtype=np.float64) - low) / (high - low)


def pomp_of_composite(keyed: np.ndarray, low: float, high: float, *, required: int | None = None) -> np.ndarray:
    """POMP of each row's composite, as one division of exact whole numbers (no float noise: 55.0, not
    55.00000000000001).

    The mean and the prorated sum give the same POMP: 100 (T - a low) / (a (high - low)) for the total T of
    the ``a`` answered items. Rows with fewer than ``required`` answered items get NaN.
    """
    keyed = np.asarray(keyed, dtype=np.float64)
    k = keyed.shape[1]
    answered = np.sum(~np.isnan(keyed), axis=1)
    totals = np.nansum(keyed, axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        values = 100.0 * (totals - low * answered) / (answered * (high - low))
    return np.where(answered >= (k if required is None else required), values, np.nan)


def z_scores(scores: np.ndarray) -> np.ndarray:
    """Standard scores in this sample (sd with n - 1); NaN stays NaN; all NaN if the sd is 0."""
    scores = np.asarray(scores, dtype=np.float64)
    valid = scores[~np.isnan(scores)]
    if valid.size < 2 or np.std(valid, ddof=1) == 0:
        return np.full_like(scores, np.nan)
    return (scores - valid.mean()) / np.std(valid, ddof=1)


def z_basis(scores: np.ndarray, weights: Any = None) -> dict[str, Any]:
    """The mean and sd the z scores are taken from: the sample's (sd with n - 1), or with survey weights the
    weighted mean and sd (divisor sum(w) - sum(w^2)/sum(w)) of the rows with a score and a positive weight,
    from exact sums (:func:`scalewright.stats.weighted_scores.exact_weighted_summary`, the same to the bit
    when a file is scored in blocks)."""
    scores = np.asarray(scores, dtype=np.float64)
    if weights is None:
        valid = scores[~np.isnan(scores)]
        usable = valid.size >= 2
        return {"weighted": False, "mean": float(valid.mean()) if usable else float("nan"),
                "sd": float(np.std(valid, ddof=1)) if usable else float("nan")}
    from .stats.weighted_scores import exact_weighted_summary_of

    return weighted_z_basis(exact_weighted_summary_of(scores, weights.values, weight_column=weights.column))


def weighted_z_basis(summary: Any) -> dict[str, Any]:
    """:func:`z_basis` with survey weights from the score's weighted summary
    (:class:`~scalewright.stats.weighted.WeightedSummary`)."""
    return {"weighted": True, "weight_column": summary.weight_column, "n": summary.n,
            "n_zero_weight": summary.n_zero_weight, "n_effective": summary.n_effective,
            "sum_of_weights": summary.sum_of_weights, "mean": summary.mean, "sd": summary.sd}


def z_from_basis(scores: np.ndarray, basis: dict[str, Any]) -> np.ndarray:
    """``(score - mean) / sd`` of :func:`z_basis`; all NaN when the sd is 0 or cannot be computed. Rows of
    weight 0 get a z score too (they stay in the scored file)."""
    scores = np.asarray(scores, dtype=np.float64)
    mean, sd = basis["mean"], basis["sd"]
    if not (np.isfinite(mean) and np.isfinite(sd)) or sd == 0:
        return np.full_like(scores, np.nan)
    return (scores - mean) / sd


@dataclass(frozen=True, eq=False)
class ScaleScores(ResultMixin):
    """Scores of one scale."""

    scale: str
    scores: np.ndarray
    answered: np.ndarray
    required: int
    k: int
    method: str
    n_scored: int
    n_unscored: int
    #: the rescaled score (``pomp`` or ``z``) written beside the raw one, or None
    standardized: np.ndarray | None = None
    #: with ``z``: the mean and sd it is taken from, weighted or not (:func:`z_basis`)
    standardized_basis: dict[str, Any] | None = None

    def to_dict(self) -> dict[str, Any]:
        out = {"scale": self.scale, "k": self.k, "method": self.method, "required_answered": self.required,
               "n_scored": self.n_scored, "n_unscored": self.n_unscored}
        if self.standardized_basis is not None:
            from .results import to_jsonable

            out["z_basis"] = to_jsonable(self.standardized_basis)
        return out


@dataclass(frozen=True, eq=False)
class ScoreTable(ResultMixin):
    """Composite scores of every scale, in input row order."""

    ids: pd.Series
    id_name: str
    scales: dict[str, ScaleScores]
    standardize: str | None

    def to_frame(self) -> pd.DataFrame:
        columns: dict[str, Any] = {self.id_name: self.ids.to_numpy()}
        for name, result in self.scales.items():
            columns[name] = result.scores
            if self.standardize is not None and result.standardized is not None:
                columns[f"{name}__{self.standardize}"] = result.standardized
            columns[f"{name}__answered"] = result.answered
        return pd.DataFrame(columns)

    def to_dict(self) -> dict[str, Any]:
        return {"standardize": self.standardize, "scales": {n: s.to_dict() for n, s in self.scales.items()}}


def score_scales(responses: RowsToScore, spec: ScaleSpec, *, standardize: str | None = None,
                 scales: Iterable[str] | None = None, weights: Any = None,
                 z_bases: Mapping[str, dict[str, Any]] | None = None) -> ScoreTable:
    """Score every scale of ``spec`` (or those named) for every respondent.

    ``weights`` (:class:`scalewright.weights.SurveyWeights`): ``z`` scores are then taken from the weighted
    mean and sd; ``pomp`` does not depend on the sample, so weights do not change it. ``z_bases``: per scale
    the :func:`z_basis` of the whole sample, when these responses are one block of it (a file scored in blocks).
    """
    if standardize not in (None, *STANDARDIZE):
        raise UsageError(f"standardize must be pomp or z, not {standardize!r}").with_setting("standardize")
    names = list(scales) if scales is not None else list(spec.scales)
    results: dict[str, ScaleScores] = {}
    for name in names:
        scale = spec.scale(name)
        required = scale.required_answered()
        keyed = keyed_items(responses, scale)
        scores, answered = composite(keyed, method=scale.score, required=required)
        standardized = basis = None
        if standardize == "pomp":
            standardized = pomp_of_composite(keyed, float(scale.response.min), float(scale.response.max),
                                             required=required)
        elif standardize == "z" and z_bases is not None:
            basis = z_bases[name]
            standardized = z_from_basis(scores, basis)
        elif standardize == "z" and weights is None:
            standardized, basis = z_scores(scores), z_basis(scores)
        elif standardize == "z":
            basis = z_basis(scores, weights)
            standardized = z_from_basis(scores, basis)
        n_scored = int(np.sum(~np.isnan(scores)))
        results[name] = ScaleScores(scale=name, scores=scores, answered=answered, required=required, k=scale.k,
                                    method=scale.score, n_scored=n_scored, n_unscored=responses.n - n_scored,
                                    standardized=standardized, standardized_basis=basis)
    id_name = spec.id_column or "row"
    return ScoreTable(ids=responses.ids, id_name=id_name, scales=results, standardize=standardize)


SCORE_FILE_TYPES = (".csv", ".xlsx", ".parquet")


def _refuse_what_a_cell_cannot_hold(frame: pd.DataFrame, target: Path) -> None:
    """An XLSX cell cannot hold control characters (XML forbids them): refuse, naming the first, before writing."""
    from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE

    for column in frame.columns:
        if not (frame[column].dtype == object or pd.api.types.is_string_dtype(frame[column].dtype)):
            continue
        holds = frame[column].map(lambda value: isinstance(value, str) and ILLEGAL_CHARACTERS_RE.search(value) is not None)
        if holds.any():
            from .errors import DataError, quoted

            first = int(holds.to_numpy().argmax())
            raise DataError(f"cannot write {target}: {column} {quoted(frame[column].iloc[first])} (row {first + 1} of "
                            f"the scores) holds a control character, which an XLSX cell cannot hold; "
                            "write .csv or .parquet instead")


def scored_frame(table: ScoreTable, suffix: str) -> pd.DataFrame:
    """The rows of the scored file as written to a file of this suffix (ids neutralised in CSV and XLSX)."""
    frame = table.to_frame()
    if suffix in (".csv", ".xlsx"):
        # the id column's name comes from the scale file: it is neutralised like the ids below it
        frame[table.id_name] = frame[table.id_name].map(neutralise_formula)
        frame = frame.rename(columns={table.id_name: neutralise_formula(table.id_name)})
    return frame


def write_scores(table: ScoreTable, target: str | Path, *, inputs: Iterable[str | Path | None] = ()) -> Path:
    """Write the scored file as CSV, XLSX or Parquet (by extension), atomically, never over an input.

    Text cells that a spreadsheet would run as a formula are neutralised in CSV and XLSX.
    """
    target = Path(target)
    suffix = target.suffix.lower()
    if suffix not in SCORE_FILE_TYPES:
        raise UsageError(f"cannot write {target}: the scored file must end in .csv, .xlsx or .parquet")
    frame = scored_frame(table, suffix)
    if suffix == ".csv":
        from .scored_csv import write_scored_csv

        return write_atomic_with(target, lambda tmp: write_scored_csv(frame, tmp), inputs=inputs)
    if suffix == ".xlsx":
        _refuse_what_a_cell_cannot_hold(frame, target)
        return write_atomic_with(target, lambda tmp: frame.to_excel(tmp, index=False, engine="openpyxl"),
                                 inputs=inputs)
    return write_atomic_with(target, lambda tmp: frame.to_parquet(tmp, index=False), inputs=inputs)

"""Splitting respondents into subgroup levels, naming (not analysing) the ones too small."""
from __future__ import annotations

import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from ..notes import Note, note, notes_to_json
from ..results import ResultMixin, to_jsonable

if TYPE_CHECKING:
    import pandas as pd


@dataclass(frozen=True)
class SubgroupSplit(ResultMixin):
    """Levels of one grouping column.

    ``levels`` maps each analysable level (as text) to the row positions in it; ``too_small`` maps the
    levels below ``min_size`` to their row counts; ``missing`` counts rows with no group value.
    """

    column: str
    levels: dict[str, np.ndarray]
    too_small: dict[str, int]
    missing: int
    min_size: int

    def to_dict(self) -> dict:
        return {"column": self.column, "levels": {k: int(len(v)) for k, v in self.levels.items()},
                "too_small": dict(self.too_small), "missing": self.missing, "min_group": self.min_size}

    def notes(self) -> list[Note]:
        """The levels not analysed and the rows without a value, as codes with values."""
        out = [note("subgroup-too-small", column=self.column, level=level, n=int(n), min_size=int(self.min_size))
               for level, n in self.too_small.items()]
        if self.missing:
            out.append(note("subgroup-no-value", column=self.column, n=int(self.missing)))
        return out


def natural_key(text: object) -> list:
    """Sort key that puts '5-9 years' before '10+ years': runs of digits compare as numbers."""
    return [(0, int(part), "") if part.isdigit() else (1, 0, part.casefold())
            for part in re.split(r"(\d+)", str(text)) if part]


def level_order(values: pd.Series) -> list:
    """Levels in their natural order: categorical order if given, numbers numerically, else natural text order."""
    import pandas as pd
    present = values.dropna()
    if isinstance(values.dtype, pd.CategoricalDtype):
        return [c for c in values.cat.categories if (present == c).any()]
    uniques = list(pd.unique(present))
    if all(isinstance(u, (int, float, np.integer, np.floating)) for u in uniques):
        return sorted(uniques)
    return sorted(uniques, key=natural_key)


def level_name(level) -> str:
    if isinstance(level, float) and level.is_integer():
        return str(int(level))
    return str(level)


def blank_as_missing(values: pd.Series) -> pd.Series:
    """Text values stripped, blank text as missing (other types as they are), indexed from 0."""
    import pandas as pd
    values = pd.Series(values).reset_index(drop=True)
    if values.dtype == object or pd.api.types.is_string_dtype(values.dtype):
        stripped = values.astype("string").str.strip()
        values = stripped.mask(stripped == "")
    return values


def split_by(values: pd.Series, *, min_size: int = 10, column: str | None = None) -> SubgroupSplit:
    """Row positions of each level of ``values``; levels with fewer than ``min_size`` rows are set apart."""
    values = blank_as_missing(values)
    missing_mask = values.isna().to_numpy()
    levels: dict[str, np.ndarray] = {}
    too_small: dict[str, int] = {}
    for level in level_order(values):
        positions = np.flatnonzero((values == level).fillna(False).to_numpy())
        name = level_name(level)
        if len(positions) < min_size:
            too_small[name] = int(len(positions))
        else:
            levels[name] = positions
    return SubgroupSplit(column=column or str(values.name), levels=levels, too_small=too_small,
                         missing=int(missing_mask.sum()), min_size=min_size)


def subgroup_blocks(groups: Iterable[Any]) -> dict[str, dict[str, Any]]:
    """The one subgroup container of the JSON contract, for any analysis given per subgroup level.

    Each of ``groups`` describes one subgroup column by its attributes ``column``, ``levels`` (level ->
    result, with ``to_dict`` or already plain), ``too_small`` (level -> its number of respondents, or the
    text ``"< N"`` where counts below ``min_cell`` are hidden) and ``notes``. Returns

    ``{"by": {column: {level: result}}, "too_small": {column: {level: n}}, "group_notes": {column: [note]}}``

    so every analysis nests its subgroups the same way; what compares the levels of a column (a test
    across them) sits beside this under a key of its own, keyed by column.
    """
    groups = list(groups)
    return {"by": {g.column: {str(level): to_jsonable(result) for level, result in g.levels.items()}
                   for g in groups},
            "too_small": {g.column: {str(level): to_jsonable(n) for level, n in g.too_small.items()}
                          for g in groups},
            "group_notes": {g.column: to_jsonable(notes_to_json(g.notes)) for g in groups}}


def _tests_not_computable(comparison: Any) -> list[Any]:
    """A ``not-computable`` note for each test or effect size a comparison could not give."""
    from ..notes import not_computable

    reason = "fewer-than-2-levels" if len(comparison.groups) < 2 else "not-finite"
    return [not_computable(key, reason, levels=len(comparison.groups))
            for key in ("test", "nonparametric", "effect_size", "nonparametric_effect_size", "levene")
            if getattr(comparison, key) is None]


@dataclass(frozen=True)
class _ColumnLevels:
    column: str
    levels: dict[str, Any]
    too_small: dict[str, Any]
    notes: tuple[Any, ...]


def comparison_blocks(comparisons: Iterable[Any],
                      extra: Mapping[str, Mapping[str, Any]] | None = None) -> dict[str, dict[str, Any]]:
    """One scale's subgroup comparisons (:class:`scalewright.stats.groups.Comparison`) in the one container.

    Each level's summary sits at ``by.<column>.<level>``; the levels hidden below ``min_cell`` at
    ``too_small.<column>`` (shown as ``"< N"``, their size never given); the comparison's notes at
    ``group_notes.<column>``; the tests across the levels at ``comparisons.<column>``, with ``extra[column]``
    (a sentence, an invariance verdict, weighted estimates) added to them.
    """
    comparisons = list(comparisons)
    columns = [_ColumnLevels(column=c.column, levels={g.level: g for g in c.groups},
                             too_small=c.to_dict()["suppressed"], notes=(*c.notes, *_tests_not_computable(c)))
               for c in comparisons]
    tests = {}
    for c in comparisons:
        record = c.to_dict()
        for key in ("groups", "suppressed", "notes", "column", "scale"):
            record.pop(key, None)
        tests[c.column] = {**record, **(extra or {}).get(c.column, {})}
    return {**subgroup_blocks(columns), "comparisons": tests}

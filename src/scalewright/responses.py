"""The clean answers of a data file (:class:`Responses`): item codes, ids, the other columns, what was refused."""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from .answer_codes import ItemAnswers
from .errors import DataError, Problem, did_you_mean, quoted
from .notes import Note, note
from .spec_model import ScaleSpec

if TYPE_CHECKING:
    import pandas as pd


@dataclass(frozen=True, eq=False)
class Responses:
    """Clean answer codes of every item, with ids, the other columns and what was refused.

    ``answers`` holds the answers as given (not reverse-keyed); :attr:`items` shows them as one float64
    matrix, NaN where no answer was given, and :meth:`codes` as one-byte codes for the statistics.
    """

    path: str
    answers: ItemAnswers
    item_names: tuple[str, ...]
    frame: pd.DataFrame
    ids: pd.Series
    line_numbers: np.ndarray
    id_column: str | None = None
    refused: tuple[Problem, ...] = ()
    refused_total: int = 0
    refused_by_column: dict[str, int] = field(default_factory=dict)
    missing_code_by_column: dict[str, int] = field(default_factory=dict)
    blank_by_column: dict[str, int] = field(default_factory=dict)
    texts_by_column: dict[str, int] = field(default_factory=dict)
    #: column -> "no answer" text as the scale file lists it -> cells read as missing (items and other columns)
    missing_texts_by_column: dict[str, dict[str, int]] = field(default_factory=dict)
    #: the "no answer" texts of the columns that are not items
    missing_texts: tuple[str, ...] = ()
    #: every column name in the order the data file has them (items in questionnaire order, for longstring)
    file_columns: tuple[str, ...] = ()
    #: survey weights (:class:`scalewright.weights.SurveyWeights`), or None when the estimates are unweighted
    weights: Any = None

    @property
    def n(self) -> int:
        return self.answers.n

    @property
    def items(self) -> np.ndarray:
        """Every item's answers as an n x k float64 matrix (column-major), NaN where missing."""
        return self.answers.values

    def codes(self, names: Sequence[str]) -> np.ndarray | None:
        """The named items as one-byte codes (``answer - min``, 255 = missing), or None if one has none."""
        return self.answers.codes_of([self.item_index(n) for n in names])

    def item_index(self, name: str) -> int:
        try:
            return self.item_names.index(name)
        except ValueError:
            raise DataError(Problem(file=self.path, message=f"no item column {name!r}")) from None

    def item(self, name: str) -> np.ndarray:
        return self.items[:, self.item_index(name)]

    def matrix(self, names: Sequence[str]) -> np.ndarray:
        return self.items[:, [self.item_index(n) for n in names]]

    def column(self, name: str) -> pd.Series:
        """A non-item column (a group, id or other), or an item's clean codes, as a Series."""
        import pandas as pd
        if name in self.frame.columns:
            return self.frame[name]
        if name in self.item_names:
            return pd.Series(self.item(name), name=name)
        hint = did_you_mean(name, list(self.frame.columns) + list(self.item_names))
        raise DataError(Problem(file=self.path, message=f"no column named {name!r}{hint}"))

    def subset(self, rows: np.ndarray | Sequence[int] | Sequence[bool]) -> Responses:
        rows = np.asarray(rows)
        positions = np.flatnonzero(rows) if rows.dtype == bool else rows.astype(int)
        return Responses(
            path=self.path, answers=self.answers.subset(positions), item_names=self.item_names,
            frame=self.frame.iloc[positions].reset_index(drop=True), ids=self.ids.iloc[positions].reset_index(drop=True),
            line_numbers=self.line_numbers[positions], id_column=self.id_column, refused=self.refused,
            refused_total=self.refused_total, refused_by_column=self.refused_by_column,
            missing_code_by_column=self.missing_code_by_column, blank_by_column=self.blank_by_column,
            texts_by_column=self.texts_by_column, missing_texts_by_column=self.missing_texts_by_column,
            missing_texts=self.missing_texts, file_columns=self.file_columns,
            weights=None if self.weights is None else self.weights.subset(positions))

    def items_in_file_order(self) -> tuple[str, ...]:
        """The item names in the order their columns stand in the data file."""
        rank = {name: position for position, name in enumerate(self.file_columns)}
        return tuple(sorted(self.item_names, key=lambda item: rank.get(item, len(rank))))

    def notes(self) -> list[Note]:
        """What reading the data changed, as codes with values (worded by ``present/messages``)."""
        out = []
        if self.refused_total:
            out.append(note("values-read-as-missing", count=int(self.refused_total),
                            by_column={str(c): int(n) for c, n in self.refused_by_column.items()}))
        codes = sum(self.missing_code_by_column.values())
        if codes:
            out.append(note("missing-codes-read", count=int(codes)))
        texts = sum(sum(counts.values()) for counts in self.missing_texts_by_column.values())
        if texts:
            by_text: dict[str, int] = {}
            for counts in self.missing_texts_by_column.values():
                for text, count in counts.items():
                    by_text[text] = by_text.get(text, 0) + count
            out.append(note("missing-texts-read", count=int(texts), by_text=by_text))
        return out

    def missing_texts_note(self, spec: ScaleSpec) -> str:
        """Which texts were read as "no answer" (the scale file's ``missing_texts`` or the default)."""
        def shown(texts: Sequence[str]) -> str:
            return ", ".join(quoted(t) for t in texts) if texts else "none"

        differ = [f"{scale.name}: {shown(scale.response.missing_texts)}" for scale in spec.scales.values()
                  if scale.response.missing_texts != spec.missing_texts]
        return (f"texts read as 'no answer' (missing_texts): {shown(spec.missing_texts)}"
                + (f"; in the items of {'; '.join(differ)}" if differ else "")
                + "; blank cells and 'no answer' codes are missing too, every other text is data")

    def reading_summary(self) -> dict[str, Any]:
        return {
            "rows": self.n,
            "refused_total": self.refused_total,
            "refused_by_column": dict(self.refused_by_column),
            "refused_first": [str(p) for p in self.refused],
            "missing_code_by_column": dict(self.missing_code_by_column),
            "blank_by_column": dict(self.blank_by_column),
            "texts_by_column": dict(self.texts_by_column),
            "missing_texts": list(self.missing_texts),
            "missing_texts_by_column": {column: dict(counts) for column, counts in self.missing_texts_by_column.items()},
        }

"""What reading found, as a mergeable summary: counts per column, the first refused cells, ids, levels.

Each block of rows gives one :class:`ReadingCounts`; merged, they hold what the whole-file reader
(:func:`scalewright.data.read_responses`) finds, so :meth:`ReadingCounts.check` raises the same errors
(naming the global row and column) and the ``reading`` block of the JSON is the same.
"""
from __future__ import annotations

import heapq
from collections import Counter
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..data import SHOW_FIRST
from ..errors import DataError, Problem


def _add(a: dict[str, int], b: dict[str, int]) -> dict[str, int]:
    merged = Counter(a)
    merged.update(b)
    return {key: value for key, value in merged.items() if value}


def _first(a: tuple, b: tuple, count: int) -> tuple:
    """The ``count`` entries of both that come first (entries are (place, ...) tuples)."""
    return tuple(heapq.nsmallest(count, (*a, *b), key=lambda entry: entry[0]))


@dataclass(frozen=True, eq=False)
class ReadingCounts:
    """Rows read and, per item column, "no answer" codes, blanks, answer texts and refused values.

    Every finding is placed by ``(part, row, file)``: the file's position in a dataset (0 for one file), the
    row number in it, and its name; places order by part, then row.
    ``refused_first[column]`` holds the first :data:`~scalewright.data.SHOW_FIRST` refused cells of that
    column: (place, value as read). ``id_hashes`` are the 64-bit hashes of the ids, one array per block
    (8 bytes a row: the one part that grows with the rows, for the duplicate check); ``id_empty`` the
    first row without an id and how many; ``unknown_levels[column]`` the first row whose group value the
    scale file does not list, with the value, and how many.
    """

    rows: int = 0
    missing_codes: dict[str, int] = field(default_factory=dict)
    blanks: dict[str, int] = field(default_factory=dict)
    texts: dict[str, int] = field(default_factory=dict)
    refused: dict[str, int] = field(default_factory=dict)
    refused_first: dict[str, tuple] = field(default_factory=dict)
    id_hashes: tuple[np.ndarray, ...] = ()
    id_empty: tuple = ()          # ((place, count),) or ()
    unknown_levels: dict[str, tuple] = field(default_factory=dict)   # column -> (place, value, count)
    #: cells holding a "no answer" text read as missing: column -> text -> count (items and other columns)
    missing_texts: dict[str, dict[str, int]] = field(default_factory=dict)
    #: the file's column names in order (to list the other columns as the whole-file reader lists them)
    file_columns: tuple[str, ...] = ()
    #: a duplicate among hashes already checked and dropped (:mod:`~scalewright.engine.id_spill`)
    duplicate_ids: bool = False

    def merge(self, other: ReadingCounts) -> ReadingCounts:
        refused_first = {column: _first(self.refused_first.get(column, ()), other.refused_first.get(column, ()),
                                        SHOW_FIRST) for column in {*self.refused_first, *other.refused_first}}
        # the blocks' sorted hashes are kept apart (no copy of all of them at every merge); they are
        # joined once, when the duplicates are looked for
        hashes = (*self.id_hashes, *other.id_hashes)
        empty: tuple[tuple[Any, int], ...] = ()
        if self.id_empty or other.id_empty:
            found = [*self.id_empty, *other.id_empty]  # (place, count) pairs
            empty = ((min(place for place, _ in found), sum(count for _, count in found)),)
        unknown = dict(self.unknown_levels)
        for column, (place, value, count) in other.unknown_levels.items():
            if column in unknown:
                mine = unknown[column]
                first = mine if mine[0] <= place else (place, value, 0)
                unknown[column] = (first[0], first[1], mine[2] + count)
            else:
                unknown[column] = (place, value, count)
        return ReadingCounts(rows=self.rows + other.rows, missing_codes=_add(self.missing_codes, other.missing_codes),
                             blanks=_add(self.blanks, other.blanks), texts=_add(self.texts, other.texts),
                             refused=_add(self.refused, other.refused),
                             refused_first={c: v for c, v in refused_first.items() if v},
                             id_hashes=hashes, id_empty=empty, unknown_levels=unknown,
                             missing_texts={column: _add(self.missing_texts.get(column, {}),
                                                         other.missing_texts.get(column, {}))
                                            for column in dict.fromkeys([*self.missing_texts, *other.missing_texts])},
                             file_columns=self.file_columns or other.file_columns,
                             duplicate_ids=self.duplicate_ids or other.duplicate_ids)

    def has_duplicate_ids(self) -> bool:
        if self.duplicate_ids:
            return True
        if not self.id_hashes:
            return False
        joined = np.concatenate(self.id_hashes)
        joined.sort(kind="stable")  # a merge of the blocks' sorted runs
        return bool(np.any(joined[1:] == joined[:-1]))


def describe_value(value: Any, *, blanks_in_column: bool) -> Any:
    """A refused value as the whole-file reader holds it: numbers typed as its parser types the column."""
    from ..data import _is_number

    if isinstance(value, str) and _is_number(value):
        number = float(value)
        return int(number) if number.is_integer() and not blanks_in_column and "." not in value else number
    return value


@dataclass(frozen=True)
class ReadingOutcome:
    """The merged reading counts of a file, checked; stands in for :class:`~scalewright.responses.Responses`
    where a command reports what reading found."""

    path: str
    counts: ReadingCounts
    item_names: tuple[str, ...]
    refused_problems: tuple[Problem, ...]
    #: the texts read as "no answer" (the scale file's ``missing_texts`` or the default)
    missing_texts: tuple[str, ...] = ()

    @property
    def n(self) -> int:
        return self.counts.rows

    def notes(self) -> list[str]:
        out = []
        refused = self._in_item_order(self.counts.refused)
        if refused:
            detail = ", ".join(f"{c} {n}" for c, n in refused.items())
            out.append(f"{sum(refused.values())} value(s) were neither an answer nor a missing code and were "
                       f"treated as missing (--lenient): {detail}")
        codes = sum(self.counts.missing_codes.values())
        if codes:
            out.append(f"{codes} 'no answer' code(s) were read as missing")
        texts = sum(sum(counts.values()) for counts in self.counts.missing_texts.values())
        if texts:  # worded as the whole-file reader words it (responses.Responses.notes)
            from ..errors import quoted

            by_text: dict[str, int] = {}
            for counts in self._missing_texts_by_column().values():
                for text, count in counts.items():
                    by_text[text] = by_text.get(text, 0) + count
            detail = ", ".join(f"{quoted(t)} {n}" for t, n in by_text.items())
            out.append(f"{texts} cell(s) holding a 'no answer' text were read as missing: {detail}")
        return out

    def _missing_texts_by_column(self) -> dict[str, dict[str, int]]:
        # items first, in the scale file's order, then the other columns (as the whole-file reader lists them)
        found = self.counts.missing_texts
        ordered = {name: dict(found[name]) for name in self.item_names if found.get(name)}
        ordered.update({name: dict(found[name]) for name in self._others_in_file_order(found) if found[name]})
        return ordered

    def _others_in_file_order(self, found: dict) -> list[str]:
        rank = {name: position for position, name in enumerate(self.counts.file_columns)}
        return sorted((name for name in found if name not in self.item_names), key=lambda name: rank.get(name, len(rank)))

    def _in_item_order(self, counts: dict[str, int]) -> dict[str, int]:
        return {name: counts[name] for name in self.item_names if counts.get(name)}

    def reading_summary(self) -> dict[str, Any]:
        return {
            "rows": self.counts.rows,
            "refused_total": sum(self.counts.refused.values()),
            "refused_by_column": self._in_item_order(self.counts.refused),
            "refused_first": [str(p) for p in self.refused_problems],
            "missing_code_by_column": self._in_item_order(self.counts.missing_codes),
            "blank_by_column": {**self._in_item_order(self.counts.blanks),  # then the group columns' blanks
                                **{c: self.counts.blanks[c] for c in self._others_in_file_order(self.counts.blanks)
                                   if self.counts.blanks[c]}},
            "texts_by_column": self._in_item_order(self.counts.texts),
            "missing_texts": list(self.missing_texts),
            "missing_texts_by_column": self._missing_texts_by_column(),
        }


def check_reading(path: str, counts: ReadingCounts, spec: Any, *, lenient: bool) -> ReadingOutcome:
    """Raise the errors the whole-file reader raises, in its order (ids, refused values, group levels);
    else the outcome with the refused cells listed as that reader lists them."""
    from ..data import _describe_bad

    if counts.id_empty:
        (_, row, file), count = counts.id_empty[0]
        raise DataError(Problem(file=file or path, where=f"row {row}, column {spec.id_column}",
                                message=f"the id is empty ({count} row(s) without an id)"))
    sample: list[tuple[tuple, Problem]] = []
    for name in spec.items:  # the whole-file reader takes the first cells column by column, then sorts by row
        if len(sample) >= SHOW_FIRST:
            break
        for place, value in counts.refused_first.get(name, ())[: SHOW_FIRST - len(sample)]:
            shown = describe_value(value, blanks_in_column=bool(counts.blanks.get(name)))
            sample.append((place, Problem(file=place[2] or path, where=f"row {place[1]}, column {name}",
                                        message=_describe_bad(shown, spec.response_for(name)))))
    total = sum(counts.refused.values())
    if total and not lenient:
        in_row_order = [problem for _, problem in sorted(sample, key=lambda numbered: numbered[0])]
        summary = Problem(total=True, file=path, message=f"{total} value(s) in all are neither an answer nor a "
                                             "'no answer' code; fix them, add them to missing_codes, or read "
                                             "the data leniently to treat them as missing")
        raise DataError([*in_row_order, summary] if total > 1 else in_row_order).with_setting("lenient")
    if not lenient:
        for column in spec.group_levels:
            if column in counts.unknown_levels:
                (_, row, file), value, count = counts.unknown_levels[column]
                from ..data_columns import order_text
                from ..errors import quoted

                listed = order_text(spec.group_levels[column], getattr(spec, "group_codes", {}).get(column))
                raise DataError(Problem(file=file or path, where=f"row {row}, column {column}",
                                        message=f"{quoted(value)} is not one of the levels the scale file lists "
                                                f"for {column} ({listed}); {count} such value(s)"))
    return ReadingOutcome(path=path, counts=counts, item_names=tuple(spec.items),
                          missing_texts=tuple(getattr(spec, "missing_texts", ()) or ()),
                          refused_problems=tuple(p for _, p in sample))

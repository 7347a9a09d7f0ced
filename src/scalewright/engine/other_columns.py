"""A block's columns other than the items, read in Arrow: their "no answer" cells counted, and each column
a command asks for made a pandas Series only when the command first reads it.

The whole-file reader clears blank cells and the scale file's ``missing_texts`` in every text column and
counts them (:func:`scalewright.text_cells.clear_missing_texts`). Here the counts of a text column come
from Arrow's dictionary encoding (each distinct text judged once, its cells counted in numpy), so a
command that needs none of these columns as values (``reliability``, ``shape``, ``tally`` of the items)
never converts them and never imports pandas: pandas' import alone is a fifth of a streamed
`reliability`'s start (0.25 s). A column that is not text (a Parquet file's numbers or dates) is
counted by the whole-file reader's own function.
"""
from __future__ import annotations

from collections.abc import Iterator, Mapping, Sequence
from typing import Any

import numpy as np

from ..arrow_numpy import integers
from ..text_cells import MissingCells, normalise


def is_text(array: Any) -> bool:
    import pyarrow as pa

    return pa.types.is_string(array.type) or pa.types.is_large_string(array.type)


def count_missing_cells(arrays: Mapping[str, Any], missing_texts: Sequence[str], *, skip: Sequence[str] = (),
                        count_blank: Sequence[str] = ()) -> MissingCells:
    """The cells of these Arrow text columns that read as missing, as
    :func:`~scalewright.text_cells.clear_missing_texts` counts them: listed texts in every column but those
    of ``skip``, blank cells (empty or white space only) in the columns of ``count_blank``."""
    import pyarrow as pa
    import pyarrow.compute as pc

    listed = {normalise(text): text for text in missing_texts}
    found = MissingCells()
    for name, array in arrays.items():
        if name in skip:
            continue
        array = array.combine_chunks() if isinstance(array, pa.ChunkedArray) else array
        encoded = pc.dictionary_encode(array)
        forms = [normalise(text) for text in encoded.dictionary.to_pylist()]
        cleared = np.array([form == "" or form in listed for form in forms], dtype=bool)
        counts = None
        if cleared.any():
            indices = integers(encoded.indices, fill=-1)
            counts = np.bincount(indices[indices >= 0], minlength=len(forms))
            texts: dict[str, int] = {}
            for index in np.flatnonzero(cleared):
                if forms[index]:
                    text = listed[forms[index]]
                    texts[text] = texts.get(text, 0) + int(counts[index])
            if texts:
                found.texts[name] = texts
        if name in count_blank:
            blank = array.null_count
            if counts is not None:
                blank += int(sum(counts[index] for index in np.flatnonzero(cleared) if not forms[index]))
            if blank:
                found.blank[name] = blank
    return found


class ArrowColumns(Mapping[str, Any]):
    """The wanted columns of a block as pandas Series, each converted from Arrow (with its blank and listed
    "no answer" cells made missing, as the whole-file reader makes them) when first read."""

    def __init__(self, arrays: Mapping[str, Any], missing_texts: Sequence[str], *, keep_as_read: Sequence[str] = (),
                 ready: Mapping[str, Any] | None = None) -> None:
        self._arrays = dict(arrays)
        self._missing_texts = tuple(missing_texts)
        self._keep_as_read = set(keep_as_read)
        self._series: dict[str, Any] = dict(ready or {})

    def __getitem__(self, name: str) -> Any:
        if name not in self._series:
            from ..text_cells import clear_column_texts

            series = self._arrays[name].to_pandas()
            if name not in self._keep_as_read:
                series = clear_column_texts(series, self._missing_texts)
            self._series[name] = series
        return self._series[name]

    def keep(self, name: str, series: Any) -> None:
        """Hold ``series`` as the column ``name`` (a column the reading has already converted and checked)."""
        self._series[name] = series

    def __iter__(self) -> Iterator[str]:
        return iter(dict.fromkeys([*self._series, *self._arrays]))

    def __len__(self) -> int:
        return len(set(self._series) | set(self._arrays))

"""Standard scores (``score --standardize z``) of a file read in blocks: the sample's mean and SD first.

Pass one reads, scores and drops each block (the whole-file route's scoring, block by block), keeping
each scale's scores in file order in a temporary file (8 bytes a scored row; removed afterwards), and
checks what reading found as the whole-file reader does. The mean and SD are then taken from that file
exactly as the whole-file route takes them from its array (``numpy.mean`` and ``numpy.std(ddof=1)``:
:class:`~scalewright.engine.ordered_sum.OrderedSum` makes numpy's pairwise sums to the bit), so pass two
(:func:`~scalewright.engine.score_stream.stream_scores` with these bases) writes the same z scores, and
the same text, as the whole-file route. Memory holds a few blocks whatever the number of rows.

With survey weights nothing is spilled: each block's scores are summed with its weights exactly
(:class:`~scalewright.summaries.exact_scores.ExactWeightedScores`, a few numbers per distinct score), and the
weighted mean and sd are taken from the merged sums as the whole-file route takes them from its arrays
(:func:`~scalewright.stats.weighted_scores.exact_weighted_summary`): the same to the bit.
"""
from __future__ import annotations

import math
import shutil
import tempfile
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

from ..scoring import weighted_z_basis
from ..stats.weighted_scores import exact_weighted_summary
from .blocks import CannotStream, batch_sources, read_by_first_way
from .ordered_sum import OrderedSum
from .reading import check_reading
from .score_stream import scored_pass, weight_columns

#: scores read back from the temporary file at a time
CHUNK = 1 << 20


def _spilled(handle_path: Path, n: int, fn: Any = None) -> float:
    """numpy's sum of the n spilled scores (or of ``fn`` of them), fed in chunks in file order."""
    total = OrderedSum(n)
    with open(handle_path, "rb") as handle:
        while True:
            chunk = np.fromfile(handle, dtype=np.float64, count=CHUNK)
            if not chunk.size:
                break
            total.add(chunk if fn is None else fn(chunk))
    return total.total()


def z_bases_of_file(path: str | Path, spec: Any, *, lenient: bool = False, block_bytes: int | None = None,
                    weight: str | None = None,
                    weights_read: Callable[[Any], None] | None = None) -> dict[str, dict[str, Any]]:
    """Per scale, :func:`~scalewright.scoring.z_basis` of the file's scores, from one pass; with ``weight``
    (the survey weight column) the weighted one, ``weights_read`` being given what reading the weights
    found once reading is checked (it may refuse the run as the whole-file reader does).

    Raises :class:`~scalewright.engine.blocks.CannotStream` when the file needs the whole-file route, and
    the whole-file reader's errors (a refused value without ``lenient``...) after the pass.
    """
    path = Path(path)
    columns = weight_columns(spec, weight)
    ways = batch_sources(path, spec, columns, block_bytes=block_bytes)
    if weight is not None:
        def weighed_attempt(way: Any) -> dict[str, dict[str, Any]]:
            counts, weighed = scored_pass(path, spec, None, lambda table: None, block_bytes=block_bytes,
                                          columns=columns, way=way, weight=weight)
            check_reading(str(path), counts, spec, lenient=lenient)
            if weighed is None:  # every scored pass with a weight column weighs
                raise CannotStream("no weights were read")
            if weights_read is not None:
                weights_read(weighed.reading)
            return {name: weighted_z_basis(exact_weighted_summary(sums, weight_column=weight))
                    for name, sums in weighed.scales.items()}

        return read_by_first_way(ways, weighed_attempt)
    folder = Path(tempfile.mkdtemp(prefix="scalewright-z-"))
    try:
        def attempt(way: Any) -> dict[str, dict[str, Any]]:
            files = {name: folder / f"{index}.f8" for index, name in enumerate(spec.scales)}
            scored = dict.fromkeys(spec.scales, 0)
            handles = {name: open(file, "wb") for name, file in files.items()}  # noqa: SIM115 (closed below)

            def take(table: Any) -> None:
                for name, one in table.scales.items():
                    valid = one.scores[~np.isnan(one.scores)]
                    valid.tofile(handles[name])
                    scored[name] += valid.size

            try:
                counts, _ = scored_pass(path, spec, None, take, block_bytes=block_bytes, columns=columns, way=way)
            finally:
                for handle in handles.values():
                    handle.close()
            check_reading(str(path), counts, spec, lenient=lenient)
            return {name: _basis(files[name], scored[name]) for name in spec.scales}

        return read_by_first_way(ways, attempt)
    finally:
        shutil.rmtree(folder, ignore_errors=True)


def _basis(file: Path, n: int) -> dict[str, Any]:
    """``z_basis`` of the n scores in ``file``: mean = sum / n, sd = sqrt(sum of squared deviations / (n - 1)),
    each sum numpy's own (as ``numpy.mean`` and ``numpy.std(ddof=1)`` take them)."""
    if n < 2:
        return {"weighted": False, "mean": float("nan"), "sd": float("nan")}
    mean = _spilled(file, n) / n

    def squared(chunk: np.ndarray) -> np.ndarray:
        deviation = chunk - mean
        return deviation * deviation

    return {"weighted": False, "mean": mean, "sd": math.sqrt(_spilled(file, n, squared) / (n - 1))}

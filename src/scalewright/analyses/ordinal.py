"""Polychoric correlations of a scale file's items, for `--ordinal` on reliability, structure and confirm."""
from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from ..notes import Note
    from ..responses import Responses
    from ..spec_model import Scale, ScaleSpec
    from ..stats.ordinal_reliability import OrdinalReliability
    from ..stats.polychoric_matrix import PolychoricMatrix
    from ..stats.reliability import ScaleReliability


def polychoric_of_items(responses: Responses, items: Sequence[str], reversed_items: Sequence[str] = (), *,
                        pairwise: bool = False) -> PolychoricMatrix:
    """:class:`~scalewright.stats.polychoric_matrix.PolychoricMatrix` of ``items``, keyed (reverse items turned).

    Listwise (rows answering every item) unless ``pairwise``. Built from the one-byte answer codes; items
    whose answers are not whole levels of their range have none, and ordinal methods do not apply.

    For ``confirm --ordinal``: ``matrix.correlation`` and ``matrix.dwls_weights()`` are the input and the
    diagonal weights of a DWLS fit.
    """
    from ..errors import UsageError
    from ..stats.polychoric_matrix import polychoric_of_codes

    items = list(items)
    codes = responses.codes(items)
    if codes is None:
        raise UsageError("--ordinal needs answers that are whole levels of each item's answer range; "
                         f"some of {', '.join(items)} have other values")
    spans = [int(h - lo) for lo, h in zip(responses.answers.lows[[responses.item_index(i) for i in items]],
                                          responses.answers.highs[[responses.item_index(i) for i in items]], strict=True)]
    matrix = polychoric_of_codes(np.asarray(codes), max(spans, default=1) + 1, item_names=items, pairwise=pairwise)
    return matrix.keyed([item in set(reversed_items) for item in items])


def dwls_inputs(responses: Responses, items: Sequence[str], reversed_items: Sequence[str] = (), *,
                pairwise: bool = False) -> tuple[np.ndarray, np.ndarray, int, PolychoricMatrix]:
    """What a DWLS fit of a confirmatory model needs, in one call (for ``confirm --ordinal``).

    Returns the keyed polychoric correlation matrix (k x k, smoothed if it was not positive definite), the
    diagonal weights ``1 / SE^2`` of each correlation (k x k; 0 on the diagonal and for pairs without a
    standard error), the number of rows behind them, and the :class:`PolychoricMatrix` itself (notes,
    thresholds). DWLS on polychoric correlations: Muthén (1984), Psychometrika 49:115-132; compared with
    other estimators for ordinal data by Flora & Curran (2004), Psychological Methods 9:466-491.
    """
    matrix = polychoric_of_items(responses, items, reversed_items, pairwise=pairwise)
    return matrix.correlation, matrix.dwls_weights(), matrix.n_used, matrix


def scale_ordinal(responses: Responses, scale: Scale, overall: ScaleReliability, *, pairwise: bool,
                  estimate: bool) -> tuple[OrdinalReliability | None, tuple[Note, ...]]:
    """Ordinal reliability of one scale (when ``estimate``) and the advice notes on whether it is called for.

    The advice uses the answer counts already in ``overall`` (the scale's :class:`ScaleReliability`).
    """
    from ..stats.ordinal_reliability import ordinal_advice, ordinal_reliability

    levels = [str(level) for level in range(scale.response.min, scale.response.max + 1)]
    tallies = np.array([[item.counts.get(level, 0) for level in levels] for item in overall.items.values()])
    advice = ordinal_advice(tallies, len(levels), list(overall.items)) if len(tallies) else ()
    if not estimate:
        return None, advice
    matrix = polychoric_of_items(responses, scale.items, scale.reverse, pairwise=pairwise)
    return ordinal_reliability(matrix), advice


def joint_polychoric(responses: Responses, spec: ScaleSpec) -> PolychoricMatrix:
    """Polychoric matrix of every item of the scale file once, keyed as its smallest scale keys it
    (as :func:`scalewright.analyses.structure.joint_keyed_items` does), over the rows answering every item."""
    reversed_items = []
    for item in spec.items:
        homes = [s for s in spec.scales.values() if item in s.items]
        if min(homes, key=lambda s: s.k).is_reversed(item):
            reversed_items.append(item)
    return polychoric_of_items(responses, spec.items, reversed_items, pairwise=False)

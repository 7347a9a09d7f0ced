"""The survey-weighted sums of the screen's three passes over a file read in blocks (see :mod:`.screen_stream`).

Each block reads its weights by the whole-file rules (:func:`~scalewright.summaries.weighted.block_weights`:
refused weights count as 0 and are counted by kind, with the global row of the first ones). The passes keep,
exactly (:mod:`scalewright.summaries.exact_weighted`): the weighted pairwise moments of the keyed codes of
every row (the first Mahalanobis centre) and of the rows the first distance sets aside (the second centre is
every row's less theirs); each scale's weighted cross-products of the unflagged and of the flagged rows (the
weighted alpha with and without the flagged); the sums of w and w squared of every row, of the flagged and
of those carrying each flag (the weighted shares). Merged in any order they are the same numbers.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..summaries.exact_weighted import ExactWeightedCrossProducts, ExactWeightedPairwise
from ..summaries.weighted import WeightReading, block_weights


def weights_of(block: Any, column: str) -> tuple[np.ndarray, WeightReading]:
    """The usable weight of each row of the block (0 where refused) and what reading them found."""
    return block_weights(block.columns[column], (block.part, block.first_row, block.file))


def weight_sums(weights: np.ndarray) -> ExactWeightedCrossProducts:
    """The exact sums of w and w squared of these rows' positive weights (cross-products of no items)."""
    return ExactWeightedCrossProducts.from_codes(np.empty((weights.size, 0), dtype=np.uint8), weights)


def first_pass_sums(block: Any, column: str, keyed_codes: np.ndarray) -> tuple[WeightReading, ExactWeightedPairwise]:
    weights, reading = weights_of(block, column)
    return reading, ExactWeightedPairwise.from_codes(keyed_codes, weights)


def set_aside_sums(block: Any, column: str, keyed_codes: np.ndarray, reference: np.ndarray) -> ExactWeightedPairwise:
    """The weighted pairwise moments of the rows the first distance sets aside (``reference`` False)."""
    weights, _ = weights_of(block, column)
    return ExactWeightedPairwise.from_codes(keyed_codes[~reference], weights[~reference])


@dataclass
class JudgedSums:
    """The weighted sums of the third pass (every row judged), merged block by block."""

    scales: dict[str, list[ExactWeightedCrossProducts]] = field(default_factory=dict)  # [unflagged, flagged]
    everyone: ExactWeightedCrossProducts | None = None
    flagged: ExactWeightedCrossProducts | None = None
    per_flag: dict[str, ExactWeightedCrossProducts] = field(default_factory=dict)

    @staticmethod
    def of_block(block: Any, column: str, keyed_codes: np.ndarray, parts: dict[str, slice], flagged: np.ndarray,
                 fired: dict[str, np.ndarray]) -> JudgedSums:
        weights, _ = weights_of(block, column)
        kept = ~flagged
        return JudgedSums(
            scales={name: [ExactWeightedCrossProducts.from_codes(keyed_codes[kept][:, part], weights[kept]),
                           ExactWeightedCrossProducts.from_codes(keyed_codes[flagged][:, part], weights[flagged])]
                    for name, part in parts.items()},
            everyone=weight_sums(weights), flagged=weight_sums(weights[flagged]),
            per_flag={code: weight_sums(weights[mask]) for code, mask in fired.items()})

    def merge(self, other: JudgedSums) -> JudgedSums:
        if self.everyone is None or self.flagged is None or other.everyone is None or other.flagged is None:
            return other if self.everyone is None else self
        return JudgedSums(
            scales={name: [mine[0].merge(other.scales[name][0]), mine[1].merge(other.scales[name][1])]
                    for name, mine in self.scales.items()},
            everyone=self.everyone.merge(other.everyone), flagged=self.flagged.merge(other.flagged),
            per_flag={code: sums.merge(other.per_flag[code]) for code, sums in self.per_flag.items()})


__all__ = ["JudgedSums", "first_pass_sums", "set_aside_sums", "weight_sums", "weights_of"]

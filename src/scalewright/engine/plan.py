"""Which summaries a command needs, and the summary of one block of rows.

A :class:`SummaryPlan` names the scales, whether their cross-products are listwise or pairwise, whether
score value counts are wanted, the subgroup columns and the columns to count. :func:`summarise_block`
turns one :class:`~scalewright.engine.blocks.Block` into a :class:`~scalewright.summaries.Summary` with
the members ``reading`` (what reading found), ``scales`` (per scale), ``by`` (per subgroup column, per
level as read, per scale) and ``categories`` (per counted column). Further members (per-pair
contingency tables, per-missingness-pattern sums) are added here the same way.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..stats.missing_patterns import PatternSummary
from ..stats.pair_tables import PairTables, pair_tables
from ..summaries import (
    AnswerCounts,
    CategoryCounts,
    Keyed,
    ListwiseCrossProducts,
    PairwiseCrossProducts,
    ScoreCounts,
    Summary,
)


@dataclass(frozen=True)
class ScalePlan:
    """One scale: its items' positions among the spec's items, answer range, keying and scoring rule."""

    name: str
    positions: tuple[int, ...]
    low: int
    high: int
    reversed_mask: tuple[bool, ...]
    method: str
    required: int


@dataclass(frozen=True)
class SummaryPlan:
    """What to summarise: ``cross_products`` is "listwise", "pairwise" or None; ``scores`` asks for score
    value counts; ``by`` the subgroup columns; ``categories`` the columns whose values are counted."""

    scales: tuple[ScalePlan, ...]
    cross_products: str | None = "listwise"
    answers: bool = True
    scores: bool = False
    by: tuple[str, ...] = ()
    categories: tuple[str, ...] = ()
    id_column: str | None = None
    extra: tuple[str, ...] = field(default=())
    #: cross-products of every item of the scale file together (for the factor structure), with their
    #: per-pattern statistics (the missing-data block, EM)
    joint: bool = False
    #: the joint cross-products: "listwise" (complete rows) or "pairwise" (each pair on the rows answering both)
    joint_cross_products: str = "listwise"
    #: per-pair contingency tables of every item together, over the rows answering every item (polychoric)
    joint_pair_tables: bool = False
    #: per-missingness-pattern statistics of each scale (the missing-data block: patterns, Little's test)
    patterns: bool = False
    #: per-pair contingency tables of each scale's codes (polychoric correlations): "listwise" counts the
    #: rows answering every item of the scale, "pairwise" every row; None: no tables
    pair_tables: str | None = None
    #: the survey weight column: weighted cross-products, answer and score counts beside the unweighted
    weight: str | None = None
    #: the weighted cross-products summed exactly (:mod:`scalewright.summaries.exact_weighted`), for fits
    #: that carry a last-bit difference of the covariance into their results
    weighted_exact: bool = False

    @property
    def columns(self) -> tuple[str, ...]:
        """The non-item columns to read: the id (for its checks), the groups and the counted columns."""
        wanted = ([self.id_column] if self.id_column else []) + list(self.extra) + list(self.by) + list(self.categories)
        wanted += [self.weight] if self.weight else []
        return tuple(dict.fromkeys(wanted))


def plan_for(spec: Any, *, cross_products: str | None = "listwise", answers: bool = True, scores: bool = False,
             by: tuple[str, ...] = (), categories: tuple[str, ...] = (), joint: bool = False,
             patterns: bool = False) -> SummaryPlan:
    """The plan of every scale of ``spec``."""
    index = {name: position for position, name in enumerate(spec.items)}
    categories = tuple(name for name in categories if name not in index)  # items are counted per scale
    scales = tuple(ScalePlan(name=name, positions=tuple(index[item] for item in scale.items),
                             low=int(scale.response.min), high=int(scale.response.max),
                             reversed_mask=tuple(scale.is_reversed(item) for item in scale.items),
                             method=scale.score, required=int(scale.required_answered()))
                   for name, scale in spec.scales.items())
    return SummaryPlan(scales=scales, cross_products=cross_products, answers=answers, scores=scores, by=tuple(by),
                       categories=tuple(categories), id_column=spec.id_column, extra=tuple(spec.groups), joint=joint,
                       patterns=patterns)


def summarise_codes(codes: np.ndarray, plan: SummaryPlan, weights: np.ndarray | None = None) -> Keyed:
    """Per scale, the summaries the plan asks for of these rows' answer codes (and of their ``weights``
    when the plan names a weight column: :func:`.weighted.weighted_members`)."""
    parts = {}
    for scale in plan.scales:
        part = np.asarray(codes[:, list(scale.positions)], order="F")
        span = scale.high - scale.low
        members: dict[str, Any] = {}
        if plan.answers:
            members["answers"] = AnswerCounts.from_codes(part, span + 1)
        if plan.cross_products == "listwise":
            members["cross_products"] = ListwiseCrossProducts.from_codes(part, span=span)
        elif plan.cross_products == "pairwise":
            members["cross_products"] = PairwiseCrossProducts.from_codes(part, span=span)
        if plan.patterns:  # the complete rows' statistics are the listwise cross-products, when kept
            listwise = members.get("cross_products")
            members["patterns"] = PatternSummary.from_codes(
                part, complete_gram=listwise.gram if isinstance(listwise, ListwiseCrossProducts) else None)
        if plan.pair_tables:
            members["pair_tables"] = _pair_tables(part, span, listwise=plan.pair_tables == "listwise")
        if plan.scores:
            members["scores"] = ScoreCounts.from_codes(part, low=scale.low, high=scale.high,
                                                       reversed_mask=np.array(scale.reversed_mask),
                                                       method=scale.method, required=scale.required)
        if plan.weight and weights is not None:
            from .weighted import weighted_members

            members.update(weighted_members(part, weights, scale, plan))
        parts[scale.name] = Summary(members)
    return Keyed(parts)


def _pair_tables(codes: np.ndarray, span: int, *, listwise: bool) -> PairTables:
    """The pair tables of these rows (of those answering every item when ``listwise``), span + 1 levels."""
    from ..answer_codes import MISSING

    if listwise and codes.shape[1]:
        codes = codes[(codes != MISSING).all(axis=1)]
    return pair_tables(np.ascontiguousarray(codes), span + 1)


def level_keys(values) -> tuple[np.ndarray, list[str]]:
    """Each row's level as a position into the list of levels (as read, text stripped; -1 missing)."""
    import pandas as pd

    from ..summaries.categories import level_texts

    positions, uniques = pd.factorize(level_texts(values))
    return positions, [str(u) for u in uniques]


def summarise_block(block: Any, plan: SummaryPlan) -> Summary:
    """The summary of one block of rows (see the module notes for its members)."""
    by: dict[str, Keyed] = {}
    weights = weight_reading = None
    if plan.weight:
        from ..summaries.weighted import block_weights

        weights, weight_reading = block_weights(block.columns[plan.weight], (block.part, block.first_row, block.file))
    for column in plan.by:
        positions, levels = level_keys(block.columns[column])
        by[column] = Keyed({level: summarise_codes(block.codes[positions == index], plan,
                                                   None if weights is None else weights[positions == index])
                            for index, level in enumerate(levels)})
    categories = {column: CategoryCounts.from_values(block.columns[column])
                  for column in dict.fromkeys([*plan.by, *plan.categories])}
    members = {"reading": block.reading, "scales": summarise_codes(block.codes, plan, weights), "by": Keyed(by),
               "categories": Keyed(categories)}
    if weight_reading is not None and weights is not None:
        from ..summaries.weighted import WeightedCategoryCounts

        members["weight_reading"] = weight_reading
        # the exact sums of w and w squared of every row (the report's "Survey weights" section)
        from ..summaries.exact_weighted import ExactWeightedCrossProducts

        members["w_rows"] = ExactWeightedCrossProducts.from_codes(np.empty((block.n, 0), dtype=np.uint8), weights)
        members["w_categories"] = Keyed({column: WeightedCategoryCounts.from_values(block.columns[column], weights)
                                         for column in dict.fromkeys([*plan.by, *plan.categories])})
    if plan.joint:
        span = max((scale.high - scale.low for scale in plan.scales), default=1)
        members.update(joint_members(block.codes, span=span, cross_products=plan.joint_cross_products,
                                     pair_tables=plan.joint_pair_tables))
        if weights is not None:
            from ..summaries.exact_weighted import ExactWeightedCrossProducts

            members["w_joint"] = ExactWeightedCrossProducts.from_codes(block.codes, weights)
    return Summary(members)


def joint_members(codes: np.ndarray, *, span: int, cross_products: str = "listwise",
                  pair_tables: bool = False) -> dict[str, Any]:
    """The summaries of every item together (the factor structure) of these rows' codes: ``joint`` (listwise
    or pairwise cross-products), ``joint_patterns`` (per-pattern statistics: the missing-data block, Little's
    test, EM) and, with ``pair_tables``, ``joint_pair_tables`` (rows answering every item). The whole-file
    route makes them of all its rows at once, so both routes analyse the same integers."""
    joint = (PairwiseCrossProducts if cross_products == "pairwise" else ListwiseCrossProducts).from_codes(codes,
                                                                                                        span=span)
    # listwise: the complete rows' statistics of the per-pattern sums are these cross-products
    members: dict[str, Any] = {
        "joint": joint,
        "joint_patterns": PatternSummary.from_codes(
            codes, complete_gram=joint.gram if isinstance(joint, ListwiseCrossProducts) else None)}
    if pair_tables:
        members["joint_pair_tables"] = _pair_tables(codes, span, listwise=True)
    return members

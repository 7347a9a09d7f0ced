"""Reliability of every scale, overall and per subgroup."""
from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from ..responses import Responses
    from ..spec_model import ScaleSpec
    from ..stats.reliability_flags import ReliabilityThresholds
    from ..stats.reliability_groups import ScaleReliabilityReport


def analyse_reliability(spec: ScaleSpec, responses: Responses, *, by: Sequence[str] = (),
                        confidence_level: float = 0.95, pairwise: bool = False, min_group: int = 10,
                        n_resamples: int = 0, seed: int | None = None,
                        thresholds: ReliabilityThresholds | None = None, ordinal: bool = False,
                        missing: str | None = None) -> dict[str, ScaleReliabilityReport]:
    """:class:`~scalewright.stats.reliability_groups.ScaleReliabilityReport` of every scale of ``spec``.

    Plain library function (no click): the report builds on it. ``by`` names subgroup columns; ``missing``
    (listwise, pairwise or em) overrides ``pairwise``. ``ordinal`` adds ordinal alpha, omega and the sum
    score's reliability from polychoric correlations.
    """
    # polychoric pair tables know listwise and pairwise rows; under em they use the pairwise ones
    pairwise_rows = missing in ("pairwise", "em") if missing is not None else pairwise
    from ..answer_codes import ItemAnswers
    from ..concurrency import map_in_threads
    from ..scoring import keyed_items
    from ..stats.reliability import scale_reliability
    from ..stats.reliability_flags import ReliabilityThresholds
    from ..stats.reliability_groups import ScaleReliabilityReport, reliability_by_group
    from ..stats.subgroups import split_by
    from .ordinal import scale_ordinal

    thresholds = thresholds or ReliabilityThresholds()
    splits = [split_by(responses.column(column), min_size=min_group, column=column) for column in by]

    def analyse(name: str) -> ScaleReliabilityReport:
        scale = spec.scales[name]
        codes = responses.codes(scale.items)
        # one-byte codes are keyed inside the statistics; only answers off the whole levels need floats
        keyed = (ItemAnswers.from_codes(codes, scale.response.min, scale.response.max) if codes is not None
                 else keyed_items(responses, scale))
        options: dict[str, Any] = dict(item_names=scale.items, low=scale.response.min, high=scale.response.max,
                                       confidence_level=confidence_level, pairwise=pairwise, thresholds=thresholds,
                                       reversed_items=scale.reverse, n_resamples=n_resamples, seed=seed,
                                       missing=missing)
        overall = scale_reliability(keyed, **options)
        groups = tuple(reliability_by_group(keyed, split, **options) for split in splits)
        ordinal_result, advice = scale_ordinal(responses, scale, overall, pairwise=pairwise_rows, estimate=ordinal)
        return ScaleReliabilityReport(name=name, title=scale.title, overall=overall, groups=groups,
                                      ordinal=ordinal_result, ordinal_advice=advice)

    names = list(spec.scales)
    return dict(zip(names, map_in_threads(analyse, names), strict=True))

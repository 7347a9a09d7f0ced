"""Careless-responding and data-quality indices of every respondent."""
from __future__ import annotations

from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from ..responses import Responses
    from ..spec_model import ScaleSpec
    from ..stats.screen_rules import ScreenThresholds
    from ..stats.screening import ScreenResult
    from ..weights import SurveyWeights


def questionnaire_order(responses: Responses) -> list[int]:
    """Positions of the item columns in the order they stand in the data file (the order shown)."""
    return [responses.item_names.index(name) for name in responses.items_in_file_order()]


def analyse_screen(spec: ScaleSpec, responses: Responses, *, duration_column: str | None = None,
                   thresholds: ScreenThresholds | None = None, duration_unit: str = "s") -> ScreenResult:
    """:class:`~scalewright.stats.screening.ScreenResult` of the responses (plain function; the report uses it)."""
    import numpy as np

    from ..errors import DataError
    from ..scoring import keyed_items
    from ..stats.screen_rules import ScreenThresholds
    from ..stats.screening import screen_respondents

    order = questionnaire_order(responses)
    raw = responses.items[:, order]
    keyed = {name: keyed_items(responses, scale) for name, scale in spec.scales.items()}
    durations = None
    if duration_column:
        import pandas as pd

        column = responses.column(duration_column)
        values = pd.to_numeric(column, errors="coerce")
        bad = values.isna() & column.notna()
        if bad.any():
            first = int(np.flatnonzero(bad.to_numpy())[0])
            raise DataError(f"{responses.path}: column {duration_column!r}, row {int(responses.line_numbers[first])}: "
                            f"{column.iloc[first]!r} is not a number of seconds or minutes")
        durations = values.to_numpy(dtype=float, na_value=np.nan)
    weights = getattr(responses, "weights", None)
    return screen_respondents(raw, keyed, ids=[str(i) for i in responses.ids],
                              thresholds=thresholds or ScreenThresholds(), durations=durations,
                              duration_unit=duration_unit, weights=None if weights is None else weights.values)


def weighted_screen_summary(result: ScreenResult, weights: SurveyWeights) -> dict[str, Any]:
    """The shares of flagged respondents weighted (percent of the sum of weights) beside the unweighted counts.

    Flags are a respondent's own and do not depend on their weight; the weighted share says how much of the
    population the flagged records stand for. Rows of weight 0 are flagged like any other but weigh nothing.
    """
    import numpy as np

    from ..stats.weighted import design_effect, kish_effective_n

    w = np.asarray(weights.values, dtype=float)
    total = float(w.sum())

    def share(mask: np.ndarray) -> float:
        return 100.0 * float(w[mask].sum()) / total if total > 0 else float("nan")

    flagged = np.asarray(result.flagged, dtype=bool)
    per_flag: dict[str, float | None] = {}
    for code, count in result.flag_counts().items():
        per_flag[code] = None if count is None else share(np.array([code in codes for codes in result.flags],
                                                                    dtype=bool).reshape(-1))
    return {"weighted": True, "weight_column": weights.column, "n": int(w.size),
            "n_zero_weight": weights.n_zero_weight, "n_effective": kish_effective_n(w), "sum_of_weights": total,
            "design_effect": design_effect(w), "n_flagged": int(flagged.sum()), "flagged_pct": share(flagged),
            "flagged_unweighted_pct": 100.0 * float(flagged.mean()) if flagged.size else float("nan"),
            "flag_pct": per_flag}

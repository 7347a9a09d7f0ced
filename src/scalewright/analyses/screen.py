"""Careless-responding and data-quality indices of every respondent."""
from __future__ import annotations

from typing import Any


def questionnaire_order(responses: Any) -> list[int]:
    """Positions of the item columns in the order they stand in the data file (the order shown)."""
    return [responses.item_names.index(name) for name in responses.items_in_file_order()]


def analyse_screen(spec: Any, responses: Any, *, duration_column: str | None = None, thresholds: Any = None,
                   duration_unit: str = "s") -> Any:
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
    return screen_respondents(raw, keyed, ids=[str(i) for i in responses.ids],
                              thresholds=thresholds or ScreenThresholds(), durations=durations,
                              duration_unit=duration_unit)

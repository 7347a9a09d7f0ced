"""Number formatting for people (APA style) -- the only place numbers are rounded."""
from __future__ import annotations

import math
from typing import Any

#: column kinds a Table may declare
KINDS = ("num", "bounded", "p", "int", "pct", "bar", "text")


def _is_missing(value: Any) -> bool:
    return value is None or (isinstance(value, float) and math.isnan(value))


def format_value(value: Any, kind: str = "num", decimals: int = 2) -> str:
    """Format one value.

    ``bounded`` is for statistics that cannot exceed 1 in size (alpha, r, omega): no leading zero (.84).
    ``p`` gives ``< .001`` below one thousandth and three decimals otherwise.
    ``pct`` gives one decimal and no sign; ``bar`` a share in percent with a text bar. ``int`` counts; ``text`` as is. Missing values show as an en dash.
    """
    if _is_missing(value):
        return "–"
    if kind == "text" or isinstance(value, str):
        return str(value)
    if isinstance(value, bool):
        return "yes" if value else "no"
    if kind == "int":
        return f"{int(round(float(value))):d}"
    number = float(value)
    if math.isinf(number):
        return "∞" if number > 0 else "-∞"
    if kind == "p":
        if number < 0.001:
            return "< .001"
        return _strip_zero(f"{number:.3f}")
    if kind == "pct":
        return f"{number:.1f}"
    if kind == "bar":  # a share in percent, drawn as a bar of tenths after the number (HTML draws its own)
        return f"{number:.1f} " + "█" * int(round(max(0.0, min(100.0, number)) / 10))
    text = f"{number:.{decimals}f}"
    if text.startswith("-") and float(text) == 0:
        text = text[1:]
    return _strip_zero(text) if kind == "bounded" else text


def _strip_zero(text: str) -> str:
    if text.startswith("0."):
        return text[1:]
    if text.startswith("-0."):
        return "-" + text[2:]
    return text

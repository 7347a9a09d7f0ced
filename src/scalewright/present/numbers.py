"""Number formatting for people (APA style) -- the only place numbers are rounded."""
from __future__ import annotations

import math
from typing import Any

#: column kinds a Table may declare
KINDS = ("num", "bounded", "p", "int", "pct", "bar", "text", "whole")


def _is_missing(value: Any) -> bool:
    return value is None or (isinstance(value, float) and math.isnan(value))


def format_value(value: Any, kind: str = "num", decimals: int = 2) -> str:
    """Format one value.

    ``bounded`` is for statistics that cannot exceed 1 in size (alpha, r, omega): no leading zero (.84).
    ``p`` gives ``< .001`` below one thousandth and three decimals otherwise.
    ``pct`` gives one decimal and no sign; ``bar`` a share in percent with a text bar. ``int`` counts; ``whole``
    a whole number when the value is whole (degrees of freedom, U statistics) and ``num`` otherwise; ``text`` as
    is. Missing values show as an en dash.
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
    if kind == "whole" and number.is_integer():  # degrees of freedom, U: whole when they are whole
        return f"{int(number):d}"
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


#: the most decimals a number is given to read true beside its cut-off
MAX_DECIMALS_NEAR_CUTOFF = 6


def format_against(value: Any, cutoff: float, kind: str = "num", decimals: int = 2) -> tuple[str, str]:
    """``value`` and ``cutoff`` formatted so that the comparison between them reads true.

    Near a cut-off, rounding can make a value look equal to it ("r = .30, below .30") or on the wrong side
    ("3.0 is below 3"). Decimals are added (to both, up to :data:`MAX_DECIMALS_NEAR_CUTOFF`) until the
    shown value sits on the same side of the shown cut-off as the true value does. A value that equals
    the cut-off exactly is shown equal.
    """
    if _is_missing(value) or not math.isfinite(float(value)):
        return format_value(value, kind, decimals), format_value(cutoff, kind, decimals)
    number = float(value)
    # a cut-off is shown as it is (.305 stays .305), and the value with at least as many decimals
    exact = next((d for d in range(decimals, MAX_DECIMALS_NEAR_CUTOFF + 1) if abs(round(cutoff, d) - cutoff) < 1e-12),
                 MAX_DECIMALS_NEAR_CUTOFF)
    places = exact
    while places < MAX_DECIMALS_NEAR_CUTOFF:
        shown, limit = float(f"{number:.{places}f}"), float(f"{cutoff:.{places}f}")
        if (shown > limit) == (number > cutoff) and (shown < limit) == (number < cutoff):
            break
        places += 1
    # the cut-off keeps its usual decimals unless they would hide a digit the comparison used (.305, not .31)
    cutoff_places = min(exact, places)
    cutoff_text = format_value(cutoff, kind, cutoff_places)
    return format_value(number, kind, places), cutoff_text


def whole_or_decimal(value: Any, decimals: int = 2) -> str:
    """A count-like statistic (degrees of freedom, Mann-Whitney U): a whole number when it is whole."""
    if _is_missing(value):
        return format_value(value)
    number = float(value)
    if math.isfinite(number) and number.is_integer():
        return f"{int(number):d}"
    return format_value(number, "num", decimals)

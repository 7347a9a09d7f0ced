"""How large an effect size is, in words: the benchmarks of Cohen (1988), Statistical Power Analysis for the
Behavioral Sciences, 2nd ed. (common practice; Cohen himself called them a last resort)."""
from __future__ import annotations

import math

#: |value| at which an effect becomes small, medium, large
BENCHMARKS: dict[str, tuple[float, float, float]] = {
    "Hedges' g": (0.2, 0.5, 0.8),
    "rank-biserial r": (0.1, 0.3, 0.5),
    "omega-squared": (0.01, 0.06, 0.14),
    "epsilon-squared": (0.01, 0.06, 0.14),
}
MAGNITUDES = ("negligible", "small", "medium", "large")


def effect_magnitude(name: str, value: float | None) -> str:
    """``negligible``, ``small``, ``medium`` or ``large`` by Cohen's benchmarks; ``unknown`` without a value."""
    if value is None or not math.isfinite(value) or name not in BENCHMARKS:
        return "unknown"
    small, medium, large = BENCHMARKS[name]
    size = abs(value)
    return "negligible" if size < small else "small" if size < medium else "medium" if size < large else "large"

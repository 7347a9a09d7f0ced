"""scalewright: score, check and describe multi-item rating scales from one scale file and one data file.

Scores describe groups of respondents; they are not a diagnosis or a basis for decisions about one person.
"""
from __future__ import annotations

__version__ = "0.1.0"

from .errors import DataError, Problem, ScalewrightError, SpecError, UsageError

__all__ = [
    "__version__",
    "DataError",
    "Problem",
    "ScalewrightError",
    "SpecError",
    "UsageError",
]

"""scalewright: score, check and describe multi-item rating scales from one scale file and one data file.

Scores describe groups of respondents; they are not a diagnosis or a basis for decisions about one person.

The library in brief::

    spec = scalewright.load_spec("survey.yaml")
    responses = scalewright.read_responses("survey.csv", spec)
    scores = scalewright.score_scales(responses, spec)          # .to_frame() for a DataFrame
    reliability = scalewright.analyse_reliability(spec, responses, by=["shift"])
"""
from __future__ import annotations

import importlib
from typing import Any

__version__ = "0.1.0"

from .errors import DataError, Problem, ScalewrightError, SpecError, UsageError

#: public name -> module that defines it; loaded on first use so `import scalewright` stays quick
_LAZY = {
    "load_spec": "spec",
    "check_spec": "spec",
    "read_responses": "data",
    "read_table": "data_file",
    "score_scales": "scoring",
    "write_scores": "scoring",
    "analyse_reliability": "analyses.reliability",
    "analyse_shape": "analyses.shape",
    "analyse_compare": "analyses.compare",
    "analyse_screen": "analyses.screen",
    "build_report": "report",
}

__all__ = [
    "__version__",
    "DataError",
    "Problem",
    "ScalewrightError",
    "SpecError",
    "UsageError",
    *_LAZY,
]


def __getattr__(name: str) -> Any:
    if name in _LAZY:
        return getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
    raise AttributeError(f"module 'scalewright' has no attribute {name!r}")

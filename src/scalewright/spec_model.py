"""What a scale file says, once read and checked: the answer format, each scale, the whole file.

Immutable dataclasses only; :mod:`scalewright.spec` reads a scale file into them.
"""
from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from .errors import did_you_mean

SCORE_METHODS = ("mean", "sum")
TOP_KEYS = ("version", "title", "id_column", "groups", "weight", "missing_texts", "response", "scales")
RESPONSE_KEYS = ("min", "max", "labels", "missing_codes", "missing_texts")
#: texts read as "no answer" unless the scale file lists its own (``missing_texts``); matched as labels are
DEFAULT_MISSING_TEXTS = ("NA", "N/A", "#N/A")
SCALE_KEYS = ("title", "items", "reverse", "score", "min_answered", "wording", "response")
SCALE_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_.-]*$")
#: a number as the scale file may write one: plain decimal (YAML 1.1 would also read 0x1F, 0o17, 1_000
#: and 1:30 as numbers, which nobody means in an answer format)
PLAIN_DECIMAL = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?", re.ASCII)


def normalise_answer_text(text: str) -> str:
    """Case- and whitespace-insensitive form of an answer text."""
    return " ".join(str(text).split()).casefold()


@dataclass(frozen=True)
class ResponseFormat:
    """The answer format of rating items: the code range, answer texts and "no answer" codes."""

    min: int
    max: int
    labels: Mapping[int, str] = field(default_factory=dict)
    missing_codes: tuple[float, ...] = ()
    #: texts that mean "no answer" (matched ignoring case and spacing, as labels are)
    missing_texts: tuple[str, ...] = DEFAULT_MISSING_TEXTS

    @property
    def levels(self) -> tuple[int, ...]:
        return tuple(range(self.min, self.max + 1))

    @property
    def midpoint(self) -> float:
        return (self.min + self.max) / 2

    def code_for_text(self) -> dict[str, int]:
        """Normalised answer text -> code."""
        return {normalise_answer_text(text): code for code, text in self.labels.items()}

    def missing_text_for(self) -> dict[str, str]:
        """Normalised "no answer" text -> the text as the scale file lists it."""
        return {normalise_answer_text(text): text for text in self.missing_texts}

    def label(self, code: int) -> str:
        return self.labels.get(code, str(code))

    def to_dict(self) -> dict[str, Any]:
        return {"min": self.min, "max": self.max, "labels": {str(k): v for k, v in self.labels.items()},
                "missing_codes": list(self.missing_codes), "missing_texts": list(self.missing_texts)}


@dataclass(frozen=True)
class Scale:
    """One multi-item scale as the scale file defines it."""

    name: str
    title: str
    items: tuple[str, ...]
    reverse: tuple[str, ...]
    score: str
    min_answered: int | float
    response: ResponseFormat
    wording: Mapping[str, str] = field(default_factory=dict)
    line: int | None = None

    @property
    def k(self) -> int:
        return len(self.items)

    def is_reversed(self, item: str) -> bool:
        return item in self.reverse

    def required_answered(self) -> int:
        """How many items a respondent must have answered to get a score."""
        if isinstance(self.min_answered, int):
            return self.min_answered
        return max(1, math.ceil(self.min_answered * self.k - 1e-9))

    def describe_rule(self) -> str:
        need = self.required_answered()
        how = "mean of the answered items" if self.score == "mean" else \
            f"sum prorated to {self.k} items (mean of the answered items x {self.k})"
        return f"{how}; needs at least {need} of {self.k} items answered"

    def to_dict(self) -> dict[str, Any]:
        return {"title": self.title, "items": list(self.items), "reverse": list(self.reverse),
                "score": self.score, "min_answered": self.min_answered,
                "required_answered": self.required_answered(), "response": self.response.to_dict()}


@dataclass(frozen=True)
class ScaleSpec:
    """A validated scale file."""

    title: str
    id_column: str | None
    groups: tuple[str, ...]
    response: ResponseFormat
    scales: Mapping[str, Scale]
    path: str
    version: int = 1
    #: group column -> its levels in order, for columns given as ``{column: [level, ...]}`` in ``groups``
    group_levels: Mapping[str, tuple[str, ...]] = field(default_factory=dict)
    #: texts that mean "no answer" in the columns that are not items (groups, tallies)
    missing_texts: tuple[str, ...] = DEFAULT_MISSING_TEXTS
    #: group column -> {code as written in the data: level name}, for ``{column: {1: woman, 2: man}}``;
    #: the names (in the order listed) are also in ``group_levels``
    group_codes: Mapping[str, Mapping[str, str]] = field(default_factory=dict)
    #: the column of survey weights (``weight:``), or None
    weight: str | None = None

    @property
    def items(self) -> tuple[str, ...]:
        """Every item of every scale, in first-mentioned order, each once."""
        seen: dict[str, None] = {}
        for scale in self.scales.values():
            for item in scale.items:
                seen.setdefault(item, None)
        return tuple(seen)

    def response_for(self, item: str) -> ResponseFormat:
        for scale in self.scales.values():
            if item in scale.items:
                return scale.response
        return self.response

    def wording_for(self, item: str) -> str | None:
        for scale in self.scales.values():
            if item in scale.wording:
                return scale.wording[item]
        return None

    def scale(self, name: str) -> Scale:
        if name not in self.scales:
            from .errors import UsageError

            raise UsageError(f"no scale named {name!r} in {self.path}{did_you_mean(name, list(self.scales))}")
        return self.scales[name]


# ----------------------------------------------------------------------------------------------------------
# reading

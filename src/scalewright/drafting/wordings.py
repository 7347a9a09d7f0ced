"""Known answer wordings: each phrase's position on its family's ordered continuum, and the common selections."""
from __future__ import annotations

from ..errors import DataError
from ..spec_model import normalise_answer_text

# ----------------------------------------------------------------------------------------------------------
# answer wordings: each phrase has a position on its family's ordered continuum; a template is a common
# k-point selection of positions (common practice, no source).

WORDINGS: dict[str, dict[str, float]] = {
    "agreement": {
        "strongly disagree": -3, "completely disagree": -3, "totally disagree": -3, "fully disagree": -3,
        "disagree": -2,
        "somewhat disagree": -1, "slightly disagree": -1, "tend to disagree": -1, "mostly disagree": -1,
        "neither agree nor disagree": 0, "neither agree or disagree": 0, "neither disagree nor agree": 0,
        "neutral": 0, "undecided": 0,
        "somewhat agree": 1, "slightly agree": 1, "tend to agree": 1, "mostly agree": 1,
        "agree": 2,
        "strongly agree": 3, "completely agree": 3, "totally agree": 3, "fully agree": 3,
    },
    "frequency": {
        "never": 0,
        "very rarely": 1, "almost never": 1,
        "rarely": 2, "seldom": 2,
        "sometimes": 3, "occasionally": 3,
        "often": 4, "frequently": 4,
        "very often": 5, "almost always": 5, "usually": 5,
        "always": 6,
    },
    "satisfaction": {
        "extremely dissatisfied": -4, "completely dissatisfied": -4,
        "very dissatisfied": -3,
        "dissatisfied": -2,
        "somewhat dissatisfied": -1, "slightly dissatisfied": -1,
        "neither satisfied nor dissatisfied": 0, "neither dissatisfied nor satisfied": 0, "neutral": 0,
        "somewhat satisfied": 1, "slightly satisfied": 1,
        "satisfied": 2,
        "very satisfied": 3,
        "extremely satisfied": 4, "completely satisfied": 4,
    },
    "quality": {"very poor": -1, "poor": 0, "fair": 1, "good": 2, "very good": 3, "excellent": 4},
    "extent": {"not at all": 0, "a little": 1, "slightly": 1, "moderately": 2, "somewhat": 2,
               "quite a bit": 3, "a lot": 3, "extremely": 4, "very much": 4},
    "importance": {"not at all important": 0, "slightly important": 1, "moderately important": 2,
                   "very important": 3, "extremely important": 4},
    "likelihood": {"extremely unlikely": -4, "very unlikely": -3, "unlikely": -2, "somewhat unlikely": -1,
                   "neither likely nor unlikely": 0, "somewhat likely": 1, "likely": 2, "very likely": 3,
                   "extremely likely": 4},
}

TEMPLATES: dict[str, tuple[tuple[float, ...], ...]] = {
    "agreement": ((-3, -2, 2, 3), (-3, -2, 0, 2, 3), (-3, -2, -1, 1, 2, 3), (-3, -2, -1, 0, 1, 2, 3)),
    "frequency": ((0, 3, 4, 6), (0, 2, 3, 4, 6), (0, 1, 2, 3, 4, 5, 6)),
    "satisfaction": ((-3, -2, 2, 3), (-3, -2, 0, 2, 3), (-3, -2, -1, 0, 1, 2, 3), (-4, -3, -1, 0, 1, 3, 4)),
    "quality": ((0, 1, 2, 4), (0, 1, 2, 3, 4), (-1, 0, 1, 2, 3)),
    "extent": ((0, 1, 2, 3, 4),),
    "importance": ((0, 1, 2, 3, 4),),
    "likelihood": ((-3, -2, 2, 3), (-3, -2, 0, 2, 3), (-3, -2, -1, 0, 1, 2, 3), (-4, -3, -1, 0, 1, 3, 4)),
}


def canonical_phrase(family: str, position: float) -> str:
    """The first (canonical) phrase listed for a position, written as a label."""
    for phrase, where in WORDINGS[family].items():
        if where == position:
            return phrase[0].upper() + phrase[1:]
    raise DataError(f"no {family} wording at position {position}")  # only reachable by a broken template


def is_answer_wording(text: str) -> bool:
    """Whether a text is a known answer wording of any family (case- and whitespace-insensitive)."""
    normal = normalise_answer_text(text)
    return any(normal in phrases for phrases in WORDINGS.values())

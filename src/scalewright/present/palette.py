"""Colours for every figure: the Okabe & Ito (2008) colour-blind-safe palette."""
from __future__ import annotations

#: Okabe, M. & Ito, K. (2008). Color Universal Design -- eight colours distinguishable under common colour-vision deficiencies.
OKABE_ITO = (
    "#0072B2",  # blue
    "#E69F00",  # orange
    "#009E73",  # bluish green
    "#CC79A7",  # reddish purple
    "#56B4E9",  # sky blue
    "#D55E00",  # vermillion
    "#F0E442",  # yellow
    "#000000",  # black
)
PRIMARY = OKABE_ITO[0]
ACCENT = OKABE_ITO[5]
NEUTRAL_GREY = "#BBBBBB"

#: diverging scale for answer levels, disagree (vermillion/orange) through neutral (grey) to agree (blues)
DIVERGING_NEGATIVE = ("#D55E00", "#E69F00", "#F5C77E")
DIVERGING_POSITIVE = ("#9CCBEA", "#56B4E9", "#0072B2")


def diverging_colours(n_levels: int) -> list[str]:
    """Colours for ``n_levels`` ordered answer levels; a middle level (odd counts) is grey."""
    half = n_levels // 2
    # the strongest answers keep the strongest colours; the lighter tones are dropped first
    negative = list(DIVERGING_NEGATIVE[:half]) if half <= len(DIVERGING_NEGATIVE) else _stretch(DIVERGING_NEGATIVE, half)
    positive = list(DIVERGING_POSITIVE[-half:]) if half <= len(DIVERGING_POSITIVE) else _stretch(DIVERGING_POSITIVE, half)
    middle = [NEUTRAL_GREY] if n_levels % 2 else []
    return negative + middle + positive


def _stretch(colours: tuple[str, ...], n: int) -> list[str]:
    return [colours[min(int(i * len(colours) / n), len(colours) - 1)] for i in range(n)]

"""The survey mess added to the model's clean answers so the demo file looks like a real export.

About 5% careless respondents (half straight-liners, half random clickers; Meade & Craig, 2012), about 3% who
stopped part-way, scattered blanks, "no answer" codes 9 and 99, completion times (careless respondents are
fast), and answer texts instead of codes in some columns (in varying case and with stray spaces).

Every step draws from the generator it is given, in a fixed order, so a seed keeps its data.

References
----------
.. [1] Meade, A. W., & Craig, S. B. (2012). Identifying careless responses in survey data.
       Psychological Methods 17, 437-455.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from .demo_model import ITEMS, SCALES

AGREE_LABELS = {1: "Strongly disagree", 2: "Disagree", 3: "Neither agree nor disagree", 4: "Agree",
                5: "Strongly agree"}
LIKELY_LABELS = {1: "Extremely unlikely", 2: "Very unlikely", 3: "Somewhat unlikely",
                 4: "Neither likely nor unlikely", 5: "Somewhat likely", 6: "Very likely", 7: "Extremely likely"}
MISSING_CODES = (9, 99)

#: columns that arrive as answer texts: item -> (group column, level) or None for the whole column
TEXT_COLUMNS: dict[str, tuple[str, str] | None] = {
    "rc2": None,
    **{item: ("site", "Millbrook Community") for item in ("ts1", "ts2", "ts3", "ts4", "ts5")},
    "it2": ("shift", "night"),
}

CARELESS_SHARE = 0.05
PARTIAL_SHARE = 0.03
BLANK_SHARE = 0.006
CODE_9_SHARE = 0.006
CODE_99_SHARE = 0.002


@dataclass(frozen=True)
class Mess:
    """The answers with the mess in, and who was made careless or stopped part-way, and how long each took."""

    answers: np.ndarray          # n x items, float: codes, NaN for blanks, 9 and 99 for "no answer"
    careless_kind: np.ndarray    # "straight-line", "random" or ""
    partial: np.ndarray          # bool: stopped part-way
    seconds: np.ndarray          # completion time


def answer_ranges() -> tuple[np.ndarray, np.ndarray]:
    """Lowest and highest answer code of every item, in file order."""
    lows = np.concatenate([[s.low] * len(s.items) for s in SCALES])
    highs = np.concatenate([[s.high] * len(s.items) for s in SCALES])
    return lows, highs


def add_mess(rng: np.random.Generator, answers: np.ndarray) -> Mess:
    """Careless and partial respondents, blanks, "no answer" codes and completion times (``answers`` is changed)."""
    n, p = answers.shape
    lows, highs = answer_ranges()

    # careless respondents: half straight-line one code, half click at random within each item's range
    n_careless = max(2, int(round(CARELESS_SHARE * n)))
    careless_rows = rng.choice(n, size=n_careless, replace=False)
    straight, random_rows = careless_rows[: n_careless // 2], careless_rows[n_careless // 2:]
    answers[straight] = rng.integers(1, 6, size=(len(straight), 1))
    answers[random_rows] = rng.integers(lows, highs + 1, size=(len(random_rows), p))
    kind = np.full(n, "", dtype=object)
    kind[straight] = "straight-line"
    kind[random_rows] = "random"

    # respondents who stopped part-way (items are asked in file order)
    n_partial = max(1, int(round(PARTIAL_SHARE * n)))
    partial_rows = rng.choice(np.setdiff1d(np.arange(n), careless_rows), size=n_partial, replace=False)
    stop = rng.integers(3, p - 1, size=n_partial)
    answers[partial_rows[:, None], np.arange(p)[None, :]] = np.where(
        np.arange(p)[None, :] >= stop[:, None], np.nan, answers[partial_rows])
    partial = np.zeros(n, dtype=bool)
    partial[partial_rows] = True

    # scattered blanks and "no answer" codes
    draw = rng.random((n, p))
    answered = ~np.isnan(answers)
    answers[answered & (draw < BLANK_SHARE)] = np.nan
    answers[answered & (draw >= BLANK_SHARE) & (draw < BLANK_SHARE + CODE_9_SHARE)] = 9
    answers[answered & (draw >= BLANK_SHARE + CODE_9_SHARE)
            & (draw < BLANK_SHARE + CODE_9_SHARE + CODE_99_SHARE)] = 99

    # response duration: careless respondents are fast, partial ones stopped early
    seconds = np.asarray(rng.lognormal(np.log(470), 0.35, size=n))
    seconds[straight] = rng.lognormal(np.log(150), 0.30, size=len(straight))
    seconds[random_rows] = rng.lognormal(np.log(135), 0.30, size=len(random_rows))
    seconds[partial_rows] *= (stop + 1) / p
    return Mess(answers=answers, careless_kind=kind, partial=partial, seconds=seconds)


def answers_as_text(rng: np.random.Generator, frame: pd.DataFrame, answers: np.ndarray) -> None:
    """Put answer texts in place of the codes of :data:`TEXT_COLUMNS` (in ``frame``, where the answer is valid)."""
    n = len(frame)
    lows, highs = answer_ranges()
    for item, where in TEXT_COLUMNS.items():
        j = ITEMS.index(item)
        labels = LIKELY_LABELS if highs[j] == 7 else AGREE_LABELS
        rows = np.ones(n, dtype=bool) if where is None else (frame[where[0]].to_numpy() == where[1])
        rows &= (answers[:, j] >= lows[j]) & (answers[:, j] <= highs[j])
        column = frame[item].astype(object).where(frame[item].notna(), None)
        column[rows] = _as_text(rng, answers[rows, j], labels)
        frame[item] = column


def _as_text(rng: np.random.Generator, codes: np.ndarray, labels: dict[int, str]) -> np.ndarray:
    """Answer texts for integer codes, in the varying spellings a survey export produces."""
    low = min(labels)
    table = np.array([labels[c] for c in sorted(labels)], dtype=object)
    text = pd.Series(table[codes.astype(int) - low], dtype=object)
    style = rng.choice(5, size=len(codes), p=(0.65, 0.12, 0.06, 0.10, 0.07))
    lower = text.str.lower()
    text = text.where(style != 1, lower)
    text = text.where(style != 2, text.str.upper())
    text = text.where(style != 3, " " + lower + " ")
    text = text.where(style != 4, text + "  ")
    text = text.to_numpy(dtype=object)
    return text

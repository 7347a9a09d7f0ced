"""The answer format of a group of rating columns: range, order of answer texts and "no answer" codes."""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..spec_model import normalise_answer_text
from .columns import ParsedColumn
from .results import AnswerFormat, ColumnProfile
from .wordings import TEMPLATES, WORDINGS, canonical_phrase

# ----------------------------------------------------------------------------------------------------------
# answer format of a group of rating columns


def _wording_positions(texts: set[str]) -> list[tuple[str, dict[str, float]]]:
    """Families in which every (normalised) text is a known phrase, with the texts' positions."""
    found = []
    for family, phrases in WORDINGS.items():
        if texts and all(t in phrases for t in texts):
            found.append((family, {t: phrases[t] for t in texts}))
    return found


def infer_answer_format(profiles: list[ColumnProfile]) -> tuple[AnswerFormat, list[str]]:
    """Answer range, labels and "no answer" codes of a group of rating columns, with notes to check.

    Answer texts are ordered by their wording; their codes continue the numeric codes seen in the same
    columns: among the common k-point wordings holding every text seen, the one whose codes, together with
    the numbers seen, fill its whole range, without a text and a number of the same column sharing a code.
    """
    notes: list[str] = []
    lows = [p.low for p in profiles if p.low is not None]
    highs = [p.high for p in profiles if p.high is not None]
    first_seen: dict[str, str] = {}  # normalised text -> the label written for it
    for profile in profiles:
        for text in profile.texts:
            normal = normalise_answer_text(text)
            first_seen.setdefault(normal, normal[0].upper() + normal[1:])
    labels: dict[int, str] = {}
    family: str | None = None
    if first_seen:
        fits = _wording_positions(set(first_seen))
        if not fits:
            notes.append("answer texts mix wordings of different kinds: " +
                         ", ".join(repr(t) for t in first_seen.values()) + "; no labels written")
        else:
            family, positions = fits[0]
            if len(fits) > 1:
                notes.append(f"answer texts fit several kinds of wording ({', '.join(f for f, _ in fits)}); "
                             f"took {family}")
            labels, label_notes = _codes_for_texts(profiles, family, positions, first_seen, lows, highs)
            notes.extend(label_notes)
            if not labels:
                family = None
    low = int(min([*lows, *labels])) if lows or labels else 1
    high = int(max([*highs, *labels])) if highs or labels else low + 1
    if high <= low:
        high = low + 1
        notes.append(f"only one answer value ({low}) was seen; the range {low}..{high} is a guess")
    if not labels and low not in (0, 1):
        notes.append(f"the lowest answer seen is {low}: check whether the questionnaire offered lower ones")
    widths = {(p.low, p.high) for p in profiles if p.low is not None}
    if len(widths) > 1:
        spans = ", ".join(f"{p.name} {p.low:g}-{p.high:g}" for p in profiles if p.low is not None)
        notes.append(f"the items' answers span different ranges ({spans}); the draft uses {low}..{high}")
    codes: set[float] = set()
    for profile in profiles:
        for code in profile.codes:
            if low <= code <= high:
                notes.append(f"{code:g} looks like a 'no answer' code in {profile.name} but lies inside the "
                             f"answer range {low}..{high}: check")
            else:
                codes.add(code)
    for profile in profiles:
        if profile.odd_values:
            notes.append(f"{profile.name}: value(s) {', '.join(f'{v:g}' for v in profile.odd_values)} lie far "
                         "outside the other answers and are not 'no answer' codes: fix them in the data")
        if profile.odd_texts:
            notes.append(f"{profile.name}: text(s) {', '.join(repr(t) for t in profile.odd_texts)} are not "
                         "answer wordings: recode them in the data")
    return AnswerFormat(min=low, max=high, labels=tuple(sorted(labels.items())), missing_codes=tuple(sorted(codes)),
                        wording=family), notes


def _codes_for_texts(profiles: list[ColumnProfile], family: str, positions: dict[str, float],
                     first_seen: dict[str, str], lows: list[float], highs: list[float]) \
        -> tuple[dict[int, str], list[str]]:
    notes: list[str] = []
    by_position: dict[float, list[str]] = {}
    for normal, position in positions.items():
        by_position.setdefault(position, []).append(first_seen[normal])
    for texts in by_position.values():
        if len(texts) > 1:
            notes.append(f"answer texts {', '.join(repr(t) for t in texts)} mean the same; a label can hold only "
                         f"one, so recode the others to {texts[0]!r} in the data")
    seen = sorted(by_position)
    if not lows:
        # texts only: consecutive codes from 1 in the order of the wording
        labels = {1 + i: by_position[p][0] for i, p in enumerate(seen)}
        if not any(tuple(seen) == t for t in TEMPLATES[family]):
            notes.append(f"the {len(seen)} {family} texts seen are not a common {len(seen)}-point wording: "
                         "check that no answer option went unchosen (codes would shift)")
        return labels, notes
    a, b = int(min(lows)), int(max(highs))
    best: tuple[tuple[int, ...], int, tuple[float, ...]] | None = None
    for template in TEMPLATES[family]:
        size = len(template)
        if not set(seen) <= set(template) or size < b - a + 1:
            continue
        for preference, start in enumerate(dict.fromkeys((1, 0, a, b - size + 1))):
            if start > a or start + size - 1 < b:
                continue
            text_codes = {start + template.index(p) for p in seen}
            full = set(range(a, b + 1)) | text_codes == set(range(start, start + size))
            # a wording exactly as wide as the numbers means texts spell codes in that range; otherwise the
            # texts extend the range and should sit outside the numbers seen
            inside = sum(a <= code <= b for code in text_codes)
            exact = size == b - a + 1
            key = (0 if full else 1, 0 if exact else 1, 0 if exact else inside, size, preference)
            if best is None or key < best[0]:
                best = (key, start, template)
    if best is None:
        notes.append(f"the answer texts ({', '.join(repr(t) for t in first_seen.values())}) do not fit the numeric "
                     f"codes {a}..{b} of the same columns; no labels written")
        return {}, notes
    (not_full, _, _, size, _), start, template = best
    labels = {start + i: by_position[p][0] if p in by_position else canonical_phrase(family, p)
              for i, p in enumerate(template)}
    if not_full or size > b - a + 1:
        notes.append(f"the numbers seen span {a}..{b} and the answer texts extend them to {start}..{start + size - 1}: "
                     "check where the texts sit among the codes")
    if len(seen) < size:
        notes.append("labels of answer options never seen as text use common wording: check them against the "
                     "questionnaire")
    return labels, notes


def answer_values(parsed: ParsedColumn, fmt: AnswerFormat) -> np.ndarray:
    """Numeric answers of a column under an answer format: texts via labels, codes and other values to NaN."""
    lookup = {normalise_answer_text(text): float(code) for code, text in fmt.labels}
    values = parsed.numbers.to_numpy(dtype=np.float64, na_value=np.nan).copy()
    texts = parsed.texts.dropna()
    if not texts.empty:
        decoded = {t: lookup.get(normalise_answer_text(t), np.nan) for t in pd.unique(texts)}
        mapped = texts.map(decoded).astype("float64")
        values[parsed.texts.notna().to_numpy()] = mapped.to_numpy()
    values[(values < fmt.min) | (values > fmt.max)] = np.nan
    return values

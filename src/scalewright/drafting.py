"""Drafting a first scale file from a data file's columns.

Pure analysis of a raw table (as :func:`scalewright.data.read_table` gives it): which columns hold rating
answers and which hold ids, categories, free text, dates or other numbers; which rating columns form
candidate scales (shared name stems, confirmed or split by their correlations); the answer range, the
order of answer texts and the "no answer" codes; and which items look reverse-worded. Every decision
carries its evidence so the written draft can show it to the person who has to check it.
"""
from __future__ import annotations

import math
import re
from collections import Counter
from dataclasses import dataclass, field, replace

import numpy as np
import pandas as pd

from .errors import DataError
from .results import ResultMixin
from .spec import SCALE_NAME, normalise_answer_text

# Column roles.
RATING = "rating"
ID = "id"
CATEGORY = "category"
FREE_TEXT = "free text"
DATE = "date"
NUMBER = "number"
EMPTY = "empty"
CONSTANT = "constant"
UNCLEAR = "unclear"
ROW_NUMBER = "row number"

MAX_RATING_POINTS = 11  # 0-10 is the widest common rating format (common practice, no source)
MAX_CATEGORY_LEVELS = 12  # more text levels than this reads as free text (common practice, no source)
MIN_ROWS_FOR_CORRELATIONS = 10
#: a stand-alone column of whole-number codes with this many levels reads as a coded category (gender 1/2,
#: education 1-5), proposed as a group; common practice, no source
CODED_GROUP_LEVELS = (2, 7)
# Items of one scale usually correlate at least about .15-.20 (Clark & Watson 1995, Psychol. Assess. 7:309-319,
# recalled from memory, suggest a mean inter-item r of .15-.50); below this an item is not grouped with the rest.
MIN_ABS_R = 0.20
ODD_TEXT_SHARE = 0.05  # rating columns may hold a few unknown texts, reported; more makes the column unclear

# ----------------------------------------------------------------------------------------------------------
# answer wordings: each phrase has a position on its family's ordered continuum; a template is a common
# k-point selection of positions (common practice, no source).

_WORDINGS: dict[str, dict[str, float]] = {
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

_TEMPLATES: dict[str, tuple[tuple[float, ...], ...]] = {
    "agreement": ((-3, -2, 2, 3), (-3, -2, 0, 2, 3), (-3, -2, -1, 1, 2, 3), (-3, -2, -1, 0, 1, 2, 3)),
    "frequency": ((0, 3, 4, 6), (0, 2, 3, 4, 6), (0, 1, 2, 3, 4, 5, 6)),
    "satisfaction": ((-3, -2, 2, 3), (-3, -2, 0, 2, 3), (-3, -2, -1, 0, 1, 2, 3), (-4, -3, -1, 0, 1, 3, 4)),
    "quality": ((0, 1, 2, 4), (0, 1, 2, 3, 4), (-1, 0, 1, 2, 3)),
    "extent": ((0, 1, 2, 3, 4),),
    "importance": ((0, 1, 2, 3, 4),),
    "likelihood": ((-3, -2, 2, 3), (-3, -2, 0, 2, 3), (-3, -2, -1, 0, 1, 2, 3), (-4, -3, -1, 0, 1, 3, 4)),
}


def _canonical_phrase(family: str, position: float) -> str:
    """The first (canonical) phrase listed for a position, written as a label."""
    for phrase, where in _WORDINGS[family].items():
        if where == position:
            return phrase[0].upper() + phrase[1:]
    raise DataError(f"no {family} wording at position {position}")  # only reachable by a broken template


def is_answer_wording(text: str) -> bool:
    """Whether a text is a known answer wording of any family (case- and whitespace-insensitive)."""
    normal = normalise_answer_text(text)
    return any(normal in phrases for phrases in _WORDINGS.values())


# ----------------------------------------------------------------------------------------------------------
# results


@dataclass(frozen=True)
class ColumnProfile(ResultMixin):
    """What one column of the data file looks like, and the role the draft gives it.

    ``low``/``high`` span the numeric answers once "no answer" codes (``codes``) and far-off odd values
    (``odd_values``) are set apart; ``texts`` are the distinct non-numeric values as written.
    """

    name: str
    role: str
    reason: str
    n_values: int
    n_blank: int
    n_distinct: int
    low: float | None = None
    high: float | None = None
    texts: tuple[str, ...] = ()
    odd_texts: tuple[str, ...] = ()
    codes: tuple[float, ...] = ()
    odd_values: tuple[float, ...] = ()
    stem: str | None = None


@dataclass(frozen=True)
class AnswerFormat(ResultMixin):
    """The answer format inferred for a group of rating columns."""

    min: int
    max: int
    labels: tuple[tuple[int, str], ...] = ()
    missing_codes: tuple[float, ...] = ()
    wording: str | None = None  # family of the answer texts, e.g. "agreement"

    def labels_dict(self) -> dict[int, str]:
        return dict(self.labels)


@dataclass(frozen=True)
class ReverseProposal(ResultMixin):
    """An item proposed for reverse keying, with its item-rest correlation before and after."""

    item: str
    r_as_worded: float  # with every item of the scale as worded
    r_reversed: float  # with the proposed reverse items keyed


@dataclass(frozen=True)
class ScaleDraft(ResultMixin):
    """One candidate scale: its items, proposed reverse items, answer format and the evidence."""

    name: str
    stem: str
    items: tuple[str, ...]
    reverse: tuple[ReverseProposal, ...]
    response: AnswerFormat
    n_used: int
    alpha_as_worded: float
    alpha_keyed: float
    item_rest_r: tuple[float, ...]  # per item, with the proposed keying
    notes: tuple[str, ...] = ()

    @property
    def reverse_items(self) -> tuple[str, ...]:
        return tuple(p.item for p in self.reverse)


@dataclass(frozen=True)
class SetAside(ResultMixin):
    """A column that looks like rating answers but was put in no scale, and why."""

    column: str
    stem: str | None
    reason: str


@dataclass(frozen=True)
class Draft(ResultMixin):
    """Everything the draft decided about a data file."""

    n_rows: int
    columns: tuple[ColumnProfile, ...]
    scales: tuple[ScaleDraft, ...]
    response: AnswerFormat | None  # the most common answer format: the file's default
    id_column: str | None
    id_candidates: tuple[str, ...]
    groups: tuple[str, ...]
    set_aside: tuple[SetAside, ...]
    notes: tuple[str, ...] = field(default=())

    def column(self, name: str) -> ColumnProfile:
        for profile in self.columns:
            if profile.name == name:
                return profile
        raise DataError(f"no column named {name!r}")

    def by_role(self, role: str) -> tuple[ColumnProfile, ...]:
        return tuple(p for p in self.columns if p.role == role)


# ----------------------------------------------------------------------------------------------------------
# reading one column


@dataclass(frozen=True, eq=False)
class _Parsed:
    """One column split into numbers and texts (internal)."""

    numbers: pd.Series  # float, NaN where blank or text
    texts: pd.Series  # stripped text where the value is not a number, else NA
    blank: np.ndarray


def _parse(series: pd.Series) -> _Parsed:
    if pd.api.types.is_bool_dtype(series.dtype):
        series = series.astype("string")
    if pd.api.types.is_numeric_dtype(series.dtype):
        numbers = pd.Series(series.to_numpy(dtype=np.float64, na_value=np.nan), index=series.index)
        return _Parsed(numbers=numbers, texts=pd.Series(pd.NA, index=series.index, dtype="string"),
                       blank=numbers.isna().to_numpy())
    stripped = series.astype("string").str.strip()
    blank = (stripped.isna() | (stripped == "")).to_numpy(dtype=bool)
    stripped = stripped.mask(blank)
    numbers = pd.to_numeric(stripped, errors="coerce").astype("float64")
    numbers = numbers.where(np.isfinite(numbers.to_numpy(dtype=np.float64, na_value=np.nan)))
    texts = stripped.where(numbers.isna() & ~blank)
    return _Parsed(numbers=numbers, texts=texts, blank=blank)


def _is_code_like(value: float, rest_low: float) -> bool:
    """9, 99, 999, 8, 88, 98 ... or a negative number below non-negative answers (common practice, no source)."""
    if not float(value).is_integer():
        return False
    nines = re.fullmatch(r"9+|8+|9+8", str(abs(int(value)))) is not None
    return nines or (value < 0 <= rest_low)


def _peel_codes(numbers: pd.Series, *, texts_are_answers: bool = False) \
        -> tuple[tuple[float, ...], tuple[float, ...], np.ndarray]:
    """Set apart "no answer" codes and rare odd values lying far outside the rest of the numbers.

    Returns (codes, odd values, the remaining distinct values). A value is far outside when at least one
    unused whole number separates it from the rest (gap >= 2); codes are code-like values (9, 99, -9 ...),
    odd values are other far values that are rare (at most 1 % of the numbers, at least 1). When the
    column's answers are texts, its numbers may all be codes (e.g. only 9 and 99 among answer texts).
    """
    counts = numbers.dropna().value_counts().sort_index()
    values = counts.index.to_numpy(dtype=np.float64)
    total = int(counts.sum())
    rare = max(1, math.floor(0.01 * total))
    codes: list[float] = []
    odd: list[float] = []
    while len(values) > (0 if texts_are_answers else 2):
        if len(values) == 1:
            if not _is_code_like(values[0], 0.0):
                break
            codes.append(float(values[0]))
            values = values[1:]
            break
        for end in (-1, 0):
            value = values[end]
            rest = values[:-1] if end == -1 else values[1:]
            gap = value - rest[-1] if end == -1 else rest[0] - value
            width = rest[-1] - rest[0]
            if _is_code_like(value, rest[0]) and (gap >= 2 or (value < 0 <= rest[0])):
                codes.append(float(value))
            elif gap >= 2 and gap > width and counts[value] <= rare:
                odd.append(float(value))
            else:
                continue
            values = rest
            break
        else:
            break
    return tuple(sorted(codes)), tuple(sorted(odd)), values


_ID_WORDS = {"id", "uuid", "guid", "respondent", "participant", "case", "record", "key"}


def _is_row_numbering(values: np.ndarray) -> bool:
    """0, 1, 2, ... or 1, 2, 3, ... in file order: the row numbers a spreadsheet or data frame export adds."""
    return bool(values[0] in (0, 1) and np.array_equal(values, values[0] + np.arange(values.size)))


def _looks_like_id_name(name: str) -> bool:
    words = re.sub(r"([a-z])([A-Z])", r"\1 \2", name)
    tokens = {t.casefold() for t in re.split(r"[^A-Za-z0-9]+|(?<=[a-z])(?=\d)", words) if t}
    return bool(tokens & _ID_WORDS)


_DATE_FORMATS = ("ISO8601", "%d.%m.%Y", "%d/%m/%Y", "%m/%d/%Y", "%Y/%m/%d")


def _mostly_dates(texts: pd.Series) -> bool:
    if texts.empty:
        return False
    for form in _DATE_FORMATS:
        parsed = pd.to_datetime(texts, errors="coerce", format=form)
        if parsed.notna().mean() >= 0.9:
            return True
    return False


def _stem_of(name: str) -> str | None:
    """Shared name stem of numbered or lettered items: wl1 -> wl, support_a -> support, q1_2 -> q1."""
    found = re.fullmatch(r"(.*[A-Za-z].*?)[_\-. ]?(\d+)", name) or \
        re.fullmatch(r"(.*[A-Za-z0-9].*?)[_\-. ]([A-Za-z])", name)
    if not found:
        return None
    # punctuation around a stem ("yes: 3", "#yes 4") is decoration, not part of the name
    return re.sub(r"^[^A-Za-z0-9]+|[^A-Za-z0-9]+$", "", found.group(1)) or None


def profile_column(name: str, series: pd.Series) -> tuple[ColumnProfile, _Parsed]:
    """Decide the role of one column from its values (and, for ids, its name)."""
    parsed = _parse(series)
    n_blank = int(parsed.blank.sum())
    n_values = len(series) - n_blank
    base = {"name": name, "n_values": n_values, "n_blank": n_blank, "stem": _stem_of(name)}
    if n_values == 0:
        return ColumnProfile(role=EMPTY, reason="every cell is blank", n_distinct=0, **base), parsed
    if pd.api.types.is_datetime64_any_dtype(series.dtype):
        return ColumnProfile(role=DATE, reason="values are dates", n_distinct=int(series.nunique()), **base), parsed
    texts = parsed.texts.dropna()
    distinct_texts = tuple(pd.unique(texts))
    numbers = parsed.numbers.dropna()
    n_distinct = int(pd.Series(series[~parsed.blank]).astype("string").str.strip().nunique())
    base["n_distinct"] = n_distinct
    if pd.api.types.is_bool_dtype(series.dtype):
        return ColumnProfile(role=CATEGORY, reason="yes/no values", texts=distinct_texts, **base), parsed

    unknown = tuple(t for t in distinct_texts if not is_answer_wording(t))
    known = tuple(t for t in distinct_texts if is_answer_wording(t))
    codes, odd, answers = _peel_codes(numbers, texts_are_answers=bool(known))
    low, high = (float(answers[0]), float(answers[-1])) if len(answers) else (None, None)
    integer_answers = bool(len(answers)) and bool(np.all(np.equal(np.mod(answers, 1), 0)))
    rating_numbers = len(answers) == 0 or (integer_answers and high - low + 1 <= MAX_RATING_POINTS)
    numeric = {"low": low, "high": high, "codes": codes, "odd_values": odd}

    if (distinct_texts and not numbers.empty) or known:
        unknown_count = int(texts.isin(unknown).sum())
        if not rating_numbers:
            return ColumnProfile(role=UNCLEAR, reason="numbers with a wide range mixed with texts",
                                 texts=distinct_texts, **numeric, **base), parsed
        if unknown_count <= ODD_TEXT_SHARE * n_values and (known or len(answers) >= 2):
            return ColumnProfile(role=RATING, reason="answer codes and texts" if known and len(answers)
                                 else ("answer texts" if known else "answer codes"),
                                 texts=known, odd_texts=unknown, **numeric, **base), parsed
        return ColumnProfile(role=UNCLEAR, reason=f"answer-like values mixed with {len(unknown)} other text(s) "
                             f"(e.g. {unknown[0]!r})", texts=distinct_texts, **numeric, **base), parsed
    if distinct_texts:
        if _mostly_dates(texts):
            return ColumnProfile(role=DATE, reason="texts that read as dates", **base), parsed
        if n_distinct == 1:
            return ColumnProfile(role=CONSTANT, reason=f"one value only ({distinct_texts[0]!r})", **base), parsed
        if n_distinct == n_values and not texts.str.contains(r"\s", regex=True).any() \
                and texts.str.len().max() <= 40:
            if n_blank:
                return ColumnProfile(role=UNCLEAR, reason=f"distinct values like an id, but {n_blank} blank",
                                     **base), parsed
            return ColumnProfile(role=ID, reason="every value distinct", **base), parsed
        if n_distinct <= MAX_CATEGORY_LEVELS and n_distinct <= n_values / 2:
            return ColumnProfile(role=CATEGORY, reason=f"{n_distinct} text levels", texts=distinct_texts,
                                 **base), parsed
        return ColumnProfile(role=FREE_TEXT, reason=f"{n_distinct} distinct texts", **base), parsed
    # numbers only
    if numbers.nunique() == 1:
        return ColumnProfile(role=CONSTANT, reason=f"one value only ({numbers.iloc[0]:g})", **base), parsed
    all_integers = bool(np.all(np.equal(np.mod(numbers.to_numpy(), 1), 0)))
    if all_integers and not n_blank and n_values >= 3 and _is_row_numbering(numbers.to_numpy()):
        return ColumnProfile(role=ROW_NUMBER, reason=f"row numbers {numbers.iloc[0]:g} to {numbers.iloc[-1]:g} in "
                             "file order, not a respondent id", **base), parsed
    # serial numbers are dense; distinct whole numbers spread far wider than n are more likely counts or durations
    dense = numbers.max() - numbers.min() < 2 * n_values
    if all_integers and n_distinct == n_values and (_looks_like_id_name(name) or (dense and not rating_numbers)):
        if n_blank:
            return ColumnProfile(role=UNCLEAR, reason=f"distinct whole numbers like an id, but {n_blank} blank",
                                 **base), parsed
        return ColumnProfile(role=ID, reason="whole numbers, every value distinct", **base), parsed
    if rating_numbers and len(answers) >= 2:
        return ColumnProfile(role=RATING, reason="answer codes", **numeric, **base), parsed
    span = f"{numbers.min():g} to {numbers.max():g}"
    kind = "whole numbers" if all_integers else "numbers with decimals"
    return ColumnProfile(role=NUMBER, reason=f"{kind} from {span}, too many values for answers (ages, counts or "
                         "durations?)",
                         low=float(numbers.min()), high=float(numbers.max()), **base), parsed


# ----------------------------------------------------------------------------------------------------------
# answer format of a group of rating columns


def _wording_positions(texts: set[str]) -> list[tuple[str, dict[str, float]]]:
    """Families in which every (normalised) text is a known phrase, with the texts' positions."""
    found = []
    for family, phrases in _WORDINGS.items():
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
    for position, texts in by_position.items():
        if len(texts) > 1:
            notes.append(f"answer texts {', '.join(repr(t) for t in texts)} mean the same; a label can hold only "
                         f"one, so recode the others to {texts[0]!r} in the data")
    seen = sorted(by_position)
    if not lows:
        # texts only: consecutive codes from 1 in the order of the wording
        labels = {1 + i: by_position[p][0] for i, p in enumerate(seen)}
        if not any(tuple(seen) == t for t in _TEMPLATES[family]):
            notes.append(f"the {len(seen)} {family} texts seen are not a common {len(seen)}-point wording: "
                         "check that no answer option went unchosen (codes would shift)")
        return labels, notes
    a, b = int(min(lows)), int(max(highs))
    best: tuple[tuple[int, ...], int, tuple[float, ...]] | None = None
    for template in _TEMPLATES[family]:
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
    labels = {start + i: by_position[p][0] if p in by_position else _canonical_phrase(family, p)
              for i, p in enumerate(template)}
    if not_full or size > b - a + 1:
        notes.append(f"the numbers seen span {a}..{b} and the answer texts extend them to {start}..{start + size - 1}: "
                     "check where the texts sit among the codes")
    if len(seen) < size:
        notes.append("labels of answer options never seen as text use common wording: check them against the "
                     "questionnaire")
    return labels, notes


def answer_values(parsed: _Parsed, fmt: AnswerFormat) -> np.ndarray:
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


# ----------------------------------------------------------------------------------------------------------
# grouping and keying


def correlation_threshold(n_used: int) -> float:
    """Smallest |r| counted as items hanging together: MIN_ABS_R, raised for small n.

    Under no correlation r has a standard error of about 1/sqrt(n) (a textbook large-sample result), so
    3/sqrt(n) keeps chance correlations below the threshold.
    """
    return max(MIN_ABS_R, 3.0 / math.sqrt(max(n_used, 1)))


def correlation_clusters(abs_corr: np.ndarray, *, threshold: float) -> list[list[int]]:
    """Split items into clusters by average-linkage clustering of 1 - |r| (cut where mean |r| < threshold).

    Average linkage joins an item to a cluster only when its mean |r| with the cluster's items reaches the
    threshold, so one item that correlates with nothing stays on its own. Clusters come largest first.
    """
    from scipy.cluster.hierarchy import fcluster, linkage
    from scipy.spatial.distance import squareform

    k = abs_corr.shape[0]
    if k < 2:
        return [[i] for i in range(k)]
    distance = 1.0 - np.nan_to_num(abs_corr, nan=0.0)
    np.fill_diagonal(distance, 0.0)
    distance = np.clip((distance + distance.T) / 2, 0.0, 1.0)
    tree = linkage(squareform(distance, checks=False), method="average")
    labels = fcluster(tree, t=1.0 - threshold, criterion="distance")
    clusters: dict[int, list[int]] = {}
    for index, label in enumerate(labels):
        clusters.setdefault(int(label), []).append(index)
    return sorted(clusters.values(), key=lambda c: (-len(c), c[0]))


def propose_reverse_keys(cov: np.ndarray) -> np.ndarray:
    """Signs (+1 as worded, -1 reversed) from the signs of the items' loadings on the first factor.

    The first principal axis of the correlation matrix, signed so that most items load positively
    (:func:`scalewright.stats.reliability_flags.first_factor_signs`, the rule of the ``miskey-suspect`` flag): an
    item loading below -.10 is proposed for reversing. Item-rest r is not used to decide: when several items
    point the other way, the rest of a correctly worded item holds them and its item-rest r misleads. With
    two items (no factor to speak of) the second is reversed when they correlate negatively.
    """
    from .stats.item_analysis import item_rest_correlations_from_cov
    from .stats.item_covariance import correlation_from_cov
    from .stats.reliability_flags import MISKEY_MIN_LOADING, first_factor_signs

    k = cov.shape[0]
    corr = correlation_from_cov(cov)
    if k >= 3 and np.isfinite(corr).all():
        loadings = first_factor_signs(np.full(k, np.nan), corr)
        if np.isfinite(loadings).all():
            return np.where(loadings < -MISKEY_MIN_LOADING, -1.0, 1.0)
    signs = np.ones(k)
    for _ in range(2 * k):
        r = item_rest_correlations_from_cov(cov * np.outer(signs, signs))
        if not np.isfinite(r).any():
            break
        worst = int(np.nanargmin(r))
        if not r[worst] < 0:
            break
        signs[worst] = -signs[worst]
    if (signs < 0).sum() > k / 2:
        signs = -signs
    return signs


def _fmt_r(value: float) -> str:
    if not np.isfinite(value):
        return "n/a"
    text = f"{value:+.2f}"
    return text.replace("0.", ".", 1)


def _scale_from_cluster(name: str, stem: str, items: list[str], matrix: np.ndarray, fmt: AnswerFormat,
                        notes: list[str], weak: frozenset[str] = frozenset()) -> ScaleDraft:
    from .stats.item_analysis import item_rest_correlations_from_cov
    from .stats.item_covariance import item_covariance
    from .stats.reliability_coefficients import cronbach_alpha_from_cov

    stats = item_covariance(matrix, pairwise=True)
    cov = np.nan_to_num(stats.cov, nan=0.0)
    k = len(items)
    notes = list(notes)
    if stats.n_used < MIN_ROWS_FOR_CORRELATIONS:
        notes.append(f"only {stats.n_used} rows answer every pair of items: too few to check keying")
        signs = np.ones(k)
    else:
        signs = propose_reverse_keys(cov)
    # an item kept only as its likeliest scale is too weakly related to tell its direction: left as worded
    signs = np.where([item in weak for item in items], 1.0, signs)
    worded_r = item_rest_correlations_from_cov(cov)
    keyed_cov = cov * np.outer(signs, signs)
    keyed_r = item_rest_correlations_from_cov(keyed_cov)
    threshold = correlation_threshold(stats.n_used)
    proposals = tuple(ReverseProposal(item=items[j], r_as_worded=float(worded_r[j]), r_reversed=float(keyed_r[j]))
                      for j in range(k) if signs[j] < 0)
    if proposals and (signs < 0).sum() * 2 == k:
        notes.append("half the items point each way: which half is 'reversed' depends on what a high score "
                     "should mean; check the wording")
    for j in range(k):
        if np.isfinite(keyed_r[j]) and keyed_r[j] < threshold:
            notes.append(f"{items[j]}: item-rest r = {_fmt_r(keyed_r[j])} with the proposed keying, weak: "
                         "check its wording")
    if k == 2:
        notes.append("only two items: keying and reliability rest on one correlation")
    return ScaleDraft(name=name, stem=stem, items=tuple(items), reverse=proposals, response=fmt,
                      n_used=stats.n_used, alpha_as_worded=cronbach_alpha_from_cov(cov),
                      alpha_keyed=cronbach_alpha_from_cov(keyed_cov),
                      item_rest_r=tuple(float(v) for v in keyed_r), notes=tuple(notes))


def _scale_name(stem: str, taken: set[str]) -> str:
    name = re.sub(r"[^A-Za-z0-9_.-]+", "_", stem).strip("_") or "scale"
    if not SCALE_NAME.match(name):
        name = f"scale_{name}"
    name = name.removesuffix("__answered")
    candidate, number = name, 2
    while candidate in taken:
        candidate, number = f"{name}_{number}", number + 1
    taken.add(candidate)
    return candidate


def _stem_groups(profiles: list[ColumnProfile]) -> dict[str, list[ColumnProfile]]:
    groups: dict[str, list[ColumnProfile]] = {}
    for profile in profiles:
        if profile.role == RATING and profile.stem:
            groups.setdefault(profile.stem, []).append(profile)
    return groups


def _choose_id(profiles: list[ColumnProfile]) -> tuple[str | None, tuple[str, ...], list[str]]:
    candidates = [p for p in profiles if p.role == ID]
    names = tuple(p.name for p in candidates)
    if not candidates:
        return None, names, []
    named = [p for p in candidates if _looks_like_id_name(p.name)]
    if len(candidates) == 1:
        return candidates[0].name, names, []
    if len(named) == 1:
        return named[0].name, names, [f"several columns have all-distinct values ({', '.join(names)}); "
                                      f"{named[0].name} was taken as the id by its name"]
    return None, names, [f"several columns could be the respondent id ({', '.join(names)}); none was chosen: "
                         "set id_column yourself"]


def _share_missing_codes(scales: list[ScaleDraft]) -> list[ScaleDraft]:
    """A "no answer" code found in one scale's items is taken as the file's convention: every scale gets
    each such code that lies outside its own answer range."""
    found = sorted({code for s in scales for code in s.response.missing_codes})
    shared = []
    for scale in scales:
        fmt = scale.response
        codes = tuple(c for c in found if not fmt.min <= c <= fmt.max)
        shared.append(replace(scale, response=replace(fmt, missing_codes=codes)))
    return shared


def draft_scales(frame: pd.DataFrame) -> Draft:
    """Draft scales and the other parts of a scale file from a raw data table.

    Parameters
    ----------
    frame : pandas.DataFrame
        The data file as read, one row per respondent, values as written (numbers and/or texts).

    Returns
    -------
    Draft
        Column roles, candidate scales with proposed reverse items and answer formats, the id and group
        columns proposed, rating-like columns set aside (with why) and notes of what to check.
    """
    from .stats.item_covariance import correlation_from_cov, item_covariance

    if not isinstance(frame, pd.DataFrame):
        raise DataError("draft_scales needs a table (pandas DataFrame) of the data file")
    if frame.shape[0] == 0 or frame.shape[1] == 0:
        raise DataError("the data file has no rows or no columns to draft from")
    profiles: list[ColumnProfile] = []
    parsed: dict[str, _Parsed] = {}
    for name in frame.columns:
        profile, column = profile_column(str(name), frame[name])
        profiles.append(profile)
        parsed[profile.name] = column
    notes: list[str] = []
    set_aside: list[SetAside] = []
    scales: list[ScaleDraft] = []
    taken: set[str] = set()
    groups = _stem_groups(profiles)
    grouped = {p.name for members in groups.values() if len(members) >= 2 for p in members}
    coded_groups: list[str] = []
    for profile in profiles:
        if profile.role == RATING and profile.name not in grouped:
            levels = parsed[profile.name].numbers.dropna().nunique()
            whole = not profile.texts and CODED_GROUP_LEVELS[0] <= levels <= CODED_GROUP_LEVELS[1]
            if whole:
                coded_groups.append(profile.name)
                notes.append(f"{profile.name}: {levels} whole-number codes and no name stem shared with answer "
                             "columns: proposed as a group; name its codes in the scale file, e.g. "
                             f"{{{profile.name}: {{1: ..., 2: ...}}}}, or drop it if it is a single item")
                continue
            why = "shares no name stem with another answer column" if profile.stem is None or \
                len(groups.get(profile.stem, [])) < 2 else "stands alone"
            set_aside.append(SetAside(column=profile.name, stem=profile.stem,
                                      reason=f"looks like answers ({profile.reason}) but {why}: a single item, "
                                             "or a coded category? not put in a scale"))
    for stem, members in groups.items():
        if len(members) < 2:
            continue
        fmt, fmt_notes = infer_answer_format(members)
        names = [m.name for m in members]
        matrix = np.column_stack([answer_values(parsed[m.name], fmt) for m in members])
        stats = item_covariance(matrix, pairwise=True)
        if stats.n_used < MIN_ROWS_FOR_CORRELATIONS:
            clusters = [list(range(len(members)))]
            fmt_notes.append(f"only {stats.n_used} rows answer every pair of {stem} items: grouped by name "
                             "alone, correlations not checked")
        else:
            corr = correlation_from_cov(stats.cov)
            threshold = correlation_threshold(stats.n_used)
            clusters = correlation_clusters(np.abs(corr), threshold=threshold)
        kept = [c for c in clusters if len(c) >= 2]
        weak_notes: dict[int, list[str]] = {}
        weak_items: dict[int, list[str]] = {}
        if stats.n_used >= MIN_ROWS_FOR_CORRELATIONS:
            for cluster in clusters:
                if len(cluster) != 1:
                    continue
                j = cluster[0]
                if not kept:
                    others = [i for i in range(len(members)) if i != j]
                    mean_r = float(np.nanmean(np.abs(corr[j, others]))) if others else math.nan
                    set_aside.append(SetAside(
                        column=names[j], stem=stem,
                        reason=f"does not correlate with the other {stem} items (mean |r| = "
                               f"{_fmt_r(mean_r).lstrip('+')}, below {threshold:.2f}): left out of every scale"))
                    continue
                # kept in its likeliest scale (highest mean |r|) with a note to check it, rather than dropped
                mean_rs = [float(np.nanmean(np.abs(corr[j, c]))) for c in kept]
                home = int(np.argmax(mean_rs))
                kept[home] = sorted([*kept[home], j])
                weak_items.setdefault(home, []).append(names[j])
                weak_notes.setdefault(home, []).append(
                    f"{names[j]} correlates weakly with the other {stem} items (mean |r| = "
                    f"{_fmt_r(mean_rs[home]).lstrip('+')} with this group, below {threshold:.2f}); kept here as its "
                    "likeliest scale, as worded: check its wording and direction, or remove it")
        for number, cluster in enumerate(kept):
            name = _scale_name(stem, taken)
            cluster_notes = list(fmt_notes) + weak_notes.get(number, [])
            if len(kept) > 1:
                cluster_notes.append(f"the {stem} items fall into {len(kept)} groups by their correlations; "
                                     f"this is group {number + 1}")
            scales.append(_scale_from_cluster(name, stem, [names[i] for i in cluster], matrix[:, cluster],
                                              fmt, cluster_notes, weak=frozenset(weak_items.get(number, ()))))
    scales = _share_missing_codes(scales)
    id_column, id_candidates, id_notes = _choose_id(profiles)
    notes.extend(id_notes)
    categories = tuple(p.name for p in profiles if p.role == CATEGORY or p.name in coded_groups)
    row_numbers = [p.name for p in profiles if p.role == ROW_NUMBER]
    if row_numbers and id_column is None:
        notes.append(f"{', '.join(row_numbers)} holds row numbers in file order (distinct in every row, but not a "
                     "respondent id): set id_column to a real id if the file has one")
    response = None
    if scales:
        counts = Counter(s.response for s in scales)
        response = max(counts, key=lambda f: (counts[f], -[s.response for s in scales].index(f)))
    if not scales:
        notes.append("no group of answer columns sharing a name stem was found: no scale drafted")
    return Draft(n_rows=int(frame.shape[0]), columns=tuple(profiles), scales=tuple(scales), response=response,
                 id_column=id_column, id_candidates=id_candidates, groups=categories,
                 set_aside=tuple(set_aside), notes=tuple(notes))

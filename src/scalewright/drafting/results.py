"""What a draft holds: column profiles, answer formats, proposed scales, reversals and columns set aside."""
from __future__ import annotations

from dataclasses import dataclass, field

from ..errors import DataError
from ..notes import Note
from ..results import ResultMixin

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
    notes: tuple[str | Note, ...] = ()  # sentences, or codes with values worded by present/draft_yaml.py

    @property
    def reverse_items(self) -> tuple[str, ...]:
        return tuple(p.item for p in self.reverse)


@dataclass(frozen=True)
class SetAside(ResultMixin):
    """A column that looks like rating answers but was put in no scale, and why."""

    column: str
    stem: str | None
    reason: str | Note


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

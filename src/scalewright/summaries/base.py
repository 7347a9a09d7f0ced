"""The merge protocol, a mergeable per key, and the container of named summaries."""
from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any, Protocol, TypeVar, runtime_checkable

from ..errors import DataError

M = TypeVar("M", bound="Mergeable")


@runtime_checkable
class Mergeable(Protocol):
    """A summary of some rows that merges with the summary of other rows into the summary of all of them.

    ``a.merge(b)`` returns a new summary and changes neither; it must be associative and commutative
    (``tests/test_summaries.py`` holds every kind to it).
    """

    def merge(self, other: Any) -> Any: ...


def merge_all(summaries: Iterable[M]) -> M:
    """All summaries merged into one, pairwise in a balanced tree (as Dask merges partitions)."""
    level = list(summaries)
    if not level:
        raise DataError("nothing to merge: no block of rows was summarised")
    while len(level) > 1:
        level = [level[i].merge(level[i + 1]) if i + 1 < len(level) else level[i] for i in range(0, len(level), 2)]
    return level[0]


@dataclass(frozen=True)
class Keyed:
    """One mergeable summary per key (a scale, a subgroup level...); keys seen in only one side are kept."""

    parts: Mapping[Any, Any] = field(default_factory=dict)

    def merge(self, other: Keyed) -> Keyed:
        merged = dict(self.parts)
        for key, part in other.parts.items():
            merged[key] = merged[key].merge(part) if key in merged else part
        return Keyed(merged)

    def __getitem__(self, key: Any) -> Any:
        return self.parts[key]

    def get(self, key: Any, default: Any = None) -> Any:
        return self.parts.get(key, default)

    def keys(self):
        return self.parts.keys()

    def items(self):
        return self.parts.items()

    def __contains__(self, key: Any) -> bool:
        return key in self.parts

    def map(self, fn: Callable[[Any], Any]) -> Keyed:
        return Keyed({key: fn(part) for key, part in self.parts.items()})


@dataclass(frozen=True)
class Summary:
    """Named members, each a mergeable summary; two summaries merge member by member.

    The members a run needs depend on the command (answer counts and cross-products for reliability,
    score counts for shape, category counts for tally...); other kinds of summary (per-pair contingency
    tables, per-missingness-pattern sums) join as further members without changing this class. Both sides
    of a merge must hold the same members: a member missing on one side would silently drop its rows.
    """

    members: Mapping[str, Any] = field(default_factory=dict)

    def merge(self, other: Summary) -> Summary:
        if set(self.members) != set(other.members):
            raise DataError(f"cannot merge summaries of different kinds: {sorted(self.members)} and "
                            f"{sorted(other.members)}")
        return Summary({name: part.merge(other.members[name]) for name, part in self.members.items()})

    def __getitem__(self, name: str) -> Any:
        return self.members[name]

    def __contains__(self, name: str) -> bool:
        return name in self.members

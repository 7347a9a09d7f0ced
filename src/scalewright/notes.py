"""Notes and flags as codes with values: the statistics say *what* happened, ``present/messages.py`` words it.

A statistic that cannot be computed, a fit that did not converge or a recommendation is recorded as a
:class:`Note` with a stable ``code`` (kebab-case, part of the JSON contract) and the numbers behind it. The
statistics layer never writes sentences; the presentation layer turns each note into one sentence.
"""
from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any

from .results import to_jsonable


@dataclass(frozen=True)
class Note:
    """One thing a reader must know about a result: a code and the values that make it specific.

    ``values`` holds plain numbers, strings or tuples of them (item names, counts, thresholds); the JSON
    form is ``{"code": ..., **values}``.
    """

    code: str
    values: Mapping[str, Any] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        return {"code": self.code, **{str(k): to_jsonable(v) for k, v in self.values.items()}}


def note(code: str, **values: Any) -> Note:
    """Shorthand: ``note("not-identified", items=2)``."""
    return Note(code=code, values=dict(values))


def notes_to_json(notes: Iterable[Any]) -> list[Any]:
    """Notes for JSON: each note's code and values with an empty ``message``, which the presentation layer
    fills in (:func:`scalewright.present.messages.word_document`); a plain text stays as it is."""
    return [{**n.to_dict(), "message": ""} if isinstance(n, Note) else n for n in notes]


#: the code of every note that says why a statistic is ``null`` in the JSON (NaN in the result)
NOT_COMPUTABLE = "not-computable"


def not_computable(statistic: str, reason: str, **values: Any) -> Note:
    """The note beside a statistic that cannot be computed: NaN in the result, ``null`` in the JSON.

    ``statistic`` is the statistic's JSON key, ``reason`` a kebab-case code (``fewer-than-3-items``,
    ``no-degrees-of-freedom``, ...) that ``present/messages.py`` words; ``values`` make it specific. The note
    sits in the ``notes`` of the nearest result that holds the statistic (CHANGES.md, "null with a reason").
    """
    return Note(code=NOT_COMPUTABLE, values={"statistic": statistic, "reason": reason, **values})

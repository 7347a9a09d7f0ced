"""Every sentence the tool writes about a note or flag, keyed by its code.

The statistics layer records :class:`scalewright.notes.Note` values (a code and numbers); this package is the one
place that words them. Templates use ``str.format`` fields named after the note's values; numbers are formatted
by :mod:`scalewright.present.numbers` before they are put in (``{name:bounded}`` style is not used: each
template's fields are pre-formatted by :func:`describe`).

Each area keeps its templates in its own module (``reading``, ``reliability``, ``structure``, ``shape``,
``groups``, ``screening``, ``confirm``, ``ordinal``, ``missing``, ``weights``, ``drafting``, ``engine``,
``vocabulary``), so work
on one area does not touch another's lines; :mod:`.wording` finds a code's template. Callers import from
``scalewright.present.messages``: the names below are the public path.
"""
from __future__ import annotations

from .confirm import CONFIRM
from .drafting import DRAFTING
from .engine import ENGINE
from .groups import GROUPS
from .missing import MISSING
from .ordinal import ORDINAL
from .reading import READING
from .reliability import RELIABILITY, reliability_flag_message
from .screening import SCREENING, weak_index_sentence
from .shape import SHAPE, shape_message
from .structure import STRUCTURE, STRUCTURE_FLAGS, structure_message
from .vocabulary import NOT_COMPUTABLE_REASONS, VOCABULARY
from .weights import WEIGHTS
from .wording import describe, flag_message, untested_reason, word_document

__all__ = [
    "CONFIRM", "DRAFTING", "ENGINE", "GROUPS", "MISSING", "ORDINAL", "READING", "RELIABILITY", "SCREENING",
    "SHAPE", "STRUCTURE", "STRUCTURE_FLAGS", "VOCABULARY", "NOT_COMPUTABLE_REASONS", "WEIGHTS", "describe", "flag_message", "reliability_flag_message",
    "shape_message", "structure_message", "untested_reason", "weak_index_sentence", "word_document",
]

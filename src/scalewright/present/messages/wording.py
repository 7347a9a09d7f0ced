"""Words any note or flag by its code: finds the area's template or function."""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from ...notes import Note
from .confirm import CONFIRM
from .drafting import DRAFTING
from .engine import ENGINE
from .groups import GROUPS, groups_note_message
from .missing import MISSING
from .ordinal import ORDINAL
from .reading import READING, reading_message
from .reliability import RELIABILITY, RELIABILITY_NOTES, reliability_flag_message, reliability_note_message
from .screening import SCREENING
from .shape import SHAPE, shape_message
from .structure import STRUCTURE, STRUCTURE_FLAGS, structure_message
from .values import _plain
from .vocabulary import NOT_COMPUTABLE_REASONS, VOCABULARY
from .weights import WEIGHTS


def flag_message(flag: Any) -> str:
    """The sentence of a flag result (anything with ``code``, ``message`` and ``values``)."""
    values = getattr(flag, "values", None)
    if not getattr(flag, "message", "") and flag.code in STRUCTURE_FLAGS and hasattr(flag, "scale"):
        return structure_message(flag.code, {**(values or {}), "scale": flag.scale}, flag=True)
    if getattr(flag, "message", "") or not values:
        return str(getattr(flag, "message", ""))
    if flag.code in RELIABILITY:
        return reliability_flag_message(flag.code, values)
    if flag.code in STRUCTURE_FLAGS and hasattr(flag, "scale"):
        return structure_message(flag.code, {**values, "scale": flag.scale}, flag=True)
    return describe(Note(code=flag.code, values=values))


def word_document(document: Any) -> Any:
    """Fill in every empty ``message`` of a flag in a JSON document from its ``code`` and ``values``.

    Results record flags as codes with values; this is where a document gets their sentences, so a command's
    JSON and the report's results.json carry the same words as their tables.
    """
    if isinstance(document, dict):
        code: Any = document.get("code")  # a JSON value: text where the document is a flag or a note
        if document.get("message") == "" and code in STRUCTURE_FLAGS and "scale" in document:
            document["message"] = structure_message(code, {**document.get("values", {}), "scale": document["scale"]},
                                                    flag=True)
        elif document.get("message") == "" and code in STRUCTURE:  # a structure note: its values beside its code
            document["message"] = structure_message(code, {k: v for k, v in document.items()
                                                           if k not in ("code", "message")})
        elif document.get("message") == "" and code in SHAPE:  # a shape note or evidence: values beside its code
            document["message"] = shape_message(code, {k: v for k, v in document.items()
                                                       if k not in ("code", "message")})
        elif code == "not-computable" and not document.get("message"):  # why a statistic is null: its sentence
            document["message"] = describe(Note(code=code, values={k: v for k, v in document.items()
                                                                   if k not in ("code", "message")}))
        elif document.get("message") == "" and isinstance(document.get("values"), dict) and "code" in document:
            document["message"] = (reliability_flag_message(code, document["values"]) if code in RELIABILITY
                                   else describe(Note(code=code, values=document["values"])))
        elif document.get("message") == "" and code in _all_templates():  # any other note: values beside its code
            document["message"] = describe(Note(code=code, values={k: v for k, v in document.items()
                                                                  if k not in ("code", "message")}))
        for value in document.values():
            word_document(value)
    elif isinstance(document, list):
        for value in document:
            word_document(value)
    return document


def _all_templates() -> dict[str, str]:
    merged: dict[str, str] = {}
    for block in (READING, RELIABILITY, RELIABILITY_NOTES, STRUCTURE, SHAPE, GROUPS, SCREENING, CONFIRM, ORDINAL, MISSING,
                  WEIGHTS, ENGINE, DRAFTING, VOCABULARY):
        clash = merged.keys() & block.keys()
        if clash:
            raise RuntimeError(f"message codes defined twice: {sorted(clash)}")
        merged.update(block)
    return merged


def untested_reason(notes: Sequence[Note | str], *, tested: bool) -> tuple[str | None, list[str]]:
    """For a test that could not run (``tested`` false), the reason in words (its last note) apart from the
    other notes' sentences; for one that ran, None and every note's sentence. A sentence that quotes the
    reason and the notes listed beneath it then give the reason once."""
    sentences = [describe(note) for note in notes]
    if tested or not sentences:
        return None, sentences
    return sentences[-1], sentences[:-1]


def describe(note: Note | str, formatted: Mapping[str, str] | None = None) -> str:
    """The sentence for one note. ``formatted`` overrides how single values are shown (e.g. ``bounded``).

    A plain string (notes written before codes existed) is returned as it is.
    """
    if isinstance(note, str):
        return note
    if note.code in STRUCTURE and not formatted:
        return structure_message(note.code, note.values)
    if note.code in SHAPE and not formatted:
        return shape_message(note.code, note.values)
    if note.code in ("values-read-as-missing", "missing-texts-read") and not formatted:
        return reading_message(note.code, note.values)
    if note.code in GROUPS and not formatted:
        return groups_note_message(note.code, note.values)
    if note.code in RELIABILITY_NOTES and not formatted:
        return reliability_note_message(note.code, note.values)
    template = _all_templates().get(note.code)
    values = {key: _plain(value) for key, value in note.values.items()}
    values.update(formatted or {})
    if note.code == "not-computable":
        values["reason"] = NOT_COMPUTABLE_REASONS.get(str(values.get("reason")), values.get("reason"))
    if template is None:
        detail = ", ".join(f"{key} {value}" for key, value in values.items())
        return f"{note.code}: {detail}" if detail else note.code
    return template.format(**values)

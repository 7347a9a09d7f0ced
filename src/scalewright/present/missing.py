"""Sentences about missing answers (method, who contributed, patterns, Little's test), from a MissingHandling."""
from __future__ import annotations

from ..notes import Note, note
from ..stats.missing import MissingHandling
from .messages import describe
from .numbers import format_value


def _p_text(pvalue: float) -> str:
    text = format_value(pvalue, "p")
    return text if text.startswith("<") else f"= {text}"


def missing_lines(handling: MissingHandling | None) -> list[str]:
    """One sentence for the method and the patterns, then one per note (Little's test, warnings, EM basis)."""
    if handling is None:
        return []
    patterns = ", ".join(f"{m} missing: {count}" for m, count in sorted(handling.patterns.items())) or "none"
    lines = [describe(note("missing-summary", method=describe(note(f"method-{handling.method}")),
                           n_used=handling.n_used, n_rows=handling.n_rows, patterns=patterns))]
    lines.extend(describe_missing_note(n) for n in handling.notes)
    return lines


def describe_missing_note(item: Note) -> str:
    values = item.values
    formatted: dict[str, str] = {}
    if "pvalue" in values:
        formatted["pvalue"] = _p_text(values["pvalue"])
        formatted["chi2"] = format_value(values["chi2"], "num")
        formatted["df"] = format_value(values["df"], "int")
    for key in ("set_aside_pct", "threshold_pct"):
        if key in values:
            formatted[key] = format_value(values[key], "pct").removesuffix(".0")
    return describe(item, formatted)

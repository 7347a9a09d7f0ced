"""Sentences of reading the data: setting respondents aside."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

READING: dict[str, str] = {
    # setting respondents aside (--exclude FILE)
    "respondents-set-aside": "{n} respondent(s) set aside from {file} ({listed} id(s) listed, {not_found} not "
                             "found in the data)",
    "exclusion-column": "the ids to set aside were read from column '{column}' of {file}",
    "exclusion-flagged-only": "the list has a '{column}' column: only its {flagged} row(s) flagged yes were "
                              "set aside; {not_flagged} row(s) not flagged were kept",
    "exclusion-ids-not-found": "{n} listed id(s) are not in the data (first: {first})",
    # what reading the data changed
    "values-read-as-missing": "{count} value(s) were neither an answer nor a missing code and were treated as "
                              "missing (--lenient): {detail}",
    "missing-codes-read": "{count} 'no answer' code(s) were read as missing",
    "missing-texts-read": "{count} cell(s) holding a 'no answer' text were read as missing: {detail}",
}


def reading_message(code: str, values: Mapping[str, Any]) -> str:
    """The sentence of one reading note; counts by column or by text are listed in their order."""
    from ...errors import quoted

    shown = dict(values)
    if code == "values-read-as-missing":
        shown["detail"] = ", ".join(f"{column} {n}" for column, n in values["by_column"].items())
    elif code == "missing-texts-read":
        shown["detail"] = ", ".join(f"{quoted(text)} {n}" for text, n in values["by_text"].items())
    return READING[code].format(**shown)

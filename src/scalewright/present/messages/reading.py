"""Sentences of reading the data: setting respondents aside."""
from __future__ import annotations

READING: dict[str, str] = {
    # setting respondents aside (--exclude FILE)
    "respondents-set-aside": "{n} respondent(s) set aside from {file} ({listed} id(s) listed, {not_found} not "
                             "found in the data)",
    "exclusion-column": "the ids to set aside were read from column '{column}' of {file}",
    "exclusion-flagged-only": "the list has a '{column}' column: only its {flagged} row(s) flagged yes were "
                              "set aside; {not_flagged} row(s) not flagged were kept",
    "exclusion-ids-not-found": "{n} listed id(s) are not in the data (first: {first})",
}

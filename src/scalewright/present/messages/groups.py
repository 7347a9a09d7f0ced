"""Sentences of subgroups, compare and tally."""
from __future__ import annotations

GROUPS: dict[str, str] = {
}

"""How a note's plain values are shown in a sentence (shared by every area)."""
from __future__ import annotations

from typing import Any


def _plain(value: Any) -> Any:
    from ..numbers import format_value

    if isinstance(value, float):
        return format_value(value, "num")
    if isinstance(value, (list, tuple)):
        return ", ".join(str(_plain(v)) for v in value)
    return value

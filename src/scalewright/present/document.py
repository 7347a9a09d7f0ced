"""The envelope every JSON document carries: which tool made it, from which inputs."""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

from .. import __version__
from ..files import sha256_of


@dataclass(frozen=True)
class InputInfo:
    data: str | None
    data_sha256: str | None
    scales: str | None
    scales_sha256: str | None

    @classmethod
    def from_paths(cls, data: str | Path | None, scales: str | Path | None) -> InputInfo:
        return cls(
            data=str(data) if data is not None else None,
            data_sha256=sha256_of(data) if data is not None else None,
            scales=str(scales) if scales is not None else None,
            scales_sha256=sha256_of(scales) if scales is not None else None,
        )

    def to_dict(self) -> dict[str, Any]:
        return {"data": self.data, "data_sha256": self.data_sha256,
                "scales": self.scales, "scales_sha256": self.scales_sha256}


#: version of the JSON contract; every rename is listed in CHANGES.md
SCHEMA_VERSION = 2


def envelope(command: str, inputs: InputInfo, body: dict[str, Any], *,
             options: dict[str, Any] | None = None, notes: list[str] | None = None) -> dict[str, Any]:
    """Wrap a command's results in the contract's ``tool`` and ``input`` keys."""
    document: dict[str, Any] = {
        "schema": SCHEMA_VERSION,
        "tool": {"name": "scalewright", "version": __version__},
        "command": command,
        "input": inputs.to_dict(),
    }
    if options:
        document["options"] = options
    document.update(body)
    document.setdefault("notes", [])
    if notes:
        document["notes"] = list(document["notes"]) + list(notes)
    from .messages import word_document  # flags recorded as codes with values get their sentences here

    return word_document(document)

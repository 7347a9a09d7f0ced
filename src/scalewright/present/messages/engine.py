"""Sentences of the streaming and Dask routes."""
from __future__ import annotations

ENGINE: dict[str, str] = {
    "stream-section-needs-rows": "Not in this report: the {title}. It judges every respondent's row, which the "
                                 "block-by-block route does not do yet; run `scalewright screen` on the file, or "
                                 "build the report with --engine memory.",
}

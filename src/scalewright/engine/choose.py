"""When a summary command takes the streaming route.

``--engine auto`` (the default) streams a CSV or Parquet file of at least :data:`STREAM_ABOVE_BYTES`:
below that the whole file fits in memory many times over and the whole-file route is as fast. Options
that need the rows themselves (a bootstrap, a list of ids to set aside, figures of the rows) keep the
whole-file route. ``--engine stream`` streams any file (and says why when an option needs the rows);
``--engine memory`` reads the file whole; ``--engine dask`` summarises partitions on a Dask cluster.
"""
from __future__ import annotations

from pathlib import Path

from ..errors import UsageError

ENGINES = ("auto", "memory", "stream", "dask")
#: files at least this large stream under --engine auto
STREAM_ABOVE_BYTES = 64 << 20


def choose_route(engine: str, data: Path, *, needs_rows: str | None = None) -> str:
    """"memory", "stream" or "dask". ``needs_rows`` names an option that needs the rows (or None)."""
    from .blocks import streamable

    if engine not in ENGINES:
        raise UsageError(f"--engine must be one of {', '.join(ENGINES)}, not {engine!r}")
    if engine in ("memory", "dask"):
        if engine == "dask" and needs_rows:
            raise UsageError(f"--engine dask works from summaries; {needs_rows} needs the rows (use --engine memory)")
        return engine
    if needs_rows:
        if engine == "stream":
            raise UsageError(f"--engine stream works from summaries; {needs_rows} needs the rows "
                             "(use --engine memory)")
        return "memory"
    if engine == "stream":
        return "stream"
    try:
        large = data.is_file() and streamable(data) and data.stat().st_size >= STREAM_ABOVE_BYTES
    except OSError:
        large = False
    return "stream" if large else "memory"

"""The route of the commands that write one row per respondent (``score``, ``screen``), and ``score``'s engine
options (``screen``'s, which add Dask: :mod:`.screen_dask`)."""
from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

import click

from ..errors import UsageError


def row_engine_options(fn: Callable) -> Callable:
    fn = click.option("--block-size", "block_size", type=click.IntRange(min=1024), default=None, metavar="BYTES",
                      help="Bytes of CSV text per block when streaming (default 1 MiB).")(fn)
    fn = click.option("--engine", type=click.Choice(["auto", "memory", "stream"]), default="auto", show_default=True,
                      help="memory: read the file whole; stream: read it a block at a time and write its rows as "
                           "they come, with memory that does not grow with the rows; auto: stream files of 64 MiB "
                           "or more.")(fn)
    return fn


def row_route(engine: str, data: Path, spec_path: Path, *, needs_rows: str | None,
              weighted_stream: bool = False) -> str:
    """"memory", "stream" or "dask": the route of a command that writes rows (``needs_rows`` names an option that
    needs the whole file first, or None); survey weights keep the whole-file route unless the command's
    weighted estimates stream (``weighted_stream``)."""
    from ..engine.choose import choose_route
    from .common import chosen_weight

    route = choose_route(engine, data, needs_rows=needs_rows)
    if route not in ("stream", "dask") or weighted_stream:
        return route
    weight = chosen_weight()
    if weight is None:
        from ..spec import load_spec

        weight = getattr(load_spec(spec_path), "weight", None)
    if weight:
        if engine in ("stream", "dask"):
            raise UsageError(f"--engine {engine}: survey weights (column {weight!r}) need the rows (use --engine memory)")
        return "memory"
    return route


def said_read_whole(engine: str, data: Path, reason: object) -> None:
    """With ``--engine stream``, say on stderr why the file is read whole after all."""
    if engine == "stream":
        click.echo(f"note: {data} is read whole, not in blocks: {reason}", err=True)

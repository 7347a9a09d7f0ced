"""The route of the commands that write one row per respondent (``score``, ``screen``), and ``score``'s engine
options (``screen``'s, which add Dask: :mod:`.screen_dask`)."""
from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

import click

from .common import BLOCK_SIZE_HELP


def row_engine_options(fn: Callable) -> Callable:
    fn = click.option("--block-size", "block_size", type=click.IntRange(min=1024), default=None, metavar="BYTES",
                      help=BLOCK_SIZE_HELP)(fn)
    fn = click.option("--engine", type=click.Choice(["auto", "memory", "stream"]), default="auto", show_default=True,
                      help="memory: read the file whole; stream: read it a block at a time and write its rows as "
                           "they come, with memory that does not grow with the rows; auto: stream files of 64 MiB "
                           "or more.")(fn)
    return fn


def row_route(engine: str, data: Path, *, needs_rows: str | None) -> str:
    """"memory", "stream" or "dask": the route of a command that writes rows (``needs_rows`` names an option that
    needs the whole file first, or None). Survey weights stream on every such command (``score``, ``screen``,
    ``report``)."""
    from ..engine.choose import choose_route

    return choose_route(engine, data, needs_rows=needs_rows)


def said_read_whole(engine: str, data: Path, reason: object) -> None:
    """With ``--engine stream``, say on stderr why the file is read whole after all."""
    if engine == "stream":
        click.echo(f"note: {data} is read whole, not in blocks: {reason}", err=True)

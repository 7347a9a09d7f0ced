"""The engine options of the summary commands, and loading their inputs as merged summaries."""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import click

from ..errors import UsageError
from .common import BLOCK_SIZE_HELP, Inputs


def engine_options(fn: Callable) -> Callable:
    fn = click.option("--workers", type=click.IntRange(min=1), default=None, metavar="N",
                      help="With --engine dask and no --scheduler: workers of the local cluster (default: the cores).")(fn)
    fn = click.option("--block-size", "block_size", type=click.IntRange(min=1024), default=None, metavar="BYTES",
                      help=BLOCK_SIZE_HELP)(fn)
    fn = click.option("--scheduler", default=None, metavar="ADDRESS",
                      help="With --engine dask: the Dask scheduler (default: a local cluster).")(fn)
    fn = click.option("--engine", type=click.Choice(["auto", "memory", "stream", "dask"]), default="auto",
                      show_default=True,
                      help="memory: read the file whole; stream: read it in blocks with memory that does not grow "
                           "with the rows; dask: summarise a Parquet dataset or CSV files on a Dask cluster; "
                           "auto: stream files of 64 MiB or more.")(fn)
    return fn


def dataset_argument(fn: Callable) -> Callable:
    """The data argument of commands that also take a dataset (a folder, a glob or a URL) under Dask."""
    return click.argument("data", type=click.Path(path_type=Path))(fn)


@dataclass(frozen=True)
class Summarised:
    """Inputs read as merged summaries: the ``Inputs`` a command emits with, the summary, the route taken."""

    inputs: Inputs
    summary: Any
    engine: dict[str, Any]
    #: the survey weight column whose weighted summaries were taken, or None
    weight: str | None = None


def _without_scales() -> Any:
    """What the block reader needs of a spec when no scale file is given: no items, no id, no groups."""
    from types import SimpleNamespace

    from ..spec_model import DEFAULT_MISSING_TEXTS

    # without a scale file the default "no answer" texts apply, as on the whole-file route
    return SimpleNamespace(items=(), id_column=None, groups=(), group_levels={}, scales={}, path=None,
                           missing_texts=tuple(DEFAULT_MISSING_TEXTS))


def load_summaries(data: Path, scales: Path | None, make_plan: Callable[[Any], Any], *, engine: str,
                   scheduler: str | None, block_size: int | None, lenient: bool, workers: int | None = None,
                   needs_rows: str | None = None, weighted: bool = False,
                   warm: tuple[str, ...] = ()) -> Summarised | None:
    """The inputs as merged summaries, or None when the command should read the file whole.

    ``make_plan(spec)`` gives the :class:`~scalewright.engine.plan.SummaryPlan`; ``weighted``: the command
    computes its weighted estimates from the summaries (survey weights then stream). A file the streaming
    route cannot read (see :class:`~scalewright.engine.blocks.CannotStream`) is left to the whole-file
    route, which names any problem in it. ``warm`` names the modules the command imports once the
    summaries are merged: they are imported beside the blocks instead (see :func:`_warm`).
    """
    from ..engine.blocks import CannotStream
    from ..engine.choose import choose_route
    from ..present.document import InputInfo
    from ..spec import load_spec

    if engine != "dask" and (scheduler is not None or workers is not None):
        raise UsageError("--scheduler and --workers go with --engine dask")
    route = choose_route(engine, data, needs_rows=needs_rows)
    if route == "memory":
        return None
    spec = load_spec(scales) if scales is not None else _without_scales()
    from .common import weight_in_force

    weight = weight_in_force(spec)
    weight_notes: list[str] = []
    if weight:
        ctx = click.get_current_context(silent=True)
        if ctx is None or "scalewright.weight" not in ctx.meta:  # a command without weighted estimates
            from ..notes import note
            from ..present.messages import describe

            weight_notes = [describe(note("weights-not-used", weight_column=weight,
                                          command=ctx.info_name if ctx else ""))]
            weight = None
        elif not weighted:  # this command's weighted estimates come from the rows
            if engine in ("stream", "dask"):
                raise UsageError(f"--engine {engine} works from summaries; this command's weighted estimates "
                                 f"(column {weight!r}) need the rows (use --engine memory)")
            return None
    plan = make_plan(spec)
    if weight:
        from dataclasses import replace

        plan = replace(plan, weight=weight)
    if route == "dask":
        if scales is None:
            raise UsageError("--engine dask needs the scale file: give --scales FILE")
        from ..engine.dask_engine import dask_summary, url_as_given

        summary, outcome, info = dask_summary(str(data), spec, plan, scheduler=scheduler, lenient=lenient,
                                              workers=workers)
        inputs = Inputs(spec=spec, responses=outcome, info=InputInfo(data=url_as_given(str(data)), data_sha256=info["data_sha256"],
                                                                     scales=str(scales),
                                                                     scales_sha256=InputInfo.from_paths(None, scales).scales_sha256),
                        excluded=0, notes=(*outcome.notes(), *weight_notes,
                                           *_weight_checked(str(data), summary, weight, lenient)))
        return Summarised(inputs=inputs, summary=summary, weight=weight,
                          engine={"name": "dask", "scheduler": info["scheduler"], "partitions": info["partitions"]})
    from concurrent.futures import ThreadPoolExecutor

    from ..engine.stream import stream_summary

    # the provenance digests read the file once more; hashing releases the interpreter lock, so it runs
    # beside the blocks instead of after them
    with ThreadPoolExecutor(max_workers=1) as pool:
        digests = pool.submit(InputInfo.from_paths, data, scales)
        warmed = pool.submit(_warm, warm)  # after the digests, on the same thread
        try:
            summary, outcome = stream_summary(data, spec, plan, lenient=lenient, block_bytes=block_size)
        except CannotStream as reason:
            if engine == "stream":
                click.echo(f"note: {data} is read whole, not in blocks: {reason}", err=True)
            return None
        input_info = digests.result()
        warmed.result()  # no import is left running beside the command's own
    inputs = Inputs(spec=spec if scales is not None else None, responses=outcome, info=input_info, excluded=0,
                    notes=(*outcome.notes(), *weight_notes, *_weight_checked(str(data), summary, weight, lenient)))
    return Summarised(inputs=inputs, summary=summary, engine={"name": "stream"}, weight=weight)


def _warm(modules: tuple[str, ...]) -> None:
    """Import ``modules`` (beside the blocks: the parse and much of the summarising release the interpreter
    lock, and importing scipy.special alone takes about 0.3 s of one core that would otherwise follow the
    merge). A module that fails to import here is left to the command's own import, which reports it."""
    import importlib

    for name in modules:
        try:
            importlib.import_module(name)
        except Exception:  # reported by the command's own import of the module, not here
            return


def _weight_checked(path: str, summary: Any, weight: str | None, lenient: bool) -> list[str]:
    """The weight column's refusal (as the whole-file route refuses it) or its notes; none unweighted."""
    if not weight:
        return []
    from ..analyses.summarised_weighted import check_weights

    return check_weights(path, summary["weight_reading"], weight, lenient=lenient)


def first_needing_rows(**given: Any) -> str | None:
    """The first option (named as on the command line, ``--`` added) that the summaries cannot serve, or None.

    ``given`` maps an option's name (underscores for dashes) to True when it was given in a form the
    streaming route does not support; such a command takes the whole-file route exactly as without an engine.
    """
    for name, used in given.items():
        if used:
            return "--" + name.replace("_", "-")
    return None


class StreamedLevels:
    """The distinct values of the counted columns of merged summaries, where ``resolve_by`` wants responses.

    The check of ``--max-levels`` looks only at a column's distinct values (their number and, for numbers,
    their range and spacing), which the merged category counts hold exactly.
    """

    def __init__(self, summary: Any) -> None:
        self._categories = summary["categories"]

    def column(self, name: str) -> Any:
        import pandas as pd

        return pd.Series(list(self._categories[name].counts), dtype=object)

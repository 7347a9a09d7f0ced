"""`screen --engine dask`: the engine options of the screen, and its run on a Dask cluster.

The passes run on the workers (:mod:`scalewright.engine.screen_dask`); the records come back to this
machine a partition at a time and are written where the block route writes them: ``--out FILE.csv``
appends them to the per-respondent table, the JSON document copies them into place from a temporary file
of records, the tables list the first flagged respondents (see :mod:`.screen_streamed`).
"""
from __future__ import annotations

import tempfile
from collections.abc import Callable
from pathlib import Path
from typing import Any

import click


def screen_engine_options(fn: Callable) -> Callable:
    """``--engine`` (auto, memory, stream, dask), ``--block-size``, and with dask ``--scheduler``, ``--workers``."""
    fn = click.option("--workers", type=click.IntRange(min=1), default=None, metavar="N",
                      help="With --engine dask and no --scheduler: workers of the local cluster (default: the cores).")(fn)
    fn = click.option("--scheduler", default=None, metavar="ADDRESS",
                      help="With --engine dask: the Dask scheduler (default: a local cluster).")(fn)
    fn = click.option("--block-size", "block_size", type=click.IntRange(min=1024), default=None, metavar="BYTES",
                      help="Bytes of CSV text per block when streaming (default 1 MiB).")(fn)
    fn = click.option("--engine", type=click.Choice(["auto", "memory", "stream", "dask"]), default="auto",
                      show_default=True,
                      help="memory: read the file whole; stream: read it three times a block at a time and write "
                           "each record as it is judged, with memory that does not grow with the rows; dask: "
                           "screen a Parquet dataset or CSV files on a Dask cluster (the three passes run on the "
                           "workers; the records come back a partition at a time, written in dataset order); "
                           "auto: stream files of 64 MiB or more.")(fn)
    return fn


def dask_screened(data: Path, scales: Path, *, scheduler: str | None, workers: int | None, block_size: int | None,
                  lenient: bool, thresholds: Any, duration_column: str | None, duration_unit: str,
                  flagged_only: bool, fmt: str | None, out: Path | None, decimals: int) -> None:
    """Screen the dataset on the cluster and write what the whole-file route writes."""
    from ..engine.dask_engine import dataset_parts, url_as_given
    from ..engine.screen_dask import RecordsText, dask_screen
    from ..engine.screen_steps import ScreenOptions
    from ..files import write_atomic_with
    from ..present.document import InputInfo
    from ..spec import load_spec
    from .common import choose_format
    from .screen_streamed import _finish
    from .weight_check import WeightCheck

    spec = load_spec(scales)
    table_csv = out is not None and fmt is None and out.suffix.lower() == ".csv"
    chosen = None if table_csv else choose_format(fmt, out)
    weighing = WeightCheck(str(data), spec, lenient=lenient)
    options = ScreenOptions(thresholds=thresholds, duration_column=duration_column, duration_unit=duration_unit,
                            weight=weighing.column)
    urls, local = dataset_parts(str(data))

    def screen(records: RecordsText | None, write: Callable[[str], Any] | None) -> Any:
        return dask_screen(str(data), spec, options, lenient=lenient, scheduler=scheduler, workers=workers,
                           block_bytes=block_size, records=records, write=write,
                           weights_read=weighing.check if weighing.column else None)

    with tempfile.TemporaryDirectory(prefix="scalewright-screen-") as spill:
        records_file = Path(spill) / "respondents.jsonl"
        found: dict[str, Any] = {}
        if table_csv and out is not None:
            from ..present.quality import respondents_csv_header

            has_duration = duration_column is not None

            def to_table(temp: Path) -> None:
                with open(temp, "w", encoding="utf-8", newline="") as handle:
                    handle.write(respondents_csv_header(has_duration=has_duration))
                    found["run"] = screen(RecordsText("csv", flagged_only=flagged_only, has_duration=has_duration),
                                          handle.write)

            write_atomic_with(out, to_table, inputs=[scales, *(urls if local else [])])
        elif chosen == "json":
            with open(records_file, "w", encoding="utf-8") as handle:
                found["run"] = screen(RecordsText("json", flagged_only=flagged_only), handle.write)
        else:
            found["run"] = screen(None, None)
        result, run = found["run"]
        info = InputInfo(data=url_as_given(str(data)), data_sha256=run["data_sha256"], scales=str(scales),
                         scales_sha256=InputInfo.from_paths(None, scales).scales_sha256)
        _finish(result, info=info, spec=spec, data=data, scales=scales, chosen=chosen, out=out,
                flagged_only=flagged_only, duration_column=duration_column, decimals=decimals, records=records_file,
                weight_notes=tuple(weighing.notes),
                engine={"name": "dask", "scheduler": run["scheduler"], "partitions": run["partitions"]})


def dask_screen_csv(data: Path, spec: Any, target: Path | None, *, duration_column: str | None, duration_unit: str,
                    lenient: bool, block_size: int | None, weight: str | None = None, scheduler: str | None = None,
                    workers: int | None = None) -> Any:
    """The report's screen of a dataset on Dask, as :func:`~scalewright.cli.screen_streamed.streamed_screen_csv`
    makes it of a file read in blocks: every respondent's record in ``target`` (the report's ``screen.csv``;
    None: a single page, no table), in dataset order; with ``weight`` the weighted screen (the weights were
    checked by the report's first pass)."""
    from dataclasses import replace

    from ..engine.screen_dask import RecordsText, dask_screen
    from ..engine.screen_steps import ScreenOptions
    from ..files import write_atomic_with
    from ..present.quality import respondents_csv_header
    from ..stats.screen_rules import ScreenThresholds

    options = ScreenOptions(thresholds=ScreenThresholds(), duration_column=duration_column,
                            duration_unit=duration_unit, weight=weight)
    has_duration = duration_column is not None
    found: dict[str, Any] = {}

    def screen(records: RecordsText | None, write: Callable[[str], Any] | None) -> None:
        found["result"], _ = dask_screen(str(data), spec, options, lenient=lenient, scheduler=scheduler,
                                         workers=workers, block_bytes=block_size, records=records, write=write)

    if target is None:
        screen(None, None)
    else:
        def to_table(temp: Path) -> None:
            with open(temp, "w", encoding="utf-8", newline="") as handle:
                handle.write(respondents_csv_header(has_duration=has_duration))
                screen(RecordsText("csv", flagged_only=False, has_duration=has_duration), handle.write)

        write_atomic_with(target, to_table, inputs=[])
    return replace(found["result"].summary, records_file=None if target is None else target.name)


__all__ = ["dask_screen_csv", "dask_screened", "screen_engine_options"]

"""`screen` on a file read in blocks: where each respondent's record goes.

The screen's records are judged block by block (:mod:`scalewright.engine.screen_stream`) and written out as
they come, never held together: ``--out FILE.csv`` appends them to the per-respondent table; the JSON
document is written with its ``respondents`` list copied from a temporary file of records (one per line)
into place, so its text is the whole-file route's. The tables (text, Markdown, CSV of tables) list the
first :data:`~scalewright.engine.screen_stream.HELD_RECORDS` flagged respondents, with a note when there are
more (``--out FILE.csv`` writes them all).
"""
from __future__ import annotations

import json
import tempfile
from pathlib import Path
from typing import Any, TextIO

import click

from ..present.render import visible_controls
from .weight_check import WeightCheck

#: stands in for the list of records in the rendered JSON document until they are copied into place
_MARK = "@@scalewright-screen-respondents@@"
#: characters of records written at once
_CHUNK = 1 << 20


def streamed_screen(data: Path, scales: Path, *, engine: str, block_size: int | None, lenient: bool,
                    thresholds: Any, duration_column: str | None, duration_unit: str, flagged_only: bool,
                    fmt: str | None, out: Path | None, decimals: int) -> bool:
    """Screen the file in blocks and write what the whole-file route writes; False when the file is to be
    read whole after all (nothing written then)."""
    from concurrent.futures import ThreadPoolExecutor

    from ..engine.blocks import CannotStream
    from ..engine.screen_stream import stream_screen
    from ..present.document import InputInfo
    from ..spec import load_spec
    from .common import choose_format
    from .row_route import said_read_whole

    spec = load_spec(scales)
    table_csv = out is not None and fmt is None and out.suffix.lower() == ".csv"
    chosen = None if table_csv else choose_format(fmt, out)
    weighing = WeightCheck(str(data), spec, lenient=lenient)

    def screen(sink: Any) -> Any:
        return stream_screen(data, spec, thresholds=thresholds, duration_column=duration_column,
                             duration_unit=duration_unit, lenient=lenient, block_bytes=block_size, sink=sink,
                             **weighing.options())

    with ThreadPoolExecutor(max_workers=1) as pool, tempfile.TemporaryDirectory(prefix="scalewright-screen-") as spill:
        digests = pool.submit(InputInfo.from_paths, data, scales)
        try:
            if table_csv:
                result = screen_to_csv(data, spec, out, flagged_only=flagged_only, thresholds=thresholds,
                                       duration_column=duration_column, duration_unit=duration_unit,
                                       lenient=lenient, block_bytes=block_size, **weighing.options())
            elif chosen == "json":
                records = Path(spill) / "respondents.jsonl"
                with open(records, "w", encoding="utf-8") as handle:
                    result = screen(_json_lines(handle, flagged_only))
            else:
                result = screen(None)
        except CannotStream as reason:
            said_read_whole(engine, data, reason)
            return False
        info = digests.result()
        _finish(result, info=info, spec=spec, data=data, scales=scales, chosen=chosen, out=out,
                flagged_only=flagged_only, duration_column=duration_column, decimals=decimals,
                records=Path(spill) / "respondents.jsonl", weight_notes=tuple(weighing.notes))
    return True


def screen_to_csv(data: Path, spec: Any, target: Path | None, *, flagged_only: bool = False,
                  **options: Any) -> Any:
    """:func:`~scalewright.engine.screen_stream.stream_screen` with every record (or the flagged) appended to the
    per-respondent table ``target`` (written under a temporary name, renamed when complete); None: no table."""
    from ..engine.screen_stream import stream_screen
    from ..files import write_atomic_with
    from ..present.quality import respondents_csv_header, respondents_csv_rows

    has_duration = options.get("duration_column") is not None
    head: dict[str, Any] = {}
    found: dict[str, Any] = {}

    def write(temp: Path | None) -> None:
        handle = None if temp is None else open(temp, "w", encoding="utf-8", newline="")  # noqa: SIM115
        try:
            sink = None
            if handle is not None:
                def sink(records: Any, handle: TextIO = handle) -> None:
                    handle.write(respondents_csv_rows({**head, "respondents": records}, flagged_only=flagged_only,
                                                      has_duration=has_duration))

                handle.write(respondents_csv_header(has_duration=has_duration))
            found["result"] = stream_screen(data, spec, sink=sink,
                                            before_rows=lambda summary: head.update(summary.to_dict()), **options)
        finally:
            if handle is not None:
                handle.close()

    if target is None:
        write(None)
    else:
        write_atomic_with(target, write, inputs=[data])
    return found["result"]


def streamed_screen_csv(data: Path, spec: Any, target: Path | None, *, duration_column: str | None,
                        duration_unit: str, lenient: bool, block_size: int | None, weight: str | None = None) -> Any:
    """The report's screen of a file read in blocks: every respondent's record in ``target`` (the report's
    ``screen.csv``; None: a single page, no table), the summary naming the file; with ``weight`` the weighted
    screen (the weights were checked by the report's first pass)."""
    from dataclasses import replace

    from ..engine.blocks import CannotStream
    from ..errors import DataError, Problem

    try:
        result = screen_to_csv(data, spec, target, duration_column=duration_column, duration_unit=duration_unit,
                               lenient=lenient, block_bytes=block_size, weight=weight)
    except CannotStream as reason:  # an earlier pass read it: only a file changed meanwhile gets here
        raise DataError(Problem(file=str(data), message=f"the file changed while it was read ({reason})")) from None
    return replace(result.summary, records_file=None if target is None else target.name)


def _json_lines(handle: Any, flagged_only: bool) -> Any:
    from ..present.render import _compact

    def sink(records: Any) -> None:
        handle.writelines(_compact(record) + "\n" for record in records if record["flagged"] or not flagged_only)
    return sink


def _finish(result: Any, *, info: Any, spec: Any, data: Path, scales: Path, chosen: str | None, out: Path | None,
            flagged_only: bool, duration_column: str | None, decimals: int, records: Path,
            weight_notes: tuple[str, ...] = (), engine: dict[str, Any] | None = None) -> None:
    from ..files import write_atomic_with
    from ..present.document import envelope
    from ..present.quality import duplicate_notes, screen_notes, screen_tables
    from ..present.render import render_json
    from ..results import JsonRows
    from .common import Inputs, emit

    summary = result.summary
    engine = engine or {"name": "stream"}
    notes = (*result.outcome.notes(), *weight_notes)
    inputs = Inputs(spec=spec, responses=result.outcome, info=info, excluded=0, notes=notes)
    options = {"duration_column": duration_column, "flagged_only": flagged_only, "excluded": 0}
    document = summary.to_dict()
    weighted_tables = []
    if summary.weighted is not None:
        from ..present.weighted import weighted_screen_table

        weighted_tables.append(weighted_screen_table(summary.weighted, summary.flag_counts(), summary.n))
    if chosen is None:  # the per-respondent table was written
        n_flagged = summary.n_flagged
        written = summary.n if not flagged_only else n_flagged
        click.echo(f"wrote {out} ({written} respondent(s); {n_flagged} of {summary.n} flagged)", err=True)
        lines = [table.notes[0] for table in weighted_tables]
        for line in (*notes, *screen_notes(document), *duplicate_notes(document), *lines):
            click.echo(f"note: {visible_controls(line)}", err=True)
        return
    held = len(document["respondents"])
    tables = [*screen_tables(document, flagged_only=True, max_rows=held if summary.n_flagged > held else None),
              *weighted_tables]
    if chosen != "json":
        emit(command="screen", inputs=inputs, body={**document, "engine": engine}, tables=tables,
             fmt=chosen, out=out, decimals=decimals, options=options)
        return
    has_records = records.exists() and records.stat().st_size > 0
    body = {**document, "respondents": JsonRows([_MARK] if has_records else []), "engine": engine}
    text = render_json(envelope("screen", info, body, options=options, notes=list(notes)))
    prefix, suffix = text.split(json.dumps(_MARK), 1) if has_records else (text, "")
    indent = prefix[prefix.rindex("\n"):]  # the line break and indent before the first record

    def write(put: Any) -> None:
        put(prefix)
        if has_records:
            with open(records, encoding="utf-8") as lines:
                pieces: list[str] = []
                size = 0
                for number, line in enumerate(lines):
                    pieces.append(("," + indent if number else "") + line.rstrip("\n"))
                    size += len(line)
                    if size > _CHUNK:
                        put("".join(pieces))
                        pieces, size = [], 0
                put("".join(pieces))
        put(suffix)

    if out is None:
        write(lambda text: click.echo(text, nl=False))
        return

    def to_file(temp: Path) -> None:
        with open(temp, "w", encoding="utf-8", newline="") as handle:
            write(handle.write)

    write_atomic_with(out, to_file, inputs=[data, scales] if engine["name"] != "dask" else [scales])
    click.echo(f"wrote {out}", err=True)


__all__ = ["streamed_screen"]

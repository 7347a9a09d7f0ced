"""What every analysis command shares: its options, loading the inputs, and emitting the output."""
from __future__ import annotations

import sys
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import click

from ..errors import UsageError
from ..files import write_atomic
from ..present.document import InputInfo, envelope
from ..present.render import render_csv, render_json, render_markdown, render_text
from ..present.table import Table

#: the help of every command's --block-size
BLOCK_SIZE_HELP = ("Bytes of CSV text per block when streaming (default: 8 MiB blocks parsed side by side, 1 MiB "
                   "where the file needs pyarrow's one-block-at-a-time reader).")

FORMATS = ("table", "json", "md", "csv")


#: the option that carries each library setting an error can name (``ScalewrightError.setting``), with its hint
OPTION_HINTS = {
    "lenient": "--lenient reads such values as missing (counted)",
    "sheet": "--sheet is for workbooks only",
    "standardize": "--standardize takes pomp or z",
}


def error_line(error: Exception) -> str:
    """The one-line error text, with the option that gets past it when the library names a setting."""
    from ..errors import one_line

    text = one_line(str(error))
    hint = OPTION_HINTS.get(getattr(error, "setting", ""))
    return f"{text}; {hint}" if hint else text


def data_argument(fn: Callable) -> Callable:
    return click.argument("data", type=click.Path(dir_okay=False, path_type=Path))(fn)


def scales_option(fn: Callable) -> Callable:
    return click.option("--scales", "-s", "scales", required=True, type=click.Path(dir_okay=False, path_type=Path),
                        help="Scale file (YAML).")(fn)


def output_options(fn: Callable) -> Callable:
    fn = click.option("--decimals", type=click.IntRange(0, 6), default=2, show_default=True,
                      help="Decimals shown in tables (JSON and CSV keep full precision).")(fn)
    fn = click.option("--out", "-o", "out", type=click.Path(dir_okay=False, path_type=Path),
                      help="Write the output to this file instead of the screen.")(fn)
    fn = click.option("--format", "-f", "fmt", type=click.Choice(FORMATS), default=None,
                      help="Output format (default: table on a terminal, else by --out's extension or json).")(fn)
    return fn


def _remember_sheet(ctx: click.Context, _param: click.Parameter, value: str | None) -> None:
    ctx.meta["scalewright.sheet"] = value


def chosen_sheet() -> str | None:
    """The ``--sheet`` of the running command (kept in the click context, so no command's signature changes)."""
    ctx = click.get_current_context(silent=True)
    return ctx.meta.get("scalewright.sheet") if ctx is not None else None


def sheet_option(fn: Callable) -> Callable:
    return click.option("--sheet", metavar="NAME", expose_value=False, callback=_remember_sheet,
                        help="The sheet to read from a workbook (.xlsx) with several.")(fn)


def _remember_weight(ctx: click.Context, _param: click.Parameter, value: str | None) -> None:
    ctx.meta["scalewright.weight"] = value


def chosen_weight() -> str | None:
    """The ``--weight`` of the running command, or None."""
    ctx = click.get_current_context(silent=True)
    return ctx.meta.get("scalewright.weight") if ctx is not None else None


def weight_in_force(spec: Any) -> str | None:
    """``--weight``, else the scale file's ``weight``, or None. Refused when it names an item of the scale file
    (the scale file's own ``weight`` is refused so when the file is read; ``--weight`` here, on every route)."""
    column = chosen_weight() or getattr(spec, "weight", None)
    if column is not None and column in set(getattr(spec, "items", ()) or ()):
        raise UsageError(f"--weight {column!r} is an item of the scale file: survey weights need a column of "
                         "their own")
    return column


def weight_option(fn: Callable) -> Callable:
    """``--weight COLUMN``, for the commands that give weighted estimates (it wins over the scale file's)."""
    return click.option("--weight", metavar="COLUMN", expose_value=False, callback=_remember_weight,
                        help="Column of survey weights (overrides the scale file's `weight`); "
                             "estimates are then weighted.")(fn)


def input_options(fn: Callable) -> Callable:
    fn = sheet_option(fn)
    fn = click.option("--exclude", type=click.Path(dir_okay=False, path_type=Path),
                      help="File of respondent ids to set aside (one per line, or a CSV whose first column holds them).")(fn)
    fn = click.option("--lenient", is_flag=True,
                      help="Turn out-of-range values and unknown answer texts into missing values (counted) instead of stopping.")(fn)
    return fn


#: where ``--max-levels`` is kept for :func:`resolve_by` (the option is not passed to the command function, so
#: a command that takes ``--by`` gets the limit without a parameter of its own)
MAX_LEVELS_KEY = "scalewright.max_levels"


def _keep_max_levels(ctx: click.Context, _param: click.Parameter, value: int) -> int:
    ctx.meta[MAX_LEVELS_KEY] = value
    return value


def by_option(fn: Callable) -> Callable:
    from ..analyses.subgroup_columns import DEFAULT_MAX_LEVELS

    fn = click.option("--max-levels", type=click.IntRange(min=2), default=DEFAULT_MAX_LEVELS, show_default=True,
                      expose_value=False, callback=_keep_max_levels,
                      help="Refuse a subgroup column with more levels than this (bin it first).")(fn)
    return click.option("--by", "by", multiple=True, metavar="COLUMN",
                        help="Subgroup column (repeatable). Default: the scale file's `groups`.")(fn)


MISSING_METHODS = ("listwise", "pairwise", "em")


def missing_option(fn: Callable) -> Callable:
    """``--missing listwise|pairwise|em`` for every command that rests on the item covariance matrix."""
    return click.option("--missing", "missing", type=click.Choice(MISSING_METHODS), default=None,
                        help="Missing answers: listwise (default) sets aside respondents with any gap; pairwise "
                             "uses, for each pair of items, the respondents who answered both; em estimates the "
                             "means and covariances by maximum likelihood (EM) from everyone who answered.")(fn)


def pairwise_flag(fn: Callable) -> Callable:
    """``--pairwise``, the older spelling of ``--missing pairwise`` (resolved by :func:`resolve_missing`)."""
    return click.option("--pairwise", is_flag=True, help="Same as --missing pairwise (kept for existing scripts).")(fn)


def resolve_missing(missing: str | None, pairwise: bool = False) -> str:
    """The method of ``--missing``, with ``--pairwise`` kept as a synonym of ``--missing pairwise``."""
    if pairwise and missing not in (None, "pairwise"):
        raise UsageError(f"--pairwise and --missing {missing} contradict each other; give one of them")
    return missing or ("pairwise" if pairwise else "listwise")


@dataclass(frozen=True)
class Inputs:
    """What a command works on: the scale file, the responses, and their provenance."""

    spec: Any
    responses: Any
    info: InputInfo
    excluded: int
    notes: tuple[str, ...]
    #: what ``--exclude`` set aside (``exclusion.Exclusion``), or None
    exclusion: Any = None


def load_inputs(data: Path, scales: Path, *, lenient: bool = False, exclude: Path | None = None) -> Inputs:
    from concurrent.futures import ThreadPoolExecutor

    from ..data import read_responses
    from ..spec import load_spec

    spec = load_spec(scales)
    # the provenance digests read the files once more; hashing releases the interpreter lock, so it runs
    # beside the parse instead of after it
    with ThreadPoolExecutor(max_workers=1) as pool:
        digests = pool.submit(InputInfo.from_paths, data, scales)
        responses = read_responses(data, spec, lenient=lenient, sheet=chosen_sheet())
        info = digests.result()
    from ..present.messages import describe

    notes: list[str] = [describe(n) for n in responses.notes()]
    exclusion = None
    if exclude is not None:
        from ..exclusion import exclude_respondents, read_exclusion_list
        from ..present.messages import describe

        listing = read_exclusion_list(exclude, id_column=spec.id_column)
        responses, exclusion = exclude_respondents(responses, listing)
        notes.extend(describe(n) for n in exclusion.notes())
    responses, weight_notes = _with_weights(spec, responses, lenient=lenient)
    notes.extend(weight_notes)
    return Inputs(spec=spec, responses=responses, info=info, excluded=0 if exclusion is None else exclusion.set_aside,
                  notes=tuple(notes), exclusion=exclusion)


def _with_weights(spec: Any, responses: Any, *, lenient: bool) -> tuple[Any, list[str]]:
    """The responses with their survey weights attached, when the command gives weighted estimates."""
    from dataclasses import replace

    from ..notes import note
    from ..present.messages import describe
    from ..weights import read_weights

    ctx = click.get_current_context(silent=True)
    weighs = ctx is not None and "scalewright.weight" in ctx.meta
    column = weight_in_force(spec)
    if column is None:
        return responses, []
    if not weighs:
        return responses, [describe(note("weights-not-used", weight_column=column, command=ctx.info_name if ctx else ""))]
    weights = read_weights(responses.frame, column, responses.line_numbers, path=responses.path, lenient=lenient)
    found = [note("weights-approximate-inference", weight_column=column)]
    if weights.n_zero_weight:
        found.append(note("weights-zero", weight_column=column, n_zero_weight=weights.n_zero_weight))
    for kind, count in weights.refused.items():
        found.append(note("weights-refused", weight_column=column, kind=kind.replace("_", " "), count=count))
    return replace(responses, weights=weights), [describe(found_note) for found_note in found]


def resolve_by(by: Sequence[str], spec: Any, responses: Any = None, *, max_levels: int | None = None) -> tuple[str, ...]:
    """The subgroup columns: ``--by`` or the scale file's ``groups``.

    With ``responses``, each must be in the data and have at most ``max_levels`` levels (default: the
    command's ``--max-levels``).
    """
    columns = tuple(by) if by else tuple(getattr(spec, "groups", ()) or ())
    if responses is not None and columns:
        from ..analyses.subgroup_columns import check_level_counts

        check_level_counts(responses, columns, max_levels=max_levels or chosen_max_levels())
    return columns


def chosen_max_levels() -> int:
    """The running command's ``--max-levels`` (the default outside a command)."""
    from ..analyses.subgroup_columns import DEFAULT_MAX_LEVELS

    context = click.get_current_context(silent=True)
    return context.meta.get(MAX_LEVELS_KEY, DEFAULT_MAX_LEVELS) if context else DEFAULT_MAX_LEVELS


def choose_format(fmt: str | None, out: Path | None) -> str:
    if fmt:
        return fmt
    if out is not None:
        suffix = out.suffix.lower().lstrip(".")
        return {"json": "json", "csv": "csv", "md": "md", "markdown": "md", "txt": "table"}.get(suffix, "json")
    return "table" if sys.stdout.isatty() else "json"


def emit(*, command: str, inputs: Inputs, body: dict[str, Any], tables: Sequence[Table],
         fmt: str | None, out: Path | None, decimals: int = 2, options: dict[str, Any] | None = None,
         preface: Sequence[str] = ()) -> None:
    """Render the result in the chosen format and write it to ``out`` (atomically) or stdout."""
    chosen = choose_format(fmt, out)
    document = envelope(command, inputs.info, body, options=options, notes=list(inputs.notes))
    if inputs.exclusion is not None:
        document["exclusion"] = inputs.exclusion.to_dict()
    if chosen == "json":
        text = render_json(document)
    elif chosen == "csv":
        text = render_csv(tables)
    elif chosen == "md":
        text = render_markdown(tables, decimals=decimals, preface=[*preface, *inputs.notes])
    else:
        text = render_text(tables, decimals=decimals, preface=[*preface, *inputs.notes])
    if out is None:
        click.echo(text, nl=False)
    else:
        write_atomic(out, text, inputs=[p for p in (inputs.info.data, inputs.info.scales) if p])
        click.echo(f"wrote {out}", err=True)


def require(condition: bool, message: str) -> None:
    if not condition:
        raise UsageError(message)

"""`scalewright tally`: frequency tables of categorical columns and rating items, and reference proportions."""
from __future__ import annotations

from dataclasses import replace
from pathlib import Path
from typing import TYPE_CHECKING

import click

from ..errors import UsageError
from .common import (
    Inputs,
    chosen_weight,
    emit,
    input_options,
    load_inputs,
    output_options,
    weight_option,
)
from .engine_route import dataset_argument, engine_options, load_summaries

if TYPE_CHECKING:
    import pandas as pd


def _per_column(values: tuple[str, ...], columns: list[str], option: str) -> dict[str, str]:
    """``COL=VALUE`` entries, or one bare VALUE when exactly one column is tallied."""
    out: dict[str, str] = {}
    for entry in values:
        column, sep, value = entry.partition("=")
        if sep and column.strip() in columns:
            out[column.strip()] = value
        elif len(columns) == 1:
            out[columns[0]] = entry
        else:
            raise UsageError(f"{option} {entry!r}: with several columns write {option} COLUMN=..., "
                             f"COLUMN one of {', '.join(columns)}")
    return out


def _missing_texts_notes(texts: dict) -> tuple[str, ...]:
    from ..spec_model import DEFAULT_MISSING_TEXTS

    if not texts:
        return ()
    detail = "; ".join(f"{column}: " + ", ".join(f"{text!r} {n}" for text, n in counts.items())
                       for column, counts in texts.items())
    return (f"cells holding a 'no answer' text ({', '.join(DEFAULT_MISSING_TEXTS)}) were read as missing: "
            f"{detail}",)


def _inputs_without_scales(data: Path) -> tuple[Inputs, pd.DataFrame]:
    from ..data_file import MISSING_CELLS, read_table
    from ..present.document import InputInfo
    from ..spec_model import DEFAULT_MISSING_TEXTS
    from .common import chosen_sheet

    # without a scale file the default "no answer" texts apply, as they would with one that lists none
    frame = read_table(data, sheet=chosen_sheet(), missing_texts=DEFAULT_MISSING_TEXTS)
    found = frame.attrs.get(MISSING_CELLS)
    notes = _missing_texts_notes(found.texts) if found is not None else ()
    return Inputs(spec=None, responses=None, info=InputInfo.from_paths(data, None), excluded=0, notes=notes), frame


@click.command("tally", epilog=("Examples:\n\n\b\n"
                  "  scalewright tally survey.csv --scales survey.yaml --columns age_group\n"
                  "  scalewright tally survey.csv -s survey.yaml --columns site --expected census.csv\n"))
@dataset_argument
@click.option("--scales", "-s", "scales", type=click.Path(dir_okay=False, path_type=Path),
              help="Scale file (YAML); needed for --items and to use the answer labels of items.")
@click.option("--columns", "-c", "columns", default="", metavar="A,B",
              help="Columns to tally, separated by commas.")
@click.option("--items", is_flag=True, help="Also tally every rating item of the scale file, in its answer order.")
@click.option("--order", "orders", multiple=True, metavar="[COLUMN=]a,b,c",
              help="Order of the categories (repeatable; COLUMN= needed with several columns).")
@click.option("--expected", "expected", multiple=True, metavar="[COLUMN=]FILE",
              help="CSV with columns category,proportion: test the column against these reference proportions.")
@click.option("--min-cell", type=click.IntRange(min=1), default=5, show_default=True,
              help="Categories with fewer respondents are shown as '< N' and left out of tests.")
@click.option("--figures", "figures", type=click.Path(file_okay=False, path_type=Path),
              help="Write a bar chart per --columns column (and, with --items, diverging bars per scale) here.")
@click.option("--percent", is_flag=True, help="Bar charts of valid percentages instead of counts.")
@click.option("--pie", is_flag=True, help="Pie charts instead of bar charts (refused above 5 slices).")
@weight_option
@input_options
@engine_options
@output_options
def tally(data: Path, scales: Path | None, columns: str, items: bool, orders: tuple[str, ...],
          expected: tuple[str, ...], min_cell: int, figures: Path | None, percent: bool, pie: bool, lenient: bool,
          exclude: Path | None, engine: str, scheduler: str | None, workers: int | None, block_size: int | None,
          fmt: str | None, out: Path | None, decimals: int) -> None:
    """Count and percentage tables of categorical columns, with missing answers as their own row.

    Ordered categories keep their order (the scale file's answer labels for items, or --order);
    cumulative percentages are shown for them. --expected checks the sample against reference
    proportions (e.g. a workforce census) with a chi-square test, residuals and the effect size w.
    """
    from ..analyses.tally import analyse_tally, answer_distributions
    from ..engine.plan import plan_for
    from ..expected_file import read_expected
    from ..present.tally import tally_record, tally_tables

    names = [c.strip() for c in columns.split(",") if c.strip()]
    if items and scales is None:
        raise UsageError("--items needs the scale file: give --scales FILE")
    if exclude is not None and scales is None:
        raise UsageError("--exclude needs the scale file (it names the id column): give --scales FILE")
    if not names and not items:
        raise UsageError("nothing to tally: give --columns A,B or --items")
    summarised = load_summaries(data, scales, lambda spec: plan_for(spec, cross_products=None,
                                                                    categories=tuple(names)),
                                engine=engine, scheduler=scheduler, block_size=block_size, lenient=lenient,
                                workers=workers, needs_rows="--exclude" if exclude is not None else None,
                                weighted=True)
    summary = summarised.summary if summarised else None
    if summarised:
        inputs = summarised.inputs
        if scales is None:  # the note of the whole-file route without a scale file (_inputs_without_scales)
            inputs = replace(inputs, notes=_missing_texts_notes(summarised.inputs.responses.counts.missing_texts))
        spec, responses = inputs.spec, None
        column_of = None
    elif scales is not None:
        inputs = load_inputs(data, scales, lenient=lenient, exclude=exclude)
        spec, responses = inputs.spec, inputs.responses
        column_of = responses.column
    else:
        if items:
            raise UsageError("--items needs the scale file: give --scales FILE")
        if chosen_weight() is not None:
            raise UsageError("--weight needs the scale file (weights apply to its respondents): give --scales FILE")
        if exclude is not None:
            raise UsageError("--exclude needs the scale file (it names the id column): give --scales FILE")
        inputs, frame = _inputs_without_scales(data)
        spec = responses = None

        def column_of(name: str):
            if name not in frame.columns:
                raise UsageError(f"{data} has no column named {name!r} (columns: {', '.join(map(str, frame.columns))})")
            return frame[name]
    asked = list(names)  # these get a bar chart each; --items adds diverging bars per scale instead
    if items:
        names += [item for item in spec.items if item not in names]
    if not names:
        raise UsageError("nothing to tally: give --columns A,B or --items")
    order_of = {c: [v.strip() for v in text.split(",") if v.strip()] for c, text in
                _per_column(orders, names, "--order").items()}
    expected_of = {column: read_expected(Path(path)) for column, path in
                   _per_column(expected, names, "--expected").items()}
    analysis = analyse_tally(names, spec=spec, responses=responses, column_of=column_of, summary=summary,
                             orders=order_of, expected=expected_of, min_cell=min_cell)
    if summarised and summarised.weight:  # the weighted shares from the merged weighted counts
        from ..analyses.summarised_weighted import weighted_tallies_from_summaries

        analysis = replace(analysis, weighted=weighted_tallies_from_summaries(
            spec, summary, analysis.tallies, weight_column=summarised.weight, expected=expected_of))
    tallies, fits = list(analysis.tallies), list(analysis.fits)
    body = {"columns": {t.column: tally_record(t, f, decimals=decimals) for t, f in zip(tallies, fits, strict=True)}}
    if summarised:
        body["engine"] = summarised.engine
    weighted_tables = _weighted(body, analysis, decimals)
    distributions = {}
    if items and spec is not None and figures is not None:  # drawn only; the tables are the tallies above
        distributions = answer_distributions(spec, responses=responses, summary=summary, min_cell=min_cell)
    if figures is not None:
        _write_figures(figures, [t for t in tallies if t.column in asked], distributions, percent=percent, pie=pie,
                       inputs=[p for p in (data, scales) if p is not None])
    emit(command="tally", inputs=inputs, body=body, tables=[*tally_tables(tallies, fits, decimals=decimals),
                                                            *weighted_tables], fmt=fmt,
         out=out, decimals=decimals, options={"columns": names, "min_cell": min_cell, "items": items})


def _weighted(body: dict, analysis, decimals: int) -> list:
    """The weighted shares (and their fit) into each column's record, and their tables; none without weights."""
    if not analysis.weighted:
        return []
    from ..present.weighted import weighted_fit_table, weighted_tally_table

    tables = []
    for t, fit, weighted in zip(analysis.tallies, analysis.fits, analysis.weighted, strict=True):
        record = body["columns"][t.column]
        record["weighted"] = weighted.shares.to_dict()
        tables.append(weighted_tally_table(weighted.shares, t))
        if weighted.fit is not None:
            record["weighted_fit"] = weighted.fit.to_dict()
            tables.append(weighted_fit_table(weighted.fit, fit, decimals))
    return tables


def _write_figures(folder: Path, tallies, distributions, *, percent: bool, pie: bool, inputs) -> None:
    from ..present.figure_files import FigureNames, figure_folder, safe_part, save_figure, use_agg

    folder = figure_folder(folder)
    use_agg()
    import matplotlib.pyplot as plt

    from ..present.figures_groups import diverging_bars, tally_bars, tally_pie

    drawn = []  # every figure is drawn before any is written, so a refused pie leaves no partial output
    try:
        for t in tallies:
            drawn.append((tally_pie(t) if pie else tally_bars(t, percent=percent), f"tally_{safe_part(t.column)}"))
        for scale_name, distribution in distributions.items():
            drawn.append((diverging_bars(distribution), f"items_{safe_part(scale_name)}"))
    except Exception:
        for ax, _ in drawn:
            plt.close(ax.figure)
        plt.close(plt.gcf())
        raise
    written = []
    names = FigureNames()
    for ax, stem in drawn:
        written += save_figure(ax.figure, folder / names.unique(stem), inputs=inputs)
    click.echo(f"wrote {len(written)} figure file(s) to {folder}", err=True)

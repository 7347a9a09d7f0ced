"""`scalewright shape`: descriptives and the shape label with its evidence, per scale (and item), per subgroup."""
from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import Any

import click

from ..analyses.shape import analyse_shape
from ..errors import UsageError
from ..seeds import DEFAULT_SEED
from .common import (
    by_option,
    emit,
    input_options,
    load_inputs,
    output_options,
    resolve_by,
    scales_option,
    weight_option,
)
from .engine_route import StreamedLevels, dataset_argument, engine_options, load_summaries


def parse_percentiles(text: str) -> tuple[float, ...]:
    """'5,10,90' -> (5.0, 10.0, 90.0); every value in 0..100."""
    values = []
    for part in text.split(","):
        part = part.strip()
        if not part:
            continue
        try:
            value = float(part)
        except ValueError:
            raise UsageError(f"--percentiles: {part!r} is not a number") from None
        if not 0 <= value <= 100:
            raise UsageError(f"--percentiles: {part} is outside 0..100")
        values.append(value)
    if not values:
        raise UsageError("--percentiles needs at least one value, e.g. 5,25,50,75,95")
    return tuple(dict.fromkeys(values))


@click.command("shape", epilog=("Examples:\n\n\b\n"
                  "  scalewright shape survey.csv --scales survey.yaml --items\n"
                  "  scalewright shape survey.csv -s survey.yaml --by shift --figures figures/\n"))
@dataset_argument
@scales_option
@by_option
@click.option("--items", is_flag=True, help="Also describe every item (answers as given, before reverse keying).")
@click.option("--percentiles", default="5,10,25,50,75,90,95", show_default=True, metavar="LIST",
              help="Percentiles to report, separated by commas.")
@click.option("--quantile-method", type=click.Choice(["inverted_cdf", "averaged_inverted_cdf", "closest_observation",
                                                      "interpolated_inverted_cdf", "hazen", "weibull", "linear",
                                                      "median_unbiased", "normal_unbiased"]),
              default="linear", show_default=True,
              help="Sample quantile definition (Hyndman & Fan types 1-9 by numpy's names; linear is type 7).")
@click.option("--min-group", type=click.IntRange(min=3), default=10, show_default=True,
              help="Subgroup levels with fewer scored respondents are named but not described.")
@click.option("--seed", type=click.IntRange(min=0), default=DEFAULT_SEED, show_default=True,
              help="Seed of the jitter used by the dip test on tied scores (the same default in every command "
                   "and the report).")
@click.option("--figures", "figures", type=click.Path(file_okay=False, path_type=Path),
              help="Write histograms and box plots (SVG and PNG) to this folder.")
@weight_option
@input_options
@engine_options
@output_options
def shape(data: Path, scales: Path, by: tuple[str, ...], items: bool, percentiles: str, quantile_method: str,
          min_group: int, seed: int, figures: Path | None, lenient: bool, exclude: Path | None, engine: str,
          scheduler: str | None, workers: int | None, block_size: int | None, fmt: str | None,
          out: Path | None, decimals: int) -> None:
    """Describe each score's distribution and name its shape, with the numbers behind the name.

    Per scale score: n, mean, SD, median, quartiles, IQR, range, percentiles, modes, adjusted skewness
    and kurtosis with standard errors, bimodality coefficient, dip test, fit to a flat distribution,
    floor and ceiling shares, and a shape (symmetric, left-skewed, right-skewed, uniform, bimodal) with
    its evidence. With --by, the same per subgroup; small subgroups are named, not described.
    """
    from ..present.shape import shape_tables

    chosen = parse_percentiles(percentiles)
    from ..engine.plan import plan_for

    summarised = load_summaries(data, scales, lambda spec: plan_for(spec, cross_products=None, scores=True,
                                                                    by=resolve_by(by, spec)),
                                engine=engine, scheduler=scheduler, block_size=block_size, lenient=lenient,
                                workers=workers, needs_rows="--exclude" if exclude is not None else None,
                                weighted=True)
    inputs = summarised.inputs if summarised else load_inputs(data, scales, lenient=lenient, exclude=exclude)
    columns = resolve_by(by, inputs.spec, StreamedLevels(summarised.summary) if summarised else inputs.responses)
    if summarised:
        from ..analyses.summarised import shape_from_summaries

        results = shape_from_summaries(inputs.spec, summarised.summary, by=columns, items=items,
                                       percentiles=chosen, quantile_method=quantile_method, min_group=min_group,
                                       seed=seed)
    else:
        results = analyse_shape(inputs.spec, inputs.responses, by=columns, items=items, percentiles=chosen,
                                quantile_method=quantile_method, min_group=min_group, seed=seed)
    body = {"scales": {name: r.to_dict() for name, r in results["scales"].items()},
            "reading": inputs.responses.reading_summary()}
    if items:
        body["items"] = {name: r.to_dict() for name, r in results["items"].items()}
    if summarised:
        body["engine"] = summarised.engine
    options = {"by": list(columns), "items": items, "percentiles": list(chosen), "quantile_method": quantile_method,
               "min_group": min_group, "seed": seed}
    reports = [*results["scales"].values(), *results["items"].values()]
    weighted_tables = _weighted(body, results, inputs, columns, chosen, summarised)
    if figures is not None:
        write_shape_figures(figures, reports, spec=inputs.spec, inputs=[data, scales])
    emit(command="shape", inputs=inputs, body=body, tables=[*shape_tables(reports), *weighted_tables], fmt=fmt, out=out,
         decimals=decimals, options=options)


def _weighted(body, results, inputs, columns, chosen, summarised=None) -> list:
    """Weighted descriptions beside the unweighted ones (``...all.weighted``, ``...by.<col>.<level>.weighted``)."""
    streamed = summarised is not None and summarised.weight is not None
    if getattr(inputs.responses, "weights", None) is None and not streamed:
        return []
    from ..analyses.weighted_shape import weighted_shapes
    from ..present.weighted import weighted_shape_table

    tables = []
    for part in ("scales", "items"):
        if streamed:  # from the merged weighted score and answer counts
            from ..analyses.summarised_weighted import weighted_shapes_from_summaries

            found = weighted_shapes_from_summaries(inputs.spec, summarised.summary, results[part],
                                                   weight_column=summarised.weight, percentiles=chosen)
        else:
            found = weighted_shapes(inputs.spec, inputs.responses, results[part], by=columns, percentiles=chosen)
        for name, blocks in found.items():
            record = body[part][name]
            record["all"]["weighted"] = blocks["all"].to_dict()
            for column, levels in blocks["by"].items():
                for level, block in levels.items():
                    record["by"][column][level]["weighted"] = block.to_dict()
            tables.append(weighted_shape_table(name, blocks))
    return tables


def write_shape_figures(folder: Path, reports: Sequence[Any], *, spec: Any = None, inputs: Sequence[Path] = ()) -> list[Path]:
    """Histogram and box plot of every report, and per-subgroup box plots and small multiples."""
    from ..present.figure_files import FigureNames, figure_folder, safe_part, save_figure, use_agg

    folder = figure_folder(folder)
    use_agg()
    from ..present.figures_shape import (
        box_plot,
        box_plots_by_group,
        histogram,
        histograms_by_group,
    )

    written: list[Path] = []
    names = FigureNames()
    for report in reports:
        # an item may share its name with a scale: the item's figures say so in their name
        stem = f"shape_{'item_' if report.kind == 'item' else ''}{safe_part(report.name)}"
        if report.overall.histogram is None:
            continue
        labels = None
        if report.kind == "item" and spec is not None:
            labels = {float(code): text for code, text in spec.response_for(report.name).labels.items()}
        ax = histogram(report.overall, title=report.title, x_label=report.x_label, tick_labels=labels)
        written += save_figure(ax.figure, folder / names.unique(f"{stem}_histogram"), inputs=inputs)
        ax = box_plot(report.overall, title=report.title, x_label=report.x_label)
        written += save_figure(ax.figure, folder / names.unique(f"{stem}_boxplot"), inputs=inputs)
        for group in report.groups:
            if not group.levels or any(s.histogram is None for s in group.levels.values()):
                continue
            ax = box_plots_by_group(report, column=group.column)
            written += save_figure(ax.figure, folder / names.unique(f"{stem}_by_{safe_part(group.column)}_boxplots"),
                                   inputs=inputs)
            axes = histograms_by_group(report, column=group.column)
            written += save_figure(axes[0].figure, folder / names.unique(f"{stem}_by_{safe_part(group.column)}_histograms"),
                                   inputs=inputs)
    click.echo(f"wrote {len(written)} figure file(s) to {folder}", err=True)
    return written

"""Writing a report folder: index.html, report.md, results.json, figures/ (SVG; PNG on request), scores.csv.

Every file is written atomically and never over an input file; the folder must be empty unless the caller
allows otherwise.
"""
from __future__ import annotations

import re
from collections.abc import Callable, Iterable
from dataclasses import dataclass, replace
from functools import partial
from pathlib import Path
from typing import Any

from ..files import write_atomic
from .report_layout import FigureBlock

FIGURES = "figures"


#: the files of a report, relative to its folder (figures come on top)
REPORT_FILES = ("index.html", "report.md", "results.json", "scores.csv")


def prepare_report_folder(folder: str | Path, *, force: bool = False, inputs: Iterable = (),
                          single_file: bool = False) -> Path:
    """Create ``folder`` if needed; refuse a file, a folder that already holds files unless ``force``, and a
    folder where a report file would replace an input file (checked before anything is written)."""
    from ..files import prepare_output_folder, refuse_input_overwrite

    folder = Path(folder)
    inputs = [p for p in inputs if p is not None]
    for name in REPORT_FILES[:1] if single_file else REPORT_FILES:
        refuse_input_overwrite(folder / name, inputs)
    if single_file:
        prepare_output_folder(folder, what="report", force=force)
        return folder
    if folder.is_dir() and (folder / FIGURES).is_dir():
        for existing in (folder / FIGURES).iterdir():
            refuse_input_overwrite(existing, inputs)
    prepare_output_folder(folder, what="report", force=force)
    (folder / FIGURES).mkdir(exist_ok=True)
    return folder


def _v(value: Any) -> str:
    from .numbers import format_value

    return format_value(value, "num")


def _file_part(column: str, position: int) -> str:
    """Position and a file-safe form of the column name (letters, digits, '-'): unique and readable."""
    part = re.sub(r"[^A-Za-z0-9]+", "-", column).strip("-")[:40].lower()
    return f"{position + 1}-{part}" if part else str(position + 1)


#: formats of the report's figures: SVG (inlined in index.html, linked from report.md); PNG on request
FIGURE_FORMATS = ("svg",)
FIGURE_FORMATS_WITH_PNG = ("svg", "png")


def make_figures(results: Any, folder: Path, *, inputs: Iterable = (),
                 formats: tuple[str, ...] = FIGURE_FORMATS) -> dict[tuple[str, ...], FigureBlock]:
    """Draw and save every figure of the report; return them keyed as :mod:`report_content` expects.

    Each figure is drawn once per format in ``formats`` (SVG by default; the page inlines it), the figures
    spread over worker processes (:mod:`figure_pool`).
    """
    figures, wait = start_making_figures(results, folder, inputs=inputs, formats=formats)
    wait()
    return figures


@dataclass
class StartedFigures:
    """The figures of the scales, being drawn (:func:`start_report_figures`): their blocks, and what
    :func:`write_report_folder` needs to draw the others and wait for these."""

    figures: dict[tuple[str, ...], FigureBlock]
    wait: Callable[[], None]
    names: Any
    formats: tuple[str, ...]


def start_report_figures(ready: Any, folder: Path, *, inputs: Iterable = (), png: bool = False) -> StartedFigures:
    """Start drawing the figures of the scales (``ready.scales``: findings with their shapes and answers, as in
    :class:`~scalewright.report.ReportResults`) in the worker processes while the other analyses run;
    :func:`write_report_folder` (``started=``) draws the structure's and the models' figures and waits."""
    from .figure_files import FigureNames

    names = FigureNames()
    formats = FIGURE_FORMATS_WITH_PNG if png else FIGURE_FORMATS
    figures, wait = start_making_figures(ready, Path(folder), inputs=inputs, formats=formats, names=names,
                                         parts="scales")
    return StartedFigures(figures, wait, names, formats)


def start_making_figures(results: Any, folder: Path, *, inputs: Iterable = (),
                         formats: tuple[str, ...] = FIGURE_FORMATS, names: Any = None, parts: str = "all",
                         into: Any = None) -> tuple[dict[tuple[str, ...], FigureBlock], Callable[[], None]]:
    """:func:`make_figures` with the drawing started in the worker processes: returns the figures and a
    function that waits until their files are written (the caller writes what needs none meanwhile).

    ``parts``: "all"; "scales" (histograms, box plots, answers); "rest" (the structure's and the confirmatory
    model's, given to the workers of ``into``, the :class:`~scalewright.present.figure_pool.FigureRun` of the
    first part), with the :class:`FigureNames` of the first part as ``names`` so no file name is given twice.
    """
    from .figure_pool import FigureJob, start_figures

    jobs: list[FigureJob] = []

    def _save(draw: Callable[[], Any], folder: Path, name: str, *, inputs: Iterable) -> str:
        jobs.append(FigureJob(draw, folder / FIGURES / name))
        return f"{FIGURES}/{name}"

    from .figures_groups import diverging_bars, item_bar_labels
    from .report_scales import scale_label

    inputs = list(inputs)
    figures: dict[tuple[str, ...], FigureBlock] = {}
    from .figure_files import FigureNames, safe_part
    from .figures_shape import box_plots_by_group, histogram

    names = FigureNames() if names is None else names
    for name, findings in results.scales.items() if parts != "rest" else ():
        label = scale_label(findings)
        shape = findings.shape
        part = safe_part(name)
        if shape is not None and shape.overall.histogram is not None:
            stem = _save(partial(histogram, shape.overall, title=f"Scores of {label}", x_label=shape.x_label),
                         folder, names.unique(f"{part}-histogram"), inputs=inputs)
            overall = shape.overall
            figures[("histogram", name)] = FigureBlock(
                stem, f"Distribution of the {label} scores",
                f"Histogram of the {overall.n} scores, one bar per attainable score or score interval, on the "
                f"whole possible range from {_v(overall.low)} to {_v(overall.high)}. The middle half of the "
                f"scores lies between {_v(overall.q1)} and {_v(overall.q3)}, the median is {_v(overall.median)}; "
                f"the shape reads as {overall.shape or 'not labelled'}.")
        for position, group in enumerate(shape.groups if shape is not None else ()):
            if not group.levels:
                continue
            stem = _save(partial(box_plots_by_group, shape, column=group.column), folder,
                         names.unique(f"{part}-by-{_file_part(group.column, position)}-boxplot"), inputs=inputs)
            medians = sorted(group.levels.items(), key=lambda pair: pair[1].median)
            figures[("boxplot", name, group.column)] = FigureBlock(
                stem, f"{label} by {group.column}",
                f"Box plots of the scores for each of {len(group.levels)} level(s) of {group.column}; the medians "
                f"run from {_v(medians[0][1].median)} for {medians[0][0]} to {_v(medians[-1][1].median)} for "
                f"{medians[-1][0]}. The box spans "
                "the quartiles, the thick line is the median, whiskers reach the last score within 1.5 IQR of "
                "the box and circles mark scores beyond.")
        if findings.answers is not None and findings.answers.items:
            titles = item_bar_labels(findings.scale.items, findings.scale.wording, findings.scale.reverse)
            stem = _save(partial(diverging_bars, findings.answers, title=f"Answers to the items of {label}",
                                 titles=titles), folder, names.unique(f"{part}-answers"), inputs=inputs)
            figures[("answers", name)] = FigureBlock(
                stem, f"Answers to the items of {label}",
                f"Diverging stacked bars, one per item named with its shortened wording, of the share of each "
                f"answer from {findings.answers.labels[0]} to {findings.answers.labels[-1]}; answers below the "
                "middle of the scale extend to the left, above it to the right. Answers as given, before reverse "
                "keying: reverse-worded items are marked.")
    structure = results.structure if parts != "scales" else None
    if structure is not None:
        from .figures_structure import loadings_figure, scree_figure

        if structure.parallel is not None:
            stem = _save(partial(scree_figure, structure), folder, names.unique("structure-scree"), inputs=inputs)
            figures[("scree",)] = FigureBlock(
                stem, "Parallel analysis", f"Observed eigenvalues of the item correlations against those of "
                f"random normal data of the same size ({structure.parallel.iterations} random data sets); "
                f"{structure.parallel.suggested_factors} observed eigenvalue(s) lie above the random "
                f"{structure.parallel.percentile:g}th percentile.")
        if structure.solution is not None:
            stem = _save(partial(loadings_figure, structure), folder, names.unique("structure-loadings"),
                         inputs=inputs)
            figures[("loadings",)] = FigureBlock(
                stem, "Factor loadings", f"Heat table of the loadings of {len(structure.items)} items on "
                f"{structure.solution.n_factors} factor(s), items grouped by their scale; blue positive, "
                "vermillion negative, darker for larger loadings. The numbers are in the loadings table.")
    confirm = getattr(results, "confirm", None) if parts != "scales" else None
    if confirm is not None:
        from .figures_confirm import confirm_loadings_figure

        model = confirm.models.get("all") or next(iter(confirm.models.values()), None)
        if model is not None and model.loadings:
            stem = _save(partial(confirm_loadings_figure, model), folder, names.unique("confirm-loadings"),
                         inputs=inputs)
            figures[("confirm-loadings",)] = FigureBlock(
                stem, "Loadings of the confirmatory model", f"Standardized loadings of the {len(model.items)} "
                f"items of the {model.structure.replace('-', ' ')} model, one bar per item and factor, with "
                "whiskers of 1.96 standard errors. The numbers are in the loadings table.")
    if into is not None:
        into.add(jobs)
        wait = into
    else:
        wait = start_figures(jobs, formats=formats, inputs=inputs)
    if "png" in formats:
        figures = {key: replace(block, png=True) for key, block in figures.items()}
    return figures, wait


def write_single_page(results: Any, folder: str | Path, *, decimals: int = 2, inputs: Iterable = (),
                      progress: Callable[[str], None] = lambda step: None) -> list[Path]:
    """Write only ``index.html``, every figure inside it: one file to send. The figures are drawn into a
    temporary folder that is removed afterwards."""
    import tempfile

    from .html import render_html
    from .report_content import build_document

    folder = Path(folder)
    inputs = [p for p in inputs if p is not None]
    with tempfile.TemporaryDirectory(prefix="scalewright-figures-") as scratch:
        (Path(scratch) / FIGURES).mkdir()
        progress("figures")
        figures = make_figures(results, Path(scratch), inputs=inputs)
        document = build_document(results, figures=figures, decimals=decimals)
        progress("pages")
        page = render_html(document, folder=scratch, companion_files=False)
    return [write_atomic(folder / "index.html", page, inputs=inputs)]


def write_report_folder(results: Any, folder: str | Path, *, decimals: int = 2, inputs: Iterable = (),
                        progress: Callable[[str], None] = lambda step: None, png: bool = False,
                        scores_written: bool = False, started: StartedFigures | None = None) -> list[Path]:
    """Write every file of the report into ``folder`` (already prepared); return the paths written.

    Figures are SVG files; ``png`` writes a PNG of each as well. ``started``: the figures
    :func:`start_report_figures` began drawing while the analyses ran (the same ``png``).
    """
    from ..concurrency import start_in_process
    from ..scoring import write_scores
    from .html import render_html
    from .render import render_json
    from .report_content import build_document
    from .report_md import render_report_markdown

    folder = Path(folder)
    inputs = [p for p in inputs if p is not None]
    progress("figures")
    if started is None:
        figures, figures_written = start_making_figures(results, folder, inputs=inputs,
                                                        formats=FIGURE_FORMATS_WITH_PNG if png else FIGURE_FORMATS)
    else:  # the scales' figures are being drawn; the structure's and the models' join them
        figures, figures_written = dict(started.figures), started.wait
        late, _ = start_making_figures(results, folder, inputs=inputs, formats=started.formats,
                                       names=started.names, parts="rest", into=started.wait)
        figures.update(late)
    try:  # while the workers draw: the files that need no figure, the scored file in a process of its own
        # (a streamed report has written it block by block already)
        scores_done = start_in_process(partial(write_scores, results.score_table, folder / "scores.csv",
                                               inputs=inputs)) if not scores_written else None
        results_json = write_atomic(folder / "results.json", render_json(results.to_dict()), inputs=inputs)
        document = build_document(results, figures=figures, decimals=decimals)
        markdown = write_atomic(folder / "report.md", render_report_markdown(document), inputs=inputs)
        scores = folder / "scores.csv" if scores_done is None else scores_done()
    finally:
        figures_written()
    progress("pages")  # the page inlines the figures
    written = [write_atomic(folder / "index.html", render_html(document, folder=folder), inputs=inputs), markdown,
               results_json, scores]
    for figure in figures.values():
        written += [folder / f"{figure.stem}.svg", *([folder / f"{figure.stem}.png"] if figure.png else [])]
    return written


#: steps :func:`write_report_folder` announces
WRITE_STEPS = ("figures", "pages")

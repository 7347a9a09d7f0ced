"""The report folder: every analysis of inputs already read, written as index.html, report.md, results.json,
figures/ and scores.csv (or one self-contained page).

The command line reads the inputs and its options and calls :func:`build_report_folder`; every check of the
inputs and options runs before the folder is touched, and no input file is ever written over.
"""
from __future__ import annotations

import contextlib
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

from .report import STEPS, ReportOptions, ReportResults


def report_folder_steps() -> int:
    """How many steps :func:`build_report_folder` announces (for a progress count that includes reading)."""
    from .present.report_files import WRITE_STEPS

    return len(STEPS) + len(WRITE_STEPS)


def build_report_folder(inputs: Any, out: Path, *, options: ReportOptions, sources: Sequence[Path | None],
                        force: bool = False, single_file: bool = False, png: bool = False,
                        progress: Callable[[str], None] | None = None) -> ReportResults:
    """Run every analysis on ``inputs`` (spec, responses, provenance) and write the report to ``out``.

    ``sources`` are the input files (data, scale file, list of respondents set aside): none may be the
    folder's outputs. ``progress`` is called with the name of each step as it starts. Returns the
    :class:`~scalewright.report.ReportResults` written to results.json.
    """
    from .present.report_files import (
        StartedFigures,
        prepare_report_folder,
        start_report_figures,
        write_report_folder,
        write_single_page,
    )
    from .report import FigureInputs, build_report, check_columns

    def step(name: str) -> None:
        if progress is not None:
            progress(name)

    check_columns(inputs.responses, options)
    folder = prepare_report_folder(out, force=force, inputs=sources, single_file=single_file)
    started: list[StartedFigures] = []

    def figures_from(ready: FigureInputs) -> None:
        # the figures are drawn by worker processes while the last analyses finish
        started.append(start_report_figures(ready, folder, inputs=sources, png=png))

    try:
        results = build_report(inputs.spec, inputs.responses, info=inputs.info, options=options,
                               input_notes=inputs.notes, n_excluded=inputs.excluded, progress=step,
                               figures_from=None if single_file else figures_from)
    except BaseException:
        for figures in started:  # no worker is left drawing into the folder of a report that failed
            with contextlib.suppress(Exception):  # the analysis' error is the one to tell
                figures.wait()
        raise
    if single_file:
        write_single_page(results, folder, decimals=options.decimals, inputs=sources, progress=step)
    else:
        write_report_folder(results, folder, decimals=options.decimals, inputs=sources, progress=step, png=png,
                            started=started[0] if started else None)
    return results

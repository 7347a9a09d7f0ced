"""Small staff-climate survey files for the command tests: scale files and answers generated in code."""
from __future__ import annotations

import json
from collections.abc import Mapping, Sequence
from pathlib import Path

import numpy as np

from scalewright.cli import main

#: the 1-5 agreement answer format of the scale files of several tests (the ``response:`` block)
AGREEMENT_1_TO_5 = """\
response:
  min: 1
  max: 5
  labels: {1: Strongly disagree, 2: Disagree, 3: Neither, 4: Agree, 5: Strongly agree}
  missing_codes: [9]
"""


def climate_scales(*, high: int, missing_code: int, climate_items: int = 5, more: str = "") -> str:
    """A scale file of workload strain (wl1-wl4, wl4 reverse-keyed) and team climate (cl1, cl2, ...) on 1-``high``.

    ``more`` is appended under ``scales:`` (further scales, two-space indented).
    """
    climate = ", ".join(f"cl{j}" for j in range(1, climate_items + 1))
    return (
        "version: 1\n"
        "title: Staff climate survey\n"
        "id_column: staff_id\n"
        f"response: {{min: 1, max: {high}, missing_codes: [{missing_code}]}}\n"
        "scales:\n"
        "  workload:\n"
        "    title: Workload strain\n"
        "    items: [wl1, wl2, wl3, wl4]\n"
        "    reverse: [wl4]\n"
        "  climate:\n"
        "    title: Team climate\n"
        f"    items: [{climate}]\n"
        + more
    )


def rated_answers(factor: np.ndarray, k: int, rng: np.random.Generator, *, loading: float | np.ndarray,
                  unique: float | np.ndarray, cuts: Sequence[float]) -> np.ndarray:
    """Answers 1, 2, ... of ``k`` items: ``loading * factor + unique * noise`` cut at ``cuts`` (n x k ints)."""
    latent = np.asarray(loading) * factor[:, None] + np.asarray(unique) * rng.standard_normal((len(factor), k))
    return 1 + (latent[:, :, None] > np.asarray(cuts)).sum(axis=2)


def item_columns(prefix: str, answers: np.ndarray) -> dict[str, np.ndarray]:
    """``{prefix1: first column, prefix2: second, ...}`` of an n x k answer matrix."""
    return {f"{prefix}{j + 1}": answers[:, j] for j in range(answers.shape[1])}


def answers_csv(ids: Sequence[str], columns: Mapping[str, Sequence[object]]) -> str:
    """The text of a CSV file of a ``staff_id`` column and ``columns`` (each one value per id), as given."""
    lines = ["staff_id," + ",".join(columns)]
    for row, identifier in enumerate(ids):
        lines.append(",".join([identifier, *(str(values[row]) for values in columns.values())]))
    return "\n".join(lines) + "\n"


def write_answers(path: Path, ids: Sequence[str], columns: Mapping[str, Sequence[object]]) -> Path:
    """:func:`answers_csv` written to ``path``."""
    path.write_text(answers_csv(ids, columns), encoding="utf-8")
    return path


def run_json(capsys, *args: str) -> dict:
    """Run the command line with ``args``; it must succeed; its standard output read as JSON."""
    code = main(list(args))
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


def run_confirm(capsys, *args: str) -> dict:
    """:func:`run_json` of ``confirm`` with ``args``, as JSON."""
    return run_json(capsys, "confirm", *args, "--format", "json")

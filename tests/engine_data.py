"""Test data for the streaming and Dask routes: a fictional staff climate survey generated in code."""
from __future__ import annotations

import math
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pytest

from .survey_files import AGREEMENT_1_TO_5

SCALES = """\
version: 1
title: Staff climate survey
id_column: staff_id
groups: [shift]
""" + AGREEMENT_1_TO_5 + """scales:
  workload:
    title: Workload strain
    items: [wl1, wl2, wl3, wl4]
    reverse: [wl2]
  climate:
    title: Team climate
    items: [cl1, cl2, cl3]
    score: sum
    min_answered: 2
"""

ITEMS = ["wl1", "wl2", "wl3", "wl4", "cl1", "cl2", "cl3"]


def survey_rows(n: int, seed: int = 11) -> list[list[str]]:
    """Rows of text cells: id, shift, site and seven items (about 5% blank, 1% 'no answer' code 9)."""
    rng = np.random.default_rng(seed)
    factor = rng.standard_normal((n, 1))
    latent = 0.7 * factor + 0.7 * rng.standard_normal((n, len(ITEMS)))
    answers = (1 + (latent[:, :, None] > np.array([-1.2, -0.4, 0.4, 1.2])).sum(axis=2)).astype(object)
    answers[:, 1] = 6 - answers[:, 1]
    answers[rng.random(answers.shape) < 0.05] = ""
    answers[rng.random(answers.shape) < 0.01] = 9
    shift = rng.choice(["day", "night", "late", "weekend"], size=n, p=[0.46, 0.46, 0.077, 0.003])
    site = rng.choice(["north", "south", ""], size=n, p=[0.5, 0.45, 0.05])
    return [[f"s{i:05d}", shift[i], site[i], *[str(a) for a in answers[i]]] for i in range(n)]


HEADER = ["staff_id", "shift", "site", *ITEMS]


def with_weights(rows: list[list[str]], *, zero_share: float, changes: dict[int, str] | None = None) -> list[list[str]]:
    """The rows with a last cell of survey weights (gamma-distributed, rounded to 3 decimals, ``zero_share``
    of them 0), the weights of the rows in ``changes`` replaced by its texts (the rows are changed in place)."""
    rng = np.random.default_rng(3)
    weights = np.round(rng.gamma(2.0, 0.5, len(rows)), 3)
    weights[rng.random(len(rows)) < zero_share] = 0
    for row, weight in zip(rows, weights, strict=True):
        row.append(f"{weight:g}")
    for index, value in (changes or {}).items():
        rows[index][-1] = value
    return rows


def write_csv(path: Path, rows: list[list[str]], header: list[str] = HEADER) -> Path:
    path.write_text("\n".join(",".join(row) for row in [header, *rows]) + "\n", encoding="utf-8")
    return path


def write_parquet(path: Path, rows: list[list[str]], *, row_group_size: int = 1000) -> Path:
    """The rows as Parquet, items as nullable integers (9 kept as the 'no answer' code)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    columns = {"staff_id": pa.array([r[0] for r in rows]), "shift": pa.array([r[1] for r in rows]),
               "site": pa.array([r[2] or None for r in rows])}
    for j, item in enumerate(ITEMS):
        columns[item] = pa.array([int(r[3 + j]) if r[3 + j] else None for r in rows], type=pa.int64())
    pq.write_table(pa.table(columns), path, row_group_size=row_group_size)
    return path


def write_dataset(folder: Path, rows: list[list[str]], *, parts: int, row_group_size: int) -> tuple[Path, Path, Path]:
    """The same rows as one CSV file, as a folder of ``parts`` equal Parquet files, and the scale file."""
    scales = folder / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    dataset = folder / "survey"
    dataset.mkdir()
    size = len(rows) // parts
    for part in range(parts):
        write_parquet(dataset / f"part-{part}.parquet", rows[part * size:(part + 1) * size],
                      row_group_size=row_group_size)
    return write_csv(folder / "survey.csv", rows), dataset, scales


def assert_same_json(a, b, path: str = "", *, rel: float = 1e-12, absolute: float = 1e-12,
                     rel_at: Callable[[str], float | None] | None = None, exact_types: bool = False,
                     key_order: bool = False) -> None:
    """Two JSON documents (or parts) alike: keys, lengths, texts and counts exactly; floats to ``rel``
    (relative) or ``absolute`` (near zero), or to ``rel_at(path)`` where that gives a looser bound; NaN equals
    NaN. ``exact_types``: an int must not stand where the other has a float. ``key_order``: the keys in the
    same order too (the same text once written)."""
    strict = {"rel": rel, "absolute": absolute, "rel_at": rel_at, "exact_types": exact_types, "key_order": key_order}
    if isinstance(a, dict):
        assert isinstance(b, dict), path
        assert (list(a) == list(b)) if key_order else (a.keys() == b.keys()), path
        for key in a:
            assert_same_json(a[key], b[key], f"{path}.{key}", **strict)
    elif isinstance(a, list):
        assert isinstance(b, list), path
        assert len(a) == len(b), path
        for i, (x, y) in enumerate(zip(a, b, strict=True)):
            assert_same_json(x, y, f"{path}[{i}]", **strict)
    elif isinstance(a, float) and isinstance(b, float) and not (math.isnan(a) and math.isnan(b)):
        looser = rel_at(path) if rel_at else None  # a looser bound, relative and near zero alike
        assert a == pytest.approx(b, rel=looser or rel, abs=looser or absolute), path
    else:
        assert a == b, path
        if exact_types:
            assert type(a) is type(b), path

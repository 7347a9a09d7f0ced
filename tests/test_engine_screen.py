"""`screen` on the streaming route (three passes over a file read in blocks) against the whole-file route.

The reference is the whole-file screen (``--engine memory``), whose indices are held to published
definitions and reference libraries in tests/test_quality.py; here a file cut into dozens of 4 KiB blocks
must give the same flags and counts exactly and the same indices to 1e-12 (the covariance comes from exact
integer cross-products on this route, from float sums on the other: the last bits may differ). The
median completion time is checked against numpy's ``np.median``.
"""
from __future__ import annotations

import csv
import io
import json
import math
from pathlib import Path

import numpy as np
import pytest

from .engine_data import assert_same_json
from .survey_files import AGREEMENT_1_TO_5
from .test_engine_stream import SMALL_BLOCK, both_routes_with_texts, run

SCALES = """\
version: 1
title: Staff climate survey
id_column: staff_id
""" + AGREEMENT_1_TO_5 + """scales:
  workload:
    title: Workload strain
    items: [wl1, wl2, wl3, wl4]
    reverse: [wl2]
  climate:
    title: Team climate
    items: [cl1, cl2, cl3, cl4]
  voice:
    title: Voice
    items: [vo1, vo2, vo3, vo4]
    reverse: [vo4]
"""
N_ROWS = 1600  # about 70 KB of CSV: 18 blocks of 4 KiB
ITEMS = [f"{s}{i}" for s in ("wl", "cl", "vo") for i in range(1, 5)]
HEADER = ["staff_id", "minutes", "vo4", *ITEMS[:-1]]  # the questionnaire order is not the scale file's


def _rows(n: int, seed: int = 5) -> tuple[list[list[str]], dict]:
    """A fictional staff climate survey: three correlated scales, blanks, straight-liners, copied rows far
    apart (in different blocks), respondents who answered little, and completion times (whole seconds)."""
    rng = np.random.default_rng(seed)
    factor = rng.standard_normal((n, 3)) @ np.array([[1, 0.4, 0.3], [0, 0.9, 0.3], [0, 0, 0.9]])
    latent = 0.8 * np.repeat(factor, 4, axis=1) + 0.6 * rng.standard_normal((n, 12))
    answers = (1 + (latent[:, :, None] > np.array([-1.2, -0.4, 0.4, 1.2])).sum(axis=2)).astype(object)
    answers[:, 1] = 6 - answers[:, 1]
    answers[:, 11] = 6 - answers[:, 11]
    answers[rng.random(answers.shape) < 0.04] = ""
    answers[rng.integers(0, n, 30)] = 3                         # the same answer throughout
    mostly_blank = rng.integers(0, n, 12)
    answers[mostly_blank, 2:] = ""                               # many missing
    random_rows = rng.integers(0, n, 25)
    answers[random_rows] = rng.integers(1, 6, (25, 12))          # careless: answers at random
    copies = [(10, n - 20), (40, n // 2), (41, n // 2 + 300), (700, 701)]
    for source, target in copies:
        answers[target] = answers[source]
    answers[(n // 3, n // 3 + 500), :] = answers[n // 3 + 1000]  # three identical rows
    seconds = np.rint(rng.lognormal(6.0, 0.4, n)).astype(int).astype(object)
    seconds[rng.integers(0, n, 15)] = rng.integers(20, 90, 15)   # fast
    seconds[rng.integers(0, n, 7)] = ""                          # no time
    usable = [i for i in range(n) if seconds[i] != "" and sum(a != "" for a in answers[i]) >= 6]
    if len(usable) % 2:  # an even count of usable times: the median is the mean of the two middle ones
        seconds[usable[0]] = ""
    rows = []
    for i in range(n):
        cells = [str(a) for a in answers[i]]
        rows.append([f"s{i:05d}", str(seconds[i]), cells[11], *cells[:11]])
    return rows, {"copies": copies}


def _write(path: Path, rows: list[list[str]], header: list[str] = HEADER) -> Path:
    path.write_text("\n".join(",".join(r) for r in [header, *rows]) + "\n", encoding="utf-8")
    return path


@pytest.fixture
def survey(tmp_path: Path) -> tuple[Path, Path]:
    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    rows, _ = _rows(N_ROWS)
    return _write(tmp_path / "survey.csv", rows), scales


#: the screen table's columns of computed indices (to 1e-12); every other cell is compared as text
INDEX_COLUMNS = {"irv", "mahalanobis_d2", "mahalanobis_pvalue", "even_odd", "person_total_r", "missing_pct"}


def assert_same_rows(table: list[list[str]], reference: list[list[str]]) -> None:
    """Two screen tables (header first) alike: the same header and rows, indices to 1e-12, other cells exactly."""
    assert table[0] == reference[0]
    assert len(table) == len(reference)
    for row, expected in zip(table[1:], reference[1:], strict=True):
        for column, a, b in zip(reference[0], row, expected, strict=True):
            if column in INDEX_COLUMNS and a and b:
                assert math.isclose(float(a), float(b), rel_tol=1e-12, abs_tol=1e-12), (column, a, b)
            else:
                assert a == b, (column, a, b)


def assert_same(whole, streamed, where="") -> None:
    """Equal, keys in the same order, floats to 1e-12 (absolute or relative), everything else exactly."""
    assert_same_json(whole, streamed, where, key_order=True)


def both(data: Path, scales: Path, *options: str) -> tuple[dict, dict, str, str]:
    return both_routes_with_texts("screen", data, scales, *options)


def test_streamed_screen_equals_the_whole_file_screen(survey, monkeypatch):
    from scalewright.engine import screen_sums

    blocks = []
    original = screen_sums.judge_rows
    monkeypatch.setattr(screen_sums, "judge_rows", lambda *a, **k: (blocks.append(1), original(*a, **k))[1])
    whole, streamed, _, _ = both(*survey, "--duration-column", "minutes")
    assert len(blocks) > 10  # the file was really cut into many blocks
    assert_same(whole, streamed)
    summary = streamed["summary"]
    assert summary["n_flagged"] > 30
    for code in ("long-run", "far-from-sample", "fast", "duplicate-answers", "many-missing"):
        assert summary["counts"][code] > 0, code
    groups = streamed["duplicates"]["rows"]
    rows, facts = _rows(N_ROWS)
    # identical rows far apart (hundreds of rows: different 4 KiB blocks) are found, and the three-row group
    for source, target in facts["copies"]:
        assert [f"s{source:05d}", f"s{target:05d}"] in groups
    third = N_ROWS // 3
    assert [f"s{third:05d}", f"s{third + 500:05d}", f"s{third + 1000:05d}"] in groups
    # the median of the usable times (respondents who answered most items), an even count: numpy's median
    times = np.array([float(r[1]) if r[1] else np.nan for r in rows])
    answered = np.array([sum(c != "" for c in r[2:]) for r in rows])
    usable = times[np.isfinite(times) & (answered >= 6)]
    assert usable.size % 2 == 0
    assert summary["median_duration"] == float(np.median(usable))  # reference: numpy


def test_flag_file_and_messages_equal_the_whole_file_ones(survey):
    data, scales = survey
    outputs = {}
    for engine in ("memory", "stream"):
        target = data.with_name(f"flags-{engine}.csv")
        code, _, err = run("screen", str(data), "-s", str(scales), "--out", str(target), "--engine", engine,
                           "--block-size", SMALL_BLOCK, "--duration-column", "minutes")
        assert code == 0, err
        outputs[engine] = (list(csv.reader(io.StringIO(target.read_text(encoding="utf-8")))),
                           err.replace(target.name, "FLAGS"))
    (whole, err_m), (streamed, err_s) = outputs["memory"], outputs["stream"]
    assert err_s == err_m
    assert len(streamed) == N_ROWS + 1
    assert_same_rows(streamed, whole)


def test_flagged_only_lenient_and_tables(survey):
    data, scales = survey
    lines = data.read_text(encoding="utf-8").splitlines()
    for row in (300, 1500):  # refused answers, read as missing and counted with --lenient
        cells = lines[row].split(",")
        cells[5] = "8"
        lines[row] = ",".join(cells)
    data.write_text("\n".join(lines) + "\n", encoding="utf-8")
    whole, streamed, _, _ = both(data, scales, "--flagged-only", "--lenient")
    assert_same(whole, streamed)
    assert any("2 value(s) were neither an answer" in str(item) for item in streamed["notes"])
    assert all(r["flagged"] for r in streamed["respondents"])
    texts = [run("screen", str(data), "-s", str(scales), "--format", "md", "--engine", engine, "--block-size",
                 SMALL_BLOCK, "--lenient") for engine in ("memory", "stream")]
    assert texts[0][0] == texts[1][0] == 0
    assert texts[1][1] == texts[0][1]  # the tables, rounded for reading


def test_rows_sharing_a_hash_are_told_apart_by_their_answers(survey, monkeypatch):
    from scalewright.engine import screen_sums

    # every row gets one hash: each is a candidate copy, and only the rows' answers decide
    monkeypatch.setattr(screen_sums, "answer_row_hashes", lambda codes: np.full(codes.shape[0], 7, dtype=np.uint64))
    whole, streamed, _, _ = both(*survey)
    assert_same(whole, streamed)
    assert len(streamed["duplicates"]["rows"]) >= 5


def test_durations_that_are_not_numbers_are_named_as_whole(survey):
    data, scales = survey
    lines = data.read_text(encoding="utf-8").splitlines()
    cells = lines[1400].split(",")
    cells[1] = "soon"
    lines[1400] = ",".join(cells)
    data.write_text("\n".join(lines) + "\n", encoding="utf-8")
    results = [run("screen", str(data), "-s", str(scales), "--duration-column", "minutes", "--engine", engine,
                   "--block-size", SMALL_BLOCK) for engine in ("memory", "stream")]
    assert [code for code, _, _ in results] == [4, 4]
    assert results[1][2] == results[0][2]
    assert "row 1401" in results[1][2]


@pytest.mark.parametrize("n", [1, 2, 7, 1000, 4001])
def test_spilled_median_is_numpys(n, tmp_path):
    from scalewright.engine.value_spill import ValueSpill

    rng = np.random.default_rng(n)
    values = np.concatenate([rng.normal(300, 80, n - n // 3), rng.integers(-3, 40, n // 3).astype(float)])
    with ValueSpill(tmp_path, buffer_values=64) as spill:  # a tiny buffer: on disk, several selection rounds
        for part in np.array_split(values, 9):
            spill.add(np.append(part, np.nan))  # missing values are not counted
        assert spill.median() == float(np.median(values))  # reference: numpy
        ordered = np.sort(values)
        for rank in {0, n // 2, n - 1}:
            assert spill.kth(rank) == ordered[rank]


def test_the_streamed_reports_screen_section_is_the_whole_file_reports(survey, tmp_path):
    """The report's screen (``report._screen``, the whole-file route) against the screen a streamed report
    takes (``cli.report._streamed_screen``): the same document, the first flagged respondents in
    results.json, every respondent in screen.csv, and the same page section but for where the rows went."""
    from scalewright.cli.common import load_inputs
    from scalewright.cli.report import _streamed_screen
    from scalewright.present.report_sections import _screen_blocks
    from scalewright.report import ReportOptions
    from scalewright.report import _screen as whole_file_screen

    data, scales = survey
    inputs = load_inputs(data, scales)
    options = ReportOptions(duration_column="minutes", duration_unit="s")
    whole = whole_file_screen(inputs.spec, inputs.responses, options)
    streamed = _streamed_screen(data, inputs.spec, tmp_path, options, block_size=int(SMALL_BLOCK), single_file=False)
    a = json.loads(json.dumps(whole.to_dict()))
    b = json.loads(json.dumps(streamed.to_dict()))
    records = a.pop("respondents")
    assert_same(b.pop("respondents"), [r for r in records if r["flagged"]])
    assert_same(a, b)
    with open(tmp_path / "screen.csv", encoding="utf-8", newline="") as handle:
        table = list(csv.DictReader(handle))
    assert [row["id"] for row in table] == [r["id"] for r in records]
    assert [row["flags"] for row in table] == [";".join(r["flags"]) for r in records]

    def words(screen) -> str:
        return repr(_screen_blocks(screen, 2, n_rows=screen.summary()["n"]))

    page_whole, page_streamed = words(whole), words(streamed)
    assert "screen.csv lists every respondent with every index" in page_streamed
    assert page_streamed.split("not a verdict.")[0] == page_whole.split("not a verdict.")[0]


def test_parquet_input_and_a_file_without_ids(tmp_path):
    """A Parquet file (read a batch at a time; the questionnaire order is its schema's), and a CSV file
    without an id column (respondents named by their row numbers), on both routes."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    rows, _ = _rows(1600, seed=3)
    columns = {"staff_id": pa.array([r[0] for r in rows]),
               "minutes": pa.array([float(r[1]) if r[1] else None for r in rows])}
    for j, name in enumerate(HEADER[2:]):
        columns[name] = pa.array([int(r[2 + j]) if r[2 + j] else None for r in rows], type=pa.int64())
    source = tmp_path / "survey.parquet"
    pq.write_table(pa.table(columns), source, row_group_size=100)
    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    whole, streamed, _, _ = both(source, scales, "--duration-column", "minutes")
    assert_same(whole, streamed)
    assert streamed["duplicates"]["rows"]
    anonymous = tmp_path / "anonymous.yaml"
    anonymous.write_text(SCALES.replace("id_column: staff_id\n", ""), encoding="utf-8")
    data = _write(tmp_path / "survey.csv", rows)
    whole, streamed, _, _ = both(data, anonymous)
    assert_same(whole, streamed)
    assert streamed["respondents"][0]["id"] == "2"


def test_an_answer_text_in_a_late_block_counts_every_row_once(tmp_path):
    """A late answer text ends the quick parse part-way; the file is read again as text from its first block,
    and the rows of the blocks read before the text are not counted twice (they were, before: n 2790 of
    1600 without ids, and a file with ids fell back to the whole-file reader as if an id were repeated)."""
    rows, _ = _rows(N_ROWS, seed=7)
    rows[1500][5] = "Agree"
    anonymous = tmp_path / "anonymous.yaml"
    anonymous.write_text(SCALES.replace("id_column: staff_id\n", ""), encoding="utf-8")
    whole, streamed, _, _ = both(_write(tmp_path / "survey.csv", rows), anonymous)
    assert_same(whole, streamed)
    assert streamed["summary"]["n"] == N_ROWS

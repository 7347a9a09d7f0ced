"""Scoring: reverse keying, composites under the missing-item rule, rescaling and the scored file."""
from __future__ import annotations

from fractions import Fraction

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

from scalewright.cli import main
from scalewright.data import read_responses
from scalewright.errors import UsageError
from scalewright.scoring import (
    composite,
    keyed_items,
    pomp,
    pomp_of_composite,
    reverse_key,
    score_scales,
    write_scores,
    z_scores,
)
from scalewright.spec import load_spec

from .conftest import BASIC_DATA, BASIC_SCALES, folder_fingerprint

NAN = np.nan

# ---- small cases worked by hand (common practice, no source) -------------------------------------------


@pytest.mark.parametrize(("low", "high", "answers", "keyed"), [
    (1, 5, [1, 2, 3, 4, 5], [5, 4, 3, 2, 1]),
    (1, 7, [1, 4, 7, 2], [7, 4, 1, 6]),
    (0, 4, [0, 1, 4, 3], [4, 3, 0, 1]),
])
def test_reverse_keying_by_hand(low, high, answers, keyed):
    np.testing.assert_array_equal(reverse_key(np.array(answers), low, high), keyed)
    assert np.isnan(reverse_key(np.array([NAN]), low, high)[0])


def test_mean_and_prorated_sum_by_hand():
    keyed = np.array([[1, 2, 3, 4], [4, NAN, 4, 1], [NAN, NAN, NAN, 2]], dtype=float)
    means, answered = composite(keyed, method="mean", required=3)
    np.testing.assert_allclose(means, [2.5, 3.0, NAN])
    np.testing.assert_array_equal(answered, [4, 3, 1])
    sums, _ = composite(keyed, method="sum", required=3)
    np.testing.assert_allclose(sums, [10.0, 12.0, NAN])  # 3 answered averaging 3, times 4 items
    everything, _ = composite(keyed, method="mean", required=1)
    np.testing.assert_allclose(everything, [2.5, 3.0, 2.0])


def write_scale_file(write_file, low: int, high: int, min_answered: str, score: str = "mean"):
    return load_spec(write_file("s.yaml", f"""\
response: {{min: {low}, max: {high}, labels: {{{low}: Never, {high}: Always}}, missing_codes: [-9]}}
scales:
  often:
    items: [a, b, c, d]
    reverse: [b]
    score: {score}
    min_answered: {min_answered}
"""))


@pytest.mark.parametrize(("low", "high", "rows", "expected"), [
    # 1-7: b reversed as 8 - b; "always" is the label of 7; -9 is the no-answer code
    (1, 7, ["7,1,7,7", "always,7,never,-9", "1,,,"], [7.0, (7 + 1 + 1) / 3, NAN]),
    # 0-4: b reversed as 4 - b; 'never' is 0
    (0, 4, ["0,4,0,0", "4,0,4,4", "never,-9,2,  ALWAYS "], [0.0, 4.0, 2.0]),
])
def test_other_answer_ranges_with_texts_missing_codes_and_a_count_rule(write_file, low, high, rows, expected):
    spec = write_scale_file(write_file, low, high, "3")
    data = write_file("d.csv", "a,b,c,d\n" + "\n".join(rows) + "\n")
    table = score_scales(read_responses(data, spec), spec)
    np.testing.assert_allclose(table.scales["often"].scores, expected)


def test_a_fraction_rule_and_a_prorated_sum(write_file):
    spec = write_scale_file(write_file, 1, 5, "0.75", score="sum")  # ceil(.75 x 4) = 3 items needed
    data = write_file("d.csv", "a,b,c,d\n5,1,5,5\n4,,4,4\n4,,,4\n")
    result = score_scales(read_responses(data, spec), spec).scales["often"]
    np.testing.assert_allclose(result.scores, [20.0, 16.0, NAN])
    assert result.required == 3
    assert result.n_scored == 2
    assert result.n_unscored == 1


def test_pomp_and_z():
    np.testing.assert_allclose(pomp(np.array([1, 3, 5]), 1, 5), [0, 50, 100])  # Cohen et al. (1999) definition
    scores = np.array([1.0, 2.0, 3.0, NAN])
    z = z_scores(scores)
    valid = scores[:3]
    np.testing.assert_allclose(z[:3], (valid - valid.mean()) / np.std(valid, ddof=1))  # numpy as the reference
    assert np.isnan(z[3])
    assert np.isnan(z_scores(np.array([2.0, 2.0]))).all()


def test_composite_refuses_impossible_rules():
    with pytest.raises(UsageError):
        composite(np.ones((2, 3)), required=4)
    with pytest.raises(UsageError):
        composite(np.ones((2, 3)), method="median")


# ---- properties -------------------------------------------------------------------------------------------

answer_matrices = hnp.arrays(np.float64, st.tuples(st.integers(1, 30), st.integers(1, 8)),
                             elements=st.integers(1, 5).map(float))


@given(answer_matrices)
def test_reverse_twice_is_identity(answers):
    np.testing.assert_array_equal(reverse_key(reverse_key(answers, 1, 5), 1, 5), answers)


@given(answer_matrices)
def test_nothing_missing_gives_the_plain_row_mean_and_sum_is_mean_times_k(answers):
    means, answered = composite(answers, method="mean")
    np.testing.assert_allclose(means, answers.mean(axis=1))  # numpy's row mean
    sums, _ = composite(answers, method="sum")
    np.testing.assert_allclose(sums, means * answers.shape[1])
    assert (answered == answers.shape[1]).all()


@given(answer_matrices, st.randoms(use_true_random=False))
def test_item_order_does_not_matter(answers, random):
    order = list(range(answers.shape[1]))
    random.shuffle(order)
    np.testing.assert_allclose(composite(answers)[0], composite(answers[:, order])[0])


@settings(max_examples=50)
@given(hnp.arrays(np.float64, st.tuples(st.integers(1, 20), st.integers(2, 6)),
                  elements=st.one_of(st.integers(1, 5).map(float), st.just(np.nan))))
def test_prorated_sum_equals_mean_of_answered_times_k(answers):
    sums, answered = composite(answers, method="sum", required=1)
    for row, total, count in zip(answers, sums, answered, strict=True):
        if count == 0:
            assert np.isnan(total)
        else:
            assert total == pytest.approx(np.nanmean(row) * answers.shape[1])


# ---- the scored file --------------------------------------------------------------------------------------


@pytest.fixture
def scored(write_file):
    data, scales = write_file("data.csv", BASIC_DATA), write_file("scales.yaml", BASIC_SCALES)
    spec = load_spec(scales)
    return data, scales, spec, score_scales(read_responses(data, spec), spec)


def test_keyed_items_reverse_only_the_reverse_items(scored):
    data, _, spec, _ = scored
    keyed = keyed_items(read_responses(data, spec), spec.scales["workload"])
    np.testing.assert_array_equal(keyed[:, 2], [1, NAN, 5, NAN])  # wl3 on 1..5: 6 - x


@pytest.mark.parametrize("suffix", [".csv", ".xlsx", ".parquet"])
def test_scored_file_in_every_format_keeps_row_order(scored, tmp_path, suffix):
    data, scales, _, table = scored
    target = write_scores(table, tmp_path / f"scores{suffix}", inputs=[data, scales])
    frame = {".csv": pd.read_csv, ".xlsx": pd.read_excel, ".parquet": pd.read_parquet}[suffix](target)
    assert list(frame.columns) == ["staff_id", "workload", "workload__answered", "stay", "stay__answered"]
    assert list(frame["staff_id"]) == ["s01", "s02", "s03", "s04"]
    # hand-keyed: s01 workload (1 + 2 + (6-5)) / 3; s02 (4 + 1) / 2; s04 only one item -> no score
    np.testing.assert_allclose(frame["workload"], [4 / 3, 2.5, (5 + 5 + 5) / 3, NAN])
    np.testing.assert_allclose(frame["stay"], [13.0, 3.0, NAN, 8.0])  # both items needed (fraction 1.0)
    assert not list(tmp_path.glob(".scores*"))  # no temporary file left behind


def test_formula_like_ids_are_neutralised(write_file, tmp_path):
    data = write_file("d.csv", BASIC_DATA.replace("s01", "=HYPERLINK(1)").replace("s02", "@x"))
    scales = write_file("s.yaml", BASIC_SCALES)
    spec = load_spec(scales)
    table = score_scales(read_responses(data, spec), spec)
    write_scores(table, tmp_path / "o.csv")
    text = (tmp_path / "o.csv").read_text()
    assert "'=HYPERLINK(1)" in text
    assert "'@x" in text
    write_scores(table, tmp_path / "o.xlsx")
    assert pd.read_excel(tmp_path / "o.xlsx")["staff_id"][0] == "'=HYPERLINK(1)"


def test_score_command_writes_the_file_and_refuses_to_overwrite_an_input(write_file, tmp_path, capsys):
    data, scales = write_file("data.csv", BASIC_DATA), write_file("scales.yaml", BASIC_SCALES)
    assert main(["score", str(data), "--scales", str(scales), "--out", str(tmp_path / "s.csv"),
                 "--standardize", "pomp"]) == 0
    frame = pd.read_csv(tmp_path / "s.csv")
    np.testing.assert_allclose(frame["workload__pomp"], pomp(np.array([4 / 3, 2.5, 5.0, NAN]), 1, 5))
    before = folder_fingerprint(tmp_path)
    assert main(["score", str(data), "--scales", str(scales), "--out", str(data)]) == 2
    assert "refusing to write" in capsys.readouterr().err
    assert folder_fingerprint(tmp_path) == before


def test_unknown_output_type_is_a_usage_error(scored, tmp_path):
    *_, table = scored
    with pytest.raises(UsageError, match=r"\.csv, \.xlsx or \.parquet"):
        write_scores(table, tmp_path / "s.sav")


def test_control_characters_in_ids_are_refused_before_an_xlsx_is_written(write_file, tmp_path, capsys):
    from scalewright.cli import main

    from .conftest import BASIC_SCALES

    data = write_file("d.csv", "staff_id,shift,wl1,wl2,wl3,st1,st2\n\"s\x01\",day,1,2,3,4,5\ns2,day,1,2,3,4,5\n")
    code = main(["score", str(data), "--scales", str(write_file("s.yaml", BASIC_SCALES)),
                 "--out", str(tmp_path / "o.xlsx")])
    err = capsys.readouterr().err
    assert code == 4
    assert err.count("\n") == 1
    assert "control character" in err
    assert "'s\\x01'" in err
    assert not (tmp_path / "o.xlsx").exists()


# ---- rescaled scores are added, never put in place of the raw score ---------------------------------------


@pytest.mark.parametrize("how", ["pomp", "z"])
def test_standardize_adds_a_column_beside_the_raw_score(write_file, tmp_path, how):
    data, scales = write_file("data.csv", BASIC_DATA), write_file("scales.yaml", BASIC_SCALES)
    assert main(["score", str(data), "--scales", str(scales), "--out", str(tmp_path / "s.csv"),
                 "--standardize", how]) == 0
    frame = pd.read_csv(tmp_path / "s.csv")
    assert list(frame.columns) == ["staff_id", "workload", f"workload__{how}", "workload__answered",
                                   "stay", f"stay__{how}", "stay__answered"]
    raw = np.array([4 / 3, 2.5, 5.0, NAN])  # worked by hand above: the raw score stays as it was
    np.testing.assert_allclose(frame["workload"], raw)
    if how == "pomp":  # Cohen, Cohen, Aiken & West (1999): 100 (x - min) / (max - min)
        np.testing.assert_allclose(frame["workload__pomp"], 100 * (raw - 1) / 4)
        np.testing.assert_allclose(frame["stay__pomp"], 100 * (np.array([13.0, 3.0, NAN, 8.0]) - 2) / 12)
    else:  # scipy's z-scores with the n - 1 standard deviation, missing scores left out
        from scipy import stats

        np.testing.assert_allclose(frame["workload__z"], stats.zscore(raw, ddof=1, nan_policy="omit"))


def _exact_text(value: Fraction) -> str:
    """The shortest text that reads back as the double nearest ``value`` (Python's float repr, exact rounding)."""
    return repr(float(value))


def test_scores_are_written_without_float_noise(write_file, tmp_path):
    # 16 / 5 = 3.2 and its POMP on 1..5 is exactly 55; rescaling the rounded 3.2 gave 55.00000000000001
    spec_path = write_file("s.yaml", """\
id_column: id
response: {min: 1, max: 5}
scales:
  often: {items: [a, b, c, d, e], score: mean, min_answered: 3}
  total: {items: [a, b, c, d, e], score: sum, min_answered: 3}
""")
    data = write_file("d.csv", "id,a,b,c,d,e\nr1,3,3,3,4,3\nr2,1,2,2,,5\nr3,5,4,,,1\n")
    assert main(["score", str(data), "-s", str(spec_path), "--out", str(tmp_path / "o.csv"),
                 "--standardize", "pomp"]) == 0
    lines = (tmp_path / "o.csv").read_text().splitlines()
    cells = {row.split(",")[0]: row.split(",") for row in lines[1:]}
    assert lines[0] == "id,often,often__pomp,often__answered,total,total__pomp,total__answered"
    assert cells["r1"][1:3] == ["3.2", "55.0"]
    # exact rational arithmetic (Python's fractions) as the reference for every written number
    assert cells["r2"][1] == _exact_text(Fraction(10, 4))
    assert cells["r2"][4] == _exact_text(Fraction(10 * 5, 4))     # prorated sum: mean of answered x k
    assert cells["r2"][5] == _exact_text(Fraction(100 * (10 - 4), 4 * 4))
    assert cells["r3"][4] == _exact_text(Fraction(10 * 5, 3))


@settings(max_examples=60)
@given(hnp.arrays(np.float64, st.tuples(st.integers(1, 12), st.integers(1, 7)),
                  elements=st.one_of(st.integers(0, 10).map(float), st.just(np.nan))),
       st.sampled_from(["mean", "sum"]))
def test_scores_and_pomp_are_the_nearest_double_to_the_exact_value(answers, method):
    k = answers.shape[1]
    scores, answered = composite(answers, method=method, required=1)
    rescaled = pomp_of_composite(answers, 0.0, 10.0, required=1)
    for row, score, value, count in zip(answers, scores, rescaled, answered, strict=True):
        if count == 0:
            assert np.isnan(score)
            assert np.isnan(value)
            continue
        total = Fraction(int(np.nansum(row)))  # the reference: exact rational arithmetic
        mean = total / int(count)
        assert score == float(mean * k if method == "sum" else mean)
        assert value == float(100 * mean / 10)


def test_score_out_over_an_existing_file_needs_force(write_file, tmp_path, capsys):
    data, scales = write_file("data.csv", BASIC_DATA), write_file("scales.yaml", BASIC_SCALES)
    target = write_file("kept.csv", "someone else's work\n")
    before = folder_fingerprint(tmp_path)
    assert main(["score", str(data), "--scales", str(scales), "--out", str(target)]) == 2
    assert "exists; add --force" in capsys.readouterr().err
    assert folder_fingerprint(tmp_path) == before
    assert main(["score", str(data), "--scales", str(scales), "--out", str(target), "--force"]) == 0
    assert pd.read_csv(target)["staff_id"].tolist() == ["s01", "s02", "s03", "s04"]


def test_the_id_column_name_is_neutralised_too(write_file, tmp_path):
    hostile = "=HYPERLINK(1)"
    data = write_file("d.csv", BASIC_DATA.replace("staff_id", hostile))
    scales = write_file("s.yaml", BASIC_SCALES.replace("id_column: staff_id", f"id_column: '{hostile}'"))
    spec = load_spec(scales)
    table = score_scales(read_responses(data, spec), spec)
    write_scores(table, tmp_path / "o.csv")
    assert (tmp_path / "o.csv").read_text().splitlines()[0].startswith(f"'{hostile},")
    write_scores(table, tmp_path / "o.xlsx")
    from openpyxl import load_workbook

    sheet = load_workbook(tmp_path / "o.xlsx").active
    assert sheet.cell(row=1, column=1).value == f"'{hostile}"
    assert sheet.cell(row=1, column=1).data_type == "s"  # a text cell, not a formula

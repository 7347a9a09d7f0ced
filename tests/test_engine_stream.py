"""The streaming route: a file read in many small blocks gives the whole-file route's output exactly."""
from __future__ import annotations

import io
import json
from contextlib import redirect_stderr, redirect_stdout
from pathlib import Path

import pytest

from scalewright.cli import main
from scalewright.engine import blocks
from scalewright.engine.choose import choose_route
from scalewright.errors import UsageError

from .engine_data import SCALES, assert_same_json, survey_rows, write_csv, write_parquet

SMALL_BLOCK = "4096"  # bytes: the test files are cut into dozens of blocks


def run(*args: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        code = main(list(args))
    return code, out.getvalue(), err.getvalue()


def both_routes(command: str, data: Path, scales: Path, *options: str) -> tuple[dict, dict]:
    """The JSON of the whole-file route and of the streaming route (its own ``engine`` block set aside)."""
    whole, streamed, _, _ = both_routes_with_texts(command, data, scales, *options)
    return whole, streamed


def both_routes_with_texts(command: str, data: Path, scales: Path, *options: str) -> tuple[dict, dict, str, str]:
    """:func:`both_routes` and the two printed documents as text."""
    code_m, out_m, err_m = run(command, str(data), "-s", str(scales), "--format", "json", "--engine", "memory",
                               *options)
    code_s, out_s, err_s = run(command, str(data), "-s", str(scales), "--format", "json", "--engine", "stream",
                               "--block-size", SMALL_BLOCK, *options)
    assert code_m == 0, err_m
    assert code_s == 0, err_s
    assert "read whole" not in err_s  # the streaming route was taken
    streamed = json.loads(out_s)
    assert streamed.pop("engine") == {"name": "stream"}
    return json.loads(out_m), streamed, out_m, out_s


def memory_and_dask(command: str, whole_file: Path, dataset: Path, scales: Path, scheduler: str,
                    *options: str) -> tuple[dict, dict]:
    """The JSON of the whole-file route on ``whole_file`` and of the Dask route (``scheduler``) on
    ``dataset``, the same rows as a dataset."""
    code_m, out_m, err_m = run(command, str(whole_file), "-s", str(scales), "--format", "json", "--engine", "memory",
                               *options)
    code_d, out_d, err_d = run(command, str(dataset), "-s", str(scales), "--format", "json", "--engine", "dask",
                               "--scheduler", scheduler, *options)
    assert code_m == 0, err_m
    assert code_d == 0, err_d
    return json.loads(out_m), json.loads(out_d)


@pytest.fixture
def survey(tmp_path: Path) -> tuple[Path, Path]:
    scales = tmp_path / "scales.yaml"
    scales.write_text(SCALES, encoding="utf-8")
    return write_csv(tmp_path / "survey.csv", survey_rows(2500)), scales


@pytest.mark.parametrize("options", [(), ("--pairwise",), ("--by", "shift", "--by", "site"),
                                     ("--pairwise", "--by", "site", "--min-group", "3")])
def test_reliability_streamed_equals_whole_file(survey, options):
    whole, streamed = both_routes("reliability", *survey, *options)
    assert streamed == whole


def test_many_blocks_are_read(survey, monkeypatch):
    from scalewright.engine import stream

    seen = []
    original = stream._summarise_batches

    def counting(batches, *args, **options):
        def counted():
            for batch in batches:
                seen.append(batch.num_rows)
                yield batch
        return original(counted(), *args, **options)

    monkeypatch.setattr(stream, "_summarise_batches", counting)
    both_routes("reliability", *survey)
    assert len(seen) > 10
    assert sum(seen) == 2500


def test_parquet_streamed_equals_whole_file(tmp_path, survey, monkeypatch):
    monkeypatch.setattr(blocks, "BATCH_ROWS", 300)
    data = write_parquet(tmp_path / "survey.parquet", survey_rows(2500))
    whole, streamed = both_routes("reliability", data, survey[1], "--by", "shift")
    assert streamed == whole


def _with_cells(path: Path, changes: dict[tuple[int, int], str]) -> Path:
    lines = path.read_text(encoding="utf-8").splitlines()
    for (row, column), value in changes.items():
        cells = lines[row - 1].split(",")
        cells[column] = value
        lines[row - 1] = ",".join(cells)
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def test_refused_values_far_down_name_their_global_row_exactly_as_whole(survey):
    data, scales = survey
    _with_cells(data, {(57, 3): "7", (1800, 4): "0", (2400, 3): "12", (2480, 8): "Agreed"})
    whole = run("reliability", str(data), "-s", str(scales), "--engine", "memory")
    streamed = run("reliability", str(data), "-s", str(scales), "--engine", "stream", "--block-size", SMALL_BLOCK)
    assert whole[0] == streamed[0] == 4
    assert streamed[2] == whole[2]
    assert "row 2400, column wl1" not in whole[2]
    assert "row 57, column wl1" in streamed[2]
    lenient_whole, lenient_streamed = both_routes("reliability", data, scales, "--lenient")
    assert lenient_streamed == lenient_whole
    assert lenient_whole["reading"]["refused_total"] == 4


def test_one_digit_blocks_and_blocks_parsed_as_numbers_read_alike(survey, monkeypatch):
    # every answer of the scale file is one digit, so the first blocks are read from the cells' bytes; a
    # two-digit code and a padded number further down send the later blocks to the 16-bit parse. The
    # reference is the whole-file route (pandas and pyarrow's whole-file parse), which has no block.
    from scalewright import read_codes

    calls = {"digits": 0, "numbers": 0}
    for name, key in (("convert_digit_codes", "digits"), ("convert_codes", "numbers")):
        original = getattr(read_codes, name)

        def counted(*args, original=original, key=key, **options):
            calls[key] += 1
            return original(*args, **options)

        monkeypatch.setattr(blocks, name, counted)
    data, scales = survey
    _with_cells(data, {(40, 3): "7", (61, 4): "0", (1900, 5): "99", (2300, 6): " 3"})
    strict = [run("reliability", str(data), "-s", str(scales), "--engine", engine, "--block-size", SMALL_BLOCK)
              for engine in ("memory", "stream")]
    assert strict[0][0] == strict[1][0] == 4
    assert strict[0][2] == strict[1][2]
    assert calls["digits"]
    assert calls["numbers"]
    whole, streamed = both_routes("reliability", data, scales, "--lenient", "--by", "shift")
    assert streamed == whole
    assert whole["reading"]["refused_total"] == 3


def test_answer_texts_and_decimals_take_the_text_route_or_the_whole_file(survey):
    data, scales = survey
    _with_cells(data, {(300, 5): "Agree", (2100, 6): " strongly DISAGREE "})
    whole, streamed = both_routes("reliability", data, scales)
    assert streamed == whole
    assert whole["reading"]["texts_by_column"] == {"wl3": 1, "wl4": 1}
    _with_cells(data, {(1500, 7): "2.5"})  # between two whole answer codes: refused on both routes alike
    refusals = [run("reliability", str(data), "-s", str(scales), "--engine", engine, "--format", "json")
                for engine in ("memory", "stream")]
    assert [code for code, _, _ in refusals] == [4, 4]
    assert refusals[0][2] == refusals[1][2]
    assert "row 1500, column cl1" in refusals[0][2]


def test_empty_lines_and_line_breaks_in_values(survey):
    data, scales = survey
    lines = data.read_text(encoding="utf-8").splitlines()
    lines[1500] = ""  # an empty line: rows below it keep their spreadsheet numbers (whole-file route)
    data.write_text("\n".join(lines) + "\n", encoding="utf-8")
    code, out, err = run("reliability", str(data), "-s", str(scales), "--engine", "stream", "--format", "json")
    assert code == 0
    assert "read whole" in err
    for row in (300, 1500, 2200):  # a quoted value holding a line break
        lines[row] = f's9{row},day,"north\nside",1,2,3,4,5,4,3'
    data.write_text("\n".join(lines) + "\n", encoding="utf-8")
    whole, streamed = both_routes("reliability", data, scales, "--by", "site", "--min-group", "3")
    assert streamed == whole
    assert "north\nside" in whole["scales"]["workload"]["by"]["site"]


def test_bytes_that_are_not_utf8_are_refused_alike_and_the_note_says_why(survey):
    data, scales = survey
    lines = data.read_bytes().split(b"\n")
    lines[1700] = lines[1700].replace(b",day,", b",d\xe9y,", 1)  # a Latin-1 byte in a group level
    data.write_bytes(b"\n".join(lines))
    refusals = [run("reliability", str(data), "-s", str(scales), "--engine", engine, "--format", "json")
                for engine in ("memory", "stream")]
    assert [code for code, _, _ in refusals] == [4, 4]
    whole_error, streamed_error = (err.splitlines()[-1] for _, _, err in refusals)
    assert streamed_error == whole_error
    assert whole_error.startswith(f"error: {data}:1701: not UTF-8 text (byte 0xe9")
    assert "read whole, not in blocks: it holds bytes that are not UTF-8 text" in refusals[1][2]


def test_id_problems_are_refused_as_whole(survey):
    data, scales = survey
    _with_cells(data, {(2000, 0): ""})
    results = [run("reliability", str(data), "-s", str(scales), "--engine", engine, "--block-size", SMALL_BLOCK)
               for engine in ("memory", "stream")]
    assert results[0][0] == results[1][0] == 4
    assert results[0][2] == results[1][2]
    assert "row 2000" in results[1][2]
    _with_cells(data, {(2000, 0): "s00003"})  # a duplicate id
    results = [run("reliability", str(data), "-s", str(scales), "--engine", engine, "--block-size", SMALL_BLOCK)
               for engine in ("memory", "stream")]
    assert results[0][0] == results[1][0] == 4
    assert results[1][2].splitlines()[-1] == results[0][2].strip()
    assert "s00003" in results[0][2]


def test_group_levels_listed_in_the_scale_file(survey, tmp_path):
    data, _ = survey
    scales = tmp_path / "ordered.yaml"
    scales.write_text(SCALES.replace("groups: [shift]", "groups: [{shift: [night, day, late]}]"), encoding="utf-8")
    results = [run("reliability", str(data), "-s", str(scales), "--engine", engine, "--block-size", SMALL_BLOCK)
               for engine in ("memory", "stream")]
    assert results[0][0] == results[1][0] == 4
    assert results[0][2] == results[1][2]
    whole, streamed = both_routes("reliability", data, scales, "--lenient")
    assert streamed == whole
    assert list(whole["scales"]["workload"]["by"]["shift"]) == ["night", "day", "late"]


def test_route_choice(tmp_path, monkeypatch):
    data = tmp_path / "big.csv"
    data.write_bytes(b"x" * 2000)
    assert choose_route("auto", data) == "memory"
    monkeypatch.setattr("scalewright.engine.choose.STREAM_ABOVE_BYTES", 1000)
    assert choose_route("auto", data) == "stream"
    assert choose_route("auto", data, needs_rows="--bootstrap") == "memory"
    assert choose_route("auto", tmp_path / "book.xlsx") == "memory"
    assert choose_route("memory", data) == "memory"
    with pytest.raises(UsageError, match="--bootstrap"):
        choose_route("stream", data, needs_rows="--bootstrap")


@pytest.mark.parametrize("options", [("--columns", "shift,site", "--items"), ("--columns", "site,wl2", "--min-cell", "1"),
                                     ("--items", "--order", "shift=night,day,late,weekend", "--columns", "shift")])
def test_tally_streamed_equals_whole_file(survey, options):
    whole, streamed = both_routes("tally", *survey, *options)
    assert streamed == whole


def test_tally_without_a_scale_file_and_numeric_columns(tmp_path):
    rows = [[f"{i}", ["1", "2", "10", "2.5", ""][i % 5], ["b", "a", " a ", ""][i % 4]] for i in range(900)]
    data = write_csv(tmp_path / "plain.csv", rows, header=["code", "grade", "letter"])
    results = []
    for engine in ("memory", "stream"):
        code, out, err = run("tally", str(data), "--columns", "grade,letter", "--format", "json", "--engine", engine,
                             "--block-size", SMALL_BLOCK)
        assert code == 0, err
        document = json.loads(out)
        document.pop("engine", None)
        results.append(document)
    assert results[0] == results[1]
    grades = [row["category"] for row in results[1]["columns"]["grade"]["categories"]]
    assert grades == ["1", "2", "2.5", "10"]  # numbers in numeric order


def assert_same_numbers(streamed, whole, path="$"):
    """Equal structure (keys in order) and texts, counts exactly; other numbers to 1e-12 (sums taken in another
    order)."""
    assert_same_json(streamed, whole, path, key_order=True)


@pytest.mark.parametrize("options", [(), ("--by", "shift", "--items"), ("--by", "site", "--quantile-method", "hazen")])
def test_shape_streamed_equals_whole_file(survey, options):
    whole, streamed = both_routes("shape", *survey, *options)
    assert_same_numbers(streamed, whole)


@pytest.mark.parametrize("options", [(), ("--factors", "scales", "--method", "ml")])
def test_structure_streamed_equals_whole_file(survey, options):
    whole, streamed = both_routes("structure", *survey, *options)
    # the correlations come from exact cross-products instead of numpy.corrcoef of floats: equal to
    # rounding, and the factor fits started from them converge to the same solution
    assert_same_numbers(streamed, whole)


def test_no_answer_texts_are_read_as_missing_on_both_routes(survey):
    # reference: the whole-file reader (data.read_responses), which reads the default "no answer" texts
    data, scales = survey
    _with_cells(data, {(40, 3): "NA", (900, 4): " n/a ", (1700, 1): "#N/A", (2300, 2): "N/A"})
    for command, options in (("reliability", ("--by", "shift")), ("tally", ("--columns", "shift,site", "--items")),
                             ("structure", ())):
        whole, streamed = both_routes(command, data, scales, *options)
        assert_same_numbers(streamed, whole)  # exact but for sums taken in another order
    whole, _ = both_routes("reliability", data, scales)
    assert whole["reading"]["missing_texts_by_column"]["wl1"] == {"NA": 1}
    assert sum(sum(c.values()) for c in whole["reading"]["missing_texts_by_column"].values()) == 4


@pytest.mark.parametrize("options", [("--bootstrap", "50")])
def test_options_the_summaries_do_not_serve_keep_the_whole_file_route(survey, options):
    data, scales = survey
    code, _, err = run("reliability", str(data), "-s", str(scales), "--engine", "stream", "--format", "json",
                       *options)
    assert code == 2
    assert options[0] in err
    code, out, err = run("reliability", str(data), "-s", str(scales), "--format", "json", *options)  # auto
    assert code == 0, err
    assert "engine" not in json.loads(out)


def test_reliability_confirmatory_block_streamed_equals_whole_file(survey):
    # reference: the whole-file route's one-factor fits (analyses.confirm.one_factor_models on the rows)
    whole, streamed = both_routes("reliability", *survey)
    for name in ("workload", "climate"):
        assert streamed["scales"][name]["confirmatory"] == whole["scales"][name]["confirmatory"]
        assert whole["scales"][name]["confirmatory"]  # the block is there to compare

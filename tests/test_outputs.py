"""What the tool writes: file modes, figure file names, and names and texts that try to inject into outputs."""
from __future__ import annotations

import json
import os
import re
import stat
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.cli import main
from scalewright.present.figure_files import FigureNames, safe_part
from scalewright.present.render import escape_markdown, render_text, visible_controls
from scalewright.present.table import Table

#: a carriage return on its own starts a new line for Markdown (CommonMark: \n, \r and \r\n end a line)
CR_TITLE = "Pulse 2026\r# Injected heading"
CR_LEVEL = "west\r## Injected level"
CR_WORDING = "I feel heard\r- injected list item"
CR_LABEL = "Often\r1. injected numbered item"
#: an escape sequence that retitles a terminal, and one that writes to its clipboard
ESCAPES = "\x1b]0;owned\x07\x1b]52;c;cGF5bG9hZA==\x07"



def _yaml(text: str) -> str:
    """``text`` as a YAML double-quoted scalar (a JSON string is one), so \\r reaches the tool as a carriage return."""
    return json.dumps(text)


SCALES = f"""\
version: 1
title: {_yaml(CR_TITLE)}
id_column: staff_id
groups: [team]
response:
  min: 1
  max: 5
  labels: {{1: Never, 2: Rarely, 3: Sometimes, 4: {_yaml(CR_LABEL)}, 5: Always}}
scales:
  wb.1:
    title: Wellbeing one
    items: [a1, a2, a3, a4]
    wording: {{a1: {_yaml(CR_WORDING)}}}
  wb_1:
    title: Wellbeing two
    items: [b1, b2, b3, b4]
  wb-1:
    title: Wellbeing three
    items: [c1, c2, c3, c4]
"""

ITEMS = [f"{s}{j}" for s in "abc" for j in range(1, 5)]


def write_inputs(folder: Path, *, n: int = 120, seed: int = 3) -> tuple[Path, Path]:
    """Three scales whose names differ only in punctuation, a group level with a carriage return, and two kinds
    of identical answer rows: copies of an ordinary row (flagged) and copies of a straight line (long-run)."""
    rng = np.random.default_rng(seed)
    trait = rng.normal(size=(n, 3))
    frame = pd.DataFrame({"staff_id": [f"p{i:03d}" for i in range(n)],
                          "team": rng.choice(["north", "south", CR_LEVEL], size=n)})
    for s, letter in enumerate("abc"):
        for j in range(1, 5):
            frame[f"{letter}{j}"] = np.clip(np.round(3 + trait[:, s] + rng.normal(scale=0.6, size=n)), 1, 5).astype(int)
    frame.loc[[1, 2], ITEMS] = frame.loc[0, ITEMS].to_numpy()  # an ordinary answer row, three times
    frame.loc[[3, 4], ITEMS] = 2                                 # a straight line, twice
    # Parquet keeps a carriage return inside a value as it is (the CSV readers are another matter)
    data, scales = folder / "pulse.parquet", folder / "pulse.yaml"
    frame.to_parquet(data, index=False)
    scales.write_text(SCALES, encoding="utf-8")
    return data, scales


@pytest.fixture
def umask_022():
    """Run with the common umask 022 (restored afterwards)."""
    previous = os.umask(0o022)
    yield 0o022
    os.umask(previous)


@pytest.fixture(scope="module")
def report_folder(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("outputs")
    data, scales = write_inputs(folder)
    previous = os.umask(0o027)  # an unusual umask, so a mode that ignores it shows
    try:
        assert main(["report", str(data), "--scales", str(scales), "--out", str(folder / "report"),
                     "--iterations", "3", "--quiet"]) == 0
    finally:
        os.umask(previous)
    return folder / "report"


def _mode(path: Path) -> int:
    return stat.S_IMODE(path.stat().st_mode)


# ---- file modes --------------------------------------------------------------------------------------------


def test_every_report_file_gets_the_mode_the_umask_implies(report_folder):
    files = [p for p in report_folder.rglob("*") if p.is_file()]
    assert {p.name for p in files} >= {"index.html", "report.md", "results.json", "scores.csv"}
    assert len(files) > 10
    # what open(..., "w") gives any program: 666 less the umask (027 when the report was written)
    assert {p.name: oct(_mode(p)) for p in files} == {p.name: oct(0o640) for p in files}


def test_every_command_output_gets_the_mode_the_umask_implies(tmp_path, umask_022, capsys):
    data, scales = write_inputs(tmp_path)
    run = [
        ["score", str(data), "-s", str(scales), "--out", str(tmp_path / "scores.csv")],
        ["score", str(data), "-s", str(scales), "--out", str(tmp_path / "scores.xlsx")],
        ["score", str(data), "-s", str(scales), "--out", str(tmp_path / "scores.parquet")],
        ["score", str(data), "-s", str(scales), "--out", str(tmp_path / "summary.json"), "-f", "json"],
        ["screen", str(data), "-s", str(scales), "--out", str(tmp_path / "screen.csv")],
        ["reliability", str(data), "-s", str(scales), "--out", str(tmp_path / "reliability.md")],
        ["shape", str(data), "-s", str(scales), "--out", str(tmp_path / "shape.json"),
         "--figures", str(tmp_path / "shape-figures")],
        ["tally", str(data), "-s", str(scales), "--columns", "team", "--out", str(tmp_path / "tally.csv"),
         "--figures", str(tmp_path / "tally-figures")],
        ["draft", str(data), "--out", str(tmp_path / "draft.yaml")],
    ]
    for args in run:
        assert main(args) == 0, (args, capsys.readouterr().err)
    # demo writes its data and scale file, then builds a report (whose files the test above checks)
    from scalewright.cli.demo import write_demo_inputs

    (tmp_path / "demo").mkdir()
    write_demo_inputs(tmp_path / "demo", seed=1, n=60)
    inputs = {data, scales}
    written = [p for p in tmp_path.rglob("*") if p.is_file() and p not in inputs]
    assert len(written) > 20
    assert {str(p.relative_to(tmp_path)): oct(_mode(p)) for p in written} == {
        str(p.relative_to(tmp_path)): oct(0o644) for p in written}


def test_a_replaced_file_keeps_its_own_mode(tmp_path, umask_022):
    data, scales = write_inputs(tmp_path)
    target = tmp_path / "scores.csv"
    target.write_text("old\n")
    target.chmod(0o600)  # the user made it private: replacing it must not widen that
    assert main(["score", str(data), "-s", str(scales), "--out", str(target), "--force"]) == 0
    assert _mode(target) == 0o600
    assert target.read_text() != "old\n"


# ---- figure file names -------------------------------------------------------------------------------------


def test_scales_whose_names_differ_in_punctuation_get_a_figure_each(report_folder):
    figures = sorted(p.name for p in (report_folder / "figures").iterdir())
    histograms = [name for name in figures if "histogram" in name and name.endswith(".svg")]
    assert len(histograms) == 3, figures  # wb.1, wb_1 and wb-1: none overwrote another
    markdown = (report_folder / "report.md").read_text(encoding="utf-8")
    linked = re.findall(r"\]\((figures/[^)]+\.png)\)", markdown)
    assert len(linked) == len(set(linked))
    assert all((report_folder / name).is_file() for name in linked)
    assert len([p for p in figures if p.endswith(".png")]) == len(linked)


def test_tally_figures_of_columns_named_alike_do_not_overwrite_each_other(tmp_path, capsys):
    data, scales = write_inputs(tmp_path)
    frame = pd.read_parquet(data)
    for name, level in (("a b", "x"), ("a/b", "y"), ("a_b", "z")):
        frame[name] = level
    frame.to_parquet(data, index=False)
    assert main(["tally", str(data), "--columns", "a b,a/b,a_b", "--figures", str(tmp_path / "f"), "-f", "json"]) == 0
    names = [p.name for p in (tmp_path / "f").iterdir()]
    assert len(names) == 6
    assert len({n.casefold() for n in names}) == 6
    assert "tally_a_b.svg" in names  # a name that is already safe stays as it is


names = st.text(alphabet=st.sampled_from("aAbB_-./ \\:é★\r\x1b0"), min_size=1, max_size=70)


@settings(max_examples=60)
@given(st.lists(names, min_size=2, max_size=8, unique=True))
def test_safe_parts_are_safe_and_distinct_names_stay_distinct(batch):
    parts = [safe_part(name) for name in batch]
    assert all(re.fullmatch(r"[A-Za-z0-9_-]{1,80}", part) for part in parts)
    assert len(set(parts)) == len(parts)
    stems = FigureNames()
    taken = [stems.unique(part) for part in parts + parts]  # the second round repeats every stem
    assert len({t.casefold() for t in taken}) == len(taken)


# ---- injection through names and texts ---------------------------------------------------------------------


def test_carriage_returns_cannot_start_a_line_in_report_md(report_folder):
    markdown = (report_folder / "report.md").read_text(encoding="utf-8")
    assert "\r" not in markdown
    for line in markdown.split("\n"):  # no injected text starts a heading or a list item of its own
        assert not re.match(r"\s*(#+|[-*+]|\d+[.)])\s*(Injected|injected)", line), line
    # the texts are all there, on the line they belong to
    assert "Pulse 2026 # Injected heading" in markdown
    assert "injected list item" in markdown
    assert "Injected level" in markdown


def test_escape_markdown_turns_every_line_break_into_a_space():
    for breaker in ("\n", "\r", "\r\n", "\u2028", "\x0b", "\x0c", "\x85"):
        assert escape_markdown(f"a{breaker}# b") == "a # b"


def test_terminal_tables_show_control_characters_escaped(tmp_path, capsys):
    data, scales = write_inputs(tmp_path)
    frame = pd.read_parquet(data)
    frame["team"] = frame["team"].where(frame.index % 2 == 0, f"east{ESCAPES}")
    frame.to_parquet(data, index=False)
    assert main(["tally", str(data), "--columns", "team", "-f", "table"]) == 0
    out = capsys.readouterr().out
    assert "\x1b" not in out
    assert "\x07" not in out
    assert "\r" not in out
    assert "east\\x1b]0;owned\\x07" in out
    assert "## Injected level" in out
    assert main(["compare", str(data), "-s", str(scales), "--by", "team", "-f", "table"]) == 0
    out = capsys.readouterr().out
    assert "\x1b" not in out
    assert "east\\x1b]0;owned" in out


def test_visible_controls_leaves_ordinary_text_alone():
    assert visible_controls("Zufriedenheit – très bien, 5 ★") == "Zufriedenheit – très bien, 5 ★"
    assert visible_controls("a\u202eb\x9bc\x00") == "a\\u202eb\\x9bc\\x00"
    text = render_text([Table(title="T\x1b[2J", columns=("c\x1b",), rows=(("v\x07",),), kinds={"c\x1b": "text"},
                              notes=("n\x1b",))])
    assert "\x1b" not in text
    assert "\x07" not in text
    assert "T\\x1b[2J" in text


# ---- one account of duplicates in the report ---------------------------------------------------------------


def _markdown_table(markdown: str, title: str) -> list[list[str]]:
    lines = markdown.split("\n")
    start = lines.index(f"**{title}**") + 2
    rows = []
    for line in lines[start + 2:]:
        if not line.startswith("|"):
            break
        rows.append([cell.strip() for cell in line.strip("|").split(" | ")])
    return rows


def test_the_reports_duplicate_count_table_and_explanation_agree(report_folder):
    markdown = (report_folder / "report.md").read_text(encoding="utf-8")
    flags = {row[0]: row for row in _markdown_table(markdown, "Screening flags")}
    counted = int(flags["duplicate-answers"][3])
    groups = _markdown_table(markdown, "Duplicate records")
    flagged_members = sum(len(row[1].split(", ")) for row in groups if row[2] == "yes")
    # the data hold one ordinary row three times (flagged) and one straight line twice (counted as long-run)
    assert counted == flagged_members == 3
    assert [row[2] for row in groups] == ["yes", "no: counted under long-run"]
    assert ("2 group(s) of identical answer rows (5 respondents) are listed under Duplicate records; 3 of these "
            "respondents carry duplicate-answers") in markdown
    assert "1 group(s) (2 respondents) are alike through a long run of one answer" in markdown

"""The report folder: files, page structure, escaping of hostile text, refusals, progress and options."""
from __future__ import annotations

import contextlib
import io
import json
import re
from dataclasses import dataclass
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest

from scalewright.cli import main

HOSTILE = "<script>window.__pwned=1</script>"
HOSTILE_IMG = '<img src=x onerror="window.__pwned=1">'


def hostile_inputs(folder: Path, *, n: int = 150, seed: int = 7) -> tuple[Path, Path]:
    """A two-scale survey whose title, scale title, wording and a group level carry markup that must not run.

    Answers follow a one-factor model per scale, so every statistic is defined.
    """
    rng = np.random.default_rng(seed)
    rows = []
    teams = np.array(["north", HOSTILE, "south & co"])[rng.integers(0, 3, n)]
    trait_a, trait_b = rng.normal(size=n), rng.normal(size=n)
    header = ["rid", "team"] + [f"a{j}" for j in range(1, 5)] + [f"b{j}" for j in range(1, 5)]
    for i in range(n):
        answers = []
        for trait, reverse in ((trait_a[i], {4}), (trait_b[i], set())):
            for j in range(1, 5):
                latent = 0.8 * trait + 0.6 * rng.normal()
                code = int(np.clip(np.round(3 + 1.1 * latent), 1, 5))
                answers.append(6 - code if j in reverse else code)
        rows.append([f"r{i:03d}", teams[i], *answers])
    data = folder / "answers.csv"
    lines = [",".join(header)] + [",".join('"' + str(v).replace('"', '""') + '"' for v in row) for row in rows]
    data.write_text("\n".join(lines) + "\n", encoding="utf-8")
    scales = folder / "scales.yaml"
    scales.write_text(f"""\
version: 1
title: 'Team survey {HOSTILE}'
id_column: rid
groups: [team]
response:
  min: 1
  max: 5
  labels: {{1: Never, 2: Rarely, 3: Sometimes, 4: Often, 5: Always}}
scales:
  morale:
    title: '{HOSTILE} Morale'
    items: [a1, a2, a3, a4]
    reverse: [a4]
    wording: {{a1: '{HOSTILE_IMG} I look forward to work', a2: 'My work | matters *to me*'}}
  voice:
    title: Voice
    items: [b1, b2, b3, b4]
""", encoding="utf-8")
    return data, scales


def run_report(data: Path, scales: Path, out: Path, *extra: str) -> int:
    return main(["report", str(data), "--scales", str(scales), "--out", str(out), "--iterations", "5", "--quiet",
                 *extra])


@dataclass(frozen=True)
class BuiltReport:
    folder: Path
    results: object
    stderr: str


@pytest.fixture(scope="module")
def built(tmp_path_factory) -> BuiltReport:
    """One report on the hostile survey, built once for every test of this module (through the CLI's function)."""
    from scalewright.cli.report import report_from_files

    folder = tmp_path_factory.mktemp("hostile")
    data, scales = hostile_inputs(folder)
    out = folder / "report"
    stderr = io.StringIO()
    with contextlib.redirect_stderr(stderr):
        results = report_from_files(data, scales, out, iterations=5)
    return BuiltReport(folder=out, results=results, stderr=stderr.getvalue())


@pytest.fixture(scope="module")
def hostile_report(built) -> Path:
    return built.folder


class PageParser(HTMLParser):
    """Collects what the structure tests look at: headings, tags, table headers, figures."""

    def __init__(self) -> None:
        super().__init__()
        self.headings: list[int] = []
        self.tags: list[str] = []
        self.th_without_scope = 0
        self.svgs: list[dict[str, str]] = []
        self.attributes: list[tuple[str, str, str]] = []
        self.section_ids: list[str] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        values = dict(attrs)
        self.tags.append(tag)
        for name, value in attrs:
            self.attributes.append((tag, name, value or ""))
        if re.fullmatch(r"h[1-6]", tag):
            self.headings.append(int(tag[1]))
        if tag == "th" and "scope" not in values:
            self.th_without_scope += 1
        if tag == "svg":
            self.svgs.append(values)
        if tag == "section":
            self.section_ids.append(values.get("id", ""))

    def handle_data(self, data):
        self.text.append(data)


def parse(path: Path) -> PageParser:
    parser = PageParser()
    parser.feed(path.read_text(encoding="utf-8"))
    return parser


def test_report_folder_holds_every_file(hostile_report):
    for name in ("index.html", "report.md", "results.json", "scores.csv"):
        assert (hostile_report / name).is_file(), name
    svgs = sorted(p.stem for p in (hostile_report / "figures").glob("*.svg"))
    assert not list((hostile_report / "figures").glob("*.png"))  # PNG only with --png: each figure drawn once
    markdown = (hostile_report / "report.md").read_text(encoding="utf-8")
    assert all(f"](figures/{stem}.svg)" in markdown for stem in svgs)
    assert {"morale-answers", "voice-answers", "morale-histogram", "voice-histogram", "morale-by-1-team-boxplot",
            "voice-by-1-team-boxplot", "structure-scree", "structure-loadings"} <= set(svgs)
    scores = (hostile_report / "scores.csv").read_text(encoding="utf-8").splitlines()
    assert scores[0].split(",")[:3] == ["rid", "morale", "morale__answered"]
    assert len(scores) == 151


def test_page_structure_sections_tables_and_figures(hostile_report):
    page = parse(hostile_report / "index.html")
    assert page.headings[0] == 1
    assert page.headings.count(1) == 1
    for before, after in zip(page.headings, page.headings[1:], strict=False):
        assert after <= before + 1, f"heading level jumps from h{before} to h{after}"
    for anchor in ("summary", "scale-morale", "scale-voice", "quality", "structure", "methods", "cautions",
                   "provenance", "scale-morale-items", "scale-morale-subgroups"):
        assert anchor in page.section_ids
    assert page.th_without_scope == 0
    assert page.tags.count("table") >= 10
    svg_files = len(list((hostile_report / "figures").glob("*.svg")))
    assert len(page.svgs) == svg_files
    for svg in page.svgs:
        assert svg.get("role") == "img"
        assert svg.get("aria-labelledby")
    assert page.tags.count("figcaption") == svg_files
    html = (hostile_report / "index.html").read_text(encoding="utf-8")
    assert "@media print" in html
    assert "size:A4" in html
    assert "not a diagnosis" in html
    assert "manual" in html


def test_hostile_text_is_escaped_everywhere(hostile_report):
    html = (hostile_report / "index.html").read_text(encoding="utf-8")
    page = parse(hostile_report / "index.html")
    assert "script" not in page.tags
    assert "img" not in page.tags
    assert "iframe" not in page.tags
    assert not [a for a in page.attributes if a[1].lower().startswith("on")]
    assert "<script" not in html.lower()
    assert html.count("&lt;script&gt;window.__pwned=1&lt;/script&gt;") >= 4  # titles, the group level
    text = "".join(page.text)
    assert HOSTILE in text
    assert HOSTILE_IMG in text
    for tag, name, value in page.attributes:
        if name in ("href", "src", "xlink:href"):
            assert value.startswith(("#", "data:image/png")), (tag, name, value)
    markdown = (hostile_report / "report.md").read_text(encoding="utf-8")
    # CommonMark (spec 2.4, 6.6): a tag opens only at a "<" not preceded by a backslash; report.md carries no
    # HTML entities, so the text reads the same as a file and as rendered Markdown
    # (the section anchors, <a id="..."></a> on lines of their own, are the report's own markup, not user text)
    user_text = re.sub(r'^<a id="[^"<>]*"></a>$', "", markdown, flags=re.M)
    assert re.search(r"(?<!\\)<[A-Za-z/!?]", user_text) is None
    assert "\\<script>" in markdown
    assert "\\<img" in markdown
    assert "&lt;" not in markdown
    assert "&amp;" not in markdown
    assert not re.search(r"\d\\\.\d", markdown)
    assert r"My work \| matters \*to me\*" in markdown


def test_results_json_carries_the_contract_keys(hostile_report):
    text = (hostile_report / "results.json").read_text(encoding="utf-8")
    assert "NaN" not in text
    document = json.loads(text)
    assert document["tool"]["name"] == "scalewright"
    assert document["tool"]["version"]
    assert set(document["input"]) >= {"data", "data_sha256", "scales_sha256"}
    assert document["input"]["data"].endswith("answers.csv")
    morale = document["reliability"]["scales"]["morale"]
    for key in ("n_used", "k", "alpha", "alpha_ci", "alpha_standardized", "omega_total", "lambda2", "lambda6",
                "mean_inter_item_r", "items", "flags"):
        assert key in morale
    assert set(morale["items"]["a1"]) >= {"mean", "sd", "item_rest_r", "alpha_if_deleted", "omega_if_deleted",
                                          "missing_pct", "floor_pct", "ceiling_pct"}
    assert set(morale["by"]["team"]) == {"north", HOSTILE, "south & co"}
    shape = document["shape"]["scales"]["voice"]
    assert shape["all"]["shape"] in ("symmetric", "left-skewed", "right-skewed", "uniform", "bimodal")
    assert set(shape["by"]["team"]) == {"north", HOSTILE, "south & co"}
    assert document["compare"]["scales"]["morale"]["comparisons"]["team"]["test"] is not None
    assert document["structure"]["parallel"]["iterations"] == 5
    assert document["screen"]["summary"]["n"] == 150
    assert document["options"]["by"] == ["team"]


def test_summary_table_uses_apa_numbers_and_decimals(built, tmp_path):
    from scalewright.present.html import render_html
    from scalewright.present.report_content import build_document

    voice = built.results.scales["voice"].reliability.overall
    for decimals in (2, 3):
        page = render_html(build_document(built.results, figures={}, decimals=decimals), folder=tmp_path)
        summary = page.split("Every scale at a glance")[1].split("</table>")[0]
        alpha, low, high = (f"{v:.{decimals}f}" for v in (voice.alpha, *voice.alpha_ci))
        assert alpha.startswith("0.")
        assert f"{alpha[1:]} [{low[1:]}, {high[1:]}]" in summary  # bounded: no leading zero
        assert alpha not in summary
    html = (built.folder / "index.html").read_text(encoding="utf-8")
    assert "&lt; .001" in html  # p-values: never "0.000"
    assert "< .001" not in html
    assert ">0.000<" not in html


def test_refuses_a_folder_that_is_not_empty_and_changes_nothing(tmp_path, capsys):
    data, scales = hostile_inputs(tmp_path, n=40)
    out = tmp_path / "busy"
    out.mkdir()
    (out / "notes.txt").write_text("mine", encoding="utf-8")
    assert run_report(data, scales, out) != 0
    assert "not empty" in capsys.readouterr().err
    assert sorted(p.name for p in out.iterdir()) == ["notes.txt"]


def test_never_writes_over_an_input_even_with_force(tmp_path, capsys):
    data, scales = hostile_inputs(tmp_path, n=40)
    precious = tmp_path / "scores.csv"
    data.rename(precious)
    before = precious.read_bytes()
    assert run_report(precious, scales, tmp_path, "--force") != 0
    assert "input" in capsys.readouterr().err
    assert precious.read_bytes() == before
    assert not (tmp_path / "index.html").exists()


def test_unknown_group_column_is_a_clear_error(tmp_path, capsys):
    data, scales = hostile_inputs(tmp_path, n=40)
    assert run_report(data, scales, tmp_path / "out", "--by", "tema") != 0
    err = capsys.readouterr().err
    assert err.startswith("error:")
    assert "team" in err
    assert "Traceback" not in err
    assert not (tmp_path / "out").exists()


def test_degenerate_scale_shows_dashes_not_a_crash(tmp_path):
    from scalewright.cli.common import load_inputs
    from scalewright.present.html import render_html
    from scalewright.present.report_content import build_document
    from scalewright.report import ReportOptions, build_report

    data, scales = hostile_inputs(tmp_path, n=40)
    text = data.read_text(encoding="utf-8").splitlines()
    for name in ("b1", "b2", "b3"):
        position = text[0].split(",").index(name)
        rows = [line.split(",") for line in text[1:]]
        for row in rows:
            row[position] = '"3"'  # items nobody varies on
        text = [text[0]] + [",".join(r) for r in rows]
    data.write_text("\n".join(text) + "\n", encoding="utf-8")
    inputs = load_inputs(data, scales)
    results = build_report(inputs.spec, inputs.responses, info=inputs.info, options=ReportOptions(iterations=3))
    page = render_html(build_document(results, figures={}), folder=tmp_path)
    assert "no variance" in page
    voice_summary = page.split("Every scale at a glance")[1].split("</table>")[0].split("Voice")[1].split("</tr>")[0]
    assert "–" in voice_summary
    assert json.loads(json.dumps(results.to_dict(), allow_nan=False))


def test_progress_lines_bar_and_quiet():
    import io

    from scalewright.present.progress import Progress

    plain = io.StringIO()
    progress = Progress(2, stream=plain)
    progress.step("reading")
    progress.step("writing")
    progress.finish("done")
    lines = plain.getvalue().splitlines()
    assert lines[:2] == ["scalewright: [1/2] reading", "scalewright: [2/2] writing"]
    assert lines[2].startswith("done (")
    bar = io.StringIO()
    progress = Progress(4, stream=bar, bar=True)
    progress.step("one")
    progress.step("two")
    assert bar.getvalue().startswith("\r[")
    assert "2/4 two" in bar.getvalue()
    assert "\n" not in bar.getvalue()
    quiet = io.StringIO()
    progress = Progress(2, stream=quiet, quiet=True)
    progress.step("x")
    progress.finish("y")
    assert quiet.getvalue() == ""


def test_report_prints_progress_on_stderr(built):
    lines = built.stderr.splitlines()
    assert lines[0] == "scalewright: [1/10] reading the inputs"
    assert any("[10/10] pages" in line for line in lines)
    assert "wrote the report" in lines[-1]


def test_sanitise_svg_drops_anything_that_could_run_or_fetch():
    from scalewright.present.html import sanitise_svg

    svg = ('<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" width="10pt" '
           'viewBox="0 0 10 10" onload="alert(1)"><script>alert(2)</script><defs><clipPath id="c1"><rect '
           'width="1" height="1"/></clipPath></defs><g clip-path="url(#c1)"><path d="M0 0" onclick="x()"/>'
           '<use xlink:href="#c1"/><image xlink:href="https://example.org/x.png"/></g>'
           '<foreignObject><div>hi</div></foreignObject><a href="javascript:alert(3)"><text>t</text></a>'
           '<!-- a comment --></svg>')
    clean = sanitise_svg(svg, prefix="fig9", title="A <b> title", description="What it shows & why")
    lowered = clean.lower()
    for bad in ("<script", "onload", "onclick", "foreignobject", "example.org", "javascript:", "<a ", "comment"):
        assert bad not in lowered, bad
    assert 'id="fig9-c1"' in clean
    assert 'url(#fig9-c1)' in clean
    assert 'href="#fig9-c1"' in clean
    assert "<title id=\"fig9-title\">A &lt;b&gt; title</title>" in clean
    assert 'role="img"' in clean
    assert 'width="10pt"' not in clean


def test_png_versions_only_on_request(built, tmp_path):
    from scalewright.present.report_content import build_document
    from scalewright.present.report_files import FIGURE_FORMATS_WITH_PNG, make_figures
    from scalewright.present.report_md import render_report_markdown

    (tmp_path / "figures").mkdir()
    figures = make_figures(built.results, tmp_path, formats=FIGURE_FORMATS_WITH_PNG)
    svgs = sorted(p.stem for p in (tmp_path / "figures").glob("*.svg"))
    pngs = sorted(p.stem for p in (tmp_path / "figures").glob("*.png"))
    assert svgs == pngs
    assert len(svgs) == len(figures)
    assert all((tmp_path / "figures" / f"{stem}.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" for stem in pngs)
    markdown = render_report_markdown(build_document(built.results, figures=figures, decimals=2))
    assert all(f"(PNG version: `figures/{stem}.png`)" in markdown for stem in pngs)


def test_a_column_with_one_analysable_level_is_said_not_a_crash(tmp_path):
    # 150 rows in three teams of about 50: with a minimum of 60 no team is analysed on its own, so the report's
    # reliability-by-team table carries only notes (codes with values), which the page words
    from scalewright.cli.common import load_inputs
    from scalewright.present.report_content import build_document
    from scalewright.present.report_md import render_report_markdown
    from scalewright.report import ReportOptions, build_report

    data, scales = hostile_inputs(tmp_path)
    inputs = load_inputs(data, scales)
    results = build_report(inputs.spec, inputs.responses, info=inputs.info,
                           options=ReportOptions(iterations=3, by=("team",), min_group=60))
    text = render_report_markdown(build_document(results, figures={}))
    assert "fewer than 60; not analysed" in text
    codes = {n["code"] for n in results.to_dict()["reliability"]["scales"]["voice"]["group_notes"]["team"]}
    assert "subgroup-too-small" in codes


def test_a_report_of_one_item_says_by_code_that_the_structure_was_not_analysed(tmp_path):
    # common practice, no source: a factor structure needs at least two items; the note is a code, worded by
    # present/messages like every other note
    from scalewright.notes import note
    from scalewright.present.messages import describe

    rng = np.random.default_rng(4)
    data = tmp_path / "one.csv"
    data.write_text("pid,q1\n" + "".join(f"p{i},{rng.integers(1, 6)}\n" for i in range(40)), encoding="utf-8")
    scales = tmp_path / "one.yaml"
    scales.write_text("version: 1\nid_column: pid\nresponse: {min: 1, max: 5}\n"
                      "scales:\n  single: {items: [q1], score: mean}\n", encoding="utf-8")
    with contextlib.redirect_stdout(io.StringIO()):
        assert main(["report", str(data), "--scales", str(scales), "--out", str(tmp_path / "r"), "--quiet"]) == 0
    document = json.loads((tmp_path / "r" / "results.json").read_text(encoding="utf-8"))
    assert document["structure"] is None
    assert {"code": "report-structure-not-analysed"} in document["notes"]
    assert describe(note("report-structure-not-analysed")) == "the structure needs at least two items; it was not analysed"

"""Every JSON document of every command keeps the contract of CHANGES.md (schema 2).

Run on one small generated survey (the demo generator, a level below ``min_group``, a weight column): each
document carries ``schema: 2``; holds no NaN or Infinity token; has no key in the old vocabulary (``_share``,
``_p``, ``p_holm``); nests subgroups in the one container (``by``, ``too_small``, ``group_notes``); and every
``null`` statistic comes with a ``not-computable`` note saying why, unless its key is one whose ``null``
means "not asked for" or "does not apply" (listed below, each with its reason).
"""
from __future__ import annotations

import contextlib
import io
import json
import re
from collections.abc import Mapping
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from scalewright.cli import main

#: keys whose ``null`` means the thing was not asked for or does not apply, not that it failed
NULL_MEANS_ABSENT = {
    "bootstrap",            # no --bootstrap
    "standardize",          # no --standardize
    "exclude",              # no --exclude
    "df2",                  # a test with one degrees-of-freedom value (t, H, chi-square)
    "pvalue_holm",          # a test outside the Holm family (Levene's test of the assumption)
    "ci",                   # an effect size published without an interval (omega-, epsilon-squared)
    "partial_scalar",       # the partial-invariance search runs only when scalar fails after metric
    "level",                # invariance: no verdict for fewer than two levels (a too-few-levels note)
    "item",                 # a reliability flag about the whole scale, not one item
    "pairs_method",         # post-hoc pairs are for three or more levels
    "omega_method", "omega_converged",  # how omega was fitted: null with omega_total, whose note says why
    "running_share_pct",    # an unordered column has no running share
    "median_duration", "duration_unit", "duration_column",  # no column of completion times
}
#: subtrees whose values are settings or pointers, not statistics
NOT_STATISTICS = {"options", "input", "tool", "values"}  # "values": the numbers a flag's sentence quotes
OLD_KEY = re.compile(r"(_share|_p|p_holm)$")


def _refuse(token: str) -> None:
    raise ValueError(f"{token} in the JSON")


def json_outputs(runs: dict[str, list[str]]) -> dict[str, str]:
    """The JSON each command line of ``runs`` prints; every run must succeed."""
    texts = {}
    for name, args in runs.items():
        buffer = io.StringIO()
        with contextlib.redirect_stdout(buffer):
            code = main([*args, "--format", "json"])
        assert code == 0, name
        texts[name] = buffer.getvalue()
    return texts


class ContractDocuments(Mapping):
    """The JSON document of each command line of :data:`CONTRACT_RUNS`, run when first asked for and kept, so
    each test builds only the documents it reads (the whole set takes about 10 s)."""

    def __init__(self, folder: Path) -> None:
        from scalewright.cli.demo import write_demo_inputs

        data, scales = write_demo_inputs(folder, seed=3, n=120)
        frame = pd.read_csv(data)
        frame.loc[:3, "shift"] = "on-call"  # four respondents: a level below min_group (10) and min_cell (5) alike
        frame["w"] = np.random.default_rng(1).uniform(0.5, 2.0, len(frame))
        frame.to_csv(data, index=False)
        sites = sorted(frame["site"].unique())
        census = folder / "census.csv"
        census.write_text("category,proportion\n" + "".join(f"{site},{1 / len(sites)!r}\n" for site in sites))
        self._folder, self._common, self._census = folder, [str(data), "--scales", str(scales)], census
        self._texts: dict[str, str] = {}

    def __getitem__(self, name: str) -> str:
        if name not in self._texts:
            self._texts[name] = self._run(name)
        return self._texts[name]

    def __iter__(self):
        return iter(CONTRACT_RUNS)

    def __len__(self) -> int:
        return len(CONTRACT_RUNS)

    def _run(self, name: str) -> str:
        args = [part.format(census=self._census) for part in CONTRACT_RUNS[name]]
        command, *options = args
        if command != "report":
            return json_outputs({name: [command, *self._common, *options]})[name]
        out = self._folder / name.replace(" ", "-")
        assert main(["report", *self._common, "--out", str(out), "--quiet", *options]) == 0
        return (out / "results.json").read_text(encoding="utf-8")


#: every command the contract covers, with its options (the data and scale file come first)
CONTRACT_RUNS = {
    "reliability": ["reliability", "--by", "shift"],
    "reliability weighted": ["reliability", "--by", "shift", "--weight", "w"],
    "reliability streamed": ["reliability", "--by", "shift", "--engine", "stream"],
    "shape streamed": ["shape", "--by", "shift", "--engine", "stream"],
    "tally streamed": ["tally", "--columns", "site,shift", "--items", "--engine", "stream"],
    "shape": ["shape", "--by", "shift", "--items"],
    "shape weighted": ["shape", "--by", "shift", "--weight", "w"],
    "compare": ["compare", "--by", "shift"],
    "compare weighted": ["compare", "--by", "shift", "--weight", "w"],
    "compare streamed": ["compare", "--by", "shift", "--engine", "stream"],
    "structure": ["structure", "--iterations", "2"],
    "structure weighted": ["structure", "--iterations", "2", "--weight", "w"],
    "screen": ["screen", "--duration-column", "duration_s"],
    "screen weighted": ["screen", "--weight", "w"],
    "confirm weighted": ["confirm", "--weight", "w"],
    "tally": ["tally", "--columns", "site,shift", "--items", "--expected", "site={census}"],
    "confirm": ["confirm", "--by", "shift"],
    "score": ["score"],
    "lint": ["lint"],
    "report": ["report", "--by", "shift", "--iterations", "2", "--duration-column", "duration_s"],
    "report weighted": ["report", "--by", "shift", "--iterations", "2", "--weight", "w"],
}


@pytest.fixture(scope="module")
def documents(tmp_path_factory):
    return ContractDocuments(tmp_path_factory.mktemp("contract"))


DEGENERATE_SCALES = """\
version: 1
id_column: pid
groups: [team]
response: {min: 1, max: 5}
scales:
  three: {items: [x1, x2, x3], score: mean, min_answered: 2}
  flat: {items: [c1, c2, c3, c4], score: mean, min_answered: 3}
  pair: {items: [p1, p2], score: mean, min_answered: 2}
"""


@pytest.fixture(scope="module")
def degenerate(tmp_path_factory):
    """Documents of a file built to leave statistics out: a constant item, a two-item scale, one team of 4."""
    folder = tmp_path_factory.mktemp("degenerate")
    rng = np.random.default_rng(5)
    n = 30
    frame = pd.DataFrame({"pid": [f"p{i}" for i in range(n)], "team": ["a"] * 26 + ["b"] * 4,
                          **{item: rng.integers(1, 6, n) for item in ("x1", "x2", "x3", "c2", "c3", "c4", "p1", "p2")},
                          "c1": 3})
    frame["x1"] = frame["x1"].astype(float)
    frame.loc[0, "x1"] = np.nan
    data, scales = folder / "d.csv", folder / "d.yaml"
    frame.to_csv(data, index=False)
    scales.write_text(DEGENERATE_SCALES)
    common = [str(data), "--scales", str(scales)]
    runs = {"reliability": ["reliability", *common, "--by", "team", "--min-group", "3"],
            "shape": ["shape", *common, "--by", "team"], "compare": ["compare", *common, "--by", "team"],
            "structure": ["structure", *common, "--iterations", "2"], "screen": ["screen", *common],
            "confirm": ["confirm", *common, "--by", "team", "--min-group", "3"], "tally": ["tally", *common, "--items"]}
    return json_outputs(runs)


def _parsed(text: str) -> dict:
    return json.loads(text, parse_constant=_refuse)


#: what sits per subgroup column beside ``group_notes``, whose notes speak for it
PER_COLUMN = ("by", "too_small", "comparisons", "alpha_comparisons")


def _walk(value, path=(), notes=()):
    """Every (path, key, value, notes in force) of a document; ``notes`` are those of the nearest holder.

    Within ``by.<column>`` (and the other per-column keys) the column's ``group_notes`` are in force too.
    """
    if isinstance(value, dict):
        held = [note for key in ("notes", "missing_notes") if isinstance(value.get(key), list)
                for note in value[key]]
        if held:
            notes = held
        for key, inner in value.items():
            yield path, key, inner, notes, value
            if key in PER_COLUMN and isinstance(inner, dict) and isinstance(value.get("group_notes"), dict):
                for column, per_column in inner.items():
                    in_force = [*notes, *value["group_notes"].get(column, [])]
                    yield (*path, key), column, per_column, in_force, inner
                    yield from _walk(per_column, (*path, key, column), in_force)
                continue
            yield from _walk(inner, (*path, key), notes)
    elif isinstance(value, list):
        for inner in value:
            yield from _walk(inner, path, notes)


@pytest.mark.parametrize("name", CONTRACT_RUNS)
def test_every_document_carries_schema_2_and_no_nan_or_infinity(documents, name):
    # reference: RFC 8259 (JSON) has no NaN or Infinity; CHANGES.md fixes the schema number at 2
    document = _parsed(documents[name])  # raises on NaN, Infinity, -Infinity
    assert document["schema"] == 2, name


def test_the_nan_check_can_fail():
    with pytest.raises(ValueError, match="NaN"):
        _parsed('{"x": NaN}')


@pytest.mark.parametrize("name", CONTRACT_RUNS)
def test_no_key_of_the_old_vocabulary(documents, name):
    # reference: CHANGES.md, schema 2: p-values are pvalue/pvalue_holm, shares are percent with _pct
    old = {key for _, key, _, _, _ in _walk(_parsed(documents[name])) if OLD_KEY.search(str(key))}
    assert not old, f"{name}: {sorted(old)}"


def test_subgroups_sit_in_the_one_container(documents):
    # reference: CHANGES.md: by.<column>.<level>, too_small.<column>, group_notes.<column>, side by side
    reliability = _parsed(documents["reliability"])["scales"]["workload"]
    shape = _parsed(documents["shape"])["scales"]["workload"]
    compare = _parsed(documents["compare"])["scales"]["workload"]
    for block in (reliability, shape, compare):
        assert set(block["by"]["shift"]) == {"day", "night", "rotating"}
        assert "on-call" in block["too_small"]["shift"]
        assert isinstance(block["group_notes"]["shift"], list)
    assert reliability["too_small"]["shift"]["on-call"] == 4
    streamed = _parsed(documents["reliability streamed"])["scales"]["workload"]
    assert streamed["too_small"] == reliability["too_small"]  # the file read in blocks nests them the same way
    assert set(streamed["by"]["shift"]) == set(reliability["by"]["shift"])
    assert compare["too_small"]["shift"] == {"on-call": "< 5"}  # min_cell hides the count
    assert compare["comparisons"]["shift"]["test"]["name"] == "Welch's F"
    weighted = _parsed(documents["compare weighted"])["scales"]["workload"]
    assert weighted["by"]["shift"]["day"]["weighted"]["n"] > 0
    report = _parsed(documents["report"])
    assert set(report["reliability"]["scales"]["workload"]["by"]["shift"]) == {"day", "night", "rotating"}
    assert report["compare"]["scales"]["workload"]["too_small"]["shift"] == {"on-call": "< 5"}


@pytest.mark.parametrize(("which", "names"), [*(("documents", (name,)) for name in CONTRACT_RUNS),
                                              ("degenerate", None)])
def test_every_null_statistic_has_a_note_with_its_reason(which, names, request):
    # reference: CHANGES.md, "null with a reason": the note is {"code": "not-computable", "statistic": key, ...}
    found = request.getfixturevalue(which)
    for name in names or list(found):
        document = _parsed(found[name])
        # a screen check that could not run: its count is null and the check is listed in not_checked
        not_checked = {code for _, key, value, _, _ in _walk(document) if key == "not_checked" for code in value}
        missing = set()
        for path, key, value, notes, holder in _walk(document):
            if value is not None or NOT_STATISTICS & set(path) or key in NULL_MEANS_ABSENT:
                continue
            if holder.get("suppressed") is True:  # a count hidden below min_cell, and what derives from it
                continue
            if "code" in holder:  # a note or flag: the numbers its sentence quotes, computed (or not) elsewhere
                continue
            if key in not_checked:  # the count or share of a screen check that did not run
                continue
            if path[-1:] == ("factor_for_scale",):  # no factor gathers the scale's items: an answer, not a failure
                continue
            reasons = [n for n in notes if isinstance(n, dict) and n.get("code") == "not-computable"
                       and n.get("statistic") == key and n.get("reason")]
            if not reasons:
                missing.add(".".join((*path, key)))
        assert not missing, f"{name}: null without a not-computable note: {sorted(missing)[:8]}"


def _reason(notes, statistic):
    found = [n["reason"] for n in notes if isinstance(n, dict) and n.get("code") == "not-computable"
             and n.get("statistic") == statistic]
    assert len(found) == 1, (statistic, notes)
    return found[0]


def test_degenerate_reasons(degenerate):
    # reference: a two-item one-factor model is not identified (three-indicator rule, Bollen 1989, recalled
    # from memory), so it has no omega; a constant item has no correlation (Pearson's r divides by its sd);
    # team b (4 respondents) is hidden below compare's min_cell 5, leaving one level: no test across levels
    pair = _parsed(degenerate["reliability"])["scales"]["pair"]
    assert pair["omega_total"] is None
    assert _reason(pair["notes"], "omega_total") == "fewer-than-3-items"
    flat = _parsed(degenerate["reliability"])["scales"]["flat"]
    assert flat["alpha_standardized"] is None
    assert _reason(flat["notes"], "alpha_standardized") == "no-variance"
    compare = _parsed(degenerate["compare"])["scales"]["three"]
    assert compare["comparisons"]["team"]["test"] is None
    assert _reason(compare["group_notes"]["team"], "test") == "fewer-than-2-levels"
    unidimensionality = _parsed(degenerate["structure"])["unidimensionality"]["pair"]
    assert _reason(unidimensionality["notes"], "variance_one_factor_pct") == "fewer-than-3-items"


def test_reasons_follow_the_published_identification_rules(documents):
    # reference: a one-factor model is identified with 3 or more indicators (the three-indicator rule, Bollen
    # 1989, Structural Equations with Latent Variables, recalled from memory); with exactly 3 it has
    # 3*4/2 - 6 = 0 degrees of freedom, so its chi-square test and RMSEA do not exist, and dropping one of
    # its items leaves 2, too few for omega
    intent = _parsed(documents["reliability"])["scales"]["intent"]
    assert intent["k"] == 3
    assert all(item["omega_if_deleted"] is None for item in intent["items"].values())
    assert _reason(intent["notes"], "omega_if_deleted") == "fewer-than-4-items"
    workload = _parsed(documents["reliability"])["scales"]["workload"]
    assert all(item["omega_if_deleted"] is not None for item in workload["items"].values())
    model = _parsed(documents["confirm"])["models"]["intent"]
    assert model["df"] == 0
    assert model["rmsea"] is None
    assert _reason(model["notes"], "rmsea") == "no-degrees-of-freedom"
    assert _reason(model["notes"], "pvalue") == "no-degrees-of-freedom"

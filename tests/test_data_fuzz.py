"""A bounded fuzz of the delimited-file reader: whatever the cells hold, the reader returns responses or
refuses with one line of ours, and both reading routes agree."""
from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from scalewright import data as data_module
from scalewright.data import read_responses
from scalewright.errors import DataError
from scalewright.spec import load_spec

from .test_read_codes import assert_same_responses

SCALES = """\
version: 1
id_column: id
groups: [{grp: [1, 2, 3]}]
response: {min: 1, max: 5, labels: {1: None, 5: All}, missing_codes: [9]}
scales:
  s: {items: [a, b]}
"""

CELLS = st.sampled_from(["", " ", "1", "2", "5", "9", "3.0", "2.5", "0x3", "NA", "n/a", "None", "null", "all",
                         "-", "7", "-1", "1e0", "00017", "12345678901234567890", '"1"', '"a,b"', '"x\ny"', "\t",
                         "\u00e9", "\ufeff", "\x00", "=1+1", "'", '"', "\r", "3,5", "1_2", "\u0663"])


@pytest.fixture(scope="module")
def spec(tmp_path_factory):
    path = tmp_path_factory.mktemp("spec") / "s.yaml"
    path.write_text(SCALES, encoding="utf-8")
    return load_spec(path)


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture,
                                                                  HealthCheck.too_slow])
@given(rows=st.lists(st.tuples(CELLS, CELLS, CELLS), min_size=0, max_size=6),
       sep=st.sampled_from([",", ";", "\t"]), line_end=st.sampled_from(["\n", "\r\n"]))
def test_fuzzed_files_are_read_alike_or_refused_in_one_line(spec, tmp_path_factory, monkeypatch, rows, sep, line_end):
    lines = [sep.join(["id", "grp", "a", "b"])]
    lines += [sep.join([f"p{i}", grp, a, b]) for i, (grp, a, b) in enumerate(rows)]
    path = tmp_path_factory.mktemp("fuzz") / "d.csv"
    path.write_bytes(line_end.join(lines).encode("utf-8") + line_end.encode())
    outcomes = []
    for route in ("quick", "general"):
        with monkeypatch.context() as patch:
            if route == "general":
                patch.setattr(data_module, "_read_quickly", lambda *_: None)
            try:
                outcomes.append(read_responses(path, spec, lenient=True))
            except DataError as error:
                outcomes.append(str(error))
        if isinstance(outcomes[-1], str):
            assert "\n" not in outcomes[-1]
            assert len(outcomes[-1]) < 2000
    quick, general = outcomes
    if isinstance(quick, str) or isinstance(general, str):
        assert quick == general
    else:
        assert_same_responses(quick, general)

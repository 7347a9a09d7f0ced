"""One heading, one meaning: every table says which values are after reverse keying and which are as given."""
from __future__ import annotations

import numpy as np
import pytest

from scalewright.present.reliability import reliability_tables
from scalewright.present.shape import shape_tables
from scalewright.stats.reliability import scale_reliability
from scalewright.stats.reliability_groups import ScaleReliabilityReport


def _report():
    rng = np.random.default_rng(4)
    trait = rng.normal(size=(200, 1))
    answers = np.clip(np.round(3 + trait + rng.normal(size=(200, 4))), 1, 5)
    answers[:, 3] = 6 - answers[:, 3]  # i4 is worded the other way; keyed below
    keyed = answers.copy()
    keyed[:, 3] = 6 - keyed[:, 3]
    result = scale_reliability(keyed, item_names=["i1", "i2", "i3", "i4"], low=1, high=5, reversed_items=["i4"])
    return answers, ScaleReliabilityReport(name="s", title="S", overall=result)


def test_reliability_item_table_says_keyed_and_as_given():
    answers, report = _report()
    items = next(t for t in reliability_tables([report]) if t.key == "reliability_items")
    assert "mean (keyed)" in items.columns
    assert "sd (keyed)" in items.columns
    assert "floor % (as given)" in items.columns
    assert "ceiling % (as given)" in items.columns
    row = dict(zip(items.columns, next(r for r in items.rows if r[1] == "i4"), strict=True))
    # the keyed mean of a reversed item is 6 - the mean of the answers as given (numpy)
    assert row["mean (keyed)"] == pytest.approx(6 - answers[:, 3].mean(), rel=1e-12)
    # floor as given: the share of answers at code 1 before keying (numpy)
    assert row["floor % (as given)"] == pytest.approx(100 * np.mean(answers[:, 3] == 1), rel=1e-12)
    assert any("keyed: after reverse keying" in note for note in items.notes)


def test_shape_tables_say_which_values_are_keyed(tmp_path):
    from scalewright.analyses.shape import analyse_shape
    from scalewright.cli.demo import write_demo_inputs
    from scalewright.data import read_responses
    from scalewright.spec import load_spec

    data, scales = write_demo_inputs(tmp_path, seed=4, n=60)
    spec = load_spec(scales)
    results = analyse_shape(spec, read_responses(data, spec), items=True)
    summary = shape_tables([*results["scales"].values(), *results["items"].values()])[0]
    values = {row[0]: row[-1] for row in summary.rows}
    assert all(values[name] == "keyed" for name in spec.scales)
    assert all(values[item] == "as given" for item in spec.items)
    assert summary.columns[-1] == "values"
    assert "as given" in summary.notes[0]

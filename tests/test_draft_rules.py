"""The draft's decision rules one at a time: answer texts, "no answer" codes, keying, column roles."""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.drafting.answer_format import infer_answer_format
from scalewright.drafting.build import draft_scales
from scalewright.drafting.columns import profile_column
from scalewright.drafting.keying import propose_reverse_keys
from scalewright.drafting.rules import CONSTANT, DATE, EMPTY, ID, RATING, UNCLEAR
from scalewright.errors import DataError
from scalewright.present.draft_yaml import draft_yaml_text
from scalewright.stats.item_analysis import item_rest_correlations_from_cov


def fmt_of(*columns):
    profiles = [profile_column(f"c{i}", pd.Series(values, dtype=object))[0] for i, values in enumerate(columns)]
    assert all(p.role == RATING for p in profiles), [(p.name, p.role, p.reason) for p in profiles]
    return infer_answer_format(profiles)


def test_agreement_texts_are_ordered_whatever_their_case_spacing_and_order():
    rng = np.random.default_rng(1)
    words = ["  strongly AGREE", "disagree ", "Neither  agree nor disagree", "agree", "STRONGLY disagree"]
    fmt, notes = fmt_of(list(rng.permutation(words * 4)))
    assert fmt.labels_dict() == {1: "Strongly disagree", 2: "Disagree", 3: "Neither agree nor disagree",
                                 4: "Agree", 5: "Strongly agree"}
    assert (fmt.min, fmt.max, fmt.wording) == (1, 5, "agreement")
    assert notes == []


def test_seven_point_agreement_and_five_point_satisfaction():
    seven = ["strongly disagree", "disagree", "slightly disagree", "neutral", "slightly agree", "agree",
             "strongly agree"]
    fmt, _ = fmt_of(seven[::-1] * 3)
    assert [fmt.labels_dict()[c].casefold() for c in range(1, 8)] == seven
    satisfied = ["very dissatisfied", "dissatisfied", "neither satisfied nor dissatisfied", "satisfied",
                 "very satisfied"]
    fmt, _ = fmt_of(satisfied[2:] + satisfied[:2] + satisfied)
    assert [fmt.labels_dict()[c].casefold() for c in range(1, 6)] == satisfied
    assert fmt.wording == "satisfaction"


def test_texts_continue_the_numeric_codes_of_their_column():
    # the middle answers were typed as codes 2-4, the ends as texts: a 5-point agreement format
    fmt, _ = fmt_of([2, 3, 4, "strongly disagree", "STRONGLY AGREE"] * 4)
    assert (fmt.min, fmt.max) == (1, 5)
    assert fmt.labels_dict()[1] == "Strongly disagree"
    assert fmt.labels_dict()[5] == "Strongly agree"
    # codes 0-4 in one column, the same answers as texts in another: the texts spell the codes 0..4
    fmt, _ = fmt_of([0, 1, 2, 3, 4] * 4, ["never", "rarely", "sometimes", "often", "always"] * 4)
    assert fmt.labels_dict() == {0: "Never", 1: "Rarely", 2: "Sometimes", 3: "Often", 4: "Always"}


def test_unusual_text_sets_are_flagged_for_checking():
    _, notes = fmt_of(["strongly disagree", "disagree", "neither agree nor disagree", "strongly agree"] * 3)
    assert any("not a common 4-point wording" in n for n in notes)
    _, notes = fmt_of(["disagree", "agree", "neutral", "neither agree nor disagree"] * 3)
    assert any("mean the same" in n for n in notes)
    fmt, notes = fmt_of(["agree", "often", "never", "disagree"] * 3)
    assert fmt.labels == ()
    assert any("different kinds" in n for n in notes)


@settings(max_examples=40, deadline=None)
@given(low=st.sampled_from([0, 1]), width=st.integers(2, 6),
       codes=st.sets(st.sampled_from([9, 99, 999, -9, -99]), min_size=1, max_size=3), repeat=st.integers(2, 5))
def test_far_off_code_like_values_become_missing_codes(low, width, codes, repeat):
    answers = list(range(low, low + width + 1)) * repeat
    profile, _ = profile_column("item", pd.Series(answers + sorted(codes)))
    assert profile.role == RATING
    assert set(profile.codes) == set(codes)
    assert (profile.low, profile.high) == (low, low + width)


def test_codes_inside_a_wide_range_and_odd_values_are_not_missing_codes():
    profile, _ = profile_column("item", pd.Series(list(range(0, 11)) * 5))
    assert profile.codes == ()
    assert (profile.low, profile.high) == (0, 10)
    rng = np.random.default_rng(2)
    values = list(rng.integers(1, 6, 400)) + [55]
    profile, _ = profile_column("item", pd.Series(values))
    assert profile.codes == ()
    assert profile.odd_values == (55.0,)
    assert profile.high == 5
    fmt, notes = infer_answer_format([profile])
    assert fmt.max == 5
    assert any("55" in n and "fix them" in n for n in notes)


@settings(max_examples=60, deadline=None)
@given(data=st.data(), k=st.integers(3, 10))
def test_reverse_proposals_recover_the_reversed_items_of_a_one_factor_model(data, k):
    # population covariance of a one-factor model: cov = s s' * lambda lambda' + diag(psi); a reversed item
    # has s = -1. Any keying that leaves an item with negative item-rest r is not the truth, and the search
    # can only stop at the truth or its mirror image (every item flipped).
    loadings = np.array(data.draw(st.lists(st.floats(0.3, 0.9), min_size=k, max_size=k)))
    reversed_ = data.draw(st.sets(st.integers(0, k - 1), max_size=(k - 1) // 2))
    signs = np.array([-1.0 if j in reversed_ else 1.0 for j in range(k)])
    lam = signs * loadings
    cov = np.outer(lam, lam) + np.diag(1 - loadings ** 2)
    found = propose_reverse_keys(cov)
    assert set(np.flatnonzero(found < 0)) == reversed_
    assert (item_rest_correlations_from_cov(cov * np.outer(found, found)) > 0).all()


def test_items_of_a_stem_are_not_keyed_on_too_few_rows():
    frame = pd.DataFrame({"wb1": [1, 2, 3, 4, 5, 2], "wb2": [5, 4, 3, 2, 1, 4], "wb3": [1, 3, 3, 4, 5, 1]})
    draft = draft_scales(frame)
    (scale,) = draft.scales
    assert scale.items == ("wb1", "wb2", "wb3")
    assert scale.reverse == ()
    assert any("too few to check keying" in n for n in scale.notes), scale.notes


def test_degenerate_columns_are_named_not_fatal():
    n = 60
    rng = np.random.default_rng(5)
    trait = rng.standard_normal(n)
    frame = pd.DataFrame({f"x{i}": np.digitize(trait + rng.standard_normal(n) * 0.5, [-1, 0, 1]) + 1
                          for i in range(1, 4)})
    frame["blank"] = [None] * n
    frame["same"] = ["yes"] * n
    frame["x4"] = 3  # a constant item of the stem
    frame["visit"] = pd.date_range("2026-03-01", periods=n).strftime("%d.%m.%Y")
    draft = draft_scales(frame)
    roles = {p.name: p.role for p in draft.columns}
    assert (roles["blank"], roles["same"], roles["x4"], roles["visit"]) == (EMPTY, CONSTANT, CONSTANT, DATE)
    assert [s.items for s in draft.scales] == [("x1", "x2", "x3")]
    text = draft_yaml_text(draft, data_name="d.csv")
    for name in ("blank", "same", "x4", "visit"):
        assert f"# {name} (" in text


def test_ambiguous_columns_are_reported_in_the_draft():
    rng = np.random.default_rng(8)
    n = 100
    frame = pd.DataFrame({"code_a": list(rng.integers(1, 6, n - 30)) + ["n/a", "refused", "later"] * 10,
                          "serial": rng.permutation(n) + 1, "ticket": rng.permutation(n) + 501})
    draft = draft_scales(frame)
    profile = draft.column("code_a")
    assert profile.role == UNCLEAR
    assert "other text" in profile.reason
    # two serial-number columns and no id-like name: neither is guessed
    assert draft.id_column is None
    assert set(draft.id_candidates) == {"serial", "ticket"}
    assert any("could be the respondent id" in n for n in draft.notes)
    text = draft_yaml_text(draft, data_name="d.csv")
    assert "# code_a (unclear)" in text
    assert "id_column: not set" in text
    named = draft_scales(frame.rename(columns={"serial": "respondent_id"}))
    assert named.id_column == "respondent_id"
    assert named.column("respondent_id").role == ID


def test_a_table_without_rows_is_refused():
    with pytest.raises(DataError, match="no rows"):
        draft_scales(pd.DataFrame({"a": []}))


def test_codes_among_answer_texts_are_missing_codes():
    words = ["Strongly disagree", "Disagree", "Neither agree nor disagree", "Agree", "Strongly agree"]
    profile, _ = profile_column("item", pd.Series(words * 5 + ["9", "99", "9"], dtype=object))
    assert profile.role == RATING
    assert profile.codes == (9.0, 99.0)
    fmt, _ = infer_answer_format([profile])
    assert (fmt.min, fmt.max, fmt.missing_codes) == (1, 5, (9.0, 99.0))


def test_seven_point_likelihood_with_extreme_ends_continues_codes_one_to_seven():
    words = ["Extremely unlikely", "Very unlikely", "Somewhat unlikely", "Neither likely nor unlikely",
             "Somewhat likely", "Very likely", "Extremely likely"]
    fmt, _ = fmt_of(list(range(1, 8)) * 3 + [w.upper() for w in words[::-1]])
    assert fmt.labels_dict() == dict(enumerate(words, start=1))
    assert fmt.wording == "likelihood"


def _inventory(seed: int = 3, n: int = 2800) -> tuple[pd.DataFrame, dict[str, list[str]]]:
    """A personality-inventory-like export: a row-number column, five 5-item six-point scales with seven
    reverse-worded items in all (two in some scales), a coded gender (1/2) and education (1-5)."""
    rng = np.random.default_rng(seed)
    reversed_by_scale = {"agr": [1, 4], "con": [2], "ext": [0, 3], "neu": [], "ope": [1, 2]}
    frame = pd.DataFrame({"": np.arange(1, n + 1)})
    truth: dict[str, list[str]] = {}
    for stem, reversed_positions in reversed_by_scale.items():
        trait = rng.normal(size=n)
        for j in range(5):
            loading = rng.uniform(0.45, 0.75)
            latent = loading * trait + np.sqrt(1 - loading**2) * rng.normal(size=n)
            answer = np.digitize(latent, [-1.4, -0.6, 0.0, 0.6, 1.4]) + 1
            frame[f"{stem}{j + 1}"] = 7 - answer if j in reversed_positions else answer
        truth[stem] = [f"{stem}{j + 1}" for j in reversed_positions]
    frame["gender"] = rng.integers(1, 3, n)
    frame["education"] = rng.integers(1, 6, n)
    return frame, truth


def test_draft_on_a_real_looking_export():
    # ground truth is the generator: which items are worded in reverse, which columns are codes
    frame, truth = _inventory()
    drafted = draft_scales(frame)
    assert drafted.id_column is None
    assert "" not in drafted.id_candidates
    assert drafted.column("").role == "row number"
    assert {"gender", "education"} <= set(drafted.groups)
    found = {s.stem: sorted(s.reverse_items) for s in drafted.scales}
    assert found == truth
    from scalewright.present.draft_yaml import draft_yaml_text

    text = draft_yaml_text(drafted, data_name="inventory.csv")
    assert "no column has a distinct value in every row" not in text
    assert "holds row numbers" in text


def test_reverse_keys_follow_first_factor_signs_where_item_rest_r_misleads():
    # two of five items reversed with the larger loadings: the rest of each correctly worded item holds both
    # reversed items, so greedy item-rest keying can reverse the wrong half; the first factor does not
    from scalewright.drafting.keying import propose_reverse_keys

    rng = np.random.default_rng(11)
    n = 3000
    loadings = np.array([0.45, 0.45, 0.5, 0.8, 0.8])
    x = rng.normal(size=(n, 1)) * loadings + rng.normal(size=(n, 5)) * np.sqrt(1 - loadings**2)
    x[:, [3, 4]] *= -1
    signs = propose_reverse_keys(np.cov(x, rowvar=False))
    assert signs.tolist() == [1.0, 1.0, 1.0, -1.0, -1.0]

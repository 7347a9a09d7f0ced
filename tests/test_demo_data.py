"""The demo generator: determinism, its scale file, and its known truth checked against the scored data."""
from __future__ import annotations

from importlib.resources import files
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from scalewright import demo_data
from scalewright.demo_data import SCALES, generate_staff_climate

REPO = Path(__file__).resolve().parents[1]
SEEDS = (2026, 7, 311)


@pytest.fixture(scope="module")
def spec():
    from scalewright.spec import load_spec

    return load_spec(REPO / "scales" / demo_data.SCALE_FILE_NAME)


@pytest.fixture(scope="module")
def scored(tmp_path_factory, spec):
    """seed -> (frame, truth, responses, score table) for a few full-size demo samples."""
    from scalewright.data import read_responses
    from scalewright.scoring import score_scales

    out = {}
    folder = tmp_path_factory.mktemp("demo-data")
    for seed in SEEDS:
        frame, truth = generate_staff_climate(seed=seed, n=600)
        path = folder / f"seed-{seed}.csv"
        frame.to_csv(path, index=False)
        responses = read_responses(path, spec)  # strict: every text and code must be readable
        out[seed] = (frame, truth, responses, score_scales(responses, spec))
    return out


def _attentive_complete(responses, scale, truth):
    from scalewright.scoring import keyed_items

    keyed = keyed_items(responses, scale)
    rows = ~truth.careless & ~np.isnan(keyed).any(axis=1)
    return keyed[rows], rows


# ------------------------------------------------------------------------------------------ determinism


def test_same_seed_gives_the_same_data_and_truth():
    first, truth_a = generate_staff_climate(seed=11, n=150)
    second, truth_b = generate_staff_climate(seed=11, n=150)
    pd.testing.assert_frame_equal(first, second)
    pd.testing.assert_frame_equal(truth_a.true_scores, truth_b.true_scores)
    np.testing.assert_array_equal(truth_a.careless_kind, truth_b.careless_kind)
    np.testing.assert_array_equal(truth_a.partial, truth_b.partial)


def test_different_seeds_give_different_data():
    first, truth_a = generate_staff_climate(seed=11, n=150)
    second, truth_b = generate_staff_climate(seed=12, n=150)
    assert not first.astype(str).equals(second.astype(str))
    assert not np.allclose(truth_a.true_scores["workload"], truth_b.true_scores["workload"])
    assert (first["staff_id"] != second["staff_id"]).any()


def test_bad_arguments_are_refused():
    from scalewright.errors import UsageError

    for seed, n in ((-1, 100), (1.5, 100), (1, 3), (1, True)):
        with pytest.raises(UsageError):
            generate_staff_climate(seed=seed, n=n)


def test_population_values_are_stable_across_monte_carlo_samples():
    # a second, independent large sample of the same model: the known truth is not an artefact of one draw
    # (Monte-Carlo standard error of a reliability near .8 on 50,000 rows is about 0.002)
    reliability, alpha, omega = demo_data.population_values()
    other_reliability, other_alpha, other_omega = demo_data.population_values(size=50_000, seed=99)
    for name in demo_data.SCALE_NAMES:
        assert other_reliability[name] == pytest.approx(reliability[name], abs=0.01)
        assert other_alpha[name] == pytest.approx(alpha[name], abs=0.01)
        assert other_omega[name] == pytest.approx(omega[name], rel=1e-12)  # closed form, no sampling


def test_population_values_are_ordered_as_theory_says():
    # Novick & Lewis (1967): alpha is a lower bound of reliability for congeneric items;
    # discretising continuous responses loses information, so the continuous omega is the upper reference
    reliability, alpha, omega = demo_data.population_values()
    for name in demo_data.SCALE_NAMES:
        assert alpha[name] <= reliability[name] + 0.003
        assert reliability[name] < omega[name]
        assert 0.6 < reliability[name] < 0.95  # a usable but imperfect scale, as intended


# -------------------------------------------------------------------------------------------- scale file


def test_shipped_scale_files_are_identical():
    packaged = (files("scalewright") / "resources" / demo_data.SCALE_FILE_NAME).read_bytes()
    assert (REPO / "scales" / demo_data.SCALE_FILE_NAME).read_bytes() == packaged
    assert demo_data.scale_file_text().encode("utf-8") == packaged


def test_scale_file_matches_the_generating_model(spec):
    assert spec.id_column == "staff_id"
    assert set(spec.groups) == {"shift", "site", "age_group", "tenure"}
    assert list(spec.scales) == [s.name for s in SCALES]
    for model in SCALES:
        scale = spec.scale(model.name)
        assert scale.items == model.items
        assert set(scale.reverse) == set(model.reverse)
        assert (scale.response.min, scale.response.max) == (model.low, model.high)
        assert set(scale.wording) == set(model.items)
        labels = demo_data.LIKELY_LABELS if model.high == 7 else demo_data.AGREE_LABELS
        assert dict(scale.response.labels) == labels
        assert tuple(scale.response.missing_codes) == demo_data.MISSING_CODES
    assert spec.scale("workload").reverse == ("wl3", "wl6")
    # both forms of min_answered are exercised
    forms = {type(spec.scale(name).min_answered) for name in spec.scales}
    assert forms == {int, float}


def test_data_read_strictly_with_all_kinds_of_mess(scored):
    frame, truth, responses, _ = scored[2026]
    summary = responses.reading_summary()
    assert responses.n == 600
    assert summary["refused_total"] == 0
    assert set(demo_data.TEXT_COLUMNS) <= set(summary["texts_by_column"])
    assert sum(summary["missing_code_by_column"].values()) > 40  # about 0.8% of 18 x 600 cells carry a code
    assert sum(summary["blank_by_column"].values()) > 100
    raw = frame["rc2"].dropna().astype(str)
    assert raw.str.startswith(" ").any()
    assert raw.str.isupper().any()
    assert raw.str.islower().any()
    assert list(responses.ids) == list(truth.true_scores["staff_id"])
    # about 5% careless respondents, half of each kind, and a few who stopped part-way
    assert truth.careless.sum() == 30
    assert set(truth.careless_kind[truth.careless]) == {"straight-line", "random"}
    assert truth.partial.sum() >= 10
    assert not (truth.partial & truth.careless).any()


def test_straight_liners_give_one_answer_throughout(scored):
    # longstring: a straight-liner's answered items all carry the same code (Meade & Craig, 2012)
    _, truth, responses, _ = scored[2026]
    rows = responses.items[truth.careless_kind == "straight-line"]
    assert np.all(np.nanmax(rows, axis=1) == np.nanmin(rows, axis=1))
    attentive = responses.items[~truth.careless & ~truth.partial]
    assert np.mean(np.nanmax(attentive, axis=1) == np.nanmin(attentive, axis=1)) < 0.01


# ------------------------------------------------------------------------------ known truth vs scored data


@pytest.mark.parametrize("seed", SEEDS)
def test_scores_track_the_true_latent_traits(scored, seed):
    _, truth, _, table = scored[seed]
    frame = table.to_frame()
    attentive = ~truth.careless
    for name in demo_data.SCALE_NAMES:
        score = frame[name].to_numpy()
        keep = attentive & ~np.isnan(score)
        r = np.corrcoef(score[keep], truth.true_scores[name].to_numpy()[keep])[0, 1]
        # corr(X, eta) <= corr(X, E[X|eta]) = sqrt(reliability); allow sampling error of r at n ~ 560
        assert r < np.sqrt(truth.population_reliability[name]) + 0.04
        assert r > 0.8  # common practice, no source: a composite of 3-6 decent items tracks its trait closely


@pytest.mark.parametrize("seed", SEEDS)
def test_sample_alpha_agrees_with_the_population_reliability(scored, spec, seed):
    # reference: pingouin.cronbach_alpha computed live on complete rows (docs/references.md: its listwise CI is off,
    # so only complete rows are passed); sampling band from the Feldt, Woodruff & Salih (1987) F interval
    import pingouin
    from scipy import stats

    _, truth, responses, _ = scored[seed]
    for name in demo_data.SCALE_NAMES:
        block, _ = _attentive_complete(responses, spec.scale(name), truth)
        n, k = block.shape
        alpha = pingouin.cronbach_alpha(pd.DataFrame(block))[0]
        lo = 1 - (1 - alpha) * stats.f.ppf(0.9995, n - 1, (n - 1) * (k - 1))
        hi = 1 - (1 - alpha) * stats.f.ppf(0.0005, n - 1, (n - 1) * (k - 1))
        assert lo < truth.population_alpha[name] < hi, (name, alpha, truth.population_alpha[name])
        assert alpha == pytest.approx(truth.population_reliability[name], abs=0.05)


def test_careless_respondents_blur_the_scale(scored, spec):
    # random clicking adds noise: item-rest structure is weaker among them than among attentive people
    _, truth, responses, _ = scored[2026]
    from scalewright.scoring import keyed_items

    keyed = keyed_items(responses, spec.scale("support"))
    for kind, limit in (("random", 0.3),):
        block = keyed[(truth.careless_kind == kind) & ~np.isnan(keyed).any(axis=1)]
        r = np.corrcoef(block, rowvar=False)
        assert np.mean(r[np.triu_indices_from(r, 1)]) < limit  # uniform random answers are uncorrelated


@pytest.mark.parametrize("seed", SEEDS)
def test_night_shift_reports_more_workload_strain(scored, seed):
    # reference: scipy.stats.ttest_ind (Welch), one-sided
    from scipy import stats

    frame, _, _, table = scored[seed]
    scores = table.to_frame()["workload"]
    night = scores[(frame["shift"] == "night").to_numpy()].dropna()
    day = scores[(frame["shift"] == "day").to_numpy()].dropna()
    assert stats.ttest_ind(night, day, equal_var=False, alternative="greater").pvalue < 0.001


def test_reverse_worded_items_run_against_the_others_before_keying(scored):
    # raw (unkeyed) answers of attentive respondents, pairwise-complete correlations from pandas
    _, truth, responses, _ = scored[2026]
    raw = pd.DataFrame(responses.matrix(["wl1", "wl2", "wl3", "wl4", "wl5", "wl6"]),
                       columns=["wl1", "wl2", "wl3", "wl4", "wl5", "wl6"])[~truth.careless]
    r = raw.corr()
    for reverse in ("wl3", "wl6"):
        for other in ("wl1", "wl2", "wl4", "wl5"):
            assert r.loc[reverse, other] < -0.15, (reverse, other)
    assert r.loc["wl3", "wl6"] > 0.15
    assert r.loc["wl1", "wl2"] > 0.15


def test_every_sample_size_the_demo_allows_gets_distinct_ids():
    from scalewright.cli.demo import demo
    from scalewright.demo_data import _staff_ids

    assert next(p for p in demo.params if p.name == "n").type.max == 1_000_000  # the slow test below: 7 digits
    # five digits hold 90,000 ids; 100,000 used to stop with "larger sample than population"
    for n, digits in ((90_000, 5), (90_001, 6), (100_000, 6)):
        ids = pd.Series(_staff_ids(np.random.default_rng(n), n))
        assert len(ids) == n
        assert ids.is_unique
        assert ids.str.fullmatch(rf"KB\d{{{digits}}}").all()


@pytest.mark.slow
def test_the_largest_demo_the_help_allows_gets_distinct_ids():
    from scalewright.demo_data import _staff_ids

    ids = pd.Series(_staff_ids(np.random.default_rng(1), 1_000_000))
    assert ids.is_unique
    assert ids.str.fullmatch(r"KB\d{7}").all()


@pytest.mark.slow
def test_a_demo_of_100000_respondents_is_written(tmp_path):
    from scalewright.cli import main

    assert main(["demo", "--out", str(tmp_path / "big"), "--n", "100000", "--iterations", "2", "--quiet"]) == 0
    frame = pd.read_csv(tmp_path / "big" / "staff-climate.csv", usecols=["staff_id"])
    assert len(frame) == 100_000
    assert frame["staff_id"].is_unique

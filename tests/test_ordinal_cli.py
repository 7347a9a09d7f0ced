"""`--ordinal` on reliability and structure, end to end on generated files."""
from __future__ import annotations

import numpy as np
import pytest

from scalewright.cli import main

from .survey_files import answers_csv, item_columns, rated_answers, run_json

SCALES = """\
version: 1
title: Staff climate survey
id_column: staff_id
response: {min: 1, max: 4, missing_codes: [9]}
scales:
  morale:
    title: Morale
    items: [m1, m2, m3, m4, m5]
    reverse: [m4]
  voice:
    title: Voice
    items: [v1, v2, v3, v4]
"""
LOADINGS = {"morale": np.array([0.8, 0.7, 0.6, 0.7, 0.5]), "voice": np.array([0.6, 0.7, 0.8, 0.6])}
CUTS = np.array([-1.2, -0.2, 0.9])


def make_data(n: int, rng: np.random.Generator) -> str:
    columns: dict[str, np.ndarray] = {}
    for name, loadings in LOADINGS.items():
        factor = rng.standard_normal(n)
        answers = rated_answers(factor, loadings.size, rng, loading=loadings, unique=np.sqrt(1 - loadings**2),
                                cuts=CUTS)
        columns.update(item_columns("m" if name == "morale" else "v", answers))
    columns["m4"] = 5 - columns["m4"]  # worded the other way, declared under `reverse`
    columns["v2"][:40] = 9  # no answer
    return answers_csv([f"s{i:05d}" for i in range(n)], columns)


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    folder = tmp_path_factory.mktemp("ordinal")
    data, scales = folder / "climate.csv", folder / "climate.yaml"
    data.write_text(make_data(2000, np.random.default_rng(31)), encoding="utf-8")
    scales.write_text(SCALES, encoding="utf-8")
    return data, scales


def test_reliability_ordinal_block_and_population_values(files, capsys) -> None:
    data, scales = files
    document = run_json(capsys, "reliability", str(data), "--scales", str(scales), "--ordinal", "-f", "json")
    block = document["scales"]["morale"]["ordinal"]
    for key in ("alpha", "omega", "omega_sum_score", "n_used"):
        assert key in block
    loadings = LOADINGS["morale"]
    latent = np.outer(loadings, loadings)
    np.fill_diagonal(latent, 1.0)
    k = loadings.size
    # Zumbo et al. (2007) and McDonald (1999), population values of the one-factor model generating the
    # answers (m4 reverse-keyed back); 2,000 rows: within .03
    assert block["alpha"] == pytest.approx(k / (k - 1) * (1 - k / latent.sum()), abs=0.03)
    common = loadings.sum() ** 2
    assert block["omega"] == pytest.approx(common / (common + (1 - loadings**2).sum()), abs=0.03)
    assert block["omega_sum_score"] < block["omega"]
    assert block["n_used"] == 2000
    assert document["scales"]["voice"]["ordinal"]["n_used"] == 1960  # listwise: 40 rows without v2
    # four answer options: the advice to use ordinal methods (Rhemtulla et al., 2012)
    codes = [n["code"] for n in document["scales"]["morale"]["ordinal_advice"]]
    assert "ordinal-few-options" in codes


def test_reliability_ordinal_table_says_which_number_to_report(files, capsys) -> None:
    data, scales = files
    assert main(["reliability", str(data), "--scales", str(scales), "--ordinal", "-f", "table"]) == 0
    text = capsys.readouterr().out
    assert "ordinal reliability (polychoric correlations)" in text
    assert "report it for such a score" in text
    assert "Rhemtulla" in text


def test_without_ordinal_there_is_no_ordinal_block(files, capsys) -> None:
    data, scales = files
    document = run_json(capsys, "reliability", str(data), "--scales", str(scales), "-f", "json")
    assert "ordinal" not in document["scales"]["morale"]
    assert document["scales"]["morale"]["ordinal_advice"]


def test_structure_ordinal_gives_the_polychoric_matrix(files, capsys) -> None:
    data, scales = files
    document = run_json(capsys, "structure", str(data), "--scales", str(scales), "--ordinal", "--factors", "2",
                        "--iterations", "5", "-f", "json")
    assert document["correlation_type"] == "polychoric"
    matrix = document["correlation"]
    items = list(matrix)
    values = np.array([[matrix[a][b] for b in items] for a in items])
    np.testing.assert_allclose(values, values.T)
    np.testing.assert_allclose(np.diag(values), 1.0)
    # latent correlation of m1 and m2 is .8 x .7 = .56 (population value of the generating model)
    assert matrix["m1"]["m2"] == pytest.approx(0.56, abs=0.05)
    assert matrix["m1"]["m4"] > 0  # m4 keyed back
    # coarse answers attenuate Pearson's r (numpy's corrcoef of the answers, computed live)
    answers = np.genfromtxt(data, delimiter=",", skip_header=1, usecols=(1, 2))
    assert np.corrcoef(answers, rowvar=False)[0, 1] < matrix["m1"]["m2"]


def test_answers_off_the_whole_levels_are_refused(write_file, capsys) -> None:
    data = write_file("half.csv", "staff_id,m1,m2,m3\na,1,2,3\nb,2.5,3,4\nc,3,4,1\nd,4,1,2\n")
    scales = write_file("half.yaml", "version: 1\nresponse: {min: 1, max: 4}\nscales:\n  s:\n    items: [m1, m2, m3]\n")
    # a value between answer codes is refused when the file is read, for every command alike
    assert main(["reliability", str(data), "--scales", str(scales), "--ordinal", "-f", "json"]) == 4
    err = capsys.readouterr().err
    assert err.startswith("error: ")
    assert "lies between the answer codes" in err


def test_dwls_inputs_for_the_confirmatory_models(files) -> None:
    from scalewright.analyses.ordinal import dwls_inputs
    from scalewright.cli.common import load_inputs

    data, scales = files
    inputs = load_inputs(data, scales)
    correlation, weights, n_used, matrix = dwls_inputs(inputs.responses, ["m1", "m2", "m3", "m4"], ["m4"])
    assert n_used == 2000
    assert correlation.shape == weights.shape == (4, 4)
    assert correlation[0, 3] > 0  # m4 keyed back
    # the weights of diagonally weighted least squares are the inverse squared standard errors
    np.testing.assert_allclose(weights[0, 1:], 1 / matrix.se[0, 1:] ** 2)
    assert (np.diag(weights) == 0).all()

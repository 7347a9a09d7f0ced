"""Benchmark of the whole-file confirmatory model (10 scales x 6 items) on 1,000,000 respondents.

Uses the data of ``bench_reliability.py`` (same generator, same files: answers 1-5, ~1% blanks). Times, in
this process, after the imports:

1. reading the file (``read_responses``) -- not part of the goal;
2. the item covariance matrix of the 60 keyed items from the one-byte codes;
3. the ML fit of the whole-file model (10 correlated factors, 165 free parameters);
4. the summary: fit indices, standardized solution with SEs, omegas with CIs, modification hints;
5. ``analyse_confirm`` as the command runs it (10 one-factor models and the whole-file model).

Goal (issue 17): 2 + 3 + 4 at most 1 s.

    python tests/benchmarks/bench_confirm.py [FOLDER] [--rows N] [--repeat R]
"""
from __future__ import annotations

import json
from functools import partial

from bench_common import clocked, folder_options, load
from bench_reliability import write_inputs


def main() -> None:
    options = folder_options(__doc__.splitlines()[0], repeat=3)
    folder = options.folder
    from scalewright.analyses.confirm import analyse_confirm, keyed_covariance, one_blas_thread
    from scalewright.data import read_responses
    from scalewright.spec import load_spec
    from scalewright.stats.cfa_fit import fit
    from scalewright.stats.cfa_model import factor_model, scale_file_structure
    from scalewright.stats.cfa_result import summarize_fit

    data, scales = write_inputs(folder, options.rows)
    spec = load_spec(scales)
    timings: dict[str, list[float]] = {"read": [], "covariance": [], "fit": [], "summary": [], "analyse_confirm": []}
    for _ in range(options.repeat):
        responses, seconds = clocked(partial(read_responses, data, spec))
        timings["read"].append(seconds)
        memberships = {name: tuple(scale.items) for name, scale in spec.scales.items()}
        membership, orthogonal, totals = scale_file_structure(memberships)
        model = factor_model(membership, orthogonal=orthogonal)
        with one_blas_thread():
            cov, seconds = clocked(partial(keyed_covariance, spec, responses, model.items))
            timings["covariance"].append(seconds)
            fitted, seconds = clocked(partial(fit, cov.cov, cov.n_used, model))
            timings["fit"].append(seconds)
            _, seconds = clocked(partial(summarize_fit, fitted, name="all", scales=memberships, totals=totals,
                                         hints=True))
            timings["summary"].append(seconds)
        _, seconds = clocked(partial(analyse_confirm, spec, responses))
        timings["analyse_confirm"].append(seconds)
        print(f"iterations {fitted.iterations}, converged {fitted.converged}, n {cov.n_used}", flush=True)
    best = {stage: min(values) for stage, values in timings.items()}
    best["beyond_reading"] = best["covariance"] + best["fit"] + best["summary"]
    report = {"rows": options.rows, "best_seconds": best, "all_seconds": timings, "loadavg": load()}
    print(json.dumps(report, indent=2))
    (folder / "bench_confirm.json").write_text(json.dumps(report, indent=2))


if __name__ == "__main__":
    main()

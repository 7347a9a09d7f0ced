"""Tables of measurement invariance: the steps with their changes, the verdicts, latent beside observed means."""
from __future__ import annotations

from typing import Any

from .table import Table

STEP_COLUMNS = ("scale", "column", "step", "chi2", "df", "CFI", "RMSEA", "SRMR", "delta chi2", "delta df", "p",
                "delta CFI", "delta RMSEA", "holds")
STEP_KINDS = {"scale": "text", "column": "text", "step": "text", "df": "int", "CFI": "bounded", "RMSEA": "bounded",
              "SRMR": "bounded", "delta df": "int", "p": "p", "delta CFI": "num", "delta RMSEA": "num",
              "holds": "text"}
CONVENTIONS = ("a step holds when CFI drops by no more than .010 and RMSEA rises by no more than .015 (Chen "
               "2007, Struct. Eq. Modeling 14:464-504); the configural model holds when it meets two of the "
               "three cut-offs of Hu & Bentler (1999); these are conventions, not tests",
               "RMSEA with several groups is multiplied by the square root of the number of groups (Steiger "
               "1998); chi2 = N x F_ML summed over groups",
               "identification: configural: factor variances 1 and means 0 in every group; metric: loadings "
               "equal, factor variances free after the first group; scalar: intercepts equal too, factor means "
               "free after the first group; strict: residual variances equal too")


def invariance_tables(invariance: dict[str, dict[str, Any]]) -> list[Table]:
    """Tables of ``ConfirmAnalysis.invariance`` (column -> scale -> InvarianceResult)."""
    from .confirm import sentence

    step_rows, verdict_rows, mean_rows, notes = [], [], [], list(CONVENTIONS)
    for column, by_scale in invariance.items():
        for name, result in by_scale.items():
            for step, values in result.steps.items():
                change = result.changes.get(step)
                holds = "" if change is None or change.holds is None else ("yes" if change.holds else "no")
                step_rows.append((name, column, step.replace("_", " "), values.chi2, values.df, values.cfi,
                                  values.rmsea, values.srmr,
                                  *((change.delta_chi2, change.delta_df, change.pvalue, change.delta_cfi,
                                     change.delta_rmsea) if change else (None,) * 5), holds))
            verdict_rows.append((name, column, result.level or "–", {True: "yes", False: "no", None: ""}[
                result.partial_scalar], ", ".join(f["item"] for f in result.freed), sentence(result.notes[0])))
            for level, by_factor in result.latent_mean_differences.items():
                for factor, value in by_factor.items():
                    mean_rows.append((name, column, level, value["against"], factor, value["value"], value["ci"][0],
                                      value["ci"][1], result.observed_differences.get(level, {}).get(factor)))
            notes += [sentence(n) for n in result.notes[1:]]
            notes += [f"{name} by {column}: level {level} left out ({n} respondents with usable answers)"
                      for level, n in result.left_out.items()]
    tables = [Table(title="Measurement invariance: steps", columns=STEP_COLUMNS, rows=tuple(step_rows),
                    kinds=STEP_KINDS, notes=tuple(notes), key="invariance_steps"),
              Table(title="Measurement invariance: verdicts", columns=("scale", "column", "level", "partial scalar",
                                                                       "freed intercepts", "what it allows"),
                    rows=tuple(verdict_rows), kinds={c: "text" for c in ("scale", "column", "level",
                                                                         "partial scalar", "freed intercepts",
                                                                         "what it allows")},
                    key="invariance_verdicts")]
    if mean_rows:
        tables.append(Table(
            title="Latent mean differences (where scalar invariance holds) beside observed score differences",
            columns=("scale", "column", "level", "against", "factor", "latent d", "CI low", "CI high",
                     "observed d"),
            rows=tuple(mean_rows), kinds={"scale": "text", "column": "text", "level": "text", "against": "text",
                                          "factor": "text"},
            notes=("latent d: factor mean of the level minus that of the first level, in the first level's factor "
                   "standard deviation, 95% Wald CI; observed d: the same difference of the raw sum scores in "
                   "the first level's score standard deviation",), key="invariance_means"))
    return tables


def invariance_record(result: Any) -> dict[str, Any] | None:
    """The invariance verdict of one scale across one column, for ``compare``'s JSON (None if not tested)."""
    from .confirm import sentence

    if result is None:
        return None
    return {"level": result.level, "partial_scalar": result.partial_scalar, "freed": list(result.freed),
            "verdict": result.notes[0].to_dict() if result.notes else None,
            "sentence": sentence(result.notes[0]) if result.notes else None}

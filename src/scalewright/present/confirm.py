"""Tables of the confirmatory models: fit with verdicts, loadings, omegas, latent beside observed correlations.

Nothing is computed here; sentences come from :mod:`scalewright.present.messages`.
"""
from __future__ import annotations

from typing import Any

from .messages import describe
from .numbers import format_value
from .table import Table

FIT_COLUMNS = ("model", "structure", "n used", "chi2", "df", "p", "CFI", "TLI", "RMSEA", "RMSEA low",
               "RMSEA high", "p close", "SRMR", "AIC", "BIC")
FIT_KINDS = {"model": "text", "structure": "text", "n used": "int", "df": "int", "p": "p", "CFI": "bounded",
             "TLI": "bounded", "RMSEA": "bounded", "RMSEA low": "bounded", "RMSEA high": "bounded",
             "p close": "p", "SRMR": "bounded"}
CONVENTIONS = ("chi2 = N x F_ML with covariances of divisor N (the convention of the general SEM libraries); "
               "RMSEA with N and its 90% interval by inverting the noncentral chi-square (Browne & Cudeck 1993); "
               "SRMR over the residual correlations, diagonal included",
               "cut-offs used for the verdicts: CFI >= .95, RMSEA <= .06, SRMR <= .08 (Hu & Bentler 1999, "
               "Struct. Eq. Modeling 6:1-55); they are conventions, not tests")


BOUNDED_VALUES = ("cfi", "rmsea", "srmr", "cfi_min", "rmsea_max", "srmr_max", "delta_cfi", "delta_rmsea",
                  "delta_cfi_min", "delta_rmsea_max")


def sentence(item: Any) -> str:
    """One note as a sentence, fit indices and cut-offs written as .95 rather than 0.95."""
    formatted = {key: format_value(value, "bounded", 3 if key.startswith("delta") else 2)
                 for key, value in item.values.items() if key in BOUNDED_VALUES and isinstance(value, float)}
    return describe(item, formatted)


def model_notes(model: Any) -> list[str]:
    """The verdict and every note of one model, as sentences."""
    out = [sentence(model.verdict)] if model.verdict is not None and model.identified else []
    return out + [sentence(n) for n in model.notes]


def fit_table(models: dict[str, Any], extra_notes: tuple[str, ...] = ()) -> Table:
    rows = []
    notes: list[str] = [*extra_notes, *CONVENTIONS]
    for name, model in models.items():
        f = model.indices
        rows.append((name, model.structure, f.n_used, f.chi2, f.df, f.pvalue, f.cfi, f.tli, f.rmsea,
                     f.rmsea_ci[0], f.rmsea_ci[1], f.rmsea_pclose, f.srmr, f.aic, f.bic))
        notes += model_notes(model)
    return Table(title="Confirmatory factor models: fit", columns=FIT_COLUMNS, rows=tuple(rows), kinds=FIT_KINDS,
                 notes=tuple(notes), key="confirm_fit")


def loadings_table(models: dict[str, Any]) -> Table:
    rows = tuple((name, item, factor, value, model.loading_se[item][factor], model.residual_variances[item])
                 for name, model in models.items() for item, by_factor in model.loadings.items()
                 for factor, value in by_factor.items())
    return Table(title="Standardized loadings", columns=("model", "item", "factor", "loading", "SE",
                                                          "residual variance"),
                 rows=rows, kinds={"model": "text", "item": "text", "factor": "text", "loading": "bounded",
                                   "SE": "num", "residual variance": "bounded"},
                 notes=("loadings and residual variances standardized by the model-implied item variances; "
                        "SE by the delta method",), key="confirm_loadings")


def omega_table(models: dict[str, Any]) -> Table:
    rows = []
    for name, model in models.items():
        for scale, omega in model.omega.items():
            rows.append((name, scale, "omega total", omega.omega_total, omega.omega_ci[0], omega.omega_ci[1]))
        if model.bifactor is not None:
            rows.append((name, "(general)", "omega hierarchical", model.bifactor.omega_hierarchical, None, None))
            for scale, value in model.bifactor.omega_hierarchical_subscale.items():
                rows.append((name, scale, "omega hierarchical-subscale", value, None, None))
            rows.append((name, "(general)", "ECV", model.bifactor.ecv, None, None))
    return Table(title="Reliability from the fitted models", columns=("model", "scale", "statistic", "value",
                                                                       "CI low", "CI high"),
                 rows=tuple(rows), kinds={"model": "text", "scale": "text", "statistic": "text", "value": "bounded",
                                          "CI low": "bounded", "CI high": "bounded"},
                 notes=("omega of the raw composite the tool scores: common variance of the sum over its sample "
                        "variance; 95% CI by the delta method under normal theory",), key="confirm_omega")


def correlation_table(analysis: Any) -> Table | None:
    whole = analysis.models.get("all")
    if whole is None or not whole.factor_correlations:
        return None
    rows = []
    names = list(whole.factor_correlations)
    for x, a in enumerate(names):
        for b in names[x + 1:]:
            ci = whole.factor_correlation_ci[a][b]
            rows.append((a, b, whole.factor_correlations[a][b], ci[0], ci[1],
                         analysis.observed_correlations.get(a, {}).get(b)))
    return Table(title="Correlations between scales: latent (whole-file model) beside observed scores",
                 columns=("scale a", "scale b", "latent r", "CI low", "CI high", "observed r"), rows=tuple(rows),
                 kinds={"scale a": "text", "scale b": "text", **{c: "bounded" for c in ("latent r", "CI low",
                                                                                      "CI high", "observed r")}},
                 notes=("latent r: factor correlation (disattenuated), 95% Wald CI on Fisher's z scale; observed "
                        "r: correlation of the raw sum scores on the same rows; fixed at 0 in a bifactor block",),
                 key="confirm_correlations")


def correlation_matrix(analysis: Any) -> Table | None:
    """Scales x scales: latent correlations below the diagonal, observed score correlations above it."""
    whole = analysis.models.get("all")
    if whole is None or not whole.factor_correlations:
        return None
    names = list(whole.factor_correlations)
    rows = []
    for x, a in enumerate(names):
        cells: list[float | None] = []
        for y, b in enumerate(names):
            if x == y:
                cells.append(None)
            elif y < x:
                cells.append(whole.factor_correlations[a][b])
            else:
                cells.append(analysis.observed_correlations.get(a, {}).get(b))
        rows.append((a, *cells))
    return Table(title="Correlations between scales: latent below the diagonal, observed above",
                 columns=("scale", *names), rows=tuple(rows), kinds={"scale": "text", **{n: "bounded" for n in names}},
                 key="confirm_correlation_matrix")


def residual_table(models: dict[str, Any]) -> Table:
    rows = tuple((name, r["a"], r["b"], r["value"]) for name, model in models.items()
                 for r in model.residual_correlations)
    return Table(title="Largest residual correlations (sample minus model)", columns=("model", "item a", "item b",
                                                                                     "residual r"),
                 rows=rows, kinds={"model": "text", "item a": "text", "item b": "text", "residual r": "bounded"},
                 key="confirm_residuals")


def hints_table(models: dict[str, Any]) -> Table | None:
    rows = tuple((name, hint.item, hint.factor, hint.index, hint.change) for name, model in models.items()
                 for hint in model.modification_hints)
    if not rows:
        return None
    return Table(title="Modification hints: items that may also load on another scale",
                 columns=("model", "item", "other factor", "index", "expected loading"), rows=rows,
                 kinds={"model": "text", "item": "text", "other factor": "text", "expected loading": "bounded"},
                 notes=("index: score test (modification index), chi-square with 1 df, shown from 3.84 (a "
                        "convention); expected loading: standardized expected change if the loading were freed; "
                        "a hint, not a reason by itself to change a scale",), key="confirm_hints")


def reliability_beside_table(models: dict[str, Any]) -> Table:
    """One row per scale: its one-factor model's omega with CI and fit, for ``reliability``."""
    rows, notes = [], list(CONVENTIONS)
    for name, model in models.items():
        omega = model.omega.get(name)
        f = model.indices
        rows.append((name, omega.omega_total if omega else None, omega.omega_ci[0] if omega else None,
                     omega.omega_ci[1] if omega else None, f.chi2, f.df, f.cfi, f.rmsea, f.srmr))
        notes += model_notes(model)
    return Table(title="One-factor model of each scale (confirmatory, ML)",
                 columns=("scale", "omega (model)", "CI low", "CI high", "chi2", "df", "CFI", "RMSEA", "SRMR"),
                 rows=tuple(rows), kinds={"scale": "text", "omega (model)": "bounded", "CI low": "bounded",
                                          "CI high": "bounded", "df": "int", "CFI": "bounded", "RMSEA": "bounded",
                                          "SRMR": "bounded"},
                 notes=tuple(notes), key="reliability_confirmatory")


def confirmatory_summary(model: Any) -> dict[str, Any]:
    """The ``scales.<name>.confirmatory`` block of ``reliability``'s JSON."""
    document = model.to_dict()
    keys = ("chi2", "df", "pvalue", "cfi", "tli", "rmsea", "rmsea_ci", "srmr", "verdict", "notes")
    return {"omega": document["omega"].get(model.name), **{key: document[key] for key in keys}}


def _with_effective_n(table: Table) -> Table:
    """With survey weights the fit's N is Kish's effective n: its column says so and shows its decimals."""
    from dataclasses import replace

    position = table.columns.index("n used")
    columns = (*table.columns[:position], "N (effective)", *table.columns[position + 1:])
    kinds = {("N (effective)" if key == "n used" else key): kind for key, kind in table.kinds.items()
             if key != "n used"}
    return replace(table, columns=columns, kinds=kinds)


def confirm_tables(analysis: Any) -> list[Table]:
    """Tables of a :class:`~scalewright.analyses.confirm.ConfirmAnalysis`."""
    from ..notes import note
    from .missing import missing_lines

    extra = [describe(n) for n in getattr(analysis, "notes", ())]
    for name, handling in getattr(analysis, "missing_by_model", {}).items():
        extra += [f"{name}: {line}" for line in missing_lines(handling)]
    for name, block in getattr(analysis, "weighted_by_model", {}).items():
        extra.append(f"{name}: " + describe(note("weighted-ci-kish", n_effective=block["n_effective"], n=block["n"],
                                                 design_effect=block["design_effect"])))
    fit = fit_table(analysis.models, tuple(extra))
    if getattr(analysis, "weighted_by_model", {}):
        fit = _with_effective_n(fit)
    tables = [fit, loadings_table(analysis.models),
              omega_table(analysis.models)]
    for table in (correlation_matrix(analysis), correlation_table(analysis), residual_table(analysis.models),
                  hints_table(analysis.models)):
        if table is not None:
            tables.append(table)
    if analysis.invariance:
        from .invariance import invariance_tables

        tables += invariance_tables(analysis.invariance)
    return tables

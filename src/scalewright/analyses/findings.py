"""Which results a reader must see first: the report's findings, chosen by fixed rules, never by hand.

Each finding is a code with the numbers behind it and the anchor of the section that holds its detail;
``present/findings.py`` words it. The rules (documented in docs/report.md):

1. Respondents set aside (``--exclude``), when any were.
2. Reliability: the scales whose alpha reaches the low-reliability threshold, in one finding; each scale below
   it, in a finding of its own.
3. Subgroup differences that matter: the test's p-value (Holm-adjusted across scales when there are several)
   below :data:`SIGNIFICANCE_LEVEL` *and* an effect at least small by Cohen's benchmarks, largest effect
   first, at most :data:`MAX_DIFFERENCES`; when comparisons ran and none qualifies, one finding says so.
4. Items that hurt a scale: the items flagged ``miskey-suspect`` or ``weak-item``.
5. Shape: floor and ceiling effects, and scores labelled bimodal.
6. Data quality: the share of respondents the careless-responding screen flagged.
7. Structure: each confirmatory model of the whole file whose fit misses any of the conventional cut-offs of
   Hu & Bentler (1999): CFI >= .95, RMSEA <= .06, SRMR <= .08.

With survey weights a first finding says so (weight column, n_eff, design effect), the reliability findings
add the weighted alpha and the screen's the weighted share of flagged respondents; the choice of findings
stays that of the unweighted rules (the subgroup differences are the unweighted, Holm-adjusted tests).

At most :data:`MAX_FINDINGS` findings are kept, in the order above.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

from ..stats.effect_benchmarks import BENCHMARKS, MAGNITUDES, effect_magnitude

if TYPE_CHECKING:
    from ..report import ReportResults
    from ..stats.groups import EffectSize

#: conventional significance level for the findings (common practice, no source)
SIGNIFICANCE_LEVEL = 0.05
#: the smallest effect that counts as a finding (Cohen 1988 benchmarks)
SMALLEST_MAGNITUDE = "small"
MAX_DIFFERENCES = 5
MAX_FINDINGS = 12
ITEM_FLAGS = ("miskey-suspect", "weak-item")


@dataclass(frozen=True)
class Finding:
    """One finding: ``code``, its ``values`` and the ``anchor`` of the report section with the detail."""

    code: str
    anchor: str
    values: dict[str, Any] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        return {"code": self.code, "anchor": self.anchor, **self.values}


def _finite(value: object) -> bool:
    return isinstance(value, (int, float)) and math.isfinite(value)


def _reliability(results: ReportResults) -> list[Finding]:
    reliable: list[dict[str, Any]] = []
    low: list[dict[str, Any]] = []
    for name, findings in results.scales.items():
        if findings.reliability is None:
            continue
        overall = findings.reliability.overall
        if not _finite(overall.alpha):
            continue
        threshold = overall.thresholds.low_alpha
        entry = {"scale": name, "title": findings.scale.title or name, "alpha": overall.alpha,
                 "alpha_ci": tuple(overall.alpha_ci), "threshold": threshold, "n_used": overall.n_used}
        weighted = getattr(results, "weighted", None)
        if weighted is not None and name in weighted.reliability:
            entry["alpha_weighted"] = weighted.reliability[name]["all"]["alpha"]
        (reliable if overall.alpha >= threshold else low).append(entry)
    out = []
    if reliable:
        out.append(Finding("scales-reliable", f"scale-{reliable[0]['scale']}-items",
                           {"scales": tuple(reliable), "threshold": reliable[0]["threshold"]}))
    out.extend(Finding("scale-unreliable", f"scale-{entry['scale']}-items", entry) for entry in low)
    return out


def _effect_rank(effect: EffectSize) -> float:
    """Effects of different kinds made comparable: the value in units of its own 'small' benchmark."""
    return abs(effect.value) / BENCHMARKS[effect.name][0]


def _differences(results: ReportResults) -> list[Finding]:
    candidates: list[tuple[float, Finding]] = []
    ran = 0
    smallest = MAGNITUDES.index(SMALLEST_MAGNITUDE)
    for name, findings in results.scales.items():
        for comparison in findings.comparisons:
            if comparison.test is None or comparison.effect_size is None:
                continue
            ran += 1
            pvalue = comparison.test.pvalue_holm if comparison.test.pvalue_holm is not None else comparison.test.pvalue
            effect = comparison.effect_size
            magnitude = effect_magnitude(effect.name, effect.value)
            if not _finite(pvalue) or pvalue >= SIGNIFICANCE_LEVEL or magnitude not in MAGNITUDES:
                continue
            if MAGNITUDES.index(magnitude) < smallest:
                continue
            groups = sorted(comparison.groups, key=lambda g: g.mean, reverse=True)
            position = list(results.options.by).index(comparison.column) + 1
            values = {"scale": name, "title": findings.scale.title or name, "column": comparison.column,
                      "highest": groups[0].level, "highest_mean": groups[0].mean,
                      "lowest": groups[-1].level, "lowest_mean": groups[-1].mean, "n_levels": len(groups),
                      "effect_name": effect.name, "effect": effect.value, "magnitude": magnitude,
                      "pvalue": pvalue, "holm": comparison.test.pvalue_holm is not None,
                      "first_level": comparison.groups[0].level}
            if len(groups) == 2:
                # the effect's sign follows the order of the levels as given; the sentence names the higher one
                values["effect"] = abs(effect.value) if effect.name == "Hedges' g" else effect.value
            candidates.append((_effect_rank(effect), Finding("group-difference",
                                                             f"scale-{name}-by-{position}", values)))
    candidates.sort(key=lambda pair: -pair[0])
    chosen = [finding for _, finding in candidates[:MAX_DIFFERENCES]]
    if len(candidates) > MAX_DIFFERENCES:
        chosen.append(Finding("more-differences", chosen[-1].anchor,
                              {"n_more": len(candidates) - MAX_DIFFERENCES}))
    if ran and not candidates:
        chosen.append(Finding("no-group-difference", "scale-" + next(iter(results.scales)) + "-subgroups",
                              {"n_comparisons": ran, "columns": tuple(results.options.by)}))
    return chosen


def _items(results: ReportResults) -> list[Finding]:
    out = []
    for name, findings in results.scales.items():
        if findings.reliability is None:
            continue
        for flag in findings.reliability.overall.flags:
            if flag.code in ITEM_FLAGS and flag.item:
                out.append(Finding("item-" + flag.code, f"scale-{name}-items",
                                   {"scale": name, "title": findings.scale.title or name, "item": flag.item,
                                    "value": flag.value}))
    return out


def _shape(results: ReportResults) -> list[Finding]:
    out = []
    for name, findings in results.scales.items():
        shape = findings.shape.overall if findings.shape is not None else None
        if shape is None:
            continue
        anchor = f"scale-{name}-distribution"
        title = findings.scale.title or name
        if shape.floor_effect:
            out.append(Finding("floor-effect", anchor, {"scale": name, "title": title, "share_pct": shape.floor_pct}))
        if shape.ceiling_effect:
            out.append(Finding("ceiling-effect", anchor,
                               {"scale": name, "title": title, "share_pct": shape.ceiling_pct}))
        if shape.shape == "bimodal":
            out.append(Finding("bimodal-scores", anchor, {"scale": name, "title": title}))
    return out


def _quality(results: ReportResults) -> list[Finding]:
    out = []
    if results.screen is not None:
        summary = results.screen.summary()
        if summary.get("n"):
            values = {"n_flagged": summary["n_flagged"], "n": summary["n"],
                      "share_pct": 100.0 * summary["n_flagged"] / summary["n"],
                      # a count of flagged respondents says nothing of the checks that could not run
                      "not_checked": list(summary.get("not_checked", ()))}
            weighted = getattr(results, "weighted", None)
            if weighted is not None and weighted.screen is not None:
                values["weighted_share_pct"] = weighted.screen["flagged_pct"]
            out.append(Finding("screen-flagged", "quality-screen", values))
    return out


def _structure_fit(results: ReportResults) -> list[Finding]:
    from ..stats.cfa_result import CUTOFFS
    from .confirm import WHOLE_FILE

    confirm = getattr(results, "confirm", None)
    if confirm is None:
        return []
    out = []
    for name, model in confirm.models.items():
        if name != WHOLE_FILE or model.verdict is None:  # the per-scale models are not findings
            continue
        if model.verdict.code not in ("fit-mixed", "fit-misses-cutoffs"):
            continue
        indices = model.indices
        missed = tuple(index for index, value, ok in (("CFI", indices.cfi, indices.cfi >= CUTOFFS["cfi"]),
                                                      ("RMSEA", indices.rmsea, indices.rmsea <= CUTOFFS["rmsea"]),
                                                      ("SRMR", indices.srmr, indices.srmr <= CUTOFFS["srmr"]))
                       if not ok)
        out.append(Finding("model-fit-misses", "confirm",
                           {"model": name, "structure": model.structure, "cfi": indices.cfi,
                            "rmsea": indices.rmsea, "srmr": indices.srmr, "missed": missed,
                            "cfi_min": CUTOFFS["cfi"], "rmsea_max": CUTOFFS["rmsea"],
                            "srmr_max": CUTOFFS["srmr"]}))
    return out


def select_findings(results: ReportResults) -> tuple[Finding, ...]:
    """The report's findings, in the order of the rules above, at most :data:`MAX_FINDINGS`."""
    found: list[Finding] = []
    weighted = getattr(results, "weighted", None)
    if weighted is not None:
        design = weighted.design
        found.append(Finding("results-weighted", "weights",
                             {key: design[key] for key in ("weight_column", "n", "n_effective", "design_effect",
                                                           "n_zero_weight")}))
    if results.n_excluded:
        found.append(Finding("set-aside", "quality", {"n_excluded": results.n_excluded,
                                                      "n_read": results.n_rows + results.n_excluded,
                                                      "n_analysed": results.n_rows,
                                                      "source": results.options.exclude}))
    found += _reliability(results)
    found += _differences(results)
    found += _items(results)
    found += _shape(results)
    found += _quality(results)
    found += _structure_fit(results)
    return tuple(found[:MAX_FINDINGS])

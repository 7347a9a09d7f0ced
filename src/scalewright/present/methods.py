"""The methods appendix (every formula with its citation, every threshold used) and the cautions.

Thresholds are read from the results themselves (which carry the values the run used) or, where a result
does not carry them, from the documented defaults of the module that applies them; nothing is restated.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from .numbers import format_value


@dataclass(frozen=True)
class Method:
    """One statistic of the report: what it is, how it is computed, where it comes from."""

    topic: str
    statistic: str
    formula: str
    citation: str


METHODS: tuple[Method, ...] = (
    Method("Scoring", "Composite score",
           "reverse-worded items keyed as min + max - x; the score is the mean of the answered items (a sum is "
           "prorated: that mean times k) when at least the required number of items was answered",
           "the scale file's rule; POMP rescaling: Cohen, Cohen, Aiken & West (1999), Multivariate Behavioral "
           "Research 34, 315-346"),
    Method("Reliability", "Cronbach's alpha",
           "alpha = k/(k - 1) (1 - sum of item variances / variance of the total), from the item covariance "
           "matrix of the respondents who answered every item",
           "Cronbach (1951), Psychometrika 16, 297-334"),
    Method("Reliability", "Confidence interval of alpha",
           "lower = 1 - (1 - alpha) F(1 - g/2; n - 1, (n - 1)(k - 1)), upper with F(g/2), n the rows used",
           "Feldt, Woodruff & Salih (1987), Applied Psychological Measurement 11, 93-103"),
    Method("Reliability", "Standardized alpha", "k r / (1 + (k - 1) r), r the mean inter-item correlation",
           "Cronbach (1951)"),
    Method("Reliability", "Omega total",
           "(sum of loadings)^2 / ((sum of loadings)^2 + sum of uniquenesses) of a one-factor model",
           "McDonald (1999), Test Theory: A Unified Treatment"),
    Method("Reliability", "Guttman's lambda2 and lambda6",
           "lambda2 = lambda1 + sqrt(k/(k - 1) sum of squared covariances) / total variance; lambda6 = 1 - "
           "sum of squared multiple-correlation residuals / total variance",
           "Guttman (1945), Psychometrika 10, 255-282"),
    Method("Reliability", "Item-rest correlation and alpha if deleted",
           "correlation of an item with the sum of the other items; alpha of the scale without the item",
           "common practice, no source"),
    Method("Reliability", "Alphas compared between subgroups",
           "W = (1 - alpha_1)/(1 - alpha_2) against F(n_1 - 1, n_2 - 1), Holm-adjusted across pairs",
           "Feldt (1969), Psychometrika 34, 363-373; Holm (1979), Scandinavian Journal of Statistics 6, 65-70"),
    Method("Distribution", "Skewness and excess kurtosis with standard errors",
           "G1 = g1 sqrt(n(n - 1))/(n - 2); G2 = ((n + 1) g2 + 6)(n - 1)/((n - 2)(n - 3))",
           "Joanes & Gill (1998), The Statistician 47, 183-189"),
    Method("Distribution", "Bimodality coefficient",
           "BC = (G1^2 + 1)/(G2 + 3(n - 1)^2/((n - 2)(n - 3))); 5/9 for a uniform distribution",
           "Pfister et al. (2013), Frontiers in Psychology 4, 700"),
    Method("Distribution", "Dip test of unimodality", "Hartigan's dip, scores jittered within their grid step "
           "because the test assumes continuous data", "Hartigan & Hartigan (1985), Annals of Statistics 13, 70-84"),
    Method("Distribution", "Percentiles and quartiles", "linear interpolation between order statistics (type 7)",
           "Hyndman & Fan (1996), The American Statistician 50, 361-365"),
    Method("Distribution", "Shape label",
           "bimodal, uniform, left-/right-skewed or symmetric from the rule and thresholds listed below; the "
           "evidence is given beside every label",
           "this project's rule (docs/shape.md); floor and ceiling effects: Terwee et al. (2007), Journal of "
           "Clinical Epidemiology 60, 34-42"),
    Method("Subgroups", "Two groups",
           "Welch's t test and the Mann-Whitney U test; Hedges' g with its confidence interval and the "
           "rank-biserial correlation",
           "Welch (1947), Biometrika 34, 28-35; Mann & Whitney (1947), Annals of Mathematical Statistics 18, "
           "50-60; Hedges (1981), Journal of Educational Statistics 6, 107-128"),
    Method("Subgroups", "Three or more groups",
           "Welch's F and the Kruskal-Wallis H test; omega-squared and epsilon-squared; Games-Howell pairs",
           "Welch (1951), Biometrika 38, 330-336; Kruskal & Wallis (1952), Journal of the American Statistical "
           "Association 47, 583-621; Games & Howell (1976), Journal of Educational Statistics 1, 113-125"),
    Method("Subgroups", "Several scales", "p-values also Holm-adjusted across the scales of one grouping column",
           "Holm (1979)"),
    Method("Answers", "Diverging stacked bars",
           "each item's answer shares, levels below the middle to the left and above to the right",
           "Heiberger & Robbins (2014), Journal of Statistical Software 57(5)"),
    Method("Structure", "Sampling adequacy", "Kaiser-Meyer-Olkin measure, overall and per item",
           "Kaiser (1970), Psychometrika 35, 401-415; Kaiser & Rice (1974), Educational and Psychological "
           "Measurement 34, 111-117"),
    Method("Structure", "Bartlett's sphericity test", "chi2 = -(n - 1 - (2p + 5)/6) ln|R|, df = p(p - 1)/2",
           "Bartlett (1950), British Journal of Statistical Psychology 3, 77-85"),
    Method("Structure", "Parallel analysis",
           "observed eigenvalues against a percentile of those of random normal data of the same size",
           "Horn (1965), Psychometrika 30, 179-185; Glorfeld (1995), Educational and Psychological "
           "Measurement 55, 377-393"),
    Method("Structure", "Exploratory factor analysis",
           "minimum-residual extraction with an oblique rotation; each factor matched to the scale whose items "
           "load on it most", "factor model fitted with the factor_analyzer package"),
    Method("Confirmatory models", "Maximum-likelihood factor model",
           "each scale one factor, and the whole file one model (a factor per scale, correlations free; a total "
           "with subscales a bifactor model), fitted to the item covariances; chi2 = N x F_ML",
           "Joreskog (1969), Psychometrika 34, 183-202"),
    Method("Confirmatory models", "Fit indices",
           "CFI and TLI against the independence model; RMSEA with its 90% interval from the noncentral "
           "chi-square; SRMR of the residual correlations",
           "Bentler (1990), Psychological Bulletin 107, 238-246; Tucker & Lewis (1973), Psychometrika 38, 1-10; "
           "Steiger & Lind (1980); Browne & Cudeck (1993)"),
    Method("Confirmatory models", "Model-based omega, omega hierarchical, ECV",
           "common variance of the raw sum over its model-implied variance, 95% CI by the delta method; for a "
           "bifactor model the general factor's share",
           "McDonald (1999); Reise (2012), Multivariate Behavioral Research 47, 667-696; Rodriguez, Reise & "
           "Haviland (2016), Psychological Methods 21, 137-150"),
    Method("Confirmatory models", "Measurement invariance",
           "configural, metric and scalar multi-group models; a step holds when CFI drops by at most .010 and "
           "RMSEA rises by at most .015",
           "Chen (2007), Structural Equation Modeling 14, 464-504"),
    Method("Data quality", "Careless responding",
           "longest run of identical answers, even-odd consistency, Mahalanobis distance, person-total "
           "correlation, intra-individual response variability, missing share, duplicates",
           "Meade & Craig (2012), Psychological Methods 17, 437-455; Curran (2016), Journal of Experimental "
           "Social Psychology 66, 4-19; Dunn et al. (2018), Journal of Business and Psychology 33, 105-121"),
    Method("Presentation", "Colours", "Okabe & Ito colour-blind-safe palette",
           "Okabe & Ito (2008), Color Universal Design"),
)

CAUTIONS: tuple[str, ...] = (
    "Scores describe groups of respondents. They are not a diagnosis, and they are not a basis for decisions "
    "about one person.",
    "Published instruments may be copyrighted and come with their own scoring manuals. Where an instrument's "
    "own manual, or licensed professional practice, differs from the defaults used here, the manual and that "
    "practice come first.",
    "Reliability and structure hold for this sample only; a different group of respondents may give "
    "different values.",
    "A flag marks something to look at, not a verdict: a flagged item or respondent needs a person's judgement.",
    "Subgroup differences describe this sample; they do not show what caused them.",
)


@dataclass(frozen=True)
class Threshold:
    topic: str
    rule: str
    value: str
    source: str


def _v(value: Any, kind: str = "num", decimals: int = 2) -> str:
    return format_value(value, kind, decimals)


def thresholds_used(results: Any) -> list[Threshold]:
    """Every cut-off behind a flag, label or suppression in ``results`` (a ``ReportResults``)."""
    from ..stats import shape as shape_module
    from ..stats import shape_rule
    from ..stats.reliability_flags import MISKEY_MIN_LOADING
    from ..stats.screen_rules import WEAK_INDEX_MAX_EXPECTED_BELOW
    from ..stats.structure_results import MIN_EIGEN_RATIO, MIN_KMO

    options = results.options
    out: list[Threshold] = [
        Threshold("Reliability", "Confidence level of intervals", f"{100 * options.confidence_level:g}%",
                  "report option"),
        Threshold("Subgroups", "Smallest subgroup analysed (reliability, shape)", _v(options.min_group, "int"),
                  "report option"),
        Threshold("Subgroups", "Smallest group shown in comparisons and counts (smaller ones suppressed)",
                  _v(options.min_cell, "int"), "report option"),
    ]
    first = next((f.reliability.overall for f in results.scales.values() if f.reliability is not None), None)
    if first is not None:
        t = first.thresholds
        out += [
            Threshold("Reliability", "miskey-suspect: loading on the scale's first factor (signed so most items "
                      "load positively) below", _v(-MISKEY_MIN_LOADING, "bounded"),
                      "this project's rule (docs/reliability.md); item-rest r given as support"),
            Threshold("Reliability", "weak-item: item-rest correlation below", _v(t.weak_item_rest_r, "bounded"),
                      "common practice, usually traced to Nunnally & Bernstein (1994)"),
            Threshold("Reliability", "low-reliability: alpha below", _v(t.low_alpha, "bounded"),
                      "common practice, usually traced to Nunnally & Bernstein (1994)"),
            Threshold("Reliability", "excess-reliability: alpha above", _v(t.excess_alpha, "bounded"),
                      "Streiner (2003), Journal of Personality Assessment 80, 99-103"),
            Threshold("Reliability", "redundant-pair: inter-item correlation above", _v(t.redundant_r, "bounded"),
                      "common practice, no source"),
        ]
    from ..stats.cfa_result import CUTOFFS

    out += [Threshold("Confirmatory models", "fit verdict: CFI at least, RMSEA at most, SRMR at most",
                      f"{_v(CUTOFFS['cfi'], 'bounded')}, {_v(CUTOFFS['rmsea'], 'bounded')}, "
                      f"{_v(CUTOFFS['srmr'], 'bounded')}",
                      "Hu & Bentler (1999), Structural Equation Modeling 6, 1-55 (conventions, not tests)")]
    out += [
        Threshold("Distribution", "skewed when |G1| reaches (and exceeds twice its SE)",
                  _v(shape_rule.SKEW_THRESHOLD),
                  "lowered from Bulmer's (1979, Principles of Statistics) 0.5 because a bounded answer range damps "
                  "the skewness of rating scores; this project's choice, measured in docs/shape.md"),
        Threshold("Distribution", "uniform when the bands' excess w stays below", _v(shape_rule.FLAT_W),
                  "Cohen (1988): w = .1 small, .3 medium"),
        Threshold("Distribution", "bimodal: valley density at most this share of the smaller peak",
                  _v(shape_rule.VALLEY_RATIO), "this project's rule (docs/shape.md)"),
        Threshold("Distribution", "bimodal: valley lower than the peak, one-sided binomial p below",
                  _v(shape_rule.VALLEY_ALPHA, "p"), "this project's rule (docs/shape.md)"),
        Threshold("Distribution", "bimodal: each peak window holds at least this share of respondents",
                  f"{100 * shape_rule.MIN_PEAK_SHARE:g}%", "this project's rule (docs/shape.md): heaping"),
        Threshold("Distribution", "respondents expected per score band of the shape rule",
                  _v(shape_rule.BAND_EXPECTED, "int"), "this project's rule (docs/shape.md)"),
        Threshold("Distribution", "floor / ceiling effect: share at the lowest / highest score above",
                  f"{100 * shape_module.FLOOR_CEILING_SHARE:g}%", "Terwee et al. (2007)"),
        Threshold("Distribution", "smallest sample given a shape label", _v(shape_module.MIN_N_FOR_LABEL, "int"),
                  "this project's rule"),
    ]
    structure = results.structure
    if structure is not None:
        out += [
            Threshold("Structure", "weak-loading: loading on its own scale's factor below",
                      _v(structure.min_loading, "bounded"), "common practice, no source"),
            Threshold("Structure", "cross-loading: loading on another factor above",
                      _v(structure.max_cross_loading, "bounded"), "common practice, no source"),
            Threshold("Structure", "low-kmo: KMO below", _v(MIN_KMO, "bounded"), "Kaiser (1974)"),
            Threshold("Structure", "several-dimensions: first-to-second eigenvalue ratio below",
                      _v(MIN_EIGEN_RATIO), "common practice, no source"),
        ]
        if structure.parallel is not None:
            out.append(Threshold("Structure", "parallel analysis: percentile of random eigenvalues, iterations",
                                 f"{structure.parallel.percentile:g}th, {structure.parallel.iterations}",
                                 "Glorfeld (1995)"))
    screen = results.screen
    if screen is not None:
        t = screen.thresholds
        out += [
            Threshold("Data quality", "long-run: identical answers in a row covering at least this share of items",
                      f"{100 * t.long_run_share:g}% ({screen.long_run_items} items)"
                      if t.checks_long_runs(screen.n_items) else f"{100 * t.long_run_share:g}% (not checked)",
                      "Meade & Craig (2012)"),
            Threshold("Data quality", "long-run: judged on questionnaires of at least this many items",
                      _v(t.long_run_min_items, "int"), "this project's rule (docs/screening.md)"),
            Threshold("Data quality", "far-from-sample: Mahalanobis p below (weak signal below)",
                      f"{_v(t.mahalanobis_p, 'p')} ({_v(t.mahalanobis_p_weak, 'p')})", "Meade & Craig (2012)"),
            Threshold("Data quality", "against-sample (weak): person-total correlation below",
                      _v(t.person_total_min, "bounded"), "Curran (2016)"),
            Threshold("Data quality", "uneven-halves (weak): even-odd consistency below",
                      _v(t.even_odd_min, "bounded"), "Meade & Craig (2012)"),
            Threshold("Data quality", "a weak index is used only when attentive respondents expected below its "
                      "cut-off are at most", f"{100 * WEAK_INDEX_MAX_EXPECTED_BELOW:g}%",
                      "this project's rule (docs/screening.md)"),
            Threshold("Data quality", "duplicate-answers: identical rows flagged from this many answered items",
                      _v(t.duplicate_min_items, "int"), "this project's rule (docs/screening.md)"),
            Threshold("Data quality", "many-missing (listed only): share of items unanswered above",
                      f"{100 * t.missing_share_max:g}%", "this project's rule"),
            Threshold("Data quality", "fast: faster than this share of the median duration",
                      _v(t.speed_share), "this project's rule (docs/screening.md)"),
        ]
    return out

"""Sentences of the ordinal (polychoric) estimates."""
from __future__ import annotations

ORDINAL: dict[str, str] = {
    "ordinal-few-options": "the items have {options} answer options, fewer than {min_options}: correlations, alpha "
                           "and omega that treat the answers as continuous are biased; the ordinal estimates "
                           "(--ordinal) are advised (Rhemtulla, Brosseau-Liard & Savalei, 2012)",
    "ordinal-skewed-items": "{n_items} item(s) with strongly skewed answers (|skewness| above {skew_limit}, largest "
                            "{max_abs_skewness}): {items}; the ordinal estimates (--ordinal) are advised "
                            "(Rhemtulla, Brosseau-Liard & Savalei, 2012)",
    "polychoric-undefined": "{n_pairs} polychoric correlation(s) undefined ({pairs}): an item was answered at one "
                            "level only among the rows used",
    "polychoric-empty-cells-corrected": "{n_pairs} pair table(s) ({pairs}) had empty cells that put the estimate at "
                                        "+-1; 0.5 was added to each empty cell (Haldane, 1956) before estimating",
    "polychoric-at-bound": "{n_pairs} polychoric correlation(s) ({pairs}) stay at the search bound of +-.9999 even "
                           "so (near-duplicate items); they have no standard error",
    "polychoric-smoothed": "the polychoric correlation matrix was not positive definite (smallest eigenvalue "
                           "{min_eigenvalue}); the nearest correlation matrix with eigenvalues of at least {floor} "
                           "(Higham, 2002) is used instead; largest change of a correlation {max_change}",
    "ordinal-no-factor-model": "no one-factor model could be fitted to the polychoric matrix of {k} item(s): "
                               "ordinal omega and the sum score's reliability are not available",
    "ordinal-factor-not-converged": "the one-factor fit ({method}) of the polychoric matrix did not converge; treat "
                                    "ordinal omega and the sum score's reliability as provisional",
    "ordinal-heywood": "the one-factor fit of the polychoric matrix left no unique variance for {items} (a Heywood "
                       "case)",
    "ordinal-sum-score": "sum-score reliability (Green & Yang, 2009) is the reliability of a score that is the sum "
                         "or mean of the answers: report it for such a score; ordinal alpha (Zumbo, Gadermann & "
                         "Zeisser, 2007) and ordinal omega describe the latent continuous responses behind the "
                         "answers, not the score",
}

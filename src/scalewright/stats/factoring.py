"""Exploratory factor analysis of a correlation matrix: a thin, explicit wrapper of factor_analyzer.

factor_analyzer does the extraction (minres or maximum likelihood) and the rotation; this module passes
every option explicitly and repairs what factor_analyzer 0.5.1 leaves loose: signs are aligned, factors are
ordered by the variance they explain, factor correlations are computed from the rotation so they follow the
same order as the loadings, and non-convergence and Heywood cases become notes instead of warnings.
"""
from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np

from ..concurrency import RECORDING_WARNINGS
from ..errors import UsageError
from ..notes import Note, note
from ..results import ResultMixin

EXTRACTION_METHODS = ("minres", "ml")
ROTATIONS = ("oblimin", "promax", "varimax", "none")
OBLIQUE = ("oblimin", "promax")

#: factor_analyzer bounds each uniqueness to [0.005, 1]; a uniqueness at the lower bound is a Heywood case
UNIQUENESS_FLOOR = 0.005
#: iterations allowed to the rotation; factor_analyzer's Rotator stops there without saying so
ROTATION_MAX_ITER = 1000


@dataclass(frozen=True)
class FactorSolution(ResultMixin):
    """Loadings (p x m, pattern matrix for oblique rotations) and what goes with them.

    ``factor_correlations`` is m x m in the order of the loadings' columns (the identity for orthogonal
    rotations). ``variance_explained`` is each factor's sum of squared loadings divided by p.
    ``heywood_items`` holds the positions of items whose uniqueness reached the lower bound.
    """

    loadings: np.ndarray
    factor_correlations: np.ndarray
    communalities: np.ndarray
    uniquenesses: np.ndarray
    variance_explained: np.ndarray
    method: str
    rotation: str
    converged: bool
    heywood_items: tuple[int, ...]
    notes: tuple[Note, ...]  # codes with values, worded by present/messages

    @property
    def n_factors(self) -> int:
        return int(self.loadings.shape[1])


def _check_options(n_factors: int, p: int, method: str, rotation: str) -> None:
    if method not in EXTRACTION_METHODS:
        raise UsageError(f"unknown factor extraction method {method!r}; choose one of {', '.join(EXTRACTION_METHODS)}")
    if rotation not in ROTATIONS:
        raise UsageError(f"unknown rotation {rotation!r}; choose one of {', '.join(ROTATIONS)}")
    if not isinstance(n_factors, (int, np.integer)) or isinstance(n_factors, bool) or n_factors < 1:
        raise UsageError(f"the number of factors must be a whole number of at least 1, not {n_factors!r}")
    if n_factors >= p:
        raise UsageError(f"{n_factors} factor(s) cannot be extracted from {p} item(s); ask for fewer than {p}")


def _extract(correlation: np.ndarray, n_factors: int, method: str) -> tuple[np.ndarray, list[Note]]:
    """Unrotated loadings from factor_analyzer, with its convergence warning turned into a note."""
    from factor_analyzer import FactorAnalyzer

    analyser = FactorAnalyzer(
        n_factors=n_factors,
        rotation=None,  # rotation is done below, so its matrix is known and factor order stays ours
        method=method,
        use_smc=True,
        is_corr_matrix=True,  # the correlation matrix is a sufficient statistic; missing data were handled upstream
        bounds=(UNIQUENESS_FLOOR, 1),
        impute="drop",  # inert with a correlation matrix; passed so nothing is imputed silently
        svd_method="lapack",
        rotation_kwargs={},
    )
    notes: list[Note] = []
    with RECORDING_WARNINGS, warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        analyser.fit(correlation)
    for warning in caught:
        text = str(warning.message)
        if text.startswith("Failed to converge"):
            notes.append(note("extraction-not-converged", method=method, detail=text.split(":", 1)[-1].strip()))
        elif issubclass(warning.category, FutureWarning) and "force_all_finite" in text:
            continue  # scikit-learn renamed an argument factor_analyzer 0.5.1 still passes; harmless below 1.8
        else:
            warnings.warn_explicit(warning.message, warning.category, warning.filename, warning.lineno)
    return np.asarray(analyser.loadings_, dtype=float), notes


def _rotate(unrotated: np.ndarray, rotation: str) -> tuple[np.ndarray, list[Note]]:
    """Rotated loadings (pattern matrix) from factor_analyzer's Rotator with every option explicit.

    The Rotator stops silently at its iteration limit. Its iterations are deterministic and end early once
    converged, so a second run allowed twice the iterations gives the same loadings exactly when the first
    had converged: that comparison is the convergence check.
    """
    from factor_analyzer.rotator import Rotator

    def run(max_iter: int) -> np.ndarray:
        rotator = Rotator(method=rotation, normalize=True, power=4, kappa=0, gamma=0, delta=0.01,
                          max_iter=max_iter, tol=1e-5)
        return np.asarray(rotator.fit_transform(unrotated.copy()), dtype=float)

    rotated = run(ROTATION_MAX_ITER)
    settled = np.allclose(rotated, run(2 * ROTATION_MAX_ITER), atol=1e-8)
    return rotated, [] if settled else [note("rotation-not-settled", rotation=rotation, iterations=ROTATION_MAX_ITER)]


def factor_correlations_from_transform(transform: np.ndarray) -> np.ndarray:
    r"""Factor correlations implied by a rotation ``transform`` with ``rotated = unrotated @ transform``.

    .. math:: \Phi = (M^\top M)^{-1}

    For an oblique rotation of orthogonal initial factors by :math:`\Lambda_r = \Lambda_0 M`, the rotated
    factors are :math:`f_r = M^{-1} f_0`, whose covariance is :math:`M^{-1} M^{-\top} = (M^\top M)^{-1}`;
    the rotations used here keep the factors' variances at 1, so this is a correlation matrix
    (Jennrich, 2002, Psychometrika 67:7-19, for the oblique gradient-projection rotation).
    """
    phi = np.linalg.inv(transform.T @ transform)
    scale = np.sqrt(np.diag(phi))
    return phi / np.outer(scale, scale)


def fit_factors(correlation: np.ndarray, n_factors: int, *, method: str = "minres",
                rotation: str = "oblimin") -> FactorSolution:
    r"""Exploratory factor analysis of a correlation matrix.

    The common factor model :math:`R = \Lambda \Phi \Lambda^\top + \Psi` is fitted by minimum residuals
    (``minres``) or maximum likelihood (``ml``) in factor_analyzer, then rotated (``oblimin`` with
    :math:`\gamma = 0`, ``promax`` with power 4, ``varimax``, or ``none``).

    Parameters
    ----------
    correlation : (p, p) array
        Item correlation matrix (complete cases).
    n_factors : int
        Number of factors, 1 <= m < p.
    method, rotation : str
        Extraction method and rotation; every other option of factor_analyzer is fixed explicitly here.

    Returns
    -------
    FactorSolution
        Loadings with each factor's loading sum made positive, factors ordered by the variance they
        explain, factor correlations in the same order, communalities and uniquenesses, and notes on
        non-convergence and Heywood cases.

    Notes
    -----
    factor_analyzer 0.5.1 does not reorder its ``phi_`` with the loadings after an oblique rotation of three
    or more factors. The factor correlations are therefore computed here from the rotation itself
    (:func:`factor_correlations_from_transform`), with the transform found by least squares from the
    unrotated and rotated loadings, then signed and ordered together with the loadings.

    References
    ----------
    .. [1] Jennrich, R. I. (2002). A simple general method for oblique rotation. Psychometrika, 67, 7-19.
    .. [2] Hendrickson, A. E., & White, P. O. (1964). Promax: a quick method for rotation to oblique simple
       structure. British Journal of Statistical Psychology, 17, 65-70.
    .. [3] Kaiser, H. F. (1958). The varimax criterion for analytic rotation in factor analysis.
       Psychometrika, 23, 187-200.
    """
    correlation = np.asarray(correlation, dtype=float)
    p = correlation.shape[0]
    _check_options(n_factors, p, method, rotation)
    unrotated, notes = _extract(correlation, int(n_factors), method)
    if n_factors > 1 and rotation != "none":
        rotated, rotation_notes = _rotate(unrotated, rotation)
        notes.extend(rotation_notes)
        # the transform is exact (rotated = unrotated @ M) and unrotated has full column rank
        transform = np.linalg.lstsq(unrotated, rotated, rcond=None)[0]
    else:
        rotated = unrotated
        transform = np.eye(int(n_factors))
    if rotation in OBLIQUE and n_factors > 1:
        phi = factor_correlations_from_transform(transform)
    else:
        phi = np.eye(int(n_factors))

    # signs are arbitrary: make each factor's loading sum positive, and flip its correlations with it
    signs = np.where(rotated.sum(axis=0) < 0, -1.0, 1.0)
    rotated = rotated * signs
    phi = phi * np.outer(signs, signs)
    # order factors by the variance they explain, carrying the correlations along in the same order
    order = np.argsort(-(rotated ** 2).sum(axis=0), kind="stable")
    rotated = rotated[:, order]
    phi = phi[np.ix_(order, order)]

    communalities = np.einsum("ij,jk,ik->i", rotated, phi, rotated)
    uniquenesses = 1.0 - communalities
    heywood = tuple(int(i) for i in np.flatnonzero(uniquenesses <= UNIQUENESS_FLOOR + 1e-6))
    if heywood:
        notes.append(note("factor-heywood", count=len(heywood), floor=UNIQUENESS_FLOOR))
    return FactorSolution(
        loadings=rotated, factor_correlations=phi, communalities=communalities, uniquenesses=uniquenesses,
        variance_explained=(rotated ** 2).sum(axis=0) / p, method=method, rotation=rotation,
        converged=not any(n.code in ("extraction-not-converged", "rotation-not-settled") for n in notes),
        heywood_items=heywood, notes=tuple(notes))

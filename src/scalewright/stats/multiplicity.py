"""Adjusting p-values for a family of tests."""
from __future__ import annotations

from collections.abc import Sequence

import numpy as np


def holm_adjusted(pvalues: Sequence[float] | np.ndarray) -> np.ndarray:
    r"""Holm's step-down adjusted p-values; NaN entries stay NaN and are not counted in the family.

    With the m finite p-values sorted, :math:`p_{(1)} \le \dots \le p_{(m)}`,

    .. math::

        \tilde p_{(i)} = \min\Bigl(1, \max_{j \le i} (m - j + 1)\, p_{(j)}\Bigr)

    Hand-written because the libraries that have it (statsmodels, pingouin) import scipy.stats, which
    costs more than a whole ``reliability --by`` run on survey-sized data; the tests compare it with both.

    References
    ----------
    .. [1] Holm, S. (1979). A simple sequentially rejective multiple test procedure. Scandinavian Journal
       of Statistics, 6, 65-70.
    """
    values = np.asarray(pvalues, dtype=np.float64).ravel()
    adjusted = np.full(values.shape, np.nan)
    present = np.flatnonzero(np.isfinite(values))
    if present.size == 0:
        return adjusted
    order = present[np.argsort(values[present], kind="stable")]
    m = order.size
    stepped = np.maximum.accumulate((m - np.arange(m)) * values[order])
    adjusted[order] = np.minimum(stepped, 1.0)
    return adjusted

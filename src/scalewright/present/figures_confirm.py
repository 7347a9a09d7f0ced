"""Figure of a confirmatory model: standardized loadings as plain horizontal bars, items grouped by factor.

A function of the result object (never of raw data); takes ``ax=None`` and returns the Axes.
"""
from __future__ import annotations

from typing import Any

import numpy as np

from .figure_files import axes_or_new
from .palette import NEUTRAL_GREY, OKABE_ITO


def confirm_loadings_figure(model: Any, ax: Any = None) -> Any:
    """Standardized loadings of ``model`` (a ``ConfirmedModel``): one bar per item and factor, +-1.96 SE whiskers.

    Items stand in the order of the model, grouped by their first factor; an item on two factors (a
    bifactor model) gets one bar per factor, coloured by factor.
    """
    rows = [(item, factor, value, model.loading_se[item][factor]) for item, by_factor in model.loadings.items()
            for factor, value in by_factor.items()]
    ax = axes_or_new(ax, (6.4, max(2.4, 0.28 * len(rows) + 1.2)))
    if not rows:
        ax.text(0.5, 0.5, "the model could not be fitted", ha="center", va="center", transform=ax.transAxes)
        ax.set_axis_off()
        return ax
    colour = {factor: OKABE_ITO[j % 6] for j, factor in enumerate(model.factors)}
    position = np.arange(len(rows))[::-1]
    values = np.array([r[2] for r in rows])
    errors = 1.96 * np.nan_to_num(np.array([r[3] for r in rows], dtype=float))
    ax.barh(position, values, xerr=errors, color=[colour[r[1]] for r in rows], height=0.7,
            error_kw={"ecolor": "#555555", "elinewidth": 0.8, "capsize": 2})
    ax.set_yticks(position, [f"{r[0]} ({r[1]})" if len(model.factors) > 1 else r[0] for r in rows], fontsize=8)
    low = min(0.0, float(values.min()) - 0.1)
    ax.set_xlim(low, 1.0)
    ax.axvline(0, color=NEUTRAL_GREY, linewidth=0.8)
    ax.set_xlabel("Standardized loading")
    ax.set_title(f"Loadings of the {model.structure.replace('-', ' ')} model")
    ax.spines[["top", "right"]].set_visible(False)
    return ax

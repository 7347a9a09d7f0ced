"""Figures of a structure analysis: the scree plot against random data, and a heat table of loadings.

Both are functions of result objects (never of raw data), take ``ax=None`` and return the Axes.
"""
from __future__ import annotations

from typing import Any

import numpy as np

from .figure_files import axes_or_new
from .palette import NEUTRAL_GREY, OKABE_ITO, PRIMARY


def _parallel_of(result: Any) -> Any:
    return getattr(result, "parallel", result)


def scree_figure(result: Any, ax: Any = None, *, max_shown: int | None = 20) -> Any:
    """Observed eigenvalues against the random data's percentile and mean (parallel analysis).

    ``result`` is a ``StructureResult`` or a ``ParallelAnalysisResult``. At most ``max_shown`` leading
    eigenvalues are drawn (None: all).
    """
    parallel = _parallel_of(result)
    ax = axes_or_new(ax, (6.4, 4.0))
    if parallel is None:
        ax.text(0.5, 0.5, "no parallel analysis (too few respondents or items)", ha="center", va="center",
                transform=ax.transAxes)
        ax.set_axis_off()
        return ax
    shown = len(parallel.observed) if max_shown is None else min(len(parallel.observed), max_shown)
    position = np.arange(1, shown + 1)
    ax.plot(position, parallel.observed[:shown], marker="o", color=PRIMARY, linewidth=1.8,
            label="observed")
    ax.plot(position, parallel.random[:shown], marker="s", markersize=4, linestyle="--", color=OKABE_ITO[1],
            linewidth=1.4, label=f"random data, {parallel.percentile:g}th percentile")
    ax.plot(position, parallel.random_mean[:shown], linestyle=":", color=NEUTRAL_GREY, linewidth=1.4,
            label="random data, mean")
    if parallel.suggested_factors:
        ax.axvline(parallel.suggested_factors + 0.5, color=OKABE_ITO[2], linewidth=1.0, alpha=0.8)
        ax.annotate(f"{parallel.suggested_factors} above random", xy=(parallel.suggested_factors + 0.5, 1.0),
                    xycoords=("data", "axes fraction"), xytext=(4, -14), textcoords="offset points",
                    color=OKABE_ITO[2], fontsize=9)
    ax.set_xlabel("Eigenvalue number")
    ax.set_ylabel("Eigenvalue of the item correlations")
    ax.set_xticks(position if shown <= 20 else position[::max(1, shown // 10)])
    ax.set_title("Parallel analysis")
    ax.spines[["top", "right"]].set_visible(False)
    ax.legend(frameon=False, fontsize=9)
    return ax


def loadings_figure(result: Any, ax: Any = None) -> Any:
    """Heat table of the loadings (items x factors), annotated, items grouped by their scale.

    Blue for positive, vermillion for negative loadings; the darker, the larger in size.
    """
    from matplotlib.colors import LinearSegmentedColormap

    solution = result.solution
    ax = axes_or_new(ax, (1.6 + 0.9 * max(getattr(solution, "n_factors", 1), 1), 1.2 + 0.28 * max(len(result.items), 1)))
    if solution is None:
        ax.text(0.5, 0.5, "no factor solution", ha="center", va="center", transform=ax.transAxes)
        ax.set_axis_off()
        return ax
    colours = LinearSegmentedColormap.from_list("loading", [OKABE_ITO[5], "#FFFFFF", PRIMARY])
    loadings = solution.loadings
    ax.imshow(loadings, cmap=colours, vmin=-1, vmax=1, aspect="auto")
    for i in range(loadings.shape[0]):
        for j in range(loadings.shape[1]):
            value = loadings[i, j]
            text = f"{value:.2f}".replace("0.", ".", 1)
            ax.text(j, i, text, ha="center", va="center", fontsize=8,
                    color="white" if abs(value) > 0.6 else "black")
    ax.set_xticks(range(loadings.shape[1]), labels=list(result.factor_names))
    ax.set_yticks(range(len(result.items)), labels=[f"{item} ({result.item_scale[item]})" for item in result.items])
    ax.set_xlabel("Factor")
    ax.set_ylabel("Item (intended scale)")
    ax.set_title("Factor loadings")
    ax.tick_params(length=0)
    return ax

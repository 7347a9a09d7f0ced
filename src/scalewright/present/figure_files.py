"""Saving matplotlib figures as SVG and PNG files, atomically."""
from __future__ import annotations

from collections.abc import Iterable
from pathlib import Path

from ..files import write_atomic_with


def use_agg() -> None:
    """Select the non-interactive Agg backend (no screen needed); call before importing pyplot."""
    import matplotlib

    matplotlib.use("Agg", force=True)


def figure_folder(folder: Path) -> Path:
    """The folder for ``--figures``: created when its parent exists; a file or a missing parent is refused."""
    from ..errors import UsageError

    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise UsageError(f"cannot write figures: {folder} is not a folder")
    if not folder.parent.is_dir():
        raise UsageError(f"cannot write figures: folder {folder.parent} does not exist")
    folder.mkdir(exist_ok=True)
    return folder


def axes_or_new(ax, size: tuple[float, float]):
    """``ax`` itself, or the Axes of a new figure of ``size`` inches (figure functions take ``ax=None``)."""
    if ax is not None:
        return ax
    import matplotlib.pyplot as plt

    _, ax = plt.subplots(figsize=size)
    return ax


def save_figure(figure, stem: str | Path, *, formats: Iterable[str] = ("svg", "png"), dpi: int = 150,
                inputs: Iterable = ()) -> list[Path]:
    """Write ``figure`` to ``stem.svg`` / ``stem.png``; returns the paths written. Closes the figure."""
    import matplotlib.pyplot as plt

    written = []
    stem = Path(stem)
    try:
        for fmt in formats:
            target = stem.with_suffix(f".{fmt}")
            # svg.hashsalt keeps SVG ids stable, so the same input gives the same file
            written.append(write_atomic_with(
                target,
                lambda tmp, fmt=fmt: figure.savefig(tmp, format=fmt, dpi=dpi, bbox_inches="tight",
                                                    metadata={"Date": None} if fmt == "svg" else None),
                inputs=inputs))
    finally:
        plt.close(figure)
    return written

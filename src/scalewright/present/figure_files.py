"""Saving matplotlib figures as SVG and PNG files, atomically."""
from __future__ import annotations

import re
from collections.abc import Iterable
from pathlib import Path

from ..files import write_atomic_with

#: longest stretch of a name kept in a file name (a long name is cut and told apart by its hash)
NAME_PART_LENGTH = 60


def safe_part(name: object) -> str:
    """A file-safe form of a scale, item or column name: letters, digits, '_' and '-'.

    A name that had to change (dots, spaces, slashes, other characters, or cut for length) gets eight hex
    characters of its hash, so ``a b``, ``a/b`` and ``a_b`` stay three different files.
    """
    import hashlib

    text = str(name)
    part = re.sub(r"[^A-Za-z0-9_-]+", "_", text)[:NAME_PART_LENGTH] or "_"
    if part != text:
        part += "-" + hashlib.blake2b(text.encode("utf-8", "surrogatepass"), digest_size=4).hexdigest()
    return part


class FigureNames:
    """Hands out the file stems of one folder's figures, never the same one twice.

    Names are compared without case, as some file systems do; a repeat gets ``-2``, ``-3`` ...
    """

    def __init__(self) -> None:
        self._taken: set[str] = set()

    def unique(self, stem: str) -> str:
        candidate, number = stem, 1
        while candidate.casefold() in self._taken:
            number += 1
            candidate = f"{stem}-{number}"
        self._taken.add(candidate.casefold())
        return candidate


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


#: control characters other than the line break: fonts have no glyph for them, so they are shown escaped
_CONTROLS_BUT_NEWLINE = re.compile("[\x00-\x09\x0b-\x1f\x7f-\x9f\u200e\u200f\u202a-\u202e\u2066-\u2069]")


def _literal_texts(figure) -> None:
    """Show every text of ``figure`` as written: names and labels come from the user's files, so a ``$`` is not
    the start of a formula and a control character is shown as its escape (``\\r``), not sent to the font."""
    from matplotlib.text import Text
    from matplotlib.ticker import FixedFormatter, FuncFormatter

    def shown(value: str) -> str:
        return _CONTROLS_BUT_NEWLINE.sub(
            lambda m: f"\\x{ord(m.group()):02x}" if ord(m.group()) < 0x100 else f"\\u{ord(m.group()):04x}", value)

    for text in figure.findobj(Text):
        text.set_parse_math(False)
        text.set_text(shown(text.get_text()))
    for ax in figure.axes:  # tick labels given as texts are drawn again from their formatter
        for axis in (ax.xaxis, ax.yaxis):
            major, minor = axis.get_major_formatter(), axis.get_minor_formatter()
            if isinstance(major, (FixedFormatter, FuncFormatter)):
                axis.set_major_formatter(FuncFormatter(lambda x, pos, f=major: shown(str(f(x, pos)))))
            if isinstance(minor, (FixedFormatter, FuncFormatter)):
                axis.set_minor_formatter(FuncFormatter(lambda x, pos, f=minor: shown(str(f(x, pos)))))


def save_figure(figure, stem: str | Path, *, formats: Iterable[str] = ("svg", "png"), dpi: int = 150,
                inputs: Iterable = ()) -> list[Path]:
    """Write ``figure`` to ``stem.svg`` / ``stem.png``; returns the paths written. Closes the figure."""
    import matplotlib.pyplot as plt

    written = []
    stem = Path(stem)
    try:
        _literal_texts(figure)
        for fmt in formats:
            # never Path.with_suffix: a dot in the stem (a scale named 'wb.2') is not a suffix to replace
            target = stem.parent / f"{stem.name}.{fmt}"
            # svg.hashsalt keeps SVG ids stable, so the same input gives the same file
            written.append(write_atomic_with(
                target,
                lambda tmp, fmt=fmt: figure.savefig(tmp, format=fmt, dpi=dpi, bbox_inches="tight",
                                                    metadata={"Date": None} if fmt == "svg" else None),
                inputs=inputs))
    finally:
        plt.close(figure)
    return written

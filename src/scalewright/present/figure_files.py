"""Saving matplotlib figures as SVG and PNG files, atomically."""
from __future__ import annotations

import re
from collections.abc import Iterable
from pathlib import Path
from typing import Any

from ..files import write_atomic, write_atomic_with

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


def _short(value: float) -> str:
    """A number as matplotlib writes it in an SVG header (fixed point, no trailing zeros)."""
    return f"{value:f}".rstrip("0").rstrip(".")


def svg_in_one_draw(figure) -> str:
    """The SVG text of ``figure`` cropped to its tight bounding box, from a single draw (see
    :func:`_svg_and_box`)."""
    return _svg_and_box(figure)[0]


def _svg_and_box(figure) -> tuple[str, Any]:
    """The SVG text of ``figure`` cropped to its tight bounding box, from a single draw.

    ``savefig(bbox_inches="tight")`` lays the whole figure out to measure it, then lays it out again to draw
    it (and measures every text again, as matplotlib keeps text sizes per renderer). Here the figure is
    drawn once on its full canvas, measured with the same renderer while its text sizes are still at hand,
    and the picture is cropped by the SVG header (size and viewBox) to the box that ``bbox_inches="tight"``
    gives, padded by ``savefig.pad_inches``: the same picture at the same size. Returns the text and that box
    (in inches), which a PNG of the same figure can use instead of measuring again.
    """
    import io

    import matplotlib

    measured: list[Any] = []

    def measure(event) -> None:
        # the first draw: the only one, or, with a layout engine, matplotlib's layout pass (same positions,
        # and the texts already measured by its renderer)
        if not measured:
            measured.append(figure.get_tightbbox(event.renderer))

    connection = figure.canvas.mpl_connect("draw_event", measure)
    buffer = io.StringIO()
    try:
        figure.savefig(buffer, format="svg", metadata={"Date": None})
    finally:
        figure.canvas.mpl_disconnect(connection)
    pad = matplotlib.rcParams["savefig.pad_inches"]
    box = measured[-1].padded(pad)
    full_width, full_height = (72 * v for v in figure.get_size_inches())
    width, height = 72 * box.width, 72 * box.height
    full = f'width="{_short(full_width)}pt" height="{_short(full_height)}pt" ' \
           f'viewBox="0 0 {_short(full_width)} {_short(full_height)}"'
    cropped = f'width="{_short(width)}pt" height="{_short(height)}pt" ' \
              f'viewBox="{_short(72 * box.x0)} {_short(full_height - 72 * box.y1)} {_short(width)} {_short(height)}"'
    text = buffer.getvalue()
    head = text.index("<svg ")
    if text.find(full, head, head + 1000) < 0:  # a header this code does not know: matplotlib's own crop
        tight = io.StringIO()
        figure.savefig(tight, format="svg", bbox_inches="tight", metadata={"Date": None})
        return tight.getvalue(), "tight"
    text = text.replace(full, cropped, 1)
    if box.x0 < 0 or box.y0 < 0 or box.x1 > full_width / 72 or box.y1 > full_height / 72:
        # the padding reaches past the canvas (a figure laid out to its edges): paint the figure's background
        # there too, as the cropped canvas of bbox_inches="tight" does
        from matplotlib.colors import to_hex

        colour = figure.get_facecolor()
        if colour[3] > 0:
            start = text.index(">", head) + 1
            text = (text[:start] + f'\n <rect x="{_short(72 * box.x0)}" y="{_short(full_height - 72 * box.y1)}" '
                    f'width="{_short(width)}" height="{_short(height)}" style="fill: {to_hex(colour)}; '
                    f'fill-opacity: {colour[3]:g}"/>' + text[start:])
    return text, box


def save_figure(figure, stem: str | Path, *, formats: Iterable[str] = ("svg", "png"), dpi: int = 150,
                inputs: Iterable = ()) -> list[Path]:
    """Write ``figure`` to ``stem.svg`` / ``stem.png``; returns the paths written. Closes the figure.

    Both are cropped to the figure's tight bounding box; the SVG is drawn once (:func:`svg_in_one_draw`), and
    a PNG after it is cropped to the box the SVG's draw measured (one draw instead of two).
    """
    import matplotlib.pyplot as plt

    written = []
    stem = Path(stem)
    box: Any = "tight"
    try:
        _literal_texts(figure)
        for fmt in sorted(formats, key=lambda f: f != "svg"):
            # never Path.with_suffix: a dot in the stem (a scale named 'wb.2') is not a suffix to replace
            target = stem.parent / f"{stem.name}.{fmt}"
            if fmt == "svg":
                text, box = _svg_and_box(figure)
                written.append(write_atomic(target, text, inputs=inputs))
                continue
            written.append(write_atomic_with(
                target, lambda tmp, fmt=fmt, box=box: figure.savefig(tmp, format=fmt, dpi=dpi, bbox_inches=box),
                inputs=inputs))
    finally:
        plt.close(figure)
    return written

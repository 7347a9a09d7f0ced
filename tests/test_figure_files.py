"""Figures saved as SVG in one draw: the same size and picture as matplotlib's own tight bounding box."""
from __future__ import annotations

import io
import re

import numpy as np
import pytest

from scalewright.present.figure_files import svg_in_one_draw, use_agg

use_agg()

import matplotlib.pyplot as plt  # noqa: E402  (after selecting the Agg backend)


def _figure(constrained: bool):
    figure, axes = plt.subplots(1, 2, figsize=(7, 3), layout="constrained" if constrained else None, squeeze=False)
    for ax in axes.flat:
        ax.bar(np.arange(5), [3, 1, 4, 1, 5])
        ax.set_xticks(range(5), ["strongly disagree", "disagree", "neither", "agree", "strongly agree"],
                      rotation=30, ha="right")
        ax.set_title("Answers to the items of Workload")
        ax.set_ylabel("respondents")
    return figure


def _header(svg: str) -> tuple[np.ndarray, np.ndarray]:
    tag = re.search(r"<svg [^>]*>", svg).group()
    size = [float(re.search(rf'{name}="([-\d.]+)pt"', tag).group(1)) for name in ("width", "height")]
    return np.array(size), np.array([float(v) for v in re.search(r'viewBox="([^"]*)"', tag).group(1).split()])


def _first_bar(svg: str) -> np.ndarray:
    """Corner coordinates of the first bar (the axes background is patch_2, the first bar patch_3)."""
    block = re.search(r'<g id="patch_3">\s*<path d="([^"]*)"', svg).group(1)
    return np.array([float(v) for v in re.findall(r"-?\d+(?:\.\d+)?", block)])


@pytest.mark.parametrize("constrained", [False, True])
def test_one_draw_gives_the_tight_picture(constrained):
    ours = svg_in_one_draw(_figure(constrained))
    # reference: matplotlib's savefig(bbox_inches="tight"), which lays the figure out twice
    buffer = io.StringIO()
    reference_figure = _figure(constrained)
    reference_figure.savefig(buffer, format="svg", bbox_inches="tight", metadata={"Date": None})
    plt.close("all")
    tight = buffer.getvalue()
    (size, box), (tight_size, tight_box) = _header(ours), _header(tight)
    np.testing.assert_allclose(size, tight_size, rtol=1e-6)
    np.testing.assert_allclose(box[2:], tight_size, rtol=1e-6)
    assert tight_box[:2].tolist() == [0.0, 0.0]
    # the same bar at the same place in the shown picture: our coordinates less the viewBox's origin
    corners = _first_bar(ours).reshape(-1, 2) - box[:2]
    np.testing.assert_allclose(corners, _first_bar(tight).reshape(-1, 2), atol=1e-5)


def test_padding_past_the_canvas_is_painted_with_the_figure_background():
    figure = _figure(True)  # constrained layout fills the canvas, so the padding lies outside it
    svg = svg_in_one_draw(figure)
    plt.close("all")
    _, box = _header(svg)
    assert box[0] < 0
    background = re.search(r'<rect x="([-\d.]+)" y="([-\d.]+)" width="([\d.]+)" height="([\d.]+)" '
                           r'style="fill: #ffffff', svg)
    assert background is not None
    np.testing.assert_allclose([float(v) for v in background.groups()], box)


@pytest.mark.parametrize("constrained", [False, True])
def test_a_png_after_the_svg_has_the_size_of_the_tight_png(tmp_path, constrained):
    from matplotlib.image import imread

    from scalewright.present.figure_files import save_figure

    save_figure(_figure(constrained), tmp_path / "ours", formats=("svg", "png"), dpi=100)
    # reference: matplotlib's savefig(bbox_inches="tight") of the same figure
    _figure(constrained).savefig(tmp_path / "tight.png", dpi=100, bbox_inches="tight")
    plt.close("all")
    ours, tight = imread(tmp_path / "ours.png"), imread(tmp_path / "tight.png")
    # the box was measured with the SVG's text metrics (72 dpi, unhinted) rather than Agg's at 100 dpi: the
    # edges may differ by a few pixels, well inside the 0.1-inch (10-pixel) padding around the content
    np.testing.assert_allclose(ours.shape[:2], tight.shape[:2], atol=5)

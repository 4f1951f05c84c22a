"""A printable sheet of colour tiles, one per voltage or thickness (A4 portrait).

Each tile is a flat patch of the computed sRGB colour (IEC 61966-2-1) with its value beneath in
bold and the second quantity and the hex code in small print; a patch whose colour lies outside
the sRGB gamut (shown chroma-reduced) carries a small white corner notch. The sheet is made for
pinning beside an anodising tank or a tempering bench and comparing with real parts.
"""

from __future__ import annotations

import math

import numpy as np

from filmoptic.plots import new_figure

__all__ = ["tile_sheet", "A4_PORTRAIT_IN"]

#: A4 portrait, inches.
A4_PORTRAIT_IN = (8.27, 11.69)


def _columns(count: int) -> int:
    """Tiles per row: wide enough to fit the sheet, narrow enough to stay readable."""
    for cols in (4, 5, 6, 7, 8, 10, 12):
        if math.ceil(count / cols) <= cols * 1.6:
            return cols
    return 12


def tile_sheet(colours, labels, sublabels, *, title: str, subtitle: str = "", notes=()):
    """Draw one tile per colour.

    Parameters
    ----------
    colours : filmoptic.colorimetry.Colour
        A batch of colours (``rgb8``, ``hex``, ``in_gamut`` of shape (n, …)).
    labels, sublabels : sequence of str
        The bold line under each tile (e.g. ``"25 V"``) and the small line (e.g. ``"50 nm"``).
    title, subtitle : str
    notes : sequence of str
        Lines of small print at the foot of the sheet (model, data, printing caveat).

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.patches import Polygon, Rectangle

    rgb = np.asarray(colours.rgb8, dtype=float).reshape(-1, 3) / 255.0
    hexes = np.asarray(colours.hex).reshape(-1)
    gamut = np.asarray(colours.in_gamut, dtype=bool).reshape(-1)
    count = rgb.shape[0]
    cols = _columns(count)
    rows = max(1, math.ceil(count / cols))

    fig, ax = new_figure(figsize=A4_PORTRAIT_IN)
    ax.set_position([0.06, 0.10, 0.88, 0.78])
    ax.set_xlim(0, cols)
    ax.set_ylim(rows * 1.45, 0)
    ax.set_aspect("equal")
    ax.axis("off")
    small = max(5.0, min(8.0, 60.0 / cols))
    for i in range(count):
        r, c = divmod(i, cols)
        x, y = c + 0.08, r * 1.45 + 0.05
        ax.add_patch(Rectangle((x, y), 0.84, 0.84, facecolor=rgb[i], edgecolor="0.55", linewidth=0.4))
        if not gamut[i]:
            ax.add_patch(Polygon([(x + 0.84, y), (x + 0.84, y + 0.2), (x + 0.64, y)], closed=True,
                                 facecolor="white", edgecolor="0.3", linewidth=0.4))
        ax.text(x + 0.42, y + 0.97, labels[i], ha="center", va="center", fontsize=small + 2, fontweight="bold")
        ax.text(x + 0.42, y + 1.15, sublabels[i], ha="center", va="center", fontsize=small, color="0.25")
        ax.text(x + 0.42, y + 1.30, str(hexes[i]), ha="center", va="center", fontsize=small - 0.5,
                color="0.45", family="monospace")
    fig.text(0.06, 0.955, title, fontsize=16, fontweight="bold", va="center")
    if subtitle:
        fig.text(0.06, 0.925, subtitle, fontsize=9, va="center", color="0.25")
    footer = list(notes)
    if not np.all(gamut):
        footer.append("A white corner notch marks a colour outside the sRGB gamut, printed with reduced "
                      "chroma at the same lightness and hue.")
    footer.append("Screens and printers shift colours: compare with real parts under the light you work in.")
    for k, line in enumerate(footer):
        fig.text(0.06, 0.075 - 0.016 * k, line, fontsize=7.2, color="0.3", va="center", wrap=True)
    return fig

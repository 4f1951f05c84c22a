"""A printable sheet of colour tiles, one per voltage or thickness (one A4 or US Letter page).

Each tile is a flat patch of the computed sRGB colour (IEC 61966-2-1) with its value beneath in
bold and the second quantity and the hex code in small print; a patch whose colour lies outside
the sRGB gamut (shown chroma-reduced) carries a small white corner notch. The tiles fill the page:
the number of columns is the one that gives the largest tiles, and the tiles stretch to the page's
height. The sheet is made for pinning beside an anodising tank or a tempering bench and comparing
with real parts.
"""

from __future__ import annotations

import math
import textwrap

import numpy as np

from filmoptic.plots import heading_size, new_page

__all__ = ["tile_sheet", "MAX_TILES"]

_MARGIN, _HEADER, _LABELS, _GAP = 0.55, 1.15, 0.5, 0.12
_MAX_TILE_IN = 2.6
#: Most tiles a sheet holds with their labels readable.
MAX_TILES = 120


def _layout(count: int, width: float, height: float) -> tuple[int, float, float]:
    """(columns, tile width, tile height) that make the largest tiles fill width × height."""
    best = None
    for cols in range(2, 13):
        rows = max(1, math.ceil(count / cols))
        cell_w = width / cols
        side = min(cell_w - _GAP, height / rows - _LABELS - _GAP)
        if side <= 0:
            continue
        if best is None or side > best[1]:
            best = (cols, side)
    cols, side = best if best is not None else (12, 0.2)
    rows = max(1, math.ceil(count / cols))
    tile_w = min(width / cols - _GAP, _MAX_TILE_IN)
    tile_h = min(height / rows - _LABELS - _GAP, _MAX_TILE_IN * 1.3)
    return cols, tile_w, max(tile_h, 0.2)


def tile_sheet(colours, labels, sublabels, *, title: str, subtitle: str = "", notes=(), paper: str = "a4"):
    """Draw one tile per colour on a page.

    Parameters
    ----------
    colours : filmoptic.colorimetry.Colour
        A batch of colours (``rgb8``, ``hex``, ``in_gamut`` of shape (n, …)).
    labels, sublabels : sequence of str
        The bold line under each tile (e.g. ``"25 V"``) and the small line (e.g. ``"50 nm"``).
    title, subtitle : str
    notes : sequence of str
        Lines of small print at the foot of the sheet (model, data, printing caveat).
    paper : str
        ``"a4"`` or ``"letter"``.

    Returns
    -------
    matplotlib.figure.Figure
        A page, saved at the paper's true size.
    """
    from matplotlib.patches import Polygon, Rectangle

    from filmoptic.errors import FilmopticError

    rgb = np.asarray(colours.rgb8, dtype=float).reshape(-1, 3) / 255.0
    hexes = np.asarray(colours.hex).reshape(-1)
    gamut = np.asarray(colours.in_gamut, dtype=bool).reshape(-1)
    count = rgb.shape[0]
    if count > MAX_TILES:
        raise FilmopticError(f"a sheet holds at most {MAX_TILES} tiles with readable labels, this one would have "
                             f"{count}: chart a coarser step")
    fig = new_page(paper)
    W, H = (float(v) for v in fig.get_size_inches())
    footer = list(notes)
    if not np.all(gamut):
        footer.append("A white corner notch marks a colour outside the sRGB gamut, printed with reduced "
                      "chroma at the same lightness and hue.")
    footer.append("Screens and printers shift colours: compare with real parts under the light you work in.")
    wrapped = "\n".join(textwrap.fill(line, width=int((W - 2 * _MARGIN) * 17)) for line in footer)
    foot_h = 0.3 + 0.14 * (wrapped.count("\n") + 1)

    ax = fig.add_axes([0, 0, 1, 1])
    ax.set_xlim(0, W)
    ax.set_ylim(H, 0)                    # inches, growing down the page
    ax.axis("off")
    grid_w, grid_h = W - 2 * _MARGIN, H - _HEADER - foot_h - 0.1
    cols, tile_w, tile_h = _layout(count, grid_w, grid_h)
    cell_w, cell_h = grid_w / cols, tile_h + _LABELS + _GAP
    left = _MARGIN + (grid_w - cols * cell_w) / 2
    small = float(np.clip(cell_w * 5.2, 5.5, 9.0))
    for i in range(count):
        r, c = divmod(i, cols)
        x = left + c * cell_w + (cell_w - tile_w) / 2
        y = _HEADER + r * cell_h
        ax.add_patch(Rectangle((x, y), tile_w, tile_h, facecolor=rgb[i], edgecolor="0.55", linewidth=0.4))
        if not gamut[i]:
            notch = 0.22 * min(tile_w, tile_h)
            ax.add_patch(Polygon([(x + tile_w, y), (x + tile_w, y + notch), (x + tile_w - notch, y)], closed=True,
                                 facecolor="white", edgecolor="0.3", linewidth=0.4))
        centre = x + tile_w / 2
        ax.text(centre, y + tile_h + 0.12, labels[i], ha="center", va="center", fontsize=small + 2,
                fontweight="bold")
        ax.text(centre, y + tile_h + 0.28, sublabels[i], ha="center", va="center", fontsize=small, color="0.25")
        ax.text(centre, y + tile_h + 0.42, str(hexes[i]), ha="center", va="center", fontsize=small - 0.5,
                color="0.45", family="monospace")
    ax.text(_MARGIN, 0.5, title, fontsize=heading_size(title, W - 2 * _MARGIN, 16.0), fontweight="bold", va="center")
    if subtitle:
        ax.text(_MARGIN, 0.82, subtitle, fontsize=9, va="center", color="0.25")
    ax.text(_MARGIN, H - foot_h + 0.12, wrapped, fontsize=7.2, color="0.3", va="top", linespacing=1.4)
    return fig

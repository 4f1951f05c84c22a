"""Plots and printable charts.

Each module draws one kind of figure and returns a matplotlib ``Figure``; :func:`save_figure`
writes it (PNG, SVG or PDF by extension) atomically. matplotlib is imported here, so import this
package only where a plot is asked for.

Two kinds of figure exist. A *page* (:func:`new_page`) is a printable sheet of a fixed paper size
(ISO 216 A4 by default, US Letter on request) and is saved at exactly that size, margins and all,
so that it prints at true scale. Every other figure is a screen plot, saved trimmed to what is
drawn.
"""

from __future__ import annotations

import os
from pathlib import Path

__all__ = ["new_figure", "new_page", "save_figure", "is_page", "PAPER_SIZES_IN", "page_size_in",
           "mark_visible_band", "heading_size"]

_MM = 1 / 25.4

#: Paper sizes, inches (width, height) in portrait: ISO 216 A4 (210 × 297 mm) and US Letter
#: (8.5 × 11 in, ANSI/ASME Y14.1).
PAPER_SIZES_IN = {"a4": (210 * _MM, 297 * _MM), "letter": (8.5, 11.0)}

_PAGE_LABEL = "filmoptic page: "


def _pyplot():
    import matplotlib

    matplotlib.use("Agg")  # no screen needed; files only
    import matplotlib.pyplot as plt

    return plt


def new_figure(*args, **kwargs):
    """``plt.subplots`` on the non-interactive Agg backend."""
    return _pyplot().subplots(*args, **kwargs)


def page_size_in(paper: str = "a4", landscape: bool = False) -> tuple[float, float]:
    """Width and height of a sheet in inches.

    Examples
    --------
    >>> [round(v * 25.4, 3) for v in page_size_in("a4")]
    [210.0, 297.0]
    >>> page_size_in("letter", landscape=True)
    (11.0, 8.5)
    """
    from filmoptic.errors import FilmopticError

    key = str(paper).strip().lower().replace("us-", "").replace("us ", "")
    if key not in PAPER_SIZES_IN:
        raise FilmopticError(f"paper {paper!r}: choose a4 or letter")
    width, height = PAPER_SIZES_IN[key]
    return (height, width) if landscape else (width, height)


def new_page(paper: str = "a4", landscape: bool = False):
    """An empty figure the size of a sheet of paper, saved untrimmed by :func:`save_figure`.

    Examples
    --------
    >>> fig = new_page("letter")
    >>> [float(v) for v in fig.get_size_inches()], is_page(fig)
    ([8.5, 11.0], True)
    """
    fig = _pyplot().figure(figsize=page_size_in(paper, landscape))
    fig.set_label(_PAGE_LABEL + str(paper).lower())
    return fig


def is_page(fig) -> bool:
    """True for a figure made by :func:`new_page` (saved at its paper size, not trimmed)."""
    return str(fig.get_label()).startswith(_PAGE_LABEL)


def heading_size(text: str, width_in: float, largest: float = 14.0) -> float:
    """Font size (pt) at which a bold heading fits ``width_in`` inches: ``largest`` for short ones,
    smaller for a long stack (never below 8 pt).

    Examples
    --------
    >>> heading_size("Colour ladder: TiO2 ? / Ti", 7.0), round(heading_size("x" * 120, 7.0), 1)
    (14.0, 8.0)
    """
    # A bold sans-serif character is about 0.62 em wide on average.
    fits = width_in * 72.0 / (0.62 * max(len(text), 1))
    return float(max(8.0, min(largest, fits)))


def mark_visible_band(ax, *, label: bool = True) -> None:
    """Shade the visible band (380–780 nm) behind a wavelength axis, with a small caption."""
    from filmoptic.colorimetry import VISIBLE_RANGE_NM

    lo, hi = ax.get_xlim()
    a, b = max(lo, VISIBLE_RANGE_NM[0]), min(hi, VISIBLE_RANGE_NM[1])
    if b <= a:
        return
    ax.axvspan(a, b, color="#fff3c4", alpha=0.55, lw=0, zorder=0)
    if label:
        ax.text(0.5 * (a + b), 1.0, "visible, 380–780 nm", transform=ax.get_xaxis_transform(), ha="center",
                va="bottom", fontsize=7, color="0.35")
    ax.set_xlim(lo, hi)


def save_figure(fig, path, dpi: int = 200) -> Path:
    """Save ``fig`` to ``path`` (format from its extension) via a temporary file, then close it.

    A page (:func:`new_page`) keeps its paper size; any other figure is trimmed to its contents.
    """
    from filmoptic.files import temporary_sibling

    path = Path(path)
    fmt = path.suffix.lower().lstrip(".") or "png"
    tmp = temporary_sibling(path, suffix=f".{fmt}")
    trim = {} if is_page(fig) else {"bbox_inches": "tight"}
    try:
        fig.savefig(tmp, format=fmt, dpi=dpi, **trim)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
    finally:
        _pyplot().close(fig)
    return path

"""Plots and printable charts.

Each module draws one kind of figure and returns a matplotlib ``Figure``; :func:`save_figure`
writes it (PNG, SVG or PDF by extension) atomically. matplotlib is imported here, so import this
package only where a plot is asked for.
"""

from __future__ import annotations

import os
from pathlib import Path

__all__ = ["new_figure", "save_figure"]


def _pyplot():
    import matplotlib

    matplotlib.use("Agg")  # no screen needed; files only
    import matplotlib.pyplot as plt

    return plt


def new_figure(*args, **kwargs):
    """``plt.subplots`` on the non-interactive Agg backend."""
    return _pyplot().subplots(*args, **kwargs)


def save_figure(fig, path, dpi: int = 200) -> Path:
    """Save ``fig`` to ``path`` (format from its extension) via a temporary file, then close it."""
    from filmoptic.files import temporary_sibling

    path = Path(path)
    fmt = path.suffix.lower().lstrip(".") or "png"
    tmp = temporary_sibling(path, suffix=f".{fmt}")
    try:
        fig.savefig(tmp, format=fmt, dpi=dpi, bbox_inches="tight")
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
    finally:
        _pyplot().close(fig)
    return path

"""Explore a stack in a browser: a self-contained HTML page with sliders for its free thicknesses
and the viewing angle, showing colours, luminous values and spectra computed in advance.

:func:`explore_grids` computes the numbers (vectorised, one engine call per block of thickness
sets for all angles); :func:`explore_page` packs them into one HTML file that needs no network and
no server; :func:`write_explore_page` does both and writes the file.
"""

from __future__ import annotations

from .grids import DEFAULT_ANGLES_DEG, DEFAULT_MAX_MB, ExploreGrids, FreeThickness, explore_grids
from .page import explore_page

__all__ = ["explore_grids", "explore_page", "write_explore_page", "ExploreGrids", "FreeThickness",
           "DEFAULT_ANGLES_DEG", "DEFAULT_MAX_MB", "low_light_caution"]


def low_light_caution(grids) -> str | None:
    """The eye caution, when some of the page's settings let through little light (and some)."""
    import numpy as np

    from filmoptic.cli.color import LOW_LIGHT_CAUTION, LOW_LIGHT_LIMIT

    if "transmitted" not in grids.views:
        return None
    T = np.asarray(grids.luminous["T"])
    passing = T[T > 1e-6]
    if passing.size and passing.min() < LOW_LIGHT_LIMIT:
        return "Caution: " + LOW_LIGHT_CAUTION.format(t=f"{100 * passing.min():.2f}")
    return None


def write_explore_page(path, grids, *, title=None):
    """Write the page of ``grids`` to ``path`` (whole, through a temporary file); returns its size in bytes."""
    from filmoptic.files import write_atomically

    text = explore_page(grids, title=title, caution=low_light_caution(grids))
    data = text.encode("utf-8")
    write_atomically(path, lambda fh: fh.write(data), mode="wb")
    return len(data)

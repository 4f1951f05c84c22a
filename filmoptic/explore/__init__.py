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
           "DEFAULT_ANGLES_DEG", "DEFAULT_MAX_MB"]


def write_explore_page(path, grids, *, title=None, caution=None):
    """Write the page of ``grids`` to ``path`` (whole, through a temporary file); returns its size in
    bytes. ``caution`` is a safety note shown once at the foot of the page."""
    from filmoptic.files import write_atomically

    text = explore_page(grids, title=title, caution=caution)
    data = text.encode("utf-8")
    write_atomically(path, lambda fh: fh.write(data), mode="wb")
    return len(data)

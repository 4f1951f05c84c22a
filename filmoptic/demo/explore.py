"""Demo part "explore": a page of the titanium tags' oxide colours to send by e-mail (fictional job 8).

All inputs come from :mod:`filmoptic.demo.scenario`. Writes one self-contained HTML page into the
output folder.
"""

from __future__ import annotations

import pathlib

__all__ = ["run", "PAGE_FILE"]

PAGE_FILE = "explore_titanium_tags.html"


def run(outdir: pathlib.Path, say) -> None:
    """Compute the page's grids and write the page into ``outdir``."""
    import numpy as np

    from filmoptic.demo import scenario as sc
    from filmoptic.explore import explore_grids, write_explore_page
    from filmoptic.units import inclusive_grid

    outdir = pathlib.Path(outdir)
    grids = explore_grids(sc.EXPLORE_STACK, angles_deg=inclusive_grid(*sc.EXPLORE_ANGLES_DEG))
    size = write_explore_page(outdir / PAGE_FILE, grids, title=f"Titanium tags: oxide colours — {sc.SCENARIO_NAME}")
    (free,) = grids.free
    say(f"A page for the museum shop's buyer: {sc.EXPLORE_STACK}, a slider for the oxide from "
        f"{free.values_nm[0]:g} to {free.values_nm[-1]:g} nm every {free.step_nm:g} nm and one for the "
        f"viewing angle, {grids.angle_deg[0]:g}–{grids.angle_deg[-1]:g}°.")
    a, i, j = grids.index([sc.EXPLORE_SHOWN_NM], 0.0)
    film = grids.views["reflected"]
    L, A, B = film["Lab"][a, i, j]
    say(f"  At {sc.EXPLORE_SHOWN_NM:g} nm, seen square-on: {film['word'][a, i, j]} {film['hex'][a, i, j]}, "
        f"L* {L:.1f} a* {A:+.1f} b* {B:+.1f}; tilted to {grids.angle_deg[-1]:g}°: "
        f"{film['word'][-1, i, j]} {film['hex'][-1, i, j]}.")
    spread = np.ptp(np.asarray(film["Lab"])[:, i, j, 0])
    say(f"  Lightness changes by {spread:.1f} L* over the angles at that thickness.")
    say(f"  → {PAGE_FILE} ({size / 1e6:.1f} MB; opens in any browser without network, also as an e-mail "
        "attachment)")
    say(f"  The same from the command line: filmoptic explore \"{sc.EXPLORE_STACK}\" --angles "
        f"{sc.EXPLORE_ANGLES_DEG[0]:g}:{sc.EXPLORE_ANGLES_DEG[1]:g}:{sc.EXPLORE_ANGLES_DEG[2]:g} --out {PAGE_FILE}")

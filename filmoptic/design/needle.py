"""The needle method: where a new thin layer would lower the merit most.

Tikhonravov, Trubetskov and DeBell grow a design by inserting *needles* — layers of vanishing
thickness — at the depths where the merit function's derivative with respect to such an
insertion, P(z), is most negative, and then re-optimising all thicknesses. This module computes
P(z) for every candidate depth and needle material by finite differences in the thickness of the
needle, all depths of all layers in **one** batched engine call per material: each coherent
layer j is written as three layers (host part a, needle, host part b) whose thicknesses are
(d_j, 0, 0) except in the row that places the needle in layer j, where they are (z, δ, d_j − z).
A zero-thickness layer leaves the characteristic matrix unchanged, so every row is exactly the
design with one needle.

Fixed layers are not split (a needle may sit at their faces); a needle of the host's own material
would only thicken it and is skipped.

References
----------
A. V. Tikhonravov, M. K. Trubetskov and G. W. DeBell, "Application of the needle optimization
technique to the design of optical coatings", Appl. Opt. 35, 5493–5508 (1996).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from .evaluate import Evaluator
from .layout import Entry, same_material

__all__ = ["NeedleCandidate", "needle_scan", "NEEDLE_PROBE_NM", "NEEDLE_SPACING_NM"]

#: Thickness of the probing needle in the finite difference, nm.
NEEDLE_PROBE_NM = 1e-3
#: Largest distance between the depths probed inside a layer, nm.
NEEDLE_SPACING_NM = 4.0
#: Depths closer than this to a face count as the face, nm.
EDGE_NM = 0.5


@dataclass(frozen=True)
class NeedleCandidate:
    """A place for a needle: inside entry ``index`` at depth ``position_nm`` from its front face
    (``index == len(entries)``: in front of the substrate), of ``material``; ``derivative`` is
    dF/dδ of the sum of squares F per nm of needle (negative: the needle helps)."""

    index: int
    position_nm: float
    material: object
    derivative: float


def _positions(entry) -> np.ndarray:
    from ..limits import GRID_POINTS

    d = entry.thickness_nm
    if not entry.free or d <= 0:
        return np.array([0.0, d]) if d > 0 else np.array([0.0])
    # Counted before the depths exist: a layer allowed to grow to a metre would otherwise ask for
    # hundreds of millions of them (gigabytes) before any work limit could refuse the scan.
    count = math.ceil(d / NEEDLE_SPACING_NM) + 1
    GRID_POINTS.check(count, f"needle depths through a {d:g} nm layer every {NEEDLE_SPACING_NM:g} nm",
                      "give the layer a narrower LOW..HIGH range or a --max-total")
    return np.linspace(0.0, d, max(count, 2))


def needle_scan(layout, goals, materials, *, step_nm: float, extrapolate: bool = False,
                base_sum_of_squares: float | None = None, counter=None) -> list:
    """P(z) for every depth and needle material, best (most negative) first.

    Parameters
    ----------
    layout : Layout
        The current design (repeat groups already made independent).
    goals : sequence of Goal
    materials : sequence of Material
        Materials a needle may be made of.
    step_nm, extrapolate
        As for the :class:`Evaluator`.
    base_sum_of_squares : float, optional
        F of the design itself (computed when not given).
    counter : callable, optional
        Called with the number of designs each batched call evaluated.

    Returns
    -------
    list of NeedleCandidate

    Examples
    --------
    A high-index needle helps most at the substrate face of a low-index layer on glass:

    >>> from filmoptic.design.goals import parse_goals
    >>> from filmoptic.design.layout import layout_from_stack
    >>> from filmoptic.materials import parse_material
    >>> from filmoptic.stack import parse_stack
    >>> lay = layout_from_stack(parse_stack("n=1.46 ? / n=1.52", ambient="n=1")).with_values([100.0])
    >>> best = needle_scan(lay, parse_goals(["R 500..600nm <= 0%"]), [parse_material("n=2.35")], step_nm=50.0)[0]
    >>> best.index, round(best.position_nm, 1), best.derivative < 0
    (0, 100.0, True)
    """
    coherent = layout.coherent_indices()
    if base_sum_of_squares is None:
        base = Evaluator.for_layout(layout, goals, step_nm=step_nm, extrapolate=extrapolate)
        r = base.residuals(layout.values()[None, :])
        base_sum_of_squares = float(np.sum(r * r))
        if counter:
            counter(1)
    F0 = base_sum_of_squares
    candidates = []
    for material in materials:
        if not coherent:
            trial = layout.insert(len(layout.entries), 0.0, material, NEEDLE_PROBE_NM, NEEDLE_PROBE_NM)
            ev = Evaluator.for_layout(trial, goals, step_nm=step_nm, extrapolate=extrapolate)
            r = ev.residuals(trial.values()[None, :])
            if counter:
                counter(1)
            P = (float(np.sum(r * r)) - F0) / NEEDLE_PROBE_NM
            candidates.append(NeedleCandidate(len(layout.entries), 0.0, material, P))
            continue
        super_entries = []
        for i, e in enumerate(layout.entries):
            if e.thick:
                super_entries.append(e)
                continue
            base_free = dict(free=True, low=0.0, high=max(e.thickness_nm, 1.0), group=None, thick=False, text="")
            super_entries.append(replace(e, **base_free))
            super_entries.append(Entry(material, 0.0, True, 0.0, 1.0))
            super_entries.append(replace(e, thickness_nm=0.0, **base_free))
        super_layout = replace(layout, entries=tuple(super_entries))
        base_row = []
        column_of = {}
        for i in coherent:
            column_of[i] = len(base_row)
            base_row.extend([layout.entries[i].thickness_nm, 0.0, 0.0])
        base_row = np.array(base_row)
        rows, places = [], []
        entries = layout.entries
        for i in coherent:
            host = layout.entries[i]
            if same_material(host.material, material):
                continue
            c = column_of[i]
            # At a face shared with a layer of the needle's own material the needle would only
            # thicken that layer: not a new layer, so not a place for one.
            before = i > 0 and same_material(entries[i - 1].material, material)
            after = i + 1 < len(entries) and same_material(entries[i + 1].material, material)
            for z in _positions(host):
                if (before and z < EDGE_NM) or (after and z > host.thickness_nm - EDGE_NM):
                    continue
                row = base_row.copy()
                row[c:c + 3] = (z, NEEDLE_PROBE_NM, host.thickness_nm - z)
                rows.append(row)
                places.append((i, float(z)))
        if not rows:
            continue
        ev = Evaluator.for_layout(super_layout, goals, step_nm=step_nm, extrapolate=extrapolate)
        r = ev.residuals(np.array(rows))
        if counter:
            counter(len(rows))
        P = (np.sum(r * r, axis=1) - F0) / NEEDLE_PROBE_NM
        candidates.extend(NeedleCandidate(i, z, material, float(p)) for (i, z), p in zip(places, P))
    candidates.sort(key=lambda c: c.derivative)
    return candidates

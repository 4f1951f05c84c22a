"""Compare candidate materials for the same target on the same substrate.

For every candidate the single layer ``MATERIAL ? / SUBSTRATE`` is solved with
:func:`filmoptic.inverse.solve.solve_thickness` (the same conditions, the same machinery), and the first
solution — the thinnest that meets the target, or the best match for a colour — is summarised the
way a buyer compares semi-mirrors: thickness needed, luminous reflectance from both sides,
absorptance, how neutral the tint is (CIELAB chroma C*ab = √(a*² + b*²) in reflection and
transmission; 0 is perfectly grey) and how much a 1 nm thickness error moves the result.

References
----------
ISO 9050:2003 (luminous values); CIE 15:2018 §8.2.1 (CIELAB chroma); see :mod:`filmoptic.inverse.solve`.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from ..errors import FilmopticError

__all__ = ["Candidate", "Comparison", "compare_materials"]


@dataclass(frozen=True)
class Candidate:
    """One material's answer to the common target.

    Attributes
    ----------
    material : str
    stack : str
        The stack solved (``"Ti ? / glass 4mm"``).
    thickness_nm : float or None
        The first solution's thickness (None when the target is out of reach).
    low_nm, high_nm : float or None
        Its interval (from the uncertainty).
    luminous_T, luminous_R, luminous_R_reverse, absorptance : float or None
        Companion numbers at that thickness (D65, ISO 9050); reverse = seen through the substrate.
    reflected_chroma, transmitted_chroma, reflected_reverse_chroma : float or None
        C*ab of the tint; smaller is more neutral.
    change_per_nm : float or None
        How far a 1 nm thickness error moves the (first) target quantity: a fraction per nm, or
        ΔE00 per nm for a colour target.
    solutions : int
        Number of solutions in the range.
    note : str
        Why there is no answer, or ``""``.
    solution : filmoptic.inverse.solve.Solution or None
    absorptance_layers, absorptance_substrate : float or None
        The split of ``absorptance``: in the candidate's layer, and in the substrate.
    """

    material: str
    stack: str
    thickness_nm: float | None
    low_nm: float | None
    high_nm: float | None
    luminous_T: float | None
    luminous_R: float | None
    luminous_R_reverse: float | None
    absorptance: float | None
    reflected_chroma: float | None
    reflected_reverse_chroma: float | None
    transmitted_chroma: float | None
    change_per_nm: float | None
    solutions: int
    note: str
    solution: object = None
    absorptance_layers: float | None = None
    absorptance_substrate: float | None = None


@dataclass(frozen=True)
class Comparison:
    """The comparison table: one :class:`Candidate` per material, in the order given."""

    substrate: str
    conditions: tuple
    candidates: tuple


def _chroma(ab):
    return None if ab is None else math.hypot(ab[0], ab[1])


# A candidate written as a layer: a material followed by a thickness ("Ti 10nm", "Ti 10").
_LAYER_RE = re.compile(
    r"^(?P<material>.+?)\s+(?P<thickness>(?:[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?|\?)\s*(?:nm|um|µm|μm|mm)?)$"
)


# A candidate with its native oxide: 'Al + 2nm oxide' (see filmoptic.stack).
_OXIDE_SUFFIX_RE = re.compile(r"^(?P<metal>.*?\S)\s+(?P<oxide>\+\s*[\d.]+\s*(?:nm|Å|A)\s+\S+)\s*$")


def _candidate_stack(material: str, substrate: str) -> str:
    """'Ti ? / glass 4mm', or 'Al ? + 2nm oxide / glass 4mm' for a candidate with its oxide."""
    oxide = _OXIDE_SUFFIX_RE.match(material)
    if oxide:
        return f"{oxide.group('metal')} ? {oxide.group('oxide')} / {substrate}"
    return f"{material} ? / {substrate}"


def _check_candidate(material: str) -> None:
    """A candidate must be a material as written in stack notation, not a layer or a stack: compare
    supplies the unknown thickness and the substrate itself."""
    from ..materials import parse_material

    if not material:
        raise FilmopticError("compare: a candidate material is empty")
    oxide = _OXIDE_SUFFIX_RE.match(material)
    if oxide:
        material = oxide.group("metal")
    if "/" in material:
        raise FilmopticError(
            f"compare: {material!r} is a stack; give each candidate as a material name alone (e.g. Ti), "
            "the substrate with --on"
        )
    try:
        parse_material(material)
    except FilmopticError as exc:
        layer = _LAYER_RE.match(material)
        if layer:
            raise FilmopticError(
                f"compare: {material!r} is a layer with a thickness; give the material name alone "
                f"({layer.group('material').strip()!r}): compare finds the thickness"
            ) from None
        raise type(exc)(f"compare: candidate {material!r}: {exc}") from None


def compare_materials(materials, substrate, conditions, *, range_nm=None, angle_deg=0.0,
                      extrapolate=False, ambient="air") -> Comparison:
    """Solve the same target for each candidate material as a single layer on ``substrate``.

    Parameters
    ----------
    materials : sequence of str
        Material names as in stack notation (``"Ti"``, ``"Cr:Johnson-1974"``, ``"n=2.1"``).
    substrate : str
        The substrate item, e.g. ``"glass 4mm"``.
    conditions : condition or sequence of conditions
        As for :func:`filmoptic.inverse.solve.solve_thickness`.
    range_nm : (float, float), optional
        Thickness range; default per material kind (0–100 nm for a metal).

    Returns
    -------
    Comparison
        A candidate whose target is out of reach carries a note with the closest value instead of
        a thickness; unknown materials raise (the user must fix the name).

    Examples
    --------
    >>> from filmoptic.inverse.solve import Target
    >>> table = compare_materials(["Ti", "Cr"], "glass 4mm", Target("luminous_T", 0.3))
    >>> [round(c.thickness_nm, 1) for c in table.candidates]
    [8.8, 7.8]
    """
    from .solve import ColourTarget, Reading, Target, solve_thickness

    if isinstance(conditions, (Target, ColourTarget, Reading)):
        conditions = (conditions,)
    conditions = tuple(conditions)
    materials = [str(m).strip() for m in materials]
    if not materials:
        raise FilmopticError("compare: name at least one candidate material")
    if len(set(materials)) != len(materials):
        raise FilmopticError("compare: a candidate is named twice")
    substrate = str(substrate if substrate is not None else "").strip()
    if not substrate.strip("/ "):
        raise FilmopticError('compare: the substrate is missing; name it with --on, e.g. --on "glass 4mm"')
    for material in materials:   # all names checked before any solving
        _check_candidate(material)
    candidates = []
    for material in materials:   # one solve per candidate; each is vectorised inside
        stack = _candidate_stack(material, substrate)
        result = solve_thickness(stack, conditions, range_nm=range_nm, angle_deg=angle_deg,
                                 extrapolate=extrapolate, ambient=ambient)
        if not result.solutions:
            candidates.append(Candidate(material, stack, None, None, None, None, None, None, None,
                                        None, None, None, None, 0, result.message, None))
            continue
        best = result.solutions[0]
        cp = best.companions
        candidates.append(Candidate(
            material=material,
            stack=stack,
            thickness_nm=best.thickness_nm,
            low_nm=best.low_nm,
            high_nm=best.high_nm,
            luminous_T=cp.luminous_T,
            luminous_R=cp.luminous_R,
            luminous_R_reverse=cp.luminous_R_reverse,
            absorptance=cp.absorptance,
            reflected_chroma=_chroma(cp.reflected_ab),
            reflected_reverse_chroma=_chroma(cp.reflected_reverse_ab),
            transmitted_chroma=_chroma(cp.transmitted_ab),
            change_per_nm=abs(best.slope_per_nm),
            solutions=len(result.solutions),
            note="",
            solution=best,
            absorptance_layers=cp.absorptance_layers,
            absorptance_substrate=cp.absorptance_substrate,
        ))
    return Comparison(substrate, conditions, tuple(candidates))

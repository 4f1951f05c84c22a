"""Colour of a transparent or weakly absorbing oxide grown on an opaque metal.

The part is a metal half-space with one oxide layer on it, seen in reflection from air: the
light that enters the metal is absorbed there, so such a part has no transmitted colour and none
is ever reported. Forward (thickness → colour) runs every thickness in one vectorised engine call
through :func:`filmoptic.colorimetry.colour_sweep`; backward (colour → thicknesses) lists every
interference order whose colour comes close, through :func:`filmoptic.inverse.solve.solve_thickness`.

Examples
--------
>>> import numpy as np
>>> film = film_colours("TiO2 ? / Ti", np.array([0.0, 50.0]))
>>> film.colours.hex.tolist()
['#cec8c2', '#3d64ab']
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from filmoptic.errors import FilmopticError

__all__ = ["FilmColours", "FilmMatch", "MatchResult", "film_colours", "colour_matches", "oxide_stack",
           "check_opaque_metal", "MAX_THICKNESSES"]

#: At most this many thicknesses (or voltages) per call: more is a typo in a step, not a chart.
MAX_THICKNESSES = 200_000


@dataclass(frozen=True)
class FilmColours:
    """Reflected colours of one oxide-on-metal stack over a set of oxide thicknesses.

    Attributes
    ----------
    thickness_nm : numpy.ndarray, shape (n,)
    colours : filmoptic.colorimetry.Colour
        Reflected colour at each thickness (CIELAB under ``illuminant``, sRGB hex).
    luminous_R : numpy.ndarray, shape (n,)
        Luminous reflectance (ISO 9050 weighting), a fraction.
    stack_text : str
        The stack, e.g. ``"TiO2 ? / Ti"``.
    illuminant : str
    observer : int
    angle_deg : float
    """

    thickness_nm: np.ndarray
    colours: object
    luminous_R: np.ndarray
    stack_text: str
    illuminant: str
    observer: int
    angle_deg: float


@dataclass(frozen=True)
class FilmMatch:
    """One oxide thickness whose reflected colour comes close to a wanted colour.

    Attributes
    ----------
    thickness_nm : float
        Where ΔE00 is smallest in this order.
    low_nm, high_nm : float
        The connected thicknesses around it where ΔE00 stays within the tolerance (equal to
        ``thickness_nm`` without one).
    delta_E00 : float
    order : int
        1 for the thinnest match, 2 for the next time the colour comes round, and so on.
    Lab : tuple of float
        The colour reached at ``thickness_nm``.
    hex : str
    """

    thickness_nm: float
    low_nm: float
    high_nm: float
    delta_E00: float
    order: int
    Lab: tuple
    hex: str


@dataclass(frozen=True)
class MatchResult:
    """Every order that matches, thinnest first; ``closest`` when none is within the tolerance."""

    matches: tuple
    closest: FilmMatch | None
    range_nm: tuple
    target_Lab: tuple
    tolerance: float | None
    stack_text: str


def oxide_stack(oxide: str, metal: str) -> str:
    """Stack notation for an oxide of unknown thickness on a metal half-space.

    Examples
    --------
    >>> oxide_stack("TiO2", "Ti")
    'TiO2 ? / Ti'
    """
    return f"{oxide.strip()} ? / {metal.strip()}"


def check_opaque_metal(stack, what: str) -> None:
    """Refuse a stack whose substrate lets light through: these models are for opaque metals."""
    from filmoptic.colorimetry import transmission_exits

    if stack.substrate.thickness_nm is not None or transmission_exits(stack):
        raise FilmopticError(
            f"{what}: the substrate {stack.substrate.text!r} must be an opaque metal half-space "
            "(a metal name without a thickness)"
        )


def _parsed(stack_text: str, what: str):
    from filmoptic.stack import parse_stack

    stack = parse_stack(stack_text)
    if len(stack.parameters) != 1 or len(stack.thickness_parameters) != 1:
        raise FilmopticError(f"{what}: the stack needs exactly one unknown, the oxide thickness")
    check_opaque_metal(stack, what)
    return stack


def film_colours(stack_text: str, thickness_nm, *, illuminant="D65", observer=2, angle_deg=0.0,
                 progress=None, what: str = "oxide colours") -> FilmColours:
    """Reflected colour and luminous reflectance of ``stack_text`` at every thickness, in one pass.

    Parameters
    ----------
    stack_text : str
        An oxide of unknown thickness on an opaque metal, e.g. ``"TiO2 ? / Ti"``.
    thickness_nm : array_like, shape (n,)
        Oxide thicknesses, nm (>= 0).
    illuminant, observer, angle_deg
        As for :func:`filmoptic.colorimetry.colour_sweep`.
    progress : callable, optional
        Called with the number of thicknesses done after each block.

    Returns
    -------
    FilmColours

    References
    ----------
    CIE 15:2018 *Colorimetry*; ISO 9050:2003; H. A. Macleod, *Thin-Film Optical Filters*, ch. 2.
    """
    from filmoptic.colorimetry import colour_sweep

    d = np.asarray(thickness_nm, dtype=float).reshape(-1)
    if d.size > MAX_THICKNESSES:
        raise FilmopticError(f"{what}: {d.size} points is too many (at most {MAX_THICKNESSES}); use a coarser step")
    stack = _parsed(stack_text, what)
    sweep = colour_sweep(stack, d, illuminant=illuminant, observer=observer, angle_deg=angle_deg,
                         progress=progress)
    return FilmColours(thickness_nm=d, colours=sweep.reflected, luminous_R=sweep.luminous_R,
                       stack_text=stack.text, illuminant=sweep.illuminant, observer=sweep.observer,
                       angle_deg=sweep.angle_deg)


def colour_matches(stack_text: str, lab, *, range_nm, tolerance=None, illuminant="D65",
                   angle_deg=0.0, what: str = "colour match") -> MatchResult:
    """Every oxide thickness in ``range_nm`` whose reflected colour best matches ``lab``.

    Each interference order that brings the colour round again gives its own local minimum of
    ΔE00; all are listed, thinnest first, numbered as orders. With a ``tolerance`` (largest ΔE00
    that still counts as a match) only those within it are kept, each with the interval of
    thickness over which ΔE00 stays within it.

    Parameters
    ----------
    stack_text : str
        An oxide of unknown thickness on an opaque metal.
    lab : sequence of 3 floats
        Wanted CIELAB colour under ``illuminant`` (2° observer).
    range_nm : (float, float)
    tolerance : float, optional
        Largest ΔE00 to accept; None lists every local best match whatever its ΔE00.

    Returns
    -------
    MatchResult

    References
    ----------
    CIE 142-2001 / ISO/CIE 11664-6 (CIEDE2000).
    """
    from filmoptic.colorimetry import colour_of, default_wavelengths
    from filmoptic.engine import compute
    from filmoptic.inverse.solve import ColourTarget, solve_thickness

    stack = _parsed(stack_text, what)
    target = ColourTarget(tuple(float(v) for v in lab), "reflected", "front",
                          0.0 if tolerance is None else float(tolerance), illuminant)
    result = solve_thickness(stack, target, range_nm=tuple(range_nm), angle_deg=angle_deg, companions=False)
    found = sorted(result.solutions, key=lambda s: s.thickness_nm)
    wl = default_wavelengths()

    def describe(solutions, numbered):
        if not solutions:
            return ()
        d = np.array([s.thickness_nm for s in solutions])
        colours = colour_of(wl, compute(stack, wl, angle_deg=angle_deg, thickness_nm=d[:, None]).R,
                            illuminant=illuminant)
        out = []
        for i, s in enumerate(solutions):
            out.append(FilmMatch(
                thickness_nm=float(s.thickness_nm), low_nm=float(s.low_nm), high_nm=float(s.high_nm),
                delta_E00=float(s.delta_E00), order=i + 1 if numbered else 0,
                Lab=tuple(float(v) for v in colours.Lab[i]), hex=str(colours.hex[i]),
            ))
        return tuple(out)

    closest = describe([result.closest], False)[0] if result.closest is not None else None
    return MatchResult(matches=describe(found, True), closest=closest, range_nm=tuple(result.range_nm),
                       target_Lab=target.lab, tolerance=tolerance, stack_text=stack.text)

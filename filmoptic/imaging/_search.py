"""The thickness range a map searches (shared by the transmission and colour modes)."""

from __future__ import annotations

from ..errors import FilmopticError

__all__ = ["search_range_nm"]


def search_range_nm(stack, range_nm=None) -> tuple:
    """The thicknesses a map searches: ``range_nm`` as given, else the unknown's own ``LOW..HIGH``,
    else the solver's default for the layer's material (0–100 nm for a metal, 0–500 nm otherwise).

    Examples
    --------
    >>> from filmoptic.stack import parse_stack
    >>> search_range_nm(parse_stack("Ti ? / glass 4mm")), search_range_nm(parse_stack("TiO2 20..80nm / Ti"))
    ((0.0, 100.0), (20.0, 80.0))
    """
    import math

    from ..colorimetry import sweep_bounds_nm
    from ..inverse.solve import default_range_nm

    if len(stack.parameters) != 1 or len(stack.thickness_parameters) != 1:
        raise FilmopticError(
            "a map needs exactly one unknown, the film's thickness written '?' or LOW..HIGH "
            f"(e.g. \"Ti ? / glass 4mm\"); this stack has {len(stack.parameters)}"
        )
    bounds = sweep_bounds_nm(stack)
    if range_nm is None:
        if bounds is not None:
            return bounds
        layer = stack.layers[stack.parameters[stack.thickness_parameters[0]].layer]
        return tuple(float(v) for v in default_range_nm(layer.material))
    lo, hi = float(range_nm[0]), float(range_nm[1])
    if not (0 <= lo < hi and math.isfinite(hi)):
        raise FilmopticError(f"--range: need 0 <= START < STOP, got {lo:g}:{hi:g}")
    return lo, hi

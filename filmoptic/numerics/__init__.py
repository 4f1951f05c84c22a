"""Numerical tools with no optics in them, in numpy alone.

Modules
-------
interpolate
    Monotone cubic (PCHIP) and not-a-knot spline interpolation.
sampling
    Low-discrepancy (Halton) samples of a box.
roots
    Roots, touching roots, minima and intervals of functions sampled on a grid, refined for many
    problems at once.
"""

__all__: list = []

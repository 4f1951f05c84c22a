"""Low-discrepancy samples of the unit cube, for global searches over several unknowns.

When a full grid over several free thicknesses would be too large, the fit samples the box of
their ranges instead. Points of a low-discrepancy sequence cover a box far more evenly than
random ones (no clusters, no large holes), so the best sample lies closer to the best point.

The Halton sequence gives the n-th point as the radical inverses of n in the first d primes: n is
written in base b and its digits mirrored about the radix point (n = 6 = 110₂ → 0.011₂ = 0.375).
A random shift modulo 1 of the whole point set (Cranley & Patterson 1976), drawn from a seeded
generator, keeps the evenness and removes the sequence's bias towards the origin; the same seed
gives the same points.

References
----------
J. H. Halton, "On the efficiency of certain quasi-random sequences of points in evaluating
multi-dimensional integrals", Numer. Math. 2, 84 (1960). R. Cranley & T. N. L. Patterson,
"Randomization of number theoretic methods for multiple integration", SIAM J. Numer. Anal. 13,
904 (1976).

Examples
--------
>>> halton(4, 2, shift=False).tolist()
[[0.0, 0.0], [0.5, 0.3333333333333333], [0.25, 0.6666666666666666], [0.75, 0.1111111111111111]]
"""

from __future__ import annotations

import numpy as np

from ..errors import FilmopticError

__all__ = ["halton", "radical_inverse", "PRIMES"]

#: Bases of the first dimensions (the Halton sequence uses the first d primes).
PRIMES = (2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37, 41, 43, 47, 53, 59, 61, 67, 71, 73, 79, 83, 89,
          97, 101, 103, 107, 109, 113, 127, 131)


def radical_inverse(index, base: int) -> np.ndarray:
    """The digits of each non-negative integer ``index`` in ``base``, mirrored about the radix point.

    Examples
    --------
    >>> radical_inverse([1, 2, 3, 6], 2).tolist()
    [0.5, 0.25, 0.75, 0.375]
    """
    n = np.asarray(index, dtype=np.int64).copy()
    result = np.zeros(n.shape)
    scale = 1.0 / base
    while np.any(n > 0):
        n, digit = np.divmod(n, base)
        result += digit * scale
        scale /= base
    return result


def halton(count: int, dimensions: int, *, seed=0, shift: bool = True) -> np.ndarray:
    """``count`` points of the Halton sequence in ``[0, 1)^dimensions``, randomly shifted.

    Parameters
    ----------
    count : int
        Number of points (indices 0 … count − 1 of the sequence).
    dimensions : int
        1 … ``len(PRIMES)``.
    seed : int or numpy.random.Generator
        Seeds the shift; the same seed gives the same points.
    shift : bool
        Add one random vector modulo 1 (Cranley–Patterson rotation); False gives the plain
        sequence, which starts at the origin.

    Returns
    -------
    numpy.ndarray, shape (count, dimensions)
    """
    if not 1 <= dimensions <= len(PRIMES):
        raise FilmopticError(f"low-discrepancy samples take 1 to {len(PRIMES)} dimensions, got {dimensions}")
    if count < 0:
        raise FilmopticError("the number of samples cannot be negative")
    index = np.arange(count)
    points = np.column_stack([radical_inverse(index, b) for b in PRIMES[:dimensions]]) if count else \
        np.zeros((0, dimensions))
    if shift:
        rng = seed if isinstance(seed, np.random.Generator) else np.random.default_rng(seed)
        points = points + rng.random(dimensions)
        points -= np.floor(points)
    return points

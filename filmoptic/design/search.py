"""Global search: many random designs scored in batches, the best distinct ones kept as starts.

The response of a coating repeats with each layer's thickness (a fringe every half wave), so the
merit has many local minima and a local method finds the one nearest its start. The search
therefore draws thickness sets uniformly in each free layer's search interval — from its lower
bound up to one half-wave optical thickness at the longest wavelength the goals look at (every
reflectance a single layer can give), or its upper bound if that is smaller — scores them
through the vectorised engine in chunks, and keeps the best few that differ from one another
by more than a small share of the search box (two starts in the same basin would waste a
refinement).

Draws come from a seeded :class:`numpy.random.Generator`, so a search is repeatable.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .refine import project

__all__ = ["SearchResult", "search_box", "random_search", "distinct_best"]

#: Two starts closer than this share of the search box (in every thickness) count as one.
DISTINCT_SHARE = 0.05


@dataclass(frozen=True)
class SearchResult:
    """The best distinct designs of a random search: ``x`` ``(n, K)`` and their merits."""

    x: np.ndarray
    merit: np.ndarray
    tried: int


def search_box(layout, wavelength_max_nm: float, extrapolate: bool = False):
    """Per unknown: the interval the random search draws from (see the module documentation)."""
    lower, upper = layout.lower(), layout.upper()
    top = upper.copy()
    for k, members in enumerate(layout.columns()):
        material = layout.entries[members[0]].material
        n = float(np.real(np.asarray(material.nk(np.array([wavelength_max_nm]), extrapolate=extrapolate))).max())
        half_wave = wavelength_max_nm / (2.0 * max(n, 1e-3))
        top[k] = min(upper[k], max(lower[k] + half_wave, lower[k] + 1e-6))
    return lower, top


def distinct_best(X, merit, count: int, widths) -> np.ndarray:
    """Indices of the ``count`` best rows, skipping rows within ``DISTINCT_SHARE·widths`` of
    one already taken.

    Examples
    --------
    >>> X = np.array([[10.0, 10.0], [10.2, 10.1], [50.0, 20.0]])
    >>> distinct_best(X, np.array([1.0, 1.1, 2.0]), 2, [100.0, 100.0]).tolist()
    [0, 2]
    """
    order = np.argsort(merit, kind="stable")
    widths = np.maximum(np.asarray(widths, dtype=float), 1e-9)
    taken = []
    for i in order:
        if not np.isfinite(merit[i]):
            continue
        if taken and np.any(np.all(np.abs(X[taken] - X[i]) <= DISTINCT_SHARE * widths, axis=1)):
            continue
        taken.append(i)
        if len(taken) >= count:
            break
    return np.array(taken, dtype=int)


def random_search(evaluator, lower, top, *, tries: int, keep: int, rng, counts=None,
                  budget=math.inf, upper=None, include=(), watch=None) -> SearchResult:
    """Score ``tries`` random designs drawn in ``[lower, top]`` and keep the ``keep`` best
    distinct ones.

    Parameters
    ----------
    evaluator : Evaluator
    lower, top : numpy.ndarray
        The search box per unknown.
    tries, keep : int
    rng : numpy.random.Generator
    counts, budget
        A total-thickness bound (draws beyond it are projected back inside).
    upper : numpy.ndarray, optional
        The true upper bounds (for the projection); default ``top``.
    include : sequence of array_like
        Designs scored along with the random ones (e.g. the user's own starting values).
    watch : callable, optional
        ``watch(done, total, X, merit)`` after every chunk.
    """
    K = lower.size
    upper = top if upper is None else upper
    X = lower + (top - lower) * rng.random((int(tries), K))
    if include:
        X = np.vstack([np.atleast_2d(np.asarray(include, dtype=float)), X])
    X = project(X, lower, upper, counts, budget)
    merit = np.empty(X.shape[0])
    chunk = evaluator.chunk
    for start in range(0, X.shape[0], chunk):
        stop = min(start + chunk, X.shape[0])
        merit[start:stop] = evaluator.merit(X[start:stop])
        if watch is not None:
            watch(stop, X.shape[0], X[start:stop], merit[start:stop])
    chosen = distinct_best(X, merit, keep, top - lower)
    return SearchResult(X[chosen], merit[chosen], X.shape[0])

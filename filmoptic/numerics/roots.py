"""Roots, minima and intervals of a function sampled on a grid, many problems at once.

Pure numpy, no optics: every function takes a callable ``fun`` that maps an array of abscissae to
an array of the same shape (elementwise problems), and the function's values already computed on a
1-D ``grid``. The grid does the global part — every sign change brackets a root, every grid point
not above its neighbours marks a minimum — and the refinements run for all brackets together, one
call of ``fun`` per iteration for all of them. That is what makes them fast when ``fun`` is a
vectorised forward model (the transfer-matrix engine): a hundred roots cost the same number of
engine calls as one.

The grid must be fine enough that no root or minimum hides between two points; choosing it is the
caller's business (:func:`filmoptic.inverse.solve.grid_step_nm` for thin films). Roots that only touch zero,
or two roots within one grid step, are recovered by :func:`touching_roots`.

Method
------
Roots in a bracket are refined by the Illinois variant of false position (superlinear, never
leaves its bracket), minima by golden-section search (linear, robust, no derivatives). Both are
classics chosen because they vectorise: each step is the same arithmetic for every problem, unlike
Brent's method (R. P. Brent, *Algorithms for Minimization without Derivatives*, Prentice-Hall
(1973), ch. 4–5; ``scipy.optimize.brentq``), which branches per problem and serves one bracket at a
time.

References
----------
M. Dowell & R. Jarratt, "A modified regula falsi method for computing the root of an equation",
BIT 11, 168 (1971) (the Illinois method).
J. Kiefer, "Sequential minimax search for a maximum", Proc. Amer. Math. Soc. 4, 502 (1953)
(golden-section search).
W. H. Press et al., *Numerical Recipes*, 3rd ed., Cambridge University Press (2007), §9.1
(bracketing on a grid) and §10.2 (golden-section search).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = [
    "brackets",
    "unique_points",
    "refine_roots",
    "find_roots",
    "touching_roots",
    "first_brackets",
    "refine_minima",
    "find_minima",
    "interval_around",
]

_GOLDEN = (math.sqrt(5.0) - 1.0) / 2.0


def brackets(g):
    """Exact zeros and sign changes of sampled values along the last axis.

    Parameters
    ----------
    g : array_like, shape (..., G)

    Returns
    -------
    zero : numpy.ndarray of bool, shape (..., G)
        ``g == 0``.
    change : numpy.ndarray of bool, shape (..., G - 1)
        ``change[..., i]``: the sign changes strictly between ``g[..., i]`` and ``g[..., i + 1]``.

    Examples
    --------
    >>> zero, change = brackets(np.array([1.0, 0.0, -1.0, 2.0]))
    >>> zero.tolist(), change.tolist()
    ([False, True, False, False], [False, False, True])
    """
    g = np.asarray(g)
    zero = g == 0
    change = (g[..., :-1] * g[..., 1:]) < 0
    return zero, change


def unique_points(x, tol=1e-6):
    """Sorted, with points closer than ``tol`` merged (the first of a cluster is kept).

    A root on a grid point can be bracketed from both sides when rounding puts the grid value a
    hair off zero; merging keeps it once.

    Examples
    --------
    >>> unique_points([3.0, 1.0, 1.0 + 1e-9, 2.0]).tolist()
    [1.0, 2.0, 3.0]
    """
    x = np.sort(np.asarray(x, dtype=float))
    if x.size < 2:
        return x
    return x[np.concatenate([[True], np.diff(x) > tol])]


def refine_roots(fun, a, b, fa, fb, xtol=1e-9, ftol=1e-13, maxiter=100):
    """Roots of ``fun`` in brackets ``[a, b]`` with ``fa·fb < 0``, all refined together.

    Vectorised Illinois iteration: a false-position step, with the value kept at the retained end
    halved whenever the same end is kept twice, which restores superlinear convergence. A bracket
    with ``fb == 0`` or ``|b − a| <= xtol`` is left alone (returns ``b``), so zero-width brackets
    can stand in for problems already solved.

    Parameters
    ----------
    fun : callable
        Maps an array of abscissae to an array of the same shape (problem ``i`` at element ``i``).
    a, b, fa, fb : array_like, same shape
        Bracket ends and the function's values there.
    xtol, ftol : float
        Stop a problem when its bracket is narrower than ``xtol`` or ``|f| <= ftol``.
    maxiter : int
        Most iterations (each costs one call of ``fun`` for all problems).

    Returns
    -------
    numpy.ndarray
        The roots, shaped like ``a``.

    References
    ----------
    M. Dowell & R. Jarratt, BIT 11, 168 (1971).

    Examples
    --------
    >>> x = refine_roots(lambda t: t**2 - np.array([2.0, 3.0]), [1.0, 1.0], [2.0, 2.0],
    ...                  [-1.0, -2.0], [2.0, 1.0])
    >>> np.round(x, 9).tolist()
    [1.414213562, 1.732050808]
    """
    a, b = np.array(a, dtype=float), np.array(b, dtype=float)
    fa, fb = np.array(fa, dtype=float), np.array(fb, dtype=float)
    done = (np.abs(fb) <= ftol) | (np.abs(b - a) <= xtol)
    for _ in range(maxiter):
        if np.all(done):
            break
        with np.errstate(invalid="ignore", divide="ignore"):
            c = b - fb * (b - a) / (fb - fa)
        bad = ~np.isfinite(c) | (c <= np.minimum(a, b)) | (c >= np.maximum(a, b))
        c = np.where(bad, 0.5 * (a + b), c)
        c = np.where(done, b, c)
        fc = np.asarray(fun(c), dtype=float)
        crossed = fc * fb < 0
        new_a = np.where(crossed, b, a)
        new_fa = np.where(crossed, fb, 0.5 * fa)   # Illinois: halve the retained end's value
        a, fa = np.where(done, a, new_a), np.where(done, fa, new_fa)
        b, fb = np.where(done, b, c), np.where(done, fb, fc)
        done = done | (np.abs(fb) <= ftol) | (np.abs(b - a) <= xtol)
    return b


def find_roots(fun, grid, g_grid, xtol=1e-9):
    """Every root of ``fun`` on ``grid`` given its values ``g_grid`` there (1-D), sorted.

    Exact zeros on grid points count once; every sign change is refined by :func:`refine_roots`.
    Roots that no sign change brackets are :func:`touching_roots`' business.

    Examples
    --------
    >>> t = np.linspace(0, 10, 101)
    >>> np.round(find_roots(np.sin, t, np.sin(t)), 9).tolist()
    [0.0, 3.141592654, 6.283185307, 9.424777961]
    """
    grid = np.asarray(grid, dtype=float)
    g_grid = np.asarray(g_grid, dtype=float)
    zero, change = brackets(g_grid)
    idx = np.flatnonzero(change)
    roots = refine_roots(fun, grid[idx], grid[idx + 1], g_grid[idx], g_grid[idx + 1], xtol=xtol)
    return unique_points(np.concatenate([grid[zero], roots]))


def touching_roots(fun, grid, g_grid, known_roots, tol):
    """Roots of ``fun`` that no sign change on the grid brackets.

    Near an extremum a function may cross zero twice within one grid step, or only touch zero (an
    extremum equal to zero). Every interior grid minimum of ``|g|`` away from the sign changes is
    examined: the extremum of ``g`` between its two neighbours is located (golden section); if
    ``g`` changes sign there, both roots are bracketed and refined; if it only comes within
    ``tol`` of zero, the extremum itself is the root. A range end within ``tol`` of zero with no
    sign change next to it also counts.

    Parameters
    ----------
    fun : callable
        ``g(t)`` for arrays of ``t`` (elementwise).
    grid, g_grid : (G,) arrays
        The grid and ``g`` on it.
    known_roots : array_like
        Roots already found (from sign changes); points within 1e-6 of them are not returned again.
    tol : float
        How close to zero a touch must come to count as a root.

    Returns
    -------
    numpy.ndarray
        The extra roots (unsorted).

    Examples
    --------
    A parabola that touches zero between two grid points:

    >>> t = np.linspace(0.0, 1.0, 11)
    >>> f = lambda x: (x - 0.33) ** 2
    >>> np.round(touching_roots(f, t, f(t), np.zeros(0), 1e-12), 6).tolist()
    [0.33]
    """
    grid = np.asarray(grid, dtype=float)
    g = np.asarray(g_grid, dtype=float)
    roots = np.asarray(known_roots, dtype=float)
    a = np.abs(g)
    inner = np.arange(1, a.size - 1)
    is_min = (a[inner] < a[inner - 1]) & (a[inner] <= a[inner + 1])
    idx = inner[is_min]
    near_change = (g[idx - 1] * g[idx] < 0) | (g[idx] * g[idx + 1] < 0) | (g[idx] == 0)
    idx = idx[~near_change]
    sgn = np.sign(g[idx])
    lo, hi = grid[idx - 1], grid[idx + 1]
    if idx.size:
        x, fx = refine_minima(lambda t: sgn * fun(t), lo, hi, xtol=1e-10)
    else:
        x = fx = np.zeros(0)
    touching = x[np.abs(fx) <= tol]
    cross = fx < -tol
    pairs = np.zeros(0)
    if np.any(cross):
        gx = sgn[cross] * fx[cross]
        a_ = np.concatenate([lo[cross], x[cross]])
        b_ = np.concatenate([x[cross], hi[cross]])
        fa = np.concatenate([g[idx - 1][cross], gx])
        fb = np.concatenate([gx, g[idx + 1][cross]])
        pairs = refine_roots(fun, a_, b_, fa, fb)
    # The range ends: a value within tolerance there, with no sign change next to it, is a root.
    ends = [grid[i] for i, j in ((0, 1), (-1, -2))
            if abs(g[i]) <= tol and g[i] * g[j] > 0]
    found = np.concatenate([touching, pairs, np.asarray(ends, dtype=float)])
    if roots.size and found.size:
        found = found[np.min(np.abs(found[:, None] - roots[None, :]), axis=1) > 1e-6]
    return found


def first_brackets(grid, q_grid, levels, chunk=2048):
    """For each level, the first bracket of ``q = level`` on the grid, and how many there are.

    A rows × grid sign mask, built ``chunk`` rows at a time so that memory stays bounded, gives
    every level's first crossing without a loop over levels.

    Parameters
    ----------
    grid, q_grid : (G,) arrays
        The grid and the function on it.
    levels : (N,) array
    chunk : int
        Rows of the mask built at once.

    Returns
    -------
    a, b, fa, fb : (N,) arrays
        The bracket (``fa = q(a) − level``…). A level met exactly on a grid point, or not met at
        all, gets the zero-width bracket ``b = a, fb = 0``, which :func:`refine_roots` leaves alone.
    found : (N,) bool array
        Whether the level is met on the grid.
    count : (N,) int array
        Number of crossings and exact hits on the grid.

    Examples
    --------
    >>> t = np.linspace(0.0, 4.0, 5)
    >>> a, b, fa, fb, found, count = first_brackets(t, np.array([0.0, 2.0, 0.0, 2.0, 0.0]),
    ...                                             np.array([1.0, 2.0, 5.0]))
    >>> a.tolist(), b.tolist(), found.tolist(), count.tolist()
    ([0.0, 1.0, 0.0], [1.0, 1.0, 0.0], [True, True, False], [4, 2, 0])
    """
    grid = np.asarray(grid, dtype=float)
    q = np.asarray(q_grid, dtype=float)
    levels = np.asarray(levels, dtype=float)
    N = levels.size
    first = np.full(N, -1, dtype=int)
    count = np.zeros(N, dtype=int)
    for start in range(0, N, chunk):
        v = levels[start:start + chunk, None]
        zero, change = brackets(q[None, :] - v)
        hit = change | zero[:, :-1]
        count[start:start + chunk] = change.sum(axis=1) + zero.sum(axis=1)
        first[start:start + chunk] = np.where(hit.any(axis=1), np.argmax(hit, axis=1), -1)
    # A level met only on the last grid point: the bracket is that point.
    last_zero = (q[-1] == levels) & (first < 0)
    first = np.where(last_zero, grid.size - 2, first)
    count = np.maximum(count, last_zero.astype(int))
    found = first >= 0
    j = np.maximum(first, 0)
    a, b = grid[j], grid[j + 1]
    fa, fb = q[j] - levels, q[j + 1] - levels
    a = np.where(last_zero, grid[-1], a)
    fa = np.where(last_zero, 0.0, fa)
    at_a = found & (fa == 0)
    b = np.where(at_a | ~found, a, b)
    fb = np.where(at_a | ~found, 0.0, fb)
    return a, b, fa, fb, found, count


def refine_minima(fun, a, b, xtol=1e-6, maxiter=80):
    """Minima of ``fun`` in ``[a, b]`` (elementwise), all refined together by golden section.

    Returns the abscissae and function values of the best points found; the bounds themselves
    are candidates (a minimum at the edge of a range).

    References
    ----------
    J. Kiefer, Proc. Amer. Math. Soc. 4, 502 (1953).

    Examples
    --------
    >>> x, fx = refine_minima(lambda t: (t - np.array([0.3, 2.0])) ** 2, [0.0, 0.0], [1.0, 1.0])
    >>> np.round(x, 5).tolist(), np.round(fx, 5).tolist()
    ([0.3, 1.0], [0.0, 1.0])
    """
    a, b = np.array(a, dtype=float), np.array(b, dtype=float)
    lo_a, hi_b = a.copy(), b.copy()
    c = b - _GOLDEN * (b - a)
    d = a + _GOLDEN * (b - a)
    fc, fd = np.asarray(fun(c), dtype=float), np.asarray(fun(d), dtype=float)
    for _ in range(maxiter):
        if np.all(np.abs(b - a) <= xtol):
            break
        left = fc < fd
        b = np.where(left, d, b)
        a = np.where(left, a, c)
        new_c = np.where(left, b - _GOLDEN * (b - a), d)
        new_d = np.where(left, c, a + _GOLDEN * (b - a))
        new_x = np.where(left, new_c, new_d)
        fx = np.asarray(fun(new_x), dtype=float)
        fd, fc = np.where(left, fc, fx), np.where(left, fx, fd)
        c, d = new_c, new_d
    x = np.where(fc < fd, c, d)
    fx = np.minimum(fc, fd)
    # The search interval may end on a bound (a minimum at the edge of the range).
    fa_end, fb_end = np.asarray(fun(lo_a), dtype=float), np.asarray(fun(hi_b), dtype=float)
    x = np.where(fa_end < fx, lo_a, x)
    fx = np.minimum(fx, fa_end)
    x = np.where(fb_end < fx, hi_b, x)
    fx = np.minimum(fx, fb_end)
    return x, fx


def find_minima(fun, grid, r_grid, xtol=1e-6):
    """Local minima of ``fun`` (a residual ≥ 0) given its values ``r_grid`` on ``grid``.

    A grid point not above either neighbour (range ends included) marks a minimum; it is refined
    between its two neighbours by :func:`refine_minima`. Plateaus count once.

    Returns
    -------
    x, fx : numpy.ndarray
        The minima, sorted by ``x``, and the function there.

    Examples
    --------
    >>> t = np.linspace(0, 10, 101)
    >>> x, fx = find_minima(lambda x: np.cos(x) + 1, t, np.cos(t) + 1)
    >>> np.round(x, 5).tolist()
    [3.14159, 9.42478]
    """
    grid = np.asarray(grid, dtype=float)
    r = np.asarray(r_grid, dtype=float)
    n = r.size
    left = np.concatenate([[np.inf], r[:-1]])
    right = np.concatenate([r[1:], [np.inf]])
    is_min = (r <= left) & (r <= right) & ~((r == left) & (np.arange(n) > 0))
    idx = np.flatnonzero(is_min)
    lo = grid[np.maximum(idx - 1, 0)]
    hi = grid[np.minimum(idx + 1, n - 1)]
    x, fx = refine_minima(fun, lo, hi, xtol=xtol)
    order = np.argsort(x)
    x, fx = x[order], fx[order]
    # Neighbouring grid minima can refine to the same point; keep one.
    keep = np.concatenate([[True], np.diff(x) > 10 * xtol]) if x.size else np.zeros(0, bool)
    return x[keep], fx[keep]


def interval_around(fun, grid, r_grid, t0, threshold, xtol=1e-9):
    """Ends of the connected set ``{t : r(t) ≤ threshold}`` that contains each ``t0``.

    The grid locates, for each problem, the nearest grid points outside the set on either side of
    ``t0``; both ends of every problem are then refined together by :func:`refine_roots`.

    Parameters
    ----------
    fun : callable
        ``fun(t)`` → r(t) − threshold for arrays shaped like ``t0`` (elementwise problems), and
        for arrays of shape ``(2, k)`` (row 0: left ends, row 1: right ends).
    grid : (G,) array
    r_grid : (G,) or (k, G) array
        The residual on the grid (per problem when 2-D).
    t0 : (k,) array
        Points inside the sets (r(t0) ≤ threshold).
    threshold : float or (k,) array

    Returns
    -------
    low, high : (k,) arrays
        The ends; a set that reaches the end of the grid ends there.

    Examples
    --------
    >>> t = np.linspace(-3, 3, 61)
    >>> low, high = interval_around(lambda x: x**2 - 1.0, t, t**2, np.array([0.2]), 1.0)
    >>> round(float(low[0]), 9), round(float(high[0]), 9)
    (-1.0, 1.0)
    """
    grid = np.asarray(grid, dtype=float)
    t0 = np.atleast_1d(np.asarray(t0, dtype=float))
    k, G = t0.size, grid.size
    thr = np.broadcast_to(np.asarray(threshold, dtype=float), (k,))
    r = np.broadcast_to(np.asarray(r_grid, dtype=float), (k, G))
    outside = r > thr[:, None]
    i0 = np.searchsorted(grid, t0, side="right")            # grid[:i0] <= t0 < grid[i0:]
    cols = np.arange(G)[None, :]
    left_out = outside & (cols < i0[:, None])
    right_out = outside & (cols >= i0[:, None])
    has_left, has_right = left_out.any(axis=1), right_out.any(axis=1)
    jl = G - 1 - np.argmax(left_out[:, ::-1], axis=1)
    jr = np.argmax(right_out, axis=1)
    rows = np.arange(k)

    # Bracket [outside point, inside point]; the inside point is the next grid point or t0 itself.
    l_out = grid[jl]
    l_in = np.where(jl + 1 < i0, grid[np.minimum(jl + 1, G - 1)], t0)
    r_out = grid[jr]
    r_in = np.where(jr - 1 >= i0, grid[np.maximum(jr - 1, 0)], t0)
    low = np.full(k, grid[0])
    high = np.full(k, grid[-1])
    if np.any(has_left) or np.any(has_right):
        outside_pts = np.stack([l_out, r_out])
        inside_pts = np.stack([l_in, r_in])
        f_out = np.stack([r[rows, jl], r[rows, jr]]) - thr
        f_in = np.asarray(fun(inside_pts), dtype=float)
        usable = np.stack([has_left, has_right]) & (f_in * f_out < 0)
        a = np.where(usable, outside_pts, inside_pts)
        fa = np.where(usable, f_out, 0.0)
        ends = refine_roots(fun, a, inside_pts, fa, np.where(usable, f_in, 0.0), xtol=xtol)
        low = np.where(has_left, np.where(usable[0], ends[0], inside_pts[0]), low)
        high = np.where(has_right, np.where(usable[1], ends[1], inside_pts[1]), high)
    return low, high

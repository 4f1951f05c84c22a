"""Piecewise-cubic interpolation in plain numpy: the monotone (PCHIP) and the not-a-knot spline.

filmoptic interpolates optical constants between table rows with the shape-preserving cubic of
Fritsch & Carlson (PCHIP), and smooth sampled curves (a forward model on a thickness grid, the
envelopes of a fringe pattern) with the classic cubic spline. Both are written here in numpy so
that a command needs no scipy at start-up; they follow the same formulas, in the same order, as
scipy's ``PchipInterpolator`` and ``CubicSpline`` (the test suite compares them to rounding).

A curve is stored like a piecewise polynomial: per interval ``[x_i, x_{i+1})`` the coefficients of
``c0·s³ + c1·s² + c2·s + c3`` with ``s = x − x_i``; the last interval is closed on the right.
Evaluation sums the powers of ``s`` from the constant term up.

Method
------
*PCHIP* (Fritsch & Carlson 1980; the derivative choice of Fritsch & Butland 1984): at an inner
point the slope is zero where the neighbouring secant slopes differ in sign or one of them is
zero, else their weighted harmonic mean with weights ``w1 = 2h_k + h_{k-1}``,
``w2 = h_k + 2h_{k-1}``; at the two end points a one-sided three-point estimate, set to zero if
its sign differs from the first secant's and limited to three times that secant where the data
turn (Moler 2004, §3.6). Two points give the straight line. The interpolant never overshoots the
data, so a tabulated k ≥ 0 stays ≥ 0.

*Cubic spline, not-a-knot* (de Boor 1978, ch. IV): the slopes ``s_i`` solve the tridiagonal
system of continuous second derivatives, with the first two and the last two intervals each
forming one cubic. The two boundary rows are first folded into their neighbours, which leaves a
diagonally dominant tridiagonal system, solved by the Thomas algorithm (elimination without
pivoting, stable for such systems). Two points give the straight line, three the parabola
through them.

References
----------
F. N. Fritsch & R. E. Carlson, "Monotone piecewise cubic interpolation", SIAM J. Numer. Anal. 17,
238 (1980). F. N. Fritsch & J. Butland, "A method for constructing local monotone piecewise cubic
interpolants", SIAM J. Sci. Stat. Comput. 5, 300 (1984). C. Moler, *Numerical Computing with
MATLAB*, SIAM (2004), §3.4–3.6. C. de Boor, *A Practical Guide to Splines*, Springer (1978),
ch. IV.

Examples
--------
>>> import numpy as np
>>> f = Pchip([0.0, 1.0, 2.0, 3.0], [0.0, 1.0, 1.0, 0.0])
>>> f([0.5, 1.5]).tolist()          # flat between the two equal values: no overshoot
[0.6875, 1.0]
>>> g = CubicSpline([0.0, 1.0, 2.0, 3.0], [0.0, 1.0, 8.0, 27.0])
>>> float(g(1.5)), float(g.derivative()(2.0))     # a cubic is reproduced exactly
(3.375, 12.0)
"""

from __future__ import annotations

import numpy as np

from ..errors import FilmopticError

__all__ = ["PiecewiseCubic", "Pchip", "CubicSpline", "pchip_slopes", "spline_slopes"]


def _nodes(x, y):
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    if x.ndim != 1 or y.shape != x.shape or x.size < 2:
        raise FilmopticError("interpolation needs two 1-D arrays of the same length, at least two points")
    if not (np.all(np.isfinite(x)) and np.all(np.isfinite(y))):
        raise FilmopticError("interpolation needs finite values")
    if np.any(np.diff(x) <= 0):
        raise FilmopticError("interpolation needs strictly increasing x")
    return x, y


class PiecewiseCubic:
    """A piecewise cubic given by its breakpoints and per-interval power coefficients.

    Parameters
    ----------
    x : numpy.ndarray, shape (n,)
        Strictly increasing breakpoints.
    c : numpy.ndarray, shape (m, n - 1)
        Coefficients of ``s**(m-1) … s**0`` per interval (``m = 4`` for a cubic), highest first.
    extrapolate : bool
        Outside ``[x[0], x[-1]]``: continue the end pieces (True) or return NaN (False).
    """

    def __init__(self, x, c, extrapolate=True):
        self.x = x
        self.c = c
        self.extrapolate = bool(extrapolate)

    def __call__(self, xi) -> np.ndarray:
        """Values at ``xi`` (any shape)."""
        xi = np.asarray(xi, dtype=float)
        x = self.x
        i = np.clip(np.searchsorted(x, xi, side="right") - 1, 0, x.size - 2)
        s = xi - x[i]
        c = self.c
        # Sum from the constant term up, each power of s formed by repeated multiplication.
        result = c[-1][i]
        z = None
        for row in c[-2::-1]:
            z = s if z is None else z * s
            result = result + row[i] * z
        if not self.extrapolate:
            result = np.where((xi < x[0]) | (xi > x[-1]), np.nan, result)
        return result

    def derivative(self) -> "PiecewiseCubic":
        """The first derivative, a piecewise polynomial of one degree less."""
        m = self.c.shape[0]
        if m == 1:
            return PiecewiseCubic(self.x, np.zeros_like(self.c), self.extrapolate)
        factors = np.arange(m - 1, 0, -1, dtype=float)[:, None]
        return PiecewiseCubic(self.x, self.c[:-1] * factors, self.extrapolate)


def _hermite_coefficients(x, y, slopes) -> np.ndarray:
    """Power coefficients (4, n-1) of the cubic Hermite interpolant with the given end slopes."""
    h = np.diff(x)
    secant = np.diff(y) / h
    t = (slopes[:-1] + slopes[1:] - 2 * secant) / h
    return np.stack((t / h, (secant - slopes[:-1]) / h - t, slopes[:-1], y[:-1]))


def _edge_slope(h0, h1, m0, m1):
    """One-sided three-point slope at an end, kept shape-preserving (Moler 2004, §3.6)."""
    d = ((2 * h0 + h1) * m0 - h0 * m1) / (h0 + h1)
    if np.sign(d) != np.sign(m0):
        return 0.0
    if np.sign(m0) != np.sign(m1) and abs(d) > 3.0 * abs(m0):
        return 3.0 * m0
    return d


def pchip_slopes(x, y) -> np.ndarray:
    """The PCHIP slopes at the data points (Fritsch & Carlson 1980; Fritsch & Butland 1984).

    Examples
    --------
    >>> pchip_slopes([0.0, 1.0, 2.0], [0.0, 1.0, 0.0]).tolist()   # a peak: flat on top
    [2.0, 0.0, -2.0]
    """
    x, y = _nodes(x, y)
    h = np.diff(x)
    m = np.diff(y) / h
    if x.size == 2:
        return np.array([m[0], m[0]])
    sign = np.sign(m)
    flat = (sign[1:] != sign[:-1]) | (m[1:] == 0) | (m[:-1] == 0)
    w1 = 2 * h[1:] + h[:-1]
    w2 = h[1:] + 2 * h[:-1]
    # Where a secant is zero (or tiny) the mean is not used, or its reciprocal is a zero slope.
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        mean = (w1 / m[:-1] + w2 / m[1:]) / (w1 + w2)
    d = np.zeros_like(y)
    with np.errstate(divide="ignore", over="ignore"):
        d[1:-1] = np.where(flat, 0.0, 1.0 / np.where(flat, 1.0, mean))
    d[0] = _edge_slope(h[0], h[1], m[0], m[1])
    d[-1] = _edge_slope(h[-1], h[-2], m[-1], m[-2])
    return d


class Pchip(PiecewiseCubic):
    """The monotone piecewise-cubic Hermite interpolant of ``(x, y)``.

    Parameters
    ----------
    x, y : array_like, shape (n,)
        Strictly increasing x, finite y; n >= 2.
    extrapolate : bool
        Continue the end pieces beyond the data (default False: NaN outside).

    References
    ----------
    Fritsch & Carlson, SIAM J. Numer. Anal. 17, 238 (1980).
    """

    def __init__(self, x, y, extrapolate=False):
        x, y = _nodes(x, y)
        super().__init__(x, _hermite_coefficients(x, y, pchip_slopes(x, y)), extrapolate)


def _thomas(lower, diag, upper, rhs) -> np.ndarray:
    """Solve a diagonally dominant tridiagonal system (lower[0] and upper[-1] unused)."""
    n = diag.size
    c = np.empty(n)
    d = np.empty(n)
    c[0] = upper[0] / diag[0]
    d[0] = rhs[0] / diag[0]
    for i in range(1, n):
        denom = diag[i] - lower[i] * c[i - 1]
        c[i] = upper[i] / denom if i < n - 1 else 0.0
        d[i] = (rhs[i] - lower[i] * d[i - 1]) / denom
    out = np.empty(n)
    out[-1] = d[-1]
    for i in range(n - 2, -1, -1):
        out[i] = d[i] - c[i] * out[i + 1]
    return out


def spline_slopes(x, y) -> np.ndarray:
    """Slopes of the not-a-knot cubic spline through ``(x, y)`` (de Boor 1978, ch. IV).

    Examples
    --------
    >>> spline_slopes([0.0, 1.0, 2.0, 3.0], [0.0, 1.0, 4.0, 9.0]).tolist()   # y = x²
    [0.0, 2.0, 4.0, 6.0]
    """
    x, y = _nodes(x, y)
    n = x.size
    h = np.diff(x)
    m = np.diff(y) / h
    if n == 2:
        return np.array([m[0], m[0]])
    if n == 3:
        # Both conditions coincide: the parabola through the three points.
        a = (m[1] - m[0]) / (x[2] - x[0])
        return np.array([m[0] - a * h[0], m[0] + a * h[0], m[1] + a * h[1]])
    # Rows i = 1 … n-2: h_i s_{i-1} + 2(h_{i-1} + h_i) s_i + h_{i-1} s_{i+1} = 3(h_i m_{i-1} + h_{i-1} m_i).
    lower = h[1:].copy()
    diag = 2 * (h[:-1] + h[1:])
    upper = h[:-1].copy()
    rhs = 3 * (h[1:] * m[:-1] + h[:-1] * m[1:])
    # Not-a-knot at the start: h1 s0 + (h0 + h1) s1 = r0. Subtracting it from the first inner
    # row removes s0 and leaves (h0 + h1) s1 + h0 s2 = rhs1 − r0.
    span0 = x[2] - x[0]
    r0 = ((h[0] + 2 * span0) * h[1] * m[0] + h[0] ** 2 * m[1]) / span0
    diag[0] -= span0
    rhs[0] -= r0
    # The same at the end: h_{n-3} s_{n-1} + (x_{n-1} − x_{n-3}) s_{n-2} = r1 removes s_{n-1}
    # from the last inner row.
    span1 = x[-1] - x[-3]
    r1 = (h[-1] ** 2 * m[-2] + (2 * span1 + h[-1]) * h[-2] * m[-1]) / span1
    diag[-1] -= span1
    rhs[-1] -= r1
    inner = _thomas(lower, diag, upper, rhs)
    s = np.empty(n)
    s[1:-1] = inner
    s[0] = (r0 - span0 * s[1]) / h[1]
    s[-1] = (r1 - span1 * s[-2]) / h[-2]
    return s


class CubicSpline(PiecewiseCubic):
    """The not-a-knot cubic spline through ``(x, y)``, continued by its end pieces outside.

    Parameters
    ----------
    x, y : array_like, shape (n,)
        Strictly increasing x, finite y; n >= 2.

    References
    ----------
    de Boor, *A Practical Guide to Splines* (1978), ch. IV.
    """

    def __init__(self, x, y, extrapolate=True):
        x, y = _nodes(x, y)
        super().__init__(x, _hermite_coefficients(x, y, spline_slopes(x, y)), extrapolate)

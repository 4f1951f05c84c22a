"""The growth rate over a recent window of a run, robust to single bad points.

Thickness estimates from a live signal are noisy, and a run has outliers (a spark, a reflection
from a moving shutter), dropouts and steps. The rate is the slope of the Theil–Sen line through
the thickness estimates of the last ``window_s`` seconds: the median of the slopes between every
pair of points, with the median intercept. Up to 29 % of the points can be wrong before it is
moved (its breakdown point), and it needs no noise model. The line evaluated at "now" is also the
smoothed thickness, with no lag at a steady rate.

References
----------
H. Theil, "A rank-invariant method of linear and polynomial regression analysis", Indagationes
Mathematicae 12, 85–91 (1950); P. K. Sen, "Estimates of the regression coefficient based on
Kendall's tau", J. Am. Stat. Assoc. 63, 1379–1389 (1968).
"""

from __future__ import annotations

import functools
import math
from collections import deque
from dataclasses import dataclass

import numpy as np

__all__ = ["MAX_POINTS", "MIN_POINTS", "theil_sen", "RateEstimate", "RateWindow"]

#: Largest number of points one rate estimate uses (evenly thinned beyond it): 64 points are
#: 2016 pairs, a few tens of microseconds.
MAX_POINTS = 64
#: Fewest points a rate is estimated from.
MIN_POINTS = 4
#: Scale factor from the median absolute deviation to a standard deviation for normal noise.
MAD_TO_SIGMA = 1.4826


@functools.lru_cache(maxsize=MAX_POINTS + 1)
def _pairs(n: int):
    """Index pairs i < j of n points (cached: a run asks for the same few sizes again and again)."""
    return np.triu_indices(n, k=1)


def theil_sen(t, y) -> tuple:
    """Slope and intercept of the Theil–Sen line through points ``(t, y)``.

    The slope is the median of ``(y_j − y_i)/(t_j − t_i)`` over all pairs with ``t_j > t_i``; the
    intercept the median of ``y − slope·t``.

    Examples
    --------
    A straight line with one wild point keeps its slope:

    >>> t = np.arange(10.0)
    >>> y = 0.5 * t + 2.0
    >>> y[6] = 40.0
    >>> [round(v, 12) for v in theil_sen(t, y)]
    [0.5, 2.0]
    """
    t = np.asarray(t, dtype=float)
    y = np.asarray(y, dtype=float)
    i, j = _pairs(t.size)
    dt = t[j] - t[i]
    ok = dt != 0
    if not np.any(ok):
        return math.nan, math.nan
    slope = float(np.median((y[j][ok] - y[i][ok]) / dt[ok]))
    return slope, float(np.median(y - slope * t))


@dataclass(frozen=True)
class RateEstimate:
    """The growth over the recent window.

    Attributes
    ----------
    rate_nm_per_s : float
    thickness_nm : float
        The line at the time asked for (the smoothed thickness "now").
    points : int
        Points the line was fitted to.
    spread_nm : float
        Robust scatter of the points about the line (1.4826 × median absolute deviation).
    span_s : float
        Time the points cover.
    """

    rate_nm_per_s: float
    thickness_nm: float
    points: int
    spread_nm: float
    span_s: float


class RateWindow:
    """Thickness estimates of the last ``window_s`` seconds, and their Theil–Sen line.

    Examples
    --------
    >>> window = RateWindow(window_s=5.0)
    >>> for k in range(20):
    ...     window.add(0.5 * k, 0.1 * 0.5 * k)
    >>> est = window.estimate(10.0)
    >>> round(est.rate_nm_per_s, 9), round(est.thickness_nm, 9), est.points
    (0.1, 1.0, 11)
    """

    def __init__(self, window_s: float, max_points: int = MAX_POINTS, min_keep: int = 0):
        self.window_s = float(window_s)
        self.max_points = int(max_points)
        # Points older than the window are kept while there are no more than this many: after a
        # pause in the points (a turning point's flat zone) the line still reaches back across it.
        self.min_keep = int(min_keep)
        self._points = deque()
        self._fit = None           # the line through the points as they are (until one is added)

    def __len__(self) -> int:
        return len(self._points)

    def add(self, t_s: float, thickness_nm: float) -> None:
        self._fit = None
        self._points.append((float(t_s), float(thickness_nm)))
        newest = self._points[-1][0]
        while len(self._points) > self.min_keep and self._points[0][0] < newest - self.window_s:
            self._points.popleft()

    def clear(self) -> None:
        self._points.clear()
        self._fit = None

    @property
    def span_s(self) -> float:
        """Time between the oldest and the newest point (0 with fewer than two)."""
        return self._points[-1][0] - self._points[0][0] if len(self._points) >= 2 else 0.0

    def estimate(self, t_now: float) -> RateEstimate | None:
        """The line through the window's points, evaluated at ``t_now`` (None with fewer than
        :data:`MIN_POINTS` points or no time between them)."""
        n = len(self._points)
        if n < MIN_POINTS:
            return None
        if self._fit is None:
            data = np.asarray(self._points, dtype=float)
            if n > self.max_points:
                data = data[np.linspace(0, n - 1, self.max_points).round().astype(int)]
            # Times relative to the newest point keep the intercept well conditioned.
            origin = float(data[-1, 0])
            t = data[:, 0] - origin
            slope, intercept = theil_sen(t, data[:, 1])
            if not math.isfinite(slope):
                return None
            spread = MAD_TO_SIGMA * float(np.median(np.abs(data[:, 1] - (intercept + slope * t))))
            self._fit = (origin, slope, intercept, int(data.shape[0]), spread, float(t[-1] - t[0]))
        origin, slope, intercept, points, spread, span = self._fit
        return RateEstimate(slope, intercept + slope * (float(t_now) - origin), points, spread, span)

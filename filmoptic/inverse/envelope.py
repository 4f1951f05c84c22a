"""Envelope method: thickness and index of a transparent film from its transmittance fringes.

A uniform, weakly absorbing film on a thick transparent substrate shows interference fringes in
transmittance. The curves through the maxima, T_M(λ), and through the minima, T_m(λ), give the
film's refractive index at every extremum, and the extrema's order numbers give its thickness
(Swanepoel 1983). In filmoptic the method serves as a quick first estimate that the least-squares
fit then refines (:mod:`filmoptic.inverse.fit`), and on its own as a cross-check.

The method assumes normal incidence, a film index above the substrate's (the usual case of an
oxide, nitride or semiconductor on glass) and at least four clear extrema.

References
----------
R. Swanepoel, "Determination of the thickness and optical constants of amorphous silicon",
J. Phys. E: Sci. Instrum. 16, 1214–1222 (1983).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import FilmopticError

__all__ = ["EnvelopeResult", "swanepoel", "find_extrema", "peak_indices", "substrate_index_from_transmittance"]

# Fewest extrema (after dropping the two ends, where one envelope would be extrapolated).
MIN_EXTREMA = 3


@dataclass(frozen=True)
class EnvelopeResult:
    """Outcome of the envelope method.

    Attributes
    ----------
    thickness_nm : float
        Film thickness, the mean of the per-extremum values m·λ/(2n).
    thickness_stderr_nm : float
        Standard error of that mean (scatter of the per-extremum values / √count).
    wavelength_nm : numpy.ndarray
        Wavelengths of the extrema used, increasing.
    n : numpy.ndarray
        Refractive index at those wavelengths, from the order numbers and the final thickness.
    order : numpy.ndarray
        Interference order m at each extremum (2·n·d = m·λ; whole for maxima, half for minima).
    T_max, T_min : numpy.ndarray
        The two envelopes at the extrema.
    cauchy_AB : tuple of float
        Least-squares Cauchy fit n = A + B/λ² (λ in µm) to ``n``: a start for Cauchy models.
    """

    thickness_nm: float
    thickness_stderr_nm: float
    wavelength_nm: np.ndarray
    n: np.ndarray
    order: np.ndarray
    T_max: np.ndarray
    T_min: np.ndarray
    cauchy_AB: tuple


def substrate_index_from_transmittance(Ts):
    """Index of a transparent slab from its own transmittance (both faces, incoherent).

    s = 1/Ts + √(1/Ts² − 1) (Swanepoel 1983).

    Examples
    --------
    >>> round(float(substrate_index_from_transmittance(2 * 1.5 / (1.5**2 + 1))), 6)
    1.5
    """
    Ts = np.asarray(Ts, dtype=float)
    return 1.0 / Ts + np.sqrt(np.maximum(1.0 / Ts**2 - 1.0, 0.0))


def _noise_sigma(values: np.ndarray) -> float:
    """Robust noise level from second differences (white noise: var(Δ²) = 6σ²)."""
    if values.size < 5:
        return 0.0
    d2 = np.diff(values, 2)
    mad = np.median(np.abs(d2 - np.median(d2)))
    return float(1.4826 * mad / np.sqrt(6.0))


def _refine(wl: np.ndarray, values: np.ndarray, index: int, half_width: int) -> tuple[float, float]:
    """Vertex of a parabola fitted around a sampled extremum: averages noise, beats the sampling."""
    lo, hi = max(index - half_width, 0), min(index + half_width + 1, wl.size)
    if hi - lo < 3:
        return float(wl[index]), float(values[index])
    x0 = wl[index]
    a, b, c = np.polyfit(wl[lo:hi] - x0, values[lo:hi], 2)
    if a == 0 or not np.isfinite(a):
        return float(wl[index]), float(values[index])
    x = -b / (2 * a)
    if abs(x) > (wl[hi - 1] - wl[lo]) / 2:  # vertex outside the window: keep the sample
        return float(wl[index]), float(values[index])
    return float(x0 + x), float(c - b * b / (4 * a))


def _local_maxima(x: np.ndarray) -> np.ndarray:
    """Indices of samples higher than both neighbours; a flat top counts once, at its middle
    (rounded down), and neither end of the array is a maximum."""
    if x.size < 3:
        return np.array([], dtype=int)
    # Collapse runs of equal values, then look for runs higher than the runs on both sides.
    starts = np.flatnonzero(np.r_[True, x[1:] != x[:-1]])
    ends = np.r_[starts[1:] - 1, x.size - 1]
    level = x[starts]
    top = np.flatnonzero((level[1:-1] > level[:-2]) & (level[1:-1] > level[2:])) + 1
    return (starts[top] + ends[top]) // 2


def peak_indices(values, min_prominence: float) -> tuple[np.ndarray, np.ndarray]:
    """Local maxima of a sampled curve that stand out by at least ``min_prominence``.

    A peak's prominence is its height above the higher of the two lowest points that lie between
    it and the nearest higher sample on either side (or the end of the data, if none is higher):
    how far one must descend from the peak before climbing to anything higher. This is the
    topographic prominence of map-making, as ``scipy.signal.peak_prominences`` defines it for
    sampled data, and the selection gives the same peaks as
    ``scipy.signal.find_peaks(values, prominence=min_prominence)`` (the test suite checks this).

    Parameters
    ----------
    values : array_like, shape (n,)
        Finite samples.
    min_prominence : float
        Smallest prominence kept.

    Returns
    -------
    indices : numpy.ndarray of int
        Peak positions, increasing (the middle of a flat top, rounded down).
    prominences : numpy.ndarray
        Their prominences.

    Examples
    --------
    >>> idx, prom = peak_indices([0.0, 2.0, 1.0, 3.0, 0.5, 0.7, 0.0], 0.5)
    >>> idx.tolist(), prom.tolist()
    ([1, 3], [1.0, 3.0])
    """
    x = np.asarray(values, dtype=float)
    peaks = _local_maxima(x)
    prominence = np.empty(peaks.size)
    for j, p in enumerate(peaks):
        # The base on each side: the lowest sample before the first higher one (or the end).
        higher = np.flatnonzero(x[:p] > x[p])
        left = x[(higher[-1] + 1 if higher.size else 0):p + 1].min()
        higher = np.flatnonzero(x[p:] > x[p])
        right = x[p:(p + higher[0] if higher.size else x.size)].min()
        prominence[j] = x[p] - max(left, right)
    keep = prominence >= min_prominence
    return peaks[keep], prominence[keep]


def find_extrema(wavelength_nm, values, *, prominence: float | None = None):
    """Interference maxima and minima of a sampled fringe pattern.

    Extrema must stand out from the noise (a prominence of six noise standard deviations, the
    noise being estimated from second differences, unless ``prominence`` is given); maxima and
    minima are made to alternate; each is located by a parabola through its neighbourhood.

    Returns
    -------
    wavelength_nm, values : numpy.ndarray
        Refined positions and heights, increasing in wavelength.
    is_max : numpy.ndarray of bool
    """
    wl = np.asarray(wavelength_nm, dtype=float)
    T = np.asarray(values, dtype=float)
    if prominence is None:
        prominence = max(6.0 * _noise_sigma(T), 1e-4)
    peaks, _ = peak_indices(T, prominence)
    troughs, _ = peak_indices(-T, prominence)
    idx = np.concatenate([peaks, troughs])
    kind = np.concatenate([np.ones(peaks.size, bool), np.zeros(troughs.size, bool)])
    order = np.argsort(idx)
    idx, kind = idx[order], kind[order]
    # Make maxima and minima alternate: of two neighbours of one kind keep the more extreme.
    keep_idx, keep_kind = [], []
    for i, k in zip(idx, kind):
        if keep_kind and keep_kind[-1] == k:
            if (T[i] > T[keep_idx[-1]]) == k:
                keep_idx[-1] = i
            continue
        keep_idx.append(i)
        keep_kind.append(k)
    idx, kind = np.array(keep_idx, int), np.array(keep_kind, bool)
    if idx.size == 0:
        return np.array([]), np.array([]), np.array([], bool)
    # Half-window: a quarter of the spacing to the nearest neighbouring extremum, in samples.
    spacing = np.diff(idx) if idx.size > 1 else np.array([T.size])
    near = np.minimum(np.r_[spacing, spacing[-1]], np.r_[spacing[0], spacing])
    xs, ys = zip(*(_refine(wl, T, int(i), max(int(s) // 4, 1)) for i, s in zip(idx, near)))
    return np.array(xs), np.array(ys), kind


def _envelope_at(x_known, y_known, x):
    from ..numerics.interpolate import CubicSpline

    if x_known.size >= 4:
        return CubicSpline(x_known, y_known)(x)
    return np.interp(x, x_known, y_known)


def swanepoel(wavelength_nm, transmittance, substrate_n, *, prominence: float | None = None) -> EnvelopeResult:
    """Thickness and index of a transparent film on a thick transparent substrate.

    Parameters
    ----------
    wavelength_nm : array_like
        Increasing wavelengths, nm.
    transmittance : array_like
        Measured transmittance at normal incidence (fraction), substrate back side included.
    substrate_n : float or array_like
        Substrate refractive index (real), a number or one value per wavelength.
    prominence : float, optional
        How far an extremum must stand out (fraction); by default six noise deviations.

    Returns
    -------
    EnvelopeResult

    Raises
    ------
    FilmopticError
        Fewer than :data:`MIN_EXTREMA` usable extrema, or envelopes that no film with an index
        above the substrate's can produce.

    Notes
    -----
    Steps, following Swanepoel (1983): envelopes through the maxima and minima (cubic splines);
    at each extremum n₁ = √(N + √(N² − s²)) with N = 2s(T_M − T_m)/(T_M·T_m) + (s² + 1)/2;
    a first thickness from neighbouring extrema, d₁ = λ₁λ₂ / (4(n₂λ₁ − n₁λ₂)) for
    extrema half an order apart (the paper writes it for two neighbouring maxima, a whole order
    apart, with a 2 in place of the 4); the order numbers
    m from 2n₁d₁ = mλ rounded to whole (maxima) or half (minima) numbers — of the neighbouring
    sets of orders the one with the least scatter of m·λ/(2n₁) is kept, which guards against a
    noisy d₁ —; finally d = mean(m·λ/(2n₁)) and n = m·λ/(2d).

    References
    ----------
    R. Swanepoel, J. Phys. E: Sci. Instrum. 16, 1214 (1983).

    Examples
    --------
    >>> import numpy as np
    >>> wl = np.linspace(400, 1000, 601)
    >>> n, s, d = 2.3, 1.5, 800.0                    # transparent film: Swanepoel's T = A/(B - C cos(phi) + D)
    >>> phi = 4 * np.pi * n * d / wl
    >>> A, B = 16 * n**2 * s, (n + 1)**3 * (n + s**2)
    >>> C, D = 2 * (n**2 - 1) * (n**2 - s**2), (n - 1)**3 * (n - s**2)
    >>> T = A / (B - C * np.cos(phi) + D)
    >>> round(swanepoel(wl, T, s).thickness_nm)
    800
    """
    wl = np.asarray(wavelength_nm, dtype=float)
    T = np.asarray(transmittance, dtype=float)
    if wl.shape != T.shape or wl.ndim != 1:
        raise FilmopticError("envelope method: wavelengths and transmittance must be 1-D and the same length")
    s_all = np.broadcast_to(np.asarray(substrate_n, dtype=float), wl.shape)

    x, y, is_max = find_extrema(wl, T, prominence=prominence)
    if x.size < 2 or is_max.all() or not is_max.any():
        raise FilmopticError(
            f"envelope method: found {x.size} clear interference extrema; it needs at least "
            f"{MIN_EXTREMA + 2} (a thicker film, a wider wavelength range or less noise)"
        )
    xM, yM, xm, ym = x[is_max], y[is_max], x[~is_max], y[~is_max]
    # Keep extrema where the other envelope is interpolated, not extrapolated.
    inside = np.where(is_max, (x >= xm.min()) & (x <= xm.max()), (x >= xM.min()) & (x <= xM.max()))
    x, y, is_max = x[inside], y[inside], is_max[inside]
    if x.size < MIN_EXTREMA:
        raise FilmopticError(
            f"envelope method: only {x.size} interference extrema lie between both envelopes; it "
            f"needs at least {MIN_EXTREMA} (a thicker film or a wider wavelength range)"
        )
    T_max = np.where(is_max, y, _envelope_at(xM, yM, x))
    T_min = np.where(is_max, _envelope_at(xm, ym, x), y)
    s = np.interp(x, wl, s_all)

    # With n > s the maxima touch the bare substrate's transmittance 2s/(s² + 1) (the film is
    # then an absentee half wave); maxima clearly above it mean a film of lower index.
    T_bare = 2 * s / (s**2 + 1)
    if np.median(T_max - T_bare) > max(4 * _noise_sigma(T), 0.002):
        raise FilmopticError(
            "envelope method: the maxima lie above the bare substrate's transmittance, so the film's "
            "index is below the substrate's; the method needs a film of higher index"
        )
    N = 2 * s * (T_max - T_min) / (T_max * T_min) + (s**2 + 1) / 2
    if np.any(N**2 <= s**2) or np.any(T_max <= T_min):
        raise FilmopticError(
            "envelope method: the fringes do not fit a transparent film with an index above the "
            "substrate's"
        )
    n1 = np.sqrt(N + np.sqrt(N**2 - s**2))

    # First thickness from neighbours half an order apart (x increasing: order drops by 1/2).
    lam1, lam2, na, nb = x[1:], x[:-1], n1[1:], n1[:-1]
    denom = 4 * (nb * lam1 - na * lam2)
    pairs = lam1 * lam2 / np.where(denom > 0, denom, np.nan)
    d1 = float(np.nanmedian(pairs)) if np.any(np.isfinite(pairs)) else np.nan
    if not np.isfinite(d1) or d1 <= 0:
        raise FilmopticError("envelope method: no consistent first thickness from the extrema")

    # Orders: m_j = m_0 - j/2; m_0 whole when the first extremum is a maximum (n > s).
    j = np.arange(x.size)
    m0_raw = float(np.median(2 * n1 * d1 / x + j / 2))
    offset = 0.0 if is_max[0] else 0.5
    m0_best = round(m0_raw - offset) + offset
    best = None
    for m0 in m0_best + np.arange(-2, 3):
        m = m0 - j / 2
        if m[-1] <= 0:
            continue
        d_each = m * x / (2 * n1)
        spread = float(np.std(d_each) / np.mean(d_each))
        if best is None or spread < best[0]:
            best = (spread, m, d_each)
    _, m, d_each = best
    d = float(np.mean(d_each))
    d_se = float(np.std(d_each, ddof=1) / np.sqrt(d_each.size))
    n2 = m * x / (2 * d)
    design = np.column_stack([np.ones_like(x), 1.0 / (x / 1000.0) ** 2])
    (A, B), *_ = np.linalg.lstsq(design, n2, rcond=None)
    return EnvelopeResult(
        thickness_nm=d, thickness_stderr_nm=d_se, wavelength_nm=x, n=n2, order=m,
        T_max=T_max, T_min=T_min, cauchy_AB=(float(A), float(B)),
    )

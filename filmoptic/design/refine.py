"""Bounded local refinement of many designs at once (projected Levenberg–Marquardt).

The merit of a design is a sum of squared residuals (:mod:`filmoptic.design.goals`), so the
local refinement is a least-squares problem in the free thicknesses. This module runs the
Levenberg–Marquardt method on a whole batch of starting designs *together*: each iteration
makes **one** batched call of the residual function holding, for every design still moving, its
trial point and its K forward-difference neighbours — so the trial point is judged and, if it
is accepted, its Jacobian is already known. Steps are projected onto the feasible set (every
thickness within its bounds and, optionally, a weighted total at most a budget) and thicknesses
held at an active bound leave the step.

The damping follows Nielsen's update (Madsen, Nielsen & Tingleff 2004): after a successful step
μ ← μ·max(1/3, 1 − (2ρ − 1)³) with ρ the ratio of actual to predicted decrease; after a failed
one μ ← μ·ν, ν ← 2ν. The damping term is μ·I (Levenberg's form): every unknown is a thickness
in nm, and Marquardt's scaling by the diagonal of JᵀJ would send the insensitive thicknesses of a
goal with few residuals (a band mean) on huge steps.

References
----------
K. Levenberg, "A method for the solution of certain non-linear problems in least squares",
Q. Appl. Math. 2, 164 (1944). D. W. Marquardt, "An algorithm for least-squares estimation of
nonlinear parameters", J. SIAM 11, 431 (1963). K. Madsen, H. B. Nielsen and O. Tingleff,
*Methods for Non-Linear Least Squares Problems*, 2nd ed., IMM, DTU (2004), §3.2 (from memory).

Examples
--------
>>> import numpy as np
>>> fun = lambda X: np.stack([X[:, 0] - 3.0, 10 * (X[:, 1] - X[:, 0] ** 2 / 9)], axis=1)
>>> out = refine(fun, np.array([[0.5, 0.5], [8.0, 1.0]]), np.zeros(2), np.full(2, 10.0))
>>> np.round(out.x, 6).tolist()
[[3.0, 1.0], [3.0, 1.0]]
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["Refinement", "refine", "project", "DIFFERENCE_STEP_NM"]

#: Forward-difference step for the Jacobian, nm (a thousandth of a nanometre: far inside the
#: scale on which spectra change, far above rounding).
DIFFERENCE_STEP_NM = 1e-3


@dataclass(frozen=True)
class Refinement:
    """Result of :func:`refine` for a batch of starts.

    Attributes
    ----------
    x : numpy.ndarray
        ``(S, K)`` refined thicknesses.
    sum_of_squares : numpy.ndarray
        ``(S,)`` the final sum of squared residuals.
    iterations : int
        Batched iterations made.
    converged : numpy.ndarray
        ``(S,)`` whether each start met a stopping rule before the iteration limit.
    """

    x: np.ndarray
    sum_of_squares: np.ndarray
    iterations: int
    converged: np.ndarray


def project(X, lower, upper, counts=None, budget=math.inf) -> np.ndarray:
    """The nearest points (Euclidean) within ``lower ≤ x ≤ upper`` and ``Σ counts·x ≤ budget``.

    The second condition is enforced by bisection on its Lagrange multiplier λ
    (x = clip(y − λ·counts, lower, upper)), vectorised over the rows.

    Examples
    --------
    >>> project(np.array([[5.0, 5.0]]), np.zeros(2), np.full(2, 10.0), budget=6.0).tolist()
    [[3.0, 3.0]]
    """
    X = np.clip(np.asarray(X, dtype=float), lower, upper)
    if not math.isfinite(budget):
        return X
    counts = np.ones(X.shape[-1]) if counts is None else np.asarray(counts, dtype=float)
    over = X @ counts > budget
    if not np.any(over):
        return X
    Y = X[over]
    lo = np.zeros(Y.shape[0])
    hi = np.max((Y - lower) / counts, axis=1) + 1e-12
    for _ in range(64):
        mid = 0.5 * (lo + hi)
        total = np.clip(Y - mid[:, None] * counts, lower, upper) @ counts
        too_much = total > budget
        lo = np.where(too_much, mid, lo)
        hi = np.where(too_much, hi, mid)
    X = X.copy()
    X[over] = np.clip(Y - hi[:, None] * counts, lower, upper)
    return X


def _with_neighbours(X, upper, h):
    """Rows: each point, then its K forward-difference neighbours (backward at the upper bound)."""
    S, K = X.shape
    steps = np.where(X + h <= upper, h, -h)                     # (S, K)
    block = np.repeat(X[:, None, :], K + 1, axis=1)             # (S, K+1, K)
    idx = np.arange(K)
    block[:, idx + 1, idx] += steps
    return block.reshape(S * (K + 1), K), steps


def _residuals_and_jacobian(fun, X, upper, h):
    S, K = X.shape
    points, steps = _with_neighbours(X, upper, h)
    r_all = np.asarray(fun(points), dtype=float)
    r_all = r_all.reshape(S, K + 1, -1)
    r = r_all[:, 0, :]
    J = (r_all[:, 1:, :] - r[:, None, :]) / steps[:, :, None]   # (S, K, M)
    return r, np.swapaxes(J, 1, 2)                              # (S, M), (S, M, K)


def refine(fun, X0, lower, upper, *, counts=None, budget=math.inf, max_iterations: int = 80,
           ftol: float = 1e-9, xtol_nm: float = 1e-4, h_nm: float = DIFFERENCE_STEP_NM,
           watch=None) -> Refinement:
    """Minimise ``Σ fun(x)²`` from every row of ``X0`` within bounds, all rows together.

    Parameters
    ----------
    fun : callable
        ``fun(X)`` with ``X`` of shape ``(B, K)`` returns residuals ``(B, M)``; it is called once
        per iteration with all the points of that iteration.
    X0 : array_like
        ``(S, K)`` starting points.
    lower, upper : array_like
        ``(K,)`` bounds.
    counts, budget
        Optional linear bound ``Σ counts·x ≤ budget`` (a total thickness).
    max_iterations : int
    ftol : float
        A start stops when an accepted step lowers the sum of squares by less than this share.
    xtol_nm : float
        … or when the projected step is shorter than this in every thickness.
    h_nm : float
        Forward-difference step of the Jacobian.
    watch : callable, optional
        ``watch(X, F)`` after every iteration with the current points and sums of squares (for
        progress, and to keep the best so far if the work is interrupted).

    Returns
    -------
    Refinement
    """
    lower = np.asarray(lower, dtype=float)
    upper = np.asarray(upper, dtype=float)
    X = project(np.atleast_2d(np.asarray(X0, dtype=float)), lower, upper, counts, budget)
    S, K = X.shape
    if K == 0:
        r = np.asarray(fun(X), dtype=float).reshape(S, -1)
        return Refinement(X, np.sum(r * r, axis=1), 0, np.ones(S, bool))
    r, J = _residuals_and_jacobian(fun, X, upper, h_nm)
    F = np.sum(r * r, axis=1)
    # Levenberg's damping μ·I (every unknown is a thickness in nm, so one scale fits all),
    # started at 1e-3 of the largest diagonal element of JᵀJ (Madsen, Nielsen & Tingleff, §3.2).
    mu = 1e-3 * np.maximum(np.max(np.einsum("smk,smk->sk", J, J), axis=1), 1e-300)
    nu = np.full(S, 2.0)
    done = F <= 1e-30
    iterations = 0
    eye = np.eye(K)
    while not np.all(done) and iterations < max_iterations:
        iterations += 1
        a = np.flatnonzero(~done)
        Ja, ra, Xa = J[a], r[a], X[a]
        g = np.einsum("smk,sm->sk", Ja, ra)
        H = np.einsum("smk,sml->skl", Ja, Ja)
        # A thickness held at a bound that the gradient pushes against stays out of the step.
        held = ((Xa <= lower + 1e-12) & (g > 0)) | ((Xa >= upper - 1e-12) & (g < 0))
        A = H + mu[a, None, None] * eye
        A = np.where((held[:, :, None] | held[:, None, :]), 0.0, A) + held[:, :, None] * eye
        rhs = np.where(held, 0.0, -g)
        try:
            delta = np.linalg.solve(A, rhs[..., None])[..., 0]
        except np.linalg.LinAlgError:
            delta = np.array([np.linalg.lstsq(Ai, bi, rcond=None)[0] for Ai, bi in zip(A, rhs)])
        trial = project(Xa + delta, lower, upper, counts, budget)
        step = trial - Xa
        rt, Jt = _residuals_and_jacobian(fun, trial, upper, h_nm)
        Ft = np.sum(rt * rt, axis=1)
        predicted = -(2.0 * np.einsum("sk,sk->s", g, step) + np.einsum("sk,skl,sl->s", step, H, step))
        better = Ft < F[a]
        with np.errstate(divide="ignore", invalid="ignore"):
            rho = np.where(predicted > 0, (F[a] - Ft) / predicted, 0.0)
        small_gain = better & ((F[a] - Ft) <= ftol * F[a])
        small_step = np.max(np.abs(step), axis=1) < xtol_nm
        acc = a[better]
        X[acc], r[acc], J[acc] = trial[better], rt[better], Jt[better]
        F_old = F[a]
        F[acc] = Ft[better]
        mu[acc] *= np.maximum(1.0 / 3.0, 1.0 - (2.0 * rho[better] - 1.0) ** 3)
        nu[acc] = 2.0
        rej = a[~better]
        mu[rej] *= nu[rej]
        nu[rej] *= 2.0
        done[a] = small_gain | small_step | (F[a] <= 1e-30) | (mu[a] > 1e14) | (~np.isfinite(F_old))
        if watch is not None:
            watch(X, F)
    return Refinement(X, F, iterations, done)

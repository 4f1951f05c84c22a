"""Least-squares fit of a stack's free values (thicknesses, model coefficients, mix fractions) to
measured transmittance and reflectance spectra.

The model is a stack with unknowns (``?`` or ``LOW..HIGH``): film thicknesses, coefficients of
``cauchy(…)``, ``sellmeier(…)``, ``drude(…)``, ``lorentz(…)`` and ``n=…`` models, and the
volume fraction of a ``mix(…)``. The fit runs in three steps:

1. **Global search.** A film's spectrum repeats with its thickness (a fringe every λ/(2n) of
   thickness), so a local optimiser started anywhere finds the *nearest* minimum, not the best.
   The free thicknesses are therefore sampled on a coarse grid fine enough to resolve the fringes
   (step λ_min / (8·|N|_max), four samples per fringe period) in one vectorised
   :func:`filmoptic.engine.compute` call per set of coefficient values; the coefficients
   themselves get a small grid (at most :data:`MAX_COEFFICIENT_SETS` sets); when the thickness
   grid would exceed ``max_grid``, a Halton sample of the same box (:mod:`filmoptic.numerics.sampling`)
   takes its place. When the film is transparent on a thick transparent substrate and T is
   measured at normal incidence, the envelope method (:func:`filmoptic.inverse.envelope.swanepoel`) adds its estimate as a start.
2. **Local refinement.** The best few distinct grid points (and the envelope start) are refined
   with bounded least squares (``scipy.optimize.least_squares``, trust-region reflective); the
   lowest χ² wins.
3. **Uncertainties.** The covariance is (JᵀJ)⁻¹ of the σ-weighted Jacobian at the optimum
   (Press et al., *Numerical Recipes*, ch. 15, from memory), computed by SVD with the columns
   scaled to the parameters' ranges; when σ is estimated from the residuals it is scaled by the
   residual variance, and the reduced χ² is then 1 by construction.

Uncertainty σ of each point: the file's third column when every file has one; else ``sigma``
(one absolute value, a fraction) for the points without; else estimated from the residuals.

Default ranges for unbounded ``?`` values (write ``LOW..HIGH`` to override):

=========================  ====================================================================
thickness                  metals 0–150 nm (beyond, nothing is transmitted); other films
                           0–2000 nm
``n=?`` / ``n=…+?j``       n 1–5, k 0–10
``cauchy(A,B,C,k)``        A 1.2–4, B 0–0.3 µm², C 0–0.05 µm⁴, k 0–1
``sellmeier(B,C,…)``       B 0–10, C 0–1 µm²
``drude(ε∞,Ep,Γ)``         ε∞ 1–20, Ep 0.5–20 eV, Γ 0.001–5 eV
``lorentz(ε∞,f,E0,Γ,…)``   ε∞ 1–20, f 0–50, E0 0.1–20 eV, Γ 0.001–10 eV
``mix(…,?)`` fraction      0–1
=========================  ====================================================================

Warnings in the result (:attr:`FitResult.warnings`):

- two parameters correlated with |ρ| > :data:`CORRELATION_LIMIT` (the data hardly separate them);
- a parameter *not identifiable*: a singular value of the scaled Jacobian below
  :data:`SINGULAR_LIMIT` of the largest (JᵀJ singular; its standard error is reported as
  infinite) — the spectrum does not depend on it, or only in a fixed combination with others;
- a parameter that stopped at a bound of its range (its standard error ignores the bound; the
  best value may lie outside the range or the model may be wrong);
- a reduced χ² far from 1 when σ was given (the model or σ is off);
- another minimum that fits almost as well (Δχ² < 4) with clearly different values (the fringe
  order is ambiguous: widen the wavelength range or bound the thickness);
- residuals with a pattern rather than noise (lag-1 autocorrelation above
  :data:`AUTOCORRELATION_LIMIT`): the model misses a feature. This is the check that still works
  when σ is estimated from the residuals and the reduced χ² is 1 by construction.

References
----------
W. H. Press, S. A. Teukolsky, W. T. Vetterling & B. P. Flannery, *Numerical Recipes*, 3rd ed.,
Cambridge University Press (2007), ch. 15 "Modeling of data" (from memory).
R. Swanepoel, J. Phys. E: Sci. Instrum. 16, 1214 (1983).
M. A. Branch, T. F. Coleman & Y. Li, SIAM J. Sci. Comput. 21, 1 (1999) (the trust-region
reflective method behind ``scipy.optimize.least_squares``).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, replace

import numpy as np

from ..errors import FilmopticError
from .measured import MeasuredSpectrum
from ..params import is_free

__all__ = [
    "FitParameter",
    "FittedSpectrum",
    "FitResult",
    "Doubt",
    "FitVerdict",
    "fit_verdict",
    "fit_spectra",
    "parameter_bounds",
    "format_value",
    "format_report",
    "CORRELATION_LIMIT",
    "SINGULAR_LIMIT",
    "AUTOCORRELATION_LIMIT",
    "MAX_COEFFICIENT_SETS",
]

#: |ρ| above which two parameters are reported as strongly correlated.
CORRELATION_LIMIT = 0.95
#: Relative singular value of the range-scaled Jacobian below which a direction is unidentifiable.
SINGULAR_LIMIT = 1e-7
#: Most sets of coefficient values tried in the global search (each is one vectorised pass).
MAX_COEFFICIENT_SETS = 27
#: Lag-1 autocorrelation of the residuals above which they are reported as structured.
AUTOCORRELATION_LIMIT = 0.5
#: Thickness sets per pass of the global search: bounds memory (a few tens of MB for a few hundred
#: wavelengths) and paces the progress report.
_GRID_CHUNK = 8192
#: Δχ² below which a different minimum is reported as fitting almost as well (two standard deviations).
ALTERNATIVE_DELTA_CHI2 = 4.0

_THICKNESS_RANGE_NM = {"metal": (0.0, 150.0)}
_THICKNESS_RANGE_DEFAULT_NM = (0.0, 2000.0)
# (pattern on the coefficient name, default range, unit)
_COEFFICIENTS = [
    (r"^index n$", (1.0, 5.0), ""),
    (r"^index k$", (0.0, 10.0), ""),
    (r"^cauchy A$", (1.2, 4.0), ""),
    (r"^cauchy B$", (0.0, 0.3), "µm²"),
    (r"^cauchy C$", (0.0, 0.05), "µm⁴"),
    (r"^cauchy k$", (0.0, 1.0), ""),
    (r"^sellmeier B\d$", (0.0, 10.0), ""),
    (r"^sellmeier C\d$", (0.0, 1.0), "µm²"),
    (r"^(drude|lorentz) eps_inf$", (1.0, 20.0), ""),
    (r"^drude plasma_eV$", (0.5, 20.0), "eV"),
    (r"^drude damping_eV$", (0.001, 5.0), "eV"),
    (r"^lorentz strength\d+$", (0.0, 50.0), ""),
    (r"^lorentz centre\d+_eV$", (0.1, 20.0), "eV"),
    (r"^lorentz width\d+_eV$", (0.001, 10.0), "eV"),
    (r"fraction$", (0.0, 1.0), ""),
]


# ----------------------------------------------------------------------------------------------
# Results
# ----------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class FitParameter:
    """One fitted value: ``value ± stderr`` in ``unit`` (stderr is inf when not identifiable)."""

    name: str
    value: float
    stderr: float
    unit: str


@dataclass(frozen=True)
class FittedSpectrum:
    """One measured curve beside the fitted model's curve (fractions)."""

    quantity: str
    wavelength_nm: np.ndarray
    measured: np.ndarray
    model: np.ndarray
    sigma: np.ndarray | None
    path: str | None

    @property
    def residual(self) -> np.ndarray:
        return self.measured - self.model


@dataclass(frozen=True)
class Doubt:
    """Something the user should know before trusting a fit.

    Attributes
    ----------
    kind : str
        ``"half-space"``, ``"not identifiable"``, ``"correlated"``, ``"at bound"``, ``"misfit"``
        (reduced χ² far above 1), ``"sigma too large"``, ``"pattern"`` (structured residuals),
        ``"alternative"`` (another minimum fits almost as well) or ``"not converged"``.
    parameters : tuple of str
        The parameters concerned (empty when the doubt is about the fit as a whole).
    text : str
        One sentence for people (what :attr:`FitResult.warnings` lists).
    """

    kind: str
    parameters: tuple
    text: str


@dataclass(frozen=True)
class FitResult:
    """Outcome of :func:`fit_spectra`.

    Attributes
    ----------
    parameters : tuple of FitParameter
        Every free value of the model, in the stack's reading order.
    correlation : numpy.ndarray
        Correlation matrix of the parameters, shape ``(P, P)`` (NaN where not identifiable).
    chi2_reduced : float
        Σ((measured − model)/σ)² / (N − P); exactly 1 when σ was estimated from the residuals.
    rms : float
        Root-mean-square residual, as a fraction.
    n_points, n_parameters : int
    warnings : tuple of str
    fitted : tuple of FittedSpectrum
        Measured and model curves, one per measured spectrum.
    converged : bool
        Whether the local refinement of the best start met its convergence test.
    stopped_because : str
        Why the refinement stopped, in the optimiser's words.
    model : str
        The model stack as written.
    stack : filmoptic.stack.Stack
        The model with the fitted values bound.
    sigma_source : str
        ``"file"``, ``"option"`` or ``"residuals"``.
    sigma : float or None
        The σ estimated from the residuals (fraction), when ``sigma_source == "residuals"``.
    starts : int
        How many starting points the local refinement ran from.
    notes : tuple of str
        How the search went (grid size, envelope estimate).
    doubts : tuple of Doubt
        The warnings with what they concern (the verdict is built from them).
    residual_autocorrelation : float
        Pooled lag-1 autocorrelation of the residuals: about 0 for noise, near 1 for a pattern.
    """

    parameters: tuple
    correlation: np.ndarray
    chi2_reduced: float
    rms: float
    n_points: int
    n_parameters: int
    warnings: tuple
    fitted: tuple
    converged: bool
    stopped_because: str
    model: str = ""
    stack: object = None
    sigma_source: str = "residuals"
    sigma: float | None = None
    starts: int = 0
    notes: tuple = ()
    doubts: tuple = ()
    residual_autocorrelation: float = 0.0

    def value(self, name_fragment: str) -> FitParameter:
        """The first parameter whose name contains ``name_fragment`` (case-insensitive)."""
        for p in self.parameters:
            if name_fragment.lower() in p.name.lower():
                return p
        raise KeyError(name_fragment)


# ----------------------------------------------------------------------------------------------
# Ranges
# ----------------------------------------------------------------------------------------------
def _coefficient_key(name: str) -> str:
    return re.sub(r"\s*\((layer \d+|substrate)\)\s*$", "", name)


def _coefficient_info(name: str):
    key = _coefficient_key(name)
    for pattern, bounds, unit in _COEFFICIENTS:
        if re.search(pattern, key):
            return bounds, unit
    return None, ""


def parameter_bounds(stack) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Lower and upper bounds of every free value, and their units.

    ``LOW..HIGH`` as written; for ``?`` the defaults of the module documentation.

    Raises
    ------
    FilmopticError
        A ``?`` without a default range (an unusual coefficient): it needs ``LOW..HIGH``.
    """
    items = (*stack.layers, stack.substrate)
    lows, highs, units = [], [], []
    for p in stack.parameters:
        if p.kind == "thickness":
            kind = getattr(items[p.layer].material, "kind", "model")
            default = _THICKNESS_RANGE_NM.get(kind, _THICKNESS_RANGE_DEFAULT_NM)
            unit = "nm"
        else:
            default, unit = _coefficient_info(p.name)
            unit = p.unit or unit
        if p.free.bounded:
            lo, hi = float(p.free.low), float(p.free.high)
        elif default is not None:
            lo, hi = default
            lo = p.free.low if p.free.low is not None else lo
            hi = p.free.high if p.free.high is not None else hi
        else:
            raise FilmopticError(
                f"{p.name}: no default range for an unbounded '?'; write it as LOW..HIGH"
            )
        if not hi > lo:
            raise FilmopticError(f"{p.name}: the range {lo:g}..{hi:g} is empty; write LOW..HIGH with LOW < HIGH")
        if hi - lo <= 1e-9 * max(abs(lo), abs(hi)):
            # The fit's scales and steps are fractions of the range: a range one rounding step
            # wide fixes the value rather than frees it.
            raise FilmopticError(
                f"{p.name}: the range {lo:.12g}..{hi:.12g} is narrower than a part in a billion, "
                "which fixes the value; write the number itself, or a wider LOW..HIGH"
            )
        lows.append(lo)
        highs.append(hi)
        units.append(unit)
    return np.array(lows, float), np.array(highs, float), units


# ----------------------------------------------------------------------------------------------
# The model
# ----------------------------------------------------------------------------------------------
class _Problem:
    """The measured data, their weights and the stack: residuals for a parameter vector."""

    def __init__(self, stack, spectra, sigma_points, angle_deg, polarization, extrapolate):
        self.stack = stack
        self.spectra = spectra
        self.angle_deg = angle_deg
        self.polarization = polarization
        self.extrapolate = extrapolate
        self.wavelength_nm = np.unique(np.concatenate([s.wavelength_nm for s in spectra]))
        self.index = [np.searchsorted(self.wavelength_nm, s.wavelength_nm) for s in spectra]
        self.data = np.concatenate([s.values for s in spectra])
        self.weights = 1.0 / sigma_points          # 1 everywhere when σ is estimated afterwards
        self.thickness_slots = list(stack.thickness_parameters)
        self.coefficient_slots = [i for i in range(len(stack.parameters)) if i not in self.thickness_slots]

    def _model_values(self, spectrum) -> np.ndarray:
        """Model values at the measured points, from a Spectrum with a leading batch axis."""
        parts = []
        for s, idx in zip(self.spectra, self.index):
            source = spectrum.T if s.quantity == "T" else spectrum.R
            parts.append(source[..., idx])
        return np.concatenate(parts, axis=-1)

    def model(self, values) -> np.ndarray:
        from ..engine import compute

        bound = self.stack.bind(values)
        spectrum = compute(bound, self.wavelength_nm, angle_deg=self.angle_deg,
                           polarization=self.polarization, extrapolate=self.extrapolate)
        return self._model_values(spectrum)

    def residuals(self, values) -> np.ndarray:
        return (self.model(values) - self.data) * self.weights

    def coefficient_stack(self, values):
        """The stack with the coefficients in ``values`` bound and the thicknesses still free."""
        filled = np.array(values, float)
        for slot in self.thickness_slots:
            filled[slot] = 0.0 if not np.isfinite(filled[slot]) else filled[slot]
        bound = self.stack.bind(filled)
        original = (*self.stack.layers, self.stack.substrate)
        items = [replace(b, thickness_nm=o.thickness_nm) if is_free(o.thickness_nm) else b
                 for b, o in zip((*bound.layers, bound.substrate), original)]
        return replace(bound, layers=tuple(items[:-1]), substrate=items[-1])

    def grid_chi2(self, values, thickness_grid) -> np.ndarray:
        """χ² (weighted) for every row of ``thickness_grid`` with the coefficients of ``values``."""
        from ..engine import compute

        stack = self.coefficient_stack(values)
        spectrum = compute(stack, self.wavelength_nm, angle_deg=self.angle_deg,
                           polarization=self.polarization, thickness_nm=thickness_grid,
                           extrapolate=self.extrapolate)
        r = (self._model_values(spectrum) - self.data) * self.weights
        return np.einsum("gi,gi->g", r, r)

    def max_index(self, values, wavelength_nm) -> float:
        """Largest |N| of any coating layer at ``wavelength_nm`` (sets the fringe period)."""
        stack = self.coefficient_stack(values)
        biggest = 1.0
        for layer in stack.layers:
            N = layer.material.nk(np.array([wavelength_nm]), extrapolate=self.extrapolate)
            biggest = max(biggest, float(np.abs(N).max()))
        return biggest


# ----------------------------------------------------------------------------------------------
# Global search
# ----------------------------------------------------------------------------------------------
def _coefficient_sets(lo, hi, slots, n_parameters) -> np.ndarray:
    """A small full-factorial grid over the coefficients (bin centres), others at their middle."""
    q = len(slots)
    base = (lo + hi) / 2
    if q == 0:
        return base[None, :]
    levels = max(1, int(math.floor(MAX_COEFFICIENT_SETS ** (1.0 / q) + 1e-9)))
    levels = min(levels, 9)
    fractions = (np.arange(levels) + 0.5) / levels
    mesh = np.meshgrid(*([fractions] * q), indexing="ij")
    sets = np.repeat(base[None, :], mesh[0].size, axis=0)
    for column, slot in enumerate(slots):
        sets[:, slot] = lo[slot] + mesh[column].ravel() * (hi[slot] - lo[slot])
    return sets


def _thickness_grid(lo, hi, steps, budget, seed=0):
    """Full grid with the given steps if it fits the budget, else a Halton sample of the box."""
    # Sizes first (a range of a metre at 0.05 nm would not fit in memory as a list).
    counts = [math.floor((b - a) / s + 0.5) + 1 if b > a else 1 for a, b, s in zip(lo, hi, steps)]
    size = math.prod(counts)
    if size <= budget:
        axes = [np.arange(a, b + 0.5 * s, s) if b > a else np.array([a]) for a, b, s in zip(lo, hi, steps)]
        axes = [np.clip(ax, a, b) for ax, a, b in zip(axes, lo, hi)]
        mesh = np.meshgrid(*axes, indexing="ij")
        return np.column_stack([m.ravel() for m in mesh]), size, True
    from ..numerics.sampling import halton

    m = max(int(math.floor(math.log2(max(budget, 2)))), 1)
    sample = halton(2**m, len(lo), seed=seed)
    return lo + sample * (hi - lo), size, False


def _distinct_best(points, chi2, scales, count):
    """Indices of the ``count`` lowest χ² that differ from each other by more than 1.5 scales."""
    chosen = []
    for i in np.argsort(chi2):
        if not np.isfinite(chi2[i]):
            break
        if all(np.any(np.abs(points[i] - points[j]) > 1.5 * scales) for j in chosen):
            chosen.append(int(i))
        if len(chosen) >= count:
            break
    return chosen


def _envelope_start(problem, lo, hi):
    """A start from the envelope method, or (None, reason)."""
    from .envelope import swanepoel

    stack = problem.stack
    t_spectra = [s for s in problem.spectra if s.quantity == "T"]
    if problem.angle_deg > 10 or not t_spectra or len(stack.layers) != 1:
        return None, None
    if not problem.thickness_slots or not stack.substrate.thick:
        return None, None
    try:
        s_data = max(t_spectra, key=len)
        wl = s_data.wavelength_nm
        substrate_N = stack.substrate.material.nk(wl, extrapolate=problem.extrapolate)
        ambient_N = stack.ambient.nk(wl, extrapolate=problem.extrapolate)
        if np.any(np.abs(ambient_N - 1.0) > 0.01) or np.any(substrate_N.imag > 1e-3):
            return None, None
        # Only a transparent film shows the fringes the method reads (judged at mid-range values).
        film = problem.coefficient_stack((lo + hi) / 2).layers[0].material
        if np.max(film.nk(wl, extrapolate=problem.extrapolate).imag) > 0.05:
            return None, None
        result = swanepoel(wl, s_data.values, substrate_N.real)
    except FilmopticError as exc:
        return None, f"no envelope estimate ({exc})"
    start = (lo + hi) / 2
    slot_d = problem.thickness_slots[0]
    start[slot_d] = result.thickness_nm
    names = [p.name for p in stack.parameters]
    A, B = result.cauchy_AB
    for i, name in enumerate(names):
        key = _coefficient_key(name)
        if key == "cauchy A":
            start[i] = A
        elif key == "cauchy B":
            start[i] = B
        elif key in ("cauchy C", "cauchy k", "index k"):
            start[i] = lo[i]
        elif key == "index n":
            start[i] = float(np.mean(result.n))
    start = np.clip(start, lo, hi)
    note = (f"envelope estimate (Swanepoel 1983): thickness {result.thickness_nm:.1f} ± "
            f"{result.thickness_stderr_nm:.1f} nm, n {result.n.min():.3f}–{result.n.max():.3f}")
    return start, note


# ----------------------------------------------------------------------------------------------
# Covariance
# ----------------------------------------------------------------------------------------------
def _covariance(jac, scale):
    """Covariance (JᵀJ)⁻¹ via SVD of the range-scaled Jacobian; unidentifiable directions -> inf."""
    Js = jac * scale[None, :]
    _, sv, Vt = np.linalg.svd(Js, full_matrices=False)
    if sv.size == 0 or sv[0] == 0:
        P = jac.shape[1]
        return np.full((P, P), np.inf), np.ones(P, bool)
    good = sv > SINGULAR_LIMIT * sv[0]
    V = Vt.T
    cov_s = (V[:, good] / sv[good] ** 2) @ V[:, good].T
    cov = cov_s * np.outer(scale, scale)
    # A parameter is unidentifiable when it has weight in a dropped (null) direction.
    null = np.any(np.abs(V[:, ~good]) > 1e-3, axis=1) if np.any(~good) else np.zeros(V.shape[0], bool)
    return cov, null


# ----------------------------------------------------------------------------------------------
# The fit
# ----------------------------------------------------------------------------------------------
def _crop(spectrum: MeasuredSpectrum, wavelength_range_nm):
    if wavelength_range_nm is None:
        return spectrum
    lo, hi = wavelength_range_nm[:2]
    keep = (spectrum.wavelength_nm >= lo) & (spectrum.wavelength_nm <= hi)
    return replace(
        spectrum, wavelength_nm=spectrum.wavelength_nm[keep], values=spectrum.values[keep],
        sigma=None if spectrum.sigma is None else spectrum.sigma[keep],
    )


def _sigma_points(spectra, sigma):
    """Per-point σ and its source: the files' column, the option, or None (estimate later)."""
    have = [s.sigma is not None for s in spectra]
    if all(have):
        return np.concatenate([s.sigma for s in spectra]), "file", []
    if sigma is not None:
        if not sigma > 0:
            raise FilmopticError(f"--sigma must be positive, got {sigma:g}")
        parts = [s.sigma if s.sigma is not None else np.full(len(s), float(sigma)) for s in spectra]
        return np.concatenate(parts), "option", []
    notes = []
    if any(have):
        notes.append("only some files give an uncertainty column; all points weighted equally "
                     "(give --sigma for the others to use the columns)")
    return np.ones(sum(len(s) for s in spectra)), "residuals", notes


def fit_spectra(model, measured, *, angle_deg: float = 0.0, polarization: str = "unpolarized",
                ambient="air", sigma: float | None = None, wavelength_range_nm=None,
                extrapolate: bool = False, max_grid: int = 40000, starts: int = 4,
                max_nfev: int = 200, progress=None) -> FitResult:
    """Fit the free values of a stack to measured spectra.

    Parameters
    ----------
    model : str or filmoptic.stack.Stack
        Stack with unknowns, e.g. ``"cauchy(?,?,0) 150..500nm / glass 1mm"``.
    measured : MeasuredSpectrum or sequence of MeasuredSpectrum
        T and/or R curves (:func:`filmoptic.inverse.measured.read_spectrum`); all are fitted together.
    angle_deg : float, optional
        Angle of incidence of the measurement, degrees.
    polarization : {"unpolarized", "s", "p"}, optional
    ambient : str or Material, optional
        Used when ``model`` is a string.
    sigma : float, optional
        Standard uncertainty of each point (fraction) where the files give none; without it, σ
        is estimated from the residuals.
    wavelength_range_nm : (float, float), optional
        Fit only this part of the spectra.
    extrapolate : bool, optional
        Let tables hold their end values outside their range (with a warning).
    max_grid : int, optional
        Most model evaluations in the coarse global search (bounded memory and time).
    starts : int, optional
        How many distinct grid points are refined locally (1–20).
    max_nfev : int, optional
        Most model evaluations of each local refinement.
    progress : callable, optional
        ``progress(done, total)`` is called as the search advances (for a progress bar).

    Returns
    -------
    FitResult

    Raises
    ------
    FilmopticError
        No free values, too few points, a ``?`` without default range, wavelengths outside a
        material table, and other user errors.

    References
    ----------
    Press et al., *Numerical Recipes*, ch. 15 (covariance from the Jacobian, from memory);
    Swanepoel, J. Phys. E 16, 1214 (1983) (envelope start).

    Examples
    --------
    >>> import numpy as np
    >>> from filmoptic.engine import compute
    >>> wl = np.arange(400.0, 1001.0, 5.0)
    >>> T = compute("n=2.1 250nm / n=1.52 1mm", wl).T
    >>> data = MeasuredSpectrum(wl, T, "T")
    >>> r = fit_spectra("n=2.1 ? / n=1.52 1mm", data)
    >>> round(r.parameters[0].value, 2)
    250.0
    """
    from ..stack import parse_stack

    stack = parse_stack(model, ambient) if isinstance(model, str) else model
    spectra = _checked_spectra(measured, wavelength_range_nm)
    P = len(stack.parameters)
    if P == 0:
        raise FilmopticError(
            "the model has nothing to fit: mark unknowns with '?' or LOW..HIGH, e.g. "
            "'TiO2 50..400nm / glass 1mm'"
        )
    if not 1 <= int(starts) <= 20:
        raise FilmopticError(f"starts must lie between 1 and 20, got {starts}")
    if int(max_grid) < 10:
        raise FilmopticError(f"max_grid must be at least 10, got {max_grid}")
    N = sum(len(s) for s in spectra)
    if N <= P:
        raise FilmopticError(f"{N} measured point(s) cannot determine {P} unknown(s); give more data")
    sigma_points, sigma_source, notes = _sigma_points(spectra, sigma)
    lo, hi, units = parameter_bounds(stack)
    problem = _Problem(stack, spectra, sigma_points, float(angle_deg), polarization, extrapolate)
    _check_refinement_work(problem, int(starts), int(max_nfev))
    # One progress scale for both stages: a step per chunk of the grid search, then per start.
    tell = progress or (lambda done, total: None)
    scale = {"search": 1}

    def search_report(done, search_total):
        scale["search"] = search_total
        tell(done, search_total + int(starts) + 1)

    chosen, search_notes = _global_search(problem, lo, hi, int(max_grid), int(starts), search_report)
    notes += search_notes
    total = scale["search"] + int(starts) + 1
    results = _refine(problem, chosen, lo, hi, int(max_nfev),
                      lambda done: tell(min(scale["search"] + done, total), total))
    tell(total, total)
    best = min(results, key=lambda r: r.cost)

    # sigma estimated from the residuals: covariance scaled by the residual variance.
    dof = N - P
    chi2_weighted = float(np.sum(best.fun**2))
    if sigma_source == "residuals":
        sigma_est, variance_scale, chi2_reduced = math.sqrt(chi2_weighted / dof), chi2_weighted / dof, 1.0
        notes.append(f"σ estimated from the residuals ({sigma_est:.2g}); reduced χ² is 1 by construction")
    else:
        sigma_est, variance_scale, chi2_reduced = None, 1.0, chi2_weighted / dof
    stderr, corr, null = _uncertainties(best.jac, lo, hi, variance_scale)
    names = [p.name for p in stack.parameters]
    rho1 = _lag1_autocorrelation(problem, best.fun)
    doubts = _doubts(problem, names, best, results, lo, hi, stderr, corr, null, sigma_source,
                     chi2_reduced, variance_scale, rho1)

    model_values = problem.model(best.x)
    fitted, start = [], 0
    for s in spectra:
        stop = start + len(s)
        fitted.append(FittedSpectrum(
            quantity=s.quantity, wavelength_nm=s.wavelength_nm, measured=s.values,
            model=model_values[start:stop],
            sigma=(sigma_points[start:stop] if sigma_source != "residuals" else None),
            path=None if s.path is None else str(s.path),
        ))
        start = stop
    return FitResult(
        parameters=tuple(FitParameter(names[i], float(best.x[i]), float(stderr[i]), units[i])
                         for i in range(P)),
        correlation=corr, chi2_reduced=float(chi2_reduced),
        rms=float(np.sqrt(np.mean((model_values - problem.data) ** 2))),
        n_points=N, n_parameters=P, warnings=tuple(d.text for d in doubts), fitted=tuple(fitted),
        converged=bool(best.success), stopped_because=str(best.message), model=str(stack),
        stack=stack.bind(best.x), sigma_source=sigma_source, sigma=sigma_est, starts=len(chosen),
        notes=tuple(notes), doubts=tuple(doubts), residual_autocorrelation=float(rho1),
    )


def _checked_spectra(measured, wavelength_range_nm) -> list:
    if isinstance(measured, MeasuredSpectrum):
        measured = [measured]
    spectra = [_crop(s, wavelength_range_nm) for s in measured]
    if not spectra:
        raise FilmopticError("no measured spectrum given (--measured FILE)")
    for s in spectra:
        if len(s) == 0:
            where = f" {s.path}" if s.path else ""
            raise FilmopticError(f"measured spectrum{where} has no point inside the fit range")
        if s.quantity not in ("T", "R"):
            raise FilmopticError(f"measured quantity must be T or R, got {s.quantity!r}")
    return spectra


def _evaluation_work(problem) -> tuple[int, int]:
    """(wavelengths, interfaces) of one model evaluation: its work is their product."""
    from ..engine import interface_count

    return problem.wavelength_nm.size, interface_count(problem.stack)


def _check_refinement_work(problem, starts: int, max_nfev: int) -> None:
    """Refuse at once a refinement that could run past the work limit: each start takes at most
    ``max_nfev`` steps of one evaluation plus one per parameter for the Jacobian."""
    from ..engine import check_work

    W, interfaces = _evaluation_work(problem)
    evaluations = (starts + 1) * max_nfev * (len(problem.stack.parameters) + 1)
    check_work(evaluations * W, interfaces,
               f"fit: refining from up to {starts + 1} starts may need {evaluations} model evaluations × "
               f"{W} wavelengths × {interfaces} interfaces",
               "fit a narrower wavelength range (--range), fewer starts (--starts) or fewer unknowns")


def _search_budget(problem, max_grid: int, sets: int) -> tuple[int, str]:
    """Thickness sets per coefficient set for the global search, within ``max_grid`` and the work
    limit (a note says when the limit made the search coarser)."""
    from ..engine import check_work
    from ..limits import WORK

    W, interfaces = _evaluation_work(problem)
    check_work(sets * 8 * W, interfaces,
               f"fit: the global search needs at least {sets * 8} model evaluations × {W} wavelengths × "
               f"{interfaces} interfaces", "fit a narrower wavelength range (--range) or fewer unknowns")
    affordable = int(WORK.value() // (W * interfaces))
    if affordable >= max_grid:
        return max(max_grid // sets, 8), ""
    note = (f"global search limited to {affordable} model evaluations by the work limit "
            f"({WORK.variable}); --range with fewer points allows a finer search")
    return max(affordable // sets, 8), note


def _global_search(problem, lo, hi, max_grid, starts, report):
    """Starting points for the local refinement: the best distinct grid points (+ envelope)."""
    t_slots, c_slots = problem.thickness_slots, problem.coefficient_slots
    sets = _coefficient_sets(lo, hi, c_slots, len(lo))
    notes = []
    scales = (hi - lo) / 10.0
    if c_slots and len(sets) > 1:
        levels = max(1, int(round(len(sets) ** (1.0 / len(c_slots)))))
        scales[c_slots] = (hi[c_slots] - lo[c_slots]) / levels
    if t_slots:
        # Four samples per fringe period λ/(2n) at the shortest wavelength and highest index;
        # at oblique incidence the period only grows, so this step is safe at any angle.
        wl_min = float(problem.wavelength_nm.min())
        n_max = max(problem.max_index(v, wl_min) for v in sets)
        step = max(wl_min / (8.0 * n_max), 0.05)
        scales[t_slots] = step
        budget, limited = _search_budget(problem, max_grid, len(sets))
        grid, full_size, exhaustive = _thickness_grid(lo[t_slots], hi[t_slots],
                                                      np.full(len(t_slots), step), budget)
        if limited and not exhaustive:
            notes.append(limited)
        notes.append(
            f"global search: {grid.shape[0]} thickness set(s) (step {step:.1f} nm"
            + ("" if exhaustive else f", sampled from {full_size}")
            + f") × {len(sets)} coefficient set(s)"
        )
        # Each chunk is one vectorised pass (memory stays bounded; progress is reported per chunk).
        chunks = np.array_split(grid, max(1, -(-grid.shape[0] // _GRID_CHUNK)))
        report(0, len(sets) * len(chunks))
        all_points, all_chi2 = [], []
        for values in sets:
            points = np.repeat(values[None, :], grid.shape[0], axis=0)
            points[:, t_slots] = grid
            all_points.append(points)
            for chunk in chunks:
                all_chi2.append(problem.grid_chi2(values, chunk))
                report(len(all_chi2), len(sets) * len(chunks))
        points, chi2 = np.concatenate(all_points), np.concatenate(all_chi2)
    else:
        # Coefficients only: each set needs its own material, so one vectorised pass per set.
        points = sets
        report(0, len(sets))
        chi2 = np.empty(len(sets))
        for i, values in enumerate(sets):
            chi2[i] = np.sum(problem.residuals(values) ** 2)
            report(i + 1, len(sets))
        notes.append(f"global search: {len(sets)} coefficient set(s)")
    chosen = [points[i] for i in _distinct_best(points, chi2, scales, starts)]
    envelope, envelope_note = _envelope_start(problem, lo, hi)
    if envelope_note:
        notes.append(envelope_note)
    if envelope is not None:
        chosen.append(envelope)
    return chosen, notes


def _refine(problem, chosen, lo, hi, max_nfev, report):
    """Bounded least squares (trust-region reflective) from every start."""
    from scipy.optimize import least_squares

    x_scale = (hi - lo) / 10.0
    results = []
    for i, x0 in enumerate(chosen, start=1):
        # least_squares needs a start strictly inside the box.
        x0 = np.clip(x0, lo + 1e-9 * (hi - lo), hi - 1e-9 * (hi - lo))
        results.append(least_squares(problem.residuals, x0, bounds=(lo, hi), x_scale=x_scale,
                                     method="trf", max_nfev=max_nfev))
        report(i)
    return results


def _uncertainties(jac, lo, hi, variance_scale):
    """Standard errors, correlation matrix and the unidentifiable flags at the optimum."""
    cov, null = _covariance(jac, hi - lo)
    cov = cov * variance_scale
    with np.errstate(invalid="ignore", divide="ignore"):
        stderr = np.sqrt(np.clip(np.diag(cov), 0.0, np.inf))
        stderr = np.where(null, np.inf, stderr)
        corr = cov / np.outer(stderr, stderr)
    corr[null, :] = np.nan
    corr[:, null] = np.nan
    np.fill_diagonal(corr, 1.0)
    return stderr, corr, null


def _lag1_autocorrelation(problem, residuals) -> float:
    """Pooled lag-1 autocorrelation of the residuals along wavelength, spectrum by spectrum.

    Independent noise gives about 0 (± 1/√N); a model that misses a feature leaves long runs of
    one sign and a value near 1 (the Durbin–Watson idea: J. Durbin & G. S. Watson,
    Biometrika 37, 409 (1950)).
    """
    num = den = 0.0
    start = 0
    for s in problem.spectra:
        r = residuals[start:start + len(s)]
        start += len(s)
        if r.size > 2:
            r = r - r.mean()
            num += float(np.sum(r[1:] * r[:-1]))
            den += float(np.sum(r * r))
    return num / den if den > 0 else 0.0


def _doubts(problem, names, best, results, lo, hi, stderr, corr, null, sigma_source,
            chi2_reduced, variance_scale, rho1) -> list:
    """Everything the user should know before trusting the numbers (see the module docstring)."""
    out = []
    stack, x, P = problem.stack, best.x, len(names)
    if any(s.quantity == "T" for s in problem.spectra) and stack.substrate.thickness_nm is None:
        out.append(Doubt("half-space", (), "the substrate is a half-space, so the model ignores its back "
                         "side; for a measured T write its thickness (e.g. 'glass 1mm')"))
    for i in np.flatnonzero(null):
        out.append(Doubt("not identifiable", (names[i],),
                         f"{names[i]} is not identifiable from these data (the spectrum does not depend "
                         "on it independently of the others); fix it or measure more"))
    for i in range(P):
        for j in range(i + 1, P):
            if np.isfinite(corr[i, j]) and abs(corr[i, j]) > CORRELATION_LIMIT:
                out.append(Doubt("correlated", (names[i], names[j]),
                                 f"{names[i]} and {names[j]} are strongly correlated (ρ = {corr[i, j]:+.3f}): "
                                 "the data hardly tell them apart; fix one, or add R to T or a wider range"))
    # least_squares keeps strictly inside the box, so "at a bound" means within a hair of it.
    hair = 1e-6 * (hi - lo)
    at_bound = np.where(best.active_mask != 0, best.active_mask,
                        np.where(x - lo <= hair, -1, np.where(hi - x <= hair, 1, 0)))
    for i in np.flatnonzero(at_bound):
        side = "lower" if at_bound[i] < 0 else "upper"
        out.append(Doubt("at bound", (names[i],),
                         f"{names[i]} stopped at the {side} end of its range ({lo[i]:g}..{hi[i]:g}); its "
                         "error bar ignores the bound — widen the range or check the model"))
    if sigma_source != "residuals":
        if chi2_reduced > 4.0:
            out.append(Doubt("misfit", (), f"reduced χ² = {chi2_reduced:.3g}: the model does not describe the "
                             "data within their uncertainties (model incomplete, or σ too small); error bars "
                             "are too small"))
        elif chi2_reduced < 0.25:
            out.append(Doubt("sigma too large", (), f"reduced χ² = {chi2_reduced:.3g}: the residuals are much "
                             "smaller than σ (σ too large?); error bars are too large"))
    if rho1 > AUTOCORRELATION_LIMIT:
        out.append(Doubt("pattern", (), f"the residuals follow a pattern (lag-1 autocorrelation {rho1:.2f}), "
                         "not noise: the model misses something (a layer, dispersion, absorption, roughness), "
                         "so the values are biased and the error bars too small"))
    if not np.any(null):
        t_slots = problem.thickness_slots or list(range(P))
        margin = 3 * np.where(np.isfinite(stderr), stderr, 0.0) + 1e-6 * (hi - lo)
        for other in results:
            delta = 2 * (other.cost - best.cost) / variance_scale
            if other is not best and delta < ALTERNATIVE_DELTA_CHI2 and np.any(
                    (np.abs(other.x - x) > margin)[t_slots]):
                shown = ", ".join(f"{names[i]} {other.x[i]:.4g}" for i in range(P))
                out.append(Doubt("alternative", tuple(names[i] for i in t_slots),
                                 f"another solution fits almost as well (Δχ² = {delta:.2g}): {shown}; "
                                 "narrow the ranges or widen the wavelength range to decide"))
                break
    if not best.success:
        out.append(Doubt("not converged", (), f"the optimiser did not converge: {best.message}"))
    return out


@dataclass(frozen=True)
class FitVerdict:
    """The one-line answer a fit report starts with.

    Attributes
    ----------
    explained : str
        ``"yes"`` (the model follows the data to within their noise), ``"partly"`` (it follows
        them, but leaves a pattern or misses them by more than their uncertainty) or ``"no"``
        (the search did not converge, or the model misses the data by far).
    how_well : str
        The size of the residuals, in words and numbers.
    distrust : tuple of str
        What not to take at face value, each with its reason in brackets.
    text : str
        The whole line.
    """

    explained: str
    how_well: str
    distrust: tuple
    text: str


#: A reduced χ² above this (σ given) means the model misses the data by far.
FAR_MISFIT_CHI2 = 25.0

_DISTRUST = {
    "not identifiable": "{p} (the data do not fix it)",
    "at bound": "{p} (stopped at the end of its range)",
    "correlated": "{p} (the data hardly tell them apart)",
    "alternative": "the thickness (another fringe order fits almost as well)",
    "half-space": "T near the substrate's own absorption (its back side is left out)",
    "misfit": "the error bars (too small: the model misses the data)",
    "sigma too large": "the error bars (too large: σ is larger than the scatter)",
    "pattern": "the error bars and small differences (the residuals have a pattern)",
    "not converged": "every value (the search stopped before converging)",
}


def fit_verdict(result: FitResult) -> FitVerdict:
    """Did the model explain the data, how well, and what to distrust — from a :class:`FitResult`.

    Examples
    --------
    >>> from filmoptic.inverse.measured import MeasuredSpectrum
    >>> from filmoptic.engine import compute
    >>> wl = np.arange(400.0, 901.0, 5.0)
    >>> T = compute("n=2.2 300nm / n=1.5 1mm", wl, angle_deg=0.0).T
    >>> noise = 0.002 * np.random.default_rng(1).standard_normal(wl.size)
    >>> result = fit_spectra("n=2.2 100..500nm / n=1.5 1mm", MeasuredSpectrum(wl, T + noise, "T"))
    >>> verdict = fit_verdict(result)
    >>> verdict.explained, verdict.distrust
    ('yes', ())
    >>> verdict.text.startswith("Verdict: the model explains the data (RMS residual 0.17 % of T")
    True
    """
    kinds = {d.kind for d in result.doubts}
    quantities = "/".join(dict.fromkeys(f.quantity for f in result.fitted)) or "the data"
    how_well = f"RMS residual {100 * result.rms:.2g} % of {quantities}"
    if result.sigma_source != "residuals":
        how_well += f", reduced χ² {result.chi2_reduced:.2g}"
    how_well += (", a pattern left in the residuals" if "pattern" in kinds else ", residuals like noise")
    if "not converged" in kinds or ("misfit" in kinds and result.chi2_reduced > FAR_MISFIT_CHI2):
        explained, opening = "no", "the model does not explain the data"
    elif kinds & {"pattern", "misfit"}:
        explained, opening = "partly", "the model explains the data only in part"
    else:
        explained, opening = "yes", "the model explains the data"
    distrust = []
    for d in result.doubts:
        if d.kind in _DISTRUST:
            item = _DISTRUST[d.kind].format(p=" and ".join(d.parameters))
            if item not in distrust:
                distrust.append(item)
    tail = "distrust " + "; ".join(distrust) if distrust else "nothing flagged to distrust"
    text = f"Verdict: {opening} ({how_well}); {tail}."
    return FitVerdict(explained, how_well, tuple(distrust), text)


# ----------------------------------------------------------------------------------------------
# Plain-text report
# ----------------------------------------------------------------------------------------------
def format_value(value: float, stderr: float) -> tuple[str, str]:
    """Value and standard error as text, rounded to the error's second significant digit.

    Examples
    --------
    >>> format_value(309.8692, 0.1478)
    ('309.87', '0.15')
    >>> format_value(2.5, float("inf"))
    ('2.5', '–')
    """
    if not math.isfinite(stderr):
        return f"{value:.6g}", "–"
    if stderr <= 0:
        return f"{value:.6g}", "0"
    digits = min(max(0, 1 - int(math.floor(math.log10(stderr)))), 10)
    return f"{value:.{digits}f}", f"{stderr:.{digits}f}"


def format_report(result: FitResult, spectra=()) -> str:
    """The fit as a readable text report (what ``filmoptic fit`` prints).

    It starts with the verdict (:func:`fit_verdict`); each section after it is headed by the
    question it answers. ``spectra`` (the :class:`~filmoptic.inverse.measured.MeasuredSpectrum` objects
    that were fitted) adds their file names and reading notes.
    """
    verdict = fit_verdict(result)
    names = ", ".join(f"{f.quantity} {f.path.rsplit('/', 1)[-1] if f.path else '(data)'}"
                      for f in result.fitted)
    out = [verdict.text, "",
           f"Model {result.model}, fitted to {result.n_points} points ({names}); "
           f"{result.n_parameters} value(s) free.", ""]

    out.append("What came out? (each value ± its standard uncertainty)")
    width = max(len(p.name) for p in result.parameters)
    for p in result.parameters:
        value, err = format_value(p.value, p.stderr)
        err = "not fixed by the data" if err == "–" else err
        out.append(f"  {p.name.ljust(width)}  {value} ± {err}{(' ' + p.unit) if p.unit else ''}")

    out += ["", "How closely does the model follow the data?"]
    out.append(f"  RMS residual: {100 * result.rms:.3g} % (absolute, in % of T or R)")
    if result.sigma_source == "residuals":
        out.append(f"  σ per point: estimated from the residuals, {100 * result.sigma:.3g} % (so the reduced "
                   "χ² is 1 by construction)")
    else:
        source = "the files' uncertainty column" if result.sigma_source == "file" else "the given σ"
        out.append(f"  σ per point: from {source}; reduced χ² = {result.chi2_reduced:.3g} (about 1 when the "
                   "model explains the data within their noise)")
    pattern = "a pattern" if result.residual_autocorrelation > AUTOCORRELATION_LIMIT else "like noise"
    out.append(f"  residuals: {pattern} (lag-1 autocorrelation {result.residual_autocorrelation:+.2f}; "
               "about 0 for noise, near 1 for a missed feature)")

    P = result.n_parameters
    if P > 1:
        out += ["", "Which values move together? (correlation ρ; ±1: one can stand in for the other)"]
        pairs = sorted(((abs(result.correlation[i, j]) if math.isfinite(result.correlation[i, j]) else 2.0, i, j)
                        for i in range(P) for j in range(i + 1, P)), reverse=True)
        for size, i, j in pairs:
            rho = result.correlation[i, j]
            shown = "–" if not math.isfinite(rho) else f"{rho:+.3f}"
            degree = ("not determined" if size > 1 else "strongly" if size > CORRELATION_LIMIT
                      else "noticeably" if size > 0.5 else "little")
            out.append(f"  {result.parameters[i].name} and {result.parameters[j].name}: ρ = {shown} ({degree})")

    if result.warnings:
        out += ["", "What to distrust, and why?", *(f"  ! {w}" for w in result.warnings)]
    notes = [f"{s.path.name if s.path else 'data'}: {n}" for s in spectra for n in s.notes]
    notes += list(result.notes)
    if notes:
        out += ["", "How did the search go?", *(f"  - {n}" for n in notes)]
    return "\n".join(out)

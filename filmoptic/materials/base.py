"""The :class:`Material` interface: a complex refractive index N(λ) = n + i·k with k ≥ 0.

Every source of optical constants in filmoptic (a shipped table, a user's file, a dispersion
model, an effective-medium mix) is a :class:`Material`. Wavelengths are nanometres; the sign
convention is N = n + i·k with k ≥ 0 (time factor e^(−iωt)), the same as the ``tmm`` package.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np

from filmoptic.errors import FilmopticError, WavelengthRangeError
from filmoptic.params import is_free

__all__ = ["Material", "MaterialInfo", "KINDS", "format_range_nm", "TRANSPARENT_K_OVER_N",
           "is_practically_transparent", "MIN_INDEX", "MAX_INDEX", "check_index"]

#: The kinds a material may have; the solver uses them to choose a default thickness range.
KINDS = ("metal", "dielectric", "semiconductor", "substrate", "ambient", "model")

#: A medium with k/n at or below this at every wavelength counts as transparent where light must
#: cross an unbounded stretch of it (an incident medium, or a half-space substrate lit or seen from
#: behind). Its absorption length λ/(4πk) is then over ~0.3 mm at 400 nm: glass, fused silica,
#: sapphire, water and the low-loss film oxides pass; metals, silicon, ITO and ZnS do not.
TRANSPARENT_K_OVER_N = 1e-4

#: Smallest |N| = √(n² + k²) of any medium. The lowest of real materials are metals near their
#: plasma edge (silver, aluminium: |N| ≈ 0.2); a transparent medium with n below 0.01 does not
#: exist, and an index near zero makes the interface formulas divide zero by zero.
MIN_INDEX = 1e-2
#: Largest n or k: far-infrared metals reach a few hundred; anything beyond is a typo and would
#: overflow the transfer matrices.
MAX_INDEX = 1e4


def check_index(N, label: str, wavelength_nm) -> None:
    """Refuse indices no medium has: not finite, n < 0, |N| below :data:`MIN_INDEX` or n or k above
    :data:`MAX_INDEX` (one line naming the material, the wavelength and the value).

    Examples
    --------
    >>> check_index([1.5 + 0j, 0.05 + 3j], "mine", [400.0, 500.0])
    >>> check_index([1e-300 + 0j], "mine", [400.0])
    Traceback (most recent call last):
    ...
    filmoptic.errors.FilmopticError: mine: n = 1e-300, k = 0 at 400 nm is not an optical constant (|N| = √(n² + k²) must be at least 0.01)
    """
    N = np.asarray(N, dtype=complex)
    wl = np.broadcast_to(np.asarray(wavelength_nm, dtype=float), N.shape)
    finite = np.isfinite(N)
    if not np.all(finite):
        where = float(wl[~finite].flat[0])
        raise FilmopticError(f"{label}: no finite index at {where:g} nm")
    size = np.abs(N)
    bad = (N.real < 0) | (size < MIN_INDEX) | (N.real > MAX_INDEX) | (N.imag > MAX_INDEX)
    if np.any(bad):
        i = np.flatnonzero(bad.ravel())[0]
        n, k, where = float(N.real.flat[i]), float(N.imag.flat[i]), float(wl.flat[i])
        if n < 0:
            rule = "n must not be negative"
        elif size.flat[i] < MIN_INDEX:
            rule = f"|N| = √(n² + k²) must be at least {MIN_INDEX:g}"
        else:
            rule = f"n and k must be at most {MAX_INDEX:g}"
        raise FilmopticError(
            f"{label}: n = {n:.3g}, k = {k:.3g} at {where:g} nm is not an optical constant ({rule})"
        )


def is_practically_transparent(N) -> bool:
    """Whether a medium of complex index ``N`` (n + i·k, any shape) lets light cross it.

    The one rule used wherever a half-space must be crossed; see :data:`TRANSPARENT_K_OVER_N`.

    Examples
    --------
    >>> is_practically_transparent([1.333 + 1e-9j, 1.33 + 2e-8j])
    True
    >>> is_practically_transparent(3.0 + 4.0j)
    False
    """
    import numpy as np

    N = np.asarray(N, dtype=complex)
    return bool(np.all(N.imag <= TRANSPARENT_K_OVER_N * N.real))


def format_range_nm(wavelength_range_nm) -> str:
    """``(300.0, 1000.0) -> '300–1000 nm'``; an unbounded range reads ``'any wavelength'``.

    Examples
    --------
    >>> format_range_nm((114.114, 125124.0))
    '114.1–125124 nm'
    """
    lo, hi = wavelength_range_nm
    if lo <= 0 and math.isinf(hi):
        return "any wavelength"
    return f"{_short_number(lo)}–{_short_number(hi)} nm"


def _short_number(x: float) -> str:
    if math.isinf(x):
        return "∞"
    return f"{x:.0f}" if x >= 1000 else f"{x:.4g}"


@dataclass(frozen=True)
class MaterialInfo:
    """What the library knows about one dataset, read from its file header only.

    Attributes
    ----------
    name : str
        Library name, e.g. ``"TiO2"``.
    dataset : str
        Dataset name, e.g. ``"Sarkar-2019"``.
    default : bool
        True for the dataset that ``NAME`` alone selects.
    kind : str
        One of :data:`KINDS`.
    reference : str
        Full citation of the original publication.
    sample : str
        What was measured (bulk crystal, evaporated film of given thickness, …).
    wavelength_range_nm : tuple of float
        Range covered by the data.
    licence : str
        Licence of the data.
    path : str
        File the dataset lives in.
    source : str
        ``"shipped"`` or ``"user"`` (from the ``FILMOPTIC_NKDATA`` folder).
    overrides : bool
        True when a user file replaces a shipped dataset of the same name.
    aliases : tuple of str
        Other accepted dataset names (e.g. the short name of the source entry).
    citation : str
        Short form of the reference (journal, volume, pages, year), ``""`` if unknown.
    form : str
        How the sample was made: ``"thin film, N nm"``, ``"film"``, ``"bulk"`` or ``"model fit"``
        (the header's ``form``, else read from ``sample`` by
        :func:`filmoptic.materials.films.sample_form`); ``""`` if unknown.
    """

    name: str
    dataset: str
    default: bool
    kind: str
    reference: str
    sample: str
    wavelength_range_nm: tuple
    licence: str
    path: str
    source: str = "shipped"
    overrides: bool = False
    aliases: tuple = ()
    citation: str = ""
    form: str = ""

    @property
    def label(self) -> str:
        return f"{self.name}:{self.dataset}"

    @property
    def short_reference(self) -> str:
        """The short citation, or the start of the full one."""
        if self.citation:
            return self.citation
        text = self.reference.strip()
        return text if len(text) <= 60 else text[:57].rstrip() + "…"


class Material:
    """A source of optical constants N(λ) = n + i·k (k ≥ 0), wavelengths in nm.

    Subclasses set the attributes below and implement :meth:`_nk` for wavelengths already
    checked against :attr:`wavelength_range_nm`. Materials are immutable; :meth:`bind` returns
    a new one.

    Attributes
    ----------
    name : str
        How the material was written: ``"Ti"``, ``"n=1.46"``, ``"mix(Ti,TiO2,0.3)"``.
    dataset : str
        ``"Johnson-1974"``, ``"model"``, ``"file"``, …
    reference : str
        Full citation of the original publication (``""`` for models).
    wavelength_range_nm : tuple of float
        Where the data are valid; ``(0, inf)`` for models valid everywhere.
    kind : str
        One of :data:`KINDS`.
    """

    name: str = ""
    dataset: str = "model"
    reference: str = ""
    wavelength_range_nm: tuple = (0.0, math.inf)
    kind: str = "model"

    # -- the public interface -------------------------------------------------------------
    def nk(self, wavelength_nm, *, extrapolate: bool = False) -> np.ndarray:
        """Complex refractive index n + i·k at the given wavelengths (nm).

        Parameters
        ----------
        wavelength_nm : float or array_like
            Wavelengths in nanometres, any shape.
        extrapolate : bool, optional
            Outside the data's range, hold the end values (with a ``UserWarning``) instead of
            raising :class:`~filmoptic.errors.WavelengthRangeError`.

        Returns
        -------
        numpy.ndarray
            Complex array of the same shape as ``wavelength_nm``; imaginary part k ≥ 0.
        """
        free = self.free_parameters()
        if free:
            names = ", ".join(name for name, _ in free)
            raise FilmopticError(
                f"material {self.name} has free values ({names}); give them numbers first"
            )
        wl = np.asarray(wavelength_nm, dtype=float)
        if wl.size and (not np.all(np.isfinite(wl)) or np.any(wl <= 0)):
            raise FilmopticError(f"{self.label}: wavelengths must be positive numbers of nm")
        wl = self._check_range(wl, extrapolate)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            try:
                N = np.asarray(self._nk(wl), dtype=complex)
            except OverflowError:
                # Python's float power raises where numpy's gives inf (drude(1.5,1e300,2.3)).
                raise FilmopticError(
                    f"{self.label}: the formula overflows at these wavelengths (a coefficient far beyond "
                    "any material's); check its numbers"
                ) from None
        N = np.broadcast_to(N, wl.shape).copy()
        if not np.all(np.isfinite(N)):
            where = float(np.ravel(wl)[np.argmax(~np.isfinite(np.ravel(N)))])
            raise FilmopticError(
                f"{self.label}: no finite index at {where:g} nm (a resonance of the model sits "
                "there); move the resonance or the wavelength"
            )
        # k >= 0 by convention; rounding in formulas may leave -1e-17.
        N.imag = np.maximum(N.imag, 0.0)
        self._check_values(N, wl)
        return N

    def _check_values(self, N, wl) -> None:
        """Refuse indices no medium has (see :func:`check_index`); models first give their own
        message for n < 0."""
        check_index(N, self.label, wl)

    def free_parameters(self) -> list:
        """The unknown coefficients as ``[(name, Free), …]`` in reading order; ``[]`` if none."""
        return []

    def bind(self, values) -> "Material":
        """The same material with its free values replaced by ``values`` (in order)."""
        values = list(np.atleast_1d(values)) if values is not None else []
        if values:
            raise FilmopticError(f"material {self.name} has no free values to fill in")
        return self

    @property
    def label(self) -> str:
        """``name`` plus the dataset when it is not a model (for messages)."""
        if self.dataset in ("", "model") or ":" in self.name:
            return self.name
        return f"{self.name}:{self.dataset}"

    @property
    def notation(self) -> str:
        """How to write this material in stack notation so that it reads back the same."""
        return self.name

    def __repr__(self) -> str:
        return f"<{type(self).__name__} {self.label}>"

    def __str__(self) -> str:
        return self.name

    def _index_at(self, wavelength_nm: float) -> float:
        """n at one wavelength inside the range (for suggestions in messages)."""
        return float(np.real(self._nk(np.asarray([float(wavelength_nm)])))[0])

    # -- for subclasses -------------------------------------------------------------------
    def _nk(self, wavelength_nm: np.ndarray) -> np.ndarray:  # pragma: no cover - abstract
        raise NotImplementedError

    def _covering_hint(self, wl: np.ndarray) -> str:
        """`` (NAME:DATASET covers …)`` for library datasets of this material that do cover
        ``wl``; empty for models, files and where none does."""
        if self.dataset in ("", "model", "file") or ":" in self.name:
            return ""
        from .library import datasets_covering  # the library builds on this module

        covering = [i for i in datasets_covering(self.name, float(wl.min()), float(wl.max()))
                    if i.dataset != self.dataset]
        if not covering:
            return ""
        named = ", ".join(f"{i.name}:{i.dataset} ({format_range_nm(i.wavelength_range_nm)})"
                          for i in covering[:3])
        return f" such as {named}"

    def _check_range(self, wl: np.ndarray, extrapolate: bool) -> np.ndarray:
        lo, hi = self.wavelength_range_nm
        if not wl.size or (lo <= 0 and math.isinf(hi)):
            return wl
        # A hair of tolerance so that a grid ending on the table's last point passes.
        tol = 1e-9 * hi
        outside = (wl < lo - tol) | (wl > hi + tol)
        if np.any(outside):
            bad = wl[outside]
            worst = bad.min() if bad.min() < lo else bad.max()
            if not extrapolate:
                # A gas or liquid around the part barely disperses: a constant index is the
                # honest fix, better than holding every table's end values.
                constant = ""
                if self.kind == "ambient":
                    edge = lo if worst < lo else hi
                    constant = f", or give it as a constant index (--ambient n={self._index_at(edge):.5g})"
                raise WavelengthRangeError(
                    f"{self.label}: {worst:g} nm is outside its data range "
                    f"{format_range_nm(self.wavelength_range_nm)}; choose wavelengths inside it, "
                    f"pick another dataset{self._covering_hint(wl)}, or allow holding the end "
                    f"values (--extrapolate){constant}"
                )
            warnings.warn(
                f"{self.label}: data cover {format_range_nm(self.wavelength_range_nm)}; "
                f"holding the end values out to {worst:g} nm",
                UserWarning,
                stacklevel=3,
            )
        return np.clip(wl, lo, hi)


def coefficient_text(value) -> str:
    """How a coefficient is written back in notation (``?``, ``1..2`` or ``1.46``)."""
    if is_free(value):
        return str(value)
    return f"{float(value):.12g}"


def check_values(values, count: int, what: str) -> list:
    """Validate the numbers given to :meth:`Material.bind`."""
    values = [] if values is None else list(np.atleast_1d(np.asarray(values, dtype=float)))
    if len(values) != count:
        raise FilmopticError(f"{what}: expected {count} value(s) for its free coefficients, got {len(values)}")
    if not all(math.isfinite(v) for v in values):
        raise FilmopticError(f"{what}: free values must be finite numbers")
    return [float(v) for v in values]


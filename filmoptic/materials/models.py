"""Dispersion models as materials: constant index, Cauchy, Sellmeier, Drude and Lorentz.

Each model is a :class:`~filmoptic.materials.base.Material` valid at every wavelength. Any
coefficient may be a :class:`~filmoptic.params.Free` (an unknown for a fit); such a model reports
it through :meth:`free_parameters` and is made concrete by :meth:`bind`.

Units: Cauchy and Sellmeier take λ in micrometres (C coefficients in µm²), as their published
forms do; Drude and Lorentz take photon energies in electronvolts, E = hc/λ with
hc = 1239.841984 eV·nm.
"""

from __future__ import annotations

import math

import numpy as np

from filmoptic.errors import FilmopticError
from filmoptic.params import is_free

from .base import MAX_INDEX, MIN_INDEX, Material, check_index, check_values, coefficient_text

__all__ = ["Constant", "Cauchy", "Sellmeier", "Drude", "Lorentz", "HC_EV_NM", "photon_energy_ev"]

#: Planck constant times speed of light, eV·nm (CODATA 2018 exact values of h, c and e).
HC_EV_NM = 1239.841984


def photon_energy_ev(wavelength_nm):
    """Photon energy in eV for a wavelength in nm: E = hc/λ."""
    return HC_EV_NM / np.asarray(wavelength_nm, dtype=float)


def _index_from_epsilon(eps) -> np.ndarray:
    """N = sqrt(ε) on the branch with k ≥ 0 (and n ≥ 0)."""
    N = np.sqrt(np.asarray(eps, dtype=complex))
    # The principal root has Re ≥ 0; where ε is real and negative it gives +i·k already.
    return np.where(N.imag < 0, -N, N)


class _Model(Material):
    """A model with named coefficients, any of which may be free."""

    kind = "model"
    dataset = "model"
    reference = ""
    wavelength_range_nm = (0.0, math.inf)
    #: Function name in notation, e.g. ``"cauchy"``.
    keyword = ""

    def __init__(self, *coefficients):
        self._coefficients = tuple(
            c if is_free(c) else self._number(c) for c in coefficients
        )
        self._validate()
        self.name = self._format_name()

    def _format_name(self) -> str:
        return f"{self.keyword}({','.join(coefficient_text(c) for c in self._coefficients)})"

    # Subclasses name their coefficients (for free_parameters) in order.
    def _coefficient_names(self) -> list:  # pragma: no cover - abstract
        raise NotImplementedError

    def _validate(self) -> None:
        pass

    def _number(self, value) -> float:
        try:
            value = float(value)
        except (TypeError, ValueError):
            raise FilmopticError(f"{self.keyword}: coefficient {value!r} is not a number") from None
        if not math.isfinite(value):
            raise FilmopticError(f"{self.keyword}: coefficients must be finite, got {value!r}")
        return value

    def _values(self) -> list:
        return [float(c) for c in self._coefficients]

    def nk(self, wavelength_nm, *, extrapolate: bool = False) -> np.ndarray:
        """N = n + i·k at the given wavelengths (nm); refuses n < 0 and N = 0 (see below).

        A passive medium has Im ε = 2·n·k >= 0 and N = √ε on the branch k >= 0, so n >= 0; n = 0
        occurs only with k > 0, where ε is real and negative (the lossless limit of a free-electron
        metal, e.g. ``drude(1,9,0)`` below its plasma energy), which the engine handles. A formula
        fitted over one range (Cauchy's, most often) and used far outside it can run to n <= 0:
        that is a typo or a bad extrapolation, not a material, and it would give reflectances
        above those of a metal without any warning. Tables are checked for n > 0 when read.

        Raises
        ------
        FilmopticError
            Naming the model, the wavelength and the index, e.g. ``cauchy(1.5,-1,0) gives
            n = −5.43 at 380 nm; a refractive index must be positive``.
        """
        return super().nk(wavelength_nm, extrapolate=extrapolate)

    def _check_values(self, N, wl) -> None:
        bad = (N.real < 0) | ((N.real == 0) & (N.imag == 0))
        if np.any(bad):
            worst = np.unravel_index(np.argmin(np.where(bad, N.real, np.inf)), N.shape)
            value = f"{float(N.real[worst]):.3g}".replace("-", "−")
            raise FilmopticError(
                f"{self.label} gives n = {value} at {float(wl[worst]):g} nm; a refractive index "
                "must be positive"
            )
        check_index(N, self.label, wl)

    def free_parameters(self) -> list:
        return [
            (f"{self.keyword} {name}", c)
            for name, c in zip(self._coefficient_names(), self._coefficients)
            if is_free(c)
        ]

    def bind(self, values) -> Material:
        values = check_values(values, len(self.free_parameters()), self.name)
        if not values:
            return self
        it = iter(values)
        filled = [next(it) if is_free(c) else c for c in self._coefficients]
        return type(self)(*filled)

    def __eq__(self, other):
        return type(self) is type(other) and self._coefficients == other._coefficients

    def __hash__(self):
        return hash((type(self).__name__, self._coefficients))


class Constant(_Model):
    """A wavelength-independent index N = n + i·k.

    Parameters
    ----------
    n : float, complex or Free
        Refractive index; a complex value carries k in its imaginary part.
    k : float or Free, optional
        Extinction coefficient (k ≥ 0); default 0, or the imaginary part of a complex ``n``.

    Examples
    --------
    >>> Constant(1.46).nk([500.0, 600.0])
    array([1.46+0.j, 1.46+0.j])
    >>> Constant(2.54 + 3.43j).name
    'n=2.54+3.43j'
    """

    keyword = "n"

    def __init__(self, n, k=None):
        if isinstance(n, complex):
            if k is not None:
                raise FilmopticError("give k either in a complex n or separately, not both")
            n, k = n.real, n.imag
        super().__init__(n, 0.0 if k is None else k)

    def _coefficient_names(self):
        return ["n", "k"]

    def _validate(self):
        n, k = self._coefficients
        if not is_free(n) and n <= 0:
            raise FilmopticError(f"a refractive index must be positive, got n={n:g}")
        if not is_free(n) and not is_free(k) and abs(complex(n, k)) < MIN_INDEX:
            raise FilmopticError(
                f"n={n:.3g}{f'+{k:.3g}j' if k else ''} is not an optical constant: |N| = √(n² + k²) "
                f"must be at least {MIN_INDEX:g} (no medium has an index near zero)"
            )
        for name, value in (("n", n), ("k", k)):
            if not is_free(value) and value > MAX_INDEX:
                raise FilmopticError(
                    f"{name}={value:g} is not a plausible optical constant (at most {MAX_INDEX:g})"
                )
        if not is_free(k) and k < 0:
            raise FilmopticError(
                f"k must be >= 0 (filmoptic writes N = n + i·k), got {k:g}; drop the minus sign"
            )

    def _format_name(self):
        n, k = self._coefficients
        if not is_free(k) and k == 0:
            return f"n={coefficient_text(n)}"
        return f"n={coefficient_text(n)}+{coefficient_text(k)}j"

    def free_parameters(self):
        return [(f"index {name}", c) for name, c in zip(("n", "k"), self._coefficients) if is_free(c)]

    def bind(self, values):
        values = check_values(values, len(self.free_parameters()), self.name)
        if not values:
            return self
        it = iter(values)
        n, k = (next(it) if is_free(c) else c for c in self._coefficients)
        return Constant(n, k)

    def _nk(self, wl):
        n, k = self._values()
        return np.full(wl.shape, complex(n, k))


class Cauchy(_Model):
    r"""Cauchy dispersion n(λ) = A + B/λ² + C/λ⁴ (λ in µm), with an optional constant k.

    Parameters
    ----------
    A, B, C : float or Free
        Coefficients; B in µm², C in µm⁴.
    k : float or Free, optional
        A wavelength-independent extinction coefficient (default 0), written as a fourth
        argument ``cauchy(A,B,C,k)``.

    References
    ----------
    A.-L. Cauchy, *Mémoire sur la dispersion de la lumière* (1836); the three-term form as used
    for transparent films, e.g. H. G. Tompkins & E. A. Irene (eds.), *Handbook of Ellipsometry*
    (William Andrew, 2005), ch. 2.

    Examples
    --------
    >>> round(float(Cauchy(1.45, 0.004, 0.0).nk(500.0).real), 4)
    1.466
    """

    keyword = "cauchy"

    def __init__(self, A, B=0.0, C=0.0, k=0.0):
        super().__init__(A, B, C, k)

    def _format_name(self):
        text = [coefficient_text(c) for c in self._coefficients]
        k = self._coefficients[3]
        if not is_free(k) and k == 0:
            text = text[:3]
        return f"cauchy({','.join(text)})"

    def _coefficient_names(self):
        return ["A", "B", "C", "k"]

    def _validate(self):
        k = self._coefficients[3]
        if not is_free(k) and k < 0:
            raise FilmopticError(f"cauchy: k must be >= 0, got {k:g}")

    def _nk(self, wl):
        A, B, C, k = self._values()
        lam2 = (wl / 1000.0) ** 2
        return (A + B / lam2 + C / lam2**2) + 1j * k


class Sellmeier(_Model):
    r"""Sellmeier dispersion n² = 1 + Σ Bᵢ λ² / (λ² − Cᵢ) (λ in µm, Cᵢ in µm²), k = 0.

    Parameters
    ----------
    *coefficients : float or Free
        Pairs ``B1, C1[, B2, C2[, B3, C3]]``.

    References
    ----------
    W. Sellmeier, Ann. Phys. Chem. 219, 272 (1871); form as in I. H. Malitson, "Interspecimen
    comparison of the refractive index of fused silica", J. Opt. Soc. Am. 55, 1205 (1965).

    Examples
    --------
    >>> # Malitson's fused-silica coefficients (C = resonance wavelength squared)
    >>> m = Sellmeier(0.6961663, 0.0684043**2, 0.4079426, 0.1162414**2, 0.8974794, 9.896161**2)
    >>> round(float(m.nk(587.6).real), 4)
    1.4585
    """

    keyword = "sellmeier"

    def _coefficient_names(self):
        names = []
        for i in range(len(self._coefficients) // 2):
            names += [f"B{i + 1}", f"C{i + 1}"]
        return names

    def _validate(self):
        if len(self._coefficients) not in (2, 4, 6):
            raise FilmopticError(
                f"sellmeier takes 2, 4 or 6 numbers (B1,C1[,B2,C2[,B3,C3]]), got {len(self._coefficients)}"
            )

    def _nk(self, wl):
        c = self._values()
        lam2 = (wl / 1000.0) ** 2
        eps = 1.0 + sum(B * lam2 / (lam2 - C) for B, C in zip(c[0::2], c[1::2]))
        return _index_from_epsilon(eps)


class Drude(_Model):
    r"""Free-electron (Drude) metal: ε(E) = ε∞ − Ep² / (E² + i·Γ·E), energies in eV.

    Parameters
    ----------
    eps_inf : float or Free
        High-frequency dielectric constant (1 for an ideal free-electron gas).
    plasma_ev : float or Free
        Plasma energy ħωp in eV.
    damping_ev : float or Free
        Damping (collision rate) ħΓ in eV.

    References
    ----------
    P. Drude, Ann. Phys. 306, 566 (1900); form and sign as in A. D. Rakić, A. B. Djurišić,
    J. M. Elazar & M. L. Majewski, "Optical properties of metallic films for vertical-cavity
    optoelectronic devices", Appl. Opt. 37, 5271 (1998), eq. (2), with the e^(−iωt) time factor.

    Examples
    --------
    >>> N = Drude(1.0, 9.0, 0.05).nk(800.0)
    >>> bool(N.imag > N.real)
    True
    """

    keyword = "drude"

    def _coefficient_names(self):
        return ["eps_inf", "plasma_eV", "damping_eV"]

    def _validate(self):
        if len(self._coefficients) != 3:
            raise FilmopticError("drude takes 3 numbers: drude(eps_inf, plasma_eV, damping_eV)")
        damping = self._coefficients[2]
        if not is_free(damping) and damping < 0:
            raise FilmopticError(f"drude: the damping must be >= 0 eV, got {damping:g}")

    def _nk(self, wl):
        eps_inf, plasma, damping = self._values()
        E = photon_energy_ev(wl)
        eps = eps_inf - plasma**2 / (E * (E + 1j * damping))
        return _index_from_epsilon(eps)


class Lorentz(_Model):
    r"""Lorentz oscillators: ε(E) = ε∞ + Σⱼ fⱼ·E₀ⱼ² / (E₀ⱼ² − E² − i·Γⱼ·E), energies in eV.

    Parameters
    ----------
    eps_inf : float or Free
        Background dielectric constant.
    *oscillators : float or Free
        Triplets ``strength, centre_eV, width_eV`` for each oscillator: fⱼ is the oscillator's
        (dimensionless) contribution to the static dielectric constant, E₀ⱼ its resonance
        energy and Γⱼ its width (damping), both in eV.

    References
    ----------
    H. A. Lorentz, *The Theory of Electrons* (Teubner, 1909); the form follows M. Fox,
    *Optical Properties of Solids*, 2nd ed. (Oxford University Press, 2010), §2.2, with ε(0) =
    ε∞ + Σ fⱼ.

    Examples
    --------
    >>> m = Lorentz(1.0, 1.1, 12.0, 0.1)        # one oscillator in the far UV
    >>> round(float(m.nk(1e6).real), 4)          # far below resonance: sqrt(1 + 1.1)
    1.4491
    """

    keyword = "lorentz"

    def _coefficient_names(self):
        names = ["eps_inf"]
        for j in range((len(self._coefficients) - 1) // 3):
            names += [f"strength{j + 1}", f"centre{j + 1}_eV", f"width{j + 1}_eV"]
        return names

    def _validate(self):
        count = len(self._coefficients)
        if count < 4 or (count - 1) % 3:
            raise FilmopticError(
                "lorentz takes eps_inf followed by one or more triplets strength,centre_eV,width_eV "
                f"(4, 7, 10, … numbers), got {count}"
            )
        for j, value in enumerate(self._coefficients[1:]):
            if not is_free(value) and j % 3 and value < 0:
                raise FilmopticError(f"lorentz: centre and width energies must be >= 0 eV, got {value:g}")

    def _nk(self, wl):
        c = self._values()
        E = photon_energy_ev(wl)
        eps = np.full(E.shape, c[0], dtype=complex)
        for f, E0, width in zip(c[1::3], c[2::3], c[3::3]):
            eps = eps + f * E0**2 / (E0**2 - E**2 - 1j * width * E)
        return _index_from_epsilon(eps)

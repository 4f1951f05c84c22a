"""Effective-medium mixing: the Bruggeman approximation for a mix of two materials.

A film that is part one material and part another on a scale much finer than the wavelength
(a porous oxide, a metal–dielectric cermet, a rough interface) behaves like a uniform medium
whose dielectric function ε = N² follows from the two components and the volume fraction.
"""

from __future__ import annotations

import math

import numpy as np

from filmoptic.errors import FilmopticError
from filmoptic.params import is_free

from .base import Material, check_values, coefficient_text

__all__ = ["Bruggeman", "bruggeman_epsilon"]

BRUGGEMAN_REFERENCE = (
    "D. A. G. Bruggeman, Ann. Phys. 416, 636 (1935), doi:10.1002/andp.19354160705; "
    "D. E. Aspnes, Thin Solid Films 89, 249 (1982), doi:10.1016/0040-6090(82)90590-9"
)

# Strength order when a mix's kind is chosen: a trace of metal makes a film behave like one.
_KIND_PRIORITY = ("metal", "semiconductor", "dielectric", "substrate", "model", "ambient")


def bruggeman_epsilon(eps_a, eps_b, fraction_b):
    r"""Effective dielectric function of a two-phase Bruggeman mix.

    Solves :math:`(1-f)\frac{ε_a-ε}{ε_a+2ε} + f\frac{ε_b-ε}{ε_b+2ε} = 0` (spherical inclusions
    in three dimensions), i.e. the quadratic :math:`2ε^2 - bε - ε_aε_b = 0` with
    :math:`b = (2-3f)ε_a + (3f-1)ε_b`, and keeps the physical root: the one with the larger
    imaginary part (Im ε ≥ 0 for absorbing media), and among real roots the one with positive
    real part. This root is continuous in f and equals ε_a at f = 0 and ε_b at f = 1.

    Parameters
    ----------
    eps_a, eps_b : array_like of complex
        Dielectric functions of the first and second material (broadcast together).
    fraction_b : float or array_like
        Volume fraction of the second material, 0–1.

    Returns
    -------
    numpy.ndarray of complex

    References
    ----------
    D. A. G. Bruggeman, "Berechnung verschiedener physikalischer Konstanten von heterogenen
    Substanzen. I.", Ann. Phys. 416, 636 (1935). D. E. Aspnes, "Optical properties of thin
    films", Thin Solid Films 89, 249 (1982), eq. (8).

    Examples
    --------
    >>> complex(bruggeman_epsilon(2.25, 1.0, 0.0))
    (2.25+0j)
    """
    ea = np.asarray(eps_a, dtype=complex)
    eb = np.asarray(eps_b, dtype=complex)
    f = np.asarray(fraction_b, dtype=float)
    b = (2.0 - 3.0 * f) * ea + (3.0 * f - 1.0) * eb
    root = np.sqrt(b * b + 8.0 * ea * eb)
    plus = (b + root) / 4.0
    minus = (b - root) / 4.0
    scale = np.maximum(np.abs(ea), np.abs(eb)) + 1e-300
    # Prefer the larger imaginary part; when both are (numerically) real, the positive one.
    tie = np.abs(plus.imag - minus.imag) <= 1e-12 * scale
    pick_plus = np.where(tie, plus.real >= minus.real, plus.imag > minus.imag)
    return np.where(pick_plus, plus, minus)


class Bruggeman(Material):
    """Bruggeman effective medium of two materials; ``fraction`` is the volume share of the second.

    Written ``mix(HOST,GUEST,F)`` in stack notation, e.g. ``mix(TiO2,air,0.3)`` for a film with
    30 % voids. Either component may itself be a model, a mix or a library name; ``fraction`` may
    be a :class:`~filmoptic.params.Free` for fits.

    Parameters
    ----------
    host, guest : Material
        The first and second component.
    fraction : float or Free
        Volume fraction of ``guest``, 0–1.

    References
    ----------
    D. A. G. Bruggeman, Ann. Phys. 416, 636 (1935); D. E. Aspnes, Thin Solid Films 89, 249 (1982).

    Examples
    --------
    >>> from filmoptic.materials.models import Constant
    >>> mix = Bruggeman(Constant(1.5), Constant(1.0), 0.0)
    >>> mix.nk(550.0)
    array(1.5+0.j)
    """

    dataset = "mix"

    def __init__(self, host: Material, guest: Material, fraction):
        if not isinstance(host, Material) or not isinstance(guest, Material):
            raise FilmopticError("mix: both components must be materials")
        if not is_free(fraction):
            try:
                fraction = float(fraction)
            except (TypeError, ValueError):
                raise FilmopticError(f"mix: the fraction {fraction!r} is not a number") from None
            if not (0.0 <= fraction <= 1.0) or not math.isfinite(fraction):
                raise FilmopticError(
                    f"mix: the volume fraction of the second material must lie in 0–1, got {fraction:g}"
                )
        elif fraction.bounded and (fraction.low < 0 or fraction.high > 1):
            raise FilmopticError(f"mix: the fraction's bounds must lie in 0–1, got {fraction}")
        self.host = host
        self.guest = guest
        self.fraction = fraction
        self.name = f"mix({host.notation},{guest.notation},{coefficient_text(fraction)})"
        lo = max(host.wavelength_range_nm[0], guest.wavelength_range_nm[0])
        hi = min(host.wavelength_range_nm[1], guest.wavelength_range_nm[1])
        if lo > hi:
            raise FilmopticError(
                f"mix: the data of {host.label} and {guest.label} share no wavelengths"
            )
        self.wavelength_range_nm = (lo, hi)
        kinds = {host.kind, guest.kind}
        self.kind = next(k for k in _KIND_PRIORITY if k in kinds) if kinds <= set(_KIND_PRIORITY) else "model"
        parts = [p for p in (host.reference, guest.reference) if p]
        self.reference = f"Bruggeman effective medium: {BRUGGEMAN_REFERENCE}" + (
            "; components: " + " | ".join(parts) if parts else ""
        )

    def free_parameters(self) -> list:
        own = [("mix fraction", self.fraction)] if is_free(self.fraction) else []
        return self.host.free_parameters() + self.guest.free_parameters() + own

    def bind(self, values) -> Material:
        values = check_values(values, len(self.free_parameters()), self.name)
        if not values:
            return self
        n_host = len(self.host.free_parameters())
        n_guest = len(self.guest.free_parameters())
        host = self.host.bind(values[:n_host])
        guest = self.guest.bind(values[n_host:n_host + n_guest])
        fraction = values[-1] if is_free(self.fraction) else self.fraction
        return Bruggeman(host, guest, fraction)

    def _nk(self, wl):
        eps_a = self.host.nk(wl) ** 2
        eps_b = self.guest.nk(wl) ** 2
        eps = bruggeman_epsilon(eps_a, eps_b, self.fraction)
        N = np.sqrt(eps)
        return np.where(N.imag < 0, -N, N)

"""Anodising valve metals: oxide thickness from the voltage, and the colour it gives.

A valve metal (titanium, niobium, tantalum, aluminium, zirconium) anodised at a fixed voltage
grows a barrier oxide until the field across it falls to what the oxide conducts; the final
thickness is then close to proportional to the voltage. filmoptic uses the linear law

    d = nm_per_volt × V + offset_nm

whose slope (the anodising ratio) depends on the bath, its temperature, the current density and
the alloy, so every default below can be overridden. The defaults, per metal, with where they
come from:

=====  ==========  =========================================================================
metal  nm per V    source
=====  ==========  =========================================================================
Ti     2.0         from memory: the figure anodisers work with (common practice), inside the
                   1.5–3 nm/V spread of the electrochemistry literature (J. Aladjem, "Anodic
                   oxidation of titanium and its alloys", J. Mater. Sci. 8, 688 (1973))
Nb     2.3         from memory: near the values reported for amorphous anodic Nb2O5 in dilute
                   aqueous electrolytes (L. Young, *Anodic Oxide Films*, Academic Press 1961)
Ta     1.6         from memory: anodic Ta2O5 at room temperature (D. A. Vermilyea, Acta Metall.
                   1, 282 (1953); L. Young, *Anodic Oxide Films*, 1961)
Al     1.32        barrier film in 3 % ammonium tartrate, pH 5.5, about 25 °C: 13.2 Å/V,
                   J. Appl. Phys. (1979), doi:10.1063/1.326209 (read from its abstract); the
                   1.3–1.4 nm/V of J. W. Diggle, T. C. Downie & C. W. Goulding, Chem. Rev. 69,
                   365 (1969) (from memory)
Zr     2.0         from memory: anodic ZrO2 is reported near 2 nm/V (L. Young, *Anodic Oxide
                   Films*, 1961)
=====  ==========  =========================================================================

The offset (the air-formed oxide present before anodising, and any shift of the law's zero) is
0 nm by default. No open dataset measured on an *anodic* film was found for these oxides; the
colour model uses the amorphous deposited films of the library (stated per metal in
:data:`ANODIC_OXIDES`), whose index is close to that of anodic films but not the same.

Examples
--------
>>> law = growth_law("Ti")
>>> float(law.thickness_nm(25.0)), float(law.volts(50.0))
(50.0, 25.0)
>>> growth_law("nb", nm_per_volt=2.6, offset_nm=3).describe()
'Nb: d = 2.6 nm/V × V + 3 nm'
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from filmoptic.errors import FilmopticError

from .oxide_film import FilmColours, colour_matches, film_colours, oxide_stack

__all__ = ["GrowthLaw", "GROWTH_LAWS", "ANODIC_OXIDES", "ANODIZING_CAUTION", "growth_law",
           "anodizing_stack", "AnodizeColours", "VoltageMatch", "anodize_colours",
           "voltages_for_colour", "split_metal"]

#: Shown once by the commands that plan anodising.
ANODIZING_CAUTION = (
    "anodising uses live electrical current in acid or alkaline baths: wear eye and skin "
    "protection, ventilate, keep the power supply's output isolated and within its rating, never "
    "touch the part or the bath while the current is on, and follow local electrical and "
    "chemical-handling codes. Computed colours are a guide; test on an offcut first."
)


@dataclass(frozen=True)
class GrowthLaw:
    """Oxide thickness against anodising voltage: ``d = nm_per_volt × V + offset_nm``.

    Attributes
    ----------
    metal : str
    nm_per_volt : float
    offset_nm : float
    source : str
        Where the numbers come from ("given" when the user set them).
    """

    metal: str
    nm_per_volt: float
    offset_nm: float = 0.0
    source: str = ""

    def __post_init__(self):
        if not np.isfinite(self.nm_per_volt) or not 0 < self.nm_per_volt <= 100:
            raise FilmopticError(f"nm per volt must lie in (0, 100], got {self.nm_per_volt:g}")
        if not np.isfinite(self.offset_nm) or abs(self.offset_nm) > 1000:
            raise FilmopticError(f"the offset must lie within ±1000 nm, got {self.offset_nm:g}")

    def thickness_nm(self, volts):
        """Oxide thickness (nm) grown at ``volts``; refuses a voltage that would give d < 0."""
        v = np.asarray(volts, dtype=float)
        d = self.nm_per_volt * v + self.offset_nm
        if np.any(d < 0):
            bad = float(np.min(v[d < 0]) if v.ndim else v)
            raise FilmopticError(
                f"{bad:g} V gives a negative thickness with {self.describe()}; start the voltages higher"
            )
        return d

    def volts(self, thickness_nm):
        """The voltage that grows ``thickness_nm`` (the inverse of :meth:`thickness_nm`)."""
        return (np.asarray(thickness_nm, dtype=float) - self.offset_nm) / self.nm_per_volt

    def formula(self) -> str:
        return f"d = {self.nm_per_volt:g} nm/V × V + {self.offset_nm:g} nm"

    def describe(self) -> str:
        return f"{self.metal}: {self.formula()}"


_YOUNG_1961 = "L. Young, Anodic Oxide Films (Academic Press, London, 1961)"
#: Default laws (sources in the module docstring; "from memory" where no text was at hand).
GROWTH_LAWS = {
    "Ti": GrowthLaw("Ti", 2.0, 0.0, "from memory: common practice of anodisers, within the 1.5–3 nm/V of "
                    "J. Aladjem, J. Mater. Sci. 8, 688 (1973)"),
    "Nb": GrowthLaw("Nb", 2.3, 0.0, f"from memory: near the values in {_YOUNG_1961}"),
    "Ta": GrowthLaw("Ta", 1.6, 0.0, f"from memory: D. A. Vermilyea, Acta Metall. 1, 282 (1953); {_YOUNG_1961}"),
    "Al": GrowthLaw("Al", 1.32, 0.0, "13.2 Å/V in 3 % ammonium tartrate at about 25 °C, J. Appl. Phys. (1979), "
                    "doi:10.1063/1.326209; cf. J. W. Diggle et al., Chem. Rev. 69, 365 (1969)"),
    "Zr": GrowthLaw("Zr", 2.0, 0.0, f"from memory: near the values in {_YOUNG_1961}"),
}

#: The oxide each metal grows, and which library data stand for it (none is an anodic-film
#: measurement: no open dataset of one was found).
ANODIC_OXIDES = {
    "Ti": ("TiO2", "amorphous e-beam evaporated TiO2 film (TiO2:Franta-2015) in place of anodic TiO2"),
    "Nb": ("Nb2O5", "magnetron-sputtered Nb2O5 films (Nb2O5:Franta-2024) in place of anodic Nb2O5"),
    "Ta": ("Ta2O5", "amorphous e-beam evaporated Ta2O5 film (Ta2O5:Franta-2015) in place of anodic Ta2O5"),
    "Al": ("Al2O3", "amorphous e-beam evaporated Al2O3 film (Al2O3:Franta-2015) in place of an anodic barrier film"),
    "Zr": ("ZrO2", "cubic yttria-stabilised ZrO2 crystal (ZrO2:Synowicki-2004) in place of anodic ZrO2"),
}


def split_metal(metal: str, known_only: bool = True) -> tuple:
    """``"Ti:Werner-2009"`` → ``("Ti", "Ti:Werner-2009")``: the law's key and the metal's data.

    A metal without a default law is refused unless ``known_only`` is False (then its own law and
    oxide must be given).
    """
    text = str(metal).strip()
    name = text.split(":", 1)[0].strip()
    if not name:
        raise FilmopticError("name the metal to anodise, e.g. Ti")
    for key in GROWTH_LAWS:
        if key.lower() == name.lower():
            return key, key + text[len(name):]
    if not known_only:
        return name, text
    raise FilmopticError(
        f"no default anodising law for {name!r} (filmoptic has {', '.join(GROWTH_LAWS)}); for another "
        "metal give the law with --nm-per-volt and the oxide with --oxide"
    )


def growth_law(metal: str, nm_per_volt=None, offset_nm=None) -> GrowthLaw:
    """The default law for ``metal`` (Ti, Nb, Ta, Al, Zr), with any of its numbers overridden.

    Parameters
    ----------
    metal : str
        Case-insensitive; ``NAME:DATASET`` is accepted (the dataset is ignored here).
    nm_per_volt, offset_nm : float, optional
        Your bath's numbers; the source then reads "given".
    """
    key, _ = split_metal(metal, known_only=nm_per_volt is None)
    if key not in GROWTH_LAWS:
        return GrowthLaw(key, float(nm_per_volt), float(offset_nm or 0.0), "given")
    law = GROWTH_LAWS[key]
    if nm_per_volt is not None or offset_nm is not None:
        law = replace(law,
                      nm_per_volt=float(law.nm_per_volt if nm_per_volt is None else nm_per_volt),
                      offset_nm=float(law.offset_nm if offset_nm is None else offset_nm),
                      source="given")
    return law


def anodizing_stack(metal: str, oxide: str | None = None) -> str:
    """The stack of an anodised part: ``"TiO2 ? / Ti"``, or with your own oxide or metal data.

    Examples
    --------
    >>> anodizing_stack("nb"), anodizing_stack("Ti:Werner-2009", oxide="TiO2:Jolivet-2023-amorphous")
    ('Nb2O5 ? / Nb', 'TiO2:Jolivet-2023-amorphous ? / Ti:Werner-2009')
    """
    key, metal_text = split_metal(metal, known_only=bool(oxide) is False)
    return oxide_stack(oxide if oxide else ANODIC_OXIDES[key][0], metal_text)


@dataclass(frozen=True)
class AnodizeColours:
    """Colour against anodising voltage.

    Attributes
    ----------
    law : GrowthLaw
    volts : numpy.ndarray, shape (n,)
    film : FilmColours
        Thicknesses (``film.thickness_nm``), reflected colours and luminous reflectance.
    oxide_note : str
        Which data stand for the anodic oxide.
    """

    law: GrowthLaw
    volts: np.ndarray
    film: FilmColours
    oxide_note: str


@dataclass(frozen=True)
class VoltageMatch:
    """One voltage (one interference order) whose colour comes close to the wanted one."""

    volts: float
    low_volts: float
    high_volts: float
    thickness_nm: float
    delta_E00: float
    order: int
    Lab: tuple
    hex: str


def _oxide_note(metal, oxide):
    key, _ = split_metal(metal, known_only=not oxide)
    return f"oxide data: {oxide}" if oxide else f"oxide data: {ANODIC_OXIDES[key][1]}"


def anodize_colours(metal: str, volts, *, law: GrowthLaw | None = None, oxide: str | None = None,
                    illuminant="D65", observer=2, angle_deg=0.0, progress=None) -> AnodizeColours:
    """Reflected colour of ``metal`` anodised at every voltage in ``volts``, in one engine call.

    Parameters
    ----------
    metal : str
        Ti, Nb, Ta, Al or Zr (``NAME:DATASET`` picks the metal's data).
    volts : array_like
        Anodising voltages, V.
    law : GrowthLaw, optional
        Default: :func:`growth_law` of the metal.
    oxide : str, optional
        The oxide as written in a stack (default per :data:`ANODIC_OXIDES`).
    illuminant, observer, angle_deg, progress
        As for :func:`filmoptic.colorimetry.colour_sweep`.

    Returns
    -------
    AnodizeColours

    Examples
    --------
    >>> chart = anodize_colours("Ti", [20, 25, 30])
    >>> chart.film.thickness_nm.tolist(), chart.film.colours.hex.tolist()
    ([40.0, 50.0, 60.0], ['#713b72', '#3d64ab', '#5c98c5'])
    """
    law = law or growth_law(metal)
    v = np.asarray(volts, dtype=float).reshape(-1)
    if v.size == 0:
        raise FilmopticError("no voltages to chart")
    if not np.all(np.isfinite(v)) or np.any(v < 0):
        raise FilmopticError("anodising voltages must be finite and not negative")
    film = film_colours(anodizing_stack(metal, oxide), law.thickness_nm(v), illuminant=illuminant,
                        observer=observer, angle_deg=angle_deg, progress=progress, what="anodize")
    return AnodizeColours(law=law, volts=v, film=film, oxide_note=_oxide_note(metal, oxide))


def voltages_for_colour(metal: str, lab, *, volts_range=(0.0, 120.0), law: GrowthLaw | None = None,
                        oxide: str | None = None, tolerance=None, illuminant="D65",
                        angle_deg=0.0) -> tuple:
    """Every voltage in ``volts_range`` whose colour best matches ``lab``, lowest first.

    Each interference order that brings the colour round again is listed with its ΔE00; with a
    ``tolerance`` (largest ΔE00 accepted) only those within it, each with the span of voltage
    that stays within it. Returns ``(matches, closest)``: ``closest`` is the nearest approach
    when nothing is within the tolerance, else None.

    Examples
    --------
    >>> matches, _ = voltages_for_colour("Ti", (45.2, 5.9, -41.0), volts_range=(0, 100), tolerance=10)
    >>> [(round(m.volts, 1), round(m.low_volts, 1), round(m.high_volts, 1), round(m.delta_E00, 1))
    ...  for m in matches]
    [(25.6, 23.6, 28.0, 0.0), (84.4, 83.6, 85.2, 8.9)]
    """
    law = law or growth_law(metal)
    lo, hi = (float(x) for x in volts_range)
    if not 0 <= lo < hi:
        raise FilmopticError(f"the voltage range must satisfy 0 <= start < stop, got {lo:g}:{hi:g}")
    d_lo, d_hi = (float(x) for x in law.thickness_nm([lo, hi]))
    result = colour_matches(anodizing_stack(metal, oxide), lab, range_nm=(d_lo, d_hi),
                            tolerance=tolerance, illuminant=illuminant, angle_deg=angle_deg, what="anodize")

    def as_volts(m):
        if m is None:
            return None
        return VoltageMatch(
            volts=float(law.volts(m.thickness_nm)), low_volts=float(law.volts(m.low_nm)),
            high_volts=float(law.volts(m.high_nm)), thickness_nm=m.thickness_nm,
            delta_E00=m.delta_E00, order=m.order, Lab=m.Lab, hex=m.hex,
        )

    return tuple(as_volts(m) for m in result.matches), as_volts(result.closest)

"""How thin metal films depart from tabulated constants: thin-film datasets, the thickness below
which continuous-film constants stop being trustworthy, and the native oxide a metal grows.

Three facts of the trade meet here.

* A dataset is only as good as its sample. :func:`sample_form` says from a dataset's ``sample``
  line whether it was measured on a thin film (with its thickness), a thick film, bulk material
  or is a model fitted to several sources; ``filmoptic materials`` shows it.
* Below a few nanometres (Ti, Cr, Ni, Al, …) or roughly 10–15 nm (Ag, Au, Cu, which grow as
  islands first), a metal film is not the continuous film its table describes: constants measured
  on thick films overstate its reflectance and understate its absorption (common practice, from
  memory). :func:`continuity_limit_nm` gives the thickness below which filmoptic warns.
* A reactive metal exposed to air carries a native oxide a few nanometres thick. Growing it
  consumes metal: each nm of oxide uses ``1/ratio`` nm of metal, ``ratio`` being the
  Pilling–Bedworth ratio of oxide to metal volume per metal atom (Pilling & Bedworth 1923),
  which a film clamped to its substrate takes up entirely in its thickness.
  :data:`NATIVE_OXIDES` lists them; the stack notation ``METAL D + Xnm oxide`` uses them.

References
----------
.. [1] N. B. Pilling and R. E. Bedworth, "The oxidation of metals at high temperatures",
       J. Inst. Metals 29, 529–591 (1923).
.. [2] D. R. Lide (ed.), *CRC Handbook of Chemistry and Physics*, CRC Press: densities and
       molar masses below (values from memory of that handbook's tables).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

__all__ = [
    "THIN_FILM_NM",
    "CONTINUITY_NM",
    "NativeOxide",
    "NATIVE_OXIDES",
    "sample_form",
    "continuity_limit_nm",
    "thin_metal_warning",
    "pilling_bedworth_ratio",
]

#: A dataset measured on a film at most this thick counts as a thin film: its constants carry the
#: film's own structure (grains, islands, surface oxide) rather than the bulk metal's.
THIN_FILM_NM = 30.0

#: Thickness (nm) below which a metal film is not yet the continuous film that thick-film
#: constants describe. Noble metals (Ag, Au, Cu) grow as islands on glass and oxides until about
#: 10–15 nm; reactive transition metals wet the surface and are continuous from a few nm, but
#: their top 2–3 nm turn to oxide in air. Common practice, from memory; the literature on
#: percolation of evaporated silver and gold reports thresholds within these ranges.
CONTINUITY_NM = {
    "Ag": 12.0, "Au": 10.0, "Cu": 10.0,
    "Al": 5.0, "Ti": 5.0, "Cr": 5.0, "Ni": 5.0, "Mo": 5.0, "W": 5.0, "Pt": 5.0,
    "Nb": 5.0, "Ta": 5.0, "Zr": 5.0, "Hf": 5.0, "Fe": 5.0, "Co": 5.0, "Pd": 5.0, "Zn": 5.0,
}


@dataclass(frozen=True)
class NativeOxide:
    """The oxide a metal grows in air, and how much metal it consumes.

    Attributes
    ----------
    metal : str
        Library name of the metal (``"Al"``).
    oxide : str
        Library name of its oxide (``"Al2O3"``), used by ``+ Xnm oxide`` in a stack.
    metal_atoms : int
        Metal atoms per oxide formula unit (2 for Al2O3).
    metal_molar_mass, metal_density : float
        g/mol and g/cm³ of the metal.
    oxide_molar_mass, oxide_density : float
        g/mol and g/cm³ of the oxide.
    """

    metal: str
    oxide: str
    metal_atoms: int
    metal_molar_mass: float
    metal_density: float
    oxide_molar_mass: float
    oxide_density: float

    @property
    def ratio(self) -> float:
        """Pilling–Bedworth ratio: volume of oxide per volume of metal consumed."""
        return pilling_bedworth_ratio(self.metal_molar_mass, self.metal_density, self.oxide_molar_mass,
                                      self.oxide_density, self.metal_atoms)

    def consumed_nm(self, oxide_nm: float) -> float:
        """Metal thickness used up by ``oxide_nm`` of oxide on a film clamped to its substrate."""
        return float(oxide_nm) / self.ratio


def pilling_bedworth_ratio(metal_molar_mass, metal_density, oxide_molar_mass, oxide_density,
                           metal_atoms=1) -> float:
    """Volume of oxide formed per volume of metal consumed (Pilling & Bedworth 1923).

    ``(M_oxide · ρ_metal) / (n · M_metal · ρ_oxide)`` with ``n`` metal atoms per oxide formula.

    Examples
    --------
    >>> round(pilling_bedworth_ratio(26.98, 2.70, 101.96, 3.95, 2), 2)   # Al → Al2O3
    1.29
    """
    return (oxide_molar_mass * metal_density) / (metal_atoms * metal_molar_mass * oxide_density)


# Molar masses and densities of the crystalline metals and oxides (CRC Handbook of Chemistry and
# Physics; from memory). Native oxides are often amorphous and less dense, which raises the
# ratio; the crystalline values are the ones Pilling and Bedworth tabulated. Si → SiO2 gives
# 2.27, i.e. 0.44 nm of silicon per nm of thermal oxide, the figure of the trade (Deal & Grove,
# J. Appl. Phys. 36, 3770 (1965)).
NATIVE_OXIDES = {
    oxide.metal: oxide for oxide in (
        NativeOxide("Al", "Al2O3", 2, 26.98, 2.70, 101.96, 3.95),
        NativeOxide("Ti", "TiO2", 1, 47.87, 4.51, 79.87, 4.25),
        NativeOxide("Cr", "Cr2O3", 2, 52.00, 7.19, 151.99, 5.22),
        NativeOxide("Ni", "NiO", 1, 58.69, 8.91, 74.69, 6.67),
        NativeOxide("Cu", "Cu2O", 2, 63.55, 8.96, 143.09, 6.00),
        NativeOxide("Si", "SiO2", 1, 28.09, 2.33, 60.08, 2.20),
        NativeOxide("Zn", "ZnO", 1, 65.38, 7.14, 81.38, 5.61),
        NativeOxide("Zr", "ZrO2", 1, 91.22, 6.52, 123.22, 5.68),
        NativeOxide("Hf", "HfO2", 1, 178.49, 13.31, 210.49, 9.68),
        NativeOxide("Ta", "Ta2O5", 2, 180.95, 16.69, 441.89, 8.20),
        NativeOxide("Nb", "Nb2O5", 2, 92.91, 8.57, 265.81, 4.60),
        NativeOxide("W", "WO3", 1, 183.84, 19.25, 231.84, 7.16),
        NativeOxide("Mo", "MoO3", 1, 95.95, 10.28, 143.94, 4.69),
    )
}

_NM_RE = re.compile(r"(\d+(?:\.\d+)?)\s*(?:–|-|to)?\s*(\d+(?:\.\d+)?)?\s*nm\b")


def sample_form(sample: str) -> str:
    """How a dataset's sample was made, from its ``sample`` line.

    Returns ``"thin film, N nm"`` (a film at most :data:`THIN_FILM_NM` thick), ``"film"``,
    ``"model fit"`` (a model fitted to several sources) or ``"bulk"``.

    Examples
    --------
    >>> sample_form("magnetron-sputtered film, 12 nm, on fused silica")
    'thin film, 12 nm'
    >>> sample_form("evaporated films (thickness 18.5–50 nm), room temperature")
    'film'
    >>> sample_form("bulk fused silica, 20 °C (dispersion formula)")
    'bulk'
    """
    text = (sample or "").lower()
    if not text:
        return ""
    if "model" in text and "fitted" in text:
        return "model fit"
    if "film" in text:
        sizes = [float(b or a) for a, b in _NM_RE.findall(text)]
        if sizes and max(sizes) <= THIN_FILM_NM:
            return f"thin film, {max(sizes):g} nm"
        return "film"
    return "bulk"


def continuity_limit_nm(material) -> float | None:
    """Thickness below which ``material``'s tabulated constants stop describing a film of it, or
    None (not a metal filmoptic knows, or a model, mix or user file)."""
    if getattr(material, "kind", "") != "metal":
        return None
    return CONTINUITY_NM.get(getattr(material, "name", ""))


def thin_metal_warning(layers) -> str | None:
    """One plain line naming every metal layer thinner than its continuity limit, else None.

    Parameters
    ----------
    layers : iterable of (material, thickness_nm)
        The metal layers to judge (others are ignored), with the thickness of metal that is
        left (after any native oxide).

    Examples
    --------
    >>> from filmoptic.materials import get_material
    >>> thin_metal_warning([(get_material("Ag"), 20.0)]) is None
    True
    >>> print(thin_metal_warning([(get_material("Ag"), 7.5)]))  # doctest: +ELLIPSIS
    Ag 7.5 nm is below about 12 nm, where Ag films are still islands rather than ...
    """
    found = {}
    for material, thickness_nm in layers:
        limit = continuity_limit_nm(material)
        if limit is None or thickness_nm is None or not float(thickness_nm) < limit:
            continue
        name = material.name
        if name not in found or thickness_nm < found[name][0]:
            found[name] = (float(thickness_nm), limit)
    if not found:
        return None
    parts = []
    for name, (thickness, limit) in found.items():
        state = (f"where {name} films are still islands rather than a continuous film"
                 if name in ("Ag", "Au", "Cu") else
                 f"where a {name} film is mostly surface and native oxide rather than metal")
        parts.append(f"{name} {thickness:.3g} nm is below about {limit:g} nm, {state}")
    return ("; ".join(parts) + " (common practice): constants measured on thicker films overstate "
            "the reflectance of such a film and understate its absorption; calibrate with a test run"
            + "".join(_thin_film_hint(name) for name in found))


def _thin_film_hint(name: str) -> str:
    """'; thin-film data for Ag: Ag:Ciesielski-2017, …' when the library holds any."""
    from .library import list_materials

    thin = [info.label for info in list_materials()
            if info.name == name and info.form.startswith("thin film")]
    return f"; thin-film data for {name}: {', '.join(thin)}" if thin else ""

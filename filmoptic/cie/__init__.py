"""The CIE data and closed-form colour transforms that filmoptic's colour path uses.

Two modules, both plain numpy:

* :mod:`filmoptic.cie.tables` reads the shipped CIE tables — the colour-matching functions of the
  CIE 1931 2° and CIE 1964 10° standard observers, the photopic luminous efficiency V(λ) and the
  illuminants filmoptic offers by name. The tables are generated from colour-science's copies of
  the CIE data by ``tools/build_ciedata.py`` and are equal to them value for value.
* :mod:`filmoptic.cie.transforms` holds the formulas: chromaticity, CIELAB and LCh, the Bradford
  chromatic adaptation, sRGB (IEC 61966-2-1) and the CIEDE2000 colour difference.

Together they let a command compute colours without importing colour-science, which stays the
source of the tables, the reference the tests compare with, and the path for everything beyond
the shipped set (other illuminants by name, Munsell notation, correlated colour temperature).
"""

from .tables import SHIPPED_ILLUMINANTS, cmf_table, illuminant_table, photopic_table, read_table
from .transforms import (
    Lab_to_LCh,
    Lab_to_XYZ,
    XYZ_to_Lab,
    XYZ_to_xy,
    bradford_matrix,
    delta_e00,
    srgb_decode,
    srgb_encode,
    srgb_to_XYZ_matrix,
    white_XYZ,
    XYZ_to_srgb_matrix,
)

__all__ = [
    "SHIPPED_ILLUMINANTS", "cmf_table", "illuminant_table", "photopic_table", "read_table",
    "XYZ_to_xy", "XYZ_to_Lab", "Lab_to_XYZ", "Lab_to_LCh", "white_XYZ", "bradford_matrix",
    "XYZ_to_srgb_matrix", "srgb_to_XYZ_matrix", "srgb_encode", "srgb_decode", "delta_e00",
]

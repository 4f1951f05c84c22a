"""The shipped CIE tables: colour-matching functions, V(λ) and the illuminants offered by name.

Each table is a plain-text file in ``filmoptic/cie/data/``: a header of ``# key: value`` lines
(what the table is, the publication it comes from, the colour-science release it was copied from)
and rows of ``wavelength_nm value…`` written with every digit of the binary value, so that the
numbers read back are exactly colour-science's. ``tools/build_ciedata.py`` writes them; nothing
at run time imports colour-science to get them.

=========================  ==========================================================  ===========
file                       contents                                                     grid
=========================  ==========================================================  ===========
``cmf_2.txt``              x̄, ȳ, z̄ of the CIE 1931 2° standard colorimetric observer    360–830/1
``cmf_10.txt``             x̄₁₀, ȳ₁₀, z̄₁₀ of the CIE 1964 10° observer                   360–830/1
``v_photopic.txt``         V(λ), the CIE 1924 photopic luminous efficiency              360–830/1
``illuminant_NAME.txt``    relative spectral power of A, C, D50, D55, D65, D75, E,      5 nm
                           F1–F12 and the LED series (LED-B1 … LED-V2)
=========================  ==========================================================  ===========

References
----------
ISO/CIE 11664-1:2019, *Colorimetry — Part 1: CIE standard colorimetric observers*.
ISO/CIE 11664-2:2022, *Colorimetry — Part 2: CIE standard illuminants*.
CIE 015:2018, *Colorimetry*, 4th ed. (doi:10.25039/TR.015.2018), Tables 5–10 (illuminants).
ISO/CIE 23539:2023, *Photometry — The CIE system of physical photometry* (V(λ)).

Examples
--------
>>> wl, v = photopic_table()
>>> float(v[wl == 555.0][0])
1.0
>>> wl, spd = illuminant_table("D65")
>>> float(spd[wl == 560.0][0]), (float(wl[0]), float(wl[-1]))
(100.0, (300.0, 780.0))
"""

from __future__ import annotations

from functools import lru_cache
from pathlib import Path

import numpy as np

from filmoptic.errors import DataFileError

__all__ = ["SHIPPED_ILLUMINANTS", "DATA_FOLDER", "read_table", "cmf_table", "photopic_table",
           "illuminant_table", "illuminant_file", "table_header"]

#: Where the tables live (installed with the package).
DATA_FOLDER = Path(__file__).resolve().parent / "data"

#: The illuminants shipped as tables, by filmoptic's names (the F series is F1–F12 as in
#: CIE 015:2018; colour-science calls it FL1–FL12).
SHIPPED_ILLUMINANTS = (
    ("A", "C", "D50", "D55", "D65", "D75", "E")
    + tuple(f"F{i}" for i in range(1, 13))
    + ("LED-B1", "LED-B2", "LED-B3", "LED-B4", "LED-B5", "LED-BH1", "LED-RGB1", "LED-V1", "LED-V2")
)


def read_table(path) -> tuple[dict, np.ndarray]:
    """The header (``# key: value`` lines) and the rows of a CIE table file.

    Returns
    -------
    header : dict
    rows : numpy.ndarray, shape (n, columns)
        Wavelength in the first column.
    """
    path = Path(path)
    header = {}
    body = []
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise DataFileError(f"CIE table {path} cannot be read: {exc.strerror or exc}") from None
    for line in text.splitlines():
        if line.startswith("#"):
            key, sep, value = line[1:].partition(":")
            if sep:
                header[key.strip().lower()] = value.strip()
        elif line.strip():
            body.append(line)
    columns = len(header.get("columns", "").split()) or len(body[0].split())
    try:
        rows = np.array(" ".join(body).split(), dtype=float).reshape(-1, columns)
    except ValueError:
        raise DataFileError(f"CIE table {path} is damaged: expected {columns} numbers per row") from None
    rows.setflags(write=False)
    return header, rows


@lru_cache(maxsize=None)
def _load(name: str) -> tuple[dict, np.ndarray]:
    return read_table(DATA_FOLDER / name)


def table_header(name: str) -> dict:
    """The header of a shipped table file (``"cmf_2.txt"``, ``"illuminant_D65.txt"``, …)."""
    return dict(_load(name)[0])


def cmf_table(observer: int) -> tuple[np.ndarray, np.ndarray]:
    """Wavelengths (nm) and x̄, ȳ, z̄ (shape (n, 3)) of the 2° (CIE 1931) or 10° (CIE 1964) observer."""
    if observer not in (2, 10):
        raise ValueError(f"shipped observers are 2 and 10, not {observer!r}")
    rows = _load(f"cmf_{observer}.txt")[1]
    return rows[:, 0], rows[:, 1:]


def photopic_table() -> tuple[np.ndarray, np.ndarray]:
    """Wavelengths (nm) and V(λ), the CIE 1924 photopic luminous efficiency."""
    rows = _load("v_photopic.txt")[1]
    return rows[:, 0], rows[:, 1]


def illuminant_file(name: str) -> str:
    """The file name of a shipped illuminant (filmoptic's name, e.g. ``"F11"``)."""
    return f"illuminant_{name}.txt"


def illuminant_table(name: str) -> tuple[np.ndarray, np.ndarray]:
    """Wavelengths (nm) and relative spectral power of a shipped illuminant (``"D65"``, ``"F11"``…)."""
    if name not in SHIPPED_ILLUMINANTS:
        raise ValueError(f"{name!r} is not a shipped illuminant")
    rows = _load(illuminant_file(name))[1]
    return rows[:, 0], rows[:, 1]

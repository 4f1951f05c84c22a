"""Parsing of user quantities (filmoptic.units): our own notation, checked against its definition."""

from __future__ import annotations

import numpy as np
import pytest

from filmoptic.errors import FilmopticError
from filmoptic.units import (
    parse_angles_deg,
    parse_duration_s,
    parse_fraction,
    parse_length_nm,
    parse_range_nm,
    parse_wavelengths_nm,
)


@pytest.mark.parametrize(
    "text, nm",
    [("55nm", 55.0), ("1.2um", 1200.0), ("1.2 µm", 1200.0), ("3mm", 3e6), ("0nm", 0.0), ("2.5e1nm", 25.0)],
)
def test_lengths(text, nm):
    assert parse_length_nm(text) == pytest.approx(nm)


@pytest.mark.parametrize("text, fragment", [("55", "no unit"), ("-5nm", "positive"), ("5 furlongs", "unit"), ("2m", "unit")])
def test_bad_lengths(text, fragment):
    with pytest.raises(FilmopticError, match=fragment):
        parse_length_nm(text)


def test_wavelength_grid_is_inclusive_and_exact():
    wl = parse_wavelengths_nm("380:780:5")
    assert wl[0] == 380 and wl[-1] == 780 and len(wl) == 81
    np.testing.assert_array_equal(parse_wavelengths_nm("633,532"), [633.0, 532.0])


@pytest.mark.parametrize("text", ["", "780:380:5", "380:780:0", "380:780", "a:b:c", "-5,10", "1:1e9:0.001"])
def test_bad_wavelengths(text):
    with pytest.raises(FilmopticError):
        parse_wavelengths_nm(text)


def test_fractions():
    assert parse_fraction("30%") == pytest.approx(0.3)
    assert parse_fraction("0.3") == pytest.approx(0.3)
    for bad in ("130%", "-0.1", "1.5", "abc"):
        with pytest.raises(FilmopticError):
            parse_fraction(bad)


@pytest.mark.parametrize("text, seconds", [("300s", 300), ("5min", 300), ("1h", 3600), ("1h30min", 5400), ("90", 90)])
def test_durations(text, seconds):
    assert parse_duration_s(text) == pytest.approx(seconds)


@pytest.mark.parametrize("text", ["0s", "-5min", "5 fortnights", "min", ""])
def test_bad_durations(text):
    with pytest.raises(FilmopticError):
        parse_duration_s(text)


def test_ranges_and_angles():
    assert parse_range_nm("0:200:2") == (0.0, 200.0, 2.0)
    assert parse_range_nm("5nm:80nm") == (5.0, 80.0)
    with pytest.raises(FilmopticError):
        parse_range_nm("80:5")
    np.testing.assert_array_equal(parse_angles_deg("0:60:15"), [0, 15, 30, 45, 60])
    with pytest.raises(FilmopticError):
        parse_angles_deg("0:90:15")

"""Reading measured spectra (filmoptic.inverse.measured.read_spectrum).

The files here are written by the tests in the layouts spectrometer software exports (comma,
semicolon, tab and space separated; percent or fraction; nm or µm) — a fact of the trade, common
practice. The numbers in them are arbitrary sample values for the parser, not physics.
"""

from __future__ import annotations

import numpy as np
import pytest

from filmoptic.errors import DataFileError
from filmoptic.inverse.measured import read_spectrum


def write(tmp_path, name, text, encoding="utf-8"):
    path = tmp_path / name
    path.write_bytes(text.encode(encoding))
    return path


@pytest.mark.parametrize(
    "name, text",
    [
        ("comma.csv", "wavelength (nm),T (%)\n400,90.0\n500,91.5\n600,92.0\n"),
        ("semicolon.csv", "Wavelength [nm];%T\n400;90,0\n500;91,5\n600;92,0\n"),
        ("tabs.tsv", "lambda_nm\tTransmittance (%)\n400\t90.0\n500\t91.5\n600\t92.0\n"),
        ("spaces.txt", "wavelength (nm)   T (%)\n400   90.0\n500   91.5\n600   92.0\n"),
        ("micron.txt", "lambda_um T\n0.4 0.900\n0.5 0.915\n0.6 0.920\n"),
        ("fraction.csv", "wl nm, transmission fraction\n400,0.900\n500,0.915\n600,0.920\n"),
        ("latin1.csv", "Wavelength (µm),T [%]\n0.4,90.0\n0.5,91.5\n0.6,92.0\n"),
    ],
)
def test_layouts_give_the_same_spectrum(tmp_path, name, text):
    encoding = "latin-1" if name.startswith("latin1") else "utf-8"
    s = read_spectrum(write(tmp_path, name, text, encoding))
    assert s.quantity == "T"
    np.testing.assert_allclose(s.wavelength_nm, [400, 500, 600])
    np.testing.assert_allclose(s.values, [0.90, 0.915, 0.92])
    assert s.sigma is None


def test_reflectance_header_and_preamble(tmp_path):
    text = (
        "Instrument export v2\n"
        "Sample: test piece\n"
        "# comment\n"
        "Wavelength (nm), %R\n"
        "450, 4.2\n"
        "\n"
        "550, 4.3\n"
    )
    s = read_spectrum(write(tmp_path, "r.csv", text))
    assert s.quantity == "R"
    np.testing.assert_allclose(s.values, [0.042, 0.043])
    assert any("preamble" in note for note in s.notes)


def test_units_from_magnitude_are_noted(tmp_path):
    s = read_spectrum(write(tmp_path, "bare.txt", "0.40 88\n0.50 89\n0.60 90\n"), quantity="T")
    np.testing.assert_allclose(s.wavelength_nm, [400, 500, 600])
    np.testing.assert_allclose(s.values, [0.88, 0.89, 0.90])
    assert any("µm" in note for note in s.notes)
    assert any("percent" in note for note in s.notes)
    s = read_spectrum(write(tmp_path, "bare_nm.txt", "400 0.88\n500 0.89\n"), quantity="R")
    np.testing.assert_allclose(s.wavelength_nm, [400, 500])
    assert s.quantity == "R"


def test_unsorted_rows_sorted_and_duplicates_averaged(tmp_path):
    text = "wavelength,T,sigma\n600,0.92,0.002\n400,0.90,0.002\n500,0.91,0.002\n500,0.93,0.002\n"
    s = read_spectrum(write(tmp_path, "dup.csv", text))
    np.testing.assert_allclose(s.wavelength_nm, [400, 500, 600])
    np.testing.assert_allclose(s.values, [0.90, 0.92, 0.92])
    # Mean of two readings with sigma each: sigma / sqrt(2) (propagation of uncertainty).
    np.testing.assert_allclose(s.sigma, [0.002, 0.002 / np.sqrt(2), 0.002])
    assert any("sorted" in n for n in s.notes) and any("averaged" in n for n in s.notes)


def test_sigma_column_in_percent_follows_values(tmp_path):
    s = read_spectrum(write(tmp_path, "s.csv", "wavelength (nm),T (%),u(T)\n400,90,0.5\n500,91,0.5\n"))
    np.testing.assert_allclose(s.sigma, [0.005, 0.005])


def test_junk_rows_reported_by_line_number(tmp_path):
    text = "wavelength (nm),T\n400,0.90\n450,abc\n500,nan\n550\n-3,0.5\n600,0.92\n"
    s = read_spectrum(write(tmp_path, "junk.csv", text))
    np.testing.assert_allclose(s.wavelength_nm, [400, 600])
    note = next(n for n in s.notes if "skipped line" in n)
    for lineno in ("3", "4", "5", "6"):
        assert lineno in note


@pytest.mark.parametrize(
    "text, fragments",
    [
        ("", ("empty",)),
        ("# only a comment\n\n", ("empty",)),
        ("wavelength,T\nfoo,bar\n", ("no numeric rows",)),
        ("wavelength,T\n400,nan\n500,abc\n", ("no usable row", "2")),
        ("400,0.9\n500,0.91\n", ("T or R",)),
        ("wavelength,T,R\n400,0.9,0.1\n", ("column 3",)),
        ("wavelength,T\n400,0.9,0.1,3,4\n", ("5 columns",)),
        ("wavelength,T\n400,250\n500,260\n", ("values run",)),
        ("wavelength,T,sigma\n400,0.9,0.01\n500,0.9,0\n", ("line 3", "positive")),
        ("a b c\n400 0.9\n", ("header",)),
        ("Energy (eV),T\n2.0,0.9\n2.5,0.9\n", ("energy",)),
        ("T (%),wavelength (nm)\n90,400\n91,500\n", ("column 1",)),
    ],
)
def test_unusable_files_are_one_line_errors(tmp_path, text, fragments):
    path = write(tmp_path, "bad.csv", text)
    with pytest.raises(DataFileError) as info:
        read_spectrum(path)
    message = str(info.value)
    assert "\n" not in message
    for fragment in fragments:
        assert fragment.lower() in message.lower(), message


def test_quantity_conflict_and_bad_option(tmp_path):
    path = write(tmp_path, "t.csv", "wavelength,R\n400,0.04\n")
    with pytest.raises(DataFileError, match="header says R"):
        read_spectrum(path, quantity="T")
    with pytest.raises(DataFileError, match="T or R"):
        read_spectrum(path, quantity="A")
    assert read_spectrum(path, quantity="r").quantity == "R"


def test_missing_file_and_folder(tmp_path):
    with pytest.raises(DataFileError, match="no such file"):
        read_spectrum(tmp_path / "nope.csv")
    with pytest.raises(DataFileError, match="folder"):
        read_spectrum(tmp_path)


def test_input_file_is_not_modified(tmp_path):
    text = "wavelength,T\n500,0.9\n400,0.8\n"
    path = write(tmp_path, "keep.csv", text)
    read_spectrum(path)
    assert path.read_text() == text

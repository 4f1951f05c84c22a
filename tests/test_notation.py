"""Notation of the trade: Ångström, quarter waves, H/L shorthand, common material names, durations,
angles, both English spellings (``filmoptic.units``, ``filmoptic.stack``, the commands)."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import tmm

from conftest import assert_user_error
from filmoptic.errors import FilmopticError, StackSyntaxError
from filmoptic.stack import parse_stack
from filmoptic.units import parse_angle_deg, parse_duration_s, parse_length_nm, parse_range_nm


def _json(run_cli, args):
    result = run_cli(args)
    assert result.exit_code == 0, result.stderr
    return json.loads(result.stdout), result


# --------------------------------------------------------------------------------------------
# Ångström
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize("text", ["218A", "218Å", "218\u212b", "218 angstrom", "218 Angstroms"])
def test_angstrom_lengths(text):
    # 1 Å = 1e-10 m = 0.1 nm (definition of the ångström; crystal monitors read Å, common practice).
    assert parse_length_nm(text) == pytest.approx(21.8, rel=1e-15)


def test_angstrom_in_stacks_ranges_and_the_spectrum(run_cli):
    assert parse_stack("Ti 120A / glass").layers[0].thickness_nm == pytest.approx(12.0, rel=1e-15)
    assert parse_stack("Ti 100..300A / glass").layers[0].thickness_nm.low == pytest.approx(10.0, rel=1e-15)
    assert parse_range_nm("0:500A:10A") == pytest.approx((0.0, 50.0, 1.0), rel=1e-15)
    in_a, _ = _json(run_cli, ["spectrum", "Ti 120Å / glass 4mm", "--wl", "550", "--json"])
    in_nm, _ = _json(run_cli, ["spectrum", "Ti 12nm / glass 4mm", "--wl", "550", "--json"])
    assert in_a["T"] == in_nm["T"] and in_a["R"] == in_nm["R"]


def test_rate_reads_and_reports_angstrom(run_cli):
    # Two runs 300 s and 600 s apart by 10 nm: 10 nm / 300 s = 0.0333 nm/s = 0.333 Å/s (1 nm = 10 Å).
    data, _ = _json(run_cli, ["rate", "--run", "5min:100A", "--run", "10min:20nm", "--target", "150A", "--json"])
    assert data["rate_nm_per_s"] == pytest.approx(10.0 / 300.0, rel=1e-12)
    assert data["rate_angstrom_per_s"] == pytest.approx(100.0 / 300.0, rel=1e-12)
    assert data["target_nm"] == pytest.approx(15.0, rel=1e-15)
    table = run_cli(["rate", "--run", "5min:100A", "--run", "10min:20nm"])
    assert "0.03333 nm/s = 0.3333 Å/s" in table.stdout


# --------------------------------------------------------------------------------------------
# Durations
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize("text, seconds", [
    ("5:30", 330.0), ("1:05:00", 3900.0), ("0:45", 45.0), ("5min30s", 330.0), ("1h 5min", 3900.0),
    ("5 min 30 s", 330.0), ("2:30.5", 150.5),
])
def test_durations_as_written_on_a_stopwatch_or_a_log(text, seconds):
    # M:SS and H:MM:SS as a stopwatch shows them (common practice).
    assert parse_duration_s(text) == seconds


@pytest.mark.parametrize("text", ["5:75", "5:3", "1:2:3:4", "5::30", ":30"])
def test_bad_clock_durations(text):
    with pytest.raises(FilmopticError, match="M:SS"):
        parse_duration_s(text)


def test_rate_runs_with_stopwatch_times(run_cli):
    clock, _ = _json(run_cli, ["rate", "--run", "5:30:11nm", "--run", "11:00:22nm", "--json"])
    words, _ = _json(run_cli, ["rate", "--run", "330s:11nm", "--run", "660s:22nm", "--json"])
    assert clock["rate_nm_per_s"] == words["rate_nm_per_s"] == pytest.approx(1.0 / 30.0, rel=1e-12)
    assert [r["duration_s"] for r in clock["runs"]] == [330.0, 660.0]
    assert_user_error(run_cli(["rate", "--run", "5:75:11nm"]), "M:SS")


# --------------------------------------------------------------------------------------------
# Quarter waves
# --------------------------------------------------------------------------------------------


def test_quarter_wave_thickness_is_lambda_over_4n():
    # A quarter-wave optical thickness: n·d = λ0/4 (Macleod, Thin-Film Optical Filters, 4th ed., §2.6).
    stack = parse_stack("n=1.38 1qw@550nm / n=2.1 2.5qw@0.6um / n=1.52")
    assert stack.layers[0].thickness_nm == pytest.approx(550.0 / (4 * 1.38), rel=1e-15)
    assert stack.layers[1].thickness_nm == pytest.approx(2.5 * 600.0 / (4 * 2.1), rel=1e-15)
    assert stack.layers[0].quarter_waves == (1.0, 550.0)


def test_quarter_wave_of_a_table_uses_its_index_at_the_design_wavelength():
    from filmoptic.materials import get_material

    n = get_material("TiO2").nk(np.array([550.0]))[0].real
    layer = parse_stack("TiO2 1QWOT @ 550nm / glass").layers[0]
    assert layer.thickness_nm == pytest.approx(550.0 / (4 * n), rel=1e-14)


def test_single_layer_antireflection_in_quarter_waves(run_cli):
    # At λ0 a quarter-wave layer of index n1 on a substrate ns in n0 reflects
    # R = ((n0·ns − n1²)/(n0·ns + n1²))² (Macleod, Thin-Film Optical Filters, 4th ed., §3.2).
    data, result = _json(run_cli, ["spectrum", "{550nm} n=1.38 1qw / n=1.52", "--ambient", "n=1",
                                   "--wl", "550", "--json"])
    expected = ((1.52 - 1.38**2) / (1.52 + 1.38**2)) ** 2
    assert data["R"][0] == pytest.approx(expected, abs=1e-12)
    assert data["layers"][0]["thickness_nm"] == pytest.approx(550.0 / (4 * 1.38), rel=1e-15)
    assert data["layers"][0]["quarter_waves"] == 1.0 and data["layers"][0]["design_wavelength_nm"] == 550.0
    table = run_cli(["spectrum", "{550nm} n=1.38 1qw / n=1.52", "--ambient", "n=1", "--wl", "550"])
    assert "1 × λ/4 at 550 nm = 99.64 nm" in table.stdout


def test_quarter_wave_mirror_in_h_l_shorthand(run_cli):
    # (HL)^N H at λ0: R = ((1 − (nH/nL)^(2N)·nH²/ns) / (1 + (nH/nL)^(2N)·nH²/ns))² in air
    # (Macleod, Thin-Film Optical Filters, 4th ed., §5.2, the quarter-wave stack).
    nH, nL, ns, N = 2.35, 1.46, 1.52, 4
    y = (nH / nL) ** (2 * N) * nH**2 / ns
    data, _ = _json(run_cli, ["spectrum", "{550nm H=n=2.35 L=n=1.46} [H / L]x4 / H / n=1.52",
                              "--ambient", "n=1", "--wl", "550", "--json"])
    assert data["R"][0] == pytest.approx(((1 - y) / (1 + y)) ** 2, abs=1e-12)
    assert len(data["layers"]) == 9


def test_shorthand_counts_and_letters_as_materials():
    stack = parse_stack("{600nm H=n=2 L=n=1.5} 2H / 0.5L / H 50nm / glass")
    assert [layer.thickness_nm for layer in stack.layers] == pytest.approx([150.0, 50.0, 50.0], rel=1e-15)
    assert [layer.quarter_waves for layer in stack.layers] == [(2.0, 600.0), (0.5, 600.0), None]


def test_quarter_wave_layer_against_tmm():
    # The resolved thickness goes through the engine like any other: compare with tmm (Byrnes 2016).
    from filmoptic.engine import compute

    spec = compute(parse_stack("{633nm} n=2.0 3qw / n=1.5", ambient="n=1"), [500.0, 633.0])
    for i, wl in enumerate([500.0, 633.0]):
        ref = tmm.coh_tmm("s", [1.0, 2.0, 1.5], [np.inf, 3 * 633.0 / 8.0, np.inf], 0.0, wl)
        assert spec.R[i] == pytest.approx(ref["R"], abs=1e-12)


@pytest.mark.parametrize("text, fragments", [
    ("Ti 1qw@550nm / glass", ["absorbs", "give its thickness in nm"]),
    ("TiO2 1qw / glass", ["which wavelength", "{550nm}"]),
    ("[H / L]x4 / glass", ["shorthand", "{550nm H=TiO2 L=SiO2}"]),
    ("{H=TiO2} H / glass", ["reference wavelength"]),
    ("{550nm X=TiO2} H / glass", ["not a setting"]),
    ("{550nm 600nm} TiO2 1qw / glass", ["one reference wavelength"]),
    ("{550nm H=TiO2} H / glass 2qw", ["substrate"]),
    ("TiO2 0qw@550nm / glass", ["above 0"]),
    ("TiO2 ?qw / glass", ["1qw@550nm"]),
    ("TiO2 1qw@550nm / {550nm} glass", ["come first"]),
    ("{550nm", ["missing '}'"]),
])
def test_quarter_wave_mistakes_say_how_to_write_it(run_cli, text, fragments):
    assert_user_error(run_cli(["spectrum", text, "--wl", "550"]), *fragments)


# --------------------------------------------------------------------------------------------
# Common names
# --------------------------------------------------------------------------------------------


def test_common_names_are_library_materials(run_cli):
    common, _ = _json(run_cli, ["spectrum", "copper 12nm / float glass 4mm", "--wl", "500,600", "--json"])
    library, _ = _json(run_cli, ["spectrum", "Cu 12nm / glass 4mm", "--wl", "500,600", "--json"])
    assert common["R"] == library["R"] and common["T"] == library["T"]
    assert parse_stack("silver 20nm / quartz").substrate.material.name == "fused-silica"
    assert parse_stack("TiO2 50nm / soda-lime glass").substrate.material.name == "glass"
    assert parse_stack("Ag 20nm / low iron glass 2mm").substrate.material.dataset == "Vogt-2016-10ppm"


def test_materials_lists_and_shows_common_names(run_cli):
    listing = run_cli(["materials"])
    assert listing.exit_code == 0
    assert "copper = Cu" in listing.stdout and "fused-silica" in listing.stdout
    assert "crystalline quartz is birefringent" in listing.stdout
    shown, _ = _json(run_cli, ["materials", "silver", "--json"])
    assert {entry["name"] for entry in shown} == {"Ag"}


# --------------------------------------------------------------------------------------------
# Angles and spellings
# --------------------------------------------------------------------------------------------


def test_radians_only_when_written(run_cli):
    assert parse_angle_deg("0.5rad") == pytest.approx(math.degrees(0.5), rel=1e-15)
    with pytest.warns(UserWarning, match="read as degrees"):
        assert parse_angle_deg("0.5") == 0.5
    rad, quiet = _json(run_cli, ["spectrum", "Ti 10nm / glass", "--wl", "550", "--angle", "0.5rad", "--json"])
    deg, _ = _json(run_cli, ["spectrum", "Ti 10nm / glass", "--wl", "550", "--angle", f"{math.degrees(0.5)!r}", "--json"])
    assert rad["R"] == pytest.approx(deg["R"], abs=1e-12) and quiet.stderr == ""
    bare, warned = _json(run_cli, ["spectrum", "Ti 10nm / glass", "--wl", "550", "--angle", "0.5", "--json"])
    assert bare["angle_deg"] == 0.5
    assert warned.stderr.count("warning") == 1 and "0.5rad" in warned.stderr
    _, zero = _json(run_cli, ["spectrum", "Ti 10nm / glass", "--wl", "550", "--angle", "0", "--json"])
    assert zero.stderr == ""


def test_angle_lists_warn_once_for_bare_small_numbers(run_cli):
    result = run_cli(["color", "TiO2 60nm / Ti", "--angles", "0,0.5,1", "--json"])
    assert result.exit_code == 0 and result.stderr.count("read as degrees") == 1
    result = run_cli(["color", "TiO2 60nm / Ti", "--angles", "0:60:30", "--json"])
    assert "read as degrees" not in result.stderr


def test_both_spellings(run_cli):
    color, colour = run_cli(["color", "TiO2 60nm / Ti"]), run_cli(["colour", "TiO2 60nm / Ti"])
    assert color.exit_code == colour.exit_code == 0 and color.stdout == colour.stdout
    a, _ = _json(run_cli, ["spectrum", "Ti 10nm / glass", "--wl", "550", "--angle", "40", "--pol", "unpolarised", "--json"])
    b, _ = _json(run_cli, ["spectrum", "Ti 10nm / glass", "--wl", "550", "--angle", "40", "--polarisation", "unpolarized",
                           "--json"])
    assert a == b and a["polarization"] == "unpolarized"
    assert run_cli(["anodise", "Ti", "--at", "20"]).stdout == run_cli(["anodize", "Ti", "--at", "20"]).stdout
    assert run_cli(["colour", "--help"]).exit_code == 0


def test_stack_errors_stay_one_line():
    with pytest.raises(StackSyntaxError) as info:
        parse_stack("{550nm H=TiO2} [H / L]x2 / glass")
    assert "\n" not in str(info.value) and "item 1.2" in str(info.value)

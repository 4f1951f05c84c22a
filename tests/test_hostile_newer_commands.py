"""Hostile input found by the fuzz runs (``tools/fuzz.py``) that cover the newer commands (monitor,
map, design, explore, anodize, heat-tint), the newer options of the older ones and the quarter-wave
and native-oxide notation: one test for every failure found, in whatever command it surfaced.

Each case ends either in an answer or in exit code 2 with one line that names the problem, with no
traceback, no numpy warning text and no changed input. ``FILMOPTIC_DEBUG=1`` is set where a test
checks for numpy's warnings, since that is what makes them visible. These are facts of the tool's
contract, not of physics.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from conftest import assert_user_error


@pytest.fixture
def in_tmp(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    return tmp_path


def _light_box_photos(folder):
    """A coated glass on a light box (a bare strip at the left) and the empty box, 8-bit PNG."""
    from filmoptic.imaging.render import encode_srgb8, write_png

    y, x = np.mgrid[0:80, 0:120].astype(float)
    through = np.repeat((0.8 * (0.35 + 0.4 * x / 119))[..., None], 3, axis=2)
    through[:, :20] = 0.8 * 0.92
    write_png(folder / "part.png", encode_srgb8(through))
    write_png(folder / "box.png", encode_srgb8(np.full((80, 120, 3), 0.8)))
    return ["--photo", "part.png", "--open", "box.png", "--bare", "0,0,16,80", "--region", "30,0,120,80",
            "--cells", "6x4"]


# --- a NUL character ------------------------------------------------------------------------------
@pytest.mark.parametrize("args", [
    ["spectrum", "Ti 5nm / glass", "--plot", "ou\x00t.png"],
    ["monitor", "Ti ? / glass 4mm", "--plan", "--target", "5nm", "--plot", "plan\x00.png"],
    ["spectrum", "file:a\x00b.txt 5nm / glass"],
])
def test_a_nul_character_in_any_value_is_one_line(run_cli, in_tmp, args):
    # No shell can pass one (argv entries end at NUL); through the Python entry point it reached
    # the operating system's path calls and ended in a ValueError.
    assert_user_error(run_cli(args), "NUL character")
    assert list(in_tmp.iterdir()) == []


# --- map --------------------------------------------------------------------------------------
@pytest.mark.parametrize("value", ["inf", "nan", "-1", "0"])
def test_map_refuses_a_photo_limit_that_is_not_a_positive_number(run_cli, in_tmp, value):
    args = _light_box_photos(in_tmp)
    assert_user_error(run_cli(["map", "Ti ? / glass 4mm", *args, "--max-megapixels", value]), "--max-megapixels")


def test_map_takes_a_huge_photo_limit_as_no_limit(run_cli, in_tmp):
    # 1e308 megapixels overflowed when turned into a whole number of pixels.
    args = _light_box_photos(in_tmp)
    result = run_cli(["map", "Ti ? / glass 4mm", *args, "--max-megapixels", "1e308", "--json"])
    assert result.exit_code == 0, result.stderr


def test_colour_map_counts_its_thickness_grid_before_making_it(run_cli, in_tmp):
    # --range 0:1e9 in colour mode built a billion-point grid (gigabytes, half a minute) before the
    # work limit refused it; the grid limit now refuses it before anything is allocated.
    args = _light_box_photos(in_tmp)
    result = run_cli(["map", "TiO2 ? / Ti", *args[:4], "--cells", "6x4", "--mode", "colour", "--range", "0:1e9"])
    assert_user_error(result, "--range 0:1e+09", "FILMOPTIC_MAX_POINTS")


# --- monitor ----------------------------------------------------------------------------------
def _recording(references):
    """A metal darkening the beam after the shutter opens at 5 s, with a reference detector column."""
    rows = ["t_s,reading,reference"]
    for i in range(120):
        t = 0.5 * i
        reading = 1000.0 if t < 5 else 1000.0 * np.exp(-(t - 5) / 25.0)
        rows.append(f"{t},{reading:.2f},{references[i % len(references)]}")
    return "\n".join(rows) + "\n"


MONITOR = ["monitor", "Ti ? / glass 4mm", "run.csv", "--replay", "--source", "led:530/30", "--detector", "flat",
           "--target", "5nm", "--json"]


def test_reference_readings_at_zero_during_the_baseline_are_left_out(run_cli, in_tmp, monkeypatch):
    # A reference detector reading 0 (or next to it) during the baseline was divided by: numpy's
    # "divide by zero" reached the user. Such readings are now left out, as dropouts are later.
    monkeypatch.setenv("FILMOPTIC_DEBUG", "1")
    (in_tmp / "run.csv").write_text(_recording(["0", "1e-300", "500", "nan"]))
    before = (in_tmp / "run.csv").read_bytes()
    result = run_cli(MONITOR)
    assert result.exit_code in (0, 3), result.stderr
    assert "encountered" not in result.stderr and "Traceback" not in result.stderr
    assert (in_tmp / "run.csv").read_bytes() == before


def test_a_reference_detector_that_never_sees_light_is_one_line(run_cli, in_tmp, monkeypatch):
    monkeypatch.setenv("FILMOPTIC_DEBUG", "1")
    (in_tmp / "run.csv").write_text(_recording(["0"]))
    result = run_cli(MONITOR)
    # The baseline ends after the first readings, so the run has begun: exit 3 with the summary
    # and one error line, or exit 2 with one line.
    lines = [line for line in result.stderr.splitlines() if line.startswith("filmoptic: error:")]
    assert result.exit_code in (2, 3), result.stderr
    assert len(lines) == 1 and "reference detector reads nothing above its dark reading" in lines[0]
    assert "encountered" not in result.stderr


def test_a_run_that_fails_on_its_first_row_is_one_line_even_with_on_target(run_cli, in_tmp):
    # The --on-target caution was printed before the first reading, so a run refused at its first
    # row (a reference detector that reads nothing) ended with two lines. The caution now comes
    # with the first reading; a command that never ran needs none.
    (in_tmp / "run.csv").write_text(_recording(["0"]))
    result = run_cli([*MONITOR[:-1], "--baseline", "0", "--on-target", "true"])
    assert_user_error(result, "reference detector")

    (in_tmp / "good.csv").write_text(_recording(["500"]))
    result = run_cli(["monitor", "Ti ? / glass 4mm", "good.csv", "--replay", "--source", "led:530/30", "--detector",
                      "flat", "--target", "5nm", "--on-target", "true", "--json"])
    assert result.exit_code == 0, result.stderr
    assert result.stderr.count("CAUTION") == 1 and "interlock" in result.stderr


@pytest.mark.parametrize("target", ["1e-300nm", "1e-9nm"])
def test_a_plan_for_a_vanishing_target_has_its_usual_rows(run_cli, target):
    # The plan's rows ran from 0 to the target with an absolute slack of 1e-9 nm: over a step of
    # 1e-302 nm (a target of 1e-300 nm) that asked numpy for 10^293 rows, a ValueError traceback.
    result = run_cli(["monitor", "Ti ? / glass 4mm", "--plan", "--target", target, "--source", "led:530/30",
                      "--json"])
    assert result.exit_code == 0, result.stderr
    normal = run_cli(["monitor", "Ti ? / glass 4mm", "--plan", "--target", "9nm", "--source", "led:530/30", "--json"])
    assert len(json.loads(result.stdout)["rows"]) == len(json.loads(normal.stdout)["rows"])


def test_map_refuses_a_scale_no_photo_has(run_cli, in_tmp):
    # --scale 1e-300 put the cells 1e302 mm apart and the radial profile fit met r² = inf
    # (scipy: "Residuals are not finite in the initial point", a traceback).
    args = _light_box_photos(in_tmp)
    assert_user_error(run_cli(["map", "Ti ? / glass 4mm", *args, "--scale", "1e-300"]), "--scale 1e-300",
                      "pixels per mm")
    result = run_cli(["map", "Ti ? / glass 4mm", *args, "--scale", "1e-5", "--json"])
    assert result.exit_code == 0, result.stderr


# --- design -----------------------------------------------------------------------------------
def test_the_needle_scan_counts_its_depths_before_making_them(run_cli):
    # A layer free to grow to a metre (0..1e9nm) reached the needle step at 5e8 nm and asked for
    # 125 million depths (gigabytes, minutes). The grid limit now refuses the scan at once.
    result = run_cli(["design", "n=2.3+2.3j 0..1e9nm / SiO2 ? / Ti", "--materials", "SiO2", "--goal",
                      "reflected Lab = 55,0,-25 within 2", "--tries", "0", "--starts", "1"])
    assert_user_error(result, "needle depths", "FILMOPTIC_MAX_POINTS")


# --- models and the engine --------------------------------------------------------------------
def test_a_model_coefficient_that_overflows_is_one_line(run_cli):
    # drude(1.5,1e300,2.3): the plasma energy squared overflows Python's float power (an
    # OverflowError traceback where numpy would have given inf).
    assert_user_error(run_cli(["solve", "drude(1.5,1e300,2.3) 92nm / SiO2 ? / glass 3mm", "--luminous-T", "0.3"]),
                      "drude", "overflows")


def test_light_from_behind_through_a_glass_half_space_is_not_lost_precision(run_cli):
    # The default glass absorbs a little (k ≈ 2e-6 near 840 nm). Lit from behind, that glass is
    # the incident medium: it keeps its k at normal incidence, as tmm does, and the incident and
    # reflected waves interfere in the energy flow, so R + T exceeds 1 by about 1e-6. The last
    # guard took that for lost precision ("please report the stack").
    import math

    import tmm

    from filmoptic.engine import compute
    from filmoptic.stack import parse_stack

    result = run_cli(["spectrum", "TiO2 55nm / glass", "--wl", "400:900:10", "--reverse", "--json"])
    assert result.exit_code == 0, result.stderr
    answer = json.loads(result.stdout)
    for key in ("R", "T", "A"):
        assert all(0.0 <= v <= 1.0 for v in answer[key]), key
    # Byrnes 2016 (tmm.coh_tmm) with the complex incident index: the same R and T, whose sum is
    # above 1 there by the interference term.
    stack = parse_stack("TiO2 55nm / glass")
    N = [complex(m.nk(840.0)) for m in (stack.substrate.material, stack.layers[0].material, stack.ambient)]
    reference = tmm.coh_tmm("s", N, [math.inf, 55.0, math.inf], 0.0, 840.0)
    ours = compute(stack, np.array([840.0]), reverse=True)
    assert reference["R"] + reference["T"] > 1.0 + 1e-6
    assert abs(ours.R[0] - reference["R"]) <= 1e-12 and abs(ours.T[0] - reference["T"]) <= 1e-12


def test_a_ten_thousand_period_stack_keeps_its_transmittance():
    # A quarter-wave notation repeat of 10 000 pairs (the fuzzer's '[H / L]x10000') reached the
    # last guard: the long packet's rescaling passed e^709 while the product of the interface
    # transmissions |Π t_j|² fell below e^-745, and inf·0 gave NaN. The logarithms are now added
    # before exponentiating. Lossless periods are checked in their pass band against the
    # closed form of a periodic multilayer: M^N = U_{N-1}(a)·M − U_{N-2}(a)·I with Chebyshev
    # polynomials of a = (M11 + M22)/2 (Born & Wolf, Principles of Optics, §1.6.5), and
    # R, T from the assembly's B, C (Macleod, Thin-Film Optical Filters, ch. 2).
    from filmoptic.engine import compute
    from filmoptic.stack import parse_stack

    def layer(n, d, wl):
        delta = 2 * np.pi * n * d / wl
        return np.array([[np.cos(delta), -1j * np.sin(delta) / n], [-1j * n * np.sin(delta), np.cos(delta)]])

    wavelengths = np.array([450.0, 700.0, 800.0])
    result = compute(parse_stack("[n=2.4 60nm / n=1.38 90nm]x10000 / n=1.52", ambient="n=1"), wavelengths)
    for i, wl in enumerate(wavelengths):
        M = layer(2.4, 60.0, wl) @ layer(1.38, 90.0, wl)
        a = (M[0, 0] + M[1, 1]).real / 2
        assert abs(a) < 1                                    # a pass band: the powers stay bounded
        theta = np.arccos(a)
        U = lambda k: np.sin((k + 1) * theta) / np.sin(theta)  # noqa: E731
        B, C = (U(9999) * M - U(9998) * np.eye(2)) @ np.array([1.0, 1.52])
        R = abs((B - C) / (B + C)) ** 2
        T = 4 * 1.52 / abs(B + C) ** 2
        assert abs(result.R[i] - R) <= 1e-11 and abs(result.T[i] - T) <= 1e-9, (wl, result.R[i], R, result.T[i], T)
    # The stack that showed it, absorbing and with a metal behind the mirror, now answers.
    shown = parse_stack("{600nm H=Ta2O5 L=SiO2} [H / L]x10000 / 0.5L / Au 92nm / SiO2 50nm / glass")
    result = compute(shown, np.array([380.0, 500.0]), extrapolate=True)
    assert np.all((result.R >= 0) & (result.T >= 0) & (result.R + result.T <= 1))


# --- numbers click lets through ----------------------------------------------------------------
@pytest.mark.parametrize("value", ["nan", "inf"])
@pytest.mark.parametrize("args, option", [
    (["sweep", "Ti ? / glass", "--range", "0:20:2"], "--table-step"),
    (["anodize", "Ti", "--hex", "#3d64ab"], "--max-delta-e"),
    (["heat-tint", "steel", "--hex", "#3d64ab"], "--max-delta-e"),
    (["anodize", "Ti"], "--nm-per-volt"),
    (["monitor", "Ti ? / glass 4mm", "-", "--replay", "--target", "5nm"], "--speed"),
    (["monitor", "Ti ? / glass 4mm", "--plan", "--target", "5nm"], "--step"),
    (["solve", "Ti ? / glass", "--luminous-T", "30%"], "--step"),
    (["explore", "Ti ? / glass 4mm", "--out", "page.html"], "--max-mb"),
])
def test_a_bounded_number_option_refuses_nan_and_infinity(run_cli, in_tmp, args, option, value):
    # click's FloatRange compares the bounds only, and every comparison with nan is false:
    # '--table-step nan' reached int() (a traceback), '--max-delta-e nan' was reported as the
    # wrong option, '--speed nan' was taken as no pacing at all.
    # (infinity past an upper bound is refused by the range itself)
    result = run_cli([*args, option, value])
    assert_user_error(result, option)
    assert "not a finite number" in result.stderr or "not in the range" in result.stderr
    assert list(in_tmp.iterdir()) == []

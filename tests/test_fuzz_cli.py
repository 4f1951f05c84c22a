"""Property-based fuzzing of the command line: whatever is typed, and whatever the files hold, the
command answers with exit code 0 and finite values inside [0, 1], or with exit code 2 and one line,
and leaves every input file as it was.

Hypothesis draws garbage stacks (library names, constant indices, models, mixes and ``file:``
tables, odd thicknesses and repeat counts, quarter-wave settings and shorthand, native oxides, stray
brackets), garbage option values (wavelength grids, angles, ambients, voltages, colours, goals,
rectangles), garbage files (n,k tables, measured spectra, solve files, light spectra, raw meter
readings, monitor recordings, photos that are truncated, black, odd-sized or 16-bit, a user library
folder) and outputs that sometimes name one of the inputs. Every command is drawn, ``monitor`` only
with ``--plan`` or ``--replay`` so that nothing waits on a live stream. A longer run of the same
kind, thousands of cases, is ``python tools/fuzz.py`` (for use before a release). These are facts
of the tool's contract, not of physics.
"""

from __future__ import annotations

import contextlib
import functools
import hashlib
import json
import math
import os
import tempfile
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from conftest import _run_in_process

SETTINGS = settings(max_examples=250, deadline=None, derandomize=True,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])

# --- pieces ------------------------------------------------------------------------------------
ODD_NUMBERS = ["0", "-1", "1e-300", "1e300", "nan", "inf", "1e-320", "1e4", "0.001", "1,5", "",
               "1" * 150, "9" * 4400, "1..2", "1e-9..1e-9"]
# Ordinary pieces are drawn more often than hostile ones, so that a case usually holds one or two
# hostile pieces among sensible ones and many cases run to the end (exit code 0).
ORDINARY_NUMBERS = st.sampled_from(["1.5", "2.3", "1.46", "0.004", "0.3"])
numbers = st.one_of(
    ORDINARY_NUMBERS, ORDINARY_NUMBERS, ORDINARY_NUMBERS,
    st.sampled_from(ODD_NUMBERS),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-10**30, 10**30).map(str),
)
# No name is part of another, so a name on the command line tells which file the command reads.
FILE_NAMES = ["film.txt", "(nk).txt", "[tab].txt", "lay (2).png", "idx.csv"]
file_refs = st.tuples(st.sampled_from(["file:", "FILE:", "File:"]), st.sampled_from(FILE_NAMES),
                      st.sampled_from(["", "./"])).map(lambda t: f"{t[0]}{t[2]}{t[1]}")
LIBRARY_NAMES = st.sampled_from(["Ti", "TiO2", "SiO2", "glass", "Au", "Ag", "Cr", "MgF2", "air", "water",
                                 "Mine", "Zero"])
materials = st.one_of(
    LIBRARY_NAMES, LIBRARY_NAMES, LIBRARY_NAMES, LIBRARY_NAMES,
    numbers.map(lambda n: f"n={n}"),
    st.tuples(numbers, numbers).map(lambda t: f"n={t[0]}+{t[1]}j"),
    st.lists(st.one_of(numbers, st.just("?")), min_size=3, max_size=4).map(lambda c: f"cauchy({','.join(c)})"),
    st.tuples(st.sampled_from(["drude", "lorentz", "sellmeier"]), st.lists(numbers, min_size=2, max_size=4))
    .map(lambda t: f"{t[0]}({','.join(t[1])})"),
    st.tuples(st.sampled_from(["Ti", "TiO2", "n=1"]), st.sampled_from(["TiO2", "n=1.5"]),
              st.one_of(numbers, st.sampled_from(["30%", "?"]))).map(lambda t: f"mix({t[0]},{t[1]},{t[2]})"),
    file_refs,
)
ORDINARY_THICKNESSES = st.sampled_from(["55nm", "12 nm", "0.1um", "92nm", "8nm"])
thicknesses = st.one_of(
    ORDINARY_THICKNESSES, ORDINARY_THICKNESSES, ORDINARY_THICKNESSES,
    st.sampled_from(["0nm", "?", "10..90nm", "3mm", "-5nm", "nan nm",
                     "1e308nm", "1e-320nm", "5", "5cm", "0..0nm", "1" * 200 + "nm", "1e9nm"]),
    st.tuples(numbers, st.sampled_from(["nm", "um", "mm", ""])).map("".join),
)
counts = st.sampled_from(["2", "4", "1000", "10001", "0", "9" * 4400, "1e3", "-1", ""])
# Native oxide on a metal ('Al 10nm + 2nm oxide'), ordinary and hostile.
oxide_suffixes = st.sampled_from(["+ 2nm oxide", "+ 3nm oxide", "+ 20Å Al2O3", "+ 1.5 nm n=1.65", "+ 0nm oxide",
                                  "+ 1e308nm oxide", "+ 500nm oxide", "+ nan nm oxide", "+ -2nm oxide", "+ 2nm",
                                  "+ oxide", "+ 2nm oxide + 2nm oxide", "+ 2nm file:film.txt", "+ 2nm ?"])
oxide_metals = st.sampled_from(["Al", "Ti", "Cr", "Ta", "Ag", "TiO2", "glass", "n=1.5"])
# Quarter-wave settings in braces and the shorthand letters.
QW_SETTINGS = st.sampled_from(["550nm H=TiO2 L=SiO2", "600nm H=Ta2O5 L=SiO2 M=Al2O3", "550nm", "H=TiO2 L=SiO2",
                               "0nm H=TiO2 L=SiO2", "nan nm H=TiO2", "1e308nm H=TiO2", "550nm H=Ti L=SiO2",
                               "550nm H= L=SiO2", "550nm H=TiO2 H=SiO2", "550nm X=TiO2", "550nm H=H", "",
                               "550nm 600nm", "1e-300nm L=MgF2"])
QW_ITEMS = st.sampled_from(["H", "L", "2H", "0.5L", "M", "H 50nm", "TiO2 1qw", "SiO2 2.5qwot", "MgF2 1qw@550nm",
                            "TiO2 1 QWOT @ 0.55um", "0H", "-1H", "1e9H", "1001qw", "TiO2 1qw@0nm", "Ti 1qw@550nm",
                            "SiO2 1qw@1e-300nm", "H?", "Q"])


@st.composite
def quarter_wave_stacks(draw, unknown=False):
    items = []
    for _ in range(draw(st.integers(1, 3))):
        item = draw(QW_ITEMS)
        if draw(st.integers(0, 3)) == 0:
            item = f"[{item} / {draw(QW_ITEMS)}]x{draw(st.one_of(st.sampled_from(['4', '8']), counts))}"
        items.append(item)
    if unknown:
        items.append(draw(st.sampled_from(["TiO2 ?", "H ?", "L 10..200nm"])))
    substrate = draw(st.sampled_from(["glass", "glass 1mm", "Si", "H"]))
    braces = draw(st.sampled_from(["{%s}", "{%s}", "{%s}", "%s", "{%s", "{{%s}}"]))
    return (braces % draw(QW_SETTINGS)) + " " + " / ".join([*items, substrate])


@st.composite
def stacks(draw, unknown=False):
    if draw(st.integers(0, 9)) == 0:
        return draw(quarter_wave_stacks(unknown))
    items = []
    for _ in range(draw(st.integers(0, 3))):
        layer = f"{draw(materials)} {draw(thicknesses)}"
        if draw(st.integers(0, 9)) == 0:
            layer = f"{draw(oxide_metals)} {draw(thicknesses)} {draw(oxide_suffixes)}"
        if draw(st.booleans()) and draw(st.booleans()):
            layer = f"[{layer} / {draw(materials)} {draw(thicknesses)}]x{draw(counts)}"
        items.append(layer)
    if unknown:
        metal = draw(st.sampled_from(['Ti', 'TiO2', 'n=2', 'Al']))
        items.append(f"{metal} ? {draw(oxide_suffixes)}" if draw(st.integers(0, 7)) == 0 else f"{metal} ?")
    ordinary = st.sampled_from(["glass", "glass 3mm", "Ti", "n=1.52 1mm", "Al + 4nm oxide"])
    substrate = draw(st.one_of(ordinary, ordinary, ordinary, materials,
                               st.tuples(materials, thicknesses).map(" ".join)))
    text = " / ".join([*items, substrate])
    if draw(st.integers(0, 9)) == 0:                 # a stray character somewhere
        where = draw(st.integers(0, len(text)))
        text = text[:where] + draw(st.sampled_from(list("/[]()?:x#'\t"))) + text[where:]
    return text


ORDINARY_WAVELENGTHS = st.sampled_from(["380:780:20", "550", "633,532", "400:900:50"])
wavelengths = st.one_of(
    ORDINARY_WAVELENGTHS, ORDINARY_WAVELENGTHS, ORDINARY_WAVELENGTHS,
    st.sampled_from(["0:1:1e-300", "1e-320:1:1", "400:700:1e-9", "nan", "1e308", "400,400", "-1",
                     "380:780:0", "380:780:inf", "700:400:5", "1e-9", "1" * 5000]),
    st.tuples(numbers, numbers, numbers).map(":".join),
)
ORDINARY_ANGLES = st.sampled_from(["0", "45", "30", "89.999"])
angles = st.one_of(ORDINARY_ANGLES, ORDINARY_ANGLES, numbers)
ORDINARY_AMBIENTS = st.sampled_from(["air", "n=1", "water", "n=1.33"])
ambients = st.one_of(ORDINARY_AMBIENTS, ORDINARY_AMBIENTS, materials)

# --- files -------------------------------------------------------------------------------------
NK_CONTENT = st.one_of(
    st.sampled_from([
        "# wavelength_nm n k\n300 1.5 0\n1000 1.5 0\n",
        "300 1e-300 0\n1000 1e-300 0\n",
        "300 nan 0\n1000 1.5 0\n",
        "1000 1.5 0\n300 1.5 0\n",
        "550 1.5 0\n",
        "0.3 1.5 0\n1.0 1.5 0\n",
        "300 1.5 -0.1\n1000 1.5 -0.1\n",
        "300 1e300 1e300\n1000 1e300 1e300\n",
        "# range_nm: nan inf\n# kind: metal\n300 1e-9 3\n1000 1e-9 3\n",
    ]),
    st.text(alphabet="0123456789 .,-e#\n", max_size=200),
)
MEASURED_CONTENT = st.one_of(
    st.just("wavelength (nm),T (%)\n" + "".join(f"{w},{85 + (w % 37) / 10}\n" for w in range(400, 801, 10))),
    st.sampled_from(["wl,T\n400,nan\n500,nan\n", "wl,T\n400,1e308\n500,1e308\n", "wl,T\n400,0.5\n",
                     "wl,T,sigma\n400,0.5,0\n500,0.5,0\n600,0.5,0\n", "wl,T\n" + "550,0.5\n" * 50,
                     "," * 5000 + "\n1,2\n"]),
    st.text(alphabet="0123456789 ,;\t.eT%\n-", max_size=300),
)
json_values = st.recursive(
    st.one_of(st.none(), st.booleans(), st.floats(), st.integers(), st.text(max_size=5)),
    lambda inner: st.one_of(st.lists(inner, max_size=3),
                            st.dictionaries(st.sampled_from(["solutions", "thickness_nm", "low_nm", "high_nm"]),
                                            inner, max_size=4)),
    max_leaves=12,
)
SOLVE_CONTENT = st.one_of(
    st.just(json.dumps({"solutions": [{"thickness_nm": 21.8, "low_nm": 21.4, "high_nm": 22.2}]})),
    st.sampled_from(["[" * 3000 + "]" * 3000, '{"solutions":' + "[" * 3000 + "]" * 3000 + "}", "{"]),
    json_values.map(lambda v: json.dumps(v, allow_nan=True)),
)
READINGS_CONTENT = st.one_of(
    st.sampled_from([
        "part,reading\nA,0.3\nB,30%\nC,318/1045\n",
        "part,sample,reference,dark\nA,2.3V,7.1V,0.02V\nB,2.1V,7.1V,0.02V\n",
        "part,sample (V),reference (V)\nA,2.3,7.1\nB,2.0,7.1\n",
        "sample;reference\n2,3;7,1\n1,9;7,1\n",
        "sample,reference\n1lx,2V\n0,0\nnan,1\n1e308,1e-308\n-1,5\n",
        "sample,sample,reference\n1,2,3\n",
    ]),
    st.text(alphabet='",\nsampleVr1.;%', max_size=200),
)
PERCENT_RANGES = st.sampled_from(["0:50", "auto", "0:100", "50:0", "0:0", "-10:200", "nan:1", "0:1e308", "x", "5"])
VOLTS = st.one_of(st.sampled_from(["0:100:5", "10:110:2", "10:60", "100:0:5", "0:1e9:1e-9", "0:100:0", "5:5:1"]),
                  st.tuples(numbers, numbers, numbers).map(":".join))
COLOUR_TARGETS = st.one_of(
    st.tuples(st.just("--hex"), st.sampled_from(["#3d64ab", "#5c98c5", "#000000", "#ffffff", "3d64ab", "#3d64a",
                                                  "#gggggg", "#"])),
    st.tuples(st.just("--lab"), st.one_of(st.sampled_from(["70,10,-20", "50,0,0", "0,0,0", "100,0,0", "50,0", "a,b,c"]),
                                          st.tuples(numbers, numbers, numbers).map(",".join))),
)
GOALS = st.one_of(
    st.sampled_from(["mean R 420..680nm <= 0.5%", "T 550nm = 50%", "luminous-T = 30%", "R 1064nm >= 99%",
                     "reflected Lab = 55,0,-25 within 2", "transmitted hex = #8a9a7b within 3",
                     "mean R 420..680nm @0..40deg <= 1%", "T 550nm = 50% weight 3", "luminous-T = 30% under A"]),
    st.sampled_from(["R 0..1e9nm <= 1%", "R 420..680nm <= nan%", "R 1e-300nm = 50%", "mean R 680..420nm <= 1%",
                     "T 550nm = 150%", "R 550nm @0..89.9999deg <= 1%", "T 550nm = 50% weight 1e308", "R", "= 50%",
                     "reflected Lab = nan,0,0 within 2", "R 550nm @0..60deg p <= 1e-300%",
                     "R 200..2500nm @0..80deg <= 1%", "reflected Lab = 50,0,0 within 0"]),
    st.tuples(st.sampled_from(["R", "T", "A", "mean R", "luminous-T"]), numbers, st.sampled_from(["<=", ">=", "="]),
              numbers).map(lambda t: f"{t[0]} {t[1]}nm {t[2]} {t[3]}%"),
)


def _recording(kind: int) -> str:
    """A monitor recording: a metal darkening the beam after the shutter opens at 5 s, and its faults."""
    def growth(t):
        return 1000.0 if t < 5 else 1000.0 * math.exp(-(t - 5) / 25.0)
    rows = [(0.5 * i, growth(0.5 * i)) for i in range(200)]
    return [
        "t_s,reading\n" + "".join(f"{t},{r:.2f}\n" for t, r in rows),
        "t_s,reading,reference\n" + "".join(f"{t},{r:.2f},{500 + (i % 3)}\n" for i, (t, r) in enumerate(rows)),
        "".join(f"{r:.2f}\n" for _, r in rows),
        "t_s,reading,reference\n" + "".join(f"{t},{r:.2f},{('0', '1e-300', 'nan', '500')[i % 4]}\n"
                                             for i, (t, r) in enumerate(rows)),
        "t_s,reading\n" + "".join(f"{t},{('1000', 'nan', '0', '-5', '1e308', 'inf', '', 'x')[i % 8]}\n"
                                   for i, (t, _) in enumerate(rows)),
        "t_s,reading\n" + "".join(f"{t},0\n" for t, _ in rows),
        "t_s,reading\n" + "".join(f"{100 - t},{r:.2f}\n" for t, r in rows),
        "t_s,reading\n" + "".join(f"1e308,{r:.2f}\n" for _, r in rows[:20]),
        "t_s,reading\n0,1000\n",
        "",
    ][kind]


RECORDINGS = st.one_of(st.integers(0, 9).map(_recording),
                       st.text(alphabet="0123456789 ,;\t:.e-tn\n", max_size=300))


@functools.cache
def _images() -> dict:
    """Small photos for 'map' as bytes: a light box through a coated glass (a bare strip at the
    left), the empty box, colours of an oxide, and broken ones."""
    import io

    import numpy as np
    from PIL import Image

    from filmoptic.imaging.render import encode_linear16, encode_srgb8, write_png

    def encoded(linear, fmt):
        buffer = io.BytesIO()
        Image.fromarray(encode_srgb8(linear)).save(buffer, format=fmt)
        return buffer.getvalue()

    y, x = np.mgrid[0:80, 0:120].astype(float)
    through = np.repeat((0.8 * (0.35 + 0.4 * x / 119))[..., None], 3, axis=2)
    through[:, :20] = 0.8 * 0.92
    box = np.full((80, 120, 3), 0.8)
    hue = (x + y) / 198
    oxide = np.stack([0.2 + 0.5 * hue, 0.3 + 0.2 * np.sin(6 * hue) ** 2, 0.6 - 0.4 * hue], axis=2)
    with tempfile.TemporaryDirectory() as tmp:
        write_png(Path(tmp) / "16.png", encode_linear16(through))
        sixteen = (Path(tmp) / "16.png").read_bytes()
    png = encoded(through, "PNG")
    return {
        "through.png": png, "through.jpg": encoded(through, "JPEG"), "through16.png": sixteen,
        "box.png": encoded(box, "PNG"), "box.tif": encoded(box, "TIFF"), "oxide.png": encoded(oxide, "PNG"),
        "cut.png": png[: len(png) // 3], "junk.jpg": bytes(range(256)) * 3, "text.png": b"not an image\n",
        "black.png": encoded(np.zeros((80, 120, 3)), "PNG"), "dot.png": encoded(np.full((1, 1, 3), 0.5), "PNG"),
        "line.png": encoded(np.full((1, 300, 3), 0.5), "PNG"), "empty.jpg": b"",
    }


PHOTOS = st.sampled_from(["through.png", "through.png", "through.jpg", "through16.png", "oxide.png", "cut.png",
                          "junk.jpg", "text.png", "black.png", "dot.png", "line.png", "empty.jpg"])
FLATS = st.sampled_from(["box.png", "box.png", "box.tif", "through16.png", "cut.png", "black.png", "dot.png"])
RECTANGLES = st.one_of(st.sampled_from(["0,0,16,80", "0.0,0.0,0.15,1.0", "30,0,120,80", "0,0,0,0", "10,10,5,5",
                                        "0,0,1"]),
                       st.tuples(numbers, numbers, numbers, numbers).map(",".join))
LIBRARY = {
    "Mine__A.txt": "# material: Mine\n# dataset: A\n300 1.7 0\n1000 1.6 0\n",
    "Zero__A.txt": "# material: Zero\n# dataset: A\n300 1e-300 0\n1000 1e-300 0\n",
    "Bad.txt": "# kind: plasma\n300 1.5 0\n1000 1.5 0\n",
}


def _digest(folder: Path) -> dict:
    return {str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in folder.rglob("*") if p.is_file()}


@contextlib.contextmanager
def _workspace(files: dict, library: bool):
    """A fresh folder holding ``files`` as the current folder, with a user library if asked."""
    old_cwd, old_env = os.getcwd(), os.environ.get("FILMOPTIC_NKDATA")
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        for name, content in files.items():
            (folder / name).parent.mkdir(parents=True, exist_ok=True)
            if isinstance(content, bytes):
                (folder / name).write_bytes(content)
            else:
                (folder / name).write_text(content, encoding="utf-8")
        if library:
            for name, content in LIBRARY.items():
                (folder / "lib").mkdir(exist_ok=True)
                (folder / "lib" / name).write_text(content, encoding="utf-8")
            os.environ["FILMOPTIC_NKDATA"] = str(folder / "lib")
        os.chdir(folder)
        try:
            yield folder
        finally:
            os.chdir(old_cwd)
            if old_env is None:
                os.environ.pop("FILMOPTIC_NKDATA", None)
            else:
                os.environ["FILMOPTIC_NKDATA"] = old_env


RANGED = {"R", "T", "A", "luminous_T", "luminous_R", "luminous_R_reverse", "absorptance", "yield"}
# Exit codes a command documents besides 0 and 2: monitor's 3 (the input ended before the target)
# and 4 (the --on-target command failed).
OTHER_EXIT_CODES = {"monitor": (3, 4)}


def _numbers(value):
    if isinstance(value, bool) or value is None:
        return
    if isinstance(value, (int, float)):
        yield value
    elif isinstance(value, list):
        for v in value:
            yield from _numbers(v)
    elif isinstance(value, dict):
        for v in value.values():
            yield from _numbers(v)


def _check_ranges(answer):
    """Every R, T, A and luminous value in a JSON answer is a number within [0, 1]."""
    if isinstance(answer, dict):
        for key, value in answer.items():
            if key in RANGED and value is not None:
                flat = json.dumps(value)
                assert "null" not in flat, (key, flat[:200])
                assert all(-1e-12 <= x <= 1 + 1e-12 for x in _numbers(value)), (key, flat[:200])
            _check_ranges(value)
    elif isinstance(answer, list):
        for value in answer[:20]:
            _check_ranges(value)


def _no_constants(name):
    raise AssertionError(f"{name} in the JSON output")


def _check_run(args, folder: Path, before: dict):
    result = _run_in_process(args)
    lines = [line for line in result.stderr.splitlines() if line.strip()]
    assert result.exit_code in (0, 2, *OTHER_EXIT_CODES.get(args[0], ())), (args, result.stderr[-500:])
    assert "Traceback" not in result.stderr and "encountered in" not in result.stderr, result.stderr
    if result.exit_code == 2:
        assert len(lines) == 1 and lines[0].startswith("filmoptic: error: "), (args, result.stderr)
        assert result.stdout == ""
    elif result.exit_code == 0:
        assert all(line.startswith(("filmoptic: warning: ", "filmoptic: note: ", "CAUTION: "))
                   for line in lines), (args, result.stderr)
    if result.exit_code != 2 and "--json" in args and "--readings" not in args:
        # One JSON document, or one per line (monitor's stream of readings and its summary).
        try:
            answers = [json.loads(result.stdout, parse_constant=_no_constants)]
        except json.JSONDecodeError:
            answers = [json.loads(line, parse_constant=_no_constants) for line in result.stdout.splitlines()
                       if line.strip()]
        for answer in answers:
            _check_ranges(answer)
    # No input changed: every file that existed before the run is as it was, and no table joined
    # the user library.
    after = _digest(folder)
    assert {k: after.get(k) for k in before} == before, (args, result.stderr)
    assert not [k for k in after if k not in before and k.startswith("lib/")
                and k.lower().endswith((".txt", ".nk"))], (args, result.stderr)
    return result


def _named(args, files) -> dict:
    """The files the command line names: the inputs (the others are not created)."""
    line = " ".join(args)
    return {name: content for name, content in files.items() if name in line}


def _output(draw, files, suffix):
    """An output name: a fresh one, or one of the inputs in some spelling, or the library folder."""
    choice = draw(st.sampled_from(["fresh", "input", "input", "library"]))
    if choice == "input" and files:
        name = draw(st.sampled_from(sorted(files)))
        return draw(st.sampled_from([name, f"./{name}", f"sub/../{name}", f".//{name}"]))
    if choice == "library":
        return f"lib/out{draw(st.sampled_from([suffix, '.txt', '.NK']))}"
    return f"out{suffix}"


# --- the properties ----------------------------------------------------------------------------
@SETTINGS
@given(data=st.data())
def test_spectrum_colour_and_materials_never_fail_badly(data):
    draw = data.draw
    files = {name: draw(NK_CONTENT) for name in FILE_NAMES}
    library = draw(st.booleans())
    command = draw(st.sampled_from(["spectrum", "spectrum", "spectrum", "color", "colour", "materials"]))
    if command == "materials":
        args = ["materials", draw(materials), "--json"]
    else:
        args = [command, draw(stacks())]
        if command == "spectrum":
            args += ["--wl", draw(wavelengths)]
        if draw(st.booleans()):
            args += ["--angle", draw(angles)]
        if draw(st.booleans()):
            args += ["--ambient", draw(ambients)]
        if command == "spectrum" and draw(st.booleans()):
            args.append("--reverse")
        if command != "spectrum":
            args += [flag for flag in ("--munsell", "--cct") if draw(st.integers(0, 3)) == 0]
        args.append("--json")
    files = _named(args, files)
    if draw(st.booleans()):
        option = {"spectrum": draw(st.sampled_from(["--csv", "--plot"])), "color": "--swatch", "colour": "--swatch",
                  "materials": "--plot"}[command]
        args += [option, _output(draw, files, ".csv" if option == "--csv" else ".png")]
        if option == "--plot" and command == "spectrum" and draw(st.booleans()):
            args += ["--plot-percent", draw(PERCENT_RANGES)]
        if option == "--swatch" and draw(st.booleans()):
            args += ["--paper", draw(st.sampled_from(["a4", "letter", "legal"]))]
    with _workspace({**files, "sub/.keep": ""}, library) as folder:
        _check_run(args, folder, _digest(folder))


@SETTINGS
@given(data=st.data())
def test_commands_reading_files_never_fail_badly(data):
    draw = data.draw
    command = draw(st.sampled_from(["rate", "rate", "fit", "solve", "solve-batch", "sweep", "spectrum"]))
    files = {}
    if command == "rate":
        args = ["rate"]
        for i in range(draw(st.integers(1, 3))):
            if draw(st.booleans()):
                name = f"run{i}.json"
                files[name] = draw(SOLVE_CONTENT)
                args += ["--run", f"{draw(st.sampled_from(['5min', '90s', '1e-300s']))}:{name}"
                                  f"{draw(st.sampled_from(['', '#1', '#2', '#0', '#' + '9' * 30]))}"]
            else:
                args += ["--run", f"{draw(st.sampled_from(['5min', '10min', '1s', '1e7s', '0s']))}:"
                                  f"{draw(st.sampled_from(['21.8nm', '9nm+-0.3nm', '1e-300nm', '21.8nm+-0nm', '1e308nm']))}"]
        if draw(st.booleans()):
            args += ["--tooling", draw(numbers)]
        args.append("--json")
    elif command == "fit":
        files["T.csv"] = draw(MEASURED_CONTENT)
        files["film.txt"] = draw(NK_CONTENT)
        model = draw(st.sampled_from(["TiO2 10..400nm / glass 1mm", "cauchy(?,?,0) 100..300nm / glass 1mm",
                                      "file:film.txt ? / glass 1mm", "n=1.5..1.5000000000000002 10..20nm / glass 1mm"]))
        args = ["fit", model, "--measured", "T.csv", "--max-grid", "100", "--starts", "1", "--json"]
        files = _named(args, files)
        if draw(st.booleans()):
            args += ["--plot", _output(draw, files, ".png")]
    elif command == "solve":
        files["lamp.txt"] = draw(NK_CONTENT)
        args = ["solve", draw(stacks(unknown=True)),
                "--reading", draw(st.sampled_from(["0.3", "318/1045", "0/0", "2.3V/7.1V", "318lx/1045lx/2lx"])),
                "--source", draw(st.sampled_from(["A", "lamp.txt", "laser:633"])), "--json"]
        if draw(st.booleans()):
            args += ["--dark", draw(st.sampled_from(["0.02V", "2", "0", "nan", "1e308", "-1", "2lx"]))]
        if draw(st.booleans()):
            args += ["--plot", _output(draw, _named(args, files), ".png")]
    elif command == "solve-batch":
        files["parts.csv"] = draw(READINGS_CONTENT)
        args = ["solve", draw(stacks(unknown=True)), "--readings", "parts.csv", "--source", "A"]
        if draw(st.booleans()):
            args += ["--columns", draw(st.sampled_from(["sample,reference", "sample,reference,dark", "a,b", ",",
                                                        "sample,sample", "x,y,z,w", "sample"]))]
        if draw(st.booleans()):
            args += ["--dark", draw(st.sampled_from(["0.02V", "2", "nan"]))]
        if draw(st.booleans()):
            args += ["--out", _output(draw, files, ".csv")]
    elif command == "sweep":
        args = ["sweep", draw(stacks(unknown=True))]
        if draw(st.integers(0, 4)) == 0:
            args += ["--volts", draw(VOLTS), "--anodize", draw(st.sampled_from(["Ti", "Nb", "Fe"]))]
        else:
            args += ["--range", draw(st.sampled_from(["0:200:2", "0:100:5", "0:1e9:1e-9", "5:1:1"]))]
        for option, suffix in (("--ab-plot", ".png"), ("--csv", ".csv")):
            if draw(st.integers(0, 3)) == 0:
                args += [option, _output(draw, files, suffix)]
        if draw(st.booleans()):
            args += ["--table-step", draw(st.one_of(st.sampled_from(["5", "0.5", "20"]), numbers))]
        args.append("--json")
    else:
        name = draw(st.sampled_from(FILE_NAMES))
        files[name] = draw(NK_CONTENT)
        args = ["spectrum", f"{draw(st.sampled_from(['file:', 'FILE:', 'File:']))}{name} {draw(thicknesses)} / glass",
                "--wl", draw(wavelengths), "--json", "--csv", _output(draw, files, ".csv")]
    files = _named(args, files)
    with _workspace({**files, "sub/.keep": ""}, draw(st.booleans())) as folder:
        _check_run(args, folder, _digest(folder))


NEWER = settings(SETTINGS, max_examples=400)


def _mostly(ordinary, hostile):
    """Ordinary values five times as often as hostile ones (lists are sampled, strategies drawn), so
    that a case holds one or two hostile pieces among ordinary ones and often runs to the end."""
    def strategy(values):
        return values if isinstance(values, st.SearchStrategy) else st.sampled_from(values)
    usual = strategy(ordinary)
    return st.one_of(usual, usual, usual, usual, usual, strategy(hostile))


def _optional(draw, option, ordinary, hostile) -> list:
    """``[option, value]`` one time in four, else nothing (hypothesis starts from the simplest
    case, 0: the option left out)."""
    return [option, draw(_mostly(ordinary, hostile))] if draw(st.integers(0, 3)) == 3 else []


@NEWER
@given(data=st.data())
def test_colour_chart_monitor_design_map_and_explore_commands_never_fail_badly(data):
    draw = data.draw
    command = draw(st.sampled_from(["anodize", "anodise", "heat-tint", "monitor", "monitor", "design", "design",
                                    "map", "map", "explore"]))
    files = {name: draw(NK_CONTENT) for name in FILE_NAMES}
    files["lamp.txt"] = draw(_mostly(["380 1\n780 1\n"], ["380 0\n780 0\n", "380 nan\n780 1\n", "x"]))
    optional = functools.partial(_optional, draw)
    if command in ("anodize", "anodise"):
        args = [command, draw(_mostly(["Ti", "Nb", "Ta", "Al", "Zr"], ["ti", "Fe", "TiO2", "Ti:nope", ""]))]
        args += draw(st.one_of(st.just([]), st.tuples(st.just("--at"), _mostly(["25", "25V", "60"], numbers)).map(list),
                               COLOUR_TARGETS.map(list)))
        args += optional("--volts", ["10:110:5", "0:60:2"], VOLTS)
        args += optional("--max-delta-e", ["6", "10"], numbers)
        args += optional("--nm-per-volt", ["2.4", "1.6"], numbers)
        args += optional("--offset-nm", ["4", "0"], numbers)
        args += optional("--oxide", ["TiO2", "Nb2O5"], materials)
        args += optional("--illuminant", ["D65", "A", "lamp.txt"], ["nope", ""])
        args += optional("--angle", ["0", "45"], angles)
    elif command == "heat-tint":
        model = draw(_mostly(["steel", "stainless-steel", "stainless"], ["copper", "brass", "", "STEEL"]))
        args = ["heat-tint", model]
        args += draw(st.one_of(st.just([]), st.tuples(st.just("--at"), thicknesses).map(list),
                               COLOUR_TARGETS.map(list)))
        odd_ranges = st.one_of(st.sampled_from(["20:80", "150:0:5"]), st.tuples(numbers, numbers, numbers).map(":".join))
        args += optional("--range", ["0:150:5", "20:80:1"], odd_ranges)
        args += optional("--max-delta-e", ["5", "8"], numbers)
        if model == "copper" or draw(st.integers(0, 4)) == 4:
            args += ["--oxide", draw(st.one_of(file_refs, materials))]
        args += optional("--metal", ["Fe", "Cu"], materials)
    elif command == "monitor":
        args = ["monitor", draw(_mostly(["Ti ? / glass 4mm", "TiO2 ? / glass 1mm"], stacks(unknown=True)))]
        if draw(st.booleans()):
            args += ["--plan"] + optional("--rate", ["4.5nm/min", "0.075nm/s"],
                                          ["0nm/s", "-1nm/s", "1e308nm/s", "1e-300nm/s", "x"])
        else:
            files["rec.csv"] = draw(_mostly(st.integers(0, 1).map(_recording), RECORDINGS))
            args += ["rec.csv", "--replay"]
        args += list(draw(_mostly(
            [("--luminous-T", "30%"), ("--target", "9nm"), ("--stop-at", "50%"), ("--T-at", "550=40%")],
            [("--turning-points", "2"), ("--luminous-T", "nan"), ("--target", "1e308nm"), ("--stop-at", "1e-300"),
             ("--turning-points", "1000"), ()])))
        args += ["--source", draw(_mostly(["led:530/30", "laser:633", "A"], ["lamp.txt", "laser:1e-300", "nope"])),
                 "--detector", draw(_mostly(["flat", "photopic", "silicon"], ["lamp.txt", "nope"]))]
        args += optional("--baseline", ["5s", "2s"], ["0", "1e308s", "-1s", "1e-300s"])
        args += optional("--reference", ["1000"], numbers)
        args += optional("--dark", ["2", "2,1"], st.one_of(numbers, st.sampled_from(["2,", ",2", "1000"])))
        args += optional("--window", ["10s", "5s"], ["0s", "1e-300s", "1e308s"])
        args += optional("--interval", ["0.5s", "1s"], ["1e-300s", "1e308s"])
        args += optional("--step", ["0.02", "0.1"], numbers)
        args += optional("--range", ["0:100", "0:20"], ["0:1e9", "0:1e-300", "5:1"])
        args += [flag for flag in ("--keep-going", "--extrapolate") if draw(st.integers(0, 4)) == 4]
    elif command == "design":
        if draw(st.booleans()):
            args = ["design", "--materials", draw(_mostly(["TiO2,SiO2", "Ta2O5,SiO2"],
                                                          ["TiO2", ",", "Ti,Ag", "nope,SiO2", "n=2.3,n=1.46"])),
                    "--on", draw(_mostly(["glass", "glass 2mm", "Cr 5nm / glass 2mm"], stacks()))]
        else:
            args = ["design", draw(_mostly(["TiO2 ? / SiO2 ? / glass", "SiO2 20..200nm / Cr ? / glass 4mm"],
                                           stacks(unknown=True)))]
        for _ in range(draw(st.integers(1, 2))):
            args += ["--goal", draw(GOALS)]
        if draw(st.integers(0, 5)) == 5:
            files["goals.txt"] = "\n".join(draw(st.lists(GOALS, max_size=3)))
            args += ["--goals", "goals.txt"]
        args += ["--tries", draw(_mostly(["10", "0"], ["-1", "x"])), "--starts", "1",
                 "--max-layers", draw(_mostly(["3", "2"], ["1", "0", "201"]))]
        args += optional("--min-layer", ["10nm", "5nm"], thicknesses)
        args += optional("--max-total", ["1um", "500nm"], thicknesses)
        args += optional("--step", ["10nm", "20nm"], ["1e-300nm", "0nm", "nan nm", "1e308nm"])
        args += optional("--reference", ["550", "600nm"], numbers)
        if draw(st.booleans()):
            args += ["--tolerance", draw(_mostly(["2%", "1nm"], ["0%", "nan%", "1e308nm", "-1nm"])),
                     "--samples", draw(_mostly(["10", "5"], ["1", "0", "200001"]))]
            args += optional("--systematic", ["1%"], ["0", "nan"])
    elif command == "map":
        colour = draw(st.booleans())
        photo = draw(_mostly(["oxide.png" if colour else "through.png"], PHOTOS))
        files[photo] = _images()[photo]
        args = ["map", draw(_mostly(["TiO2 ? / Ti" if colour else "Ti ? / glass 4mm"], stacks(unknown=True))),
                "--photo", photo]
        if colour:
            args += ["--mode", draw(st.sampled_from(["colour", "color"]))]
        if draw(st.integers(0, 4)):
            flat = draw(_mostly(["box.png"], FLATS))
            files[flat] = _images()[flat]
            args += ["--open", flat]
        args += ["--cells", draw(_mostly(["6x4", "4x4"], ["1x1", "0x0", "500x500", "x"]))]
        args += optional("--bare", ["0,0,16,80", "0.0,0.0,0.15,1.0"], RECTANGLES)
        args += optional("--region", ["30,0,120,80"], RECTANGLES)
        args += optional("--known", ["30,0,50,20=9nm"], st.tuples(RECTANGLES, thicknesses).map("=".join))
        args += optional("--scale", ["4", "12.5"], numbers)
        args += optional("--encoding", ["auto", "srgb"], ["linear"])
        args += optional("--range", ["0:100", "20:40"], ["100:0", "0:1e9", "nan:1"])
        args += optional("--max-megapixels", ["100"], numbers)
    else:
        args = ["explore", draw(_mostly(["Ti ? / glass 4mm", "TiO2 0..250nm / Ti"], stacks(unknown=True))),
                "--max-mb", "0.2"]
        for _ in range(draw(st.integers(0, 2))):
            odd_ranges = st.one_of(st.sampled_from(["100:0", "0:1e9"]), st.tuples(numbers, numbers).map(":".join))
            args += ["--range", draw(_mostly(["0:100", "10:60"], odd_ranges))]
        args += optional("--step", ["1nm", "2nm"], thicknesses)
        args += optional("--angles", ["0:60:30", "0,45"], wavelengths)
    if command in ("monitor", "design", "map", "explore"):
        args += optional("--ambient", ["air", "water"], ambients)
    files = _named(args, files)
    output = {"anodize": "--chart", "anodise": "--chart", "heat-tint": "--chart",
              "monitor": "--plot" if "--plan" in args else "--log", "design": "--plot", "map": "--csv",
              "explore": "--out"}[command]
    if command == "explore" or draw(st.integers(0, 3)) == 3:
        suffix = {"--log": ".csv", "--csv": ".csv", "--out": ".html"}.get(output, ".png")
        args += [output, _output(draw, files, suffix)]
    if draw(st.integers(0, 4)):
        args.append("--json")
    with _workspace({**files, "sub/.keep": ""}, draw(st.integers(0, 7)) == 7) as folder:
        _check_run(args, folder, _digest(folder))

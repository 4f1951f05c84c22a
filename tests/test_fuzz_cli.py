"""Property-based fuzzing of the command line: whatever is typed, and whatever the files hold, the
command answers with exit code 0 and finite values inside [0, 1], or with exit code 2 and one line,
and leaves every input file as it was.

Hypothesis draws garbage stacks (library names, constant indices, models, mixes and ``file:``
tables, odd thicknesses and repeat counts, stray brackets), garbage option values (wavelength
grids, angles, ambients), garbage files (n,k tables, measured spectra, solve files, light spectra,
a user library folder) and outputs that sometimes name one of the inputs. A longer run of the same
kind, thousands of cases, is ``python tools/fuzz.py`` (for use before a release). These are facts
of the tool's contract, not of physics.
"""

from __future__ import annotations

import contextlib
import hashlib
import json
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


@st.composite
def stacks(draw, unknown=False):
    items = []
    for _ in range(draw(st.integers(0, 3))):
        layer = f"{draw(materials)} {draw(thicknesses)}"
        if draw(st.booleans()) and draw(st.booleans()):
            layer = f"[{layer} / {draw(materials)} {draw(thicknesses)}]x{draw(counts)}"
        items.append(layer)
    if unknown:
        items.append(f"{draw(st.sampled_from(['Ti', 'TiO2', 'n=2']))} ?")
    ordinary = st.sampled_from(["glass", "glass 3mm", "Ti", "n=1.52 1mm"])
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


RANGED = {"R", "T", "A", "luminous_T", "luminous_R", "luminous_R_reverse", "absorptance"}


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


def _check_run(args, folder: Path, before: dict):
    result = _run_in_process(args)
    lines = [line for line in result.stderr.splitlines() if line.strip()]
    assert result.exit_code in (0, 2), (args, result.stderr[-500:])
    assert "Traceback" not in result.stderr and "encountered in" not in result.stderr, result.stderr
    if result.exit_code == 2:
        assert len(lines) == 1 and lines[0].startswith("filmoptic: error: "), (args, result.stderr)
        assert result.stdout == ""
    else:
        assert all(line.startswith(("filmoptic: warning: ", "filmoptic: note: ", "CAUTION: "))
                   for line in lines), (args, result.stderr)
        if "--json" in args:
            _check_ranges(json.loads(result.stdout))
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
        return draw(st.sampled_from([name, f"./{name}", f"sub/../{name}"]))
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
    command = draw(st.sampled_from(["spectrum", "spectrum", "spectrum", "color", "materials"]))
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
        args.append("--json")
    files = _named(args, files)
    if draw(st.booleans()):
        option = {"spectrum": draw(st.sampled_from(["--csv", "--plot"])), "color": "--swatch",
                  "materials": "--plot"}[command]
        args += [option, _output(draw, files, ".csv" if option == "--csv" else ".png")]
    with _workspace({**files, "sub/.keep": ""}, library) as folder:
        _check_run(args, folder, _digest(folder))


@SETTINGS
@given(data=st.data())
def test_commands_reading_files_never_fail_badly(data):
    draw = data.draw
    command = draw(st.sampled_from(["rate", "rate", "fit", "solve", "spectrum"]))
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
        args = ["solve", draw(stacks(unknown=True)), "--reading", draw(st.sampled_from(["0.3", "318/1045", "0/0"])),
                "--source", draw(st.sampled_from(["A", "lamp.txt", "laser:633"])), "--json"]
    else:
        name = draw(st.sampled_from(FILE_NAMES))
        files[name] = draw(NK_CONTENT)
        args = ["spectrum", f"{draw(st.sampled_from(['file:', 'FILE:', 'File:']))}{name} {draw(thicknesses)} / glass",
                "--wl", draw(wavelengths), "--json", "--csv", _output(draw, files, ".csv")]
    files = _named(args, files)
    with _workspace({**files, "sub/.keep": ""}, draw(st.booleans())) as folder:
        _check_run(args, folder, _digest(folder))

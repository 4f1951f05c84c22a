#!/usr/bin/env python
"""Throw thousands of generated hostile command lines at ``filmoptic`` and report what slips through.

For use before a release (the test suite runs a few hundred similar cases through hypothesis).
Every case is a command line built from mutated stacks, garbage option values and garbage files
(n,k tables, measured spectra, solve files, readings, a user library folder), sometimes with an
output that names one of the inputs. Each case runs in a forked child of this process (modules are
imported once, so thousands of cases take minutes, not hours) with a wall-clock limit, and passes
when

- the exit code is 0 (with finite R, T, A and luminous values inside [0, 1] in its JSON) or 2 with
  exactly one line on stderr;
- nothing on stderr is a traceback or numpy's raw warning text ("… encountered in …");
- it finishes within the time limit;
- no file that existed before the run changed (every input, and the user library folder).

    python tools/fuzz.py                   # 4000 cases, seed 1
    python tools/fuzz.py --cases 500 --seed 7 --jobs 2 --timeout 30
    python tools/fuzz.py --show 5          # print up to 5 failing cases of each kind

The last line is the summary, e.g. ``fuzz: 4000 cases, 0 failures (seed 1, 212 s)``; the exit code
is 1 when any case failed.
"""

from __future__ import annotations

import argparse
import hashlib
import json
import os
import random
import shutil
import signal
import sys
import tempfile
import time
from collections import Counter, defaultdict
from pathlib import Path

# -------------------------------------------------------------------------------------------------
# Vocabulary of hostile pieces
# -------------------------------------------------------------------------------------------------
# Each list starts with ordinary values; _pick takes one of those most of the time, so that a case
# usually carries one or two hostile pieces among sensible ones (and many cases run to the end).
NUMBERS = ["1.5", "2.3", "0.004", "1.46", "0", "-1", "1e-300", "1e300", "nan", "inf", "-inf", "1e-5", "0.001", "1e4",
           "1e5", "0.0", "1e-320", "3", "1_000", "0x10", "1,5", "", "  ", "1..2", "1e-9..1e-9",
           "1" * 400, "9" * 5000]
GOOD_MATERIALS = ["Ti", "TiO2", "SiO2", "glass", "Au", "Ag", "Cr", "MgF2", "n=1.46", "n=2.5+3j",
                  "cauchy(1.45,0.004,0)", "mix(Ti,TiO2,0.3)"]
THICKNESSES = ["55nm", "12 nm", "92nm", "0.1um", "8nm", "0nm", "?", "10..90nm", "-5nm", "1e308nm", "1e-320nm", "3mm", "nan nm", "inf nm", "1" * 5000 + "nm", "1" * 100_000 + "nm", "5", "5cm",
               "0..0nm", "1e-300..2e-300nm", "0..1e9nm", "?mm", "1e9nm", "1.7976931348623157e308nm"]
COUNTS = ["2", "4", "10", "1000", "10000", "10001", "0", "9" * 5000, "1e3", "-1", "99999999999999999999"]
WAVELENGTHS = ["380:780:5", "400:900:10", "550", "633,532", "0:1:1e-300", "1e-320:1:1", "400:700:1e-9", "nan", "1e308", "550",
               "400,400", "-1", "380:780:0", "1:1e6:1e-3", "550:550:1", "1e-9", "0.5", "380:780:inf",
               "380:780:1e-300", "700:400:5", "1e6", "1" * 5000, "400:700:0.0001"]
ANGLES = ["0", "45", "30", "89.999", "89.9999999", "90", "-0", "1e-300", "nan", "60"]
AMBIENTS = ["air", "n=1", "n=1.33", "water", "Ti", "n=1e-300", "n=1.33+0.1j", "n=1.33+1e-7j", "n=1e4", "Si", "n=0.001",
            "glass", "n=1e-5+1j"]
READINGS = ["0.3", "30%", "318/1045", "0.8", "0/0", "1/0", "nan", "1e-300", "101%", "-0.1", "1e308/1e-308"]
DURATIONS = ["5min", "10min", "90s", "1s", "1e-300s", "1e7s", "0s", "1e308s", "0.001s"]


def _pick(rng, items, ordinary=3, hostile=0.3):
    """One of ``items``: with probability ``1 - hostile`` one of the first ``ordinary`` ones."""
    if rng.random() >= hostile:
        return items[rng.randrange(min(ordinary, len(items)))]
    return items[rng.randrange(len(items))]


# -------------------------------------------------------------------------------------------------
# Garbage files
# -------------------------------------------------------------------------------------------------
def nk_file_text(rng) -> str:
    kind = rng.randrange(12)
    if kind == 0:
        return "# wavelength_nm n k\n300 1.5 0\n1000 1.5 0\n"
    if kind == 1:
        return "300 1e-300 0\n1000 1e-300 0\n"                     # near-zero n
    if kind == 2:
        return "300 0.001 0\n1000 0.002 0\n"
    if kind == 3:
        return "300 nan 0\n1000 1.5 0\n"
    if kind == 4:
        return "1000 1.5 0\n300 1.5 0\n"                            # unsorted
    if kind == 5:
        return "550 1.5 0\n"                                        # one row
    if kind == 6:
        return "0.3 1.5 0\n1.0 1.5 0\n"                             # micrometres
    if kind == 7:
        return "".join(f"{300 + i * 0.007:.4f} 1.5 0.01\n" for i in range(100_000))
    if kind == 8:
        return "300 1.5 -0.1\n1000 1.5 -0.1\n"
    if kind == 9:
        return "300 1e300 1e300\n1000 1e300 1e300\n"
    if kind == 10:
        return "# range_nm: nan inf\n# kind: metal\n300 1e-9 3\n1000 1e-9 3\n"
    return "".join(rng.choice(["1", " ", "\n", ",", "e", "-", ".", "#", "x"]) for _ in range(300))


def measured_text(rng, big=False) -> str:
    kind = rng.randrange(10)
    if big or kind == 0:
        rows = 1_000_000 if big else 100_000
        return "wavelength (nm),T (%)\n" + "".join(
            f"{400 + i * (500 / rows):.5f},{90 + 5 * ((i % 97) / 97):.3f}\n" for i in range(rows))
    if kind == 1:
        return "wavelength (nm),T (%)\n" + "".join(f"{w},{85 + (w % 37) / 10}\n" for w in range(400, 801, 5))
    if kind == 2:
        return "wl,T\n" + "".join(f"{w},nan\n" for w in range(400, 801, 5))
    if kind == 3:
        return "wl,T\n400,1e308\n500,1e308\n"
    if kind == 4:
        return "wl,T\n400,0.5\n"
    if kind == 5:
        return "wl,T,sigma\n400,0.5,0\n500,0.5,0\n600,0.5,0\n"
    if kind == 6:
        return "wl,T\n" + "".join(f"{1e-300 * (i + 1)},{0.5}\n" for i in range(50))
    if kind == 7:
        return "wl,T\n" + "550,0.5\n" * 200
    if kind == 8:
        return "," * 200_000 + "\n1,2\n"
    return "".join(rng.choice(["1", " ", "\n", ",", ";", "\t", "T", "%", "e", "-", "."]) for _ in range(400))


def solve_file_text(rng) -> str:
    kind = rng.randrange(10)
    if kind == 0:
        return json.dumps({"solutions": [{"thickness_nm": 21.8, "low_nm": 21.4, "high_nm": 22.2}]})
    if kind == 1:
        return json.dumps({"solutions": [{"thickness_nm": 20.0}, {"thickness_nm": 200.0}]})
    if kind == 2:
        return "[" * 100_000 + "]" * 100_000
    if kind == 3:
        return '{"solutions":' + "[" * 50_000 + "]" * 50_000 + "}"
    if kind == 4:
        return json.dumps({"solutions": [1, 2]})
    if kind == 5:
        return json.dumps({"solutions": [{"thickness_nm": 20.0, "low_nm": "x", "high_nm": []}]})
    if kind == 6:
        return json.dumps([{"thickness_nm": 20.0}])
    if kind == 7:
        return json.dumps({"solutions": [{"thickness_nm": "1e999"}]})
    if kind == 8:
        return json.dumps({"solutions": [{"thickness_nm": 1e300, "low_nm": -1e308, "high_nm": 1e308}]})
    return "".join(rng.choice(['{', '}', '[', ']', '"', ':', ',', '1', 'a']) for _ in range(500))


def readings_text(rng) -> str:
    kind = rng.randrange(5)
    if kind == 0:
        return "part,reading\nA,0.3\nB,30%\nC,318/1045\n"
    if kind == 1:
        return "part,reading\n" + "".join(f"P{i},{_pick(rng, READINGS)}\n" for i in range(20))
    if kind == 2:
        return "reading\n" + "x" * 300_000 + "\n"
    if kind == 3:
        return "part,reading\n" + "".join(f"P{i},0.{i % 9 + 1}\n" for i in range(100_000))
    return "".join(rng.choice(['"', ',', '\n', 'r', 'e', '1', '.']) for _ in range(300))


def library_files(rng) -> dict:
    """A user library folder: some good files, some garbage."""
    files = {}
    for i in range(rng.randrange(1, 4)):
        kind = rng.randrange(6)
        if kind == 0:
            files[f"Mine__ds{i}.txt"] = "# material: Mine\n# dataset: ds%d\n300 1.5 0\n1000 1.6 0\n" % i
        elif kind == 1:
            files[f"Bad{i}.txt"] = "# kind: plasma\n300 1.5 0\n1000 1.5 0\n"
        elif kind == 2:
            files[f"Bin{i}.txt"] = "\udcff"  # replaced below by bytes
        elif kind == 3:
            files[f"Rng{i}.nk"] = "# range_nm: 1e-300 1e300\n# material: Rng\n300 1.5 0\n"
        elif kind == 4:
            files[f"Zero{i}.txt"] = "# material: Zero\n300 1e-300 0\n1000 1e-300 0\n"
        else:
            files[f"Air__x{i}.txt"] = "# material: air\n# dataset: x\n# default: yes\n300 1e-300 1\n900 1e-300 1\n"
    return files


# -------------------------------------------------------------------------------------------------
# Cases
# -------------------------------------------------------------------------------------------------
class Case:
    def __init__(self):
        self.args: list = []
        self.files: dict = {}          # relative path -> str or bytes
        self.env: dict = {}

    def add_file(self, name, content) -> str:
        self.files[name] = content
        return name


def _nk_reference(rng, case) -> str:
    name = _pick(rng, ["film.txt", "(film).txt", "[film].txt", "film (2).png", "f,1.txt", "nk.csv"])
    case.add_file(name, nk_file_text(rng))
    prefix = _pick(rng, ["file:", "FILE:", "File:", "fIlE:"])
    spelled = _pick(rng, [name, "./" + name, name])
    return prefix + spelled


def _material(rng, case) -> str:
    roll = rng.random()
    if roll < 0.7:
        return _pick(rng, GOOD_MATERIALS, len(GOOD_MATERIALS))
    if roll < 0.78:
        return f"n={_pick(rng, NUMBERS)}" + (f"+{_pick(rng, NUMBERS)}j" if rng.random() < 0.4 else "")
    if roll < 0.84:
        return "cauchy(" + ",".join(_pick(rng, NUMBERS + ["?"]) for _ in range(rng.choice([3, 4]))) + ")"
    if roll < 0.88:
        return _pick(rng, ["drude", "lorentz", "sellmeier"]) + "(" + ",".join(
            _pick(rng, NUMBERS) for _ in range(rng.choice([2, 3, 4]))) + ")"
    if roll < 0.92:
        return f"mix({_pick(rng, GOOD_MATERIALS)},{_pick(rng, GOOD_MATERIALS)},{_pick(rng, ['0.3', '30%', '0.5', '?'] + NUMBERS, 2)})"
    return _nk_reference(rng, case)


def _layer(rng, case, depth=0) -> str:
    if depth < 2 and rng.random() < 0.15:
        inner = " / ".join(_layer(rng, case, depth + 1) for _ in range(rng.randrange(1, 3)))
        return f"[{inner}]x{_pick(rng, COUNTS)}"
    return f"{_material(rng, case)} {_pick(rng, THICKNESSES)}"


def _stack(rng, case, unknown=False) -> str:
    layers = [_layer(rng, case) for _ in range(rng.randrange(0, 4))]
    if unknown:
        layers.append(f"{_pick(rng, GOOD_MATERIALS)} ?")
    # Built lazily: a file is added to the case only when the stack names it (every file of a
    # case is an input, which the judge checks was left alone).
    substrate = _pick(rng, ["glass", "glass 3mm", "Ti", "Si", "n=1.52", "n=1.52 1mm", None, "slab"])
    if substrate is None:
        substrate = _material(rng, case)
    elif substrate == "slab":
        substrate = f"{_material(rng, case)} {_pick(rng, THICKNESSES)}"
    text = " / ".join([*layers, substrate])
    if rng.random() < 0.08:
        text = _mutate(rng, text)
    return text


def _mutate(rng, text: str) -> str:
    ops = ["/", "[", "]", "(", ")", "?", "..", ":", "x", " ", "\t", "nm", "\x00", "é", "#", "'"]
    chars = list(text)
    for _ in range(rng.randrange(1, 4)):
        where = rng.randrange(len(chars) + 1)
        if rng.random() < 0.5 and chars:
            del chars[min(where, len(chars) - 1)]
        else:
            chars.insert(where, _pick(rng, ops))
    return "".join(chars)


def _output(rng, case, suffix) -> str:
    """An output name: usually fresh, sometimes an input in another spelling, or the library."""
    existing = [name for name in case.files if "/" not in name]
    roll = rng.random()
    if existing and roll < 0.35:
        name = _pick(rng, existing)
        return _pick(rng, [name, "./" + name, os.path.join("..", "work", name), "sub/../" + name])
    if "lib" in case.env.values() and roll < 0.5:
        # A table-like name would become part of the library: it must be refused.
        return "lib/out" + _pick(rng, [suffix, ".txt", ".nk"], 3)
    return "out" + suffix


def make_case(rng, long_run=False) -> Case:
    case = Case()
    if rng.random() < 0.25:
        for name, content in library_files(rng).items():
            case.add_file("lib/" + name, content if content != "\udcff" else bytes(range(128, 256)))
        case.env["FILMOPTIC_NKDATA"] = "lib"
    commands = ["spectrum"] * 4 + ["color", "sweep", "solve", "solve", "compare", "rate", "rate", "fit",
                                   "materials", "solve-batch"]
    command = _pick(rng, commands, len(commands))
    if command == "spectrum":
        args = ["spectrum", _stack(rng, case), "--wl", _pick(rng, WAVELENGTHS)]
        if rng.random() < 0.4:
            args += ["--angle", _pick(rng, ANGLES)]
        if rng.random() < 0.4:
            ambient = _pick(rng, AMBIENTS) if rng.random() < 0.8 else _nk_reference(rng, case)
            args += ["--ambient", ambient]
        if rng.random() < 0.2:
            args.append("--reverse")
        if rng.random() < 0.3:
            args += ["--csv", _output(rng, case, ".csv")]
        if rng.random() < 0.15:
            args += ["--plot", _output(rng, case, ".png")]
        args.append("--json")
    elif command == "color":
        args = ["color", _stack(rng, case)]
        if rng.random() < 0.3:
            lamp = case.add_file(_pick(rng, ["lamp.txt", "lamp.png"]), _pick(rng, [
                "380 1\n780 1\n", "380 0\n780 0\n", "380 nan\n780 1\n", "780 1\n380 1\n", "x"]))
            args += ["--illuminant", lamp]
        if rng.random() < 0.3:
            args += ["--ambient", _pick(rng, AMBIENTS)]
        if rng.random() < 0.2:
            args += ["--angles", _pick(rng, ["0:60:30", "0:89:1e-9", "0,45", "nan"])]
        if rng.random() < 0.2:
            args += ["--swatch", _output(rng, case, ".png")]
        args.append("--json")
    elif command == "sweep":
        args = ["sweep", _stack(rng, case, unknown=True), "--range",
                _pick(rng, ["0:200:2", "0:1e9:1e-9", "0:100:1e-300", "0:10:1", "5:1:1", "0:1e308:1e300"])]
        if rng.random() < 0.2:
            args += ["--chart", _output(rng, case, ".png")]
        args.append("--json")
    elif command == "solve":
        args = ["solve", _stack(rng, case, unknown=True)]
        kind = rng.randrange(3)
        if kind == 0:
            args += ["--luminous-T", _pick(rng, ["30%", "0.3", "1e-300", "100%", "0"])]
        elif kind == 1:
            args += ["--T-at", f"{_pick(rng, ['550', '1e-300', '1e9', 'nan'])}={_pick(rng, ['40%', '0.5'])}"]
        else:
            args += ["--reading", _pick(rng, READINGS), "--source",
                     _pick(rng, ["A", "laser:633", "led:530/30", "laser:1e-300", "led:530/0", "D65"])]
        if rng.random() < 0.3:
            args += ["--range", _pick(rng, ["0:100", "0:1e9", "0:1e-300", "1e-300:2e-300"])]
        if rng.random() < 0.3:
            args += ["--step", _pick(rng, ["0.0001", "1", "50"])]
        if rng.random() < 0.3:
            args += ["--ambient", _pick(rng, AMBIENTS)]
        args.append("--json")
    elif command == "solve-batch":
        path = case.add_file("parts.csv", readings_text(rng))
        args = ["solve", _stack(rng, case, unknown=True), "--readings", path, "--source", "A"]
        if rng.random() < 0.5:
            args += ["--out", _output(rng, case, ".csv")]
    elif command == "compare":
        args = ["compare", *[_material(rng, case) for _ in range(rng.randrange(1, 3))],
                "--on", _pick(rng, ["glass 3mm", "glass", "Ti", "n=1e-300"]),
                "--luminous-T", _pick(rng, ["30%", "0.5"]), "--json"]
    elif command == "rate":
        args = ["rate"]
        for i in range(rng.randrange(1, 4)):
            if rng.random() < 0.4:
                name = case.add_file(_pick(rng, [f"run{i}.json", f"(run{i}).json", f"r {i}.json"]),
                                     solve_file_text(rng))
                ref = name + (_pick(rng, ["", "#1", "#2", "#0", "#99999999999999999999"]))
                args += ["--run", f"{_pick(rng, DURATIONS)}:{ref}"]
            else:
                args += ["--run", f"{_pick(rng, DURATIONS)}:{_pick(rng, ['21.8nm', '21.8nm+-0.4nm', '1e-300nm', '0nm', '1e308nm+-1e308nm', '21.8nm+-0nm', 'monitor=20nm'])}"]
        if rng.random() < 0.3:
            args += ["--tooling", _pick(rng, ["1.1", "0", "nan", "-1", "1e-300"])]
        if rng.random() < 0.3:
            args += ["--target", _pick(rng, ["15nm", "1e-300nm", "1e308nm", "0nm"])]
        args.append("--json")
    elif command == "fit":
        name = case.add_file(_pick(rng, ["T.csv", "T (1).csv", "[T].png"]),
                             measured_text(rng, big=long_run and rng.random() < 0.01))
        model = _pick(rng, ["TiO2 10..400nm / glass 1mm", "cauchy(?,?,0) 100..300nm / glass 1mm",
                            "n=1e-300..1e-299 10..20nm / glass 1mm", "TiO2 0..1e-300nm / glass 1mm",
                            "n=1.5..1.5000000000000002 10..20nm / glass 1mm",
                            "[TiO2 ? / SiO2 92nm]x1000 / glass 1mm", f"{_nk_reference(rng, case)} ? / glass 1mm"])
        args = ["fit", model, "--measured", name, "--max-grid", "200", "--starts", "1"]
        if rng.random() < 0.3:
            args += ["--plot", _output(rng, case, ".png")]
        args.append("--json")
    else:  # materials
        name = _pick(rng, ["Ti", "air", "Mine", None], 4)
        args = ["materials", name if name is not None else _material(rng, case)]
        if rng.random() < 0.3:
            args += ["--plot", _output(rng, case, ".png")]
        args.append("--json")
    if rng.random() < 0.03:
        i = rng.randrange(1, len(args))
        args[i] = _mutate(rng, args[i])
    case.args = args
    return case


# -------------------------------------------------------------------------------------------------
# Running and judging
# -------------------------------------------------------------------------------------------------
RANGED_KEYS = {"R", "T", "A", "luminous_T", "luminous_R", "luminous_R_reverse", "absorptance", "Tv", "Rv"}


def _numbers_under(value):
    if isinstance(value, bool):
        return
    if isinstance(value, (int, float)):
        yield value
    elif isinstance(value, list):
        for v in value:
            yield from _numbers_under(v)
    elif isinstance(value, dict):
        for v in value.values():
            yield from _numbers_under(v)


def _ranged_problems(value, path="") -> list:
    """Problems with R/T/A-like fields in a JSON answer: null, non-finite or outside [0, 1]."""
    problems = []
    if isinstance(value, dict):
        for key, v in value.items():
            if key in RANGED_KEYS and v is not None:
                for x in _numbers_under(v):
                    if not (-1e-9 <= x <= 1 + 1e-9):
                        problems.append(f"{path}{key} = {x!r}")
                        break
                if _has_null(v):
                    problems.append(f"{path}{key} holds null")
            problems += _ranged_problems(v, f"{path}{key}.")
    elif isinstance(value, list):
        for v in value[:50]:
            problems += _ranged_problems(v, path)
    return problems


def _has_null(value) -> bool:
    if value is None:
        return True
    if isinstance(value, list):
        return any(_has_null(v) for v in value)
    return False


def _digest(folder: Path) -> dict:
    out = {}
    for path in folder.rglob("*"):
        if path.is_file() and not path.is_symlink():
            out[str(path.relative_to(folder))] = hashlib.sha256(path.read_bytes()).hexdigest()
    return out


def judge(case: Case, code, stdout: str, stderr: str, before: dict, after: dict) -> list:
    """The kinds of failure this run shows (empty: it passed)."""
    kinds = []
    # The inputs: files the command line names (a mutation may have dropped a name) and the
    # user library; every one must be left as it was.
    line = " ".join(a for i, a in enumerate(case.args)
                    if not (i and case.args[i - 1] in ("--csv", "--plot", "--swatch", "--chart", "--out")))
    inputs = [name for name in before if name in line or ("FILMOPTIC_NKDATA" in case.env and name.startswith("lib/"))]
    changed = [name for name in inputs if after.get(name) != before[name]]
    # Nothing new may join the user library's tables (it would be read by every later run).
    changed += [name for name in after if name not in before and name.startswith("lib/")
                and name.lower().endswith((".txt", ".nk"))]
    if changed:
        kinds.append(("overwrote an input", ", ".join(changed)))
    if code == "timeout":
        kinds.append(("no answer in time", ""))
        return kinds
    if "Traceback" in stderr or "internal error" in stderr or code not in (0, 2):
        kinds.append(("internal error", stderr.strip().splitlines()[-1] if stderr.strip() else f"exit {code}"))
    if "lost precision" in stderr:
        # The engine's last guard: an input check upstream let an extreme value through.
        kinds.append(("result guard tripped", stderr.strip()[:200]))
    if "encountered in" in stderr or "RuntimeWarning" in stderr:
        kinds.append(("raw numpy warning", stderr.strip()[:200]))
    lines = [line for line in stderr.splitlines() if line.strip()]
    if code == 2 and len(lines) != 1:
        kinds.append(("error not one line", stderr.strip()[:300]))
    if code == 0 and "--json" in case.args and stdout.strip() and "--out" not in case.args:
        try:
            answer = json.loads(stdout)
        except ValueError:
            kinds.append(("bad JSON", stdout[:200]))
        else:
            problems = _ranged_problems(answer)
            if problems:
                kinds.append(("NaN or out of [0, 1]", "; ".join(problems[:3])))
    return kinds


def _prepare(case: Case):
    """A fresh folder holding the case's files; returns (root, work folder, digest of the files)."""
    root = Path(tempfile.mkdtemp(prefix="filmoptic-fuzz-"))
    work = root / "work"
    (work / "sub").mkdir(parents=True)
    for name, content in case.files.items():
        path = work / name
        path.parent.mkdir(parents=True, exist_ok=True)
        if isinstance(content, bytes):
            path.write_bytes(content)
        else:
            path.write_text(content, encoding="utf-8", errors="surrogateescape")
    return root, work, _digest(work)


def _child(case: Case, root: Path, work: Path, main) -> None:
    """In the forked child: run the command with stdout/stderr going to files; never returns."""
    code = 1
    try:
        os.chdir(work)
        os.environ.pop("FILMOPTIC_NKDATA", None)
        # Debug mode shows numpy's floating-point warnings (hidden from users) and tracebacks,
        # so that the judge sees both.
        os.environ["FILMOPTIC_DEBUG"] = "1"
        os.environ.update({k: str(work / v) if k == "FILMOPTIC_NKDATA" else v for k, v in case.env.items()})
        with open(root / "stdout", "w") as out, open(root / "stderr", "w") as err:
            os.dup2(out.fileno(), 1)
            os.dup2(err.fileno(), 2)
            sys.stdout = os.fdopen(1, "w", closefd=False)
            sys.stderr = os.fdopen(2, "w", closefd=False)
            try:
                code = main(case.args)
            except BaseException:  # noqa: BLE001 - report any escape as a traceback
                import traceback

                traceback.print_exc()
                code = 1
            sys.stdout.flush()
            sys.stderr.flush()
    finally:
        os._exit(code if isinstance(code, int) and 0 <= code < 256 else 1)


def _collect(root: Path, work: Path, code):
    stdout = (root / "stdout").read_text(errors="replace") if (root / "stdout").exists() else ""
    stderr = (root / "stderr").read_text(errors="replace") if (root / "stderr").exists() else ""
    after = _digest(work)
    shutil.rmtree(root, ignore_errors=True)
    return code, stdout, stderr, after


def run_cases(cases, timeout: float, jobs: int, main):
    """Run the cases in forked children, ``jobs`` at a time; yields (case, code, stdout, stderr,
    before, after) as they finish. A child past ``timeout`` seconds is killed (code "timeout")."""
    pending = list(reversed(cases))
    running = {}            # pid -> (case, root, work, before, start)
    while pending or running:
        while pending and len(running) < max(1, jobs):
            case = pending.pop()
            root, work, before = _prepare(case)
            pid = os.fork()
            if pid == 0:
                _child(case, root, work, main)
            running[pid] = (case, root, work, before, time.monotonic())
        pid, status = os.waitpid(-1, os.WNOHANG)
        if pid:
            case, root, work, before, _ = running.pop(pid)
            code, stdout, stderr, after = _collect(root, work, os.waitstatus_to_exitcode(status))
            yield case, code, stdout, stderr, before, after
            continue
        now = time.monotonic()
        for pid, (case, root, work, before, start) in list(running.items()):
            if now - start > timeout:
                os.kill(pid, signal.SIGKILL)
                os.waitpid(pid, 0)
                del running[pid]
                code, stdout, stderr, after = _collect(root, work, "timeout")
                yield case, code, stdout, stderr, before, after
        time.sleep(0.002)


def _warm_up():
    """Import what the commands import, once, so that forked children start at once."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot  # noqa: F401
    import numpy  # noqa: F401
    import scipy.interpolate  # noqa: F401
    import scipy.optimize  # noqa: F401
    import scipy.stats  # noqa: F401

    import filmoptic.cli.color  # noqa: F401
    import filmoptic.cli.compare  # noqa: F401
    import filmoptic.cli.fit  # noqa: F401
    import filmoptic.cli.materials  # noqa: F401
    import filmoptic.cli.rate  # noqa: F401
    import filmoptic.cli.solve  # noqa: F401
    import filmoptic.cli.spectrum  # noqa: F401
    import filmoptic.cli.sweep  # noqa: F401
    import filmoptic.colorimetry  # noqa: F401
    import filmoptic.inverse.fit  # noqa: F401
    import filmoptic.inverse.solve  # noqa: F401
    from filmoptic.cli import main

    return main


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--cases", type=int, default=4000, help="how many cases (default 4000)")
    parser.add_argument("--seed", type=int, default=1, help="random seed (default 1)")
    parser.add_argument("--timeout", type=float, default=30.0, help="seconds a case may take (default 30)")
    parser.add_argument("--jobs", type=int, default=1, help="cases run at the same time (default 1)")
    parser.add_argument("--show", type=int, default=3, help="failing cases printed per kind (default 3)")
    parser.add_argument("--log", metavar="FILE", help="also write every case (arguments, exit code, "
                        "first stderr line) to FILE as JSON lines")
    options = parser.parse_args(argv)

    cli_main = _warm_up()
    rng = random.Random(options.seed)
    cases = [make_case(rng, long_run=True) for _ in range(options.cases)]
    failures = defaultdict(list)
    counts = Counter()
    start = time.monotonic()
    results = run_cases(cases, options.timeout, options.jobs, cli_main)
    log = open(options.log, "w", encoding="utf-8") if options.log else None
    for number, (case, code, stdout, stderr, before, after) in enumerate(results, 1):
        if log:
            first = next((line for line in stderr.splitlines() if line.strip()), "")
            log.write(json.dumps({"args": [a[:200] for a in case.args], "env": case.env,
                                  "code": code, "stderr": first[:300]}) + "\n")
        counts[code if code in (0, 2) else "other"] += 1
        for kind, detail in judge(case, code, stdout, stderr, before, after):
            failures[kind].append((case, detail))
        if number % 250 == 0:
            print(f"  {number}/{len(cases)} cases, {sum(map(len, failures.values()))} failures",
                  file=sys.stderr, flush=True)
    if log:
        log.close()
    elapsed = time.monotonic() - start
    for kind, found in sorted(failures.items(), key=lambda kv: -len(kv[1])):
        print(f"{kind}: {len(found)}")
        for case, detail in found[: options.show]:
            shown = [a if len(a) < 120 else a[:60] + f"…({len(a)} chars)" for a in case.args]
            print(f"    filmoptic {' '.join(repr(a) for a in shown)}")
            if case.env:
                print(f"      env {case.env}; files {sorted(case.files)}")
            print(f"      -> {detail[:300]}")
    total = sum(len(v) for v in failures.values())
    print(f"fuzz: {len(cases)} cases, {total} failures (exit 0: {counts[0]}, exit 2: {counts[2]}; "
          f"seed {options.seed}, {elapsed:.0f} s)")
    return 1 if total else 0


if __name__ == "__main__":
    sys.exit(main())

#!/usr/bin/env python
"""Throw thousands of generated hostile command lines at ``filmoptic`` and report what slips through.

For use before a release (the test suite runs a few hundred similar cases through hypothesis).
Every case is a command line of one of the commands (and its aliases) built from mutated stacks
(quarter-wave settings and shorthand, native oxides included), garbage option values and garbage
files (n,k tables, measured spectra, solve files, readings, monitor recordings, goal files, photos
that are truncated, black, odd-sized or 16-bit, a user library folder), sometimes with an output
that names one of the inputs. ``monitor`` runs only with ``--plan`` or ``--replay`` (standard input
is empty), so no case waits on a live stream. Each case runs in a forked child of this process (modules are
imported once, so thousands of cases take minutes, not hours) with a wall-clock limit, and passes
when

- the exit code is 0 (with finite R, T, A, luminous and yield values inside [0, 1] in its JSON, and
  no list mixing numbers with nulls, the trace of a NaN) or 2 with exactly one line on stderr, or
  one the command documents (monitor: 3 and 4);
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
# Quarter-wave notation: settings in braces, shorthand letters, "qw@λ0" thicknesses.
QW_REFERENCES = ["550nm", "600nm", "0.55um", "1064nm", "0nm", "-550nm", "nan nm", "1e-300nm", "1e308nm", "550",
                 "", "550nm 600nm", "1" * 400 + "nm"]
QW_LETTERS = ["H=TiO2 L=SiO2", "H=TiO2 L=MgF2", "H=Ta2O5 L=SiO2 M=Al2O3", "H=Ti L=SiO2", "H= L=SiO2",
              "H=TiO2 H=SiO2", "X=TiO2", "H=H", "H=n=2.3 L=n=1.46", "H=mix(TiO2,SiO2,0.5) L=SiO2", "L=SiO2",
              "H=TiO2,L=SiO2", "h=TiO2 l=SiO2"]
QW_ITEMS = ["H", "L", "2H", "0.5L", "M", "H 50nm", "TiO2 1qw", "SiO2 2.5qwot", "MgF2 1qw@550nm", "TiO2 1 QWOT @ 0.55um",
            "H?", "0H", "-1H", "1e9H", "nanH", "1e300qw", "1001qw", "0qw", "TiO2 1qw@0nm", "TiO2 1qw@-5nm",
            "Ti 1qw@550nm", "SiO2 1qw@1e-300nm", "TiO2 1qw@1e308nm", "Q", "H L", "2.5.5H"]
# Native oxide on a metal: "METAL THICKNESS + X oxide" (or a named oxide material).
OXIDE_METALS = ["Al", "Ti", "Cr", "Ta", "Nb", "Zr", "Ag", "Au", "TiO2", "SiO2", "glass", "n=1.5"]
OXIDE_SUFFIXES = ["+ 2nm oxide", "+ 3nm oxide", "+ 20Å Al2O3", "+ 1.5 nm n=1.65", "+ 2nm oxide", "+ 0nm oxide",
                  "+ 1e308nm oxide", "+ 1e-300nm oxide", "+ 500nm oxide", "+ nan nm oxide", "+ -2nm oxide",
                  "+ 2nm", "+ oxide", "+ 2nm oxide + 2nm oxide", "+ 2nm file:film.txt", "+ 2 A oxide",
                  "+ 2nm SiO2", "+ 2nm ?", "+ 2nm Ti"]
PERCENT_RANGES = ["0:50", "auto", "0:100", "50:0", "0:0", "-10:200", "nan:1", "0:1e308", "x", "AUTO", "5", "0:1e-300",
                  "inf:inf", ""]
VOLTS = ["0:100:5", "10:110:2", "10:60", "100:0:5", "0:1e9:1e-9", "0:100:0", "nan:100:5", "-10:10:1", "0:1e308:1e300",
         "5:5:1", "0:100", "x"]
HEXES = ["#3d64ab", "#5c98c5", "#8a9a7b", "#000000", "#ffffff", "3d64ab", "#3d64a", "#gggggg", "#3D64AB", "", "#"]
LABS = ["70,10,-20", "55,0,-25", "50,0,0", "0,0,0", "100,0,0", "nan,0,0", "1e308,0,0", "-5,200,200", "50,0", "a,b,c",
        "50;0;0", "50,0,0,0"]
DELTA_ES = ["6", "10", "3", "0", "-1", "nan", "inf", "1e308", "1e-300"]
ILLUMINANTS = ["D65", "A", "F11", "D50", "LED-B1", "FL3.1", "E", "nope", "", "d65"]


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


def raw_readings_text(rng) -> str:
    """A --readings file of raw meter readings (sample, reference and perhaps dark columns)."""
    kind = rng.randrange(6)
    if kind == 0:
        return "part,sample,reference,dark\nA,2.3V,7.1V,0.02V\nB,2.1V,7.1V,0.02V\nC,318,1045,2\n"
    if kind == 1:
        return "part,sample (V),reference (V)\n" + "".join(f"P{i},{2 + i / 10},{7.1}\n" for i in range(12))
    if kind == 2:
        return "sample;reference\n2,3;7,1\n1,9;7,1\n"                       # decimal commas
    if kind == 3:
        return "sample,reference\n1lx,2V\n0,0\nnan,1\n1e308,1e-308\n-1,5\n"
    if kind == 4:
        return "sample,sample,reference\n1,2,3\n"
    return "".join(rng.choice(['"', ',', '\n', 's', 'V', '1', '.', 'r']) for _ in range(300))


def recording_text(rng, big=False) -> str:
    """A monitor recording: rows of time, reading and perhaps a reference detector's reading."""
    import math

    kind = rng.randrange(14)
    length = rng.choice([60, 200, 400])
    if big:
        length = 200_000
    def growth(t):                  # a metal darkening the beam after the shutter opens at 5 s
        return 1000.0 if t < 5 else 1000.0 * math.exp(-(t - 5) / 25.0)
    if kind <= 2 or big:
        ref = kind == 1
        head = "t_s,reading,reference\n" if ref else "t_s,reading\n"
        return head + "".join(
            f"{i * 0.5},{growth(i * 0.5) + rng.uniform(-2, 2):.2f}" + (f",{500 + rng.uniform(-1, 1):.2f}" if ref else "")
            + "\n" for i in range(length))
    if kind == 3:
        return "".join(f"{growth(i * 0.5):.2f}\n" for i in range(length))          # readings only
    if kind == 4:
        return "".join(f"10:02:{i // 2:02d}.{5 * (i % 2)};{growth(i * 0.5):.1f}\n" for i in range(min(length, 118)))
    if kind == 5:
        return "t_s,reading\n" + "".join(f"{i},{_pick(rng, ['1000', 'nan', '0', '-5', '1e308', 'inf', '', 'x'], 1, 0.5)}\n"
                                          for i in range(length))
    if kind == 6:
        return "t_s,reading\n" + "".join(f"{i},0\n" for i in range(length))        # no light at all
    if kind == 7:
        return "t_s,reading\n" + "".join(f"{(length - i) * 0.5},{growth(i * 0.5):.2f}\n" for i in range(length))
    if kind == 8:
        return "t_s,reading\n" + "".join(f"1e308,{growth(i):.2f}\n" for i in range(20))
    if kind == 9:
        return "t_s,reading\n0,1000\n"
    if kind == 10:
        return ""
    if kind == 11:                   # a dielectric: the signal rises and falls through fringes
        return "t_s,reading\n" + "".join(
            f"{i * 0.5},{1000 - 300 * math.sin(max(0.0, i * 0.5 - 5) / 8.0) ** 2:.2f}\n" for i in range(length))
    if kind == 12:
        return "t_s,reading,reference\n" + "".join(f"{i},{1000},{_pick(rng, ['0', '1e-300', 'nan', '500'], 1, 0.7)}\n"
                                                    for i in range(length))
    return "".join(rng.choice(["1", " ", "\n", ",", ";", "\t", ":", "e", "-", ".", "t"]) for _ in range(400))


GOALS = ["mean R 420..680nm <= 0.5%", "T 550nm = 50%", "luminous-T = 30%", "R 1064nm >= 99%", "luminous-R reverse <= 8%",
         "reflected Lab = 55,0,-25 within 2", "transmitted hex = #8a9a7b within 3", "mean R 420..680nm @0..40deg <= 1%",
         "R 1064nm @45deg s >= 99%", "T 550nm = 50% weight 3", "luminous-T = 30% under A", "A 550nm <= 5%",
         "reflected Lab = 60,0,0 @0..30deg", "T 550nm = 50% within 2%",
         "R 0..1e9nm <= 1%", "R 420..680nm <= nan%", "R 1e-300nm = 50%", "mean R 680..420nm <= 1%", "T 550nm = 150%",
         "R 550nm @0..89.9999deg <= 1%", "R 550nm @90deg <= 1%", "T 550nm = 50% weight 1e308", "T 550nm = 50% weight 0",
         "T 550nm = 50% weight -1", "", "R", "= 50%", "reflected Lab = nan,0,0 within 2", "reflected hex = #zzzzzz within 3",
         "luminous-T = 30% under nope", "R 550nm @0..40deg x <= 1%", "R 400..700nm @0..60deg p <= 1e-300%",
         "mean T 380..780nm >= 1e308%", "R 550nm <= 1%" * 50, "reflected Lab = 50,0,0 within 0",
         "reflected Lab = 50,0,0 within -1", "T 550nm = 50% within 1e308%", "R 200..2500nm @0..80deg <= 1%"]


def goals_file_text(rng) -> str:
    kind = rng.randrange(4)
    if kind == 0:
        return "# goals\n" + "\n".join(_pick(rng, GOALS, 14) for _ in range(rng.randrange(1, 4))) + "\n"
    if kind == 1:
        return "\n".join(_pick(rng, GOALS, len(GOALS)) for _ in range(rng.randrange(1, 5))) + "\n"
    if kind == 2:
        return "# nothing but comments\n\n"
    return "".join(rng.choice(["R", "T", " ", "\n", "=", "%", "<", ">", "1", ".", "#"]) for _ in range(300))


def _srgb_codes(linear, depth=8):
    import numpy as np

    v = np.clip(np.asarray(linear, dtype=float), 0.0, 1.0)
    encoded = np.where(v <= 0.0031308, 12.92 * v, 1.055 * v ** (1 / 2.4) - 0.055)
    top = 255 if depth == 8 else 65535
    return np.rint(encoded * top).astype(np.uint8 if depth == 8 else np.uint16)


def _encode_image(pixels, fmt: str) -> bytes:
    """Bytes of an image file holding ``pixels`` (uint8 or uint16, grey or RGB) as ``fmt``."""
    import io

    import numpy as np
    from PIL import Image

    if pixels.dtype == np.uint16:
        # Pillow writes no 16-bit RGB PNG: the project's own writer does (written to a scratch file).
        from filmoptic.imaging.render import write_png

        with tempfile.TemporaryDirectory() as tmp:
            path = Path(tmp) / "x.png"
            write_png(path, pixels)
            return path.read_bytes()
    image = Image.fromarray(pixels)
    buffer = io.BytesIO()
    image.save(buffer, format={"jpg": "JPEG", "png": "PNG", "tif": "TIFF", "gif": "GIF", "bmp": "BMP"}[fmt])
    return buffer.getvalue()


def map_images(rng, mode: str) -> dict:
    """The photo, the flat field (open box or white card) and perhaps a dark frame and a mask, as bytes:
    mostly sensible small images, sometimes truncated, garbage, black, saturated, odd-sized or 16-bit."""
    import numpy as np

    width, height = _pick(rng, [(160, 120), (120, 120), (200, 80), (1, 1), (1, 300), (300, 1), (3, 2), (2000, 1), (7, 5),
                                (48, 32)], 3, 0.15)
    fmt = _pick(rng, ["png", "jpg", "tif", "png16", "gif", "bmp"], 3)
    y, x = np.mgrid[0:height, 0:width].astype(float)
    if mode == "transmission":                       # a light box seen through a coated glass
        flat = np.full((height, width), 0.8)
        photo = flat * (0.35 + 0.4 * x / max(width - 1, 1))
        photo[:, : max(1, width // 6)] = 0.8 * 0.92   # a bare strip at the left
        photo = np.repeat(photo[..., None], 3, axis=2)
        flat = np.repeat(flat[..., None], 3, axis=2)
    else:                                            # an oxide's colours, lit evenly
        hue = (x + y) / max(width + height - 2, 1)
        photo = np.stack([0.2 + 0.5 * hue, 0.3 + 0.2 * np.sin(6 * hue) ** 2, 0.6 - 0.4 * hue], axis=2)
        flat = np.full((height, width, 3), 0.85)
    images = {"photo": photo, "open": flat}
    if rng.random() < 0.2:
        images["dark"] = np.full((height, width, 3), 0.01)
    if rng.random() < 0.15:
        images["mask"] = np.repeat(((x - width / 2) ** 2 + (y - height / 2) ** 2 < (min(width, height) / 2.2) ** 2)
                                   [..., None].astype(float), 3, axis=2)
    out = {}
    for role, linear in images.items():
        kind = _pick(rng, ["good", "truncated", "garbage", "text", "black", "white", "grey16", "other size",
                           "empty", "huge header", "noise"], 1, 0.12)
        if kind == "black":
            linear = np.zeros_like(linear)
        elif kind == "white":
            linear = np.ones_like(linear) * 1.2
        elif kind == "other size":
            linear = np.full((height + 3, width + 1, 3), 0.5)
        elif kind == "noise":
            linear = np.random.default_rng(rng.randrange(1 << 30)).random(linear.shape)
        if kind in ("garbage",):
            data = bytes(rng.randrange(256) for _ in range(rng.choice([10, 1000])))
        elif kind == "text":
            data = b"hello, not an image\n"
        elif kind == "empty":
            data = b""
        elif kind == "huge header":
            # A PNG whose header claims 100 000 x 100 000 pixels over a few bytes of data.
            import struct
            import zlib

            def chunk(tag, body):
                return struct.pack(">I", len(body)) + tag + body + struct.pack(">I", zlib.crc32(tag + body) & 0xFFFFFFFF)

            data = (b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", struct.pack(">IIBBBBB", 100_000, 100_000, 8, 2, 0, 0, 0))
                    + chunk(b"IDAT", zlib.compress(b"\x00" * 1000)) + chunk(b"IEND", b""))
        elif kind == "grey16" or fmt == "png16":
            grey = linear.mean(axis=2) if kind == "grey16" else linear
            data = _encode_image(_srgb_codes(grey, 16), "png" if kind == "grey16" or fmt == "png16" else fmt)
        else:
            data = _encode_image(_srgb_codes(linear), fmt if fmt != "png16" else "png")
        if kind == "truncated":
            data = _encode_image(_srgb_codes(linear), fmt if fmt != "png16" else "png")
            data = data[: max(1, len(data) // 3)]
        out[role] = data
    suffix = "." + (fmt[:3] if fmt != "png16" else "png")
    return {role: (f"{role}{_pick(rng, [suffix, suffix, '.png', '.jpg', '.tif', ''])}", data) for role, data in out.items()}


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
    if rng.random() < 0.08:
        return _oxide_layer(rng, case)
    return f"{_material(rng, case)} {_pick(rng, THICKNESSES)}"


def _oxide_layer(rng, case, thickness=None) -> str:
    """A metal with the oxide air grows on it: ``Al 10nm + 2nm oxide`` (sometimes a film file)."""
    suffix = _pick(rng, OXIDE_SUFFIXES, 4)
    if "file:" in suffix:
        suffix = "+ 2nm " + _nk_reference(rng, case)
    metal = _pick(rng, OXIDE_METALS, 6)
    thickness = thickness if thickness is not None else _pick(rng, ["10nm", "5nm", "30nm", "?", "1nm", "2..20nm"]
                                                              + THICKNESSES, 6)
    return f"{metal} {thickness} {suffix}"


def _quarter_wave_stack(rng, case, unknown=False) -> str:
    """``{550nm H=TiO2 L=SiO2} [H / L]x4 / H / glass`` and its mutations."""
    settings = " ".join(part for part in (_pick(rng, QW_REFERENCES, 3), _pick(rng, QW_LETTERS, 3)) if part)
    items = []
    for _ in range(rng.randrange(1, 4)):
        roll = rng.random()
        if roll < 0.3:
            inner = " / ".join(_pick(rng, QW_ITEMS, 4) for _ in range(rng.randrange(1, 3)))
            items.append(f"[{inner}]x{_pick(rng, ['4', '2', '8'] + COUNTS, 3)}")
        elif roll < 0.85:
            items.append(_pick(rng, QW_ITEMS, 4))
        else:
            items.append(f"{_material(rng, case)} {_pick(rng, THICKNESSES)}")
    if unknown:
        items.insert(rng.randrange(len(items) + 1), _pick(rng, ["TiO2 ?", "SiO2 ?", "H ?", "Ti ?", "L 10..200nm"], 3))
    substrate = _pick(rng, ["glass", "glass 1mm", "Si", "n=1.52", "H", "BK7"], 3)
    braces = _pick(rng, ["{%s}", "{%s}", "{ %s }", "%s", "{%s", "{%s}}", "{{%s}}"], 2)
    return (braces % settings) + " " + " / ".join([*items, substrate])


def _stack(rng, case, unknown=False) -> str:
    roll = rng.random()
    if roll < 0.1:
        text = _quarter_wave_stack(rng, case, unknown)
        return _mutate(rng, text) if rng.random() < 0.08 else text
    layers = [_layer(rng, case) for _ in range(rng.randrange(0, 4))]
    if unknown:
        layers.append(_oxide_layer(rng, case, "?") if roll < 0.18 else f"{_pick(rng, GOOD_MATERIALS)} ?")
    # Built lazily: a file is added to the case only when the stack names it (every file of a
    # case is an input, which the judge checks was left alone).
    substrate = _pick(rng, ["glass", "glass 3mm", "Ti", "Si", "n=1.52", "n=1.52 1mm", None, "slab", "Al + 4nm oxide",
                            "Ti + 2nm oxide", "glass + 2nm oxide"])
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
        return _pick(rng, [name, "./" + name, os.path.join("..", "work", name), "sub/../" + name, ".//" + name,
                           "sub//.././" + name], 6)
    if "lib" in case.env.values() and roll < 0.5:
        # A table-like name would become part of the library: it must be refused.
        return "lib/out" + _pick(rng, [suffix, ".txt", ".nk"], 3)
    return "out" + suffix


def _lamp(rng, case) -> str:
    """An illuminant: a name, or a lamp spectrum file (sometimes garbage)."""
    if rng.random() < 0.8:
        return _pick(rng, ILLUMINANTS)
    return case.add_file(_pick(rng, ["lamp.txt", "lamp.png"]), _pick(rng, [
        "380 1\n780 1\n", "380 0\n780 0\n", "380 nan\n780 1\n", "780 1\n380 1\n", "x", "400 1\n700 1\n"]))


def _colour_target(rng) -> list:
    if rng.random() < 0.5:
        return ["--hex", _pick(rng, HEXES, 3)]
    return ["--lab", _pick(rng, LABS, 3)]


def _anodize_args(rng, case, command) -> list:
    args = [command, _pick(rng, ["Ti", "Nb", "Ta", "Al", "Zr", "ti", "Ti:Werner-2009", "Fe", "", "Ti:nope", "TiO2",
                                 "TI", "Zr:"], 5)]
    roll = rng.random()
    if roll < 0.3:
        args += ["--at", _pick(rng, ["25", "25V", "60", "0", "-5", "nan", "1e308", "1e-300", "25 V", "x", "100V", "5kV"])]
    elif roll < 0.6:
        args += _colour_target(rng)
        if rng.random() < 0.5:
            args += ["--max-delta-e", _pick(rng, DELTA_ES)]
    if rng.random() < 0.4:
        args += ["--volts", _pick(rng, VOLTS)]
    if rng.random() < 0.2:
        args += ["--nm-per-volt", _pick(rng, ["2.4", "1.6", "0", "-1", "100", "101", "nan", "1e-300", "inf"])]
    if rng.random() < 0.2:
        args += ["--offset-nm", _pick(rng, ["4", "0", "-4", "1000", "-1000", "1001", "nan", "1e-300"])]
    if rng.random() < 0.15:
        args += ["--oxide", _material(rng, case)]
    if rng.random() < 0.2:
        args += ["--illuminant", _lamp(rng, case)]
    if rng.random() < 0.15:
        args += ["--observer", _pick(rng, ["2", "10", "5", "x"], 2)]
    if rng.random() < 0.15:
        args += ["--angle", _pick(rng, ANGLES)]
    if rng.random() < 0.2:
        args += ["--chart", _output(rng, case, _pick(rng, [".png", ".pdf", ".svg", ".txt"], 3))]
        if rng.random() < 0.5:
            args += ["--paper", _pick(rng, ["a4", "letter", "A4", "legal"], 2)]
    return args + ["--json"] * (rng.random() < 0.8)


def _heat_tint_args(rng, case) -> list:
    model = _pick(rng, ["steel", "stainless-steel", "stainless", "copper", "Steel", "brass", "", "STAINLESS"], 4)
    args = ["heat-tint", model]
    roll = rng.random()
    if roll < 0.3:
        args += ["--at", _pick(rng, ["45nm", "45", "0nm", "-5nm", "nan nm", "1e308nm", "1e-300nm", "x", "0.05um"])]
    elif roll < 0.6:
        args += _colour_target(rng)
        if rng.random() < 0.5:
            args += ["--max-delta-e", _pick(rng, DELTA_ES)]
    if rng.random() < 0.3:
        args += ["--range", _pick(rng, ["0:150:5", "0:300:1", "20:80", "150:0:5", "0:1e9:1e-9", "0:100:0", "nan:1:1",
                                        "-10:10:1", "0:1e308:1e300", "x"])]
    if model == "copper" or rng.random() < 0.15:
        args += ["--oxide", _nk_reference(rng, case) if rng.random() < 0.7 else _material(rng, case)]
    if rng.random() < 0.15:
        args += ["--metal", _material(rng, case)]
    if rng.random() < 0.2:
        args += ["--illuminant", _lamp(rng, case)]
    if rng.random() < 0.15:
        args += ["--angle", _pick(rng, ANGLES)]
    if rng.random() < 0.2:
        args += ["--chart", _output(rng, case, _pick(rng, [".png", ".pdf", ".svg"]))]
        if rng.random() < 0.5:
            args += ["--paper", _pick(rng, ["a4", "letter", "legal"], 2)]
    return args + ["--json"] * (rng.random() < 0.8)


def _monitor_args(rng, case, long_run) -> list:
    """A monitor case that never waits on a live stream: --plan, or --replay of a recording."""
    stack = _pick(rng, ["Ti ? / glass 4mm", "TiO2 ? / glass 1mm", "Cr ? / glass 4mm", None], 3)
    args = ["monitor", stack if stack is not None else _stack(rng, case, unknown=True)]
    plan = rng.random() < 0.35
    if plan:
        args.append("--plan")
        if rng.random() < 0.6:
            args += ["--rate", _pick(rng, ["4.5nm/min", "0.075nm/s", "0nm/s", "-1nm/s", "nan nm/s", "1e308nm/s",
                                           "1e-300nm/s", "5", "1nm/h", "x"], 2)]
        if rng.random() < 0.1:
            args.append(case.add_file("rec.csv", recording_text(rng)))     # an INPUT with --plan is refused
    elif rng.random() < 0.05:
        args += ["-", "--replay"]                                          # standard input (empty here)
    else:
        name = _pick(rng, ["rec.csv", "(rec).csv", "rec 2.txt", "[rec].csv"])
        args += [case.add_file(name, recording_text(rng, big=long_run and rng.random() < 0.005)), "--replay"]
    targets = [["--luminous-T", _pick(rng, ["30%", "0.3", "50%", "0", "100%", "101%", "nan", "1e-300"])],
               ["--target", _pick(rng, ["9nm", "5nm", "60nm", "0nm", "-1nm", "1e308nm", "nan nm", "1e-300nm"])],
               ["--stop-at", _pick(rng, ["33%", "0.5", "0", "1.5", "nan", "-1", "1e-300"])],
               ["--turning-points", _pick(rng, ["2", "1", "0", "1000", "-1", "x"])],
               ["--T-at", f"{_pick(rng, ['550', '1e-300', '1e9', 'nan'])}={_pick(rng, ['40%', '0.5', '2'])}"],
               ["--R-at", f"{_pick(rng, ['633', '550'])}={_pick(rng, ['20%', '0.1'])}"],
               ["--luminous-R", _pick(rng, ["20%", "8%", "0.99"])]]
    for _ in range(_pick(rng, [1, 1, 1, 0, 2], 3)):
        args += _pick(rng, targets, 3)
    args += ["--source", _pick(rng, ["led:530/30", "laser:633", "A", "D65", "laser:1e-300", "led:530/0", "nope",
                                     _lamp(rng, case)], 3)]
    args += ["--detector", _pick(rng, ["flat", "photopic", "silicon", "nope", "lamp.txt"], 2)]
    if "lamp.txt" in args and "lamp.txt" not in case.files:
        case.add_file("lamp.txt", "300 1\n1100 1\n")
    for option, values, chance, ordinary in (
            ("--reference-kind", ["bare", "open", "closed"], 0.15, 2),
            ("--baseline", ["5s", "0", "0s", "1e308s", "-1s", "nan s", "1e-300s", "100s", "x"], 0.2, 2),
            ("--reference", ["1000", "0", "-1", "nan", "1e308", "1e-300", "x"], 0.15, 1),
            ("--dark", ["2", "0", "2,1", "nan", "1e308", "-5", "2,", ",2", "1000"], 0.2, 3),
            ("--solution", ["1", "2", "0", "99"], 0.1, 2),
            ("--warn-before", ["10s", "0s", "1e308s", "nan s"], 0.1, 1),
            ("--window", ["10s", "1s", "0s", "1e-300s", "1e308s", "-1s"], 0.15, 2),
            ("--interval", ["0.5s", "1s", "0s", "1e-300s", "1e308s", "nan s"], 0.15, 2),
            ("--timeout", ["5s", "1s", "0s", "-1s", "1e308s"], 0.1, 2),
            ("--speed", ["1000", "1e6", "0", "-1", "nan", "inf", "1e308"], 0.08, 2),
            ("--range", ["0:100", "0:20", "0:1e9", "0:1e-300", "5:10", "nan:1"], 0.15, 2),
            ("--step", ["0.02", "0.0001", "5", "0", "nan"], 0.1, 3),
            ("--angle", ANGLES, 0.1, 4),
            ("--ambient", AMBIENTS, 0.1, 4),
            ("--illuminant", ["D65", "A", "nope"], 0.1, 2),
            ("--side", ["front", "reverse", "back"], 0.1, 2),
            ("--on-target", ["true", "false"], 0.05, 2)):
        if rng.random() < chance:
            args += [option, _pick(rng, values, ordinary, hostile=0.15)]
    if rng.random() < 0.2:
        args.append("--keep-going")
    if rng.random() < 0.05:
        args.append("--extrapolate")
    if rng.random() < 0.15:
        args += ["--log", _output(rng, case, ".csv")]
        if rng.random() < 0.3:
            args.append("--resume")
    if rng.random() < 0.15:
        args += ["--plot", _output(rng, case, _pick(rng, [".png", ".svg", ".pdf", ".csv"], 3))]
    return args + ["--json"] * (rng.random() < 0.7)


def _design_args(rng, case) -> list:
    if rng.random() < 0.5:
        args = ["design", "--materials", _pick(rng, ["TiO2,SiO2", "TiO2,MgF2", "Ta2O5,SiO2", "TiO2", "", ",", "Ti,Ag",
                                                     "TiO2,SiO2,MgF2,Al2O3,Ta2O5", "nope,SiO2", "n=2.3,n=1.46",
                                                     "file:film.txt,SiO2"], 4)]
        if "file:film.txt" in args[-1]:
            case.add_file("film.txt", nk_file_text(rng))
        if rng.random() < 0.95:
            args += ["--on", _pick(rng, ["glass", "glass 2mm", "Cr 5nm / glass 2mm", None], 3) or _stack(rng, case)]
    else:
        check = rng.random() < 0.3
        args = ["design", _stack(rng, case, unknown=not check)]
        if check:
            args.append("--check-only")
        if rng.random() < 0.2:
            args += ["--materials", _pick(rng, ["TiO2,SiO2", "SiO2", "x"])]
    for _ in range(rng.randrange(0 if rng.random() < 0.2 else 1, 3)):
        args += ["--goal", _pick(rng, GOALS, 14)]
    if rng.random() < 0.15:
        args += ["--goals", case.add_file(_pick(rng, ["goals.txt", "(goals).txt"]), goals_file_text(rng))]
    args += ["--tries", _pick(rng, ["20", "5", "0", "30", "-1", "1000001", "x"], 4),
             "--starts", _pick(rng, ["1", "2", "0", "101"], 2)]
    for option, values, chance, ordinary in (
            ("--max-layers", ["4", "2", "1", "6", "0", "201", "x"], 0.3, 4),
            ("--min-layer", ["10nm", "5nm", "0nm", "-1nm", "1e308nm", "nan nm", "x"], 0.15, 2),
            ("--max-total", ["1.5um", "500nm", "0nm", "1e-300nm", "1e308nm", "x"], 0.15, 2),
            ("--seed", ["0", "1", "7", "-1", "4294967296", "x"], 0.2, 3),
            ("--step", ["5nm", "10nm", "1nm", "0nm", "1e-300nm", "nan nm", "-5nm", "1e308nm"], 0.2, 3),
            ("--reference", ["550", "550nm", "1e-300", "nan", "-5", "1e308", "x"], 0.15, 2),
            ("--illuminant", ["D65", "A", "nope"], 0.1, 2),
            ("--ambient", AMBIENTS, 0.1, 4)):
        if rng.random() < chance:
            args += [option, _pick(rng, values, ordinary, hostile=0.15)]
    if rng.random() < 0.35:
        args += ["--tolerance", _pick(rng, ["2%", "1nm", "5%", "0%", "nan%", "1e308nm", "-1nm", "x", "100%", "1e-300nm"], 3),
                 "--samples", _pick(rng, ["20", "10", "1", "0", "200001", "x"], 3)]
        if rng.random() < 0.3:
            args += ["--systematic", _pick(rng, ["1%", "0", "0.5nm", "nan", "-1%"])]
        if rng.random() < 0.3:
            args.append("--uniform")
    if rng.random() < 0.2:
        args += ["--plot", _output(rng, case, _pick(rng, [".png", ".svg", ".pdf", ".txt"], 3))]
    return args + ["--json"] * (rng.random() < 0.8)


def _map_args(rng, case) -> list:
    mode = _pick(rng, ["transmission", "colour", "color", "grey"], 3)
    images = map_images(rng, "colour" if mode.startswith("col") else "transmission")
    names = {role: case.add_file(name, data) for role, (name, data) in images.items()}
    if mode.startswith("col"):
        stack = _pick(rng, ["TiO2 ? / Ti", "TiO2 10..300nm / Ti", "Ti ? / glass 4mm", None], 2)
    else:
        stack = _pick(rng, ["Ti ? / glass 4mm", "Cr ? / glass 4mm", "TiO2 ? / Ti", None], 2)
    args = ["map", stack if stack is not None else _stack(rng, case, unknown=True), "--photo", names["photo"]]
    if mode != "transmission" or rng.random() < 0.3:
        args += ["--mode", mode]
    if rng.random() < 0.85:
        args += ["--open", names["open"]]
    if "dark" in names:
        args += ["--dark", names["dark"]]
    if "mask" in names:
        args += ["--mask", names["mask"]]
    rectangle = ["2,2,18,78", "0.0,0.0,0.15,1.0", "0,0,0.1,0.5", "0,0,0,0", "10,10,5,5", "-1,0,5,5", "nan,0,1,1",
                 "0,0,1e308,1e308", "0,0,1", "0.5,0.5,0.5,0.5", "x"]
    for option, values, chance, ordinary in (
            ("--bare", rectangle, 0.6, 3),
            ("--white", rectangle, 0.1, 3),
            ("--region", ["30,0,120,80", "0.2,0,1,1"] + rectangle, 0.3, 2),
            ("--cells", ["8x6", "4x4", "1x1", "0x0", "500x500", "8", "x", "1e9x1", "-1x5"], 0.4, 3),
            ("--cell", ["4px", "2mm", "0px", "1e308px", "-1px", "x", "1px"], 0.15, 1),
            ("--scale", ["4", "12.5", "0", "-1", "nan", "1e-300", "1e308"], 0.15, 2),
            ("--known", ["10,10,20,20=9.5nm", "0,0,6,20=0nm", "10,10,20,20=-1nm", "10,10,20,20=nan nm",
                         "10,10,20,20=1e308nm", "30,30,40", "0,0,1,1=", "0.5,0,1,1=8nm"], 0.15, 1),
            ("--observer", ["2", "10", "3"], 0.1, 2),
            ("--encoding", ["auto", "srgb", "linear", "gamma"], 0.2, 3),
            ("--range", ["0:100", "0:500", "20:40", "100:0", "0:1e9", "0:1e-300", "nan:1"], 0.2, 2),
            ("--angle", ANGLES, 0.1, 4),
            ("--ambient", AMBIENTS, 0.1, 4),
            ("--max-megapixels", ["100", "0.001", "0", "-1", "nan", "1e308"], 0.15, 1)):
        if rng.random() < chance:
            args += [option, _pick(rng, values, ordinary, hostile=0.15)]
    if rng.random() < 0.1:
        args += ["--illuminant", _lamp(rng, case)]
    if rng.random() < 0.2:
        args += ["--plot", _output(rng, case, _pick(rng, [".png", ".svg", ".pdf", ".jpg"], 3))]
    if rng.random() < 0.2:
        args += ["--csv", _output(rng, case, ".csv")]
    return args + ["--json"] * (rng.random() < 0.8)


def _explore_args(rng, case) -> list:
    stack = _pick(rng, ["Ti ? / glass 4mm", "TiO2 0..250nm / Ti", "SiO2 20..200nm / Cr ? / glass 4mm", None], 2)
    args = ["explore", stack if stack is not None else _stack(rng, case, unknown=True),
            "--out", _output(rng, case, _pick(rng, [".html", ".html", ".htm", ".png"]))]
    for _ in range(_pick(rng, [0, 0, 1, 2, 3], 3)):
        args += ["--range", _pick(rng, ["0:100", "0:250", "10:10", "100:0", "0:1e9", "nan:1", "0:1e-300", "-5:5", "x"])]
    for option, values, chance, ordinary in (
            ("--step", ["0.5nm", "1nm", "5nm", "1e-300nm", "0nm", "nan nm", "-1nm", "1e308nm", "5"], 0.3, 3),
            ("--angles", ["0:70:5", "0,45", "0:60:30", "0:89.999:1e-3", "nan", "0:90:5", "0:60:1e-300", "45", ""], 0.3, 3),
            ("--max-mb", ["0.2", "0.5", "1", "0.1", "21", "nan", "x"], 0.9, 3),
            ("--observer", ["2", "10", "5"], 0.1, 2),
            ("--ambient", AMBIENTS, 0.1, 4)):
        if rng.random() < chance:
            args += [option, _pick(rng, values, ordinary, hostile=0.15)]
    if "--max-mb" not in args:
        args += ["--max-mb", "0.2"]               # keeps a case quick: the default page takes seconds
    if rng.random() < 0.1:
        args += ["--illuminant", _lamp(rng, case)]
    return args + ["--json"] * (rng.random() < 0.7)


def make_case(rng, long_run=False) -> Case:
    case = Case()
    if rng.random() < 0.25:
        for name, content in library_files(rng).items():
            case.add_file("lib/" + name, content if content != "\udcff" else bytes(range(128, 256)))
        case.env["FILMOPTIC_NKDATA"] = "lib"
    commands = ["spectrum"] * 4 + ["color", "colour", "sweep", "sweep", "solve", "solve", "compare", "rate", "rate",
                                   "fit", "materials", "solve-batch", "anodize", "anodise", "heat-tint", "heat-tint",
                                   "monitor", "monitor", "monitor", "design", "design", "map", "map", "map", "explore"]
    command = _pick(rng, commands, len(commands))
    if command in ("anodize", "anodise"):
        args = _anodize_args(rng, case, command)
    elif command == "heat-tint":
        args = _heat_tint_args(rng, case)
    elif command == "monitor":
        args = _monitor_args(rng, case, long_run)
    elif command == "design":
        args = _design_args(rng, case)
    elif command == "map":
        args = _map_args(rng, case)
    elif command == "explore":
        args = _explore_args(rng, case)
    elif command == "spectrum":
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
            if rng.random() < 0.5:
                args += ["--plot-percent", _pick(rng, PERCENT_RANGES, 3)]
        elif rng.random() < 0.03:
            args += ["--plot-percent", _pick(rng, PERCENT_RANGES)]      # without --plot
        args.append("--json")
    elif command in ("color", "colour"):
        args = [command, _stack(rng, case)]
        if rng.random() < 0.3:
            args += ["--illuminant", _lamp(rng, case)]
        if rng.random() < 0.25:
            args.append("--munsell")
        if rng.random() < 0.25:
            args.append("--cct")
        if rng.random() < 0.3:
            args += ["--ambient", _pick(rng, AMBIENTS)]
        if rng.random() < 0.2:
            args += ["--angles", _pick(rng, ["0:60:30", "0:89:1e-9", "0,45", "nan"])]
        if rng.random() < 0.2:
            args += ["--swatch", _output(rng, case, _pick(rng, [".png", ".pdf", ".svg"]))]
        if rng.random() < 0.15:
            args += ["--paper", _pick(rng, ["a4", "letter", "A4", "legal"], 2)]
        args.append("--json")
    elif command == "sweep":
        args = ["sweep", _stack(rng, case, unknown=True)]
        if rng.random() < 0.15:
            args += ["--volts", _pick(rng, VOLTS), "--anodize", _pick(rng, ["Ti", "Nb", "Al", "Fe"], 3)]
        else:
            args += ["--range", _pick(rng, ["0:200:2", "0:1e9:1e-9", "0:100:1e-300", "0:10:1", "5:1:1", "0:1e308:1e300"])]
        if rng.random() < 0.2:
            args += ["--chart", _output(rng, case, ".png")]
            if rng.random() < 0.3:
                args += ["--tolerance", _pick(rng, ["5%", "2nm", "0%", "nan%", "-1nm", "1e308nm", "x"])]
        if rng.random() < 0.15:
            args += ["--ab-plot", _output(rng, case, _pick(rng, [".png", ".svg", ".pdf", ".csv"], 3))]
        if rng.random() < 0.15:
            args += ["--csv", _output(rng, case, ".csv")]
        if rng.random() < 0.2:
            args += ["--table-step", _pick(rng, ["5", "0.5", "20", "1e-300", "nan", "0", "-1", "1e308", "x"], 3)]
        args.append("--json" if rng.random() < 0.7 else "--extrapolate")
    elif command == "solve":
        args = ["solve", _stack(rng, case, unknown=True)]
        kind = rng.randrange(3)
        if kind == 0:
            args += ["--luminous-T", _pick(rng, ["30%", "0.3", "1e-300", "100%", "0"])]
        elif kind == 1:
            args += ["--T-at", f"{_pick(rng, ['550', '1e-300', '1e9', 'nan'])}={_pick(rng, ['40%', '0.5'])}"]
        else:
            args += ["--reading", _pick(rng, READINGS + ["2.3V/7.1V", "318lx/1045lx/2lx", "2.3V/7.1lx", "1/2/3/4"]),
                     "--source", _pick(rng, ["A", "laser:633", "led:530/30", "laser:1e-300", "led:530/0", "D65"])]
            if rng.random() < 0.3:
                args += ["--dark", _pick(rng, ["0.02V", "0", "5", "nan", "1e308", "-1", "318lx", "2V", "1e-300"])]
        if rng.random() < 0.15:
            args += ["--plot", _output(rng, case, _pick(rng, [".png", ".svg", ".pdf"]))]
        if rng.random() < 0.05:
            args += ["--volts", _pick(rng, ["0:100", "10:60", "100:0", "nan:1", "0:1e308"]),
                     "--anodize", _pick(rng, ["Ti", "Nb", "Fe"], 2)]
        if rng.random() < 0.3:
            args += ["--range", _pick(rng, ["0:100", "0:1e9", "0:1e-300", "1e-300:2e-300"])]
        if rng.random() < 0.3:
            args += ["--step", _pick(rng, ["0.0001", "1", "50"])]
        if rng.random() < 0.3:
            args += ["--ambient", _pick(rng, AMBIENTS)]
        args.append("--json")
    elif command == "solve-batch":
        raw = rng.random() < 0.4
        path = case.add_file("parts.csv", raw_readings_text(rng) if raw else readings_text(rng))
        args = ["solve", _stack(rng, case, unknown=True), "--readings", path, "--source", "A"]
        if raw and rng.random() < 0.5:
            args += ["--columns", _pick(rng, ["sample,reference", "sample,reference,dark", "sample (V),reference (V)",
                                              "a,b", ",", "sample,sample", "x,y,z,w", "sample", ""], 3)]
        if rng.random() < 0.2:
            args += ["--dark", _pick(rng, ["0.02V", "2", "nan", "1e308"])]
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
RANGED_KEYS = {"R", "T", "A", "luminous_T", "luminous_R", "luminous_R_reverse", "absorptance", "Tv", "Rv", "yield"}
# Options whose value is a file the command writes (the rest of the command line names its inputs).
OUTPUT_OPTIONS = ("--csv", "--plot", "--swatch", "--chart", "--out", "--log", "--ab-plot")
# Exit codes a command documents besides 0 and 2 (monitor: 3 the input ended before the target,
# 4 the --on-target command failed; 130, an interrupt, cannot happen here).
OTHER_EXIT_CODES = {"monitor": (3, 4)}


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


def _mixed_nulls(value, path="") -> list:
    """Lists that hold numbers and nulls together: a NaN turned into null among finite values
    (a whole list of nulls, or a null field, may be meant: no solution, no reference; a model's
    wavelength range [0, null] is open at the top; an optical density is null, infinite, where
    T = 0, as spectrum's help says)."""
    problems = []
    if isinstance(value, dict):
        for key, v in value.items():
            if key == "OD" or (key == "wavelength_nm" and isinstance(v, list) and len(v) == 2 and v[1] is None):
                continue
            problems += _mixed_nulls(v, f"{path}{key}.")
    elif isinstance(value, list):
        kinds = {type(v) for v in value}
        if type(None) in kinds and (int in kinds or float in kinds):
            problems.append(f"{path.rstrip('.')} mixes numbers and null")
        for v in value[:50]:
            problems += _mixed_nulls(v, path)
    return problems


def _json_answers(stdout: str):
    """The JSON values on stdout: one document, or one per line (monitor's stream)."""
    try:
        return [json.loads(stdout, parse_constant=_refuse_constant)]
    except ValueError:
        return [json.loads(line, parse_constant=_refuse_constant) for line in stdout.splitlines() if line.strip()]


def _refuse_constant(name):
    raise ValueError(f"{name} in JSON")


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
    line = " ".join(a for i, a in enumerate(case.args) if not (i and case.args[i - 1] in OUTPUT_OPTIONS))
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
    allowed = (0, 2, *OTHER_EXIT_CODES.get(case.args[0] if case.args else "", ()))
    if "Traceback" in stderr or "internal error" in stderr or code not in allowed:
        kinds.append(("internal error", stderr.strip().splitlines()[-1] if stderr.strip() else f"exit {code}"))
    if "lost precision" in stderr:
        # The engine's last guard: an input check upstream let an extreme value through.
        kinds.append(("result guard tripped", stderr.strip()[:200]))
    if "encountered in" in stderr or "RuntimeWarning" in stderr:
        kinds.append(("raw numpy warning", stderr.strip()[:200]))
    lines = [line for line in stderr.splitlines() if line.strip()]
    if code == 2 and len(lines) != 1:
        kinds.append(("error not one line", stderr.strip()[:300]))
    if code in allowed and code != 2 and "--json" in case.args and stdout.strip() and "--readings" not in case.args:
        try:
            answers = _json_answers(stdout)
        except ValueError:
            kinds.append(("bad JSON", stdout[:200]))
        else:
            problems = [p for answer in answers for p in _ranged_problems(answer) + _mixed_nulls(answer)]
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
        # Nothing to read on standard input (monitor's '-' sees its end at once).
        devnull = os.open(os.devnull, os.O_RDONLY)
        os.dup2(devnull, 0)
        sys.stdin = os.fdopen(0, "r", closefd=False)
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

    import PIL.Image  # noqa: F401

    import filmoptic.cli.anodize  # noqa: F401
    import filmoptic.cli.color  # noqa: F401
    import filmoptic.cli.design  # noqa: F401
    import filmoptic.cli.explore  # noqa: F401
    import filmoptic.cli.heat_tint  # noqa: F401
    import filmoptic.cli.map  # noqa: F401
    import filmoptic.cli.monitor  # noqa: F401
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


def _keep(case: Case, folder: Path, found) -> None:
    """A failing case's input files and command line, to run it again by hand."""
    for name, content in case.files.items():
        path = folder / name
        path.parent.mkdir(parents=True, exist_ok=True)
        if isinstance(content, bytes):
            path.write_bytes(content)
        else:
            path.write_text(content, encoding="utf-8", errors="surrogateescape")
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "case.json").write_text(json.dumps({"args": case.args, "env": case.env, "failures": found}, indent=1))


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--cases", type=int, default=4000, help="how many cases (default 4000)")
    parser.add_argument("--seed", type=int, default=1, help="random seed (default 1)")
    parser.add_argument("--timeout", type=float, default=30.0, help="seconds a case may take (default 30)")
    parser.add_argument("--jobs", type=int, default=1, help="cases run at the same time (default 1)")
    parser.add_argument("--show", type=int, default=3, help="failing cases printed per kind (default 3)")
    parser.add_argument("--log", metavar="FILE", help="also write every case (arguments, exit code, "
                        "first stderr line) to FILE as JSON lines")
    parser.add_argument("--keep", metavar="FOLDER", help="write each failing case's files (as they were "
                        "before the run) and its command line (case.json) to FOLDER/NUMBER, to replay it")
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
        found = judge(case, code, stdout, stderr, before, after)
        for kind, detail in found:
            failures[kind].append((case, detail))
        if found and options.keep:
            _keep(case, Path(options.keep) / f"{number:05d}", found)
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

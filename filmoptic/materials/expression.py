"""Reading a material as written in stack notation: ``parse_material(text) -> Material``.

Grammar (whitespace allowed around tokens; function names are case-insensitive)::

    material    := library | constant | model | mix | file
    library     := NAME [":" DATASET]                     Ti, TiO2:Devore-1951, glass, copper, float glass
    constant    := "n=" coef [("+"|"-") coef ("j"|"i")]    n=1.46, n=2.54+3.43j, n=?+0..0.5j
    model       := "cauchy(" coef "," coef "," coef ["," coef] ")"        A, B, C [, k]
                 | "sellmeier(" coef "," coef {"," coef "," coef} ")"    B1, C1 [, B2, C2 [, B3, C3]]
                 | "drude(" coef "," coef "," coef ")"                    eps_inf, plasma_eV, damping_eV
                 | "lorentz(" coef {"," coef "," coef "," coef} ")"       eps_inf, then strength, centre_eV, width_eV …
    mix         := "mix(" material "," material "," fraction ")"        Bruggeman, fraction of the second
    file        := "file:" PATH
    coef        := NUMBER | "?" | NUMBER ".." NUMBER
    fraction    := coef | NUMBER "%"

``?`` and ``LOW..HIGH`` become :class:`~filmoptic.params.Free` values (unknowns for fits). The
text is parsed, never evaluated.
"""

from __future__ import annotations

import re

from filmoptic.errors import StackSyntaxError
from filmoptic.limits import NUMBER_CHARACTERS, check_number_text
from filmoptic.params import Free

from .base import Material
from .common_names import common_name
from .library import get_material
from .mixing import Bruggeman
from .models import Cauchy, Constant, Drude, Lorentz, Sellmeier
from .tables import load_nk_file

__all__ = ["parse_material", "parse_coefficient"]

_NUM = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_UNSIGNED = r"(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
# A range is tried before a plain number so that "1.4..1.6" is not read as "1." and ".4".
_COEF = rf"(?:\?|{_NUM}\s*\.\.\s*{_NUM}|{_NUM})"
_UCOEF = rf"(?:\?|{_UNSIGNED}\s*\.\.\s*{_NUM}|{_UNSIGNED})"
_CONSTANT_RE = re.compile(rf"^n\s*=\s*({_COEF})(?:\s*([+-])\s*({_UCOEF})\s*\*?\s*[ij])?$", re.IGNORECASE)
_RANGE_RE = re.compile(rf"^({_NUM})\s*\.\.\s*({_NUM})$")
_NAME_RE = re.compile(r"^[A-Za-z][A-Za-z0-9_.+\-]*(?:\s*:\s*[A-Za-z0-9][A-Za-z0-9_.+\-]*)?$")
_CALL_RE = re.compile(r"^([A-Za-z_]+)\s*\((.*)\)$", re.DOTALL)

# Deepest nesting of parentheses (mixes of mixes); real materials nest two or three levels.
_MAX_NESTING = 32

_MODELS = {
    "cauchy": (Cauchy, "cauchy(A,B,C[,k]) with λ in µm"),
    "sellmeier": (Sellmeier, "sellmeier(B1,C1[,B2,C2[,B3,C3]]) with λ in µm, C in µm²"),
    "drude": (Drude, "drude(eps_inf,plasma_eV,damping_eV)"),
    "lorentz": (Lorentz, "lorentz(eps_inf,strength,centre_eV,width_eV[,…more triplets])"),
}


def parse_coefficient(text: str, what: str = "coefficient"):
    """A number, ``?`` (unknown) or ``LOW..HIGH`` (bounded unknown).

    Examples
    --------
    >>> parse_coefficient("1.46")
    1.46
    >>> parse_coefficient("?")
    Free(low=None, high=None)
    >>> parse_coefficient("0.1..0.4")
    Free(low=0.1, high=0.4)
    """
    s = str(text).strip()
    if s == "?":
        return Free()
    try:
        check_number_text(s, what)
    except ValueError as exc:
        raise StackSyntaxError(str(exc)) from None
    m = _RANGE_RE.match(s)
    if m:
        low, high = float(m.group(1)), float(m.group(2))
        if not low < high:
            raise StackSyntaxError(f"{what}: a range LOW..HIGH needs LOW < HIGH, got {s!r}")
        return Free(low, high)
    if re.fullmatch(_NUM, s):
        return float(s)
    raise StackSyntaxError(f"{what}: expected a number, '?' or LOW..HIGH, got {s!r}")


def _split_arguments(text: str, where: str) -> list:
    """Split on commas that are not inside parentheses."""
    parts, depth, current = [], 0, []
    for ch in text:
        if ch == "(":
            depth += 1
            if depth > _MAX_NESTING:
                raise StackSyntaxError(f"{where}: parentheses nested more than {_MAX_NESTING} deep")
        elif ch == ")":
            depth -= 1
            if depth < 0:
                raise StackSyntaxError(f"{where}: unbalanced ')'")
        if ch == "," and depth == 0:
            parts.append("".join(current).strip())
            current = []
        else:
            current.append(ch)
    if depth:
        raise StackSyntaxError(f"{where}: missing ')'")
    parts.append("".join(current).strip())
    if any(not p for p in parts):
        raise StackSyntaxError(f"{where}: empty argument")
    return parts


def _closes_at_end(text: str) -> bool:
    """Whether the first '(' of ``text`` is closed by its last character (one call, nothing after)."""
    depth = 0
    for position, ch in enumerate(text):
        if ch == "(":
            depth += 1
        elif ch == ")":
            depth -= 1
            if depth == 0:
                return position == len(text) - 1
    return False


def _parse_fraction(text: str):
    s = text.strip()
    if s.endswith("%"):
        number = s[:-1].strip()
        if not re.fullmatch(_NUM, number):
            raise StackSyntaxError(f"mix: the fraction {s!r} is not a number")
        return float(number) / 100.0
    return parse_coefficient(s, "mix fraction")


def _parse_constant(text: str) -> Material:
    if len(text) > 3 * NUMBER_CHARACTERS:
        raise StackSyntaxError(
            f"the index {text[:20]!r}… is {len(text)} characters long; write it like n=1.46 or n=2.54+3.43j"
        )
    m = _CONSTANT_RE.match(text)
    if not m and re.fullmatch(r"n\s*=\s*\d+,\d+", text.strip(), re.IGNORECASE):
        raise StackSyntaxError(
            f"cannot read the index {text!r}: write the decimal point as '.', e.g. "
            f"{text.strip().replace(',', '.')!r}"
        )
    if not m:
        raise StackSyntaxError(
            f"cannot read the index {text!r}: write it like n=1.46 or n=2.54+3.43j (k >= 0)"
        )
    n = parse_coefficient(m.group(1), "n")
    if m.group(3) is None:
        return Constant(n)
    k = parse_coefficient(m.group(3), "k")
    if m.group(2) == "-":
        raise StackSyntaxError(
            f"{text!r}: filmoptic writes N = n + i·k with k >= 0; write n={m.group(1)}+{m.group(3)}j"
        )
    return Constant(n, k)


def _parse_file(text: str) -> Material:
    path = text[len("file:"):].strip()
    if not path:
        raise StackSyntaxError("file: needs a path, e.g. file:my_film.txt")
    table = load_nk_file(path)
    from filmoptic.notes import note_file

    note_file(path, getattr(table, "how_read", "n,k table"))
    # The cached table is shared; hand out a copy that remembers how it was written.
    material = object.__new__(type(table))
    material.__dict__.update(table.__dict__)
    material.header = dict(table.header, path=path)
    material.dataset = "file"
    return material


def parse_material(text: str) -> Material:
    """Read one material as written in stack notation.

    Parameters
    ----------
    text : str
        A library name (``Ti``), ``NAME:DATASET``, a constant index (``n=1.46``,
        ``n=2.54+3.43j``), a model (``cauchy(1.45,0.004,0)``, ``sellmeier(…)``,
        ``drude(…)``, ``lorentz(…)``), a Bruggeman mix (``mix(Ti,TiO2,0.3)``) or a user
        file (``file:PATH``). Coefficients may be ``?`` or ``LOW..HIGH``.

    Returns
    -------
    Material

    Raises
    ------
    StackSyntaxError, UnknownMaterialError, DataFileError
        One-line messages; unknown names come with close matches.

    Examples
    --------
    >>> parse_material("n=2.54+3.43i").nk(500.0)
    array(2.54+3.43j)
    >>> parse_material("mix(n=1.5,n=1.5,0.3)").nk(500.0)
    array(1.5+0.j)
    >>> parse_material("cauchy(1.45,?,0)").free_parameters()
    [('cauchy B', Free(low=None, high=None))]
    """
    if not isinstance(text, str):
        raise StackSyntaxError(f"a material must be written as text, got {text!r}")
    s = text.strip()
    if not s:
        raise StackSyntaxError("empty material name")
    if s[:5].lower() == "file:":
        return _parse_file(s)
    if re.match(r"^n\s*=", s, re.IGNORECASE):
        return _parse_constant(s)
    call = _CALL_RE.match(s)
    if call and not _closes_at_end(s):
        call = None  # e.g. "f(1).g(2)": not one call; falls through to the general message
    if call:
        function = call.group(1).lower()
        args = _split_arguments(call.group(2), f"{call.group(1)}(…)")
        if function == "mix":
            if len(args) != 3:
                raise StackSyntaxError(
                    f"mix takes three arguments, mix(A,B,F) with F the volume fraction of B; got {len(args)}"
                )
            return Bruggeman(parse_material(args[0]), parse_material(args[1]), _parse_fraction(args[2]))
        if function in _MODELS:
            cls, usage = _MODELS[function]
            if function == "cauchy" and len(args) not in (3, 4):
                raise StackSyntaxError(f"cauchy takes 3 or 4 numbers; write {usage}, got {len(args)}")
            values = [parse_coefficient(a, f"{function} argument {i + 1}") for i, a in enumerate(args)]
            try:
                return cls(*values)
            except TypeError:
                raise StackSyntaxError(f"{function}: wrong number of arguments; write {usage}") from None
        known = ", ".join(["mix", *_MODELS])
        raise StackSyntaxError(f"unknown function {call.group(1)!r} in {s!r}: known ones are {known}")
    name, _, dataset = s.partition(":")
    if _NAME_RE.match(s) or common_name(name) is not None:
        return get_material(name.strip(), dataset.strip() or None)
    raise StackSyntaxError(
        f"cannot read the material {s!r}: use a library name (see `filmoptic materials`), "
        "n=VALUE, a model like cauchy(A,B,C), mix(A,B,F) or file:PATH"
    )



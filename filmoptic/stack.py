"""Stack notation and the :class:`Stack` / :class:`Layer` data model.

A stack is written on one line, items in the order the light meets them, separated by ``/``::

    TiO2 60nm / SiO2 95nm / glass 3mm
    [TiO2 55nm / SiO2 92nm]x4 / glass 1mm
    cauchy(?,?,0) 150..500nm / glass 1mm
    Ti ? / glass 4mm

A layer is ``MATERIAL THICKNESS``. The thickness always carries a unit (``nm``, ``um``/``µm``,
``mm``, or Ångström as ``A``/``Å``/``angstrom``), or is ``?`` (an unknown) or ``LOW..HIGH nm`` (a
bounded unknown). Layers in nm or µm are coherent; an item in mm is a thick slab whose internal
reflections add in intensity. The last item is the substrate: without a thickness a half-space
(only its front surface counts), with one in mm a thick slab with the ambient behind it.
``[ … ]xN`` repeats a group (nested groups allowed); an unknown inside a group is one unknown
shared by every repetition, as the same recipe is run each time. Materials are read by
:func:`filmoptic.materials.parse_material`.

A metal layer may carry the oxide that air grows on it: ``METAL THICKNESS + OXIDE_THICKNESS
oxide`` (or ``+ OXIDE_THICKNESS MATERIAL`` to name the oxide's constants)::

    Al 10nm + 2nm oxide / glass 4mm      →   Al2O3 2nm / Al 8.45nm / glass 4mm
    Ti ? + 3nm oxide / glass 4mm         →   TiO2 3nm / Ti (? − 1.69)nm / glass 4mm
    Cr 12nm + 2nm n=2.2 / glass          →   n=2.2 2nm / Cr 11nm / glass

The oxide lies on top of the metal (on the side the light comes from), and growing it consumes
metal: the written thickness is the metal deposited, the metal left is that less
``oxide / ratio``, the Pilling–Bedworth ratio of :data:`filmoptic.materials.films.NATIVE_OXIDES`
(1.29 for Al → Al2O3). A substrate may carry one too (``Al + 4nm oxide``: the oxide on bulk
aluminium; nothing is consumed from a half-space or a slab).

Quarter waves
-------------
A layer's thickness may be given as quarter-wave optical thicknesses (QWOT) at a design
wavelength λ0: ``TiO2 1qw@550nm`` is one quarter wave, n(λ0)·d = λ0/4, so d = λ0/(4·n(λ0)) with
n the real index of the layer's own material at λ0; ``SiO2 2.5qw@550nm`` is 2.5 of them. ``qwot``
may be written for ``qw``. A stack may open with settings in braces that hold for all of it::

    {550nm} MgF2 1qw / glass                               single-layer antireflection
    {550nm H=TiO2 L=SiO2} [H / L]x4 / H / glass 1mm         a quarter-wave mirror
    {600nm H=Ta2O5 L=SiO2} 2H / L / glass                  2H: two quarter waves (a half wave)

The bare wavelength is the reference wavelength of every ``qw`` without its own ``@``, and of the
shorthand letters. ``H=MATERIAL``, ``L=MATERIAL`` and ``M=MATERIAL`` name the materials of the
trade's shorthand: an item ``H`` is one quarter wave of that material, ``2H`` or ``0.5L`` that
many; the letter also stands for its material in an ordinary item (``H 50nm``). The resolved
thickness is an ordinary number of nm in :attr:`Layer.thickness_nm`; :attr:`Layer.quarter_waves`
remembers how it was written. Quarter waves are defined for layers that pass light: a material
with k > n at λ0 (a metal) is refused.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, replace
from functools import cached_property

from filmoptic.errors import FilmopticError, StackSyntaxError
from filmoptic.limits import LAYERS, NUMBER_CHARACTERS, REPEAT_COUNT, STACK_CHARACTERS
from filmoptic.params import Free, Parameter, is_free
from filmoptic.units import LENGTH_UNIT_PATTERN, MAX_LENGTH_NM, length_unit_nm

__all__ = ["Layer", "Stack", "parse_stack", "quarter_wave_nm", "MAX_REPEAT", "MAX_NESTING", "MAX_QUARTER_WAVES"]

# '+ 2nm oxide', '+ 20Å Al2O3:ALD', '+ 1.5 nm n=1.65' at the end of an item.
_OXIDE_RE = re.compile(
    r"^(?P<base>.*?\S)\s+\+\s*(?P<number>\d+(?:\.\d*)?|\.\d+)\s*(?P<unit>nm|[Aa]ngstroms?|\u00c5|\u212b|A)"
    r"\s+(?P<what>\S+)\s*$"
)

#: Largest repeat count of a group (more is a typo, not a coating; see :mod:`filmoptic.limits`).
MAX_REPEAT = REPEAT_COUNT
#: Deepest nesting of groups and brackets (real designs nest two or three levels).
MAX_NESTING = 32

_NUM = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_UNIT = LENGTH_UNIT_PATTERN
#: Largest number of quarter waves in one layer (more is a typo, not a design).
MAX_QUARTER_WAVES = 1000
# "1qw", "2.5 qw@550nm", "1QWOT @ 0.55um": quarter waves at the end of an item.
_QW_RE = re.compile(
    rf"(?:^|\s)(?P<count>{_NUM})\s*(?:qwot|qw)(?:\s*@\s*(?P<wl>{_NUM})\s*(?P<unit>nm|um|µm|μm)?)?\s*$",
    re.IGNORECASE,
)
# "H", "2H", "0.5 L": the shorthand for quarter waves of a named material.
_SHORTHAND_RE = re.compile(rf"^(?P<count>{_NUM})?\s*(?P<letter>[HLM])$")
_SHORTHAND_LETTERS = ("H", "L", "M")
# The thickness at the end of an item, after white space: 55nm, 55 nm, ?, ?mm, 10..40nm, 55.
_THICKNESS_RE = re.compile(
    rf"(?:^|\s)(?P<thickness>\?\s*(?:{_UNIT})?|{_NUM}\s*\.\.\s*{_NUM}\s*(?:{_UNIT})?|{_NUM}\s*(?:{_UNIT})?)\s*$"
)
_REPEAT_RE = re.compile(r"^\s*[xX×*]\s*(\S*)\s*$")


@dataclass(frozen=True)
class Layer:
    """One item of a stack.

    Attributes
    ----------
    material : filmoptic.materials.Material
        Its optical constants.
    thickness_nm : float, Free or None
        Thickness in nm; a :class:`~filmoptic.params.Free` for an unknown; None only for a
        half-space substrate.
    thick : bool
        True for an incoherent thick slab (written in mm).
    text : str
        The item as the user wrote it.
    item : int or None
        Which written item this layer was expanded from. Copies made by a repeat group share
        it, and with it their unknowns. None: the layer stands alone.
    consumed_nm : float
        Metal used up by the native oxide written on it (``+ 2nm oxide``): the layer's optical
        thickness is ``thickness_nm − consumed_nm`` (not below 0), ``thickness_nm`` being the
        metal deposited.
    note : str
        For an oxide layer written with ``+ Xnm oxide``: what the notation expanded to.
    quarter_waves : tuple or None
        ``(count, wavelength_nm)`` when the thickness was written in quarter waves (``1qw@550nm``,
        ``H``); ``thickness_nm`` is then ``count · λ0 / (4 n(λ0))``. None for a thickness in nm.
    """

    material: object
    thickness_nm: float | Free | None
    thick: bool = False
    text: str = ""
    item: int | None = None
    consumed_nm: float = 0.0
    note: str = ""
    quarter_waves: tuple | None = None

    @property
    def label(self) -> str:
        return self.text or f"{self.material} {self.thickness_nm}"

    def effective_nm(self, deposited_nm=None):
        """The thickness light sees: deposited (``thickness_nm`` or the value given for an
        unknown) less the metal consumed by its native oxide, not below 0."""
        value = self.thickness_nm if deposited_nm is None else deposited_nm
        if value is None or is_free(value):
            return value
        return max(float(value) - self.consumed_nm, 0.0)


@dataclass(frozen=True)
class Stack:
    """A coating stack: layers in the order light meets them, on a substrate, in an ambient.

    Attributes
    ----------
    layers : tuple of Layer
        Every item before the substrate (repeat groups expanded).
    substrate : Layer
        The last item: a half-space (``thickness_nm`` None) or a thick slab.
    ambient : Material
        The medium the light comes from.
    exit_medium : Material
        The medium behind a thick substrate slab (the ambient).
    text : str
        The stack as written.

    Examples
    --------
    >>> s = parse_stack("n=2.3 ? / n=1.52")
    >>> [p.name for p in s.parameters]
    ['n=2.3 thickness (layer 1)']
    >>> s.bind([60.0]).layers[0].thickness_nm
    60.0
    """

    layers: tuple
    substrate: Layer
    ambient: object
    exit_medium: object
    text: str = ""

    def __str__(self) -> str:
        return self.text or " / ".join(layer.label for layer in (*self.layers, self.substrate))

    # -- unknowns ---------------------------------------------------------------------------
    @cached_property
    def _slots(self):
        """Parameters, and for each layer (substrate last) its thickness/material slots."""
        parameters = []
        seen = {}
        per_layer = []
        items = (*self.layers, self.substrate)
        for index, layer in enumerate(items):
            key = ("item", layer.item) if layer.item is not None else ("layer", index)
            if key not in seen:
                where = "substrate" if index == len(self.layers) else f"layer {index + 1}"
                material_slots = []
                for name, free in layer.material.free_parameters():
                    kind = "fraction" if "fraction" in name.lower() else "coefficient"
                    material_slots.append(len(parameters))
                    parameters.append(Parameter(f"{name} ({where})", "", kind, free, index))
                thickness_slot = None
                if is_free(layer.thickness_nm):
                    thickness_slot = len(parameters)
                    # A material with its own unknowns reads badly as a label ("cauchy(?,?,0)").
                    label = "" if material_slots else f"{layer.material} "
                    name = f"{label}thickness ({where})"
                    parameters.append(Parameter(name, "nm", "thickness", layer.thickness_nm, index))
                seen[key] = (thickness_slot, tuple(material_slots))
            per_layer.append(seen[key])
        return tuple(parameters), tuple(per_layer)

    @property
    def parameters(self) -> tuple:
        """Every unknown in reading order (material coefficients, then the item's thickness)."""
        return self._slots[0]

    @property
    def thickness_parameters(self) -> tuple:
        """Indices into :attr:`parameters` of the unknown thicknesses."""
        return tuple(i for i, p in enumerate(self.parameters) if p.kind == "thickness")

    def thickness_columns(self) -> tuple:
        """For each layer (substrate last): which free thickness supplies it, or None.

        The number is a position in :attr:`thickness_parameters` order, i.e. a column of the
        ``thickness_nm`` array that :func:`filmoptic.engine.compute` accepts.
        """
        order = {slot: column for column, slot in enumerate(self.thickness_parameters)}
        return tuple(None if t is None else order[t] for t, _ in self._slots[1])

    def bind(self, values) -> "Stack":
        """The same stack with every unknown replaced by ``values`` (in :attr:`parameters` order).

        Examples
        --------
        >>> parse_stack("cauchy(?,0,0) 10..90nm / n=1.52").bind([1.9, 42.0]).layers[0].thickness_nm
        42.0
        """
        values = [float(v) for v in (values if values is not None else [])]
        parameters, per_layer = self._slots
        if len(values) != len(parameters):
            raise FilmopticError(
                f"the stack has {len(parameters)} unknown(s), got {len(values)} value(s)"
            )
        for p, v in zip(parameters, values):
            if not math.isfinite(v):
                raise FilmopticError(f"{p.name}: {v} is not a finite number")
            if p.kind == "thickness" and v < 0:
                raise FilmopticError(f"{p.name} must not be negative, got {v:g} nm")
        bound_materials = {}
        new_items = []
        for layer, (t_slot, m_slots) in zip((*self.layers, self.substrate), per_layer):
            material = layer.material
            if m_slots:
                key = (id(material), m_slots)
                if key not in bound_materials:
                    bound_materials[key] = material.bind([values[i] for i in m_slots])
                material = bound_materials[key]
            thickness = layer.thickness_nm if t_slot is None else values[t_slot]
            new_items.append(replace(layer, material=material, thickness_nm=thickness))
        return replace(self, layers=tuple(new_items[:-1]), substrate=new_items[-1])

    # -- light paths --------------------------------------------------------------------------
    def substrate_passes_light(self, wavelength_nm, *, extrapolate: bool = False) -> bool:
        """Whether light can cross the substrate at ``wavelength_nm``: out behind the part, or in
        from behind it.

        True for a substrate slab (light leaves through its back face) and for a half-space that
        is practically transparent at every one of the wavelengths
        (:func:`filmoptic.materials.is_practically_transparent`); False for an absorbing
        half-space such as a metal or silicon, where "transmitted" light is absorbed inside it.

        Examples
        --------
        >>> parse_stack("n=2 50nm / n=1.5").substrate_passes_light([550.0])
        True
        >>> parse_stack("n=2 50nm / Ti").substrate_passes_light([550.0])
        False
        """
        import numpy as np

        from filmoptic.materials import is_practically_transparent

        if self.substrate.thickness_nm is not None:
            return True
        wl = np.asarray(wavelength_nm, dtype=float)
        return is_practically_transparent(self.substrate.material.nk(wl, extrapolate=extrapolate))

    # -- what the notation expanded to -------------------------------------------------------
    def surface_oxides(self) -> tuple:
        """One line per native oxide written with ``+ Xnm oxide``: what it expanded to.

        Examples
        --------
        >>> parse_stack("Al 10nm + 2nm oxide / glass 4mm").surface_oxides()
        ('Al 10nm + 2nm oxide → Al2O3 2nm / Al 8.45nm (2 nm of oxide consumes 1.55 nm of Al; Pilling–Bedworth ratio 1.29)',)
        """
        return tuple(dict.fromkeys(layer.note for layer in (*self.layers, self.substrate) if layer.note))

    def thin_metal_warning(self, deposited_nm=None) -> str | None:
        """One plain line when a metal layer is thinner than continuous-film constants allow.

        ``deposited_nm``, for a stack with one unknown thickness, is its value (a solution).
        See :func:`filmoptic.materials.films.thin_metal_warning`.

        Examples
        --------
        >>> parse_stack("Ti 10nm / glass 4mm").thin_metal_warning() is None
        True
        >>> parse_stack("Ag 6nm / glass 4mm").thin_metal_warning()[:36]
        'Ag 6 nm is below about 12 nm, where '
        """
        from filmoptic.materials.films import thin_metal_warning

        return thin_metal_warning(self.metal_layers(deposited_nm))

    def metal_layers(self, deposited_nm=None) -> list:
        """(material, metal thickness left in nm) of every thin metal layer (not thick slabs);
        an unknown thickness counts only when ``deposited_nm`` gives its value."""
        judged = []
        for layer in self.layers:
            if getattr(layer.material, "kind", "") != "metal" or layer.thick:
                continue
            if is_free(layer.thickness_nm):
                if deposited_nm is not None:
                    judged.append((layer.material, layer.effective_nm(float(deposited_nm))))
            else:
                judged.append((layer.material, layer.effective_nm()))
        return judged

    # -- variants -----------------------------------------------------------------------------
    def bare(self) -> "Stack":
        """The substrate alone (no coating), in the same ambient and exit medium."""
        return replace(self, layers=(), text=self.substrate.text)

    def reversed(self) -> "Stack":
        """The same stack with the light coming from the substrate side.

        A thick substrate slab becomes the first item (light arrives from the exit medium); a
        half-space substrate becomes the incident medium. The former ambient is the new
        substrate, a half-space.
        """
        back = tuple(reversed(self.layers))
        name = getattr(self.ambient, "name", str(self.ambient))
        new_substrate = Layer(self.ambient, None, False, name)
        if self.substrate.thickness_nm is None:
            ambient = self.substrate.material
            layers = back
        else:
            ambient = self.exit_medium
            layers = (self.substrate, *back)
        text = " / ".join([*(layer.label for layer in layers), name])
        return Stack(layers, new_substrate, ambient, self.ambient, text)


# ----------------------------------------------------------------------------------------------
# Parsing
# ----------------------------------------------------------------------------------------------
def parse_stack(text: str, ambient="air") -> Stack:
    """Read a stack written in filmoptic's notation.

    Parameters
    ----------
    text : str
        E.g. ``"TiO2 60nm / SiO2 95nm / glass 3mm"`` or ``"[H 55nm / L 92nm]x4 / glass"``.
    ambient : str or Material, optional
        The medium the light comes from (and that lies behind a thick substrate).

    Returns
    -------
    Stack

    Raises
    ------
    StackSyntaxError, UnknownMaterialError, DataFileError
        One line naming the offending item and what was expected.

    Examples
    --------
    >>> s = parse_stack("[n=2.3 55nm / n=1.46 92nm]x2 / n=1.52 1mm")
    >>> len(s.layers), s.substrate.thick, s.substrate.thickness_nm
    (4, True, 1000000.0)
    """
    from filmoptic.materials import parse_material

    if not isinstance(text, str):
        raise StackSyntaxError(f"a stack must be written as text, got {type(text).__name__}")
    if not text.strip():
        raise StackSyntaxError(
            "empty stack: write the layers and the substrate, e.g. 'TiO2 60nm / glass 3mm'"
        )
    STACK_CHARACTERS.check(len(text), "the stack", "write repeated layers as a group [ … ]xN",
                           error=StackSyntaxError)
    _check_long_numbers(text)
    ambient_material = _read_ambient(ambient, parse_material)
    settings, body = _split_settings(text)
    parser = _Parser(parse_material, *_read_settings(settings, parse_material))
    if not body.strip():
        raise StackSyntaxError(
            f"the settings {{{settings}}} are followed by no stack: write the layers and the substrate "
            "after them, e.g. '{550nm} MgF2 1qw / glass'"
        )
    items = _split_items(body, "")
    if items[-1][1].lstrip().startswith("["):
        raise StackSyntaxError(
            f"item {len(items)} {items[-1][1].strip()!r}: the last item must be the substrate, "
            "not a repeat group; add it after a ' / ', e.g. '… / glass 1mm'"
        )
    layers = []
    for label, item in items[:-1]:
        layers.extend(parser.item(label, item))
        LAYERS.check(len(layers), "the stack", error=StackSyntaxError)
    substrate = parser.substrate(*items[-1])
    if isinstance(substrate, tuple):          # a substrate with its native oxide on top
        oxide_layer, substrate = substrate
        layers.append(oxide_layer)
    return Stack(tuple(layers), substrate, ambient_material, ambient_material, " ".join(text.split()))


def _split_settings(text: str):
    """``"{550nm H=TiO2} rest"`` → ("550nm H=TiO2", " rest"); no braces → ("", text)."""
    stripped = text.lstrip()
    if not stripped.startswith("{"):
        if "{" in text or "}" in text:
            raise StackSyntaxError(
                f"braces {{…}} hold the stack's settings and come first, e.g. "
                f"'{{550nm H=TiO2 L=SiO2}} [H / L]x4 / glass'; got {text.strip()!r}"
            )
        return "", text
    close = stripped.find("}")
    if close < 0:
        raise StackSyntaxError(f"missing '}}' after the stack's settings in {text.strip()!r}")
    settings, body = stripped[1:close], stripped[close + 1:]
    if "{" in settings or "{" in body or "}" in body:
        raise StackSyntaxError(f"one pair of braces {{…}}, at the start, holds the settings; got {text.strip()!r}")
    return settings, body


def _setting_words(settings: str) -> list:
    """Settings split at white space and commas outside parentheses (a mix(…) keeps its commas)."""
    words = _top_level_words(settings, also=",")
    # "H = TiO2" written with spaces: glue the pieces back together.
    glued = []
    for word in words:
        if glued and (word.startswith("=") or glued[-1].endswith("=")):
            glued[-1] += word
        else:
            glued.append(word)
    return glued


def _read_settings(settings: str, parse_material):
    """(reference wavelength in nm or None, {letter: (text, material)}) from the braces."""
    reference, letters = None, {}
    for word in _setting_words(settings):
        key, eq, value = word.partition("=")
        if eq and key.strip().lower() in ("wl", "λ", "λ0", "lambda"):
            word, eq = value, ""
        if not eq:
            if reference is not None:
                raise StackSyntaxError(f"settings {{{settings}}}: give one reference wavelength, not two")
            reference = _design_wavelength_nm(word, f"settings {{{settings}}}")
            continue
        letter = key.strip()
        if letter not in _SHORTHAND_LETTERS:
            raise StackSyntaxError(
                f"settings {{{settings}}}: {word!r} is not a setting; write a reference wavelength "
                "(550nm) and the shorthand materials H=…, L=… or M=… (e.g. {550nm H=TiO2 L=SiO2})"
            )
        if letter in letters:
            raise StackSyntaxError(f"settings {{{settings}}}: {letter} is named twice")
        if not value.strip():
            raise StackSyntaxError(f"settings {{{settings}}}: {letter}= needs a material, e.g. {letter}=TiO2")
        try:
            material = parse_material(value.strip())
        except FilmopticError as exc:
            raise type(exc)(f"settings {{{settings}}}, {letter}: {exc}") from None
        letters[letter] = (value.strip(), material)
    if letters and reference is None:
        raise StackSyntaxError(
            f"settings {{{settings}}}: the shorthand {', '.join(letters)} stands for quarter waves; "
            "add the reference wavelength, e.g. {550nm " + " ".join(f"{k}={v[0]}" for k, v in letters.items()) + "}"
        )
    return reference, letters


def _design_wavelength_nm(text: str, where: str) -> float:
    """A design wavelength: ``550nm``, ``0.55um`` or a bare number of nm."""
    m = re.fullmatch(rf"\s*({_NUM})\s*(nm|um|µm|μm)?\s*", text)
    if m is None:
        raise StackSyntaxError(f"{where}: cannot read {text.strip()!r} as a wavelength; write e.g. 550nm")
    value = float(m.group(1)) * (length_unit_nm(m.group(2)) if m.group(2) else 1.0)
    if not (math.isfinite(value) and 0 < value <= 1e6):
        raise StackSyntaxError(f"{where}: the wavelength must be positive (nm), got {text.strip()!r}")
    return value


def quarter_wave_nm(material, count: float, wavelength_nm: float) -> float:
    """Physical thickness of ``count`` quarter waves of ``material`` at ``wavelength_nm``:
    ``count · λ0 / (4 · n(λ0))`` with n the real part of the index.

    Raises :class:`~filmoptic.errors.FilmopticError` for a material with k > n at λ0 (a metal has
    no quarter-wave optical thickness worth the name), or with unknowns.

    References
    ----------
    H. A. Macleod, *Thin-Film Optical Filters*, 4th ed., CRC Press (2010), §2.6 (quarter- and
    half-wave layers, optical thickness n·d).

    Examples
    --------
    >>> from filmoptic.materials import parse_material
    >>> round(quarter_wave_nm(parse_material("n=1.38"), 1, 550.0), 6)
    99.637681
    """
    import numpy as np

    N = complex(np.asarray(material.nk(np.array([float(wavelength_nm)])))[0])
    if N.imag > N.real:
        raise FilmopticError(
            f"{material} absorbs strongly at {wavelength_nm:g} nm (n = {N.real:.3g}, k = {N.imag:.3g}): "
            "quarter waves are for layers that pass light; give its thickness in nm"
        )
    return float(count) * float(wavelength_nm) / (4.0 * N.real)


def _check_long_numbers(text: str) -> None:
    """Refuse a number of more than ``NUMBER_CHARACTERS`` digits before any pattern meets it: no
    thickness or index needs them, and matching a 100 000-digit run takes minutes."""
    outside = _outside_brackets(text, blank_brackets=False)
    m = re.search(rf"\d{{{NUMBER_CHARACTERS + 1},}}", outside)
    if m:
        raise StackSyntaxError(
            f"a number written with {len(m.group())} digits (from {text[m.start():m.start() + 12]!r}…) is "
            f"not a thickness, index or count (at most {NUMBER_CHARACTERS} characters)"
        )


def _read_ambient(ambient, parse_material):
    if isinstance(ambient, str):
        try:
            material = parse_material(ambient)
        except FilmopticError as exc:
            raise type(exc)(f"ambient {ambient!r}: {exc}") from None
    else:
        material = ambient
    if material.free_parameters():
        raise StackSyntaxError(f"the ambient {material} cannot contain unknowns ('?' or ranges)")
    return material


def _split_items(text: str, prefix: str):
    """Split at top-level '/' (not inside (), [] or a file path); returns [(label, item), …]."""
    pieces, depth, start, i = [], 0, 0, 0
    while i < len(text):
        if text[i:i + 5].lower() == "file:":
            # A path runs to the next white space (or ',' / ')' inside a mix) and may hold '/'.
            i += 5
            while i < len(text) and not text[i].isspace() and not (depth and text[i] in ",)"):
                i += 1
            continue
        ch = text[i]
        if ch in "([":
            depth += 1
            if depth > MAX_NESTING:
                raise StackSyntaxError(
                    f"brackets nested more than {MAX_NESTING} deep in {text.strip()[:40]!r}…"
                )
        elif ch in ")]":
            depth -= 1
            if depth < 0:
                raise StackSyntaxError(f"unbalanced {ch!r} in {text.strip()!r}")
        elif ch == "/" and depth == 0:
            pieces.append(text[start:i])
            start = i + 1
        i += 1
    if depth:
        raise StackSyntaxError(f"missing ')' or ']' in {text.strip()!r}")
    pieces.append(text[start:])
    items = []
    for k, piece in enumerate(pieces, start=1):
        label = f"{prefix}{k}"
        if not piece.strip():
            raise StackSyntaxError(
                f"item {label} is empty: two '/' in a row, or a '/' at the start or end"
                + (" of the group" if prefix else "")
            )
        items.append((label, piece))
    return items


def _group_parts(item: str, label: str):
    """``[inner]xN`` → (inner, N)."""
    depth = 0
    for i, ch in enumerate(item):
        if ch in "([":
            depth += 1
        elif ch in ")]":
            depth -= 1
            if depth == 0:
                close = i
                break
    else:  # pragma: no cover - _split_items already checked the brackets
        raise StackSyntaxError(f"item {label} {item!r}: missing ']'")
    inner, rest = item[1:close], item[close + 1:]
    m = _REPEAT_RE.match(rest)
    if not m:
        raise StackSyntaxError(
            f"item {label} {item!r}: a group is written [LAYERS]xN, e.g. '[TiO2 55nm / SiO2 92nm]x4'"
        )
    count_text = m.group(1)
    if not count_text:
        raise StackSyntaxError(f"item {label} {item!r}: the group needs a repeat count, e.g. ']x4'")
    if not re.fullmatch(r"\d+", count_text):
        raise StackSyntaxError(
            f"item {label} {item!r}: the repeat count must be a whole number, got {count_text!r}"
        )
    count = int(count_text) if len(count_text) <= 9 else MAX_REPEAT + 1
    if count < 1:
        raise StackSyntaxError(f"item {label} {item!r}: a group must repeat at least once (x1 or more)")
    if count > MAX_REPEAT:
        shown = count_text if len(count_text) <= 12 else f"a {len(count_text)}-digit number of"
        raise StackSyntaxError(
            f"item {label} {item[:40]!r}: {shown} repeats is absurd (at most {MAX_REPEAT})"
        )
    if not inner.strip():
        raise StackSyntaxError(f"item {label} {item!r}: the group is empty")
    return inner, count


class _Parser:
    def __init__(self, parse_material, reference_nm=None, letters=None):
        self._parse_material = parse_material
        self._next_item = 0
        self._reference_nm = reference_nm
        self._letters = letters or {}

    def _quarter_waves(self, label: str, text: str):
        """A layer written in quarter waves (``TiO2 1qw@550nm``, ``2H``), or None."""
        where = f"item {label} {text!r}"
        short = _SHORTHAND_RE.match(text)
        if short and short.group("letter") in self._letters:
            count_text = short.group("count")
            material = self._letters[short.group("letter")][1]
            wavelength = self._reference_nm
        else:
            m = _QW_RE.search(text)
            if m is None:
                if short:
                    raise StackSyntaxError(
                        f"{where}: {short.group('letter')} is the shorthand for a quarter wave of a material "
                        "named in the settings; open the stack with e.g. '{550nm H=TiO2 L=SiO2} '"
                    )
                return None
            count_text = m.group("count")
            material = self._material(label, text, text[: m.start()].strip())
            if m.group("wl") is not None:
                wavelength = _design_wavelength_nm(m.group("wl") + (m.group("unit") or ""), where)
            elif self._reference_nm is not None:
                wavelength = self._reference_nm
            else:
                raise StackSyntaxError(
                    f"{where}: quarter waves at which wavelength? write e.g. '{text}@550nm', or open the "
                    "stack with the reference wavelength, e.g. '{550nm} …'"
                )
        count = 1.0 if count_text is None else float(count_text)
        if not (math.isfinite(count) and 0 < count <= MAX_QUARTER_WAVES):
            raise StackSyntaxError(
                f"{where}: the number of quarter waves must be above 0 and at most {MAX_QUARTER_WAVES}, got {count_text}"
            )
        try:
            thickness = quarter_wave_nm(material, count, wavelength)
        except FilmopticError as exc:
            raise type(exc)(f"{where}: {exc}") from None
        return Layer(material, thickness, False, text, self._new_item(), quarter_waves=(count, wavelength))

    def item(self, label: str, raw: str) -> list:
        """The layers of one item before the substrate (a group expands to its repeats)."""
        text = raw.strip()
        oxide = _OXIDE_RE.match(_outside_brackets(text))
        if oxide:
            return self._with_oxide(label, text, oxide, substrate=False)
        quarter = None if text.startswith("[") else self._quarter_waves(label, text)
        if quarter is not None:
            return [quarter]
        if text.startswith("["):
            inner, count = _group_parts(text, label)
            once = []
            for sub_label, sub in _split_items(inner, f"{label}."):
                once.extend(self.item(sub_label, sub))
            LAYERS.check(len(once) * count, f"item {label} {text[:40]!r} expands to", error=StackSyntaxError)
            return once * count
        material, thickness, thick = self._material_and_thickness(label, text)
        if thickness is None:
            raise StackSyntaxError(
                f"item {label} {text!r}: a layer needs a thickness with a unit, e.g. "
                f"'{text} 50nm' (only the last item, the substrate, may have none)"
            )
        if thick and not is_free(thickness) and thickness == 0:
            raise StackSyntaxError(f"item {label} {text!r}: a thick slab needs a positive thickness")
        return [Layer(material, thickness, thick, text, self._new_item())]

    def substrate(self, label: str, raw: str):
        """The substrate Layer, or (oxide layer, substrate Layer) for ``… + Xnm oxide``."""
        text = raw.strip()
        if _QW_RE.search(text) or (_SHORTHAND_RE.match(text) and _SHORTHAND_RE.match(text).group("count")):
            raise StackSyntaxError(
                f"item {label} {text!r}: the last item is the substrate, a half-space or a slab in mm, "
                "not quarter waves; add the substrate after a ' / ', e.g. '… / glass'"
            )
        oxide = _OXIDE_RE.match(_outside_brackets(text))
        if oxide:
            return self._with_oxide(label, text, oxide, substrate=True)
        return self._substrate(label, text)

    def _substrate(self, label: str, text: str) -> Layer:
        material, thickness, thick = self._material_and_thickness(label, text)
        if thickness is None:
            return Layer(material, None, False, text, self._new_item())
        if is_free(thickness):
            raise StackSyntaxError(
                f"item {label} {text!r}: the substrate (last item) cannot have an unknown "
                "thickness; give it none (a half-space) or a thickness in mm"
            )
        if not thick:
            raise StackSyntaxError(
                f"item {label} {text!r}: the last item is the substrate; give it no thickness "
                "(a half-space, e.g. 'glass') or one in mm (a thick slab, e.g. 'glass 3mm'), "
                "or add the substrate after a ' / '"
            )
        if thickness == 0:
            raise StackSyntaxError(f"item {label} {text!r}: a thick substrate needs a positive thickness")
        return Layer(material, thickness, True, text, self._new_item())

    def _with_oxide(self, label: str, text: str, match, substrate: bool):
        """``METAL D + X oxide``: the oxide layer on top of the metal, the metal consumed by it."""
        from filmoptic.materials.films import NATIVE_OXIDES

        where = f"item {label} {text!r}"
        base = text[: match.end("base")].strip()
        oxide_nm = float(match.group("number")) * length_unit_nm(match.group("unit"))
        if oxide_nm <= 0:
            raise StackSyntaxError(f"{where}: the oxide needs a positive thickness, e.g. '+ 2nm oxide'")
        if oxide_nm > 1000:
            raise StackSyntaxError(f"{where}: {oxide_nm:g} nm is no native oxide; write the oxide as a layer")
        if substrate:
            metal_layer = self._substrate(label, base)
        else:
            if base.startswith("["):
                raise StackSyntaxError(f"{where}: '+ Xnm oxide' belongs to one metal layer, not a group")
            metal_layer = self.item(label, base)[0]
        metal = metal_layer.material
        name = getattr(metal, "name", str(metal))
        native = NATIVE_OXIDES.get(name)
        what = text[match.start("what"):].strip()
        if what.lower() == "oxide":
            if native is None:
                known = ", ".join(NATIVE_OXIDES)
                raise StackSyntaxError(
                    f"{where}: filmoptic knows the native oxide of {known}, not of {name}; "
                    "name the oxide's constants, e.g. '+ 2nm n=1.8'"
                )
            oxide_text = native.oxide
        else:
            oxide_text = what
        oxide_material = self._material(label, text, oxide_text)
        consumed = 0.0
        if not substrate:
            if native is None:
                raise StackSyntaxError(
                    f"{where}: '+ Xnm …' puts the native oxide on a metal of "
                    f"{', '.join(NATIVE_OXIDES)}, not on {name}; write the two layers instead "
                    f"('{oxide_text} {oxide_nm:g}nm / {base}')"
                )
            consumed = native.consumed_nm(oxide_nm)
            deposited = metal_layer.thickness_nm
            if not is_free(deposited) and deposited < consumed:
                raise StackSyntaxError(
                    f"{where}: {oxide_nm:g} nm of {native.oxide} consumes {consumed:.3g} nm of {name}, "
                    f"more than the {deposited:g} nm deposited"
                )
        oxide_layer = Layer(oxide_material, oxide_nm, False, f"{oxide_text} {oxide_nm:g}nm", self._new_item())
        metal_layer = replace(metal_layer, consumed_nm=consumed)
        oxide_layer = replace(oxide_layer, note=_oxide_note(text, oxide_layer, metal_layer, native))
        if substrate:
            return oxide_layer, metal_layer
        return [oxide_layer, metal_layer]

    def _new_item(self) -> int:
        self._next_item += 1
        return self._next_item - 1

    def _material(self, label: str, item: str, text: str):
        if not text:
            raise StackSyntaxError(f"item {label} {item!r}: no material before the thickness")
        if text in self._letters:
            return self._letters[text][1]
        try:
            return self._parse_material(text)
        except FilmopticError as exc:
            separator = _separator_hint(item)
            if separator:
                raise StackSyntaxError(f"item {label} {item!r}: {separator}") from None
            raise type(exc)(f"item {label} {item!r}: {exc}") from None

    def _material_and_thickness(self, label: str, item: str):
        """(material, thickness_nm or Free or None, thick)."""
        m = _THICKNESS_RE.search(item)
        if m is None:
            words = _top_level_words(item)
            if len(words) > 1 and _is_common_name(item):
                return self._material(label, item, item), None, False
            if len(words) > 1:
                hint = _thickness_hint(item) or (
                    f"cannot read {words[-1]!r} as a thickness; write e.g. '55nm', '1.2um', "
                    "'550A', '3mm', '?', '10..90nm' or '1qw@550nm'"
                )
                raise StackSyntaxError(f"item {label} {item!r}: {hint}")
            return self._material(label, item, item), None, False
        thickness_text = m.group("thickness").strip()
        material_text = item[: m.start()].strip()
        if re.fullmatch(_NUM, thickness_text):
            # A bare number: either the end of a material written with spaces ("n = 1.46") or a
            # thickness that forgot its unit.
            try:
                return self._parse_material(item), None, False
            except FilmopticError:
                pass
            if not material_text:
                raise StackSyntaxError(f"item {label} {item!r}: expected MATERIAL THICKNESS, e.g. 'TiO2 55nm'")
            raise StackSyntaxError(
                f"item {label} {item!r}: thickness has no unit; write '{thickness_text}nm' "
                f"(or um, or mm for a thick slab)"
            )
        thickness, thick = _read_thickness(label, item, thickness_text)
        return self._material(label, item, material_text), thickness, thick


def _oxide_note(text, oxide_layer, metal_layer, native) -> str:
    """'Al 10nm + 2nm oxide → Al2O3 2nm / Al 8.45nm (… consumes 1.55 nm of Al; ratio 1.29)'."""
    name = getattr(metal_layer.material, "name", str(metal_layer.material))
    oxide_nm = oxide_layer.thickness_nm
    if metal_layer.consumed_nm == 0:
        return f"{text} → {oxide_layer.text} / {metal_layer.text} (oxide on the substrate's surface)"
    consumed = metal_layer.consumed_nm
    deposited = metal_layer.thickness_nm
    left = (f"(deposited − {consumed:.3g})nm" if is_free(deposited)
            else f"{deposited - consumed:.3g}nm")
    return (f"{text} → {oxide_layer.text} / {name} {left} ({oxide_nm:g} nm of oxide consumes "
            f"{consumed:.3g} nm of {name}; Pilling–Bedworth ratio {native.ratio:.3g})")


def _is_common_name(text: str) -> bool:
    """Whether ``text`` is a common material name written with spaces (``float glass``)."""
    from filmoptic.materials.common_names import common_name

    return common_name(text) is not None


# Units people write that the notation does not take, with their size in mm or nm.
_FOREIGN_UNITS = {"cm": (10.0, "mm"), "m": (1000.0, "mm"), "dm": (100.0, "mm"), "pm": (0.001, "nm")}
_FOREIGN_UNIT_RE = re.compile(rf"(?:^|\s)(?P<number>{_NUM})\s*(?P<unit>cm|dm|m|pm)$")
# A decimal comma in a thickness: '12,5nm', '12,5 nm', '1,2um'.
_DECIMAL_COMMA_RE = re.compile(rf"(?:^|\s)(?P<whole>\d+),(?P<fraction>\d+)\s*(?P<unit>{_UNIT})?(?=\s|$)")


def _thickness_hint(item: str) -> str:
    """What probably went wrong with a thickness that cannot be read, or ''."""
    text = _outside_brackets(item).strip()
    m = _DECIMAL_COMMA_RE.search(text)
    if m:
        number = f"{m.group('whole')}.{m.group('fraction')}"
        return (f"'{m.group('whole')},{m.group('fraction')}' looks like a decimal comma; write "
                f"'{number}{m.group('unit') or 'nm'}' (the decimal point is '.')")
    separator = _separator_hint(item)
    if separator:
        return separator
    m = _FOREIGN_UNIT_RE.search(text)
    if m:
        unit = m.group("unit")
        factor, target = _FOREIGN_UNITS[unit]
        value = float(m.group("number")) * factor
        slab = " (a thick slab)" if target == "mm" else ""
        return (f"{m.group('unit')!r} is not a unit here (nm, um, mm or Å); "
                f"{m.group('number')}{m.group('unit')} is '{value:.12g}{target}'{slab}")
    return ""


def _separator_hint(item: str) -> str:
    """A ',', ';' or '|' between two items, which the notation separates with ' / '."""
    text = _outside_brackets(item)
    # A comma between digits is a decimal comma, not a separator.
    mark = re.search(r"\||;|,(?!\d)|(?<!\d),", text)
    if not mark:
        return ""
    before, after = item[:mark.start()].strip(), item[mark.end():].strip()
    example = f"'{before} / {after}'" if before and after else "e.g. 'TiO2 60nm / glass 3mm'"
    return f"items are separated by ' / ', not {mark.group()!r}: write {example}"


def _outside_brackets(item: str, blank_brackets: bool = True) -> str:
    """The item with anything inside (), [] and file paths blanked out (same length); with
    ``blank_brackets=False`` only the file paths."""
    out, depth, i = [], 0, 0
    while i < len(item):
        if item[i:i + 5].lower() == "file:":
            start = i
            i += 5
            while i < len(item) and not item[i].isspace() and not (depth and item[i] in ",)"):
                i += 1
            out.append(" " * (i - start))
            continue
        ch = item[i]
        if ch in "([":
            depth += 1
        out.append(ch if depth == 0 or not blank_brackets else " ")
        if ch in ")]":
            depth = max(0, depth - 1)
        i += 1
    return "".join(out)


def _top_level_words(item: str, also: str = "") -> list:
    """Words split at white space (and the characters in ``also``) outside brackets."""
    words, depth, current = [], 0, []
    for ch in item:
        if ch in "([":
            depth += 1
        elif ch in ")]":
            depth -= 1
        if (ch.isspace() or ch in also) and depth == 0:
            if current:
                words.append("".join(current))
                current = []
        else:
            current.append(ch)
    if current:
        words.append("".join(current))
    return words


def _read_thickness(label: str, item: str, text: str):
    """'55nm' → (55.0, False); '3mm' → (3e6, True); '?' → (Free(), False); '10..40nm' → Free."""
    unit_match = re.search(rf"({_UNIT})$", text)
    unit = unit_match.group(1) if unit_match else None
    body = text[: unit_match.start()].strip() if unit_match else text.strip()
    thick = unit == "mm"
    scale = length_unit_nm(unit) if unit else 1.0
    where = f"item {label} {item!r}"
    if body == "?":
        return Free(), thick
    if ".." in body:
        if unit is None:
            low_text = body.split("..")[0].strip()
            raise StackSyntaxError(
                f"{where}: the range has no unit; write e.g. '{body.replace(' ', '')}nm'"
                if low_text else f"{where}: cannot read the range {body!r}"
            )
        low, high = (float(x) for x in body.split(".."))
        low, high = low * scale, high * scale
        if not (math.isfinite(low) and math.isfinite(high)) or low < 0:
            raise StackSyntaxError(f"{where}: a thickness range needs 0 <= LOW < HIGH")
        if not low < high:
            raise StackSyntaxError(f"{where}: a thickness range LOW..HIGH needs LOW < HIGH")
        if high > MAX_LENGTH_NM:
            raise StackSyntaxError(f"{where}: the range {text!r} is absurdly large (over 1 m)")
        return Free(low, high), thick
    value = float(body) * scale
    if not math.isfinite(value):
        raise StackSyntaxError(f"{where}: the thickness {text!r} is not a finite number")
    if value < 0:
        raise StackSyntaxError(f"{where}: the thickness must not be negative, got {text!r}")
    if value > MAX_LENGTH_NM:
        raise StackSyntaxError(f"{where}: the thickness {text!r} is absurdly large (over 1 m)")
    return value, thick

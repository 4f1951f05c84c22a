"""Design goals: a small grammar for what a coating must do, and how far a design is from it.

A goal is one line of text. Spectral goals bound the reflectance R, transmittance T or
absorptance A at one wavelength or over a band; luminous goals bound the luminous transmittance
or reflectance (ISO 9050); colour goals ask for a CIELAB colour within a ΔE00 distance::

    R 420..680nm <= 0.5%              every sampled wavelength of the band
    mean R 420..680nm <= 0.5%         the band's mean
    T 550nm = 50%                     (met within 1 percentage point unless 'within' says otherwise)
    R 1064nm >= 99%
    luminous-T = 30%
    luminous-R reverse <= 8%          'reverse': seen from the substrate side
    reflected Lab = 55,0,-25 within 2
    transmitted hex = #8a9a7b within 3
    mean R 420..680nm @0..40deg <= 1%    an angle range (sampled at most every 5°)
    R 1064nm @45deg s >= 99%            a polarisation: s, p or unpolarized (the default)
    T 550nm = 50% within 2% weight 3    'weight W' counts the goal W times in the merit

The words before the comparison may come in any order: ``mean``, ``reverse`` (or ``front``),
the quantity, the wavelength or band (``550nm``, ``420..680nm``, ``1.064um``), ``@ANGLE`` or
``@LOW..HIGH`` in degrees (which may also follow the value), and a polarisation. After the
comparison come the value (``0.5%`` or
``0.005``; for colours ``L,a,b`` or ``#rrggbb``) and optionally ``within X``, ``weight W`` and
``under ILLUMINANT`` (luminous and colour goals; D65 unless said otherwise).

How a design is scored
----------------------
Every goal turns a design's spectra into *samples* — one per wavelength and angle of a band goal,
one per angle of a luminous or colour goal, a single one for a ``mean`` goal — and each sample
into a *shortfall*: how far it lies on the wrong side of a bound (zero when it is on the right
side), its distance from the value of an ``=`` goal, or its ΔE00 from a colour. Shortfalls are
counted in percentage points for R, T, A and luminous values and in ΔE00 units for colours. The
**merit** is the weighted root-mean-square shortfall

    merit = sqrt( Σ_goals w · mean_samples(shortfall²) / Σ_goals w ),

zero exactly when every inequality goal is met (with :data:`AIM_INSIDE` to spare) and every
``=`` goal is hit. This least-squares
form is what the local refinement minimises (as a sum of squared residuals).

A goal's **achieved** value is the worst sample (the highest for ``<=``, the lowest for ``>=``,
the farthest from the value for ``=``, the largest ΔE00 for a colour) or the mean for ``mean``
goals. It is **met** when that value lies on the right side of the bound, or within the goal's
``within`` tolerance for ``=`` goals and colours (1 percentage point and 1 ΔE00 by default).

References
----------
ISO 9050:2003 (luminous transmittance and reflectance, D65 × V(λ)); CIE 15:2018 (CIELAB);
ISO/CIE 11664-6:2014 (CIEDE2000). The least-squares merit of a coating design: H. A. Macleod,
*Thin-Film Optical Filters*, 4th ed., CRC Press (2010), ch. on computer design (from memory).

Examples
--------
>>> g = parse_goal("mean R 420..680nm @0..40deg <= 1%")
>>> g.quantity, g.mean, g.band_nm, g.angles_deg().tolist(), g.value
('R', True, (420.0, 680.0), [0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0], 0.01)
>>> parse_goal("transmitted hex = #8a9a7b within 3").within
3.0
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np

from filmoptic.errors import FilmopticError

__all__ = [
    "Goal",
    "parse_goal",
    "parse_goals",
    "read_goals_file",
    "goals_span_nm",
    "DEFAULT_WITHIN",
    "DEFAULT_COLOUR_WITHIN",
    "ANGLE_STEP_DEG",
    "MAX_GOALS",
    "MET_SLACK",
    "AIM_INSIDE",
]

#: Tolerance of an ``=`` goal on R, T, A or a luminous value without ``within`` (a fraction).
DEFAULT_WITHIN = 0.01
#: Tolerance of a colour goal without ``within`` (ΔE00; about one just-noticeable difference,
#: common practice).
DEFAULT_COLOUR_WITHIN = 1.0
#: Largest step between the sampled angles of an angle range, degrees.
ANGLE_STEP_DEG = 5.0
#: Most goals one design may have.
MAX_GOALS = 200
#: Rounding allowance when a bound is judged met (fraction, or ΔE00 for colours): far below any
#: printed digit, it keeps a design that sits exactly on a bound from reading "not met".
MET_SLACK = {"fraction": 1e-9, "colour": 1e-6}

#: How far inside a bound (fraction) the shortfall starts counting: a design that just reaches a
#: bound then sits a thousandth of a percentage point inside it, so rounding its thicknesses to
#: a thousandth of a nanometre cannot tip a met goal over.
AIM_INSIDE = 1e-5

_SCALE = {"fraction": 0.01, "colour": 1.0}   # one percentage point; one ΔE00
_QUANTITIES = {"r": "R", "t": "T", "a": "A"}
_LUMINOUS = {"luminous-t": "T", "luminous-r": "R", "luminous_t": "T", "luminous_r": "R"}
_APPEARANCE = {"reflected": "R", "transmitted": "T"}
_POLARIZATIONS = {"s": "s", "te": "s", "p": "p", "tm": "p", "unpolarized": "unpolarized",
                  "unpolarised": "unpolarized"}
_OPERATOR_RE = re.compile(r"<=|>=|≤|≥|==|=|<|>")
_OPERATORS = {"<=": "<=", "≤": "<=", "<": "<=", ">=": ">=", "≥": ">=", ">": ">=", "=": "=", "==": "="}
_NUMBER = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_BAND_RE = re.compile(rf"^({_NUMBER})(?:\s*\.\.\s*({_NUMBER}))?\s*(nm|um|µm|μm)$", re.IGNORECASE)
_ANGLE_RE = re.compile(rf"^@\s*({_NUMBER})(?:\s*\.\.\s*({_NUMBER}))?\s*(?:°|deg|degrees?)?$", re.IGNORECASE)
_UNIT_NM = {"nm": 1.0, "um": 1000.0, "µm": 1000.0, "μm": 1000.0}
_KEYWORDS = ("within", "weight", "under")
# A '#' starts a comment unless it begins a colour such as '#8a9a7b'.
_COMMENT_RE = re.compile(r"(^|\s)#(?![0-9a-fA-F]{6}\b).*$")
_EXAMPLES = "e.g. 'mean R 420..680nm <= 0.5%', 'T 550nm = 50%', 'luminous-T = 30%' or 'reflected Lab = 55,0,-25 within 2'"


@dataclass(frozen=True)
class Goal:
    """One design goal (see the module documentation for the grammar).

    Attributes
    ----------
    text : str
        The goal as written (white space normalised).
    kind : {"spectral", "luminous", "colour"}
    quantity : {"R", "T", "A"}
        What is looked at; for colours "R" (reflected) or "T" (transmitted).
    operator : {"<=", ">=", "="}
    value : float or None
        The bound or value as a fraction 0–1 (None for colours).
    lab : tuple of float or None
        The colour asked for, CIELAB under the goal's illuminant (colour goals only).
    within : float or None
        Tolerance of an ``=`` goal (a fraction) or of a colour (ΔE00); None for inequalities.
    band_nm : tuple of float or None
        ``(low, high)`` wavelengths of a spectral goal (equal for one wavelength).
    mean : bool
        The goal bounds the mean over its samples rather than every sample.
    side : {"front", "reverse"}
        Light from the coated side, or from the substrate side.
    angle_range_deg : tuple of float
        ``(low, high)`` angles of incidence, degrees (equal for one angle).
    polarization : {"s", "p", "unpolarized"}
    weight : float
    illuminant : str
        Illuminant of luminous and colour goals.
    """

    text: str
    kind: str
    quantity: str
    operator: str
    value: float | None = None
    lab: tuple | None = None
    within: float | None = None
    band_nm: tuple | None = None
    mean: bool = False
    side: str = "front"
    angle_range_deg: tuple = (0.0, 0.0)
    polarization: str = "unpolarized"
    weight: float = 1.0
    illuminant: str = "D65"

    @property
    def unit(self) -> str:
        """``"fraction"`` (R, T, A, luminous values) or ``"colour"`` (ΔE00)."""
        return "colour" if self.kind == "colour" else "fraction"

    @property
    def scale(self) -> float:
        """What one unit of shortfall is: one percentage point, or one ΔE00."""
        return _SCALE[self.unit]

    @property
    def needs_light_through(self) -> bool:
        """Whether the goal looks at light that crosses the substrate."""
        return self.quantity == "T" or self.side == "reverse"

    @property
    def span_nm(self) -> tuple:
        """The wavelengths the goal looks at, ``(low, high)`` nm: its band, or for luminous and
        colour goals the visible range their values are summed over."""
        if self.kind != "spectral":
            from filmoptic.colorimetry import VISIBLE_RANGE_NM

            return VISIBLE_RANGE_NM
        return self.band_nm

    def wavelengths_nm(self, step_nm: float) -> np.ndarray:
        """The sampled wavelengths: both ends of the band and every ``step_nm`` between
        (colour and luminous goals: 380–780 nm every 5 nm)."""
        if self.kind != "spectral":
            from filmoptic.colorimetry import default_wavelengths

            return default_wavelengths()
        lo, hi = self.band_nm
        if hi <= lo:
            return np.array([lo])
        count = int(math.floor((hi - lo) / step_nm + 1e-9))
        inner = lo + step_nm * np.arange(count + 1)
        return np.unique(np.concatenate([inner[inner < hi - 1e-9], [hi]]))

    def angles_deg(self) -> np.ndarray:
        """The sampled angles of incidence: both ends and at most :data:`ANGLE_STEP_DEG` apart."""
        lo, hi = self.angle_range_deg
        if hi <= lo:
            return np.array([lo])
        return np.linspace(lo, hi, int(math.ceil((hi - lo) / ANGLE_STEP_DEG - 1e-9)) + 1)

    def met_by(self, achieved) -> np.ndarray:
        """Whether achieved value(s) meet the goal (the rule in the module documentation)."""
        a = np.asarray(achieved, dtype=float)
        slack = MET_SLACK[self.unit]
        if self.kind == "colour":
            return a <= self.within + slack
        if self.operator == "<=":
            return a <= self.value + slack
        if self.operator == ">=":
            return a >= self.value - slack
        return np.abs(a - self.value) <= self.within + slack

    def describe_target(self) -> str:
        """The target in words for tables, e.g. ``"≤ 0.50 %"`` or ``"ΔE00 ≤ 2 from 55,0,-25"``."""
        if self.kind == "colour":
            lab = ",".join(f"{v:g}" for v in np.round(self.lab, 1))
            return f"ΔE00 ≤ {self.within:g} from L*a*b* {lab}"
        sign = {"<=": "≤", ">=": "≥", "=": "="}[self.operator]
        text = f"{sign} {100 * self.value:.4g} %"
        if self.operator == "=":
            text += f" ± {100 * self.within:.3g}"
        return text


# --------------------------------------------------------------------------------------------
# Parsing
# --------------------------------------------------------------------------------------------


def _fail(text: str, problem: str):
    raise FilmopticError(f"goal {text!r}: {problem}")


def _fraction(text: str, word: str, goal: str) -> float:
    from filmoptic.units import parse_fraction

    try:
        return parse_fraction(word, what="the value")
    except FilmopticError as exc:
        _fail(goal, str(exc))


def _band(word: str, goal: str):
    m = _BAND_RE.match(word)
    if not m:
        return None
    scale = _UNIT_NM[m.group(3).lower() if m.group(3).lower() in _UNIT_NM else m.group(3)]
    lo = float(m.group(1)) * scale
    hi = float(m.group(2)) * scale if m.group(2) is not None else lo
    if not (math.isfinite(lo) and math.isfinite(hi)) or lo <= 0:
        _fail(goal, f"wavelengths must be positive, got {word!r}")
    if hi < lo:
        _fail(goal, f"the band {word!r} must be written LOW..HIGH")
    if hi > 1e6:
        _fail(goal, f"{word!r} is beyond 1 mm; wavelengths are in nm or um")
    return lo, hi


def _angles(word: str, goal: str):
    m = _ANGLE_RE.match(word)
    if not m:
        _fail(goal, f"cannot read the angle {word!r}; write e.g. '@45deg' or '@0..40deg'")
    lo = float(m.group(1))
    hi = float(m.group(2)) if m.group(2) is not None else lo
    if not (0 <= lo <= hi < 90):
        _fail(goal, f"angles of incidence must lie in 0 to under 90 degrees, LOW..HIGH, got {word!r}")
    return lo, hi


def _left_side(words, goal: str) -> dict:
    """Classify the words before the comparison."""
    out = {"mean": False, "side": None, "what": None, "band": None, "angles": None, "pol": None}

    def once(key, value, word):
        if out[key] not in (None, False):
            _fail(goal, f"{word!r} repeats what the goal already says")
        out[key] = value

    i = 0
    while i < len(words):
        word = words[i]
        low = word.lower()
        if low == "mean":
            once("mean", True, word)
        elif low in ("reverse", "front"):
            once("side", low, word)
        elif low in _LUMINOUS:
            once("what", ("luminous", _LUMINOUS[low]), word)
        elif low in _APPEARANCE:
            following = words[i + 1].lower() if i + 1 < len(words) else ""
            if following not in ("lab", "hex"):
                _fail(goal, f"say how the colour is given: '{word} Lab = L,a,b' or '{word} hex = #rrggbb'")
            once("what", ("colour", _APPEARANCE[low], following), word)
            i += 1
        elif word in ("R", "T", "A") or (low in _QUANTITIES and len(word) == 1):
            once("what", ("spectral", _QUANTITIES[low]), word)
        elif low in ("lab", "hex"):
            _fail(goal, f"say whether the colour is seen in reflection or transmission: "
                        f"'reflected {word} …' or 'transmitted {word} …'")
        elif word.startswith("@"):
            once("angles", _angles(word, goal), word)
        elif low in _POLARIZATIONS:
            once("pol", _POLARIZATIONS[low], word)
        else:
            band = _band(word, goal)
            if band is None:
                if re.fullmatch(rf"{_NUMBER}(\s*\.\.\s*{_NUMBER})?", word):
                    _fail(goal, f"the wavelength {word!r} needs a unit, e.g. '{word}nm'")
                dash = re.fullmatch(r"(\d+\.?\d*)\s*[-–]\s*(\d+\.?\d*)\s*(nm|um|µm)?", word)
                if dash:
                    _fail(goal, f"write a band as LOW..HIGH, e.g. '{dash.group(1)}..{dash.group(2)}{dash.group(3) or 'nm'}'")
                _fail(goal, f"cannot read {word!r}; {_EXAMPLES}")
            once("band", band, word)
        i += 1
    return out


def _right_side(text: str, goal: str):
    """The value text and the keyword options after it."""
    words = text.split()
    value_words, options, key = [], {}, None
    for word in words:
        low = word.lower()
        if low in _KEYWORDS:
            if low in options:
                _fail(goal, f"'{low}' is given twice")
            key = low
            options[key] = []
            continue
        (options[key] if key else value_words).append(word)
    for key, parts in options.items():
        if not parts:
            _fail(goal, f"'{key}' needs a value, e.g. '{key} {'2' if key != 'under' else 'A'}'")
        options[key] = " ".join(parts)
    return " ".join(value_words), options


def parse_goal(text: str, illuminant: str = "D65") -> Goal:
    """Read one goal (the grammar is in the module documentation).

    Parameters
    ----------
    text : str
        E.g. ``"mean R 420..680nm <= 0.5%"``.
    illuminant : str, optional
        Illuminant of luminous and colour goals that do not name one with ``under``.

    Returns
    -------
    Goal

    Raises
    ------
    FilmopticError
        One line naming the goal and what to write instead.

    Examples
    --------
    >>> g = parse_goal("luminous-R reverse <= 8%")
    >>> g.kind, g.quantity, g.side, g.operator, g.value
    ('luminous', 'R', 'reverse', '<=', 0.08)
    >>> parse_goal("T 550nm = 50%").within
    0.01
    """
    if not isinstance(text, str):
        raise FilmopticError(f"a goal must be text, got {type(text).__name__}")
    goal = " ".join(text.split())
    if not goal:
        raise FilmopticError(f"a goal is empty; {_EXAMPLES}")
    m = _OPERATOR_RE.search(goal)
    if m is None:
        _fail(goal, f"no comparison: write <=, >= or =, {_EXAMPLES}")
    operator = _OPERATORS[m.group()]
    left, right = goal[:m.start()], goal[m.end():]
    if _OPERATOR_RE.search(right):
        _fail(goal, "more than one comparison; write one goal per --goal")
    words = left.replace("@ ", "@").split()
    # An angle may also follow the value ('reflected Lab = 60,0,0 @0..30deg within 2').
    right_words = right.replace("@ ", "@").split()
    words += [w for w in right_words if w.startswith("@")]
    right = " ".join(w for w in right_words if not w.startswith("@"))
    if not words:
        _fail(goal, f"say what to bound before {m.group()!r}; {_EXAMPLES}")
    parts = _left_side(words, goal)
    if parts["what"] is None:
        _fail(goal, f"say what to bound: R, T, A, luminous-T, luminous-R, reflected Lab/hex or "
                    f"transmitted Lab/hex; {_EXAMPLES}")
    value_text, options = _right_side(right, goal)
    if not value_text:
        _fail(goal, f"a value is missing after {m.group()!r}")
    kind = parts["what"][0]
    quantity = parts["what"][1]
    side = parts["side"] or "front"
    angles = parts["angles"] or (0.0, 0.0)
    pol = parts["pol"] or "unpolarized"
    weight = 1.0
    if "weight" in options:
        weight = _number(options["weight"], "weight", goal)
        if not weight > 0 or weight > 1e6:
            _fail(goal, f"the weight must be a positive number, got {options['weight']!r}")
    goal_illuminant = illuminant
    if "under" in options:
        if kind == "spectral":
            _fail(goal, "'under' names the illuminant of a luminous or colour goal")
        goal_illuminant = options["under"]
    if kind != "spectral":
        from filmoptic.colorimetry import check_illuminant

        try:
            goal_illuminant = check_illuminant(goal_illuminant)
        except FilmopticError as exc:
            _fail(goal, str(exc))
    if kind == "spectral":
        if parts["band"] is None:
            _fail(goal, f"say where: a wavelength ('{quantity} 550nm …') or a band ('{quantity} 420..680nm …')")
    elif parts["band"] is not None:
        _fail(goal, "luminous and colour goals use the whole visible range (380–780 nm); drop the wavelength")
    if kind != "spectral" and parts["pol"] is not None:
        _fail(goal, "a polarisation applies to R, T and A goals; luminous values and colours use unpolarised light")
    if kind == "colour":
        if parts["mean"]:
            _fail(goal, "'mean' does not apply to a colour; the worst angle counts")
        if operator != "=":
            _fail(goal, "a colour is asked for with '=' and a ΔE00 tolerance: '… = L,a,b within 2'")
        lab = _colour_value(value_text, parts["what"][2], goal_illuminant, goal)
        within = DEFAULT_COLOUR_WITHIN
        if "within" in options:
            within = _number(options["within"], "within", goal)
            if not within > 0:
                _fail(goal, f"'within' is a ΔE00 distance, a positive number, got {options['within']!r}")
        return Goal(goal, "colour", quantity, "=", None, lab, within, None, False, side, angles, pol,
                    weight, goal_illuminant)
    value = _fraction(goal, value_text, goal)
    within = None
    if "within" in options:
        if operator != "=":
            _fail(goal, "'within' belongs to an '=' goal; a bound (<=, >=) needs none")
        within = _fraction(goal, options["within"], goal)
        if not within > 0:
            _fail(goal, "'within' must be positive, e.g. 'within 1%'")
    elif operator == "=":
        within = DEFAULT_WITHIN
    return Goal(goal, kind, quantity, operator, value, None, within, parts["band"], parts["mean"],
                side, angles, pol, weight, goal_illuminant)


def _number(text: str, what: str, goal: str) -> float:
    from filmoptic.units import parse_number

    try:
        return parse_number(text, what)
    except FilmopticError as exc:
        _fail(goal, str(exc))


def _colour_value(text: str, form: str, illuminant: str, goal: str) -> tuple:
    from filmoptic.inverse.solve import lab_from_hex, parse_lab

    try:
        if form == "hex":
            return lab_from_hex(text.strip(), illuminant)
        return parse_lab(text)
    except FilmopticError as exc:
        message = str(exc).replace("--lab: ", "").replace("--hex: ", "")
        _fail(goal, message)


def goals_span_nm(goals) -> tuple:
    """``(low, high)`` nm covering every goal's :attr:`Goal.span_nm`.

    Examples
    --------
    >>> goals_span_nm(parse_goals(["R 420..680nm <= 1%", "T 900nm >= 50%"]))
    (420.0, 900.0)
    >>> goals_span_nm(parse_goals(["R 700..850nm <= 1%", "luminous-T = 30%"]))
    (380.0, 850.0)
    """
    spans = [goal.span_nm for goal in goals]
    return min(lo for lo, _ in spans), max(hi for _, hi in spans)


def parse_goals(texts, illuminant: str = "D65") -> tuple:
    """Read several goals; at least one, at most :data:`MAX_GOALS`.

    Examples
    --------
    >>> [g.kind for g in parse_goals(["R 550nm <= 1%", "luminous-T >= 80%"])]
    ['spectral', 'luminous']
    """
    goals = tuple(parse_goal(t, illuminant) for t in texts)
    if not goals:
        raise FilmopticError(f"give at least one goal (--goal or --goals FILE), {_EXAMPLES}")
    if len(goals) > MAX_GOALS:
        raise FilmopticError(f"{len(goals)} goals is more than the {MAX_GOALS} one design may have")
    return goals


def read_goals_file(path, illuminant: str = "D65") -> tuple:
    """Goals from a text file: one goal a line; ``#`` starts a comment (``#8a9a7b`` is a colour).

    Errors name the file and line.
    """
    from filmoptic.errors import DataFileError

    try:
        with open(path, encoding="utf-8") as fh:
            lines = fh.read().splitlines()
    except UnicodeDecodeError:
        raise DataFileError(f"goals file {path}: not a text file (UTF-8)") from None
    except OSError as exc:
        raise DataFileError(f"cannot read goals file {path}: {exc.strerror or exc}") from None
    goals = []
    for number, line in enumerate(lines, start=1):
        text = _COMMENT_RE.sub("", line).strip()
        if not text:
            continue
        try:
            goals.append(parse_goal(text, illuminant))
        except FilmopticError as exc:
            raise DataFileError(f"goals file {path}, line {number}: {exc}") from None
    if not goals:
        raise DataFileError(f"goals file {path} holds no goals (one goal a line, '#' for comments)")
    return tuple(goals)


# --------------------------------------------------------------------------------------------
# Scoring
# --------------------------------------------------------------------------------------------


def goal_weights(goal: Goal, wavelength_nm) -> np.ndarray | None:
    """What a luminous or colour goal reduces its channel to: weights of shape ``(W, 1)`` (luminous
    value) or ``(W, 3)`` (CIE XYZ, 2° observer) over ``wavelength_nm``; None for a spectral goal,
    which looks at every wavelength itself."""
    from filmoptic import colorimetry

    if goal.kind == "spectral":
        return None
    if goal.kind == "luminous":
        return colorimetry.luminous_weights(wavelength_nm, goal.illuminant)[:, None]
    return colorimetry.tristimulus_weights(wavelength_nm, goal.illuminant, 2)


def samples_from_sums(goal: Goal, sums, wavelength_nm) -> np.ndarray:
    """A luminous or colour goal's samples ``(B, n_angles)`` from its channel already reduced with
    :func:`goal_weights` (``sums`` of shape ``(B, n_angles, 1 or 3)``): fractions, or ΔE00."""
    from filmoptic import colorimetry

    sums = np.asarray(sums, dtype=float)
    if goal.kind == "luminous":
        return sums[..., 0]
    delta = colorimetry.delta_e00(np.reshape(lab_from_sums(goal, sums, wavelength_nm), (-1, 3)),
                                  np.asarray(goal.lab, dtype=float))
    return np.reshape(delta, sums.shape[:2])


def lab_from_sums(goal: Goal, XYZ, wavelength_nm) -> np.ndarray:
    """CIELAB ``(B, n_angles, 3)`` of a colour goal's channel from its XYZ ``(B, n_angles, 3)``."""
    from filmoptic import colorimetry

    XYZ = np.asarray(XYZ, dtype=float)
    lab = colorimetry.colour_from_XYZ(XYZ.reshape(-1, 3), wavelength_nm, goal.illuminant, 2).Lab
    return np.reshape(lab, XYZ.shape[:2] + (3,))


def samples_of(goal: Goal, values, wavelength_nm) -> np.ndarray:
    """The goal's samples from its channel: ``values`` of shape ``(B, n_angles, n_wavelengths)``
    on ``wavelength_nm`` gives ``(B, n_samples)`` (fractions, or ΔE00 for colours)."""
    values = np.asarray(values, dtype=float)
    if goal.kind == "spectral":
        return values.reshape(values.shape[0], -1)
    return samples_from_sums(goal, values @ goal_weights(goal, wavelength_nm), wavelength_nm)


def lab_of(goal: Goal, values, wavelength_nm) -> np.ndarray:
    """CIELAB of a colour goal's channel, shape ``(B, n_angles, 3)``."""
    values = np.asarray(values, dtype=float)
    return lab_from_sums(goal, values @ goal_weights(goal, wavelength_nm), wavelength_nm)


def shortfall(goal: Goal, samples) -> np.ndarray:
    """Per sample (or of the mean, for ``mean`` goals): how far it is from meeting the goal, in
    the goal's own unit (fraction or ΔE00); shape ``(B, n)``."""
    s = np.asarray(samples, dtype=float)
    if goal.mean:
        s = s.mean(axis=1, keepdims=True)
    if goal.kind == "colour":
        return s
    if goal.operator == "<=":
        return np.maximum(s - (goal.value - AIM_INSIDE), 0.0)
    if goal.operator == ">=":
        return np.maximum(goal.value + AIM_INSIDE - s, 0.0)
    return s - goal.value


def achieved(goal: Goal, samples) -> np.ndarray:
    """The value a goal is judged by (worst sample, or the mean), shape ``(B,)``."""
    s = np.asarray(samples, dtype=float)
    if goal.mean:
        return s.mean(axis=1)
    if goal.kind == "colour" or goal.operator == "<=":
        return s.max(axis=1)
    if goal.operator == ">=":
        return s.min(axis=1)
    worst = np.argmax(np.abs(s - goal.value), axis=1)
    return np.take_along_axis(s, worst[:, None], axis=1)[:, 0]

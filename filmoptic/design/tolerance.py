"""Yield of a design under thickness errors: vectorised Monte Carlo and layer sensitivities.

Every coherent layer of the stack is made many times over with its thickness off by a random
error — independently from layer to layer, and optionally by a *systematic* error shared by all
layers of one material in the same run (a rate calibration error) — and each sample is scored
against the goals. Errors are normally distributed with the given standard deviation, or with
``uniform=True`` spread evenly over ± the given value; a relative error (``2%``) scales with the
layer, an absolute one (``1nm``) does not. Samples run through the engine in chunks, so memory
stays bounded however many are asked for; thick slabs (mm) are not varied.

Reported:

* the **yield**: the share of samples that meet every goal, with its binomial standard error
  √(p(1 − p)/N);
* each goal's **spread**: the 5th, 50th and 95th percentiles of its achieved value, and the
  share of samples meeting it;
* each layer's **sensitivity**: how far the goals' achieved values move when that layer alone is
  off by plus and by minus one standard deviation of its error (the RMS of the two changes,
  weighted over goals like the merit, in percentage points or ΔE00 — both signs count, so a
  layer at an optimum, where the slope vanishes, is still rated), and the **critical layer**,
  the most sensitive.

References
----------
Monte Carlo tolerancing of coatings with random thickness errors: H. A. Macleod, *Thin-Film
Optical Filters*, 4th ed., CRC Press (2010), ch. on production errors (from memory). The
binomial standard error of a proportion: any statistics text (common practice).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np

from filmoptic.errors import FilmopticError

from .evaluate import Evaluator
from .layout import layout_from_stack, same_material

__all__ = [
    "ErrorSpec",
    "GoalSpread",
    "LayerSensitivity",
    "ToleranceResult",
    "parse_error",
    "tolerance_analysis",
    "perturbed_thicknesses",
    "spectral_band",
    "MAX_SAMPLES",
    "SAMPLE_CHUNK",
]

#: Most Monte Carlo samples of one analysis.
MAX_SAMPLES = 200_000
#: Samples scored per batch (memory stays bounded by it).
SAMPLE_CHUNK = 2048
_NUMBER = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"


@dataclass(frozen=True)
class ErrorSpec:
    """A thickness error: ``value`` (a fraction if ``relative``, else nm) and how it is written."""

    value: float
    relative: bool
    text: str

    def sigma_nm(self, thickness_nm, uniform: bool = False) -> np.ndarray:
        """Standard deviation of the error of layers of these thicknesses, nm."""
        scale = self.value * (np.asarray(thickness_nm, dtype=float) if self.relative else 1.0)
        return np.broadcast_to(scale / math.sqrt(3.0) if uniform else scale,
                               np.shape(thickness_nm)).astype(float)


def parse_error(text, what: str = "--tolerance") -> ErrorSpec:
    """``2%`` (relative to each layer) or ``1nm`` (absolute; ``Å`` and ``um`` read too).

    Examples
    --------
    >>> parse_error("2%")
    ErrorSpec(value=0.02, relative=True, text='2%')
    >>> parse_error("1.5 nm").value
    1.5
    """
    s = str(text).strip()
    m = re.fullmatch(rf"({_NUMBER})\s*(%|nm|um|µm|Å|A)?", s)
    if not m or m.group(2) is None:
        raise FilmopticError(f"{what}: write a relative error like '2%' or an absolute one like '1nm', got {text!r}")
    value = float(m.group(1))
    unit = m.group(2)
    if not math.isfinite(value) or value < 0:
        raise FilmopticError(f"{what} must not be negative, got {text!r}")
    if unit == "%":
        if value > 50:
            raise FilmopticError(f"{what}: {value:g}% is no tolerance (at most 50%)")
        return ErrorSpec(value / 100.0, True, s)
    scale = {"nm": 1.0, "um": 1000.0, "µm": 1000.0, "Å": 0.1, "A": 0.1}[unit]
    if value * scale > 1000:
        raise FilmopticError(f"{what}: {text!r} is no tolerance (at most 1000 nm)")
    return ErrorSpec(value * scale, False, s)


@dataclass(frozen=True)
class GoalSpread:
    """One goal over the samples: percentiles of the achieved value and the share meeting it."""

    goal: object
    p5: float
    p50: float
    p95: float
    met_share: float


@dataclass(frozen=True)
class LayerSensitivity:
    """One layer: its number (1 = first the light meets), material, nominal thickness, the
    standard deviation of its error (nm) and the goals' weighted RMS change for that error."""

    layer: int
    material: str
    thickness_nm: float
    sigma_nm: float
    effect: float


@dataclass(frozen=True)
class ToleranceResult:
    """Outcome of :func:`tolerance_analysis`.

    Attributes
    ----------
    stack : str
    samples : int
    yield_fraction : float
        Share of samples meeting every goal.
    yield_stderr : float
        Its binomial standard error.
    critical_layer : int or None
        Number of the most sensitive layer (1 = first the light meets).
    goals : tuple of GoalSpread
    layers : tuple of LayerSensitivity
    random : str
    systematic : str or None
    distribution : {"normal", "uniform"}
    seed : int
    """

    stack: str
    samples: int
    yield_fraction: float
    yield_stderr: float
    critical_layer: int | None
    goals: tuple
    layers: tuple
    random: str
    systematic: str | None
    distribution: str
    seed: int


def _layers_and_template(stack, ambient):
    from filmoptic.stack import parse_stack

    parsed = parse_stack(stack, ambient=ambient) if isinstance(stack, str) else stack
    if parsed.parameters:
        names = ", ".join(p.name for p in parsed.parameters)
        raise FilmopticError(f"the stack has unknown values ({names}); give numbers to tolerance it")
    layout = layout_from_stack(parsed)
    coherent = layout.coherent_indices()
    nominal = np.array([layout.entries[i].thickness_nm for i in coherent], dtype=float)
    materials = []
    groups = []
    for i in coherent:
        material = layout.entries[i].material
        for k, known in enumerate(materials):
            if same_material(known, material):
                groups.append(k)
                break
        else:
            materials.append(material)
            groups.append(len(materials) - 1)
    return parsed, layout, coherent, nominal, np.array(groups, dtype=int), len(materials)


def perturbed_thicknesses(nominal, random: ErrorSpec, systematic: ErrorSpec | None, groups,
                          n_groups: int, count: int, rng, uniform: bool = False) -> np.ndarray:
    """``count`` sets of layer thicknesses ``(count, L)`` around ``nominal`` (clipped at 0).

    ``groups[j]`` is layer j's material number (for the systematic part, which is drawn once per
    material and sample).
    """
    L = nominal.size

    def draw(shape, spec):
        if uniform:
            return rng.uniform(-spec.value, spec.value, shape)
        return rng.normal(0.0, spec.value, shape)

    e = draw((count, L), random)
    X = nominal * (1.0 + e) if random.relative else nominal + e
    if systematic is not None and systematic.value > 0:
        s = draw((count, n_groups), systematic)[:, groups]
        X = X * (1.0 + s) if systematic.relative else X + s
    return np.maximum(X, 0.0)


def tolerance_analysis(stack, goals, *, random="2%", systematic=None, samples: int = 1000,
                       uniform: bool = False, seed: int = 0, ambient="air", step_nm: float = 5.0,
                       illuminant="D65", extrapolate: bool = False, progress=None) -> ToleranceResult:
    """Monte Carlo yield, goal spreads and layer sensitivities of a finished stack.

    Parameters
    ----------
    stack : str or filmoptic.stack.Stack
        A stack without unknowns (e.g. :attr:`DesignResult.stack`).
    goals : sequence of Goal or str
    random : str or ErrorSpec
        Error of each layer on its own: ``"2%"`` or ``"1nm"`` (standard deviation; with
        ``uniform`` the half-width).
    systematic : str or ErrorSpec, optional
        Error shared by every layer of one material in a sample (rate calibration).
    samples : int
        Number of Monte Carlo samples (1 to :data:`MAX_SAMPLES`).
    uniform : bool
        Errors spread evenly over ±value instead of normally.
    seed : int
        Seed of the draws (the same seed gives the same samples).
    ambient, step_nm, illuminant, extrapolate
        As for :func:`filmoptic.design.design_coating`.
    progress : callable, optional
        ``progress(done, total)`` in samples.

    Returns
    -------
    ToleranceResult

    Examples
    --------
    >>> t = tolerance_analysis("n=1.38 99.64nm / n=1.52", ["R 550nm <= 1.265%"], random="2%",
    ...                        samples=2000, ambient="n=1")
    >>> 0.7 < t.yield_fraction < 0.9, t.critical_layer
    (True, 1)
    """
    from .designer import _as_goals, _check_step

    goals = _as_goals(goals, illuminant)
    step = _check_step(goals, step_nm)
    random = random if isinstance(random, ErrorSpec) else parse_error(random, "--tolerance")
    if systematic is not None and not isinstance(systematic, ErrorSpec):
        systematic = parse_error(systematic, "--systematic")
    samples = int(samples)
    if not 1 <= samples <= MAX_SAMPLES:
        raise FilmopticError(f"samples must be 1–{MAX_SAMPLES}, got {samples}")
    parsed, layout, coherent, nominal, groups, n_groups = _layers_and_template(stack, ambient)
    if nominal.size == 0:
        raise FilmopticError("the stack has no thin layers to vary; a tolerance applies to coating layers")
    template = layout.template(every_layer_free=True)
    evaluator = Evaluator(template, goals, step_nm=step, extrapolate=extrapolate)
    rng = np.random.default_rng(int(seed))
    achieved = np.empty((samples, len(goals)), dtype=np.float32)
    met = np.empty((samples, len(goals)), dtype=bool)
    for start in range(0, samples, SAMPLE_CHUNK):
        count = min(SAMPLE_CHUNK, samples - start)
        X = perturbed_thicknesses(nominal, random, systematic, groups, n_groups, count, rng, uniform)
        scores = evaluator.scores(X)
        achieved[start:start + count] = scores.achieved
        met[start:start + count] = scores.met
        if progress is not None:
            progress(start + count, samples)
    all_met = np.all(met, axis=1)
    p = float(all_met.mean())
    spreads = tuple(
        GoalSpread(goal, *(float(v) for v in np.percentile(achieved[:, k].astype(float), [5, 50, 95])),
                   float(met[:, k].mean()))
        for k, goal in enumerate(goals)
    )
    sigma = random.sigma_nm(nominal, uniform)
    effects = _sensitivities(evaluator, nominal, sigma, goals)
    layer_numbers = [i + 1 for i in coherent]
    layers = tuple(
        LayerSensitivity(layer_numbers[j], layout.entries[coherent[j]].material.notation, float(nominal[j]),
                         float(sigma[j]), float(effects[j]))
        for j in range(nominal.size)
    )
    critical = layer_numbers[int(np.argmax(effects))] if np.any(effects > 0) else None
    return ToleranceResult(
        stack=parsed.text, samples=samples, yield_fraction=p, yield_stderr=math.sqrt(p * (1 - p) / samples),
        critical_layer=critical, goals=spreads, layers=layers, random=random.text,
        systematic=None if systematic is None else systematic.text,
        distribution="uniform" if uniform else "normal", seed=int(seed),
    )


def _sensitivities(evaluator, nominal, sigma, goals) -> np.ndarray:
    """Weighted RMS change of the goals' achieved values when one layer alone is off by ±1σ
    (both signs, so that a layer at an optimum, where the slope vanishes, still counts)."""
    L = nominal.size
    shifts = np.diag(sigma)
    up = nominal[None, :] + shifts
    down = np.maximum(nominal[None, :] - shifts, 0.0)
    scores = evaluator.scores(np.vstack([nominal[None, :], up, down]))
    a0, a_up, a_down = scores.achieved[0], scores.achieved[1:L + 1], scores.achieved[L + 1:]
    weights = np.array([g.weight for g in goals])
    scales = np.array([g.scale for g in goals])
    square = 0.5 * (((a_up - a0) / scales) ** 2 + ((a_down - a0) / scales) ** 2)   # (L, G)
    return np.sqrt(np.sum(weights * square, axis=1) / weights.sum())


def spectral_band(stack, wavelength_nm, *, random, systematic=None, uniform: bool = False, seed: int = 0,
                  samples: int = 300, ambient="air", reverse: bool = False, angle_deg: float = 0.0,
                  polarization: str = "unpolarized", extrapolate: bool = False) -> dict:
    """R and T of a stack and their 5th–95th percentile band over simulated runs, on a grid.

    Returns ``{"R": (nominal, p5, p95), "T": (nominal, p5, p95)}``, arrays of shape ``(W,)``.
    The runs are drawn as in :func:`tolerance_analysis` (same seed, same first runs).
    """
    from filmoptic.engine import compute

    random = random if isinstance(random, ErrorSpec) else parse_error(random, "--tolerance")
    if systematic is not None and not isinstance(systematic, ErrorSpec):
        systematic = parse_error(systematic, "--systematic")
    parsed, layout, coherent, nominal, groups, n_groups = _layers_and_template(stack, ambient)
    template = layout.template(every_layer_free=True)
    rng = np.random.default_rng(int(seed))
    X = perturbed_thicknesses(nominal, random, systematic, groups, n_groups, int(samples), rng, uniform)
    X = np.vstack([nominal[None, :], X])
    s = compute(template, wavelength_nm, thickness_nm=X, angle_deg=angle_deg, polarization=polarization,
                reverse=reverse, extrapolate=extrapolate)
    out = {}
    for name, values in (("R", s.R), ("T", s.T)):
        p5, p95 = np.percentile(values[1:], [5, 95], axis=0)
        out[name] = (values[0], p5, p95)
    return out

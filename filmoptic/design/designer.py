"""Designing a coating for a set of goals: global search, local refinement, needle insertion.

:func:`design_coating` starts either from a stack whose free thicknesses (``?`` or
``LOW..HIGH``) are to be found, or from nothing but a list of materials and a substrate. It

1. **searches globally**: random thickness sets for every starting structure (for a design
   from nothing: alternating layers of each ordered pair of materials, four layers or the
   layer limit), scored in batches through the vectorised engine
   (:mod:`filmoptic.design.search`);
2. **refines locally** the best distinct ones together, by a bounded Levenberg–Marquardt
   iteration whose Jacobian comes from one batched engine call per iteration
   (:mod:`filmoptic.design.refine`);
3. **grows** the best designs with the needle method (Tikhonravov, Trubetskov & DeBell 1996,
   :mod:`filmoptic.design.needle`) when materials are given: a needle goes where it lowers the
   merit fastest, all thicknesses are refined again, and this repeats while it helps and the
   layer limit allows. When no needle helps (a design can be optimal for its total thickness,
   as a quarter-wave mirror is), a quarter-wave layer at the reference wavelength is tried on
   the outer face and next to the substrate instead;
4. **keeps it manufacturable**: after every refinement, the layers the design made that are
   thinner than ``min_layer_nm`` (default 10 nm, about the thinnest dielectric layer a small
   coater deposits reproducibly — common practice) are removed, neighbours of one material
   merged, and the rest refined again; ``max_total_nm`` bounds the total thickness throughout.
   The layers of a given stack are never removed: they keep the range written for them (a
   semi-mirror's 8 nm of chromium is what the user asked for).

The design is written as a stack with thicknesses rounded to a thousandth of a nanometre, and
every reported value is computed from that stack as any other command would read it. A seed
makes the whole run repeatable. Interrupting (Ctrl-C) returns the best design found so far.

References
----------
A. V. Tikhonravov, M. K. Trubetskov and G. W. DeBell, Appl. Opt. 35, 5493 (1996) (needle
method). K. Levenberg (1944) and D. W. Marquardt (1963) (local refinement; see
:mod:`filmoptic.design.refine`). H. A. Macleod, *Thin-Film Optical Filters*, 4th ed., CRC Press
(2010), ch. 2 (quarter-wave optical thickness).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from itertools import permutations

import numpy as np

from filmoptic.errors import FilmopticError

from .evaluate import Evaluator
from .goals import Goal, goals_span_nm, parse_goals
from .layout import Entry, Layout, default_high_nm, layout_from_stack, same_material
from .needle import EDGE_NM, needle_scan
from .refine import refine
from .search import random_search, search_box

__all__ = [
    "LayerResult",
    "GoalResult",
    "DesignResult",
    "design_coating",
    "check_design",
    "DEFAULT_MIN_LAYER_NM",
    "MAX_DESIGN_LAYERS",
    "MAX_TRIES",
    "MAX_WAVELENGTHS",
]

#: Thinnest free layer a design keeps, nm (common practice for small coaters).
DEFAULT_MIN_LAYER_NM = 10.0
#: Most layers a design may have.
MAX_DESIGN_LAYERS = 200
#: Most random designs the global search may try.
MAX_TRIES = 1_000_000
#: Most sampled wavelengths per goal group.
MAX_WAVELENGTHS = 20_000
#: Layers a design from nothing starts with (before needles are added).
START_LAYERS = 4
#: A needle's thickness when it is inserted, nm (the refinement then grows it or removes it).
NEEDLE_START_NM = 2.0
#: Needle positions tried in turn before the growth stops.
NEEDLE_ATTEMPTS = 3
#: During growth, layers thinner than this are removed (nm); the minimum layer thickness is
#: applied to the grown designs afterwards.
GROWTH_THIN_NM = 1.0
#: How many of the last grown designs get the minimum layer thickness applied and compete.
FINISH_CANDIDATES = 3
#: How many of the best refined starts are settled and (with materials) grown.
GROW_FROM = 2
#: A needle is tried only where it promises to lower the sum of squares F by at least this share
#: of F per nanometre of needle.
NEEDLE_GAIN = 1e-4
#: Needle positions in one layer closer than this count as one place, nm.
NEEDLE_SEPARATION_NM = 20.0
#: A merit at or below this (percentage points) counts as every goal reached.
MERIT_REACHED = 1e-7


@dataclass(frozen=True)
class LayerResult:
    """One layer of a design: material notation, thickness (nm), quarter waves at the reference
    wavelength (None for a metal or a thick slab), whether it was fixed, whether it is a thick
    (incoherent) slab."""

    material: str
    thickness_nm: float
    quarter_waves: float | None
    fixed: bool
    thick: bool = False


@dataclass(frozen=True)
class GoalResult:
    """How the design does on one goal: the achieved value (fraction, or ΔE00 for a colour),
    whether it is met, and for colours the CIELAB seen at the worst angle."""

    goal: Goal
    achieved: float
    met: bool
    lab: tuple | None = None


@dataclass(frozen=True)
class DesignResult:
    """A designed (or checked) coating.

    Attributes
    ----------
    stack : str
        The design in stack notation (read it with :func:`filmoptic.stack.parse_stack`).
    layers : tuple of LayerResult
    goals : tuple of GoalResult
    merit : float
        The weighted RMS shortfall (percentage points; ΔE00 for colours); 0 when every
        inequality goal is met and every ``=`` goal hit.
    reference_nm : float
        Wavelength of the quarter-wave counts.
    ambient : str
        The incident medium (not part of the stack notation).
    interrupted : bool
        True when the run was interrupted and this is the best design found until then.
    seed : int or None
    designs_evaluated : int
        Designs the engine scored (all batches together).
    notes : tuple of str
    """

    stack: str
    layers: tuple
    goals: tuple
    merit: float
    reference_nm: float
    ambient: str
    interrupted: bool = False
    seed: int | None = None
    designs_evaluated: int = 0
    notes: tuple = ()

    @property
    def all_met(self) -> bool:
        return all(g.met for g in self.goals)


# --------------------------------------------------------------------------------------------
# Checking a finished stack
# --------------------------------------------------------------------------------------------


def _as_goals(goals, illuminant) -> tuple:
    goals = list(goals) if not isinstance(goals, (str, Goal)) else [goals]
    texts = [g for g in goals if isinstance(g, str)]
    parsed = iter(parse_goals(texts, illuminant)) if texts else iter(())
    out = tuple(next(parsed) if isinstance(g, str) else g for g in goals)
    if not out:
        raise FilmopticError("give at least one goal")
    return out


def _check_step(goals, step_nm) -> float:
    step = float(step_nm)
    if not (math.isfinite(step) and step > 0):
        raise FilmopticError(f"the wavelength step must be a positive number of nm, got {step_nm!r}")
    for g in goals:
        if g.kind == "spectral" and (g.band_nm[1] - g.band_nm[0]) / step > MAX_WAVELENGTHS:
            raise FilmopticError(
                f"goal {g.text!r} needs more than {MAX_WAVELENGTHS} wavelengths at a {step:g} nm step; "
                "use a larger step"
            )
    return step


def default_reference_nm(goals) -> float:
    """The middle of the wavelengths the goals look at (380–780 nm for luminous and colour goals),
    rounded to 1 nm."""
    lo, hi = goals_span_nm(goals)
    return float(round(0.5 * (lo + hi)))


def _quarter_waves(material, thickness_nm, reference_nm, extrapolate):
    """Optical thickness in quarter waves, 4·n·d/λ (Macleod ch. 2); None for a metal, whose
    phase thickness is no guide, or where the table does not reach the reference."""
    if getattr(material, "kind", "") == "metal":
        return None
    try:
        n = float(np.real(np.asarray(material.nk(np.array([reference_nm]), extrapolate=extrapolate))).ravel()[0])
    except FilmopticError:
        return None
    return 4.0 * n * thickness_nm / reference_nm


def _report(stack_text, goals, *, ambient, step_nm, reference_nm, extrapolate, seed, interrupted,
            evaluated, notes, designed=None) -> DesignResult:
    """Every reported value from the stack as written (as another command would read it)."""
    from filmoptic.stack import parse_stack

    stack = parse_stack(stack_text, ambient=ambient)
    if stack.parameters:
        names = ", ".join(p.name for p in stack.parameters)
        raise FilmopticError(f"the stack has unknown values ({names}); give numbers to check it")
    evaluator = Evaluator(stack, goals, step_nm=step_nm, extrapolate=extrapolate)
    none = np.zeros((1, 0))
    scores = evaluator.scores(none)
    labs = evaluator.colours(none)
    samples = evaluator.goal_samples(none)
    goal_results = []
    for k, goal in enumerate(goals):
        lab = None
        if labs[k] is not None:
            worst = int(np.argmax(samples[k][0]))
            lab = tuple(float(v) for v in labs[k][0, worst])
        goal_results.append(GoalResult(goal, float(scores.achieved[0, k]), bool(scores.met[0, k]), lab))
    layers = tuple(
        LayerResult(layer.material.notation, float(layer.thickness_nm),
                    None if layer.thick else _quarter_waves(layer.material, float(layer.thickness_nm),
                                                           reference_nm, extrapolate),
                    True if designed is None else not designed[i], bool(layer.thick))
        for i, layer in enumerate(stack.layers)
    )
    notes = list(notes)
    if stack.substrate.thickness_nm is not None and any(
            g.kind == "spectral" and g.quantity == "R" and g.side == "front" and g.operator == "<=" and g.value < 0.04
            for g in goals):
        # Common practice: an uncoated glass face reflects about 4 %, which no front coating removes.
        notes.append(f"R includes the uncoated back face of {stack.substrate.text} (about 4 % for glass); "
                     f"to judge one coated face, write the substrate without a thickness")
    return DesignResult(
        stack=stack.text, layers=layers, goals=tuple(goal_results), merit=float(scores.merit[0]),
        reference_nm=float(reference_nm), ambient=getattr(stack.ambient, "notation", str(stack.ambient)),
        interrupted=interrupted, seed=seed, designs_evaluated=evaluated + 1, notes=tuple(notes),
    )


def check_design(stack, goals, *, ambient="air", step_nm: float = 5.0, reference_nm=None,
                 illuminant="D65", extrapolate: bool = False) -> DesignResult:
    """How a finished stack does against goals, without changing it.

    Parameters
    ----------
    stack : str or filmoptic.stack.Stack
        A stack without unknowns.
    goals : sequence of Goal or str
    ambient, step_nm, reference_nm, illuminant, extrapolate
        As for :func:`design_coating`.

    Returns
    -------
    DesignResult
        With ``layers[i].fixed`` True throughout.

    Examples
    --------
    >>> r = check_design("n=1.38 99.64nm / n=1.52", ["R 550nm <= 1.5%"], ambient="n=1")
    >>> round(r.goals[0].achieved, 6), r.goals[0].met
    (0.012601, True)
    """
    goals = _as_goals(goals, illuminant)
    step = _check_step(goals, step_nm)
    text = stack if isinstance(stack, str) else stack.text
    if not isinstance(stack, str):
        ambient = stack.ambient
    reference = default_reference_nm(goals) if reference_nm is None else float(reference_nm)
    return _report(text, goals, ambient=ambient, step_nm=step, reference_nm=reference,
                   extrapolate=extrapolate, seed=None, interrupted=False, evaluated=0, notes=())


# --------------------------------------------------------------------------------------------
# Designing
# --------------------------------------------------------------------------------------------


class _Progress:
    """Maps the stages of a design onto ``progress(done, total)`` with a fixed total."""

    TOTAL = 1000

    def __init__(self, callback):
        self.callback = callback
        self.done = 0

    def to(self, value: float) -> None:
        value = int(min(max(value, self.done), self.TOTAL))
        if value > self.done:
            self.done = value
            if self.callback is not None:
                self.callback(self.done, self.TOTAL)


class _Best:
    """The best design seen so far (kept for an interrupted run)."""

    def __init__(self, weight_sum: float):
        self.weight_sum = weight_sum
        self.layout = None
        self.merit = math.inf
        self.settled = None        # best design whose own layers all keep the minimum thickness
        self.settled_merit = math.inf

    def offer(self, layout, X, F) -> None:
        i = int(np.argmin(F))
        merit = math.sqrt(max(float(F[i]), 0.0) / self.weight_sum)
        if merit < self.merit:
            self.merit = merit
            self.layout = layout.with_values(X[i])

    def offer_settled(self, layout, merit) -> None:
        if merit < self.settled_merit or (merit == self.settled_merit and self.settled is not None
                                          and len(layout.entries) < len(self.settled.entries)):
            self.settled, self.settled_merit = layout, merit


@dataclass
class _Run:
    """What every stage of one design run needs."""

    goals: tuple
    step_nm: float
    extrapolate: bool
    min_layer_nm: float
    max_total_nm: float
    max_layers: int
    best: _Best
    progress: _Progress
    reference_nm: float
    evaluated: int = 0
    max_iterations: int = 80

    def evaluator(self, layout) -> Evaluator:
        return Evaluator.for_layout(layout, self.goals, step_nm=self.step_nm, extrapolate=self.extrapolate)

    def budget(self, layout) -> float:
        return self.max_total_nm - layout.fixed_nm() if math.isfinite(self.max_total_nm) else math.inf

    def refine(self, layout, X0, span=(0.0, 0.0)):
        """Refine starts of one layout together; returns (layouts sorted by merit, merits)."""
        evaluator = self.evaluator(layout)
        lo, hi = layout.lower(), layout.upper()
        weight_sum = sum(g.weight for g in self.goals)
        start, stop = span

        def watch(X, F):
            self.best.offer(layout, X, F)
            self.progress.to(start + (stop - start) * min(watch.calls / self.max_iterations, 1.0))
            watch.calls += 1

        watch.calls = 1
        out = refine(evaluator.residuals, X0, lo, hi, counts=layout.counts(), budget=self.budget(layout),
                     max_iterations=self.max_iterations, watch=watch)
        self.evaluated += evaluator.designs_evaluated
        merits = np.sqrt(np.maximum(out.sum_of_squares, 0.0) / weight_sum)
        order = np.argsort(merits, kind="stable")
        self.best.offer(layout, out.x, out.sum_of_squares)
        return [layout.with_values(out.x[i]) for i in order], merits[order]

    def merit_of(self, layout) -> float:
        evaluator = self.evaluator(layout)
        merit = float(evaluator.merit(layout.values()[None, :])[0])
        self.evaluated += evaluator.designs_evaluated
        return merit

    def settle(self, layout, span=(0.0, 0.0), thin_nm=None):
        """Refine; remove free layers thinner than ``thin_nm`` (default the minimum layer
        thickness); repeat until none is."""
        thin_nm = self.min_layer_nm if thin_nm is None else thin_nm
        merit = math.nan
        for _ in range(len(layout.entries) + 1):
            if layout.columns():
                refined, merits = self.refine(layout, layout.values()[None, :], span)
                layout, merit = refined[0], float(merits[0])
            else:
                merit = self.merit_of(layout)
            thin = [i for i, e in enumerate(layout.entries)
                    if e.free and e.removable and e.thickness_nm < thin_nm and e.low < thin_nm]
            if not thin:
                break
            layout = layout.remove(thin)
        else:  # pragma: no cover - every pass removes a layer, so the loop ends before this
            merit = self.merit_of(layout)
        if all(e.thickness_nm >= self.min_layer_nm for e in layout.entries if e.free and e.removable):
            self.best.offer_settled(layout, merit)
        return layout, merit


def _parse_materials(materials) -> tuple:
    from filmoptic.materials import parse_material

    out = []
    for m in materials:
        material = parse_material(m) if isinstance(m, str) else m
        if material.free_parameters():
            raise FilmopticError(f"material {material.notation!r}: a design material needs numbers, not unknowns")
        if any(material.notation == o.notation for o in out):
            raise FilmopticError(f"material {material.notation!r} is listed twice")
        out.append(material)
    return tuple(out)


def split_materials(text: str) -> list:
    """A comma list of materials, with commas inside parentheses kept (``mix(Ti,TiO2,0.3)``).

    Examples
    --------
    >>> split_materials("TiO2, SiO2,mix(Ti,TiO2,0.3)")
    ['TiO2', 'SiO2', 'mix(Ti,TiO2,0.3)']
    """
    parts, depth, current = [], 0, []
    for ch in str(text):
        if ch in "([":
            depth += 1
        elif ch in ")]":
            depth -= 1
        if ch == "," and depth == 0:
            parts.append("".join(current).strip())
            current = []
        else:
            current.append(ch)
    parts.append("".join(current).strip())
    if any(not p for p in parts):
        raise FilmopticError(f"materials: an empty name in {text!r}; write e.g. 'TiO2,SiO2'")
    return parts


def _starting_layouts(base: Layout, materials, count: int) -> list:
    """Alternating layers of each ordered pair of materials (one material: a single layer),
    placed in front of the base stack's own layers."""
    if len(materials) == 1:
        sequences = [[materials[0]]]
    else:
        sequences = [[(a, b)[i % 2] for i in range(count)] for a, b in permutations(materials, 2)]
    layouts = []
    for sequence in sequences:
        new = [Entry(m, 0.5 * default_high_nm(m), True, 0.0, default_high_nm(m)) for m in sequence]
        layouts.append(replace(base, entries=tuple(new) + base.entries))
    return layouts


def _layer_count(layout) -> int:
    return len(layout.entries)


def design_coating(goals, stack=None, *, materials=(), on=None, ambient="air", max_layers=None,
                   min_layer_nm: float = DEFAULT_MIN_LAYER_NM, max_total_nm=None, seed: int = 0,
                   tries: int = 2000, starts: int = 8, step_nm: float = 5.0, reference_nm=None,
                   illuminant="D65", extrapolate: bool = False, progress=None) -> DesignResult:
    """Find layer thicknesses (and, with ``materials``, layers) that meet the goals.

    Parameters
    ----------
    goals : sequence of Goal or str
        Goals in the grammar of :mod:`filmoptic.design.goals`.
    stack : str or filmoptic.stack.Stack, optional
        A stack whose ``?`` and ``LOW..HIGH`` thicknesses are to be found (fixed layers stay).
    materials : sequence of str or Material, optional
        Materials new layers may be made of: with ``on``, the design starts from nothing; with
        ``stack``, needles of these materials may be added to it.
    on : str or filmoptic.stack.Stack, optional
        What a design from nothing is coated onto: a substrate (``"glass 2mm"``), optionally
        with fixed layers (``"Cr 5nm / glass 2mm"``).
    ambient : str
        Incident medium (for notation given as text).
    max_layers : int, optional
        Most layers of the design (default 10; at least the stack's own count).
    min_layer_nm : float
        Free layers thinner than this are removed (neighbours of one material merged).
    max_total_nm : float, optional
        Bound on the total thickness of the coherent coating layers.
    seed : int
        Seed of the random global search.
    tries, starts : int
        Random designs tried, and how many of the best distinct ones are refined.
    step_nm : float
        Sampling step of band goals.
    reference_nm : float, optional
        Wavelength of the quarter-wave counts (default: the middle of the goals' wavelengths).
    illuminant : str
        Illuminant of luminous and colour goals written as text without ``under``.
    extrapolate : bool
        Let tables hold their end values beyond their range.
    progress : callable, optional
        ``progress(done, total)`` as the work advances.

    Returns
    -------
    DesignResult

    Raises
    ------
    FilmopticError
        Bad goals, stacks, materials or options (one line).

    Examples
    --------
    >>> r = design_coating(["R 550nm <= 0%"], "n=1.38 ? / n=1.52", ambient="n=1", tries=50, starts=2)
    >>> round(r.layers[0].thickness_nm, 2), round(r.layers[0].quarter_waves, 4)
    (99.64, 1.0)
    """
    from filmoptic.stack import parse_stack

    goals = _as_goals(goals, illuminant)
    step = _check_step(goals, step_nm)
    materials = _parse_materials(materials)
    if stack is None and on is None:
        raise FilmopticError("give a stack with free thicknesses ('?' or LOW..HIGH), or materials and "
                             "a substrate to design from nothing (--materials TiO2,SiO2 --on 'glass 2mm')")
    if stack is not None and on is not None:
        raise FilmopticError("give either a stack to design or a substrate (--on) to design from nothing, not both")
    if stack is None and not materials:
        raise FilmopticError("a design from nothing needs the materials it may use (e.g. --materials TiO2,SiO2)")
    min_layer = float(min_layer_nm)
    if not (math.isfinite(min_layer) and 0 <= min_layer <= 1000):
        raise FilmopticError(f"the minimum layer thickness must be 0–1000 nm, got {min_layer_nm!r}")
    max_total = math.inf if max_total_nm is None else float(max_total_nm)
    if not max_total > 0:
        raise FilmopticError(f"the largest total thickness must be positive, got {max_total_nm!r}")
    if not 0 <= int(tries) <= MAX_TRIES:
        raise FilmopticError(f"tries must be 0–{MAX_TRIES}, got {tries}")
    if not 1 <= int(starts) <= 100:
        raise FilmopticError(f"starts must be 1–100, got {starts}")

    if stack is not None:
        parsed = parse_stack(stack, ambient=ambient) if isinstance(stack, str) else stack
        layout = layout_from_stack(parsed)
        if not layout.columns() and not materials:
            raise FilmopticError(
                "nothing to design: mark the thicknesses to find with '?' or LOW..HIGH, add "
                "--materials to grow the stack, or check it as it is (--check-only)"
            )
    else:
        parsed = parse_stack(on, ambient=ambient) if isinstance(on, str) else on
        if parsed.parameters:
            raise FilmopticError("the substrate stack (--on) cannot have unknowns; its layers stay as written")
        layout = layout_from_stack(parsed)
    limit = 10 if max_layers is None else int(max_layers)
    if not 1 <= limit <= MAX_DESIGN_LAYERS:
        raise FilmopticError(f"the layer limit must be 1–{MAX_DESIGN_LAYERS}, got {max_layers}")
    if stack is not None:
        limit = max(limit, _layer_count(layout)) if max_layers is None else limit
        if _layer_count(layout) > limit:
            raise FilmopticError(f"the stack already has {_layer_count(layout)} layers, more than the limit {limit}")
    elif _layer_count(layout) >= limit:
        raise FilmopticError(
            f"the substrate stack already has {_layer_count(layout)} layers; raise the layer limit above it"
        )
    if math.isfinite(max_total) and layout.fixed_nm() + float(layout.counts() @ layout.lower()) > max_total:
        raise FilmopticError(
            f"the fixed layers and the smallest free thicknesses already exceed the largest total "
            f"thickness ({max_total:g} nm)"
        )
    reference = default_reference_nm(goals) if reference_nm is None else float(reference_nm)
    if not (math.isfinite(reference) and reference > 0):
        raise FilmopticError(f"the reference wavelength must be a positive number of nm, got {reference_nm!r}")
    wavelength_max = max(g.band_nm[1] if g.kind == "spectral" else 780.0 for g in goals)

    weight_sum = sum(g.weight for g in goals)
    run = _Run(goals, step, bool(extrapolate), min_layer, max_total, limit, _Best(weight_sum),
               _Progress(progress), reference)
    # Bad goals for this stack (light through an opaque substrate, wavelengths outside a table)
    # are reported now, before any work.
    run.merit_of(layout)
    rng = np.random.default_rng(int(seed))
    notes = []
    interrupted = False
    try:
        if stack is not None:
            layouts = [layout]
        else:
            layouts = _starting_layouts(layout, materials, min(limit - _layer_count(layout), START_LAYERS))
        starts_found = _search_and_refine(run, layouts, wavelength_max, int(tries), int(starts), rng,
                                          include_start=(stack is not None))
        notes.append(
            f"global search: {int(tries)} random designs over {len(layouts)} starting "
            f"structure{'s' if len(layouts) > 1 else ''}; the best {int(starts)} distinct of each refined"
        )
        # The thin-layer rule may reorder the best starts, so the best few are settled.
        settled = []
        for number, (merit, lay) in enumerate(starts_found[:GROW_FROM]):
            span = (450 + 50 * number / GROW_FROM, 450 + 50 * (number + 1) / GROW_FROM)
            lay, merit = run.settle(lay, span)
            settled.append((merit, _layer_count(lay), lay))
        settled.sort(key=lambda c: (c[0], c[1]))
        merit, _, final = settled[0]
        run.progress.to(500)
        if materials:
            # 3. Needle growth from each settled start; the minimum layer thickness is applied to
            # the last few designs of each growth, and the best design of all is kept.
            finished = list(settled)
            thin_best = math.inf
            inserted_total = 0
            for number, (m0, _, lay) in enumerate(settled):
                span = (500 + 450 * number / len(settled), 500 + 450 * (number + 1) / len(settled))
                grown = _grow(run, lay.expanded(), m0, materials, span)
                inserted_total += len(grown)
                for merit_grown, lay_grown in grown[-FINISH_CANDIDATES:]:
                    thin_best = min(thin_best, merit_grown)
                    lay_done, merit_done = run.settle(lay_grown, (run.progress.done, span[1]))
                    finished.append((merit_done, _layer_count(lay_done), lay_done))
            # Any design met on the way that already kept the minimum thickness competes too.
            if run.best.settled is not None:
                finished.append((run.best.settled_merit, _layer_count(run.best.settled), run.best.settled))
            merit, _, final = min(finished, key=lambda c: (c[0], c[1]))
            if inserted_total:
                notes.append(f"growth: {inserted_total} layer insertion{'s' if inserted_total > 1 else ''} kept "
                             "(needle method, and quarter waves on the faces where no needle helped)")
            if thin_best < 0.9 * merit and min_layer > GROWTH_THIN_NM:
                notes.append(f"with layers thinner than {min_layer:g} nm allowed, a merit of {thin_best:.3g} "
                             f"was reached (see --min-layer)")
    except KeyboardInterrupt:
        interrupted = True
        run.progress.callback = None     # the bar that was interrupted is not drawn again
        final = run.best.settled if run.best.settled is not None else run.best.layout
        if final is None:
            raise
        notes.append("interrupted: this is the best design found before the interruption")
        thin = [e for e in final.entries if e.free and e.removable and e.thickness_nm < min_layer]
        if thin:
            notes.append(f"{len(thin)} layer(s) thinner than the minimum of {min_layer:g} nm remain")
    if getattr(final.ambient, "notation", "air") != "air":
        notes.append(f"the light comes from {final.ambient.notation}: give --ambient {final.ambient.notation} "
                     "to other commands")
    run.progress.to(_Progress.TOTAL)
    designed = tuple(e.free for e in final.entries)
    return _report(final.text(), goals, ambient=final.ambient, step_nm=step, reference_nm=reference,
                   extrapolate=extrapolate, seed=int(seed), interrupted=interrupted,
                   evaluated=run.evaluated, notes=notes, designed=designed)


def _search_and_refine(run: _Run, layouts, wavelength_max, tries, starts, rng, include_start):
    """Random search in every starting structure, then the best distinct starts of each refined
    together; returns ``[(merit, layout), …]`` best first."""
    candidates = []
    weight_sum = sum(g.weight for g in run.goals)
    tries_each = tries // len(layouts)
    for number, lay in enumerate(layouts):
        if not lay.columns():
            candidates.append((run.merit_of(lay), lay))
            continue
        lo, top = search_box(lay, wavelength_max, run.extrapolate)
        evaluator = run.evaluator(lay)

        def watch(done, total, X, merit, lay=lay, number=number):
            run.best.offer(lay, X, (merit ** 2) * weight_sum)
            run.progress.to(300 * (number + done / total) / len(layouts))

        # A stack's own values (the middle of each range) join the draws when none are asked for.
        include = [lay.values()] if include_start and tries_each == 0 else []
        found = random_search(evaluator, lo, top, tries=tries_each if include else max(tries_each, 1),
                              keep=starts, rng=rng, counts=lay.counts(), budget=run.budget(lay),
                              upper=lay.upper(), include=include, watch=watch)
        run.evaluated += evaluator.designs_evaluated
        span = (300 + 150 * number / len(layouts), 300 + 150 * (number + 1) / len(layouts))
        refined, merits = run.refine(lay, found.x, span)
        candidates.extend(zip(merits[:GROW_FROM], refined[:GROW_FROM]))
    candidates.sort(key=lambda c: (c[0], _layer_count(c[1])))
    return candidates


def _grow(run: _Run, current, merit, materials, span):
    """Needle insertions while they lower the merit and the layer limit allows.

    Layers that shrink below :data:`GROWTH_THIN_NM` are removed as the design grows (a needle
    may need a few rounds to grow past the minimum thickness); the minimum layer thickness is
    applied afterwards. Returns ``[(merit, layout), …]`` after each accepted insertion.
    """
    grown = []
    room = max(run.max_layers - _layer_count(current), 1)
    weight_sum = sum(g.weight for g in run.goals)
    thin = min(GROWTH_THIN_NM, run.min_layer_nm)

    def counter(n):
        run.evaluated += n

    while merit > MERIT_REACHED and _layer_count(current) < run.max_layers:
        F0 = (merit ** 2) * weight_sum
        candidates = needle_scan(current, run.goals, materials, step_nm=run.step_nm,
                                 extrapolate=run.extrapolate, base_sum_of_squares=F0, counter=counter)
        accepted = False
        tried = []
        for c in candidates:
            if c.derivative >= -NEEDLE_GAIN * F0 or len(tried) >= NEEDLE_ATTEMPTS:
                break
            if any(t.index == c.index and t.material is c.material
                   and abs(t.position_nm - c.position_nm) < NEEDLE_SEPARATION_NM for t in tried):
                continue
            splits = (c.index < len(current.entries)
                      and EDGE_NM < c.position_nm < current.entries[c.index].thickness_nm - EDGE_NM)
            if _layer_count(current) + (2 if splits else 1) > run.max_layers:
                continue
            tried.append(c)
            # (remove(()) merges neighbours of one material, should the needle meet one.)
            trial = current.insert(c.index, c.position_nm, c.material, NEEDLE_START_NM,
                                   default_high_nm(c.material), edge_nm=EDGE_NM).remove(())
            stop = span[0] + (span[1] - span[0]) * min(len(grown) + 1, room) / room
            trial, trial_merit = run.settle(trial, (run.progress.done, stop), thin_nm=thin)
            if trial_merit < merit * (1 - 1e-3) and _layer_count(trial) <= run.max_layers:
                current, merit = trial, trial_merit
                grown.append((merit, current))
                accepted = True
                break
        if not accepted and _layer_count(current) < run.max_layers:
            accepted, current, merit = _add_outer_layer(run, current, merit, materials, span, thin)
            if accepted:
                grown.append((merit, current))
        if not accepted:
            break
    return grown


def _add_outer_layer(run: _Run, current, merit, materials, span, thin):
    """When no needle helps (the design is optimal for its thickness, as a quarter-wave mirror
    is), try a quarter-wave layer at the reference wavelength on the outer face and next to the
    substrate, of each material that differs from its neighbour; keep the best if it helps."""
    best = None
    for index in (0, len(current.entries)):
        neighbour = current.entries[min(index, len(current.entries) - 1)] if current.entries else None
        for material in materials:
            if neighbour is not None and same_material(neighbour.material, material):
                continue
            n = float(np.real(np.asarray(material.nk(np.array([run.reference_nm]), extrapolate=run.extrapolate))).ravel()[0])
            quarter = run.reference_nm / (4.0 * max(n, 1.0))
            trial = current.insert(index, 0.0, material, quarter, max(default_high_nm(material), 2 * quarter),
                                   edge_nm=EDGE_NM)
            trial, trial_merit = run.settle(trial, (run.progress.done, span[1]), thin_nm=thin)
            if trial_merit < merit * (1 - 1e-3) and _layer_count(trial) <= run.max_layers and \
                    (best is None or trial_merit < best[0]):
                best = (trial_merit, trial)
    if best is None:
        return False, current, merit
    return True, best[1], best[0]

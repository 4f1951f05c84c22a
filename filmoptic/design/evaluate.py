"""Scoring many designs at once: goals × thickness sets through the vectorised engine.

An :class:`Evaluator` binds a set of goals to a template stack. Goals that look at the same
light (same side, polarisation and angles) share one engine call over the union of their
wavelengths, so a batch of B designs costs one :func:`filmoptic.engine.compute` per such group
(in chunks that bound memory), whatever the number of goals. A group of only luminous and colour
goals never holds spectra: the engine reduces each of its chunks to the luminous values and XYZ
the goals look at (:func:`filmoptic.engine.compute_weighted`), which keeps a Monte Carlo run of
many thousand designs in a few megabytes.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from filmoptic.errors import FilmopticError

from .goals import achieved, goal_weights, lab_from_sums, lab_of, samples_from_sums, samples_of, shortfall

__all__ = ["Scores", "Evaluator", "POINTS_PER_CHUNK"]

#: Spectral points (designs × angles × wavelengths) per engine call; bounds the memory of the
#: R, T, A arrays held at once (the engine chunks its own work further).
POINTS_PER_CHUNK = 1_000_000


@dataclass(frozen=True)
class Scores:
    """How a batch of designs does against the goals.

    Attributes
    ----------
    residuals : numpy.ndarray
        ``(B, M)``: the weighted, scaled shortfalls whose sum of squares is minimised.
    achieved : numpy.ndarray
        ``(B, G)``: each goal's achieved value (fraction, or ΔE00 for colours).
    met : numpy.ndarray
        ``(B, G)`` booleans.
    merit : numpy.ndarray
        ``(B,)``: the weighted RMS shortfall (percentage points, ΔE00 for colours).
    """

    residuals: np.ndarray
    achieved: np.ndarray
    met: np.ndarray
    merit: np.ndarray


class Evaluator:
    """Scores thickness sets of a template stack against goals.

    Parameters
    ----------
    template : filmoptic.stack.Stack
        A stack whose K free thicknesses are supplied per design.
    goals : sequence of Goal
    step_nm : float
        Sampling step of band goals.
    extrapolate : bool
        Passed to the engine.

    Examples
    --------
    Bare glass and a quarter-wave MgF2-like layer on it, in one batch:

    >>> from filmoptic.design.goals import parse_goals
    >>> from filmoptic.stack import parse_stack
    >>> ev = Evaluator(parse_stack("n=1.38 ? / n=1.52", ambient="n=1"), parse_goals(["R 550nm <= 2%"]))
    >>> s = ev.scores([[0.0], [99.6377]])
    >>> s.achieved.round(5).tolist(), s.met.tolist()
    ([[0.04258], [0.0126]], [[False], [True]])
    """

    def __init__(self, template, goals, *, step_nm: float = 5.0, extrapolate: bool = False):
        self.template = template
        self.goals = tuple(goals)
        self.step_nm = float(step_nm)
        self.extrapolate = bool(extrapolate)
        self.designs_evaluated = 0
        self.K = len(template.thickness_parameters)
        groups = {}
        self._plan = []
        for goal in self.goals:
            key = (goal.side, goal.polarization, tuple(goal.angles_deg().tolist()))
            groups.setdefault(key, []).append(goal.wavelengths_nm(self.step_nm))
        self._groups = {}
        for key, grids in groups.items():
            self._groups[key] = np.unique(np.concatenate(grids))
        for goal in self.goals:
            key = (goal.side, goal.polarization, tuple(goal.angles_deg().tolist()))
            wl = self._groups[key]
            own = goal.wavelengths_nm(self.step_nm)
            self._plan.append((key, np.searchsorted(wl, own), own))
        self._weights = np.array([g.weight for g in self.goals])
        # Groups of only luminous and colour goals are reduced inside the engine: per goal, the
        # columns of the group's weight matrix that hold its luminous value or XYZ.
        self._reduced = {}
        self._columns = [None] * len(self.goals)
        for key, wl in self._groups.items():
            members = [i for i, (k, _, _) in enumerate(self._plan) if k == key]
            if any(self.goals[i].kind == "spectral" for i in members):
                continue
            blocks, start = [], 0
            for i in members:
                w = goal_weights(self.goals[i], wl)
                blocks.append(w)
                self._columns[i] = slice(start, start + w.shape[1])
                start += w.shape[1]
            channels = tuple(sorted({self.goals[i].quantity for i in members}))
            self._reduced[key] = (np.concatenate(blocks, axis=1), channels)
        points = max(len(k[2]) * (self._reduced[k][0].shape[1] if k in self._reduced else wl.size)
                     for k, wl in self._groups.items())
        self.chunk = int(max(16, min(8192, POINTS_PER_CHUNK // max(points, 1))))
        self._check_light_paths()

    @classmethod
    def for_layout(cls, layout, goals, **kwargs) -> "Evaluator":
        return cls(layout.template(), goals, **kwargs)

    def _check_light_paths(self) -> None:
        """Goals on light through the substrate need a substrate that lets it through."""
        for goal, (key, _, own) in zip(self.goals, self._plan):
            if goal.needs_light_through and not self.template.substrate_passes_light(own, extrapolate=self.extrapolate):
                raise FilmopticError(
                    f"goal {goal.text!r}: looks at light through the substrate "
                    f"{self.template.substrate.text!r}, an absorbing half-space (what enters it is "
                    "absorbed); give it a thickness in mm, or drop the goal"
                )

    # ------------------------------------------------------------------------------------------
    def spectra(self, X) -> dict:
        """R, T, A of every design for every group: ``{key: (R, T, A)}``, each ``(B, nA, W)``."""
        return self._spectra_of(self._rows(X), list(self._groups))

    def _spectra_of(self, X, keys) -> dict:
        from filmoptic.engine import compute

        out = {}
        for key in keys:
            wl = self._groups[key]
            side, pol, angles = key
            s = compute(self.template, wl, angle_deg=np.array(angles), polarization=pol,
                        reverse=(side == "reverse"), thickness_nm=X, extrapolate=self.extrapolate)
            out[key] = (s.R, s.T, s.A)
        return out

    def _light(self, X) -> dict:
        """Per group: ``("spectra", (R, T, A))`` of shape ``(B, nA, W)``, or for a reduced group
        ``("sums", {channel: (B, nA, M)})``."""
        from filmoptic.engine import compute_weighted

        out = {}
        full_keys = [key for key in self._groups if key not in self._reduced]
        if full_keys:
            spectra = self._spectra_of(X, full_keys)
            out.update({key: ("spectra", value) for key, value in spectra.items()})
        for key, (weights, channels) in self._reduced.items():
            side, pol, angles = key
            sums = compute_weighted(self.template, self._groups[key], weights, angle_deg=np.array(angles),
                                    polarization=pol, reverse=(side == "reverse"), thickness_nm=X,
                                    extrapolate=self.extrapolate, channels=channels)
            out[key] = ("sums", {c: getattr(sums, c) for c in channels})
        return out

    def scores(self, X) -> Scores:
        """Scores of a batch ``X`` of shape ``(B, K)`` (computed in chunks)."""
        X = self._rows(X)
        parts = [self._scores(X[i:i + self.chunk]) for i in range(0, max(X.shape[0], 1), self.chunk)]
        if len(parts) == 1:
            return parts[0]
        return Scores(*(np.concatenate([getattr(p, f) for p in parts]) for f in
                        ("residuals", "achieved", "met", "merit")))

    def residuals(self, X) -> np.ndarray:
        return self.scores(X).residuals

    def merit(self, X) -> np.ndarray:
        return self.scores(X).merit

    def goal_samples(self, X) -> list:
        """Per goal, its samples ``(B, n)`` (fractions, or ΔE00)."""
        X = self._rows(X)
        return self._samples(self._light(X))

    def colours(self, X) -> list:
        """Per goal, CIELAB ``(B, nA, 3)`` of its channel for colour goals, else None."""
        X = self._rows(X)
        light = self._light(X)
        out = []
        for k, (goal, (key, index, own)) in enumerate(zip(self.goals, self._plan)):
            if goal.kind != "colour":
                out.append(None)
                continue
            kind, values = light[key]
            if kind == "sums":
                out.append(lab_from_sums(goal, values[goal.quantity][..., self._columns[k]], own))
            else:
                out.append(lab_of(goal, self._channel(goal, values)[..., index], own))
        return out

    # ------------------------------------------------------------------------------------------
    def _rows(self, X) -> np.ndarray:
        X = np.asarray(X, dtype=float)
        X = X[None, :] if X.ndim == 1 else X
        if X.ndim != 2 or X.shape[1] != self.K:
            raise FilmopticError(f"expected thickness sets of {self.K} value(s), got shape {X.shape}")
        return X

    @staticmethod
    def _channel(goal, spectra):
        R, T, A = spectra
        return {"R": R, "T": T, "A": A}[goal.quantity]

    def _samples(self, light) -> list:
        out = []
        for k, (goal, (key, index, own)) in enumerate(zip(self.goals, self._plan)):
            kind, values = light[key]
            if kind == "sums":
                out.append(samples_from_sums(goal, values[goal.quantity][..., self._columns[k]], own))
            else:
                out.append(samples_of(goal, self._channel(goal, values)[..., index], own))
        return out

    def _scores(self, X) -> Scores:
        self.designs_evaluated += X.shape[0]
        samples = self._samples(self._light(X))
        residuals, values, met = [], [], []
        for goal, s in zip(self.goals, samples):
            short = shortfall(goal, s)
            residuals.append(short * (np.sqrt(goal.weight / short.shape[1]) / goal.scale))
            a = achieved(goal, s)
            values.append(a)
            met.append(goal.met_by(a))
        r = np.concatenate(residuals, axis=1)
        merit = np.sqrt(np.sum(r * r, axis=1) / self._weights.sum())
        return Scores(r, np.stack(values, axis=1), np.stack(met, axis=1), merit)

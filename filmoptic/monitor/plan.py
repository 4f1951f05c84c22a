"""Before the run: what the monitor should read on the way to the target, and when to stop.

:func:`plan_table` samples the modelled signal of a :class:`~filmoptic.monitor.session.Plan`
from the start of the run to a little past the target, adds the time at a given rate, the
turning points on the way, the stop value (the ratio, and the raw reading once the reference is
known) and how many nanometres one percentage point of signal is worth at the stop — the
thickness error a 1 % error of the reference or of the model costs there.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["PLAN_ROWS", "PlanTable", "plan_table", "parse_rate_nm_per_s"]

#: Rows of the printed plan between the start and the target.
PLAN_ROWS = 20
#: The plan runs this far past the target (fraction of the target thickness).
PLAN_BEYOND = 0.25


@dataclass(frozen=True)
class PlanTable:
    """The expected run (see :func:`plan_table`).

    Attributes
    ----------
    thickness_nm, ratio : numpy.ndarray
        The modelled signal at evenly spaced thicknesses, the target's among them.
    time_s : numpy.ndarray or None
        When each thickness is reached at ``rate_nm_per_s`` (None without a rate).
    target_nm, target_ratio : float
        Where to stop and what the monitor reads there (a ratio to the reference).
    target_label : str
    nm_per_percent : float
        Thickness one percentage point of signal is worth at the stop (inf at a turning point).
    rate_nm_per_s, time_to_target_s : float or None
    turning_nm, turning_ratio : numpy.ndarray
        Turning points up to the end of the table.
    reference_kind : str
    curve_nm, curve_ratio : numpy.ndarray
        The modelled signal finely sampled over the same thicknesses (for a plot).
    """

    thickness_nm: np.ndarray
    ratio: np.ndarray
    time_s: np.ndarray | None
    target_nm: float
    target_ratio: float
    target_label: str
    nm_per_percent: float
    rate_nm_per_s: float | None
    time_to_target_s: float | None
    turning_nm: np.ndarray
    turning_ratio: np.ndarray
    reference_kind: str
    curve_nm: np.ndarray
    curve_ratio: np.ndarray


def plan_table(plan, rate_nm_per_s: float | None = None, rows: int = PLAN_ROWS) -> PlanTable:
    """Sample the expected run of ``plan`` (a :class:`~filmoptic.monitor.session.Plan`).

    Examples
    --------
    >>> from filmoptic.monitor.session import prepare
    >>> plan = prepare("n=2 ? / n=1.5 1mm", source="laser:600", detector="flat", turning_points=1,
    ...                ambient="n=1")
    >>> table = plan_table(plan, rate_nm_per_s=0.5)
    >>> round(table.target_nm, 2), round(table.time_to_target_s, 1), table.nm_per_percent
    (75.0, 150.0, inf)
    """
    from filmoptic.errors import FilmopticError

    if rate_nm_per_s is not None and not (math.isfinite(rate_nm_per_s) and rate_nm_per_s > 0):
        raise FilmopticError(f"--rate must be a positive rate, got {rate_nm_per_s:g} nm/s")
    model, target = plan.model, plan.target
    end = min(target.thickness_nm * (1 + PLAN_BEYOND), model.range_nm[1])
    step = target.thickness_nm / rows
    # Counted relative to the step (an absolute slack of 1e-9 nm over a step of 1e-302 nm, for a
    # target of 1e-300 nm, asked for 10^293 rows).
    count = math.floor(end / step * (1 + 1e-12)) + 1
    thickness = np.unique(np.concatenate([np.arange(count) * step, [target.thickness_nm]]))
    ratio = model.ratio_at(thickness)
    turning = model.turning_nm <= end
    time_s = None if rate_nm_per_s is None else thickness / rate_nm_per_s
    return PlanTable(
        thickness_nm=thickness, ratio=np.asarray(ratio, dtype=float), time_s=time_s,
        target_nm=target.thickness_nm, target_ratio=target.ratio, target_label=target.label,
        nm_per_percent=plan.nm_per_percent(), rate_nm_per_s=rate_nm_per_s,
        time_to_target_s=None if rate_nm_per_s is None else target.thickness_nm / rate_nm_per_s,
        turning_nm=model.turning_nm[turning], turning_ratio=model.turning_ratio[turning],
        reference_kind=model.reference_kind,
        curve_nm=model.thickness_nm[model.thickness_nm <= end],
        curve_ratio=model.ratio[model.thickness_nm <= end],
    )


def parse_rate_nm_per_s(text) -> float:
    """A deposition rate: ``0.075nm/s``, ``4.5nm/min``, ``0.3nm/h`` or a bare number in nm/s.

    Examples
    --------
    >>> parse_rate_nm_per_s("4.5nm/min")
    0.075
    >>> parse_rate_nm_per_s("0.2")
    0.2
    """
    import re

    from filmoptic.errors import FilmopticError
    from filmoptic.units import parse_number

    s = str(text).strip().lower().replace(" ", "")
    m = re.fullmatch(r"(.*?)(?:nm/(s|sec|min|h|hr))?", s)
    per = {None: 1.0, "s": 1.0, "sec": 1.0, "min": 60.0, "h": 3600.0, "hr": 3600.0}[m.group(2)]
    value = parse_number(m.group(1), "--rate") / per
    if not value > 0:
        raise FilmopticError(f"--rate must be positive, got {text!r} (e.g. 0.075nm/s or 4.5nm/min)")
    return value

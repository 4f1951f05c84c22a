"""The picture of a solve: the modelled value against the free thickness, with the target or
reading, its uncertainty band and the thickness interval of every solution."""

from __future__ import annotations

import numpy as np

from filmoptic.plots import new_figure

__all__ = ["plot_solve", "PLOT_POINTS"]

#: Thicknesses at which the curve is drawn (one vectorised engine call).
PLOT_POINTS = 801


def plot_solve(result, *, angle_deg: float = 0.0, extrapolate: bool = False, ambient="air", title: str | None = None):
    """One panel per condition of a :class:`~filmoptic.inverse.solve.SolveResult`.

    A scalar condition (a target or a reading) is drawn in percent against the thickness, with a
    line at its value and a band of ± its uncertainty; a colour condition as ΔE00 from the target,
    with a line at the tolerance. Every solution's interval is shaded and its thickness marked.

    Parameters
    ----------
    result : filmoptic.inverse.solve.SolveResult
        A solve that met its conditions.
    angle_deg, extrapolate, ambient
        As given to the solve (the curve is the same forward model).
    title : str, optional
        Above the first panel (default: the stack).

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> from filmoptic.inverse.solve import Target, solve_thickness
    >>> result = solve_thickness("n=2 ? / n=1.5", [Target("R", 0.2, wavelength_nm=550.0)],
    ...                          range_nm=(0, 200), ambient="n=1")
    >>> fig = plot_solve(result, ambient="n=1")
    >>> len(fig.axes), fig.axes[0].get_xlabel()
    (1, 'n=2 thickness (nm)')
    """
    from filmoptic.colorimetry import delta_e00
    from filmoptic.inverse.solve import evaluate_condition

    conditions = result.conditions
    lo, hi = result.range_nm
    grid = np.linspace(lo, hi, PLOT_POINTS)
    fig, axes = new_figure(len(conditions), 1, figsize=(7.0, 3.4 * len(conditions) + 0.6), squeeze=False,
                           sharex=True)
    for index, (ax, condition) in enumerate(zip(axes[:, 0], conditions)):
        values = evaluate_condition(result.stack, condition, grid, angle_deg=angle_deg, extrapolate=extrapolate,
                                    ambient=ambient)
        if condition.kind == "colour":
            curve = np.asarray(delta_e00(values, np.asarray(condition.lab)), dtype=float)
            ax.plot(grid, curve, color="k", lw=1.4, label="ΔE00 from the target")
            if condition.uncertainty:
                ax.axhline(condition.uncertainty, color="tab:orange", lw=1.2, label="tolerance")
            ax.set_ylabel("ΔE00")
            ax.set_ylim(bottom=0)
        else:
            ax.plot(grid, 100 * values, color="k", lw=1.4, label="modelled")
            ax.axhline(100 * condition.value, color="tab:orange", lw=1.2, label="target" if
                       type(condition).__name__ == "Target" else "reading")
            if condition.uncertainty:
                ax.axhspan(100 * (condition.value - condition.uncertainty), 100 * (condition.value + condition.uncertainty),
                           color="tab:orange", alpha=0.25, label="± uncertainty")
            is_reading = type(condition).__name__ == "Reading"
            ax.set_ylabel("reading, sample ÷ reference (%)" if is_reading else f"{condition.label()} (%)")
        for number, solution in enumerate(result.solutions, 1):
            if solution.high_nm > solution.low_nm:
                ax.axvspan(solution.low_nm, solution.high_nm, color="tab:blue", alpha=0.25,
                           label="thickness interval" if number == 1 else None)
            ax.axvline(solution.thickness_nm, color="tab:blue", lw=1.0, ls="--",
                       label="solution" if number == 1 else None)
        ax.set_xlim(lo, hi)
        ax.grid(True, alpha=0.3)
        ax.legend(loc="best", fontsize=8)
        ax.set_title(condition.label() if index or title is None and len(conditions) > 1 else
                     (title or result.stack), fontsize=10)
    material = result.layer.rsplit(" ", 1)[0] if " " in result.layer.strip() else result.layer
    axes[-1, 0].set_xlabel(f"{material} thickness (nm)")
    fig.tight_layout()
    return fig

"""Figure of a design: its spectra against the goals, and its layer profile."""

from __future__ import annotations

import numpy as np

from filmoptic.errors import FilmopticError
from filmoptic.plots import new_figure

__all__ = ["plot_design"]

_MARKERS = {"<=": "v", ">=": "^", "=": "D"}
_COLOURS = {"R": "tab:red", "T": "tab:blue", "A": "tab:green"}
_POINTS = 600


def _plot_range(goals):
    from filmoptic.design.goals import goals_span_nm

    lo, hi = goals_span_nm(goals)
    pad = max(0.1 * (hi - lo), 20.0)
    return lo - pad, hi + pad, lo, hi


def _grid(stack, goals, extrapolate):
    """The plot's wavelengths: the goals' span with a margin, trimmed to what the tables cover."""
    from filmoptic.inverse.readings import covered_range_nm

    lo, hi, goal_lo, goal_hi = _plot_range(goals)
    covered = covered_range_nm(stack, extrapolate)
    lo, hi = max(lo, covered[0], 1.0), min(hi, covered[1])
    if hi <= lo:
        lo, hi = goal_lo, max(goal_hi, goal_lo + 1.0)
    return np.linspace(lo, hi, _POINTS)


def _label(side, pol, angle):
    parts = []
    if side == "reverse":
        parts.append("reverse")
    if angle:
        parts.append(f"@{angle:g}°")
    if pol != "unpolarized":
        parts.append(pol)
    return " ".join(parts)


def plot_design(result, goals, tolerance=None, *, ambient="air", step_nm: float = 5.0,
                extrapolate: bool = False, band_samples: int = 300):
    """Spectra of a design against its goals (top) and its refractive-index profile (bottom).

    Parameters
    ----------
    result : filmoptic.design.DesignResult
    goals : sequence of filmoptic.design.Goal
    tolerance : filmoptic.design.tolerance.ToleranceResult, optional
        Adds the 5–95 % band of R and T over simulated runs with the same errors and seed.
    ambient : str
        The incident medium the design was made for.
    step_nm, extrapolate
        As for the design.
    band_samples : int
        Simulated runs behind the band.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> from filmoptic.design import check_design, parse_goals
    >>> goals = parse_goals(["R 500..600nm <= 1.5%"])
    >>> fig = plot_design(check_design("n=1.38 99.64nm / n=1.52", goals, ambient="n=1"), goals, ambient="n=1")
    >>> [line.get_label() for line in fig.axes[0].lines][:1], len(fig.axes)
    (['R'], 3)
    """
    from filmoptic.engine import compute
    from filmoptic.stack import parse_stack

    stack = parse_stack(result.stack, ambient=ambient)
    wl = _grid(stack, goals, extrapolate)
    listing = 0.22 * (len(goals) + 1)          # inches for the numbered list of goals
    fig, (top, bottom, notes) = new_figure(
        3, 1, figsize=(8.0, 6.8 + listing), gridspec_kw={"height_ratios": [3, 1.2, listing / 1.2]})
    front = compute(stack, wl, extrapolate=extrapolate)
    exits = stack.substrate_passes_light(wl, extrapolate=extrapolate)
    shown = {"R": front.R, "T": front.T} if exits else {"R": front.R, "A": front.A}
    if any(g.kind == "spectral" and g.quantity == "A" for g in goals):
        shown["A"] = front.A
    y_range = _y_range(goals, wl, {"R": front.R, "T": front.T, "A": front.A})
    if y_range != (-2, 102):
        # Zoomed in on what the goals bound: the other curves would run off the axes.
        wanted = {g.quantity for g in goals if g.kind == "spectral"}
        shown = {name: values for name, values in shown.items() if name in wanted} or shown
    for name, values in shown.items():
        top.plot(wl, 100 * values, "-", color=_COLOURS[name], lw=1.8, label=name)
    if tolerance is not None and tolerance.samples:
        band = _band(result, tolerance, wl, ambient, extrapolate, band_samples)
        for name in ("R", "T"):
            if name in shown:
                _, p5, p95 = band[name]
                top.fill_between(wl, 100 * p5, 100 * p95, color=_COLOURS[name], alpha=0.18, lw=0,
                                 label=f"{name}: 5–95 % of simulated runs ({tolerance.random})")
    # Other light the spectral goals look at: another side, angle or polarisation.
    drawn = set()
    for g in goals:
        if g.kind != "spectral":
            continue
        for angle in sorted({g.angle_range_deg[0], g.angle_range_deg[1]}):
            key = (g.quantity, g.side, g.polarization, angle)
            if (g.side, g.polarization, angle) == ("front", "unpolarized", 0.0) or key in drawn:
                continue
            drawn.add(key)
            s = compute(stack, wl, angle_deg=angle, polarization=g.polarization, reverse=(g.side == "reverse"),
                        extrapolate=extrapolate)
            values = {"R": s.R, "T": s.T, "A": s.A}[g.quantity]
            top.plot(wl, 100 * values, "--", color=_COLOURS[g.quantity], lw=1.1, alpha=0.8,
                     label=f"{g.quantity} {_label(g.side, g.polarization, angle)}")
    _draw_goals(top, notes, goals, result)
    top.set_xlim(wl[0], wl[-1])
    top.set_ylim(*y_range)
    top.set_ylabel("share of the incident light (%)")
    top.grid(alpha=0.3)
    top.legend(fontsize="x-small", loc="best")
    verdict = "every goal met" if result.all_met else f"{sum(not g.met for g in result.goals)} goal(s) not met"
    top.set_title(f"{result.stack}\n{verdict}; merit {result.merit:.3g}", fontsize="small")
    top.set_xlabel("wavelength (nm)")
    _draw_profile(bottom, stack, result.reference_nm, extrapolate)
    fig.tight_layout()
    return fig


def _y_range(goals, wl, shown):
    """Percent axis limits: zoomed in when every spectral goal asks for little light (an
    antireflection coating) or nearly all of it (a mirror), else 0–100."""
    spectral = [g for g in goals if g.kind == "spectral"]
    if not spectral or any(g.kind != "spectral" for g in goals):
        return -2, 102
    values = [100 * g.value for g in spectral]
    if max(values) <= 10:
        inside = np.zeros(wl.shape, bool)
        for g in spectral:
            inside |= (wl >= g.band_nm[0] - 1e-9) & (wl <= g.band_nm[1] + 1e-9)
        curves = [100 * np.asarray(shown[g.quantity])[inside] for g in spectral if g.quantity in shown]
        top = max([3 * max(values), *(float(c.max()) * 1.2 for c in curves if c.size)])
        return -0.05 * top, min(top, 102)
    if min(values) >= 90:
        bottom = min(values) - 2 * (100 - min(values)) - 1
        return max(bottom, -2), 100.5
    return -2, 102


def _band(result, tolerance, wl, ambient, extrapolate, samples):
    from filmoptic.design.tolerance import spectral_band

    return spectral_band(result.stack, wl, random=tolerance.random, systematic=tolerance.systematic,
                         uniform=tolerance.distribution == "uniform", seed=tolerance.seed,
                         samples=min(samples, tolerance.samples), ambient=ambient, extrapolate=extrapolate)


def _draw_goals(ax, notes, goals, result):
    """Spectral goals as bars (bands) or markers (one wavelength) numbered on the spectra; every
    goal with its achieved value in the numbered list below the figure."""
    lines = []
    placed = {}          # label positions already used: later labels there stack upwards
    for number, (g, r) in enumerate(zip(goals, result.goals), start=1):
        tick = "met" if r.met else "NOT met"
        value = f"ΔE00 {r.achieved:.2f}" if g.kind == "colour" else f"{100 * r.achieved:.3f} %"
        lines.append(f"{number}. {g.text}  →  {value}  ({tick})")
        if g.kind != "spectral":
            continue
        colour = _COLOURS[g.quantity]
        y = 100 * g.value
        lo, hi = g.band_nm
        if hi > lo:
            ax.hlines(y, lo, hi, colors=colour, linestyles=":" if g.mean else "-", lw=3.0, alpha=0.5)
            ax.plot([lo, hi], [y, y], _MARKERS[g.operator], color=colour, ms=6, alpha=0.8)
        else:
            ax.plot([lo], [y], _MARKERS[g.operator], color=colour, ms=8, alpha=0.9)
        spot = (round(0.5 * (lo + hi)), round(y))
        placed[spot] = placed.get(spot, -1) + 1
        ax.annotate(str(number), (0.5 * (lo + hi), y), textcoords="offset points", xytext=(0, 7 + 10 * placed[spot]),
                    ha="center", fontsize="small", color=colour, fontweight="bold")
    notes.axis("off")
    notes.text(0.0, 1.0, "Goals (▼ at most, ▲ at least, ◆ equal; dotted: band mean)\n" + "\n".join(lines),
               transform=notes.transAxes, va="top", ha="left", fontsize="small")


def _draw_profile(ax, stack, reference_nm, extrapolate):
    """Real index at the reference wavelength against depth from the ambient side."""
    depth = 0.0
    xs, ns, labels = [], [], []
    for layer in stack.layers:
        if layer.thick:
            continue
        try:
            n = float(np.real(np.asarray(layer.material.nk(np.array([reference_nm]), extrapolate=extrapolate))).ravel()[0])
        except FilmopticError:   # a table that does not reach the reference: leave a gap
            n = float("nan")
        xs.append((depth, depth + layer.thickness_nm))
        ns.append(n)
        labels.append(layer.material.notation)
        depth += layer.thickness_nm
    for (a, b), n, name in zip(xs, ns, labels):
        ax.fill_between([a, b], 0, [n, n], step="pre", color="tab:purple", alpha=0.35, lw=0.8, edgecolor="tab:purple")
        if b - a > 0.06 * max(depth, 1.0):
            ax.text(0.5 * (a + b), n, name, ha="center", va="bottom", fontsize="x-small")
    tail = max(0.08 * depth, 20.0)
    try:
        ns_sub = float(np.real(np.asarray(stack.substrate.material.nk(np.array([reference_nm]),
                                                                      extrapolate=extrapolate))).ravel()[0])
        ax.fill_between([depth, depth + tail], 0, [ns_sub, ns_sub], color="grey", alpha=0.3, lw=0)
        ax.text(depth + tail / 2, ns_sub, stack.substrate.material.notation, ha="center", va="bottom",
                fontsize="x-small")
    except FilmopticError:
        pass
    finite = [n for n in ns if np.isfinite(n)]
    ax.set_ylim(0, max(finite + [1.0]) * 1.25)
    ax.set_xlim(0, depth + tail)
    ax.set_xlabel("depth from the light's side (nm)")
    ax.set_ylabel(f"refractive index n\nat {reference_nm:g} nm")
    ax.grid(alpha=0.3)

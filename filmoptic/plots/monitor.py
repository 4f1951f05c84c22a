"""Figures of a monitored run: the plan before it, and the signal and thickness during it."""

from __future__ import annotations

import numpy as np

from filmoptic.plots import new_figure

__all__ = ["plot_plan", "plot_run"]


def plot_plan(table, title: str | None = None):
    """The expected ratio against thickness (and time, with a rate), the stop and turning points.

    Parameters
    ----------
    table : filmoptic.monitor.plan.PlanTable

    Examples
    --------
    >>> from filmoptic.monitor.session import prepare
    >>> from filmoptic.monitor.plan import plan_table
    >>> plan = prepare("n=2 ? / n=1.5 1mm", source="laser:600", detector="flat", turning_points=1,
    ...                ambient="n=1")
    >>> fig = plot_plan(plan_table(plan, rate_nm_per_s=0.5))
    >>> [line.get_label() for line in fig.axes[0].lines][:2]
    ['expected signal', 'stop']
    """
    fig, ax = new_figure(figsize=(7.0, 4.2))
    ax.plot(table.curve_nm, 100 * np.asarray(table.curve_ratio), color="k", lw=1.6, label="expected signal")
    ax.plot([table.target_nm], [100 * table.target_ratio], "o", color="tab:red", ms=8,
            label="stop")
    ax.axvline(table.target_nm, color="tab:red", lw=0.8, ls="--")
    ax.axhline(100 * table.target_ratio, color="tab:red", lw=0.8, ls="--")
    if table.turning_nm.size:
        ax.plot(table.turning_nm, 100 * table.turning_ratio, "v", color="tab:blue", label="turning points")
    reference = "uncoated part" if table.reference_kind == "bare" else "open beam"
    ax.set_xlabel("thickness of the growing layer (nm)")
    ax.set_ylabel(f"reading (% of the {reference})")
    ax.grid(True, alpha=0.3)
    note = f"stop at {table.target_nm:.2f} nm, reading {100 * table.target_ratio:.2f} %"
    if np.isfinite(table.nm_per_percent):
        note += f"; 1 % of signal = {table.nm_per_percent:.2f} nm there"
    ax.set_title((title + "\n" if title else "") + note, fontsize=9)
    if table.rate_nm_per_s:
        rate = table.rate_nm_per_s
        top = ax.secondary_xaxis("top", functions=(lambda x: x / rate, lambda s: s * rate))
        top.set_xlabel(f"time at {rate:.3g} nm/s (s)")
    ax.legend(loc="best", fontsize=8)
    fig.tight_layout()
    return fig


def plot_run(estimates, title: str | None = None):
    """Signal and thickness against time for a run's estimates, with the target and the stop.

    Parameters
    ----------
    estimates : sequence of filmoptic.monitor.session.Estimate

    Examples
    --------
    >>> from filmoptic.monitor.session import Monitor, prepare
    >>> plan = prepare("n=2 ? / n=1.5 1mm", source="laser:600", detector="flat", target_nm=50.0,
    ...                ambient="n=1")
    >>> monitor = Monitor(plan, reference=1.0)
    >>> run = [monitor.feed(t, float(plan.model.ratio_at(t))) for t in np.arange(0.0, 60.0, 0.5)]
    >>> [ax.get_ylabel() for ax in plot_run(run).axes]
    ['reading (% of the reference)', 'thickness (nm)']
    """
    estimates = list(estimates)
    t = np.array([e.t_s for e in estimates], dtype=float)
    ratio = np.array([np.nan if e.ratio is None else e.ratio for e in estimates], dtype=float)
    thickness = np.array([e.thickness_nm for e in estimates], dtype=float)
    status = np.array([e.status for e in estimates])
    fig, (top, bottom) = new_figure(2, 1, figsize=(7.0, 6.0), sharex=True)
    good = ~np.isin(status, ("outlier", "dropout", "bad row", "baseline"))
    top.plot(t[good], 100 * ratio[good], ".", ms=2.5, color="k", label="reading")
    for name, marker, colour in (("outlier", "x", "tab:orange"), ("dropout", "v", "tab:purple")):
        hit = status == name
        if np.any(hit):
            top.plot(t[hit], 100 * np.clip(ratio[hit], -0.05, None), marker, color=colour, ms=6, label=name)
    if estimates:
        first = estimates[0]
        top.axhline(100 * first.target_ratio, color="tab:red", lw=0.9, ls="--", label="stop value")
        bottom.axhline(first.target_nm, color="tab:red", lw=0.9, ls="--", label="target")
    top.set_ylabel("reading (% of the reference)")
    top.grid(True, alpha=0.3)
    top.legend(loc="best", fontsize=8)
    bottom.plot(t, thickness, color="tab:blue", lw=1.5, label="thickness (smoothed)")
    stop = next((e for e in estimates if e.target_reached), None)
    if stop is not None:
        for ax in (top, bottom):
            ax.axvline(stop.t_s, color="tab:green", lw=1.0)
        bottom.plot([stop.t_s], [stop.thickness_nm], "o", color="tab:green", ms=7,
                    label=f"stop: {stop.thickness_nm:.2f} nm at {stop.t_s:.1f} s")
    bottom.set_xlabel("time (s)")
    bottom.set_ylabel("thickness (nm)")
    bottom.grid(True, alpha=0.3)
    bottom.legend(loc="best", fontsize=8)
    if title:
        top.set_title(title, fontsize=9)
    fig.tight_layout()
    return fig

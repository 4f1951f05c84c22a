"""Printable colour-versus-thickness chart (A4 landscape), to pin up beside the coater.

Left, on one thickness axis: a strip of true-colour patches of the reflected colour, one of the
transmitted colour, and beneath them the luminous transmittance and reflectance curves. Right: the
path of the reflected colour in the CIELAB a*b* plane, with thicknesses marked along it. Patches are
sRGB (IEC 61966-2-1); colours outside the sRGB gamut are shown with reduced chroma and hatched
beneath the strip.
"""

from __future__ import annotations

import numpy as np

from filmoptic.plots import new_figure

__all__ = ["sweep_chart", "A4_LANDSCAPE_IN", "thickness_ticks"]

#: A4 landscape, inches.
A4_LANDSCAPE_IN = (11.69, 8.27)


def thickness_ticks(start: float, stop: float, target: int = 10) -> np.ndarray:
    """Round tick positions (steps of 1, 2, 2.5 or 5 × 10^n nm), about ``target`` of them.

    Examples
    --------
    >>> thickness_ticks(0, 250).tolist()
    [0.0, 25.0, 50.0, 75.0, 100.0, 125.0, 150.0, 175.0, 200.0, 225.0, 250.0]
    """
    span = max(stop - start, 1e-9)
    raw = span / target
    magnitude = 10 ** np.floor(np.log10(raw))
    step = min((m * magnitude for m in (1, 2, 2.5, 5, 10) if m * magnitude >= raw), default=10 * magnitude)
    first = np.ceil(start / step - 1e-9) * step
    return first + step * np.arange(int(np.floor((stop - first) / step + 1e-9)) + 1)


def _rgb(colours) -> np.ndarray:
    return np.asarray(colours.rgb8, dtype=float) / 255.0


def _strip(ax, d, colours, label, ticks):
    rgb = _rgb(colours)
    half = (d[1] - d[0]) / 2 if d.size > 1 else 0.5
    # Each patch spans halfway to its neighbours; pcolormesh handles uneven spacing.
    edges = np.concatenate(([d[0] - half], (d[1:] + d[:-1]) / 2, [d[-1] + half])) if d.size > 1 else np.array([d[0] - half, d[0] + half])
    ax.pcolormesh(edges, [0, 1], np.arange(d.size)[None, :], shading="flat",
                  cmap=_listed(rgb), vmin=-0.5, vmax=d.size - 0.5, rasterized=True)
    outside = ~np.asarray(colours.in_gamut, dtype=bool)
    if np.any(outside):
        # A hatched band along the strip's lower edge marks chroma-reduced (out-of-gamut) patches.
        ax.fill_between(d, 0.0, 0.14, where=outside, step="mid", facecolor="white",
                        edgecolor="0.15", hatch="////", linewidth=0.0)
        ax.axhline(0.14, color="0.15", lw=0.4)
    ax.set_xlim(edges[0], edges[-1])
    ax.set_ylim(0, 1)
    ax.set_yticks([])
    ax.set_xticks(ticks)
    ax.tick_params(axis="x", labelsize=8, length=4)
    ax.set_ylabel(label, rotation=0, ha="right", va="center", fontsize=10, fontweight="bold")
    for spine in ax.spines.values():
        spine.set_linewidth(0.6)


def _listed(rgb):
    from matplotlib.colors import ListedColormap

    return ListedColormap(np.clip(rgb, 0, 1))


def sweep_chart(sweep, *, title: str | None = None, axis=None):
    """Draw the chart of a :class:`~filmoptic.colorimetry.ColourSweep`.

    Parameters
    ----------
    sweep : ColourSweep
    title : str, optional
        Heading; defaults to the stack.
    axis : (array_like, str), optional
        Other values to lay the chart out along instead of the thickness, one per thickness and
        increasing with it, and the axis label (e.g. anodising volts).

    Returns
    -------
    matplotlib.figure.Figure
        A4 landscape.
    """
    d = np.asarray(sweep.thickness_nm if axis is None else axis[0], dtype=float)
    x_label = "layer thickness (nm)" if axis is None else axis[1]
    ticks = thickness_ticks(float(d.min()), float(d.max()), target=12)
    minor = thickness_ticks(float(d.min()), float(d.max()), target=50)

    see_through = sweep.transmitted is not None
    fig, ax0 = new_figure(figsize=A4_LANDSCAPE_IN)
    ax0.remove()
    ratios = [1.0, 1.0, 0.12, 2.4] if see_through else [1.5, 0.25, 2.6]
    grid = fig.add_gridspec(
        len(ratios), 2, width_ratios=[1.65, 1.0], height_ratios=ratios,
        left=0.11, right=0.97, top=0.86, bottom=0.13, wspace=0.18, hspace=0.32,
    )
    ax_r = fig.add_subplot(grid[0, 0])
    strips = [ax_r]
    _strip(ax_r, d, sweep.reflected, "Reflected", ticks)
    if see_through:
        ax_t = fig.add_subplot(grid[1, 0], sharex=ax_r)
        _strip(ax_t, d, sweep.transmitted, "Transmitted", ticks)
        strips.append(ax_t)
    ax_l = fig.add_subplot(grid[-1, 0], sharex=ax_r)
    ax_ab = fig.add_subplot(grid[:, 1])
    for ax in strips:
        ax.set_xticks(minor, minor=True)
        ax.tick_params(axis="x", which="both", labelbottom=True)

    if see_through:
        ax_l.plot(d, 100 * np.asarray(sweep.luminous_T), color="#1f5fa8", lw=1.8, label="luminous T")
    ax_l.plot(d, 100 * np.asarray(sweep.luminous_R), color="#c0392b", lw=1.8, label="luminous R")
    if sweep.luminous_A_substrate is not None and np.any(sweep.luminous_A_substrate > 0):
        ax_l.plot(d, 100 * np.asarray(sweep.luminous_A_layers), color="#7d6608", lw=1.4, ls=":",
                  label="absorbed in the layers")
        ax_l.plot(d, 100 * np.asarray(sweep.luminous_A_substrate), color="0.35", lw=1.4, ls="-.",
                  label="absorbed in the substrate")
    ax_l.set_ylim(0, 100)
    ax_l.set_ylabel("luminous value (%)", fontsize=10)
    ax_l.set_xlabel(x_label, fontsize=10)
    ax_l.set_xticks(ticks)
    ax_l.set_xticks(minor, minor=True)
    ax_l.tick_params(labelsize=8)
    ax_l.grid(True, which="major", color="0.8", lw=0.6)
    ax_l.grid(True, which="minor", color="0.92", lw=0.4)
    ax_l.legend(loc="upper right", fontsize=9, framealpha=0.9)

    _ab_path(ax_ab, d, sweep.reflected, ticks, "thickness in nm" if axis is None else "volts")

    heading = title or f"Colour versus thickness: {sweep.stack_text}"
    fig.text(0.03, 0.955, heading, fontsize=15, fontweight="bold", va="center", family="monospace")
    fig.text(0.03, 0.915,
             f"illuminant {sweep.illuminant} · {sweep.observer}° observer · {sweep.angle_deg:g}° incidence · "
             f"ambient {sweep.ambient} · unpolarised · luminous values per ISO 9050 weighting",
             fontsize=9.5, va="center", color="0.25")
    if not see_through:
        fig.text(0.03, 0.068, "The substrate absorbs all light that enters it: only the reflected colour "
                 "is seen (luminous R shown, and where the light is absorbed).", fontsize=8, color="0.25",
                 va="center")
    fig.text(0.03, 0.03,
             "Hatched along a strip's lower edge: outside the sRGB gamut, shown with reduced chroma at the same lightness "
             "and hue.  Computed from published optical constants; real films differ with density, roughness "
             "and stoichiometry, and printed colours depend on the printer: check against real samples.",
             fontsize=7.5, color="0.35", va="center", wrap=True)
    return fig


def _ab_path(ax, d, colours, ticks, unit="thickness in nm"):
    lab = np.asarray(colours.Lab, dtype=float)
    a, b = lab[:, 1], lab[:, 2]
    ax.plot(a, b, color="0.55", lw=0.9, zorder=1)
    ax.scatter(a, b, c=_rgb(colours), s=14, edgecolors="none", zorder=2)
    marks = [int(np.argmin(np.abs(d - t))) for t in ticks if d.min() - 1e-9 <= t <= d.max() + 1e-9]
    marks = sorted(set(marks))
    span = max(np.ptp(a), np.ptp(b), 1.0)
    for i in marks:
        ax.scatter([a[i]], [b[i]], s=46, facecolors=_rgb(colours)[i:i + 1], edgecolors="black",
                   linewidths=0.8, zorder=3)
        ax.annotate(f"{d[i]:g}", (a[i], b[i]), xytext=(4, 4), textcoords="offset points", fontsize=8,
                    zorder=4, bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none", alpha=0.75))
    ax.axhline(0, color="0.7", lw=0.6, zorder=0)
    ax.axvline(0, color="0.7", lw=0.6, zorder=0)
    pad = 0.08 * span
    ax.set_xlim(min(a.min(), 0) - pad, max(a.max(), 0) + pad)
    ax.set_ylim(min(b.min(), 0) - pad, max(b.max(), 0) + pad)
    ax.set_aspect("equal", adjustable="box")
    ax.set_xlabel("a*  (green − / red +)", fontsize=10)
    ax.set_ylabel("b*  (blue − / yellow +)", fontsize=10)
    ax.set_title(f"Reflected colour in the CIELAB a*b* plane\n(numbers: {unit})", fontsize=10)
    ax.tick_params(labelsize=8)
    ax.grid(True, color="0.9", lw=0.5)

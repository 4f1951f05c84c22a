"""Figure of a thickness map: the photo beside the map of thicknesses.

Left, the photo (reduced for display; 16-bit and RAW photos shown sRGB-encoded) with the mapped
area, the reference and any known region outlined. Right, the thickness of every cell in nm on a
colour scale with its colour bar, contour lines labelled in nm, and the cells that could not be
solved marked with a cross (the legend names their flags). The title states the uniformity and its
definition.
"""

from __future__ import annotations

import numpy as np

from . import new_figure

__all__ = ["plot_thickness_map"]

#: Longest side of the photo as drawn, in pixels (a reduced copy is shown, not the full photo).
DISPLAY_PX = 900


def _display_image(photo):
    """A reduced, sRGB-encoded copy of the photo for display (float 0–1)."""
    from ..imaging.photo import srgb_encode

    step = max(1, int(np.ceil(max(photo.width, photo.height) / DISPLAY_PX)))
    small = photo.pixels[::step, ::step]
    values = small.astype(np.float32) / (2 ** photo.bits - 1)
    if photo.encoding == "linear":
        values = srgb_encode(values)
    return values, step


def _outline(ax, rect, colour, label):
    from matplotlib.patches import Rectangle

    x0, y0, x1, y1 = rect
    ax.add_patch(Rectangle((x0, y0), x1 - x0, y1 - y0, fill=False, ec=colour, lw=1.2, label=label))


def plot_thickness_map(result, photo=None, *, bare=None, known=None, title: str | None = None):
    """The photo beside its thickness map.

    Parameters
    ----------
    result : filmoptic.imaging.ThicknessMap
    photo : filmoptic.imaging.photo.Photo, optional
        Drawn on the left when given.
    bare, known : (x0, y0, x1, y1), optional
        Rectangles (pixels) outlined on the photo.
    title : str, optional

    Returns
    -------
    matplotlib.figure.Figure
    """
    ncols = 2 if photo is not None else 1
    fig, axes = new_figure(1, ncols, figsize=(12.0 if ncols == 2 else 6.5, 5.2), squeeze=False)
    axes = axes[0]
    grid = result.grid
    if photo is not None:
        ax = axes[0]
        image, step = _display_image(photo)
        extent = (0, photo.width, photo.height, 0)
        ax.imshow(image, extent=extent, cmap="gray" if image.ndim == 2 else None, vmin=0, vmax=1,
                  interpolation="antialiased")
        _outline(ax, (grid.x0, grid.y0, grid.x1, grid.y1), "tab:orange", "mapped area")
        if bare is not None:
            _outline(ax, bare, "tab:cyan", "reference")
        if known is not None:
            _outline(ax, known, "tab:green", "known thickness")
        ax.set_xlim(0, photo.width)
        ax.set_ylim(photo.height, 0)
        ax.set_xlabel("x (px)")
        ax.set_ylabel("y (px)")
        ax.set_title(f"photo{' (shown reduced)' if step > 1 else ''}", fontsize="small")
        ax.legend(fontsize="x-small", loc="lower right")

    ax = axes[-1]
    unit = result.unit
    to_unit = 1.0 / result.scale_px_per_mm if result.scale_px_per_mm else 1.0
    xe = (grid.x0 + np.arange(grid.nx + 1) * grid.cell_w) * to_unit
    ye = (grid.y0 + np.arange(grid.ny + 1) * grid.cell_h) * to_unit
    t = np.ma.masked_invalid(result.thickness_nm)
    mesh = ax.pcolormesh(xe, ye, t, cmap="viridis", shading="flat")
    bar = fig.colorbar(mesh, ax=ax, fraction=0.046, pad=0.03)
    bar.set_label("thickness (nm)")
    finite = np.isfinite(result.thickness_nm)
    if finite.sum() >= 4 and grid.nx >= 2 and grid.ny >= 2:
        lo, hi = np.nanmin(result.thickness_nm), np.nanmax(result.thickness_nm)
        if hi > lo:
            X, Y = np.meshgrid(result.x, result.y)
            lines = ax.contour(X, Y, t, levels=8, colors="white", linewidths=0.7)
            ax.clabel(lines, fmt="%.3g", fontsize="x-small")
    unsolved = ~finite & (result.flag != "outside")
    if unsolved.any():
        X, Y = np.meshgrid(result.x, result.y)
        kinds = sorted(set(result.flag[unsolved].tolist()))
        ax.plot(X[unsolved], Y[unsolved], "x", color="tab:red", ms=5,
                label="not solved: " + ", ".join(kinds))
        ax.legend(fontsize="x-small", loc="lower right")
    ax.set_xlim(xe[0], xe[-1])
    ax.set_ylim(ye[-1], ye[0])
    ax.set_aspect("equal")
    ax.set_xlabel(f"x ({unit})")
    ax.set_ylabel(f"y ({unit})")
    stats = result.stats
    if title is None:
        what = "transmission" if result.mode == "transmission" else "colour (relative unless anchored)"
        title = f"{result.stack} — {what}"
    summary = "no cell solved"
    if stats.mean_nm is not None:
        summary = (f"mean {stats.mean_nm:.2f} nm, {stats.min_nm:.2f}–{stats.max_nm:.2f} nm, "
                   f"uniformity ±{stats.uniformity_pct:.1f} % (±(max−min)/(max+min))")
    ax.set_title(f"{title}\n{summary}", fontsize="small")
    fig.tight_layout()
    return fig

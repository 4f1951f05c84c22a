"""The colour ladder: a printable page for the coater at the chamber, and the a*b* view.

The page (:func:`ladder_chart`, A4 or US Letter, portrait) runs the film's thickness down the
sheet as a ruler, with one rung per round thickness (or voltage) a shop can aim for. Each rung
shows three chips of the colour seen on the film side — the aim in the middle, the run a few
percent thin on its left and thick on its right — then, for a part that lets light through, the
part on a light box (the colour of the light that comes through), then the colour's plain name,
its interference order and how far the thin and thick chips are from the aim (ΔE00). To the right,
on the same thickness ruler: the lightness L*, the hue angle (dots in the colour, larger for
stronger colours) and the luminous reflectance, transmittance and absorption. Interference
orders are shaded in alternate bands across the page. Chips are sRGB (IEC 61966-2-1); a colour
outside the sRGB gamut is printed with reduced chroma and carries a white corner.

:func:`ab_chart` draws the film-side colour's path in the CIELAB a*b* plane, labelled at the
rungs, for those who want to see how far the colours swing.
"""

from __future__ import annotations

import numpy as np

from filmoptic.plots import heading_size, new_figure, new_page

__all__ = ["ladder_chart", "ab_chart", "thickness_ticks"]

# Ladder columns, inches from the ladder's left edge: (left, width).
_THIN, _AIM, _THICK = (0.06, 0.3), (0.42, 0.55), (1.03, 0.3)
_BOX = (1.47, 0.55)           # the light box with the part on it
_GAP_AFTER_CHIPS = 0.16
# Text columns after the chips, inches: the colour word, (oxide thickness), order, ΔE00.
_WORD_W, _NM_W, _ORDER_W, _DE_W = 1.12, 0.45, 0.32, 0.72


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
    return np.asarray(colours.rgb8, dtype=float).reshape(-1, 3) / 255.0


def _chip(ax, x, y, w, h, colour, *, edge="0.25", notch=True):
    from matplotlib.patches import Polygon, Rectangle

    ax.add_patch(Rectangle((x, y - h / 2), w, h, facecolor=_rgb(colour)[0], edgecolor=edge, lw=0.5))
    if notch and not bool(np.all(colour.in_gamut)):
        c = min(w, h) * 0.35
        ax.add_patch(Polygon([(x + w, y - h / 2), (x + w - c, y - h / 2), (x + w, y - h / 2 + c)],
                             closed=True, facecolor="white", edgecolor="0.3", lw=0.4))


def _light_box(ax, x, y, w, h, colour):
    """The part on a light box: a lit white panel and, inset on it, the light that comes through."""
    from matplotlib.patches import FancyBboxPatch, Rectangle

    ax.add_patch(Rectangle((x, y - h / 2), w, h, facecolor="white", edgecolor="0.55", lw=0.6))
    inset = 0.07
    ax.add_patch(FancyBboxPatch((x + inset, y - h / 2 + 0.18 * h), w - 2 * inset, 0.64 * h,
                                boxstyle="round,pad=0,rounding_size=0.04", facecolor=_rgb(colour)[0],
                                edgecolor="0.75", lw=0.4, mutation_aspect=1.0))
    if not bool(np.all(colour.in_gamut)):
        _chip(ax, x + w - 0.12, y, 0.12, 0.6 * h, colour, edge="none")


def ladder_chart(ladder, *, title: str | None = None, paper: str = "a4"):
    """Draw a :class:`~filmoptic.describe.ladder.ColourLadder` as a printable page.

    Parameters
    ----------
    ladder : filmoptic.describe.ladder.ColourLadder
    title : str, optional
        Heading; by default names the stack.
    paper : str
        ``"a4"`` (ISO 216) or ``"letter"`` (US Letter), portrait.

    Returns
    -------
    matplotlib.figure.Figure
        A page (:func:`filmoptic.plots.new_page`), saved at the paper's true size.

    Examples
    --------
    >>> from filmoptic.describe.ladder import colour_ladder
    >>> ladder = colour_ladder("TiO2 ? / Ti", np.arange(0.0, 101.0, 1.0))
    >>> fig = ladder_chart(ladder)
    >>> [round(float(v) * 25.4) for v in fig.get_size_inches()]
    [210, 297]
    """
    sweep = ladder.sweep
    rungs = ladder.rungs
    see_through = sweep.transmitted is not None
    fig = new_page(paper)
    W, H = (float(v) for v in fig.get_size_inches())
    import textwrap

    left, right = 0.8, 0.35
    notes = [textwrap.fill(line, width=int((W - left - right) * 19)) for line in _footnote_lines(ladder)]
    top, bottom = 1.55, 0.5 + 0.13 * ("\n".join(notes).count("\n") + 1)
    text_w = _WORD_W + _ORDER_W + _DE_W + (_NM_W if ladder.unit == "V" else 0.0)
    ladder_w = (_BOX[0] + _BOX[1] if see_through else _THICK[0] + _THICK[1]) + _GAP_AFTER_CHIPS + text_w
    panels_w = W - left - right - ladder_w - 0.2
    body = [left / W, bottom / H, ladder_w / W, (H - top - bottom) / H]
    ax = fig.add_axes(body, label="ladder")

    positions = np.array([r.position for r in rungs])
    step = float(np.min(np.diff(positions))) if positions.size > 1 else 1.0
    y_lo = min(float(np.min(ladder.position)), positions[0] - step / 2)
    y_hi = max(float(np.max(ladder.position)), positions[-1] + step / 2)
    ax.set_xlim(0, ladder_w)
    ax.set_ylim(y_hi, y_lo)           # thin at the top, growing down the page
    # Chip height: most of a rung's spacing, in data units.
    chip_h = 0.74 * step
    fonts = _font_sizes(len(rungs))

    _order_bands([ax], ladder, y_lo, y_hi)
    for rung in rungs:
        y = rung.position
        _chip(ax, _THIN[0], y, _THIN[1], chip_h, rung.thinner)
        _chip(ax, _AIM[0], y, _AIM[1], chip_h, rung.reflected)
        _chip(ax, _THICK[0], y, _THICK[1], chip_h, rung.thicker)
        x = _THICK[0] + _THICK[1] + _GAP_AFTER_CHIPS
        if see_through:
            _light_box(ax, _BOX[0], y, _BOX[1], chip_h, rung.transmitted)
            x = _BOX[0] + _BOX[1] + _GAP_AFTER_CHIPS
        ax.text(x, y, rung.word, va="center", fontsize=fonts["word"])
        col = x + _WORD_W
        if ladder.unit == "V":
            ax.text(col + _NM_W - 0.05, y, f"{rung.thickness_nm:.0f} nm", va="center", ha="right",
                    fontsize=fonts["small"], color="0.3")
            col += _NM_W
        if rung.order is not None:
            ax.text(col + _ORDER_W / 2, y, f"{rung.order}", va="center", ha="center", fontsize=fonts["small"])
        lo, hi = rung.delta_E00
        ax.text(col + _ORDER_W + _DE_W, y, f"{lo:.1f} | {hi:.1f}", va="center", ha="right",
                fontsize=fonts["small"], family="monospace")
    ax.set_yticks(positions)
    ax.set_yticklabels([f"{p:g}" for p in positions], fontsize=fonts["tick"])
    ax.set_ylabel(ladder.axis_label.split(",")[0] if ladder.unit == "V" else "layer thickness (nm)", fontsize=9)
    ax.set_xticks([])
    for side in ("top", "right", "bottom"):
        ax.spines[side].set_visible(False)

    # Column heads, in inches on the page above the ladder.
    head_y = 1 - (top - 0.12) / H
    def head(x_in, text, ha="center"):
        fig.text((left + x_in) / W, head_y, text, ha=ha, va="bottom", fontsize=7.5, color="0.2")

    head(_THIN[0] + _THIN[1] / 2, f"thin\n−{ladder.tolerance_text[1:]}")
    head(_AIM[0] + _AIM[1] / 2, "aim\nfilm side")
    head(_THICK[0] + _THICK[1] / 2, f"thick\n+{ladder.tolerance_text[1:]}")
    x = _THICK[0] + _THICK[1] + _GAP_AFTER_CHIPS
    if see_through:
        head(_BOX[0] + _BOX[1] / 2, "through\n(light box)")
        x = _BOX[0] + _BOX[1] + _GAP_AFTER_CHIPS
    head(x, "colour", ha="left")
    col = x + _WORD_W
    if ladder.unit == "V":
        head(col + _NM_W - 0.05, "oxide", ha="right")
        col += _NM_W
    if ladder.orders_shown:
        head(col + _ORDER_W / 2, "order")
    head(col + _ORDER_W + _DE_W, "ΔE00\nthin | thick", ha="right")

    panel_x = left + ladder_w + 0.2
    gap = 0.1
    width = (panels_w - 2 * gap) / 3
    axes = []
    for k, label in enumerate(("lightness L*", "hue h (°)", "luminous (%)")):
        pax = fig.add_axes([(panel_x + k * (width + gap)) / W, body[1], width / W, body[3]],
                           sharey=ax, label=label)
        pax.xaxis.set_label_position("top")
        pax.xaxis.tick_top()
        pax.set_xlabel(label, fontsize=7.5)
        pax.tick_params(labelsize=6.5, labelleft=False, length=2.5)
        pax.grid(True, axis="x", color="0.88", lw=0.5)
        axes.append(pax)
    _order_bands(axes, ladder, y_lo, y_hi)
    _lightness(axes[0], ladder)
    _hue(axes[1], ladder)
    handles = _luminous(axes[2], ladder)
    for pax in axes:
        for p in positions:
            pax.axhline(p, color="0.8", lw=0.35, zorder=0)
        pax.set_ylim(y_hi, y_lo)
        # The end labels lean inwards, so that neighbouring panels' rulers never touch.
        labels = pax.get_xticklabels()
        labels[0].set_horizontalalignment("left")
        labels[-1].set_horizontalalignment("right")

    heading = title or f"Colour ladder: {sweep.stack_text}"
    fig.text(left / W, 1 - 0.45 / H, heading, fontsize=heading_size(heading, W - left - right), fontweight="bold",
             va="center")
    fig.text(left / W, 1 - 0.75 / H,
             f"{sweep.illuminant} light · {sweep.observer}° observer · seen at {sweep.angle_deg:g}° in "
             f"{sweep.ambient} · run tolerance {ladder.tolerance_text}"
             + (f" · {ladder.law.formula()}" if ladder.unit == "V" else ""),
             fontsize=8.5, va="center", color="0.25")
    fig.legend(handles=handles, loc="upper right", bbox_to_anchor=(1 - right / W, 1 - 0.95 / H),
               ncol=len(handles), fontsize=7, frameon=False, handlelength=1.8, columnspacing=1.0)
    fig.text(left / W, (bottom - 0.28) / H, "\n".join(notes), fontsize=6.8, color="0.3", va="top",
             linespacing=1.35)
    return fig


def _font_sizes(count: int) -> dict:
    scale = 1.0 if count <= 22 else 22.0 / count
    return {"word": 9.0 * max(scale, 0.8), "small": 8.0 * max(scale, 0.8), "tick": 8.0 * max(scale, 0.8)}


def _order_bands(axes, ladder, y_lo, y_hi):
    """Alternate shading for the interference orders, and a dashed line at every dark band."""
    if not ladder.orders_shown:
        return
    edges = ladder.position_of(ladder.order_edges_nm)
    bounds = np.concatenate(([min(y_lo, -1e9)], edges, [max(y_hi, 1e9)]))
    for ax in axes:
        for k in range(1, bounds.size - 1, 2):
            ax.axhspan(bounds[k], bounds[k + 1], color="0.94", lw=0, zorder=-1)
        for e in edges:
            if y_lo <= e <= y_hi:
                ax.axhline(e, color="0.45", lw=0.6, ls=(0, (3, 2)), zorder=0.5)


def _lightness(ax, ladder):
    from matplotlib.collections import LineCollection

    L = np.asarray(ladder.sweep.reflected.Lab, dtype=float)[:, 0]
    y = ladder.position
    ax.plot(L, y, color="0.15", lw=2.6, solid_capstyle="butt")
    points = np.column_stack([L, y])[:, None, :]
    segments = np.concatenate([points[:-1], points[1:]], axis=1)
    ax.add_collection(LineCollection(segments, colors=_rgb(ladder.sweep.reflected)[:-1], lw=1.8))
    ax.set_xlim(0, 100)
    ax.set_xticks([0, 50, 100])


def _hue(ax, ladder):
    LCh = np.asarray(ladder.sweep.reflected.LCh, dtype=float)
    # Hue means nothing for a neutral colour: those points are drawn small and grey-edged.
    size = 3.0 + np.clip(LCh[:, 1], 0, 80) / 4.0
    ax.scatter(LCh[:, 2], ladder.position, s=size, c=_rgb(ladder.sweep.reflected), edgecolors="0.4",
               linewidths=0.15)
    ax.set_xlim(0, 360)
    ax.set_xticks([0, 180, 360])
    ax.set_xticks([90, 270], minor=True)


def _luminous(ax, ladder):
    sweep = ladder.sweep
    y = ladder.position
    handles = [ax.plot(100 * np.asarray(sweep.luminous_R), y, color="#b03a2e", lw=1.4,
                       label="R, film side")[0]]
    if sweep.transmitted is not None:
        handles.append(ax.plot(100 * np.asarray(sweep.luminous_T), y, color="#1f5fa8", lw=1.4, ls="--",
                               label="T, through")[0])
    if sweep.luminous_A_layers is not None:
        # A curve that stays at nothing (a clear oxide) is left out, and so is its legend entry.
        if np.any(np.asarray(sweep.luminous_A_layers) > 1e-4):
            handles.append(ax.plot(100 * np.asarray(sweep.luminous_A_layers), y, color="#7d6608", lw=1.1, ls=":",
                                   label="absorbed in the layers")[0])
        if np.any(np.asarray(sweep.luminous_A_substrate) > 1e-4):
            handles.append(ax.plot(100 * np.asarray(sweep.luminous_A_substrate), y, color="0.35", lw=1.1,
                                   ls="-.", label="absorbed in the substrate")[0])
    ax.set_xlim(0, 100)
    ax.set_xticks([0, 50, 100])
    return handles


def _footnote_lines(ladder) -> list:
    """The notes at the foot of the page: only those that apply to this ladder."""
    sweep = ladder.sweep
    lines = [f"Each rung: the colour of the film side at the aim, with the run {ladder.tolerance_text} "
             "thin (left) and thick (right); ΔE00 says how far those are from the aim (about 1 is just "
             "noticeable side by side)."]
    if sweep.transmitted is not None:
        lines.append("Through: the part lying on a white light box, showing the colour of the light "
                     "that comes through it.")
    else:
        lines.append("Nothing comes through this part: the substrate absorbs all the light that enters "
                     "it, so only the film side has a colour.")
    if ladder.orders_shown:
        lines.append("Order: 1 + the dark bands (minima of the luminous reflectance, dashed lines) the "
                     "film passes while growing from nothing; orders are shaded in alternate bands.")
    out = any(not bool(np.all(c.in_gamut)) for r in ladder.rungs
              for c in (r.reflected, r.thinner, r.thicker, *(() if r.transmitted is None else (r.transmitted,))))
    if out:
        lines.append("A white corner marks a colour outside the sRGB gamut, printed with reduced chroma "
                     "at the same lightness and hue.")
    lines.append("Computed from published optical constants: real films differ in density, roughness "
                 "and composition, and printers shift colours; compare with real parts.")
    return lines


def ab_chart(ladder, *, title: str | None = None):
    """The film-side colour's path in the CIELAB a*b* plane, labelled at the ladder's rungs.

    Labels that would land on an earlier one are left out, so that none overlap.

    Parameters
    ----------
    ladder : filmoptic.describe.ladder.ColourLadder
    title : str, optional

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> from filmoptic.describe.ladder import colour_ladder
    >>> fig = ab_chart(colour_ladder("TiO2 ? / Ti", np.arange(0.0, 101.0, 1.0)))
    >>> fig.axes[0].get_xlabel()
    'a* (CIELAB, green − / red +)'
    """
    sweep = ladder.sweep
    lab = np.asarray(sweep.reflected.Lab, dtype=float)
    a, b = lab[:, 1], lab[:, 2]
    fig, ax = new_figure(figsize=(6.8, 6.8))
    ax.plot(a, b, color="0.6", lw=0.8, zorder=1)
    ax.scatter(a, b, c=_rgb(sweep.reflected), s=10, edgecolors="none", zorder=2)
    span = max(np.ptp(a), np.ptp(b), 1.0)
    pad = 0.1 * span
    ax.set_xlim(min(a.min(), 0) - pad, max(a.max(), 0) + pad)
    ax.set_ylim(min(b.min(), 0) - pad, max(b.max(), 0) + pad)
    ax.set_aspect("equal", adjustable="box")
    ax.axhline(0, color="0.75", lw=0.6, zorder=0)
    ax.axvline(0, color="0.75", lw=0.6, zorder=0)
    ax.set_xlabel("a* (CIELAB, green − / red +)")
    ax.set_ylabel("b* (CIELAB, blue − / yellow +)")
    ax.grid(True, color="0.92", lw=0.5)
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    taken = [t.get_window_extent(renderer) for t in ax.get_xticklabels() + ax.get_yticklabels()]
    unit = ladder.unit
    for rung in ladder.rungs:
        L, ra, rb = (float(v) for v in rung.reflected.Lab)
        ax.scatter([ra], [rb], s=40, facecolors=_rgb(rung.reflected), edgecolors="black", lw=0.7, zorder=3)
        label = ax.annotate(f"{rung.position:g}", (ra, rb), xytext=(5, 4), textcoords="offset points",
                            fontsize=7.5, zorder=4)
        box = label.get_window_extent(renderer)
        if any(box.overlaps(other) for other in taken):
            label.remove()
        else:
            taken.append(box)
    what = "thickness in nm" if unit == "nm" else "anodising voltage in V"
    ax.set_title(title or f"Film-side colour in the a*b* plane: {sweep.stack_text}\n(labels: {what}; "
                 f"{sweep.illuminant}, {sweep.observer}° observer)", fontsize=9.5)
    return fig

"""The colour sheet of one coated part: a printable page (A4 or US Letter) to hold beside the part.

From the top: the stack and the light it is seen in; one band per view in the coater's words —
film side, glass side (for a slab) and through — each with a large patch and its numbers; a bar
showing where the light goes (reflected, through, absorbed in the film and in the substrate); and
the part seen at an angle, one column per angle. Patches reflect like the part: film-side and
glass-side colours are plain patches, the colour through the part is drawn as the part lying on a
lit light box. A part that lets nothing through has no such patch. Colours are sRGB
(IEC 61966-2-1); one outside the sRGB gamut is printed with reduced chroma and carries a white
corner. Luminous values use the ISO 9050 names Rv and Tv.
"""

from __future__ import annotations

import textwrap

import numpy as np

from filmoptic.plots import heading_size, new_page

__all__ = ["swatch_figure"]

_VIEW_KEYS = ("reflected", "reflected_reverse", "transmitted")
_WHAT = {
    "reflected": "the coated face, in reflected light",
    "reflected_reverse": "the part turned over: light reflected back through the substrate",
    "transmitted": "held against the light: the light that comes through",
}
_SPLIT_COLOURS = ("#8aa1b8", "#f2df8c", "#8c6d46", "#5d5d5d")


def _rgb(colour):
    return np.asarray(colour.rgb8, dtype=float).reshape(3) / 255.0


def _views(result, names):
    return [(key, names[key]) for key in _VIEW_KEYS if getattr(result, key) is not None]


def _patch(ax, key, colour, x, y, w, h):
    """A patch the way the view is seen: the through view as the part on a lit light box."""
    from matplotlib.patches import FancyBboxPatch, Polygon, Rectangle

    if key == "transmitted":
        ax.add_patch(Rectangle((x, y), w, h, facecolor="white", edgecolor="0.5", lw=0.8))
        inset = min(w, h) * 0.12
        ax.add_patch(FancyBboxPatch((x + inset, y + inset), w - 2 * inset, h - 2 * inset,
                                    boxstyle=f"round,pad=0,rounding_size={0.6 * inset}",
                                    facecolor=_rgb(colour), edgecolor="0.7", lw=0.5))
        x, y, w, h = x + inset, y + inset, w - 2 * inset, h - 2 * inset
    else:
        ax.add_patch(Rectangle((x, y), w, h, facecolor=_rgb(colour), edgecolor="0.3", lw=0.7))
    if not bool(np.all(colour.in_gamut)):
        c = min(w, h) * 0.22
        ax.add_patch(Polygon([(x + w - c, y), (x + w, y), (x + w, y + c)], closed=True, facecolor="white",
                             edgecolor="0.3", lw=0.5))


def _luminous_line(key, lum, back) -> str:
    if key == "transmitted":
        return f"luminous transmittance Tv {100 * float(lum.T):.1f} % (ISO 9050)"
    value = lum.R if key == "reflected" else lum.R_reverse
    side = "film side" if key == "reflected" else back
    return f"luminous reflectance Rv, {side}: {100 * float(value):.1f} % (ISO 9050)"


def swatch_figure(result, *, stack_text: str, ambient: str = "air", angle_deg: float = 0.0,
                  by_angle=None, angles_deg=None, paper: str = "a4", back_side: str = "glass side"):
    """Draw the colour sheet of an :class:`~filmoptic.colorimetry.Appearance`.

    Parameters
    ----------
    result : Appearance
        Colours at one angle (``angle_deg``).
    stack_text : str
        The stack as the user wrote it (printed in the heading).
    ambient : str
        The incident medium, for the heading.
    angle_deg : float
        The angle of ``result``.
    by_angle : Appearance, optional
        The same stack computed for an array of angles (``angles_deg``): one column per angle.
    angles_deg : array_like, optional
    paper : str
        ``"a4"`` or ``"letter"``.
    back_side : str
        What the reversed view is called (:func:`filmoptic.describe.views.back_side`).

    Returns
    -------
    matplotlib.figure.Figure
        A page, saved at the paper's true size.

    Examples
    --------
    >>> from filmoptic.colorimetry import appearance
    >>> fig = swatch_figure(appearance("Ti 12nm / glass 4mm"), stack_text="Ti 12nm / glass 4mm")
    >>> [round(float(v) * 25.4) for v in fig.get_size_inches()]
    [210, 297]
    """
    from filmoptic.describe.colour_words import colour_word

    names = {"reflected": "Film side", "reflected_reverse": back_side.capitalize(), "transmitted": "Through"}
    views = _views(result, names)
    angles = [] if by_angle is None else [float(a) for a in np.atleast_1d(angles_deg)]
    fig = new_page(paper)
    W, H = (float(v) for v in fig.get_size_inches())
    ax = fig.add_axes([0, 0, 1, 1])
    ax.set_xlim(0, W)
    ax.set_ylim(H, 0)                 # inches, growing down the page
    ax.axis("off")
    margin = 0.6
    notes = _footnotes(result, by_angle)
    wrapped = "\n".join(textwrap.fill(n, width=int((W - 2 * margin) * 17)) for n in notes)
    foot_h = 0.25 + 0.14 * (wrapped.count("\n") + 1)

    # Fixed parts, then the patches share what is left of the page.
    header_h, split_h, angle_head_h, gap = 1.05, 1.25, 0.62, 0.22
    text_rows = 6 * 0.22
    fixed = header_h + split_h + foot_h + gap * (len(views) + 1)
    if angles:
        fixed += angle_head_h + len(views) * 0.42          # labels under the angle patches
    free = H - margin - fixed
    share = 0.62 if angles else 1.0
    view_h = min(max(free * share / len(views), text_rows + 0.1), 4.6 if angles else 7.0)
    angle_h = (free - view_h * len(views)) / len(views) if angles else 0.0
    angle_h = min(max(angle_h, 0.4), 2.6)

    heading = f"Colour sheet: {stack_text}"
    ax.text(margin, margin, heading, fontsize=heading_size(heading, W - 2 * margin), fontweight="bold", va="center")
    ax.text(margin, margin + 0.34,
            f"{result.illuminant} light · {result.observer}° observer · seen at {angle_deg:g}° · in {ambient}",
            fontsize=9, va="center", color="0.25")
    y = header_h
    patch_w = min(max(2.9, 0.8 * view_h), W - 2 * margin - 4.3)     # 4.3 in for the numbers
    for key, name in views:
        colour = getattr(result, key)
        y += gap
        _patch(ax, key, colour, margin, y, patch_w, view_h)
        L, a, b = (float(v) for v in colour.Lab)
        _, C, h = (float(v) for v in colour.LCh)
        X = margin + patch_w + 0.35
        lines = [
            (f"{name}: {colour_word(colour.Lab)}", dict(fontsize=12, fontweight="bold")),
            (_WHAT[key], dict(fontsize=8, color="0.3")),
            (f"L* {L:.1f}   a* {a:+.1f}   b* {b:+.1f}   C* {C:.1f}   h {h:.0f}°", dict(fontsize=9)),
            (f"Y {float(colour.XYZ[1]):.2f}   x {float(colour.xy[0]):.4f}   y {float(colour.xy[1]):.4f}",
             dict(fontsize=9)),
            (f"sRGB {colour.hex}" + ("" if colour.in_gamut else ", outside the sRGB gamut (white corner)"),
             dict(fontsize=9)),
            (_luminous_line(key, result.luminous, back_side), dict(fontsize=9)),
        ]
        top = y + max((view_h - text_rows) / 2, 0.0)
        for k, (text, style) in enumerate(lines):
            ax.text(X, top + 0.11 + k * 0.22, text, va="center", **style)
        y += view_h

    y += gap
    _light_split(ax, result.luminous, margin, y, W - 2 * margin, back_side)
    y += split_h

    if angles:
        ax.text(margin, y + 0.14, "Seen at an angle (unpolarised light)", fontsize=10, fontweight="bold",
                va="center")
        y += angle_head_h
        label_w = 1.05
        col_w = (W - 2 * margin - label_w) / len(angles)
        for j, angle in enumerate(angles):
            ax.text(margin + label_w + (j + 0.5) * col_w, y - 0.08, f"{angle:g}°", ha="center", va="bottom",
                    fontsize=9)
        for key, name in views:
            ax.text(margin, y + angle_h / 2, name, fontsize=8.5, va="center")
            for j in range(len(angles)):
                colour = getattr(by_angle, key)[j]
                x0 = margin + label_w + j * col_w + 0.08
                _patch(ax, key, colour, x0, y, col_w - 0.16, angle_h)
                L, a, b = (round(float(v)) + 0 for v in colour.Lab)
                ax.text(x0 + (col_w - 0.16) / 2, y + angle_h + 0.14, f"L* {L:d}  a* {a:+d}  b* {b:+d}",
                        ha="center", va="center", fontsize=7, color="0.2")
            y += angle_h + 0.42
    ax.text(margin, H - foot_h + 0.12, wrapped, fontsize=7, color="0.3", va="top", linespacing=1.4)
    return fig


def _light_split(ax, lum, x, y, width, back_side):
    """Where the light goes: one bar of 100 %, and its parts named beneath it."""
    from matplotlib.patches import Rectangle

    T = float(lum.T)
    parts = [("reflected, film side", float(lum.R)), ("through", T),
             ("absorbed in the film", float(lum.A_layers)),
             (f"absorbed in the {'glass' if back_side == 'glass side' else 'substrate'}", float(lum.A_substrate))]
    ax.text(x, y + 0.12, "Where the light goes (luminous, ISO 9050 weighting)", fontsize=10, fontweight="bold",
            va="center")
    bar_y, bar_h = y + 0.32, 0.28
    left = x
    for (label, value), colour in zip(parts, _SPLIT_COLOURS):
        w = width * max(value, 0.0)
        if w > 0:
            ax.add_patch(Rectangle((left, bar_y), w, bar_h, facecolor=colour, edgecolor="white", lw=0.6))
        left += w
    ax.add_patch(Rectangle((x, bar_y), width, bar_h, fill=False, edgecolor="0.3", lw=0.6))
    # The key beneath, two by two: the parts in order, each with its share.
    for k, ((label, value), colour) in enumerate(zip(parts, _SPLIT_COLOURS)):
        if label == "through" and T <= 0:
            label = "through: none"
        kx = x + (k % 2) * width / 2
        ky = bar_y + bar_h + 0.2 + (k // 2) * 0.22
        ax.add_patch(Rectangle((kx, ky - 0.065), 0.16, 0.13, facecolor=colour, edgecolor="0.4", lw=0.4))
        ax.text(kx + 0.24, ky, f"{label}: {100 * value:.1f} %", fontsize=8, va="center")


def _footnotes(result, by_angle) -> list:
    lines = []
    flagged = [c for c in (result.reflected, result.reflected_reverse, result.transmitted) if c is not None]
    if by_angle is not None:
        flagged += [c for c in (by_angle.reflected, by_angle.reflected_reverse, by_angle.transmitted) if c is not None]
    if any(not bool(np.all(c.in_gamut)) for c in flagged):
        lines.append("A white corner marks a colour outside the sRGB gamut, printed with reduced chroma at "
                     "the same lightness and hue.")
    if result.transmitted is None:
        lines.append("Nothing comes through this part: the substrate absorbs all the light that enters it.")
    lines.append("Screens and printers shift colours: compare with the real part under the light you work in.")
    return lines

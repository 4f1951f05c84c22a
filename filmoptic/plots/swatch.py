"""Printable colour swatch: a coated part's colours side by side, with their values.

The figure is about 15 cm wide so that it prints at true size on A4 or Letter. The main row shows
the colour reflected from the coated side, reflected from the substrate side (when the substrate
is a slab) and transmitted; optional rows below show how they travel with viewing angle. Patches
are filled with the sRGB colour (IEC 61966-2-1); a colour outside the sRGB gamut is drawn with
reduced chroma and marked with an asterisk.
"""

from __future__ import annotations

import numpy as np

from filmoptic.plots import new_figure

__all__ = ["swatch_figure", "SWATCH_WIDTH_CM"]

#: Printed width of the swatch.
SWATCH_WIDTH_CM = 15.0
_CM = 1 / 2.54

_VIEWS = (
    ("reflected", "Reflected, coated side", "R"),
    ("reflected_reverse", "Reflected, substrate side", "R_reverse"),
    ("transmitted", "Transmitted", "T"),
)


def _text_colour(lab_L: float) -> str:
    return "black" if lab_L >= 55 else "white"


def _label_lines(colour, luminous_name: str, luminous_value) -> list[str]:
    L, a, b = (float(v) for v in colour.Lab)
    x, y = (float(v) for v in colour.xy)
    lines = [
        f"{colour.hex}{'' if colour.in_gamut else ' *'}",
        f"L* {L:.1f}   a* {a:+.1f}   b* {b:+.1f}",
        f"Y {float(colour.XYZ[1]):.2f}   x {x:.4f}   y {y:.4f}",
    ]
    if luminous_value is not None:
        lines.append(f"luminous {luminous_name} {100 * float(luminous_value):.1f} %")
    return lines


def swatch_figure(result, *, stack_text: str, ambient: str = "air", angle_deg: float = 0.0,
                  by_angle=None, angles_deg=None):
    """Draw the swatch of an :class:`~filmoptic.colorimetry.Appearance`.

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
        The same stack computed for an array of angles (``angles_deg``): one row per angle.
    angles_deg : array_like, optional

    Returns
    -------
    matplotlib.figure.Figure
    """
    views = [(key, title, lum) for key, title, lum in _VIEWS
             if getattr(result, key) is not None]
    n_rows = 0 if by_angle is None else len(angles_deg)

    width = SWATCH_WIDTH_CM * _CM
    margin = 0.35
    header_h, label_h, patch_h, values_h = 0.75, 0.3, 1.35, 0.8
    row_h, angle_title_h, footer_h = 0.42, 0.4, 0.45
    height = header_h + label_h + patch_h + values_h + footer_h
    if n_rows:
        height += angle_title_h + n_rows * row_h

    fig, ax = new_figure(figsize=(width, height))
    ax.set_position([0, 0, 1, 1])
    ax.set_xlim(0, width)
    ax.set_ylim(height, 0)  # y grows downwards, in inches
    ax.axis("off")

    def rect(x, y, w, h, colour, edge="0.35"):
        from matplotlib.patches import Rectangle

        ax.add_patch(Rectangle((x, y), w, h, facecolor=colour, edgecolor=edge, linewidth=0.6))

    ax.text(margin, 0.28, stack_text, fontsize=11, fontweight="bold", va="center", family="monospace")
    ax.text(margin, 0.55,
            f"illuminant {result.illuminant} · {result.observer}° observer · {angle_deg:g}° incidence · "
            f"ambient {ambient}",
            fontsize=8, va="center", color="0.25")

    gap = 0.2
    n = len(views)
    patch_w = (width - 2 * margin - (n - 1) * gap) / n
    y = header_h
    for i, (key, title, lum_name) in enumerate(views):
        x = margin + i * (patch_w + gap)
        colour = getattr(result, key)
        ax.text(x, y + label_h / 2, title, fontsize=8.5, fontweight="bold", va="center")
        rect(x, y + label_h, patch_w, patch_h, colour.hex)
        if not colour.in_gamut:
            ax.text(x + patch_w - 0.08, y + label_h + 0.12, "*", fontsize=14, ha="right", va="top",
                    color=_text_colour(float(colour.Lab[0])))
        short = "T" if lum_name == "T" else "R"
        for j, line in enumerate(_label_lines(colour, short, getattr(result.luminous, lum_name))):
            ax.text(x, y + label_h + patch_h + 0.15 + j * 0.16, line, fontsize=7, va="center",
                    family="monospace" if j == 0 else None)
    y += label_h + patch_h + values_h

    if n_rows:
        ax.text(margin, y + angle_title_h / 2, "Versus viewing angle (unpolarised light)",
                fontsize=8.5, fontweight="bold", va="center")
        y += angle_title_h
        label_w = 0.55
        small_w = (width - 2 * margin - label_w - (n - 1) * gap) / n
        for r, angle in enumerate(np.atleast_1d(angles_deg)):
            top = y + r * row_h
            ax.text(margin, top + row_h / 2, f"{float(angle):g}°", fontsize=8, va="center")
            for i, (key, _, _) in enumerate(views):
                colour = getattr(by_angle, key)[r]
                x = margin + label_w + i * (small_w + gap)
                rect(x, top + 0.04, small_w, row_h - 0.08, colour.hex)
                L, a, b = (round(float(v)) + 0 for v in colour.Lab)
                ax.text(x + 0.06, top + row_h / 2,
                        f"{colour.hex}{'' if colour.in_gamut else '*'}  L*{L:d} a*{a:+d} b*{b:+d}",
                        fontsize=6, va="center", color=_text_colour(L), clip_on=True)
        y += n_rows * row_h

    note = ("* outside sRGB: shown with reduced chroma at the same lightness and hue.   "
            "Screen and print colours vary; compare real samples.")
    ax.text(margin, y + footer_h / 2, note, fontsize=6, va="center", color="0.35")
    lum = result.luminous
    if lum.A_substrate is not None:
        absorbed = (f"Absorbed (luminous): {100 * float(lum.A_layers):.1f} % in the layers, "
                    f"{100 * float(lum.A_substrate):.1f} % in the substrate")
        if result.transmitted is None:
            absorbed += " (an opaque half-space: no light comes through)"
        ax.text(margin, y + 0.06, absorbed, fontsize=6.5, va="center", color="0.2")
    return fig

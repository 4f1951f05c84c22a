"""Render a figure the way a file would be written and report what a reader would see.

A shared helper for the picture tests: ``look_at(fig)`` draws the figure with matplotlib's Agg
renderer, records every piece of text the renderer actually draws (titles, rulers, tick labels,
legends, notes — ticks outside the view are never drawn, so never counted) with its box on the
canvas, and the rendered pixels. The tests then assert what must be there: the page size, the
title, the units on every ruler, no two texts on top of each other, nothing outside the sheet,
and no large empty band.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

import numpy as np

#: ISO 216 A4 and US Letter, inches (portrait).
A4_IN = (210 / 25.4, 297 / 25.4)
LETTER_IN = (8.5, 11.0)

_UNIT = re.compile(r"\(([^()]*[^\s()][^()]*)\)")


@dataclass
class Drawn:
    """One text as drawn: its string, its box in pixels (x0, y0, x1, y1) and its artist."""

    text: str
    box: tuple
    artist: object = field(repr=False)


@dataclass
class Look:
    size_in: tuple
    dpi: float
    texts: list
    pixels: np.ndarray = field(repr=False)
    rulers: list = field(default_factory=list)   # (axis name, label, has tick labels)

    @property
    def strings(self) -> str:
        """Every drawn string, joined (for 'is the title there' checks)."""
        return "\n".join(t.text for t in self.texts)

    def overlaps(self, slack_px: float = 1.0) -> list:
        """Pairs of drawn texts whose boxes overlap by more than ``slack_px`` in both directions."""
        found = []
        boxes = [t for t in self.texts if t.box[2] - t.box[0] > 0 and t.box[3] - t.box[1] > 0]
        for i, a in enumerate(boxes):
            for b in boxes[i + 1:]:
                dx = min(a.box[2], b.box[2]) - max(a.box[0], b.box[0])
                dy = min(a.box[3], b.box[3]) - max(a.box[1], b.box[1])
                if dx > slack_px and dy > slack_px:
                    found.append((a.text, b.text))
        return found

    def outside(self, slack_px: float = 1.0) -> list:
        """Texts that reach beyond the figure's edges."""
        height, width = self.pixels.shape[:2]
        return [t.text for t in self.texts
                if t.box[0] < -slack_px or t.box[1] < -slack_px
                or t.box[2] > width + slack_px or t.box[3] > height + slack_px]

    def rulers_without_unit(self, unitless=()) -> list:
        """Numbered rulers whose label gives no unit in parentheses (names in ``unitless``,
        dimensionless quantities such as n, k or CIELAB L*, are accepted as they are)."""
        return [(name, label) for name, label, numbered in self.rulers
                if numbered and not _UNIT.search(label) and label.strip() not in unitless]

    def largest_empty_band(self) -> float:
        """The tallest run of blank rows, and the widest run of blank columns, as a fraction of
        the figure's height and width (whichever fraction is larger)."""
        rgb = self.pixels[..., :3].astype(int)
        background = rgb[0, 0]
        blank = np.all(np.abs(rgb - background) <= 3, axis=2)
        return max(_longest_run(blank.all(axis=1)) / blank.shape[0],
                   _longest_run(blank.all(axis=0)) / blank.shape[1])


def _longest_run(flags) -> int:
    best = run = 0
    for flag in flags:
        run = run + 1 if flag else 0
        best = max(best, run)
    return best


def look_at(fig, dpi: float = 72) -> Look:
    """Draw ``fig`` once and return what was drawn (see :class:`Look`).

    The figure is released from pyplot's list afterwards (it stays readable), so that many looks
    do not pile up open figures.
    """
    import matplotlib.text
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    fig.set_dpi(dpi)
    canvas = FigureCanvasAgg(fig)
    renderer = canvas.get_renderer()
    seen = {}
    drawing = []                       # the Text being drawn (multi-line texts pass no mtext)
    draw_text, text_draw = renderer.draw_text, matplotlib.text.Text.draw

    def spy(gc, x, y, s, prop, angle, ismath=False, mtext=None):
        artist = mtext if mtext is not None else (drawing[-1] if drawing else None)
        if artist is not None and str(s).strip():
            seen[id(artist)] = artist
        return draw_text(gc, x, y, s, prop, angle, ismath=ismath, mtext=mtext)

    def draw_one(self, *args, **kwargs):
        drawing.append(self)
        try:
            return text_draw(self, *args, **kwargs)
        finally:
            drawing.pop()

    renderer.draw_text = spy
    matplotlib.text.Text.draw = draw_one
    try:
        fig.draw(renderer)
    finally:
        renderer.draw_text = draw_text
        matplotlib.text.Text.draw = text_draw
    height = fig.bbox.height
    texts = []
    for artist in seen.values():
        extent = artist.get_window_extent(renderer)
        # Canvas pixels run downwards; the boxes are turned the same way as the pixel array.
        texts.append(Drawn(artist.get_text(), (extent.x0, height - extent.y1, extent.x1, height - extent.y0),
                           artist))
    drawn = {id(a.artist) for a in texts}
    rulers = []
    for ax in fig.axes:
        if not ax.get_visible() or not ax.axison:
            continue
        for name, axis in (("x", ax.xaxis), ("y", ax.yaxis)):
            if not axis.get_visible():
                continue
            numbered = any(id(t) in drawn for t in axis.get_ticklabels())
            rulers.append((f"{ax.get_label() or ax.get_title() or 'axes'} {name}", axis.get_label_text(), numbered))
    pixels = np.asarray(canvas.buffer_rgba()).copy()
    import matplotlib.pyplot as plt

    plt.close(fig)
    return Look(tuple(float(v) for v in fig.get_size_inches()), dpi, texts, pixels, rulers)


def assert_reads_well(look: Look, *, unitless=(), max_gap: float | None = None) -> None:
    """The checks every picture must pass: no overlapping texts, nothing off the sheet, a unit
    on every numbered ruler, and (for pages) no large empty band."""
    assert not look.overlaps(), look.overlaps()
    assert not look.outside(), look.outside()
    assert not look.rulers_without_unit(unitless), look.rulers_without_unit(unitless)
    if max_gap is not None:
        assert look.largest_empty_band() < max_gap, look.largest_empty_band()


def pdf_page_points(path) -> tuple:
    """Width and height (points) of the first page of a PDF, from its MediaBox."""
    data = open(path, "rb").read()
    match = re.search(rb"/MediaBox\s*\[\s*([-\d.]+)\s+([-\d.]+)\s+([-\d.]+)\s+([-\d.]+)\s*\]", data)
    assert match, "no MediaBox in the PDF"
    x0, y0, x1, y1 = (float(v) for v in match.groups())
    return x1 - x0, y1 - y0

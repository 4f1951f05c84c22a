"""Plain colour words for CIELAB colours: what a coater would call the colour out loud.

A chart beside the chamber says "gold", "dark blue" or "pale teal" next to a chip, so that two
people talk about the same thing. The word comes from the CIELAB hue angle h, lightness L* and
chroma C* (CIE 15:2018) by fixed sectors and limits, the same for every illuminant (CIELAB is
relative to the illuminant's white). The vocabulary is deliberately small: neutral words (white,
silver, grey, dark grey, black) below a chroma of :data:`NEUTRAL_CHROMA`, one hue word per sector
otherwise, with "pale" for weak colours, "light" and "dark" for lightness, and the trade's own
words where a dark or weak hue has one (brown, bronze, olive, straw, tan, purple).

The words are a convenience for people, not a measurement: the numbers (L*, a*, b*) are what to
compare.

References
----------
CIE 15:2018, *Colorimetry*, 4th ed. (CIELAB, hue angle and chroma).
"""

from __future__ import annotations

import numpy as np

__all__ = ["colour_word", "colour_words", "NEUTRAL_CHROMA", "HUE_SECTORS"]

#: Below this CIELAB chroma a colour is called by a neutral word.
NEUTRAL_CHROMA = 6.0
#: Below this chroma a hue word gets "pale".
PALE_CHROMA = 15.0

#: (upper hue angle in degrees, word) — each sector runs from the previous limit to this one.
HUE_SECTORS = (
    (15.0, "pink"),
    (50.0, "red"),
    (75.0, "orange"),
    (97.0, "gold"),
    (115.0, "yellow"),
    (135.0, "yellow-green"),
    (170.0, "green"),
    (215.0, "teal"),
    (250.0, "sky blue"),
    (308.0, "blue"),
    (322.0, "violet"),
    (345.0, "magenta"),
    (360.0, "pink"),
)

# Hues that are dark or mid-dark at full strength take "light" when they are light; blue and
# violet are dark even at full strength (sRGB blue has L* 32), so "dark" starts lower for them.
_TAKES_LIGHT = {"green", "teal", "blue", "violet"}
_DARK_BELOW = {"blue": 25.0, "violet": 25.0}


def _neutral(L: float) -> str:
    if L >= 92:
        return "white"
    if L >= 70:
        return "silver"
    if L >= 35:
        return "grey"
    if L >= 20:
        return "dark grey"
    return "black"


def _hue_word(h: float) -> str:
    for limit, word in HUE_SECTORS:
        if h < limit:
            return word
    return "pink"


def colour_word(lab) -> str:
    """A plain word for one CIELAB colour.

    Parameters
    ----------
    lab : array_like, shape (3,)
        L*, a*, b*.

    Returns
    -------
    str

    Examples
    --------
    >>> colour_word([62.0, 0.6, 0.7]), colour_word([53.1, -2.1, -35.8]), colour_word([61.0, 3.6, 38.6])
    ('grey', 'blue', 'gold')
    >>> colour_word([41.4, 21.8, 20.6]), colour_word([76.7, -7.0, -9.8])
    ('brown', 'pale sky blue')
    """
    L, a, b = (float(v) for v in np.asarray(lab, dtype=float).reshape(3))
    C = float(np.hypot(a, b))
    if C < NEUTRAL_CHROMA:
        return _neutral(L)
    h = float(np.degrees(np.arctan2(b, a)) % 360.0)
    word = _hue_word(h)
    # The trade's words for dark and weak versions of the warm hues.
    if word in ("red", "orange") and L < 45:
        return "dark red" if word == "red" and L < 30 else "brown"
    if word == "red" and L >= 72:
        return "peach"
    if word == "red" and C < 25:
        return "brown"
    if word == "orange" and C < 30:
        return "tan"
    if word == "gold":
        if L < 45:
            return "bronze"
        if C < 30:
            return "straw"
    if word == "yellow" and L < 60:
        return "olive"
    if word in ("violet", "magenta") and L < 40:
        return "purple"
    if word == "pink" and L < 55:
        return "red"
    if C < PALE_CHROMA:
        return f"pale {word}"
    if L < _DARK_BELOW.get(word, 38.0):
        return f"dark {word}"
    if word in _TAKES_LIGHT and L >= 65:
        return f"light {word}"
    return word


def colour_words(lab) -> list[str]:
    """:func:`colour_word` for each colour of a batch, shape (..., 3), flattened.

    Examples
    --------
    >>> colour_words([[95.0, 0.0, 0.0], [30.0, 50.0, -60.0]])
    ['white', 'purple']
    """
    lab = np.asarray(lab, dtype=float).reshape(-1, 3)
    return [colour_word(row) for row in lab]

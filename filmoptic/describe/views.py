"""The coater's words for the ways a coated part is seen.

A coated piece of glass has a film side (the coated face, seen in reflected light), a glass side
(the same piece turned over: reflected light that crossed the glass twice) and the view through it
(held against the light). Tables, sheets and pages use these words; the JSON keeps its field names
(``reflected``, ``reflected_reverse``, ``transmitted``). The back is called the glass side only when
the substrate is a glass (float glass, fused silica); otherwise it is the back side.
"""

from __future__ import annotations

__all__ = ["FILM_SIDE", "THROUGH", "back_side", "view_names", "GLASS_NAMES"]

FILM_SIDE = "film side"
THROUGH = "through"
#: Substrate names (lower case) that a coater calls glass.
GLASS_NAMES = ("glass", "fused-silica", "fused silica", "silica", "quartz", "bk7", "soda-lime")


def back_side(stack) -> str:
    """``"glass side"`` for a glass substrate, else ``"back side"``.

    Examples
    --------
    >>> from filmoptic.stack import parse_stack
    >>> back_side(parse_stack("Ti 10nm / glass 4mm")), back_side(parse_stack("Ti 10nm / Si 0.5mm"))
    ('glass side', 'back side')
    """
    name = str(getattr(stack.substrate.material, "name", "")).lower()
    return "glass side" if any(word in name for word in GLASS_NAMES) else "back side"


def view_names(stack) -> dict:
    """The three views' words, keyed by the :class:`~filmoptic.colorimetry.Appearance` fields.

    Examples
    --------
    >>> from filmoptic.stack import parse_stack
    >>> view_names(parse_stack("Ti 10nm / glass 4mm"))["reflected_reverse"]
    'glass side'
    """
    return {"reflected": FILM_SIDE, "reflected_reverse": back_side(stack), "transmitted": THROUGH}

"""Free parameters: the unknowns a solving or fitting command determines.

In stack notation an unknown is written ``?`` (unbounded; the command chooses a sensible range) or
``LOW..HIGH`` (bounded). The parser stores a :class:`Free` in place of the number; a stack with free
values is bound to numbers with :meth:`filmoptic.stack.Stack.bind`.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["Free", "Parameter", "is_free"]


@dataclass(frozen=True)
class Free:
    """An unknown value, optionally bounded: ``?`` is ``Free()``, ``5..40`` is ``Free(5, 40)``."""

    low: float | None = None
    high: float | None = None

    @property
    def bounded(self) -> bool:
        return self.low is not None and self.high is not None

    def __str__(self) -> str:
        return "?" if not self.bounded else f"{self.low:g}..{self.high:g}"


@dataclass(frozen=True)
class Parameter:
    """One free parameter of a stack, as reported by fits and solves.

    Attributes
    ----------
    name : str
        Human-readable, unique within the stack, e.g. ``"TiO2 thickness (layer 1)"`` or
        ``"cauchy A (layer 1)"``.
    unit : str
        ``"nm"`` for thicknesses, ``""`` for dimensionless coefficients, ``"µm²"`` etc.
    kind : str
        ``"thickness"``, ``"coefficient"`` or ``"fraction"``.
    free : Free
        The bounds as written.
    layer : int
        Index of the item in the stack (0 = first layer the light meets).
    """

    name: str
    unit: str
    kind: str
    free: Free
    layer: int


def is_free(value) -> bool:
    """True when ``value`` is an unknown (:class:`Free`)."""
    return isinstance(value, Free)

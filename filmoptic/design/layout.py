"""The layers of a design: which are free, their bounds, and how the design is written back.

A :class:`Layout` is the design's structure — an ordered list of :class:`Entry` (material,
thickness, free or fixed, bounds) on a substrate, in an ambient — together with its current
thicknesses. The optimisers see it as a vector of free thicknesses (one per *unknown*; copies of a
repeat group in the user's stack share one) and a template :class:`~filmoptic.stack.Stack` whose
free layers the engine fills from a ``(batch, K)`` array. Growing and pruning a design (needle
insertion, removal of thin layers) make new layouts.

Examples
--------
>>> from filmoptic.stack import parse_stack
>>> lay = layout_from_stack(parse_stack("n=2.3 ? / n=1.46 20..200nm / n=1.52"))
>>> lay.lower().tolist(), lay.upper().tolist()
([0.0, 20.0], [500.0, 200.0])
>>> lay.with_values([60.0, 95.5]).text()
'n=2.3 60nm / n=1.46 95.5nm / n=1.52'
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from filmoptic.errors import FilmopticError
from filmoptic.params import Free, is_free

__all__ = ["Entry", "Layout", "layout_from_stack", "format_nm", "DIGITS"]

#: Decimals of a thickness in nm when a design is written as a stack (a thousandth of a nm keeps
#: every printed value of the design when the stack is read back).
DIGITS = 3


def format_nm(value: float) -> str:
    """A thickness as the stack notation writes it: ``12.345nm`` (at most :data:`DIGITS` decimals).

    Examples
    --------
    >>> format_nm(60.0), format_nm(12.34567)
    ('60nm', '12.346nm')
    """
    text = f"{float(value):.{DIGITS}f}".rstrip("0").rstrip(".")
    return f"{'0' if text in ('', '-0') else text}nm"


@dataclass(frozen=True)
class Entry:
    """One layer of a design.

    Attributes
    ----------
    material : filmoptic.materials.Material
    thickness_nm : float
        The current thickness.
    free : bool
        Whether the design may change it.
    low, high : float
        Bounds of a free thickness, nm.
    thick : bool
        An incoherent slab written in mm (always fixed).
    text : str
        A fixed layer as the user wrote it.
    group : int or None
        Entries with the same group share one unknown (the copies of a repeat group).
    removable : bool
        Whether the design may drop it when it grows too thin: True for layers the design made,
        False for the layers of the user's stack (they keep their written range).
    """

    material: object
    thickness_nm: float
    free: bool = True
    low: float = 0.0
    high: float = 500.0
    thick: bool = False
    text: str = ""
    group: int | None = None
    removable: bool = True

    def notation(self) -> str:
        if not self.free and self.text:
            return self.text
        return f"{self.material.notation} {format_nm(self.thickness_nm)}"


@dataclass(frozen=True)
class Layout:
    """A design's layers (in the order light meets them) on a substrate, in an ambient."""

    entries: tuple
    substrate: object           # filmoptic.stack.Layer
    ambient: object
    exit_medium: object

    # -- unknowns ------------------------------------------------------------------------------
    def columns(self) -> tuple:
        """Per unknown, the entries it sets (an ungrouped free entry is its own unknown)."""
        order, members = [], {}
        for i, e in enumerate(self.entries):
            if not e.free:
                continue
            key = ("group", e.group) if e.group is not None else ("entry", i)
            if key not in members:
                members[key] = []
                order.append(key)
            members[key].append(i)
        return tuple(tuple(members[k]) for k in order)

    def values(self) -> np.ndarray:
        return np.array([self.entries[c[0]].thickness_nm for c in self.columns()], dtype=float)

    def lower(self) -> np.ndarray:
        return np.array([self.entries[c[0]].low for c in self.columns()], dtype=float)

    def upper(self) -> np.ndarray:
        return np.array([self.entries[c[0]].high for c in self.columns()], dtype=float)

    def counts(self) -> np.ndarray:
        """How many layers each unknown sets (for the total-thickness bound)."""
        return np.array([len(c) for c in self.columns()], dtype=float)

    def fixed_nm(self) -> float:
        """Total thickness of the fixed coherent layers."""
        return float(sum(e.thickness_nm for e in self.entries if not e.free and not e.thick))

    def with_values(self, x) -> "Layout":
        x = np.asarray(x, dtype=float).reshape(-1)
        columns = self.columns()
        if x.size != len(columns):
            raise FilmopticError(f"the design has {len(columns)} free thickness(es), got {x.size}")
        entries = list(self.entries)
        for value, members in zip(x, columns):
            for i in members:
                entries[i] = replace(entries[i], thickness_nm=float(value))
        return replace(self, entries=tuple(entries))

    # -- stacks --------------------------------------------------------------------------------
    def template(self, *, every_layer_free: bool = False):
        """A :class:`~filmoptic.stack.Stack` whose free layers take the columns of the engine's
        ``thickness_nm`` array, in :meth:`columns` order (with ``every_layer_free``: every
        coherent layer is its own unknown, in layer order — for tolerancing)."""
        from filmoptic.stack import Layer, Stack

        layers = []
        next_item = 1_000_000
        for i, e in enumerate(self.entries):
            variable = (not e.thick) if every_layer_free else e.free
            if variable:
                thickness = Free(e.low, e.high) if not every_layer_free else Free()
                if e.group is not None and not every_layer_free:
                    item = e.group
                else:
                    item = next_item
                    next_item += 1
            else:
                thickness = e.thickness_nm
                item = next_item
                next_item += 1
            layers.append(Layer(e.material, thickness, e.thick, e.notation(), item))
        return Stack(tuple(layers), self.substrate, self.ambient, self.exit_medium, self.text())

    def text(self) -> str:
        """The design in stack notation (the ambient is not part of it)."""
        return " / ".join([*(e.notation() for e in self.entries), self.substrate.text])

    def coherent_indices(self) -> tuple:
        """Entries that are thin (coherent) layers."""
        return tuple(i for i, e in enumerate(self.entries) if not e.thick)

    # -- changes -------------------------------------------------------------------------------
    def expanded(self) -> "Layout":
        """Every free entry its own unknown (copies of repeat groups become independent)."""
        return replace(self, entries=tuple(replace(e, group=None) for e in self.entries))

    def insert(self, index: int, position_nm: float, material, thickness_nm: float, high: float,
               edge_nm: float = 0.5) -> "Layout":
        """A new free layer of ``material`` at depth ``position_nm`` inside entry ``index``
        (``index == len(entries)``: just in front of the substrate). Within ``edge_nm`` of an
        interface it goes into the interface rather than splitting the host."""
        entries = list(self.entries)
        needle = Entry(material, float(thickness_nm), True, 0.0, float(high))
        if index >= len(entries):
            entries.append(needle)
            return replace(self, entries=tuple(entries))
        host = entries[index]
        if position_nm <= edge_nm:
            entries.insert(index, needle)
        elif position_nm >= host.thickness_nm - edge_nm:
            entries.insert(index + 1, needle)
        else:
            if not host.free:
                raise FilmopticError("a fixed layer cannot be split")
            # The halves of a split layer are the design's own: either may vanish later.
            front = replace(host, thickness_nm=float(position_nm), group=None, removable=True)
            back = replace(host, thickness_nm=float(host.thickness_nm - position_nm), group=None, removable=True)
            entries[index:index + 1] = [front, needle, back]
        return replace(self, entries=tuple(entries))

    def remove(self, indices) -> "Layout":
        """Without the given entries; free neighbours of one material that meet are merged."""
        drop = set(int(i) for i in indices)
        kept = [e for i, e in enumerate(self.entries) if i not in drop]
        merged = []
        for e in kept:
            if (merged and e.free and merged[-1].free and e.group is None and merged[-1].group is None
                    and (e.removable or merged[-1].removable)
                    and not e.thick and not merged[-1].thick and same_material(e.material, merged[-1].material)):
                a = merged[-1]
                total = a.thickness_nm + e.thickness_nm
                merged[-1] = replace(a, thickness_nm=total, low=min(a.low, e.low),
                                     high=max(a.high, e.high, total), removable=a.removable and e.removable)
            else:
                merged.append(e)
        return replace(self, entries=tuple(merged))


def same_material(a, b) -> bool:
    """Whether two materials are the same for merging and for systematic (rate) errors."""
    return a is b or getattr(a, "notation", None) == getattr(b, "notation", object())


def default_high_nm(material) -> float:
    """Largest thickness of a ``?`` layer: the solver's default range (100 nm for a metal,
    500 nm otherwise)."""
    from filmoptic.inverse.solve import default_range_nm

    return float(default_range_nm(material)[1])


def layout_from_stack(stack) -> Layout:
    """The layout of a parsed stack: its ``?`` and ``LOW..HIGH`` thicknesses are free.

    A ``?`` ranges over 0–500 nm (0–100 nm for a metal) and starts in the middle; a repeat
    group's unknown stays one unknown for all its copies. The stack's layers are not removable:
    they keep their written ranges whatever the minimum layer thickness of a design. Free values other than thicknesses
    (model coefficients, mix fractions) are refused: a design finds thicknesses.
    """
    others = [p.name for i, p in enumerate(stack.parameters) if i not in set(stack.thickness_parameters)]
    if others:
        raise FilmopticError(
            f"design finds thicknesses; give numbers for the other unknowns ({', '.join(others)})"
        )
    items = [layer.item for layer in stack.layers]
    shared = {item for item in items if item is not None and items.count(item) > 1}
    entries = []
    for layer in stack.layers:
        t = layer.thickness_nm
        if is_free(t):
            if layer.thick:
                raise FilmopticError(
                    f"{layer.text!r}: a thick slab (mm) is not designed; give it a thickness"
                )
            low = float(t.low) if t.bounded else 0.0
            high = float(t.high) if t.bounded else default_high_nm(layer.material)
            if not math.isfinite(high):
                high = default_high_nm(layer.material)
            group = layer.item if layer.item in shared else None
            entries.append(Entry(layer.material, 0.5 * (low + high), True, low, high, False, "", group, False))
        else:
            entries.append(Entry(layer.material, float(t), False, float(t), float(t), bool(layer.thick),
                                 layer.text, None, False))
    return Layout(tuple(entries), stack.substrate, stack.ambient, stack.exit_medium)

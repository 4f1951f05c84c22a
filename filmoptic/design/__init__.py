"""Designing coatings for goals, and the yield of a design under thickness errors.

* :mod:`filmoptic.design.goals` — the goal grammar and how a design is scored;
* :mod:`filmoptic.design.designer` — :func:`design_coating` (global search, batched local
  refinement, needle insertion) and :func:`check_design`;
* :mod:`filmoptic.design.tolerance` — :func:`tolerance_analysis`: Monte Carlo yield, the spread
  of every goal and the sensitivity of every layer.

The modules underneath (:mod:`~filmoptic.design.layout`, :mod:`~filmoptic.design.evaluate`,
:mod:`~filmoptic.design.search`, :mod:`~filmoptic.design.refine`,
:mod:`~filmoptic.design.needle`) hold one step each.
"""

from .designer import (
    DEFAULT_MIN_LAYER_NM,
    DesignResult,
    GoalResult,
    LayerResult,
    check_design,
    design_coating,
    split_materials,
)
from .goals import Goal, parse_goal, parse_goals, read_goals_file

__all__ = [
    "Goal",
    "parse_goal",
    "parse_goals",
    "read_goals_file",
    "DesignResult",
    "GoalResult",
    "LayerResult",
    "design_coating",
    "check_design",
    "split_materials",
    "DEFAULT_MIN_LAYER_NM",
]

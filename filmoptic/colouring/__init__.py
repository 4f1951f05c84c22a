"""Oxide colours on metals: anodising valve metals and heat tint of steels and copper.

The part is always an opaque metal with one oxide layer grown on it, seen in reflection: the
light that enters the metal is absorbed, so no transmitted colour exists or is reported.

- :mod:`filmoptic.colouring.oxide_film`: colour against oxide thickness and back (shared).
- :mod:`filmoptic.colouring.anodize`: the growth law thickness = nm/V × V + offset per metal,
  colour against voltage and the voltages that give a colour.
- :mod:`filmoptic.colouring.heat_tint`: temper colours of steel and heat tint of stainless
  steel and copper against oxide thickness, with the oxide model stated; no temperature relation.
"""

from .anodize import (
    ANODIC_OXIDES,
    ANODIZING_CAUTION,
    GROWTH_LAWS,
    AnodizeColours,
    GrowthLaw,
    VoltageMatch,
    anodize_colours,
    anodizing_stack,
    growth_law,
    voltages_for_colour,
)
from .heat_tint import HEAT_TINT_MODELS, OxideModel, heat_tint_colours, heat_tint_model, thickness_for_colour
from .oxide_film import FilmColours, FilmMatch, MatchResult, colour_matches, film_colours

__all__ = [
    "GrowthLaw", "GROWTH_LAWS", "ANODIC_OXIDES", "ANODIZING_CAUTION", "growth_law", "anodizing_stack",
    "AnodizeColours", "VoltageMatch", "anodize_colours", "voltages_for_colour",
    "OxideModel", "HEAT_TINT_MODELS", "heat_tint_model", "heat_tint_colours", "thickness_for_colour",
    "FilmColours", "FilmMatch", "MatchResult", "film_colours", "colour_matches",
]

"""Optical constants N(λ) = n + i·k: the shipped library, user files, models and mixes.

The entry points are :func:`parse_material` (a material as written in stack notation),
:func:`get_material` (a library name and dataset) and :func:`list_materials` (what the library
holds). Every material implements :class:`Material`: ``nk(wavelength_nm)`` returns the complex
index with k ≥ 0.

Examples
--------
>>> from filmoptic.materials import parse_material
>>> parse_material("n=1.46").nk(550.0)
array(1.46+0.j)
"""

from .base import KINDS, TRANSPARENT_K_OVER_N, Material, MaterialInfo, is_practically_transparent
from .expression import parse_coefficient, parse_material
from .library import ENV_VAR, find_dataset, get_material, list_materials, material_names
from .mixing import Bruggeman, bruggeman_epsilon
from .models import Cauchy, Constant, Drude, Lorentz, Sellmeier
from .tables import TabulatedMaterial, load_nk_file, read_nk_file

__all__ = [
    "KINDS",
    "TRANSPARENT_K_OVER_N",
    "is_practically_transparent",
    "Material",
    "MaterialInfo",
    "parse_material",
    "parse_coefficient",
    "get_material",
    "find_dataset",
    "list_materials",
    "material_names",
    "load_nk_file",
    "read_nk_file",
    "TabulatedMaterial",
    "Constant",
    "Cauchy",
    "Sellmeier",
    "Drude",
    "Lorentz",
    "Bruggeman",
    "bruggeman_epsilon",
    "ENV_VAR",
]

"""Heat tint: temper colours of steel, heat tint of stainless steel and copper, against oxide thickness.

Heating a clean metal in air grows a thin oxide whose interference colour the trade reads as
temperature. The colour depends on the thickness (and the oxide), the thickness on temperature,
time, atmosphere and alloy; filmoptic computes only the thickness ↔ colour part and never a
temperature. Each model states its oxide plainly:

- ``steel``: one layer of magnetite (Fe3O4, Querry 1985) on iron (Johnson & Christy 1974). The
  scale grown on steel at tempering temperatures holds both magnetite and hematite
  (V. Goossens, J. Wielant, S. Van Gils, R. Finsy & H. Terryn, "Optical properties of thin iron
  oxide films on steel", Surf. Interface Anal. 38 (2006), doi:10.1002/sia.2219); the thinner
  hematite part and the steel's carbon and alloy content are left out.
- ``stainless-steel``: one layer of hematite (α-Fe2O3, Querry 1985) on austenitic stainless
  steel (Karlsson & Ribbing 1982). The real tint oxide is chromium-rich (Fe,Cr)2O3 of the same
  corundum structure; no open Cr2O3 data were found, so hematite stands in for it.
- ``copper``: one layer of cuprous oxide (Cu2O) on copper (Johnson & Christy 1972). No citable
  visible-range Cu2O data were found, so this model cannot give colours until you supply the
  oxide's table (``oxide="file:my_cu2o.txt"`` or a FILMOPTIC_NKDATA dataset).

Examples
--------
>>> model = heat_tint_model("steel")
>>> model.stack
'Fe3O4 ? / Fe'
>>> heat_tint_colours(model, [20.0, 45.0]).colours.hex.tolist()
['#a0926f', '#24006c']
"""

from __future__ import annotations

from dataclasses import dataclass

from filmoptic.errors import FilmopticError

from .oxide_film import FilmColours, MatchResult, colour_matches, film_colours, oxide_stack

__all__ = ["OxideModel", "HEAT_TINT_MODELS", "heat_tint_model", "heat_tint_colours", "thickness_for_colour",
           "DEFAULT_RANGE_NM", "DEFAULT_TOLERANCE"]

#: Oxide thicknesses searched by default: heat-tint colours of the first orders lie well inside.
DEFAULT_RANGE_NM = (0.0, 200.0)
#: Largest ΔE00 that counts as "this colour" by default when reading a tint by eye: a clearly
#: visible but close difference (CIE 142-2001 scale); change it to suit your lighting and parts.
DEFAULT_TOLERANCE = 5.0


@dataclass(frozen=True)
class OxideModel:
    """One oxide layer on one metal, as a heat-tint model.

    Attributes
    ----------
    key : str
        ``steel``, ``stainless-steel`` or ``copper``.
    title : str
    metal, oxide : str
        As written in a stack.
    statement : str
        The model in plain words (what it includes and what it leaves out).
    """

    key: str
    title: str
    metal: str
    oxide: str
    statement: str

    @property
    def stack(self) -> str:
        return oxide_stack(self.oxide, self.metal)


HEAT_TINT_MODELS = {
    "steel": OxideModel(
        "steel", "temper colours of steel", "Fe", "Fe3O4",
        "one layer of magnetite (Fe3O4, Querry 1985) on iron (Johnson & Christy 1974); the outer "
        "hematite part of the real scale (Goossens et al. 2006) and the steel's alloying are left out",
    ),
    "stainless-steel": OxideModel(
        "stainless-steel", "heat tint of stainless steel", "stainless-steel", "Fe2O3",
        "one layer of hematite (α-Fe2O3, Querry 1985) on austenitic stainless steel (Karlsson & "
        "Ribbing 1982), standing in for the chromium-rich (Fe,Cr)2O3 tint oxide, for which no open "
        "Cr2O3 data were found",
    ),
    "copper": OxideModel(
        "copper", "heat tint of copper", "Cu", "Cu2O",
        "one layer of cuprous oxide (Cu2O) on copper (Johnson & Christy 1972); the later black CuO "
        "layer is left out",
    ),
}

_ALIASES = {
    "steel": "steel", "carbon-steel": "steel", "iron": "steel", "fe": "steel", "temper": "steel",
    "stainless": "stainless-steel", "stainless-steel": "stainless-steel", "inox": "stainless-steel",
    "copper": "copper", "cu": "copper",
}


def heat_tint_model(name: str, *, oxide: str | None = None, metal: str | None = None) -> OxideModel:
    """The heat-tint model ``name`` (steel, stainless-steel, copper), with optional own data.

    Raises :class:`~filmoptic.errors.FilmopticError` (one line) when the oxide or the metal has
    no data over 380–780 nm, saying what is missing — for copper by default, since no citable
    visible-range Cu2O data exist in the open sets.
    """
    from dataclasses import replace

    from filmoptic.materials import parse_material
    from filmoptic.materials.gaps import COLOUR_RANGE_NM, gap_note, serves_colour

    key = _ALIASES.get(str(name).strip().lower())
    if key is None:
        raise FilmopticError(
            f"no heat-tint model {name!r}: choose steel, stainless-steel or copper "
            "(or give your own with --oxide and --metal)"
        )
    model = HEAT_TINT_MODELS[key]
    if oxide or metal:
        model = replace(model, oxide=oxide or model.oxide, metal=metal or model.metal,
                        statement=f"one layer of {oxide or model.oxide} on {metal or model.metal} (your choice)")
    for role, text in (("oxide", model.oxide), ("metal", model.metal)):
        material = parse_material(text)
        if not serves_colour(material.wavelength_range_nm):
            lo, hi = material.wavelength_range_nm
            missing = gap_note(text.split(":", 1)[0])
            why = f": {missing}" if missing else "; choose another dataset or your own table"
            raise FilmopticError(
                f"{model.title}: the {role} data {text} cover {lo:g}–{hi:g} nm, not the "
                f"{COLOUR_RANGE_NM[0]:g}–{COLOUR_RANGE_NM[1]:g} nm colours need{why}"
            )
    return model


def heat_tint_colours(model: OxideModel | str, thickness_nm, *, illuminant="D65", observer=2,
                      angle_deg=0.0, progress=None) -> FilmColours:
    """Reflected colour of the model's oxide at every thickness (one vectorised engine call)."""
    model = model if isinstance(model, OxideModel) else heat_tint_model(model)
    return film_colours(model.stack, thickness_nm, illuminant=illuminant, observer=observer,
                        angle_deg=angle_deg, progress=progress, what=model.title)


def thickness_for_colour(model: OxideModel | str, lab, *, range_nm=DEFAULT_RANGE_NM,
                         tolerance=DEFAULT_TOLERANCE, illuminant="D65", angle_deg=0.0) -> MatchResult:
    """Oxide thickness ranges whose colour matches ``lab``, one per order that brings it round.

    Several orders can show the same named colour (a first-order and a second-order blue, say):
    every one within ``tolerance`` (ΔE00) is returned, thinnest first, with its thickness range,
    so the ambiguity is visible rather than resolved by a guess.
    """
    model = model if isinstance(model, OxideModel) else heat_tint_model(model)
    return colour_matches(model.stack, lab, range_nm=range_nm, tolerance=tolerance,
                          illuminant=illuminant, angle_deg=angle_deg, what=model.title)

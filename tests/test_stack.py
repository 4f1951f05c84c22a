"""Stack notation (README.md) and the Stack/Layer model (DEVELOPERS.md contract)."""

from __future__ import annotations


import pytest

from filmoptic.errors import FilmopticError, StackSyntaxError, UnknownMaterialError
from filmoptic.params import Free
from filmoptic.stack import MAX_REPEAT, Layer, Stack, parse_stack


def test_layers_in_the_order_light_meets_them():
    s = parse_stack("TiO2 60nm / SiO2 95nm / glass 3mm")
    assert [layer.material.name for layer in s.layers] == ["TiO2", "SiO2"]
    assert [layer.thickness_nm for layer in s.layers] == [60.0, 95.0]
    assert not any(layer.thick for layer in s.layers)
    assert s.substrate.material.name == "glass"
    assert s.substrate.thick and s.substrate.thickness_nm == 3e6
    assert s.ambient.name == "air" and s.exit_medium is s.ambient
    assert s.text == "TiO2 60nm / SiO2 95nm / glass 3mm"
    assert [layer.text for layer in s.layers] == ["TiO2 60nm", "SiO2 95nm"]


@pytest.mark.parametrize("text, nm, thick", [
    ("Ti 12nm / glass", 12.0, False),
    ("Ti 12 nm / glass", 12.0, False),
    ("Ti 1.2um / glass", 1200.0, False),
    ("Ti 1.2µm / glass", 1200.0, False),
    ("Ti 1.2 μm / glass", 1200.0, False),
    ("Ti 0.5mm / glass", 5e5, True),
    ("Ti 0nm / glass", 0.0, False),
    ("Ti 1e1nm / glass", 10.0, False),
])
def test_thickness_units(text, nm, thick):
    layer = parse_stack(text).layers[0]
    assert layer.thickness_nm == pytest.approx(nm)
    assert layer.thick is thick


def test_half_space_and_thick_substrates():
    assert parse_stack("Ti 10nm / Si").substrate.thickness_nm is None
    assert parse_stack("Si").layers == ()


def test_thick_slab_inside_the_stack():
    s = parse_stack("Ti 10nm / glass 2mm / water")
    assert s.layers[1].thick and s.layers[1].thickness_nm == 2e6
    assert s.substrate.material.name == "water"


def test_separators_without_spaces_and_file_paths_with_slashes(tmp_path):
    folder = tmp_path / "tables"
    folder.mkdir()
    path = folder / "film.nk"
    path.write_text("# material: myfilm\n400 2.0 0.01\n800 1.9 0.0\n", encoding="utf-8")
    # The '/' inside the path does not split items; '/' with or without spaces does.
    s = parse_stack(f"Ti 5nm/file:{path.as_posix()} 40nm / glass")
    assert len(s.layers) == 2
    assert s.layers[1].thickness_nm == 40.0
    assert s.layers[1].material.dataset == "file"
    inside_mix = parse_stack(f"mix(file:{path.as_posix()},n=1.5,0.2) 10nm / glass")
    assert len(inside_mix.layers) == 1


def test_materials_with_commas_parentheses_and_spaces():
    s = parse_stack("mix(Ti, TiO2, 30%) 20nm / cauchy(1.45, 0.004, 0) 1.2 um / n = 2.54+3.43j 5nm / n = 1.5")
    assert len(s.layers) == 3
    assert s.layers[0].thickness_nm == 20.0
    assert s.layers[1].thickness_nm == 1200.0
    assert complex(s.layers[2].material.nk(500.0)) == 2.54 + 3.43j
    assert complex(s.substrate.material.nk(500.0)) == 1.5


def test_repeat_groups_expand_and_nest():
    s = parse_stack("[TiO2 55nm / SiO2 92nm]x4 / glass 1mm")
    assert [layer.material.name for layer in s.layers] == ["TiO2", "SiO2"] * 4
    nested = parse_stack("[n=2 10nm / [n=1.5 5nm / n=3 7nm] x 2]x3 / n=1.5")
    assert [layer.thickness_nm for layer in nested.layers] == [10.0, 5.0, 7.0, 5.0, 7.0] * 3
    assert len(parse_stack("[n=2 10nm]×2 / n=1").layers) == 2
    assert len(parse_stack(f"[n=2 10nm]x{MAX_REPEAT} / n=1").layers) == MAX_REPEAT


def test_unknowns_and_parameters_in_reading_order():
    s = parse_stack("cauchy(?,0.01,0) 150..500nm / Ti ? / glass 1mm")
    assert [p.name for p in s.parameters] == [
        "cauchy A (layer 1)", "thickness (layer 1)", "Ti thickness (layer 2)",
    ]
    assert [p.kind for p in s.parameters] == ["coefficient", "thickness", "thickness"]
    assert s.parameters[1].free == Free(150.0, 500.0) and s.parameters[1].unit == "nm"
    assert s.thickness_parameters == (1, 2)
    assert s.thickness_columns() == (0, 1, None)
    bound = s.bind([1.9, 310.0, 12.0])
    assert bound.parameters == ()
    assert bound.layers[0].thickness_nm == 310.0 and bound.layers[1].thickness_nm == 12.0
    assert complex(bound.layers[0].material.nk(1000.0)) == pytest.approx(1.9 + 0.01)


def test_range_units_convert():
    assert parse_stack("Ti 0.01..0.05um / glass").layers[0].thickness_nm == Free(10.0, 50.0)
    assert parse_stack("Ti 10 .. 50 nm / glass").layers[0].thickness_nm == Free(10.0, 50.0)
    assert parse_stack("Ti 10..50nm / glass").layers[0].thickness_nm == Free(10.0, 50.0)


def test_an_unknown_in_a_repeat_group_is_shared():
    # The same recipe runs each time, so '?' in a group is one unknown for every repeat.
    s = parse_stack("[TiO2 ? / SiO2 92nm]x3 / glass")
    assert len(s.parameters) == 1
    assert s.thickness_columns() == (0, None, 0, None, 0, None, None)
    assert [layer.thickness_nm for layer in s.bind([40.0]).layers] == [40.0, 92.0] * 3


def test_bind_checks_values():
    s = parse_stack("Ti ? / glass")
    with pytest.raises(FilmopticError, match="1 unknown"):
        s.bind([])
    with pytest.raises(FilmopticError, match="negative"):
        s.bind([-3.0])
    with pytest.raises(FilmopticError, match="finite"):
        s.bind([float("nan")])


def test_bare_and_reversed():
    s = parse_stack("Cr 10nm / TiO2 40nm / glass 3mm", ambient="water")
    bare = s.bare()
    assert bare.layers == () and bare.substrate == s.substrate and bare.ambient is s.ambient
    r = s.reversed()
    assert [layer.text for layer in r.layers] == ["glass 3mm", "TiO2 40nm", "Cr 10nm"]
    assert r.layers[0].thick
    assert r.substrate.thickness_nm is None and r.substrate.material is s.ambient
    assert r.ambient is s.exit_medium
    half = parse_stack("TiO2 40nm / Si").reversed()
    assert half.ambient.name == "Si" and half.substrate.material.name == "air"


def test_stack_can_be_built_directly():
    from filmoptic.materials import Constant

    s = Stack((Layer(Constant(2.0), Free(), False, "n=2 ?"),), Layer(Constant(1.5), None, False, "n=1.5"),
              Constant(1.0), Constant(1.0))
    assert [p.name for p in s.parameters] == ["n=2 thickness (layer 1)"]
    assert s.bind([5.0]).layers[0].thickness_nm == 5.0


# -- errors: one line, naming the item and what was expected --------------------------------
@pytest.mark.parametrize("text, fragments", [
    ("", ["empty stack"]),
    ("   ", ["empty stack"]),
    ("TiO2 55 / glass", ["item 1", "'TiO2 55'", "no unit", "55nm"]),
    ("TiO2 55nm", ["item 1", "substrate"]),
    ("TiO2 55nm / glass ?", ["item 2", "unknown thickness"]),
    ("TiO2 55nm / glass 55nm", ["item 2", "substrate", "mm"]),
    ("TiO2 55nm / / glass", ["item 2", "empty", "two '/'"]),
    ("TiO2 55nm // glass", ["item 2", "empty"]),
    ("/ glass", ["item 1", "empty"]),
    ("TiO2 55nm /", ["item 2", "empty"]),
    ("TiO2 -5nm / glass", ["item 1", "negative"]),
    ("TiO2 / glass", ["item 1", "needs a thickness"]),
    ("55nm / glass", ["item 1", "no material"]),
    ("TiO2 fifty / glass", ["item 1", "'fifty'", "thickness"]),
    ("TiO2 5 nmm / glass", ["item 1", "thickness"]),
    ("TiO2 1e400nm / glass", ["item 1", "finite"]),
    ("TiO2 2000mm / glass", ["item 1", "absurdly large"]),
    ("TiO2 50..10nm / glass", ["item 1", "LOW < HIGH"]),
    ("TiO2 10..50 / glass", ["item 1", "no unit"]),
    ("TiO2 0mm / glass", ["item 1", "thick slab", "positive"]),
    ("TiO2 5nm / glass 0mm", ["item 2", "positive"]),
    ("[TiO2 55nm / SiO2 92nm]x0 / glass", ["item 1", "at least once"]),
    ("[TiO2 55nm / SiO2 92nm]x20000 / glass", ["item 1", "absurd"]),
    ("[TiO2 55nm / SiO2 92nm]x2.5 / glass", ["item 1", "whole number"]),
    ("[TiO2 55nm / SiO2 92nm] / glass", ["item 1", "[LAYERS]xN"]),
    ("[TiO2 55nm / SiO2 92nm]x / glass", ["item 1", "repeat count"]),
    ("[TiO2 55nm / SiO2 92nm x4 / glass", ["missing"]),
    ("TiO2 55nm / SiO2 92nm]x4 / glass", ["unbalanced"]),
    ("[]x3 / glass", ["item 1", "empty"]),
    ("[TiO2 55nm / / SiO2 92nm]x2 / glass", ["item 1.2", "empty"]),
    ("[TiO2 55 / SiO2 92nm]x2 / glass", ["item 1.1", "no unit"]),
    ("[TiO2 55nm]x2", ["substrate", "not a repeat group"]),
    ("[[n=2 5nm]x1000]x1000 / glass", ["item 1", "layers"]),
])
def test_syntax_errors_point_at_the_item(text, fragments):
    with pytest.raises(StackSyntaxError) as info:
        parse_stack(text)
    message = str(info.value)
    assert "\n" not in message
    for fragment in fragments:
        assert fragment.lower() in message.lower(), (fragment, message)


# Slips of the keyboard that common practice produces: a decimal comma (most of Europe writes
# 12,5), another list separator, a length in cm (Ångström is a unit of the notation: see
# test_notation.py).
# Each error says what was meant, in the notation's own terms.
@pytest.mark.parametrize("text, fragments", [
    ("Ti 12,5nm / glass", ["item 1", "'12,5'", "decimal comma", "'12.5nm'"]),
    ("Ti 12,5 nm / glass", ["item 1", "decimal comma", "'12.5nm'"]),
    ("SiO2 1,2um / glass", ["item 1", "decimal comma", "'1.2um'"]),
    ("n=2.3 12,5nm / glass", ["item 1", "decimal comma", "'12.5nm'"]),
    ("Ti 12nm, glass", ["item 1", "separated by ' / '", "not ','", "'Ti 12nm / glass'"]),
    ("Ti 12nm | glass", ["item 1", "separated by ' / '", "not '|'", "'Ti 12nm / glass'"]),
    ("Ti 12nm; glass 3mm", ["item 1", "separated by ' / '", "not ';'", "'Ti 12nm / glass 3mm'"]),
    ("Ti 12nm, glass 3mm", ["item 1", "separated by ' / '", "'Ti 12nm / glass 3mm'"]),
    ("mix(Ti,TiO2,0.3) 12nm, glass", ["item 1", "not ','", "'mix(Ti,TiO2,0.3) 12nm / glass'"]),
    ("TiO2 60nm,/ glass", ["item 1", "separated by ' / '"]),
    # 1 cm = 10 mm (definition).
    ("glass 4cm", ["item 1", "'cm' is not a unit here", "'40mm'", "thick slab"]),
    ("Ti 12nm / glass 0.5cm", ["item 2", "'cm'", "'5mm'"]),
])
def test_common_slips_get_a_pointed_hint(text, fragments):
    with pytest.raises(StackSyntaxError) as info:
        parse_stack(text)
    message = str(info.value)
    assert "\n" not in message
    for fragment in fragments:
        assert fragment.lower() in message.lower(), (fragment, message)


def test_commas_inside_materials_are_not_separators():
    # Commas belong to mix(…) and model coefficients; a real unknown material still gets the
    # library's suggestions, not the separator hint.
    assert parse_stack("mix(Ti,TiO2,0.3) 12nm / cauchy(1.45,0.004,0) 5nm / glass").layers[1].thickness_nm == 5.0
    with pytest.raises(UnknownMaterialError, match="TiO2"):
        parse_stack("mix(Ti,TiO3,0.3) 12nm / glass")


def test_unknown_material_suggests_library_names():
    with pytest.raises(UnknownMaterialError) as info:
        parse_stack("TiO3 55nm / glass")
    message = str(info.value)
    assert "item 1" in message and "TiO3" in message and "TiO2" in message


def test_ambient_errors():
    with pytest.raises(UnknownMaterialError, match="ambient"):
        parse_stack("glass", ambient="aer")
    with pytest.raises(StackSyntaxError, match="unknowns"):
        parse_stack("glass", ambient="n=?")


def test_not_text():
    with pytest.raises(StackSyntaxError):
        parse_stack(None)

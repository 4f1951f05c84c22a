"""``filmoptic materials``: list the optical-constant library, or show one material."""

from __future__ import annotations

import click

from filmoptic.cli._common import WavelengthsType, emit_json, json_option, print_table, user_errors

__all__ = ["materials"]

# n and k are shown at these wavelengths (those inside each dataset's range) unless --wl says.
SHOW_WAVELENGTHS_NM = (300.0, 400.0, 500.0, 600.0, 700.0, 800.0, 900.0, 1000.0)
# A plot spans the data within this window unless --range says otherwise.
PLOT_WINDOW_NM = (250.0, 2500.0)
PLOT_POINTS = 800


@click.command("materials")
@click.argument("name", required=False, metavar="[NAME]")
@click.option("--kind", type=click.Choice(["metal", "dielectric", "semiconductor", "substrate", "ambient"]),
              help="List only materials of this kind.")
@click.option("--for", "use", type=click.Choice(["visible", "colour", "color"], case_sensitive=False),
              help="List only datasets fit for this use: 'visible' (or 'colour') keeps those that cover "
                   "380–780 nm, the range every colour and luminous value is computed over.")
@click.option("--wl", type=WavelengthsType(), default=None, metavar="WL",
              help="Wavelengths (nm) at which to show n and k: START:STOP:STEP or a comma list. "
                   "Default: 300 to 1000 nm in steps of 100 nm, where the data reach.")
@click.option("--plot", "plot_path", type=click.Path(dir_okay=False), metavar="FILE",
              help="Draw n and k against wavelength into FILE (.png, .svg or .pdf); needs NAME.")
@click.option("--range", "plot_range", metavar="START:STOP",
              help="Wavelength range of the plot in nm (default: the data's range within 250–2500 nm).")
@json_option
def materials(name, kind, use, wl, plot_path, plot_range, as_json):
    """List the optical-constant library, or show one material.

    Without NAME, every material is listed with its datasets: the default dataset (the one a
    stack uses when it names the material alone) is marked with *, followed by the others,
    which a stack selects as NAME:DATASET, for example Au:Yakubovsky-2017-25nm. Each line gives
    the kind of material, the wavelength range the data cover, whether they can serve colour
    work (colours need data over 380–780 nm; 'no' marks a dataset that stops short) and the
    publication the data come from. --for visible lists only the datasets that can. Materials
    that were looked for and not found as citable visible-range data (copper oxides, Cr2O3,
    ZrN) are named at the end, with what that means for the colours that need them, followed by
    the common names a stack accepts for library names (copper for Cu, float glass for glass,
    quartz for fused silica …).

    With NAME, every dataset of that material is shown with its full citation, the kind of
    sample that was measured, the wavelength range, the licence and n and k at a few
    wavelengths. NAME may also be NAME:DATASET, or any material as written in a stack
    (n=1.46, cauchy(1.45,0.004,0), mix(Ti,TiO2,0.3), file:PATH).

    \b
    Examples:
      filmoptic materials
      filmoptic materials --kind metal
      filmoptic materials --for visible --kind dielectric
      filmoptic materials TiO2
      filmoptic materials Au --plot gold.png
      filmoptic materials Ti:Werner-2009 --wl 400:800:50 --json

    Your own tables go in a folder named by the environment variable FILMOPTIC_NKDATA: one file
    per dataset, rows of wavelength_nm n k, under '#' header lines that name the material and
    the dataset (the shipped files in the package's nkdata folder show the full format). They add to the
    library and replace a shipped dataset of the same name, which the listing then points out.
    """
    with user_errors():
        if name is None:
            if plot_path:
                raise click.UsageError("--plot needs a NAME: filmoptic materials NAME --plot FILE")
            _list(kind, use, as_json)
        else:
            if use:
                raise click.UsageError("--for filters the listing: leave out NAME, or leave out --for")
            _show(name, wl, plot_path, plot_range, as_json)


def _list(kind, use, as_json):
    from filmoptic.materials import list_materials
    from filmoptic.materials.base import format_range_nm
    from filmoptic.materials.gaps import GAPS, serves_colour
    from filmoptic.materials.library import ENV_VAR, library_folders

    infos = [i for i in list_materials() if kind is None or i.kind == kind]
    if use:
        infos = [i for i in infos if serves_colour(i.wavelength_range_nm)]
    if as_json:
        emit_json([_info_json(i) for i in infos])
        return
    rows = [
        [i.name, ("* " if i.default else "  ") + i.dataset, i.kind, i.form or "–",
         format_range_nm(i.wavelength_range_nm), "yes" if serves_colour(i.wavelength_range_nm) else "no",
         i.short_reference]
        for i in infos
    ]
    print_table(["name", "dataset", "kind", "measured on", "range", "colour", "reference"], rows)
    click.echo("\n* default dataset; select another as NAME:DATASET. `filmoptic materials NAME` shows "
               "full citations and n, k.")
    click.echo("measured on: a thin film (with its thickness: closest to films of that thickness), a "
               "thick film, bulk material, or a model fitted to several sources.")
    click.echo("colour: 'no' = the data stop short of 380–780 nm, so no colour can be computed with them.")
    if kind is None:
        click.echo("Not in the library as visible-range data (looked for, none citable found):")
        for key, note in GAPS.items():
            click.echo(f"  {_GAP_NAMES.get(key, key)}: {note}")
        _common_names_table()
    folders = library_folders()
    if len(folders) > 1:
        click.echo(f"Your tables from {ENV_VAR}={folders[1][0]} are included.")
    for info in infos:
        if info.overrides:
            click.echo(f"Note: {info.label} from {info.path} replaces the shipped dataset of that name.")


def _common_names_table() -> None:
    """The common names a stack accepts for library names, grouped by library name, wrapped."""
    import textwrap

    from filmoptic.materials.common_names import COMMON_NAMES

    grouped, notes = {}, []
    for common, (notation, note) in COMMON_NAMES.items():
        grouped.setdefault(notation, []).append(common)
        if note:
            notes.append(f"{common}: {note}")
    pairs = ", ".join(f"{'/'.join(names)} = {notation}" for notation, names in grouped.items())
    click.echo("")
    click.echo("Common names, accepted in stacks and here (e.g. 'copper 12nm / float glass 4mm'):")
    click.echo(textwrap.fill(pairs, width=100, initial_indent="  ", subsequent_indent="  ",
                             break_on_hyphens=False))
    for line in notes:
        click.echo(f"  {line}")


# How the gap table's keys are written for people.
_GAP_NAMES = {"cu2o": "Cu2O", "cuo": "CuO", "cr2o3": "Cr2O3", "zrn": "ZrN"}


def _colour_fitness(info) -> str:
    from filmoptic.materials.gaps import gap_note, serves_colour

    note = gap_note(info.name)
    if serves_colour(info.wavelength_range_nm):
        return "yes (covers 380–780 nm)"
    return "no: the data stop short of 380–780 nm" + (f"; {note}" if note else "")


def _info_json(info, nk=None):
    from filmoptic.materials.gaps import gap_note, serves_colour

    out = {
        "name": info.name,
        "dataset": info.dataset,
        "default": info.default,
        "kind": info.kind,
        "reference": info.reference,
        "citation": info.citation,
        "sample": info.sample,
        "form": info.form,
        "wavelength_nm": list(info.wavelength_range_nm),
        "serves_colour": serves_colour(info.wavelength_range_nm),
        "licence": info.licence,
        "aliases": list(info.aliases),
        "source": info.source,
        "overrides": info.overrides,
        "path": info.path,
    }
    note = gap_note(info.name)
    if note:
        out["note"] = note
    if nk is not None:
        out["nk"] = nk
    return out


def _selected(name):
    """[(MaterialInfo or None, Material)] for a library name, NAME:DATASET or any material text."""
    from filmoptic.materials import find_dataset, get_material, list_materials, parse_material
    from filmoptic.materials.expression import _NAME_RE

    from filmoptic.materials.common_names import common_name

    text = name.strip()
    # "file:PATH" also matches NAME:DATASET's pattern; it is a user's table, not a library name.
    if (_NAME_RE.match(text) or common_name(text.partition(":")[0])) and text[:5].lower() != "file:":
        base, _, dataset = text.partition(":")
        if dataset.strip():
            info = find_dataset(base, dataset)
            return [(info, get_material(info.name, info.dataset))]
        info = find_dataset(base)  # raises UnknownMaterialError with suggestions
        infos = [i for i in list_materials() if i.name == info.name]
        return [(i, get_material(i.name, i.dataset)) for i in infos]
    return [(None, parse_material(text))]


def _values_at(material, wavelengths):
    import numpy as np

    lo, hi = material.wavelength_range_nm
    wl = np.asarray(wavelengths, dtype=float)
    inside = (wl >= lo - 1e-9 * hi) & (wl <= hi * (1 + 1e-9))
    if wavelengths is SHOW_WAVELENGTHS_NM:
        wl = wl[inside]
        if wl.size == 0:  # data far from the visible: five points across the data instead
            wl = np.geomspace(lo, hi, 5)
        inside = np.ones(wl.shape, bool)
    N = np.full(wl.shape, np.nan + 1j * np.nan)
    if inside.any():
        N[inside] = material.nk(wl[inside])
    return [
        {"wavelength_nm": float(w), "n": None if np.isnan(v.real) else float(v.real),
         "k": None if np.isnan(v.imag) else float(v.imag)}
        for w, v in zip(wl, N)
    ]


def _show(name, wl, plot_path, plot_range, as_json):
    from filmoptic.cli._common import check_plot_path, save_plot
    from filmoptic.materials.base import format_range_nm

    if plot_path:
        check_plot_path(plot_path)
    selected = _selected(name)
    wavelengths = SHOW_WAVELENGTHS_NM if wl is None else wl
    tables = [[] if m.free_parameters() else _values_at(m, wavelengths) for _, m in selected]

    if plot_path:
        from filmoptic.plots.nk import plot_nk

        curves = _plot_curves(selected, plot_range)
        title = selected[0][1].name if len(selected) > 1 else selected[0][1].label
        save_plot(plot_nk(curves, title=title), plot_path)

    if as_json:
        out = []
        for (info, material), nk in zip(selected, tables):
            if info is not None:
                out.append(_info_json(info, nk))
            else:
                out.append({
                    "name": material.name, "dataset": material.dataset, "default": True,
                    "kind": material.kind, "reference": material.reference, "citation": "",
                    "sample": "", "wavelength_nm": list(material.wavelength_range_nm), "licence": "",
                    "aliases": [], "source": "expression", "overrides": False, "path": "",
                    "free_parameters": [n for n, _ in material.free_parameters()], "nk": nk,
                })
        emit_json(out)
        return

    for number, ((info, material), nk) in enumerate(zip(selected, tables)):
        if number:
            click.echo("")
        if info is not None:
            click.echo(f"{info.label}{'  (default)' if info.default else ''}")
            fields = [
                ("kind", info.kind),
                ("sample", info.sample or "–"),
                ("measured on", info.form or "–"),
                ("range", format_range_nm(info.wavelength_range_nm)),
                ("colour work", _colour_fitness(info)),
                ("reference", info.reference or "–"),
                ("licence", info.licence or "–"),
            ]
            if info.aliases:
                fields.append(("also called", ", ".join(info.aliases)))
            fields.append(("file", info.path + ("  (yours; replaces the shipped one)" if info.overrides else "")))
        else:
            click.echo(material.name)
            fields = [
                ("kind", material.kind),
                ("range", format_range_nm(material.wavelength_range_nm)),
                ("reference", material.reference or "–"),
            ]
        width = max(len(k) for k, _ in fields)
        for key, value in fields:
            click.echo(f"  {key.ljust(width)}  {value}")
        free = material.free_parameters()
        if free:
            click.echo(f"  free values: {', '.join(f'{n} = {f}' for n, f in free)} (n and k need numbers)")
            continue
        rows = [[f"{r['wavelength_nm']:g}",
                 "–" if r["n"] is None else f"{r['n']:.4f}",
                 "–" if r["k"] is None else f"{r['k']:.4f}"] for r in nk]
        click.echo("")
        print_table(["wavelength_nm", "n", "k"], rows)
        if any(r["n"] is None for r in nk):
            click.echo("– : outside the data's range")
    if plot_path:
        click.echo(f"\nPlot written to {plot_path}")


def _plot_curves(selected, plot_range):
    import math

    import numpy as np

    from filmoptic.errors import FilmopticError
    from filmoptic.units import parse_range_nm

    for _, material in selected:
        if material.free_parameters():
            raise FilmopticError(f"{material.name} has free values; give them numbers to plot it")
    ranges = [m.wavelength_range_nm for _, m in selected]
    if plot_range:
        lo, hi = parse_range_nm(plot_range, "--range")[:2]
        if lo <= 0:
            raise FilmopticError("--range: wavelengths must be positive")
    else:
        lo = max(min(r[0] for r in ranges), PLOT_WINDOW_NM[0])
        hi = min(max(r[1] for r in ranges), PLOT_WINDOW_NM[1])
        if all(r[0] <= 0 and math.isinf(r[1]) for r in ranges):
            lo, hi = 300.0, 1000.0
        elif lo >= hi:  # data entirely outside the usual window
            lo, hi = min(r[0] for r in ranges), max(r[1] for r in ranges)
    curves = []
    for info, material in selected:
        a, b = max(lo, material.wavelength_range_nm[0]), min(hi, material.wavelength_range_nm[1])
        if a >= b:
            continue
        wl = np.linspace(a, b, PLOT_POINTS)
        label = info.dataset + (" (default)" if info.default else "") if info is not None else material.name
        curves.append((label, wl, material.nk(wl)))
    if not curves:
        raise FilmopticError(
            f"--range {lo:g}:{hi:g} nm lies outside the data of {selected[0][1].name}"
        )
    return curves

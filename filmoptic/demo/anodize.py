"""Demo part "anodize": a colour chart for anodised titanium bookmarks (fictional job 4).

All inputs come from :mod:`filmoptic.demo.scenario`. Writes a printable tile sheet (PNG and PDF)
and a CSV of colour against voltage into the output folder.
"""

from __future__ import annotations

import pathlib

from filmoptic.files import write_csv

__all__ = ["run"]


def run(outdir: pathlib.Path, say) -> None:
    """Run the anodising part of the demo, writing a chart and a table into ``outdir``."""
    from filmoptic.colouring.anodize import ANODIZING_CAUTION, anodize_colours, growth_law, voltages_for_colour
    from filmoptic.demo import scenario as sc
    from filmoptic.plots import save_figure
    from filmoptic.plots.tiles import tile_sheet
    from filmoptic.inverse.solve import lab_from_hex
    from filmoptic.units import inclusive_grid

    outdir = pathlib.Path(outdir)
    law = growth_law(sc.ANODIZE_METAL, sc.ANODIZE_NM_PER_VOLT, sc.ANODIZE_OFFSET_NM)
    chart = anodize_colours(sc.ANODIZE_METAL, inclusive_grid(*sc.ANODIZE_VOLTS), law=law)
    film = chart.film
    say(f"Bookmarks in anodised {sc.ANODIZE_METAL}, the studio's bath: {law.describe()} (its own calibration).")
    say(f"  {chart.oxide_note}")
    rows = []
    for i, v in enumerate(chart.volts):
        L, a, b = film.colours.Lab[i]
        rows.append([f"{v:g}", f"{film.thickness_nm[i]:.1f}", str(film.colours.hex[i]), f"{L:.2f}", f"{a:.2f}",
                     f"{b:.2f}", f"{film.luminous_R[i]:.4f}"])
    write_csv(outdir / "anodize_titanium.csv", ["volts", "thickness_nm", "hex", "L", "a", "b", "luminous_R"], rows)
    for v in (20.0, 30.0, 60.0, 75.0, 100.0):
        i = int(abs(chart.volts - v).argmin())
        L, a, b = film.colours.Lab[i]
        say(f"  {chart.volts[i]:5.0f} V  {film.thickness_nm[i]:6.1f} nm  {film.colours.hex[i]}  "
            f"L* {L:5.1f}  a* {a:+6.1f}  b* {b:+6.1f}")
    def sheet():
        return tile_sheet(film.colours, [f"{v:g} V" for v in chart.volts],
                          [f"{d:.0f} nm" for d in film.thickness_nm],
                          title=f"Anodised {sc.ANODIZE_METAL} bookmarks: colour by voltage",
                          subtitle=f"{law.formula()} (the studio's bath) · seen in reflection · D65, 2° observer",
                          notes=[chart.oxide_note[0].upper() + chart.oxide_note[1:] + ".",
                                 "Fictional scenario: the bath's law is invented for the demo."])

    for suffix in ("png", "pdf"):   # a figure is closed once saved: draw one per file
        save_figure(sheet(), outdir / f"anodize_titanium.{suffix}")
    usual = anodize_colours(sc.ANODIZE_METAL, [sc.ANODIZE_USUAL_VOLTS], law=law).film
    say(f"At the usual {sc.ANODIZE_USUAL_VOLTS:g} V: {usual.thickness_nm[0]:.1f} nm of oxide, {usual.colours.hex[0]}.")
    matches, closest = voltages_for_colour(sc.ANODIZE_METAL, lab_from_hex(sc.ANODIZE_LOGO_HEX), law=law,
                                           volts_range=sc.ANODIZE_VOLTS[:2], tolerance=sc.ANODIZE_MAX_DELTA_E)
    say(f"Voltages for the logo colour {sc.ANODIZE_LOGO_HEX} (ΔE00 ≤ {sc.ANODIZE_MAX_DELTA_E:g}):")
    if not matches:
        say(f"  none; closest ΔE00 {closest.delta_E00:.1f} at {closest.volts:.1f} V ({closest.hex})")
    for m in matches:
        say(f"  order {m.order}: {m.volts:.1f} V (within {m.low_volts:.1f}–{m.high_volts:.1f} V), "
            f"{m.thickness_nm:.1f} nm, ΔE00 {m.delta_E00:.2f}, {m.hex}")
    say("  → anodize_titanium.png, anodize_titanium.pdf (A4 sheet to print), anodize_titanium.csv")
    say(f"  Caution: {ANODIZING_CAUTION}")

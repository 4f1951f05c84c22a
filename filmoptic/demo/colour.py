"""Demo part "colour": colours of oxide films, and the tint of the cabinet semi-mirror.

All inputs come from the fictional scenario in :mod:`filmoptic.demo.scenario`: the oxide-on-titanium
tags, the oxide-on-silicon offcuts and the semi-mirror door. Writes printable charts, a swatch and
CSV tables into the output folder.
"""

from __future__ import annotations

import pathlib

from filmoptic.files import write_csv

__all__ = ["run"]


def _grid(range_nm):
    import numpy as np

    start, stop, step = range_nm
    return start + step * np.arange(int(round((stop - start) / step)) + 1)


def _colour_chart(stack: str, range_nm, name: str, outdir: pathlib.Path, say) -> None:
    import numpy as np

    from filmoptic.describe.ladder import colour_ladder
    from filmoptic.plots import save_figure
    from filmoptic.plots.chart import ladder_chart, thickness_ticks

    ladder = colour_ladder(stack, _grid(range_nm))
    sweep = ladder.sweep
    for suffix in ("png", "pdf"):   # a figure is closed once saved: draw one per file
        save_figure(ladder_chart(ladder), outdir / f"{name}.{suffix}")
    rows = [
        [f"{d:g}", r.hex, *(f"{v:.2f}" for v in r.Lab), "yes" if r.in_gamut else "no", f"{lr:.4f}"]
        for d, r, lr in ((sweep.thickness_nm[i], sweep.reflected[i], sweep.luminous_R[i])
                         for i in range(sweep.thickness_nm.size))
    ]
    write_csv(outdir / f"{name}.csv",
               ["thickness_nm", "reflected_hex", "L", "a", "b", "in_srgb_gamut", "luminous_R"], rows)
    say(f"Colour of {stack} from {range_nm[0]:g} to {range_nm[1]:g} nm (D65, 2°, seen square-on):")
    for t in thickness_ticks(range_nm[0], range_nm[1], target=8):
        i = int(np.argmin(np.abs(sweep.thickness_nm - t)))
        L, a, b = sweep.reflected.Lab[i]
        _, C, h = sweep.reflected.LCh[i]
        say(f"  {sweep.thickness_nm[i]:6.0f} nm  {sweep.reflected.hex[i]}  L* {L:5.1f}  a* {a:+6.1f}  "
            f"b* {b:+6.1f}  hue {h:3.0f}°{'' if sweep.reflected.in_gamut[i] else '  (outside sRGB)'}")
    say(f"  → {name}.png, {name}.pdf (A4 colour ladder to print: a rung every "
        f"{ladder.rungs[1].thickness_nm - ladder.rungs[0].thickness_nm:g} nm, chips {ladder.tolerance_text} "
        f"beside each), {name}.csv")


def run(outdir: pathlib.Path, say) -> None:
    """Run the colour part of the demo, writing charts, a swatch and tables into ``outdir``."""
    from filmoptic.colorimetry import appearance
    from filmoptic.demo import scenario as sc
    from filmoptic.plots import save_figure
    from filmoptic.plots.swatch import swatch_figure
    from filmoptic.inverse.solve import Target, solve_thickness

    outdir = pathlib.Path(outdir)

    # 1. Oxide grown on titanium (the tags) and on silicon (the offcuts): colour versus thickness.
    _colour_chart(sc.OXIDE_ON_METAL_STACK, sc.OXIDE_ON_METAL_RANGE_NM, "colour_oxide_on_titanium", outdir, say)
    say("")
    _colour_chart(sc.OXIDE_ON_SILICON_STACK, sc.OXIDE_ON_SILICON_RANGE_NM, "colour_oxide_on_silicon", outdir, say)

    # 2. One tag, seen at the angles a visitor looks at it from.
    say("")
    tag = appearance(sc.OXIDE_EXAMPLE_STACK, angle_deg=list(sc.VIEWING_ANGLES_DEG))
    say(f"Tag {sc.OXIDE_EXAMPLE_STACK}, reflected colour versus viewing angle (D65):")
    for i, angle in enumerate(sc.VIEWING_ANGLES_DEG):
        one = tag.reflected[i]
        L, a, b = one.Lab
        say(f"  {angle:4.0f}°  {one.hex}  L* {L:5.1f}  a* {a:+6.1f}  b* {b:+6.1f}")

    # 3. The tint of the semi-mirror: the next run's metal at the thickness that meets the target.
    say("")
    stack = f"{sc.NEXT_RUN_MATERIAL} ? / {sc.MIRROR_SUBSTRATE}"
    result = solve_thickness(stack, Target("luminous_T", sc.MIRROR_TARGET_LUMINOUS_T), companions=False)
    if not result.solutions:
        say(f"The semi-mirror target cannot be met with {sc.NEXT_RUN_MATERIAL}; no tint to show.")
        return
    thickness = result.solutions[0].thickness_nm
    mirror_text = f"{sc.NEXT_RUN_MATERIAL} {thickness:.2f}nm / {sc.MIRROR_SUBSTRATE}"
    front = appearance(mirror_text)
    by_angle = appearance(mirror_text, angle_deg=list(sc.VIEWING_ANGLES_DEG))
    say(f"Semi-mirror {mirror_text} (luminous T {100 * front.luminous.T:.1f} %, D65):")
    rows = []
    for key, label, notation, lum in (("reflected", "film side", "Rv", front.luminous.R),
                                      ("reflected_reverse", "glass side", "Rv", front.luminous.R_reverse),
                                      ("transmitted", "through", "Tv", front.luminous.T)):
        c = getattr(front, key)
        L, a, b = c.Lab
        say(f"  {label:11s} {c.hex}  L* {L:5.1f}  a* {a:+5.1f}  b* {b:+5.1f}  {notation} {100 * lum:5.1f} %")
        rows.append([label, c.hex, f"{L:.2f}", f"{a:.2f}", f"{b:.2f}", f"{lum:.4f}"])
    write_csv(outdir / "colour_semi_mirror.csv", ["view", "hex", "L", "a", "b", "luminous"], rows)
    fig = swatch_figure(front, stack_text=mirror_text, by_angle=by_angle, angles_deg=list(sc.VIEWING_ANGLES_DEG))
    save_figure(fig, outdir / "colour_semi_mirror_swatch.png")
    say("  → colour_semi_mirror_swatch.png (an A4 colour sheet), colour_semi_mirror.csv")
    say("  Printed and on-screen colours depend on the device: compare real samples under the shop's lights.")

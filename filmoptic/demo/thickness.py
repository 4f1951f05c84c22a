"""Demo part "thickness": how thick to go, how thick it came out, how long to run next time.

All inputs come from the fictional scenario in :mod:`filmoptic.demo.scenario`.
"""

from __future__ import annotations

import pathlib

from filmoptic.files import write_csv

__all__ = ["run"]


def _pct(value) -> str:
    return "–" if value is None else f"{100 * value:.1f} %"


def _times(value, factor):
    return None if value is None else value * factor


def _cell(value, fmt) -> str:
    return "" if value is None else format(value, fmt)


def run(outdir: pathlib.Path, say) -> None:
    """Run the thickness part of the demo, writing its tables and a plot into ``outdir``."""

    from filmoptic.inverse.choose import compare_materials
    from filmoptic.demo import scenario as sc
    from filmoptic.inverse.rate import fit_rate, parse_run
    from filmoptic.inverse.readings import parse_reading
    from filmoptic.inverse.solve import Reading, Target, solve_thickness

    outdir = pathlib.Path(outdir)

    # 1. Which metal, and how thick, for a semi-mirror passing the target luminous transmittance.
    target = Target("luminous_T", sc.MIRROR_TARGET_LUMINOUS_T)
    table = compare_materials(sc.MIRROR_CANDIDATES, sc.MIRROR_SUBSTRATE, target)
    say(f"Semi-mirror on {sc.MIRROR_SUBSTRATE}, luminous T = {_pct(sc.MIRROR_TARGET_LUMINOUS_T)}:")
    rows = []
    for c in table.candidates:
        if c.thickness_nm is None:
            say(f"  {c.material:3s} cannot reach it ({c.note})")
            continue
        say(f"  {c.material:3s} {c.thickness_nm:6.2f} nm   Rv {_pct(c.luminous_R)} film side, "
            f"{_pct(c.luminous_R_reverse)} glass side, absorbs {_pct(c.absorptance_layers)} "
            f"(+ {_pct(c.absorptance_substrate)} in the glass), "
            f"tint C* {c.reflected_chroma:.1f} (film side), {c.transmitted_chroma:.1f} (through)")
        rows.append([c.material, f"{c.thickness_nm:.3f}", f"{c.luminous_T:.4f}", f"{c.luminous_R:.4f}",
                     f"{c.luminous_R_reverse:.4f}", f"{c.absorptance_layers:.4f}",
                     f"{c.absorptance_substrate:.4f}", f"{c.reflected_chroma:.2f}",
                     f"{c.transmitted_chroma:.2f}", f"{c.change_per_nm:.5f}"])
    write_csv(outdir / "thickness_compare.csv",
               ["material", "thickness_nm", "luminous_T", "luminous_R", "luminous_R_glass_side",
                "absorptance_film", "absorptance_glass", "chroma_reflected", "chroma_transmitted", "luminous_T_change_per_nm"], rows)
    say("  → thickness_compare.csv")

    # 2. The lux-meter reading after the titanium run: thickness with an uncertainty.
    ratio = parse_reading(f"{sc.LUX_COATED}/{sc.LUX_OPEN}").ratio
    reading = Reading(ratio, source=sc.LUX_SOURCE, detector="photopic", reference="open",
                      uncertainty=sc.LUX_UNCERTAINTY * ratio)
    result = solve_thickness(sc.LUX_STACK, reading)
    say("")
    say(f"Lux meter: {sc.LUX_COATED:g} lx through the coated glass, {sc.LUX_OPEN:g} lx open beam "
        f"(illuminant {sc.LUX_SOURCE} lamp) → ratio {_pct(ratio)} ± {100 * sc.LUX_UNCERTAINTY:g} % of it")
    if not result.solutions:
        say(f"  {result.message}")
        return
    measured = result.solutions[0]
    say(f"  {sc.LUX_STACK.replace('?', f'{measured.thickness_nm:.2f} nm')}: film between "
        f"{measured.low_nm:.2f} and {measured.high_nm:.2f} nm "
        f"(the ratio falls {abs(100 * measured.slope_per_nm):.2f} percentage points per nm)")
    write_csv(outdir / "thickness_reading.csv",
               ["reading", "thickness_nm", "low_nm", "high_nm", "slope_per_nm"],
               [[f"{ratio:.5f}", f"{measured.thickness_nm:.3f}", f"{measured.low_nm:.3f}",
                 f"{measured.high_nm:.3f}", f"{measured.slope_per_nm:.5f}"]])

    # A picture of the same (what `filmoptic solve --plot` draws): the modelled ratio against
    # thickness, with the reading's band and the thickness interval.
    from filmoptic.plots import save_figure
    from filmoptic.plots.solve import plot_solve

    save_figure(plot_solve(result, title="Thickness from a lux-meter reading (fictional scenario)"),
                outdir / "thickness_lux.png")
    say("  → thickness_reading.csv, thickness_lux.png")

    # 3. Time for the next run: rate from the two calibration runs, target from step 1.
    runs = [parse_run(f"{duration}:{thickness}", tooling_factor=sc.QCM_TOOLING_FACTOR)
            for duration, thickness in sc.CALIBRATION_RUNS]
    design = next(c for c in table.candidates if c.material == sc.NEXT_RUN_MATERIAL)
    fit = fit_rate(runs, target_nm=design.thickness_nm, tooling_factor=sc.QCM_TOOLING_FACTOR)
    say("")
    say("Calibration runs: " + ", ".join(f"{d} → {t}" for d, t in sc.CALIBRATION_RUNS))

    def pm(value, sigma, fmt):
        return format(value, fmt) + ("" if sigma is None else f" ± {format(sigma, fmt)}")

    say(f"  rate {pm(fit.rate_nm_per_s * 60, _times(fit.rate_sigma_nm_per_s, 60), '.3f')} nm/min, "
        f"start-up offset {pm(fit.offset_nm, fit.offset_sigma_nm, '.2f')} nm")
    if fit.weighted:
        say("  (two runs fix the line; the ± carries the runs' thickness uncertainties into it, "
            "with the correlation of rate and offset)")
    minutes, seconds = divmod(fit.time_s, 60)
    say(f"  next run for {design.thickness_nm:.2f} nm of {sc.NEXT_RUN_MATERIAL}: "
        f"{pm(fit.time_s, fit.time_sigma_s, '.0f')} s ({int(minutes)} min {seconds:.0f} s)")
    write_csv(outdir / "thickness_next_run.csv",
               ["rate_nm_per_s", "rate_sigma_nm_per_s", "offset_nm", "offset_sigma_nm", "target_nm",
                "time_s", "time_sigma_s"],
               [[f"{fit.rate_nm_per_s:.6f}", _cell(fit.rate_sigma_nm_per_s, ".6f"), f"{fit.offset_nm:.4f}",
                 _cell(fit.offset_sigma_nm, ".4f"), f"{design.thickness_nm:.3f}", f"{fit.time_s:.1f}",
                 _cell(fit.time_sigma_s, ".1f")]])
    say("  → thickness_next_run.csv")
    say("  Rates drift with target wear, pressure and power: check with a test piece before the real part.")

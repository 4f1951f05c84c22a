"""``filmoptic demo``: the worked example, in a fictional workshop, from design to next run."""

from __future__ import annotations

from pathlib import Path

import click

from filmoptic.cli import CAUTION

# The demo's parts in the order a coater meets them: design, appearance, thickness, fitting.
SECTIONS = (
    ("spectra", "Spectra of the semi-mirror and of an oxide layer"),
    ("colour", "Colours of oxide films and the tint of the semi-mirror"),
    ("thickness", "Thickness to aim for, thickness achieved, time for the next run"),
    ("fit", "Thickness and index from a (synthetic) transmittance curve"),
    ("anodize", "Colour chart for anodised titanium, and the voltage for a colour"),
    ("monitor", "Stopping a run from a light signal: a replayed (synthetic) semi-mirror run"),
    ("map", "Thickness map of the door glass from a (synthetic) light-box photo"),
    ("design", "A protected semi-mirror with a neutral tint, and its yield at ±3 %"),
    ("explore", "A page to slide through the tags' oxide colours, for the shop's buyer"),
)


@click.command()
@click.option(
    "--out", "out_dir", type=click.Path(file_okay=False, path_type=Path), default=Path("filmoptic-demo"),
    show_default=True, help="Folder for the demo's tables and plots (created if missing).",
)
@click.option(
    "--only", type=click.Choice([name for name, _ in SECTIONS]), multiple=True,
    help="Run only this part (repeatable).",
)
def demo(out_dir: Path, only):
    """Run the built-in worked example and write its tables and plots.

    The example follows a fictional workshop through one week: choosing a metal and thickness for
    a semi-mirror that passes 30 % of the light, reading off the colours of thin oxide films,
    turning a lux-meter reading into a film thickness with an error bar, planning the next run's
    time from two calibration runs, fitting a transmittance curve, and designing a protected
    semi-mirror with a neutral tint and its yield when every layer is off by up to 3 %. Every number in the scenario
    is invented for illustration; the optical constants are the published ones shipped with
    filmoptic.

    Files are written into OUT (default ./filmoptic-demo); existing files of the same names there
    are replaced, nothing else is touched.
    """
    import importlib

    from filmoptic.demo.scenario import SCENARIO_NAME

    out_dir.mkdir(parents=True, exist_ok=True)
    click.echo(f"filmoptic demo — {SCENARIO_NAME}")
    click.echo("All scenario numbers are invented for illustration; they are not measurements.")
    click.echo(f"Output folder: {out_dir.resolve()}")
    for name, title in SECTIONS:
        if only and name not in only:
            continue
        click.echo("")
        click.secho(f"== {title} ==", bold=True)
        module = importlib.import_module(f"filmoptic.demo.{name}")
        module.run(out_dir, click.echo)
    click.echo("")
    click.echo(f"Caution: {CAUTION}")
    click.echo(f"Done. Tables and plots are in {out_dir.resolve()}")

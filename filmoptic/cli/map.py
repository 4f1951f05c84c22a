"""``filmoptic map``: thickness and uniformity of a film from a photo."""

from __future__ import annotations

import click

from filmoptic.cli._common import (
    ambient_option,
    angle_option,
    check_output_path,
    check_plot_path,
    emit_json,
    extrapolate_option,
    json_option,
    print_table,
    progress,
    save_plot,
    user_errors,
    write_atomically,
)
from filmoptic.cli.color import illuminant_option, observer_option

__all__ = ["map_command"]

# Photos above this many pixels show a progress bar (on a terminal).
_PROGRESS_FROM_PIXELS = 4_000_000
# Grids up to this many columns are printed cell by cell; wider ones go to --csv / --json.
_PRINTED_COLUMNS = 20


def _cell_option(text, scale):
    """--cell 2mm (needs --scale) or --cell 150px → (cell_mm, cell_px)."""
    import re

    from filmoptic.errors import FilmopticError
    from filmoptic.units import parse_length_nm, parse_number

    if text is None:
        return None, None
    match = re.fullmatch(r"\s*(.+?)\s*px\s*", text)
    if match:
        return None, parse_number(match.group(1), "--cell")
    if scale is None:
        raise FilmopticError(f"--cell {text}: a size in mm needs --scale PX_PER_MM (or give the size in px, e.g. 150px)")
    try:
        size_nm = parse_length_nm(text, "--cell", allow_zero=False)
    except FilmopticError:
        raise FilmopticError(f"--cell: write a cell size like 2mm or 150px, got {text!r}") from None
    return size_nm / 1e6, None


def _range(text):
    from filmoptic.units import parse_range_nm

    return None if text is None else parse_range_nm(text, what="--range")[:2]


def _fmt(value, digits=2):
    return "–" if value is None else f"{value:.{digits}f}"


def _print_report(result, photo):
    import numpy as np

    grid = result.grid
    mode = "transmission" if result.mode == "transmission" else "colour in reflection"
    reference = {
        "bare": "bare substrate in the photo", "open": "flat-field photo",
        "white": "white reference in the photo", "none": "none (full scale taken as white)",
    }[result.reference]
    click.echo(f"Thickness map of {result.stack!r} from {photo.label} ({photo.width}×{photo.height} px, "
               f"{photo.bits}-bit {photo.encoding}) — {mode}, illuminant {result.illuminant}")
    click.echo(f"Reference: {reference}"
               + ("" if result.gain is None else f"; calibration gain {result.gain:.4f} from the known region")
               + ("" if result.gains is None else "; channel gains R, G, B " + ", ".join(f"{g:.3f}" for g in result.gains)))
    flags = result.flag
    counts = {k: int(np.count_nonzero(flags == k)) for k in sorted(set(flags.ravel().tolist())) if k != "ok"}
    flagged = ", ".join(f"{k} {v}" for k, v in counts.items()) or "none"
    click.echo(f"Cells: {grid.nx} × {grid.ny} of {grid.cell_w} × {grid.cell_h} px over x {grid.x0}–{grid.x1}, "
               f"y {grid.y0}–{grid.y1} px; thicknesses searched {result.range_nm[0]:g}–{result.range_nm[1]:g} nm")
    click.echo(f"Flags: {flagged}")
    click.echo("")
    s = result.stats
    print_table(["mean nm", "std nm", "min nm", "max nm", "uniformity ±%", "solved", "flagged"],
                [[_fmt(s.mean_nm), _fmt(s.std_nm), _fmt(s.min_nm), _fmt(s.max_nm), _fmt(s.uniformity_pct),
                  s.cells_solved, s.cells_flagged]])
    click.echo("uniformity = ±(max − min)/(max + min) over the solved cells")
    p = result.profile
    u = result.unit
    click.echo("")
    if p.plane is not None:
        click.echo(f"Tilted plane: {p.plane.centre_nm:.2f} nm at x {p.plane.x_centre:.1f}, y {p.plane.y_centre:.1f} {u}; "
                   f"thickens {p.plane.gradient_nm:.4g} nm per {u} towards {p.plane.direction_deg:.0f}° "
                   f"(0° = right, 90° = down); rms {p.plane.rms_nm:.3f} nm")
    if p.radial is not None:
        click.echo(f"Radial fall-off t0/(1 + r²/h²)²: peak {p.radial.peak_nm:.2f} nm at x {p.radial.x_centre:.1f}, "
                   f"y {p.radial.y_centre:.1f} {u}; h {p.radial.distance:.4g} {u}; rms {p.radial.rms_nm:.3f} nm"
                   + ("" if p.radial.converged else " (fit did not converge)"))
    if p.better:
        click.echo(f"Better description: {'tilted plane' if p.better == 'plane' else 'radial fall-off'}")
    if grid.nx <= _PRINTED_COLUMNS:
        click.echo("")
        click.echo(f"Thickness (nm) by cell, top row first ('·' not solved, '-' outside); x in {u}:")
        header = ["y \\ x"] + [f"{v:.4g}" for v in result.x]
        rows = []
        for i, yv in enumerate(result.y):
            row = [f"{yv:.4g}"]
            for j in range(grid.nx):
                t = result.thickness_nm[i, j]
                row.append(f"{t:.2f}" if np.isfinite(t) else ("-" if flags[i, j] == "outside" else "·"))
            rows.append(row)
        print_table(header, rows)
    else:
        click.echo("")
        click.echo(f"The {grid.nx} × {grid.ny} grid is too wide to print: write it with --csv FILE or --json.")
    for note in result.notes:
        click.echo(f"Note: {note}")


@click.command("map")
@click.argument("stack")
@click.option("--photo", "photo_path", required=True, metavar="FILE",
              help="The photo: JPEG, PNG or TIFF (8 or 16 bits per channel), or camera RAW "
                   "(.dng, .cr2, .nef, … with the optional rawpy package: pip install 'filmoptic[raw]').")
@click.option("--mode", type=click.Choice(["transmission", "colour", "color"], case_sensitive=False),
              default="transmission", show_default=True,
              help="transmission: a coated glass on a light box; colour: an oxide colour seen in reflection.")
@click.option("--bare", metavar="X0,Y0,X1,Y1",
              help="A rectangle of the bare substrate in the photo, in pixels or as fractions 0–1 of the "
                   "width and height. Transmission: the reference (the map is then relative to bare glass). "
                   "Colour: its computed colour calibrates exposure and white balance.")
@click.option("--open", "open_path", metavar="FILE",
              help="A photo of the empty light box (transmission) or of a white card in place of the part "
                   "(colour), same camera, position and settings: divided out pixel by pixel (flat field), "
                   "which also removes vignetting.")
@click.option("--dark", "dark_path", metavar="FILE",
              help="A dark frame (lens covered, same settings), subtracted from the photo and --open.")
@click.option("--white", metavar="X0,Y0,X1,Y1",
              help="Colour mode: a white reference (a white card) in the photo, taken as reflectance 1.")
@click.option("--region", metavar="X0,Y0,X1,Y1",
              help="The rectangle to map (default: the whole photo, or what --mask covers).")
@click.option("--mask", "mask_path", metavar="FILE",
              help="An image of the photo's size, white where to map (cells mostly outside are left out).")
@click.option("--cells", metavar="NXxNY",
              help="Number of cells across and down, e.g. 40x30 (default: 40 along the longer side, square).")
@click.option("--cell", "cell_text", metavar="SIZE",
              help="Square cells of this size instead: 2mm (needs --scale) or 150px.")
@click.option("--scale", type=float, metavar="PX_PER_MM",
              help="Pixels per millimetre on the part (e.g. from a ruler in the photo): positions in mm.")
@click.option("--known", metavar="X0,Y0,X1,Y1=THICKNESS",
              help="A region of known thickness, e.g. 10,10,60,40=9.5nm. Transmission: calibrates a gain "
                   "for a camera that is not the assumed one. Colour: anchors the interference order.")
@illuminant_option
@observer_option
@click.option("--encoding", type=click.Choice(["auto", "srgb", "linear"], case_sensitive=False),
              default="auto", show_default=True,
              help="How pixel values relate to light: auto = sRGB for 8-bit files, linear for 16-bit files "
                   "and RAW. A 16-bit file exported by a photo editor is usually sRGB: say --encoding srgb.")
@click.option("--range", "range_text", metavar="START:STOP",
              help="Thicknesses searched, nm (default: the layer's LOW..HIGH, else 0:100 for a metal, 0:500 otherwise).")
@angle_option
@ambient_option
@extrapolate_option
@click.option("--max-megapixels", type=float, default=None, metavar="N",
              help="Largest photo read, in megapixels (default 100).")
@click.option("--plot", "plot_path", metavar="FILE",
              help="Write the photo beside the thickness map (.png, .svg or .pdf).")
@click.option("--csv", "csv_path", metavar="FILE",
              help="Write the grid: x_mm (or x_px), y_mm (or y_px), thickness_nm, low_nm, high_nm, flag "
                   "(and delta_E00 in colour mode), one row per cell.")
@json_option
def map_command(stack, photo_path, mode, bare, open_path, dark_path, white, region, mask_path, cells, cell_text,
                scale, known, illuminant, observer, encoding, range_text, angle, ambient, extrapolate,
                max_megapixels, plot_path, csv_path, as_json):
    """Thickness and uniformity of a film from a photo of the part.

    STACK is the coating with its unknown thickness written '?', as for solve.

    \b
    Transmission: a coated glass on a light box
        filmoptic map "Ti ? / glass 4mm" --photo part.jpg --open box.jpg --bare 40,60,200,900
        filmoptic map "Ti ? / glass 4mm" --photo part.tif --open box.tif --scale 12.5 --cell 2mm \\
            --plot map.png --csv map.csv

    Photograph the part on the light box with the camera on a stand, fixed exposure, white
    balance and focus, no part of the light box clipped to white; then, without moving anything,
    the empty light box (--open) and, if the camera is noisy in the dark, a frame with the lens
    covered (--dark). Pixel values are made linear again (8-bit files are decoded as sRGB; a
    camera's own tone curve is only approximately sRGB; 16-bit TIFF/PNG and RAW are taken as
    linear), turned into relative luminance with the sRGB primaries and divided by the reference
    pixel by pixel: the flat field (--open) removes vignetting and an uneven box, and a bare-glass
    rectangle (--bare) makes the map relative to bare glass. Each cell then holds the luminous
    transmittance a lux meter would read there under the light box's spectrum (--illuminant,
    D65 by default, or the box's measured spectrum as a file), and all cells are solved at once.
    Each thickness comes with an interval from the pixel noise of the cell and the reference.
    A region of known thickness (--known) corrects the camera's response by a gain, reported.

    \b
    Colour: an oxide colour in reflection
        filmoptic map "TiO2 ? / Ti" --photo tags.jpg --mode colour --bare 10,10,80,60

    Each cell's colour (CIELAB) is matched in ΔE00 to the film's computed colours; interference
    colours repeat, so the order is chosen for continuity across the part, starting from the
    most saturated region or from a --known region. The cell's ΔE00 is its confidence. A camera
    is not a colorimeter: the map is approximate, and relative unless a known region anchors it.
    Light the part evenly with a diffuse white source and include bare metal (--bare) or a white
    card (--white) for exposure and white balance.

    Cells with saturated or too dark pixels and cells no thickness in the range explains are
    flagged and not solved. Two flags keep their thickness and count in the statistics:
    "several" (more than one thickness in the range fits; the thinnest is given) and, in colour
    mode, "poor_match" (ΔE00 above 10). The uniformity is ±(max − min) / (max + min) in percent
    over the solved cells; a tilted plane and a radial fall-off t0/(1 + r²/h²)² of a small
    source (h: its equivalent distance) are fitted to the map.

    Coordinates are pixels of the upright photo (EXIF orientation applied) from its top-left
    corner, x to the right and y down, or mm with --scale.

    With --json: cells (x_mm or x_px, y_mm or y_px, row, col, thickness_nm, low_nm, high_nm,
    flag, and ratio, ratio_sigma or Lab, delta_E00), stats (mean_nm, std_nm, min_nm, max_nm,
    uniformity_pct, cells_solved, cells_flagged), profile (plane, radial, better, unit), and
    mode, reference, gain or gains, seed, illuminant, range_nm, notes.
    """
    from filmoptic.imaging.maps import csv_header, csv_rows, map_json, map_thickness
    from filmoptic.imaging.photo import MAX_PIXELS, read_photo

    with user_errors():
        if plot_path:
            check_plot_path(plot_path)
        if csv_path:
            check_output_path(csv_path, "CSV file")
        if max_megapixels is not None and not 0 < max_megapixels < float("inf"):
            from filmoptic.errors import FilmopticError

            raise FilmopticError(f"--max-megapixels must be a positive number, got {max_megapixels:g}")
        # Past a million megapixels the limit means "none" (and an integer of it must still exist).
        max_pixels = MAX_PIXELS if max_megapixels is None else int(min(max_megapixels, 1e6) * 1e6)
        cell_mm, cell_px = _cell_option(cell_text, scale)
        range_nm = _range(range_text)
        photo = read_photo(photo_path, encoding=encoding, max_pixels=max_pixels, what="photo")
        flat = None if open_path is None else read_photo(open_path, encoding=encoding, max_pixels=max_pixels,
                                                          what="--open photo")
        dark = None if dark_path is None else read_photo(dark_path, encoding=encoding, max_pixels=max_pixels,
                                                          what="dark frame")
        options = dict(mode=mode, bare=bare, flat=flat, dark=dark, white=white, region=region, mask=mask_path,
                       cells=cells, cell_mm=cell_mm, cell_px=cell_px, scale_px_per_mm=scale,
                       illuminant=illuminant, observer=int(observer), known=known, encoding=encoding,
                       range_nm=range_nm, angle_deg=angle, ambient=ambient, extrapolate=extrapolate,
                       max_pixels=max_pixels)
        if photo.width * photo.height > _PROGRESS_FROM_PIXELS:
            with progress(photo.height, "mapping") as advance:
                result = map_thickness(stack, photo, progress=advance, **options)
        else:
            result = map_thickness(stack, photo, **options)

    # Files first, so that a failure leaves no half report on stdout.
    with user_errors():
        if csv_path:
            import csv

            def write(fh):
                writer = csv.writer(fh, lineterminator="\n")
                writer.writerow(csv_header(result))
                writer.writerows(csv_rows(result))

            write_atomically(csv_path, write)
        if plot_path:
            from filmoptic.imaging.photo import parse_known, parse_rectangle
            from filmoptic.plots.map import plot_thickness_map

            bare_rect = None if bare is None else parse_rectangle(bare, photo.width, photo.height, "--bare")
            if white is not None:
                bare_rect = parse_rectangle(white, photo.width, photo.height, "--white")
            known_rect = None if known is None else parse_known(known, photo.width, photo.height)[0]
            save_plot(plot_thickness_map(result, photo, bare=bare_rect, known=known_rect), plot_path)

    if as_json:
        emit_json(map_json(result))
        return
    _print_report(result, photo)
    if csv_path:
        click.echo(f"Grid written to {csv_path}")
    if plot_path:
        click.echo(f"Map written to {plot_path}")

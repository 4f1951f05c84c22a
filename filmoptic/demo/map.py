"""Demo part "map": how even is the door glass's titanium film? A thickness map from a photo.

The photo is *synthetic*: the demo renders the fictional scenario's invented thickness field
(:mod:`filmoptic.demo.scenario`, job 4) on a light box with the forward model, adds lens vignetting
and camera noise, saves it as an ordinary 8-bit JPEG (labelled SYNTHETIC in a corner) together
with a photo of the empty light box, and maps it like any photo — so the map can be compared with
the field it was made from.
"""

from __future__ import annotations

import pathlib

__all__ = ["run"]

PHOTO_FILE = "map_synthetic_lightbox.jpg"
OPEN_FILE = "map_synthetic_open_box.jpg"
PLOT_FILE = "map_thickness.png"
GRID_FILE = "map_grid.csv"


def true_field(x_mm, y_mm):
    """The scenario's invented thickness (nm) at positions on the photo (mm); NaN off the glass,
    0 on the bare strip."""
    import numpy as np

    from filmoptic.demo import scenario as sc

    gx0, gy0, gx1, gy1 = sc.MAP_GLASS_MM
    sx, sy = sc.MAP_SOURCE_AT_MM
    r2 = (x_mm - sx) ** 2 + (y_mm - sy) ** 2
    t = (sc.MAP_PEAK_NM / (1.0 + r2 / sc.MAP_SOURCE_DISTANCE_MM ** 2) ** 2
         + sc.MAP_TILT_NM_PER_MM[0] * (x_mm - sx) + sc.MAP_TILT_NM_PER_MM[1] * (y_mm - sy))
    on_glass = (x_mm >= gx0) & (x_mm < gx1) & (y_mm >= gy0) & (y_mm < gy1)
    t = np.where(x_mm < gx0 + sc.MAP_BARE_STRIP_MM, 0.0, t)
    return np.where(on_glass, t, np.nan)


def _label(rgb8):
    """Write SYNTHETIC into the photo's bottom-left corner (on the light box, off the glass)."""
    from PIL import Image, ImageDraw

    image = Image.fromarray(rgb8)
    draw = ImageDraw.Draw(image)
    draw.rectangle((4, image.height - 22, 250, image.height - 4), fill=(40, 40, 40))
    draw.text((10, image.height - 19), "SYNTHETIC - made by filmoptic demo", fill=(255, 255, 255))
    import numpy as np

    return np.asarray(image)


def run(outdir: pathlib.Path, say) -> None:
    """Render the synthetic photo, map it, and write photo, map and grid into ``outdir``."""
    import numpy as np

    from filmoptic.demo import scenario as sc
    from filmoptic.files import write_csv
    from filmoptic.imaging.maps import csv_header, csv_rows, map_thickness
    from filmoptic.imaging.photo import read_photo
    from filmoptic.imaging.profile import uniformity_pct
    from filmoptic.imaging.render import add_noise, cos4_vignetting, encode_srgb8, render_transmission, write_jpeg
    from filmoptic.plots import save_figure
    from filmoptic.plots.map import plot_thickness_map

    outdir = pathlib.Path(outdir)
    width, height = sc.MAP_PHOTO_PX
    scale = sc.MAP_SCALE_PX_PER_MM
    y_px, x_px = np.mgrid[0:height, 0:width].astype(float) + 0.5
    field = true_field(x_px / scale, y_px / scale)
    vignetting = cos4_vignetting(height, width, corner=sc.MAP_VIGNETTING_CORNER)
    photo_rgb, open_rgb = render_transmission(sc.MAP_STACK, field, illuminant=sc.MAP_LIGHT_BOX,
                                              exposure=sc.MAP_EXPOSURE, vignetting=vignetting)
    rng = np.random.default_rng(sc.MAP_SEED)
    shot, read = sc.MAP_NOISE
    photo8 = _label(encode_srgb8(add_noise(photo_rgb, rng, shot=shot, read=read)))
    open8 = encode_srgb8(add_noise(open_rgb, rng, shot=shot, read=read))
    write_jpeg(outdir / PHOTO_FILE, photo8, quality=sc.MAP_JPEG_QUALITY)
    write_jpeg(outdir / OPEN_FILE, open8, quality=sc.MAP_JPEG_QUALITY)
    say(f"Synthetic light-box photo of the door glass ({sc.MAP_STACK}, {width}×{height} px, "
        f"{sc.MAP_LIGHT_BOX} light box), rendered by the forward model with vignetting and noise")
    say(f"  → {PHOTO_FILE} (labelled SYNTHETIC), {OPEN_FILE} (the empty light box)")

    gx0, gy0, gx1, gy1 = (v * scale for v in sc.MAP_GLASS_MM)
    strip = sc.MAP_BARE_STRIP_MM * scale
    margin = 2 * scale                              # keep clear of the glass's edges
    bare = (int(gx0 + margin), int(gy0 + margin), int(gx0 + strip - margin), int(gy1 - margin))
    region = (int(gx0 + strip + margin), int(gy0 + margin), int(gx1 - margin), int(gy1 - margin))
    photo = read_photo(outdir / PHOTO_FILE)
    result = map_thickness(sc.MAP_STACK, photo, flat=outdir / OPEN_FILE, bare=bare, region=region,
                           cell_mm=sc.MAP_CELL_MM, scale_px_per_mm=scale, illuminant=sc.MAP_LIGHT_BOX)
    s = result.stats
    X, Y = np.meshgrid(result.x, result.y)
    truth = true_field(X, Y)
    say(f"Map: {result.grid.nx} × {result.grid.ny} cells of {sc.MAP_CELL_MM:g} mm, relative to the bare strip, "
        f"flat-fielded by the open-box photo")
    say(f"  mean {s.mean_nm:.2f} nm, {s.min_nm:.2f}–{s.max_nm:.2f} nm, uniformity ±{s.uniformity_pct:.1f} % "
        f"(±(max−min)/(max+min)); the invented field gives ±{uniformity_pct(truth):.1f} % on the same cells")
    worst = float(np.nanmax(np.abs(result.thickness_nm - truth)))
    say(f"  largest difference from the invented field at a cell centre: {worst:.2f} nm; "
        f"typical interval ±{float(np.nanmedian(result.high_nm - result.low_nm)) / 2:.3f} nm from pixel noise")
    radial = result.profile.radial
    if radial is not None:
        say(f"  radial fall-off fitted: thickest {radial.peak_nm:.2f} nm at x {radial.x_centre:.0f} mm, "
            f"y {radial.y_centre:.0f} mm, h {radial.distance:.0f} mm (invented: {sc.MAP_PEAK_NM:g} nm at "
            f"{sc.MAP_SOURCE_AT_MM[0]:g}, {sc.MAP_SOURCE_AT_MM[1]:g} mm, h {sc.MAP_SOURCE_DISTANCE_MM:g} mm, "
            "plus a tilt)")
    write_csv(outdir / GRID_FILE, csv_header(result), csv_rows(result))
    save_figure(plot_thickness_map(result, photo, bare=bare,
                                   title=f"{sc.MAP_STACK} — SYNTHETIC photo (fictional scenario)"),
                outdir / PLOT_FILE)
    say(f"  → {PLOT_FILE}, {GRID_FILE}")
    say("  A real photo: fixed exposure and white balance, nothing clipped, the empty box photographed "
        "right after; see 'filmoptic map --help'.")

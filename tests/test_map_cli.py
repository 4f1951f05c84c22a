"""``filmoptic map`` on the command line: outputs, fixed JSON keys and CSV columns, one-line errors."""

from __future__ import annotations

import csv
import json

import numpy as np
import pytest

from conftest import assert_user_error
from filmoptic.imaging.render import encode_srgb8, render_transmission, write_jpeg, write_png

STACK = "Ti ? / glass 4mm"


@pytest.fixture(scope="module")
def photos(tmp_path_factory):
    folder = tmp_path_factory.mktemp("photos")
    y, x = np.mgrid[0:120, 0:160].astype(float)
    field = 8.0 + 0.02 * x
    field[:, :20] = 0.0
    photo, flat = render_transmission(STACK, field, exposure=0.8)
    write_jpeg(folder / "part.jpg", encode_srgb8(photo), quality=90)
    write_jpeg(folder / "box.jpg", encode_srgb8(flat), quality=90)
    return folder


def _args(folder, *extra):
    return ["map", STACK, "--photo", folder / "part.jpg", "--open", folder / "box.jpg",
            "--bare", "2,2,18,118", "--region", "24,0,160,120", "--cells", "8x6", *extra]


def test_table_csv_and_plot(run_cli, photos, tmp_path):
    result = run_cli(_args(photos, "--csv", tmp_path / "grid.csv", "--plot", tmp_path / "map.png"))
    assert result.exit_code == 0, result.stderr
    assert "uniformity ±%" in result.stdout and "±(max − min)/(max + min)" in result.stdout
    assert "Radial fall-off" in result.stdout and "Tilted plane" in result.stdout
    with open(tmp_path / "grid.csv", newline="") as fh:
        rows = list(csv.reader(fh))
    assert rows[0] == ["x_px", "y_px", "thickness_nm", "low_nm", "high_nm", "flag"]
    assert len(rows) == 1 + 8 * 6
    assert (tmp_path / "map.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    # The film thickens by 0.02 nm per pixel to the right: the plane fit says so (8-bit JPEG input).
    thickness = np.array([[float(r[0]), float(r[2])] for r in rows[1:]])
    slope = np.polyfit(thickness[:, 0], thickness[:, 1], 1)[0]
    assert slope == pytest.approx(0.02, rel=0.05)


def test_json_has_the_fixed_keys(run_cli, photos):
    result = run_cli(_args(photos, "--json", "--scale", "4"))
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert {"cells", "stats", "profile"} <= set(data)
    assert set(data["stats"]) == {"mean_nm", "std_nm", "min_nm", "max_nm", "uniformity_pct", "cells_solved",
                                  "cells_flagged"}
    assert set(data["profile"]) >= {"plane", "radial", "better", "unit"}
    cell = data["cells"][0]
    assert {"x_mm", "y_mm", "thickness_nm", "low_nm", "high_nm", "flag"} <= set(cell)
    assert cell["x_mm"] == pytest.approx((24 + 17 / 2) / 4)     # 136 px in 8 cells of 17 px, from x = 24
    assert data["stats"]["cells_solved"] == 48 and data["unit"] == "mm"


def test_cell_size_in_mm(run_cli, photos, tmp_path):
    result = run_cli(["map", STACK, "--photo", photos / "part.jpg", "--open", photos / "box.jpg", "--bare",
                      "2,2,18,118", "--region", "24,0,160,120", "--scale", "4", "--cell", "5mm",
                      "--csv", tmp_path / "g.csv"])
    assert result.exit_code == 0, result.stderr
    with open(tmp_path / "g.csv", newline="") as fh:
        rows = list(csv.reader(fh))
    assert rows[0][:2] == ["x_mm", "y_mm"]
    assert len(rows) == 1 + (136 // 20) * (120 // 20)


@pytest.mark.parametrize("kind", ["text", "truncated", "black"])
def test_bad_photos_exit_2_with_one_line(run_cli, photos, tmp_path, kind):
    path = tmp_path / "bad.jpg"
    if kind == "text":
        path.write_text("hello")
    elif kind == "truncated":
        data = (photos / "part.jpg").read_bytes()
        path.write_bytes(data[: len(data) // 3])
    else:
        path = tmp_path / "black.png"
        write_png(path, np.zeros((40, 40, 3), np.uint8))
    result = run_cli(["map", STACK, "--photo", path, "--open", photos / "box.jpg"])
    assert_user_error(result, {"text": "not an image", "truncated": "truncated", "black": "black"}[kind])


def test_outputs_never_replace_an_input(run_cli, photos):
    before = (photos / "part.jpg").read_bytes()
    result = run_cli(_args(photos, "--csv", photos / "part.jpg"))
    assert_user_error(result, "input")
    assert (photos / "part.jpg").read_bytes() == before


@pytest.mark.parametrize("extra, message", [
    (["--cell", "2mm"], "--scale"),
    (["--cells", "500x500"], "fewer cells"),
    (["--mode", "colour", "--white", "0,0,2,2"], "not both"),
    (["--known", "30,30,40"], "--known"),
    (["--max-megapixels", "0.001"], "--max-megapixels"),
])
def test_option_mistakes_are_one_line(run_cli, photos, extra, message):
    args = [a for a in _args(photos) if a not in ("--cells", "8x6")] if "--cells" in extra or "--cell" in extra else _args(photos)
    assert_user_error(run_cli([*args, *extra]), message)


def test_demo_part_maps_its_synthetic_photo(tmp_path):
    from filmoptic.demo import map as demo_map

    said = []
    demo_map.run(tmp_path, said.append)
    assert "SYNTHETIC" in " ".join(said)
    for name in (demo_map.PHOTO_FILE, demo_map.OPEN_FILE, demo_map.PLOT_FILE, demo_map.GRID_FILE):
        assert (tmp_path / name).stat().st_size > 0
    with open(tmp_path / demo_map.GRID_FILE, newline="") as fh:
        rows = list(csv.DictReader(fh))
    x = np.array([float(r["x_mm"]) for r in rows])
    y = np.array([float(r["y_mm"]) for r in rows])
    t = np.array([float(r["thickness_nm"]) for r in rows])
    # The map of the 8-bit JPEG (with noise and vignetting removed by the open-box photo) follows
    # the invented field it was rendered from.
    assert np.max(np.abs(t - demo_map.true_field(x, y))) < 0.15


def test_a_map_where_no_cell_can_be_solved_still_reports(run_cli, photos):
    # The mapped region is the bare strip itself and the range starts at 5 nm: bare glass passes
    # more light than any film of 5–100 nm, so no cell can be solved; the report still comes, with
    # a note saying why.
    result = run_cli(["map", STACK, "--photo", photos / "part.jpg", "--open", photos / "box.jpg",
                      "--bare", "2,2,18,118", "--region", "0,0,20,120", "--cells", "2x4", "--range", "5:100"])
    assert result.exit_code == 0, result.stderr
    assert "unreachable 8" in result.stdout
    assert "outside what the film gives in 5–100 nm" in result.stdout


def test_transmission_through_an_opaque_substrate_points_to_colour_mode(run_cli, photos):
    result = run_cli(["map", "Ti ? / Si", "--photo", photos / "part.jpg", "--open", photos / "box.jpg"])
    assert_user_error(result, "--mode colour")

"""What a GIS user and a scientist check first in the outputs: band order,
class maps people and GDAL can read, one quicklook scale, provenance in every
file, night and low sun reported, cautions, progress and quiet output."""

from __future__ import annotations

import io
import math
import re
import tomllib
from pathlib import Path

import netCDF4
import numpy as np
import pytest
import rasterio
import rasterio.shutil
from click.testing import CliRunner
from matplotlib import image as mpimg

from glint.cli.main import cli
from glint.cli.progress import RowProgress, notice_compiling
from glint.errors import InputError
from glint.io.quicklook import (
    CAUTION,
    FLIGHT_CAUTION,
    QUICKLOOK_SCALES,
    QuicklookStyle,
    check_quicklook_variables,
    class_palette,
    quicklook,
)
from glint.scene import load_scene
from glint.workflows import maps
from glint.workflows.camera_view import default_step, write_camera_view
from glint.workflows.job import LOW_SUN_ELEVATION, sun_note


# ------------------------------------------------------------- band order
def test_glint_reflectance_is_band_one(tmp_path, inlet):
    # Asked for in another order: the GeoTIFF still puts the glint variables
    # first, so GIS software that shows band 1 shows the glint reflectance.
    res = maps.write_maps(inlet, tmp_path, formats=["geotiff"],
                          variables=["sun_zenith", "view_azimuth", "glint_angle",
                                     "glint_reflectance"])
    tif = next(p for p in res.files if p.name.endswith("_glint.tif"))
    with rasterio.open(tif) as src:  # rasterio (GDAL) as the outside reader
        assert src.descriptions == ("glint_reflectance", "glint_angle", "sun_zenith",
                                    "view_azimuth")


# ------------------------------------------------------------- class maps
def test_class_geotiff_categories_read_by_gdal(tmp_path, inlet):
    res = maps.write_maps(inlet, tmp_path, formats=["geotiff"], variables=["glint_class"])
    tif = next(p for p in res.files if p.name.endswith("_glint_class.tif"))
    assert Path(str(tif) + ".aux.xml").is_file()
    # GDAL reads the sidecar: a VRT copy made by GDAL (CreateCopy) carries
    # the category names and the raster attribute table it found.
    vrt = tmp_path / "copy.vrt"
    with rasterio.open(tif) as src:
        rasterio.shutil.copy(src, vrt, driver="VRT")
        cmap = src.colormap(1)
    text = vrt.read_text()
    cats = re.findall(r"<Category>([^<]*)</Category>", text)
    assert cats == list(inlet.classes.names)
    assert "GDALRasterAttributeTable" in text and "<F>severe</F>" in text
    # Palette ordered by severity: each class darker than the one below
    # (relative luminance, ITU-R BT.709 weights), the highest saturated red.
    lum = [0.2126 * r + 0.7152 * g + 0.0722 * b for r, g, b, _ in (cmap[k] for k in range(3))]
    assert lum[0] > lum[1] > lum[2]
    r, g, b, _ = cmap[2]
    assert r > 200 and g < 60 and b < 60


def test_class_palette_is_ordered_for_any_number_of_classes():
    for n in range(2, 9):
        pal = class_palette(n)
        lum = [0.2126 * r + 0.7152 * g + 0.0722 * b for r, g, b in pal]
        assert all(a > b for a, b in zip(lum, lum[1:])), (n, pal)
    with pytest.raises(InputError, match="n_classes must be >= 1; got 0"):
        class_palette(0)


def test_png_variable_chooses_the_quicklook(tmp_path, inlet):
    res = maps.write_maps(inlet, tmp_path, formats=["png"], variables=["glint_class"])
    pngs = [p.name for p in res.files if p.suffix == ".png"]
    assert len(pngs) == 1 and pngs[0].endswith("_glint_class.png")
    res = maps.write_maps(inlet, tmp_path / "b", formats=["png"],
                          variables=["glint_angle", "glint_radiance"])
    assert sorted(p.name.split("Z_", 1)[1] for p in res.files if p.suffix == ".png") == \
        ["glint_angle.png", "glint_radiance.png"]


def test_undrawable_quicklook_refused():
    with pytest.raises(InputError, match=r"no quicklook can show variable 'lon'; drawable: "):
        check_quicklook_variables(["glint_reflectance", "lon"])


# ----------------------------------------------------------- one scale
def test_one_scale_for_every_quicklook(tmp_path):
    # Two fields that differ only on their right half (maximum 0.013 against
    # 0.31): the left half, equal in both, must come out in the same colours.
    left = np.full((40, 40), 0.004)
    a = np.hstack([left, np.full((40, 40), 0.013)])
    b = np.hstack([left, np.full((40, 40), 0.31)])
    style = QuicklookStyle(title="t", image_axes=True)
    pa = quicklook(a, (0, 80, 40, 0), tmp_path / "a.png", variable="glint_reflectance", style=style)
    pb = quicklook(b, (0, 80, 40, 0), tmp_path / "b.png", variable="glint_reflectance", style=style)
    ia, ib = mpimg.imread(pa), mpimg.imread(pb)
    assert ia.shape == ib.shape
    # the map's left quarter (inside the axes, away from the colour bar)
    h, w = ia.shape[:2]
    region = (slice(int(0.35 * h), int(0.45 * h)), slice(int(0.15 * w), int(0.25 * w)))
    np.testing.assert_array_equal(ia[region], ib[region])
    assert not np.array_equal(ia, ib)
    assert QUICKLOOK_SCALES["glint_reflectance"].kind == "log"


# ---------------------------------------------------------- provenance
def test_every_file_records_the_run(tmp_path, inlet):
    res = maps.write_maps(inlet, tmp_path, command="glint map inlet.toml -o out")
    tif = next(p for p in res.files if p.name.endswith("_glint.tif"))
    nc = next(p for p in res.files if p.suffix == ".nc")
    run = next(p for p in res.files if p.name.endswith("_run.toml"))
    with rasterio.open(tif) as src:
        tags = src.tags()
    assert tags["glint_command"] == "glint map inlet.toml -o out"
    assert "[sensor]" in tags["glint_run_record"] and CAUTION in tags["caution"]
    with netCDF4.Dataset(nc) as ds:
        assert ds.source.startswith("glint ")
        assert ds.id == nc.stem  # the final name, not the temporary one (ACDD-1.3 id)
        assert ds.history.endswith("glint map inlet.toml -o out")
        assert "[surface]" in ds.glint_run_record
        # the class variable's comment points to this attribute
        assert ds["glint_class"].glint_class_variable == inlet.classes.variable
    # The run record reloads as the same scene (TOML 1.0, tomllib).
    record = tomllib.loads(run.read_text())
    assert record["scene"]["times"] == ["2026-06-14T10:30:00Z"]
    again = load_scene(run)
    assert again.grid == inlet.grid and again.surface == inlet.surface
    assert again.water == inlet.water and again.times == inlet.times


def test_camera_view_records_the_pose(tmp_path, camera_scene):
    scene = camera_scene(heading=300.0)
    res = write_camera_view(scene, tmp_path, command="glint camera-view s.toml --heading 300")
    gj = next(p for p in res.files if p.suffix == ".geojson")
    import json

    props = json.loads(gj.read_text())["features"][0]["properties"]
    assert props["camera"]["heading"] == 300.0 and props["glint_command"].endswith("300")
    assert FLIGHT_CAUTION in props["caution"]
    nc = next(p for p in res.files if p.suffix == ".nc")
    with netCDF4.Dataset(nc) as ds:
        assert 'heading = 300.0' in ds.glint_run_record
        assert ds.pixel_step == 1


# --------------------------------------------------------- camera size
def test_camera_view_default_preview_step(tmp_path, example_scene):
    scene = example_scene("drone_cove_survey.toml")
    assert default_step(scene.sensor) == 4  # 4000 x 3000 -> 1000 x 750
    with pytest.raises(InputError, match=r"step must be a whole number >= 1 .*got 0"):
        write_camera_view(scene, tmp_path, step=0)


# ------------------------------------------------------ night, low sun
def test_sun_notes():
    assert sun_note(90.0 - LOW_SUN_ELEVATION + 0.5) is not None
    assert "below the horizon" in sun_note(91.0)
    assert sun_note(45.0) is None


def test_night_map_says_so(tmp_path, example_scene):
    scene = example_scene("coastal_inlet_morning.toml", time="2026-06-14T23:00:00Z")
    res = maps.write_maps(scene, tmp_path, formats=["geotiff"], variables=["glint_reflectance"])
    assert "below the horizon" in res.summary.sun_note
    tif = next(p for p in res.files if p.suffix == ".tif")
    with rasterio.open(tif) as src:
        assert "below the horizon" in src.tags()["sun_condition"]
    out = CliRunner().invoke(cli, ["map", "example_scenes/coastal_inlet_morning.toml", "-o",
                                   str(tmp_path / "cli"), "--time", "2026-06-14T23:00:00Z",
                                   "--format", "geotiff"])
    assert out.exit_code == 0, out.output
    assert "WARNING: the sun is below the horizon" in out.stdout


# ------------------------------------------- cautions, quiet, progress
def test_drone_map_prints_flight_caution(tmp_path, camera_scene):
    scene = camera_scene()
    path = tmp_path / "drone.toml"
    import tomli_w

    path.write_text(tomli_w.dumps(scene.tables))
    out = CliRunner().invoke(cli, ["map", str(path), "-o", str(tmp_path / "o"),
                                   "--format", "geotiff"])
    assert out.exit_code == 0, out.output
    assert FLIGHT_CAUTION in out.stdout and CAUTION in out.stdout


def test_quiet_levels_shorten_the_output(tmp_path):
    args = ["map", "example_scenes/coastal_inlet_morning.toml", "--format", "geotiff"]
    full = CliRunner().invoke(cli, [*args, "-o", str(tmp_path / "a")])
    q = CliRunner().invoke(cli, ["-q", *args, "-o", str(tmp_path / "b")])
    qq = CliRunner().invoke(cli, ["-qq", *args, "-o", str(tmp_path / "c")])
    for r in (full, q, qq):
        assert r.exit_code == 0, r.output
        assert CAUTION in r.stdout  # cautions whatever the level
    assert "Summary for" in full.stdout and "Summary for" not in q.stdout
    assert "Wrote" in q.stdout and "Wrote" not in qq.stdout
    assert len(qq.stdout) < len(q.stdout) < len(full.stdout)


class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_progress_bar_only_on_a_terminal_above_the_threshold():
    term = _Terminal()
    with RowProgress(pixels=10_000_000, label="glint map", stream=term) as bar:
        for done in (512, 1024, 1500):
            bar(done, 1500)
    assert "glint map" in term.getvalue() and "row" in term.getvalue()
    for kwargs in ({"stream": io.StringIO()}, {"stream": _Terminal(), "quiet": 1},
                   {"stream": _Terminal(), "pixels": 1000}):
        opts = {"pixels": 10_000_000, "label": "x", **kwargs}
        bar = RowProgress(**opts)
        bar(10, 100)
        assert not bar.enabled and opts["stream"].getvalue() == ""


def test_compile_notice(monkeypatch, capsys):
    import glint.cli.progress as progress

    monkeypatch.setattr(progress, "kernels_cached", lambda: False)
    notice_compiling(0)
    assert "compiling kernels (first run only" in capsys.readouterr().err
    notice_compiling(2)
    assert capsys.readouterr().err == ""
    monkeypatch.undo()
    assert progress.kernels_cached()  # the session fixture compiled them


def test_threshold_marks_follow_the_drawn_variable(inlet):
    # Wang and Bailey's thresholds are on L/E; on the reflectance scale they
    # sit at pi L/E / cos(sun zenith) (docs/theory.md).
    marks = maps._threshold_marks(inlet, "glint_reflectance", 30.0)
    assert [n for _, n in marks] == list(inlet.classes.names[1:])
    assert marks[0][0] == pytest.approx(math.pi * 1e-4 / math.cos(math.radians(30.0)))
    assert maps._threshold_marks(inlet, "glint_radiance", 30.0)[1][0] == 5e-3
    assert maps._threshold_marks(inlet, "glint_angle", 30.0) == ()

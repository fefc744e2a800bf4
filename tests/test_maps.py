"""Tests of glint.workflows.maps: the main job writes every format from one pass, and
leaves nothing behind when it fails. Files are read back with rasterio/GDAL
and netCDF4 (outside readers)."""

from __future__ import annotations

from pathlib import Path

import netCDF4
import numpy as np
import pytest
import rasterio

from glint.engine import compute
from glint.workflows import maps
from glint.errors import OutputError
from glint.scene import load_scene

EXAMPLES = Path(__file__).resolve().parents[1] / "example_scenes"


@pytest.fixture(scope="module")
def inlet():
    return load_scene(EXAMPLES / "coastal_inlet_morning.toml")


def test_writes_all_formats_consistently(inlet, tmp_path):
    res = maps.write_maps(inlet, tmp_path / "out")
    names = sorted(p.name for p in res.files)
    assert len(names) == 4
    assert not [p for p in (tmp_path / "out").iterdir() if p.name.startswith(".")], "temporary files left"
    tif = next(p for p in res.files if p.name.endswith("_glint.tif"))
    nc = next(p for p in res.files if p.suffix == ".nc")
    png = next(p for p in res.files if p.suffix == ".png")
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    ds = compute.compute_dataset(inlet)
    with rasterio.open(tif) as src:
        assert src.crs.to_epsg() == inlet.grid.crs.to_epsg()
        assert src.transform.almost_equals(inlet.grid.transform)
        i = list(src.descriptions).index("glint_reflectance") + 1
        np.testing.assert_array_equal(src.read(i), ds.glint_reflectance.values)
    with netCDF4.Dataset(nc) as f:
        np.testing.assert_array_equal(f["glint_fraction"][:].filled(np.nan), ds.glint_fraction.values)
        np.testing.assert_array_equal(f["glint_class"][:].filled(255), ds.glint_class.values)
    s = res.summary
    assert 0 < s["sun_zenith"] < 90
    assert s["max_glint_reflectance"] == pytest.approx(float(ds.glint_reflectance.max()), rel=1e-6)
    assert sum(s["class_shares"].values()) == pytest.approx(1.0)


def test_existing_output_refused_before_computing(inlet, tmp_path, monkeypatch):
    maps.write_maps(inlet, tmp_path, formats=["png"])

    def _boom(*a, **k):
        raise AssertionError("computed although the output exists")

    monkeypatch.setattr(compute, "iter_blocks", _boom)
    with pytest.raises(OutputError, match="overwrite"):
        maps.write_maps(inlet, tmp_path, formats=["png"])


def test_failure_mid_way_leaves_nothing(inlet, tmp_path, monkeypatch):
    real = compute.compute_window
    calls = {"n": 0}

    def _fail_second(*a, **k):
        calls["n"] += 1
        if calls["n"] == 2:
            raise RuntimeError("simulated failure")
        return real(*a, **k)

    monkeypatch.setattr(compute, "compute_window", _fail_second)
    out = tmp_path / "out"
    with pytest.raises(RuntimeError, match="simulated"):
        maps.write_maps(inlet, out, block_rows=64)
    assert not out.exists(), "the output directory this run created should be gone"


def test_missing_parent_directory(inlet, tmp_path):
    with pytest.raises(OutputError, match="parent does not exist"):
        maps.write_maps(inlet, tmp_path / "no" / "such")


def test_several_times_give_one_set_each(tmp_path):
    scene = load_scene(EXAMPLES / "open_sea_tile.toml",
                       times=["2026-06-14T09:00:00Z", "2026-06-14T10:00:00Z"])
    res = maps.write_maps(scene, tmp_path, formats=["geotiff"], variables=["glint_reflectance"])
    assert len(res.files) == 2 and len(res.summaries) == 2
    assert res.files[0].name != res.files[1].name
    assert "20260614T090000Z" in res.files[0].name


def test_file_names_carry_the_time(inlet, tmp_path):
    res = maps.write_maps(inlet, tmp_path, formats=["png"])
    assert res.files[0].name == "saltmarsh_reach_inlet_morning_survey_20260614T103000Z_glint.png"


def test_sensor_seeing_nothing_is_an_error_and_writes_nothing(tmp_path):
    from glint.errors import SensorError

    scene = load_scene(EXAMPLES / "drone_cove_survey.toml", **{"sensor.pitch": 20.0})
    out = tmp_path / "out"
    with pytest.raises(SensorError, match="sees none of the grid"):
        maps.write_maps(scene, out)
    assert not out.exists()
    # An existing directory is kept (and stays empty).
    out.mkdir()
    with pytest.raises(SensorError):
        maps.write_maps(scene, out)
    assert out.is_dir() and list(out.iterdir()) == []


def test_class_raster_is_self_describing(inlet, tmp_path):
    res = maps.write_maps(inlet, tmp_path, formats=["geotiff"])
    cls = next(p for p in res.files if p.name.endswith("_glint_class.tif"))
    with rasterio.open(cls) as src:
        tags = src.tags()
        assert tags["glint_class_names"].split() == list(inlet.classes.names)
        assert [float(x) for x in tags["glint_class_thresholds"].split()] == list(inlet.classes.thresholds)
        assert tags["glint_class_variable"] == inlet.classes.variable
        cmap = src.colormap(1)
        assert cmap[255][3] == 0 and all(cmap[k][3] == 255 for k in range(len(inlet.classes.names)))

"""Tests of glint.workflows.maps: the main job writes every format from one pass, and
leaves nothing behind when it fails. Files are read back with rasterio/GDAL
and netCDF4 (outside readers)."""

from __future__ import annotations

import netCDF4
import numpy as np
import pytest
import rasterio

from glint.engine import compute
from glint.workflows import maps
from glint.errors import InputError, OutputError

def test_writes_all_formats_consistently(inlet, tmp_path):
    res = maps.write_maps(inlet, tmp_path / "out")
    names = sorted(p.name for p in res.files)
    # float and class GeoTIFFs, NetCDF, reflectance and class PNGs, run record
    assert len(names) == 6
    assert not [p for p in (tmp_path / "out").iterdir() if p.name.startswith(".")], "temporary files left"
    tif = next(p for p in res.files if p.name.endswith("_glint.tif"))
    nc = next(p for p in res.files if p.suffix == ".nc")
    png = next(p for p in res.files if p.name.endswith("_glint.png"))
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
    assert 0 < s.sun_zenith < 90
    assert s.max_glint_reflectance == pytest.approx(float(ds.glint_reflectance.max()), rel=1e-6)
    assert sum(s.class_shares.values()) == pytest.approx(1.0)
    # the mean over the seen pixels (every pixel here), from the dataset itself
    assert s.mean_glint_reflectance == pytest.approx(float(ds.glint_reflectance.mean()), rel=1e-5)
    # A low aircraft: its view angles are evaluated at every pixel; the sun
    # comes from tie points.
    assert isinstance(s, maps.MapSummary) and s.tie_point_step > 0


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


def test_several_times_give_one_set_each(tmp_path, example_scene):
    scene = example_scene("open_sea_tile.toml",
                       times=["2026-06-14T09:00:00Z", "2026-06-14T10:00:00Z"])
    res = maps.write_maps(scene, tmp_path, formats=["geotiff"], variables=["glint_reflectance"])
    tifs = [p for p in res.files if p.suffix == ".tif"]
    assert len(tifs) == 2 and len(res.summaries) == 2
    assert len([p for p in res.files if p.name.endswith("_run.toml")]) == 2
    assert tifs[0].name != tifs[1].name
    assert "20260614T090000Z" in tifs[0].name


def test_file_names_carry_the_time(inlet, tmp_path):
    res = maps.write_maps(inlet, tmp_path, formats=["png"])
    assert res.files[0].name == "saltmarsh_reach_inlet_morning_survey_20260614T103000Z_glint.png"


def test_sensor_seeing_nothing_is_an_error_and_writes_nothing(tmp_path, example_scene):
    from glint.errors import SensorError

    scene = example_scene("drone_cove_survey.toml", **{"sensor.pitch": 20.0})
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


def test_caller_strips_give_the_same_files(inlet, tmp_path):
    """``blocks``: strips computed outside write_maps (as a batch computes
    them on workers) give files equal pixel for pixel to the engine's own."""
    own = maps.write_maps(inlet, tmp_path / "own", formats=["geotiff", "netcdf"], block_rows=64)
    names = maps.strip_variables(inlet)
    strips = compute.iter_blocks(inlet, variables=names, block_rows=96)
    given = maps.write_maps(inlet, tmp_path / "given", formats=["geotiff", "netcdf"], blocks=strips)
    assert [p.name for p in own.files] == [p.name for p in given.files]
    for a, b in zip(own.files, given.files):
        if a.suffix == ".tif":
            with rasterio.open(a) as fa, rasterio.open(b) as fb:
                np.testing.assert_array_equal(fa.read(), fb.read())
                assert fa.descriptions == fb.descriptions
        elif a.suffix == ".toml":  # the run records: the same resolved scene
            assert a.read_text() == b.read_text()
        else:
            with netCDF4.Dataset(a) as fa, netCDF4.Dataset(b) as fb:
                for v in fa.variables:
                    np.testing.assert_array_equal(fa[v][:], fb[v][:])
    assert own.summary == given.summary


def test_caller_strips_of_several_times(tmp_path, example_scene):
    scene = example_scene("open_sea_tile.toml",
                          times=["2026-06-14T09:00:00Z", "2026-06-14T10:00:00Z"])
    names = maps.strip_variables(scene, ["glint_reflectance"])
    strips = (s for t in scene.times
              for s in compute.iter_blocks(scene, time=t, variables=names, block_rows=100))
    res = maps.write_maps(scene, tmp_path, formats=["geotiff"], variables=["glint_reflectance"],
                          blocks=strips)
    ref = maps.write_maps(scene, tmp_path / "ref", formats=["geotiff"],
                          variables=["glint_reflectance"])
    for a, b in zip(res.files, ref.files):
        if a.suffix != ".tif":
            continue
        with rasterio.open(a) as fa, rasterio.open(b) as fb:
            np.testing.assert_array_equal(fa.read(), fb.read())
    assert [s.sun_zenith for s in res.summaries] == [s.sun_zenith for s in ref.summaries]


@pytest.mark.parametrize("case, fragment", [
    ("gap", "starting at row 64"),
    ("short", "ended at row"),
    ("long", "more strips"),
    ("missing", "'view_zenith'"),
])
def test_bad_caller_strips_are_refused_and_leave_nothing(inlet, tmp_path, case, fragment):
    names = maps.strip_variables(inlet, ["glint_reflectance"])
    strips = list(compute.iter_blocks(inlet, variables=names, block_rows=64))
    if case == "gap":
        del strips[1]
    elif case == "short":
        strips = strips[:-1]
    elif case == "long":
        strips = strips + strips[:1]
    else:
        strips = [(rows, {k: v for k, v in a.items() if k != "view_zenith"}) for rows, a in strips]
    out = tmp_path / "out"
    with pytest.raises(InputError, match=fragment):
        maps.write_maps(inlet, out, formats=["geotiff"], variables=["glint_reflectance"],
                        blocks=strips)
    assert not out.exists()


def test_all_times_are_one_set(tmp_path, example_scene, monkeypatch):
    """A failure at the second time leaves no file of the first, and the
    re-run needs no overwrite."""
    scene = example_scene("open_sea_tile.toml",
                          times=["2026-06-14T09:00:00Z", "2026-06-14T10:00:00Z"])
    real = compute.iter_windows
    calls = []

    def fail_second_time(*a, **k):
        calls.append(1)
        if len(calls) == 2:
            raise RuntimeError("simulated failure")
        return real(*a, **k)

    monkeypatch.setattr(compute, "iter_windows", fail_second_time)
    with pytest.raises(RuntimeError, match="simulated"):
        maps.write_maps(scene, tmp_path, formats=["geotiff", "png"], variables=["glint_reflectance"])
    assert list(tmp_path.iterdir()) == []
    monkeypatch.setattr(compute, "iter_windows", real)
    res = maps.write_maps(scene, tmp_path, formats=["geotiff", "png"], variables=["glint_reflectance"])
    assert len(res.files) == 6  # per time: GeoTIFF, PNG, run record

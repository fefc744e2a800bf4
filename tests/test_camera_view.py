"""Tests of glint.workflows.camera_view and ``glint camera-view``: glint in a camera's
own image coordinates. Checks use plain geometry (common practice) and the
grid-map path of the same scene."""

from __future__ import annotations

import json

import netCDF4
import numpy as np
import pytest
from click.testing import CliRunner

from glint.workflows import camera_view as cv
from glint.cli.main import cli
from glint.errors import InputError, SensorError
from glint.variables import CLASS_NODATA

def test_nadir_image_centre_glint_angle_is_sun_zenith(tmp_path, camera_scene):
    """Plain geometry: looking straight down, the glint angle is the sun's
    zenith angle (the mirror direction of the sun is at the sun zenith)."""
    scene = camera_scene()
    ds = cv.camera_view(scene)
    assert ds.glint_angle.shape == (120, 160)
    r, c = 60, 80  # the image centre (pixel centres at whole numbers)
    assert float(ds.view_zenith[r, c]) < 0.5
    assert float(ds.glint_angle[r, c]) == pytest.approx(float(ds.sun_zenith[r, c]), abs=0.5)
    assert ds.attrs["unseen_pixels"] == 0


def test_camera_view_matches_grid_map_at_same_ground_point(tmp_path, camera_scene):
    """Two paths to the same physics: the camera-image value at a pixel equals
    the kernel at that pixel's ground point with the sensor's view angles."""
    from glint.engine import compute
    from glint.sensors import GroundPoints

    scene = camera_scene(pitch=-70.0)
    ds = cv.camera_view(scene, step=8)
    lon, lat = ds.lon.values, ds.lat.values
    pts = GroundPoints.from_lonlat(lon, lat, scene.grid)
    va = scene.sensor.view_angles(pts, scene.times[0])
    ok = np.isfinite(va.view_zenith)
    assert ok.sum() > 50
    ref = compute.compute_points(scene, scene.times[0], longitude=lon, latitude=lat,
                                 view_zenith=va.view_zenith, view_azimuth=va.view_azimuth,
                                 variables=["glint_reflectance"])["glint_reflectance"]
    np.testing.assert_allclose(ds.glint_reflectance.values[ok], ref[ok], rtol=1e-3, atol=1e-6)


def test_pixels_above_horizon_are_empty_and_counted(tmp_path, camera_scene):
    scene = camera_scene(pitch=-10.0)  # the top of the image shows sky
    ds = cv.camera_view(scene, step=4)
    cls = ds.glint_class.values
    assert ds.attrs["unseen_pixels"] == int(np.sum(cls == CLASS_NODATA)) > 0
    assert np.all(np.isnan(ds.glint_reflectance.values[cls == CLASS_NODATA]))
    res = cv.write_camera_view(scene, tmp_path / "out", step=4)
    assert "not written" in res.summaries[0].footprint
    assert not any(p.suffix == ".geojson" for p in res.files)


def test_write_camera_view_files(tmp_path, example_scene):
    scene = example_scene("drone_cove_survey.toml")
    res = cv.write_camera_view(scene, tmp_path, step=20)
    assert sorted(p.suffix for p in res.files) == [".geojson", ".nc", ".png", ".png", ".toml"]
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")], "temporary files left"
    gj = json.loads(next(p for p in res.files if p.suffix == ".geojson").read_text())
    ring = gj["features"][0]["geometry"]["coordinates"][0]
    assert len(ring) == 5 and ring[0] == ring[-1]
    with netCDF4.Dataset(next(p for p in res.files if p.suffix == ".nc")) as f:
        assert f["lat"].standard_name == "latitude"
        assert f.id == next(p for p in res.files if p.suffix == ".nc").stem
        assert f["glint_fraction"].shape == f["lon"].shape
    with pytest.raises(Exception, match="exists"):
        cv.write_camera_view(scene, tmp_path, step=20)


def test_non_camera_sensor_refused(tmp_path, example_scene, examples):
    scene = example_scene("open_sea_tile.toml")
    with pytest.raises(SensorError, match="frame-camera"):
        cv.camera_view(scene)
    r = CliRunner().invoke(cli, ["camera-view", str(examples / "open_sea_tile.toml"), "-o", str(tmp_path)])
    assert r.exit_code == 2
    assert "Error:" in r.output and "frame-camera" in r.output


def test_cli_camera_view_prints_cautions(tmp_path, examples):
    r = CliRunner().invoke(cli, ["camera-view", str(examples / "drone_cove_survey.toml"),
                                 "-o", str(tmp_path / "o"), "--step", "25"])
    assert r.exit_code == 0, r.output
    assert "never look at the sun" in r.output
    assert "local aviation rules" in r.output
    assert "below the camera" in r.output
    assert "ground sampling distance" in r.output


def test_footprint_ring_is_counter_clockwise(tmp_path, camera_scene):
    """RFC 7946: outer rings are counter-clockwise (positive shoelace area)."""
    scene = camera_scene(heading=37.0, pitch=-75.0)
    res = cv.write_camera_view(scene, tmp_path, step=20)
    gj = json.loads(next(p for p in res.files if p.suffix == ".geojson").read_text())
    ring = np.array(gj["features"][0]["geometry"]["coordinates"][0])
    x, y = ring[:-1, 0], ring[:-1, 1]
    assert 0.5 * np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y) > 0


def test_cli_heading_and_pitch_override(tmp_path, examples):
    """Turning the drone camera away from the sun removes the severe class
    (the example's camera faces south-west with the sun in the south-east)."""
    args = ["camera-view", str(examples / "drone_cove_survey.toml"), "--step", "25"]
    r1 = CliRunner().invoke(cli, args + ["-o", str(tmp_path / "a")])
    r2 = CliRunner().invoke(cli, args + ["-o", str(tmp_path / "b"), "--heading", "300"])
    assert r1.exit_code == 0 and r2.exit_code == 0, r1.output + r2.output
    assert "severe 0.0 %" not in r1.output
    assert "severe 0.0 %" in r2.output


def test_camera_seeing_only_sky_is_an_error(tmp_path, example_scene):
    scene = example_scene("drone_cove_survey.toml", **{"sensor.pitch": 30.0})
    out = tmp_path / "out"
    with pytest.raises(SensorError, match="no pixel of the camera image sees the water"):
        cv.write_camera_view(scene, out, step=20)
    assert not out.exists()


@pytest.mark.filterwarnings("ignore::DeprecationWarning")
def test_camera_view_netcdf_passes_cf_checker(tmp_path, example_scene):
    """The camera view goes through the one NetCDF writer and stays CF-1.11."""
    from compliance_checker.runner import CheckSuite, ComplianceChecker

    res = cv.write_camera_view(example_scene("drone_cove_survey.toml"), tmp_path / "o", step=20)
    nc = next(p for p in res.files if p.suffix == ".nc")
    CheckSuite.load_all_available_checkers()
    report = tmp_path / "cf.json"
    # IOOS compliance-checker, CF 1.11 suite (outside reference), strict criteria
    passed, errors = ComplianceChecker.run_checker(
        str(nc), ["cf:1.11"], verbose=0, criteria="strict",
        output_filename=str(report), output_format="json")
    result = json.loads(report.read_text())["cf:1.11"]
    msgs = {level: [(i["name"], i["msgs"]) for i in result[level] if i["msgs"]]
            for level in ("high_priorities", "medium_priorities")}
    assert not errors
    assert passed and not any(msgs.values()), msgs
    with netCDF4.Dataset(nc) as f:
        assert f.Conventions == "CF-1.11, ACDD-1.3"
        assert f["glint_class"].flag_meanings.split() == ["negligible", "correctable", "severe"]
        assert f.pixel_step == 20 and "crs" not in f.variables


def test_summary_fields_and_mean_over_seen_pixels(camera_scene, tmp_path):
    scene = camera_scene(pitch=-10.0)  # part of the image shows sky
    res = cv.write_camera_view(scene, tmp_path / "o", step=4)
    s = res.summary
    ds = cv.camera_view(scene, step=4)
    refl = ds.glint_reflectance.values
    seen = np.isfinite(ds.lon.values)
    assert s.unseen_pixels == int((~seen).sum()) > 0
    assert s.mean_glint_reflectance == pytest.approx(float(np.nanmean(refl[seen])), rel=1e-6)
    assert s.pixel_step == 4 and s.sun_at == "below the camera"


def test_failure_in_second_time_leaves_no_file_of_the_first(example_scene, tmp_path, monkeypatch):
    """One output set per run: the files of every time, or none."""
    scene = example_scene("drone_cove_survey.toml",
                          time=["2026-06-14T10:15:00Z", "2026-06-14T11:15:00Z"])
    real = cv._view_strip
    second = scene.times[1]

    def fail_second(scene, cam, t, *a, **k):
        if t == second:
            raise RuntimeError("simulated failure")
        return real(scene, cam, t, *a, **k)

    monkeypatch.setattr(cv, "_view_strip", fail_second)
    out = tmp_path / "out"
    with pytest.raises(RuntimeError, match="simulated"):
        cv.write_camera_view(scene, out, step=25)
    assert not out.exists()
    monkeypatch.setattr(cv, "_view_strip", real)
    res = cv.write_camera_view(scene, out, step=25)  # no --overwrite needed
    assert len(res.files) == 10 and len(res.summaries) == 2  # 2 PNGs, NetCDF, run record, footprint


def test_strip_wise_files_equal_whole_image_view(camera_scene, tmp_path):
    """The files, written a few rows at a time (strips of 7 output rows, the
    last one shorter), hold exactly the whole-image camera_view values,
    pixel for pixel, and the quicklooks and summary do not depend on the
    strip height. The top of the image shows sky, so strips with and
    without water are both exercised."""
    import matplotlib.image as mpimg

    scene = camera_scene(pitch=-15.0)
    ds = cv.camera_view(scene, step=3)
    assert ds.glint_class.shape == (40, 54) and 0 < ds.attrs["unseen_pixels"] < 40 * 54
    res = cv.write_camera_view(scene, tmp_path / "strips", step=3, strip_rows=7)
    whole = cv.write_camera_view(scene, tmp_path / "whole", step=3, strip_rows=1000)
    nc = next(p for p in res.files if p.suffix == ".nc")
    with netCDF4.Dataset(nc) as f:
        f.set_auto_mask(False)
        for name in ["lon", "lat", *ds.data_vars]:
            np.testing.assert_array_equal(f[name][:], ds[name].values, err_msg=name)
        np.testing.assert_array_equal(f["row"][:], ds.row.values)
        np.testing.assert_array_equal(f["col"][:], ds.col.values)
        assert f.unseen_pixels == ds.attrs["unseen_pixels"]
        assert f.image_size == ds.attrs["image_size"]
        assert f.geospatial_lat_min == pytest.approx(float(np.nanmin(ds.lat)), abs=0)
        assert f.geospatial_lon_max == pytest.approx(float(np.nanmax(ds.lon)), abs=0)
    for suffix in ("_camera_view.png", "_camera_view_class.png"):
        a, b = (next(p for p in r.files if p.name.endswith(suffix)) for r in (res, whole))
        np.testing.assert_array_equal(mpimg.imread(a), mpimg.imread(b), err_msg=suffix)
    assert res.summary == whole.summary
    assert res.summary.unseen_pixels == ds.attrs["unseen_pixels"]


def test_strip_rows_must_be_positive_whole_number(camera_scene, tmp_path):
    for bad in (0, -3, 2.5, True):
        with pytest.raises(InputError, match=f"strip_rows must be a whole number >= 1; got {bad!r}"):
            cv.write_camera_view(camera_scene(), tmp_path / "o", strip_rows=bad)
    assert not (tmp_path / "o").exists()

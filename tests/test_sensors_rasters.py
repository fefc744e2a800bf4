"""Tests of the angle-rasters (per pixel) and angle-grid (coarse nodes) sensors."""

from __future__ import annotations

import numpy as np
import pytest
import rasterio
from affine import Affine

from glint.errors import SceneError, SensorError
from glint.geo.grid import Grid
from glint.sensors import AngleGrid, AngleRasters, GroundPoints, sensor_from_table
from glint.sensors.angle_grid import bilinear_at_points

GRID = Grid.from_bounds((500000, 6100000, 503000, 6102000), 100, 32631)   # 20 x 30


def _write(path, arrays, crs, transform, nodata=None):
    arrays = np.atleast_3d(np.asarray(arrays, dtype="float32").T).T if np.ndim(arrays) == 2 else np.asarray(arrays, "float32")
    with rasterio.open(path, "w", driver="GTiff", width=arrays.shape[2], height=arrays.shape[1],
                       count=arrays.shape[0], dtype="float32", crs=crs, transform=transform,
                       nodata=nodata) as dst:
        dst.write(arrays)
    return path


# -------------------------------------------------------------- angle rasters
def _angle_stack():
    rows, cols = GRID.shape
    rr, cc = np.mgrid[0:rows, 0:cols].astype(float)
    return np.stack([5.0 + rr + 0.1 * cc, (350.0 + cc) % 360.0])


def test_angle_rasters_two_band_file(tmp_path):
    stack = _angle_stack()
    _write(tmp_path / "angles.tif", stack, "EPSG:32631", GRID.transform)
    s = sensor_from_table({"kind": "angle-rasters", "file": "angles.tif"}, base_dir=tmp_path, grid=GRID)
    assert not s.smooth
    # full-resolution block: exact pixel values (written as float32)
    p = GroundPoints.from_pixels(GRID, np.arange(3, 7)[:, None], np.arange(20)[None, :])
    va = s.view_angles(p, None)
    np.testing.assert_allclose(va.view_zenith, stack[0, 3:7, :20].astype("float32"), rtol=1e-6)
    np.testing.assert_allclose(va.view_azimuth, stack[1, 3:7, :20].astype("float32"), rtol=1e-6)
    # fractional indices: nearest pixel
    va = s.view_angles(GroundPoints.from_pixels(GRID, [2.4, 2.6], [7.4, 7.6]), None)
    np.testing.assert_allclose(va.view_zenith, [5.0 + 2 + 0.7, 5.0 + 3 + 0.8], rtol=1e-6)


def test_angle_rasters_two_files_grid_reference(tmp_path):
    stack = _angle_stack()
    _write(tmp_path / "vz.tif", stack[0], "EPSG:32631", GRID.transform)
    _write(tmp_path / "va.tif", stack[1], "EPSG:32631", GRID.transform)
    s = sensor_from_table({"kind": "angle-rasters", "zenith_file": "vz.tif", "azimuth_file": "va.tif",
                           "azimuth_reference": "grid"}, base_dir=tmp_path, grid=GRID)
    p = GroundPoints.from_pixels(GRID, [0, 19], [0, 29])
    va = s.view_angles(p, None)
    # docs/conventions.md: true = (grid + gamma) % 360
    np.testing.assert_allclose(va.view_azimuth, (stack[1][[0, 19], [0, 29]] + p.convergence) % 360,
                               rtol=1e-6)


def test_angle_rasters_mismatch_is_reported(tmp_path):
    stack = _angle_stack()
    _write(tmp_path / "wrong.tif", stack[:, :, :-1], "EPSG:32631", GRID.transform)
    with pytest.raises(SceneError, match="sensor.file: .*does not match the scene grid"):
        sensor_from_table({"kind": "angle-rasters", "file": "wrong.tif"}, base_dir=tmp_path, grid=GRID)
    with pytest.raises(SceneError, match="sensor.file: file not found"):
        sensor_from_table({"kind": "angle-rasters", "file": "missing.tif"}, base_dir=tmp_path, grid=GRID)
    _write(tmp_path / "one.tif", stack[0], "EPSG:32631", GRID.transform)
    with pytest.raises(SceneError, match="band 2 does not exist"):
        sensor_from_table({"kind": "angle-rasters", "file": "one.tif"}, base_dir=tmp_path, grid=GRID)


def test_angle_rasters_nodata_is_nan(tmp_path):
    stack = _angle_stack()
    stack[0, 0, 0] = -9999.0
    _write(tmp_path / "angles.tif", stack, "EPSG:32631", GRID.transform, nodata=-9999.0)
    s = AngleRasters.from_files(tmp_path / "angles.tif", None, GRID)
    va = s.view_angles(GroundPoints.from_pixels(GRID, [0, 0, 50], [0, 1, 0]), None)
    assert np.isnan(va.view_zenith[0]) and np.isfinite(va.view_zenith[1]) and np.isnan(va.view_zenith[2])


# ----------------------------------------------------------------- angle grid
LON0, LAT0 = 4.5, 55.05     # near the scene grid (UTM 31N, 500 km easting -> 3 E)


def _lonlat_nodes(field, lon0=2.9, lat0=55.1, step=0.01, n=(8, 8)):
    """Nodes of a small EPSG:4326 grid, node (i, j) at the pixel centre."""
    t = Affine(step, 0, lon0 - step / 2, 0, -step, lat0 + step / 2)
    rows, cols = np.mgrid[0:n[0], 0:n[1]].astype(float)
    lon = lon0 + cols * step
    lat = lat0 - rows * step
    return field(lon, lat), t


def test_bilinear_at_points_reproduces_bilinear_field():
    # A bilinear function is reproduced exactly by bilinear interpolation
    # (common practice).
    i, j = np.mgrid[0:5, 0:4].astype(float)
    f = lambda r, c: 2.0 + 3.0 * r - 1.5 * c + 0.25 * r * c   # noqa: E731
    r, c = np.array([0.3, 2.7, 3.99, -0.5]), np.array([0.1, 1.5, 3.0, 3.5])
    np.testing.assert_allclose(bilinear_at_points(f(i, j), r, c), f(r, c), atol=1e-12)


def test_angle_grid_other_crs_reproduces_smooth_field(tmp_path):
    # Analytic field linear in lon/lat, given on EPSG:4326 nodes, sampled on a
    # UTM scene grid: bilinear interpolation in the node grid is exact for it.
    zen = lambda lon, lat: 10.0 + 50.0 * (lon - 2.9) + 30.0 * (55.1 - lat)   # noqa: E731
    az = lambda lon, lat: 100.0 + 20.0 * (lon - 2.9)                          # noqa: E731
    z, t = _lonlat_nodes(zen)
    a, _ = _lonlat_nodes(az)
    _write(tmp_path / "grid.tif", np.stack([z, a]), "EPSG:4326", t)
    g = Grid.from_lonlat_box(2.92, 55.05, 2.96, 55.08, 100.0)
    s = sensor_from_table({"kind": "angle-grid", "file": "grid.tif"}, base_dir=tmp_path, grid=g)
    assert s.smooth
    p = GroundPoints.from_pixels(g, np.arange(g.height)[:, None], np.arange(g.width)[None, :])
    va = s.view_angles(p, None)
    # float32 storage of the nodes: about 1e-5 deg
    np.testing.assert_allclose(va.view_zenith, zen(p.lon, p.lat), atol=2e-5)
    np.testing.assert_allclose(va.view_azimuth, az(p.lon, p.lat), atol=2e-5)


def test_angle_grid_azimuth_continuity_across_north():
    # Azimuths crossing north (350 -> 10 deg): interpolation through sin/cos
    # must pass through 0, never jump to 180 (common practice).
    zen = np.full((4, 4), 20.0)
    az = np.tile(np.array([340.0, 350.0, 0.0, 10.0]), (4, 1))
    s = AngleGrid(zen, az, "EPSG:4326", Affine(1.0, 0, -0.5, 0, -1.0, 50.5))
    lon = np.linspace(0.0, 3.0, 301)
    va = s.view_angles(GroundPoints.from_lonlat(lon, np.full(lon.shape, 49.0)), None)
    unwrapped = (va.view_azimuth + 180.0) % 360.0 - 180.0
    # midway between nodes of 350 and 0 deg: 355 deg (symmetry)
    assert va.view_azimuth[150] == pytest.approx(355.0, abs=1e-9)
    assert np.all(np.diff(unwrapped) > 0) and np.max(np.diff(unwrapped)) < 0.11
    np.testing.assert_allclose(unwrapped, -20.0 + 10.0 * lon, atol=0.01)


def test_angle_grid_extrapolates_one_spacing_then_nan():
    zen = np.array([[10.0, 20.0], [10.0, 20.0]])
    s = AngleGrid(zen, np.zeros((2, 2)), "EPSG:4326", Affine(1.0, 0, -0.5, 0, -1.0, 50.5))
    va = s.view_angles(GroundPoints.from_lonlat([1.5, 1.9, 2.1, -1.2], [50.0] * 4), None)
    np.testing.assert_allclose(va.view_zenith[:2], [25.0, 29.0])
    assert np.isnan(va.view_zenith[2]) and np.isnan(va.view_zenith[3])


def test_angle_grid_grid_north_reference():
    # Azimuths against grid north of a UTM node grid: converted with that
    # grid's convergence (docs/conventions.md), so a constant grid azimuth of
    # 0 becomes gamma in true terms.
    t = Affine(10000.0, 0, 600000.0, 0, -10000.0, 5800000.0)
    s = AngleGrid(np.full((3, 3), 30.0), np.zeros((3, 3)), 32631, t, azimuth_reference="grid")
    va = s.view_angles(GroundPoints.from_lonlat(4.7, 52.15), None)
    g = Grid(32631, t, (3, 3))
    assert float(va.view_azimuth) == pytest.approx(float(g.meridian_convergence(4.7, 52.15)), abs=1e-9)


def test_angle_grid_bad_inputs(tmp_path):
    with pytest.raises(SensorError, match=r"same shape; got \(3, 3\) and \(3, 4\)"):
        AngleGrid(np.zeros((3, 3)), np.zeros((3, 4)), 4326, Affine(1, 0, 10, 0, -1, 50))
    with pytest.raises(SensorError, match=r"at least 2 x 2 nodes; got \(1, 5\)"):
        AngleGrid(np.zeros((1, 5)), np.zeros((1, 5)), 4326, Affine(1, 0, 10, 0, -1, 50))
    _write(tmp_path / "a.tif", np.zeros((3, 3)), "EPSG:4326", Affine(1, 0, 10, 0, -1, 50))
    _write(tmp_path / "b.tif", np.zeros((4, 3)), "EPSG:4326", Affine(1, 0, 10, 0, -1, 50))
    with pytest.raises(SceneError, match="must share shape, CRS and transform"):
        sensor_from_table({"kind": "angle-grid", "zenith_file": "a.tif", "azimuth_file": "b.tif"},
                          base_dir=tmp_path, grid=None)
    with pytest.raises(SceneError, match="give either file .* not both"):
        sensor_from_table({"kind": "angle-grid", "file": "a.tif", "zenith_file": "a.tif"},
                          base_dir=tmp_path, grid=None)

"""Tests of glint.sensors: base types, ellipsoid helpers, scene tables,
fixed-direction and nadir-point sensors."""

from __future__ import annotations

import numpy as np
import pytest
from pyproj import Geod, Transformer

from glint.errors import SceneError, SensorError
from glint.geo.grid import Grid
from glint.sensors import (
    SENSOR_KINDS,
    FixedDirection,
    GroundPoints,
    NadirPoint,
    Sensor,
    angles_to_position,
    ecef_from_lonlat,
    lonlat_from_ecef,
    sensor_from_table,
)

GEOD = Geod(ellps="WGS84")


# ------------------------------------------------------------ ellipsoid helpers
def test_ecef_matches_pyproj(rng):
    # Reference library: PROJ's geographic 3-D -> geocentric conversion (EPSG:4979 -> 4978).
    lon = rng.uniform(-180, 180, 50)
    lat = rng.uniform(-90, 90, 50)
    h = rng.uniform(-100, 900e3, 50)
    tr = Transformer.from_crs("EPSG:4979", "EPSG:4978", always_xy=True)
    ref = np.array(tr.transform(lon, lat, h))
    ours = np.array(ecef_from_lonlat(lon, lat, h))
    np.testing.assert_allclose(ours, ref, atol=1e-6)
    back = lonlat_from_ecef(*ref)
    np.testing.assert_allclose(back[0], lon, atol=1e-10)
    np.testing.assert_allclose(back[1], lat, atol=1e-10)
    np.testing.assert_allclose(back[2], h, atol=1e-6)


@pytest.mark.parametrize("lon0, lat0", [(3.0, 55.0), (-70.0, -33.0), (150.0, 10.0)])
def test_view_azimuth_matches_geodesic_azimuth(lon0, lat0):
    # Reference library: pyproj.Geod.inv azimuths (Karney's geodesics). The
    # view azimuth is that of the normal section, which differs from the
    # geodesic azimuth by far less than 1e-3 deg at these ranges (from memory).
    az = np.arange(0.0, 360.0, 30.0)
    for dist in (1e3, 50e3, 300e3):
        lon, lat, _ = GEOD.fwd(np.full(az.shape, lon0), np.full(az.shape, lat0), az,
                               np.full(az.shape, dist))
        # sensor 50 m above the far points, seen from the ground point (lon0, lat0)
        x, y, z = ecef_from_lonlat(lon, lat, 50.0)
        _, va, _ = angles_to_position(lon0, lat0, 0.0, x, y, z)
        diff = (va - az + 180.0) % 360.0 - 180.0
        assert np.max(np.abs(diff)) < 1e-3


def test_view_zenith_of_overhead_and_horizontal_sensor():
    # Plain geometry: straight up is zenith 0; a sensor at the same height far
    # away along the surface is below the horizontal by the central angle d/R.
    x, y, z = ecef_from_lonlat(20.0, 40.0, 5000.0)
    vz, _, d = angles_to_position(20.0, 40.0, 0.0, x, y, z)
    assert vz == pytest.approx(0.0, abs=1e-6) and d == pytest.approx(5000.0, abs=1e-6)
    lon, lat, _ = GEOD.fwd(20.0, 40.0, 90.0, 100e3)
    vz, _, _ = angles_to_position(20.0, 40.0, 0.0, *ecef_from_lonlat(lon, lat, 0.0))
    # central angle ~ 100 km / 6.37e6 m = 0.9 deg; the chord dips by half of it
    assert vz == pytest.approx(90.0 + np.degrees(100e3 / 6.387e6) / 2, abs=0.01)


# -------------------------------------------------------------- base types
def test_ground_points_from_pixels_and_protocol():
    g = Grid.from_bounds((500000, 6000000, 501000, 6001000), 100, 32631)
    p = GroundPoints.from_pixels(g, np.arange(10)[:, None], np.arange(10)[None, :])
    assert p.shape == (10, 10)
    s = FixedDirection(view_zenith=10.0, view_azimuth=0.0)
    assert isinstance(s, Sensor)
    va = s.view_angles(p, None)
    assert va.view_zenith.shape == (10, 10) and va.time is None


def test_fixed_direction_grid_reference_uses_convergence():
    # Convergence convention from docs/conventions.md: true = (grid + gamma) % 360.
    g = Grid.from_bounds((600000, 5760000, 610000, 5770000), 1000, 32631)
    p = GroundPoints.from_pixels(g, [0, 9], [0, 9])
    s = FixedDirection(view_zenith=30.0, view_azimuth=359.0, azimuth_reference="grid")
    va = s.view_angles(p, None)
    np.testing.assert_allclose(va.view_azimuth, (359.0 + p.convergence) % 360.0)
    assert np.all(p.convergence > 1.0)   # east of the central meridian (3E), 52N


def test_fixed_direction_bad_values():
    with pytest.raises(SensorError, match="view_zenith.*95"):
        FixedDirection(view_zenith=95.0, view_azimuth=0.0)
    with pytest.raises(SensorError, match="'magnetic'"):
        FixedDirection(view_zenith=5.0, view_azimuth=0.0, azimuth_reference="magnetic")


# --------------------------------------------------------------- nadir point
def test_nadir_point_symmetry():
    # Plain geometry (common practice): points symmetric about the nadir point
    # see the sensor at the same zenith and at azimuths 180 deg apart.
    s = NadirPoint(lon=5.0, lat=52.0, altitude=800.0)
    for az in (0.0, 45.0, 90.0, 130.0):
        lon, lat, _ = GEOD.fwd([5.0, 5.0], [52.0, 52.0], [az, az + 180.0], [600.0, 600.0])
        va = s.view_angles(GroundPoints.from_lonlat(lon, lat), None)
        assert va.view_zenith[0] == pytest.approx(va.view_zenith[1], abs=1e-6)
        # 180 deg apart, up to the convergence of the meridians through the two
        # points, (lon0 - lon1) sin(lat) (spherical geometry, common practice)
        conv = (lon[0] - lon[1]) * np.sin(np.radians(52.0))
        diff = (va.view_azimuth[0] - va.view_azimuth[1] - conv) % 360
        assert diff == pytest.approx(180.0, abs=1e-5)
        # and each points back at the nadir point (reference: pyproj.Geod.inv)
        back, _, _ = GEOD.inv(lon, lat, [5.0, 5.0], [52.0, 52.0])
        # (normal section of a raised sensor vs geodesic: ~1e-5 deg here)
        np.testing.assert_allclose((va.view_azimuth - back + 180) % 360 - 180, 0, atol=1e-4)
        # plain geometry on a sphere of radius R: zenith = atan(d / (h + d^2/2R))
        # plus the tilt d/R of the normal at the point
        r = 6.38e6
        expected = np.degrees(np.arctan(600.0 / (800.0 + 600.0**2 / (2 * r))) + 600.0 / r)
        assert va.view_zenith[0] == pytest.approx(expected, abs=1e-5)


def test_nadir_point_beyond_horizon_is_nan():
    # Horizon distance sqrt(2 R h) ~ 11.3 km for h = 10 m (common practice).
    s = NadirPoint(lon=0.0, lat=0.0, altitude=10.0)
    lon, lat, _ = GEOD.fwd([0.0, 0.0], [0.0, 0.0], [90.0, 90.0], [10e3, 12e3])
    va = s.view_angles(GroundPoints.from_lonlat(lon, lat), None)
    assert np.isfinite(va.view_zenith[0]) and np.isnan(va.view_zenith[1])
    assert va.extras["unseen"] == 1


def test_nadir_point_bad_altitude():
    with pytest.raises(SensorError, match=r"altitude must be > 0 m; got -5\.0"):
        NadirPoint(lon=0.0, lat=0.0, altitude=-5.0)


def test_nan_flows_through():
    s = NadirPoint(lon=0.0, lat=0.0, altitude=100.0)
    va = s.view_angles(GroundPoints.from_lonlat([np.nan, 0.0], [0.0, 0.0]), None)
    assert np.isnan(va.view_zenith[0]) and np.isfinite(va.view_zenith[1])


# ------------------------------------------------------------- scene tables
GRID = Grid.from_bounds((500000, 6000000, 502000, 6002000), 100, 32631)


def test_registry_kinds():
    assert set(SENSOR_KINDS) == {
        "fixed-direction", "nadir-point", "angle-rasters", "angle-grid", "push-broom",
        "line-scanner", "frame-camera", "fixed-camera"}


def test_table_defaults_to_grid_centre(tmp_path):
    s = sensor_from_table({"kind": "nadir-point", "altitude": 120.0}, base_dir=tmp_path, grid=GRID)
    x, y = GRID.xy(9.5, 9.5)
    lon, lat = GRID.lonlat(x, y)
    assert s.lon == pytest.approx(float(lon)) and s.lat == pytest.approx(float(lat))


def test_table_reports_every_problem(tmp_path):
    with pytest.raises(SceneError) as err:
        sensor_from_table({"kind": "nadir-point", "altitude": -5.0, "altitud": 3, "lon": 500},
                          base_dir=tmp_path, grid=GRID)
    problems = err.value.problems
    assert "sensor.altitude: must be > 0 m, got -5.0" in problems
    assert any(p.startswith("sensor.altitud: unknown key") and "allowed keys: kind, lon, lat,"
               " altitude" in p for p in problems)
    assert any(p.startswith("sensor.lon: must lie in [-180, 180] deg, got 500.0") for p in problems)
    assert any(p.startswith("sensor.lat: required key is missing") for p in problems)


def test_table_unknown_kind_lists_kinds(tmp_path):
    with pytest.raises(SceneError, match="unknown sensor kind 'pushbroom'.*push-broom"):
        sensor_from_table({"kind": "pushbroom"}, base_dir=tmp_path, grid=GRID)
    with pytest.raises(SceneError, match="sensor.kind: required key is missing"):
        sensor_from_table({}, base_dir=tmp_path, grid=GRID)


def test_table_enum_lists_allowed(tmp_path):
    with pytest.raises(SceneError, match="azimuth_reference: must be one of 'true-north', 'grid'"):
        sensor_from_table({"kind": "fixed-direction", "view_zenith": 0.0, "view_azimuth": 0.0,
                           "azimuth_reference": "magnetic"}, base_dir=tmp_path, grid=GRID)


def test_table_times(tmp_path):
    base = {"kind": "push-broom", "altitude": 700e3, "heading": 190.0}
    s = sensor_from_table({**base, "centre_time": "2026-06-14T11:42:00+02:00"},
                          base_dir=tmp_path, grid=GRID)
    assert s.centre_time == np.datetime64("2026-06-14T09:42:00", "ns")
    with pytest.raises(SceneError, match="sensor.centre_time: .*no time zone"):
        sensor_from_table({**base, "centre_time": "2026-06-14T11:42:00"}, base_dir=tmp_path,
                          grid=GRID)


# ------------------------------------------------------------ example scenes
@pytest.mark.parametrize("name, kind", [("satellite_swath_windfarm", "push-broom"),
                                        ("drone_cove_survey", "frame-camera")])
def test_example_scenes_load(name, kind):
    from pathlib import Path

    from glint.scene import load_scene

    path = Path(__file__).resolve().parents[1] / "example_scenes" / f"{name}.toml"
    scene = load_scene(path)
    assert type(scene.sensor).__name__ == {"push-broom": "PushBroom",
                                           "frame-camera": "FrameCamera"}[kind]
    g = scene.grid
    p = GroundPoints.from_pixels(g, np.linspace(0, g.height - 1, 9)[:, None],
                                 np.linspace(0, g.width - 1, 9)[None, :])
    va = scene.sensor.view_angles(p, scene.times[0])
    seen = np.isfinite(va.view_zenith)
    assert seen.mean() > 0.3       # the sensor sees a good part of the grid
    assert np.all(va.view_zenith[seen] < 80)

"""Tests of the frame-camera (drone) and fixed-camera (shore, mast) sensors."""

from __future__ import annotations

import numpy as np
import pytest
from pyproj import Geod

from glint.errors import SceneError, SensorError
from glint.geo.grid import Grid
from glint.sensors import (
    FixedCamera,
    FrameCamera,
    GroundPoints,
    camera_image_geometry,
    sensor_from_table,
)
from glint.sensors.base import local_radius
from glint.sensors.frame_camera import camera_axes

GEOD = Geod(ellps="WGS84")
LON, LAT = 8.25, 47.1


def _drone(**kw):
    args = dict(lon=LON, lat=LAT, altitude=120.0, image_size=(400, 300), horizontal_fov=70.0)
    args.update(kw)
    return FrameCamera(**args)


def _dist(lon, lat, lon0=LON, lat0=LAT):
    lon, lat = np.broadcast_arrays(np.asarray(lon, float), np.asarray(lat, float))
    return GEOD.inv(np.full(lon.shape, lon0), np.full(lon.shape, lat0), lon, lat)


def test_camera_axes_are_orthonormal_and_right_handed(rng):
    for _ in range(20):
        a = camera_axes(*rng.uniform([-360, -90, -180], [360, 90, 180]))
        np.testing.assert_allclose(a @ a.T, np.eye(3), atol=1e-12)
        assert np.linalg.det(a) == pytest.approx(1.0)


def test_camera_axes_conventions():
    # heading 90 (east), level: optical axis east, image right = south, bottom = down
    np.testing.assert_allclose(camera_axes(90.0, 0.0, 0.0),
                               [[0, -1, 0], [0, 0, -1], [1, 0, 0]], atol=1e-12)
    # positive roll turns the image right edge downwards
    a = camera_axes(0.0, 0.0, 10.0)
    assert a[0, 2] < 0


def test_nadir_footprint_is_2h_tan_half_fov():
    # Plain geometry (common practice): a nadir frame camera at height h
    # covers 2 h tan(FOV/2) along each image axis.
    cam = _drone(vertical_fov=50.0)
    lon, lat = cam.footprint()
    _, _, top = _dist(lon[0], lat[0], lon[1], lat[1])
    _, _, side = _dist(lon[1], lat[1], lon[2], lat[2])
    assert top == pytest.approx(2 * 120.0 * np.tan(np.radians(35.0)), rel=1e-5)
    assert side == pytest.approx(2 * 120.0 * np.tan(np.radians(25.0)), rel=1e-5)
    # top edge faces the heading (north), right edge east
    assert lat[0] > LAT and lat[3] < LAT and lon[1] > LON


def test_sensor_size_intrinsics_and_gsd():
    # GSD = h * pixel pitch / focal length at nadir (common practice):
    # 13.2 mm / 5472 px, f = 8.8 mm, h = 100 m -> 2.74 cm
    cam = FrameCamera(lon=LON, lat=LAT, altitude=100.0, image_size=(5472, 3648),
                      focal_length=8.8, sensor_width=13.2, sensor_height=8.8)
    gx, gy = cam.ground_sampling_distance()
    expected = 100.0 * (13.2 / 5472) / 8.8
    assert gx == pytest.approx(expected, rel=1e-5) and gy == pytest.approx(expected, rel=1e-5)
    assert cam.horizontal_fov == pytest.approx(2 * np.degrees(np.arctan(6.6 / 8.8)))


def test_point_north_of_drone_sees_it_south():
    # Plain geometry: a point d due north of a drone at height h sees it at
    # azimuth 180 and zenith atan(d / h) (flat water); the Earth-curvature
    # terms (d/R tilt of the normal) are below 0.002 deg at d = 100 m.
    cam = _drone(pitch=-60.0)
    for d in (20.0, 60.0, 100.0):
        lon, lat, _ = GEOD.fwd(LON, LAT, 0.0, d)
        va = cam.view_angles(GroundPoints.from_lonlat(lon, lat), None)
        assert float(va.view_azimuth) == pytest.approx(180.0, abs=1e-6)
        assert float(va.view_zenith) == pytest.approx(np.degrees(np.arctan(d / 120.0)), abs=2e-3)
        assert float(va.extras["image_col"]) == pytest.approx(199.5, abs=1e-6)


def test_image_world_round_trip(rng):
    cam = _drone(heading=37.0, pitch=-55.0, roll=4.0)
    col = rng.uniform(-0.5, 399.5, 200)
    row = rng.uniform(-0.5, 299.5, 200)
    lon, lat = cam.image_to_world(col, row)
    assert np.all(np.isfinite(lon))
    c2, r2 = cam.world_to_image(lon, lat)
    np.testing.assert_allclose(c2, col, atol=1e-6)
    np.testing.assert_allclose(r2, row, atol=1e-6)
    fixed = FixedCamera(lon=LON, lat=LAT, altitude=25.0, image_size=(400, 300),
                        horizontal_fov=30.0, heading=200.0, pitch=-8.0, roll=-2.0)
    lon, lat = fixed.image_to_world(col, row)
    hit = np.isfinite(lon)        # the top rows look above the horizon
    assert 100 < hit.sum() < 200
    c2, r2 = fixed.world_to_image(lon[hit], lat[hit])
    np.testing.assert_allclose(c2, col[hit], atol=1e-6)
    np.testing.assert_allclose(r2, row[hit], atol=1e-6)


def test_points_outside_image_or_behind_are_nan():
    cam = _drone(heading=0.0, pitch=-30.0, horizontal_fov=40.0)
    lon, lat, _ = GEOD.fwd([LON] * 3, [LAT] * 3, [0.0, 180.0, 90.0], [200.0, 400.0, 300.0])
    va = cam.view_angles(GroundPoints.from_lonlat(lon, lat), None)
    assert np.isfinite(va.view_zenith[0]) and np.isnan(va.view_zenith[1:]).all()
    assert va.extras["unseen"] == 2
    c, r = cam.world_to_image(lon, lat)
    assert np.isnan(c[1])          # behind the camera (to the south, camera faces north)


def test_camera_above_horizon_pixels_and_footprint():
    # Pitch -5 deg with a 45 deg vertical field: the upper part of the image
    # looks above the horizon.
    cam = _drone(pitch=-5.0, horizontal_fov=60.0, vertical_fov=45.0)
    geo = camera_image_geometry(cam)
    assert geo.view_zenith.shape == (300, 400)
    # rows whose ray points above the horizontal: row < rows/2 - fy tan(5 deg)
    fy = 150.0 / np.tan(np.radians(22.5))
    horizon_row = 150.0 - 0.5 - fy * np.tan(np.radians(5.0))
    # every row above the horizontal is empty; below it, the flat-water
    # intersections more than a few kilometres away lie beyond the curved
    # horizon and are empty too, a few rows more
    assert np.all(~geo.valid[: int(np.ceil(horizon_row))])
    assert np.all(geo.valid[int(np.ceil(horizon_row)) + 3:])
    assert 400 * int(np.ceil(horizon_row)) <= geo.unseen < 400 * (int(np.ceil(horizon_row)) + 3)
    assert np.all(geo.valid == np.isfinite(geo.view_zenith))
    with pytest.raises(SensorError, match="top-left, top-right do not reach the water"):
        cam.footprint()


def test_image_geometry_step_and_pixels():
    cam = _drone()
    full = camera_image_geometry(cam)
    sub = camera_image_geometry(cam, step=3)
    assert sub.lon.shape == (100, 134)
    np.testing.assert_allclose(sub.view_zenith, full.view_zenith[::3, ::3])
    # nadir image: the centre is seen nearly straight down, the corners at
    # atan(half diagonal / h)
    corner = np.hypot(*np.tan(np.radians(np.array([cam.horizontal_fov, cam.vertical_fov]) / 2)))
    assert np.nanmax(full.view_zenith) < np.degrees(np.arctan(corner)) + 0.01
    with pytest.raises(SensorError, match="step must be a positive whole number; got 0"):
        camera_image_geometry(cam, step=0)


def test_image_geometry_row_bands_tile_the_image():
    """Bands of output rows, stacked, are the whole image exactly (the last
    band is clipped at the image's bottom, as Python slicing)."""
    cam = _drone(pitch=-20.0)  # the top rows show sky
    full = camera_image_geometry(cam, step=3)
    bands = [camera_image_geometry(cam, step=3, rows=slice(r, r + 32)) for r in range(0, 100, 32)]
    assert [b.lon.shape for b in bands] == [(32, 134)] * 3 + [(4, 134)]
    for k in range(5):
        np.testing.assert_array_equal(np.concatenate([b[k] for b in bands]), full[k])
    assert sum(b.unseen for b in bands) == full.unseen > 0
    for bad in (slice(0, 10, 2), (0, 10), slice("a", 3)):
        with pytest.raises(SensorError, match="rows must be a slice"):
            camera_image_geometry(cam, step=3, rows=bad)


def test_fixed_camera_horizon_distance():
    # Common practice: the horizon of an observer at height h lies at about
    # sqrt(2 R h); its dip below the horizontal is acos(R / (R + h)).
    h = 20.0
    r = local_radius(LAT, 90.0)
    dip = np.degrees(np.arccos(r / (r + h)))
    cam = FixedCamera(lon=LON, lat=LAT, altitude=h, image_size=(1, 4001), horizontal_fov=0.05,
                      vertical_fov=0.05, heading=90.0, pitch=-dip)
    geo = camera_image_geometry(cam)
    rows = np.nonzero(geo.valid[:, 0])[0]
    assert 1900 < geo.unseen < 2100      # about the upper half misses the water
    _, _, far = _dist(geo.lon[rows[0], 0], geo.lat[rows[0], 0])
    assert far == pytest.approx(np.sqrt(2 * r * h), rel=0.03)
    # ground points beyond the horizon are not seen
    lon, lat, _ = GEOD.fwd([LON] * 2, [LAT] * 2, [90.0] * 2, np.array([0.9, 1.1]) * np.sqrt(2 * r * h))
    va = cam.view_angles(GroundPoints.from_lonlat(lon, lat), None)
    assert np.isnan(va.view_zenith[1])


def test_fixed_camera_far_view_angles_on_ellipsoid():
    # Reference: pyproj.Geod back azimuth; the camera's view azimuth from a
    # far point is the direction back to the camera.
    cam = FixedCamera(lon=LON, lat=LAT, altitude=40.0, image_size=(800, 600), horizontal_fov=50.0,
                      heading=300.0, pitch=-1.0)
    lon, lat = cam.image_to_world(np.array([100.0, 400.0, 700.0]), np.array([302.0, 305.0, 310.0]))
    va = cam.view_angles(GroundPoints.from_lonlat(lon, lat), None)
    back, _, dist = GEOD.inv(lon, lat, np.full(3, LON), np.full(3, LAT))
    np.testing.assert_allclose((va.view_azimuth - back + 180) % 360 - 180, 0, atol=1e-3)
    assert np.all(dist > 1000) and np.all(va.view_zenith > 85)


@pytest.mark.parametrize("kw, match", [
    ({"altitude": -5.0}, r"altitude must be > 0 m; got -5\.0"),
    ({"horizontal_fov": 180.0}, r"horizontal_fov must lie in \(0, 180\) deg; got 180\.0"),
    ({"horizontal_fov": 0.0}, r"horizontal_fov must lie in \(0, 180\) deg; got 0\.0"),
    ({"vertical_fov": -3.0}, r"vertical_fov must lie in \(0, 180\) deg; got -3\.0"),
    ({"horizontal_fov": None, "focal_length": 0.0, "sensor_width": 13.2},
     r"focal_length must be > 0 mm; got 0\.0"),
    ({"horizontal_fov": None, "focal_length": 8.8}, "needs sensor_width"),
    ({"focal_length": 8.8, "sensor_width": 13.2}, "give either focal_length"),
    ({"image_size": (0, 300)}, r"image_size must be two positive whole numbers .*\(0, 300\)"),
    ({"pitch": -95.0}, r"pitch must lie in \[-90, 90\] deg; got -95\.0"),
])
def test_camera_bad_values(kw, match):
    with pytest.raises(SensorError, match=match):
        _drone(**kw)


def test_camera_tables(tmp_path):
    g = Grid.from_bounds((440000, 5216000, 440400, 5216300), 1.0, 32632)
    s = sensor_from_table({"kind": "frame-camera", "altitude": 80.0, "image_size": [400, 300],
                           "horizontal_fov": 70.0}, base_dir=tmp_path, grid=g)
    assert isinstance(s, FrameCamera) and s.pitch == -90.0 and not s.smooth
    with pytest.raises(SceneError) as err:
        sensor_from_table({"kind": "fixed-camera", "altitude": 10.0, "image_size": [400, 300],
                           "focal_length": -4.0, "sensor_width": 6.0}, base_dir=tmp_path, grid=g)
    p = err.value.problems
    assert "sensor.focal_length: must be > 0 mm, got -4.0" in p
    assert any(x.startswith("sensor.heading: required key is missing") for x in p)
    assert any(x.startswith("sensor.pitch: required key is missing") for x in p)
    with pytest.raises(SceneError, match="not both"):
        sensor_from_table({"kind": "frame-camera", "altitude": 80.0, "image_size": [400, 300],
                           "horizontal_fov": 70.0, "focal_length": 8.8}, base_dir=tmp_path, grid=g)

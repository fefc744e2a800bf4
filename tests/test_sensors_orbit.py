"""Tests of the push-broom (satellite) and line-scanner (airborne) sensors."""

from __future__ import annotations

import numpy as np
import pytest
from pyproj import Geod

from glint.errors import SceneError, SensorError
from glint.geo.grid import Grid
from glint.sensors import GroundPoints, LineScanner, PushBroom, sensor_from_table
from glint.sensors.base import local_radius
from glint.sensors.push_broom import GM_EARTH, circular_orbit_ground_speed, ground_track_heading

GEOD = Geod(ellps="WGS84")
T0 = np.datetime64("2026-06-14T10:30:00", "ns")


def _points(lon0, lat0, az, dist):
    az, dist = np.broadcast_arrays(np.asarray(az, float), np.asarray(dist, float))
    lon, lat, _ = GEOD.fwd(np.full(az.shape, lon0), np.full(az.shape, lat0), az, dist)
    return GroundPoints.from_lonlat(lon, lat)


@pytest.mark.parametrize("heading, lat", [(190.0, 55.0), (12.0, -20.0), (100.0, 5.0)])
def test_swath_edge_zenith_vs_spherical_relation(heading, lat):
    # Spherical Earth, law of sines in the triangle Earth centre - satellite -
    # ground point (common practice): sin(vza) = (R + h) / R * sin(eta), where
    # eta is the scan angle at the satellite and lambda = vza - eta the Earth
    # central angle between nadir and point. R: local radius across the track.
    h = 786e3
    s = PushBroom(altitude=h, centre_lon=3.0, centre_lat=lat, heading=heading, centre_time=T0)
    r = local_radius(lat, heading + 90.0)
    for side in (+90.0, -90.0):
        d = np.array([50e3, 145e3, 400e3])
        pts = _points(3.0, lat, heading + side, d)
        va = s.view_angles(pts, None)
        lam = d / r
        eta = np.arctan2(r * np.sin(lam), r + h - r * np.cos(lam))
        expected = np.degrees(np.arcsin((r + h) / r * np.sin(eta)))
        np.testing.assert_allclose(va.view_zenith, expected, atol=0.05)
        # the satellite is back towards the track: the view azimuth is the
        # geodesic back azimuth to the scene centre (reference: pyproj.Geod)
        _, _, back = GEOD.fwd(np.full(3, 3.0), np.full(3, lat), np.full(3, heading + side), d)
        np.testing.assert_allclose(((va.view_azimuth - back) + 180) % 360 - 180, 0, atol=0.05)


def test_imaging_time_increases_along_track_at_ground_speed():
    # Time = distance / speed along the track (definition of the ground speed).
    s = PushBroom(altitude=700e3, centre_lon=-5.0, centre_lat=48.0, heading=195.0,
                  centre_time=T0, ground_speed=6800.0)
    d = np.array([-80e3, -40e3, 0.0, 40e3, 80e3])
    va = s.view_angles(_points(-5.0, 48.0, 195.0, d), None)
    dt = (va.time - T0) / np.timedelta64(1, "s")
    np.testing.assert_allclose(dt, d / 6800.0, rtol=1e-4, atol=1e-6)
    assert np.all(np.diff(va.time) > np.timedelta64(0, "ns"))
    # nadir along the track, zero-Doppler: the zenith stays near 0
    assert np.nanmax(va.view_zenith) < 0.05


def test_scene_time_used_without_centre_time():
    s = PushBroom(altitude=700e3, centre_lon=0.0, centre_lat=0.0, heading=0.0)
    va = s.view_angles(GroundPoints.from_lonlat(0.0, 0.0), T0)
    assert va.time == T0
    with pytest.raises(SensorError, match="centre_time"):
        s.view_angles(GroundPoints.from_lonlat(0.0, 0.0), None)


def test_circular_orbit_speed_against_kepler_period():
    # Kepler's third law (circular orbit): T = 2 pi sqrt(r^3 / GM); the
    # sub-satellite point covers 2 pi R in T. GM: NIMA TR8350.2 (WGS 84).
    R, h = 6371e3, 705e3
    period = 2 * np.pi * np.sqrt((R + h) ** 3 / GM_EARTH)
    assert circular_orbit_ground_speed(h, R) == pytest.approx(2 * np.pi * R / period, rel=1e-12)
    # a 705 km orbit takes about 98.9 minutes (from memory)
    assert period / 60 == pytest.approx(98.9, abs=0.2)


def test_ground_track_heading_from_inclination():
    # Spherical trigonometry (common practice): without Earth rotation,
    # sin(heading) = cos(i) / cos(lat); at the highest latitude reached the
    # track runs east-west.
    h, R = 700e3, 6371e3
    hd = ground_track_heading(0.0, 98.2, "descending", altitude=h, radius=R)
    assert 180.0 < hd < 200.0    # south-south-west, as a sun-synchronous descending pass
    asc = ground_track_heading(0.0, 98.2, "ascending", altitude=h, radius=R)
    assert 340.0 < asc < 360.0
    top = ground_track_heading(81.7999, 98.2, "ascending", altitude=h, radius=R)
    assert top == pytest.approx(270.0, abs=2.0)
    with pytest.raises(SensorError, match="never reaches latitude"):
        ground_track_heading(85.0, 98.2, "ascending", altitude=h, radius=R)


def test_tilt_moves_the_satellite_to_the_left():
    # Positive tilt looks to the right of the flight direction: the satellite
    # is on the left of the scene centre, seen at sin(vza) = (R+h)/R sin(tilt).
    h = 600e3
    s = PushBroom(altitude=h, centre_lon=10.0, centre_lat=40.0, heading=0.0, tilt=20.0,
                  centre_time=T0)
    va = s.view_angles(GroundPoints.from_lonlat(10.0, 40.0), None)
    r = local_radius(40.0, 90.0)
    assert float(va.view_zenith) == pytest.approx(
        np.degrees(np.arcsin((r + h) / r * np.sin(np.radians(20.0)))), abs=0.01)
    assert float(va.view_azimuth) == pytest.approx(270.0, abs=0.01)   # west = left of north


@pytest.mark.parametrize("kwargs, match", [
    ({"altitude": -5.0, "heading": 0.0}, r"altitude must be > 0 m; got -5\.0"),
    ({"altitude": 700e3}, "give either heading or inclination"),
    ({"altitude": 700e3, "heading": 0.0, "inclination": 98.0}, "give either heading"),
    ({"altitude": 700e3, "heading": 0.0, "tilt": 75.0}, r"tilt must lie in \(-60, 60\) deg; got 75\.0"),
    ({"altitude": 700e3, "heading": 0.0, "ground_speed": 0.0}, "ground_speed must be > 0"),
    ({"altitude": 700e3, "inclination": 98.0, "pass_direction": "up"}, "'up'"),
])
def test_push_broom_bad_values(kwargs, match):
    with pytest.raises(SensorError, match=match):
        PushBroom(centre_lon=0.0, centre_lat=0.0, **kwargs)


def test_push_broom_table(tmp_path):
    g = Grid.from_bounds((500000, 6000000, 510000, 6010000), 100, 32631)
    s = sensor_from_table({"kind": "push-broom", "altitude": 786e3, "inclination": 98.6,
                           "pass": "descending", "centre_time": "2026-06-14T10:30:00Z"},
                          base_dir=tmp_path, grid=g)
    assert 180 < s.heading < 200 and s.smooth
    with pytest.raises(SceneError) as err:
        sensor_from_table({"kind": "push-broom", "altitude": 786e3, "inclination": 98.6,
                           "pass": "sideways"}, base_dir=tmp_path, grid=g)
    assert "sensor.pass: must be one of 'ascending', 'descending'; got 'sideways'" in err.value.problems


# --------------------------------------------------------------- line scanner
def _scanner(**kw):
    lon1, lat1, _ = GEOD.fwd(10.0, 54.0, 0.0, 6000.0)
    args = dict(start=(10.0, 54.0), end=(lon1, lat1), altitude=2000.0, ground_speed=60.0,
                scan_half_angle=40.0, start_time=T0)
    args.update(kw)
    return LineScanner(**args)


def test_line_scanner_geometry():
    s = _scanner()
    # abeam points: plain geometry, scan angle = atan(d / h); inside/outside the swath
    lon, lat, _ = GEOD.fwd([10.0] * 3, [54.0] * 3, [0.0] * 3, [3000.0] * 3)
    d = np.array([1000.0, 1600.0, 1800.0])   # atan(1678/2000) = 40 deg
    lon2, lat2, _ = GEOD.fwd(lon, lat, [90.0] * 3, d)
    va = s.view_angles(GroundPoints.from_lonlat(lon2, lat2), None)
    assert np.isfinite(va.view_zenith[:2]).all() and np.isnan(va.view_zenith[2])
    np.testing.assert_allclose(va.extras["scan_angle"][:2], np.degrees(np.arctan(d[:2] / 2000.0)),
                               atol=0.01)
    # the aircraft is back at the foot of the perpendicular (reference: Geod back azimuth)
    _, _, back = GEOD.fwd(lon, lat, [90.0] * 3, d)
    np.testing.assert_allclose(va.view_azimuth[:2], np.asarray(back)[:2] % 360, atol=0.01)
    # imaged when abeam: 3000 m / 60 m/s = 50 s after the start
    dt = (va.time[:2] - T0) / np.timedelta64(1, "s")
    np.testing.assert_allclose(dt, 50.0, atol=0.05)
    assert np.isnat(va.time[2])


def test_line_scanner_line_ends():
    s = _scanner()
    lon, lat, _ = GEOD.fwd([10.0] * 3, [54.0] * 3, [180.0, 0.0, 0.0], [100.0, 5900.0, 6100.0])
    va = s.view_angles(GroundPoints.from_lonlat(lon, lat), None)
    assert np.isnan(va.view_zenith[0]) and np.isfinite(va.view_zenith[1]) and np.isnan(va.view_zenith[2])
    assert not s.smooth


@pytest.mark.parametrize("kw, match", [
    ({"scan_half_angle": 90.0}, r"scan_half_angle must lie in \(0, 90\) deg; got 90\.0"),
    ({"scan_half_angle": 0.0}, "scan_half_angle"),
    ({"altitude": 0.0}, r"altitude must be > 0 m; got 0\.0"),
    ({"ground_speed": -3.0}, "ground_speed must be > 0"),
    ({"end": (10.0, 54.0)}, "less than 1 m apart"),
])
def test_line_scanner_bad_values(kw, match):
    with pytest.raises(SensorError, match=match):
        _scanner(**kw)


def test_line_scanner_table(tmp_path):
    with pytest.raises(SceneError) as err:
        sensor_from_table({"kind": "line-scanner", "start": [10.0, 54.0], "end": [10.0],
                           "altitude": 2000.0, "ground_speed": 60.0, "scan_half_angle": 95.0},
                          base_dir=tmp_path, grid=None)
    p = err.value.problems
    assert any(x.startswith("sensor.end: must be a list of 2 numbers") for x in p)
    assert "sensor.scan_half_angle: must lie in (0, 90) deg, got 95.0" in p

"""Sensors near the grid at full speed: compiled view loops, ground-position
and sun lattices, windows, and the background computation.

Every shortcut is checked against the exact path it replaces:

* the compiled loops against the reference numpy ellipsoid helpers of
  glint.sensors.base (themselves checked against pyproj in test_sensors*);
* the table-and-series sines and cosines, and the branch-free sines,
  cosines, arc tangents and arc sines, against the math library;
* the sun at per-point times (one-second knots) against the SPA evaluated
  at each exact time (its own checks against pvlib are in test_sun.py);
* whole maps of each near sensor kind against the exact per-pixel path
  (pyproj at every pixel, every pixel's own sun): angles within 1e-4
  degrees, reflectance within 1e-4 relative where it exceeds 1e-4 (the
  error bounds the engine documents).
"""

from __future__ import annotations

import math
import threading

import numba
import time

import numpy as np
import pytest

from glint.engine import compute
from glint.geo.lattice import MAX_NODES, lattices
from glint.physics.sun import solar_position
from glint.physics.trig import asin, atan2, sincosd
from glint.scene import scene_from_dict
from glint.sensors.base import (
    GreatCircleTrack,
    GroundPoints,
    angles_to_position,
    ecef_from_lonlat,
    lonlat_from_ecef,
)
from glint.sensors.kernels import view_from_position, view_from_track
from glint.workflows.job import computed_ahead

# An invented inlet (the bundled example's box) on a 2 m grid.
BOX = {"west": -8.0070, "south": 37.0015, "east": -7.9730, "north": 37.0285}
SENSORS = {
    "nadir-point": {"kind": "nadir-point", "lon": -8.0049, "lat": 37.0191, "altitude": 3000.0},
    "frame-camera": {"kind": "frame-camera", "lon": -7.9900, "lat": 37.0150, "altitude": 1500.0,
                     "image_size": [4000, 3000], "horizontal_fov": 70.0},
    "fixed-camera": {"kind": "fixed-camera", "lon": -7.9900, "lat": 36.9990, "altitude": 300.0,
                     "image_size": [4000, 3000], "horizontal_fov": 70.0, "heading": 0.0,
                     "pitch": -12.0},
    "line-scanner": {"kind": "line-scanner", "start": [-8.0100, 37.0140], "end": [-7.9700, 37.0160],
                     "altitude": 3000.0, "ground_speed": 60.0, "scan_half_angle": 40.0},
    "drone": {"kind": "frame-camera", "lon": -7.9900, "lat": 37.0150, "altitude": 40.0,
              "image_size": [4000, 3000], "horizontal_fov": 80.0, "pitch": -70.0},
}


#: The drone sees a few tens of metres: a small box around it.
DRONE_BOX = {"west": -7.9908, "south": 37.0146, "east": -7.9892, "north": 37.0160}


def _scene(sensor: dict, resolution: float | None = None, **grid):
    box = DRONE_BOX if sensor is SENSORS["drone"] else BOX
    resolution = resolution or (0.2 if sensor is SENSORS["drone"] else 6.0)
    data = {
        "scene": {"name": "Fast path check", "time": "2026-06-14T10:30:00Z"},
        "grid": {**box, "resolution": resolution, **grid},
        "sensor": sensor,
        "surface": {"wind_speed": 4.0, "wind_direction": 260.0},
        "water": {"wavelength": 560.0},
    }
    return scene_from_dict(data, base_dir=".")


def _exact_plan(scene):
    return compute.GeometryPlan(scene.times[0], 0, None, None, {}, False, 0.0)


# --------------------------------------------------------------- compiled loops
@numba.njit
def _sincosd_all(d):
    s, c = np.empty_like(d), np.empty_like(d)
    for i in range(d.size):
        s[i], c[i] = sincosd(d[i])
    return s, c


@numba.njit
def _atan2_all(y, x):
    out = np.empty_like(y)
    for i in range(y.size):
        out[i] = atan2(y[i], x[i])
    return out


@numba.njit
def _asin_all(s):
    out = np.empty_like(s)
    for i in range(s.size):
        out[i] = asin(s[i])
    return out


#: Largest error allowed of the branch-free functions [rad, or the same in
#: sine and cosine]: a few units in the last place of angles up to pi.
BRANCH_FREE_BOUND = 1e-15


def test_branch_free_trig_matches_math_library(rng):
    # sincosd against the sine and cosine in extended precision of the angle
    # reduced exactly to (-360, 360) by fmod, so that the reference itself
    # is good to about 1e-19.
    edges = np.concatenate([np.arange(-1080.0, 1081.0, 45.0), [0.0, -0.0, 1e-300, 44.9999999999,
                            45.0000000001, 89.99999999999, 1e15, -1e15, 9.99e15]])
    d = np.concatenate([rng.uniform(-720.0, 720.0, 200_000),
                        rng.uniform(-1e15, 1e15, 2000) , edges])
    s, c = _sincosd_all(d)
    reduced = np.radians(np.fmod(d, 360.0).astype(np.longdouble))
    assert np.max(np.abs(s - np.sin(reduced))) <= BRANCH_FREE_BOUND
    assert np.max(np.abs(c - np.cos(reduced))) <= BRANCH_FREE_BOUND
    # Exact at the multiples of 90 (the library's radians are not).
    s, c = _sincosd_all(np.array([0.0, 90.0, 180.0, -90.0, 270.0, 360.0]))
    assert np.array_equal(np.abs(s), [0, 1, 0, 1, 1, 0])
    assert np.array_equal(np.abs(c), [1, 0, 1, 0, 0, 1])
    # NaN, infinities and angles beyond the exact reduction give NaN.
    s, c = _sincosd_all(np.array([np.nan, np.inf, -np.inf, 2e16, -1e300]))
    assert np.isnan(s).all() and np.isnan(c).all()

    # atan2 against numpy's (the C library's) over every quadrant and
    # magnitude, the axes, signed zeros, infinities and NaN.
    m = 200_000
    y = rng.normal(size=m) * 10.0 ** rng.uniform(-12, 12, m)
    x = rng.normal(size=m) * 10.0 ** rng.uniform(-12, 12, m)
    special = [0.0, -0.0, 1.0, -1.0, 1e-300, -1e300, np.inf, -np.inf, np.nan]
    ey, ex = (a.ravel() for a in np.meshgrid(special, special))
    near = np.tan(np.pi / 12) * (1 + rng.uniform(-1e-6, 1e-6, 1000))  # the reduction's switch
    # Pairs near overflow and among the subnormals.
    big_y, big_x = (rng.uniform(0.3, 1.0, (2, 400)) * 1.79e308) * [[1], [-1]]
    tiny_y, tiny_x = rng.integers(1, 10**4, (2, 400)) * 5e-324
    y = np.concatenate([y, ey, near, -near, np.ones(1000), big_y, tiny_y, -tiny_y])
    x = np.concatenate([x, ex, np.ones(1000), -np.ones(1000), 1 / near, big_x, tiny_x, big_x])
    a = _atan2_all(y, x)
    ref = np.arctan2(y, x)
    assert np.array_equal(np.isnan(a), np.isnan(ref))
    ok = ~np.isnan(ref)
    assert np.max(np.abs(a[ok] - ref[ok])) <= BRANCH_FREE_BOUND
    assert np.array_equal(np.signbit(a[ok]), np.signbit(ref[ok]))  # signed zeros, -pi
    for yy, xx in [(0.0, 1.0), (0.0, -1.0), (-0.0, -1.0), (1.0, 0.0), (-1.0, 0.0),
                   (1.0, 1.0), (-1.0, -1.0)]:  # the math library's exact points
        assert _atan2_all(np.array([yy]), np.array([xx]))[0] == math.atan2(yy, xx)

    # asin against numpy's, to and beyond +-1 (NaN outside like numpy).
    s = np.concatenate([rng.uniform(-1.0, 1.0, 200_000), 1 - 10.0 ** -rng.uniform(1, 16, 1000),
                        [-1.0, 1.0, 0.0, -0.0, 0.5]])
    assert np.max(np.abs(_asin_all(s) - np.arcsin(s))) <= BRANCH_FREE_BOUND
    assert np.isnan(_asin_all(np.array([1.0 + 1e-15, -2.0, np.nan]))).all()


@pytest.mark.parametrize("height", [30.0, 3000.0, 786000.0])
def test_view_from_position_matches_reference_helpers(rng, height):
    lon = rng.uniform(-8.02, -7.96, 5000)
    lat = rng.uniform(37.0, 37.04, 5000)
    pos = ecef_from_lonlat(-7.99, 37.02, height)
    z, a, d, hidden = view_from_position(lon, lat, pos)
    ez, ea, ed = angles_to_position(lon, lat, 0.0, *pos)
    seen = ez < 90.0
    assert hidden == int(np.sum(~seen))
    np.testing.assert_allclose(z[seen], ez[seen], atol=1e-9)
    da = (a[seen] - ea[seen] + 180.0) % 360.0 - 180.0
    # azimuth error counts in proportion to the sine of the zenith
    assert np.max(np.abs(da) * np.sin(np.radians(ez[seen]))) < 1e-9
    np.testing.assert_allclose(d, ed, rtol=0, atol=1e-6)


@pytest.mark.parametrize("kind", ["frame-camera", "fixed-camera", "drone"])
def test_camera_view_matches_reference_helpers(rng, kind):
    """The fused camera loop (view angles, image position and what is seen)
    against the numpy chain it replaces: angles from the ECEF helpers, image
    position from the camera's own projection (world_to_image), seen where
    on the image and above the horizon."""
    scene = _scene(SENSORS[kind])
    cam = scene.sensor
    lon = rng.uniform(cam.lon - 0.03, cam.lon + 0.03, 20_000)
    lat = rng.uniform(cam.lat - 0.03, cam.lat + 0.03, 20_000)
    nan = np.full(lon.shape, np.nan)
    va = cam.view_angles(GroundPoints(nan, nan, lon, lat, nan, nan, nan), None)
    ez, ea, ed = angles_to_position(lon, lat, 0.0, *cam._xyz)
    col, row = cam.world_to_image(lon, lat)
    seen = cam.in_image(col, row) & (ez < 90.0)
    assert 0 < seen.sum() < seen.size  # points on and off the image
    np.testing.assert_array_equal(np.isfinite(va.view_zenith), seen)
    assert va.extras["unseen"] == int(np.sum(~seen))
    # image positions where they are meaningful (far off the image, rays
    # almost parallel to the image plane give huge values of either sign)
    near = (np.abs(col) < 4 * cam.cols) & (np.abs(row) < 4 * cam.rows)
    assert near.sum() > seen.sum()
    np.testing.assert_allclose(va.extras["image_col"][near], col[near], rtol=0, atol=1e-6)
    np.testing.assert_allclose(va.extras["image_row"][near], row[near], rtol=0, atol=1e-6)
    np.testing.assert_allclose(va.view_zenith[seen], ez[seen], atol=1e-9)
    da = (va.view_azimuth[seen] - ea[seen] + 180.0) % 360.0 - 180.0
    assert np.max(np.abs(da) * np.sin(np.radians(ez[seen]))) < 1e-9
    np.testing.assert_allclose(va.extras["slant_range"][seen], ed[seen], rtol=0, atol=1e-6)


def test_view_from_track_matches_reference_helpers(rng):
    """The fused line-scanner loop against the reference numpy chain it
    replaces (great-circle track, aircraft position, scan angle)."""
    lon = rng.uniform(-8.02, -7.96, 4000)
    lat = rng.uniform(37.0, 37.04, 4000)
    track = GreatCircleTrack(-8.01, 37.014, 85.0)
    along, _ = track.project(lon, lat)
    x, y, z = track.position(along, 3000.0)
    ez, ea, ed = angles_to_position(lon, lat, 0.0, x, y, z)
    alon, alat, ah = lonlat_from_ecef(x, y, z)
    svz, _, _ = angles_to_position(alon, alat, ah, *ecef_from_lonlat(lon, lat, 0.0))
    length = 3500.0
    g = view_from_track(lon, lat, centre=track.c, heading=track.t, height=3000.0,
                        radius=track.radius, length=length, scan_half_angle=40.0)
    s = along * track.radius
    ref_seen = (s >= 0) & (s <= length) & (180.0 - svz <= 40.0) & (ez < 90.0)
    np.testing.assert_array_equal(g["seen"], ref_seen)
    np.testing.assert_allclose(g["along_track"], s, atol=1e-6)
    np.testing.assert_allclose(g["view_zenith"][ref_seen], ez[ref_seen], atol=1e-9)
    np.testing.assert_allclose(g["scan_angle"][ref_seen], 180.0 - svz[ref_seen], atol=1e-7)
    da = (g["view_azimuth"][ref_seen] - ea[ref_seen] + 180.0) % 360.0 - 180.0
    assert np.max(np.abs(da) * np.sin(np.radians(ez[ref_seen]))) < 1e-9


def test_sun_at_imaging_times_matches_spa_at_each_time(rng):
    """Sun at many per-point times (one-second knots, linear in between)
    against the SPA at each exact time: well under 1e-6 degrees."""
    scene = _scene(SENSORS["line-scanner"])
    lon = rng.uniform(-8.0, -7.97, 300)
    lat = rng.uniform(37.0, 37.03, 300)
    t0 = np.datetime64("2026-06-14T10:30:00", "ns")
    times = t0 + (rng.uniform(0, 90, 300) * 1e9).astype("int64").astype("timedelta64[ns]")
    pts = GroundPoints.from_lonlat(longitude=lon, latitude=lat)
    got = compute._sun_at(scene, times, pts)
    for i in range(0, 300, 7):
        ref = solar_position(times[i], longitude=lon[i], latitude=lat[i])
        d = compute.direction_error(got["sun_zenith"][i], got["sun_azimuth"][i], ref.zenith,
                                    ref.azimuth)
        assert float(d) < 1e-6


# ------------------------------------------------------------ whole-map bound
@pytest.mark.parametrize("kind", list(SENSORS))
def test_near_sensor_maps_match_the_exact_path(kind):
    """Every pixel of a map of each near sensor kind against the exact path:
    the documented bounds (1e-4 deg in angles, 1e-4 relative in reflectance
    where it exceeds 1e-4; float32 storage adds up to 3e-5 deg)."""
    scene = _scene(SENSORS[kind])
    t = scene.times[0]
    plan = compute.plan_geometry(scene, t)
    assert not plan.views_interpolated and plan.ground is not None and plan.step > 0
    params = compute.kernel_parameters(scene, t)
    names = ("sun_zenith", "sun_azimuth", "view_zenith", "view_azimuth", "glint_reflectance")
    exact_plan = _exact_plan(scene)
    worst = {"sun": 0.0, "view": 0.0, "refl": 0.0}
    mismatched = seen = 0
    for r0 in range(0, scene.grid.height, 128):
        rs = slice(r0, min(r0 + 128, scene.grid.height))
        a = compute.compute_window(scene, plan, params, rs, None, names)
        b = compute.compute_window(scene, exact_plan, params, rs, None, names)
        for who in ("sun", "view"):
            d = compute.direction_error(a[f"{who}_zenith"].astype(float), a[f"{who}_azimuth"].astype(float),
                                        b[f"{who}_zenith"].astype(float), b[f"{who}_azimuth"].astype(float))
            if np.isfinite(d).any():
                worst[who] = max(worst[who], float(np.nanmax(d)))
        fa, fb = np.isfinite(a["view_zenith"]), np.isfinite(b["view_zenith"])
        mismatched += int(np.sum(fa != fb))
        seen += int(np.sum(fb))
        ra, rb = a["glint_reflectance"].astype(float), b["glint_reflectance"].astype(float)
        big = fa & fb & (rb > 1e-4)
        if big.any():
            worst["refl"] = max(worst["refl"], float(np.max(np.abs(ra[big] / rb[big] - 1.0))))
    assert seen > 1000
    assert worst["sun"] <= scene.tie_point_tolerance + 3e-5
    assert worst["view"] <= scene.tie_point_tolerance + 3e-5
    assert worst["refl"] <= 1e-4
    # Image and swath edges: the positions are right to far below a pixel,
    # so at most a pixel lying on the edge itself may flip.
    assert mismatched <= 2


def test_far_sensor_keeps_interpolated_views():
    sat = {"kind": "nadir-point", "altitude": 786000.0, "lon": -5.0, "lat": 38.0}
    plan = compute.plan_geometry(_scene(sat), np.datetime64("2026-06-14T10:30:00", "ns"))
    assert plan.views_interpolated and plan.ground is None


# ------------------------------------------------------------ bounded memory
def test_lattices_skip_spacings_with_too_many_nodes():
    scene = _scene(SENSORS["nadir-point"], resolution=0.5)  # about 36 Mpx
    steps = [s for s, r, c in lattices(scene.grid)]
    assert steps and all(len(r) * len(c) <= MAX_NODES for _, r, c in lattices(scene.grid))
    assert 2 not in steps and 4 not in steps


def test_windows_cover_the_grid_and_equal_strips():
    scene = _scene(SENSORS["line-scanner"], resolution=5.0)
    names = ("glint_reflectance", "view_zenith", "glint_class")
    strips = {rs.start: arrs for rs, arrs in compute.iter_blocks(scene, variables=names, block_rows=128)}
    covered = np.zeros(scene.grid.shape, int)
    for rs, cs, arrs in compute.iter_windows(scene, variables=names, block_rows=128, max_pixels=128 * 256):
        assert cs.stop - cs.start <= 256 and (cs.start % 128 == 0)
        covered[rs, cs] += 1
        for n in names:
            np.testing.assert_array_equal(arrs[n], strips[rs.start][n][:, cs])
    assert np.all(covered == 1)



def test_window_width_does_not_grow_with_the_grid():
    # Grids of 4000 and of 11000 columns (16 and 120 Mpx) get the same
    # windows; every width gets windows of whole tiles within the bound
    # (one tile at least), as few as that bound allows, or the whole strip.
    per_pixel = 33  # bytes of the map run's variables
    max_pixels = compute.WINDOW_BYTES // per_pixel
    assert compute._window_width(4000, 512, max_pixels) == compute._window_width(11000, 512, max_pixels)
    for rows, bound in ((512, max_pixels), (128, 128 * 256), (512, 1000)):
        widest = max(bound // rows**2, 1) * rows
        for width in range(1, 40000, 37):
            step = compute._window_width(width, rows, bound)
            if rows * width <= bound:
                assert step == width
                continue
            assert step % rows == 0 and step <= widest
            assert -(-width // step) == -(-width // widest)

# ------------------------------------------------------ background computing
def test_computed_ahead_keeps_order_and_raises_errors():
    assert list(computed_ahead(iter(range(20)), depth=2)) == list(range(20))

    def failing():
        yield 1
        raise ValueError("bad strip")

    with pytest.raises(ValueError, match="bad strip"):
        list(computed_ahead(failing()))


def test_computed_ahead_stops_when_the_consumer_stops():
    produced = []

    def slow():
        for i in range(1000):
            produced.append(i)
            yield i

    before = threading.active_count()
    for i in computed_ahead(slow(), depth=1):
        if i == 3:
            break
    deadline = time.time() + 5
    while threading.active_count() > before and time.time() < deadline:
        time.sleep(0.01)
    assert threading.active_count() <= before
    assert len(produced) < 10


def test_computed_ahead_holds_at_most_depth_items_ahead():
    # the memory of a map run counts two windows: the one being written and
    # the one computed ahead; the thread waits for the consumer to finish
    # with an item before it computes the next
    produced = []

    def counted():
        for i in range(10):
            produced.append(i)
            yield i

    for i in computed_ahead(counted(), depth=1):
        time.sleep(0.1)  # writing item i: the thread computes i + 1, then waits
        assert len(produced) <= i + 2
    assert produced == list(range(10))


# ------------------------------------------------------------ memory limit
def test_memory_limit_refuses_before_computing(tmp_path, monkeypatch):
    """A memory limit that cannot be met is a clear error raised before
    anything is computed or written, not the system stopping the process."""
    from glint.errors import MemoryLimitError
    from glint.workflows import maps

    scene = _scene(SENSORS["nadir-point"])
    monkeypatch.setenv(compute.MEMORY_LIMIT_VARIABLE, "50")
    with pytest.raises(MemoryLimitError, match=r"needs about [\d,]+ MiB.*GLINT_MEMORY_LIMIT_MB"):
        maps.write_maps(scene, tmp_path / "out", formats=["geotiff"])
    assert not (tmp_path / "out").exists() or not list((tmp_path / "out").iterdir())
    with pytest.raises(MemoryLimitError, match="in-memory dataset"):
        compute.compute_dataset(scene)
    monkeypatch.setenv(compute.MEMORY_LIMIT_VARIABLE, "lots")
    with pytest.raises(Exception, match="GLINT_MEMORY_LIMIT_MB must be a number of MiB; got 'lots'"):
        compute.check_memory(1, "a test")


def test_memory_needed_does_not_grow_with_the_grid():
    small = compute.window_memory(("glint_reflectance", "glint_class"))
    assert small == compute.window_memory(("glint_reflectance", "glint_class"))
    assert small < 600 * 2**20


def test_small_calls_run_on_one_thread_and_restore_the_count():
    # A call below SERIAL_BELOW points runs on one thread; the caller's
    # thread count comes back, also when the block raises. The serial and
    # the parallel run of the same compiled loop give the same pixels.
    import numba

    from glint.physics.threads import SERIAL_BELOW, threads_for
    from glint.physics.reflect import glint_kernel

    before = numba.get_num_threads()
    with threads_for(SERIAL_BELOW - 1):
        assert numba.get_num_threads() == 1
    with threads_for(SERIAL_BELOW):
        assert numba.get_num_threads() == before
    with pytest.raises(RuntimeError), threads_for(5):
        raise RuntimeError("inside")
    assert numba.get_num_threads() == before

    rng = np.random.default_rng(7)
    n = SERIAL_BELOW * 2
    sz, vz = rng.uniform(0, 80, n), rng.uniform(0, 60, n)
    sa, va = rng.uniform(0, 360, n), rng.uniform(0, 360, n)
    kw = dict(refractive_index=1.34, sigma2_crosswind=0.02, sigma2_upwind=0.03,
              wind_direction=40.0, sun_solid_angle=6.8e-5)
    big = glint_kernel(sz, sa, vz, va, **kw)
    small = glint_kernel(sz[:1000], sa[:1000], vz[:1000], va[:1000], **kw)
    for name in big:
        np.testing.assert_array_equal(np.asarray(big[name])[:1000], np.asarray(small[name]))

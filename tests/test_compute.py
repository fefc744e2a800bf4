"""Tests of glint.engine.compute: the block-wise scene computation.

Outside references: pvlib's SPA (sun angles at single pixels), pyproj (pixel
lon/lat), plain geometry (where a nadir sensor sees the sun's mirror image),
and the physics functions' own published checks (tests/test_reflect.py).
"""

from __future__ import annotations

import numpy as np
import pytest

from glint.engine import compute
from glint.errors import InputError
from glint.physics.reflect import glint_reflectance
from glint.variables import CLASS_NODATA


def _exact_plan(scene):
    t = scene.times[0]
    return compute.GeometryPlan(t, 0, None, None, {}, False, 0.0)


@pytest.mark.parametrize(
    "sensor",
    [
        {"kind": "nadir-point", "altitude": 700000.0, "lon": -7.2, "lat": 37.5},
        {"kind": "fixed-direction", "view_zenith": 25.0, "view_azimuth": 300.0},
    ],
)
def test_tie_point_interpolation_within_stated_bound(tmp_path, sensor, cove_scene):
    """Interpolated sun and view angles stay within the scene's tolerance of
    the exact values at every pixel (the bound compute.py documents)."""
    scene = cove_scene(sensor)
    plan = compute.plan_geometry(scene, scene.times[0])
    assert plan.step > 0, "a smooth scene should use tie points"
    params = compute.kernel_parameters(scene, scene.times[0])
    names = ("sun_zenith", "sun_azimuth", "view_zenith", "view_azimuth")
    rs = slice(0, scene.grid.height)
    fast = compute.compute_window(scene, plan, params, rs, None, names)
    exact = compute.compute_window(scene, _exact_plan(scene), params, rs, None, names)
    for who in ("sun", "view"):
        z, a = (f"{who}_zenith", f"{who}_azimuth")
        d = compute.direction_error(fast[z].astype(float), fast[a].astype(float),
                                    exact[z].astype(float), exact[a].astype(float))
        # float32 storage adds up to ~2e-5 deg at 360 deg.
        assert np.nanmax(d) <= scene.tie_point_tolerance + 3e-5, who


def test_direction_error_against_vector_angle(rng):
    """direction_error equals the angle between unit vectors (plain geometry)."""
    z1, z2 = rng.uniform(0, 90, 200), rng.uniform(0, 90, 200)
    a1, a2 = rng.uniform(0, 360, 200), rng.uniform(0, 360, 200)

    def vec(z, a):
        z, a = np.radians(z), np.radians(a)
        return np.stack([np.sin(z) * np.sin(a), np.sin(z) * np.cos(a), np.cos(z)])

    ref = np.degrees(np.arccos(np.clip((vec(z1, a1) * vec(z2, a2)).sum(0), -1, 1)))
    np.testing.assert_allclose(compute.direction_error(z1, a1, z2, a2), ref, atol=1e-6)


def test_nadir_inside_grid_is_caught(tmp_path, cove_scene):
    """A satellite-like nadir point inside a large grid: the view azimuth is
    singular at the nadir, so the check must look there. Every pixel of the
    result stays within the tolerance of the exact angles."""
    far = {"kind": "nadir-point", "altitude": 700000.0, "lon": -7.9, "lat": 37.03}
    scene = cove_scene(far, size=(8000.0, 6000.0), res=10.0)
    plan = compute.plan_geometry(scene, scene.times[0])
    params = compute.kernel_parameters(scene, scene.times[0])
    exact_plan = _exact_plan(scene)
    names = ("view_zenith", "view_azimuth")
    worst = 0.0
    for r0 in range(0, scene.grid.height, 100):
        rs = slice(r0, min(r0 + 100, scene.grid.height))
        a = compute.compute_window(scene, plan, params, rs, None, names)
        b = compute.compute_window(scene, exact_plan, params, rs, None, names)
        d = compute.direction_error(a["view_zenith"].astype(float), a["view_azimuth"].astype(float),
                                    b["view_zenith"].astype(float), b["view_azimuth"].astype(float))
        worst = max(worst, float(np.nanmax(d)))
    assert worst <= scene.tie_point_tolerance + 3e-5


def test_low_sensor_near_nadir_is_computed_at_every_pixel(tmp_path, cove_scene):
    """An aircraft 2.5 km up, above the tile: the view direction turns too fast
    near nadir for tie points to meet 1e-4 deg, so the view angles are
    evaluated at every pixel (from a checked lattice of ground positions),
    within the tolerance of the exact path everywhere."""
    scene = cove_scene()
    plan = compute.plan_geometry(scene, scene.times[0])
    assert not plan.views_interpolated
    assert plan.ground is not None and plan.ground.step > 0
    params = compute.kernel_parameters(scene, scene.times[0])
    names = ("view_zenith", "view_azimuth")
    rs = slice(0, scene.grid.height)
    a = compute.compute_window(scene, plan, params, rs, None, names)
    b = compute.compute_window(scene, _exact_plan(scene), params, rs, None, names)
    d = compute.direction_error(a["view_zenith"].astype(float), a["view_azimuth"].astype(float),
                                b["view_zenith"].astype(float), b["view_azimuth"].astype(float))
    assert np.nanmax(d) <= scene.tie_point_tolerance + 3e-5


def test_tighter_tolerance_gives_finer_nodes(tmp_path, cove_scene):
    far = {"kind": "nadir-point", "altitude": 700000.0, "lon": -7.2, "lat": 37.5}
    loose = cove_scene(far, scene={"tie_point_tolerance": 1e-2})
    tight = cove_scene(far, scene={"tie_point_tolerance": 1e-8})
    p_loose = compute.plan_geometry(loose, loose.times[0])
    p_tight = compute.plan_geometry(tight, tight.times[0])
    assert p_tight.step == 0 or p_tight.step < p_loose.step
    assert p_tight.max_error <= 1e-8


def test_sun_angles_match_pvlib_at_pixels(tmp_path, cove_scene):
    """Sun angles at a few pixels against pvlib's SPA (reference library)."""
    import pvlib
    import pandas as pd
    scene = cove_scene()
    ds = compute.compute_dataset(scene, variables=["sun_zenith", "sun_azimuth"])
    g = scene.grid
    rows = np.array([0, g.height // 2, g.height - 1])
    cols = np.array([g.width - 1, 3, g.width // 2])
    x, y = g.xy(rows, cols)
    lon, lat = g.lonlat(x, y)
    for r, c, lo, la in zip(rows, cols, lon, lat):
        ref = pvlib.solarposition.spa_python(
            pd.DatetimeIndex(["2026-06-14T10:30:00Z"]), la, lo, altitude=0.0,
            pressure=101325.0, temperature=12.0, delta_t=None,
        )
        # pvlib's delta_t default differs slightly; 2e-3 deg covers it.
        assert abs(float(ds.sun_zenith[r, c]) - ref["apparent_zenith"].iloc[0]) < 2e-3
        assert abs(float(ds.sun_azimuth[r, c]) - ref["azimuth"].iloc[0]) < 2e-3


def test_reflectance_matches_physics_functions(tmp_path, cove_scene):
    """The pipeline gives what the reference physics functions give for each
    pixel's own angles (wiring, wind-height conversion and kernel together)."""
    scene = cove_scene()
    ds = compute.compute_dataset(scene)
    p = compute.kernel_parameters(scene, scene.times[0])
    from glint.physics.surface import SLOPE_MODEL_WIND_HEIGHT, wind_speed_at_height

    w = wind_speed_at_height(5.0, 10.0, target_height=SLOPE_MODEL_WIND_HEIGHT["cox-munk"])
    ref = glint_reflectance(
        ds.sun_zenith.values.astype(float), ds.sun_azimuth.values.astype(float),
        ds.view_zenith.values.astype(float), ds.view_azimuth.values.astype(float),
        w, wind_direction=260.0, refractive_index=p.refractive_index, wind_height=12.5,
    )
    np.testing.assert_allclose(ds.glint_reflectance.values, ref, rtol=2e-4, atol=1e-7)


def test_nadir_sensor_glint_angle_zero_at_mirror_point(tmp_path, cove_scene):
    """Plain geometry: a sensor at height h above point N sees the sun's
    mirror image at the ground point h*tan(sun_zenith) from N towards the
    sun. The glint angle there is ~0 and is the minimum of the map."""
    scene = cove_scene()
    ds = compute.compute_dataset(scene, variables=["glint_angle", "sun_zenith", "sun_azimuth"])
    g = scene.grid
    from pyproj import Geod

    sz = float(ds.sun_zenith.mean())
    sa = float(ds.sun_azimuth.mean())
    lon, lat, _ = Geod(ellps="WGS84").fwd(-8.0, 37.02, sa, 2500.0 * np.tan(np.radians(sz)))
    from pyproj import Transformer

    x, y = Transformer.from_crs(4326, g.crs, always_xy=True).transform(lon, lat)
    r, c = (int(v) for v in np.floor(g.index(x, y)))
    ga = ds.glint_angle.values
    rmin, cmin = np.unravel_index(np.nanargmin(ga), ga.shape)
    assert abs(rmin - r) <= 1 and abs(cmin - c) <= 1
    assert ga[rmin, cmin] < 0.5  # within half a degree: 20 m pixels at 2.9 km range


def test_classes_follow_thresholds(tmp_path, cove_scene):
    scene = cove_scene()
    ds = compute.compute_dataset(scene, variables=["glint_radiance", "glint_class"])
    rad = ds.glint_radiance.values
    cls = ds.glint_class.values
    lo, hi = scene.classes.thresholds
    assert np.all(cls[rad < lo] == 0)
    assert np.all(cls[(rad >= lo) & (rad < hi)] == 1)
    assert np.all(cls[rad >= hi] == 2)
    np.testing.assert_array_equal(compute.classify(np.array([np.nan, 0.0, 1e-3, 1.0]), (1e-4, 5e-3)),
                                  [CLASS_NODATA, 0, 1, 2])


def test_lazy_dataset_is_lazy_and_equal(tmp_path, cove_scene):
    import dask.array as da
    import dask

    scene = cove_scene()
    eager = compute.compute_dataset(scene)

    def _refuse(*a, **k):
        raise AssertionError("dask computed while building the dataset")

    with dask.config.set(scheduler=_refuse):
        lazy = compute.compute_dataset(scene, chunks=(40, 64))
    assert isinstance(lazy.glint_reflectance.data, da.Array)
    with dask.config.set(scheduler="synchronous"):
        for v in eager.data_vars:
            np.testing.assert_array_equal(lazy[v].values, eager[v].values)


def test_iter_blocks_streams_whole_grid(tmp_path, cove_scene):
    scene = cove_scene()
    seen = 0
    for rs, block in compute.iter_blocks(scene, block_rows=32, variables=["glint_fraction"]):
        assert block["glint_fraction"].shape == (rs.stop - rs.start, scene.grid.width)
        assert block["glint_fraction"].dtype == np.float32
        seen += rs.stop - rs.start
    assert seen == scene.grid.height


def test_unknown_variable_named(tmp_path, cove_scene):
    scene = cove_scene()
    with pytest.raises(InputError, match="glint_brightness"):
        compute.compute_dataset(scene, variables=["glint_brightness"])


@pytest.mark.filterwarnings("ignore::glint.errors.ValidityWarning")
def test_calm_water_matches_reference_function(tmp_path, cove_scene):
    """Zero wind: the kernel path agrees with glint.physics.reflect's reference
    function, which floors the slope variances (calm water stays finite)."""
    scene = cove_scene({"kind": "fixed-direction", "view_zenith": 20.0, "view_azimuth": 300.0},
                   surface={"wind_speed": 0.0})
    ds = compute.compute_dataset(scene)
    ref = glint_reflectance(
        ds.sun_zenith.values.astype(float), ds.sun_azimuth.values.astype(float),
        ds.view_zenith.values.astype(float), ds.view_azimuth.values.astype(float),
        0.0, wind_direction=260.0, refractive_index=compute.kernel_parameters(scene, scene.times[0]).refractive_index,
    )
    assert np.all(np.isfinite(ds.glint_reflectance.values))
    np.testing.assert_allclose(ds.glint_reflectance.values, ref, rtol=2e-4, atol=1e-30)


def test_sun_below_horizon_gives_zero_glint(tmp_path, cove_scene):
    scene = cove_scene(scene={"time": "2026-06-14T23:30:00Z"})
    ds = compute.compute_dataset(scene, variables=["sun_zenith", "glint_reflectance", "glint_fraction"])
    assert float(ds.sun_zenith.min()) > 90
    assert float(ds.glint_reflectance.max()) == 0.0
    assert float(ds.glint_fraction.max()) == 0.0


def test_frame_camera_pixels_outside_image_are_nan(tmp_path, cove_scene):
    sensor = {
        "kind": "frame-camera", "lon": -7.99746, "lat": 37.00278, "altitude": 120.0,
        "heading": 0.0, "pitch": -90.0, "roll": 0.0,
        "horizontal_fov": 60.0, "vertical_fov": 45.0, "image_size": [400, 300],
    }
    # The camera hangs 120 m above the centre of a 400 m x 300 m grid.
    scene = cove_scene(sensor, size=(400.0, 300.0), res=2.0)
    ds = compute.compute_dataset(scene, variables=["view_zenith", "glint_reflectance"])
    vz = ds.view_zenith.values
    assert np.isnan(vz).any() and np.isfinite(vz).any()
    assert np.array_equal(np.isnan(vz), np.isnan(ds.glint_reflectance.values))
    # Plain geometry: inside a nadir frame the view zenith cannot exceed the
    # half-diagonal field of view.
    half_diag = np.degrees(np.arctan(np.hypot(np.tan(np.radians(30)), np.tan(np.radians(22.5)))))
    assert np.nanmax(vz) <= half_diag + 0.1


def test_per_pixel_times_rounded_to_ms_stay_exact(tmp_path, rng, cove_scene):
    """Line-scanner style per-pixel times: rounding to whole milliseconds
    moves the sun by less than 5e-6 deg (it moves < 0.0042 deg/s; common
    practice: 360 deg per sidereal day)."""
    from glint.physics.sun import solar_position

    scene = cove_scene()
    base = np.datetime64("2026-06-14T10:30:00", "ns")
    t = base + rng.integers(0, 60_000_000_000, 2000).astype("timedelta64[ns]")
    lat = np.full(t.shape, 37.0)
    lon = np.full(t.shape, -8.0)
    got = compute.sun_angles(scene, t, longitude=lon, latitude=lat)
    ref = solar_position(t, longitude=lon, latitude=lat, pressure=scene.sun.pressure, temperature=scene.sun.air_temperature)
    assert np.max(compute.direction_error(got.zenith, got.azimuth, ref.zenith, ref.azimuth)) < 5e-6

"""Tests of glint.physics.facets: the facet that mirrors the sun into the sensor."""

from __future__ import annotations

import numpy as np
import pytest
from pyproj import Geod

from glint.errors import InputError
from glint.physics.facets import FacetGeometry, facet_geometry, glint_angle, relative_azimuth

# A unit sphere: Geod.inv then returns great-circle angles in radians, an
# independent way to measure the angle between two directions given by
# (zenith, azimuth) = (90 - latitude, longitude).
UNIT_SPHERE = Geod(a=1.0, b=1.0)


def _separation_deg(z1, a1, z2, a2):
    """Angle between two directions, by pyproj's geodesic on a unit sphere."""
    z1, a1, z2, a2 = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (z1, a1, z2, a2)))
    _, _, dist = UNIT_SPHERE.inv(a1, 90.0 - z1, a2, 90.0 - z2)
    return np.degrees(dist)


def _unit(zenith, azimuth):
    """East-north-up unit vector, written out independently of the module."""
    t, p = np.radians(zenith), np.radians(azimuth)
    return np.stack([np.sin(t) * np.sin(p), np.sin(t) * np.cos(p), np.cos(t)], axis=-1)


@pytest.fixture
def angles(rng):
    n = 500
    return (
        rng.uniform(0.0, 89.0, n),
        rng.uniform(-360.0, 720.0, n),
        rng.uniform(0.0, 89.0, n),
        rng.uniform(0.0, 360.0, n),
    )


def test_specular_point_is_flat_facet():
    # docs/conventions.md: specular geometry is view_zenith == sun_zenith and
    # view_azimuth == sun_azimuth + 180; the mirroring facet is then
    # horizontal and the incidence angle equals the sun zenith (law of
    # reflection, Born and Wolf, Principles of Optics, sect. 1.5).
    g = facet_geometry(35.0, 200.0, 35.0, 20.0)
    assert isinstance(g, FacetGeometry)
    np.testing.assert_allclose([g.zx, g.zy, g.tilt], 0.0, atol=1e-12)
    np.testing.assert_allclose(g.reflection_angle, 35.0, atol=1e-9)
    np.testing.assert_allclose(g.glint_angle, 0.0, atol=1e-9)
    assert float(g.relative_azimuth) == 180.0


def test_nadir_view_tilt_is_half_sun_zenith():
    # Plain geometry (common practice): the bisector of the vertical and the
    # sun direction lies theta_s / 2 from each; the facet tilts towards the
    # sun, so its surface descends towards the sun's azimuth.
    g = facet_geometry(50.0, 90.0, 0.0, 0.0)  # sun due east
    np.testing.assert_allclose(g.tilt, 25.0, atol=1e-9)
    np.testing.assert_allclose(g.reflection_angle, 25.0, atol=1e-9)
    np.testing.assert_allclose(g.zx, -np.tan(np.radians(25.0)), rtol=1e-12)
    np.testing.assert_allclose(g.zy, 0.0, atol=1e-12)
    np.testing.assert_allclose(g.glint_angle, 50.0, atol=1e-9)


def test_law_of_reflection_random(angles):
    # Law of reflection (Born and Wolf, sect. 1.5): mirroring the sun
    # direction s about the facet normal n gives the view direction,
    # v = 2 (n.s) n - s, with n built from the slopes as (-zx, -zy, 1)/norm.
    sz, sa, vz, va = angles
    g = facet_geometry(sz, sa, vz, va)
    n = np.stack([-g.zx, -g.zy, np.ones_like(g.zx)], axis=-1)
    n /= np.linalg.norm(n, axis=-1, keepdims=True)
    s, v = _unit(sz, sa), _unit(vz, va)
    ns = np.sum(n * s, axis=-1)
    np.testing.assert_allclose(2 * ns[:, None] * n - s, v, atol=1e-12)
    # incidence angle on the facet and tilt from the normal
    np.testing.assert_allclose(np.degrees(np.arccos(ns)), g.reflection_angle, atol=1e-7)
    np.testing.assert_allclose(np.degrees(np.arccos(n[:, 2])), g.tilt, atol=1e-7)


def test_angles_against_pyproj_geodesic(angles):
    # 2 * omega is the angle between sun and sensor directions; the glint
    # angle is the angle between the sensor and the sun's mirror image
    # (zenith theta_s, azimuth phi_s + 180). Both measured independently as
    # great-circle distances with pyproj.Geod on a unit sphere.
    sz, sa, vz, va = angles
    g = facet_geometry(sz, sa, vz, va)
    np.testing.assert_allclose(2 * g.reflection_angle, _separation_deg(sz, sa, vz, va), atol=1e-7)
    np.testing.assert_allclose(g.glint_angle, _separation_deg(sz, sa + 180.0, vz, va), atol=1e-7)
    np.testing.assert_allclose(glint_angle(sz, sa, vz, va), g.glint_angle, rtol=0, atol=1e-12)


def test_glint_angle_cosine_formula(angles):
    # The defining formula (docs/conventions.md, Cox and Munk 1954):
    # cos g = cos ts cos tv - sin ts sin tv cos(pv - ps), away from 0 where
    # the arccosine is ill-conditioned.
    sz, sa, vz, va = angles
    ts, tv, d = np.radians(sz), np.radians(vz), np.radians(va - sa)
    expected = np.degrees(np.arccos(np.cos(ts) * np.cos(tv) - np.sin(ts) * np.sin(tv) * np.cos(d)))
    got = glint_angle(sz, sa, vz, va)
    ok = expected > 1.0
    np.testing.assert_allclose(got[ok], expected[ok], atol=1e-9)


def test_glint_angle_small_is_accurate():
    # A sensor 1e-6 degrees away from the specular direction (zenith step):
    # the angle must come out as 1e-6 degrees (plain geometry, common
    # practice); an arccos formulation would give noise of ~1e-6 degrees.
    got = glint_angle(40.0, 10.0, 40.0 + 1e-6, 190.0)
    np.testing.assert_allclose(got, 1e-6, rtol=1e-6)


def test_small_tilt_is_accurate():
    # Sensor 2e-6 degrees beyond the specular zenith: the bisector turns by
    # half of that, so tilt = 1e-6 degrees and omega = theta_s + 1e-6 degrees
    # (plain geometry, common practice).
    g = facet_geometry(40.0, 10.0, 40.0 + 2e-6, 190.0)
    np.testing.assert_allclose(g.tilt, 1e-6, rtol=1e-6)
    np.testing.assert_allclose(g.reflection_angle, 40.0 + 1e-6, rtol=0, atol=1e-11)


def test_relative_azimuth_wraps():
    # docs/conventions.md: (view_azimuth - sun_azimuth) wrapped to [0, 360).
    got = relative_azimuth([10.0, 350.0, 0.0, 90.0], [350.0, 10.0, 0.0, -90.0])
    np.testing.assert_array_equal(got, [340.0, 20.0, 0.0, 180.0])
    assert np.all((got >= 0) & (got < 360))


def test_swapping_sun_and_view_keeps_facet():
    # The bisector is symmetric in s and v (law of reflection): swapping sun
    # and sensor keeps the facet, omega and the glint angle (common practice).
    a = facet_geometry(20.0, 30.0, 60.0, 250.0)
    b = facet_geometry(60.0, 250.0, 20.0, 30.0)
    for name in ("zx", "zy", "tilt", "reflection_angle", "glint_angle"):
        np.testing.assert_allclose(getattr(a, name), getattr(b, name), atol=1e-12)


def test_nan_flows_and_shapes_broadcast():
    g = facet_geometry([[30.0], [np.nan]], 180.0, [10.0, 20.0, 30.0], 0.0)
    assert g.zx.shape == (2, 3)
    assert np.all(np.isnan(g.tilt[1]))
    assert np.all(np.isfinite(g.tilt[0]))
    assert np.isnan(glint_angle(np.nan, 0.0, 10.0, 0.0))
    assert np.isnan(relative_azimuth(np.nan, 10.0))


def test_scalar_and_zero_d_inputs():
    for value in (30.0, np.float32(30.0), np.array(30.0)):
        g = facet_geometry(value, 0.0, value, 180.0)
        assert g.tilt.shape == ()
        assert np.isclose(float(g.tilt), 0.0, atol=1e-12)


def test_opposite_directions_undefined_facet():
    # Sun at the horizon due north, sensor at the horizon due south: no
    # facet bisects opposite directions; slopes are NaN, glint angle 0.
    g = facet_geometry(90.0, 0.0, 90.0, 180.0)
    assert np.isnan(g.zx) and np.isnan(g.reflection_angle)
    np.testing.assert_allclose(g.glint_angle, 0.0, atol=1e-9)


@pytest.mark.parametrize("name", ["sun_zenith", "view_zenith"])
@pytest.mark.parametrize("bad", [-0.5, 180.5])
def test_zenith_out_of_range_raises(name, bad):
    kw = {"sun_zenith": 30.0, "sun_azimuth": 0.0, "view_zenith": 30.0, "view_azimuth": 0.0}
    kw[name] = [10.0, bad]
    with pytest.raises(InputError, match=rf"{name} must lie in \[0, 180\].*{bad!r}"):
        facet_geometry(**kw)
    with pytest.raises(ValueError):
        glint_angle(**kw)


def test_bad_azimuth_and_types_raise():
    with pytest.raises(InputError, match=r"sun_azimuth must be finite or NaN; got inf"):
        facet_geometry(30.0, np.inf, 30.0, 0.0)
    with pytest.raises(InputError, match=r"view_azimuth must be finite or NaN; got -inf"):
        relative_azimuth(0.0, -np.inf)
    with pytest.raises(InputError, match=r"view_zenith must be numeric, got 'high'"):
        facet_geometry(30.0, 0.0, "high", 0.0)
    with pytest.raises(InputError, match="do not broadcast"):
        facet_geometry([1.0, 2.0], 0.0, [1.0, 2.0, 3.0], 0.0)

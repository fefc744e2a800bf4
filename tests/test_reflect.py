"""Tests of glint.physics.reflect: reference glint formulas and the fused kernel."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import simpson

from glint.physics import reflect, surface
from glint.errors import InputError
from glint.physics.facets import facet_geometry
from glint.physics.reflect import (
    KERNEL_OUTPUTS,
    glint_fraction,
    glint_kernel,
    glint_radiance,
    glint_reflectance,
)
from glint.physics.sun import sun_solid_angle

OMEGA_SUN = float(sun_solid_angle(1.0))
N_WATER = 1.34


def fresnel_snell(theta_deg, n):
    """Unpolarised Fresnel reflectance from the sine and tangent forms of the
    Fresnel equations with Snell's law (Born and Wolf, Principles of Optics,
    sect. 1.5.2), written independently of glint.physics.optics."""
    ti = np.radians(np.asarray(theta_deg, dtype=float))
    tt = np.arcsin(np.sin(ti) / n)
    with np.errstate(invalid="ignore", divide="ignore"):
        rs = (np.sin(ti - tt) / np.sin(ti + tt)) ** 2
        rp = (np.tan(ti - tt) / np.tan(ti + tt)) ** 2
    normal = ((n - 1) / (n + 1)) ** 2
    return np.where(ti == 0, normal, 0.5 * (rs + rp))


def cox_munk_total_mss(wind_speed):
    # Cox and Munk (1954), clean surface, doi:10.1364/JOSA.44.000838: their
    # separate fit of the total mean square slope, 0.003 + 5.12e-3 W (W at
    # 12.5 m), which the isotropic density uses when the wind direction is
    # unknown (not the sum of the component laws, 0.003 + 5.08e-3 W).
    return 0.003 + 5.12e-3 * wind_speed


def random_angles(rng, n, dtype=np.float64):
    return tuple(
        a.astype(dtype)
        for a in (
            rng.uniform(0.0, 89.5, n),
            rng.uniform(0.0, 360.0, n),
            rng.uniform(0.0, 89.5, n),
            rng.uniform(0.0, 360.0, n),
        )
    )


def kernel_params(wind_speed, wind_direction=None, distribution="gaussian", shadowing=False):
    # As the engine: the isotropic fit when the wind direction is unknown.
    c, u = surface.slope_variances(wind_speed, wind_height=12.5, isotropic=wind_direction is None)
    kw = {
        "refractive_index": N_WATER,
        "sigma2_crosswind": float(c),
        "sigma2_upwind": float(u),
        "wind_direction": np.nan if wind_direction is None else wind_direction,
        "sun_solid_angle": OMEGA_SUN,
        "distribution": distribution,
        "shadowing": shadowing,
    }
    if distribution == "gram-charlier":
        kw["gram_charlier"] = {
            k: float(v) for k, v in surface.gram_charlier_coefficients(wind_speed, wind_height=12.5).items()
        }
    return kw


# ---------------------------------------------------------------------------
# reference formulas against independent computations
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("sun_zenith", [0.0, 25.0, 60.0])
@pytest.mark.parametrize("wind_speed", [2.0, 7.0, 12.0])
def test_specular_point_closed_form(sun_zenith, wind_speed):
    # Cox and Munk (1954): at the specular point the facet is flat, beta = 0,
    # omega = theta_s and the isotropic Gaussian density is
    # p(0, 0) = 1 / (pi sigma^2) with sigma^2 the total mean square slope, so
    # L/E = rho(theta_s) / (4 cos theta_s pi sigma^2). rho from Snell + Fresnel
    # (Born and Wolf), sigma^2 from the paper's clean-surface law.
    s2 = cox_munk_total_mss(wind_speed)
    cos_s = math.cos(math.radians(sun_zenith))
    rho = fresnel_snell(sun_zenith, N_WATER)
    expected = rho / (4 * cos_s * math.pi * s2)
    got = glint_radiance(sun_zenith, 100.0, sun_zenith, 280.0, wind_speed, wind_height=12.5)
    np.testing.assert_allclose(got, expected, rtol=1e-10)
    np.testing.assert_allclose(
        glint_reflectance(sun_zenith, 100.0, sun_zenith, 280.0, wind_speed, wind_height=12.5),
        math.pi * expected / cos_s, rtol=1e-10,
    )
    # glint fraction at the specular point: Omega / (4 cos theta_v pi sigma^2)
    np.testing.assert_allclose(
        glint_fraction(sun_zenith, 100.0, sun_zenith, 280.0, wind_speed, wind_height=12.5),
        OMEGA_SUN / (4 * cos_s * math.pi * s2), rtol=1e-10,
    )


def test_off_specular_closed_form():
    # Nadir view, sun at 40 deg: facet tilt 20 deg, omega 20 deg (plain
    # geometry); isotropic Gaussian p = exp(-tan^2 b / s2) / (pi s2) with s2
    # the total mss (Cox and Munk 1954); L/E = rho p / (4 cos^4 b).
    w = 6.0
    s2 = cox_munk_total_mss(w)
    b = math.radians(20.0)
    p = math.exp(-math.tan(b) ** 2 / s2) / (math.pi * s2)
    expected = fresnel_snell(20.0, N_WATER) * p / (4 * math.cos(b) ** 4)
    np.testing.assert_allclose(glint_radiance(40.0, 10.0, 0.0, 0.0, w, wind_height=12.5), expected, rtol=1e-10)


@pytest.mark.parametrize("sun_zenith,rtol", [(0.0, 0.005), (20.0, 0.01), (40.0, 0.03)])
def test_energy_conservation_flat_sea(sun_zenith, rtol):
    # Energy conservation (common practice in radiometry): the reflected
    # exitance over the incident irradiance on the horizontal,
    # int (L/E) cos(theta_v) dOmega_v / cos(theta_s), is the directional-
    # hemispherical reflectance. For a nearly flat sea all facets see the sun
    # near theta_s, so it tends to the Fresnel reflectance rho(theta_s)
    # (Born and Wolf); at W = 2 m/s within a few per cent (rho grows with the
    # incidence angle of tilted facets). Integrated with scipy (Simpson).
    w = 2.0
    tv = np.linspace(0.0, 89.999, 901)
    ph = np.linspace(0.0, 360.0, 1441)
    t_grid, p_grid = np.meshgrid(tv, ph, indexing="ij")
    radiance = glint_radiance(sun_zenith, 0.0, t_grid, p_grid, w, wind_height=12.5)
    f = radiance * np.cos(np.radians(t_grid)) * np.sin(np.radians(t_grid))
    exitance = simpson(simpson(f, x=np.radians(ph), axis=1), x=np.radians(tv))
    albedo = exitance / math.cos(math.radians(sun_zenith))
    np.testing.assert_allclose(albedo, fresnel_snell(sun_zenith, N_WATER), rtol=rtol)


def test_fraction_is_solid_angle_times_radiance_over_rho(rng):
    # docs/theory.md: every glinting facet shows rho times the sun's radiance
    # E / Omega, so L/E = f rho / Omega exactly (where f < 1). rho from the
    # independent Snell/Fresnel helper at the facet's reflection angle.
    sz, sa, vz, va = random_angles(rng, 2000)
    w, wd = 8.0, 135.0
    rad = glint_radiance(sz, sa, vz, va, w, wind_direction=wd, wind_height=12.5)
    frac = glint_fraction(sz, sa, vz, va, w, wind_direction=wd, sun_solid_angle=OMEGA_SUN, wind_height=12.5)
    rho = fresnel_snell(facet_geometry(sz, sa, vz, va).reflection_angle, N_WATER)
    np.testing.assert_allclose(frac, OMEGA_SUN * rad / rho, rtol=1e-10, atol=1e-300)


def test_fraction_default_solid_angle_is_one_au():
    # Default sun solid angle: the sun's disc at 1 AU, about 6.8e-5 sr
    # (IAU 2015 nominal solar radius and the AU).
    a = glint_fraction(30.0, 0.0, 28.0, 175.0, 5.0, wind_height=12.5)
    b = glint_fraction(30.0, 0.0, 28.0, 175.0, 5.0, sun_solid_angle=6.794e-5, wind_height=12.5)
    np.testing.assert_allclose(a, b, rtol=1e-3)


@pytest.mark.parametrize("wind_direction,distribution", [
    (None, "gaussian"), (35.0, "gaussian"), (35.0, "gram-charlier")])
def test_reciprocity(rng, wind_direction, distribution):
    # Helmholtz reciprocity (Born and Wolf; common practice in radiometry):
    # the BRDF, here glint_reflectance / pi, is unchanged when sun and sensor
    # swap places.
    sz, sa, vz, va = random_angles(rng, 1000)
    kw = {"wind_direction": wind_direction, "distribution": distribution}
    a = glint_reflectance(sz, sa, vz, va, 9.0, **kw, wind_height=12.5)
    b = glint_reflectance(vz, va, sz, sa, 9.0, **kw, wind_height=12.5)
    np.testing.assert_allclose(a, b, rtol=1e-9, atol=1e-300)
    a = glint_reflectance(sz, sa, vz, va, 9.0, shadowing=True, **kw, wind_height=12.5)
    b = glint_reflectance(vz, va, sz, sa, 9.0, shadowing=True, **kw, wind_height=12.5)
    np.testing.assert_allclose(a, b, rtol=1e-9, atol=1e-300)


def test_azimuthal_maximum_at_specular_azimuth():
    # Isotropic Gaussian, view zenith = sun zenith: over view azimuths the
    # reflectance peaks at sun_azimuth + 180 (docs/conventions.md), where the
    # facet is flat, and falls off symmetrically (mirror symmetry about the
    # sun's vertical plane, common practice).
    az = np.arange(0.0, 360.0, 0.5)
    r = glint_reflectance(35.0, 70.0, 35.0, az, 6.0, wind_height=12.5)
    assert az[np.argmax(r)] == 250.0
    side = (az > 250) & (az < 280)
    mirrored = glint_reflectance(35.0, 70.0, 35.0, 500.0 - az[side], 6.0, wind_height=12.5)
    np.testing.assert_allclose(r[side], mirrored, rtol=1e-10)
    assert np.all(np.diff(r[side]) < 0)


@pytest.mark.parametrize("sun_zenith", [15.0, 30.0])
def test_maximum_near_specular_low_sun_zenith(sun_zenith):
    # For a high sun and a light wind the glint peak lies close to the
    # specular direction (Cox and Munk 1954, their glitter photographs are
    # centred on the specular point); it is not exactly there, because
    # 1/cos(theta_v) and rho grow towards the horizon (the off-specular peak
    # of Torrance and Sparrow 1967, JOSA 57(9), 1105, from memory).
    tv = np.arange(0.0, 80.0, 0.05)
    r = glint_reflectance(sun_zenith, 0.0, tv, 180.0, 3.0, wind_height=12.5)
    assert abs(tv[np.argmax(r)] - sun_zenith) < 2.0


def test_off_specular_peak_at_low_sun():
    # Low sun, strong wind: the peak moves beyond the specular zenith towards
    # the horizon (off-specular peak, Torrance and Sparrow 1967, from
    # memory); this documents that the maximum is not at the specular point.
    tv = np.arange(0.0, 89.0, 0.05)
    r = glint_reflectance(70.0, 0.0, tv, 180.0, 12.0, wind_height=12.5)
    assert tv[np.argmax(r)] > 71.0


def test_gram_charlier_specular_ratio():
    # At the specular point xi = eta = 0 and the Gram-Charlier factor of Cox
    # and Munk (1954) reduces to 1 + c40/8 + c22/4 + c04/8 with c40 = 0.40,
    # c22 = 0.12, c04 = 0.23 (their clean-surface values): about 1.109. The
    # anisotropic Gaussian with the same variances is the baseline.
    w, wd = 8.0, 300.0
    ratio = glint_radiance(30.0, 0.0, 30.0, 180.0, w, wind_direction=wd,
                           distribution="gram-charlier", wind_height=12.5) / glint_radiance(
        30.0, 0.0, 30.0, 180.0, w, wind_direction=wd, wind_height=12.5)
    np.testing.assert_allclose(ratio, 1 + 0.40 / 8 + 0.12 / 4 + 0.23 / 8, rtol=1e-12)


def test_anisotropic_pdf_stretched_along_wind():
    # Cox and Munk (1954): upwind slopes are larger than crosswind slopes,
    # so a view that needs a facet tilted along the wind glints more than
    # one that needs the same tilt across it. Sun at zenith, sensor 30 deg
    # off nadir: the facet tilts 15 deg towards the sensor's azimuth.
    w, wd = 10.0, 0.0  # wind from north: upwind axis north-south
    along = glint_radiance(0.0, 0.0, 30.0, 0.0, w, wind_direction=wd, wind_height=12.5)
    across = glint_radiance(0.0, 0.0, 30.0, 90.0, w, wind_direction=wd, wind_height=12.5)
    c, u = 0.003 + 1.92e-3 * w, 3.16e-3 * w  # Cox and Munk (1954), clean surface
    t2 = math.tan(math.radians(15.0)) ** 2
    np.testing.assert_allclose(along / across, math.exp(-0.5 * t2 / u + 0.5 * t2 / c), rtol=1e-10)


def test_shadowing_reduces_grazing_glint():
    # Smith (1967): shadowing is negligible near nadir and removes light at
    # grazing angles.
    near = glint_radiance(20.0, 0.0, 20.0, 180.0, 10.0, shadowing=True, wind_height=12.5) / glint_radiance(
        20.0, 0.0, 20.0, 180.0, 10.0, wind_height=12.5)
    grazing = glint_radiance(85.0, 0.0, 85.0, 180.0, 10.0, shadowing=True, wind_height=12.5) / glint_radiance(
        85.0, 0.0, 85.0, 180.0, 10.0, wind_height=12.5)
    assert 0.99 < near <= 1.0
    assert grazing < 0.8


def test_horizon_rules():
    # docs/theory.md: no direct sun below the horizon -> 0; a sensor at or
    # below the horizon does not see the surface -> NaN; NaN flows through.
    for f in (glint_radiance, glint_reflectance, glint_fraction):
        assert f(95.0, 0.0, 30.0, 180.0, 5.0) == 0.0
        assert f(90.0, 0.0, 30.0, 180.0, 5.0) == 0.0
        assert np.isnan(f(30.0, 0.0, 90.0, 180.0, 5.0))
        assert np.isnan(f(120.0, 0.0, 100.0, 180.0, 5.0))
        assert np.isnan(f(np.nan, 0.0, 30.0, 180.0, 5.0))
        assert np.isnan(f(30.0, 0.0, 30.0, np.nan, 5.0))
        assert np.isnan(f(95.0, np.nan, 30.0, 180.0, 5.0))
        assert np.isnan(f(30.0, 0.0, 30.0, 180.0, np.nan))


def test_reference_errors():
    with pytest.raises(InputError, match=r"model must be one of .*'cox-munk'.*got 'cm'"):
        glint_radiance(30.0, 0.0, 30.0, 180.0, 5.0, model="cm", wind_height=12.5)
    with pytest.raises(InputError, match=r"distribution must be one of .*got 'normal'"):
        glint_reflectance(30.0, 0.0, 30.0, 180.0, 5.0, distribution="normal", wind_height=12.5)
    with pytest.raises(InputError, match="needs a wind_direction"):
        glint_radiance(30.0, 0.0, 30.0, 180.0, 5.0, distribution="gram-charlier", wind_height=12.5)
    with pytest.raises(InputError, match=r"shadowing must be True or False; got 'yes'"):
        glint_radiance(30.0, 0.0, 30.0, 180.0, 5.0, shadowing="yes", wind_height=12.5)
    with pytest.raises(InputError, match=r"sun_solid_angle must be finite, > 0.*got -1.0"):
        glint_fraction(30.0, 0.0, 30.0, 180.0, 5.0, sun_solid_angle=-1.0, wind_height=12.5)
    with pytest.raises(InputError, match=r"sun_zenith must lie in \[0, 180\]"):
        glint_radiance(-3.0, 0.0, 30.0, 180.0, 5.0, wind_height=12.5)
    with pytest.raises(InputError, match="wind_speed"):
        glint_radiance(30.0, 0.0, 30.0, 180.0, -1.0, wind_height=12.5)


# ---------------------------------------------------------------------------
# fused kernel == composition of the public numpy functions
# ---------------------------------------------------------------------------

KERNEL_CASES = [
    pytest.param(None, "gaussian", False, id="isotropic"),
    pytest.param(250.0, "gaussian", False, id="anisotropic"),
    pytest.param(250.0, "gram-charlier", False, id="gram-charlier"),
    pytest.param(None, "gaussian", True, id="isotropic-shadowing"),
    pytest.param(40.0, "gram-charlier", True, id="gram-charlier-shadowing"),
]


def _reference(angles, wind_speed, wind_direction, distribution, shadowing):
    a64 = [np.asarray(a, dtype=float) for a in angles]
    kw = {"wind_direction": wind_direction, "distribution": distribution,
          "shadowing": shadowing}
    return {
        "glint_angle": facet_geometry(*a64).glint_angle,
        "glint_radiance": glint_radiance(*a64, wind_speed, refractive_index=N_WATER, **kw, wind_height=12.5),
        "glint_reflectance": glint_reflectance(*a64, wind_speed, refractive_index=N_WATER, **kw, wind_height=12.5),
        "glint_fraction": glint_fraction(*a64, wind_speed, sun_solid_angle=OMEGA_SUN, **kw, wind_height=12.5),
    }


def _assert_close(got, ref, rtol):
    """rtol on values above 1e-6 of the largest (float32 tails: exp of large
    arguments) and an absolute floor of rtol times the largest elsewhere."""
    got = got.astype(float)
    np.testing.assert_array_equal(np.isnan(got), np.isnan(ref))
    ok = ~np.isnan(ref)
    peak = np.max(np.abs(ref[ok])) if np.any(ok) else 0.0
    np.testing.assert_allclose(got[ok], ref[ok], rtol=rtol, atol=rtol * peak)
    big = ok & (np.abs(ref) > 1e-6 * peak)
    np.testing.assert_allclose(got[big], ref[big], rtol=rtol, atol=0)


@pytest.mark.parametrize("wind_direction,distribution,shadowing", KERNEL_CASES)
@pytest.mark.parametrize("backend", ["numba", "numpy"])
def test_kernel_matches_reference_float32(rng, wind_direction, distribution, shadowing, backend):
    w = 7.0
    angles = random_angles(rng, 20_000, np.float32)
    res = glint_kernel(*angles, **kernel_params(w, wind_direction, distribution, shadowing),
                       backend=backend)
    ref = _reference(angles, w, wind_direction, distribution, shadowing)
    for key in KERNEL_OUTPUTS[1:]:
        assert res[key].dtype == np.float32
        _assert_close(res[key], ref[key], 1e-5)
    # the glint angle to float32 resolution of angles up to 180 deg
    np.testing.assert_allclose(res["glint_angle"], ref["glint_angle"], rtol=0, atol=5e-5)


@pytest.mark.parametrize("wind_direction,distribution,shadowing", KERNEL_CASES)
def test_kernel_matches_reference_float64(rng, wind_direction, distribution, shadowing):
    w = 11.0
    angles = random_angles(rng, 20_000, np.float64)
    out = {k: np.empty(20_000) for k in KERNEL_OUTPUTS}
    res = glint_kernel(*angles, **kernel_params(w, wind_direction, distribution, shadowing),
                       out=out)
    ref = _reference(angles, w, wind_direction, distribution, shadowing)
    for key in KERNEL_OUTPUTS[1:]:
        assert res[key] is out[key]
        _assert_close(res[key], ref[key], 1e-10)
    np.testing.assert_allclose(res["glint_angle"], ref["glint_angle"], rtol=0, atol=1e-9)
    # float64 inputs, default float32 outputs
    res32 = glint_kernel(*angles, **kernel_params(w, wind_direction, distribution, shadowing))
    for key in KERNEL_OUTPUTS[1:]:
        assert res32[key].dtype == np.float32
        _assert_close(res32[key], ref[key], 1e-6)


def test_kernel_specials_and_shapes():
    # Horizon rules as the reference; N-D arrays keep their shape.
    sz = np.array([[30.0, 95.0, 90.0], [30.0, np.nan, 95.0]], dtype=np.float32)
    sa = np.array([[0.0, 0.0, 0.0], [0.0, 0.0, np.nan]], dtype=np.float32)
    vz = np.array([[30.0, 30.0, 30.0], [90.0, 30.0, 30.0]], dtype=np.float32)
    va = np.full((2, 3), 180.0, dtype=np.float32)
    res = glint_kernel(sz, sa, vz, va, **kernel_params(5.0))
    ref = glint_kernel(sz, sa, vz, va, **kernel_params(5.0), backend="numpy")
    for key in ("glint_radiance", "glint_reflectance", "glint_fraction"):
        r = res[key]
        np.testing.assert_array_equal(np.isnan(r), np.isnan(ref[key]))
        assert r.shape == (2, 3)
        assert r[0, 0] > 0 and r[0, 1] == 0 and r[0, 2] == 0
        assert np.isnan(r[1]).all()
    assert np.isfinite(res["glint_angle"][0]).all() and np.isfinite(res["glint_angle"][1, 0])
    assert np.isnan(res["glint_angle"][1, 1:]).all()


def test_kernel_fraction_clipped_at_one():
    # A nearly flat sea (sigma^2 = 1e-7): the formula would exceed 1 at the
    # specular point; docs/theory.md clips it there.
    a = np.array([30.0], dtype=np.float32)
    res = glint_kernel(a, a * 0, a, a * 0 + 180, refractive_index=N_WATER,
                       sigma2_crosswind=1e-7, sigma2_upwind=1e-7, sun_solid_angle=OMEGA_SUN)
    assert res["glint_fraction"][0] == 1.0


def test_kernel_broadcasts_mixed_shapes():
    vz = np.linspace(0.0, 60.0, 7)
    res = glint_kernel(30.0, 0.0, vz, 180.0, **kernel_params(5.0))
    ref = glint_radiance(30.0, 0.0, vz, 180.0, 5.0, refractive_index=N_WATER, wind_height=12.5)
    _assert_close(res["glint_radiance"], ref, 1e-6)


@pytest.mark.parametrize("name,value,match", [
    ("refractive_index", 0.0, r"refractive_index must be finite, > 0; got 0.0"),
    ("sigma2_crosswind", -0.01, r"sigma2_crosswind must be finite, > 0; got -0.01"),
    ("sigma2_upwind", np.nan, r"sigma2_upwind must be finite, > 0; got nan"),
    ("sun_solid_angle", 7.0, r"sun_solid_angle must be finite, > 0 and <= 6.28.*got 7.0"),
    ("wind_direction", np.inf, r"wind_direction must be a finite scalar or NaN; got inf"),
    ("distribution", "lorentz", r"distribution must be one of .*got 'lorentz'"),
    ("backend", "cuda", r"backend must be one of 'numba', 'numpy'; got 'cuda'"),
    ("shadowing", 1, r"shadowing must be True or False; got 1"),
    ("refractive_index", [1.3, 1.4], r"refractive_index must be a scalar"),
])
def test_kernel_bad_parameters(name, value, match):
    kw = kernel_params(5.0)
    kw[name] = value
    a = np.array([30.0])
    with pytest.raises(InputError, match=match):
        glint_kernel(a, a, a, a, **kw)


def test_kernel_gram_charlier_needs_coefficients_and_direction():
    a = np.array([30.0])
    kw = kernel_params(5.0, 10.0, "gram-charlier")
    kw["gram_charlier"] = {"c21": 0.0}
    with pytest.raises(InputError, match=r"gram_charlier, a mapping with keys c21, c03"):
        glint_kernel(a, a, a, a, **kw)
    kw = kernel_params(5.0, 10.0, "gram-charlier")
    kw["wind_direction"] = np.nan
    with pytest.raises(InputError, match="needs a wind_direction"):
        glint_kernel(a, a, a, a, **kw)
    kw = kernel_params(5.0, 10.0, "gram-charlier")
    kw["distribution"] = "gaussian"
    with pytest.raises(InputError, match="only used with distribution='gram-charlier'"):
        glint_kernel(a, a, a, a, **kw)


@pytest.mark.parametrize("backend", ["numba", "numpy"])
def test_kernel_zenith_out_of_range(backend):
    sz = np.array([10.0, 181.0, 20.0])
    a = np.full(3, 30.0)
    with pytest.raises(InputError, match=r"sun_zenith must lie in \[0, 180\].*181.0"):
        glint_kernel(sz, a, a, a, **kernel_params(5.0), backend=backend)
    with pytest.raises(InputError, match=r"view_zenith must lie in \[0, 180\].*-1.0"):
        glint_kernel(a, a, a - 31.0, a, **kernel_params(5.0), backend=backend)
    az = np.array([0.0, np.inf, 0.0])
    with pytest.raises(InputError, match=r"view_azimuth must be finite or NaN; got inf"):
        glint_kernel(a, a, a, az, **kernel_params(5.0), backend=backend)


def test_kernel_bad_out():
    a = np.full(4, 30.0, dtype=np.float32)
    out = {k: np.empty(4, dtype=np.float32) for k in KERNEL_OUTPUTS}
    out["glint_fraction"] = np.empty(5, dtype=np.float32)
    with pytest.raises(InputError, match=r"out\['glint_fraction'\] must be .* of shape \(4,\)"):
        glint_kernel(a, a, a, a, **kernel_params(5.0), out=out)
    with pytest.raises(InputError, match="out must be a mapping"):
        glint_kernel(a, a, a, a, **kernel_params(5.0), out={"glint_angle": a})
    out = {k: np.empty(4, dtype=np.int32) for k in KERNEL_OUTPUTS}
    with pytest.raises(InputError, match="int32 array"):
        glint_kernel(a, a, a, a, **kernel_params(5.0), out=out)


def test_warmup_runs():
    reflect.warmup(float64=True)
    with pytest.raises(InputError, match=r"float64 must be True or False; got 'yes'"):
        reflect.warmup(float64="yes")


# ---------------------------------------------------------------------------
# properties
# ---------------------------------------------------------------------------

zenith = st.floats(0.0, 89.9, allow_nan=False)
azimuth = st.floats(-720.0, 720.0, allow_nan=False)


@settings(max_examples=60, deadline=None)
@given(sz=zenith, sa=azimuth, vz=zenith, va=azimuth, w=st.floats(1.0, 14.0),
       wd=st.one_of(st.none(), st.floats(0.0, 360.0)))
def test_property_valid_inputs_finite_nonnegative(sz, sa, vz, va, w, wd):
    # Physical bounds (common practice): radiance, reflectance and fraction
    # are finite and >= 0 for a sun above and a sensor above the horizon;
    # the fraction is at most 1; the glint angle lies in [0, 180].
    kw = kernel_params(w, wd)
    arr = [np.array([x, x], dtype=np.float32) for x in (sz, sa, vz, va)]
    res = glint_kernel(*arr, **kw)
    for key in KERNEL_OUTPUTS:
        assert res[key].shape == (2,)
        assert np.all(np.isfinite(res[key])) and np.all(res[key] >= 0)
    assert np.all(res["glint_fraction"] <= 1.0)
    assert np.all(res["glint_angle"] <= 180.0)
    ref = glint_radiance(sz, sa, vz, va, w, wind_direction=wd, wind_height=12.5)
    assert np.isfinite(ref) and ref >= 0


@settings(max_examples=30, deadline=None)
@given(shape=st.sampled_from([(0,), (1,), (3, 4), (2, 1, 5)]))
def test_property_shapes(shape):
    a = np.full(shape, 40.0, dtype=np.float32)
    res = glint_kernel(a, a, a, a + 140.0, **kernel_params(5.0))
    for key in KERNEL_OUTPUTS:
        assert res[key].shape == shape and res[key].dtype == np.float32

"""Tests of glint.physics.surface against published laws and numerical quadrature."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate, special

from glint.errors import InputError, ValidityWarning
from glint.physics.surface import (
    SLOPE_MODEL_REGISTRY,
    SLOPE_MODEL_WIND_HEIGHT,
    SLOPE_MODELS,
    anisotropic_gaussian_pdf,
    bidirectional_shadowing,
    cox_munk_clean_isotropic,
    gram_charlier_coefficients,
    gram_charlier_series,
    shadowing,
    slope_pdf,
    slope_variances,
    whitecap_fraction,
    wind_frame_slopes,
    wind_speed_at_height,
)

WINDS = np.array([1.0, 3.0, 5.0, 7.5, 10.0, 14.0])

# ------------------------------------------------------------ variances


def test_cox_munk_clean_laws():
    # Cox and Munk (1954): sigma_c^2 = 0.003 + 1.92e-3 W, sigma_u^2 = 3.16e-3 W,
    # total 0.003 + 5.12e-3 W, W at 12.5 m.
    c, u = slope_variances(WINDS, wind_height=12.5)
    np.testing.assert_allclose(c, 0.003 + 1.92e-3 * WINDS, rtol=1e-12)
    np.testing.assert_allclose(u, 3.16e-3 * WINDS, rtol=1e-12)
    # The published total 0.003 + 5.12e-3 W is a separate fit; the components sum to
    # 0.003 + 5.08e-3 W, within 1 % of it over 1-14 m/s.
    np.testing.assert_allclose(c + u, 0.003 + 5.08e-3 * WINDS, rtol=1e-12)


def test_cox_munk_isotropic_law():
    # Cox and Munk (1954), JOSA 44(11) 838-850, clean surface: the total mean
    # square slope is fitted separately as 0.003 + 5.12e-3 W (W at 12.5 m).
    # Without a wind direction glint uses that fit, in two equal halves.
    c, u = slope_variances(WINDS, wind_height=12.5, isotropic=True)
    np.testing.assert_allclose(c + u, 0.003 + 5.12e-3 * WINDS, rtol=1e-12)
    np.testing.assert_array_equal(c, u)
    # The registry records it; models without a separate fit split their sum.
    assert SLOPE_MODEL_REGISTRY["cox-munk"].isotropic is cox_munk_clean_isotropic
    bc, bu = slope_variances(WINDS, model="breon-henriot")
    ic, iu = slope_variances(WINDS, model="breon-henriot", isotropic=True)
    np.testing.assert_allclose(ic + iu, bc + bu, rtol=1e-12)
    # From a 10 m wind: converted to 12.5 m first (Stull 1988 log profile).
    w125 = wind_speed_at_height(8.0, 10.0, target_height=12.5)
    c10, u10 = slope_variances(8.0, isotropic=True)
    assert float(c10 + u10) == pytest.approx(0.003 + 5.12e-3 * float(w125), rel=1e-12)


def test_isotropic_flag_must_be_boolean():
    with pytest.raises(InputError, match="isotropic must be True or False; got 'yes'"):
        slope_variances(5.0, isotropic="yes")


def test_cox_munk_slick_laws():
    # Cox and Munk (1954), slick surface: 0.003 + 0.84e-3 W, 0.005 + 0.78e-3 W.
    c, u = slope_variances(WINDS, model="cox-munk-slick", wind_height=12.5)
    np.testing.assert_allclose(c, 0.003 + 0.84e-3 * WINDS, rtol=1e-12)
    np.testing.assert_allclose(u, 0.005 + 0.78e-3 * WINDS, rtol=1e-12)


def test_cox_munk_total_at_14():
    # Cox and Munk (1954) abstract: total mss reaches about (tan 16°)^2 at 14 m/s;
    # the linear fit gives 0.0747 against 0.0822, so a loose tolerance.
    c, u = slope_variances(14.0, wind_height=12.5)
    assert c + u == pytest.approx(math.tan(math.radians(16.0)) ** 2, rel=0.12)


def test_breon_henriot_laws():
    # Bréon and Henriot (2006): 3e-3 + 1.85e-3 W, 1e-3 + 3.16e-3 W, W at 10 m (from memory).
    c, u = slope_variances(WINDS, model="breon-henriot")
    np.testing.assert_allclose(c, 3e-3 + 1.85e-3 * WINDS, rtol=1e-12)
    np.testing.assert_allclose(u, 1e-3 + 3.16e-3 * WINDS, rtol=1e-12)


def test_wu_regimes():
    # Wu (1990): total mss 1e-2 (0.90 ln U + 1.20) at light wind and
    # 1e-2 (6.0 ln U - 8.4) at strong wind (from memory); the regime break
    # near U10 = 7 m/s is stated in the paper's abstract.
    c, u = slope_variances(np.array([2.0, 4.0, 10.0, 15.0]), model="wu")
    total = c + u
    np.testing.assert_allclose(total[:2], 1e-2 * (0.90 * np.log([2.0, 4.0]) + 1.20), rtol=1e-12)
    np.testing.assert_allclose(total[2:], 1e-2 * (6.0 * np.log([10.0, 15.0]) - 8.4), rtol=1e-12)
    # Split in Cox and Munk's clean-surface ratio 3.16 / 1.92.
    np.testing.assert_allclose(u / c, 3.16 / 1.92, rtol=1e-12)
    # Wu's total lies near Cox and Munk's at strong wind (independent data sets).
    cm = sum(slope_variances(14.0, wind_height=12.5))
    assert sum(slope_variances(14.0 * 0.98, model="wu")) == pytest.approx(cm, rel=0.1)


def test_wu_continuous_and_monotonic():
    w = np.linspace(1.0, 20.0, 2000)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        c, u = slope_variances(np.concatenate([[0.0], w]), model="wu")
    total = c + u
    assert np.all(np.diff(total[1:]) > 0)
    assert np.max(np.abs(np.diff(total[1:]))) < 1e-4
    assert total[0] == pytest.approx(0.003)  # floor at calm


def test_variances_all_models_positive():
    for model in SLOPE_MODELS:
        c, u = slope_variances(WINDS, model=model, wind_height=SLOPE_MODEL_WIND_HEIGHT[model])
        assert np.all(c > 0) and np.all(u > 0)
        assert np.all(np.diff(c + u) > 0)
        assert model in SLOPE_MODEL_WIND_HEIGHT


def test_variances_nan_and_shape():
    c, u = slope_variances(np.array([[5.0, np.nan]]), wind_height=12.5)
    assert c.shape == (1, 2) and np.isnan(c[0, 1]) and np.isnan(u[0, 1])
    assert np.isfinite(c[0, 0])
    c, u = slope_variances(np.array([np.nan, 5.0]), model="wu")
    assert np.isnan(c[0]) and np.isfinite(c[1])


def test_wind_heights():
    # Cox and Munk (1954): anemometer at 12.5 m; Bréon and Henriot (2006): 10 m wind.
    assert SLOPE_MODEL_WIND_HEIGHT["cox-munk"] == 12.5
    assert SLOPE_MODEL_WIND_HEIGHT["breon-henriot"] == 10.0


def test_variance_validity_warning():
    # Cox and Munk (1954) abstract: winds 1-14 m/s.
    with pytest.warns(ValidityWarning, match=r"wind_speed .*=20 lies outside \[1, 14\]"):
        slope_variances(20.0, wind_height=12.5)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        slope_variances(np.array([1.0, 14.0]), wind_height=12.5)


@pytest.mark.parametrize("func", [slope_variances, gram_charlier_coefficients, whitecap_fraction])
def test_negative_wind(func):
    with pytest.raises(InputError, match="-2.5"):
        func(-2.5)


def test_bad_model():
    with pytest.raises(InputError, match="'elfouhaily'"):
        slope_variances(5.0, model="elfouhaily", wind_height=12.5)


# ------------------------------------------------------- Gram-Charlier


def test_gram_charlier_coefficients():
    # Cox and Munk (1954), clean surface: c21 = 0.01 - 0.0086 W, c03 = 0.04 - 0.033 W,
    # c40 = 0.40, c22 = 0.12, c04 = 0.23.
    c = gram_charlier_coefficients(WINDS, wind_height=12.5)
    np.testing.assert_allclose(c["c21"], 0.01 - 0.0086 * WINDS, rtol=1e-12)
    np.testing.assert_allclose(c["c03"], 0.04 - 0.033 * WINDS, rtol=1e-12)
    np.testing.assert_allclose(c["c40"], 0.40)
    np.testing.assert_allclose(c["c22"], 0.12)
    np.testing.assert_allclose(c["c04"], 0.23)
    assert c["c40"].shape == WINDS.shape


def test_gram_charlier_series_at_origin():
    # Hermite polynomials at 0: He2 = -1, He4 = 3, so the factor is
    # 1 + c40/8 + c22/4 + c04/8 (Cox and Munk 1954 series, evaluated by hand).
    f = gram_charlier_series(0.0, 0.0, -0.08, -0.29, 0.40, 0.12, 0.23)
    assert f == pytest.approx(1 + 0.40 / 8 + 0.12 / 4 + 0.23 / 8)


def test_building_blocks_compile_with_numba():
    import numba
    args = (0.3, -0.5, -0.08, -0.29, 0.4, 0.12, 0.23)
    assert numba.njit(gram_charlier_series)(*args) == pytest.approx(gram_charlier_series(*args))
    assert numba.njit(anisotropic_gaussian_pdf)(0.1, 0.05, 0.02, 0.03) == pytest.approx(
        anisotropic_gaussian_pdf(0.1, 0.05, 0.02, 0.03)
    )
    assert numba.njit(wind_frame_slopes)(0.1, 0.2, 33.0) == pytest.approx(wind_frame_slopes(0.1, 0.2, 33.0))


# ------------------------------------------------------------- the pdf


def _grid_moments(wind, wind_direction, distribution="gaussian", model="cox-munk", n=801):
    """Integral, means and second moments of slope_pdf by Simpson's rule
    (scipy.integrate.simpson) over +-10 sigma."""
    c, u = slope_variances(wind, model=model, wind_height=SLOPE_MODEL_WIND_HEIGHT[model])
    half = 10.0 * math.sqrt(max(c, u))
    z = np.linspace(-half, half, n)
    zx, zy = np.meshgrid(z, z, indexing="xy")
    p = slope_pdf(zx, zy, wind, wind_direction=wind_direction, model=model, distribution=distribution, wind_height=SLOPE_MODEL_WIND_HEIGHT[model])

    def integral(f):
        return integrate.simpson(integrate.simpson(f, x=z, axis=1), x=z)

    return {
        "total": integral(p),
        "mx": integral(zx * p),
        "my": integral(zy * p),
        "xx": integral(zx * zx * p),
        "yy": integral(zy * zy * p),
        "xy": integral(zx * zy * p),
        "p": p,
        "z": z,
    }


@pytest.mark.parametrize("wind", [2.0, 7.0, 13.0])
def test_isotropic_pdf_integrates(wind):
    # Normalisation and variance: each axis carries half of Cox and Munk's (1954)
    # isotropic total 0.003 + 5.12e-3 W (W at 12.5 m).
    m = _grid_moments(wind, None)
    c = u = 0.5 * (0.003 + 5.12e-3 * wind)  # _grid_moments passes the wind at 12.5 m
    assert m["total"] == pytest.approx(1.0, abs=1e-6)
    assert m["xx"] == pytest.approx(0.5 * (c + u), rel=1e-5)
    assert m["yy"] == pytest.approx(0.5 * (c + u), rel=1e-5)
    assert m["xy"] == pytest.approx(0.0, abs=1e-9)


def test_isotropic_pdf_dblquad():
    # Independent quadrature: scipy.integrate.dblquad over +-10 sigma.
    c, u = slope_variances(6.0, wind_height=12.5)
    h = 10 * math.sqrt(0.5 * (c + u))
    val, _ = integrate.dblquad(lambda y, x: float(slope_pdf(x, y, 6.0, wind_height=12.5)), -h, h, -h, h, epsabs=1e-9)
    assert val == pytest.approx(1.0, abs=1e-6)


@pytest.mark.parametrize("direction", [0.0, 30.0, 90.0, 135.0, 250.0])
def test_anisotropic_pdf_moments(direction):
    # The rotated Gaussian keeps sigma_u^2 along the wind heading and sigma_c^2 across:
    # E[zx^2] = c cos^2 phi + u sin^2 phi, E[zy^2] = c sin^2 phi + u cos^2 phi,
    # E[zx zy] = (u - c) sin phi cos phi (rotation of a covariance matrix).
    wind = 10.0
    m = _grid_moments(wind, direction)
    c, u = slope_variances(wind, wind_height=12.5)
    s, co = math.sin(math.radians(direction)), math.cos(math.radians(direction))
    assert m["total"] == pytest.approx(1.0, abs=1e-6)
    assert m["xx"] == pytest.approx(c * co**2 + u * s**2, rel=1e-5)
    assert m["yy"] == pytest.approx(c * s**2 + u * co**2, rel=1e-5)
    assert m["xy"] == pytest.approx((u - c) * s * co, abs=1e-7)


@pytest.mark.parametrize("wind", [2.0, 8.0, 14.0])
def test_gram_charlier_integrates(wind):
    # The Gram-Charlier series of Cox and Munk (1954) keeps unit mass, zero mean and the
    # Gaussian variances (Hermite orthogonality); clipping the negative tails adds < 1e-3.
    m = _grid_moments(wind, 0.0, distribution="gram-charlier")
    c, u = slope_variances(wind, wind_height=12.5)
    assert m["total"] == pytest.approx(1.0, abs=1e-3)
    assert m["xx"] == pytest.approx(c, rel=2e-2)
    assert m["yy"] == pytest.approx(u, rel=2e-2)
    assert m["my"] == pytest.approx(0.0, abs=2e-3)


def test_gram_charlier_mode_points_downwind():
    # Cox and Munk (1954) abstract: at high winds the most probable slope is a few
    # degrees, "with the azimuth of ascent pointing downwind". Wind from north
    # (blows south): the mode lies on surfaces rising towards the south, dz/dy < 0.
    m = _grid_moments(14.0, 0.0, distribution="gram-charlier", n=1601)
    p, z = m["p"], m["z"]
    iy, ix = np.unravel_index(np.argmax(p), p.shape)
    zx_mode, zy_mode = z[ix], z[iy]
    assert zy_mode < 0
    assert 1.0 < math.degrees(math.atan(-zy_mode)) < 6.0
    assert abs(zx_mode) < 0.01
    # Same statement for a wind from the east (blows west): ascent towards west, dz/dx < 0.
    p2 = slope_pdf(z[:, None] * 0 + z[None, :], 0.0 * z[:, None], 14.0, wind_direction=90.0,
                   distribution="gram-charlier", wind_height=12.5)[0]
    assert z[np.argmax(p2)] < 0


def test_rotation():
    # Turning the wind by 90° clockwise turns the pdf with it: the slope vector
    # (zx, zy) rotated 90° clockwise is (zy, -zx).
    rng = np.random.default_rng(7)
    zx, zy = rng.normal(0, 0.2, (2, 200))
    for dist in ("gaussian", "gram-charlier"):
        a = slope_pdf(zx, zy, 9.0, wind_direction=0.0, distribution=dist, wind_height=12.5)
        b = slope_pdf(zy, -zx, 9.0, wind_direction=90.0, distribution=dist, wind_height=12.5)
        np.testing.assert_allclose(a, b, rtol=1e-12, atol=1e-300)


def test_wind_from_and_to_differ_only_in_skew():
    # Gaussian: wind from north and from south give the same pdf (even in slopes);
    # Gram-Charlier: the skewness flips.
    g0 = slope_pdf(0.0, -0.1, 12.0, wind_direction=0.0, wind_height=12.5)
    g180 = slope_pdf(0.0, -0.1, 12.0, wind_direction=180.0, wind_height=12.5)
    assert g0 == pytest.approx(g180)
    s0 = slope_pdf(0.0, -0.1, 12.0, wind_direction=0.0, distribution="gram-charlier", wind_height=12.5)
    s180 = slope_pdf(0.0, 0.1, 12.0, wind_direction=180.0, distribution="gram-charlier", wind_height=12.5)
    assert s0 == pytest.approx(s180)
    assert s0 != pytest.approx(slope_pdf(0.0, 0.1, 12.0, wind_direction=0.0, distribution="gram-charlier", wind_height=12.5))


def test_pdf_nan_flows():
    p = slope_pdf(np.array([0.0, np.nan, 0.1]), 0.0, np.array([[5.0], [np.nan]]), wind_direction=45.0, wind_height=12.5)
    assert p.shape == (2, 3)
    assert np.isnan(p[1]).all() and np.isnan(p[0, 1])
    assert np.isfinite(p[0, [0, 2]]).all()
    assert np.isnan(slope_pdf(0.0, 0.0, 5.0, wind_direction=np.nan, wind_height=12.5))


def test_pdf_calm_water_finite():
    # Cox and Munk's clean upwind law is 0 at calm (3.16e-3 W): the density stays finite
    # through the variance floor and keeps unit mass on a grid that resolves it.
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        for dist in ("gaussian", "gram-charlier"):
            p = slope_pdf(np.array([0.0, 1e-3, 0.05]), 0.0, 0.0, wind_direction=90.0, distribution=dist, wind_height=12.5)
            assert np.all(np.isfinite(p)) and p[0] > p[1] > p[2] >= 0
        zx = np.linspace(-0.02, 0.02, 2001)
        zy = np.linspace(-0.6, 0.6, 601)
        p = slope_pdf(zx[None, :], zy[:, None], 0.0, wind_direction=90.0, wind_height=12.5)
    total = integrate.simpson(integrate.simpson(p, x=zx, axis=1), x=zy)
    assert total == pytest.approx(1.0, abs=1e-4)


def test_pdf_bad_input():
    with pytest.raises(InputError, match="None"):
        slope_pdf(0.0, 0.0, 5.0, distribution="gram-charlier", wind_height=12.5)
    with pytest.raises(InputError, match="'lognormal'"):
        slope_pdf(0.0, 0.0, 5.0, distribution="lognormal", wind_height=12.5)
    with pytest.raises(InputError, match="'wave'"):
        slope_pdf(0.0, 0.0, 5.0, model="wave", wind_height=12.5)
    with pytest.raises(InputError, match="-1.0"):
        slope_pdf(0.0, 0.0, -1.0, wind_height=12.5)
    with pytest.raises(InputError, match="shapes|broadcast"):
        slope_pdf(np.zeros(3), np.zeros(4), 5.0, wind_height=12.5)


slopes = st.floats(-3.0, 3.0, allow_nan=False)


@settings(max_examples=150, deadline=None)
@given(
    zx=st.lists(slopes, min_size=1, max_size=5),
    zy=slopes,
    wind=st.floats(1.0, 14.0),
    direction=st.one_of(st.none(), st.floats(-720.0, 720.0)),
    model=st.sampled_from(SLOPE_MODELS),
    gc=st.booleans(),
)
def test_pdf_properties(zx, zy, wind, direction, model, gc):
    dist = "gram-charlier" if (gc and direction is not None) else "gaussian"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        p = slope_pdf(np.array(zx), zy, wind, wind_direction=direction, model=model, distribution=dist, wind_height=SLOPE_MODEL_WIND_HEIGHT[model])
    assert p.shape == (len(zx),)
    assert np.all(np.isfinite(p)) and np.all(p >= 0)


# ------------------------------------------------------------ wind profile


def test_log_profile():
    # Logarithmic neutral profile (Stull 1988): U2 = U1 ln(z2/z0) / ln(z1/z0).
    assert wind_speed_at_height(7.0, 10.0) == pytest.approx(7.0, rel=1e-14)
    u = wind_speed_at_height(10.0, 10.0, target_height=12.5)
    assert u == pytest.approx(10.0 * math.log(12.5 / 2e-4) / math.log(10.0 / 2e-4), rel=1e-14)
    heights = np.array([1.0, 2.0, 5.0, 10.0, 20.0, 50.0])
    prof = wind_speed_at_height(8.0, 10.0, target_height=heights)
    assert np.all(np.diff(prof) > 0)
    back = wind_speed_at_height(prof, heights, target_height=10.0)
    np.testing.assert_allclose(back, 8.0, rtol=1e-13)
    # Rougher sea -> stronger shear.
    assert wind_speed_at_height(8.0, 10.0, target_height=2.0, roughness_length=1e-3) < prof[1]


def test_log_profile_bad_input():
    with pytest.raises(InputError, match="0.0001"):
        wind_speed_at_height(5.0, 1e-4)
    with pytest.raises(InputError, match="target_height"):
        wind_speed_at_height(5.0, 10.0, target_height=0.0)
    with pytest.raises(InputError, match="-0.1"):
        wind_speed_at_height(5.0, 10.0, roughness_length=-0.1)
    with pytest.raises(InputError, match="-5.0"):
        wind_speed_at_height(-5.0, 10.0)


# --------------------------------------------------------------- whitecaps


def test_whitecaps_monahan():
    # Monahan and O'Muircheartaigh (1980): W = 3.84e-6 U^3.41; 0.0098 at 10 m/s.
    assert whitecap_fraction(10.0) == pytest.approx(3.84e-6 * 10**3.41, rel=1e-12)
    assert whitecap_fraction(10.0) == pytest.approx(0.0098, abs=1e-4)
    assert whitecap_fraction(0.0) == 0.0


def test_whitecaps_stramska_petelski():
    # Stramska and Petelski (2003), undeveloped seas: 8.75e-5 (U - 6.33)^3 (from memory).
    w = whitecap_fraction(np.array([3.0, 6.33, 10.0]), method="stramska-petelski")
    np.testing.assert_allclose(w, [0.0, 0.0, 8.75e-5 * 3.67**3], rtol=1e-12)


def test_whitecaps_clipped_and_nan():
    assert whitecap_fraction(200.0) == 1.0
    assert np.isnan(whitecap_fraction(np.nan))
    with pytest.raises(InputError, match="'foam'"):
        whitecap_fraction(5.0, method="foam")


# --------------------------------------------------------------- shadowing


def _smith_scipy(theta_deg, mss):
    # Smith (1967) one-way shadowing evaluated with scipy.special.erfc.
    nu = 1 / np.tan(np.radians(theta_deg)) / np.sqrt(2 * mss)
    lam = 0.5 * (np.exp(-nu**2) / (nu * np.sqrt(np.pi)) - special.erfc(nu))
    return (1 - 0.5 * special.erfc(nu)) / (lam + 1)


def test_shadowing():
    # Smith (1967): 1 at nadir, 0 at the horizon, falling with zenith, in [0, 1].
    theta = np.linspace(0.0, 90.0, 181)
    for mss in (0.005, 0.02, 0.05):
        s = shadowing(theta, mss)
        assert s[0] == 1.0 and s[-1] == 0.0
        assert np.all(np.diff(s) <= 1e-15)
        assert np.all((s >= 0) & (s <= 1))
        np.testing.assert_allclose(s[1:-1], _smith_scipy(theta[1:-1], mss), rtol=1e-12)
    # Rougher surface shadows more.
    assert shadowing(80.0, 0.05) < shadowing(80.0, 0.01)
    # Below about 60° shadowing is negligible for sea slopes (common practice).
    assert shadowing(60.0, 0.03) > 0.999


def test_bidirectional_shadowing():
    # Sancer (1969), uncorrelated form: product of the two one-way factors.
    b = bidirectional_shadowing(np.array([0.0, 70.0, 85.0]), 80.0, 0.02)
    np.testing.assert_allclose(b, shadowing(np.array([0.0, 70.0, 85.0]), 0.02) * shadowing(80.0, 0.02))
    assert bidirectional_shadowing(0.0, 0.0, 0.02) == 1.0


def test_shadowing_nan_and_bad_input():
    s = shadowing(np.array([10.0, np.nan]), np.array([[0.02], [np.nan]]))
    assert s.shape == (2, 2) and np.isnan(s[0, 1]) and np.isnan(s[1]).all()
    with pytest.raises(InputError, match="95"):
        shadowing(95.0, 0.02)
    with pytest.raises(InputError, match="-0.02"):
        shadowing(45.0, -0.02)

"""Tests of glint.physics.optics against published values and independent formulas."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from glint.errors import InputError, ValidityWarning
from glint.physics.optics import (
    _iapws,
    air_refractive_index,
    fresnel_amplitudes,
    fresnel_reflectance,
    water_density,
    water_refractive_index,
)

# ---------------------------------------------------------------- Fresnel


@pytest.mark.parametrize("n", [1.1, 1.333, 1.5, 2.4, 0.75])
def test_normal_incidence(n):
    # Born and Wolf (1999) sect. 1.5: R = ((n-1)/(n+1))^2 at normal incidence.
    for pol in ("unpolarized", "s", "p"):
        r = fresnel_reflectance(0.0, n, polarization=pol)
        assert r == pytest.approx(((n - 1) / (n + 1)) ** 2, rel=1e-12)


def test_glass_four_percent():
    # Common practice: uncoated glass (n = 1.5) reflects 4 % per surface.
    assert fresnel_reflectance(0.0, 1.5) == pytest.approx(0.04, abs=1e-12)


def test_water_two_percent():
    # Common practice: water (n = 1.333) reflects about 2 % at normal incidence.
    assert fresnel_reflectance(0.0, 1.333) == pytest.approx(0.02, abs=5e-4)


@pytest.mark.parametrize("n", [1.333, 1.5, 0.75])
def test_brewster_angle(n):
    # Born and Wolf (1999): p-reflectance vanishes at Brewster's angle atan(n).
    theta_b = np.degrees(np.arctan(n))
    assert fresnel_reflectance(theta_b, n, polarization="p") == pytest.approx(0.0, abs=1e-14)
    assert fresnel_reflectance(theta_b, n, polarization="s") > 0.01


@pytest.mark.parametrize("n", [1.333, 1.5, 3.0, 0.75])
def test_grazing_incidence(n):
    # Born and Wolf (1999): every polarisation is totally reflected at grazing incidence.
    for pol in ("unpolarized", "s", "p"):
        assert fresnel_reflectance(90.0, n, polarization=pol) == 1.0
    assert fresnel_reflectance(89.99, n) > 0.99


def test_no_interface():
    # Born and Wolf (1999): with n = 1 there is no interface and nothing is reflected.
    theta = np.linspace(0.0, 90.0, 181)
    np.testing.assert_allclose(fresnel_reflectance(theta, 1.0), 0.0, atol=1e-20)


def test_s_not_below_p():
    # Born and Wolf (1999): R_s >= R_p for a dielectric at every angle.
    theta = np.linspace(0.0, 90.0, 901)
    for n in (0.75, 1.2, 1.333, 1.5):
        rs = fresnel_reflectance(theta, n, polarization="s")
        rp = fresnel_reflectance(theta, n, polarization="p")
        assert np.all(rs >= rp - 1e-15)


def test_total_internal_reflection():
    # Born and Wolf (1999): beyond the critical angle asin(n) (n < 1) R = 1.
    n = 1.0 / 1.333
    crit = np.degrees(np.arcsin(n))
    theta = np.linspace(crit + 1e-6, 90.0, 50)
    for pol in ("unpolarized", "s", "p"):
        np.testing.assert_allclose(fresnel_reflectance(theta, n, polarization=pol), 1.0)
    assert fresnel_reflectance(crit - 1.0, n) < 1.0


def test_against_angle_form_of_fresnel():
    # Born and Wolf (1999) eq. 1.5 (21a): r_s = -sin(i-t)/sin(i+t), r_p = tan(i-t)/tan(i+t),
    # an independent form using the refraction angle from Snell's law.
    n = 1.34
    i = np.radians(np.linspace(1.0, 89.0, 89))
    t = np.arcsin(np.sin(i) / n)
    rs = (np.sin(i - t) / np.sin(i + t)) ** 2
    rp = (np.tan(i - t) / np.tan(i + t)) ** 2
    deg = np.degrees(i)
    np.testing.assert_allclose(fresnel_reflectance(deg, n, polarization="s"), rs, rtol=1e-10)
    np.testing.assert_allclose(fresnel_reflectance(deg, n, polarization="p"), rp, rtol=1e-9, atol=1e-16)
    np.testing.assert_allclose(fresnel_reflectance(deg, n), 0.5 * (rs + rp), rtol=1e-10)


def test_fresnel_nan_and_broadcast():
    r = fresnel_reflectance(np.array([[0.0], [np.nan]]), np.array([1.333, np.nan, 1.5]))
    assert r.shape == (2, 3)
    assert np.isnan(r[1]).all() and np.isnan(r[0, 1])
    assert np.isfinite(r[0, [0, 2]]).all()
    assert fresnel_reflectance(np.float32(30.0), 1.34).shape == ()


def test_fresnel_building_block_compiles_with_numba():
    # The kernel mirrors fresnel_amplitudes: it must compile under numba.njit.
    import numba
    f = numba.njit(fresnel_amplitudes)
    ci = np.cos(np.radians(40.0))
    assert f(ci, 1.34) == pytest.approx(fresnel_amplitudes(ci, 1.34), rel=1e-12)


@settings(max_examples=200, deadline=None)
@given(
    theta=st.floats(0.0, 90.0),
    n=st.floats(0.2, 5.0),
)
def test_fresnel_properties(theta, n):
    rs = fresnel_reflectance(theta, n, polarization="s")
    rp = fresnel_reflectance(theta, n, polarization="p")
    ru = fresnel_reflectance(theta, n)
    assert 0.0 <= rp <= rs + 1e-15 <= 1.0 + 1e-15
    assert ru == pytest.approx(0.5 * (rs + rp))


@pytest.mark.parametrize(
    "kwargs, match",
    [
        ({"incidence_angle": 91.0, "refractive_index": 1.3}, "91"),
        ({"incidence_angle": -1.0, "refractive_index": 1.3}, "-1"),
        ({"incidence_angle": 10.0, "refractive_index": 0.0}, "0.0"),
        ({"incidence_angle": 10.0, "refractive_index": -1.3}, "-1.3"),
        ({"incidence_angle": 10.0, "refractive_index": 1.3, "polarization": "circular"}, "'circular'"),
        ({"incidence_angle": "ten", "refractive_index": 1.3}, "'ten'"),
    ],
)
def test_fresnel_bad_input(kwargs, match):
    with pytest.raises(InputError, match=match):
        fresnel_reflectance(**kwargs)


# ------------------------------------------------------ refractive index

# IAPWS R9-97 check values (T [K], rho [kg m-3], lambda [µm], n vs vacuum), as
# reproduced in third-party implementations of the release (the documented
# examples of the iapws package on PyPI, citing the release); the table was
# not read in the release itself. All three agree with our formula to 1e-8.
IAPWS_R9_97_CHECK = [
    (298.15, 997.047435, 0.2265, 1.39277824),
    (298.15, 997.047435, 0.5893, 1.33285819),
    (773.15, 30.4758534, 0.5893, 1.00949307),
]


@pytest.mark.parametrize("t_k, rho, lam_um, n", IAPWS_R9_97_CHECK)
def test_iapws_check_values(t_k, rho, lam_um, n):
    assert _iapws(lam_um * 1000.0, t_k - 273.15, rho) == pytest.approx(n, abs=2e-8)


def test_iapws_public_with_tanaka_density():
    # Same IAPWS R9-97 check point through the public function: the density of
    # Tanaka et al. (2001) differs from IAPWS-95's by 4e-4 kg m-3 at 25 °C.
    n = water_refractive_index(226.5, temperature=25.0, salinity=0.0, method="iapws", reference="vacuum")
    assert n == pytest.approx(1.39277824, abs=1e-6)


def test_handbook_sodium_d_line():
    # CRC Handbook of Chemistry and Physics: n_D of water at 20 °C = 1.3330 (vs air, 589.3 nm).
    qf = water_refractive_index(589.3, temperature=20.0, salinity=0.0)
    ia = water_refractive_index(589.3, temperature=20.0, salinity=0.0, method="iapws")
    assert qf == pytest.approx(1.3330, abs=2e-4)
    assert ia == pytest.approx(1.3330, abs=2e-4)


def test_quan_fry_seawater():
    # Quan and Fry (1995): sea water S = 35, 20 °C, 589 nm about 1.339-1.340 (from memory).
    n = water_refractive_index(589.0, temperature=20.0, salinity=35.0)
    assert 1.339 <= n <= 1.340
    # Salt raises the index by about 0.006-0.007 at S = 35 (from memory).
    assert 0.005 < n - water_refractive_index(589.0, temperature=20.0, salinity=0.0) < 0.008


def test_two_methods_agree_across_visible():
    # Quan and Fry (1995) and IAPWS R9-97 are independent fits of pure-water data;
    # they agree within 1e-4 over 400-700 nm and 0-30 °C.
    lam = np.linspace(400.0, 700.0, 31)
    for t in (0.0, 10.0, 20.0, 30.0):
        qf = water_refractive_index(lam, temperature=t, salinity=0.0)
        ia = water_refractive_index(lam, temperature=t, salinity=0.0, method="iapws")
        np.testing.assert_allclose(qf, ia, atol=1e-4)


def test_normal_dispersion_and_temperature():
    # Common practice: in the visible the index falls with wavelength and with temperature.
    lam = np.linspace(400.0, 700.0, 31)
    for method in ("quan-fry", "iapws"):
        n = water_refractive_index(lam, salinity=0.0, method=method)
        assert np.all(np.diff(n) < 0)
        nt = water_refractive_index(550.0, temperature=np.array([5.0, 15.0, 25.0]), salinity=0.0, method=method)
        assert np.all(np.diff(nt) < 0)


def test_reference_conversion():
    # n_rel_air = n_rel_vacuum / n_air (definition of relative index).
    for method in ("quan-fry", "iapws"):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            na = water_refractive_index(550.0, method=method, reference="air", salinity=0.0)
            nv = water_refractive_index(550.0, method=method, reference="vacuum", salinity=0.0)
        assert nv / na == pytest.approx(float(air_refractive_index(550.0)), rel=1e-14)
        assert nv > na


def test_air_index():
    # Standard air (15 °C, 101.325 kPa): n ≈ 1.000277 at 550 nm and 1.0002765 at
    # 633 nm (from memory).
    assert air_refractive_index(550.0) == pytest.approx(1.000277, abs=2e-6)
    assert air_refractive_index(632.99) == pytest.approx(1.0002765, abs=2e-6)


def test_water_density():
    # Tanaka et al. (2001): maximum 999.97495 kg m-3 at 3.983 °C.
    assert water_density(3.983035) == pytest.approx(999.974950, abs=1e-6)
    assert water_density(np.array([3.0, 5.0])).max() < 999.974950
    # IAPWS-95 density at 25 °C and 0.1 MPa used in the R9-97 check table: 997.047435.
    assert water_density(25.0) == pytest.approx(997.047435, abs=1e-3)
    # CRC Handbook of Chemistry and Physics: 998.207 kg m-3 at 20 °C (from memory).
    assert water_density(20.0) == pytest.approx(998.207, abs=2e-3)


def test_validity_warnings():
    # Quan and Fry (1995) fitted 400-700 nm: 1000 nm still computes, with a warning.
    with pytest.warns(ValidityWarning, match="1000"):
        n = water_refractive_index(1000.0)
    assert 1.32 < n < 1.34
    with pytest.warns(ValidityWarning, match="35"):
        water_refractive_index(550.0, temperature=35.0)
    with pytest.warns(ValidityWarning, match="40"):
        water_refractive_index(550.0, salinity=40.0)
    with pytest.warns(ValidityWarning, match="salinity"):
        water_refractive_index(550.0, method="iapws")  # default salinity 35
    with pytest.warns(ValidityWarning, match="1500"):
        water_refractive_index(1500.0, salinity=0.0, method="iapws")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        water_refractive_index(550.0, salinity=0.0, method="iapws")
        water_refractive_index(np.linspace(400, 700, 5), temperature=np.array([[0.0], [30.0]]))


def test_refractive_index_nan_and_shape():
    n = water_refractive_index(np.array([450.0, np.nan]), temperature=np.array([[10.0], [20.0], [np.nan]]))
    assert n.shape == (3, 2)
    assert np.isnan(n[:, 1]).all() and np.isnan(n[2]).all()
    assert np.isfinite(n[:2, 0]).all()


@pytest.mark.parametrize(
    "args, kwargs, match",
    [
        ((0.0,), {}, "0.0"),
        ((-550.0,), {}, "-550"),
        ((550.0,), {"salinity": -1.0}, "-1"),
        ((550.0,), {"method": "sellmeier"}, "'sellmeier'"),
        ((550.0,), {"reference": "water"}, "'water'"),
        ((550.0,), {"temperature": -300.0}, "-300"),
    ],
)
def test_refractive_index_bad_input(args, kwargs, match):
    with pytest.raises(InputError, match=match):
        water_refractive_index(*args, **kwargs)


def test_air_index_bad_input():
    with pytest.raises(InputError, match="150"):
        air_refractive_index(150.0)
    with pytest.warns(ValidityWarning, match="3000"):
        air_refractive_index(3000.0)


def test_quan_fry_extrapolation_near_infrared():
    # Quan and Fry (1995) extrapolated to 1000 nm stays within 1e-3 of IAPWS R9-97
    # (pure water, 20 °C), which is valid there.
    with pytest.warns(ValidityWarning):
        qf = water_refractive_index(1000.0, salinity=0.0)
    ia = water_refractive_index(1000.0, salinity=0.0, method="iapws")
    assert qf == pytest.approx(ia, abs=1e-3)


def test_warning_points_at_caller():
    # Common practice (as in pandas): a warning names the user's line, not glint's.
    with pytest.warns(ValidityWarning) as record:
        water_refractive_index(900.0)
    assert record[0].filename == __file__

"""Optics of the air-water interface.

Fresnel reflectance of a flat dielectric interface, the refractive index of
sea water (Quan and Fry 1995) and pure water (IAPWS R9-97), the density of
pure water (Tanaka et al. 2001) that IAPWS R9-97 needs, and the refractive
index of standard air (Edlén 1966) that converts between indices relative
to vacuum and relative to air. See ``docs/water-optics.md``.

:func:`fresnel_amplitudes` uses only arithmetic and numpy ufuncs, so a
compiled kernel can call or mirror it; the Fresnel formulas live only here.
"""

from __future__ import annotations

import warnings
from typing import Literal

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.validation import as_float_array, check_choice, check_range, user_stacklevel, warn_outside
from glint.errors import ValidityWarning

__all__ = [
    "POLARIZATIONS",
    "REFRACTIVE_INDEX_METHODS",
    "REFERENCE_MEDIA",
    "fresnel_amplitudes",
    "fresnel_reflectance",
    "water_refractive_index",
    "water_density",
    "air_refractive_index",
]

#: A float or a float array (plain-arithmetic building blocks).
Real = float | NDArray[np.floating]

Polarization = Literal["unpolarized", "s", "p"]
IndexMethod = Literal["quan-fry", "iapws"]
ReferenceMedium = Literal["air", "vacuum"]

#: Values accepted by ``polarization=`` of :func:`fresnel_reflectance`.
POLARIZATIONS: tuple[str, ...] = ("unpolarized", "s", "p")
#: Values accepted by ``method=`` of :func:`water_refractive_index`.
REFRACTIVE_INDEX_METHODS: tuple[str, ...] = ("quan-fry", "iapws")
#: Values accepted by ``reference=`` of :func:`water_refractive_index`.
REFERENCE_MEDIA: tuple[str, ...] = ("air", "vacuum")

# Quan and Fry (1995), eq. (1): n0 ... n9 (wavelength in nm).
_QF = (
    1.31405, 1.779e-4, -1.05e-6, 1.6e-8, -2.02e-6,
    15.868, 0.01155, -0.00423, -4382.0, 1.1455e6,
)

# IAPWS R9-97 coefficients a0 ... a7 and reference values.
_IAPWS_A = (
    0.244257733, 9.74634476e-3, -3.73234996e-3, 2.68678472e-4,
    1.58920570e-3, 2.45934259e-3, 0.900704920, -1.66626219e-2,
)
_IAPWS_LAMBDA_UV = 0.2292020
_IAPWS_LAMBDA_IR = 5.432937
_IAPWS_T_REF = 273.15  # K
_IAPWS_RHO_REF = 1000.0  # kg m-3
_IAPWS_LAMBDA_REF = 0.589  # µm

# Tanaka et al. (2001), eq. (1): a1..a5 (°C, °C, °C², °C, kg m-3).
_TANAKA = (-3.983035, 301.797, 522528.9, 69.34881, 999.974950)

# Edlén (1966) dispersion of standard air (15 °C, 101.325 kPa, 0.03 % CO2):
# (n - 1) 1e8 = 8342.13 + 2406030 / (130 - s²) + 15997 / (38.9 - s²), s in µm⁻¹.
_EDLEN = (8342.13, 2406030.0, 130.0, 15997.0, 38.9)


def fresnel_amplitudes(cos_incidence: Real, refractive_index: Real) -> tuple[Real, Real]:
    """Fresnel power reflectances for s and p polarisation from a cosine.

    Parameters
    ----------
    cos_incidence : array_like
        Cosine of the angle of incidence, in [0, 1].
    refractive_index : array_like
        Relative refractive index n = n2 / n1 (> 0).

    Returns
    -------
    r_s, r_p : array_like
        Reflectances [1] for light polarised perpendicular (s) and parallel
        (p) to the plane of incidence.

    Notes
    -----
    :math:`\\cos\\theta_t = \\sqrt{\\max(0, 1 - (1-\\cos^2\\theta_i)/n^2)}`,
    :math:`r_s = ((\\cos\\theta_i - n\\cos\\theta_t)/(\\cos\\theta_i + n\\cos\\theta_t))^2`,
    :math:`r_p = ((n\\cos\\theta_i - \\cos\\theta_t)/(n\\cos\\theta_i + \\cos\\theta_t))^2`
    (Born and Wolf 1999, sect. 1.5). Clamping :math:`\\cos^2\\theta_t` at 0
    gives :math:`r_s = r_p = 1` beyond the critical angle (total internal
    reflection) without a branch. At grazing incidence with n <= 1 the
    result is 0/0 (NaN); :func:`fresnel_reflectance` handles that case.
    Plain arithmetic, no checks.

    References
    ----------
    Born, M. and Wolf, E. (1999). Principles of Optics, 7th ed. Cambridge
    University Press, doi:10.1017/CBO9781139644181.

    Examples
    --------
    >>> rs, rp = fresnel_amplitudes(1.0, 1.5)
    >>> round(float(rs), 4), round(float(rp), 4)
    (0.04, 0.04)
    """
    ci = cos_incidence
    n = refractive_index
    ct = np.sqrt(np.maximum(1.0 - (1.0 - ci * ci) / (n * n), 0.0))
    a = (ci - n * ct) / (ci + n * ct)
    b = (n * ci - ct) / (n * ci + ct)
    return a * a, b * b


def fresnel_reflectance(
    incidence_angle: ArrayLike,
    refractive_index: ArrayLike,
    *,
    polarization: Polarization = "unpolarized",
) -> np.ndarray:
    """Fresnel reflectance of a flat interface between two dielectrics.

    Parameters
    ----------
    incidence_angle : array_like
        Angle of incidence [°] in [0, 90], from the medium of index 1.
    refractive_index : array_like
        Real relative refractive index n (> 0) of the second medium, e.g.
        about 1.34 for air to water. n < 1 describes incidence from inside
        the denser medium; beyond the critical angle asin(n) the
        reflectance is 1 (total internal reflection).
    polarization : {"unpolarized", "s", "p"}
        ``"unpolarized"`` is the mean of s and p.

    Returns
    -------
    numpy.ndarray
        Reflectance [1] in [0, 1]; NaN where an input is NaN.

    Raises
    ------
    InputError
        Angle outside [0, 90], n <= 0, or an unknown polarization.

    Notes
    -----
    Fresnel equations (Born and Wolf 1999), see :func:`fresnel_amplitudes`.
    At normal incidence :math:`R = ((n-1)/(n+1))^2`; at grazing incidence
    R = 1 (for n = 1 there is no interface and R = 0).

    References
    ----------
    Born, M. and Wolf, E. (1999). Principles of Optics, 7th ed. Cambridge
    University Press, doi:10.1017/CBO9781139644181.

    Examples
    --------
    >>> round(float(fresnel_reflectance(0.0, 1.333)), 4)
    0.0204
    >>> round(float(fresnel_reflectance(53.1, 1.333, polarization="p")), 5)
    0.0
    """
    check_choice(polarization, "polarization", POLARIZATIONS)
    theta = as_float_array(incidence_angle, "incidence_angle")
    n = as_float_array(refractive_index, "refractive_index")
    check_range(theta, "incidence_angle", 0.0, 90.0, unit="°")
    check_range(n, "refractive_index", 0.0, None, low_inclusive=False)
    ci = np.clip(np.cos(np.radians(theta)), 0.0, 1.0)
    # cos(90°) is 6e-17 in floating point: treat it as exactly grazing.
    ci = np.where(theta == 90.0, 0.0, ci)
    with np.errstate(invalid="ignore", divide="ignore"):
        rs, rp = fresnel_amplitudes(ci, n)
    if polarization == "s":
        r = rs
    elif polarization == "p":
        r = rp
    else:
        r = 0.5 * (rs + rp)
    # 0/0 at grazing incidence for n <= 1: no interface (n == 1) reflects
    # nothing; for n < 1 grazing lies beyond the critical angle.
    grazing = (ci == 0.0) & np.isfinite(n)
    r = np.where(grazing & (n == 1.0), 0.0, np.where(grazing, 1.0, r))
    return np.asarray(np.clip(r, 0.0, 1.0), dtype=float)


def water_density(temperature: ArrayLike) -> np.ndarray:
    """Density of air-free pure water at 101.325 kPa.

    Parameters
    ----------
    temperature : array_like
        Water temperature [°C] (fitted for 0-40 °C).

    Returns
    -------
    numpy.ndarray
        Density [kg m⁻³]; NaN flows through.

    Raises
    ------
    InputError
        Temperature at or below absolute zero.

    Warns
    -----
    ValidityWarning
        Temperature outside 0-40 °C.

    Notes
    -----
    Tanaka et al. (2001), eq. (1), for Standard Mean Ocean Water free of air:

    .. math::

        \\rho = a_5 \\left[1 - \\frac{(t + a_1)^2 (t + a_2)}{a_3 (t + a_4)}\\right]

    with a1 = -3.983035 °C, a2 = 301.797 °C, a3 = 522528.9 °C²,
    a4 = 69.34881 °C, a5 = 999.974950 kg m⁻³.

    References
    ----------
    Tanaka, M., Girard, G., Davis, R., Peuto, A. and Bignell, N. (2001).
    Recommended table for the density of water between 0 °C and 40 °C based
    on recent experimental reports. Metrologia 38(4), 301-309,
    doi:10.1088/0026-1394/38/4/3.

    Examples
    --------
    >>> round(float(water_density(20.0)), 3)
    998.207
    """
    t = as_float_array(temperature, "temperature")
    check_range(t, "temperature", -273.15, None, low_inclusive=False, unit="°C")
    warn_outside(t, "temperature", 0.0, 40.0, "Tanaka et al. (2001)")
    a1, a2, a3, a4, a5 = _TANAKA
    with np.errstate(invalid="ignore", divide="ignore"):
        return a5 * (1.0 - (t + a1) ** 2 * (t + a2) / (a3 * (t + a4)))


def air_refractive_index(wavelength: ArrayLike) -> np.ndarray:
    """Refractive index of standard dry air.

    Parameters
    ----------
    wavelength : array_like
        Wavelength in vacuum [nm].

    Returns
    -------
    numpy.ndarray
        Refractive index of air relative to vacuum [1] at 15 °C,
        101.325 kPa, 0.03 % CO2.

    Raises
    ------
    InputError
        Wavelength at or below 170 nm (the formula has a pole near 160 nm).

    Warns
    -----
    ValidityWarning
        Wavelength outside 200-2000 nm.

    Notes
    -----
    Edlén (1966), standard air:

    .. math::

        (n - 1)\\,10^8 = 8342.13 + \\frac{2406030}{130 - \\sigma^2}
                       + \\frac{15997}{38.9 - \\sigma^2},

    :math:`\\sigma = 1000/\\lambda` the vacuum wavenumber [µm⁻¹]. The range
    200-2000 nm is from memory. Moist air and other pressures change n - 1
    by a few per cent, far below what matters for a water/air ratio.

    References
    ----------
    Edlén, B. (1966). The refractive index of air. Metrologia 2(2), 71-80,
    doi:10.1088/0026-1394/2/2/002.

    Examples
    --------
    >>> round(float(air_refractive_index(550.0)), 6)
    1.000278
    """
    lam = as_float_array(wavelength, "wavelength")
    check_range(lam, "wavelength", 170.0, None, low_inclusive=False, unit="nm")
    warn_outside(lam, "wavelength", 200.0, 2000.0, "Edlén's (1966) dispersion formula")
    s2 = (1000.0 / lam) ** 2
    c0, c1, p1, c2, p2 = _EDLEN
    return 1.0 + 1e-8 * (c0 + c1 / (p1 - s2) + c2 / (p2 - s2))


def _quan_fry(lam: np.ndarray, t: np.ndarray, s: np.ndarray) -> np.ndarray:
    n0, n1, n2, n3, n4, n5, n6, n7, n8, n9 = _QF
    return (
        n0
        + (n1 + n2 * t + n3 * t * t) * s
        + n4 * t * t
        + (n5 + n6 * s + n7 * t) / lam
        + n8 / lam**2
        + n9 / lam**3
    )


def _iapws(lam: np.ndarray, t: np.ndarray, density: np.ndarray) -> np.ndarray:
    """IAPWS R9-97 index relative to vacuum: wavelength [nm], temperature
    [°C], density [kg m-3]."""
    a0, a1, a2, a3, a4, a5, a6, a7 = _IAPWS_A
    rho = density / _IAPWS_RHO_REF
    tt = (t + 273.15) / _IAPWS_T_REF
    l2 = (lam / 1000.0 / _IAPWS_LAMBDA_REF) ** 2
    rhs = rho * (
        a0 + a1 * rho + a2 * tt + a3 * l2 * tt + a4 / l2
        + a5 / (l2 - _IAPWS_LAMBDA_UV**2) + a6 / (l2 - _IAPWS_LAMBDA_IR**2) + a7 * rho * rho
    )
    return np.sqrt((2.0 * rhs + 1.0) / (1.0 - rhs))


def water_refractive_index(
    wavelength: ArrayLike,
    *,
    temperature: ArrayLike = 20.0,
    salinity: ArrayLike = 35.0,
    method: IndexMethod = "quan-fry",
    reference: ReferenceMedium = "air",
) -> np.ndarray:
    """Real refractive index of sea water or pure water.

    Parameters
    ----------
    wavelength : array_like
        Wavelength in vacuum [nm].
    temperature : array_like
        Water temperature [°C]. 20 °C by default.
    salinity : array_like
        Practical salinity [PSU]. 35 (open ocean) by default; ignored by
        ``"iapws"``, which describes pure water.
    method : {"quan-fry", "iapws"}
        Quan and Fry (1995) for sea water, or IAPWS R9-97 for pure water
        (with the density of Tanaka et al. 2001 at 101.325 kPa).
    reference : {"air", "vacuum"}
        Give the index relative to standard air (what the Fresnel equations
        at the air-water interface need) or to vacuum.

    Returns
    -------
    numpy.ndarray
        Refractive index [1]; broadcast shape of the inputs.

    Raises
    ------
    InputError
        Wavelength <= 0, negative salinity, temperature at or below absolute
        zero, or unknown ``method``/``reference``.

    Warns
    -----
    ValidityWarning
        ``"quan-fry"`` outside 400-700 nm, 0-30 °C or 0-35 PSU;
        ``"iapws"`` outside 200-1100 nm, outside 0-40 °C (density formula),
        or with a salinity other than 0.

    Notes
    -----
    Quan and Fry (1995), relative to air, wavelength :math:`\\lambda` in nm:

    .. math::

        n = n_0 + (n_1 + n_2 T + n_3 T^2) S + n_4 T^2
            + \\frac{n_5 + n_6 S + n_7 T}{\\lambda} + \\frac{n_8}{\\lambda^2}
            + \\frac{n_9}{\\lambda^3}

    with n0 = 1.31405, n1 = 1.779e-4, n2 = -1.05e-6, n3 = 1.6e-8,
    n4 = -2.02e-6, n5 = 15.868, n6 = 0.01155, n7 = -0.00423, n8 = -4382,
    n9 = 1.1455e6.

    IAPWS R9-97, relative to vacuum, with :math:`\\bar\\rho = \\rho/(1000\\,
    \\mathrm{kg\\,m^{-3}})`, :math:`\\bar T = T/273.15\\,\\mathrm{K}`,
    :math:`\\bar\\lambda = \\lambda/0.589\\,\\mu\\mathrm{m}`:

    .. math::

        \\frac{n^2-1}{n^2+2}\\frac{1}{\\bar\\rho} = a_0 + a_1\\bar\\rho
        + a_2\\bar T + a_3\\bar\\lambda^2\\bar T + \\frac{a_4}{\\bar\\lambda^2}
        + \\frac{a_5}{\\bar\\lambda^2 - \\bar\\lambda_{UV}^2}
        + \\frac{a_6}{\\bar\\lambda^2 - \\bar\\lambda_{IR}^2} + a_7\\bar\\rho^2

    with a0 = 0.244257733, a1 = 9.74634476e-3, a2 = -3.73234996e-3,
    a3 = 2.68678472e-4, a4 = 1.58920570e-3, a5 = 2.45934259e-3,
    a6 = 0.900704920, a7 = -1.66626219e-2, λ̄_UV = 0.2292020,
    λ̄_IR = 5.432937. The density comes from :func:`water_density`.

    The two references are linked by
    :math:`n_\\mathrm{rel\\,air} = n_\\mathrm{rel\\,vacuum} / n_\\mathrm{air}`
    with :func:`air_refractive_index` (Edlén 1966, standard air).

    References
    ----------
    Quan, X. and Fry, E.S. (1995). Empirical equation for the index of
    refraction of seawater. Applied Optics 34(18), 3477-3480,
    doi:10.1364/AO.34.003477.

    IAPWS R9-97 (1997). Release on the Refractive Index of Ordinary Water
    Substance as a Function of Wavelength, Temperature and Pressure; based
    on Harvey, A.H., Gallagher, J.S. and Levelt Sengers, J.M.H. (1998).
    J. Phys. Chem. Ref. Data 27(4), 761-774, doi:10.1063/1.556029.

    Tanaka, M. et al. (2001). Metrologia 38(4), 301-309,
    doi:10.1088/0026-1394/38/4/3.

    Edlén, B. (1966). Metrologia 2(2), 71-80, doi:10.1088/0026-1394/2/2/002.

    Examples
    --------
    >>> round(float(water_refractive_index(589.3, salinity=0.0)), 4)
    1.333
    >>> round(float(water_refractive_index(589.3, salinity=0.0, method="iapws")), 4)
    1.333
    """
    check_choice(method, "method", REFRACTIVE_INDEX_METHODS)
    check_choice(reference, "reference", REFERENCE_MEDIA)
    lam = as_float_array(wavelength, "wavelength")
    t = as_float_array(temperature, "temperature")
    s = as_float_array(salinity, "salinity")
    check_range(lam, "wavelength", 0.0, None, low_inclusive=False, unit="nm")
    check_range(s, "salinity", 0.0, None, unit="PSU")
    check_range(t, "temperature", -273.15, None, low_inclusive=False, unit="°C")
    with np.errstate(invalid="ignore", divide="ignore"):
        if method == "quan-fry":
            warn_outside(lam, "wavelength", 400.0, 700.0, "Quan and Fry (1995)")
            warn_outside(t, "temperature", 0.0, 30.0, "Quan and Fry (1995)")
            warn_outside(s, "salinity", 0.0, 35.0, "Quan and Fry (1995)")
            n = _quan_fry(lam, t, s)
            if reference == "vacuum":
                n = n * _air_index_quiet(lam)
        else:
            warn_outside(lam, "wavelength", 200.0, 1100.0, "IAPWS R9-97")
            salty = np.asarray(s)[np.isfinite(s) & (np.asarray(s) != 0.0)]
            if salty.size:
                warnings.warn(
                    f"salinity={float(salty.flat[0])!r} is ignored: "
                    "method='iapws' describes pure water (salinity 0); use "
                    "method='quan-fry' for sea water",
                    ValidityWarning,
                    stacklevel=user_stacklevel(),
                )
            n = _iapws(lam, t, water_density(t)) + 0.0 * s
            if reference == "air":
                n = n / _air_index_quiet(lam)
    return np.asarray(n, dtype=float)


def _air_index_quiet(lam: np.ndarray) -> np.ndarray:
    """Edlén's index without range checks (the caller has warned already)."""
    c0, c1, p1, c2, p2 = _EDLEN
    with np.errstate(invalid="ignore", divide="ignore"):
        s2 = (1000.0 / lam) ** 2
        return 1.0 + 1e-8 * (c0 + c1 / (p1 - s2) + c2 / (p2 - s2))

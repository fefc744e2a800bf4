"""Shadowing of wave facets at grazing angles (Smith 1967).

:func:`smith_shadowing` is the one-way factor written once for scalars (the
compiled kernel's float32 twin mirrors it); :func:`shadowing` maps it over
arrays and :func:`bidirectional_shadowing` combines the directions to the sun
and to the sensor. :mod:`glint.physics.surface` re-exports all three.
"""

from __future__ import annotations

import math

import numba
import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.validation import as_float_array, check_range

__all__ = ["smith_shadowing", "shadowing", "bidirectional_shadowing"]

FloatArray = NDArray[np.float64]


def smith_shadowing(cos_zenith: float, sin_zenith: float, mean_square_slope: float) -> float:
    """Smith's (1967) one-way shadowing factor of one direction (scalar).

    The formula of :func:`shadowing`, written once for scalars so that the
    compiled glint kernel calls it (``numba.njit``) and :func:`shadowing`
    maps it over arrays (``numba.vectorize``).

    Parameters
    ----------
    cos_zenith, sin_zenith : float
        Cosine and sine of the zenith angle of the direction, zenith in
        [0, 90] °.
    mean_square_slope : float
        Mean square slope [1] in the vertical plane of the direction.

    Returns
    -------
    float
        Shadowing factor [1] in [0, 1]; 1 at nadir (``sin_zenith == 0``).

    Notes
    -----
    :math:`\\nu = \\cot\\theta/\\sqrt{2\\sigma^2}`,
    :math:`\\Lambda = (e^{-\\nu^2}/(\\nu\\sqrt\\pi) - \\operatorname{erfc}\\nu)/2`,
    :math:`S = (1 - \\operatorname{erfc}(\\nu)/2)/(\\Lambda + 1)`, clipped
    to [0, 1]. Plain arithmetic and ``math``; no checks.

    References
    ----------
    Smith, B.G. (1967). IEEE Trans. Antennas Propag. 15(5), 668-671,
    doi:10.1109/TAP.1967.1138991.

    Examples
    --------
    >>> smith_shadowing(1.0, 0.0, 0.02)
    1.0
    """
    den = sin_zenith * math.sqrt(2.0 * mean_square_slope)
    if den == 0.0:  # nadir, or a flat surface: nothing is shadowed
        return 1.0
    nu = cos_zenith / den
    if nu == 0.0:  # grazing
        return 0.0
    ec = math.erfc(nu)
    lam = 0.0 if math.isinf(nu) else 0.5 * (math.exp(-nu * nu) / (nu * 1.7724538509055159) - ec)
    s = (1.0 - 0.5 * ec) / (lam + 1.0)
    # comparisons, not min/max, so that NaN flows through
    if s < 0.0:
        s = 0.0
    elif s > 1.0:
        s = 1.0
    return s


_SMITH_UFUNC: numba.np.ufunc.dufunc.DUFunc | None = None


def _smith_ufunc(cos_t: FloatArray, sin_t: FloatArray, mss: FloatArray) -> FloatArray:
    """:func:`smith_shadowing` over arrays (compiled once, on first use)."""
    global _SMITH_UFUNC
    if _SMITH_UFUNC is None:
        _SMITH_UFUNC = numba.vectorize(["float64(float64, float64, float64)"],
                                       cache=True)(smith_shadowing)
    return np.asarray(_SMITH_UFUNC(cos_t, sin_t, mss), dtype=float)


def shadowing(zenith: ArrayLike, mean_square_slope: ArrayLike) -> FloatArray:
    """Share of surface facets seen along a direction despite wave shadowing.

    Parameters
    ----------
    zenith : array_like
        Zenith angle of the direction (to the sun or to the sensor) [°] in
        [0, 90].
    mean_square_slope : array_like
        Mean square slope [1] of the surface in the vertical plane of that
        direction: for an isotropic surface half the total mean square slope,
        ``(sigma2_crosswind + sigma2_upwind) / 2``; in general
        ``sigma2_c sin²(a) + sigma2_u cos²(a)`` with ``a`` the azimuth of
        the direction from the upwind axis.

    Returns
    -------
    numpy.ndarray
        One-way shadowing factor [1] in [0, 1]: 1 at nadir, 0 at the
        horizon.

    Raises
    ------
    InputError
        Zenith outside [0, 90] or negative mean square slope.

    Notes
    -----
    Smith (1967):

    .. math::

        S(\\theta) = \\frac{1 - \\tfrac12 \\operatorname{erfc}(\\nu)}{\\Lambda(\\nu) + 1},
        \\quad \\nu = \\frac{\\cot\\theta}{\\sqrt{2\\sigma^2}},
        \\quad \\Lambda = \\frac12\\left(\\frac{e^{-\\nu^2}}{\\nu\\sqrt\\pi}
        - \\operatorname{erfc}(\\nu)\\right).

    The formula is :func:`smith_shadowing`, compiled into a ufunc.

    References
    ----------
    Smith, B.G. (1967). Geometrical shadowing of a random rough surface.
    IEEE Trans. Antennas Propag. 15(5), 668-671,
    doi:10.1109/TAP.1967.1138991.

    Examples
    --------
    >>> float(shadowing(0.0, 0.02))
    1.0
    >>> round(float(shadowing(85.0, 0.02)), 3)
    0.579
    """
    theta = as_float_array(zenith, "zenith")
    mss = as_float_array(mean_square_slope, "mean_square_slope")
    check_range(theta, "zenith", 0.0, 90.0, unit="°")
    check_range(mss, "mean_square_slope", 0.0, None)
    theta, mss = np.broadcast_arrays(theta, mss)
    t = np.radians(theta)
    s = _smith_ufunc(np.cos(t), np.sin(t), mss)
    s = np.where(theta == 90.0, 0.0, s)
    return np.asarray(np.clip(s, 0.0, 1.0), dtype=float)


def bidirectional_shadowing(
    sun_zenith: ArrayLike, view_zenith: ArrayLike, mean_square_slope: ArrayLike
) -> FloatArray:
    """Share of facets both lit by the sun and seen by the sensor.

    Parameters
    ----------
    sun_zenith, view_zenith : array_like
        Zenith angles [°] in [0, 90].
    mean_square_slope : array_like
        Mean square slope [1] in the plane of each direction (see
        :func:`shadowing`); one value used for both.

    Returns
    -------
    numpy.ndarray
        :math:`S(\\theta_s) S(\\theta_v)` [1].

    Raises
    ------
    InputError
        As :func:`shadowing`.

    Notes
    -----
    The product of two one-way factors treats shadowing towards the sun and
    masking towards the sensor as independent, the simplest of the forms
    discussed by Sancer (1969); it underestimates the visible share when
    sun and sensor are close together (near the backscatter direction).

    References
    ----------
    Sancer, M.I. (1969). Shadow-corrected electromagnetic scattering from a
    randomly rough surface. IEEE Trans. Antennas Propag. 17(5), 577-585,
    doi:10.1109/TAP.1969.1139516.

    Examples
    --------
    >>> float(bidirectional_shadowing(0.0, 0.0, 0.02))
    1.0
    """
    return shadowing(sun_zenith, mean_square_slope) * shadowing(view_zenith, mean_square_slope)

"""Statistics of the wind-roughened sea surface.

Mean square slopes against wind speed (Cox and Munk 1954, Bréon and Henriot
2006, Wu 1990), the probability density of surface slopes (Gaussian or the
Gram-Charlier series of Cox and Munk). The logarithmic wind profile and
whitecap cover live in :mod:`glint.physics.wind`, the shadowing of facets at
grazing angles in :mod:`glint.physics.shadowing`; both are re-exported here.

Conventions (see ``docs/sea-surface.md``):

* ``zx``, ``zy`` are the slopes of a water facet towards east and north
  (dz/dx, dz/dy in a local east-north-up frame).
* ``wind_direction`` is meteorological: the direction the wind blows *from*,
  clockwise from true north [°].
* The *upwind* slope component ``z_upwind`` is the slope along the direction
  the wind blows **to** (the downwind heading, ``wind_direction + 180``);
  ``z_crosswind`` is the slope along the heading 90° clockwise from it
  (``wind_direction + 270``). A facet whose surface rises in the downwind
  direction (a windward back face) has ``z_upwind > 0``.

The small building blocks :func:`wind_frame_slopes`,
:func:`anisotropic_gaussian_pdf` and :func:`gram_charlier_series` use only
arithmetic and numpy ufuncs, so compiled kernels can call or mirror them
(``numba.njit(gram_charlier_series)`` works on scalars); the formulas live
only here.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Literal

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.errors import InputError
from glint.physics.shadowing import bidirectional_shadowing, shadowing, smith_shadowing
from glint.physics.wind import (
    ROUGHNESS_LENGTH,
    WHITECAP_METHODS,
    _wind,
    whitecap_fraction,
    wind_speed_at_height,
)
from glint.validation import as_float_array, broadcast_inputs, check_choice, warn_outside

__all__ = [
    "SLOPE_MODELS",
    "SLOPE_MODEL_WIND_HEIGHT",
    "SLOPE_MODEL_WIND_RANGE",
    "SLOPE_MODEL_REGISTRY",
    "SlopeModelInfo",
    "SLOPE_DISTRIBUTIONS",
    "SLOPE_VARIANCE_FLOOR",
    "ROUGHNESS_LENGTH",
    "COX_MUNK_WIND_HEIGHT",
    "WHITECAP_METHODS",
    "slope_model",
    "cox_munk_clean",
    "cox_munk_clean_isotropic",
    "cox_munk_slick",
    "breon_henriot",
    "wu",
    "slope_variances",
    "gram_charlier_coefficients",
    "wind_frame_slopes",
    "anisotropic_gaussian_pdf",
    "gram_charlier_series",
    "slope_pdf",
    "wind_speed_at_height",
    "whitecap_fraction",
    "smith_shadowing",
    "shadowing",
    "bidirectional_shadowing",
]

SlopeDistribution = Literal["gaussian", "gram-charlier"]

#: Smallest mean square slope [1] used by :func:`slope_pdf` on each axis. The
#: Cox-Munk clean upwind law is 0 at calm (3.16e-3 W), which would make the
#: density singular; 1e-6 (an rms slope of 0.001, below the spread of facet
#: tilts of about 0.0023 that the sun's disc alone produces) keeps it finite. Kernels mirroring
#: :func:`slope_pdf` apply the same floor.
SLOPE_VARIANCE_FLOOR = 1e-6

#: Height [m] of the anemometer of Cox and Munk (1954), the wind their
#: Gram-Charlier coefficients were fitted against.
COX_MUNK_WIND_HEIGHT = 12.5

#: Names accepted by ``distribution=`` of :func:`slope_pdf`.
SLOPE_DISTRIBUTIONS: tuple[str, ...] = ("gaussian", "gram-charlier")

FloatArray = NDArray[np.float64]
#: A float or a float array: the building blocks below are plain arithmetic
#: and run on either (and under numba.njit on scalars).
Real = float | NDArray[np.floating]
SlopeLaw = Callable[[FloatArray], tuple[FloatArray, FloatArray]]
IsotropicLaw = Callable[[FloatArray], FloatArray]


# ---------------------------------------------------------------------------
# slope-variance models: one registry, filled by the @slope_model decorator
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class SlopeModelInfo:
    """One slope-variance model of the registry.

    Attributes
    ----------
    name : str
        The value of ``model=`` that selects it.
    law : callable
        ``law(wind_speed_model_height) -> (sigma2_crosswind, sigma2_upwind)``
        on float arrays of the wind [m s⁻¹] at ``wind_height``.
    wind_height : float
        Height above the sea [m] of the wind the model was fitted against.
    wind_range : tuple of float
        Wind speeds [m s⁻¹] (at ``wind_height``) covered by the model's
        data; outside them a ValidityWarning is issued.
    reference : str
        Short citation with DOI.
    isotropic : callable or None
        ``isotropic(wind_speed_model_height) -> sigma2_total``: the
        authors' own fit of the total mean square slope, used when the wind
        direction is unknown; None when they give none, and the sum of the
        crosswind and upwind laws is used instead.
    """

    name: str
    law: SlopeLaw
    wind_height: float
    wind_range: tuple[float, float]
    reference: str
    isotropic: IsotropicLaw | None = None


#: Every slope-variance model by name, in the order they are defined below.
SLOPE_MODEL_REGISTRY: dict[str, SlopeModelInfo] = {}


def slope_model(
    name: str, *, wind_height: float, wind_range: tuple[float, float], reference: str,
    isotropic: IsotropicLaw | None = None,
) -> Callable[[SlopeLaw], SlopeLaw]:
    """Register a slope-variance law under ``name`` (decorator).

    The decorated function takes the wind [m s⁻¹] at ``wind_height`` as a
    float array (already checked to be >= 0 or NaN) and returns the crosswind
    and upwind mean square slopes; ``isotropic``, when the authors published
    a separate fit of the total mean square slope, gives that total (used
    when the wind direction is unknown). :func:`slope_variances`, ``SLOPE_MODELS``,
    ``SLOPE_MODEL_WIND_HEIGHT`` and ``SLOPE_MODEL_WIND_RANGE`` all read the
    registry, so registering is the one step that adds a model.
    """

    def register(law: SlopeLaw) -> SlopeLaw:
        if name in SLOPE_MODEL_REGISTRY:
            raise ValueError(f"slope model {name!r} is already registered")
        SLOPE_MODEL_REGISTRY[name] = SlopeModelInfo(
            name=name, law=law, wind_height=float(wind_height),
            wind_range=(float(wind_range[0]), float(wind_range[1])), reference=reference,
            isotropic=isotropic,
        )
        return law

    return register


def cox_munk_clean_isotropic(wind_speed_model_height: FloatArray) -> FloatArray:
    """Cox and Munk's (1954) separate fit of the total mean square slope of a
    clean sea, for a wind of unknown direction.

    Parameters
    ----------
    wind_speed_model_height : numpy.ndarray
        Wind speed W [m s⁻¹] at 12.5 m.

    Returns
    -------
    numpy.ndarray
        :math:`\\sigma^2 = \\sigma_c^2 + \\sigma_u^2 = 0.003 + 5.12\\times10^{-3} W` [1].

    Notes
    -----
    The paper fits the total (isotropic) mean square slope separately from
    its crosswind and upwind components; the components' laws sum to
    0.003 + 5.08e-3 W. The variances differ by under 1 %, but glint, which
    depends on the slope density exp(-tan²β/σ²)/σ², differs by about
    +0.5 to +0.8 % at the peak and -7 to -11 % where tan²β/σ² = 16 (1-14
    m/s). Practitioners compare with the published isotropic law, so glint
    uses it whenever the wind direction is unknown.

    References
    ----------
    Cox, C. and Munk, W. (1954). JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Examples
    --------
    >>> round(float(cox_munk_clean_isotropic(np.array(10.0))), 4)
    0.0542
    """
    return 0.003 + 5.12e-3 * wind_speed_model_height


@slope_model("cox-munk", wind_height=12.5, wind_range=(1.0, 14.0),
             reference="Cox and Munk (1954), doi:10.1364/JOSA.44.000838",
             isotropic=cox_munk_clean_isotropic)
def cox_munk_clean(wind_speed_model_height: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Cox and Munk's (1954) mean square slopes of a clean sea surface.

    Parameters
    ----------
    wind_speed_model_height : numpy.ndarray
        Wind speed W [m s⁻¹] at 12.5 m, the height of Cox and Munk's
        anemometer. Fitted for 1-14 m/s (stated in the abstract).

    Returns
    -------
    sigma2_crosswind, sigma2_upwind : numpy.ndarray
        Mean square slopes [1].

    Notes
    -----
    :math:`\\sigma_c^2 = 0.003 + 1.92\\times10^{-3} W`,
    :math:`\\sigma_u^2 = 3.16\\times10^{-3} W`, used when the wind direction
    is known. The published total 0.003 + 5.12e-3 W is a separate fit
    (:func:`cox_munk_clean_isotropic`), used when it is not; the components
    sum to 0.003 + 5.08e-3 W.

    References
    ----------
    Cox, C. and Munk, W. (1954). Measurement of the roughness of the sea
    surface from photographs of the sun's glitter. JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Examples
    --------
    >>> c, u = cox_munk_clean(np.array(10.0))
    >>> round(float(c), 4), round(float(u), 4)
    (0.0222, 0.0316)
    """
    w = wind_speed_model_height
    return 0.003 + 1.92e-3 * w, 0.000 + 3.16e-3 * w


@slope_model("cox-munk-slick", wind_height=12.5, wind_range=(1.0, 14.0),
             reference="Cox and Munk (1954), doi:10.1364/JOSA.44.000838")
def cox_munk_slick(wind_speed_model_height: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Cox and Munk's (1954) mean square slopes of a sea covered by a slick.

    Parameters
    ----------
    wind_speed_model_height : numpy.ndarray
        Wind speed W [m s⁻¹] at 12.5 m. Fitted for 1-14 m/s.

    Returns
    -------
    sigma2_crosswind, sigma2_upwind : numpy.ndarray
        Mean square slopes [1].

    Notes
    -----
    :math:`\\sigma_c^2 = 0.003 + 0.84\\times10^{-3} W`,
    :math:`\\sigma_u^2 = 0.005 + 0.78\\times10^{-3} W`.

    References
    ----------
    Cox, C. and Munk, W. (1954). JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Examples
    --------
    >>> c, u = cox_munk_slick(np.array(10.0))
    >>> round(float(c), 4), round(float(u), 4)
    (0.0114, 0.0128)
    """
    w = wind_speed_model_height
    return 0.003 + 0.84e-3 * w, 0.005 + 0.78e-3 * w


@slope_model("breon-henriot", wind_height=10.0, wind_range=(0.0, 15.0),
             reference="Bréon and Henriot (2006), doi:10.1029/2005JC003343")
def breon_henriot(wind_speed_model_height: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Bréon and Henriot's (2006) mean square slopes from POLDER glint.

    Parameters
    ----------
    wind_speed_model_height : numpy.ndarray
        Wind speed W [m s⁻¹] at 10 m. Range of the data 0-15 m/s (from
        memory).

    Returns
    -------
    sigma2_crosswind, sigma2_upwind : numpy.ndarray
        Mean square slopes [1].

    Notes
    -----
    :math:`\\sigma_c^2 = 3\\times10^{-3} + 1.85\\times10^{-3} W`,
    :math:`\\sigma_u^2 = 1\\times10^{-3} + 3.16\\times10^{-3} W`
    (coefficients from memory, not checked against the paper).

    References
    ----------
    Bréon, F.-M. and Henriot, N. (2006). Spaceborne observations of ocean
    glint reflectance and modeling of wave slope distributions. JGR 111,
    C06005, doi:10.1029/2005JC003343.

    Examples
    --------
    >>> c, u = breon_henriot(np.array(10.0))
    >>> round(float(c), 4), round(float(u), 4)
    (0.0215, 0.0326)
    """
    w = wind_speed_model_height
    return 3.0e-3 + 1.85e-3 * w, 1.0e-3 + 3.16e-3 * w


# Wu (1990) total mean square slope, two log-linear regimes (from memory):
# mss = 1e-2 (0.90 ln U + 1.20) at light winds, 1e-2 (6.0 ln U - 8.4) above.
_WU_LOW = (0.90e-2, 1.20e-2)
_WU_HIGH = (6.0e-2, -8.4e-2)
#: Floor of Wu's total mss [1] where the light-wind line goes to zero: the
#: calm-sea intercept of Cox and Munk's clean-surface law.
_WU_FLOOR = 0.003
# Share of the total mss given to the crosswind direction for Wu's model:
# the ratio of Cox and Munk's clean-surface slopes b_c / (b_c + b_u).
_WU_CROSSWIND_SHARE = 1.92 / (1.92 + 3.16)


@slope_model("wu", wind_height=10.0, wind_range=(1.0, 20.0),
             reference="Wu (1990), doi:10.1029/RS025i001p00037")
def wu(wind_speed_model_height: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Wu's (1990) total mean square slope, split into two directions.

    Parameters
    ----------
    wind_speed_model_height : numpy.ndarray
        Wind speed U [m s⁻¹] at 10 m. Range of the data 1-20 m/s (from
        memory).

    Returns
    -------
    sigma2_crosswind, sigma2_upwind : numpy.ndarray
        Mean square slopes [1].

    Notes
    -----
    Two log-linear regimes (coefficients from memory):
    :math:`10^{-2}(0.90 \\ln U + 1.20)` at light winds and
    :math:`10^{-2}(6.0 \\ln U - 8.4)` at strong winds. Wu places the break
    near 7 m/s (abstract: gravity waves dominate the slopes below
    U10 = 7 m/s, or u* = 20 cm/s, capillary waves above); here the larger of the two lines is used, which switches at
    their crossing (U = 6.57 m/s) and keeps the total continuous. The total
    is floored at 0.003 and split in the ratio of Cox and Munk's clean
    slopes, crosswind share 1.92 / 5.08.

    References
    ----------
    Wu, J. (1990). Mean square slopes of the wind-disturbed water surface,
    their magnitude, directionality, and composition. Radio Science 25(1),
    37-48, doi:10.1029/RS025i001p00037.

    Examples
    --------
    >>> c, u = wu(np.array(10.0))
    >>> round(float(c + u), 4)
    0.0542
    """
    w = wind_speed_model_height
    with np.errstate(divide="ignore", invalid="ignore"):
        lnw = np.log(w)
        total = np.maximum(_WU_LOW[0] * lnw + _WU_LOW[1], _WU_HIGH[0] * lnw + _WU_HIGH[1])
        total = np.where(np.isnan(w), np.nan, np.maximum(total, _WU_FLOOR))
    return total * _WU_CROSSWIND_SHARE, total * (1.0 - _WU_CROSSWIND_SHARE)


# Views of the registry (read by the scene and engine layers). Every model is
# registered above this line.

#: Names of the slope-variance models accepted by ``model=``.
SLOPE_MODELS: tuple[str, ...] = tuple(SLOPE_MODEL_REGISTRY)

#: Height above the sea [m] at which each model's wind speed was measured:
#: 12.5 m for Cox and Munk (1954), 10 m for Bréon and Henriot (2006) and Wu
#: (1990). :func:`slope_variances` converts a wind given at another height.
SLOPE_MODEL_WIND_HEIGHT: dict[str, float] = {
    name: info.wind_height for name, info in SLOPE_MODEL_REGISTRY.items()
}

#: Wind-speed range [m s⁻¹] covered by each model's data (at the model's
#: height); outside it the result is an extrapolation and a ValidityWarning
#: is issued.
SLOPE_MODEL_WIND_RANGE: dict[str, tuple[float, float]] = {
    name: info.wind_range for name, info in SLOPE_MODEL_REGISTRY.items()
}

# Cox and Munk (1954) clean-surface Gram-Charlier coefficients.
_C21 = (0.01, -0.0086)
_C03 = (0.04, -0.033)
_C40 = 0.40
_C22 = 0.12
_C04 = 0.23


def _wind_at(w: FloatArray, wind_height: ArrayLike, target_height: float) -> FloatArray:
    """``w`` (checked, at ``wind_height``) at ``target_height``: unchanged
    when the heights are equal, else by :func:`wind_speed_at_height`."""
    z = as_float_array(wind_height, "wind_height")
    if z.ndim == 0 and float(z) == target_height:
        return w
    return wind_speed_at_height(w, z, target_height=target_height)


def slope_variances(
    wind_speed: ArrayLike, *, model: str = "cox-munk", wind_height: ArrayLike = 10.0,
    isotropic: bool = False,
) -> tuple[FloatArray, FloatArray]:
    """Crosswind and upwind mean square slopes of the sea surface.

    Parameters
    ----------
    wind_speed : array_like
        Wind speed [m s⁻¹] at ``wind_height``. NaN flows through.
    model : str
        Slope-variance law, one of ``SLOPE_MODELS`` ("cox-munk",
        "cox-munk-slick", "breon-henriot", "wu"); see
        ``SLOPE_MODEL_REGISTRY`` and the model functions
        :func:`cox_munk_clean`, :func:`cox_munk_slick`,
        :func:`breon_henriot`, :func:`wu`.
    wind_height : array_like
        Height of ``wind_speed`` above the water [m]; 10 m by default. The
        wind is converted to the model's own height
        (``SLOPE_MODEL_WIND_HEIGHT[model]``: 12.5 m for the Cox-Munk
        models, 10 m for the others) with :func:`wind_speed_at_height`.
    isotropic : bool
        The wind direction is unknown: return the model's own fit of the
        total mean square slope, split equally between the two directions
        (for Cox-Munk 0.003 + 5.12e-3 W, :func:`cox_munk_clean_isotropic`).
        Models without a separate total fit split the sum of their two
        laws equally.

    Returns
    -------
    sigma2_crosswind, sigma2_upwind : numpy.ndarray
        Mean square slopes [1] across and along the wind (equal halves of
        the total when ``isotropic``).

    Raises
    ------
    InputError
        Negative wind speed, a bad ``wind_height`` or an unknown model.

    Warns
    -----
    ValidityWarning
        Wind speed (at the model's height) outside
        ``SLOPE_MODEL_WIND_RANGE[model]``.

    Notes
    -----
    Each model's equation, reference and fitted range are in the docstring
    of its function. Adding a model is one decorated function
    (:func:`slope_model`).

    References
    ----------
    Cox, C. and Munk, W. (1954). JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Examples
    --------
    Cox and Munk's law at their anemometer height, and from a 10 m wind:

    >>> c, u = slope_variances(10.0, wind_height=12.5)
    >>> round(float(c), 4), round(float(u), 4)
    (0.0222, 0.0316)
    >>> c, u = slope_variances(10.0)
    >>> round(float(c), 4), round(float(u), 4)
    (0.0226, 0.0323)

    Without a wind direction, the published total in two equal halves:

    >>> c, u = slope_variances(10.0, wind_height=12.5, isotropic=True)
    >>> round(float(c + u), 4), bool(c == u)
    (0.0542, True)
    """
    check_choice(model, "model", SLOPE_MODELS)
    if not isinstance(isotropic, (bool, np.bool_)):
        raise InputError(f"isotropic must be True or False; got {isotropic!r}")
    info = SLOPE_MODEL_REGISTRY[model]
    w = _wind_at(_wind(wind_speed), wind_height, info.wind_height)
    low, high = info.wind_range
    warn_outside(w, f"wind_speed (at the model's {info.wind_height:g} m height)", low, high,
                 f"the {model!r} slope model's data")
    c, u = info.law(w)
    if isotropic:
        total = info.isotropic(w) if info.isotropic is not None else c + u
        half = 0.5 * np.asarray(total, dtype=float)
        return half, half.copy()
    return np.asarray(c, dtype=float), np.asarray(u, dtype=float)


def gram_charlier_coefficients(
    wind_speed: ArrayLike, *, wind_height: ArrayLike = 10.0
) -> dict[str, FloatArray]:
    """Skewness and peakedness coefficients of Cox and Munk's clean surface.

    Parameters
    ----------
    wind_speed : array_like
        Wind speed [m s⁻¹] at ``wind_height``.
    wind_height : array_like
        Height of ``wind_speed`` above the water [m]; 10 m by default. The
        coefficients were fitted against the wind at 12.5 m (Cox and Munk's
        anemometer, ``COX_MUNK_WIND_HEIGHT``), to which the wind is
        converted with :func:`wind_speed_at_height`.

    Returns
    -------
    dict of numpy.ndarray
        ``c21``, ``c03`` (skewness), ``c40``, ``c22``, ``c04`` (peakedness),
        each broadcast to the shape of ``wind_speed``.

    Raises
    ------
    InputError
        Negative wind speed or a bad ``wind_height``.

    Warns
    -----
    ValidityWarning
        Wind speed (at 12.5 m) outside 1-14 m/s.

    Notes
    -----
    c21 = 0.01 - 0.0086 W, c03 = 0.04 - 0.033 W, c40 = 0.40, c22 = 0.12,
    c04 = 0.23 (Cox and Munk 1954, clean surface; their stated uncertainties
    are large, e.g. c04 = 0.23 ± 0.41).

    References
    ----------
    Cox, C. and Munk, W. (1954). JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Examples
    --------
    >>> c = gram_charlier_coefficients(10.0, wind_height=12.5)
    >>> round(float(c["c03"]), 3), float(c["c40"])
    (-0.29, 0.4)
    """
    w = _wind_at(_wind(wind_speed), wind_height, COX_MUNK_WIND_HEIGHT)
    warn_outside(w, "wind_speed (at 12.5 m)", 1.0, 14.0, "Cox and Munk's (1954) data")
    nan = np.where(np.isnan(w), np.nan, 0.0)
    return {
        "c21": _C21[0] + _C21[1] * w,
        "c03": _C03[0] + _C03[1] * w,
        "c40": _C40 + nan,
        "c22": _C22 + nan,
        "c04": _C04 + nan,
    }


def wind_frame_slopes(zx: Real, zy: Real, wind_direction: Real) -> tuple[Real, Real]:
    """Rotate east/north slopes into the wind frame.

    Parameters
    ----------
    zx, zy : array_like
        Slopes towards east and north (dz/dx, dz/dy) [1].
    wind_direction : array_like
        Direction the wind blows from, clockwise from true north [°].

    Returns
    -------
    z_crosswind, z_upwind : array_like
        Slope along the heading ``wind_direction + 270`` and along the
        downwind heading ``wind_direction + 180`` (the direction the wind
        blows to).

    Notes
    -----
    With :math:`\\phi` the wind direction,
    :math:`z_u = -(z_x \\sin\\phi + z_y \\cos\\phi)` and
    :math:`z_c = -z_x \\cos\\phi + z_y \\sin\\phi`. Plain arithmetic; no
    checks (callers validate).

    Examples
    --------
    >>> zc, zu = wind_frame_slopes(0.0, -0.1, 0.0)  # wind from north, blows south
    >>> round(float(zu), 3)
    0.1
    """
    phi = np.radians(wind_direction)
    s = np.sin(phi)
    c = np.cos(phi)
    return -zx * c + zy * s, -(zx * s + zy * c)


def anisotropic_gaussian_pdf(
    z_crosswind: Real, z_upwind: Real, sigma2_crosswind: Real, sigma2_upwind: Real
) -> Real:
    """Bivariate Gaussian slope density with independent wind-frame axes.

    Parameters
    ----------
    z_crosswind, z_upwind : array_like
        Slopes in the wind frame [1] (see :func:`wind_frame_slopes`).
    sigma2_crosswind, sigma2_upwind : array_like
        Mean square slopes [1].

    Returns
    -------
    array_like
        Probability density per unit slope area [1].

    Notes
    -----
    :math:`p = \\exp(-(\\xi^2 + \\eta^2)/2) / (2\\pi\\sigma_c\\sigma_u)`,
    :math:`\\xi = z_c/\\sigma_c`, :math:`\\eta = z_u/\\sigma_u`
    (Cox and Munk 1954, doi:10.1364/JOSA.44.000838). Plain arithmetic.

    Examples
    --------
    >>> round(float(anisotropic_gaussian_pdf(0.0, 0.0, 0.01, 0.01)), 3)
    15.915
    """
    xi2 = z_crosswind * z_crosswind / sigma2_crosswind
    eta2 = z_upwind * z_upwind / sigma2_upwind
    return np.exp(-0.5 * (xi2 + eta2)) / (
        2.0 * math.pi * np.sqrt(sigma2_crosswind * sigma2_upwind)
    )


def gram_charlier_series(
    xi: Real, eta: Real, c21: Real, c03: Real, c40: Real, c22: Real, c04: Real
) -> Real:
    """Gram-Charlier factor multiplying the Gaussian slope density.

    Parameters
    ----------
    xi, eta : array_like
        Normalised slopes :math:`\\xi = z_c/\\sigma_c` and
        :math:`\\eta = z_u/\\sigma_u`, with ``z_u`` along the direction the
        wind blows **to** (as returned by :func:`wind_frame_slopes`).
    c21, c03, c40, c22, c04 : array_like
        Coefficients (:func:`gram_charlier_coefficients`).

    Returns
    -------
    array_like
        The factor, clipped at 0 [1].

    Notes
    -----
    Cox and Munk (1954) write the series in their normalised slopes
    :math:`(\\xi, \\eta')` as

    .. math::

        1 - \\tfrac{c_{21}}{2}(\\xi^2-1)\\eta' - \\tfrac{c_{03}}{6}(\\eta'^3-3\\eta')
          + \\tfrac{c_{40}}{24}(\\xi^4-6\\xi^2+3)
          + \\tfrac{c_{22}}{4}(\\xi^2-1)(\\eta'^2-1)
          + \\tfrac{c_{04}}{24}(\\eta'^4-6\\eta'^2+3).

    They report that the most probable slope at strong wind is a few degrees
    "with the azimuth of ascent pointing downwind" (abstract). With
    c21, c03 < 0 the series above puts its mode at :math:`\\eta' < 0`, so
    their :math:`\\eta'` axis points upwind (into the wind); here
    :math:`\\eta' = -\\eta`, i.e. the odd terms change sign:
    ``1 + c21/2 (xi²-1) eta + c03/6 (eta³-3 eta) + even terms``. The mode
    then lies at ``z_u > 0``: surfaces rising downwind (gentle windward
    faces) are the most frequent and the long tail holds the steep lee
    faces. The truncated series goes slightly negative far in the tails;
    it is clipped at 0 there, which raises the integral above 1 by less
    than 1e-3 up to 14 m/s (2e-3 at 20 m/s). Plain arithmetic.

    References
    ----------
    Cox, C. and Munk, W. (1954). JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Examples
    --------
    >>> float(gram_charlier_series(0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0))
    1.0
    """
    xi2 = xi * xi
    eta2 = eta * eta
    f = (
        1.0
        + 0.5 * c21 * (xi2 - 1.0) * eta
        + c03 / 6.0 * (eta2 - 3.0) * eta
        + c40 / 24.0 * (xi2 * xi2 - 6.0 * xi2 + 3.0)
        + 0.25 * c22 * (xi2 - 1.0) * (eta2 - 1.0)
        + c04 / 24.0 * (eta2 * eta2 - 6.0 * eta2 + 3.0)
    )
    return np.maximum(f, 0.0)


def slope_pdf(
    zx: ArrayLike,
    zy: ArrayLike,
    wind_speed: ArrayLike,
    *,
    wind_direction: ArrayLike | None = None,
    model: str = "cox-munk",
    distribution: SlopeDistribution = "gaussian",
    wind_height: ArrayLike = 10.0,
) -> FloatArray:
    """Probability density of sea-surface slopes.

    Parameters
    ----------
    zx, zy : array_like
        Facet slopes towards east and north (dz/dx, dz/dy) [1].
    wind_speed : array_like
        Wind speed [m s⁻¹] at ``wind_height``.
    wind_direction : array_like or None
        Direction the wind blows from, clockwise from true north [°].
        ``None`` (unknown) selects an isotropic Gaussian.
    model : str
        Slope-variance law, one of ``SLOPE_MODELS`` (:func:`slope_variances`).
    distribution : {"gaussian", "gram-charlier"}
        Gaussian, or Cox and Munk's Gram-Charlier series with the clean
        surface coefficients (:func:`gram_charlier_coefficients`, at the
        12.5 m wind) and the variances of ``model``.
    wind_height : array_like
        Height of ``wind_speed`` above the water [m]; 10 m by default
        (converted to each model's height, see :func:`slope_variances`).

    Returns
    -------
    numpy.ndarray
        Density [1] per unit area of the (zx, zy) plane; broadcast shape of
        the inputs; NaN where any input is NaN.

    Raises
    ------
    InputError
        Negative wind speed, unknown model or distribution, or
        ``distribution="gram-charlier"`` without a wind direction.

    Notes
    -----
    Slopes are rotated into the wind frame (:func:`wind_frame_slopes`,
    upwind axis = direction the wind blows to) and
    :math:`p = \\exp(-(\\xi^2+\\eta^2)/2)/(2\\pi\\sigma_c\\sigma_u)`
    (:func:`anisotropic_gaussian_pdf`), times :func:`gram_charlier_series`
    for ``"gram-charlier"``. Without a direction both axes get half the
    model's total mean square slope (``slope_variances(..., isotropic=True)``:
    Cox and Munk's separate isotropic fit 0.003 + 5.12e-3 W for
    ``"cox-munk"``). Each variance is floored at
    ``SLOPE_VARIANCE_FLOOR`` (1e-6) so that calm water stays finite. The
    Gram-Charlier coefficients are Cox and Munk's clean-surface ones whatever
    ``model`` supplies the variances.

    References
    ----------
    Cox, C. and Munk, W. (1954). JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Examples
    --------
    >>> p = slope_pdf(0.0, 0.0, 5.0, wind_direction=270.0, wind_height=12.5)
    >>> round(float(p), 2)
    11.28
    """
    check_choice(model, "model", SLOPE_MODELS)
    check_choice(distribution, "distribution", SLOPE_DISTRIBUTIONS)
    if wind_direction is None and distribution == "gram-charlier":
        raise InputError(
            "distribution='gram-charlier' needs a wind_direction; got None "
            "(use distribution='gaussian' when the direction is unknown)"
        )
    zx = as_float_array(zx, "zx")
    zy = as_float_array(zy, "zy")
    w = as_float_array(wind_speed, "wind_speed")
    phi = None if wind_direction is None else as_float_array(wind_direction, "wind_direction")
    broadcast_inputs(zx=zx, zy=zy, wind_speed=w, wind_direction=0.0 if phi is None else phi)
    s2c, s2u = slope_variances(w, model=model, wind_height=wind_height,
                               isotropic=wind_direction is None)
    s2c = np.maximum(s2c, SLOPE_VARIANCE_FLOOR)
    s2u = np.maximum(s2u, SLOPE_VARIANCE_FLOOR)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        if wind_direction is None:
            s2 = 0.5 * (s2c + s2u)
            return np.asarray(anisotropic_gaussian_pdf(zx, zy, s2, s2), dtype=float)
        assert phi is not None
        zc, zu = wind_frame_slopes(zx, zy, phi)
        p = anisotropic_gaussian_pdf(zc, zu, s2c, s2u)
        if distribution == "gram-charlier":
            c = gram_charlier_coefficients(w, wind_height=wind_height)
            p = p * gram_charlier_series(
                zc / np.sqrt(s2c), zu / np.sqrt(s2u),
                c["c21"], c["c03"], c["c40"], c["c22"], c["c04"],
            )
    return np.asarray(p, dtype=float)

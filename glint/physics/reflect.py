"""Sun glint: reflectance, radiance and glint fraction of a wind-roughened sea.

The reference numpy functions :func:`glint_radiance`, :func:`glint_reflectance`
and :func:`glint_fraction`, composed from :mod:`glint.physics.facets`,
:mod:`glint.physics.optics` and :mod:`glint.physics.surface`: easy to read,
they allocate a full array per step. One reference chain serves them and the
``backend="numpy"`` of the fused kernel :func:`glint_kernel`, which lives in
:mod:`glint.physics.kernel` and is importable from here as well.

The formulas and their derivation are in ``docs/theory.md``. Glint maps are
statistical estimates of how bright the water can appear, not safety
clearances: never look at the sun or at its reflection.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Literal

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.errors import InputError
from glint.physics import optics, surface
from glint.physics._checks import _check_bool, _positive_scalar
from glint.physics.facets import FacetGeometry, facet_geometry
from glint.physics.kernel import (
    KERNEL_BACKENDS,
    KERNEL_OUTPUTS,
    glint_kernel,
    shadowing_mss,
    warmup,
)
from glint.validation import as_float_array, broadcast_inputs, check_choice

__all__ = [
    "KERNEL_OUTPUTS",
    "KERNEL_BACKENDS",
    "glint_radiance",
    "glint_reflectance",
    "glint_fraction",
    "glint_kernel",
    "warmup",
]

SlopeDistribution = Literal["gaussian", "gram-charlier"]
FloatArray = NDArray[np.float64]


# ---------------------------------------------------------------------------
# the reference chain (also the kernel's backend="numpy")
# ---------------------------------------------------------------------------


def _combine(
    geom: FacetGeometry,
    sun_zenith: FloatArray,
    view_zenith: FloatArray,
    rho: FloatArray,
    pdf: FloatArray,
    shadow: FloatArray | float,
    sun_solid_angle: float | None,
) -> dict[str, FloatArray]:
    """Turn facet geometry, Fresnel reflectance and slope density into the
    three glint quantities; apply the horizon rules (docs/theory.md)."""
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        cos_v = np.cos(np.radians(view_zenith))
        cos_s = np.cos(np.radians(sun_zenith))
        cos_b = np.cos(np.radians(geom.tilt))
        cos4 = cos_b**4
        kernel = pdf * shadow / (4.0 * cos_v * cos4)
        radiance = rho * kernel
        reflectance = np.pi * radiance / cos_s
        out = {"glint_radiance": radiance, "glint_reflectance": reflectance}
        if sun_solid_angle is not None:
            out["glint_fraction"] = np.minimum(sun_solid_angle * kernel, 1.0)
    nan = np.isnan(sun_zenith) | np.isnan(view_zenith) | np.isnan(geom.relative_azimuth)
    unseen = view_zenith >= 90.0
    dark = sun_zenith >= 90.0
    for key, val in out.items():
        val = np.where(dark, 0.0, val)
        val = np.where(unseen | nan, np.nan, val)
        out[key] = np.asarray(val, dtype=float)
    return out


def _reference_chain(
    sun_zenith: ArrayLike,
    sun_azimuth: ArrayLike,
    view_zenith: ArrayLike,
    view_azimuth: ArrayLike,
    *,
    refractive_index: ArrayLike,
    sigma2_crosswind: ArrayLike,
    sigma2_upwind: ArrayLike,
    wind_direction: ArrayLike | None,
    gram_charlier: Mapping[str, ArrayLike] | None,
    shadow_mss: ArrayLike | None,
    sun_solid_angle: float | None,
) -> dict[str, FloatArray]:
    """Every glint output from the public numpy functions (float64).

    The variances are used as given (callers floor them); ``wind_direction``
    None selects the isotropic Gaussian with per-axis variance
    ``(sigma2_crosswind + sigma2_upwind) / 2``; ``gram_charlier`` (the
    coefficients, or None) multiplies the Gram-Charlier series in;
    ``shadow_mss`` (or None for no shadowing) is the per-axis mean square
    slope of the bidirectional shadowing factor.
    """
    geom = facet_geometry(sun_zenith, sun_azimuth, view_zenith, view_azimuth)
    shape = geom.zx.shape
    sz = np.broadcast_to(as_float_array(sun_zenith, "sun_zenith"), shape)
    vz = np.broadcast_to(as_float_array(view_zenith, "view_zenith"), shape)
    lit = (sz < 90.0) & (vz < 90.0)
    # Facets are only needed where the sun is up and the surface is seen;
    # elsewhere the geometry can point below the horizon.
    rho = optics.fresnel_reflectance(np.where(lit, geom.reflection_angle, np.nan), refractive_index)
    zx = np.where(lit, geom.zx, np.nan)
    zy = np.where(lit, geom.zy, np.nan)
    s2c = np.asarray(sigma2_crosswind, dtype=float)
    s2u = np.asarray(sigma2_upwind, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        if wind_direction is None:
            s2 = 0.5 * (s2c + s2u)
            pdf = surface.anisotropic_gaussian_pdf(zx, zy, s2, s2)
        else:
            zc, zu = surface.wind_frame_slopes(zx, zy, np.asarray(wind_direction, dtype=float))
            pdf = surface.anisotropic_gaussian_pdf(zc, zu, s2c, s2u)
            if gram_charlier is not None:
                c = {k: np.asarray(v, dtype=float) for k, v in gram_charlier.items()}
                pdf = pdf * surface.gram_charlier_series(
                    zc / np.sqrt(s2c), zu / np.sqrt(s2u),
                    c["c21"], c["c03"], c["c40"], c["c22"], c["c04"],
                )
    shadow: FloatArray | float = 1.0
    if shadow_mss is not None:
        with np.errstate(invalid="ignore", divide="ignore"):
            ok_s = np.where(sz < 90.0, sz, np.nan)
            ok_v = np.where(vz < 90.0, vz, np.nan)
            shadow = surface.bidirectional_shadowing(ok_s, ok_v, shadow_mss)
    out = _combine(geom, sz, vz, rho, np.asarray(pdf, dtype=float), shadow, sun_solid_angle)
    out["glint_angle"] = geom.glint_angle
    return out


def _glint(
    sun_zenith: ArrayLike,
    sun_azimuth: ArrayLike,
    view_zenith: ArrayLike,
    view_azimuth: ArrayLike,
    wind_speed: ArrayLike,
    wind_direction: ArrayLike | None,
    refractive_index: ArrayLike,
    model: str,
    distribution: str,
    shadowing: bool,
    sun_solid_angle: float | None,
    wind_height: ArrayLike,
) -> dict[str, FloatArray]:
    """Validate the options of the public functions, turn the wind into
    slope statistics and run the reference chain."""
    check_choice(model, "model", surface.SLOPE_MODELS)
    check_choice(distribution, "distribution", surface.SLOPE_DISTRIBUTIONS)
    _check_bool(shadowing, "shadowing")
    if wind_direction is None and distribution == "gram-charlier":
        raise InputError(
            "distribution='gram-charlier' needs a wind_direction; got None "
            "(use distribution='gaussian' when the direction is unknown)"
        )
    w = as_float_array(wind_speed, "wind_speed")
    phi = None if wind_direction is None else as_float_array(wind_direction, "wind_direction")
    # Unknown direction: the model's own isotropic fit (Cox and Munk's
    # 0.003 + 5.12e-3 W), in two equal halves.
    s2c, s2u = surface.slope_variances(w, model=model, wind_height=wind_height,
                                       isotropic=phi is None)
    gc = (surface.gram_charlier_coefficients(w, wind_height=wind_height)
          if distribution == "gram-charlier" else None)
    # the shapes of the wind inputs against the angles (named in the error)
    broadcast_inputs(sun_zenith=as_float_array(sun_zenith, "sun_zenith"),
                     sun_azimuth=as_float_array(sun_azimuth, "sun_azimuth"),
                     view_zenith=as_float_array(view_zenith, "view_zenith"),
                     view_azimuth=as_float_array(view_azimuth, "view_azimuth"),
                     wind_speed=w, wind_direction=0.0 if phi is None else phi)
    return _reference_chain(
        sun_zenith, sun_azimuth, view_zenith, view_azimuth,
        refractive_index=refractive_index,
        sigma2_crosswind=np.maximum(s2c, surface.SLOPE_VARIANCE_FLOOR),
        sigma2_upwind=np.maximum(s2u, surface.SLOPE_VARIANCE_FLOOR),
        wind_direction=phi, gram_charlier=gc,
        shadow_mss=shadowing_mss(s2c, s2u) if shadowing else None,
        sun_solid_angle=sun_solid_angle,
    )


def glint_radiance(
    sun_zenith: ArrayLike,
    sun_azimuth: ArrayLike,
    view_zenith: ArrayLike,
    view_azimuth: ArrayLike,
    wind_speed: ArrayLike,
    *,
    wind_direction: ArrayLike | None = None,
    refractive_index: ArrayLike = 1.34,
    model: str = "cox-munk",
    distribution: SlopeDistribution = "gaussian",
    shadowing: bool = False,
    wind_height: ArrayLike = 10.0,
) -> FloatArray:
    """Normalised sun glint radiance L/E of a wind-roughened sea (reference).

    Parameters
    ----------
    sun_zenith, sun_azimuth : array_like
        Sun zenith angle and azimuth (ground to sun, clockwise from true
        north) [°].
    view_zenith, view_azimuth : array_like
        Zenith angle and azimuth of the direction from the ground to the
        sensor [°].
    wind_speed : array_like
        Wind speed [m s⁻¹] at ``wind_height`` (10 m by default).
    wind_direction : array_like or None
        Direction the wind blows from, clockwise from true north [°];
        ``None`` selects the isotropic Gaussian with the model's total mean
        square slope (for Cox-Munk their isotropic fit 0.003 + 5.12e-3 W).
    refractive_index : array_like
        Refractive index of water relative to air [1]. The default 1.34 is
        a common value for sea water in the visible.
    model : str
        Slope-variance law, one of ``glint.physics.surface.SLOPE_MODELS``
        (:func:`glint.physics.surface.slope_variances`).
    distribution : {"gaussian", "gram-charlier"}
        Slope density (:func:`glint.physics.surface.slope_pdf`).
    shadowing : bool
        Multiply by the bidirectional shadowing factor of Smith (1967)
        (:func:`glint.physics.surface.bidirectional_shadowing`) with the per-axis
        mean square slope ``(sigma2_crosswind + sigma2_upwind) / 2``.
    wind_height : array_like
        Height of ``wind_speed`` above the water [m]; 10 m by default. The
        wind is converted to the slope model's own height (12.5 m for
        Cox-Munk; :func:`glint.physics.surface.slope_variances`), and to
        12.5 m for the Gram-Charlier coefficients.

    Returns
    -------
    numpy.ndarray
        Glint radiance divided by the solar irradiance on a plane normal to
        the sun's rays [sr⁻¹]. 0 where the sun is at or below the horizon
        (``sun_zenith >= 90``), NaN where the surface is not seen
        (``view_zenith >= 90``) or an input is NaN.

    Raises
    ------
    InputError
        Zenith angles outside [0, 180], negative wind speed, refractive index
        <= 0, unknown model or distribution, or gram-charlier without a wind
        direction.

    Warns
    -----
    ValidityWarning
        Wind speed outside the range of the slope model.

    Notes
    -----
    .. math::

        \\frac{L}{E} = \\frac{\\rho(\\omega)\\, p(z_x, z_y)}
                           {4 \\cos\\theta_v \\cos^4\\beta}

    with the facet slopes, tilt :math:`\\beta` and reflection angle
    :math:`\\omega` of :func:`glint.physics.facets.facet_geometry`, the Fresnel
    reflectance :math:`\\rho` and the slope density :math:`p`
    (Cox and Munk 1954, eq. for the glitter radiance; Wang and Bailey 2001).
    The sun is treated as a point source; the derivation is in
    ``docs/theory.md``.

    References
    ----------
    Cox, C. and Munk, W. (1954). Measurement of the roughness of the sea
    surface from photographs of the sun's glitter. JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Wang, M. and Bailey, S.W. (2001). Correction of sun glint contamination
    on the SeaWiFS ocean and atmosphere products. Applied Optics 40(27),
    4790-4798, doi:10.1364/AO.40.004790.

    Examples
    --------
    Isotropic sea at the specular point: :math:`\\rho/(4\\cos\\theta_s\\pi\\sigma^2)`.

    The wind at Cox and Munk's anemometer height (12.5 m):

    >>> L = glint_radiance(30.0, 180.0, 30.0, 0.0, 5.0, wind_height=12.5)
    >>> round(float(L), 3)
    0.071
    >>> float(glint_radiance(95.0, 180.0, 30.0, 0.0, 5.0))
    0.0
    """
    out = _glint(sun_zenith, sun_azimuth, view_zenith, view_azimuth, wind_speed,
                 wind_direction, refractive_index, model, distribution, shadowing, None,
                 wind_height)
    return out["glint_radiance"]


def glint_reflectance(
    sun_zenith: ArrayLike,
    sun_azimuth: ArrayLike,
    view_zenith: ArrayLike,
    view_azimuth: ArrayLike,
    wind_speed: ArrayLike,
    *,
    wind_direction: ArrayLike | None = None,
    refractive_index: ArrayLike = 1.34,
    model: str = "cox-munk",
    distribution: SlopeDistribution = "gaussian",
    shadowing: bool = False,
    wind_height: ArrayLike = 10.0,
) -> FloatArray:
    """Sun glint reflectance factor of a wind-roughened sea (reference).

    Parameters
    ----------
    sun_zenith, sun_azimuth, view_zenith, view_azimuth, wind_speed
        As in :func:`glint_radiance`.
    wind_direction, refractive_index, model, distribution, shadowing, wind_height
        As in :func:`glint_radiance`.

    Returns
    -------
    numpy.ndarray
        Reflectance factor :math:`\\pi L/(E\\cos\\theta_s)` [1]: the glint
        radiance relative to that of a white Lambertian surface under the
        same sun. 0 where the sun is at or below the horizon, NaN where the
        surface is not seen or an input is NaN.

    Raises
    ------
    InputError
        As :func:`glint_radiance`.

    Warns
    -----
    ValidityWarning
        Wind speed outside the range of the slope model.

    Notes
    -----
    .. math::

        R = \\frac{\\pi\\,\\rho(\\omega)\\, p(z_x, z_y)}
                 {4 \\cos\\theta_s \\cos\\theta_v \\cos^4\\beta}

    This is :math:`\\pi` times the glint BRDF, which is symmetric in sun and
    sensor (Helmholtz reciprocity).

    References
    ----------
    Cox, C. and Munk, W. (1954). Measurement of the roughness of the sea
    surface from photographs of the sun's glitter. JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Wang, M. and Bailey, S.W. (2001). Correction of sun glint contamination
    on the SeaWiFS ocean and atmosphere products. Applied Optics 40(27),
    4790-4798, doi:10.1364/AO.40.004790.

    Examples
    --------
    >>> R = glint_reflectance(30.0, 180.0, 30.0, 0.0, 5.0, wind_height=12.5)
    >>> round(float(R), 3)
    0.259
    """
    out = _glint(sun_zenith, sun_azimuth, view_zenith, view_azimuth, wind_speed,
                 wind_direction, refractive_index, model, distribution, shadowing, None,
                 wind_height)
    return out["glint_reflectance"]


def glint_fraction(
    sun_zenith: ArrayLike,
    sun_azimuth: ArrayLike,
    view_zenith: ArrayLike,
    view_azimuth: ArrayLike,
    wind_speed: ArrayLike,
    *,
    wind_direction: ArrayLike | None = None,
    model: str = "cox-munk",
    distribution: SlopeDistribution = "gaussian",
    shadowing: bool = False,
    sun_solid_angle: float | None = None,
    wind_height: ArrayLike = 10.0,
) -> FloatArray:
    """Share of the visible water area whose facets mirror the sun's disc.

    Parameters
    ----------
    sun_zenith, sun_azimuth, view_zenith, view_azimuth, wind_speed
        As in :func:`glint_radiance`.
    wind_direction, model, distribution, shadowing, wind_height
        As in :func:`glint_radiance`.
    sun_solid_angle : float, optional
        Solid angle of the sun's disc [sr]; default: at 1 AU
        (:func:`glint.physics.sun.sun_solid_angle`, about 6.8e-5 sr).

    Returns
    -------
    numpy.ndarray
        Expected fraction [1] in [0, 1] of the water area seen from the
        sensor (projected along the view direction) that reflects some part
        of the sun's disc into the sensor. 0 where the sun is at or below the
        horizon, NaN where the surface is not seen or an input is NaN.

    Raises
    ------
    InputError
        As :func:`glint_radiance`, or a solid angle outside (0, 2 pi].

    Warns
    -----
    ValidityWarning
        Wind speed outside the range of the slope model.

    Notes
    -----
    .. math::

        f = \\min\\left(1, \\frac{\\Omega_\\odot\\, p(z_x, z_y)}
                                {4\\cos\\theta_v\\cos^4\\beta}\\right)

    (derivation in ``docs/theory.md``). It equals the glint radiance times
    :math:`\\Omega_\\odot/\\rho(\\omega)`: each glinting facet shows the sun's
    radiance times :math:`\\rho`. The formula takes the slope density as
    constant across the small set of facets that see the sun's disc; it is
    clipped at 1 for a nearly flat sea where that assumption fails.

    References
    ----------
    Cox, C. and Munk, W. (1954). Measurement of the roughness of the sea
    surface from photographs of the sun's glitter. JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Wang, M. and Bailey, S.W. (2001). Correction of sun glint contamination
    on the SeaWiFS ocean and atmosphere products. Applied Optics 40(27),
    4790-4798, doi:10.1364/AO.40.004790.

    Examples
    --------
    >>> f = glint_fraction(30.0, 180.0, 30.0, 0.0, 5.0, sun_solid_angle=6.8e-5,
    ...                    wind_height=12.5)
    >>> round(float(f), 5)
    0.00022
    """
    if sun_solid_angle is None:
        from glint.physics.sun import sun_solid_angle as _solid

        omega_sun = float(_solid(1.0))
    else:
        omega_sun = _positive_scalar(sun_solid_angle, "sun_solid_angle", high=2 * math.pi)
    out = _glint(sun_zenith, sun_azimuth, view_zenith, view_azimuth, wind_speed,
                 wind_direction, 1.34, model, distribution, shadowing, omega_sun,
                 wind_height)
    return out["glint_fraction"]

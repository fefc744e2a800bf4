"""Geometry of specular reflection by a tilted water facet.

The sun and the sensor are given by their zenith and azimuth angles seen from
the ground point (degrees, azimuths clockwise from true north, the sun azimuth
pointing to the sun and the view azimuth pointing to the sensor; see
``docs/conventions.md``). This module finds the one facet orientation that
mirrors the sun into the sensor and the angles that the glint formulas of
:mod:`glint.physics.reflect` need.

Frame: local east-north-up, so a direction with zenith :math:`\\theta` and
azimuth :math:`\\phi` is the unit vector
:math:`(\\sin\\theta\\sin\\phi, \\sin\\theta\\cos\\phi, \\cos\\theta)`.
The derivation is written out in ``docs/theory.md``.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from glint.validation import as_float_array, broadcast_inputs, check_range, wrap_azimuth
from glint.errors import InputError

__all__ = [
    "FacetGeometry",
    "facet_geometry",
    "glint_angle",
    "relative_azimuth",
]


class FacetGeometry(NamedTuple):
    """Geometry of the facet that reflects the sun into the sensor.

    Attributes
    ----------
    zx, zy : numpy.ndarray
        Slopes of the facet towards east and north (dz/dx, dz/dy) [1].
    tilt : numpy.ndarray
        Angle beta between the facet normal and the vertical [°].
    reflection_angle : numpy.ndarray
        Angle omega of incidence of the sun's rays on the facet [°].
    glint_angle : numpy.ndarray
        Angle between the view direction and the flat-surface specular
        direction [°]; 0 at the specular point.
    relative_azimuth : numpy.ndarray
        ``view_azimuth - sun_azimuth`` wrapped to [0, 360) [°].
    """

    zx: np.ndarray
    zy: np.ndarray
    tilt: np.ndarray
    reflection_angle: np.ndarray
    glint_angle: np.ndarray
    relative_azimuth: np.ndarray


def _angles(
    sun_zenith: ArrayLike, sun_azimuth: ArrayLike, view_zenith: ArrayLike, view_azimuth: ArrayLike
) -> dict[str, np.ndarray]:
    """Convert, validate and broadcast the four angles (degrees)."""
    values = {
        "sun_zenith": as_float_array(sun_zenith, "sun_zenith"),
        "sun_azimuth": as_float_array(sun_azimuth, "sun_azimuth"),
        "view_zenith": as_float_array(view_zenith, "view_zenith"),
        "view_azimuth": as_float_array(view_azimuth, "view_azimuth"),
    }
    check_range(values["sun_zenith"], "sun_zenith", 0.0, 180.0, unit="°")
    check_range(values["view_zenith"], "view_zenith", 0.0, 180.0, unit="°")
    for name in ("sun_azimuth", "view_azimuth"):
        if np.any(np.isinf(values[name])):
            raise _infinite_azimuth(name, values[name])
    return broadcast_inputs(**values)


def _infinite_azimuth(name: str, value: np.ndarray) -> InputError:
    """Build the error for an infinite azimuth."""
    bad = np.asarray(value)[np.isinf(value)].flat[0]
    return InputError(f"{name} must be finite or NaN; got {float(bad)!r}")


def _unit_vectors(a: dict[str, np.ndarray]) -> tuple[tuple[np.ndarray, ...], ...]:
    """East-north-up unit vectors to the sun and to the sensor."""
    ts, tv = np.radians(a["sun_zenith"]), np.radians(a["view_zenith"])
    ps, pv = np.radians(a["sun_azimuth"]), np.radians(a["view_azimuth"])
    sin_ts, sin_tv = np.sin(ts), np.sin(tv)
    s = (sin_ts * np.sin(ps), sin_ts * np.cos(ps), np.cos(ts))
    v = (sin_tv * np.sin(pv), sin_tv * np.cos(pv), np.cos(tv))
    return s, v


def _angle_to_mirror(s: tuple[np.ndarray, ...], v: tuple[np.ndarray, ...]) -> np.ndarray:
    """Angle [°] between v and the flat-surface mirror image r of s, as
    atan2(|r x v|, r . v): accurate near 0, where arccos is not."""
    rx, ry, rz = -s[0], -s[1], s[2]
    cx = ry * v[2] - rz * v[1]
    cy = rz * v[0] - rx * v[2]
    cz = rx * v[1] - ry * v[0]
    cross = np.sqrt(cx * cx + cy * cy + cz * cz)
    dot = rx * v[0] + ry * v[1] + rz * v[2]
    return np.degrees(np.arctan2(cross, dot))


def relative_azimuth(sun_azimuth: ArrayLike, view_azimuth: ArrayLike) -> np.ndarray:
    """Azimuth of the sensor relative to the sun.

    Parameters
    ----------
    sun_azimuth : array_like
        Azimuth from the ground point to the sun, clockwise from true north [°].
    view_azimuth : array_like
        Azimuth from the ground point to the sensor [°].

    Returns
    -------
    numpy.ndarray
        :math:`(\\phi_v - \\phi_s) \\bmod 360` in [0, 360) [°]; 180 means the
        sensor looks from the side opposite the sun (the specular side).

    Raises
    ------
    InputError
        An azimuth is infinite or not numeric.

    Notes
    -----
    The convention of ``docs/conventions.md``. Some texts use
    :math:`\\phi_s - \\phi_v` or the azimuth of the sun's rays (sun azimuth +
    180); with those the specular direction is at 0 instead of 180.

    Examples
    --------
    >>> float(relative_azimuth(135.0, 315.0))
    180.0
    >>> float(relative_azimuth(350.0, 10.0))
    20.0
    """
    sa = as_float_array(sun_azimuth, "sun_azimuth")
    va = as_float_array(view_azimuth, "view_azimuth")
    for name, arr in (("sun_azimuth", sa), ("view_azimuth", va)):
        if np.any(np.isinf(arr)):
            raise _infinite_azimuth(name, arr)
    return np.asarray(wrap_azimuth(va - sa), dtype=float)


def glint_angle(
    sun_zenith: ArrayLike, sun_azimuth: ArrayLike, view_zenith: ArrayLike, view_azimuth: ArrayLike
) -> np.ndarray:
    """Angle between the view direction and the flat-water specular direction.

    Parameters
    ----------
    sun_zenith, view_zenith : array_like
        Zenith angles of the sun and of the sensor [°], in [0, 180].
    sun_azimuth, view_azimuth : array_like
        Azimuths of the sun and of the sensor, clockwise from true north [°].

    Returns
    -------
    numpy.ndarray
        Glint angle [°] in [0, 180]; 0 at the specular point. NaN where any
        input is NaN.

    Raises
    ------
    InputError
        A zenith angle outside [0, 180], an infinite azimuth, or shapes that
        do not broadcast.

    Notes
    -----
    A flat surface mirrors the sun to the direction
    :math:`(-s_x, -s_y, s_z)`; its angle :math:`\\theta_g` to the view
    direction obeys

    .. math::

        \\cos\\theta_g = \\cos\\theta_s\\cos\\theta_v
                        - \\sin\\theta_s\\sin\\theta_v\\cos(\\phi_v-\\phi_s).

    It is evaluated as :math:`\\operatorname{atan2}(|\\mathbf r\\times\\mathbf v|,
    \\mathbf r\\cdot\\mathbf v)`, which keeps full precision near 0 where
    the arccosine loses half the digits.

    References
    ----------
    Cox, C. and Munk, W. (1954). Measurement of the roughness of the sea
    surface from photographs of the sun's glitter. JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Examples
    --------
    >>> round(float(glint_angle(30.0, 120.0, 30.0, 300.0)), 9)
    0.0
    >>> round(float(glint_angle(30.0, 120.0, 0.0, 0.0)), 6)
    30.0
    """
    a = _angles(sun_zenith, sun_azimuth, view_zenith, view_azimuth)
    s, v = _unit_vectors(a)
    return np.asarray(_angle_to_mirror(s, v), dtype=float)


def facet_geometry(
    sun_zenith: ArrayLike, sun_azimuth: ArrayLike, view_zenith: ArrayLike, view_azimuth: ArrayLike
) -> FacetGeometry:
    """Orientation of the water facet that reflects the sun into the sensor.

    Parameters
    ----------
    sun_zenith, view_zenith : array_like
        Zenith angles of the sun and of the sensor [°], in [0, 180].
    sun_azimuth, view_azimuth : array_like
        Azimuth from the ground point to the sun and to the sensor, clockwise
        from true north [°].

    Returns
    -------
    FacetGeometry
        Named tuple of arrays ``zx``, ``zy`` [1], ``tilt`` [°],
        ``reflection_angle`` [°], ``glint_angle`` [°], ``relative_azimuth``
        [°], all of the broadcast shape of the inputs. NaN flows through.

    Raises
    ------
    InputError
        A zenith angle outside [0, 180], an infinite azimuth, or shapes that
        do not broadcast.

    Notes
    -----
    With :math:`\\mathbf s` and :math:`\\mathbf v` the unit vectors to the sun
    and to the sensor (east, north, up), the mirroring facet's normal is the
    bisector :math:`\\mathbf n = (\\mathbf s + \\mathbf v)/|\\mathbf s + \\mathbf v|`.
    A surface :math:`z = z_x x + z_y y` has the normal
    :math:`(-z_x, -z_y, 1)/\\sqrt{1 + z_x^2 + z_y^2}`, so

    .. math::

        z_x = -n_x / n_z, \\quad z_y = -n_y / n_z, \\quad
        \\cos\\beta = n_z, \\quad
        \\cos 2\\omega = \\mathbf s\\cdot\\mathbf v, \\quad
        \\cos\\omega = \\mathbf s\\cdot\\mathbf n = \\sqrt{(1 + \\mathbf s\\cdot\\mathbf v)/2}.

    When the sun or the sensor is below the horizon the facet may face
    downwards (:math:`n_z \\le 0`): the slopes are then infinite or of the
    wrong sign and the tilt exceeds 90°; :mod:`glint.physics.reflect` handles those
    cases. When sun and sensor are opposite (:math:`|\\mathbf s + \\mathbf v|
    < 10^{-9}`) the bisector is undefined and every output but the glint
    angle and the relative azimuth is NaN.

    References
    ----------
    Cox, C. and Munk, W. (1954). Measurement of the roughness of the sea
    surface from photographs of the sun's glitter. JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Examples
    --------
    Sun in the south-east, sensor at nadir: the facet must tilt towards the
    sun, i.e. its surface descends towards the south-east.

    >>> g = facet_geometry(40.0, 135.0, 0.0, 0.0)
    >>> round(float(g.tilt), 6), round(float(g.reflection_angle), 6)
    (20.0, 20.0)
    >>> bool(g.zx < 0) and bool(g.zy > 0)
    True
    """
    a = _angles(sun_zenith, sun_azimuth, view_zenith, view_azimuth)
    s, v = _unit_vectors(a)
    sx, sy, sz = s
    vx, vy, vz = v
    hx, hy, hz = sx + vx, sy + vy, sz + vz
    with np.errstate(divide="ignore", invalid="ignore"):
        norm = np.sqrt(hx * hx + hy * hy + hz * hz)
        # opposite directions (to rounding: cos 90° is 6e-17, not 0)
        zero = norm < 1e-9
        zx = -hx / hz
        zy = -hy / hz
        zx = np.where(zero, np.nan, zx)
        zy = np.where(zero, np.nan, zy)
        # atan2 forms keep full precision near 0 (arccos does not):
        # tan(beta) = |h_horizontal| / h_z; |s - v| = 2 sin(omega) and
        # |s + v| = 2 cos(omega)
        tilt = np.where(zero, np.nan, np.degrees(np.arctan2(np.hypot(hx, hy), hz)))
        dx, dy, dz = sx - vx, sy - vy, sz - vz
        diff = np.sqrt(dx * dx + dy * dy + dz * dz)
        omega = np.where(zero, np.nan, np.degrees(np.arctan2(diff, norm)))
        glint = _angle_to_mirror(s, v)
    rel = wrap_azimuth(a["view_azimuth"] - a["sun_azimuth"])
    return FacetGeometry(
        zx=np.asarray(zx, dtype=float),
        zy=np.asarray(zy, dtype=float),
        tilt=np.asarray(tilt, dtype=float),
        reflection_angle=np.asarray(omega, dtype=float),
        glint_angle=np.asarray(glint, dtype=float),
        relative_azimuth=np.asarray(rel, dtype=float),
    )

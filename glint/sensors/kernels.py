"""Compiled per-point view geometry shared by the sensors near the grid.

These loops give, for each ground point on the WGS 84 ellipsoid, the view
zenith and azimuth of a sensor at a known ECEF position: the same equations
as :func:`glint.sensors.base.angles_to_position` (ellipsoid normal, local
east-north-up basis, the ECEF vector from the point to the sensor), fused
into one pass per point with no temporaries. The numpy functions of
:mod:`glint.sensors.base` stay the reference; the tests check these loops
against them to 1e-9 degrees.

Per point the fixed-position loop costs the sines and cosines of the
longitude and latitude (:func:`glint.physics.trig.sincos`: no library
call), one square root for the
ellipsoid radius and two ``atan2``
(zenith from ``atan2(horizontal, up)``, which is accurate near the nadir
where ``arccos`` is not, and azimuth). The line-scanner loop adds the
along-track angle (one ``atan2``); the aircraft's geodetic position on its
track needs no further trigonometry (its sines and cosines follow from the
track vector by algebra).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numba
import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.physics.trig import COS_TABLE as _COS_TABLE
from glint.physics.trig import SIN_TABLE as _SIN_TABLE
from glint.physics.threads import threads_for
from glint.physics.trig import sincos as _sincos_near
from glint.validation import WGS84_A, WGS84_F

__all__ = ["view_from_position", "view_from_track"]

_E2 = WGS84_F * (2.0 - WGS84_F)
_D2R = math.pi / 180.0
_R2D = 180.0 / math.pi

FloatArray = NDArray[np.float64]


@numba.njit(inline="always")
def _enu_view(lon_deg: float, lat_deg: float, sx: float, sy: float, sz: float,
              sin_table: FloatArray, cos_table: FloatArray
              ) -> tuple[float, float, float, float, float, float]:  # pragma: no cover
    """Zenith, azimuth [°] and distance of (sx, sy, sz) seen from the
    ellipsoid point (lon, lat), plus the point's ECEF position."""
    sl, cl = _sincos_near(lon_deg * _D2R, sin_table, cos_table)
    sp, cp = _sincos_near(lat_deg * _D2R, sin_table, cos_table)
    n = WGS84_A / math.sqrt(1.0 - _E2 * sp * sp)
    px = n * cp * cl
    py = n * cp * sl
    pz = n * (1.0 - _E2) * sp
    dx = sx - px
    dy = sy - py
    dz = sz - pz
    de = -sl * dx + cl * dy
    dn = -sp * cl * dx - sp * sl * dy + cp * dz
    du = cp * cl * dx + cp * sl * dy + sp * dz
    hor = math.sqrt(de * de + dn * dn)
    dist = math.sqrt(hor * hor + du * du)
    zen = math.atan2(hor, du) * _R2D
    azi = math.atan2(de, dn) * _R2D
    if azi < 0.0:
        azi += 360.0
    if azi >= 360.0:
        azi -= 360.0
    return zen, azi, dist, px, py, pz


@numba.njit(parallel=True, cache=True, nogil=True)
def _fixed_loop(lon: FloatArray, lat: FloatArray, sx: float, sy: float, sz: float,
                horizon: bool, sin_table: FloatArray, cos_table: FloatArray,
                zen: FloatArray, azi: FloatArray, dist: FloatArray) -> None:  # pragma: no cover
    for i in numba.prange(lon.size):
        z, a, d, _, _, _ = _enu_view(lon[i], lat[i], sx, sy, sz, sin_table, cos_table)
        if horizon and not z < 90.0:  # also NaN coordinates
            z = np.nan
            a = np.nan
        zen[i] = z
        azi[i] = a
        dist[i] = d


def view_from_position(longitude: ArrayLike, latitude: ArrayLike, position: Sequence[ArrayLike],
                       *, horizon: bool = True) -> tuple[FloatArray, FloatArray, FloatArray, int]:
    """View zenith, azimuth [°] and distance [m] of a sensor at one ECEF
    ``position`` from ellipsoid points (height 0), and the number of points
    that do not see it.

    With ``horizon`` the points whose view zenith is 90° or more (and points
    with NaN coordinates) get NaN angles. The arrays keep the points' shape.
    """
    lon, lat = np.broadcast_arrays(np.asarray(longitude, dtype=np.float64),
                                   np.asarray(latitude, dtype=np.float64))
    shape = lon.shape
    lon, lat = np.ascontiguousarray(lon).ravel(), np.ascontiguousarray(lat).ravel()
    zen, azi, dist = np.empty(lon.size), np.empty(lon.size), np.empty(lon.size)
    sx, sy, sz = (float(np.asarray(v)) for v in position)
    if lon.size:
        with threads_for(lon.size):
            _fixed_loop(lon, lat, sx, sy, sz, bool(horizon), _SIN_TABLE, _COS_TABLE, zen, azi,
                        dist)
    hidden = int(np.count_nonzero(np.isnan(zen)))
    return zen.reshape(shape), azi.reshape(shape), dist.reshape(shape), hidden


@numba.njit(parallel=True, cache=True, nogil=True)
def _track_loop(lon: FloatArray, lat: FloatArray, c: FloatArray, t: FloatArray, height: float,
                radius: float, length: float, cos_half: float, sin_table: FloatArray,
                cos_table: FloatArray, zen: FloatArray, azi: FloatArray,
                dist: FloatArray, scan: FloatArray, along_m: FloatArray,
                seen: NDArray[np.bool_]) -> None:  # pragma: no cover - compiled
    for i in numba.prange(lon.size):
        if not (math.isfinite(lon[i]) and math.isfinite(lat[i])):
            zen[i] = np.nan
            azi[i] = np.nan
            dist[i] = np.nan
            scan[i] = np.nan
            along_m[i] = np.nan
            seen[i] = False
            continue
        sl, cl = _sincos_near(lon[i] * _D2R, sin_table, cos_table)
        sp, cp = _sincos_near(lat[i] * _D2R, sin_table, cos_table)
        n = WGS84_A / math.sqrt(1.0 - _E2 * sp * sp)
        px = n * cp * cl
        py = n * cp * sl
        pz = n * (1.0 - _E2) * sp
        # along-track angle of the point's geocentric direction
        pr = math.sqrt(px * px + py * py + pz * pz)
        ptv = (px * t[0] + py * t[1] + pz * t[2]) / pr
        pcv = (px * c[0] + py * c[1] + pz * c[2]) / pr
        a = math.atan2(ptv, pcv)
        h = math.sqrt(ptv * ptv + pcv * pcv)
        ca = pcv / h
        sa = ptv / h
        # the track point (geocentric direction u) and the aircraft above it
        ux = ca * c[0] + sa * t[0]
        uy = ca * c[1] + sa * t[1]
        uz = ca * c[2] + sa * t[2]
        up = math.sqrt(ux * ux + uy * uy)
        q = up * (1.0 - _E2)  # tan(geodetic latitude) = uz / q on the surface
        r = math.sqrt(q * q + uz * uz)
        sb = uz / r
        cb = q / r
        if up > 0.0:
            cal = ux / up
            sal = uy / up
        else:
            cal = 1.0
            sal = 0.0
        na = WGS84_A / math.sqrt(1.0 - _E2 * sb * sb)
        ax = (na + height) * cb * cal
        ay = (na + height) * cb * sal
        az = (na * (1.0 - _E2) + height) * sb
        dx = ax - px
        dy = ay - py
        dz = az - pz
        de = -sl * dx + cl * dy
        dn = -sp * cl * dx - sp * sl * dy + cp * dz
        du = cp * cl * dx + cp * sl * dy + sp * dz
        hor = math.sqrt(de * de + dn * dn)
        d = math.sqrt(hor * hor + du * du)
        z = math.atan2(hor, du) * _R2D
        az_ = math.atan2(de, dn) * _R2D
        if az_ < 0.0:
            az_ += 360.0
        if az_ >= 360.0:
            az_ -= 360.0
        # scan angle at the aircraft: between its nadir and the line of sight
        cs = (dx * cb * cal + dy * cb * sal + dz * sb) / d
        s = a * radius
        ok = s >= 0.0 and s <= length and cs >= cos_half and z < 90.0
        seen[i] = ok
        along_m[i] = s
        if ok:
            zen[i] = z
            azi[i] = az_
            dist[i] = d
            scan[i] = math.acos(min(1.0, max(-1.0, cs))) * _R2D
        else:
            zen[i] = np.nan
            azi[i] = np.nan
            dist[i] = np.nan
            scan[i] = np.nan


def view_from_track(longitude: ArrayLike, latitude: ArrayLike, *, centre: ArrayLike,
                    heading: ArrayLike, height: float, radius: float, length: float,
                    scan_half_angle: float) -> dict[str, NDArray[Any]]:
    """View geometry of an aircraft flying a great-circle track, from
    ellipsoid points, each seen when the aircraft is abeam of it.

    ``centre`` and ``heading`` are the unit geocentric vector of the track's
    reference point and the unit heading vector there (a
    :class:`~glint.sensors.base.GreatCircleTrack`'s ``c`` and ``t``);
    ``radius`` converts track angles to metres, ``length`` is the flight line
    length [m], ``height`` the flying height [m] above the ellipsoid.

    Returns
    -------
    dict
        ``view_zenith``, ``view_azimuth``, ``slant_range``, ``scan_angle``
        (NaN where not seen), ``along_track`` [m] (every finite point) and
        ``seen`` (bool), each of the points' shape.
    """
    lon, lat = np.broadcast_arrays(np.asarray(longitude, dtype=np.float64),
                                   np.asarray(latitude, dtype=np.float64))
    shape = lon.shape
    lon, lat = np.ascontiguousarray(lon).ravel(), np.ascontiguousarray(lat).ravel()
    out = {k: np.empty(lon.size) for k in ("view_zenith", "view_azimuth", "slant_range",
                                           "scan_angle", "along_track")}
    seen = np.empty(lon.size, dtype=np.bool_)
    if lon.size:
        with threads_for(lon.size):
            _track_loop(lon, lat, np.ascontiguousarray(centre, dtype=np.float64),
                        np.ascontiguousarray(heading, dtype=np.float64), float(height), float(radius),
                        float(length), math.cos(math.radians(scan_half_angle)), _SIN_TABLE, _COS_TABLE,
                        out["view_zenith"], out["view_azimuth"], out["slant_range"], out["scan_angle"],
                        out["along_track"], seen)
    res: dict[str, NDArray[Any]] = {k: v.reshape(shape) for k, v in out.items()}
    res["seen"] = seen.reshape(shape)
    return res

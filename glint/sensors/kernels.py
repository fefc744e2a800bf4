"""Compiled per-point view geometry shared by the sensors near the grid.

These loops give, for each ground point on the WGS 84 ellipsoid, the view
zenith and azimuth of a sensor at a known ECEF position: the same equations
as :func:`glint.sensors.base.angles_to_position` (ellipsoid normal, local
east-north-up basis, the ECEF vector from the point to the sensor), fused
into one pass per point with no temporaries. The numpy functions of
:mod:`glint.sensors.base` stay the reference; the tests check these loops
against them to 1e-9 degrees.

Per point the fixed-position loop costs the sines and cosines of the
longitude and latitude, one square root for the ellipsoid radius and two
``atan2`` (zenith from ``atan2(horizontal, up)``, which is accurate near
the nadir where ``arccos`` is not, and azimuth). The sines, cosines and
``atan2`` are the branch-free ones of :mod:`glint.physics.trig` (no
library call): the compiler then runs several points at once, about six
times faster than with the library's. The line-scanner loop adds the
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

from glint.physics.trig import atan2 as _atan2
from glint.physics.threads import threads_for
from glint.physics.trig import sincosd as _sincosd
from glint.validation import WGS84_A, WGS84_F

__all__ = ["view_from_camera", "view_from_position", "view_from_track"]

_E2 = WGS84_F * (2.0 - WGS84_F)
_R2D = 180.0 / math.pi

FloatArray = NDArray[np.float64]


@numba.njit(inline="always")
def _enu_view(lon_deg: float, lat_deg: float, sx: float, sy: float, sz: float
              ) -> tuple[float, float, float, float, float, float]:  # pragma: no cover
    """Zenith, azimuth [°] and distance of (sx, sy, sz) seen from the
    ellipsoid point (lon, lat), plus the point's ECEF position."""
    sl, cl = _sincosd(lon_deg)
    sp, cp = _sincosd(lat_deg)
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
    zen = _atan2(hor, du) * _R2D
    azi = _atan2(de, dn) * _R2D
    if azi < 0.0:
        azi += 360.0
    if azi >= 360.0:
        azi -= 360.0
    return zen, azi, dist, px, py, pz


@numba.njit(parallel=True, cache=True, nogil=True)
def _fixed_loop(lon: FloatArray, lat: FloatArray, sx: float, sy: float, sz: float,
                horizon: bool,
                zen: FloatArray, azi: FloatArray, dist: FloatArray) -> None:  # pragma: no cover
    for i in numba.prange(lon.size):
        z, a, d, _, _, _ = _enu_view(lon[i], lat[i], sx, sy, sz)
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
            _fixed_loop(lon, lat, sx, sy, sz, bool(horizon), zen, azi,
                        dist)
    hidden = int(np.count_nonzero(np.isnan(zen)))
    return zen.reshape(shape), azi.reshape(shape), dist.reshape(shape), hidden


@numba.njit(parallel=True, cache=True, nogil=True)
def _camera_loop(lon: FloatArray, lat: FloatArray, east: FloatArray, north: FloatArray,
                 plane_up: float, sx: float, sy: float, sz: float, m: FloatArray,
                 fx: float, fy: float, cols: float, rows: float, zen: FloatArray, azi: FloatArray, dist: FloatArray,
                 col: FloatArray, row: FloatArray) -> None:  # pragma: no cover - compiled
    plane = east.size > 0
    for i in numba.prange(lon.size):
        z, a, d, px, py, pz = _enu_view(lon[i], lat[i], sx, sy, sz)
        if plane:  # camera -> point in the camera's local east, north, up
            v0 = east[i]
            v1 = north[i]
            v2 = plane_up
        else:      # camera -> point in ECEF (m turns it into the camera's frame)
            v0 = px - sx
            v1 = py - sy
            v2 = pz - sz
        xc = m[0, 0] * v0 + m[0, 1] * v1 + m[0, 2] * v2
        yc = m[1, 0] * v0 + m[1, 1] * v1 + m[1, 2] * v2
        zc = m[2, 0] * v0 + m[2, 1] * v1 + m[2, 2] * v2
        if zc > 0.0:
            c = fx * xc / zc + cols / 2.0 - 0.5
            r = fy * yc / zc + rows / 2.0 - 0.5
        else:
            c = np.nan
            r = np.nan
        seen = (c >= -0.5 and c <= cols - 0.5 and r >= -0.5 and r <= rows - 0.5
                and z < 90.0)
        if not seen:
            z = np.nan
            a = np.nan
            d = np.nan
        zen[i] = z
        azi[i] = a
        dist[i] = d
        col[i] = c
        row[i] = r


def view_from_camera(longitude: ArrayLike, latitude: ArrayLike, position: Sequence[ArrayLike],
                     rotation: ArrayLike, focal: tuple[float, float], size: tuple[int, int], *,
                     east: ArrayLike | None = None, north: ArrayLike | None = None,
                     plane_up: float = 0.0) -> tuple[FloatArray, ...]:
    """View zenith, azimuth [°] and distance [m] of a frame camera at the
    ECEF ``position`` from ellipsoid points, with the fractional image
    column and row of each point, in one compiled pass.

    The camera frame (x right, y down, z along the optical axis) of the
    vector camera -> point is ``rotation @ v``: with ``east``/``north``
    given, ``v = (east, north, plane_up)`` in the camera's local plane
    (a camera over flat water); without, ``v`` is the ECEF vector and
    ``rotation`` includes the camera's east-north-up basis (over curved
    water). A point projects to ``col = fx * x / z + cols / 2 - 0.5``
    (``row`` likewise, pinhole model; NaN behind the camera), and it is
    seen when it falls on the image (``-0.5 <= col <= cols - 0.5``, same
    for rows) and the camera is above its horizon; angles and distance
    are NaN where not seen. Returns ``(zenith, azimuth, distance, col, row)``
    in the points' shape.
    """
    lon, lat = np.broadcast_arrays(np.asarray(longitude, dtype=np.float64),
                                   np.asarray(latitude, dtype=np.float64))
    shape = lon.shape
    lon, lat = np.ascontiguousarray(lon).ravel(), np.ascontiguousarray(lat).ravel()
    if east is not None and north is not None:
        e = np.ascontiguousarray(np.broadcast_to(np.asarray(east, np.float64), shape)).ravel()
        n = np.ascontiguousarray(np.broadcast_to(np.asarray(north, np.float64), shape)).ravel()
    else:
        e = n = np.empty(0)
    out = [np.empty(lon.size) for _ in range(5)]
    sx, sy, sz = (float(np.asarray(v)) for v in position)
    m = np.ascontiguousarray(rotation, dtype=np.float64).reshape(3, 3)
    if lon.size:
        with threads_for(lon.size):
            _camera_loop(lon, lat, e, n, float(plane_up), sx, sy, sz, m, float(focal[0]),
                         float(focal[1]), float(size[0]), float(size[1]), *out)
    return tuple(a.reshape(shape) for a in out)


@numba.njit(parallel=True, cache=True, nogil=True)
def _track_loop(lon: FloatArray, lat: FloatArray, c: FloatArray, t: FloatArray, height: float,
                radius: float, length: float, cos_half: float, zen: FloatArray, azi: FloatArray,
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
        sl, cl = _sincosd(lon[i])
        sp, cp = _sincosd(lat[i])
        n = WGS84_A / math.sqrt(1.0 - _E2 * sp * sp)
        px = n * cp * cl
        py = n * cp * sl
        pz = n * (1.0 - _E2) * sp
        # along-track angle of the point's geocentric direction
        pr = math.sqrt(px * px + py * py + pz * pz)
        ptv = (px * t[0] + py * t[1] + pz * t[2]) / pr
        pcv = (px * c[0] + py * c[1] + pz * c[2]) / pr
        a = _atan2(ptv, pcv)
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
        z = _atan2(hor, du) * _R2D
        az_ = _atan2(de, dn) * _R2D
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
            # acos(cs), as an atan2 (compiled without a library call)
            scan[i] = _atan2(math.sqrt(max(0.0, (1.0 - cs) * (1.0 + cs))), cs) * _R2D
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
                        float(length), math.cos(math.radians(scan_half_angle)),
                        out["view_zenith"], out["view_azimuth"], out["slant_range"], out["scan_angle"],
                        out["along_track"], seen)
    res: dict[str, NDArray[Any]] = {k: v.reshape(shape) for k, v in out.items()}
    res["seen"] = seen.reshape(shape)
    return res

"""Sensor kind ``fixed-camera``: an oblique camera on a shore, mast or ship.

The same camera model as :mod:`glint.sensors.frame_camera` (axes, rotation
order and signs are documented there), but the rays are intersected with
the curved water surface, the WGS 84 ellipsoid at height 0, so that long
ranges and the horizon come out right: rays that pass above the horizon
never reach the water and their pixels are empty, and ground points beyond
the horizon are not seen.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from glint.validation import WGS84_A, WGS84_B
from glint.sensors.base import (
    GroundPoints,
    TableReader,
    enu_basis,
    lonlat_from_ecef,
    ecef_from_lonlat,
    register_sensor_kind,
)
from glint.sensors.frame_camera import CAMERA_KEYS, FrameCamera, read_camera_table

__all__ = ["FixedCamera"]


class FixedCamera(FrameCamera):
    """An oblique camera above curved water.

    Parameters are those of :class:`~glint.sensors.frame_camera.FrameCamera`
    (``altitude`` is the height of the lens above the water).

    Notes
    -----
    A ray from the camera ``C`` (ECEF) with direction ``D`` meets the
    ellipsoid where ``|C' + t D'| = 1`` with ``C' = (Cx/a, Cy/a, Cz/b)``,
    ``D' = (Dx/a, Dy/a, Dz/b)``: the smaller root of
    ``(D'·D') t² + 2 (C'·D') t + C'·C' - 1 = 0``. A negative discriminant
    means the ray passes above the horizon. For a camera at height ``h`` the
    horizon lies about ``sqrt(2 R h)`` away (without refraction).

    Examples
    --------
    >>> cam = FixedCamera(lon=-4.0, lat=50.3, altitude=30.0, image_size=(64, 48),
    ...                   horizontal_fov=40.0, heading=180.0, pitch=-2.0)
    >>> lon, lat = cam.image_to_world(31.5, 47.0)
    >>> bool(np.isfinite(lon)), bool(np.isnan(cam.image_to_world(31.5, 0.0)[0]))
    (True, True)
    """

    surface = "ellipsoid"

    def _setup_surface(self) -> None:
        east, north, up = enu_basis(self.lon, self.lat)
        self._enu = np.array([east, north, up], float)  # rows: e, n, u in ECEF
        self._c = np.array(self._xyz, float)

    def _local_vectors(self, lon: Any, lat: Any) -> tuple[np.ndarray, ...]:
        x, y, z = ecef_from_lonlat(lon, lat, 0.0)
        d = (x - self._c[0], y - self._c[1], z - self._c[2])
        return tuple(self._enu[i, 0] * d[0] + self._enu[i, 1] * d[1] + self._enu[i, 2] * d[2]
                     for i in range(3))

    def _view_frame(self, points: GroundPoints) -> tuple[np.ndarray, dict[str, Any]]:
        """Over curved water the ECEF vectors camera -> point, turned by the
        camera's axes after its local east-north-up basis."""
        return np.asarray(self.axes @ self._enu, float), {}

    def ground_terms(self, longitude: Any, latitude: Any) -> dict[str, np.ndarray]:
        """None: over curved water the camera's local vectors are cheap
        (ellipsoid algebra) and computed at every point."""
        return {}

    def _intersect(self, de: np.ndarray, dn: np.ndarray, du: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        m = self._enu
        d = [de * m[0, k] + dn * m[1, k] + du * m[2, k] for k in range(3)]
        scale = (WGS84_A, WGS84_A, WGS84_B)
        cs = [self._c[k] / scale[k] for k in range(3)]
        ds = [d[k] / scale[k] for k in range(3)]
        qa = ds[0] ** 2 + ds[1] ** 2 + ds[2] ** 2
        qb = cs[0] * ds[0] + cs[1] * ds[1] + cs[2] * ds[2]
        qc = cs[0] ** 2 + cs[1] ** 2 + cs[2] ** 2 - 1.0
        disc = qb * qb - qa * qc
        with np.errstate(invalid="ignore"):
            # Numerically stable smaller root: t = qc / (-qb + sqrt(disc)).
            t = np.where((disc >= 0.0) & (qb < 0.0), qc / (-qb + np.sqrt(np.maximum(disc, 0.0))),
                         np.nan)
        lon, lat, _ = lonlat_from_ecef(*(self._c[k] + t * d[k] for k in range(3)))
        return lon, lat


@register_sensor_kind("fixed-camera", keys=CAMERA_KEYS,
                      summary="oblique camera on a shore, mast or ship, over curved water")
def _build(r: TableReader) -> FixedCamera | None:
    kw = read_camera_table(r, attitude_required=True)
    return None if kw is None else FixedCamera(**kw)

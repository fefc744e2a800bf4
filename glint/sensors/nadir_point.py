"""Sensor kind ``nadir-point``: a sensor hovering at one place.

A balloon, a hovering drone or any sensor at a fixed longitude, latitude and
altitude above the water; every ground point sees it along the straight line
between them, on the ellipsoid (Earth curvature included). The sensor sees
every point whose view zenith is below 90°; no field of view is applied
(use ``frame-camera`` for that).
"""

from __future__ import annotations

import numpy as np

from glint.errors import SensorError
from glint.validation import check_number
from glint.sensors.base import (
    GroundPoints,
    TableReader,
    ViewAngles,
    ecef_from_lonlat,
    register_sensor_kind,
)
from glint.sensors.kernels import view_from_position

__all__ = ["NadirPoint"]


class NadirPoint:
    """A sensor at a fixed position above the water.

    Parameters
    ----------
    lon, lat : float
        Position of the point below the sensor [°].
    altitude : float
        Height above the water [m], > 0.

    Raises
    ------
    SensorError
        For a position out of range or a non-positive altitude.

    Notes
    -----
    The sensor is at ECEF ``P(lon, lat, altitude)`` and the view angles are
    those of :func:`~glint.sensors.base.angles_to_position` from each ground
    point (height 0), evaluated by the compiled loop
    :func:`~glint.sensors.kernels.view_from_position`. Points whose view zenith is 90° or more do not see the
    sensor (NaN). ``extras["slant_range"]`` holds the distance [m].

    Examples
    --------
    >>> s = NadirPoint(lon=0.0, lat=0.0, altitude=1000.0)
    >>> va = s.view_angles(GroundPoints.from_lonlat(0.0, 0.0), None)
    >>> float(va.view_zenith)
    0.0
    """

    smooth = True
    #: The sensor follows the scene time (see :class:`~glint.sensors.base.Sensor`).
    time_key: str | None = None
    fixed_time: np.datetime64 | None = None

    def __init__(self, *, lon: float, lat: float, altitude: float) -> None:
        self.lon = check_number(lon, "lon", -180.0, 180.0, unit="deg", error=SensorError)
        self.lat = check_number(lat, "lat", -90.0, 90.0, unit="deg", error=SensorError)
        self.altitude = check_number(altitude, "altitude", 0.0, None, low_open=True, unit="m", error=SensorError)
        self._xyz = ecef_from_lonlat(self.lon, self.lat, self.altitude)

    def view_angles(self, points: GroundPoints, time: np.datetime64 | None) -> ViewAngles:
        """View angles towards the sensor from every point."""
        vz, va, d, hidden = view_from_position(points.lon, points.lat, self._xyz)
        return ViewAngles(vz, va, None, {"slant_range": d, "unseen": hidden})

    def __repr__(self) -> str:
        return f"NadirPoint(lon={self.lon!r}, lat={self.lat!r}, altitude={self.altitude!r})"


@register_sensor_kind(
    "nadir-point",
    keys=("lon", "lat", "altitude"),
    summary="a sensor at one position above the water (default: above the grid centre)",
)
def _build(r: TableReader) -> NadirPoint | None:
    alt = r.number("altitude", low=0.0, low_open=True, unit="m")
    if r.has("lon") or r.has("lat"):
        lon = r.number("lon", low=-180.0, high=180.0, unit="deg")
        lat = r.number("lat", low=-90.0, high=90.0, unit="deg")
    else:
        centre = r.grid_centre("lon")
        lon, lat = centre if centre else (None, None)
    if alt is None or lon is None or lat is None:
        return None
    return NadirPoint(lon=lon, lat=lat, altitude=alt)

"""Sensor kind ``line-scanner``: an airborne across-track scanner.

The aircraft flies a straight flight line from a start point to an end
point at constant altitude and ground speed; its scanner sweeps across the
track. Each ground point is imaged when the aircraft is abeam of it, at the
foot of the perpendicular from the point onto the flight line.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from glint.errors import SensorError
from glint.validation import check_number
from glint.sensors.base import (
    ns_time,
    GreatCircleTrack,
    GroundPoints,
    TableReader,
    ViewAngles,
    ecef_from_lonlat,
    enu_basis,
    register_sensor_kind,
)
from glint.sensors.kernels import view_from_track

__all__ = ["LineScanner"]


class LineScanner:
    """An airborne line scanner on a straight flight line.

    Parameters
    ----------
    start, end : (float, float)
        ``(lon, lat)`` of the start and end of the flight line [°].
    altitude : float
        Flying height above the water [m], > 0.
    ground_speed : float
        Aircraft speed over the ground [m s⁻¹], > 0.
    start_time : numpy.datetime64 or None
        Time at the start point; None: the scene time given to
        :meth:`view_angles`.
    scan_half_angle : float
        Largest scan angle from the aircraft's nadir [°], in (0, 90).

    Raises
    ------
    SensorError
        For out-of-range values or a flight line shorter than 1 m.

    Notes
    -----
    The flight line is the great circle (on geocentric directions) through
    the start and end points. A point's foot on the line gives the
    along-track distance ``s`` (radius of curvature along the line at its
    start), the time ``t_start + s / v`` and the aircraft position at
    ``altitude`` above the foot. The scan angle is the angle at the aircraft
    between its nadir (minus the ellipsoid normal) and the line of sight to
    the point. Points with ``s < 0``, ``s >`` the line length or scan angle
    above ``scan_half_angle`` are not imaged (NaN). Because those edges are
    sharp the sensor is not ``smooth``.

    Examples
    --------
    >>> s = LineScanner(start=(10.0, 54.0), end=(10.0, 54.1), altitude=3000.0,
    ...                 ground_speed=60.0, start_time=None, scan_half_angle=40.0)
    >>> va = s.view_angles(GroundPoints.from_lonlat(10.0, 54.05),
    ...                    np.datetime64("2026-06-14T10:00:00", "ns"))
    >>> round(float(va.view_zenith), 6), str(va.time)[:19]
    (0.0, '2026-06-14T10:01:32')
    """

    smooth = False
    #: Scene-file key of the imaging time this sensor may fix itself.
    time_key: str | None = "start_time"

    def __init__(self, *, start: tuple[float, float], end: tuple[float, float], altitude: float,
                 ground_speed: float, scan_half_angle: float,
                 start_time: np.datetime64 | None = None) -> None:
        try:
            lon0, lat0 = (float(v) for v in start)
            lon1, lat1 = (float(v) for v in end)
        except (TypeError, ValueError) as exc:
            raise SensorError(f"start and end must be (lon, lat) pairs; got {start!r}, {end!r}") from exc
        for name, v, lim in (("start lon", lon0, 180), ("start lat", lat0, 90),
                             ("end lon", lon1, 180), ("end lat", lat1, 90)):
            check_number(v, name, -lim, lim, unit="deg", error=SensorError)
        self.start, self.end = (lon0, lat0), (lon1, lat1)
        self.altitude = check_number(altitude, "altitude", 0.0, None, low_open=True, unit="m", error=SensorError)
        self.ground_speed = check_number(ground_speed, "ground_speed", 0.0, None, low_open=True, unit="m/s", error=SensorError)
        self.scan_half_angle = check_number(scan_half_angle, "scan_half_angle", 0.0, 90.0, low_open=True, high_open=True, unit="deg", error=SensorError)
        self.start_time = None if start_time is None else ns_time(start_time)
        # Heading of the line at its start, from the two ECEF points.
        p0 = np.array(ecef_from_lonlat(lon0, lat0, 0.0))
        p1 = np.array(ecef_from_lonlat(lon1, lat1, 0.0))
        if np.linalg.norm(p1 - p0) < 1.0:
            raise SensorError(f"flight line start {start!r} and end {end!r} are less than 1 m apart")
        east, north, _ = enu_basis(lon0, lat0)
        d = p1 - p0
        self.heading = float(np.degrees(np.arctan2(d @ np.array(east), d @ np.array(north))) % 360)
        self.track = GreatCircleTrack(lon0, lat0, self.heading)
        along_end, _ = self.track.project(lon1, lat1)
        self.length = float(along_end) * self.track.radius

    @property
    def fixed_time(self) -> np.datetime64 | None:
        """The ``start_time`` given in the sensor's table, or None (scene time)."""
        return self.start_time

    def view_angles(self, points: GroundPoints, time: np.datetime64 | None) -> ViewAngles:
        """View angles, imaging times and scan angles (``extras["scan_angle"]``).

        One compiled pass per point (:func:`glint.sensors.kernels.view_from_track`),
        the equations of the class notes.
        """
        t0 = self._start(time)
        g = view_from_track(points.lon, points.lat, centre=self.track.c, heading=self.track.t,
                            height=self.altitude, radius=self.track.radius, length=self.length,
                            scan_half_angle=self.scan_half_angle)
        seen = g["seen"]
        times = self._times(t0, g["along_track"])
        times = np.where(seen, times, np.datetime64("NaT", "ns"))
        return ViewAngles(g["view_zenith"], g["view_azimuth"], times,
                          {"scan_angle": g["scan_angle"], "slant_range": g["slant_range"],
                           "unseen": int(seen.size - np.count_nonzero(seen))})

    def imaging_times(self, points: GroundPoints, time: np.datetime64 | None) -> NDArray[np.datetime64]:
        """Time at which the aircraft is abeam of each point, seen or not
        (beyond the ends of the line the straight flight is extended): a
        smooth field, for tie-point lattices of the sun position."""
        along, _ = self.track.project(points.lon, points.lat)
        return self._times(self._start(time), np.asarray(along, float) * self.track.radius)

    def _start(self, time: np.datetime64 | None) -> np.datetime64:
        t0 = self.start_time if self.start_time is not None else time
        if t0 is None:
            raise SensorError("line scanner has no start_time and no scene time was given")
        return ns_time(t0)

    def _times(self, t0: np.datetime64, along_m: NDArray[np.float64]) -> NDArray[np.datetime64]:
        dt = along_m / self.ground_speed
        ns = np.where(np.isfinite(dt), np.round(dt * 1e9), 0).astype("int64")
        return np.where(np.isfinite(dt), t0 + ns.astype("timedelta64[ns]"), np.datetime64("NaT", "ns"))

    def __repr__(self) -> str:
        return (f"LineScanner(start={self.start!r}, end={self.end!r}, altitude={self.altitude!r}, "
                f"ground_speed={self.ground_speed!r}, scan_half_angle={self.scan_half_angle!r})")


@register_sensor_kind(
    "line-scanner",
    keys=("start", "end", "altitude", "ground_speed", "start_time", "scan_half_angle"),
    summary="airborne across-track scanner on a straight flight line",
)
def _build(r: TableReader) -> LineScanner | None:
    start = r.numbers("start", 2, what="[lon, lat] in deg")
    end = r.numbers("end", 2, what="[lon, lat] in deg")
    for name, v in (("start", start), ("end", end)):
        if v is not None and not (-180 <= v[0] <= 180 and -90 <= v[1] <= 90):
            r.problem(name, f"lon must lie in [-180, 180] and lat in [-90, 90] deg; got {v!r}")
    alt = r.number("altitude", low=0.0, low_open=True, unit="m")
    speed = r.number("ground_speed", low=0.0, low_open=True, unit="m/s")
    half = r.number("scan_half_angle", low=0.0, high=90.0, low_open=True, high_open=True, unit="deg")
    t0 = r.time("start_time", default=None)
    if (r.problems or start is None or end is None or alt is None or speed is None
            or half is None):
        return None
    return LineScanner(start=(start[0], start[1]), end=(end[0], end[1]), altitude=alt, ground_speed=speed,
                       scan_half_angle=half, start_time=t0)

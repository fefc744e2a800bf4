"""Sensor kind ``push-broom``: a satellite imaging line by line.

A push-broom imager sees each ground point when the point lies in the plane
through the satellite perpendicular to its motion (zero-Doppler). The
satellite moves along a ground track that passes the scene centre with a
given heading; each point is imaged when the satellite is abeam of it, so
points further along the track are imaged later.
"""

from __future__ import annotations

from typing import Literal, cast

import numpy as np

from glint.errors import SensorError
from glint.validation import check_number
from glint.sensors.base import (
    ns_time,
    GreatCircleTrack,
    GroundPoints,
    TableReader,
    ViewAngles,
    angles_to_position,
    ecef_from_lonlat,
    local_radius,
    lonlat_from_ecef,
    register_sensor_kind,
)

__all__ = [
    "PushBroom",
    "GM_EARTH",
    "EARTH_ROTATION_RATE",
    "circular_orbit_ground_speed",
    "ground_track_heading",
]

#: Earth's gravitational constant GM, atmosphere included [m³ s⁻²]
#: (NIMA TR8350.2, 2000, WGS 84).
GM_EARTH = 3.986004418e14
#: Earth's nominal mean angular velocity [rad s⁻¹] (NIMA TR8350.2, 2000).
EARTH_ROTATION_RATE = 7.292115e-5

PassDirection = Literal["ascending", "descending"]
PASSES: tuple[PassDirection, ...] = ("ascending", "descending")


def circular_orbit_ground_speed(altitude: float, radius: float) -> float:
    """Speed [m s⁻¹] of the sub-satellite point of a circular orbit.

    Parameters
    ----------
    altitude : float
        Orbit height above the Earth's surface [m].
    radius : float
        Earth radius under the orbit [m].

    Returns
    -------
    float
        ``sqrt(GM / (R + h)) * R / (R + h)``: the orbital speed scaled to the
        ground; Earth rotation is not included.

    References
    ----------
    Vallado, D.A. (2013) Fundamentals of Astrodynamics and Applications,
    4th ed., Microcosm Press (circular orbit speed ``v = sqrt(mu / r)``).
    GM from NIMA TR8350.2 (2000).

    Examples
    --------
    >>> round(circular_orbit_ground_speed(786e3, 6371e3), 0)
    6643.0
    """
    h = check_number(altitude, "altitude", 0.0, None, low_open=True, unit="m", error=SensorError)
    r = check_number(radius, "radius", 0.0, None, low_open=True, unit="m", error=SensorError)
    return float(np.sqrt(GM_EARTH / (r + h)) * r / (r + h))


def ground_track_heading(lat: float, inclination: float, pass_direction: str, *,
                         altitude: float, radius: float) -> float:
    """Heading [° true] of a circular orbit's ground track at latitude ``lat``.

    Parameters
    ----------
    lat : float
        Latitude [°].
    inclination : float
        Orbit inclination [°], in (0, 180); above 90 for retrograde
        (e.g. sun-synchronous) orbits.
    pass_direction : {"ascending", "descending"}
        Moving north or south.
    altitude, radius : float
        Orbit height and Earth radius [m], for the Earth-rotation term.

    Returns
    -------
    float
        Heading of the ground track, Earth rotation included.

    Raises
    ------
    SensorError
        If the orbit does not reach ``lat`` (``|cos i| > cos lat``).

    Notes
    -----
    On a spherical Earth the inertial heading of a circular orbit obeys
    ``sin A = cos i / cos lat`` (ascending: ``A``, descending: ``180° - A``).
    The ground track follows the velocity relative to the rotating Earth:
    ``v_east = v sin A - omega R cos lat`` and ``v_north = v cos A`` with
    ``v`` the ground speed of :func:`circular_orbit_ground_speed`.

    Examples
    --------
    >>> round(ground_track_heading(0.0, 98.0, "descending",
    ...                            altitude=786e3, radius=6378e3), 1)
    191.9
    """
    i = check_number(inclination, "inclination", 0.0, 180.0, low_open=True, high_open=True, unit="deg", error=SensorError)
    if pass_direction not in PASSES:
        raise SensorError(f"pass must be one of {PASSES!r}; got {pass_direction!r}")
    ratio = np.cos(np.radians(i)) / np.cos(np.radians(lat))
    if abs(ratio) > 1.0:
        raise SensorError(f"an orbit of inclination {inclination!r} deg never reaches latitude "
                          f"{lat:.4f} deg")
    a = np.arcsin(ratio)
    if pass_direction == "descending":
        a = np.pi - a
    v = circular_orbit_ground_speed(altitude, radius)
    ve = v * np.sin(a) - EARTH_ROTATION_RATE * radius * np.cos(np.radians(lat))
    vn = v * np.cos(a)
    return float(np.degrees(np.arctan2(ve, vn)) % 360.0)


class PushBroom:
    """A satellite push-broom imager on a circular orbit.

    Parameters
    ----------
    altitude : float
        Orbit height above the water [m], > 0.
    centre_lon, centre_lat : float
        Scene centre [°]: the point imaged at ``centre_time``.
    heading : float, optional
        Ground-track heading at the scene centre [° true].
    inclination : float, optional
        Orbit inclination [°]; with ``pass_direction``, instead of ``heading``.
    pass_direction : {"ascending", "descending"}, optional
    centre_time : numpy.datetime64 or None, optional
        Time the scene centre is imaged; None: the scene time given to
        :meth:`view_angles`.
    ground_speed : float, optional
        Speed of the sub-satellite point [m s⁻¹]; default
        :func:`circular_orbit_ground_speed`.
    tilt : float, optional
        Across-track tilt of the line of sight at the scene centre [°],
        positive to the right of the flight direction, in (-60, 60).

    Raises
    ------
    SensorError
        For out-of-range values, or neither/both of ``heading`` and
        ``inclination``.

    Notes
    -----
    The ground track is the great circle (on geocentric directions) with the
    given heading (:class:`~glint.sensors.base.GreatCircleTrack`). With a
    tilt ``eta`` the track is moved to the left of the scene centre by the
    Earth central angle ``lambda = asin((R + h) sin(eta) / R) - eta``
    (spherical Earth of the local radius ``R`` across the track), so that the
    scene centre is seen at the off-nadir angle ``eta``. For a ground point
    with along-track angle ``a`` (from the track point abeam of the scene
    centre):

    - its along-track distance is ``s = R a``, ``R`` calibrated so that
      ``s`` is the geodesic distance along the heading near the scene centre
      (see :class:`~glint.sensors.base.GreatCircleTrack`);
    - it is imaged at ``t = t_centre + s / v_ground``;
    - the satellite is at ``altitude`` above the ellipsoid point of the track
      at angle ``a`` (in the plane through the point perpendicular to the
      motion: zero-Doppler);
    - the view angles follow from
      :func:`~glint.sensors.base.angles_to_position`.

    The track is fixed to the Earth over the scene (a great circle with the
    heading at the centre); over a few hundred kilometres its true curvature
    on the rotating Earth moves it by far less than a pixel of view-angle
    change. Points that cannot see the satellite (view zenith >= 90°) are NaN.

    Examples
    --------
    >>> s = PushBroom(altitude=700e3, centre_lon=3.0, centre_lat=55.0, heading=190.0,
    ...               centre_time=np.datetime64("2026-06-14T10:30:00", "ns"))
    >>> va = s.view_angles(GroundPoints.from_lonlat(3.0, 55.0), None)
    >>> round(float(va.view_zenith), 6), str(va.time)
    (0.0, '2026-06-14T10:30:00.000000000')
    """

    smooth = True
    #: Scene-file key of the imaging time this sensor may fix itself.
    time_key: str | None = "centre_time"

    def __init__(self, *, altitude: float, centre_lon: float, centre_lat: float,
                 heading: float | None = None, inclination: float | None = None,
                 pass_direction: Literal["ascending", "descending"] | None = None,
                 centre_time: np.datetime64 | None = None, ground_speed: float | None = None,
                 tilt: float = 0.0) -> None:
        self.altitude = check_number(altitude, "altitude", 0.0, None, low_open=True, unit="m", error=SensorError)
        self.centre_lon = check_number(centre_lon, "centre_lon", -180.0, 180.0, unit="deg", error=SensorError)
        self.centre_lat = check_number(centre_lat, "centre_lat", -90.0, 90.0, unit="deg", error=SensorError)
        self.tilt = check_number(tilt, "tilt", -60.0, 60.0, low_open=True, high_open=True, unit="deg", error=SensorError)
        if (heading is None) == (inclination is None):
            raise SensorError("give either heading or inclination (with pass_direction), not "
                              f"both or neither; got heading={heading!r}, inclination={inclination!r}")
        # Radius across the track (for the tilt) and along it (distances).
        if heading is None:
            r_mean = local_radius(self.centre_lat, 0.0)
            if inclination is None or pass_direction is None:
                raise SensorError(f"inclination needs pass_direction, one of {PASSES!r}")
            heading = ground_track_heading(self.centre_lat, inclination, pass_direction,
                                           altitude=self.altitude, radius=r_mean)
        self.heading = check_number(heading, "heading", -360.0, 360.0, unit="deg", error=SensorError) % 360.0
        self.inclination = inclination
        self.pass_direction = pass_direction
        self.radius_along = local_radius(self.centre_lat, self.heading)
        r_across = local_radius(self.centre_lat, self.heading + 90.0)
        if ground_speed is None:
            ground_speed = circular_orbit_ground_speed(self.altitude, self.radius_along)
        self.ground_speed = check_number(ground_speed, "ground_speed", 0.0, None, low_open=True, unit="m/s", error=SensorError)
        self.centre_time = None if centre_time is None else ns_time(centre_time)
        eta = np.radians(self.tilt)
        k = (r_across + self.altitude) / r_across * np.sin(eta)
        if abs(k) >= 1.0:
            raise SensorError(f"tilt {tilt!r} deg looks past the Earth's limb from "
                              f"{self.altitude!r} m")
        lam = float(np.arcsin(k) - eta)
        base = GreatCircleTrack(self.centre_lon, self.centre_lat, self.heading)
        self.track = base.shifted_left(lam)
        if self.tilt != 0.0:
            # Refine lambda on the ellipsoid (secant steps) so that the scene
            # centre is seen exactly at the off-nadir angle ``tilt``.
            lam0, err0 = 0.0, -self.tilt
            for _ in range(6):
                err = self._off_nadir_of_centre() - self.tilt
                if abs(err) < 1e-10 or err == err0:
                    break
                lam, lam0, err0 = lam - err * (lam - lam0) / (err - err0), lam, err
                self.track = base.shifted_left(lam)

    def _off_nadir_of_centre(self) -> float:
        """Signed angle [deg] at the satellite between nadir and the scene
        centre (positive: centre to the right of the motion)."""
        x, y, z = self.track.position(0.0, self.altitude)
        lon, lat, h = lonlat_from_ecef(x, y, z)
        vz, _, _ = angles_to_position(lon, lat, h, *ecef_from_lonlat(self.centre_lon,
                                                                     self.centre_lat, 0.0))
        _, across = self.track.project(self.centre_lon, self.centre_lat)
        return float(np.copysign(180.0 - vz, -across))

    @property
    def fixed_time(self) -> np.datetime64 | None:
        """The ``centre_time`` given in the sensor's table, or None (scene time)."""
        return self.centre_time

    def view_angles(self, points: GroundPoints, time: np.datetime64 | None) -> ViewAngles:
        """View angles and imaging times; ``time`` is used when no centre time was given."""
        t0 = self.centre_time if self.centre_time is not None else time
        if t0 is None:
            raise SensorError("push-broom sensor has no centre_time and no scene time was given")
        t0 = ns_time(t0)
        along, across = self.track.project(points.lon, points.lat)
        x, y, z = self.track.position(along, self.altitude)
        vz, va, d = angles_to_position(points.lon, points.lat, 0.0, x, y, z)
        hidden = ~(vz < 90.0)
        vz, va = np.where(hidden, np.nan, vz), np.where(hidden, np.nan, va)
        dt = along * self.track.radius / self.ground_speed
        ns = np.where(np.isfinite(dt), np.round(dt * 1e9), 0).astype("int64")
        times = t0 + ns.astype("timedelta64[ns]")
        times = np.where(np.isfinite(dt), times, np.datetime64("NaT", "ns"))
        return ViewAngles(vz, va, times, {"slant_range": d,
                                          "across_track": across * self.radius_along,
                                          "along_track": along * self.track.radius,
                                          "unseen": int(np.sum(hidden))})

    def __repr__(self) -> str:
        return (f"PushBroom(altitude={self.altitude!r}, centre=({self.centre_lon!r}, "
                f"{self.centre_lat!r}), heading={self.heading:.4f}, ground_speed="
                f"{self.ground_speed:.1f}, tilt={self.tilt!r})")


@register_sensor_kind(
    "push-broom",
    keys=("altitude", "heading", "inclination", "pass", "centre_time", "centre_lon",
          "centre_lat", "ground_speed", "tilt"),
    summary="satellite push-broom imager on a circular orbit",
)
def _build(r: TableReader) -> PushBroom | None:
    alt = r.number("altitude", low=0.0, low_open=True, unit="m")
    ok = alt is not None
    heading = inclination = pdir = None
    if r.has("heading") and (r.has("inclination") or r.has("pass")):
        r.problem("heading", "give either heading or inclination + pass, not both")
        ok = False
    elif r.has("heading"):
        heading = r.number("heading", low=0.0, high=360.0, high_open=True, unit="deg")
        ok &= heading is not None
    elif r.has("inclination") or r.has("pass"):
        inclination = r.number("inclination", low=0.0, high=180.0, low_open=True,
                               high_open=True, unit="deg")
        pdir = r.choice("pass", PASSES)
        ok &= inclination is not None and pdir is not None
    else:
        r.problem("heading", "required key is missing: give heading [deg true] or "
                  "inclination [deg] + pass ('ascending' or 'descending')")
        ok = False
    if r.has("centre_lon") or r.has("centre_lat"):
        lon = r.number("centre_lon", low=-180.0, high=180.0, unit="deg")
        lat = r.number("centre_lat", low=-90.0, high=90.0, unit="deg")
    else:
        centre = r.grid_centre("centre_lon")
        lon, lat = centre if centre else (None, None)
    ok &= lon is not None and lat is not None
    t0 = r.time("centre_time", default=None)
    ok &= not (r.has("centre_time") and t0 is None)
    speed = r.number("ground_speed", default=None, low=0.0, low_open=True, unit="m/s")
    ok &= not (r.has("ground_speed") and speed is None)
    tilt = r.number("tilt", default=0.0, low=-60.0, high=60.0, low_open=True, high_open=True,
                    unit="deg")
    ok &= tilt is not None
    if not ok or alt is None or lon is None or lat is None or tilt is None:
        return None
    return PushBroom(altitude=alt, centre_lon=lon, centre_lat=lat, heading=heading,
                     inclination=inclination, pass_direction=cast(PassDirection | None, pdir), centre_time=t0,
                     ground_speed=speed, tilt=tilt)

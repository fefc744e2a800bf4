"""Glint calendars: the glint risk at a site for each overpass of a
sun-synchronous satellite over a range of dates.

A sun-synchronous orbit crosses the equator at the same local mean solar
time every day (the node time). Without the orbit's phase, which decides
where in the swath the site falls on a given day, the calendar gives, for
each day, the glint at the site for every across-track position from which
the sensor can see it; the user matches these against the operator's
acquisition plan.

Geometry (circular orbit, spherical Earth for the orbit, WGS 84 for the
view angles):

* the inclination follows from the altitude by the J2 nodal precession that
  keeps the orbit plane turning with the mean sun, cos i = -(2 rho a^(7/2))
  / (3 J2 R^2 sqrt(mu)) with rho = 360 deg per 365.2422 days (Vallado 2013,
  section 11.4);
* the local mean solar time at the site's latitude ``phi`` is the node time
  plus the right-ascension offset of the sub-satellite point from the node,
  atan2(cos i sin u, cos u) / 15 deg per hour, with sin u = sin phi / sin i
  (argument of latitude u; a descending pass has u in (90, 270) deg);
* the ground track's heading adds the Earth's rotation to the orbital
  velocity at that latitude;
* the satellite is placed above the ground-track point at the across-track
  distance of each swath position (:class:`pyproj.Geod`), and the view
  angles from the site come from :func:`glint.sensors.angles_to_position`;
* glint from the fused kernel of :mod:`glint.physics.reflect` with the sun at
  the site (:func:`glint.physics.sun.solar_position`).

References
----------
Vallado, D.A. (2013) Fundamentals of Astrodynamics and Applications, 4th
edition. Microcosm Press (sun-synchronous inclination, ground tracks).

Never look at the sun or its reflection; glint calendars are estimates.
"""

from __future__ import annotations

import csv
import datetime as _dt
import io as _stdio
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, cast

import numpy as np
from numpy.typing import NDArray

from glint.engine import compute
from glint.errors import InputFileError
from glint.io import charts
from glint.io.outputset import OutputSet
from glint.physics.reflect import glint_kernel
from glint.physics.sun import solar_position
from glint.scene import Surface, Water
from glint.sensors import angles_to_position, ecef_from_lonlat
from glint.sensors.base import TableReader
from glint.times import format_time
from glint.workflows.planning.survey import (
    MAX_PLAN_DAYS,
    PLAN_CAUTION,
    SurveyError,
    WindSeries,
    check_timezone,
    local_dates,
    read_wind_file,
    to_local,
)

__all__ = ["SatelliteSite", "GlintCalendar", "load_calendar_site", "calendar_site_from_dict",
           "satellite_calendar", "write_calendar", "sun_synchronous_inclination",
           "overpass_solar_time"]

_MU = 3.986004418e14  # m^3 s^-2, WGS 84 (NIMA TR8350.2)
_J2 = 1.08262668e-3  # WGS 84 (NIMA TR8350.2)
_RE = 6378137.0  # m
_OMEGA_E = 7.292115e-5  # rad/s, WGS 84
_SUN_RATE = 2 * math.pi / (365.2422 * 86400.0)  # rad/s, mean motion of the sun

#: Number of across-track positions sampled per day.
SWATH_POSITIONS = 41

_SECTIONS = {
    "site": ("name", "lon", "lat", "timezone"),
    "dates": ("start_date", "end_date"),
    "satellite": ("name", "node_time", "pass", "altitude", "swath_width", "max_view_zenith"),
    "wind": ("speed", "direction", "height", "file", "slope_model"),
    "limits": ("glint_threshold",),
    "water": ("wavelength", "temperature", "salinity", "refractive_index"),
}


def sun_synchronous_inclination(altitude: float) -> float:
    """Inclination [°] of a circular sun-synchronous orbit at ``altitude`` [km].

    Examples
    --------
    >>> round(sun_synchronous_inclination(786.0), 1)
    98.5
    """
    a = _RE + altitude * 1e3
    cos_i = -2.0 * _SUN_RATE * a ** 3.5 / (3.0 * _J2 * _RE ** 2 * math.sqrt(_MU))
    return math.degrees(math.acos(cos_i))


def overpass_solar_time(node_time_h: float, inclination: float, latitude: float,
                        descending: bool) -> float:
    """Local mean solar time [h] at which the ground track crosses ``latitude``.

    ``node_time_h`` is the local mean solar time of the node of that pass
    (the descending node for a descending pass).
    """
    i = math.radians(inclination)
    su = math.sin(math.radians(latitude)) / math.sin(i)
    u = math.asin(max(-1.0, min(1.0, su)))
    if descending:
        u = math.pi - u
    d_alpha = math.atan2(math.cos(i) * math.sin(u), math.cos(u))
    if descending:
        d_alpha = (d_alpha - math.pi + math.pi) % (2 * math.pi) - math.pi
    return (node_time_h + math.degrees(d_alpha) / 15.0) % 24.0


def _track_heading(inclination: float, latitude: float, descending: bool, altitude: float) -> float:
    """Heading [° true] of the ground track at ``latitude`` (Earth rotation included)."""
    i = math.radians(inclination)
    phi = math.radians(latitude)
    s = max(-1.0, min(1.0, math.cos(i) / math.cos(phi)))
    az = math.asin(s)  # inertial heading of the ascending pass, from north
    a = _RE + altitude * 1e3
    v = math.sqrt(_MU / a) * _RE / a  # ground speed of the sub-satellite point
    vn = v * math.cos(az) * (-1.0 if descending else 1.0)
    ve = v * math.sin(az) - _OMEGA_E * _RE * math.cos(phi)
    return math.degrees(math.atan2(ve, vn)) % 360.0


@dataclass(frozen=True)
class SatelliteSite:
    """A site and a sun-synchronous sensor for a glint calendar."""

    name: str
    longitude: float
    latitude: float
    timezone: str
    start_date: _dt.date
    end_date: _dt.date
    satellite: str
    node_time_h: float
    descending: bool
    altitude_km: float
    swath_width_km: float | None
    max_view_zenith: float | None
    wind: WindSeries
    glint_threshold: float = 0.02
    slope_model: str = "cox-munk"
    water: Water = field(default_factory=Water)
    source: Path | None = None


@dataclass
class GlintCalendar:
    """Per-day glint at a site across the swath positions that can see it.

    ``reflectance`` has shape ``(positions, days)``; ``offsets_km`` the
    site's signed distance from the ground track (positive to the right of
    the flight direction); NaN where the sensor cannot see the site.
    """

    site: SatelliteSite
    dates: list[_dt.date]
    times: NDArray[np.datetime64]
    sun_zenith: NDArray[np.float64]
    sun_azimuth: NDArray[np.float64]
    track_heading: float
    offsets_km: NDArray[np.float64]
    view_zenith: NDArray[np.float64]
    reflectance: NDArray[np.float64]
    share_above: NDArray[np.float64]
    wind_speed: NDArray[np.float64]
    files: list[Path] = field(default_factory=list)

    def rows(self) -> list[dict[str, Any]]:
        """One CSV/JSON row per day."""
        out = []
        tz = check_timezone(self.site.timezone, "site.timezone")
        mid = int(np.argmin(np.abs(self.offsets_km)))
        thr = self.site.glint_threshold
        for d, day in enumerate(self.dates):
            r = self.reflectance[:, d]
            seen = np.isfinite(r)
            free = self.offsets_km[seen & (r <= thr)]
            out.append({
                "date": day.isoformat(),
                "overpass_utc": format_time(self.times[d]),
                "overpass_local": to_local(self.times[d], tz).isoformat(),
                "sun_elevation": round(90.0 - float(self.sun_zenith[d]), 2),
                "sun_azimuth": round(float(self.sun_azimuth[d]), 2),
                "wind_speed": round(float(self.wind_speed[d]), 2),
                "glint_at_nadir": float(f"{r[mid]:.4g}"),
                "glint_max": float(f"{np.nanmax(r):.4g}") if seen.any() else "",
                "glint_min": float(f"{np.nanmin(r):.4g}") if seen.any() else "",
                "share_above_threshold": round(float(self.share_above[d]), 3),
                "risk": _risk(float(self.share_above[d])),
                "glint_free_offsets_km": (f"{free.min():.0f} to {free.max():.0f}" if free.size
                                          else "none"),
            })
        return out


def _risk(share: float) -> str:
    if share <= 0.0:
        return "none"
    if share >= 1.0:
        return "whole swath"
    return "part of the swath"


def load_calendar_site(path: str | Path) -> SatelliteSite:
    """Read and check a calendar site file (TOML); see ``docs/planning.md``.

    Raises
    ------
    InputFileError
        The file cannot be read.
    SurveyError
        Listing every problem with its key path.
    """
    p = Path(path)
    try:
        data = tomllib.loads(p.read_text(encoding="utf-8"))
    except OSError as exc:
        raise InputFileError(f"cannot read site file {str(p)!r}: {exc.strerror}") from exc
    except tomllib.TOMLDecodeError as exc:
        raise SurveyError([f"not valid TOML: {exc}"], str(p), what="site file") from None
    return calendar_site_from_dict(data, base_dir=p.parent, source=p)


def calendar_site_from_dict(data: dict[str, Any], *, base_dir: str | Path = ".",
                            source: str | Path | None = None) -> SatelliteSite:
    """Build and check a :class:`SatelliteSite` from a nested mapping."""
    from glint.workflows.planning.survey import _date, _unknown_keys

    src = str(source) if source is not None else None
    problems: list[str] = []
    tables: dict[str, Any] = {}
    for name, table in data.items():
        if name not in _SECTIONS:
            problems.append(f"{name}: unknown section; allowed sections: {', '.join(_SECTIONS)}")
        elif not isinstance(table, dict):
            problems.append(f"{name}: expected a table, got {table!r}")
        else:
            tables[name] = table
            _unknown_keys(name, table, problems, _SECTIONS[name])
    for name in ("site", "dates", "satellite", "wind"):
        if name not in tables:
            problems.append(f"{name}: required section is missing")
    if problems:
        raise SurveyError(problems, src, what="site file")
    base = Path(base_dir)

    def reader(name: str) -> TableReader:
        return TableReader(tables.get(name, {}), name, base, None)

    rs = reader("site")
    name = tables["site"].get("name", "site")
    lon = rs.number("lon", low=-180.0, high=180.0, unit="deg")
    lat = rs.number("lat", low=-80.0, high=80.0, unit="deg")
    tzname = tables["site"].get("timezone", "UTC")
    try:
        check_timezone(tzname, "timezone")
    except Exception as exc:  # InputError
        rs.problem(None, str(exc))
    problems += rs.problems
    rd = reader("dates")
    start, end = _date(rd, "start_date"), _date(rd, "end_date")
    if start is not None and end is not None:
        if end < start:
            rd.problem("end_date", f"{end.isoformat()!r} is before start_date "
                       f"{start.isoformat()!r}; give the dates in order")
        elif (end - start).days + 1 > MAX_PLAN_DAYS:
            rd.problem("end_date", f"the range {start.isoformat()} to {end.isoformat()} is "
                       f"{(end - start).days + 1} days; at most {MAX_PLAN_DAYS} days are allowed")
    problems += rd.problems
    rsat = reader("satellite")
    sat_name = tables["satellite"].get("name", "sun-synchronous sensor")
    node = tables["satellite"].get("node_time")
    node_h = None
    try:
        hh, mm = str(node).split(":")
        node_h = int(hh) + int(mm) / 60.0
        if not (0 <= int(hh) < 24 and 0 <= int(mm) < 60):
            raise ValueError
    except (ValueError, TypeError):
        rsat.problem("node_time", f"must be the local mean solar time of the node as \"HH:MM\" "
                     f"(e.g. \"10:30\"); got {node!r}")
        node_h = None
    direction = rsat.choice("pass", ("descending", "ascending"))
    alt = rsat.number("altitude", low=200.0, high=1500.0, unit="km")
    swath = rsat.number("swath_width", default=None, low=0.0, low_open=True, high=3000.0, unit="km")
    vzmax = rsat.number("max_view_zenith", default=None, low=0.0, low_open=True, high=75.0,
                        unit="deg")
    if (swath is None) == (vzmax is None) and not rsat.problems:
        rsat.problem("swath_width", "give either swath_width [km] or max_view_zenith [deg]")
    problems += rsat.problems
    rw = reader("wind")
    height = rw.number("height", default=10.0, low=0.01, unit="m") or 10.0
    slope_model = rw.choice("slope_model", ("cox-munk", "cox-munk-slick", "breon-henriot", "wu"),
                            default="cox-munk")
    wind = None
    if rw.has("file"):
        fpath = rw.path("file")
        if fpath is not None and lon is not None and lat is not None:
            try:
                wind = read_wind_file(fpath, longitude=lon, latitude=lat, height=height)
            except Exception as exc:  # InputError, InputFileError
                rw.problem(None, str(exc).removeprefix("wind."))
    else:
        sp = rw.number("speed", low=0.0, high=40.0, unit="m/s")
        wd = rw.number("direction", default=None, low=0.0, high=360.0, unit="deg")
        if sp is not None:
            if height != 10.0:
                from glint.physics.surface import wind_speed_at_height

                sp = float(wind_speed_at_height(sp, height, target_height=10.0))
            wind = WindSeries.steady(sp, wd)
    problems += rw.problems
    rl = reader("limits")
    thr = rl.number("glint_threshold", default=0.02, low=0.0, low_open=True)
    problems += rl.problems
    water = Water()
    if "water" in tables:
        rwat = reader("water")
        kw: dict[str, Any] = {k: rwat.number(k, low=0.0, low_open=True) for k in tables["water"]}
        problems += rwat.problems
        if not rwat.problems:
            water = Water(**kw)
    if problems:
        raise SurveyError(problems, src, what="site file")
    assert lon is not None and lat is not None and start and end and node_h is not None
    assert alt is not None and wind is not None and thr is not None
    return SatelliteSite(str(name), lon, lat, str(tzname), start, end, str(sat_name), node_h,
                         direction == "descending", alt, swath, vzmax, wind, thr, str(slope_model),
                         water, Path(source) if source is not None else None)


def satellite_calendar(site: SatelliteSite) -> GlintCalendar:
    """Glint at the site for each day's overpass across the swath positions.

    Raises
    ------
    InputError
        A wind series that does not cover the overpass times.
    """
    from pyproj import Geod

    incl = sun_synchronous_inclination(site.altitude_km)
    lmst = overpass_solar_time(site.node_time_h, incl, site.latitude, site.descending)
    heading = _track_heading(incl, site.latitude, site.descending, site.altitude_km)
    dates = local_dates(site.start_date, site.end_date)
    # local mean solar time -> UTC: UTC = LMST - longitude / 15 h
    utc_h = (lmst - site.longitude / 15.0)
    times = np.array([np.datetime64(d.isoformat(), "ns")
                      + np.timedelta64(int(round(utc_h * 3600.0)), "s") for d in dates],
                     dtype="datetime64[ns]")
    sun = solar_position(times, longitude=site.longitude, latitude=site.latitude)
    # across-track positions
    alt_m = site.altitude_km * 1e3
    if site.swath_width_km is not None:
        half = site.swath_width_km / 2.0
    else:
        # ground distance at which the view zenith from the site reaches the limit
        theta = math.radians(float(site.max_view_zenith or 0.0))
        a = _RE + alt_m
        gamma = math.asin(_RE * math.sin(math.pi - theta) / a)  # nadir angle
        half = _RE * (theta - gamma) / 1e3
    offsets = np.linspace(-half, half, SWATH_POSITIONS)
    g = Geod(ellps="WGS84")
    # the satellite lies to the left of the site when the site is to the right of the track
    az = (heading - 90.0) % 360.0
    lon_s, lat_s, _ = g.fwd(np.full(offsets.shape, site.longitude), np.full(offsets.shape, site.latitude),
                            np.full(offsets.shape, az), offsets * 1e3)
    x, y, z = ecef_from_lonlat(lon=np.asarray(lon_s), lat=np.asarray(lat_s), height=alt_m)
    vz, va, _ = angles_to_position(lon=site.longitude, lat=site.latitude, height=0.0, x=x, y=y, z=z)
    vz = np.asarray(vz, float)
    va = np.asarray(va, float)
    if site.max_view_zenith is not None:
        vz = np.where(vz <= site.max_view_zenith + 1e-6, vz, np.nan)
    ws, wd = site.wind.at(times)
    refl = np.full((offsets.size, len(dates)), np.nan)
    for d in range(len(dates)):
        surf = Surface(wind_speed=float(ws[d]), wind_direction=None if np.isnan(wd[d]) else float(wd[d]),
                       slope_model=site.slope_model)
        params = compute.surface_kernel_parameters(surf, site.water, times[d])
        n = offsets.size
        out = glint_kernel(
            np.full(n, float(sun.zenith[d]), np.float32), np.full(n, float(sun.azimuth[d]), np.float32),
            vz.astype(np.float32), va.astype(np.float32),
            refractive_index=params.refractive_index, sigma2_crosswind=params.sigma2_crosswind,
            sigma2_upwind=params.sigma2_upwind, wind_direction=params.wind_direction,
            sun_solid_angle=params.sun_solid_angle, distribution=cast(Any, params.distribution),
            gram_charlier=params.gram_charlier, shadowing=params.shadowing)
        refl[:, d] = out["glint_reflectance"]
    seen = np.isfinite(refl)
    share = np.where(seen.any(axis=0), np.sum(seen & (refl > site.glint_threshold), axis=0)
                     / np.maximum(seen.sum(axis=0), 1), np.nan)
    return GlintCalendar(site, dates, times, np.asarray(sun.zenith, float), np.asarray(sun.azimuth, float),
                         heading, offsets, vz, refl, share, ws)


_CAL_COLUMNS = ("date", "overpass_utc", "overpass_local", "sun_elevation", "sun_azimuth",
                "wind_speed", "glint_at_nadir", "glint_max", "glint_min", "share_above_threshold",
                "risk", "glint_free_offsets_km")


def write_calendar(site: SatelliteSite, outdir: str | Path, *, overwrite: bool = False) -> GlintCalendar:
    """Compute a glint calendar and write ``calendar.csv`` and ``calendar.png``
    as one output set (all or nothing)."""
    out = OutputSet(outdir, {"csv": "calendar.csv", "png": "calendar.png"}, overwrite=overwrite)
    out.check()
    cal = satellite_calendar(site)
    with out:
        buf = _stdio.StringIO()
        buf.write(f"# {PLAN_CAUTION}\n")
        buf.write(f"# {site.satellite}: {'descending' if site.descending else 'ascending'} node at "
                  f"{int(site.node_time_h):02d}:{round(site.node_time_h % 1 * 60):02d} local mean solar "
                  f"time, {site.altitude_km:g} km; ground-track heading {cal.track_heading:.1f} deg; "
                  f"glint threshold {site.glint_threshold:g}\n")
        w = csv.DictWriter(buf, fieldnames=list(_CAL_COLUMNS), lineterminator="\n")
        w.writeheader()
        w.writerows(cal.rows())
        out.temp("csv").write_text(buf.getvalue(), encoding="utf-8")
        charts.satellite_calendar_chart(
            out.temp("png"), cal.dates, cal.offsets_km, cal.reflectance, cal.share_above,
            threshold=site.glint_threshold,
            title=f"{site.name}: glint at the {site.satellite} overpass "
                  f"({'descending' if site.descending else 'ascending'}, about "
                  f"{format_time(cal.times[0], 'text')[11:16]} UTC)",
            caution=PLAN_CAUTION)
    cal.files = out.files
    return cal

"""Survey files: what a drone survey over water wants, read and checked.

A survey file (TOML) says where the survey is, on which local dates, with
which camera at which candidate headings and gimbal pitches, what wind to
expect, and which limits a photo must meet. :func:`load_survey` reads it,
:func:`survey_from_dict` checks the same structure in memory; both report
every problem at once, each line starting with its key path
(``camera.focal_length: ...``), like scene files.

The layout (every key is described in ``docs/planning.md``)::

    [survey]
    name = "Selkie Cove seagrass survey"
    start_date = 2026-07-01          # local dates at the site
    end_date = 2026-07-03
    timezone = "Europe/London"       # IANA name
    step_minutes = 5

    [site]
    lon = -5.0485                    # or: polygon = "site.geojson"
    lat = 50.1515

    [camera]                         # the frame-camera keys of a scene's [sensor]
    image_size = [4000, 3000]
    focal_length = 8.8
    sensor_width = 13.2
    altitude = 100.0
    pitch = [-90.0, -80.0, -70.0]    # candidate gimbal pitches
    headings = "search"              # or a list of degrees

    [wind]
    speed = 3.0                      # m/s at 10 m; or file = "forecast.csv" / ".nc"
    direction = 270.0

    [limits]
    max_glint_share = 0.05
    glint_threshold = 0.02
    sun_elevation = [20.0, 60.0]
    max_wind = 8.0

A plan is a glint estimate only: check airspace, weather, visual line of
sight and local regulations, and never look at the sun or its reflection.
"""

from __future__ import annotations

import datetime as _dt
import difflib
import json
import math
import tomllib
import zoneinfo
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import NDArray

from glint.errors import GlintError, InputError, InputFileError, SceneError
from glint.scene import Water
from glint.sensors.base import TableReader
from glint.sensors.frame_camera import FrameCamera, read_camera_table
from glint.times import to_utc_datetime64
from glint.workflows.planning.wind import WindSeries, read_wind_file

__all__ = [
    "Survey",
    "SurveyError",
    "WindSeries",
    "Limits",
    "load_survey",
    "survey_from_dict",
    "read_wind_file",
    "read_site_polygon",
    "local_dates",
    "scan_times",
    "MAX_PLAN_DAYS",
    "MAX_SITE_EXTENT_KM",
    "SURVEY_SECTIONS",
    "PLAN_CAUTION",
]

#: Longest date range of one plan or calendar [days], first and last day
#: included: a year, so that a whole season can be compared at once.
MAX_PLAN_DAYS = 366
#: Largest extent of a site polygon [km]: the plan uses one sun position and
#: one camera geometry for the whole site (the sun's direction changes by
#: about 0.009 degrees per kilometre), so a larger area is planned as
#: several surveys.
MAX_SITE_EXTENT_KM = 50.0
#: Heading spacing [deg] when ``headings = "search"``.
SEARCH_HEADING_STEP = 30.0

#: The caution printed with every plan and calendar and written into their files.
PLAN_CAUTION = (
    "This plan is a glint estimate only, not a flight clearance: check airspace, "
    "weather, visual line of sight and local regulations before flying, and follow "
    "licensed practice. Never look at the sun or its reflection."
)

#: Keys of each section of a survey file.
SURVEY_SECTIONS: dict[str, tuple[str, ...]] = {
    "survey": ("name", "description", "start_date", "end_date", "timezone", "step_minutes",
               "one_way_lines"),
    "site": ("lon", "lat", "polygon"),
    "camera": ("image_size", "focal_length", "sensor_width", "sensor_height", "horizontal_fov",
               "vertical_fov", "altitude", "pitch", "headings", "lattice"),
    "wind": ("speed", "direction", "height", "file", "slope_model"),
    "limits": ("max_glint_share", "glint_threshold", "sun_elevation", "max_wind"),
    "water": ("wavelength", "temperature", "salinity", "refractive_index"),
    "outputs": ("preview_time",),
}
_REQUIRED = ("survey", "site", "camera", "wind", "limits")

#: Default coarse image lattice ``(columns, rows)`` on which photo shares are
#: computed; see :data:`glint.workflows.planning.windows.SHARE_ERROR_BOUND`.
DEFAULT_LATTICE = (24, 18)


class SurveyError(SceneError):
    """A survey or site file has one or more problems (each with its key path).

    A :class:`~glint.errors.SceneError` (hence a ``ValueError``) whose
    message starts with ``invalid survey file`` instead of ``invalid scene``.
    """

    def __init__(self, problems: list[str] | str, source: str | None = None,
                 what: str = "survey file") -> None:
        super().__init__(problems, source)
        head = f"invalid {what}{f' {source!s}' if source else ''}"
        if len(self.problems) == 1:
            msg = f"{head}: {self.problems[0]}"
        else:
            msg = f"{head} ({len(self.problems)} problems):\n" + "\n".join(
                f"  - {p}" for p in self.problems)
        self.args = (msg,)


@dataclass(frozen=True)
class Limits:
    """What a photo and its conditions must meet.

    Attributes
    ----------
    max_glint_share : float
        Largest share of the photo [0-1] whose glint reflectance factor
        exceeds ``glint_threshold``.
    glint_threshold : float
        Glint reflectance factor above which a pixel counts as glinted [1].
    sun_elevation : (float, float)
        Lowest and highest sun elevation [°].
    max_wind : float
        Largest wind speed at 10 m [m s⁻¹].
    """

    max_glint_share: float = 0.05
    glint_threshold: float = 0.02
    sun_elevation: tuple[float, float] = (20.0, 60.0)
    max_wind: float = 8.0


@dataclass(frozen=True)
class Survey:
    """A checked survey (build with :func:`load_survey` or :func:`survey_from_dict`).

    Attributes
    ----------
    name : str
    start_date, end_date : datetime.date
        First and last local date at the site.
    timezone : str
        IANA time-zone name of the site.
    step_minutes : int
        Time step of the scan [min].
    longitude, latitude : float
        The site [°] (the polygon's centroid when a polygon is given).
    polygon : tuple of (lon, lat) or None
        The site outline (closed ring without the repeated first point).
    camera : dict
        Keyword arguments of :class:`glint.sensors.FrameCamera` without the
        attitude and position (``image_size``, ``focal_length``, ... ,
        ``altitude``).
    pitches, headings : tuple of float
        Candidate gimbal pitches and headings [°]; ``headings`` includes
        every reverse heading unless ``one_way_lines``.
    one_way_lines : bool
        Lines are flown in one direction only (a heading need not work in
        reverse).
    lattice : (int, int)
        Columns and rows of the coarse image lattice of photo shares.
    wind : WindSeries
    wind_height : float
        Height [m] of the given winds (converted to 10 m on reading).
    slope_model : str
    limits : Limits
    water : glint.scene.Water
    preview_time : numpy.datetime64 or None
    description : str
    source : pathlib.Path or None
    """

    name: str
    start_date: _dt.date
    end_date: _dt.date
    timezone: str
    step_minutes: int
    longitude: float
    latitude: float
    camera: dict[str, Any]
    pitches: tuple[float, ...]
    headings: tuple[float, ...]
    wind: WindSeries
    limits: Limits
    polygon: tuple[tuple[float, float], ...] | None = None
    one_way_lines: bool = False
    lattice: tuple[int, int] = DEFAULT_LATTICE
    wind_height: float = 10.0
    slope_model: str = "cox-munk"
    water: Water = field(default_factory=Water)
    preview_time: np.datetime64 | None = None
    description: str = ""
    source: Path | None = None

    @property
    def tz(self) -> zoneinfo.ZoneInfo:
        """The site's time zone."""
        return zoneinfo.ZoneInfo(self.timezone)

    def frame_camera(self, heading: float, pitch: float) -> FrameCamera:
        """The survey camera above the site at one heading and pitch."""
        return FrameCamera(lon=self.longitude, lat=self.latitude, heading=heading % 360.0,
                           pitch=pitch, **self.camera)


# --------------------------------------------------------------------------
# time helpers
# --------------------------------------------------------------------------

def check_timezone(name: Any, key: str = "survey.timezone") -> zoneinfo.ZoneInfo:
    """The ZoneInfo of an IANA name; InputError naming an unknown one."""
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"{key}: must be an IANA time-zone name such as 'Europe/Lisbon'; "
                         f"got {name!r}")
    try:
        return zoneinfo.ZoneInfo(name)
    except (zoneinfo.ZoneInfoNotFoundError, ValueError):
        close = difflib.get_close_matches(name, sorted(zoneinfo.available_timezones()), n=3)
        hint = f" (did you mean {', '.join(map(repr, close))}?)" if close else ""
        raise InputError(f"{key}: unknown time zone {name!r}{hint}; give an IANA name such as "
                         "'Europe/Lisbon' or 'UTC'") from None


def local_dates(start: _dt.date, end: _dt.date) -> list[_dt.date]:
    """Every date from ``start`` to ``end``, both included."""
    return [start + _dt.timedelta(days=i) for i in range((end - start).days + 1)]


def scan_times(start: _dt.date, end: _dt.date, tz: _dt.tzinfo,
               step_minutes: int) -> NDArray[np.datetime64]:
    """UTC instants every ``step_minutes`` from local midnight of ``start`` to
    (excluding) local midnight after ``end``.

    Steps are equal in UTC, so a day with a daylight-saving change has one
    hour of steps more or fewer.

    Examples
    --------
    >>> import datetime, zoneinfo
    >>> tz = zoneinfo.ZoneInfo("Europe/Lisbon")
    >>> t = scan_times(datetime.date(2026, 3, 29), datetime.date(2026, 3, 29), tz, 60)
    >>> len(t), str(t[0])
    (23, '2026-03-29T00:00:00.000000000')
    """
    t0 = _dt.datetime.combine(start, _dt.time(0), tzinfo=tz)
    t1 = _dt.datetime.combine(end + _dt.timedelta(days=1), _dt.time(0), tzinfo=tz)
    a = to_utc_datetime64(t0).astype("datetime64[ns]")
    b = to_utc_datetime64(t1).astype("datetime64[ns]")
    first: Any = a.reshape(-1)[0]
    stop: Any = b.reshape(-1)[0]
    return np.arange(first, stop, np.timedelta64(int(step_minutes) * 60, "s")).astype("datetime64[ns]")


def to_local(time: Any, tz: _dt.tzinfo) -> _dt.datetime:
    """One UTC instant as an aware local datetime (to the second)."""
    t = np.asarray(to_utc_datetime64(time)).reshape(-1)[0].astype("datetime64[s]")
    utc = _dt.datetime.fromtimestamp(int(t.astype(np.int64)), tz=_dt.timezone.utc)
    return utc.astimezone(tz)


# --------------------------------------------------------------------------
# reading pieces
# --------------------------------------------------------------------------

def _date(r: TableReader, name: str) -> _dt.date | None:
    if not r.has(name):
        r.problem(name, "required key is missing (a local date such as 2026-07-01)")
        return None
    v = r.table[name]
    if isinstance(v, _dt.datetime) or not isinstance(v, (_dt.date, str)):
        r.problem(name, f"must be a local date such as 2026-07-01 (no time of day); got {v!r}")
        return None
    if isinstance(v, str):
        try:
            return _dt.date.fromisoformat(v.strip())
        except ValueError:
            r.problem(name, f"must be a local date such as 2026-07-01; got {v!r}")
            return None
    return v


def _unknown_keys(section: str, table: Mapping[str, Any], problems: list[str],
                  allowed: Sequence[str] | None = None) -> None:
    allowed = tuple(SURVEY_SECTIONS[section] if allowed is None else allowed)
    for key in table:
        if key not in allowed:
            close = difflib.get_close_matches(str(key), list(allowed), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            problems.append(f"{section}.{key}: unknown key{hint}; allowed keys: {', '.join(allowed)}")


def _segments_cross(p1: NDArray[np.float64], p2: NDArray[np.float64], q1: NDArray[np.float64],
                    q2: NDArray[np.float64]) -> bool:
    """True when segments p1-p2 and q1-q2 intersect (touching counts)."""
    def orient(a: NDArray[np.float64], b: NDArray[np.float64], c: NDArray[np.float64]) -> float:
        return float((b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]))

    def on_seg(a: NDArray[np.float64], b: NDArray[np.float64], c: NDArray[np.float64]) -> bool:
        return (min(a[0], b[0]) <= c[0] <= max(a[0], b[0])
                and min(a[1], b[1]) <= c[1] <= max(a[1], b[1]))

    d1, d2 = orient(q1, q2, p1), orient(q1, q2, p2)
    d3, d4 = orient(p1, p2, q1), orient(p1, p2, q2)
    if ((d1 > 0 > d2) or (d1 < 0 < d2)) and ((d3 > 0 > d4) or (d3 < 0 < d4)):
        return True
    return ((d1 == 0 and on_seg(q1, q2, p1)) or (d2 == 0 and on_seg(q1, q2, p2))
            or (d3 == 0 and on_seg(p1, p2, q1)) or (d4 == 0 and on_seg(p1, p2, q2)))


def check_polygon(ring: Any, name: str) -> tuple[tuple[tuple[float, float], ...], float, float]:
    """Check a lon/lat ring; return it (open), and its centroid lon, lat.

    Raises
    ------
    InputError
        Fewer than three distinct vertices, zero area (empty), a ring that
        crosses itself, coordinates out of range, or an extent above
        :data:`MAX_SITE_EXTENT_KM`.
    """
    try:
        pts = np.asarray(ring, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name}: polygon coordinates must be [lon, lat] pairs; got {ring!r}") from None
    if pts.ndim != 2 or pts.shape[0] == 0 or pts.shape[1] < 2:
        raise InputError(f"{name}: the polygon is empty: give a ring of at least three "
                         f"[lon, lat] points; got {ring!r}")
    pts = pts[:, :2]
    if not np.all(np.isfinite(pts)) or np.any(np.abs(pts[:, 0]) > 180) or np.any(np.abs(pts[:, 1]) > 90):
        raise InputError(f"{name}: polygon coordinates must be finite lon in [-180, 180] and lat "
                         f"in [-90, 90]; got {pts.tolist()!r}")
    if len(pts) > 1 and np.array_equal(pts[0], pts[-1]):
        pts = pts[:-1]
    keep = np.ones(len(pts), bool)
    keep[1:] = np.any(np.diff(pts, axis=0) != 0, axis=1)
    pts = pts[keep]
    if len(pts) < 3:
        raise InputError(f"{name}: the polygon is empty: it has {len(pts)} distinct vertices; "
                         "give a ring of at least three [lon, lat] points")
    lon0, lat0 = float(np.mean(pts[:, 0])), float(np.mean(pts[:, 1]))
    # Local equirectangular metres: enough for areas, crossings and extents of a site.
    kx = 111.32e3 * math.cos(math.radians(lat0))
    xy = np.column_stack([(pts[:, 0] - lon0) * kx, (pts[:, 1] - lat0) * 110.57e3])
    x, y = xy[:, 0], xy[:, 1]
    cross = x * np.roll(y, -1) - np.roll(x, -1) * y
    area = 0.5 * float(np.sum(cross))
    n = len(xy)
    for i in range(n):
        for j in range(i + 1, n):
            if j == i + 1 or (i == 0 and j == n - 1):
                continue
            if _segments_cross(xy[i], xy[(i + 1) % n], xy[j], xy[(j + 1) % n]):
                raise InputError(
                    f"{name}: the polygon crosses itself (edge {i + 1} from {pts[i].tolist()!r} "
                    f"meets edge {j + 1} from {pts[j].tolist()!r}); give a simple ring")
    if abs(area) < 1e-6:
        raise InputError(f"{name}: the polygon is empty (zero area): its vertices "
                         f"{pts.tolist()!r} lie on one line")
    extent = float(np.max(np.hypot(*(xy[:, None, :] - xy[None, :, :]).transpose(2, 0, 1)))) / 1e3
    if extent > MAX_SITE_EXTENT_KM:
        raise InputError(f"{name}: the polygon spans {extent:.1f} km; at most "
                         f"{MAX_SITE_EXTENT_KM:g} km is allowed (plan larger areas as several sites)")
    cx = float(np.sum((x + np.roll(x, -1)) * cross) / (6 * area))
    cy = float(np.sum((y + np.roll(y, -1)) * cross) / (6 * area))
    ring_out = tuple((float(a), float(b)) for a, b in pts)
    return ring_out, lon0 + cx / kx, lat0 + cy / 110.57e3


def read_site_polygon(path: str | Path) -> tuple[tuple[tuple[float, float], ...], float, float]:
    """The outer ring of the one polygon in a GeoJSON file, and its centroid.

    Accepts a Polygon geometry, a Feature, or a FeatureCollection with one
    Polygon feature (lon/lat, RFC 7946).

    Raises
    ------
    InputFileError
        The file cannot be read or is not JSON.
    InputError
        No polygon, several polygons, or a polygon that is empty, crosses
        itself or is too large (see :func:`check_polygon`).
    """
    p = Path(path)
    try:
        data = json.loads(p.read_text(encoding="utf-8"))
    except OSError as exc:
        raise InputFileError(f"site.polygon: cannot read {str(p)!r}: {exc.strerror}") from exc
    except ValueError as exc:
        raise InputFileError(f"site.polygon: {str(p)!r} is not GeoJSON (JSON error: {exc})") from exc
    geoms: list[Any] = []

    def collect(obj: Any) -> None:
        if not isinstance(obj, Mapping):
            return
        kind = obj.get("type")
        if kind == "FeatureCollection":
            for f in obj.get("features") or []:
                collect(f)
        elif kind == "Feature":
            collect(obj.get("geometry"))
        elif kind in ("Polygon", "MultiPolygon"):
            geoms.append(obj)

    collect(data)
    if len(geoms) != 1 or geoms[0].get("type") != "Polygon":
        raise InputError(f"site.polygon: {str(p)!r} must hold exactly one GeoJSON Polygon; found "
                         f"{len(geoms)} polygon geometr{'y' if len(geoms) == 1 else 'ies'}"
                         f"{' (a MultiPolygon)' if geoms and geoms[0].get('type') == 'MultiPolygon' else ''}")
    rings = geoms[0].get("coordinates") or []
    return check_polygon(rings[0] if rings else [], f"site.polygon ({p.name})")


# --------------------------------------------------------------------------
# the survey file
# --------------------------------------------------------------------------

def load_survey(path: str | Path) -> Survey:
    """Read and check a survey file (TOML).

    Raises
    ------
    InputFileError
        The file cannot be read.
    SurveyError
        Listing every problem of the file with its key path.
    """
    p = Path(path)
    try:
        data = tomllib.loads(p.read_text(encoding="utf-8"))
    except OSError as exc:
        raise InputFileError(f"cannot read survey file {str(p)!r}: {exc.strerror}") from exc
    except tomllib.TOMLDecodeError as exc:
        raise SurveyError([f"not valid TOML: {exc}"], str(p)) from None
    return survey_from_dict(data, base_dir=p.parent, source=p)


def survey_from_dict(data: Mapping[str, Any], *, base_dir: str | Path = ".",
                     source: str | Path | None = None) -> Survey:
    """Build and check a :class:`Survey` from the nested mapping of a survey file.

    Raises
    ------
    SurveyError
        Listing every problem, each prefixed with its key path (also for a
        bad polygon, time zone, date order, date range longer than
        :data:`MAX_PLAN_DAYS`, impossible camera, wind file or limits that
        cannot be met, such as a lowest sun elevation above the highest).

    Examples
    --------
    >>> s = survey_from_dict({
    ...     "survey": {"name": "Test", "start_date": "2026-07-01", "end_date": "2026-07-02",
    ...                "timezone": "Europe/Lisbon"},
    ...     "site": {"lon": -8.0, "lat": 37.0},
    ...     "camera": {"image_size": [4000, 3000], "focal_length": 8.8, "sensor_width": 13.2,
    ...                "altitude": 100.0, "pitch": [-90.0], "headings": [0.0, 90.0]},
    ...     "wind": {"speed": 3.0}, "limits": {}})
    >>> s.headings, s.pitches
    ((0.0, 90.0, 180.0, 270.0), (-90.0,))
    """
    base = Path(base_dir)
    src = str(source) if source is not None else None
    problems: list[str] = []
    if not isinstance(data, Mapping):
        raise SurveyError([f"expected a table of sections, got {type(data).__name__}"], src)
    tables: dict[str, Mapping[str, Any]] = {}
    for name, table in data.items():
        if name not in SURVEY_SECTIONS:
            close = difflib.get_close_matches(str(name), list(SURVEY_SECTIONS), n=1)
            hint = f" (did you mean [{close[0]}]?)" if close else ""
            problems.append(f"{name}: unknown section{hint}; allowed sections: "
                            f"{', '.join(SURVEY_SECTIONS)}")
        elif not isinstance(table, Mapping):
            problems.append(f"{name}: expected a table, got {type(table).__name__} {table!r}")
        else:
            tables[name] = table
            _unknown_keys(name, table, problems)
    for name in _REQUIRED:
        if name not in tables and not any(p.startswith(f"{name}:") for p in problems):
            problems.append(f"{name}: required section is missing")
    if problems and any(n not in tables for n in _REQUIRED):
        raise SurveyError(problems, src)

    def reader(name: str) -> TableReader:
        return TableReader(tables.get(name, {}), name, base, None)

    # [survey]
    rs = reader("survey")
    title: Any = tables["survey"].get("name")
    if not isinstance(title, str) or not title.strip():
        rs.problem("name", f"required: a non-empty text naming the survey; got {title!r}")
    description = tables["survey"].get("description", "")
    if not isinstance(description, str):
        rs.problem("description", f"must be text; got {description!r}")
    start, end = _date(rs, "start_date"), _date(rs, "end_date")
    if start is not None and end is not None:
        if end < start:
            rs.problem("end_date", f"{end.isoformat()!r} is before start_date "
                       f"{start.isoformat()!r}; give the dates in order")
        elif (end - start).days + 1 > MAX_PLAN_DAYS:
            rs.problem("end_date", f"the range {start.isoformat()} to {end.isoformat()} is "
                       f"{(end - start).days + 1} days; at most {MAX_PLAN_DAYS} days are allowed")
    tzname = tables["survey"].get("timezone")
    try:
        check_timezone(tzname, "timezone")
    except InputError as exc:
        rs.problem(None, str(exc))
    step = rs.integer("step_minutes", default=5, low=1)
    if step is not None and step > 120:
        rs.problem("step_minutes", f"must be at most 120 minutes; got {step!r}")
        step = None
    one_way = tables["survey"].get("one_way_lines", False)
    if not isinstance(one_way, bool):
        rs.problem("one_way_lines", f"must be true or false; got {one_way!r}")
    problems += rs.problems

    # [site]
    rsite = reader("site")
    polygon = None
    lon = lat = None
    if rsite.has("polygon"):
        if rsite.has("lon") or rsite.has("lat"):
            rsite.problem("polygon", "give either polygon or lon and lat, not both")
        ppath = rsite.path("polygon")
        if ppath is not None:
            try:
                polygon, lon, lat = read_site_polygon(ppath)
            except (InputError, InputFileError) as exc:
                rsite.problem(None, str(exc).removeprefix("site."))
    else:
        lon = rsite.number("lon", low=-180.0, high=180.0, unit="deg")
        lat = rsite.number("lat", low=-89.0, high=89.0, unit="deg")
    problems += rsite.problems

    # [camera]
    cam_table = dict(tables["camera"])
    rc = TableReader({k: v for k, v in cam_table.items() if k not in ("pitch", "headings", "lattice")},
                     "camera", base, None)
    cam_kw = None
    if lon is not None and lat is not None:
        rc.table = {**rc.table, "lon": lon, "lat": lat}
        cam_kw = read_camera_table(rc, attitude_required=False)
    pitches = _pitches(cam_table, rc)
    headings = _headings(cam_table, rc, one_way if isinstance(one_way, bool) else False)
    lattice = _lattice(cam_table, rc)
    camera: dict[str, Any] | None = None
    if cam_kw is not None:
        camera = {k: v for k, v in cam_kw.items() if k not in ("lon", "lat", "heading", "pitch", "roll")}
        if pitches:
            _check_camera_sees_water(camera, pitches, lon, lat, rc)
    problems += rc.problems

    # [wind]
    rw = reader("wind")
    height = rw.number("height", default=10.0, low=0.01, unit="m") or 10.0
    slope_model = rw.choice("slope_model", ("cox-munk", "cox-munk-slick", "breon-henriot", "wu"),
                            default="cox-munk")
    wind: WindSeries | None = None
    if rw.has("file"):
        if rw.has("speed"):
            rw.problem("file", "give either file or speed, not both")
        fpath = rw.path("file")
        if fpath is not None and lon is not None and lat is not None:
            try:
                wind = read_wind_file(fpath, longitude=lon, latitude=lat, height=height)
            except (InputError, InputFileError) as exc:
                rw.problem(None, str(exc).removeprefix("wind."))
        if rw.has("direction"):
            rw.problem("direction", "comes from the wind file when file is given")
    else:
        speed = rw.number("speed", low=0.0, high=40.0, unit="m/s")
        direction = rw.number("direction", default=None, low=0.0, high=360.0, unit="deg")
        if speed is not None:
            if height != 10.0:
                from glint.physics.surface import wind_speed_at_height

                speed = float(wind_speed_at_height(speed, height, target_height=10.0))
            wind = WindSeries.steady(speed, direction)
    problems += rw.problems

    # [limits]
    rl = reader("limits")
    share = rl.number("max_glint_share", default=0.05, low=0.0, high=1.0)
    thr = rl.number("glint_threshold", default=0.02, low=0.0, low_open=True)
    elev = rl.numbers("sun_elevation", 2, default=[20.0, 60.0], what="[lowest, highest] in deg")
    max_wind = rl.number("max_wind", default=8.0, low=0.0, unit="m/s")
    if elev is not None:
        if not all(-1.0 <= e <= 90.0 for e in elev):
            rl.problem("sun_elevation", f"must lie in [-1, 90] deg; got {elev!r}")
            elev = None
        elif elev[0] >= elev[1]:
            rl.problem("sun_elevation", f"the lowest sun elevation {elev[0]!r} must be below the "
                       f"highest {elev[1]!r}: no time can meet these limits")
            elev = None
        elif elev[1] <= 0.0:
            rl.problem("sun_elevation", f"the highest sun elevation {elev[1]!r} deg is at or below "
                       "the horizon: no daylight time can meet these limits")
            elev = None
    if max_wind is not None and wind is not None and wind.constant and wind.speed[0] > max_wind:
        rl.problem("max_wind", f"the survey's wind {wind.speed[0]:g} m/s at 10 m exceeds max_wind "
                   f"{max_wind!r}: no time can meet these limits")
    problems += rl.problems

    # [water]
    water = Water()
    if "water" in tables:
        rwat = reader("water")
        kw: dict[str, Any] = {}
        for key, lo, hi, unit in (("wavelength", 200.0, 2500.0, "nm"), ("temperature", -2.0, 40.0, "degC"),
                                  ("salinity", 0.0, 45.0, "PSU"), ("refractive_index", 1.0, 2.0, "")):
            if rwat.has(key):
                kw[key] = rwat.number(key, low=lo, high=hi, unit=unit)
        problems += rwat.problems
        if not rwat.problems:
            water = Water(**kw)

    # [outputs]
    preview = None
    if "outputs" in tables:
        ro = reader("outputs")
        preview = ro.time("preview_time", default=None)
        problems += ro.problems

    if problems:
        raise SurveyError(problems, src)
    assert start is not None and end is not None and camera is not None and wind is not None
    assert lon is not None and lat is not None and step is not None and elev is not None
    assert share is not None and thr is not None and max_wind is not None and headings
    return Survey(
        name=str(title).strip(), start_date=start, end_date=end, timezone=str(tzname),
        step_minutes=int(step), longitude=float(lon), latitude=float(lat), camera=camera,
        pitches=tuple(pitches), headings=tuple(headings), wind=wind,
        limits=Limits(float(share), float(thr), (float(elev[0]), float(elev[1])), float(max_wind)),
        polygon=polygon, one_way_lines=bool(one_way), lattice=lattice, wind_height=float(height),
        slope_model=str(slope_model), water=water, preview_time=preview,
        description=str(description), source=Path(source) if source is not None else None,
    )


def _pitches(table: Mapping[str, Any], r: TableReader) -> list[float]:
    v = table.get("pitch", [-90.0])
    vals = v if isinstance(v, list) else [v]
    ok = bool(vals) and all(isinstance(e, (int, float)) and not isinstance(e, bool)
                            and math.isfinite(e) and -90.0 <= e < 0.0 for e in vals)
    if not ok:
        r.problem("pitch", f"must be a pitch or a list of gimbal pitches in [-90, 0) deg "
                  f"(-90 = straight down); got {v!r}")
        return []
    if len(set(vals)) != len(vals):
        r.problem("pitch", f"lists a pitch twice: {v!r}")
        return []
    return [float(e) for e in vals]


def _headings(table: Mapping[str, Any], r: TableReader, one_way: bool) -> list[float]:
    v = table.get("headings", "search")
    if v == "search":
        return [float(h) for h in np.arange(0.0, 360.0, SEARCH_HEADING_STEP)]
    if not isinstance(v, list) or not v or not all(
            isinstance(e, (int, float)) and not isinstance(e, bool) and math.isfinite(e)
            and 0.0 <= e < 360.0 for e in v):
        r.problem("headings", f"must be \"search\" or a list of headings in [0, 360) deg; got {v!r}")
        return []
    hs = [float(e) for e in v]
    if not one_way:
        hs += [(h + 180.0) % 360.0 for h in hs]
    out: list[float] = []
    for h in hs:
        if not any(abs(h - o) < 1e-9 for o in out):
            out.append(h)
    return sorted(out)


def _lattice(table: Mapping[str, Any], r: TableReader) -> tuple[int, int]:
    v = table.get("lattice", list(DEFAULT_LATTICE))
    if not (isinstance(v, list) and len(v) == 2 and all(
            isinstance(e, int) and not isinstance(e, bool) and 4 <= e <= 400 for e in v)):
        r.problem("lattice", f"must be [columns, rows], whole numbers from 4 to 400; got {v!r}")
        return DEFAULT_LATTICE
    return int(v[0]), int(v[1])


def _check_camera_sees_water(camera: dict[str, Any], pitches: Sequence[float], lon: Any, lat: Any,
                             r: TableReader) -> None:
    """Every pitch must keep the whole photo below the horizon."""
    try:
        cam = FrameCamera(lon=float(lon), lat=float(lat), heading=0.0, pitch=-90.0, **camera)
    except GlintError as exc:
        r.problem(None, f"this camera cannot be: {exc}")
        return
    half = cam.vertical_fov / 2.0
    if half >= 89.0 or cam.horizontal_fov >= 179.0:
        r.problem("focal_length", f"the field of view {cam.horizontal_fov:.1f} x "
                  f"{cam.vertical_fov:.1f} deg is wider than a frame camera can have")
        return
    for p in pitches:
        if p + half >= 0.0:
            r.problem("pitch", f"pitch {p!r} deg with a vertical field of view of "
                      f"{cam.vertical_fov:.1f} deg puts the top of the photo at or above the "
                      f"horizon; use pitches below {-half:.1f} deg")

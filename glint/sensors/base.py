"""Ground points, view angles, the sensor protocol, the ellipsoid helpers
shared by every sensor, and the registry of scene-file sensor kinds.

Every sensor answers one question: seen from each ground point, where is the
sensor? The answer is a view zenith (from the ellipsoid normal) and a view
azimuth (clockwise from true north, ground point -> sensor), both in degrees,
NaN where the sensor does not see the point, and optionally the time at
which each point is imaged.

The water surface is the WGS 84 ellipsoid (height 0). The geoid lies up to
about 100 m above or below it; sensor heights in glint are given *above the
water*, so that offset cancels and only changes the Earth radius used, which
is negligible.
"""

from __future__ import annotations

import difflib
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Protocol, runtime_checkable

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.geo.grid import Grid

from glint.validation import (
    WGS84_A,
    WGS84_B,
    WGS84_F,
    choice_problem,
    interval_problem,
    wrap_azimuth,
)
from glint.errors import GlintError, SceneError
from glint.times import parse_time

__all__ = [
    "GroundPoints",
    "ViewAngles",
    "Sensor",
    "SensorKind",
    "SENSOR_KINDS",
    "register_sensor_kind",
    "sensor_from_table",
    "ecef_from_lonlat",
    "lonlat_from_ecef",
    "enu_basis",
    "angles_to_position",
    "ns_time",
    "ellipsoid_point_along",
    "local_radius",
    "heading_vector",
    "GreatCircleTrack",
    "TableReader",
]

FloatArray = NDArray[np.float64]

#: First eccentricity squared of WGS 84.
_E2 = WGS84_F * (2.0 - WGS84_F)


# --------------------------------------------------------------------------
# data classes and protocol
# --------------------------------------------------------------------------
@dataclass(frozen=True)
class GroundPoints:
    """Points on the water at which view angles are wanted.

    All arrays have the same (any) shape.

    Attributes
    ----------
    x, y : numpy.ndarray
        Coordinates in the scene grid's CRS.
    lon, lat : numpy.ndarray
        WGS 84 longitude and latitude [°].
    row, col : numpy.ndarray
        Fractional pixel indices in the scene grid (pixel centres are whole
        numbers).
    convergence : numpy.ndarray
        Meridian convergence gamma of the scene grid [°]:
        ``true_azimuth = (grid_azimuth + gamma) % 360``.
    grid : glint.geo.grid.Grid or None
        The scene grid.
    terms : mapping of str to numpy.ndarray
        A sensor's own smooth per-point quantities (see
        :meth:`Sensor.ground_terms`), interpolated from a checked lattice by
        the engine; empty when the sensor computes them itself.
    """

    x: FloatArray
    y: FloatArray
    lon: FloatArray
    lat: FloatArray
    row: FloatArray
    col: FloatArray
    convergence: FloatArray
    grid: Grid | None = None
    terms: Mapping[str, FloatArray] = field(default_factory=dict)

    @classmethod
    def from_pixels(cls, grid: Grid, rows: ArrayLike, cols: ArrayLike) -> GroundPoints:
        """Ground points at (fractional) pixel indices of ``grid``.

        Examples
        --------
        >>> from glint.geo.grid import Grid
        >>> g = Grid.from_bounds((500000, 4000000, 501000, 4001000), 100, 32630)
        >>> p = GroundPoints.from_pixels(g, [0, 9], [0, 9])
        >>> p.lon.shape
        (2,)
        """
        rows, cols = np.broadcast_arrays(np.asarray(rows, float), np.asarray(cols, float))
        x, y = grid.xy(rows, cols)
        lon, lat = grid.lonlat(x, y)
        conv = grid.meridian_convergence(longitude=lon, latitude=lat)
        return cls(x=x, y=y, lon=lon, lat=lat, row=rows, col=cols, convergence=conv, grid=grid)

    @classmethod
    def from_lonlat(cls, longitude: ArrayLike, latitude: ArrayLike,
                    grid: Grid | None = None) -> GroundPoints:
        """Ground points at longitudes/latitudes [°]; grid terms from ``grid``
        if given, else ``x = longitude``, ``y = latitude``, NaN row/col, zero
        convergence.

        Examples
        --------
        >>> GroundPoints.from_lonlat(longitude=3.0, latitude=55.0).lat
        array(55.)
        """
        lon, lat = np.broadcast_arrays(np.asarray(longitude, float), np.asarray(latitude, float))
        if grid is None:
            nan = np.full(lon.shape, np.nan)
            return cls(x=lon, y=lat, lon=lon, lat=lat, row=nan, col=nan,
                       convergence=np.zeros(lon.shape), grid=None)
        from pyproj import Transformer

        tr = Transformer.from_crs("EPSG:4326", grid.crs, always_xy=True)
        x, y = (np.asarray(v, float) for v in tr.transform(lon, lat))
        row, col = grid.index(x, y)
        conv = grid.meridian_convergence(longitude=lon, latitude=lat)
        return cls(x=x, y=y, lon=lon, lat=lat, row=row, col=col, convergence=conv, grid=grid)

    @property
    def shape(self) -> tuple[int, ...]:
        """Shape of the point arrays."""
        return np.shape(self.lon)


@dataclass(frozen=True)
class ViewAngles:
    """Where the sensor is, seen from each ground point.

    Attributes
    ----------
    view_zenith : numpy.ndarray
        Zenith angle of the direction ground point -> sensor [°], from the
        ellipsoid normal; NaN where the sensor does not see the point.
    view_azimuth : numpy.ndarray
        Azimuth of that direction [°], clockwise from true north, in [0, 360).
    time : numpy.ndarray of datetime64[ns] or None
        Time at which each point is imaged; ``None`` means the scene time.
    extras : dict
        Optional further per-point arrays or counts, for example
        ``"slant_range"`` [m], ``"image_col"``/``"image_row"`` [px],
        ``"scan_angle"`` [°] and ``"unseen"`` (number of points not seen).
    """

    view_zenith: FloatArray
    view_azimuth: FloatArray
    time: NDArray[np.datetime64] | None = None
    extras: dict[str, NDArray[Any] | int] = field(default_factory=dict)


@runtime_checkable
class Sensor(Protocol):
    """What the scene and :mod:`glint.engine.compute` need from a sensor.

    ``smooth`` is True when the angles vary slowly enough over the scene to be
    interpolated from tie-point nodes; False when they must be evaluated at
    every pixel (sharp image or swath edges, per-pixel rasters).

    ``time_key`` and ``fixed_time``: a sensor whose imaging time is fixed in
    its own scene-file table (a push-broom's ``centre_time``, a line
    scanner's ``start_time``) names that key and gives the time; every other
    sensor has ``None`` for both and follows the scene time. The scene
    checks that a fixed time agrees with every scene time.

    Two optional methods let :mod:`glint.engine.compute` keep sensors near
    the grid fast without interpolating what is not smooth:

    * ``ground_terms(longitude, latitude) -> {name: array}``: smooth
      per-point quantities that are costly to compute (a frame camera's
      map-plane coordinates). The engine computes them exactly on a lattice
      of ground positions, checks the view directions they give, and hands
      them back interpolated in :attr:`GroundPoints.terms`.
    * ``imaging_times(points, time) -> datetime64 array``: when each point
      is imaged, also where it is not seen (a smooth field: the sun at those
      times is interpolated from a lattice).
    """

    @property
    def smooth(self) -> bool: ...

    @property
    def time_key(self) -> str | None: ...

    @property
    def fixed_time(self) -> np.datetime64 | None: ...

    def view_angles(self, points: GroundPoints, time: np.datetime64 | None) -> ViewAngles:
        """View angles (and imaging times) at ``points``; ``time`` is the scene time."""
        ...


def ns_time(value: Any) -> np.datetime64:
    """``value`` (a datetime64 or anything numpy reads as one) as a
    datetime64[ns] scalar.

    Examples
    --------
    >>> ns_time(np.datetime64("2026-06-14T10:00:00"))
    np.datetime64('2026-06-14T10:00:00.000000000')
    """
    return np.datetime64(np.asarray(value, dtype="datetime64[ns]").item(), "ns")


# --------------------------------------------------------------------------
# the ellipsoid helpers (one implementation for every sensor)
# --------------------------------------------------------------------------
def ecef_from_lonlat(lon: Any, lat: Any, height: Any = 0.0) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Earth-centred, Earth-fixed coordinates of points on or above WGS 84.

    Parameters
    ----------
    lon, lat : array_like
        Geodetic longitude and latitude [°].
    height : array_like, optional
        Height above the ellipsoid [m].

    Returns
    -------
    x, y, z : numpy.ndarray
        ECEF coordinates [m].

    Notes
    -----
    ``N = a / sqrt(1 - e² sin² φ)``; ``x = (N + h) cos φ cos λ``,
    ``y = (N + h) cos φ sin λ``, ``z = (N (1 - e²) + h) sin φ``.

    References
    ----------
    National Imagery and Mapping Agency (2000) Department of Defense World
    Geodetic System 1984. NIMA TR8350.2, 3rd edition, section 4.

    Examples
    --------
    >>> x, y, z = ecef_from_lonlat(0.0, 0.0, 0.0)
    >>> float(x)
    6378137.0
    """
    lam, phi = np.radians(lon), np.radians(lat)
    h = np.asarray(height, dtype=float)
    sphi, cphi = np.sin(phi), np.cos(phi)
    n = WGS84_A / np.sqrt(1.0 - _E2 * sphi * sphi)
    return ((n + h) * cphi * np.cos(lam), (n + h) * cphi * np.sin(lam), (n * (1.0 - _E2) + h) * sphi)


def lonlat_from_ecef(x: Any, y: Any, z: Any) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Geodetic longitude, latitude [°] and height [m] of ECEF points.

    Notes
    -----
    Fixed-point iteration on the latitude,
    ``tan φ = z / (p (1 - e² N / (N + h)))``, started from Bowring's
    parametric-latitude estimate; five rounds reach 1e-9 m for heights up to
    several thousand kilometres. The height is
    ``h = p cos φ + z sin φ - a sqrt(1 - e² sin² φ)``, valid at the poles.

    References
    ----------
    Bowring, B.R. (1976) Transformation from spatial to geographical
    coordinates. Survey Review 23(181), 323-327,
    doi:10.1179/sre.1976.23.181.323.

    Examples
    --------
    >>> lon, lat, h = lonlat_from_ecef(*ecef_from_lonlat(10.0, 45.0, 700e3))
    >>> round(float(lon), 9), round(float(lat), 9), round(float(h), 4)
    (10.0, 45.0, 700000.0)
    """
    x, y, z = (np.asarray(v, dtype=float) for v in (x, y, z))
    p = np.hypot(x, y)
    ep2 = _E2 / (1.0 - _E2)
    beta = np.arctan2(z * WGS84_A, p * WGS84_B)
    phi = np.arctan2(z + ep2 * WGS84_B * np.sin(beta) ** 3, p - _E2 * WGS84_A * np.cos(beta) ** 3)
    for _ in range(5):
        s = np.sin(phi)
        n = WGS84_A / np.sqrt(1.0 - _E2 * s * s)
        h = p * np.cos(phi) + z * s - WGS84_A * np.sqrt(1.0 - _E2 * s * s)
        phi = np.arctan2(z, p * (1.0 - _E2 * n / (n + h)))
    s = np.sin(phi)
    h = p * np.cos(phi) + z * s - WGS84_A * np.sqrt(1.0 - _E2 * s * s)
    return np.degrees(np.arctan2(y, x)), np.degrees(phi), h


def enu_basis(lon: Any, lat: Any) -> tuple[tuple[np.ndarray, ...], ...]:
    """Unit vectors east, north and up (ellipsoid normal) in ECEF.

    Returns
    -------
    east, north, up : tuple of three numpy.ndarray
        Each a tuple ``(x, y, z)`` of components.

    Examples
    --------
    >>> e, n, u = enu_basis(0.0, 0.0)
    >>> [float(c) for c in u]
    [1.0, 0.0, 0.0]
    """
    lam, phi = np.radians(lon), np.radians(lat)
    sl, cl, sp, cp = np.sin(lam), np.cos(lam), np.sin(phi), np.cos(phi)
    east = (-sl, cl, np.zeros(np.shape(sl)))
    north = (-sp * cl, -sp * sl, cp)
    up = (cp * cl, cp * sl, sp)
    return east, north, up


def _dot(a: Sequence[ArrayLike] | FloatArray, b: Sequence[ArrayLike] | FloatArray) -> FloatArray:
    (a0, a1, a2), (b0, b1, b2) = (np.asarray(v, float) for v in a), (np.asarray(v, float) for v in b)
    return np.asarray(a0 * b0 + a1 * b1 + a2 * b2, dtype=float)


def angles_to_position(
    lon: Any, lat: Any, height: Any, x: Any, y: Any, z: Any
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """View zenith and azimuth of a sensor at an ECEF position, seen from
    ground points.

    This is the one conversion from "where the sensor is" to view angles used
    by every glint sensor.

    Parameters
    ----------
    lon, lat : array_like
        Geodetic longitude and latitude of the ground points [°].
    height : array_like
        Height of the ground points above the ellipsoid [m] (0 for water).
    x, y, z : array_like
        ECEF position of the sensor [m]; broadcast against the points.

    Returns
    -------
    view_zenith : numpy.ndarray
        Angle between the ellipsoid normal at the point and the direction to
        the sensor [°], in [0, 180].
    view_azimuth : numpy.ndarray
        Azimuth of that direction [°], clockwise from true north, in [0, 360).
    distance : numpy.ndarray
        Straight-line distance from point to sensor [m].

    Notes
    -----
    With ``d`` the ECEF vector from point to sensor and ``e, n, u`` the local
    east-north-up basis: ``view_zenith = arccos(d·u / |d|)``,
    ``view_azimuth = atan2(d·e, d·n)``. Earth curvature is thereby included
    exactly; atmospheric refraction is not. The azimuth is that of the normal
    section through the sensor, which differs from the geodesic azimuth of
    :meth:`pyproj.Geod.inv` by well under 0.001° at the ranges of glint
    sensors.

    Examples
    --------
    >>> x, y, z = ecef_from_lonlat(0.0, 0.0, 1000.0)
    >>> vz, va, d = angles_to_position(0.0, 0.0, 0.0, x, y, z)
    >>> float(vz), round(float(d), 6)
    (0.0, 1000.0)
    """
    px, py, pz = ecef_from_lonlat(lon, lat, height)
    d = (np.asarray(x, float) - px, np.asarray(y, float) - py, np.asarray(z, float) - pz)
    east, north, up = enu_basis(lon, lat)
    de, dn, du = _dot(d, east), _dot(d, north), _dot(d, up)
    dist = np.sqrt(de * de + dn * dn + du * du)
    with np.errstate(invalid="ignore", divide="ignore"):
        vz = np.degrees(np.arccos(np.clip(du / dist, -1.0, 1.0)))
    va = wrap_azimuth(np.degrees(np.arctan2(de, dn)))
    return vz, va, dist


def ellipsoid_point_along(ux: Any, uy: Any, uz: Any) -> tuple[np.ndarray, np.ndarray]:
    """Geodetic longitude and latitude [°] of the ellipsoid surface point in
    the geocentric direction ``(ux, uy, uz)``."""
    ux, uy, uz = (np.asarray(v, float) for v in (ux, uy, uz))
    p = np.hypot(ux, uy)
    # tan(geodetic) = tan(geocentric) / (1 - e²) on the surface.
    lat = np.degrees(np.arctan2(uz, p * (1.0 - _E2)))
    return np.degrees(np.arctan2(uy, ux)), lat


def local_radius(lat: float, azimuth: float) -> float:
    """Radius of curvature of WGS 84 [m] at ``lat`` in direction ``azimuth``
    (Euler: ``1/R = cos² α / M + sin² α / N``)."""
    s = np.sin(np.radians(lat)) ** 2
    n = WGS84_A / np.sqrt(1.0 - _E2 * s)
    m = WGS84_A * (1.0 - _E2) / (1.0 - _E2 * s) ** 1.5
    a = np.radians(azimuth)
    return float(1.0 / (np.cos(a) ** 2 / m + np.sin(a) ** 2 / n))


def heading_vector(lon: float, lat: float, heading: float) -> tuple[np.ndarray, ...]:
    """ECEF unit vector of a horizontal direction ``heading`` [° true]."""
    east, north, _ = enu_basis(lon, lat)
    h = np.radians(heading)
    return tuple(np.sin(h) * e + np.cos(h) * n for e, n in zip(east, north))


class GreatCircleTrack:
    """A ground track: the great circle (on geocentric directions) through a
    reference point with a given heading.

    Parameters
    ----------
    lon, lat : float
        Reference point on the track [°] (along-track distance 0).
    heading : float
        Direction of motion at the reference point [° true].
    radius : float, optional
        Radius [m] converting track angles to along-track distances. Default:
        calibrated on the ellipsoid, as the geodesic distance to the point
        10 km along the heading (:meth:`pyproj.Geod.fwd`) divided by its
        track angle, so that along-track distances near the reference point
        are geodesic distances (to about 1e-6).

    Notes
    -----
    Let ``c`` be the unit geocentric vector of the reference point, ``t`` the
    unit heading vector there and ``n = c × t`` the normal of the track
    plane (pointing to the left of the motion). A point with unit geocentric
    vector ``p`` has cross-track angle ``asin(p·n)`` (positive to the left)
    and along-track angle ``a = atan2(p·t, p·c)``; its foot on the track is
    ``cos a c + sin a t``, the point of the track whose plane perpendicular to
    the motion contains ``p`` (zero-Doppler for a push-broom sensor).
    """

    def __init__(self, lon: float, lat: float, heading: float, radius: float | None = None) -> None:
        cx, cy, cz = ecef_from_lonlat(lon, lat, 0.0)
        r = float(np.sqrt(cx * cx + cy * cy + cz * cz))
        self.c = np.array([cx, cy, cz], float) / r
        t = np.array(heading_vector(lon, lat, heading), float)
        t -= self.c * float(t @ self.c)
        self.t = t / np.linalg.norm(t)
        self.n = np.cross(self.c, self.t)
        if radius is None:
            from pyproj import Geod

            lon1, lat1, _ = Geod(ellps="WGS84").fwd(lon, lat, heading, 10e3)
            radius = 10e3 / float(self.project(lon1, lat1)[0])
        self.radius = float(radius)

    def shifted_left(self, angle: float) -> GreatCircleTrack:
        """The parallel great circle rotated by ``angle`` [rad] about the
        heading axis, towards the left of the motion."""
        new = object.__new__(GreatCircleTrack)
        new.c = np.cos(angle) * self.c + np.sin(angle) * self.n
        new.t = self.t.copy()
        new.n = np.cross(new.c, new.t)
        new.radius = self.radius
        return new

    def project(self, lon: Any, lat: Any) -> tuple[np.ndarray, np.ndarray]:
        """Along-track and cross-track angles [rad] of ground points."""
        px, py, pz = ecef_from_lonlat(lon, lat, 0.0)
        r = np.sqrt(px * px + py * py + pz * pz)
        p = (px / r, py / r, pz / r)
        along = np.arctan2(_dot(p, self.t), _dot(p, self.c))
        across = np.arcsin(np.clip(_dot(p, self.n), -1.0, 1.0))
        return along, across

    def position(self, along: Any, height: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """ECEF position at ``height`` [m] above the ellipsoid point of the
        track at along-track angle ``along`` [rad]."""
        a = np.asarray(along, float)
        u = [np.cos(a) * self.c[i] + np.sin(a) * self.t[i] for i in range(3)]
        lon, lat = ellipsoid_point_along(*u)
        return ecef_from_lonlat(lon, lat, height)


# --------------------------------------------------------------------------
# scene-file tables
# --------------------------------------------------------------------------
_MISSING = object()


class TableReader:
    """Reads one ``[sensor]`` table, collecting every problem with its key path.

    Builders call the typed getters; each returns ``None`` after recording a
    problem, so all problems of a table are found in one pass.
    """

    def __init__(self, table: Mapping[str, Any], key: str, base_dir: Path, grid: Any) -> None:
        self.table = table
        self.key = key
        self.base_dir = Path(base_dir)
        self.grid = grid
        self.problems: list[str] = []

    def problem(self, name: str | None, message: str) -> None:
        """Record a problem for key ``name`` (None: the table itself)."""
        self.problems.append(f"{self.key}.{name}: {message}" if name else f"{self.key}: {message}")

    def has(self, name: str) -> bool:
        return name in self.table

    def number(
        self,
        name: str,
        *,
        default: Any = _MISSING,
        low: float | None = None,
        high: float | None = None,
        low_open: bool = False,
        high_open: bool = False,
        unit: str = "",
    ) -> float | None:
        """A finite number within an interval (missing -> ``default`` or a problem)."""
        if name not in self.table:
            if default is _MISSING:
                self.problem(name, "required key is missing" + (f" (a number in {unit})" if unit else ""))
            return None if default is _MISSING else default
        v = self.table[name]
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not np.isfinite(v):
            self.problem(name, f"must be a finite number{' in ' + unit if unit else ''}; got {v!r}")
            return None
        v = float(v)
        msg = interval_problem(v, low, high, low_open=low_open, high_open=high_open, unit=unit,
                               sep=", got")
        if msg is not None:
            self.problem(name, msg)
            return None
        return v

    def numbers(self, name: str, count: int, *, default: Any = _MISSING, what: str = "") -> list[float] | None:
        """A list of exactly ``count`` finite numbers."""
        if name not in self.table:
            if default is _MISSING:
                self.problem(name, f"required key is missing ({what or f'{count} numbers'})")
            return None if default is _MISSING else default
        v = self.table[name]
        ok = isinstance(v, (list, tuple)) and len(v) == count and all(
            isinstance(e, (int, float)) and not isinstance(e, bool) and np.isfinite(e) for e in v)
        if not ok:
            self.problem(name, f"must be a list of {count} numbers ({what}); got {v!r}")
            return None
        return [float(e) for e in v]

    def choice(self, name: str, choices: Sequence[str], *, default: Any = _MISSING) -> str | None:
        """One of a fixed set of strings."""
        if name not in self.table:
            if default is _MISSING:
                self.problem(name, f"required key is missing; allowed values: {', '.join(map(repr, choices))}")
            return None if default is _MISSING else default
        v = self.table[name]
        msg = choice_problem(v, choices)
        if msg is not None:
            self.problem(name, msg)
            return None
        return str(v)

    def integer(self, name: str, *, default: Any = _MISSING, low: int = 1) -> int | None:
        """A whole number >= ``low``."""
        if name not in self.table:
            if default is _MISSING:
                self.problem(name, "required key is missing (a whole number)")
            return None if default is _MISSING else default
        v = self.table[name]
        if isinstance(v, bool) or not isinstance(v, int) or v < low:
            self.problem(name, f"must be a whole number >= {low}; got {v!r}")
            return None
        return v

    def path(self, name: str, *, default: Any = _MISSING) -> Path | None:
        """A file path, relative to the scene file's directory; must exist."""
        if name not in self.table:
            if default is _MISSING:
                self.problem(name, "required key is missing (a file path)")
            return None if default is _MISSING else default
        v = self.table[name]
        if not isinstance(v, str) or not v.strip():
            self.problem(name, f"must be a file path (text); got {v!r}")
            return None
        p = Path(v).expanduser()
        p = p if p.is_absolute() else self.base_dir / p
        if not p.is_file():
            self.problem(name, f"file not found: {str(p)!r}")
            return None
        return p

    def time(self, name: str, *, default: Any = _MISSING) -> np.datetime64 | None:
        """A time: a TOML datetime with offset or an RFC 3339 text with offset."""
        if name not in self.table:
            if default is _MISSING:
                self.problem(name, "required key is missing (a time with Z or an offset)")
            return None if default is _MISSING else default
        try:
            return parse_time(self.table[name], key=None)
        except (GlintError, ValueError) as exc:
            self.problem(name, str(exc))
            return None

    def grid_centre(self, name: str) -> tuple[float, float] | None:
        """Longitude and latitude [°] of the scene grid's centre."""
        if self.grid is None:
            self.problem(name, "has no default without a valid [grid]; give it explicitly")
            return None
        rows, cols = self.grid.shape
        x, y = self.grid.xy((rows - 1) / 2.0, (cols - 1) / 2.0)
        lon, lat = self.grid.lonlat(x, y)
        return float(lon), float(lat)


@dataclass(frozen=True)
class SensorKind:
    """A scene-file sensor kind: its name, keys and builder."""

    kind: str
    keys: tuple[str, ...]
    summary: str
    builder: Callable[[TableReader], Any]


#: Every sensor kind a scene file may name, by its ``kind`` string.
SENSOR_KINDS: dict[str, SensorKind] = {}


def register_sensor_kind(kind: str, *, keys: Sequence[str], summary: str) -> Callable:
    """Decorator registering ``builder(reader) -> Sensor | None`` for ``kind``.

    The builder reads its keys through the :class:`TableReader` and returns
    ``None`` when it recorded problems.
    """

    def deco(builder: Callable[[TableReader], Any]) -> Callable[[TableReader], Any]:
        SENSOR_KINDS[kind] = SensorKind(kind, ("kind", *keys), summary, builder)
        return builder

    return deco


def sensor_from_table(table: Mapping[str, Any], *, key: str = "sensor", base_dir: Path | str = ".",
                      grid: Any = None) -> Sensor:
    """Build a sensor from its scene-file table.

    Parameters
    ----------
    table : mapping
        The ``[sensor]`` table: ``kind`` plus the keys of that kind.
    key : str, optional
        Key path of the table, prefixed to every problem.
    base_dir : path, optional
        Directory that relative file paths are resolved against.
    grid : glint.geo.grid.Grid or None
        The scene grid (needed by raster sensors and for defaults at the grid
        centre).

    Returns
    -------
    Sensor

    Raises
    ------
    SceneError
        Listing every problem, each prefixed with its key path, e.g.
        ``sensor.altitude: must be > 0 m, got -5.0``; unknown keys and kinds
        list the allowed ones.

    Examples
    --------
    >>> s = sensor_from_table({"kind": "fixed-direction", "view_zenith": 10.0,
    ...                        "view_azimuth": 90.0})
    >>> s.smooth
    True
    """
    if not isinstance(table, Mapping):
        raise SceneError([f"{key}: expected a table, got {type(table).__name__}"])
    kind = table.get("kind")
    if kind not in SENSOR_KINDS:
        msg = "required key is missing" if kind is None else f"unknown sensor kind {kind!r}"
        raise SceneError([f"{key}.kind: {msg}; allowed kinds: {', '.join(SENSOR_KINDS)}"])
    spec = SENSOR_KINDS[kind]
    reader = TableReader(table, key, Path(base_dir), grid)
    for name in table:
        if name not in spec.keys:
            close = difflib.get_close_matches(str(name), spec.keys, n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            reader.problem(str(name), f"unknown key for kind {kind!r}{hint}; allowed keys: "
                           f"{', '.join(spec.keys)}")
    sensor = None
    try:
        sensor = spec.builder(reader)
    except GlintError as exc:
        reader.problem(None, str(exc))
    if reader.problems or sensor is None:
        raise SceneError(reader.problems or [f"{key}: cannot build a {kind!r} sensor"])
    return sensor

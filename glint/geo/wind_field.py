"""Gridded wind components (NetCDF), interpolated in space and time.

Reanalysis and forecast grids ship the wind as its eastward and northward
components (CF standard names ``eastward_wind`` and ``northward_wind``,
usually at 10 m) on a time axis and either longitude/latitude axes or the
projected ``x``/``y`` axes of a grid mapping. :func:`open_wind_field` finds
the components by those standard names (or by the variable names the user
gives), and :meth:`WindField.components` interpolates them bilinearly in
space and linearly in time to any points.

The components are those of the true east and north directions (as the CF
standard names define them), also on projected grids. The direction the
wind blows *from* is ``atan2(-u, -v)`` clockwise from true north
(:func:`wind_from_components`).
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray
from pyproj import CRS, Transformer

from glint.errors import InputError, InputFileError
from glint.times import format_time, to_utc_datetime64

__all__ = ["WindField", "open_wind_field", "wind_from_components", "DEFAULT_WIND_HEIGHT",
           "EASTWARD", "NORTHWARD"]

#: CF standard names of the components.
EASTWARD = "eastward_wind"
NORTHWARD = "northward_wind"
#: Height [m] assumed when the file gives none (the usual 10 m wind of
#: reanalysis and forecast products; common practice).
DEFAULT_WIND_HEIGHT = 10.0

_LON_NAMES = ("longitude", "lon", "long", "nav_lon")
_LAT_NAMES = ("latitude", "lat", "nav_lat")


def wind_from_components(u: ArrayLike, v: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Wind speed and the direction the wind blows from, from its components.

    Parameters
    ----------
    u, v : array_like
        Eastward and northward components [m s⁻¹] (the direction the air
        moves *to*).

    Returns
    -------
    speed : numpy.ndarray
        ``hypot(u, v)`` [m s⁻¹].
    from_direction : numpy.ndarray
        ``atan2(-u, -v)`` in degrees clockwise from true north, in [0, 360)
        (meteorological convention); 0 for calm air.

    Examples
    --------
    A wind blowing towards the east comes from the west:

    >>> s, d = wind_from_components(5.0, 0.0)
    >>> float(s), float(d)
    (5.0, 270.0)
    """
    uu = np.asarray(u, dtype=float)
    vv = np.asarray(v, dtype=float)
    speed = np.hypot(uu, vv)
    direction = np.degrees(np.arctan2(-uu, -vv)) % 360.0
    return speed, np.where(direction >= 360.0, 0.0, direction)


@dataclass(frozen=True)
class WindField:
    """Wind components on a regular grid with a time axis.

    Attributes
    ----------
    times : numpy.ndarray
        datetime64[ns] (UTC), increasing.
    x, y : numpy.ndarray
        Increasing axes of the grid (longitude/latitude [°] or projected
        coordinates).
    u, v : numpy.ndarray
        Components ``(time, y, x)`` [m s⁻¹], increasing axes.
    crs : pyproj.CRS
        CRS of ``x``/``y`` (WGS 84 longitude/latitude for lon/lat grids).
    height : float
        Height of the wind above the water [m].
    source : str
        The file and variables (for messages).
    """

    times: NDArray[np.datetime64]
    x: NDArray[np.float64]
    y: NDArray[np.float64]
    u: NDArray[np.float64]
    v: NDArray[np.float64]
    crs: CRS
    height: float
    source: str

    def components(self, time: Any, *, longitude: ArrayLike,
                   latitude: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Eastward and northward wind [m s⁻¹] at points and one time.

        Bilinear in space, linear in time between the two time steps around
        ``time``.

        Raises
        ------
        InputError
            If ``time`` lies outside the file's time range or a point lies
            outside its grid.
        """
        t = np.asarray(to_utc_datetime64(time)).reshape(-1)[0].astype("datetime64[ns]")
        lon = np.asarray(longitude, dtype=float)
        lat = np.asarray(latitude, dtype=float)
        t0, t1 = self.times[0], self.times[-1]
        if not t0 <= t <= t1:
            raise InputError(f"time {format_time(t)!r} lies outside the wind file's time range; "
                             f"allowed: {format_time(t0)} to {format_time(t1)} ({self.source})")
        if len(self.times) == 1:
            i, w = 0, 0.0
        else:
            i = int(np.clip(np.searchsorted(self.times, t, side="right") - 1, 0, len(self.times) - 2))
            span = (self.times[i + 1] - self.times[i]).astype("timedelta64[ns]").astype(float)
            w = float((t - self.times[i]).astype("timedelta64[ns]").astype(float) / span)
        if self.crs.is_geographic:
            x = _wrap_lon(lon, self.x)
            y = lat
        else:
            tr = Transformer.from_crs(CRS.from_epsg(4326), self.crs, always_xy=True)
            x, y = (np.asarray(a, dtype=float) for a in tr.transform(lon, lat))
        finite = np.isfinite(x) & np.isfinite(y)
        outside = finite & ((x < self.x[0]) | (x > self.x[-1]) | (y < self.y[0]) | (y > self.y[-1]))
        if np.any(outside):
            k = int(np.flatnonzero(outside.reshape(-1))[0])
            raise InputError(
                f"point longitude={float(lon.reshape(-1)[k])!r}, latitude="
                f"{float(lat.reshape(-1)[k])!r} lies outside the wind grid (x {self.x[0]:g} to "
                f"{self.x[-1]:g}, y {self.y[0]:g} to {self.y[-1]:g}) of {self.source}; "
                "allowed: points inside the wind grid")
        u = _bilinear(self.u, i, w, self.x, self.y, x, y)
        v = _bilinear(self.v, i, w, self.x, self.y, x, y)
        return u, v


def _wrap_lon(lon: NDArray[np.float64], axis: NDArray[np.float64]) -> NDArray[np.float64]:
    """Longitudes shifted by whole turns into the axis' range when possible."""
    out = lon.copy()
    lo = axis[0]
    shifted = lo + np.mod(lon - lo, 360.0)
    inside = shifted <= axis[-1]
    out[inside] = shifted[inside]
    return out


def _bilinear(field: NDArray[np.float64], i: int, w: float, xa: NDArray[np.float64],
              ya: NDArray[np.float64], x: NDArray[np.float64],
              y: NDArray[np.float64]) -> NDArray[np.float64]:
    def weights(axis: NDArray[np.float64], q: NDArray[np.float64]) -> tuple[NDArray[np.intp], NDArray[np.float64]]:
        if axis.size == 1:
            return np.zeros(q.shape, dtype=np.intp), np.zeros(q.shape)
        j = np.clip(np.searchsorted(axis, q, side="right") - 1, 0, axis.size - 2)
        f = (q - axis[j]) / (axis[j + 1] - axis[j])
        return j, f

    jx, fx = weights(xa, np.nan_to_num(x))
    jy, fy = weights(ya, np.nan_to_num(y))
    jx1 = np.minimum(jx + 1, xa.size - 1)
    jy1 = np.minimum(jy + 1, ya.size - 1)
    out = np.zeros(np.shape(x))
    for k, wt in ((i, 1.0 - w), (min(i + 1, field.shape[0] - 1), w)):
        if wt == 0.0:
            continue
        f = field[k]
        out += wt * ((1 - fy) * ((1 - fx) * f[jy, jx] + fx * f[jy, jx1])
                     + fy * ((1 - fx) * f[jy1, jx] + fx * f[jy1, jx1]))
    out[~(np.isfinite(x) & np.isfinite(y))] = np.nan
    return out


def _find(ds: Any, standard_name: str, names: Sequence[str] = ()) -> str | None:
    for name, var in ds.variables.items():
        if var.attrs.get("standard_name") == standard_name:
            return str(name)
    for name in names:
        if name in ds.variables:
            return name
    return None


def open_wind_field(path: str | os.PathLike[str], *, eastward: str | None = None,
                    northward: str | None = None, height: float | None = None) -> WindField:
    """Read the wind components of a NetCDF file.

    Parameters
    ----------
    path : path-like
        NetCDF file with a time axis and longitude/latitude or projected
        (``projection_x_coordinate``/``projection_y_coordinate`` with a
        ``grid_mapping``) axes.
    eastward, northward : str, optional
        Variable names of the components; default the variables whose
        ``standard_name`` is ``eastward_wind`` / ``northward_wind``.
    height : float, optional
        Height of the wind [m]; default a scalar ``height`` coordinate of the
        file, else :data:`DEFAULT_WIND_HEIGHT`.

    Returns
    -------
    WindField

    Raises
    ------
    InputFileError
        The file is missing or not NetCDF.
    InputError
        The components, their time axis or horizontal axes cannot be found.
    """
    import xarray as xr

    p = Path(path).expanduser()
    if not p.is_file():
        raise InputFileError(f"wind file {str(p)!r} does not exist or is not a file")
    try:
        ds = xr.open_dataset(p, decode_times=True)
    except (OSError, ValueError) as exc:
        raise InputFileError(f"cannot read wind file {str(p)!r} as NetCDF: {exc}") from None
    with ds:
        names = {}
        for role, given, std in (("eastward", eastward, EASTWARD), ("northward", northward, NORTHWARD)):
            if given is not None:
                if given not in ds.data_vars:
                    raise InputError(f"wind file {str(p)!r} has no variable {given!r}; variables: "
                                     f"{', '.join(map(str, ds.data_vars))}")
                names[role] = given
            else:
                found = _find(ds, std)
                if found is None:
                    raise InputError(
                        f"wind file {str(p)!r} has no variable with standard_name {std!r}; "
                        f"variables: {', '.join(map(str, ds.data_vars))}; name the components "
                        "(--wind-u NAME --wind-v NAME, eastward=/northward= from Python)")
                names[role] = found
        source = f"{str(p)!r} ({names['eastward']}, {names['northward']})"
        u = ds[names["eastward"]]
        v = ds[names["northward"]]
        if u.dims != v.dims:
            raise InputError(f"wind components of {source} have different dimensions "
                             f"{u.dims!r} and {v.dims!r}")
        tdim = next((str(d) for d in u.dims if np.issubdtype(ds[d].dtype, np.datetime64)), None) \
            if all(d in ds.variables for d in u.dims) else None
        if tdim is None:
            raise InputError(f"wind components of {source} have no time axis (dimensions "
                             f"{u.dims!r}); allowed: (time, y, x) with CF-decodable times")
        xdim, ydim, crs = _horizontal(ds, u, tdim, source)
        extra = [d for d in u.dims if d not in (tdim, xdim, ydim)]
        if any(u.sizes[d] != 1 for d in extra):
            raise InputError(f"wind components of {source} have extra dimensions {extra!r}; "
                             "allowed: time and two horizontal axes (a height axis of length 1)")
        u3 = u.squeeze(extra).transpose(tdim, ydim, xdim)
        v3 = v.squeeze(extra).transpose(tdim, ydim, xdim)
        times = np.asarray(ds[tdim].values).astype("datetime64[ns]")
        xs = np.asarray(ds[xdim].values, dtype=float)
        ys = np.asarray(ds[ydim].values, dtype=float)
        ua = np.asarray(u3.values, dtype=float)
        va = np.asarray(v3.values, dtype=float)
        if height is None:
            height = _height(ds, u, source)
    order_t = np.argsort(times)
    order_x = np.argsort(xs)
    order_y = np.argsort(ys)
    ua = ua[order_t][:, order_y][:, :, order_x]
    va = va[order_t][:, order_y][:, :, order_x]
    return WindField(times[order_t], xs[order_x], ys[order_y], ua, va, crs, float(height), source)


def _horizontal(ds: Any, var: Any, tdim: str, source: str) -> tuple[str, str, CRS]:
    def std(d: str) -> str:
        return str(ds[d].attrs.get("standard_name", "")) if d in ds.variables else ""

    lon = next((d for d in var.dims if std(d) == "longitude" or d.lower() in _LON_NAMES), None)
    lat = next((d for d in var.dims if std(d) == "latitude" or d.lower() in _LAT_NAMES), None)
    if lon and lat:
        return lon, lat, CRS.from_epsg(4326)
    px = next((d for d in var.dims if std(d) == "projection_x_coordinate" or d == "x"), None)
    py = next((d for d in var.dims if std(d) == "projection_y_coordinate" or d == "y"), None)
    if px and py:
        gm = var.attrs.get("grid_mapping") or var.encoding.get("grid_mapping")
        if not gm or gm not in ds.variables:
            raise InputError(f"wind components of {source} lie on projected axes ({px}, {py}) "
                             "without a grid_mapping variable; allowed: a CF grid mapping "
                             "(with crs_wkt) or longitude/latitude axes")
        try:
            crs = CRS.from_cf(dict(ds[gm].attrs))
        except Exception as exc:  # pyproj raises several types for bad CF attributes
            raise InputError(f"cannot read the grid mapping {gm!r} of {source}: {exc}") from None
        return px, py, crs
    raise InputError(f"wind components of {source} have no recognisable horizontal axes "
                     f"(dimensions {var.dims!r}, time {tdim!r}); allowed: longitude/"
                     "latitude or projection_x_coordinate/projection_y_coordinate axes")


def _height(ds: Any, var: Any, source: str) -> float:
    for name in list(var.coords) + list(var.dims):
        if name in ds.variables and (ds[name].attrs.get("standard_name") == "height"
                                     or name == "height"):
            vals = np.asarray(ds[name].values, dtype=float).reshape(-1)
            if vals.size == 1 and np.isfinite(vals[0]) and vals[0] > 0:
                return float(vals[0])
    return DEFAULT_WIND_HEIGHT

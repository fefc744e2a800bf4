"""Wind at a survey site: one constant wind, or a forecast series read from
a CSV or CF-NetCDF file and interpolated in time.

Wind components are turned into speed and the direction the wind blows
from by :func:`glint.geo.wind_field.wind_from_components`, the one place
of that convention.
"""

from __future__ import annotations

import csv
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import NDArray

from glint.errors import GlintError, InputError, InputFileError
from glint.geo.wind_field import wind_from_components
from glint.times import format_time, parse_time, to_utc_datetime64

__all__ = ["WindSeries", "read_wind_file"]


@dataclass(frozen=True)
class WindSeries:
    """Wind at the site against time (a forecast), or one constant wind.

    Attributes
    ----------
    times : ndarray of datetime64[ns]
        UTC instants, increasing (one element for a constant wind, with
        ``constant`` true).
    speed : ndarray
        Wind speed at 10 m [m s⁻¹].
    direction : ndarray
        Direction the wind blows from [°]; NaN = unknown (isotropic slopes).
    constant : bool
        One wind for every time.
    source : str
        Where the values came from (a file name or ``"survey file"``).
    """

    times: NDArray[np.datetime64]
    speed: NDArray[np.float64]
    direction: NDArray[np.float64]
    constant: bool = False
    source: str = "survey file"

    @classmethod
    def steady(cls, speed: float, direction: float | None = None) -> WindSeries:
        """One wind for all times (``direction`` None: unknown)."""
        return cls(np.array([np.datetime64("1970-01-01", "ns")]), np.array([float(speed)]),
                   np.array([np.nan if direction is None else float(direction)]), True)

    def at(self, times: Any) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Speed [m s⁻¹ at 10 m] and direction [°] at UTC ``times``.

        Linear in time between records; directions turn along the shorter
        arc.

        Raises
        ------
        InputError
            If a time lies outside the series (naming the first such time and
            the span the series covers).
        """
        t = np.asarray(to_utc_datetime64(times)).astype("datetime64[ns]").reshape(-1)
        if self.constant:
            return np.full(t.shape, self.speed[0]), np.full(t.shape, self.direction[0])
        self.check_covers(t)
        x = self.times.astype(np.int64).astype(float)
        xi = t.astype(np.int64).astype(float)
        speed = np.interp(xi, x, self.speed)
        d = self.direction
        if np.all(np.isnan(d)):
            return speed, np.full(t.shape, np.nan)
        unwrapped = np.degrees(np.unwrap(np.radians(d)))
        return speed, np.interp(xi, x, unwrapped) % 360.0

    def check_covers(self, times: NDArray[np.datetime64]) -> None:
        """InputError unless every time lies within the series."""
        if self.constant or times.size == 0:
            return
        lo, hi = self.times[0], self.times[-1]
        outside = (times < lo) | (times > hi)
        if np.any(outside):
            need = f"{format_time(times.min())} to {format_time(times.max())}"
            raise InputError(
                f"wind.file: the wind series {self.source!r} covers {format_time(lo)} to "
                f"{format_time(hi)}, but the plan needs winds from {need} (daylight steps of "
                f"the dates asked for; first uncovered time {format_time(times[outside][0])}); "
                "give a series that covers them or shorten the dates")



def _nc_wind(path: Path, lon: float, lat: float) -> tuple[NDArray[Any], NDArray[Any], NDArray[Any]]:
    import xarray as xr

    with xr.open_dataset(path) as ds:
        by_std = {str(v.attrs.get("standard_name", "")): str(name) for name, v in ds.data_vars.items()}
        names = {str(n) for n in ds.data_vars}

        def pick(std: str) -> str | None:
            return by_std.get(std) or (std if std in names else None)

        def at_site(da: Any) -> NDArray[Any]:
            for dim_names, value in ((("lat", "latitude", "y"), lat), (("lon", "longitude", "x"), lon)):
                for d in dim_names:
                    if d in da.dims and d in da.coords:
                        da = da.sel({d: value}, method="nearest")
                        break
            extra = [d for d in da.dims if d != "time"]
            if extra:
                raise InputError(f"wind.file: {path.name!r} variable {da.name!r} has dimensions "
                                 f"{da.dims!r}; expected time (and lat/lon, taken at the site)")
            return np.asarray(da.values, float)

        if "time" not in ds.coords and "time" not in ds.variables:
            raise InputError(f"wind.file: {path.name!r} has no 'time' coordinate")
        times = np.asarray(ds["time"].values)
        if times.dtype.kind != "M":
            raise InputError(f"wind.file: the time coordinate of {path.name!r} could not be read as "
                             "CF times (units like 'hours since 2026-07-01 00:00:00')")
        sp, dr = pick("wind_speed"), pick("wind_from_direction")
        if sp is not None:
            speed = at_site(ds[sp])
            direction = at_site(ds[dr]) if dr is not None else np.full(speed.shape, np.nan)
        else:
            u, v = pick("eastward_wind"), pick("northward_wind")
            if u is None or v is None:
                raise InputError(
                    f"wind.file: {path.name!r} needs wind_speed (optionally wind_from_direction) or "
                    f"eastward_wind and northward_wind (CF standard names); it has {sorted(names)!r}")
            speed, direction = wind_from_components(at_site(ds[u]), at_site(ds[v]))
    return times.astype("datetime64[ns]"), speed, direction


def read_wind_file(path: str | Path, *, longitude: float, latitude: float,
                   height: float = 10.0) -> WindSeries:
    """A wind forecast at the site from a CSV or NetCDF file.

    CSV: a header with ``time`` (ISO 8601 with ``Z`` or an offset),
    ``wind_speed`` [m s⁻¹] and optionally ``wind_direction`` [° from].
    NetCDF (CF): a ``time`` coordinate and ``wind_speed`` (optionally
    ``wind_from_direction``) or ``eastward_wind`` and ``northward_wind``
    (by standard name or variable name); grids are read at the grid point
    nearest to ``longitude``/``latitude``.

    Speeds measured at ``height`` are converted to 10 m
    (:func:`glint.physics.surface.wind_speed_at_height`).

    Raises
    ------
    InputFileError
        The file cannot be read.
    InputError
        Missing columns or variables, unreadable or unordered times,
        negative or missing speeds, directions outside [0, 360].
    """
    from glint.physics.surface import wind_speed_at_height

    p = Path(path)
    if not p.is_file():
        raise InputFileError(f"wind.file: file not found: {str(p)!r}")
    if p.suffix.lower() in (".nc", ".nc4", ".netcdf"):
        try:
            times, speed, direction = _nc_wind(p, longitude, latitude)
        except (OSError, ValueError) as exc:
            if isinstance(exc, GlintError):
                raise
            raise InputFileError(f"wind.file: cannot read NetCDF {str(p)!r}: {exc}") from exc
    else:
        try:
            with p.open(newline="", encoding="utf-8") as fh:
                rows = [r for r in csv.DictReader(line for line in fh if not line.startswith("#"))]
        except (OSError, UnicodeDecodeError) as exc:
            raise InputFileError(f"wind.file: cannot read {str(p)!r}: {exc}") from exc
        if not rows or "time" not in rows[0] or "wind_speed" not in rows[0]:
            cols = list(rows[0]) if rows else []
            raise InputError(f"wind.file: {p.name!r} needs the columns time, wind_speed (and "
                             f"optionally wind_direction); found {cols!r}")
        tl, sl, dl = [], [], []
        for i, r in enumerate(rows, start=2):
            try:
                tl.append(parse_time(r["time"], key=None))
                sl.append(float(r["wind_speed"]))
                d = (r.get("wind_direction") or "").strip()
                dl.append(float(d) if d else np.nan)
            except (ValueError, TypeError) as exc:
                raise InputError(f"wind.file: {p.name!r} line {i}: {exc}") from None
        times = np.array(tl, dtype="datetime64[ns]")
        speed, direction = np.array(sl), np.array(dl)
    if times.size < 2:
        raise InputError(f"wind.file: {p.name!r} holds {times.size} record(s); a series needs at "
                         "least two times (give a constant [wind] speed instead)")
    if np.any(np.diff(times.astype(np.int64)) <= 0):
        raise InputError(f"wind.file: the times of {p.name!r} must increase strictly")
    bad = ~np.isfinite(speed) | (speed < 0)
    if np.any(bad):
        raise InputError(f"wind.file: wind speeds must be finite and >= 0 m/s; got "
                         f"{float(speed[bad][0])!r} in {p.name!r}")
    fin = np.isfinite(direction)
    if np.any((direction[fin] < 0) | (direction[fin] > 360)):
        raise InputError(f"wind.file: wind directions must lie in [0, 360] deg; got "
                         f"{float(direction[fin][(direction[fin] < 0) | (direction[fin] > 360)][0])!r}")
    if np.any(fin) and not np.all(fin):
        raise InputError(f"wind.file: {p.name!r} gives wind directions for some times only; give "
                         "them for every time or for none")
    if height != 10.0:
        speed = np.asarray(wind_speed_at_height(speed, height, target_height=10.0), float)
    return WindSeries(times, speed, direction, False, p.name)

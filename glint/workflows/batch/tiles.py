"""Tile grids: an area cut into square tiles, for a list or range of times.

A ``[tiles]`` table of a batch manifest expands into one scene per tile and
time. The tiles are laid out in a projected CRS (``crs = "utm"`` picks the
WGS 84 / UTM zone of the area's centre, or any CRS pyproj reads), aligned
on multiples of ``tile_size`` from the CRS origin, so that tiles of the same
size from two manifests coincide. A tile is kept when it touches the area
(a lon/lat box or a GeoJSON polygon). Scenes are named
``<prefix>_c<column>_r<row>_<YYYYmmddTHHMMSSZ>``, where column and row
count tile sizes east and north of the CRS origin (``m`` marks a negative
index), so that a tile keeps its name when the area grows.

The other sections of a scene (sensor, surface, water, classes, outputs)
come from the template scene file given by ``scene``.
"""

from __future__ import annotations

import json
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from glint.errors import GlintError, InputError, InputFileError
from glint.geo.grid import parse_crs, utm_crs_for
from glint.times import format_time, parse_time

__all__ = ["MAX_TILE_SCENES", "TileGridSpec", "TILE_KEYS", "parse_step"]

#: Largest number of scenes a manifest's tile grids may expand to without
#: confirmation (``--yes``): a mistyped tile size or time step should not
#: start a run of a hundred thousand scenes.
MAX_TILE_SCENES = 1000

#: Keys of a ``[tiles]`` table.
TILE_KEYS = ("scene", "area", "crs", "tile_size", "resolution", "times", "time_range", "name")

_UNITS = {"d": 86400, "h": 3600, "min": 60, "s": 1}
#: Largest number of tiles along one axis (before the area test).
_MAX_AXIS = 100_000


def parse_step(value: Any, where: str) -> np.timedelta64:
    """A time step such as ``"1d"``, ``"6h"``, ``"30min"`` or ``"90s"``.

    Examples
    --------
    >>> int(parse_step("6h", "step") / np.timedelta64(1, "s"))
    21600
    """
    m = re.fullmatch(r"\s*(\d+(?:\.\d+)?)\s*(d|h|min|s)\s*", value) if isinstance(value, str) else None
    if m is None or float(m[1]) <= 0:
        raise InputError(f"{where}: time step {value!r} is not a positive number with a unit "
                         f"({', '.join(_UNITS)}), e.g. \"1d\" or \"30min\"")
    seconds = float(m[1]) * _UNITS[m[2]]
    return np.timedelta64(int(round(seconds)), "s")


def _times(table: Mapping[str, Any], where: str) -> list[np.datetime64]:
    if ("times" in table) == ("time_range" in table):
        raise InputError(f"{where}: give exactly one of 'times' (a list) or 'time_range' "
                         "({start, stop, step})")
    if "times" in table:
        values = table["times"]
        if not isinstance(values, list) or not values:
            raise InputError(f"{where}.times: expected a non-empty list of times, got {values!r}")
        out = [parse_time(v, f"{where}.times[{i}]") for i, v in enumerate(values)]
    else:
        rng = table["time_range"]
        if not isinstance(rng, Mapping) or sorted(rng) != ["start", "step", "stop"]:
            raise InputError(f"{where}.time_range: expected a table {{start, stop, step}}, got {rng!r}")
        start = parse_time(rng["start"], f"{where}.time_range.start")
        stop = parse_time(rng["stop"], f"{where}.time_range.stop")
        step = parse_step(rng["step"], f"{where}.time_range.step")
        if stop < start:
            raise InputError(f"{where}.time_range: stop {format_time(stop)!r} is before start "
                             f"{format_time(start)!r}")
        n = int((stop - start) // step) + 1
        if n > 1_000_000:
            raise InputError(f"{where}.time_range: {n} times; use a longer step")
        out = [start + i * step for i in range(n)]
    stamps = [format_time(t, "stamp") for t in out]
    dup = sorted({s for s in stamps if stamps.count(s) > 1})
    if dup:
        raise InputError(f"{where}: times {dup!r} are given more than once (to the second)")
    return out


def _number(table: Mapping[str, Any], key: str, where: str) -> float:
    v = table.get(key)
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) or v <= 0:
        raise InputError(f"{where}.{key}: expected a positive number, got {v!r}")
    return float(v)


def _area(value: Any, where: str, base_dir: Path) -> Any:
    """The area as a shapely geometry in lon/lat."""
    import shapely
    from shapely.geometry import box, shape

    if isinstance(value, list):
        ok = len(value) == 4 and all(isinstance(v, (int, float)) and not isinstance(v, bool)
                                     for v in value)
        if ok:
            w, s, e, n = (float(v) for v in value)
            ok = -180 <= w < e <= 180 and -90 <= s < n <= 90
        if not ok:
            raise InputError(f"{where}.area: expected a lon/lat box [west, south, east, north] "
                             f"with west < east in [-180, 180] and south < north in [-90, 90] "
                             f"[deg], got {value!r}")
        return box(w, s, e, n)
    if not isinstance(value, str):
        raise InputError(f"{where}.area: expected [west, south, east, north] or a GeoJSON file "
                         f"name, got {value!r}")
    path = Path(value).expanduser()
    path = path if path.is_absolute() else base_dir / path
    try:
        doc = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputFileError(f"{where}.area: GeoJSON file {value!r} does not exist (looked for "
                             f"{str(path)!r})") from None
    except (OSError, ValueError) as exc:
        raise InputError(f"{where}.area: cannot read GeoJSON file {value!r}: {exc}") from None
    geoms = []
    features = doc.get("features", [doc]) if isinstance(doc, dict) else []
    for i, f in enumerate(features):
        g = f.get("geometry", f) if isinstance(f, dict) else None
        if not isinstance(g, dict) or g.get("type") not in ("Polygon", "MultiPolygon"):
            kind = g.get("type") if isinstance(g, dict) else type(g).__name__
            raise InputError(f"{where}.area: feature {i} of {value!r} is a {kind!r}; only "
                             "Polygon and MultiPolygon areas are allowed")
        try:
            geoms.append(shape(g))
        except (ValueError, TypeError, AttributeError, shapely.errors.GEOSException) as exc:
            raise InputError(f"{where}.area: feature {i} of {value!r} is not a valid polygon: "
                             f"{exc}") from None
    if not geoms:
        raise InputError(f"{where}.area: {value!r} holds no polygon")
    area = shapely.union_all([shapely.make_valid(g) for g in geoms])
    w, s, e, n = area.bounds
    if not (-180 <= w <= e <= 180 and -90 <= s <= n <= 90) or area.area == 0:
        raise InputError(f"{where}.area: {value!r} must be a polygon in longitude/latitude "
                         f"degrees (GeoJSON, RFC 7946); its bounds are {area.bounds!r}")
    return area


@dataclass(frozen=True)
class TileGridSpec:
    """A checked ``[tiles]`` table.

    Attributes
    ----------
    area : shapely geometry
        The area in longitude/latitude [deg].
    crs : pyproj.CRS
        The CRS of the tiles.
    tile_size : float
        Side of a tile in CRS units; a whole multiple of ``resolution``.
    resolution : float
        Pixel size in CRS units.
    times : list of numpy.datetime64
    prefix : str
        Start of every tile's scene name.
    where : str
        Position in the manifest, for messages.
    """

    area: Any
    crs: Any
    tile_size: float
    resolution: float
    times: list[np.datetime64]
    prefix: str
    where: str

    @classmethod
    def from_table(cls, table: Any, *, where: str, base_dir: Path) -> TileGridSpec:
        """Check a ``[tiles]`` table; InputError naming its first problem."""
        if not isinstance(table, Mapping):
            raise InputError(f"{where}: expected a table, got {table!r}")
        unknown = [k for k in table if k not in TILE_KEYS]
        if unknown:
            raise InputError(f"{where}: unknown key(s) {unknown!r}; allowed: {', '.join(TILE_KEYS)}")
        missing = [k for k in ("scene", "area", "tile_size", "resolution") if k not in table]
        if missing:
            raise InputError(f"{where}: required key(s) {missing!r} missing")
        area = _area(table["area"], where, base_dir)
        size = _number(table, "tile_size", where)
        res = _number(table, "resolution", where)
        pixels = size / res
        if abs(pixels - round(pixels)) > 1e-9 * pixels:
            raise InputError(f"{where}: tile_size {size!r} is not a whole multiple of resolution "
                             f"{res!r}; tiles would not line up pixel for pixel")
        crs_value = table.get("crs", "utm")
        try:
            if crs_value == "utm":
                c = area.centroid
                crs = utm_crs_for(lon=float(c.x), lat=float(c.y))
            else:
                crs = parse_crs(crs_value)
        except GlintError as exc:
            raise InputError(f"{where}.crs: {exc}") from None
        if crs.is_geographic and size > 10:
            raise InputError(f"{where}.tile_size: {size!r} degrees in the geographic CRS "
                             f"{crs_value!r}; use a projected CRS (\"utm\") for sizes in metres")
        prefix = table.get("name", "tile")
        if not isinstance(prefix, str) or not re.fullmatch(r"[A-Za-z0-9][A-Za-z0-9_-]*", prefix):
            raise InputError(f"{where}.name: {prefix!r} must be letters, digits, '_' or '-' "
                             "(the start of every tile's folder name)")
        return cls(area, crs, size, res, _times(table, where), prefix, where)

    def tiles(self) -> list[tuple[int, int, tuple[float, float, float, float]]]:
        """``(column, row, (xmin, ymin, xmax, ymax))`` of every tile touching
        the area (more than along an edge), north to south, west to east;
        column and row count tile sizes from the CRS origin."""
        import shapely
        from pyproj import Transformer
        from shapely.geometry import box

        t = Transformer.from_crs("EPSG:4326", self.crs, always_xy=True)
        dense = shapely.segmentize(self.area, 0.01)  # deg: follow the curved edges
        try:
            projected = shapely.transform(dense, lambda xy: np.column_stack(t.transform(xy[:, 0], xy[:, 1])))
        except Exception as exc:  # pyproj raises its own errors
            raise InputError(f"{self.where}: the area cannot be projected to the tile CRS: {exc}") from None
        xmin, ymin, xmax, ymax = projected.bounds
        if not all(math.isfinite(v) for v in (xmin, ymin, xmax, ymax)):
            raise InputError(f"{self.where}: the area lies outside the tile CRS's domain")
        s = self.tile_size
        c0, c1 = math.floor(xmin / s), math.ceil(xmax / s)
        r0, r1 = math.floor(ymin / s), math.ceil(ymax / s)
        if (c1 - c0) > _MAX_AXIS or (r1 - r0) > _MAX_AXIS:
            raise InputError(f"{self.where}: tile_size {s!r} cuts the area into more than "
                             f"{_MAX_AXIS} tiles along one axis")
        shapely.prepare(projected)
        out = []
        for j in range(r1 - 1, r0 - 1, -1):          # north to south
            for i in range(c0, c1):
                b = (i * s, j * s, (i + 1) * s, (j + 1) * s)
                cell = box(*b)
                if projected.intersects(cell) and not projected.touches(cell):
                    out.append((i, j, b))
        return out

    def entries(self, template: Path | None) -> list[Any]:
        """The tile grid's scene entries (empty when ``template`` is None:
        its problem was reported)."""
        from glint.workflows.batch.manifest import SceneEntry

        if template is None:
            return []
        tiles = self.tiles()
        if not tiles:
            raise InputError(f"{self.where}: no tile touches the area")
        crs = self.crs.to_string() if self.crs.to_epsg() else self.crs.to_wkt()
        out = []
        for t in self.times:
            stamp = format_time(t, "stamp")
            for i, j, b in tiles:
                tile = f"c{_signed(i)}_r{_signed(j)}"
                name = f"{self.prefix}_{tile}_{stamp}"
                out.append(SceneEntry(
                    name=name, file=template,
                    values={"scene.time": format_time(t), "scene.name": f"{self.prefix} {tile}"},
                    where=f"{self.where} tile {tile} {format_time(t)}",
                    grid={"crs": crs, "bounds": list(b), "resolution": self.resolution},
                    label=name))
        return out


def _signed(k: int) -> str:
    """Tile index as text that sorts well: ``0042``, ``m0003`` for -3."""
    return f"{k:04d}" if k >= 0 else f"m{-k:04d}"

"""Polygons from GeoJSON files, reprojected and rasterised onto a grid.

GeoJSON (RFC 7946) coordinates are longitude and latitude on WGS 84; files
in the older 2008 form may name another CRS in a ``crs`` member
(``{"type": "name", "properties": {"name": "EPSG:32631"}}``), which is
honoured. Vertices are transformed with pyproj (``always_xy``) and every
edge is first divided into pieces of at most :data:`DENSIFY_DEG` degrees
(or the equivalent in the file's units), so that long straight edges
follow the curve they make in the grid's projection.

Rasterising follows GDAL's rule (rasterio.features.rasterize, ``all_touched
= False``): a pixel is inside when its centre is.
"""

from __future__ import annotations

import json
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import NDArray
from pyproj import CRS, Transformer

from glint.errors import GridError, InputError, InputFileError
from glint.geo.grid import Grid, parse_crs

__all__ = ["Polygons", "read_polygons", "DENSIFY_DEG"]

#: Longest edge piece [deg] kept straight when polygons are reprojected
#: (about 1 km); edges in projected files are divided into 1000 m pieces.
DENSIFY_DEG = 0.01
_DENSIFY_M = 1000.0


@dataclass(frozen=True)
class Polygons:
    """Polygons in one CRS.

    Attributes
    ----------
    shapes : list of dict
        GeoJSON ``Polygon`` / ``MultiPolygon`` geometries.
    crs : pyproj.CRS
        Their CRS.
    source : str
        Where they came from (for messages).
    """

    shapes: list[dict[str, Any]]
    crs: CRS
    source: str = "polygons"

    def to_crs(self, crs: Any) -> Polygons:
        """The same polygons in another CRS (edges densified first)."""
        target = parse_crs(crs)
        if target == self.crs:
            return self
        step = DENSIFY_DEG if self.crs.is_geographic else _DENSIFY_M
        tr = Transformer.from_crs(self.crs, target, always_xy=True)
        out = []
        for geom in self.shapes:
            polys = geom["coordinates"] if geom["type"] == "MultiPolygon" else [geom["coordinates"]]
            new = []
            for poly in polys:
                rings = []
                for ring in poly:
                    xy = _densify(np.asarray(ring, dtype=float)[:, :2], step)
                    x, y = tr.transform(xy[:, 0], xy[:, 1])
                    if not (np.all(np.isfinite(x)) and np.all(np.isfinite(y))):
                        raise InputError(f"{self.source}: a polygon cannot be transformed to "
                                         f"{target.name!r} (coordinates outside its area of use)")
                    rings.append(np.column_stack([x, y]).tolist())
                new.append(rings)
            out.append({"type": "MultiPolygon", "coordinates": new})
        return Polygons(out, target, self.source)

    def bounds(self) -> tuple[float, float, float, float]:
        """``(xmin, ymin, xmax, ymax)`` of every vertex."""
        pts = np.concatenate([np.asarray(r, dtype=float)[:, :2] for g in self.shapes
                              for p in (g["coordinates"] if g["type"] == "MultiPolygon"
                                        else [g["coordinates"]]) for r in p])
        return (float(pts[:, 0].min()), float(pts[:, 1].min()),
                float(pts[:, 0].max()), float(pts[:, 1].max()))

    def rasterize(self, grid: Grid, rows: slice | None = None) -> NDArray[np.bool_]:
        """True for the pixels of ``grid`` (a strip ``rows``) whose centre lies
        inside a polygon.

        Raises
        ------
        InputError
            If no polygon overlaps the grid.
        """
        from affine import Affine
        from rasterio.features import rasterize

        on_grid = self.to_crs(grid.crs)
        self._check_overlap(on_grid, grid)
        r0, r1, _ = (rows or slice(0, grid.height)).indices(grid.height)
        transform = grid.transform @ Affine.translation(0, r0)
        out = rasterize([(g, 1) for g in on_grid.shapes], out_shape=(r1 - r0, grid.width),
                        transform=transform, fill=0, dtype="uint8", all_touched=False)
        return np.asarray(out, dtype=bool)

    def _check_overlap(self, on_grid: Polygons, grid: Grid) -> None:
        xmin, ymin, xmax, ymax = on_grid.bounds()
        left, bottom, right, top = grid.bounds
        if xmax <= left or xmin >= right or ymax <= bottom or ymin >= top:
            raise InputError(
                f"{self.source} lies outside the image: polygon bounds "
                f"{(round(xmin, 3), round(ymin, 3), round(xmax, 3), round(ymax, 3))!r} vs image "
                f"bounds {tuple(round(v, 3) for v in grid.bounds)!r} in {grid.crs.name!r}; "
                "allowed: polygons that overlap the image")


def _densify(xy: NDArray[np.float64], step: float) -> NDArray[np.float64]:
    pieces = [xy[:1]]
    for a, b in zip(xy[:-1], xy[1:]):
        n = max(1, int(np.ceil(np.hypot(*(b - a)) / step)))
        t = np.arange(1, n + 1)[:, None] / n
        pieces.append(a + (b - a) * t)
    return np.concatenate(pieces)


def _geojson_crs(doc: dict[str, Any], source: str) -> CRS:
    c = doc.get("crs")
    if c is None:
        return CRS.from_epsg(4326)
    try:
        name = c["properties"]["name"]
        return parse_crs(name)
    except (KeyError, TypeError, InputError, GridError, ValueError) as exc:
        raise InputError(f"{source}: cannot read its crs member {c!r}; allowed: "
                         "{'type': 'name', 'properties': {'name': 'EPSG:....'}} or none "
                         "(RFC 7946: longitude/latitude on WGS 84)") from exc


def read_polygons(path: str | os.PathLike[str]) -> Polygons:
    """Read the Polygon and MultiPolygon geometries of a GeoJSON file.

    Parameters
    ----------
    path : path-like
        A GeoJSON ``FeatureCollection``, ``Feature``, ``GeometryCollection``
        or bare geometry.

    Returns
    -------
    Polygons

    Raises
    ------
    InputFileError
        The file is missing or not JSON.
    InputError
        It holds no polygon, or a geometry of another type.
    """
    p = Path(path).expanduser()
    source = f"polygon file {str(p)!r}"
    try:
        doc = json.loads(p.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputFileError(f"{source} does not exist") from None
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise InputFileError(f"cannot read {source} as GeoJSON: {exc}") from None
    if not isinstance(doc, dict):
        raise InputError(f"{source} is not a GeoJSON object")
    crs = _geojson_crs(doc, source)
    shapes: list[dict[str, Any]] = []

    def take(geom: Any) -> None:
        if not isinstance(geom, dict) or "type" not in geom:
            raise InputError(f"{source}: {str(geom)[:80]!r} is not a GeoJSON geometry")
        kind = geom["type"]
        if kind == "GeometryCollection":
            for g in geom.get("geometries", []):
                take(g)
        elif kind in ("Polygon", "MultiPolygon"):
            shapes.append({"type": kind, "coordinates": geom["coordinates"]})
        else:
            raise InputError(f"{source} holds a {kind!r} geometry; allowed: Polygon, "
                             "MultiPolygon")

    kind = doc.get("type")
    if kind == "FeatureCollection":
        for f in doc.get("features", []):
            if f.get("geometry") is not None:
                take(f["geometry"])
    elif kind == "Feature":
        if doc.get("geometry") is not None:
            take(doc["geometry"])
    else:
        take(doc)
    if not shapes:
        raise InputError(f"{source} holds no polygon; allowed: Polygon or MultiPolygon "
                         "geometries")
    return Polygons(shapes, crs, source)

"""Raster grids: CRS, affine transform, shape, and the geometry built on them.

A :class:`Grid` is the frame every glint map is computed on. It knows its
coordinate reference system (a :class:`pyproj.CRS`), a north-up affine
transform (:class:`affine.Affine`) and its ``(rows, cols)`` shape, and from
those the pixel-centre coordinates, their longitude/latitude, the meridian
convergence that turns grid azimuths into true azimuths, and strips of rows
to process block by block.

Around it: :mod:`glint.geo.geodesy` (transformations to longitude/latitude,
meridian convergence), :mod:`glint.geo.lattice` (tie-point lattices, their
interpolation and the one tie-point planner) and :mod:`glint.geo.cf` (CF
metadata of a grid).

Conventions
-----------
- Pixel ``(row, col)`` has its centre at ``transform * (col + 0.5, row + 0.5)``;
  fractional rows and columns are allowed everywhere.
- Geographic grids use ``x = longitude`` and ``y = latitude`` in degrees,
  whatever the axis order of the CRS definition.
- ``true_azimuth = (grid_azimuth + gamma) % 360`` where ``gamma`` is
  :meth:`Grid.meridian_convergence`.

This module reads no file except a raster header in :meth:`Grid.from_raster`.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any, NamedTuple

import numpy as np
from affine import Affine
from numpy.typing import ArrayLike, NDArray
from pyproj import CRS, Transformer
from pyproj.exceptions import CRSError

from glint.errors import GridError, InputFileError
from glint.geo.cf import grid_mapping_attributes, projection_coordinates
from glint.geo.geodesy import meridian_convergence, transformer_to_lonlat, utm_crs_for
from glint.geo.lattice import (
    NODE_STEPS,
    LatticePlan,
    interpolate_azimuth_nodes,
    interpolate_nodes,
    node_axes,
    plan_lattice,
)

__all__ = [
    "MAX_PIXELS",
    "Block",
    "Grid",
    "parse_crs",
    "LONLAT_TOLERANCE",
    # re-exported from glint.geo.geodesy and glint.geo.lattice, where they live
    "utm_crs_for",
    "interpolate_nodes",
    "interpolate_azimuth_nodes",
]

FloatArray = NDArray[np.float64]

#: Largest error [°] allowed when :meth:`Grid.lonlat_rows` interpolates
#: longitude and latitude from a node lattice (1e-7° is about 1 cm).
LONLAT_TOLERANCE = 1e-7

#: Largest grid (rows x cols) the constructors accept; larger requests are
#: almost always a resolution given in the wrong unit.
MAX_PIXELS = 2_000_000_000

_ACCEPTED_CRS = (
    "an EPSG code (32631), an authority string ('EPSG:32631'), a WKT string, "
    "a PROJ string ('+proj=utm +zone=31 +datum=WGS84'), a pyproj.CRS or a "
    "rasterio CRS"
)

#: Node spacings tried for the lon/lat lattice: the coarse half of the
#: tie-point spacings (finer lattices would cost about as much as pyproj).
_LONLAT_STEPS = NODE_STEPS[:4]


def parse_crs(value: Any) -> CRS:
    """Return a :class:`pyproj.CRS` for any of the usual ways to name one.

    Parameters
    ----------
    value : int, str, pyproj.CRS or rasterio.crs.CRS
        An EPSG code (``32631``), an authority string (``"EPSG:32631"``), a
        WKT string, a PROJ string, a :class:`pyproj.CRS`, or any object with a
        ``to_wkt()`` method (such as a rasterio CRS).

    Returns
    -------
    pyproj.CRS

    Raises
    ------
    GridError
        If ``value`` does not describe a CRS, or describes one that is neither
        projected nor geographic (a geocentric or vertical CRS, for example).

    Examples
    --------
    >>> parse_crs(32631).to_epsg()
    32631
    >>> parse_crs("EPSG:4326").is_geographic
    True
    """
    if isinstance(value, CRS):
        crs = value
    elif isinstance(value, bool) or value is None:
        raise GridError(f"cannot read a CRS from {value!r}; give {_ACCEPTED_CRS}")
    else:
        try:
            if isinstance(value, (int, np.integer)):
                crs = CRS.from_epsg(int(value))
            elif isinstance(value, str):
                crs = CRS.from_user_input(value.strip())
            elif hasattr(value, "to_wkt"):
                crs = CRS.from_wkt(value.to_wkt())
            else:
                raise GridError(
                    f"cannot read a CRS from {value!r}; give {_ACCEPTED_CRS}"
                )
        except (CRSError, TypeError, ValueError) as exc:
            if isinstance(exc, GridError):
                raise
            raise GridError(
                f"cannot read a CRS from {value!r} ({exc}); give {_ACCEPTED_CRS}"
            ) from exc
    if not (crs.is_projected or crs.is_geographic):
        raise GridError(
            f"CRS {crs.name!r} (from {value!r}) is neither projected nor "
            "geographic; a map grid needs one of those"
        )
    return crs


def _check_resolution_fits(
    bounds: Any, extent: tuple[float, float], res: tuple[float, float],
    resolution: Any, crs: Any,
) -> None:
    """Raise GridError when a pixel is larger than the extent along an axis."""
    for axis, size, step in (("x", extent[0], res[0]), ("y", extent[1], res[1])):
        if step > size * (1.0 + 1e-9):
            c = parse_crs(crs)
            if c.is_geographic:
                advice = ("geographic, so degrees); for a resolution in metres give "
                          "bounds in a projected CRS (the UTM zone's EPSG code, say)")
            else:
                unit = c.axis_info[0].unit_name if c.axis_info else "CRS units"
                advice = f"unit: {unit}); give a resolution smaller than the box"
            raise GridError(
                f"resolution {resolution!r} is larger than the extent of bounds "
                f"{bounds!r} along {axis} ({size:g}), which would give a single pixel; "
                f"the resolution is in the units of the CRS ({c.name}, {advice}"
            )


class Block(NamedTuple):
    """A strip of whole rows, ``row_start <= row < row_stop``.

    A named tuple, so ``for r0, r1 in grid.blocks()`` works; :attr:`rows`
    gives the matching ``slice`` and :meth:`Grid.window` a rasterio window.
    """

    row_start: int
    row_stop: int

    @property
    def rows(self) -> slice:
        """``slice(row_start, row_stop)``."""
        return slice(self.row_start, self.row_stop)

    @property
    def height(self) -> int:
        """Number of rows in the strip."""
        return self.row_stop - self.row_start


def _as_shape(shape: Any) -> tuple[int, int]:
    try:
        rows, cols = shape
        if int(rows) != rows or int(cols) != cols:
            raise ValueError
        rows, cols = int(rows), int(cols)
    except (TypeError, ValueError) as exc:
        raise GridError(
            f"shape must be two whole numbers (rows, cols); got {shape!r}"
        ) from exc
    if rows <= 0 or cols <= 0:
        raise GridError(f"shape must be positive (rows, cols); got {shape!r}")
    return rows, cols


def _as_resolution(resolution: Any) -> tuple[float, float]:
    try:
        if np.ndim(resolution) == 0:
            xres = yres = float(resolution)
        else:
            xres, yres = (float(r) for r in resolution)
    except (TypeError, ValueError) as exc:
        raise GridError(
            f"resolution must be a number or a pair (xres, yres); got {resolution!r}"
        ) from exc
    if not (np.isfinite(xres) and np.isfinite(yres) and xres > 0 and yres > 0):
        raise GridError(
            f"resolution must be finite and positive; got {resolution!r}"
        )
    return xres, yres


@dataclass(frozen=True)
class Grid:
    """A north-up raster grid.

    Parameters
    ----------
    crs : pyproj.CRS or anything :func:`parse_crs` accepts
        Projected or geographic coordinate reference system.
    transform : affine.Affine
        Maps ``(col, row)`` of pixel corners to ``(x, y)``. North-up only:
        ``transform.a > 0`` (pixel width), ``transform.e < 0`` (minus the
        pixel height), no rotation terms.
    shape : tuple of int
        ``(rows, cols)``, both positive.

    Raises
    ------
    GridError
        For an unreadable CRS, a non-positive shape, or a degenerate, rotated
        or south-up transform.

    Examples
    --------
    >>> from affine import Affine
    >>> g = Grid(32631, Affine(10.0, 0.0, 600000.0, 0.0, -10.0, 5800000.0), (100, 200))
    >>> g.bounds
    (600000.0, 5799000.0, 602000.0, 5800000.0)
    >>> g.xy(0, 0)
    (array(600005.), array(5799995.))
    """

    crs: CRS
    transform: Affine
    shape: tuple[int, int]

    def __post_init__(self) -> None:
        object.__setattr__(self, "crs", parse_crs(self.crs))
        t = self.transform
        if not isinstance(t, Affine):
            try:
                t = Affine(*[float(v) for v in tuple(t)[:6]])
            except (TypeError, ValueError) as exc:
                raise GridError(
                    f"transform must be an affine.Affine; got {self.transform!r}"
                ) from exc
            object.__setattr__(self, "transform", t)
        if not all(np.isfinite(v) for v in tuple(t)[:6]):
            raise GridError(f"transform has non-finite terms: {t!r}")
        if t.b != 0.0 or t.d != 0.0:
            raise GridError(
                f"rotated or sheared transforms are not supported; got {t!r} "
                "(terms b and d must be 0: north-up grids only)"
            )
        if not (t.a > 0.0 and t.e < 0.0):
            raise GridError(
                f"transform must be north-up with positive pixel width (a > 0) and "
                f"negative e (rows run southwards); got a={t.a!r}, e={t.e!r}"
            )
        object.__setattr__(self, "shape", _as_shape(self.shape))

    def __repr__(self) -> str:
        auth = self.crs.to_authority()
        crs = ":".join(auth) if auth else self.crs.name
        t = self.transform
        return (f"Grid(crs={crs!r}, transform=Affine({t.a!r}, {t.b!r}, {t.c!r}, {t.d!r}, "
                f"{t.e!r}, {t.f!r}), shape={self.shape!r})")

    # ----------------------------------------------------------- constructors
    @classmethod
    def from_bounds(
        cls,
        bounds: tuple[float, float, float, float],
        resolution: float | tuple[float, float],
        crs: Any,
        *,
        max_pixels: int = MAX_PIXELS,
    ) -> Grid:
        """Grid covering ``bounds`` at ``resolution``.

        Parameters
        ----------
        bounds : tuple of float
            ``(left, bottom, right, top)`` in CRS units.
        resolution : float or (float, float)
            Pixel size ``xres`` or ``(xres, yres)`` in CRS units, positive.
        crs : anything :func:`parse_crs` accepts
        max_pixels : int, optional
            Refuse grids with more pixels than this.

        Returns
        -------
        Grid

        Raises
        ------
        GridError
            Bounds not finite or not ordered (left < right, bottom < top),
            resolution not positive or larger than the extent along either
            axis (usually a resolution in the wrong unit: it is in CRS units,
            degrees for a geographic CRS), or more than ``max_pixels`` pixels.

        Notes
        -----
        The grid is anchored at the top-left corner ``(left, top)`` and has
        ``ceil((right - left) / xres)`` columns and ``ceil((top - bottom) / yres)``
        rows (with a 1e-9 pixel tolerance against rounding), so it always
        covers the bounds; its right and bottom edges may lie up to one pixel
        beyond them.

        Examples
        --------
        >>> Grid.from_bounds((0, 0, 1005, 500), 10, 32631).shape
        (50, 101)
        """
        try:
            left, bottom, right, top = (float(b) for b in bounds)
        except (TypeError, ValueError) as exc:
            raise GridError(
                f"bounds must be four numbers (left, bottom, right, top); got {bounds!r}"
            ) from exc
        if not all(np.isfinite(v) for v in (left, bottom, right, top)):
            raise GridError(f"bounds must be finite; got {bounds!r}")
        if not (left < right and bottom < top):
            raise GridError(
                f"bounds must be ordered (left, bottom, right, top) with left < right "
                f"and bottom < top; got {bounds!r}"
            )
        xres, yres = _as_resolution(resolution)
        _check_resolution_fits(bounds, (right - left, top - bottom), (xres, yres),
                               resolution, crs)
        cols = max(1, math.ceil((right - left) / xres - 1e-9))
        rows = max(1, math.ceil((top - bottom) / yres - 1e-9))
        if rows * cols > max_pixels:
            raise GridError(
                f"grid too large: bounds {bounds!r} at resolution {resolution!r} give "
                f"{rows} x {cols} = {rows * cols:,} pixels, more than max_pixels="
                f"{max_pixels:,} (is the resolution in CRS units?)"
            )
        return cls(crs, Affine(xres, 0.0, left, 0.0, -yres, top), (rows, cols))

    @classmethod
    def from_lonlat_box(
        cls,
        west: float,
        south: float,
        east: float,
        north: float,
        resolution: float | tuple[float, float],
        *,
        crs: Any = None,
        align: bool = True,
        max_pixels: int = MAX_PIXELS,
    ) -> Grid:
        """Grid covering a longitude/latitude box.

        Parameters
        ----------
        west, south, east, north : float
            WGS 84 box [°]; ``-180 <= west < east <= 180`` and
            ``-90 <= south < north <= 90``. Boxes crossing the 180° meridian
            are not supported: use :meth:`from_bounds` with bounds in a
            projected CRS (the UTM zone's, say) for those.
        resolution : float or (float, float)
            Pixel size in units of the target CRS (metres for UTM).
        crs : optional
            Target CRS (anything :func:`parse_crs` accepts). Default: the
            WGS 84 / UTM zone containing the box centre (:func:`utm_crs_for`).
        align : bool, optional
            Snap the grid's top-left corner outwards to a whole multiple of
            the resolution (default True), so that boxes processed separately
            share pixel edges.
        max_pixels : int, optional
            Refuse grids with more pixels than this.

        Returns
        -------
        Grid

        Raises
        ------
        GridError
            Coordinates out of range or unordered (the message suggests a
            projected CRS for boxes across the 180° meridian), box centre
            outside the UTM band (give ``crs``), resolution larger than the
            projected box, or too many pixels.

        Notes
        -----
        The box edges are densified (21 points per edge) and transformed with
        :meth:`pyproj.Transformer.transform_bounds`; the projected bounds then
        go to :meth:`from_bounds` (after snapping the top-left corner when
        ``align`` is true).

        Examples
        --------
        >>> g = Grid.from_lonlat_box(5.0, 52.0, 5.1, 52.05, 10.0)
        >>> g.crs.to_epsg(), g.shape
        (32631, (577, 702))
        """
        try:
            w, s, e, n = (float(v) for v in (west, south, east, north))
        except (TypeError, ValueError) as exc:
            raise GridError(
                f"west, south, east, north must be numbers; got "
                f"{(west, south, east, north)!r}"
            ) from exc
        box = (west, south, east, north)
        if not all(np.isfinite(v) for v in (w, s, e, n)):
            raise GridError(f"lon/lat box must be finite; got {box!r}")
        if not (-180.0 <= w <= 180.0 and -180.0 <= e <= 180.0):
            raise GridError(f"longitudes must lie in [-180, 180] degrees; got {box!r}")
        if not (-90.0 <= s <= 90.0 and -90.0 <= n <= 90.0):
            raise GridError(f"latitudes must lie in [-90, 90] degrees; got {box!r}")
        if w > e and s < n:
            hint = ""
            if e + 360.0 - w < 180.0:
                centre = (w + e + 360.0) / 2.0
                utm = utm_crs_for(centre - 360.0 if centre > 180.0 else centre,
                                  (s + n) / 2.0)
                hint = f" (here e.g. EPSG:{utm.to_epsg()}, {utm.name}, bounds in metres)"
            raise GridError(
                f"lon/lat box must be (west, south, east, north) with west < east; got "
                f"{box!r}. If the box crosses the 180 degree meridian: lon/lat boxes "
                f"cannot, so give bounds in a projected CRS instead, e.g. the EPSG code "
                f"of the UTM zone{hint}"
            )
        if not (w < e and s < n):
            raise GridError(
                f"lon/lat box must be (west, south, east, north) with west < east and "
                f"south < north; got {box!r}"
            )
        target = utm_crs_for((w + e) / 2.0, (s + n) / 2.0) if crs is None else parse_crs(crs)
        tr = Transformer.from_crs("EPSG:4326", target, always_xy=True)
        bounds = tr.transform_bounds(w, s, e, n, densify_pts=21)
        if not all(np.isfinite(bounds)):
            raise GridError(f"lon/lat box {box!r} cannot be projected to {target.name!r}")
        # Before snapping, which may widen the box by up to one pixel.
        left, bottom, right, top = bounds
        _check_resolution_fits(box, (right - left, top - bottom),
                               _as_resolution(resolution), resolution, target)
        if align:
            xres, yres = _as_resolution(resolution)
            left, bottom, right, top = bounds
            bounds = (math.floor(left / xres) * xres, bottom, right, math.ceil(top / yres) * yres)
        return cls.from_bounds(bounds, resolution, target, max_pixels=max_pixels)

    @classmethod
    def from_raster(cls, path: str | Path) -> Grid:
        """Grid (CRS, transform, shape) of an existing raster file.

        Parameters
        ----------
        path : str or Path
            Any raster GDAL reads (GeoTIFF, ``netcdf:file.nc:var``, ...).

        Returns
        -------
        Grid

        Raises
        ------
        InputFileError
            If the file is missing or cannot be read as a raster.
        GridError
            If the raster has no CRS or an unsupported (rotated) transform.
        """
        import rasterio
        from rasterio.errors import RasterioIOError

        spath = str(path)
        if "://" not in spath and not spath.lower().startswith(("netcdf:", "hdf5:")):
            if not Path(spath).is_file():
                raise InputFileError(f"raster file not found: {spath!r}")
        try:
            with rasterio.open(spath) as src:
                crs, transform, shape = src.crs, src.transform, (src.height, src.width)
        except RasterioIOError as exc:
            raise InputFileError(f"cannot read raster {spath!r}: {exc}") from exc
        if crs is None:
            raise GridError(f"raster {spath!r} has no CRS; a grid needs one")
        try:
            return cls(crs, transform, shape)
        except GridError as exc:
            raise GridError(f"raster {spath!r}: {exc}") from exc

    # ------------------------------------------------------------ properties
    @property
    def height(self) -> int:
        """Number of rows."""
        return self.shape[0]

    @property
    def width(self) -> int:
        """Number of columns."""
        return self.shape[1]

    @property
    def size(self) -> int:
        """Number of pixels."""
        return self.shape[0] * self.shape[1]

    @property
    def res(self) -> tuple[float, float]:
        """Pixel size ``(xres, yres)`` in CRS units, both positive."""
        return (self.transform.a, -self.transform.e)

    @property
    def pixel_area(self) -> float:
        """Pixel area ``xres * yres`` in squared CRS units (degree² for
        geographic grids, where it is not an area on the ground)."""
        return self.transform.a * -self.transform.e

    @property
    def bounds(self) -> tuple[float, float, float, float]:
        """Outer edges ``(left, bottom, right, top)`` in CRS units."""
        t = self.transform
        return (t.c, t.f + t.e * self.height, t.c + t.a * self.width, t.f)

    # ------------------------------------------------------------ coordinates
    def xy(self, rows: ArrayLike, cols: ArrayLike) -> tuple[FloatArray, FloatArray]:
        """Coordinates of pixel centres.

        Parameters
        ----------
        rows, cols : array_like
            Pixel indices (fractional allowed); broadcast together.

        Returns
        -------
        x, y : numpy.ndarray
            CRS coordinates of ``transform * (col + 0.5, row + 0.5)``.

        Examples
        --------
        >>> g = Grid.from_bounds((0, 0, 100, 100), 10, 32631)
        >>> g.xy([0, 9.5], 0)
        (array([5., 5.]), array([95.,  0.]))
        """
        r, c = np.broadcast_arrays(np.asarray(rows, dtype=float), np.asarray(cols, dtype=float))
        t = self.transform
        return np.asarray(t.c + t.a * (c + 0.5)), np.asarray(t.f + t.e * (r + 0.5))

    def window_xy(
        self, row_start: int, row_stop: int, col_start: int = 0, col_stop: int | None = None
    ) -> tuple[FloatArray, FloatArray]:
        """2-D x and y of the pixel centres of a window.

        Parameters
        ----------
        row_start, row_stop : int
            Rows ``row_start <= row < row_stop``.
        col_start, col_stop : int, optional
            Columns; default all.

        Returns
        -------
        x, y : numpy.ndarray, shape (row_stop - row_start, col_stop - col_start)

        Examples
        --------
        >>> g = Grid.from_bounds((0, 0, 100, 100), 10, 32631)
        >>> [a.shape for a in g.window_xy(0, 2, 0, 3)]
        [(2, 3), (2, 3)]
        """
        col_stop = self.width if col_stop is None else col_stop
        rows = np.arange(row_start, row_stop, dtype=float)[:, None]
        cols = np.arange(col_start, col_stop, dtype=float)[None, :]
        return self.xy(rows, cols)

    def index(self, x: ArrayLike, y: ArrayLike) -> tuple[FloatArray, FloatArray]:
        """Fractional ``(row, col)`` of CRS coordinates; inverse of :meth:`xy`.

        Parameters
        ----------
        x, y : array_like
            CRS coordinates.

        Returns
        -------
        row, col : numpy.ndarray
            Fractional indices; integer values at pixel centres.

        Examples
        --------
        >>> g = Grid.from_bounds((0, 0, 100, 100), 10, 32631)
        >>> g.index(5.0, 95.0)
        (array(0.), array(0.))
        """
        t = self.transform
        x, y = np.broadcast_arrays(np.asarray(x, dtype=float), np.asarray(y, dtype=float))
        return np.asarray((y - t.f) / t.e - 0.5), np.asarray((x - t.c) / t.a - 0.5)

    def lonlat(self, x: ArrayLike, y: ArrayLike) -> tuple[FloatArray, FloatArray]:
        """WGS 84 longitude and latitude [°] of CRS coordinates.

        Parameters
        ----------
        x, y : array_like
            CRS coordinates (for geographic grids, longitude and latitude in
            the grid's datum).

        Returns
        -------
        lon, lat : numpy.ndarray
            WGS 84 (EPSG:4326) longitude and latitude [°].

        Notes
        -----
        Uses one :class:`pyproj.Transformer` per thread and CRS (transformers
        are not thread-safe), with ``always_xy=True``.

        Examples
        --------
        >>> g = Grid.from_bounds((500000, 0, 500100, 100), 10, 32631)
        >>> [round(float(v), 6) for v in g.lonlat(500000.0, 0.0)]
        [3.0, 0.0]
        """
        x, y = np.broadcast_arrays(np.asarray(x, dtype=float), np.asarray(y, dtype=float))
        lon, lat = transformer_to_lonlat(self.crs).transform(x, y)
        return np.asarray(lon, dtype=float), np.asarray(lat, dtype=float)

    def lonlat_rows(self, row_start: int, row_stop: int, col_start: int = 0,
                    col_stop: int | None = None) -> tuple[FloatArray, FloatArray]:
        """Longitude and latitude [°] of every pixel centre in a strip of rows
        (or, with ``col_start``/``col_stop``, in a window of it).

        Interpolated from a node lattice when that stays within
        :data:`LONLAT_TOLERANCE` of the exact transformation (checked at the
        points of :func:`glint.geo.lattice.plan_lattice`, the one tie-point
        planner, when the lattice is first built; spacings of 64, 32, 16 or 8
        pixels are tried), else transformed exactly with pyproj. Projected
        grids of the usual sizes interpolate; the lattice is built once per
        grid.

        Returns
        -------
        lon, lat : numpy.ndarray, shape (row_stop - row_start, col_stop - col_start)
            Longitudes in [-180, 180) and latitudes.
        """
        col_stop = self.width if col_stop is None else col_stop
        rows = np.arange(row_start, row_stop, dtype=float)
        cols = np.arange(col_start, col_stop, dtype=float)
        plan = _lonlat_plan(self)
        if plan is None:
            return self.lonlat(*self.window_xy(row_start, row_stop, col_start, col_stop))
        lon = np.asarray(plan.interpolate("longitude", rows, cols), dtype=float)
        lon = np.where(lon >= 180.0, lon - 360.0, lon)
        return lon, np.asarray(plan.interpolate("latitude", rows, cols), dtype=float)

    def meridian_convergence(self, longitude: ArrayLike, latitude: ArrayLike) -> FloatArray:
        """Meridian convergence gamma [°]: ``true = (grid + gamma) % 360``
        (:func:`glint.geo.geodesy.meridian_convergence` of the grid's CRS).

        Examples
        --------
        >>> g = Grid.from_bounds((600000, 5760000, 610000, 5770000), 10, 32631)
        >>> round(float(g.meridian_convergence(longitude=5.5, latitude=52.0)), 3)
        1.971
        """
        return meridian_convergence(self.crs, longitude=longitude, latitude=latitude)

    # ---------------------------------------------------------------- blocks
    def blocks(self, rows: int = 512) -> Iterator[Block]:
        """Strips of whole rows covering the grid, top to bottom.

        Parameters
        ----------
        rows : int, optional
            Rows per strip (the last strip may be shorter). Multiples of the
            GeoTIFF tile size (512) write fastest.

        Yields
        ------
        Block
            ``(row_start, row_stop)`` named tuples.
        """
        if int(rows) != rows or rows <= 0:
            raise GridError(f"rows per block must be a positive integer; got {rows!r}")
        rows = int(rows)
        for r0 in range(0, self.height, rows):
            yield Block(r0, min(r0 + rows, self.height))

    def window(self, row_slice: slice | Block, col_slice: slice | None = None) -> Any:
        """A :class:`rasterio.windows.Window` for a strip of rows.

        Parameters
        ----------
        row_slice : slice or Block
            Rows (step 1).
        col_slice : slice, optional
            Columns; default all.

        Returns
        -------
        rasterio.windows.Window

        Examples
        --------
        >>> g = Grid.from_bounds((0, 0, 100, 100), 10, 32631)
        >>> g.window(slice(2, 5))
        Window(col_off=0, row_off=2, width=10, height=3)
        """
        from rasterio.windows import Window

        if isinstance(row_slice, Block):
            row_slice = row_slice.rows
        r0, r1, _ = row_slice.indices(self.height)
        c0, c1, _ = (col_slice or slice(None)).indices(self.width)
        return Window(c0, r0, c1 - c0, r1 - r0)

    def nodes(self, step: int) -> tuple[FloatArray, FloatArray]:
        """Row and column indices of a tie-point lattice.

        Parameters
        ----------
        step : int
            Spacing of the nodes [pixels], positive.

        Returns
        -------
        node_rows, node_cols : numpy.ndarray
            1-D float arrays ``0, step, 2 step, ...`` always ending with the
            last pixel centre (``height - 1`` and ``width - 1``).

        Examples
        --------
        >>> g = Grid.from_bounds((0, 0, 250, 100), 10, 32631)
        >>> g.nodes(10)
        (array([0., 9.]), array([ 0., 10., 20., 24.]))
        """
        return node_axes(self.shape, step)

    # ------------------------------------------------------------------- CF
    def to_cf(self) -> dict[str, Any]:
        """Attributes of a CF grid-mapping variable for this grid
        (:func:`glint.geo.cf.grid_mapping_attributes`).

        Examples
        --------
        >>> Grid.from_bounds((0, 0, 100, 100), 10, 32631).to_cf()["grid_mapping_name"]
        'transverse_mercator'
        """
        return grid_mapping_attributes(self)

    def cf_coordinates(self) -> dict[str, tuple[FloatArray, dict[str, str]]]:
        """1-D pixel-centre coordinates and their CF attributes
        (:func:`glint.geo.cf.projection_coordinates`)."""
        return projection_coordinates(self)


@functools.lru_cache(maxsize=16)
def _lonlat_plan(grid: Grid) -> LatticePlan | None:
    """Node lattice of lon/lat meeting :data:`LONLAT_TOLERANCE`, or None
    (geographic grids, or no spacing meets it)."""
    if grid.crs.is_geographic:
        return None

    def exact(rows: FloatArray, cols: FloatArray) -> dict[str, FloatArray]:
        lon, lat = grid.lonlat(*grid.xy(rows, cols))
        return {"longitude": np.mod(lon, 360.0), "latitude": lat}

    def error(approx: Mapping[str, NDArray[np.floating]], exact: Mapping[str, FloatArray]) -> float:
        dlon = np.abs(np.mod(approx["longitude"] - exact["longitude"] + 180.0, 360.0) - 180.0)
        return max(float(dlon.max()), float(np.abs(approx["latitude"] - exact["latitude"]).max()))

    plan = plan_lattice(grid, exact, error, LONLAT_TOLERANCE, steps=_LONLAT_STEPS,
                        periodic=("longitude",), require_finite=True)
    return plan if plan.step else None

"""Raster grids: CRS, affine transform, shape, and the geometry built on them.

A :class:`Grid` is the frame every glint map is computed on. It knows its
coordinate reference system (a :class:`pyproj.CRS`), a north-up affine
transform (:class:`affine.Affine`) and its ``(rows, cols)`` shape, and from
those the pixel-centre coordinates, their longitude/latitude, the meridian
convergence that turns grid azimuths into true azimuths, strips of rows to
process block by block, and a lattice of tie-point nodes with bilinear
interpolation between them.

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
import threading
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any, NamedTuple

import numba
import numpy as np
from affine import Affine
from pyproj import CRS, Proj, Transformer
from pyproj.exceptions import CRSError

from glint.errors import GridError, InputFileError

__all__ = [
    "MAX_PIXELS",
    "Block",
    "Grid",
    "parse_crs",
    "utm_crs_for",
    "interpolate_nodes",
    "interpolate_azimuth_nodes",
    "LONLAT_TOLERANCE",
    "cell_centres",
]

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

# Transformer objects are not thread-safe: keep one per thread and CRS.
_LOCAL = threading.local()


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


def utm_crs_for(lon: float, lat: float) -> CRS:
    """WGS 84 / UTM CRS whose zone contains a point.

    Parameters
    ----------
    lon, lat : float
        Longitude and latitude of the point [°].

    Returns
    -------
    pyproj.CRS
        EPSG:326zz north of the equator (latitude >= 0), EPSG:327zz south.

    Raises
    ------
    GridError
        If the point lies outside UTM's latitude band (80° S to 84° N) or the
        coordinates are not valid longitude/latitude.

    Notes
    -----
    Zone ``zz = floor((lon + 180) / 6) + 1``, with the two exceptions of the
    UTM system: zone 32V is widened to 3° E-12° E between 56° N and 64° N
    (south-west Norway), and between 72° N and 84° N zones 31X, 33X, 35X and
    37X cover 0-9° E, 9-21° E, 21-33° E and 33-42° E (Svalbard).

    References
    ----------
    Snyder, J.P. (1987) Map Projections: A Working Manual. U.S. Geological
    Survey Professional Paper 1395, pp. 57-64, doi:10.3133/pp1395.

    Examples
    --------
    >>> utm_crs_for(5.0, 52.0).to_epsg()
    32631
    >>> utm_crs_for(5.0, 60.0).to_epsg()   # Norway exception
    32632
    """
    if not (np.isfinite(lon) and -180.0 <= lon <= 180.0):
        raise GridError(f"longitude must lie in [-180, 180] degrees; got {lon!r}")
    if not (np.isfinite(lat) and -80.0 <= lat <= 84.0):
        raise GridError(
            f"latitude {lat!r} lies outside the UTM band [-80, 84] degrees; "
            "give a CRS explicitly (for example a polar stereographic one)"
        )
    zone = min(int(math.floor((lon + 180.0) / 6.0)) + 1, 60)
    if 56.0 <= lat < 64.0 and 3.0 <= lon < 12.0:
        zone = 32
    elif lat >= 72.0 and 0.0 <= lon < 42.0:
        zone = 31 if lon < 9.0 else 33 if lon < 21.0 else 35 if lon < 33.0 else 37
    return CRS.from_epsg((32600 if lat >= 0.0 else 32700) + zone)


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


def _transformer_to_lonlat(crs: CRS) -> Transformer:
    """A per-thread, per-CRS cached transformer from ``crs`` to WGS 84 lon/lat."""
    cache = getattr(_LOCAL, "to_lonlat", None)
    if cache is None:
        cache = _LOCAL.to_lonlat = {}
    key = crs.to_wkt()
    tr = cache.get(key)
    if tr is None:
        tr = cache[key] = Transformer.from_crs(crs, "EPSG:4326", always_xy=True)
    return tr


def _transverse_mercator_parameters(crs: CRS) -> tuple[float, float] | None:
    """(central meridian [°], first eccentricity squared) of a TM CRS, else None."""
    op = crs.coordinate_operation if crs.is_projected else None
    if op is None or op.method_name != "Transverse Mercator":
        return None
    lon0 = None
    for p in op.params:
        if p.name == "Longitude of natural origin" and p.unit_name == "degree":
            lon0 = float(p.value)
    ell = crs.ellipsoid
    if lon0 is None or ell is None or not ell.inverse_flattening:
        return None
    f = 1.0 / ell.inverse_flattening
    return lon0, f * (2.0 - f)


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
    def xy(self, rows: Any, cols: Any) -> tuple[np.ndarray, np.ndarray]:
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
    ) -> tuple[np.ndarray, np.ndarray]:
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

    def index(self, x: Any, y: Any) -> tuple[np.ndarray, np.ndarray]:
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

    def lonlat(self, x: Any, y: Any) -> tuple[np.ndarray, np.ndarray]:
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
        lon, lat = _transformer_to_lonlat(self.crs).transform(x, y)
        return np.asarray(lon, dtype=float), np.asarray(lat, dtype=float)

    def lonlat_rows(self, row_start: int, row_stop: int) -> tuple[np.ndarray, np.ndarray]:
        """Longitude and latitude [°] of every pixel centre in a strip of rows.

        Interpolated from a node lattice when that stays within
        :data:`LONLAT_TOLERANCE` of the exact transformation (checked at the
        centres of the lattice cells when the lattice is first built; the
        coarsest spacing of 64, 32, 16 or 8 pixels that passes with a 0.8
        margin is used), else transformed exactly with pyproj. Projected
        grids of the usual sizes interpolate; the lattice is built once per
        grid.

        Returns
        -------
        lon, lat : numpy.ndarray, shape (row_stop - row_start, width)
            Longitudes in [-180, 180) and latitudes.
        """
        rows = np.arange(row_start, row_stop, dtype=float)
        cols = np.arange(self.width, dtype=float)
        lattice = _lonlat_lattice(self)
        if lattice is None:
            return self.lonlat(*self.window_xy(row_start, row_stop))
        node_rows, node_cols, lon_nodes, lat_nodes = lattice
        lon = interpolate_azimuth_nodes(lon_nodes, node_rows, node_cols, rows, cols)
        lon = np.where(lon >= 180.0, lon - 360.0, lon)
        lat = interpolate_nodes(lat_nodes, node_rows, node_cols, rows, cols)
        return lon, lat

    def meridian_convergence(self, lon: Any, lat: Any) -> np.ndarray:
        """Meridian convergence gamma [°]: ``true = (grid + gamma) % 360``.

        Parameters
        ----------
        lon, lat : array_like
            Longitude and latitude [°] of the points.

        Returns
        -------
        numpy.ndarray
            Angle [°] from true north clockwise to grid north (the grid's
            +y direction); 0 for geographic grids.

        Notes
        -----
        For transverse Mercator CRSs (UTM included) within 10° of the central
        meridian, the series in ``dl = lon - lon0``

        .. math::

           \\gamma = \\Delta\\lambda \\sin\\varphi \\left[1 + \\frac{(\\Delta\\lambda\\cos
           \\varphi)^2}{3}(1 + 3\\eta^2 + 2\\eta^4) + \\frac{(\\Delta\\lambda\\cos
           \\varphi)^4}{15}(2 - \\tan^2\\varphi)\\right],\\quad
           \\eta^2 = \\frac{e^2}{1 - e^2}\\cos^2\\varphi

        is used; elsewhere ``pyproj.Proj(crs).get_factors(lon, lat)
        .meridian_convergence``. Both carry the sign convention above (positive
        east of the central meridian in the northern hemisphere).

        References
        ----------
        Snyder, J.P. (1987) Map Projections: A Working Manual. U.S. Geological
        Survey Professional Paper 1395, doi:10.3133/pp1395.

        Examples
        --------
        >>> g = Grid.from_bounds((600000, 5760000, 610000, 5770000), 10, 32631)
        >>> round(float(g.meridian_convergence(5.5, 52.0)), 3)
        1.971
        """
        lon, lat = np.broadcast_arrays(np.asarray(lon, dtype=float), np.asarray(lat, dtype=float))
        if self.crs.is_geographic:
            return np.where(np.isnan(lon) | np.isnan(lat), np.nan, 0.0)
        tm = _transverse_mercator_parameters(self.crs)
        if tm is not None:
            lon0, e2 = tm
            dl = np.radians((lon - lon0 + 180.0) % 360.0 - 180.0)
            if np.all(np.abs(dl[np.isfinite(dl)]) <= np.radians(10.0)):
                phi = np.radians(lat)
                c, s = np.cos(phi), np.sin(phi)
                eta2 = e2 / (1.0 - e2) * c * c
                u = (dl * c) ** 2
                gamma = dl * s * (
                    1.0 + u / 3.0 * (1.0 + 3.0 * eta2 + 2.0 * eta2 * eta2)
                    + u * u / 15.0 * (2.0 - (s / c) ** 2)
                )
                return np.degrees(gamma)
        factors = Proj(self.crs).get_factors(lon, lat, errcheck=False)
        gamma = np.asarray(factors.meridian_convergence, dtype=float)
        return np.where(np.isfinite(gamma), gamma, np.nan)

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

    def lattices(self, steps) -> Iterator[tuple[int, np.ndarray, np.ndarray]]:
        """``(step, node_rows, node_cols)`` for each spacing in ``steps`` that
        gives a lattice of at least 2 x 2 nodes (coarser ones are skipped)."""
        for step in steps:
            if step >= max(self.shape):
                continue
            node_rows, node_cols = self.nodes(step)
            if len(node_rows) >= 2 and len(node_cols) >= 2:
                yield step, node_rows, node_cols

    def nodes(self, step: int) -> tuple[np.ndarray, np.ndarray]:
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
        if int(step) != step or step <= 0:
            raise GridError(f"node step must be a positive integer; got {step!r}")
        return _node_axis(self.height, int(step)), _node_axis(self.width, int(step))

    # ------------------------------------------------------------------- CF
    def to_cf(self) -> dict[str, Any]:
        """Attributes of a CF grid-mapping variable for this grid.

        ``pyproj.CRS.to_cf()`` (``grid_mapping_name``, parameters,
        ``crs_wkt``) plus ``spatial_ref`` (the same WKT, read by GDAL) and
        ``GeoTransform`` (GDAL's six-term transform, as text).

        Returns
        -------
        dict
            Attribute names and values.

        Examples
        --------
        >>> Grid.from_bounds((0, 0, 100, 100), 10, 32631).to_cf()["grid_mapping_name"]
        'transverse_mercator'
        """
        attrs = dict(self.crs.to_cf())
        attrs["spatial_ref"] = attrs.get("crs_wkt", self.crs.to_wkt())
        t = self.transform
        attrs["GeoTransform"] = " ".join(f"{v!r}" for v in (t.c, t.a, t.b, t.f, t.d, t.e))
        return attrs

    def cf_coordinates(self) -> dict[str, tuple[np.ndarray, dict[str, str]]]:
        """1-D pixel-centre coordinates and their CF attributes.

        Returns
        -------
        dict
            ``{"x": (values, attrs), "y": (values, attrs)}``; attrs carry
            ``standard_name`` (``projection_x_coordinate`` /
            ``projection_y_coordinate``, or ``longitude`` / ``latitude`` for
            geographic grids), ``long_name``, ``units`` and ``axis``.

        Examples
        --------
        >>> x, attrs = Grid.from_bounds((0, 0, 30, 10), 10, 32631).cf_coordinates()["x"]
        >>> x, attrs["units"]
        (array([ 5., 15., 25.]), 'm')
        """
        x, _ = self.xy(0, np.arange(self.width))
        _, y = self.xy(np.arange(self.height), 0)
        if self.crs.is_geographic:
            xa = {"standard_name": "longitude", "long_name": "longitude", "units": "degrees_east", "axis": "X"}
            ya = {"standard_name": "latitude", "long_name": "latitude", "units": "degrees_north", "axis": "Y"}
        else:
            unit = self.crs.axis_info[0].unit_name if self.crs.axis_info else "metre"
            unit = {"metre": "m", "meter": "m", "US survey foot": "US_survey_foot"}.get(unit, unit)
            xa = {"standard_name": "projection_x_coordinate", "long_name": "x coordinate of projection",
                  "units": unit, "axis": "X"}
            ya = {"standard_name": "projection_y_coordinate", "long_name": "y coordinate of projection",
                  "units": unit, "axis": "Y"}
        return {"x": (x, xa), "y": (y, ya)}


@functools.lru_cache(maxsize=16)
def _lonlat_lattice(grid: Grid) -> tuple[np.ndarray, ...] | None:
    """Node lattice of lon/lat meeting :data:`LONLAT_TOLERANCE`, or None."""
    if grid.crs.is_geographic:
        return None
    for _, node_rows, node_cols in grid.lattices((64, 32, 16, 8)):
        rr, cc = np.meshgrid(node_rows, node_cols, indexing="ij")
        lon, lat = grid.lonlat(*grid.xy(rr, cc))
        if not (np.all(np.isfinite(lon)) and np.all(np.isfinite(lat))):
            return None
        mr, mc = cell_centres(node_rows), cell_centres(node_cols)
        exact_lon, exact_lat = grid.lonlat(*grid.xy(*np.meshgrid(mr, mc, indexing="ij")))
        approx_lon = interpolate_azimuth_nodes(np.mod(lon, 360.0), node_rows, node_cols, mr, mc)
        approx_lat = interpolate_nodes(lat, node_rows, node_cols, mr, mc)
        dlon = np.abs(np.mod(approx_lon - exact_lon + 180.0, 360.0) - 180.0)
        err = max(float(dlon.max()), float(np.abs(approx_lat - exact_lat).max()))
        if err <= 0.8 * LONLAT_TOLERANCE:
            return node_rows, node_cols, np.mod(lon, 360.0), lat
    return None


def cell_centres(node_axis: np.ndarray, max_cells: int = 400) -> np.ndarray:
    """Centres of the cells along one node axis: of every cell, or of
    ``max_cells`` evenly spread cells on longer axes. These are the points
    farthest from the nodes, where interpolation is checked."""
    n = len(node_axis)
    k = np.unique(np.linspace(0, n - 2, min(max_cells, n - 1)).round().astype(int))
    return 0.5 * (node_axis[k] + node_axis[k + 1])


def _node_axis(n: int, step: int) -> np.ndarray:
    nodes = np.arange(0, n - 1, step, dtype=float)
    return np.append(nodes, float(n - 1)) if n > 1 else np.zeros(1)


def _axis_weights(nodes: np.ndarray, at: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Interval index and fractional weight of ``at`` along a node axis."""
    if nodes.size == 1:
        return np.zeros(at.shape, dtype=np.intp), np.zeros(at.shape)
    i = np.clip(np.searchsorted(nodes, at, side="right") - 1, 0, nodes.size - 2)
    return i, (at - nodes[i]) / (nodes[i + 1] - nodes[i])


def _lattice_weights(
    v: np.ndarray, node_rows: Any, node_cols: Any, rows: Any, cols: Any
) -> tuple[np.ndarray, ...]:
    """Validate a node lattice and return ``(v, ir, tr, ic, tc)`` for the
    compiled loops; a single-node axis is padded to two equal nodes."""
    nr, nc = np.asarray(node_rows, dtype=float), np.asarray(node_cols, dtype=float)
    r, c = np.atleast_1d(np.asarray(rows, dtype=float)), np.atleast_1d(np.asarray(cols, dtype=float))
    if nr.ndim != 1 or nc.ndim != 1 or v.shape != (nr.size, nc.size):
        raise GridError(
            f"values_at_nodes has shape {v.shape!r}; expected "
            f"(len(node_rows), len(node_cols)) = ({nr.size}, {nc.size})"
        )
    if np.any(np.diff(nr) <= 0) or np.any(np.diff(nc) <= 0):
        raise GridError("node_rows and node_cols must be strictly increasing")
    ir, tr = _axis_weights(nr, r)
    ic, tc = _axis_weights(nc, c)
    v = np.asarray(v, dtype=np.float64)
    if nr.size == 1:
        v = np.concatenate([v, v], axis=0)
    if nc.size == 1:
        v = np.concatenate([v, v], axis=1)
    return (np.ascontiguousarray(v), ir.astype(np.intp), tr.astype(np.float64),
            ic.astype(np.intp), tc.astype(np.float64))


@numba.njit(parallel=True, cache=True)
def _bilinear_loop(v, ir, tr, ic, tc, out):  # pragma: no cover - compiled
    """One pass of bilinear interpolation over the output."""
    for i in numba.prange(ir.size):
        r0 = ir[i]
        t = tr[i]
        for j in range(ic.size):
            c0 = ic[j]
            u = tc[j]
            top = v[r0, c0] * (1.0 - u) + v[r0, c0 + 1] * u
            bottom = v[r0 + 1, c0] * (1.0 - u) + v[r0 + 1, c0 + 1] * u
            out[i, j] = top * (1.0 - t) + bottom * t


@numba.njit(inline="always")
def _near(a, ref):  # pragma: no cover - compiled
    """``a`` shifted by a multiple of 360 into [ref - 180, ref + 180)."""
    return a - 360.0 * math.floor((a - ref + 180.0) / 360.0)


@numba.njit(parallel=True, cache=True)
def _bilinear_azimuth_loop(v, ir, tr, ic, tc, out):  # pragma: no cover - compiled
    """Bilinear interpolation of azimuths: the four corners of each cell are
    taken within 180° of its first corner, interpolated, folded to [0, 360)."""
    for i in numba.prange(ir.size):
        r0 = ir[i]
        t = tr[i]
        for j in range(ic.size):
            c0 = ic[j]
            u = tc[j]
            a00 = v[r0, c0]
            a01 = _near(v[r0, c0 + 1], a00)
            a10 = _near(v[r0 + 1, c0], a00)
            a11 = _near(v[r0 + 1, c0 + 1], a00)
            a = (a00 * (1.0 - u) + a01 * u) * (1.0 - t) + (a10 * (1.0 - u) + a11 * u) * t
            a = a - 360.0 * math.floor(a / 360.0)
            if a >= 360.0:
                a -= 360.0
            out[i, j] = a


def interpolate_nodes(
    values_at_nodes: Any, node_rows: Any, node_cols: Any, rows: Any, cols: Any, *, dtype: Any = None
) -> np.ndarray:
    """Bilinear interpolation from a node lattice to pixel rows and columns.

    Parameters
    ----------
    values_at_nodes : array_like, shape (len(node_rows), len(node_cols))
        Values at the nodes.
    node_rows, node_cols : array_like
        Increasing 1-D node indices (from :meth:`Grid.nodes`).
    rows, cols : array_like
        1-D requested rows and columns (fractional allowed). Points outside
        the node range are extrapolated linearly from the edge interval.
    dtype : numpy dtype, optional
        Output type (the arithmetic is float64 either way); default the
        dtype of ``values_at_nodes`` if floating, else float64.

    Returns
    -------
    numpy.ndarray, shape (len(rows), len(cols))
        Interpolated values. NaN at a node spreads to the cells touching it.

    Raises
    ------
    GridError
        If the shapes do not match or the node axes are not increasing.

    Notes
    -----
    ``v = (1 - t)[(1 - u) V[i, j] + u V[i, j + 1]] + t[(1 - u) V[i + 1, j] +
    u V[i + 1, j + 1]]`` with ``t = (r - R[i]) / (R[i + 1] - R[i])`` and
    ``u`` likewise along columns: exact for fields linear in row and column
    (and for bilinear ones). One compiled pass over the output (numba), so a
    strip of a large grid costs no full-size temporaries.

    Examples
    --------
    >>> v = np.array([[0.0, 10.0], [20.0, 30.0]])
    >>> interpolate_nodes(v, [0, 10], [0, 10], [5], [0, 5, 10])
    array([[10., 15., 20.]])
    """
    v = np.asarray(values_at_nodes)
    if dtype is None:
        dtype = v.dtype if np.issubdtype(v.dtype, np.floating) else np.float64
    v, ir, tr, ic, tc = _lattice_weights(v, node_rows, node_cols, rows, cols)
    out = np.empty((ir.size, ic.size), dtype=dtype)
    _bilinear_loop(v, ir, tr, ic, tc, out)
    return out


def interpolate_azimuth_nodes(
    azimuth_at_nodes: Any, node_rows: Any, node_cols: Any, rows: Any, cols: Any, *, dtype: Any = np.float64
) -> np.ndarray:
    """Bilinear interpolation of azimuths [°] across north without a jump.

    Same arguments as :func:`interpolate_nodes`. In each lattice cell the
    corner azimuths are taken within 180° of the cell's first corner,
    interpolated bilinearly and folded back into [0, 360): 350° and 10°
    average to 0°, not 180°.

    Notes
    -----
    For a smooth azimuth field this is bilinear interpolation of the angle
    itself. Where the field turns by 180° or more across one cell (around the
    nadir of a low sensor, or the sun near the zenith) the result is wrong;
    callers check interpolated angles against exact values (as
    :func:`glint.engine.compute.plan_geometry` does) and refine the lattice.

    Examples
    --------
    >>> a = np.array([[350.0, 10.0]])
    >>> float(interpolate_azimuth_nodes(a, [0], [0, 2], [0], [1])[0, 0]) % 360 < 1e-9
    True
    """
    a = np.asarray(azimuth_at_nodes, dtype=float)
    v, ir, tr, ic, tc = _lattice_weights(a, node_rows, node_cols, rows, cols)
    out = np.empty((ir.size, ic.size), dtype=dtype)
    _bilinear_azimuth_loop(v, ir, tr, ic, tc, out)
    return out

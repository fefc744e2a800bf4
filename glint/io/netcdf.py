"""CF-1.11 / ACDD-1.3 NetCDF-4 writer, fed strip by strip: the one NetCDF
path of glint, for maps on a grid and for views in a camera's image
coordinates.

:class:`NetCDFWriter` follows :class:`glint.io.outputset.OutputWriter`: it
is built on the path an output set gives it, takes full-width strips with
:meth:`~NetCDFWriter.write` and finishes the file in
:meth:`~NetCDFWriter.close`.

Two layouts:

- a map on a :class:`~glint.geo.grid.Grid`: dimensions ``y``, ``x``
  (``lat``, ``lon`` for geographic grids), 1-D projection coordinates, a
  grid-mapping variable ``crs`` and 2-D ``lat``/``lon``;
- a camera view on an :class:`ImageGrid`: dimensions ``row``, ``col``
  (image pixels, row 0 at the top) and the 2-D ``lat``/``lon`` of each
  pixel's ground point (NaN where the pixel's ray misses the water).

Variable names, units and CF metadata come from :data:`glint.variables.VARIABLES`.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import logging
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from types import TracebackType
from typing import Any, NamedTuple

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint._version import __version__
from glint.errors import InputError, OutputError
from glint.geo.grid import Grid
from glint.io.naming import check_free_space
from glint.io.outputset import OutputSet
from glint.io.strips import StripArrays, check_variables, dataset_strips, dataset_variables, \
    col_range, row_range, strip_arrays
from glint.times import format_time
from glint.variables import CLASS_NODATA, VARIABLES

__all__ = ["NetCDFWriter", "ImageGrid", "ClassFlags", "write_dataset_netcdf", "CHUNK_ROWS"]

log = logging.getLogger(__name__)

#: Chunk height and width of the written variables [pixels]: the height of
#: the engine's strips and the width of the tiles its windows are made of
#: (:func:`glint.engine.compute.iter_windows`), so that its windows fill
#: whole chunks.
CHUNK_ROWS = 512


class ClassFlags(NamedTuple):
    """What the ``glint_class`` codes mean.

    ``values`` are the class codes, ``meanings`` their names (spaces become
    underscores), ``thresholds`` the class limits, ``variable`` the variable
    the classes are drawn from.
    """

    values: ArrayLike
    meanings: Sequence[str]
    thresholds: ArrayLike
    variable: str | None = None


@dataclass(frozen=True)
class ImageGrid:
    """The pixels of a camera view: the image row and column of each output
    row and column.

    The ground point of each pixel (``lon``, ``lat``) comes with each strip
    given to :meth:`NetCDFWriter.write`, so no full-size coordinate array is
    ever held.

    Parameters
    ----------
    rows, cols : 1-D int arrays
        Image row (0 at the top) and column (0 at the left) of each output
        row and column.
    """

    rows: NDArray[np.integer[Any]]
    cols: NDArray[np.integer[Any]]

    def __post_init__(self) -> None:
        for name in ("rows", "cols"):
            a = np.asarray(getattr(self, name))
            if a.ndim != 1 or a.size == 0 or a.dtype.kind not in "iu":
                raise InputError(f"ImageGrid {name} must be a non-empty 1-D integer array; "
                                 f"got {getattr(self, name)!r}")

    @property
    def shape(self) -> tuple[int, int]:
        """``(rows, cols)``."""
        return int(np.size(self.rows)), int(np.size(self.cols))

    @property
    def height(self) -> int:
        return self.shape[0]

    @property
    def width(self) -> int:
        return self.shape[1]

    @property
    def size(self) -> int:
        return self.height * self.width


# ------------------------------------------------------------- attributes
def _nc_attr_value(value: Any) -> Any:
    """A value netCDF4 can store as an attribute (None -> dropped)."""
    if value is None:
        return None
    if isinstance(value, (bool, np.bool_)):
        return "true" if value else "false"
    if isinstance(value, (str, int, float, np.number)):
        return value
    if isinstance(value, (np.datetime64, _dt.datetime)):
        return format_time(value)
    if isinstance(value, (list, tuple, np.ndarray)):
        arr = np.asarray(value)
        if arr.dtype.kind in "iuf" and arr.ndim == 1:
            return arr
        return ", ".join(str(v) for v in np.ravel(arr))
    return str(value)


def _nc_attrs(attrs: Mapping[str, Any]) -> dict[str, Any]:
    """Attributes as netCDF4 stores them (None values dropped)."""
    out = {}
    for k, v in attrs.items():
        v = _nc_attr_value(v)
        if v is not None:
            out[str(k)] = v
    return out


def _check_class_flags(class_flags: Any) -> ClassFlags | None:
    if class_flags is None:
        return None
    try:
        flags = ClassFlags(*class_flags)
        values = np.asarray(flags.values, dtype=np.uint8)
        meanings = [str(m).strip().replace(" ", "_") for m in flags.meanings]
        thresholds = np.asarray(flags.thresholds, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(
            f"class_flags must be (values, meanings, thresholds[, variable]); got {class_flags!r}"
        ) from exc
    if len(values) != len(meanings) or len(values) == 0:
        raise InputError(f"class_flags: {len(values)} values but {len(meanings)} meanings")
    return ClassFlags(values, meanings, thresholds, flags.variable)


def _variable_attrs(name: str, flags: ClassFlags | None) -> dict[str, Any]:
    """CF attributes of one data variable, from the variable table."""
    var = VARIABLES[name]
    atts: dict[str, Any] = {"long_name": var.long_name}
    if var.standard_name:
        atts["standard_name"] = var.standard_name
    if name == "glint_class":
        if flags is not None:
            values = np.asarray(flags.values, np.uint8)
            atts["flag_values"] = values
            atts["flag_meanings"] = " ".join(flags.meanings)
            atts["valid_range"] = np.array([values.min(), values.max()], np.uint8)
            atts["glint_class_thresholds"] = np.asarray(flags.thresholds, float)
            if flags.variable:
                atts["glint_class_variable"] = flags.variable
    else:
        atts["units"] = var.units
    if var.comment:
        atts["comment"] = var.comment
    return atts


_TIME_ATTRS = {"standard_name": "time", "long_name": "scene time",
               "units": "seconds since 1970-01-01 00:00:00", "calendar": "standard",
               # numpy datetime64 arithmetic counts no leap seconds (CF 1.11 4.4.3)
               "units_metadata": "leap_seconds: none"}


def _check_time(time: Any) -> np.datetime64 | None:
    if time is None:
        return None
    try:
        t = np.datetime64(time, "ns")
    except (TypeError, ValueError) as exc:
        raise InputError(f"time must be a UTC numpy.datetime64; got {time!r}") from exc
    if np.isnat(t):
        raise InputError(f"time must not be NaT; got {time!r}")
    return t


# ------------------------------------------------------------- the writer
class NetCDFWriter:
    """Stream strips of variables into a CF-1.11 / ACDD-1.3 NetCDF-4 file.

    Parameters
    ----------
    path : str or path-like
        The file to write (``.nc``); inside an output set, the temporary
        path the set gives (:meth:`glint.io.outputset.OutputSet.writer`).
    grid : Grid or ImageGrid
        A map's grid, or the pixels of a camera view.
    variables : sequence of str
        Names from :data:`~glint.variables.VARIABLES`.
    attrs : mapping, optional
        Global attributes added to (and overriding) the defaults: ``title``,
        ``summary``, ``keywords``, ``id``, ``naming_authority``, ... .
    time : numpy.datetime64, optional
        Scene time (UTC): written as a scalar ``time`` coordinate and as
        ``time_coverage_start``/``end``.
    class_flags : ClassFlags or (values, meanings, thresholds), optional
        For ``glint_class``: the class codes, their names (spaces become
        underscores), the class thresholds (attribute
        ``glint_class_thresholds``) and optionally the classified variable.
    complevel : int, optional
        zlib compression level, default 4 (zlib rather than ZSTD so that GDAL
        builds without the HDF5 ZSTD filter can read the file).
    chunk_rows : int, optional
        Chunk height (and maximum chunk width), default :data:`CHUNK_ROWS`.
    cache_chunks : int, optional
        Chunks of each variable held in memory until they are compressed and
        written. Default: one row of chunks plus one, enough for writes of
        any shape in row order (each chunk is written once its rows are
        complete), but growing with the grid's width. Writes that each cover
        whole chunks (strips of ``chunk_rows`` rows, or windows of them whole
        ``chunk_rows`` wide, in row order) need only 1, which keeps memory
        independent of the grid: a chunk the cache lets go before all its
        pixels are written is read back and written again (correct, only
        slower).
    lonlat : bool, optional
        Write the 2-D ``lat``/``lon`` auxiliary coordinates of projected grids
        (default True; always written for an :class:`ImageGrid`). They
        dominate the writing time of large maps (zlib on float64 runs at
        about 5 Mpx/s per variable).
    lonlat_dtype : {"float64", "float32"}, optional
        Type of ``lat``/``lon``; float32 halves their cost but rounds
        longitudes to about 1e-5 degree (1 m).

    Notes
    -----
    Map layout: dimensions ``y``, ``x`` (``lat``, ``lon`` for geographic
    grids); 1-D coordinates without ``_FillValue``; a scalar integer
    grid-mapping variable ``crs`` carrying :meth:`Grid.to_cf`; data variables
    with ``grid_mapping = "crs"`` and ``coordinates = "lat lon"`` (plus
    ``time``); float32 with ``_FillValue`` NaN, ``glint_class`` uint8 with
    ``_FillValue`` 255, ``flag_values`` and ``flag_meanings``. A camera view
    has dimensions ``row``, ``col`` instead, no grid mapping, and ``lat``/
    ``lon`` with ``_FillValue`` NaN.

    References
    ----------
    Eaton, B. et al. (2023) NetCDF Climate and Forecast (CF) Metadata
    Conventions, version 1.11. https://cfconventions.org
    ESIP (2015) Attribute Convention for Data Discovery (ACDD) 1-3.
    https://wiki.esipfed.org/Attribute_Convention_for_Data_Discovery_1-3
    """

    def __init__(
        self,
        path: str | os.PathLike[str],
        grid: Grid | ImageGrid,
        variables: Sequence[str],
        *,
        attrs: Mapping[str, Any] | None = None,
        time: Any = None,
        class_flags: ClassFlags | tuple[Sequence[int], Sequence[str], Sequence[float]] | None = None,
        complevel: int = 4,
        chunk_rows: int = CHUNK_ROWS,
        cache_chunks: int | None = None,
        lonlat: bool = True,
        lonlat_dtype: str = "float64",
    ) -> None:
        self.path = Path(path)
        self.grid = grid
        self.variables = check_variables(variables)
        self.attrs = dict(attrs or {})
        if lonlat_dtype not in ("float64", "float32"):
            raise InputError(
                f"lonlat_dtype must be 'float64' or 'float32'; got {lonlat_dtype!r}"
            )
        self.lonlat_dtype = np.dtype(lonlat_dtype)
        self.time = _check_time(time)
        self.class_flags = _check_class_flags(class_flags)
        if not 0 <= int(complevel) <= 9:
            raise InputError(f"complevel must lie in 0..9; got {complevel!r}")
        self.complevel = int(complevel)
        if int(chunk_rows) != chunk_rows or chunk_rows <= 0:
            raise InputError(f"chunk_rows must be a positive integer; got {chunk_rows!r}")
        self.chunk_rows = int(chunk_rows)
        if cache_chunks is not None and (int(cache_chunks) != cache_chunks or cache_chunks <= 0):
            raise InputError(f"cache_chunks must be a positive integer or None; got {cache_chunks!r}")
        self.cache_chunks = None if cache_chunks is None else int(cache_chunks)
        self.image = isinstance(grid, ImageGrid)
        self.geographic = isinstance(grid, Grid) and grid.crs.is_geographic
        self.lonlat = self.image or (bool(lonlat) and not self.geographic)
        self._nc: Any = None
        self._latlon_range = [np.inf, -np.inf, np.inf, -np.inf]
        self._open()

    def _open(self) -> None:
        import netCDF4

        ll = 2 * self.lonlat_dtype.itemsize if self.lonlat else 0
        raw = self.grid.size * (4 * len(self.variables) + ll)
        check_free_space(self.path.parent, raw // 2)
        try:
            self._nc = netCDF4.Dataset(self.path, "w", format="NETCDF4")
            self._define()
        except BaseException:
            self.abort()
            raise

    # -- the file's structure
    def _dims(self) -> tuple[str, str]:
        if self.image:
            return "row", "col"
        return ("lat", "lon") if self.geographic else ("y", "x")

    def _define_axes(self) -> None:
        nc, (ydim, xdim) = self._nc, self._dims()
        nc.createDimension(ydim, self.grid.height)
        nc.createDimension(xdim, self.grid.width)
        if isinstance(self.grid, ImageGrid):
            axes = {
                ydim: (self.grid.rows, {"long_name": "image row (0 at the top)", "units": "1"}),
                xdim: (self.grid.cols, {"long_name": "image column (0 at the left)", "units": "1"}),
            }
            for dim, (values, cattrs) in axes.items():
                v = nc.createVariable(dim, "i4", (dim,))
                v.setncatts(cattrs)
                v[:] = np.asarray(values, dtype=np.int32)
            return
        coords = self.grid.cf_coordinates()
        for name, dim in (("y", ydim), ("x", xdim)):
            axis_values, axis_attrs = coords[name]
            v = nc.createVariable(dim, "f8", (dim,))
            v.setncatts(axis_attrs)
            v[:] = axis_values
        crs = nc.createVariable("crs", "i4", ())
        crs.setncatts(self.grid.to_cf())

    def _define_auxiliary(self) -> list[str]:
        """Scalar time and 2-D lat/lon; returns the ``coordinates`` names."""
        nc, dims = self._nc, self._dims()
        aux: list[str] = []
        if self.lonlat:
            fill = np.array(np.nan, self.lonlat_dtype) if self.image else None
            for name, std, units in (("lat", "latitude", "degrees_north"),
                                     ("lon", "longitude", "degrees_east")):
                v = nc.createVariable(name, self.lonlat_dtype, dims, zlib=self.complevel > 0,
                                      complevel=self.complevel or None, chunksizes=self._chunks(),
                                      fill_value=fill)
                v.setncatts({"standard_name": std, "long_name": std, "units": units})
                self._limit_chunk_cache(v)
            aux += ["lat", "lon"]
        if self.time is not None:
            t = nc.createVariable("time", "f8", ())
            t.setncatts(_TIME_ATTRS)
            t.assignValue((self.time - np.datetime64("1970-01-01T00:00:00", "ns"))
                          / np.timedelta64(1, "s"))
            aux.append("time")
        return aux

    def _chunks(self) -> tuple[int, int]:
        return min(self.chunk_rows, self.grid.height), min(self.chunk_rows, self.grid.width)

    def _cached_chunks(self) -> int:
        """Chunks cached per variable: ``cache_chunks``, or one row of
        chunks plus one."""
        if self.cache_chunks is not None:
            return self.cache_chunks
        return -(-self.grid.width // self._chunks()[1]) + 1

    def _limit_chunk_cache(self, var: Any) -> None:
        """Cache :meth:`_cached_chunks` chunks of ``var``. The library's
        default cache (64 MiB per variable) would keep a whole variable of a
        12-megapixel image in memory until the file is closed."""
        ch, cw = self._chunks()
        var.set_var_chunk_cache(size=self._cached_chunks() * ch * cw * var.dtype.itemsize)

    def _define(self) -> None:
        self._define_axes()
        aux = self._define_auxiliary()
        for name in self.variables:
            dtype = np.dtype(VARIABLES[name].dtype)
            fill = CLASS_NODATA if dtype == np.uint8 else np.nan
            v = self._nc.createVariable(name, dtype, self._dims(), zlib=self.complevel > 0,
                                        complevel=self.complevel or None, chunksizes=self._chunks(),
                                        fill_value=np.array(fill, dtype))
            self._limit_chunk_cache(v)
            atts = _variable_attrs(name, self.class_flags)
            if not self.image:
                atts["grid_mapping"] = "crs"
            if aux:
                atts["coordinates"] = " ".join(aux)
            v.setncatts(atts)
        self._nc.setncatts(self._global_attrs())

    def _global_attrs(self) -> dict[str, Any]:
        now = np.datetime64(_dt.datetime.now(_dt.timezone.utc).replace(tzinfo=None), "s")
        stamp = format_time(now)
        attrs: dict[str, Any] = {
            "Conventions": "CF-1.11, ACDD-1.3",
            "title": "Predicted sun glint on water",
            "summary": "Per-pixel prediction of sun glint on water computed by glint "
            "from sun position, viewing geometry and a statistical model of the wind-"
            "roughened surface. A statistical estimate, not a safety clearance.",
            "keywords": "sun glint, glint, water surface, reflectance, remote sensing",
            "id": self.path.stem,
            "date_created": stamp,
            "creator_name": "glint",
            "history": f"{stamp} created by glint {__version__}",
            "source": f"glint {__version__}",
            "geospatial_lat_units": "degrees_north",
            "geospatial_lon_units": "degrees_east",
        }
        if self.time is not None:
            attrs["time_coverage_start"] = attrs["time_coverage_end"] = format_time(self.time)
        if self.class_flags is not None:
            attrs["glint_class_thresholds"] = np.asarray(self.class_flags.thresholds, float)
        attrs.update(self.attrs)
        return _nc_attrs(attrs)

    # -- strips
    def write(self, rows: slice | Sequence[int], arrays: StripArrays,
              cols: slice | Sequence[int] | None = None) -> None:
        """Write rows of every variable (and of lat/lon): full-width, or a
        window of them.

        Parameters
        ----------
        rows : slice or (int, int)
            Rows of the grid (step 1).
        arrays : mapping or sequence
            One ``(rows, columns)`` array per variable, by name or in order.
            On an :class:`ImageGrid`, a mapping that also holds the strip's
            ``"lon"`` and ``"lat"`` [°] (NaN where a pixel sees no water).
        cols : slice or (int, int), optional
            Columns of the window (default: all).
        """
        if self._nc is None:
            raise OutputError(f"NetCDF writer for {str(self.path)!r} is closed")
        r0, r1 = row_range(rows, self.grid.height)
        c0, c1 = col_range(cols, self.grid.width)
        shape = (r1 - r0, c1 - c0)
        data = strip_arrays(self.variables, arrays, shape)
        for name, a in zip(self.variables, data):
            self._nc.variables[name][r0:r1, c0:c1] = a.astype(VARIABLES[name].dtype, copy=False)
        if isinstance(self.grid, ImageGrid):
            if not isinstance(arrays, Mapping):
                raise InputError("write() on an ImageGrid takes a mapping holding the strip's "
                                 f"'lon' and 'lat' besides the variables; got {type(arrays)!r}")
            lon, lat = strip_arrays(("lon", "lat"), arrays, shape)
        else:
            lon, lat = self.grid.lonlat_rows(r0, r1, c0, c1)
        if self.lonlat:
            self._nc.variables["lat"][r0:r1, c0:c1] = lat
            self._nc.variables["lon"][r0:r1, c0:c1] = lon
        self._extend_range(lon, lat)

    def _extend_range(self, lon: ArrayLike, lat: ArrayLike) -> None:
        lon, lat = np.asarray(lon), np.asarray(lat)
        ok = np.isfinite(lon) & np.isfinite(lat)
        if not ok.any():
            return
        rng = self._latlon_range
        rng[:] = [min(rng[0], float(lat[ok].min())), max(rng[1], float(lat[ok].max())),
                  min(rng[2], float(lon[ok].min())), max(rng[3], float(lon[ok].max()))]

    def add_attributes(self, attrs: Mapping[str, Any]) -> None:
        """Add (or replace) global attributes known only once every strip is
        written (e.g. counts over the whole field)."""
        if self._nc is None:
            raise OutputError(f"NetCDF writer for {str(self.path)!r} is closed")
        self.attrs.update(attrs)
        self._nc.setncatts(_nc_attrs(attrs))

    def close(self) -> None:
        """Write the geospatial extent attributes and finish the file."""
        if self._nc is None:
            return
        try:
            rng = self._latlon_range
            if np.isfinite(rng[0]):
                self._nc.setncatts({
                    "geospatial_lat_min": rng[0], "geospatial_lat_max": rng[1],
                    "geospatial_lon_min": rng[2], "geospatial_lon_max": rng[3],
                })
            self._nc.close()
            self._nc = None
        except BaseException:
            self.abort()
            raise
        log.info("wrote %s", self.path)

    def abort(self) -> None:
        """Close the file; it is removed by the output set."""
        if self._nc is not None:
            with contextlib.suppress(Exception):
                self._nc.close()
            self._nc = None

    def __enter__(self) -> NetCDFWriter:
        return self

    def __exit__(self, exc_type: type[BaseException] | None, exc: BaseException | None,
                 tb: TracebackType | None) -> None:
        if exc_type is None:
            self.close()
        else:
            self.abort()


def write_dataset_netcdf(
    ds: Any,
    path: str | os.PathLike[str],
    grid: Grid,
    *,
    variables: Sequence[str] | None = None,
    block_rows: int = CHUNK_ROWS,
    overwrite: bool = False,
    **writer_options: Any,
) -> Path:
    """Write variables of an (optionally dask-backed) ``xarray.Dataset`` to
    NetCDF, all or nothing (an output set of one file).

    Parameters are those of :func:`glint.io.geotiff.write_dataset_geotiff`;
    ``variables`` defaults to every table variable present in ``ds`` and
    ``writer_options`` go to :class:`NetCDFWriter`. A ``time`` coordinate of
    ``ds`` (scalar) is used unless ``time`` is given. Full-width strips of a
    whole number of chunk rows fill whole chunks: one chunk per variable is
    cached then (``cache_chunks=1`` unless given).
    """
    path = Path(path)
    names = list(variables) if variables is not None else dataset_variables(ds, None)
    chunk = writer_options.get("chunk_rows", CHUNK_ROWS)
    if isinstance(chunk, int) and chunk > 0 and block_rows % chunk == 0:
        writer_options.setdefault("cache_chunks", 1)
    if "time" not in writer_options and "time" in ds.coords and ds["time"].ndim == 0:
        writer_options["time"] = ds["time"].values
    with OutputSet(path.parent, {"file": path.name}, overwrite=overwrite) as out:
        attrs = {"id": path.stem, **writer_options.pop("attrs", {})}
        w = out.writer("file", lambda p: NetCDFWriter(p, grid, names, attrs=attrs,
                                                      **writer_options))
        for rows, arrays in dataset_strips(ds, w.variables, block_rows):
            w.write(rows, arrays)
    return path

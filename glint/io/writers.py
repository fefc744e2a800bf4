"""Writers of glint's GIS files, and the rules every output follows.

Writers
-------
- :class:`GeoTiffWriter`: tiled, compressed GeoTIFF with overviews, or a
  Cloud Optimized GeoTIFF (``cog=True``, through GDAL's COG driver).
- :class:`NetCDFWriter`: CF-1.11 / ACDD-1.3 NetCDF-4 with a grid-mapping
  variable, 1-D projection coordinates and 2-D latitude/longitude.

Both are context managers fed strip by strip with ``write(row_slice, arrays)``
so that a map never has to sit in memory whole. Every file is first written
under a temporary name in the output directory and renamed into place only
when complete (:func:`atomic_path`); an exception inside the ``with`` block
removes the temporary file and leaves nothing behind.

Variable names, units and CF metadata come from :data:`glint.variables.VARIABLES`.

Output files
------------
:func:`output_stem` names the files of one scene time,
:func:`refuse_existing` refuses to replace existing outputs without
``overwrite``, and :func:`output_directory` creates the output directory for
a run and removes it again if the run fails before writing anything.

Input rasters are read by :mod:`glint.geo.readers`.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import logging
import os
import secrets
import shutil
from collections.abc import Iterator, Mapping, Sequence
from pathlib import Path
from typing import Any

import numpy as np

from glint._version import __version__
from glint.errors import InputError, OutputError
from glint.geo.grid import Grid
from glint.variables import CLASS_NODATA, VARIABLES

__all__ = [
    "output_stem",
    "refuse_existing",
    "output_directory",
    "prepare_outdir",
    "atomic_path",
    "check_free_space",
    "GeoTiffWriter",
    "NetCDFWriter",
    "write_dataset_geotiff",
    "write_dataset_netcdf",
]

log = logging.getLogger(__name__)

_COMPRESSIONS = ("zstd", "deflate", "lzw", "lerc", "lerc_zstd", "lerc_deflate", "none")
_RESAMPLINGS = ("nearest", "average", "mode", "bilinear", "cubic", "min", "max", "rms")


# --------------------------------------------------------------- atomic files
class _AtomicFile:
    """A temporary path next to ``final`` that is renamed into place or removed."""

    def __init__(self, final_path: str | os.PathLike, *, overwrite: bool, tag: str = ""):
        final = Path(final_path)
        directory = final.parent if str(final.parent) else Path(".")
        if not directory.exists():
            raise OutputError(f"output directory {str(directory)!r} does not exist")
        if not directory.is_dir():
            raise OutputError(f"output directory {str(directory)!r} is not a directory")
        if final.is_dir():
            raise OutputError(f"output path {str(final)!r} is a directory")
        if final.exists() and not overwrite:
            raise OutputError(
                f"output file {str(final)!r} already exists; pass overwrite=True "
                "(--overwrite on the command line) to replace it"
            )
        self.final = final
        self.tmp = directory / (
            f".{final.stem}.tmp-{os.getpid()}-{secrets.token_hex(4)}{tag}{final.suffix}"
        )
        try:  # prove the directory is writable (os.access is wrong for root)
            with open(self.tmp, "xb"):
                pass
        except OSError as exc:
            raise OutputError(
                f"output directory {str(directory)!r} is not writable: {exc.strerror}"
            ) from exc
        self.done = False

    def commit(self) -> None:
        if not self.done:
            os.replace(self.tmp, self.final)
            self.done = True

    def discard(self) -> None:
        if not self.done:
            for p in (self.tmp, Path(f"{self.tmp}.aux.xml"), Path(f"{self.tmp}.ovr")):
                with contextlib.suppress(FileNotFoundError):
                    p.unlink()
            self.done = True


@contextlib.contextmanager
def atomic_path(final_path: str | os.PathLike, *, overwrite: bool = False) -> Iterator[Path]:
    """Temporary path in the same directory, renamed to ``final_path`` on success.

    Parameters
    ----------
    final_path : str or path-like
        Where the finished file goes.
    overwrite : bool, optional
        Replace an existing file (default: refuse).

    Yields
    ------
    pathlib.Path
        ``.<stem>.tmp-<pid>-<random><suffix>`` in the output directory, created
        empty. Write the file there; it is moved into place with
        :func:`os.replace` (atomic on one file system) when the block ends
        normally, and deleted when it raises.

    Raises
    ------
    OutputError
        If the output exists and ``overwrite`` is false, or the directory is
        missing or not writable.

    Examples
    --------
    >>> import tempfile, os
    >>> d = tempfile.mkdtemp()
    >>> with atomic_path(os.path.join(d, "a.txt")) as tmp:
    ...     _ = tmp.write_text("done")
    >>> os.listdir(d)
    ['a.txt']
    """
    f = _AtomicFile(final_path, overwrite=overwrite)
    try:
        yield f.tmp
    except BaseException:
        f.discard()
        raise
    f.commit()


def check_free_space(directory: str | os.PathLike, nbytes: int) -> None:
    """Raise :class:`~glint.errors.OutputError` if ``directory`` has less than
    ``nbytes`` bytes free.

    Examples
    --------
    >>> check_free_space(".", 1)
    """
    free = shutil.disk_usage(directory).free
    if free < nbytes:
        raise OutputError(
            f"not enough disk space in {str(directory)!r}: about {nbytes / 1e6:,.1f} MB "
            f"needed, {free / 1e6:,.1f} MB free"
        )


# ------------------------------------------------------------------- helpers
def _check_variables(variables: Sequence[str] | str) -> list[str]:
    if isinstance(variables, str):
        variables = [variables]
    names = list(variables)
    if not names:
        raise InputError("no variables to write; give at least one of " + ", ".join(VARIABLES))
    unknown = [v for v in names if v not in VARIABLES]
    if unknown:
        raise InputError(
            f"unknown output variable(s) {unknown!r}; valid names: {', '.join(VARIABLES)}"
        )
    if len(set(names)) != len(names):
        raise InputError(f"variables listed twice: {names!r}")
    return names


def _row_range(row_slice: slice | Sequence[int], height: int) -> tuple[int, int]:
    if isinstance(row_slice, slice):
        r0, r1, step = row_slice.indices(height)
        if step != 1:
            raise InputError(f"row_slice must have step 1; got {row_slice!r}")
    else:
        try:
            r0, r1 = (int(v) for v in row_slice)
        except (TypeError, ValueError) as exc:
            raise InputError(
                f"row_slice must be a slice or (row_start, row_stop); got {row_slice!r}"
            ) from exc
    if not 0 <= r0 < r1 <= height:
        raise InputError(f"rows {row_slice!r} outside the grid's 0..{height} rows")
    return r0, r1


def _strip_arrays(
    names: list[str], arrays: Mapping[str, Any] | Sequence[Any], shape: tuple[int, int]
) -> list[np.ndarray]:
    if isinstance(arrays, Mapping):
        missing = [n for n in names if n not in arrays]
        if missing:
            raise InputError(f"write() is missing variable(s) {missing!r}; got {list(arrays)!r}")
        out = [np.asarray(arrays[n]) for n in names]
    else:
        out = [np.asarray(a) for a in arrays]
        if len(out) != len(names):
            raise InputError(f"write() got {len(out)} arrays for {len(names)} variables {names!r}")
    for n, a in zip(names, out):
        if a.shape != shape:
            raise InputError(f"array for {n!r} has shape {a.shape!r}; expected {shape!r}")
    return out


# -------------------------------------------------------------------- GeoTIFF
class GeoTiffWriter:
    """Stream strips of one or more variables into a GeoTIFF or COG.

    Parameters
    ----------
    path : str or path-like
        Output file (``.tif``).
    grid : Grid
        Grid of the map.
    variables : sequence of str
        Names from :data:`~glint.variables.VARIABLES`, one band each, in order.
        One file holds one data type: write ``glint_class`` (uint8) to a file
        of its own.
    dtype : str, optional
        Band data type; default from the variable table.
    nodata : float, optional
        Default NaN for floating types, ``CLASS_NODATA`` (255) for uint8.
    compress : {"zstd", "deflate", "lzw", "lerc", "lerc_zstd", "lerc_deflate", "none"}
        Compression (default ``"zstd"``).
    level : int, optional
        ZSTD level (default 1: about 3.5x faster than level 9 on a 10980 x
        10980 float32 band, files slightly larger) or DEFLATE level (default 6).
    max_z_error : float, optional
        Largest absolute error allowed by LERC compressions (lossy when > 0).
    predictor : int, optional
        1 (none), 2 (horizontal differencing) or 3 (floating point); default 3
        for floating types and 2 for integers (1 for LERC).
    blocksize : int, optional
        Tile size [pixels], default 512.
    bigtiff : str, optional
        GDAL ``BIGTIFF`` option, default ``"IF_SAFER"``.
    overviews : bool, optional
        Build internal overviews with factors 2, 4, 8, ... until the coarsest
        level is smaller than ``blocksize`` (default True).
    resampling : str, optional
        Overview resampling; default ``"average"`` for floats, ``"nearest"``
        for integers (``"mode"`` also suits classes).
    cog : bool, optional
        Write a Cloud Optimized GeoTIFF: the strips go to a temporary GeoTIFF
        that GDAL's COG driver copies into the final layout at close.
    overwrite : bool, optional
        Replace an existing file.
    tags : mapping, optional
        Dataset-level metadata (scene time, sun angles, class thresholds);
        values are converted with ``str``.
    num_threads : str or int, optional
        GDAL compression threads, default ``"ALL_CPUS"``.
    colormap : mapping of int to (r, g, b, a), optional
        Palette of a one-band uint8 file (GIS software shows the classes in
        these colours).
    cache_mb : int, optional
        GDAL block cache while the file is open [MB], default 256: full
        strips are compressed and flushed as they arrive, so memory stays
        bounded whatever the grid size.

    Raises
    ------
    InputError
        Unknown variable, mixed data types, unknown compression or resampling.
    OutputError
        Output exists without ``overwrite``, directory missing or unwritable,
        not enough disk space.

    Examples
    --------
    >>> import tempfile, os
    >>> g = Grid.from_bounds((0, 0, 100, 50), 10, 32631)
    >>> path = os.path.join(tempfile.mkdtemp(), "f.tif")
    >>> with GeoTiffWriter(path, g, ["glint_fraction"]) as w:
    ...     w.write(slice(0, 5), {"glint_fraction": np.zeros((5, 10), "float32")})
    >>> os.path.exists(path)
    True
    """

    def __init__(
        self,
        path: str | os.PathLike,
        grid: Grid,
        variables: Sequence[str],
        *,
        dtype: str | None = None,
        nodata: float | None = None,
        compress: str | None = "zstd",
        level: int | None = None,
        max_z_error: float | None = None,
        predictor: int | None = None,
        blocksize: int = 512,
        bigtiff: str = "IF_SAFER",
        overviews: bool = True,
        resampling: str | None = None,
        cog: bool = False,
        overwrite: bool = False,
        tags: Mapping[str, Any] | None = None,
        num_threads: str | int = "ALL_CPUS",
        cache_mb: int = 256,
        colormap: Mapping[int, tuple[int, int, int, int]] | None = None,
    ) -> None:
        self.path = Path(path)
        self.grid = grid
        self.variables = _check_variables(variables)
        dtypes = {VARIABLES[v].dtype for v in self.variables}
        if dtype is None:
            if len(dtypes) > 1:
                raise InputError(
                    f"variables {self.variables!r} mix data types {sorted(dtypes)!r}; a GeoTIFF "
                    "holds one type: write glint_class to a file of its own"
                )
            dtype = dtypes.pop()
        self.dtype = np.dtype(dtype)
        is_float = np.issubdtype(self.dtype, np.floating)
        if nodata is None:
            nodata = float("nan") if is_float else (CLASS_NODATA if self.dtype == np.uint8 else None)
        self.nodata = nodata
        comp = "none" if compress is None else str(compress).lower()
        if comp not in _COMPRESSIONS:
            raise InputError(f"compress must be one of {_COMPRESSIONS!r}; got {compress!r}")
        self.compress = comp
        self.level = level
        self.max_z_error = max_z_error
        if predictor is None:
            predictor = 1 if comp.startswith("lerc") or comp == "none" else (3 if is_float else 2)
        if predictor not in (1, 2, 3) or (predictor == 3 and not is_float):
            raise InputError(
                f"predictor must be 1, 2 or 3 (3 only for floating types); got {predictor!r}"
            )
        self.predictor = predictor
        if int(blocksize) != blocksize or blocksize <= 0 or blocksize % 16:
            raise InputError(f"blocksize must be a positive multiple of 16; got {blocksize!r}")
        self.blocksize = int(blocksize)
        self.bigtiff = bigtiff
        self.overviews = bool(overviews)
        resampling = resampling or ("average" if is_float else "nearest")
        if resampling not in _RESAMPLINGS:
            raise InputError(f"resampling must be one of {_RESAMPLINGS!r}; got {resampling!r}")
        self.resampling = resampling
        self.cog = bool(cog)
        self.overwrite = overwrite
        self.tags = {str(k): str(v) for k, v in (tags or {}).items()}
        self.num_threads = str(num_threads)
        self.cache_mb = int(cache_mb)
        self.colormap = dict(colormap) if colormap else None
        self._env: Any = None
        self._dst: Any = None
        self._files: list[_AtomicFile] = []

    # creation options shared by the working GeoTIFF and the COG copy
    def _compression_options(self, cog: bool) -> dict[str, Any]:
        opts: dict[str, Any] = {"compress": self.compress.upper(), "num_threads": self.num_threads}
        if self.compress == "zstd":
            opts["level" if cog else "zstd_level"] = 1 if self.level is None else self.level
        elif self.compress == "deflate":
            opts["level" if cog else "zlevel"] = 6 if self.level is None else self.level
        elif self.compress.startswith("lerc"):
            opts["max_z_error"] = self.max_z_error or 0.0
        if self.predictor != 1:
            opts["predictor"] = (
                {2: "STANDARD", 3: "FLOATING_POINT"}[self.predictor] if cog else self.predictor
            )
        return opts

    def _overview_factors(self) -> list[int]:
        factors, f, size = [], 2, max(self.grid.shape)
        while size / (f // 2) > self.blocksize:
            factors.append(f)
            f *= 2
        return factors

    def open(self) -> GeoTiffWriter:
        """Create the temporary file; called by ``with``."""
        import rasterio
        from rasterio.crs import CRS as RioCRS

        if self._dst is not None:
            return self
        raw = self.grid.size * self.dtype.itemsize * len(self.variables)
        final = _AtomicFile(self.path, overwrite=self.overwrite)
        self._files.append(final)
        try:
            # compressed output rarely exceeds half the raw size; a COG needs a copy
            check_free_space(final.tmp.parent, raw // (1 if self.cog else 2))
            work = final
            if self.cog:
                work = _AtomicFile(self.path.with_name(self.path.stem + "-work.tif"),
                                   overwrite=True, tag="-work")
                self._files.append(work)
            profile = dict(
                driver="GTiff", width=self.grid.width, height=self.grid.height,
                count=len(self.variables), dtype=self.dtype.name,
                crs=RioCRS.from_wkt(self.grid.crs.to_wkt()), transform=self.grid.transform,
                nodata=self.nodata, tiled=True, blockxsize=self.blocksize,
                blockysize=self.blocksize, interleave="band", bigtiff=self.bigtiff,
                **self._compression_options(cog=False),
            )
            if self.cog:  # fast working copy; the COG driver recompresses
                profile.update(compress="ZSTD", zstd_level=1)
                profile.pop("zlevel", None)
                profile.pop("max_z_error", None)
            # A bounded GDAL block cache: full strips are compressed and
            # flushed as they come instead of piling up until close().
            self._env = rasterio.Env(GDAL_CACHEMAX=self.cache_mb, GDAL_NUM_THREADS=self.num_threads)
            self._env.__enter__()
            self._dst = rasterio.open(work.tmp, "w", **profile)
            self._work = work
            self._describe()
        except BaseException:
            self.abort()
            raise
        return self

    def _describe(self) -> None:
        dst = self._dst
        for i, name in enumerate(self.variables, start=1):
            var = VARIABLES[name]
            dst.set_band_description(i, name)
            dst.set_band_unit(i, var.units)
            band_tags = {"long_name": var.long_name}
            if var.standard_name:
                band_tags["standard_name"] = var.standard_name
            if var.comment:
                band_tags["comment"] = var.comment
            dst.update_tags(i, **band_tags)
        dst.update_tags(
            AREA_OR_POINT="Area", TIFFTAG_SOFTWARE=f"glint {__version__}", **self.tags
        )
        if self.colormap and len(self.variables) == 1 and self.dtype == np.uint8:
            dst.write_colormap(1, self.colormap)

    def write(self, row_slice: slice | Sequence[int], arrays: Mapping[str, Any] | Sequence[Any]) -> None:
        """Write full-width rows of every variable.

        Parameters
        ----------
        row_slice : slice or (int, int)
            Rows of the grid (step 1).
        arrays : mapping or sequence
            One ``(rows, width)`` array per variable, by name or in order;
            converted to the file's data type.
        """
        from rasterio.windows import Window

        if self._dst is None:
            raise OutputError(f"GeoTIFF writer for {str(self.path)!r} is not open")
        r0, r1 = _row_range(row_slice, self.grid.height)
        data = _strip_arrays(self.variables, arrays, (r1 - r0, self.grid.width))
        window = Window(0, r0, self.grid.width, r1 - r0)
        for i, a in enumerate(data, start=1):
            self._dst.write(a.astype(self.dtype, copy=False), i, window=window)

    def close(self) -> None:
        """Build overviews (or the COG) and rename the file into place."""
        import rasterio
        import rasterio.shutil
        from rasterio.enums import Resampling

        if self._dst is None:
            return
        try:
            resampling = Resampling[self.resampling]
            with rasterio.Env(GDAL_NUM_THREADS=self.num_threads):
                if self.overviews and not self.cog and self._overview_factors():
                    self._dst.build_overviews(self._overview_factors(), resampling)
                    self._dst.update_tags(ns="rio_overview", resampling=self.resampling)
                self._dst.close()
                self._dst = None
                if self.cog:
                    final = self._files[0]
                    rasterio.shutil.copy(
                        self._work.tmp, final.tmp, driver="COG",
                        blocksize=self.blocksize, bigtiff=self.bigtiff,
                        overviews="AUTO" if self.overviews else "NONE",
                        overview_resampling=self.resampling, resampling=self.resampling,
                        **self._compression_options(cog=True),
                    )
                    self._work.discard()
            self._files[0].commit()
        except BaseException:
            self.abort()
            raise
        finally:
            self._leave_env()
        log.info("wrote %s", self.path)

    def _leave_env(self) -> None:
        if self._env is not None:
            env, self._env = self._env, None
            env.__exit__(None, None, None)

    def abort(self) -> None:
        """Close and delete every temporary file; the output is not created."""
        if self._dst is not None:
            with contextlib.suppress(Exception):
                self._dst.close()
            self._dst = None
        for f in self._files:
            f.discard()
        self._leave_env()

    def __enter__(self) -> GeoTiffWriter:
        return self.open()

    def __exit__(self, exc_type: Any, exc: Any, tb: Any) -> None:
        if exc_type is None:
            self.close()
        else:
            self.abort()


# --------------------------------------------------------------------- NetCDF
def _iso(t: np.datetime64) -> str:
    return str(np.datetime64(t, "s")) + "Z"


def _nc_attr_value(value: Any) -> Any:
    """A value netCDF4 can store as an attribute (None -> dropped)."""
    if value is None:
        return None
    if isinstance(value, (bool, np.bool_)):
        return "true" if value else "false"
    if isinstance(value, (str, int, float, np.number)):
        return value
    if isinstance(value, np.datetime64):
        return _iso(value)
    if isinstance(value, _dt.datetime):
        return value.isoformat()
    if isinstance(value, (list, tuple, np.ndarray)):
        arr = np.asarray(value)
        if arr.dtype.kind in "iuf" and arr.ndim == 1:
            return arr
        return ", ".join(str(v) for v in np.ravel(arr))
    return str(value)


class NetCDFWriter:
    """Stream strips of variables into a CF-1.11 / ACDD-1.3 NetCDF-4 file.

    Parameters
    ----------
    path : str or path-like
        Output file (``.nc``).
    grid : Grid
        Grid of the map.
    variables : sequence of str
        Names from :data:`~glint.variables.VARIABLES`.
    attrs : mapping, optional
        Global attributes added to (and overriding) the defaults: ``title``,
        ``summary``, ``keywords``, ``id``, ``naming_authority``, ... .
    time : numpy.datetime64, optional
        Scene time (UTC): written as a scalar ``time`` coordinate and as
        ``time_coverage_start``/``end``.
    class_flags : (values, meanings, thresholds), optional
        For ``glint_class``: the class codes, their names (spaces become
        underscores) and the class thresholds (attribute
        ``glint_class_thresholds``).
    complevel : int, optional
        zlib compression level, default 4 (zlib rather than ZSTD so that GDAL
        builds without the HDF5 ZSTD filter can read the file).
    chunk_rows : int, optional
        Chunk height (and maximum chunk width), default 512.
    lonlat : bool, optional
        Write the 2-D ``lat``/``lon`` auxiliary coordinates of projected grids
        (default True). They dominate the writing time of large maps (zlib on
        float64 runs at about 5 Mpx/s per variable).
    lonlat_dtype : {"float64", "float32"}, optional
        Type of ``lat``/``lon``; float32 halves their cost but rounds
        longitudes to about 1e-5 degree (1 m).
    overwrite : bool, optional
        Replace an existing file.

    Notes
    -----
    Layout: dimensions ``y``, ``x`` (``lat``, ``lon`` for geographic grids);
    1-D coordinates without ``_FillValue``; a scalar integer grid-mapping
    variable ``crs`` carrying :meth:`Grid.to_cf`; data variables with
    ``grid_mapping = "crs"`` and ``coordinates = "lat lon"`` (plus ``time``);
    float32 with ``_FillValue`` NaN, ``glint_class`` uint8 with ``_FillValue``
    255, ``flag_values`` and ``flag_meanings``.

    References
    ----------
    Eaton, B. et al. (2023) NetCDF Climate and Forecast (CF) Metadata
    Conventions, version 1.11. https://cfconventions.org
    ESIP (2015) Attribute Convention for Data Discovery (ACDD) 1-3.
    https://wiki.esipfed.org/Attribute_Convention_for_Data_Discovery_1-3
    """

    def __init__(
        self,
        path: str | os.PathLike,
        grid: Grid,
        variables: Sequence[str],
        *,
        attrs: Mapping[str, Any] | None = None,
        time: Any = None,
        class_flags: tuple[Sequence[int], Sequence[str], Sequence[float]] | None = None,
        complevel: int = 4,
        chunk_rows: int = 512,
        lonlat: bool = True,
        lonlat_dtype: str = "float64",
        overwrite: bool = False,
    ) -> None:
        self.path = Path(path)
        self.grid = grid
        self.variables = _check_variables(variables)
        self.attrs = dict(attrs or {})
        if lonlat_dtype not in ("float64", "float32"):
            raise InputError(
                f"lonlat_dtype must be 'float64' or 'float32'; got {lonlat_dtype!r}"
            )
        self.lonlat_dtype = np.dtype(lonlat_dtype)
        if time is not None:
            try:
                time = np.datetime64(time, "ns")
            except (TypeError, ValueError) as exc:
                raise InputError(f"time must be a UTC numpy.datetime64; got {time!r}") from exc
            if np.isnat(time):
                raise InputError(f"time must not be NaT; got {time!r}")
        self.time = time
        if class_flags is not None:
            try:
                values, meanings, thresholds = class_flags
                values = np.asarray(values, dtype=np.uint8)
                meanings = [str(m).strip().replace(" ", "_") for m in meanings]
                thresholds = np.asarray(thresholds, dtype=float)
            except (TypeError, ValueError) as exc:
                raise InputError(
                    f"class_flags must be (values, meanings, thresholds); got {class_flags!r}"
                ) from exc
            if len(values) != len(meanings) or len(values) == 0:
                raise InputError(
                    f"class_flags: {len(values)} values but {len(meanings)} meanings"
                )
            class_flags = (values, meanings, thresholds)
        self.class_flags = class_flags
        if not 0 <= int(complevel) <= 9:
            raise InputError(f"complevel must lie in 0..9; got {complevel!r}")
        self.complevel = int(complevel)
        if int(chunk_rows) != chunk_rows or chunk_rows <= 0:
            raise InputError(f"chunk_rows must be a positive integer; got {chunk_rows!r}")
        self.chunk_rows = int(chunk_rows)
        self.geographic = grid.crs.is_geographic
        self.lonlat = bool(lonlat) and not self.geographic
        self.overwrite = overwrite
        self._nc: Any = None
        self._file: _AtomicFile | None = None
        self._latlon_range = [np.inf, -np.inf, np.inf, -np.inf]

    def open(self) -> NetCDFWriter:
        """Create the temporary file and its metadata; called by ``with``."""
        import netCDF4

        if self._nc is not None:
            return self
        self._file = _AtomicFile(self.path, overwrite=self.overwrite)
        try:
            ll = 2 * self.lonlat_dtype.itemsize if self.lonlat else 0
            raw = self.grid.size * (4 * len(self.variables) + ll)
            check_free_space(self._file.tmp.parent, raw // 2)
            self._nc = netCDF4.Dataset(self._file.tmp, "w", format="NETCDF4")
            self._define()
        except BaseException:
            self.abort()
            raise
        return self

    def _define(self) -> None:
        nc, g = self._nc, self.grid
        ydim, xdim = ("lat", "lon") if self.geographic else ("y", "x")
        nc.createDimension(ydim, g.height)
        nc.createDimension(xdim, g.width)
        coords = g.cf_coordinates()
        for name, dim in (("y", ydim), ("x", xdim)):
            values, cattrs = coords[name]
            v = nc.createVariable(dim, "f8", (dim,))
            v.setncatts(cattrs)
            v[:] = values
        crs = nc.createVariable("crs", "i4", ())
        crs.setncatts(g.to_cf())
        aux = []
        if self.time is not None:
            t = nc.createVariable("time", "f8", ())
            t.setncatts({"standard_name": "time", "long_name": "scene time",
                         "units": "seconds since 1970-01-01 00:00:00", "calendar": "standard",
                         # numpy datetime64 arithmetic counts no leap seconds (CF 1.11 4.4.3)
                         "units_metadata": "leap_seconds: none"})
            t.assignValue((self.time - np.datetime64("1970-01-01T00:00:00", "ns"))
                          / np.timedelta64(1, "s"))
            aux.append("time")
        chunks = (min(self.chunk_rows, g.height), min(self.chunk_rows, g.width))
        if self.lonlat:
            for name, std, units in (("lat", "latitude", "degrees_north"),
                                     ("lon", "longitude", "degrees_east")):
                v = nc.createVariable(name, self.lonlat_dtype, (ydim, xdim),
                                      zlib=self.complevel > 0,
                                      complevel=self.complevel or None, chunksizes=chunks)
                v.setncatts({"standard_name": std, "long_name": std, "units": units})
            aux = ["lat", "lon"] + aux
        for name in self.variables:
            var = VARIABLES[name]
            dtype = np.dtype(var.dtype)
            fill = CLASS_NODATA if dtype == np.uint8 else np.nan
            v = nc.createVariable(name, dtype, (ydim, xdim), zlib=self.complevel > 0,
                                  complevel=self.complevel or None, chunksizes=chunks,
                                  fill_value=np.array(fill, dtype))
            atts: dict[str, Any] = {"long_name": var.long_name}
            if var.standard_name:
                atts["standard_name"] = var.standard_name
            if name == "glint_class":
                if self.class_flags is not None:
                    values, meanings, thresholds = self.class_flags
                    atts["flag_values"] = values
                    atts["flag_meanings"] = " ".join(meanings)
                    atts["valid_range"] = np.array([values.min(), values.max()], np.uint8)
                    atts["glint_class_thresholds"] = thresholds
            else:
                atts["units"] = var.units
            if var.comment:
                atts["comment"] = var.comment
            atts["grid_mapping"] = "crs"
            if aux:
                atts["coordinates"] = " ".join(aux)
            v.setncatts(atts)
        nc.setncatts(self._global_attrs())

    def _global_attrs(self) -> dict[str, Any]:
        now = _dt.datetime.now(_dt.timezone.utc).replace(microsecond=0)
        stamp = now.isoformat().replace("+00:00", "Z")
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
            attrs["time_coverage_start"] = attrs["time_coverage_end"] = _iso(self.time)
        if self.class_flags is not None:
            attrs["glint_class_thresholds"] = self.class_flags[2]
        attrs.update(self.attrs)
        out = {}
        for k, v in attrs.items():
            v = _nc_attr_value(v)
            if v is not None:
                out[str(k)] = v
        return out

    def write(self, row_slice: slice | Sequence[int], arrays: Mapping[str, Any] | Sequence[Any]) -> None:
        """Write full-width rows of every variable (and of lat/lon).

        Parameters
        ----------
        row_slice : slice or (int, int)
            Rows of the grid (step 1).
        arrays : mapping or sequence
            One ``(rows, width)`` array per variable, by name or in order.
        """
        if self._nc is None:
            raise OutputError(f"NetCDF writer for {str(self.path)!r} is not open")
        r0, r1 = _row_range(row_slice, self.grid.height)
        data = _strip_arrays(self.variables, arrays, (r1 - r0, self.grid.width))
        for name, a in zip(self.variables, data):
            self._nc.variables[name][r0:r1, :] = a.astype(VARIABLES[name].dtype, copy=False)
        lon, lat = self.grid.lonlat_rows(r0, r1)
        if self.lonlat:
            self._nc.variables["lat"][r0:r1, :] = lat
            self._nc.variables["lon"][r0:r1, :] = lon
        rng = self._latlon_range
        rng[:] = [min(rng[0], np.nanmin(lat)), max(rng[1], np.nanmax(lat)),
                  min(rng[2], np.nanmin(lon)), max(rng[3], np.nanmax(lon))]

    def close(self) -> None:
        """Write the geospatial extent attributes and rename into place."""
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
            assert self._file is not None
            self._file.commit()
        except BaseException:
            self.abort()
            raise
        log.info("wrote %s", self.path)

    def abort(self) -> None:
        """Close and delete the temporary file; the output is not created."""
        if self._nc is not None:
            with contextlib.suppress(Exception):
                self._nc.close()
            self._nc = None
        if self._file is not None:
            self._file.discard()

    def __enter__(self) -> NetCDFWriter:
        return self.open()

    def __exit__(self, exc_type: Any, exc: Any, tb: Any) -> None:
        if exc_type is None:
            self.close()
        else:
            self.abort()


# ------------------------------------------------------- in-memory datasets
def _dataset_strips(ds: Any, variables: list[str], block_rows: int) -> Iterator[tuple[slice, dict]]:
    missing = [v for v in variables if v not in ds.data_vars]
    if missing:
        raise InputError(f"dataset has no variable(s) {missing!r}; it has {list(ds.data_vars)!r}")
    for v in variables:
        if ds[v].ndim != 2:
            raise InputError(f"variable {v!r} has dims {ds[v].dims!r}; expected 2-D (y, x)")
    ydim = ds[variables[0]].dims[0]
    height = ds.sizes[ydim]
    for r0 in range(0, height, block_rows):
        rows = slice(r0, min(r0 + block_rows, height))
        strip = ds[variables].isel({ydim: rows}).compute()
        yield rows, {v: strip[v].values for v in variables}


def _default_variables(ds: Any, dtype_kind: str | None) -> list[str]:
    names = [v for v in ds.data_vars if v in VARIABLES]
    if dtype_kind is not None:
        names = [v for v in names if np.dtype(VARIABLES[v].dtype).kind == dtype_kind]
    return names


def write_dataset_geotiff(
    ds: Any,
    path: str | os.PathLike,
    grid: Grid,
    *,
    variables: Sequence[str] | None = None,
    block_rows: int = 512,
    **writer_options: Any,
) -> Path:
    """Write variables of an (optionally dask-backed) ``xarray.Dataset`` to a GeoTIFF.

    Parameters
    ----------
    ds : xarray.Dataset
        2-D variables with dims ``(y, x)`` matching ``grid``.
    path : str or path-like
        Output file.
    grid : Grid
    variables : sequence of str, optional
        Default: every floating-point variable of the table present in ``ds``.
    block_rows : int, optional
        Rows computed and written at a time (default 512).
    **writer_options
        Passed to :class:`GeoTiffWriter`.

    Returns
    -------
    pathlib.Path
        The written file.
    """
    names = list(variables) if variables is not None else _default_variables(ds, "f")
    with GeoTiffWriter(path, grid, names, **writer_options) as w:
        for rows, arrays in _dataset_strips(ds, w.variables, block_rows):
            w.write(rows, arrays)
    return Path(path)


def write_dataset_netcdf(
    ds: Any,
    path: str | os.PathLike,
    grid: Grid,
    *,
    variables: Sequence[str] | None = None,
    block_rows: int = 512,
    **writer_options: Any,
) -> Path:
    """Write variables of an (optionally dask-backed) ``xarray.Dataset`` to NetCDF.

    Parameters are those of :func:`write_dataset_geotiff`; ``variables``
    defaults to every table variable present in ``ds`` and
    ``writer_options`` go to :class:`NetCDFWriter`. A ``time`` coordinate of
    ``ds`` (scalar) is used unless ``time`` is given.
    """
    names = list(variables) if variables is not None else _default_variables(ds, None)
    if "time" not in writer_options and "time" in ds.coords and ds["time"].ndim == 0:
        writer_options["time"] = ds["time"].values
    with NetCDFWriter(path, grid, names, **writer_options) as w:
        for rows, arrays in _dataset_strips(ds, w.variables, block_rows):
            w.write(rows, arrays)
    return Path(path)


# --------------------------------------------------------------- output files
def output_stem(scene, time) -> str:
    """File-name stem of one scene time: ``<stem>_YYYYmmddTHHMMSSZ``.

    The time is always part of the name, so maps of other times (a
    ``--time`` override, a scene with several times) sit side by side.
    """
    t = np.datetime_as_string(np.datetime64(time, "s"), unit="s").replace("-", "").replace(":", "")
    return f"{scene.file_stem}_{t}Z"


def refuse_existing(paths, overwrite: bool) -> None:
    """OutputError naming the first of ``paths`` that exists, unless ``overwrite``."""
    if overwrite:
        return
    for path in paths:
        if path.exists():
            raise OutputError(
                f"output {str(path)!r} exists; use --overwrite (overwrite=True from Python) to replace it")


@contextlib.contextmanager
def output_directory(outdir: Path):
    """Create ``outdir`` if needed (see :func:`prepare_outdir`) for a run;
    if the run fails before writing anything, remove the directory again."""
    created = prepare_outdir(outdir)
    try:
        yield outdir
    except BaseException:
        if created and not any(outdir.iterdir()):
            outdir.rmdir()  # leave no trace of a run that wrote nothing
        raise


def prepare_outdir(outdir: Path) -> bool:
    """Create the output directory (not its parents); OutputError if impossible.

    Returns True when the directory was created by this call.
    """
    if outdir.exists() and not outdir.is_dir():
        raise OutputError(f"output directory {str(outdir)!r} is a file, not a directory")
    if outdir.is_dir():
        return False
    try:
        outdir.mkdir(parents=False, exist_ok=True)
    except FileNotFoundError as exc:
        raise OutputError(
            f"cannot create output directory {str(outdir)!r}: its parent does not exist"
        ) from exc
    except PermissionError as exc:
        raise OutputError(f"cannot create output directory {str(outdir)!r}: permission denied") from exc
    return True

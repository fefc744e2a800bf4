"""GeoTIFF and Cloud Optimized GeoTIFF writer, fed strip by strip.

:class:`GeoTiffWriter` follows :class:`glint.io.outputset.OutputWriter`: it
is built on the path an output set gives it (a temporary name in the output
directory), takes full-width strips or windows of them with
:meth:`~GeoTiffWriter.write` (reducing them into the overview levels as they
come, :mod:`glint.io.overviews`), finishes overviews (or the COG layout) in
:meth:`~GeoTiffWriter.close` and releases the dataset and removes the level
files in :meth:`~GeoTiffWriter.abort`. Renaming into place,
refusing existing files and removing temporaries on failure are the output
set's job (:class:`glint.io.outputset.OutputSet`).

Band names, units and CF metadata come from :data:`glint.variables.VARIABLES`.
"""

from __future__ import annotations

import contextlib
import logging
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from types import TracebackType
from typing import Any

import numpy as np

from glint._version import __version__
from glint.errors import InputError, OutputError
from glint.geo.grid import Grid
from glint.io.naming import check_free_space
from glint.io.outputset import OutputSet
from glint.io.overviews import OverviewLevels, append_overviews, overview_supported
from glint.io.strips import StripArrays, check_variables, dataset_strips, dataset_variables, \
    col_range, row_range, strip_arrays
from glint.variables import CLASS_NODATA, VARIABLES

__all__ = ["GeoTiffWriter", "write_dataset_geotiff", "write_category_sidecar", "gdal_threads",
           "COMPRESSIONS", "RESAMPLINGS"]

log = logging.getLogger(__name__)

#: Compressions :class:`GeoTiffWriter` accepts.
COMPRESSIONS = ("zstd", "deflate", "lzw", "lerc", "lerc_zstd", "lerc_deflate", "none")
#: Overview resampling methods :class:`GeoTiffWriter` accepts.
RESAMPLINGS = ("nearest", "average", "mode", "bilinear", "cubic", "min", "max", "rms")

Colormap = Mapping[int, tuple[int, int, int, int]]


# ------------------------------------------------------------ the options
@dataclass(frozen=True)
class _Compression:
    """Checked compression settings, turned into GDAL creation options."""

    method: str
    level: int | None
    max_z_error: float | None
    predictor: int

    @classmethod
    def check(cls, compress: str | None, level: int | None, max_z_error: float | None,
              predictor: int | None, *, is_float: bool) -> _Compression:
        method = "none" if compress is None else str(compress).lower()
        if method not in COMPRESSIONS:
            raise InputError(f"compress must be one of {COMPRESSIONS!r}; got {compress!r}")
        if predictor is None:
            predictor = 1 if method.startswith("lerc") or method == "none" else (3 if is_float else 2)
        if predictor not in (1, 2, 3) or (predictor == 3 and not is_float):
            raise InputError(
                f"predictor must be 1, 2 or 3 (3 only for floating types); got {predictor!r}"
            )
        return cls(method, level, max_z_error, predictor)

    def options(self, *, cog: bool) -> dict[str, Any]:
        """Creation options of the GTiff driver (``cog=False``) or of the COG
        driver, which spells levels and predictors its own way."""
        opts: dict[str, Any] = {"compress": self.method.upper()}
        if self.method == "zstd":
            opts["level" if cog else "zstd_level"] = 1 if self.level is None else self.level
        elif self.method == "deflate":
            opts["level" if cog else "zlevel"] = 6 if self.level is None else self.level
        elif self.method.startswith("lerc"):
            opts["max_z_error"] = self.max_z_error or 0.0
        if self.predictor != 1:
            opts["predictor"] = (
                {2: "STANDARD", 3: "FLOATING_POINT"}[self.predictor] if cog else self.predictor
            )
        return opts


def gdal_threads() -> str:
    """GDAL's compression threads for a writer: the ``GDAL_NUM_THREADS``
    environment variable when set (a batch worker sets its share of the
    cores there), else ``"ALL_CPUS"``.

    Examples
    --------
    >>> import os
    >>> os.environ.get("GDAL_NUM_THREADS", "ALL_CPUS") == gdal_threads()
    True
    """
    return os.environ.get("GDAL_NUM_THREADS") or "ALL_CPUS"


def _file_dtype(variables: Sequence[str], dtype: str | None) -> np.dtype[Any]:
    """The one data type of a GeoTIFF holding ``variables``."""
    if dtype is not None:
        return np.dtype(dtype)
    dtypes = {VARIABLES[v].dtype for v in variables}
    if len(dtypes) > 1:
        raise InputError(
            f"variables {list(variables)!r} mix data types {sorted(dtypes)!r}; a GeoTIFF "
            "holds one type: write glint_class to a file of its own"
        )
    return np.dtype(dtypes.pop())


def _default_nodata(dtype: np.dtype[Any]) -> float | None:
    if np.issubdtype(dtype, np.floating):
        return float("nan")
    return float(CLASS_NODATA) if dtype == np.uint8 else None


def write_category_sidecar(path: str | os.PathLike[str], names: Sequence[str]) -> Path:
    """Write the GDAL ``.aux.xml`` sidecar naming the values of band 1.

    GDAL keeps category names and raster attribute tables of a GeoTIFF in a
    PAM sidecar (``<file>.aux.xml``); GDAL-based GIS software reads them from
    there. Value ``i`` is named ``names[i]``.

    Returns
    -------
    Path
        The sidecar's path.
    """
    from xml.sax.saxutils import escape

    cats = "\n".join(f"      <Category>{escape(n)}</Category>" for n in names)
    rows = "\n".join(f'      <Row index="{i}"><F>{i}</F><F>{escape(n)}</F></Row>'
                     for i, n in enumerate(names))
    xml = f"""<PAMDataset>
  <PAMRasterBand band="1">
    <CategoryNames>
{cats}
    </CategoryNames>
    <GDALRasterAttributeTable tableType="thematic">
      <FieldDefn index="0"><Name>value</Name><Type>0</Type><Usage>5</Usage></FieldDefn>
      <FieldDefn index="1"><Name>class</Name><Type>2</Type><Usage>2</Usage></FieldDefn>
{rows}
    </GDALRasterAttributeTable>
  </PAMRasterBand>
</PAMDataset>
"""
    sidecar = Path(os.fspath(path) + ".aux.xml")
    sidecar.write_text(xml, encoding="utf-8")
    return sidecar


def overview_factors(shape: tuple[int, int], blocksize: int) -> list[int]:
    """Overview factors 2, 4, 8, ... until the coarsest level fits in one tile
    (as GDAL's COG driver chooses them).

    Examples
    --------
    >>> overview_factors((600, 700), 512), overview_factors((100, 100), 512)
    ([2], [])
    """
    factors, f, size = [], 2, max(shape)
    while size / (f // 2) > blocksize:
        factors.append(f)
        f *= 2
    return factors


def _describe_bands(dst: Any, variables: Sequence[str], tags: Mapping[str, str],
                    colormap: Colormap | None) -> None:
    """Band names, units and CF tags from the variable table; file tags; palette."""
    for i, name in enumerate(variables, start=1):
        var = VARIABLES[name]
        dst.set_band_description(i, name)
        dst.set_band_unit(i, var.units)
        band_tags = {"long_name": var.long_name}
        if var.standard_name:
            band_tags["standard_name"] = var.standard_name
        if var.comment:
            band_tags["comment"] = var.comment
        dst.update_tags(i, **band_tags)
    dst.update_tags(AREA_OR_POINT="Area", TIFFTAG_SOFTWARE=f"glint {__version__}", **tags)
    if colormap and len(variables) == 1 and dst.dtypes[0] == "uint8":
        dst.write_colormap(1, colormap)


# ------------------------------------------------------------- the writer
class GeoTiffWriter:
    """Stream strips of one or more variables into a GeoTIFF or COG.

    Parameters
    ----------
    path : str or path-like
        The file to write (``.tif``); inside an output set, the temporary
        path the set gives (:meth:`glint.io.outputset.OutputSet.writer`).
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
        level is smaller than ``blocksize`` (default True). With
        ``"average"`` on a float file with NaN nodata, or ``"nearest"``, they
        are computed from the windows as they are written
        (:class:`glint.io.overviews.OverviewLevels`: each level streamed into
        ``<file>.level<k>.tif`` beside the file, appended to it at close and
        removed), equal to GDAL's (see :mod:`glint.io.overviews` for the
        rows at GDAL's block edges when a side is odd); otherwise, or when
        the windows do not come as strips of rows from top to bottom (each
        strip's windows from left to right), GDAL builds them from the
        finished file at close.
    resampling : str, optional
        Overview resampling; default ``"average"`` for floats, ``"nearest"``
        for integers (``"mode"`` also suits classes; GDAL builds it).
    cog : bool, optional
        Write a Cloud Optimized GeoTIFF: the strips go to a working GeoTIFF
        beside ``path`` (with its overviews, as above) that GDAL's COG driver
        copies into the final layout at close, reusing those overviews.
    tags : mapping, optional
        Dataset-level metadata (scene time, sun angles, class thresholds);
        values are converted with ``str``.
    num_threads : str or int, optional
        GDAL compression threads, default :func:`gdal_threads`.
    cache_mb : int, optional
        GDAL block cache while writing [MB], default 256: strips and windows
        of whole tiles are compressed and flushed as they arrive, so memory
        stays bounded whatever the grid size (when GDAL builds the
        overviews, a smaller cache makes it re-read more of the file).
    colormap : mapping of int to (r, g, b, a), optional
        Palette of a one-band uint8 file (GIS software shows the classes in
        these colours).
    categories : sequence of str, optional
        Names of the values 0, 1, ... of a one-band uint8 file. Written, as
        GDAL keeps them for GeoTIFF, in a ``.aux.xml`` sidecar beside the
        file: category names and a thematic raster attribute table (value,
        class name), which GDAL-based GIS software shows as the legend. The
        output set renames the sidecar with its file.

    Raises
    ------
    InputError
        Unknown variable, mixed data types, unknown compression or resampling.
    OutputError
        Not enough disk space (the map's raw size over 2, plus a sixth for the
        overview levels when they are computed from the windows).

    Examples
    --------
    >>> import tempfile, os
    >>> from glint.io.outputset import OutputSet
    >>> g = Grid.from_bounds((0, 0, 100, 50), 10, 32631)
    >>> d = tempfile.mkdtemp()
    >>> with OutputSet(d, {"map": "f.tif"}) as out:
    ...     w = out.writer("map", lambda p: GeoTiffWriter(p, g, ["glint_fraction"]))
    ...     w.write(slice(0, 5), {"glint_fraction": np.zeros((5, 10), "float32")})
    >>> os.listdir(d)
    ['f.tif']
    """

    def __init__(
        self,
        path: str | os.PathLike[str],
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
        tags: Mapping[str, Any] | None = None,
        num_threads: str | int | None = None,
        cache_mb: int = 256,
        colormap: Colormap | None = None,
        categories: Sequence[str] | None = None,
    ) -> None:
        self.path = Path(path)
        self.grid = grid
        self.variables = check_variables(variables)
        self.dtype = _file_dtype(self.variables, dtype)
        is_float = bool(np.issubdtype(self.dtype, np.floating))
        self.nodata = _default_nodata(self.dtype) if nodata is None else nodata
        self.compression = _Compression.check(compress, level, max_z_error, predictor,
                                              is_float=is_float)
        if int(blocksize) != blocksize or blocksize <= 0 or blocksize % 16:
            raise InputError(f"blocksize must be a positive multiple of 16; got {blocksize!r}")
        self.blocksize = int(blocksize)
        self.bigtiff = bigtiff
        self.overviews = bool(overviews)
        resampling = resampling or ("average" if is_float else "nearest")
        if resampling not in RESAMPLINGS:
            raise InputError(f"resampling must be one of {RESAMPLINGS!r}; got {resampling!r}")
        self.resampling = resampling
        self.cog = bool(cog)
        self.tags = {str(k): str(v) for k, v in (tags or {}).items()}
        self.num_threads = gdal_threads() if num_threads is None else str(num_threads)
        self.cache_mb = int(cache_mb)
        self.colormap = dict(colormap) if colormap else None
        self.categories = tuple(str(c) for c in categories) if categories else None
        if self.categories and (len(self.variables) != 1 or self.dtype != np.uint8):
            raise InputError(f"categories name the values of a one-band uint8 file; got "
                             f"{len(self.variables)} band(s) of {self.dtype}")
        #: Where the strips go: ``path``, or the working copy of a COG.
        self.work_path = Path(f"{self.path}.work.tif") if self.cog else self.path
        self._dst: Any = None
        self._levels: OverviewLevels | None = None
        #: After :meth:`close`: ``"windows"`` when the overviews were computed
        #: from the written windows, ``"gdal"`` when GDAL built them from the
        #: file (for a COG without overviews from the windows, the COG driver
        #: builds them), None without overviews.
        self.overviews_from: str | None = None
        self._open()

    @property
    def factors(self) -> list[int]:
        """Overview factors of the map (none when the map fits one tile)."""
        return overview_factors(self.grid.shape, self.blocksize)

    @property
    def compress(self) -> str:
        """The compression method."""
        return self.compression.method

    def _env(self) -> Any:
        """GDAL settings around every GDAL call of this writer (a bounded
        block cache: full strips are compressed and flushed as they come)."""
        import rasterio

        return rasterio.Env(GDAL_CACHEMAX=self.cache_mb, GDAL_NUM_THREADS=self.num_threads)

    def _profile(self) -> dict[str, Any]:
        """rasterio profile of the file the strips are written to."""
        from rasterio.crs import CRS as RioCRS

        profile: dict[str, Any] = dict(
            driver="GTiff", width=self.grid.width, height=self.grid.height,
            count=len(self.variables), dtype=self.dtype.name,
            crs=RioCRS.from_wkt(self.grid.crs.to_wkt()), transform=self.grid.transform,
            nodata=self.nodata, tiled=True, blockxsize=self.blocksize,
            blockysize=self.blocksize, interleave="band", bigtiff=self.bigtiff,
            num_threads=self.num_threads, **self.compression.options(cog=False),
        )
        if self.cog:  # a fast working copy; the COG driver recompresses
            profile.update(compress="ZSTD", zstd_level=1)
            profile.pop("zlevel", None)
            profile.pop("max_z_error", None)
        return profile

    def _open(self) -> None:
        import rasterio

        raw = self.grid.size * self.dtype.itemsize * len(self.variables)
        # compressed output rarely exceeds half the raw size; a COG needs a
        # copy; overview levels add a third of the map (written twice: as
        # level files, then appended)
        levels = self.overviews and overview_supported(
            self.resampling, self.dtype, self.nodata) and bool(self.factors)
        check_free_space(self.path.parent,
                         raw // (1 if self.cog else 2) + (raw // 6 if levels else 0))
        try:
            with self._env():
                profile = self._profile()
                self._dst = rasterio.open(self.work_path, "w", **profile)
                _describe_bands(self._dst, self.variables, self.tags, self.colormap)
            if levels:
                level_profile = {k: v for k, v in profile.items()
                                 if k not in ("crs", "transform", "width", "height", "count",
                                              "dtype", "bigtiff")}
                self._levels = OverviewLevels(
                    self.work_path, self.grid.shape, len(self.factors), len(self.variables),
                    self.dtype, self.resampling, level_profile, self._env)
        except BaseException:
            self.abort()
            raise

    def write(self, rows: slice | Sequence[int], arrays: StripArrays,
              cols: slice | Sequence[int] | None = None) -> None:
        """Write rows of every variable: full-width, or a window of them.

        Parameters
        ----------
        rows : slice or (int, int)
            Rows of the grid (step 1).
        arrays : mapping or sequence
            One ``(rows, columns)`` array per variable, by name or in order;
            converted to the file's data type.
        cols : slice or (int, int), optional
            Columns of the window (default: all). Windows whose edges fall on
            tile edges (multiples of ``blocksize``) write whole tiles.
        """
        from rasterio.windows import Window

        if self._dst is None:
            raise OutputError(f"GeoTIFF writer for {str(self.path)!r} is closed")
        r0, r1 = row_range(rows, self.grid.height)
        c0, c1 = col_range(cols, self.grid.width)
        data = strip_arrays(self.variables, arrays, (r1 - r0, c1 - c0))
        window = Window(c0, r0, c1 - c0, r1 - r0)
        data = [a.astype(self.dtype, copy=False) for a in data]
        with self._env():
            for i, a in enumerate(data, start=1):
                self._dst.write(a, i, window=window)
        if self._levels is not None and r1 > r0 and c1 > c0:
            self._levels.add(r0, r1, c0, c1, data)

    def close(self) -> None:
        """Finish the overviews (or the COG layout) and the file."""
        import rasterio
        from rasterio.enums import Resampling

        if self._dst is None:
            return
        try:
            level_paths = self._levels.finish() if self._levels is not None else []
            with self._env():
                if self.overviews and self.factors and not self.cog:
                    if not level_paths:
                        self._dst.build_overviews(self.factors, Resampling[self.resampling])
                        self.overviews_from = "gdal"
                    self._dst.update_tags(ns="rio_overview", resampling=self.resampling)
                self._dst.close()
                self._dst = None
                if level_paths:
                    self.overviews_from = "windows"
                    if not append_overviews(self.work_path, level_paths):
                        # a classic TIFF would pass 4 GiB: GDAL builds them
                        log.info("overviews of %s built by GDAL (classic TIFF size limit)",
                                 self.path)
                        with rasterio.open(self.work_path, "r+") as dst:
                            dst.build_overviews(self.factors, Resampling[self.resampling])
                        self.overviews_from = "gdal"
                if self._levels is not None:
                    self._levels.discard()
                if self.cog:  # the COG driver reuses the working copy's overviews
                    self._copy_to_cog(existing=bool(level_paths))
                if self.categories:
                    write_category_sidecar(self.path, self.categories)
        except BaseException:
            self.abort()
            raise
        log.info("wrote %s", self.path)

    def _copy_to_cog(self, existing: bool) -> None:
        import rasterio.shutil

        rasterio.shutil.copy(
            self.work_path, self.path, driver="COG",
            blocksize=self.blocksize, bigtiff=self.bigtiff,
            overviews="FORCE_USE_EXISTING" if existing else "AUTO" if self.overviews else "NONE",
            overview_resampling=self.resampling, resampling=self.resampling,
            num_threads=self.num_threads, **self.compression.options(cog=True),
        )
        self._remove_work_files()

    def _remove_work_files(self) -> None:
        if not self.cog:
            return
        d = self.work_path.parent
        for p in list(d.iterdir()) if d.is_dir() else []:
            if p.name == self.work_path.name or p.name.startswith(self.work_path.name + "."):
                with contextlib.suppress(FileNotFoundError):
                    p.unlink()

    def abort(self) -> None:
        """Close the dataset, remove the overview level files and the COG's
        working copy; the file at :attr:`path` is removed by the output set."""
        if self._dst is not None:
            with contextlib.suppress(Exception):
                self._dst.close()
            self._dst = None
        if self._levels is not None:
            self._levels.discard()
        self._remove_work_files()

    def __enter__(self) -> GeoTiffWriter:
        return self

    def __exit__(self, exc_type: type[BaseException] | None, exc: BaseException | None,
                 tb: TracebackType | None) -> None:
        if exc_type is None:
            self.close()
        else:
            self.abort()


def write_dataset_geotiff(
    ds: Any,
    path: str | os.PathLike[str],
    grid: Grid,
    *,
    variables: Sequence[str] | None = None,
    block_rows: int = 512,
    overwrite: bool = False,
    **writer_options: Any,
) -> Path:
    """Write variables of an (optionally dask-backed) ``xarray.Dataset`` to a
    GeoTIFF, all or nothing (an output set of one file).

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
    overwrite : bool, optional
        Replace an existing file (default: refuse it).
    **writer_options
        Passed to :class:`GeoTiffWriter`.

    Returns
    -------
    pathlib.Path
        The written file.
    """
    path = Path(path)
    names = list(variables) if variables is not None else dataset_variables(ds, "f")
    with OutputSet(path.parent, {"file": path.name}, overwrite=overwrite) as out:
        w = out.writer("file", lambda p: GeoTiffWriter(p, grid, names, **writer_options))
        for rows, arrays in dataset_strips(ds, w.variables, block_rows):
            w.write(rows, arrays)
    return path

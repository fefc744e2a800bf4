"""GeoTIFFs written strip by strip from a profile: copies of an analyst's
image (masked, corrected) that keep its profile, and the rasters that go
with them (glint prediction, classes, quality flags, samples).

:class:`ProfileWriter` follows :class:`glint.io.outputset.OutputWriter`: an
:class:`~glint.io.outputset.OutputSet` builds it on a temporary path, it
takes strips of whole rows, and the set renames the file into place when the
whole set is written.
"""

from __future__ import annotations

import contextlib
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any, Callable, TypeVar, cast

import numpy as np
from numpy.typing import NDArray

from glint._version import __version__
from glint.errors import OutputError
from glint.geo.grid import Grid
from glint.geo.image import ImageInfo
from glint.io.geotiff import gdal_threads

__all__ = ["ProfileWriter", "copy_profile", "grid_profile", "raster_env", "with_raster_env", "BANDS", "CACHE_MB"]

#: GDAL block cache while an imagery run reads and writes [MB]: whole strips
#: are compressed and flushed as they come, so memory stays bounded (GDAL's
#: own default is 5 % of the machine's memory).
CACHE_MB = 256


def with_raster_env(func: F) -> F:
    """Run ``func`` inside :func:`raster_env`."""
    import functools

    @functools.wraps(func)
    def run(*args: Any, **kwargs: Any) -> Any:
        with raster_env():
            return func(*args, **kwargs)

    return cast(F, run)


def raster_env() -> Any:
    """A ``rasterio.Env`` for a run: bounded block cache, compression threads."""
    import rasterio

    return rasterio.Env(GDAL_CACHEMAX=CACHE_MB, GDAL_NUM_THREADS=gdal_threads())

F = TypeVar("F", bound=Callable[..., Any])

#: Key of the ``(count, rows, cols)`` array in the strips given to
#: :meth:`ProfileWriter.write`.
BANDS = "bands"

#: Profile keys GDAL's GTiff driver accepts as creation options besides the
#: raster's shape, type and georeferencing.
_CREATION_KEYS = ("tiled", "blockxsize", "blockysize", "compress", "interleave", "predictor",
                  "photometric", "zstd_level", "zlevel", "bigtiff")


def copy_profile(image: ImageInfo, *, count: int | None = None) -> dict[str, Any]:
    """The image's profile for a GeoTIFF copy (same dtype, nodata, CRS,
    transform, tiling, compression, interleave, predictor)."""
    p = dict(image.profile)
    p["driver"] = "GTiff"
    if count is not None:
        p["count"] = int(count)
    # JPEG is lossy: a copy re-encoded with it would not hold the values
    # written; keep the layout, store losslessly.
    if str(p.get("compress", "")).lower() in ("jpeg", "webp") and p.get("photometric") != "ycbcr":
        p["compress"] = "deflate"
    if str(p.get("photometric", "")).lower() == "ycbcr":
        p.pop("photometric")
        p["compress"] = "deflate"
    if p.get("count", 1) > 1 and str(p.get("interleave", "")).lower() not in ("band", "pixel"):
        p["interleave"] = "pixel"
    return p


def grid_profile(grid: Grid, *, dtype: str, count: int = 1, nodata: float | None = None,
                 compress: str = "zstd") -> dict[str, Any]:
    """A tiled, compressed GeoTIFF profile on ``grid``."""
    from rasterio.crs import CRS as RioCRS

    is_float = np.issubdtype(np.dtype(dtype), np.floating)
    p: dict[str, Any] = dict(driver="GTiff", width=grid.width, height=grid.height, count=count,
                             dtype=dtype, crs=RioCRS.from_wkt(grid.crs.to_wkt()),
                             transform=grid.transform, nodata=nodata, compress=compress,
                             predictor=3 if is_float else 2, interleave="band")
    if grid.width >= 256 or grid.height >= 256:
        p.update(tiled=True, blockxsize=512, blockysize=512)
    if compress == "zstd":
        p["zstd_level"] = 1
    return p


class ProfileWriter:
    """Write a GeoTIFF with a given profile, one strip of rows at a time.

    Parameters
    ----------
    path : path-like
        File to write (a temporary path of an output set).
    profile : mapping
        rasterio profile (``width``, ``height``, ``count``, ``dtype``,
        ``crs``, ``transform``, ``nodata`` and creation options).
    descriptions, units : sequence of str, optional
        Per band.
    tags : mapping, optional
        Dataset tags.
    band_tags : sequence of mapping, optional
        Tags of each band.
    scales, offsets : sequence of float, optional
        Band scale factors and offsets.
    colorinterp : sequence, optional
        Colour interpretation of each band.
    colormap : mapping, optional
        Palette of a one-band uint8 file.
    mask : bool, optional
        Also write a per-dataset mask (GDAL internal mask band); strips then
        carry the key ``"mask"`` (True = valid).
    """

    def __init__(self, path: str | Path, profile: Mapping[str, Any], *,
                 descriptions: Sequence[str | None] | None = None,
                 units: Sequence[str | None] | None = None,
                 tags: Mapping[str, Any] | None = None,
                 band_tags: Sequence[Mapping[str, Any]] | None = None,
                 scales: Sequence[float] | None = None, offsets: Sequence[float] | None = None,
                 colorinterp: Sequence[Any] | None = None,
                 colormap: Mapping[int, tuple[int, int, int, int]] | None = None,
                 mask: bool = False) -> None:
        import rasterio

        self.path = Path(path)
        self.profile = dict(profile)
        self.mask = bool(mask)
        creation = {k: v for k, v in self.profile.items() if k in _CREATION_KEYS}
        base = {k: self.profile[k] for k in ("driver", "width", "height", "count", "dtype", "crs",
                                             "transform", "nodata") if k in self.profile}
        try:
            self._dst: Any = rasterio.open(self.path, "w", **base, **creation,
                                           num_threads=gdal_threads())
            dst = self._dst
            for i in range(1, dst.count + 1):
                if descriptions and i <= len(descriptions) and descriptions[i - 1]:
                    dst.set_band_description(i, str(descriptions[i - 1]))
                if units and i <= len(units) and units[i - 1]:
                    dst.set_band_unit(i, str(units[i - 1]))
                if band_tags and i <= len(band_tags) and band_tags[i - 1]:
                    dst.update_tags(i, **{str(k): str(v) for k, v in band_tags[i - 1].items()})
            if scales:
                dst.scales = tuple(scales)
            if offsets:
                dst.offsets = tuple(offsets)
            if colorinterp and len(colorinterp) == dst.count:
                with contextlib.suppress(Exception):  # GDAL refuses some combinations
                    dst.colorinterp = tuple(colorinterp)
            all_tags = {str(k): str(v) for k, v in (tags or {}).items()}
            all_tags.setdefault("TIFFTAG_SOFTWARE", f"glint {__version__}")
            dst.update_tags(**all_tags)
            if colormap:
                dst.write_colormap(1, dict(colormap))
        except BaseException:
            self.abort()
            raise

    def write(self, rows: slice, arrays: Mapping[str, NDArray[Any]],
              cols: slice | None = None) -> None:
        """Write the strip ``rows`` (or its window ``cols``): ``arrays[BANDS]``
        of shape (count, rows, columns) (or (rows, columns) for one band), and
        ``arrays["mask"]`` (True = valid) when the file has a mask."""
        from rasterio.windows import Window

        if self._dst is None:
            raise OutputError(f"raster writer for {str(self.path)!r} is closed")
        r0, r1, _ = rows.indices(self._dst.height)
        c0, c1, _ = (cols or slice(None)).indices(self._dst.width)
        window = Window(c0, r0, c1 - c0, r1 - r0)
        data = np.asarray(arrays[BANDS])
        if data.ndim == 2:
            data = data[None]
        self._dst.write(data.astype(self._dst.dtypes[0], copy=False), window=window)
        if self.mask:
            m = np.asarray(arrays["mask"], dtype=bool)
            self._dst.write_mask(np.where(m, 255, 0).astype(np.uint8), window=window)

    def close(self) -> None:
        """Finish the file."""
        if self._dst is not None:
            dst, self._dst = self._dst, None
            dst.close()

    def abort(self) -> None:
        """Release the file after a failure (the output set removes it)."""
        if getattr(self, "_dst", None) is not None:
            with contextlib.suppress(Exception):
                self._dst.close()
            self._dst = None

"""An analyst's own image: its grid, profile and bands, read strip by strip.

:func:`open_image` checks what every imagery step needs (a CRS, a north-up
transform, one data type for every band) and returns an :class:`ImageInfo`
holding the image's full profile, so that copies of the image keep it.
:meth:`ImageInfo.read` reads a strip of whole rows of some or all bands;
nothing is ever written to the image.

The acquisition time may be stored in the image as the dataset tag
:data:`TIME_TAG` (ISO 8601 with ``Z`` or an offset, e.g.
``2026-06-14T10:30:00Z``).
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import NDArray

from glint.errors import GridError, InputError, InputFileError
from glint.geo.grid import Grid
from glint.times import parse_time

__all__ = ["ImageInfo", "open_image", "TIME_TAG", "valid_pixels", "dtype_limits"]

#: Dataset tag holding the image's acquisition time (UTC, ISO 8601 with a
#: zone); read when no time is given.
TIME_TAG = "ACQUISITION_TIME"


@dataclass(frozen=True)
class ImageInfo:
    """What glint knows of an image file.

    Attributes
    ----------
    path : pathlib.Path
        The file.
    grid : Grid
        Its grid (CRS, transform, shape).
    count : int
        Number of bands.
    dtype : numpy.dtype
        The one data type of every band.
    nodata : float or None
        The no-data value (None when the image declares none).
    profile : dict
        rasterio profile (driver, dtype, nodata, CRS, transform, tiling,
        compression, interleave, predictor when known).
    descriptions : tuple of str or None
        Band descriptions.
    units : tuple of str
        Band units.
    tags : dict
        Dataset tags.
    band_tags : tuple of dict
        Tags of each band.
    scales, offsets : tuple of float
        Band scale factors and offsets.
    colorinterp : tuple
        Colour interpretation of each band.
    time : numpy.datetime64 or None
        Acquisition time from :data:`TIME_TAG`, if present.
    """

    path: Path
    grid: Grid
    count: int
    dtype: np.dtype
    nodata: float | None
    profile: dict[str, Any] = field(repr=False)
    descriptions: tuple[str | None, ...] = field(repr=False, default=())
    units: tuple[str | None, ...] = field(repr=False, default=())
    tags: dict[str, str] = field(repr=False, default_factory=dict)
    band_tags: tuple[dict[str, str], ...] = field(repr=False, default=())
    scales: tuple[float, ...] = field(repr=False, default=())
    offsets: tuple[float, ...] = field(repr=False, default=())
    colorinterp: tuple[Any, ...] = field(repr=False, default=())
    time: np.datetime64 | None = None

    def check_band(self, band: int, what: str) -> int:
        """A 1-based band number of this image; InputError otherwise."""
        if isinstance(band, bool) or not isinstance(band, (int, np.integer)) \
                or not 1 <= int(band) <= self.count:
            raise InputError(f"{what} {band!r} is not a band of {str(self.path)!r}; allowed: "
                             f"1 to {self.count} (bands are numbered from 1)")
        return int(band)

    def read(self, rows: slice, bands: Sequence[int] | None = None) -> NDArray[Any]:
        """Bands of a strip of whole rows, in the image's own data type.

        Parameters
        ----------
        rows : slice
            Rows (step 1).
        bands : sequence of int, optional
            1-based band numbers (default all).

        Returns
        -------
        numpy.ndarray, shape (len(bands), rows, width)
        """
        import rasterio

        idx = list(range(1, self.count + 1)) if bands is None else [int(b) for b in bands]
        with rasterio.open(self.path) as src:
            return np.asarray(src.read(idx, window=self.grid.window(rows)))

    def read_mask(self, rows: slice, bands: NDArray[Any] | None = None) -> NDArray[np.bool_]:
        """True where the image has data in every band (strip of rows).

        Uses GDAL's per-dataset mask when the image has one (an internal mask
        band or an alpha band), and the no-data value (NaN for floating-point
        images) otherwise; ``bands`` (the strip as read) saves reading it
        again.
        """
        import rasterio

        if not self.has_mask_band:
            data = bands if bands is not None else self.read(rows)
            return valid_pixels(data, self.nodata)
        with rasterio.open(self.path) as src:
            return np.asarray(src.dataset_mask(window=self.grid.window(rows))) > 0

    @property
    def has_mask_band(self) -> bool:
        """Whether GDAL gives the image a per-dataset mask or alpha band."""
        import rasterio
        from rasterio.enums import MaskFlags

        with rasterio.open(self.path) as src:
            return any(MaskFlags.per_dataset in f or MaskFlags.alpha in f
                       for f in src.mask_flag_enums)


def valid_pixels(bands: NDArray[Any], nodata: float | None) -> NDArray[np.bool_]:
    """True where no band holds ``nodata`` (or NaN): ``bands`` is (count, rows, cols)."""
    b = np.asarray(bands)
    ok = np.ones(b.shape[1:], dtype=bool)
    if np.issubdtype(b.dtype, np.floating):
        ok &= np.all(np.isfinite(b), axis=0)
    if nodata is not None and not (isinstance(nodata, float) and np.isnan(nodata)):
        ok &= np.all(b != nodata, axis=0)
    return ok


def dtype_limits(dtype: Any) -> tuple[float, float]:
    """Smallest and largest value of a data type (±inf for floating types)."""
    dt = np.dtype(dtype)
    if np.issubdtype(dt, np.integer):
        info = np.iinfo(dt)
        return float(info.min), float(info.max)
    return -np.inf, np.inf


def open_image(path: str | os.PathLike[str]) -> ImageInfo:
    """Open an image and check that glint can work on it.

    Parameters
    ----------
    path : path-like
        A raster GDAL reads (GeoTIFF in practice).

    Returns
    -------
    ImageInfo

    Raises
    ------
    InputFileError
        The file is missing or not a raster.
    GridError
        The image has no CRS, no geotransform, or a rotated one.
    InputError
        Its bands do not all share one data type, or the time tag cannot be
        read as a UTC instant.
    """
    import rasterio
    from rasterio.errors import RasterioIOError

    p = Path(path).expanduser()
    if not p.is_file():
        raise InputFileError(f"image {str(p)!r} does not exist or is not a file")
    try:
        with rasterio.open(p) as src:
            dtypes = tuple(src.dtypes)
            if len(set(dtypes)) > 1:
                raise InputError(f"image {str(p)!r} mixes band data types {list(dtypes)!r}; "
                                 "allowed: one data type for every band (convert the image, "
                                 "e.g. with gdal_translate -ot)")
            if src.crs is None:
                raise GridError(f"image {str(p)!r} has no CRS; allowed: a georeferenced image "
                                "(assign one, e.g. gdal_edit.py -a_srs EPSG:32631)")
            if src.transform.is_identity and not src.gcps[0]:
                raise GridError(f"image {str(p)!r} has no geotransform (transform "
                                f"{tuple(src.transform)[:6]!r}); allowed: a georeferenced, "
                                "north-up image")
            try:
                grid = Grid(src.crs, src.transform, (src.height, src.width))
            except GridError as exc:
                raise GridError(f"image {str(p)!r}: {exc}") from None
            profile = dict(src.profile)
            structure = src.tags(ns="IMAGE_STRUCTURE")
            if "PREDICTOR" in structure:
                profile["predictor"] = int(structure["PREDICTOR"])
            tags = dict(src.tags())
            info = ImageInfo(
                path=p, grid=grid, count=src.count, dtype=np.dtype(dtypes[0]),
                nodata=src.nodata, profile=profile,
                descriptions=tuple(src.descriptions), units=tuple(src.units),
                tags=tags, band_tags=tuple(dict(src.tags(i)) for i in range(1, src.count + 1)),
                scales=tuple(src.scales), offsets=tuple(src.offsets),
                colorinterp=tuple(src.colorinterp),
                time=_tag_time(tags, p),
            )
    except RasterioIOError as exc:
        raise InputFileError(f"cannot read image {str(p)!r}: {exc}") from None
    return info


def _tag_time(tags: dict[str, str], path: Path) -> np.datetime64 | None:
    for key, value in tags.items():
        if key.upper() == TIME_TAG:
            return parse_time(value.strip(), f"tag {key} of image {str(path)!r}")
    return None

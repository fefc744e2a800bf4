"""Where the water is, on an image's grid.

Four sources, one per run:

* ``all``: every pixel with data is water (the default);
* a **raster** mask in any CRS (non-zero = water; zero and its no-data =
  land), resampled to the image grid with nearest neighbour (GDAL's warper
  through :func:`rasterio.warp.reproject`);
* **polygons** of water from a GeoJSON file in any CRS, rasterised onto the
  image grid (pixel centres inside);
* the image's own **bands**: the normalised difference water index of
  McFeeters (1996), ``NDWI = (green - NIR) / (green + NIR)``, with water
  where ``NDWI > threshold`` (default :data:`NDWI_THRESHOLD` = 0, the
  threshold McFeeters gives: water has positive values, soil and
  vegetation zero or negative; from memory of the paper).

Land gets no glint values, and the image's no-data pixels are never water.

References
----------
McFeeters, S.K. (1996) The use of the Normalized Difference Water Index
(NDWI) in the delineation of open water features. International Journal of
Remote Sensing 17(7), 1425-1432, doi:10.1080/01431169608948714.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Literal

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.errors import InputError, InputFileError
from glint.geo.image import ImageInfo
from glint.geo.vector import Polygons, read_polygons

__all__ = ["WaterSource", "water_source", "ndwi", "ndwi_water", "NDWI_THRESHOLD",
           "WATER_KINDS"]

#: NDWI above which a pixel is water (McFeeters 1996; from memory).
NDWI_THRESHOLD = 0.0
#: Kinds of water source.
WATER_KINDS: tuple[str, ...] = ("all", "raster", "polygons", "bands")
_VECTOR_SUFFIXES = (".geojson", ".json")


def ndwi(green: ArrayLike, nir: ArrayLike) -> NDArray[np.float64]:
    """Normalised difference water index of McFeeters (1996).

    ``(green - nir) / (green + nir)``; NaN where both are zero.

    Examples
    --------
    >>> round(float(ndwi(0.06, 0.02)), 12)
    0.5
    """
    g = np.asarray(green, dtype=float)
    n = np.asarray(nir, dtype=float)
    s = g + n
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(s != 0, (g - n) / np.where(s != 0, s, 1.0), np.nan)


def ndwi_water(green: ArrayLike, nir: ArrayLike, *, threshold: float = NDWI_THRESHOLD) -> NDArray[np.bool_]:
    """True where ``ndwi(green, nir) > threshold`` (McFeeters 1996)."""
    with np.errstate(invalid="ignore"):
        return np.asarray(ndwi(green, nir) > threshold)


@dataclass(frozen=True)
class WaterSource:
    """One source of the water mask (build it with :func:`water_source`).

    Attributes
    ----------
    kind : {"all", "raster", "polygons", "bands"}
    path : pathlib.Path or None
        Raster or GeoJSON file.
    bands : (int, int) or None
        1-based green and NIR band numbers (``kind="bands"``).
    threshold : float
        NDWI threshold (``kind="bands"``).
    polygons : Polygons or None
        The polygons read (``kind="polygons"``).
    """

    kind: Literal["all", "raster", "polygons", "bands"] = "all"
    path: Path | None = None
    bands: tuple[int, int] | None = None
    threshold: float = NDWI_THRESHOLD
    polygons: Polygons | None = None

    def describe(self) -> str:
        """One line for reports."""
        if self.kind == "all":
            return "all pixels with data are water"
        if self.kind == "bands":
            assert self.bands is not None
            return (f"NDWI (McFeeters 1996) of bands {self.bands[0]} (green) and "
                    f"{self.bands[1]} (NIR) > {self.threshold:g}")
        return f"{self.kind} {str(self.path)}"

    def check(self, image: ImageInfo) -> None:
        """Check the source against an image before any work."""
        if self.kind == "bands":
            assert self.bands is not None
            image.check_band(self.bands[0], "green band")
            image.check_band(self.bands[1], "NIR band")
        elif self.kind == "polygons":
            assert self.polygons is not None
            self.polygons.rasterize(image.grid, slice(0, 1))  # raises when outside the image

    def strip(self, image: ImageInfo, rows: slice, bands: NDArray[Any] | None = None) -> NDArray[np.bool_]:
        """Water (True) for a strip of the image's rows.

        ``bands`` (all bands of the strip, as read) avoids a second read for
        the ``"bands"`` source.
        """
        g = image.grid
        r0, r1, _ = rows.indices(g.height)
        shape = (r1 - r0, g.width)
        if self.kind == "all":
            return np.ones(shape, dtype=bool)
        if self.kind == "bands":
            assert self.bands is not None
            data = bands if bands is not None else image.read(rows)
            return ndwi_water(data[self.bands[0] - 1], data[self.bands[1] - 1],
                              threshold=self.threshold)
        if self.kind == "polygons":
            assert self.polygons is not None
            return self.polygons.rasterize(g, rows)
        return _raster_strip(self, image, rows, shape)


def _raster_strip(src_info: WaterSource, image: ImageInfo, rows: slice,
                  shape: tuple[int, int]) -> NDArray[np.bool_]:
    import rasterio
    from affine import Affine
    from rasterio.crs import CRS as RioCRS
    from rasterio.enums import Resampling
    from rasterio.warp import reproject

    g = image.grid
    r0 = rows.indices(g.height)[0]
    dest = np.zeros(shape, dtype=np.uint8)
    assert src_info.path is not None
    with rasterio.open(src_info.path) as src:
        if src.crs is None:
            raise InputFileError(f"water mask {str(src_info.path)!r} has no CRS; allowed: a "
                                 "georeferenced raster")
        reproject(source=rasterio.band(src, 1), destination=dest,
                  dst_transform=g.transform @ Affine.translation(0, r0),
                  dst_crs=RioCRS.from_wkt(g.crs.to_wkt()), dst_nodata=0,
                  resampling=Resampling.nearest)
    return dest != 0


def water_source(value: str | os.PathLike[str] | None = None, *,
                 bands: tuple[int, int] | None = None,
                 threshold: float = NDWI_THRESHOLD) -> WaterSource:
    """A water source from a file, from two bands, or everything.

    Parameters
    ----------
    value : path-like, optional
        A GeoJSON file of water polygons (``.geojson``/``.json``) or a mask
        raster (any other file GDAL reads; non-zero = water).
    bands : (int, int), optional
        Green and NIR band numbers (1-based) for the NDWI mask.
    threshold : float, optional
        NDWI threshold (default 0, McFeeters 1996).

    Returns
    -------
    WaterSource

    Raises
    ------
    InputError
        Both a file and bands given, or bad band numbers.
    InputFileError
        The file is missing or unreadable.
    """
    if value is not None and bands is not None:
        raise InputError(f"give a water mask file ({str(value)!r}) or bands {bands!r}, not both")
    if bands is not None:
        if len(bands) != 2 or bands[0] == bands[1]:
            raise InputError(f"water bands must be two different band numbers GREEN,NIR; got "
                             f"{bands!r}")
        if not np.isfinite(threshold) or not -1.0 <= threshold <= 1.0:
            raise InputError(f"NDWI threshold must lie in [-1, 1]; got {threshold!r}")
        return WaterSource("bands", bands=(int(bands[0]), int(bands[1])), threshold=float(threshold))
    if value is None:
        return WaterSource("all")
    p = Path(value).expanduser()
    if not p.is_file():
        raise InputFileError(f"water mask {str(p)!r} does not exist or is not a file")
    if p.suffix.lower() in _VECTOR_SUFFIXES:
        return WaterSource("polygons", path=p, polygons=read_polygons(p))
    import rasterio
    from rasterio.errors import RasterioIOError

    try:
        with rasterio.open(p) as src:
            if src.crs is None:
                raise InputFileError(f"water mask {str(p)!r} has no CRS; allowed: a "
                                     "georeferenced raster or GeoJSON polygons")
    except RasterioIOError as exc:
        raise InputFileError(f"cannot read water mask {str(p)!r}: {exc}") from None
    return WaterSource("raster", path=p)

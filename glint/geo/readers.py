"""Lazy, windowed readers of raster files given as inputs (angle rasters,
masks): the geo layer's one way to read pixels from files.

A :class:`RasterBand` holds only the path and the header, so it pickles
(dask workers open the file per read) and a window is read only when asked
for. :func:`check_matches_grid` compares a raster with a scene grid.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

import numpy as np

from glint.errors import InputError, InputFileError
from glint.geo.grid import Grid

__all__ = ["RasterBand", "open_band", "check_matches_grid"]


def _same_crs(a: Any, b: Any) -> bool:
    if a == b:
        return True
    try:
        if a.equals(b, ignore_axis_order=True):
            return True
    except Exception:  # pragma: no cover - pyproj versions differ
        pass
    ea, eb = a.to_epsg(), b.to_epsg()
    return ea is not None and ea == eb


def _check_input_path(path: str | os.PathLike) -> str:
    spath = os.fspath(path)
    if "://" in spath or spath.lower().startswith(("netcdf:", "hdf5:", "/vsi")):
        return spath
    if not Path(spath).is_file():
        raise InputFileError(f"input raster not found: {spath!r}")
    return spath


class RasterBand:
    """Lazy reader of one band of a raster file.

    Holds only the path and header, so it pickles and can be shared with
    worker processes; each ``reader[rows, cols]`` opens the file, reads the
    window as float64 with nodata replaced by NaN, and closes it.

    Attributes
    ----------
    path : str
    band : int
    shape : (int, int)
    crs : pyproj.CRS or None
    transform : affine.Affine
    nodata : float or None
    """

    def __init__(self, path: str | os.PathLike, band: int = 1) -> None:
        import rasterio
        from rasterio.errors import RasterioIOError

        from glint.geo.grid import parse_crs

        self.path = _check_input_path(path)
        try:
            with rasterio.open(self.path) as src:
                if int(band) != band or not 1 <= band <= src.count:
                    raise InputFileError(
                        f"{self.path!r} has {src.count} band(s); band {band!r} does not exist"
                    )
                self.band = int(band)
                self.shape = (src.height, src.width)
                self.crs = parse_crs(src.crs) if src.crs is not None else None
                self.transform = src.transform
                self.nodata = src.nodatavals[self.band - 1]
        except RasterioIOError as exc:
            raise InputFileError(f"cannot read raster {self.path!r}: {exc}") from exc

    def __getitem__(self, key: tuple[slice, slice]) -> np.ndarray:
        """Read ``reader[row_slice, col_slice]`` as float64, nodata -> NaN.

        Parameters
        ----------
        key : (slice, slice)
            Rows and columns, step 1.

        Returns
        -------
        numpy.ndarray
            2-D float64 window.

        Raises
        ------
        InputError
            If ``key`` is not two step-1 slices.
        """
        import rasterio
        from rasterio.windows import Window

        try:
            rows, cols = key
            r0, r1, rs = rows.indices(self.shape[0])
            c0, c1, cs = cols.indices(self.shape[1])
        except (TypeError, ValueError, AttributeError) as exc:
            raise InputError(f"index with (row_slice, col_slice); got {key!r}") from exc
        if rs != 1 or cs != 1:
            raise InputError(f"slices must have step 1; got {key!r}")
        window = Window(c0, r0, max(c1 - c0, 0), max(r1 - r0, 0))
        with rasterio.open(self.path) as src:
            out = src.read(self.band, window=window, out_dtype="float64")
        if self.nodata is not None and not np.isnan(self.nodata):
            out[out == self.nodata] = np.nan
        return out

    def read(self) -> np.ndarray:
        """The whole band as float64 (nodata -> NaN)."""
        return self[:, :]

    def __repr__(self) -> str:
        return f"RasterBand({self.path!r}, band={self.band}, shape={self.shape})"


def open_band(path: str | os.PathLike, band: int = 1) -> RasterBand:
    """Open one band of a raster lazily (see :class:`RasterBand`).

    Parameters
    ----------
    path : str or path-like
        Raster file (or a GDAL name such as ``netcdf:file.nc:var``).
    band : int, optional
        1-based band number.

    Returns
    -------
    RasterBand
        Reader with ``shape``, ``crs``, ``transform`` and window indexing.

    Raises
    ------
    InputFileError
        If the file is missing or unreadable, or the band does not exist.
    """
    return RasterBand(path, band)


def check_matches_grid(reader: RasterBand, grid: Grid, name: str) -> None:
    """Raise :class:`~glint.errors.InputFileError` unless ``reader`` lies on ``grid``.

    Parameters
    ----------
    reader : RasterBand
        An input opened with :func:`open_band`.
    grid : Grid
        The scene grid.
    name : str
        What the input is (``"water_mask"``), used in the message.

    Raises
    ------
    InputFileError
        Naming the file and listing each difference: shape, CRS, or
        transform (compared within 1e-6 of a pixel).
    """
    problems = []
    if tuple(reader.shape) != tuple(grid.shape):
        problems.append(f"shape {tuple(reader.shape)!r} vs grid {grid.shape!r}")
    if reader.crs is None or not _same_crs(reader.crs, grid.crs):
        rname = None if reader.crs is None else reader.crs.name
        problems.append(f"CRS {rname!r} vs grid {grid.crs.name!r}")
    tol = 1e-6 * min(grid.res)
    if not reader.transform.almost_equals(grid.transform, precision=tol):
        problems.append(f"transform {tuple(reader.transform)[:6]!r} vs grid "
                        f"{tuple(grid.transform)[:6]!r}")
    if problems:
        raise InputFileError(
            f"{name} raster {reader.path!r} does not match the scene grid: "
            + "; ".join(problems)
        )

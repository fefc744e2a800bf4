"""Sensor kind ``angle-rasters``: view angles read per pixel from rasters.

For imagery whose view angles are delivered at full resolution, aligned with
the image: a view zenith raster and a view azimuth raster (two files, or two
bands of one file) on exactly the scene grid.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any, Literal

import numpy as np

from glint.validation import wrap_azimuth
from glint.errors import InputFileError, SensorError
from glint.sensors.base import GroundPoints, TableReader, ViewAngles, register_sensor_kind
from glint.sensors.fixed_direction import AZIMUTH_REFERENCES

__all__ = ["AngleRasters"]


class AngleRasters:
    """View zenith and azimuth sampled from rasters aligned with the scene grid.

    Parameters
    ----------
    zenith, azimuth : glint.geo.readers.RasterBand
        Lazy band readers (:func:`glint.geo.readers.open_band`) of view zenith and view
        azimuth [°].
    grid : glint.geo.grid.Grid
        The scene grid; both rasters must match it
        (:func:`glint.geo.readers.check_matches_grid`).
    azimuth_reference : {"true-north", "grid"}, optional
        North of the azimuth raster: true north (default) or the scene grid's
        north, converted per pixel with the meridian convergence.

    Raises
    ------
    InputFileError
        If a raster does not match the grid (CRS, shape, transform).
    SensorError
        For an unknown ``azimuth_reference``.

    Notes
    -----
    Each call reads the window of the rasters covering the requested rows and
    columns and picks the nearest pixel of each (fractional) row and column.
    Zenith values outside [0, 90) and nodata give NaN.
    """

    smooth = False
    #: The sensor follows the scene time (see :class:`~glint.sensors.base.Sensor`).
    time_key: str | None = None
    fixed_time: np.datetime64 | None = None

    def __init__(self, zenith: Any, azimuth: Any, grid: Any, *,
                 azimuth_reference: Literal["true-north", "grid"] = "true-north") -> None:
        from glint.geo.readers import check_matches_grid

        if azimuth_reference not in AZIMUTH_REFERENCES:
            raise SensorError(f"azimuth_reference must be one of {AZIMUTH_REFERENCES!r}; "
                              f"got {azimuth_reference!r}")
        check_matches_grid(zenith, grid, "view zenith")
        check_matches_grid(azimuth, grid, "view azimuth")
        self.zenith, self.azimuth, self.grid = zenith, azimuth, grid
        self.azimuth_reference = azimuth_reference

    @classmethod
    def from_files(cls, zenith: str | Path, azimuth: str | Path | None, grid: Any, *,
                   zenith_band: int = 1, azimuth_band: int | None = None,
                   azimuth_reference: Literal["true-north", "grid"] = "true-north") -> AngleRasters:
        """Open the rasters; ``azimuth=None`` reads both bands from ``zenith``'s file
        (``azimuth_band`` default 2)."""
        from glint.geo.readers import open_band

        if azimuth is None:
            azimuth, azimuth_band = zenith, (2 if azimuth_band is None else azimuth_band)
        return cls(open_band(zenith, zenith_band), open_band(azimuth, azimuth_band or 1), grid,
                   azimuth_reference=azimuth_reference)

    def view_angles(self, points: GroundPoints, time: np.datetime64 | None) -> ViewAngles:
        """Nearest-pixel view angles at the points' rows and columns."""
        rows, cols = self.grid.shape
        r = np.floor(np.asarray(points.row, float) + 0.5)
        c = np.floor(np.asarray(points.col, float) + 0.5)
        inside = np.isfinite(r) & np.isfinite(c) & (r >= 0) & (r < rows) & (c >= 0) & (c < cols)
        vz = np.full(r.shape, np.nan)
        va = np.full(r.shape, np.nan)
        if np.any(inside):
            ri, ci = r[inside].astype(np.intp), c[inside].astype(np.intp)
            r0, r1, c0, c1 = ri.min(), ri.max() + 1, ci.min(), ci.max() + 1
            window = (slice(r0, r1), slice(c0, c1))
            vz[inside] = self.zenith[window][ri - r0, ci - c0]
            va[inside] = self.azimuth[window][ri - r0, ci - c0]
        if self.azimuth_reference == "grid":
            va = va + np.asarray(points.convergence, float)
        with np.errstate(invalid="ignore"):
            bad = ~((vz >= 0.0) & (vz < 90.0)) | ~np.isfinite(va)
        return ViewAngles(np.where(bad, np.nan, vz), np.where(bad, np.nan, wrap_azimuth(va)), None,
                          {"unseen": int(np.sum(bad))})

    def __repr__(self) -> str:
        return f"AngleRasters({self.zenith!r}, {self.azimuth!r})"


@register_sensor_kind(
    "angle-rasters",
    keys=("file", "zenith_file", "azimuth_file", "zenith_band", "azimuth_band",
          "azimuth_reference"),
    summary="full-resolution view zenith/azimuth rasters on the scene grid",
)
def _build(r: TableReader) -> AngleRasters | None:
    return _build_pair(r, lambda z, a, ref: AngleRasters(z, a, r.grid, azimuth_reference=ref),
                       need_grid=True)


def _build_pair(r: TableReader, make: Any, *, need_grid: bool) -> Any:
    """Shared reading of ``file`` | ``zenith_file`` + ``azimuth_file`` and bands."""
    from glint.geo.readers import open_band

    ref = r.choice("azimuth_reference", AZIMUTH_REFERENCES, default="true-north")
    zb = r.integer("zenith_band", default=1)
    if r.has("file") and (r.has("zenith_file") or r.has("azimuth_file")):
        r.problem("file", "give either file (two bands) or zenith_file + azimuth_file, not both")
        return None
    if r.has("file"):
        zpath = apath = r.path("file")
        ab = r.integer("azimuth_band", default=2)
    elif r.has("zenith_file") or r.has("azimuth_file"):
        zpath, apath = r.path("zenith_file"), r.path("azimuth_file")
        ab = r.integer("azimuth_band", default=1)
    else:
        r.problem("file", "required key is missing: give file (a raster with view zenith and "
                  "view azimuth bands) or zenith_file + azimuth_file")
        return None
    if need_grid and r.grid is None:
        r.problem(None, "cannot check the angle rasters without a valid [grid]")
        return None
    if r.problems or ref is None or zb is None or ab is None or zpath is None or apath is None:
        return None
    try:
        zen, az = open_band(zpath, zb), open_band(apath, ab)
    except InputFileError as exc:
        r.problem("file" if r.has("file") else "zenith_file", str(exc))
        return None
    if zpath == apath and zb == ab:
        r.problem("azimuth_band", f"must differ from zenith_band ({zb}); both read band {ab}")
        return None
    try:
        return make(zen, az, ref)
    except InputFileError as exc:
        r.problem("file" if r.has("file") else "zenith_file", str(exc))
        return None

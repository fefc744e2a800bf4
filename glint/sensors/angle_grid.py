"""Sensor kind ``angle-grid``: view angles on a coarse grid of nodes.

Many satellite products ship their view angles not per pixel but on a
coarse grid (tens of nodes across a scene) in their metadata. This sensor
holds such a grid, with its own georeferencing (possibly another CRS than
the scene grid), and interpolates it to any ground point.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any, Literal

import numpy as np
from pyproj import Transformer

from glint.validation import wrap_azimuth
from glint.errors import GridError, InputFileError, SensorError
from glint.sensors.angle_rasters import _build_pair
from glint.sensors.base import GroundPoints, TableReader, ViewAngles, register_sensor_kind
from glint.sensors.fixed_direction import AZIMUTH_REFERENCES, AzimuthReference
from glint.validation import check_choice

__all__ = ["AngleGrid", "bilinear_at_points"]


def bilinear_at_points(values: Any, rows: Any, cols: Any, *, reach: float = 1.0) -> np.ndarray:
    """Bilinear interpolation of a node array at scattered fractional indices.

    Parameters
    ----------
    values : array_like, shape (n_rows, n_cols)
        Values at the nodes, ``n_rows, n_cols >= 2``.
    rows, cols : array_like
        Fractional node indices (node ``(i, j)`` at ``(i, j)``), broadcast
        together.
    reach : float, optional
        Points up to ``reach`` node spacings outside the node extent are
        extrapolated linearly from the edge cell; further ones give NaN.

    Returns
    -------
    numpy.ndarray
        Interpolated values, the broadcast shape of ``rows`` and ``cols``.
        A NaN node makes the four cells around it NaN.

    Notes
    -----
    ``v = (1-u)(1-w) V[i,j] + (1-u) w V[i,j+1] + u (1-w) V[i+1,j] + u w V[i+1,j+1]``
    with ``i = clip(floor(r), 0, n_rows - 2)``, ``u = r - i`` (so ``u`` may
    leave [0, 1] at the edges), and likewise for columns.

    Examples
    --------
    >>> bilinear_at_points([[0.0, 1.0], [2.0, 3.0]], 0.5, [0.5, 1.5, 2.5])
    array([1.5, 2.5, nan])
    """
    v = np.asarray(values, float)
    r, c = np.broadcast_arrays(np.asarray(rows, float), np.asarray(cols, float))
    nr, nc = v.shape
    with np.errstate(invalid="ignore"):
        ok = (r >= -reach) & (r <= nr - 1 + reach) & (c >= -reach) & (c <= nc - 1 + reach)
    rr, cc = np.where(ok, r, 0.0), np.where(ok, c, 0.0)
    i = np.clip(np.floor(rr), 0, nr - 2).astype(np.intp)
    j = np.clip(np.floor(cc), 0, nc - 2).astype(np.intp)
    u, w = rr - i, cc - j
    out = ((1 - u) * (1 - w) * v[i, j] + (1 - u) * w * v[i, j + 1]
           + u * (1 - w) * v[i + 1, j] + u * w * v[i + 1, j + 1])
    return np.where(ok, out, np.nan)


class AngleGrid:
    """View angles interpolated from a coarse node grid.

    Parameters
    ----------
    zenith, azimuth : array_like, shape (n_rows, n_cols)
        View zenith and view azimuth [°] at the nodes; at least 2 x 2 nodes,
        both the same shape. NaN marks nodes without a value.
    crs : anything :func:`glint.geo.grid.parse_crs` accepts
        CRS of the node grid.
    transform : affine.Affine
        North-up transform of the node grid: node ``(i, j)`` sits at
        ``transform * (j + 0.5, i + 0.5)`` (the centre of raster pixel
        ``(i, j)``, as for every glint grid).
    azimuth_reference : {"true-north", "grid"}, optional
        North of the azimuth values: true north (default) or grid north of
        the *node grid's* CRS (converted with that CRS's meridian convergence).

    Raises
    ------
    SensorError
        For shapes that differ or are smaller than 2 x 2, or an unknown
        ``azimuth_reference``.
    GridError
        For an unreadable CRS or a rotated transform.

    Notes
    -----
    Ground points are transformed into the node grid's CRS and to fractional
    node indices. The zenith is interpolated bilinearly; the azimuth through
    its sine and cosine, ``atan2(bilinear(sin), bilinear(cos))``, so there is
    no jump where the azimuth crosses 0/360. Points outside the node extent
    are extrapolated linearly up to one node spacing (a product's outermost
    nodes often lie half a spacing inside the image edge); beyond that the
    angles are NaN.

    Examples
    --------
    >>> from affine import Affine
    >>> g = AngleGrid([[10.0, 20.0], [10.0, 20.0]], [[350.0, 10.0], [350.0, 10.0]],
    ...               "EPSG:4326", Affine(1.0, 0, 0.0, 0, -1.0, 51.0))
    >>> va = g.view_angles(GroundPoints.from_lonlat(1.0, 50.0), None)
    >>> round(float(va.view_zenith), 6), round(float(va.view_azimuth) % 360, 6)
    (15.0, 0.0)
    """

    smooth = True
    #: The sensor follows the scene time (see :class:`~glint.sensors.base.Sensor`).
    time_key: str | None = None
    fixed_time: np.datetime64 | None = None

    def __init__(self, zenith: Any, azimuth: Any, crs: Any, transform: Any, *,
                 azimuth_reference: Literal["true-north", "grid"] = "true-north") -> None:
        from glint.geo.grid import Grid

        z, a = np.asarray(zenith, float), np.asarray(azimuth, float)
        if z.ndim != 2 or z.shape != a.shape:
            raise SensorError(f"zenith and azimuth node arrays must be 2-D and the same shape; "
                              f"got {z.shape!r} and {a.shape!r}")
        if min(z.shape) < 2:
            raise SensorError(f"an angle grid needs at least 2 x 2 nodes; got {z.shape!r}")
        check_choice(azimuth_reference, "azimuth_reference", AZIMUTH_REFERENCES, error=SensorError)
        self.node_grid = Grid(crs, transform, z.shape)
        self.zenith, self.azimuth = z, a
        self.azimuth_reference = azimuth_reference
        ar = np.radians(a)
        self._sin, self._cos = np.sin(ar), np.cos(ar)
        self._to_nodes = Transformer.from_crs("EPSG:4326", self.node_grid.crs, always_xy=True)

    @classmethod
    def from_files(cls, zenith: str | Path, azimuth: str | Path | None = None, *,
                   zenith_band: int = 1, azimuth_band: int | None = None,
                   azimuth_reference: Literal["true-north", "grid"] = "true-north") -> AngleGrid:
        """Read a node grid from a GeoTIFF with two bands (``azimuth=None``;
        ``azimuth_band`` default 2) or from two single-band files."""
        from glint.geo.readers import open_band

        if azimuth is None:
            azimuth, azimuth_band = zenith, (2 if azimuth_band is None else azimuth_band)
        return cls.from_bands(open_band(zenith, zenith_band),
                              open_band(azimuth, azimuth_band or 1),
                              azimuth_reference=azimuth_reference)

    @classmethod
    def from_bands(cls, zenith: Any, azimuth: Any, *,
                   azimuth_reference: Literal["true-north", "grid"] = "true-north") -> AngleGrid:
        """Build from two :class:`glint.geo.readers.RasterBand` readers, which must
        share CRS, transform and shape."""
        if zenith.crs is None:
            raise InputFileError(f"angle grid {zenith.path!r} has no CRS")
        if (tuple(zenith.shape) != tuple(azimuth.shape) or azimuth.crs is None
                or not zenith.crs.equals(azimuth.crs)
                or not zenith.transform.almost_equals(azimuth.transform)):
            raise SensorError(
                f"view zenith {zenith!r} and view azimuth {azimuth!r} must share shape, CRS and "
                f"transform; got shapes {tuple(zenith.shape)!r} and {tuple(azimuth.shape)!r}")
        return cls(zenith.read(), azimuth.read(), zenith.crs, zenith.transform,
                   azimuth_reference=azimuth_reference)

    def view_angles(self, points: GroundPoints, time: np.datetime64 | None) -> ViewAngles:
        """Interpolated view angles (NaN more than one node spacing outside)."""
        lon, lat = np.asarray(points.lon, float), np.asarray(points.lat, float)
        x, y = self._to_nodes.transform(lon, lat)
        r, c = self.node_grid.index(x, y)
        vz = bilinear_at_points(self.zenith, r, c)
        s = bilinear_at_points(self._sin, r, c)
        co = bilinear_at_points(self._cos, r, c)
        va = np.degrees(np.arctan2(s, co))
        if self.azimuth_reference == "grid":
            va = va + self.node_grid.meridian_convergence(lon, lat)
        with np.errstate(invalid="ignore"):
            bad = ~((vz >= 0.0) & (vz < 90.0)) | ~np.isfinite(va)
        return ViewAngles(np.where(bad, np.nan, vz), np.where(bad, np.nan, wrap_azimuth(va)), None,
                          {"unseen": int(np.sum(bad))})

    def __repr__(self) -> str:
        return (f"AngleGrid(nodes={self.zenith.shape!r}, crs={self.node_grid.crs.name!r}, "
                f"azimuth_reference={self.azimuth_reference!r})")


@register_sensor_kind(
    "angle-grid",
    keys=("file", "zenith_file", "azimuth_file", "zenith_band", "azimuth_band",
          "azimuth_reference"),
    summary="coarse grid of view angles with its own georeferencing, interpolated",
)
def _build(r: TableReader) -> AngleGrid | None:
    def make(z: Any, a: Any, ref: AzimuthReference) -> AngleGrid | None:
        try:
            return AngleGrid.from_bands(z, a, azimuth_reference=ref)
        except (SensorError, GridError) as exc:
            r.problem("file" if r.has("file") else "zenith_file", str(exc))
            return None

    return _build_pair(r, make, need_grid=False)

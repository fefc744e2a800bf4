"""CF metadata of a grid: the grid-mapping variable's attributes and the
attributes of its coordinates (projection x/y, or longitude/latitude).

Conventions: CF Metadata Conventions 1.11, sections 4.1-4.2 (longitude,
latitude), 5.6 (grid mappings) and Appendix F; the grid-mapping attributes
come from :meth:`pyproj.CRS.to_cf`.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np
from numpy.typing import NDArray

if TYPE_CHECKING:
    from glint.geo.grid import Grid

__all__ = [
    "LONGITUDE_ATTRIBUTES",
    "LATITUDE_ATTRIBUTES",
    "grid_mapping_attributes",
    "coordinate_attributes",
    "projection_coordinates",
]

#: CF attributes of a longitude coordinate (CF 1.11 section 4.2).
LONGITUDE_ATTRIBUTES: dict[str, str] = {
    "standard_name": "longitude", "long_name": "longitude", "units": "degrees_east"}
#: CF attributes of a latitude coordinate (CF 1.11 section 4.1).
LATITUDE_ATTRIBUTES: dict[str, str] = {
    "standard_name": "latitude", "long_name": "latitude", "units": "degrees_north"}

_UNITS = {"metre": "m", "meter": "m", "US survey foot": "US_survey_foot"}


def grid_mapping_attributes(grid: Grid) -> dict[str, Any]:
    """Attributes of a CF grid-mapping variable for ``grid``.

    ``pyproj.CRS.to_cf()`` (``grid_mapping_name``, parameters, ``crs_wkt``)
    plus ``spatial_ref`` (the same WKT, read by GDAL) and ``GeoTransform``
    (GDAL's six-term transform, as text).

    Examples
    --------
    >>> from glint.geo.grid import Grid
    >>> grid_mapping_attributes(Grid.from_bounds((0, 0, 100, 100), 10, 32631))["grid_mapping_name"]
    'transverse_mercator'
    """
    attrs = dict(grid.crs.to_cf())
    attrs["spatial_ref"] = attrs.get("crs_wkt", grid.crs.to_wkt())
    t = grid.transform
    attrs["GeoTransform"] = " ".join(f"{v!r}" for v in (t.c, t.a, t.b, t.f, t.d, t.e))
    return attrs


def coordinate_attributes(grid: Grid) -> tuple[dict[str, str], dict[str, str]]:
    """CF attributes of the x and y coordinates of ``grid``: ``standard_name``
    (``projection_x_coordinate`` / ``projection_y_coordinate``, or
    ``longitude`` / ``latitude`` for geographic grids), ``long_name``,
    ``units`` and ``axis``."""
    if grid.crs.is_geographic:
        return {**LONGITUDE_ATTRIBUTES, "axis": "X"}, {**LATITUDE_ATTRIBUTES, "axis": "Y"}
    unit = grid.crs.axis_info[0].unit_name if grid.crs.axis_info else "metre"
    unit = _UNITS.get(unit, unit)
    xa = {"standard_name": "projection_x_coordinate", "long_name": "x coordinate of projection",
          "units": unit, "axis": "X"}
    ya = {"standard_name": "projection_y_coordinate", "long_name": "y coordinate of projection",
          "units": unit, "axis": "Y"}
    return xa, ya


def projection_coordinates(grid: Grid) -> dict[str, tuple[NDArray[np.float64], dict[str, str]]]:
    """1-D pixel-centre coordinates of ``grid`` and their CF attributes:
    ``{"x": (values, attrs), "y": (values, attrs)}``.

    Examples
    --------
    >>> from glint.geo.grid import Grid
    >>> x, attrs = projection_coordinates(Grid.from_bounds((0, 0, 30, 10), 10, 32631))["x"]
    >>> x, attrs["units"]
    (array([ 5., 15., 25.]), 'm')
    """
    x, _ = grid.xy(0, np.arange(grid.width))
    _, y = grid.xy(np.arange(grid.height), 0)
    xa, ya = coordinate_attributes(grid)
    return {"x": (x, xa), "y": (y, ya)}

"""The one table of glint's per-pixel output variables.

Names, units and CF metadata of every variable that :mod:`glint.engine.compute`
produces and the writers of :mod:`glint.io` write. Writers and plots read this table; no
other module spells out units or standard names.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np

__all__ = ["Variable", "VARIABLES", "DEFAULT_VARIABLES", "CLASS_NODATA", "bytes_per_pixel"]

#: Value of the class raster where no class could be computed.
CLASS_NODATA = 255


@dataclass(frozen=True)
class Variable:
    """Metadata of one output variable."""

    name: str
    long_name: str
    units: str
    dtype: str = "float32"
    standard_name: str | None = None
    comment: str = ""
    extra: dict[str, object] = field(default_factory=dict)


# Glint variables first: the float GeoTIFF's bands follow this order, so
# band 1 (what GIS software shows when the file is dropped in) is the glint
# reflectance.
_VARS = [
    Variable(
        "glint_reflectance", "sun glint reflectance factor", "1",
        comment="pi L / (E cos(sun_zenith)) of the sun's specular reflection by a "
        "wind-roughened surface (Cox and Munk 1954, doi:10.1364/JOSA.44.000838).",
    ),
    Variable(
        "glint_radiance", "normalised sun glint radiance", "sr-1",
        comment="Glint radiance divided by the solar irradiance on a plane normal to "
        "the sun's rays, L/E (Wang and Bailey 2001, doi:10.1364/AO.40.004790).",
    ),
    Variable(
        "glint_fraction", "glint fraction", "1",
        comment="Expected share of the pixel's visible water area whose facets reflect "
        "part of the sun's disc towards the sensor.",
    ),
    Variable(
        "glint_angle", "glint angle", "degree",
        comment="Angle between the view direction (ground to sensor) and the direction "
        "of specular reflection of the sun by a flat horizontal surface; 0 at the specular "
        "point. Not the CF standard name sunglint_angle, which is the angle between the "
        "incident and the specularly reflected beams.",
    ),
    Variable(
        "glint_class", "glint class", "1", dtype="uint8",
        comment="Glint class of the variable named in glint_class_variable: class k holds "
        "values from glint_class_thresholds[k-1] up to glint_class_thresholds[k]; class names "
        "in flag_meanings (NetCDF) or glint_class_names (GeoTIFF tags); 255 = no data.",
    ),
    Variable(
        "sun_zenith", "sun zenith angle", "degree",
        standard_name="solar_zenith_angle",
        comment="Angle between the local vertical and the direction to the centre of "
        "the sun's disc, refraction included unless switched off (NREL SPA).",
    ),
    Variable(
        "sun_azimuth", "sun azimuth angle", "degree",
        standard_name="solar_azimuth_angle",
        comment="Direction from the ground point to the sun, clockwise from true north.",
    ),
    Variable(
        "view_zenith", "view zenith angle", "degree",
        standard_name="sensor_zenith_angle",
        comment="Angle between the local vertical and the direction from the ground "
        "point to the sensor.",
    ),
    Variable(
        "view_azimuth", "view azimuth angle", "degree",
        standard_name="sensor_azimuth_angle",
        comment="Direction from the ground point to the sensor, measured clockwise "
        "from true north (reference direction: true north).",
    ),
]

VARIABLES: dict[str, Variable] = {v.name: v for v in _VARS}

#: Variables written when a scene or command names none.
DEFAULT_VARIABLES: tuple[str, ...] = tuple(VARIABLES)


def bytes_per_pixel(variables: Iterable[str]) -> int:
    """Bytes one pixel of ``variables`` takes in memory (their table types).

    Examples
    --------
    >>> bytes_per_pixel(["glint_reflectance", "glint_class"])
    5
    """
    return sum(np.dtype(VARIABLES[v].dtype).itemsize for v in variables)

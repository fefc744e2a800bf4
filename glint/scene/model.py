"""The typed scene: :class:`Scene` and its parts (layer 3).

A scene says *where* (the grid), *when* (one or more UTC times), *who looks*
(the sensor), and *what the water is like* (wind, wavelength, temperature,
salinity), plus how to classify and write the results. Every part is a
frozen dataclass; :mod:`glint.scene.loader` builds and validates them from a
scene file, and :func:`dataclasses.replace` changes one.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any
from pathlib import Path

import numpy as np

from glint.geo.grid import Grid
from glint.physics.optics import IndexMethod, water_refractive_index
from glint.physics.surface import SlopeDistribution, wind_speed_at_height
from glint.sensors import Sensor
from glint.variables import DEFAULT_VARIABLES

__all__ = [
    "Surface",
    "Water",
    "SunOptions",
    "GlintClasses",
    "Outputs",
    "Scene",
    "slugify",
    "OUTPUT_FORMATS",
    "COMPRESSIONS",
    "CLASS_VARIABLES",
    "WAVELENGTH_RANGE",
]

#: File formats that :func:`glint.workflows.maps.write_maps` can write.
OUTPUT_FORMATS: tuple[str, ...] = ("geotiff", "netcdf", "png")
#: Wavelengths [nm] accepted for ``[water] wavelength`` and ``glint sun
#: --wavelength``: the ultraviolet-to-shortwave-infrared span of optical
#: remote sensing (common practice); the refractive-index formulas warn
#: outside their own, narrower validity.
WAVELENGTH_RANGE: tuple[float, float] = (200.0, 2500.0)
#: Lossless compressions accepted for raster outputs.
COMPRESSIONS: tuple[str, ...] = ("zstd", "deflate", "lzw", "none")
#: Variables a class raster can be derived from (larger value = more glint).
CLASS_VARIABLES: tuple[str, ...] = ("glint_radiance", "glint_reflectance", "glint_fraction")


@dataclass(frozen=True)
class Surface:
    """State of the water surface.

    Attributes
    ----------
    wind_speed : float
        Wind speed [m s⁻¹] at ``wind_height`` above the water.
    wind_direction : float or None
        Direction the wind blows from [°], clockwise from true north;
        ``None`` means unknown and selects an isotropic slope distribution.
    wind_height : float
        Height of the wind measurement above the water [m].
    slope_model : str
        Mean-square-slope model, one of :data:`glint.physics.surface.SLOPE_MODELS`.
    distribution : str
        Shape of the slope density, one of
        :data:`glint.physics.surface.SLOPE_DISTRIBUTIONS`.
    shadowing : bool
        Whether facets hidden from the sun or the sensor by other waves are
        removed (matters at grazing angles only).
    """

    wind_speed: float
    wind_direction: float | None
    wind_height: float = 10.0
    slope_model: str = "cox-munk"  # a name of glint.physics.surface.SLOPE_MODELS
    distribution: SlopeDistribution = "gaussian"
    shadowing: bool = False

    @property
    def wind_speed_10m(self) -> float:
        """Wind speed [m s⁻¹] at 10 m, from a logarithmic wind profile.

        Uses :func:`glint.physics.surface.wind_speed_at_height`; returns
        ``wind_speed`` unchanged when ``wind_height`` is 10 m.
        """
        if self.wind_height == 10.0:
            return float(self.wind_speed)
        return float(wind_speed_at_height(self.wind_speed, self.wind_height, target_height=10.0))


@dataclass(frozen=True)
class Water:
    """Optical properties of the water.

    Attributes
    ----------
    wavelength : float
        Wavelength in vacuum [nm].
    temperature : float
        Water temperature [°C].
    salinity : float
        Practical salinity [PSU].
    index_method : str
        Method of :func:`glint.physics.optics.water_refractive_index`.
    refractive_index : float or None
        Refractive index relative to air; when given it overrides the value
        computed from wavelength, temperature and salinity.
    """

    wavelength: float = 550.0
    temperature: float = 20.0
    salinity: float = 35.0
    index_method: IndexMethod = "quan-fry"
    refractive_index: float | None = None

    def refractive_index_value(self) -> float:
        """Refractive index of the water relative to air [1].

        Returns the explicit ``refractive_index`` when given, else
        :func:`glint.physics.optics.water_refractive_index` of ``wavelength``,
        ``temperature`` and ``salinity`` with ``index_method``.
        """
        if self.refractive_index is not None:
            return float(self.refractive_index)
        return float(
            water_refractive_index(
                self.wavelength,
                temperature=self.temperature,
                salinity=self.salinity,
                method=self.index_method,
                reference="air",
            )
        )


@dataclass(frozen=True)
class SunOptions:
    """Options of the sun position (see :func:`glint.physics.sun.solar_position`).

    Attributes
    ----------
    pressure : float
        Air pressure at the water surface [hPa] (refraction).
    air_temperature : float
        Air temperature at the water surface [°C] (refraction).
    refraction : bool
        Whether the sun zenith includes atmospheric refraction.
    delta_t : float or None
        TT - UT [s]; ``None`` lets :func:`glint.physics.sun.delta_t` estimate it.
    surface_elevation : float
        Height of the water surface above the WGS 84 ellipsoid [m].
    """

    pressure: float = 1013.25
    air_temperature: float = 12.0
    refraction: bool = True
    delta_t: float | None = None
    surface_elevation: float = 0.0


@dataclass(frozen=True)
class GlintClasses:
    """Classes of the glint class raster.

    Pixel values ``i`` in ``0 .. len(thresholds)`` mean
    ``thresholds[i-1] <= value < thresholds[i]`` of ``variable`` and are
    labelled ``names[i]``.

    The default thresholds on the normalised glint radiance, 1e-4 and
    5e-3 sr⁻¹, bracket the range in which Wang and Bailey (2001) correct
    glint in ocean-colour imagery and above which they mask it (values from
    memory; doi:10.1364/AO.40.004790).
    """

    variable: str = "glint_radiance"
    thresholds: tuple[float, ...] = (1e-4, 5e-3)
    names: tuple[str, ...] = ("negligible", "correctable", "severe")


@dataclass(frozen=True)
class Outputs:
    """What to write and how.

    Attributes
    ----------
    formats : tuple of str
        Subset of :data:`OUTPUT_FORMATS`.
    variables : tuple of str
        Subset of :data:`glint.variables.VARIABLES`.
    cog : bool
        Write GeoTIFFs as Cloud Optimized GeoTIFFs.
    compression : str
        One of :data:`COMPRESSIONS`.
    stem : str or None
        File-name stem; ``None`` uses :func:`slugify` of the scene name.
    """

    formats: tuple[str, ...] = OUTPUT_FORMATS
    variables: tuple[str, ...] = DEFAULT_VARIABLES
    cog: bool = False
    compression: str = "zstd"
    stem: str | None = None


@dataclass(frozen=True)
class Scene:
    """Everything needed to compute and write glint maps.

    Build scenes with :func:`load_scene` or :func:`scene_from_dict`, which
    validate every field; change one with :func:`dataclasses.replace`.
    """

    name: str
    times: tuple[np.datetime64, ...]
    grid: Grid
    sensor: Sensor
    surface: Surface
    water: Water
    sun: SunOptions
    classes: GlintClasses
    outputs: Outputs
    description: str = ""
    tie_point_tolerance: float = 1e-4
    source: Path | None = None
    #: The scene-file tables the scene was built from (after command-line
    #: overrides), and the directory their relative paths refer to; kept to
    #: record the run beside its outputs (:func:`glint.scene.scene_record`).
    tables: Mapping[str, Any] | None = field(default=None, compare=False, repr=False)
    base_dir: Path | None = field(default=None, compare=False, repr=False)

    @property
    def file_stem(self) -> str:
        """Stem of output file names: ``outputs.stem`` or the slug of ``name``."""
        return self.outputs.stem or slugify(self.name)


def slugify(text: str) -> str:
    """Turn a free-text name into a file-name stem.

    Runs of characters other than ASCII letters and digits become ``_``;
    the result is lower case, ``"scene"`` if nothing is left.

    Examples
    --------
    >>> slugify("Saltmarsh Reach inlet, morning survey")
    'saltmarsh_reach_inlet_morning_survey'
    """
    slug = re.sub(r"[^A-Za-z0-9]+", "_", text).strip("_").lower()
    return slug or "scene"

"""Scene descriptions: a typed :class:`Scene` and its TOML file.

A scene says *where* (the grid), *when* (one or more UTC times), *who looks*
(the sensor), and *what the water is like* (wind, wavelength, temperature,
salinity), plus how to classify and write the results. :func:`load_scene`
reads a TOML file, :func:`scene_from_dict` builds a scene from the same
structure already in memory. Both check every key and report **every**
problem at once in one :class:`~glint.errors.SceneError`, each line starting
with its key path (``surface.wind_speed: ...``).

The file layout (every key is described in ``docs/user-guide.md``)::

    [scene]
    name = "Saltmarsh Reach inlet, morning survey"
    time = 2026-06-14T09:40:00Z          # or: times = [..., ...]

    [grid]                               # one of three forms
    west = -8.02                         # (a) a lon/lat box [deg] ...
    south = 37.00
    east = -7.99
    north = 37.03
    resolution = 10.0                    #     ... pixel size [m] in a UTM zone
    # bounds = [xmin, ymin, xmax, ymax]  # (b) a box in `crs` units
    # crs = "EPSG:32629"
    # raster = "water_mask.tif"          # (c) the grid of an existing raster

    [sensor]                             # read by glint.sensors
    kind = "nadir-point"
    altitude = 3000.0

    [surface]
    wind_speed = 4.0                     # m/s at wind_height
    wind_direction = 250.0               # deg, blowing FROM; omit = unknown

    # optional: [water], [sun], [classes], [outputs]
"""

from __future__ import annotations

import datetime as _dt
import difflib
import math
import re
import tomllib
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from glint.errors import GlintError, GridError, InputError, InputFileError, SceneError
from glint.geo.grid import Grid, parse_crs
from glint.physics.optics import REFRACTIVE_INDEX_METHODS, water_refractive_index
from glint.sensors import Sensor, sensor_from_table
from glint.times import parse_time
from glint.physics.surface import ROUGHNESS_LENGTH, SLOPE_DISTRIBUTIONS, SLOPE_MODELS, wind_speed_at_height
from glint.variables import DEFAULT_VARIABLES, VARIABLES

__all__ = [
    "Surface",
    "Water",
    "SunOptions",
    "GlintClasses",
    "Outputs",
    "Scene",
    "load_scene",
    "scene_from_dict",
    "slugify",
    "SECTIONS",
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


# --------------------------------------------------------------------------
# Typed scene
# --------------------------------------------------------------------------


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
    slope_model: str = "cox-munk"
    distribution: str = "gaussian"
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
    index_method: str = "quan-fry"
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


# --------------------------------------------------------------------------
# Schema
# --------------------------------------------------------------------------

@dataclass(frozen=True)
class _Key:
    """One scene-file key: its type, whether required, and a check."""

    kind: str  # "number", "bool", "str", "numbers", "strs", "time", "times", "any"
    required: bool = False
    doc: str = ""
    check: Callable[[Any], str | None] | None = None


def _range(low: float | None = None, high: float | None = None, *, low_open: bool = False,
           high_open: bool = False, unit: str = "") -> Callable[[Any], str | None]:
    def check(value: Any) -> str | None:
        values = value if isinstance(value, (list, tuple)) else [value]
        for v in values:
            bad = not math.isfinite(v)
            if low is not None:
                bad |= v <= low if low_open else v < low
            if high is not None:
                bad |= v >= high if high_open else v > high
            if bad:
                u = f" {unit}" if unit else ""
                if high is None:
                    return f"must be {'>' if low_open else '>='} {low:g}{u}; got {v!r}"
                lb = "(" if low_open else "["
                hb = ")" if high_open else "]"
                return f"must lie in {lb}{low:g}, {high:g}{hb}{u}; got {v!r}"
        return None

    return check


def _wavelength_check(value: Any) -> str | None:
    msg = _range(*WAVELENGTH_RANGE, unit="nm")(value)
    if msg:
        msg += " (wavelengths are in nanometres, e.g. 550 for green light, not micrometres)"
    return msg


def _wind_height_check(value: Any) -> str | None:
    if not math.isfinite(value) or value <= ROUGHNESS_LENGTH:
        return (f"must exceed the roughness length {ROUGHNESS_LENGTH:g} m of the "
                f"logarithmic wind profile; got {value!r} (the height of the wind "
                "measurement above the water, in metres, e.g. 10)")
    return None


def _one_of(allowed: tuple[str, ...]) -> Callable[[Any], str | None]:
    def check(value: Any) -> str | None:
        values = value if isinstance(value, (list, tuple)) else [value]
        for v in values:
            if v not in allowed:
                return _unknown_value(v, allowed)
        if isinstance(value, (list, tuple)):
            if not value:
                return "must name at least one of " + _quoted(allowed)
            dup = sorted({v for v in value if value.count(v) > 1})
            if dup:
                return f"lists {_quoted(dup)} more than once"
        return None

    return check


def _stem_check(value: str) -> str | None:
    if not re.fullmatch(r"[A-Za-z0-9][A-Za-z0-9._-]*", value):
        return (f"{value!r} is not a plain file-name stem; use letters, digits, "
                "'.', '_' and '-', starting with a letter or digit")
    return None


def _nonempty(value: str) -> str | None:
    return None if value.strip() else "must not be empty"


#: Every section of a scene file and its keys. The ``sensor`` section is
#: checked by :func:`glint.sensors.sensor_from_table`.
SECTIONS: dict[str, dict[str, _Key]] = {
    "scene": {
        "name": _Key("str", doc="scene name", check=_nonempty),
        "description": _Key("str", doc="free text"),
        "time": _Key("time", doc="UTC time, with Z or an offset"),
        "times": _Key("times", doc="list of times, each with Z or an offset"),
        "tie_point_tolerance": _Key(
            "number", doc="largest angle interpolation error [deg]",
            check=_range(0, 1, low_open=True, unit="deg")),
    },
    "grid": {
        "west": _Key("number", doc="west edge [deg]", check=_range(-180, 180, unit="deg")),
        "south": _Key("number", doc="south edge [deg]", check=_range(-90, 90, unit="deg")),
        "east": _Key("number", doc="east edge [deg]", check=_range(-180, 180, unit="deg")),
        "north": _Key("number", doc="north edge [deg]", check=_range(-90, 90, unit="deg")),
        "bounds": _Key("numbers", doc="[xmin, ymin, xmax, ymax] in crs units"),
        "resolution": _Key("number", doc="pixel size in crs units",
                           check=_range(0, None, low_open=True)),
        "crs": _Key("any", doc="coordinate reference system"),
        "raster": _Key("str", doc="raster file whose grid is used"),
    },
    "sensor": {},
    "surface": {
        "wind_speed": _Key("number", required=True, doc="[m/s] at wind_height",
                           check=_range(0, None, unit="m/s")),
        "wind_direction": _Key("number", doc="[deg] the wind blows from",
                               check=_range(0, 360, high_open=True, unit="deg")),
        "wind_height": _Key("number", doc="[m]", check=_wind_height_check),
        "slope_model": _Key("str", check=_one_of(SLOPE_MODELS)),
        "distribution": _Key("str", check=_one_of(SLOPE_DISTRIBUTIONS)),
        "shadowing": _Key("bool"),
    },
    "water": {
        "wavelength": _Key("number", doc="[nm]", check=_wavelength_check),
        "temperature": _Key("number", doc="[degC]", check=_range(-3, 100, unit="degC")),
        "salinity": _Key("number", doc="[PSU]", check=_range(0, None, unit="PSU")),
        "index_method": _Key("str", check=_one_of(REFRACTIVE_INDEX_METHODS)),
        "refractive_index": _Key("number", check=_range(1, None, low_open=True)),
    },
    "sun": {
        "pressure": _Key("number", doc="[hPa]", check=_range(0, 1200, low_open=True, unit="hPa")),
        "air_temperature": _Key("number", doc="[degC]", check=_range(-90, 60, unit="degC")),
        "refraction": _Key("bool"),
        "delta_t": _Key("number", doc="[s]", check=_range(-1e5, 1e5, unit="s")),
        "surface_elevation": _Key("number", doc="[m]", check=_range(-1000, 9000, unit="m")),
    },
    "classes": {
        "variable": _Key("str", check=_one_of(CLASS_VARIABLES)),
        "thresholds": _Key("numbers", check=_range(0, None)),
        "names": _Key("strs"),
    },
    "outputs": {
        "formats": _Key("strs", check=_one_of(OUTPUT_FORMATS)),
        "variables": _Key("strs", check=_one_of(tuple(VARIABLES))),
        "cog": _Key("bool"),
        "compression": _Key("str", check=_one_of(COMPRESSIONS)),
        "stem": _Key("str", check=_stem_check),
    },
}

_REQUIRED_SECTIONS = ("scene", "grid", "sensor", "surface")

_KIND_NAMES = {
    "number": "a number",
    "bool": "true or false",
    "str": "a string",
    "numbers": "an array of numbers",
    "strs": "an array of strings",
    "time": "a date-time with a time zone",
    "times": "an array of date-times with time zones",
    "any": "a value",
}


def _quoted(values: Any) -> str:
    return ", ".join(repr(v) for v in values)


def _unknown_value(value: Any, allowed: tuple[str, ...]) -> str:
    msg = f"unknown value {value!r}; allowed: {_quoted(allowed)}"
    if isinstance(value, str):
        close = difflib.get_close_matches(value, allowed, n=1)
        if close:
            msg += f" (did you mean {close[0]!r}?)"
    return msg


def _type_name(value: Any) -> str:
    if isinstance(value, bool):
        return "boolean"
    if isinstance(value, (int, float)):
        return "number"
    if isinstance(value, str):
        return "string"
    if isinstance(value, _dt.datetime):
        return "date-time"
    if isinstance(value, _dt.date):
        return "date"
    if isinstance(value, _dt.time):
        return "time of day"
    if isinstance(value, list):
        return "array"
    if isinstance(value, dict):
        return "table"
    return type(value).__name__


def _is_number(value: Any) -> bool:
    return isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(
        value, (bool, np.bool_))


def _type_ok(kind: str, value: Any) -> bool:
    if kind == "number":
        return _is_number(value)
    if kind == "bool":
        return isinstance(value, (bool, np.bool_))
    if kind == "str":
        return isinstance(value, str)
    if kind == "numbers":
        return isinstance(value, (list, tuple)) and all(_is_number(v) for v in value)
    if kind == "strs":
        return isinstance(value, (list, tuple)) and all(isinstance(v, str) for v in value)
    return True


# --------------------------------------------------------------------------
# Times
# --------------------------------------------------------------------------


# --------------------------------------------------------------------------
# Loading
# --------------------------------------------------------------------------


class _Problems:
    """Collects problems, each with its key path."""

    def __init__(self) -> None:
        self.items: list[str] = []

    def add(self, key: str, msg: str) -> None:
        self.items.append(f"{key}: {msg}")


def _check_keys(section: str, table: Mapping[str, Any], problems: _Problems) -> dict[str, Any]:
    """Type- and range-check the keys of one section; return the good ones."""
    spec = SECTIONS[section]
    good: dict[str, Any] = {}
    for key, value in table.items():
        path = f"{section}.{key}"
        if key not in spec:
            msg = "unknown key"
            close = difflib.get_close_matches(str(key), list(spec), n=1)
            if close:
                msg += f" (did you mean {close[0]!r}?)"
            problems.add(path, f"{msg}; allowed keys: {', '.join(spec)}")
            continue
        k = spec[key]
        if not _type_ok(k.kind, value):
            problems.add(path, f"expected {_KIND_NAMES[k.kind]}, got {_type_name(value)} "
                         f"{_show(value)}")
            continue
        if k.check is not None:
            msg = k.check(value)
            if msg:
                problems.add(path, msg)
                continue
        good[key] = value
    for key, k in spec.items():
        if k.required and key not in table:
            problems.add(f"{section}.{key}", f"required key is missing ({k.doc})")
    return good


def _show(value: Any) -> str:
    if isinstance(value, (_dt.datetime, _dt.date, _dt.time)):
        return value.isoformat()
    return repr(value)


def _read_times(table: Mapping[str, Any], problems: _Problems) -> tuple[np.datetime64, ...]:
    if "time" in table and "times" in table:
        problems.add("scene", "give either 'time' or 'times', not both")
        return ()
    if "time" in table:
        raw, items = "scene.time", [table["time"]]
        if isinstance(table["time"], list):
            problems.add(raw, "holds an array; name the key 'times' for several times")
            return ()
    elif "times" in table:
        raw, items = "scene.times", table["times"]
        if not isinstance(items, list):
            problems.add(raw, f"expected an array of date-times with time zones, got "
                         f"{_type_name(items)} {_show(items)}")
            return ()
        if not items:
            problems.add(raw, "must hold at least one time")
            return ()
    else:
        problems.add("scene.time", "required key is missing (UTC time of the scene, "
                     "e.g. time = 2026-06-14T09:42:00Z; or times = [...])")
        return ()
    out: list[np.datetime64] = []
    for i, item in enumerate(items):
        key = raw if raw == "scene.time" else f"{raw}[{i}]"
        try:
            out.append(parse_time(item, key))
        except InputError as exc:
            problems.items.append(str(exc))
    if len(out) == len(items):
        seen = [t for t in out if out.count(t) > 1]
        if seen:
            problems.add(raw, f"lists {np.datetime_as_string(seen[0], unit='s')}Z more than once")
    return tuple(out)


def _build_grid(table: Mapping[str, Any], base_dir: Path, problems: _Problems) -> Grid | None:
    n_before = len(problems.items)
    good = _check_keys("grid", table, problems)
    box_keys = [k for k in ("west", "south", "east", "north") if k in table]
    forms = [name for name, present in (
        ("a lon/lat box (west, south, east, north)", bool(box_keys)),
        ("bounds", "bounds" in table),
        ("raster", "raster" in table)) if present]
    if not forms:
        problems.add("grid", "give one of: a lon/lat box (west, south, east, north with "
                     "resolution), bounds = [xmin, ymin, xmax, ymax] with resolution and crs, "
                     "or raster = \"file.tif\"")
        return None
    if len(forms) > 1:
        problems.add("grid", f"give only one of {', '.join(forms)}")
        return None
    crs = None
    if "crs" in good:
        try:
            crs = parse_crs(good["crs"])
        except (GridError, InputError, ValueError) as exc:
            problems.add("grid.crs", str(exc))
    if forms[0] == "raster":
        extra = [k for k in ("resolution", "crs") if k in table]
        if extra:
            problems.add("grid", f"{', '.join(extra)} cannot be used with grid.raster "
                         "(the raster's own grid is used)")
    else:
        if "resolution" not in table:
            problems.add("grid.resolution", "required key is missing (pixel size in "
                         "crs units; metres for the UTM zone of a lon/lat box)")
        if box_keys:
            missing = [k for k in ("west", "south", "east", "north") if k not in table]
            if missing:
                problems.add("grid", f"a lon/lat box needs west, south, east and north; "
                             f"missing: {', '.join(missing)}")
        else:
            if "crs" not in table:
                problems.add("grid.crs", "required key is missing (bounds are in crs units; "
                             "e.g. crs = \"EPSG:32630\")")
            b = table["bounds"]
            if "bounds" in good and len(b) != 4:
                problems.add("grid.bounds", f"expected 4 numbers [xmin, ymin, xmax, ymax], "
                             f"got {len(b)}")
    if len(problems.items) > n_before:
        return None
    try:
        if forms[0] == "raster":
            path = Path(good["raster"]).expanduser()
            if not path.is_absolute():
                path = base_dir / path
            try:
                return Grid.from_raster(path)
            except (InputFileError, GridError) as exc:
                problems.add("grid.raster", str(exc))
                return None
        if box_keys:
            return Grid.from_lonlat_box(good["west"], good["south"], good["east"],
                                        good["north"], good["resolution"], crs=crs)
        return Grid.from_bounds(tuple(float(v) for v in good["bounds"]), good["resolution"],
                                crs)
    except (GridError, InputError) as exc:
        problems.add("grid", str(exc))
    return None


def _build_classes(good: dict[str, Any], problems: _Problems) -> GlintClasses:
    thresholds = tuple(float(v) for v in good.get("thresholds", GlintClasses.thresholds))
    names = tuple(good.get("names", GlintClasses.names)) if "names" in good else None
    ok = True
    if "thresholds" in good:
        if not thresholds:
            problems.add("classes.thresholds", "must hold at least one threshold")
            ok = False
        elif any(b <= a for a, b in zip(thresholds, thresholds[1:])):
            problems.add("classes.thresholds", f"must be strictly increasing; got "
                         f"{list(thresholds)!r}")
            ok = False
        elif len(thresholds) > 254:
            problems.add("classes.thresholds", "at most 254 thresholds (255 is the no-data "
                         "class)")
            ok = False
    if names is None:
        # The default names describe the default thresholds only.
        if thresholds != GlintClasses.thresholds:
            names = tuple(f"class-{i}" for i in range(len(thresholds) + 1))
        else:
            names = GlintClasses.names
    elif ok and len(names) != len(thresholds) + 1:
        problems.add("classes.names", f"needs {len(thresholds) + 1} names (one more than "
                     f"thresholds), got {len(names)}: {list(names)!r}")
    elif any(not n.strip() for n in names) or len(set(names)) != len(names):
        problems.add("classes.names", f"names must be non-empty and distinct; got "
                     f"{list(names)!r}")
    return GlintClasses(variable=good.get("variable", "glint_radiance"),
                        thresholds=thresholds, names=names)


def _check_sensor_time(sensor: Sensor, times: tuple, problems: Any) -> None:
    """A sensor whose imaging time is fixed in its own table (a push-broom's
    ``centre_time``, a line scanner's ``start_time``) must agree with every
    scene time: a map at another time would show the fixed time's geometry
    under another label."""
    key = getattr(sensor, "time_key", None)
    pinned = getattr(sensor, key, None) if key else None
    if pinned is None:
        return
    other = [t for t in times if t != pinned]
    if other:
        shown = ", ".join(str(np.datetime64(t, "s")) + "Z" for t in other[:3])
        problems.add(f"sensor.{key}",
                     f"{np.datetime64(pinned, 's')}Z differs from the scene time(s) {shown}; "
                     f"the sensor images the scene at its own times, so leave out sensor.{key} "
                     "(it then follows the scene time, also under --time) or map that time")


def scene_from_dict(data: Mapping[str, Any], *, base_dir: Path | str,
                    source: Path | str | None = None, grid: Grid | None = None) -> Scene:
    """Build and validate a :class:`Scene` from a nested mapping.

    Parameters
    ----------
    data : mapping
        The scene as TOML loads it: one table per section (``scene``,
        ``grid``, ``sensor``, ``surface``, ``water``, ``sun``, ``classes``,
        ``outputs``).
    base_dir : path
        Directory against which relative file paths are resolved (the scene
        file's directory).
    source : path, optional
        The file the scene came from; named in errors and kept on the scene.
    grid : Grid, optional
        A grid supplied by the caller (an image's grid): used instead of a
        ``[grid]`` section, which may then be omitted.

    Returns
    -------
    Scene

    Raises
    ------
    SceneError
        Listing every problem found, each prefixed by its key path.

    Examples
    --------
    >>> scene = scene_from_dict({
    ...     "scene": {"name": "Test bay", "time": "2026-06-14T10:00:00Z"},
    ...     "grid": {"bounds": [500000, 4100000, 501000, 4101000],
    ...              "resolution": 100, "crs": "EPSG:32629"},
    ...     "sensor": {"kind": "fixed-direction", "view_zenith": 0.0,
    ...                "view_azimuth": 0.0},
    ...     "surface": {"wind_speed": 5.0},
    ... }, base_dir=".")
    >>> scene.grid.shape, scene.surface.wind_direction
    ((10, 10), None)
    """
    base_dir = Path(base_dir)
    src = str(source) if source is not None else None
    problems = _Problems()
    if not isinstance(data, Mapping):
        raise SceneError([f"expected a table of sections, got {_type_name(data)}"], src)

    tables: dict[str, Mapping[str, Any]] = {}
    for name, table in data.items():
        if name not in SECTIONS:
            msg = "unknown section"
            close = difflib.get_close_matches(str(name), list(SECTIONS), n=1)
            if close:
                msg += f" (did you mean [{close[0]}]?)"
            problems.add(str(name), f"{msg}; allowed sections: {', '.join(SECTIONS)}")
        elif not isinstance(table, Mapping):
            problems.add(name, f"expected a table [{name}], got {_type_name(table)} "
                         f"{_show(table)}")
        else:
            tables[name] = table
    for name in _REQUIRED_SECTIONS:
        if name not in data and not (name == "grid" and grid is not None):
            problems.add(name, f"required section [{name}] is missing")

    # [scene]
    st = tables.get("scene", {})
    scene_good = _check_keys("scene", {k: v for k, v in st.items()
                                       if k not in ("time", "times")}, problems)
    times = _read_times(st, problems) if "scene" in tables else ()
    name = scene_good.get("name")
    if name is None and "name" not in st:
        if source is not None:
            name = Path(source).stem
        elif "scene" in tables:
            problems.add("scene.name", "required key is missing (a short name of the scene)")

    # [grid]
    if grid is None:
        grid = _build_grid(tables["grid"], base_dir, problems) if "grid" in tables else None

    # [sensor]
    sensor = None
    if "sensor" in tables:
        try:
            sensor = sensor_from_table(dict(tables["sensor"]), key="sensor",
                                       base_dir=base_dir, grid=grid)
        except SceneError as exc:
            problems.items.extend(exc.problems)
        except GlintError as exc:  # e.g. InputFileError of an angle raster
            problems.add("sensor", str(exc))
        else:
            _check_sensor_time(sensor, times, problems)

    # [surface], [water], [sun], [classes], [outputs]
    sf = _check_keys("surface", tables.get("surface", {}), problems) \
        if "surface" in tables else {}
    if sf.get("distribution") == "gram-charlier" and "wind_direction" not in tables["surface"]:
        problems.add("surface.distribution", "'gram-charlier' needs surface.wind_direction "
                     "(its skewness points along the wind); give wind_direction [deg, the "
                     "direction the wind blows from] or use distribution = \"gaussian\"")
    wt = _check_keys("water", tables.get("water", {}), problems)
    sn = _check_keys("sun", tables.get("sun", {}), problems)
    cl = _check_keys("classes", tables.get("classes", {}), problems)
    out = _check_keys("outputs", tables.get("outputs", {}), problems)
    classes = _build_classes(cl, problems)

    if problems.items:
        raise SceneError(problems.items, src)

    surface = Surface(
        wind_speed=float(sf["wind_speed"]),
        wind_direction=None if "wind_direction" not in sf else float(sf["wind_direction"]),
        wind_height=float(sf.get("wind_height", 10.0)),
        slope_model=sf.get("slope_model", "cox-munk"),
        distribution=sf.get("distribution", "gaussian"),
        shadowing=bool(sf.get("shadowing", False)),
    )
    water = Water(
        wavelength=float(wt.get("wavelength", 550.0)),
        temperature=float(wt.get("temperature", 20.0)),
        salinity=float(wt.get("salinity", 35.0)),
        index_method=wt.get("index_method", "quan-fry"),
        refractive_index=None if "refractive_index" not in wt else float(wt["refractive_index"]),
    )
    sun = SunOptions(
        pressure=float(sn.get("pressure", 1013.25)),
        air_temperature=float(sn.get("air_temperature", 12.0)),
        refraction=bool(sn.get("refraction", True)),
        delta_t=None if "delta_t" not in sn else float(sn["delta_t"]),
        surface_elevation=float(sn.get("surface_elevation", 0.0)),
    )
    outputs = Outputs(
        formats=tuple(out.get("formats", OUTPUT_FORMATS)),
        variables=tuple(out.get("variables", DEFAULT_VARIABLES)),
        cog=bool(out.get("cog", False)),
        compression=out.get("compression", "zstd"),
        stem=out.get("stem"),
    )
    assert grid is not None and sensor is not None and name is not None
    return Scene(
        name=name,
        times=times,
        grid=grid,
        sensor=sensor,
        surface=surface,
        water=water,
        sun=sun,
        classes=classes,
        outputs=outputs,
        description=scene_good.get("description", ""),
        tie_point_tolerance=float(scene_good.get("tie_point_tolerance", 1e-4)),
        source=Path(source) if source is not None else None,
    )


def _override_targets() -> dict[str, tuple[str, str]]:
    """Bare override names that point at exactly one section key."""
    owners: dict[str, list[str]] = {}
    for section, spec in SECTIONS.items():
        for key in spec:
            owners.setdefault(key, []).append(section)
    return {k: (v[0], k) for k, v in owners.items() if len(v) == 1}


def _apply_overrides(data: dict[str, Any], overrides: Mapping[str, Any],
                     src: str | None) -> dict[str, Any]:
    targets = _override_targets()
    data = {k: (dict(v) if isinstance(v, Mapping) else v) for k, v in data.items()}
    problems: list[str] = []
    for name, value in overrides.items():
        if value is None:
            continue
        if "." in name:
            section, key = name.split(".", 1)
            if section not in SECTIONS:
                problems.append(f"override {name!r}: unknown section {section!r}; allowed "
                                f"sections: {', '.join(SECTIONS)}")
                continue
        elif name in targets:
            section, key = targets[name]
        else:
            close = difflib.get_close_matches(name, list(targets), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            problems.append(f"override {name!r}: unknown key{hint}; allowed: "
                            f"{', '.join(sorted(targets))}, or 'section.key'")
            continue
        table = data.setdefault(section, {})
        if not isinstance(table, dict):
            continue  # reported by scene_from_dict
        if section == "scene" and key in ("time", "times"):
            table.pop("time", None)
            table.pop("times", None)
            if isinstance(value, (list, tuple)):
                key, value = "times", list(value)
        elif isinstance(value, tuple):
            value = list(value)
        table[key] = value
    if problems:
        raise SceneError(problems, src)
    return data


def load_scene(path: Path | str, *, grid: Grid | None = None, **overrides: Any) -> Scene:
    """Read, validate and return the scene described by a TOML file.

    Parameters
    ----------
    path : path
        The scene file. Relative paths inside it are resolved against its
        directory.
    **overrides
        Values that replace those of the file before validation, by key
        name when the name belongs to one section (``wind_speed=6.0``,
        ``time="2026-06-14T10:00:00Z"``, ``formats=["png"]``) or by
        ``"section.key"`` (``**{"water.temperature": 15.0}``). ``time``
        replaces ``time``/``times`` (a list sets ``times``). ``None`` values
        are ignored.
    grid : Grid, optional
        Use this grid (an image's) instead of the file's ``[grid]`` section,
        which may then be omitted.

    Returns
    -------
    Scene

    Raises
    ------
    InputFileError
        If the file does not exist or cannot be read.
    SceneError
        If the file is not valid TOML (with line and column) or describes an
        invalid scene (every problem with its key path).
    """
    path = Path(path).expanduser()
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise InputFileError(f"scene file {str(path)!r} does not exist") from None
    except IsADirectoryError:
        raise InputFileError(f"scene file {str(path)!r} is a directory") from None
    except OSError as exc:
        raise InputFileError(f"cannot read scene file {str(path)!r}: {exc.strerror}") from None
    try:
        data = tomllib.loads(raw.decode("utf-8"))
    except UnicodeDecodeError as exc:
        raise SceneError([f"not UTF-8 text ({exc.reason} at byte {exc.start})"],
                         str(path)) from None
    except tomllib.TOMLDecodeError as exc:
        raise SceneError([f"invalid TOML: {exc}"], str(path)) from None
    data = _apply_overrides(data, overrides, str(path))
    return scene_from_dict(data, base_dir=path.resolve().parent, source=path, grid=grid)

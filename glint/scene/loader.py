"""Scene files: TOML loading and validation of a :class:`~glint.scene.model.Scene`.

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

import copy
import datetime as _dt
import difflib
import re
import tomllib
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any, cast

import numpy as np

from glint.errors import GlintError, GridError, InputError, InputFileError, SceneError
from glint.geo.grid import Grid, parse_crs
from glint.physics.optics import REFRACTIVE_INDEX_METHODS, IndexMethod
from glint.physics.surface import (
    ROUGHNESS_LENGTH,
    SLOPE_DISTRIBUTIONS,
    SLOPE_MODELS,
    SlopeDistribution,
)
from glint.scene.model import (
    CLASS_VARIABLES,
    COMPRESSIONS,
    OUTPUT_FORMATS,
    WAVELENGTH_RANGE,
    GlintClasses,
    Outputs,
    Scene,
    SunOptions,
    Surface,
    Water,
    slugify,
)
from glint.sensors import Sensor, sensor_from_table
from glint.times import format_time, parse_time
from glint.validation import interval_problem
from glint.variables import DEFAULT_VARIABLES, VARIABLES

__all__ = [
    "load_scene",
    "scene_from_dict",
    "SECTIONS",
    # the typed model, re-exported from glint.scene.model
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
    """A key check: every number of the value lies in the interval
    (:func:`glint.validation.interval_problem`)."""
    def check(value: Any) -> str | None:
        return interval_problem(value, low, high, low_open=low_open, high_open=high_open,
                                unit=unit)

    return check


def _wavelength_check(value: Any) -> str | None:
    msg = _range(*WAVELENGTH_RANGE, unit="nm")(value)
    if msg:
        msg += " (wavelengths are in nanometres, e.g. 550 for green light, not micrometres)"
    return msg


def _wind_height_check(value: Any) -> str | None:
    if interval_problem(value, ROUGHNESS_LENGTH, None, low_open=True) is not None:
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
            bad = k.check(value)
            if bad:
                problems.add(path, bad)
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
            problems.add(raw, f"lists {format_time(seen[0])} more than once")
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
        left, bottom, right, top = (float(v) for v in good["bounds"])
        return Grid.from_bounds((left, bottom, right, top), good["resolution"], crs)
    except (GridError, InputError) as exc:
        problems.add("grid", str(exc))
    return None


def _build_classes(table: Mapping[str, Any], problems: _Problems) -> GlintClasses:
    """[classes]: the class raster's variable, thresholds and names."""
    good = _check_keys("classes", table, problems)
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


def _check_sensor_time(sensor: Sensor, times: Sequence[np.datetime64],
                       problems: _Problems) -> None:
    """A sensor whose imaging time is fixed in its own table (a push-broom's
    ``centre_time``, a line scanner's ``start_time``) must agree with every
    scene time: a map at another time would show the fixed time's geometry
    under another label."""
    key, pinned = sensor.time_key, sensor.fixed_time
    if key is None or pinned is None:
        return
    other = [t for t in times if t != pinned]
    if other:
        shown = ", ".join(format_time(t) for t in other[:3])
        problems.add(f"sensor.{key}",
                     f"{format_time(pinned)} differs from the scene time(s) {shown}; "
                     f"the sensor images the scene at its own times, so leave out sensor.{key} "
                     "(it then follows the scene time, also under --time) or map that time")


def _section_tables(data: Mapping[str, Any], problems: _Problems, *,
                    grid_given: bool = False) -> dict[str, Mapping[str, Any]]:
    """The tables of the known sections; unknown, non-table and missing
    required sections are problems ([grid] is optional when the caller
    supplies the grid)."""
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
        if name not in data and not (name == "grid" and grid_given):
            problems.add(name, f"required section [{name}] is missing")
    return tables


@dataclass(frozen=True)
class _SceneSection:
    """What [scene] gives: name, times, description, tie-point tolerance."""

    name: str | None
    times: tuple[np.datetime64, ...]
    description: str
    tie_point_tolerance: float


def _build_scene_section(tables: Mapping[str, Mapping[str, Any]], source: Path | str | None,
                         problems: _Problems) -> _SceneSection:
    """[scene]: name (default: the file's stem), time or times, description,
    tie_point_tolerance."""
    present = "scene" in tables
    st = tables.get("scene", {})
    good = _check_keys("scene", {k: v for k, v in st.items() if k not in ("time", "times")},
                       problems)
    times = _read_times(st, problems) if present else ()
    name: str | None = good.get("name")
    if name is None and "name" not in st:
        if source is not None:
            name = Path(source).stem
        elif present:
            problems.add("scene.name", "required key is missing (a short name of the scene)")
    return _SceneSection(name, times, str(good.get("description", "")),
                         float(good.get("tie_point_tolerance", 1e-4)))


def _build_sensor(tables: Mapping[str, Mapping[str, Any]], base_dir: Path, grid: Grid | None,
                  times: Sequence[np.datetime64], problems: _Problems) -> Sensor | None:
    """[sensor]: built and checked by :func:`glint.sensors.sensor_from_table`;
    a time fixed by the sensor must agree with the scene times."""
    if "sensor" not in tables:
        return None
    try:
        sensor = sensor_from_table(dict(tables["sensor"]), key="sensor", base_dir=base_dir,
                                   grid=grid)
    except SceneError as exc:
        problems.items.extend(exc.problems)
        return None
    except GlintError as exc:  # e.g. InputFileError of an angle raster
        problems.add("sensor", str(exc))
        return None
    _check_sensor_time(sensor, times, problems)
    return sensor


def _build_surface(tables: Mapping[str, Mapping[str, Any]], problems: _Problems) -> Surface | None:
    """[surface]: wind and slope model (None when wind_speed is missing or bad)."""
    if "surface" not in tables:
        return None
    sf = _check_keys("surface", tables["surface"], problems)
    if sf.get("distribution") == "gram-charlier" and "wind_direction" not in tables["surface"]:
        problems.add("surface.distribution", "'gram-charlier' needs surface.wind_direction "
                     "(its skewness points along the wind); give wind_direction [deg, the "
                     "direction the wind blows from] or use distribution = \"gaussian\"")
    if "wind_speed" not in sf:
        return None
    return Surface(
        wind_speed=float(sf["wind_speed"]),
        wind_direction=None if "wind_direction" not in sf else float(sf["wind_direction"]),
        wind_height=float(sf.get("wind_height", 10.0)),
        slope_model=str(sf.get("slope_model", "cox-munk")),
        distribution=cast(SlopeDistribution, sf.get("distribution", "gaussian")),
        shadowing=bool(sf.get("shadowing", False)),
    )


def _build_water(tables: Mapping[str, Mapping[str, Any]], problems: _Problems) -> Water:
    """[water]: wavelength, temperature, salinity, refractive index."""
    wt = _check_keys("water", tables.get("water", {}), problems)
    return Water(
        wavelength=float(wt.get("wavelength", 550.0)),
        temperature=float(wt.get("temperature", 20.0)),
        salinity=float(wt.get("salinity", 35.0)),
        index_method=cast(IndexMethod, wt.get("index_method", "quan-fry")),
        refractive_index=None if "refractive_index" not in wt else float(wt["refractive_index"]),
    )


def _build_sun(tables: Mapping[str, Mapping[str, Any]], problems: _Problems) -> SunOptions:
    """[sun]: options of the sun position."""
    sn = _check_keys("sun", tables.get("sun", {}), problems)
    return SunOptions(
        pressure=float(sn.get("pressure", 1013.25)),
        air_temperature=float(sn.get("air_temperature", 12.0)),
        refraction=bool(sn.get("refraction", True)),
        delta_t=None if "delta_t" not in sn else float(sn["delta_t"]),
        surface_elevation=float(sn.get("surface_elevation", 0.0)),
    )


def _build_outputs(tables: Mapping[str, Mapping[str, Any]], problems: _Problems) -> Outputs:
    """[outputs]: formats, variables, COG, compression, file-name stem."""
    out = _check_keys("outputs", tables.get("outputs", {}), problems)
    return Outputs(
        formats=tuple(out.get("formats", OUTPUT_FORMATS)),
        variables=tuple(out.get("variables", DEFAULT_VARIABLES)),
        cog=bool(out.get("cog", False)),
        compression=str(out.get("compression", "zstd")),
        stem=out.get("stem"),
    )


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

    Notes
    -----
    Each section has its own builder, which reports every problem of that
    section with its key path; the scene is assembled only when no section
    had a problem.

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
    if not isinstance(data, Mapping):
        raise SceneError([f"expected a table of sections, got {_type_name(data)}"], src)
    problems = _Problems()
    tables = _section_tables(data, problems, grid_given=grid is not None)
    head = _build_scene_section(tables, source, problems)
    if grid is None:
        grid = _build_grid(tables["grid"], base_dir, problems) if "grid" in tables else None
    sensor = _build_sensor(tables, base_dir, grid, head.times, problems)
    surface = _build_surface(tables, problems)
    water = _build_water(tables, problems)
    sun = _build_sun(tables, problems)
    classes = _build_classes(tables.get("classes", {}), problems)
    outputs = _build_outputs(tables, problems)
    if (problems.items or grid is None or sensor is None or surface is None
            or head.name is None):
        raise SceneError(problems.items or ["incomplete scene"], src)
    return Scene(
        name=head.name,
        times=head.times,
        grid=grid,
        sensor=sensor,
        surface=surface,
        water=water,
        sun=sun,
        classes=classes,
        outputs=outputs,
        description=head.description,
        tie_point_tolerance=head.tie_point_tolerance,
        source=Path(source) if source is not None else None,
        tables=copy.deepcopy(dict(data)),
        base_dir=base_dir.resolve(),
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

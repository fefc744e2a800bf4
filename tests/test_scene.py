"""Tests of glint.scene: the TOML scene file, its validation and overrides."""

from __future__ import annotations

import copy
import dataclasses
import datetime as dt
import math
from pathlib import Path

import numpy as np

from glint.times import parse_time
import pytest

from glint.errors import InputError, InputFileError, SceneError
from glint.scene import (
    SECTIONS,
    GlintClasses,
    Scene,
    Surface,
    Water,
    load_scene,
    scene_from_dict,
    slugify,
)

EXAMPLES = Path(__file__).resolve().parents[1] / "example_scenes"

UTC = dt.timezone.utc


def base() -> dict:
    """A small valid scene as TOML would load it."""
    return {
        "scene": {"name": "Test bay", "time": dt.datetime(2026, 6, 14, 10, 0, tzinfo=UTC)},
        "grid": {"bounds": [500000.0, 4100000.0, 501000.0, 4101000.0],
                 "resolution": 100.0, "crs": "EPSG:32629"},
        "sensor": {"kind": "fixed-direction", "view_zenith": 10.0, "view_azimuth": 90.0},
        "surface": {"wind_speed": 5.0},
    }


def problems_of(data: dict, **kw) -> list[str]:
    kw.setdefault("base_dir", Path("."))
    with pytest.raises(SceneError) as info:
        scene_from_dict(data, **kw)
    return info.value.problems


def with_value(section: str, key: str, value) -> dict:
    data = base()
    data.setdefault(section, {})[key] = value
    return data


def write(path: Path, text: str) -> Path:
    path.write_text(text, encoding="utf-8")
    return path


# --------------------------------------------------------------------------
# The example files
# --------------------------------------------------------------------------


def test_coastal_example_loads():
    scene = load_scene(EXAMPLES / "coastal_inlet_morning.toml")
    assert isinstance(scene, Scene)
    # 11:30 at +01:00 is 10:30 UTC (ISO 8601 offset arithmetic).
    assert scene.times == (np.datetime64("2026-06-14T10:30:00", "ns"),)
    assert scene.times[0].dtype == np.dtype("datetime64[ns]")
    # A lon/lat box centred at 7.99 W lies in UTM zone 29N (zones are 6 deg
    # wide from 180 W: zone 29 spans 12 W - 6 W; common practice).
    assert scene.grid.crs.to_epsg() == 32629
    # 0.034 deg of longitude at 37 N is about 3.0 km (cos(37 deg) * 111.3 km
    # per degree); 0.027 deg of latitude about 3.0 km: about 300 x 300 pixels.
    rows, cols = scene.grid.shape
    assert 290 <= rows <= 320 and 290 <= cols <= 320
    assert scene.surface.wind_direction == 260.0
    assert scene.source == EXAMPLES / "coastal_inlet_morning.toml"
    assert scene.file_stem == "saltmarsh_reach_inlet_morning_survey"


def test_open_sea_example_loads():
    scene = load_scene(EXAMPLES / "open_sea_tile.toml")
    # 12 km at 40 m per pixel = 300 pixels each way (arithmetic).
    assert scene.grid.shape == (300, 300)
    assert scene.grid.crs.to_epsg() == 32629
    assert scene.times == (np.datetime64("2026-09-03T11:12:00", "ns"),)
    assert scene.classes == GlintClasses()
    assert scene.outputs.stem == "open_sea_tile"
    assert scene.sun.pressure == 1018.0


def test_every_example_loads():
    files = sorted(EXAMPLES.glob("*.toml"))
    assert len(files) >= 2
    for path in files:
        assert load_scene(path).times


# --------------------------------------------------------------------------
# Defaults, dataclasses, helpers
# --------------------------------------------------------------------------


def test_defaults_of_optional_sections():
    scene = scene_from_dict(base(), base_dir=Path("."))
    assert scene.surface == Surface(wind_speed=5.0, wind_direction=None)
    assert scene.water == Water()
    assert scene.classes.thresholds == (1e-4, 5e-3)
    assert scene.classes.names == ("negligible", "correctable", "severe")
    assert scene.outputs.formats == ("geotiff", "netcdf", "png")
    assert scene.tie_point_tolerance == 1e-4
    assert scene.source is None
    # 1 km at 100 m per pixel: 10 x 10 (arithmetic).
    assert scene.grid.shape == (10, 10)


def test_scene_is_frozen():
    scene = scene_from_dict(base(), base_dir=Path("."))
    with pytest.raises(dataclasses.FrozenInstanceError):
        scene.name = "other"  # type: ignore[misc]
    changed = dataclasses.replace(scene, name="Other bay")
    assert changed.file_stem == "other_bay"


def test_wind_speed_10m_log_profile():
    # Logarithmic wind profile u(z2) = u(z1) ln(z2/z0) / ln(z1/z0) with the
    # open-sea roughness length z0 = 2e-4 m (common practice).
    s = Surface(wind_speed=6.0, wind_direction=None, wind_height=3.0)
    expected = 6.0 * math.log(10.0 / 2e-4) / math.log(3.0 / 2e-4)
    assert s.wind_speed_10m == pytest.approx(expected, rel=1e-6)
    assert Surface(wind_speed=6.0, wind_direction=None).wind_speed_10m == 6.0


def test_refractive_index_value():
    assert Water(refractive_index=1.333).refractive_index_value() == 1.333
    # Sea water in the visible: about 1.34 (common practice; Quan and Fry 1995
    # give 1.3394 at 589 nm, 20 degC, 35 PSU from memory).
    assert Water().refractive_index_value() == pytest.approx(1.34, abs=0.003)


def test_slugify():
    assert slugify("Saltmarsh Reach inlet, morning survey") == \
        "saltmarsh_reach_inlet_morning_survey"
    assert slugify("  ***  ") == "scene"


def test_file_stem_from_outputs():
    data = base()
    data["outputs"] = {"stem": "bay-01"}
    assert scene_from_dict(data, base_dir=Path(".")).file_stem == "bay-01"


# --------------------------------------------------------------------------
# Times
# --------------------------------------------------------------------------


def test_parse_time_offsets():
    # ISO 8601: 10:42+01:00 and 09:42Z are the same instant.
    assert parse_time("2026-06-14T10:42:00+01:00") == np.datetime64("2026-06-14T09:42:00", "ns")
    assert parse_time("2026-06-14T09:42:00Z") == np.datetime64("2026-06-14T09:42:00", "ns")
    tz = dt.timezone(dt.timedelta(hours=-7))
    assert parse_time(dt.datetime(1979, 5, 27, 0, 32, tzinfo=tz)) == \
        np.datetime64("1979-05-27T07:32:00", "ns")


@pytest.mark.parametrize("value, words", [
    ("2026-06-14T09:42:00", ["has no time zone", "add Z or an offset"]),
    ("2026-06-14", ["no time of day"]),
    ("tomorrow morning", ["not an ISO 8601"]),
    (dt.date(2026, 6, 14), ["no time of day"]),
    (dt.time(9, 42), ["no date"]),
    (42, ["expected a date-time"]),
])
def test_parse_time_errors(value, words):
    with pytest.raises(InputError) as info:
        parse_time(value, "scene.time")
    msg = str(info.value)
    assert msg.startswith("scene.time: ")
    for w in words:
        assert w in msg


def test_toml_local_datetime_message(tmp_path):
    # TOML 1.0: a local date-time has no offset, so it loads naive.
    text = (EXAMPLES / "open_sea_tile.toml").read_text()
    text = text.replace("time = 2026-09-03T11:12:00Z", "time = 2026-06-14T09:42:00")
    path = write(tmp_path / "s.toml", text)
    with pytest.raises(SceneError) as info:
        load_scene(path)
    assert info.value.problems == [
        "scene.time: 2026-06-14T09:42:00 has no time zone; add Z or an offset like +01:00"]


def test_scene_time_outside_nanosecond_range():
    # numpy datetime64[ns] holds 1678..2262 only (numpy docs, "Datetime
    # Units"); 2263 used to wrap round to 1678-11-23.
    (msg,) = problems_of(with_value("scene", "time", "2263-06-14T10:30:00Z"))
    assert msg.startswith("scene.time: '2263-06-14T10:30:00Z' is outside"), msg
    assert "1678-01-01T00:00:00Z to 2261-12-31T23:59:59Z" in msg
    data = base()
    data["scene"].pop("time")
    data["scene"]["times"] = [dt.datetime(2026, 6, 14, 10, tzinfo=UTC),
                              dt.datetime(2263, 6, 14, 10, 30, tzinfo=UTC)]
    (msg,) = problems_of(data)
    assert msg.startswith("scene.times[1]: 2263-06-14T10:30:00+00:00 is outside"), msg


def test_gram_charlier_needs_wind_direction():
    # Cox and Munk (1954, J. Opt. Soc. Am. 44(11) 838, doi:10.1364/JOSA.44.000838):
    # the skewness of the slopes lies along the wind, so the Gram-Charlier
    # density cannot be set up without a wind direction.
    data = with_value("surface", "distribution", "gram-charlier")
    (msg,) = problems_of(data)
    assert msg.startswith("surface.distribution: 'gram-charlier' needs "
                          "surface.wind_direction"), msg
    assert "gaussian" in msg
    data["surface"]["wind_direction"] = 250.0
    scene = scene_from_dict(data, base_dir=Path("."))
    assert scene.surface.distribution == "gram-charlier"
    # A bad direction is reported once, under its own key.
    data["surface"]["wind_direction"] = 400.0
    (msg,) = problems_of(data)
    assert msg.startswith("surface.wind_direction: ")


def test_times_list_and_errors():
    data = base()
    del data["scene"]["time"]
    data["scene"]["times"] = [dt.datetime(2026, 6, 14, 9, tzinfo=UTC), "2026-06-14T10:00:00Z"]
    scene = scene_from_dict(data, base_dir=Path("."))
    assert scene.times == (np.datetime64("2026-06-14T09:00", "ns"),
                           np.datetime64("2026-06-14T10:00", "ns"))

    data["scene"]["times"] = ["2026-06-14T10:00:00Z", "2026-06-14T11:00:00"]
    assert problems_of(data) == ["scene.times[1]: 2026-06-14T11:00:00 has no time zone; "
                                 "add Z or an offset like +01:00"]
    data["scene"]["times"] = ["2026-06-14T10:00:00Z", "2026-06-14T11:00:00+01:00"]
    (p,) = problems_of(data)
    assert p.startswith("scene.times: ") and "more than once" in p
    data["scene"]["times"] = []
    assert problems_of(data) == ["scene.times: must hold at least one time"]
    data["scene"]["time"] = "2026-06-14T10:00:00Z"
    data["scene"]["times"] = ["2026-06-14T10:00:00Z"]
    assert problems_of(data) == ["scene: give either 'time' or 'times', not both"]


# --------------------------------------------------------------------------
# One message per bad input: key path and what is allowed
# --------------------------------------------------------------------------

BAD_VALUES = [
    # section, key, value, words expected in the message besides the key path
    ("surface", "wind_speed", -1.0, [">= 0 m/s", "-1.0"]),
    ("surface", "wind_speed", "5", ["expected a number", "got string '5'"]),
    ("surface", "wind_speed", True, ["expected a number", "got boolean"]),
    ("surface", "wind_speed", math.nan, [">= 0", "nan"]),
    ("surface", "wind_direction", 360.0, ["[0, 360) deg", "360.0"]),
    ("surface", "wind_direction", -5, ["[0, 360) deg"]),
    ("surface", "wind_height", 0.0, ["must exceed the roughness length 0.0002 m", "0.0"]),
    # Below the 2e-4 m roughness length the log profile ln(z/z0) turns
    # negative (common practice: z0 ~ 2e-4 m over the sea).
    ("surface", "wind_height", 0.0001,
     ["must exceed the roughness length 0.0002 m", "0.0001"]),
    ("surface", "slope_model", "cox_munk",
     ["'cox-munk', 'cox-munk-slick', 'breon-henriot', 'wu'", "did you mean 'cox-munk'"]),
    ("surface", "distribution", "normal", ["'gaussian', 'gram-charlier'"]),
    ("surface", "shadowing", "yes", ["expected true or false", "got string 'yes'"]),
    ("water", "wavelength", 0.0, ["[200, 2500] nm", "nanometres"]),
    # 0.55 um meant as 550 nm (common practice: optical remote sensing spans
    # about 200-2500 nm, ultraviolet to shortwave infrared).
    ("water", "wavelength", 0.55, ["[200, 2500] nm", "got 0.55", "nanometres"]),
    ("water", "wavelength", 2501.0, ["[200, 2500] nm", "2501.0"]),
    ("water", "temperature", 150.0, ["[-3, 100] degC"]),
    ("water", "salinity", -1.0, [">= 0 PSU"]),
    ("water", "index_method", "quanfry", ["'quan-fry', 'iapws'", "did you mean 'quan-fry'"]),
    ("water", "refractive_index", 0.9, ["> 1"]),
    ("sun", "pressure", 0.0, ["(0, 1200] hPa"]),
    ("sun", "air_temperature", 80.0, ["[-90, 60] degC"]),
    ("sun", "refraction", 1, ["expected true or false", "got number 1"]),
    ("sun", "delta_t", "69", ["expected a number"]),
    ("sun", "surface_elevation", 1e5, ["[-1000, 9000] m"]),
    ("classes", "variable", "sun_zenith",
     ["'glint_radiance', 'glint_reflectance', 'glint_fraction'"]),
    ("classes", "thresholds", [-1.0, 1.0], [">= 0"]),
    ("classes", "thresholds", "1e-4", ["expected an array of numbers"]),
    ("classes", "names", [1, 2, 3], ["expected an array of strings"]),
    ("outputs", "formats", ["tif"], ["'geotiff', 'netcdf', 'png'", "did you mean 'geotiff'"]),
    ("outputs", "formats", ["png", "png"], ["'png' more than once"]),
    ("outputs", "formats", [], ["at least one of 'geotiff', 'netcdf', 'png'"]),
    ("outputs", "variables", ["glint_reflectanse"],
     ["'glint_reflectance'", "'glint_class'", "did you mean 'glint_reflectance'"]),
    ("outputs", "cog", "no", ["expected true or false"]),
    ("outputs", "compression", "zip", ["'zstd', 'deflate', 'lzw', 'none'"]),
    ("outputs", "stem", "../up", ["not a plain file-name stem"]),
    ("scene", "name", "   ", ["must not be empty"]),
    ("scene", "name", 7, ["expected a string", "got number 7"]),
    ("scene", "tie_point_tolerance", 0.0, ["(0, 1] deg"]),
    ("grid", "resolution", -10.0, ["> 0"]),
    ("grid", "bounds", [0, 0, 1], ["expected 4 numbers"]),
]


@pytest.mark.parametrize("section, key, value, words", BAD_VALUES,
                         ids=[f"{s}.{k}={v!r}" for s, k, v, _ in BAD_VALUES])
def test_bad_value_message(section, key, value, words):
    (msg,) = problems_of(with_value(section, key, value))
    assert msg.startswith(f"{section}.{key}: "), msg
    for w in words:
        assert w in msg, msg


def test_unknown_key_lists_allowed_and_suggests():
    (msg,) = problems_of(with_value("surface", "wind_sped", 3.0))
    # Same wording as the sensor tables (glint.sensors): hint in brackets,
    # then "; allowed keys: ...".
    assert msg.startswith("surface.wind_sped: unknown key (did you mean 'wind_speed'?); "
                          "allowed keys: "), msg
    for key in SECTIONS["surface"]:
        assert key in msg


def test_unknown_key_without_hint_has_separator():
    (msg,) = problems_of(with_value("scene", "foo", 1))
    assert msg == ("scene.foo: unknown key; allowed keys: "
                   + ", ".join(SECTIONS["scene"])), msg


def test_unknown_section_lists_allowed_and_suggests():
    data = base()
    data["outptus"] = {"formats": ["png"]}
    (msg,) = problems_of(data)
    assert msg.startswith("outptus: unknown section (did you mean [outputs]?); "
                          "allowed sections: "), msg
    assert "scene, grid, sensor, surface, water, sun, classes, outputs" in msg


def test_data_that_is_not_a_table():
    with pytest.raises(SceneError) as info:
        scene_from_dict([1, 2], base_dir=Path("."))  # type: ignore[arg-type]
    assert "expected a table of sections, got array" in str(info.value)


def test_sensor_problems_keep_their_key_path():
    data = base()
    data["sensor"] = {"kind": "fixed-direktion"}
    (msg,) = problems_of(data)
    assert msg.startswith("sensor.kind: ") and "fixed-direction" in msg and "nadir-point" in msg


def test_section_that_is_not_a_table():
    data = base()
    data["water"] = 550.0
    assert problems_of(data) == ["water: expected a table [water], got number 550.0"]


@pytest.mark.parametrize("section", ["scene", "grid", "sensor", "surface"])
def test_missing_required_section(section):
    data = base()
    del data[section]
    msgs = problems_of(data)
    assert f"{section}: required section [{section}] is missing" in msgs


@pytest.mark.parametrize("section, key, path", [
    ("surface", "wind_speed", "surface.wind_speed: required key is missing"),
    ("scene", "time", "scene.time: required key is missing"),
    ("scene", "name", "scene.name: required key is missing"),
    ("grid", "resolution", "grid.resolution: required key is missing"),
    ("grid", "crs", "grid.crs: required key is missing"),
])
def test_missing_required_key(section, key, path):
    data = base()
    del data[section][key]
    msgs = problems_of(data)
    assert any(m.startswith(path) for m in msgs), msgs


def test_name_defaults_to_file_stem(tmp_path):
    text = (EXAMPLES / "open_sea_tile.toml").read_text()
    text = text.replace('name = "Open sea tile, mid-morning overpass"\n', "")
    scene = load_scene(write(tmp_path / "my_bay.toml", text))
    assert scene.name == "my_bay"


def test_classes_checks():
    data = with_value("classes", "thresholds", [0.1, 0.01])
    (msg,) = problems_of(data)
    assert msg.startswith("classes.thresholds: must be strictly increasing")
    data = with_value("classes", "names", ["low", "high"])
    (msg,) = problems_of(data)
    assert msg.startswith("classes.names: needs 3 names")
    data = with_value("classes", "names", ["a", "a", "b"])
    (msg,) = problems_of(data)
    assert msg.startswith("classes.names: ") and "distinct" in msg
    data = with_value("classes", "thresholds", [0.001])
    scene = scene_from_dict(data, base_dir=Path("."))
    assert scene.classes.names == ("class-0", "class-1")


def test_changed_thresholds_get_generic_names():
    # docs/user-guide.md, [classes]: thresholds changed without names give
    # class-0, class-1, ...; the default names belong to the default
    # thresholds only.
    data = with_value("classes", "thresholds", [0.001, 0.01])
    scene = scene_from_dict(data, base_dir=Path("."))
    assert scene.classes.names == ("class-0", "class-1", "class-2")
    data = with_value("classes", "thresholds", list(GlintClasses.thresholds))
    scene = scene_from_dict(data, base_dir=Path("."))
    assert scene.classes.names == GlintClasses.names
    data = with_value("classes", "variable", "glint_reflectance")
    scene = scene_from_dict(data, base_dir=Path("."))
    assert scene.classes.names == GlintClasses.names


# --------------------------------------------------------------------------
# Grids and CRSs
# --------------------------------------------------------------------------


def test_lonlat_box_grid():
    data = base()
    data["grid"] = {"west": 5.0, "south": 52.0, "east": 5.1, "north": 52.05, "resolution": 10.0}
    scene = scene_from_dict(data, base_dir=Path("."))
    # 5.05 E lies in UTM zone 31N (common practice: zone 31 spans 0 - 6 E).
    assert scene.grid.crs.to_epsg() == 32631


def test_impossible_grid_is_prefixed():
    data = base()
    data["grid"] = {"west": 5.1, "south": 52.0, "east": 5.0, "north": 52.05, "resolution": 10.0}
    (msg,) = problems_of(data)
    assert msg.startswith("grid: ") and "west" in msg


def test_resolution_in_metres_on_a_geographic_crs():
    # EPSG:4326 has axes in degrees (EPSG registry, via pyproj): 20 means
    # 20 degrees, more than the 0.01-degree box.
    data = base()
    data["grid"] = {"bounds": [5.0, 52.0, 5.01, 52.01], "resolution": 20.0,
                    "crs": "EPSG:4326"}
    (msg,) = problems_of(data)
    assert msg.startswith("grid: resolution 20.0 is larger than the extent"), msg
    assert "degrees" in msg and "projected CRS" in msg


def test_lonlat_box_across_antimeridian_suggests_projected_bounds():
    data = base()
    data["grid"] = {"west": 179.8, "south": -17.0, "east": -179.9, "north": -16.9,
                    "resolution": 10.0}
    (msg,) = problems_of(data)
    assert msg.startswith("grid: ") and "180 degree meridian" in msg
    # 179.95 E, 16.95 S lies in UTM zone 60 south: EPSG:32760 (common
    # practice: zone 60 spans 174 E - 180, EPSG 327zz for the south).
    assert "bounds in a projected CRS" in msg and "EPSG:32760" in msg


def test_grid_forms_are_exclusive_and_complete():
    data = base()
    data["grid"]["west"] = 5.0
    (msg,) = problems_of(data)
    assert msg.startswith("grid: give only one of")
    data = base()
    data["grid"] = {"resolution": 10.0}
    (msg,) = problems_of(data)
    assert msg.startswith("grid: give one of") and "raster" in msg
    data["grid"] = {"west": 5.0, "south": 52.0, "resolution": 10.0}
    (msg,) = problems_of(data)
    assert msg.startswith("grid: ") and "missing: east, north" in msg


def test_unknown_crs():
    (msg,) = problems_of(with_value("grid", "crs", "EPSG:99999"))
    assert msg.startswith("grid.crs: ") and "'EPSG:99999'" in msg and "EPSG code" in msg


def test_crs_as_integer():
    scene = scene_from_dict(with_value("grid", "crs", 32629), base_dir=Path("."))
    assert scene.grid.crs.to_epsg() == 32629


def _write_raster(path: Path) -> None:
    import rasterio
    from rasterio.transform import from_origin

    with rasterio.open(path, "w", driver="GTiff", width=20, height=12, count=1, dtype="uint8",
                       crs="EPSG:32629", transform=from_origin(500000, 4101000, 50, 50)) as dst:
        dst.write(np.ones((1, 12, 20), dtype="uint8"))


def test_relative_raster_path_resolved_against_scene_file(tmp_path, monkeypatch):
    sub = tmp_path / "survey"
    sub.mkdir()
    _write_raster(sub / "water.tif")
    text = (EXAMPLES / "open_sea_tile.toml").read_text()
    start = text.index("[grid]")
    end = text.index("[sensor]")
    text = text[:start] + '[grid]\nraster = "water.tif"\n\n' + text[end:]
    path = write(sub / "scene.toml", text)
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    monkeypatch.chdir(elsewhere)
    scene = load_scene(Path("..") / "survey" / "scene.toml")
    # The raster written above: 12 rows x 20 columns, 50 m pixels.
    assert scene.grid.shape == (12, 20)
    assert scene.grid.transform.a == 50.0

    (sub / "water.tif").unlink()
    with pytest.raises(SceneError) as info:
        load_scene(path)
    (msg,) = info.value.problems
    assert msg.startswith("grid.raster: ")
    assert str(sub / "water.tif") in msg


def test_raster_excludes_resolution():
    data = base()
    data["grid"] = {"raster": "x.tif", "resolution": 10.0}
    (msg,) = problems_of(data)
    assert msg.startswith("grid: resolution cannot be used with grid.raster")


# --------------------------------------------------------------------------
# Many problems at once; files; overrides
# --------------------------------------------------------------------------


def test_all_problems_reported_together():
    data = base()
    data["scene"]["time"] = dt.datetime(2026, 6, 14, 9, 42)
    data["scene"]["titel"] = "x"
    data["grid"]["crs"] = "EPSG:99999"
    data["sensor"]["view_zenith"] = 95.0
    data["surface"]["wind_speed"] = -2.0
    data["surface"]["wind_direction"] = 400.0
    data["water"] = {"wavelength": -550.0}
    data["outputs"] = {"formats": ["jpeg"]}
    with pytest.raises(SceneError) as info:
        scene_from_dict(data, base_dir=Path("."), source="bay.toml")
    err = info.value
    paths = [p.split(":")[0] for p in err.problems]
    assert paths == ["scene.titel", "scene.time", "grid.crs", "sensor.view_zenith",
                     "surface.wind_speed", "surface.wind_direction", "water.wavelength",
                     "outputs.formats"]
    text = str(err)
    assert text.startswith("invalid scene bay.toml (8 problems):")
    assert isinstance(err, ValueError)


def test_invalid_toml_reports_line_and_column(tmp_path):
    path = write(tmp_path / "bad.toml", '[scene]\nname = "x"\ntime = = 3\n')
    with pytest.raises(SceneError) as info:
        load_scene(path)
    (msg,) = info.value.problems
    assert msg.startswith("invalid TOML: ")
    assert "line 3" in msg and "column" in msg
    assert str(path) in str(info.value)


def test_missing_scene_file(tmp_path):
    with pytest.raises(InputFileError) as info:
        load_scene(tmp_path / "nope.toml")
    assert "does not exist" in str(info.value) and "nope.toml" in str(info.value)
    with pytest.raises(InputFileError):
        load_scene(tmp_path)


def test_overrides():
    path = EXAMPLES / "open_sea_tile.toml"
    scene = load_scene(path, wind_speed=9.0, wind_direction=None,
                       time="2026-09-03T12:00:00+01:00", **{"water.temperature": 12.0})
    assert scene.surface.wind_speed == 9.0
    assert scene.surface.wind_direction == 20.0  # None leaves the file's value
    assert scene.times == (np.datetime64("2026-09-03T11:00", "ns"),)
    assert scene.water.temperature == 12.0
    scene = load_scene(path, time=["2026-09-03T11:00:00Z", "2026-09-03T12:00:00Z"],
                       formats=("png",))
    assert len(scene.times) == 2 and scene.outputs.formats == ("png",)


def test_overrides_are_validated():
    path = EXAMPLES / "open_sea_tile.toml"
    with pytest.raises(SceneError) as info:
        load_scene(path, wind_speed=-1.0, time="2026-09-03T12:00:00")
    assert [p.split(":")[0] for p in info.value.problems] == ["scene.time", "surface.wind_speed"]
    with pytest.raises(SceneError) as info:
        load_scene(path, wind_sped=3.0)
    (msg,) = info.value.problems
    assert "override 'wind_sped'" in msg and "did you mean 'wind_speed'?" in msg
    with pytest.raises(SceneError) as info:
        load_scene(path, **{"wave.height": 3.0})
    assert "unknown section 'wave'" in info.value.problems[0]


def test_scene_from_dict_does_not_modify_input():
    data = base()
    kept = copy.deepcopy(data)
    scene_from_dict(data, base_dir=Path("."))
    assert data == kept


def test_sensor_time_must_agree_with_scene_time(tmp_path):
    """A push-broom's own centre_time pins its imaging geometry; mapping at
    another scene time would mislabel the map, so it is a scene problem."""
    from glint.errors import SceneError
    from glint.scene import scene_from_dict

    data = {
        "scene": {"name": "pb", "time": "2026-06-14T14:00:00Z"},
        "grid": {"west": 3.0, "south": 54.0, "east": 3.05, "north": 54.03, "resolution": 50.0},
        "sensor": {"kind": "push-broom", "altitude": 700000.0, "heading": 190.0,
                   "centre_time": "2026-06-14T10:21:00Z"},
        "surface": {"wind_speed": 5.0},
    }
    with pytest.raises(SceneError, match=r"sensor\.centre_time: 2026-06-14T10:21:00Z differs"):
        scene_from_dict(data, base_dir=tmp_path)
    data["scene"]["time"] = "2026-06-14T10:21:00Z"
    assert scene_from_dict(data, base_dir=tmp_path).sensor.centre_time is not None


def test_time_override_moves_a_push_broom_pass():
    """Without centre_time the pass follows the scene time, so --time gives
    a different sun (an hour later the sun is higher in the late morning)."""
    from pathlib import Path

    from glint.engine import compute
    from glint.scene import load_scene

    f = Path(__file__).resolve().parents[1] / "example_scenes" / "satellite_swath_windfarm.toml"
    a = load_scene(f)
    b = load_scene(f, time="2026-06-14T11:21:00Z")
    za = compute.scene_center_summary(a, a.times[0])["sun_zenith"]
    zb = compute.scene_center_summary(b, b.times[0])["sun_zenith"]
    assert zb < za - 3.0

"""Batch manifests, tile grids and per-scene state: checked before any work."""

from __future__ import annotations

import json
import os
from pathlib import Path

import numpy as np
import pytest
from pyproj import Transformer

from glint.errors import InputError, InputFileError
from glint.workflows.batch import ManifestError, load_manifest, plan_batch, safe_name
from glint.workflows.batch.state import decide, scene_inputs, write_state
from glint.workflows.batch.tiles import MAX_TILE_SCENES

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = ROOT / "example_scenes" / "batch"

SCENE = """
[scene]
name = "Test water"
time = 2026-07-02T10:40:00Z
[grid]
crs = "EPSG:32630"
bounds = [402000.0, 5601000.0, 402400.0, 5601400.0]
resolution = 40.0
[sensor]
kind = "fixed-direction"
view_zenith = 10.0
view_azimuth = 100.0
[surface]
wind_speed = 5.0
[outputs]
formats = ["geotiff"]
"""


def write(d: Path, name: str, text: str) -> Path:
    p = d / name
    p.write_text(text)
    return p


@pytest.fixture
def scene_dir(tmp_path: Path) -> Path:
    write(tmp_path, "base.toml", SCENE)
    return tmp_path


def test_examples_expand_to_named_scenes():
    m = load_manifest(EXAMPLES / "harbour_batch.toml")
    assert [e.name for e in m.entries] == ["harbour_template", "strong_wind", "day_morning_calm",
                                           "day_late_morning", "day_noon_breezy", "day_afternoon"]
    scenes = {r.name: r.scene for r in m.resolve()}
    assert scenes["strong_wind"].surface.wind_speed == 12.0
    assert scenes["day_noon_breezy"].surface.wind_speed == 8.5
    assert scenes["day_noon_breezy"].times[0] == np.datetime64("2026-07-02T12:00:00", "ns")
    # an empty CSV cell keeps the template's value
    assert scenes["day_afternoon"].surface.wind_direction == 240.0
    tiles = load_manifest(EXAMPLES / "coast_tiles.toml")
    assert len(tiles.entries) % 2 == 0 and tiles.entries[0].name.startswith("carrow_c")
    assert tiles.entries[0].name.endswith("_20260702T104000Z")


def test_scene_rows_in_toml_override_key_paths(scene_dir):
    m = write(scene_dir, "m.toml", """
scenes = ["base.toml", {file = "base.toml", name = "windy", set = {"surface.wind_speed" = 11.0}}]
[template]
scene = "base.toml"
rows = [
  {name = "east", "grid.bounds" = [402400.0, 5601000.0, 402800.0, 5601400.0]},
  {name = "late", "scene.times" = [2026-07-02T15:00:00Z, 2026-07-02T16:00:00Z]},
]
""")
    got = {r.name: r.scene for r in load_manifest(m).resolve()}
    assert list(got) == ["base", "windy", "east", "late"]
    assert got["windy"].surface.wind_speed == 11.0 and got["base"].surface.wind_speed == 5.0
    assert got["east"].grid.bounds == (402400.0, 5601000.0, 402800.0, 5601400.0)
    assert len(got["late"].times) == 2


def test_every_bad_entry_reported_with_its_position(scene_dir):
    write(scene_dir, "rows.csv", "name,surface.wind_speed,water.wavelength\n"
                                 "ok,5.0,560\nslow,-2.0,560\nblue,4.0,9000\n")
    m = write(scene_dir, "m.toml", """
scenes = ["base.toml", "nowhere.toml", {file = "base.toml", name = "typo", set = {"surface.wnd_speed" = 3.0}}]
[template]
scene = "base.toml"
rows = "rows.csv"
""")
    # First the manifest itself (files, names, rows), then every scene.
    with pytest.raises(ManifestError) as err:
        load_manifest(m)
    assert "scenes[1]: scene file 'nowhere.toml' does not exist" in str(err.value)
    write(scene_dir, "nowhere.toml", SCENE)
    with pytest.raises(ManifestError) as err:
        load_manifest(m).resolve()
    msg = str(err.value)
    assert "3 problems" in msg
    assert "scenes[2] ('typo'" in msg and "surface.wnd_speed" in msg
    assert "rows.csv line 3 ('slow'" in msg and "surface.wind_speed" in msg and "-2.0" in msg
    assert "rows.csv line 4 ('blue'" in msg and "water.wavelength" in msg


@pytest.mark.parametrize("text, expect", [
    ("scenes = [", "invalid TOML"),
    ("scenez = ['base.toml']", "unknown key(s) or table(s) ['scenez']"),
    ("description = 'nothing'", "names no scenes"),
    ("scenes = 'base.toml'", "expected a list of scene files"),
    ("scenes = [{file = 'base.toml', colour = 'red'}]", "unknown key(s) ['colour']"),
    ("scenes = [{file = 'base.toml', set = {wind = 3}}]", "not 'section.key' paths"),
    ("[template]\nscene = 'base.toml'\nrows = 'missing.csv'", "rows file 'missing.csv' does not exist"),
    ("[template]\nscene = 'base.toml'\nrows = [{\"surface.wind_speed\" = 3.0}]", "'name' is missing"),
])
def test_malformed_manifests_refused(scene_dir, text, expect):
    m = write(scene_dir, "m.toml", text)
    with pytest.raises(ManifestError, match="invalid batch manifest") as err:
        load_manifest(m)
    assert expect in str(err.value)


def test_missing_manifest_is_a_file_error(tmp_path):
    with pytest.raises(InputFileError, match="does not exist"):
        load_manifest(tmp_path / "none.toml")


def test_duplicate_and_colliding_names_refused(scene_dir):
    m = write(scene_dir, "m.toml", """
scenes = [{file = "base.toml", name = "bay 1"}, {file = "base.toml", name = "bay_1"},
          {file = "base.toml", name = "Bay_1"}, {file = "base.toml", name = "x"},
          {file = "base.toml", name = "x"}]
""")
    with pytest.raises(ManifestError) as err:
        load_manifest(m)
    msg = str(err.value)
    assert "scenes[1]: scene name 'bay_1' gives the folder 'bay_1', which scenes[0] (name 'bay 1')" in msg
    assert "scenes[2]: scene name 'Bay_1'" in msg
    assert "scenes[4]: scene name 'x'" in msg


@pytest.mark.parametrize("name", ["../escape", "a/b", "/abs", "..", ".hidden", "~home", "a\\b"])
def test_path_escaping_names_refused(scene_dir, name):
    with pytest.raises(InputError, match="would leave the output directory"):
        safe_name(name)
    m = write(scene_dir, "m.toml", f"scenes = [{{file = 'base.toml', name = {json.dumps(name)}}}]")
    with pytest.raises(ManifestError, match="would leave the output directory"):
        load_manifest(m)


@pytest.mark.parametrize("name", ["", "   ", "***", "batch-summary.csv", "x" * 200])
def test_unusable_names_refused(name):
    with pytest.raises(InputError, match=repr(name).replace("*", r"\*")[:20].replace("(", r"\(")):
        safe_name(name)


def test_tile_grid_follows_the_projected_area(scene_dir):
    m = write(scene_dir, "m.toml", """
[tiles]
scene = "base.toml"
area = [-3.60, 50.50, -3.52, 50.54]
tile_size = 2000.0
resolution = 50.0
times = [2026-07-02T10:40:00Z, 2026-07-03T10:40:00Z]
""")
    resolved = load_manifest(m).resolve()
    # Reference: the box corners projected by pyproj into the UTM zone 30N
    # (-3.56 E lies in zone 30: 6-degree zones from 180 W).
    t = Transformer.from_crs("EPSG:4326", "EPSG:32630", always_xy=True)
    xs, ys = t.transform([-3.60, -3.52, -3.52, -3.60], [50.50, 50.50, 50.54, 50.54])
    cols = range(int(np.floor(min(xs) / 2000)), int(np.ceil(max(xs) / 2000)))
    rows = range(int(np.floor(min(ys) / 2000)), int(np.ceil(max(ys) / 2000)))
    assert len(resolved) == 2 * len(cols) * len(rows)
    for r in resolved:
        g = r.scene.grid
        assert g.crs.to_epsg() == 32630 and g.shape == (40, 40)
        assert g.bounds[0] % 2000 == 0 and g.bounds[1] % 2000 == 0
    names = [r.name for r in resolved]
    assert len(set(names)) == len(names)
    assert names[0] == f"tile_c{cols[0]:04d}_r{rows[-1]:04d}_20260702T104000Z"


def test_tile_grid_over_a_polygon_keeps_tiles_that_touch_it(scene_dir):
    # An L-shaped area: the tile in the missing corner is left out.
    poly = {"type": "Polygon", "coordinates": [[[-3.60, 50.50], [-3.50, 50.50], [-3.50, 50.52],
                                                [-3.56, 50.52], [-3.56, 50.56], [-3.60, 50.56],
                                                [-3.60, 50.50]]]}
    write(scene_dir, "area.geojson", json.dumps({"type": "Feature", "geometry": poly}))
    m = write(scene_dir, "m.toml", """
[tiles]
scene = "base.toml"
area = "area.geojson"
crs = "EPSG:32630"
tile_size = 3000.0
resolution = 100.0
time_range = {start = 2026-07-02T09:00:00Z, stop = 2026-07-02T11:00:00Z, step = "1h"}
""")
    box_m = write(scene_dir, "b.toml", """
[tiles]
scene = "base.toml"
area = [-3.60, 50.50, -3.50, 50.56]
tile_size = 3000.0
resolution = 100.0
times = [2026-07-02T09:00:00Z]
""")
    n_poly = len(load_manifest(m).entries)
    n_box = len(load_manifest(box_m).entries)
    assert n_poly % 3 == 0 and 0 < n_poly // 3 < n_box


@pytest.mark.parametrize("table, expect", [
    ("area = [-3.5, 50.5, -3.6, 50.6]\ntile_size = 3000.0\nresolution = 100.0\ntimes = [2026-07-02T09:00:00Z]",
     "expected a lon/lat box"),
    ("area = [-3.6, 50.5, -3.5, 50.6]\ntile_size = 3000.0\nresolution = 70.0\ntimes = [2026-07-02T09:00:00Z]",
     "not a whole multiple of resolution"),
    ("area = [-3.6, 50.5, -3.5, 50.6]\ntile_size = 3000.0\nresolution = 100.0",
     "give exactly one of 'times'"),
    ("area = [-3.6, 50.5, -3.5, 50.6]\ntile_size = 3000.0\nresolution = 100.0\n"
     "time_range = {start = 2026-07-02T09:00:00Z, stop = 2026-07-02T11:00:00Z, step = '1 week'}",
     "time step '1 week'"),
    ("area = 'coast.geojson'\ntile_size = 3000.0\nresolution = 100.0\ntimes = [2026-07-02T09:00:00Z]",
     "GeoJSON file 'coast.geojson' does not exist"),
    ("area = [-3.6, 50.5, -3.5, 50.6]\ntile_size = 3000.0\nresolution = 100.0\ncrs = 'EPSG:99999'\n"
     "times = [2026-07-02T09:00:00Z]", "tiles.crs"),
])
def test_bad_tile_grids_refused(scene_dir, table, expect):
    m = write(scene_dir, "m.toml", f"[tiles]\nscene = 'base.toml'\n{table}\n")
    with pytest.raises(ManifestError) as err:
        load_manifest(m)
    assert expect in str(err.value)


def test_tile_grid_over_the_limit_needs_confirmation(scene_dir):
    m = write(scene_dir, "m.toml", """
[tiles]
scene = "base.toml"
area = [-3.60, 50.50, -3.50, 50.56]
tile_size = 1000.0
resolution = 100.0
times = [2026-07-02T09:00:00Z, 2026-07-02T10:00:00Z]
""")
    n = len(load_manifest(m, confirm=True).entries)
    assert n > 20
    with pytest.raises(ManifestError, match=f"expand to {n} scenes, more than the 20 allowed.*--yes"):
        load_manifest(m, max_tile_scenes=20)
    assert MAX_TILE_SCENES >= 100


def test_state_decides_new_done_changed_failed_incomplete(scene_dir, tmp_path):
    angles = write(scene_dir, "table.csv", "a,b\n1,2\n")
    m = write(scene_dir, "m.toml", "scenes = ['base.toml']")
    out = tmp_path / "out"
    (p,) = plan_batch(m, out)
    assert p.decision.status == "new"
    (out / "base").mkdir(parents=True)
    (out / "base" / "a.tif").write_text("x")
    write_state(out / "base", {"name": "base", "status": "done", "files": ["a.tif"],
                               "inputs": p.inputs.to_json()})
    assert decide(out / "base", p.inputs).status == "done"
    assert decide(out / "base", p.inputs, force=True).status == "forced"
    (out / "base" / "a.tif").unlink()
    assert decide(out / "base", p.inputs).status == "incomplete"
    # A changed value of the scene file is named with its key path
    write(scene_dir, "base.toml", SCENE.replace("wind_speed = 5.0", "wind_speed = 6.5"))
    (q,) = plan_batch(m, out)
    assert q.decision.status == "changed" and "surface.wind_speed 5.0 -> 6.5" in q.decision.reason
    # Input files named by the scene are part of its inputs
    data = {"sensor": {"table": "table.csv"}}
    before = scene_inputs(data, scene_dir)
    os.utime(angles, (0, 0))
    assert scene_inputs(data, scene_dir).digest == before.digest  # content unchanged
    angles.write_text("a,b\n1,3\n")
    assert scene_inputs(data, scene_dir).digest != before.digest
    write_state(out / "base", {"name": "base", "status": "failed", "error": "disk full",
                               "files": [], "inputs": q.inputs.to_json()})
    assert decide(out / "base", q.inputs).status == "failed"
    assert not [n for n in os.listdir(out / "base") if n.startswith(".glint")]

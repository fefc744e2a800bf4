"""Running batches: a local cluster in the test process, failures that stay
local to their scene, resuming after SIGTERM and SIGKILL, the command line."""

from __future__ import annotations

import errno
import json
import os
import signal
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
import rasterio
from click.testing import CliRunner

import distributed  # noqa: E402

from glint.cli.main import cli  # noqa: E402
from glint.scene import load_scene  # noqa: E402
from glint.workflows.batch import STATE_FILE, SUMMARY_CSV, SUMMARY_JSON, run_batch  # noqa: E402
from glint.workflows.maps import write_maps  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]

SCENE = """
[scene]
name = "Test water"
time = 2026-07-02T10:40:00Z
[grid]
crs = "EPSG:32630"
bounds = [402000.0, 5601000.0, 403200.0, 5602200.0]
resolution = {res}
[sensor]
kind = "fixed-direction"
view_zenith = 12.0
view_azimuth = 100.0
[surface]
wind_speed = 5.0
wind_direction = 240.0
[outputs]
formats = ["geotiff", "netcdf"]
variables = ["glint_reflectance", "glint_fraction", "glint_class"]
"""

# A sensor 10 m above the water 300 km away sees none of the grid (below
# the horizon): a scene that is valid but fails when computed.
BLIND = SCENE.replace('kind = "fixed-direction"\nview_zenith = 12.0\nview_azimuth = 100.0',
                      'kind = "nadir-point"\nlon = -2.0\nlat = 52.0\naltitude = 10.0')


@pytest.fixture(scope="module")
def client():
    """A local cluster inside the test process (one worker thread, so that
    monkeypatched writers are seen by the tasks)."""
    cluster = distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=False, protocol="tcp",
                                       host="127.0.0.1", dashboard_address=None)
    c = distributed.Client(cluster, set_as_default=False)
    yield c
    c.close()
    cluster.close()


def make_batch(d: Path, rows: int = 4, res: float = 40.0, blind: bool = False) -> Path:
    d.mkdir(parents=True, exist_ok=True)
    (d / "base.toml").write_text(SCENE.format(res=res))
    entries = [f'{{name = "s{i}", "surface.wind_speed" = {3.0 + i}}}' for i in range(rows)]
    text = f'[template]\nscene = "base.toml"\nrows = [{", ".join(entries)}]\n'
    if blind:
        (d / "blind.toml").write_text(BLIND.format(res=res))
        text = 'scenes = ["blind.toml"]\n' + text
    (d / "batch.toml").write_text(text)
    return d / "batch.toml"


def leftovers(out: Path) -> list[str]:
    return sorted(str(p.relative_to(out)) for p in out.rglob(".glint-*"))


def rasters(out: Path) -> dict[str, np.ndarray]:
    got = {}
    for p in sorted(out.rglob("*.tif")):
        with rasterio.open(p) as ds:
            got[str(p.relative_to(out))] = ds.read()
    for p in sorted(out.rglob("*.nc")):
        import netCDF4

        with netCDF4.Dataset(p) as ds:
            for name in ("glint_reflectance", "glint_fraction", "glint_class"):
                got[f"{p.relative_to(out)}:{name}"] = np.ma.filled(ds[name][:], np.nan)
    return got


def assert_same_pixels(a: dict[str, np.ndarray], b: dict[str, np.ndarray]) -> None:
    assert sorted(a) == sorted(b)
    for k in a:
        np.testing.assert_array_equal(a[k], b[k], err_msg=k)


def test_batch_on_a_local_cluster_with_a_failing_scene(tmp_path, client):
    m = make_batch(tmp_path / "in", rows=3, blind=True)
    out = tmp_path / "out"
    seen = []
    result = run_batch(m, out, client=client, progress=False, on_outcome=lambda o: seen.append(o.name))
    status = {o.name: o.status for o in result.outcomes}
    assert status == {"blind": "failed", "s0": "done", "s1": "done", "s2": "done"}
    assert sorted(seen) == sorted(status) and not result.ok
    (failed,) = result.failed
    assert "sees none of the grid" in failed.error
    # Each scene's files are those write_maps makes for it on its own.
    ref = tmp_path / "ref"
    write_maps(load_scene(tmp_path / "in" / "base.toml", wind_speed=4.0), ref)
    assert_same_pixels(
        {k.split("/", 1)[1]: v for k, v in rasters(out).items() if k.startswith("s1/")},
        rasters(ref))
    assert not (out / "blind").exists() or not any(
        p.suffix in (".tif", ".nc") for p in (out / "blind").iterdir())
    # The summary: one row per scene, shares of the glint classes sum to one
    doc = json.loads((out / SUMMARY_JSON).read_text())
    assert doc["counts"]["done"] == 3 and doc["counts"]["failed"] == 1
    rows = {s["scene"]: s for s in doc["scenes"]}
    assert rows["blind"]["error"] and rows["s0"]["error"] is None
    t = rows["s2"]["times"][0]
    assert t["time"] == "2026-07-02T10:40:00Z"
    assert sum(t["class_shares"].values()) == pytest.approx(1.0)
    with rasterio.open(next((out / "s2").glob("*_glint.tif"))) as ds:
        refl = ds.read(1)  # band 1 is glint_reflectance (first variable)
    assert t["max_glint_reflectance"] == pytest.approx(float(np.nanmax(refl)), rel=1e-6)
    header = (out / SUMMARY_CSV).read_text().splitlines()[0].split(",")
    for col in ("scene", "status", "seconds", "error", "mean_glint_reflectance",
                "max_glint_reflectance", "share_negligible", "share_severe"):
        assert col in header
    assert leftovers(out) == []


def test_rerun_skips_unchanged_redoes_changed_and_failed(tmp_path, client):
    m = make_batch(tmp_path / "in", rows=2, blind=True)
    out = tmp_path / "out"
    run_batch(m, out, client=client, progress=False)
    mtime = (out / "s0" / STATE_FILE).stat().st_mtime_ns
    again = run_batch(m, out, client=client, progress=False)
    assert {o.name: o.status for o in again.outcomes} == {"blind": "failed", "s0": "skipped",
                                                         "s1": "skipped"}
    assert (out / "s0" / STATE_FILE).stat().st_mtime_ns == mtime
    # change the template's time: both rows change and their files are renamed
    base = tmp_path / "in" / "base.toml"
    base.write_text(base.read_text().replace("10:40:00Z", "11:40:00Z"))
    third = run_batch(m, out, client=client, progress=False)
    st = {o.name: (o.status, o.reason) for o in third.outcomes}
    assert st["s0"][0] == "done" and "scene.time" in st["s0"][1]
    assert sorted(p.name for p in (out / "s0").glob("*.tif")) == [
        "test_water_20260702T114000Z_glint.tif", "test_water_20260702T114000Z_glint_class.tif"]
    forced = run_batch(m, out, client=client, force=True, progress=False)
    assert [o.status for o in forced.outcomes] == ["failed", "done", "done"]
    assert leftovers(out) == []


def test_full_disk_fails_one_scene_cleanly(tmp_path, client, monkeypatch):
    m = make_batch(tmp_path / "in", rows=3)
    out = tmp_path / "out"
    from glint.io.geotiff import GeoTiffWriter

    real = GeoTiffWriter.write

    def write(self, rows, arrays, cols=None):
        if Path(self.path).parent.name == "s1":
            raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC), str(self.path))
        return real(self, rows, arrays, cols)

    monkeypatch.setattr(GeoTiffWriter, "write", write)
    result = run_batch(m, out, client=client, progress=False)
    status = {o.name: o.status for o in result.outcomes}
    assert status == {"s0": "done", "s1": "failed", "s2": "done"}
    assert "No space left on device" in result.failed[0].error
    assert sorted(p.name for p in (out / "s1").iterdir()) == [STATE_FILE]
    assert leftovers(out) == []
    monkeypatch.undo()
    retry = run_batch(m, out, client=client, progress=False)
    assert {o.name: o.status for o in retry.outcomes} == {"s0": "skipped", "s1": "done",
                                                         "s2": "skipped"}


def _cli(args: list[str]) -> subprocess.Popen:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    # A session of its own, as a batch scheduler gives each job: SIGKILL then
    # goes to the whole process group (the command and its local workers), as
    # schedulers kill a job, and no orphaned worker keeps writing.
    return subprocess.Popen([sys.executable, "-m", "glint", "batch", *args], cwd=ROOT, env=env,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            start_new_session=True)


@pytest.mark.parametrize("sig", [signal.SIGTERM, signal.SIGKILL])
def test_killed_run_resumes_to_identical_outputs(tmp_path, client, sig):
    m = make_batch(tmp_path / "in", rows=6, res=6.0)     # 200 x 200 pixels each
    ref = tmp_path / "ref"
    assert run_batch(m, ref, client=client, progress=False).ok
    out = tmp_path / "out"
    p = _cli([str(m), "-o", str(out), "--workers", "1"])
    try:
        for line in p.stderr:
            if line.startswith("done"):
                if sig == signal.SIGKILL:
                    os.killpg(p.pid, sig)
                else:
                    p.send_signal(sig)
                break
        rc = p.wait(timeout=60)
    finally:
        if p.poll() is None:
            p.kill()
    assert rc == (143 if sig == signal.SIGTERM else -9)
    states = [d.name for d in out.iterdir() if (d / STATE_FILE).exists()]
    assert 1 <= len(states) < 6, "the run was not stopped midway"
    if sig == signal.SIGTERM:
        assert leftovers(out) == []   # a clean stop leaves no temporaries at once
        summary = json.loads((out / SUMMARY_JSON).read_text())
        assert summary["counts"]["done"] == len(states)
    resumed = run_batch(m, out, client=client, progress=False)
    assert resumed.ok
    assert sum(o.status == "skipped" for o in resumed.outcomes) == len(states)
    assert leftovers(out) == []
    assert_same_pixels(rasters(out), rasters(ref))


def test_cli_dry_run_lists_what_would_run_and_why(tmp_path, client):
    m = make_batch(tmp_path / "in", rows=2)
    out = tmp_path / "out"
    runner = CliRunner()
    r = runner.invoke(cli, ["batch", str(m), "-o", str(out), "--dry-run"])
    assert r.exit_code == 0, r.output
    assert "run  s0  new" in r.output and "2 would run" in r.output
    assert not out.exists()
    run_batch(m, out, client=client, progress=False)
    base = tmp_path / "in" / "base.toml"
    (tmp_path / "in" / "batch.toml").write_text(
        (tmp_path / "in" / "batch.toml").read_text().replace('"surface.wind_speed" = 4.0',
                                                             '"surface.wind_speed" = 4.5'))
    r = runner.invoke(cli, ["batch", str(m), "-o", str(out), "--dry-run"])
    assert "skip s0  done" in r.output
    assert "run  s1  changed    surface.wind_speed 4.0 -> 4.5" in r.output
    r = runner.invoke(cli, ["batch", str(m), "-o", str(out), "--dry-run", "--force"])
    assert "run  s0  forced" in r.output
    assert base.exists()


def test_cli_exit_codes_for_bad_manifests_and_failed_scenes(tmp_path):
    runner = CliRunner()
    bad = tmp_path / "bad.toml"
    bad.write_text('scenes = [{file = "x.toml", name = "../up"}]')
    r = runner.invoke(cli, ["batch", str(bad), "-o", str(tmp_path / "o"), "--dry-run"])
    assert r.exit_code == 2 and "invalid batch manifest" in r.output
    make_batch(tmp_path, rows=1)
    (tmp_path / "tiles.toml").write_text("""
[tiles]
scene = "base.toml"
area = [-3.60, 50.50, -3.50, 50.56]
tile_size = 1000.0
resolution = 100.0
time_range = {start = 2026-07-01T10:00:00Z, stop = 2026-07-30T10:00:00Z, step = "1d"}
""")
    r = runner.invoke(cli, ["batch", str(tmp_path / "tiles.toml"), "-o", str(tmp_path / "o"),
                            "--dry-run"])
    assert r.exit_code == 2 and "more than the 1000 allowed" in r.output and "--yes" in r.output
    r = runner.invoke(cli, ["batch", str(tmp_path / "tiles.toml"), "-o", str(tmp_path / "o"),
                            "--dry-run", "--yes"])
    assert r.exit_code == 0 and "would run" in r.output
    r = runner.invoke(cli, ["batch", str(bad), "--workers", "2", "--scheduler", "tcp://127.0.0.1:1"])
    assert r.exit_code == 2 and "--workers" in r.output



def test_large_scene_is_split_over_workers_and_written_by_one_process(tmp_path):
    m = make_batch(tmp_path / "in", rows=1, res=4.0)      # 300 x 300 pixels
    ref = tmp_path / "ref"
    write_maps(load_scene(tmp_path / "in" / "base.toml", wind_speed=3.0), ref)
    out = tmp_path / "out"
    # Two worker processes; strips of 64 rows, any scene above 10 000 pixels split.
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                       host="127.0.0.1", dashboard_address=None)
    try:
        with distributed.Client(cluster, set_as_default=False) as c:
            with distributed.get_task_stream(client=c) as stream:
                result = run_batch(m, out, client=c, progress=False, split_pixels=10_000,
                                   block_rows=64)
    finally:
        cluster.close()
    assert result.ok, result.failed
    strips = [t for t in stream.data if "compute_strip" in str(t["key"])]
    assert len(strips) == 5                                # ceil(300 / 64)
    assert len({t["worker"] for t in strips}) == 2, "the strips did not reach both workers"
    assert not [t for t in stream.data if "glint-scene" in str(t["key"])]
    assert_same_pixels({k.split("/", 1)[1]: v for k, v in rasters(out).items()}, rasters(ref))
    assert leftovers(out) == []


def test_local_workers_share_the_cores_and_writers_follow_gdal_threads(tmp_path, monkeypatch):
    # Each local worker gets cores // workers threads for numba and GDAL, and
    # the GeoTIFF writer takes its compression threads from GDAL_NUM_THREADS.
    from glint.geo.grid import Grid
    from glint.io.geotiff import GeoTiffWriter
    from glint.workflows.batch.runner import _cores, worker_environment

    env = worker_environment(2)
    share = str(max(1, _cores() // 2))
    assert env == {"NUMBA_NUM_THREADS": share, "GDAL_NUM_THREADS": share}
    g = Grid.from_bounds((0, 0, 100, 50), 10, 32631)
    monkeypatch.setenv("GDAL_NUM_THREADS", "1")
    w = GeoTiffWriter(tmp_path / "a.tif", g, ["glint_fraction"])
    w.abort()
    assert w.num_threads == "1"
    monkeypatch.delenv("GDAL_NUM_THREADS")
    w = GeoTiffWriter(tmp_path / "b.tif", g, ["glint_fraction"])
    w.abort()
    assert w.num_threads == "ALL_CPUS"

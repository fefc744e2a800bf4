"""A batch on a real dask cluster: a scheduler and a worker started with the
dask command-line tools on 127.0.0.1, and an address where none listens."""

from __future__ import annotations

import os
import socket
import subprocess
import sys
import time
from pathlib import Path

import pytest


from glint.workflows.batch import ClusterError, run_batch  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
DASK = Path(sys.executable).parent / "dask"

SCENE = """
[scene]
name = "Cluster water"
time = 2026-07-02T10:40:00Z
[grid]
crs = "EPSG:32630"
bounds = [402000.0, 5601000.0, 402800.0, 5601800.0]
resolution = 40.0
[sensor]
kind = "fixed-direction"
view_zenith = 12.0
view_azimuth = 100.0
[surface]
wind_speed = 5.0
[outputs]
formats = ["geotiff", "netcdf"]
"""


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


@pytest.fixture
def cluster(tmp_path):
    """``dask scheduler`` and one ``dask worker``, stopped whatever happens."""
    if not DASK.exists():
        pytest.skip("the dask command-line tool is not installed")
    port = free_port()
    address = f"tcp://127.0.0.1:{port}"
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    procs = []
    try:
        procs.append(subprocess.Popen(
            [str(DASK), "scheduler", "--host", "127.0.0.1", "--port", str(port), "--no-dashboard"],
            env=env, cwd=tmp_path, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL))
        procs.append(subprocess.Popen(
            [str(DASK), "worker", address, "--no-nanny", "--nthreads", "1", "--no-dashboard",
             "--host", "127.0.0.1"],
            env=env, cwd=tmp_path, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL))
        yield address
    finally:
        for p in reversed(procs):
            p.terminate()
        for p in reversed(procs):
            try:
                p.wait(timeout=20)
            except subprocess.TimeoutExpired:
                p.kill()
                p.wait()


def test_batch_through_a_scheduler_address(tmp_path, cluster):
    (tmp_path / "base.toml").write_text(SCENE)
    m = tmp_path / "batch.toml"
    m.write_text('[template]\nscene = "base.toml"\n'
                 'rows = [{name = "calm", "surface.wind_speed" = 2.0}, '
                 '{name = "windy", "surface.wind_speed" = 9.0}]\n')
    result = run_batch(m, tmp_path / "out", scheduler=cluster, progress=False, connect_timeout=30)
    assert [o.status for o in result.outcomes] == ["done", "done"], result.failed
    for name in ("calm", "windy"):
        # GeoTIFFs (the class one with its GDAL .aux.xml), NetCDF, run record, batch JSON
        assert sorted(p.suffix for p in (tmp_path / "out" / name).iterdir()) == [
            ".json", ".nc", ".tif", ".tif", ".toml", ".xml"]
    again = run_batch(m, tmp_path / "out", scheduler=cluster, progress=False, connect_timeout=30)
    assert [o.status for o in again.outcomes] == ["skipped", "skipped"]


@pytest.mark.parametrize("address", ["tcp://127.0.0.1:{port}", "not-an-address:xyz"])
def test_unreachable_scheduler_fails_fast_with_a_clear_message(tmp_path, address):
    (tmp_path / "base.toml").write_text(SCENE)
    m = tmp_path / "batch.toml"
    m.write_text('scenes = ["base.toml"]\n')
    address = address.format(port=free_port())   # nothing listens there
    t0 = time.monotonic()
    with pytest.raises(ClusterError) as err:
        run_batch(m, tmp_path / "out", scheduler=address, progress=False, connect_timeout=3)
    # No hang: the connect timeout (3 s) bounds the wait; generous margin for
    # a loaded machine.
    assert time.monotonic() - t0 < 30
    assert repr(address) in str(err.value) and "scheduler" in str(err.value)
    assert not any((tmp_path / "out").glob("base/*"))

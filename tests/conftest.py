"""Shared fixtures for glint's tests."""

from __future__ import annotations

import os
import re
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np
import pytest

from glint.scene import Scene, load_scene, scene_from_dict

os.environ.setdefault("MPLBACKEND", "Agg")


@pytest.fixture
def rng() -> np.random.Generator:
    """A seeded random generator, so failures reproduce."""
    return np.random.default_rng(20261202)


@pytest.fixture(scope="session", autouse=True)
def compiled_kernels() -> None:
    """Compile (or load from the cache) the numba kernels once per test
    session, so that their cost shows here and not inside whichever test
    happens to run first."""
    from glint.physics.reflect import warmup

    warmup()


# ----------------------------------------------------------- scene builders
#: The invented example scenes shipped with glint.
EXAMPLES = Path(__file__).resolve().parents[1] / "example_scenes"

#: A small invented bay (1000 m x 800 m in UTM 29N) seen from a fixed
#: direction; ``{resolution}`` in metres (20 m: 40 x 50 pixels).
BAY_SCENE = """\
[scene]
name = "CLI test bay"
time = 2026-06-14T10:30:00Z

[grid]
crs = "EPSG:32629"
bounds = [500000.0, 4100000.0, 501000.0, 4100800.0]
resolution = {resolution}

[sensor]
kind = "fixed-direction"
view_zenith = 20.0
view_azimuth = 280.0

[surface]
wind_speed = 5.0
wind_direction = 250.0

[outputs]
formats = ["geotiff", "netcdf", "png"]
"""


@pytest.fixture(scope="session")
def examples() -> Path:
    """The directory of the example scenes."""
    return EXAMPLES


@pytest.fixture
def example_scene() -> Callable[..., Scene]:
    """``example_scene(file_name, **overrides)``: an example scene loaded
    with :func:`glint.scene.load_scene`."""

    def build(name: str, **overrides: Any) -> Scene:
        return load_scene(EXAMPLES / name, **overrides)

    return build


@pytest.fixture(scope="session")
def inlet() -> Scene:
    """The coastal inlet example (a nadir drone over a 20 m grid)."""
    return load_scene(EXAMPLES / "coastal_inlet_morning.toml")


@pytest.fixture
def bay_scene_file(tmp_path: Path) -> Callable[..., Path]:
    """``bay_scene_file(resolution=20.0, name="bay.toml")``: the invented bay
    (:data:`BAY_SCENE`) written as a scene file."""

    def build(resolution: float = 20.0, name: str = "bay.toml") -> Path:
        path = tmp_path / name
        path.write_text(BAY_SCENE.format(resolution=resolution), encoding="utf-8")
        return path

    return build


@pytest.fixture
def inlet_scene_file(tmp_path: Path) -> Callable[[float], Path]:
    """``inlet_scene_file(resolution)``: the coastal inlet example written
    with another grid resolution [m] (finer: a larger, slower scene)."""

    def build(resolution: float) -> Path:
        text = (EXAMPLES / "coastal_inlet_morning.toml").read_text(encoding="utf-8")
        text, n = re.subn(r"(?m)^resolution\s*=.*$", f"resolution = {resolution!r}", text)
        assert n == 1, "the example's grid has one resolution line"
        path = tmp_path / f"inlet_{resolution:g}m.toml"
        path.write_text(text, encoding="utf-8")
        return path

    return build


@pytest.fixture
def cove_scene(tmp_path: Path) -> Callable[..., Scene]:
    """``cove_scene(sensor=None, *, wind_direction=260.0, size=(2400.0, 2000.0),
    res=20.0, **tables)``: an invented cove in UTM 29N seen by a nadir point
    2500 m up (or ``sensor``); ``tables`` update scene-file tables."""

    def build(sensor: dict[str, Any] | None = None, *, wind_direction: float | None = 260.0,
              size: tuple[float, float] = (2400.0, 2000.0), res: float = 20.0,
              **extra: dict[str, Any]) -> Scene:
        left, bottom = 589000.0, 4095500.0
        data: dict[str, Any] = {
            "scene": {"name": "Test cove", "time": "2026-06-14T10:30:00Z"},
            "grid": {"bounds": [left, bottom, left + size[0], bottom + size[1]],
                     "resolution": res, "crs": "EPSG:32629"},
            "sensor": sensor or {"kind": "nadir-point", "altitude": 2500.0, "lon": -8.0,
                                 "lat": 37.02},
            "surface": {"wind_speed": 5.0, "wind_direction": wind_direction},
            "water": {"wavelength": 560.0},
        }
        for k, v in extra.items():
            data.setdefault(k, {}).update(v)
        return scene_from_dict(data, base_dir=tmp_path)

    return build


@pytest.fixture
def camera_scene(tmp_path: Path) -> Callable[..., Scene]:
    """``camera_scene(**camera)``: a drone frame camera 80 m over an invented
    harbour mouth; keyword arguments replace camera keys."""

    def build(**camera: Any) -> Scene:
        sensor = {"kind": "frame-camera", "lon": -4.2, "lat": 50.3, "altitude": 80.0,
                  "horizontal_fov": 70.0, "vertical_fov": 50.0, "image_size": [160, 120],
                  "heading": 200.0, "pitch": -90.0, "roll": 0.0}
        sensor.update(camera)
        data = {
            "scene": {"name": "Test frame", "time": "2026-06-14T11:00:00Z"},
            "grid": {"west": -4.2015, "south": 50.299, "east": -4.1985, "north": 50.301,
                     "resolution": 2.0},
            "sensor": sensor,
            "surface": {"wind_speed": 4.0, "wind_direction": 250.0},
        }
        return scene_from_dict(data, base_dir=tmp_path)

    return build

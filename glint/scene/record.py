"""The record of a run: the resolved scene as a scene file.

:func:`scene_record` turns a :class:`~glint.scene.Scene` back into scene-file
tables, with every default filled in, command-line overrides applied, the
times resolved to UTC and relative file paths made absolute; loading the
record with :func:`glint.scene.load_scene` gives the same scene.
:func:`scene_toml` writes it as TOML text, headed by the glint version and
the command that made the run. Every output file carries it (GeoTIFF tags,
NetCDF attributes, GeoJSON properties) and a ``*_run.toml`` file beside the
outputs holds it for re-running.
"""

from __future__ import annotations

import copy
import dataclasses
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import numpy as np

from glint.scene.model import Scene
from glint.times import format_time

__all__ = ["scene_record", "scene_toml"]


def _utc(t: np.datetime64) -> str:
    """The instant as ISO 8601 UTC (glint.times.format_time), keeping
    milliseconds when the instant has them (a frame's exposure time)."""
    whole = format_time(t)
    ms = int(np.asarray(t, dtype="datetime64[ms]").astype(np.int64)) % 1000
    return whole if ms == 0 else f"{whole[:-1]}.{ms:03d}Z"


def _absolute_paths(table: Any, base_dir: Path | None) -> Any:
    """Relative paths of existing files under ``base_dir`` made absolute."""
    if isinstance(table, Mapping):
        return {k: _absolute_paths(v, base_dir) for k, v in table.items()}
    if isinstance(table, list):
        return [_absolute_paths(v, base_dir) for v in table]
    if isinstance(table, str) and base_dir is not None and table and not Path(table).is_absolute():
        candidate = base_dir / table
        if "/" in table or "\\" in table or candidate.suffix:
            if candidate.exists():
                return str(candidate.resolve())
    return table


def _plain(value: Any) -> Any:
    """Dataclass field values as TOML values (tuples as lists, None dropped)."""
    if isinstance(value, tuple):
        return [_plain(v) for v in value]
    if isinstance(value, (np.floating, np.integer)):
        return value.item()
    return value


def scene_record(scene: Scene, *, times: tuple[np.datetime64, ...] | None = None
                 ) -> dict[str, Any]:
    """The resolved scene as scene-file tables.

    Parameters
    ----------
    scene : Scene
    times : tuple of datetime64, optional
        Record these times instead of the scene's (e.g. the one time of one
        output file).

    Returns
    -------
    dict
        Tables ``scene``, ``grid``, ``sensor``, ``surface``, ``water``,
        ``sun``, ``classes``, ``outputs``: the grid and sensor tables as the
        scene file gave them (paths made absolute), every other table with
        all its keys resolved.

    Examples
    --------
    >>> from glint.scene import load_scene
    >>> s = load_scene("example_scenes/coastal_inlet_morning.toml", wind_speed=7.0)
    >>> r = scene_record(s)
    >>> r["surface"]["wind_speed"], r["scene"]["times"], r["water"]["salinity"]
    (7.0, ['2026-06-14T10:30:00Z'], 34.0)
    """
    tables: dict[str, Any] = copy.deepcopy(dict(scene.tables or {}))
    head = dict(tables.get("scene", {}))
    head.pop("time", None)
    head["name"] = scene.name
    if scene.description:
        head["description"] = scene.description
    head["times"] = [_utc(t) for t in (times if times is not None else scene.times)]
    head["tie_point_tolerance"] = float(scene.tie_point_tolerance)
    record: dict[str, Any] = {"scene": head}
    for section in ("grid", "sensor"):
        if section in tables:
            record[section] = _absolute_paths(tables[section], scene.base_dir)
    for section, obj in (("surface", scene.surface), ("water", scene.water), ("sun", scene.sun),
                         ("classes", scene.classes), ("outputs", scene.outputs)):
        values = {f.name: _plain(getattr(obj, f.name)) for f in dataclasses.fields(obj)}
        record[section] = {k: v for k, v in values.items() if v is not None}
    return record


def scene_toml(scene: Scene, *, command: str, version: str,
               times: tuple[np.datetime64, ...] | None = None) -> str:
    """:func:`scene_record` as TOML text, headed by the version and command.

    Examples
    --------
    >>> import tomllib
    >>> from glint.scene import load_scene
    >>> s = load_scene("example_scenes/coastal_inlet_morning.toml")
    >>> text = scene_toml(s, command="glint map scene.toml", version="1.0")
    >>> text.splitlines()[0]
    '# glint 1.0 run record: re-run with  glint map THIS_FILE.toml'
    >>> tomllib.loads(text)["surface"]["slope_model"]
    'cox-munk'
    """
    import tomli_w

    header = (f"# glint {version} run record: re-run with  glint map THIS_FILE.toml\n"
              f"# (or glint camera-view THIS_FILE.toml for a camera view)\n"
              f"# command: {command}\n"
              "# Every default is filled in and the times are UTC; file paths are absolute.\n")
    return header + tomli_w.dumps(scene_record(scene, times=times))

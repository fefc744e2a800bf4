"""Options shared by several ``glint`` subcommands, and the one way they turn
into scene overrides."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

import click

from glint.errors import SceneError
from glint.scene import Scene, load_scene

__all__ = ["scene_argument", "output_option", "overwrite_option", "condition_options",
           "load_with_overrides"]

scene_argument = click.argument(
    "scene_file", metavar="SCENE.toml",
    type=click.Path(exists=True, dir_okay=False, path_type=Path),
)

output_option = click.option(
    "-o", "--output", "outdir", default="glint-output", show_default=True,
    type=click.Path(path_type=Path),
    help="Output directory (created if its parent exists).",
)

overwrite_option = click.option("--overwrite", is_flag=True, help="Replace existing output files.")


def condition_options(func: Callable) -> Callable:
    """``--wind-speed``, ``--wind-direction`` and ``--time`` overrides."""
    func = click.option(
        "--time", "times", multiple=True, metavar="TIME",
        help="Override the scene time(s): ISO 8601 with Z or an offset, "
             "e.g. 2026-06-14T09:40:00Z (repeatable).")(func)
    func = click.option(
        "--wind-direction", type=float, metavar="DEG",
        help="Override surface.wind_direction [deg, direction the wind blows from].")(func)
    func = click.option(
        "--wind-speed", type=float, metavar="M/S",
        help="Override surface.wind_speed [m/s at surface.wind_height].")(func)
    return func


def load_with_overrides(scene_file: Path, wind_speed: float | None, wind_direction: float | None,
                        times: tuple[str, ...], **extra: Any) -> Scene:
    """Load a scene with the command line's overrides (checked like the file)."""
    time_override: Any = None
    if times:
        time_override = list(times) if len(times) > 1 else times[0]
    try:
        return load_scene(scene_file, wind_speed=wind_speed, wind_direction=wind_direction,
                          time=time_override, **extra)
    except SceneError as exc:
        if not times:
            raise
        # A bad --time is the command line's fault, not the file's: say so.
        problems = [("--time" + p[len("scene.times"):]) if p.startswith("scene.times") else
                    ("--time" + p[len("scene.time"):]) if p.startswith("scene.time:") else p
                    for p in exc.problems]
        raise SceneError(problems, exc.source) from None

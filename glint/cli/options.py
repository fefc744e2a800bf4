"""Options shared by several ``glint`` subcommands, and the one way they turn
into scene overrides."""

from __future__ import annotations

import re
from collections.abc import Callable, Mapping
from pathlib import Path
from typing import Any, TypeVar

import click

from glint.errors import InputError, SceneError
from glint.scene import Scene, load_scene

__all__ = ["scene_argument", "output_option", "overwrite_option", "condition_options",
           "load_with_overrides", "CONDITION_OPTIONS"]

F = TypeVar("F", bound=Callable[..., Any])

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

#: Scene key paths set by :func:`condition_options`, and their options.
CONDITION_OPTIONS = {"surface.wind_speed": "--wind-speed",
                     "surface.wind_direction": "--wind-direction",
                     "scene.time": "--time", "scene.times": "--time"}


def condition_options(func: F) -> F:
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


def _option_of(key: str) -> str:
    """Default option name of an override ``section.key``: ``--key``."""
    return "--" + key.rsplit(".", 1)[-1].replace("_", "-")


def _as_typed(problem: str, given: Mapping[str, str]) -> tuple[str, bool]:
    """A scene problem rewritten to name the option the user typed, if the
    problem's key path is one the command line set."""
    for key, option in given.items():
        m = re.match(rf"^{re.escape(key)}(?=[:\[])", problem)
        if m:
            return option + problem[m.end():], True
    return problem, False


def load_with_overrides(scene_file: Path, wind_speed: float | None, wind_direction: float | None,
                        times: tuple[str, ...], **extra: Any) -> Scene:
    """Load a scene with the command line's overrides (checked like the file).

    Parameters
    ----------
    scene_file : Path
    wind_speed, wind_direction, times
        The values of :func:`condition_options` (``None``/empty: not given).
    **extra
        More overrides by ``"section.key"`` (``None``: not given), each set
        by the option ``--key`` (underscores as dashes: ``"sensor.pitch"``
        is ``--pitch``).

    Raises
    ------
    InputError
        Every problem comes from an option: the message names the options as
        typed (``--wind-speed: must be >= 0 m/s; got -1.0``).
    SceneError
        The scene file has problems (those of options named as typed).
    """
    time_override: Any = None
    if times:
        time_override = list(times) if len(times) > 1 else times[0]
    given = {key: option for key, option in CONDITION_OPTIONS.items()
             if {"surface.wind_speed": wind_speed, "surface.wind_direction": wind_direction}
             .get(key, time_override) is not None}
    given.update({key: _option_of(key) for key, value in extra.items() if value is not None})
    try:
        return load_scene(scene_file, wind_speed=wind_speed, wind_direction=wind_direction,
                          time=time_override, **extra)
    except SceneError as exc:
        rewritten = [_as_typed(p, given) for p in exc.problems]
        problems = [p for p, _ in rewritten]
        if all(from_option for _, from_option in rewritten):
            # The command line's fault, not the file's: say what was typed.
            raise InputError(problems[0] if len(problems) == 1 else
                             "invalid options:\n" + "\n".join(f"  - {p}" for p in problems)) from None
        raise SceneError(problems, exc.source) from None

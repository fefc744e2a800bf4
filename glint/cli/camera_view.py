"""``glint camera-view``: glint as a drone or fixed camera will see it."""

from __future__ import annotations

from pathlib import Path

import click

from glint.cli.options import (
    condition_options,
    load_with_overrides,
    output_option,
    overwrite_option,
    scene_argument,
)
from glint.cli.progress import command_line, notice_compiling
from glint.cli.report import echo_cautions, echo_files, echo_summaries, quiet_level
from glint.io.quicklook import FLIGHT_CAUTION
from glint.workflows.job import run_cautions

__all__ = ["camera_view_command", "FLIGHT_CAUTION"]

_EPILOG = """\b
Examples:
  glint camera-view example_scenes/drone_cove_survey.toml -o out
  glint camera-view scene.toml -o out --time 2026-06-14T07:30:00Z --overwrite
  glint camera-view scene.toml -o out --step 4 --heading 90 --pitch -70

\b
Exit codes: 0 success, 2 invalid scene or input (or a sensor that is not a
camera), 1 outputs could not be written, 130 stopped by Ctrl-C (SIGINT), 143
stopped by SIGTERM; a stopped run leaves no partial set of outputs.
"""


@click.command("camera-view", epilog=_EPILOG)
@scene_argument
@output_option
@click.option("--step", type=click.IntRange(min=1), default=None,
              help="Compute every STEP-th image pixel in both directions. Default: a preview "
                   "whose long side is about 1000 pixels; --step 1 computes every pixel.")
@overwrite_option
@condition_options
@click.option("--heading", type=float, metavar="DEG",
              help="Override sensor.heading [deg clockwise from true north].")
@click.option("--pitch", type=float, metavar="DEG",
              help="Override sensor.pitch [deg; 0 horizontal, -90 straight down].")
def camera_view_command(scene_file: Path, outdir: Path, step: int | None, overwrite: bool,
                        wind_speed: float | None, wind_direction: float | None,
                        times: tuple[str, ...], heading: float | None,
                        pitch: float | None) -> None:
    """Map glint in the image coordinates of the scene's camera.

    For a scene whose [sensor] is a frame camera (drone) or a fixed camera,
    writes per scene time a PNG of glint reflectance as the photo will show
    it, a NetCDF of every variable in image coordinates (with the lon/lat of
    each pixel's ground point) and a GeoJSON of the image's ground footprint.
    """
    from glint.workflows.camera_view import write_camera_view

    scene = load_with_overrides(scene_file, wind_speed, wind_direction, times,
                                **{"sensor.heading": heading, "sensor.pitch": pitch})
    notice_compiling(quiet_level())
    result = write_camera_view(scene, outdir, step=step, overwrite=overwrite,
                               command=command_line())
    echo_files(result.files)
    echo_summaries(result.summaries)
    echo_cautions(run_cautions(scene))

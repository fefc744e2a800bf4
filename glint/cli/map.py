"""``glint map``: compute a scene's glint maps and write them to files."""

from __future__ import annotations

import logging
from pathlib import Path

import click

from glint.cli.options import (
    condition_options,
    load_with_overrides,
    output_option,
    overwrite_option,
    scene_argument,
)
from glint.cli.progress import RowProgress, command_line, notice_compiling
from glint.cli.report import echo_cautions, echo_files, echo_summaries, quiet_level
from glint.scene import OUTPUT_FORMATS
from glint.variables import VARIABLES

__all__ = ["map_command"]

log = logging.getLogger(__name__)


_EPILOG = """\b
Examples:
  glint map example_scenes/coastal_inlet_morning.toml -o out
  glint map scene.toml -o out --format geotiff --variable glint_reflectance
  glint map scene.toml -o out --wind-speed 7 --wind-direction 225 --overwrite
  glint map scene.toml -o out --time 2026-06-14T10:30:00Z --time 2026-06-14T11:30:00Z

\b
Exit codes: 0 success, 2 invalid scene or input, 1 outputs could not be written,
130 stopped by Ctrl-C (SIGINT), 143 stopped by SIGTERM; a stopped run leaves no
partial set of outputs.
"""


@click.command("map", epilog=_EPILOG)
@scene_argument
@output_option
@click.option("--format", "formats", multiple=True, type=click.Choice(OUTPUT_FORMATS),
              help="Output format (repeatable). Default: the scene's outputs.formats.")
@click.option("--variable", "variables", multiple=True, type=click.Choice(list(VARIABLES)),
              metavar="NAME",
              help="Variable to write (repeatable): " + ", ".join(VARIABLES)
              + ". Default: the scene's outputs.variables. With --format png, each variable "
              "named gets its own quicklook (glint_class: the class map with its legend).")
@overwrite_option
@click.option("--cog/--no-cog", default=None,
              help="Write Cloud Optimized GeoTIFFs. Default: the scene's outputs.cog.")
@condition_options
def map_command(scene_file: Path, outdir: Path, formats: tuple[str, ...],
                variables: tuple[str, ...], overwrite: bool, cog: bool | None,
                wind_speed: float | None, wind_direction: float | None,
                times: tuple[str, ...]) -> None:
    """Compute the glint maps of the scene in SCENE.toml and write them.

    Writes, per scene time, a GeoTIFF of the float variables, a GeoTIFF of
    the glint classes, a CF-NetCDF file and a PNG quicklook (as selected),
    then prints the files and a short summary.
    """
    from glint.workflows.job import run_cautions
    from glint.workflows.maps import write_maps

    quiet = quiet_level()
    scene = load_with_overrides(scene_file, wind_speed, wind_direction, times)
    log.info("scene %r: %d time(s), grid %s x %s", scene.name, len(scene.times),
             *scene.grid.shape)
    notice_compiling(quiet)
    with RowProgress(pixels=scene.grid.size, label="glint map", quiet=quiet) as progress:
        result = write_maps(scene, outdir, formats=formats or None, variables=variables or None,
                            overwrite=overwrite, cog=cog, progress=progress,
                            command=command_line())
    echo_files(result.files)
    echo_summaries(result.summaries)
    echo_cautions(run_cautions(scene))

"""``glint map``: compute a scene's glint maps and write them to files."""

from __future__ import annotations

import logging
import math
from pathlib import Path
from typing import Any

import click
import numpy as np

from glint.cli.options import (
    condition_options,
    load_with_overrides,
    output_option,
    overwrite_option,
    scene_argument,
)
from glint.io.quicklook import CAUTION
from glint.scene import OUTPUT_FORMATS
from glint.variables import VARIABLES

__all__ = ["map_command", "format_summary"]

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


def _fmt(value: Any, digits: int = 4) -> str:
    if isinstance(value, float):
        return "nan" if math.isnan(value) else f"{value:.{digits}g}"
    return str(value)


def format_summary(summary: dict[str, Any]) -> list[str]:
    """Lines describing one time's map summary (as returned by ``write_maps``)."""
    lines: list[str] = []
    t = summary.get("time")
    if t is not None:
        text = np.datetime_as_string(np.datetime64(t, "s"), unit="s").replace("T", " ")
        lines.append(f"Summary for {text} UTC:")
    else:
        lines.append("Summary:")
    if "sun_zenith" in summary and "sun_azimuth" in summary:
        lines.append(f"  sun zenith {float(summary['sun_zenith']):.2f} deg, azimuth "
                     f"{float(summary['sun_azimuth']):.2f} deg "
                     f"({summary.get('sun_at', 'grid centre')})")
    if "max_glint_reflectance" in summary:
        lines.append(f"  largest glint reflectance factor: "
                     f"{_fmt(float(summary['max_glint_reflectance']))}")
    shares = summary.get("class_shares")
    if shares:
        parts = ", ".join(f"{name} {100.0 * float(s):.1f} %" for name, s in shares.items())
        lines.append(f"  glint classes (share of seen pixels): {parts}")
    if "unseen_pixels" in summary:
        lines.append(f"  pixels the sensor does not see: {int(summary['unseen_pixels'])}")
    if "footprint" in summary:
        lines.append(f"  footprint {summary['footprint']}")
    if "ground_sampling_distance" in summary:
        lines.append(f"  ground sampling distance: {summary['ground_sampling_distance']}")
    known = {"time", "sun_zenith", "sun_azimuth", "sun_at", "max_glint_reflectance",
             "class_shares", "unseen_pixels", "footprint", "ground_sampling_distance"}
    for key, value in summary.items():
        if key not in known:
            log.info("%s: %s", key.replace("_", " "), _fmt(value))
    return lines


@click.command("map", epilog=_EPILOG)
@scene_argument
@output_option
@click.option("--format", "formats", multiple=True, type=click.Choice(OUTPUT_FORMATS),
              help="Output format (repeatable). Default: the scene's outputs.formats.")
@click.option("--variable", "variables", multiple=True, type=click.Choice(list(VARIABLES)),
              metavar="NAME",
              help="Variable to write (repeatable): " + ", ".join(VARIABLES)
              + ". Default: the scene's outputs.variables.")
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
    from glint.workflows.maps import write_maps

    scene = load_with_overrides(scene_file, wind_speed, wind_direction, times)
    log.info("scene %r: %d time(s), grid %s x %s", scene.name, len(scene.times),
             *scene.grid.shape)
    result = write_maps(scene, outdir, formats=formats or None, variables=variables or None,
                        overwrite=overwrite, cog=cog)
    click.echo(f"Wrote {len(result.files)} file(s):")
    for path in result.files:
        click.echo(f"  {path}")
    summaries = getattr(result, "summaries", None) or [result.summary]
    for summary in summaries:
        for line in format_summary(summary):
            click.echo(line)
    click.echo(CAUTION)

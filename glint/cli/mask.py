"""``glint mask``: glint on an analyst's image, its class raster and a masked copy."""

from __future__ import annotations

from pathlib import Path

import click

from glint.cli.imagery_options import (
    image_argument,
    parse_bands,
    water_from_options,
    water_options,
    wind_field_options,
    wind_from_options,
)
from glint.cli.options import output_option, overwrite_option
from glint.io.quicklook import CAUTION

__all__ = ["mask_command"]

_VARIABLES = ("glint_radiance", "glint_reflectance", "glint_fraction", "glint_angle")

_EPILOG = """\b
Examples:
  glint mask example_scenes/imagery/kestrel_sound.tif \\
      --scene example_scenes/imagery/kestrel_sound.toml --water-from-bands 2,4 -o out
  glint mask image.tif --scene scene.toml --water-mask coast.geojson \\
      --threshold-variable glint_reflectance --threshold 0.03 -o out
  glint mask image.tif --scene scene.toml --wind-field era_wind.nc --resolution 60 -o out

\b
Default thresholds: glint_radiance >= 0.005 sr-1 (Wang and Bailey 2001),
glint_reflectance >= 0.0157, glint_fraction >= 1.7e-5, glint_angle <= 20 deg.
Exit codes: 0 success, 2 invalid input, 1 outputs could not be written,
130/143 stopped by SIGINT/SIGTERM (nothing partial is left).
"""


@click.command("mask", epilog=_EPILOG)
@image_argument
@click.option("--scene", "scene_file", required=True,
              type=click.Path(exists=True, dir_okay=False, path_type=Path),
              help="Scene file (time, sensor, wind, water); its [grid] may be omitted.")
@output_option
@click.option("--threshold-variable", type=click.Choice(_VARIABLES), default="glint_radiance",
              show_default=True, help="Variable the mask threshold is given in.")
@click.option("--threshold", type=float, help="Mask threshold (default: see below).")
@water_options
@wind_field_options
@overwrite_option
def mask_command(image: Path, scene_file: Path, outdir: Path, threshold_variable: str,
                 threshold: float | None, water_mask: Path | None, water_from_bands: str | None,
                 ndwi_threshold: float, time: str | None, rgb: str | None,
                 wind_field: Path | None, wind_u: str | None, wind_v: str | None,
                 wind_field_height: float | None, resolution: float | None,
                 overwrite: bool) -> None:
    """Predict glint on IMAGE.tif and mask it.

    Writes the glint prediction, the glint class raster, a copy of the image
    in which glint-affected water pixels are no-data (the image's profile
    kept), a JSON report and a quicklook. The input image is never modified.
    """
    from glint.workflows.imagery import mask_image

    result = mask_image(image, scene_file, outdir, time=time,
                        water=water_from_options(water_mask, water_from_bands, ndwi_threshold),
                        wind=wind_from_options(wind_field, wind_u, wind_v, wind_field_height),
                        variable=threshold_variable, threshold=threshold, resolution=resolution,
                        rgb=parse_bands(rgb, "--rgb"), overwrite=overwrite)
    s = result.summary
    click.echo(f"Wrote {len(result.files)} file(s):")
    for p in result.files:
        click.echo(f"  {p}")
    click.echo(f"Time {s['time']}; water pixels {s['water_pixels']}, masked "
               f"{s['masked_pixels']} ({100 * s['masked_share_of_water']:.1f} % of water) at "
               f"{threshold_variable} {'<=' if threshold_variable == 'glint_angle' else '>='} "
               f"{s['mask_threshold']:g}")
    click.echo(CAUTION)

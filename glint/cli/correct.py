"""``glint correct``: NIR-regression glint correction of an analyst's image."""

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

__all__ = ["correct_command"]

_EPILOG = """\b
Examples:
  glint correct example_scenes/imagery/kestrel_sound.tif --nir-band 4 \\
      --deep-water example_scenes/imagery/kestrel_sound_deep_water.geojson -o out
  glint correct image.tif --nir-band 4 --scene scene.toml --method lyzenga -o out

\b
Methods: hedley (Hedley, Harborne and Mumby 2005, doi:10.1080/01431160500034086),
lyzenga (Lyzenga, Malinas and Tanis 2006, doi:10.1109/TGRS.2006.872909).
Without --deep-water the sample is chosen automatically and written out.
Exit codes: 0 success, 2 invalid input, 1 outputs could not be written,
130/143 stopped by SIGINT/SIGTERM (nothing partial is left).
"""


@click.command("correct", epilog=_EPILOG)
@image_argument
@click.option("--nir-band", type=int, required=True, help="1-based number of the NIR band.")
@output_option
@click.option("--method", type=click.Choice(("hedley", "lyzenga")), default="hedley",
              show_default=True, help="NIR-regression form.")
@click.option("--deep-water", type=click.Path(exists=True, dir_okay=False, path_type=Path),
              metavar="POLYGON.geojson",
              help="Deep-water sample polygons (any CRS). Default: chosen automatically.")
@click.option("--scene", "scene_file", type=click.Path(exists=True, dir_okay=False, path_type=Path),
              help="Scene file: the glint prediction flags pixels above --glint-limit and keeps "
                   "them out of an automatic sample.")
@click.option("--drop-nir", is_flag=True, help="Leave the NIR band out of the corrected image.")
@click.option("--saturation", type=float,
              help="NIR value at which the sensor saturates (default: the largest value of an "
                   "integer data type).")
@click.option("--glint-limit", type=float, default=0.2, show_default=True,
              help="Predicted glint reflectance factor above which the correction is flagged.")
@water_options
@wind_field_options
@overwrite_option
def correct_command(image: Path, nir_band: int, outdir: Path, method: str,
                    deep_water: Path | None, scene_file: Path | None, drop_nir: bool,
                    saturation: float | None, glint_limit: float, water_mask: Path | None,
                    water_from_bands: str | None, ndwi_threshold: float, time: str | None,
                    rgb: str | None, wind_field: Path | None, wind_u: str | None,
                    wind_v: str | None, wind_field_height: float | None,
                    resolution: float | None, overwrite: bool) -> None:
    """Glint-correct IMAGE.tif by regression on its NIR band.

    Writes the corrected image (the input's profile and band order; NIR kept
    unchanged unless --drop-nir), a quality raster of bit flags, the
    deep-water sample as a raster, a JSON report of the regressions and a
    quicklook. The input image is never modified.
    """
    from glint.workflows.imagery.correction import correct_image

    wind = wind_from_options(wind_field, wind_u, wind_v, wind_field_height)
    if scene_file is None and (wind is not None or time or resolution):
        raise click.BadParameter("--time, --wind-field and --resolution need --scene",
                                 param_hint="--scene")
    result = correct_image(image, outdir, nir_band=nir_band, method=method,
                           deep_water=deep_water, scene=scene_file, time=time,
                           water=water_from_options(water_mask, water_from_bands, ndwi_threshold),
                           wind=wind, resolution=resolution, drop_nir=drop_nir,
                           saturation=saturation, glint_limit=glint_limit,
                           rgb=parse_bands(rgb, "--rgb"), overwrite=overwrite)
    click.echo(f"Wrote {len(result.files)} file(s):")
    for p in result.files:
        click.echo(f"  {p}")
    click.echo(f"Deep-water sample: {result.summary['sample']}, {result.summary['sample_pixels']} "
               "pixels")
    for f in result.fits:
        click.echo(f"  band {f.band}: slope {f.slope:.4g}, intercept {f.intercept:.4g}, "
                   f"r2 {f.r2:.3f}, n {f.n}, NIR min {f.nir_min:.4g}")
    click.echo(CAUTION)

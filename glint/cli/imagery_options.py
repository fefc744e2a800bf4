"""Options shared by ``glint mask`` and ``glint correct``: the image, its
water, wind field, time and quicklook bands."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

import click

__all__ = ["image_argument", "water_options", "wind_field_options", "parse_bands",
           "water_from_options", "wind_from_options"]

image_argument = click.argument(
    "image", metavar="IMAGE.tif",
    type=click.Path(exists=True, dir_okay=False, path_type=Path))


def parse_bands(value: str | None, option: str, count: int | None = None) -> tuple[int, ...] | None:
    """``"2,4"`` -> (2, 4); click.BadParameter naming the option otherwise."""
    if value is None:
        return None
    try:
        bands = tuple(int(v) for v in value.split(","))
    except ValueError:
        raise click.BadParameter(f"{value!r} is not a comma-separated list of band numbers",
                                 param_hint=option) from None
    if count is not None and len(bands) != count:
        raise click.BadParameter(f"{value!r} must list {count} band numbers", param_hint=option)
    return bands


def water_options(func: Callable[..., Any]) -> Callable[..., Any]:
    """``--water-mask``, ``--water-from-bands``, ``--ndwi-threshold``, ``--rgb``, ``--time``."""
    func = click.option("--rgb", metavar="R,G,B",
                        help="Bands shown in the quicklook (default: the image's colour "
                             "interpretation, else 1,2,3).")(func)
    func = click.option("--time", metavar="TIME",
                        help="Acquisition time (ISO 8601 with Z or an offset); default the "
                             "scene's time, else the image's ACQUISITION_TIME tag.")(func)
    func = click.option("--ndwi-threshold", type=float, default=0.0, show_default=True,
                        help="NDWI above which a pixel is water (McFeeters 1996).")(func)
    func = click.option("--water-from-bands", metavar="GREEN,NIR",
                        help="Water where the NDWI of these bands exceeds the threshold.")(func)
    func = click.option("--water-mask", type=click.Path(exists=True, dir_okay=False, path_type=Path),
                        help="Water mask: a raster in any CRS (non-zero = water) or GeoJSON "
                             "polygons of water. Default: every pixel with data is water.")(func)
    return func


def wind_field_options(func: Callable[..., Any]) -> Callable[..., Any]:
    """``--wind-field``, ``--wind-u``, ``--wind-v``, ``--wind-field-height``, ``--resolution``."""
    func = click.option("--resolution", type=float, metavar="SIZE",
                        help="Compute glint on a coarser grid aligned to the image (a whole "
                             "multiple of its pixel size) and interpolate.")(func)
    func = click.option("--wind-field-height", type=float, metavar="M",
                        help="Height of the wind field [m] (default: the file's height "
                             "coordinate, else 10 m).")(func)
    func = click.option("--wind-v", metavar="NAME",
                        help="Northward wind variable (default: standard_name northward_wind).")(func)
    func = click.option("--wind-u", metavar="NAME",
                        help="Eastward wind variable (default: standard_name eastward_wind).")(func)
    func = click.option("--wind-field", type=click.Path(exists=True, dir_okay=False, path_type=Path),
                        help="NetCDF of eastward/northward wind with a time axis; replaces the "
                             "scene's constant wind.")(func)
    return func


def water_from_options(water_mask: Path | None, water_from_bands: str | None,
                       ndwi_threshold: float) -> Any:
    """The water source the options describe."""
    from glint.workflows.imagery import water_source

    if water_mask is not None and water_from_bands is not None:
        raise click.BadParameter("give --water-mask or --water-from-bands, not both",
                                 param_hint="--water-mask")
    bands = parse_bands(water_from_bands, "--water-from-bands", 2)
    return water_source(water_mask, bands=bands, threshold=ndwi_threshold)  # type: ignore[arg-type]


def wind_from_options(wind_field: Path | None, wind_u: str | None, wind_v: str | None,
                      height: float | None) -> Any:
    """The wind field the options name (None without ``--wind-field``)."""
    if wind_field is None:
        if wind_u or wind_v or height is not None:
            raise click.BadParameter("--wind-u, --wind-v and --wind-field-height need "
                                     "--wind-field", param_hint="--wind-field")
        return None
    from glint.geo.wind_field import open_wind_field

    return open_wind_field(wind_field, eastward=wind_u, northward=wind_v, height=height)

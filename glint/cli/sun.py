"""``glint sun``: sun position and glint for one place, time and view."""

from __future__ import annotations

import math

import click

from glint.io.quicklook import CAUTION
from glint.physics.optics import REFRACTIVE_INDEX_METHODS
from glint.physics.surface import SLOPE_MODELS
from glint.scene import WAVELENGTH_RANGE, Surface, Water
from glint.times import format_time, parse_time

__all__ = ["sun_command"]

_EPILOG = """\b
Examples:
  glint sun --lat 37.01 --lon -8.00 --time 2026-06-14T09:40:00Z
  glint sun --lat 52.1 --lon 4.3 --time 2026-06-14T12:00:00+02:00 --wind-speed 7
  glint sun --lat 37.01 --lon -8.00 --time 2026-06-14T09:40:00Z \\
            --view-zenith 20 --view-azimuth 280 --wind-direction 250
  glint sun --lat 46.45 --lon 6.60 --time 2026-07-02T10:00:00Z \\
            --salinity 0 --water-temperature 22   (a lake: fresh water)

\b
The view direction points from the water to the sensor (zenith from the
vertical, azimuth clockwise from true north); the default is nadir.
"""


def _range(low: float, high: float, *, max_open: bool = False) -> click.FloatRange:
    return click.FloatRange(low, high, max_open=max_open)


@click.command("sun", epilog=_EPILOG)
@click.option("--lat", "latitude", required=True, type=_range(-90, 90),
              help="Latitude [deg, north positive].")
@click.option("--lon", "longitude", required=True, type=_range(-180, 180),
              help="Longitude [deg, east positive].")
@click.option("--time", "time_text", required=True, metavar="TIME",
              help="ISO 8601 time with Z or an offset, e.g. 2026-06-14T09:40:00Z.")
@click.option("--elevation", default=0.0, show_default=True, type=_range(-1000, 9000),
              help="Height of the water surface above the WGS 84 ellipsoid [m].")
@click.option("--wind-speed", default=5.0, show_default=True, type=_range(0, 100),
              help="Wind speed 10 m above the water [m/s].")
@click.option("--wind-direction", default=None, type=_range(0, 360, max_open=True),
              help="Direction the wind blows from [deg]; omitted: isotropic waves.")
@click.option("--view-zenith", default=0.0, show_default=True, type=_range(0, 90, max_open=True),
              help="Zenith angle of the direction from the water to the sensor [deg].")
@click.option("--view-azimuth", default=0.0, show_default=True,
              type=_range(0, 360, max_open=True),
              help="Azimuth of the direction from the water to the sensor [deg].")
@click.option("--wavelength", default=Water.wavelength, show_default=True,
              type=_range(*WAVELENGTH_RANGE),
              help="Wavelength [nm, nanometres] for the refractive index of the water.")
@click.option("--water-temperature", default=Water.temperature, show_default=True,
              type=_range(-3, 100), metavar="DEGC",
              help="Water temperature [degC] (as the scene file's water.temperature).")
@click.option("--salinity", default=Water.salinity, show_default=True,
              type=click.FloatRange(min=0.0), metavar="PSU",
              help="Practical salinity [PSU]; 0 for fresh water (lakes, rivers).")
@click.option("--index-method", default=Water.index_method, show_default=True,
              type=click.Choice(REFRACTIVE_INDEX_METHODS),
              help="Refractive index formula (iapws: pure water only, with --salinity 0).")
@click.option("--slope-model", default=Surface.slope_model, show_default=True,
              type=click.Choice(SLOPE_MODELS),
              help="Mean-square-slope law of the waves (as the scene file's "
                   "surface.slope_model).")
def sun_command(latitude: float, longitude: float, time_text: str, elevation: float,
                wind_speed: float, wind_direction: float | None, view_zenith: float,
                view_azimuth: float, wavelength: float, water_temperature: float,
                salinity: float, index_method: str, slope_model: str) -> None:
    """Print the sun's position and the expected glint for one view.

    Sun angles follow NREL's solar position algorithm (refraction at
    1013.25 hPa and 12 degC); glint uses a wave-slope law (Cox-Munk by
    default), the refractive index of the water and the Fresnel reflectance.
    The water and wave options default to the scene file's defaults (sea
    water at 20 degC and 35 PSU, the clean-sea Cox-Munk law), so `glint sun`
    and `glint map` agree for the same conditions.
    """
    from glint.engine.compute import point_glint
    from glint.scene import SunOptions

    time = parse_time(time_text, "--time")
    res = point_glint(
        time, longitude=longitude, latitude=latitude, view_zenith=view_zenith,
        view_azimuth=view_azimuth,
        surface=Surface(wind_speed=wind_speed, wind_direction=wind_direction, wind_height=10.0,
                        slope_model=slope_model),
        water=Water(wavelength=wavelength, temperature=water_temperature, salinity=salinity,
                    index_method=index_method),  # type: ignore[arg-type]
        sun=SunOptions(surface_elevation=elevation),
    )
    zenith = res["sun_zenith"]
    click.echo(f"Time:                   {format_time(time, 'text')}")
    ns = "N" if latitude >= 0 else "S"
    ew = "E" if longitude >= 0 else "W"
    click.echo(f"Place:                  {abs(latitude):.5f} {ns}, {abs(longitude):.5f} {ew}, "
               f"{elevation:g} m above the ellipsoid")
    click.echo(f"Sun zenith:             {zenith:.3f} deg (refraction included)")
    click.echo(f"Sun azimuth:            {res['sun_azimuth']:.3f} deg (clockwise from true north)")
    click.echo(f"Sun elevation:          {90.0 - zenith:.3f} deg")
    click.echo(f"Earth-sun distance:     {res['earth_sun_distance']:.6f} AU")
    click.echo(f"View:                   zenith {view_zenith:g} deg, azimuth "
               f"{view_azimuth:g} deg (water to sensor)")
    if zenith >= 90.0:
        click.echo("The sun is below the horizon: no sun glint.")
    else:
        wd = "unknown (isotropic)" if wind_direction is None else f"from {wind_direction:g} deg"
        click.echo(f"Wind:                   {wind_speed:g} m/s at 10 m, {wd}")
        click.echo(f"Waves:                  {slope_model} slope law")
        click.echo(f"Water:                  {water_temperature:g} degC, {salinity:g} PSU")
        click.echo(f"Refractive index:       {res['refractive_index']:.4f} at {wavelength:g} nm "
                   f"({index_method})")
        click.echo(f"Glint angle:            {res['glint_angle']:.3f} deg")
        click.echo(f"Glint reflectance:      {_g(res['glint_reflectance'])}")
        click.echo(f"Glint radiance L/E:     {_g(res['glint_radiance'])} sr-1")
        click.echo(f"Glint fraction:         {_g(res['glint_fraction'])}")
    click.echo(CAUTION)


def _g(value: float) -> str:
    return "nan" if math.isnan(value) else f"{value:.4g}"

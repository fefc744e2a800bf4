"""Entry point of the ``glint`` command."""

from __future__ import annotations

import logging

import click

from glint import __version__

__all__ = ["cli"]


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="glint")
@click.option("-v", "--verbose", count=True, help="More log output (repeatable).")
@click.option("-q", "--quiet", count=True, help="Less log output (repeatable).")
def cli(verbose: int, quiet: int) -> None:
    """Predict sun glint on water, pixel by pixel, as GIS rasters.

    Glint maps are statistical estimates, not safety clearances. Never look at
    the sun or at its reflection on water.
    """
    level = logging.WARNING - 10 * verbose + 10 * quiet
    logging.basicConfig(level=max(logging.DEBUG, min(level, logging.CRITICAL)),
                        format="%(levelname)s %(name)s: %(message)s")

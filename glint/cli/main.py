"""Entry point of the ``glint`` command."""

from __future__ import annotations

import logging
import warnings
from typing import Any, TextIO

import click

from glint._version import __version__
from glint.errors import (
    GlintError,
    GridError,
    InputError,
    InputFileError,
    RunStopped,
    SceneError,
    SensorError,
)
from glint.io.outputset import stop_on_signals

__all__ = ["cli", "exit_code_for"]

#: Errors caused by what the user gave (exit code 2, like a usage error);
#: every other glint error (writing outputs, runtime failures) exits with 1.
_USER_ERRORS = (SceneError, GridError, InputError, SensorError, InputFileError)


def exit_code_for(exc: GlintError) -> int:
    """Exit code of the ``glint`` command for a glint error.

    2 for problems with the user's input (scene file, grid, times, input
    files), 1 for failures while computing or writing outputs.
    """
    return 2 if isinstance(exc, _USER_ERRORS) else 1


def _show_warning(message: Warning | str, category: type[Warning], filename: str, lineno: int,
                  file: TextIO | None = None, line: str | None = None) -> None:
    """Warnings as one plain line on standard error (no source location)."""
    click.echo(f"Warning: {message}", err=True)


class _GlintGroup(click.Group):
    """Click group that turns glint errors into a one-line message and an
    exit code, without a traceback."""

    def invoke(self, ctx: click.Context) -> Any:  # noqa: D102 - click API
        try:
            with stop_on_signals():
                return super().invoke(ctx)
        except RunStopped as stop:
            click.echo(f"Stopped by {stop.signal_name}: finished output sets were kept, "
                       "unfinished ones removed.", err=True)
            ctx.exit(stop.exit_code)
        except KeyboardInterrupt:  # a SIGINT outside stop_on_signals' reach
            click.echo("Stopped by SIGINT: finished output sets were kept, unfinished ones removed.",
                       err=True)
            ctx.exit(130)
        except GlintError as exc:
            click.echo(f"Error: {exc}", err=True)
            ctx.exit(exit_code_for(exc))
        except OSError as exc:  # disk full, permissions, ... outside glint's checks
            click.echo(f"Error: {exc}", err=True)
            ctx.exit(1)


@click.group(cls=_GlintGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="glint")
@click.option("-v", "--verbose", count=True, help="More log output (repeatable).")
@click.option("-q", "--quiet", count=True,
              help="Less output (repeatable): -q a one-line summary per time and no progress "
                   "bar, -qq also no file list. Warnings and cautions are always shown.")
@click.pass_context
def cli(ctx: click.Context, verbose: int, quiet: int) -> None:
    """Predict sun glint on water, pixel by pixel, as GIS rasters.

    Glint maps are statistical estimates, not safety clearances. Never look at
    the sun or at its reflection on water.
    """
    ctx.ensure_object(dict)["quiet"] = int(quiet)
    warnings.showwarning = _show_warning
    level = logging.WARNING - 10 * verbose + 10 * quiet
    logging.basicConfig(level=max(logging.DEBUG, min(level, logging.CRITICAL)),
                        format="%(levelname)s %(name)s: %(message)s")


def _register() -> None:
    from glint.cli.batch import batch_command
    from glint.cli.calendar import calendar_command
    from glint.cli.camera_view import camera_view_command
    from glint.cli.correct import correct_command
    from glint.cli.mask import mask_command
    from glint.cli.plan import plan_command
    from glint.cli.map import map_command
    from glint.cli.sun import sun_command

    cli.add_command(map_command)
    cli.add_command(camera_view_command)
    cli.add_command(sun_command)
    cli.add_command(plan_command)
    cli.add_command(calendar_command)
    cli.add_command(mask_command)
    cli.add_command(correct_command)
    cli.add_command(batch_command)


_register()

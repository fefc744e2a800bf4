"""How commands report what a workflow wrote: the files, then one summary
per scene time (:class:`glint.workflows.job.TimeSummary` and its workflow
variants)."""

from __future__ import annotations

import logging
import math
from collections.abc import Sequence
from pathlib import Path

import click

from glint.times import format_time
from glint.workflows.camera_view import CameraViewSummary
from glint.workflows.job import TimeSummary
from glint.workflows.maps import MapSummary

__all__ = ["format_summary", "short_summary", "echo_files", "echo_summaries", "echo_cautions",
           "quiet_level"]


def quiet_level() -> int:
    """The count of ``-q`` given to ``glint`` (0 outside a command)."""
    ctx = click.get_current_context(silent=True)
    obj = ctx.find_object(dict) if ctx is not None else None
    return int(obj.get("quiet", 0)) if obj else 0

log = logging.getLogger(__name__)


def _fmt(value: float, digits: int = 4) -> str:
    return "nan" if math.isnan(value) else f"{value:.{digits}g}"


def format_summary(summary: TimeSummary) -> list[str]:
    """Lines describing one time's summary.

    Examples
    --------
    >>> import numpy as np
    >>> s = TimeSummary(np.datetime64("2026-06-14T10:30"), 30.0, 110.0, 0.3, 0.1,
    ...                 {"low": 0.25, "high": 0.75}, 0)
    >>> print("\\n".join(format_summary(s)))
    Summary for 2026-06-14 10:30:00 UTC:
      sun zenith 30.00 deg, azimuth 110.00 deg (grid centre)
      largest glint reflectance factor: 0.3
      mean glint reflectance factor of the seen pixels: 0.1
      glint classes (share of seen pixels): low 25.0 %, high 75.0 %
      pixels the sensor does not see: 0
    """
    lines = [f"Summary for {format_time(summary.time, 'text')}:"]
    if summary.sun_note:
        lines.append(f"  WARNING: {summary.sun_note}")
    lines += [
             f"  sun zenith {summary.sun_zenith:.2f} deg, azimuth {summary.sun_azimuth:.2f} deg "
             f"({summary.sun_at})",
             f"  largest glint reflectance factor: {_fmt(summary.max_glint_reflectance)}",
             f"  mean glint reflectance factor of the seen pixels: "
             f"{_fmt(summary.mean_glint_reflectance)}"]
    if summary.class_shares:
        parts = ", ".join(f"{name} {100.0 * s:.1f} %" for name, s in summary.class_shares.items())
        lines.append(f"  glint classes (share of seen pixels): {parts}")
    lines.append(f"  pixels the sensor does not see: {summary.unseen_pixels}")
    if isinstance(summary, CameraViewSummary):
        if summary.footprint is not None:
            lines.append(f"  footprint {summary.footprint}")
        gsd = summary.ground_sampling_distance
        if gsd is not None:
            lines.append(f"  ground sampling distance: {gsd[0]:.3g} m from column to column x "
                         f"{gsd[1]:.3g} m from row to row, at the image centre")
        log.info("pixel step: %d", summary.pixel_step)
    if isinstance(summary, MapSummary):
        log.info("tie point step: %d", summary.tie_point_step)
    return lines


def short_summary(summary: TimeSummary) -> str:
    """One line per time (``-q``): largest glint and the top class's share.

    Examples
    --------
    >>> import numpy as np
    >>> s = TimeSummary(np.datetime64("2026-06-14T10:30"), 30.0, 110.0, 0.3, 0.1,
    ...                 {"low": 0.25, "high": 0.75}, 0)
    >>> short_summary(s)
    '2026-06-14 10:30:00 UTC: sun zenith 30.0 deg, largest glint reflectance 0.3, high 75.0 %'
    """
    text = (f"{format_time(summary.time, 'text')}: sun zenith {summary.sun_zenith:.1f} deg, "
            f"largest glint reflectance {_fmt(summary.max_glint_reflectance)}")
    if summary.class_shares:
        name, share = list(summary.class_shares.items())[-1]
        text += f", {name} {100.0 * share:.1f} %"
    if summary.sun_note:
        text += f"; WARNING: {summary.sun_note}"
    return text


def echo_files(files: Sequence[Path], quiet: int | None = None) -> None:
    """Print the files a run wrote (not with ``-qq``)."""
    if (quiet_level() if quiet is None else quiet) >= 2:
        return
    click.echo(f"Wrote {len(files)} file(s):")
    for path in files:
        click.echo(f"  {path}")


def echo_summaries(summaries: Sequence[TimeSummary], quiet: int | None = None) -> None:
    """Print each time's summary: in full, or one line each with ``-q``."""
    q = quiet_level() if quiet is None else quiet
    for summary in summaries:
        if q >= 1:
            click.echo(short_summary(summary))
        else:
            for line in format_summary(summary):
                click.echo(line)


def echo_cautions(cautions: Sequence[str]) -> None:
    """Print the cautions of a run, whatever the quiet level."""
    for caution in cautions:
        click.echo(caution)

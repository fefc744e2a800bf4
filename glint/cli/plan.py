"""``glint plan``: when, in which direction and at what camera tilt to fly a
drone survey over water without glint."""

from __future__ import annotations

from pathlib import Path

import click

from glint.cli.options import output_option, overwrite_option

__all__ = ["plan_command"]

_EPILOG = """\b
Examples:
  glint plan example_scenes/planning/survey_selkie_cove.toml -o selkie-plan
  glint plan survey.toml -o plan --preview-time 2026-07-01T08:30:00+01:00
  glint plan survey.toml -o plan --overwrite

\b
Writes windows.csv, windows.json, steps.csv, day_<date>.png per local date,
calendar.png and preview.png (the photo's predicted glint), all or nothing.

\b
Exit codes: 0 success, 2 invalid survey file or input, 1 outputs could not
be written, 130 stopped by Ctrl-C (SIGINT), 143 stopped by SIGTERM; a
stopped run leaves no partial plan.
"""


@click.command("plan", epilog=_EPILOG)
@click.argument("survey_file", metavar="SURVEY.toml",
                type=click.Path(exists=True, dir_okay=False, path_type=Path))
@output_option
@overwrite_option
@click.option("--preview-time", metavar="TIME",
              help="Time of the camera-view preview: ISO 8601 with Z or an offset "
                   "(default: the middle of the first window).")
def plan_command(survey_file: Path, outdir: Path, overwrite: bool, preview_time: str | None) -> None:
    """Plan a drone survey over water: glint-free time windows, headings and
    gimbal pitches.

    For every time step of the survey's dates, every candidate heading and
    pitch, predicts the share of the photo whose glint exceeds the survey's
    threshold, and lists the continuous windows that meet every limit.
    """
    from glint.times import parse_time
    from glint.workflows.planning import PLAN_CAUTION, load_survey
    from glint.workflows.planning.plan import write_plan

    click.echo(f"Caution: {PLAN_CAUTION}")
    survey = load_survey(survey_file)
    t = parse_time(preview_time, key="--preview-time") if preview_time else None
    result = write_plan(survey, outdir, overwrite=overwrite, preview_time=t)
    click.echo(f"Wrote {len(result.files)} file(s) to {outdir}")
    if not result.windows:
        click.echo("No time window meets every limit on these dates.")
    else:
        click.echo(f"{len(result.windows)} window(s) (local time, {survey.timezone}):")
        for w in result.windows:
            rev = f"/{w.reverse_heading:g}" if w.reverse_heading is not None else " (one way)"
            click.echo(f"  {w.start_local:%Y-%m-%d %H:%M}-{w.end_local:%H:%M}  heading "
                       f"{w.heading:g}{rev} deg, pitch {w.pitch:g} deg, worst glint share "
                       f"{w.worst_glint_share * 100:.1f} %, sun {w.sun_elevation_min:.0f}-"
                       f"{w.sun_elevation_max:.0f} deg")
    click.echo(f"Caution: {PLAN_CAUTION}")

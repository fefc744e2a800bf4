"""``glint calendar``: glint risk at a site for each overpass of a
sun-synchronous satellite."""

from __future__ import annotations

from pathlib import Path

import click

from glint.cli.options import output_option, overwrite_option

__all__ = ["calendar_command"]

_EPILOG = """\b
Examples:
  glint calendar example_scenes/planning/calendar_skerrow_bank.toml -o skerrow-calendar
  glint calendar site.toml -o calendar --overwrite

\b
Writes calendar.csv (one row per day) and calendar.png, all or nothing.

\b
Exit codes: 0 success, 2 invalid site file or input, 1 outputs could not be
written, 130 stopped by Ctrl-C (SIGINT), 143 stopped by SIGTERM.
"""


@click.command("calendar", epilog=_EPILOG)
@click.argument("site_file", metavar="SITE.toml",
                type=click.Path(exists=True, dir_okay=False, path_type=Path))
@output_option
@overwrite_option
def calendar_command(site_file: Path, outdir: Path, overwrite: bool) -> None:
    """Glint calendar of a sun-synchronous satellite over a water site.

    For each day of the date range, predicts the glint at the site for every
    across-track position of the swath that can see it, so that
    acquisitions can be chosen.
    """
    from glint.workflows.planning import PLAN_CAUTION
    from glint.workflows.planning.calendar import load_calendar_site, write_calendar

    site = load_calendar_site(site_file)
    cal = write_calendar(site, outdir, overwrite=overwrite)
    click.echo(f"Wrote {len(cal.files)} file(s) to {outdir}")
    rows = cal.rows()
    risky = sum(r["risk"] != "none" for r in rows)
    click.echo(f"{len(rows)} overpass day(s); glint above {site.glint_threshold:g} somewhere in "
               f"the swath on {risky}; ground-track heading {cal.track_heading:.1f} deg.")
    click.echo(f"Caution: {PLAN_CAUTION}")

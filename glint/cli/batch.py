"""``glint batch``: compute the scenes of a batch manifest on a dask cluster."""

from __future__ import annotations

import logging
from pathlib import Path

import click

from glint.cli.options import output_option
from glint.io.quicklook import CAUTION

__all__ = ["batch_command"]

_EPILOG = """\b
Examples:
  glint batch example_scenes/batch/harbour_batch.toml -o harbour-out
  glint batch manifest.toml -o out --dry-run
  glint batch manifest.toml -o out --workers 4
  glint batch manifest.toml -o /shared/out --scheduler tcp://10.0.0.5:8786

\b
A re-run skips scenes that are done and unchanged, and redoes the others
(new, changed, failed, outputs missing); --force redoes every scene. The
summary is written to OUTDIR/batch-summary.csv and .json.

\b
Exit codes: 0 every scene done, 1 a scene failed (the others were still
computed) or the cluster cannot be reached, 2 invalid manifest or scene,
130 stopped by Ctrl-C (SIGINT), 143 stopped by SIGTERM; a stopped run keeps
the scenes it finished and leaves no partial set of outputs.
"""


@click.command("batch", epilog=_EPILOG)
@click.argument("manifest", metavar="MANIFEST.toml",
                type=click.Path(exists=True, dir_okay=False, path_type=Path))
@output_option
@click.option("--workers", type=click.IntRange(min=1), metavar="N",
              help="Workers of the local cluster. Default: one per core.")
@click.option("--scheduler", metavar="ADDRESS",
              help="Run on the dask cluster whose scheduler is at ADDRESS (tcp://HOST:PORT) "
                   "instead of a local one; its workers must see the scene files and OUTDIR.")
@click.option("--force", is_flag=True, help="Redo every scene, also those done and unchanged.")
@click.option("--dry-run", is_flag=True,
              help="Check the manifest and list what would run and why (new, changed, done); "
                   "compute nothing.")
@click.option("--yes", "confirm", is_flag=True,
              help="Allow tile grids of more scenes than the limit.")
@click.option("-q", "--quiet", is_flag=True, help="No progress bar and no per-scene lines.")
@click.pass_context
def batch_command(ctx: click.Context, manifest: Path, outdir: Path, workers: int | None,
                  scheduler: str | None, force: bool, dry_run: bool, confirm: bool,
                  quiet: bool) -> None:
    """Compute every scene of MANIFEST.toml, one folder per scene in OUTDIR.

    The manifest lists scene files, a template scene with a table of rows
    (CSV or TOML) that change key paths such as scene.time or
    surface.wind_speed, or a tile grid over an area for a list or range of
    times. Every scene is checked before any work starts.
    """
    from glint.workflows.batch import plan_batch, run_batch

    root = ctx.find_root()
    quiet = quiet or int(root.params.get("quiet") or 0) > 0
    if logging.getLogger().getEffectiveLevel() > logging.INFO and not dry_run:
        # The cluster's own start-up and shutdown chatter, unless -v (after
        # the import, which sets distributed's logging up).
        import distributed  # noqa: F401

        logging.getLogger("distributed").setLevel(logging.ERROR)
    if workers is not None and scheduler:
        raise click.BadParameter("--workers sets the local cluster's size; with --scheduler "
                                 "the cluster's own workers are used", param_hint="--workers")
    if dry_run:
        planned = plan_batch(manifest, outdir, force=force, confirm=confirm)
        width = max((len(p.name) for p in planned), default=5)
        counts: dict[str, int] = {}
        for p in planned:
            counts[p.decision.status] = counts.get(p.decision.status, 0) + 1
            verb = "skip" if not p.decision.run else "run "
            click.echo(f"{verb} {p.name:<{width}}  {p.decision.status:<10} {p.decision.reason}")
        runs = sum(1 for p in planned if p.decision.run)
        click.echo(f"{len(planned)} scene(s): {runs} would run, {len(planned) - runs} done "
                   f"({', '.join(f'{k} {v}' for k, v in sorted(counts.items()))}); nothing computed.")
        return

    def report(o) -> None:  # type: ignore[no-untyped-def]
        if o.status == "failed":
            click.echo(f"failed {o.name}: {o.error}", err=True)
        elif not quiet:
            click.echo(f"done   {o.name} ({o.seconds:.1f} s)", err=True)

    result = run_batch(manifest, outdir, workers=workers, scheduler=scheduler, force=force,
                       confirm=confirm, progress=False if quiet else None, on_outcome=report)
    counts = result.counts()
    parts = ", ".join(f"{counts[k]} {k}" for k in ("done", "skipped", "failed") if k in counts)
    click.echo(f"{len(result.outcomes)} scene(s): {parts or 'none'} in {result.seconds:.1f} s")
    for path in result.summary_files[:1]:
        click.echo(f"Summary: {path} (and .json)")
    if result.failed:
        click.echo(f"{len(result.failed)} scene(s) failed:", err=True)
        for o in result.failed:
            click.echo(f"  {o.name}: {o.error}", err=True)
    click.echo(CAUTION)
    if not result.ok:
        ctx.exit(1)

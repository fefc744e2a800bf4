"""Batches: many scenes (a list, a template with rows, a tile grid) computed
on a dask cluster, resumable, with a summary table.

:func:`run_batch` runs a manifest; :func:`plan_batch` says what a run would
do; :func:`load_manifest` reads and checks a manifest.
"""

from __future__ import annotations

from glint.workflows.batch.manifest import (
    Manifest,
    ManifestError,
    ResolvedScene,
    SceneEntry,
    load_manifest,
    safe_name,
)
from glint.workflows.batch.runner import (
    BatchResult,
    ClusterError,
    PlannedScene,
    SceneOutcome,
    plan_batch,
    run_batch,
)
from glint.workflows.batch.state import STATE_FILE
from glint.workflows.batch.summary import SUMMARY_CSV, SUMMARY_JSON
from glint.workflows.batch.tiles import MAX_TILE_SCENES

__all__ = [
    "Manifest",
    "ManifestError",
    "SceneEntry",
    "ResolvedScene",
    "load_manifest",
    "safe_name",
    "BatchResult",
    "ClusterError",
    "PlannedScene",
    "SceneOutcome",
    "plan_batch",
    "run_batch",
    "STATE_FILE",
    "SUMMARY_CSV",
    "SUMMARY_JSON",
    "MAX_TILE_SCENES",
]

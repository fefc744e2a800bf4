"""The summary of a batch: one row per scene and time, as CSV and JSON.

Columns: ``scene``, ``status`` (done, skipped, failed, stopped, not run),
``reason`` (why it ran or was skipped), ``seconds``, ``error``, ``time``,
``sun_zenith``, ``sun_azimuth`` [deg, at the grid centre],
``mean_glint_reflectance``, ``max_glint_reflectance`` [1], one
``share_<class>`` column per glint class (share of the water pixels the
sensor sees, 0-1), ``unseen_pixels`` and ``files``. A scene that has
several times has one row per time; a scene without a result one row with
an empty time.
"""

from __future__ import annotations

import csv
import io
import json
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from glint.io.outputset import OutputSet

__all__ = ["SUMMARY_CSV", "SUMMARY_JSON", "summary_rows", "write_summary"]

#: File names of the summary in the output directory.
SUMMARY_CSV = "batch-summary.csv"
SUMMARY_JSON = "batch-summary.json"

_BASE = ["scene", "status", "reason", "seconds", "error", "time", "sun_zenith", "sun_azimuth",
         "mean_glint_reflectance", "max_glint_reflectance"]


def summary_rows(outcomes: Sequence[Any]) -> tuple[list[str], list[dict[str, Any]]]:
    """Column names and rows of the summary table of ``outcomes``
    (:class:`~glint.workflows.batch.runner.SceneOutcome`)."""
    classes: list[str] = []
    rows: list[dict[str, Any]] = []
    for o in outcomes:
        base = {"scene": o.name, "status": o.status, "reason": o.reason,
                "seconds": None if o.seconds != o.seconds else round(float(o.seconds), 3),
                "error": o.error, "files": " ".join(o.files)}
        for s in o.summaries or [None]:
            row = dict(base)
            if s is not None:
                row.update({k: s.get(k) for k in ("time", "sun_zenith", "sun_azimuth",
                                                   "mean_glint_reflectance", "max_glint_reflectance",
                                                   "unseen_pixels")})
                for name, share in (s.get("class_shares") or {}).items():
                    col = f"share_{name.replace(' ', '_')}"
                    if col not in classes:
                        classes.append(col)
                    row[col] = share
            rows.append(row)
    return _BASE + classes + ["unseen_pixels", "files"], rows


def write_summary(outdir: str | Path, outcomes: Sequence[Any]) -> list[Path]:
    """Write ``batch-summary.csv`` and ``batch-summary.json`` into ``outdir``
    (together, replacing earlier ones); returns their paths."""
    columns, rows = summary_rows(outcomes)
    text = io.StringIO()
    w = csv.DictWriter(text, fieldnames=columns, extrasaction="ignore", lineterminator="\n")
    w.writeheader()
    for r in rows:
        w.writerow({k: ("" if r.get(k) is None else r.get(k)) for k in columns})
    doc = {
        "scenes": [
            {"scene": o.name, "status": o.status, "reason": o.reason,
             "seconds": None if o.seconds != o.seconds else round(float(o.seconds), 3),
             "error": o.error or None, "files": list(o.files), "times": list(o.summaries)}
            for o in outcomes
        ],
        "counts": {s: sum(1 for o in outcomes if o.status == s)
                   for s in ("done", "skipped", "failed", "stopped", "not run")},
    }
    with OutputSet(outdir, {"csv": SUMMARY_CSV, "json": SUMMARY_JSON}, overwrite=True) as out:
        out.temp("csv").write_text(text.getvalue(), encoding="utf-8")
        out.temp("json").write_text(json.dumps(doc, indent=1, allow_nan=False) + "\n", encoding="utf-8")
    return [Path(outdir) / SUMMARY_CSV, Path(outdir) / SUMMARY_JSON]

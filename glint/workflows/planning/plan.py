"""Survey plans on disk: windows table, charts and a camera-view preview.

:func:`write_plan` scans a survey (:func:`~glint.workflows.planning.windows.scan_survey`)
and writes, as one output set (all or nothing, also when stopped by Ctrl-C
or SIGTERM):

* ``windows.csv`` and ``windows.json``: one row per time window (local date,
  start and end in local time and UTC, heading and its reverse, pitch, worst
  predicted glint share, sun elevation range, strongest wind);
* ``steps.csv``: every daylight time step with the sun, the wind, and the
  best share, heading and pitch;
* ``day_<YYYY-MM-DD>.png``: per local date, the best glint share against
  local time with the windows shaded and the sun elevation;
* ``calendar.png``: date against local time of day, coloured by the best
  achievable glint share;
* ``preview.png``: the photo's predicted glint at one time and pose, from
  the camera-view workflow (:func:`glint.workflows.camera_view.camera_view`).

Every file carries :data:`~glint.workflows.planning.survey.PLAN_CAUTION`.
"""

from __future__ import annotations

import csv
import datetime as _dt
import io as _stdio
import json
import math
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from glint.errors import InputError
from glint.io import charts
from glint.io import quicklook
from glint.io.outputset import OutputSet
from glint.sensors import FrameCamera
from glint.times import format_time
from glint.workflows.planning.survey import PLAN_CAUTION, Survey, local_dates, to_local
from glint.workflows.planning.windows import SurveyScan, Window, scan_survey, survey_scene

__all__ = ["PlanResult", "write_plan", "plan_file_names", "preview_pose"]

#: Longest side [px] of the camera-view preview.
PREVIEW_MAX_SIDE = 800

_WINDOW_COLUMNS = ("date", "start_local", "end_local", "start_utc", "end_utc", "duration_minutes",
                   "steps", "heading", "reverse_heading", "pitch", "worst_glint_share",
                   "sun_elevation_min", "sun_elevation_max", "wind_max")


@dataclass
class PlanResult:
    """What :func:`write_plan` computed and wrote."""

    scan: SurveyScan
    files: list[Path] = field(default_factory=list)
    preview: dict[str, Any] = field(default_factory=dict)

    @property
    def windows(self) -> list[Window]:
        """The time windows of the plan."""
        return self.scan.windows


def plan_file_names(survey: Survey) -> dict[str, str]:
    """Key -> file name of every file of a plan."""
    names = {"windows_csv": "windows.csv", "windows_json": "windows.json",
             "steps_csv": "steps.csv", "calendar": "calendar.png", "preview": "preview.png"}
    for d in local_dates(survey.start_date, survey.end_date):
        names[f"day_{d.isoformat()}"] = f"day_{d.isoformat()}.png"
    return names


def preview_pose(scan: SurveyScan, time: Any = None) -> tuple[np.datetime64, float, float]:
    """Time, heading and pitch of the camera-view preview.

    ``time`` (or the survey's ``outputs.preview_time``) picks the nearest
    time step and its best pose; otherwise the middle of the first window,
    or, without windows, the daylight step with the smallest glint share.

    Raises
    ------
    InputError
        If the chosen time is at night or outside the plan's dates.
    """
    t = time if time is not None else scan.survey.preview_time
    if t is not None:
        from glint.times import to_utc_datetime64

        t64: Any = np.asarray(to_utc_datetime64(t)).reshape(-1)[0].astype("datetime64[ns]")
        half_step = np.timedelta64(scan.survey.step_minutes * 30, "s")
        if t64 < scan.times[0] - half_step or t64 > scan.times[-1] + half_step:
            raise InputError(f"preview time {format_time(t64)!r} lies outside the plan's dates "
                             f"({format_time(scan.times[0])} to {format_time(scan.times[-1])})")
        k = int(np.argmin(np.abs((scan.times - t64).astype(np.int64))))
        if not np.isfinite(scan.best_share[k]):
            raise InputError(f"preview time {format_time(t64)!r}: the sun is below the horizon "
                             "then; choose a daylight time")
        return scan.times[k], float(scan.best_heading[k]), float(scan.best_pitch[k])
    if scan.windows:
        w = scan.windows[0]
        mid = w.start + (w.end - w.start) // 2
        k = int(np.argmin(np.abs((scan.times - mid).astype(np.int64))))
        return scan.times[k], w.heading, w.pitch
    if not np.isfinite(scan.best_share).any():
        raise InputError("the plan's dates have no daylight at the site: nothing to preview")
    k = int(np.nanargmin(scan.best_share))
    return scan.times[k], float(scan.best_heading[k]), float(scan.best_pitch[k])


def _hours(dt: _dt.datetime) -> float:
    return dt.hour + dt.minute / 60.0 + dt.second / 3600.0


def _csv_text(rows: list[dict[str, Any]], columns: tuple[str, ...]) -> str:
    buf = _stdio.StringIO()
    buf.write(f"# {PLAN_CAUTION}\n")
    w = csv.DictWriter(buf, fieldnames=list(columns), lineterminator="\n")
    w.writeheader()
    for r in rows:
        w.writerow({k: ("" if r.get(k) is None else r.get(k)) for k in columns})
    return buf.getvalue()


def _steps_rows(scan: SurveyScan) -> list[dict[str, Any]]:
    rows = []
    tz = scan.survey.tz
    met = scan.conditions_met
    for k in np.flatnonzero(np.isfinite(scan.best_share)):
        rows.append({
            "local_time": to_local(scan.times[k], tz).isoformat(),
            "utc": format_time(scan.times[k]),
            "sun_elevation": round(float(scan.sun_elevation[k]), 3),
            "sun_azimuth": round(float(scan.sun_azimuth[k]), 3),
            "wind_speed": round(float(scan.wind_speed[k]), 2),
            "wind_direction": "" if math.isnan(scan.wind_direction[k]) else round(float(scan.wind_direction[k]), 1),
            "best_glint_share": round(float(scan.best_share[k]), 4),
            "best_heading": float(scan.best_heading[k]),
            "best_pitch": float(scan.best_pitch[k]),
            "conditions_met": bool(met[k]),
            "acceptable": bool(scan.acceptable[k].any()),
        })
    return rows


def _summary_json(scan: SurveyScan, preview: dict[str, Any]) -> dict[str, Any]:
    s = scan.survey
    from glint._version import __version__

    return {
        "caution": PLAN_CAUTION,
        "survey": s.name,
        "description": s.description,
        "site": {"lon": s.longitude, "lat": s.latitude,
                 "polygon": [list(p) for p in s.polygon] if s.polygon else None},
        "timezone": s.timezone,
        "dates": [s.start_date.isoformat(), s.end_date.isoformat()],
        "step_minutes": s.step_minutes,
        "camera": {**{k: (list(v) if isinstance(v, tuple) else v) for k, v in s.camera.items()},
                   "pitches": list(s.pitches), "headings": list(s.headings),
                   "one_way_lines": s.one_way_lines, "lattice": list(s.lattice)},
        "wind": ({"speed_10m": float(s.wind.speed[0]),
                  "direction": None if math.isnan(s.wind.direction[0]) else float(s.wind.direction[0])}
                 if s.wind.constant else {"file": s.wind.source}),
        "limits": {"max_glint_share": s.limits.max_glint_share,
                   "glint_threshold": s.limits.glint_threshold,
                   "sun_elevation": list(s.limits.sun_elevation), "max_wind": s.limits.max_wind},
        "preview": preview,
        "windows": [w.as_dict() for w in scan.windows],
        "software": f"glint {__version__}",
    }


def _write_day_charts(out: OutputSet, scan: SurveyScan) -> None:
    s = scan.survey
    tz = s.tz
    local = [to_local(t, tz) for t in scan.times]
    dates = np.array([d.date() for d in local])
    hours = np.array([_hours(d) for d in local])
    for d in local_dates(s.start_date, s.end_date):
        sel = dates == d
        wins = [(_hours(w.start_local), _hours(w.end_local) + (1.0 if w.end_local.date() > d else 0.0) * 24,
                 f"{w.heading:g}°/{w.reverse_heading:g}°, {w.pitch:g}°" if w.reverse_heading is not None
                 else f"{w.heading:g}°, {w.pitch:g}°")
                for w in scan.windows if w.date == d]
        charts.day_chart(
            out.temp(f"day_{d.isoformat()}"), hours[sel], scan.best_share[sel],
            scan.sun_elevation[sel], wins,
            title=f"{s.name}: {d.isoformat()}  (best heading and pitch per time; "
                  f"threshold {s.limits.glint_threshold:g})",
            max_share=s.limits.max_glint_share, elevation_limits=s.limits.sun_elevation,
            timezone_label=s.timezone, caution=PLAN_CAUTION)


def _write_calendar(out: OutputSet, scan: SurveyScan) -> None:
    s = scan.survey
    tz = s.tz
    days = local_dates(s.start_date, s.end_date)
    nslots = int(round(24 * 60 / s.step_minutes))
    grid = np.full((nslots, len(days)), np.nan)
    outside = np.zeros((nslots, len(days)), bool)
    met = scan.conditions_met
    day_index = {d: i for i, d in enumerate(days)}
    for k, t in enumerate(scan.times):
        lt = to_local(t, tz)
        i = day_index.get(lt.date())
        if i is None:
            continue
        slot = min(nslots - 1, int((lt.hour * 60 + lt.minute) // s.step_minutes))
        grid[slot, i] = scan.best_share[k]
        outside[slot, i] = not met[k]
    slot_hours = (np.arange(nslots) + 0.5) * s.step_minutes / 60.0
    wins = [(day_index[w.date], _hours(w.start_local), _hours(w.end_local))
            for w in scan.windows if w.date in day_index and w.end_local.date() == w.date]
    charts.plan_calendar_chart(
        out.temp("calendar"), days, slot_hours, grid, outside, wins,
        title=f"{s.name}\nbest predicted glint share of the photo, {days[0].isoformat()} to "
              f"{days[-1].isoformat()}",
        max_share=s.limits.max_glint_share, timezone_label=s.timezone, caution=PLAN_CAUTION)


def _write_preview(out: OutputSet, scan: SurveyScan, time: np.datetime64, heading: float,
                   pitch: float) -> dict[str, Any]:
    from glint.workflows.camera_view import camera_view

    s = scan.survey
    k = int(np.argmin(np.abs((scan.times - time).astype(np.int64))))
    ws = float(scan.wind_speed[k])
    wd = None if math.isnan(scan.wind_direction[k]) else float(scan.wind_direction[k])
    scene = survey_scene(s, heading=heading, pitch=pitch, time=time, wind_speed=ws, wind_direction=wd)
    cam = scene.sensor
    assert isinstance(cam, FrameCamera)
    step = max(1, math.ceil(max(cam.cols, cam.rows) / PREVIEW_MAX_SIDE))
    ds = camera_view(scene, time=time, step=step, variables=["glint_reflectance"])
    refl = ds.glint_reflectance.values
    share = float(np.mean(refl > s.limits.glint_threshold))
    local = to_local(time, s.tz)
    quicklook.quicklook(
        refl, (-0.5, cam.cols - 0.5, cam.rows - 0.5, -0.5), out.temp("preview"),
        variable="glint_reflectance",
        style=quicklook.QuicklookStyle(
            title=f"{s.name}: predicted glint in the photo",
            subtitle=f"{local.isoformat(timespec='minutes')} local ({format_time(time, 'text')})\n"
                     f"heading {heading:g}°, pitch {pitch:g}°; sun elevation "
                     f"{scan.sun_elevation[k]:.1f}°, azimuth {scan.sun_azimuth[k]:.1f}°; "
                     f"share above {s.limits.glint_threshold:g}: {share * 100:.1f} %",
            image_axes=True,
            marks=((float(s.limits.glint_threshold), "plan threshold"),),
            cautions=(quicklook.CAUTION, quicklook.FLIGHT_CAUTION,
                      "Plan estimate only: check airspace, weather, line of sight and local "
                      "rules.")))
    return {"utc": format_time(time), "local": local.isoformat(), "heading": heading,
            "pitch": pitch, "glint_share_every_pixel": round(share, 4),
            "pixel_step": step}


def write_plan(survey: Survey, outdir: str | Path, *, overwrite: bool = False,
               preview_time: Any = None, scan: SurveyScan | None = None) -> PlanResult:
    """Scan a survey and write its plan files as one output set.

    Parameters
    ----------
    survey : Survey
    outdir : path-like
        Output directory (created when its parent exists).
    overwrite : bool
        Replace existing plan files.
    preview_time : datetime-like, optional
        Time of the camera-view preview (see :func:`preview_pose`).
    scan : SurveyScan, optional
        A scan of this survey already computed.

    Returns
    -------
    PlanResult

    Raises
    ------
    OutputError
        Existing files (without ``overwrite``), or the directory cannot be
        written; checked before the scan starts.
    InputError
        A preview time at night or outside the dates; a wind series that
        does not cover the dates.
    """
    out = OutputSet(outdir, plan_file_names(survey), overwrite=overwrite)
    out.check()
    scan = scan if scan is not None else scan_survey(survey)
    t, h, p = preview_pose(scan, preview_time)
    result = PlanResult(scan)
    with out:
        rows = [w.as_dict() for w in scan.windows]
        out.temp("windows_csv").write_text(_csv_text(rows, _WINDOW_COLUMNS), encoding="utf-8")
        step_rows = _steps_rows(scan)
        cols = tuple(step_rows[0]) if step_rows else ("local_time", "utc")
        out.temp("steps_csv").write_text(_csv_text(step_rows, cols), encoding="utf-8")
        result.preview = _write_preview(out, scan, t, h, p)
        out.temp("windows_json").write_text(
            json.dumps(_summary_json(scan, result.preview), indent=2), encoding="utf-8")
        _write_day_charts(out, scan)
        _write_calendar(out, scan)
    result.files = out.files
    return result

"""Plan and calendar files: written all or nothing, with the caution, from
Python and from the command line."""

from __future__ import annotations

import copy
import csv
import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from glint.workflows.planning import PLAN_CAUTION, survey_from_dict
from glint.workflows.planning import plan as plan_mod
from glint.workflows.planning.calendar import (
    calendar_site_from_dict,
    overpass_solar_time,
    satellite_calendar,
    sun_synchronous_inclination,
    write_calendar,
)

ROOT = Path(__file__).resolve().parents[1]
SURVEY = {
    "survey": {"name": "Test cove", "start_date": "2026-07-01", "end_date": "2026-07-02",
               "timezone": "Europe/Lisbon", "step_minutes": 10},
    "site": {"lon": -8.0, "lat": 37.0},
    "camera": {"image_size": [400, 300], "focal_length": 8.8, "sensor_width": 13.2,
               "altitude": 100.0, "pitch": [-90.0, -75.0], "headings": "search"},
    "wind": {"speed": 3.0, "direction": 270.0},
    "limits": {},
}


def test_plan_files_tables_and_caution(tmp_path):
    s = survey_from_dict(SURVEY)
    res = plan_mod.write_plan(s, tmp_path / "plan")
    names = sorted(p.name for p in (tmp_path / "plan").iterdir())
    assert names == sorted(["windows.csv", "windows.json", "steps.csv", "calendar.png", "preview.png",
                            "day_2026-07-01.png", "day_2026-07-02.png"])
    text = (tmp_path / "plan" / "windows.csv").read_text()
    assert text.splitlines()[0] == f"# {PLAN_CAUTION}"
    rows = list(csv.DictReader(line for line in text.splitlines() if not line.startswith("#")))
    assert len(rows) == len(res.windows) > 0
    for r in rows:
        assert r["start_local"].endswith("+01:00") and r["start_utc"].endswith("Z")
        assert float(r["worst_glint_share"]) <= 0.05
        assert (float(r["heading"]) + 180.0) % 360.0 == float(r["reverse_heading"])
    data = json.loads((tmp_path / "plan" / "windows.json").read_text())
    assert data["caution"] == PLAN_CAUTION and len(data["windows"]) == len(rows)
    assert data["preview"]["heading"] == res.windows[0].heading


def test_plan_interrupted_midway_leaves_nothing(tmp_path, monkeypatch):
    s = survey_from_dict(SURVEY)
    calls = []

    def stop(*args, **kwargs):
        calls.append(1)
        if len(calls) == 2:
            raise KeyboardInterrupt
        return real(*args, **kwargs)

    real = plan_mod.charts.day_chart
    monkeypatch.setattr(plan_mod.charts, "day_chart", stop)
    with pytest.raises(KeyboardInterrupt):
        plan_mod.write_plan(s, tmp_path / "plan")
    assert not (tmp_path / "plan").exists()


def test_existing_plan_is_refused_before_the_scan(tmp_path, monkeypatch):
    from glint.errors import OutputError

    (tmp_path / "windows.csv").write_text("old")
    monkeypatch.setattr(plan_mod, "scan_survey", lambda s: pytest.fail("scanned"))
    with pytest.raises(OutputError, match=r"windows\.csv.*exists"):
        plan_mod.write_plan(survey_from_dict(SURVEY), tmp_path)


def test_preview_at_night_is_refused(tmp_path):
    from glint.errors import InputError

    s = survey_from_dict(SURVEY)
    with pytest.raises(InputError, match=r"preview time '2026-07-01T01:00:00Z': the sun is below"):
        plan_mod.write_plan(s, tmp_path / "p", preview_time=np.datetime64("2026-07-01T01:00"))
    assert not (tmp_path / "p").exists()


def _run(*args, cwd=ROOT):
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    return subprocess.run([sys.executable, "-m", "glint", *args], cwd=cwd, env=env,
                          capture_output=True, text=True, timeout=600)


def test_cli_plan_prints_caution_and_help_has_examples(tmp_path):
    p = tmp_path / "survey.toml"
    p.write_text("""
[survey]
name = "CLI cove"
start_date = 2026-07-01
end_date = 2026-07-01
timezone = "Europe/Lisbon"
step_minutes = 15
[site]
lon = -8.0
lat = 37.0
[camera]
image_size = [400, 300]
focal_length = 8.8
sensor_width = 13.2
altitude = 100.0
pitch = [-90.0]
headings = [0.0, 90.0]
[wind]
speed = 3.0
[limits]
sun_elevation = [20.0, 60.0]
""")
    r = _run("plan", str(p), "-o", str(tmp_path / "out"))
    assert r.returncode == 0, r.stderr
    assert r.stdout.count(PLAN_CAUTION) == 2 and "window(s)" in r.stdout
    h = _run("plan", "--help")
    assert "glint plan example_scenes/planning/survey_selkie_cove.toml -o selkie-plan" in h.stdout
    bad = p.read_text().replace('timezone = "Europe/Lisbon"', 'timezone = "Europe/Lisbn"')
    p.write_text(bad)
    r = _run("plan", str(p), "-o", str(tmp_path / "out2"))
    assert r.returncode == 2 and "unknown time zone 'Europe/Lisbn'" in r.stderr
    assert not (tmp_path / "out2").exists()


SITE = {"site": {"name": "Bank", "lon": -9.6, "lat": 53.5, "timezone": "Europe/Dublin"},
        "dates": {"start_date": "2026-06-01", "end_date": "2026-06-10"},
        "satellite": {"node_time": "10:30", "pass": "descending", "altitude": 786.0,
                      "swath_width": 290.0},
        "wind": {"speed": 5.0}}


def test_sun_synchronous_orbit_geometry():
    # A 786 km sun-synchronous orbit has an inclination of about 98.6 deg
    # (published for Sentinel-2's orbit; from memory).
    assert sun_synchronous_inclination(786.0) == pytest.approx(98.6, abs=0.1)
    # at the equator the pass is at the node time; symmetric north and south
    assert overpass_solar_time(10.5, 98.6, 0.0, True) == pytest.approx(10.5, abs=1e-9)
    n = overpass_solar_time(10.5, 98.6, 50.0, True) - 10.5
    s = overpass_solar_time(10.5, 98.6, -50.0, True) - 10.5
    assert n == pytest.approx(-s, abs=1e-9) and n != 0.0


def test_calendar_rows_and_view_geometry(tmp_path):
    site = calendar_site_from_dict(SITE)
    cal = satellite_calendar(site)
    mid = int(np.argmin(np.abs(cal.offsets_km)))
    assert cal.view_zenith[mid] < 0.1  # straight below the satellite
    # the swath edge at 145 km from 786 km: about 10.4 deg off nadir, plus
    # the Earth's curvature (plain geometry)
    assert cal.view_zenith[0] == pytest.approx(np.degrees(np.arctan(145.0 / 786.0)) + 1.3, abs=0.5)
    rows = cal.rows()
    assert len(rows) == 10 and all(r["overpass_utc"].endswith("Z") for r in rows)
    assert {r["risk"] for r in rows} <= {"none", "part of the swath", "whole swath"}
    res = write_calendar(site, tmp_path / "cal")
    assert sorted(p.name for p in res.files) == ["calendar.csv", "calendar.png"]
    assert (tmp_path / "cal" / "calendar.csv").read_text().startswith(f"# {PLAN_CAUTION}")


def test_cli_calendar(tmp_path):
    r = _run("calendar", "example_scenes/planning/calendar_skerrow_bank.toml", "-o", str(tmp_path / "c"))
    assert r.returncode == 0, r.stderr
    assert PLAN_CAUTION in r.stdout and "overpass day(s)" in r.stdout
    assert (tmp_path / "c" / "calendar.png").is_file()

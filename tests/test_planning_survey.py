"""Survey and calendar-site files: every bad input is a clear error naming
the value and its key path."""

from __future__ import annotations

import copy
import json

import numpy as np
import pytest

from glint.errors import InputError, SceneError
from glint.workflows.planning import MAX_PLAN_DAYS, SurveyError, load_survey, survey_from_dict
from glint.workflows.planning.calendar import calendar_site_from_dict
from glint.workflows.planning.survey import read_wind_file

BASE = {
    "survey": {"name": "Test cove", "start_date": "2026-07-01", "end_date": "2026-07-02",
               "timezone": "Europe/Lisbon"},
    "site": {"lon": -8.0, "lat": 37.0},
    "camera": {"image_size": [4000, 3000], "focal_length": 8.8, "sensor_width": 13.2,
               "altitude": 100.0, "pitch": [-90.0, -80.0], "headings": "search"},
    "wind": {"speed": 3.0, "direction": 270.0},
    "limits": {"max_glint_share": 0.05, "glint_threshold": 0.02, "sun_elevation": [20.0, 60.0],
               "max_wind": 8.0},
}


def _with(path: str, value, base=BASE):
    d = copy.deepcopy(base)
    sec, key = path.split(".")
    if value is None:
        d[sec].pop(key, None)
    else:
        d[sec][key] = value
    return d


def test_good_survey_reads_every_key():
    s = survey_from_dict(BASE)
    assert s.headings == tuple(float(h) for h in range(0, 360, 30))
    assert s.pitches == (-90.0, -80.0)
    assert s.limits.sun_elevation == (20.0, 60.0)
    assert s.camera["altitude"] == 100.0


def test_listed_headings_gain_their_reverse_unless_one_way():
    d = _with("camera.headings", [10.0, 100.0])
    assert survey_from_dict(d).headings == (10.0, 100.0, 190.0, 280.0)
    d["survey"]["one_way_lines"] = True
    assert survey_from_dict(d).headings == (10.0, 100.0)


@pytest.mark.parametrize("path, value, expect", [
    ("survey.end_date", "2026-06-30", r"survey\.end_date: '2026-06-30' is before start_date '2026-07-01'"),
    ("survey.end_date", "2027-07-03", rf"survey\.end_date: .* 368 days; at most {MAX_PLAN_DAYS} days"),
    ("survey.timezone", "Europe/Lisbn", r"unknown time zone 'Europe/Lisbn' \(did you mean 'Europe/Lisbon'"),
    ("survey.step_minutes", 0, r"survey\.step_minutes: must be a whole number >= 1; got 0"),
    ("camera.focal_length", -8.8, r"camera\.focal_length: must be > 0 mm, got -8\.8"),
    ("camera.image_size", [4000.5, 3000], r"camera\.image_size: must be two positive whole numbers"),
    ("camera.altitude", 0.0, r"camera\.altitude: must be > 0 m, got 0\.0"),
    ("camera.pitch", [-90.0, 10.0], r"camera\.pitch: must be a pitch or a list .* got \[-90\.0, 10\.0\]"),
    ("camera.pitch", [-20.0], r"camera\.pitch: pitch -20\.0 deg .* at or above the horizon"),
    ("camera.sensor_width", 2000.0, r"camera\.focal_length: the field of view .* wider than"),
    ("camera.headings", [400.0], r"camera\.headings: must be \"search\" or a list .* \[400\.0\]"),
    ("limits.sun_elevation", [50.0, 30.0], r"lowest sun elevation 50\.0 must be below the highest 30\.0"),
    ("limits.sun_elevation", [-1.0, 0.0], r"highest sun elevation 0\.0 deg is at or below the horizon"),
    ("limits.max_wind", 2.0, r"wind 3 m/s at 10 m exceeds max_wind 2\.0"),
    ("limits.max_glint_share", 1.5, r"limits\.max_glint_share: must lie in \[0, 1\], got 1\.5"),
    ("site.lat", 95.0, r"site\.lat: must lie in \[-89, 89\] deg, got 95\.0"),
    ("wind.speed", -1.0, r"wind\.speed: must lie in \[0, 40\] m/s, got -1\.0"),
])
def test_bad_values_name_key_and_value(path, value, expect):
    with pytest.raises(SurveyError, match=expect) as info:
        survey_from_dict(_with(path, value))
    assert isinstance(info.value, SceneError) and isinstance(info.value, ValueError)
    assert str(info.value).startswith("invalid survey file")


def test_unknown_key_and_section_suggest_the_right_name():
    d = _with("camera.focal_lenght", 8.8)
    d["limit"] = {}
    with pytest.raises(SurveyError) as info:
        survey_from_dict(d)
    msg = str(info.value)
    assert "camera.focal_lenght: unknown key (did you mean 'focal_length'?)" in msg
    assert "limit: unknown section (did you mean [limits]?)" in msg


def test_every_problem_is_reported_at_once():
    d = _with("camera.altitude", -5.0)
    d["limits"]["sun_elevation"] = [70.0, 10.0]
    d["survey"]["timezone"] = "Mars/Olympus"
    with pytest.raises(SurveyError) as info:
        survey_from_dict(d)
    assert len(info.value.problems) == 3


def _polygon_file(tmp_path, ring):
    p = tmp_path / "site.geojson"
    p.write_text(json.dumps({"type": "FeatureCollection", "features": [
        {"type": "Feature", "properties": {}, "geometry": {"type": "Polygon", "coordinates": [ring]}}]}))
    d = copy.deepcopy(BASE)
    d["site"] = {"polygon": "site.geojson"}
    return d


def test_polygon_site_uses_its_centroid(tmp_path):
    ring = [[-8.01, 37.0], [-7.99, 37.0], [-7.99, 37.01], [-8.01, 37.01], [-8.01, 37.0]]
    s = survey_from_dict(_polygon_file(tmp_path, ring), base_dir=tmp_path)
    assert s.longitude == pytest.approx(-8.0, abs=1e-9)
    assert s.latitude == pytest.approx(37.005, abs=1e-6)
    assert len(s.polygon) == 4


@pytest.mark.parametrize("ring, expect", [
    ([], r"the polygon is empty"),
    ([[-8.0, 37.0], [-8.0, 37.0], [-8.0, 37.0]], r"the polygon is empty: it has 1 distinct vertices"),
    ([[-8.0, 37.0], [-7.99, 37.0], [-7.98, 37.0], [-8.0, 37.0]], r"empty \(zero area\)"),
    # a bow tie: the second and fourth edges cross
    ([[-8.0, 37.0], [-7.99, 37.01], [-7.99, 37.0], [-8.0, 37.01], [-8.0, 37.0]],
     r"the polygon crosses itself \(edge 1 from \[-8\.0, 37\.0\] meets edge 3"),
    ([[-8.0, 37.0], [-7.0, 37.0], [-7.0, 38.0], [-8.0, 37.0]], r"spans .* km; at most 50 km"),
])
def test_bad_polygons(tmp_path, ring, expect):
    with pytest.raises(SurveyError, match=expect):
        survey_from_dict(_polygon_file(tmp_path, ring), base_dir=tmp_path)


def _wind_csv(tmp_path, rows):
    p = tmp_path / "forecast.csv"
    p.write_text("time,wind_speed,wind_direction\n" + "\n".join(rows) + "\n")
    return p


def test_wind_series_from_csv_is_interpolated(tmp_path):
    p = _wind_csv(tmp_path, ["2026-07-01T00:00:00Z,2.0,350", "2026-07-01T12:00:00Z,4.0,10"])
    w = read_wind_file(p, longitude=-8.0, latitude=37.0)
    speed, direction = w.at(np.array(["2026-07-01T06:00:00"], dtype="datetime64[ns]"))
    assert speed[0] == pytest.approx(3.0)
    assert direction[0] == pytest.approx(0.0, abs=1e-9) or direction[0] == pytest.approx(360.0)


def test_wind_series_from_netcdf(tmp_path):
    import xarray as xr

    t = np.array(["2026-07-01T00:00", "2026-07-03T00:00"], dtype="datetime64[ns]")
    ds = xr.Dataset({"u10": (("time", "lat", "lon"), np.full((2, 2, 2), 3.0), {"standard_name": "eastward_wind"}),
                     "v10": (("time", "lat", "lon"), np.full((2, 2, 2), 4.0), {"standard_name": "northward_wind"})},
                    coords={"time": t, "lat": [36.5, 37.5], "lon": [-8.5, -7.5]})
    p = tmp_path / "forecast.nc"
    ds.to_netcdf(p)
    w = read_wind_file(p, longitude=-8.0, latitude=37.0)
    assert w.speed == pytest.approx([5.0, 5.0])
    # blowing towards north-east (u, v > 0) means coming FROM the south-west
    assert w.direction[0] == pytest.approx(180.0 + np.degrees(np.arctan2(3.0, 4.0)))


def test_wind_series_not_covering_the_dates_is_refused(tmp_path):
    from glint.workflows.planning import scan_survey

    _wind_csv(tmp_path, ["2026-07-01T00:00:00Z,2.0,350", "2026-07-01T18:00:00Z,4.0,10"])
    d = copy.deepcopy(BASE)
    d["wind"] = {"file": "forecast.csv"}
    s = survey_from_dict(d, base_dir=tmp_path)
    with pytest.raises(InputError, match=r"wind\.file: the wind series 'forecast\.csv' covers "
                       r"2026-07-01T00:00:00Z to 2026-07-01T18:00:00Z, but the plan needs"):
        scan_survey(s)


def test_bad_wind_files(tmp_path):
    p = tmp_path / "w.csv"
    p.write_text("when,speed\n2026-07-01T00:00:00Z,3\n")
    with pytest.raises(InputError, match=r"needs the columns time, wind_speed .* found \['when', 'speed'\]"):
        read_wind_file(p, longitude=0.0, latitude=0.0)
    p.write_text("time,wind_speed\n2026-07-01T00:00:00,3\n2026-07-01T01:00:00Z,3\n")
    with pytest.raises(InputError, match=r"line 2: .*has no time zone"):
        read_wind_file(p, longitude=0.0, latitude=0.0)
    p.write_text("time,wind_speed\n2026-07-01T00:00:00Z,-3\n2026-07-01T01:00:00Z,3\n")
    with pytest.raises(InputError, match=r"wind speeds must be finite and >= 0 m/s; got -3\.0"):
        read_wind_file(p, longitude=0.0, latitude=0.0)


def test_example_survey_loads():
    from pathlib import Path

    s = load_survey(Path(__file__).resolve().parents[1] / "example_scenes" / "planning" / "survey_selkie_cove.toml")
    assert s.timezone == "Europe/London" and len(s.headings) == 12 and len(s.pitches) == 3


SITE = {"site": {"name": "Bank", "lon": -9.6, "lat": 53.5, "timezone": "Europe/Dublin"},
        "dates": {"start_date": "2026-06-01", "end_date": "2026-06-30"},
        "satellite": {"node_time": "10:30", "pass": "descending", "altitude": 786.0,
                      "swath_width": 290.0},
        "wind": {"speed": 5.0}}


@pytest.mark.parametrize("path, value, expect", [
    ("satellite.node_time", "25:10", r"satellite\.node_time: must be .* got '25:10'"),
    ("satellite.pass", "sideways", r"satellite\.pass: must be one of 'descending', 'ascending'; got 'sideways'"),
    ("satellite.altitude", 50.0, r"satellite\.altitude: must lie in \[200, 1500\] km, got 50\.0"),
    ("dates.end_date", "2026-05-01", r"dates\.end_date: '2026-05-01' is before start_date"),
    ("site.timezone", "Nowhere/City", r"unknown time zone 'Nowhere/City'"),
])
def test_bad_calendar_sites(path, value, expect):
    with pytest.raises(SurveyError, match=expect) as info:
        calendar_site_from_dict(_with(path, value, SITE))
    assert str(info.value).startswith("invalid site file")


def test_calendar_site_needs_exactly_one_swath_key():
    d = _with("satellite.max_view_zenith", 20.0, SITE)
    with pytest.raises(SurveyError, match=r"give either swath_width \[km\] or max_view_zenith"):
        calendar_site_from_dict(d)

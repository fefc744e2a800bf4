"""Planning: when, in which direction and at what camera tilt to photograph
water without glint (drone surveys), and glint calendars of satellite
overpasses.

A plan is a glint estimate only, not a flight clearance: check airspace,
weather, visual line of sight and local regulations, and never look at the
sun or its reflection.
"""

from __future__ import annotations

from glint.workflows.planning.survey import (
    MAX_PLAN_DAYS,
    PLAN_CAUTION,
    Limits,
    Survey,
    SurveyError,
    WindSeries,
    load_survey,
    read_wind_file,
    survey_from_dict,
)
from glint.workflows.planning.windows import (
    SHARE_ERROR_BOUND,
    PoseGeometry,
    SurveyScan,
    Window,
    find_windows,
    photo_glint_shares,
    pose_geometry,
    scan_survey,
)

__all__ = [
    "MAX_PLAN_DAYS",
    "PLAN_CAUTION",
    "SHARE_ERROR_BOUND",
    "Limits",
    "Survey",
    "SurveyError",
    "WindSeries",
    "load_survey",
    "read_wind_file",
    "survey_from_dict",
    "PoseGeometry",
    "SurveyScan",
    "Window",
    "find_windows",
    "photo_glint_shares",
    "pose_geometry",
    "scan_survey",
]

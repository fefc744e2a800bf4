"""View geometry of sensors: where the sensor is, seen from each ground point.

Each module describes one kind of sensor and registers its scene-file
``kind`` string in :data:`SENSOR_KINDS`; :func:`sensor_from_table` builds a
sensor from a scene's ``[sensor]`` table.
"""

from __future__ import annotations

from glint.sensors.base import (
    SENSOR_KINDS,
    GroundPoints,
    Sensor,
    SensorKind,
    ViewAngles,
    angles_to_position,
    ecef_from_lonlat,
    enu_basis,
    lonlat_from_ecef,
    register_sensor_kind,
    sensor_from_table,
)
from glint.sensors.fixed_direction import FixedDirection
from glint.sensors.nadir_point import NadirPoint
from glint.sensors.push_broom import PushBroom
from glint.sensors.line_scanner import LineScanner
from glint.sensors.angle_rasters import AngleRasters
from glint.sensors.angle_grid import AngleGrid
from glint.sensors.frame_camera import CameraImage, FrameCamera, camera_image_geometry
from glint.sensors.fixed_camera import FixedCamera

__all__ = [
    "GroundPoints",
    "ViewAngles",
    "Sensor",
    "SensorKind",
    "SENSOR_KINDS",
    "register_sensor_kind",
    "sensor_from_table",
    "ecef_from_lonlat",
    "lonlat_from_ecef",
    "enu_basis",
    "angles_to_position",
    "FixedDirection",
    "NadirPoint",
    "PushBroom",
    "LineScanner",
    "AngleRasters",
    "AngleGrid",
    "FrameCamera",
    "FixedCamera",
    "CameraImage",
    "camera_image_geometry",
]

"""Sensor kind ``fixed-direction``: the same view direction at every pixel.

Useful for a distant sensor over a small scene, for "what if" maps, and for
tests. The azimuth is given against true north, or against the scene grid's
north and converted per pixel with the meridian convergence.
"""

from __future__ import annotations

from typing import Literal, cast

import numpy as np

from glint.validation import check_choice, check_number, wrap_azimuth
from glint.errors import SensorError
from glint.sensors.base import (
    GroundPoints,
    TableReader,
    ViewAngles,
    register_sensor_kind,
)

__all__ = ["FixedDirection", "AZIMUTH_REFERENCES"]

#: Allowed values of ``azimuth_reference``.
AzimuthReference = Literal["true-north", "grid"]
AZIMUTH_REFERENCES: tuple[AzimuthReference, ...] = ("true-north", "grid")


class FixedDirection:
    """Constant view zenith and azimuth.

    Parameters
    ----------
    view_zenith : float
        View zenith angle [°], in [0, 90).
    view_azimuth : float
        View azimuth, ground point -> sensor [°], in [0, 360).
    azimuth_reference : {"true-north", "grid"}, optional
        ``"grid"``: ``view_azimuth`` is measured from the scene grid's north
        and converted per point, ``true = (grid + gamma) % 360``.

    Raises
    ------
    SensorError
        For angles out of range or an unknown reference.

    Examples
    --------
    >>> s = FixedDirection(view_zenith=20.0, view_azimuth=100.0)
    >>> va = s.view_angles(GroundPoints.from_lonlat([1.0, 2.0], [50.0, 50.0]), None)
    >>> va.view_zenith.tolist(), va.view_azimuth.tolist()
    ([20.0, 20.0], [100.0, 100.0])
    """

    smooth = True
    #: The sensor follows the scene time (see :class:`~glint.sensors.base.Sensor`).
    time_key: str | None = None
    fixed_time: np.datetime64 | None = None

    def __init__(self, *, view_zenith: float, view_azimuth: float,
                 azimuth_reference: Literal["true-north", "grid"] = "true-north") -> None:
        self.view_zenith = check_number(view_zenith, "view_zenith", 0.0, 90.0, high_open=True,
                                        unit="deg", error=SensorError)
        self.view_azimuth = float(wrap_azimuth(check_number(view_azimuth, "view_azimuth", -360.0, 360.0, unit="deg", error=SensorError)))
        check_choice(azimuth_reference, "azimuth_reference", AZIMUTH_REFERENCES, error=SensorError)
        self.azimuth_reference = azimuth_reference

    def view_angles(self, points: GroundPoints, time: np.datetime64 | None) -> ViewAngles:
        """Constant angles at every point (NaN where ``points.lon`` is NaN)."""
        shape = np.shape(points.lon)
        nan = np.isnan(points.lon) | np.isnan(points.lat)
        vz = np.where(nan, np.nan, np.full(shape, self.view_zenith))
        az = np.full(shape, self.view_azimuth)
        if self.azimuth_reference == "grid":
            az = wrap_azimuth(az + np.asarray(points.convergence, float))
        return ViewAngles(vz, np.where(nan, np.nan, az), None)

    def __repr__(self) -> str:
        return (f"FixedDirection(view_zenith={self.view_zenith!r}, view_azimuth="
                f"{self.view_azimuth!r}, azimuth_reference={self.azimuth_reference!r})")


@register_sensor_kind(
    "fixed-direction",
    keys=("view_zenith", "view_azimuth", "azimuth_reference"),
    summary="the same view zenith and azimuth at every pixel",
)
def _build(r: TableReader) -> FixedDirection | None:
    vz = r.number("view_zenith", low=0.0, high=90.0, high_open=True, unit="deg")
    va = r.number("view_azimuth", low=0.0, high=360.0, high_open=True, unit="deg")
    ref = r.choice("azimuth_reference", AZIMUTH_REFERENCES, default="true-north")
    if vz is None or va is None or ref is None:
        return None
    return FixedDirection(view_zenith=vz, view_azimuth=va,
                          azimuth_reference=cast(AzimuthReference, ref))

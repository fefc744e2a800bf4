"""Position of the sun seen from points on or above the Earth.

The solar position algorithm (SPA) of Reda and Andreas (2004), vectorised
over times and observer positions. The work is split in two:

* :func:`time_terms` computes everything that depends on the time alone
  (Julian dates, the Earth's heliocentric position, nutation, obliquity,
  aberration, apparent sidereal time, the sun's geocentric right ascension
  and declination, the equation of time, the Earth-sun distance) once per
  distinct time;
* the observer part (hour angle, parallax, topocentric coordinates,
  refraction, zenith and azimuth) runs per point, in a fused compiled loop
  (numba) or, for reference, in plain numpy.

Times are UTC instants. Never look at the sun or at its reflection on water.
"""

from __future__ import annotations

import datetime as _dt
import warnings
from typing import Any, Literal, NamedTuple

import numba
import numpy as np
from numba import njit, prange

from glint._units import (
    ASTRONOMICAL_UNIT,
    SOLAR_RADIUS,
    as_float_array,
    broadcast_inputs,
    check_range,
)
from glint.errors import InputError, ValidityWarning

__all__ = [
    "SolarPosition",
    "TimeTerms",
    "solar_position",
    "time_terms",
    "to_utc_datetime64",
    "parse_time",
    "delta_t",
    "earth_sun_distance",
    "sun_angular_radius",
    "sun_solid_angle",
    "MIN_YEAR",
    "MAX_YEAR",
    "ATMOSPHERIC_REFRACTION_AT_HORIZON",
    "SUN_RADIUS_DEG_SPA",
    "DELTA_T_YEARS",
]

#: First and last year for which the SPA states its accuracy (Reda and
#: Andreas 2004, abstract: -2000 to 6000).
MIN_YEAR = -2000
MAX_YEAR = 6000
#: Atmospheric refraction at the horizon [°] used by the SPA's refraction
#: switch (Reda and Andreas 2004, section 3.14 with eq. 42; 0.5667° is the SPA
#: default).
ATMOSPHERIC_REFRACTION_AT_HORIZON = 0.5667
#: Sun's apparent radius [°] used by the SPA's refraction switch (Reda and
#: Andreas 2004, section 3.14).
SUN_RADIUS_DEG_SPA = 0.26667

#: Years covered by the Delta T expressions of Espenak and Meeus (2006).
DELTA_T_YEARS = (-1999, 3000)

_J2000_NS = np.datetime64("2000-01-01T12:00:00", "ns").astype(np.int64)
_NS_PER_DAY = 86_400_000_000_000
_J2000_JD = 2451545.0
#: Earth's equatorial radius [m] and polar/equatorial axis ratio used by the
#: SPA's parallax correction (Reda and Andreas 2004, eqs. 34-36).
_SPA_EARTH_RADIUS = 6378140.0
_SPA_AXIS_RATIO = 0.99664719

# ---------------------------------------------------------------------------
# Periodic terms. Reda and Andreas (2004), Table A4.2 (Earth periodic terms:
# heliocentric longitude L0..L5, latitude B0..B1, radius vector R0..R4; each
# row is (A, B, C) of A cos(B + C JME)) and Table A4.3 (periodic terms for the
# nutation in longitude and obliquity: multipliers Y0..Y4 of X0..X4 and the
# coefficients a, b, c, d). The terms go back to the VSOP87 theory
# (Bretagnon and Francou 1988) as abridged by Meeus (1998).
# ---------------------------------------------------------------------------
_L_TERMS = (
    (  # L0
        (175347046, 0.0, 0.0), (3341656, 4.6692568, 6283.07585),
        (34894, 4.6261, 12566.1517), (3497, 2.7441, 5753.3849),
        (3418, 2.8289, 3.5231), (3136, 3.6277, 77713.7715),
        (2676, 4.4181, 7860.4194), (2343, 6.1352, 3930.2097),
        (1324, 0.7425, 11506.7698), (1273, 2.0371, 529.691),
        (1199, 1.1096, 1577.3435), (990, 5.233, 5884.927),
        (902, 2.045, 26.298), (857, 3.508, 398.149), (780, 1.179, 5223.694),
        (753, 2.533, 5507.553), (505, 4.583, 18849.228), (492, 4.205, 775.523),
        (357, 2.92, 0.067), (317, 5.849, 11790.629), (284, 1.899, 796.298),
        (271, 0.315, 10977.079), (243, 0.345, 5486.778),
        (206, 4.806, 2544.314), (205, 1.869, 5573.143), (202, 2.458, 6069.777),
        (156, 0.833, 213.299), (132, 3.411, 2942.463), (126, 1.083, 20.775),
        (115, 0.645, 0.98), (103, 0.636, 4694.003), (102, 0.976, 15720.839),
        (102, 4.267, 7.114), (99, 6.21, 2146.17), (98, 0.68, 155.42),
        (86, 5.98, 161000.69), (85, 1.3, 6275.96), (85, 3.67, 71430.7),
        (80, 1.81, 17260.15), (79, 3.04, 12036.46), (75, 1.76, 5088.63),
        (74, 3.5, 3154.69), (74, 4.68, 801.82), (70, 0.83, 9437.76),
        (62, 3.98, 8827.39), (61, 1.82, 7084.9), (57, 2.78, 6286.6),
        (56, 4.39, 14143.5), (56, 3.47, 6279.55), (52, 0.19, 12139.55),
        (52, 1.33, 1748.02), (51, 0.28, 5856.48), (49, 0.49, 1194.45),
        (41, 5.37, 8429.24), (41, 2.4, 19651.05), (39, 6.17, 10447.39),
        (37, 6.04, 10213.29), (37, 2.57, 1059.38), (36, 1.71, 2352.87),
        (36, 1.78, 6812.77), (33, 0.59, 17789.85), (30, 0.44, 83996.85),
        (30, 2.74, 1349.87), (25, 3.16, 4690.48),
    ),
    (  # L1
        (628331966747, 0.0, 0.0), (206059, 2.678235, 6283.07585),
        (4303, 2.6351, 12566.1517), (425, 1.59, 3.523), (119, 5.796, 26.298),
        (109, 2.966, 1577.344), (93, 2.59, 18849.23), (72, 1.14, 529.69),
        (68, 1.87, 398.15), (67, 4.41, 5507.55), (59, 2.89, 5223.69),
        (56, 2.17, 155.42), (45, 0.4, 796.3), (36, 0.47, 775.52),
        (29, 2.65, 7.11), (21, 5.34, 0.98), (19, 1.85, 5486.78),
        (19, 4.97, 213.3), (17, 2.99, 6275.96), (16, 0.03, 2544.31),
        (16, 1.43, 2146.17), (15, 1.21, 10977.08), (12, 2.83, 1748.02),
        (12, 3.26, 5088.63), (12, 5.27, 1194.45), (12, 2.08, 4694),
        (11, 0.77, 553.57), (10, 1.3, 6286.6), (10, 4.24, 1349.87),
        (9, 2.7, 242.73), (9, 5.64, 951.72), (8, 5.3, 2352.87),
        (6, 2.65, 9437.76), (6, 4.67, 4690.48),
    ),
    (  # L2
        (52919, 0.0, 0.0), (8720, 1.0721, 6283.0758), (309, 0.867, 12566.152),
        (27, 0.05, 3.52), (16, 5.19, 26.3), (16, 3.68, 155.42),
        (10, 0.76, 18849.23), (9, 2.06, 77713.77), (7, 0.83, 775.52),
        (5, 4.66, 1577.34), (4, 1.03, 7.11), (4, 3.44, 5573.14),
        (3, 5.14, 796.3), (3, 6.05, 5507.55), (3, 1.19, 242.73),
        (3, 6.12, 529.69), (3, 0.31, 398.15), (3, 2.28, 553.57),
        (2, 4.38, 5223.69), (2, 3.75, 0.98),
    ),
    (  # L3
        (289, 5.844, 6283.076), (35, 0.0, 0.0), (17, 5.49, 12566.15),
        (3, 5.2, 155.42), (1, 4.72, 3.52), (1, 5.3, 18849.23),
        (1, 5.97, 242.73),
    ),
    (  # L4
        (114, 3.142, 0.0), (8, 4.13, 6283.08), (1, 3.84, 12566.15),
    ),
    (  # L5
        (1, 3.14, 0.0),
    ),
)
_B_TERMS = (
    (  # B0
        (280, 3.199, 84334.662), (102, 5.422, 5507.553), (80, 3.88, 5223.69),
        (44, 3.7, 2352.87), (32, 4, 1577.34),
    ),
    (  # B1
        (9, 3.9, 5507.55), (6, 1.73, 5223.69),
    ),
)
_R_TERMS = (
    (  # R0
        (100013989, 0.0, 0.0), (1670700, 3.0984635, 6283.07585),
        (13956, 3.05525, 12566.1517), (3084, 5.1985, 77713.7715),
        (1628, 1.1739, 5753.3849), (1576, 2.8469, 7860.4194),
        (925, 5.453, 11506.77), (542, 4.564, 3930.21), (472, 3.661, 5884.927),
        (346, 0.964, 5507.553), (329, 5.9, 5223.694), (307, 0.299, 5573.143),
        (243, 4.273, 11790.629), (212, 5.847, 1577.344),
        (186, 5.022, 10977.079), (175, 3.012, 18849.228),
        (110, 5.055, 5486.778), (98, 0.89, 6069.78), (86, 5.69, 15720.84),
        (86, 1.27, 161000.69), (65, 0.27, 17260.15), (63, 0.92, 529.69),
        (57, 2.01, 83996.85), (56, 5.24, 71430.7), (49, 3.25, 2544.31),
        (47, 2.58, 775.52), (45, 5.54, 9437.76), (43, 6.01, 6275.96),
        (39, 5.36, 4694), (38, 2.39, 8827.39), (37, 0.83, 19651.05),
        (37, 4.9, 12139.55), (36, 1.67, 12036.46), (35, 1.84, 2942.46),
        (33, 0.24, 7084.9), (32, 0.18, 5088.63), (32, 1.78, 398.15),
        (28, 1.21, 6286.6), (28, 1.9, 6279.55), (26, 4.59, 10447.39),
    ),
    (  # R1
        (103019, 1.10749, 6283.07585), (1721, 1.0644, 12566.1517),
        (702, 3.142, 0.0), (32, 1.02, 18849.23), (31, 2.84, 5507.55),
        (25, 1.32, 5223.69), (18, 1.42, 1577.34), (10, 5.91, 10977.08),
        (9, 1.42, 6275.96), (9, 0.27, 5486.78),
    ),
    (  # R2
        (4359, 5.7846, 6283.0758), (124, 5.579, 12566.152), (12, 3.14, 0.0),
        (9, 3.63, 77713.77), (6, 1.87, 5573.14), (3, 5.47, 18849.23),
    ),
    (  # R3
        (145, 4.273, 6283.076), (7, 3.92, 12566.15),
    ),
    (  # R4
        (4, 2.56, 6283.08),
    ),
)
# Nutation rows: (Y0, Y1, Y2, Y3, Y4, a, b, c, d).
_NUTATION_TERMS = (
    (0, 0, 0, 0, 1, -171996, -174.2, 92025, 8.9),
    (-2, 0, 0, 2, 2, -13187, -1.6, 5736, -3.1),
    (0, 0, 0, 2, 2, -2274, -0.2, 977, -0.5),
    (0, 0, 0, 0, 2, 2062, 0.2, -895, 0.5),
    (0, 1, 0, 0, 0, 1426, -3.4, 54, -0.1), (0, 0, 1, 0, 0, 712, 0.1, -7, 0.0),
    (-2, 1, 0, 2, 2, -517, 1.2, 224, -0.6),
    (0, 0, 0, 2, 1, -386, -0.4, 200, 0.0),
    (0, 0, 1, 2, 2, -301, 0.0, 129, -0.1),
    (-2, -1, 0, 2, 2, 217, -0.5, -95, 0.3),
    (-2, 0, 1, 0, 0, -158, 0.0, 0.0, 0.0),
    (-2, 0, 0, 2, 1, 129, 0.1, -70, 0.0), (0, 0, -1, 2, 2, 123, 0.0, -53, 0.0),
    (2, 0, 0, 0, 0, 63, 0.0, 0.0, 0.0), (0, 0, 1, 0, 1, 63, 0.1, -33, 0.0),
    (2, 0, -1, 2, 2, -59, 0.0, 26, 0.0), (0, 0, -1, 0, 1, -58, -0.1, 32, 0.0),
    (0, 0, 1, 2, 1, -51, 0.0, 27, 0.0), (-2, 0, 2, 0, 0, 48, 0.0, 0.0, 0.0),
    (0, 0, -2, 2, 1, 46, 0.0, -24, 0.0), (2, 0, 0, 2, 2, -38, 0.0, 16, 0.0),
    (0, 0, 2, 2, 2, -31, 0.0, 13, 0.0), (0, 0, 2, 0, 0, 29, 0.0, 0.0, 0.0),
    (-2, 0, 1, 2, 2, 29, 0.0, -12, 0.0), (0, 0, 0, 2, 0, 26, 0.0, 0.0, 0.0),
    (-2, 0, 0, 2, 0, -22, 0.0, 0.0, 0.0), (0, 0, -1, 2, 1, 21, 0.0, -10, 0.0),
    (0, 2, 0, 0, 0, 17, -0.1, 0.0, 0.0), (2, 0, -1, 0, 1, 16, 0.0, -8, 0.0),
    (-2, 2, 0, 2, 2, -16, 0.1, 7, 0.0), (0, 1, 0, 0, 1, -15, 0.0, 9, 0.0),
    (-2, 0, 1, 0, 1, -13, 0.0, 7, 0.0), (0, -1, 0, 0, 1, -12, 0.0, 6, 0.0),
    (0, 0, 2, -2, 0, 11, 0.0, 0.0, 0.0), (2, 0, -1, 2, 1, -10, 0.0, 5, 0.0),
    (2, 0, 1, 2, 2, -8, 0.0, 3, 0.0), (0, 1, 0, 2, 2, 7, 0.0, -3, 0.0),
    (-2, 1, 1, 0, 0, -7, 0.0, 0.0, 0.0), (0, -1, 0, 2, 2, -7, 0.0, 3, 0.0),
    (2, 0, 0, 2, 1, -7, 0.0, 3, 0.0), (2, 0, 1, 0, 0, 6, 0.0, 0.0, 0.0),
    (-2, 0, 2, 2, 2, 6, 0.0, -3, 0.0), (-2, 0, 1, 2, 1, 6, 0.0, -3, 0.0),
    (2, 0, -2, 0, 1, -6, 0.0, 3, 0.0), (2, 0, 0, 0, 1, -6, 0.0, 3, 0.0),
    (0, -1, 1, 0, 0, 5, 0.0, 0.0, 0.0), (-2, -1, 0, 2, 1, -5, 0.0, 3, 0.0),
    (-2, 0, 0, 0, 1, -5, 0.0, 3, 0.0), (0, 0, 2, 2, 1, -5, 0.0, 3, 0.0),
    (-2, 0, 2, 0, 1, 4, 0.0, 0.0, 0.0), (-2, 1, 0, 2, 1, 4, 0.0, 0.0, 0.0),
    (0, 0, 1, -2, 0, 4, 0.0, 0.0, 0.0), (-1, 0, 1, 0, 0, -4, 0.0, 0.0, 0.0),
    (-2, 1, 0, 0, 0, -4, 0.0, 0.0, 0.0), (1, 0, 0, 0, 0, -4, 0.0, 0.0, 0.0),
    (0, 0, 1, 2, 0, 3, 0.0, 0.0, 0.0), (0, 0, -2, 2, 2, -3, 0.0, 0.0, 0.0),
    (-1, -1, 1, 0, 0, -3, 0.0, 0.0, 0.0), (0, 1, 1, 0, 0, -3, 0.0, 0.0, 0.0),
    (0, -1, 1, 2, 2, -3, 0.0, 0.0, 0.0), (2, -1, -1, 2, 2, -3, 0.0, 0.0, 0.0),
    (0, 0, 3, 2, 2, -3, 0.0, 0.0, 0.0), (2, -1, 0, 2, 2, -3, 0.0, 0.0, 0.0),
)

_L_ARRAYS = tuple(np.array(t, dtype=np.float64) for t in _L_TERMS)
_B_ARRAYS = tuple(np.array(t, dtype=np.float64) for t in _B_TERMS)
_R_ARRAYS = tuple(np.array(t, dtype=np.float64) for t in _R_TERMS)
_NUT = np.array(_NUTATION_TERMS, dtype=np.float64)
_NUT_Y = _NUT[:, :5]
_NUT_ABCD = _NUT[:, 5:]


class SolarPosition(NamedTuple):
    """Sun position seen by an observer; every field is a numpy array.

    Attributes
    ----------
    zenith : ndarray
        Topocentric zenith angle [°], refraction included unless switched off.
    azimuth : ndarray
        Topocentric azimuth [°], from the observer to the sun, clockwise from
        true north, in [0, 360).
    elevation : ndarray
        Topocentric elevation angle [°] above the horizon, refraction
        included unless switched off (``90 - zenith``).
    declination : ndarray
        Topocentric declination [°].
    right_ascension : ndarray
        Topocentric right ascension [°], in [0, 360).
    hour_angle : ndarray
        Topocentric local hour angle [°], in [-180, 180); negative before
        and positive after the sun's transit.
    equation_of_time : ndarray
        Equation of time [min]: apparent minus mean solar time.
    earth_sun_distance : ndarray
        Earth-sun distance [AU].
    """

    zenith: np.ndarray
    azimuth: np.ndarray
    elevation: np.ndarray
    declination: np.ndarray
    right_ascension: np.ndarray
    hour_angle: np.ndarray
    equation_of_time: np.ndarray
    earth_sun_distance: np.ndarray


class TimeTerms(NamedTuple):
    """Time-only quantities of the SPA (arrays shaped like the times).

    Angles in degrees. ``jd``/``jde`` are Julian (ephemeris) days,
    ``jce``/``jme`` Julian ephemeris centuries/millennia since J2000.0.
    """

    jd: np.ndarray
    jde: np.ndarray
    jce: np.ndarray
    jme: np.ndarray
    heliocentric_longitude: np.ndarray  # L
    heliocentric_latitude: np.ndarray  # B
    earth_sun_distance: np.ndarray  # R [AU]
    geocentric_longitude: np.ndarray  # Theta
    geocentric_latitude: np.ndarray  # beta
    nutation_longitude: np.ndarray  # delta psi
    nutation_obliquity: np.ndarray  # delta epsilon
    true_obliquity: np.ndarray  # epsilon
    aberration: np.ndarray  # delta tau
    apparent_sun_longitude: np.ndarray  # lambda
    apparent_sidereal_time: np.ndarray  # nu
    right_ascension: np.ndarray  # alpha (geocentric)
    declination: np.ndarray  # delta (geocentric)
    equation_of_time: np.ndarray  # E [min]
    horizontal_parallax: np.ndarray  # xi
    delta_t: np.ndarray  # [s]


# ---------------------------------------------------------------------------
# Times
# ---------------------------------------------------------------------------

_NAIVE_MSG = (
    "naive datetime {value!r} is not allowed: times must carry a time zone. "
    "Give tzinfo (for example tzinfo=datetime.timezone.utc) or pass a "
    "numpy.datetime64, which glint takes as UTC"
)


def _is_pandas(obj: Any) -> bool:
    return type(obj).__module__.split(".")[0] == "pandas"


def _pandas_to_datetime64(obj: Any) -> np.ndarray:
    tz = getattr(obj, "tz", None)
    if tz is None and hasattr(obj, "dt"):  # Series
        tz = getattr(obj.dt, "tz", None)
        if tz is not None:
            obj = obj.dt.tz_convert("UTC").dt.tz_localize(None)
            return _finest(np.asarray(obj.to_numpy()))
    if not hasattr(obj, "tz_convert"):
        raise InputError(
            f"cannot read time {obj!r}: expected a pandas Timestamp, "
            "DatetimeIndex or datetime Series"
        )
    if tz is None:
        raise InputError(
            f"naive pandas time {obj!r} is not allowed: times must carry a "
            "time zone. Localise it (for example .tz_localize('UTC'), or "
            ".dt.tz_localize('UTC') for a Series) or pass "
            "a numpy.datetime64, which glint takes as UTC"
        )
    utc = obj.tz_convert("UTC").tz_localize(None)
    return _finest(np.asarray(utc.to_numpy()))


def _datetime_to_datetime64(value: _dt.datetime) -> np.datetime64:
    if value.tzinfo is None or value.tzinfo.utcoffset(value) is None:
        raise InputError(_NAIVE_MSG.format(value=value))
    utc = value.astimezone(_dt.timezone.utc).replace(tzinfo=None)
    return np.datetime64(utc, "us")


def _finest(arr: np.ndarray) -> np.ndarray:
    """Return datetime64[ns] if every instant fits, else datetime64[us]."""
    unit = np.datetime_data(arr.dtype)[0]
    if unit == "ns":
        return arr
    as_us = arr.astype("datetime64[us]")
    v = as_us.astype(np.int64)
    ok = v != np.iinfo(np.int64).min  # NaT
    limit = np.iinfo(np.int64).max // 1000
    if np.all(np.abs(v[ok]) < limit):
        return arr.astype("datetime64[ns]")
    return as_us


def parse_time(value: Any, key: str | None = "time") -> np.datetime64:
    """Parse one user time into a UTC ``datetime64[ns]``.

    Parameters
    ----------
    value : datetime.datetime, str or numpy.datetime64
        A timezone-aware datetime (as TOML offset date-times load), an ISO
        8601 text with ``Z`` or an offset such as ``+01:00``, or a
        ``numpy.datetime64`` (taken as UTC).
    key : str or None
        Name put in front of error messages (``scene.time``); None for none.

    Returns
    -------
    numpy.datetime64
        The time in UTC with nanosecond precision.

    Raises
    ------
    InputError
        If the value has no time zone, no time of day, cannot be read, or
        lies outside 1678-01-01 .. 2261-12-31 (UTC), the whole years that
        ``datetime64[ns]`` holds.

    Examples
    --------
    >>> parse_time("2026-06-14T09:42:00+01:00")
    np.datetime64('2026-06-14T08:42:00.000000000')
    """
    text = value
    pre = f"{key}: " if key else ""
    if isinstance(value, str):
        s = value.strip()
        try:
            value = _dt.datetime.fromisoformat(s)
        except ValueError:
            raise InputError(
                f"{pre}{text!r} is not an ISO 8601 date-time; write e.g. "
                "2026-06-14T09:42:00Z or 2026-06-14T10:42:00+01:00") from None
        if "T" not in s.upper() and " " not in s:
            raise InputError(f"{pre}{text!r} has no time of day; write e.g. {s}T09:42:00Z")
    if isinstance(value, _dt.datetime):
        if value.tzinfo is None or value.tzinfo.utcoffset(value) is None:
            shown = value.isoformat() if not isinstance(text, str) else text
            raise InputError(f"{pre}{shown} has no time zone; add Z or an offset like +01:00")
    elif isinstance(value, _dt.date):
        raise InputError(f"{pre}{value.isoformat()} has no time of day and no time zone; "
                         f"write e.g. {value.isoformat()}T09:42:00Z")
    elif isinstance(value, _dt.time):
        raise InputError(f"{pre}{value.isoformat()} has no date and no time zone; "
                         "write e.g. 2026-06-14T09:42:00Z")
    elif not isinstance(value, np.datetime64):
        raise InputError(f"{pre}expected a date-time with a time zone, got "
                         f"{type(value).__name__} {value!r}")
    try:
        out = np.asarray(to_utc_datetime64(value))
    except InputError as exc:
        raise InputError(f"{pre}{exc}") from None
    if out.size != 1 or np.isnat(out.reshape(-1)[0]):
        raise InputError(f"{pre}{text!r} is not a single valid time")
    one = out.reshape(-1)[0].astype("datetime64[us]")
    # Whole years that datetime64[ns], in which the pipeline stores times,
    # can hold (it ends at 1677-09-21 and 2262-04-11).
    if not np.datetime64("1678-01-01", "us") <= one < np.datetime64("2262-01-01", "us"):
        if isinstance(text, str):
            shown = repr(text)
        elif isinstance(text, _dt.datetime):
            shown = text.isoformat()
        else:
            shown = f"{np.datetime_as_string(one, unit='s')}Z"
        raise InputError(
            f"{pre}{shown} is outside the supported time range: give an instant "
            "from 1678-01-01T00:00:00Z to 2261-12-31T23:59:59Z (times are stored as "
            "numpy datetime64[ns])"
        )
    return one.astype("datetime64[ns]")


def to_utc_datetime64(time: Any) -> np.ndarray:
    """Convert user times to a numpy array of UTC ``datetime64``.

    Parameters
    ----------
    time : datetime64, datetime, pandas Timestamp/DatetimeIndex, or array-like
        A ``numpy.datetime64`` (scalar or array, taken as UTC), a
        timezone-aware ``datetime.datetime`` (any zone), a timezone-aware
        pandas ``Timestamp``/``DatetimeIndex``/``Series``, a list or
        object array of those, or any array (xarray, say) of
        ``datetime64``. ``NaT`` is kept.

    Returns
    -------
    ndarray of datetime64[ns]
        UTC instants, shaped like the input. Instants outside
        1678-2262, which nanoseconds cannot hold, come back as
        ``datetime64[us]`` (never wrapped into other dates).

    Raises
    ------
    InputError
        For a naive ``datetime`` or naive pandas time (no time zone), a
        ``datetime.date`` without a time, strings, numbers, anything else
        that is not a time, or an instant that not even ``datetime64[us]``
        can hold.

    Notes
    -----
    This is the one parser of user times in glint. pandas is never imported
    here: its objects are recognised by their module name.

    Examples
    --------
    >>> import datetime
    >>> t = datetime.datetime(2024, 6, 1, 14, 0,
    ...                       tzinfo=datetime.timezone(datetime.timedelta(hours=2)))
    >>> to_utc_datetime64(t)
    array('2024-06-01T12:00:00.000000000', dtype='datetime64[ns]')
    """
    if _is_pandas(time):
        return _pandas_to_datetime64(time)
    if isinstance(time, _dt.datetime):
        return _finest(np.asarray(_datetime_to_datetime64(time)))
    if isinstance(time, np.datetime64) or (
        isinstance(time, np.ndarray) and time.dtype.kind == "M"
    ):
        arr = np.asarray(time)
        unit = np.datetime_data(arr.dtype)[0]
        if unit == "generic":  # only NaT has no unit
            return arr.astype("datetime64[ns]")
        if unit not in ("ns", "us", "ps", "fs", "as"):
            # Coarse units (s, D, Y, ...) reach further than microseconds;
            # numpy would wrap such instants into other dates.
            back = arr.astype("datetime64[us]").astype(arr.dtype)
            wrapped = ~np.isnat(arr) & (back != arr)
            if np.any(wrapped):
                raise InputError(
                    f"time {arr[wrapped].reshape(-1)[0]!r} is too far from 1970 to be "
                    "held as datetime64[us]; give instants within about 290,000 years "
                    "of 1970 (and within 1678-2261 for maps and scene files)"
                )
        return _finest(arr)
    if getattr(getattr(time, "dtype", None), "kind", None) == "M":
        # Other array types holding datetime64 (an xarray.DataArray, say).
        return to_utc_datetime64(np.asarray(time))
    if isinstance(time, (list, tuple, np.ndarray)):
        arr = np.asarray(time, dtype=object) if not isinstance(time, np.ndarray) else time
        if arr.dtype.kind == "M":
            return _finest(arr)
        if arr.dtype != object:
            raise InputError(
                f"time must be datetime64, timezone-aware datetime or pandas "
                f"timestamps; got an array of dtype {arr.dtype} ({time!r})"
            )
        flat = arr.ravel()
        out = np.empty(flat.shape, dtype="datetime64[us]")
        for i, item in enumerate(flat):
            out[i] = to_utc_datetime64(item).astype("datetime64[us]")
        return _finest(out.reshape(arr.shape))
    if isinstance(time, _dt.date):
        raise InputError(
            f"time {time!r} is a date without a time of day: give a "
            "timezone-aware datetime.datetime or a numpy.datetime64"
        )
    raise InputError(
        f"time must be numpy.datetime64, a timezone-aware datetime.datetime or "
        f"a pandas Timestamp/DatetimeIndex (or an array of those); got {time!r}"
    )


def _days_since_j2000(t: np.ndarray) -> np.ndarray:
    """Days since J2000.0 (2000-01-01T12:00 UT) as float; NaT -> NaN."""
    unit = np.datetime_data(t.dtype)[0]
    if unit != "ns":
        t = t.astype("datetime64[us]")
        v = t.astype(np.int64)
        nat = v == np.iinfo(np.int64).min
        ref = _J2000_NS // 1000
        per_day = _NS_PER_DAY // 1000
    else:
        v = t.astype(np.int64)
        nat = v == np.iinfo(np.int64).min
        ref = _J2000_NS
        per_day = _NS_PER_DAY
    d = v - ref
    whole = np.floor_divide(d, per_day)
    days = whole.astype(np.float64) + (d - whole * per_day).astype(np.float64) / per_day
    return np.where(nat, np.nan, days)


def _year_month(t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Calendar year and month (proleptic Gregorian) as floats; NaT -> NaN."""
    nat = np.isnat(t)
    years = t.astype("datetime64[Y]").astype(np.int64).astype(np.float64) + 1970.0
    months = t.astype("datetime64[M]").astype(np.int64) % 12 + 1.0
    return np.where(nat, np.nan, years), np.where(nat, np.nan, months)


def _check_years(t: np.ndarray) -> None:
    years, _ = _year_month(t)
    bad = np.isfinite(years) & ((years < MIN_YEAR) | (years > MAX_YEAR))
    if np.any(bad):
        first = np.asarray(t).ravel()[np.asarray(bad).ravel()][0]
        raise InputError(
            f"time {first!r} lies outside the years {MIN_YEAR}..{MAX_YEAR} "
            "for which the solar position algorithm is valid"
        )


def _delta_t_years(year: np.ndarray, month: np.ndarray) -> np.ndarray:
    """Espenak and Meeus (2006) polynomials; see :func:`delta_t`."""
    outside = (year < DELTA_T_YEARS[0]) | (year > DELTA_T_YEARS[1])
    if np.any(outside):
        first = np.asarray(year)[outside].flat[0]
        warnings.warn(
            f"Delta T for the year {first:.0f} is extrapolated: the Espenak-Meeus "
            f"expressions cover {DELTA_T_YEARS[0]}..{DELTA_T_YEARS[1]}; pass "
            "delta_t explicitly for a better value",
            ValidityWarning, stacklevel=4)
    y = year + (month - 0.5) / 12.0
    # Each piece: (first year, end year, formula). The calendar year picks
    # the piece, y = decimal year enters the formula.
    u = (y - 1820.0) / 100.0
    out = np.full(np.shape(y), np.nan)
    pieces = [
        (-np.inf, -500, lambda: -20.0 + 32.0 * u**2),
        (-500, 500, lambda: np.polynomial.polynomial.polyval(
            y / 100.0, [10583.6, -1014.41, 33.78311, -5.952053, -0.1798452,
                        0.022174192, 0.0090316521])),
        (500, 1600, lambda: np.polynomial.polynomial.polyval(
            (y - 1000.0) / 100.0, [1574.2, -556.01, 71.23472, 0.319781,
                                   -0.8503463, -0.005050998, 0.0083572073])),
        (1600, 1700, lambda: np.polynomial.polynomial.polyval(
            y - 1600.0, [120.0, -0.9808, -0.01532, 1.0 / 7129.0])),
        (1700, 1800, lambda: np.polynomial.polynomial.polyval(
            y - 1700.0, [8.83, 0.1603, -0.0059285, 0.00013336, -1.0 / 1174000.0])),
        (1800, 1860, lambda: np.polynomial.polynomial.polyval(
            y - 1800.0, [13.72, -0.332447, 0.0068612, 0.0041116, -0.00037436,
                         0.0000121272, -0.0000001699, 0.000000000875])),
        (1860, 1900, lambda: np.polynomial.polynomial.polyval(
            y - 1860.0, [7.62, 0.5737, -0.251754, 0.01680668, -0.0004473624,
                         1.0 / 233174.0])),
        (1900, 1920, lambda: np.polynomial.polynomial.polyval(
            y - 1900.0, [-2.79, 1.494119, -0.0598939, 0.0061966, -0.000197])),
        (1920, 1941, lambda: np.polynomial.polynomial.polyval(
            y - 1920.0, [21.20, 0.84493, -0.076100, 0.0020936])),
        (1941, 1961, lambda: np.polynomial.polynomial.polyval(
            y - 1950.0, [29.07, 0.407, -1.0 / 233.0, 1.0 / 2547.0])),
        (1961, 1986, lambda: np.polynomial.polynomial.polyval(
            y - 1975.0, [45.45, 1.067, -1.0 / 260.0, -1.0 / 718.0])),
        (1986, 2005, lambda: np.polynomial.polynomial.polyval(
            y - 2000.0, [63.86, 0.3345, -0.060374, 0.0017275, 0.000651814,
                         0.00002373599])),
        (2005, 2050, lambda: np.polynomial.polynomial.polyval(
            y - 2000.0, [62.92, 0.32217, 0.005589])),
        (2050, 2150, lambda: -20.0 + 32.0 * u**2 - 0.5628 * (2150.0 - y)),
        (2150, np.inf, lambda: -20.0 + 32.0 * u**2),
    ]
    with np.errstate(invalid="ignore", over="ignore"):
        for lo, hi, formula in pieces:
            sel = (year >= lo) & (year < hi)
            if np.any(sel):
                out = np.where(sel, formula(), out)
    return out


def delta_t(time: Any) -> np.ndarray:
    """Difference TT - UT1 (Delta T) [s] from the Espenak-Meeus polynomials.

    Parameters
    ----------
    time : datetime64, aware datetime, pandas time, or array of those
        UTC instants (see :func:`to_utc_datetime64`).

    Returns
    -------
    ndarray
        Delta T [s], shaped like ``time``; NaN for NaT.

    Raises
    ------
    InputError
        For times that :func:`to_utc_datetime64` rejects.

    Warns
    -----
    ValidityWarning
        For years outside -1999..3000, where the expressions are a rough
        extrapolation.

    Notes
    -----
    With the decimal year ``y = year + (month - 0.5) / 12``, Delta T is a
    piecewise polynomial in ``y`` (Espenak and Meeus 2006): e.g.
    for 2005-2050 ``62.92 + 0.32217 t + 0.005589 t**2`` with
    ``t = y - 2000``; for 2050-2150 ``-20 + 32 u**2 - 0.5628 (2150 - y)``
    with ``u = (y - 1820) / 100``; before -500 and after 2150 the long-term
    parabola ``-20 + 32 u**2``. The calendar year selects the piece. The
    polynomials are fitted to observations up to 2005 and are an
    extrapolation after that and drift from the measured Delta T by a few
    seconds in the 2020s. One second of error in Delta T turns the sun by
    about 0.004° in hour angle, so give ``delta_t`` explicitly to
    :func:`solar_position` for the best accuracy. Outside -1999..3000 the
    expressions are only rough. The coefficients were written down from
    the published expressions as remembered and cross-checked against an
    independent implementation (pvlib) for 1900-2100.

    References
    ----------
    Espenak, F. and Meeus, J. (2006) Five Millennium Canon of Solar Eclipses:
    -1999 to +3000. NASA Technical Publication NASA/TP-2006-214141.

    Examples
    --------
    >>> import numpy as np
    >>> float(np.round(delta_t(np.datetime64("2020-06-01")), 2))
    71.85
    """
    t = to_utc_datetime64(time)
    year, month = _year_month(t)
    return _delta_t_years(year, month)


# ---------------------------------------------------------------------------
# Time-only terms (Reda and Andreas 2004, sections 3.1-3.8 and A.1)
# ---------------------------------------------------------------------------


def _earth_series(arrays: tuple[np.ndarray, ...], jme: np.ndarray) -> np.ndarray:
    """Sum_i (sum_j A cos(B + C JME)) JME**i / 1e8 (SPA eqs. 9-11) [rad]."""
    total = np.zeros_like(jme)
    power = np.ones_like(jme)
    for terms in arrays:
        a, b, c = terms[:, 0], terms[:, 1], terms[:, 2]
        s = np.sum(a * np.cos(b + c * jme[..., None]), axis=-1)
        total += s * power
        power = power * jme
    return total / 1e8


def _nutation(jce: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Nutation in longitude and obliquity [°] (SPA eqs. 15-23)."""
    x = np.stack(
        [
            297.85036 + 445267.111480 * jce - 0.0019142 * jce**2 + jce**3 / 189474.0,
            357.52772 + 35999.050340 * jce - 0.0001603 * jce**2 - jce**3 / 300000.0,
            134.96298 + 477198.867398 * jce + 0.0086972 * jce**2 + jce**3 / 56250.0,
            93.27191 + 483202.017538 * jce - 0.0036825 * jce**2 + jce**3 / 327270.0,
            125.04452 - 1934.136261 * jce + 0.0020708 * jce**2 + jce**3 / 450000.0,
        ],
        axis=-1,
    )
    arg = np.radians(x @ _NUT_Y.T)  # (..., 63)
    a, b, c, d = _NUT_ABCD.T
    jc = jce[..., None]
    dpsi = np.sum((a + b * jc) * np.sin(arg), axis=-1) / 36_000_000.0
    deps = np.sum((c + d * jc) * np.cos(arg), axis=-1) / 36_000_000.0
    return dpsi, deps


def _mean_obliquity_arcsec(jme: np.ndarray) -> np.ndarray:
    """Mean obliquity of the ecliptic [arcsec] (SPA eq. 24, Laskar 1986)."""
    u = jme / 10.0
    return np.polynomial.polynomial.polyval(
        u, [84381.448, -4680.93, -1.55, 1999.25, -51.38, -249.67, -39.05,
            7.12, 27.87, 5.79, 2.45])


_TIME_BLOCK = 16384  # distinct times per pass: bounds the (times x terms) temporaries


def _time_terms_flat(days: np.ndarray, dt: np.ndarray) -> TimeTerms:
    """All SPA time-only terms for 1-D arrays of days since J2000.0 (UT)
    and Delta T [s], in blocks of distinct times."""
    days = np.asarray(days, dtype=np.float64)
    dt = np.broadcast_to(np.asarray(dt, dtype=np.float64), days.shape)
    if days.size <= _TIME_BLOCK:
        return _time_terms_block(days, dt)
    parts = [_time_terms_block(days[i:i + _TIME_BLOCK], dt[i:i + _TIME_BLOCK])
             for i in range(0, days.size, _TIME_BLOCK)]
    return TimeTerms(*(np.concatenate(f) for f in zip(*parts)))


def _time_terms_block(days: np.ndarray, dt: np.ndarray) -> TimeTerms:
    """SPA eqs. 4-33 and A1-A2 for one block of distinct times."""
    days = np.asarray(days, dtype=np.float64)
    dt = np.broadcast_to(np.asarray(dt, dtype=np.float64), days.shape)
    jd = _J2000_JD + days  # eq. 4
    days_e = days + dt / 86400.0  # eq. 5
    jde = _J2000_JD + days_e
    jc = days / 36525.0  # eq. 6
    jce = days_e / 36525.0  # eq. 7
    jme = jce / 10.0  # eq. 8
    with np.errstate(invalid="ignore"):
        l_deg = np.degrees(_earth_series(_L_ARRAYS, jme)) % 360.0  # eqs. 9-12
        b_deg = np.degrees(_earth_series(_B_ARRAYS, jme))  # as eqs. 9-12
        r_au = _earth_series(_R_ARRAYS, jme)  # as eqs. 9-11
        theta = (l_deg + 180.0) % 360.0  # eq. 13
        beta = -b_deg  # eq. 14
        dpsi, deps = _nutation(jce)
        eps = _mean_obliquity_arcsec(jme) / 3600.0 + deps  # eqs. 24-25
        dtau = -20.4898 / (3600.0 * r_au)  # eq. 26
        lam = theta + dpsi + dtau  # eq. 27
        nu0 = (
            280.46061837 + 360.98564736629 * days + 0.000387933 * jc**2
            - jc**3 / 38710000.0
        ) % 360.0  # eq. 28
        eps_r = np.radians(eps)
        nu = nu0 + dpsi * np.cos(eps_r)  # eq. 29
        lam_r, beta_r = np.radians(lam), np.radians(beta)
        alpha = np.degrees(np.arctan2(
            np.sin(lam_r) * np.cos(eps_r) - np.tan(beta_r) * np.sin(eps_r),
            np.cos(lam_r))) % 360.0  # eq. 30
        delta = np.degrees(np.arcsin(np.clip(
            np.sin(beta_r) * np.cos(eps_r)
            + np.cos(beta_r) * np.sin(eps_r) * np.sin(lam_r), -1.0, 1.0)))  # eq. 31
        xi = 8.794 / (3600.0 * r_au)  # eq. 33
        # Equation of time (SPA section A.1, eqs. A1-A2).
        m = np.polynomial.polynomial.polyval(
            jme, [280.4664567, 360007.6982779, 0.03032028, 1.0 / 49931.0,
                  -1.0 / 15300.0, -1.0 / 2000000.0]) % 360.0
        eot = 4.0 * (m - 0.0057183 - alpha + dpsi * np.cos(eps_r))
        eot = np.where(eot > 20.0, eot - 1440.0, eot)
        eot = np.where(eot < -20.0, eot + 1440.0, eot)
    return TimeTerms(
        jd=jd, jde=jde, jce=jce, jme=jme, heliocentric_longitude=l_deg,
        heliocentric_latitude=b_deg, earth_sun_distance=r_au,
        geocentric_longitude=theta, geocentric_latitude=beta,
        nutation_longitude=dpsi, nutation_obliquity=deps, true_obliquity=eps,
        aberration=dtau, apparent_sun_longitude=lam, apparent_sidereal_time=nu,
        right_ascension=alpha, declination=delta, equation_of_time=eot,
        horizontal_parallax=xi, delta_t=dt.copy(),
    )


def _unique_times(
    t: np.ndarray, dt: Any
) -> tuple[TimeTerms, np.ndarray]:
    """Time terms of the distinct (time, Delta T) pairs and the index that
    maps each element of ``t`` (shape kept) onto them."""
    flat = t.ravel()
    if dt is None:
        uniq, inverse = np.unique(flat, return_inverse=True)
        year, month = _year_month(uniq)
        dt_u = _delta_t_years(year, month)
    else:
        dt_arr = as_float_array(dt, "delta_t")
        try:
            dt_b = np.broadcast_to(dt_arr, t.shape).ravel()
        except ValueError as exc:
            raise InputError(
                f"delta_t of shape {dt_arr.shape} does not broadcast to the "
                f"shape of time {t.shape}"
            ) from exc
        if dt_arr.ndim == 0:
            uniq, inverse = np.unique(flat, return_inverse=True)
            dt_u = np.full(uniq.shape, float(dt_arr))
        else:
            keys = np.stack([flat.view(np.int64), dt_b.view(np.int64)], axis=1)
            ukeys, inverse = np.unique(keys, axis=0, return_inverse=True)
            uniq = ukeys[:, 0].copy().view(flat.dtype)
            dt_u = ukeys[:, 1].copy().view(np.float64)
    terms = _time_terms_flat(_days_since_j2000(uniq), dt_u)
    return terms, np.asarray(inverse).reshape(t.shape)


def time_terms(time: Any, *, delta_t: Any = None) -> TimeTerms:
    """Every time-only quantity of the SPA, computed once per distinct time.

    Parameters
    ----------
    time : datetime64, aware datetime, pandas time, or array of those
        UTC instants (see :func:`to_utc_datetime64`).
    delta_t : float or array_like, optional
        TT - UT1 [s], broadcastable to ``time``. ``None`` (default) uses
        :func:`delta_t`.

    Returns
    -------
    TimeTerms
        Named tuple of arrays shaped like ``time``: Julian day ``jd``,
        Julian ephemeris day ``jde``, century ``jce`` and millennium ``jme``,
        heliocentric longitude L, latitude B [°] and radius R [AU],
        geocentric longitude Theta and latitude beta, nutation in longitude
        and obliquity, true obliquity, aberration, apparent sun longitude
        lambda, apparent sidereal time nu, geocentric right ascension alpha
        and declination delta [°], equation of time [min], equatorial
        horizontal parallax xi [°] and the Delta T used [s].

    Raises
    ------
    InputError
        For unreadable or naive times and years outside -2000..6000.

    Notes
    -----
    Equations 1-33 and A1-A2 of Reda and Andreas (2004). The distinct times
    are found with :func:`numpy.unique`, so a million pixels seen at one
    instant cost one evaluation of the periodic series.

    References
    ----------
    Reda, I. and Andreas, A. (2004) Solar position algorithm for solar
    radiation applications. Solar Energy 76(5), 577-589,
    doi:10.1016/j.solener.2003.12.003.

    Examples
    --------
    >>> import numpy as np
    >>> tt = time_terms(np.datetime64("2003-10-17T19:30:30"), delta_t=67.0)
    >>> round(float(tt.jd), 6)
    2452930.312847
    """
    t = to_utc_datetime64(time)
    _check_years(t)
    terms, inverse = _unique_times(t, delta_t)
    return TimeTerms(*(np.asarray(f)[inverse] for f in terms))


# ---------------------------------------------------------------------------
# Observer terms (Reda and Andreas 2004, sections 3.9-3.15)
# ---------------------------------------------------------------------------

_REFRACTION_LIMIT = -(SUN_RADIUS_DEG_SPA + ATMOSPHERIC_REFRACTION_AT_HORIZON)


def _observer_numpy(lat, lon, elev, press, temp, idx, nu, alpha, delta, xi,
                    refraction):
    """Reference numpy path, written equation by equation."""
    rad = np.radians
    with np.errstate(invalid="ignore", divide="ignore"):
        phi = rad(lat)
        h = (nu[idx] + lon - alpha[idx]) % 360.0  # eq. 32
        h_r, d_r, xi_r = rad(h), rad(delta[idx]), rad(xi[idx])
        u = np.arctan(_SPA_AXIS_RATIO * np.tan(phi))  # eq. 34
        x = np.cos(u) + elev / _SPA_EARTH_RADIUS * np.cos(phi)  # eq. 35
        y = _SPA_AXIS_RATIO * np.sin(u) + elev / _SPA_EARTH_RADIUS * np.sin(phi)  # eq. 36
        den = np.cos(d_r) - x * np.sin(xi_r) * np.cos(h_r)
        dalpha = np.arctan2(-x * np.sin(xi_r) * np.sin(h_r), den)  # eq. 37
        alpha_p = (alpha[idx] + np.degrees(dalpha)) % 360.0  # eq. 38
        delta_p = np.arctan2((np.sin(d_r) - y * np.sin(xi_r)) * np.cos(dalpha), den)  # eq. 39
        h_p = h_r - dalpha  # eq. 40
        e0 = np.degrees(np.arcsin(np.clip(
            np.sin(phi) * np.sin(delta_p)
            + np.cos(phi) * np.cos(delta_p) * np.cos(h_p), -1.0, 1.0)))  # eq. 41
        de = (press / 1010.0) * (283.0 / (273.0 + temp)) * 1.02 / (
            60.0 * np.tan(rad(e0 + 10.3 / (e0 + 5.11))))  # eq. 42
        if refraction:
            e = np.where(e0 >= _REFRACTION_LIMIT, e0 + de, e0)  # eq. 43
        else:
            e = e0
        gamma = np.degrees(np.arctan2(
            np.sin(h_p),
            np.cos(h_p) * np.sin(phi) - np.tan(delta_p) * np.cos(phi)))  # eq. 45
        azimuth = (gamma + 180.0) % 360.0  # eq. 46
        azimuth = np.where(azimuth >= 360.0, azimuth - 360.0, azimuth)
        hour = (np.degrees(h_p) + 180.0) % 360.0 - 180.0
    return (90.0 - e, azimuth, e, np.degrees(delta_p), alpha_p, hour)


@njit(parallel=True, fastmath=False, cache=True)
def _observer_kernel(lat, lon, elev, press, temp, idx, step, nu, alpha, delta,
                     sin_d, cos_d, sin_xi, refraction, zen, azi, elv, dec, ra,
                     ha):  # pragma: no cover
    """Fused loop over points: the same maths as :func:`_observer_numpy`
    with four transcendental calls per point (a sine or cosine of the
    latitude and of the hour angle, asin for the elevation, atan2 for the
    azimuth): the other sines and cosines come from algebra, and the small
    angles (parallax shifts, the refraction offset) from short series."""
    d2r = np.pi / 180.0
    r2d = 180.0 / np.pi
    b = _SPA_AXIS_RATIO
    limit = _REFRACTION_LIMIT
    # step[j] is 1 for a per-point input and 0 for one value shared by all.
    s0, s1, s2, s3, s4, s5 = step[0], step[1], step[2], step[3], step[4], step[5]
    for i in prange(zen.shape[0]):
        k = idx[i * s5]
        # One sine or cosine per angle, the other from the square root on
        # the side where that is well conditioned (|sin| or |cos| < 0.71).
        lat_deg = lat[i * s0]
        if abs(lat_deg) <= 45.0:
            sphi = np.sin(lat_deg * d2r)
            cphi = np.sqrt(1.0 - sphi * sphi)
        else:
            cphi = np.cos(lat_deg * d2r)
            sphi = np.copysign(np.sqrt(1.0 - cphi * cphi), lat_deg)
        h_deg = nu[k] + lon[i * s1] - alpha[k]  # eq. 32
        h_deg = h_deg - 360.0 * np.floor((h_deg + 180.0) / 360.0)  # [-180, 180)
        ah = abs(h_deg)
        if ah <= 45.0 or ah >= 135.0:
            sh = np.sin(h_deg * d2r)
            ch = np.copysign(np.sqrt(1.0 - sh * sh), 90.0 - ah)
        else:
            ch = np.cos(h_deg * d2r)
            sh = np.copysign(np.sqrt(1.0 - ch * ch), h_deg)
        # tan u = b tan(phi), |u| <= 90 deg  (eqs. 34-36)
        q = 1.0 / np.sqrt(cphi * cphi + b * b * sphi * sphi)
        hr = elev[i * s2] / 6378140.0
        x = cphi * q + hr * cphi
        y = b * b * sphi * q + hr * sphi
        sx = sin_xi[k]
        num = -x * sx * sh
        den = cos_d[k] - x * sx * ch
        # eq. 37: den >= cos(delta) - sin(xi) x > 0.9 and |num/den| < 1e-4,
        # so atan2(num, den) == atan(z) == z - z**3/3 + z**5/5 to 1e-24 rad.
        z = num / den
        z2 = z * z
        dalpha = z * (1.0 - z2 * (1.0 / 3.0 - z2 * 0.2)) * r2d
        cda = 1.0 - z2 * (0.5 - z2 * 0.375)  # cos(atan z) = (1 + z**2)**-0.5
        sda = z * cda
        n2 = (sin_d[k] - y * sx) * cda  # eq. 39
        r2 = np.sqrt(n2 * n2 + den * den)
        sdp = n2 / r2
        cdp = den / r2
        chp = ch * cda + sh * sda  # cos(H - dalpha)
        shp = sh * cda - ch * sda  # sin(H - dalpha)
        s = sphi * sdp + cphi * cdp * chp
        if s > 1.0:
            s = 1.0
        elif s < -1.0:
            s = -1.0
        e0 = np.arcsin(s) * r2d  # eq. 41
        e = e0
        if refraction and e0 >= limit:  # eqs. 42-43
            # 1/tan(e0 + c) from sin/cos e0 (known) and short series of the
            # small c = 10.3/(e0 + 5.11) deg <= 0.042 rad (errors < 1e-16).
            c = 10.3 / (e0 + 5.11) * d2r
            c2 = c * c
            sc = c * (1.0 - c2 / 6.0 * (1.0 - c2 / 20.0 * (1.0 - c2 / 42.0)))
            cc = 1.0 - c2 / 2.0 * (1.0 - c2 / 12.0 * (1.0 - c2 / 30.0 * (1.0 - c2 / 56.0)))
            ce = np.sqrt(1.0 - s * s)
            cot = (ce * cc - s * sc) / (s * cc + ce * sc)
            e = e0 + (press[i * s3] / 1010.0) * (283.0 / (273.0 + temp[i * s4])) * (
                1.02 / 60.0) * cot
        zen[i] = 90.0 - e
        elv[i] = e
        az = np.arctan2(shp, chp * sphi - (sdp / cdp) * cphi) * r2d + 180.0  # eqs. 45-46
        if az >= 360.0:
            az -= 360.0
        azi[i] = az
        # delta' - delta is below 1e-3 rad: asin(w) == w + w**3/6 to 1e-17.
        w = sdp * cos_d[k] - cdp * sin_d[k]
        dec[i] = delta[k] + w * (1.0 + w * w / 6.0) * r2d
        a = alpha[k] + dalpha
        ra[i] = a - 360.0 * np.floor(a / 360.0)
        hp = h_deg - dalpha + 180.0  # eq. 40
        ha[i] = hp - 360.0 * np.floor(hp / 360.0) - 180.0


def _observer_numba(lat, lon, elev, press, temp, idx, nu, alpha, delta, xi,
                    refraction):
    n = max(np.size(v) for v in (lat, lon, elev, press, temp, idx))
    step = np.array([int(np.size(v) > 1) for v in (lat, lon, elev, press, temp, idx)])
    outs = tuple(np.empty(n) for _ in range(6))
    d_r, xi_r = np.radians(delta), np.radians(xi)
    # Chunks handed out dynamically keep both cores busy when one of them is
    # also serving another process (static halves wait for the slower one).
    chunk = max(4096, n // (16 * numba.get_num_threads()))
    with numba.parallel_chunksize(chunk):
        _observer_kernel(lat, lon, elev, press, temp, idx, step, nu, alpha,
                         delta, np.sin(d_r), np.cos(d_r), np.sin(xi_r),
                         bool(refraction), *outs)
    return outs


def _per_point(arrays: dict[str, np.ndarray], shape: tuple[int, ...], name: str,
               dtype: Any = np.float64) -> np.ndarray:
    """1-D contiguous values of one input: all points, or just one value when
    the input is a single value shared by every point."""
    a = np.asarray(arrays[name])
    if a.size == 1:
        return np.ascontiguousarray(a, dtype=dtype).reshape(1)
    return np.ascontiguousarray(np.broadcast_to(a, shape), dtype=dtype).ravel()


def _check_limits(value: np.ndarray, name: str, low: float | None,
                  high: float | None, **kw: Any) -> None:
    """check_range, after a cheap min/max test so large valid arrays pass
    quickly."""
    if value.size > 1 and np.isfinite(value).any():
        lo, hi = np.nanmin(value), np.nanmax(value)
        if (low is None or lo > low) and (high is None or hi < high):
            return
    check_range(value, name, low, high, **kw)


def _solar_position(time, latitude, longitude, *, elevation=0.0,
                    pressure=1013.25, temperature=12.0, delta_t=None,
                    refraction=True,
                    backend: Literal["numba", "numpy"] = "numba") -> SolarPosition:
    if backend not in ("numba", "numpy"):
        raise InputError(f"backend must be one of 'numba', 'numpy'; got {backend!r}")
    if not isinstance(refraction, (bool, np.bool_)):
        raise InputError(f"refraction must be True or False; got {refraction!r}")
    t = to_utc_datetime64(time)
    lat = as_float_array(latitude, "latitude")
    lon = as_float_array(longitude, "longitude")
    elev = as_float_array(elevation, "elevation")
    press = as_float_array(pressure, "pressure")
    temp = as_float_array(temperature, "temperature")
    _check_limits(lat, "latitude", -90.0, 90.0, unit="°")
    _check_limits(lon, "longitude", -180.0, 360.0, unit="°")
    _check_limits(elev, "elevation", -12_000.0, 1e8, unit="m")
    _check_limits(press, "pressure", 0.0, None, low_inclusive=False, unit="hPa")
    _check_limits(temp, "temperature", -273.15, None, unit="°C")
    _check_years(t)
    terms, inverse = _unique_times(t, delta_t)
    # broadcast_inputs checks the shapes (and names them); the arrays that
    # are a single value are then passed as one value, not copied per point.
    inputs = dict(time=inverse, latitude=lat, longitude=lon, elevation=elev,
                  pressure=press, temperature=temp)
    shape = broadcast_inputs(**inputs)["latitude"].shape
    idx = _per_point(inputs, shape, "time", np.intp)
    args = [_per_point(inputs, shape, k) for k in
            ("latitude", "longitude", "elevation", "pressure", "temperature")]
    if backend == "numpy":  # the reference path takes full arrays
        args = [np.broadcast_to(a, (int(np.prod(shape)),)) for a in args]
        idx = np.broadcast_to(idx, (int(np.prod(shape)),))
    zen, azi, elv, dec, ra, ha = (_observer_numba if backend == "numba" else
                                  _observer_numpy)(
        *args, idx, terms.apparent_sidereal_time, terms.right_ascension,
        terms.declination, terms.horizontal_parallax, bool(refraction))
    if terms.jd.size == 1:
        eot = np.full(shape, terms.equation_of_time[0])
        dist = np.full(shape, terms.earth_sun_distance[0])
    else:
        full_idx = np.broadcast_to(inverse, shape)
        eot = terms.equation_of_time[full_idx]
        dist = terms.earth_sun_distance[full_idx]
    return SolarPosition(*(np.asarray(a).reshape(shape)
                           for a in (zen, azi, elv, dec, ra, ha, eot, dist)))


def solar_position(
    time: Any,
    latitude: Any,
    longitude: Any,
    *,
    elevation: Any = 0.0,
    pressure: Any = 1013.25,
    temperature: Any = 12.0,
    delta_t: Any = None,
    refraction: bool = True,
) -> SolarPosition:
    """Topocentric position of the sun by the NREL SPA.

    Parameters
    ----------
    time : datetime64, aware datetime, pandas time, or array of those
        UTC instants (see :func:`to_utc_datetime64`); broadcasts against the
        other inputs.
    latitude : array_like
        Geodetic latitude [°], in [-90, 90].
    longitude : array_like
        Longitude [°], positive east, in [-180, 360] (values above 180 are
        read as east longitudes, so 270 == -90).
    elevation : array_like, optional
        Observer height [m] above the ellipsoid, in [-12000, 1e8]. Default 0.
    pressure : array_like, optional
        Air pressure at the observer [hPa], > 0. Default 1013.25 (standard
        atmosphere at sea level).
    temperature : array_like, optional
        Air temperature at the observer [°C], >= -273.15. Default 12 °C, the
        default of common SPA implementations such as pvlib (the standard
        atmosphere has 15 °C at sea level); it only enters the refraction.
    delta_t : float or array_like, optional
        TT - UT1 [s], broadcastable to ``time``. ``None`` (default) takes the
        Espenak-Meeus polynomials of :func:`delta_t`.
    refraction : bool, optional
        Correct the elevation for atmospheric refraction (SPA eq. 42).
        Default True.

    Returns
    -------
    SolarPosition
        Named tuple of arrays with the common broadcast shape: ``zenith``,
        ``azimuth`` (clockwise from true north, [0, 360)), ``elevation``
        (refraction included unless switched off) [°], topocentric
        ``declination``, ``right_ascension`` and ``hour_angle`` [°],
        ``equation_of_time`` [min], ``earth_sun_distance`` [AU].

    Raises
    ------
    InputError
        For naive or unreadable times, years outside -2000..6000, latitude,
        longitude, elevation, pressure or temperature out of range, shapes
        that do not broadcast, or a non-boolean ``refraction``.

    Warns
    -----
    ValidityWarning
        When ``delta_t`` is None and a year lies outside -1999..3000, where
        the Delta T expressions are a rough extrapolation.

    Notes
    -----
    Time-only terms (eqs. 4-33) are evaluated once per distinct time; the
    observer terms (eqs. 34-46) per point in a compiled loop. The hour angle
    is ``H = nu + longitude - alpha`` (eq. 32); parallax gives the
    topocentric ``alpha'``, ``delta'`` and ``H'`` (eqs. 37-40); the
    elevation ``e0 = asin(sin(phi) sin(delta') + cos(phi) cos(delta')
    cos(H'))`` (eq. 41) gets the refraction

    ``de = P/1010 * 283/(273 + T) * 1.02 / (60 tan(e0 + 10.3/(e0 + 5.11)))``

    (eq. 42, degrees) when ``e0 >= -(0.26667 + 0.5667)``, i.e. while any part
    of the refracted disc can be above the horizon (the SPA's own switch);
    the azimuth is ``atan2(sin H', cos H' sin(phi) - tan(delta') cos(phi))
    + 180`` (eqs. 45-46). NaN latitude or longitude and NaT times give NaN.
    The stated accuracy is ±0.0003° for years -2000 to 6000 given the right
    Delta T.

    References
    ----------
    Reda, I. and Andreas, A. (2004) Solar position algorithm for solar
    radiation applications. Solar Energy 76(5), 577-589,
    doi:10.1016/j.solener.2003.12.003. Revised as NREL/TP-560-34302 (2008).

    Examples
    --------
    The worked example of Reda and Andreas (2004):

    >>> import numpy as np
    >>> sp = solar_position(np.datetime64("2003-10-17T19:30:30"), 39.742476,
    ...                     -105.1786, elevation=1830.14, pressure=820.0,
    ...                     temperature=11.0, delta_t=67.0)
    >>> round(float(sp.zenith), 5), round(float(sp.azimuth), 5)
    (50.11162, 194.34024)
    """
    return _solar_position(time, latitude, longitude, elevation=elevation,
                           pressure=pressure, temperature=temperature,
                           delta_t=delta_t, refraction=refraction,
                           backend="numba")


# ---------------------------------------------------------------------------
# Earth-sun distance and the sun's disc
# ---------------------------------------------------------------------------


def earth_sun_distance(time: Any) -> np.ndarray:
    """Earth-sun distance [AU] (SPA radius vector R, eqs. 9-11).

    Parameters
    ----------
    time : datetime64, aware datetime, pandas time, or array of those
        UTC instants.

    Returns
    -------
    ndarray
        Distance [AU], shaped like ``time``.

    Raises
    ------
    InputError
        For unreadable or naive times and years outside -2000..6000.

    Notes
    -----
    ``R = sum_i R_i JME**i / 1e8`` with ``R_i = sum_j A cos(B + C JME)``
    (Reda and Andreas 2004, Table A4.2). Delta T from :func:`delta_t`.

    References
    ----------
    Reda, I. and Andreas, A. (2004) Solar Energy 76(5), 577-589,
    doi:10.1016/j.solener.2003.12.003.

    Examples
    --------
    >>> import numpy as np
    >>> bool(earth_sun_distance(np.datetime64("2024-01-03")) < 0.984)
    True
    """
    return time_terms(time).earth_sun_distance


def sun_angular_radius(distance: Any) -> np.ndarray:
    """Apparent angular radius of the sun's disc [°].

    Parameters
    ----------
    distance : array_like
        Earth-sun distance [AU], > 0.

    Returns
    -------
    ndarray
        Angular radius [°].

    Raises
    ------
    InputError
        For distances <= 0.

    Notes
    -----
    ``asin(R_sun / (d * au))`` with the IAU 2015 nominal solar radius
    ``R_sun = 695 700 km`` and the astronomical unit 149 597 870 700 m;
    about 0.2665° (959.2 arcsec) at 1 AU.

    References
    ----------
    Prsa, A. et al. (2016) Nominal values for selected solar and planetary
    quantities: IAU 2015 Resolution B3. Astronomical Journal 152(2), 41,
    doi:10.3847/0004-6256/152/2/41.

    Examples
    --------
    >>> round(float(sun_angular_radius(1.0)), 4)
    0.2665
    """
    d = as_float_array(distance, "distance")
    check_range(d, "distance", 0.0, None, low_inclusive=False, unit="AU")
    with np.errstate(invalid="ignore"):
        return np.degrees(np.arcsin(np.clip(
            SOLAR_RADIUS / (d * ASTRONOMICAL_UNIT), -1.0, 1.0)))


def sun_solid_angle(distance: Any) -> np.ndarray:
    """Solid angle of the sun's disc [sr].

    Parameters
    ----------
    distance : array_like
        Earth-sun distance [AU], > 0.

    Returns
    -------
    ndarray
        Solid angle [sr].

    Raises
    ------
    InputError
        For distances <= 0.

    Notes
    -----
    A spherical cap of angular radius ``r`` (:func:`sun_angular_radius`)
    subtends ``2 pi (1 - cos r)``, about 6.8e-5 sr at 1 AU; it varies as
    ``1/d**2``: the distance swings about ±1.7 % over the year, the solid
    angle about ±3.4 %.

    References
    ----------
    Prsa, A. et al. (2016) Astronomical Journal 152(2), 41,
    doi:10.3847/0004-6256/152/2/41.

    Examples
    --------
    >>> print(f"{float(sun_solid_angle(1.0)):.3e}")
    6.794e-05
    """
    r = np.radians(sun_angular_radius(distance))
    # 1 - cos r written as 2 sin^2(r/2) to keep its digits.
    return 2.0 * np.pi * 2.0 * np.sin(r / 2.0) ** 2

"""Constants and small numeric helpers shared by every layer.

Angles are in degrees at every public interface of glint; these helpers are
the one place that converts, wraps and checks them.
"""

from __future__ import annotations

import os
import sys
import warnings
from typing import Any

import numpy as np

from glint.errors import InputError, ValidityWarning

__all__ = [
    "ASTRONOMICAL_UNIT",
    "SOLAR_RADIUS",
    "WGS84_A",
    "WGS84_F",
    "WGS84_B",
    "as_float_array",
    "wrap_azimuth",
    "check_range",
    "broadcast_inputs",
    "check_choice",
    "warn_outside",
    "user_stacklevel",
]

#: Astronomical unit [m] (IAU 2012 Resolution B2, exact).
ASTRONOMICAL_UNIT = 149_597_870_700.0
#: Nominal solar radius [m] (IAU 2015 Resolution B3).
SOLAR_RADIUS = 695_700_000.0
#: WGS 84 semi-major axis [m] (NIMA TR8350.2, 2000).
WGS84_A = 6_378_137.0
#: WGS 84 flattening (NIMA TR8350.2, 2000).
WGS84_F = 1.0 / 298.257223563
#: WGS 84 semi-minor axis [m].
WGS84_B = WGS84_A * (1.0 - WGS84_F)


def as_float_array(value: Any, name: str, dtype: Any = np.float64) -> np.ndarray:
    """Return ``value`` as a floating-point array, naming it on failure."""
    try:
        arr = np.asarray(value, dtype=dtype)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be numeric, got {value!r}") from exc
    return arr


def wrap_azimuth(azimuth: Any) -> np.ndarray:
    """Wrap azimuths [°] into [0, 360); NaN stays NaN."""
    out = np.mod(azimuth, 360.0)
    # np.mod(-1e-17, 360) == 360.0 in floating point: fold that back to 0.
    return np.where(out >= 360.0, out - 360.0, out)


def check_range(
    value: Any,
    name: str,
    low: float | None = None,
    high: float | None = None,
    *,
    low_inclusive: bool = True,
    high_inclusive: bool = True,
    unit: str = "",
) -> None:
    """Raise :class:`~glint.errors.InputError` if any finite element of
    ``value`` lies outside the interval. NaN is allowed (it flows through)."""
    arr = np.asarray(value, dtype=float)
    finite = arr[np.isfinite(arr)] if arr.ndim else (arr[()] if np.isfinite(arr) else None)
    if finite is None or np.size(finite) == 0:
        return
    bad = np.zeros(np.shape(finite), dtype=bool)
    if low is not None:
        bad |= (finite < low) if low_inclusive else (finite <= low)
    if high is not None:
        bad |= (finite > high) if high_inclusive else (finite >= high)
    if np.any(bad):
        example = np.asarray(finite)[bad].flat[0] if np.ndim(finite) else float(finite)
        lo = "-inf" if low is None else f"{low:g}"
        hi = "inf" if high is None else f"{high:g}"
        lb = "[" if low_inclusive else "("
        hb = "]" if high_inclusive else ")"
        u = f" {unit}" if unit else ""
        raise InputError(
            f"{name} must lie in {lb}{lo}, {hi}{hb}{u}; got {float(example)!r}"
            + (f" ({int(np.sum(bad))} values outside)" if np.size(bad) > 1 else "")
        )


def broadcast_inputs(**arrays: Any) -> dict[str, np.ndarray]:
    """Broadcast named arrays together, naming the shapes on mismatch."""
    names = list(arrays)
    values = [np.asarray(v) for v in arrays.values()]
    try:
        out = np.broadcast_arrays(*values)
    except ValueError as exc:
        shapes = ", ".join(f"{n}{np.shape(v)}" for n, v in zip(names, values))
        raise InputError(f"input shapes do not broadcast together: {shapes}") from exc
    return dict(zip(names, out))


def check_choice(value: Any, name: str, allowed: tuple[str, ...]) -> str:
    """Return ``value`` if it is one of ``allowed``, else raise
    :class:`~glint.errors.InputError` listing the valid choices."""
    if not isinstance(value, str) or value not in allowed:
        raise InputError(
            f"{name} must be one of {', '.join(repr(a) for a in allowed)}; got {value!r}"
        )
    return value


_PACKAGE_DIR = os.path.dirname(os.path.abspath(__file__))


def user_stacklevel() -> int:
    """Stack level of the first frame outside glint, seen from the caller of
    this helper, so that warnings point at the user's line."""
    frame = sys._getframe(1)
    level = 1
    while frame is not None and frame.f_code.co_filename.startswith(_PACKAGE_DIR):
        frame = frame.f_back
        level += 1
    return level


def warn_outside(value: Any, name: str, low: float, high: float, what: str) -> None:
    """Issue a :class:`~glint.errors.ValidityWarning` if any finite element of
    ``value`` lies outside ``[low, high]``, the validity range of ``what``."""
    arr = np.asarray(value, dtype=float)
    finite = arr[np.isfinite(arr)]
    bad = finite[(finite < low) | (finite > high)]
    if bad.size:
        warnings.warn(
            f"{name}={float(bad.flat[0]):.6g} lies outside [{low:g}, {high:g}], the range "
            f"of {what}; the result is an extrapolation",
            ValidityWarning,
            stacklevel=user_stacklevel(),
        )

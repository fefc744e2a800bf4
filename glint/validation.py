"""Constants and small numeric helpers shared by every layer.

Angles are in degrees at every public interface of glint; these helpers are
the one place that converts, wraps and checks them.
"""

from __future__ import annotations

import difflib
import os
import sys
import warnings
from collections.abc import Sequence
from types import FrameType
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.errors import GlintError, InputError, ValidityWarning

__all__ = [
    "ASTRONOMICAL_UNIT",
    "SOLAR_RADIUS",
    "WGS84_A",
    "WGS84_F",
    "WGS84_B",
    "as_float_array",
    "wrap_azimuth",
    "interval_text",
    "outside_interval",
    "interval_problem",
    "check_range",
    "check_number",
    "broadcast_inputs",
    "choice_problem",
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


def interval_text(
    low: float | None = None,
    high: float | None = None,
    *,
    low_open: bool = False,
    high_open: bool = False,
    unit: str = "",
    as_interval: bool = False,
) -> str:
    """The requirement of an interval in words: ``"must lie in (0, 90] deg"``,
    ``"must be > 0 m"``, ``"must be <= 5"``.

    ``low_open``/``high_open`` exclude the bound itself; ``None`` is no bound.
    ``as_interval`` writes half-bounded intervals with ``inf`` too
    (``"must lie in (0, inf)"``), as the array checks of the physics do.

    Examples
    --------
    >>> interval_text(0, 360, high_open=True, unit="deg")
    'must lie in [0, 360) deg'
    >>> interval_text(0, None, low_open=True, unit="m")
    'must be > 0 m'
    """
    u = f" {unit}" if unit else ""
    if as_interval:
        lo = "-inf" if low is None else f"{low:g}"
        hi = "inf" if high is None else f"{high:g}"
        return f"must lie in {'(' if low_open else '['}{lo}, {hi}{')' if high_open else ']'}{u}"
    if low is None and high is None:
        return "must be a finite number" + u
    if high is None:
        return f"must be {'>' if low_open else '>='} {low:g}{u}"
    if low is None:
        return f"must be {'<' if high_open else '<='} {high:g}{u}"
    return f"must lie in {'(' if low_open else '['}{low:g}, {high:g}{')' if high_open else ']'}{u}"


def outside_interval(
    value: ArrayLike,
    low: float | None = None,
    high: float | None = None,
    *,
    low_open: bool = False,
    high_open: bool = False,
) -> NDArray[np.bool_]:
    """Mask of the elements of ``value`` outside the interval; NaN is not
    outside (callers decide whether NaN is allowed)."""
    arr = np.asarray(value, dtype=float)
    bad = np.zeros(arr.shape, dtype=bool)
    with np.errstate(invalid="ignore"):
        if low is not None:
            bad |= (arr <= low) if low_open else (arr < low)
        if high is not None:
            bad |= (arr >= high) if high_open else (arr > high)
    return bad


def interval_problem(
    value: ArrayLike,
    low: float | None = None,
    high: float | None = None,
    *,
    low_open: bool = False,
    high_open: bool = False,
    unit: str = "",
    allow_nonfinite: bool = False,
    sep: str = "; got",
    as_interval: bool = False,
) -> str | None:
    """What is wrong with ``value`` against an interval, or ``None``.

    The text names the first bad element: ``"must lie in [0, 360) deg; got
    400.0"``. Non-finite elements are bad unless ``allow_nonfinite`` (then
    they are skipped: NaN flows through the physics). This is the one interval check of glint:
    :func:`check_range`, :func:`check_number`, the scene-file keys and the
    sensor constructors all use it.

    Examples
    --------
    >>> interval_problem(400.0, 0, 360, high_open=True, unit="deg")
    'must lie in [0, 360) deg; got 400.0'
    >>> interval_problem([1.0, float("nan")], 0, None, allow_nonfinite=True) is None
    True
    """
    arr = np.asarray(value, dtype=float)
    finite = np.isfinite(arr)
    bad = outside_interval(arr, low, high, low_open=low_open, high_open=high_open)
    bad = (bad & finite) if allow_nonfinite else (bad | ~finite)
    if not np.any(bad):
        return None
    example = float(arr[bad].flat[0]) if arr.ndim else float(arr)
    text = interval_text(low, high, low_open=low_open, high_open=high_open, unit=unit,
                         as_interval=as_interval)
    return f"{text}{sep} {example!r}"


def check_range(
    value: ArrayLike,
    name: str,
    low: float | None = None,
    high: float | None = None,
    *,
    low_open: bool = False,
    high_open: bool = False,
    unit: str = "",
    low_inclusive: bool | None = None,
    high_inclusive: bool | None = None,
) -> None:
    """Raise :class:`~glint.errors.InputError` if any element of the array
    ``value`` lies outside the interval. NaN is allowed (it flows through).

    ``low_open``/``high_open`` exclude a bound (as everywhere in glint);
    ``low_inclusive``/``high_inclusive`` are the older spelling of their
    negation and are still accepted.

    Examples
    --------
    >>> check_range([0.0, 90.0, float("nan")], "incidence_angle", 0, 90)
    >>> check_range(0.0, "distance", 0, None, low_open=True)
    Traceback (most recent call last):
    ...
    glint.errors.InputError: distance must lie in (0, inf]; got 0.0
    """
    if low_inclusive is not None:
        low_open = not low_inclusive
    if high_inclusive is not None:
        high_open = not high_inclusive
    arr = np.asarray(value, dtype=float)
    msg = interval_problem(arr, low, high, low_open=low_open, high_open=high_open,
                           unit=unit, allow_nonfinite=True, as_interval=True)
    if msg is not None:
        n = int(np.sum(outside_interval(arr, low, high, low_open=low_open, high_open=high_open)
                       & np.isfinite(arr)))
        raise InputError(f"{name} {msg}" + (f" ({n} values outside)" if arr.size > 1 else ""))


def check_number(
    value: Any,
    name: str,
    low: float | None = None,
    high: float | None = None,
    *,
    low_open: bool = False,
    high_open: bool = False,
    unit: str = "",
    error: type[GlintError] = InputError,
) -> float:
    """Return ``value`` as a finite float within the interval, else raise
    ``error`` (an :class:`~glint.errors.InputError` by default) naming it.

    Examples
    --------
    >>> check_number(3, "altitude", 0, None, low_open=True, unit="m")
    3.0
    >>> check_number(180, "horizontal_fov", 0, 180, low_open=True, high_open=True, unit="deg")
    Traceback (most recent call last):
    ...
    glint.errors.InputError: horizontal_fov must lie in (0, 180) deg; got 180.0
    """
    if isinstance(value, (bool, np.bool_)):
        raise error(f"{name} must be a number; got {value!r}")
    try:
        v = float(value)
    except (TypeError, ValueError) as exc:
        raise error(f"{name} must be a number; got {value!r}") from exc
    if not np.isfinite(v):
        raise error(f"{name} must be finite; got {value!r}")
    msg = interval_problem(v, low, high, low_open=low_open, high_open=high_open, unit=unit)
    if msg is not None:
        raise error(f"{name} {msg}")
    return v


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


def choice_problem(value: Any, allowed: Sequence[str]) -> str | None:
    """What is wrong with ``value`` as one of ``allowed``, or ``None``:
    ``"must be one of 'a', 'b'; got 'c'"``, with a close match suggested.

    Examples
    --------
    >>> choice_problem("cox-munck", ("cox-munk", "breon-henriot"))
    "must be one of 'cox-munk', 'breon-henriot'; got 'cox-munck' (did you mean 'cox-munk'?)"
    """
    if isinstance(value, str) and value in allowed:
        return None
    msg = f"must be one of {', '.join(repr(a) for a in allowed)}; got {value!r}"
    if isinstance(value, str):
        close = difflib.get_close_matches(value, list(allowed), n=1)
        if close:
            msg += f" (did you mean {close[0]!r}?)"
    return msg


def check_choice(value: Any, name: str, allowed: Sequence[str], *,
                 error: type[GlintError] = InputError) -> str:
    """Return ``value`` if it is one of ``allowed``, else raise ``error``
    (:class:`~glint.errors.InputError` by default) listing the valid choices."""
    msg = choice_problem(value, allowed)
    if msg is not None:
        raise error(f"{name} {msg}")
    return str(value)


_PACKAGE_DIR = os.path.dirname(os.path.abspath(__file__))


def user_stacklevel() -> int:
    """Stack level of the first frame outside glint, seen from the caller of
    this helper, so that warnings point at the user's line."""
    frame: FrameType | None = sys._getframe(1)
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

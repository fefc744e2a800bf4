"""Sines, cosines and arc tangents without a library call, for compiled
per-pixel loops.

Each is exact to the last few units in the last place.
:func:`sincosd`, :func:`atan2` and :func:`asin` use no table and no
branch (the choices are arithmetic selects), so a loop that calls them
can be vectorised by the compiler (several points per instruction).
:func:`sincosd` takes degrees: ``d = 90 q + r`` with ``q`` the nearest
integer to ``d/90`` (as rounded) and ``|r| <= 45`` (to rounding); ``r`` is exact (``90 q`` is exact
for ``|q| < 2**47`` and the subtraction is exact by Sterbenz's lemma), so
for ``|d| <= 1e16`` the only errors are the rounding of ``r pi/180`` and
the Taylor series of sin and cos to ``x**15`` and ``x**16``, whose
truncation at ``|x| <= pi/4`` is below 5e-17; the quadrant ``q mod 4``
swaps and negates the pair. Beyond ``|d| = 1e16`` degrees (where the
nearest doubles are more than a degree apart), for infinities and for
NaN the result is NaN.
:func:`atan2` folds ``(x, y)`` into the first octant (``t = min/max`` of
``|x|, |y|`` in [0, 1]), reduces ``t > tan(pi/12)`` with
``atan t = pi/6 + atan((t sqrt3 - 1)/(t + sqrt3))`` to
``|r| <= tan(pi/12)`` (formed from ``|x|`` and ``|y|``, scaled by a
power of two at the ends of the range, with one division) and sums the odd series of ``atan r`` to ``r**27``
(truncation below 1e-18); quadrants, signed zeros, infinities and NaN
follow ``math.atan2``. :func:`asin` is ``atan2(s, sqrt((1 - s)(1 + s)))``
(the factored form keeps the cosine's digits near ``|s| = 1``). The tests
check all three against the math library to 1e-15 rad over dense random
angles and the edge values (measured: below 5e-16, a few units in the
last place of angles up to pi).

:func:`sincosd` takes degrees because longitudes and latitudes come in
degrees, and so do the angles of the solar position algorithm (Reda
and Andreas 2004, Solar Energy 76(5), 577-589,
doi:10.1016/j.solener.2003.12.003); and the reduction by multiples
of 90 degrees is exact where one by multiples of ``pi/2`` rad is not. The arc-tangent reduction by ``pi/6`` is the one of
Cody, W. J. and Waite, W. (1980) Software Manual for the Elementary
Functions, Prentice-Hall (from memory).
"""

from __future__ import annotations

import math

import numba
import numpy as np

__all__ = ["sincosd", "atan2", "asin"]

# Taylor coefficients (-1)**k / (2k+1)! and (-1)**k / (2k)! for sincosd.
_D2R = math.pi / 180.0
_SIN_C = tuple((-1.0) ** k / math.factorial(2 * k + 1) for k in range(8))
_COS_C = tuple((-1.0) ** k / math.factorial(2 * k) for k in range(9))
_S1, _S3d, _S5d, _S7d, _S9d, _S11d, _S13d, _S15d = _SIN_C
_C0, _C2d, _C4d, _C6d, _C8d, _C10d, _C12d, _C14d, _C16d = _COS_C
#: Largest |angle| [deg] that sincosd reduces exactly (90 q exact for q < 2**47).
_SINCOSD_LIMIT = 1e16


@numba.njit(inline="always")
def sincosd(d: float) -> tuple[float, float]:  # pragma: no cover - compiled
    """``(sin d, cos d)`` of an angle ``d`` in degrees, without branches
    (see the module notes); NaN for NaN, infinities and ``|d| > 1e16``.

    Examples
    --------
    >>> s, c = sincosd(150.0)
    >>> abs(s - 0.5) <= 2e-16 and abs(c + math.sqrt(3) / 2) <= 2e-16
    True
    """
    q = np.rint(d * (1.0 / 90.0))
    r = d - 90.0 * q  # exact for |d| <= 1e16
    x = r * _D2R if abs(d) <= _SINCOSD_LIMIT else np.nan
    x2 = x * x
    s = x * (_S1 + x2 * (_S3d + x2 * (_S5d + x2 * (_S7d + x2 * (
        _S9d + x2 * (_S11d + x2 * (_S13d + x2 * _S15d)))))))
    c = _C0 + x2 * (_C2d + x2 * (_C4d + x2 * (_C6d + x2 * (_C8d + x2 * (
        _C10d + x2 * (_C12d + x2 * (_C14d + x2 * _C16d)))))))
    q4 = q - 4.0 * np.floor(q * 0.25)  # quadrant 0, 1, 2 or 3
    swap = (q4 == 1.0) | (q4 == 3.0)
    sin_sign = -1.0 if q4 >= 2.0 else 1.0
    cos_sign = -1.0 if (q4 == 1.0) | (q4 == 2.0) else 1.0
    return (sin_sign * (c if swap else s), cos_sign * (s if swap else c))


_SQRT3 = math.sqrt(3.0)
_TAN_PI_12 = 2.0 - math.sqrt(3.0)  # tan(pi/12)
_PI_6 = math.pi / 6.0
_PI_2 = math.pi / 2.0
_PI = math.pi
# (-1)**k / (2k + 1) for k = 1..13: the odd series of atan to r**27.
_A3, _A5, _A7, _A9, _A11, _A13, _A15, _A17, _A19, _A21, _A23, _A25, _A27 = (
    (-1.0) ** k / (2 * k + 1) for k in range(1, 14))


@numba.njit(inline="always")
def atan2(y: float, x: float) -> float:  # pragma: no cover - compiled
    """Angle [rad] of the point ``(x, y)``, in [-pi, pi], like
    ``math.atan2`` and without branches (see the module notes).

    Examples
    --------
    >>> abs(atan2(-1.0, -1.0) + 3 * math.pi / 4) < 1e-15
    True
    """
    ax = abs(x)
    ay = abs(y)
    swap = ay > ax
    num = ax if swap else ay
    den = ay if swap else ax
    # t = num/den in [0, 1]. One division: for t > tan(pi/12) the reduced
    # argument (t sqrt3 - 1)/(t + sqrt3) is formed from num and den directly,
    # after an exact scaling by a power of two that keeps num sqrt3 from
    # overflowing and subnormal pairs from losing digits. The origin becomes
    # 0/1 and two infinities 1/1 (no 0/0 or inf/inf, so no exception under
    # either numba error model); NaN stays NaN.
    scale = 2.0 ** -100 if den > 1e300 else (2.0 ** 200 if den < 1e-300 else 1.0)
    num = num * scale
    den = den * scale
    same = (num == den) & (den > 0.0)
    num = 1.0 if same else num
    den = 1.0 if same | (den == 0.0) else den
    big = num > _TAN_PI_12 * den
    r = (num * _SQRT3 - den if big else num) / (num + den * _SQRT3 if big else den)
    base = _PI_6 if big else 0.0
    r2 = r * r
    a = base + r * (1.0 + r2 * (_A3 + r2 * (_A5 + r2 * (_A7 + r2 * (_A9 + r2 * (
        _A11 + r2 * (_A13 + r2 * (_A15 + r2 * (_A17 + r2 * (_A19 + r2 * (
            _A21 + r2 * (_A23 + r2 * (_A25 + r2 * _A27)))))))))))))
    a = _PI_2 - a if swap else a
    a = _PI - a if math.copysign(1.0, x) < 0.0 else a
    return math.copysign(a, y)


@numba.njit(inline="always")
def asin(s: float) -> float:  # pragma: no cover - compiled
    """Arc sine [rad] of ``s`` in [-1, 1] (NaN outside), without branches:
    ``atan2(s, sqrt((1 - s)(1 + s)))``.

    Examples
    --------
    >>> abs(asin(0.5) - math.pi / 6) < 1e-15
    True
    """
    return atan2(s, math.sqrt((1.0 - s) * (1.0 + s)))
